//! WNODF on global weight ranks (the path taken for dense storage).
//!
//! Every weight is replaced once by its rank among the network's distinct
//! weights (1 = smallest). Ranks keep the order of the weights, so every
//! comparison `w_a > w_b`, and hence every count, is the same as on the
//! weights; the value is identical to the list kernels of `csr.rs`. The
//! compressed rows are transposed once, carrying the ranks.
//!
//! * Sorted order: the members of a side are visited by decreasing degree,
//!   one tie group at a time. Each list (a column, for the row side) keeps,
//!   for every rank `r`, how many of its members already visited (larger
//!   degree) have a rank above `r`: a band of at most 64 counters per list
//!   when there are few distinct weights (an insertion is one or two vector
//!   additions), else a Fenwick tree per list. A member's count is the sum,
//!   over its lists, of that number at its own rank. Cost `O(L W)` or
//!   `O(L log R)`, memory `O(n W)` for `R` distinct weights, `W` the band.
//!   Work is split between tasks by ranges of lists.
//! * Given order: the pairs of each list, earlier member as upper, over
//!   separate arrays of degrees and ranks in 16-bit lanes (32-bit when a
//!   degree or rank does not fit), compiled for AVX-512 and AVX2 when the
//!   CPU has them (checked at run time) and portable otherwise.
//!
//! Counts are integers, added per member in member order by
//! [`side_value`], so the value does not depend on the number of threads.

use rayon::prelude::*;

use crate::error::Result;
use crate::metrics::{degree_order, side_value, Order, Parts};
use crate::storage::lists::{add_up, list_degrees, per_list, transpose_lists};
use crate::storage::Csr;

/// Largest band of per-rank counters per list (ranks `1..BAND_MAX`).
const BAND_MAX: usize = 64;

/// WNODF from compressed rows (and the same links by columns, when the
/// view keeps them) by global ranks; `None` when the sorted order would
/// need more counters per list than the network's size allows (many
/// distinct weights on a wide side, or very many short lists), left to the
/// list kernels.
pub(crate) fn wnodf_ranked(
    rows: &Csr<f64>,
    cols: Option<&Csr<f64>>,
    order: Order,
) -> Option<Result<Parts>> {
    let (m, n) = (rows.nrows(), rows.ncols());
    let ranker = Ranker::new(rows.values());
    let distinct = ranker.distinct;
    if order == Order::Sorted {
        // A band (16, 32 or 64) or a Fenwick tree (`distinct + 1`) of
        // counters for every list of either side: refuse more than a few
        // counters per link (a dense table of very many short lists, or
        // many distinct weights on a wide side).
        let width = match distinct + 1 {
            w if w <= 16 => 16,
            w if w <= 32 => 32,
            w if w <= BAND_MAX => BAND_MAX,
            w => w,
        };
        let budget = 4 * (rows.nnz() + m + n) + 4096;
        if (m.max(n)).saturating_mul(width) > budget {
            return None;
        }
    }
    // The columns as kept by the view (ranked by the same table), else one
    // transpose of the rows carrying their ranks.
    let (ranks, transposed) = match cols {
        Some(c) => rayon::join(
            || ranker.ranks(rows.values()),
            || {
                let r = ranker.ranks(c.values());
                (Vec::new(), Vec::new(), r)
            },
        ),
        None => {
            let ranks = ranker.ranks(rows.values());
            let (p, i, r) = transpose_lists(n, rows.indptr(), rows.indices(), Some(&ranks), None);
            (ranks, (p, i, r.unwrap_or_default()))
        }
    };
    let (cptr, cidx, cranks) = match cols {
        Some(c) => (c.indptr(), c.indices(), &transposed.2[..]),
        None => (&transposed.0[..], &transposed.1[..], &transposed.2[..]),
    };
    let rd = list_degrees(rows.indptr());
    let cd = list_degrees(cptr);
    let (rk, ck) = rayon::join(
        || match order {
            Order::Sorted => sorted_counts(rows.indptr(), rows.indices(), &ranks, n, &rd, distinct),
            Order::Given => given_counts(cptr, cidx, cranks, &rd, distinct),
        },
        || match order {
            Order::Sorted => sorted_counts(cptr, cidx, cranks, m, &cd, distinct),
            Order::Given => given_counts(rows.indptr(), rows.indices(), &ranks, &cd, distinct),
        },
    );
    Some(Parts::from_sums(
        "WNODF",
        m,
        n,
        side_value(&rd, &rk),
        side_value(&cd, &ck),
    ))
}

