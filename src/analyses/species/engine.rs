//! The incremental NODF engine: NODF (sorted order) of the observed network
//! with one species' cells replaced, without recomputing the whole index.
//!
//! # What is kept and what is updated
//! NODF's row part is `sum over rows l with d_l > 0 of 100 ov_l / d_l`,
//! where `ov_l` sums the overlaps of row `l` with every row of larger degree
//! (METHODS.md §1); the column part likewise. The engine keeps, for both
//! sides, the degrees, the integer sums `ov`, the quotients
//! `100 ov_l / d_l`, the pairwise overlap table of each side (when it fits,
//! see [`OVERLAP_TABLE_LIMIT`]) and each side's members grouped by degree.
//!
//! When row `i` is replaced (old cells `a`, new cells `a'`):
//! * **Its own side.** Only pairs `(i, l)` change: the new overlaps of row
//!   `i` with every other row are `m - 1` popcounts of bit-packed rows
//!   (`O(m n / 64)`); each `ov_l` moves by
//!   `[d'_i > d_l] o'_il - [d_i > d_l] o_il`, the old overlaps `o_il` being
//!   counted once per species ([`NodfEngine::focus`]).
//! * **The other side.** Let `G` be the columns gained (`a = 0, a' = 1`),
//!   `Lo` those lost, `K` those kept (`a = a' = 1`), `D = G ∪ Lo`. Only
//!   columns in `D` change degree (by +1 or -1), and the overlap of two
//!   columns changes only when one of them is in `D`. Writing
//!   `c` for the old column degrees and `O_ul` for old column overlaps,
//!   `ov'_l - ov_l` is:
//!
//!   ```text
//!   l outside D (b = a_l):
//!       sum_{u in G, c_u = c_l} O_ul - sum_{u in Lo, c_u = c_l + 1} O_ul
//!       + b (#{u in G: c_u >= c_l} - #{u in Lo: c_u >= c_l + 2})
//!   l in G:
//!       sum_{u in G, c_u > c_l} 1 + #{u in K: c_u >= c_l + 2}
//!       - sum_{u not in G, c_u = c_l + 1} O_ul - sum_{u in Lo, c_u = c_l + 2} O_ul
//!   l in Lo:
//!       sum_{u != l, u not in Lo, c_u = c_l} O_ul + sum_{u in G, c_u = c_l - 1} O_ul
//!       - #{u in K: c_u >= c_l} - #{u in Lo: c_u > c_l}
//!   ```
//!
//!   (Each case follows from `[c'_u > c'_l] O'_ul - [c_u > c_l] O_ul` with
//!   `c' = c ± 1` and `O'_ul = O_ul + a'_u a'_l - a_u a_l`.) The sums run over
//!   one or two degree classes per member of `D`, the counts are binary
//!   searches in the sorted degrees of `G`, `Lo` and `K`, so this side costs
//!   `O(|D| s)` with `s` the size of a degree class, instead of `O(|D| n)`.
//!
//! The index is then the sum of the quotients in member order (unchanged
//! quotients are reused, changed ones divided again), exactly as
//! [`crate::metrics::nodf()`] adds them, so the value is the full
//! recomputation's to the last bit (tests: `tests/species.rs`). A column
//! species is handled the same way on the transposed matrix.

use rayon::prelude::*;

use crate::bits::BitMatrix;
use crate::error::{Error, Result};
use crate::kernels::popcount::{PanelKernel, PopcountPath, PANEL};
use crate::metrics::{nodf::upper_overlaps, Order, Parts};

/// A pairwise overlap table of one side is stored only when it has at most
/// this many entries (2^24 `u32`: 64 MiB, e.g. 4096 members); above it the
/// engine counts each overlap it needs with popcounts (`O(m / 64)` each).
pub const OVERLAP_TABLE_LIMIT: usize = 1 << 24;

/// Which side a species belongs to.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub enum Side {
    /// A row species (for example a plant).
    #[cfg_attr(feature = "serde", serde(rename = "row"))]
    Row,
    /// A column species (for example a visitor).
    #[cfg_attr(feature = "serde", serde(rename = "col"))]
    Col,
}

impl Side {
    /// `row` or `col`, as in the output.
    pub fn name(self) -> &'static str {
        match self {
            Side::Row => "row",
            Side::Col => "col",
        }
    }
}

