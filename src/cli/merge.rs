//! `nidus merge`: joins saved draws of shards and prints what the unsplit
//! run prints. Files of `nidus null --save-draws` and of `nidus assess
//! --save-draws` are told apart by their first line.

use std::io;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use nidus::analyses::assess::{is_part, merge_parts, parse_part};
use nidus::null::{merge_runs, parse_draws};
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
}

pub fn run(args: MergeArgs) -> nidus::Result<ExitCode> {
    let mut texts = Vec::new();
    for p in &args.paths {
        let text = std::fs::read_to_string(p).map_err(|source| Error::Io {
            path: p.clone(),
            source,
        })?;
        texts.push((p, text));
    }
    let assess = texts.iter().filter(|(_, t)| is_part(t)).count();
    let mut assessment = None;
    let text = if assess > 0 {
        if assess < texts.len() {
            let other = texts.iter().find(|(_, t)| !is_part(t)).expect("counted");
            return Err(Error::InvalidArgument(format!(
                "{}: not an assessment part, but other files are; merge `null` draws and `assess` parts in separate calls",
                other.0.display()
            )));
        }
        let mut parts = Vec::new();
        for (p, t) in &texts {
            parts.push(parse_part(t, p)?);
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
        let mut parts = Vec::new();
        for (p, t) in &texts {
            parts.extend(parse_draws(t, p)?);
        }
        let runs = merge_runs(parts)?;
        let mut text = header(args.format)?.unwrap_or_default();
        for r in &runs {
            text += &render(
                args.format,
                &r.file,
                (&r.run, r.run.draw_ids.len()),
                &r.run.summaries()?,
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
