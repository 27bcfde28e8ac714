//! Null models against outside references: what each sampler keeps
//! (METHODS.md §6), uniformity of the curveball against brute-force lists of
//! every matrix with the margins, Patefield's tables against the
//! hypergeometric distribution, the proportional model's cell probabilities,
//! and the calibration of the tests built on them (METHODS.md §7).

mod common;

use std::collections::HashMap;

use common::*;
use nidus::index::IndexKind;
use nidus::null::{
    draw_rng, run_null, CurveballChain, Equiprobable, FixedColumns, FixedRows, FixedTotals,
    NullConfig, NullDraw, NullModel, NullOptions, NullSampler, Proportional, ShuffleCells,
    ShuffleWeights,
};
use nidus::{BitMatrix, Network};
use rand::Rng;

// ---------------------------------------------------------------------------
// Chi-square distribution: tests/common/mod.rs, checked against tables here.

/// The chi-square tail against table values: the 95 % points 3.841 (df 1)
/// and 18.307 (df 10), the 99.9 % point 29.588 (df 10) (Abramowitz & Stegun
/// 1964, Table 26.8; also in every statistics text).
#[test]
fn chi_square_tail_matches_tables() {
    assert!((chi2_sf(3.841, 1) - 0.05).abs() < 2e-4);
    assert!((chi2_sf(18.307, 10) - 0.05).abs() < 2e-4);
    assert!((chi2_sf(29.588, 10) - 0.001).abs() < 2e-5);
}

// ---------------------------------------------------------------------------
// Helpers.

fn bits_of(w: &Mat) -> BitMatrix {
    BitMatrix::from_fn(w.len(), w[0].len(), |i, j| w[i][j] != 0.0)
}

fn net_of(w: &Mat) -> Option<Network<f64>> {
    Network::from_array(to_array(w)).ok()
}

/// Seeded random networks with at least one link, of varied shapes and fills.
fn networks(seed: u64, count: usize, max_side: usize, max_weight: u32) -> Vec<(Mat, Network<f64>)> {
    let mut rng = rng(seed);
    let mut out = Vec::new();
    while out.len() < count {
        let (m, n) = (
            rng.random_range(1..=max_side),
            rng.random_range(1..=max_side),
        );
        let fill = rng.random_range(0.05..0.95);
        let w = random_matrix(&mut rng, m, n, fill, max_weight);
        if let Some(net) = net_of(&w) {
            out.push((w, net));
        }
    }
    out
}

fn mask(b: &BitMatrix) -> u64 {
    let mut x = 0u64;
    for i in 0..b.nrows() {
        for j in 0..b.ncols() {
            if b.get(i, j) {
                x |= 1 << (i * b.ncols() + j);
            }
        }
    }
    x
}

/// Every `m x n` binary matrix with the given margins, by brute force over
/// all `2^(m n)` matrices (the reference for uniformity).
fn all_with_margins(rows: &[usize], cols: &[usize]) -> Vec<u64> {
    let (m, n) = (rows.len(), cols.len());
    (0u64..1 << (m * n))
        .filter(|&x| {
            (0..m).all(|i| (0..n).filter(|&j| x >> (i * n + j) & 1 == 1).count() == rows[i])
                && (0..n).all(|j| (0..m).filter(|&i| x >> (i * n + j) & 1 == 1).count() == cols[j])
        })
        .collect()
}

fn sorted_values(v: impl Iterator<Item = f64>) -> Vec<f64> {
    let mut v: Vec<f64> = v.collect();
    v.sort_by(f64::total_cmp);
    v
}

// ---------------------------------------------------------------------------
// What each sampler keeps (METHODS.md §6), on hundreds of seeded matrices.

