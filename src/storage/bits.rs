//! Bit-packed binary matrices: each row is a run of `u64` words, bit `j % 64`
//! of word `j / 64` holding cell `(i, j)`. Overlaps of two rows are one AND
//! and one popcount per word, the kernel of NODF.

/// A dense binary matrix, bit-packed by rows. Padding bits past the last
/// column are always zero.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BitMatrix {
    nrows: usize,
    ncols: usize,
    words: usize,
    bits: Vec<u64>,
}

impl BitMatrix {
    /// An all-zero `nrows x ncols` matrix.
    pub fn zeros(nrows: usize, ncols: usize) -> Self {
        let words = ncols.div_ceil(64);
        BitMatrix {
            nrows,
            ncols,
            words,
            bits: vec![0; nrows * words],
        }
    }

    /// Builds from a closure `f(i, j) -> bool`.
    pub fn from_fn(nrows: usize, ncols: usize, mut f: impl FnMut(usize, usize) -> bool) -> Self {
        let mut b = Self::zeros(nrows, ncols);
        for i in 0..nrows {
            for j in 0..ncols {
                if f(i, j) {
                    b.set(i, j, true);
                }
            }
        }
        b
    }

    /// Builds row by row in parallel: `fill(i, words)` writes the words of
    /// row `i` (zeroed beforehand; padding bits past the last column must
    /// stay zero).
    pub fn from_row_fn(
        nrows: usize,
        ncols: usize,
        fill: impl Fn(usize, &mut [u64]) + Sync + Send,
    ) -> Self {
        use rayon::prelude::*;
        let mut b = Self::zeros(nrows, ncols);
        if b.words > 0 {
            b.bits
                .par_chunks_mut(b.words)
                .enumerate()
                .with_min_len(16)
                .for_each(|(i, row)| fill(i, row));
        }
        b
    }

    /// Number of rows.
    pub fn nrows(&self) -> usize {
        self.nrows
    }
    /// Number of columns.
    pub fn ncols(&self) -> usize {
        self.ncols
    }
    /// `u64` words per row.
    pub fn words_per_row(&self) -> usize {
        self.words
    }
    /// All words, row after row.
    pub fn as_words(&self) -> &[u64] {
        &self.bits
    }
    /// The words of row `i`.
    #[inline]
    pub fn row(&self, i: usize) -> &[u64] {
        &self.bits[i * self.words..(i + 1) * self.words]
    }
    /// The words of row `i`, mutably.
    #[inline]
    pub fn row_mut(&mut self, i: usize) -> &mut [u64] {
        &mut self.bits[i * self.words..(i + 1) * self.words]
    }
    /// The words of two distinct rows `a` and `b`, both mutably.
    #[inline(always)]
    pub(crate) fn two_rows_mut(&mut self, a: usize, b: usize) -> (&mut [u64], &mut [u64]) {
        assert!(a != b && a < self.nrows && b < self.nrows);
        let w = self.words;
        if a < b {
            let (lo, hi) = self.bits.split_at_mut(b * w);
            (&mut lo[a * w..(a + 1) * w], &mut hi[..w])
        } else {
            let (lo, hi) = self.bits.split_at_mut(a * w);
            (&mut hi[..w], &mut lo[b * w..(b + 1) * w])
        }
    }
    /// Cell `(i, j)`.
    #[inline]
    pub fn get(&self, i: usize, j: usize) -> bool {
        debug_assert!(i < self.nrows && j < self.ncols);
        (self.bits[i * self.words + j / 64] >> (j % 64)) & 1 == 1
    }
    /// Sets cell `(i, j)`.
    #[inline]
    pub fn set(&mut self, i: usize, j: usize, value: bool) {
        debug_assert!(i < self.nrows && j < self.ncols);
        let w = &mut self.bits[i * self.words + j / 64];
        let mask = 1u64 << (j % 64);
        if value {
            *w |= mask;
        } else {
            *w &= !mask;
        }
    }
    /// Number of ones in row `i`.
    pub fn row_degree(&self, i: usize) -> usize {
        self.row(i).iter().map(|w| w.count_ones() as usize).sum()
    }
    /// Number of ones in every row.
    pub fn row_degrees(&self) -> Vec<usize> {
        (0..self.nrows).map(|i| self.row_degree(i)).collect()
    }
    /// Number of ones in every column.
    pub fn col_degrees(&self) -> Vec<usize> {
        let mut d = vec![0usize; self.ncols];
        for i in 0..self.nrows {
            for (k, &w) in self.row(i).iter().enumerate() {
                let mut w = w;
                while w != 0 {
                    d[k * 64 + w.trailing_zeros() as usize] += 1;
                    w &= w - 1;
                }
            }
        }
        d
    }
    /// Number of links (ones), `O(m n / 64)`; the same quantity as
    /// [`Network::links`](crate::Network::links).
    pub fn links(&self) -> usize {
        self.bits.iter().map(|w| w.count_ones() as usize).sum()
    }
    /// Old name of [`links`](Self::links).
    #[doc(hidden)]
    pub fn count_ones(&self) -> usize {
        self.links()
    }
    /// Column indices of the ones in row `i`, ascending.
    pub fn row_ones(&self, i: usize) -> impl Iterator<Item = usize> + '_ {
        self.row(i).iter().enumerate().flat_map(|(k, &w)| {
            let mut w = w;
            std::iter::from_fn(move || {
                if w == 0 {
                    None
                } else {
                    let b = w.trailing_zeros() as usize;
                    w &= w - 1;
                    Some(k * 64 + b)
                }
            })
        })
    }
    /// The transpose (columns become bit-packed rows), by 64 x 64 bit-block
    /// transposes. Cost `O(m n / 64 * 6)` word operations, no per-bit work.
    pub fn transpose(&self) -> BitMatrix {
        let mut t = BitMatrix::zeros(self.ncols, self.nrows);
        let mut block = [0u64; 64];
        for ib in 0..self.nrows.div_ceil(64) {
            for k in 0..self.words {
                for (r, slot) in block.iter_mut().enumerate() {
                    let i = ib * 64 + r;
                    *slot = if i < self.nrows {
                        self.bits[i * self.words + k]
                    } else {
                        0
                    };
                }
                if block.iter().all(|&x| x == 0) {
                    continue;
                }
                transpose64(&mut block);
                for (c, &x) in block.iter().enumerate() {
                    let j = k * 64 + c;
                    if j < self.ncols {
                        t.bits[j * t.words + ib] = x;
                    }
                }
            }
        }
        t
    }
    /// The matrix with rows and columns reordered: row `k` of the result is
    /// row `rows[k]` of `self`, column `l` is column `cols[l]`.
    pub fn permuted(&self, rows: &[usize], cols: &[usize]) -> BitMatrix {
        assert_eq!(rows.len(), self.nrows);
        assert_eq!(cols.len(), self.ncols);
        let mut inv = vec![0usize; self.ncols];
        for (l, &c) in cols.iter().enumerate() {
            inv[c] = l;
        }
        let mut out = BitMatrix::zeros(self.nrows, self.ncols);
        for (k, &r) in rows.iter().enumerate() {
            for j in self.row_ones(r).collect::<Vec<_>>() {
                out.set(k, inv[j], true);
            }
        }
        out
    }
    /// Number of common ones of rows `a` and `b` (portable popcount).
    #[inline]
    pub fn overlap(&self, a: usize, b: usize) -> usize {
        self.row(a)
            .iter()
            .zip(self.row(b))
            .map(|(x, y)| (x & y).count_ones() as usize)
            .sum()
    }
}

