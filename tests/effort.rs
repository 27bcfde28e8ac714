//! Sampling effort (METHODS.md §9): subsamples of exactly n visits, the
//! exact rarefaction formula, Chao1 by hand, the full-effort network equal
//! to `measure`, the seeding contract, refusals and the command line.

mod common;

use common::*;
use ndarray::{array, Array2};
use nidus::analyses::effort::{
    chao1, default_depths, effort_rng, expected_links, run_effort, subsample, EffortConfig,
    EffortNull, VisitTable,
};
use nidus::index::IndexKind;
use nidus::measure::{measure, MeasureOptions};
use nidus::metrics::{nodf, spectral_radius, wnodf, Order};
use nidus::null::NullModel;
use nidus::Network;
use rand::Rng;
use serde_json::Value;

/// A random count table with every row and column visited at least once.
fn random_counts(rng: &mut impl Rng, m: usize, n: usize, fill: f64, max: u32) -> Network<f64> {
    loop {
        let w = random_matrix(rng, m, n, fill, max);
        let rows_ok = w.iter().all(|r| r.iter().any(|&x| x > 0.0));
        let cols_ok = (0..n).all(|j| w.iter().any(|r| r[j] > 0.0));
        let counted = w.iter().flatten().any(|&x| x > 1.0);
        if rows_ok && cols_ok && counted {
            return Network::from_array(to_array(&w)).unwrap();
        }
    }
}

/// Every subsample holds exactly n visits, and no cell more than it had
/// (the definition of drawing without replacement).
#[test]
fn subsample_totals_are_exact() {
    let mut rng = rng(1);
    for t in 0..300 {
        let (m, n) = (rng.random_range(1..12), rng.random_range(1..12));
        let net = random_counts(&mut rng, m.max(1), n.max(1), 0.5, 40);
        let table = VisitTable::new(&net, None).unwrap();
        let total = table.total();
        let depth = rng.random_range(0..=total);
        let sub = subsample(&table, depth, &mut effort_rng(t, 0, 0)).unwrap();
        assert_eq!(sub.iter().sum::<u64>(), depth);
        assert!(sub.iter().zip(table.counts()).all(|(x, w)| x <= w));
        // n = N returns the table itself.
        let all = subsample(&table, total, &mut effort_rng(t, 1, 0)).unwrap();
        assert_eq!(all, table.counts());
    }
    // Large counts go through the ratio-of-uniforms path.
    let big = Network::from_array(array![[40_000u32, 9_000, 1], [700, 0, 123_456]]).unwrap();
    let table = VisitTable::new(&big, None).unwrap();
    for k in 0..50 {
        let sub = subsample(&table, 77_777, &mut effort_rng(3, 0, k)).unwrap();
        assert_eq!(sub.iter().sum::<u64>(), 77_777);
    }
}

/// Each cell of a subsample is hypergeometric: mean `w n / N` and variance
/// `n (w/N) (1 - w/N) (N - n) / (N - 1)` (the moments of the hypergeometric
/// distribution, e.g. Johnson, Kemp & Kotz 2005, Univariate Discrete
/// Distributions, ch. 6). Means within 5 standard errors, variances within
/// 15 % over 20,000 subsamples (common practice).
#[test]
fn cells_have_hypergeometric_moments() {
    let net = Network::from_array(array![[30u32, 1, 2], [5, 60, 0], [0, 17, 200]]).unwrap();
    let table = VisitTable::new(&net, None).unwrap();
    let total = table.total() as f64;
    let n = 120u64;
    let reps = 20_000;
    let k = table.counts().len();
    let (mut s1, mut s2) = (vec![0.0; k], vec![0.0; k]);
    for r in 0..reps {
        let sub = subsample(&table, n, &mut effort_rng(11, 0, r)).unwrap();
        for c in 0..k {
            let x = sub[c] as f64;
            s1[c] += x;
            s2[c] += x * x;
        }
    }
    let nf = n as f64;
    for (c, &w) in table.counts().iter().enumerate() {
        let p = w as f64 / total;
        let mean = nf * p;
        let var = nf * p * (1.0 - p) * (total - nf) / (total - 1.0);
        let m = s1[c] / reps as f64;
        let v = s2[c] / reps as f64 - m * m;
        assert!(
            (m - mean).abs() < 5.0 * (var / reps as f64).sqrt() + 1e-12,
            "cell {c}: mean {m} vs {mean}"
        );
        assert!(
            (v - var).abs() < 0.15 * var + 1e-12,
            "cell {c}: variance {v} vs {var}"
        );
    }
}