/// What the engine keeps for one side: rows of `bits` are that side's
/// members. "Positions" order the members by degree (ties by index), so
/// each degree class is one range of positions.
#[derive(Clone, Debug)]
struct SideState {
    bits: BitMatrix,
    deg: Vec<usize>,
    ov: Vec<u64>,
    term: Vec<f64>,
    /// `table[p * k + q]`: overlap of the members at positions `p` and `q`
    /// (None: too large, overlaps are counted when needed).
    table: Option<Vec<u32>>,
    /// Positions of degree `c` are `class_ptr[c]..class_ptr[c + 1]`.
    class_ptr: Vec<usize>,
    /// The member at each position.
    member: Vec<u32>,
    /// The position of each member.
    pos: Vec<u32>,
}

impl SideState {
    fn new(bits: BitMatrix, table_limit: usize, other_len: usize) -> SideState {
        let k = bits.nrows();
        let deg = bits.row_degrees();
        let ov = upper_overlaps(&bits, Order::Sorted);
        let term = deg.iter().zip(&ov).map(|(&d, &o)| quotient(o, d)).collect();
        let max = deg.iter().copied().max().unwrap_or(0);
        let mut class_ptr = vec![0usize; max + 2];
        for &d in &deg {
            class_ptr[d + 1] += 1;
        }
        for c in 0..=max {
            class_ptr[c + 1] += class_ptr[c];
        }
        let mut next = class_ptr.clone();
        let mut member = vec![0u32; k];
        let mut pos = vec![0u32; k];
        for (u, &d) in deg.iter().enumerate() {
            member[next[d]] = u as u32;
            pos[u] = next[d] as u32;
            next[d] += 1;
        }
        // The i32 changes of `ov` stay far from overflow: at most `k`
        // members change, each by at most `other_len`.
        let fits = k.saturating_mul(k) <= table_limit
            && (k as u128) * (other_len as u128) < (i32::MAX as u128);
        let table = fits.then(|| {
            let mut sorted = BitMatrix::zeros(k, bits.ncols());
            for (p, &u) in member.iter().enumerate() {
                sorted.row_mut(p).copy_from_slice(bits.row(u as usize));
            }
            overlap_table(&sorted)
        });
        SideState {
            bits,
            deg,
            ov,
            term,
            table,
            class_ptr,
            member,
            pos,
        }
    }

    fn len(&self) -> usize {
        self.deg.len()
    }

    /// Positions of degree `c` (empty beyond the largest degree).
    #[inline]
    fn class(&self, c: usize) -> std::ops::Range<usize> {
        if c + 1 >= self.class_ptr.len() {
            return 0..0;
        }
        self.class_ptr[c]..self.class_ptr[c + 1]
    }

    /// Overlaps of the member at position `p` with the members at the
    /// positions `range`: a slice of the table, or counted into `buf`.
    #[inline]
    fn overlaps<'a>(
        &'a self,
        p: usize,
        range: std::ops::Range<usize>,
        buf: &'a mut Vec<u32>,
    ) -> &'a [u32] {
        match &self.table {
            Some(t) => &t[p * self.len() + range.start..p * self.len() + range.end],
            None => {
                let u = self.member[p] as usize;
                buf.clear();
                buf.extend(range.map(|q| self.bits.overlap(u, self.member[q] as usize) as u32));
                buf
            }
        }
    }

    /// Overlap of the members at positions `p` and `q`.
    #[inline]
    fn overlap_at(&self, p: usize, q: usize) -> i32 {
        match &self.table {
            Some(t) => t[p * self.len() + q] as i32,
            None => self
                .bits
                .overlap(self.member[p] as usize, self.member[q] as usize)
                as i32,
        }
    }
}

/// `100 o / d` exactly as NODF divides (0 for an empty member, never added).
#[inline]
fn quotient(o: u64, d: usize) -> f64 {
    if d == 0 {
        0.0
    } else {
        100.0 * o as f64 / d as f64
    }
}

/// All pairwise overlaps of the rows of `b`, `k x k`, in parallel over rows.
fn overlap_table(b: &BitMatrix) -> Vec<u32> {
    let k = b.nrows();
    let w = b.words_per_row();
    let kernel = PanelKernel::new(PopcountPath::detect());
    let mut t = vec![0u32; k * k];
    if k == 0 {
        return t;
    }
    t.par_chunks_mut(k).enumerate().for_each(|(u, out)| {
        let mut pc = [0u64; PANEL];
        let words = b.as_words();
        let mut p0 = 0;
        while p0 < k {
            let p1 = (p0 + PANEL).min(k);
            kernel.run(b.row(u), &words[p0 * w..p1 * w], &mut pc);
            for l in p0..p1 {
                out[l] = pc[l - p0] as u32;
            }
            p0 = p1;
        }
    });
    t
}

