//! The input shapes of the README's table ("What nidus reads"), one test per
//! row, on the hand-made fixtures of `tests/data/shapes/` (an invented
//! meadow; see its README). Each test checks the labels, every cell and the
//! reader's notes. The expected values are the fixture's own content, typed
//! out here a second time: the reference is the file as written by hand.
//!
//! Below them, the reader's rules (header rule of two-column edge lists,
//! unlabelled tables, species without links, line ends, transposition) and
//! the reproducers of issue 10, items 10, 13, 15, 16, 17 and 18.

use std::path::{Path, PathBuf};

use nidus::io::{
    parse_network, parse_network_reported, read_network_reported, write_matrix, EdgeHeader,
    HeaderRule, Labels, Layout, ReadNote, ReadOptions, ReadOutcome, HEADER_MIN_LINES,
};
use nidus::{Error, Network};

fn shape(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/shapes")
        .join(name)
}

const EDGES: ReadOptions = ReadOptions {
    layout: Layout::Edges,
    edge_header: EdgeHeader::Auto,
    labels: Labels::Auto,
    keep_empty: false,
    transpose: false,
};

fn read(name: &str, opts: &ReadOptions) -> ReadOutcome {
    read_network_reported(&shape(name), opts).unwrap_or_else(|e| panic!("{name}: {e}"))
}

fn parse(text: &str, opts: &ReadOptions) -> nidus::Result<ReadOutcome> {
    parse_network_reported(text.as_bytes(), Path::new("typed.csv"), opts)
}

fn cells(net: &Network<f64>) -> Vec<Vec<f64>> {
    (0..net.nrows())
        .map(|i| (0..net.ncols()).map(|j| net.get(i, j)).collect())
        .collect()
}

const PLANTS: [&str; 4] = ["clover", "thyme", "sage", "orchid"];
const VISITORS: [&str; 4] = ["bumblebee", "honeybee", "hoverfly", "beetle"];

/// The meadow's visit counts, as typed into every fixture.
fn meadow() -> Vec<Vec<f64>> {
    vec![
        vec![3.0, 2.0, 1.0, 1.0],
        vec![2.0, 1.0, 1.0, 0.0],
        vec![1.0, 1.0, 0.0, 0.0],
        vec![1.0, 0.0, 0.0, 0.0],
    ]
}

fn assert_meadow(got: &ReadOutcome, notes: &[ReadNote]) {
    assert_eq!(got.network.row_labels(), PLANTS);
    assert_eq!(got.network.col_labels(), VISITORS);
    assert_eq!(cells(&got.network), meadow());
    assert_eq!(got.report.notes, notes);
}

// ---- One test per row of the README's table ----

/// Two-column log without a header: each line is one visit, repeats are
/// counted; the first line's labels reappear, so it is data (no note).
#[test]
fn shape_two_column_log_without_header() {
    assert_meadow(&read("log_two_columns.csv", &EDGES), &[]);
}

/// Two-column log with a header (`plant,visitor`): recognised and reported.
/// Without the rule the header became a species pair (issue 9, item 1).
#[test]
fn shape_two_column_log_with_header() {
    assert_meadow(
        &read("log_two_columns_header.csv", &EDGES),
        &[ReadNote::EdgeHeader {
            line: 1,
            words: vec!["plant".into(), "visitor".into()],
            rule: HeaderRule::LabelsAppearOnce,
        }],
    );
    // Read as data on request: the header words become a pair.
    let absent = ReadOptions {
        edge_header: EdgeHeader::Absent,
        ..EDGES
    };
    let net = read("log_two_columns_header.csv", &absent).network;
    assert_eq!((net.nrows(), net.ncols()), (5, 5));
}

/// Three-column log with a header whose weight field is a word, and a
/// count-0 line whose visitor (`moth`) has no other line: dropped, reported.
#[test]
fn shape_three_column_log() {
    assert_meadow(
        &read("log_three_columns.csv", &EDGES),
        &[
            ReadNote::EdgeHeader {
                line: 1,
                words: vec!["plant".into(), "visitor".into(), "visits".into()],
                rule: HeaderRule::WeightNotNumber,
            },
            ReadNote::Dropped {
                side: "column",
                count: 1,
                first: vec!["moth".into()],
            },
        ],
    );
}