/// Ranks among a set of distinct weights: whole numbers 1..2^16 by a table,
/// anything else by binary search in the sorted distinct values
/// (non-negative `f64` order as their bit patterns, `-0.0` read as `0.0`).
struct Ranker {
    table: Option<Vec<u32>>,
    keys: Vec<u64>,
    distinct: usize,
}

impl Ranker {
    fn key(x: f64) -> u64 {
        (x + 0.0).to_bits()
    }

    fn new(vals: &[f64]) -> Ranker {
        let (whole, top) = whole_top(vals);
        if whole {
            let mut table = vec![0u32; top as usize + 1];
            for &x in vals {
                table[x as usize] = 1;
            }
            let mut r = 0u32;
            for t in &mut table {
                if *t != 0 {
                    r += 1;
                    *t = r;
                }
            }
            Ranker {
                table: Some(table),
                keys: Vec::new(),
                distinct: r as usize,
            }
        } else {
            let mut keys: Vec<u64> = vals.iter().map(|&x| Self::key(x)).collect();
            keys.sort_unstable();
            keys.dedup();
            let distinct = keys.len();
            Ranker {
                table: None,
                keys,
                distinct,
            }
        }
    }

    /// The ranks of `vals`, each one of the weights the ranker was built on.
    fn ranks(&self, vals: &[f64]) -> Vec<u32> {
        match &self.table {
            Some(t) => {
                let mut out = vec![0u32; vals.len()];
                look_up(t, vals, &mut out);
                out
            }
            None => vals
                .par_iter()
                .map(|&x| self.keys.partition_point(|&k| k < Self::key(x)) as u32 + 1)
                .collect(),
        }
    }
}

/// Dispatch of a kernel body to its AVX-512 or AVX2 build when the CPU has
/// them (checked at run time), else the portable build.
macro_rules! dispatch {
    ($name:ident, $body:ident, ($($a:ident: $t:ty),*) -> $r:ty) => {
        fn $name($($a: $t),*) -> $r {
            #[cfg(target_arch = "x86_64")]
            {
                #[target_feature(enable = "avx512f,avx512bw")]
                fn avx512($($a: $t),*) -> $r {
                    $body($($a),*)
                }
                #[target_feature(enable = "avx2")]
                fn avx2($($a: $t),*) -> $r {
                    $body($($a),*)
                }
                if std::arch::is_x86_feature_detected!("avx512bw") {
                    // SAFETY: the CPU supports avx512f and avx512bw (checked).
                    return unsafe { avx512($($a),*) };
                }
                if std::arch::is_x86_feature_detected!("avx2") {
                    // SAFETY: the CPU supports avx2 (checked).
                    return unsafe { avx2($($a),*) };
                }
            }
            $body($($a),*)
        }
    };
}

dispatch!(whole_top, whole_top_body, (vals: &[f64]) -> (bool, u32));
dispatch!(look_up, look_up_body, (table: &[u32], vals: &[f64], out: &mut [u32]) -> ());

/// Whether every weight is a whole number in `1..2^16`, and the largest
/// (as `u32`, saturating): one pass in blocks, without a branch per weight.
#[inline(always)]
fn whole_top_body(vals: &[f64]) -> (bool, u32) {
    let (mut whole, mut top) = (true, 0u32);
    for c in vals.chunks(256) {
        for &x in c {
            let u = x as u32; // saturating; NaN cannot occur
            whole &= (f64::from(u) == x) & (u >= 1) & (u <= u32::from(u16::MAX));
            top = top.max(u);
        }
        if !whole {
            break;
        }
    }
    (whole, top)
}

/// `out[k] = table[vals[k]]` for whole-number weights.
#[inline(always)]
fn look_up_body(table: &[u32], vals: &[f64], out: &mut [u32]) {
    for (o, &x) in out.iter_mut().zip(vals) {
        *o = table[x as usize];
    }
}

