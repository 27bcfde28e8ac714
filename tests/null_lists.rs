//! Binary null draws stored as row lists (the storage of large sparse
//! networks): what each model keeps, equality with the bit-table draws
//! for the models that share their random numbers, uniformity of the list
//! curveball (Strona et al. 2014) over every matrix with the margins,
//! listed by brute force, the proportional model's cell probabilities
//! (Bascompte et al. 2003) and its null distribution against the
//! bit-table sampler's (two-sample Kolmogorov-Smirnov test).

mod common;

use std::collections::HashMap;

use common::*;
use nidus::index::IndexKind;
use nidus::metrics::{nodf, Order};
use nidus::null::{
    lists_chosen, run_null, CurveballLists, NullConfig, NullDraw, NullModel, NullOptions,
    NullSampler,
};
use nidus::{BitMatrix, Csr, NetView, Network};
use rand::Rng;

const BINARY: [NullModel; 5] = [
    NullModel::Equiprobable,
    NullModel::Proportional,
    NullModel::FixedRows,
    NullModel::FixedColumns,
    NullModel::FixedBoth,
];

/// Options forcing one storage (the hidden switch for tests).
fn storage(lists: bool) -> NullOptions {
    let mut o = NullOptions::default();
    o.lists = Some(lists);
    o
}

fn lists_of(d: NullDraw) -> Csr<f64> {
    match d {
        NullDraw::BinaryLists(c) => c,
        other => panic!("expected row lists, got {other:?}"),
    }
}

fn bits_of(d: NullDraw) -> BitMatrix {
    match d {
        NullDraw::Binary(b) => b,
        other => panic!("expected a bit table, got {other:?}"),
    }
}

/// Every row strictly ascending and inside the table, every weight 1.
fn check_well_formed(c: &Csr<f64>) {
    for i in 0..c.nrows() {
        let (cols, w) = c.row(i);
        assert!(cols.windows(2).all(|p| p[0] < p[1]), "row {i}: {cols:?}");
        assert!(cols.iter().all(|&j| (j as usize) < c.ncols()));
        assert!(w.iter().all(|&x| x == 1.0));
    }
}

fn random_net(seed: u64, m: usize, n: usize, fill: f64) -> Network<f64> {
    let mut r = rng(seed);
    loop {
        if let Ok(net) = Network::from_array(to_array(&random_matrix(&mut r, m, n, fill, 1))) {
            return net;
        }
    }
}

/// A sparsely stored `m x n` network with about `links` links at random
/// cells (repeats merge), every row and column label present.
fn sparse_net(seed: u64, m: usize, n: usize, links: usize) -> Network<f64> {
    let mut r = rng(seed);
    let entries: Vec<(u32, u32, f64)> = (0..links)
        .map(|_| {
            (
                r.random_range(0..m as u32),
                r.random_range(0..n as u32),
                1.0,
            )
        })
        .collect();
    let rows = (0..m).map(|i| format!("r{i}")).collect();
    let cols = (0..n).map(|j| format!("c{j}")).collect();
    Network::from_triplets(rows, cols, entries).unwrap()
}

// ---------------------------------------------------------------------------
// What each model keeps (METHODS.md §6), on list draws.

#[test]
fn list_draws_keep_what_each_model_keeps() {
    for t in 0..30u64 {
        let net = random_net(t, 7 + (t as usize % 5), 9 + (t as usize % 7), 0.3);
        let (rd, cd) = (net.row_degrees().to_vec(), net.col_degrees().to_vec());
        for model in BINARY {
            let s = NullSampler::new(&net, model, &storage(true)).unwrap();
            for k in 0..10 {
                let c = lists_of(s.draw(t, k));
                check_well_formed(&c);
                assert_eq!((c.nrows(), c.ncols()), (net.nrows(), net.ncols()));
                let (r, q) = (c.row_degrees().to_vec(), c.col_degrees().to_vec());
                match model {
                    NullModel::Equiprobable => assert_eq!(c.links(), net.links()),
                    NullModel::FixedRows => assert_eq!(r, rd),
                    NullModel::FixedColumns => assert_eq!(q, cd),
                    NullModel::FixedBoth => assert_eq!((r, q), (rd.clone(), cd.clone())),
                    _ => {}
                }
            }
        }
    }
}