/// A table without labels (numpy's `savetxt(..., delimiter=",")`): read
/// whole, labelled r1.. and c1.., reported (issue 9, item 2).
#[test]
fn shape_unlabelled_matrix() {
    let got = read("matrix_unlabelled.csv", &ReadOptions::default());
    assert_eq!(got.network.row_labels(), ["r1", "r2", "r3", "r4"]);
    assert_eq!(got.network.col_labels(), ["c1", "c2", "c3", "c4"]);
    assert_eq!(cells(&got.network), meadow());
    assert_eq!(
        got.report.notes,
        [ReadNote::Unlabelled { rows: 4, cols: 4 }]
    );
}

#[test]
fn shape_labelled_matrix() {
    assert_meadow(&read("matrix_labelled.csv", &ReadOptions::default()), &[]);
}

#[test]
fn shape_tab_separated_matrix() {
    assert_meadow(&read("matrix_tab.tsv", &ReadOptions::default()), &[]);
}

/// Semicolons with decimal commas: `2,5` is 2.5.
#[test]
fn shape_semicolon_with_decimal_comma() {
    let got = read(
        "matrix_semicolon_decimal_comma.csv",
        &ReadOptions::default(),
    );
    let mut want = meadow();
    want[0][0] = 2.5;
    want[2][1] = 0.5;
    assert_eq!(got.network.row_labels(), PLANTS);
    assert_eq!(got.network.col_labels(), VISITORS);
    assert_eq!(cells(&got.network), want);
    assert!(got.report.notes.is_empty());
}

/// A UTF-8 byte-order mark is not part of the first label.
#[test]
fn shape_byte_order_mark() {
    let bytes = std::fs::read(shape("matrix_bom.csv")).unwrap();
    assert!(
        bytes.starts_with(b"\xEF\xBB\xBF"),
        "the fixture lost its mark"
    );
    assert_meadow(&read("matrix_bom.csv", &ReadOptions::default()), &[]);
}

#[test]
fn shape_crlf_line_ends() {
    let bytes = std::fs::read(shape("matrix_crlf.csv")).unwrap();
    assert!(bytes.windows(2).any(|w| w == b"\r\n"));
    assert_meadow(&read("matrix_crlf.csv", &ReadOptions::default()), &[]);
}

/// Old Mac line ends (a carriage return alone): read as line breaks and
/// reported. They used to give a misleading "label repeats" error (issue 9,
/// item 4).
#[test]
fn shape_cr_only_line_ends() {
    let bytes = std::fs::read(shape("matrix_cr.csv")).unwrap();
    assert!(bytes.contains(&b'\r') && !bytes.contains(&b'\n'));
    assert_meadow(
        &read("matrix_cr.csv", &ReadOptions::default()),
        &[ReadNote::CarriageReturns],
    );
}

// ---- The header rule of two-column edge lists (EdgeHeader::Auto) ----

