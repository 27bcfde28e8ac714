//! The saved-draws file: the draws of one or more runs (or shards of runs),
//! written so that parts computed on different machines can be checked and
//! merged into exactly the result of the unsplit run.
//!
//! # Format (version 2)
//! Plain UTF-8 text, tab-separated. A file holds one or more *sections*, one
//! per (network file, model) run, in the order the run made them. Each
//! section is a header of `#` lines, a column line, then one line per draw
//! (fields are separated by one tab, shown here as two spaces):
//!
//! ```text
//! # nidus null draws  2
//! # file  plants.csv
//! # model  fixed-both
//! # seed  42
//! # draws  999
//! # shard  2/4
//! # stop_after  none
//! # burn_in  1000
//! # order  sorted
//! # restarts  none
//! # shape  200  200  4000
//! # network  5d1c0a8f3b2e4c71
//! # indices  nodf  nodf-rows
//! # observed  23.408163265306122  21.5
//! draw  nodf  nodf-rows
//! 1  18.27  17.9
//! 5  18.51  18.02
//! # end  2  9c1e0e4d2a7b3f10
//! ```
//!
//! `draws` is the number requested for the whole run; `shard` is `I/K` or
//! `none`; `restarts` is the number of random starts of the packing search
//! of `temperature`, or `none` when that index is not tested (files written
//! before this line existed lack it: a missing line reads as the default of
//! those versions, 4 restarts when `temperature` is tested); `shape` is rows, columns and links of the observed network;
//! `network` its content fingerprint ([`fingerprint`]), by which `merge`
//! matches the parts of one run (not by the file's name as spelled).
//! Numbers are written in Rust's shortest round-trip form, so reading gives
//! back the same `f64` bits and a merge prints the same bytes as the
//! unsplit run.
//!
//! Every section ends with a trailer `# end  D  C`: `D` is the number of
//! draw lines and `C` the 64-bit FNV-1a checksum (Fowler, Noll & Vo; the
//! parameters of IETF draft-eastlake-fnv) of every byte of the section from
//! its first `#` line through the newline of its last draw line, in 16 hex
//! digits. A reader refuses a section whose trailer is missing (a part cut
//! short, even inside its last number), whose count or checksum differs, or
//! whose values no index can take (non-finite, negative, or above 100 for
//! NODF, WNODF and temperature). Version 1 files (no trailer) are refused.
//! The number of draws and of shards is bounded by [`MAX_DRAWS`].

use std::collections::HashMap;
use std::io::Write;
use std::path::Path;

use crate::error::{Error, Result};
use crate::index::IndexKind;
use crate::metrics::Order;
use crate::null::run::{packs_temperature, NullRun, Shard};
use crate::null::NullModel;

const MAGIC: &str = "# nidus null draws";
const VERSION: &str = "2";

/// The largest number of draws a run (and so the largest number of shards
/// a run is split into) that nidus accepts, on the command line and in a
/// saved-draws file: 10^9.
pub const MAX_DRAWS: usize = 1_000_000_000;

/// The most random starts of the temperature packing search that nidus
/// accepts, on the command line and in a saved-draws file: 10,000.
pub const MAX_RESTARTS: usize = 10_000;

/// The restarts of a section that has no `# restarts` line (written before
/// the line existed, when every run used the default).
const OLD_DEFAULT_RESTARTS: usize = 4;

/// 64-bit FNV-1a (Fowler, Noll & Vo; offset basis 0xcbf29ce484222325,
/// prime 0x100000001b3 as in IETF draft-eastlake-fnv), fed in pieces.
#[derive(Clone, Copy, Debug)]
pub struct Fnv1a(u64);

impl Default for Fnv1a {
    fn default() -> Self {
        Fnv1a(0xcbf2_9ce4_8422_2325)
    }
}