#[test]
fn binary_samplers_keep_their_constraints() {
    for (t, (w, net)) in networks(1, 300, 12, 4).into_iter().enumerate() {
        let b = bits_of(&w);
        let (rows, cols, links) = (b.row_degrees(), b.col_degrees(), b.links());
        let mut rng = draw_rng(100, t as u64);
        let e = Equiprobable::new(&net).unwrap().sample(&mut rng);
        assert_eq!(
            (e.nrows(), e.ncols(), e.links()),
            (b.nrows(), b.ncols(), links)
        );
        let r = FixedRows::new(&net).unwrap().sample(&mut rng);
        assert_eq!(r.row_degrees(), rows);
        let c = FixedColumns::new(&net).unwrap().sample(&mut rng);
        assert_eq!(c.col_degrees(), cols);
        let mut chain = CurveballChain::new(&b);
        for _ in 0..5 {
            chain.run(&mut rng, 7);
            assert_eq!(chain.matrix().row_degrees(), rows);
            assert_eq!(chain.matrix().col_degrees(), cols);
        }
        // Proportional: cells of probability 0 (empty row and empty column)
        // stay 0, cells of probability 1 (full row and full column) stay 1.
        let p = Proportional::new(&net).unwrap();
        let d = p.sample(&mut rng);
        for i in 0..b.nrows() {
            for j in 0..b.ncols() {
                let q =
                    (rows[i] as f64 / b.ncols() as f64 + cols[j] as f64 / b.nrows() as f64) / 2.0;
                assert_eq!(p.probability(i, j), q);
                if q == 0.0 {
                    assert!(!d.get(i, j));
                }
                if q == 1.0 {
                    assert!(d.get(i, j));
                }
            }
        }
    }
}

#[test]
fn weighted_samplers_keep_their_constraints() {
    for (t, (w, net)) in networks(2, 300, 10, 9).into_iter().enumerate() {
        let mut rng = draw_rng(200, t as u64);
        let cells = ShuffleCells::new(&net).unwrap().sample(&mut rng);
        assert_eq!(
            sorted_values(cells.iter().copied()),
            sorted_values(w.iter().flatten().copied())
        );
        let sw = ShuffleWeights::new(&net).unwrap().sample(&mut rng);
        for i in 0..w.len() {
            for j in 0..w[0].len() {
                assert_eq!(sw[[i, j]] != 0.0, w[i][j] != 0.0);
            }
        }
        assert_eq!(
            sorted_values(sw.iter().copied()),
            sorted_values(w.iter().flatten().copied())
        );
        let ft = FixedTotals::new(&net).unwrap().sample(&mut rng);
        for (i, row) in w.iter().enumerate() {
            assert_eq!(ft.row(i).sum(), row.iter().sum::<f64>());
        }
        for j in 0..w[0].len() {
            assert_eq!(ft.column(j).sum(), w.iter().map(|r| r[j]).sum::<f64>());
        }
        assert!(ft.iter().all(|&x| x >= 0.0 && x.fract() == 0.0));
    }
}

/// Binary models on a weighted network read its binary view; weighted
/// models on a binary network behave as documented.
#[test]
fn binary_view_and_binary_input() {
    let net = Network::from_array(ndarray::array![[5.0, 2.0, 0.0], [1.0, 0.0, 0.0]]).unwrap();
    let s = NullSampler::new(&net, NullModel::FixedBoth, &NullOptions::default()).unwrap();
    let NullDraw::Binary(b) = s.draw(1, 0) else {
        panic!("binary model gave weights")
    };
    assert_eq!(b.row_degrees(), vec![2, 1]);
    let bin = Network::from_array(ndarray::array![[1.0, 1.0, 0.0], [1.0, 0.0, 0.0]]).unwrap();
    let s = NullSampler::new(&bin, NullModel::ShuffleWeights, &NullOptions::default()).unwrap();
    assert_eq!(s.draw(3, 9).to_array(), bin.to_dense().unwrap());
}

/// METHODS.md §6: fixed-totals needs integer counts; the error names the cell.
#[test]
fn fixed_totals_rejects_fractions() {
    let net = Network::from_dense(
        ndarray::array![[1.0, 2.5], [3.0, 0.0]],
        vec!["oak".into(), "ash".into()],
        vec!["moth".into(), "beetle".into()],
    )
    .unwrap();
    let e = FixedTotals::new(&net).unwrap_err().to_string();
    assert!(
        e.contains("'oak'") && e.contains("'beetle'") && e.contains("2.5"),
        "{e}"
    );
}

// ---------------------------------------------------------------------------
// Uniformity of fixed-both (METHODS.md §6 fact; Strona et al. 2014).

