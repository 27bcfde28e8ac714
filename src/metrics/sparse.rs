//! NODF and WNODF on compressed rows and columns, without an `m x n` table.
//!
//! These kernels serve sparsely stored networks (and WNODF of every
//! network). They never form a pair of species that shares no partner, and
//! most of them never form a pair at all:
//!
//! * **NODF, sorted order**, `O(m + n + L)`: the overlaps of a lower row
//!   with all rows of larger degree add up to `sum over j in N(l) of c_j`,
//!   where `c_j` counts the rows of larger degree that hold column `j`. Rows
//!   are visited by decreasing degree, one tie group at a time: the group
//!   reads its columns' counts, then adds its own cells to them.
//! * **NODF, given order**, `O(L log n)`: for each column, its rows in input
//!   order; each row counts the earlier rows of larger degree in that column
//!   (a Fenwick tree over degrees, or a direct loop for short columns).
//! * **WNODF, sorted order**, `O(L log m)`: for each column, each of its rows
//!   counts the rows of larger degree with a larger weight in that column (a
//!   two-sided dominance count: tie groups by decreasing degree, a Fenwick
//!   tree over the column's weight ranks).
//! * **WNODF, given order**, `O(sum_j d_j^2)`: the pairs of rows sharing each
//!   column, earlier row as upper.
//!
//! Columns are handled likewise through the rows' lists. Counts are
//! integers; every lower member's count is divided once by its degree and the
//! quotients are added in member order, exactly as the dense kernels do, so
//! the values agree to the last bit for any number of threads. Memory:
//! `O(m + n + L)` for the transposed lists plus one `O(m)` (or `O(n)`)
//! counter per parallel task.

use rayon::prelude::*;

use crate::error::Result;
use crate::metrics::{degree_order, Order, Parts};
use crate::network::{Csr, Weight};

/// NODF (see [`crate::metrics::nodf()`]) from compressed rows, never forming
/// a dense table. Cost: `O(m + n + L)` time in the sorted order,
/// `O(L log(max(m, n)))` in the given order; memory `O(m + n + L)`.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{metrics::{sparse::nodf_csr, Order}, Csr};
/// let w = array![[1, 1, 1], [1, 1, 0], [1, 0, 0]];
/// let csr = Csr::from_dense(w.view());
/// assert_eq!(nodf_csr(&csr, Order::Sorted).unwrap().total, 100.0);
/// ```
pub fn nodf_csr<T: Weight>(csr: &Csr<T>, order: Order) -> Result<Parts> {
    let (m, n) = (csr.nrows(), csr.ncols());
    let (cptr, cidx, _) = transpose_lists::<f64>(n, csr.indptr(), csr.indices(), None, None);
    let csc = Lists {
        indptr: &cptr,
        indices: &cidx,
    };
    let rd = degrees(csr.indptr());
    let cd = degrees(&cptr);
    let (rows, cols) = rayon::join(
        || {
            let ov = match order {
                Order::Sorted => overlaps_sorted(csr.indptr(), csr.indices(), n, &rd),
                Order::Given => overlaps_given(csc.indptr(), csc.indices(), m, &rd, PAIR_LIMIT),
            };
            side_value(&rd, &ov)
        },
        || {
            let ov = match order {
                Order::Sorted => overlaps_sorted(csc.indptr(), csc.indices(), m, &cd),
                Order::Given => overlaps_given(csr.indptr(), csr.indices(), n, &cd, PAIR_LIMIT),
            };
            side_value(&cd, &ov)
        },
    );
    Parts::from_sums("NODF", m, n, rows, cols)
}

/// WNODF (see [`crate::metrics::wnodf()`]) from compressed rows. Cost:
/// `O(L log(max(m, n)))` in the sorted order, `O(sum of squared degrees)` in
/// the given order; memory `O(m + n + L)`.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{metrics::{sparse::wnodf_csr, Order}, Csr};
/// let w = array![[5, 4, 3], [2, 1, 0], [1, 0, 0]];
/// let csr = Csr::from_dense(w.view());
/// assert_eq!(wnodf_csr(&csr, Order::Sorted).unwrap().total, 100.0);
/// ```
pub fn wnodf_csr<T: Weight>(csr: &Csr<T>, order: Order) -> Result<Parts> {
    wnodf_csr_with(csr, order, PAIR_LIMIT)
}

pub(crate) fn wnodf_csr_with<T: Weight>(
    csr: &Csr<T>,
    order: Order,
    pair_limit: usize,
) -> Result<Parts> {
    let (m, n) = (csr.nrows(), csr.ncols());
    let (cptr, cidx, cval) =
        transpose_lists(n, csr.indptr(), csr.indices(), Some(csr.values()), None);
    let cval = cval.unwrap_or_default();
    let rd = degrees(csr.indptr());
    let cd = degrees(&cptr);
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

/// Borrowed index lists (compressed rows or columns, no weights).
struct Lists<'a> {
    indptr: &'a [usize],
    indices: &'a [u32],
}

