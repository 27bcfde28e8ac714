//! Species contributions (issue 14): one species' 999 re-draws on a seeded
//! random 500 x 500 network at fill 0.1, by the incremental engine
//! (`engine`) and by recomputing NODF from scratch for every draw (`full`),
//! for a row species and a column species. Throughput: draws.
//!
//! The whole analysis (1,000 species x 999 draws) is too long for
//! criterion's repetitions; it is timed once by
//! `cargo run --release --example species_timing`. Multiply the per-species
//! figures here by 1,000 species and divide by the threads to compare.
//!
//! Run: `cargo bench --bench species` (about a minute).
#![allow(missing_docs)] // criterion_group! generates an undocumented function

use std::time::Duration;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use nidus::analyses::species::{redraw, species_rng, NodfEngine, RedrawModel, Side};
use nidus::metrics::{nodf, Order};
use nidus::null::unit;
use nidus::BitMatrix;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

const DRAWS: usize = 999;

fn network() -> BitMatrix {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(2011);
    BitMatrix::from_fn(500, 500, |_, _| rng.random_bool(0.1))
}

/// The same draws as `redraw` (proportional model), each scored by a full NODF.
fn full(b: &BitMatrix, side: Side, i: usize) -> f64 {
    let own = match side {
        Side::Row => b.clone(),
        Side::Col => b.transpose(),
    };
    let (k, other) = (own.nrows(), own.ncols());
    let d = own.row_degree(i);
    let col = own.col_degrees();
    let mut work = own.clone();
    let mut sum = 0.0;
    for r in 0..DRAWS {
        let mut g = species_rng(1, side, i, r as u64);
        for j in 0..other {
            let p = (d as f64 / other as f64 + col[j] as f64 / k as f64) / 2.0;
            work.set(i, j, unit(&mut g) < p);
        }
        sum += nodf(&work, Order::Sorted).unwrap().total;
    }
    sum
}

fn bench(c: &mut Criterion) {
    let b = network();
    let engine = NodfEngine::new(&b).unwrap();
    let mut g = c.benchmark_group("species_999_draws_500x500");
    g.throughput(Throughput::Elements(DRAWS as u64));
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(8));
    for (side, name) in [(Side::Row, "row"), (Side::Col, "col")] {
        g.bench_function(format!("engine/{name}"), |bn| {
            let mut s = engine.scratch();
            bn.iter(|| {
                redraw(
                    &engine,
                    side,
                    7,
                    RedrawModel::Proportional,
                    DRAWS,
                    1,
                    &mut s,
                )
            })
        });
        g.bench_function(format!("full/{name}"), |bn| bn.iter(|| full(&b, side, 7)));
    }
    g.finish();
    c.bench_function("species_engine_build_500x500", |bn| {
        bn.iter(|| NodfEngine::new(&b).unwrap())
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