/// Draws `per_state * states` independent fixed-both matrices (each its own
/// chain from the start matrix, default burn-in) and checks that only
/// matrices with the margins appear and all with equal frequency
/// (Pearson chi-square, p > 0.001).
fn check_uniform(start: &Mat, per_state: usize, seed: u64) {
    let b = bits_of(start);
    let states = all_with_margins(&b.row_degrees(), &b.col_degrees());
    let net = net_of(start).unwrap();
    let s = NullSampler::new(&net, NullModel::FixedBoth, &NullOptions::default()).unwrap();
    let mut counts: HashMap<u64, usize> = states.iter().map(|&x| (x, 0)).collect();
    let total = per_state * states.len();
    for k in 0..total {
        let NullDraw::Binary(d) = s.draw(seed, k as u64) else {
            unreachable!()
        };
        *counts
            .get_mut(&mask(&d))
            .expect("a matrix with other margins") += 1;
    }
    let c: Vec<usize> = states.iter().map(|x| counts[x]).collect();
    let p = chi_square(&c, &vec![1.0 / states.len() as f64; states.len()]);
    assert!(p > 0.001, "{} states, counts {c:?}, p = {p}", states.len());
}

/// All margins 1 on 4 x 4: the 4! = 24 permutation matrices equally often.
#[test]
fn fixed_both_uniform_on_permutation_matrices() {
    let id: Mat = (0..4)
        .map(|i| (0..4).map(|j| f64::from(u8::from(i == j))).collect())
        .collect();
    assert_eq!(all_with_margins(&[1; 4], &[1; 4]).len(), 24);
    check_uniform(&id, 200, 11);
}

/// Uneven margins (rows 2,2,1,1; columns 2,2,1,1) on 4 x 4, every matrix
/// with those margins listed by brute force.
#[test]
fn fixed_both_uniform_on_uneven_margins() {
    let start: Mat = vec![
        vec![1.0, 1.0, 0.0, 0.0],
        vec![1.0, 0.0, 1.0, 0.0],
        vec![0.0, 1.0, 0.0, 0.0],
        vec![0.0, 0.0, 0.0, 1.0],
    ];
    check_uniform(&start, 120, 12);
}

/// A non-square case (3 x 4; rows 2,2,1; columns 2,1,1,1).
#[test]
fn fixed_both_uniform_on_rectangle() {
    let start: Mat = vec![
        vec![1.0, 1.0, 0.0, 0.0],
        vec![1.0, 0.0, 1.0, 0.0],
        vec![0.0, 0.0, 0.0, 1.0],
    ];
    check_uniform(&start, 150, 13);
}

// ---------------------------------------------------------------------------
// fixed-totals against the hypergeometric distribution.

/// Cell means over many draws match `r_i c_j / N` (METHODS.md §6 fact; the
/// mean of the multiple hypergeometric) within 4.5 standard errors of the
/// mean; margins exact every time.
#[test]
fn fixed_totals_cell_means() {
    let w: Mat = vec![
        vec![7.0, 0.0, 3.0, 1.0],
        vec![2.0, 5.0, 0.0, 0.0],
        vec![0.0, 1.0, 4.0, 9.0],
    ];
    let net = net_of(&w).unwrap();
    let s = FixedTotals::new(&net).unwrap();
    let (r, c) = (s.row_totals().to_vec(), s.col_totals().to_vec());
    let n: u64 = r.iter().sum();
    let draws = 4000;
    let mut sum = ndarray::Array2::<f64>::zeros((3, 4));
    let mut sq = ndarray::Array2::<f64>::zeros((3, 4));
    for k in 0..draws {
        let t = s.sample(&mut draw_rng(5, k));
        sum += &t;
        sq += &t.mapv(|x| x * x);
    }
    for i in 0..3 {
        for j in 0..4 {
            let mean = sum[[i, j]] / draws as f64;
            let var = sq[[i, j]] / draws as f64 - mean * mean;
            let se = (var / draws as f64).sqrt();
            let expect = (r[i] * c[j]) as f64 / n as f64;
            assert!(
                (mean - expect).abs() < 4.5 * se + 1e-12,
                "cell ({i},{j}): {mean} vs {expect}"
            );
        }
    }
}

