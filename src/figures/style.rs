//! The look shared by every figure: colours, type, number formats, tick
//! positions and small SVG element helpers.
//!
//! # Colours
//! The sequential scale ([`ramp`]) is a straight line in CIELAB (CIE 1976
//! L\*a\*b\*, D65 white) from a pale yellow, `(L*, a*, b*) = (92, -10, 37)`,
//! to a dark blue, `(22, 10, -37)`. Along a straight line every step of the
//! same length has the same colour difference ΔE\*ab, so the scale is
//! perceptually uniform in that metric, and lightness alone falls
//! monotonically from 92 to 22, so it reads in grey print. Its hue stays on
//! the blue–yellow axis, which people with red–green colour-vision
//! deficiencies keep: the design principle of cividis (Nuñez, Anderton &
//! Renslow 2018, PLoS ONE 13:e0199239); the endpoints are ours, chosen as
//! the most saturated pair (|a\*| <= 10, equal |b\*|) whose whole line stays
//! inside the sRGB gamut. Conversion: CIELAB to XYZ (CIE 15:2004), XYZ to
//! sRGB (IEC 61966-2-1:1999). Marks that must stand out from the scale use
//! vermilion `#D55E00` from the palette of Okabe & Ito (2008, "Color
//! Universal Design", colour values from memory).
//!
//! # Type
//! Text is written as SVG `<text>` in a sans-serif stack; no font is read at
//! build time. Layout estimates a string's width as [`CHAR_EM`] em per
//! character (common practice for proportional sans-serif faces, whose mean
//! advance is about 0.5-0.6 em), so margins are wide enough for the
//! widest labels in the usual faces.

use std::fmt::Write as _;

use svg::node::element::{Group, Line, Rectangle as Rect, Text as TextEl};
use svg::node::Text;

/// Font stack of every text element.
pub const FONT: &str = "DejaVu Sans, Helvetica, Arial, sans-serif";
/// Estimated advance of one character, in em (see the module doc).
pub const CHAR_EM: f64 = 0.6;
/// Body text size in px (axis titles, captions).
pub const TEXT_PX: f64 = 12.0;
/// Tick label size in px.
pub const TICK_PX: f64 = 10.0;
/// Dark grey for text, axes and outlines.
pub const INK: &str = "#222222";
/// Light grey for grid lines and frames.
pub const FAINT: &str = "#c8c8c8";
/// Vermilion (Okabe & Ito 2008): observed values and unexpected cells.
pub const ACCENT: &str = "#D55E00";

/// Estimated width in px of `s` at `size` px (see [`CHAR_EM`]).
pub fn text_width(s: &str, size: f64) -> f64 {
    s.chars().count() as f64 * CHAR_EM * size
}

/// CIELAB endpoints of [`ramp`]: `t = 0` (low) and `t = 1` (high).
pub const RAMP_LAB: [[f64; 3]; 2] = [[92.0, -10.0, 37.0], [22.0, 10.0, -37.0]];

/// The colour at `t` in `[0, 1]` of the sequential scale (clamped), as
/// `#rrggbb`: pale yellow at 0, dark blue at 1. See the module doc.
pub fn ramp(t: f64) -> String {
    let [r, g, b] = ramp_rgb(t);
    format!("#{r:02x}{g:02x}{b:02x}")
}

/// [`ramp`] as 8-bit sRGB channels.
pub fn ramp_rgb(t: f64) -> [u8; 3] {
    let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
    let [lo, hi] = RAMP_LAB;
    let lab = [0, 1, 2].map(|k| lo[k] + (hi[k] - lo[k]) * t);
    lab_to_srgb(lab).map(|v| (v.clamp(0.0, 1.0) * 255.0).round() as u8)
}

/// CIELAB (D65) to gamma-encoded sRGB channels in `[0, 1]` (unclamped, so a
/// colour outside the gamut shows as a channel outside `[0, 1]`).
/// CIE 15:2004 for the inverse of `f`, IEC 61966-2-1 for the matrix and the
/// transfer curve.
pub fn lab_to_srgb([l, a, b]: [f64; 3]) -> [f64; 3] {
    const D: f64 = 6.0 / 29.0;
    let finv = |t: f64| {
        if t > D {
            t * t * t
        } else {
            3.0 * D * D * (t - 4.0 / 29.0)
        }
    };
    let fy = (l + 16.0) / 116.0;
    let (x, y, z) = (
        0.95047 * finv(fy + a / 500.0),
        finv(fy),
        1.08883 * finv(fy - b / 200.0),
    );
    let lin = [
        3.2406 * x - 1.5372 * y - 0.4986 * z,
        -0.9689 * x + 1.8758 * y + 0.0415 * z,
        0.0557 * x - 0.2040 * y + 1.0570 * z,
    ];
    lin.map(|v| {
        if v <= 0.0031308 {
            12.92 * v
        } else {
            1.055 * v.powf(1.0 / 2.4) - 0.055
        }
    })
}

