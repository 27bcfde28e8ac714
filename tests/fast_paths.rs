//! Every fast NODF / WNODF path (each popcount variant this CPU supports,
//! dense bit-packed and sparse lists, one thread and many) against slow
//! references written here from the definitions in METHODS.md §1-2
//! (Almeida-Neto et al. 2008, Oikos 117:1227-1239; Almeida-Neto & Ulrich
//! 2011, Environ. Model. Softw. 26:173-178).

use ndarray::Array2;
use nidus::kernels::popcount::PopcountPath;
use nidus::metrics::nodf::{nodf_with_path, upper_overlaps};
use nidus::metrics::{nodf, wnodf, Order, Parts};
use nidus::{Csr, Network};
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// Seeded random weights with empty rows and columns, degree ties and
/// repeated weights; shapes include 1 x n, n x 1 and widths that are not
/// multiples of 64.
fn random_table(seed: u64) -> Array2<u32> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let (m, n) = match seed % 10 {
        0 => (1, rng.random_range(2..150)),
        1 => (rng.random_range(2..150), 1),
        2 => (rng.random_range(2..8), rng.random_range(60..200)),
        _ => (rng.random_range(2..30), rng.random_range(2..100)),
    };
    let fill: f64 = rng.random_range(0.02..0.9);
    let top = if seed.is_multiple_of(3) {
        1
    } else {
        rng.random_range(2..6)
    };
    let mut w = Array2::from_shape_fn((m, n), |_| {
        if rng.random::<f64>() < fill {
            rng.random_range(1..=top)
        } else {
            0
        }
    });
    // Some rows and columns left empty, some duplicated (degree ties).
    if m > 3 && seed % 4 == 1 {
        w.row_mut(m / 2).fill(0);
        let r = w.row(0).to_owned();
        w.row_mut(m - 1).assign(&r);
    }
    if n > 3 && seed % 4 == 2 {
        w.column_mut(n / 3).fill(0);
        let c = w.column(1).to_owned();
        w.column_mut(n - 1).assign(&c);
    }
    if w.iter().all(|&x| x == 0) {
        w[[0, 0]] = 1;
    }
    w
}

/// The members of one side as rows of a table, by METHODS.md's orders:
/// upper partners of each lower member `l` (those before it with a strictly
/// larger degree; in the sorted order: all members of larger degree).
fn uppers(deg: &[usize], l: usize, order: Order) -> Vec<usize> {
    (0..deg.len())
        .filter(|&u| u != l && deg[u] > deg[l] && (order == Order::Sorted || u < l))
        .collect()
}

/// Reference pair sum of one side (rows of `w`), grouped by lower member:
/// integer total of the pair numerators, divided once by `d_l`, members
/// added in input order. `count(u, l)` is the pair's numerator.
fn side_ref(w: &Array2<u32>, order: Order, count: impl Fn(usize, usize) -> usize) -> f64 {
    let deg: Vec<usize> = w
        .rows()
        .into_iter()
        .map(|r| r.iter().filter(|&&x| x > 0).count())
        .collect();
    let mut s = 0.0;
    for l in 0..deg.len() {
        if deg[l] == 0 {
            continue;
        }
        let k: usize = uppers(&deg, l, order)
            .into_iter()
            .map(|u| count(u, l))
            .sum();
        s += 100.0 * k as f64 / deg[l] as f64;
    }
    s
}

fn parts(m: usize, n: usize, rows: f64, cols: f64) -> Option<Parts> {
    let (pr, pc) = (m * (m - 1) / 2, n * (n - 1) / 2);
    (pr + pc > 0).then(|| Parts {
        total: (rows + cols) / (pr + pc) as f64,
        rows: (pr > 0).then(|| rows / pr as f64),
        cols: (pc > 0).then(|| cols / pc as f64),
    })
}

/// NODF from the definition (METHODS.md §1).
fn nodf_ref(w: &Array2<u32>, order: Order) -> Option<Parts> {
    let side = |w: &Array2<u32>| {
        let rows: Vec<&[u32]> = w
            .rows()
            .into_iter()
            .map(|r| r.to_slice().unwrap())
            .collect();
        side_ref(w, order, |u, l| {
            rows[u]
                .iter()
                .zip(rows[l])
                .filter(|(&a, &b)| a > 0 && b > 0)
                .count()
        })
    };
    let t = w.t().as_standard_layout().into_owned();
    parts(w.nrows(), w.ncols(), side(w), side(&t))
}

