//! WNODF on compressed rows and columns (dense and sparse networks alike).
//!
//! * Sorted order, `O(L log m)`: for each column, each of its rows counts
//!   the rows of larger degree with a larger weight in that column (a
//!   two-sided dominance count: tie groups by decreasing degree, a Fenwick
//!   tree over the column's weight ranks).
//! * Given order, `O(sum_j d_j^2)`: the pairs of rows sharing each column,
//!   earlier row as upper.
//!
//! Columns are handled likewise through the rows' lists. Counts are integers
//! divided once per member and added in member order, so the value does not
//! depend on the number of threads.

use crate::error::Result;
use crate::metrics::{degree_order, side_value, Order, Parts};
use crate::storage::lists::{list_degrees, per_list, transpose_lists, Fenwick, PAIR_LIMIT};
use crate::storage::{Csr, Weight};

/// WNODF from compressed rows.
pub(crate) fn wnodf_csr<T: Weight>(csr: &Csr<T>, order: Order) -> Result<Parts> {
    wnodf_csr_with(csr, order, PAIR_LIMIT)
}

/// WNODF from compressed rows, with lists up to `pair_limit` long handled
/// by direct pair loops (the tests force either path).
pub(crate) fn wnodf_csr_with<T: Weight>(
    csr: &Csr<T>,
    order: Order,
    pair_limit: usize,
) -> Result<Parts> {
    let (m, n) = (csr.nrows(), csr.ncols());
    let (cptr, cidx, cval) =
        transpose_lists(n, csr.indptr(), csr.indices(), Some(csr.values()), None);
    let cval = cval.unwrap_or_default();
    let rd = list_degrees(csr.indptr());
    let cd = list_degrees(&cptr);
    // In the sorted order the long lists need their members by decreasing
    // degree. When lists are long on average (dense networks), transposes
    // that visit the members in degree order deliver that for free;
    // otherwise the few long lists are sorted where they are met.
    let ordered =
        |lists: usize| order == Order::Sorted && csr.nnz() > pair_limit.saturating_mul(lists);
    let (rows, cols) = rayon::join(
        || {
            let k = if ordered(n) {
                let ord = degree_order(&rd);
                let (p, i, v) = transpose_lists(
                    n,
                    csr.indptr(),
                    csr.indices(),
                    Some(csr.values()),
                    Some(&ord),
                );
                weighted_counts(
                    &p,
                    &i,
                    &v.unwrap_or_default(),
                    m,
                    &rd,
                    order,
                    pair_limit,
                    true,
                )
            } else {
                weighted_counts(&cptr, &cidx, &cval, m, &rd, order, pair_limit, false)
            };
            side_value(&rd, &k)
        },
        || {
            let k = if ordered(m) {
                let ord = degree_order(&cd);
                let (p, i, v) = transpose_lists(m, &cptr, &cidx, Some(&cval), Some(&ord));
                weighted_counts(
                    &p,
                    &i,
                    &v.unwrap_or_default(),
                    n,
                    &cd,
                    order,
                    pair_limit,
                    true,
                )
            } else {
                weighted_counts(
                    csr.indptr(),
                    csr.indices(),
                    csr.values(),
                    n,
                    &cd,
                    order,
                    pair_limit,
                    false,
                )
            };
            side_value(&cd, &k)
        },
    );
    Parts::from_sums("WNODF", m, n, rows, cols)
}

