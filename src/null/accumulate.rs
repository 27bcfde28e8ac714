//! Summaries of null draws in bounded memory: every draw is kept exactly
//! (one `f64` per index) up to [`EXACT_DRAWS`] draws, and the summary is
//! then exactly [`summarize`]'s; beyond that the kept values are folded into
//! streaming statistics and dropped.
//!
//! Streaming statistics, per index, fed in draw order (so they do not
//! depend on the thread count): Welford's running mean and sum of squared
//! deviations (Welford 1962, Technometrics 4:419-420) for the mean and the
//! standard deviation (divisor `R - 1`); exact counts for the p-values and
//! the sequential stop; and for the quantiles a deterministic
//! merge-and-halve sketch (Manku, Rajagopalan & Lindsay 1998, SIGMOD): a
//! buffer of [`SKETCH_K`] values per level; two full buffers of one level
//! are merged in order and every second value is kept at the next level with
//! twice the weight. Each halving moves the weighted rank of any value by at
//! most the weight of its inputs, so with `L` levels the estimated rank of
//! any value is within `L R / (2 K)` of its true rank: a quantile reported
//! for probability `p` lies between the true quantiles for
//! `p - L / (2 K)` and `p + L / (2 K)` (for `R = 10^9`, `L <= 16`: within
//! 0.05 percentage points). Memory: at most `K (L + 1)` values per index.

use crate::error::{Error, Result};
use crate::index::Direction;
use crate::significance::{as_extreme, quantile_sorted, summarize, NullSummary};

/// Draws kept exactly (per index) before the summary turns to streaming
/// statistics: 2^20, 8 MiB per index.
pub const EXACT_DRAWS: usize = 1 << 20;

/// Buffer length `K` of the quantile sketch: 2^14 values.
pub const SKETCH_K: usize = 1 << 14;

/// The running summary of one index.
#[derive(Clone, Debug)]
struct Stream {
    n: usize,
    mean: f64,
    m2: f64,
    first: f64,
    constant: bool,
    ge: usize,
    le: usize,
    hits: usize,
    /// Draw count at which the sequential stop was reached.
    stopped: Option<usize>,
    /// `levels[l]`: at most one sorted buffer of weight `2^l` (level 0 unsorted while filling).
    levels: Vec<Vec<f64>>,
    bad: Option<f64>,
}

impl Stream {
    fn new() -> Self {
        Stream {
            n: 0,
            mean: 0.0,
            m2: 0.0,
            first: 0.0,
            constant: true,
            ge: 0,
            le: 0,
            hits: 0,
            stopped: None,
            levels: vec![Vec::new()],
            bad: None,
        }
    }

    fn push(&mut self, v: f64, observed: f64, dir: Direction, stop_after: Option<usize>) {
        if self.stopped.is_some() {
            return;
        }
        if !v.is_finite() {
            self.bad.get_or_insert(v);
            return;
        }
        self.n += 1;
        if self.n == 1 {
            self.first = v;
        } else if v.to_bits() != self.first.to_bits() {
            self.constant = false;
        }
        let d = v - self.mean;
        self.mean += d / self.n as f64;
        self.m2 += d * (v - self.mean);
        self.ge += usize::from(v >= observed);
        self.le += usize::from(v <= observed);
        if as_extreme(v, observed, dir) {
            self.hits += 1;
            if stop_after.is_some_and(|h| self.hits >= h) {
                self.stopped = Some(self.n);
            }
        }
        self.levels[0].push(v);
        if self.levels[0].len() == SKETCH_K {
            let mut carry = std::mem::take(&mut self.levels[0]);
            carry.sort_by(f64::total_cmp);
            let mut l = 1;
            loop {
                if self.levels.len() <= l {
                    self.levels.push(Vec::new());
                }
                if self.levels[l].is_empty() {
                    self.levels[l] = carry;
                    break;
                }
                let other = std::mem::take(&mut self.levels[l]);
                carry = halve(&merge(&other, &carry));
                l += 1;
            }
        }
    }

