//! The curveball chain for `fixed-both` (Strona, Nappo, Boccacci, Fattorini
//! & San-Miguel-Ayanz 2014, Nat. Commun. 5:4114), traded a word at a time.

use rand::Rng;

use crate::null::{below, Chain};
use crate::storage::BitMatrix;

/// A Markov chain over binary matrices with fixed row and column degrees
/// whose stationary distribution is uniform (the curveball algorithm of
/// Strona et al. 2014, Nat. Commun. 5:4114; uniformity proved by Carstens
/// 2015, Phys. Rev. E 91:042812).
///
/// One [`step`](Self::step) is one *trade*: two distinct rows `a`, `b` are
/// picked uniformly; the columns that only `a` has and those that only `b`
/// has are pooled, and a uniform subset of the pool as large as `a`'s share
/// goes to `a`, the rest to `b`. Row and column degrees never change.
///
/// The trade works on the rows' bit words: the pool is the symmetric
/// difference `a XOR b`, of size `t`; a uniform `k`-subset of the pool's
/// ranks `0..t` (`k` = `a`'s share) is drawn as a bit mask (in one register
/// when `t <= 128`, else a word array) and its bits are deposited onto the
/// pool's columns word by word (the `pdep` instruction where the CPU has
/// BMI2, else a loop over the pool's bits; both give the same matrix).
///
/// The subset: with `s = min(k, t - k)`, when `8 s < t` Floyd's algorithm
/// (Bentley & Floyd 1987, Commun. ACM 30:754) draws the `s` smaller side
/// (the other is its complement). Otherwise every rank gets an independent
/// coin with probability `e / 8`, `e = round(8 k / t)` (AND / OR of up to
/// three random words), and the count is corrected exactly: while there
/// are more than `k` ones, one of the ones chosen uniformly is cleared;
/// while fewer, one of the zeros chosen uniformly is set. The coins are
/// exchangeable and each correction treats all ranks alike, so the law of
/// the result is invariant under every permutation of the ranks: the
/// uniform law on `k`-subsets. The expected number of corrections is
/// `E|Bin(t, e/8) - k| <= t / 16 + sqrt(t) / 2`, against `s` steps of
/// Floyd. Bounded integers are exact (Lemire's method on 32-bit halves
/// of the 64-bit outputs).
///
/// [`Chain::run`] (and [`run`](Self::run)) choose the instruction path once
/// per run (`popcnt`, and `pdep` with BMI2, detected at run time); every
/// path walks the same chain for the same stream.
///
/// Cost per trade: `O(n / 64 + min(s, t / 16 + sqrt(t)))` (times
/// `t / 64` per correction when `t > 128`); memory `O(m n / 64)`.
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, CurveballChain}, Network};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 0], [0, 1, 1]]).unwrap();
/// let mut chain = CurveballChain::new(&net.binary().unwrap());
/// chain.run(&mut draw_rng(5, 0), CurveballChain::default_burn_in(3, 3));
/// assert_eq!(chain.matrix().row_degrees(), vec![2, 1, 2]);
/// assert_eq!(chain.matrix().col_degrees(), vec![2, 2, 1]);
/// ```
#[derive(Clone, Debug)]
pub struct CurveballChain {
    bits: BitMatrix,
    /// Scratch: the chosen ranks of the pool, one bit each, plus one word
    /// of slack so that a 64-bit window never reads past the end.
    pick: Vec<u64>,
    path: Path,
}

/// The instructions a trade is compiled for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Path {
    /// Software popcount and bit deposit.
    Portable,
    /// Hardware `popcnt`, software bit deposit.
    #[cfg(target_arch = "x86_64")]
    Popcnt,
    /// Hardware `popcnt` and `pdep`.
    #[cfg(target_arch = "x86_64")]
    Bmi2,
}

impl Path {
    fn detect() -> Self {
        #[cfg(target_arch = "x86_64")]
        if std::arch::is_x86_feature_detected!("popcnt") {
            if std::arch::is_x86_feature_detected!("bmi2") {
                return Path::Bmi2;
            }
            return Path::Popcnt;
        }
        Path::Portable
    }