/// Sorted-order counts `k_l = #{(u, j) : d_u > d_l, 0 < w_lj < w_uj}` for
/// every member `l` (rows of `ptr`/`idx`/`rank`, lists `0..nlists`).
fn sorted_counts(
    ptr: &[usize],
    idx: &[u32],
    rank: &[u32],
    nlists: usize,
    degrees: &[usize],
    distinct: usize,
) -> Vec<u64> {
    let m = degrees.len();
    let ord = degree_order(degrees);
    // Tie groups of the degree order.
    let groups = crate::metrics::tie_groups(degrees, &ord);
    // Ranges of lists holding about equal numbers of links.
    let links = idx.len();
    let tasks = if links < (1 << 16) || nlists < 64 {
        1
    } else {
        (rayon::current_num_threads() * 2).min(nlists / 32).max(1)
    };
    let mut per_listc = vec![0usize; nlists];
    for &j in idx {
        per_listc[j as usize] += 1;
    }
    let mut cuts = vec![0u32];
    let mut run = 0usize;
    for (j, &c) in per_listc.iter().enumerate() {
        run += c;
        if run * tasks >= links * cuts.len() && cuts.len() < tasks && j + 1 < nlists {
            cuts.push(j as u32 + 1);
        }
    }
    cuts.push(nlists as u32);
    // 16-bit counters when no list is longer than they count.
    let narrow = per_listc.iter().all(|&c| c <= u16::MAX as usize);
    let job = Job {
        ptr,
        idx,
        rank,
        ord: &ord,
        groups: &groups,
        whole: cuts.len() == 2,
    };
    let parts: Vec<Vec<u64>> = cuts
        .windows(2)
        .collect::<Vec<_>>()
        .into_par_iter()
        .map(|c| {
            let (lo, hi) = (c[0], c[1]);
            match distinct + 1 {
                w if w <= 16 && narrow => job.bands::<u16, 16>(lo, hi),
                w if w <= 32 && narrow => job.bands::<u16, 32>(lo, hi),
                w if w <= BAND_MAX && narrow => job.bands::<u16, BAND_MAX>(lo, hi),
                w if w <= 16 => job.bands::<u32, 16>(lo, hi),
                w if w <= 32 => job.bands::<u32, 32>(lo, hi),
                w if w <= BAND_MAX => job.bands::<u32, BAND_MAX>(lo, hi),
                w => job.fenwick(lo, hi, w),
            }
        })
        .collect();
    add_up(parts, m)
}

/// One task of [`sorted_counts`]: the lists `lo..hi`.
struct Job<'a> {
    ptr: &'a [usize],
    idx: &'a [u32],
    rank: &'a [u32],
    ord: &'a [usize],
    groups: &'a [std::ops::Range<usize>],
    /// One task holds every list (no search for the range).
    whole: bool,
}

impl Job<'_> {
    /// The links of member `i` in lists `lo..hi`.
    fn span(&self, i: usize, lo: u32, hi: u32) -> std::ops::Range<usize> {
        let (a, b) = (self.ptr[i], self.ptr[i + 1]);
        if self.whole {
            return a..b;
        }
        let s = &self.idx[a..b];
        a + s.partition_point(|&j| j < lo)..a + s.partition_point(|&j| j < hi)
    }

    /// Per-rank counters (`C` holds the longest list's length): `band[j][t]` = members of list `j` visited so far
    /// with a rank above `t`.
    fn bands<C: Lane, const W: usize>(&self, lo: u32, hi: u32) -> Vec<u64> {
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("avx512bw") {
                // SAFETY: the CPU supports avx512f and avx512bw (checked).
                return unsafe { self.bands_avx512::<C, W>(lo, hi) };
            }
            if std::arch::is_x86_feature_detected!("avx2") {
                // SAFETY: the CPU supports avx2 (checked).
                return unsafe { self.bands_avx2::<C, W>(lo, hi) };
            }
        }
        self.bands_body::<C, W>(lo, hi)
    }

    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx512f,avx512bw")]
    fn bands_avx512<C: Lane, const W: usize>(&self, lo: u32, hi: u32) -> Vec<u64> {
        self.bands_body::<C, W>(lo, hi)
    }

    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2")]
    fn bands_avx2<C: Lane, const W: usize>(&self, lo: u32, hi: u32) -> Vec<u64> {
        self.bands_body::<C, W>(lo, hi)
    }

    #[inline(always)]
    fn bands_body<C: Lane, const W: usize>(&self, lo: u32, hi: u32) -> Vec<u64> {
        let mut hits = vec![0u64; self.ptr.len() - 1];
        let mut band = vec![[C::default(); W]; (hi - lo) as usize];
        let last = self.groups.len();
        for (g, &std::ops::Range { start: p, end: q }) in self.groups.iter().enumerate() {
            for &i in &self.ord[p..q] {
                let mut c = 0u64;
                for e in self.span(i, lo, hi) {
                    c += band[(self.idx[e] - lo) as usize][self.rank[e] as usize].wide();
                }
                hits[i] = c;
            }
            if g + 1 == last {
                break;
            }
            for &i in &self.ord[p..q] {
                for e in self.span(i, lo, hi) {
                    let (b, r) = (&mut band[(self.idx[e] - lo) as usize], self.rank[e]);
                    for (t, x) in b.iter_mut().enumerate() {
                        *x = x.wrapping_add(C::one_if((t as u32) < r));
                    }
                }
            }
        }
        hits
    }

    /// A Fenwick tree over ranks `1..w` per list, counts above a rank as
    /// the list's members so far minus those at or below it.
    fn fenwick(&self, lo: u32, hi: u32, w: usize) -> Vec<u64> {
        let mut hits = vec![0u64; self.ptr.len() - 1];
        let lists = (hi - lo) as usize;
        let mut tree = vec![0u32; lists * w];
        let mut seen = vec![0u32; lists];
        let last = self.groups.len();
        for (g, &std::ops::Range { start: p, end: q }) in self.groups.iter().enumerate() {
            for &i in &self.ord[p..q] {
                let mut c = 0u64;
                for e in self.span(i, lo, hi) {
                    let j = (self.idx[e] - lo) as usize;
                    let t = &tree[j * w..(j + 1) * w];
                    let (mut k, mut below) = (self.rank[e] as usize, 0u32);
                    while k > 0 {
                        below += t[k];
                        k &= k - 1;
                    }
                    c += u64::from(seen[j] - below);
                }
                hits[i] = c;
            }
            if g + 1 == last {
                break;
            }
            for &i in &self.ord[p..q] {
                for e in self.span(i, lo, hi) {
                    let j = (self.idx[e] - lo) as usize;
                    seen[j] += 1;
                    let t = &mut tree[j * w..(j + 1) * w];
                    let mut k = self.rank[e] as usize;
                    while k < w {
                        t[k] += 1;
                        k += k & k.wrapping_neg();
                    }
                }
            }
        }
        hits
    }
}

