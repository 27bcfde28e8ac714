//! Weighted bipartite networks with row and column labels.
//!
//! A [`Network`] is an `m x n` table of non-negative finite weights: rows are
//! one guild (plants, hosts, sites), columns the other (visitors, parasites,
//! species). Construction validates every weight and every label, so all later
//! computations may assume a well-formed network.
//!
//! Cells are stored densely (an [`ndarray::Array2`]) or sparsely (compressed
//! rows, [`Csr`]); see [`Network::from_triplets`] for the rule that chooses.

use std::collections::HashMap;
use std::fmt::{Debug, Display};
use std::sync::OnceLock;

use ndarray::{Array2, ArrayView2};
use num_traits::{ToPrimitive, Zero};
use rayon::prelude::*;

use crate::error::{Error, Result};
use crate::storage::bits::BitMatrix;
use crate::tolerance;

/// A weight type: any copyable number that can be compared and converted to
/// `f64` (all primitive integers and floats qualify).
pub trait Weight:
    Copy + PartialOrd + Zero + ToPrimitive + Debug + Display + Send + Sync + 'static
{
    /// The weight as `f64` (exact for integers below 2^53).
    #[inline]
    fn as_f64(self) -> f64 {
        self.to_f64().unwrap_or(f64::NAN)
    }
}

impl<T> Weight for T where
    T: Copy + PartialOrd + Zero + ToPrimitive + Debug + Display + Send + Sync + 'static
{
}

/// Cells in dense tables are capped at this many before an operation that
/// needs a dense table refuses (2^31 cells: 256 MiB as bits).
pub const DENSE_CELL_LIMIT: u128 = 1 << 31;

/// Bytes a dense table may take before an operation refuses it (4 GiB; a
/// sixth of the memory of the machines nidus is built on, so a mistaken
/// dense copy of a huge sparse network fails with a message, not an
/// out-of-memory kill).
pub const DENSE_BYTE_LIMIT: u128 = 1 << 32;

/// Compressed sparse rows: the non-zero cells of each row, columns ascending.
#[derive(Clone, Debug, PartialEq)]
pub struct Csr<T> {
    nrows: usize,
    ncols: usize,
    indptr: Vec<usize>,
    indices: Vec<u32>,
    values: Vec<T>,
}

impl<T: Weight> Csr<T> {
    /// Builds from `(row, col, weight)` triplets: repeated cells are summed
    /// (in input order) and zero weights are dropped.
    ///
    /// The triplets are ordered by a counting sort on the row (stable), then
    /// each row by a stable sort on the column, so repeats of a cell stay in
    /// input order and are summed in it.
    ///
    /// Cost: `O(m + L + sum over rows of d log d)` time (`d` a row's
    /// triplets), `O(m + L)` memory; from 2^16 triplets on, spread over the
    /// threads of the current rayon pool (same result for any number).
    ///
    /// The triplets are not validated: a row index of `nrows` or more
    /// panics, and column indices must be below `ncols`
    /// ([`Network::from_triplets`] checks both and the weights).
    pub fn from_triplets(nrows: usize, ncols: usize, entries: Vec<(u32, u32, T)>) -> Self {
        Self::from_counted_triplets(nrows, ncols, entries, None)
    }