/// Large counts (total above the 2^16 entries of the `ln k!` table, so
/// Stirling's series is used): margins exact and cell means within 4.5
/// standard errors of `r_i c_j / N`.
#[test]
fn fixed_totals_large_counts() {
    let w: Mat = vec![
        vec![40_000.0, 3_000.0, 12_000.0],
        vec![500.0, 25_000.0, 7.0],
    ];
    let net = net_of(&w).unwrap();
    let s = FixedTotals::new(&net).unwrap();
    let (r, c) = (s.row_totals().to_vec(), s.col_totals().to_vec());
    let n: u64 = r.iter().sum();
    assert!(n > 1 << 16);
    let draws = 400;
    let mut sum = ndarray::Array2::<f64>::zeros((2, 3));
    let mut sq = ndarray::Array2::<f64>::zeros((2, 3));
    for k in 0..draws {
        let t = s.sample(&mut draw_rng(17, k));
        for i in 0..2 {
            assert_eq!(t.row(i).sum(), r[i] as f64);
        }
        for j in 0..3 {
            assert_eq!(t.column(j).sum(), c[j] as f64);
        }
        sum += &t;
        sq += &t.mapv(|x| x * x);
    }
    for i in 0..2 {
        for j in 0..3 {
            let mean = sum[[i, j]] / draws as f64;
            let se = ((sq[[i, j]] / draws as f64 - mean * mean) / draws as f64).sqrt();
            let expect = (r[i] * c[j]) as f64 / n as f64;
            assert!(
                (mean - expect).abs() < 4.5 * se + 1e-9,
                "cell ({i},{j}): {mean} vs {expect}"
            );
        }
    }
}

/// On a 2 x 2 table the first cell follows the hypergeometric distribution
/// `P(x) = C(c1, x) C(N - c1, r1 - x) / C(N, r1)` (the null distribution of
/// Fisher's exact test; Fisher 1935, J. R. Stat. Soc. 98:39-82): chi-square
/// of the frequencies, p > 0.001.
#[test]
fn fixed_totals_two_by_two_is_hypergeometric() {
    let w: Mat = vec![vec![6.0, 3.0], vec![2.0, 9.0]];
    let net = net_of(&w).unwrap();
    let s = FixedTotals::new(&net).unwrap();
    let (r1, c1, n) = (9u64, 8u64, 20u64);
    let choose =
        |a: u64, b: u64| -> f64 { (0..b).map(|k| (a - k) as f64 / (k + 1) as f64).product() };
    let support: Vec<u64> = (0..=r1.min(c1)).filter(|&x| r1 - x <= n - c1).collect();
    let probs: Vec<f64> = support
        .iter()
        .map(|&x| choose(c1, x) * choose(n - c1, r1 - x) / choose(n, r1))
        .collect();
    assert!((probs.iter().sum::<f64>() - 1.0).abs() < 1e-12);
    // Pool the tails so every expected count is at least 5 (common practice).
    let draws = 20_000;
    let mut counts = vec![0usize; support.len()];
    for k in 0..draws {
        let t = s.sample(&mut draw_rng(8, k));
        counts[t[[0, 0]] as usize - support[0] as usize] += 1;
    }
    let (mut pc, mut pp) = (Vec::new(), Vec::new());
    let (mut acc_c, mut acc_p) = (0usize, 0.0);
    for (c, p) in counts.iter().zip(&probs) {
        acc_c += c;
        acc_p += p;
        if acc_p * draws as f64 >= 5.0 {
            pc.push(acc_c);
            pp.push(acc_p);
            acc_c = 0;
            acc_p = 0.0;
        }
    }
    *pc.last_mut().unwrap() += acc_c;
    *pp.last_mut().unwrap() += acc_p;
    let p = chi_square(&pc, &pp);
    assert!(p > 0.001, "counts {counts:?}, p = {p}");
}

// ---------------------------------------------------------------------------
// proportional: each cell's frequency is (d_i/n + d_j/m)/2.

#[test]
fn proportional_cell_frequencies() {
    let w: Mat = vec![
        vec![1.0, 1.0, 1.0, 1.0, 1.0, 0.0],
        vec![1.0, 1.0, 0.0, 0.0, 0.0, 0.0],
        vec![1.0, 0.0, 1.0, 0.0, 0.0, 0.0],
        vec![0.0, 0.0, 0.0, 0.0, 0.0, 0.0],
        vec![1.0, 0.0, 0.0, 0.0, 0.0, 0.0],
    ];
    let net = net_of(&w).unwrap();
    let (m, n) = (5.0, 6.0);
    let d_r: Vec<f64> = w.iter().map(|r| r.iter().sum()).collect();
    let d_c: Vec<f64> = (0..6).map(|j| w.iter().map(|r| r[j]).sum()).collect();
    let s = Proportional::new(&net).unwrap();
    let draws = 5000;
    let mut counts = vec![vec![0usize; 6]; 5];
    for k in 0..draws {
        let b = s.sample(&mut draw_rng(21, k));
        for i in 0..5 {
            for j in 0..6 {
                counts[i][j] += usize::from(b.get(i, j));
            }
        }
    }
    for i in 0..5 {
        for j in 0..6 {
            // Bascompte et al. (2003): p_ij = (d_i/n + d_j/m)/2.
            let p = (d_r[i] / n + d_c[j] / m) / 2.0;
            let f = counts[i][j] as f64 / draws as f64;
            let se = (p * (1.0 - p) / draws as f64).sqrt();
            assert!((f - p).abs() <= 4.5 * se, "cell ({i},{j}): {f} vs {p}");
        }
    }
}

