//! Publication figures as SVG (feature `figures`).
//!
//! Each builder takes results the library computes (or plain numbers, for
//! analyses that produce them) and returns a [`Figure`]: a self-contained
//! SVG document with a white background, its own text (no fonts embedded;
//! a sans-serif stack), and sizes in CSS pixels. Every figure is a vector
//! drawing except the matrix of a large network, which is a density image
//! of fixed resolution, so no figure grows without bound.
//!
//! * [`matrix_figure`]: the interaction matrix in packed temperature order
//!   (or by decreasing degree), shaded by weight, with the isocline of
//!   perfect nestedness and the unexpected cells marked.
//! * [`null_figure`]: one panel per index and null model, the null values as
//!   a histogram with the observed value, the central 95 % and z and p.
//! * [`contributions_figure`], [`rejection_figure`], [`effort_figure`],
//!   [`effort_panels_figure`]:
//!   figures for per-species contributions, rejection rates of a test and
//!   index-versus-sampling-effort curves, built from plain numbers.
//!
//! Elements that tests and other tools may look for carry a `class` (cells
//! `cell`, marks `unexpected-absence` / `unexpected-presence`, histogram
//! bars `bar`, observed values `observed`) or an `id` (`isocline`,
//! `density`). The look (colours, type) is described in [`style`].
//!
//! ```
//! use ndarray::array;
//! use nidus::{figures::{matrix_figure, MatrixFigureOptions}, measure::{measure, MeasureOptions}, Network};
//! let net = Network::from_array(array![[3, 2, 1], [1, 1, 0], [2, 0, 0]]).unwrap();
//! let m = measure(&net, &MeasureOptions::default()).unwrap();
//! let fig = matrix_figure(&net, &m, &MatrixFigureOptions::default()).unwrap();
//! let svg = fig.to_svg();
//! assert_eq!(svg.matches("class=\"cell\"").count(), 6); // one per link
//! assert!(svg.contains("id=\"isocline\""));
//! ```

use std::path::Path;

use svg::Document;

use crate::error::{Error, Result};

mod matrix;
mod null;
mod plots;
mod raster;
pub mod style;

pub use matrix::{matrix_figure, MatrixFigureOptions, DENSITY_LINKS, DENSITY_SIDE};
pub use null::{null_figure, NullPanel};
pub use plots::{
    contributions_figure, effort_figure, effort_panels_figure, rejection_figure, EffortPanel,
    EffortPoint, RejectionPoint, RejectionSeries,
};

/// A finished figure: an SVG document and its size in px.
#[derive(Debug, Clone)]
pub struct Figure {
    doc: Document,
    width: f64,
    height: f64,
}

impl Figure {
    /// Wraps a document body of `width x height` px: sets the size, the
    /// view box, the font and a white background.
    fn new(width: f64, height: f64, body: svg::node::element::Group) -> Self {
        let (width, height) = (width.ceil(), height.ceil());
        let doc = Document::new()
            .set("width", width)
            .set("height", height)
            .set("viewBox", (0, 0, width, height))
            .set("font-family", style::FONT)
            .add(style::rect(0.0, 0.0, width, height, "#ffffff").set("id", "background"))
            .add(body);
        Figure { doc, width, height }
    }

    /// Width in px.
    pub fn width(&self) -> f64 {
        self.width
    }

    /// Height in px.
    pub fn height(&self) -> f64 {
        self.height
    }

    /// The SVG document as text.
    pub fn to_svg(&self) -> String {
        self.doc.to_string() + "\n"
    }

    /// Writes the SVG to `path`; errors name the path.
    pub fn save(&self, path: &Path) -> Result<()> {
        std::fs::write(path, self.to_svg()).map_err(|source| Error::Write {
            path: path.to_path_buf(),
            source,
        })
    }
}

/// Splits `s` into lines no wider than `width` px at `size` px (estimated
/// with [`style::text_width`]), breaking at spaces.
fn wrap(s: &str, width: f64, size: f64) -> Vec<String> {
    let mut lines = Vec::new();
    let mut cur = String::new();
    for word in s.split(' ') {
        let trial = if cur.is_empty() {
            word.to_string()
        } else {
            format!("{cur} {word}")
        };
        if !cur.is_empty() && style::text_width(&trial, size) > width {
            lines.push(std::mem::take(&mut cur));
            cur = word.to_string();
        } else {
            cur = trial;
        }
    }
    if !cur.is_empty() {
        lines.push(cur);
    }
    lines
}
