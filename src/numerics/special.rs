//! Special functions needed by the indices: the Gamma function and its
//! logarithm (for the temperature isocline, METHODS.md §4).
//!
//! Both use the Lanczos approximation with `g = 7` and nine coefficients
//! (Lanczos 1964, SIAM J. Numer. Anal. B 1:86-96; the coefficient set is the
//! widely published one for `g = 7, n = 9`), which is accurate to about
//! `1e-15` relative for positive arguments, and the reflection formula
//! `Gamma(x) Gamma(1 - x) = pi / sin(pi x)` below `1/2`.

use std::f64::consts::PI;

/// Lanczos parameter `g`.
const LANCZOS_G: f64 = 7.0;

/// Lanczos coefficients for `g = 7`, nine terms.
#[allow(clippy::excessive_precision)]
const LANCZOS: [f64; 9] = [
    0.99999999999980993,
    676.5203681218851,
    -1259.1392167224028,
    771.32342877765313,
    -176.61502916214059,
    12.507343278686905,
    -0.13857109526572012,
    9.9843695780195716e-6,
    1.5056327351493116e-7,
];

/// `ln(sqrt(2 pi))`.
const LN_SQRT_2PI: f64 = 0.918_938_533_204_672_7;

/// The Lanczos series `A_g(z)` for `Gamma(z + 1)`.
fn lanczos_sum(z: f64) -> f64 {
    let mut a = LANCZOS[0];
    for (k, &c) in LANCZOS.iter().enumerate().skip(1) {
        a += c / (z + k as f64);
    }
    a
}

/// The Gamma function `Gamma(x) = integral_0^inf t^(x-1) e^-t dt`.
///
/// Accurate to about `1e-15` relative for `0 < x < 171` (above, it
/// overflows to infinity). Negative non-integer arguments use the reflection
/// formula; the poles `x = 0, -1, -2, ...` and NaN give NaN.
///
/// Cost: `O(1)` (nine divisions, one `powf`, one `exp`).
///
/// # Example
/// ```
/// use nidus::numerics::special::gamma;
/// assert!((gamma(5.0) - 24.0).abs() < 1e-12);
/// assert!((gamma(0.5) - std::f64::consts::PI.sqrt()).abs() < 1e-14);
/// ```
pub fn gamma(x: f64) -> f64 {
    if x.is_nan() || (x <= 0.0 && x == x.floor()) {
        return f64::NAN;
    }
    if x < 0.5 {
        return PI / ((PI * x).sin() * gamma(1.0 - x));
    }
    if x > 171.7 {
        return f64::INFINITY;
    }
    let z = x - 1.0;
    let t = z + LANCZOS_G + 0.5;
    // t^(z + 1/2) e^-t, split in two halves so that it does not overflow early.
    let half = t.powf(0.5 * (z + 0.5));
    (2.0 * PI).sqrt() * half * (half * (-t).exp()) * lanczos_sum(z)
}

/// The natural logarithm of the Gamma function, for `x > 0`.
///
/// Absolute error about `1e-15` near `x = 1, 2` (where the value is 0) and
/// relative error about `1e-15` elsewhere; it does not overflow for large
/// `x`. Non-positive or NaN arguments give NaN.
///
/// Cost: `O(1)`.
///
/// # Example
/// ```
/// use nidus::numerics::special::ln_gamma;
/// // ln(10!) = ln Gamma(11)
/// assert!((ln_gamma(11.0) - 3_628_800f64.ln()).abs() < 1e-12);
/// ```
pub fn ln_gamma(x: f64) -> f64 {
    if x.is_nan() || x <= 0.0 {
        return f64::NAN;
    }
    if x < 0.5 {
        // Gamma(x) = pi / (sin(pi x) Gamma(1 - x)), all factors positive here.
        return (PI / (PI * x).sin()).ln() - ln_gamma(1.0 - x);
    }
    let z = x - 1.0;
    let t = z + LANCZOS_G + 0.5;
    LN_SQRT_2PI + (z + 0.5) * t.ln() - t + lanczos_sum(z).ln()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Gamma(n) = (n - 1)! for integers (definition).
    #[test]
    fn integers_are_factorials() {
        let mut fact = 1.0f64;
        for n in 1..=25u32 {
            if n > 1 {
                fact *= (n - 1) as f64;
            }
            let g = gamma(n as f64);
            assert!(
                (g - fact).abs() <= 1e-13 * fact,
                "Gamma({n}) = {g}, expected {fact}"
            );
            let lg = ln_gamma(n as f64);
            assert!(
                (lg - fact.ln()).abs() <= 1e-13 * fact.ln().max(1.0),
                "ln Gamma({n}) = {lg}"
            );
        }
    }

    /// Gamma(1/2) = sqrt(pi), Gamma(3/2) = sqrt(pi)/2, Gamma(5/2) = 3 sqrt(pi)/4,
    /// Gamma(-1/2) = -2 sqrt(pi) (Abramowitz & Stegun 1964, 6.1.8 and the
    /// recurrence 6.1.15).
    #[test]
    fn half_integers() {
        let s = PI.sqrt();
        for (x, want) in [(0.5, s), (1.5, s / 2.0), (2.5, 0.75 * s), (-0.5, -2.0 * s)] {
            let g = gamma(x);
            assert!(
                (g - want).abs() <= 1e-14 * want.abs(),
                "Gamma({x}) = {g}, expected {want}"
            );
        }
        assert!((ln_gamma(0.5) - 0.5 * PI.ln()).abs() < 1e-14);
    }

    /// Gamma(1/3) Gamma(2/3) = 2 pi / sqrt(3) (reflection formula, A&S 6.1.17)
    /// and the recurrence Gamma(x + 1) = x Gamma(x) (A&S 6.1.15) over a grid.
    #[test]
    fn reflection_and_recurrence() {
        let prod = gamma(1.0 / 3.0) * gamma(2.0 / 3.0);
        assert!((prod - 2.0 * PI / 3f64.sqrt()).abs() < 1e-13);
        for k in 1..400 {
            let x = k as f64 * 0.05;
            let lhs = gamma(x + 1.0);
            let rhs = x * gamma(x);
            assert!((lhs - rhs).abs() <= 2e-14 * lhs.abs(), "x = {x}");
            let l = ln_gamma(x + 1.0) - ln_gamma(x) - x.ln();
            assert!(l.abs() < 1e-13, "x = {x}: {l}");
        }
    }

    /// Poles and domain.
    #[test]
    fn poles_and_domain() {
        assert!(gamma(0.0).is_nan());
        assert!(gamma(-3.0).is_nan());
        assert!(ln_gamma(0.0).is_nan());
        assert!(ln_gamma(-1.5).is_nan());
        assert!(gamma(200.0).is_infinite());
        // Stirling: ln Gamma(x) ~ (x - 1/2) ln x - x + ln sqrt(2 pi) + 1/(12 x) (A&S 6.1.41)
        let x = 1e6;
        let stirling = (x - 0.5) * f64::ln(x) - x + LN_SQRT_2PI + 1.0 / (12.0 * x);
        assert!((ln_gamma(x) - stirling).abs() <= 1e-15 * stirling);
    }
}
