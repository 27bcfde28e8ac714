//! WNODF: weighted NODF (Almeida-Neto & Ulrich 2011, Environ. Model. Softw.
//! 26:173-178).

use rayon::prelude::*;

use crate::error::Result;
use crate::metrics::{upper_sets, Order, Parts};
use crate::network::{Csr, Network, Weight};

/// WNODF and its row and column parts (each 0-100).
///
/// Pairs, denominators and orders are those of [`crate::metrics::nodf()`]; a
/// pair (upper `u`, lower `l`) with `d_u > d_l` scores `100 k_ul / d_l`, where
/// `k_ul` counts the columns `j` with `0 < w_lj < w_uj`. In the sorted order
/// ties of degree are broken by decreasing total weight, which does not
/// change the value (tied pairs score 0). A binary network has WNODF 0.
///
/// Cost: `O(sum over counted pairs of the lower member's degree)`, at most
/// `O(m^2 n + n^2 m)`; memory `O(m + n + L)` beyond the network, plus one
/// dense row of weights per thread.
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
    let csr = net.csr();
    let rows = side_sum(&csr, net.row_degrees(), order);
    let cols = side_sum(&csr.transpose(), net.col_degrees(), order);
    Parts::from_sums("WNODF", net.nrows(), net.ncols(), rows, cols)
}

/// Sum of WNODF pair values over the pairs of rows of `csr`.
fn side_sum<T: Weight>(csr: &Csr<T>, degrees: &[usize], order: Order) -> f64 {
    let sets = upper_sets(degrees, order);
    let per_lower: Vec<f64> = sets
        .par_iter()
        .map_init(
            || vec![T::zero(); csr.ncols()],
            |upper_row, (l, uppers)| {
                let (lcols, lvals) = csr.row(*l);
                let mut k = 0usize;
                for &u in uppers {
                    let (ucols, uvals) = csr.row(u);
                    for (&j, &w) in ucols.iter().zip(uvals) {
                        upper_row[j as usize] = w;
                    }
                    k += lcols
                        .iter()
                        .zip(lvals)
                        .filter(|(&j, &w)| w < upper_row[j as usize])
                        .count();
                    for &j in ucols {
                        upper_row[j as usize] = T::zero();
                    }
                }
                100.0 * k as f64 / degrees[*l] as f64
            },
        )
        .collect();
    per_lower.iter().sum()
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