/// A number for a label: `digits` significant digits, no exponent for
/// magnitudes between 1e-4 and 1e6, trailing zeros dropped.
pub fn num(v: f64, digits: usize) -> String {
    if !v.is_finite() {
        return if v.is_nan() {
            "–".into()
        } else {
            "∞".into()
        };
    }
    if v == 0.0 {
        return "0".into();
    }
    let mag = v.abs().log10().floor() as i32;
    if !(-4..6).contains(&mag) {
        return format!("{:.*e}", digits.saturating_sub(1), v);
    }
    let decimals = (digits as i32 - 1 - mag).max(0) as usize;
    let s = format!("{v:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A whole number with commas between groups of three digits.
pub fn count(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (k, ch) in digits.chars().enumerate() {
        if k > 0 && (digits.len() - k).is_multiple_of(3) {
            out.push(',');
        }
        out.push(ch);
    }
    out
}

/// A coordinate with two decimals (SVG attribute values; keeps files small).
pub fn px(v: f64) -> String {
    let mut s = String::new();
    let _ = write!(s, "{v:.2}");
    let t = s.trim_end_matches('0').trim_end_matches('.');
    if t == "-0" {
        "0".into()
    } else {
        t.to_string()
    }
}

/// SVG path data of the polyline through `points` (`M x y L x y ...`), each
/// coordinate written by [`px`]; empty for no points.
pub fn polyline(points: impl IntoIterator<Item = (f64, f64)>) -> String {
    let mut d = String::new();
    for (i, (x, y)) in points.into_iter().enumerate() {
        d += if i == 0 { "M" } else { "L" };
        d += &px(x);
        d.push(' ');
        d += &px(y);
    }
    d
}

/// Tick positions covering `[lo, hi]` with about `target` intervals, on the
/// "nice numbers" 1, 2, 5 x 10^k (Heckbert 1990, "Nice numbers for graph
/// labels", Graphics Gems, pp. 61-63): returns the ticks inside `[lo, hi]`
/// (at least the two ends when the range is degenerate).
pub fn ticks(lo: f64, hi: f64, target: usize) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite()) {
        return vec![];
    }
    if hi <= lo {
        return vec![lo];
    }
    let step = nice((hi - lo) / target.max(1) as f64, true);
    // The step is f x 10^e with f in {1, 2, 5, 10}; a tick k f 10^e is
    // computed as an integer times or divided by a power of ten, so it is
    // the correctly rounded decimal (0.6, not 0.6000000000000001).
    // floor, not round: a step of 5 x 10^e has log10 of e + 0.7, which
    // rounds up to e + 1 and would turn the step into 10^(e + 1).
    let e = step.log10().floor() as i32;
    let f = (step / 10f64.powi(e)).round();
    let at = |k: f64| {
        if e >= 0 {
            k * f * 10f64.powi(e)
        } else {
            k * f / 10f64.powi(-e)
        }
    };
    let first = (lo / step).ceil();
    let last = (hi / step).floor();
    let mut out = Vec::new();
    let mut k = first;
    while k <= last + 1e-9 {
        out.push(at(k) + 0.0); // + 0.0 turns -0 into 0
        k += 1.0;
    }
    out
}

/// Heckbert's nice number near `x`: rounded (`round`) or not below `x`.
fn nice(x: f64, round: bool) -> f64 {
    let e = x.log10().floor();
    let f = x / 10f64.powf(e);
    let nf = if round {
        if f < 1.5 {
            1.0
        } else if f < 3.0 {
            2.0
        } else if f < 7.0 {
            5.0
        } else {
            10.0
        }
    } else if f <= 1.0 {
        1.0
    } else if f <= 2.0 {
        2.0
    } else if f <= 5.0 {
        5.0
    } else {
        10.0
    };
    nf * 10f64.powf(e)
}

/// A text element at `(x, y)` with anchor `start`, `middle` or `end`.
pub fn text(s: &str, x: f64, y: f64, size: f64, anchor: &str) -> TextEl {
    TextEl::new(String::new())
        .set("x", px(x))
        .set("y", px(y))
        .set("font-size", px(size))
        .set("text-anchor", anchor)
        .add(Text::new(s))
}

