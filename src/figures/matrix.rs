//! The matrix figure: the network as a table of cells in packed (or
//! degree-sorted) order, with the isocline of temperature.

use svg::node::element::{Group, Image, Path as PathEl};

use super::raster::{base64, png_rgb};
use super::style::{self, line, num, px, rect, text, text_width, ACCENT, INK, TEXT_PX};
use super::{wrap, Figure};
use crate::error::Result;
use crate::measure::Measurement;
use crate::metrics::temperature::TEMPERATURE_CELL_LIMIT;
use crate::network::{Network, Weight};

/// Beyond this many links the matrix is drawn as a density image.
pub const DENSITY_LINKS: usize = 30_000;
/// Beyond this many species on either side the matrix is drawn as a density
/// image.
pub const DENSITY_SIDE: usize = 600;
/// Species labels are written only for a side of at most this many species.
const LABEL_SIDE: usize = 150;
/// Labels longer than this many characters are cut with an ellipsis.
const LABEL_CHARS: usize = 32;
/// Unexpected cells are marked individually only up to this many marks.
const MARK_LIMIT: usize = 20_000;
/// Unexpected cells are marked individually only on cells at least this
/// many px wide and high (smaller marks would hide the cells).
const MARK_MIN_CELL: f64 = 5.0;
/// Target length in px of the longer side of the matrix.
const MATRIX_PX: f64 = 560.0;
/// Smallest cell side in px for a labelled side.
const LABELLED_CELL: f64 = 9.0;
/// Width in px of the legend column.
const LEGEND_W: f64 = 210.0;

/// Words and options of the matrix figure.
#[derive(Clone, Debug)]
pub struct MatrixFigureOptions {
    /// Title above the figure (for example the file name); none when empty.
    pub title: String,
    /// Name of the row species, plural ("plants"); used in the axis title.
    pub row_name: String,
    /// Name of the column species, plural ("visitors").
    pub col_name: String,
    /// What a cell value counts, for the legend ("visits"); used only for
    /// weighted networks.
    pub weight_name: String,
}

impl Default for MatrixFigureOptions {
    /// No title; "row species", "column species", "weight".
    fn default() -> Self {
        MatrixFigureOptions {
            title: String::new(),
            row_name: "row species".into(),
            col_name: "column species".into(),
            weight_name: "weight".into(),
        }
    }
}

/// The order, isocline and unexpected cells to draw, from the measurement.
struct Layout {
    rows: Vec<usize>,
    cols: Vec<usize>,
    /// `p` of the isocline, when temperature was computed and `0 < fill < 1`.
    p: Option<f64>,
    /// For every row position, the number of leading column positions inside
    /// the presence region of the isocline.
    inside: Vec<usize>,
    order_note: String,
}

/// Rows and columns by decreasing degree, ties in input order (the
/// `sorted` order of temperature and NODF).
fn by_degree(deg: &[usize]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..deg.len()).collect();
    idx.sort_by(|&a, &b| deg[b].cmp(&deg[a]));
    idx
}

/// Is cell position `(i, j)` of an `m x n` table strictly inside the
/// presence region `(1-x)^p + (1-y)^p > 1` (x, y of the cell centre)? The
/// same test temperature uses for "an absence here is unexpected".
fn level_inside(i: usize, j: usize, m: usize, n: usize, p: f64) -> bool {
    let x = (j as f64 + 0.5) / n as f64;
    let y = (i as f64 + 0.5) / m as f64;
    (1.0 - x).powf(p) + (1.0 - y).powf(p) > 1.0
}