    /// Every path this CPU can run (for tests).
    #[cfg(test)]
    fn available() -> Vec<Path> {
        #[allow(unused_mut)] // only x86-64 adds paths
        let mut v = vec![Path::Portable];
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("popcnt") {
                v.push(Path::Popcnt);
                if std::arch::is_x86_feature_detected!("bmi2") {
                    v.push(Path::Bmi2);
                }
            }
        }
        v
    }
}

impl CurveballChain {
    /// A chain started at `start`.
    pub fn new(start: &BitMatrix) -> Self {
        Self::with_path(start, Path::detect())
    }

    fn with_path(start: &BitMatrix, path: Path) -> Self {
        CurveballChain {
            bits: start.clone(),
            pick: vec![0; start.ncols().div_ceil(64) + 1],
            path,
        }
    }

    /// The default number of trades per independent draw, `5 * max(m, n)`
    /// (docs/methods.md §6).
    pub fn default_burn_in(m: usize, n: usize) -> usize {
        5 * m.max(n)
    }

    /// The current matrix.
    pub fn matrix(&self) -> &BitMatrix {
        &self.bits
    }

    /// The current matrix, consuming the chain.
    pub fn into_matrix(self) -> BitMatrix {
        self.bits
    }

    /// Runs `trades` steps (the same matrix as `trades` calls of
    /// [`step`](Self::step); the instruction path is chosen once).
    pub fn run<R: Rng + ?Sized>(&mut self, rng: &mut R, trades: usize) {
        match self.path {
            Path::Portable => {
                for _ in 0..trades {
                    self.trade::<R, false>(rng);
                }
            }
            #[cfg(target_arch = "x86_64")]
            // SAFETY: `Popcnt` is chosen only when the CPU reports POPCNT.
            Path::Popcnt => unsafe { self.run_popcnt(rng, trades) },
            #[cfg(target_arch = "x86_64")]
            // SAFETY: `Bmi2` is chosen only when the CPU reports BMI2 and POPCNT.
            Path::Bmi2 => unsafe { self.run_bmi2(rng, trades) },
        }
    }

    /// One trade. A matrix with fewer than two rows has a single state and
    /// does not change.
    pub fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        self.run(rng, 1)
    }

    /// Trades compiled with hardware popcount.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "popcnt")]
    unsafe fn run_popcnt<R: Rng + ?Sized>(&mut self, rng: &mut R, trades: usize) {
        for _ in 0..trades {
            self.trade::<R, false>(rng);
        }
    }

    /// Trades compiled with BMI2 (`pdep` inline, shifts without flags) and
    /// hardware popcount.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "bmi2,popcnt")]
    unsafe fn run_bmi2<R: Rng + ?Sized>(&mut self, rng: &mut R, trades: usize) {
        for _ in 0..trades {
            self.trade::<R, true>(rng);
        }
    }

    #[inline(always)]
    fn trade<R: Rng + ?Sized, const BMI2: bool>(&mut self, rng: &mut R) {
        let m = self.bits.nrows();
        if m < 2 {
            return;
        }
        let mut draws = Halves::default();
        let (a, b) = draws.row_pair(rng, m);
        let (ra, rb) = self.bits.two_rows_mut(a, b);
        let (mut only_a, mut total) = (0usize, 0usize);
        for (&x, &y) in ra.iter().zip(rb.iter()) {
            only_a += (x & !y).count_ones() as usize;
            total += (x ^ y).count_ones() as usize;
        }
        if only_a == 0 || only_a == total {
            return;
        }
        if total <= 64 {
            // The mask fits in one word; the pool's columns in increasing
            // order take ranks 0, 1, 2, ...
            let mut pick = subset_word::<R, BMI2>(&mut draws, rng, total, only_a);
            for (x, y) in ra.iter_mut().zip(rb.iter_mut()) {
                let d = *x ^ *y;
                if d == 0 {
                    continue;
                }
                let give_a = deposit::<BMI2>(pick, d);
                pick = pick.checked_shr(d.count_ones()).unwrap_or(0);
                *x = (*x & !d) | give_a;
                *y = (*y & !d) | (d ^ give_a);
            }
            return;
        }
        if total <= 128 {
            // Two words in one register.
            let mut pick = subset_small::<R, BMI2>(&mut draws, rng, total, only_a);
            for (x, y) in ra.iter_mut().zip(rb.iter_mut()) {
                let d = *x ^ *y;
                if d == 0 {
                    continue;
                }
                let give_a = deposit::<BMI2>(pick as u64, d);
                pick >>= d.count_ones();
                *x = (*x & !d) | give_a;
                *y = (*y & !d) | (d ^ give_a);
            }
            return;
        }
        let pick = &mut self.pick[..total.div_ceil(64) + 1];
        subset_words::<R, BMI2>(&mut draws, rng, total, only_a, pick);
        let mut offset = 0usize;
        for (x, y) in ra.iter_mut().zip(rb.iter_mut()) {
            let d = *x ^ *y;
            if d == 0 {
                continue;
            }
            let c = d.count_ones() as usize;
            let window = take_bits(pick, offset, c);
            offset += c;
            let give_a = deposit::<BMI2>(window, d);
            *x = (*x & !d) | give_a;
            *y = (*y & !d) | (d ^ give_a);
        }
    }
}

