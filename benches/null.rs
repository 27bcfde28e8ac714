//! Null-model throughput: curveball (`fixed-both`) draws with and without
//! NODF evaluated on each, and an independent-draw model for comparison;
//! `fixed-totals/draw+wnodf` on a 200 x 200 table of counts 1-9 at fill 0.2.
//!
//! Sizes: 200 x 200 at fill 0.1 (the acceptance case of the null-model
//! issue). Set `NIDUS_BENCH_LARGE=1` to add 1000 x 1000 at fill 0.05.
//! Run: `cargo bench --bench null`.

#![allow(missing_docs)] // criterion_group! generates an undocumented function

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use nidus::index::{evaluate, IndexKind, IndexOptions};
use nidus::null::{NullDraw, NullModel, NullOptions, NullSampler};
use nidus::Network;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

fn random_net(m: usize, n: usize, fill: f64, seed: u64) -> Network<f64> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let w = ndarray::Array2::from_shape_fn((m, n), |_| f64::from(u8::from(rng.random_bool(fill))));
    Network::from_array(w).expect("a random network with links")
}

fn bench(c: &mut Criterion) {
    let mut sizes = vec![(200usize, 200usize, 0.1f64)];
    if std::env::var_os("NIDUS_BENCH_LARGE").is_some() {
        sizes.push((1000, 1000, 0.05));
    }
    let opts_all = IndexOptions::default();
    let mut g = c.benchmark_group("null");
    g.throughput(Throughput::Elements(1));
    for (m, n, fill) in sizes {
        let net = random_net(m, n, fill, 1);
        let label = format!("{m}x{n}@{fill}");
        let opts = IndexOptions::default();
        for model in [NullModel::FixedBoth, NullModel::Equiprobable] {
            let s = NullSampler::new(&net, model, &NullOptions::default()).unwrap();
            let mut k = 0u64;
            g.bench_function(BenchmarkId::new(format!("{model}/draw"), &label), |b| {
                b.iter(|| {
                    k += 1;
                    s.draw(7, k)
                })
            });
            g.bench_function(
                BenchmarkId::new(format!("{model}/draw+nodf"), &label),
                |b| {
                    b.iter(|| {
                        k += 1;
                        let NullDraw::Binary(d) = s.draw(7, k) else {
                            unreachable!()
                        };
                        evaluate(IndexKind::named("nodf").unwrap(), &d, &opts).unwrap()
                    })
                },
            );
        }
    }
    // fixed-totals with WNODF on each draw (weighted counts 0-9, 200 x 200).
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(3);
    let w = ndarray::Array2::from_shape_fn((200, 200), |_| {
        if rng.random_bool(0.2) {
            f64::from(rng.random_range(1u8..10))
        } else {
            0.0
        }
    });
    let net = Network::from_array(w).unwrap();
    let s = NullSampler::new(&net, NullModel::FixedTotals, &NullOptions::default()).unwrap();
    let wnodf = IndexKind::named("wnodf").unwrap();
    let mut k = 0u64;
    g.bench_function(
        BenchmarkId::new("fixed-totals/draw+wnodf", "200x200@0.2"),
        |b| {
            b.iter(|| {
                k += 1;
                evaluate(wnodf, &s.draw(7, k), &opts_all).unwrap()
            })
        },
    );
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
