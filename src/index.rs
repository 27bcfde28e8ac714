//! Built-in scalar indices by name: [`IndexKind`], a handle on one line of
//! the registry ([`crate::metrics::registry::BUILTINS`]), for the command
//! line, saved draws and the null runner's convenience layer. Every
//! property (name, direction, weights, evaluation) is read from that line;
//! nothing here lists the indices.

use std::fmt;
use std::hash::{Hash, Hasher};
use std::str::FromStr;

use crate::error::{Error, Result};
use crate::metrics::registry::{self, Builtin, BuiltinStatistic};
use crate::storage::NetView;

pub use crate::metrics::registry::{Direction, IndexOptions};

/// A built-in scalar index that can be tested against a null model, by
/// name (see [`crate::metrics::registry::BUILTINS`] for the list).
///
/// # Example
/// ```
/// use nidus::{index::IndexKind, Direction};
/// let k: IndexKind = "temperature".parse().unwrap();
/// assert_eq!(k.name(), "temperature");
/// assert_eq!(k.more_nested(), Direction::Less);
/// assert!(IndexKind::all().any(|k| k.name() == "nodf"));
/// assert!("nope".parse::<IndexKind>().is_err());
/// ```
#[derive(Clone, Copy)]
pub struct IndexKind(&'static Builtin);

impl IndexKind {
    /// The built-in index called `name` (errors list every name).
    pub fn named(name: &str) -> Result<IndexKind> {
        registry::lookup(name).map(IndexKind)
    }

    /// Every built-in index, in listing order.
    pub fn all() -> impl Iterator<Item = IndexKind> {
        registry::BUILTINS.iter().map(IndexKind)
    }

    /// The name used on the command line and in output.
    pub fn name(self) -> &'static str {
        self.0.name
    }

    /// The direction in which the index grows with nestedness.
    pub fn more_nested(self) -> Direction {
        self.0.more_nested
    }

    /// True when the index reads weights, so only weighted null models make
    /// sense for it (a binary draw has WNODF 0).
    pub fn needs_weights(self) -> bool {
        self.0.reads_weights
    }

    /// The registry line.
    pub fn entry(self) -> &'static Builtin {
        self.0
    }

    /// The index with its settings, as a [`crate::Statistic`].
    pub fn statistic(self, options: IndexOptions) -> BuiltinStatistic {
        self.0.with(options)
    }
}

impl PartialEq for IndexKind {
    fn eq(&self, other: &Self) -> bool {
        self.0.name == other.0.name
    }
}

impl Eq for IndexKind {}

impl Hash for IndexKind {
    fn hash<H: Hasher>(&self, state: &mut H) {
        self.0.name.hash(state)
    }
}

impl fmt::Debug for IndexKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "IndexKind({})", self.0.name)
    }
}

impl fmt::Display for IndexKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for IndexKind {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        IndexKind::named(s)
    }
}

#[cfg(feature = "serde")]
impl serde::Serialize for IndexKind {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

/// Computes index `kind` of any view.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{index::{evaluate, IndexKind, IndexOptions}, Network};
/// let net = Network::from_array(array![[1, 1], [1, 0]]).unwrap();
/// let nodf = IndexKind::named("nodf").unwrap();
/// assert_eq!(evaluate(nodf, &net, &IndexOptions::default()).unwrap(), 100.0);
/// ```
pub fn evaluate<V: NetView>(kind: IndexKind, view: &V, opts: &IndexOptions) -> Result<f64> {
    (kind.0.evaluate)(view, opts)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip() {
        for k in IndexKind::all() {
            assert_eq!(k.name().parse::<IndexKind>().unwrap(), k);
        }
    }
}