impl Fnv1a {
    /// Adds `bytes` to the checksum. Cost: one multiply per byte.
    ///
    /// # Example
    /// ```
    /// use nidus::null::Fnv1a;
    /// // Test vectors of draft-eastlake-fnv: "" and "a".
    /// assert_eq!(Fnv1a::default().finish(), 0xcbf29ce484222325);
    /// let mut h = Fnv1a::default();
    /// h.write(b"a");
    /// assert_eq!(h.finish(), 0xaf63dc4c8601ec8c);
    /// ```
    pub fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 ^= u64::from(b);
            self.0 = self.0.wrapping_mul(0x0000_0100_0000_01b3);
        }
    }
    /// The checksum so far.
    pub fn finish(self) -> u64 {
        self.0
    }
}

/// The content fingerprint of a network: 64-bit FNV-1a over its
/// dimensions, its row and column labels and its links (row, column and the
/// weight's bits), in storage order. Two files with the same table give the
/// same fingerprint however their paths are spelled.
///
/// Cost: `O(m + n + links)`.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{null::draws_file::fingerprint, Network};
/// let a = Network::from_array(array![[1, 0], [1, 1]]).unwrap();
/// let b = Network::from_array(array![[1, 0], [1, 2]]).unwrap();
/// assert_eq!(fingerprint(&a), fingerprint(&a.clone()));
/// assert_ne!(fingerprint(&a), fingerprint(&b));
/// ```
pub fn fingerprint<T: crate::storage::Weight>(net: &crate::storage::Network<T>) -> u64 {
    let mut h = Fnv1a::default();
    h.write(&(net.nrows() as u64).to_le_bytes());
    h.write(&(net.ncols() as u64).to_le_bytes());
    for l in net.row_labels().iter().chain(net.col_labels()) {
        h.write(&(l.len() as u64).to_le_bytes());
        h.write(l.as_bytes());
    }
    let csr = net.csr();
    for i in 0..net.nrows() {
        let (cols, vals) = csr.row(i);
        for (&j, w) in cols.iter().zip(vals) {
            h.write(&(i as u64).to_le_bytes());
            h.write(&j.to_le_bytes());
            h.write(&w.as_f64().to_bits().to_le_bytes());
        }
    }
    h.finish()
}

/// Whether `v` is a value index `kind` can take: finite, not negative, and
/// at most 100 for the percentages (NODF family, WNODF, temperature).
fn possible(kind: IndexKind, v: f64) -> bool {
    let name = kind.name();
    let percent =
        name.starts_with("nodf") || name.starts_with("wnodf") || name.starts_with("temperature");
    v.is_finite() && v >= 0.0 && (!percent || v <= 100.0)
}

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
        let mut write = || -> std::io::Result<()> {
            let mut w = SectionWriter::begin(self, file, out)?;
            for (k, vals) in self.draw_ids.iter().zip(&self.values) {
                w.draw(*k, vals)?;
            }
            w.end()
        };
        write().map_err(|source| Error::Output { source })
    }
}

/// One section of a saved-draws file written draw by draw: the header at
/// [`SectionWriter::begin`], a line per [`SectionWriter::draw`], the
/// trailer (count and checksum) at [`SectionWriter::end`]. A section
/// without its trailer is refused by the reader, so a writer that never
/// ends leaves a part `merge` will not take.
pub struct SectionWriter<'w, W: Write> {
    out: &'w mut W,
    sum: Fnv1a,
    count: usize,
    line: String,
}