/// Transposes a 64 x 64 bit block in place: afterwards bit `r` of word `c`
/// is what bit `c` of word `r` was. Six rounds that swap ever smaller
/// off-diagonal sub-blocks (the recursive block-swap transpose; Warren,
/// Hacker's Delight, 2nd ed. 2013, section 7-3).
fn transpose64(a: &mut [u64; 64]) {
    let mut j = 32usize;
    let mut m: u64 = 0x0000_0000_FFFF_FFFF;
    while j != 0 {
        let mut k = 0usize;
        while k < 64 {
            let t = ((a[k] >> j) ^ a[k + j]) & m;
            a[k] ^= t << j;
            a[k + j] ^= t;
            k = (k + j + 1) & !j;
        }
        j >>= 1;
        m ^= m << j;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn set_get_degrees_transpose() {
        let b = BitMatrix::from_fn(3, 70, |i, j| (i + j) % 3 == 0);
        assert_eq!(b.row_degrees().iter().sum::<usize>(), b.count_ones());
        let t = b.transpose();
        for i in 0..3 {
            for j in 0..70 {
                assert_eq!(b.get(i, j), t.get(j, i));
            }
        }
        assert_eq!(t.row_degrees(), b.col_degrees());
        assert_eq!(
            b.row_ones(0).collect::<Vec<_>>(),
            (0..70).filter(|j| j % 3 == 0).collect::<Vec<_>>()
        );
        // Sizes around the 64-bit block edges, against the per-bit definition.
        for (m, n) in [(1, 1), (64, 64), (65, 130), (130, 7), (3, 200)] {
            let b = BitMatrix::from_fn(m, n, |i, j| (i * 31 + j * 17) % 5 < 2);
            let t = b.transpose();
            assert_eq!((t.nrows(), t.ncols()), (n, m));
            for i in 0..m {
                for j in 0..n {
                    assert_eq!(b.get(i, j), t.get(j, i), "{m}x{n} ({i},{j})");
                }
            }
            assert_eq!(t.transpose(), b);
        }
        let p = b.permuted(&[2, 0, 1], &(0..70).rev().collect::<Vec<_>>());
        assert_eq!(p.get(0, 69), b.get(2, 0));
    }
}
