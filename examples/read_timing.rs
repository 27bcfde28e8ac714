//! Times reading one network file with `nidus::io::read_network` and prints
//! the size of the result: a timing script for the reader (run it in a
//! release build; wrap it in `/usr/bin/time -v` for peak memory).
//!
//! Usage: `cargo run --release --example read_timing -- FILE [matrix|edges] [REPEATS]`

use std::path::Path;
use std::process::ExitCode;
use std::time::Instant;

use nidus::io::{read_network, Layout, ReadOptions};

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let Some(file) = args.first() else {
        eprintln!("usage: read_timing FILE [matrix|edges] [REPEATS]");
        return ExitCode::from(2);
    };
    let layout: Layout = match args.get(1).map(|s| s.parse()).transpose() {
        Ok(l) => l.unwrap_or_default(),
        Err(e) => {
            eprintln!("read_timing: {e}");
            return ExitCode::from(2);
        }
    };
    let repeats: usize = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(1);
    let opts = ReadOptions {
        layout,
        ..Default::default()
    };
    for _ in 0..repeats.max(1) {
        let start = Instant::now();
        match read_network(Path::new(file), &opts) {
            Ok(net) => println!(
                "{file}: {} x {} network, {} links, {} storage, read in {:.3} s",
                net.nrows(),
                net.ncols(),
                net.links(),
                if net.is_sparse() { "sparse" } else { "dense" },
                start.elapsed().as_secs_f64()
            ),
            Err(e) => {
                eprintln!("{e}");
                return ExitCode::from(2);
            }
        }
    }
    ExitCode::SUCCESS
}
