//! Exact hypergeometric variates with bounded expected cost, for drawing
//! subsamples of visits without replacement.
//!
//! `H(pop, succ, draws)` is the number of marked units among `draws` units
//! taken without replacement from `pop` units of which `succ` are marked.
//! The sampler first uses the symmetries of the distribution (marked and
//! unmarked units swap, drawn and left units swap, and `succ` and `draws`
//! play the same role) so that both parameters are at most `pop / 2`, then:
//!
//! * when the smaller of them is at most [`SMALL`], it follows those units
//!   one by one (each is drawn with probability `draws left / units left`,
//!   an exact sequential scheme): at most [`SMALL`] bounded integers;
//! * otherwise it uses the ratio-of-uniforms method with Stadlober's
//!   rectangle (Stadlober 1990, J. Comput. Appl. Math. 31:181-189; the
//!   constants `2 sqrt(2/e)` and `3 - 2 sqrt(3/e)` and the centre `mean +
//!   1/2` are recalled from memory, and the exactness of the result is
//!   checked against the exact probabilities in the tests): a bounded
//!   expected number of trials whatever the size of the counts.
//!
//! Either way the cost of one variate does not grow with the counts.

use rand::Rng;

use crate::null::{below, unit};

/// Below or at this many units on the smaller side the units are followed
/// one by one.
pub(crate) const SMALL: u64 = 16;

/// `ln k!` is tabulated up to this `k`; above it Stirling's series is used.
const TABLE: u64 = 1 << 16;

/// `ln k!` for `k` up to the total count of a table.
#[derive(Clone, Debug)]
pub(crate) struct LnFactorial {
    table: Vec<f64>,
}

impl LnFactorial {
    /// A table good for every `k <= max` (a table of at most 2^16 + 1
    /// values; larger `k` use Stirling's series).
    pub(crate) fn new(max: u64) -> Self {
        let len = max.min(TABLE) as usize + 1;
        let mut table = Vec::with_capacity(len);
        let mut acc = 0.0f64;
        table.push(0.0);
        for k in 1..len {
            acc += (k as f64).ln();
            table.push(acc);
        }
        LnFactorial { table }
    }

    /// `ln k!`.
    #[inline]
    pub(crate) fn get(&self, k: u64) -> f64 {
        if let Some(&v) = self.table.get(k as usize) {
            return v;
        }
        // Stirling's series to the k^-5 term (Abramowitz & Stegun 1964,
        // 6.1.41); above 2^16 its truncation error is below 1e-27.
        let x = k as f64;
        let x2 = x * x;
        x * x.ln() - x + 0.5 * (2.0 * std::f64::consts::PI * x).ln() + 1.0 / (12.0 * x)
            - 1.0 / (360.0 * x * x2)
            + 1.0 / (1260.0 * x * x2 * x2)
    }
}

/// One variate of `H(pop, succ, draws)`; needs `succ <= pop`,
/// `draws <= pop` and `lnf` good up to `pop`.
pub(crate) fn hypergeometric<R: Rng + ?Sized>(
    rng: &mut R,
    pop: u64,
    succ: u64,
    draws: u64,
    lnf: &LnFactorial,
) -> u64 {
    debug_assert!(succ <= pop && draws <= pop);
    if succ == 0 || draws == 0 {
        return 0;
    }
    if draws == pop {
        return succ;
    }
    if succ == pop {
        return draws;
    }
    let flip_succ = succ > pop - succ;
    let flip_draws = draws > pop - draws;
    let s = if flip_succ { pop - succ } else { succ };
    let d = if flip_draws { pop - draws } else { draws };
    // x: units of the `s` kind among the `d` kind.
    let x = if s.min(d) <= SMALL {
        one_by_one(rng, pop, s.min(d), s.max(d))
    } else {
        ratio_of_uniforms(rng, pop, s, d, lnf)
    };
    // Back to the question asked: `s`-kind units among the units drawn,
    // then marked units among the units drawn.
    let y = if flip_draws { s - x } else { x };
    if flip_succ {
        draws - y
    } else {
        y
    }
}

/// Follows `a` units one by one: each is among the `b` chosen of `pop`
/// with probability `b left / units left`.
fn one_by_one<R: Rng + ?Sized>(rng: &mut R, pop: u64, a: u64, b: u64) -> u64 {
    let (mut left, mut chosen, mut x) = (pop, b, 0u64);
    for _ in 0..a {
        if chosen == 0 {
            break;
        }
        if (below(rng, left as usize) as u64) < chosen {
            x += 1;
            chosen -= 1;
        }
        left -= 1;
    }
    x
}

