use nidus::analyses::species::{redraw, NodfEngine, RedrawModel, Side};
use nidus::BitMatrix;
use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use std::time::Instant;
fn cpu() -> f64 {
    let s = std::fs::read_to_string("/proc/thread-self/stat").unwrap();
    let f: Vec<&str> = s.rsplit(')').next().unwrap().split_whitespace().collect();
    (f[11].parse::<f64>().unwrap() + f[12].parse::<f64>().unwrap()) / 100.0
}
fn main() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(2011);
    let b = BitMatrix::from_fn(500, 500, |_, _| rng.random_bool(0.1));
    let engine = NodfEngine::new(&b).unwrap();
    let mut s = engine.scratch();
    let (t, c) = (Instant::now(), cpu());
    for i in 0..std::env::var("PROBE_N")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(40)
    {
        redraw(
            &engine,
            Side::Row,
            i,
            RedrawModel::Proportional,
            999,
            1,
            &mut s,
        );
    }
    println!(
        "redraw: wall {:.2} us/draw cpu {:.2} us/draw",
        t.elapsed().as_secs_f64() * 1e6 / 39960.0,
        (cpu() - c) * 1e6 / 39960.0
    );
    let cells: Vec<u64> = engine.cells(Side::Row, 3).to_vec();
    let mut other = cells.clone();
    other[0] ^= 0xff00ff;
    other[3] ^= 0xf0f0f0f0;
    engine.focus(Side::Row, 3, &mut s);
    let (t, c) = (Instant::now(), cpu());
    for _ in 0..40000 {
        std::hint::black_box(engine.nodf_with(std::hint::black_box(&other), &mut s));
    }
    println!(
        "nodf_with: wall {:.2} us cpu {:.2} us",
        t.elapsed().as_secs_f64() * 1e6 / 40000.0,
        (cpu() - c) * 1e6 / 40000.0
    );
    let (t, c) = (Instant::now(), cpu());
    for _ in 0..200 {
        std::hint::black_box(nidus::metrics::nodf_bits(&b, nidus::Order::Sorted).unwrap());
    }
    println!(
        "full nodf: wall {:.2} us cpu {:.2} us",
        t.elapsed().as_secs_f64() * 1e6 / 200.0,
        (cpu() - c) * 1e6 / 200.0
    );
}
