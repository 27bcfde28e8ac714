//! The long in-process fuzz run of issue 10 (see fuzz/README.md):
//! `cargo run --release --example fuzz -- [ITERATIONS] [SEED]`.

#[path = "../fuzz/harness.rs"]
mod harness;

fn main() {
    let mut args = std::env::args().skip(1);
    let n: usize = args
        .next()
        .and_then(|s| s.parse().ok())
        .unwrap_or(1_000_000);
    let seed: u64 = args.next().and_then(|s| s.parse().ok()).unwrap_or(1);
    std::panic::set_hook(Box::new(|_| {})); // panics are counted, not printed
    let t = std::time::Instant::now();
    let tally = harness::campaign(n, seed);
    println!(
        "{} inputs, {} accepted, {} failures, {:.1} s",
        tally.runs,
        tally.accepted,
        tally.failures.len(),
        t.elapsed().as_secs_f64()
    );
    for f in tally.failures.iter().take(20) {
        println!("  {f}");
    }
    if !tally.failures.is_empty() {
        std::process::exit(1);
    }
}
