//! WNODF: weighted NODF (Almeida-Neto & Ulrich 2011, Environ. Model. Softw.
//! 26:173-178).

use std::borrow::Cow;

use crate::error::Result;
use crate::metrics::registry::IndexOptions;
use crate::metrics::{Order, Parts};
use crate::storage::{Layout, NetView};

mod csr;
mod ranks;

/// WNODF and its row and column parts (each 0-100).
///
/// Pairs, denominators and orders are those of [`crate::metrics::nodf()`]; a
/// pair (upper `u`, lower `l`) with `d_u > d_l` scores `100 k_ul / d_l`, where
/// `k_ul` counts the columns `j` with `0 < w_lj < w_uj`. In the sorted order
/// ties of degree are broken by decreasing total weight, which does not
/// change the value (tied pairs score 0). A binary network has WNODF 0.
///
/// Computed on the compressed rows of any [`NetView`], dense or sparse.
/// Weights are compared as `f64` (exact for integers below 2^53). Dense
/// tables (and bit tables) are computed on the ranks of
/// the weights among the network's distinct weights (order-preserving, so
/// the same counts): in the sorted order a count per list and rank as the
/// rows and columns are visited by decreasing degree, `O(L W)` with a band
/// of `W <= 64` counters per list below 64 distinct weights, `O(L log R)`
/// for `R` distinct weights beyond (a table whose counters would outnumber
/// its links a few times over takes the sparse route); in the given order the
/// pairs sharing each column in 16-bit vector lanes, `O(sum of squared
/// degrees)`. Sparse tables use a dominance count per column in the
/// sorted order, `O(L log(max(m, n)))`, and the pairs over the weights in
/// the given order. Memory `O(m + n + L)` beyond the
/// network, plus one `O(m + n)` counter per parallel task and, for dense
/// tables in the sorted order, `O((m + n) W)`. A dense table is first
/// compressed (`O(m n)`; a [`crate::Network`] keeps its compressed rows
/// for later calls).
///
/// Reference: Almeida-Neto & Ulrich (2011), Environmental Modelling &
/// Software 26:173-178.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{metrics::{wnodf, Order}, Network};
/// let net = Network::from_array(array![[5, 4, 3], [2, 1, 0], [1, 0, 0]]).unwrap();
/// assert_eq!(wnodf(&net, Order::Sorted).unwrap().total, 100.0);
/// let w = array![[5, 4, 3], [2, 1, 0], [1, 0, 0]];
/// assert_eq!(wnodf(&w.view(), Order::Sorted).unwrap().total, 100.0);
/// ```
pub fn wnodf<V: NetView + ?Sized>(view: &V, order: Order) -> Result<Parts> {
    let rows = view.compressed_rows()?;
    if view.layout() != Layout::Sparse {
        // A view that lends its compressed rows keeps them (a `Network`):
        // its compressed columns are kept too, saving the transpose.
        let cols = match rows {
            Cow::Borrowed(_) => Some(view.compressed_cols()?),
            Cow::Owned(_) => None,
        };
        if let Some(parts) = ranks::wnodf_ranked(&rows, cols.as_deref(), order) {
            return parts;
        }
    }
    csr::wnodf_csr(&rows, order)
}

/// WNODF by the rank kernels whatever the storage (the list kernels where
/// the rank kernels decline: many distinct weights in the sorted order),
/// for benches comparing the kernels on sparse storage.
#[doc(hidden)]
pub fn wnodf_ranks<V: NetView + ?Sized>(view: &V, order: Order) -> Result<Parts> {
    let rows = view.compressed_rows()?;
    ranks::wnodf_ranked(&rows, None, order).unwrap_or_else(|| csr::wnodf_csr(&rows, order))
}

/// WNODF by the list kernels alone (a dominance count per list in the
/// sorted order, pairs over `f64` weights in the given order), whatever the
/// storage: the reference that [`wnodf`]'s rank kernels are tested and
/// timed against. Same value as [`wnodf`], bit for bit.
#[doc(hidden)]
pub fn wnodf_lists<V: NetView + ?Sized>(view: &V, order: Order) -> Result<Parts> {
    csr::wnodf_csr(&*view.compressed_rows()?, order)
}

/// Registry evaluator of `wnodf`.
pub(crate) fn total(v: &dyn NetView, o: &IndexOptions) -> Result<f64> {
    Ok(wnodf(v, o.order)?.total)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Network;
    use ndarray::array;

    /// docs/methods.md §2: a binary matrix has WNODF 0.
    #[test]
    fn binary_is_zero() {
        let net = Network::from_array(array![[1, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
        assert_eq!(wnodf(&net, Order::Sorted).unwrap().total, 0.0);
    }
}
