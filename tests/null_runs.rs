//! Reproducibility of null-model runs (METHODS.md §7): thread-count and
//! shard invariance byte for byte, in the library and through the binary,
//! the saved-draws round trip, merge checks, the sequential stop, and
//! `nidus sample`.

mod common;

use std::path::Path;

use common::*;
use nidus::index::IndexKind;
use nidus::null::{merge_runs, parse_draws, run_null, NullConfig, NullModel, SavedRun, Shard};
use nidus::Network;

fn test_network(seed: u64, m: usize, n: usize) -> (Mat, Network<f64>) {
    let mut r = rng(seed);
    let w = random_matrix(&mut r, m, n, 0.3, 6);
    let net = Network::from_array(to_array(&w)).unwrap();
    (w, net)
}

fn bits(v: &[Vec<f64>]) -> Vec<Vec<u64>> {
    v.iter()
        .map(|r| r.iter().map(|x| x.to_bits()).collect())
        .collect()
}

/// Draw values are identical bit for bit with 1 and 3 threads, and the
/// shards 1/3..3/3 merged are the unsplit run, for every model.
#[test]
fn threads_and_shards_give_the_same_draws() {
    let (_, net) = test_network(4, 14, 11);
    for &model in NullModel::ALL {
        let indices = if model.is_weighted() {
            vec![
                IndexKind::named("nodf").unwrap(),
                IndexKind::named("wnodf").unwrap(),
            ]
        } else {
            vec![
                IndexKind::named("nodf").unwrap(),
                IndexKind::named("nodf-rows").unwrap(),
            ]
        };
        let mut c = NullConfig::new(model, indices, 150, 77);
        c.threads = Some(1);
        let one = run_null(&net, &c).unwrap();
        c.threads = Some(3);
        let three = run_null(&net, &c).unwrap();
        assert_eq!(bits(&one.values), bits(&three.values), "{model}");
        assert_eq!(one.summaries().unwrap(), three.summaries().unwrap());
        let mut parts = Vec::new();
        for i in 1..=3 {
            c.shard = Some(Shard::new(i, 3).unwrap());
            c.threads = Some(2);
            let part = run_null(&net, &c).unwrap();
            assert!(part.summaries().is_err(), "a shard alone is no result");
            // Through the saved-draws text and back.
            let mut text = Vec::new();
            part.write_draws("net.csv", &mut text).unwrap();
            parts
                .extend(parse_draws(&String::from_utf8(text).unwrap(), Path::new("part")).unwrap());
        }
        parts.reverse(); // order of the parts does not matter
        let merged = merge_runs(parts).unwrap();
        assert_eq!(merged.len(), 1);
        assert_eq!(merged[0].run.draw_ids, one.draw_ids);
        assert_eq!(bits(&merged[0].run.values), bits(&one.values), "{model}");
        assert_eq!(merged[0].run.summaries().unwrap(), one.summaries().unwrap());
    }
}

/// The sequential stop (Besag & Clifford 1991) ends at the same draw for
/// any thread count, and its p-value is H / t with t the draws taken.
#[test]
fn sequential_stop_is_deterministic() {
    let (_, net) = test_network(5, 12, 12);
    let mut c = NullConfig::new(
        NullModel::FixedRows,
        vec![IndexKind::named("nodf").unwrap()],
        2000,
        9,
    );
    c.stop_after = Some(10);
    c.threads = Some(1);
    let a = run_null(&net, &c).unwrap();
    c.threads = Some(2);
    let b = run_null(&net, &c).unwrap();
    assert_eq!(bits(&a.values), bits(&b.values));
    let s = &a.summaries().unwrap()[0];
    assert!(
        s.stopped_early,
        "this random network is not unusual: the stop must come early"
    );
    // Count the extreme draws among the first `draws` directly.
    let v = a.values_of(0);
    let hits = v[..s.draws].iter().filter(|&&x| x >= s.observed).count();
    assert_eq!(hits, 10);
    assert!(v[s.draws - 1] >= s.observed);
    assert_eq!(s.p_greater, 10.0 / s.draws as f64);
    assert!(a.draw_ids.len() < 2000);
    // A saved stop run merges alone; cut before its stop, it is refused.
    let mut text = Vec::new();
    a.write_draws("n.csv", &mut text).unwrap();
    let parts = parse_draws(std::str::from_utf8(&text).unwrap(), Path::new("p")).unwrap();
    let merged = merge_runs(parts.clone()).unwrap();
    assert_eq!(merged[0].run.summaries().unwrap(), a.summaries().unwrap());
    let mut cut = parts;
    cut[0].run.draw_ids.truncate(s.draws - 1);
    cut[0].run.values.truncate(s.draws - 1);
    assert!(merge_runs(cut).is_err());
    c.shard = Some(Shard::new(1, 2).unwrap());
    assert!(run_null(&net, &c).is_err(), "a stop cannot be sharded");
}