fn layout<T: Weight>(net: &Network<T>, meas: &Measurement) -> Layout {
    let (m, n) = (net.nrows(), net.ncols());
    let Some(t) = &meas.temperature else {
        let cells = m as f64 * n as f64;
        let why = if cells > TEMPERATURE_CELL_LIMIT as f64 {
            format!(
                "temperature is not computed for more than {} cells (this network has {})",
                style::count(TEMPERATURE_CELL_LIMIT),
                num(cells, 3)
            )
        } else {
            "temperature was not requested".to_string()
        };
        return Layout {
            rows: by_degree(net.row_degrees()),
            cols: by_degree(net.col_degrees()),
            p: None,
            inside: vec![0; m],
            order_note: format!("Rows and columns by decreasing degree; no isocline: {why}."),
        };
    };
    let p = t.isocline_p;
    let p = (p.is_finite() && p > 0.0).then_some(p);
    // Leading positions inside the region: the level falls along a row, so
    // a binary search on the exact per-cell test gives the count.
    let inside = (0..m)
        .map(|i| match p {
            Some(p) => {
                let (mut lo, mut hi) = (0usize, n);
                while lo < hi {
                    let mid = (lo + hi) / 2;
                    if level_inside(i, mid, m, n, p) {
                        lo = mid + 1;
                    } else {
                        hi = mid;
                    }
                }
                lo
            }
            None => 0,
        })
        .collect();
    let order = if t.packed.is_some() {
        "Rows and columns in packed order (arranged to minimise T)"
    } else {
        "Rows and columns by decreasing degree (packing off)"
    };
    let curve = match p {
        Some(p) => format!(
            "; curve: isocline of perfect nestedness for this fill (p = {}).",
            num(p, 3)
        ),
        None => "; no isocline (the table is empty or full).".into(),
    };
    Layout {
        rows: t.row_order.clone(),
        cols: t.col_order.clone(),
        p,
        inside,
        order_note: format!("{order}{curve}"),
    }
}

/// How cell values map to the colour scale.
struct Shade {
    lo: f64,
    hi: f64,
    log: bool,
}

impl Shade {
    /// Linear between the smallest and largest non-zero value; logarithmic
    /// when they differ by a factor of 50 or more (stated in the legend).
    fn new(lo: f64, hi: f64) -> Self {
        Shade {
            lo,
            hi,
            log: lo > 0.0 && hi / lo >= 50.0,
        }
    }
    fn t(&self, v: f64) -> f64 {
        if self.hi <= self.lo {
            return 1.0;
        }
        if self.log {
            (v / self.lo).ln() / (self.hi / self.lo).ln()
        } else {
            (v - self.lo) / (self.hi - self.lo)
        }
    }
    fn ticks(&self) -> Vec<f64> {
        if self.hi <= self.lo {
            return vec![self.lo];
        }
        if self.log {
            let mut out = Vec::new();
            let mut dec = 10f64.powf(self.lo.log10().floor());
            while dec <= self.hi {
                for k in [1.0, 2.0, 5.0] {
                    let v = k * dec;
                    if v >= self.lo * (1.0 - 1e-12) && v <= self.hi * (1.0 + 1e-12) {
                        out.push(v);
                    }
                }
                dec *= 10.0;
            }
            if out.len() > 7 {
                out.retain(|v| {
                    (v.log10().fract().abs() < 1e-9) || (v.log10().fract() > 1.0 - 1e-9)
                });
            }
            out
        } else {
            style::ticks(self.lo, self.hi, 4)
        }
    }
}

/// Cuts a label to [`LABEL_CHARS`] characters.
fn short(label: &str) -> String {
    if label.chars().count() <= LABEL_CHARS {
        label.to_string()
    } else {
        label.chars().take(LABEL_CHARS - 1).collect::<String>() + "…"
    }
}

