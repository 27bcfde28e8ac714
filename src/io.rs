//! Reading and writing network files.
//!
//! Two layouts are read (see [`Layout`]), both as delimited text whose
//! delimiter (comma, tab or semicolon) is detected from the first non-blank
//! line: the one that occurs most often outside quotes (ties go to comma,
//! then tab).
//!
//! * **matrix**: a header row of column labels (its first cell is free text,
//!   for example the name of the row guild), then one row per species: its
//!   label, then one value per column. An empty cell is 0.
//! * **edges**: one interaction per line, `row label, column label[, weight]`.
//!   A missing or empty weight is 1 and repeated pairs are summed, so a log of
//!   single field observations becomes a count matrix. Rows and columns are
//!   labelled in order of first appearance; a label may name both a row and a
//!   column (they are two guilds). The first line is a header and skipped
//!   according to [`EdgeHeader`].
//!
//! Common rules: fields are trimmed of surrounding spaces (and tabs, unless
//! tab is the delimiter); a field may be quoted with `"` (a doubled `""`
//! inside stands for one quote; delimiters and line breaks inside quotes are
//! part of the field); lines holding only whitespace are skipped anywhere;
//! the text is UTF-8, with or without a byte-order mark, with LF or CRLF line
//! ends. When the delimiter is `;` a decimal comma is accepted (`2,5` is 2.5).
//! Values must be finite and non-negative: Rust's number syntax is used, but
//! `NaN`, `inf` and `infinity` are refused.
//!
//! Every problem is reported as [`Error::Parse`] naming the file, the physical
//! 1-based line and, when one field is at fault, its 1-based field number,
//! with what was expected. A file that cannot be read is [`Error::Io`]; a
//! table whose cells are all zero is [`Error::EmptyNetwork`].
//!
//! Cost: one pass over the bytes after reading the whole file into memory;
//! no allocation per field except for labels (one copy per distinct label)
//! and quoted fields holding a doubled quote. Memory: the file's bytes plus
//! the network (for edge lists, 16 bytes per line before summing).

use std::borrow::Cow;
use std::collections::HashMap;
use std::fmt;
use std::io::Write;
use std::path::Path;
use std::str::FromStr;

use ndarray::Array2;

use crate::error::{Error, Result};
use crate::network::{Network, Weight};

/// File layout.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[cfg_attr(feature = "serde", serde(rename_all = "lowercase"))]
pub enum Layout {
    /// A header row of column labels, then one labelled row of values per
    /// row species.
    #[default]
    Matrix,
    /// One interaction per line: row label, column label, optional weight.
    Edges,
}

impl Layout {
    /// The name used on the command line and in output: `matrix` or `edges`.
    pub fn name(self) -> &'static str {
        match self {
            Layout::Matrix => "matrix",
            Layout::Edges => "edges",
        }
    }
}

impl fmt::Display for Layout {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Layout {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s {
            "matrix" => Ok(Layout::Matrix),
            "edges" => Ok(Layout::Edges),
            _ => Err(Error::InvalidArgument(format!(
                "unknown layout '{s}': expected 'matrix' or 'edges'"
            ))),
        }
    }
}

/// How the first non-blank line of an edge list is treated.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub enum EdgeHeader {
    /// Skipped when it has a weight field that is not a number (for example
    /// `plant,visitor,visits`); otherwise read as data. A two-field header
    /// cannot be told from data: use [`EdgeHeader::Present`] for it.
    #[default]
    #[cfg_attr(feature = "serde", serde(rename = "auto"))]
    Auto,
    /// Always skipped.
    #[cfg_attr(feature = "serde", serde(rename = "yes"))]
    Present,
    /// Never skipped: the first line is data.
    #[cfg_attr(feature = "serde", serde(rename = "no"))]
    Absent,
}

impl EdgeHeader {
    /// The name used on the command line: `auto`, `yes` or `no`.
    pub fn name(self) -> &'static str {
        match self {
            EdgeHeader::Auto => "auto",
            EdgeHeader::Present => "yes",
            EdgeHeader::Absent => "no",
        }
    }
}

impl fmt::Display for EdgeHeader {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for EdgeHeader {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s {
            "auto" => Ok(EdgeHeader::Auto),
            "yes" => Ok(EdgeHeader::Present),
            "no" => Ok(EdgeHeader::Absent),
            _ => Err(Error::InvalidArgument(format!(
                "unknown edge header setting '{s}': expected 'auto', 'yes' or 'no'"
            ))),
        }
    }
}

/// Options for [`read_network`] and [`parse_network`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub struct ReadOptions {
    /// The file layout (default [`Layout::Matrix`]).
    pub layout: Layout,
    /// The first line of an edge list (default [`EdgeHeader::Auto`]);
    /// ignored for the matrix layout.
    pub edge_header: EdgeHeader,
}