/// Ratio of uniforms for `H(pop, s, d)` with `s, d <= pop / 2` (so the
/// support is `0..=min(s, d)`).
fn ratio_of_uniforms<R: Rng + ?Sized>(
    rng: &mut R,
    pop: u64,
    s: u64,
    d: u64,
    lnf: &LnFactorial,
) -> u64 {
    let (popf, sf, df) = (pop as f64, s as f64, d as f64);
    let mean = df * sf / popf;
    let var = df * sf * (popf - sf) * (popf - df) / (popf * popf * (popf - 1.0));
    let centre = mean + 0.5;
    // 2 sqrt(2/e) and 3 - 2 sqrt(3/e).
    let width = 1.715_527_769_921_413_5 * (var + 0.5).sqrt() + 0.898_916_162_058_898_8;
    let top = s.min(d);
    let rest = pop - s - d;
    // ln f(k) up to a constant is -g(k).
    let g = |k: u64| lnf.get(k) + lnf.get(s - k) + lnf.get(d - k) + lnf.get(rest + k);
    let mode = ((((d + 1) as u128) * ((s + 1) as u128)) / ((pop + 2) as u128)) as u64;
    let g_mode = g(mode.min(top));
    loop {
        let u = unit(rng);
        if u == 0.0 {
            continue;
        }
        let v = unit(rng);
        let w = centre + width * (v - 0.5) / u;
        if !(0.0..(top + 1) as f64).contains(&w) {
            continue;
        }
        let k = w as u64;
        // t = ln(f(k) / f(mode)) <= 0; accept when u^2 <= f(k) / f(mode).
        let t = g_mode - g(k);
        // u (4 - u) - 3 >= 2 ln u on (0, 1]: a cheap acceptance.
        if u * (4.0 - u) - 3.0 <= t {
            return k;
        }
        // 2 ln u > u - 1/u on (0, 1): a cheap rejection.
        if u * (u - t) >= 1.0 {
            continue;
        }
        if 2.0 * u.ln() <= t {
            return k;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::null::draw_rng;
    use crate::numerics::special::ln_gamma;

    /// The exact probability `C(s, k) C(pop - s, d - k) / C(pop, d)`, from
    /// the log-Gamma function (an independent route from the sampler's
    /// table).
    fn pmf(pop: u64, s: u64, d: u64, k: u64) -> f64 {
        let lc = |n: u64, k: u64| {
            ln_gamma(n as f64 + 1.0) - ln_gamma(k as f64 + 1.0) - ln_gamma((n - k) as f64 + 1.0)
        };
        if k > s || k > d || d - k > pop - s {
            return 0.0;
        }
        (lc(s, k) + lc(pop - s, d - k) - lc(pop, d)).exp()
    }

    /// Pearson's chi-square of `draws` variates against the exact
    /// hypergeometric probabilities (classes with expected count below 5
    /// pooled into their neighbours, common practice) must stay below
    /// `df + 6 sqrt(2 df)` (the chi-square's mean plus six of its standard
    /// deviations, normal approximation; common practice).
    fn check(pop: u64, s: u64, d: u64, seed: u64) {
        let lnf = LnFactorial::new(pop);
        let n = 100_000usize;
        let hi = s.min(d);
        let mut counts = vec![0usize; hi as usize + 1];
        let mut rng = draw_rng(seed, 0);
        for _ in 0..n {
            let x = hypergeometric(&mut rng, pop, s, d, &lnf);
            assert!(x <= hi && d - x <= pop - s, "{x} outside the support");
            counts[x as usize] += 1;
        }
        let (mut chi, mut df) = (0.0, 0usize);
        let (mut obs, mut exp) = (0.0, 0.0);
        for k in 0..=hi {
            obs += counts[k as usize] as f64;
            exp += n as f64 * pmf(pop, s, d, k);
            if exp >= 5.0 {
                chi += (obs - exp) * (obs - exp) / exp;
                df += 1;
                obs = 0.0;
                exp = 0.0;
            }
        }
        if exp > 0.0 {
            chi += (obs - exp) * (obs - exp) / exp.max(1e-300);
        }
        let df = df.saturating_sub(1).max(1) as f64;
        assert!(
            chi < df + 6.0 * (2.0 * df).sqrt(),
            "H({pop}, {s}, {d}): chi-square {chi:.1} on {df} classes"
        );
    }

    #[test]
    fn one_by_one_matches_the_exact_distribution() {
        check(50, 7, 20, 1);
        check(50, 43, 20, 2); // marked units flipped
        check(50, 7, 41, 3); // drawn units flipped
        check(1000, 12, 990, 4);
    }

    #[test]
    fn ratio_of_uniforms_matches_the_exact_distribution() {
        check(200, 40, 60, 5);
        check(200, 170, 60, 6);
        check(10_000, 300, 5_000, 7);
        check(1_000_000, 20_000, 700_000, 8); // Stirling's series above 2^16
        check(100, 17, 17, 9); // smallest variance that reaches this path
    }

    /// Sums of `ln k` against the table and against Stirling's series.
    #[test]
    fn ln_factorial_both_ranges() {
        let lnf = LnFactorial::new(1 << 20);
        for k in [0u64, 1, 2, 10, 1000, TABLE] {
            let direct: f64 = (1..=k).map(|x| (x as f64).ln()).sum();
            assert!((lnf.get(k) - direct).abs() < 1e-8 * direct.max(1.0));
        }
        let k = TABLE + 5_000;
        let direct: f64 = (1..=k).map(|x| (x as f64).ln()).sum();
        assert!((lnf.get(k) - direct).abs() < 1e-7);
    }
}