/// 64 independent bits, each 1 with probability `eighths / 8`
/// (`1..=7`), from one to three raw words.
#[inline(always)]
fn coins<R: Rng + ?Sized>(rng: &mut R, eighths: usize) -> u64 {
    let x = rng.next_u64();
    match eighths {
        4 => x,
        2 => x & rng.next_u64(),
        6 => x | rng.next_u64(),
        1 => x & rng.next_u64() & rng.next_u64(),
        3 => x & (rng.next_u64() | rng.next_u64()),
        5 => x | (rng.next_u64() & rng.next_u64()),
        _ => {
            debug_assert_eq!(eighths, 7);
            x | rng.next_u64() | rng.next_u64()
        }
    }
}

/// The coin probability in eighths for a `k`-subset of `t`: `round(8 k / t)`,
/// in `1..=7` whenever `8 min(k, t - k) >= t`.
#[inline(always)]
fn eighths(t: usize, k: usize) -> usize {
    (8 * k + t / 2) / t
}

/// The `r`-th lowest set bit of `w` (`r < popcount(w)`), as a one-bit mask.
#[inline(always)]
fn select<const BMI2: bool>(w: u64, r: usize) -> u64 {
    #[cfg(target_arch = "x86_64")]
    if BMI2 {
        // SAFETY: `BMI2` is true only in code run after BMI2 was detected.
        return unsafe { std::arch::x86_64::_pdep_u64(1 << r, w) };
    }
    let mut w = w;
    for _ in 0..r {
        w &= w - 1;
    }
    w & w.wrapping_neg()
}

/// [`select`] on a 128-bit word.
#[inline(always)]
fn select128<const BMI2: bool>(w: u128, r: usize) -> u128 {
    let lo = w as u64;
    let c = lo.count_ones() as usize;
    if r < c {
        u128::from(select::<BMI2>(lo, r))
    } else {
        u128::from(select::<BMI2>((w >> 64) as u64, r - c)) << 64
    }
}

