//! The crate's one error type.
//!
//! Every variant carries the context a user needs to find the problem: the
//! file, line and column of a malformed cell, the labels of a bad weight, the
//! size of an allocation that would not fit. Errors come from parsing and
//! configuration, never from hot loops.

use std::path::PathBuf;

/// Result alias used throughout the crate.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// Everything that can go wrong in nidus.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum Error {
    /// A file could not be opened or read.
    #[error("{}: cannot read the file: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
    /// A file could not be written.
    #[error("{}: cannot write the file: {source}", path.display())]
    Write {
        /// The file.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
    /// Malformed input text: the place and what was expected.
    #[error("{}: line {line}{}: {message}", path.display(), column.map(|c| format!(", field {c}")).unwrap_or_default())]
    Parse {
        /// The file (or `-`/a description for in-memory text).
        path: PathBuf,
        /// 1-based line number.
        line: usize,
        /// 1-based field number within the line, when the problem is one field.
        column: Option<usize>,
        /// What is wrong and what was expected.
        message: String,
    },
    /// A weight that is negative, NaN or infinite.
    #[error("row '{row}', column '{col}': the weight {value} is {problem}; weights must be finite and non-negative")]
    BadWeight {
        /// Row label.
        row: String,
        /// Column label.
        col: String,
        /// The value as text.
        value: String,
        /// `negative`, `not a number` or `infinite`.
        problem: &'static str,
    },
    /// Two rows or two columns share a label.
    #[error("the {side} label '{label}' appears twice (positions {first} and {second}); labels must be unique")]
    DuplicateLabel {
        /// `row` or `column`.
        side: &'static str,
        /// The repeated label.
        label: String,
        /// 1-based position of the first occurrence.
        first: usize,
        /// 1-based position of the second occurrence.
        second: usize,
    },
    /// Labels and matrix disagree in number.
    #[error("{side} labels: {labels} given for {expected} {side}s")]
    LabelCount {
        /// `row` or `column`.
        side: &'static str,
        /// Number of labels given.
        labels: usize,
        /// Number of rows or columns in the matrix.
        expected: usize,
    },
    /// A network with no rows, no columns or no interaction.
    #[error("the network is empty: {0}")]
    EmptyNetwork(&'static str),
    /// An index that is undefined for this network (for example NODF of a 1 x 1 matrix).
    #[error("{index} is undefined here: {reason}")]
    Undefined {
        /// The index.
        index: &'static str,
        /// Why.
        reason: String,
    },
    /// A computation would need more memory than is sensible.
    #[error("{what} would need a dense {rows} x {cols} table ({bytes} bytes); this network is too large for it")]
    TooLarge {
        /// What was asked for.
        what: &'static str,
        /// Rows.
        rows: usize,
        /// Columns.
        cols: usize,
        /// Bytes the table would take.
        bytes: u128,
    },
    /// An iterative method did not reach its tolerance.
    #[error("{what} did not converge within {iterations} iterations (relative change {change:e})")]
    NoConvergence {
        /// The method.
        what: &'static str,
        /// Iterations run.
        iterations: usize,
        /// Last relative change.
        change: f64,
    },
    /// Output could not be written to a writer the caller gave (a file's
    /// name is not known here: the caller adds it).
    #[error("cannot write the output: {source}")]
    Output {
        /// What the writer reported.
        source: std::io::Error,
    },
    /// A name that is none of the choices (index, family, null model).
    #[error("unknown {what} '{name}': expected one of {}", expected.join(", "))]
    UnknownName {
        /// What was being named.
        what: &'static str,
        /// The name given.
        name: String,
        /// Every valid name.
        expected: Vec<&'static str>,
    },
    /// An index that reads weights, tested under a model that draws binary
    /// matrices.
    #[error("{index} reads weights but {model} draws binary matrices; test it against shuffle-cells, shuffle-weights or fixed-totals")]
    WeightsUnderBinaryModel {
        /// The index.
        index: &'static str,
        /// The null model.
        model: &'static str,
    },
    /// Summaries asked of part of a null run (a shard, or missing draws).
    #[error("these are {held} of the {draws} draws (shard {}); merge every shard before summarising", shard.map_or("-".to_string(), |(i, k)| format!("{i}/{k}")))]
    IncompleteRun {
        /// Draws held.
        held: usize,
        /// Draws requested.
        draws: usize,
        /// The shard `(I, K)` the draws belong to, if split.
        shard: Option<(usize, usize)>,
    },
    /// A bad option value or combination.
    #[error("{0}")]
    InvalidArgument(String),
}

/// The member of `all` whose `name` is `s`, or an error listing every name:
/// the one parser behind each named choice (orders aside) of the crate.
pub(crate) fn find_by_name<T: Copy>(
    s: &str,
    all: &[T],
    name: impl Fn(T) -> &'static str,
    what: &'static str,
) -> Result<T> {
    all.iter()
        .copied()
        .find(|&x| name(x) == s)
        .ok_or_else(|| Error::UnknownName {
            what,
            name: s.to_string(),
            expected: all.iter().map(|&x| name(x)).collect(),
        })
}
