//! `nidus null`: every requested index of every file against every
//! requested null model; and the output shared with `nidus merge`.

use std::fs::File;
use std::io::{self, IsTerminal, Write};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use nidus::figures::{null_figure, NullPanel};
use nidus::index::Direction;
use nidus::index::IndexKind;
use nidus::null::{run_null_with_progress, NullConfig, NullModel, NullOptions, NullRun, Shard};
use nidus::significance::{summarize, NullSummary};
use nidus::{Error, Order};
use serde_json::Value;

pub use super::emit;
use super::flat::FlatTable;
use super::{
    input_name, parse_list, read_input, report_failure, Format, LayoutArgs, List, EXIT_INPUT,
};

#[derive(Args, Debug)]
pub struct NullArgs {
    /// Network files (see README for the two layouts); `-` reads standard input.
    #[arg(required = true, value_name = "FILE")]
    files: Vec<PathBuf>,
    /// Null models, comma-separated: equiprobable, proportional, fixed-rows, fixed-columns,
    /// fixed-both, shuffle-cells, shuffle-weights, fixed-totals.
    #[arg(long, required = true, value_name = "LIST", value_parser = parse_list::<NullModel>)]
    model: List<NullModel>,
    /// Indices to test (the list comes from the registry of indices).
    #[arg(long, default_value = "nodf", value_name = "LIST", value_parser = parse_list::<IndexKind>,
          help = format!("Indices to test, comma-separated: {}",
                         nidus::metrics::registry::help_list()))]
    index: List<IndexKind>,
    /// Number of null draws R.
    #[arg(long, default_value_t = 999, value_name = "R")]
    draws: usize,
    /// Seed: draw k of a run depends on (seed, k) alone.
    #[arg(long, required = true, value_name = "S")]
    seed: u64,
    /// Curveball trades per fixed-both draw (default 5 * max(rows, columns)).
    #[arg(long, value_name = "B")]
    burn_in: Option<usize>,
    /// Compute only shard I of K (1-based) and save its draws (needs --save-draws).
    #[arg(long, value_name = "I/K")]
    shard: Option<Shard>,
    /// Write every draw's values to PATH (for `nidus merge`).
    #[arg(long, value_name = "PATH")]
    save_draws: Option<PathBuf>,
    /// Stop once H draws are at least as nested as the observed network
    /// (sequential p-value of Besag & Clifford 1991).
    #[arg(long, value_name = "H")]
    stop_after: Option<usize>,
    /// Row and column order for NODF and WNODF: sorted or given.
    #[arg(long, default_value = "sorted", value_name = "sorted|given")]
    order: Order,
    #[command(flatten)]
    input: LayoutArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
    /// Write a figure of each file's null distributions (one panel per index and model) as SVG
    /// to PATH (with several files: PATH's name with each file's name inserted).
    #[arg(long, value_name = "PATH")]
    svg: Option<PathBuf>,
}

/// One JSON line or CSV row of a null test: the run's identity, then the
/// fields of [`NullSummary`] as serde writes them. `draws` is placed with
/// the identity; the summary's own `draws` (the same number) fills that
/// place when the line is turned into a JSON map (keys keep their first
/// position), so it appears once.
#[derive(serde::Serialize)]
struct NullLine<'a> {
    file: &'a str,
    index: IndexKind,
    model: NullModel,
    draws: usize,
    seed: u64,
    #[serde(flatten)]
    summary: &'a NullSummary,
}

fn line(
    file: &str,
    (model, seed): (NullModel, u64),
    index: IndexKind,
    summary: &NullSummary,
) -> nidus::Result<Value> {
    let line = NullLine {
        file,
        index,
        model,
        draws: summary.draws,
        seed,
        summary,
    };
    serde_json::to_value(line)
        .map_err(|e| Error::InvalidArgument(format!("cannot write the result: {e}")))
}

/// The CSV columns: those of a line with every field present.
fn csv_table() -> nidus::Result<FlatTable> {
    let summary = summarize(1.0, &[0.0, 2.0], Direction::Greater, None)?;
    Ok(FlatTable::new(line(
        "",
        (NullModel::Equiprobable, 0),
        IndexKind::named("nodf")?,
        &summary,
    )?))
}

/// The CSV header line, for formats that have one.
pub fn header(format: Format) -> nidus::Result<Option<String>> {
    Ok(if format == Format::Csv {
        Some(csv_table()?.header())
    } else {
        None
    })
}

/// The output for one run (one file and one model, every index).
pub fn render(format: Format, file: &str, run: &NullRun) -> nidus::Result<String> {
    let summaries = run.summaries()?;
    let mut s = String::new();
    if format == Format::Text {
        s += &format!(
            "{file}\n  null model {}, seed {}, {} draws requested{}{}\n  {:<24} {:>10} {:>10} {:>9} {:>7} {:>9} {:>9}  {:<23} {:>6}  more nested\n",
            run.model,
            run.seed,
            run.draws,
            run.burn_in.map_or(String::new(), |b| format!(
                ", {b} curveball trades per draw"
            )),
            run.stop_after.map_or(String::new(), |h| format!(
                ", sequential stop after {h} draws at least as nested"
            )),
            "index",
            "observed",
            "null mean",
            "null sd",
            "z",
            "p_greater",
            "p_less",
            "null 2.5% / 50% / 97.5%",
            "draws"
        );
    }
    let csv = if format == Format::Csv {
        Some(csv_table()?)
    } else {
        None
    };
    for (kind, sum) in run.indices.iter().zip(&summaries) {
        match (format, &csv) {
            (Format::Text, _) => s += &text(*kind, sum),
            (Format::Csv, Some(t)) => s += &t.row(&line(file, (run.model, run.seed), *kind, sum)?),
            _ => s += &(line(file, (run.model, run.seed), *kind, sum)?.to_string() + "\n"),
        }
    }
    if format == Format::Text {
        s.push('\n');
    }
    Ok(s)
}