/// WNODF from the definition (METHODS.md §2): `k_ul = #{j : 0 < w_lj < w_uj}`.
fn wnodf_ref(w: &Array2<u32>, order: Order) -> Option<Parts> {
    let side = |w: &Array2<u32>| {
        let rows: Vec<&[u32]> = w
            .rows()
            .into_iter()
            .map(|r| r.to_slice().unwrap())
            .collect();
        side_ref(w, order, |u, l| {
            rows[u]
                .iter()
                .zip(rows[l])
                .filter(|(&a, &b)| b > 0 && b < a)
                .count()
        })
    };
    let t = w.t().as_standard_layout().into_owned();
    parts(w.nrows(), w.ncols(), side(w), side(&t))
}

/// NODF pair by pair in floating point, the plain reading of the
/// definition: agrees with the grouped reference to 1e-12 relative.
fn nodf_pairwise(w: &Array2<u32>, order: Order) -> Option<f64> {
    let side = |w: &Array2<u32>| {
        let deg: Vec<usize> = w
            .rows()
            .into_iter()
            .map(|r| r.iter().filter(|&&x| x > 0).count())
            .collect();
        let mut s = 0.0;
        for l in (0..deg.len()).filter(|&l| deg[l] > 0) {
            for u in uppers(&deg, l, order) {
                let (ru, rl) = (w.row(u), w.row(l));
                let o = ru.iter().zip(rl).filter(|(&a, &b)| a > 0 && b > 0).count();
                s += 100.0 * o as f64 / deg[l] as f64;
            }
        }
        s
    };
    let (m, n) = w.dim();
    let p = m * (m - 1) / 2 + n * (n - 1) / 2;
    (p > 0).then(|| (side(w) + side(&w.t().as_standard_layout().into_owned())) / p as f64)
}

fn pool(threads: usize) -> rayon::ThreadPool {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap()
}

fn check_all(seed: u64) {
    let w = random_table(seed);
    let net = Network::from_array(w.clone()).unwrap();
    let csr = Csr::from_dense(w.view());
    let bits = net.binary().unwrap();
    for order in [Order::Sorted, Order::Given] {
        let want = nodf_ref(&w, order);
        let plain = nodf_pairwise(&w, order);
        match (want, plain) {
            (Some(a), Some(b)) => assert!(
                (a.total - b).abs() <= 1e-12 * b.abs().max(1.0),
                "seed {seed} {order}: {} vs {b}",
                a.total
            ),
            (None, None) => {}
            _ => panic!("references disagree on definedness"),
        }
        let got = nodf(&net, order).ok();
        assert_eq!(got, want, "seed {seed} {order} nodf dense");
        assert_eq!(
            nodf(&csr, order).ok(),
            want,
            "seed {seed} {order} nodf sparse"
        );
        for path in PopcountPath::available() {
            assert_eq!(
                nodf_with_path(&bits, order, path).ok(),
                want,
                "seed {seed} {order} {path:?}"
            );
        }
        let wwant = wnodf_ref(&w, order);
        assert_eq!(wnodf(&net, order).ok(), wwant, "seed {seed} {order} wnodf");
        assert_eq!(
            wnodf(&csr, order).ok(),
            wwant,
            "seed {seed} {order} wnodf sparse"
        );
    }
}

/// Hundreds of seeded matrices, on the default thread pool.
#[test]
fn all_paths_equal_reference_parallel() {
    for seed in 0..150 {
        check_all(seed);
    }
}

/// The same matrices on a one-thread pool: the values do not depend on the
/// number of threads.
#[test]
fn all_paths_equal_reference_one_thread() {
    pool(1).install(|| {
        for seed in 150..250 {
            check_all(seed);
        }
    });
}

/// Larger matrices, where the kernels split work into several parallel
/// stripes and blocks: 1, 2 and 3 threads give the same bytes as the
/// reference.
#[test]
fn larger_matrices_any_thread_count() {
    for seed in 0..3u64 {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(1000 + seed);
        let (m, n) = (rng.random_range(90..140), rng.random_range(130..220));
        let fill = [0.03, 0.2, 0.6][seed as usize];
        let w = Array2::from_shape_fn((m, n), |_| {
            if rng.random::<f64>() < fill {
                rng.random_range(1..4u32)
            } else {
                0
            }
        });
        let net = Network::from_array(w.clone()).unwrap();
        let csr = Csr::from_dense(w.view());
        for order in [Order::Sorted, Order::Given] {
            let want = nodf_ref(&w, order);
            let wwant = wnodf_ref(&w, order);
            for threads in [1, 3] {
                pool(threads).install(|| {
                    assert_eq!(nodf(&net, order).ok(), want, "{threads} {order}");
                    assert_eq!(nodf(&csr, order).ok(), want, "{threads} {order}");
                    assert_eq!(wnodf(&net, order).ok(), wwant, "{threads} {order}");
                    for path in PopcountPath::available() {
                        let b = net.binary().unwrap();
                        assert_eq!(nodf_with_path(&b, order, path).ok(), want, "{path:?}");
                    }
                });
            }
        }
    }
}