/// Reads a network from a file (see the [module docs](self) for the layouts
/// and rules).
///
/// Errors: [`Error::Io`] when the file cannot be read; [`Error::Parse`] with
/// line and field for malformed text; [`Error::EmptyNetwork`] when no cell is
/// non-zero.
///
/// Cost: `O(file size)` to read and parse, plus `O(L log L)` to sum the
/// lines of an edge list; memory: the file's bytes plus the network.
///
/// # Example
/// ```
/// use nidus::io::{read_network, ReadOptions, Layout};
/// let path = std::env::temp_dir().join(format!("nidus_doc_{}.csv", std::process::id()));
/// std::fs::write(&path, "plant,bee,fly\nclover,3,1\nthyme,2,\n").unwrap();
/// let net = read_network(&path, &ReadOptions::default()).unwrap();
/// assert_eq!((net.nrows(), net.ncols(), net.links()), (2, 2, 3));
/// assert_eq!(net.get(1, 1), 0.0); // an empty cell is 0
///
/// std::fs::write(&path, "clover,bee\nclover,bee\nthyme,fly,2\n").unwrap();
/// let opts = ReadOptions { layout: Layout::Edges, ..Default::default() };
/// let net = read_network(&path, &opts).unwrap();
/// assert_eq!(net.get(0, 0), 2.0); // repeated pairs are summed
/// # std::fs::remove_file(&path).ok();
/// ```
pub fn read_network(path: &Path, opts: &ReadOptions) -> Result<Network<f64>> {
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        source,
    })?;
    parse_network(&bytes, path, opts)
}

/// Parses a network from the bytes of a file; `source` names it in error
/// messages. Same rules, errors and cost as [`read_network`].
///
/// # Example
/// ```
/// use std::path::Path;
/// use nidus::io::{parse_network, ReadOptions};
/// // Semicolons with decimal commas, a byte-order mark and CRLF line ends.
/// let text = "\u{feff}site;beetle;moth\r\nisle A;2,5;1\r\nisle B;0;1\r\n";
/// let net = parse_network(text.as_bytes(), Path::new("field.csv"), &ReadOptions::default()).unwrap();
/// assert_eq!(net.get(0, 0), 2.5);
/// assert_eq!(net.row_labels(), ["isle A", "isle B"]);
///
/// let err = parse_network(b"site,a\nx,-1\n", Path::new("bad.csv"), &ReadOptions::default());
/// assert_eq!(
///     err.unwrap_err().to_string(),
///     "bad.csv: line 2, field 2: \"-1\" is negative; weights must be zero or positive"
/// );
/// ```
pub fn parse_network(text: &[u8], source: &Path, opts: &ReadOptions) -> Result<Network<f64>> {
    let text = text.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(text);
    let delim = detect_delimiter(text);
    let text = match std::str::from_utf8(text) {
        Ok(t) => t,
        Err(e) => return Err(utf8_error(text, e.valid_up_to(), delim, source)),
    };
    let mut fields = Fields::new(text, delim, source);
    match opts.layout {
        Layout::Matrix => parse_matrix(&mut fields),
        Layout::Edges => parse_edges(&mut fields, opts.edge_header),
    }
}

/// The delimiter of the first non-blank record: the most frequent of comma,
/// tab and semicolon outside quotes (a line break inside quotes does not end
/// the record); comma when none occurs, ties to comma, then tab.
fn detect_delimiter(text: &[u8]) -> u8 {
    let mut start = 0;
    while let Some(len) = blank_line_len(&text[start..]) {
        start += len;
    }
    let mut counts = [0usize; 3];
    let mut quoted = false;
    for &b in &text[start..] {
        match b {
            b'"' => quoted = !quoted,
            b'\n' if !quoted => break,
            b',' if !quoted => counts[0] += 1,
            b'\t' if !quoted => counts[1] += 1,
            b';' if !quoted => counts[2] += 1,
            _ => {}
        }
    }
    let candidates = [b',', b'\t', b';'];
    let mut best = 0;
    for k in 1..3 {
        if counts[k] > counts[best] {
            best = k;
        }
    }
    candidates[best]
}

/// When `text` starts with a line holding only whitespace and ending with a
/// line break, the length of that line with its break.
fn blank_line_len(text: &[u8]) -> Option<usize> {
    let end = text
        .iter()
        .position(|&b| !b.is_ascii_whitespace() || b == b'\n')?;
    (text[end] == b'\n').then_some(end + 1)
}

/// The error for bytes that are not UTF-8 at `offset`: names the physical
/// line and the field (delimiters counted outside quotes within the line).
fn utf8_error(text: &[u8], offset: usize, delim: u8, source: &Path) -> Error {
    let before = &text[..offset];
    let line = 1 + before.iter().filter(|&&b| b == b'\n').count();
    let line_start = before
        .iter()
        .rposition(|&b| b == b'\n')
        .map_or(0, |p| p + 1);
    let mut field = 1;
    let mut quoted = false;
    for &b in &text[line_start..offset] {
        if b == b'"' {
            quoted = !quoted;
        } else if b == delim && !quoted {
            field += 1;
        }
    }
    parse_error(
        source,
        line,
        Some(field),
        format!(
            "the byte 0x{:02X} is not valid UTF-8; save the file as UTF-8 text",
            text[offset]
        ),
    )
}