/// The list samplers of equiprobable, fixed-rows, fixed-columns and
/// fixed-both draw the same random numbers as the bit-table samplers, so
/// the same (seed, draw) gives the same matrix. Includes trades whose pool
/// exceeds 128 columns (the bit chain's second path).
#[test]
fn list_draws_equal_bit_draws_for_the_same_seed() {
    let nets = [
        random_net(1, 8, 11, 0.3),
        random_net(2, 30, 20, 0.15),
        random_net(3, 6, 400, 0.5),
        random_net(4, 50, 3, 0.5),
    ];
    for net in &nets {
        for model in [
            NullModel::Equiprobable,
            NullModel::FixedRows,
            NullModel::FixedColumns,
            NullModel::FixedBoth,
        ] {
            let l = NullSampler::new(net, model, &storage(true)).unwrap();
            let b = NullSampler::new(net, model, &storage(false)).unwrap();
            assert_eq!(l.burn_in(), b.burn_in());
            for k in 0..20 {
                let c = lists_of(l.draw(9, k));
                assert_eq!(
                    *c.bits().unwrap(),
                    bits_of(b.draw(9, k)),
                    "{model} draw {k}"
                );
            }
        }
    }
}

/// The list chain walks the same matrices as the bit chain, trade by
/// trade, and keeps both margins.
#[test]
fn list_chain_follows_the_bit_chain() {
    let net = random_net(5, 25, 140, 0.4);
    let mut lists = CurveballLists::new(&net).unwrap();
    let mut bits = nidus::null::CurveballChain::new(&net.binary().unwrap());
    let (mut r1, mut r2) = (rng(6), rng(6));
    for _ in 0..300 {
        lists.step(&mut r1);
        bits.step(&mut r2);
        assert_eq!(&*lists.lists().bits().unwrap(), bits.matrix());
    }
    assert_eq!(lists.lists().row_degrees(), net.row_degrees());
    assert_eq!(lists.lists().col_degrees().to_vec(), net.col_degrees());
    assert_ne!(*lists.lists().bits().unwrap(), net.binary().unwrap());
}

// ---------------------------------------------------------------------------
// Kolmogorov-Smirnov, written here from its definition (chi-square:
// tests/common/mod.rs).

/// The two-sample Kolmogorov-Smirnov statistic `D = sup |F1 - F2|`.
fn ks_statistic(a: &[f64], b: &[f64]) -> f64 {
    let (mut a, mut b) = (a.to_vec(), b.to_vec());
    a.sort_by(f64::total_cmp);
    b.sort_by(f64::total_cmp);
    let (mut i, mut j, mut d) = (0usize, 0usize, 0f64);
    while i < a.len() && j < b.len() {
        let x = a[i].min(b[j]);
        while i < a.len() && a[i] <= x {
            i += 1;
        }
        while j < b.len() && b[j] <= x {
            j += 1;
        }
        d = d.max((i as f64 / a.len() as f64 - j as f64 / b.len() as f64).abs());
    }
    d
}

/// The large-sample critical value of the two-sample test at level 0.001,
/// `1.95 sqrt((n1 + n2) / (n1 n2))` (Smirnov 1948, Ann. Math. Stat.
/// 19:279; the coefficient 1.95 as tabled by Massey 1951, JASA 46:68).
fn ks_critical_001(n1: usize, n2: usize) -> f64 {
    1.95 * ((n1 + n2) as f64 / (n1 * n2) as f64).sqrt()
}

// ---------------------------------------------------------------------------
// Uniformity of the list curveball (Strona et al. 2014, Nat. Commun.
// 5:4114: the curveball chain is uniform over all matrices with the
// margins).

/// Every 0/1 matrix with the margins, by brute force over all `2^(m n)`
/// masks (bit `i n + j` is cell `(i, j)`).
fn all_with_margins(rows: &[usize], cols: &[usize]) -> Vec<u64> {
    let (m, n) = (rows.len(), cols.len());
    (0u64..1 << (m * n))
        .filter(|&x| {
            (0..m).all(|i| (0..n).filter(|&j| x >> (i * n + j) & 1 == 1).count() == rows[i])
                && (0..n).all(|j| (0..m).filter(|&i| x >> (i * n + j) & 1 == 1).count() == cols[j])
        })
        .collect()
}

fn mask(c: &Csr<f64>) -> u64 {
    let n = c.ncols();
    (0..c.nrows())
        .flat_map(|i| {
            c.row(i)
                .0
                .iter()
                .map(move |&j| 1u64 << (i * n + j as usize))
        })
        .sum()
}

