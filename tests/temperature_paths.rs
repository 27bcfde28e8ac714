//! Temperature's faster paths against the computations they replace
//! (issue 12): the sorted value of null draws whose number of ones changes,
//! computed with root solves for the unexpected cells only, equals bit for
//! bit the value from the full table of cell values (Atmar & Patterson
//! 1993, Oecologia 96:373-382; the isocline of Rodriguez-Girones &
//! Santamaria 2006, J. Biogeogr. 33:924-935; docs/methods.md §4); and the
//! exact packing for a side of at most 5 members equals the minimum over
//! every row and column order found by enumeration.

use nidus::index::IndexKind;
use nidus::metrics::registry::{lookup, IndexOptions};
use nidus::metrics::temperature::{
    few_members_applies, packed_few_members, packing_is_exact, temperature, temperature_with_table,
    unexpected_total, TemperatureOptions, UnexpectednessTable, PACKING_SIDE_LIMIT,
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

/// Null runs whose number of ones changes from draw to draw (`proportional`,
/// and the binary view of `fixed-totals` draws), on networks small enough
/// that values of `L` recur (so the per-thread table cache serves), square
/// (mirrored table build) and not: the packed and the sorted temperature of
/// every draw, on one thread and two, equal bit for bit the values computed
/// afresh with the cell-by-cell table (the build before the cache and the
/// mirrored build) for the regenerated draw.
#[test]
fn null_runs_with_cached_tables_equal_the_uncached_path() {
    let kinds = vec![
        IndexKind::named("temperature").unwrap(),
        IndexKind::named("temperature-sorted").unwrap(),
    ];
    for (seed, m, n) in [(6u64, 12usize, 12usize), (7, 9, 14)] {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
        let w = ndarray::Array2::from_shape_fn((m, n), |_| {
            if rng.random_bool(0.35) {
                rng.random_range(1..4u8)
            } else {
                0
            }
        });
        let net = Network::from_array(w).unwrap();
        for model in [NullModel::Proportional, NullModel::FixedTotals] {
            let sampler = NullSampler::new(&net, model, &NullOptions::default()).unwrap();
            for threads in [1, 2] {
                let mut config = NullConfig::new(model, kinds.clone(), 80, 30 + seed);
                config.threads = Some(threads);
                config.restarts = 1;
                let run = run_null(&net, &config).unwrap();
                let opts = TemperatureOptions::default().with_restarts(1);
                let mut links = Vec::new();
                for (&k, v) in run.draw_ids.iter().zip(&run.values) {
                    let draw = sampler.sample(&mut draw_rng(30 + seed, k));
                    let b = nidus::storage::NetView::bits(&draw).unwrap();
                    let table =
                        UnexpectednessTable::new_cell_by_cell(m, n, b.count_ones()).unwrap();
                    let t = temperature_with_table(&b, &table, &opts).unwrap();
                    let packed = t.packed.unwrap_or(t.sorted);
                    assert_eq!(v[0].to_bits(), packed.to_bits(), "{model} draw {k}");
                    assert_eq!(v[1].to_bits(), t.sorted.to_bits(), "{model} draw {k}");
                    links.push(b.count_ones());
                }
                links.sort_unstable();
                let distinct = links.windows(2).filter(|w| w[0] != w[1]).count() + 1;
                assert!(distinct > 5, "{model}: the number of ones varies");
                assert!(distinct < links.len() / 2, "{model}: values of L recur");
            }
        }
    }
}

/// Every permutation of `0..k` (lexicographic), for the enumerations.
fn perms(k: usize) -> Vec<Vec<usize>> {
    if k == 0 {
        return vec![Vec::new()];
    }
    let mut out = Vec::new();
    for p in perms(k - 1) {
        for at in 0..=p.len() {
            let mut q = p.clone();
            q.insert(at, k - 1);
            out.push(q);
        }
    }
    out
}

/// The smallest `T` over every row order and every column order: the
/// definition of the packed temperature, by enumeration.
fn brute_min(b: &BitMatrix) -> f64 {
    let (m, n) = (b.nrows(), b.ncols());
    let table = UnexpectednessTable::new(m, n, b.count_ones()).unwrap();
    let cols = perms(n);
    let mut best = f64::INFINITY;
    for rows in perms(m) {
        for c in &cols {
            best = best.min(table.temperature(b, &rows, c));
        }
    }
    best
}

/// The few-members search reaches the minimum over all row and column
/// orders (enumerated) on random matrices of 1-4 rows (or columns) and up
/// to 7 on the other side, and its orders give the `T` it reports.
#[test]
fn few_members_packing_equals_enumeration() {
    for seed in 0..120u64 {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(50_000 + seed);
        let k = rng.random_range(1..=4);
        let big = rng.random_range(2..=if k >= 3 { 6 } else { 7 });
        let fill = rng.random_range(0.15..0.85);
        let (m, n) = if seed % 2 == 0 { (k, big) } else { (big, k) };
        let b = BitMatrix::from_fn(m, n, |_, _| rng.random_bool(fill));
        let (t, rows, cols) = packed_few_members(&b).unwrap();
        let want = brute_min(&b);
        assert!(
            (t - want).abs() <= 1e-9 * (1.0 + want),
            "seed {seed}: {m} x {n}: {t} vs {want}"
        );
        let table = UnexpectednessTable::new(m, n, b.count_ones()).unwrap();
        assert_eq!(table.temperature(&b, &rows, &cols).to_bits(), t.to_bits());
    }
}

/// Where the exhaustive search over the small side applies (up to the
/// assignment size limit), the few-members search finds the same global
/// minimum, on both orientations.
#[test]
fn few_members_packing_equals_the_exhaustive_search() {
    for seed in 0..24u64 {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(60_000 + seed);
        let k = rng.random_range(1..=5);
        let big = rng.random_range(8..=60);
        let fill = rng.random_range(0.1..0.9);
        let (m, n) = if seed % 2 == 0 { (k, big) } else { (big, k) };
        let b = BitMatrix::from_fn(m, n, |_, _| rng.random_bool(fill));
        assert!(packing_is_exact(m, n, b.count_ones()));
        let exact = temperature(&b, &TemperatureOptions::default())
            .unwrap()
            .packed
            .unwrap();
        let (t, _, _) = packed_few_members(&b).unwrap();
        assert!(
            (t - exact).abs() <= 1e-9 * (1.0 + exact),
            "seed {seed}: {m} x {n}: {t} vs {exact}"
        );
    }
}

/// Above the assignment size limit, a side of at most 5 members is packed
/// by the few-members search (issue 10, item 9: a 1 x 100,000 table
/// aborted on an 80 GB allocation); 6 members there are refused with a
/// message, not a panic.
#[test]
fn few_members_beyond_the_side_limit() {
    let big = PACKING_SIDE_LIMIT + 500;
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
    for (m, n) in [(1, big), (big, 3), (4, big)] {
        let b = BitMatrix::from_fn(m, n, |_, _| rng.random_bool(0.3));
        assert!(few_members_applies(&b));
        let t = temperature(&b, &TemperatureOptions::default()).unwrap();
        let packed = t.packed.unwrap();
        assert!(packed <= t.sorted);
        let (few, rows, cols) = packed_few_members(&b).unwrap();
        assert_eq!(packed.to_bits(), few.to_bits());
        assert_eq!((t.row_order, t.col_order), (rows, cols));
    }
    let b = BitMatrix::from_fn(6, big, |_, _| rng.random_bool(0.3));
    assert!(!few_members_applies(&b));
    let e = temperature(&b, &TemperatureOptions::default()).unwrap_err();
    assert!(e.to_string().contains("temperature-sorted"), "{e}");
}

/// The few-members search gives the same packing on one thread and on
/// three (the small-side orders are solved in parallel, the best picked in
/// enumeration order).
#[test]
fn few_members_packing_is_the_same_for_any_thread_count() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(8);
    let b = BitMatrix::from_fn(4, 300, |_, _| rng.random_bool(0.4));
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| packed_few_members(&b).unwrap())
    };
    let (one, three) = (run(1), run(3));
    assert_eq!(one.0.to_bits(), three.0.to_bits());
    assert_eq!((one.1, one.2), (three.1, three.2));
}
