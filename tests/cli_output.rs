//! The binary's output side (issue 9): the null report's headline p and
//! direction in words, the settings every result records, indices that
//! cannot be computed, R-friendly CSV booleans, significant digits in text,
//! and the old option spellings kept as aliases.

use std::path::PathBuf;
use std::process::Output;

use serde_json::Value;

mod common;

fn nidus(args: &[&str], stdin: &[u8]) -> Output {
    common::nidus_with_stdin(args, stdin)
}

fn ok(out: &Output) -> String {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout.clone()).unwrap()
}

fn lines(out: &Output) -> Vec<Value> {
    ok(out)
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect()
}

fn demo(name: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("data-demo")
        .join(name)
        .display()
        .to_string()
}

/// A binary 6 x 6 table with some freedom under fixed margins.
const LOOSE: &[u8] = b"p,a,b,c,d,e,f\nr1,1,1,1,0,1,0\nr2,1,0,1,1,0,0\nr3,0,1,0,1,0,1\nr4,1,0,0,0,1,0\nr5,0,1,1,0,0,0\nr6,1,0,0,1,0,1\n";

/// `p` is the one-sided p-value in the more-nested direction:
/// `p_greater` for NODF (higher is more nested), `p_less` for temperature
/// (lower is more nested); both one-sided values stay. The p-value is
/// (1 + #{null at least as extreme}) / (R + 1) (Davison & Hinkley 1997,
/// Bootstrap Methods, eq. 4.11; North, Curtis & Sham 2002, Am. J. Hum.
/// Genet. 71:439).
#[test]
fn null_headline_p_follows_the_direction_of_each_index() {
    let out = nidus(
        &[
            "null",
            "-",
            "--model",
            "equiprobable",
            "--index",
            "nodf,temperature-sorted",
            "--draws",
            "49",
            "--seed",
            "3",
            "--format",
            "json",
        ],
        LOOSE,
    );
    let got = lines(&out);
    assert_eq!(got.len(), 2);
    assert_eq!(got[0]["index"], "nodf");
    assert_eq!(got[0]["p"], got[0]["p_greater"]);
    assert_eq!(got[1]["index"], "temperature-sorted");
    assert_eq!(got[1]["p"], got[1]["p_less"]);
    assert!(got[0]["p_greater"] != got[0]["p_less"]);
    for g in &got {
        assert_eq!(g["p_reason"], Value::Null);
        // The settings of the run.
        assert_eq!(g["order"], "sorted");
        assert_eq!(g["burn_in"], Value::Null);
        assert_eq!(g["draws_requested"], 49);
        assert_eq!(g["draws_done"], 49);
        assert_eq!(g["stop_after"], Value::Null);
        assert_eq!(g["nidus_version"], env!("CARGO_PKG_VERSION"));
    }
    // The text report says which way each index runs and what p means.
    let text = ok(&nidus(
        &[
            "null",
            "-",
            "--model",
            "equiprobable",
            "--index",
            "nodf,temperature-sorted",
            "--draws",
            "49",
            "--seed",
            "3",
        ],
        LOOSE,
    ));
    assert!(text.contains("higher nodf is more nested"), "{text}");
    assert!(
        text.contains("lower temperature-sorted is more nested"),
        "{text}"
    );
    assert!(
        text.contains("at least as nested as the observed one"),
        "{text}"
    );
    assert!(text.contains("order sorted"), "{text}");
    let p = got[1]["p"].as_f64().unwrap();
    let row = text
        .lines()
        .find(|l| l.trim_start().starts_with("temperature-sorted"))
        .unwrap();
    let cells: Vec<&str> = row.split_whitespace().collect();
    assert_eq!(cells[5].parse::<f64>().unwrap(), p, "{row}");
}