#[test]
fn header_rule_needs_enough_lines_and_no_lonely_line() {
    // Labels that reappear: data, whatever the file's size.
    let got = parse("clover,bee\nclover,fly\n", &EDGES).unwrap();
    assert_eq!(got.network.row_labels(), ["clover"]);
    assert!(got.report.notes.is_empty());
    // A lonely first line with too few lines below: an error, not a guess.
    let few = String::from("plant,visitor\nclover,bee\nclover,fly\nthyme,bee\n");
    assert_eq!(HEADER_MIN_LINES, 4);
    let err = parse(&few, &EDGES).unwrap_err().to_string();
    assert!(err.starts_with("typed.csv: line 1: cannot tell"), "{err}");
    assert!(err.contains("3 lines below it"), "{err}");
    assert!(err.contains("--edge-header yes"), "{err}");
    // One more line: a header.
    let enough = few.clone() + "thyme,fly\n";
    let got = parse(&enough, &EDGES).unwrap();
    assert_eq!(got.network.row_labels(), ["clover", "thyme"]);
    assert_eq!(got.report.notes.len(), 1);
    // Another lonely line (orchid-moth shares no label): lonely lines are
    // normal in this file, so the first one is ambiguous.
    let err = parse(&(enough.clone() + "orchid,moth\n"), &EDGES)
        .unwrap_err()
        .to_string();
    assert!(err.contains("so do 1 other line"), "{err}");
    // Saying which settles it either way.
    let yes = ReadOptions {
        edge_header: EdgeHeader::Present,
        ..EDGES
    };
    let got = parse(&(enough.clone() + "orchid,moth\n"), &yes).unwrap();
    assert_eq!(got.network.nrows(), 3);
    let no = ReadOptions {
        edge_header: EdgeHeader::Absent,
        ..EDGES
    };
    let got = parse(&(enough + "orchid,moth\n"), &no).unwrap();
    assert_eq!(got.network.nrows(), 4);
    // An empty third field is still a two-label line.
    let got = parse("plant,visitor,\na,x\na,y\nb,x\nb,y\n", &EDGES).unwrap();
    assert_eq!(got.network.row_labels(), ["a", "b"]);
}

/// The issue's case: a 5 x 5 log with `plant,visitor` on top read as 6 x 6.
#[test]
fn header_rule_reads_a_five_by_five_log() {
    let mut text = String::from("plant,visitor\n");
    for i in 0..5 {
        for j in 0..5 - i {
            text.push_str(&format!("p{i},v{j}\n"));
        }
    }
    let got = parse(&text, &EDGES).unwrap();
    assert_eq!((got.network.nrows(), got.network.ncols()), (5, 5));
    // A perfectly nested staircase: NODF 100 (Almeida-Neto et al. 2008, the
    // maximum of the index).
    let n = nidus::metrics::nodf(&got.network, nidus::Order::Sorted).unwrap();
    assert_eq!(n.total, 100.0);
}

// ---- Unlabelled tables (Labels) ----

#[test]
fn labels_auto_both_and_none() {
    let text = "1,1,0\n1,0,1\n";
    // Both: the first line and column are labels.
    let both = ReadOptions {
        labels: Labels::Both,
        keep_empty: true,
        ..ReadOptions::default()
    };
    let got = parse(text, &both).unwrap();
    assert_eq!(got.network.col_labels(), ["1", "0"]);
    assert_eq!(got.network.row_labels(), ["1"]);
    // None: every field is a value.
    let none = ReadOptions {
        labels: Labels::None,
        ..ReadOptions::default()
    };
    let got = parse(text, &none).unwrap();
    assert_eq!(cells(&got.network), [[1.0, 1.0, 0.0], [1.0, 0.0, 1.0]]);
    assert!(got.report.notes.is_empty()); // asked for, not decided
                                          // Auto: an empty corner cell means labels; so does a text corner.
    let got = parse(",1,2\na,1,0\nb,1,1\n", &ReadOptions::default()).unwrap();
    assert_eq!(got.network.col_labels(), ["1", "2"]);
    assert!(got.report.notes.is_empty());
    // Auto: empty cells in an unlabelled table are zeros.
    let got = parse("1,,1\n,1,1\n", &ReadOptions::default()).unwrap();
    assert_eq!(cells(&got.network), [[1.0, 0.0, 1.0], [0.0, 1.0, 1.0]]);
    // Auto: a numeric first line but a text row label below: labelled
    // (numbers as column labels, "7" as the corner).
    let got = parse("7,1,2\na,1,0\nb,1,1\n", &ReadOptions::default()).unwrap();
    assert_eq!(got.network.row_labels(), ["a", "b"]);
    assert_eq!(got.network.col_labels(), ["1", "2"]);
    // The old failure: "the column label "1" repeats".
    let got = parse("0,1,1\n1,1,0\n1,0,0\n", &ReadOptions::default()).unwrap();
    assert_eq!(got.network.nrows(), 3);
    assert_eq!("none".parse::<Labels>().unwrap(), Labels::None);
    assert!("row".parse::<Labels>().is_err());
    for l in Labels::ALL {
        assert_eq!(l.name().parse::<Labels>().unwrap(), l);
    }
}

