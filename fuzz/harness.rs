//! The in-process fuzz campaign of issue 10, shared by the short seeded run
//! in the test suite (`tests/fuzz.rs`) and the long run
//! (`cargo run --release --example fuzz -- ITERATIONS SEED`).
//!
//! Each iteration takes one of the seed texts below (a matrix, an edge
//! list, a saved-draws file written by nidus itself), mutates it with a
//! seeded generator (byte flips, cuts, repeats, inserted delimiters and
//! number-like tokens, extreme numbers) and checks:
//! * the network parsers never panic, in both layouts;
//! * the saved-draws parser never panics, and a mutated saved-draws file it
//!   accepts has exactly the seed's draws (a change the checksum missed
//!   would be a wrong result, counted as a failure).
//!
//! The seed texts are invented for the campaign.

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::Path;

use nidus::io::{parse_network, Layout, ReadOptions};
use nidus::null::{parse_draws, run_null, NullConfig, NullModel};
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// What a campaign saw.
#[derive(Debug, Default)]
pub struct Tally {
    /// Inputs tried.
    pub runs: usize,
    /// Inputs a parser accepted.
    pub accepted: usize,
    /// Panics, and accepted saved-draws files whose draws differ from the
    /// seed's (each with its input, for the report).
    pub failures: Vec<String>,
}

const MATRIX: &str = ",a,b,c,d\nw,1,1,1,1\nx,1,2.5,1,0\ny,1,1,0,0\nz,3,0,0,1\n";
const EDGES: &str = "row,col,weight\nw,a,1\nw,b,2\nx,a,1\ny,c,0.5\nz,d,4\n";
const TOKENS: &[&str] = &[
    ",",
    ";",
    "\t",
    "\n",
    "\r",
    "\"",
    "1e308",
    "1e-400",
    "-1",
    "NaN",
    "inf",
    "1,5",
    "0",
    "18446744073709551615",
    "#",
    "# end",
    "\u{c}",
    " ",
    "1.",
    ".5",
];

fn saved_seed() -> String {
    let net = nidus::io::parse_network(
        MATRIX.as_bytes(),
        Path::new("m.csv"),
        &ReadOptions::default(),
    )
    .expect("the seed matrix reads");
    let nodf = nidus::index::IndexKind::named("nodf").expect("nodf");
    let run = run_null(
        &net,
        &NullConfig::new(NullModel::FixedRows, vec![nodf], 30, 3),
    )
    .expect("the seed run");
    let mut out = Vec::new();
    run.write_draws("m.csv", &mut out)
        .expect("written to memory");
    String::from_utf8(out).expect("utf-8")
}

fn mutate(rng: &mut Xoshiro256PlusPlus, seed: &[u8]) -> Vec<u8> {
    let mut v = seed.to_vec();
    for _ in 0..rng.random_range(1..4) {
        let at = if v.is_empty() {
            0
        } else {
            rng.random_range(0..=v.len())
        };
        match rng.random_range(0..5) {
            0 if !v.is_empty() => {
                let i = at.min(v.len() - 1);
                v[i] ^= 1 << rng.random_range(0..8);
            }
            1 => v.truncate(at),
            2 => {
                let tok = TOKENS[rng.random_range(0..TOKENS.len())];
                v.splice(at..at, tok.bytes());
            }
            3 if !v.is_empty() => {
                let end = (at + rng.random_range(1..20)).min(v.len());
                let piece = v[at.min(end)..end].to_vec();
                v.splice(at..at, piece);
            }
            _ => {
                let end = (at + rng.random_range(1..8)).min(v.len());
                v.drain(at.min(end)..end);
            }
        }
    }
    v
}

/// Runs `iterations` mutated inputs from `seed`.
pub fn campaign(iterations: usize, seed: u64) -> Tally {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let saved = saved_seed();
    let expected = parse_draws(&saved, Path::new("seed")).expect("the seed parses");
    let mut tally = Tally::default();
    for _ in 0..iterations {
        let which = rng.random_range(0..3);
        let base: &str = [MATRIX, EDGES, saved.as_str()][which];
        let input = mutate(&mut rng, base.as_bytes());
        tally.runs += 1;
        let shown = String::from_utf8_lossy(&input).into_owned();
        if which < 2 {
            for layout in [Layout::Matrix, Layout::Edges] {
                let opts = ReadOptions {
                    layout,
                    ..ReadOptions::default()
                };
                match catch_unwind(AssertUnwindSafe(|| {
                    parse_network(&input, Path::new("f"), &opts).is_ok()
                })) {
                    Ok(true) => tally.accepted += 1,
                    Ok(false) => {}
                    Err(_) => tally
                        .failures
                        .push(format!("parser panic ({layout:?}): {shown:?}")),
                }
            }
        } else {
            let Ok(text) = String::from_utf8(input.clone()) else {
                continue;
            };
            match catch_unwind(AssertUnwindSafe(|| parse_draws(&text, Path::new("f")))) {
                // No section at all: `merge` refuses it (nothing to merge).
                Ok(Ok(got)) if got.is_empty() => {}
                Ok(Ok(got)) => {
                    tally.accepted += 1;
                    let same = got.len() == expected.len()
                        && got.iter().zip(&expected).all(|(a, b)| {
                            a.run.draw_ids == b.run.draw_ids
                                && a.run.values.iter().flatten().map(|x| x.to_bits()).eq(b
                                    .run
                                    .values
                                    .iter()
                                    .flatten()
                                    .map(|x| x.to_bits()))
                                && a.run.observed == b.run.observed
                        });
                    if !same {
                        tally
                            .failures
                            .push(format!("a changed saved file was accepted: {shown:?}"));
                    }
                }
                Ok(Err(_)) => {}
                Err(_) => tally
                    .failures
                    .push(format!("saved-draws parser panic: {shown:?}")),
            }
        }
    }
    tally
}
