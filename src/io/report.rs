//! What the reader decided for a file: [`ReadReport`] and its notes.

use std::fmt;

use super::*;

/// A choice the reader made for a file, or a fact about it that changes what
/// was read. The library never prints: [`ReadReport`] hands these to the
/// caller. `Display` gives one sentence without the file name.
#[derive(Clone, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum ReadNote {
    /// The first line of an edge list was read as a header
    /// ([`EdgeHeader::Auto`]).
    EdgeHeader {
        /// Its physical line (1-based).
        line: usize,
        /// Its fields.
        words: Vec<String>,
        /// Which rule decided it.
        rule: HeaderRule,
    },
    /// A matrix-layout file without labels was read as an unlabelled table
    /// ([`Labels::Auto`]).
    Unlabelled {
        /// Rows of the table in the file.
        rows: usize,
        /// Columns of the table in the file.
        cols: usize,
    },
    /// Lines end with a carriage return alone (the old Mac convention);
    /// each was read as a line break.
    CarriageReturns,
    /// Species without any link were dropped ([`ReadOptions::keep_empty`]
    /// is `false`).
    Dropped {
        /// `row` or `column` (sides of the network as returned, after any
        /// transposition).
        side: &'static str,
        /// How many were dropped.
        count: usize,
        /// The labels of the first few, in file order (at most
        /// [`ReadNote::LISTED`]).
        first: Vec<String>,
    },
}

/// Why [`EdgeHeader::Auto`] took the first line of an edge list for a
/// header.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum HeaderRule {
    /// The line has three fields and the third (the weight) is not a number.
    WeightNotNumber,
    /// The line has two fields, neither label appears on any other line
    /// (in its column), every other line shares a label with some other
    /// line, and there are at least [`HEADER_MIN_LINES`] lines below it.
    LabelsAppearOnce,
}

/// Lines an edge list must have below a two-field first line before
/// [`EdgeHeader::Auto`] judges whether it is a header (see
/// [`HeaderRule::LabelsAppearOnce`]); with fewer the file is ambiguous and
/// reading it is an error asking for [`EdgeHeader::Present`] or
/// [`EdgeHeader::Absent`].
pub const HEADER_MIN_LINES: usize = 4;

impl ReadNote {
    /// How many labels [`ReadNote::Dropped`] lists.
    pub const LISTED: usize = 5;
}

impl fmt::Display for ReadNote {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ReadNote::EdgeHeader { line, words, rule } => {
                let why = match rule {
                    HeaderRule::WeightNotNumber => "its weight field is not a number",
                    HeaderRule::LabelsAppearOnce => {
                        "its labels appear on no other line, while every other line shares a label"
                    }
                };
                write!(
                    f,
                    "line {line} read as a header ({}): {why}",
                    words.join(", ")
                )
            }
            ReadNote::Unlabelled { rows, cols } => write!(
                f,
                "no labels found (the first line and the first column are all numbers): \
                 read as an unlabelled {rows} x {cols} table, rows named r1..r{rows}, columns c1..c{cols}"
            ),
            ReadNote::CarriageReturns => f.write_str(
                "lines end with a carriage return alone (old Mac line ends): read as line breaks",
            ),
            ReadNote::Dropped { side, count, first } => {
                write!(
                    f,
                    "dropped {count} {side} species with no link: {}",
                    first.join(", ")
                )?;
                if *count > first.len() {
                    write!(f, " and {} more", count - first.len())?;
                }
                Ok(())
            }
        }
    }
}

/// What the reader decided for one file: the notes in the order they were
/// made.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct ReadReport {
    /// The notes; empty when the file was read exactly as written.
    pub notes: Vec<ReadNote>,
}

impl ReadReport {
    /// Species dropped for having no link: `(rows, columns)`.
    pub fn dropped(&self) -> (usize, usize) {
        let mut d = (0, 0);
        for n in &self.notes {
            if let ReadNote::Dropped { side, count, .. } = n {
                if *side == "row" {
                    d.0 += count;
                } else {
                    d.1 += count;
                }
            }
        }
        d
    }
}

/// A network read from a file with the report of what the reader decided.
#[derive(Clone, Debug)]
pub struct ReadOutcome {
    /// The network.
    pub network: Network<f64>,
    /// The reader's decisions.
    pub report: ReadReport,
}