impl<'w, W: Write> SectionWriter<'w, W> {
    /// Writes the header of `run`'s section (its draws are not written).
    pub fn begin(run: &NullRun, file: &str, out: &'w mut W) -> std::io::Result<Self> {
        if file.contains(['\t', '\n', '\r']) {
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidInput,
                format!("the file name {file:?} holds a tab or line break; it cannot be saved"),
            ));
        }
        let names: Vec<&str> = run.indices.iter().map(|k| k.name()).collect();
        let mut s = String::new();
        s.push_str(&format!("{MAGIC}\t{VERSION}\n"));
        s.push_str(&format!("# file\t{file}\n"));
        s.push_str(&format!("# model\t{}\n", run.model));
        s.push_str(&format!("# seed\t{}\n", run.seed));
        s.push_str(&format!("# draws\t{}\n", run.draws));
        s.push_str(&format!("# shard\t{}\n", opt(run.shard)));
        s.push_str(&format!("# stop_after\t{}\n", opt(run.stop_after)));
        s.push_str(&format!("# burn_in\t{}\n", opt(run.burn_in)));
        s.push_str(&format!("# order\t{}\n", run.order));
        s.push_str(&format!("# restarts\t{}\n", opt(run.restarts)));
        let (m, n, l) = run.shape;
        s.push_str(&format!("# shape\t{m}\t{n}\t{l}\n"));
        s.push_str(&format!("# network\t{:016x}\n", run.network));
        s.push_str(&format!("# indices\t{}\n", names.join("\t")));
        let obs: Vec<String> = run.observed.iter().map(|v| format!("{v:?}")).collect();
        s.push_str(&format!("# observed\t{}\n", obs.join("\t")));
        s.push_str(&format!("draw\t{}\n", names.join("\t")));
        let mut sum = Fnv1a::default();
        sum.write(s.as_bytes());
        out.write_all(s.as_bytes())?;
        Ok(SectionWriter {
            out,
            sum,
            count: 0,
            line: String::new(),
        })
    }

    /// Writes draw `k`'s values.
    pub fn draw(&mut self, k: u64, values: &[f64]) -> std::io::Result<()> {
        use std::fmt::Write as _;
        let s = &mut self.line;
        s.clear();
        let _ = write!(s, "{k}");
        for v in values {
            let _ = write!(s, "\t{v:?}");
        }
        s.push('\n');
        self.sum.write(s.as_bytes());
        self.count += 1;
        self.out.write_all(s.as_bytes())
    }

    /// Draws written so far.
    pub fn count(&self) -> usize {
        self.count
    }

    /// Writes the trailer.
    pub fn end(self) -> std::io::Result<()> {
        writeln!(
            self.out,
            "# end\t{}\t{:016x}",
            self.count,
            self.sum.finish()
        )
    }
}

/// The longest line a saved-draws file may hold: 1 MiB (a draw line of
/// every built-in index is under 1 KiB). A longer line is refused before
/// it is held in memory.
pub const MAX_LINE: usize = 1 << 20;

/// Reads every section of a saved-draws file, with all its draws (memory
/// `O(draws)`; [`crate::null::merge_stream`] reads parts in bounded
/// memory).
pub fn read_draws(path: &Path) -> Result<Vec<SavedRun>> {
    let file = std::fs::File::open(path).map_err(|source| Error::Io {
        path: path.into(),
        source,
    })?;
    read_all(LineReader::new(
        path,
        std::io::BufReader::with_capacity(1 << 16, file),
    ))
}

/// The lines of a saved-draws file read one at a time from any reader:
/// each at most [`MAX_LINE`] bytes and UTF-8, refused otherwise naming the
/// line (and, for bytes that are not UTF-8, the column). Keeps the line
/// number, the byte offset of the next line and the running checksum of
/// the current section.
pub(crate) struct LineReader<R> {
    path: std::path::PathBuf,
    r: R,
    buf: Vec<u8>,
    /// Length of the current line without its line break.
    len: usize,
    /// Number of the current line (1-based; 0 before any).
    pub(crate) no: usize,
    /// Byte offset of the start of the next line.
    pub(crate) pos: u64,
    /// Checksum of the current section's lines so far.
    pub(crate) sum: Fnv1a,
}

impl<R: std::io::BufRead> LineReader<R> {
    /// A reader at the start of `r`.
    pub(crate) fn new(path: &Path, r: R) -> Self {
        Self::at(path, r, 0, 0, Fnv1a::default())
    }

    /// A reader of `r` positioned after line `no`, at byte `pos`, with the
    /// section's checksum so far.
    pub(crate) fn at(path: &Path, r: R, no: usize, pos: u64, sum: Fnv1a) -> Self {
        LineReader {
            path: path.into(),
            r,
            buf: Vec::new(),
            len: 0,
            no,
            pos,
            sum,
        }
    }