fn parse_error(source: &Path, line: usize, field: Option<usize>, message: String) -> Error {
    Error::Parse {
        path: source.to_path_buf(),
        line,
        column: field,
        message,
    }
}

/// A splitter of delimited text into records of trimmed, unquoted fields,
/// borrowing from the text where it can.
struct Fields<'a> {
    text: &'a str,
    pos: usize,
    /// Physical line of `pos` (1-based).
    line: usize,
    delim: u8,
    source: &'a Path,
}

impl<'a> Fields<'a> {
    fn new(text: &'a str, delim: u8, source: &'a Path) -> Self {
        Fields {
            text,
            pos: 0,
            line: 1,
            delim,
            source,
        }
    }

    fn is_space(&self, b: u8) -> bool {
        b == b' ' || b == b'\r' || (b == b'\t' && self.delim != b'\t')
    }

    fn error(&self, line: usize, field: Option<usize>, message: String) -> Error {
        parse_error(self.source, line, field, message)
    }

    /// Fills `out` with the next non-blank record and returns its first
    /// physical line, or `None` at the end of the text.
    fn next_record(&mut self, out: &mut Vec<Cow<'a, str>>) -> Result<Option<usize>> {
        let bytes = self.text.as_bytes();
        // Skip lines holding only whitespace (a last line without a break too).
        loop {
            let rest = &bytes[self.pos..];
            if rest.iter().all(u8::is_ascii_whitespace) {
                self.pos = bytes.len();
                return Ok(None);
            }
            match blank_line_len(rest) {
                Some(len) => {
                    self.pos += len;
                    self.line += 1;
                }
                None => break,
            }
        }
        out.clear();
        let line = self.line;
        loop {
            out.push(self.field(out.len() + 1)?);
            match bytes.get(self.pos) {
                Some(&b) if b == self.delim => self.pos += 1,
                Some(b'\n') => {
                    self.pos += 1;
                    self.line += 1;
                    break;
                }
                // The end of the text (a field ends nowhere else).
                _ => break,
            }
        }
        Ok(Some(line))
    }

    /// Reads one field starting at `self.pos`, leaving `self.pos` on the
    /// delimiter, line end or end of text after it.
    fn field(&mut self, index: usize) -> Result<Cow<'a, str>> {
        let text = self.text;
        let bytes = text.as_bytes();
        let mut p = self.pos;
        while p < bytes.len() && self.is_space(bytes[p]) {
            p += 1;
        }
        if bytes.get(p) != Some(&b'"') {
            // Unquoted: up to the delimiter or the line end, trimmed.
            let start = p;
            let delim = self.delim;
            let end = bytes[start..]
                .iter()
                .position(|&b| b == delim || b == b'\n')
                .map_or(bytes.len(), |k| start + k);
            let mut e = end;
            while e > start && self.is_space(bytes[e - 1]) {
                e -= 1;
            }
            self.pos = end;
            return Ok(Cow::Borrowed(&text[start..e]));
        }
        // Quoted: up to the closing quote; `""` stands for one quote.
        let start_line = self.line;
        p += 1;
        let mut seg = p;
        let mut owned: Option<String> = None;
        let content_end = loop {
            let q = match bytes[p..].iter().position(|&b| b == b'"') {
                Some(k) => p + k,
                None => {
                    return Err(self.error(
                        start_line,
                        Some(index),
                        "a quoted field is never closed; expected a closing '\"'".into(),
                    ))
                }
            };
            self.line += bytes[p..q].iter().filter(|&&b| b == b'\n').count();
            if bytes.get(q + 1) == Some(&b'"') {
                owned
                    .get_or_insert_with(String::new)
                    .push_str(&text[seg..=q]);
                p = q + 2;
                seg = p;
            } else {
                p = q + 1;
                break q;
            }
        };
        let value = match owned {
            Some(mut s) => {
                s.push_str(&text[seg..content_end]);
                Cow::Owned(s)
            }
            None => Cow::Borrowed(&text[seg..content_end]),
        };
        while p < bytes.len() && self.is_space(bytes[p]) {
            p += 1;
        }
        match bytes.get(p) {
            None | Some(b'\n') => {}
            Some(&b) if b == self.delim => {}
            Some(_) => {
                return Err(self.error(
                    self.line,
                    Some(index),
                    format!(
                        "text follows the closing quote of \"{value}\"; expected a delimiter ('{}') or the line end",
                        delim_name(self.delim)
                    ),
                ))
            }
        }
        self.pos = p;
        Ok(value)
    }
}

fn delim_name(d: u8) -> &'static str {
    match d {
        b'\t' => "\\t",
        b';' => ";",
        _ => ",",
    }
}

