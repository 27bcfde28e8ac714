//! The binary's input side (issue 9): the reader's decisions printed on
//! stderr one line each, `-` for standard input, the `--layout edges` hint,
//! `--labels`, `--keep-empty` and `--transpose`. The fixtures are the
//! hand-made files of `tests/data/shapes/`.

use std::path::Path;
use std::process::Output;

use serde_json::Value;

mod common;

fn shape(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/shapes")
        .join(name)
        .display()
        .to_string()
}

fn nidus(args: &[&str], stdin: &[u8]) -> Output {
    common::nidus_with_stdin(args, stdin)
}

fn json(out: &Output) -> Value {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

#[test]
fn header_decision_is_printed_once_on_stderr() {
    let f = shape("log_two_columns_header.csv");
    let out = nidus(
        &["measure", "--layout", "edges", "--format", "json", &f],
        b"",
    );
    let v = json(&out);
    assert_eq!((v["rows"].as_u64(), v["cols"].as_u64()), (Some(4), Some(4)));
    let err = stderr(&out);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with(&format!(
            "nidus: {f}: line 1 read as a header (plant, visitor)"
        )),
        "{err}"
    );
    assert!(err.contains("--edge-header no"), "{err}");
}

#[test]
fn dropped_species_and_unlabelled_tables_are_printed() {
    let out = nidus(
        &["measure", "--format", "json", "-"],
        b"1,1,1,0\n1,1,0,0\n1,0,0,0\n0,0,0,0\n",
    );
    let v = json(&out);
    assert_eq!(v["file"], "<stdin>");
    assert_eq!((v["rows"].as_u64(), v["cols"].as_u64()), (Some(3), Some(3)));
    // A perfectly nested staircase once the empty row and column are gone:
    // NODF 100 (Almeida-Neto et al. 2008).
    assert_eq!(v["nodf"]["total"].as_f64(), Some(100.0));
    let err = stderr(&out);
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 3, "{err}");
    assert!(
        lines[0].starts_with("nidus: <stdin>: no labels found"),
        "{err}"
    );
    assert!(
        lines[1].starts_with("nidus: <stdin>: dropped 1 row species with no link: r4"),
        "{err}"
    );
    assert!(
        lines[2].contains("column species with no link: c4"),
        "{err}"
    );
    assert!(lines[2].ends_with("(--keep-empty keeps them)"), "{err}");
    // Kept on request: 4 x 4, nothing said about dropping.
    let out = nidus(
        &["measure", "--format", "json", "--keep-empty", "-"],
        b"1,1,1,0\n1,1,0,0\n1,0,0,0\n0,0,0,0\n",
    );
    assert_eq!(json(&out)["rows"].as_u64(), Some(4));
    assert_eq!(stderr(&out).lines().count(), 1);
    // --labels both reads the first line and column as labels.
    let out = nidus(
        &["measure", "--format", "json", "--labels", "both", "-"],
        b"0,7,8\n1,1,0\n2,1,1\n",
    );
    assert_eq!(json(&out)["cols"].as_u64(), Some(2));
    assert!(stderr(&out).is_empty(), "{}", stderr(&out));
}

/// Forgetting `--layout edges` (issue 9, item 5): the matrix error gains
/// the hint, on the same single line, exit status 2.
#[test]
fn forgetting_layout_edges_gives_a_hint() {
    let f = shape("log_three_columns.csv");
    let out = nidus(&["measure", &f], b"");
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains("\"bumblebee\" is not a number"), "{err}");
    assert!(err.contains("use --layout edges"), "{err}");
    // A real matrix error gets no such hint.
    let out = nidus(&["measure", "-"], b"plant,bee\nclover,lots\nthyme,1\n");
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.starts_with("nidus: <stdin>: line 2, field 2"), "{err}");
    assert!(!err.contains("--layout"), "{err}");
}

#[test]
fn transpose_swaps_rows_and_columns() {
    let f = shape("matrix_labelled.csv");
    let plain = json(&nidus(&["measure", "--format", "json", &f], b""));
    let t = json(&nidus(
        &["measure", "--format", "json", "--transpose", &f],
        b"",
    ));
    assert_eq!(plain["rows"], t["cols"]);
    assert_eq!(plain["links"], t["links"]);
    // NODF's row and column parts trade places (its definition is symmetric
    // in the two sides, Almeida-Neto et al. 2008).
    assert_eq!(plain["nodf"]["rows"], t["nodf"]["cols"]);
    assert_eq!(plain["nodf"]["cols"], t["nodf"]["rows"]);
    // The temperature orders name the file's columns first.
    assert_eq!(
        t["temperature"]["row_order"].as_array().map(Vec::len),
        Some(4)
    );
}

#[test]
fn stdin_works_for_null_and_cr_only_files_are_noted() {
    let text = std::fs::read(shape("matrix_cr.csv")).unwrap();
    let out = nidus(
        &[
            "null",
            "-",
            "--model",
            "fixed-rows",
            "--draws",
            "19",
            "--seed",
            "3",
            "--format",
            "json",
        ],
        &text,
    );
    let v = json(&out);
    assert_eq!(v["file"], "<stdin>");
    let err = stderr(&out);
    assert!(
        err.starts_with("nidus: <stdin>: lines end with a carriage return alone"),
        "{err}"
    );
}