fn check_uniform(start: &Mat, per_state: usize, seed: u64, states_expected: usize) {
    let net = Network::from_array(to_array(start)).unwrap();
    let states = all_with_margins(net.row_degrees(), net.col_degrees());
    assert_eq!(states.len(), states_expected);
    let s = NullSampler::new(&net, NullModel::FixedBoth, &storage(true)).unwrap();
    let mut counts: HashMap<u64, usize> = states.iter().map(|&x| (x, 0)).collect();
    for k in 0..per_state * states.len() {
        let c = lists_of(s.draw(seed, k as u64));
        *counts
            .get_mut(&mask(&c))
            .expect("a matrix with other margins") += 1;
    }
    let c: Vec<usize> = states.iter().map(|x| counts[x]).collect();
    let p = chi_square(&c, &vec![1.0 / states.len() as f64; states.len()]);
    assert!(p > 0.001, "{} states, counts {c:?}, p = {p}", states.len());
}

/// All margins 1 on 4 x 4: the 4! = 24 permutation matrices equally often.
#[test]
fn list_curveball_uniform_on_permutation_matrices() {
    let id: Mat = (0..4)
        .map(|i| (0..4).map(|j| f64::from(u8::from(i == j))).collect())
        .collect();
    check_uniform(&id, 200, 21, 24);
}

/// Rows 3,2,2,1 and columns 2,2,2,1,1 on 4 x 5: 117 matrices (the same
/// count as tests/null_models.rs, listed there separately), equally often
/// (Pearson chi-square, p > 0.001).
#[test]
fn list_curveball_uniform_on_many_matrices() {
    let start: Mat = vec![
        vec![1.0, 1.0, 1.0, 0.0, 0.0],
        vec![1.0, 1.0, 0.0, 0.0, 0.0],
        vec![0.0, 0.0, 1.0, 1.0, 0.0],
        vec![0.0, 0.0, 0.0, 0.0, 1.0],
    ];
    check_uniform(&start, 60, 24, 117);
}

// ---------------------------------------------------------------------------
// Proportional on lists: cell probabilities p_ij = (d_i/n + d_j/m) / 2
// (Bascompte, Jordano, Melián & Olesen 2003, PNAS 100:9383), independent.

/// Each cell's frequency against `p_ij`: the sum of squared standardized
/// binomial counts is chi-square with one degree per cell (cells with
/// `p` of 0 or 1 must be never or always set); and the number of links per
/// draw against its exact Poisson-binomial distribution (a sum of
/// independent Bernoulli cells, by the convolution recurrence), Pearson
/// chi-square with tails pooled.
#[test]
fn proportional_lists_cell_probabilities_and_independence() {
    // Row 0 full (p >= 1/2 everywhere), a column with one link, ties.
    let w: Mat = vec![
        vec![1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0],
        vec![1.0, 1.0, 0.0, 1.0, 0.0, 0.0, 0.0],
        vec![1.0, 0.0, 0.0, 1.0, 0.0, 1.0, 0.0],
        vec![1.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0],
        vec![1.0, 1.0, 0.0, 0.0, 0.0, 0.0, 0.0],
    ];
    let net = Network::from_array(to_array(&w)).unwrap();
    let (m, n) = (net.nrows(), net.ncols());
    let (rd, cd) = (net.row_degrees().to_vec(), net.col_degrees().to_vec());
    let p = |i: usize, j: usize| (rd[i] as f64 / n as f64 + cd[j] as f64 / m as f64) / 2.0;
    let s = NullSampler::new(&net, NullModel::Proportional, &storage(true)).unwrap();
    let draws = 40_000usize;
    let mut cell = vec![0usize; m * n];
    let mut per_links = vec![0usize; m * n + 1];
    for k in 0..draws {
        let c = lists_of(s.draw(3, k as u64));
        check_well_formed(&c);
        per_links[c.links()] += 1;
        for i in 0..m {
            for &j in c.row(i).0 {
                cell[i * n + j as usize] += 1;
            }
        }
    }
    let (mut stat, mut df) = (0.0, 0usize);
    for i in 0..m {
        for j in 0..n {
            let (pij, x) = (p(i, j), cell[i * n + j] as f64);
            if pij >= 1.0 {
                assert_eq!(cell[i * n + j], draws, "cell ({i}, {j}) has p = 1");
                continue;
            }
            let e = draws as f64 * pij;
            stat += (x - e).powi(2) / (e * (1.0 - pij));
            df += 1;
        }
    }
    let pv = chi2_sf(stat, df);
    assert!(pv > 0.001, "cells: chi-square {stat} on {df}, p = {pv}");
    // Poisson-binomial distribution of the number of links.
    let mut dist = vec![1.0f64];
    for i in 0..m {
        for j in 0..n {
            let q = p(i, j).min(1.0);
            let mut next = vec![0.0; dist.len() + 1];
            for (l, &x) in dist.iter().enumerate() {
                next[l] += x * (1.0 - q);
                next[l + 1] += x * q;
            }
            dist = next;
        }
    }
    // Pool values whose expected count is below 20 into the neighbouring bin.
    let (mut counts, mut probs) = (Vec::new(), Vec::new());
    let (mut c_acc, mut p_acc) = (0usize, 0.0);
    for (l, &pl) in dist.iter().enumerate() {
        c_acc += per_links[l];
        p_acc += pl;
        if p_acc * draws as f64 >= 20.0 {
            counts.push(c_acc);
            probs.push(p_acc);
            (c_acc, p_acc) = (0, 0.0);
        }
    }
    *counts.last_mut().unwrap() += c_acc;
    *probs.last_mut().unwrap() += p_acc;
    assert!(counts.len() > 8);
    let pv = chi_square(&counts, &probs);
    assert!(pv > 0.001, "links per draw: {counts:?}, p = {pv}");
}

