//! `nidus sample`: writes null networks to files for other tools.

use std::fs::File;
use std::io::BufWriter;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use nidus::io::write_matrix;

use super::{read_input, LayoutArgs};
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
    /// Number of null networks to write.
    #[arg(long, value_name = "N")]
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
    #[command(flatten)]
    input: LayoutArgs,
}

pub fn run(args: SampleArgs) -> nidus::Result<ExitCode> {
    let read = args.input.read_options();
    let net = read_input(&args.file, &read)?.network;
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
    let width = args.count.saturating_sub(1).to_string().len();
    for k in 0..args.count {
        let table = sampler.draw(args.seed, k as u64).to_array();
        let drawn = net.with_weights(table).map_err(|e| {
            Error::InvalidArgument(format!("draw {k} of {} cannot be written: {e}", args.model))
        })?;
        let path = args
            .out
            .join(format!("{stem}.{}.{k:0width$}.csv", args.model));
        let file = File::create(&path).map_err(|source| Error::Write {
            path: path.clone(),
            source,
        })?;
        write_matrix(&drawn, BufWriter::new(file), b',').map_err(|e| match e {
            Error::Output { source } => Error::Write { path, source },
            e => e,
        })?;
    }
    Ok(ExitCode::SUCCESS)
}