    /// Reads the next line and adds it to the checksum; false at the end.
    pub(crate) fn advance(&mut self) -> Result<bool> {
        use std::io::{BufRead, Read};
        self.buf.clear();
        let n = (&mut self.r)
            .take(MAX_LINE as u64 + 1)
            .read_until(b'\n', &mut self.buf)
            .map_err(|source| Error::Io {
                path: self.path.clone(),
                source,
            })?;
        if n == 0 {
            return Ok(false);
        }
        self.no += 1;
        self.pos += n as u64;
        let mut len = n;
        if self.buf[n - 1] == b'\n' {
            len -= 1;
            if len > 0 && self.buf[len - 1] == b'\r' {
                len -= 1;
            }
        } else if n > MAX_LINE {
            return Err(self.err(
                None,
                format!(
                    "the line is longer than {} MiB: not a line nidus writes (a damaged or \
                     wrong file?)",
                    MAX_LINE >> 20
                ),
            ));
        }
        if let Err(e) = std::str::from_utf8(&self.buf[..len]) {
            let at = e.valid_up_to();
            let valid = std::str::from_utf8(&self.buf[..at]).unwrap_or("");
            return Err(self.err(
                None,
                format!(
                    "column {} (byte {}) holds 0x{:02x}, which is not UTF-8 text: \
                     a damaged or wrong file",
                    valid.chars().count() + 1,
                    at + 1,
                    self.buf[at]
                ),
            ));
        }
        self.len = len;
        self.sum.write(&self.buf[..len]);
        self.sum.write(b"\n");
        Ok(true)
    }

    /// The current line, without its line break.
    pub(crate) fn line(&self) -> &str {
        // Checked by `advance`.
        std::str::from_utf8(&self.buf[..self.len]).unwrap_or("")
    }

    pub(crate) fn err(&self, column: Option<usize>, message: impl Into<String>) -> Error {
        self.err_at(self.no, column, message)
    }

    fn err_at(&self, line: usize, column: Option<usize>, message: impl Into<String>) -> Error {
        Error::Parse {
            path: self.path.clone(),
            line,
            column,
            message: message.into(),
        }
    }

    /// The next header line `# key<TAB>fields...`, checked against `key`:
    /// its fields.
    fn header(&mut self, key: &str) -> Result<Vec<String>> {
        if !self.advance()? {
            return Err(self.err_at(0, None, format!("the file ends before the '# {key}' line")));
        }
        self.fields_here(key)
    }

    /// The line already read, checked to be the header line `# key`: its
    /// fields.
    fn fields_here(&self, key: &str) -> Result<Vec<String>> {
        let line = self.line();
        let mut fields = line.split('\t');
        let head = fields.next().unwrap_or("");
        if head != format!("# {key}") {
            return Err(self.err(
                Some(1),
                format!("expected the header line '# {key}', found '{head}'"),
            ));
        }
        Ok(fields.map(str::to_string).collect())
    }

    fn one(&mut self, key: &str) -> Result<String> {
        let mut f = self.header(key)?;
        if f.len() != 1 {
            return Err(self.err(None, format!("'# {key}' needs exactly one value")));
        }
        Ok(f.remove(0))
    }

    fn num<T: std::str::FromStr>(&self, col: usize, s: &str, what: &str) -> Result<T> {
        s.parse()
            .map_err(|_| self.err(Some(col), format!("'{s}' is not a valid {what}")))
    }

    fn opt<T: std::str::FromStr>(&self, s: &str, what: &str) -> Result<Option<T>> {
        if s == "none" {
            Ok(None)
        } else {
            self.num(2, s, what).map(Some)
        }
    }

    /// A value of index `kind`, refused unless the index can take it.
    fn value(&self, col: usize, s: &str, kind: IndexKind) -> Result<f64> {
        let v: f64 = self.num(col, s, "number")?;
        if !possible(kind, v) {
            return Err(self.err(
                Some(col),
                format!("{s} is not a value {} can take", kind.name()),
            ));
        }
        Ok(v)
    }

    fn named<T: std::str::FromStr<Err = Error>>(&self, col: usize, s: &str) -> Result<T> {
        s.parse()
            .map_err(|e: Error| self.err(Some(col), e.to_string()))
    }