/// Hurlbert's formula against brute force: on a table of 9 visits, the
/// mean number of occupied cells over all C(9, n) subsets of visits.
#[test]
fn expected_links_equals_enumeration() {
    let counts = [4u64, 1, 2, 1, 1];
    let cell_of: Vec<usize> = counts
        .iter()
        .enumerate()
        .flat_map(|(c, &w)| std::iter::repeat_n(c, w as usize))
        .collect();
    let nv = cell_of.len();
    for n in 1..=nv {
        let (mut sum, mut count) = (0.0, 0.0);
        for mask in 0u32..(1 << nv) {
            if mask.count_ones() as usize != n {
                continue;
            }
            let mut seen = [false; 5];
            for (v, &c) in cell_of.iter().enumerate() {
                if mask & (1 << v) != 0 {
                    seen[c] = true;
                }
            }
            sum += seen.iter().filter(|&&s| s).count() as f64;
            count += 1.0;
        }
        let e = expected_links(&counts, n as u64);
        assert!(
            (e - sum / count).abs() < 1e-12,
            "n = {n}: {e} vs {}",
            sum / count
        );
    }
    // A cell of more than 64 visits takes the log-Gamma route: compare with
    // the product formula written out.
    let counts = [100u64, 3, 250, 1];
    let total: u64 = counts.iter().sum();
    let n = 37u64;
    let direct: f64 = counts
        .iter()
        .map(|&w| {
            let mut ratio = 1.0f64;
            for t in 0..w {
                ratio *= (total - n - t) as f64 / (total - t) as f64;
            }
            1.0 - ratio
        })
        .sum();
    assert!((expected_links(&counts, n) - direct).abs() < 1e-10);
}

/// The simulated mean number of links agrees with Hurlbert's exact value
/// within 4 Monte Carlo standard errors (sd / sqrt(R)) at every depth.
#[test]
fn simulated_links_agree_with_rarefaction_formula() {
    let mut rng = rng(5);
    for t in 0..4 {
        let net = random_counts(&mut rng, 12, 15, 0.4, 9);
        let mut config = EffortConfig::new(100 + t);
        config.draws = 400;
        config.indices = vec![IndexKind::named("nodf").unwrap()];
        let r = run_effort(&net, &config).unwrap();
        for d in &r.depths {
            // Recover the sd from the per-draw values by rerunning the
            // subsamples of this depth (the same keys as the run).
            let table = VisitTable::new(&net, None).unwrap();
            let di = r.depths.iter().position(|x| x.depth == d.depth).unwrap() as u64;
            let links: Vec<f64> = (0..config.draws as u64)
                .map(|k| {
                    let s =
                        subsample(&table, d.depth, &mut effort_rng(config.seed, di, k)).unwrap();
                    s.iter().filter(|&&x| x > 0).count() as f64
                })
                .collect();
            let mean = links.iter().sum::<f64>() / links.len() as f64;
            assert!(
                (mean - d.links.mean.unwrap()).abs() < 1e-9,
                "run and rerun differ"
            );
            let sd = (links.iter().map(|x| (x - mean).powi(2)).sum::<f64>()
                / (links.len() - 1) as f64)
                .sqrt();
            let se = sd / (links.len() as f64).sqrt();
            let e = d.expected_links;
            assert!(
                (mean - e).abs() <= 4.0 * se + 1e-9,
                "depth {}: simulated {mean} vs exact {e} (se {se})",
                d.depth
            );
        }
    }
}

