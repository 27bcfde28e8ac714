//! `nidus measure`: every requested index of every file.

use std::io;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use nidus::measure::{measure, Family, MeasureOptions, Measurement};
use nidus::metrics::TemperatureOptions;
use nidus::{Error, Order};

use super::figure::{figure_paths, MatrixFigureArgs};
use super::report::Table;
use super::{
    emit, input_name, parse_list, print_read_notes, read_input_unprinted, report_failure, Format,
    LayoutArgs, List, EXIT_INPUT,
};

/// A spinner on stderr naming the step under way (reading a file,
/// computing its indices), for steps that can take seconds (big files,
/// temperature packing); hidden when stderr is not a terminal.
fn spinner() -> indicatif::ProgressBar {
    use std::io::IsTerminal;
    if !io::stderr().is_terminal() {
        return indicatif::ProgressBar::hidden();
    }
    let bar = indicatif::ProgressBar::new_spinner();
    if let Ok(style) = indicatif::ProgressStyle::with_template("{spinner} {msg} ({elapsed})") {
        bar.set_style(style);
    }
    bar.enable_steady_tick(std::time::Duration::from_millis(120));
    bar
}

#[derive(Args, Debug)]
pub struct MeasureArgs {
    /// Network files (see README for the two layouts); `-` reads standard input.
    #[arg(required = true, value_name = "FILE")]
    files: Vec<PathBuf>,
    /// Row and column order for NODF and WNODF: sorted (by decreasing degree) or given (as in the file).
    #[arg(long, default_value = "sorted", value_name = "sorted|given")]
    order: Order,
    #[command(flatten)]
    input: LayoutArgs,
    /// Index families to compute (the list comes from the registry of indices).
    /// `--indices` is an older spelling, still accepted.
    #[arg(long = "index", alias = "indices", value_name = "LIST", value_parser = parse_list::<Family>,
          help = format!("Indices to compute, comma-separated: {} (default: all)",
                         nidus::metrics::registry::families().join(", ")))]
    indices: Option<List<Family>>,
    /// Temperature: random starts of the packing search besides the degree-sorted one.
    #[arg(long, default_value_t = TemperatureOptions::default().restarts, value_name = "N")]
    restarts: usize,
    /// Temperature: report the given and sorted orders only, without searching for the packed order.
    #[arg(long)]
    no_packing: bool,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
    #[command(flatten)]
    figure: MatrixFigureArgs,
}

/// The most random starts of the temperature packing search accepted.
pub const MAX_RESTARTS: usize = nidus::null::draws_file::MAX_RESTARTS;

/// An index the user named in `--index` that could not be computed
/// fails the file (exit 2); with the default set it is reported as not
/// computed and the others stand. WNODF of a binary network is not a
/// failure (it is 0 by definition and simply not reported).
fn explicit_failure(m: &Measurement, asked: &[Family]) -> Option<Error> {
    asked
        .iter()
        .filter(|f| **f != Family::Wnodf || m.weighted)
        .find_map(|f| {
            m.not_computed.get(f.key()).map(|reason| {
                let advice = if *f == Family::Temperature {
                    "; leave temperature out of --index (for example --index nodf,wnodf,spectral,discrepancy)"
                } else {
                    ""
                };
                Error::InvalidArgument(format!("{}: {reason}{advice}", f.name()))
            })
        })
}

pub fn run(args: MeasureArgs) -> nidus::Result<ExitCode> {
    if args.restarts > MAX_RESTARTS {
        return Err(nidus::Error::InvalidArgument(format!(
            "--restarts {}: at most {MAX_RESTARTS} random starts (each is a full packing search)",
            args.restarts
        )));
    }
    let read = args.input.read_options();
    super::check_stdin_once(&args.files)?;
    let explicit: Vec<Family> = args.indices.as_ref().map_or_else(Vec::new, |l| l.0.clone());
    let opts = MeasureOptions::new(
        args.order,
        args.indices.map_or_else(|| Family::ALL.to_vec(), |l| l.0),
        TemperatureOptions::default()
            .with_pack(!args.no_packing)
            .with_restarts(args.restarts),
    );
    let table = Table::new(args.format, &opts)?;
    let svg_paths = match &args.figure.svg {
        Some(base) => {
            args.figure.options(base)?; // bad --svg-names fail before any file is read
            Some(figure_paths(base, &args.files)?)
        }
        None => None,
    };
    let stdout = io::stdout();
    let mut out = stdout.lock();
    let mut failed = 0usize;
    if let Some(h) = table.header() {
        if !emit(&mut out, &h) {
            return Ok(ExitCode::SUCCESS);
        }
    }
    for (k, file) in args.files.iter().enumerate() {
        let shown = input_name(file);
        let bar = spinner();
        bar.set_message(format!("{shown}: reading"));
        let result = read_input_unprinted(file, &read).and_then(|read| {
            bar.suspend(|| print_read_notes(&shown, &read.report));
            let dropped = read.report.dropped();
            let net = read.network;
            let slow = if opts.wants(Family::Temperature) && !args.no_packing {
                " (temperature packing is the slow step)"
            } else {
                ""
            };
            bar.set_message(format!(
                "{shown}: computing indices of {} x {}{slow}",
                net.nrows(),
                net.ncols()
            ));
            let m = measure(&net, &opts)?;
            bar.finish_and_clear();
            if let Some(e) = explicit_failure(&m, &explicit) {
                return Err(e);
            }
            if let Some(paths) = &svg_paths {
                let fig = nidus::figures::matrix_figure(&net, &m, &args.figure.options(file)?)?;
                fig.save(&paths[k])?;
                eprintln!("nidus: figure written to {}", paths[k].display());
            }
            Ok(table.record(&shown, &m, (net.row_labels(), net.col_labels()), dropped))
        });
        bar.finish_and_clear();
        match result {
            Ok(text) => {
                if !emit(&mut out, &text) {
                    break;
                }
            }
            Err(e) => {
                failed += 1;
                report_failure(&shown, &e);
            }
        }
    }
    if failed > 0 {
        if args.files.len() > 1 {
            eprintln!("nidus: {failed} of {} files failed", args.files.len());
        }
        return Ok(ExitCode::from(EXIT_INPUT));
    }
    Ok(ExitCode::SUCCESS)
}
