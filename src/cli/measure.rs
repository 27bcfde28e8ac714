//! `nidus measure`: every requested index of every file.

use std::io;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use nidus::measure::{measure, Family, MeasureOptions};
use nidus::metrics::TemperatureOptions;
use nidus::{Error, Order};

use super::report::Table;
use super::{
    emit, input_name, parse_list, read_input, report_failure, Format, LayoutArgs, List, EXIT_INPUT,
};

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
    #[arg(long, value_name = "LIST", value_parser = parse_list::<Family>,
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
}

/// The most random starts of the temperature packing search accepted.
pub const MAX_RESTARTS: usize = 10_000;

/// The command line's advice on a library error: a network too large for
/// a dense table (which only temperature needs) names the option that
/// leaves temperature out.
fn advise(e: Error, temperature: bool) -> Error {
    match e {
        Error::TooLarge { .. } if temperature => Error::InvalidArgument(format!(
            "{e}; leave temperature out with --indices (for example --indices nodf,wnodf,spectral,discrepancy)"
        )),
        e => e,
    }
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
    let opts = MeasureOptions::new(
        args.order,
        args.indices.map_or_else(|| Family::ALL.to_vec(), |l| l.0),
        TemperatureOptions::default()
            .with_pack(!args.no_packing)
            .with_restarts(args.restarts),
    );
    let table = Table::new(args.format, &opts)?;
    let stdout = io::stdout();
    let mut out = stdout.lock();
    let mut failed = 0usize;
    if let Some(h) = table.header() {
        if !emit(&mut out, &h) {
            return Ok(ExitCode::SUCCESS);
        }
    }
    for file in &args.files {
        let shown = input_name(file);
        let result = read_input(file, &read).and_then(|read| {
            let net = read.network;
            let m = measure(&net, &opts)?;
            Ok(table.record(&shown, &m, (net.row_labels(), net.col_labels())))
        });
        match result {
            Ok(text) => {
                if !emit(&mut out, &text) {
                    break;
                }
            }
            Err(e) => {
                failed += 1;
                report_failure(&shown, &advise(e, opts.wants(Family::Temperature)));
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
