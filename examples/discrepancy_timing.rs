//! Times discrepancy on seeded sparse random networks: the stable value in
//! one orientation, and both orientations with their tie-minimised values
//! (docs/scaling.md, section "Discrepancy"). The networks are invented for
//! timing only. Run in a release build:
//!
//! `cargo run --release --example discrepancy_timing`

use std::collections::HashSet;
use std::time::Instant;

use nidus::metrics::{discrepancies, discrepancy};
use nidus::Network;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// `links` distinct cells of an `m x n` network; with `skew` the row and
/// column indices are `floor(u^3 size)` for uniform `u`, which gives a few
/// generalists and many specialists (heavy-tailed degrees).
fn network(m: usize, n: usize, links: usize, skew: bool, seed: u64) -> Network<f64> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let mut seen = HashSet::new();
    let mut cells = Vec::with_capacity(links);
    while cells.len() < links {
        let (i, j) = if skew {
            let (a, b): (f64, f64) = (rng.random(), rng.random());
            ((a.powi(3) * m as f64) as u32, (b.powi(3) * n as f64) as u32)
        } else {
            (rng.random_range(0..m as u32), rng.random_range(0..n as u32))
        };
        if seen.insert((i, j)) {
            cells.push((i, j, 1.0));
        }
    }
    let rows = (0..m).map(|i| format!("r{i}")).collect();
    let cols = (0..n).map(|j| format!("c{j}")).collect();
    Network::from_triplets(rows, cols, cells).expect("a valid network")
}

fn main() {
    println!("network | stable, rows (s) | both orientations, stable + minimum (s) | rows stable / minimum | cols stable / minimum");
    for (m, n, links, skew) in [
        (10_000usize, 10_000usize, 100_000usize, false),
        (10_000, 10_000, 100_000, true),
        (100_000, 100_000, 1_000_000, true),
    ] {
        let net = network(m, n, links, skew, 5);
        let t = Instant::now();
        let stable = discrepancy(&net).expect("discrepancy");
        let t_stable = t.elapsed().as_secs_f64();
        let t = Instant::now();
        let d = discrepancies(&net).expect("discrepancies");
        let t_both = t.elapsed().as_secs_f64();
        assert_eq!(stable, d.rows.stable);
        let show = |x: Option<usize>| x.map_or("none".to_string(), |v| v.to_string());
        println!(
            "{m} x {n}, {links} links{} | {t_stable:.4} | {t_both:.4} | {} / {} | {} / {}",
            if skew {
                ", skewed degrees"
            } else {
                ", uniform"
            },
            d.rows.stable,
            show(d.rows.minimum),
            d.cols.stable,
            show(d.cols.minimum)
        );
    }
}