/// A hint for lines with too many fields in a comma-delimited file, where
/// decimal commas are the usual cause.
fn decimal_comma_hint(delim: u8, too_many: bool) -> &'static str {
    if delim == b',' && too_many {
        " (a decimal comma splits a value in two when commas delimit fields: \
         write decimal points, or use ';' as the delimiter)"
    } else {
        ""
    }
}

/// Why a value was refused.
enum BadValue {
    NotNumber,
    Negative,
    NotANumberValue,
    Infinite,
}

/// Parses one weight: finite, non-negative, decimal comma when the
/// delimiter is `;`. An empty field is not handled here.
fn parse_value(s: &str, decimal_comma: bool) -> std::result::Result<f64, BadValue> {
    let parsed = if decimal_comma && s.contains(',') {
        s.replacen(',', ".", 1).parse::<f64>()
    } else {
        s.parse::<f64>()
    };
    match parsed {
        Err(_) => Err(BadValue::NotNumber),
        Ok(x) if x.is_nan() => Err(BadValue::NotANumberValue),
        Ok(x) if x.is_infinite() => Err(BadValue::Infinite),
        Ok(x) if x < 0.0 => Err(BadValue::Negative),
        Ok(x) => Ok(x + 0.0), // -0 becomes 0
    }
}

fn value_message(s: &str, why: BadValue, empty_is: &str) -> String {
    match why {
        BadValue::NotNumber => format!(
            "\"{s}\" is not a number; expected a non-negative number ({empty_is})"
        ),
        BadValue::Negative => format!("\"{s}\" is negative; weights must be zero or positive"),
        BadValue::NotANumberValue => format!(
            "\"{s}\" is NaN (not a number); weights must be finite and non-negative"
        ),
        BadValue::Infinite => format!(
            "\"{s}\" is infinite or too large for a 64-bit float; weights must be finite and non-negative"
        ),
    }
}

fn parse_matrix(fields: &mut Fields<'_>) -> Result<Network<f64>> {
    let mut rec: Vec<Cow<'_, str>> = Vec::new();
    let header_line = match fields.next_record(&mut rec)? {
        Some(l) => l,
        None => {
            return Err(fields.error(
                1,
                None,
                "the file is empty; expected a header line of column labels, then one line per row species".into(),
            ))
        }
    };
    let width = rec.len();
    if width < 2 {
        return Err(fields.error(
            header_line,
            None,
            format!(
                "the header has one field (\"{}\"); expected a first cell and at least one column label, separated by commas, tabs or semicolons",
                rec[0]
            ),
        ));
    }
    let mut col_labels: Vec<String> = Vec::with_capacity(width - 1);
    let mut col_seen: HashMap<String, usize> = HashMap::with_capacity(width - 1);
    for (k, label) in rec.iter().enumerate().skip(1) {
        if label.is_empty() {
            return Err(fields.error(
                header_line,
                Some(k + 1),
                "empty column label; expected a label for every column".into(),
            ));
        }
        if let Some(first) = col_seen.insert(label.to_string(), k + 1) {
            return Err(fields.error(
                header_line,
                Some(k + 1),
                format!(
                    "the column label \"{label}\" repeats field {first}; column labels must be unique"
                ),
            ));
        }
        col_labels.push(label.to_string());
    }
    let n = width - 1;
    let decimal_comma = fields.delim == b';';
    let mut row_labels: Vec<String> = Vec::new();
    let mut row_seen: HashMap<String, usize> = HashMap::new();
    let mut values: Vec<f64> = Vec::new();
    while let Some(line) = fields.next_record(&mut rec)? {
        if rec.len() != width {
            return Err(fields.error(
                line,
                None,
                format!(
                    "this line has {} field{}, expected {width} like the header on line {header_line}{}",
                    rec.len(),
                    if rec.len() == 1 { "" } else { "s" },
                    decimal_comma_hint(fields.delim, rec.len() > width)
                ),
            ));
        }
        let label = &rec[0];
        if label.is_empty() {
            return Err(fields.error(
                line,
                Some(1),
                "empty row label; expected the row's label in the first field".into(),
            ));
        }
        if let Some(first) = row_seen.insert(label.to_string(), line) {
            return Err(fields.error(
                line,
                Some(1),
                format!(
                    "the row label \"{label}\" was already used on line {first}; row labels must be unique"
                ),
            ));
        }
        row_labels.push(label.to_string());
        for (k, cell) in rec.iter().enumerate().skip(1) {
            if cell.is_empty() {
                values.push(0.0);
                continue;
            }
            match parse_value(cell, decimal_comma) {
                Ok(x) => values.push(x),
                Err(why) => {
                    return Err(fields.error(
                        line,
                        Some(k + 1),
                        value_message(cell, why, "an empty cell counts as 0"),
                    ))
                }
            }
        }
    }
    if row_labels.is_empty() {
        return Err(fields.error(
            header_line,
            None,
            "the file has a header but no data rows; expected one line per row species after the header".into(),
        ));
    }
    let m = row_labels.len();
    let weights = Array2::from_shape_vec((m, n), values)
        .map_err(|e| Error::InvalidArgument(format!("internal shape error: {e}")))?;
    Network::from_dense(weights, row_labels, col_labels)
}