/// NODF (sorted order) of a binary matrix with one species' cells replaced,
/// computed incrementally from the observed network (see the [module
/// documentation](self) for the method).
///
/// Cost: building, one NODF plus the pairwise overlap tables of both sides
/// (`O((m^2 n + n^2 m) / 64)`, memory `4 (m^2 + n^2)` bytes up to
/// [`OVERLAP_TABLE_LIMIT`] entries per side); [`focus`](Self::focus) on a
/// species, `O(k n / 64)` for `k` members of its side; each
/// [`nodf_with`](Self::nodf_with), `O(k n / 64 + |D| s + m + n)` with `|D|`
/// the cells that changed and `s` the size of a degree class of the other
/// side.
///
/// Reference: NODF of Almeida-Neto et al. (2008), Oikos 117:1227-1239; the
/// one-species re-draws it serves are those of Saavedra et al. (2011),
/// Nature 478:233-235.
///
/// # Example
/// ```
/// use nidus::analyses::species::{NodfEngine, Side};
/// use nidus::metrics::{nodf, Order};
/// use nidus::BitMatrix;
/// let b = BitMatrix::from_fn(4, 4, |i, j| i + j < 4); // a staircase
/// let engine = NodfEngine::new(&b).unwrap();
/// assert_eq!(engine.observed(), 100.0);
/// // Replace row 3's cells (column 0) by columns {1, 3}.
/// let mut scratch = engine.scratch();
/// engine.focus(Side::Row, 3, &mut scratch);
/// let new_cells = [0b1010u64];
/// let mut changed = b.clone();
/// changed.row_mut(3).copy_from_slice(&new_cells);
/// let full = nodf(&changed, Order::Sorted).unwrap().total;
/// assert_eq!(engine.nodf_with(&new_cells, &mut scratch), full);
/// ```
#[derive(Clone, Debug)]
pub struct NodfEngine {
    rows: SideState,
    cols: SideState,
    observed: f64,
}

/// Per-thread working memory of a [`NodfEngine`], tied to one species by
/// [`NodfEngine::focus`].
#[derive(Clone, Debug)]
pub struct Scratch {
    side: Side,
    index: usize,
    /// Overlaps of the focused species' observed cells with its side's members.
    old: Vec<u64>,
    /// The same for the replacement cells.
    new: Vec<u64>,
    /// Changes of `ov` of the other side, by position (all zero between calls).
    delta: Vec<i32>,
    /// Overlaps counted on the fly when a side has no table.
    buf: Vec<u32>,
    /// `(degree, position)` of the other side's members gained, lost, kept.
    gained: Vec<(u32, u32)>,
    lost: Vec<(u32, u32)>,
    kept: Vec<(u32, u32)>,
}

impl NodfEngine {
    /// Prepares the engine for `b`.
    ///
    /// Errors: a 1 x 1 matrix (NODF has no pairs), or `m n >= 2^31 - 1`
    /// cells (beyond the bit-packed view's limit anyway).
    pub fn new(b: &BitMatrix) -> Result<NodfEngine> {
        Self::with_table_limit(b, OVERLAP_TABLE_LIMIT)
    }

    /// [`new`](Self::new) with another limit on the overlap tables (0: never
    /// store them, count every overlap on the fly). For tests and timing;
    /// the values do not depend on it.
    pub fn with_table_limit(b: &BitMatrix, table_limit: usize) -> Result<NodfEngine> {
        // Changes of `ov` are kept in i32: they stay below m n in size.
        if (b.nrows() as u128) * (b.ncols() as u128) >= i32::MAX as u128 {
            return Err(Error::InvalidArgument(format!(
                "a {} x {} matrix is too large for the species engine",
                b.nrows(),
                b.ncols()
            )));
        }
        let observed = crate::metrics::nodf(b, Order::Sorted)?.total;
        let (rows, cols) = rayon::join(
            || SideState::new(b.clone(), table_limit, b.ncols()),
            || SideState::new(b.transpose(), table_limit, b.nrows()),
        );
        Ok(NodfEngine {
            rows,
            cols,
            observed,
        })
    }

    /// NODF (sorted order) of the observed matrix.
    pub fn observed(&self) -> f64 {
        self.observed
    }

    /// Rows `m`.
    pub fn nrows(&self) -> usize {
        self.rows.len()
    }

    /// Columns `n`.
    pub fn ncols(&self) -> usize {
        self.cols.len()
    }

    /// Observed degrees of one side.
    pub fn degrees(&self, side: Side) -> &[usize] {
        &self.sides(side).0.deg
    }

    /// The observed cells of species `index` of `side`, bit-packed
    /// (`ceil(k / 64)` words for `k` members of the other side).
    pub fn cells(&self, side: Side, index: usize) -> &[u64] {
        self.sides(side).0.bits.row(index)
    }