/// The network as a picture: one cell per interaction in packed temperature
/// order, the isocline of perfect nestedness over it, and the unexpected
/// cells marked (docs/methods.md §4; Atmar & Patterson 1993, Oecologia
/// 96:373-382; isocline family of Rodríguez-Gironés & Santamaría 2006,
/// J. Biogeogr. 33:924-935).
///
/// * Order: the temperature orders of `meas` (packed, or degree-sorted with
///   packing off); without temperature, rows and columns by decreasing
///   degree and no isocline (the caption says why).
/// * Cells: rows top to bottom, columns left to right, position `(i, j)`
///   in the unit square at centre `((j + 1/2)/n, (i + 1/2)/m)`, as
///   temperature places them. A weighted network is shaded by value on the
///   sequential scale of [`style`] (linear, or logarithmic when the largest
///   value is 50 times the smallest or more), with a legend in the data's
///   units; a binary one has a plain fill.
/// * Isocline: `(1-x)^p + (1-y)^p = 1` with `p = isocline_p` of `meas`
///   (id `isocline`), drawn as a superellipse arc. An absence strictly
///   inside its presence region (above the curve) is marked with a ring
///   (class `unexpected-absence`), a presence outside it (below) with a
///   cross (class `unexpected-presence`): the cells that temperature scores.
///   On cells smaller than 5 px, or beyond 20,000 marks, they are counted
///   in the legend but not marked.
/// * Labels: written on a side of at most 150 species (cut to 32
///   characters), else omitted and the count given.
/// * Large networks (more than [`DENSITY_LINKS`] links or
///   [`DENSITY_SIDE`] species on a side): a density image with one pixel
///   per drawn pixel (at most 560 x 560) embedded as PNG (id `density`), each pixel shaded by the
///   share of its block of cells that hold a link; the unexpected cells
///   are counted, not marked.
/// * Caption: NODF, WNODF and T of `meas`, the order, the isocline.
///
/// The cells' group (class `cells`) carries the grid origin and cell size
/// in `data-x0`, `data-y0`, `data-cell-width`, `data-cell-height`.
///
/// `meas` must be the measurement of `net` (same shape).
///
/// Cost: `O(m log n + L)` plus the elements drawn: at most `L`, and a
/// bounded image for large networks (the SVG stays below a few MB).
///
/// Errors: `meas` does not describe `net`.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{figures::{matrix_figure, MatrixFigureOptions}, measure::{measure, MeasureOptions}, Network};
/// let net = Network::from_array(array![[1, 1, 1], [1, 0, 1], [1, 0, 0]]).unwrap();
/// let m = measure(&net, &MeasureOptions::default()).unwrap();
/// let svg = matrix_figure(&net, &m, &MatrixFigureOptions::default()).unwrap().to_svg();
/// assert_eq!(svg.matches("class=\"cell\"").count(), 6);
/// ```
pub fn matrix_figure<T: Weight>(
    net: &Network<T>,
    meas: &Measurement,
    opts: &MatrixFigureOptions,
) -> Result<Figure> {
    let (m, n) = (net.nrows(), net.ncols());
    if meas.rows != m || meas.cols != n || meas.links != net.links() {
        return Err(crate::Error::InvalidArgument(format!(
            "the measurement describes a {} x {} network with {} links, not this {m} x {n} one with {}",
            meas.rows,
            meas.cols,
            meas.links,
            net.links()
        )));
    }
    let lay = layout(net, meas);
    let density = net.links() > DENSITY_LINKS || m > DENSITY_SIDE || n > DENSITY_SIDE;
    let (row_lab, col_lab) = (!density && m <= LABEL_SIDE, !density && n <= LABEL_SIDE);

    // Cell sizes.
    let base = (MATRIX_PX / m.max(n) as f64).clamp(0.2, 24.0);
    let (mut cw, mut ch) = (base, base);
    if col_lab {
        cw = cw.max(LABELLED_CELL);
    }
    if row_lab {
        ch = ch.max(LABELLED_CELL);
    }
    if density {
        // Keep the image's aspect within 1:4.
        let (w, h) = (n as f64, m as f64);
        let s = MATRIX_PX / w.max(h);
        cw = (w * s).max(MATRIX_PX / 4.0) / w;
        ch = (h * s).max(MATRIX_PX / 4.0) / h;
    }
    let (mw, mh) = (cw * n as f64, ch * m as f64);
    let label_px = (0.8 * cw.min(ch)).clamp(7.0, 11.0);
    let row_labels: Vec<String> = net.row_labels().iter().map(|s| short(s)).collect();
    let col_labels: Vec<String> = net.col_labels().iter().map(|s| short(s)).collect();
    let widest = |v: &[String]| {
        v.iter()
            .map(|s| text_width(s, label_px))
            .fold(0.0, f64::max)
    };
    let row_label_w = if row_lab {
        widest(&row_labels) + 6.0
    } else {
        0.0
    };
    let col_label_h = if col_lab {
        widest(&col_labels) + 6.0
    } else {
        0.0
    };

    let title_h = if opts.title.is_empty() { 8.0 } else { 30.0 };
    let x0 = 16.0 + TEXT_PX + 8.0 + row_label_w;
    let y0 = title_h + TEXT_PX + 10.0 + col_label_h;
    let mut g = Group::new();
    if !opts.title.is_empty() {
        g = g.add(
            text(&opts.title, 16.0, 22.0, 15.0, "start")
                .set("font-weight", "bold")
                .set("fill", INK),
        );
    }

    // Axis titles with counts.
    let side_title = |count: usize, name: &str, labelled: bool| {
        if labelled {
            format!("{} {name}", style::count(count))
        } else {
            format!("{} {name} (labels omitted)", style::count(count))
        }
    };
    g = g.add(
        text(
            &side_title(n, &opts.col_name, col_lab),
            x0 + 0.5 * mw,
            title_h + TEXT_PX,
            TEXT_PX,
            "middle",
        )
        .set("fill", INK),
    );
    let ry = y0 + 0.5 * mh;
    g = g.add(
        text(
            &side_title(m, &opts.row_name, row_lab),
            16.0 + TEXT_PX,
            ry,
            TEXT_PX,
            "middle",
        )
        .set("fill", INK)
        .set(
            "transform",
            format!("rotate(-90 {} {})", px(16.0 + TEXT_PX), px(ry)),
        ),
    );

    // Labels.
    if row_lab {
        let mut lg = Group::new()
            .set("class", "row-labels")
            .set("fill", INK)
            .set("font-size", px(label_px))
            .set("text-anchor", "end");
        for (i, &r) in lay.rows.iter().enumerate() {
            let y = y0 + (i as f64 + 0.5) * ch + 0.35 * label_px;
            lg = lg.add(
                svg::node::element::Text::new(String::new())
                    .set("x", px(x0 - 4.0))
                    .set("y", px(y))
                    .add(svg::node::Text::new(row_labels[r].as_str())),
            );
        }
        g = g.add(lg);
    }
    if col_lab {
        let mut lg = Group::new()
            .set("class", "col-labels")
            .set("fill", INK)
            .set("font-size", px(label_px))
            .set("text-anchor", "start");
        for (j, &c) in lay.cols.iter().enumerate() {
            let x = x0 + (j as f64 + 0.5) * cw + 0.35 * label_px;
            let y = y0 - 4.0;
            lg = lg.add(
                svg::node::element::Text::new(String::new())
                    .set("x", px(x))
                    .set("y", px(y))
                    .set("transform", format!("rotate(-90 {} {})", px(x), px(y)))
                    .add(svg::node::Text::new(col_labels[c].as_str())),
            );
        }
        g = g.add(lg);
    }

    // Frame, cells and marks.
    g = g.add(
        rect(x0, y0, mw, mh, "none")
            .set("stroke", style::FAINT)
            .set("stroke-width", 1),
    );
    let mut pos_row = vec![0usize; m];
    for (i, &r) in lay.rows.iter().enumerate() {
        pos_row[r] = i;
    }
    let mut pos_col = vec![0usize; n];
    for (j, &c) in lay.cols.iter().enumerate() {
        pos_col[c] = j;
    }
    let csr = net.csr();
    let weighted = meas.weighted;
    let (mut lo, mut hi) = (f64::INFINITY, 0.0f64);
    for v in csr.values() {
        let v = v.as_f64();
        if v > 0.0 {
            lo = lo.min(v);
            hi = hi.max(v);
        }
    }
    let shade = Shade::new(lo, hi);
    let presence_fill = style::ramp(0.8);

    // Unexpected cells: presences outside the region, absences inside it.
    let mut presences_out = Vec::new();
    let mut presences_in_row = vec![0usize; m];
    for r in 0..m {
        let i = pos_row[r];
        for &c in csr.row(r).0 {
            let j = pos_col[c as usize];
            if j < lay.inside[i] {
                presences_in_row[i] += 1;
            } else if lay.p.is_some() && !on_isocline(i, j, m, n, lay.p) {
                presences_out.push((i, j));
            }
        }
    }
    let absences_in: usize = (0..m).map(|i| lay.inside[i] - presences_in_row[i]).sum();

    let mut legend_bits = LegendBits::default();
    if density {
        // One image pixel per drawn pixel: scaling a binned image again
        // would add moiré.
        let bins = (
            m.min(mh.round().max(1.0) as usize),
            n.min(mw.round().max(1.0) as usize),
        );
        let img = density_image(net, &pos_row, &pos_col, bins)?;
        g = g.add(
            Image::new()
                .set("id", "density")
                .set("x", px(x0))
                .set("y", px(y0))
                .set("width", px(mw))
                .set("height", px(mh))
                .set("preserveAspectRatio", "none")
                .set("style", "image-rendering:pixelated")
                .set(
                    "href",
                    format!("data:image/png;base64,{}", base64(&img.png)),
                ),
        );
        legend_bits.density = Some((img.shade, bins));
    } else {
        // The grid's geometry, for tools that read the figure back.
        let mut cells = Group::new()
            .set("class", "cells")
            .set("data-x0", px(x0))
            .set("data-y0", px(y0))
            .set("data-cell-width", cw.to_string())
            .set("data-cell-height", ch.to_string());
        let inset = if cw.min(ch) >= 6.0 { 0.6 } else { 0.0 };
        for r in 0..m {
            let (cols, vals) = csr.row(r);
            let i = pos_row[r];
            for (&c, v) in cols.iter().zip(vals) {
                let j = pos_col[c as usize];
                let fill = if weighted {
                    style::ramp(shade.t(v.as_f64()))
                } else {
                    presence_fill.clone()
                };
                cells = cells.add(
                    rect(
                        x0 + j as f64 * cw + 0.5 * inset,
                        y0 + i as f64 * ch + 0.5 * inset,
                        cw - inset,
                        ch - inset,
                        &fill,
                    )
                    .set("class", "cell"),
                );
            }
        }
        g = g.add(cells);
    }
    if let Some(p) = lay.p {
        g = g.add(isocline(p, x0, y0, mw, mh));
    }
    let marks_drawn = !density
        && lay.p.is_some()
        && cw.min(ch) >= MARK_MIN_CELL
        && presences_out.len() + absences_in <= MARK_LIMIT;
    if marks_drawn {
        let r = 0.3 * cw.min(ch);
        let sw = (0.14 * cw.min(ch)).clamp(0.4, 1.6);
        let mut rings = Group::new()
            .set("fill", "none")
            .set("stroke", ACCENT)
            .set("stroke-width", px(sw));
        for i in 0..m {
            for j in 0..lay.inside[i] {
                if !is_link(&csr, lay.rows[i], lay.cols[j]) {
                    let (cx, cy) = (x0 + (j as f64 + 0.5) * cw, y0 + (i as f64 + 0.5) * ch);
                    rings = rings.add(ring(cx, cy, r));
                }
            }
        }
        let mut crosses = Group::new()
            .set("fill", "none")
            .set("stroke", ACCENT)
            .set("stroke-width", px(sw * 1.3));
        for &(i, j) in &presences_out {
            let (cx, cy) = (x0 + (j as f64 + 0.5) * cw, y0 + (i as f64 + 0.5) * ch);
            crosses = crosses.add(cross(cx, cy, r));
        }
        g = g.add(rings).add(crosses);
    }
    legend_bits.marks = lay
        .p
        .map(|_| (absences_in, presences_out.len(), marks_drawn));
    legend_bits.isocline = lay.p.is_some();

    // Legend to the right.
    let lx = x0 + mw + 24.0;
    let (legend, legend_h) = legend(
        lx,
        y0,
        weighted,
        &shade,
        &presence_fill,
        &opts.weight_name,
        &legend_bits,
    );
    g = g.add(legend);

    // Caption below.
    let width = (lx + LEGEND_W).max(520.0);
    let mut caption = vec![indices_line(meas)];
    caption.push(format!(
        "{} × {} network, {} links (fill {}). {}",
        style::count(m),
        style::count(n),
        style::count(meas.links),
        num(meas.fill, 3),
        lay.order_note
    ));
    if let Some((_, bins)) = legend_bits.density {
        caption.push(format!(
            "Drawn as a density image: each pixel is a block of about {} × {} cells.",
            num(m as f64 / bins.0 as f64, 3),
            num(n as f64 / bins.1 as f64, 3)
        ));
    }
    let mut cy = y0 + mh.max(legend_h) + 26.0;
    let mut cap = Group::new().set("class", "caption").set("fill", INK);
    for (k, para) in caption.iter().enumerate() {
        for l in wrap(para, width - 32.0, TEXT_PX) {
            let t = text(&l, 16.0, cy, TEXT_PX, "start");
            cap = cap.add(if k == 0 {
                t.set("font-weight", "bold")
            } else {
                t
            });
            cy += TEXT_PX * 1.4;
        }
    }
    g = g.add(cap);
    Ok(Figure::new(width, cy + 6.0, g))
}