/// Row labels without a header line, and a header without row labels.
#[test]
fn labels_rows_and_cols() {
    let rows = ReadOptions {
        labels: Labels::Rows,
        ..ReadOptions::default()
    };
    let got = parse("clover,1,0,1\nthyme,1,1,0\n", &rows).unwrap();
    assert_eq!(got.network.row_labels(), ["clover", "thyme"]);
    assert_eq!(got.network.col_labels(), ["c1", "c2", "c3"]);
    assert_eq!(cells(&got.network), [[1.0, 0.0, 1.0], [1.0, 1.0, 0.0]]);
    let err = parse("clover,1\nclover,1\n", &rows)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("line 2, field 1: the row label \"clover\""),
        "{err}"
    );
    let cols = ReadOptions {
        labels: Labels::Cols,
        ..ReadOptions::default()
    };
    let got = parse("bee,fly\n1,1\n1,0\n", &cols).unwrap();
    assert_eq!(got.network.row_labels(), ["r1", "r2"]);
    assert_eq!(got.network.col_labels(), ["bee", "fly"]);
    assert_eq!(cells(&got.network), [[1.0, 1.0], [1.0, 0.0]]);
    let err = parse("bee,fly\n", &cols).unwrap_err().to_string();
    assert!(
        err.contains("line 1: the file has a header but no data rows"),
        "{err}"
    );
    let err = parse("bee,fly\n1,1,1\n", &cols).unwrap_err().to_string();
    assert!(
        err.contains("expected 2 like the header on line 1"),
        "{err}"
    );
    // Without --labels rows, such a file's first line is a header whose
    // labels repeat: an error naming the field, not a misread.
    let err = parse("clover,1,0,1\nthyme,1,1,0\n", &ReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("line 1, field 4: the column label \"1\" repeats"),
        "{err}"
    );
}

#[test]
fn unlabelled_errors_name_the_place() {
    let err = parse("1,0\n1,1,0\n", &ReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("line 2: this line has 3 fields, expected 2 like the first line"),
        "{err}"
    );
    let err = parse("1,0\n1,x\n", &ReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("line 2, field 2: \"x\" is not a number"),
        "{err}"
    );
}

// ---- Species without links (issue 9, item 3) ----

/// NODF with and without an all-zero row: the row part of a perfectly
/// nested 2-row table is 100 (Almeida-Neto et al. 2008, eq. for N_paired:
/// the lower row's links all under the upper row's); an all-zero third row
/// adds two pairs that score 0, pulling the row part to 100/3.
#[test]
fn species_without_links_are_dropped_unless_kept() {
    let text = "plant,a,b,c\nclover,1,1,1\nthyme,1,0,0\nsage,0,0,0\n";
    let got = parse(text, &ReadOptions::default()).unwrap();
    assert_eq!(got.network.row_labels(), ["clover", "thyme"]);
    assert_eq!(
        got.report.notes,
        [ReadNote::Dropped {
            side: "row",
            count: 1,
            first: vec!["sage".into()]
        }]
    );
    assert_eq!(got.report.dropped(), (1, 0));
    let nodf = nidus::metrics::nodf(&got.network, nidus::Order::Sorted).unwrap();
    assert_eq!(nodf.rows, Some(100.0));
    let keep = ReadOptions {
        keep_empty: true,
        ..ReadOptions::default()
    };
    let kept = parse(text, &keep).unwrap();
    assert_eq!(kept.network.nrows(), 3);
    assert!(kept.report.notes.is_empty());
    let nodf = nidus::metrics::nodf(&kept.network, nidus::Order::Sorted).unwrap();
    assert!((nodf.rows.unwrap() - 100.0 / 3.0).abs() < 1e-12);
}

