//! Writes the invented demo data in `data-demo/` from fixed seeds, so the
//! files can be made again byte for byte:
//!
//! * `meadow_visits_edges.csv`: the field log of an invented alpine meadow,
//!   one line per plant, visitor and survey round with the visits counted
//!   (`plant,visitor,visits`); a pair seen in several rounds has several
//!   lines, which the edges layout sums;
//! * `meadow_visits.csv`: the same log tallied as a plant-by-visitor count
//!   matrix, rows and columns in order of first appearance in the log, so
//!   both files read as the identical network;
//! * `islands_presence.csv`: presence (1) or absence (0) of 20 invented land
//!   snail morphospecies on 10 invented islands, islands by decreasing area.
//!
//! None of this is real data: structure and numbers come from the rules
//! below. Nestedness is built in the way it is commonly explained
//! (generalist visitors visit many plants, specialists a subset of the
//! plants the generalists visit; small islands hold a subset of the species
//! of large ones), with some idiosyncratic links so it is not perfect.
//!
//! Usage: `cargo run --example make_demo [-- OUT_DIR]` (default `data-demo`).

use std::path::Path;

use rand::seq::SliceRandom;
use rand::{Rng, SeedableRng};
use rand_distr::{Distribution, LogNormal, Poisson};
use rand_xoshiro::Xoshiro256PlusPlus;

const PLANTS: [&str; 20] = [
    "Trifolium",
    "Campanula",
    "Gentiana",
    "Ranunculus",
    "Geranium",
    "Potentilla",
    "Silene",
    "Leontodon",
    "Myosotis",
    "Thymus",
    "Lotus",
    "Alchemilla",
    "Veronica",
    "Euphrasia",
    "Primula",
    "Saxifraga",
    "Pulsatilla",
    "Arnica",
    "Phyteuma",
    "Dryas",
];

const ISLANDS: [&str; 10] = [
    "Haldor", "Mirrin", "Skarv", "Tolla", "Evenes", "Brakk", "Orrin", "Lunde", "Kvass", "Fenna",
];

fn visitors() -> Vec<String> {
    let groups = [
        ("bumblebee", 5),
        ("solitary bee", 5),
        ("hoverfly", 5),
        ("muscid fly", 4),
        ("butterfly", 3),
        ("beetle", 2),
        ("moth", 1),
        ("wasp", 1),
    ];
    groups
        .iter()
        .flat_map(|&(g, k)| (1..=k).map(move |i| format!("{g} {i}")))
        .collect()
}

/// Visit counts `counts[plant][visitor]` of the invented meadow.
fn meadow_counts(rng: &mut Xoshiro256PlusPlus) -> Vec<Vec<u64>> {
    let (m, n) = (PLANTS.len(), visitors().len());
    // Ranks: 0 = most attractive plant, most generalist visitor.
    let mut plant_rank: Vec<usize> = (0..m).collect();
    plant_rank.shuffle(rng);
    let mut visitor_rank: Vec<usize> = (0..n).collect();
    visitor_rank.shuffle(rng);
    let mut by_rank = vec![0usize; m]; // plant at each attractiveness rank
    for (p, &r) in plant_rank.iter().enumerate() {
        by_rank[r] = p;
    }
    let noise = LogNormal::new(0.0, 0.6).expect("valid parameters");
    let mut counts = vec![vec![0u64; n]; m];
    for v in 0..n {
        let g = 1.0 - visitor_rank[v] as f64 / n as f64; // generality in (0, 1]
        let breadth = ((m as f64 * 0.9 * g.powf(1.2)).round() as usize).max(1);
        for &p in &by_rank[..breadth] {
            // An idiosyncratic link now and then: this visitor goes elsewhere.
            let p = if rng.random_bool(0.12) {
                rng.random_range(0..m)
            } else {
                p
            };
            let a = 1.0 - plant_rank[p] as f64 / m as f64;
            let mean = 0.5 + 40.0 * g * g * a.powf(1.5) * noise.sample(rng);
            let visits = Poisson::new(mean).expect("positive mean").sample(rng) as u64 + 1;
            counts[p][v] += visits;
        }
    }
    // Every plant is visited at least once (by the most general visitor).
    let top = (0..n).min_by_key(|&v| visitor_rank[v]).expect("visitors");
    for row in counts.iter_mut() {
        if row.iter().all(|&c| c == 0) {
            row[top] = 1;
        }
    }
    counts
}

