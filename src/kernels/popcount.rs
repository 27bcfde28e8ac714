//! Overlap counts of bit-packed rows, with the popcount path chosen at run
//! time.
//!
//! Rust's default `x86_64` target assumes no `popcnt` instruction, so
//! [`u64::count_ones`] compiles to a sequence of shifts and masks. The same
//! loop compiled inside a function marked `#[target_feature]` uses the
//! hardware instruction: `popcnt` (one word at a time), AVX2 (a nibble lookup
//! table, four words at a time) or AVX-512 `VPOPCNTQ` (eight words at a
//! time). [`PopcountPath::detect`] picks the fastest path that the running
//! CPU supports (checked once with `is_x86_feature_detected!`); every other
//! architecture uses the portable loop. All paths return identical integers.
//!
//! # Example
//! ```
//! use nidus::kernels::popcount::{panel_overlaps, PopcountPath, PANEL};
//! let upper = [0b1011u64, u64::MAX];
//! let lowers = [0b0011u64, 1, 0b1000, 0]; // two lower rows of two words
//! let mut out = [0u64; PANEL];
//! panel_overlaps(PopcountPath::detect(), &upper, &lowers, &mut out);
//! assert_eq!(&out[..2], &[3, 1]);
//! ```

use std::sync::OnceLock;

/// Lower rows handled together against one upper row: each upper word is
/// loaded once and used for `PANEL` pairs.
pub const PANEL: usize = 8;

/// A popcount implementation.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum PopcountPath {
    /// [`u64::count_ones`] compiled for the baseline target (software
    /// popcount on plain `x86_64`; the native instruction elsewhere when the
    /// target has one).
    Portable,
    /// The `popcnt` instruction, one word at a time (x86-64).
    Popcnt,
    /// AVX2 with a nibble lookup table, four words at a time (x86-64).
    Avx2,
    /// AVX-512 `VPOPCNTQ`, eight words at a time (x86-64 with
    /// `avx512f` and `avx512vpopcntdq`).
    Avx512,
}

impl PopcountPath {
    /// Every path, slowest first.
    pub const ALL: [PopcountPath; 4] = [
        PopcountPath::Portable,
        PopcountPath::Popcnt,
        PopcountPath::Avx2,
        PopcountPath::Avx512,
    ];

    /// The fastest path this CPU supports (detected once, then cached).
    pub fn detect() -> PopcountPath {
        static BEST: OnceLock<PopcountPath> = OnceLock::new();
        *BEST.get_or_init(|| {
            Self::ALL
                .iter()
                .rev()
                .copied()
                .find(|p| p.is_available())
                .unwrap_or(PopcountPath::Portable)
        })
    }

    /// True when the running CPU can execute this path.
    pub fn is_available(self) -> bool {
        match self {
            PopcountPath::Portable => true,
            #[cfg(target_arch = "x86_64")]
            PopcountPath::Popcnt => std::arch::is_x86_feature_detected!("popcnt"),
            #[cfg(target_arch = "x86_64")]
            PopcountPath::Avx2 => {
                std::arch::is_x86_feature_detected!("avx2")
                    && std::arch::is_x86_feature_detected!("popcnt")
            }
            #[cfg(target_arch = "x86_64")]
            PopcountPath::Avx512 => {
                std::arch::is_x86_feature_detected!("avx512f")
                    && std::arch::is_x86_feature_detected!("avx512vpopcntdq")
                    && std::arch::is_x86_feature_detected!("popcnt")
            }
            #[cfg(not(target_arch = "x86_64"))]
            _ => false,
        }
    }

    /// Every path the running CPU supports.
    pub fn available() -> Vec<PopcountPath> {
        Self::ALL
            .iter()
            .copied()
            .filter(|p| p.is_available())
            .collect()
    }

    /// A short name (`portable`, `popcnt`, `avx2`, `avx512`).
    pub fn name(self) -> &'static str {
        match self {
            PopcountPath::Portable => "portable",
            PopcountPath::Popcnt => "popcnt",
            PopcountPath::Avx2 => "avx2",
            PopcountPath::Avx512 => "avx512",
        }
    }
}