/// True when `(i, j)` lies exactly on the isocline (neither region).
fn on_isocline(i: usize, j: usize, m: usize, n: usize, p: Option<f64>) -> bool {
    let Some(p) = p else { return false };
    let x = (j as f64 + 0.5) / n as f64;
    let y = (i as f64 + 0.5) / m as f64;
    (1.0 - x).powf(p) + (1.0 - y).powf(p) == 1.0
}

fn is_link<T: Weight>(csr: &crate::Csr<T>, r: usize, c: usize) -> bool {
    csr.row(r).0.binary_search(&(c as u32)).is_ok()
}

fn ring(cx: f64, cy: f64, r: f64) -> svg::node::element::Circle {
    svg::node::element::Circle::new()
        .set("class", "unexpected-absence")
        .set("cx", px(cx))
        .set("cy", px(cy))
        .set("r", px(r))
}

/// The legend's ring: same look, its own class (not counted as a cell).
fn legend_ring(cx: f64, cy: f64, r: f64) -> svg::node::element::Circle {
    svg::node::element::Circle::new()
        .set("cx", px(cx))
        .set("cy", px(cy))
        .set("r", px(r))
}

fn cross(cx: f64, cy: f64, r: f64) -> PathEl {
    legend_cross(cx, cy, r).set("class", "unexpected-presence")
}