    /// [`from_triplets`](Self::from_triplets), with the triplets of each row
    /// counted beforehand when `counts` is given (`counts[i]` for row `i`,
    /// `nrows` entries), so that a caller already passing over the
    /// triplets saves a pass when they are ordered on one thread.
    ///
    /// The triplets are cut into consecutive parts, one per thread (one
    /// below [`PARALLEL_TRIPLETS`]); each part's rows are counted on its
    /// thread, part `t`'s triplets of row `i` go after those of parts
    /// before `t` (so each row keeps input order), each part is scattered
    /// on its thread, and rows are then sorted and compacted in blocks of
    /// about equal size, one per part. Every row is built exactly as with
    /// one part.
    pub(crate) fn from_counted_triplets(
        nrows: usize,
        ncols: usize,
        entries: Vec<(u32, u32, T)>,
        counts: Option<Vec<usize>>,
    ) -> Self {
        let len = entries.len();
        let parts = triplet_parts(len);
        let part = len.div_ceil(parts).max(1);
        let count = |c: &[(u32, u32, T)]| {
            let mut k = vec![0usize; nrows];
            for &(i, _, _) in c {
                k[i as usize] += 1;
            }
            k
        };
        // Per part and row: the count, then where the part's next triplet
        // of the row goes.
        let mut next: Vec<Vec<usize>> = match counts {
            Some(c) if parts == 1 => vec![c],
            _ if parts == 1 => vec![count(&entries)],
            _ => entries.par_chunks(part).map(count).collect(),
        };
        let mut start = vec![0usize; nrows + 1];
        for i in 0..nrows {
            let mut at = start[i];
            for k in next.iter_mut() {
                let c = k[i];
                k[i] = at;
                at += c;
            }
            start[i + 1] = at;
        }
        debug_assert_eq!(start[nrows], len);
        let mut indices = vec![0u32; len];
        let mut values: Vec<T> = vec![T::zero(); len];
        let out = Scatter {
            indices: indices.as_mut_ptr(),
            values: values.as_mut_ptr(),
        };
        if parts == 1 {
            out.scatter(&entries, &mut next[0]);
        } else {
            entries
                .par_chunks(part)
                .zip(next.par_iter_mut())
                .for_each(|(c, next)| out.scatter(c, next));
        }
        drop(next);
        drop(entries);
        // Sort and compact blocks of consecutive rows with about equal
        // numbers of cells, one per thread.
        let mut bounds = vec![0usize];
        for p in 1..parts {
            let r = start.partition_point(|&s| s < len * p / parts).min(nrows);
            if r > *bounds.last().unwrap_or(&0) {
                bounds.push(r);
            }
        }
        if nrows > *bounds.last().unwrap_or(&0) {
            bounds.push(nrows);
        }
        let mut indptr = vec![0usize; nrows + 1];
        let mut jobs = Vec::with_capacity(bounds.len());
        {
            let (mut idx, mut val, mut ptr) = (&mut indices[..], &mut values[..], &mut indptr[1..]);
            for w in bounds.windows(2) {
                let (r0, r1) = (w[0], w[1]);
                let size = start[r1] - start[r0];
                let (bi, rest_i) = idx.split_at_mut(size);
                let (bv, rest_v) = val.split_at_mut(size);
                let (bp, rest_p) = ptr.split_at_mut(r1 - r0);
                (idx, val, ptr) = (rest_i, rest_v, rest_p);
                jobs.push((r0, r1, bi, bv, bp));
            }
        }
        let start = &start;
        let kept: Vec<usize> = if jobs.len() == 1 {
            jobs.into_iter()
                .map(|(r0, r1, idx, val, ptr)| row_block(start, (r0, r1), idx, val, ptr))
                .collect()
        } else {
            jobs.into_par_iter()
                .map(|(r0, r1, idx, val, ptr)| row_block(start, (r0, r1), idx, val, ptr))
                .collect()
        };
        // Close the gaps left by dropped cells, block by block.
        let mut out = 0;
        for (w, &k) in bounds.windows(2).zip(&kept) {
            let (r0, r1) = (w[0], w[1]);
            let from = start[r0];
            if from != out {
                indices.copy_within(from..from + k, out);
                values.copy_within(from..from + k, out);
            }
            for p in &mut indptr[r0 + 1..=r1] {
                *p += out;
            }
            out += k;
        }
        indices.truncate(out);
        values.truncate(out);
        Csr {
            nrows,
            ncols,
            indptr,
            indices,
            values,
        }
    }

    /// Builds from a dense table, keeping the non-zero cells.
    pub fn from_dense(w: ArrayView2<'_, T>) -> Self {
        let (nrows, ncols) = w.dim();
        let mut indptr = Vec::with_capacity(nrows + 1);
        indptr.push(0);
        let mut indices = Vec::new();
        let mut values = Vec::new();
        for row in w.rows() {
            for (j, &x) in row.iter().enumerate() {
                if !x.is_zero() {
                    indices.push(j as u32);
                    values.push(x);
                }
            }
            indptr.push(indices.len());
        }
        Csr {
            nrows,
            ncols,
            indptr,
            indices,
            values,
        }
    }

    /// Number of rows.
    pub fn nrows(&self) -> usize {
        self.nrows
    }
    /// Number of columns.
    pub fn ncols(&self) -> usize {
        self.ncols
    }
    /// Number of links (stored non-zero cells); the same quantity as
    /// [`Network::links`].
    pub fn links(&self) -> usize {
        self.indices.len()
    }
    /// Old name of [`links`](Self::links).
    #[doc(hidden)]
    pub fn nnz(&self) -> usize {
        self.links()
    }
    /// Row pointer array (`nrows + 1` entries).
    pub fn indptr(&self) -> &[usize] {
        &self.indptr
    }
    /// Column index of each stored cell.
    pub fn indices(&self) -> &[u32] {
        &self.indices
    }
    /// Weight of each stored cell.
    pub fn values(&self) -> &[T] {
        &self.values
    }
    /// Columns and weights of row `i`.
    pub fn row(&self, i: usize) -> (&[u32], &[T]) {
        let (a, b) = (self.indptr[i], self.indptr[i + 1]);
        (&self.indices[a..b], &self.values[a..b])
    }
    /// The same cells with weights as `f64` (exact for integers below 2^53).
    pub(crate) fn to_f64(&self) -> Csr<f64> {
        Csr {
            nrows: self.nrows,
            ncols: self.ncols,
            indptr: self.indptr.clone(),
            indices: self.indices.clone(),
            values: self.values.iter().map(|x| x.as_f64()).collect(),
        }
    }

    /// Compressed rows with every non-zero weight read as `f64`, borrowed
    /// when they already are.
    pub(crate) fn as_f64(&self) -> std::borrow::Cow<'_, Csr<f64>> {
        match (self as &dyn std::any::Any).downcast_ref::<Csr<f64>>() {
            Some(c) => std::borrow::Cow::Borrowed(c),
            None => std::borrow::Cow::Owned(self.to_f64()),
        }
    }

    /// The transpose, also compressed by rows (that is, the compressed
    /// columns of `self`). Cost `O(m + n + L)`.
    pub fn transpose(&self) -> Csr<T> {
        let mut indptr = vec![0usize; self.ncols + 1];
        for &j in &self.indices {
            indptr[j as usize + 1] += 1;
        }
        for j in 0..self.ncols {
            indptr[j + 1] += indptr[j];
        }
        let mut next = indptr.clone();
        let mut indices = vec![0u32; self.nnz()];
        let mut values = vec![T::zero(); self.nnz()];
        for i in 0..self.nrows {
            let (cols, vals) = self.row(i);
            for (&j, &w) in cols.iter().zip(vals) {
                let slot = &mut next[j as usize];
                indices[*slot] = i as u32;
                values[*slot] = w;
                *slot += 1;
            }
        }
        Csr {
            nrows: self.ncols,
            ncols: self.nrows,
            indptr,
            indices,
            values,
        }
    }
}

