//! Temperature's faster paths against the computations they replace
//! (issue 12): the sorted value of null draws whose number of ones changes,
//! computed with root solves for the unexpected cells only, equals bit for
//! bit the value from the full table of cell values (Atmar & Patterson
//! 1993, Oecologia 96:373-382; the isocline of Rodriguez-Girones &
//! Santamaria 2006, J. Biogeogr. 33:924-935; docs/methods.md §4).

use nidus::index::IndexKind;
use nidus::metrics::registry::{lookup, IndexOptions};
use nidus::metrics::temperature::{
    temperature, unexpected_total, TemperatureOptions, UnexpectednessTable,
};
use nidus::null::{draw_rng, run_null, NullConfig, NullModel, NullOptions, NullSampler};
use nidus::{BitMatrix, Network, Statistic};
use rand::seq::SliceRandom;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// Seeded random matrices of many shapes and fills, including 1 x n, n x 1,
/// empty and full ones, and 2 x 2 at fill 1/2 (p = 1: cells on the isocline).
fn random_bits(seed: u64) -> BitMatrix {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let (m, n) = match seed % 8 {
        0 => (1, rng.random_range(1..200)),
        1 => (rng.random_range(1..200), 1),
        2 => (2, 2),
        3 => (rng.random_range(2..6), rng.random_range(60..300)),
        _ => (rng.random_range(2..90), rng.random_range(2..90)),
    };
    let fill = match seed % 13 {
        0 => 0.0,
        1 => 1.0,
        2 => 0.5,
        _ => rng.random_range(0.01..0.99),
    };
    BitMatrix::from_fn(m, n, |_, _| rng.random_bool(fill))
}

/// `unexpected_total` equals the table's `total` bit for bit in the given
/// order, in random orders, and for the degree-sorted value of the registry.
#[test]
fn unexpected_cells_only_equal_the_full_table() {
    let sorted = lookup("temperature-sorted")
        .unwrap()
        .with(IndexOptions::default());
    for seed in 0..400u64 {
        let b = random_bits(seed);
        let (m, n) = (b.nrows(), b.ncols());
        let table = UnexpectednessTable::new(m, n, b.count_ones()).unwrap();
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(10_000 + seed);
        let mut rows: Vec<usize> = (0..m).collect();
        let mut cols: Vec<usize> = (0..n).collect();
        for round in 0..3 {
            let want = table.total(&b, &rows, &cols);
            let got = unexpected_total(&b, &rows, &cols);
            assert_eq!(
                got.to_bits(),
                want.to_bits(),
                "seed {seed} round {round}: {m} x {n}, {got} vs {want}"
            );
            rows.shuffle(&mut rng);
            cols.shuffle(&mut rng);
        }
        // The registry's value first (its thread has no table for this
        // shape and number of ones), then the table's.
        let fast = sorted.evaluate(&b).unwrap();
        let full = temperature(&b, &TemperatureOptions::default().with_pack(false))
            .unwrap()
            .sorted;
        assert_eq!(fast.to_bits(), full.to_bits(), "seed {seed}");
    }
}

/// A proportional null run of `temperature-sorted` (the number of ones
/// changes from draw to draw) and an equiprobable one (it does not: the
/// kept table serves) give on every draw the
/// value `temperature` computes with the full table, on one thread and two.
#[test]
fn null_runs_with_changing_links_equal_the_table() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(5);
    let w = ndarray::Array2::from_shape_fn((40, 33), |_| u8::from(rng.random_bool(0.3)));
    let net = Network::from_array(w).unwrap();
    let kind = IndexKind::named("temperature-sorted").unwrap();
    for model in [NullModel::Proportional, NullModel::Equiprobable] {
        let sampler = NullSampler::new(&net, model, &NullOptions::default()).unwrap();
        for threads in [1, 2] {
            let mut config = NullConfig::new(model, vec![kind], 60, 21);
            config.threads = Some(threads);
            let run = run_null(&net, &config).unwrap();
            let mut links = std::collections::BTreeSet::new();
            for (&k, v) in run.draw_ids.iter().zip(&run.values) {
                let draw = sampler.sample(&mut draw_rng(21, k));
                let t =
                    temperature(&draw, &TemperatureOptions::default().with_pack(false)).unwrap();
                assert_eq!(v[0].to_bits(), t.sorted.to_bits(), "{model} draw {k}");
                links.insert(nidus::storage::NetView::bits(&draw).unwrap().count_ones());
            }
            if model == NullModel::Proportional {
                assert!(links.len() > 5, "the number of ones varies");
            } else {
                assert_eq!(links.len(), 1, "equiprobable keeps the number of ones");
            }
        }
    }
}
