//! Figures from plain numbers, for the analyses that produce them:
//! per-species contributions, rejection rates against effect strength,
//! and an index against sampling effort.

use svg::node::element::{Group, Path as PathEl};

use super::style::{
    self, line, num, padded, px, rect, text, text_width, ticks, x_axis, y_axis, y_tick_width,
    Scale, ACCENT, FAINT, INK, TEXT_PX,
};
use super::{wrap, Figure};
use crate::error::{Error, Result};

/// Series colours, a colour-blind-safe qualitative set (Okabe & Ito 2008,
/// "Color Universal Design"; values from memory): blue, vermilion, bluish
/// green, reddish purple, orange, sky blue, black. Series also differ in
/// marker shape.
const SERIES: [&str; 7] = [
    "#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000",
];

fn check_finite(what: &str, values: impl IntoIterator<Item = f64>) -> Result<()> {
    for (k, v) in values.into_iter().enumerate() {
        if !v.is_finite() {
            return Err(Error::InvalidArgument(format!(
                "{what}: value number {} is {v}; a figure needs finite numbers",
                k + 1
            )));
        }
    }
    Ok(())
}

/// The bold title, broken into lines no wider than `width` px, and the top
/// of the plot below it.
fn title_group(title: &str, width: f64) -> (Group, f64) {
    if title.is_empty() {
        return (Group::new(), 14.0);
    }
    let mut g = Group::new().set("class", "title");
    let lines = wrap(title, width, 15.0);
    for (k, l) in lines.iter().enumerate() {
        g = g.add(
            text(l, 16.0, 22.0 + 19.0 * k as f64, 15.0, "start")
                .set("font-weight", "bold")
                .set("fill", INK),
        );
    }
    (g, 40.0 + 19.0 * (lines.len() as f64 - 1.0))
}

/// Bars of per-species contributions, largest first, with a line at zero:
/// positive bars blue, negative vermilion (class `bar`). Labels are written
/// for up to 80 species (cut to 32 characters), else omitted and counted.
/// `value_name` titles the value axis (for example "contribution to NODF").
///
/// Cost: `O(k log k)` for `k` species (sorting); `k` bars.
///
/// Errors: no species, `labels` and `values` of different lengths, a value
/// that is not finite.
///
/// # Example
/// ```
/// use nidus::figures::contributions_figure;
/// let labels = ["Salix", "Trifolium", "Carex"].map(String::from);
/// let svg = contributions_figure(&labels, &[1.5, -0.4, 0.2], "contribution to NODF", "").unwrap().to_svg();
/// assert_eq!(svg.matches("class=\"bar\"").count(), 3);
/// ```
pub fn contributions_figure(
    labels: &[String],
    values: &[f64],
    value_name: &str,
    title: &str,
) -> Result<Figure> {
    if labels.is_empty() || labels.len() != values.len() {
        return Err(Error::InvalidArgument(format!(
            "a contributions figure needs one value per label: {} labels, {} values",
            labels.len(),
            values.len()
        )));
    }
    check_finite("contributions", values.iter().copied())?;
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|&a, &b| values[b].total_cmp(&values[a]));
    let k = values.len();
    let labelled = k <= 80;
    let row_h = if labelled {
        14.0
    } else {
        (420.0 / k as f64).max(0.5)
    };
    let shown: Vec<String> = labels
        .iter()
        .map(|s| {
            if s.chars().count() > 32 {
                s.chars().take(31).collect::<String>() + "…"
            } else {
                s.clone()
            }
        })
        .collect();
    let label_w = if labelled {
        shown
            .iter()
            .map(|s| text_width(s, style::TICK_PX))
            .fold(0.0, f64::max)
            + 10.0
    } else {
        TEXT_PX + 14.0
    };
    let (lo, hi) = values
        .iter()
        .fold((0.0f64, 0.0f64), |(a, b), &v| (a.min(v), b.max(v)));
    let (lo, hi) = padded(lo, hi, 0.05);
    let left = 16.0 + label_w;
    let plot_w = 420.0;
    let (mut g, top) = title_group(title, left + plot_w - 16.0);
    let sx = Scale {
        lo,
        hi,
        p0: left,
        p1: left + plot_w,
    };
    let (pt, pb) = (top, top + row_h * k as f64);
    let pos = style::ramp(0.85);
    let mut bars = Group::new();
    let mut labs = Group::new()
        .set("class", "labels")
        .set("fill", INK)
        .set("font-size", px(style::TICK_PX))
        .set("text-anchor", "end");
    for (r, &i) in order.iter().enumerate() {
        let v = values[i];
        let (a, b) = (sx.at(0.0_f64.min(v)), sx.at(0.0_f64.max(v)));
        let y = pt + r as f64 * row_h;
        let inset = if row_h >= 4.0 { 0.15 * row_h } else { 0.0 };
        bars = bars.add(
            rect(
                a,
                y + inset,
                (b - a).max(0.5),
                row_h - 2.0 * inset,
                if v >= 0.0 { &pos } else { ACCENT },
            )
            .set("class", "bar"),
        );
        if labelled {
            labs = labs.add(
                svg::node::element::Text::new(String::new())
                    .set("x", px(left - 6.0))
                    .set("y", px(y + 0.5 * row_h + 0.35 * style::TICK_PX))
                    .add(svg::node::Text::new(shown[i].as_str())),
            );
        }
    }
    g = g.add(bars).add(labs);
    if !labelled {
        let cy = 0.5 * (pt + pb);
        g = g.add(
            text(
                &format!("{k} species, ranked (labels omitted)"),
                16.0 + TEXT_PX,
                cy,
                TEXT_PX,
                "middle",
            )
            .set("fill", INK)
            .set(
                "transform",
                format!("rotate(-90 {} {})", px(16.0 + TEXT_PX), px(cy)),
            ),
        );
    }
    let zx = sx.at(0.0);
    g = g.add(line(zx, pt - 4.0, zx, pb + 4.0, INK, 1.2).set("class", "zero-line"));
    let xt = ticks(lo, hi, 5);
    g = g.add(x_axis(sx, pb + 4.0, &xt, value_name));
    let width = left + plot_w + 30.0;
    Ok(Figure::new(width, pb + 4.0 + 44.0, g))
}

