//! NODF on compressed rows and columns, without an `m x n` table: the
//! kernels for sparsely stored networks.
//!
//! * Sorted order, `O(m + n + L)`: the overlaps of a lower row with all rows
//!   of larger degree add up to `sum over j in N(l) of c_j`, where `c_j`
//!   counts the rows of larger degree that hold column `j`. Rows are visited
//!   by decreasing degree, one tie group at a time: the group reads its
//!   columns' counts, then adds its own cells to them.
//! * Given order, `O(L log n)`: for each column, its rows in input order;
//!   each row counts the earlier rows of larger degree in that column (a
//!   Fenwick tree over degrees, or a direct loop for short columns).
//!
//! Counts are integers; every lower member's count is divided once by its
//! degree and the quotients are added in member order, exactly as the bit
//! kernels do, so the values agree to the last bit for any number of threads.

use crate::error::Result;
use crate::metrics::{degree_order, side_value, Order, Parts};
use crate::storage::lists::{list_degrees, per_list, transpose_lists, Fenwick, PAIR_LIMIT};
use crate::storage::{Csr, Weight};

/// NODF from compressed rows. Cost: `O(m + n + L)` time in the sorted
/// order, `O(L log(max(m, n)))` in the given order; memory `O(m + n + L)`.
pub(crate) fn nodf_csr<T: Weight>(csr: &Csr<T>, order: Order) -> Result<Parts> {
    let (m, n) = (csr.nrows(), csr.ncols());
    let (cptr, cidx, _) = transpose_lists::<f64>(n, csr.indptr(), csr.indices(), None, None);
    let rd = list_degrees(csr.indptr());
    let cd = list_degrees(&cptr);
    let (rows, cols) = rayon::join(
        || {
            let ov = match order {
                Order::Sorted => overlaps_sorted(csr.indptr(), csr.indices(), n, &rd),
                Order::Given => overlaps_given(&cptr, &cidx, m, &rd, PAIR_LIMIT),
            };
            side_value(&rd, &ov)
        },
        || {
            let ov = match order {
                Order::Sorted => overlaps_sorted(&cptr, &cidx, m, &cd),
                Order::Given => overlaps_given(csr.indptr(), csr.indices(), n, &cd, PAIR_LIMIT),
            };
            side_value(&cd, &ov)
        },
    );
    Parts::from_sums("NODF", m, n, rows, cols)
}

/// Sorted order: for each member of the side listed by `indptr`/`indices`,
/// the sum of its overlaps with all members of larger degree.
pub(crate) fn overlaps_sorted(
    indptr: &[usize],
    indices: &[u32],
    partners: usize,
    degrees: &[usize],
) -> Vec<u64> {
    let m = degrees.len();
    let ord = degree_order(degrees);
    // The lists copied in visiting order, so both passes below read memory
    // sequentially (only the counts are accessed at random).
    let mut seq = Vec::with_capacity(indices.len());
    for &r in &ord {
        seq.extend_from_slice(&indices[indptr[r]..indptr[r + 1]]);
    }
    let mut counts = vec![0u32; partners];
    let mut ov = vec![0u64; m];
    let (mut p, mut at) = (0, 0);
    while p < m {
        let mut q = p + 1;
        while q < m && degrees[ord[q]] == degrees[ord[p]] {
            q += 1;
        }
        let d = degrees[ord[p]];
        let group = &seq[at..at + (q - p) * d];
        for (&r, list) in ord[p..q].iter().zip(group.chunks_exact(d.max(1))) {
            ov[r] = list.iter().map(|&j| counts[j as usize] as u64).sum();
        }
        for &j in group {
            counts[j as usize] += 1;
        }
        at += (q - p) * d;
        p = q;
    }
    ov
}

/// Given order: for each member `l` of the side with `degrees`, the sum of
/// its overlaps with the earlier members of larger degree, from the other
/// side's lists (each list: the members holding one partner, ascending).
pub(crate) fn overlaps_given(
    other_indptr: &[usize],
    other_indices: &[u32],
    m: usize,
    degrees: &[usize],
    pair_limit: usize,
) -> Vec<u64> {
    let max_deg = degrees.iter().copied().max().unwrap_or(0);
    per_list(
        other_indptr.len() - 1,
        m,
        || Fenwick::with_len(max_deg + 1),
        |j, acc, fen| {
            let list = &other_indices[other_indptr[j]..other_indptr[j + 1]];
            if list.len() <= pair_limit {
                for (b, &lb) in list.iter().enumerate() {
                    let db = degrees[lb as usize];
                    let c = list[..b]
                        .iter()
                        .filter(|&&la| degrees[la as usize] > db)
                        .count();
                    acc[lb as usize] += c as u64;
                }
            } else {
                // Position d + 1 counts the earlier members of degree d.
                for (b, &lb) in list.iter().enumerate() {
                    let db = degrees[lb as usize];
                    acc[lb as usize] += b as u64 - fen.prefix(db + 1);
                    fen.add(db + 1, 1);
                }
                for &lb in list {
                    fen.add(degrees[lb as usize] + 1, -1);
                }
            }
        },
    )
}
