//! `nidus null`: every requested index of every file against every
//! requested null model; and the output shared with `nidus merge`.

use std::fs::File;
use std::io::{self, IsTerminal, Write};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use nidus::index::Direction;
use nidus::index::IndexKind;
use nidus::null::{run_null_with_progress, NullConfig, NullModel, NullOptions, NullRun, Shard};
use nidus::significance::{summarize, NullSummary};
use nidus::{Error, Order};
use serde_json::Value;

pub use super::emit;
use super::flat::FlatTable;
use super::numbers::num;
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
    #[arg(long, alias = "indices", default_value = "nodf", value_name = "LIST", value_parser = parse_list::<IndexKind>,
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
}

/// One JSON line or CSV row of a null test: the run's identity, then the
/// fields of [`NullSummary`] as serde writes them, then the headline `p`
/// and the run's settings. `draws` is placed with the identity; the
/// summary's own `draws` (the same number) fills that place when the line
/// is turned into a JSON map (keys keep their first position), so it
/// appears once.
#[derive(serde::Serialize)]
struct NullLine<'a> {
    file: &'a str,
    index: IndexKind,
    model: NullModel,
    draws: usize,
    seed: u64,
    #[serde(flatten)]
    summary: &'a NullSummary,
    /// The p-value in the more-nested direction (`p_greater` or `p_less`);
    /// `null` when every null value equals the observed one.
    p: Option<f64>,
    /// Why the null model cannot test this index (its values do not vary),
    /// or `null`.
    p_reason: Option<String>,
    /// Order used by NODF and WNODF.
    order: Order,
    /// Curveball trades per draw (`fixed-both` only).
    burn_in: Option<usize>,
    /// Draws asked for (`--draws`).
    draws_requested: usize,
    /// Draws computed (all of them, or fewer after a sequential stop).
    draws_done: usize,
    /// The sequential-stop limit `--stop-after`.
    stop_after: Option<usize>,
    /// The nidus version that computed the result.
    nidus_version: &'static str,
}

/// The settings of a run recorded beside each of its results.
#[derive(Clone, Copy)]
struct Settings {
    model: NullModel,
    seed: u64,
    order: Order,
    burn_in: Option<usize>,
    draws_requested: usize,
    draws_done: usize,
    stop_after: Option<usize>,
}

impl Settings {
    fn of(run: &NullRun) -> Self {
        Settings {
            model: run.model,
            seed: run.seed,
            order: run.order,
            burn_in: run.burn_in,
            draws_requested: run.draws,
            draws_done: run.draw_ids.len(),
            stop_after: run.stop_after,
        }
    }
}

/// The headline p-value and, when the null values do not vary, why the
/// test says nothing. A null model that leaves every draw with the same
/// value (only one matrix fits the margins; shuffling the weights of a
/// binary network) gives p = 1 in both directions when that value is the
/// observed one: no evidence either way, so no `p`.
fn headline(model: NullModel, x: &NullSummary) -> (Option<f64>, Option<String>) {
    if x.sd != 0.0 {
        return (Some(x.p_more_nested()), None);
    }
    let same = x.q50.to_bits() == x.observed.to_bits();
    let why = match (model, same) {
        (NullModel::ShuffleWeights, true) => {
            "no test: permuting the weights among the links leaves this index at its observed value \
             (the network is binary, or the index reads only which cells are links)"
        }
        (_, true) => {
            "no test: every null network has the observed value (only one network keeps what this \
             model keeps, for example these row and column totals)"
        }
        (_, false) => {
            "every null network has the same value, which differs from the observed one; \
             p only says on which side the observed value lies"
        }
    };
    let p = if same { None } else { Some(x.p_more_nested()) };
    (p, Some(why.to_string()))
}

fn line(
    file: &str,
    set: Settings,
    index: IndexKind,
    summary: &NullSummary,
) -> nidus::Result<Value> {
    let (p, p_reason) = headline(set.model, summary);
    let line = NullLine {
        file,
        index,
        model: set.model,
        draws: summary.draws,
        seed: set.seed,
        summary,
        p,
        p_reason,
        order: set.order,
        burn_in: set.burn_in,
        draws_requested: set.draws_requested,
        draws_done: set.draws_done,
        stop_after: set.stop_after,
        nidus_version: env!("CARGO_PKG_VERSION"),
    };
    serde_json::to_value(line)
        .map_err(|e| Error::InvalidArgument(format!("cannot write the result: {e}")))
}

