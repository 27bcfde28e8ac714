//! The edge-list reader reads a large file with a pipeline when it has a
//! second thread (`src/io/edges.rs`, `scan_lines`): that thread scans the
//! common lines ahead while the reader interns them in order; at a line of
//! another kind the pipeline ends, the reader takes the line by its
//! general path and starts another. What it returns must not depend on
//! that: for each input, the outcome with one thread (the reader alone,
//! checked against the file rules in `tests/input.rs` and friends) and
//! with two to four threads must be equal: labels in order, cells bit for
//! bit, notes, and the error message of a bad file, whose line number must
//! count the lines the pipeline passed.
//!
//! The inputs are edge lists of a few megabytes (the reader starts a
//! pipeline only with 1 MiB or more left to read) with lines of other
//! kinds put in at random places.

use std::path::Path;

use nidus::io::{parse_network_reported, EdgeHeader, Layout, ReadOptions};
use rand::{Rng, SeedableRng};

/// What a read returned, as comparable text: the error message, or the
/// labels, the compressed rows (weights as bits) and the notes.
fn outcome(text: &[u8], opts: &ReadOptions, threads: usize) -> String {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap();
    pool.install(
        || match parse_network_reported(text, Path::new("big.csv"), opts) {
            Err(e) => format!("error: {e}"),
            Ok(read) => {
                let net = &read.network;
                let csr = net.csr();
                let bits: Vec<u64> = csr.values().iter().map(|w| w.to_bits()).collect();
                let notes: Vec<String> = read.report.notes.iter().map(|n| n.to_string()).collect();
                format!(
                    "rows {:?}\ncols {:?}\nindptr {:?}\nindices {:?}\nbits {:?}\nnotes {:?}",
                    net.row_labels(),
                    net.col_labels(),
                    csr.indptr(),
                    csr.indices(),
                    bits,
                    notes
                )
            }
        },
    )
}

/// Lines of the common form, `p{i},v{j},{w}`, about `bytes` of them.
/// New labels keep appearing down the file (the pools grow with the line
/// number), so the order of first appearance shows the order in which
/// lines were taken; weights with decimals (0.1 + 0.2 + 0.3 differs from
/// 0.3 + 0.2 + 0.1 in the last bit) show the order in which repeats of
/// a pair were summed.
fn base_lines(rng: &mut impl Rng, bytes: usize, delim: char) -> Vec<String> {
    let mut lines = Vec::new();
    let mut size = 0;
    while size < bytes {
        let k = lines.len();
        let line = format!(
            "p{}{delim}v{}{delim}{}",
            rng.random_range(0..k / 40 + 20),
            rng.random_range(0..k / 50 + 20),
            ["0.1", "0.2", "0.3", "7", "12.25"][rng.random_range(0..5)]
        );
        size += line.len() + 1;
        lines.push(line);
    }
    lines
}

/// Lines that are not of the common form, or not data, or bad.
const ODD: [&str; 24] = [
    "",
    "   ",
    ",,",
    "p1,v1,1e3",
    "p2,v2,2.50",
    "p3,v3,",
    "p4,v4",
    " p5 , v5 , 6 ",
    "p6,v6,.5",
    "p7,v7,007",
    "\"p,8\",v8,1",
    "p9,\"v\"\"9\",2",
    "p10,v10,0",
    "p11,v11,1.5e-3",
    "p12,v12,99999999999999999999",
    "p13,v13,-1",
    "p14,v14,x",
    "p15,v15,1,2",
    "p16",
    ",v17,1",
    "p18,,1",
    "\"p19\nstill p19\",v19,1",
    "p20\u{1}x,v20,1",
    "p21,v21,3\r",
];

/// `ODD` lines that make the file bad (tests put at most one in a file
/// meant to read, and then check the error).
fn is_bad(line: &str) -> bool {
    ["-1", ",x", "1,2", "p16", ",v17", "p18,,"]
        .iter()
        .any(|b| line.contains(b))
        || line.ends_with("\r")
}