    /// The value at weighted rank fraction `p`, type 7 on the sketch.
    fn quantile(&self, p: f64) -> f64 {
        let mut items: Vec<(f64, u64)> = Vec::new();
        for (l, buf) in self.levels.iter().enumerate() {
            let w = if l == 0 { 1 } else { 1u64 << (l - 1) };
            items.extend(buf.iter().map(|&v| (v, w)));
        }
        items.sort_by(|a, b| a.0.total_cmp(&b.0));
        let total: u64 = items.iter().map(|x| x.1).sum();
        // Rank (0-based) of the order statistic type 7 interpolates from.
        let h = (total - 1) as f64 * p;
        let (lo, frac) = (h.floor() as u64, h - h.floor());
        let at = |r: u64| {
            let mut acc = 0u64;
            for &(v, w) in &items {
                acc += w;
                if acc > r {
                    return v;
                }
            }
            items.last().map_or(f64::NAN, |x| x.0)
        };
        let a = at(lo);
        if frac == 0.0 {
            a
        } else {
            a + frac * (at(lo + 1) - a)
        }
    }
}

fn merge(a: &[f64], b: &[f64]) -> Vec<f64> {
    let mut out = Vec::with_capacity(a.len() + b.len());
    let (mut i, mut j) = (0, 0);
    while i < a.len() && j < b.len() {
        if a[i].total_cmp(&b[j]).is_le() {
            out.push(a[i]);
            i += 1;
        } else {
            out.push(b[j]);
            j += 1;
        }
    }
    out.extend_from_slice(&a[i..]);
    out.extend_from_slice(&b[j..]);
    out
}

/// Every second value (positions 1, 3, ...): a fixed choice, so the sketch
/// is deterministic.
fn halve(v: &[f64]) -> Vec<f64> {
    v.iter().skip(1).step_by(2).copied().collect()
}

/// The null values of one index as a fixed-bin histogram (for figures):
/// `counts[b]` values fell in `[lo + b w, lo + (b + 1) w)` with
/// `w = (hi - lo) / bins` (the last bin includes `hi`).
#[derive(Clone, Debug, PartialEq)]
pub struct Histogram {
    /// Lower edge of the first bin.
    pub lo: f64,
    /// Upper edge of the last bin.
    pub hi: f64,
    /// Values (or, from the sketch, weights) per bin.
    pub counts: Vec<u64>,
    /// True when built from every draw; false when from the quantile sketch
    /// (bin counts then carry the sketch's rank error).
    pub exact: bool,
}

/// The summaries of a run's draws, fed one draw at a time in draw order.
///
/// Up to [`EXACT_DRAWS`] draws, [`DrawSummaries::summaries`] equals
/// [`summarize`] on every index (the same bytes); beyond, the streaming
/// statistics of this module's documentation are used. Memory: at most
/// `8 x EXACT_DRAWS` bytes per index, whatever the number of draws.
///
/// # Example
/// ```
/// use nidus::index::Direction;
/// use nidus::null::DrawSummaries;
/// use nidus::significance::summarize;
/// let mut acc = DrawSummaries::new(vec![3.0], vec![Direction::Greater], None);
/// for v in [1.0, 4.0, 2.0, 5.0] {
///     acc.push(&[v]);
/// }
/// let s = &acc.summaries().unwrap()[0];
/// assert_eq!(*s, summarize(3.0, &[1.0, 4.0, 2.0, 5.0], Direction::Greater, None).unwrap());
/// ```
#[derive(Clone, Debug)]
pub struct DrawSummaries {
    observed: Vec<f64>,
    directions: Vec<Direction>,
    stop_after: Option<usize>,
    /// `kept[i]`: index `i`'s values in draw order, while exact.
    kept: Vec<Vec<f64>>,
    streams: Option<Vec<Stream>>,
    draws: usize,
    limit: usize,
}

