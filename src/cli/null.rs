//! `nidus null`: every requested index of every file against every
//! requested null model; and the output shared with `nidus merge`.

use std::collections::HashMap;
use std::io::{self, IsTerminal};
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::Mutex;
use std::time::{Duration, Instant};

use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use nidus::index::Direction;
use nidus::index::IndexKind;
use nidus::null::{
    draws_file::{differing_setting, MAX_DRAWS},
    read_draws, run_null_streaming, DrawSummaries, NullConfig, NullModel, NullOptions, NullRun,
    SavedRun, SectionWriter, Shard,
};
use nidus::significance::{summarize, NullSummary};
use nidus::{Error, Order};
use serde_json::Value;

use super::atomic::{refuse_input_as_target, AtomicFile};
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
    /// Continue an interrupted run from the draws it saved in PATH (same
    /// files, models and settings; needs --save-draws, which may be PATH).
    #[arg(long, value_name = "PATH", requires = "save_draws")]
    resume: Option<PathBuf>,
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
pub fn render(
    format: Format,
    file: &str,
    run: &NullRun,
    summaries: &[NullSummary],
) -> nidus::Result<String> {
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
    for (kind, sum) in run.indices.iter().zip(summaries) {
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

/// Progress of one run: a bar on a terminal; otherwise (a batch job's log)
/// a line every [`PROGRESS_EVERY`], and an estimate of the whole run's time
/// once it is seen to need more than a minute.
struct Progress {
    bar: ProgressBar,
    label: String,
    total: usize,
    start: Instant,
    last: Mutex<(Instant, bool)>,
    log: bool,
}

/// Interval between progress lines when stderr is not a terminal.
const PROGRESS_EVERY: Duration = Duration::from_secs(5);

impl Progress {
    fn new(total: usize, label: &str) -> Self {
        let now = Instant::now();
        Progress {
            bar: progress_bar(total, label),
            label: label.to_string(),
            total,
            start: now,
            last: Mutex::new((now, false)),
            log: !io::stderr().is_terminal(),
        }
    }
    fn update(&self, done: usize) {
        self.bar.set_position(done as u64);
        if !self.log || done == 0 {
            return;
        }
        let Ok(mut last) = self.last.lock() else {
            return;
        };
        let now = Instant::now();
        let spent = now - self.start;
        let left = spent.mul_f64((self.total.saturating_sub(done)) as f64 / done as f64);
        if !last.1 && spent >= Duration::from_secs(2) && spent + left > Duration::from_secs(60) {
            last.1 = true;
            eprintln!(
                "nidus: {}: {} draws will take about {} in all",
                self.label,
                self.total,
                human(spent + left)
            );
        }
        if now - last.0 >= PROGRESS_EVERY {
            last.0 = now;
            eprintln!(
                "nidus: {}: {done} of {} draws ({:.1}%), about {} left",
                self.label,
                self.total,
                100.0 * done as f64 / self.total.max(1) as f64,
                human(left)
            );
        }
    }
}

fn human(d: Duration) -> String {
    let s = d.as_secs();
    if s < 120 {
        format!("{s} s")
    } else if s < 7200 {
        format!("{} min", s / 60)
    } else {
        format!("{:.1} h", s as f64 / 3600.0)
    }
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
    check_bounds(&args)?;
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
    if args.burn_in.is_some() && !args.model.0.contains(&NullModel::FixedBoth) {
        eprintln!(
            "nidus: note: --burn-in applies only to fixed-both; the models asked for do not use it"
        );
    }
    let read = args.input.read_options();
    super::check_stdin_once(&args.files)?;
    // Written beside the target and renamed into place only when every file
    // ran: an interrupted or failed run leaves an earlier part untouched.
    let mut saved = match &args.save_draws {
        Some(p) => {
            refuse_input_as_target(p, &args.files, "--save-draws")?;
            Some(AtomicFile::create(p)?)
        }
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
    // Sections of an interrupted run to continue, by (file, model).
    let mut resumed: HashMap<(String, NullModel), SavedRun> = HashMap::new();
    if let Some(p) = &args.resume {
        for r in read_draws(p)? {
            resumed.insert((r.file.clone(), r.run.model), r);
        }
    }
    super::signals::install();
    let mut failed = 0usize;
    let mut interrupted = false;
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
                Some(s) => (args.draws + s.count() - s.index()) / s.count(),
                None => args.draws,
            };
            let earlier = resumed.remove(&(shown.clone(), model));
            let start = earlier
                .as_ref()
                .and_then(|r| r.run.draw_ids.last())
                .map_or(0, |&k| k + 1);
            let progress = Progress::new(share, &format!("{shown} ({model})"));
            let target = saved.as_ref().map(|f| f.target().to_path_buf());
            let write_err = |source: io::Error| Error::Write {
                path: target.clone().unwrap_or_default(),
                source,
            };
            let mut writer = saved.as_mut().map(|f| f.writer());
            let mut section = None;
            let mut acc: Option<DrawSummaries> = None;
            let mut stopped = false;
            let mut run_head: Option<NullRun> = None;
            let mut sink = |head: &NullRun, k: u64, v: &[f64]| -> nidus::Result<bool> {
                if acc.is_none() {
                    let (a, sec) = begin(head, &shown, earlier.as_ref(), writer.take())
                        .map_err(|e| e.into_error(&write_err))?;
                    acc = Some(a);
                    section = sec;
                    run_head = Some(head.clone());
                }
                if super::signals::interrupted() {
                    stopped = true;
                    return Ok(false);
                }
                if let Some(a) = acc.as_mut() {
                    a.push(v);
                }
                if let Some(sec) = section.as_mut() {
                    sec.draw(k, v).map_err(write_err)?;
                }
                Ok(true)
            };
            let result = run_null_streaming(
                &net,
                config,
                start,
                &|done| progress.update(done),
                &mut sink,
            );
            progress.bar.finish_and_clear();
            let head = match result {
                Ok(h) => h,
                Err(e) => {
                    failed += 1;
                    report_failure(&format!("{shown} ({model})"), &e);
                    continue;
                }
            };
            // Every draw was saved before (a resumed run that had finished).
            if acc.is_none() {
                match begin(&head, &shown, earlier.as_ref(), writer.take()) {
                    Ok((a, sec)) => {
                        acc = Some(a);
                        section = sec;
                        run_head = Some(head);
                    }
                    Err(e) => {
                        let e = e.into_error(&write_err);
                        if matches!(e, Error::Write { .. }) {
                            return Err(e);
                        }
                        failed += 1;
                        report_failure(&format!("{shown} ({model})"), &e);
                        continue;
                    }
                }
            }
            let acc = acc.expect("begun");
            let count = section.as_ref().map_or(acc.draws(), |s| s.count());
            if let Some(sec) = section {
                sec.end().map_err(write_err)?;
            }
            if stopped {
                interrupted = true;
                eprintln!(
                    "nidus: {shown} ({model}): interrupted after {count} of {share} draws{}",
                    target.as_ref().map_or(String::new(), |t| format!(
                        "; those draws are saved in {} (continue with --resume {})",
                        t.display(),
                        t.display()
                    ))
                );
                break 'files;
            }
            if let (Some(s), Some(t)) = (args.shard, target.as_ref()) {
                eprintln!(
                    "nidus: {shown} ({model}): shard {s}, {count} of {} draws written for {}",
                    args.draws,
                    t.display()
                );
            }
            if args.shard.is_none() {
                let text = match acc.summaries() {
                    Ok(sums) => {
                        let head = run_head.as_ref().expect("set with the first draw");
                        render(args.format, &shown, head, &sums)?
                    }
                    Err(e) => {
                        // One run that cannot be summarised does not stop the others.
                        failed += 1;
                        report_failure(&format!("{shown} ({model})"), &e);
                        continue;
                    }
                };
                if !emit(&mut out, &text) {
                    break 'files;
                }
            }
        }
    }
    if interrupted {
        // The saved sections end on whole records with their trailers.
        if let Some(f) = saved.take() {
            if failed == 0 {
                f.commit()?;
            }
        }
        return Ok(ExitCode::from(super::EXIT_INTERRUPTED));
    }
    if let Some(f) = saved {
        if failed > 0 {
            eprintln!(
                "nidus: {failed} run(s) failed: {} was not written (an earlier file there is kept)",
                f.target().display()
            );
            drop(f);
        } else {
            let path = f.target().to_path_buf();
            f.commit()?;
            if args.shard.is_some() {
                eprintln!("nidus: draws saved to {}", path.display());
            }
        }
    }
    if failed > 0 {
        return Ok(ExitCode::from(EXIT_INPUT));
    }
    Ok(ExitCode::SUCCESS)
}

