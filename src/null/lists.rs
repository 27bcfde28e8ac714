//! Binary null draws stored as sorted row lists (a [`Csr`] whose every
//! weight is one) instead of bit tables: memory `O(m + n + L)` per draw, so
//! that large sparse networks can be tested; indices read them with the
//! same sparse kernels `measure` uses on a sparsely stored network.
//!
//! [`lists_chosen`] decides when a binary model draws lists. The
//! `equiprobable`, `fixed-rows`, `fixed-columns` and `fixed-both` list
//! samplers draw their random numbers exactly as the bit-table samplers do,
//! so a seed gives the same matrices in either storage; `proportional`
//! draws each cell by geometric skipping and thinning (cost `O(L)` instead
//! of `O(m n)`), with the same cell probabilities but other random numbers.

use std::collections::HashSet;

use rand::Rng;

use crate::error::Result;
use crate::null::curveball_lists::CurveballLists;
use crate::null::{floyd, unit, BurnIn, NullModel};
use crate::storage::lists::transpose_lists;
use crate::storage::{Csr, Network, Weight};

/// Above this many cells a sparse network's binary draws are lists
/// (2^28 cells: a 32 MiB bit table).
pub const LISTS_ABOVE_CELLS: u128 = 1 << 28;
/// ... when its fill (links per cell) is below `1 / LISTS_BELOW_FILL`.
pub const LISTS_BELOW_FILL: u128 = 32;
/// Above this many cells binary draws are always lists (a bit table is
/// refused there: [`crate::storage::DENSE_CELL_LIMIT`]).
pub const LISTS_ALWAYS_ABOVE_CELLS: u128 = crate::storage::DENSE_CELL_LIMIT;

/// Whether binary null draws of an `m x n` network with `links` links are
/// stored as row lists: above 2^28 cells when fewer than 1/32 of the
/// cells are links (a row list takes 4 bytes a link against `n / 8` bytes
/// a row of bits, so lists are smaller from that fill down, and the sparse
/// kernels faster), and always above 2^31 cells, where a bit table is
/// refused.
///
/// ```
/// use nidus::null::lists_chosen;
/// assert!(!lists_chosen(4000, 4000, 100_000)); // 1.6e7 cells: bits
/// assert!(lists_chosen(40_000, 40_000, 400_000)); // 1.6e9 cells, fill 1/4000
/// assert!(!lists_chosen(40_000, 40_000, 100_000_000)); // fill 1/16
/// assert!(lists_chosen(100_000, 100_000, 10_000_000_000)); // 1e10 cells
/// ```
pub fn lists_chosen(m: usize, n: usize, links: usize) -> bool {
    let cells = m as u128 * n as u128;
    cells > LISTS_ALWAYS_ABOVE_CELLS
        || (cells > LISTS_ABOVE_CELLS && (links as u128) * LISTS_BELOW_FILL < cells)
}

/// The binary view of `net` as row lists (every weight 1): the observed
/// side of a test whose draws are lists.
pub(crate) fn binary_lists<T: Weight>(net: &Network<T>) -> Csr<f64> {
    let c = net.cached_rows();
    Csr::ones_from_lists(
        c.nrows(),
        c.ncols(),
        c.indptr().to_vec(),
        c.indices().to_vec(),
    )
}

/// A binary model drawing row lists.
#[derive(Clone, Debug)]
pub(crate) enum ListSampler {
    Equiprobable { m: usize, n: usize, links: usize },
    Proportional(ProportionalLists),
    FixedRows { n: usize, degrees: Vec<usize> },
    FixedColumns { m: usize, degrees: Vec<usize> },
    FixedBoth(BurnIn<CurveballLists>),
}

impl ListSampler {
    /// The list sampler of a binary `model` (not `fixed-both`, built by the
    /// caller with its burn-in).
    pub(crate) fn new<T: Weight>(net: &Network<T>, model: NullModel) -> Result<Self> {
        let (m, n) = (net.nrows(), net.ncols());
        Ok(match model {
            NullModel::Equiprobable => ListSampler::Equiprobable {
                m,
                n,
                links: net.links(),
            },
            NullModel::Proportional => ListSampler::Proportional(ProportionalLists::new(net)),
            NullModel::FixedRows => ListSampler::FixedRows {
                n,
                degrees: net.row_degrees().to_vec(),
            },
            NullModel::FixedColumns => ListSampler::FixedColumns {
                m,
                degrees: net.col_degrees().to_vec(),
            },
            _ => unreachable!("weighted models and fixed-both are built elsewhere"),
        })
    }

