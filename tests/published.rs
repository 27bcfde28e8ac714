//! Values taken from publications, and analytic facts stated in them, as
//! tests (METHODS.md §1, §2, §4). Each check names its source; a rule of
//! thumb is marked "common practice".

use ndarray::{array, Array2};
use nidus::bits::BitMatrix;
use nidus::metrics::temperature::{UnexpectednessTable, U_MAX};
use nidus::metrics::{nodf, temperature, wnodf, Order, TemperatureOptions};
use nidus::Network;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// Published values are printed to two decimals.
const PRINTED: f64 = 0.005;

fn net(a: Array2<u32>) -> Network<u32> {
    Network::from_array(a).unwrap()
}

/// The 5 x 5 worked example of Almeida-Neto et al. (2008, Oikos
/// 117:1227-1239): NODF_rows 53.33, NODF_columns 63.33, NODF 58.33.
///
/// By hand (METHODS.md §1). Rows r1..r5 hold columns {1,3,4,5}, {1,2,3},
/// {2,3,4}, {1,2}, {1,2}: degrees 4, 3, 3, 2, 2. Row pairs (upper, lower):
/// (r1,r2) 2 of 3 -> 66.67; (r1,r3) 2 of 3 -> 66.67; (r1,r4), (r1,r5) 1 of
/// 2 -> 50 each; (r2,r3) equal degrees -> 0; (r2,r4), (r2,r5) 2 of 2 -> 100
/// each; (r3,r4), (r3,r5) 1 of 2 -> 50 each; (r4,r5) equal -> 0. Sum
/// 1600/3 over 10 pairs: 160/3 = 53.33.
/// Columns c1..c5 hold rows {1,2,4,5}, {2,3,4,5}, {1,2,3}, {1,3}, {1}:
/// degrees 4, 4, 3, 2, 1. (c1,c2) equal -> 0; (c1,c3) 2 of 3 -> 66.67;
/// (c1,c4) 1 of 2 -> 50; (c1,c5) 1 of 1 -> 100; (c2,c3) 2 of 3 -> 66.67;
/// (c2,c4) 1 of 2 -> 50; (c2,c5) 0 of 1 -> 0; (c3,c4) 2 of 2 -> 100;
/// (c3,c5), (c4,c5) 1 of 1 -> 100 each. Sum 1900/3 over 10 pairs: 190/3 =
/// 63.33. NODF = (1600/3 + 1900/3) / 20 = 175/3 = 58.33.
///
/// The rows and columns are already in non-increasing degree order, so the
/// given and sorted orders agree; a shuffled copy keeps the sorted values
/// and changes the given ones.
#[test]
fn almeida_neto_2008_worked_example() {
    let a = array![
        [1, 0, 1, 1, 1],
        [1, 1, 1, 0, 0],
        [0, 1, 1, 1, 0],
        [1, 1, 0, 0, 0],
        [1, 1, 0, 0, 0]
    ];
    let want = (175.0 / 3.0, 160.0 / 3.0, 190.0 / 3.0);
    for order in [Order::Given, Order::Sorted] {
        let p = nodf(&net(a.clone()), order).unwrap();
        let got = (p.total, p.rows.unwrap(), p.cols.unwrap());
        assert!((got.0 - want.0).abs() < 1e-9, "{order:?}: {got:?}");
        assert!((got.1 - want.1).abs() < 1e-9, "{order:?}: {got:?}");
        assert!((got.2 - want.2).abs() < 1e-9, "{order:?}: {got:?}");
        // The printed figures.
        assert!((got.0 - 58.33).abs() < PRINTED && (got.1 - 53.33).abs() < PRINTED);
        assert!((got.2 - 63.33).abs() < PRINTED);
    }
    // Rows reversed and columns rotated: sorted order restores the example.
    let rows = [4, 3, 2, 1, 0];
    let cols = [2, 3, 4, 0, 1];
    let shuffled = Array2::from_shape_fn((5, 5), |(i, j)| a[[rows[i], cols[j]]]);
    let p = nodf(&net(shuffled.clone()), Order::Sorted).unwrap();
    assert!((p.total - want.0).abs() < 1e-9, "{p:?}");
    assert!((p.rows.unwrap() - want.1).abs() < 1e-9);
    assert!((p.cols.unwrap() - want.2).abs() < 1e-9);
    // In the shuffled given order every row pair has its lower-degree row
    // first (decreasing fill fails), so the row part is 0.
    let g = nodf(&net(shuffled), Order::Given).unwrap();
    assert_eq!(g.rows, Some(0.0));
    assert!(g.total < want.0);
}