/// One point of a rejection-rate curve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RejectionPoint {
    /// Strength of the planted effect (x).
    pub strength: f64,
    /// Share of tests that rejected (0-1).
    pub rate: f64,
    /// Lower end of the rate's interval (for example a Wilson interval).
    pub low: f64,
    /// Upper end of the rate's interval.
    pub high: f64,
}

/// A named curve of rejection rates (one test, index or null model).
#[derive(Clone, Debug, PartialEq)]
pub struct RejectionSeries {
    /// Name in the legend.
    pub name: String,
    /// Points, in any order (drawn by increasing strength).
    pub points: Vec<RejectionPoint>,
}

fn marker(shape: usize, cx: f64, cy: f64, r: f64, colour: &str) -> PathEl {
    let d = match shape % 4 {
        0 => format!(
            "M{} {}a{r} {r} 0 1 0 {} 0a{r} {r} 0 1 0 {} 0Z",
            px(cx - r),
            px(cy),
            px(2.0 * r),
            px(-2.0 * r)
        ),
        1 => format!(
            "M{} {}h{}v{}h{}Z",
            px(cx - r),
            px(cy - r),
            px(2.0 * r),
            px(2.0 * r),
            px(-2.0 * r)
        ),
        2 => format!(
            "M{} {}L{} {}L{} {}Z",
            px(cx),
            px(cy - 1.2 * r),
            px(cx + 1.1 * r),
            px(cy + 0.8 * r),
            px(cx - 1.1 * r),
            px(cy + 0.8 * r)
        ),
        _ => format!(
            "M{} {}L{} {}L{} {}L{} {}Z",
            px(cx),
            px(cy - 1.3 * r),
            px(cx + 1.3 * r),
            px(cy),
            px(cx),
            px(cy + 1.3 * r),
            px(cx - 1.3 * r),
            px(cy)
        ),
    };
    PathEl::new()
        .set("d", d)
        .set("fill", colour)
        .set("stroke", "#ffffff")
        .set("stroke-width", 0.8)
        .set("class", "point")
}

