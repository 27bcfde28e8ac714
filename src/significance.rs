//! Significance of an index against null draws (METHODS.md §7).
//!
//! For an index `S` with observed value `s` and null values `s_1..s_R`:
//! mean, standard deviation (divisor `R - 1`), `z = (s - mean) / sd` (absent
//! when `sd = 0`), `p_greater = (1 + #{s_k >= s}) / (R + 1)`,
//! `p_less = (1 + #{s_k <= s}) / (R + 1)`, and the 2.5, 50 and 97.5 %
//! quantiles.
//!
//! Quantiles use linear interpolation between order statistics, definition 7
//! of Hyndman & Fan (1996, The American Statistician 50:361-365): with the
//! values sorted ascending `x_(1) <= .. <= x_(R)`, `h = (R - 1) p + 1`, the
//! `p` quantile is `x_(floor h) + (h - floor h) (x_(floor h + 1) - x_(floor h))`.
//!
//! Optional sequential stop (Besag & Clifford 1991, Biometrika 78:301-304):
//! with a limit `H`, draws are read in draw order and the test stops at the
//! first draw `t` by which `H` values lie at least as far as `s` in the
//! "more nested" direction of the index; then the p-value in that direction
//! is `H / t` and every other statistic uses the first `t` draws. When the
//! limit is not reached all `R` draws are used and the p-values are the
//! usual ones.

use crate::error::{Error, Result};
use crate::index::Direction;

/// The comparison of an observed index value with its null distribution.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct NullSummary {
    /// The observed value `s`.
    pub observed: f64,
    /// Mean of the null values.
    pub mean: f64,
    /// Standard deviation of the null values (divisor `R - 1`).
    pub sd: f64,
    /// `(s - mean) / sd`; `None` when `sd = 0`.
    pub z: Option<f64>,
    /// `(1 + #{s_k >= s}) / (R + 1)`, or `H / t` after a sequential stop when
    /// larger values are more nested.
    pub p_greater: f64,
    /// `(1 + #{s_k <= s}) / (R + 1)`, or `H / t` after a sequential stop when
    /// smaller values are more nested.
    pub p_less: f64,
    /// 2.5 % quantile of the null values (Hyndman & Fan definition 7).
    pub q025: f64,
    /// Median of the null values.
    pub q50: f64,
    /// 97.5 % quantile of the null values.
    pub q975: f64,
    /// Number of null values `R` used (fewer than requested after a
    /// sequential stop).
    pub draws: usize,
    /// Which way the index moves when a network is more nested.
    pub more_nested: Direction,
    /// True when the sequential rule of Besag & Clifford stopped the test.
    pub stopped_early: bool,
}

impl NullSummary {
    /// The p-value in the "more nested" direction.
    pub fn p_more_nested(&self) -> f64 {
        match self.more_nested {
            Direction::Greater => self.p_greater,
            Direction::Less => self.p_less,
        }
    }
}

/// Is `v` at least as nested as `observed`?
pub fn as_extreme(v: f64, observed: f64, direction: Direction) -> bool {
    match direction {
        Direction::Greater => v >= observed,
        Direction::Less => v <= observed,
    }
}

/// The draw count at which the sequential rule stops: the smallest `t` such
/// that `H` of the first `t` values are at least as nested as `observed`;
/// `None` if the values never reach `H`.
pub fn stopping_point(
    observed: f64,
    values: &[f64],
    direction: Direction,
    stop_after: usize,
) -> Option<usize> {
    let mut hits = 0usize;
    for (t, &v) in values.iter().enumerate() {
        if as_extreme(v, observed, direction) {
            hits += 1;
            if hits >= stop_after {
                return Some(t + 1);
            }
        }
    }
    None
}

/// The `p` quantile of ascending `sorted` values, Hyndman & Fan definition 7.
///
/// ```
/// use nidus::significance::quantile_sorted;
/// // Hyndman & Fan (1996) definition 7 on 1..=10: h = 9 p + 1.
/// assert_eq!(quantile_sorted(&[1., 2., 3., 4., 5., 6., 7., 8., 9., 10.], 0.5), 5.5);
/// ```
pub fn quantile_sorted(sorted: &[f64], p: f64) -> f64 {
    let r = sorted.len();
    if r == 1 {
        return sorted[0];
    }
    let h = (r - 1) as f64 * p;
    let lo = (h.floor() as usize).min(r - 1);
    let hi = (lo + 1).min(r - 1);
    sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
}

