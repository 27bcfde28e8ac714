//! Shared helpers for the integration tests: slow references written
//! straight from ../shared/METHODS.md, and seeded random matrices.
#![allow(dead_code)]

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// A matrix as plain nested vectors, the form the references read.
pub type Mat = Vec<Vec<f64>>;

/// Seeded generator for test inputs.
pub fn rng(seed: u64) -> Xoshiro256PlusPlus {
    Xoshiro256PlusPlus::seed_from_u64(seed)
}

/// A random `m x n` matrix: each cell non-zero with probability `fill`,
/// weights drawn from `1..=max_weight` (so ties are common).
pub fn random_matrix(rng: &mut impl Rng, m: usize, n: usize, fill: f64, max_weight: u32) -> Mat {
    (0..m)
        .map(|_| {
            (0..n)
                .map(|_| {
                    if rng.random_bool(fill) {
                        rng.random_range(1..=max_weight) as f64
                    } else {
                        0.0
                    }
                })
                .collect()
        })
        .collect()
}

pub fn to_array(w: &Mat) -> ndarray::Array2<f64> {
    let (m, n) = (w.len(), w[0].len());
    ndarray::Array2::from_shape_fn((m, n), |(i, j)| w[i][j])
}

pub fn transpose(w: &Mat) -> Mat {
    (0..w[0].len())
        .map(|j| w.iter().map(|r| r[j]).collect())
        .collect()
}

fn degree(r: &[f64]) -> usize {
    r.iter().filter(|&&x| x > 0.0).count()
}

/// Stable decreasing-degree order of the rows (METHODS.md "Sorting").
pub fn sorted_rows(w: &Mat) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..w.len()).collect();
    idx.sort_by_key(|&i| std::cmp::Reverse(degree(&w[i])));
    idx
}

/// METHODS.md §1-2, pair by pair: the sum over ordered row pairs (earlier =
/// upper) of the pair values, in the order `rows` (a permutation).
/// `weighted` switches the overlap count from NODF's to WNODF's.
fn side_sum(w: &Mat, rows: &[usize], weighted: bool) -> f64 {
    let mut s = 0.0;
    for a in 0..rows.len() {
        for b in a + 1..rows.len() {
            let (u, l) = (&w[rows[a]], &w[rows[b]]);
            let (du, dl) = (degree(u), degree(l));
            if du > dl && dl > 0 {
                let k = (0..u.len())
                    .filter(|&j| {
                        if weighted {
                            l[j] > 0.0 && l[j] < u[j]
                        } else {
                            l[j] > 0.0 && u[j] > 0.0
                        }
                    })
                    .count();
                s += 100.0 * k as f64 / dl as f64;
            }
        }
    }
    s
}

/// Reference (total, rows part, columns part) for NODF (`weighted = false`)
/// or WNODF (`true`), in the sorted (`sorted = true`) or given order.
pub fn reference_nodf(w: &Mat, sorted: bool, weighted: bool) -> (f64, Option<f64>, Option<f64>) {
    let t = transpose(w);
    let (m, n) = (w.len(), t.len());
    let rows: Vec<usize> = if sorted {
        sorted_rows(w)
    } else {
        (0..m).collect()
    };
    let cols: Vec<usize> = if sorted {
        sorted_rows(&t)
    } else {
        (0..n).collect()
    };
    let (sr, sc) = (side_sum(w, &rows, weighted), side_sum(&t, &cols, weighted));
    let (pr, pc) = ((m * (m - 1) / 2) as f64, (n * (n - 1) / 2) as f64);
    let part = |s: f64, p: f64| if p > 0.0 { Some(s / p) } else { None };
    ((sr + sc) / (pr + pc), part(sr, pr), part(sc, pc))
}

/// Runs the `nidus` binary built for the tests.
pub fn nidus(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_nidus"))
        .args(args)
        .output()
        .expect("run nidus")
}

/// Runs the `nidus` binary with `stdin` as its standard input.
pub fn nidus_with_stdin(args: &[&str], stdin: &[u8]) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_nidus"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run nidus");
    child.stdin.take().unwrap().write_all(stdin).unwrap();
    child.wait_with_output().unwrap()
}

/// A path in a scratch folder of this test binary and process.
pub fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!(
        "nidus-{}-{}",
        env!("CARGO_CRATE_NAME"),
        std::process::id()
    ));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