/// Chao1 by hand from the published formula (Chao 1984, Scand. J. Stat.
/// 11:265-270: S_obs + f1^2 / (2 f2)) with the variance of Chao 1987
/// (Biometrics 43:783-791, from memory): var = f2 [r^2/2 + r^3 + r^4/4],
/// r = f1/f2. Table [[5,1,0],[2,1,3],[0,2,1]]: cells 5,1,2,1,3,2,1, so
/// S_obs = 7, f1 = 3, f2 = 2: Chao1 = 7 + 9/4 = 9.25, var = 2 (1.125 +
/// 3.375 + 1.265625) = 11.53125.
#[test]
fn chao1_by_hand() {
    let net = Network::from_array(array![[5u32, 1, 0], [2, 1, 3], [0, 2, 1]]).unwrap();
    let table = VisitTable::new(&net, None).unwrap();
    let c = chao1(table.counts());
    assert_eq!((c.observed, c.singletons, c.doubletons), (7, 3, 2));
    assert!((c.chao1 - 9.25).abs() < 1e-12);
    assert!((c.se - 11.53125f64.sqrt()).abs() < 1e-12);
    assert!((c.completeness - 7.0 / 9.25).abs() < 1e-12);
    assert!(!c.bias_corrected);
    // No doubletons: the bias-corrected form S + f1 (f1 - 1) / 2
    // (METHODS.md §9; S + f1 (f1-1) / (2 (f2+1)) at f2 = 0) with variance
    // f1(f1-1)/2 + f1(2f1-1)^2/4 - f1^4/(4 Chao1) (EstimateS user's
    // guide, from memory): abundances 3,1,1,4: 4 + 1 = 5, var 1 + 4.5 - 0.8.
    let c = chao1(&[3, 1, 1, 4]);
    assert!(c.bias_corrected);
    assert!((c.chao1 - 5.0).abs() < 1e-12);
    assert!((c.se - 4.7f64.sqrt()).abs() < 1e-12);
    // Per side: row totals 6, 6, 3 and column totals 7, 4, 4.
    let r = run_effort(&net, &{
        let mut k = EffortConfig::new(1);
        k.draws = 2;
        k
    })
    .unwrap();
    assert_eq!(r.row_species.observed, 3);
    assert_eq!(r.row_species.chao1, 3.0); // no singletons
    assert_eq!(r.interactions, chao1(&[5, 1, 2, 1, 3, 2, 1]));
    // Good's coverage 1 - f1/N = 1 - 3/15.
    assert!((r.coverage - 0.8).abs() < 1e-12);
}

/// At n = N the subsample is the observed network, so every index equals
/// what `measure` gives for it.
#[test]
fn full_depth_equals_measure() {
    let mut rng = rng(8);
    for t in 0..10 {
        let net = random_counts(&mut rng, 9, 13, 0.45, 12);
        let mut config = EffortConfig::new(t);
        config.draws = 3;
        config.indices = vec![
            IndexKind::named("nodf").unwrap(),
            IndexKind::named("wnodf").unwrap(),
            IndexKind::named("spectral").unwrap(),
            IndexKind::named("spectral-weighted").unwrap(),
            IndexKind::named("discrepancy").unwrap(),
        ];
        let r = run_effort(&net, &config).unwrap();
        let full = r.depths.last().unwrap();
        assert_eq!(full.depth, r.visits);
        let m = measure(&net, &MeasureOptions::default()).unwrap();
        let want = [
            m.nodf.unwrap().total,
            m.wnodf.unwrap().total,
            m.spectral_radius.unwrap().binary,
            m.spectral_radius.unwrap().weighted,
            m.discrepancy.unwrap().rows.stable as f64,
        ];
        for (b, w) in full.indices.iter().zip(want) {
            for q in [b.mean, b.q025, b.q50, b.q975] {
                assert_eq!(q, Some(w));
            }
        }
        assert_eq!(full.links.mean, Some(net.links() as f64));
        assert_eq!(full.rows_observed.q50, Some(9.0));
        assert_eq!(nodf(&net, Order::Sorted).unwrap().total, want[0]);
        assert_eq!(wnodf(&net, Order::Sorted).unwrap().total, want[1]);
        assert_eq!(spectral_radius(&net).unwrap().weighted, want[3]);
        // The given order reads the order of the file, which subsamples keep.
        config.order = Order::Given;
        config.indices = vec![
            IndexKind::named("nodf").unwrap(),
            IndexKind::named("wnodf").unwrap(),
        ];
        let r = run_effort(&net, &config).unwrap();
        let full = r.depths.last().unwrap();
        assert_eq!(
            full.indices[0].q50,
            Some(nodf(&net, Order::Given).unwrap().total)
        );
        assert_eq!(
            full.indices[1].q50,
            Some(wnodf(&net, Order::Given).unwrap().total)
        );
    }
}