    /// The burn-in of a `fixed-both` sampler.
    pub(crate) fn burn_in(&self) -> Option<usize> {
        match self {
            ListSampler::FixedBoth(b) => Some(b.steps()),
            _ => None,
        }
    }

    /// One draw.
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Csr<f64> {
        match self {
            ListSampler::Equiprobable { m, n, links } => equiprobable(rng, *m, *n, *links),
            ListSampler::Proportional(p) => p.sample(rng),
            ListSampler::FixedRows { n, degrees } => fixed_rows(rng, *n, degrees),
            ListSampler::FixedColumns { m, degrees } => fixed_columns(rng, *m, degrees),
            ListSampler::FixedBoth(b) => rand::distr::Distribution::sample(b, rng),
        }
    }
}

/// `equiprobable` as lists: the same Floyd sampling of `L` distinct cells
/// among `m n` as [`crate::null::Equiprobable`] (a hash set answers "taken?"
/// instead of a bit table), then the cells sorted into rows. Cost `O(L log L)`.
fn equiprobable<R: Rng + ?Sized>(rng: &mut R, m: usize, n: usize, links: usize) -> Csr<f64> {
    let mut taken: HashSet<u64> = HashSet::with_capacity(links);
    let mut cells: Vec<u64> = Vec::with_capacity(links);
    floyd(rng, m * n, links, |t, c| {
        let c = if taken.contains(&(t as u64)) { c } else { t } as u64;
        taken.insert(c);
        cells.push(c);
    });
    drop(taken);
    cells.sort_unstable();
    let mut indptr = vec![0usize; m + 1];
    let mut indices = Vec::with_capacity(links);
    for &c in &cells {
        indptr[(c / n as u64) as usize + 1] += 1;
        indices.push((c % n as u64) as u32);
    }
    for i in 0..m {
        indptr[i + 1] += indptr[i];
    }
    Csr::ones_from_lists(m, n, indptr, indices)
}

/// Floyd's `d` of `0..n` for one list, with `seen` (a cleared bit set of
/// `n` bits) answering "taken?"; appends the members ascending to `out`
/// and leaves `seen` cleared. The same choices as the bit-table samplers.
fn floyd_list<R: Rng + ?Sized>(
    rng: &mut R,
    n: usize,
    d: usize,
    seen: &mut [u64],
    out: &mut Vec<u32>,
) {
    let from = out.len();
    floyd(rng, n, d, |t, j| {
        let c = if (seen[t >> 6] >> (t & 63)) & 1 == 1 {
            j
        } else {
            t
        };
        seen[c >> 6] |= 1 << (c & 63);
        out.push(c as u32);
    });
    out[from..].sort_unstable();
    for &c in &out[from..] {
        seen[c as usize >> 6] = 0;
    }
}

/// `fixed-rows` as lists. Cost `O(n / 64 + L log(max d))`.
fn fixed_rows<R: Rng + ?Sized>(rng: &mut R, n: usize, degrees: &[usize]) -> Csr<f64> {
    let mut seen = vec![0u64; n.div_ceil(64)];
    let mut indptr = Vec::with_capacity(degrees.len() + 1);
    indptr.push(0);
    let mut indices = Vec::with_capacity(degrees.iter().sum());
    for &d in degrees {
        floyd_list(rng, n, d, &mut seen, &mut indices);
        indptr.push(indices.len());
    }
    Csr::ones_from_lists(degrees.len(), n, indptr, indices)
}

/// `fixed-columns` as lists: columns drawn in turn, then transposed into
/// rows by a counting sort. Cost `O(m + n + L log(max d))`.
fn fixed_columns<R: Rng + ?Sized>(rng: &mut R, m: usize, degrees: &[usize]) -> Csr<f64> {
    let n = degrees.len();
    let mut seen = vec![0u64; m.div_ceil(64)];
    let mut cptr = Vec::with_capacity(n + 1);
    cptr.push(0);
    let mut cidx = Vec::with_capacity(degrees.iter().sum());
    for &d in degrees {
        floyd_list(rng, m, d, &mut seen, &mut cidx);
        cptr.push(cidx.len());
    }
    let (indptr, indices, _) = transpose_lists::<f64>(m, &cptr, &cidx, None, None);
    Csr::ones_from_lists(m, n, indptr, indices)
}