    /// Reads a section's header through its column line: the network
    /// file's label and the run without draws. `None` at the end of the
    /// input. The checksum starts afresh with the section.
    pub(crate) fn section_head(&mut self) -> Result<Option<(String, NullRun)>> {
        self.sum = Fnv1a::default();
        if !self.advance()? {
            return Ok(None);
        }
        let magic = self.line();
        if magic == format!("{MAGIC}\t1") {
            return Err(self.err(
                None,
                "a saved-draws file of format 1 (no checksum trailer, from an older nidus): \
                 re-run that part with this version",
            ));
        }
        if magic != format!("{MAGIC}\t{VERSION}") {
            return Err(self.err(
                None,
                format!(
                    "expected '{MAGIC}<TAB>{VERSION}' (a nidus saved-draws file, format {VERSION})"
                ),
            ));
        }
        let file = self.one("file")?;
        let model = self.one("model")?;
        let model: NullModel = self.named(2, &model)?;
        let seed = self.one("seed")?;
        let seed: u64 = self.num(2, &seed, "seed")?;
        let draws = self.one("draws")?;
        let draws: usize = match draws.parse::<u128>() {
            Ok(d) if d <= MAX_DRAWS as u128 => d as usize,
            Ok(_) => {
                return Err(self.err(
                    Some(2),
                    format!("{draws} draws is more than nidus accepts ({MAX_DRAWS})"),
                ))
            }
            Err(_) => self.num(2, &draws, "number of draws")?,
        };
        let shard = self.one("shard")?;
        let shard: Option<Shard> = if shard == "none" {
            None
        } else {
            let s: Shard = self.named(2, &shard)?;
            if s.count() > draws.max(1) {
                return Err(self.err(
                    Some(2),
                    format!("shard {s} of a run of {draws} draws: more shards than draws"),
                ));
            }
            Some(s)
        };
        let stop = self.one("stop_after")?;
        let stop_after: Option<usize> = self.opt(&stop, "stop limit")?;
        let burn = self.one("burn_in")?;
        let burn_in: Option<usize> = self.opt(&burn, "burn-in")?;
        let order = self.one("order")?;
        let order: Order = self.named(2, &order)?;
        // Optional (files of earlier versions lack it): when the next line
        // is not '# restarts', it is the '# shape' line, read in place.
        if !self.advance()? {
            return Err(self.err_at(0, None, "the file ends before the '# shape' line"));
        }
        let restarts_line = if self.line().split('\t').next() == Some("# restarts") {
            let r = self.fields_here("restarts")?;
            if r.len() != 1 {
                return Err(self.err(None, "'# restarts' needs exactly one value"));
            }
            let r = &r[0];
            let parsed: Option<usize> = match r.parse::<u128>() {
                Ok(v) if v > MAX_RESTARTS as u128 => {
                    return Err(self.err(
                        Some(2),
                        format!("{r} restarts is more than nidus accepts ({MAX_RESTARTS})"),
                    ))
                }
                _ => self.opt(r, "number of restarts")?,
            };
            let no = self.no;
            if !self.advance()? {
                return Err(self.err_at(0, None, "the file ends before the '# shape' line"));
            }
            Some((no, parsed))
        } else {
            None
        };
        let shape = self.fields_here("shape")?;
        if shape.len() != 3 {
            return Err(self.err(None, "'# shape' needs rows, columns and links"));
        }
        let shape = (
            self.num(2, &shape[0], "row count")?,
            self.num(3, &shape[1], "column count")?,
            self.num(4, &shape[2], "link count")?,
        );
        let net = self.one("network")?;
        let network = match u64::from_str_radix(&net, 16) {
            Ok(v) if net.len() == 16 => v,
            _ => return Err(self.err(Some(2), "'# network' needs a 16-digit hex fingerprint")),
        };
        let names = self.header("indices")?;
        let indices: Vec<IndexKind> = names
            .iter()
            .enumerate()
            .map(|(c, s)| self.named(c + 2, s))
            .collect::<Result<_>>()?;
        if indices.is_empty() {
            return Err(self.err(None, "no index named"));
        }
        let restarts = match (packs_temperature(&indices), restarts_line) {
            (false, _) => None,
            (true, None) => Some(OLD_DEFAULT_RESTARTS),
            (true, Some((_, Some(r)))) => Some(r),
            (true, Some((no, None))) => {
                return Err(self.err_at(
                    no,
                    Some(2),
                    "temperature is tested: '# restarts' needs the number of random starts",
                ))
            }
        };
        let obs = self.header("observed")?;
        if obs.len() != indices.len() {
            return Err(self.err(
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
            .map(|(c, s)| self.value(c + 2, s, indices[c]))
            .collect::<Result<_>>()?;
        if !self.advance()? {
            return Err(self.err_at(0, None, "the file ends before the column line"));
        }
        if self.line().split('\t').next() != Some("draw") {
            return Err(self.err(None, "expected the column line 'draw<TAB>...'"));
        }
        Ok(Some((
            file,
            NullRun {
                model,
                indices,
                observed,
                seed,
                draws,
                shard,
                stop_after,
                burn_in,
                order,
                restarts,
                shape,
                network,
                draw_ids: Vec::new(),
                values: Vec::new(),
            },
        )))
    }

    /// Reads the next draw line of the section of `head` (label `file`)
    /// into `values`, checking that it is draw `body.next`: draws follow
    /// each other in the run's (or shard's) order without a gap. Returns
    /// its number, or `None` after reading and checking the trailer (its
    /// count and checksum).
    pub(crate) fn next_draw(
        &mut self,
        file: &str,
        head: &NullRun,
        body: &mut Body,
        values: &mut Vec<f64>,
    ) -> Result<Option<u64>> {
        let model = head.model;
        let before = self.sum;
        if !self.advance()? {
            return Err(self.err_at(
                self.no,
                None,
                format!(
                    "the section of {file} ({model}) ends without its '# end' trailer: \
                     the part was cut short (an interrupted copy or a full disk?)"
                ),
            ));
        }
        let line = self.line();
        if line.starts_with('#') {
            let mut f = line.split('\t');
            if f.next() != Some("# end") {
                return Err(self.err(
                    None,
                    format!(
                        "expected a draw or the '# end' trailer of the section of {file} \
                         ({model}): the part was cut short"
                    ),
                ));
            }
            let (Some(count), Some(sum), None) = (f.next(), f.next(), f.next()) else {
                return Err(self.err(None, "'# end' needs a draw count and a checksum"));
            };
            if count.parse::<usize>().ok() != Some(body.count) {
                return Err(self.err(
                    Some(2),
                    format!(
                        "the trailer counts {count} draws but the section holds {}: \
                         the part is damaged",
                        body.count
                    ),
                ));
            }
            if u64::from_str_radix(sum, 16).ok() != Some(before.finish()) || sum.len() != 16 {
                return Err(self.err(
                    Some(3),
                    format!(
                        "checksum {sum} does not match the section's content ({:016x}): \
                         the part is damaged or was edited",
                        before.finish()
                    ),
                ));
            }
            return Ok(None);
        }
        let n = head.indices.len();
        let mut fields = line.split('\t');
        let k = fields.next().unwrap_or("");
        let k: u64 = self.num(1, k, "draw number")?;
        if k >= head.draws as u64 || head.shard.is_some_and(|s| !s.contains(k)) {
            return Err(self.err(
                Some(1),
                format!("draw {k} does not belong to this run or shard"),
            ));
        }
        if k < body.next {
            return Err(self.err(Some(1), format!("draw {k} is out of order or repeated")));
        }
        if k > body.next {
            let after = if body.count == 0 {
                format!("the section starts with draw {k}")
            } else {
                format!("draw {k} follows draw {}", body.next - body.step)
            };
            return Err(self.err(
                Some(1),
                format!(
                    "{after}: draw {} is missing (a gap in the draw numbers; the part is \
                     damaged or was edited, and a run is never resumed past a gap)",
                    body.next
                ),
            ));
        }
        values.clear();
        for (c, s) in fields.enumerate() {
            if c >= n {
                values.push(0.0);
                break;
            }
            values.push(self.value(c + 2, s, head.indices[c])?);
        }
        if values.len() != n {
            return Err(self.err(None, format!("expected a draw number and {n} values")));
        }
        body.next += body.step;
        body.count += 1;
        Ok(Some(k))
    }
}

/// Where the draws of a section being read have got to: the number the
/// next draw must have, the step between draws and the draws read.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Body {
    pub(crate) next: u64,
    pub(crate) step: u64,
    pub(crate) count: usize,
}

impl Body {
    /// The start of `head`'s draws: the shard's first draw, or draw 0.
    pub(crate) fn of(head: &NullRun) -> Body {
        match head.shard {
            Some(s) => Body {
                next: (s.index() - 1) as u64,
                step: s.count() as u64,
                count: 0,
            },
            None => Body {
                next: 0,
                step: 1,
                count: 0,
            },
        }
    }
}

/// Every section of `l` with its draws.
fn read_all<R: std::io::BufRead>(mut l: LineReader<R>) -> Result<Vec<SavedRun>> {
    let mut out = Vec::new();
    let mut v = Vec::new();
    while let Some((file, mut run)) = l.section_head()? {
        let mut body = Body::of(&run);
        while let Some(k) = l.next_draw(&file, &run, &mut body, &mut v)? {
            run.draw_ids.push(k);
            run.values.push(v.clone());
        }
        out.push(SavedRun { file, run });
    }
    Ok(out)
}

/// Parses the text of a saved-draws file; `source` names it in errors.
pub fn parse_draws(text: &str, source: &Path) -> Result<Vec<SavedRun>> {
    read_all(LineReader::new(source, text.as_bytes()))
}
/// Everything but the shard and the draws must agree between parts of one
/// run: the first setting that differs, as "name a vs b", or `None`.
pub fn differing_setting(a: &NullRun, b: &NullRun) -> Option<String> {
    fn d<T: std::fmt::Display + PartialEq>(name: &str, x: T, y: T) -> Option<String> {
        (x != y).then(|| format!("{name} {x} vs {y}"))
    }
    let names = |r: &NullRun| {
        r.indices
            .iter()
            .map(|k| k.name())
            .collect::<Vec<_>>()
            .join(",")
    };
    d("model", a.model.name(), b.model.name())
        .or_else(|| d("seed", a.seed, b.seed))
        .or_else(|| d("draws", a.draws, b.draws))
        .or_else(|| d("indices", names(a), names(b)))
        .or_else(|| {
            d(
                "shard count",
                opt(a.shard.map(|s| s.count())),
                opt(b.shard.map(|s| s.count())),
            )
        })
        .or_else(|| d("stop_after", opt(a.stop_after), opt(b.stop_after)))
        .or_else(|| d("burn_in", opt(a.burn_in), opt(b.burn_in)))
        .or_else(|| d("order", a.order.to_string(), b.order.to_string()))
        .or_else(|| {
            d(
                "restarts (temperature packing)",
                opt(a.restarts),
                opt(b.restarts),
            )
        })
        .or_else(|| {
            let shape = |r: &NullRun| format!("{} x {}, {} links", r.shape.0, r.shape.1, r.shape.2);
            d("network shape", shape(a), shape(b))
        })
        .or_else(|| {
            (a.network != b.network).then(|| {
                format!(
                    "network content {:016x} vs {:016x} (the network files differ)",
                    a.network, b.network
                )
            })
        })
        .or_else(|| {
            let bits = |r: &NullRun| r.observed.iter().map(|v| v.to_bits()).collect::<Vec<_>>();
            (bits(a) != bits(b)).then(|| {
                format!(
                    "observed values {:?} vs {:?} (the network files differ)",
                    a.observed, b.observed
                )
            })
        })
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
/// Cost: `O(D log D)` for `D` draws in all (a sort by draw number);
/// memory: every draw. [`crate::null::merge_stream::merge_files`] merges
/// saved-draws files in memory bounded by the network instead.
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
    let groups = group_parts(parts.into_iter().map(|p| (p.file, p.run, ())).collect())?;
    let mut out = Vec::with_capacity(groups.len());
    for (label, runs) in groups {
        let what = format!("{label} / {}", runs[0].0.model.name());
        let merged = if runs.len() == 1 && runs[0].0.shard.is_none() {
            runs.into_iter().next().expect("one run").0
        } else {
            let mut pairs: Vec<(u64, Vec<f64>)> = Vec::with_capacity(runs[0].0.draws);
            let mut base = runs[0].0.clone();
            for (r, ()) in runs {
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
            file: label,
            run: merged,
        });
    }
    Ok(out)
}

/// A run's label and its parts with their extras.
pub(crate) type Group<T> = (String, Vec<(NullRun, T)>);

/// The parts of one or more runs sorted into runs (see [`merge_runs`]):
/// `(label, parts)` per run, runs in the order they first appear, parts
/// in shard order `1/K..K/K` (or the one unsplit part), each with its
/// `extra`. Checks everything that the parts' headers tell: same settings,
/// each shard exactly once, one unsplit copy. Only the parts' headers are
/// read (their draws may be empty).
pub(crate) fn group_parts<T>(parts: Vec<(String, NullRun, T)>) -> Result<Vec<Group<T>>> {
    if parts.is_empty() {
        return Err(Error::InvalidArgument(
            "the parts hold no saved run: the shards that wrote them ended before saving any \
             draws (or every file of the run failed)"
                .into(),
        ));
    }
    // Parts are grouped by network content and model; the label shown is
    // the first part's.
    let mut order: Vec<(u64, NullModel)> = Vec::new();
    let mut labels: HashMap<(u64, NullModel), String> = HashMap::new();
    let mut groups: HashMap<(u64, NullModel), Vec<(NullRun, T)>> = HashMap::new();
    for (file, run, extra) in parts {
        let key = (run.network, run.model);
        if !groups.contains_key(&key) {
            order.push(key);
            labels.insert(key, file);
        }
        groups.entry(key).or_default().push((run, extra));
    }
    let mut out = Vec::with_capacity(order.len());
    for key in order {
        let mut runs = groups.remove(&key).expect("grouped");
        let label = labels[&key].clone();
        // Another group with the same name and model: a part of another network.
        let clash = labels
            .iter()
            .any(|(k, l)| *k != key && k.1 == key.1 && *l == label);
        if clash {
            return Err(Error::InvalidArgument(format!(
                "{label} / {}: the parts come from different runs: the network content differs \
                 between parts with this name (the file changed between shards?)",
                key.1.name()
            )));
        }
        let what = format!("{label} / {}", key.1.name());
        let first = &runs[0].0;
        if let Some(diff) = runs.iter().find_map(|r| differing_setting(first, &r.0)) {
            return Err(Error::InvalidArgument(format!(
                "{what}: the parts come from different runs: {diff}"
            )));
        }
        match first.shard {
            None => {
                if runs.len() > 1 {
                    return Err(Error::InvalidArgument(format!(
                        "{what}: {} unsplit copies of the same run; give each part once",
                        runs.len()
                    )));
                }
            }
            Some(s) => {
                // Shards counted from the parts given (no vector of size K).
                let k = s.count();
                runs.sort_by_key(|r| r.0.shard.expect("same shard count checked").index());
                let seen: Vec<usize> = runs
                    .iter()
                    .map(|r| r.0.shard.expect("same shard count checked").index())
                    .collect();
                if let Some(w) = seen.windows(2).find(|w| w[0] == w[1]) {
                    let times = seen.iter().filter(|&&i| i == w[0]).count();
                    return Err(Error::InvalidArgument(format!(
                        "{what}: shard {}/{k} is given {times} times",
                        w[0]
                    )));
                }
                if seen.len() < k {
                    let mut missing = Vec::new();
                    let mut next = 1usize;
                    for &i in seen.iter().chain(std::iter::once(&(k + 1))) {
                        while next < i && missing.len() < 10 {
                            missing.push(format!("{next}/{k}"));
                            next += 1;
                        }
                        next = i + 1;
                    }
                    let more = k - seen.len() - missing.len();
                    return Err(Error::InvalidArgument(format!(
                        "{what}: shard(s) {}{} missing",
                        missing.join(", "),
                        if more > 0 {
                            format!(" and {more} more")
                        } else {
                            String::new()
                        }
                    )));
                }
            }
        }
        out.push((label, runs));
    }
    Ok(out)
}
