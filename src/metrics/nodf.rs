//! NODF: nestedness based on overlap and decreasing fill
//! (Almeida-Neto et al. 2008, Oikos 117:1227-1239).

use rayon::prelude::*;

use crate::bits::BitMatrix;
use crate::error::Result;
use crate::metrics::{Order, Parts};
use crate::network::{Network, Weight};

/// NODF and its row and column parts (each 0-100).
pub type Nodf = Parts;

/// NODF of a network's binary view.
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
/// Cost: `O((m^2 n + n^2 m) / 64)` word operations on the bit-packed view,
/// parallel over lower rows; memory `O(m n / 8)` bytes for the view and its
/// transpose.
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
/// ```
pub fn nodf<T: Weight>(net: &Network<T>, order: Order) -> Result<Nodf> {
    let b = net.binary()?;
    nodf_bits(&b, order)
}

/// NODF of a bit-packed binary matrix (see [`nodf`]).
pub fn nodf_bits(b: &BitMatrix, order: Order) -> Result<Nodf> {
    let t = b.transpose();
    let rows = side_sum(b, order);
    let cols = side_sum(&t, order);
    Parts::from_sums("NODF", b.nrows(), b.ncols(), rows, cols)
}

/// Sum over the pairs of rows of `b` of the pair values (0-100 each).
///
/// For each lower row the overlaps with its uppers are summed as integers,
/// then divided once by its degree; the per-row results are added in row
/// order, so the value does not depend on the number of threads.
pub(crate) fn side_sum(b: &BitMatrix, order: Order) -> f64 {
    let degrees = b.row_degrees();
    let sets = crate::metrics::upper_sets(&degrees, order);
    let per_lower: Vec<f64> = sets
        .par_iter()
        .map(|(l, uppers)| {
            let overlap: usize = uppers.iter().map(|&u| b.overlap(u, *l)).sum();
            100.0 * overlap as f64 / degrees[*l] as f64
        })
        .collect();
    per_lower.iter().sum()
}

#[cfg(test)]
mod tests {
    use super::*;
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