    /// Words of a species' cells on `side` (the other side's size / 64, rounded up).
    pub fn words(&self, side: Side) -> usize {
        self.sides(side).0.bits.words_per_row()
    }

    /// Working memory for [`focus`](Self::focus) and
    /// [`nodf_with`](Self::nodf_with); one per thread.
    pub fn scratch(&self) -> Scratch {
        let big = self.nrows().max(self.ncols());
        Scratch {
            side: Side::Row,
            index: usize::MAX,
            old: vec![0; big],
            new: vec![0; big],
            delta: vec![0; big],
            buf: Vec::new(),
            gained: Vec::new(),
            lost: Vec::new(),
            kept: Vec::new(),
        }
    }

    /// (the species' side, the other side)
    fn sides(&self, side: Side) -> (&SideState, &SideState) {
        match side {
            Side::Row => (&self.rows, &self.cols),
            Side::Col => (&self.cols, &self.rows),
        }
    }

    /// Ties `scratch` to species `index` of `side`: counts the overlaps of
    /// its observed cells with every member of its side. Cost `O(k n / 64)`.
    ///
    /// Panics when `index` is out of range.
    pub fn focus(&self, side: Side, index: usize, scratch: &mut Scratch) {
        let (own, _) = self.sides(side);
        assert!(index < own.len(), "species {index} out of range");
        scratch.side = side;
        scratch.index = index;
        overlaps_with(
            &own.bits,
            own.bits.row(index),
            &mut scratch.old[..own.len()],
        );
    }

    /// NODF (sorted order, as [`crate::metrics::nodf()`] computes it) of
    /// the observed matrix with the focused species' cells replaced by
    /// `cells` (bit-packed like [`cells`](Self::cells); padding bits zero).
    ///
    /// Panics when no species is focused or `cells` has the wrong length.
    pub fn nodf_with(&self, cells: &[u64], s: &mut Scratch) -> f64 {
        assert!(s.index != usize::MAX, "focus on a species first");
        let (own, other) = self.sides(s.side);
        let i = s.index;
        assert_eq!(
            cells.len(),
            own.bits.words_per_row(),
            "wrong number of words"
        );
        let own_sum = self.own_side_sum(own, i, cells, s);
        let other_sum = self.other_side_sum(other, own.bits.row(i), cells, s);
        let (rows, cols) = match s.side {
            Side::Row => (own_sum, other_sum),
            Side::Col => (other_sum, own_sum),
        };
        Parts::from_sums("NODF", self.nrows(), self.ncols(), rows, cols)
            .map(|p| p.total)
            .expect("the engine was built for a matrix with pairs")
    }

    /// Sum of the quotients of the species' own side after the change.
    fn own_side_sum(&self, own: &SideState, i: usize, cells: &[u64], s: &mut Scratch) -> f64 {
        let k = own.len();
        overlaps_with(&own.bits, cells, &mut s.new[..k]);
        let d_old = own.deg[i];
        let d_new: usize = cells.iter().map(|w| w.count_ones() as usize).sum();
        let (old, new) = (&s.old[..k], &s.new[..k]);
        let ov_i: u64 = (0..k)
            .filter(|&l| l != i && own.deg[l] > d_new)
            .map(|l| new[l])
            .sum();
        (0..k)
            .filter_map(|l| {
                if l == i {
                    return (d_new > 0).then(|| quotient(ov_i, d_new));
                }
                let d = own.deg[l];
                if d == 0 {
                    return None;
                }
                let before = if d_old > d { old[l] } else { 0 };
                let after = if d_new > d { new[l] } else { 0 };
                Some(if before == after {
                    own.term[l]
                } else {
                    quotient(own.ov[l] - before + after, d)
                })
            })
            .sum()
    }