/// A straight line.
pub fn line(x1: f64, y1: f64, x2: f64, y2: f64, stroke: &str, width: f64) -> Line {
    Line::new()
        .set("x1", px(x1))
        .set("y1", px(y1))
        .set("x2", px(x2))
        .set("y2", px(y2))
        .set("stroke", stroke)
        .set("stroke-width", px(width))
}

/// A filled rectangle without outline.
pub fn rect(x: f64, y: f64, w: f64, h: f64, fill: &str) -> Rect {
    Rect::new()
        .set("x", px(x))
        .set("y", px(y))
        .set("width", px(w))
        .set("height", px(h))
        .set("fill", fill)
}

/// A linear axis mapping: data `[lo, hi]` onto pixels `[p0, p1]`.
#[derive(Clone, Copy, Debug)]
pub struct Scale {
    /// Data value at `p0`.
    pub lo: f64,
    /// Data value at `p1`.
    pub hi: f64,
    /// Pixel position of `lo`.
    pub p0: f64,
    /// Pixel position of `hi`.
    pub p1: f64,
}

impl Scale {
    /// Pixel position of `v`.
    pub fn at(&self, v: f64) -> f64 {
        if self.hi == self.lo {
            return 0.5 * (self.p0 + self.p1);
        }
        self.p0 + (v - self.lo) / (self.hi - self.lo) * (self.p1 - self.p0)
    }
}

/// A data range padded by `frac` of its width on both sides (a degenerate
/// range gets a width of 1, or of 10 % of its value).
pub fn padded(lo: f64, hi: f64, frac: f64) -> (f64, f64) {
    if hi > lo {
        let d = (hi - lo) * frac;
        (lo - d, hi + d)
    } else {
        let d = if lo == 0.0 { 0.5 } else { lo.abs() * 0.05 };
        (lo - d, hi + d)
    }
}

/// Draws an x axis (line, ticks, tick labels) below a plot box whose
/// bottom edge is at `y`, and its title centred below.
pub fn x_axis(sx: Scale, y: f64, ticks_at: &[f64], title: &str) -> Group {
    let mut g = Group::new().set("class", "axis x-axis").set("fill", INK);
    g = g.add(line(sx.p0, y, sx.p1, y, INK, 1.0));
    for &t in ticks_at {
        let x = sx.at(t);
        g = g.add(line(x, y, x, y + 4.0, INK, 1.0));
        g = g.add(text(&num(t, 4), x, y + 6.0 + TICK_PX, TICK_PX, "middle"));
    }
    g.add(text(
        title,
        0.5 * (sx.p0 + sx.p1),
        y + 12.0 + TICK_PX + TEXT_PX,
        TEXT_PX,
        "middle",
    ))
}

/// Draws a y axis left of a plot box whose left edge is at `x`, its title
/// rotated and placed `title_gap` px left of the axis line.
pub fn y_axis(sy: Scale, x: f64, ticks_at: &[f64], title: &str, title_gap: f64) -> Group {
    let mut g = Group::new().set("class", "axis y-axis").set("fill", INK);
    g = g.add(line(x, sy.p0, x, sy.p1, INK, 1.0));
    for &t in ticks_at {
        let y = sy.at(t);
        g = g.add(line(x - 4.0, y, x, y, INK, 1.0));
        g = g.add(text(
            &num(t, 4),
            x - 6.0,
            y + 0.35 * TICK_PX,
            TICK_PX,
            "end",
        ));
    }
    let cy = 0.5 * (sy.p0 + sy.p1);
    g.add(text(title, x - title_gap, cy, TEXT_PX, "middle").set(
        "transform",
        format!("rotate(-90 {} {})", px(x - title_gap), px(cy)),
    ))
}