/// The same seed gives the same result for 1 and 2 threads, byte for byte,
/// null tests included.
#[test]
fn identical_for_any_thread_count() {
    let net = random_counts(&mut rng(21), 10, 14, 0.4, 20);
    let mut config = EffortConfig::new(77);
    config.draws = 150; // more than one batch of 64
    config.null = Some(EffortNull {
        model: NullModel::Equiprobable,
        draws: 19,
        subsamples: 3,
        alpha: 0.05,
    });
    config.threads = Some(1);
    let a = run_effort(&net, &config).unwrap();
    config.threads = Some(2);
    let b = run_effort(&net, &config).unwrap();
    assert_eq!(
        serde_json::to_string(&a).unwrap(),
        serde_json::to_string(&b).unwrap()
    );
    assert_eq!(a.depths[0].null.unwrap().tests, 3);
    // Another seed gives other subsamples.
    config.seed = 78;
    let c = run_effort(&net, &config).unwrap();
    assert_ne!(a.depths[0].links, c.depths[0].links);
}

/// Depths: round(i N / 10), and the checks on a given list.
#[test]
fn depths_and_refusals() {
    assert_eq!(
        default_depths(95, 10),
        vec![10, 19, 29, 38, 48, 57, 67, 76, 86, 95]
    );
    let counts = Network::from_array(array![[3.0, 1.0], [2.0, 0.0]]).unwrap();
    let mut config = EffortConfig::new(1);
    for bad in [vec![0u64], vec![7], vec![3, 2], vec![2, 2]] {
        config.depths = Some(bad.clone());
        let e = run_effort(&counts, &config).unwrap_err().to_string();
        assert!(e.contains("depth"), "{bad:?}: {e}");
    }
    // Presence-only input is refused with a reason.
    let presence = Network::from_array(array![[1, 1], [1, 0]]).unwrap();
    let e = run_effort(&presence, &EffortConfig::new(1))
        .unwrap_err()
        .to_string();
    assert!(e.contains("presence-only"), "{e}");
    // A fraction is refused, naming the cell, unless a scale makes it whole.
    let rates = Network::from_array(array![[0.5, 0.25], [1.5, 0.0]]).unwrap();
    let e = run_effort(&rates, &EffortConfig::new(1))
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("row 'R1', column 'C1'") && e.contains("--scale"),
        "{e}"
    );
    let mut config = EffortConfig::new(1);
    config.scale = Some(4.0);
    let r = run_effort(&rates, &config).unwrap();
    assert_eq!(r.visits, 9);
    config.scale = Some(3.0);
    assert!(run_effort(&rates, &config).is_err());
    config.scale = Some(0.1 * 3.0 / 0.3 * 20.0); // 20 up to rounding
    assert_eq!(run_effort(&rates, &config).unwrap().visits, 45);
    config.scale = Some(-1.0);
    assert!(run_effort(&rates, &config).is_err());
    config.scale = None;
    config.draws = 1;
    assert!(run_effort(&counts, &config).is_err());
}

