//! File input: every malformed case in `tests/data/bad/` fails with a parse
//! error naming the file, line and field; good files round-trip exactly.
//!
//! References: the quoting rules of RFC 4180 (Shafranovich 2005) as
//! implemented by the general-purpose `csv` crate, which reads back the same
//! text in `quoted_text_agrees_with_the_csv_crate`; slow references written
//! in this file from the layout rules (edge sums, label orders).

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use ndarray::Array2;
use nidus::io::{
    parse_network, read_network, write_matrix, EdgeHeader, Labels, Layout, ReadOptions,
};
use nidus::{Error, Network};
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// The matrix layout keeping species without links (round trips).
const KEEP_EMPTY: ReadOptions = ReadOptions {
    keep_empty: true,
    ..MATRIX
};

fn bad(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/bad")
        .join(name)
}

const MATRIX: ReadOptions = ReadOptions {
    layout: Layout::Matrix,
    edge_header: EdgeHeader::Auto,
    labels: Labels::Auto,
    keep_empty: false,
    transpose: false,
};
const EDGES: ReadOptions = ReadOptions {
    layout: Layout::Edges,
    edge_header: EdgeHeader::Auto,
    labels: Labels::Auto,
    keep_empty: false,
    transpose: false,
};

/// Reads a bad fixture and checks the error's place and wording.
fn expect_parse_error(
    name: &str,
    opts: &ReadOptions,
    line: usize,
    field: Option<usize>,
    words: &[&str],
) {
    let path = bad(name);
    let err = read_network(&path, opts).expect_err(name);
    let text = err.to_string();
    match &err {
        Error::Parse {
            path: p,
            line: l,
            column,
            ..
        } => {
            assert_eq!(p, &path, "{text}");
            assert_eq!(*l, line, "{text}");
            assert_eq!(*column, field, "{text}");
        }
        other => panic!("{name}: expected a parse error, got {other:?}"),
    }
    assert!(text.starts_with(&path.display().to_string()), "{text}");
    let place = match field {
        Some(f) => format!("line {line}, field {f}: "),
        None => format!("line {line}: "),
    };
    assert!(text.contains(&place), "{text}");
    for w in words {
        assert!(text.contains(w), "{name}: '{w}' not in: {text}");
    }
}

#[test]
fn empty_files() {
    expect_parse_error("empty.csv", &MATRIX, 1, None, &["empty", "header"]);
    // Its third line is one tab: a line with a delimiter is not blank (issue
    // 10, item 18), so it is a tab-delimited line of two empty fields.
    expect_parse_error(
        "blank_only.csv",
        &MATRIX,
        3,
        Some(2),
        &["only delimiters and spaces"],
    );
    expect_parse_error("empty.csv", &EDGES, 1, None, &["empty"]);
}

#[test]
fn header_without_data() {
    expect_parse_error("header_only.csv", &MATRIX, 1, None, &["no data rows"]);
    expect_parse_error("edges_header_only.csv", &EDGES, 1, None, &["no data lines"]);
    expect_parse_error("one_field_header.csv", &MATRIX, 1, None, &["one field"]);
}

#[test]
fn ragged_rows() {
    expect_parse_error(
        "ragged.csv",
        &MATRIX,
        7,
        None,
        &["5 fields, expected 9 like the header on line 1"],
    );
}

#[test]
fn bad_values() {
    expect_parse_error(
        "word.csv",
        &MATRIX,
        3,
        Some(3),
        &["\"many\" is not a number"],
    );
    expect_parse_error("negative.csv", &MATRIX, 2, Some(3), &["\"-2\" is negative"]);
    expect_parse_error("nan.csv", &MATRIX, 3, Some(2), &["\"NaN\" is NaN"]);
    expect_parse_error("inf.csv", &MATRIX, 2, Some(2), &["\"inf\" is infinite"]);
    expect_parse_error(
        "edges_word.csv",
        &EDGES,
        3,
        Some(3),
        &["\"lots\" is not a number"],
    );
    expect_parse_error("edges_negative.csv", &EDGES, 2, Some(3), &["negative"]);
}