/// Fixed-both settings: burn-in and the sequential stop are recorded.
#[test]
fn null_records_burn_in_and_stop_after() {
    let out = nidus(
        &[
            "null",
            "-",
            "--model",
            "fixed-both",
            "--burn-in",
            "50",
            "--stop-after",
            "3",
            "--draws",
            "99",
            "--seed",
            "1",
            "--format",
            "csv",
        ],
        LOOSE,
    );
    let text = ok(&out);
    let mut rows = text.lines();
    let head: Vec<&str> = rows.next().unwrap().split(',').collect();
    let row: Vec<&str> = rows.next().unwrap().split(',').collect();
    let cell = |k: &str| row[head.iter().position(|h| *h == k).unwrap()];
    assert_eq!(cell("burn_in"), "50");
    assert_eq!(cell("stop_after"), "3");
    assert_eq!(cell("draws_requested"), "99");
    // The sequential stop of Besag & Clifford (1991) keeps its booleans R-readable.
    assert!(["TRUE", "FALSE"].contains(&cell("stopped_early")));
    assert_eq!(cell("p"), cell("p_greater"));
}

/// Zero-variance nulls: a table that is the only one with its margins
/// (a staircase, Ryser 1957: no 2 x 2 swap applies), and shuffle-weights on
/// a binary network, give no p but a reason.
#[test]
fn null_without_variance_explains_itself() {
    let stair = b"p,a,b,c\nx,1,1,1\ny,1,1,0\nz,1,0,0\n";
    let got = lines(&nidus(
        &[
            "null",
            "-",
            "--model",
            "fixed-both,shuffle-weights",
            "--draws",
            "19",
            "--seed",
            "1",
            "--format",
            "json",
        ],
        stair,
    ));
    assert_eq!(got.len(), 2);
    for g in &got {
        assert_eq!(g["sd"], 0.0);
        assert_eq!(g["p"], Value::Null);
        assert_eq!(g["p_greater"], 1.0);
        assert!(g["p_reason"].as_str().unwrap().starts_with("no test"));
    }
    assert!(got[0]["p_reason"]
        .as_str()
        .unwrap()
        .contains("only one network"));
    assert!(got[1]["p_reason"]
        .as_str()
        .unwrap()
        .contains("permuting the weights"));
    let text = ok(&nidus(
        &[
            "null",
            "-",
            "--model",
            "fixed-both",
            "--draws",
            "19",
            "--seed",
            "1",
        ],
        stair,
    ));
    assert!(text.contains("no test"), "{text}");
    assert!(
        text.contains("nodf: no test: every null network has the observed value"),
        "{text}"
    );
}

/// With the default index set, an index that cannot be computed is
/// reported and the others stand (exit 0); asked for by name it fails
/// the file (exit 2). NODF of a 1 x 1 network has no pairs (Almeida-Neto
/// et al. 2008 average over pairs).
#[test]
fn an_index_not_computed_does_not_sink_the_others() {
    let one = b"p,a\nx,1\n";
    let out = nidus(&["measure", "-", "--format", "json"], one);
    let got = &lines(&out)[0];
    assert_eq!(got["nodf"], Value::Null);
    assert!(got["not_computed"]["nodf"]
        .as_str()
        .unwrap()
        .contains("no pairs"));
    assert_eq!(got["spectral_radius"]["binary"], 1.0);
    let text = ok(&nidus(&["measure", "-"], one));
    assert!(text.contains("NODF         not computed: "), "{text}");
    let csv = ok(&nidus(&["measure", "-", "--format", "csv"], one));
    assert!(csv.lines().next().unwrap().contains("not_computed_nodf"));
    for flag in ["--index", "--indices"] {
        let out = nidus(&["measure", "-", flag, "nodf,spectral"], one);
        assert_eq!(out.status.code(), Some(2));
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains("nodf: NODF is undefined"), "{err}");
    }
}