impl Csr<f64> {
    /// Binary rows (every weight 1) from lists the caller guarantees: each
    /// row's columns distinct, ascending and below `ncols`, `indptr`
    /// starting at 0 and ending at `indices.len()`.
    pub(crate) fn ones_from_lists(
        nrows: usize,
        ncols: usize,
        indptr: Vec<usize>,
        indices: Vec<u32>,
    ) -> Self {
        debug_assert_eq!(indptr.len(), nrows + 1);
        debug_assert_eq!(indptr.last().copied(), Some(indices.len()));
        let values = vec![1.0; indices.len()];
        Csr {
            nrows,
            ncols,
            indptr,
            indices,
            values,
        }
    }

    /// The row pointers and the column indices, the latter writable (row
    /// lengths cannot change); the caller keeps every row ascending.
    pub(crate) fn lists_mut(&mut self) -> (&[usize], &mut [u32]) {
        (&self.indptr, &mut self.indices)
    }
}

/// Fewest triplets that [`Csr::from_counted_triplets`] splits over threads.
const PARALLEL_TRIPLETS: usize = 1 << 16;

/// Parts [`Csr::from_counted_triplets`] cuts `len` triplets into: one
/// below [`PARALLEL_TRIPLETS`], else one per thread, at most 8 (each part
/// holds a position per row).
fn triplet_parts(len: usize) -> usize {
    if len < PARALLEL_TRIPLETS {
        1
    } else {
        rayon::current_num_threads().clamp(1, 8)
    }
}

/// The kept arrays of [`Csr::from_counted_triplets`], written by one
/// thread per part at once, each at its own positions.
struct Scatter<T> {
    indices: *mut u32,
    values: *mut T,
}

// SAFETY: the threads write through these pointers at disjoint positions
// (see `Scatter::scatter`), and nothing reads the arrays until all have
// finished.
unsafe impl<T: Send> Send for Scatter<T> {}
unsafe impl<T: Send> Sync for Scatter<T> {}

impl<T: Copy> Scatter<T> {
    /// Writes one part's triplets, in order: a triplet of row `i` at
    /// `next[i]`, which then moves on. The positions of each part and row
    /// are a range of their own, counted for exactly that part's triplets
    /// of that row and within the arrays.
    /// The destination of the triplet 16 ahead is prefetched.
    fn scatter(&self, part: &[(u32, u32, T)], next: &mut [usize]) {
        const AHEAD: usize = 16;
        for (k, &(i, j, w)) in part.iter().enumerate() {
            if let Some(&(r, _, _)) = part.get(k + AHEAD) {
                let s = next[r as usize];
                prefetch_write(self.indices.wrapping_add(s));
                prefetch_write(self.values.wrapping_add(s));
            }
            let slot = &mut next[i as usize];
            let at = *slot;
            // SAFETY: `at` lies in this part's range for row `i`, inside
            // the arrays and written by no other thread (see above).
            unsafe {
                *self.indices.add(at) = j;
                *self.values.add(at) = w;
            }
            *slot += 1;
        }
    }
}

/// One block of rows `r0..r1` of [`Csr::from_counted_triplets`], scattered
/// into `idx` and `val` (the block's part of the kept arrays,
/// `start[r0]..start[r1]`): sorts each row by column (stably), sums
/// repeats in input order and drops zero cells, compacting within the
/// block. Writes each row's end, relative to the block, into `ptr` and
/// returns the number of cells kept.
fn row_block<T: Weight>(
    start: &[usize],
    (r0, r1): (usize, usize),
    idx: &mut [u32],
    val: &mut [T],
    ptr: &mut [usize],
) -> usize {
    let base = start[r0];
    let mut out = 0;
    for (i, end) in (r0..r1).zip(ptr.iter_mut()) {
        let (a, b) = (start[i] - base, start[i + 1] - base);
        sort_row(&mut idx[a..b], &mut val[a..b]);
        let mut k = a;
        while k < b {
            let j = idx[k];
            let mut w = val[k];
            k += 1;
            while k < b && idx[k] == j {
                w = w + val[k];
                k += 1;
            }
            // Drop zero cells (a zero weight, or zeros summed).
            if !w.is_zero() {
                idx[out] = j;
                val[out] = w;
                out += 1;
            }
        }
        *end = out;
    }
    out
}

/// Sorts one row's cells by column, stably (equal columns keep their
/// order): an insertion sort for short rows, a library stable sort of pairs
/// for long ones.
fn sort_row<T: Copy>(cols: &mut [u32], vals: &mut [T]) {
    if cols.len() <= 32 {
        for k in 1..cols.len() {
            let (j, w) = (cols[k], vals[k]);
            let mut p = k;
            while p > 0 && cols[p - 1] > j {
                cols[p] = cols[p - 1];
                vals[p] = vals[p - 1];
                p -= 1;
            }
            cols[p] = j;
            vals[p] = w;
        }
        return;
    }
    if cols.is_sorted() {
        return;
    }
    let mut pairs: Vec<(u32, T)> = cols.iter().copied().zip(vals.iter().copied()).collect();
    pairs.sort_by_key(|&(j, _)| j);
    for ((c, v), (j, w)) in cols.iter_mut().zip(vals.iter_mut()).zip(pairs) {
        *c = j;
        *v = w;
    }
}