#[test]
fn bad_labels() {
    expect_parse_error(
        "dup_row.csv",
        &MATRIX,
        4,
        Some(1),
        &["\"clover\"", "line 2"],
    );
    expect_parse_error("dup_col.csv", &MATRIX, 1, Some(5), &["\"bee\"", "field 2"]);
    expect_parse_error(
        "empty_row_label.csv",
        &MATRIX,
        3,
        Some(1),
        &["empty row label"],
    );
    expect_parse_error(
        "empty_col_label.csv",
        &MATRIX,
        1,
        Some(3),
        &["empty column label"],
    );
    expect_parse_error(
        "edges_empty_label.csv",
        &EDGES,
        2,
        Some(2),
        &["empty column label"],
    );
}

#[test]
fn bad_text() {
    expect_parse_error("latin1.csv", &MATRIX, 3, Some(1), &["0xE1", "UTF-8"]);
    expect_parse_error("unclosed_quote.csv", &MATRIX, 3, Some(1), &["never closed"]);
    expect_parse_error("after_quote.csv", &MATRIX, 2, Some(1), &["closing quote"]);
}

#[test]
fn bad_edge_lines() {
    expect_parse_error("edges_short.csv", &EDGES, 3, None, &["1 field"]);
    expect_parse_error(
        "edges_long.csv",
        &EDGES,
        2,
        None,
        &["4 fields", "at most 3"],
    );
    // A matrix file read as an edge list.
    expect_parse_error(
        "ragged.csv",
        &EDGES,
        1,
        None,
        &["9 fields", "matrix layout"],
    );
}

#[test]
fn no_nonzero_cell() {
    let err = read_network(&bad("all_zero.csv"), &MATRIX).unwrap_err();
    assert!(matches!(err, Error::EmptyNetwork(_)), "{err:?}");
}

#[test]
fn missing_or_unreadable_file() {
    let path = bad("no_such_file.csv");
    let err = read_network(&path, &MATRIX).unwrap_err();
    assert!(
        matches!(&err, Error::Io { path: p, .. } if p == &path),
        "{err:?}"
    );
    assert!(err.to_string().contains("no_such_file.csv"));
    // A directory cannot be read as a file.
    let dir = bad("");
    assert!(matches!(read_network(&dir, &MATRIX), Err(Error::Io { .. })));
}

/// Every fixture fails in both layouts without a panic.
#[test]
fn every_fixture_fails_cleanly_in_both_layouts() {
    let dir = bad("");
    let mut n = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("csv") {
            continue;
        }
        let name = path.file_name().unwrap().to_str().unwrap().to_string();
        let opts = if name.starts_with("edges_") {
            EDGES
        } else {
            MATRIX
        };
        assert!(read_network(&path, &opts).is_err(), "{name} was accepted");
        let _ = read_network(&path, &ReadOptions::default());
        let _ = read_network(&path, &EDGES);
        n += 1;
    }
    assert!(n >= 20, "only {n} fixtures");
}

fn parse(text: &str, opts: &ReadOptions) -> nidus::Result<Network<f64>> {
    parse_network(text.as_bytes(), Path::new("inline.csv"), opts)
}

fn cells(net: &Network<f64>) -> Vec<Vec<f64>> {
    (0..net.nrows())
        .map(|i| (0..net.ncols()).map(|j| net.get(i, j)).collect())
        .collect()
}

/// Layout rules of this crate (module docs of `nidus::io`): BOM, CRLF, blank
/// lines, trimmed and quoted labels, an empty cell is 0.
#[test]
fn matrix_layout_rules() {
    let text = "\u{feff}\r\nplant , \"bee, large\",fly\r\n\r\n  \r\n\"clover, red\",3, \r\n thyme ,2.5,1\r\n";
    let net = parse(text, &MATRIX).unwrap();
    assert_eq!(net.col_labels(), ["bee, large", "fly"]);
    assert_eq!(net.row_labels(), ["clover, red", "thyme"]);
    assert_eq!(cells(&net), vec![vec![3.0, 0.0], vec![2.5, 1.0]]);
    // Physical line numbers with CRLF and blank lines: the bad cell is on line 6.
    let err = parse(&text.replace("2.5", "x"), &MATRIX).unwrap_err();
    assert!(err.to_string().contains("line 6, field 2"), "{err}");
}

