//! Issue 10, "nothing lost, nothing exhausted": each reproducer of the
//! issue (quoted in the test's comment) run through the binary or the
//! library, with the refusal or exit status it must now give.

mod common;

use std::path::{Path, PathBuf};

use common::*;
use nidus::null::{parse_draws, Fnv1a};

/// A small nested network typed by hand (a demo shape, invented).
fn ok_file(name: &str) -> PathBuf {
    let p = scratch(name);
    std::fs::write(&p, ",a,b,c,d\nw,1,1,1,1\nx,1,1,1,0\ny,1,1,0,0\nz,1,0,0,1\n").unwrap();
    p
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

fn stderr(o: &std::process::Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Three shards of a 60-draw run on `net`, saved as `stem.1.tsv` ...
fn shards(net: &Path, stem: &str, k: usize) -> Vec<PathBuf> {
    (1..=k)
        .map(|i| {
            let p = scratch(&format!("{stem}.{i}.tsv"));
            let o = nidus(&[
                "null",
                s(net),
                "--model",
                "fixed-rows",
                "--index",
                "nodf,temperature-sorted",
                "--seed",
                "7",
                "--draws",
                "60",
                "--shard",
                &format!("{i}/{k}"),
                "--save-draws",
                s(&p),
            ]);
            assert!(o.status.success(), "{}", stderr(&o));
            p
        })
        .collect()
}

/// Reproducer 1: `nidus measure ok.csv > /dev/full` printed "No space left
/// on device" and exited 0; the same for `null` and `merge`. Now exit 3.
#[cfg(target_os = "linux")]
#[test]
fn output_to_a_full_device_exits_3() {
    let net = ok_file("full.csv");
    let parts = shards(&net, "full", 2);
    let full = || {
        std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap()
    };
    let cases: Vec<Vec<&str>> = vec![
        vec!["measure", s(&net)],
        vec!["measure", "--format", "json", s(&net)],
        vec![
            "null",
            s(&net),
            "--model",
            "fixed-rows",
            "--seed",
            "1",
            "--draws",
            "20",
        ],
        vec!["merge", s(&parts[0]), s(&parts[1])],
    ];
    for args in cases {
        let o = std::process::Command::new(env!("CARGO_BIN_EXE_nidus"))
            .args(&args)
            .stdout(full())
            .output()
            .unwrap();
        assert_eq!(o.status.code(), Some(3), "{args:?}: {}", stderr(&o));
        assert!(
            stderr(&o).contains("No space left"),
            "{args:?}: {}",
            stderr(&o)
        );
    }
}

/// Reproducer 2: "`--save-draws` pointed at the input file destroys the
/// input; a re-run with a typo empties a good part file."
#[test]
fn save_draws_never_destroys_an_input_or_a_good_part() {
    let net = ok_file("keep.csv");
    let before = std::fs::read(&net).unwrap();
    // The input itself, and the input spelled differently (./ and ..).
    let dir = net.parent().unwrap();
    let other = dir.join(".").join("keep.csv");
    for target in [net.clone(), other] {
        let o = nidus(&[
            "null",
            s(&net),
            "--model",
            "fixed-rows",
            "--seed",
            "1",
            "--draws",
            "10",
            "--save-draws",
            s(&target),
        ]);
        assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
        assert!(stderr(&o).contains("input file"), "{}", stderr(&o));
        assert_eq!(std::fs::read(&net).unwrap(), before);
    }
    // A good part, then a re-run whose input path has a typo: part kept.
    let part = scratch("good.part.tsv");
    let o = nidus(&[
        "null",
        s(&net),
        "--model",
        "fixed-rows",
        "--seed",
        "1",
        "--draws",
        "10",
        "--shard",
        "1/2",
        "--save-draws",
        s(&part),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let good = std::fs::read(&part).unwrap();
    let o = nidus(&[
        "null",
        "keep.csvv",
        "--model",
        "fixed-rows",
        "--seed",
        "1",
        "--draws",
        "10",
        "--shard",
        "1/2",
        "--save-draws",
        s(&part),
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(
        std::fs::read(&part).unwrap(),
        good,
        "the good part was replaced"
    );
    // No temporary is left beside it.
    let left: Vec<_> = std::fs::read_dir(part.parent().unwrap())
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| {
            e.file_name()
                .to_string_lossy()
                .starts_with(".good.part.tsv.nidus-partial")
        })
        .collect();
    assert!(left.is_empty(), "{left:?}");
}

/// Reproducer 3: a part cut inside its last number (`39 77.03724029618256`
/// -> `39 77`) merged with exit 0 and a wrong mean; values no index can
/// take (negative NODF, 1e300) were accepted.
#[test]
fn merge_refuses_cut_or_edited_parts() {
    let net = ok_file("cut.csv");
    let parts = shards(&net, "cut", 3);
    let o = nidus(&["merge", s(&parts[0]), s(&parts[1]), s(&parts[2])]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = std::fs::read_to_string(&parts[2]).unwrap();
    // Cut every number of bytes from 2 to 40 off the end: always refused.
    // (Cutting only the final newline leaves the trailer whole: accepted.)
    for cut in 2..=40 {
        let p = scratch(&format!("cut.short{cut}.tsv"));
        std::fs::write(&p, &text[..text.len() - cut]).unwrap();
        let o = nidus(&["merge", s(&parts[0]), s(&parts[1]), s(&p)]);
        assert_eq!(o.status.code(), Some(2), "cut {cut}: {}", stderr(&o));
    }
    // Edit one draw value, keeping the line well formed: the checksum sees it.
    let last_draw = text.lines().rev().nth(1).unwrap();
    let mut f = last_draw.split('\t');
    let k = f.next().unwrap();
    let edits = [
        format!("{k}\t1\t1"),
        format!("{k}\t-3\t1"),
        format!("{k}\t1e300\t1"),
        format!("{k}\tNaN\t1"),
    ];
    for (n, edit) in edits.iter().enumerate() {
        let p = scratch(&format!("cut.edit{n}.tsv"));
        std::fs::write(&p, text.replace(last_draw, edit)).unwrap();
        let o = nidus(&["merge", s(&parts[0]), s(&parts[1]), s(&p)]);
        assert_eq!(o.status.code(), Some(2), "{edit}: {}", stderr(&o));
    }
    let e = parse_draws(&text.replace(last_draw, &edits[1]), Path::new("p")).unwrap_err();
    assert!(
        e.to_string().contains("is not a value nodf can take"),
        "{e}"
    );
}

/// The trailer's checksum is 64-bit FNV-1a: test vectors of IETF
/// draft-eastlake-fnv ("foobar" -> 0x85944171f73967e8).
#[test]
fn checksum_is_fnv1a_64() {
    let mut h = Fnv1a::default();
    h.write(b"foo");
    h.write(b"bar");
    assert_eq!(h.finish(), 0x8594_4171_f739_67e8);
}

/// Reproducer 4: "`merge` of only empty parts (what shards that died early
/// leave) exits 0 with a header and no result."
#[test]
fn merge_of_only_empty_parts_is_refused() {
    let a = scratch("empty.a.tsv");
    let b = scratch("empty.b.tsv");
    std::fs::write(&a, "").unwrap();
    std::fs::write(&b, "").unwrap();
    let o = nidus(&["merge", "--format", "csv", s(&a), s(&b)]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(o.stdout.is_empty());
    assert!(stderr(&o).contains("no saved run"), "{}", stderr(&o));
}

/// Reproducer 5: "`--shard 1/100000000000` is accepted by `null` and then
/// aborts `merge` on an 800 GB allocation; `# draws 18446744073709551615`
/// panics."
#[test]
fn huge_shard_and_draw_counts_are_refused() {
    let net = ok_file("huge.csv");
    let p = scratch("huge.tsv");
    let o = nidus(&[
        "null",
        s(&net),
        "--model",
        "fixed-rows",
        "--seed",
        "1",
        "--draws",
        "10",
        "--shard",
        "1/100000000000",
        "--save-draws",
        s(&p),
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("more shards than"), "{}", stderr(&o));
    let o = nidus(&[
        "null",
        s(&net),
        "--model",
        "fixed-rows",
        "--seed",
        "1",
        "--draws",
        "100000000000",
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    // The same values written into a saved file by hand.
    let parts = shards(&net, "huge", 2);
    let text = std::fs::read_to_string(&parts[0]).unwrap();
    for (from, to) in [
        ("# draws\t60", "# draws\t18446744073709551615"),
        (
            "# draws\t60",
            "# draws\t99999999999999999999999999999999999999999",
        ),
        ("# shard\t1/2", "# shard\t1/100000000000"),
    ] {
        let bad = text.replace(from, to);
        assert_ne!(bad, text);
        let q = scratch("huge.bad.tsv");
        std::fs::write(&q, bad).unwrap();
        let o = nidus(&["merge", s(&q), s(&parts[1])]);
        assert_eq!(o.status.code(), Some(2), "{to}: {}", stderr(&o));
        assert!(!stderr(&o).contains("panicked"), "{}", stderr(&o));
    }
}

/// Reproducer 7 (second half): the "different runs" message names the
/// setting that differs.
#[test]
fn different_runs_name_the_setting() {
    let net = ok_file("diff.csv");
    let parts = shards(&net, "diff", 2);
    let text = std::fs::read_to_string(&parts[1]).unwrap();
    let o = nidus(&["merge", s(&parts[0]), s(&parts[1])]);
    assert!(o.status.success());
    // Re-run shard 2 with another seed.
    let p = scratch("diff.seed.tsv");
    let o = nidus(&[
        "null",
        s(&net),
        "--model",
        "fixed-rows",
        "--index",
        "nodf,temperature-sorted",
        "--seed",
        "8",
        "--draws",
        "60",
        "--shard",
        "2/2",
        "--save-draws",
        s(&p),
    ]);
    assert!(o.status.success());
    let o = nidus(&["merge", s(&parts[0]), s(&p)]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("seed 7 vs 8"), "{}", stderr(&o));
    assert!(text.contains("# end\t"));
}

/// Reproducers 11: "`--restarts 1000000000` aborts, `--restarts 2^64-1`
/// panics, `--threads 100000` spends 30 s starting threads, `sample --count
/// 2^64-1` writes millions of files, `--burn-in 0` or 1 with fixed-both
/// returns the observed matrix every draw, `sample --count 0` succeeds
/// silently."
#[test]
fn huge_or_useless_option_values_are_refused() {
    let net = ok_file("opts.csv");
    for r in ["1000000000", "18446744073709551615"] {
        let o = nidus(&["measure", s(&net), "--restarts", r]);
        assert_eq!(o.status.code(), Some(2), "{r}: {}", stderr(&o));
        assert!(stderr(&o).contains("--restarts"), "{}", stderr(&o));
    }
    let t = std::time::Instant::now();
    let o = nidus(&["--threads", "100000", "measure", s(&net)]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stderr(&o).contains("far above"), "{}", stderr(&o));
    // Not a timing assertion on speed, only a guard against minutes.
    assert!(t.elapsed().as_secs() < 20);
    let dir = scratch("opts.samples");
    for c in ["0", "18446744073709551615", "20000"] {
        let o = nidus(&[
            "sample",
            s(&net),
            "--model",
            "fixed-rows",
            "--seed",
            "1",
            "--count",
            c,
            "--out",
            s(&dir),
        ]);
        assert_eq!(o.status.code(), Some(2), "{c}: {}", stderr(&o));
    }
    assert!(!dir.exists() || std::fs::read_dir(&dir).unwrap().next().is_none());
    for b in ["0", "1"] {
        let o = nidus(&[
            "null",
            s(&net),
            "--model",
            "fixed-both",
            "--seed",
            "1",
            "--draws",
            "10",
            "--burn-in",
            b,
        ]);
        assert_eq!(o.status.code(), Some(2), "{b}: {}", stderr(&o));
        assert!(
            stderr(&o).contains("at least 5 * max(rows, columns) = 20"),
            "{}",
            stderr(&o)
        );
    }
    let o = nidus(&[
        "null",
        s(&net),
        "--model",
        "fixed-rows",
        "--seed",
        "1",
        "--draws",
        "10",
        "--burn-in",
        "100",
    ]);
    assert!(o.status.success());
    assert!(
        stderr(&o).contains("applies only to fixed-both"),
        "{}",
        stderr(&o)
    );
}

/// Reproducer 12: "`sample --out DIR` into a used folder overwrites and
/// leaves another run's files beside the new ones."
#[test]
fn sample_out_refuses_a_used_folder_and_writes_a_manifest() {
    let net = ok_file("samp.csv");
    let dir = scratch("samp.out");
    let args = |count: &'static str, force: bool| {
        let mut a = vec![
            "sample".to_string(),
            s(&net).into(),
            "--model".into(),
            "fixed-rows".into(),
            "--seed".into(),
            "3".into(),
            "--count".into(),
            count.into(),
            "--out".into(),
            s(&dir).into(),
        ];
        if force {
            a.push("--force".into());
        }
        a
    };
    let run = |a: Vec<String>| nidus(&a.iter().map(String::as_str).collect::<Vec<_>>());
    let o = run(args("3", false));
    assert!(o.status.success(), "{}", stderr(&o));
    let line = String::from_utf8(o.stdout).unwrap();
    assert_eq!(line.lines().count(), 1, "{line}");
    assert!(line.contains("wrote 3 fixed-rows networks"), "{line}");
    let mut names: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(
        names,
        [
            "nidus-manifest.json",
            "samp.fixed-rows.000000.csv",
            "samp.fixed-rows.000001.csv",
            "samp.fixed-rows.000002.csv"
        ]
    );
    let m: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("nidus-manifest.json")).unwrap())
            .unwrap();
    assert_eq!(m["model"], "fixed-rows");
    assert_eq!(m["seed"], 3);
    assert_eq!(m["count"], 3);
    assert_eq!(m["version"], env!("CARGO_PKG_VERSION"));
    assert!(m["source"].as_str().unwrap().ends_with("samp.csv"));
    let o = run(args("2", false));
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("--force"), "{}", stderr(&o));
    let o = run(args("2", true));
    assert!(o.status.success(), "{}", stderr(&o));
}

/// Reproducer 14: "`fixed-totals` hangs on large whole-number counts (a 3x3
/// table with 10^12 counts stuck on one draw for 100 s)", and "too large"
/// rather than "not a whole number" for 1e18. The draws keep both margins,
/// and cell (0,0) has the mean r c / N and variance
/// r c (N - r)(N - c) / (N^2 (N - 1)) of a cell of a table with fixed
/// margins under independence (the hypergeometric law of one cell; e.g.
/// Agresti, Categorical Data Analysis, 2nd ed., sec. 3.5.7, from memory).
#[test]
fn fixed_totals_with_huge_counts_does_not_hang() {
    use nidus::null::{draw_rng, FixedTotals};
    let e = 1e12;
    let net = nidus::Network::from_array(ndarray::array![[e, e, e], [e, e, e], [e, e, e]]).unwrap();
    let ft = FixedTotals::new(&net).unwrap();
    let reps = 400;
    let mut xs = Vec::new();
    for k in 0..reps {
        let t = ft.sample(&mut draw_rng(11, k));
        for i in 0..3 {
            assert_eq!(t.row(i).sum(), 3e12);
            assert_eq!(t.column(i).sum(), 3e12);
        }
        xs.push(t[[0, 0]]);
    }
    let (n, r, c) = (9e12f64, 3e12f64, 3e12f64);
    let var = r * c * (n - r) * (n - c) / (n * n * (n - 1.0));
    let mean = xs.iter().sum::<f64>() / reps as f64;
    let sd = (xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (reps as f64 - 1.0)).sqrt();
    let se = (var / reps as f64).sqrt();
    assert!((mean - 1e12).abs() < 5.0 * se, "mean {mean}, se {se}");
    assert!(
        (sd / var.sqrt() - 1.0).abs() < 0.2,
        "sd {sd} vs {}",
        var.sqrt()
    );
    let big = nidus::Network::from_array(ndarray::array![[1e18, 1.0], [1.0, 1.0]]).unwrap();
    let msg = FixedTotals::new(&big).unwrap_err().to_string();
    assert!(msg.contains("too large") && !msg.contains("whole"), "{msg}");
}

/// Reproducer 15 (second half): "Weights that overflow in spectral radius
/// print `null` with exit 0, and in `null` one such file stops all files
/// after it without naming itself." The radius of a 3 x 3 table of weights
/// near 1.7e308 is above the largest float (it is at least the largest
/// row's Euclidean norm, sqrt(3) x 1.7e308: Horn & Johnson, Matrix
/// Analysis, the spectral norm bounds every row's norm).
#[test]
fn spectral_overflow_is_an_error_per_file() {
    let huge = scratch("over.csv");
    std::fs::write(
        &huge,
        ",a,b,c\nx,1.7e308,1.7e308,1.7e308\ny,1.7e308,1.7e308,1\nz,1.7e308,1,1\n",
    )
    .unwrap();
    let ok = ok_file("over.ok.csv");
    let o = nidus(&[
        "measure",
        "--indices",
        "spectral",
        "--format",
        "json",
        s(&huge),
        s(&ok),
    ]);
    assert_eq!(o.status.code(), Some(2));
    let out = String::from_utf8(o.stdout.clone()).unwrap();
    assert_eq!(out.lines().count(), 1, "{out}");
    assert!(
        // The radius is a number, not null (the `not_computed` entry of a
        // computed index is null by design).
        out.contains("over.ok.csv")
            && serde_json::from_str::<serde_json::Value>(&out).unwrap()["spectral_radius"]
                ["binary"]
                .is_f64(),
        "{out}"
    );
    assert!(stderr(&o).contains("over.csv") && stderr(&o).contains("beyond the largest"));
    let o = nidus(&[
        "null",
        s(&huge),
        s(&ok),
        "--model",
        "shuffle-weights",
        "--index",
        "spectral-weighted",
        "--seed",
        "1",
        "--draws",
        "20",
        "--format",
        "csv",
    ]);
    assert_eq!(o.status.code(), Some(2));
    let out = String::from_utf8(o.stdout.clone()).unwrap();
    assert_eq!(out.lines().count(), 2, "header and the good file: {out}");
    assert!(stderr(&o).contains("over.csv"), "{}", stderr(&o));
}

/// Reproducer 6: "SIGINT/SIGTERM during a long `null`: flush what is
/// complete so the saved file ends on a whole record, and say on stderr how
/// many draws were saved; a finished run must never lose its last draws
/// (148 were lost in one test). A run can be resumed from its saved draws,
/// with the result identical to an uninterrupted run."
#[cfg(unix)]
#[test]
fn interrupted_run_saves_whole_records_and_resumes_identically() {
    let net = ok_file("sig.csv");
    let args = |save: &Path| -> Vec<String> {
        [
            "null",
            s(&net),
            "--model",
            "fixed-rows",
            "--index",
            "nodf,temperature-sorted",
            "--seed",
            "9",
            "--draws",
            "200000",
            "--format",
            "csv",
            "--save-draws",
            s(save),
        ]
        .iter()
        .map(|x| x.to_string())
        .collect()
    };
    let full = scratch("sig.full.tsv");
    let o = nidus(&args(&full).iter().map(String::as_str).collect::<Vec<_>>());
    assert!(o.status.success(), "{}", stderr(&o));
    let full_out = o.stdout;
    let full_text = std::fs::read_to_string(&full).unwrap();
    // Every draw is in the finished file, with its trailer.
    assert!(full_text.ends_with('\n'));
    assert!(full_text
        .lines()
        .last()
        .unwrap()
        .starts_with("# end\t200000\t"));

    let part = scratch("sig.part.tsv");
    let child = std::process::Command::new(env!("CARGO_BIN_EXE_nidus"))
        .args(args(&part))
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Wait until draws are being written, then interrupt.
    let temp = part
        .parent()
        .unwrap()
        .join(format!(".sig.part.tsv.nidus-partial-{}", child.id()));
    let t0 = std::time::Instant::now();
    while std::fs::metadata(&temp).map_or(true, |m| m.len() < 100_000)
        && t0.elapsed().as_secs() < 60
    {
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    std::process::Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    let o = child.wait_with_output().unwrap();
    let text = std::fs::read_to_string(&part).unwrap();
    if o.status.code() == Some(130) {
        assert!(stderr(&o).contains("interrupted after"), "{}", stderr(&o));
        // The CSV header only: no summary of a partial run.
        assert_eq!(String::from_utf8_lossy(&o.stdout).lines().count(), 1);
        // The partial file is a prefix of the full one's draws, with a trailer.
        let saved = parse_draws(&text, &part).unwrap();
        let n = saved[0].run.draw_ids.len();
        assert!(n > 0 && n < 200_000, "{n}");
        assert_eq!(saved[0].run.draw_ids[n - 1], n as u64 - 1);
        // merge refuses it as incomplete.
        let m = nidus(&["merge", s(&part)]);
        assert_eq!(m.status.code(), Some(2), "{}", stderr(&m));
    } else {
        // The machine finished first: the run must then be whole.
        assert!(o.status.success(), "{}", stderr(&o));
    }
    let mut a = args(&part);
    a.extend(["--resume".to_string(), s(&part).to_string()]);
    let o = nidus(&a.iter().map(String::as_str).collect::<Vec<_>>());
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(o.stdout, full_out, "resumed output differs");
    assert_eq!(
        std::fs::read_to_string(&part).unwrap(),
        full_text,
        "resumed file differs"
    );
}

/// Reproducer 7 (first half): "A mistyped path in one shard (`./m.csv` vs
/// `m.csv`) is reported as 'shard 2/3 missing'": parts are matched by the
/// network's content fingerprint, not by the path's spelling; and a shard
/// run on a changed file is refused naming the network content.
#[test]
fn parts_are_matched_by_content_not_spelling() {
    let net = ok_file("spell.csv");
    let dir = net.parent().unwrap().to_path_buf();
    let spelled = [
        net.clone(),
        dir.join(".").join("spell.csv"),
        dir.join("..")
            .join(dir.file_name().unwrap())
            .join("spell.csv"),
    ];
    let mut parts = Vec::new();
    for (i, f) in spelled.iter().enumerate() {
        let p = scratch(&format!("spell.{i}.tsv"));
        let o = nidus(&[
            "null",
            s(f),
            "--model",
            "fixed-rows",
            "--seed",
            "2",
            "--draws",
            "30",
            "--shard",
            &format!("{}/3", i + 1),
            "--save-draws",
            s(&p),
        ]);
        assert!(o.status.success(), "{}", stderr(&o));
        parts.push(p);
    }
    let o = nidus(&["merge", s(&parts[0]), s(&parts[1]), s(&parts[2])]);
    assert!(o.status.success(), "{}", stderr(&o));
    let whole = nidus(&[
        "null",
        s(&net),
        "--model",
        "fixed-rows",
        "--seed",
        "2",
        "--draws",
        "30",
    ]);
    assert_eq!(o.stdout, whole.stdout);
    // Shard 3 of a changed file with the same name: refused, naming the content.
    let changed = scratch("spell.changed/spell.csv");
    std::fs::create_dir_all(changed.parent().unwrap()).unwrap();
    std::fs::write(
        &changed,
        ",a,b,c,d\nw,1,1,1,1\nx,1,1,0,1\ny,1,1,0,0\nz,1,0,0,1\n",
    )
    .unwrap();
    let p = scratch("spell.changed.tsv");
    let o = nidus(&[
        "null",
        s(&changed),
        "--model",
        "fixed-rows",
        "--seed",
        "2",
        "--draws",
        "30",
        "--shard",
        "3/3",
        "--save-draws",
        s(&p),
    ]);
    assert!(o.status.success());
    let text = std::fs::read_to_string(&p).unwrap();
    let relabelled = scratch("spell.relabelled.tsv");
    // Give it the first part's label, as a batch script with one name would.
    let label = std::fs::read_to_string(&parts[0])
        .unwrap()
        .lines()
        .nth(1)
        .unwrap()
        .to_string();
    let old = text.lines().nth(1).unwrap().to_string();
    // Relabelling breaks the checksum; recompute it as a writer would.
    let body: String = text.replace(&old, &label);
    let (head, _) = body.rsplit_once("# end\t").unwrap();
    let mut h = Fnv1a::default();
    h.write(head.as_bytes());
    let n = head
        .lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("draw"))
        .count();
    std::fs::write(
        &relabelled,
        format!("{head}# end\t{n}\t{:016x}\n", h.finish()),
    )
    .unwrap();
    let o = nidus(&["merge", s(&parts[0]), s(&parts[1]), s(&relabelled)]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("network content differs"),
        "{}",
        stderr(&o)
    );
}

/// Reproducer 9: "Temperature packing allocates max(m, n)^2 and takes
/// max(m, n)^3: a 1 x 100,000 table aborts on an 80 GB allocation." A side
/// of at most 5 members is packed exactly without the allocation: for one
/// row every column holds a one or not, so the minimum puts the ones at the
/// `L` positions where a presence costs least relative to an absence
/// (`T_min = 100 (sum_t absent(t) + the L smallest present(t) - absent(t))
/// / (n U_max)`, checked here). Above the side limit with 6 members the
/// packing is refused, quickly and without the allocation; the sorted
/// order is still available.
#[test]
fn temperature_packing_is_capped_on_the_assignment_side() {
    use nidus::metrics::temperature::{
        temperature, TemperatureOptions, UnexpectednessTable, PACKING_SIDE_LIMIT, U_MAX,
    };
    let n = 100_000;
    let row: Vec<u8> = (0..n).map(|j| u8::from(j % 3 != 1)).collect();
    let net =
        nidus::Network::from_array(ndarray::Array2::from_shape_vec((1, n), row).unwrap()).unwrap();
    let t0 = std::time::Instant::now();
    let t = temperature(&net, &TemperatureOptions::default()).unwrap();
    let links = (0..n).filter(|j| j % 3 != 1).count();
    let table = UnexpectednessTable::new(1, n, links).unwrap();
    let mut extra: Vec<f64> = (0..n)
        .map(|j| table.if_present(0, j) - table.if_absent(0, j))
        .collect();
    extra.sort_by(f64::total_cmp);
    let absent: f64 = (0..n).map(|j| table.if_absent(0, j)).sum();
    let least: f64 = extra[..links].iter().sum();
    let want = 100.0 * (absent + least) / (n as f64 * U_MAX);
    let packed = t.packed.unwrap();
    assert!(
        (packed - want).abs() <= 1e-9 * (1.0 + want),
        "{packed} vs {want}"
    );
    assert!(packed <= t.sorted);
    let rows = 6;
    let w: Vec<u8> = (0..rows * n).map(|c| u8::from(c % 7 < 3)).collect();
    let six =
        nidus::Network::from_array(ndarray::Array2::from_shape_vec((rows, n), w).unwrap()).unwrap();
    let e = temperature(&six, &TemperatureOptions::default()).unwrap_err();
    assert!(e.to_string().contains("packing"), "{e}");
    assert!(
        t0.elapsed().as_secs() < 30,
        "a guard against the old minutes, not a timing test"
    );
    let opts = TemperatureOptions::default().with_pack(false);
    assert!(temperature(&six, &opts).is_ok());
    assert!(PACKING_SIDE_LIMIT < n);
}
