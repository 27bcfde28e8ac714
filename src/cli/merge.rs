//! `nidus merge`: joins saved draws of shards and prints what the unsplit
//! run prints. Files of `nidus null --save-draws` and of `nidus assess
//! --save-draws` are told apart by their first line.

use std::io::{self, Read};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use nidus::analyses::assess::{is_part, merge_parts, parse_part};
use nidus::null::accumulate::EXACT_DRAWS;
use nidus::null::merge_stream::merge_files_with_limit;
use nidus::Error;

use super::null::{emit, header, render};
use super::Format;

#[derive(Args, Debug)]
pub struct MergeArgs {
    /// Files written by `nidus null --save-draws` or `nidus assess --save-draws`
    /// (every shard of the run; one kind per call).
    #[arg(required = true, value_name = "PATH")]
    paths: Vec<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
    /// Assessment parts only: write the rejection-rate figure of the merged assessment
    /// (as `nidus assess --svg`) to PATH.
    #[arg(long, value_name = "PATH")]
    svg: Option<PathBuf>,
    /// Draws kept exactly before the summaries turn to streaming statistics
    /// (for tests; the same knob as `null`'s).
    #[arg(long, hide = true, value_name = "N", default_value_t = EXACT_DRAWS)]
    exact_draws: usize,
}

pub fn run(args: MergeArgs) -> nidus::Result<ExitCode> {
    // The kind of each file from its first bytes: assessment parts are
    // read whole, saved draws streamed.
    let mut kinds = Vec::new();
    for p in &args.paths {
        let mut start = Vec::new();
        std::fs::File::open(p)
            .and_then(|f| f.take(256).read_to_end(&mut start))
            .map_err(|source| Error::Io {
                path: p.clone(),
                source,
            })?;
        kinds.push(is_part(&String::from_utf8_lossy(&start)));
    }
    let assess = kinds.iter().filter(|&&k| k).count();
    let mut assessment = None;
    let text = if assess > 0 {
        if assess < kinds.len() {
            let other = kinds.iter().position(|&k| !k).expect("counted");
            return Err(Error::InvalidArgument(format!(
                "{}: not an assessment part, but other files are; merge `null` draws and `assess` parts in separate calls",
                args.paths[other].display()
            )));
        }
        let mut parts = Vec::new();
        for p in &args.paths {
            let t = std::fs::read_to_string(p).map_err(|source| Error::Io {
                path: p.clone(),
                source,
            })?;
            parts.push(parse_part(&t, p)?);
        }
        let merged = merge_parts(parts)?;
        if args.svg.is_some() {
            super::assess::check_figure_scenarios(&merged.settings.scenarios)?;
        }
        let text = super::assess::render(args.format, &merged)?;
        assessment = Some(merged);
        text
    } else {
        if args.svg.is_some() {
            return Err(Error::InvalidArgument(
                "--svg of merge draws assessment figures; for null distributions run `nidus null --svg` without --shard".into(),
            ));
        }
        let runs = merge_files_with_limit(&args.paths, args.exact_draws)?;
        let mut text = header(args.format)?.unwrap_or_default();
        for r in &runs {
            text += &render(
                args.format,
                &r.file,
                (&r.run, r.summaries.draws()),
                &r.summaries.summaries()?,
            )?;
        }
        text
    };
    let stdout = io::stdout();
    emit(&mut stdout.lock(), &text);
    if let (Some(path), Some(run)) = (&args.svg, &assessment) {
        super::assess::figure(run, path)?;
    }
    Ok(ExitCode::SUCCESS)
}
