//! Per-species contributions (`nidus::analyses::species`): the incremental
//! engine against full recomputation, leave-one-out against direct
//! recomputation, thread independence, the published properties of
//! contributions, and agreement with a slow implementation from the
//! definition (tests/common).

mod common;

use common::{
    random_matrix, reference_contribution, reference_nodf, rng, to_array, transpose, Mat,
};
use nidus::analyses::species::{
    idiosyncratic_temperatures, leave_one_out, redraw, species_contributions, wnodf_redraw,
    NodfEngine, RedrawModel, Role, Side, SpeciesAnalysis, SpeciesOptions,
};
use nidus::metrics::temperature::{temperature, TemperatureOptions};
use nidus::metrics::{nodf, Order};
use nidus::{BitMatrix, Network};
use rand::Rng;

fn bits_of(w: &Mat) -> BitMatrix {
    BitMatrix::from_fn(w.len(), w[0].len(), |i, j| w[i][j] > 0.0)
}

/// A random replacement for a species with `k` partners: a random density
/// (sometimes empty or full), bit-packed.
fn random_cells(r: &mut impl Rng, k: usize) -> Vec<u64> {
    let p = match r.random_range(0..10) {
        0 => 0.0,
        1 => 1.0,
        _ => r.random::<f64>(),
    };
    let mut words = vec![0u64; k.div_ceil(64)];
    for j in 0..k {
        if r.random_bool(p) {
            words[j / 64] |= 1 << (j % 64);
        }
    }
    words
}

/// The incremental engine gives the full recomputation's NODF to the last
/// bit (METHODS.md §1 via `nodf` and `metrics::nodf`), on thousands of
/// random re-draws of rows and columns, with and without the overlap tables,
/// including tied degrees, empty members and multi-word rows.
#[test]
fn engine_equals_full_recomputation() {
    let mut r = rng(14);
    let mut checked = 0;
    for case in 0..60 {
        let (m, n) = if case % 10 == 9 {
            (r.random_range(60..140), r.random_range(60..140))
        } else {
            (r.random_range(2..25), r.random_range(2..25))
        };
        let fill = r.random_range(0.05..0.8);
        let w = random_matrix(&mut r, m, n, fill, 1);
        let b = bits_of(&w);
        if b.count_ones() == 0 {
            continue;
        }
        let limit = if case % 2 == 0 { usize::MAX } else { 0 };
        let engine = NodfEngine::with_table_limit(&b, limit).unwrap();
        assert_eq!(engine.observed(), nodf(&b, Order::Sorted).unwrap().total);
        let mut s = engine.scratch();
        for _ in 0..60 {
            let side = if r.random_bool(0.5) {
                Side::Row
            } else {
                Side::Col
            };
            let (own, other) = match side {
                Side::Row => (m, n),
                Side::Col => (n, m),
            };
            let i = r.random_range(0..own);
            engine.focus(side, i, &mut s);
            for _ in 0..3 {
                let cells = random_cells(&mut r, other);
                let fast = engine.nodf_with(&cells, &mut s);
                let mut changed = b.clone();
                for j in 0..other {
                    let on = (cells[j / 64] >> (j % 64)) & 1 == 1;
                    match side {
                        Side::Row => changed.set(i, j, on),
                        Side::Col => changed.set(j, i, on),
                    }
                }
                let full = nodf(&changed, Order::Sorted).unwrap().total;
                assert_eq!(fast.to_bits(), full.to_bits(), "case {case} {side:?} {i}");
                if changed.count_ones() > 0 && checked % 7 == 0 {
                    let net =
                        Network::from_array(ndarray::Array2::from_shape_fn((m, n), |(a, c)| {
                            u8::from(changed.get(a, c))
                        }))
                        .unwrap();
                    assert_eq!(fast, nodf(&net, Order::Sorted).unwrap().total);
                }
                checked += 1;
            }
        }
    }
    assert!(checked > 5000, "only {checked} re-draws checked");
}