fn text(kind: IndexKind, x: &NullSummary) -> String {
    let dir = serde_json::to_value(x.more_nested)
        .ok()
        .and_then(|v| v.as_str().map(str::to_string))
        .unwrap_or_default();
    let z = x.z.map_or("-".to_string(), |z| format!("{z:.2}"));
    let stop = if x.stopped_early {
        "  (stopped early: sequential p-value)"
    } else {
        ""
    };
    let q = format!("{:.2} / {:.2} / {:.2}", x.q025, x.q50, x.q975);
    format!(
        "  {:<24} {:>10.4} {:>10.4} {:>9.4} {:>7} {:>9.4} {:>9.4}  {:<23} {:>6}  {dir}{stop}\n",
        kind.name(),
        x.observed,
        x.mean,
        x.sd,
        z,
        x.p_greater,
        x.p_less,
        q,
        x.draws
    )
}

fn progress_bar(total: usize, label: &str) -> ProgressBar {
    if !io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(total as u64);
    if let Ok(style) = ProgressStyle::with_template("{msg} [{bar:30}] {pos}/{len} draws ({eta})") {
        bar.set_style(style.progress_chars("=> "));
    }
    bar.set_message(label.to_string());
    bar
}

pub fn run(args: NullArgs) -> nidus::Result<ExitCode> {
    if args.shard.is_some() && args.save_draws.is_none() {
        return Err(Error::InvalidArgument(
            "--shard computes part of the draws: give --save-draws PATH to keep them for `nidus merge`"
                .into(),
        ));
    }
    let configs: Vec<NullConfig> = args
        .model
        .0
        .iter()
        .map(|&model| {
            let mut config = NullConfig::new(model, args.index.0.clone(), args.draws, args.seed);
            config.shard = args.shard;
            config.stop_after = args.stop_after;
            config.order = args.order;
            config.options = NullOptions::new(args.burn_in);
            config.check().map(|()| config)
        })
        .collect::<nidus::Result<_>>()?;
    if args.shard.is_some() && args.svg.is_some() {
        return Err(Error::InvalidArgument(
            "--svg needs every draw: draw the figure from the unsplit run (a shard holds only part of the draws)"
                .into(),
        ));
    }
    let svg_paths = match &args.svg {
        Some(base) => Some(super::figure::figure_paths(base, &args.files)?),
        None => None,
    };
    let read = args.input.read_options();
    super::check_stdin_once(&args.files)?;
    let mut saved = match &args.save_draws {
        Some(p) => Some((
            p.clone(),
            io::BufWriter::new(File::create(p).map_err(|source| Error::Write {
                path: p.clone(),
                source,
            })?),
        )),
        None => None,
    };
    let stdout = io::stdout();
    let mut out = stdout.lock();
    if args.shard.is_none() {
        if let Some(h) = header(args.format)? {
            if !emit(&mut out, &h) {
                return Ok(ExitCode::SUCCESS);
            }
        }
    }
    let mut failed = 0usize;
    'files: for (file_no, file) in args.files.iter().enumerate() {
        let shown = input_name(file);
        let mut panels: Vec<NullPanel> = Vec::new();
        let net = match read_input(file, &read) {
            Ok(r) => r.network,
            Err(e) => {
                failed += 1;
                report_failure(&shown, &e);
                continue;
            }
        };
        for config in &configs {
            let model = config.model;
            let share = match args.shard {
                Some(s) => (0..args.draws as u64).filter(|&k| s.contains(k)).count(),
                None => args.draws,
            };
            let bar = progress_bar(share, &format!("{shown} {model}"));
            let result =
                run_null_with_progress(&net, config, &|done| bar.set_position(done as u64));
            bar.finish_and_clear();
            let run = match result {
                Ok(r) => r,
                Err(e) => {
                    failed += 1;
                    report_failure(&format!("{shown} ({model})"), &e);
                    continue;
                }
            };
            if let Some((path, w)) = saved.as_mut() {
                run.write_draws(&shown, w).map_err(|e| match e {
                    Error::Output { source } => Error::Write {
                        path: path.clone(),
                        source,
                    },
                    e => e,
                })?;
            }
            if let (Some(s), Some((path, _))) = (args.shard, saved.as_ref()) {
                eprintln!(
                    "nidus: {shown} ({model}): shard {s}, {} of {} draws saved to {}",
                    run.draw_ids.len(),
                    run.draws,
                    path.display()
                );
            }
            if args.shard.is_none() {
                let text = render(args.format, &shown, &run)?;
                if svg_paths.is_some() {
                    panels.extend(NullPanel::from_run(&run)?);
                }
                if !emit(&mut out, &text) {
                    break 'files;
                }
            }
        }
        if let (Some(paths), false) = (&svg_paths, panels.is_empty()) {
            let fig = null_figure(&panels, &shown)?;
            fig.save(&paths[file_no])?;
            eprintln!("nidus: figure written to {}", paths[file_no].display());
        }
    }
    if let Some((path, mut w)) = saved {
        w.flush().map_err(|source| Error::Write { path, source })?;
    }
    if failed > 0 {
        return Ok(ExitCode::from(EXIT_INPUT));
    }
    Ok(ExitCode::SUCCESS)
}