/// Rejection rate against effect strength: one line per series with a
/// marker at each point and a whisker from `low` to `high`, a dashed
/// horizontal line at the nominal level `alpha` (class `alpha-line`), the
/// rate axis fixed at 0-1, the level named in the legend. Series differ
/// in colour and marker shape and are set a few px apart sideways (5 px
/// between neighbours, 30 px in all at most) so their whiskers stay
/// visible.
///
/// Cost: linear in the number of points.
///
/// Errors: no series or a series without points, a value that is not
/// finite, a rate or interval outside 0-1 or not containing its rate,
/// `alpha` outside (0, 1).
///
/// # Example
/// ```
/// use nidus::figures::{rejection_figure, RejectionPoint, RejectionSeries};
/// let s = RejectionSeries { name: "nodf, fixed-both".into(), points: vec![
///     RejectionPoint { strength: 0.0, rate: 0.05, low: 0.03, high: 0.08 },
///     RejectionPoint { strength: 0.5, rate: 0.6, low: 0.55, high: 0.65 },
/// ] };
/// let svg = rejection_figure(&[s], 0.05, "planted nestedness", "").unwrap().to_svg();
/// assert_eq!(svg.matches("class=\"whisker\"").count(), 2);
/// ```
pub fn rejection_figure(
    series: &[RejectionSeries],
    alpha: f64,
    strength_name: &str,
    title: &str,
) -> Result<Figure> {
    if series.is_empty() || series.iter().any(|s| s.points.is_empty()) {
        return Err(Error::InvalidArgument(
            "a rejection figure needs at least one series, each with at least one point".into(),
        ));
    }
    if !(alpha > 0.0 && alpha < 1.0) {
        return Err(Error::InvalidArgument(format!(
            "alpha must lie strictly between 0 and 1, got {alpha}"
        )));
    }
    for s in series {
        check_finite(
            &s.name,
            s.points
                .iter()
                .flat_map(|p| [p.strength, p.rate, p.low, p.high]),
        )?;
        for p in &s.points {
            if !(0.0 <= p.low && p.low <= p.rate && p.rate <= p.high && p.high <= 1.0) {
                return Err(Error::InvalidArgument(format!(
                    "{} at strength {}: need 0 <= low <= rate <= high <= 1, got {} <= {} <= {}",
                    s.name, p.strength, p.low, p.rate, p.high
                )));
            }
        }
    }
    let (mut g, top) = title_group(title, 640.0);
    let (xmin, xmax) = series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.strength))
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(v), b.max(v))
        });
    let (xlo, xhi) = padded(xmin, xmax, 0.05);
    let yt = [0.0, 0.2, 0.4, 0.6, 0.8, 1.0];
    let left = 16.0 + TEXT_PX + 10.0 + y_tick_width(&yt) + 10.0;
    let (pw, ph) = (420.0, 300.0);
    let sx = Scale {
        lo: xlo,
        hi: xhi,
        p0: left,
        p1: left + pw,
    };
    let sy = Scale {
        lo: 0.0,
        hi: 1.0,
        p0: top + ph,
        p1: top,
    };
    for &t in &yt[1..] {
        g = g.add(line(left, sy.at(t), left + pw, sy.at(t), FAINT, 0.6));
    }
    g = g.add(
        line(left, sy.at(alpha), left + pw, sy.at(alpha), INK, 1.2)
            .set("stroke-dasharray", "5 4")
            .set("class", "alpha-line"),
    );
    // Series are dodged sideways by a few px so that whiskers at the same
    // strength do not hide each other.
    // At most 30 px from the first to the last series.
    let step = if series.len() > 1 {
        (30.0 / (series.len() as f64 - 1.0)).min(5.0)
    } else {
        0.0
    };
    let dodge = |k: usize| (k as f64 - 0.5 * (series.len() as f64 - 1.0)) * step;
    for (k, s) in series.iter().enumerate() {
        let colour = SERIES[k % SERIES.len()];
        let sx = Scale {
            p0: sx.p0 + dodge(k),
            p1: sx.p1 + dodge(k),
            ..sx
        };
        let mut pts = s.points.clone();
        pts.sort_by(|a, b| a.strength.total_cmp(&b.strength));
        let mut sg = Group::new().set("class", "series");
        let d = style::polyline(pts.iter().map(|p| (sx.at(p.strength), sy.at(p.rate))));
        sg = sg.add(
            PathEl::new()
                .set("d", d)
                .set("fill", "none")
                .set("stroke", colour)
                .set("stroke-width", 1.6),
        );
        for p in &pts {
            let x = sx.at(p.strength);
            sg = sg
                .add(line(x, sy.at(p.low), x, sy.at(p.high), colour, 1.2).set("class", "whisker"));
            sg = sg.add(line(
                x - 3.0,
                sy.at(p.low),
                x + 3.0,
                sy.at(p.low),
                colour,
                1.2,
            ));
            sg = sg.add(line(
                x - 3.0,
                sy.at(p.high),
                x + 3.0,
                sy.at(p.high),
                colour,
                1.2,
            ));
            sg = sg.add(marker(k, x, sy.at(p.rate), 3.6, colour));
        }
        g = g.add(sg);
    }
    let xt = ticks(xlo, xhi, 5);
    g = g.add(x_axis(sx, top + ph, &xt, strength_name));
    g = g.add(y_axis(
        sy,
        left,
        &yt,
        "rejection rate",
        y_tick_width(&yt) + 16.0,
    ));
    // Legend right of the plot.
    let lx = left + pw + 20.0;
    let mut ly = top + 8.0;
    let mut lg = Group::new().set("class", "legend").set("fill", INK);
    let mut legend_w: f64 = 0.0;
    for (k, s) in series.iter().enumerate() {
        let colour = SERIES[k % SERIES.len()];
        lg = lg.add(line(lx, ly, lx + 22.0, ly, colour, 1.6));
        lg = lg.add(marker(k, lx + 11.0, ly, 3.6, colour));
        for l in wrap(&s.name, 170.0, TEXT_PX) {
            lg = lg.add(text(&l, lx + 30.0, ly + 4.0, TEXT_PX, "start"));
            legend_w = legend_w.max(text_width(&l, TEXT_PX));
            ly += TEXT_PX * 1.3;
        }
        ly += 6.0;
    }
    lg = lg.add(line(lx, ly, lx + 22.0, ly, INK, 1.2).set("stroke-dasharray", "5 4"));
    let alpha_name = format!("nominal level α = {}", num(alpha, 3));
    lg = lg.add(text(&alpha_name, lx + 30.0, ly + 4.0, TEXT_PX, "start"));
    legend_w = legend_w.max(text_width(&alpha_name, TEXT_PX));
    ly += TEXT_PX * 1.3 + 6.0;
    lg = lg.add(text(
        "whiskers: interval of the rate",
        lx,
        ly + 10.0,
        style::TICK_PX,
        "start",
    ));
    g = g.add(lg);
    let width = lx
        + 30.0
        + legend_w.max(text_width("whiskers: interval of the rate", style::TICK_PX) - 30.0)
        + 16.0;
    Ok(Figure::new(width, (top + ph + 48.0).max(ly + 24.0), g))
}