/// Leave-one-out equals a direct recomputation from the definition
/// (METHODS.md §8: delete the species, drop partners left with no link,
/// NODF by the slow reference of tests/common), for every species of seeded
/// random networks.
#[test]
fn leave_one_out_equals_direct_recomputation() {
    let mut r = rng(8);
    for _ in 0..25 {
        let (m, n) = (r.random_range(2..14), r.random_range(2..14));
        let fill = r.random_range(0.1..0.7);
        let w = random_matrix(&mut r, m, n, fill, 1);
        let b = bits_of(&w);
        if b.count_ones() == 0 {
            continue;
        }
        let observed = reference_nodf(&w, true, false).0;
        for (side, mat) in [(Side::Row, w.clone()), (Side::Col, transpose(&w))] {
            for i in 0..mat.len() {
                let rest: Mat = (0..mat.len())
                    .filter(|&k| k != i)
                    .map(|k| mat[k].clone())
                    .collect();
                let keep: Vec<usize> = (0..mat[0].len())
                    .filter(|&j| rest.iter().any(|row| row[j] > 0.0))
                    .collect();
                let direct = if rest.is_empty() || keep.is_empty() {
                    None
                } else {
                    let red: Mat = rest
                        .iter()
                        .map(|row| keep.iter().map(|&j| row[j]).collect())
                        .collect();
                    let (k1, k2) = (red.len(), red[0].len());
                    (k1 * (k1 - 1) + k2 * (k2 - 1) > 0)
                        .then(|| reference_nodf(&red, true, false).0 - observed)
                };
                let fast = leave_one_out(&b, side, i, observed);
                match (fast, direct) {
                    (Some(a), Some(d)) => assert!((a - d).abs() < 1e-9, "{side:?} {i}: {a} vs {d}"),
                    (a, d) => assert_eq!(a, d, "{side:?} {i}"),
                }
            }
        }
    }
}

fn analysis(w: &Mat, opts: &SpeciesOptions) -> SpeciesAnalysis {
    let net = Network::from_array(to_array(w)).unwrap();
    species_contributions(&net, opts).unwrap()
}

/// Species draws depend on (seed, species, draw) alone: 1 and 2 threads
/// give identical tables, for both re-draw models (METHODS.md §7).
#[test]
fn identical_for_one_and_two_threads() {
    let mut r = rng(3);
    let w = random_matrix(&mut r, 30, 40, 0.2, 5);
    for model in [RedrawModel::Proportional, RedrawModel::KeepDegree] {
        let opts = SpeciesOptions {
            model,
            draws: 50,
            seed: 99,
            pack_restarts: 1,
            wnodf: model == RedrawModel::KeepDegree,
        };
        let run = |t| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(t)
                .build()
                .unwrap()
                .install(|| analysis(&w, &opts))
        };
        let (a, b) = (run(1), run(2));
        assert_eq!(a, b);
        assert!(a.species.iter().all(|s| s.contribution.is_some()));
        assert_eq!(
            a.species.iter().all(|s| s.wnodf_contribution.is_some()),
            opts.wnodf
        );
    }
}

fn staircase(k: usize) -> Mat {
    (0..k)
        .map(|i| (0..k).map(|j| f64::from(u8::from(i + j < k))).collect())
        .collect()
}

/// A perfect staircase has NODF 100, the maximum (Almeida-Neto et al. 2008),
/// so no re-draw can exceed it and every defined contribution is >= 0.
#[test]
fn staircase_contributions_are_not_negative() {
    let w = staircase(8);
    for model in [RedrawModel::Proportional, RedrawModel::KeepDegree] {
        let a = analysis(
            &w,
            &SpeciesOptions {
                model,
                draws: 199,
                seed: 5,
                pack_restarts: 0,
                wnodf: false,
            },
        );
        assert_eq!(a.nodf, 100.0);
        let defined: Vec<f64> = a.species.iter().filter_map(|s| s.contribution).collect();
        assert!(defined.len() >= 12, "{defined:?}");
        assert!(defined.iter().all(|&c| c >= 0.0), "{defined:?}");
        assert!(a.species.iter().all(|s| s.role != Role::BreaksPattern));
    }
}

/// A nested core plus one species whose links are the complement of the
/// pattern (it visits exactly the partners a species of its degree would
/// not): that species has the lowest contribution and the largest
/// idiosyncratic temperature (the expectation behind Saavedra et al. 2011
/// and Atmar & Patterson 1993; common practice as a check).
#[test]
fn complement_species_stands_out() {
    let mut w = staircase(10);
    // Row "R11": the complement of row 6's pattern (columns 4..10).
    w.push((0..10).map(|j| f64::from(u8::from(j >= 4))).collect());
    let a = analysis(
        &w,
        &SpeciesOptions {
            draws: 299,
            seed: 11,
            ..SpeciesOptions::default()
        },
    );
    let odd = a.species.iter().find(|s| s.label == "R11").unwrap();
    let lowest = a
        .species
        .iter()
        .filter_map(|s| s.contribution)
        .fold(f64::INFINITY, f64::min);
    assert_eq!(odd.contribution, Some(lowest));
    let hottest = a
        .species
        .iter()
        .map(|s| s.idiosyncratic_temperature)
        .fold(0.0, f64::max);
    assert_eq!(odd.idiosyncratic_temperature, hottest);
    assert_eq!(odd.role, Role::BreaksPattern);
    assert_eq!(
        a.species.last().map(|s| s.contribution.is_some()),
        Some(true)
    );
}

