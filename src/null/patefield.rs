//! `fixed-totals`: random integer tables with given row and column sums
//! (Patefield 1981, Applied Statistics 30:91-97, algorithm AS 159).

use ndarray::Array2;
use rand::distr::Distribution;
use rand::Rng;

use crate::error::{Error, Result};
use crate::null::unit;
use crate::storage::{Network, Weight};

/// Largest total count accepted: counts and sums stay exact in `f64`.
const MAX_TOTAL: u64 = 1 << 53;

/// `ln k!` is tabulated up to this `k`; above it Stirling's series is used.
const TABLE: usize = 1 << 16;

/// Above this variance a cell's hypergeometric value is drawn by ratio of uniforms
/// (ratio of uniforms) instead of the walk from the mode.
const WIDE_VARIANCE: f64 = 1e6;

/// `fixed-totals`: integer tables with the observed row sums `r_i` and
/// column sums `c_j`, drawn from their distribution under independence
/// given the margins (the multiple hypergeometric: the `N` units of the
/// table dealt at random to cells with the margins fixed). The mean of cell
/// `(i, j)` is `r_i c_j / N`.
///
/// Method (Patefield 1981, AS 159; which cell order and which search within
/// a hypergeometric the published listing uses is recalled, not checked;
/// the law of the table drawn does not depend on either, since each cell
/// is drawn from its exact conditional law given the cells before it):
/// cells are filled row by row, left to right. Given the
/// cells already drawn, cell `(i, j)` follows the hypergeometric
/// distribution of the number of row `i`'s remaining units that fall in
/// column `j` when they are drawn without replacement from the remaining
/// units of columns `j..n`; the last cell of each row and the last row are
/// fixed by the margins. Each hypergeometric value is found by inversion,
/// starting at the mode and stepping outwards, alternately up and down,
/// with the ratio of successive probabilities, so the work per cell grows
/// with the spread of its distribution rather than its range. A cell whose
/// distribution has a variance above 10^6 (sd above 1000) is drawn instead
/// by Stadlober's ratio-of-uniforms method (HRUA, Stadlober 1989), in a
/// bounded expected time whatever the counts, with this crate's own
/// uniforms.
///
/// Cost per draw: `O(sum over cells of (1 + sd of the cell))`; memory
/// `O(m n)` for the table plus a `ln k!` table of at most 2^16 entries.
/// Above 2^16, `ln k!` comes from Stirling's series; the cancellation in
/// the log-probabilities then limits their relative accuracy to about
/// `1e-16 * N ln N`, far below what any Monte Carlo test resolves.
///
/// Errors at construction: a weight that is not a whole number (naming its
/// row and column), or a total above 2^53. On a binary network the model
/// treats the ones as counts (draws may hold counts above 1).
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, FixedTotals}, Network};
/// let net = Network::from_array(array![[3, 1, 0], [2, 5, 1]]).unwrap();
/// let t = FixedTotals::new(&net).unwrap().sample(&mut draw_rng(9, 0));
/// assert_eq!(t.sum_axis(ndarray::Axis(1)).to_vec(), vec![4.0, 8.0]);
/// assert_eq!(t.sum_axis(ndarray::Axis(0)).to_vec(), vec![5.0, 6.0, 1.0]);
/// ```
#[derive(Clone, Debug)]
pub struct FixedTotals {
    rows: Vec<u64>,
    cols: Vec<u64>,
    total: u64,
    ln_fact: Vec<f64>,
}

impl FixedTotals {
    /// Checks that every weight is a whole number and prepares the model.
    pub fn new<T: Weight>(net: &Network<T>) -> Result<Self> {
        crate::storage::check_dense_size(
            "a table of counts",
            net.nrows(),
            net.ncols(),
            std::mem::size_of::<f64>(),
        )?;
        let csr = net.csr();
        let mut rows = vec![0u64; net.nrows()];
        let mut cols = vec![0u64; net.ncols()];
        let mut total: u64 = 0;
        for i in 0..net.nrows() {
            let (cs, vals) = csr.row(i);
            for (&j, &x) in cs.iter().zip(vals) {
                let v = x.as_f64();
                if v > MAX_TOTAL as f64 {
                    return Err(Error::InvalidArgument(format!(
                        "the fixed-totals model accepts counts up to 2^53, but row '{}', column '{}' holds {}: too large",
                        net.row_labels()[i],
                        net.col_labels()[j as usize],
                        x
                    )));
                }
                if v.fract() != 0.0 {
                    return Err(Error::InvalidArgument(format!(
                        "the fixed-totals model needs whole-number counts, but row '{}', column '{}' holds {}",
                        net.row_labels()[i],
                        net.col_labels()[j as usize],
                        x
                    )));
                }
                let v = v as u64;
                rows[i] += v;
                cols[j as usize] += v;
                total = total.saturating_add(v);
            }
        }
        if total > MAX_TOTAL {
            return Err(Error::InvalidArgument(
                "the fixed-totals model accepts a total count of at most 2^53; this network sums to more"
                    .into(),
            ));
        }
        let len = (total as usize).min(TABLE) + 1;
        let mut ln_fact = Vec::with_capacity(len);
        let mut acc = 0.0f64;
        ln_fact.push(0.0);
        for k in 1..len {
            acc += (k as f64).ln();
            ln_fact.push(acc);
        }
        Ok(FixedTotals {
            rows,
            cols,
            total,
            ln_fact,
        })
    }