/// One point of an index-versus-effort curve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EffortPoint {
    /// Sampling effort (for example the number of visits kept).
    pub x: f64,
    /// Mean (or central) value of the index at that effort.
    pub mean: f64,
    /// Lower end of its band.
    pub low: f64,
    /// Upper end of its band.
    pub high: f64,
}

/// An index against sampling effort: the band from `low` to `high` shaded
/// (id `band`), the mean as a line with points (class `point`).
/// `band_name` says what the band is (for example "2.5-97.5 % of 200
/// subsamples"); it is written under the plot.
///
/// Cost: linear in the number of points.
///
/// Errors: no point, a value that is not finite, `low > mean` or
/// `mean > high`.
///
/// # Example
/// ```
/// use nidus::figures::{effort_figure, EffortPoint};
/// let pts: Vec<EffortPoint> = (1..=5).map(|k| {
///     let m = 40.0 * (1.0 - (-(k as f64) / 2.0).exp());
///     EffortPoint { x: 100.0 * k as f64, mean: m, low: m - 3.0, high: m + 3.0 }
/// }).collect();
/// let svg = effort_figure(&pts, "visits sampled", "NODF", "90 % of subsamples", "").unwrap().to_svg();
/// assert!(svg.contains("id=\"band\""));
/// ```
pub fn effort_figure(
    points: &[EffortPoint],
    x_name: &str,
    y_name: &str,
    band_name: &str,
    title: &str,
) -> Result<Figure> {
    let (mut g, top) = title_group(title, 500.0);
    let (panel, right, bottom) =
        effort_panel(points, x_name, y_name, 16.0, top, 440.0, 300.0, None)?;
    g = g.add(panel);
    let width = right + 24.0;
    let mut y = bottom + 58.0;
    let note = format!("Line: mean. Shaded band: {band_name}.");
    for l in wrap(&note, width - 32.0, style::TICK_PX + 1.0) {
        g = g.add(text(&l, 16.0, y, style::TICK_PX + 1.0, "start").set("fill", INK));
        y += 15.0;
    }
    Ok(Figure::new(width, y, g))
}

