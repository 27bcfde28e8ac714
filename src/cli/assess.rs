//! `nidus assess`: type I error and power of every index x null model on
//! generated networks shaped like the user's; and its output, shared with
//! `nidus merge`.

use std::fs::File;
use std::io::{self, IsTerminal, Write};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use nidus::analyses::assess::{
    power_curve, run_assess, AssessConfig, AssessRun, RateRow, Scenario, Shape, LOW_POWER,
};
use nidus::index::IndexKind;
use nidus::null::{NullModel, Shard};
use nidus::Error;
use serde_json::{Map, Value};

use super::{csv_field, emit, input_name, parse_list, read_input, Format, LayoutArgs, List};

#[derive(Args, Debug)]
pub struct AssessArgs {
    /// Rows of the generated networks (with --cols and --fill; or give --like).
    #[arg(
        long,
        value_name = "M",
        required_unless_present = "like",
        conflicts_with = "like"
    )]
    rows: Option<usize>,
    /// Columns of the generated networks.
    #[arg(
        long,
        value_name = "N",
        required_unless_present = "like",
        conflicts_with = "like"
    )]
    cols: Option<usize>,
    /// Fill: links = round(fill * rows * cols).
    #[arg(
        long,
        value_name = "F",
        required_unless_present = "like",
        conflicts_with = "like"
    )]
    fill: Option<f64>,
    /// Lognormal sigma of the expected degrees of `degrees` networks (0 = all
    /// equal) [default: 1].
    #[arg(long, value_name = "H", conflicts_with = "like")]
    heterogeneity: Option<f64>,
    /// Take the shape, links and degree sequences from this network file.
    #[arg(long, value_name = "FILE")]
    like: Option<PathBuf>,
    /// Scenarios, comma-separated: random, degrees, nested:S (S from 0 to 1).
    #[arg(long, default_value = "random,degrees,nested:0.5,nested:1", value_name = "LIST",
          value_parser = parse_list::<Scenario>)]
    scenario: List<Scenario>,
    /// Indices, comma-separated (binary ones: nodf, nodf-rows, nodf-cols, temperature,
    /// temperature-sorted, spectral, discrepancy).
    #[arg(long, default_value = "nodf", value_name = "LIST", value_parser = parse_list::<IndexKind>)]
    index: List<IndexKind>,
    /// Null models, comma-separated (binary ones: equiprobable, proportional, fixed-rows,
    /// fixed-columns, fixed-both).
    #[arg(long, default_value = "equiprobable,fixed-rows,fixed-both", value_name = "LIST",
          value_parser = parse_list::<NullModel>)]
    model: List<NullModel>,
    /// Replicate networks per scenario.
    #[arg(long, default_value_t = 200, value_name = "R")]
    networks: usize,
    /// Null draws per test.
    #[arg(long, default_value_t = 199, value_name = "D")]
    draws: usize,
    /// Level of each test: a rejection is p (more-nested direction) <= alpha.
    #[arg(long, default_value_t = 0.05, value_name = "A")]
    alpha: f64,
    /// Seed: network r of scenario s depends on (seed, s, r) alone.
    #[arg(long, required = true, value_name = "S")]
    seed: u64,
    /// Curveball trades per fixed-both null draw (default 5 * max(rows, columns)).
    #[arg(long, value_name = "B")]
    burn_in: Option<usize>,
    /// Compute only the networks r with r mod K = I - 1 (needs --save-draws).
    #[arg(long, value_name = "I/K")]
    shard: Option<Shard>,
    /// Write this shard's per-network outcomes to PATH (for `nidus merge`).
    #[arg(long, value_name = "PATH")]
    save_draws: Option<PathBuf>,
    #[command(flatten)]
    input: LayoutArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
    /// Write a figure (rejection rate against planted nestedness per index and model, with
    /// alpha and 95 % Wilson whiskers) as SVG to PATH; needs a nested:S scenario.
    #[arg(long, value_name = "PATH")]
    svg: Option<PathBuf>,
}

const COLUMNS: &[&str] = &[
    "scenario",
    "strength",
    "index",
    "model",
    "networks",
    "draws",
    "alpha",
    "rejections",
    "rate",
    "rate_low",
    "rate_high",
    "mean_z",
    "z_networks",
    "mean_observed",
    "verdict",
    "seed",
    "rows",
    "cols",
    "links",
    "fill",
    "heterogeneity",
    "like",
    "burn_in",
    "generator_trades",
    "version",
];