/// Summarises `values` (in draw order) against `observed`.
///
/// With `stop_after = Some(H)` the sequential rule of Besag & Clifford is
/// applied in draw order (see the module documentation).
///
/// Cost `O(R log R)` (the sort for quantiles).
///
/// Errors: fewer than two values, `H = 0`, or a value that is not finite.
///
/// # Example
/// ```
/// use nidus::{index::Direction, significance::summarize};
/// let s = summarize(10.0, &[1.0, 2.0, 3.0, 12.0], Direction::Greater, None).unwrap();
/// assert_eq!(s.p_greater, 2.0 / 5.0); // (1 + 1) / (4 + 1)
/// assert_eq!(s.p_less, 4.0 / 5.0);
/// assert_eq!(s.mean, 4.5);
/// ```
pub fn summarize(
    observed: f64,
    values: &[f64],
    direction: Direction,
    stop_after: Option<usize>,
) -> Result<NullSummary> {
    if stop_after == Some(0) {
        return Err(Error::InvalidArgument(
            "the sequential stop needs at least one extreme draw (H >= 1)".into(),
        ));
    }
    if let Some(v) = values.iter().find(|v| !v.is_finite()) {
        return Err(Error::InvalidArgument(format!(
            "a null value is not finite ({v}); no summary is possible"
        )));
    }
    let stop =
        stop_after.and_then(|h| stopping_point(observed, values, direction, h).map(|t| (h, t)));
    let used = match stop {
        Some((_, t)) => &values[..t],
        None => values,
    };
    let r = used.len();
    if r < 2 {
        return Err(Error::InvalidArgument(format!(
            "a null summary needs at least 2 draws, got {r}"
        )));
    }
    let rf = r as f64;
    // Identical values have sd 0 exactly (summing them may not give back the
    // value exactly, and a rounding-sized sd would make z meaningless).
    let constant = used.iter().all(|v| v.to_bits() == used[0].to_bits());
    let mean = if constant {
        used[0]
    } else {
        used.iter().sum::<f64>() / rf
    };
    let sd = if constant {
        0.0
    } else {
        (used.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (rf - 1.0)).sqrt()
    };
    let z = (sd > 0.0).then(|| (observed - mean) / sd);
    let ge = used.iter().filter(|&&v| v >= observed).count();
    let le = used.iter().filter(|&&v| v <= observed).count();
    let mut p_greater = (1 + ge) as f64 / (rf + 1.0);
    let mut p_less = (1 + le) as f64 / (rf + 1.0);
    if let Some((h, t)) = stop {
        let p = h as f64 / t as f64;
        match direction {
            Direction::Greater => p_greater = p,
            Direction::Less => p_less = p,
        }
    }
    let mut sorted = used.to_vec();
    sorted.sort_by(f64::total_cmp);
    Ok(NullSummary {
        observed,
        mean,
        sd,
        z,
        p_greater,
        p_less,
        q025: quantile_sorted(&sorted, 0.025),
        q50: quantile_sorted(&sorted, 0.5),
        q975: quantile_sorted(&sorted, 0.975),
        draws: r,
        more_nested: direction,
        stopped_early: stop.is_some(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Hyndman & Fan (1996) definition 7 equals the sample quantile
    /// `x_(1) + (R-1) p` interpolation; on 1..=5, p = 0.025 gives
    /// 1 + 4 * 0.025 = 1.1 and p = 0.975 gives 4.9 (computed from the
    /// published formula by hand).
    #[test]
    fn quantiles_type_7() {
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        assert!((quantile_sorted(&x, 0.025) - 1.1).abs() < 1e-12);
        assert!((quantile_sorted(&x, 0.975) - 4.9).abs() < 1e-12);
        assert_eq!(quantile_sorted(&x, 0.5), 3.0);
        assert_eq!(quantile_sorted(&x, 0.0), 1.0);
        assert_eq!(quantile_sorted(&x, 1.0), 5.0);
    }

    /// METHODS.md §7 formulas worked by hand on a small sample.
    #[test]
    fn summary_by_hand() {
        let v = [2.0, 4.0, 4.0, 6.0];
        let s = summarize(4.0, &v, Direction::Less, None).unwrap();
        assert_eq!(s.mean, 4.0);
        // sd with divisor R-1: sqrt((4+0+0+4)/3).
        assert!((s.sd - (8.0f64 / 3.0).sqrt()).abs() < 1e-15);
        assert_eq!(s.z, Some(0.0));
        assert_eq!(s.p_greater, 4.0 / 5.0);
        assert_eq!(s.p_less, 4.0 / 5.0);
        assert_eq!(s.p_more_nested(), 4.0 / 5.0);
        let flat = summarize(1.0, &[1.0, 1.0], Direction::Greater, None).unwrap();
        assert_eq!(flat.z, None);
        assert_eq!(flat.p_greater, 1.0);
    }

    /// Besag & Clifford (1991): stopping at the t-th draw with h extremes
    /// gives p = h / t; otherwise the usual (1 + #)/(R + 1).
    #[test]
    fn sequential_stop() {
        let v = [5.0, 1.0, 7.0, 2.0, 9.0, 1.0];
        let s = summarize(4.0, &v, Direction::Greater, Some(2)).unwrap();
        assert!(s.stopped_early);
        assert_eq!(s.draws, 3);
        assert_eq!(s.p_greater, 2.0 / 3.0);
        let s = summarize(4.0, &v, Direction::Greater, Some(4)).unwrap();
        assert!(!s.stopped_early);
        assert_eq!(s.draws, 6);
        assert_eq!(s.p_greater, 4.0 / 7.0);
        // Lower direction counts values <= observed.
        let s = summarize(4.0, &v, Direction::Less, Some(2)).unwrap();
        assert_eq!((s.draws, s.p_less), (4, 0.5));
        assert!(summarize(4.0, &v, Direction::Less, Some(0)).is_err());
        assert!(summarize(4.0, &[1.0], Direction::Less, None).is_err());
    }
}