#[test]
fn dropped_labels_are_listed_up_to_five() {
    let mut text = String::from("plant,a\nclover,1\n");
    for k in 0..7 {
        text.push_str(&format!("weed{k},0\n"));
    }
    let got = parse(&text, &ReadOptions::default()).unwrap();
    assert_eq!(
        got.report.notes[0].to_string(),
        "dropped 7 row species with no link: weed0, weed1, weed2, weed3, weed4 and 2 more"
    );
}

/// Nothing left after dropping: the empty-network error, in both layouts.
#[test]
fn nothing_left_is_an_error() {
    let err = parse("p,a,b\nx,0,0\n", &ReadOptions::default()).unwrap_err();
    assert!(matches!(err, Error::EmptyNetwork(_)), "{err:?}");
    let err = parse("x,a,0\ny,b,0\n", &EDGES).unwrap_err();
    assert!(matches!(err, Error::EmptyNetwork(_)), "{err:?}");
}

// ---- Transposition ----

#[test]
fn transpose_swaps_the_sides_in_both_layouts() {
    let t = ReadOptions {
        transpose: true,
        ..ReadOptions::default()
    };
    let got = read("matrix_labelled.csv", &t);
    assert_eq!(got.network.row_labels(), VISITORS);
    assert_eq!(got.network.col_labels(), PLANTS);
    let m = meadow();
    let want: Vec<Vec<f64>> = (0..4).map(|j| (0..4).map(|i| m[i][j]).collect()).collect();
    assert_eq!(cells(&got.network), want);
    let te = ReadOptions {
        transpose: true,
        ..EDGES
    };
    let got = read("log_three_columns.csv", &te);
    assert_eq!(got.network.row_labels(), VISITORS);
    assert_eq!(cells(&got.network), want);
    // The dropped visitor is now a row.
    assert_eq!(got.report.dropped(), (1, 0));
}

// ---- Line ends ----

#[test]
fn mixed_line_ends_are_an_error_naming_the_line() {
    let err = parse("p,a,b\nx,1,0\ry,1,1\n", &ReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.starts_with("typed.csv: line 2: a carriage return"),
        "{err}"
    );
    // CR before CRLF (a doubled CR, as some exporters write) is still fine.
    let got = parse("p,a\r\r\nx,1\r\r\n", &ReadOptions::default()).unwrap();
    assert_eq!(got.network.col_labels(), ["a"]);
}

// ---- Issue 10 reproducers ----

/// Issue 10, item 13: a 1 MB file of blank lines took 204 s (quadratic
/// skipping). It is read in one pass now; this test would take minutes if it
/// were not (no timing assertion: see benches for speed).
#[test]
fn issue10_13_a_megabyte_of_blank_lines() {
    for (layout, tail) in [(Layout::Matrix, "p,a\nx,1\n"), (Layout::Edges, "x,a,1\n")] {
        let text = " \n".repeat(1 << 19) + tail;
        let opts = ReadOptions {
            layout,
            ..ReadOptions::default()
        };
        let got = parse(&text, &opts).unwrap();
        assert_eq!(got.network.links(), 1);
        let err = parse(&" \n".repeat(1 << 19), &opts).unwrap_err();
        assert!(err.to_string().contains("empty"), "{err}");
    }
}

/// Issue 10, item 15: `a,x,1e308` twice summed to infinity and passed.
#[test]
fn issue10_15_repeated_edge_lines_summed_past_the_largest_float() {
    let err = parse("a,x,1e308\nb,x,1\na,x,1e308\n", &EDGES).unwrap_err();
    match &err {
        Error::BadWeight { row, col, .. } => assert_eq!((row.as_str(), col.as_str()), ("a", "x")),
        other => panic!("expected a weight error, got {other:?}"),
    }
    assert!(err.to_string().contains("repeated lines"), "{err}");
    // Large sums that fit are kept exactly.
    let got = parse("a,x,1e307\na,x,1e307\n", &EDGES).unwrap();
    assert_eq!(got.network.get(0, 0), 2e307);
}

