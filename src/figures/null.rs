//! The null figure: one histogram panel per index and null model.

use svg::node::element::Group;

use super::style::{
    self, line, num, padded, rect, text, text_width, ticks, x_axis, y_axis, y_tick_width, Scale,
    ACCENT, INK, TEXT_PX,
};
use super::{wrap, Figure};
use crate::error::{Error, Result};
use crate::index::Direction;
use crate::null::NullRun;
use crate::significance::NullSummary;

/// One panel: the null values of one index under one model and their summary.
#[derive(Clone, Debug)]
pub struct NullPanel {
    /// Index name, as printed (for example "nodf").
    pub index: String,
    /// Null model name (for example "fixed-both").
    pub model: String,
    /// The null values, in any order.
    pub values: Vec<f64>,
    /// Their summary against the observed value.
    pub summary: NullSummary,
}

impl NullPanel {
    /// One panel per index of a complete run (in the run's index order).
    /// Errors for a shard or an incomplete run, as [`NullRun::summaries`].
    pub fn from_run(run: &NullRun) -> Result<Vec<NullPanel>> {
        let sums = run.summaries()?;
        Ok(run
            .indices
            .iter()
            .zip(sums)
            .enumerate()
            .map(|(i, (k, s))| NullPanel {
                index: k.name().to_string(),
                model: run.model.name().to_string(),
                values: run.values_of(i),
                summary: s,
            })
            .collect())
    }
}

const PANEL_W: f64 = 270.0;
const PANEL_H: f64 = 210.0;

/// Histogram bins: width-1 bins centred on the integers when every value is
/// a whole number spanning at most 60; else Freedman & Diaconis (1981,
/// Z. Wahrscheinlichkeitstheorie verw. Gebiete 57:453-476) width
/// `2 IQR R^(-1/3)`, with 8 to 50 bins. Returns (start, width, counts).
fn bins(values: &[f64]) -> (f64, f64, Vec<usize>) {
    let mut v: Vec<f64> = values.iter().copied().filter(|x| x.is_finite()).collect();
    v.sort_by(f64::total_cmp);
    let (lo, hi) = (v[0], v[v.len() - 1]);
    let (start, width) = if v.iter().all(|x| x.fract() == 0.0) && hi - lo <= 60.0 {
        (lo - 0.5, 1.0)
    } else if hi == lo {
        let w = if lo == 0.0 { 1.0 } else { lo.abs() * 0.01 };
        (lo - 0.5 * w, w)
    } else {
        let q = |p: f64| crate::significance::quantile_sorted(&v, p);
        let fd = 2.0 * (q(0.75) - q(0.25)) * (v.len() as f64).powf(-1.0 / 3.0);
        let k = if fd > 0.0 {
            ((hi - lo) / fd).ceil().clamp(8.0, 50.0)
        } else {
            20.0
        };
        let w = (hi - lo) / k;
        (lo, w)
    };
    let nb = (((hi - start) / width).floor() as usize + 1).max(1);
    let mut counts = vec![0usize; nb];
    for x in v {
        let b = (((x - start) / width).floor() as usize).min(nb - 1);
        counts[b] += 1;
    }
    (start, width, counts)
}

/// Null distributions in small multiples: for every panel, a histogram of
/// the null values, the central 95 % of them (from the 2.5 % to the
/// 97.5 % quantile, Hyndman & Fan 1996 definition 7) as a shaded band, the
/// observed value as a vertical line (class `observed`), and z and the
/// one-sided p-value in the more-nested direction in the panel title
/// (docs/methods.md §7: `p = (1 + #{null at least as nested}) / (R + 1)`).
///
/// Panels are laid out with one row per model and one column per index, in
/// order of first appearance. Each panel's plot area is a `rect` of class
/// `plot-area` carrying its data range in `data-x-min` and `data-x-max`,
/// so the position of any value can be checked.
///
/// Cost: `O(R log R)` per panel (sorting for the bins); a bounded number of
/// elements per panel (at most 61 bars).
///
/// Errors: no panel, or a panel without finite values.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{figures::{null_figure, NullPanel}, index::IndexKind, null::{run_null, NullConfig, NullModel}, Network};
/// let net = Network::from_array(array![[1, 1, 1, 1], [1, 1, 1, 0], [1, 1, 0, 0], [1, 0, 0, 0]]).unwrap();
/// let run = run_null(&net, &NullConfig::new(NullModel::Equiprobable, vec![IndexKind::named("nodf").unwrap()], 99, 7)).unwrap();
/// let svg = null_figure(&NullPanel::from_run(&run).unwrap(), "").unwrap().to_svg();
/// assert_eq!(svg.matches("class=\"observed\"").count(), 1);
/// ```
pub fn null_figure(panels: &[NullPanel], title: &str) -> Result<Figure> {
    if panels.is_empty() {
        return Err(Error::InvalidArgument(
            "a null figure needs at least one panel".into(),
        ));
    }
    let mut models: Vec<&str> = Vec::new();
    let mut indices: Vec<&str> = Vec::new();
    for p in panels {
        if !models.contains(&p.model.as_str()) {
            models.push(&p.model);
        }
        if !indices.contains(&p.index.as_str()) {
            indices.push(&p.index);
        }
        if !p.values.iter().any(|v| v.is_finite()) {
            return Err(Error::InvalidArgument(format!(
                "{} under {}: no finite null value to draw",
                p.index, p.model
            )));
        }
    }
    let top = if title.is_empty() { 10.0 } else { 34.0 };
    let mut g = Group::new();
    if !title.is_empty() {
        g = g.add(
            text(title, 16.0, 22.0, 15.0, "start")
                .set("font-weight", "bold")
                .set("fill", INK),
        );
    }
    for p in panels {
        let r = models.iter().position(|m| *m == p.model).unwrap_or(0);
        let c = indices.iter().position(|m| *m == p.index).unwrap_or(0);
        g = g.add(panel(
            p,
            10.0 + c as f64 * PANEL_W,
            top + r as f64 * PANEL_H,
        ));
    }
    let width = (20.0 + indices.len() as f64 * PANEL_W).max(540.0);
    let mut y = top + models.len() as f64 * PANEL_H + 14.0;
    let r = panels[0].summary.draws;
    let note = format!(
        "Bars: null values ({r} draws per panel{}). Shaded: central 95 % of the null values \
         (2.5-97.5 % quantiles). Line: observed value. z = (observed - null mean) / null sd; \
         p: share of draws at least as nested as observed, (1 + count) / (draws + 1), in the \
         more-nested direction (higher for NODF, WNODF and spectral radius; lower for \
         temperature and discrepancy).",
        if panels.iter().any(|p| p.summary.draws != r) {
            ", or fewer where stopped early"
        } else {
            ""
        }
    );
    let mut cap = Group::new().set("class", "caption").set("fill", INK);
    for l in wrap(&note, width - 32.0, style::TICK_PX + 1.0) {
        cap = cap.add(text(&l, 16.0, y, style::TICK_PX + 1.0, "start"));
        y += 15.0;
    }
    g = g.add(cap);
    Ok(Figure::new(width, y + 4.0, g))
}

