//! The seeded visit-count network of the effort bench, shared by
//! `benches/effort.rs` and `examples/gen_visits.rs` (which writes it to a
//! file for the timed command-line run).

use ndarray::Array2;
use nidus::Network;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// An `m x n` table of `visits` visits: each visit falls on row `i` with
/// probability proportional to `1 / (i + 1)` and, independently, on column
/// `j` with probability proportional to `1 / (j + 1)^0.8` (skewed
/// abundances, so a few generalists take most visits and many cells stay
/// empty). Rows or columns left without a visit keep a zero line.
pub fn visits(m: usize, n: usize, visits: usize, seed: u64) -> Network<f64> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let cumulative = |k: usize, power: f64| {
        let mut acc = 0.0;
        (0..k)
            .map(|i| {
                acc += 1.0 / ((i + 1) as f64).powf(power);
                acc
            })
            .collect::<Vec<f64>>()
    };
    let (rows, cols) = (cumulative(m, 1.0), cumulative(n, 0.8));
    let pick = |c: &[f64], u: f64| {
        c.partition_point(|&x| x < u * c[c.len() - 1])
            .min(c.len() - 1)
    };
    let mut w = Array2::<f64>::zeros((m, n));
    for _ in 0..visits {
        let i = pick(&rows, rng.random::<f64>());
        let j = pick(&cols, rng.random::<f64>());
        w[[i, j]] += 1.0;
    }
    let labels = |p: &str, k: usize| (0..k).map(|x| format!("{p}{x}")).collect::<Vec<_>>();
    Network::from_dense(w, labels("plant", m), labels("visitor", n)).expect("a table with visits")
}
