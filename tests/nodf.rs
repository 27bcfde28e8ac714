//! NODF and WNODF against a slow pair-by-pair reference (tests/common),
//! and the facts listed in ../shared/METHODS.md §1-2.

mod common;

use approx::assert_abs_diff_eq;
use common::*;
use nidus::metrics::{nodf, wnodf, Order, Parts};
use nidus::Network;
use rand::seq::SliceRandom;
use rand::Rng;

fn close(a: Option<f64>, b: Option<f64>, what: &str) {
    match (a, b) {
        (Some(x), Some(y)) => assert!(
            (x - y).abs() <= 1e-12 * y.abs().max(1.0),
            "{what}: {x} vs {y}"
        ),
        (None, None) => {}
        _ => panic!("{what}: {a:?} vs {b:?}"),
    }
}

fn check(p: Parts, r: (f64, Option<f64>, Option<f64>), what: &str) {
    close(Some(p.total), Some(r.0), what);
    close(p.rows, r.1, what);
    close(p.cols, r.2, what);
}

/// Hundreds of seeded random matrices, binary and weighted with ties, with
/// empty rows and columns and thin shapes: the crate equals the reference
/// written from the definition (METHODS.md §1-2) to 1e-12.
#[test]
fn random_matrices_match_reference() {
    let mut rng = rng(20261202);
    let mut checked = 0;
    for case in 0..400 {
        let (m, n) = match case % 10 {
            0 => (1, rng.random_range(2..40)),
            1 => (rng.random_range(2..40), 1),
            _ => (rng.random_range(1..30), rng.random_range(1..90)),
        };
        if m * n < 2 {
            continue;
        }
        let fill = rng.random_range(0.05..0.95);
        let maxw = [1, 3, 20][case % 3];
        let w = random_matrix(&mut rng, m, n, fill, maxw);
        let Ok(net) = Network::from_array(to_array(&w)) else {
            continue;
        }; // all-zero draw
        for (order, sorted) in [(Order::Sorted, true), (Order::Given, false)] {
            check(
                nodf(&net, order).unwrap(),
                reference_nodf(&w, sorted, false),
                &format!("nodf case {case}"),
            );
            check(
                wnodf(&net, order).unwrap(),
                reference_nodf(&w, sorted, true),
                &format!("wnodf case {case}"),
            );
        }
        checked += 1;
    }
    assert!(checked > 350, "only {checked} cases checked");
}

fn staircase(m: usize, n: usize) -> Vec<Vec<f64>> {
    // Row i has the first ceil((m - i) n / m) columns: distinct row degrees
    // when n >= m, and nested by construction.
    (0..m)
        .map(|i| {
            (0..n)
                .map(|j| if j < (m - i) * n / m { 1.0 } else { 0.0 })
                .collect()
        })
        .collect()
}

/// METHODS.md §1 (Almeida-Neto et al. 2008): a perfectly nested matrix whose
/// rows all differ in degree and whose columns all differ in degree has NODF
/// 100 in the sorted order, whatever order the rows and columns come in.
#[test]
fn staircase_is_100_in_any_input_order() {
    let mut rng = rng(7);
    for k in 2..12 {
        let w = staircase(k, k); // row i: the first k - i columns
        let mut rows: Vec<usize> = (0..k).collect();
        let mut cols: Vec<usize> = (0..k).collect();
        rows.shuffle(&mut rng);
        cols.shuffle(&mut rng);
        let shuffled: Vec<Vec<f64>> = rows
            .iter()
            .map(|&i| cols.iter().map(|&j| w[i][j]).collect())
            .collect();
        let net = Network::from_array(to_array(&shuffled)).unwrap();
        let p = nodf(&net, Order::Sorted).unwrap();
        assert_eq!(
            (p.total, p.rows, p.cols),
            (100.0, Some(100.0), Some(100.0)),
            "k = {k}"
        );
        // In the given order the unshuffled staircase is also 100.
        let net = Network::from_array(to_array(&w)).unwrap();
        assert_eq!(nodf(&net, Order::Given).unwrap().total, 100.0);
    }
}

