//! Argument parsing and dispatch. Each subcommand lives in its own module;
//! the library does the work, these modules read files, call it and print.

use std::process::ExitCode;

use std::io::{self, Write};
use std::sync::atomic::{AtomicBool, Ordering};

use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::Path;

use nidus::io::{EdgeHeader, Labels, Layout, ReadNote, ReadOptions, ReadOutcome, ReadReport};

mod assess;
mod atomic;
mod effort;
mod figure;
mod flat;
mod measure;
mod merge;
mod null;
mod numbers;
mod report;
mod sample;
mod signals;
mod species;

/// Exit status for bad input or bad options.
pub const EXIT_INPUT: u8 = 2;
/// Exit status when a result could not be written (standard output or a
/// file): a full disk, a closed device, a folder that cannot be written.
pub const EXIT_OUTPUT: u8 = 3;

/// Exit status of a run stopped by SIGINT or SIGTERM after saving its
/// complete draws (128 + SIGINT, the shell's convention).
pub const EXIT_INTERRUPTED: u8 = 130;

/// `--threads` is capped at this many threads per core.
pub const MAX_THREADS_PER_CORE: usize = 4;

/// Set by [`emit`] when standard output failed; `main` then exits with
/// [`EXIT_OUTPUT`] whatever the subcommand returned.
static OUTPUT_FAILED: AtomicBool = AtomicBool::new(false);

#[derive(Parser, Debug)]
#[command(
    name = "nidus",
    version,
    about = "Measure how nested bipartite ecological networks are, and test it against null models",
    after_help = AFTER_HELP,
    propagate_version = true
)]
struct Cli {
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long, global = true, value_name = "N")]
    threads: Option<usize>,
    #[command(subcommand)]
    command: Command,
}

/// The end of `nidus --help`: the two file layouts, the null models in
/// one line each, and where the methods are written down.
const AFTER_HELP: &str = "\
File layouts (--layout):
  matrix  a table: first line the column species, then one line per row species,
          its label and one value per column (0 or empty: no link; counts allowed)
  edges   one interaction per line: row species, column species, optional weight
          (default 1; repeated pairs are summed); a header line is detected
Delimiters (comma, tab, semicolon) are detected; species without links are dropped
(--keep-empty keeps them), and every such decision is reported on stderr.

Null models (nidus null --model):
  equiprobable     the number of links, placed uniformly
  proportional     link probability from the two species' degrees
  fixed-rows       each row's degree
  fixed-columns    each column's degree
  fixed-both       every row and column degree (curveball chain)
  shuffle-cells    all cell values, zeros included, permuted
  shuffle-weights  the links kept, their weights permuted
  fixed-totals     integer row and column totals (visit counts)

Methods, formulas and citations: docs/methods.md in the nidus repository;
usage and output keys: README.md.";

