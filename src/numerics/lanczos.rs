//! The Lanczos eigen-solver: the largest eigenvalue of a symmetric positive
//! semi-definite operator given only as a product `y = A x` (full
//! reorthogonalisation with explicit restarts, then a long phase without
//! them for a crowded top of the spectrum). The spectral radius
//! ([`crate::metrics::spectral`]) applies it to the Gram operator of a
//! sparse matrix; its module documentation gives the start vector, the
//! stopping rule and the costs.

use rayon::prelude::*;

use crate::error::{Error, Result};
use crate::tolerance;

/// Largest Lanczos basis before a restart.
pub const BASIS: usize = 30;

/// Products of the restarted phase before switching to the long phase.
const RESTARTED_PRODUCTS: usize = 5 * BASIS;

/// Work allowed to the long phase, in multiply-adds (about 10-30 s here),
/// before giving up with [`Error::NoConvergence`].
const LONG_PHASE_WORK: f64 = 3e10;

/// Chunk length of the vector operations (parallel, summed in chunk order).
const CHUNK: usize = 1 << 14;

fn chunked_dots(basis: &[Vec<f64>], w: &[f64]) -> Vec<f64> {
    let k = basis.len();
    let d = w.len();
    let parts: Vec<Vec<f64>> = (0..d.div_ceil(CHUNK))
        .into_par_iter()
        .map(|c| {
            let r = c * CHUNK..((c + 1) * CHUNK).min(d);
            (0..k)
                .map(|i| {
                    basis[i][r.clone()]
                        .iter()
                        .zip(&w[r.clone()])
                        .map(|(a, b)| a * b)
                        .sum()
                })
                .collect()
        })
        .collect();
    let mut h = vec![0.0; k];
    for p in parts {
        for (hi, x) in h.iter_mut().zip(p) {
            *hi += x;
        }
    }
    h
}

fn subtract_combination(basis: &[Vec<f64>], h: &[f64], w: &mut [f64]) {
    w.par_chunks_mut(CHUNK).enumerate().for_each(|(c, wc)| {
        let off = c * CHUNK;
        let len = wc.len();
        for (v, &hi) in basis.iter().zip(h) {
            for (x, &b) in wc.iter_mut().zip(&v[off..off + len]) {
                *x -= hi * b;
            }
        }
    });
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    let parts: Vec<f64> = a
        .par_chunks(CHUNK)
        .zip(b.par_chunks(CHUNK))
        .map(|(x, y)| x.iter().zip(y).map(|(p, q)| p * q).sum())
        .collect();
    parts.iter().sum()
}

fn axpy(alpha: f64, x: &[f64], y: &mut [f64]) {
    y.par_chunks_mut(CHUNK)
        .zip(x.par_chunks(CHUNK))
        .for_each(|(yc, xc)| yc.iter_mut().zip(xc).for_each(|(p, q)| *p += alpha * q));
}

fn norm(w: &[f64]) -> f64 {
    let parts: Vec<f64> = w
        .par_chunks(CHUNK)
        .map(|c| c.iter().map(|x| x * x).sum())
        .collect();
    parts.iter().sum::<f64>().sqrt()
}