fn shard_files(net: &Network<f64>, k: usize) -> Vec<SavedRun> {
    let mut c = NullConfig::new(
        NullModel::Equiprobable,
        vec![IndexKind::named("nodf").unwrap()],
        40,
        3,
    );
    let mut out = Vec::new();
    for i in 1..=k {
        c.shard = Some(Shard::new(i, k).unwrap());
        let run = run_null(net, &c).unwrap();
        out.push(SavedRun {
            file: "x.csv".into(),
            run,
        });
    }
    out
}

/// Merge refuses parts that do not belong together or do not cover every
/// draw exactly once.
#[test]
fn merge_checks_the_parts() {
    let (_, net) = test_network(6, 9, 9);
    let mut parts = shard_files(&net, 3);
    parts.remove(1);
    let e = merge_runs(parts).unwrap_err().to_string();
    assert!(e.contains("2/3") && e.contains("missing"), "{e}");
    let mut parts = shard_files(&net, 3);
    parts.push(parts[0].clone());
    let e = merge_runs(parts).unwrap_err().to_string();
    assert!(e.contains("1/3") && e.contains("2 times"), "{e}");
    let mut parts = shard_files(&net, 2);
    parts[1].run.seed = 4;
    assert!(merge_runs(parts).is_err());
    let mut parts = shard_files(&net, 2);
    parts[1].run.draw_ids.pop();
    parts[1].run.values.pop();
    let e = merge_runs(parts).unwrap_err().to_string();
    assert!(e.contains("draw"), "{e}");
}

/// Through the binary: `--threads 1` and `--threads 2` print the same bytes,
/// and `nidus merge` of three shards prints exactly the unsplit output, in
/// every format.
#[test]
fn binary_is_byte_identical_across_threads_and_shards() {
    let (w1, _) = test_network(7, 10, 13);
    let (w2, _) = test_network(8, 15, 9);
    let (f1, f2) = (scratch("one.csv"), scratch("two.csv"));
    write_matrix_file(&f1, &w1);
    write_matrix_file(&f2, &w2);
    let (f1, f2) = (f1.to_str().unwrap(), f2.to_str().unwrap());
    for format in ["text", "json", "csv"] {
        let base = [
            "null",
            f1,
            f2,
            "--model",
            "fixed-both,shuffle-cells",
            "--index",
            "nodf,nodf-cols",
            "--draws",
            "60",
            "--seed",
            "12",
            "--format",
            format,
        ];
        let run = |extra: &[&str]| {
            let mut a: Vec<&str> = base.to_vec();
            a.extend_from_slice(extra);
            let o = nidus(&a);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            o.stdout
        };
        let t1 = run(&["--threads", "1"]);
        let t2 = run(&["--threads", "2"]);
        assert_eq!(t1, t2, "{format}");
        assert!(!t1.is_empty());
        let mut paths = Vec::new();
        for i in 1..=3 {
            let p = scratch(&format!("draws-{format}-{i}.tsv"));
            let shard = format!("{i}/3");
            let out = run(&["--shard", &shard, "--save-draws", p.to_str().unwrap()]);
            assert!(out.is_empty(), "a shard prints nothing");
            paths.push(p.to_str().unwrap().to_string());
        }
        let mut args = vec!["merge", "--format", format];
        args.extend(paths.iter().map(String::as_str));
        let merged = nidus(&args);
        assert!(
            merged.status.success(),
            "{}",
            String::from_utf8_lossy(&merged.stderr)
        );
        assert_eq!(merged.stdout, t1, "{format}");
    }
}