/// A uniform `k`-subset of the ranks `0..t` (`0 < k < t <= 128`) as the low
/// `t` bits of a mask (see [`CurveballChain`] for the method).
#[inline(always)]
fn subset_small<R: Rng + ?Sized, const BMI2: bool>(
    draws: &mut Halves,
    rng: &mut R,
    t: usize,
    k: usize,
) -> u128 {
    debug_assert!(0 < k && k < t && t <= 128);
    let low = u128::MAX >> (128 - t);
    let s = k.min(t - k);
    if 8 * s < t {
        // Floyd's algorithm for the smaller side.
        let mut pick = 0u128;
        for j in t - s..t {
            let r = draws.below(rng, j + 1);
            // `r` if it is still free, else `j` (never taken before).
            let r = if (pick >> r) & 1 == 0 { r } else { j };
            pick |= 1 << r;
        }
        return if s == k { pick } else { !pick & low };
    }
    let e = eighths(t, k);
    let mut w = u128::from(coins(rng, e));
    if t > 64 {
        w |= u128::from(coins(rng, e)) << 64;
    }
    w &= low;
    let mut c = w.count_ones() as usize;
    while c > k {
        w ^= select128::<BMI2>(w, draws.below(rng, c));
        c -= 1;
    }
    while c < k {
        w |= select128::<BMI2>(!w & low, draws.below(rng, t - c));
        c += 1;
    }
    w
}

/// [`subset_small`] for `t <= 64` in one 64-bit word: the same draws from
/// the stream and the same subset, with narrower operations.
#[inline(always)]
fn subset_word<R: Rng + ?Sized, const BMI2: bool>(
    draws: &mut Halves,
    rng: &mut R,
    t: usize,
    k: usize,
) -> u64 {
    debug_assert!(0 < k && k < t && t <= 64);
    let low = u64::MAX >> (64 - t);
    let s = k.min(t - k);
    if 8 * s < t {
        let mut pick = 0u64;
        for j in t - s..t {
            let r = draws.below(rng, j + 1);
            let r = if (pick >> r) & 1 == 0 { r } else { j };
            pick |= 1 << r;
        }
        return if s == k { pick } else { !pick & low };
    }
    let mut w = coins(rng, eighths(t, k)) & low;
    let mut c = w.count_ones() as usize;
    while c > k {
        w ^= select::<BMI2>(w, draws.below(rng, c));
        c -= 1;
    }
    while c < k {
        w |= select::<BMI2>(!w & low, draws.below(rng, t - c));
        c += 1;
    }
    w
}

/// Bits that are valid in word `i` of a `t`-bit string.
#[inline(always)]
fn valid_bits(t: usize, i: usize) -> u64 {
    let left = t - 64 * i;
    if left >= 64 {
        u64::MAX
    } else {
        (1u64 << left) - 1
    }
}

/// Flips the `r`-th one (`ONES`) or the `r`-th zero among the first `t`
/// bits of `words`.
#[inline(always)]
fn flip_nth<const BMI2: bool, const ONES: bool>(words: &mut [u64], t: usize, mut r: usize) {
    for (i, w) in words.iter_mut().enumerate() {
        let cand = if ONES { *w } else { !*w & valid_bits(t, i) };
        let c = cand.count_ones() as usize;
        if r < c {
            *w ^= select::<BMI2>(cand, r);
            return;
        }
        r -= c;
    }
    unreachable!("rank within the pool");
}

/// A uniform `k`-subset of the ranks `0..t` (`0 < k < t`) written to the
/// bit string `pick` (`t.div_ceil(64) + 1` words, the last one left zero).
#[inline(always)]
pub(super) fn subset_words<R: Rng + ?Sized, const BMI2: bool>(
    draws: &mut Halves,
    rng: &mut R,
    t: usize,
    k: usize,
    pick: &mut [u64],
) {
    debug_assert!(0 < k && k < t && pick.len() == t.div_ceil(64) + 1);
    pick.fill(0);
    let nw = t.div_ceil(64);
    let s = k.min(t - k);
    if 8 * s < t {
        for j in t - s..t {
            let r = draws.below(rng, j + 1);
            let hit = (pick[r >> 6] >> (r & 63)) & 1;
            let r = if hit == 0 { r } else { j };
            pick[r >> 6] |= 1 << (r & 63);
        }
        if s != k {
            for (i, w) in pick[..nw].iter_mut().enumerate() {
                *w = !*w & valid_bits(t, i);
            }
        }
        return;
    }
    let e = eighths(t, k);
    let mut c = 0usize;
    for (i, w) in pick[..nw].iter_mut().enumerate() {
        *w = coins(rng, e) & valid_bits(t, i);
        c += w.count_ones() as usize;
    }
    let words = &mut pick[..nw];
    while c > k {
        let r = draws.below(rng, c);
        flip_nth::<BMI2, true>(words, t, r);
        c -= 1;
    }
    while c < k {
        let r = draws.below(rng, t - c);
        flip_nth::<BMI2, false>(words, t, r);
        c += 1;
    }
}

