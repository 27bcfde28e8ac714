//! The saved-draws file: the draws of one or more runs (or shards of runs),
//! written so that parts computed on different machines can be checked and
//! merged into exactly the result of the unsplit run.
//!
//! # Format (version 1)
//! Plain UTF-8 text, tab-separated. A file holds one or more *sections*, one
//! per (network file, model) run, in the order the run made them. Each
//! section is a header of `#` lines, a column line, then one line per draw
//! (fields are separated by one tab, shown here as two spaces):
//!
//! ```text
//! # nidus null draws  1
//! # file  plants.csv
//! # model  fixed-both
//! # seed  42
//! # draws  999
//! # shard  2/4
//! # stop_after  none
//! # burn_in  1000
//! # order  sorted
//! # shape  200  200  4000
//! # indices  nodf  nodf-rows
//! # observed  23.408163265306122  21.5
//! draw  nodf  nodf-rows
//! 1  18.27  17.9
//! 5  18.51  18.02
//! ```
//!
//! `draws` is the number requested for the whole run; `shard` is `I/K` or
//! `none`; `shape` is rows, columns and links of the observed network.
//! Numbers are written in Rust's shortest round-trip form, so reading gives
//! back the same `f64` bits and a merge prints the same bytes as the
//! unsplit run.

use std::collections::HashMap;
use std::io::Write;
use std::path::Path;

use crate::error::{Error, Result};
use crate::index::IndexKind;
use crate::metrics::Order;
use crate::null::run::{NullRun, Shard};
use crate::null::NullModel;

const MAGIC: &str = "# nidus null draws";
const VERSION: &str = "1";

/// A run read from a saved-draws file, with the label of its network file.
#[derive(Clone, Debug)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SavedRun {
    /// The network file the run tested, as given on the command line.
    pub file: String,
    /// The draws and their settings.
    pub run: NullRun,
}

fn opt<T: std::fmt::Display>(x: Option<T>) -> String {
    x.map_or_else(|| "none".to_string(), |v| v.to_string())
}

impl NullRun {
    /// Writes this run as one section of a saved-draws file (format in
    /// [`crate::null::draws_file`]). `file` is the network file's label; it
    /// must not contain a tab or a line break.
    ///
    /// Errors: [`Error::InvalidArgument`] for such a name, [`Error::Output`]
    /// when the writer fails.
    pub fn write_draws<W: Write>(&self, file: &str, out: &mut W) -> Result<()> {
        if file.contains(['\t', '\n', '\r']) {
            return Err(Error::InvalidArgument(format!(
                "the file name {file:?} holds a tab or line break; it cannot be saved"
            )));
        }
        self.write_sections(file, out)
            .map_err(|source| Error::Output { source })
    }

    fn write_sections<W: Write>(&self, file: &str, out: &mut W) -> std::io::Result<()> {
        let names: Vec<&str> = self.indices.iter().map(|k| k.name()).collect();
        let mut s = String::new();
        s.push_str(&format!("{MAGIC}\t{VERSION}\n"));
        s.push_str(&format!("# file\t{file}\n"));
        s.push_str(&format!("# model\t{}\n", self.model));
        s.push_str(&format!("# seed\t{}\n", self.seed));
        s.push_str(&format!("# draws\t{}\n", self.draws));
        s.push_str(&format!("# shard\t{}\n", opt(self.shard)));
        s.push_str(&format!("# stop_after\t{}\n", opt(self.stop_after)));
        s.push_str(&format!("# burn_in\t{}\n", opt(self.burn_in)));
        s.push_str(&format!("# order\t{}\n", self.order));
        let (m, n, l) = self.shape;
        s.push_str(&format!("# shape\t{m}\t{n}\t{l}\n"));
        s.push_str(&format!("# indices\t{}\n", names.join("\t")));
        let obs: Vec<String> = self.observed.iter().map(|v| format!("{v:?}")).collect();
        s.push_str(&format!("# observed\t{}\n", obs.join("\t")));
        s.push_str(&format!("draw\t{}\n", names.join("\t")));
        out.write_all(s.as_bytes())?;
        for (k, vals) in self.draw_ids.iter().zip(&self.values) {
            s.clear();
            s.push_str(&k.to_string());
            for v in vals {
                s.push('\t');
                s.push_str(&format!("{v:?}"));
            }
            s.push('\n');
            out.write_all(s.as_bytes())?;
        }
        Ok(())
    }
}