#[test]
fn tab_and_semicolon_delimiters() {
    let tab = parse(
        "site\tbeetle one\tmoth\nisle A\t1\t\nisle B\t1\t1\n",
        &MATRIX,
    )
    .unwrap();
    assert_eq!(tab.col_labels(), ["beetle one", "moth"]);
    assert_eq!(cells(&tab), vec![vec![1.0, 0.0], vec![1.0, 1.0]]);
    // Decimal comma only with semicolons.
    let semi = parse("site;a;b\nx;2,5;0,25\ny;1,5;\n", &MATRIX).unwrap();
    assert_eq!(cells(&semi), vec![vec![2.5, 0.25], vec![1.5, 0.0]]);
    let err = parse("site,a,b\nx,2,5,1\n", &MATRIX).unwrap_err();
    assert!(err.to_string().contains("4 fields, expected 3"), "{err}");
    assert!(err.to_string().contains("decimal comma"), "{err}");
    let err = parse("x,a,2,5\n", &EDGES).unwrap_err();
    assert!(err.to_string().contains("decimal comma"), "{err}");
    let err = parse("site,a,b\nx,\"2,5\",1\n", &MATRIX).unwrap_err();
    assert!(
        err.to_string()
            .contains("line 2, field 2: \"2,5\" is not a number"),
        "{err}"
    );
}

/// Edge lists: repeated pairs summed, missing or empty weight 1, labels in
/// order of first appearance, a label may be a row and a column; compared
/// with a slow reference that sums with a map.
#[test]
fn edges_sum_repeats_in_first_appearance_order() {
    let text =
        "clover,bee\nthyme,fly,2\n\nclover,bee,\nbee,clover,0.5\nclover, fly ,3\nthyme,bee,0\n";
    let net = parse(text, &EDGES).unwrap();
    assert_eq!(net.row_labels(), ["clover", "thyme", "bee"]);
    assert_eq!(net.col_labels(), ["bee", "fly", "clover"]);
    let mut reference: HashMap<(&str, &str), f64> = HashMap::new();
    for line in text.lines().filter(|l| !l.trim().is_empty()) {
        let f: Vec<&str> = line.split(',').map(str::trim).collect();
        let w = f
            .get(2)
            .filter(|w| !w.is_empty())
            .map_or(1.0, |w| w.parse().unwrap());
        *reference.entry((f[0], f[1])).or_default() += w;
    }
    for (i, r) in net.row_labels().iter().enumerate() {
        for (j, c) in net.col_labels().iter().enumerate() {
            let want = reference
                .get(&(r.as_str(), c.as_str()))
                .copied()
                .unwrap_or(0.0);
            assert_eq!(net.get(i, j), want, "{r} {c}");
        }
    }
    assert_eq!(net.get(0, 0), 2.0);
    assert_eq!(net.links(), 4); // thyme-bee has weight 0: no link
}

#[test]
fn edge_header_detection() {
    // Auto: a weight field that is a word marks a header.
    let net = parse("plant,visitor,visits\nclover,bee,3\n", &EDGES).unwrap();
    assert_eq!(net.row_labels(), ["clover"]);
    // Auto: two fields with too few lines below to judge: an error.
    let err = parse("plant,visitor\nclover,bee\n", &EDGES).unwrap_err();
    assert!(err.to_string().contains("line 1: cannot tell"), "{err}");
    // Present: always skipped; Absent: never.
    let present = ReadOptions {
        edge_header: EdgeHeader::Present,
        ..EDGES
    };
    let net = parse("\nplant,visitor\nclover,bee\n", &present).unwrap();
    assert_eq!(net.row_labels(), ["clover"]);
    let absent = ReadOptions {
        edge_header: EdgeHeader::Absent,
        ..EDGES
    };
    let err = parse("plant,visitor,visits\nclover,bee,3\n", &absent).unwrap_err();
    assert!(
        err.to_string()
            .contains("line 1, field 3: \"visits\" is not a number"),
        "{err}"
    );
    // Auto: a numeric third field on line 1 is data.
    let net = parse("clover;bee;2,5\nthyme;bee\n", &EDGES).unwrap();
    assert_eq!(net.get(0, 0), 2.5);
}

#[test]
fn options_parse_and_print() {
    assert_eq!("edges".parse::<Layout>().unwrap(), Layout::Edges);
    assert_eq!(Layout::default().to_string(), "matrix");
    assert!("rows".parse::<Layout>().is_err());
    assert_eq!("yes".parse::<EdgeHeader>().unwrap(), EdgeHeader::Present);
    assert_eq!("no".parse::<EdgeHeader>().unwrap(), EdgeHeader::Absent);
    assert_eq!(EdgeHeader::default().name(), "auto");
    assert!("maybe".parse::<EdgeHeader>().is_err());
}