/// `proportional` as lists: cell `(i, j)` is 1 with probability
/// `p_ij = (d_i / n + d_j / m) / 2`, independently, as in
/// [`crate::null::Proportional`], at a cost `O(L + m log m)` instead of
/// `O(m n)`.
///
/// Columns are grouped by the binary exponent of `d_j / m` (within a group
/// the largest is less than twice the smallest). In row `i` and group `g`
/// with largest column part `c_g`, every cell is a candidate with
/// probability `q = (d_i / n + c_g) / 2 >= p_ij`: the gaps between
/// candidates are geometric, drawn by inversion
/// (`floor(ln(1 - U) / ln(1 - q))`; Devroye 1986, Non-Uniform Random
/// Variate Generation, §X.2; the skipping of Batagelj & Brandes 2005, Phys.
/// Rev. E 71:036113), and a candidate is kept with probability `p_ij / q`
/// (thinning; Lewis & Shedler 1979, Naval Res. Logist. Q. 26:403), which
/// makes every cell 1 with probability exactly `p_ij`, independently.
/// Each candidate is kept with probability at least 1/2, so the expected
/// number of candidates is below `2 L_expected` plus one per group and row.
#[derive(Clone, Debug)]
pub(crate) struct ProportionalLists {
    row_part: Vec<f64>,
    col_part: Vec<f64>,
    /// Columns by group, ascending within a group; `group_ptr` delimits
    /// the groups and `group_max` is each group's largest column part.
    group_cols: Vec<u32>,
    group_ptr: Vec<usize>,
    group_max: Vec<f64>,
}

impl ProportionalLists {
    fn new<T: Weight>(net: &Network<T>) -> Self {
        let (m, n) = (net.nrows() as f64, net.ncols() as f64);
        let row_part: Vec<f64> = net.row_degrees().iter().map(|&d| d as f64 / n).collect();
        let col_part: Vec<f64> = net.col_degrees().iter().map(|&d| d as f64 / m).collect();
        // The exponent bits of a non-negative float order it by its binary
        // exponent (0 for zero).
        let key = |c: f64| c.to_bits() >> 52;
        let mut order: Vec<u32> = (0..col_part.len() as u32).collect();
        order.sort_by_key(|&j| (std::cmp::Reverse(key(col_part[j as usize])), j));
        let mut group_ptr = vec![0];
        let mut group_max = Vec::new();
        for (t, &j) in order.iter().enumerate() {
            let c = col_part[j as usize];
            if t == 0 || key(c) != key(col_part[order[t - 1] as usize]) {
                if t > 0 {
                    group_ptr.push(t);
                }
                group_max.push(c);
            } else if let Some(g) = group_max.last_mut() {
                *g = g.max(c);
            }
        }
        group_ptr.push(order.len());
        ProportionalLists {
            row_part,
            col_part,
            group_cols: order,
            group_ptr,
            group_max,
        }
    }

    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Csr<f64> {
        let (m, n) = (self.row_part.len(), self.col_part.len());
        let mut indptr = Vec::with_capacity(m + 1);
        indptr.push(0);
        let mut indices: Vec<u32> = Vec::new();
        for &r in &self.row_part {
            let from = indices.len();
            for (g, &cmax) in self.group_max.iter().enumerate() {
                let cols = &self.group_cols[self.group_ptr[g]..self.group_ptr[g + 1]];
                let q = (r + cmax) / 2.0;
                if q <= 0.0 {
                    continue;
                }
                let keep = |rng: &mut R, j: u32| {
                    let p = (r + self.col_part[j as usize]) / 2.0;
                    unit(rng) * q < p
                };
                if q >= 1.0 {
                    for &j in cols {
                        if keep(rng, j) {
                            indices.push(j);
                        }
                    }
                    continue;
                }
                let log_miss = (-q).ln_1p();
                let mut pos = 0usize;
                loop {
                    let gap = ((1.0 - unit(rng)).ln() / log_miss).floor();
                    // `gap` is >= 0 (or NaN/infinite for q that small).
                    let room = (cols.len() - pos) as f64;
                    if gap.is_nan() || gap >= room {
                        break;
                    }
                    pos += gap as usize;
                    let j = cols[pos];
                    if keep(rng, j) {
                        indices.push(j);
                    }
                    pos += 1;
                    if pos >= cols.len() {
                        break;
                    }
                }
            }
            indices[from..].sort_unstable();
            indptr.push(indices.len());
        }
        Csr::ones_from_lists(m, n, indptr, indices)
    }
}