    /// Row sums.
    pub fn row_totals(&self) -> &[u64] {
        &self.rows
    }

    /// Column sums.
    pub fn col_totals(&self) -> &[u64] {
        &self.cols
    }

    fn ln_factorial(&self, k: u64) -> f64 {
        if (k as usize) < self.ln_fact.len() {
            return self.ln_fact[k as usize];
        }
        // Stirling's series to the k^-5 term (Abramowitz & Stegun 6.1.41).
        let x = k as f64;
        let x2 = x * x;
        x * x.ln() - x + 0.5 * (2.0 * std::f64::consts::PI * x).ln() + 1.0 / (12.0 * x)
            - 1.0 / (360.0 * x * x2)
            + 1.0 / (1260.0 * x * x2 * x2)
    }

    fn ln_choose(&self, n: u64, k: u64) -> f64 {
        self.ln_factorial(n) - self.ln_factorial(k) - self.ln_factorial(n - k)
    }

    /// One value of the hypergeometric distribution: successes among `draws`
    /// units drawn without replacement from `pop` units of which `succ` are
    /// successes.
    fn hypergeometric<R: Rng + ?Sized>(&self, rng: &mut R, pop: u64, succ: u64, draws: u64) -> u64 {
        let lo = draws.saturating_sub(pop - succ);
        let hi = draws.min(succ);
        if lo == hi {
            return lo;
        }
        // A wide distribution: the walk below would take time growing with
        // its spread (and, where the log-factorials lose accuracy, with its
        // whole range). Ratio of uniforms takes a bounded expected time
        // whatever the counts.
        let (p, s, d) = (pop as f64, succ as f64, draws as f64);
        let var = d * (s / p) * ((p - s) / p) * ((p - d) / (p - 1.0).max(1.0));
        if var > WIDE_VARIANCE {
            return self.hypergeometric_hrua(rng, pop, succ, draws);
        }
        let mode = (((draws + 1) as u128 * (succ + 1) as u128) / (pop + 2) as u128) as u64;
        let mode = mode.clamp(lo, hi);
        let p_mode = (self.ln_choose(succ, mode) + self.ln_choose(pop - succ, draws - mode)
            - self.ln_choose(pop, draws))
        .exp();
        // P(x+1)/P(x) = (succ-x)(draws-x) / ((x+1)(pop-succ-draws+x+1)).
        let up_ratio = |x: u64| {
            ((succ - x) as f64 * (draws - x) as f64)
                / ((x + 1) as f64 * (pop - succ + x + 1 - draws) as f64)
        };
        // P(x-1)/P(x) = x (pop-succ-draws+x) / ((succ-x+1)(draws-x+1)).
        let down_ratio = |x: u64| {
            (x as f64 * (pop - succ + x - draws) as f64)
                / ((succ - x + 1) as f64 * (draws - x + 1) as f64)
        };
        let mut u = unit(rng);
        loop {
            let mut acc = p_mode;
            if u < acc {
                return mode;
            }
            let (mut up, mut down) = (mode, mode);
            let (mut p_up, mut p_down) = (p_mode, p_mode);
            while up < hi || down > lo {
                if up < hi {
                    p_up *= up_ratio(up);
                    up += 1;
                    acc += p_up;
                    if u < acc {
                        return up;
                    }
                }
                if down > lo {
                    p_down *= down_ratio(down);
                    down -= 1;
                    acc += p_down;
                    if u < acc {
                        return down;
                    }
                }
            }
            // Rounding left the summed probabilities just below `u`: draw
            // again, scaled to the mass actually summed.
            u = unit(rng) * acc;
        }
    }

