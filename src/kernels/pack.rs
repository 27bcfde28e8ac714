//! Packing a row of weights into bits (`1` where the weight is non-zero),
//! with the widest vector compare the CPU offers, chosen at run time like
//! the popcount paths.

use num_traits::Zero;

/// The shared loop: whole words of 64 cells, then the tail. Fixed-length
/// chunks let the compiler turn the 64 tests into vector compares and mask
/// moves for the instruction set of the calling function.
#[inline(always)]
fn pack_body<T: Zero + Copy>(cells: &[T], words: &mut [u64]) {
    let full = cells.chunks_exact(64);
    let tail = full.remainder();
    for (word, chunk) in words.iter_mut().zip(full) {
        let chunk: &[T; 64] = chunk.try_into().expect("64 cells");
        let mut x = 0u64;
        for bit in 0..64 {
            x |= (!chunk[bit].is_zero() as u64) << bit;
        }
        *word = x;
    }
    if !tail.is_empty() {
        let mut x = 0u64;
        for (bit, c) in tail.iter().enumerate() {
            x |= (!c.is_zero() as u64) << bit;
        }
        words[cells.len() / 64] = x;
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx512bw")]
fn pack_avx512<T: Zero + Copy>(cells: &[T], words: &mut [u64]) {
    pack_body(cells, words)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn pack_avx2<T: Zero + Copy>(cells: &[T], words: &mut [u64]) {
    pack_body(cells, words)
}

/// Writes bit `j % 64` of `words[j / 64]` = `cells[j] != 0` for every cell
/// (`words.len() >= cells.len().div_ceil(64)`); bits past the last cell are
/// zero in the last word written.
///
/// # Example
/// ```
/// let mut w = [0u64; 2];
/// nidus::kernels::pack::pack_row(&[0u8, 3, 0, 1], &mut w);
/// assert_eq!(w[0], 0b1010);
/// ```
pub fn pack_row<T: Zero + Copy>(cells: &[T], words: &mut [u64]) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512bw") {
            // SAFETY: the CPU supports avx512f and avx512bw (checked).
            return unsafe { pack_avx512(cells, words) };
        }
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the CPU supports avx2 (checked).
            return unsafe { pack_avx2(cells, words) };
        }
    }
    pack_body(cells, words)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every path against a bit-by-bit definition, lengths around 64.
    #[test]
    fn pack_matches_definition() {
        for len in [1usize, 63, 64, 65, 130, 200] {
            let cells: Vec<f64> = (0..len).map(|j| ((j * 7) % 3 == 0) as u8 as f64).collect();
            let mut want = vec![0u64; len.div_ceil(64)];
            for (j, &c) in cells.iter().enumerate() {
                if c != 0.0 {
                    want[j / 64] |= 1 << (j % 64);
                }
            }
            let mut got = vec![0u64; len.div_ceil(64)];
            pack_row(&cells, &mut got);
            assert_eq!(got, want, "{len}");
            let mut got = vec![0u64; len.div_ceil(64)];
            pack_body(&cells, &mut got);
            assert_eq!(got, want, "{len}");
        }
    }
}
