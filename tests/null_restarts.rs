//! `nidus null --restarts N`: the random starts of the temperature packing
//! search reach every draw, are recorded in every output and in saved
//! draws (`# restarts`; a missing line reads as the earlier default of 4),
//! and `merge` refuses parts made with different restarts when temperature
//! is tested (issue 12, "packed temperature as a null index"; issue 10,
//! item 11: huge option values are refused, never a panic).

mod common;

use common::{nidus, random_matrix, scratch, to_array, write_matrix_file};
use nidus::index::IndexKind;
use nidus::metrics::temperature::{temperature, TemperatureOptions};
use nidus::null::{
    draw_rng, parse_draws, run_null, Fnv1a, NullConfig, NullModel, NullOptions, NullSampler,
};
use nidus::Network;
use serde_json::Value;

fn network(seed: u64, m: usize, n: usize) -> (common::Mat, Network<f64>) {
    let w = random_matrix(&mut common::rng(seed), m, n, 0.35, 1);
    let net = Network::from_array(to_array(&w)).unwrap();
    (w, net)
}

/// The network of [`network`] written as a matrix file named `name` in the
/// scratch folder; its path.
fn network_file(seed: u64, m: usize, n: usize, name: &str) -> String {
    let (w, _) = network(seed, m, n);
    let f = scratch(name);
    write_matrix_file(&f, &w);
    f.to_str().unwrap().to_string()
}

/// The run's temperature values are those of `temperature` with the same
/// restarts on the same draws (draw `k` regenerated from `draw_rng(seed, k)`),
/// and the setting changes some draw's packed value: it is not ignored.
#[test]
fn restarts_reach_every_draw() {
    let (_, net) = network(31, 13, 12);
    let kinds = vec![IndexKind::named("temperature").unwrap()];
    let sampler = NullSampler::new(&net, NullModel::Equiprobable, &NullOptions::default()).unwrap();
    let mut by_restarts = Vec::new();
    for restarts in [0usize, 3] {
        let mut config = NullConfig::new(NullModel::Equiprobable, kinds.clone(), 24, 77);
        config.restarts = restarts;
        assert_eq!(config.recorded_restarts(), Some(restarts));
        let run = run_null(&net, &config).unwrap();
        assert_eq!(run.restarts, Some(restarts));
        let opts = TemperatureOptions::default().with_restarts(restarts);
        let t = temperature(&net, &opts).unwrap();
        assert_eq!(run.observed[0].to_bits(), t.packed.unwrap().to_bits());
        for (&k, v) in run.draw_ids.iter().zip(&run.values) {
            let draw = sampler.sample(&mut draw_rng(77, k));
            let want = temperature(&draw, &opts).unwrap().packed.unwrap();
            assert_eq!(
                v[0].to_bits(),
                want.to_bits(),
                "draw {k}, {restarts} restarts"
            );
        }
        by_restarts.push(run.values_of(0));
    }
    let differ = by_restarts[0]
        .iter()
        .zip(&by_restarts[1])
        .filter(|(a, b)| a != b)
        .count();
    assert!(differ > 0, "3 restarts found a cooler packing on some draw");
    // More starts never give a hotter packing (the sorted start is kept).
    for (a, b) in by_restarts[0].iter().zip(&by_restarts[1]) {
        assert!(b <= a);
    }
    // Without the packed temperature the setting is not recorded.
    let mut config = NullConfig::new(
        NullModel::Equiprobable,
        vec![IndexKind::named("temperature-sorted").unwrap()],
        4,
        1,
    );
    config.restarts = 0;
    assert_eq!(run_null(&net, &config).unwrap().restarts, None);
}

