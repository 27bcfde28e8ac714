//! WNODF: weighted NODF (Almeida-Neto & Ulrich 2011, Environ. Model. Softw.
//! 26:173-178).

use crate::error::Result;
use crate::metrics::{Order, Parts};
use crate::network::{Network, Weight};

/// WNODF and its row and column parts (each 0-100).
///
/// Pairs, denominators and orders are those of [`crate::metrics::nodf()`]; a
/// pair (upper `u`, lower `l`) with `d_u > d_l` scores `100 k_ul / d_l`, where
/// `k_ul` counts the columns `j` with `0 < w_lj < w_uj`. In the sorted order
/// ties of degree are broken by decreasing total weight, which does not
/// change the value (tied pairs score 0). A binary network has WNODF 0.
///
/// Computed on compressed rows and columns for dense and sparse networks
/// alike (see [`crate::metrics::sparse`]). Cost: `O(L log(max(m, n)))` in
/// the sorted order (a dominance count per column), `O(sum of squared
/// degrees)` in the given order (the pairs sharing each column); memory
/// `O(m + n + L)` beyond the network, plus one `O(m + n)` counter per
/// parallel task. A densely stored network is first compressed (`O(m n)`).
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
/// ```
pub fn wnodf<T: Weight>(net: &Network<T>, order: Order) -> Result<Parts> {
    crate::metrics::sparse::wnodf_csr(&net.csr(), order)
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    /// METHODS.md §2: a binary matrix has WNODF 0.
    #[test]
    fn binary_is_zero() {
        let net = Network::from_array(array![[1, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
        assert_eq!(wnodf(&net, Order::Sorted).unwrap().total, 0.0);
    }
}