impl DrawSummaries {
    /// An empty summary for indices with these observed values and
    /// "more nested" directions, and an optional sequential stop `H`.
    pub fn new(observed: Vec<f64>, directions: Vec<Direction>, stop_after: Option<usize>) -> Self {
        Self::with_limit(observed, directions, stop_after, EXACT_DRAWS)
    }

    /// As [`DrawSummaries::new`], keeping at most `limit` draws exactly.
    pub fn with_limit(
        observed: Vec<f64>,
        directions: Vec<Direction>,
        stop_after: Option<usize>,
        limit: usize,
    ) -> Self {
        let k = observed.len();
        DrawSummaries {
            observed,
            directions,
            stop_after,
            kept: vec![Vec::new(); k],
            streams: None,
            draws: 0,
            limit,
        }
    }

    /// Draws fed so far.
    pub fn draws(&self) -> usize {
        self.draws
    }

    /// True while every draw is kept (summaries are exact).
    pub fn is_exact(&self) -> bool {
        self.streams.is_none()
    }

    /// Adds the next draw's values (one per index, in draw order).
    pub fn push(&mut self, values: &[f64]) {
        self.draws += 1;
        if self.streams.is_none() && self.draws > self.limit {
            let mut streams = vec![Stream::new(); self.kept.len()];
            for (i, s) in streams.iter_mut().enumerate() {
                for &v in &std::mem::take(&mut self.kept[i]) {
                    s.push(v, self.observed[i], self.directions[i], self.stop_after);
                }
            }
            self.streams = Some(streams);
        }
        match &mut self.streams {
            None => {
                for (k, &v) in self.kept.iter_mut().zip(values) {
                    k.push(v);
                }
            }
            Some(streams) => {
                for (i, (s, &v)) in streams.iter_mut().zip(values).enumerate() {
                    s.push(v, self.observed[i], self.directions[i], self.stop_after);
                }
            }
        }
    }

    /// Index `i`'s draws in draw order, while they are all kept.
    pub fn values(&self, i: usize) -> Option<&[f64]> {
        self.is_exact().then(|| self.kept[i].as_slice())
    }

    /// Index `i`'s null values as `bins` equal bins over `[lo, hi]`: from
    /// every draw while kept, else from the quantile sketch.
    pub fn histogram(&self, i: usize, bins: usize, lo: f64, hi: f64) -> Histogram {
        let mut counts = vec![0u64; bins.max(1)];
        let w = (hi - lo) / counts.len() as f64;
        let mut add = |v: f64, c: u64| {
            if v >= lo && v <= hi && w > 0.0 {
                let b = (((v - lo) / w) as usize).min(counts.len() - 1);
                counts[b] += c;
            }
        };
        match &self.streams {
            None => self.kept[i].iter().for_each(|&v| add(v, 1)),
            Some(s) => {
                for (l, buf) in s[i].levels.iter().enumerate() {
                    let wt = if l == 0 { 1 } else { 1u64 << (l - 1) };
                    buf.iter().for_each(|&v| add(v, wt));
                }
            }
        }
        Histogram {
            lo,
            hi,
            counts,
            exact: self.is_exact(),
        }
    }