/// Reads every section of a saved-draws file.
pub fn read_draws(path: &Path) -> Result<Vec<SavedRun>> {
    let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
        path: path.into(),
        source,
    })?;
    parse_draws(&text, path)
}

struct Lines<'a> {
    path: &'a Path,
    lines: std::iter::Peekable<std::iter::Enumerate<std::str::Lines<'a>>>,
}

impl<'a> Lines<'a> {
    fn err(&self, line: usize, column: Option<usize>, message: impl Into<String>) -> Error {
        Error::Parse {
            path: self.path.into(),
            line,
            column,
            message: message.into(),
        }
    }
    /// The next header line `# key<TAB>fields...`, checked against `key`.
    fn header(&mut self, key: &str) -> Result<(usize, Vec<&'a str>)> {
        let Some((no, line)) = self.lines.next() else {
            return Err(self.err(0, None, format!("the file ends before the '# {key}' line")));
        };
        let mut fields = line.split('\t');
        let head = fields.next().unwrap_or("");
        if head != format!("# {key}") {
            return Err(self.err(
                no + 1,
                Some(1),
                format!("expected the header line '# {key}', found '{head}'"),
            ));
        }
        Ok((no + 1, fields.collect()))
    }
    fn one(&mut self, key: &str) -> Result<(usize, &'a str)> {
        let (no, f) = self.header(key)?;
        if f.len() != 1 {
            return Err(self.err(no, None, format!("'# {key}' needs exactly one value")));
        }
        Ok((no, f[0]))
    }
}

fn parse_num<T: std::str::FromStr>(
    l: &Lines<'_>,
    no: usize,
    col: usize,
    s: &str,
    what: &str,
) -> Result<T> {
    s.parse()
        .map_err(|_| l.err(no, Some(col), format!("'{s}' is not a valid {what}")))
}

fn parse_opt<T: std::str::FromStr>(
    l: &Lines<'_>,
    no: usize,
    s: &str,
    what: &str,
) -> Result<Option<T>> {
    if s == "none" {
        Ok(None)
    } else {
        parse_num(l, no, 2, s, what).map(Some)
    }
}

fn named<T: std::str::FromStr<Err = Error>>(
    l: &Lines<'_>,
    no: usize,
    col: usize,
    s: &str,
) -> Result<T> {
    s.parse()
        .map_err(|e: Error| l.err(no, Some(col), e.to_string()))
}