/// Uniform integers below `n` from the two 32-bit halves of each raw
/// `u64` (low half first): Lemire's multiply-and-reject method on 32-bit
/// words (Lemire 2019, ACM TOMACS 29:3), exact for `n <= 2^32`; larger `n`
/// take the crate's 64-bit [`below`].
#[derive(Default)]
pub(super) struct Halves {
    word: u64,
    left: bool,
}

impl Halves {
    #[inline(always)]
    fn next<R: Rng + ?Sized>(&mut self, rng: &mut R) -> u64 {
        if self.left {
            self.left = false;
            self.word >> 32
        } else {
            self.word = rng.next_u64();
            self.left = true;
            self.word & 0xFFFF_FFFF
        }
    }

    /// Two distinct rows of `m >= 2`, uniformly: the trade's pair, drawn
    /// the same way by the bit-table and the list chain.
    #[inline(always)]
    pub(super) fn row_pair<R: Rng + ?Sized>(&mut self, rng: &mut R, m: usize) -> (usize, usize) {
        let a = self.below(rng, m);
        let mut b = self.below(rng, m - 1);
        if b >= a {
            b += 1;
        }
        (a, b)
    }

    #[inline(always)]
    pub(super) fn below<R: Rng + ?Sized>(&mut self, rng: &mut R, n: usize) -> usize {
        debug_assert!(n > 0);
        if n as u64 > 1 << 32 {
            return below(rng, n);
        }
        let n = n as u64;
        let mut m = self.next(rng) * n;
        if m & 0xFFFF_FFFF < n {
            let t = (1u64 << 32) % n;
            while m & 0xFFFF_FFFF < t {
                m = self.next(rng) * n;
            }
        }
        (m >> 32) as usize
    }
}

/// `pdep(src, mask)`: the instruction when `BMI2` (only inside a function
/// compiled for BMI2), else the portable loop.
#[inline(always)]
fn deposit<const BMI2: bool>(src: u64, mask: u64) -> u64 {
    #[cfg(target_arch = "x86_64")]
    if BMI2 {
        // SAFETY: `BMI2` is true only in code run after BMI2 was detected.
        return unsafe { std::arch::x86_64::_pdep_u64(src, mask) };
    }
    deposit_portable(src, mask)
}

/// Bits `offset..offset + c` of the bit string `words` (`c <= 64`; `words`
/// has a word of slack past bit `offset + c`), as the low `c` bits.
#[inline(always)]
fn take_bits(words: &[u64], offset: usize, c: usize) -> u64 {
    let (w, s) = (offset >> 6, offset & 63);
    let mut v = words[w] >> s;
    if s != 0 {
        v |= words[w + 1] << (64 - s);
    }
    if c < 64 {
        v & ((1u64 << c) - 1)
    } else {
        v
    }
}

/// The low `popcount(mask)` bits of `src` placed, in order, at the set bits
/// of `mask` (what `pdep` computes), one set bit of `mask` at a time.
#[inline(always)]
fn deposit_portable(mut src: u64, mut mask: u64) -> u64 {
    let mut out = 0u64;
    while mask != 0 {
        let low = mask & mask.wrapping_neg();
        out |= low & (src & 1).wrapping_neg();
        src >>= 1;
        mask &= mask - 1;
    }
    out
}

#[cfg(all(test, target_arch = "x86_64"))]
#[target_feature(enable = "bmi2")]
unsafe fn deposit_bmi2(src: u64, mask: u64) -> u64 {
    std::arch::x86_64::_pdep_u64(src, mask)
}