/// Views of a network built on first use and kept (a network never
/// changes after construction): compressed rows and columns with `f64`
/// weights, and the bit-packed binary view.
#[derive(Clone, Debug, Default)]
pub(crate) struct Views {
    pub(crate) rows: OnceLock<Csr<f64>>,
    pub(crate) cols: OnceLock<Csr<f64>>,
    pub(crate) bits: OnceLock<BitMatrix>,
}

#[derive(Clone, Debug)]
enum Cells<T> {
    Dense(Array2<T>),
    Sparse(Csr<T>),
}

/// A bipartite network: validated non-negative finite weights with unique
/// row and column labels, at least one row, one column and one interaction.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::Network;
/// let net = Network::from_array(array![[3.0, 1.0], [2.0, 0.0]]).unwrap();
/// assert_eq!((net.nrows(), net.ncols(), net.links()), (2, 2, 3));
/// assert!(net.is_weighted());
/// ```
#[derive(Clone, Debug)]
pub struct Network<T: Weight = f64> {
    row_labels: Vec<String>,
    col_labels: Vec<String>,
    cells: Cells<T>,
    row_degrees: Vec<usize>,
    col_degrees: Vec<usize>,
    views: Views,
}

fn default_labels(prefix: &str, n: usize) -> Vec<String> {
    (1..=n).map(|k| format!("{prefix}{k}")).collect()
}

fn check_labels(side: &'static str, labels: &[String], expected: usize) -> Result<()> {
    if labels.len() != expected {
        return Err(Error::LabelCount {
            side,
            labels: labels.len(),
            expected,
        });
    }
    let mut seen: HashMap<&str, usize> = HashMap::with_capacity(labels.len());
    for (k, l) in labels.iter().enumerate() {
        if let Some(first) = seen.insert(l.as_str(), k) {
            return Err(Error::DuplicateLabel {
                side,
                label: l.clone(),
                first: first + 1,
                second: k + 1,
            });
        }
    }
    Ok(())
}

/// Checks one weight: returns the problem, if any.
pub(crate) fn weight_problem<T: Weight>(w: T) -> Option<&'static str> {
    let x = w.as_f64();
    if x.is_nan() {
        Some("not a number")
    } else if x.is_infinite() {
        Some("infinite")
    } else if w < T::zero() {
        Some("negative")
    } else {
        None
    }
}

impl<T: Weight> Network<T> {
    /// Builds a network from a dense table and its labels.
    ///
    /// Errors: label counts that differ from the table's shape, duplicate
    /// labels, a negative, NaN or infinite weight (naming its row and
    /// column), no rows, no columns, or no non-zero cell.
    pub fn from_dense(
        weights: Array2<T>,
        row_labels: Vec<String>,
        col_labels: Vec<String>,
    ) -> Result<Self> {
        let (m, n) = weights.dim();
        check_shape(m, n)?;
        check_labels("row", &row_labels, m)?;
        check_labels("column", &col_labels, n)?;
        let mut row_degrees = vec![0usize; m];
        let mut col_degrees = vec![0usize; n];
        for ((i, j), &w) in weights.indexed_iter() {
            if let Some(problem) = weight_problem(w) {
                return Err(Error::BadWeight {
                    row: row_labels[i].clone(),
                    col: col_labels[j].clone(),
                    value: w.to_string(),
                    problem,
                });
            }
            if !w.is_zero() {
                row_degrees[i] += 1;
                col_degrees[j] += 1;
            }
        }
        let net = Network {
            row_labels,
            col_labels,
            cells: Cells::Dense(weights),
            row_degrees,
            col_degrees,
            views: Views::default(),
        };
        net.check_links()?;
        Ok(net)
    }

    /// Builds a network from a dense table, labelling rows `R1..Rm` and
    /// columns `C1..Cn`.
    pub fn from_array(weights: Array2<T>) -> Result<Self> {
        let (m, n) = weights.dim();
        Self::from_dense(weights, default_labels("R", m), default_labels("C", n))
    }

    /// Builds a network from `(row, column, weight)` triplets (0-based
    /// indices into the label lists). Repeated cells are summed.
    ///
    /// Storage rule: the cells are kept sparse (compressed rows) when the
    /// table has more than 2^22 cells (about 4 million) and a fill below 5 %;
    /// otherwise dense. Both give identical results for every index.
    pub fn from_triplets(
        row_labels: Vec<String>,
        col_labels: Vec<String>,
        entries: Vec<(u32, u32, T)>,
    ) -> Result<Self> {
        check_shape(row_labels.len(), col_labels.len())?;
        check_labels("row", &row_labels, row_labels.len())?;
        check_labels("column", &col_labels, col_labels.len())?;
        Self::from_triplets_distinct(row_labels, col_labels, entries)
    }

