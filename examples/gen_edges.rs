//! Writes a seeded random edge list for timing the reader: `links` distinct
//! cells drawn uniformly from a `rows x cols` table, rows labelled `p{i}`,
//! columns `v{j}`, integer weights 1-20, one line per cell in drawing order,
//! after a header line `row,col,weight`. The data are synthetic.
//!
//! Usage: `cargo run --release --example gen_edges -- ROWS COLS LINKS SEED OUT`
//! (for example `100000 100000 1000000 1 big.csv`).

use std::collections::HashSet;
use std::io::Write;
use std::process::ExitCode;

use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

fn run(args: &[String]) -> Result<(), String> {
    let [rows, cols, links, seed, out] = args else {
        return Err("usage: gen_edges ROWS COLS LINKS SEED OUT".into());
    };
    let num = |s: &str, what: &str| {
        s.parse::<u64>()
            .map_err(|_| format!("{what} must be a whole number, got '{s}'"))
    };
    let (rows, cols, links, seed) = (
        num(rows, "ROWS")?,
        num(cols, "COLS")?,
        num(links, "LINKS")?,
        num(seed, "SEED")?,
    );
    if rows == 0 || cols == 0 {
        return Err("ROWS and COLS must be positive".into());
    }
    let cells = rows as u128 * cols as u128;
    if links as u128 > cells / 2 {
        return Err(format!(
            "LINKS {links} is more than half of the {cells} cells; this generator draws sparse tables"
        ));
    }
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let mut seen: HashSet<(u64, u64)> = HashSet::with_capacity(links as usize);
    let file = std::fs::File::create(out).map_err(|e| format!("{out}: {e}"))?;
    let mut w = std::io::BufWriter::new(file);
    let io = |e: std::io::Error| format!("{out}: {e}");
    writeln!(w, "row,col,weight").map_err(io)?;
    while (seen.len() as u64) < links {
        let (i, j) = (rng.random_range(0..rows), rng.random_range(0..cols));
        if seen.insert((i, j)) {
            let weight = rng.random_range(1..=20u32);
            writeln!(w, "p{i},v{j},{weight}").map_err(io)?;
        }
    }
    w.flush().map_err(io)
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    match run(&args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("gen_edges: {e}");
            ExitCode::from(2)
        }
    }
}