/// Given-order counts `k_l = sum over lists of #{earlier members u :
/// d_u > d_l, rank_u > rank_l}` for the members `0..degrees.len()`.
fn given_counts(
    ptr: &[usize],
    idx: &[u32],
    rank: &[u32],
    degrees: &[usize],
    distinct: usize,
) -> Vec<u64> {
    let top = degrees.iter().copied().max().unwrap_or(0).max(distinct);
    if top <= u16::MAX as usize {
        given_lanes::<u16>(ptr, idx, rank, degrees)
    } else {
        given_lanes::<u32>(ptr, idx, rank, degrees)
    }
}

/// An unsigned lane of the given-order pair loop.
trait Lane: Copy + Ord + Send + Sync + Default {
    fn of(x: usize) -> Self;
    fn one_if(b: bool) -> Self;
    fn wrapping_add(self, o: Self) -> Self;
    fn wide(self) -> u64;
}

macro_rules! lane {
    ($t:ty) => {
        impl Lane for $t {
            #[inline(always)]
            fn of(x: usize) -> Self {
                x as $t
            }
            #[inline(always)]
            fn one_if(b: bool) -> Self {
                b as $t
            }
            #[inline(always)]
            fn wrapping_add(self, o: Self) -> Self {
                <$t>::wrapping_add(self, o)
            }
            #[inline(always)]
            fn wide(self) -> u64 {
                u64::from(self)
            }
        }
    };
}
lane!(u16);
lane!(u32);

fn given_lanes<T: Lane>(ptr: &[usize], idx: &[u32], rank: &[u32], degrees: &[usize]) -> Vec<u64> {
    per_list(
        ptr.len() - 1,
        degrees.len(),
        || (Vec::<T>::new(), Vec::<T>::new()),
        |j, acc, (d, r)| {
            let (a, b) = (ptr[j], ptr[j + 1]);
            let members = &idx[a..b];
            d.clear();
            d.extend(members.iter().map(|&l| T::of(degrees[l as usize])));
            r.clear();
            r.extend(rank[a..b].iter().map(|&x| T::of(x as usize)));
            given_pairs(d, r, members, acc);
        },
    )
}

