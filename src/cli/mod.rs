//! Argument parsing and dispatch. Each subcommand lives in its own module;
//! the library does the work, these modules read files, call it and print.

use std::process::ExitCode;

use std::io::{self, Write};

use clap::{Args, Parser, Subcommand, ValueEnum};
use nidus::io::{EdgeHeader, Layout, ReadOptions};

mod figure;
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

/// How input files are laid out: shared by every subcommand that reads networks.
#[derive(Args, Debug, Clone, Copy)]
pub struct LayoutArgs {
    /// File layout: matrix (a table with labels) or edges (one interaction per line).
    #[arg(long, default_value = "matrix", value_name = "matrix|edges")]
    layout: Layout,
    /// For edges: is the first line a header? auto skips it when its weight field is not a number.
    #[arg(long, default_value = "auto", value_name = "auto|yes|no")]
    edge_header: EdgeHeader,
}

impl LayoutArgs {
    /// The library's reading options.
    pub fn read_options(self) -> ReadOptions {
        ReadOptions {
            layout: self.layout,
            edge_header: self.edge_header,
        }
    }
}

/// Writes to stdout; false when the reader has gone (a closed pipe, as in
/// `nidus ... | head`) or on another write error, which is reported.
pub fn emit(out: &mut impl Write, text: &str) -> bool {
    match out.write_all(text.as_bytes()).and_then(|_| out.flush()) {
        Ok(()) => true,
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => false,
        Err(e) => {
            eprintln!("nidus: cannot write the output: {e}");
            false
        }
    }
}

/// One CSV field, quoted when it holds a delimiter, quote or line break.
pub fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// Reports a failure of one file (or file and model) on stderr, naming it
/// unless the message already starts with it.
pub fn report_failure(what: &str, e: &nidus::Error) {
    let msg = e.to_string();
    if msg.starts_with(what) {
        eprintln!("nidus: {msg}");
    } else {
        eprintln!("nidus: {what}: {msg}");
    }
}
