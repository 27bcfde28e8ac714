//! Scalar indices by name, for null-model tests and tables: one enum that
//! names every scalar nidus can test, and one function that computes it.
//!
//! Adding an index: a variant here, its name in [`IndexKind::name`] and
//! [`IndexKind::ALL`], its direction in [`IndexKind::more_nested`], and a
//! line in [`evaluate`] and [`evaluate_bits`].

use std::fmt;
use std::str::FromStr;

use crate::bits::BitMatrix;
use crate::error::{Error, Result};
use crate::metrics::{self, Order, TemperatureOptions};
use crate::network::{Network, Weight};

/// A scalar index that can be tested against a null model.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(into = "&'static str")]
pub enum IndexKind {
    /// NODF, both sides.
    Nodf,
    /// NODF, pairs of rows only.
    NodfRows,
    /// NODF, pairs of columns only.
    NodfCols,
    /// Weighted NODF.
    Wnodf,
    /// Temperature in the packed order (the packing of [`IndexOptions::temperature`]).
    Temperature,
    /// Temperature in the degree-sorted order (no packing search: cheap).
    TemperatureSorted,
    /// Spectral radius of the binary view.
    Spectral,
    /// Spectral radius of the weighted network.
    SpectralWeighted,
    /// Discrepancy (Brualdi & Sanderson 1999): ones shifted within rows,
    /// ties among column degrees in input order (`rows.stable` of
    /// [`metrics::Discrepancy`]; also accepted as `discrepancy-rows-stable`).
    Discrepancy,
    /// Discrepancy, ones shifted within rows, tie-minimised (Berger 2017).
    DiscrepancyRowsMinimum,
    /// Discrepancy, ones shifted within columns, ties in input order.
    DiscrepancyColsStable,
    /// Discrepancy, ones shifted within columns, tie-minimised.
    DiscrepancyColsMinimum,
}

/// Which direction of an index means "more nested".
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Direction {
    /// Larger values are more nested (NODF, WNODF, spectral radius).
    Greater,
    /// Smaller values are more nested (temperature, discrepancy).
    Less,
}

impl IndexKind {
    /// Every index, in the order used for listings.
    pub const ALL: &'static [IndexKind] = &[
        IndexKind::Nodf,
        IndexKind::NodfRows,
        IndexKind::NodfCols,
        IndexKind::Wnodf,
        IndexKind::Temperature,
        IndexKind::TemperatureSorted,
        IndexKind::Spectral,
        IndexKind::SpectralWeighted,
        IndexKind::Discrepancy,
        IndexKind::DiscrepancyRowsMinimum,
        IndexKind::DiscrepancyColsStable,
        IndexKind::DiscrepancyColsMinimum,
    ];

    /// The name used on the command line and in output.
    pub fn name(self) -> &'static str {
        match self {
            IndexKind::Nodf => "nodf",
            IndexKind::NodfRows => "nodf-rows",
            IndexKind::NodfCols => "nodf-cols",
            IndexKind::Wnodf => "wnodf",
            IndexKind::Temperature => "temperature",
            IndexKind::TemperatureSorted => "temperature-sorted",
            IndexKind::Spectral => "spectral",
            IndexKind::SpectralWeighted => "spectral-weighted",
            IndexKind::Discrepancy => "discrepancy",
            IndexKind::DiscrepancyRowsMinimum => "discrepancy-rows-minimum",
            IndexKind::DiscrepancyColsStable => "discrepancy-cols-stable",
            IndexKind::DiscrepancyColsMinimum => "discrepancy-cols-minimum",
        }
    }

    /// The direction in which the index grows with nestedness.
    pub fn more_nested(self) -> Direction {
        match self {
            IndexKind::Nodf
            | IndexKind::NodfRows
            | IndexKind::NodfCols
            | IndexKind::Wnodf
            | IndexKind::Spectral
            | IndexKind::SpectralWeighted => Direction::Greater,
            IndexKind::Temperature
            | IndexKind::TemperatureSorted
            | IndexKind::Discrepancy
            | IndexKind::DiscrepancyRowsMinimum
            | IndexKind::DiscrepancyColsStable
            | IndexKind::DiscrepancyColsMinimum => Direction::Less,
        }
    }

    /// True when the index reads weights, so only weighted null models make
    /// sense for it (a binary draw has WNODF 0).
    pub fn needs_weights(self) -> bool {
        matches!(self, IndexKind::Wnodf | IndexKind::SpectralWeighted)
    }
}