/// Measure records its settings and the reader's drops; CSV booleans are
/// TRUE/FALSE (R's read.csv reads them as logical).
#[test]
fn measure_records_settings_and_writes_r_booleans() {
    let with_empty = b"p,a,b,c\nx,1,1,0\ny,1,0,0\nz,0,0,0\n";
    let got = &lines(&nidus(
        &["measure", "-", "--restarts", "2", "--format", "json"],
        with_empty,
    ))[0];
    assert_eq!(got["order"], "sorted");
    assert_eq!(got["restarts"], 2);
    assert_eq!(got["packing"], true);
    assert_eq!(got["dropped_rows"], 1);
    assert_eq!(got["dropped_cols"], 1);
    assert_eq!(got["weighted"], false);
    let csv = ok(&nidus(&["measure", "-", "--format", "csv"], with_empty));
    let mut rows = csv.lines();
    let head: Vec<&str> = rows.next().unwrap().split(',').collect();
    let row: Vec<&str> = rows.next().unwrap().split(',').collect();
    let cell = |k: &str| row[head.iter().position(|h| *h == k).unwrap()];
    assert_eq!(cell("weighted"), "FALSE");
    assert_eq!(cell("packing"), "TRUE");
    assert_eq!(cell("dropped_rows"), "1");
}

/// Text numbers keep 4 significant digits: the fill of one link in a 9 x 9
/// table is 1/81 = 0.012345..., printed 0.01235 (not 0.01).
#[test]
fn text_keeps_significant_digits() {
    let mut t = String::from("p,a,b,c,d,e,f,g,h,i\n");
    for r in 0..9 {
        t += &format!("r{r}");
        for c in 0..9 {
            t += if r == 0 && c == 0 { ",1" } else { ",0" };
        }
        t.push('\n');
    }
    let text = ok(&nidus(
        &["measure", "-", "--keep-empty", "--index", "spectral"],
        t.as_bytes(),
    ));
    assert!(text.contains("fill 0.01235,"), "{text}");
}

/// The old spellings keep working: `--indices` for `--index` on null and
/// effort, `--count` for `--draws` on sample; both give the same output.
#[test]
fn old_option_spellings_are_aliases() {
    let f = demo("islands_presence.csv");
    let a = ok(&nidus(
        &[
            "null",
            &f,
            "--model",
            "equiprobable",
            "--index",
            "nodf",
            "--draws",
            "9",
            "--seed",
            "1",
        ],
        b"",
    ));
    let b = ok(&nidus(
        &[
            "null",
            &f,
            "--model",
            "equiprobable",
            "--indices",
            "nodf",
            "--draws",
            "9",
            "--seed",
            "1",
        ],
        b"",
    ));
    assert_eq!(a, b);
    let m = demo("meadow_visits.csv");
    let effort = |flag: &str| {
        ok(&nidus(
            &[
                "effort", &m, "--seed", "1", "--draws", "3", "--depths", "100,200", flag, "nodf",
                "--format", "json",
            ],
            b"",
        ))
    };
    assert_eq!(effort("--index"), effort("--indices"));
    let dir = std::env::temp_dir().join(format!("nidus-alias-{}", std::process::id()));
    for (k, flag) in ["--draws", "--count"].iter().enumerate() {
        let d = dir.join(k.to_string());
        ok(&nidus(
            &[
                "sample",
                &f,
                "--model",
                "equiprobable",
                flag,
                "3",
                "--seed",
                "1",
                "--out",
                d.to_str().unwrap(),
            ],
            b"",
        ));
        let networks = std::fs::read_dir(&d)
            .unwrap()
            .filter(|e| e.as_ref().unwrap().path().extension() == Some("csv".as_ref()))
            .count();
        assert_eq!(networks, 3, "{flag}");
    }
    let _ = std::fs::remove_dir_all(&dir);
    // Help shows the new names only.
    let help = ok(&nidus(&["measure", "--help"], b""));
    assert!(
        help.contains("--index <LIST>") && !help.contains("--indices"),
        "{help}"
    );
}

/// `--help` describes the layouts and null models and points to
/// docs/methods.md; `null --help` says what p means.
#[test]
fn help_names_layouts_models_and_the_methods_file() {
    let help = ok(&nidus(&["--help"], b""));
    for word in [
        "matrix",
        "edges",
        "fixed-both",
        "shuffle-weights",
        "docs/methods.md",
    ] {
        assert!(help.contains(word), "{word}: {help}");
    }
    let help = ok(&nidus(&["null", "--help"], b""));
    assert!(help.contains("more-nested direction") && help.contains("docs/methods.md"));
}