/// One slot of [`LabelIndex`]: the first eight bytes of a label, a tag
/// (24 bits of its hash and its length, capped at 255) and its index + 1
/// (0: an empty slot).
#[derive(Clone, Copy, Default)]
struct Slot {
    head: u64,
    tag: u32,
    id1: u32,
}

/// Labels in order of first appearance, with their indices: an
/// open-addressing table of 16-byte slots (linear probing, load at most
/// three quarters) over one string arena holding the labels. A label of up to eight
/// bytes is found by reading one slot and nothing else; a longer one also
/// reads the arena. A general map whose keys point into a large file reads
/// three places far apart per lookup, which dominated reading time.
struct LabelIndex {
    slots: Vec<Slot>,
    arena: String,
    /// End of label `k` in `arena`; it starts where label `k - 1` ends.
    ends: Vec<usize>,
}

/// The first (up to) eight bytes of `b`, little-endian, zero padded.
#[inline]
fn head_word(b: &[u8]) -> u64 {
    let mut w = [0u8; 8];
    let k = b.len().min(8);
    w[..k].copy_from_slice(&b[..k]);
    u64::from_le_bytes(w)
}

/// The slot tag of a label with hash `hash` and `len` bytes.
#[inline]
fn slot_tag(hash: u64, len: usize) -> u32 {
    (((hash >> 40) as u32) << 8) | len.min(255) as u32
}

impl LabelIndex {
    fn new() -> Self {
        LabelIndex {
            slots: vec![Slot::default(); 1024],
            arena: String::new(),
            ends: Vec::new(),
        }
    }

    fn label(&self, k: usize) -> &str {
        let start = if k == 0 { 0 } else { self.ends[k - 1] };
        &self.arena[start..self.ends[k]]
    }

    /// Reads the first slot where a label of hash `hash` would be (to bring
    /// it into cache).
    #[inline]
    fn peek(&self, hash: u64) -> u32 {
        self.slots[hash as usize & (self.slots.len() - 1)].id1
    }

    /// The index of `label` (whose [`label_hash`] is `hash`), adding it when
    /// new; `None` at 2^32 - 1 labels.
    fn get_or_insert(&mut self, label: &str, hash: u64) -> Option<u32> {
        let b = label.as_bytes();
        let head = head_word(b);
        let tag = slot_tag(hash, b.len());
        let mask = self.slots.len() - 1;
        let mut pos = hash as usize & mask;
        loop {
            let s = self.slots[pos];
            if s.id1 == 0 {
                break;
            }
            // Equal tags and heads decide labels of up to 8 bytes (the tag
            // holds the exact length below 255).
            if s.tag == tag
                && s.head == head
                && (b.len() <= 8 || self.label(s.id1 as usize - 1) == label)
            {
                return Some(s.id1 - 1);
            }
            pos = (pos + 1) & mask;
        }
        let id1 = u32::try_from(self.ends.len() + 1).ok()?;
        self.arena.push_str(label);
        self.ends.push(self.arena.len());
        self.slots[pos] = Slot { head, tag, id1 };
        if 4 * self.ends.len() > 3 * self.slots.len() {
            self.grow();
        }
        Some(id1 - 1)
    }

    /// Doubles the table.
    fn grow(&mut self) {
        let mut slots = vec![Slot::default(); 2 * self.slots.len()];
        let mask = slots.len() - 1;
        for s in self.slots.iter().filter(|s| s.id1 != 0) {
            let hash = label_hash(self.label(s.id1 as usize - 1).as_bytes());
            let mut pos = hash as usize & mask;
            while slots[pos].id1 != 0 {
                pos = (pos + 1) & mask;
            }
            slots[pos] = *s;
        }
        self.slots = slots;
    }

    fn into_strings(self) -> Vec<String> {
        (0..self.ends.len())
            .map(|k| self.label(k).to_string())
            .collect()
    }
}

/// Edge lines whose labels are looked up together (see [`resolve_batch`]).
const LOOKUP_BATCH: usize = 256;