/// The z-scores agree with a slow implementation written from the
/// definition (tests/common::reference_contribution: full NODF per draw,
/// its own random numbers) to Monte Carlo precision: means within 5
/// standard errors of their difference, sds within 12 % (the relative
/// standard error of an sd from 2000 draws is about 1.6 %; common practice).
#[test]
fn z_scores_agree_with_slow_definition() {
    let mut r = rng(21);
    let w = random_matrix(&mut r, 9, 12, 0.35, 1);
    let net = Network::from_array(to_array(&w)).unwrap();
    let b = net.binary().unwrap();
    let engine = NodfEngine::new(&b).unwrap();
    let mut s = engine.scratch();
    let draws = 2000;
    let with_links = |mat: &Mat| -> Vec<usize> {
        (0..mat.len())
            .filter(|&i| mat[i].iter().any(|&x| x > 0.0))
            .take(2)
            .collect()
    };
    let picks: Vec<(Side, usize)> = with_links(&w)
        .into_iter()
        .map(|i| (Side::Row, i))
        .chain(
            with_links(&transpose(&w))
                .into_iter()
                .map(|j| (Side::Col, j)),
        )
        .collect();
    assert_eq!(picks.len(), 4);
    for (side, i) in picks {
        let mat = match side {
            Side::Row => w.clone(),
            Side::Col => transpose(&w),
        };
        assert!(mat[i].iter().any(|&x| x > 0.0), "pick species with links");
        let fast = redraw(
            &engine,
            side,
            i,
            RedrawModel::Proportional,
            draws,
            3,
            &mut s,
        )
        .unwrap();
        let (mean, sd, z) = reference_contribution(&mat, i, draws, &mut r);
        let se = ((fast.sd.powi(2) + sd.powi(2)) / draws as f64).sqrt();
        assert!(
            (fast.mean - mean).abs() < 5.0 * se,
            "{side:?} {i}: {fast:?} vs {mean} {sd}"
        );
        assert!(
            (fast.sd / sd - 1.0).abs() < 0.12,
            "{side:?} {i}: {fast:?} vs {sd}"
        );
        let zf = fast.z.unwrap();
        assert!(
            (zf - z).abs() < 0.15 * (1.0 + z.abs()),
            "{side:?} {i}: z {zf} vs {z}"
        );
    }
}

/// `keep-degree` keeps the species' degree: with every draw's value the
/// NODF of a matrix where only that species changed, re-drawing a species
/// whose degree equals the other side's size (a full row) can only give the
/// observed NODF, so its sd is 0 and its contribution undefined.
#[test]
fn keep_degree_on_a_full_row_is_constant() {
    let w = staircase(6);
    let b = bits_of(&w);
    let engine = NodfEngine::new(&b).unwrap();
    let mut s = engine.scratch();
    let r = redraw(
        &engine,
        Side::Row,
        0,
        RedrawModel::KeepDegree,
        50,
        1,
        &mut s,
    )
    .unwrap();
    assert_eq!((r.mean, r.sd, r.z), (100.0, 0.0, None));
}

/// Idiosyncratic temperatures average to the packed T (the scaling stated
/// in docs/methods.md: rows `100 sum u / (n U_max)`, columns
/// `100 sum u / (m U_max)`), and T equals `metrics::temperature`'s packed
/// value with the same starts (Atmar & Patterson 1993).
#[test]
fn idiosyncratic_temperatures_average_to_t() {
    let mut r = rng(4);
    for _ in 0..10 {
        let (m, n) = (r.random_range(3..20), r.random_range(3..20));
        let w = random_matrix(&mut r, m, n, 0.4, 1);
        let net = Network::from_array(to_array(&w)).unwrap();
        let b = net.binary().unwrap();
        if b.count_ones() == 0 {
            continue;
        }
        let it = idiosyncratic_temperatures(&b, 2, 9).unwrap();
        let (rows, cols, t) = (it.rows, it.cols, it.temperature);
        let tol = 1e-9 * (1.0 + t);
        assert!((rows.iter().sum::<f64>() / m as f64 - t).abs() < tol);
        assert!((cols.iter().sum::<f64>() / n as f64 - t).abs() < tol);
        let opts = TemperatureOptions::default()
            .with_pack(true)
            .with_restarts(2)
            .with_seed(9);
        let full = temperature(&net, &opts).unwrap().packed.unwrap();
        assert!((full - t).abs() < tol, "{full} vs {t}");
    }
}

