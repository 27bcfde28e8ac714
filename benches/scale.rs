//! Scale benchmarks: NODF of dense and sparse networks, WNODF and the
//! spectral radius of sparse ones. Inputs are seeded random networks built
//! before timing; each iteration computes the value from the in-memory
//! network. `NIDUS_BENCH_HUGE=1` adds the 10,000 x 10,000 dense case.
//! `wnodf_dense_given/4000`: WNODF in the given order of a dense 4,000 x
//! 4,000 network at fill 0.2 with weights 1-20; `wnodf_dense_sorted/4000`
//! the same network in the sorted order. The `_lists` twins of these and of
//! `wnodf_sparse/100000` time the list kernels (`wnodf_lists`, the path
//! before the rank kernels) on the same input, and
//! `wnodf_sparse_ranks/100000` the rank kernels on sparse storage (side by
//! side comparisons).
//! `null_fixed_both_nodf/200` times one curveball draw plus its NODF
//! (throughput: draws per second), `null_fixed_both_nodf_lists/200` the
//! same with the pre-word-level trade kept in `support/curveball_lists.rs`
//! and `null_fixed_both_nodf_floyd/200` with the first word-level trade
//! (Floyd subsets only) kept in `support/curveball_floyd.rs` (side-by-side
//! comparisons); `null_sparse_fixed_both_nodf/100000` one `fixed-both`
//! draw (drawn as row lists) plus its NODF of a sparse 100,000 x 100,000
//! network with about 10^6 links; `temperature_packing/200` one packed
//! temperature with the default starts.
//!
//! Run: `cargo bench --bench scale` (about 2-3 minutes here). Reference
//! timings of the general-purpose route (numpy / scipy) on the same shapes:
//! `python3 benches/reference/scale_reference.py`.

#[path = "support/inputs.rs"]
mod inputs;

#[path = "support/curveball_lists.rs"]
#[allow(missing_docs)]
mod curveball_lists;

#[path = "support/curveball_floyd.rs"]
#[allow(missing_docs)]
mod curveball_floyd;

use std::time::Duration;

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use ndarray::Array2;
use nidus::metrics::wnodf::{wnodf_lists, wnodf_ranks};
use nidus::metrics::{nodf, spectral_radius, temperature, wnodf, Order, TemperatureOptions};
use nidus::null::{draw_rng, BurnIn, Distribution, NullDraw, NullModel, NullOptions, NullSampler};
use nidus::Network;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// A dense `m x m` 0/1 network with each cell present with probability `fill`.
fn dense(m: usize, fill: f64, seed: u64) -> Network<u8> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let w = Array2::from_shape_fn((m, m), |_| (rng.random::<f64>() < fill) as u8);
    Network::from_array(w).expect("a random dense network has links")
}

/// A dense `m x m` network with each cell present with probability `fill`
/// and weights uniform in `1..=max_weight`.
fn dense_weighted(m: usize, fill: f64, max_weight: u32, seed: u64) -> Network<u32> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let w = Array2::from_shape_fn((m, m), |_| {
        if rng.random::<f64>() < fill {
            rng.random_range(1..=max_weight)
        } else {
            0
        }
    });
    Network::from_array(w).expect("a random dense network has links")
}

/// A WNODF entry point (the public one or a hidden reference).
type WnodfFn = fn(&Network<u32>, Order) -> nidus::Result<nidus::metrics::Parts>;

/// The shared sparse input, checked to be stored sparsely.
fn sparse(n: usize, max_weight: u32, seed: u64) -> Network<u32> {
    let net = inputs::sparse(n, max_weight, seed);
    assert!(net.is_sparse());
    net
}

