//! Discrepancy (Brualdi & Sanderson 1999, Oecologia 119:256-264;
//! METHODS.md §5).
//!
//! Columns go by decreasing degree, ties in input order (convention). A
//! perfectly nested matrix has every row `i` filling the leftmost `d_i` of
//! those columns; the discrepancy counts the ones that lie outside those
//! blocks, i.e. how many ones would have to move within their rows to make
//! the matrix nested in that column order.

use crate::error::Result;
use crate::metrics::degree_order;
use crate::metrics::registry::IndexOptions;
use crate::storage::{BitMatrix, Layout, NetView};

/// Discrepancy of the binary view of any [`NetView`].
///
/// With columns at positions `pos(j)` in decreasing order of degree (ties in
/// input order), discrepancy `= sum_i #{ j : b_ij = 1, pos(j) >= d_i }`.
/// It is 0 exactly when every row fills its leftmost block, i.e. the matrix
/// is perfectly nested (Ferrers). The value can depend on how ties among
/// column degrees are broken; the convention here is input order. It is
/// not symmetric under transposition: `[[1,0,1],[0,1,0]]` scores 2 (with
/// the columns tied, row 1's one in column 3 and row 2's in column 2 lie
/// outside their blocks) while its transpose scores 1; putting column 3
/// before column 2 would also give 1.
///
/// Works on the compressed rows, so sparse networks of any size are fine.
/// Cost: `O(L + n log n)` time, `O(n)` memory beyond the compressed rows
/// (which a densely stored network builds in `O(m n)`).
///
/// Reference: Brualdi & Sanderson (1999), Oecologia 119:256-264.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::metrics::discrepancy;
/// use nidus::Network;
/// let nested = Network::from_array(array![[1, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
/// assert_eq!(discrepancy(&nested).unwrap(), 0);
/// // Row 3's one sits in the third column instead of the first.
/// let net = Network::from_array(array![[1, 1, 1], [1, 1, 0], [0, 0, 1]]).unwrap();
/// assert_eq!(discrepancy(&net).unwrap(), 1);
/// ```
pub fn discrepancy<V: NetView + ?Sized>(view: &V) -> Result<usize> {
    if view.layout() == Layout::Bits {
        return Ok(discrepancy_of_bits(&*view.bits()?));
    }
    let pos = positions(&view.col_degrees());
    let csr = view.compressed_rows()?;
    let mut count = 0;
    for (i, &d) in view.row_degrees().iter().enumerate() {
        count += csr
            .row(i)
            .0
            .iter()
            .filter(|&&j| pos[j as usize] >= d)
            .count();
    }
    Ok(count)
}

/// [`discrepancy`] of a bit-packed binary matrix (null-model draws).
///
/// Cost: `O(m n / 64 + L + n log n)`.
pub(crate) fn discrepancy_of_bits(b: &BitMatrix) -> usize {
    let pos = positions(&b.col_degrees());
    (0..b.nrows())
        .map(|i| {
            let d = b.row_degree(i);
            b.row_ones(i).filter(|&j| pos[j] >= d).count()
        })
        .sum()
}

/// Registry evaluator of `discrepancy`.
pub(crate) fn count(v: &dyn NetView, _: &IndexOptions) -> Result<f64> {
    Ok(discrepancy(v)? as f64)
}

