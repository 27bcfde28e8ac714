//! Spectral radius against outside references: nalgebra's SVD (a
//! general-purpose linear-algebra library), analytic values and published
//! facts (METHODS.md §3; Staniczenko, Kopp & Allesina 2013; Bhattacharya,
//! Friedland & Peled 2008, Electron. J. Combin. 15:R144).

use nalgebra::DMatrix;
use ndarray::Array2;
use nidus::metrics::spectral::largest_singular_value;
use nidus::metrics::spectral_radius;
use nidus::{Csr, Network};
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// Largest singular value by nalgebra's SVD.
fn svd_top(w: &Array2<f64>) -> f64 {
    let (m, n) = w.dim();
    let a = DMatrix::from_fn(m, n, |i, j| w[[i, j]]);
    a.singular_values().max()
}

fn random_table(seed: u64, weighted: bool) -> Array2<f64> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let (m, n) = match seed % 8 {
        0 => (1, rng.random_range(1..30)),
        1 => (rng.random_range(1..30), 1),
        _ => (rng.random_range(2..30), rng.random_range(2..30)),
    };
    let fill: f64 = rng.random_range(0.05..0.95);
    let mut w = Array2::from_shape_fn((m, n), |_| {
        if rng.random::<f64>() < fill {
            if weighted {
                rng.random_range(0.01..20.0)
            } else {
                1.0
            }
        } else {
            0.0
        }
    });
    if w.iter().all(|&x| x == 0.0) {
        w[[0, 0]] = 1.0;
    }
    w
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(f64::MIN_POSITIVE)
}

/// Several hundred seeded matrices, binary and weighted: agreement with
/// nalgebra's SVD to 1e-9 relative.
#[test]
fn agrees_with_nalgebra_svd() {
    for seed in 0..300u64 {
        let weighted = seed % 2 == 1;
        let w = random_table(seed, weighted);
        let net = Network::from_array(w.clone()).unwrap();
        let s = spectral_radius(&net).unwrap();
        let b = w.mapv(|x| (x > 0.0) as u8 as f64);
        let want_w = svd_top(&w);
        let want_b = svd_top(&b);
        assert!(
            rel(s.weighted, want_w) < 1e-9,
            "seed {seed}: {} vs {want_w}",
            s.weighted
        );
        assert!(
            rel(s.binary, want_b) < 1e-9,
            "seed {seed}: {} vs {want_b}",
            s.binary
        );
        let bits = net.binary().unwrap();
        assert!(rel(spectral_radius(&bits).unwrap().binary, want_b) < 1e-9);
        assert!(
            rel(
                largest_singular_value(&Csr::from_dense(w.view())).unwrap(),
                want_w
            ) < 1e-9
        );
    }
}

/// An all-ones r x c block has rho = sqrt(r c) (METHODS.md §3), and
/// rho / sqrt(L) = 1.
#[test]
fn full_block_is_sqrt_rc() {
    for (r, c) in [(1, 1), (1, 7), (5, 1), (3, 4), (17, 40), (64, 65)] {
        let net = Network::from_array(Array2::<u8>::ones((r, c))).unwrap();
        let s = spectral_radius(&net).unwrap();
        let want = ((r * c) as f64).sqrt();
        assert!(rel(s.binary, want) < 1e-12, "{r}x{c}: {}", s.binary);
        assert!(rel(s.weighted, want) < 1e-12);
        assert!((s.binary_normalized - 1.0).abs() < 1e-12);
    }
}

/// sqrt(max degree) <= rho <= sqrt(L) for binary matrices (METHODS.md §3).
#[test]
fn binary_bounds() {
    for seed in 0..200u64 {
        let w = random_table(seed + 5000, false);
        let net = Network::from_array(w).unwrap();
        let s = spectral_radius(&net).unwrap();
        let dmax = net
            .row_degrees()
            .iter()
            .chain(net.col_degrees())
            .copied()
            .max()
            .unwrap() as f64;
        let l = net.links() as f64;
        assert!(s.binary >= dmax.sqrt() * (1.0 - 1e-12), "seed {seed}");
        assert!(s.binary <= l.sqrt() * (1.0 + 1e-12), "seed {seed}");
        assert!(s.binary_normalized <= 1.0 + 1e-12);
    }
}

/// Pushing each row's ones to the left (a Ferrers shape with the same row
/// degrees and the same number of ones) never lowers rho: the pushed
/// matrix's row overlaps min(d_i, d_k) dominate the original overlaps
/// entrywise, and the Perron root is monotone (Bhattacharya, Friedland &
/// Peled 2008, Electron. J. Combin. 15:R144; Horn & Johnson, Matrix
/// Analysis, 2nd ed., Theorem 8.1.18).
#[test]
fn ferrers_push_never_lowers_rho() {
    for seed in 0..200u64 {
        let w = random_table(seed + 9000, false);
        let (m, n) = w.dim();
        let d: Vec<usize> = w
            .rows()
            .into_iter()
            .map(|r| r.iter().filter(|&&x| x > 0.0).count())
            .collect();
        let pushed = Array2::from_shape_fn((m, n), |(i, j)| (j < d[i]) as u8 as f64);
        let a = spectral_radius(&Network::from_array(w).unwrap())
            .unwrap()
            .binary;
        let b = spectral_radius(&Network::from_array(pushed).unwrap())
            .unwrap()
            .binary;
        assert!(b >= a * (1.0 - 1e-12), "seed {seed}: pushed {b} < {a}");
    }
}