/// The hand rule of NODF (common practice, following the definition of
/// Almeida-Neto et al. 2008): with decreasing fill, a lower row whose 3
/// ones meet the upper row's in 2 places scores 2/3, i.e. 66.67 (67 when
/// rounded); two rows with equal totals score 0 whatever their overlap.
#[test]
fn hand_rule_two_of_three_and_equal_totals() {
    // Upper row: 4 ones; lower: 3 ones, 2 shared. Columns: only the pair
    // orders matter for the row part.
    let p = nodf(&net(array![[1, 1, 1, 1, 0], [1, 1, 0, 0, 1]]), Order::Given).unwrap();
    assert!((p.rows.unwrap() - 200.0 / 3.0).abs() < 1e-9);
    assert_eq!(p.rows.unwrap().round(), 67.0);
    // Equal totals, complete overlap (identical rows): 0.
    let p = nodf(&net(array![[1, 1, 1, 0], [1, 1, 1, 0]]), Order::Given).unwrap();
    assert_eq!(p.rows, Some(0.0));
    // Equal totals, partial overlap: 0 too, in either order.
    for order in [Order::Given, Order::Sorted] {
        let p = nodf(&net(array![[1, 1, 0, 1], [1, 1, 1, 0]]), order).unwrap();
        assert_eq!(p.rows, Some(0.0));
    }
}

/// Full triangular `n x n` matrix: row `i` (0-based) holds columns `0..n-i`.
fn triangle(n: usize) -> BitMatrix {
    BitMatrix::from_fn(n, n, |i, j| j < n - i)
}

/// True when, after sorting rows by degree, `b` is a full triangular
/// square matrix: degrees exactly n, n-1, ..., 1 and each row's set
/// contains the next one's (Britton, Almeida-Neto & Corso, Biomath 4,
/// article 1512171).
fn is_full_triangle(b: &BitMatrix) -> bool {
    let (m, n) = (b.nrows(), b.ncols());
    if m != n {
        return false;
    }
    let deg = b.row_degrees();
    let mut rows: Vec<usize> = (0..m).collect();
    rows.sort_by(|&x, &y| deg[y].cmp(&deg[x]));
    if rows.iter().enumerate().any(|(k, &i)| deg[i] != n - k) {
        return false;
    }
    rows.windows(2)
        .all(|w| (0..n).all(|j| !b.get(w[1], j) || b.get(w[0], j)))
}

