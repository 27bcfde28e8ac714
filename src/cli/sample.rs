//! `nidus sample`: writes null networks to files for other tools.

use std::fs::File;
use std::io::BufWriter;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use nidus::io::write_matrix;

use super::{emit, read_input, LayoutArgs};
use nidus::null::{NullModel, NullOptions, NullSampler};
use nidus::Error;

#[derive(Args, Debug)]
pub struct SampleArgs {
    /// The network file; `-` reads standard input (files are then named network.*).
    #[arg(value_name = "FILE")]
    file: PathBuf,
    /// The null model (one name).
    #[arg(long, value_name = "M")]
    model: NullModel,
    /// Number of null networks to write (`--count` is an older spelling, still accepted).
    #[arg(long = "draws", alias = "count", value_name = "N")]
    count: usize,
    /// Seed: network k is draw k of `nidus null` with the same seed and model.
    #[arg(long, value_name = "S")]
    seed: u64,
    /// Directory for the files (created if missing).
    #[arg(long, value_name = "DIR")]
    out: PathBuf,
    /// Curveball trades per fixed-both draw (default 5 * max(rows, columns)).
    #[arg(long, value_name = "B")]
    burn_in: Option<usize>,
    /// Write into a folder that already holds files, and allow more than
    /// 10,000 networks.
    #[arg(long)]
    force: bool,
    #[command(flatten)]
    input: LayoutArgs,
}

/// Above this many networks `--force` is needed.
pub const SANE_COUNT: usize = 10_000;
/// The most networks one call writes (the file numbers' fixed width is 6).
pub const MAX_COUNT: usize = 999_999;
/// Digits of the network number in every file name, whatever `--count`.
const WIDTH: usize = 6;
/// The manifest's file name inside `--out`.
pub const MANIFEST: &str = "nidus-manifest.json";

pub fn run(args: SampleArgs) -> nidus::Result<ExitCode> {
    if args.count == 0 {
        return Err(Error::InvalidArgument(
            "--draws 0 writes nothing: give the number of networks wanted".into(),
        ));
    }
    if args.count > MAX_COUNT {
        return Err(Error::InvalidArgument(format!(
            "--draws {}: at most {MAX_COUNT} networks per call (use several seeds)",
            args.count
        )));
    }
    if args.count > SANE_COUNT && !args.force {
        return Err(Error::InvalidArgument(format!(
            "--draws {} writes {} files: add --force to confirm (more than {SANE_COUNT})",
            args.count, args.count
        )));
    }
    if !args.force {
        if let Ok(mut entries) = std::fs::read_dir(&args.out) {
            if entries.next().is_some() {
                return Err(Error::InvalidArgument(format!(
                    "--out {}: the folder already holds files (another run's?); choose an empty \
                     folder or add --force to write beside them",
                    args.out.display()
                )));
            }
        }
    }
    let read = args.input.read_options();
    let net = read_input(&args.file, &read)?.network;
    // Every network is written as a full table of numbers: refuse one that
    // is too large before drawing, whatever storage the draws take.
    nidus::storage::check_dense_size(
        "a sampled network written as a table",
        net.nrows(),
        net.ncols(),
        std::mem::size_of::<f64>(),
    )?;
    let sampler = NullSampler::new(&net, args.model, &NullOptions::new(args.burn_in))?;
    std::fs::create_dir_all(&args.out).map_err(|source| Error::Write {
        path: args.out.clone(),
        source,
    })?;
    let stem = args
        .file
        .file_stem()
        .filter(|s| *s != "-")
        .map_or("network".into(), |s| s.to_string_lossy().into_owned());
    let width = WIDTH;
    for k in 0..args.count {
        let table = sampler.draw(args.seed, k as u64).to_array();
        let drawn = net.with_weights(table).map_err(|e| {
            Error::InvalidArgument(format!("draw {k} of {} cannot be written: {e}", args.model))
        })?;
        let name = format!("{stem}.{}.{k:0width$}.csv", args.model);
        let path = args.out.join(&name);
        let file = File::create(&path).map_err(|source| Error::Write {
            path: path.clone(),
            source,
        })?;
        write_matrix(&drawn, BufWriter::new(file), b',').map_err(|e| match e {
            Error::Output { source } => Error::Write { path, source },
            e => e,
        })?;
    }
    let manifest = serde_json::json!({
        "program": "nidus sample",
        "version": env!("CARGO_PKG_VERSION"),
        "source": args.file.display().to_string(),
        "model": args.model.name(),
        "seed": args.seed,
        "count": args.count,
        "burn_in": sampler.burn_in(),
        "first_file": format!("{stem}.{}.{:0width$}.csv", args.model, 0),
        "last_file": format!("{stem}.{}.{:0width$}.csv", args.model, args.count - 1),
        "file_pattern": format!("{stem}.{}.NNNNNN.csv (network k is draw k of `nidus null` with the same seed and model)", args.model),
    });
    let mpath = args.out.join(MANIFEST);
    let text = serde_json::to_string_pretty(&manifest).unwrap_or_default() + "\n";
    std::fs::write(&mpath, text).map_err(|source| Error::Write {
        path: mpath.clone(),
        source,
    })?;
    emit(
        &mut std::io::stdout().lock(),
        &format!(
            "wrote {} {} networks of {} (seed {}) to {}, listed in {}\n",
            args.count,
            args.model,
            args.file.display(),
            args.seed,
            args.out.display(),
            mpath.display()
        ),
    );
    Ok(ExitCode::SUCCESS)
}