/// Refuses draw and shard counts that no run needs and that would exhaust
/// memory or time: at most [`MAX_DRAWS`] draws, at most as many shards as
/// draws.
/// A failure while starting a run's output: bad resumed draws, or a write.
enum BeginError {
    Input(Error),
    Write(io::Error),
}

impl BeginError {
    fn into_error(self, write: &impl Fn(io::Error) -> Error) -> Error {
        match self {
            BeginError::Input(e) => e,
            BeginError::Write(e) => write(e),
        }
    }
}

/// Starts a run's summary and saved section (when saving), and feeds them
/// the draws of an interrupted run being resumed, after checking that they
/// come from the same run.
fn begin<'w, W: io::Write>(
    head: &NullRun,
    shown: &str,
    earlier: Option<&SavedRun>,
    writer: Option<&'w mut W>,
) -> Result<(DrawSummaries, Option<SectionWriter<'w, W>>), BeginError> {
    let dirs = head.indices.iter().map(|k| k.more_nested()).collect();
    let mut acc = DrawSummaries::new(head.observed.clone(), dirs, head.stop_after);
    let mut section = match writer {
        Some(w) => Some(SectionWriter::begin(head, shown, w).map_err(BeginError::Write)?),
        None => None,
    };
    if let Some(e) = earlier {
        let shard = (head.shard != e.run.shard).then(|| {
            format!(
                "shard {} vs {}",
                head.shard.map_or("none".into(), |s| s.to_string()),
                e.run.shard.map_or("none".into(), |s| s.to_string())
            )
        });
        if let Some(d) = differing_setting(head, &e.run).or(shard) {
            return Err(BeginError::Input(Error::InvalidArgument(format!(
                "--resume: the saved draws of {shown} ({}) come from another run: {d}",
                head.model
            ))));
        }
        for (&k, v) in e.run.draw_ids.iter().zip(&e.run.values) {
            acc.push(v);
            if let Some(sec) = section.as_mut() {
                sec.draw(k, v).map_err(BeginError::Write)?;
            }
        }
    }
    Ok((acc, section))
}

fn check_bounds(args: &NullArgs) -> nidus::Result<()> {
    if args.draws == 0 {
        return Err(Error::InvalidArgument("--draws must be at least 1".into()));
    }
    if args.draws > MAX_DRAWS {
        return Err(Error::InvalidArgument(format!(
            "--draws {}: at most {MAX_DRAWS} draws per run (split larger runs over seeds)",
            args.draws
        )));
    }
    if let Some(s) = args.shard {
        if s.count() > args.draws {
            return Err(Error::InvalidArgument(format!(
                "--shard {s}: more shards than the {} draws; use at most {} shards",
                args.draws, args.draws
            )));
        }
    }
    Ok(())
}
