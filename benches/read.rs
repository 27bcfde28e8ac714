//! Reading networks from text: edge lists of 10^4 and 10^5 lines (10^6 with
//! `NIDUS_BENCH_BIG=1`), also on one thread (`read_edges_one_thread`), and
//! a 500 x 500 matrix, parsed from memory with
//! `nidus::io::parse_network`. Inputs are synthetic, made here from a seed:
//! uniform random cells of a table with as many rows and columns as a
//! tenth of the lines, integer weights 1-20 (the layout of
//! `examples/gen_edges.rs`).
#![allow(missing_docs)] // criterion_group! makes an undocumented public function

use std::hint::black_box;
use std::path::Path;

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use nidus::io::{parse_network, Layout, ReadOptions};
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

fn edge_text(lines: usize, seed: u64) -> Vec<u8> {
    let side = (lines / 10).max(2) as u64;
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let mut s = String::from("row,col,weight\n");
    for _ in 0..lines {
        let (i, j) = (rng.random_range(0..side), rng.random_range(0..side));
        s.push_str(&format!("p{i},v{j},{}\n", rng.random_range(1..=20u32)));
    }
    s.into_bytes()
}

fn matrix_text(m: usize, n: usize, seed: u64) -> Vec<u8> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let mut s = String::from("site");
    for j in 0..n {
        s.push_str(&format!(",species {j}"));
    }
    s.push('\n');
    for i in 0..m {
        s.push_str(&format!("site {i}"));
        for _ in 0..n {
            let w = if rng.random_bool(0.3) {
                rng.random_range(1..=20u32)
            } else {
                0
            };
            s.push_str(&format!(",{w}"));
        }
        s.push('\n');
    }
    s.into_bytes()
}

fn bench_edges(c: &mut Criterion) {
    let mut sizes = vec![10_000usize, 100_000];
    if std::env::var_os("NIDUS_BENCH_BIG").is_some() {
        sizes.push(1_000_000);
    }
    let opts = ReadOptions {
        layout: Layout::Edges,
        ..Default::default()
    };
    let mut group = c.benchmark_group("read_edges");
    group.sample_size(10);
    for lines in sizes {
        let text = edge_text(lines, 1);
        group.throughput(Throughput::Bytes(text.len() as u64));
        group.bench_with_input(BenchmarkId::from_parameter(lines), &text, |b, text| {
            b.iter(|| parse_network(black_box(text), Path::new("bench.csv"), &opts).unwrap())
        });
    }
    group.finish();
    // The same with one thread: the reader reads files of 1 MiB and more
    // partly on a second thread when there is one (`read_edges`).
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let mut group = c.benchmark_group("read_edges_one_thread");
    group.sample_size(10);
    for lines in sizes_again() {
        let text = edge_text(lines, 1);
        group.throughput(Throughput::Bytes(text.len() as u64));
        group.bench_with_input(BenchmarkId::from_parameter(lines), &text, |b, text| {
            b.iter(|| {
                pool.install(|| parse_network(black_box(text), Path::new("bench.csv"), &opts))
                    .unwrap()
            })
        });
    }
    group.finish();
}

/// The sizes above 10^5 lines that `bench_edges` times on one thread.
fn sizes_again() -> Vec<usize> {
    let mut sizes = vec![100_000usize];
    if std::env::var_os("NIDUS_BENCH_BIG").is_some() {
        sizes.push(1_000_000);
    }
    sizes
}

fn bench_matrix(c: &mut Criterion) {
    let text = matrix_text(500, 500, 2);
    let mut group = c.benchmark_group("read_matrix");
    group.sample_size(10);
    group.throughput(Throughput::Bytes(text.len() as u64));
    group.bench_function("500x500", |b| {
        b.iter(|| {
            parse_network(
                black_box(&text),
                Path::new("bench.csv"),
                &ReadOptions::default(),
            )
            .unwrap()
        })
    });
    group.finish();
}

criterion_group!(benches, bench_edges, bench_matrix);
criterion_main!(benches);