/// Turns a batch of `(row label, column label, weight)` into entries, in
/// order. Label lookups are memory-bound (one cache miss each on a large
/// table), so the slots of the whole batch are first read in one loop of
/// independent loads, which the processor overlaps, then looked up.
fn resolve_batch(
    batch: &mut Vec<(Cow<'_, str>, Cow<'_, str>, f64)>,
    chunk: &mut EdgeLines,
    source: &Path,
) -> Result<()> {
    let mut hashes = [(0u64, 0u64); LOOKUP_BATCH];
    let mut touched = 0u32;
    for (h, (r, c, _)) in hashes.iter_mut().zip(batch.iter()) {
        *h = (label_hash(r.as_bytes()), label_hash(c.as_bytes()));
        touched ^= chunk.rows.peek(h.0) ^ chunk.cols.peek(h.1);
    }
    std::hint::black_box(touched);
    for (h, (r, c, w)) in hashes.iter().zip(batch.drain(..)) {
        match (
            chunk.rows.get_or_insert(&r, h.0),
            chunk.cols.get_or_insert(&c, h.1),
        ) {
            (Some(i), Some(j)) => chunk.entries.push((i, j, w)),
            _ => {
                return Err(Error::InvalidArgument(format!(
                    "{}: more than 2^32 - 1 distinct labels on one side",
                    source.display()
                )))
            }
        }
    }
    Ok(())
}

/// A fast hash of a short byte string (not resistant to crafted collisions:
/// a hostile file can only make reading slower). Eight bytes at a time,
/// `h = (h.rotate_left(5) ^ word) * K` with the odd constant `K` =
/// 2^64 / golden ratio, then the length, then the final mix of MurmurHash3
/// (Appleby), so that low and high bits both depend on every byte.
#[inline]
fn label_hash(bytes: &[u8]) -> u64 {
    const K: u64 = 0x9E37_79B9_7F4A_7C15;
    let mut h = 0u64;
    let mut chunks = bytes.chunks_exact(8);
    for c in &mut chunks {
        let mut w = [0u8; 8];
        w.copy_from_slice(c);
        h = (h.rotate_left(5) ^ u64::from_le_bytes(w)).wrapping_mul(K);
    }
    let rest = chunks.remainder();
    let mut w = [0u8; 8];
    w[..rest.len()].copy_from_slice(rest);
    h = (h.rotate_left(5) ^ u64::from_le_bytes(w)).wrapping_mul(K);
    h ^= bytes.len() as u64;
    h ^= h >> 33;
    h = h.wrapping_mul(0xFF51_AFD7_ED55_8CCD);
    h ^= h >> 33;
    h = h.wrapping_mul(0xC4CE_B9FE_1A85_EC53);
    h ^ (h >> 33)
}

/// The edge lines of a file, with labels indexed.
struct EdgeLines {
    rows: LabelIndex,
    cols: LabelIndex,
    entries: Vec<(u32, u32, f64)>,
    /// The line skipped as a header, if any.
    header_line: Option<usize>,
}

/// Parses the edge lines that `fields` yields; `header` says how to treat
/// the first non-blank line.
fn edge_lines<'a>(fields: &mut Fields<'a>, header: EdgeHeader) -> Result<EdgeLines> {
    let mut rec: Vec<Cow<'a, str>> = Vec::with_capacity(4);
    let mut batch: Vec<(Cow<'a, str>, Cow<'a, str>, f64)> = Vec::with_capacity(LOOKUP_BATCH);
    let decimal_comma = fields.delim == b';';
    let lines_guess = fields.text.bytes().filter(|&b| b == b'\n').count() + 1;
    let mut chunk = EdgeLines {
        rows: LabelIndex::new(),
        cols: LabelIndex::new(),
        entries: Vec::with_capacity(lines_guess),
        header_line: None,
    };
    let mut first = true;
    while let Some(line) = fields.next_record(&mut rec)? {
        if first {
            first = false;
            let skip = match header {
                EdgeHeader::Absent => false,
                EdgeHeader::Present => true,
                EdgeHeader::Auto => {
                    rec.len() == 3
                        && !rec[2].is_empty()
                        && matches!(
                            parse_value(&rec[2], decimal_comma),
                            Err(BadValue::NotNumber)
                        )
                }
            };
            if skip {
                chunk.header_line = Some(line);
                continue;
            }
        }
        if rec.len() < 2 {
            return Err(fields.error(
                line,
                None,
                format!(
                    "this line has 1 field (\"{}\"); expected a row label, a column label and an optional weight, separated by '{}'",
                    rec[0],
                    delim_name(fields.delim)
                ),
            ));
        }
        if rec.len() > 3 {
            return Err(fields.error(
                line,
                None,
                format!(
                    "this line has {} fields; expected at most 3: a row label, a column label and an optional weight{}",
                    rec.len(),
                    if rec.len() == 4 {
                        decimal_comma_hint(fields.delim, true)
                    } else {
                        " (is the file in the matrix layout rather than an edge list?)"
                    }
                ),
            ));
        }
        let weight = match rec.get(2) {
            None => 1.0,
            Some(w) if w.is_empty() => 1.0,
            Some(w) => parse_value(w, decimal_comma).map_err(|why| {
                fields.error(
                    line,
                    Some(3),
                    value_message(w, why, "a missing or empty weight counts as 1"),
                )
            })?,
        };
        for (k, side) in [(0usize, "row"), (1, "column")] {
            if rec[k].is_empty() {
                return Err(fields.error(
                    line,
                    Some(k + 1),
                    format!("empty {side} label; expected a label"),
                ));
            }
        }
        let r = std::mem::take(&mut rec[0]);
        let c = std::mem::take(&mut rec[1]);
        batch.push((r, c, weight));
        if batch.len() == LOOKUP_BATCH {
            resolve_batch(&mut batch, &mut chunk, fields.source)?;
        }
    }
    resolve_batch(&mut batch, &mut chunk, fields.source)?;
    Ok(chunk)
}