impl Lists<'_> {
    fn indptr(&self) -> &[usize] {
        self.indptr
    }
    fn indices(&self) -> &[u32] {
        self.indices
    }
}

/// The transpose of compressed lists (rows `0..indptr.len() - 1` over
/// `ncols` columns), with their values if given, by a counting sort:
/// `O(m + n + L)`. Rows are visited in `visit` order (default ascending),
/// and within each output list the members come in that order.
pub(crate) fn transpose_lists<V: Copy + num_traits::Zero>(
    ncols: usize,
    indptr: &[usize],
    indices: &[u32],
    values: Option<&[V]>,
    visit: Option<&[usize]>,
) -> (Vec<usize>, Vec<u32>, Option<Vec<V>>) {
    let nrows = indptr.len() - 1;
    let at = |k: usize| visit.map_or(k, |v| v[k]);
    let mut cptr = vec![0usize; ncols + 1];
    for &j in indices {
        cptr[j as usize + 1] += 1;
    }
    for j in 0..ncols {
        cptr[j + 1] += cptr[j];
    }
    let mut next = cptr[..ncols].to_vec();
    let mut cidx = vec![0u32; indices.len()];
    let mut cval = values.map(|_| vec![V::zero(); indices.len()]);
    for k in 0..nrows {
        let i = at(k);
        let (a, b) = (indptr[i], indptr[i + 1]);
        match (cval.as_mut(), values) {
            (Some(cv), Some(v)) => {
                for (&j, &x) in indices[a..b].iter().zip(&v[a..b]) {
                    let slot = &mut next[j as usize];
                    cidx[*slot] = i as u32;
                    cv[*slot] = x;
                    *slot += 1;
                }
            }
            _ => {
                for &j in &indices[a..b] {
                    let slot = &mut next[j as usize];
                    cidx[*slot] = i as u32;
                    *slot += 1;
                }
            }
        }
    }
    (cptr, cidx, cval)
}

/// Lists no longer than this are handled by a direct loop over their pairs;
/// longer ones by a Fenwick tree.
pub(crate) const PAIR_LIMIT: usize = 48;

fn degrees(indptr: &[usize]) -> Vec<usize> {
    indptr.windows(2).map(|w| w[1] - w[0]).collect()
}

/// `sum over members l with d_l > 0, in order, of 100 * counts[l] / d_l`.
fn side_value(degrees: &[usize], counts: &[u64]) -> f64 {
    degrees
        .iter()
        .zip(counts)
        .filter(|(&d, _)| d > 0)
        .map(|(&d, &c)| 100.0 * c as f64 / d as f64)
        .sum()
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

/// Runs `body(list, acc, scratch)` over all lists, in parallel chunks with
/// one `m`-long integer accumulator each, and adds the accumulators.
fn per_list<S>(
    nlists: usize,
    m: usize,
    scratch: impl Fn() -> S + Sync,
    body: impl Fn(usize, &mut [u64], &mut S) + Sync,
) -> Vec<u64> {
    let tasks = if nlists < 512 {
        1
    } else {
        (rayon::current_num_threads() * 4).min(nlists)
    };
    let per = nlists.div_ceil(tasks).max(1);
    let parts: Vec<Vec<u64>> = (0..tasks)
        .into_par_iter()
        .map(|t| {
            let mut acc = vec![0u64; m];
            let mut s = scratch();
            for j in (t * per)..((t + 1) * per).min(nlists) {
                body(j, &mut acc, &mut s);
            }
            acc
        })
        .collect();
    crate::metrics::add_up(parts, m)
}

/// A Fenwick (binary indexed) tree of counts over positions `1..=len`.
struct Fenwick(Vec<u32>);

impl Fenwick {
    fn with_len(len: usize) -> Self {
        Fenwick(vec![0; len + 1])
    }
    fn reset(&mut self, len: usize) {
        self.0.clear();
        self.0.resize(len + 1, 0);
    }
    fn add(&mut self, mut i: usize, x: i32) {
        while i < self.0.len() {
            self.0[i] = self.0[i].wrapping_add_signed(x);
            i += i & i.wrapping_neg();
        }
    }
    /// Sum over positions `1..=i`.
    fn prefix(&self, mut i: usize) -> u64 {
        let mut s = 0u64;
        while i > 0 {
            s += self.0[i] as u64;
            i &= i - 1;
        }
        s
    }
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
                for b in 0..k {
                    let (db, _, wb) = e[b];
                    for a in 0..b {
                        let (da, _, wa) = e[a];
                        if da > db && wa > wb {
                            s.hits[b] += 1;
                        } else if order == Order::Sorted && db > da && wb > wa {
                            s.hits[a] += 1;
                        }
                    }
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
            let rd = degrees(csr.indptr());
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