/// The field log: `(plant, visitor, visits)` per survey round, shuffled.
fn meadow_log(rng: &mut Xoshiro256PlusPlus, counts: &[Vec<u64>]) -> Vec<(usize, usize, u64)> {
    let mut log = Vec::new();
    for (p, row) in counts.iter().enumerate() {
        for (v, &c) in row.iter().enumerate() {
            if c == 0 {
                continue;
            }
            // Split the count over 1-3 survey rounds.
            let rounds = rng.random_range(1..=c.min(3));
            let mut left = c;
            for r in 0..rounds {
                let part = if r + 1 == rounds {
                    left
                } else {
                    rng.random_range(1..=left - (rounds - r - 1))
                };
                log.push((p, v, part));
                left -= part;
            }
        }
    }
    log.shuffle(rng);
    log
}

/// Presence of snail morphospecies on islands (rows by decreasing area).
fn islands(rng: &mut Xoshiro256PlusPlus) -> Vec<Vec<u8>> {
    let (m, n) = (ISLANDS.len(), 20usize);
    let mut table = vec![vec![0u8; n]; m];
    for (i, row) in table.iter_mut().enumerate() {
        // Relative area falls from 1 to about 0.02; richness follows a
        // power law of area (exponent 0.35, near Darlington's (1957) rule
        // of thumb that species double with a tenfold area, z = log10 2 =
        // 0.30, as quoted by Gotelli & Graves 1996, Null Models in Ecology,
        // ch. 8; common practice).
        let area = 0.65f64.powi(i as i32);
        let richness = ((n as f64 * area.powf(0.35)).round() as usize).clamp(2, n);
        for (j, cell) in row.iter_mut().enumerate() {
            let expected = j < richness;
            let flip = rng.random_bool(0.08);
            *cell = u8::from(expected != flip);
        }
    }
    for j in 0..n {
        if table.iter().all(|row| row[j] == 0) {
            table[0][j] = 1;
        }
    }
    table
}

/// The three files as `(name, text)`.
pub fn demo_files() -> Vec<(&'static str, String)> {
    let vis = visitors();
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(20_260_702);
    let counts = meadow_counts(&mut rng);
    let log = meadow_log(&mut rng, &counts);

    let mut edges = String::from("plant,visitor,visits\n");
    let (mut plant_order, mut visitor_order) = (Vec::new(), Vec::new());
    for &(p, v, c) in &log {
        edges.push_str(&format!("{},{},{c}\n", PLANTS[p], vis[v]));
        if !plant_order.contains(&p) {
            plant_order.push(p);
        }
        if !visitor_order.contains(&v) {
            visitor_order.push(v);
        }
    }
    let mut matrix = String::from("plant");
    for &v in &visitor_order {
        matrix.push_str(&format!(",{}", vis[v]));
    }
    matrix.push('\n');
    for &p in &plant_order {
        matrix.push_str(PLANTS[p]);
        for &v in &visitor_order {
            matrix.push_str(&format!(",{}", counts[p][v]));
        }
        matrix.push('\n');
    }

    let mut rng = Xoshiro256PlusPlus::seed_from_u64(19_410_101);
    let table = islands(&mut rng);
    let mut presence = String::from("island");
    for j in 0..table[0].len() {
        presence.push_str(&format!(",snail {}", (b'A' + j as u8) as char));
    }
    presence.push('\n');
    for (i, row) in table.iter().enumerate() {
        presence.push_str(ISLANDS[i]);
        for &x in row {
            presence.push_str(&format!(",{x}"));
        }
        presence.push('\n');
    }
    vec![
        ("meadow_visits.csv", matrix),
        ("meadow_visits_edges.csv", edges),
        ("islands_presence.csv", presence),
    ]
}

#[allow(dead_code)] // unused when a test includes this file as a module
fn main() -> std::io::Result<()> {
    let dir = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "data-demo".into());
    std::fs::create_dir_all(&dir)?;
    for (name, text) in demo_files() {
        let path = Path::new(&dir).join(name);
        std::fs::write(&path, text)?;
        println!("wrote {}", path.display());
    }
    Ok(())
}