/// WNODF counts `k_l = sum over uppers u of #{j : 0 < w_lj < w_uj}` for
/// every member `l` of the side with `degrees`, from the other side's lists
/// with weights. In the given order each list holds its members ascending;
/// in the sorted order, by decreasing degree when `by_degree`, else in any
/// order (long lists are then sorted here).
fn weighted_counts<T: Weight>(
    ptr: &[usize],
    idx: &[u32],
    vals: &[T],
    m: usize,
    degrees: &[usize],
    order: Order,
    pair_limit: usize,
    by_degree: bool,
) -> Vec<u64> {
    struct Scratch<T> {
        entries: Vec<(usize, usize, T)>, // (degree, member, weight)
        distinct: Vec<T>,
        ranks: Vec<usize>,
        fen: Fenwick,
        hits: Vec<u64>,
        deg: Vec<usize>,
        wt: Vec<T>,
    }
    let cmp = |a: &T, b: &T| a.partial_cmp(b).unwrap_or(std::cmp::Ordering::Equal);
    per_list(
        ptr.len() - 1,
        m,
        || Scratch {
            entries: Vec::new(),
            distinct: Vec::new(),
            ranks: Vec::new(),
            fen: Fenwick::with_len(0),
            hits: Vec::new(),
            deg: Vec::new(),
            wt: Vec::new(),
        },
        |j, acc, s| {
            let (a0, a1) = (ptr[j], ptr[j + 1]);
            let (members, weights) = (&idx[a0..a1], &vals[a0..a1]);
            let k = members.len();
            // Degrees and weights gathered once, counts kept locally.
            s.entries.clear();
            s.entries.extend(
                members
                    .iter()
                    .zip(weights)
                    .map(|(&l, &w)| (degrees[l as usize], l as usize, w)),
            );
            s.hits.clear();
            s.hits.resize(k, 0);
            let long = order == Order::Sorted && k > pair_limit;
            if long && !by_degree {
                s.entries.sort_by_key(|x| std::cmp::Reverse(x.0));
            }
            let e = &s.entries;
            if !long {
                // Pair loops over separate degree and weight arrays with
                // the conditions as 0/1 counts: no branch on the data, so
                // the compiler vectorises them.
                s.deg.clear();
                s.deg.extend(e.iter().map(|x| x.0));
                s.wt.clear();
                s.wt.extend(e.iter().map(|x| x.2));
                let (dg, wt) = (&s.deg[..], &s.wt[..]);
                for b in 0..k {
                    let (db, wb) = (dg[b], wt[b]);
                    let (dl, wl) = (&dg[..b], &wt[..b]);
                    let mut c = 0u64;
                    if order == Order::Sorted {
                        for ((&da, &wa), h) in dl.iter().zip(wl).zip(&mut s.hits[..b]) {
                            c += u64::from((da > db) & (wa > wb));
                            *h += u64::from((db > da) & (wb > wa));
                        }
                    } else {
                        for (&da, &wa) in dl.iter().zip(wl) {
                            c += u64::from((da > db) & (wa > wb));
                        }
                    }
                    s.hits[b] += c;
                }
            } else {
                // Sorted order, long list (members by decreasing degree):
                // tie groups in turn; each member counts the members already
                // inserted (larger degree) with a strictly larger weight,
                // from a Fenwick tree over the list's weight ranks.
                debug_assert!(e.windows(2).all(|p| p[0].0 >= p[1].0));
                s.distinct.clear();
                s.distinct.extend(e.iter().map(|x| x.2));
                s.distinct.sort_unstable_by(cmp);
                s.distinct.dedup_by(|a, b| a == b);
                s.ranks.clear();
                let d = &s.distinct;
                s.ranks
                    .extend(e.iter().map(|x| d.partition_point(|y| *y <= x.2)));
                s.fen.reset(d.len());
                let mut p = 0;
                while p < k {
                    let mut q = p + 1;
                    while q < k && e[q].0 == e[p].0 {
                        q += 1;
                    }
                    for t in p..q {
                        s.hits[t] = p as u64 - s.fen.prefix(s.ranks[t]);
                    }
                    for t in p..q {
                        s.fen.add(s.ranks[t], 1);
                    }
                    p = q;
                }
            }
            for (x, &h) in e.iter().zip(&s.hits) {
                acc[x.1] += h;
            }
        },
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrics::nodf::csr::overlaps_given;
    use ndarray::Array2;

    fn lcg(seed: u64) -> impl FnMut() -> u64 {
        let mut x = seed
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        move || {
            x = x
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            x >> 33
        }
    }

    /// The Fenwick paths equal the direct pair loops (both written from
    /// METHODS.md §1-2) on seeded random matrices with long columns, for the
    /// internal kernels that the public tests cannot force.
    #[test]
    fn fenwick_paths_equal_pair_loops() {
        for seed in 0..40u64 {
            let mut r = lcg(seed);
            let (m, n) = (20 + (r() % 60) as usize, 3 + (r() % 20) as usize);
            let fill = 20 + r() % 70;
            let w = Array2::from_shape_fn((m, n), |_| {
                if r() % 100 < fill {
                    1 + (r() % 4) as u32
                } else {
                    0
                }
            });
            let csr = Csr::from_dense(w.view());
            let csc = csr.transpose();
            let rd = list_degrees(csr.indptr());
            for order in [Order::Sorted, Order::Given] {
                let a = wnodf_csr_with(&csr, order, 0).unwrap();
                let b = wnodf_csr_with(&csr, order, usize::MAX).unwrap();
                assert_eq!(a, b, "seed {seed} {order}");
            }
            // Long lists met unsorted (sorted here) or delivered by degree.
            let (p, i, v) =
                transpose_lists(n, csr.indptr(), csr.indices(), Some(csr.values()), None);
            let v = v.unwrap();
            let ord = degree_order(&rd);
            let (po, io, vo) = transpose_lists(
                n,
                csr.indptr(),
                csr.indices(),
                Some(csr.values()),
                Some(&ord),
            );
            let vo = vo.unwrap();
            let s = Order::Sorted;
            let pairs = weighted_counts(&p, &i, &v, m, &rd, s, usize::MAX, false);
            assert_eq!(weighted_counts(&p, &i, &v, m, &rd, s, 0, false), pairs);
            assert_eq!(weighted_counts(&po, &io, &vo, m, &rd, s, 0, true), pairs);
            assert_eq!(
                weighted_counts(&po, &io, &vo, m, &rd, s, usize::MAX, true),
                pairs
            );
            let a = overlaps_given(csc.indptr(), csc.indices(), m, &rd, 0);
            let b = overlaps_given(csc.indptr(), csc.indices(), m, &rd, usize::MAX);
            assert_eq!(a, b, "seed {seed}");
        }
    }
}
