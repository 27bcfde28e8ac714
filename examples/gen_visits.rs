//! Writes the visit-count network of `benches/effort.rs` (200 x 300, 50,000
//! visits, seed 1 unless given) in the matrix layout, for timing
//! `nidus effort` end to end:
//!
//! ```sh
//! cargo run --release --example gen_visits -- visits.csv [rows cols visits seed]
//! /usr/bin/time -v target/release/nidus effort visits.csv --draws 999 --seed 1 --index nodf,wnodf --threads 2
//! ```

#[path = "../benches/support/visits.rs"]
mod visits;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let Some(path) = args.first() else {
        eprintln!("usage: gen_visits OUT.csv [rows cols visits seed]");
        std::process::exit(2);
    };
    let num = |i: usize, d: usize| {
        args.get(i)
            .map_or(d, |s| s.parse().expect("a whole number"))
    };
    let net = visits::visits(num(1, 200), num(2, 300), num(3, 50_000), num(4, 1) as u64);
    let file = std::io::BufWriter::new(std::fs::File::create(path).expect("create the file"));
    nidus::io::write_matrix(&net, file, b',').expect("write the file");
    eprintln!(
        "{} x {} visits table written to {path}",
        net.nrows(),
        net.ncols()
    );
}