/// The legend's cross: same look, no class of its own.
fn legend_cross(cx: f64, cy: f64, r: f64) -> PathEl {
    let d = 0.8 * r;
    PathEl::new().set(
        "d",
        format!(
            "M{} {}L{} {}M{} {}L{} {}",
            px(cx - d),
            px(cy - d),
            px(cx + d),
            px(cy + d),
            px(cx - d),
            px(cy + d),
            px(cx + d),
            px(cy - d)
        ),
    )
}

/// The isocline `(1-x)^p + (1-y)^p = 1` as a path over the matrix box,
/// sampled as the superellipse `1-x = cos(θ)^(2/p)`, `1-y = sin(θ)^(2/p)`.
fn isocline(p: f64, x0: f64, y0: f64, w: f64, h: f64) -> Group {
    let k = 240;
    let d = style::polyline((0..=k).map(|s| {
        let th = std::f64::consts::FRAC_PI_2 * s as f64 / k as f64;
        let a = th.cos().max(0.0).powf(2.0 / p);
        let b = th.sin().max(0.0).powf(2.0 / p);
        (x0 + (1.0 - a) * w, y0 + (1.0 - b) * h)
    }));
    Group::new()
        .add(
            PathEl::new()
                .set("d", d.clone())
                .set("fill", "none")
                .set("stroke", "#ffffff")
                .set("stroke-width", 4)
                .set("stroke-linejoin", "round"),
        )
        .add(
            PathEl::new()
                .set("id", "isocline")
                .set("d", d)
                .set("fill", "none")
                .set("stroke", INK)
                .set("stroke-width", 1.8)
                .set("stroke-linejoin", "round"),
        )
}

