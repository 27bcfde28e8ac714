//! Temperature timings on seeded random matrices: the given and sorted
//! values with the cell table built afresh (`given_sorted`) and with the
//! table reused as for null draws that keep the number of ones
//! (`given_sorted_reused`), and the packed order with the default search. Larger sizes run when `NIDUS_BENCH_LARGE` is set.
//!
//! `packing_one_start/{lanes,blocked,direct}/N` time the packed order from
//! the sorted start alone (no restarts) with the search's cost tables built
//! by the register-lane loop (the default), the blocked loop it replaced
//! and the direct gather loop before that (same result bit for bit), side
//! by side; N = 300, and 1000 with `NIDUS_BENCH_LARGE`.
//!
//! `packing_few_members/{1x100000,5x1000}` time the exact packing of a
//! table whose smaller side has 1 or 5 members (5 x 5,000 with
//! `NIDUS_BENCH_LARGE`), at fill 0.3.
//!
//! `table_build/{mirrored,cell_by_cell}/{300x300,300x299}` time the table
//! of cell values at fill 0.2: the build (powers per row and column, a
//! square shape solved on one triangle and mirrored) and the cell-by-cell
//! build it replaced (same values bit for bit, asserted), side by side;
//! `table_build/unexpected_only/{300x300,300x299}` times the sorted value's
//! sum without a table (root solves for the unexpected cells only), the
//! alternative to a build when `L` is new.
#![allow(missing_docs)] // criterion's macros generate undocumented functions

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

use nidus::metrics::temperature::{
    packed_few_members, temperature, temperature_with_table, temperature_with_table_blocked,
    temperature_with_table_direct_gathers, unexpected_total, TemperatureOptions,
    UnexpectednessTable,
};
use nidus::BitMatrix;

fn random_bits(m: usize, n: usize, fill: f64, seed: u64) -> BitMatrix {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    BitMatrix::from_fn(m, n, |_, _| rng.random_bool(fill))
}

fn bench(c: &mut Criterion) {
    let mut sizes = vec![(200usize, 0.2f64)];
    if std::env::var_os("NIDUS_BENCH_LARGE").is_some() {
        sizes.push((500, 0.2));
        sizes.push((1000, 0.1));
    }
    let mut group = c.benchmark_group("temperature");
    group.sample_size(10);
    for &(size, fill) in &sizes {
        let b = random_bits(size, size, fill, 42);
        group.throughput(Throughput::Elements((size * size) as u64));
        let id = format!("{size}x{size}_fill{fill}");
        let plain = TemperatureOptions::default().with_pack(false);
        group.bench_with_input(BenchmarkId::new("given_sorted", &id), &b, |bch, b| {
            bch.iter(|| {
                let table = UnexpectednessTable::new(size, size, b.count_ones()).unwrap();
                temperature_with_table(b, &table, &plain).unwrap()
            })
        });
        group.bench_with_input(
            BenchmarkId::new("given_sorted_reused", &id),
            &b,
            |bch, b| bch.iter(|| temperature(b, &plain).unwrap()),
        );
        let packed = TemperatureOptions::default();
        group.bench_with_input(BenchmarkId::new("packed_default", &id), &b, |bch, b| {
            bch.iter(|| temperature(b, &packed).unwrap())
        });
    }
    group.finish();

    let mut group = c.benchmark_group("packing_one_start");
    group.sample_size(10);
    let mut sides = vec![300usize];
    if std::env::var_os("NIDUS_BENCH_LARGE").is_some() {
        sides.push(1000);
    }
    let one = TemperatureOptions::default().with_restarts(0);
    for size in sides {
        let b = random_bits(size, size, 0.1, 43);
        let table = UnexpectednessTable::new(size, size, b.count_ones()).unwrap();
        let new = temperature_with_table(&b, &table, &one).unwrap();
        let blocked = temperature_with_table_blocked(&b, &table, &one).unwrap();
        let old = temperature_with_table_direct_gathers(&b, &table, &one).unwrap();
        assert_eq!(new, old, "the loops give the same packing");
        assert_eq!(new, blocked, "the loops give the same packing");
        group.bench_with_input(BenchmarkId::new("lanes", size), &b, |bch, b| {
            bch.iter(|| temperature_with_table(b, &table, &one).unwrap().packed)
        });
        group.bench_with_input(BenchmarkId::new("blocked", size), &b, |bch, b| {
            bch.iter(|| {
                temperature_with_table_blocked(b, &table, &one)
                    .unwrap()
                    .packed
            })
        });
        group.bench_with_input(BenchmarkId::new("direct", size), &b, |bch, b| {
            bch.iter(|| {
                temperature_with_table_direct_gathers(b, &table, &one)
                    .unwrap()
                    .packed
            })
        });
    }
    group.finish();
}

fn few_members(c: &mut Criterion) {
    let mut group = c.benchmark_group("packing_few_members");
    group.sample_size(10);
    let mut shapes = vec![(1usize, 100_000usize), (5, 1000)];
    if std::env::var_os("NIDUS_BENCH_LARGE").is_some() {
        shapes.push((5, 5000));
    }
    for (m, n) in shapes {
        let b = random_bits(m, n, 0.3, 44);
        group.bench_with_input(
            BenchmarkId::from_parameter(format!("{m}x{n}")),
            &b,
            |bch, b| bch.iter(|| packed_few_members(b).unwrap().0),
        );
    }
    group.finish();
}

fn table_build(c: &mut Criterion) {
    let mut group = c.benchmark_group("table_build");
    group.sample_size(10);
    for (m, n) in [(300usize, 300usize), (300, 299)] {
        let b = random_bits(m, n, 0.2, 45);
        let links = b.count_ones();
        let id = format!("{m}x{n}");
        let new = UnexpectednessTable::new(m, n, links).unwrap();
        let old = UnexpectednessTable::new_cell_by_cell(m, n, links).unwrap();
        let (rows, cols): (Vec<usize>, Vec<usize>) = ((0..m).collect(), (0..n).collect());
        assert_eq!(
            new.total(&b, &rows, &cols).to_bits(),
            old.total(&b, &rows, &cols).to_bits(),
            "the builds give the same table"
        );
        group.throughput(Throughput::Elements((m * n) as u64));
        group.bench_function(BenchmarkId::new("mirrored", &id), |bch| {
            bch.iter(|| UnexpectednessTable::new(m, n, links).unwrap())
        });
        group.bench_function(BenchmarkId::new("cell_by_cell", &id), |bch| {
            bch.iter(|| UnexpectednessTable::new_cell_by_cell(m, n, links).unwrap())
        });
        let row_order = nidus::metrics::degree_order(&b.row_degrees());
        let col_order = nidus::metrics::degree_order(&b.col_degrees());
        group.bench_function(BenchmarkId::new("unexpected_only", &id), |bch| {
            bch.iter(|| unexpected_total(&b, &row_order, &col_order))
        });
    }
    group.finish();
}

criterion_group!(benches, bench, few_members, table_build);
criterion_main!(benches);