/// The list sampler and the bit-table sampler of `proportional` draw other
/// random numbers; their null distributions of NODF (and of the number of
/// links) must be the same: two-sample Kolmogorov-Smirnov at level 0.001.
#[test]
fn proportional_lists_and_bits_give_the_same_null_distribution() {
    let net = random_net(8, 30, 24, 0.2);
    let (l, b) = (
        NullSampler::new(&net, NullModel::Proportional, &storage(true)).unwrap(),
        NullSampler::new(&net, NullModel::Proportional, &storage(false)).unwrap(),
    );
    let r = 1500;
    let nodf_of = |d: NullDraw| nodf(&d, Order::Sorted).unwrap().total;
    let (mut x1, mut x2, mut l1, mut l2) = (vec![], vec![], vec![], vec![]);
    for k in 0..r {
        let (dl, db) = (l.draw(5, k), b.draw(5, k));
        l1.push(dl.links() as f64);
        l2.push(db.links() as f64);
        x1.push(nodf_of(dl));
        x2.push(nodf_of(db));
    }
    let crit = ks_critical_001(r as usize, r as usize);
    let d = ks_statistic(&x1, &x2);
    assert!(d < crit, "NODF: D = {d}, critical {crit}");
    let d = ks_statistic(&l1, &l2);
    assert!(d < crit, "links: D = {d}, critical {crit}");
    // Not the same draws: the test above compares distributions, not copies.
    assert_ne!(x1, x2);
}

/// The statistic against a hand count: samples {1, 2, 3} and {2, 3, 4}
/// differ most at x = 1 (1/3 against 0) and x = 3 (1 against 2/3).
#[test]
fn ks_statistic_by_hand() {
    assert!((ks_statistic(&[1.0, 2.0, 3.0], &[2.0, 3.0, 4.0]) - 1.0 / 3.0).abs() < 1e-12);
    assert_eq!(ks_statistic(&[1.0, 2.0], &[1.0, 2.0]), 0.0);
}

// ---------------------------------------------------------------------------
// Runs on list draws.

/// A seeded run gives the same values with 1 and 2 threads, and for the
/// models sharing the bit samplers' random numbers, the same values as the
/// bit-table run.
#[test]
fn list_runs_are_reproducible_for_any_thread_count() {
    let net = random_net(11, 40, 30, 0.15);
    for model in BINARY {
        let run = |lists: bool, threads: usize| {
            let mut c = NullConfig::new(model, vec![IndexKind::named("nodf").unwrap()], 100, 77);
            c.options = storage(lists);
            c.threads = Some(threads);
            run_null(&net, &c).unwrap().values
        };
        let one = run(true, 1);
        assert_eq!(one, run(true, 2), "{model}");
        if model != NullModel::Proportional {
            assert_eq!(one, run(false, 2), "{model}");
        }
    }
}

// ---------------------------------------------------------------------------
// Large sparse networks: lists are chosen, and every binary model runs.

#[test]
fn storage_is_chosen_by_size_and_fill() {
    assert!(!lists_chosen(1000, 1000, 1000));
    assert!(!lists_chosen(1 << 14, 1 << 14, 1)); // 2^28 cells exactly
    assert!(lists_chosen((1 << 14) + 1, 1 << 14, 1000));
    let cells = ((1usize << 14) + 1) << 14;
    assert!(lists_chosen((1 << 14) + 1, 1 << 14, cells / 32 - 1));
    assert!(!lists_chosen((1 << 14) + 1, 1 << 14, cells / 32 + 1));
    assert!(lists_chosen((1 << 16) + 1, 1 << 15, cells)); // > 2^31 cells
    let small = random_net(1, 10, 10, 0.3);
    let s = NullSampler::new(&small, NullModel::FixedRows, &NullOptions::default()).unwrap();
    assert!(matches!(s.draw(1, 0), NullDraw::Binary(_)));
}