    /// Sum of the quotients of the other side after the change. Works in
    /// positions (degree order): the changes for members outside `D` are
    /// whole class ranges of the overlap table added at once; those of the
    /// members of `D` are then written over their entries.
    fn other_side_sum(&self, o: &SideState, old: &[u64], new: &[u64], s: &mut Scratch) -> f64 {
        let bit = |w: &[u64], u: usize| (w[u / 64] >> (u % 64)) & 1 == 1;
        // Classify the changed and kept members, as (degree, position).
        s.gained.clear();
        s.lost.clear();
        s.kept.clear();
        for (k, (&a, &b)) in old.iter().zip(new).enumerate() {
            push_ones(&mut s.gained, b & !a, k, o);
            push_ones(&mut s.lost, a & !b, k, o);
            push_ones(&mut s.kept, a & b, k, o);
        }
        s.gained.sort_unstable();
        s.lost.sort_unstable();
        s.kept.sort_unstable();
        // Members of a sorted (degree, position) list with degree >= t.
        let ge = |v: &[(u32, u32)], t: usize| {
            (v.len() - v.partition_point(|&(d, _)| (d as usize) < t)) as i32
        };
        // Members of a sorted list with degree exactly c.
        let of_degree = |v: &[(u32, u32)], c: usize| {
            let a = v.partition_point(|&(d, _)| (d as usize) < c);
            let b = v.partition_point(|&(d, _)| (d as usize) <= c);
            a..b
        };
        let delta = &mut s.delta;
        let buf = &mut s.buf;
        // Members outside D: pairs with a gained or lost member, by class.
        for &(c, p) in &s.gained {
            let range = o.class(c as usize);
            let start = range.start;
            let row = o.overlaps(p as usize, range.clone(), buf);
            for (d, &x) in delta[start..start + row.len()].iter_mut().zip(row) {
                *d += x as i32;
            }
        }
        for &(c, p) in &s.lost {
            let range = o.class(c as usize - 1);
            let start = range.start;
            let row = o.overlaps(p as usize, range.clone(), buf);
            for (d, &x) in delta[start..start + row.len()].iter_mut().zip(row) {
                *d -= x as i32;
            }
        }
        for &(c, p) in &s.kept {
            let c = c as usize;
            delta[p as usize] += ge(&s.gained, c) - ge(&s.lost, c + 2);
        }
        // Gained members (their entries are overwritten).
        let class_sum = |p: usize, c: usize, buf: &mut Vec<u32>| -> i32 {
            o.overlaps(p, o.class(c), buf)
                .iter()
                .map(|&x| x as i32)
                .sum()
        };
        for &(c, p) in &s.gained {
            let (c, p) = (c as usize, p as usize);
            let mut x = ge(&s.kept, c + 2) + ge(&s.gained, c + 1) - class_sum(p, c + 1, buf);
            for &(_, q) in &s.gained[of_degree(&s.gained, c + 1)] {
                x += o.overlap_at(p, q as usize);
            }
            for &(_, q) in &s.lost[of_degree(&s.lost, c + 2)] {
                x -= o.overlap_at(p, q as usize);
            }
            delta[p] = x;
        }
        // Lost members.
        for &(c, p) in &s.lost {
            let (c, p) = (c as usize, p as usize);
            let mut x = -ge(&s.kept, c) - ge(&s.lost, c + 1) + class_sum(p, c, buf);
            for &(_, q) in &s.lost[of_degree(&s.lost, c)] {
                x -= o.overlap_at(p, q as usize); // includes p itself
            }
            for &(_, q) in &s.gained[of_degree(&s.gained, c - 1)] {
                x += o.overlap_at(p, q as usize);
            }
            delta[p] = x;
        }
        // The sum in member order; every entry is reset to zero on the way.
        (0..o.len())
            .filter_map(|l| {
                let x = std::mem::take(&mut delta[o.pos[l] as usize]);
                let d = o.deg[l] + usize::from(bit(new, l)) - usize::from(bit(old, l));
                if d == 0 {
                    return None;
                }
                Some(if x == 0 && d == o.deg[l] {
                    o.term[l]
                } else {
                    quotient((o.ov[l] as i64 + i64::from(x)) as u64, d)
                })
            })
            .sum()
    }
}

/// Appends `(degree, position)` of the member `64 k + b` of `o` for every
/// set bit `b` of `w`.
#[inline]
fn push_ones(out: &mut Vec<(u32, u32)>, mut w: u64, k: usize, o: &SideState) {
    while w != 0 {
        let u = k * 64 + w.trailing_zeros() as usize;
        out.push((o.deg[u] as u32, o.pos[u]));
        w &= w - 1;
    }
}

/// `out[l] = |row ∩ bits.row(l)|` for every row `l` of `bits`.
fn overlaps_with(bits: &BitMatrix, row: &[u64], out: &mut [u64]) {
    let k = bits.nrows();
    let w = bits.words_per_row();
    let kernel = PanelKernel::new(PopcountPath::detect());
    let words = bits.as_words();
    let mut pc = [0u64; PANEL];
    let mut p0 = 0;
    while p0 < k {
        let p1 = (p0 + PANEL).min(k);
        if w == 0 {
            out[p0..p1].fill(0);
        } else {
            kernel.run(row, &words[p0 * w..p1 * w], &mut pc);
            out[p0..p1].copy_from_slice(&pc[..p1 - p0]);
        }
        p0 = p1;
    }
}