// ---------------------------------------------------------------------------
// Calibration: on matrices drawn from a model, its test rejects at 5 %.

/// Upper limit `u` with `P(Bin(trials, p) > u) < 0.001`, from the binomial
/// probabilities computed term by term.
fn binomial_upper(trials: usize, p: f64) -> usize {
    let mut pmf = (1.0 - p).powi(trials as i32);
    let mut cdf = pmf;
    let mut k = 0;
    while 1.0 - cdf >= 0.001 {
        pmf *= (trials - k) as f64 / (k + 1) as f64 * p / (1.0 - p);
        cdf += pmf;
        k += 1;
    }
    k
}

/// Lower limit `l` with `P(Bin(trials, p) < l) < 0.001`.
fn binomial_lower(trials: usize, p: f64) -> usize {
    let mut pmf = (1.0 - p).powi(trials as i32);
    let mut cdf = 0.0;
    let mut k = 0;
    while cdf + pmf < 0.001 {
        cdf += pmf;
        pmf *= (trials - k) as f64 / (k + 1) as f64 * p / (1.0 - p);
        k += 1;
    }
    k
}

/// Runs `trials` tests of networks drawn from `model` (starting from a
/// seeded random network) against the same model, `draws` null draws each,
/// and returns how many had `p_greater <= 0.05`. Every p-value must lie in
/// (0, 1].
fn rejections(model: NullModel, index: IndexKind, trials: usize, draws: usize, seed: u64) -> usize {
    let mut rng = rng(seed);
    let mut rejected = 0;
    let mut t = 0;
    while t < trials {
        let (m, n) = (rng.random_range(8..16), rng.random_range(8..16));
        let fill = rng.random_range(0.2..0.5);
        let w = random_matrix(&mut rng, m, n, fill, 5);
        let Some(base) = net_of(&w) else { continue };
        let s = NullSampler::new(&base, model, &NullOptions::default()).unwrap();
        let Ok(obs) = base.with_weights(s.draw(seed ^ 0xABCD, t as u64).to_array()) else {
            continue;
        };
        let config = NullConfig::new(model, vec![index], draws, seed.wrapping_add(t as u64));
        let Ok(run) = run_null(&obs, &config) else {
            continue;
        };
        let sum = &run.summaries().unwrap()[0];
        for p in [sum.p_greater, sum.p_less] {
            assert!(p > 0.0 && p <= 1.0, "p = {p}");
        }
        rejected += usize::from(sum.p_greater <= 0.05);
        t += 1;
    }
    rejected
}

/// Equiprobable draws tested against equiprobable: the rejection count of
/// 200 tests at alpha 0.05 (R = 99, so p <= 0.05 means at most 4 draws as
/// large; exact level 5/100 without ties) lies within the 99.8 % binomial
/// band of Bin(200, 0.05).
#[test]
fn equiprobable_test_is_calibrated() {
    let r = rejections(
        NullModel::Equiprobable,
        IndexKind::named("nodf").unwrap(),
        200,
        99,
        31,
    );
    let (lo, hi) = (binomial_lower(200, 0.05), binomial_upper(200, 0.05));
    assert!(lo <= r && r <= hi, "{r} of 200 rejected, band {lo}..={hi}");
}

