//! Statistics: the [`Statistic`] trait that the null runner and the
//! analyses evaluate, and the one table of built-in scalar indices
//! ([`BUILTINS`]) that `measure`, `null`, the command line's help and the
//! README read.
//!
//! Adding an index: its file in `src/metrics/` (the public function and a
//! `fn(&dyn NetView, &IndexOptions) -> Result<f64>` evaluator beside it) and
//! one line in [`BUILTINS`]. Nothing else lists the indices.

use crate::error::{Error, Result};
use crate::metrics::{discrepancy, nodf, spectral, temperature, wnodf};
use crate::metrics::{Order, TemperatureOptions};
use crate::storage::NetView;

/// Which direction of a statistic means "more nested".
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[cfg_attr(feature = "serde", serde(rename_all = "lowercase"))]
pub enum Direction {
    /// Larger values are more nested (NODF, WNODF, spectral radius).
    Greater,
    /// Smaller values are more nested (temperature, discrepancy).
    Less,
}

/// A scalar computed from a network view, testable against null models.
///
/// Every built-in index implements it (through [`BuiltinStatistic`]); so can
/// any user type. [`crate::null::run_test`] evaluates any set of
/// `&dyn Statistic` on the observed view and on every draw.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{Direction, NetView, Result, Statistic};
/// /// Links in the upper-left quarter of the table.
/// struct Corner;
/// impl Statistic for Corner {
///     fn name(&self) -> &str { "corner" }
///     fn more_nested(&self) -> Direction { Direction::Greater }
///     fn evaluate(&self, view: &dyn NetView) -> Result<f64> {
///         let (m, n) = (view.nrows() / 2, view.ncols() / 2);
///         let rows = view.compressed_rows()?;
///         Ok((0..m).map(|i| rows.row(i).0.iter().filter(|&&j| (j as usize) < n).count())
///             .sum::<usize>() as f64)
///     }
/// }
/// let w = array![[1, 1, 0, 0], [1, 1, 0, 0], [0, 0, 1, 0], [0, 0, 0, 1]];
/// assert_eq!(Corner.evaluate(&w.view()).unwrap(), 4.0);
/// ```
pub trait Statistic: Send + Sync {
    /// The name in output.
    fn name(&self) -> &str;
    /// The direction in which the statistic grows with nestedness.
    fn more_nested(&self) -> Direction;
    /// True when the statistic reads weights (a binary draw says nothing
    /// about it); false by default.
    fn reads_weights(&self) -> bool {
        false
    }
    /// The value on one network view.
    fn evaluate(&self, view: &dyn NetView) -> Result<f64>;
}

/// Settings that built-in indices read.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct IndexOptions {
    /// Row and column order for NODF and WNODF.
    pub order: Order,
    /// Packing search for `temperature` (its `pack` flag is set by the
    /// index: `temperature` packs, `temperature-sorted` does not).
    pub temperature: TemperatureOptions,
}

impl IndexOptions {
    /// Options with the given NODF/WNODF order and the default packing.
    pub fn with_order(order: Order) -> Self {
        IndexOptions {
            order,
            ..IndexOptions::default()
        }
    }
}

/// A built-in scalar index: one line of [`BUILTINS`].
#[derive(Debug)]
#[non_exhaustive]
pub struct Builtin {
    /// Name on the command line and in output.
    pub name: &'static str,
    /// The `measure` family it belongs to (`nodf`, `wnodf`, `temperature`,
    /// `spectral`, `discrepancy`).
    pub family: &'static str,
    /// One line for help texts.
    pub about: &'static str,
    /// Direction of "more nested".
    pub more_nested: Direction,
    /// True when it reads weights.
    pub reads_weights: bool,
    /// Computes it.
    pub evaluate: fn(&dyn NetView, &IndexOptions) -> Result<f64>,
}

impl Builtin {
    /// The index with its settings, as a [`Statistic`].
    pub fn with(&'static self, options: IndexOptions) -> BuiltinStatistic {
        BuiltinStatistic {
            entry: self,
            options,
        }
    }
}

/// Every built-in scalar index, in listing order: the one table (one line
/// per index: name, `measure` family, help, direction, reads weights,
/// evaluator).
#[rustfmt::skip]
pub static BUILTINS: &[Builtin] = &[
    b("nodf", "nodf", "NODF, both sides", G, false, nodf::total),
    b("nodf-rows", "nodf", "NODF, pairs of rows only", G, false, nodf::rows),
    b("nodf-cols", "nodf", "NODF, pairs of columns only", G, false, nodf::cols),
    b("wnodf", "wnodf", "weighted NODF", G, true, wnodf::total),
    b("temperature", "temperature", "temperature, packed order", L, false, temperature::packed),
    b("temperature-sorted", "temperature", "temperature, degree-sorted order", L, false, temperature::sorted),
    b("spectral", "spectral", "spectral radius of the binary view", G, false, spectral::binary),
    b("spectral-weighted", "spectral", "spectral radius of the weights", G, true, spectral::weighted),
    b("discrepancy", "discrepancy", "discrepancy, ones moved within rows, ties in input order", L, false, discrepancy::rows_stable),
    b("discrepancy-rows-minimum", "discrepancy", "discrepancy, ones moved within rows, tie-minimised", L, false, discrepancy::rows_minimum),
    b("discrepancy-cols-stable", "discrepancy", "discrepancy, ones moved within columns, ties in input order", L, false, discrepancy::cols_stable),
    b("discrepancy-cols-minimum", "discrepancy", "discrepancy, ones moved within columns, tie-minimised", L, false, discrepancy::cols_minimum),
];