fn block_diag(a: &Array2<f64>, b: &Array2<f64>) -> Array2<f64> {
    let (m1, n1) = a.dim();
    let (m2, n2) = b.dim();
    let mut w = Array2::zeros((m1 + m2, n1 + n2));
    w.slice_mut(ndarray::s![..m1, ..n1]).assign(a);
    w.slice_mut(ndarray::s![m1.., n1..]).assign(b);
    w
}

/// Equal top singular values (two identical disconnected blocks) and top
/// values 1e-9 apart: the value still converges to the SVD's.
#[test]
fn equal_and_close_top_values() {
    for seed in 0..30u64 {
        let a = random_table(seed + 20000, seed % 2 == 0);
        let twin = block_diag(&a, &a);
        let s = spectral_radius(&Network::from_array(twin.clone()).unwrap()).unwrap();
        let want = svd_top(&a);
        assert!(
            rel(s.weighted, want) < 1e-9,
            "seed {seed}: {} vs {want}",
            s.weighted
        );
        assert!(rel(s.weighted, svd_top(&twin)) < 1e-9);
        let close = block_diag(&a, &(&a * (1.0 + 1e-9)));
        let s = spectral_radius(&Network::from_array(close.clone()).unwrap()).unwrap();
        assert!(rel(s.weighted, svd_top(&close)) < 1e-9, "seed {seed} close");
    }
}

/// Same value for any number of threads, on a matrix long enough to be
/// split into several parallel chunks; and two identical sparse blocks
/// give exactly the rho of one (to 1e-10).
#[test]
fn thread_count_and_sparse_twin_blocks() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(3);
    let (m, n) = (20_000u32, 17_000u32);
    let mut cells = Vec::new();
    for i in 0..m {
        for _ in 0..3 {
            cells.push((i, rng.random_range(0..n), rng.random_range(1..20u32)));
        }
    }
    let big = Csr::from_triplets(m as usize, n as usize, cells.clone());
    let pool = |t| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(t)
            .build()
            .unwrap()
    };
    let a1 = pool(1).install(|| largest_singular_value(&big).unwrap());
    let a3 = pool(3).install(|| largest_singular_value(&big).unwrap());
    assert_eq!(a1.to_bits(), a3.to_bits());
    let (m, n) = (3000u32, 2500u32);
    cells.retain(|&(i, j, _)| i < m && j < n);
    let one = Csr::from_triplets(m as usize, n as usize, cells.clone());
    let mut twin_cells = cells.clone();
    twin_cells.extend(cells.iter().map(|&(i, j, w)| (i + m, j + n, w)));
    let twin = Csr::from_triplets(2 * m as usize, 2 * n as usize, twin_cells);
    let a1 = largest_singular_value(&one).unwrap();
    let t = largest_singular_value(&twin).unwrap();
    assert!(rel(t, a1) < 1e-10, "{t} vs {a1}");
}

/// The n x n upper bidiagonal matrix of ones (a chain of species, each
/// sharing a partner with the next) has singular values
/// `2 cos(j pi / (2n + 1))`, j = 1..n: it is the biadjacency matrix of the
/// path on 2n vertices (rows and columns alternate along it), whose
/// eigenvalues are `2 cos(pi j / (2n + 1))`, j = 1..2n (Brouwer & Haemers
/// 2012, Spectra of Graphs, ch. 1), and the singular values are the
/// positive ones. Also checked here against nalgebra at n = 60. Its top is a near-continuum, the slowest case for
/// Lanczos: n = 500 runs past the restarted phase into the long one.
#[test]
fn chain_closed_form() {
    let chain = |n: usize| {
        let cells: Vec<(u32, u32, f64)> = (0..n)
            .flat_map(|i| (i..(i + 2).min(n)).map(move |j| (i as u32, j as u32, 1.0)))
            .collect();
        Csr::from_triplets(n, n, cells)
    };
    let closed = |n: usize| 2.0 * (std::f64::consts::PI / (2 * n + 1) as f64).cos();
    let w60 = Array2::from_shape_fn((60, 60), |(i, j)| (j == i || j == i + 1) as u8 as f64);
    assert!(rel(svd_top(&w60), closed(60)) < 1e-12);
    for n in [60, 500] {
        let s = largest_singular_value(&chain(n)).unwrap();
        assert!(rel(s, closed(n)) < 1e-10, "n={n}: {s} vs {}", closed(n));
    }
}

/// A band of width 3 (turnover along a gradient), 250 species a side:
/// agreement with nalgebra's SVD.
#[test]
fn band_agrees_with_svd() {
    let n = 250;
    let w = Array2::from_shape_fn((n, n), |(i, j)| (j >= i && j < i + 3) as u8 as f64);
    let s = spectral_radius(&Network::from_array(w.clone()).unwrap()).unwrap();
    let want = svd_top(&w);
    assert!(rel(s.binary, want) < 1e-10, "{} vs {want}", s.binary);
}