    /// The hypergeometric value by Stadlober's ratio-of-uniforms method
    /// HRUA (Stadlober 1989, "Sampling from Poisson, binomial and
    /// hypergeometric distributions: ratio of uniforms as a simple and fast
    /// alternative", Bericht 303, Joanneum Graz; constants and steps from
    /// memory): a uniform point `(X, Y)` gives the candidate
    /// `W = mean + 0.5 + c (Y - 1/2) / X`, accepted when `X^2` lies below
    /// its probability relative to the mode (with the two squeezes of the
    /// method). Expected cost bounded independently of the counts; the
    /// tail beyond 16 sd is cut (probability below e^-100).
    fn hypergeometric_hrua<R: Rng + ?Sized>(
        &self,
        rng: &mut R,
        pop: u64,
        succ: u64,
        draws: u64,
    ) -> u64 {
        const D1: f64 = 1.715_527_769_921_413_5; // 2 sqrt(2/e)
        const D2: f64 = 0.898_916_162_058_898_8; // 3 - 2 sqrt(3/e)
        let fail = pop - succ;
        let (small, large) = (succ.min(fail), succ.max(fail));
        let m = draws.min(pop - draws);
        let p = small as f64 / pop as f64;
        let d6 = m as f64 * p + 0.5;
        let d7 = ((pop - m) as f64 * draws as f64 * p * (1.0 - p) / (pop - 1) as f64 + 0.5).sqrt();
        let d8 = D1 * d7 + D2;
        let mode = (((m + 1) as u128 * (small + 1) as u128) / (pop + 2) as u128) as u64;
        let lnf = |z: u64| {
            self.ln_factorial(z)
                + self.ln_factorial(small - z)
                + self.ln_factorial(m - z)
                + self.ln_factorial(large - m + z)
        };
        let d10 = lnf(mode);
        let d11 = ((m.min(small) + 1) as f64).min((d6 + 16.0 * d7).floor());
        let z = loop {
            let x = unit(rng);
            let y = unit(rng);
            let w = d6 + d8 * (y - 0.5) / x;
            if !(0.0..d11).contains(&w) {
                continue;
            }
            let z = w.floor() as u64;
            let t = d10 - lnf(z);
            if x * (4.0 - x) - 3.0 <= t {
                break z;
            }
            if x * (x - t) >= 1.0 {
                continue;
            }
            if 2.0 * x.ln() <= t {
                break z;
            }
        };
        // Back from the smaller side and the smaller sample.
        let z = if succ > fail { m - z } else { z };
        if m < draws {
            succ - z
        } else {
            z
        }
    }

    /// One draw: a table of counts (as `f64`) with the observed margins.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Array2<f64> {
        let (m, n) = (self.rows.len(), self.cols.len());
        let mut t = Array2::<f64>::zeros((m, n));
        let mut cols_left = self.cols.clone();
        let mut grand = self.total;
        for i in 0..m - 1 {
            let mut row_left = self.rows[i];
            let mut pool = grand;
            for j in 0..n - 1 {
                if row_left == 0 {
                    break;
                }
                let c = cols_left[j];
                let x = self.hypergeometric(rng, pool, c, row_left);
                t[[i, j]] = x as f64;
                row_left -= x;
                cols_left[j] -= x;
                pool -= c;
            }
            if row_left > 0 {
                t[[i, n - 1]] = row_left as f64;
                cols_left[n - 1] -= row_left;
            }
            grand -= self.rows[i];
        }
        for j in 0..n {
            t[[m - 1, j]] = cols_left[j] as f64;
        }
        t
    }
}

impl Distribution<Array2<f64>> for FixedTotals {
    /// One draw (see [`FixedTotals::sample`]).
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Array2<f64> {
        FixedTotals::sample(self, rng)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Stirling's series (Abramowitz & Stegun 1964, 6.1.41) against the
    /// direct sum of logarithms just past the table.
    #[test]
    fn stirling_matches_the_sum_of_logs() {
        let net = Network::from_array(ndarray::array![[1u32]]).unwrap();
        let s = FixedTotals::new(&net).unwrap();
        let k = TABLE as u64 + 12_345;
        let direct: f64 = (1..=k).map(|x| (x as f64).ln()).sum();
        // The sum of ~78 000 rounded logarithms is itself good to ~1e-9.
        assert!(
            (s.ln_factorial(k) - direct).abs() < 1e-7,
            "{} vs {direct}",
            s.ln_factorial(k)
        );
    }
}