/// The CSV columns: those of a line with every field present.
fn csv_table() -> nidus::Result<FlatTable> {
    let summary = summarize(1.0, &[0.0, 2.0], Direction::Greater, None)?;
    let set = Settings {
        model: NullModel::Equiprobable,
        seed: 0,
        order: Order::Sorted,
        burn_in: Some(1),
        draws_requested: 2,
        draws_done: 2,
        stop_after: Some(1),
    };
    let mut template = line("", set, IndexKind::named("nodf")?, &summary)?;
    template["p_reason"] = Value::from("");
    Ok(FlatTable::new(template))
}

/// The CSV header line, for formats that have one.
pub fn header(format: Format) -> nidus::Result<Option<String>> {
    Ok(if format == Format::Csv {
        Some(csv_table()?.header())
    } else {
        None
    })
}

/// "higher NODF is more nested", "lower temperature is more nested".
fn direction_words(kind: IndexKind) -> String {
    let way = match kind.more_nested() {
        Direction::Greater => "higher",
        Direction::Less => "lower",
    };
    format!("{way} {} is more nested", kind.name())
}

/// The output for one run (one file and one model, every index).
pub fn render(format: Format, file: &str, run: &NullRun) -> nidus::Result<String> {
    let summaries = run.summaries()?;
    let set = Settings::of(run);
    let mut s = String::new();
    if format == Format::Text {
        let done = if run.draw_ids.len() < run.draws {
            format!(", {} computed", run.draw_ids.len())
        } else {
            String::new()
        };
        s += &format!(
            "{file}\n  null model {}, seed {}, {} draws requested{done}, order {} (for NODF and WNODF){}{}\n  {:<24} {:>10} {:>10} {:>9} {:>7} {:>7}  {:<25} {:>6}  observed vs null mean\n",
            run.model,
            run.seed,
            run.draws,
            run.order.name(),
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
            "p",
            "null 2.5% / 50% / 97.5%",
            "draws"
        );
    }
    let csv = if format == Format::Csv {
        Some(csv_table()?)
    } else {
        None
    };
    let mut notes: Vec<(String, Vec<&str>)> = Vec::new();
    for (kind, sum) in run.indices.iter().zip(&summaries) {
        match (format, &csv) {
            (Format::Text, _) => {
                s += &text(*kind, sum);
                if let (_, Some(reason)) = headline(run.model, sum) {
                    match notes.iter_mut().find(|(r, _)| *r == reason) {
                        Some((_, names)) => names.push(kind.name()),
                        None => notes.push((reason, vec![kind.name()])),
                    }
                }
            }
            (Format::Csv, Some(t)) => s += &t.row(&line(file, set, *kind, sum)?),
            _ => s += &(line(file, set, *kind, sum)?.to_string() + "\n"),
        }
    }
    if format == Format::Text {
        let mut ways: Vec<String> = Vec::new();
        for k in &run.indices {
            let w = direction_words(*k);
            if !ways.contains(&w) {
                ways.push(w);
            }
        }
        let rule = if run.stop_after.is_some() {
            " (after a sequential stop: H / draws used)"
        } else {
            ""
        };
        s += &format!(
            "  direction: {}.\n  p: the share of networks at least as nested as the observed one, among the null draws \
             and the observed network itself: (1 + #{{draws at least as nested}}) / (draws + 1){rule}; \
             a small p means more nested than the null model produces.\n",
            ways.join("; ")
        );
        for (reason, names) in notes {
            s += &format!("  {}: {reason}.\n", names.join(", "));
        }
        s.push('\n');
    }
    Ok(s)
}

fn text(kind: IndexKind, x: &NullSummary) -> String {
    let z = x.z.map_or("-".to_string(), num);
    let (p, _) = headline(NullModel::Equiprobable, x);
    let p = p.map_or("no test".to_string(), num);
    let more = match x.more_nested {
        Direction::Greater => x.observed > x.mean,
        Direction::Less => x.observed < x.mean,
    };
    let vs = if x.observed == x.mean {
        "as nested"
    } else if more {
        "more nested"
    } else {
        "less nested"
    };
    let stop = if x.stopped_early {
        "  (stopped early: sequential p-value)"
    } else {
        ""
    };
    let q = format!("{} / {} / {}", num(x.q025), num(x.q50), num(x.q975));
    format!(
        "  {:<24} {:>10} {:>10} {:>9} {:>7} {:>7}  {:<25} {:>6}  {vs}{stop}\n",
        kind.name(),
        num(x.observed),
        num(x.mean),
        num(x.sd),
        z,
        p,
        q,
        x.draws
    )
}

fn progress_bar(total: usize, label: &str) -> ProgressBar {
    if !io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(total as u64);
    if let Ok(style) = ProgressStyle::with_template("{msg} [{bar:30}] {pos}/{len} draws, eta {eta}")
    {
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
    'files: for file in &args.files {
        let shown = input_name(file);
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
                if !emit(&mut out, &text) {
                    break 'files;
                }
            }
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
