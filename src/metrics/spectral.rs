//! Spectral radius (Staniczenko, Kopp & Allesina 2013, Nat. Commun. 4:1391).
//!
//! The spectral radius of the bipartite adjacency matrix `[[0, W], [W^T, 0]]`
//! equals the largest singular value of `W`, that is the square root of the
//! largest eigenvalue of the Gram matrix `W^T W` (or `W W^T`, whichever is
//! smaller). nidus finds it by the Lanczos method on the Gram operator,
//! applied through two sparse products (`W x`, then `W^T` of that) and never
//! formed. The basis is kept orthogonal (three-term recurrence plus
//! classical Gram-Schmidt against the whole basis, a second pass when the
//! first removed much) and restarts from the current Ritz vector every
//! [`crate::numerics::lanczos::BASIS`] steps (the solver lives in
//! [`crate::numerics::lanczos`]; this file supplies the operator).
//!
//! **Start vector.** The all-ones vector, normalised. For a non-negative
//! matrix the top eigenspace of the Gram matrix holds a non-negative vector
//! (Perron-Frobenius), which a strictly positive start cannot be orthogonal
//! to; so the largest eigenvalue is never missed, and no randomness is used.
//!
//! **Stopping rule.** Let `theta` be the largest Ritz value, `r` its residual
//! norm (`beta_k |s_k|`), `r2` the second Ritz value's, and `g` the distance
//! between the two Ritz values less `r + r2`. There is an eigenvalue within
//! `r` of `theta`, and within `r^2 / g` once `g` reflects the true gap
//! (Parlett, *The Symmetric Eigenvalue Problem*, 1998; the bound's exact
//! form and its place in the book are recalled, not checked: the stopping
//! rule's accuracy is instead checked in the tests against an SVD).
//! The method stops when `r <= 1e-12 theta`; or when `g > 0`,
//! `r^2 <= 1e-12 theta g` and `theta` changed by at most `1e-12 theta` in the
//! last step; or when the Krylov space is invariant (`beta_k` negligible).
//! On the singular value, `sqrt(theta)`, the tests saw relative errors of at
//! most `4e-12` against nalgebra's SVD and closed forms, inside the `1e-10`
//! that METHODS.md §3 asks. Two equal top singular values (say two identical
//! disconnected blocks) do not slow it: the Krylov space of one start vector
//! meets their common eigenspace in a single direction, so the Lanczos
//! iteration sees one eigenvalue and the gap to the next distinct one.
//!
//! **Crowded top.** When the top of the spectrum is a near-continuum (a long
//! band or chain of species, as with turnover along a gradient), a short
//! restarted basis converges very slowly. After 150 products the method
//! continues from the current Ritz vector without reorthogonalisation or
//! restarts (memory `O(d)`), tracking the largest Ritz value by Sturm
//! bisection and stopping when it has settled (see `long_lanczos` in the
//! source). This phase can take thousands of products (a chain of 20,000
//! species: about 3 s here); it gives up with [`crate::Error::NoConvergence`] after
//! about `3e10` multiply-adds.
//!
//! Cost per step: two sparse products (`O(L)`, parallel over rows) and the
//! reorthogonalisation (`O(k d)` for basis size `k <= 30` and
//! `d = min(m, n)`); typically 10-40 steps. Memory `O(L + m + n)` for the
//! transposed lists plus `30 d` doubles for the basis. All sums are taken in
//! a fixed order, so the value is the same for any number of threads.

use std::borrow::Cow;

use rayon::prelude::*;

use crate::error::{Error, Result};
use crate::metrics::registry::IndexOptions;
use crate::storage::{BitMatrix, Layout, NetView};
use crate::storage::{Csr, Weight};

/// The spectral radius of a network's weighted and binary views.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SpectralRadius {
    /// Largest singular value of the weight matrix `W`.
    pub weighted: f64,
    /// Largest singular value of the binary view.
    pub binary: f64,
    /// `binary / sqrt(L)`: 1 exactly when the links form one full block.
    pub binary_normalized: f64,
}