/// `acc[members[b]] += #{a < b : d[a] > d[b], r[a] > r[b]}` for every `b`.
fn given_pairs<T: Lane>(d: &[T], r: &[T], members: &[u32], acc: &mut [u64]) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512bw") {
            // SAFETY: the CPU supports avx512f and avx512bw (checked).
            return unsafe { given_pairs_avx512(d, r, members, acc) };
        }
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the CPU supports avx2 (checked).
            return unsafe { given_pairs_avx2(d, r, members, acc) };
        }
    }
    given_pairs_body(d, r, members, acc)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx512bw")]
fn given_pairs_avx512<T: Lane>(d: &[T], r: &[T], members: &[u32], acc: &mut [u64]) {
    given_pairs_body(d, r, members, acc)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn given_pairs_avx2<T: Lane>(d: &[T], r: &[T], members: &[u32], acc: &mut [u64]) {
    given_pairs_body(d, r, members, acc)
}

#[inline(always)]
fn given_pairs_body<T: Lane>(d: &[T], r: &[T], members: &[u32], acc: &mut [u64]) {
    // Counts are kept in the lane type over blocks short enough not to wrap.
    const BLOCK: usize = 1 << 15;
    for b in 1..d.len() {
        let (db, rb) = (d[b], r[b]);
        let mut total = 0u64;
        for (dc, rc) in d[..b].chunks(BLOCK).zip(r[..b].chunks(BLOCK)) {
            let mut c = T::default();
            for (&da, &ra) in dc.iter().zip(rc) {
                c = c.wrapping_add(T::one_if((da > db) & (ra > rb)));
            }
            total += c.wide();
        }
        acc[members[b] as usize] += total;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrics::wnodf::csr::wnodf_csr_with;
    use crate::storage::lists::PAIR_LIMIT;

    /// The rank of every weight among the distinct weights (1 = smallest)
    /// and the number of distinct weights.
    fn global_ranks(vals: &[f64]) -> (Vec<u32>, usize) {
        let r = Ranker::new(vals);
        (r.ranks(vals), r.distinct)
    }

    fn lcg(seed: u64) -> impl FnMut() -> u64 {
        let mut x = seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) | 1;
        move || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        }
    }

    /// Every variant (bands of 16, 32 and 64 counters, Fenwick trees, one
    /// task and several, 16- and 32-bit lanes) equals the list kernels of
    /// `csr.rs` (checked against the definition in tests/fast_paths.rs) on
    /// seeded random networks with ties, zeros and many distinct weights.
    #[test]
    fn variants_equal_list_kernels() {
        for seed in 0..60u64 {
            let mut r = lcg(seed);
            let (m, n) = (2 + (r() % 90) as usize, 2 + (r() % 90) as usize);
            let fill = 5 + r() % 90;
            // 3, 20, 50 or 500 distinct weights, or fractional ones.
            let top = [3u64, 20, 50, 500, 0][(seed % 5) as usize];
            let mut triplets = Vec::new();
            for i in 0..m {
                for j in 0..n {
                    if r() % 100 < fill {
                        let w = if top == 0 {
                            (1 + r() % 1000) as f64 / 7.0
                        } else {
                            (1 + r() % top) as f64
                        };
                        triplets.push((i as u32, j as u32, w));
                    }
                }
            }
            if triplets.is_empty() {
                continue;
            }
            let csr = Csr::from_triplets(m, n, triplets);
            for order in [Order::Sorted, Order::Given] {
                let want = wnodf_csr_with(&csr, order, PAIR_LIMIT).unwrap();
                let cols = csr.transpose();
                match wnodf_ranked(&csr, None, order) {
                    Some(got) => {
                        assert_eq!(got.unwrap(), want, "seed {seed} {order}");
                        let kept = wnodf_ranked(&csr, Some(&cols), order).unwrap();
                        assert_eq!(kept.unwrap(), want, "seed {seed} {order} kept columns");
                    }
                    // Left to the list kernels: only counters above budget.
                    None => {
                        let k = global_ranks(csr.values()).1 + 1;
                        let width = [16, 32, 64].into_iter().find(|&w| k <= w).unwrap_or(k);
                        let budget = 4 * (csr.nnz() + m + n) + 4096;
                        assert!(order == Order::Sorted && m.max(n) * width > budget);
                    }
                }
            }
            // Forced variants on the row side.
            let (ranks, distinct) = global_ranks(csr.values());
            let rd = list_degrees(csr.indptr());
            let want = sorted_counts(csr.indptr(), csr.indices(), &ranks, n, &rd, distinct);
            let ord = degree_order(&rd);
            let groups = crate::metrics::tie_groups(&rd, &ord);
            for whole in [true, false] {
                let job = Job {
                    ptr: csr.indptr(),
                    idx: csr.indices(),
                    rank: &ranks,
                    ord: &ord,
                    groups: &groups,
                    whole,
                };
                // One task over every list, or two over a split of them.
                let mid = (n / 3) as u32;
                let split = |f: &dyn Fn(u32, u32) -> Vec<u64>| {
                    if whole {
                        f(0, n as u32)
                    } else {
                        add_up(vec![f(0, mid), f(mid, n as u32)], m)
                    }
                };
                assert_eq!(split(&|a, b| job.fenwick(a, b, distinct + 1)), want);
                assert_eq!(split(&|a, b| job.fenwick(a, b, distinct + 7)), want);
                if distinct < 64 {
                    assert_eq!(split(&|a, b| job.bands::<u16, 64>(a, b)), want);
                    assert_eq!(split(&|a, b| job.bands::<u32, 64>(a, b)), want);
                    assert_eq!(split(&|a, b| job.bands_body::<u16, 64>(a, b)), want);
                }
            }
            let (cptr, cidx, cranks) =
                transpose_lists(n, csr.indptr(), csr.indices(), Some(&ranks), None);
            let cranks = cranks.unwrap();
            let narrow = given_lanes::<u16>(&cptr, &cidx, &cranks, &rd);
            assert_eq!(given_lanes::<u32>(&cptr, &cidx, &cranks, &rd), narrow);
        }
    }

    /// The portable builds equal the dispatched (vector) ones.
    #[test]
    fn portable_bodies_equal_dispatched() {
        let mut r = lcg(9);
        let vals: Vec<f64> = (0..1000).map(|_| (1 + r() % 300) as f64).collect();
        assert_eq!(whole_top_body(&vals), whole_top(&vals));
        let mut frac = vals.clone();
        frac[700] = 2.5;
        assert!(!whole_top_body(&frac).0);
        assert!(!whole_top(&frac).0);
        let table: Vec<u32> = (0..301).map(|k| k * 7).collect();
        let (mut a, mut b) = (vec![0u32; 1000], vec![0u32; 1000]);
        look_up_body(&table, &vals, &mut a);
        look_up(&table, &vals, &mut b);
        assert_eq!(a, b);
        let d: Vec<u16> = (0..700).map(|_| (r() % 9) as u16).collect();
        let w: Vec<u16> = (0..700).map(|_| (r() % 5) as u16).collect();
        let members: Vec<u32> = (0..700).collect();
        let (mut a, mut b) = (vec![0u64; 700], vec![0u64; 700]);
        given_pairs_body(&d, &w, &members, &mut a);
        given_pairs(&d, &w, &members, &mut b);
        assert_eq!(a, b);
        // The definition, pair by pair (docs/methods.md §2, given order).
        for l in 0..700 {
            let want = (0..l).filter(|&u| d[u] > d[l] && w[u] > w[l]).count();
            assert_eq!(a[l], want as u64);
        }
    }

    /// A 2 x 5,000 table (many lists of two members) in the sorted order
    /// would need more band counters than it has links: declined, so the
    /// list kernels compute it; the given order is taken.
    #[test]
    fn counters_bounded_by_links() {
        let triplets: Vec<(u32, u32, f64)> = (0..2u32)
            .flat_map(|i| (0..5000u32).map(move |j| (i, j, f64::from(1 + (i + j) % 3))))
            .collect();
        let csr = Csr::from_triplets(2, 5000, triplets);
        assert!(wnodf_ranked(&csr, None, Order::Sorted).is_none());
        let want = wnodf_csr_with(&csr, Order::Given, PAIR_LIMIT).unwrap();
        assert_eq!(
            wnodf_ranked(&csr, None, Order::Given).unwrap().unwrap(),
            want
        );
    }

    /// Ranks keep the order of the weights, whole or not.
    #[test]
    fn ranks_keep_order() {
        let (r, k) = global_ranks(&[3.0, 1.0, 3.0, 70000.0, 2.0]);
        assert_eq!((r, k), (vec![3, 1, 3, 4, 2], 4));
        let (r, k) = global_ranks(&[0.5, 2.0, 0.25, 2.0]);
        assert_eq!((r, k), (vec![2, 3, 1, 3], 3));
        let (r, k) = global_ranks(&[7.0, 5.0, 7.0]);
        assert_eq!((r, k), (vec![2, 1, 2], 2));
    }
}