fn record(run: &AssessRun, r: &RateRow) -> Map<String, Value> {
    let s = &run.settings;
    let opt = |x: Option<f64>| x.map_or(Value::Null, Value::from);
    let mut o = Map::new();
    o.insert("scenario".into(), r.scenario.name().into());
    o.insert("strength".into(), opt(r.scenario.strength()));
    o.insert("index".into(), r.index.name().into());
    o.insert("model".into(), r.model.name().into());
    o.insert("networks".into(), r.networks.into());
    o.insert("draws".into(), s.draws.into());
    o.insert("alpha".into(), s.alpha.into());
    o.insert("rejections".into(), r.rejections.into());
    o.insert("rate".into(), r.rate.into());
    o.insert("rate_low".into(), r.rate_low.into());
    o.insert("rate_high".into(), r.rate_high.into());
    o.insert("mean_z".into(), opt(r.mean_z));
    o.insert("z_networks".into(), r.z_networks.into());
    o.insert("mean_observed".into(), r.mean_observed.into());
    o.insert("verdict".into(), r.verdict.name().into());
    o.insert("seed".into(), s.seed.into());
    o.insert("rows".into(), s.rows.into());
    o.insert("cols".into(), s.cols.into());
    o.insert("links".into(), s.links.into());
    o.insert("fill".into(), s.fill.into());
    o.insert("heterogeneity".into(), opt(s.heterogeneity));
    o.insert(
        "like".into(),
        s.like.clone().map_or(Value::Null, Value::from),
    );
    o.insert("burn_in".into(), s.burn_in.into());
    o.insert("generator_trades".into(), s.generator_trades.into());
    o.insert("version".into(), s.version.clone().into());
    o
}

fn csv_value(v: &Value) -> String {
    match v {
        Value::Null => String::new(),
        Value::String(s) => csv_field(s),
        other => other.to_string(),
    }
}

/// The whole output of a complete assessment.
pub fn render(format: Format, run: &AssessRun) -> nidus::Result<String> {
    let rows = run.summarise()?;
    let mut out = String::new();
    match format {
        Format::Json => {
            for r in &rows {
                out += &(Value::Object(record(run, r)).to_string() + "\n");
            }
        }
        Format::Csv => {
            out += &(COLUMNS.join(",") + "\n");
            for r in &rows {
                let o = record(run, r);
                let fields: Vec<String> = COLUMNS.iter().map(|c| csv_value(&o[*c])).collect();
                out += &(fields.join(",") + "\n");
            }
        }
        Format::Text => out += &text(run, &rows),
    }
    Ok(out)
}

fn text(run: &AssessRun, rows: &[RateRow]) -> String {
    let s = &run.settings;
    let mut t = format!(
        "Rejection rates of index x null model (nidus {})\n",
        s.version
    );
    match (&s.like, s.heterogeneity) {
        (Some(file), _) => {
            t += &format!(
                "  test networks shaped like {file}: {} x {}, {} links (fill {:.4}), its degree sequences\n",
                s.rows, s.cols, s.links, s.fill
            )
        }
        (None, h) => {
            t += &format!(
                "  test networks: {} x {}, {} links (fill {}), degree heterogeneity {} (lognormal sigma)\n",
                s.rows,
                s.cols,
                s.links,
                s.fill,
                h.unwrap_or(0.0)
            )
        }
    }
    t += &format!(
        "  {} networks per scenario, {} null draws per test, alpha {}, seed {}\n",
        s.networks, s.draws, s.alpha, s.seed
    );
    t += &format!(
        "  fixed-both: {} curveball trades per null draw; degrees networks randomised by {} trades\n\n",
        s.burn_in, s.generator_trades
    );
    let wide = rows
        .iter()
        .map(|r| r.scenario.name().len())
        .max()
        .unwrap_or(8)
        .max(8);
    let iw = rows
        .iter()
        .map(|r| r.index.name().len())
        .max()
        .unwrap_or(5)
        .max(5);
    t += &format!(
        "  {:<wide$}  {:<iw$}  {:<13}  {:>9}  {:>6}  {:<13}  {:>7}  {:>10}  {}\n",
        "scenario",
        "index",
        "model",
        "rejected",
        "rate",
        "95% interval",
        "mean z",
        "mean index",
        "reading"
    );
    let mut stuck = false;
    for r in rows {
        let z = r.mean_z.map_or("-".to_string(), |z| format!("{z:.2}"));
        let kind = if r.type_one { "type I" } else { "power" };
        if r.rejections == 0 && r.z_networks == 0 {
            stuck = true;
        }
        t += &format!(
            "  {:<wide$}  {:<iw$}  {:<13}  {:>9}  {:>6.3}  {:<13}  {:>7}  {:>10.3}  {kind}: {}\n",
            r.scenario.name(),
            r.index.name(),
            r.model.name(),
            format!("{}/{}", r.rejections, r.networks),
            r.rate,
            format!("{:.3}-{:.3}", r.rate_low, r.rate_high),
            z,
            r.mean_observed,
            r.verdict.name()
        );
    }
    t += &format!(
        "\n  Reading: under random, degrees and nested:0 the networks hold no nestedness beyond what\n  \
         a model keeps, so the rate is that test's type I error and should be near alpha = {}:\n  \
         \"too liberal\" = the whole 95% Wilson interval lies above alpha (the test finds nestedness\n  \
         that is not there), \"conservative\" = it lies below. Under nested:S (S > 0) the rate is the\n  \
         power; \"low power\" = below {LOW_POWER}.\n",
        s.alpha
    );
    if stuck {
        t += "  A mean z of \"-\" with no rejection: the null draws never varied (e.g. a perfectly nested\n  \
              matrix against fixed-both, the only matrix with its margins), so the test cannot reject.\n";
    }
    t
}