/// Position of every column in decreasing-degree order (stable).
fn positions(col_degrees: &[usize]) -> Vec<usize> {
    let order = degree_order(col_degrees);
    let mut pos = vec![0usize; order.len()];
    for (k, &j) in order.iter().enumerate() {
        pos[j] = k;
    }
    pos
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Network;
    use ndarray::Array2;
    use rand::{Rng, SeedableRng};
    use rand_xoshiro::Xoshiro256PlusPlus;

    /// Brute count from METHODS.md §5: sort the columns by decreasing degree
    /// (input order among ties), then count, row by row, the ones that are
    /// not among the row's first d_i sorted columns.
    fn brute(a: &[Vec<bool>]) -> usize {
        let n = a[0].len();
        let cdeg: Vec<usize> = (0..n).map(|j| a.iter().filter(|r| r[j]).count()).collect();
        let mut cols: Vec<usize> = (0..n).collect();
        // insertion sort, stable by construction
        for k in 1..n {
            let mut q = k;
            while q > 0 && cdeg[cols[q - 1]] < cdeg[cols[q]] {
                cols.swap(q - 1, q);
                q -= 1;
            }
        }
        let mut out = 0;
        for row in a {
            let d = row.iter().filter(|&&v| v).count();
            for (k, &j) in cols.iter().enumerate() {
                if k >= d && row[j] {
                    out += 1;
                }
            }
        }
        out
    }

    /// Equal to the brute count on 400 seeded random matrices, for both the
    /// network and the bit-packed entry points.
    #[test]
    fn matches_brute_count() {
        for seed in 0..400u64 {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
            let (m, n) = (rng.random_range(1..=20), rng.random_range(1..=90));
            let fill = rng.random_range(0.05..0.95);
            let mut a: Vec<Vec<bool>> = (0..m)
                .map(|_| (0..n).map(|_| rng.random_bool(fill)).collect())
                .collect();
            a[0][0] = true; // a network needs one link
            let b = BitMatrix::from_fn(m, n, |i, j| a[i][j]);
            let want = brute(&a);
            assert_eq!(discrepancy_of_bits(&b), want, "seed {seed}");
            let net = Network::from_array(Array2::from_shape_fn((m, n), |(i, j)| {
                u8::from(a[i][j]) * 3
            }))
            .unwrap();
            assert_eq!(discrepancy(&net).unwrap(), want, "seed {seed}");
        }
    }

    /// Nested (Ferrers) matrices have discrepancy 0 (Brualdi & Sanderson
    /// 1999), including when rows and columns are shuffled and when degrees
    /// tie; at least one misplaced one gives a positive value.
    #[test]
    fn nested_is_zero() {
        for seed in 0..100u64 {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(500 + seed);
            let (m, n) = (rng.random_range(1..=15), rng.random_range(1..=15));
            // Row degrees non-increasing: a Ferrers shape.
            let mut d: Vec<usize> = (0..m).map(|_| rng.random_range(0..=n)).collect();
            d.sort_unstable_by(|x, y| y.cmp(x));
            d[0] = d[0].max(1);
            let mut rows: Vec<usize> = (0..m).collect();
            let mut cols: Vec<usize> = (0..n).collect();
            use rand::seq::SliceRandom;
            rows.shuffle(&mut rng);
            cols.shuffle(&mut rng);
            let b = BitMatrix::from_fn(m, n, |i, j| cols[j] < d[rows[i]]);
            assert_eq!(discrepancy_of_bits(&b), 0, "seed {seed}");
        }
        // [[1,1,0],[0,0,1]]: columns sorted stay 0,1,2 (degrees 1,1,1); row 2's
        // one is at position 2 >= 1.
        let b = BitMatrix::from_fn(2, 3, |i, j| if i == 0 { j < 2 } else { j == 2 });
        assert_eq!(discrepancy_of_bits(&b), 1);
    }

    /// Worked by hand from the definition (METHODS.md §5): tie order and
    /// transposition change the count.
    #[test]
    fn ties_and_transposition_by_hand() {
        let b = BitMatrix::from_fn(2, 3, |i, j| [[1, 0, 1], [0, 1, 0]][i][j] == 1);
        assert_eq!(discrepancy_of_bits(&b), 2);
        assert_eq!(discrepancy_of_bits(&b.transpose()), 1);
        // Columns reordered (0, 2, 1): the tie now falls the other way.
        assert_eq!(discrepancy_of_bits(&b.permuted(&[0, 1], &[0, 2, 1])), 1);
    }

    /// A sparse network (stored compressed) gives the value of its dense twin.
    #[test]
    fn sparse_storage() {
        let m = 3000usize;
        let rows: Vec<String> = (0..m).map(|i| format!("r{i}")).collect();
        let cols: Vec<String> = (0..m).map(|i| format!("c{i}")).collect();
        // Row i holds columns 0 and i: nested except the diagonal ones
        // beyond column 1 (column 0 has degree m and comes first).
        let mut cells = Vec::new();
        for i in 0..m as u32 {
            cells.push((i, 0, 1.0));
            cells.push((i, i, 1.0));
        }
        let net = Network::from_triplets(rows, cols, cells).unwrap();
        assert!(net.is_sparse());
        // Row 0 has degree 1 (cell (0,0) once); rows 1.. have degree 2 and
        // hold column i at position i (i >= 2 misplaced; column 1 sits at
        // position 1 < 2).
        assert_eq!(discrepancy(&net).unwrap(), m - 2);
    }
}