/// Largest eigenvalue of a symmetric positive semi-definite operator of
/// dimension `dim` (Lanczos, full reorthogonalisation, explicit restarts).
pub(crate) fn lanczos_top(
    dim: usize,
    work: f64,
    mut apply: impl FnMut(&[f64], &mut [f64]),
) -> Result<f64> {
    const TOL: f64 = tolerance::LANCZOS_RESIDUAL;
    let kmax = BASIS.min(dim);
    let mut start = vec![1.0 / (dim as f64).sqrt(); dim];
    let mut products = 0usize;
    let mut theta_prev = f64::NAN;
    let mut change = f64::INFINITY;
    loop {
        let mut basis: Vec<Vec<f64>> = vec![start];
        let mut alpha: Vec<f64> = Vec::new();
        let mut beta: Vec<f64> = Vec::new();
        let mut ritz: Vec<f64> = Vec::new();
        for k in 0..kmax {
            let mut w = vec![0.0; dim];
            apply(&basis[k], &mut w);
            products += 1;
            // Three-term recurrence, then one classical Gram-Schmidt pass
            // against the whole basis, and a second pass only when the
            // first removed much of the vector ("twice is enough": Parlett,
            // The Symmetric Eigenvalue Problem, 1998, who credits it to
            // Kahan; recalled, and the place in the book not checked).
            let mut a = dot(&basis[k], &w);
            axpy(-a, &basis[k], &mut w);
            if k > 0 {
                axpy(-beta[k - 1], &basis[k - 1], &mut w);
            }
            let before = norm(&w);
            let h = chunked_dots(&basis, &w);
            subtract_combination(&basis, &h, &mut w);
            a += h[k];
            let mut b = norm(&w);
            if b < std::f64::consts::FRAC_1_SQRT_2 * before {
                let h = chunked_dots(&basis, &w);
                subtract_combination(&basis, &h, &mut w);
                a += h[k];
                b = norm(&w);
            }
            alpha.push(a);
            let tnorm = alpha
                .iter()
                .chain(&beta)
                .fold(0.0f64, |a, &x| a.max(x.abs()));
            let invariant =
                b <= tolerance::LANCZOS_INVARIANT * tnorm.max(f64::MIN_POSITIVE) || k + 1 == dim;
            // The small eigenproblem costs O(k^3): solved every step at
            // first, then every fourth step and at the end of each cycle.
            let check = invariant
                || k < 12
                || k % 4 == 3
                || k + 1 == kmax
                || products >= RESTARTED_PRODUCTS;
            if !check {
                beta.push(b);
                w.iter_mut().for_each(|x| *x /= b);
                basis.push(w);
                continue;
            }
            let (vals, top_vec, second_last) = tridiagonal_top(&alpha, &beta);
            let theta = vals[0];
            let resid = b * top_vec[k].abs();
            let resid2 = b * second_last.abs();
            if !theta.is_finite() {
                return Err(Error::NoConvergence {
                    what: "the Lanczos iteration for the spectral radius",
                    iterations: products,
                    change: f64::NAN,
                });
            }
            if theta_prev.is_finite() {
                change = (theta - theta_prev).abs() / theta.abs().max(f64::MIN_POSITIVE);
            }
            theta_prev = theta;
            // The gap to the rest of the spectrum, trusted only as far as
            // the second Ritz value has itself converged.
            let gap = if vals.len() > 1 {
                theta - vals[1] - resid - resid2
            } else {
                0.0
            };
            if invariant
                || resid <= TOL * theta
                || (gap > 0.0 && resid * resid <= TOL * theta * gap && change <= TOL)
            {
                return Ok(theta);
            }
            if products >= RESTARTED_PRODUCTS {
                // A crowded top of the spectrum (say a long band or chain):
                // continue from the Ritz vector with the long phase.
                let mut y = vec![0.0; dim];
                for (v, &s) in basis.iter().zip(&top_vec) {
                    axpy(s, v, &mut y);
                }
                let ny = norm(&y);
                y.iter_mut().for_each(|x| *x /= ny);
                let budget = (LONG_PHASE_WORK / work.max(1.0)) as usize;
                return long_lanczos(y, theta, budget.max(1000), &mut apply).map_err(
                    |(iterations, change)| Error::NoConvergence {
                        what: "the Lanczos iteration for the spectral radius",
                        iterations: iterations + products,
                        change,
                    },
                );
            }
            ritz = top_vec;
            if k + 1 < kmax {
                beta.push(b);
                w.iter_mut().for_each(|x| *x /= b);
                basis.push(w);
            }
        }
        // Restart from the Ritz vector of the largest Ritz value.
        let mut y = vec![0.0; dim];
        for (v, &s) in basis.iter().zip(&ritz) {
            y.iter_mut().zip(v).for_each(|(a, &b)| *a += s * b);
        }
        let ny = norm(&y);
        y.iter_mut().for_each(|x| *x /= ny);
        start = y;
    }
}