/// The end of `nidus null --help`: how to read the result.
const NULL_AFTER_HELP: &str = "\
p is the p-value in the more-nested direction (higher NODF, WNODF, spectral radius;
lower temperature, discrepancy): (1 + #{draws at least as nested}) / (draws + 1).
The report states the direction in words; JSON and CSV keep p_greater and p_less too.
A model that cannot move an index (every draw equals the observed value) reports
'no test' and why. Definitions: docs/methods.md (section 6, null models; 7, tests).";

#[derive(Subcommand, Debug)]
enum Command {
    /// Compute nestedness indices of one or more network files.
    Measure(measure::MeasureArgs),
    /// Test indices of one or more files against null models.
    #[command(after_help = NULL_AFTER_HELP)]
    Null(null::NullArgs),
    /// Merge the saved draws of a split `null` run and print its result.
    Merge(merge::MergeArgs),
    /// Write null networks drawn from a file's network.
    Sample(sample::SampleArgs),
    /// Which species make a network nested: per-species contributions, leave-one-out, temperature.
    Species(species::SpeciesArgs),
    /// Rarefy a visit-count network: is it sampled enough for its nestedness to mean anything?
    Effort(effort::EffortArgs),
    /// Type I error and power of each index x null model on generated networks.
    Assess(assess::AssessArgs),
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
/// 2 bad input or options (clap's own usage errors also exit 2), 3 a result
/// that could not be written (standard output or a file).
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    if let Some(mut n) = cli.threads {
        if n == 0 {
            eprintln!("nidus: --threads must be at least 1");
            return ExitCode::from(EXIT_INPUT);
        }
        // More threads than cores only costs time to start them (results do
        // not depend on the count): cap at a small multiple of the cores.
        let cores = std::thread::available_parallelism().map_or(1, |c| c.get());
        if n > MAX_THREADS_PER_CORE * cores {
            eprintln!(
                "nidus: --threads {n} is far above the {cores} core(s) here; using {}",
                MAX_THREADS_PER_CORE * cores
            );
            n = MAX_THREADS_PER_CORE * cores;
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
        Command::Species(args) => species::run(args),
        Command::Effort(args) => effort::run(args),
        Command::Assess(args) => assess::run(args),
    };
    let code = match result {
        Ok(code) => code,
        Err(e @ nidus::Error::Write { .. }) => {
            eprintln!("nidus: {e}");
            ExitCode::from(EXIT_OUTPUT)
        }
        Err(e) => {
            eprintln!("nidus: {e}");
            ExitCode::from(EXIT_INPUT)
        }
    };
    // Anything still buffered is written now, so its failure is seen too.
    if let Err(e) = io::stdout().lock().flush() {
        if e.kind() != io::ErrorKind::BrokenPipe && !OUTPUT_FAILED.swap(true, Ordering::SeqCst) {
            eprintln!("nidus: cannot write the output: {e}");
        }
    }
    if OUTPUT_FAILED.load(Ordering::SeqCst) {
        return ExitCode::from(EXIT_OUTPUT);
    }
    code
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
    /// For edges: is the first line a header? auto decides (README, "File layouts") and says so on stderr.
    #[arg(long, default_value = "auto", value_name = "auto|yes|no")]
    edge_header: EdgeHeader,
    /// For matrix: which labels the file has: both, rows (no header line), cols (no row labels), none. auto reads a table whose first line and first column are all numbers as unlabelled (rows r1.., columns c1..), else as both.
    #[arg(long, default_value = "auto", value_name = "auto|both|rows|cols|none")]
    labels: Labels,
    /// Keep species without any link (all-zero rows or columns, labels seen only with weight 0); by default they are dropped and listed on stderr.
    #[arg(long)]
    keep_empty: bool,
    /// Swap rows and columns (the file's columns become the rows).
    #[arg(long)]
    transpose: bool,
}

impl LayoutArgs {
    /// The library's reading options.
    pub fn read_options(self) -> ReadOptions {
        ReadOptions {
            layout: self.layout,
            edge_header: self.edge_header,
            labels: self.labels,
            keep_empty: self.keep_empty,
            transpose: self.transpose,
        }
    }
}

/// The name of an input in messages and output: `<stdin>` for `-`.
pub fn input_name(file: &Path) -> String {
    if file.as_os_str() == "-" {
        "<stdin>".to_string()
    } else {
        file.display().to_string()
    }
}

/// Refuses `-` (standard input) named more than once: it can be read once.
pub fn check_stdin_once(files: &[std::path::PathBuf]) -> nidus::Result<()> {
    if files.iter().filter(|f| f.as_os_str() == "-").count() > 1 {
        return Err(nidus::Error::InvalidArgument(
            "'-' (standard input) is named more than once; it can be read only once".into(),
        ));
    }
    Ok(())
}

/// Reads one input (`-` is standard input) and prints the reader's notes on
/// stderr. When a matrix read fails on a file that looks like an edge list,
/// the error gains the advice to use `--layout edges`.
pub fn read_input(file: &Path, read: &ReadOptions) -> nidus::Result<ReadOutcome> {
    let outcome = read_input_unprinted(file, read)?;
    print_read_notes(&input_name(file), &outcome.report);
    Ok(outcome)
}

/// [`read_input`] without printing the reader's notes (the caller prints
/// them with [`print_read_notes`], for example around a progress line).
pub fn read_input_unprinted(file: &Path, read: &ReadOptions) -> nidus::Result<ReadOutcome> {
    let name = input_name(file);
    let bytes = if file.as_os_str() == "-" {
        let mut b = Vec::new();
        io::Read::read_to_end(&mut io::stdin().lock(), &mut b).map_err(|source| {
            nidus::Error::Io {
                path: name.clone().into(),
                source,
            }
        })?;
        b
    } else {
        std::fs::read(file).map_err(|source| nidus::Error::Io {
            path: file.to_path_buf(),
            source,
        })?
    };
    match nidus::io::parse_network_reported(&bytes, Path::new(&name), read) {
        Ok(outcome) => Ok(outcome),
        Err(e @ (nidus::Error::Parse { .. } | nidus::Error::EmptyNetwork(_)))
            if read.layout == Layout::Matrix && nidus::io::looks_like_edge_list(&bytes) =>
        {
            Err(nidus::Error::InvalidArgument(format!(
                "{e} (its lines look like an edge list, one interaction per line: \
                 use --layout edges)"
            )))
        }
        Err(e) => Err(e),
    }
}

/// Prints what the reader decided for one input, one line per decision:
/// `nidus: FILE: NOTE`, with the option that changes it.
pub fn print_read_notes(name: &str, report: &ReadReport) {
    for note in &report.notes {
        let advice = match note {
            ReadNote::EdgeHeader { .. } => " (--edge-header no reads it as data)",
            ReadNote::Unlabelled { .. } => {
                " (--labels both reads the first line and column as labels)"
            }
            ReadNote::Dropped { .. } => " (--keep-empty keeps them)",
            _ => "",
        };
        eprintln!("nidus: {name}: {note}{advice}");
    }
}

/// The one place the CLI writes results to standard output. Returns false
/// when writing should stop: the reader has gone (a closed pipe, as in
/// `nidus ... | head`, which is not an error), or another write error (a
/// full disk: `nidus measure ok.csv > /dev/full`), which is reported once
/// and makes the process exit with [`EXIT_OUTPUT`].
pub fn emit(out: &mut impl Write, text: &str) -> bool {
    match out.write_all(text.as_bytes()).and_then(|_| out.flush()) {
        Ok(()) => true,
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => false,
        Err(e) => {
            if !OUTPUT_FAILED.swap(true, Ordering::SeqCst) {
                eprintln!("nidus: cannot write the output: {e}");
            }
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
