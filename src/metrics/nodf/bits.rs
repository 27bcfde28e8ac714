//! NODF on bit-packed rows: the kernels for densely stored networks and
//! binary null draws (one AND and one popcount per word and pair, or a
//! bit-sliced count of the rows above in the sorted order).

use rayon::prelude::*;

use crate::error::Result;
use crate::kernels::popcount::{PanelKernel, PopcountPath, PANEL};
use crate::metrics::nodf::Nodf;
use crate::metrics::{degree_order, side_value, Order, Parts};
use crate::storage::BitMatrix;

/// NODF of a bit-packed matrix on the fastest popcount path of this CPU.
pub(crate) fn nodf_bits(b: &BitMatrix, order: Order) -> Result<Nodf> {
    nodf_with_path(b, order, PopcountPath::detect())
}

/// NODF of a bit-packed matrix on a chosen popcount path (an unsupported path falls back
/// to the portable one). All paths give the same value; for tests and
/// timing.
pub fn nodf_with_path(b: &BitMatrix, order: Order, path: PopcountPath) -> Result<Nodf> {
    let t = b.transpose();
    let side = |x: &BitMatrix| {
        let d = degrees_with(x, path);
        side_value(&d, &upper_overlaps_with(x, &d, order, path))
    };
    // Small matrices (null-model draws) skip the thread hand-off.
    let (rows, cols) = if (b.nrows() as u128) * (b.ncols() as u128) < SMALL {
        (side(b), side(&t))
    } else {
        rayon::join(|| side(b), || side(&t))
    };
    Parts::from_sums("NODF", b.nrows(), b.ncols(), rows, cols)
}

/// For every row `l`, the sum of `|N(u) ∩ N(l)|` over its upper partners
/// `u` (the rows with `d_u > d_l`; with [`Order::Given`] only those before
/// `l`). NODF's row part is `sum_l 100 * overlaps[l] / d_l` over `m(m-1)/2`.
///
/// Sorted order, `O(m n log(m) / 64)`: the sum equals `sum over j in N(l)
/// of c_j`, where `c_j` counts the rows of larger degree holding column `j`.
/// Rows are visited by decreasing degree, one tie group at a time: each
/// member of a group first reads its columns' counts, then the group adds
/// its ones to the counts. No pair of rows is ever formed. The counts are
/// kept bit-sliced (plane `k` holds bit `k` of every `c_j`), so a row reads
/// them as `sum_k 2^k popcount(row & plane_k)`, on the popcount path, and
/// adds itself by a ripple carry through the planes. Parallel over stripes
/// of columns (integer partial sums, so exact for any thread count).
///
/// Given order, `O(m^2 n / 64)`: pairwise popcounts, [`PANEL`] lower rows
/// per load of an upper row, blocks of 64 lower rows in parallel.
pub fn upper_overlaps(b: &BitMatrix, order: Order) -> Vec<u64> {
    let path = PopcountPath::detect();
    upper_overlaps_with(b, &degrees_with(b, path), order, path)
}

/// Row degrees on the popcount path.
fn degrees_with(b: &BitMatrix, path: PopcountPath) -> Vec<usize> {
    let kernel = PanelKernel::new(path);
    let mut one = [0u64; PANEL];
    (0..b.nrows())
        .map(|i| {
            kernel.run(b.row(i), b.row(i), &mut one);
            one[0] as usize
        })
        .collect()
}

fn upper_overlaps_with(
    b: &BitMatrix,
    degrees: &[usize],
    order: Order,
    path: PopcountPath,
) -> Vec<u64> {
    match order {
        Order::Sorted => overlaps_sorted(b, degrees, path),
        Order::Given => overlaps_given(b, degrees, path),
    }
}

