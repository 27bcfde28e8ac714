//! The demo data in `data-demo/` (invented, see its README): the files are
//! exactly what `examples/make_demo.rs` writes, and the two layouts of the
//! invented meadow read as the identical network.

use std::path::{Path, PathBuf};

use nidus::io::{read_network, EdgeHeader, Layout, ReadOptions};

#[allow(dead_code)]
#[path = "../examples/make_demo.rs"]
mod make_demo;

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("data-demo")
        .join(name)
}

#[test]
fn demo_files_are_reproducible_from_their_seeds() {
    for (name, text) in make_demo::demo_files() {
        let on_disk = std::fs::read_to_string(demo(name)).unwrap();
        assert_eq!(on_disk, text, "{name} differs from what make_demo writes");
    }
}

#[test]
fn meadow_layouts_give_the_identical_network() {
    let matrix = read_network(&demo("meadow_visits.csv"), &ReadOptions::default()).unwrap();
    let opts = ReadOptions {
        layout: Layout::Edges,
        edge_header: EdgeHeader::Auto,
        ..Default::default()
    };
    let edges = read_network(&demo("meadow_visits_edges.csv"), &opts).unwrap();
    assert_eq!(matrix.row_labels(), edges.row_labels());
    assert_eq!(matrix.col_labels(), edges.col_labels());
    assert_eq!(matrix.to_dense().unwrap(), edges.to_dense().unwrap());
    assert_eq!((matrix.nrows(), matrix.ncols()), (20, 26));
    assert!(matrix.is_weighted());
    // The edge log has more lines than links: repeats were summed.
    let lines = std::fs::read_to_string(demo("meadow_visits_edges.csv"))
        .unwrap()
        .lines()
        .count();
    assert!(
        lines - 1 > edges.links(),
        "{lines} lines, {} links",
        edges.links()
    );
}

#[test]
fn islands_table_is_binary() {
    let net = read_network(&demo("islands_presence.csv"), &ReadOptions::default()).unwrap();
    assert_eq!((net.nrows(), net.ncols()), (10, 20));
    assert!(!net.is_weighted());
    assert!(net.col_degrees().iter().all(|&d| d > 0));
}