/// One panel of an index against effort, its plot area `pw x ph` px with
/// the y axis title's left edge at `x0` and the plot's top at `top`: the
/// band (id `band`, or class `band` when `band_id` names it otherwise),
/// the mean line and points, both axes. Returns the group and the right
/// and bottom edges of the plot area.
#[allow(clippy::too_many_arguments)]
fn effort_panel(
    points: &[EffortPoint],
    x_name: &str,
    y_name: &str,
    x0: f64,
    top: f64,
    pw: f64,
    ph: f64,
    band_id: Option<&str>,
) -> Result<(Group, f64, f64)> {
    if points.is_empty() {
        return Err(Error::InvalidArgument(
            "an effort figure needs at least one point".into(),
        ));
    }
    check_finite(
        "effort curve",
        points.iter().flat_map(|p| [p.x, p.mean, p.low, p.high]),
    )?;
    if let Some(p) = points
        .iter()
        .find(|p| !(p.low <= p.mean && p.mean <= p.high))
    {
        return Err(Error::InvalidArgument(format!(
            "effort curve at {}: need low <= mean <= high, got {} <= {} <= {}",
            p.x, p.low, p.mean, p.high
        )));
    }
    let mut pts = points.to_vec();
    pts.sort_by(|a, b| a.x.total_cmp(&b.x));
    let mut g = Group::new().set("class", "panel");
    let (xlo, xhi) = padded(pts[0].x, pts[pts.len() - 1].x, 0.03);
    let (ymin, ymax) = pts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.low), b.max(p.high))
        });
    let (ylo, yhi) = padded(ymin, ymax, 0.06);
    let yt = ticks(ylo, yhi, 5);
    let left = x0 + TEXT_PX + 10.0 + y_tick_width(&yt) + 10.0;
    let sx = Scale {
        lo: xlo,
        hi: xhi,
        p0: left,
        p1: left + pw,
    };
    let sy = Scale {
        lo: ylo,
        hi: yhi,
        p0: top + ph,
        p1: top,
    };
    for &t in &yt {
        g = g.add(line(left, sy.at(t), left + pw, sy.at(t), FAINT, 0.6));
    }
    let mut band = style::polyline(
        pts.iter()
            .map(|p| (sx.at(p.x), sy.at(p.high)))
            .chain(pts.iter().rev().map(|p| (sx.at(p.x), sy.at(p.low)))),
    );
    band += "Z";
    g = g.add(
        PathEl::new()
            .set("id", band_id.unwrap_or("band"))
            .set("class", "band")
            .set("d", band)
            .set("fill", style::ramp(0.15))
            .set("stroke", "none"),
    );
    let colour = style::ramp(1.0);
    let d = style::polyline(pts.iter().map(|p| (sx.at(p.x), sy.at(p.mean))));
    let mut mean_line = PathEl::new().set("class", "mean-line");
    if band_id.is_none() {
        mean_line = mean_line.set("id", "mean-line");
    }
    g = g.add(
        mean_line
            .set("d", d)
            .set("fill", "none")
            .set("stroke", &*colour)
            .set("stroke-width", 1.8),
    );
    if pts.len() <= 60 {
        for p in &pts {
            g = g.add(marker(0, sx.at(p.x), sy.at(p.mean), 3.0, &colour));
        }
    }
    let xt = ticks(xlo, xhi, 5);
    g = g.add(x_axis(sx, top + ph, &xt, x_name));
    g = g.add(y_axis(sy, left, &yt, y_name, y_tick_width(&yt) + 16.0));
    Ok((g, left + pw, top + ph))
}