/// Parses the text of a saved-draws file; `source` names it in errors.
pub fn parse_draws(text: &str, source: &Path) -> Result<Vec<SavedRun>> {
    let mut l = Lines {
        path: source,
        lines: text.lines().enumerate().peekable(),
    };
    let mut out = Vec::new();
    while l.lines.peek().is_some() {
        let (no, magic) = {
            let (no, line) = l.lines.next().expect("peeked");
            (no + 1, line)
        };
        if magic != format!("{MAGIC}\t{VERSION}") {
            return Err(l.err(
                no,
                None,
                format!(
                    "expected '{MAGIC}<TAB>{VERSION}' (a nidus saved-draws file, format {VERSION})"
                ),
            ));
        }
        let (_, file) = l.one("file")?;
        let (no, model) = l.one("model")?;
        let model: NullModel = named(&l, no, 2, model)?;
        let (no, seed) = l.one("seed")?;
        let seed: u64 = parse_num(&l, no, 2, seed, "seed")?;
        let (no, draws) = l.one("draws")?;
        let draws: usize = parse_num(&l, no, 2, draws, "number of draws")?;
        let (no, shard) = l.one("shard")?;
        let shard: Option<Shard> = if shard == "none" {
            None
        } else {
            Some(named(&l, no, 2, shard)?)
        };
        let (no, stop) = l.one("stop_after")?;
        let stop_after: Option<usize> = parse_opt(&l, no, stop, "stop limit")?;
        let (no, burn) = l.one("burn_in")?;
        let burn_in: Option<usize> = parse_opt(&l, no, burn, "burn-in")?;
        let (no, order) = l.one("order")?;
        let order: Order = named(&l, no, 2, order)?;
        let (no, shape) = l.header("shape")?;
        if shape.len() != 3 {
            return Err(l.err(no, None, "'# shape' needs rows, columns and links"));
        }
        let shape = (
            parse_num(&l, no, 2, shape[0], "row count")?,
            parse_num(&l, no, 3, shape[1], "column count")?,
            parse_num(&l, no, 4, shape[2], "link count")?,
        );
        let (no, names) = l.header("indices")?;
        let indices: Vec<IndexKind> = names
            .iter()
            .enumerate()
            .map(|(c, s)| named(&l, no, c + 2, s))
            .collect::<Result<_>>()?;
        if indices.is_empty() {
            return Err(l.err(no, None, "no index named"));
        }
        let (no, obs) = l.header("observed")?;
        if obs.len() != indices.len() {
            return Err(l.err(
                no,
                None,
                format!(
                    "{} observed values for {} indices",
                    obs.len(),
                    indices.len()
                ),
            ));
        }
        let observed: Vec<f64> = obs
            .iter()
            .enumerate()
            .map(|(c, s)| parse_num(&l, no, c + 2, s, "number"))
            .collect::<Result<_>>()?;
        match l.lines.next() {
            Some((_, line)) if line.split('\t').next() == Some("draw") => {}
            Some((no, _)) => {
                return Err(l.err(no + 1, None, "expected the column line 'draw<TAB>...'"))
            }
            None => return Err(l.err(0, None, "the file ends before the column line")),
        }
        let mut draw_ids = Vec::new();
        let mut values = Vec::new();
        while let Some(&(no, line)) = l.lines.peek() {
            if line.starts_with('#') {
                break;
            }
            l.lines.next();
            let no = no + 1;
            let fields: Vec<&str> = line.split('\t').collect();
            if fields.len() != indices.len() + 1 {
                return Err(l.err(
                    no,
                    None,
                    format!("expected a draw number and {} values", indices.len()),
                ));
            }
            let k: u64 = parse_num(&l, no, 1, fields[0], "draw number")?;
            if k >= draws as u64 || shard.is_some_and(|s| !s.contains(k)) {
                return Err(l.err(
                    no,
                    Some(1),
                    format!("draw {k} does not belong to this run or shard"),
                ));
            }
            if draw_ids.last().is_some_and(|&p| p >= k) {
                return Err(l.err(no, Some(1), format!("draw {k} is out of order or repeated")));
            }
            let v: Vec<f64> = fields[1..]
                .iter()
                .enumerate()
                .map(|(c, s)| parse_num(&l, no, c + 2, s, "number"))
                .collect::<Result<_>>()?;
            draw_ids.push(k);
            values.push(v);
        }
        out.push(SavedRun {
            file: file.to_string(),
            run: NullRun {
                model,
                indices,
                observed,
                seed,
                draws,
                shard,
                stop_after,
                burn_in,
                order,
                shape,
                draw_ids,
                values,
            },
        });
    }
    Ok(out)
}

/// Everything but the shard and the draws must agree between parts.
fn same_run(a: &NullRun, b: &NullRun) -> bool {
    a.model == b.model
        && a.indices == b.indices
        && a.observed
            .iter()
            .map(|v| v.to_bits())
            .eq(b.observed.iter().map(|v| v.to_bits()))
        && a.seed == b.seed
        && a.draws == b.draws
        && a.stop_after == b.stop_after
        && a.burn_in == b.burn_in
        && a.order == b.order
        && a.shape == b.shape
        && a.shard.map(|s| s.count()) == b.shard.map(|s| s.count())
}

