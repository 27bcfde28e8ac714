//! Times a 999-draw `fixed-both` NODF test of a random 200 x 200 network at
//! fill 0.1, end to end (sampler set-up, draws, NODF on each, summary).
//!
//! Run: `cargo run --release --example null_timing -- [THREADS] [DRAWS]`
//! (defaults 2 and 999). Prints the wall time and draws per second.

use std::time::Instant;

use nidus::index::IndexKind;
use nidus::null::{run_null, NullConfig, NullModel};
use nidus::Network;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

fn main() -> Result<(), nidus::Error> {
    let mut args = std::env::args().skip(1);
    let threads: usize = args.next().and_then(|a| a.parse().ok()).unwrap_or(2);
    let draws: usize = args.next().and_then(|a| a.parse().ok()).unwrap_or(999);
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(2026);
    let w =
        ndarray::Array2::from_shape_fn((200, 200), |_| f64::from(u8::from(rng.random_bool(0.1))));
    let net = Network::from_array(w)?;
    let mut config = NullConfig::new(
        NullModel::FixedBoth,
        vec![IndexKind::named("nodf").unwrap()],
        draws,
        1,
    );
    config.threads = Some(threads);
    let start = Instant::now();
    let run = run_null(&net, &config)?;
    let s = &run.summaries()?[0];
    let secs = start.elapsed().as_secs_f64();
    println!(
        "200 x 200, fill {:.3}, {} links: {draws} fixed-both draws (burn-in {} trades) with NODF on {threads} threads in {secs:.3} s = {:.0} draws/s",
        net.fill(),
        net.links(),
        run.burn_in.unwrap_or(0),
        draws as f64 / secs
    );
    println!(
        "NODF observed {:.4}, null mean {:.4}, sd {:.4}, p_greater {:.4}",
        s.observed, s.mean, s.sd, s.p_greater
    );
    Ok(())
}