/// A named curve of an index against effort, one panel of
/// [`effort_panels_figure`].
#[derive(Clone, Debug, PartialEq)]
pub struct EffortPanel {
    /// What the curve shows; the panel's heading and y axis title (for
    /// example "NODF" or "links observed").
    pub name: String,
    /// Points, in any order (drawn by increasing effort).
    pub points: Vec<EffortPoint>,
}

/// Several quantities against sampling effort, one panel each (two panels
/// a row), on a shared effort axis title: in every panel the band from
/// `low` to `high` shaded (class `band`, ids `band-1`, `band-2`, ... in
/// panel order), the mean as a line with points. Each panel has its own
/// value axis, since the quantities differ in units. `band_name` says what
/// the band is; it is written under the panels.
///
/// Cost: linear in the number of points.
///
/// Errors: no panel, a panel without points, a value that is not finite,
/// `low > mean` or `mean > high`.
///
/// # Example
/// ```
/// use nidus::figures::{effort_panels_figure, EffortPanel, EffortPoint};
/// let curve = |scale: f64| (1..=5).map(|k| {
///     let m = scale * (1.0 - (-(k as f64) / 2.0).exp());
///     EffortPoint { x: 100.0 * k as f64, mean: m, low: 0.9 * m, high: 1.1 * m }
/// }).collect::<Vec<_>>();
/// let panels = [EffortPanel { name: "links".into(), points: curve(80.0) },
///               EffortPanel { name: "NODF".into(), points: curve(40.0) }];
/// let svg = effort_panels_figure(&panels, "visits sampled", "2.5-97.5 %", "").unwrap().to_svg();
/// assert_eq!(svg.matches("class=\"band\"").count(), 2);
/// ```
pub fn effort_panels_figure(
    panels: &[EffortPanel],
    x_name: &str,
    band_name: &str,
    title: &str,
) -> Result<Figure> {
    if panels.is_empty() {
        return Err(Error::InvalidArgument(
            "an effort figure needs at least one panel".into(),
        ));
    }
    let (mut g, top) = title_group(title, if panels.len() == 1 { 380.0 } else { 760.0 });
    let (pw, ph) = (300.0, 190.0);
    let heading = 24.0;
    let below = 52.0;
    let mut drawn = Vec::with_capacity(panels.len());
    for (k, p) in panels.iter().enumerate() {
        let id = format!("band-{}", k + 1);
        let (body, right, _) =
            effort_panel(&p.points, x_name, &p.name, 0.0, heading, pw, ph, Some(&id)).map_err(
                |e| match e {
                    Error::InvalidArgument(m) => Error::InvalidArgument(format!("{}: {m}", p.name)),
                    e => e,
                },
            )?;
        let left = right - pw;
        let body = body.add(
            text(&p.name, left, heading - 8.0, TEXT_PX + 1.0, "start")
                .set("font-weight", "bold")
                .set("fill", INK),
        );
        drawn.push((body, right));
    }
    let cols = if panels.len() == 1 { 1 } else { 2 };
    let cell_w = drawn.iter().map(|d| d.1).fold(0.0, f64::max) + 28.0;
    let cell_h = heading + ph + below;
    for (k, (body, right)) in drawn.into_iter().enumerate() {
        let (c, r) = (k % cols, k / cols);
        // Right-align each panel's plot area in its cell, so the plots of
        // a column line up whatever the width of their tick labels.
        let dx = 16.0 + c as f64 * cell_w + (cell_w - 28.0 - right);
        let dy = top + r as f64 * cell_h;
        g = g.add(body.set("transform", format!("translate({} {})", px(dx), px(dy))));
    }
    let rows = panels.len().div_ceil(cols);
    let width = 16.0 + cols as f64 * cell_w;
    let mut y = top + rows as f64 * cell_h + 8.0;
    let note = format!("Lines: mean. Shaded bands: {band_name}.");
    for l in wrap(&note, width - 32.0, style::TICK_PX + 1.0) {
        g = g.add(text(&l, 16.0, y, style::TICK_PX + 1.0, "start").set("fill", INK));
        y += 15.0;
    }
    Ok(Figure::new(width, y, g))
}
