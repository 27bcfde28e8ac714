//! The `nidus` binary end to end: JSON output against the slow reference of
//! tests/common (METHODS.md §1-2), several files per call, exit statuses.

mod common;

use std::path::Path;

use common::*;
use rand::Rng;
use serde_json::Value;

fn num(v: &Value) -> Option<f64> {
    v.as_f64()
}

/// The matrix without its all-zero rows and columns (what nidus reads by
/// default: species without links are dropped).
fn without_empty(w: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let keep_cols: Vec<usize> = (0..w[0].len())
        .filter(|&j| w.iter().any(|r| r[j] > 0.0))
        .collect();
    w.iter()
        .filter(|r| r.iter().any(|&x| x > 0.0))
        .map(|r| keep_cols.iter().map(|&j| r[j]).collect())
        .collect()
}

/// `nidus measure --format json` on matrices it has never seen agrees with
/// the reference in both orders to 1e-9 (the acceptance check):
/// with `--keep-empty` on the matrix as written, by default on the matrix
/// without its all-zero rows and columns.
#[test]
fn json_matches_reference_on_random_files() {
    let mut rng = rng(99);
    let mut files = Vec::new();
    let mut mats = Vec::new();
    while files.len() < 25 {
        let (m, n) = (rng.random_range(2..20), rng.random_range(2..20));
        let fill = rng.random_range(0.1..0.9);
        let w = random_matrix(&mut rng, m, n, fill, 6);
        if w.iter().flatten().all(|&x| x == 0.0) {
            continue;
        }
        let p = scratch(&format!("rand{}.csv", files.len()));
        write_matrix_file(&p, &w);
        files.push(p.display().to_string());
        mats.push(w);
    }
    let dropped: Vec<Vec<Vec<f64>>> = mats.iter().map(|w| without_empty(w)).collect();
    assert!(
        dropped.iter().zip(&mats).any(|(d, w)| d != w),
        "some random matrix should have an all-zero row or column"
    );
    for (order, sorted, keep) in [
        ("sorted", true, true),
        ("given", false, true),
        ("sorted", true, false),
        ("given", false, false),
    ] {
        let mats = if keep { &mats } else { &dropped };
        let mut args = vec![
            "measure",
            "--format",
            "json",
            "--order",
            order,
            "--indices",
            "nodf,wnodf",
        ];
        if keep {
            args.push("--keep-empty");
        }
        args.extend(files.iter().map(String::as_str));
        let out = nidus(&args);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let text = String::from_utf8(out.stdout).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), files.len());
        for ((line, w), file) in lines.iter().zip(mats).zip(&files) {
            let v: Value = serde_json::from_str(line).unwrap();
            assert_eq!(v["file"], file.as_str());
            assert_eq!(v["order"], order);
            assert_eq!(v["rows"], w.len());
            assert_eq!(v["cols"], w[0].len());
            let links = w.iter().flatten().filter(|&&x| x > 0.0).count();
            assert_eq!(v["links"], links);
            for (key, weighted) in [("nodf", false), ("wnodf", true)] {
                let r = reference_nodf(w, sorted, weighted);
                if weighted && v["weighted"] == false {
                    assert!(v[key].is_null());
                    continue;
                }
                let got = &v[key];
                assert!(
                    (num(&got["total"]).unwrap() - r.0).abs() < 1e-9,
                    "{file} {key}"
                );
                for (part, want) in [("rows", r.1), ("cols", r.2)] {
                    match want {
                        Some(x) => assert!(
                            (num(&got[part]).unwrap() - x).abs() < 1e-9,
                            "{file} {key} {part}"
                        ),
                        None => assert!(got[part].is_null(), "{file} {key} {part}"),
                    }
                }
            }
        }
    }
}