    /// One summary per index: [`summarize`]'s while exact, else from the
    /// streaming statistics (same definitions; quantiles within the
    /// sketch's rank error).
    pub fn summaries(&self) -> Result<Vec<NullSummary>> {
        let Some(streams) = &self.streams else {
            return self
                .kept
                .iter()
                .enumerate()
                .map(|(i, v)| summarize(self.observed[i], v, self.directions[i], self.stop_after))
                .collect();
        };
        streams
            .iter()
            .enumerate()
            .map(|(i, s)| {
                if let Some(v) = s.bad {
                    return Err(Error::InvalidArgument(format!(
                        "a null value is not finite ({v}); no summary is possible"
                    )));
                }
                let observed = self.observed[i];
                let r = s.n as f64;
                let (mean, sd) = if s.constant {
                    (s.first, 0.0)
                } else {
                    (s.mean, (s.m2 / (r - 1.0)).sqrt())
                };
                let mut p_greater = (1 + s.ge) as f64 / (r + 1.0);
                let mut p_less = (1 + s.le) as f64 / (r + 1.0);
                if let (Some(t), Some(h)) = (s.stopped, self.stop_after) {
                    let p = h as f64 / t as f64;
                    match self.directions[i] {
                        Direction::Greater => p_greater = p,
                        Direction::Less => p_less = p,
                    }
                }
                let q = |p: f64| {
                    if s.constant {
                        s.first
                    } else {
                        s.quantile(p)
                    }
                };
                Ok(NullSummary {
                    observed,
                    mean,
                    sd,
                    z: (sd > 0.0).then(|| (observed - mean) / sd),
                    p_greater,
                    p_less,
                    q025: q(0.025),
                    q50: q(0.5),
                    q975: q(0.975),
                    draws: s.n,
                    more_nested: self.directions[i],
                    stopped_early: s.stopped.is_some(),
                })
            })
            .collect()
    }
}

/// The exact type-7 quantile of `values`, for comparisons in tests.
#[doc(hidden)]
pub fn exact_quantile(values: &[f64], p: f64) -> f64 {
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    quantile_sorted(&v, p)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Beyond the exact limit: mean and sd agree with the two-pass values,
    /// p-values are exact counts, and the quantiles lie within the sketch's
    /// stated rank error L/(2K) of the exact type-7 quantiles.
    #[test]
    fn streaming_matches_exact_within_the_bound() {
        let n = 300_000usize;
        // A deterministic, irregular sequence (Weyl sequence of the golden
        // ratio, squared to skew it).
        let vals: Vec<f64> = (0..n)
            .map(|k| {
                let u = (k as f64 * 0.618_033_988_749_894_9).fract();
                100.0 * u * u
            })
            .collect();
        let mut acc = DrawSummaries::with_limit(vec![30.0], vec![Direction::Greater], None, 1000);
        let exact = summarize(30.0, &vals, Direction::Greater, None).unwrap();
        for &v in &vals {
            acc.push(&[v]);
        }
        assert!(!acc.is_exact());
        let s = &acc.summaries().unwrap()[0];
        assert_eq!(s.draws, n);
        assert_eq!(s.p_greater, exact.p_greater);
        assert_eq!(s.p_less, exact.p_less);
        assert!((s.mean - exact.mean).abs() < 1e-9 * exact.mean);
        assert!((s.sd - exact.sd).abs() < 1e-9 * exact.sd);
        let levels = (n as f64 / SKETCH_K as f64).log2().ceil() + 1.0;
        let eps = levels / (2.0 * SKETCH_K as f64);
        for (p, q) in [(0.025, s.q025), (0.5, s.q50), (0.975, s.q975)] {
            let lo = exact_quantile(&vals, (p - eps).max(0.0));
            let hi = exact_quantile(&vals, (p + eps).min(1.0));
            assert!(q >= lo && q <= hi, "p {p}: {q} not in [{lo}, {hi}]");
        }
    }

    #[test]
    fn exact_below_the_limit_is_summarize() {
        let vals = [3.0, 1.0, 4.0, 1.0, 5.0, 9.0, 2.0, 6.0];
        let mut acc = DrawSummaries::new(
            vec![4.0, 4.0],
            vec![Direction::Greater, Direction::Less],
            Some(2),
        );
        for &v in &vals {
            acc.push(&[v, v]);
        }
        let got = acc.summaries().unwrap();
        assert_eq!(
            got[0],
            summarize(4.0, &vals, Direction::Greater, Some(2)).unwrap()
        );
        assert_eq!(
            got[1],
            summarize(4.0, &vals, Direction::Less, Some(2)).unwrap()
        );
        // [0, 5): 3, 1, 4, 1, 2; [5, 10]: 5, 9, 6.
        assert_eq!(acc.histogram(0, 2, 0.0, 10.0).counts, vec![5, 3]);
    }
}