/// The shared loop: for each lower row (a run of `upper.len()` words in
/// `lowers`), the number of common ones with `upper`. Inlined into each
/// `#[target_feature]` wrapper so that the compiler vectorises it for that
/// instruction set.
#[inline(always)]
fn panel_body(upper: &[u64], lowers: &[u64], out: &mut [u64; PANEL]) {
    let w = upper.len();
    if w == 0 {
        out.fill(0);
        return;
    }
    for (r, low) in lowers.chunks_exact(w).take(PANEL).enumerate() {
        let mut s = 0u64;
        for (a, b) in upper.iter().zip(low) {
            s += (a & b).count_ones() as u64;
        }
        out[r] = s;
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "popcnt")]
fn panel_popcnt(upper: &[u64], lowers: &[u64], out: &mut [u64; PANEL]) {
    panel_body(upper, lowers, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,popcnt")]
fn panel_avx2(upper: &[u64], lowers: &[u64], out: &mut [u64; PANEL]) {
    panel_body(upper, lowers, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx512vpopcntdq,popcnt")]
fn panel_avx512(upper: &[u64], lowers: &[u64], out: &mut [u64; PANEL]) {
    use std::arch::x86_64::*;
    let w = upper.len();
    if w == 0 {
        out.fill(0);
        return;
    }
    let rows = (lowers.len() / w).min(PANEL);
    let full = w / 8;
    // Eight lower rows share each 8-word load of the upper row; one
    // accumulator register per lower row.
    let mut acc = [_mm512_setzero_si512(); PANEL];
    for c in 0..full {
        // SAFETY: c * 8 + 8 <= w, within `upper` and within each lower row.
        let u = unsafe { _mm512_loadu_si512(upper.as_ptr().add(c * 8) as *const _) };
        for r in 0..rows {
            let l = unsafe { _mm512_loadu_si512(lowers.as_ptr().add(r * w + c * 8) as *const _) };
            acc[r] = _mm512_add_epi64(acc[r], _mm512_popcnt_epi64(_mm512_and_si512(u, l)));
        }
    }
    let tail = w - full * 8;
    if tail > 0 {
        let mask: __mmask8 = ((1u16 << tail) - 1) as __mmask8;
        // SAFETY: masked loads touch only the `tail` words that exist.
        let u = unsafe { _mm512_maskz_loadu_epi64(mask, upper.as_ptr().add(full * 8) as *const _) };
        for r in 0..rows {
            let l = unsafe {
                _mm512_maskz_loadu_epi64(mask, lowers.as_ptr().add(r * w + full * 8) as *const _)
            };
            acc[r] = _mm512_add_epi64(acc[r], _mm512_popcnt_epi64(_mm512_and_si512(u, l)));
        }
    }
    for r in 0..rows {
        out[r] = _mm512_reduce_add_epi64(acc[r]) as u64;
    }
}

/// Overlaps of one upper row with up to [`PANEL`] lower rows.
///
/// `lowers` holds `k = lowers.len() / upper.len()` rows of `upper.len()`
/// words each, back to back (at most [`PANEL`] are used); `out[r]` receives
/// the number of bits set in both `upper` and lower row `r`, for `r < k`.
/// A path the CPU does not support falls back to
/// [`PopcountPath::Portable`], so every call is safe. In a loop, prefer a
/// [`PanelKernel`], which checks the CPU once.
///
/// Cost: `k * upper.len()` word operations.
pub fn panel_overlaps(path: PopcountPath, upper: &[u64], lowers: &[u64], out: &mut [u64; PANEL]) {
    PanelKernel::new(path).run(upper, lowers, out)
}

type PanelFn = unsafe fn(&[u64], &[u64], &mut [u64; PANEL]);

/// A panel kernel ([`panel_overlaps`]) bound to one path after checking
/// once that the CPU supports it (else the portable loop).
#[derive(Clone, Copy)]
pub struct PanelKernel {
    path: PopcountPath,
    f: PanelFn,
    /// For rows shorter than one vector (fewer than 8 words), where the
    /// vector paths' set-up costs more than it saves.
    short: PanelFn,
}

impl std::fmt::Debug for PanelKernel {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "PanelKernel({:?})", self.path)
    }
}

fn panel_portable(upper: &[u64], lowers: &[u64], out: &mut [u64; PANEL]) {
    panel_body(upper, lowers, out)
}

impl PanelKernel {
    /// The kernel for `path`, or the portable one when the CPU lacks it.
    pub fn new(path: PopcountPath) -> PanelKernel {
        let f: PanelFn = match path {
            #[cfg(target_arch = "x86_64")]
            PopcountPath::Popcnt if path.is_available() => panel_popcnt,
            #[cfg(target_arch = "x86_64")]
            PopcountPath::Avx2 if path.is_available() => panel_avx2,
            #[cfg(target_arch = "x86_64")]
            PopcountPath::Avx512 if path.is_available() => panel_avx512,
            _ => panel_portable,
        };
        let path = if path.is_available() {
            path
        } else {
            PopcountPath::Portable
        };
        let short = match path {
            #[cfg(target_arch = "x86_64")]
            PopcountPath::Avx2 | PopcountPath::Avx512 => panel_popcnt,
            _ => f,
        };
        PanelKernel { path, f, short }
    }

    /// The path actually used.
    pub fn path(&self) -> PopcountPath {
        self.path
    }

    /// See [`panel_overlaps`].
    #[inline]
    pub fn run(&self, upper: &[u64], lowers: &[u64], out: &mut [u64; PANEL]) {
        let f = if upper.len() < 8 { self.short } else { self.f };
        // SAFETY: `new` stored a target-feature function only after checking
        // that the CPU supports its features (the AVX paths imply popcnt:
        // `is_available` checks it); the functions only read within the
        // slices they are given.
        unsafe { f(upper, lowers, out) }
    }
}

/// Number of bits set in both `a` and `b` (equal lengths), on the given path.
pub fn overlap(path: PopcountPath, a: &[u64], b: &[u64]) -> u64 {
    let mut out = [0u64; PANEL];
    let w = a.len().min(b.len());
    panel_overlaps(path, &a[..w], &b[..w], &mut out);
    out[0]
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every available path equals a bit-by-bit count (the definition).
    #[test]
    fn paths_agree_with_bit_count() {
        let mut x = 0x9E37_79B9_7F4A_7C15u64;
        let mut next = || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        };
        for w in [1usize, 3, 7, 8, 9, 16, 17, 63] {
            let upper: Vec<u64> = (0..w).map(|_| next()).collect();
            let lowers: Vec<u64> = (0..w * PANEL).map(|_| next() & next()).collect();
            let mut want = [0u64; PANEL];
            for r in 0..PANEL {
                for k in 0..w {
                    for bit in 0..64 {
                        if (upper[k] >> bit) & 1 == 1 && (lowers[r * w + k] >> bit) & 1 == 1 {
                            want[r] += 1;
                        }
                    }
                }
            }
            for path in PopcountPath::available() {
                let mut out = [0u64; PANEL];
                panel_overlaps(path, &upper, &lowers, &mut out);
                assert_eq!(out, want, "{path:?} w={w}");
                let mut part = [0u64; PANEL];
                panel_overlaps(path, &upper, &lowers[..3 * w], &mut part);
                assert_eq!(&part[..3], &want[..3], "{path:?} w={w} 3 rows");
            }
        }
    }
}