/// Spectral radius `rho` of any [`NetView`]: the largest eigenvalue of the
/// adjacency matrix `[[0, W], [W^T, 0]]`, which is the largest singular value
/// of `W`; for the weighted matrix, for its binary view and for the binary
/// value divided by `sqrt(L)`. Binary facts: `sqrt(max degree) <= rho <=
/// sqrt(L)`, an all-ones `r x c` block gives `sqrt(r c)`.
///
/// Lanczos on the Gram operator through sparse products (see the
/// [module](self) notes for the start vector and stopping rule); the dense
/// `(m + n)^2` adjacency is never formed, and a sparsely stored network is
/// never made dense. Cost: `O(k L)` for `k` steps (usually 10-40; up to
/// thousands when the top of the spectrum is crowded, as for a long chain
/// or band), memory `O(L + m + n)` plus the basis. Errors:
/// [`crate::Error::NoConvergence`] if the value has not settled after about `3e10`
/// multiply-adds.
///
/// Reference: Staniczenko, Kopp & Allesina (2013), Nature Communications
/// 4:1391.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{metrics::spectral_radius, Network};
/// // An all-ones 2 x 3 block: rho = sqrt(2 * 3) for the binary view.
/// let net = Network::from_array(array![[1.0, 1.0, 1.0], [1.0, 1.0, 1.0]]).unwrap();
/// let s = spectral_radius(&net).unwrap();
/// assert!((s.binary - 6f64.sqrt()).abs() < 1e-12);
/// assert!((s.binary_normalized - 1.0).abs() < 1e-12);
/// ```
pub fn spectral_radius<V: NetView + ?Sized>(view: &V) -> Result<SpectralRadius> {
    if view.layout() == Layout::Bits {
        // A binary matrix (a null draw): the pattern listed from the bits.
        let b = view.bits()?;
        let binary = spectral_radius_of_bits(&b)?;
        return Ok(SpectralRadius {
            weighted: binary,
            binary,
            binary_normalized: binary / (b.count_ones() as f64).sqrt(),
        });
    }
    let csr = view.compressed_rows()?;
    let (binary, weighted) = if view.is_weighted() {
        let lists = Lists::from_csr(&csr);
        let binary = top_singular(&lists, false)?;
        (binary, top_singular(&lists, true)?)
    } else {
        // Weights all 1: one solve on the pattern, no weights copied.
        let lists = Lists::new(
            csr.ncols(),
            Cow::Borrowed(csr.indptr()),
            Cow::Borrowed(csr.indices()),
            None,
        );
        let binary = top_singular(&lists, false)?;
        (binary, binary)
    };
    Ok(SpectralRadius {
        weighted,
        binary,
        binary_normalized: binary / (view.links() as f64).sqrt(),
    })
}

/// Registry evaluator of `spectral`.
pub(crate) fn binary(v: &dyn NetView, _: &IndexOptions) -> Result<f64> {
    Ok(spectral_radius(v)?.binary)
}

/// Registry evaluator of `spectral-weighted`.
pub(crate) fn weighted(v: &dyn NetView, _: &IndexOptions) -> Result<f64> {
    Ok(spectral_radius(v)?.weighted)
}

/// Largest singular value of a sparse matrix (its weights as `f64`); 0 for a
/// matrix with no non-zero cell. See [`spectral_radius`] for method and cost.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{metrics::spectral::largest_singular_value, Csr};
/// let w = array![[3.0, 0.0], [0.0, 2.0]];
/// let s = largest_singular_value(&Csr::from_dense(w.view())).unwrap();
/// assert!((s - 3.0).abs() < 1e-12);
/// ```
pub fn largest_singular_value<T: Weight>(csr: &Csr<T>) -> Result<f64> {
    top_singular(&Lists::from_csr(csr), true)
}

/// Largest singular value of a binary matrix; 0 when it has no ones. Cost
/// as [`spectral_radius`], plus `O(m n / 64)` to list the ones.
fn spectral_radius_of_bits(b: &BitMatrix) -> Result<f64> {
    let mut indptr = Vec::with_capacity(b.nrows() + 1);
    indptr.push(0);
    let mut indices = Vec::with_capacity(b.count_ones());
    for i in 0..b.nrows() {
        indices.extend(b.row_ones(i).map(|j| j as u32));
        indptr.push(indices.len());
    }
    let lists = Lists::new(b.ncols(), Cow::Owned(indptr), Cow::Owned(indices), None);
    top_singular(&lists, false)
}