/// Issue 10, item 16: `1e-400` silently became an absence.
#[test]
fn issue10_16_a_positive_value_that_underflows() {
    let err = parse("p,a,b\nx,1,1e-400\n", &ReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("line 2, field 3: \"1e-400\" is too small"),
        "{err}"
    );
    let err = parse("x,a,0.1e-330\n", &EDGES).unwrap_err().to_string();
    assert!(err.contains("line 1, field 3"), "{err}");
    // Zeros written any way are zeros; the smallest subnormal is kept.
    let got = parse("p,a,b\nx,1,0e-400\ny,1,5e-324\n", &ReadOptions::default()).unwrap();
    assert_eq!(got.network.get(1, 1), 5e-324);
}

/// Issue 10, item 17: a `;` file with decimal commas that also holds
/// `1.234` read it as 1.234.
#[test]
fn issue10_17_mixed_decimal_marks_in_a_semicolon_file() {
    let err = parse("p;a;b\nx;2,5;1\ny;1.234;1\n", &ReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("line 3, field 2: \"1.234\" has a decimal point"),
        "{err}"
    );
    assert!(err.contains("line 2, field 2 (\"2,5\")"), "{err}");
    let err = parse("x;a;1.5\ny;b;2,5\n", &EDGES).unwrap_err().to_string();
    assert!(err.contains("line 2, field 3"), "{err}");
    // Points alone, or commas alone, are fine.
    assert!(parse("p;a\nx;1.5\ny;2\n", &ReadOptions::default()).is_ok());
    assert!(parse("p;a\nx;1,5\ny;2\n", &ReadOptions::default()).is_ok());
}

/// Issue 10, item 18: a TSV header whose only label is a form feed was taken
/// for a blank line, and `write_matrix` wrote it unquoted.
#[test]
fn issue10_18_form_feed_label_and_round_trip() {
    let got = parse("\t\u{c}\nx\t1\n", &ReadOptions::default()).unwrap();
    assert_eq!(got.network.col_labels(), ["\u{c}"]);
    assert_eq!(got.network.row_labels(), ["x"]);
    let net = Network::from_dense(
        ndarray::array![[1.0, 2.0]],
        vec!["\u{c}".into()],
        vec!["\u{b}a".into(), "b\u{7f}".into()],
    )
    .unwrap();
    for delim in [b',', b'\t', b';'] {
        let mut out = Vec::new();
        write_matrix(&net, &mut out, delim).unwrap();
        let text = String::from_utf8(out.clone()).unwrap();
        assert!(text.contains("\"\u{c}\""), "{text:?}");
        let back = parse_network(&out, Path::new("rt"), &ReadOptions::default()).unwrap();
        assert_eq!(back.row_labels(), net.row_labels());
        assert_eq!(back.col_labels(), net.col_labels());
    }
    // A line of delimiters only is not blank: an error naming it.
    let err = parse("p,a\nx,1\n,\n", &ReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("line 3, field 1: this line holds only delimiters"),
        "{err}"
    );
}

// ---- Edge-list hint (issue 9, item 5) ----

#[test]
fn edge_lists_are_recognised_for_the_hint() {
    use nidus::io::looks_like_edge_list;
    assert!(looks_like_edge_list(
        &std::fs::read(shape("log_two_columns_header.csv")).unwrap()
    ));
    assert!(looks_like_edge_list(
        &std::fs::read(shape("log_three_columns.csv")).unwrap()
    ));
    assert!(!looks_like_edge_list(
        &std::fs::read(shape("matrix_labelled.csv")).unwrap()
    ));
    // A two-column matrix has a number in its second field.
    assert!(!looks_like_edge_list(b"plant,bee\nclover,1\nthyme,0\n"));
    assert!(!looks_like_edge_list(b"clover,bee\n"));
}
