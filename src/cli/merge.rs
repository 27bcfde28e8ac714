//! `nidus merge`: joins saved draws of shards and prints what the unsplit
//! run prints.

use std::io;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use nidus::null::{merge_runs, read_draws};

use super::null::{emit, header, render};
use super::Format;

#[derive(Args, Debug)]
pub struct MergeArgs {
    /// Files written by `nidus null --save-draws` (every shard of the run).
    #[arg(required = true, value_name = "PATH")]
    paths: Vec<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
}

pub fn run(args: MergeArgs) -> nidus::Result<ExitCode> {
    let mut parts = Vec::new();
    for p in &args.paths {
        parts.extend(read_draws(p)?);
    }
    let runs = merge_runs(parts)?;
    let mut text = header(args.format)?.unwrap_or_default();
    for r in &runs {
        text += &render(args.format, &r.file, &r.run)?;
    }
    let stdout = io::stdout();
    emit(&mut stdout.lock(), &text);
    Ok(ExitCode::SUCCESS)
}