/// JSON lines carry the keys of the issue and p-values in (0, 1].
#[test]
fn json_keys_and_bad_input() {
    let (w, _) = test_network(9, 8, 8);
    let f = scratch("keys.csv");
    write_matrix_file(&f, &w);
    let f = f.to_str().unwrap();
    let o = nidus(&[
        "null",
        f,
        "--model",
        "equiprobable",
        "--index",
        "nodf",
        "--draws",
        "30",
        "--seed",
        "1",
        "--format",
        "json",
    ]);
    assert!(o.status.success());
    let line: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for key in [
        "file",
        "index",
        "model",
        "draws",
        "seed",
        "observed",
        "mean",
        "sd",
        "z",
        "p_greater",
        "p_less",
        "q025",
        "q50",
        "q975",
        "more_nested",
        "stopped_early",
    ] {
        assert!(line.get(key).is_some(), "missing {key}");
    }
    for key in ["p_greater", "p_less"] {
        let p = line[key].as_f64().unwrap();
        assert!(p > 0.0 && p <= 1.0);
    }
    // Bad options and bad input exit with status 2 and a message.
    for args in [
        vec!["null", f, "--model", "nope", "--seed", "1"],
        vec![
            "null",
            f,
            "--model",
            "fixed-both",
            "--index",
            "wnodf",
            "--seed",
            "1",
        ],
        vec![
            "null",
            f,
            "--model",
            "fixed-both",
            "--seed",
            "1",
            "--shard",
            "4/3",
            "--save-draws",
            "x",
        ],
        vec![
            "null",
            f,
            "--model",
            "fixed-both",
            "--seed",
            "1",
            "--shard",
            "1/3",
        ],
        vec!["merge", "/nonexistent/draws.tsv"],
    ] {
        let o = nidus(&args);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        assert!(!o.stderr.is_empty());
    }
    let frac = scratch("frac.csv");
    std::fs::write(&frac, "sp,a,b\nx,1,2.5\ny,3,0\n").unwrap();
    let o = nidus(&[
        "null",
        frac.to_str().unwrap(),
        "--model",
        "fixed-totals",
        "--seed",
        "1",
    ]);
    assert_eq!(o.status.code(), Some(2));
    let msg = String::from_utf8_lossy(&o.stderr);
    assert!(msg.contains("'x'") && msg.contains("'b'"), "{msg}");
}

/// `nidus sample` writes N networks with the input's labels, each keeping
/// the model's constraints (fixed-both: every row and column degree), and
/// network k is draw k of the same seed.
#[test]
fn sample_writes_null_networks() {
    let (w, _) = test_network(10, 7, 9);
    let f = scratch("s.csv");
    write_matrix_file(&f, &w);
    let dir = scratch("samples");
    let o = nidus(&[
        "sample",
        f.to_str().unwrap(),
        "--model",
        "fixed-both",
        "--count",
        "12",
        "--seed",
        "5",
        "--out",
        dir.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let deg = |w: &Mat| -> (Vec<usize>, Vec<usize>) {
        (
            w.iter()
                .map(|r| r.iter().filter(|&&x| x != 0.0).count())
                .collect(),
            (0..w[0].len())
                .map(|j| w.iter().filter(|r| r[j] != 0.0).count())
                .collect(),
        )
    };
    let input = std::fs::read_to_string(&f).unwrap();
    let header = input
        .lines()
        .next()
        .unwrap()
        .split(',')
        .skip(1)
        .collect::<Vec<_>>();
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "csv"))
        .collect();
    files.sort();
    assert_eq!(files.len(), 12);
    for p in &files {
        let text = std::fs::read_to_string(p).unwrap();
        let mut lines = text.lines();
        let cols: Vec<&str> = lines.next().unwrap().split(',').skip(1).collect();
        assert_eq!(cols, header);
        let rows: Mat = lines
            .map(|l| l.split(',').skip(1).map(|x| x.parse().unwrap()).collect())
            .collect();
        assert_eq!(
            deg(&rows),
            deg(&w
                .iter()
                .map(|r| r.iter().map(|&x| f64::from(u8::from(x != 0.0))).collect())
                .collect())
        );
    }
}