/// A 100,000 x 100,000 network (10^10 cells, every bit table refused) with
/// 2 x 10^5 links: every binary model draws lists keeping what it keeps.
#[test]
fn huge_sparse_network_runs_every_binary_model() {
    let net = sparse_net(12, 100_000, 100_000, 200_000);
    assert!(nidus::null::Equiprobable::new(&net).is_err());
    let (rd, cd) = (net.row_degrees().to_vec(), net.col_degrees().to_vec());
    for model in BINARY {
        let s = NullSampler::new(&net, model, &NullOptions::default()).unwrap();
        let c = lists_of(s.draw(1, 0));
        check_well_formed(&c);
        match model {
            NullModel::Equiprobable => assert_eq!(c.links(), net.links()),
            NullModel::FixedRows => assert_eq!(c.row_degrees().to_vec(), rd),
            NullModel::FixedColumns => assert_eq!(c.col_degrees().to_vec(), cd),
            NullModel::FixedBoth => {
                assert_eq!(c.row_degrees().to_vec(), rd);
                assert_eq!(c.col_degrees().to_vec(), cd);
            }
            _ => {
                // proportional: the expected number of links is L.
                let l = net.links() as f64;
                assert!(
                    (c.links() as f64 - l).abs() < 6.0 * l.sqrt(),
                    "{}",
                    c.links()
                );
            }
        }
        // NODF of the draw on the sparse kernel: a finite value.
        let v = nodf(&c, Order::Sorted).unwrap().total;
        assert!(v.is_finite() && v >= 0.0);
    }
}

/// `sample` writes every network as a full table: a network whose table
/// would pass the dense limit is refused with a message, exit status 2,
/// before anything is drawn or written.
#[test]
fn sample_refuses_networks_too_large_for_a_table() {
    let file = scratch("big.csv");
    let mut text = String::from("row,col,weight\n");
    for i in 0..30_000 {
        text.push_str(&format!("r{i},c{},1\n", (i * 7) % 30_000));
    }
    std::fs::write(&file, text).unwrap();
    let out = scratch("draws");
    let o = nidus(&[
        "sample",
        file.to_str().unwrap(),
        "--layout",
        "edges",
        "--model",
        "fixed-both",
        "--draws",
        "2",
        "--seed",
        "1",
        "--out",
        out.to_str().unwrap(),
    ]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("too large") && err.contains("30000 x 30000"),
        "{err}"
    );
    assert!(!out.exists());
}

/// A whole run on a network above the bit-table limit: the observed side
/// is read as lists too (no bit table), its NODF equals `measure`'s on the
/// network, and the fixed-rows draws differ from it.
#[test]
fn huge_sparse_network_null_run() {
    let net = sparse_net(13, 100_000, 60_000, 150_000);
    let mut c = NullConfig::new(
        NullModel::FixedRows,
        vec![IndexKind::named("nodf").unwrap()],
        4,
        3,
    );
    c.threads = Some(2);
    let run = run_null(&net, &c).unwrap();
    assert_eq!(run.observed[0], nodf(&net, Order::Sorted).unwrap().total);
    assert_eq!(run.values.len(), 4);
    assert!(run.values.iter().all(|v| v[0].is_finite()));
}

/// The hidden `--row-lists` switch of `nidus null` forces list draws on a
/// small file: fixed-both gives the same report as the bit-table run, and
/// proportional (other random numbers on lists) another one, which shows
/// that the switch took effect.
#[test]
fn cli_row_lists_switch_gives_the_same_fixed_both_report() {
    let w = random_matrix(&mut rng(31), 12, 15, 0.3, 1);
    let file = scratch("small.csv");
    write_matrix_file(&file, &w);
    let run = |model: &str, extra: &[&str]| {
        let mut args = vec![
            "null",
            file.to_str().unwrap(),
            "--model",
            model,
            "--draws",
            "50",
            "--seed",
            "4",
        ];
        args.extend_from_slice(extra);
        let o = nidus(&args);
        assert_eq!(
            o.status.code(),
            Some(0),
            "{}",
            String::from_utf8_lossy(&o.stderr)
        );
        String::from_utf8(o.stdout).unwrap()
    };
    assert_eq!(run("fixed-both", &["--row-lists"]), run("fixed-both", &[]));
    assert_ne!(
        run("proportional", &["--row-lists"]),
        run("proportional", &[])
    );
}