fn overlaps_sorted(b: &BitMatrix, degrees: &[usize], path: PopcountPath) -> Vec<u64> {
    let m = b.nrows();
    let words = b.words_per_row();
    let kernel = PanelKernel::new(path);

    let ord = degree_order(degrees);
    // Tie groups as ranges of `ord`.
    let groups = crate::metrics::tie_groups(degrees, &ord);
    // Column counts up to m need this many bit planes.
    let planes = (usize::BITS - m.leading_zeros()).max(1) as usize;
    let stripes = if (m as u128) * (words as u128) < 1 << 16 {
        1
    } else {
        rayon::current_num_threads().clamp(1, words.max(1))
    };
    let per = words.div_ceil(stripes.max(1)).max(1);
    let parts: Vec<Vec<u64>> = (0..stripes)
        .into_par_iter()
        .map(|s| {
            let (w0, w1) = ((s * per).min(words), ((s + 1) * per).min(words));
            let sw = w1 - w0;
            // Bit-sliced column counts: bit k of c_j is bit j of plane k.
            let mut plane = vec![0u64; planes * sw];
            let mut ov = vec![0u64; m];
            let mut pc = [0u64; PANEL];
            if sw == 0 {
                return ov;
            }
            for g in &groups {
                // Sum over j in N(r) of c_j = sum_k 2^k |row & plane_k|.
                for &r in &ord[g.clone()] {
                    let row = &b.row(r)[w0..w1];
                    let mut sum = 0u64;
                    for (c, chunk) in plane.chunks(PANEL * sw).enumerate() {
                        kernel.run(row, chunk, &mut pc);
                        for (k, &x) in pc[..chunk.len() / sw].iter().enumerate() {
                            sum += x << (c * PANEL + k);
                        }
                    }
                    ov[r] = sum;
                }
                // Add the group's rows to the counts (ripple carry per word).
                for &r in &ord[g.clone()] {
                    for (w, &x) in b.row(r)[w0..w1].iter().enumerate() {
                        let mut carry = x;
                        let mut k = 0;
                        while carry != 0 {
                            let cell = &mut plane[k * sw + w];
                            let old = *cell;
                            *cell = old ^ carry;
                            carry &= old;
                            k += 1;
                        }
                    }
                }
            }
            ov
        })
        .collect();
    crate::storage::lists::add_up(parts, m)
}

/// Matrices with fewer cells than this are handled on the calling thread.
const SMALL: u128 = 1 << 18;

/// Lower rows per parallel task in the given order (eight panels).
const BLOCK: usize = 8 * PANEL;

fn overlaps_given(b: &BitMatrix, degrees: &[usize], path: PopcountPath) -> Vec<u64> {
    let m = b.nrows();
    let w = b.words_per_row();

    let words = b.as_words();
    let kernel = PanelKernel::new(path);
    let mut ov = vec![0u64; m];
    let block = |(blk, out): (usize, &mut [u64])| {
        let l0 = blk * BLOCK;
        let l1 = l0 + out.len();
        let min_deg = degrees[l0..l1].iter().copied().min().unwrap_or(0);
        let mut pair = [0u64; PANEL];
        for u in 0..l1.saturating_sub(1) {
            let du = degrees[u];
            if du <= min_deg {
                continue; // no lower row of this block is below u
            }
            let upper = b.row(u);
            let mut p0 = l0.max(u + 1);
            // Panels start at multiples of PANEL within the block.
            p0 = l0 + (p0 - l0) / PANEL * PANEL;
            while p0 < l1 {
                let p1 = (p0 + PANEL).min(l1);
                if degrees[p0..p1].iter().any(|&d| d < du) {
                    kernel.run(upper, &words[p0 * w..p1 * w], &mut pair);
                    for l in p0.max(u + 1)..p1 {
                        if degrees[l] < du {
                            out[l - l0] += pair[l - p0];
                        }
                    }
                }
                p0 = p1;
            }
        }
    };
    if (m as u128) * (w as u128) * 64 < SMALL {
        ov.chunks_mut(BLOCK).enumerate().for_each(block);
    } else {
        ov.par_chunks_mut(BLOCK).enumerate().for_each(block);
    }
    ov
}
