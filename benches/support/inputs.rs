//! Seeded random inputs shared by `benches/scale.rs` and
//! `examples/scaling_table.rs`, so the bench ids and the scaling table time
//! the same networks.

use nidus::Network;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// An `n x n` network with `10 n` cells drawn uniformly (repeats merged,
/// so slightly fewer links), weights 1 or uniform in `1..=max_weight`;
/// stored sparsely from `n` = 1,000 on.
pub fn sparse(n: usize, max_weight: u32, seed: u64) -> Network<u32> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let mut cells: Vec<(u32, u32, u32)> = (0..10 * n)
        .map(|_| {
            (
                rng.random_range(0..n as u32),
                rng.random_range(0..n as u32),
                rng.random_range(1..=max_weight),
            )
        })
        .collect();
    cells.sort_unstable_by_key(|&(i, j, _)| (i, j));
    cells.dedup_by_key(|c| (c.0, c.1));
    let labels = |p: &str| (0..n).map(|k| format!("{p}{k}")).collect::<Vec<_>>();
    Network::from_triplets(labels("r"), labels("c"), cells).expect("valid cells")
}