fn ok(args: &[&str]) -> String {
    let o = nidus(args);
    assert!(
        o.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8(o.stdout).unwrap()
}

fn refused(args: &[&str]) -> String {
    let o = nidus(args);
    assert_eq!(o.status.code(), Some(2), "{args:?}");
    String::from_utf8(o.stderr).unwrap()
}

/// The setting appears in the text, JSON and CSV outputs and in the saved
/// draws; it is absent (null) when temperature is not tested.
#[test]
fn restarts_are_recorded_in_every_output() {
    let f = network_file(5, 9, 11, "rec.csv");
    let f = f.as_str();
    let base = [
        "null",
        f,
        "--model",
        "equiprobable",
        "--draws",
        "6",
        "--seed",
        "2",
    ];
    let with = |extra: &[&str]| {
        let mut a = base.to_vec();
        a.extend_from_slice(extra);
        ok(&a)
    };
    let text = with(&["--index", "temperature,nodf", "--restarts", "2"]);
    assert!(
        text.contains("temperature packing with 2 random restarts"),
        "{text}"
    );
    let text = with(&["--index", "temperature"]);
    assert!(
        text.contains("temperature packing with 4 random restarts"),
        "{text}"
    );
    let text = with(&["--index", "nodf"]);
    assert!(!text.contains("random restarts"), "{text}");

    let json = with(&[
        "--index",
        "temperature",
        "--restarts",
        "1",
        "--format",
        "json",
    ]);
    let v: Value = serde_json::from_str(json.lines().next().unwrap()).unwrap();
    assert_eq!(v["restarts"], 1);
    let json = with(&["--index", "nodf", "--restarts", "1", "--format", "json"]);
    let v: Value = serde_json::from_str(json.lines().next().unwrap()).unwrap();
    assert_eq!(v["restarts"], Value::Null);

    let csv = with(&[
        "--index",
        "temperature",
        "--restarts",
        "0",
        "--format",
        "csv",
    ]);
    let mut lines = csv.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let row: Vec<&str> = lines.next().unwrap().split(',').collect();
    let at = head
        .iter()
        .position(|h| *h == "restarts")
        .expect("a restarts column");
    assert_eq!(row[at], "0");

    let saved = scratch("rec-draws.tsv");
    with(&[
        "--index",
        "temperature,nodf",
        "--restarts",
        "3",
        "--save-draws",
        saved.to_str().unwrap(),
    ]);
    let text = std::fs::read_to_string(&saved).unwrap();
    assert!(text.contains("\n# restarts\t3\n"), "{text}");
    assert_eq!(parse_draws(&text, &saved).unwrap()[0].run.restarts, Some(3));
    with(&["--index", "nodf", "--save-draws", saved.to_str().unwrap()]);
    let text = std::fs::read_to_string(&saved).unwrap();
    assert!(text.contains("\n# restarts\tnone\n"), "{text}");
}

/// Rewrites every section's `# end` trailer of a saved-draws text so that
/// its checksum (64-bit FNV-1a of the section's lines, see the format) fits
/// an edited section.
fn reseal(text: &str) -> String {
    let mut out = String::new();
    let mut sum = Fnv1a::default();
    for line in text.lines() {
        if let Some(rest) = line.strip_prefix("# end\t") {
            let count = rest.split('\t').next().unwrap();
            out += &format!("# end\t{count}\t{:016x}\n", sum.finish());
            sum = Fnv1a::default();
        } else {
            sum.write(line.as_bytes());
            sum.write(b"\n");
            out += line;
            out.push('\n');
        }
    }
    out
}

/// A part written before the `# restarts` line existed reads as the
/// default of those versions (4), so it merges with a new part run with 4
/// restarts and not with one run with another number.
#[test]
fn missing_restarts_line_reads_as_the_old_default() {
    let f = network_file(9, 8, 10, "old.csv");
    let f = f.as_str();
    let part = |i: usize, restarts: &str| {
        let p = scratch(&format!("old-{i}-{restarts}.tsv"));
        let shard = format!("{i}/2");
        ok(&[
            "null",
            f,
            "--model",
            "proportional",
            "--index",
            "temperature",
            "--draws",
            "10",
            "--seed",
            "4",
            "--restarts",
            restarts,
            "--shard",
            &shard,
            "--save-draws",
            p.to_str().unwrap(),
        ]);
        p
    };
    let p1 = part(1, "4");
    let text = std::fs::read_to_string(&p1).unwrap();
    let old: String = text
        .lines()
        .filter(|l| !l.starts_with("# restarts"))
        .map(|l| format!("{l}\n"))
        .collect();
    let old = reseal(&old);
    assert_ne!(old, text);
    let p_old = scratch("old-1-none.tsv");
    std::fs::write(&p_old, &old).unwrap();
    assert_eq!(parse_draws(&old, &p_old).unwrap()[0].run.restarts, Some(4));
    let whole = ok(&[
        "null",
        f,
        "--model",
        "proportional",
        "--index",
        "temperature",
        "--draws",
        "10",
        "--seed",
        "4",
    ]);
    let p2 = part(2, "4");
    let merged = ok(&["merge", p_old.to_str().unwrap(), p2.to_str().unwrap()]);
    assert_eq!(merged, whole);
    let p2_other = part(2, "0");
    let e = refused(&["merge", p_old.to_str().unwrap(), p2_other.to_str().unwrap()]);
    assert!(e.contains("restarts"), "{e}");
}

/// `merge` refuses shards made with different restarts when temperature is
/// tested, and ignores the option when it is not.
#[test]
fn merge_refuses_differing_restarts() {
    let f = network_file(12, 10, 9, "mix.csv");
    let f = f.as_str();
    let part = |index: &str, i: usize, restarts: &str| {
        let p = scratch(&format!("mix-{index}-{i}-{restarts}.tsv"));
        let shard = format!("{i}/2");
        ok(&[
            "null",
            f,
            "--model",
            "fixed-rows",
            "--index",
            index,
            "--draws",
            "8",
            "--seed",
            "9",
            "--restarts",
            restarts,
            "--shard",
            &shard,
            "--save-draws",
            p.to_str().unwrap(),
        ]);
        p.to_str().unwrap().to_string()
    };
    let (a, b) = (part("temperature", 1, "0"), part("temperature", 2, "2"));
    let e = refused(&["merge", &a, &b]);
    assert!(e.contains("restarts (temperature packing) 0 vs 2"), "{e}");
    let b0 = part("temperature", 2, "0");
    let out = ok(&["merge", &a, &b0]);
    assert!(
        out.contains("temperature packing with 0 random restarts"),
        "{out}"
    );
    let (a, b) = (part("nodf", 1, "0"), part("nodf", 2, "2"));
    ok(&["merge", &a, &b]);
}

/// Restarts beyond 10,000 are refused with a message (exit 2), at any size
/// (issue 10, item 11: `--restarts 1000000000` aborted, `2^64-1` panicked);
/// a saved file claiming more is refused too.
#[test]
fn huge_restarts_are_refused() {
    let f = scratch("tiny.csv");
    write_matrix_file(
        &f,
        &vec![
            vec![1.0, 1.0, 0.0],
            vec![1.0, 0.0, 1.0],
            vec![0.0, 1.0, 0.0],
        ],
    );
    let f = f.to_str().unwrap();
    let args = |r: &'static str| {
        vec![
            "null",
            f,
            "--model",
            "equiprobable",
            "--index",
            "temperature",
            "--draws",
            "3",
            "--seed",
            "1",
            "--restarts",
            r,
        ]
    };
    for r in ["10001", "1000000000", "18446744073709551615"] {
        let e = refused(&args(r));
        assert!(e.contains("at most 10000 random starts"), "{r}: {e}");
    }
    let e = refused(&args("18446744073709551616"));
    assert!(e.contains("--restarts"), "{e}");
    // The limit itself runs (a 3 x 3 network is packed exactly).
    ok(&args("10000"));

    let saved = scratch("tiny-draws.tsv");
    let mut a = args("2");
    a.extend(["--save-draws", saved.to_str().unwrap()]);
    ok(&a);
    let text = std::fs::read_to_string(&saved).unwrap();
    let bad = reseal(&text.replace("# restarts\t2", "# restarts\t99999"));
    let e = parse_draws(&bad, &saved).unwrap_err().to_string();
    assert!(e.contains("more than nidus accepts"), "{e}");
    let bad = reseal(&text.replace("# restarts\t2", "# restarts\tnone"));
    let e = parse_draws(&bad, &saved).unwrap_err().to_string();
    assert!(e.contains("needs the number of random starts"), "{e}");
}