impl Chain for CurveballChain {
    type State = BitMatrix;
    /// One trade (see [`CurveballChain::step`]).
    fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        CurveballChain::step(self, rng)
    }
    /// `trades` trades (see [`CurveballChain::run`]).
    fn run<R: Rng + ?Sized>(&mut self, rng: &mut R, trades: usize) {
        CurveballChain::run(self, rng, trades)
    }
    fn state(&self) -> &BitMatrix {
        &self.bits
    }
    fn into_state(self) -> BitMatrix {
        self.bits
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::null::draw_rng;
    use rand::RngCore;
    use std::collections::HashMap;

    fn random_bits(m: usize, n: usize, fill_per_mille: usize, seed: u64) -> BitMatrix {
        let mut rng = draw_rng(seed, 0);
        BitMatrix::from_fn(m, n, |_, _| below(&mut rng, 1000) < fill_per_mille)
    }

    /// `deposit_portable` against the definition of `pdep` (Intel SDM,
    /// "PDEP - Parallel Bits Deposit"), bit by bit.
    #[test]
    fn deposit_matches_definition() {
        let mut rng = draw_rng(9, 9);
        for _ in 0..2000 {
            let (src, mask) = (rng.next_u64(), rng.next_u64() & rng.next_u64());
            let mut want = 0u64;
            let mut k = 0;
            for i in 0..64 {
                if (mask >> i) & 1 == 1 {
                    want |= ((src >> k) & 1) << i;
                    k += 1;
                }
            }
            assert_eq!(deposit_portable(src, mask), want);
            #[cfg(target_arch = "x86_64")]
            if std::arch::is_x86_feature_detected!("bmi2") {
                assert_eq!(unsafe { deposit_bmi2(src, mask) }, want);
            }
        }
        assert_eq!(deposit_portable(u64::MAX, u64::MAX), u64::MAX);
    }

    /// Bounded integers from 32-bit halves: every value of `0..n` equally
    /// often within 5 standard deviations (binomial), for several `n`.
    #[test]
    fn halves_are_uniform() {
        let mut rng = draw_rng(2, 3);
        let mut h = Halves::default();
        for n in [2usize, 3, 7, 100] {
            let draws = 20_000 * n;
            let mut c = vec![0usize; n];
            for _ in 0..draws {
                c[h.below(&mut rng, n)] += 1;
            }
            let p = 1.0 / n as f64;
            let sd = (draws as f64 * p * (1.0 - p)).sqrt();
            for &x in &c {
                assert!((x as f64 - draws as f64 * p).abs() < 5.0 * sd, "{n}: {c:?}");
            }
        }
    }

    #[test]
    fn take_bits_windows() {
        let w = [0xF0F0_F0F0_F0F0_F0F0u64, 0x1234_5678_9ABC_DEF0, 0];
        assert_eq!(take_bits(&w, 0, 64), w[0]);
        assert_eq!(take_bits(&w, 4, 8), 0x0F);
        assert_eq!(take_bits(&w, 60, 8), 0x0F);
        assert_eq!(take_bits(&w, 64, 64), w[1]);
        assert_eq!(take_bits(&w, 68, 4), 0xF);
    }

    /// Every instruction path walks the same chain, a run of `n` trades
    /// equals `n` single steps, and degrees never change (several word
    /// counts, including a partial last word, pools past 64 and 128 bits).
    #[test]
    fn paths_agree_and_keep_degrees() {
        // (10, 2000) pools several hundred columns: the word-array path;
        // (6, 300) pools of 65-128 columns: the two-word register.
        for (m, n, fill) in [
            (7, 5, 150),
            (30, 70, 150),
            (40, 200, 150),
            (6, 300, 300),
            (10, 2000, 300),
        ] {
            let start = random_bits(m, n, fill, (m * n) as u64);
            let (rows, cols) = (start.row_degrees(), start.col_degrees());
            let mut chains: Vec<_> = Path::available()
                .into_iter()
                .map(|p| CurveballChain::with_path(&start, p))
                .collect();
            let mut stepped = CurveballChain::new(&start);
            let mut rngs: Vec<_> = (0..chains.len()).map(|_| draw_rng(4, 1)).collect();
            let mut r0 = draw_rng(4, 1);
            let mut moved = false;
            for _ in 0..50 {
                for (c, r) in chains.iter_mut().zip(rngs.iter_mut()) {
                    c.run(r, 20);
                }
                for _ in 0..20 {
                    stepped.step(&mut r0);
                }
                for c in &chains {
                    assert_eq!(c.matrix(), stepped.matrix(), "{m} x {n}, {:?}", c.path);
                }
                assert_eq!(stepped.matrix().row_degrees(), rows);
                assert_eq!(stepped.matrix().col_degrees(), cols);
                moved |= stepped.matrix() != &start;
            }
            assert!(moved, "the chain moved");
        }
    }

    /// `k`-subsets of `t` ranks drawn by both samplers on every path:
    /// exactly `k` ranks below `t`, and every subset equally often
    /// (all `C(t, k)` of them for small `t`, each count within 5 binomial
    /// standard deviations), covering Floyd's side (`8 min(k, t-k) < t`)
    /// and every coin probability 1/8..7/8 with corrections both ways.
    #[test]
    fn subsets_are_uniform_exhaustively() {
        fn binom(n: usize, k: usize) -> usize {
            (0..k).fold(1, |acc, i| acc * (n - i) / (i + 1))
        }
        let cases = [
            (2, 1),
            (5, 2),
            (8, 1),
            (9, 1),
            (9, 2),
            (9, 3),
            (9, 4),
            (9, 7),
            (10, 5),
            (12, 6),
            (16, 2),
            (16, 14),
            (17, 1),
            (17, 16),
            (12, 3),
        ];
        let mut rng = draw_rng(21, 0);
        for path in Path::available() {
            for &(t, k) in &cases {
                let states = binom(t, k);
                let draws = 200 * states;
                let mut small: HashMap<u128, usize> = HashMap::new();
                let mut wide: HashMap<u128, usize> = HashMap::new();
                let mut pick = vec![0u64; t.div_ceil(64) + 1];
                for _ in 0..draws {
                    let mut h = Halves::default();
                    let x = subset_by(path, &mut h, &mut rng, t, k, None);
                    assert_eq!(x.count_ones() as usize, k);
                    assert_eq!(x >> t, 0);
                    *small.entry(x).or_default() += 1;
                    let mut h = Halves::default();
                    let y = subset_by(path, &mut h, &mut rng, t, k, Some(&mut pick));
                    assert_eq!(y.count_ones() as usize, k);
                    assert_eq!(y >> t, 0);
                    assert_eq!(pick[pick.len() - 1], 0, "slack word untouched");
                    *wide.entry(y).or_default() += 1;
                }
                let p = 1.0 / states as f64;
                let sd = (draws as f64 * p * (1.0 - p)).sqrt();
                for counts in [&small, &wide] {
                    assert_eq!(counts.len(), states, "t {t}, k {k}: every subset drawn");
                    for &c in counts.values() {
                        assert!(
                            (c as f64 - draws as f64 * p).abs() < 5.0 * sd,
                            "t {t}, k {k}, {path:?}: {c} of {draws}"
                        );
                    }
                }
            }
        }
    }

    /// The one-word sampler draws the same subsets as the two-word one
    /// from the same stream (so the trade may take either for `t <= 64`).
    #[test]
    fn one_word_subsets_equal_two_word_subsets() {
        for path in Path::available() {
            #[cfg(target_arch = "x86_64")]
            let bmi2 = path == Path::Bmi2;
            #[cfg(not(target_arch = "x86_64"))]
            let bmi2 = false;
            let (mut r1, mut r2) = (draw_rng(23, 0), draw_rng(23, 0));
            for t in 2..=64usize {
                for k in 1..t {
                    for _ in 0..20 {
                        let (mut h1, mut h2) = (Halves::default(), Halves::default());
                        let (x, y) = if bmi2 {
                            (
                                subset_word::<_, true>(&mut h1, &mut r1, t, k),
                                subset_small::<_, true>(&mut h2, &mut r2, t, k),
                            )
                        } else {
                            (
                                subset_word::<_, false>(&mut h1, &mut r1, t, k),
                                subset_small::<_, false>(&mut h2, &mut r2, t, k),
                            )
                        };
                        assert_eq!(u128::from(x), y, "t {t}, k {k}, {path:?}");
                    }
                }
            }
        }
    }

    /// Large pools (65-128 ranks in a register, beyond in words): every
    /// rank is chosen with probability `k / t` and every adjacent pair of
    /// ranks with `k (k-1) / (t (t-1))` (the first two moments of a
    /// uniform `k`-subset), within 5 standard deviations.
    #[test]
    fn large_subsets_have_uniform_moments() {
        let mut rng = draw_rng(22, 0);
        let path = Path::detect();
        for &(t, k) in &[
            (100, 3),
            (100, 30),
            (100, 50),
            (128, 100),
            (130, 7),
            (200, 40),
            (300, 150),
            (300, 290),
        ] {
            let draws = 20_000;
            let mut one = vec![0usize; t];
            let mut pair = vec![0usize; t - 1];
            let mut pick = vec![0u64; t.div_ceil(64) + 1];
            for _ in 0..draws {
                let mut h = Halves::default();
                let bits: Vec<bool> = if t <= 128 {
                    let x = subset_by(path, &mut h, &mut rng, t, k, None);
                    (0..t).map(|i| (x >> i) & 1 == 1).collect()
                } else {
                    subset_by(path, &mut h, &mut rng, t, k, Some(&mut pick));
                    (0..t)
                        .map(|i| (pick[i / 64] >> (i % 64)) & 1 == 1)
                        .collect()
                };
                assert_eq!(bits.iter().filter(|&&b| b).count(), k);
                for i in 0..t {
                    one[i] += usize::from(bits[i]);
                    if i + 1 < t {
                        pair[i] += usize::from(bits[i] && bits[i + 1]);
                    }
                }
            }
            let check = |counts: &[usize], p: f64, what: &str| {
                let sd = (draws as f64 * p * (1.0 - p)).sqrt();
                for (i, &c) in counts.iter().enumerate() {
                    assert!(
                        (c as f64 - draws as f64 * p).abs() < 5.0 * sd,
                        "t {t}, k {k}, {what} {i}: {c} of {draws}"
                    );
                }
            };
            check(&one, k as f64 / t as f64, "rank");
            check(&pair, (k * (k - 1)) as f64 / (t * (t - 1)) as f64, "pair");
        }
    }

    /// One subset on `path`: the register sampler (`words` = `None`) or
    /// the word-array sampler, returned as a 128-bit mask when it fits.
    fn subset_by(
        path: Path,
        h: &mut Halves,
        rng: &mut rand_xoshiro::Xoshiro256PlusPlus,
        t: usize,
        k: usize,
        words: Option<&mut Vec<u64>>,
    ) -> u128 {
        #[cfg(target_arch = "x86_64")]
        let bmi2 = path == Path::Bmi2;
        #[cfg(not(target_arch = "x86_64"))]
        let bmi2 = false;
        match (words, bmi2) {
            (None, false) => subset_small::<_, false>(h, rng, t, k),
            (None, true) => subset_small::<_, true>(h, rng, t, k),
            (Some(w), b) => {
                if b {
                    subset_words::<_, true>(h, rng, t, k, w);
                } else {
                    subset_words::<_, false>(h, rng, t, k, w);
                }
                if t <= 128 {
                    u128::from(w[0]) | u128::from(w.get(1).copied().unwrap_or(0)) << 64
                } else {
                    0
                }
            }
        }
    }
}