#[test]
fn reading_ahead_changes_nothing_on_good_and_bad_files() {
    let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(2026);
    let opts = ReadOptions {
        layout: Layout::Edges,
        ..Default::default()
    };
    let mut taken_ahead = 0;
    for case in 0..40 {
        let mut lines = base_lines(&mut rng, 2_600_000, ',');
        if case % 4 == 0 {
            lines.insert(0, "plant,visitor,count".into());
        }
        // Odd lines, mostly where a pipeline starts again after them (more
        // than 1 MiB before the end), some anywhere; some next to each
        // other.
        let good: Vec<&str> = ODD.iter().copied().filter(|l| !is_bad(l)).collect();
        let bad: Vec<&str> = ODD.iter().copied().filter(|l| is_bad(l)).collect();
        let early = lines.len() * 3 / 5;
        for _ in 0..rng.random_range(0..8) {
            let at = rng.random_range(1..early);
            for _ in 0..rng.random_range(1..3) {
                lines.insert(at, good[rng.random_range(0..good.len())].to_string());
            }
        }
        for _ in 0..rng.random_range(0..3) {
            let at = rng.random_range(1..lines.len());
            lines.insert(at, good[rng.random_range(0..good.len())].to_string());
        }
        if case % 3 == 1 {
            let at = rng.random_range(1..lines.len());
            lines.insert(at, bad[rng.random_range(0..bad.len())].to_string());
        }
        let mut text = lines.join(if case % 5 == 2 { "\r\n" } else { "\n" });
        if case % 2 == 0 {
            text.push('\n');
        }
        let one = outcome(text.as_bytes(), &opts, 1);
        for threads in 2..=4 {
            let many = outcome(text.as_bytes(), &opts, threads);
            assert!(
                one == many,
                "case {case}, {threads} threads:\n{one:.300}\n{many:.300}"
            );
        }
        if !one.starts_with("error") {
            taken_ahead += 1;
        }
    }
    // Not vacuous: most files read (and the others failed).
    assert!(taken_ahead >= 24, "{taken_ahead} of 40 files read");
}

/// Files read with other settings: tabs, each header rule, `;` with
/// decimal commas (read by one thread), a first line after a megabyte of
/// blank lines, and every label quoted.
#[test]
fn reading_ahead_changes_nothing_with_other_settings() {
    let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(7);
    let tabs = base_lines(&mut rng, 1_100_000, '\t').join("\n");
    let semis = base_lines(&mut rng, 1_100_000, ';')
        .into_iter()
        .map(|l| l.replace('.', ","))
        .collect::<Vec<_>>()
        .join("\n");
    let blank_first = "\n".repeat(800_000) + &base_lines(&mut rng, 600_000, ',').join("\n");
    // Every label quoted, as R's write.csv writes them, some holding the
    // delimiter; a few quotes escaped (read by the general path).
    let quoted = base_lines(&mut rng, 2_000_000, ',')
        .into_iter()
        .enumerate()
        .map(|(k, l)| {
            let f: Vec<&str> = l.split(',').collect();
            match k % 1000 {
                7 => format!("\"{}\"\"\",\"{}\",{}", f[0], f[1], f[2]),
                k if k % 3 == 0 => format!("\"{}, sp.\",\"{}\",{}", f[0], f[1], f[2]),
                _ => format!(" \"{}\" ,\"{}\",\"{}\"", f[0], f[1], f[2]),
            }
        })
        .collect::<Vec<_>>()
        .join("\r\n");
    for (name, text) in [
        ("tabs", tabs),
        ("semicolons", semis),
        ("blank", blank_first),
        ("quoted", quoted),
    ] {
        for header in [EdgeHeader::Auto, EdgeHeader::Absent, EdgeHeader::Present] {
            let opts = ReadOptions {
                layout: Layout::Edges,
                edge_header: header,
                ..Default::default()
            };
            let one = outcome(text.as_bytes(), &opts, 1);
            assert!(!one.starts_with("error"), "{name}: {one:.300}");
            assert_eq!(
                one,
                outcome(text.as_bytes(), &opts, 2),
                "{name}, {header:?}"
            );
        }
    }
}