/// Britton, Almeida-Neto & Corso (Biomath 4, article 1512171; the DOI
/// 10.11145/j.biomath.2015.12.171 dates it December 2015, indexes list
/// 2016): NODF is 100 exactly for a full triangular matrix, square, after
/// permutation of rows and columns. Checked exhaustively over every binary
/// matrix from 2 x 2 to 4 x 4 (sorted order), plus permuted triangles up to
/// 9 x 9 and near misses.
#[test]
fn britton_nodf_is_100_only_for_full_triangles() {
    let mut hundreds = 0;
    for m in 2..=4usize {
        for n in 2..=4usize {
            for bits in 0u32..(1 << (m * n)) {
                let b = BitMatrix::from_fn(m, n, |i, j| bits >> (i * n + j) & 1 == 1);
                let v = nodf(&b, Order::Sorted).unwrap().total;
                let full = is_full_triangle(&b);
                assert_eq!(v == 100.0, full, "{m} x {n} matrix {bits:#b}: NODF {v}");
                hundreds += usize::from(full);
            }
        }
    }
    // n! row orders times n! column orders of the one triangle, n = 2..4.
    assert_eq!(hundreds, 4 + 36 + 576);

    let mut rng = Xoshiro256PlusPlus::seed_from_u64(2015);
    for n in 2..=9usize {
        let t = triangle(n);
        let (mut rows, mut cols): (Vec<usize>, Vec<usize>) = ((0..n).collect(), (0..n).collect());
        for k in (1..n).rev() {
            rows.swap(k, rng.random_range(0..=k));
            cols.swap(k, rng.random_range(0..=k));
        }
        let p = t.permuted(&rows, &cols);
        assert_eq!(nodf(&p, Order::Sorted).unwrap().total, 100.0, "n = {n}");
        assert_eq!(nodf(&t, Order::Given).unwrap().total, 100.0, "n = {n}");
        // Near misses: one cell removed from the triangle's edge (two rows
        // or two columns then tie), one cell added below it, and the
        // staircase with one extra column (a rectangle: its first two
        // columns tie).
        let cut = BitMatrix::from_fn(n, n, |i, j| j < n - i && !(i == 0 && j == n - 1));
        let add = BitMatrix::from_fn(n, n, |i, j| j < n - i || (i == n - 1 && j == 1));
        let wide = BitMatrix::from_fn(n, n + 1, |i, j| j < n + 1 - i);
        for (what, b) in [("cut", cut), ("add", add), ("wide", wide)] {
            let v = nodf(&b, Order::Sorted).unwrap().total;
            assert!(v < 100.0, "{what} n = {n}: NODF {v}");
        }
    }
}

/// Britton, Almeida-Neto & Corso (as above): WNODF reaches 100 only on a
/// full triangular square matrix whose weights also satisfy the strict
/// inequalities (every lower row's weights below the upper row's in the
/// shared columns, and every right column's below the left column's).
/// Weights `w_ij = 2n - i - j` on the triangle satisfy them; making one
/// pair equal, or using the wide staircase, falls short.
#[test]
fn britton_wnodf_is_100_only_for_full_triangles_with_strict_weights() {
    for n in 2..=8usize {
        let w = Array2::from_shape_fn(
            (n, n),
            |(i, j)| {
                if j < n - i {
                    (2 * n - i - j) as u32
                } else {
                    0
                }
            },
        );
        let p = wnodf(&net(w.clone()), Order::Sorted).unwrap();
        assert_eq!(p.total, 100.0, "n = {n}");
        // Reversed rows and columns: sorted order finds it again.
        let rev = Array2::from_shape_fn((n, n), |(i, j)| w[[n - 1 - i, n - 1 - j]]);
        assert_eq!(wnodf(&net(rev), Order::Sorted).unwrap().total, 100.0);
        // Near miss: the last row's weight equal to the one above it in
        // column 0 (not strictly smaller).
        let mut tie = w.clone();
        tie[[n - 1, 0]] = tie[[n - 2, 0]];
        assert!(wnodf(&net(tie), Order::Sorted).unwrap().total < 100.0);
        // Near miss: a rectangle (one more column; weights still strict).
        let wide = Array2::from_shape_fn((n, n + 1), |(i, j)| {
            if j < n + 1 - i {
                (2 * n + 2 - i - j) as u32
            } else {
                0
            }
        });
        assert!(wnodf(&net(wide), Order::Sorted).unwrap().total < 100.0);
    }
    // The METHODS.md §2 example is the 3 x 3 case with other strict weights.
    let p = wnodf(&net(array![[5, 4, 3], [2, 1, 0], [1, 0, 0]]), Order::Sorted).unwrap();
    assert_eq!(p.total, 100.0);
}

/// Britton, Almeida-Neto & Corso (as above): any binary matrix with equal
/// row sums and equal column sums has NODF 0 (no pair has decreasing
/// fill): the chessboard (even sizes) and circulant ("gradient-like")
/// bands of width 1 to 3.
#[test]
fn britton_uniform_margins_give_zero() {
    for n in 2..=12usize {
        let mut cases = vec![];
        if n % 2 == 0 {
            cases.push(BitMatrix::from_fn(n, n, |i, j| (i + j) % 2 == 0));
        }
        for k in 1..=3.min(n - 1) {
            cases.push(BitMatrix::from_fn(n, n, |i, j| (j + n - i) % n < k));
        }
        for b in cases {
            let (rd, cd) = (b.row_degrees(), b.col_degrees());
            assert!(rd.iter().all(|&d| d == rd[0]) && cd.iter().all(|&d| d == cd[0]));
            for order in [Order::Given, Order::Sorted] {
                assert_eq!(nodf(&b, order).unwrap().total, 0.0, "n = {n}");
            }
        }
    }
}

