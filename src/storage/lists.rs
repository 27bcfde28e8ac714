//! Compressed lists (rows or columns of a [`crate::Csr`], without the
//! struct): transposes by counting sort, per-list parallel loops with one
//! integer accumulator per task, a Fenwick tree of counts. The NODF and WNODF
//! list kernels build on these.

use rayon::prelude::*;

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

/// Length of every list.
pub(crate) fn list_degrees(indptr: &[usize]) -> Vec<usize> {
    indptr.windows(2).map(|w| w[1] - w[0]).collect()
}

/// Runs `body(list, acc, scratch)` over all lists, in parallel chunks with
/// one `m`-long integer accumulator each, and adds the accumulators.
pub(crate) fn per_list<S>(
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
    add_up(parts, m)
}

/// A Fenwick (binary indexed) tree of counts over positions `1..=len`.
pub(crate) struct Fenwick(Vec<u32>);

impl Fenwick {
    pub(crate) fn with_len(len: usize) -> Self {
        Fenwick(vec![0; len + 1])
    }
    pub(crate) fn reset(&mut self, len: usize) {
        self.0.clear();
        self.0.resize(len + 1, 0);
    }
    pub(crate) fn add(&mut self, mut i: usize, x: i32) {
        while i < self.0.len() {
            self.0[i] = self.0[i].wrapping_add_signed(x);
            i += i & i.wrapping_neg();
        }
    }
    /// Sum over positions `1..=i`.
    pub(crate) fn prefix(&self, mut i: usize) -> u64 {
        let mut s = 0u64;
        while i > 0 {
            s += self.0[i] as u64;
            i &= i - 1;
        }
        s
    }
}

/// Element-wise sum of per-task integer counts (exact, so the order of the
/// tasks does not matter); `m` zeros when there is no task.
pub(crate) fn add_up(parts: Vec<Vec<u64>>, m: usize) -> Vec<u64> {
    let mut parts = parts.into_iter();
    let mut total = parts.next().unwrap_or_else(|| vec![0; m]);
    for part in parts {
        for (t, x) in total.iter_mut().zip(part) {
            *t += x;
        }
    }
    total
}