/// The same check for every model on 1000 tests each (about 3 s in a
/// release build, the README's test command). Prints the rates. Models that
/// condition on the statistics they keep give exchangeable draws, so their
/// level is at most 5 % (exactly 5 % without ties).
#[test]
fn every_model_is_calibrated() {
    let trials = 1000;
    let (lo, hi) = (binomial_lower(trials, 0.05), binomial_upper(trials, 0.05));
    let cases = [
        (NullModel::Equiprobable, IndexKind::named("nodf").unwrap()),
        (NullModel::Proportional, IndexKind::named("nodf").unwrap()),
        (NullModel::FixedRows, IndexKind::named("nodf").unwrap()),
        (NullModel::FixedColumns, IndexKind::named("nodf").unwrap()),
        (NullModel::FixedBoth, IndexKind::named("nodf").unwrap()),
        (NullModel::ShuffleCells, IndexKind::named("wnodf").unwrap()),
        (
            NullModel::ShuffleWeights,
            IndexKind::named("wnodf").unwrap(),
        ),
        (NullModel::FixedTotals, IndexKind::named("nodf").unwrap()),
    ];
    let mut failures = Vec::new();
    for (k, (model, index)) in cases.into_iter().enumerate() {
        let r = rejections(model, index, trials, 99, 1000 + k as u64);
        println!("{model} / {index}: {r} of {trials} rejected at 0.05 (band {lo}..={hi})");
        // `proportional` does not condition on what it estimates (its
        // probabilities come from the observed degrees, which a draw does not
        // keep), so the observed network is not exchangeable with its draws
        // and the test may be conservative: only the upper limit applies.
        let too_few = r < lo && model != NullModel::Proportional;
        if too_few || r > hi {
            failures.push(format!("{model}: {r}"));
        }
    }
    assert!(failures.is_empty(), "{failures:?}");
}

/// Margins with many admissible matrices (rows 3,2,2,1; columns
/// 2,2,2,1,1 on 4 x 5: the brute-force list has 117 of them, and trades
/// pool up to 5 columns): all equally often
/// (Pearson chi-square, p > 0.001, as above: a uniform chain fails this
/// check with probability 0.001 for a given seed).
#[test]
fn fixed_both_uniform_on_many_matrices() {
    let start: Mat = vec![
        vec![1.0, 1.0, 1.0, 0.0, 0.0],
        vec![1.0, 1.0, 0.0, 0.0, 0.0],
        vec![0.0, 0.0, 1.0, 1.0, 0.0],
        vec![0.0, 0.0, 0.0, 0.0, 1.0],
    ];
    let states = all_with_margins(&[3, 2, 2, 1], &[2, 2, 2, 1, 1]).len();
    assert_eq!(states, 117, "117 by a separate enumeration (Python)");
    check_uniform(&start, 60, 14);
}

// ---------------------------------------------------------------------------
// Uniformity of fixed-both on larger pools (Strona et al. 2014, Nat. Commun.
// 5:4114; the curveball chain is uniform over the matrices with the given
// margins: Carstens 2015, Phys. Rev. E 91:042812), against every matrix
// with the margins listed by backtracking.

/// Every `m x n` binary matrix with row degrees `rows` and column degrees
/// `cols`, as the words of its `BitMatrix`, listed row by row by
/// backtracking (no column over its degree; a finished row leaves no column
/// needing more ones than rows are left).
fn enumerate_margins(rows: &[usize], cols: &[usize]) -> Vec<Vec<u64>> {
    struct Walk<'a> {
        rows: &'a [usize],
        left: Vec<usize>,
        cur: BitMatrix,
        out: Vec<Vec<u64>>,
    }
    fn place(w: &mut Walk, i: usize, j: usize, need: usize) {
        let (m, n) = (w.rows.len(), w.left.len());
        if need == 0 {
            if w.left.iter().any(|&c| c > m - i - 1) {
                return;
            }
            if i + 1 == m {
                w.out.push(w.cur.as_words().to_vec());
            } else {
                place(w, i + 1, 0, w.rows[i + 1]);
            }
            return;
        }
        if n - j < need {
            return;
        }
        if w.left[j] > 0 {
            w.left[j] -= 1;
            w.cur.set(i, j, true);
            place(w, i, j + 1, need - 1);
            w.cur.set(i, j, false);
            w.left[j] += 1;
        }
        place(w, i, j + 1, need);
    }
    let mut w = Walk {
        rows,
        left: cols.to_vec(),
        cur: BitMatrix::zeros(rows.len(), cols.len()),
        out: Vec::new(),
    };
    place(&mut w, 0, 0, rows[0]);
    w.out
}

