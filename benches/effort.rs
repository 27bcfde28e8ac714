//! Sampling effort: subsamples of a 200 x 300 network of 50,000 visits
//! (the acceptance case of the effort issue: 10 depths x 999 subsamples
//! with NODF and WNODF in under 30 s on two cores).
//!
//! Ids: `effort/subsample` (one subsample of half the visits, no index),
//! `effort/subsample+nodf+wnodf` (the same plus building the subsampled
//! network and both indices, one thread), `effort/depth_99x2threads` (one
//! depth of 99 subsamples through `run_effort` on 2 threads; multiply by
//! 999 / 99 x 10 for the full case). Run: `cargo bench --bench effort`.

#![allow(missing_docs)] // criterion_group! generates an undocumented function

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use nidus::analyses::effort::{effort_rng, run_effort, subsample, EffortConfig, VisitTable};
use nidus::index::IndexKind;
use nidus::metrics::{nodf, wnodf, Order};

#[path = "support/visits.rs"]
mod visits;

fn bench(c: &mut Criterion) {
    let net = visits::visits(200, 300, 50_000, 1);
    let table = VisitTable::new(&net, None).unwrap();
    let half = table.total() / 2;
    let mut g = c.benchmark_group("effort");
    g.sample_size(20);
    g.throughput(Throughput::Elements(1));
    let mut k = 0u64;
    g.bench_function("subsample", |b| {
        b.iter(|| {
            k += 1;
            subsample(&table, half, &mut effort_rng(7, 0, k)).unwrap()
        })
    });
    g.bench_function("subsample+nodf+wnodf", |b| {
        b.iter(|| {
            k += 1;
            let s = subsample(&table, half, &mut effort_rng(7, 0, k)).unwrap();
            let sub = table.network_of(&s).unwrap();
            (
                nodf(&sub, Order::Sorted).unwrap().total,
                wnodf(&sub, Order::Sorted).unwrap().total,
            )
        })
    });
    g.throughput(Throughput::Elements(99));
    g.sample_size(10);
    let mut config = EffortConfig::new(7);
    config.depths = Some(vec![half]);
    config.draws = 99;
    config.indices = vec![
        IndexKind::named("nodf").unwrap(),
        IndexKind::named("wnodf").unwrap(),
    ];
    config.threads = Some(2);
    g.bench_function("depth_99x2threads", |b| {
        b.iter(|| run_effort(&net, &config).unwrap())
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