fn progress_bar(total: usize) -> ProgressBar {
    if !io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(total as u64);
    if let Ok(style) =
        ProgressStyle::with_template("assess [{bar:30}] {pos}/{len} networks ({eta})")
    {
        bar.set_style(style.progress_chars("=> "));
    }
    bar
}

pub fn run(args: AssessArgs) -> nidus::Result<ExitCode> {
    if args.shard.is_some() && args.save_draws.is_none() {
        return Err(Error::InvalidArgument(
            "--shard computes part of the networks: give --save-draws PATH to keep them for `nidus merge`"
                .into(),
        ));
    }
    if args.svg.is_some() {
        if args.shard.is_some() {
            return Err(Error::InvalidArgument(
                "--svg needs the rates of every network: a shard holds only part of them; draw the figure with `nidus merge PARTS... --svg PATH`"
                    .into(),
            ));
        }
        check_figure_scenarios(&args.scenario.0)?;
    }
    let shape = match (&args.like, args.rows, args.cols, args.fill) {
        (Some(file), ..) => {
            let net = read_input(file, &args.input.read_options())?.network;
            Shape::like(&net, &input_name(file))?
        }
        (None, Some(m), Some(n), Some(f)) => {
            Shape::synthetic(m, n, f, args.heterogeneity.unwrap_or(1.0))?
        }
        _ => {
            return Err(Error::InvalidArgument(
                "give --rows, --cols and --fill, or --like FILE".into(),
            ))
        }
    };
    let mut config = AssessConfig::new(
        shape,
        args.scenario.0.clone(),
        args.index.0.clone(),
        args.model.0.clone(),
        args.networks,
        args.draws,
        args.seed,
    );
    config.alpha = args.alpha;
    config.shard = args.shard;
    config.options.burn_in = args.burn_in;
    let share = match args.shard {
        Some(s) => (0..args.networks as u64).filter(|&r| s.contains(r)).count(),
        None => args.networks,
    } * args.scenario.0.len();
    let bar = progress_bar(share);
    let result = run_assess(&config, &|done| bar.set_position(done as u64));
    bar.finish_and_clear();
    let run = result?;
    if let Some(path) = &args.save_draws {
        let werr = |source| Error::Write {
            path: path.clone(),
            source,
        };
        let mut w = io::BufWriter::new(File::create(path).map_err(werr)?);
        run.write_part(&mut w).map_err(werr)?;
        w.flush().map_err(werr)?;
        if let Some(s) = args.shard {
            eprintln!(
                "nidus: assessment shard {s}: {share} networks' outcomes saved to {}",
                path.display()
            );
        }
    }
    if args.shard.is_none() {
        let text = render(args.format, &run)?;
        let stdout = io::stdout();
        emit(&mut stdout.lock(), &text);
        if let Some(path) = &args.svg {
            figure(&run, path)?;
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// The rejection figure draws rates against the strength of `nested:S`.
pub fn check_figure_scenarios(scenarios: &[Scenario]) -> nidus::Result<()> {
    if scenarios.iter().any(|s| s.strength().is_some()) {
        Ok(())
    } else {
        Err(Error::InvalidArgument(
            "--svg draws the rejection rate against the planted strength S: add a nested:S scenario to --scenario (for example nested:0,nested:0.5,nested:1)".into(),
        ))
    }
}

/// `--svg` (of `assess` and of `merge` with assessment parts): one series
/// per index and model along the `nested:S` scenarios; the type I rates of
/// `random` and `degrees` are written in the series' legend entry.
pub fn figure(run: &AssessRun, path: &std::path::Path) -> nidus::Result<()> {
    use nidus::figures::{rejection_figure, RejectionPoint, RejectionSeries};
    check_figure_scenarios(&run.settings.scenarios)?;
    let rows = run.summarise()?;
    let s = &run.settings;
    let mut series = Vec::new();
    for &index in &s.indices {
        for &model in &s.models {
            let points = power_curve(&rows, index, model)
                .into_iter()
                .map(|p| RejectionPoint {
                    strength: p.strength,
                    rate: p.rate,
                    low: p.low,
                    high: p.high,
                })
                .collect();
            let mut name = format!("{} against {}", index.name(), model.name());
            let others: Vec<String> = rows
                .iter()
                .filter(|r| r.index == index && r.model == model && r.scenario.strength().is_none())
                .map(|r| format!("{} {:.2}", r.scenario.name(), r.rate))
                .collect();
            if !others.is_empty() {
                name += &format!(" (type I: {})", others.join(", "));
            }
            series.push(RejectionSeries { name, points });
        }
    }
    let shape = match &s.like {
        Some(f) => format!("networks shaped like {f}"),
        None => format!("{} x {} networks, fill {}", s.rows, s.cols, s.fill),
    };
    let title = format!(
        "Rejection rates: {shape}, {} per scenario, {} null draws each; whiskers: 95 % Wilson interval",
        s.networks, s.draws
    );
    let fig = rejection_figure(
        &series,
        s.alpha,
        "planted nestedness S (nested:S; 0 = random)",
        &title,
    )?;
    fig.save(path)?;
    eprintln!("nidus: figure written to {}", path.display());
    Ok(())
}