/// A network big enough to be stored sparsely (more than 2^22 cells, fill
/// below 5 %): `nodf` and `wnodf` dispatch to the list kernels and agree
/// with the bit-packed path on the same cells.
#[test]
fn sparse_storage_dispatch() {
    let (m, n) = (2049usize, 2049usize);
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(77);
    let mut cells = Vec::new();
    for i in 0..m {
        let d = rng.random_range(0..12);
        for _ in 0..d {
            cells.push((
                i as u32,
                rng.random_range(0..n as u32),
                rng.random_range(1..5u32),
            ));
        }
    }
    let labels = |p: &str, k: usize| (0..k).map(|i| format!("{p}{i}")).collect::<Vec<_>>();
    let net = Network::from_triplets(labels("r", m), labels("c", n), cells).unwrap();
    assert!(net.is_sparse());
    let b = net.binary().unwrap();
    assert_eq!(
        nodf(&net, Order::Sorted).unwrap(),
        nodf(&b, Order::Sorted).unwrap()
    );
    // Compressed rows built from a dense copy of the same cells.
    let dense = Csr::from_dense(net.to_dense().unwrap().view());
    assert_eq!(
        nodf(&net, Order::Given).unwrap(),
        nodf(&dense, Order::Given).unwrap()
    );
    for order in [Order::Sorted, Order::Given] {
        assert_eq!(wnodf(&net, order).unwrap(), wnodf(&dense, order).unwrap());
    }
}

/// Per-row overlap sums equal the pairwise definition.
#[test]
fn upper_overlaps_match_pairs() {
    for seed in 0..60 {
        let w = random_table(seed);
        let b = Network::from_array(w.clone()).unwrap().binary().unwrap();
        let deg = b.row_degrees();
        for order in [Order::Sorted, Order::Given] {
            let got = upper_overlaps(&b, order);
            for l in 0..w.nrows() {
                let want: usize = uppers(&deg, l, order)
                    .into_iter()
                    .map(|u| b.overlap(u, l))
                    .sum();
                assert_eq!(got[l], want as u64, "seed {seed} row {l} {order}");
            }
        }
    }
}

/// Published facts (METHODS.md §1-2): a staircase has NODF 100 in both
/// orders; equal row and equal column degrees give 0 (Britton,
/// Almeida-Neto & Corso 2015); [[5,4,3],[2,1,0],[1,0,0]] has WNODF 100.
#[test]
fn published_facts_on_every_path() {
    let stair = Array2::from_shape_fn((70, 70), |(i, j)| (j < 70 - i) as u32);
    let net = Network::from_array(stair.clone()).unwrap();
    let csr = Csr::from_dense(stair.view());
    let b = net.binary().unwrap();
    for order in [Order::Sorted, Order::Given] {
        assert_eq!(nodf(&net, order).unwrap().total, 100.0);
        assert_eq!(nodf(&csr, order).unwrap().total, 100.0);
        for path in PopcountPath::available() {
            assert_eq!(nodf_with_path(&b, order, path).unwrap().total, 100.0);
        }
    }
    let circ = Array2::from_shape_fn((65, 65), |(i, j)| ((j + 65 - i) % 65 < 20) as u32);
    let c = Network::from_array(circ.clone()).unwrap();
    assert_eq!(nodf(&c, Order::Sorted).unwrap().total, 0.0);
    assert_eq!(
        nodf(&Csr::from_dense(circ.view()), Order::Given)
            .unwrap()
            .total,
        0.0
    );
    let w = ndarray::array![[5u32, 4, 3], [2, 1, 0], [1, 0, 0]];
    assert_eq!(
        wnodf(&Csr::from_dense(w.view()), Order::Sorted)
            .unwrap()
            .total,
        100.0
    );
}