fn nodf_dense(c: &mut Criterion) {
    let mut g = c.benchmark_group("nodf_dense");
    g.sample_size(10).warm_up_time(Duration::from_secs(1));
    let mut sizes = vec![1000, 4000];
    if std::env::var_os("NIDUS_BENCH_HUGE").is_some() {
        sizes.push(10_000);
    }
    for m in sizes {
        let net = dense(m, 0.2, 1);
        g.throughput(Throughput::Elements((m * m) as u64));
        g.measurement_time(Duration::from_secs(if m >= 10_000 { 20 } else { 4 }));
        g.bench_with_input(BenchmarkId::from_parameter(m), &net, |b, net| {
            b.iter(|| nodf(net, Order::Sorted).unwrap().total)
        });
    }
    g.finish();
    let mut g = c.benchmark_group("nodf_dense_given");
    g.sample_size(10).warm_up_time(Duration::from_secs(1));
    g.measurement_time(Duration::from_secs(4));
    let net = dense(4000, 0.2, 1);
    g.throughput(Throughput::Elements(16_000_000));
    g.bench_with_input(BenchmarkId::from_parameter(4000), &net, |b, net| {
        b.iter(|| nodf(net, Order::Given).unwrap().total)
    });
    g.finish();
}

fn sparse_kernels(c: &mut Criterion) {
    let mut g = c.benchmark_group("nodf_sparse");
    g.sample_size(10).warm_up_time(Duration::from_secs(1));
    g.measurement_time(Duration::from_secs(4));
    for n in [20_000, 100_000] {
        let net = sparse(n, 1, 2);
        g.throughput(Throughput::Elements(net.links() as u64));
        g.bench_with_input(BenchmarkId::from_parameter(n), &net, |b, net| {
            b.iter(|| nodf(net, Order::Sorted).unwrap().total)
        });
    }
    g.finish();
    let net = sparse(100_000, 20, 3);
    for (name, f) in [
        ("wnodf_sparse", wnodf::<Network<u32>> as WnodfFn),
        ("wnodf_sparse_lists", wnodf_lists::<Network<u32>>),
        ("wnodf_sparse_ranks", wnodf_ranks::<Network<u32>>),
    ] {
        let mut g = c.benchmark_group(name);
        g.sample_size(10).warm_up_time(Duration::from_secs(1));
        g.measurement_time(Duration::from_secs(4));
        g.throughput(Throughput::Elements(net.links() as u64));
        g.bench_with_input(BenchmarkId::from_parameter(100_000), &net, |b, net| {
            b.iter(|| f(net, Order::Sorted).unwrap().total)
        });
        g.finish();
    }
    // Dense 4000 x 4000, rank kernels and list kernels alternately.
    let net = dense_weighted(4000, 0.2, 20, 4);
    for (name, f, order, secs) in [
        (
            "wnodf_dense_given",
            wnodf::<Network<u32>> as WnodfFn,
            Order::Given,
            8,
        ),
        (
            "wnodf_dense_given_lists",
            wnodf_lists::<Network<u32>>,
            Order::Given,
            30,
        ),
        (
            "wnodf_dense_sorted",
            wnodf::<Network<u32>>,
            Order::Sorted,
            4,
        ),
        (
            "wnodf_dense_sorted_lists",
            wnodf_lists::<Network<u32>>,
            Order::Sorted,
            4,
        ),
    ] {
        let mut g = c.benchmark_group(name);
        g.sample_size(10).warm_up_time(Duration::from_secs(1));
        g.measurement_time(Duration::from_secs(secs));
        g.throughput(Throughput::Elements(16_000_000));
        g.bench_with_input(BenchmarkId::from_parameter(4000), &net, |b, net| {
            b.iter(|| f(net, order).unwrap().total)
        });
        g.finish();
    }
    let mut g = c.benchmark_group("spectral_sparse");
    g.sample_size(10).warm_up_time(Duration::from_secs(1));
    g.measurement_time(Duration::from_secs(4));
    let net = sparse(100_000, 1, 2);
    g.throughput(Throughput::Elements(net.links() as u64));
    g.bench_with_input(BenchmarkId::from_parameter(100_000), &net, |b, net| {
        b.iter(|| spectral_radius(net).unwrap().binary)
    });
    g.finish();
}