/// Width in px that [`y_axis`] tick labels take for these ticks.
pub fn y_tick_width(ticks_at: &[f64]) -> f64 {
    ticks_at
        .iter()
        .map(|&t| text_width(&num(t, 4), TICK_PX))
        .fold(0.0, f64::max)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// sRGB to CIELAB, the inverse of [`lab_to_srgb`] (same standards).
    fn srgb_to_lab(c: [f64; 3]) -> [f64; 3] {
        let lin = c.map(|v| {
            if v <= 0.04045 {
                v / 12.92
            } else {
                ((v + 0.055) / 1.055).powf(2.4)
            }
        });
        // Inverse of the IEC 61966-2-1 matrix (the standard's forward matrix).
        let x = 0.4124 * lin[0] + 0.3576 * lin[1] + 0.1805 * lin[2];
        let y = 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2];
        let z = 0.0193 * lin[0] + 0.1192 * lin[1] + 0.9505 * lin[2];
        const D: f64 = 6.0 / 29.0;
        let f = |t: f64| {
            if t > D * D * D {
                t.cbrt()
            } else {
                t / (3.0 * D * D) + 4.0 / 29.0
            }
        };
        let (fx, fy, fz) = (f(x / 0.95047), f(y), f(z / 1.08883));
        [116.0 * fy - 16.0, 500.0 * (fx - fy), 200.0 * (fy - fz)]
    }

    #[test]
    fn known_colours_convert() {
        // D65 white L* = 100 is sRGB white; L* = 0 is black (CIE 15:2004 definitions).
        let w = lab_to_srgb([100.0, 0.0, 0.0]);
        assert!(w.iter().all(|&v| (v - 1.0).abs() < 1e-3), "{w:?}");
        let k = lab_to_srgb([0.0, 0.0, 0.0]);
        assert!(k.iter().all(|&v| v.abs() < 1e-9), "{k:?}");
        // sRGB mid grey #777777 has L* 50.0 (about; from memory 119/255 -> L* 50.03).
        let g = srgb_to_lab([119.0 / 255.0; 3]);
        assert!((g[0] - 50.0).abs() < 0.2, "{g:?}");
    }

    #[test]
    fn ramp_stays_in_gamut_and_is_uniform() {
        // 8 steps of about 12 ΔE*ab each, so the 8-bit rounding of the
        // written colours (under 1 ΔE) does not hide unevenness.
        let steps = 8;
        let mut prev: Option<[f64; 3]> = None;
        let mut diffs = Vec::new();
        for k in 0..=steps {
            let t = k as f64 / steps as f64;
            let [lo, hi] = RAMP_LAB;
            let lab = [0, 1, 2].map(|c| lo[c] + (hi[c] - lo[c]) * t);
            let rgb = lab_to_srgb(lab);
            assert!(
                rgb.iter().all(|&v| (-1e-9..=1.0 + 1e-9).contains(&v)),
                "t = {t}: {rgb:?} leaves the sRGB gamut"
            );
            // Round trip through the 8-bit colour actually written.
            let back = srgb_to_lab(ramp_rgb(t).map(|v| v as f64 / 255.0));
            assert!(
                (back[0] - lab[0]).abs() < 0.6,
                "t = {t}: L* {back:?} vs {lab:?}"
            );
            if let Some(p) = prev {
                let d: f64 = (0..3).map(|c| (back[c] - p[c]).powi(2)).sum::<f64>().sqrt();
                diffs.push(d);
                assert!(back[0] < p[0], "lightness must fall monotonically");
            }
            prev = Some(back);
        }
        // Equal steps: every ΔE*ab within 25 % of the mean (8-bit rounding).
        let mean = diffs.iter().sum::<f64>() / diffs.len() as f64;
        assert!(
            diffs.iter().all(|d| (d - mean).abs() < 0.25 * mean),
            "{diffs:?}"
        );
    }

    #[test]
    fn nice_ticks() {
        // Heckbert's example range 0..1 with 5 intervals: step 0.2.
        assert_eq!(ticks(0.0, 1.0, 5), vec![0.0, 0.2, 0.4, 0.6, 0.8, 1.0]);
        assert_eq!(ticks(3.0, 97.0, 4), vec![20.0, 40.0, 60.0, 80.0]);
        assert_eq!(ticks(-0.3, 0.3, 3), vec![-0.2, 0.0, 0.2]);
        // Steps of 5 x 10^e (the 1-2-5 rule, Heckbert 1990) stay 5 x 10^e
        // and every tick lies in the range.
        assert_eq!(ticks(0.0, 2.2, 5), vec![0.0, 0.5, 1.0, 1.5, 2.0]);
        assert_eq!(
            ticks(230.0, 3250.0, 6),
            vec![500.0, 1000.0, 1500.0, 2000.0, 2500.0, 3000.0]
        );
    }

    #[test]
    fn numbers_read_well() {
        assert_eq!(num(12.3456, 3), "12.3");
        assert_eq!(num(0.5, 3), "0.5");
        assert_eq!(num(100.0, 3), "100");
        assert_eq!(num(0.001, 2), "0.001");
        assert_eq!(px(1.0), "1");
        assert_eq!(count(1_000_000), "1,000,000");
        assert_eq!(count(999), "999");
        assert_eq!(px(-0.001), "0");
    }
}
