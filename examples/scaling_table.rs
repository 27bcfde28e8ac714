//! Prints a markdown table of time and peak memory against size for the
//! scale kernels: NODF (dense and sparse storage, both orders), WNODF and
//! the spectral radius, with the growth exponent fitted by least squares on
//! log(time) against log(side) beside the theoretical one.
//!
//! Run: `cargo run --release --example scaling_table` (a few minutes; set
//! `RAYON_NUM_THREADS` to fix the thread count; `--quick` for smaller sizes).
//!
//! Memory is measured by a counting global allocator: the peak number of
//! heap bytes live during the computation, beyond what was live when it
//! started (the input network). Time is the median of several runs after
//! one warm-up run.

#[path = "../benches/support/inputs.rs"]
mod inputs;

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering::Relaxed};
use std::time::{Duration, Instant};

use ndarray::Array2;
use nidus::metrics::{nodf, spectral_radius, wnodf, Order};
use nidus::Network;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

struct Counting;
static LIVE: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

// SAFETY: forwards to the system allocator; only counts bytes.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, l: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(l) };
        if !p.is_null() {
            let now = LIVE.fetch_add(l.size(), Relaxed) + l.size();
            PEAK.fetch_max(now, Relaxed);
        }
        p
    }
    unsafe fn alloc_zeroed(&self, l: Layout) -> *mut u8 {
        let p = unsafe { System.alloc_zeroed(l) };
        if !p.is_null() {
            let now = LIVE.fetch_add(l.size(), Relaxed) + l.size();
            PEAK.fetch_max(now, Relaxed);
        }
        p
    }
    unsafe fn dealloc(&self, p: *mut u8, l: Layout) {
        unsafe { System.dealloc(p, l) };
        LIVE.fetch_sub(l.size(), Relaxed);
    }
    unsafe fn realloc(&self, p: *mut u8, l: Layout, new: usize) -> *mut u8 {
        let q = unsafe { System.realloc(p, l, new) };
        if !q.is_null() {
            if new >= l.size() {
                let now = LIVE.fetch_add(new - l.size(), Relaxed) + new - l.size();
                PEAK.fetch_max(now, Relaxed);
            } else {
                LIVE.fetch_sub(l.size() - new, Relaxed);
            }
        }
        q
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

fn dense(m: usize, max_weight: u32, seed: u64) -> Network<u32> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let w = Array2::from_shape_fn((m, m), |_| {
        if rng.random::<f64>() < 0.2 {
            rng.random_range(1..=max_weight)
        } else {
            0
        }
    });
    Network::from_array(w).expect("links")
}

/// Median time and peak extra heap bytes of `f` (one warm-up run, then at
/// least 3 runs and at most about 2 s).
fn measure(mut f: impl FnMut() -> f64) -> (Duration, usize, f64) {
    let value = f();
    let mut times = Vec::new();
    let start = Instant::now();
    let mut peak = 0usize;
    while times.len() < 3 || (start.elapsed() < Duration::from_secs(2) && times.len() < 15) {
        let base = LIVE.load(Relaxed);
        PEAK.store(base, Relaxed);
        let t = Instant::now();
        std::hint::black_box(f());
        times.push(t.elapsed());
        peak = peak.max(PEAK.load(Relaxed) - base);
    }
    times.sort();
    (times[times.len() / 2], peak, value)
}

/// Least-squares slope of log(y) against log(x).
fn slope(xs: &[f64], ys: &[f64]) -> f64 {
    let lx: Vec<f64> = xs.iter().map(|x| x.ln()).collect();
    let ly: Vec<f64> = ys.iter().map(|y| y.ln()).collect();
    let n = lx.len() as f64;
    let (mx, my) = (lx.iter().sum::<f64>() / n, ly.iter().sum::<f64>() / n);
    let sxy: f64 = lx.iter().zip(&ly).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = lx.iter().map(|a| (a - mx) * (a - mx)).sum();
    sxy / sxx
}

