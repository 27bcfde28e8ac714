//! The word-level curveball trade as it was before the coin-and-correct
//! subsets (every uniform subset of the pool by Floyd's algorithm, Bentley
//! & Floyd 1987, Commun. ACM 30:754; `pdep` when the CPU has BMI2, the
//! trade dispatched once per step and compiled without hardware popcount),
//! kept only so the benches can time the old and the new trade side by side
//! in one run. Same chain (uniform subset of the pool to row `a`), other
//! random stream use, so seeded matrices differ.

use nidus::null::{below, Chain};
use nidus::BitMatrix;
use rand::Rng;

#[derive(Clone, Debug)]
pub struct FloydCurveball {
    bits: BitMatrix,
    pick: Vec<u64>,
    row_b: Vec<u64>,
    bmi2: bool,
}

impl FloydCurveball {
    pub fn new(start: &BitMatrix) -> Self {
        #[cfg(target_arch = "x86_64")]
        let bmi2 = std::arch::is_x86_feature_detected!("bmi2");
        #[cfg(not(target_arch = "x86_64"))]
        let bmi2 = false;
        FloydCurveball {
            bits: start.clone(),
            pick: vec![0; start.ncols().div_ceil(64) + 1],
            row_b: vec![0; start.words_per_row()],
            bmi2,
        }
    }

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
        // The public API lends one row at a time: row `b` is copied out and
        // back (a few words; the old trade split the table instead).
        self.row_b.copy_from_slice(self.bits.row(b));
        let rb = &mut self.row_b[..];
        let ra = self.bits.row_mut(a);
        let (mut only_a, mut total) = (0usize, 0usize);
        for (&x, &y) in ra.iter().zip(rb.iter()) {
            only_a += (x & !y).count_ones() as usize;
            total += (x ^ y).count_ones() as usize;
        }
        if only_a == 0 || only_a == total {
            return;
        }
        let (chosen, to_a) = if only_a <= total - only_a {
            (only_a, true)
        } else {
            (total - only_a, false)
        };
        let flip = if to_a { 0 } else { u64::MAX };
        if total <= 128 {
            let mut pick = 0u128;
            for j in total - chosen..total {
                let t = draws.below(rng, j + 1);
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
        } else {
            let pick = &mut self.pick[..total.div_ceil(64) + 1];
            pick.fill(0);
            for j in total - chosen..total {
                let t = draws.below(rng, j + 1);
                let hit = (pick[t >> 6] >> (t & 63)) & 1;
                let r = if hit == 0 { t } else { j };
                pick[r >> 6] |= 1 << (r & 63);
            }
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
        self.bits.row_mut(b).copy_from_slice(&self.row_b);
    }
}

/// Bounded integers from the 32-bit halves of each raw word (Lemire 2019,
/// ACM TOMACS 29:3), as in the old trade.
#[derive(Default)]
struct Halves {
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
    fn below<R: Rng + ?Sized>(&mut self, rng: &mut R, n: usize) -> usize {
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

#[inline(always)]
fn deposit<const BMI2: bool>(src: u64, mask: u64) -> u64 {
    #[cfg(target_arch = "x86_64")]
    if BMI2 {
        // SAFETY: `BMI2` is true only in code run after BMI2 was detected.
        return unsafe { std::arch::x86_64::_pdep_u64(src, mask) };
    }
    let (mut src, mut mask, mut out) = (src, mask, 0u64);
    while mask != 0 {
        let low = mask & mask.wrapping_neg();
        out |= low & (src & 1).wrapping_neg();
        src >>= 1;
        mask &= mask - 1;
    }
    out
}

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

impl Chain for FloydCurveball {
    type State = BitMatrix;
    fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        #[cfg(target_arch = "x86_64")]
        if self.bmi2 {
            // SAFETY: `bmi2` is set only when the CPU reports BMI2.
            return unsafe { self.trade_bmi2(rng) };
        }
        self.trade::<R, false>(rng)
    }
    fn state(&self) -> &BitMatrix {
        &self.bits
    }
    fn into_state(self) -> BitMatrix {
        self.bits
    }
}