/// A failing file among good ones: the others are still measured, the
/// failure is reported on stderr with its name, and the exit status is 2.
#[test]
fn one_bad_file_among_good_ones() {
    let good = scratch("good.csv");
    write_matrix_file(&good, &vec![vec![1.0, 1.0], vec![1.0, 0.0]]);
    let missing = scratch("does-not-exist.csv");
    let out = nidus(&[
        "measure",
        "--format",
        "csv",
        good.to_str().unwrap(),
        missing.to_str().unwrap(),
        good.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    let stdout = String::from_utf8(out.stdout).unwrap();
    assert_eq!(stdout.lines().count(), 3, "header and two rows: {stdout}");
    let stderr = String::from_utf8(out.stderr).unwrap();
    assert!(stderr.contains("does-not-exist.csv"), "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
}

/// Bad options exit 2 with a message, never a panic.
#[test]
fn bad_options_exit_2() {
    let good = scratch("opts.csv");
    write_matrix_file(&good, &vec![vec![1.0, 1.0], vec![1.0, 0.0]]);
    let g = good.to_str().unwrap();
    for args in [
        vec!["measure", g, "--indices", "nonsense"],
        vec!["measure", g, "--indices", "nodf,nodf"],
        vec!["measure", g, "--order", "upside-down"],
        vec!["measure", g, "--layout", "pyramid"],
        vec!["measure", g, "--format", "xml"],
        vec!["measure"],
        vec!["measure", g, "--threads", "0"],
    ] {
        let out = nidus(&args);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
        assert!(
            !stderr.contains("panicked") && !stderr.is_empty(),
            "{args:?}: {stderr}"
        );
    }
}

/// `--threads 1` and `--threads 2` print the same bytes.
#[test]
fn thread_count_does_not_change_output() {
    let mut rng = rng(5);
    let p = scratch("threads.csv");
    write_matrix_file(&p, &random_matrix(&mut rng, 40, 60, 0.3, 9));
    let f = p.to_str().unwrap();
    let a = nidus(&["measure", "--format", "json", "--threads", "1", f]);
    let b = nidus(&["measure", "--format", "json", "--threads", "2", f]);
    assert!(a.status.success());
    assert_eq!(a.stdout, b.stdout);
}

/// A weighted index with a binary null model is refused before anything
/// runs (a binary draw has WNODF 0 by definition), with exit status 2.
#[test]
fn weighted_index_needs_weighted_model() {
    let p = scratch("weighted.csv");
    write_matrix_file(&p, &vec![vec![3.0, 1.0], vec![1.0, 0.0]]);
    let out = nidus(&[
        "null",
        p.to_str().unwrap(),
        "--model",
        "fixed-both,shuffle-weights",
        "--index",
        "nodf,wnodf",
        "--draws",
        "9",
        "--seed",
        "1",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("wnodf") && stderr.contains("fixed-both"),
        "{stderr}"
    );
}

/// Every malformed fixture of tests/data/bad (see its README) fails through
/// the binary with exit status 2 and one message naming the file and the
/// line, for `measure` and `null` alike; never a panic.
#[test]
fn malformed_fixtures_exit_2_naming_the_place() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/bad");
    let mut seen = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("csv") {
            continue;
        }
        let name = path.file_name().unwrap().to_str().unwrap().to_string();
        let layout = if name.starts_with("edges_") {
            "edges"
        } else {
            "matrix"
        };
        let p = path.to_str().unwrap();
        for args in [
            vec!["measure", "--layout", layout, p],
            vec![
                "null",
                "--layout",
                layout,
                p,
                "--model",
                "equiprobable",
                "--draws",
                "9",
                "--seed",
                "1",
            ],
        ] {
            let out = nidus(&args);
            let stderr = String::from_utf8_lossy(&out.stderr);
            assert_eq!(out.status.code(), Some(2), "{name}: {stderr}");
            assert!(out.stdout.is_empty() || args[0] == "measure", "{name}");
            assert!(!stderr.contains("panicked"), "{name}: {stderr}");
            assert_eq!(stderr.lines().count(), 1, "{name}: one message: {stderr}");
            assert!(stderr.contains(&name), "{name}: {stderr}");
            if name != "all_zero.csv" {
                assert!(stderr.contains("line "), "{name}: {stderr}");
            }
        }
        seen += 1;
    }
    assert!(seen >= 20, "only {seen} fixtures");
}

/// The JSON path of a scalar joined with `_`, and its value, for every
/// scalar of a record (arrays left out).
fn flatten(prefix: &str, v: &Value, out: &mut Vec<(String, Value)>) {
    match v {
        Value::Object(m) => {
            for (k, x) in m {
                let p = if prefix.is_empty() {
                    k.clone()
                } else {
                    format!("{prefix}_{k}")
                };
                flatten(&p, x, out);
            }
        }
        Value::Array(_) => {}
        _ => out.push((prefix.to_string(), v.clone())),
    }
}

/// JSON and CSV carry the same names and values: every CSV column is a JSON
/// path joined with `_`, in the same order, holding the same number (a
/// part that is `null` in JSON, such as WNODF of a binary network, is an
/// empty cell under each of its columns). The "same names" check.
#[test]
fn csv_columns_are_json_paths() {
    let files = [
        "data-demo/islands_presence.csv",
        "data-demo/meadow_visits.csv",
    ];
    for extra in [
        &[][..],
        &["--no-packing"][..],
        &["--indices", "discrepancy,nodf"][..],
    ] {
        let args = ["measure", files[0], files[1], "--format"];
        let run = |format: &str| {
            let mut a = args.to_vec();
            a.push(format);
            a.extend_from_slice(extra);
            let o = nidus(&a);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            String::from_utf8(o.stdout).unwrap()
        };
        let (json, csv) = (run("json"), run("csv"));
        let mut lines = csv.lines();
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        assert!(header.contains(&"nodf_total"), "{header:?}");
        for (record, row) in json.lines().zip(lines) {
            let v: Value = serde_json::from_str(record).unwrap();
            let mut flat = Vec::new();
            flatten("", &v, &mut flat);
            let cells: Vec<&str> = row.split(',').collect();
            assert_eq!(cells.len(), header.len());
            let mut k = 0;
            for (path, value) in &flat {
                if value.is_null() && !header.contains(&path.as_str()) {
                    // A null object: its columns are all empty.
                    while k < header.len() && header[k].starts_with(&format!("{path}_")) {
                        assert_eq!(cells[k], "", "{path}");
                        k += 1;
                    }
                    continue;
                }
                assert_eq!(header[k], path, "column {k}");
                match value {
                    Value::Number(n) => {
                        // serde_json reads decimals to within an ulp (it
                        // does not round-trip exactly without its
                        // float_roundtrip feature); the CSV text is exact.
                        let (c, j) = (cells[k].parse::<f64>().unwrap(), n.as_f64().unwrap());
                        assert!(
                            (c - j).abs() <= 2.0 * f64::EPSILON * c.abs(),
                            "{path}: {c} vs {j}"
                        )
                    }
                    Value::String(s) => assert_eq!(cells[k], s, "{path}"),
                    Value::Bool(b) => assert_eq!(cells[k], b.to_string(), "{path}"),
                    _ => assert_eq!(cells[k], "", "{path}"),
                }
                k += 1;
            }
            assert_eq!(k, header.len());
        }
    }
}

/// Discrepancy in both orientations, stable and tie-minimised, in JSON and
/// CSV, and every variant as a null-model index. The matrix
/// `[[1,0,1],[0,1,0]]` is worked by hand from METHODS.md §5: its three
/// columns tie at degree 1, so input order misplaces two ones (row 1's in
/// column 3, row 2's in column 2) while the order (1, 3, 2) misplaces one;
/// its rows have degrees 2 and 1, and in either column order one one of
/// row 2 (the transpose's column) lies outside its block.
#[test]
fn discrepancy_keys_in_json_csv_and_null() {
    let p = scratch("disc.csv");
    write_matrix_file(&p, &vec![vec![1.0, 0.0, 1.0], vec![0.0, 1.0, 0.0]]);
    let f = p.display().to_string();
    let out = nidus(&[
        "measure",
        "--format",
        "json",
        "--indices",
        "discrepancy",
        &f,
    ]);
    assert!(out.status.success());
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        v["discrepancy"],
        serde_json::json!({"rows": {"stable": 2, "minimum": 1}, "cols": {"stable": 1, "minimum": 1}})
    );
    let out = nidus(&["measure", "--format", "csv", "--indices", "discrepancy", &f]);
    let text = String::from_utf8(out.stdout).unwrap();
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let row: Vec<&str> = lines.next().unwrap().split(',').collect();
    let at = |k: &str| row[head.iter().position(|h| *h == k).unwrap()];
    assert_eq!(
        [
            at("discrepancy_rows_stable"),
            at("discrepancy_rows_minimum"),
            at("discrepancy_cols_stable"),
            at("discrepancy_cols_minimum")
        ],
        ["2", "1", "1", "1"]
    );
    let out = nidus(&[
        "null",
        "--format",
        "json",
        "--model",
        "equiprobable",
        "--draws",
        "19",
        "--seed",
        "3",
        "--index",
        "discrepancy,discrepancy-rows-minimum,discrepancy-cols-stable,discrepancy-cols-minimum",
        &f,
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let observed: Vec<(String, f64)> = String::from_utf8(out.stdout)
        .unwrap()
        .lines()
        .map(|l| {
            let v: Value = serde_json::from_str(l).unwrap();
            (
                v["index"].as_str().unwrap().to_string(),
                v["observed"].as_f64().unwrap(),
            )
        })
        .collect();
    let want = [
        ("discrepancy", 2.0),
        ("discrepancy-rows-minimum", 1.0),
        ("discrepancy-cols-stable", 1.0),
        ("discrepancy-cols-minimum", 1.0),
    ];
    let want: Vec<(String, f64)> = want.iter().map(|(k, x)| (k.to_string(), *x)).collect();
    assert_eq!(observed, want);
    // The documented alias of the old name.
    let out = nidus(&[
        "null",
        "--model",
        "equiprobable",
        "--draws",
        "9",
        "--seed",
        "1",
        "--index",
        "discrepancy-rows-stable",
        &f,
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}