/// Britton, Almeida-Neto & Corso (2015), Biomath 4:1512171: equal row
/// degrees and equal column degrees give NODF 0. Circulant matrices (row i
/// holds columns i..i+k mod n) have every degree equal to k.
#[test]
fn equal_degrees_give_zero() {
    for n in 2..15 {
        for k in 1..=n {
            let w: Vec<Vec<f64>> = (0..n)
                .map(|i| {
                    (0..n)
                        .map(|j| if (j + n - i) % n < k { 1.0 } else { 0.0 })
                        .collect()
                })
                .collect();
            let net = Network::from_array(to_array(&w)).unwrap();
            for order in [Order::Sorted, Order::Given] {
                assert_eq!(nodf(&net, order).unwrap().total, 0.0, "n = {n}, k = {k}");
            }
        }
    }
}

/// METHODS.md §1: NODF(W^T) = NODF(W) with the rows and columns parts swapped.
#[test]
fn transpose_swaps_parts() {
    let mut rng = rng(11);
    for _ in 0..100 {
        let (m, n) = (rng.random_range(2..25), rng.random_range(2..25));
        let w = random_matrix(&mut rng, m, n, 0.4, 5);
        let Ok(net) = Network::from_array(to_array(&w)) else {
            continue;
        };
        let t = net.transpose();
        for order in [Order::Sorted, Order::Given] {
            for f in [nodf::<Network<f64>>, wnodf::<Network<f64>>] {
                let (a, b) = (f(&net, order).unwrap(), f(&t, order).unwrap());
                assert_abs_diff_eq!(a.total, b.total, epsilon = 1e-12);
                assert_eq!(a.rows, b.cols);
                assert_eq!(a.cols, b.rows);
            }
        }
    }
}

/// METHODS.md §2 (Almeida-Neto & Ulrich 2011): binary matrices have WNODF 0,
/// and `[[5,4,3],[2,1,0],[1,0,0]]` has WNODF 100.
#[test]
fn wnodf_facts() {
    let mut rng = rng(3);
    for _ in 0..100 {
        let w = random_matrix(&mut rng, 6, 9, 0.5, 1);
        let Ok(net) = Network::from_array(to_array(&w)) else {
            continue;
        };
        assert_eq!(wnodf(&net, Order::Sorted).unwrap().total, 0.0);
        assert_eq!(wnodf(&net, Order::Given).unwrap().total, 0.0);
    }
    let net = Network::from_array(ndarray::array![
        [5.0, 4.0, 3.0],
        [2.0, 1.0, 0.0],
        [1.0, 0.0, 0.0]
    ])
    .unwrap();
    let p = wnodf(&net, Order::Given).unwrap();
    assert_eq!((p.total, p.rows, p.cols), (100.0, Some(100.0), Some(100.0)));
}

/// Worked by hand (common practice): upper degree 5, lower degree 4, three
/// shared partners: the pair scores 75; in the given order a lower row that
/// comes first scores 0.
#[test]
fn one_pair_by_hand() {
    let up = [1.0, 1.0, 1.0, 1.0, 1.0, 0.0];
    let low = [1.0, 1.0, 1.0, 0.0, 0.0, 1.0];
    let net = Network::from_array(to_array(&vec![up.to_vec(), low.to_vec()])).unwrap();
    assert_eq!(nodf(&net, Order::Given).unwrap().rows, Some(75.0));
    let net = Network::from_array(to_array(&vec![low.to_vec(), up.to_vec()])).unwrap();
    assert_eq!(nodf(&net, Order::Given).unwrap().rows, Some(0.0));
    assert_eq!(nodf(&net, Order::Sorted).unwrap().rows, Some(75.0));
}

/// METHODS.md §1: a side with fewer than two members has no part; no pairs
/// at all is an error.
#[test]
fn thin_networks() {
    let net = Network::from_array(ndarray::array![[1.0, 1.0, 0.0]]).unwrap();
    let p = nodf(&net, Order::Sorted).unwrap();
    assert_eq!(p.rows, None);
    assert_eq!(p.cols, Some(p.total));
    assert!(nodf(
        &Network::from_array(ndarray::array![[2.0]]).unwrap(),
        Order::Sorted
    )
    .is_err());
}
