//! The curveball chain for `fixed-both` (Strona, Nappo, Boccacci, Fattorini
//! & San-Miguel-Ayanz 2014, Nat. Commun. 5:4114), traded a word at a time.

use rand::Rng;

use crate::null::{below, Chain};
use crate::storage::BitMatrix;

/// A Markov chain over binary matrices with fixed row and column degrees
/// whose stationary distribution is uniform (the curveball algorithm of
/// Strona et al. 2014, Nat. Commun. 5:4114).
///
/// One [`step`](Self::step) is one *trade*: two distinct rows `a`, `b` are
/// picked uniformly; the columns that only `a` has and those that only `b`
/// has are pooled, and a uniform subset of the pool as large as `a`'s share
/// goes to `a`, the rest to `b`. Row and column degrees never change.
///
/// The trade works on the rows' bit words: the pool is the symmetric
/// difference `a XOR b`; a uniform `k`-subset of the pool's ranks
/// `0..t` (`k` = `a`'s share, `t` = pool size) is drawn by Floyd's
/// algorithm (Bentley & Floyd 1987, Commun. ACM 30:754) as a bit mask
/// (in one register when `t <= 128`), drawing `min(k, t - k)` positions,
/// each an exact bounded integer from half of a 64-bit output; the mask's bits are then deposited
/// onto the pool's columns word by word (the `pdep` instruction where the
/// CPU has BMI2, else a loop over the pool's bits; both give the same
/// matrix).
///
/// Cost per trade: `O(n / 64 + min(k, t - k))`; memory `O(m n / 64)`.
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
    deposit: Deposit,
}

/// How mask bits are spread onto the pool's columns.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Deposit {
    Portable,
    #[cfg(target_arch = "x86_64")]
    Bmi2,
}

impl Deposit {
    fn detect() -> Self {
        #[cfg(target_arch = "x86_64")]
        if std::arch::is_x86_feature_detected!("bmi2") {
            return Deposit::Bmi2;
        }
        Deposit::Portable
    }
}

impl CurveballChain {
    /// A chain started at `start`.
    pub fn new(start: &BitMatrix) -> Self {
        Self::with_deposit(start, Deposit::detect())
    }

    fn with_deposit(start: &BitMatrix, deposit: Deposit) -> Self {
        CurveballChain {
            bits: start.clone(),
            pick: vec![0; start.ncols().div_ceil(64) + 1],
            deposit,
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

    /// Runs `trades` steps.
    pub fn run<R: Rng + ?Sized>(&mut self, rng: &mut R, trades: usize) {
        for _ in 0..trades {
            self.step(rng);
        }
    }

    /// One trade. A matrix with fewer than two rows has a single state and
    /// does not change.
    pub fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        match self.deposit {
            Deposit::Portable => self.trade::<R, false>(rng),
            #[cfg(target_arch = "x86_64")]
            // SAFETY: `Bmi2` is chosen only when the CPU reports BMI2.
            Deposit::Bmi2 => unsafe { self.trade_bmi2(rng) },
        }
    }

    /// The trade compiled with BMI2 (`pdep` inline, shifts without flags).
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "bmi2")]
    unsafe fn trade_bmi2<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        self.trade::<R, true>(rng)
    }

    #[inline(always)]
    fn trade<R: Rng + ?Sized, const BMI2: bool>(&mut self, rng: &mut R) {
        let m = self.bits.nrows();
        if m < 2 {
            return;
        }
        let mut draws = Halves::default();
        let a = draws.below(rng, m);
        let mut b = draws.below(rng, m - 1);
        if b >= a {
            b += 1;
        }
        let (ra, rb) = self.bits.two_rows_mut(a, b);
        let (mut only_a, mut total) = (0usize, 0usize);
        for (&x, &y) in ra.iter().zip(rb.iter()) {
            only_a += (x & !y).count_ones() as usize;
            total += (x ^ y).count_ones() as usize;
        }
        if only_a == 0 || only_a == total {
            return;
        }
        // Floyd's algorithm: a uniform `chosen`-subset of the ranks
        // `0..total`; the smaller side is drawn, the other is its complement.
        let (chosen, to_a) = if only_a <= total - only_a {
            (only_a, true)
        } else {
            (total - only_a, false)
        };
        let flip = if to_a { 0 } else { u64::MAX };
        if total <= 128 {
            // The mask fits in one register.
            let mut pick = 0u128;
            for j in total - chosen..total {
                let t = draws.below(rng, j + 1);
                // `t` if it is still free, else `j` (never taken before).
                let r = if (pick >> t) & 1 == 0 { t } else { j };
                pick |= 1 << r;
            }
            for (x, y) in ra.iter_mut().zip(rb.iter_mut()) {
                let d = *x ^ *y;
                if d == 0 {
                    continue;
                }
                let sel = deposit::<BMI2>(pick as u64, d);
                pick >>= d.count_ones();
                let give_a = (sel ^ flip) & d;
                *x = (*x & !d) | give_a;
                *y = (*y & !d) | (d & !give_a);
            }
            return;
        }
        let pick = &mut self.pick[..total.div_ceil(64) + 1];
        pick.fill(0);
        for j in total - chosen..total {
            let t = draws.below(rng, j + 1);
            let hit = (pick[t >> 6] >> (t & 63)) & 1;
            let r = if hit == 0 { t } else { j };
            pick[r >> 6] |= 1 << (r & 63);
        }
        // The pool's columns in increasing order take ranks 0, 1, 2, ...
        let mut offset = 0usize;
        for (x, y) in ra.iter_mut().zip(rb.iter_mut()) {
            let d = *x ^ *y;
            if d == 0 {
                continue;
            }
            let c = d.count_ones() as usize;
            let window = take_bits(pick, offset, c);
            offset += c;
            let sel = deposit::<BMI2>(window, d);
            let give_a = (sel ^ flip) & d;
            *x = (*x & !d) | give_a;
            *y = (*y & !d) | (d & !give_a);
        }
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
    #[inline]
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

    #[inline]
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
#[inline]
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
#[inline]
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

    /// Both deposit paths walk the same chain; degrees never change
    /// (several word counts, including a partial last word).
    #[test]
    fn paths_agree_and_keep_degrees() {
        // (10, 2000) pools several hundred columns: the general path.
        for (m, n) in [(7, 5), (30, 70), (40, 200), (10, 2000)] {
            let start = random_bits(m, n, if n > 1000 { 300 } else { 150 }, (m * n) as u64);
            let (rows, cols) = (start.row_degrees(), start.col_degrees());
            let mut p = CurveballChain::with_deposit(&start, Deposit::Portable);
            let mut q = CurveballChain::new(&start);
            let (mut r1, mut r2) = (draw_rng(4, 1), draw_rng(4, 1));
            let mut moved = false;
            for _ in 0..50 {
                p.run(&mut r1, 20);
                q.run(&mut r2, 20);
                assert_eq!(p.matrix(), q.matrix());
                assert_eq!(p.matrix().row_degrees(), rows);
                assert_eq!(p.matrix().col_degrees(), cols);
                moved |= p.matrix() != &start;
            }
            assert!(moved, "the chain moved");
        }
    }
}