/// The geometry weight of cell `(i, j)`: its unexpectedness when it is
/// unexpected (exactly one of "present" and "absent" is, off the
/// isocline).
fn mean_weight(n: usize) -> f64 {
    let t = UnexpectednessTable::new(n, n, n * n / 2).unwrap();
    let mut s = 0.0;
    for i in 0..n {
        for j in 0..n {
            s += t.if_present(i, j) + t.if_absent(i, j);
        }
    }
    s / (n * n) as f64
}

/// Temperature's scale (Atmar & Patterson 1993, Oecologia 96:373-382, with
/// U_max = 0.04145; METHODS.md §4). Analytic mean of a random matrix.
///
/// At fill 1/2 the isocline area `1 - Gamma(1+1/p)^2/Gamma(1+2/p)` is 1/2
/// for p = 1: the straight line `x + y = 1`. The diagonal line through
/// `(x, y)` is `(x + t, y + t)`; it meets the isocline at
/// `t* = (1 - x - y) / 2` and lies in the square over a length (in `t`)
/// `D = 1 - |x - y|`, so a cell that is unexpected scores
/// `g(x, y) = ((1 - x - y) / (2 (1 - |x - y|)))^2`. With `s = x + y`,
/// `d = x - y` (`dx dy = ds dd / 2`, region `|d| <= min(s, 2 - s)`):
///   int int g = 2 * (1/2) * (1/4) int_0^1 (1-d)^-2 int_d^(2-d) (1-s)^2 ds dd
///             = (1/4) int_0^1 (1-d)^-2 * (2/3)(1-d)^3 dd = (1/4)(2/3)(1/2)
///             = 1/12.
/// Every cell of a matrix with exactly half its cells present is, at
/// random, present or absent with probability 1/2, and exactly one of the
/// two is unexpected, so `E[u] = (1/2) * mean g -> 1/24` and
/// `E[T] -> 100 / (24 U_max) = 100.52`.
///
/// Here: the cell-centre mean of `g` (a midpoint rule) approaches 1/12. The
/// integrand is bounded and smooth except on the diagonal `x = y` (a kink)
/// and near the corners (0,1), (1,0), where its curvature grows like the
/// inverse square of the distance; the midpoint rule's error is then
/// `O(h^2 ln(1/h))` with `h = 1/n`, and the test allows exactly
/// `h^2 ln(1/h)` (the measured errors are about 5 times smaller: 6.7e-6 at
/// n = 400) and requires the error to shrink with n.
#[test]
fn temperature_random_mean_is_one_twentyfourth() {
    let mut last = f64::INFINITY;
    for n in [50usize, 100, 200, 400] {
        let err = (mean_weight(n) - 1.0 / 12.0).abs();
        let h = 1.0 / n as f64;
        assert!(err < h * h * (1.0 / h).ln(), "n = {n}: error {err:e}");
        assert!(err < last);
        last = err;
    }
    // The complement of a half-filled matrix is half filled too, with the
    // same isocline, and each cell is unexpected in exactly one of the
    // two: T(M) + T(not M) = 100 mean g / U_max, for any M.
    let n = 60;
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(24);
    let mut cells: Vec<bool> = (0..n * n).map(|k| k < n * n / 2).collect();
    for k in (1..n * n).rev() {
        cells.swap(k, rng.random_range(0..=k));
    }
    let m = BitMatrix::from_fn(n, n, |i, j| cells[i * n + j]);
    let c = BitMatrix::from_fn(n, n, |i, j| !cells[i * n + j]);
    let opts = TemperatureOptions::default().with_pack(false);
    let sum = temperature(&m, &opts).unwrap().given + temperature(&c, &opts).unwrap().given;
    let want = 100.0 * mean_weight(n) / U_MAX;
    assert!((sum - want).abs() < 1e-9 * want, "{sum} vs {want}");
}

