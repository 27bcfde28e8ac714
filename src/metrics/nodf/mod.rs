//! NODF: nestedness based on overlap and decreasing fill
//! (Almeida-Neto et al. 2008, Oikos 117:1227-1239).

use crate::error::Result;
use crate::metrics::registry::{part_of, IndexOptions};
use crate::metrics::{Order, Parts};
use crate::storage::{Layout, NetView};

mod bits;
pub(crate) mod csr;

#[doc(hidden)]
pub use bits::{nodf_with_path, upper_overlaps};

/// NODF and its row and column parts (each 0-100).
pub type Nodf = Parts;

/// NODF of a network's binary view, from any [`NetView`] (a [`crate::Network`],
/// a [`crate::BitMatrix`], a [`crate::Csr`] or an `ndarray` array or view).
///
/// For an ordered pair of rows (upper `u`, lower `l`) with `d_u > d_l` the
/// pair scores `100 |N(u) ∩ N(l)| / d_l`, otherwise 0; `NODF_rows` is the mean
/// over the `m(m-1)/2` pairs, `NODF_cols` likewise, and NODF the mean over
/// all pairs of both sides. With [`Order::Sorted`] every unordered pair of
/// different degrees scores against the smaller degree and ties score 0;
/// with [`Order::Given`] a pair scores only when its earlier member has the
/// larger degree. A side with fewer than two members gives `None` and the
/// total uses the other side alone; a 1 x 1 network is an error.
///
/// Storage decides the kernel ([`NetView::layout`]): a dense table or a bit
/// matrix goes through the bit-packed rows; compressed rows stay on the
/// lists, never forming an `m x n` table. Both give the same value to the
/// last bit.
///
/// Cost (dense): `O(m n)` to pack the view, then `O(m n log(m) / 64)` for the
/// sorted order or `O((m^2 n + n^2 m) / 64)` word operations for the given
/// order; memory `O(m n / 8)` bytes. Sparse: `O(m + n + L)` sorted,
/// `O(L log(max(m, n)))` given.
///
/// Reference: Almeida-Neto, Guimarães, Guimarães, Loyola & Ulrich (2008),
/// Oikos 117:1227-1239.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{metrics::{nodf, Order}, Network};
/// // A staircase: rows and columns all of distinct degree, perfectly nested.
/// let net = Network::from_array(array![[1, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
/// let n = nodf(&net, Order::Sorted).unwrap();
/// assert_eq!(n.total, 100.0);
/// // The same of a borrowed ndarray table, without a copy into a network.
/// let w = array![[1, 1, 1], [1, 1, 0], [1, 0, 0]];
/// assert_eq!(nodf(&w.view(), Order::Sorted).unwrap().total, 100.0);
/// ```
pub fn nodf<V: NetView + ?Sized>(view: &V, order: Order) -> Result<Nodf> {
    if view.layout() == Layout::Sparse {
        return csr::nodf_csr(&*view.compressed_rows()?, order);
    }
    bits::nodf_bits(&*view.bits()?, order)
}

/// Registry evaluator of `nodf`.
pub(crate) fn total(v: &dyn NetView, o: &IndexOptions) -> Result<f64> {
    Ok(nodf(v, o.order)?.total)
}

/// Registry evaluator of `nodf-rows`.
pub(crate) fn rows(v: &dyn NetView, o: &IndexOptions) -> Result<f64> {
    part_of("NODF", "nodf-rows", nodf(v, o.order)?.rows)
}

/// Registry evaluator of `nodf-cols`.
pub(crate) fn cols(v: &dyn NetView, o: &IndexOptions) -> Result<f64> {
    part_of("NODF", "nodf-cols", nodf(v, o.order)?.cols)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Network;
    use ndarray::array;

    /// Worked by hand (common practice): an upper row of degree 5 and a lower
    /// row of degree 4 sharing 3 partners score 75.
    #[test]
    fn pair_worked_by_hand() {
        let net = Network::from_array(array![[1, 1, 1, 1, 1, 0], [1, 1, 1, 0, 0, 1]]).unwrap();
        let n = nodf(&net, Order::Given).unwrap();
        assert_eq!(n.rows, Some(75.0));
    }

    /// Two rows of equal degree score 0 however much they share (METHODS.md §1).
    #[test]
    fn equal_degrees_score_zero() {
        let net = Network::from_array(array![[1, 1, 0], [1, 1, 0]]).unwrap();
        assert_eq!(nodf(&net, Order::Sorted).unwrap().rows, Some(0.0));
    }
}