fn indices_line(meas: &Measurement) -> String {
    let nodf = meas
        .nodf
        .as_ref()
        .map_or("not computed".to_string(), |p| num(p.total, 4));
    let wnodf = match (&meas.wnodf, meas.weighted) {
        (Some(p), _) => num(p.total, 4),
        (None, false) => "– (presence data)".into(),
        (None, true) => "not computed".into(),
    };
    let t = match &meas.temperature {
        Some(t) => match t.packed {
            Some(v) => format!("{} (packed)", num(v, 4)),
            None => format!("{} (degree-sorted)", num(t.sorted, 4)),
        },
        None => "not computed".into(),
    };
    format!("NODF {nodf} · WNODF {wnodf} · T {t}")
}

#[derive(Default)]
struct LegendBits {
    /// (absences inside, presences outside, marked individually?)
    marks: Option<(usize, usize, bool)>,
    isocline: bool,
    /// Density shading and bins (rows, columns).
    density: Option<(Shade, (usize, usize))>,
}

/// The legend column: colour bar or plain swatch, isocline and marks.
fn legend(
    x: f64,
    y: f64,
    weighted: bool,
    shade: &Shade,
    presence_fill: &str,
    weight_name: &str,
    bits: &LegendBits,
) -> (Group, f64) {
    let mut g = Group::new().set("class", "legend").set("fill", INK);
    let mut cy = y + 4.0;
    let bar = |g: Group, shade: &Shade, title: &str, cy: f64| -> (Group, f64) {
        let mut g = g;
        let lines = wrap(title, LEGEND_W - 10.0, TEXT_PX);
        let mut yy = cy + TEXT_PX;
        for l in &lines {
            g = g.add(text(l, x, yy, TEXT_PX, "start"));
            yy += TEXT_PX * 1.3;
        }
        let (bh, bw) = (140.0, 14.0);
        let top = yy - 4.0;
        let steps = 70;
        for k in 0..steps {
            // Top is the largest value.
            let t = 1.0 - (k as f64 + 0.5) / steps as f64;
            g = g.add(rect(
                x,
                top + k as f64 * bh / steps as f64,
                bw,
                bh / steps as f64 + 0.3,
                &style::ramp(t),
            ));
        }
        g = g.add(
            rect(x, top, bw, bh, "none")
                .set("stroke", INK)
                .set("stroke-width", 0.6),
        );
        let sc_t = |v: f64| top + (1.0 - shade.t(v)) * bh;
        for v in shade.ticks() {
            let yv = sc_t(v);
            g = g.add(line(x + bw, yv, x + bw + 4.0, yv, INK, 1.0));
            g = g.add(text(
                &num(v, 3),
                x + bw + 7.0,
                yv + 0.35 * style::TICK_PX,
                style::TICK_PX,
                "start",
            ));
        }
        (g, top + bh + 12.0)
    };
    if let Some((dshade, _)) = &bits.density {
        let title = format!(
            "share of cells with a link, per block{}",
            if dshade.log { " (log scale)" } else { "" }
        );
        (g, cy) = bar(g, dshade, &title, cy);
        g = g.add(
            rect(x, cy, 14.0, 10.0, "#ffffff")
                .set("stroke", INK)
                .set("stroke-width", 0.6),
        );
        g = g.add(text("no link", x + 20.0, cy + 9.0, style::TICK_PX, "start"));
        cy += 24.0;
    } else if weighted {
        let title = format!(
            "{weight_name}{}",
            if shade.log { " (log scale)" } else { "" }
        );
        (g, cy) = bar(g, shade, &title, cy);
    } else {
        g = g.add(rect(x, cy, 12.0, 12.0, presence_fill));
        g = g.add(text("interaction", x + 20.0, cy + 10.0, TEXT_PX, "start"));
        cy += 26.0;
    }
    if bits.isocline {
        g = g.add(line(x, cy + 6.0, x + 22.0, cy + 6.0, INK, 1.8));
        let l = wrap("isocline of perfect nestedness", LEGEND_W - 30.0, TEXT_PX);
        for (k, s) in l.iter().enumerate() {
            g = g.add(text(
                s,
                x + 28.0,
                cy + 10.0 + k as f64 * TEXT_PX * 1.3,
                TEXT_PX,
                "start",
            ));
        }
        cy += 10.0 + l.len() as f64 * TEXT_PX * 1.3;
    }
    if let Some((abs_in, pres_out, drawn)) = bits.marks {
        let items = [
            (format!("absence above the isocline: {abs_in}"), true),
            (format!("presence below the isocline: {pres_out}"), false),
        ];
        for (label, is_ring) in items {
            if drawn {
                let el: Box<dyn svg::Node> = if is_ring {
                    Box::new(legend_ring(x + 6.0, cy + 6.0, 4.5))
                } else {
                    Box::new(legend_cross(x + 6.0, cy + 6.0, 4.5))
                };
                g = g.add(
                    Group::new()
                        .set("class", "legend-mark")
                        .set("fill", "none")
                        .set("stroke", ACCENT)
                        .set("stroke-width", 1.6)
                        .add(el),
                );
            }
            let l = wrap(&label, LEGEND_W - 30.0, TEXT_PX);
            for (k, s) in l.iter().enumerate() {
                g = g.add(text(
                    s,
                    x + if drawn { 20.0 } else { 0.0 },
                    cy + 10.0 + k as f64 * TEXT_PX * 1.3,
                    TEXT_PX,
                    "start",
                ));
            }
            cy += 8.0 + l.len() as f64 * TEXT_PX * 1.3;
        }
        if !drawn {
            let l = wrap(
                "(unexpected cells counted, not marked, at this size)",
                LEGEND_W - 10.0,
                style::TICK_PX,
            );
            for s in l {
                g = g.add(text(&s, x, cy + 10.0, style::TICK_PX, "start"));
                cy += style::TICK_PX * 1.3;
            }
            cy += 10.0;
        }
    }
    (g, cy - y)
}

