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
use nidus::figures::{null_figure, NullPanel};
use nidus::index::Direction;
use nidus::index::IndexKind;
use nidus::null::{
    accumulate::EXACT_DRAWS,
    draws_file::{differing_setting, MAX_DRAWS, MAX_RESTARTS},
    merge_stream::index_file,
    packs_temperature, run_null_streaming, DrawSummaries, NullConfig, NullModel, NullOptions,
    NullRun, SectionIndex, SectionWriter, Shard,
};
use nidus::significance::{summarize, NullSummary};
use nidus::{Error, Order};
use serde_json::Value;

use super::atomic::{refuse_input_as_target, AtomicFile};
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
    /// For tests: binary draws as row lists whatever the network's size.
    #[arg(long, hide = true)]
    row_lists: bool,
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
    /// Temperature: random starts of the packing search besides the degree-sorted one, on the
    /// observed network and on every draw (default 4; 0 is the cheapest packing).
    #[arg(long, value_name = "N")]
    restarts: Option<usize>,
    #[command(flatten)]
    input: LayoutArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
    /// Write a figure of each file's null distributions (one panel per index and model) as SVG
    /// to PATH (with several files: PATH's name with each file's name inserted).
    #[arg(long, value_name = "PATH")]
    svg: Option<PathBuf>,
    /// Draws kept exactly before the summaries turn to streaming statistics
    /// (for tests of merges and resumed runs past the limit on few draws).
    #[arg(long, hide = true, value_name = "N", default_value_t = EXACT_DRAWS)]
    exact_draws: usize,
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
    /// Random starts of the temperature packing search (`temperature`
    /// tested only).
    restarts: Option<usize>,
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
    restarts: Option<usize>,
    draws_requested: usize,
    draws_done: usize,
    stop_after: Option<usize>,
}

impl Settings {
    /// The settings of `run`, which computed `done` draws (a streamed run
    /// keeps no draws, so the count comes from its caller).
    fn of(run: &NullRun, done: usize) -> Self {
        Settings {
            model: run.model,
            seed: run.seed,
            order: run.order,
            burn_in: run.burn_in,
            restarts: run.restarts,
            draws_requested: run.draws,
            draws_done: done,
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
        restarts: set.restarts,
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
        restarts: Some(1),
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

/// The output for one run (one file and one model, every index) whose
/// `done` draws gave `summaries`.
pub fn render(
    format: Format,
    file: &str,
    (run, done): (&NullRun, usize),
    summaries: &[NullSummary],
) -> nidus::Result<String> {
    let set = Settings::of(run, done);
    let mut s = String::new();
    if format == Format::Text {
        let done = if done < run.draws {
            format!(", {done} computed")
        } else {
            String::new()
        };
        s += &format!(
            "{file}\n  null model {}, seed {}, {} draws requested{done}, order {} (for NODF and WNODF){}{}{}\n  {:<24} {:>10} {:>10} {:>9} {:>7} {:>7}  {:<25} {:>6}  observed vs null mean\n",
            run.model,
            run.seed,
            run.draws,
            run.order.name(),
            run.burn_in.map_or(String::new(), |b| format!(
                ", {b} curveball trades per draw"
            )),
            run.restarts.map_or(String::new(), |r| format!(
                ", temperature packing with {r} random restarts"
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
    for (kind, sum) in run.indices.iter().zip(summaries) {
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
            if args.row_lists {
                config.options.lists = Some(true);
            }
            if let Some(r) = args.restarts {
                config.restarts = r;
            }
            config.check().map(|()| config)
        })
        .collect::<nidus::Result<_>>()?;
    if args.burn_in.is_some() && !args.model.0.contains(&NullModel::FixedBoth) {
        eprintln!(
            "nidus: note: --burn-in applies only to fixed-both; the models asked for do not use it"
        );
    }
    if args.restarts.is_some() && !packs_temperature(&args.index.0) {
        eprintln!(
            "nidus: note: --restarts applies only to the packed temperature; the indices asked for do not use it"
        );
    }
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
    // Every section is checked now (a damaged file, or a gap in its draw
    // numbers, is refused before anything runs); the draws are read again
    // when their run starts.
    let mut resumed: HashMap<(String, NullModel), SectionIndex> = HashMap::new();
    if let Some(p) = &args.resume {
        for r in index_file(p)? {
            resumed.insert((r.file.clone(), r.run.model), r);
        }
    }
    super::signals::install();
    let mut failed = 0usize;
    let mut interrupted = false;
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
                Some(s) => (args.draws + s.count() - s.index()) / s.count(),
                None => args.draws,
            };
            let earlier = resumed.remove(&(shown.clone(), model));
            let start = earlier.as_ref().map_or(0, |r| r.next_draw());
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
                    let (a, sec) = begin(
                        head,
                        &shown,
                        earlier.as_ref(),
                        writer.take(),
                        args.exact_draws,
                    )
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
                match begin(
                    &head,
                    &shown,
                    earlier.as_ref(),
                    writer.take(),
                    args.exact_draws,
                ) {
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
                        if svg_paths.is_some() {
                            panels.extend(null_panels(head, &acc, &sums, &shown));
                        }
                        render(args.format, &shown, (head, acc.draws()), &sums)?
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
        if let (Some(paths), false) = (&svg_paths, panels.is_empty()) {
            let fig = null_figure(&panels, &shown)?;
            fig.save(&paths[file_no])?;
            eprintln!("nidus: figure written to {}", paths[file_no].display());
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
/// One figure panel per index of a finished run, from the kept draws. A run
/// past the exact-draw limit keeps no draws to draw a histogram from: it is
/// left out of the figure with a note.
fn null_panels(
    head: &NullRun,
    acc: &DrawSummaries,
    sums: &[NullSummary],
    shown: &str,
) -> Vec<NullPanel> {
    let mut panels = Vec::new();
    for (i, (k, s)) in head.indices.iter().zip(sums).enumerate() {
        match acc.values(i) {
            Some(v) => panels.push(NullPanel {
                index: k.name().to_string(),
                model: head.model.name().to_string(),
                values: v.to_vec(),
                summary: s.clone(),
            }),
            None => eprintln!(
                "nidus: {shown} ({}, {}): too many draws to keep for the figure; its panel is left out",
                head.model.name(),
                k.name()
            ),
        }
    }
    panels
}

/// A failure while starting a run's output: bad resumed draws, or a write.
enum BeginError {
    Input(Error),
    Write(io::Error),
}

impl From<Error> for BeginError {
    fn from(e: Error) -> Self {
        BeginError::Input(e)
    }
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
    earlier: Option<&SectionIndex>,
    writer: Option<&'w mut W>,
    exact: usize,
) -> Result<(DrawSummaries, Option<SectionWriter<'w, W>>), BeginError> {
    let dirs = head.indices.iter().map(|k| k.more_nested()).collect();
    let mut acc = DrawSummaries::with_limit(head.observed.clone(), dirs, head.stop_after, exact);
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
        // Streamed from the file, line by line, checked again.
        e.replay(|k, v| {
            acc.push(v);
            match section.as_mut() {
                Some(sec) => sec.draw(k, v).map_err(BeginError::Write),
                None => Ok(()),
            }
        })?;
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
    if let Some(r) = args.restarts.filter(|&r| r > MAX_RESTARTS) {
        return Err(Error::InvalidArgument(format!(
            "--restarts {r}: at most {MAX_RESTARTS} random starts (each is a full packing search, \
             on every draw)"
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