fn panel(p: &NullPanel, x: f64, y: f64) -> Group {
    let s = &p.summary;
    let (start, width, counts) = bins(&p.values);
    let (data_lo, data_hi) = (start, start + width * counts.len() as f64);
    let (xlo, xhi) = padded(data_lo.min(s.observed), data_hi.max(s.observed), 0.04);
    let cmax = counts.iter().copied().max().unwrap_or(1).max(1) as f64;
    let yt = ticks(0.0, cmax, 4);
    let ymax = cmax.max(*yt.last().unwrap_or(&cmax));
    let left = x + 20.0 + y_tick_width(&yt) + 10.0;
    let (pt, pb, pr) = (y + 54.0, y + PANEL_H - 44.0, x + PANEL_W - 14.0);
    let sx = Scale {
        lo: xlo,
        hi: xhi,
        p0: left,
        p1: pr,
    };
    let sy = Scale {
        lo: 0.0,
        hi: ymax * 1.08,
        p0: pb,
        p1: pt,
    };
    let mut g = Group::new().set("class", "panel");
    // Title: index and model, then z and p.
    let dir = match s.more_nested {
        Direction::Greater => "higher",
        Direction::Less => "lower",
    };
    g = g.add(
        text(
            &format!("{} · {}", p.index, p.model),
            x + 16.0,
            y + 16.0,
            TEXT_PX,
            "start",
        )
        .set("font-weight", "bold")
        .set("fill", INK),
    );
    let z = s.z.map_or("z undefined (sd 0)".to_string(), |z| {
        format!("z = {}", num(z, 3))
    });
    g = g.add(
        text(
            &format!(
                "{z}, p = {} ({dir} is more nested)",
                num(s.p_more_nested(), 2)
            ),
            x + 16.0,
            y + 31.0,
            style::TICK_PX + 0.5,
            "start",
        )
        .set("fill", INK),
    );
    g = g.add(
        rect(left, pt, pr - left, pb - pt, "none")
            .set("class", "plot-area")
            .set("data-x-min", xlo.to_string())
            .set("data-x-max", xhi.to_string()),
    );
    // Band, bars, observed line.
    let (b0, b1) = (sx.at(s.q025), sx.at(s.q975));
    g = g.add(rect(b0, pt, (b1 - b0).max(0.5), pb - pt, &style::ramp(0.12)).set("class", "band"));
    let bar_fill = style::ramp(0.72);
    let mut bars = Group::new();
    for (k, &c) in counts.iter().enumerate() {
        if c == 0 {
            continue;
        }
        let x0 = sx.at(start + k as f64 * width);
        let x1 = sx.at(start + (k + 1) as f64 * width);
        let yy = sy.at(c as f64);
        bars = bars.add(
            rect(x0 + 0.3, yy, (x1 - x0 - 0.6).max(0.6), pb - yy, &bar_fill).set("class", "bar"),
        );
    }
    g = g.add(bars);
    let ox = sx.at(s.observed);
    g = g.add(line(ox, pt, ox, pb, ACCENT, 2.0).set("class", "observed"));
    let label = format!("observed {}", num(s.observed, 4));
    // Above the plot area, kept inside the panel.
    let half = 0.5 * text_width(&label, style::TICK_PX);
    let lx = ox.clamp(left + half, pr - half);
    g = g.add(text(&label, lx, pt - 4.0, style::TICK_PX, "middle").set("fill", ACCENT));
    let xt = ticks(xlo, xhi, 4);
    g = g.add(x_axis(sx, pb, &xt, &format!("{} (null values)", p.index)));
    g = g.add(y_axis(sy, left, &yt, "draws", y_tick_width(&yt) + 14.0));
    g
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn integer_values_get_unit_bins() {
        let (start, w, c) = bins(&[3.0, 4.0, 4.0, 6.0]);
        assert_eq!((start, w), (2.5, 1.0));
        assert_eq!(c, vec![1, 2, 0, 1]);
    }

    #[test]
    fn every_value_is_counted() {
        let v: Vec<f64> = (0..1000)
            .map(|k| (k as f64 * 0.737).sin() * 10.0 + 0.01)
            .collect();
        let (_, _, c) = bins(&v);
        assert_eq!(c.iter().sum::<usize>(), 1000);
        assert!((8..=51).contains(&c.len()));
    }
}