/// The long phase: Lanczos without reorthogonalisation or restarts, for a
/// crowded top of the spectrum where a short restarted basis converges too
/// slowly. Memory `O(d)` plus `O(k)` scalars. Lost orthogonality only makes
/// copies of converged Ritz values (Paige's finding, as summarised by Bai et
/// al. 2000, Templates for the Solution of Algebraic Eigenvalue Problems,
/// SIAM, §4.4; the year 1976 of Paige's paper is recalled); the largest
/// Ritz value still rises monotonically towards the largest eigenvalue, so
/// it is tracked by Sturm-sequence bisection every tenth of the run, and the
/// method stops when it changed by at most `1e-13` relative over the last
/// tenth (for a geometric convergence the remaining error is then of the
/// same order) or when the Krylov space is invariant. Returns the products
/// used and the last relative change if `budget` products do not suffice.
fn long_lanczos(
    start: Vec<f64>,
    theta_start: f64,
    budget: usize,
    apply: &mut impl FnMut(&[f64], &mut [f64]),
) -> std::result::Result<f64, (usize, f64)> {
    let dim = start.len();
    let mut v = start;
    let mut v_prev = vec![0.0; dim];
    let mut w = vec![0.0; dim];
    let mut alpha: Vec<f64> = Vec::new();
    let mut beta: Vec<f64> = Vec::new();
    let mut last = theta_start;
    let mut next_check = 50usize;
    let mut change = f64::INFINITY;
    for k in 0..budget {
        apply(&v, &mut w);
        let mut a = dot(&v, &w);
        axpy(-a, &v, &mut w);
        if k > 0 {
            axpy(-beta[k - 1], &v_prev, &mut w);
        }
        // Local reorthogonalisation against the current vector keeps the
        // diagonal accurate.
        let a2 = dot(&v, &w);
        axpy(-a2, &v, &mut w);
        a += a2;
        alpha.push(a);
        let b = norm(&w);
        let tnorm = alpha.iter().chain(&beta).fold(b, |m, &x| m.max(x.abs()));
        let invariant =
            b <= tolerance::LANCZOS_INVARIANT * tnorm.max(f64::MIN_POSITIVE) || k + 1 == dim;
        if invariant || k + 1 == next_check {
            let theta = sturm_top(&alpha, &beta).max(last);
            change = (theta - last).abs() / theta.abs().max(f64::MIN_POSITIVE);
            if invariant || change <= tolerance::LANCZOS_LONG_CHANGE {
                return Ok(theta);
            }
            last = theta;
            next_check = (k + 1) + ((k + 1) / 10).max(50);
        }
        beta.push(b);
        std::mem::swap(&mut v_prev, &mut v);
        // v <- w / b (the new Lanczos vector); w is overwritten next step.
        v.iter_mut().zip(&w).for_each(|(x, &y)| *x = y / b);
    }
    Err((budget, change))
}

