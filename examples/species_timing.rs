//! Times the species analysis on the case: all 1,000 species of a
//! seeded random 500 x 500 network at fill 0.1, 999 re-draws each.
//!
//! Prints (1) the contributions alone (the incremental engine, every
//! species, all threads of the rayon pool), (2) the whole
//! `species_contributions` (adds leave-one-out and the packed temperature
//! with one start), and (3) the cost of the same draws by full NODF
//! recomputation, measured on `NIDUS_FULL_SPECIES` species (default 4) and
//! extrapolated to 1,000.
//!
//! Run: `cargo run --release --example species_timing` (add
//! `RAYON_NUM_THREADS=2` to fix the thread count).

use std::time::Instant;

use nidus::analyses::species::{
    redraw, species_contributions, species_rng, NodfEngine, RedrawModel, Side, SpeciesOptions,
};
use nidus::metrics::{nodf, Order};
use nidus::{BitMatrix, Network};
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;

/// CPU seconds (user + system) of this process so far, from
/// `/proc/self/stat` (Linux; 0 elsewhere): on a shared machine it shows the
/// work done, which wall time does not.
fn cpu_seconds() -> f64 {
    let Ok(s) = std::fs::read_to_string("/proc/self/stat") else {
        return 0.0;
    };
    let f: Vec<&str> = s
        .rsplit(')')
        .next()
        .unwrap_or("")
        .split_whitespace()
        .collect();
    let tick = |k: usize| f.get(k).and_then(|x| x.parse::<f64>().ok()).unwrap_or(0.0);
    (tick(11) + tick(12)) / 100.0
}

fn main() {
    let (m, fill, draws) = (500, 0.1, 999);
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(2011);
    let b = BitMatrix::from_fn(m, m, |_, _| rng.random_bool(fill));
    println!(
        "{m} x {m}, {} links, {draws} draws per species, {} threads",
        b.count_ones(),
        rayon::current_num_threads()
    );

    let t = Instant::now();
    let engine = NodfEngine::new(&b).unwrap();
    let build = t.elapsed().as_secs_f64();
    let (t, c0) = (Instant::now(), cpu_seconds());
    let species: Vec<(Side, usize)> = (0..m)
        .map(|i| (Side::Row, i))
        .chain((0..m).map(|j| (Side::Col, j)))
        .collect();
    let z: Vec<Option<f64>> = species
        .par_iter()
        .map_init(
            || engine.scratch(),
            |s, &(side, i)| {
                redraw(&engine, side, i, RedrawModel::Proportional, draws, 1, s).and_then(|r| r.z)
            },
        )
        .collect();
    let contrib = t.elapsed().as_secs_f64();
    let cpu = cpu_seconds() - c0;
    println!(
        "engine build {build:.3} s; contributions of {} species: {contrib:.2} s wall, {cpu:.2} s CPU ({:.2} us CPU per draw)",
        z.len(),
        cpu * 1e6 / (z.len() * draws) as f64
    );

    let net = Network::from_array(ndarray::Array2::from_shape_fn((m, m), |(i, j)| {
        u8::from(b.get(i, j))
    }))
    .unwrap();
    let opts = SpeciesOptions {
        draws,
        seed: 1,
        pack_restarts: 0,
        ..SpeciesOptions::default()
    };
    let t = Instant::now();
    let a = species_contributions(&net, &opts).unwrap();
    println!(
        "species_contributions (with leave-one-out and packed T, one start): {:.2} s, NODF {:.3}",
        t.elapsed().as_secs_f64(),
        a.nodf
    );

    // Full recomputation per draw, on a few species, extrapolated.
    let k: usize = std::env::var("NIDUS_FULL_SPECIES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(4);
    let (t, c0) = (Instant::now(), cpu_seconds());
    (0..k).into_par_iter().for_each(|i| {
        let d = b.row_degree(i);
        let col = b.col_degrees();
        let mut work = b.clone();
        for r in 0..draws {
            let mut g = species_rng(1, Side::Row, i, r as u64);
            for j in 0..m {
                let p = (d as f64 / m as f64 + col[j] as f64 / m as f64) / 2.0;
                work.set(i, j, nidus::null::unit(&mut g) < p);
            }
            std::hint::black_box(nodf(&work, Order::Sorted).unwrap().total);
        }
    });
    let full = t.elapsed().as_secs_f64();
    let full_cpu = cpu_seconds() - c0;
    let scale = species.len() as f64 / k as f64;
    println!(
        "full recomputation: {k} species in {full:.2} s wall, {full_cpu:.2} s CPU; extrapolated to {} species: {:.1} s wall, {:.1} s CPU ({:.1}x the engine's CPU time)",
        species.len(),
        full * scale,
        full_cpu * scale,
        full_cpu * scale / cpu
    );
}