/// Writes `w` in the matrix layout with labels `r0..`, `c0..`.
pub fn write_matrix_file(path: &Path, w: &Mat) {
    let mut s = String::from("species");
    for j in 0..w[0].len() {
        s += &format!(",c{j}");
    }
    s.push('\n');
    for (i, row) in w.iter().enumerate() {
        s += &format!("r{i}");
        for x in row {
            s += &format!(",{x}");
        }
        s.push('\n');
    }
    std::fs::write(path, s).unwrap();
}

/// Slow species contribution from its definition (Saavedra, Stouffer, Uzzi &
/// Bascompte 2011, Nature 478:233-235; METHODS.md §8): re-draw only row
/// `i`'s cells, each cell `j` present with probability `(d_i/n + d_j/m)/2`
/// (Bascompte et al. 2003, PNAS 100:9383-9387), recompute NODF (sorted) in
/// full with [`reference_nodf`] for each of `draws` draws, and return
/// `(mean, sd, z)` with the sd's divisor `R - 1`. Its random numbers come
/// from `rng`, independent of the crate's streams. Column species: pass the
/// transpose.
pub fn reference_contribution(
    w: &Mat,
    i: usize,
    draws: usize,
    rng: &mut impl Rng,
) -> (f64, f64, f64) {
    let (m, n) = (w.len(), w[0].len());
    let deg = |r: &Vec<f64>| r.iter().filter(|&&x| x > 0.0).count();
    let di = deg(&w[i]) as f64;
    let cd: Vec<f64> = (0..n)
        .map(|j| (0..m).filter(|&r| w[r][j] > 0.0).count() as f64)
        .collect();
    let observed = reference_nodf(w, true, false).0;
    let mut v = w.clone();
    let mut values = Vec::with_capacity(draws);
    for _ in 0..draws {
        for j in 0..n {
            let p = (di / n as f64 + cd[j] / m as f64) / 2.0;
            v[i][j] = if rng.random_bool(p) { 1.0 } else { 0.0 };
        }
        values.push(reference_nodf(&v, true, false).0);
    }
    let r = draws as f64;
    let mean = values.iter().sum::<f64>() / r;
    let sd = (values.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (r - 1.0)).sqrt();
    (mean, sd, (observed - mean) / sd)
}

// ---------------------------------------------------------------------------
// Chi-square distribution, written here from its definition (checked against
// table values in tests/null_models.rs).

/// `ln Gamma(a)` for `a` a positive multiple of 1/2, exactly from
/// `Gamma(a + 1) = a Gamma(a)`, `Gamma(1) = 1`, `Gamma(1/2) = sqrt(pi)`.
pub fn ln_gamma_half(a: f64) -> f64 {
    let (mut x, mut acc) = if (a * 2.0).round() as i64 % 2 == 0 {
        (1.0, 0.0)
    } else {
        (0.5, 0.5 * std::f64::consts::PI.ln())
    };
    while x < a - 1e-9 {
        acc += x.ln();
        x += 1.0;
    }
    acc
}

/// Regularized lower incomplete gamma `P(a, x)` by its power series
/// (Abramowitz & Stegun 1964, 6.5.29):
/// `P(a, x) = x^a e^-x / Gamma(a + 1) * sum_k x^k / ((a+1)..(a+k))`.
pub fn gamma_p(a: f64, x: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    if x > 500.0 + 10.0 * a {
        return 1.0; // far in the upper tail: the series would overflow
    }
    let mut term = 1.0;
    let mut sum = 1.0;
    let mut k = 0.0;
    while term > 1e-17 * sum {
        k += 1.0;
        term *= x / (a + k);
        sum += term;
        assert!(k < 1e6);
    }
    (a * x.ln() - x - ln_gamma_half(a + 1.0)).exp() * sum
}

/// Upper tail `P(X >= x)` of a chi-square variable with `df` degrees of freedom.
pub fn chi2_sf(x: f64, df: usize) -> f64 {
    1.0 - gamma_p(df as f64 / 2.0, x / 2.0)
}

/// Pearson's chi-square statistic and its p-value for observed counts
/// against expected probabilities (all expected counts here are >= 100).
pub fn chi_square(counts: &[usize], probs: &[f64]) -> f64 {
    let n: usize = counts.iter().sum();
    let stat: f64 = counts
        .iter()
        .zip(probs)
        .map(|(&c, &p)| {
            let e = p * n as f64;
            (c as f64 - e).powi(2) / e
        })
        .sum();
    chi2_sf(stat, counts.len() - 1)
}