const G: Direction = Direction::Greater;
const L: Direction = Direction::Less;

const fn b(
    name: &'static str,
    family: &'static str,
    about: &'static str,
    more_nested: Direction,
    reads_weights: bool,
    evaluate: fn(&dyn NetView, &IndexOptions) -> Result<f64>,
) -> Builtin {
    Builtin {
        name,
        family,
        about,
        more_nested,
        reads_weights,
        evaluate,
    }
}

/// Other names accepted for a built-in index: `(alias, name)`.
pub static ALIASES: &[(&str, &str)] = &[("discrepancy-rows-stable", "discrepancy")];

/// The built-in index called `name` (or one of its [`ALIASES`]); the error
/// lists every name.
///
/// # Example
/// ```
/// use nidus::{metrics::registry::{lookup, IndexOptions}, Direction, Statistic};
/// let t = lookup("temperature-sorted").unwrap();
/// assert_eq!(t.more_nested, Direction::Less);
/// let stat = t.with(IndexOptions::default());
/// assert_eq!(stat.name(), "temperature-sorted");
/// assert!(lookup("nope").is_err());
/// ```
pub fn lookup(name: &str) -> Result<&'static Builtin> {
    let name = ALIASES.iter().find(|a| a.0 == name).map_or(name, |a| a.1);
    BUILTINS.iter().find(|e| e.name == name).ok_or_else(|| {
        Error::InvalidArgument(format!(
            "unknown index '{name}': expected one of {}",
            names().collect::<Vec<_>>().join(", ")
        ))
    })
}

/// The names of the built-in indices, in listing order.
pub fn names() -> impl Iterator<Item = &'static str> {
    BUILTINS.iter().map(|e| e.name)
}

/// The names for a help text: `nodf, ..., discrepancy (= discrepancy-rows-stable), ...`.
pub fn help_list() -> String {
    BUILTINS
        .iter()
        .map(|e| match ALIASES.iter().find(|a| a.1 == e.name) {
            Some(a) => format!("{} (= {})", e.name, a.0),
            None => e.name.to_string(),
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// The `measure` families, in listing order, each once.
pub fn families() -> Vec<&'static str> {
    let mut out: Vec<&'static str> = Vec::new();
    for e in BUILTINS {
        if !out.contains(&e.family) {
            out.push(e.family);
        }
    }
    out
}

/// A built-in index with its settings: the [`Statistic`] of a
/// [`BUILTINS`] line.
#[derive(Clone, Copy, Debug)]
pub struct BuiltinStatistic {
    entry: &'static Builtin,
    options: IndexOptions,
}

impl BuiltinStatistic {
    /// The registry line.
    pub fn entry(&self) -> &'static Builtin {
        self.entry
    }
}

impl Statistic for BuiltinStatistic {
    fn name(&self) -> &str {
        self.entry.name
    }
    fn more_nested(&self) -> Direction {
        self.entry.more_nested
    }
    fn reads_weights(&self) -> bool {
        self.entry.reads_weights
    }
    fn evaluate(&self, view: &dyn NetView) -> Result<f64> {
        (self.entry.evaluate)(view, &self.options)
    }
}

/// The part of NODF or WNODF an index reports; an error when that side
/// has fewer than two members.
pub(crate) fn part_of(index: &'static str, name: &str, part: Option<f64>) -> Result<f64> {
    part.ok_or_else(|| Error::Undefined {
        index,
        reason: format!("{name} needs at least two members on that side"),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Names are unique, every family of `measure` has its indices here,
    /// and each line evaluates through the trait as through its function.
    #[test]
    fn one_table() {
        let mut seen = std::collections::HashSet::new();
        for e in BUILTINS {
            assert!(seen.insert(e.name), "{} twice", e.name);
        }
        for f in crate::measure::Family::ALL {
            assert!(families().contains(&f.name()), "{f}");
        }
        // A staircase (perfectly nested, METHODS.md §1): NODF 100, sorted
        // temperature 0, discrepancy 0.
        let w = ndarray::array![[1, 1, 1], [1, 1, 0], [1, 0, 0]];
        let o = IndexOptions::default();
        let value = |name: &str| lookup(name).unwrap().with(o).evaluate(&w.view()).unwrap();
        assert_eq!(value("nodf"), 100.0);
        assert_eq!(value("temperature-sorted"), 0.0);
        assert_eq!(value("discrepancy"), 0.0);
    }

    /// The README's `--index` row lists every index of the table, so the
    /// table cannot grow without the README.
    #[test]
    fn readme_lists_every_index() {
        let readme = include_str!("../../README.md");
        let row = readme
            .lines()
            .find(|l| l.starts_with("| `--index"))
            .expect("the README's --index row");
        for name in names() {
            assert!(row.contains(&format!("`{name}`")), "README lacks {name}");
        }
    }
}