/// Reads an edge list (all lines in one pass; see [`edge_lines`]).
fn parse_edges(fields: &mut Fields<'_>, header: EdgeHeader) -> Result<Network<f64>> {
    let chunk = edge_lines(fields, header)?;
    if chunk.entries.is_empty() {
        return Err(match chunk.header_line {
            Some(l) => fields.error(
                l,
                None,
                "the file has a header but no data lines; expected one line per interaction after it".into(),
            ),
            None => fields.error(
                1,
                None,
                "the file is empty; expected one line per interaction: row label, column label, optional weight".into(),
            ),
        });
    }
    Network::from_triplets(
        chunk.rows.into_strings(),
        chunk.cols.into_strings(),
        chunk.entries,
    )
}

/// Writes a network in the matrix layout: a header line whose first cell is
/// empty followed by the column labels, then one line per row with its label
/// and one value per column (zeros written as `0`).
///
/// `delimiter` must be `b','`, `b'\t'` or `b';'` (otherwise an
/// [`std::io::ErrorKind::InvalidInput`] error). Labels holding a comma, tab,
/// semicolon, quote or line break, or with surrounding spaces, are quoted, so
/// the delimiter is detected again on reading. Values are written in the
/// shortest form that parses back to the same `f64` (integers without `.0`,
/// very large or small numbers with an exponent), so for any network whose
/// labels are non-empty, [`read_network`] gives back exactly
/// `net.to_f64()`: the same labels in the same order and bit-identical
/// weights. Output is buffered internally.
///
/// Cost: `O(m n)` time (every cell is written), `O(L)` extra memory for a
/// dense network (its compressed rows).
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{io::write_matrix, Network};
/// let net = Network::from_array(array![[2.5, 0.0], [1.0, 1e-7]]).unwrap();
/// let mut out = Vec::new();
/// write_matrix(&net, &mut out, b',').unwrap();
/// assert_eq!(String::from_utf8(out).unwrap(), ",C1,C2\nR1,2.5,0\nR2,1,1e-7\n");
/// ```
///
/// Errors: [`Error::InvalidArgument`] for another delimiter,
/// [`Error::Output`] when the writer fails.
pub fn write_matrix<W: Write, T: Weight>(net: &Network<T>, out: W, delimiter: u8) -> Result<()> {
    if !matches!(delimiter, b',' | b'\t' | b';') {
        return Err(Error::InvalidArgument(format!(
            "the delimiter {:?} is not one nidus reads; use ',', '\\t' or ';'",
            delimiter as char
        )));
    }
    write_cells(net, out, delimiter).map_err(|source| Error::Output { source })
}

fn write_cells<W: Write, T: Weight>(
    net: &Network<T>,
    out: W,
    delimiter: u8,
) -> std::io::Result<()> {
    let mut out = std::io::BufWriter::new(out);
    let d = [delimiter];
    for label in net.col_labels() {
        out.write_all(&d)?;
        write_label(&mut out, label)?;
    }
    out.write_all(b"\n")?;
    let csr = net.csr();
    let mut buf = String::new();
    for (i, label) in net.row_labels().iter().enumerate() {
        write_label(&mut out, label)?;
        let (cols, vals) = csr.row(i);
        let mut next = 0usize;
        for (&j, &w) in cols.iter().zip(vals) {
            for _ in next..j as usize {
                out.write_all(&[delimiter, b'0'])?;
            }
            out.write_all(&d)?;
            buf.clear();
            format_value(&mut buf, w.as_f64());
            out.write_all(buf.as_bytes())?;
            next = j as usize + 1;
        }
        for _ in next..net.ncols() {
            out.write_all(&[delimiter, b'0'])?;
        }
        out.write_all(b"\n")?;
    }
    out.flush()
}

/// The shortest text that parses back to `x`: integers below 10^16 without
/// a fraction, otherwise Rust's shortest round-trip form (`Debug`, which
/// uses an exponent for very large and very small magnitudes).
fn format_value(buf: &mut String, x: f64) {
    use std::fmt::Write as _;
    let x = x + 0.0; // -0 is written as 0
    if x.fract() == 0.0 && x.abs() < 1e16 {
        let _ = write!(buf, "{x}");
    } else {
        let _ = write!(buf, "{x:?}");
    }
}