/// `--stop-after` through the binary: reported as a sequential stop, with
/// p = H / t (Besag & Clifford 1991), the same bytes for 1 and 2 threads.
#[test]
fn binary_sequential_stop() {
    let (w, _) = test_network(11, 12, 12);
    let f = scratch("stop.csv");
    write_matrix_file(&f, &w);
    let f = f.to_str().unwrap();
    let run = |t: &str| {
        nidus(&[
            "--threads",
            t,
            "null",
            f,
            "--model",
            "fixed-rows",
            "--draws",
            "5000",
            "--seed",
            "3",
            "--stop-after",
            "5",
            "--format",
            "json",
        ])
    };
    let (a, b) = (run("1"), run("2"));
    assert!(a.status.success(), "{}", String::from_utf8_lossy(&a.stderr));
    assert_eq!(a.stdout, b.stdout);
    let line: serde_json::Value = serde_json::from_slice(&a.stdout).unwrap();
    assert_eq!(line["stopped_early"], serde_json::Value::Bool(true));
    let t = line["draws"].as_f64().unwrap();
    assert!(t < 5000.0);
    assert_eq!(line["p_greater"].as_f64().unwrap(), 5.0 / t);
}

/// The open runner is the same machine as the named one: `run_test` with
/// the built-in statistics and the model's sampler gives `run_null`'s
/// values bit for bit, and the fixed-both sampler is the curveball chain
/// through `BurnIn` with the default burn-in `5 max(m, n)` (METHODS.md §6).
#[test]
fn run_test_is_run_null_for_built_in_names() {
    use nidus::metrics::registry::IndexOptions;
    use nidus::null::{
        draw_rng, run_test, BurnIn, CurveballChain, Distribution, NullDraw, NullOptions,
        NullSampler, RunOptions,
    };
    use nidus::{NetView, Statistic};
    let (_, net) = test_network(9, 12, 15);
    for &model in NullModel::ALL {
        let names: &[&str] = if model.is_weighted() {
            &["nodf", "wnodf", "spectral-weighted", "discrepancy"]
        } else {
            &["nodf-cols", "temperature-sorted", "spectral", "discrepancy"]
        };
        let kinds: Vec<IndexKind> = names.iter().map(|n| n.parse().unwrap()).collect();
        let named = run_null(&net, &NullConfig::new(model, kinds.clone(), 40, 13)).unwrap();
        let stats: Vec<_> = kinds
            .iter()
            .map(|k| k.statistic(IndexOptions::default()))
            .collect();
        let stats: Vec<&dyn Statistic> = stats.iter().map(|s| s as &dyn Statistic).collect();
        let sampler = NullSampler::new(&net, model, &NullOptions::default()).unwrap();
        let pattern = net.binary().unwrap();
        let observed: &dyn NetView = if model.is_weighted() { &net } else { &pattern };
        let open = run_test(observed, &stats, &sampler, &RunOptions::new(40, 13)).unwrap();
        assert_eq!(bits(&open.values), bits(&named.values), "{model}");
        assert_eq!(open.observed, named.observed, "{model}");
        assert_eq!(open.summaries().unwrap(), named.summaries().unwrap());
    }
    let start = CurveballChain::new(&net.binary().unwrap());
    let fixed_both = BurnIn::new(start, 5 * 15);
    let sampler = NullSampler::new(&net, NullModel::FixedBoth, &NullOptions::default()).unwrap();
    for k in 0..5 {
        let b = fixed_both.sample(&mut draw_rng(3, k));
        assert_eq!(sampler.draw(3, k), NullDraw::Binary(b));
    }
}