    /// [`from_triplets`](Self::from_triplets) for labels the caller knows
    /// to be distinct on each side (the edge-list reader interns them), so
    /// they are not checked again; everything else is.
    pub(crate) fn from_triplets_distinct(
        row_labels: Vec<String>,
        col_labels: Vec<String>,
        entries: Vec<(u32, u32, T)>,
    ) -> Result<Self> {
        let (m, n) = (row_labels.len(), col_labels.len());
        check_shape(m, n)?;
        debug_assert!(check_labels("row", &row_labels, m).is_ok());
        debug_assert!(check_labels("column", &col_labels, n).is_ok());
        let problem = |&(i, j, w): &(u32, u32, T)| -> Option<Error> {
            if i as usize >= m || j as usize >= n {
                return Some(Error::InvalidArgument(format!(
                    "cell ({i}, {j}) lies outside the {m} x {n} network"
                )));
            }
            weight_problem(w).map(|problem| Error::BadWeight {
                row: row_labels[i as usize].clone(),
                col: col_labels[j as usize].clone(),
                value: w.to_string(),
                problem,
            })
        };
        let counts = if triplet_parts(entries.len()) == 1 {
            // The rows' triplets are counted in the checking pass.
            let mut counts = vec![0usize; m];
            for e in &entries {
                if let Some(err) = problem(e) {
                    return Err(err);
                }
                counts[e.0 as usize] += 1;
            }
            Some(counts)
        } else {
            // Checked on all threads; the first bad triplet is reported.
            if let Some(err) = entries.par_iter().find_map_first(problem) {
                return Err(err);
            }
            None
        };
        let csr = Csr::from_counted_triplets(m, n, entries, counts);
        let cells_total = (m as u128) * (n as u128);
        let sparse = cells_total > tolerance::SPARSE_MIN_CELLS
            && (csr.links() as f64) < tolerance::SPARSE_MAX_FILL * cells_total as f64;
        let cells = if sparse {
            Cells::Sparse(csr)
        } else {
            let mut w = Array2::<T>::zeros((m, n));
            for i in 0..m {
                let (cols, vals) = csr.row(i);
                for (&j, &x) in cols.iter().zip(vals) {
                    w[[i, j as usize]] = x;
                }
            }
            Cells::Dense(w)
        };
        Self::with_cells(row_labels, col_labels, cells)
    }

    /// Builds from already-validated cells, computing the degrees.
    fn with_cells(
        row_labels: Vec<String>,
        col_labels: Vec<String>,
        cells: Cells<T>,
    ) -> Result<Self> {
        let (m, n) = (row_labels.len(), col_labels.len());
        let mut row_degrees = vec![0usize; m];
        let mut col_degrees = vec![0usize; n];
        match &cells {
            Cells::Dense(w) => {
                for ((i, j), x) in w.indexed_iter() {
                    if !x.is_zero() {
                        row_degrees[i] += 1;
                        col_degrees[j] += 1;
                    }
                }
            }
            Cells::Sparse(c) => {
                for i in 0..m {
                    row_degrees[i] = c.indptr[i + 1] - c.indptr[i];
                }
                for &j in &c.indices {
                    col_degrees[j as usize] += 1;
                }
            }
        }
        let net = Network {
            row_labels,
            col_labels,
            cells,
            row_degrees,
            col_degrees,
            views: Views::default(),
        };
        net.check_links()?;
        Ok(net)
    }

    fn check_links(&self) -> Result<()> {
        if self.links() == 0 {
            return Err(Error::EmptyNetwork("no cell holds a non-zero weight"));
        }
        Ok(())
    }

