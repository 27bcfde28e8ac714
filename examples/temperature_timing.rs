//! Timing script for temperature packing (release build):
//! `cargo run --release --example temperature_timing -- [SIZE] [FILL] [RESTARTS|none] [side-by-side]`.
//! With `side-by-side`, the packing is also timed with the cost tables
//! built by the blocked loop (the loop before the register lanes) and by
//! the direct gather loop (the loop before the blocked one), in the order
//! lanes, blocked, direct, lanes, blocked, and the results are checked
//! equal.
//! Prints the time of the given/sorted values and of packing, and the
//! temperatures found, for a seeded random square matrix.

use std::time::Instant;

use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

use nidus::metrics::temperature::{
    temperature, temperature_with_table, temperature_with_table_blocked,
    temperature_with_table_direct_gathers, TemperatureOptions, UnexpectednessTable,
};
use nidus::numerics::assign::assign;
use nidus::BitMatrix;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let size: usize = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(200);
    let fill: f64 = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(0.2);
    let restarts: Option<usize> = match args.get(3).map(String::as_str) {
        Some("none") => None,
        Some(s) => Some(s.parse().expect("RESTARTS: a number or 'none'")),
        None => Some(4),
    };
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(42);
    let b = BitMatrix::from_fn(size, size, |_, _| rng.random_bool(fill));

    let plain = TemperatureOptions::default().with_pack(false);
    let t0 = Instant::now();
    let t = temperature(&b, &plain).unwrap();
    let dt_plain = t0.elapsed();
    println!(
        "{size} x {size}, fill {fill}: given {:.3}, sorted {:.3} in {:.1} ms",
        t.given,
        t.sorted,
        dt_plain.as_secs_f64() * 1e3
    );

    let cost: Vec<f64> = (0..size * size)
        .map(|_| rng.random_range(0.0..1.0))
        .collect();
    let t0 = Instant::now();
    assign(&cost, size, size).unwrap();
    println!(
        "one {size} x {size} assignment (uniform random costs): {:.1} ms",
        t0.elapsed().as_secs_f64() * 1e3
    );

    let Some(restarts) = restarts else {
        return;
    };
    let opts = TemperatureOptions::default().with_restarts(restarts);
    let t0 = Instant::now();
    let t = temperature(&b, &opts).unwrap();
    println!(
        "packed with {restarts} restarts: {:.3} in {:.2} s",
        t.packed.unwrap(),
        t0.elapsed().as_secs_f64()
    );

    if args.get(4).map(String::as_str) != Some("side-by-side") {
        return;
    }
    let table = UnexpectednessTable::new(size, size, b.count_ones()).unwrap();
    let mut results = Vec::new();
    for name in ["lanes", "blocked", "direct", "lanes", "blocked"] {
        let t0 = Instant::now();
        let t = match name {
            "direct" => temperature_with_table_direct_gathers(&b, &table, &opts),
            "blocked" => temperature_with_table_blocked(&b, &table, &opts),
            _ => temperature_with_table(&b, &table, &opts),
        }
        .unwrap();
        println!(
            "  {name} cost tables: packed {:.6} in {:.2} s",
            t.packed.unwrap(),
            t0.elapsed().as_secs_f64()
        );
        results.push(t);
    }
    assert!(
        results.windows(2).all(|w| w[0] == w[1]),
        "identical results"
    );
    println!("  identical results (T and both orders)");
}