fn write_label<W: Write>(out: &mut W, label: &str) -> std::io::Result<()> {
    let needs_quotes = label
        .bytes()
        .any(|b| matches!(b, b',' | b'\t' | b';' | b'"' | b'\n' | b'\r'))
        || label.starts_with(' ')
        || label.ends_with(' ');
    if !needs_quotes {
        return out.write_all(label.as_bytes());
    }
    out.write_all(b"\"")?;
    out.write_all(label.replace('"', "\"\"").as_bytes())?;
    out.write_all(b"\"")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn split(text: &str) -> Vec<(usize, Vec<String>)> {
        let delim = detect_delimiter(text.as_bytes());
        let mut f = Fields::new(text, delim, Path::new("t"));
        let mut rec = Vec::new();
        let mut out = Vec::new();
        while let Some(line) = f.next_record(&mut rec).unwrap() {
            out.push((line, rec.iter().map(|s| s.to_string()).collect()));
        }
        out
    }

    /// Quoting rules of RFC 4180 (a doubled quote inside quotes is one
    /// quote; delimiters and line breaks inside quotes belong to the field),
    /// plus our trimming outside quotes and physical line numbers.
    #[test]
    fn splits_quotes_spaces_and_lines() {
        let got = split("a, \"b, c\" ,\"d\"\"e\"\n\n  \nx,\"multi\nline\",y\r\nz,,\n");
        assert_eq!(
            got,
            vec![
                (1, vec!["a".into(), "b, c".into(), "d\"e".into()]),
                (4, vec!["x".into(), "multi\nline".into(), "y".into()]),
                (6, vec!["z".into(), "".into(), "".into()]),
            ]
        );
    }

    #[test]
    fn detects_the_most_frequent_delimiter_outside_quotes() {
        assert_eq!(detect_delimiter(b"\n \na;b;c,d\n"), b';');
        assert_eq!(detect_delimiter(b"a\tb\t\"c;d;e;f\"\n"), b'\t');
        assert_eq!(detect_delimiter(b"a,b;c\n"), b',');
        assert_eq!(detect_delimiter(b"abc"), b',');
        assert_eq!(detect_delimiter(b""), b',');
    }

    #[test]
    fn values_refuse_nan_inf_negative_and_words() {
        assert!(matches!(parse_value("2,5", true), Ok(x) if x == 2.5));
        assert!(matches!(
            parse_value("2,5", false),
            Err(BadValue::NotNumber)
        ));
        assert!(matches!(parse_value("1e3", false), Ok(x) if x == 1000.0));
        assert!(matches!(
            parse_value("NaN", false),
            Err(BadValue::NotANumberValue)
        ));
        assert!(matches!(parse_value("inf", false), Err(BadValue::Infinite)));
        assert!(matches!(
            parse_value("-Infinity", false),
            Err(BadValue::Infinite)
        ));
        assert!(matches!(
            parse_value("1e400", false),
            Err(BadValue::Infinite)
        ));
        assert!(matches!(parse_value("-1", false), Err(BadValue::Negative)));
        assert!(matches!(parse_value("-0", false), Ok(x) if x.to_bits() == 0));
        assert!(matches!(
            parse_value("two", false),
            Err(BadValue::NotNumber)
        ));
    }

    #[test]
    fn formats_shortest_round_trip() {
        for (x, s) in [
            (3.0, "3"),
            (0.1, "0.1"),
            (1e-7, "1e-7"),
            (1e20, "1e20"),
            (123456789012345.0, "123456789012345"),
            (-0.0, "0"),
        ] {
            let mut b = String::new();
            format_value(&mut b, x);
            assert_eq!(b, s);
            assert_eq!(b.parse::<f64>().unwrap(), x);
        }
    }

    /// The label table against a slow reference (a std `HashMap` assigning
    /// indices in order of first appearance), on labels that share their
    /// first eight bytes, differ only by a trailing NUL, or exceed the
    /// 255-byte length cap of the tag; enough of them to grow the table.
    #[test]
    fn label_index_matches_a_map() {
        let long = "x".repeat(300);
        let mut labels: Vec<String> = Vec::new();
        for k in 0..3000 {
            labels.push(format!("Bombus terrestris {k}"));
            labels.push(format!("p{k}"));
            labels.push(format!("{long}{}", k % 7));
            labels.push(format!("{long}{}y", k % 5));
        }
        labels.extend([
            "a".into(),
            "a\0".into(),
            "a\0\0".into(),
            "".into(),
            "é".into(),
        ]);
        // Visit in a scrambled order with repeats.
        let order: Vec<usize> = (0..3 * labels.len())
            .map(|k| (k * 7919) % labels.len())
            .collect();
        let mut fast = LabelIndex::new();
        let mut slow: HashMap<&str, u32> = HashMap::new();
        let mut slow_order: Vec<&str> = Vec::new();
        for &k in &order {
            let l = labels[k].as_str();
            let next = slow.len() as u32;
            let want = *slow.entry(l).or_insert_with(|| {
                slow_order.push(l);
                next
            });
            assert_eq!(
                fast.get_or_insert(l, label_hash(l.as_bytes())),
                Some(want),
                "{l:?}"
            );
        }
        assert_eq!(fast.into_strings(), slow_order);
    }
}