/// Merges the parts of one or more runs into complete runs.
///
/// Parts are grouped by network file and model, groups kept in the order
/// they first appear. Within a group every part must agree on everything
/// but its shard (seed, draws, indices, observed values, options, shape of
/// the network); the shards must be `1/K..K/K`, each exactly once, and
/// together hold each draw `0..R` exactly once. A part without a shard
/// stands alone (and must be complete). Errors name the file, the model and
/// the problem.
///
/// Cost: `O(D log D)` for `D` draws in all (a sort by draw number).
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{index::IndexKind, Network};
/// use nidus::null::{merge_runs, run_null, NullConfig, NullModel, SavedRun, Shard};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 1], [0, 1, 0]]).unwrap();
/// let mut config = NullConfig::new(NullModel::FixedRows, vec![IndexKind::named("nodf").unwrap()], 20, 5);
/// let whole = run_null(&net, &config).unwrap();
/// let mut parts = Vec::new();
/// for i in 1..=2 {
///     config.shard = Some(Shard::new(i, 2).unwrap());
///     let run = run_null(&net, &config).unwrap();
///     parts.push(SavedRun { file: "web.csv".into(), run });
/// }
/// let merged = merge_runs(parts).unwrap();
/// assert_eq!(merged[0].run.summaries().unwrap(), whole.summaries().unwrap());
/// ```
pub fn merge_runs(parts: Vec<SavedRun>) -> Result<Vec<SavedRun>> {
    let mut order: Vec<(String, NullModel)> = Vec::new();
    let mut groups: HashMap<(String, NullModel), Vec<NullRun>> = HashMap::new();
    for p in parts {
        let key = (p.file.clone(), p.run.model);
        if !groups.contains_key(&key) {
            order.push(key.clone());
        }
        groups.entry(key).or_default().push(p.run);
    }
    let mut out = Vec::with_capacity(order.len());
    for key in order {
        let runs = groups.remove(&key).expect("grouped");
        let what = format!("{} / {}", key.0, key.1.name());
        let first = &runs[0];
        if let Some(bad) = runs.iter().find(|r| !same_run(first, r)) {
            return Err(Error::InvalidArgument(format!(
                "{what}: the parts come from different runs (seed {} vs {}, {} vs {} draws, or other settings differ)",
                first.seed, bad.seed, first.draws, bad.draws
            )));
        }
        let merged = match first.shard {
            None => {
                if runs.len() > 1 {
                    return Err(Error::InvalidArgument(format!(
                        "{what}: {} unsplit copies of the same run; give each part once",
                        runs.len()
                    )));
                }
                runs.into_iter().next().expect("one run")
            }
            Some(s) => {
                let k = s.count();
                let mut seen = vec![0usize; k];
                for r in &runs {
                    seen[r.shard.expect("same_run checked").index() - 1] += 1;
                }
                if let Some(i) = seen.iter().position(|&c| c > 1) {
                    return Err(Error::InvalidArgument(format!(
                        "{what}: shard {}/{k} is given {} times",
                        i + 1,
                        seen[i]
                    )));
                }
                let missing: Vec<String> = seen
                    .iter()
                    .enumerate()
                    .filter(|(_, &c)| c == 0)
                    .map(|(i, _)| format!("{}/{k}", i + 1))
                    .collect();
                if !missing.is_empty() {
                    return Err(Error::InvalidArgument(format!(
                        "{what}: shard(s) {} missing",
                        missing.join(", ")
                    )));
                }
                let mut pairs: Vec<(u64, Vec<f64>)> = Vec::with_capacity(first.draws);
                let mut base = runs[0].clone();
                for r in runs {
                    pairs.extend(r.draw_ids.into_iter().zip(r.values));
                }
                pairs.sort_by_key(|p| p.0);
                base.shard = None;
                base.draw_ids = Vec::with_capacity(pairs.len());
                base.values = Vec::with_capacity(pairs.len());
                for (k, v) in pairs {
                    base.draw_ids.push(k);
                    base.values.push(v);
                }
                base
            }
        };
        if let Some((t, &k)) = merged
            .draw_ids
            .iter()
            .enumerate()
            .find(|&(t, &k)| k != t as u64)
        {
            return Err(Error::InvalidArgument(format!(
                "{what}: draw {t} is missing or repeated (found draw {k} in its place)"
            )));
        }
        if !merged.is_complete() {
            return Err(Error::InvalidArgument(format!(
                "{what}: {} of the {} draws are present; a part is truncated",
                merged.draw_ids.len(),
                merged.draws
            )));
        }
        out.push(SavedRun {
            file: key.0,
            run: merged,
        });
    }
    Ok(out)
}