/// A sparse matrix by rows and by columns, weights optional (scaled so the
/// largest is 1, to keep the products far from overflow).
struct Lists<'a> {
    rows: Pattern<'a>,
    cols: Pattern<'a>,
    scale: f64,
}

struct Pattern<'a> {
    indptr: Cow<'a, [usize]>,
    indices: Cow<'a, [u32]>,
    values: Option<Vec<f64>>,
}

impl<'a> Lists<'a> {
    fn from_csr<T: Weight>(csr: &'a Csr<T>) -> Lists<'a> {
        let values: Vec<f64> = csr.values().iter().map(|x| x.as_f64()).collect();
        Lists::new(
            csr.ncols(),
            Cow::Borrowed(csr.indptr()),
            Cow::Borrowed(csr.indices()),
            Some(values),
        )
    }

    fn new(
        ncols: usize,
        indptr: Cow<'a, [usize]>,
        indices: Cow<'a, [u32]>,
        values: Option<Vec<f64>>,
    ) -> Lists<'a> {
        let scale = values
            .as_ref()
            .map(|v| v.iter().fold(0.0f64, |a, &x| a.max(x.abs())))
            .unwrap_or(1.0);
        let scale = if scale > 0.0 { scale } else { 1.0 };
        let values = values.map(|mut v| {
            if scale != 1.0 {
                v.iter_mut().for_each(|x| *x /= scale);
            }
            v
        });
        let (cptr, cidx, cval) = crate::storage::lists::transpose_lists(
            ncols,
            &indptr,
            &indices,
            values.as_deref(),
            None,
        );
        Lists {
            rows: Pattern {
                indptr,
                indices,
                values,
            },
            cols: Pattern {
                indptr: Cow::Owned(cptr),
                indices: Cow::Owned(cidx),
                values: cval,
            },
            scale,
        }
    }
}

impl Pattern<'_> {
    fn len(&self) -> usize {
        self.indptr.len() - 1
    }
    /// `y = A x`, rows in parallel; each `y_i` is one sequential sum.
    fn apply(&self, x: &[f64], y: &mut [f64], weighted: bool) {
        let values = if weighted {
            self.values.as_deref()
        } else {
            None
        };
        y.par_chunks_mut(4096).enumerate().for_each(|(c, out)| {
            for (r, yi) in out.iter_mut().enumerate() {
                let i = c * 4096 + r;
                let (a, b) = (self.indptr[i], self.indptr[i + 1]);
                let idx = &self.indices[a..b];
                *yi = match values {
                    Some(v) => idx
                        .iter()
                        .zip(&v[a..b])
                        .map(|(&j, &w)| w * x[j as usize])
                        .sum(),
                    None => idx.iter().map(|&j| x[j as usize]).sum(),
                };
            }
        });
    }
}

/// Largest singular value of the matrix in `lists` (weights used when
/// `weighted`, else its binary pattern).
fn top_singular(lists: &Lists, weighted: bool) -> Result<f64> {
    let (m, n) = (lists.rows.len(), lists.cols.len());
    if lists.rows.indices.is_empty() {
        return Ok(0.0);
    }
    // Gram operator on the smaller side: G = W^T W (n x n) or W W^T (m x m).
    let (first, second, dim, mid) = if n <= m {
        (&lists.rows, &lists.cols, n, m)
    } else {
        (&lists.cols, &lists.rows, m, n)
    };
    let mut tmp = vec![0.0; mid];
    let work = 2.0 * lists.rows.indices.len() as f64 + 12.0 * dim as f64 + mid as f64;
    let lambda = crate::numerics::lanczos::lanczos_top(dim, work, |x, y| {
        first.apply(x, &mut tmp, weighted);
        second.apply(&tmp, y, weighted);
    })?;
    let scale = if weighted { lists.scale } else { 1.0 };
    let radius = lambda.max(0.0).sqrt() * scale;
    if !radius.is_finite() {
        // The weights were scaled to at most 1 for the solver; only the
        // final product overflows.
        return Err(Error::InvalidArgument(format!(
            "the weighted spectral radius is {} x {scale:e}, beyond the largest floating-point \
             number: divide the weights by a constant (the radius scales with them)",
            lambda.max(0.0).sqrt()
        )));
    }
    Ok(radius)
}