struct Case {
    name: &'static str,
    storage: &'static str,
    sizes: Vec<usize>,
    theory_time: &'static str,
    theory_exp: f64,
    build: fn(usize) -> Network<u32>,
    run: fn(&Network<u32>) -> f64,
}

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let q = |v: Vec<usize>| -> Vec<usize> {
        if quick {
            v.into_iter().map(|x| x / 4).collect()
        } else {
            v
        }
    };
    let cases = vec![
        Case {
            name: "NODF sorted",
            storage: "dense, fill 0.2",
            sizes: q(vec![500, 1000, 2000, 4000, 8000]),
            theory_time: "m^2 (packing; counting m^2 log m / 64)",
            theory_exp: 2.0,
            build: |m| dense(m, 1, 1),
            run: |net| nodf(net, Order::Sorted).unwrap().total,
        },
        Case {
            name: "NODF given",
            storage: "dense, fill 0.2",
            sizes: q(vec![500, 1000, 2000, 4000]),
            theory_time: "m^3 / 64 (pairwise popcounts)",
            theory_exp: 3.0,
            build: |m| dense(m, 1, 1),
            run: |net| nodf(net, Order::Given).unwrap().total,
        },
        Case {
            name: "WNODF sorted",
            storage: "dense, fill 0.2",
            sizes: q(vec![500, 1000, 2000, 4000]),
            theory_time: "L log m = m^2 log m",
            theory_exp: 2.0,
            build: |m| dense(m, 20, 3),
            run: |net| wnodf(net, Order::Sorted).unwrap().total,
        },
        Case {
            name: "spectral radius",
            storage: "dense, fill 0.2",
            sizes: q(vec![500, 1000, 2000, 4000]),
            theory_time: "k L = k m^2",
            theory_exp: 2.0,
            build: |m| dense(m, 1, 1),
            run: |net| spectral_radius(net).unwrap().binary,
        },
        Case {
            name: "NODF sorted",
            storage: "sparse, 10 per row",
            sizes: q(vec![25_000, 50_000, 100_000, 200_000, 400_000]),
            theory_time: "m + n + L",
            theory_exp: 1.0,
            build: |n| inputs::sparse(n, 1, 2),
            run: |net| nodf(net, Order::Sorted).unwrap().total,
        },
        Case {
            name: "NODF given",
            storage: "sparse, 10 per row",
            sizes: q(vec![25_000, 50_000, 100_000, 200_000, 400_000]),
            theory_time: "L log n",
            theory_exp: 1.0,
            build: |n| inputs::sparse(n, 1, 2),
            run: |net| nodf(net, Order::Given).unwrap().total,
        },
        Case {
            name: "WNODF sorted",
            storage: "sparse, 10 per row",
            sizes: q(vec![25_000, 50_000, 100_000, 200_000, 400_000]),
            theory_time: "sum of squared degrees = O(L) here",
            theory_exp: 1.0,
            build: |n| inputs::sparse(n, 20, 3),
            run: |net| wnodf(net, Order::Sorted).unwrap().total,
        },
        Case {
            name: "spectral radius",
            storage: "sparse, 10 per row",
            sizes: q(vec![25_000, 50_000, 100_000, 200_000, 400_000]),
            theory_time: "k L",
            theory_exp: 1.0,
            build: |n| inputs::sparse(n, 1, 2),
            run: |net| spectral_radius(net).unwrap().binary,
        },
    ];
    println!(
        "nidus scaling table ({} rayon threads)\n",
        rayon::current_num_threads()
    );
    println!("| index | storage | m = n | links L | time (ms) | peak extra heap (MB) | value |");
    println!("|---|---|---:|---:|---:|---:|---:|");
    let mut fits = Vec::new();
    for c in &cases {
        let (mut xs, mut ts, mut ms) = (Vec::new(), Vec::new(), Vec::new());
        for &s in &c.sizes {
            let net = (c.build)(s);
            let (t, peak, value) = measure(|| (c.run)(&net));
            println!(
                "| {} | {} | {} | {} | {:.2} | {:.1} | {:.6} |",
                c.name,
                c.storage,
                s,
                net.links(),
                t.as_secs_f64() * 1e3,
                peak as f64 / 1e6,
                value
            );
            xs.push(s as f64);
            ts.push(t.as_secs_f64());
            ms.push(peak.max(1) as f64);
        }
        fits.push((c, slope(&xs, &ts), slope(&xs, &ms)));
    }
    println!("\n| index | storage | fitted time exponent (vs side) | theoretical time | theoretical exponent | fitted memory exponent |");
    println!("|---|---|---:|---|---:|---:|");
    for (c, st, sm) in fits {
        println!(
            "| {} | {} | {:.2} | {} | {:.0} | {:.2} |",
            c.name, c.storage, st, c.theory_time, c.theory_exp, sm
        );
    }
}