/// The same network in both layouts reads identically.
#[test]
fn matrix_and_edges_agree() {
    let m = parse("plant,bee,fly\nclover,3,1\nthyme,0,2\n", &MATRIX).unwrap();
    let e = parse("clover,bee,3\nclover,fly\nthyme,fly,2\n", &EDGES).unwrap();
    assert_eq!(m.row_labels(), e.row_labels());
    assert_eq!(m.col_labels(), e.col_labels());
    assert_eq!(cells(&m), cells(&e));
}

/// Large, sparse edge lists give sparse storage and the same cells as a map.
#[test]
fn sparse_edge_list() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
    let (m, n) = (2100u32, 2000u32);
    let mut text = String::new();
    let mut reference: HashMap<(u32, u32), f64> = HashMap::new();
    for k in 0..3 * m {
        // Every label appears once, then random cells (some repeated).
        let (i, j) = if k < m {
            (k, k % n)
        } else {
            (rng.random_range(0..m), rng.random_range(0..n))
        };
        let w = rng.random_range(1..=20u32) as f64;
        text.push_str(&format!("p{i},v{j},{w}\n"));
        *reference.entry((i, j)).or_default() += w;
    }
    let net = parse(&text, &EDGES).unwrap();
    assert!(net.is_sparse());
    assert_eq!(net.links(), reference.len());
    let rows: HashMap<&str, usize> = net
        .row_labels()
        .iter()
        .enumerate()
        .map(|(k, l)| (l.as_str(), k))
        .collect();
    let cols: HashMap<&str, usize> = net
        .col_labels()
        .iter()
        .enumerate()
        .map(|(k, l)| (l.as_str(), k))
        .collect();
    for (&(i, j), &w) in &reference {
        let (r, c) = (
            rows[format!("p{i}").as_str()],
            cols[format!("v{j}").as_str()],
        );
        assert_eq!(net.get(r, c), w);
    }
}

/// Labels that need quoting: every delimiter, quotes, line breaks, outer
/// spaces, non-ASCII text.
fn awkward_label(rng: &mut Xoshiro256PlusPlus, k: usize) -> String {
    const PIECES: [&str; 12] = [
        "a", "Bombus", " ", ",", ";", "\t", "\"", "é", "\n", "sp.", "1", "ß",
    ];
    let len = rng.random_range(0..5);
    let mut s: String = (0..len)
        .map(|_| PIECES[rng.random_range(0..PIECES.len())])
        .collect();
    s.push_str(&format!("#{k}")); // unique and non-empty
    if rng.random_bool(0.2) {
        s = format!(" {s} ");
    }
    s
}

fn awkward_weight(rng: &mut Xoshiro256PlusPlus) -> f64 {
    match rng.random_range(0..7) {
        0 | 1 => 0.0,
        2 => rng.random_range(1..100u32) as f64,
        3 => rng.random::<f64>(),
        4 => 1.0 / rng.random_range(1..50u32) as f64,
        5 => rng.random::<f64>() * 10f64.powi(rng.random_range(-300..300)),
        _ => 1e17 * rng.random_range(1..9u32) as f64,
    }
}

/// write_matrix then read: identical labels in order and bit-identical
/// weights, for every delimiter and hundreds of random networks.
#[test]
fn write_then_read_round_trips_exactly() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(2024);
    for case in 0..300 {
        let (m, n) = (rng.random_range(1..8), rng.random_range(1..8));
        let mut w = Array2::from_shape_fn((m, n), |_| awkward_weight(&mut rng));
        w[[rng.random_range(0..m), rng.random_range(0..n)]] = 2.0; // one link at least
        let rows = (0..m).map(|k| awkward_label(&mut rng, k)).collect();
        let cols = (0..n).map(|k| awkward_label(&mut rng, k)).collect();
        let net = Network::from_dense(w, rows, cols).unwrap();
        for delim in [b',', b'\t', b';'] {
            let mut out = Vec::new();
            write_matrix(&net, &mut out, delim).unwrap();
            let back = parse_network(&out, Path::new("rt.csv"), &KEEP_EMPTY)
                .unwrap_or_else(|e| panic!("case {case}: {e}\n{}", String::from_utf8_lossy(&out)));
            assert_eq!(back.row_labels(), net.row_labels(), "case {case}");
            assert_eq!(back.col_labels(), net.col_labels(), "case {case}");
            for i in 0..m {
                for j in 0..n {
                    assert_eq!(
                        back.get(i, j).to_bits(),
                        net.get(i, j).to_bits(),
                        "case {case}"
                    );
                }
            }
        }
    }
}

