//! Every index of one network in one call: what `nidus measure` prints.
//!
//! The five families below report more than one number each (NODF's parts,
//! temperature's orders, the spectral radius's views) and have their own
//! fields. Any other index of the registry
//! ([`crate::metrics::registry::BUILTINS`]) is computed too and reported by
//! name in [`Measurement::more`], so a new index needs nothing here.

use std::fmt;
use std::str::FromStr;

use crate::error::{Error, Result};
use crate::metrics::{
    self, Discrepancy, Order, Parts, SpectralRadius, Temperature, TemperatureOptions,
};
use crate::network::{Network, Weight};

/// A family of indices that `measure` can compute.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Family {
    /// NODF with its row and column parts.
    Nodf,
    /// WNODF with its row and column parts.
    Wnodf,
    /// Temperature in the given, sorted and packed orders.
    Temperature,
    /// Spectral radius of the weighted network and of its binary view.
    Spectral,
    /// Discrepancy (Brualdi & Sanderson 1999) in both orientations, ties in
    /// input order and tie-minimised.
    Discrepancy,
}

impl Family {
    /// All families, in output order.
    pub const ALL: &'static [Family] = &[
        Family::Nodf,
        Family::Wnodf,
        Family::Temperature,
        Family::Spectral,
        Family::Discrepancy,
    ];

    /// Name on the command line and in output.
    pub fn name(self) -> &'static str {
        match self {
            Family::Nodf => "nodf",
            Family::Wnodf => "wnodf",
            Family::Temperature => "temperature",
            Family::Spectral => "spectral",
            Family::Discrepancy => "discrepancy",
        }
    }

    /// Key of the family's entry in JSON output.
    pub fn key(self) -> &'static str {
        match self {
            Family::Spectral => "spectral_radius",
            f => f.name(),
        }
    }
}

impl fmt::Display for Family {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Family {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        crate::error::find_by_name(s, Family::ALL, Family::name, "index")
    }
}

/// What to compute. Build it with [`MeasureOptions::new`] or `Default` and
/// set fields (new settings may be added).
#[derive(Clone, Debug)]
#[non_exhaustive]
pub struct MeasureOptions {
    /// Order for NODF and WNODF.
    pub order: Order,
    /// Families to compute, in any order (each at most once).
    pub families: Vec<Family>,
    /// Packing of the temperature (restarts, seed; packing can be switched off).
    pub temperature: TemperatureOptions,
}

impl Default for MeasureOptions {
    fn default() -> Self {
        MeasureOptions {
            order: Order::Sorted,
            families: Family::ALL.to_vec(),
            temperature: TemperatureOptions::default(),
        }
    }
}

impl MeasureOptions {
    /// Options computing `families` with this order and temperature packing.
    pub fn new(order: Order, families: Vec<Family>, temperature: TemperatureOptions) -> Self {
        MeasureOptions {
            order,
            families,
            temperature,
        }
    }

    /// True when `f` is to be computed.
    pub fn wants(&self, f: Family) -> bool {
        self.families.contains(&f)
    }
}

/// The description of a network and the indices asked for. An index not
/// asked for is `None`; so is WNODF of a binary network (it would be 0 by
/// definition, which says nothing).
#[derive(Clone, Debug)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Measurement {
    /// Number of rows.
    pub rows: usize,
    /// Number of columns.
    pub cols: usize,
    /// Number of non-zero cells.
    pub links: usize,
    /// `links / (rows cols)`.
    pub fill: f64,
    /// True when some non-zero weight differs from 1.
    pub weighted: bool,
    /// The order used by NODF and WNODF.
    pub order: Order,
    /// NODF (Almeida-Neto et al. 2008).
    pub nodf: Option<Parts>,
    /// WNODF (Almeida-Neto & Ulrich 2011); `None` for a binary network.
    pub wnodf: Option<Parts>,
    /// Temperature (Atmar & Patterson 1993); its orders are input positions.
    pub temperature: Option<Temperature>,
    /// Spectral radius (Staniczenko, Kopp & Allesina 2013).
    pub spectral_radius: Option<SpectralRadius>,
    /// Discrepancy (Brualdi & Sanderson 1999) in both orientations, ties in
    /// input order and tie-minimised (Berger 2017); see
    /// [`metrics::discrepancies`].
    pub discrepancy: Option<Discrepancy>,
    /// Every registry index outside the five families above, by name (empty
    /// for the indices nidus has today).
    #[cfg_attr(
        feature = "serde",
        serde(skip_serializing_if = "std::collections::BTreeMap::is_empty")
    )]
    pub more: std::collections::BTreeMap<&'static str, f64>,
}

/// Computes the description of `net` and the indices `opts` asks for.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{measure::{measure, MeasureOptions}, Network};
/// let net = Network::from_array(array![[5.0, 4.0, 3.0], [2.0, 1.0, 0.0], [1.0, 0.0, 0.0]]).unwrap();
/// let m = measure(&net, &MeasureOptions::default()).unwrap();
/// assert_eq!(m.nodf.unwrap().total, 100.0);
/// assert_eq!(m.wnodf.unwrap().total, 100.0);
/// ```
pub fn measure<T: Weight>(net: &Network<T>, opts: &MeasureOptions) -> Result<Measurement> {
    let weighted = net.is_weighted();
    let nodf = if opts.wants(Family::Nodf) {
        Some(metrics::nodf(net, opts.order)?)
    } else {
        None
    };
    let wnodf = if opts.wants(Family::Wnodf) && weighted {
        Some(metrics::wnodf(net, opts.order)?)
    } else {
        None
    };
    let temperature = if opts.wants(Family::Temperature) {
        Some(metrics::temperature(net, &opts.temperature)?)
    } else {
        None
    };
    let spectral_radius = if opts.wants(Family::Spectral) {
        Some(metrics::spectral_radius(net)?)
    } else {
        None
    };
    let discrepancy = if opts.wants(Family::Discrepancy) {
        Some(metrics::discrepancies(net)?)
    } else {
        None
    };
    let mut more = std::collections::BTreeMap::new();
    let options = metrics::IndexOptions {
        order: opts.order,
        temperature: opts.temperature,
    };
    for e in metrics::BUILTINS {
        if e.family.parse::<Family>().is_err() {
            more.insert(e.name, (e.evaluate)(net, &options)?);
        }
    }
    Ok(Measurement {
        rows: net.nrows(),
        cols: net.ncols(),
        links: net.links(),
        fill: net.fill(),
        weighted,
        order: opts.order,
        nodf,
        wnodf,
        temperature,
        spectral_radius,
        discrepancy,
        more,
    })
}