/// Largest eigenvalue of the symmetric tridiagonal matrix (diagonal `alpha`,
/// off-diagonal `beta`) by bisection on Sturm-sequence counts (Golub & Van
/// Loan, Matrix Computations, 4th ed. 2013, §8.4.1), to full precision.
fn sturm_top(alpha: &[f64], beta: &[f64]) -> f64 {
    let k = alpha.len();
    // Gershgorin bounds.
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for i in 0..k {
        let r = if i > 0 { beta[i - 1].abs() } else { 0.0 }
            + if i + 1 < k { beta[i].abs() } else { 0.0 };
        lo = lo.min(alpha[i] - r);
        hi = hi.max(alpha[i] + r);
    }
    // Number of eigenvalues below x (negative pivots of T - x I = L D L^T).
    let below = |x: f64| {
        let mut count = 0;
        let mut q = 1.0f64;
        for i in 0..k {
            let off = if i > 0 {
                beta[i - 1] * beta[i - 1] / q
            } else {
                0.0
            };
            q = alpha[i] - x - off;
            if q == 0.0 {
                q = -f64::EPSILON * (x.abs() + 1e-300);
            }
            if q < 0.0 {
                count += 1;
            }
        }
        count
    };
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if below(mid) == k {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    0.5 * (lo + hi)
}

/// Eigenvalues (descending) of the symmetric tridiagonal matrix with
/// diagonal `alpha` and off-diagonal `beta`, the eigenvector of the
/// largest and the last component of the second's, by cyclic Jacobi rotations (Golub & Van Loan, *Matrix
/// Computations*, 4th ed. 2013, §8.5).
fn tridiagonal_top(alpha: &[f64], beta: &[f64]) -> (Vec<f64>, Vec<f64>, f64) {
    let k = alpha.len();
    let mut a = vec![0.0; k * k];
    for i in 0..k {
        a[i * k + i] = alpha[i];
        if i + 1 < k {
            a[i * k + i + 1] = beta[i];
            a[(i + 1) * k + i] = beta[i];
        }
    }
    let mut v = vec![0.0; k * k];
    for i in 0..k {
        v[i * k + i] = 1.0;
    }
    for _sweep in 0..60 {
        let off: f64 = (0..k)
            .flat_map(|p| (p + 1..k).map(move |q| (p, q)))
            .map(|(p, q)| a[p * k + q] * a[p * k + q])
            .sum();
        let diag: f64 = (0..k).map(|p| a[p * k + p] * a[p * k + p]).sum();
        if off <= tolerance::JACOBI_OFF_DIAGONAL * diag || off == 0.0 {
            break;
        }
        for p in 0..k {
            for q in p + 1..k {
                let apq = a[p * k + q];
                if apq == 0.0 {
                    continue;
                }
                let tau = (a[q * k + q] - a[p * k + p]) / (2.0 * apq);
                let t = tau.signum() / (tau.abs() + (1.0 + tau * tau).sqrt());
                let t = if tau == 0.0 { 1.0 } else { t };
                let c = 1.0 / (1.0 + t * t).sqrt();
                let s = t * c;
                for r in 0..k {
                    let (arp, arq) = (a[r * k + p], a[r * k + q]);
                    a[r * k + p] = c * arp - s * arq;
                    a[r * k + q] = s * arp + c * arq;
                }
                for r in 0..k {
                    let (apr, aqr) = (a[p * k + r], a[q * k + r]);
                    a[p * k + r] = c * apr - s * aqr;
                    a[q * k + r] = s * apr + c * aqr;
                }
                for r in 0..k {
                    let (vrp, vrq) = (v[r * k + p], v[r * k + q]);
                    v[r * k + p] = c * vrp - s * vrq;
                    v[r * k + q] = s * vrp + c * vrq;
                }
            }
        }
    }
    let mut idx: Vec<usize> = (0..k).collect();
    idx.sort_by(|&x, &y| a[y * k + y].total_cmp(&a[x * k + x]));
    let vals: Vec<f64> = idx.iter().map(|&i| a[i * k + i]).collect();
    let top = idx[0];
    let vec: Vec<f64> = (0..k).map(|r| v[r * k + top]).collect();
    let second_last = if k > 1 { v[(k - 1) * k + idx[1]] } else { 0.0 };
    (vals, vec, second_last)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Jacobi on a small tridiagonal matrix with known eigenvalues: the
    /// path-graph matrix tridiag(1, 0, 1) of size k has eigenvalues
    /// `2 cos(pi j / (k + 1))` (a textbook fact, common practice).
    #[test]
    fn tridiagonal_eigenvalues_of_path() {
        let k = 9;
        let (vals, vec, _) = tridiagonal_top(&vec![0.0; k], &vec![1.0; k - 1]);
        for (j, v) in vals.iter().enumerate() {
            let want = 2.0 * (std::f64::consts::PI * (j + 1) as f64 / (k + 1) as f64).cos();
            assert!((v - want).abs() < 1e-13, "{v} vs {want}");
        }
        let n: f64 = vec.iter().map(|x| x * x).sum();
        assert!((n - 1.0).abs() < 1e-13);
    }
}