    /// Number of rows `m`.
    pub fn nrows(&self) -> usize {
        self.row_labels.len()
    }
    /// Number of columns `n`.
    pub fn ncols(&self) -> usize {
        self.col_labels.len()
    }
    /// Row labels, in input order.
    pub fn row_labels(&self) -> &[String] {
        &self.row_labels
    }
    /// Column labels, in input order.
    pub fn col_labels(&self) -> &[String] {
        &self.col_labels
    }
    /// Number of non-zero cells `L`.
    pub fn links(&self) -> usize {
        self.row_degrees.iter().sum()
    }
    /// Fill (connectance) `L / (m n)`.
    pub fn fill(&self) -> f64 {
        self.links() as f64 / (self.nrows() as f64 * self.ncols() as f64)
    }
    /// Degree (number of non-zero cells) of every row.
    pub fn row_degrees(&self) -> &[usize] {
        &self.row_degrees
    }
    /// Degree of every column.
    pub fn col_degrees(&self) -> &[usize] {
        &self.col_degrees
    }
    /// True when the cells are stored sparsely.
    pub fn is_sparse(&self) -> bool {
        matches!(self.cells, Cells::Sparse(_))
    }
    /// The dense table, when the network is stored densely.
    pub fn dense(&self) -> Option<ArrayView2<'_, T>> {
        match &self.cells {
            Cells::Dense(w) => Some(w.view()),
            Cells::Sparse(_) => None,
        }
    }
    /// A dense copy of the table; refuses tables above [`DENSE_CELL_LIMIT`] cells.
    pub fn to_dense(&self) -> Result<Array2<T>> {
        match &self.cells {
            Cells::Dense(w) => Ok(w.clone()),
            Cells::Sparse(c) => {
                check_dense_size(
                    "a dense copy",
                    self.nrows(),
                    self.ncols(),
                    std::mem::size_of::<T>(),
                )?;
                let mut w = Array2::<T>::zeros((self.nrows(), self.ncols()));
                for i in 0..self.nrows() {
                    let (cols, vals) = c.row(i);
                    for (&j, &x) in cols.iter().zip(vals) {
                        w[[i, j as usize]] = x;
                    }
                }
                Ok(w)
            }
        }
    }
    /// The non-zero cells compressed by rows (built from a dense table, or borrowed).
    pub fn csr(&self) -> std::borrow::Cow<'_, Csr<T>> {
        match &self.cells {
            Cells::Dense(w) => std::borrow::Cow::Owned(Csr::from_dense(w.view())),
            Cells::Sparse(c) => std::borrow::Cow::Borrowed(c),
        }
    }
    /// Weight of cell `(i, j)`.
    pub fn get(&self, i: usize, j: usize) -> T {
        match &self.cells {
            Cells::Dense(w) => w[[i, j]],
            Cells::Sparse(c) => {
                let (cols, vals) = c.row(i);
                match cols.binary_search(&(j as u32)) {
                    Ok(k) => vals[k],
                    Err(_) => T::zero(),
                }
            }
        }
    }
    /// True when any non-zero weight differs from 1.
    pub fn is_weighted(&self) -> bool {
        let one = |x: &T| x.is_zero() || x.as_f64() == 1.0;
        match &self.cells {
            Cells::Dense(w) => !w.iter().all(one),
            Cells::Sparse(c) => !c.values.iter().all(one),
        }
    }
    /// Sum of weights in every row.
    pub fn row_totals(&self) -> Vec<f64> {
        let csr = self.csr();
        (0..self.nrows())
            .map(|i| csr.row(i).1.iter().map(|x| x.as_f64()).sum())
            .collect()
    }
    /// Sum of weights in every column.
    pub fn col_totals(&self) -> Vec<f64> {
        let csr = self.csr();
        let mut t = vec![0.0; self.ncols()];
        for i in 0..self.nrows() {
            let (cols, vals) = csr.row(i);
            for (&j, &x) in cols.iter().zip(vals) {
                t[j as usize] += x.as_f64();
            }
        }
        t
    }
    /// The bit-packed binary view (`1` where the weight is non-zero).
    /// Refuses tables above [`DENSE_CELL_LIMIT`] cells.
    pub fn binary(&self) -> Result<BitMatrix> {
        let (m, n) = (self.nrows(), self.ncols());
        check_dense_size("the bit-packed binary view", m, n, 0)?;
        Ok(match &self.cells {
            Cells::Dense(w) => pack_dense(w.view()),
            Cells::Sparse(c) => pack_csr(c),
        })
    }
    /// The cached bit-packed view (built on first use).
    pub(crate) fn cached_bits(&self) -> Result<&BitMatrix> {
        if let Some(b) = self.views.bits.get() {
            return Ok(b);
        }
        let b = self.binary()?;
        Ok(self.views.bits.get_or_init(|| b))
    }
    /// The cached compressed rows with `f64` weights (borrowed from a
    /// sparse `Network<f64>`, else built on first use).
    pub(crate) fn cached_rows(&self) -> &Csr<f64> {
        if let Cells::Sparse(c) = &self.cells {
            if let Some(c) = (c as &dyn std::any::Any).downcast_ref::<Csr<f64>>() {
                return c;
            }
        }
        self.views.rows.get_or_init(|| match &self.cells {
            Cells::Dense(w) => {
                let c: Box<dyn std::any::Any> = Box::new(Csr::from_dense(w.view()));
                match c.downcast::<Csr<f64>>() {
                    Ok(c) => *c,
                    Err(c) => c
                        .downcast::<Csr<T>>()
                        .expect("the cells' own type")
                        .to_f64(),
                }
            }
            Cells::Sparse(c) => c.to_f64(),
        })
    }
    /// The cached compressed columns with `f64` weights.
    pub(crate) fn cached_cols(&self) -> &Csr<f64> {
        self.views
            .cols
            .get_or_init(|| self.cached_rows().transpose())
    }
    /// The network with rows and columns swapped.
    pub fn transpose(&self) -> Network<T> {
        let cells = match &self.cells {
            Cells::Dense(w) => Cells::Dense(w.t().to_owned()),
            Cells::Sparse(c) => Cells::Sparse(c.transpose()),
        };
        Network {
            row_labels: self.col_labels.clone(),
            col_labels: self.row_labels.clone(),
            cells,
            row_degrees: self.col_degrees.clone(),
            col_degrees: self.row_degrees.clone(),
            views: Views::default(),
        }
    }
    /// The same network with every weight converted to `f64`.
    pub fn to_f64(&self) -> Network<f64> {
        let cells = match &self.cells {
            Cells::Dense(w) => Cells::Dense(w.mapv(|x| x.as_f64())),
            Cells::Sparse(c) => Cells::Sparse(Csr {
                nrows: c.nrows,
                ncols: c.ncols,
                indptr: c.indptr.clone(),
                indices: c.indices.clone(),
                values: c.values.iter().map(|x| x.as_f64()).collect(),
            }),
        };
        Network {
            row_labels: self.row_labels.clone(),
            col_labels: self.col_labels.clone(),
            cells,
            row_degrees: self.row_degrees.clone(),
            col_degrees: self.col_degrees.clone(),
            views: Views::default(),
        }
    }
    /// A network with the same labels and new cells (used by null models);
    /// the new weights are validated like any input.
    pub fn with_weights(&self, weights: Array2<T>) -> Result<Network<T>> {
        Network::from_dense(weights, self.row_labels.clone(), self.col_labels.clone())
    }
}

/// Packs a dense table into bits (`1` where the weight is non-zero): whole
/// words at a time, rows in parallel.
pub(crate) fn pack_dense<T: Weight>(w: ArrayView2<'_, T>) -> BitMatrix {
    let (m, n) = w.dim();
    BitMatrix::from_row_fn(m, n, |i, words| {
        let row = w.row(i);
        match row.as_slice() {
            Some(cells) => crate::kernels::pack::pack_row(cells, words),
            None => {
                for (j, c) in row.iter().enumerate() {
                    if !c.is_zero() {
                        words[j / 64] |= 1 << (j % 64);
                    }
                }
            }
        }
    })
}