/// `--resume` refuses saved draws made with other restarts (the same check
/// as `merge`), and continues those made with the same.
#[test]
fn resume_checks_the_restarts() {
    let f = network_file(14, 8, 9, "resume.csv");
    let f = f.as_str();
    let saved = scratch("resume-draws.tsv");
    let again = scratch("resume-again.tsv");
    let run = |restarts: &str, extra: &[&str]| {
        let mut a = vec![
            "null",
            f,
            "--model",
            "equiprobable",
            "--index",
            "temperature",
            "--draws",
            "6",
            "--seed",
            "3",
            "--restarts",
            restarts,
        ];
        a.extend_from_slice(extra);
        a.iter().map(|s| s.to_string()).collect::<Vec<_>>()
    };
    let first = run("1", &["--save-draws", saved.to_str().unwrap()]);
    let first: Vec<&str> = first.iter().map(String::as_str).collect();
    let whole = ok(&first);
    let other = run(
        "2",
        &[
            "--resume",
            saved.to_str().unwrap(),
            "--save-draws",
            again.to_str().unwrap(),
        ],
    );
    let other: Vec<&str> = other.iter().map(String::as_str).collect();
    let e = refused(&other);
    assert!(e.contains("restarts (temperature packing) 2 vs 1"), "{e}");
    let same = run(
        "1",
        &[
            "--resume",
            saved.to_str().unwrap(),
            "--save-draws",
            again.to_str().unwrap(),
        ],
    );
    let same: Vec<&str> = same.iter().map(String::as_str).collect();
    assert_eq!(ok(&same), whole);
}