/// Null draws per second (`fixed-both`, curveball with its default burn-in,
/// NODF evaluated on each draw) and temperature packing, both at 200 x 200.
fn null_and_packing(c: &mut Criterion) {
    let net = dense(200, 0.1, 5);
    let sampler = NullSampler::new(&net, NullModel::FixedBoth, &NullOptions::default()).unwrap();
    let mut g = c.benchmark_group("null_fixed_both_nodf");
    g.sample_size(20).warm_up_time(Duration::from_secs(1));
    g.measurement_time(Duration::from_secs(4));
    g.throughput(Throughput::Elements(1));
    let mut k = 0u64;
    g.bench_function(BenchmarkId::from_parameter(200), |b| {
        b.iter(|| {
            k += 1;
            let NullDraw::Binary(d) = sampler.draw(11, k) else {
                unreachable!("binary model")
            };
            nodf(&d, Order::Sorted).unwrap().total
        })
    });
    g.finish();

    // The old list-based trade, same burn-in, same draw keys.
    let lists = BurnIn::new(
        curveball_lists::ListCurveball::new(&net.binary().unwrap()),
        sampler.burn_in().unwrap(),
    );
    let mut g = c.benchmark_group("null_fixed_both_nodf_lists");
    g.sample_size(20).warm_up_time(Duration::from_secs(1));
    g.measurement_time(Duration::from_secs(4));
    g.throughput(Throughput::Elements(1));
    g.bench_function(BenchmarkId::from_parameter(200), |b| {
        b.iter(|| {
            k += 1;
            let d = lists.sample(&mut draw_rng(11, k));
            nodf(&d, Order::Sorted).unwrap().total
        })
    });
    g.finish();

    // The first word-level trade (Floyd subsets only), same burn-in and keys.
    let floyd = BurnIn::new(
        curveball_floyd::FloydCurveball::new(&net.binary().unwrap()),
        sampler.burn_in().unwrap(),
    );
    let mut g = c.benchmark_group("null_fixed_both_nodf_floyd");
    g.sample_size(20).warm_up_time(Duration::from_secs(1));
    g.measurement_time(Duration::from_secs(4));
    g.throughput(Throughput::Elements(1));
    g.bench_function(BenchmarkId::from_parameter(200), |b| {
        b.iter(|| {
            k += 1;
            let d = floyd.sample(&mut draw_rng(11, k));
            nodf(&d, Order::Sorted).unwrap().total
        })
    });
    g.finish();

    // Row-list draws of a sparse network (10^10 cells, 10^6 links): one
    // fixed-both draw with its default burn-in (500,000 trades) and NODF.
    let net = sparse(100_000, 1, 7);
    let sampler = NullSampler::new(&net, NullModel::FixedBoth, &NullOptions::default()).unwrap();
    assert!(sampler.draws_lists());
    let mut g = c.benchmark_group("null_sparse_fixed_both_nodf");
    g.sample_size(10).warm_up_time(Duration::from_secs(1));
    g.measurement_time(Duration::from_secs(8));
    g.throughput(Throughput::Elements(1));
    g.bench_function(BenchmarkId::from_parameter(100_000), |b| {
        b.iter(|| {
            k += 1;
            nodf(&sampler.draw(11, k), Order::Sorted).unwrap().total
        })
    });
    g.finish();

    let net = dense(200, 0.2, 6);
    let mut g = c.benchmark_group("temperature_packing");
    g.sample_size(10).warm_up_time(Duration::from_secs(1));
    g.measurement_time(Duration::from_secs(5));
    g.bench_with_input(BenchmarkId::from_parameter(200), &net, |b, net| {
        b.iter(|| {
            temperature(net, &TemperatureOptions::default())
                .unwrap()
                .packed
        })
    });
    g.finish();
}

#[allow(missing_docs)]
mod group {
    use super::*;
    criterion_group!(scale, nodf_dense, sparse_kernels, null_and_packing);
}
criterion_main!(group::scale);