/// Species without any visit are left out and counted.
#[test]
fn unvisited_species_are_left_out() {
    let w: Array2<f64> = array![[3.0, 0.0, 2.0], [0.0, 0.0, 0.0], [1.0, 0.0, 4.0]];
    let net = Network::from_array(w.clone()).unwrap();
    let mut config = EffortConfig::new(2);
    config.draws = 5;
    let r = run_effort(&net, &config).unwrap();
    assert_eq!(
        (r.rows, r.cols, r.rows_without_visits, r.cols_without_visits),
        (2, 2, 1, 1)
    );
    let kept = Network::from_array(array![[3.0, 2.0], [1.0, 4.0]]).unwrap();
    let full = &r.depths.last().unwrap().indices[0];
    assert_eq!(full.mean, Some(nodf(&kept, Order::Sorted).unwrap().total));
}

fn write(name: &str, text: &str) -> String {
    let p = scratch(name);
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

/// The command line: JSON keys of the issue, CSV flattened with `_`, text
/// with a reading, refusals with status 2.
#[test]
fn command_line() {
    let f = write(
        "visits.csv",
        "plant,a,b,c,d\np1,12,5,3,1\np2,6,2,1,0\np3,4,1,0,0\np4,2,0,0,1\n",
    );
    let out = nidus(&[
        "effort", &f, "--seed", "3", "--draws", "30", "--format", "json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 10);
    for v in &lines {
        for k in [
            "depth",
            "expected_links",
            "visits",
            "chao1",
            "chao1_se",
            "completeness",
        ] {
            assert!(v[k].is_number(), "{k} in {v}");
        }
        for q in [
            "links",
            "rows_observed",
            "cols_observed",
            "nodf",
            "wnodf",
            "spectral",
            "spectral_weighted",
        ] {
            for s in ["mean", "q025", "q50", "q975"] {
                assert!(v[q].get(s).is_some(), "{q}.{s} in {v}");
            }
        }
        assert_eq!(v["visits"], 38);
    }
    assert_eq!(lines[9]["depth"], 38);
    assert_eq!(lines[9]["links"]["mean"], 11.0);
    // The same run as CSV: one header and ten rows, columns flattened.
    let out = nidus(&[
        "effort", &f, "--seed", "3", "--draws", "30", "--format", "csv", "--depths", "5,20,38",
    ]);
    let text = String::from_utf8(out.stdout).unwrap();
    let rows: Vec<&str> = text.lines().collect();
    assert_eq!(rows.len(), 4);
    assert!(
        rows[0].contains("nodf_q975")
            && rows[0].contains("links_mean")
            && rows[0].contains(",chao1,")
    );
    // Text: the table and the reading.
    let out = nidus(&[
        "effort",
        &f,
        "--seed",
        "3",
        "--draws",
        "30",
        "--null-model",
        "equiprobable",
        "--null-draws",
        "19",
        "--null-subsamples",
        "2",
    ]);
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains("Reading:") && text.contains("Chao1") && text.contains("z vs equiprobable"),
        "{text}"
    );
    // A bad depth and a fractional count: status 2, the place named.
    let out = nidus(&["effort", &f, "--seed", "1", "--depths", "0,5"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("depth 0"));
    let g = write("rates.csv", "plant,a,b\np1,0.5,2\np2,1,0\n");
    let out = nidus(&["effort", &g, "--seed", "1"]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("row 'p1', column 'a'") && err.contains("--scale"),
        "{err}"
    );
    let out = nidus(&[
        "effort", &g, "--seed", "1", "--scale", "2", "--format", "json",
    ]);
    assert!(out.status.success());
    let first: Value = serde_json::from_str(
        String::from_utf8(out.stdout)
            .unwrap()
            .lines()
            .next()
            .unwrap(),
    )
    .unwrap();
    assert_eq!(
        (first["visits"].as_u64(), first["scale"].as_f64()),
        (Some(7), Some(2.0))
    );
    // Presence-only: exit status 2 and a message naming the file.
    let p = write("presence.csv", "plant,a,b\np1,1,1\np2,1,0\n");
    let out = nidus(&["effort", &p, "--seed", "1"]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("presence.csv") && err.contains("presence-only"),
        "{err}"
    );
}