struct DensityImage {
    png: Vec<u8>,
    shade: Shade,
}

/// Bins link positions into `br x bc` blocks; each pixel's colour is the share of its block's cells holding a
/// link (white for none). Returns the image and the bins (rows, columns).
fn density_image<T: Weight>(
    net: &Network<T>,
    pos_row: &[usize],
    pos_col: &[usize],
    (br, bc): (usize, usize),
) -> Result<DensityImage> {
    let (m, n) = (net.nrows(), net.ncols());
    // Position i goes to bin i * br / m: blocks differ in size by at most one.
    let row_bin = |i: usize| (i as u128 * br as u128 / m as u128) as usize;
    let col_bin = |j: usize| (j as u128 * bc as u128 / n as u128) as usize;
    let mut rows_in = vec![0usize; br];
    for i in 0..m {
        rows_in[row_bin(i)] += 1;
    }
    let mut cols_in = vec![0usize; bc];
    for j in 0..n {
        cols_in[col_bin(j)] += 1;
    }
    let mut count = vec![0u32; br * bc];
    let csr = net.csr();
    for r in 0..m {
        let bi = row_bin(pos_row[r]);
        for &c in csr.row(r).0 {
            count[bi * bc + col_bin(pos_col[c as usize])] += 1;
        }
    }
    let share = |b: usize| count[b] as f64 / (rows_in[b / bc] * cols_in[b % bc]) as f64;
    let (mut lo, mut hi) = (f64::INFINITY, 0.0f64);
    for b in 0..br * bc {
        if count[b] > 0 {
            let s = share(b);
            lo = lo.min(s);
            hi = hi.max(s);
        }
    }
    let shade = Shade::new(lo, hi);
    let mut rgb = vec![255u8; br * bc * 3];
    for b in 0..br * bc {
        if count[b] > 0 {
            rgb[3 * b..3 * b + 3].copy_from_slice(&style::ramp_rgb(shade.t(share(b))));
        }
    }
    let png = png_rgb(bc as u32, br as u32, &rgb)?;
    Ok(DensityImage { png, shade })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inside_counts_match_the_cell_test() {
        // The binary search must agree with the per-cell test everywhere.
        let (m, n) = (7, 11);
        for p in [0.3, 1.0, 2.5, 9.0] {
            for i in 0..m {
                let k = (0..n).filter(|&j| level_inside(i, j, m, n, p)).count();
                let lead = (0..n).take_while(|&j| level_inside(i, j, m, n, p)).count();
                assert_eq!(k, lead, "the region must be a prefix of each row");
            }
        }
    }

    #[test]
    fn log_ticks_are_in_range() {
        let s = Shade::new(1.0, 800.0);
        assert!(s.log);
        let t = s.ticks();
        assert_eq!(t.first(), Some(&1.0));
        assert!(t.iter().all(|&v| (1.0..=800.0).contains(&v)));
    }
}