impl From<IndexKind> for &'static str {
    fn from(k: IndexKind) -> Self {
        k.name()
    }
}

impl fmt::Display for IndexKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for IndexKind {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        if s == "discrepancy-rows-stable" {
            return Ok(IndexKind::Discrepancy);
        }
        crate::error::find_by_name(s, IndexKind::ALL, IndexKind::name, "index")
    }
}

/// Settings that indices take.
#[derive(Clone, Debug, Default)]
pub struct IndexOptions {
    /// Row and column order for NODF and WNODF.
    pub order: Order,
    /// Packing search for [`IndexKind::Temperature`].
    pub temperature: TemperatureOptions,
}

fn nodf_part(kind: IndexKind, p: metrics::Parts) -> Result<f64> {
    let part = match kind {
        IndexKind::NodfRows => p.rows,
        IndexKind::NodfCols => p.cols,
        _ => Some(p.total),
    };
    part.ok_or_else(|| Error::Undefined {
        index: "NODF",
        reason: format!("{} needs at least two members on that side", kind.name()),
    })
}

/// Computes index `kind` of a network.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{index::{evaluate, IndexKind, IndexOptions}, Network};
/// let net = Network::from_array(array![[1, 1], [1, 0]]).unwrap();
/// assert_eq!(evaluate(IndexKind::Nodf, &net, &IndexOptions::default()).unwrap(), 100.0);
/// ```
pub fn evaluate<T: Weight>(kind: IndexKind, net: &Network<T>, opts: &IndexOptions) -> Result<f64> {
    match kind {
        IndexKind::Nodf | IndexKind::NodfRows | IndexKind::NodfCols => {
            nodf_part(kind, metrics::nodf(net, opts.order)?)
        }
        IndexKind::Wnodf => Ok(metrics::wnodf(net, opts.order)?.total),
        IndexKind::Spectral => Ok(metrics::spectral_radius(net)?.binary),
        IndexKind::SpectralWeighted => Ok(metrics::spectral_radius(net)?.weighted),
        IndexKind::Temperature | IndexKind::TemperatureSorted => {
            evaluate_bits(kind, &net.binary()?, opts)
        }
        IndexKind::Discrepancy => Ok(metrics::discrepancy(net)? as f64),
        IndexKind::DiscrepancyRowsMinimum => Ok(metrics::discrepancy_minimum(net)? as f64),
        IndexKind::DiscrepancyColsStable => Ok(metrics::discrepancy(&net.transpose())? as f64),
        IndexKind::DiscrepancyColsMinimum => {
            Ok(metrics::discrepancy_minimum(&net.transpose())? as f64)
        }
    }
}

/// Computes index `kind` of a binary matrix (a binary null draw). Indices
/// that read weights are an error here.
pub fn evaluate_bits(kind: IndexKind, b: &BitMatrix, opts: &IndexOptions) -> Result<f64> {
    match kind {
        IndexKind::Nodf | IndexKind::NodfRows | IndexKind::NodfCols => {
            nodf_part(kind, metrics::nodf_bits(b, opts.order)?)
        }
        IndexKind::Wnodf | IndexKind::SpectralWeighted => Err(Error::InvalidArgument(format!(
            "{} reads weights; test it against a weighted null model",
            kind.name()
        ))),
        IndexKind::Temperature => {
            let t = metrics::temperature_of_bits(
                b,
                &TemperatureOptions {
                    pack: true,
                    ..opts.temperature
                },
            )?;
            Ok(t.packed.unwrap_or(t.sorted))
        }
        IndexKind::TemperatureSorted => Ok(metrics::temperature_of_bits(
            b,
            &TemperatureOptions {
                pack: false,
                ..opts.temperature
            },
        )?
        .sorted),
        IndexKind::Spectral => metrics::spectral::spectral_radius_of_bits(b),
        IndexKind::Discrepancy => Ok(metrics::discrepancy_of_bits(b) as f64),
        IndexKind::DiscrepancyRowsMinimum => Ok(metrics::discrepancy_minimum_of_bits(b)? as f64),
        IndexKind::DiscrepancyColsStable => Ok(metrics::discrepancy_of_bits(&b.transpose()) as f64),
        IndexKind::DiscrepancyColsMinimum => {
            Ok(metrics::discrepancy_minimum_of_bits(&b.transpose())? as f64)
        }
    }
}