/// The backtracking list against the brute-force one on the margins used
/// above, and against binomial coefficients on two rows of column degree 1.
#[test]
fn enumeration_of_margins_matches_brute_force() {
    for (rows, cols) in [
        (vec![3, 2, 2, 1], vec![2, 2, 2, 1, 1]),
        (vec![2, 2, 1, 1], vec![2, 2, 1, 1]),
        (vec![1; 4], vec![1; 4]),
    ] {
        let brute = all_with_margins(&rows, &cols).len();
        assert_eq!(enumerate_margins(&rows, &cols).len(), brute);
    }
    assert_eq!(enumerate_margins(&[3, 6], &[1; 9]).len(), 84); // C(9, 3)
    assert_eq!(enumerate_margins(&[2, 18], &[1; 20]).len(), 190); // C(20, 2)
}

/// Draws `per_state * states` fixed-both matrices (each its own chain from
/// `start`, default burn-in) and checks that only listed matrices appear,
/// all equally often (Pearson chi-square, p > 0.001: a uniform chain fails
/// with probability 0.001 for a given seed). Returns the number of states.
fn check_uniform_enumerated(start: &BitMatrix, per_state: usize, seed: u64) -> usize {
    let states = enumerate_margins(&start.row_degrees(), &start.col_degrees());
    let net = Network::from_array(ndarray::Array2::from_shape_fn(
        (start.nrows(), start.ncols()),
        |(i, j)| f64::from(u8::from(start.get(i, j))),
    ))
    .unwrap();
    let s = NullSampler::new(&net, NullModel::FixedBoth, &NullOptions::default()).unwrap();
    let mut counts: HashMap<Vec<u64>, usize> = states.iter().map(|x| (x.clone(), 0)).collect();
    for k in 0..per_state * states.len() {
        let NullDraw::Binary(d) = s.draw(seed, k as u64) else {
            unreachable!()
        };
        *counts
            .get_mut(d.as_words())
            .expect("a matrix with other margins") += 1;
    }
    let c: Vec<usize> = states.iter().map(|x| counts[x]).collect();
    let p = chi_square(&c, &vec![1.0 / states.len() as f64; states.len()]);
    assert!(p > 0.001, "{} states, counts {c:?}, p = {p}", states.len());
    states.len()
}

/// Two rows sharing no column (column degrees 1): the matrices are the
/// `C(n, d)` choices of the first row's columns, and every trade pools all
/// `n` columns. The cases cover each way a subset of the pool is drawn:
/// Floyd's algorithm (one side under 1/8 of the pool; 70 and 130 columns
/// take the two-word register and the word array), and coins of
/// probability 1/8, 2/8, 3/8 and 4/8 (and their complements) corrected to
/// the exact count.
#[test]
fn fixed_both_uniform_on_large_pools() {
    let two_rows = |d: usize, n: usize| BitMatrix::from_fn(2, n, |i, j| (i == 0) == (j < d));
    for (d, n, per_state, states) in [
        (2, 20, 30, 190),  // Floyd, 2 of 20
        (1, 70, 40, 70),   // Floyd, two-word register
        (1, 130, 30, 130), // Floyd, word array
        (2, 16, 40, 120),  // coins 1/8 and 7/8
        (2, 9, 60, 36),    // coins 2/8 and 6/8
        (3, 9, 40, 84),    // coins 3/8 and 5/8
        (4, 9, 30, 126),   // coins 4/8
    ] {
        assert_eq!(
            check_uniform_enumerated(&two_rows(d, n), per_state, 30 + n as u64),
            states
        );
    }
}

/// Uneven margins on 3 x 8 (rows 5, 3, 2; columns 2, 2, 1, 1, 1, 1, 1, 1)
/// with pools of 5 and 6 columns: 296 admissible matrices (the backtracking
/// list; 296 also by a separate enumeration in Python), all equally often.
#[test]
fn fixed_both_uniform_on_uneven_larger_margins() {
    let ones: [&[usize]; 3] = [&[0, 1, 2, 3, 4], &[0, 5, 6], &[1, 7]];
    let start = BitMatrix::from_fn(3, 8, |i, j| ones[i].contains(&j));
    assert_eq!(start.col_degrees(), vec![2, 2, 1, 1, 1, 1, 1, 1]);
    assert_eq!(check_uniform_enumerated(&start, 30, 41), 296);
}