/// Integer weights are written without ".0"; the text is what we expect.
#[test]
fn integers_are_written_plainly() {
    let net = Network::from_dense(
        ndarray::array![[3u32, 0], [1, 12]],
        vec!["a b".into(), "c;d".into()],
        vec!["x".into(), " y".into()],
    )
    .unwrap();
    let mut out = Vec::new();
    write_matrix(&net, &mut out, b';').unwrap();
    assert_eq!(
        String::from_utf8(out.clone()).unwrap(),
        ";x;\" y\"\na b;3;0\n\"c;d\";1;12\n"
    );
    let back = parse_network(&out, Path::new("int.csv"), &MATRIX).unwrap();
    assert_eq!(cells(&back), vec![vec![3.0, 0.0], vec![1.0, 12.0]]);
    assert!(write_matrix(&net, Vec::new(), b'|').is_err());
}

/// Reference: the `csv` crate reads the same quoted text (RFC 4180
/// quoting); our matrix reader must find the same labels and values.
#[test]
fn quoted_text_agrees_with_the_csv_crate() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(99);
    for case in 0..200 {
        let delim = [b',', b'\t', b';'][case % 3];
        let style = if case % 2 == 0 {
            csv::QuoteStyle::Always
        } else {
            csv::QuoteStyle::NonNumeric
        };
        let (m, n) = (rng.random_range(1..6), rng.random_range(1..6));
        let mut wtr = csv::WriterBuilder::new()
            .delimiter(delim)
            .quote_style(style)
            .from_writer(Vec::new());
        let mut header = vec!["species".to_string()];
        header.extend((0..n).map(|k| awkward_label(&mut rng, k)));
        wtr.write_record(&header).unwrap();
        for i in 0..m {
            let mut rec = vec![awkward_label(&mut rng, i)];
            rec.extend((0..n).map(|_| rng.random_range(1..1000u32).to_string()));
            wtr.write_record(&rec).unwrap();
        }
        let text = wtr.into_inner().unwrap();
        let net = parse_network(&text, Path::new("q.csv"), &MATRIX)
            .unwrap_or_else(|e| panic!("case {case}: {e}\n{}", String::from_utf8_lossy(&text)));
        let mut rdr = csv::ReaderBuilder::new()
            .delimiter(delim)
            .has_headers(false)
            .from_reader(&text[..]);
        let records: Vec<csv::StringRecord> = rdr.records().map(|r| r.unwrap()).collect();
        let want_cols: Vec<&str> = records[0].iter().skip(1).collect();
        assert_eq!(net.col_labels(), want_cols, "case {case}");
        for (i, rec) in records[1..].iter().enumerate() {
            assert_eq!(net.row_labels()[i], &rec[0], "case {case}");
            for j in 0..n {
                assert_eq!(net.get(i, j), rec[j + 1].parse::<f64>().unwrap());
            }
        }
    }
}

/// An edge list over 1 MiB (label table grown many times) against a slow
/// reference: a map summing weights and first-appearance orders kept by
/// hand.
#[test]
fn large_edge_list_matches_a_map() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(11);
    let mut text = String::from("plant,visitor,visits\n");
    let mut sums: HashMap<(String, String), f64> = HashMap::new();
    let (mut row_order, mut col_order): (Vec<String>, Vec<String>) = (Vec::new(), Vec::new());
    let (mut row_at, mut col_at): (HashMap<String, usize>, HashMap<String, usize>) =
        (HashMap::new(), HashMap::new());
    while text.len() < (1 << 20) + 1000 {
        let r = format!("plant number {}", rng.random_range(0..3000u32));
        let c = format!("v{}", rng.random_range(0..500u32));
        let w = rng.random_range(1..=20u32) as f64;
        text.push_str(&format!("{r},{c},{w}\n"));
        if !row_at.contains_key(&r) {
            row_at.insert(r.clone(), row_order.len());
            row_order.push(r.clone());
        }
        if !col_at.contains_key(&c) {
            col_at.insert(c.clone(), col_order.len());
            col_order.push(c.clone());
        }
        *sums.entry((r, c)).or_default() += w;
    }
    let net = parse(&text, &EDGES).unwrap();
    assert_eq!(net.row_labels(), row_order);
    assert_eq!(net.col_labels(), col_order);
    assert_eq!(net.links(), sums.len()); // every other cell is 0
    for ((r, c), w) in &sums {
        assert_eq!(net.get(row_at[r], col_at[c]), *w, "{r} {c}");
    }
}