/// A 60,000 x 50,000 network with 20,000 links is stored sparsely; NODF,
/// WNODF and the spectral radius run on it without a dense table, while the
/// bit-packed view (which would need one) is refused with `TooLarge`.
#[test]
fn huge_sparse_network_never_dense() {
    let (m, n) = (60_000usize, 50_000usize);
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(5);
    let cells: Vec<(u32, u32, u32)> = (0..20_000)
        .map(|_| {
            (
                rng.random_range(0..m as u32),
                rng.random_range(0..n as u32),
                rng.random_range(1..5),
            )
        })
        .collect();
    let labels = |p: &str, k: usize| (0..k).map(|i| format!("{p}{i}")).collect::<Vec<_>>();
    let net = Network::from_triplets(labels("r", m), labels("c", n), cells).unwrap();
    assert!(net.is_sparse());
    assert!(matches!(
        net.binary(),
        Err(nidus::Error::TooLarge {
            rows: 60_000,
            cols: 50_000,
            ..
        })
    ));
    for order in [Order::Sorted, Order::Given] {
        let a = nodf(&net, order).unwrap();
        assert!(a.total > 0.0 && a.total < 1.0, "{a:?}");
        assert!(wnodf(&net, order).unwrap().total >= 0.0);
    }
    let s = nidus::metrics::spectral_radius(&net).unwrap();
    // sqrt(max degree) <= rho <= sqrt(L) (METHODS.md §3).
    let dmax = net
        .row_degrees()
        .iter()
        .chain(net.col_degrees())
        .max()
        .copied()
        .unwrap();
    assert!(s.binary >= (dmax as f64).sqrt() * (1.0 - 1e-12));
    assert!(s.binary <= (net.links() as f64).sqrt());
}

/// The WNODF rank kernels (taken for dense storage and for the given order)
/// against the definition (METHODS.md §2, Almeida-Neto & Ulrich 2011) and
/// against the list kernels (`wnodf_lists`, the path before them), bit for
/// bit, on 1, 2 and 3 threads: tables with few distinct weights (bands of
/// counters), dozens (wider bands), hundreds of fractional ones (`k / 8`,
/// Fenwick trees and the sorting route to ranks), and whole numbers above
/// 2^16 (sorting route), with runs of equal weights, empty and duplicated
/// rows and columns.
#[test]
fn wnodf_rank_kernels_equal_definition_and_lists() {
    use nidus::metrics::wnodf::{wnodf_lists, wnodf_ranks};
    for seed in 0..48u64 {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(5000 + seed);
        let (m, n) = (rng.random_range(2..110), rng.random_range(2..110));
        let fill: f64 = rng.random_range(0.05..0.95);
        let top = [3u32, 40, 900, 1_000_000][(seed % 4) as usize];
        let mut k = Array2::from_shape_fn((m, n), |_| {
            if rng.random::<f64>() < fill {
                rng.random_range(1..=top)
            } else {
                0
            }
        });
        if m > 3 && seed % 3 == 1 {
            k.row_mut(m / 2).fill(0);
            let r = k.row(0).to_owned();
            k.row_mut(m - 1).assign(&r);
        }
        if n > 3 && seed % 3 == 2 {
            let c = k.column(1).to_owned();
            k.column_mut(n - 1).assign(&c);
        }
        if k.iter().all(|&x| x == 0) {
            k[[0, 0]] = 2;
        }
        // Weights k / 8 (exact in binary) order the cells as k does.
        let scale = if top == 900 { 8.0 } else { 1.0 };
        let w = k.mapv(|x| f64::from(x) / scale);
        let net = Network::from_array(w.clone()).unwrap();
        let csr = Csr::from_dense(w.view());
        for order in [Order::Sorted, Order::Given] {
            let want = wnodf_ref(&k, order);
            for threads in [1, 2, 3] {
                pool(threads).install(|| {
                    let tag = format!("seed {seed} {order} {threads} threads");
                    assert_eq!(wnodf(&net, order).ok(), want, "{tag}");
                    assert_eq!(wnodf(&w.view(), order).ok(), want, "{tag} view");
                    assert_eq!(wnodf_ranks(&csr, order).ok(), want, "{tag} ranks");
                    assert_eq!(wnodf_lists(&net, order).ok(), want, "{tag} lists");
                });
            }
        }
    }
}

/// A dense network with more than 2^16 links, where the sorted-order rank
/// kernel splits the lists between several tasks: the definition, the list
/// kernels and the rank kernels agree on 1, 2 and 3 threads.
#[test]
fn wnodf_rank_kernels_split_between_tasks() {
    use nidus::metrics::wnodf::wnodf_lists;
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(99);
    let k = Array2::from_shape_fn((300, 420), |_| {
        if rng.random::<f64>() < 0.6 {
            rng.random_range(1..=12u32)
        } else {
            0
        }
    });
    let net = Network::from_array(k.clone()).unwrap();
    assert!(!net.is_sparse() && net.links() > 1 << 16);
    for order in [Order::Sorted, Order::Given] {
        let want = wnodf_ref(&k, order);
        for threads in [1, 2, 3] {
            pool(threads).install(|| {
                assert_eq!(wnodf(&net, order).ok(), want, "{order} {threads}");
                assert_eq!(wnodf_lists(&net, order).ok(), want, "{order} {threads}");
            });
        }
    }
}