/// The large-size limit: random 300 x 300 matrices with exactly half their
/// cells present (positions by a seeded Fisher-Yates shuffle), in their
/// given order, have mean temperature near 100 / (24 U_max) = 100.52, not
/// 100 (METHODS.md §4).
///
/// Tolerance: for such a matrix `E[T] = 50 mean g / U_max` exactly (see the
/// test above), which differs from the limit by the midpoint error (below
/// 0.01 here). Writing `T = 100 / (N^2 U_max) sum g_ij X_ij`, with `X_ij`
/// the indicator that cell `(i, j)` is unexpected (probability 1/2,
/// non-positively correlated under a fixed number of ones), gives
/// `sd(T) <= 100 / (N^2 U_max) sqrt(sum g_ij^2 / 4)`, computed from the
/// table itself (about 0.45 for one matrix; the spread measured over
/// seeded matrices is near 0.39). The mean of 16 matrices is required
/// within 3 such sd of the mean (`3 sd / 4`, about 0.34) plus the midpoint
/// error, a band that excludes 100.
#[test]
fn temperature_large_random_matrices_score_about_100_5() {
    let n = 300;
    let limit = 100.0 / (24.0 * U_MAX);
    assert!((limit - 100.5227).abs() < 1e-4);
    let table = UnexpectednessTable::new(n, n, n * n / 2).unwrap();
    let mut sum_sq = 0.0;
    for i in 0..n {
        for j in 0..n {
            let g = table.if_present(i, j) + table.if_absent(i, j);
            sum_sq += g * g;
        }
    }
    let sd = 100.0 / ((n * n) as f64 * U_MAX) * (sum_sq / 4.0).sqrt();
    let exact_mean = 50.0 * mean_weight(n) / U_MAX;
    let reps = 16;
    let tol = 3.0 * sd / (reps as f64).sqrt() + (exact_mean - limit).abs();
    assert!(
        tol < 0.5,
        "tolerance {tol} too loose to say 100.5 rather than 100"
    );
    let opts = TemperatureOptions::default().with_pack(false);
    let order: Vec<usize> = (0..n).collect();
    let mut mean = 0.0;
    for r in 0..reps {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(1993 + r);
        let mut cells: Vec<bool> = (0..n * n).map(|k| k < n * n / 2).collect();
        for k in (1..n * n).rev() {
            cells.swap(k, rng.random_range(0..=k));
        }
        let b = BitMatrix::from_fn(n, n, |i, j| cells[i * n + j]);
        let t = table.temperature(&b, &order, &order);
        if r == 0 {
            // The table is what temperature() uses for the given order.
            let given = temperature(&b, &opts).unwrap().given;
            assert!((t - given).abs() < 1e-9 * given);
        }
        mean += t / reps as f64;
    }
    assert!(
        (mean - limit).abs() < tol,
        "mean T {mean} vs {limit} (tolerance {tol})"
    );
    eprintln!("mean T {mean:.4}, limit {limit:.4}, tolerance {tol:.4}, sd bound {sd:.4}");
    // 100 itself lies outside the band.
    assert!((mean - 100.0).abs() > tol);
}

/// The draw-key mixer against an independent implementation: rand_xoshiro's
/// `SplitMix64` (a translation of Vigna's reference `splitmix64.c`, after
/// Steele, Lea & Flood 2014) started from state `x` returns
/// `splitmix64(x)` as its first output.
#[test]
fn splitmix64_matches_rand_xoshiro() {
    use rand::RngCore;
    use rand_xoshiro::SplitMix64;
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(2014);
    let mut xs = vec![0u64, 1, u64::MAX];
    xs.extend((0..200).map(|_| rng.next_u64()));
    for x in xs {
        let mut reference = SplitMix64::from_seed(x.to_le_bytes());
        assert_eq!(
            nidus::null::splitmix64(x),
            reference.next_u64(),
            "x = {x:#x}"
        );
    }
    assert_eq!(nidus::null::splitmix64(0), 0xE220_A839_7B1D_CDAF);
}
