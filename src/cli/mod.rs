//! Argument parsing and dispatch. Each subcommand lives in its own module;
//! the library does the work, these modules read files, call it and print.

use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};

mod measure;
mod merge;
mod null;
mod report;
mod sample;

/// Exit status for bad input or bad options.
pub const EXIT_INPUT: u8 = 2;

#[derive(Parser, Debug)]
#[command(
    name = "nidus",
    version,
    about = "Measure how nested bipartite ecological networks are, and test it against null models",
    propagate_version = true
)]
struct Cli {
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long, global = true, value_name = "N")]
    threads: Option<usize>,
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Compute nestedness indices of one or more network files.
    Measure(measure::MeasureArgs),
    /// Test indices of one or more files against null models.
    Null(null::NullArgs),
    /// Merge the saved draws of a split `null` run and print its result.
    Merge(merge::MergeArgs),
    /// Write null networks drawn from a file's network.
    Sample(sample::SampleArgs),
}

/// Output formats shared by the subcommands.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// A short report for a person.
    Text,
    /// One JSON object per line.
    Json,
    /// A table with one header line.
    Csv,
}

/// Runs the command line and maps failures to exit statuses: 0 success,
/// 2 bad input or options (clap's own usage errors also exit 2).
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    if let Some(n) = cli.threads {
        if n == 0 {
            eprintln!("nidus: --threads must be at least 1");
            return ExitCode::from(EXIT_INPUT);
        }
        if let Err(e) = rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
        {
            eprintln!("nidus: cannot start {n} threads: {e}");
            return ExitCode::from(EXIT_INPUT);
        }
    }
    let result = match cli.command {
        Command::Measure(args) => measure::run(args),
        Command::Null(args) => null::run(args),
        Command::Merge(args) => merge::run(args),
        Command::Sample(args) => sample::run(args),
    };
    match result {
        Ok(code) => code,
        Err(e) => {
            eprintln!("nidus: {e}");
            ExitCode::from(EXIT_INPUT)
        }
    }
}

/// A comma-separated list of names on the command line.
#[derive(Clone, Debug)]
pub struct List<T>(pub Vec<T>);

/// Parses a comma-separated list with `FromStr`, rejecting repeats.
pub fn parse_list<T: std::str::FromStr<Err = nidus::Error> + PartialEq + Copy>(
    s: &str,
) -> Result<List<T>, nidus::Error> {
    let mut out: Vec<T> = Vec::new();
    for part in s.split(',').map(str::trim) {
        if part.is_empty() {
            return Err(nidus::Error::InvalidArgument(format!(
                "empty name in the list '{s}'"
            )));
        }
        let v: T = part.parse()?;
        if out.contains(&v) {
            return Err(nidus::Error::InvalidArgument(format!(
                "'{part}' is named twice in '{s}'"
            )));
        }
        out.push(v);
    }
    Ok(List(out))
}
