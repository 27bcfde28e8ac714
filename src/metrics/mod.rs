//! Nestedness indices, one file or folder each. Every index is one public
//! function generic over the storage view ([`crate::NetView`]), with its
//! storage-specific kernels private beside it; its doc gives formula, cost
//! and reference. [`registry`] holds the [`Statistic`] trait and the one
//! table of built-in scalar indices.

use std::fmt;
use std::str::FromStr;

use crate::error::Error;

pub mod discrepancy;
pub mod nodf;
pub mod registry;
pub mod spectral;
pub mod temperature;
pub mod wnodf;

pub use discrepancy::{
    discrepancies, discrepancy, discrepancy_minimum, Discrepancy, DiscrepancyTies,
};
pub use nodf::{nodf, Nodf};
pub use registry::{lookup, BuiltinStatistic, Direction, IndexOptions, Statistic, BUILTINS};
pub use spectral::{spectral_radius, SpectralRadius};
pub use temperature::{isocline_area, isocline_p, temperature, Temperature, TemperatureOptions};
pub use wnodf::wnodf;

/// The order of rows and columns that an order-dependent index uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[cfg_attr(feature = "serde", serde(rename_all = "lowercase"))]
pub enum Order {
    /// Rows and columns by decreasing degree, ties in input order.
    #[default]
    Sorted,
    /// Rows and columns as given in the input (an external gradient).
    Given,
}

impl Order {
    /// The name used on the command line and in output.
    pub fn name(self) -> &'static str {
        match self {
            Order::Sorted => "sorted",
            Order::Given => "given",
        }
    }
}

impl fmt::Display for Order {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Order {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self, Error> {
        match s {
            "sorted" => Ok(Order::Sorted),
            "given" => Ok(Order::Given),
            _ => Err(Error::InvalidArgument(format!(
                "unknown order '{s}': expected 'sorted' or 'given'"
            ))),
        }
    }
}

/// The tie groups of a degree order `ord` (from [`degree_order`]): the
/// ranges `p..q` of positions in `ord` whose members share one degree, in
/// order.
pub(crate) fn tie_groups(degrees: &[usize], ord: &[usize]) -> Vec<std::ops::Range<usize>> {
    let m = ord.len();
    let mut groups = Vec::new();
    let mut p = 0;
    while p < m {
        let mut q = p + 1;
        while q < m && degrees[ord[q]] == degrees[ord[p]] {
            q += 1;
        }
        groups.push(p..q);
        p = q;
    }
    groups
}

/// Positions `0..degrees.len()` by decreasing degree, ties in input order
/// (a stable sort), the "sorted" convention of docs/methods.md.
///
/// A counting sort over the degrees when the largest is at most four times
/// the number of members (`O(m + max)`; the usual case, and every null
/// draw), else a comparison sort; both give the same order.
pub fn degree_order(degrees: &[usize]) -> Vec<usize> {
    let m = degrees.len();
    let max = degrees.iter().copied().max().unwrap_or(0);
    if max <= 4 * m {
        // first[max - d] = the number of members of degree above d.
        let mut first = vec![0usize; max + 2];
        for &d in degrees {
            first[max - d + 1] += 1;
        }
        for k in 1..first.len() {
            first[k] += first[k - 1];
        }
        let mut ord = vec![0usize; m];
        for (i, &d) in degrees.iter().enumerate() {
            ord[first[max - d]] = i;
            first[max - d] += 1;
        }
        return ord;
    }
    let mut idx: Vec<usize> = (0..m).collect();
    idx.sort_by(|&a, &b| degrees[b].cmp(&degrees[a]));
    idx
}

/// Number of unordered pairs among `k` items.
pub(crate) fn pairs(k: usize) -> usize {
    k * k.saturating_sub(1) / 2
}

/// An index split into its row part, column part and total, as NODF and
/// WNODF are. A part whose side has fewer than two members is `None`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Parts {
    /// Pairs of both sides together.
    pub total: f64,
    /// Pairs of rows.
    pub rows: Option<f64>,
    /// Pairs of columns.
    pub cols: Option<f64>,
}

impl Parts {
    /// Combines per-side sums of pair values into the parts; errors when
    /// neither side has a pair.
    pub(crate) fn from_sums(
        index: &'static str,
        m: usize,
        n: usize,
        row_sum: f64,
        col_sum: f64,
    ) -> Result<Parts, Error> {
        let (pr, pc) = (pairs(m), pairs(n));
        if pr + pc == 0 {
            return Err(Error::Undefined {
                index,
                reason: "a 1 x 1 network has no pairs of rows or columns".into(),
            });
        }
        Ok(Parts {
            total: (row_sum + col_sum) / (pr + pc) as f64,
            rows: (pr > 0).then(|| row_sum / pr as f64),
            cols: (pc > 0).then(|| col_sum / pc as f64),
        })
    }
}

/// `sum over members l with d_l > 0, in order, of 100 * counts[l] / d_l`:
/// one side of NODF or WNODF from its integer counts (added in member
/// order, so the value does not depend on the number of threads).
pub(crate) fn side_value(degrees: &[usize], counts: &[u64]) -> f64 {
    degrees
        .iter()
        .zip(counts)
        .filter(|(&d, _)| d > 0)
        .map(|(&d, &c)| 100.0 * c as f64 / d as f64)
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::null::{below, draw_rng};

    /// Both branches of `degree_order` against a stable comparison sort on
    /// seeded degree lists with many ties, small and huge maxima, and none.
    #[test]
    fn degree_order_is_the_stable_decreasing_sort() {
        let mut rng = draw_rng(5, 5);
        assert!(degree_order(&[]).is_empty());
        for case in 0..500 {
            let m = below(&mut rng, 60);
            let top = [1, 3, 10, 240, 1_000_000][case % 5];
            let d: Vec<usize> = (0..m).map(|_| below(&mut rng, top + 1)).collect();
            let mut want: Vec<usize> = (0..m).collect();
            want.sort_by(|&a, &b| d[b].cmp(&d[a]));
            assert_eq!(degree_order(&d), want, "{d:?}");
        }
    }
}