/// Species with no links (kept here on purpose, though readers drop them)
/// get an undefined contribution and the role "no links"; the rest of the
/// table is computed.
#[test]
fn zero_degree_species_are_undefined() {
    let mut w = staircase(5);
    w.push(vec![0.0; 5]);
    let a = analysis(
        &w,
        &SpeciesOptions {
            draws: 20,
            ..SpeciesOptions::default()
        },
    );
    let empty = a.species.iter().find(|s| s.label == "R6").unwrap();
    assert_eq!(empty.contribution, None);
    assert_eq!(empty.role, Role::NoLinks);
    assert_eq!(a.species.last().unwrap().label, "R6");
    assert!(
        a.species
            .iter()
            .filter(|s| s.contribution.is_some())
            .count()
            >= 8
    );
}

/// `nidus species` end to end on a small hand-typed network: JSON lines with
/// the documented keys, sorted by contribution, the same rows as CSV, the
/// same bytes for 1 and 2 threads, and exit status 2 for bad options.
#[test]
fn command_line_outputs() {
    let path = common::scratch("species_hand.csv");
    std::fs::write(
        &path,
        "plant,bee,fly,moth,wasp\nA,1,1,1,1\nB,1,1,1,0\nC,1,1,0,0\nD,0,0,1,1\n",
    )
    .unwrap();
    let p = path.to_str().unwrap();
    let args = [
        "species", p, "--seed", "4", "--draws", "59", "--format", "json",
    ];
    let out = common::nidus(&args);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<serde_json::Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 8);
    for key in [
        "side",
        "label",
        "degree",
        "contribution",
        "leave_one_out",
        "idiosyncratic_temperature",
        "role",
    ] {
        assert!(lines.iter().all(|v| v.get(key).is_some()), "{key}");
    }
    let c: Vec<f64> = lines
        .iter()
        .filter_map(|v| v["contribution"].as_f64())
        .collect();
    assert!(c.windows(2).all(|w| w[0] >= w[1]), "{c:?}");
    let two = common::nidus(&[&["--threads", "2"][..], &args[..]].concat());
    assert_eq!(String::from_utf8(two.stdout).unwrap(), text);
    let csv = common::nidus(&[
        "species", p, "--seed", "4", "--draws", "59", "--format", "csv",
    ]);
    let csv = String::from_utf8(csv.stdout).unwrap();
    assert!(csv.starts_with("file,side,label,degree,contribution,"));
    assert_eq!(csv.lines().count(), 9);
    let text = common::nidus(&["species", p, "--seed", "4", "--draws", "59"]);
    let text = String::from_utf8(text.stdout).unwrap();
    assert!(text.contains("role") && text.contains("NODF"), "{text}");
    let bad = common::nidus(&["species", p, "--seed", "4", "--draws", "1"]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("draws"));
}

/// WNODF contributions agree with a slow implementation from the
/// definition (permute the species' cell values across the other side, full
/// WNODF by tests/common's reference of Almeida-Neto & Ulrich 2011) to Monte
/// Carlo precision (as above: 5 standard errors, sd within 12 %); a binary
/// network has WNODF 0 in every draw, so its WNODF contributions are
/// undefined.
#[test]
fn wnodf_contributions_agree_with_slow_definition() {
    let mut r = rng(31);
    let w = random_matrix(&mut r, 8, 10, 0.5, 6);
    let net = Network::from_array(to_array(&w)).unwrap();
    let csr = net.csr().into_owned();
    let draws = 1500;
    let i = (0..8)
        .find(|&i| w[i].iter().filter(|&&x| x > 0.0).count() >= 3)
        .unwrap();
    let fast = wnodf_redraw(&csr, Side::Row, i, draws, 2).unwrap();
    let mut v = w.clone();
    let mut values = Vec::new();
    for _ in 0..draws {
        let mut row = w[i].clone();
        for a in (1..row.len()).rev() {
            let b = r.random_range(0..=a);
            row.swap(a, b);
        }
        v[i] = row;
        values.push(reference_nodf(&v, true, true).0);
    }
    let mean = values.iter().sum::<f64>() / draws as f64;
    let sd = (values.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (draws as f64 - 1.0)).sqrt();
    let se = ((fast.sd.powi(2) + sd.powi(2)) / draws as f64).sqrt();
    assert!(
        (fast.mean - mean).abs() < 5.0 * se,
        "{fast:?} vs {mean} {sd}"
    );
    assert!((fast.sd / sd - 1.0).abs() < 0.12, "{fast:?} vs {sd}");
    let binary = Network::from_array(to_array(&staircase(6))).unwrap();
    let b = wnodf_redraw(&binary.csr(), Side::Row, 2, 20, 1).unwrap();
    assert_eq!((b.mean, b.sd, b.z), (0.0, 0.0, None));
}