/// Packs compressed rows into bits.
pub(crate) fn pack_csr<T: Weight>(c: &Csr<T>) -> BitMatrix {
    let mut b = BitMatrix::zeros(c.nrows(), c.ncols());
    for i in 0..c.nrows() {
        for &j in c.row(i).0 {
            b.set(i, j as usize, true);
        }
    }
    b
}

pub(crate) fn check_shape(m: usize, n: usize) -> Result<()> {
    if m == 0 {
        return Err(Error::EmptyNetwork("it has no rows"));
    }
    if n == 0 {
        return Err(Error::EmptyNetwork("it has no columns"));
    }
    if m > u32::MAX as usize || n > u32::MAX as usize {
        return Err(Error::InvalidArgument(format!(
            "{m} x {n} exceeds the 2^32 species a side that nidus indexes"
        )));
    }
    Ok(())
}

/// Errors when a dense `m x n` table of `bytes_per_cell` (0: one bit) would
/// exceed [`DENSE_CELL_LIMIT`] cells or [`DENSE_BYTE_LIMIT`] bytes.
pub fn check_dense_size(
    what: &'static str,
    m: usize,
    n: usize,
    bytes_per_cell: usize,
) -> Result<()> {
    let cells = m as u128 * n as u128;
    let bytes = if bytes_per_cell == 0 {
        cells.div_ceil(8)
    } else {
        cells * bytes_per_cell as u128
    };
    if cells > DENSE_CELL_LIMIT || bytes > DENSE_BYTE_LIMIT {
        return Err(Error::TooLarge {
            what,
            rows: m,
            cols: n,
            bytes,
        });
    }
    Ok(())
}

/// Starts bringing the cache line of `p` into cache ahead of a write: a
/// prefetch on x86_64 (it retires at once and reads nothing the program
/// sees, so an address past an array's end is harmless), nothing elsewhere.
#[inline(always)]
fn prefetch_write<U>(p: *const U) {
    #[cfg(target_arch = "x86_64")]
    // SAFETY: SSE is part of every x86_64 target, and a prefetch of any
    // address reads nothing the program sees and cannot fault.
    unsafe {
        std::arch::x86_64::_mm_prefetch::<{ std::arch::x86_64::_MM_HINT_T0 }>(p.cast::<i8>());
    }
    #[cfg(not(target_arch = "x86_64"))]
    let _ = p;
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn validates_weights_and_labels() {
        let e = Network::from_array(array![[1.0, -2.0]]).unwrap_err();
        assert!(e.to_string().contains("'R1', column 'C2'"), "{e}");
        assert!(Network::from_array(array![[1.0, f64::NAN]]).is_err());
        assert!(Network::from_array(array![[1.0, f64::INFINITY]]).is_err());
        assert!(Network::from_array(array![[0.0, 0.0]]).is_err());
        assert!(Network::from_array(Array2::<f64>::zeros((0, 3))).is_err());
        let e = Network::from_dense(
            array![[1, 0], [0, 1]],
            vec!["a".into(), "a".into()],
            vec!["x".into(), "y".into()],
        )
        .unwrap_err();
        assert!(matches!(
            e,
            Error::DuplicateLabel {
                first: 1,
                second: 2,
                ..
            }
        ));
    }

    /// Compressed rows from triplets against brute force: for every cell in
    /// row-major order, its triplets summed in input order (floating-point
    /// addition is not associative, so the order shows in the bits: 1e16 +
    /// 1 + 1 differs from 1 + 1 + 1e16), cells summing to zero dropped.
    #[test]
    fn triplets_match_brute_force_sums_in_input_order() {
        use rand::{Rng, SeedableRng};
        let weights = [0.0, 0.1, 0.2, 1.0, -1.0, 1e16, -1e16, 3.0];
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(7);
        for (m, n, len) in [
            (1, 1, 5),
            (3, 4, 40),
            (50, 7, 2000),
            (200, 300, 500),
            (2, 1000, 3000),
        ] {
            let entries: Vec<(u32, u32, f64)> = (0..len)
                .map(|_| {
                    (
                        rng.random_range(0..m as u32),
                        rng.random_range(0..n as u32),
                        weights[rng.random_range(0..weights.len())],
                    )
                })
                .collect();
            let csr = Csr::from_triplets(m, n, entries.clone());
            let (mut indptr, mut indices, mut values) = (vec![0usize], vec![], vec![]);
            for i in 0..m as u32 {
                for j in 0..n as u32 {
                    let sum = entries
                        .iter()
                        .filter(|e| (e.0, e.1) == (i, j))
                        .map(|e| e.2)
                        .reduce(|a, b| a + b);
                    if let Some(w) = sum.filter(|w| *w != 0.0) {
                        indices.push(j);
                        values.push(w.to_bits());
                    }
                }
                indptr.push(indices.len());
            }
            assert_eq!(csr.indptr(), &indptr[..]);
            assert_eq!(csr.indices(), &indices[..]);
            let bits: Vec<u64> = csr.values().iter().map(|w| w.to_bits()).collect();
            assert_eq!(bits, values);
        }
    }

    /// The same brute-force rule on inputs large enough to be split over
    /// threads (rows built in blocks, see `row_block`): every thread count
    /// gives the cells of the rule bit for bit, with short rows, long rows
    /// (the library sort), empty rows and zero sums.
    #[test]
    fn triplets_in_row_blocks_match_brute_force_for_any_thread_count() {
        use rand::{Rng, SeedableRng};
        let weights = [0.0, 0.1, 0.2, 1.0, -1.0, 1e16, -1e16, 3.0];
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(11);
        for (m, n, len) in [(3000, 400, 100_000), (20, 60, 70_000), (200_000, 9, 80_000)] {
            let entries: Vec<(u32, u32, f64)> = (0..len)
                .map(|_| {
                    (
                        rng.random_range(0..m as u32),
                        rng.random_range(0..n as u32),
                        weights[rng.random_range(0..weights.len())],
                    )
                })
                .collect();
            // The rule: cells in row-major order, each the sum of its
            // triplets in input order, zero sums dropped.
            let mut order: Vec<usize> = (0..len).collect();
            order.sort_by_key(|&k| (entries[k].0, entries[k].1, k));
            let (mut indptr, mut indices, mut values) = (vec![0usize; m + 1], vec![], vec![]);
            let mut k = 0;
            while k < len {
                let (i, j, mut w) = entries[order[k]];
                k += 1;
                while k < len && (entries[order[k]].0, entries[order[k]].1) == (i, j) {
                    w += entries[order[k]].2;
                    k += 1;
                }
                if w != 0.0 {
                    indices.push(j);
                    values.push(w.to_bits());
                    indptr[i as usize + 1] += 1;
                }
            }
            for i in 0..m {
                indptr[i + 1] += indptr[i];
            }
            for threads in 1..=4 {
                let csr = on_threads(threads, || Csr::from_triplets(m, n, entries.clone()));
                assert_eq!(csr.indptr(), &indptr[..], "{m} x {n}, {threads} threads");
                assert_eq!(csr.indices(), &indices[..], "{m} x {n}, {threads} threads");
                let bits: Vec<u64> = csr.values().iter().map(|w| w.to_bits()).collect();
                assert_eq!(bits, values, "{m} x {n}, {threads} threads");
            }
        }
    }

    /// `f` run on a pool of `threads` threads.
    fn on_threads<R: Send>(threads: usize, f: impl FnOnce() -> R + Send) -> R {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(f)
    }

    /// Large triplet sets are checked on all threads; the error is the
    /// first bad triplet's, as on one thread.
    #[test]
    fn first_bad_triplet_is_reported_for_any_thread_count() {
        let labels = |p: &str, k: usize| (0..k).map(|i| format!("{p}{i}")).collect::<Vec<_>>();
        let mut entries: Vec<(u32, u32, f64)> = (0..100_000u32)
            .map(|k| (k % 300, (k * 7) % 200, 1.0 + (k % 5) as f64))
            .collect();
        entries[70_000].2 = f64::NAN;
        entries[40_000].2 = -2.0;
        entries[90_000].0 = 300; // outside the 300 rows
        let first_error = |entries: &Vec<(u32, u32, f64)>, threads| {
            on_threads(threads, || {
                Network::from_triplets(labels("r", 300), labels("c", 200), entries.clone())
            })
            .unwrap_err()
        };
        for threads in 1..=3 {
            let err = first_error(&entries, threads);
            let (i, j) = (40_000 % 300, (40_000 * 7) % 200);
            assert_eq!(
                err.to_string(),
                Error::BadWeight {
                    row: format!("r{i}"),
                    col: format!("c{j}"),
                    value: "-2".into(),
                    problem: "negative",
                }
                .to_string(),
                "{threads} threads"
            );
        }
        entries[40_000].2 = 1.0;
        entries[70_000].2 = 1.0;
        for threads in 1..=3 {
            let err = first_error(&entries, threads);
            assert!(
                err.to_string().contains("(300, "),
                "{threads} threads: {err}"
            );
        }
    }

    #[test]
    fn triplets_sum_repeats_and_match_dense() {
        let rows = vec!["a".to_string(), "b".into()];
        let cols = vec!["x".to_string(), "y".into(), "z".into()];
        let net = Network::from_triplets(
            rows,
            cols,
            vec![(0, 1, 2u32), (1, 0, 1), (0, 1, 3), (1, 2, 0)],
        )
        .unwrap();
        assert_eq!(net.get(0, 1), 5);
        assert_eq!(net.links(), 2);
        assert_eq!(net.row_degrees(), &[1, 1]);
        assert_eq!(net.col_degrees(), &[1, 1, 0]);
        let t = net.csr().transpose();
        assert_eq!(t.row(1), (&[0u32][..], &[5u32][..]));
    }

    /// A dense copy of a sparse network is refused by bytes, not only by
    /// cells: 30,000 x 30,000 is under 2^31 cells but 7.2 GB as f64.
    #[test]
    fn dense_copy_of_huge_sparse_network_is_refused() {
        let labels = |p: &str| (0..30_000).map(|k| format!("{p}{k}")).collect::<Vec<_>>();
        let net = Network::from_triplets(labels("r"), labels("c"), vec![(0, 0, 1.0f64)]).unwrap();
        assert!(net.is_sparse());
        assert!(
            matches!(net.to_dense(), Err(Error::TooLarge { bytes, .. }) if bytes == 7_200_000_000)
        );
        assert!(net.binary().is_ok(), "the bit view is 112 MB and allowed");
    }
}
