//! The edges layout: one interaction per line, labels interned in order of
//! first appearance, and the header rule of [`EdgeHeader::Auto`].

use super::*;
use std::sync::mpsc::{sync_channel, Receiver, SyncSender};

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
pub(super) struct LabelIndex {
    slots: Vec<Slot>,
    /// The [`label_hash`] of label `k`, so that growing the table does not
    /// hash the labels again.
    hashes: Vec<u64>,
    arena: String,
    /// End of label `k` in `arena`; it starts where label `k - 1` ends.
    ends: Vec<usize>,
}

/// The first (up to) eight bytes of `b`, little-endian, zero padded.
#[inline]
fn head_word(b: &[u8]) -> u64 {
    load_short(&b[..b.len().min(8)])
}

/// The bytes of `b` (at most eight) as a little-endian word, zero padded:
/// byte `k` of `b` is bits `8k..8k + 8`. Built from loads of four bytes
/// (two overlapping ones for 4-7 bytes) or of single bytes (first, middle
/// and last for 1-3 bytes): a copy into a zeroed buffer is a library call
/// and a store the next load cannot take its value from.
#[inline]
pub(super) fn load_short(b: &[u8]) -> u64 {
    let n = b.len();
    debug_assert!(n <= 8);
    if n == 8 {
        u64::from_le_bytes([b[0], b[1], b[2], b[3], b[4], b[5], b[6], b[7]])
    } else if n >= 4 {
        let lo = u32::from_le_bytes([b[0], b[1], b[2], b[3]]) as u64;
        let hi = u32::from_le_bytes([b[n - 4], b[n - 3], b[n - 2], b[n - 1]]) as u64;
        lo | (hi << (8 * (n - 4)))
    } else if n > 0 {
        (b[0] as u64) | ((b[n / 2] as u64) << (8 * (n / 2))) | ((b[n - 1] as u64) << (8 * (n - 1)))
    } else {
        0
    }
}

/// The slot tag of a label with hash `hash` and `len` bytes.
#[inline]
fn slot_tag(hash: u64, len: usize) -> u32 {
    (((hash >> 40) as u32) << 8) | len.min(255) as u32
}

impl LabelIndex {
    /// An empty table for a file of about `lines` lines: room for
    /// `lines / 8` labels before it grows (at least 768 labels, 1024
    /// slots). Growing by doubling writes every smaller table in turn and
    /// hashes every label again; the table starts at 2 bytes per line (a
    /// 10^6-line file: 2 MB), an eighth of the entries the file fills.
    pub(super) fn for_lines(lines: usize) -> Self {
        let slots = (lines / 8)
            .saturating_mul(4)
            .div_ceil(3)
            .next_power_of_two()
            .max(1024);
        LabelIndex {
            slots: vec![Slot::default(); slots],
            hashes: Vec::new(),
            arena: String::new(),
            ends: Vec::new(),
        }
    }

    fn label(&self, k: usize) -> &str {
        let start = if k == 0 { 0 } else { self.ends[k - 1] };
        &self.arena[start..self.ends[k]]
    }

    /// Starts bringing the first slot where a label of hash `hash` would be
    /// into cache: a prefetch on x86_64 (it retires at once, so a batch of
    /// them keeps many misses in flight, TLB walks included), elsewhere a
    /// plain read of the slot.
    #[inline]
    fn peek(&self, hash: u64) -> u32 {
        let slot = &self.slots[hash as usize & (self.slots.len() - 1)];
        #[cfg(target_arch = "x86_64")]
        {
            // SAFETY: SSE is part of every x86_64 target, and a prefetch
            // of a valid address reads nothing the program sees.
            unsafe {
                std::arch::x86_64::_mm_prefetch::<{ std::arch::x86_64::_MM_HINT_T0 }>(
                    (slot as *const Slot).cast::<i8>(),
                );
            }
            0
        }
        #[cfg(not(target_arch = "x86_64"))]
        slot.id1
    }

    /// The index of `label` (whose [`label_hash`] is `hash`), adding it when
    /// new; `None` at 2^32 - 1 labels.
    pub(super) fn get_or_insert(&mut self, label: &str, hash: u64) -> Option<u32> {
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
        self.hashes.push(hash);
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
            let hash = self.hashes[s.id1 as usize - 1];
            let mut pos = hash as usize & mask;
            while slots[pos].id1 != 0 {
                pos = (pos + 1) & mask;
            }
            slots[pos] = *s;
        }
        self.slots = slots;
    }

    pub(super) fn into_strings(self) -> Vec<String> {
        (0..self.ends.len())
            .map(|k| self.label(k).to_string())
            .collect()
    }
}

/// Edge lines whose labels are looked up together (see [`resolve_batch`]).
const LOOKUP_BATCH: usize = 256;

/// Turns a batch of `(row label, column label, weight)` into entries, in
/// order (see [`intern_hashed`]).
fn resolve_batch(
    batch: &mut Vec<(&str, &str, f64)>,
    chunk: &mut EdgeLines,
    source: &Path,
) -> Result<()> {
    let mut hashes = [(0u64, 0u64); LOOKUP_BATCH];
    for (h, &(r, c, _)) in hashes.iter_mut().zip(batch.iter()) {
        *h = (label_hash(r.as_bytes()), label_hash(c.as_bytes()));
    }
    let lines = hashes
        .iter()
        .zip(batch.iter())
        .map(|(&(hr, hc), &(r, c, w))| (r, c, w, hr, hc));
    intern_hashed(lines, chunk, source)?;
    batch.clear();
    Ok(())
}

/// Interns lines whose labels' hashes are known, in order, and adds their
/// entries. Label lookups are memory-bound (one cache miss each on a large
/// table), so the slots of all the lines (a batch of at most
/// [`LOOKUP_BATCH`]) are first prefetched in one loop (see
/// [`LabelIndex::peek`]), which the processor overlaps, then looked up.
fn intern_hashed<'a>(
    lines: impl Iterator<Item = Scanned<'a>> + Clone,
    chunk: &mut EdgeLines,
    source: &Path,
) -> Result<()> {
    let mut touched = 0u32;
    for (_, _, _, hr, hc) in lines.clone() {
        touched ^= chunk.rows.peek(hr) ^ chunk.cols.peek(hc);
    }
    std::hint::black_box(touched);
    for (r, c, w, hr, hc) in lines {
        add_line(chunk, (r, hr), (c, hc), w, source)?;
    }
    Ok(())
}

/// Interns a line's row and column labels (each with its [`label_hash`])
/// and adds its entry.
#[inline]
fn add_line(
    chunk: &mut EdgeLines,
    (r, hr): (&str, u64),
    (c, hc): (&str, u64),
    w: f64,
    source: &Path,
) -> Result<()> {
    match (
        chunk.rows.get_or_insert(r, hr),
        chunk.cols.get_or_insert(c, hc),
    ) {
        (Some(i), Some(j)) => {
            chunk.entries.push((i, j, w));
            Ok(())
        }
        _ => Err(Error::InvalidArgument(format!(
            "{}: more than 2^32 - 1 distinct labels on one side",
            source.display()
        ))),
    }
}

/// A fast hash of a short byte string (not resistant to crafted collisions:
/// a hostile file can only make reading slower). Eight bytes at a time,
/// `h = (h.rotate_left(5) ^ word) * K` with the odd constant `K` =
/// 2^64 / golden ratio, then the length, then the final mix of MurmurHash3
/// (Appleby), so that low and high bits both depend on every byte.
#[inline]
pub(super) fn label_hash(bytes: &[u8]) -> u64 {
    const K: u64 = 0x9E37_79B9_7F4A_7C15;
    let mut h = 0u64;
    let mut chunks = bytes.chunks_exact(8);
    for c in &mut chunks {
        h = (h.rotate_left(5) ^ load_short(c)).wrapping_mul(K);
    }
    h = (h.rotate_left(5) ^ load_short(chunks.remainder())).wrapping_mul(K);
    h ^= bytes.len() as u64;
    h ^= h >> 33;
    h = h.wrapping_mul(0xFF51_AFD7_ED55_8CCD);
    h ^= h >> 33;
    h = h.wrapping_mul(0xC4CE_B9FE_1A85_EC53);
    h ^ (h >> 33)
}

/// How many bytes of `b` equal `x`: counted in byte-wide lanes over blocks
/// of 255 bytes (so no lane overflows), which compilers turn into vector
/// compares.
pub(super) fn count_byte(b: &[u8], x: u8) -> usize {
    b.chunks(255)
        .map(|c| c.iter().fold(0u8, |n, &y| n + u8::from(y == x)) as usize)
        .sum()
}

/// Bytes of `w` equal to `c`: the high bit of each such byte set, all other
/// bits clear. Exact for every byte (no borrow runs from one byte into the
/// next, unlike the shorter test for "some byte is zero"): a byte `x` of
/// `w ^ c` is zero when neither its low seven bits (whose sum with 0x7F
/// carries into bit 7 exactly when one is set) nor its high bit is set.
#[inline]
pub(super) fn byte_mask(w: u64, c: u8) -> u64 {
    const LOW7: u64 = 0x7F7F_7F7F_7F7F_7F7F;
    let x = w ^ (0x0101_0101_0101_0101 * u64::from(c));
    !(((x & LOW7) + LOW7) | x | LOW7)
}

/// Trims the bytes [`Fields::is_space`] trims off both ends of `s`.
#[inline(always)]
fn trim_spaces<'a>(fields: &Fields<'a>, s: &'a str) -> &'a str {
    let b = s.as_bytes();
    let (mut a, mut e) = (0, b.len());
    while a < e && fields.is_space(b[a]) {
        a += 1;
    }
    while e > a && fields.is_space(b[e - 1]) {
        e -= 1;
    }
    &s[a..e]
}

/// The common edge line, read in one scan: the line at the reader's
/// position when it holds two or three fields whose first two are not
/// empty once trimmed, and no quote or only simply quoted fields (see
/// [`quoted_edge`]). Returns its line, row label, column label and weight
/// field (empty when absent) and moves past it; for any other line (blank,
/// with a quote escaped or spanning lines, too few or too many fields, an
/// empty label) returns `None` and leaves the reader where it was, for
/// [`Fields::next_record`], which yields the same fields for the lines
/// taken here. The line end, the delimiters and quotes are found eight
/// bytes at a time (see [`byte_mask`]); a line with a quote goes to
/// [`quoted_edge`].
#[inline]
pub(super) fn quick_edge<'a>(
    fields: &mut Fields<'a>,
) -> Option<(usize, &'a str, &'a str, &'a str)> {
    let text = fields.text;
    let bytes = text.as_bytes();
    let delim = fields.delim;
    let start = fields.pos;
    let mut cuts = [0usize; 2];
    let mut ncut = 0;
    let mut p = start;
    let end = 'scan: loop {
        if let Some(word) = bytes.get(p..p + 8) {
            let w = u64::from_le_bytes(word.try_into().ok()?);
            let mut m = byte_mask(w, b'\n') | byte_mask(w, delim) | byte_mask(w, b'"');
            while m != 0 {
                let k = p + (m.trailing_zeros() / 8) as usize;
                m &= m - 1;
                match bytes[k] {
                    b'\n' => break 'scan k,
                    b'"' => return quoted_edge(fields),
                    _ if ncut == 2 => return None,
                    _ => {
                        cuts[ncut] = k;
                        ncut += 1;
                    }
                }
            }
            p += 8;
        } else {
            for (k, &b) in bytes.iter().enumerate().skip(p) {
                if b == b'\n' {
                    break 'scan k;
                } else if b == b'"' {
                    return quoted_edge(fields);
                } else if b == delim && ncut == 2 {
                    return None;
                } else if b == delim {
                    cuts[ncut] = k;
                    ncut += 1;
                }
            }
            break bytes.len();
        }
    };
    if ncut == 0 {
        return None;
    }
    let row = trim_spaces(fields, &text[start..cuts[0]]);
    let col_end = if ncut == 2 { cuts[1] } else { end };
    let col = trim_spaces(fields, &text[cuts[0] + 1..col_end]);
    if row.is_empty() || col.is_empty() {
        return None;
    }
    let weight = if ncut == 2 {
        trim_spaces(fields, &text[cuts[1] + 1..end])
    } else {
        ""
    };
    let line = fields.line;
    if end < bytes.len() {
        fields.pos = end + 1;
        fields.line += 1;
    } else {
        fields.pos = end;
    }
    Some((line, row, col, weight))
}

/// [`quick_edge`] for a line holding a quote, byte by byte: taken when
/// each field is either unquoted without a quote, or quoted (after spaces)
/// with neither a quote nor a line break inside and only spaces between
/// the closing quote and the delimiter or line end, so that every field is
/// a slice of the text as [`Fields::next_record`] reads it (a field with
/// `""` inside becomes a new string there, and one spanning lines moves
/// the line count: both are left to it, as are the lines it refuses).
fn quoted_edge<'a>(fields: &mut Fields<'a>) -> Option<(usize, &'a str, &'a str, &'a str)> {
    let text = fields.text;
    let b = text.as_bytes();
    let delim = fields.delim;
    let mut p = fields.pos;
    let skip_spaces = |mut p: usize| {
        while p < b.len() && fields.is_space(b[p]) {
            p += 1;
        }
        p
    };
    let mut out = [""; 3];
    let mut n = 0;
    let end = loop {
        if n == 3 {
            return None;
        }
        p = skip_spaces(p);
        if b.get(p) == Some(&b'"') {
            let open = p + 1;
            let close = open + b[open..].iter().position(|&x| x == b'"' || x == b'\n')?;
            if b[close] != b'"' || b.get(close + 1) == Some(&b'"') {
                return None;
            }
            out[n] = &text[open..close];
            p = skip_spaces(close + 1);
        } else {
            let start = p;
            while p < b.len() && b[p] != delim && b[p] != b'\n' {
                if b[p] == b'"' {
                    return None;
                }
                p += 1;
            }
            let mut e = p;
            while e > start && fields.is_space(b[e - 1]) {
                e -= 1;
            }
            out[n] = &text[start..e];
        }
        n += 1;
        match b.get(p) {
            Some(&x) if x == delim => p += 1,
            Some(b'\n') | None => break p,
            Some(_) => return None, // text after a closing quote
        }
    };
    if n < 2 || out[0].is_empty() || out[1].is_empty() {
        return None;
    }
    let line = fields.line;
    if end < b.len() {
        fields.pos = end + 1;
        fields.line += 1;
    } else {
        fields.pos = end;
    }
    Some((line, out[0], out[1], out[2]))
}

/// The edge lines of a file, with labels indexed.
struct EdgeLines {
    rows: LabelIndex,
    cols: LabelIndex,
    entries: Vec<(u32, u32, f64)>,
    /// The line skipped as a header, if any.
    header_line: Option<usize>,
    /// A first line of two labels read as data for now, which
    /// [`EdgeHeader::Auto`] judges once every line is read: its line and
    /// labels.
    candidate: Option<(usize, [String; 2])>,
}

/// Smallest rest of a text (bytes) that [`edge_lines`] reads with a
/// second thread.
const PIPELINE_MIN: usize = 1 << 20;

/// Lines in one message of the pipeline (see [`scan_lines`]).
const PIPELINE_CHUNK: usize = 4096;

/// Messages the pipeline holds at most, so that its memory is bounded
/// (a few MB) whatever the file's size.
const PIPELINE_DEPTH: usize = 4;

/// Pipelines started in one file at most (each ends at a line that is not
/// of the common form; a file full of such lines is read by one thread).
const PIPELINE_STARTS: usize = 64;

/// The weight of a common edge line read without [`Fields::value`]: 1 for
/// an empty field, the value of a plain decimal (what `Fields::value`
/// returns for it, its first step; see [`plain_decimal`]), else `None`.
#[inline]
fn quick_weight(w: &str) -> Option<f64> {
    if w.is_empty() {
        Some(1.0)
    } else {
        plain_decimal(w.as_bytes())
    }
}

/// A common edge line scanned ahead: row label, column label, weight and
/// the labels' [`label_hash`]es.
type Scanned<'a> = (&'a str, &'a str, f64, u64, u64);

/// What the scanning thread sends: lines, or where it stopped (the end of
/// the text or the start of the first line it did not take) with the line
/// breaks it passed.
enum Scan<'a> {
    Lines(Vec<Scanned<'a>>),
    End { to: usize, breaks: usize },
}

/// The scanning end of the pipeline: reads the common edge lines (see
/// [`quick_edge`]) of `text` from `from`, the start of a line, with their
/// weights when plain decimals (or absent) and their labels' hashes, and
/// sends them in chunks of [`PIPELINE_CHUNK`], up to the end of the text
/// or the first line that is not such a line; then where it stopped.
/// Nothing here can fail: the first line not taken, whatever it holds, is
/// left to the reader's general path. Chunk buffers come back on `free`.
/// Stops early when the reader hangs up.
fn scan_lines<'a>(
    text: &'a str,
    delim: u8,
    source: &'a Path,
    from: usize,
    out: SyncSender<Scan<'a>>,
    free: Receiver<Vec<Scanned<'a>>>,
) {
    let mut fields = Fields::new(text, delim, source);
    fields.pos = from;
    fields.line = 0;
    loop {
        let mut lines = free
            .try_recv()
            .unwrap_or_else(|_| Vec::with_capacity(PIPELINE_CHUNK));
        let mut done = false;
        while lines.len() < PIPELINE_CHUNK {
            let (pos, line) = (fields.pos, fields.line);
            let Some((_, r, c, w)) = quick_edge(&mut fields) else {
                done = true;
                break;
            };
            let Some(weight) = quick_weight(w) else {
                (fields.pos, fields.line) = (pos, line);
                done = true;
                break;
            };
            lines.push((
                r,
                c,
                weight,
                label_hash(r.as_bytes()),
                label_hash(c.as_bytes()),
            ));
        }
        if !lines.is_empty() && out.send(Scan::Lines(lines)).is_err() {
            return;
        }
        if done {
            let _ = out.send(Scan::End {
                to: fields.pos,
                breaks: fields.line,
            });
            return;
        }
    }
}

/// Interns lines scanned ahead, in order, a batch of [`LOOKUP_BATCH`] at a
/// time (see [`intern_hashed`]).
fn resolve_scanned(lines: &[Scanned<'_>], chunk: &mut EdgeLines, source: &Path) -> Result<()> {
    for batch in lines.chunks(LOOKUP_BATCH) {
        intern_hashed(batch.iter().copied(), chunk, source)?;
    }
    Ok(())
}

/// Parses the edge lines that `fields` yields; `header` says how to treat
/// the first non-blank line.
///
/// With a second thread to spare, a large file (from [`PIPELINE_MIN`]
/// bytes on; `;` files, which track decimal marks, excepted) is read by a
/// pipeline: once the first line is read, a second thread scans the
/// following common lines ([`scan_lines`]: the line scan, the weight and
/// the labels' hashes) while this one interns them in order as they come.
/// At the first line of another kind the pipeline ends, this thread reads
/// that line by the general path and starts a new pipeline after it (at
/// most [`PIPELINE_STARTS`] times). Labels, entries, notes and errors are
/// the same as when reading alone; memory grows by a few MB at most.
fn edge_lines<'a>(
    fields: &mut Fields<'a>,
    header: EdgeHeader,
    report: &mut ReadReport,
) -> Result<EdgeLines> {
    if fields.text.len() >= PIPELINE_MIN && fields.delim != b';' && rayon::current_num_threads() > 1
    {
        std::thread::scope(|scope| edge_lines_with(fields, header, report, Some(scope)))
    } else {
        edge_lines_with(fields, header, report, None)
    }
}

/// Runs one pipeline (see [`edge_lines`]) from `fields`' position, a line
/// start, and moves `fields` to where it stopped. Returns `false`, having
/// read nothing, when the system cannot start the thread (the reader then
/// goes on alone).
fn pipeline<'a, 's>(
    scope: &'s std::thread::Scope<'s, '_>,
    fields: &mut Fields<'a>,
    batch: &mut Vec<(&'a str, &'a str, f64)>,
    chunk: &mut EdgeLines,
) -> Result<bool>
where
    'a: 's,
{
    resolve_batch(batch, chunk, fields.source)?;
    let (text, delim, source, from) = (fields.text, fields.delim, fields.source, fields.pos);
    let (tx, rx) = sync_channel(PIPELINE_DEPTH);
    let (give_back, free) = sync_channel(PIPELINE_DEPTH + 2);
    let started = std::thread::Builder::new()
        .name("nidus-scan".into())
        .spawn_scoped(scope, move || {
            scan_lines(text, delim, source, from, tx, free)
        });
    if started.is_err() {
        return Ok(false);
    }
    loop {
        match rx.recv() {
            Ok(Scan::Lines(lines)) => {
                resolve_scanned(&lines, chunk, fields.source)?;
                let mut lines = lines;
                lines.clear();
                let _ = give_back.try_send(lines);
            }
            Ok(Scan::End { to, breaks }) => {
                fields.pos = to;
                fields.line += breaks;
                return Ok(true);
            }
            Err(_) => {
                return Err(Error::InvalidArgument(format!(
                    "{}: the thread scanning lines ahead stopped",
                    fields.source.display()
                )))
            }
        }
    }
}

/// [`edge_lines`], with pipelines started in `scope` when given.
fn edge_lines_with<'a, 's>(
    fields: &mut Fields<'a>,
    header: EdgeHeader,
    report: &mut ReadReport,
    scope: Option<&'s std::thread::Scope<'s, '_>>,
) -> Result<EdgeLines>
where
    'a: 's,
{
    let mut rec: Vec<Cow<'a, str>> = Vec::with_capacity(4);
    let mut batch: Vec<(&'a str, &'a str, f64)> = Vec::with_capacity(LOOKUP_BATCH);
    let decimal_comma = fields.delim == b';';
    let lines_guess = count_byte(fields.text.as_bytes(), b'\n') + 1;
    let mut chunk = EdgeLines {
        rows: LabelIndex::for_lines(lines_guess),
        cols: LabelIndex::for_lines(lines_guess),
        entries: Vec::with_capacity(lines_guess),
        header_line: None,
        candidate: None,
    };
    let mut first = true;
    let (mut starts, mut piped) = (0, false);
    loop {
        // `fields` is at a line start here; past the first line, the
        // common lines may go through a pipeline, and after one has ended,
        // the line it stopped at goes through the paths below first.
        match scope {
            Some(scope)
                if !first
                    && !piped
                    && starts < PIPELINE_STARTS
                    && fields.text.len() - fields.pos >= PIPELINE_MIN =>
            {
                starts += 1;
                piped = true;
                if !pipeline(scope, fields, &mut batch, &mut chunk)? {
                    starts = PIPELINE_STARTS;
                }
            }
            _ => piped = false,
        }
        if !first {
            if let Some((line, r, c, w)) = quick_edge(fields) {
                // Unless `;` delimits, where decimal marks are tracked.
                let weight = match quick_weight(w) {
                    Some(x) if w.is_empty() || !decimal_comma => x,
                    _ => fields.value(w, line, 3, "a missing or empty weight counts as 1")?,
                };
                batch.push((r, c, weight));
                if batch.len() == LOOKUP_BATCH {
                    resolve_batch(&mut batch, &mut chunk, fields.source)?;
                }
                continue;
            }
        }
        let Some(line) = fields.next_record(&mut rec)? else {
            break;
        };
        if first {
            first = false;
            let skip = match header {
                EdgeHeader::Absent => false,
                EdgeHeader::Present => true,
                EdgeHeader::Auto => {
                    let word_weight =
                        rec.len() == 3 && !rec[2].is_empty() && !is_number(&rec[2], decimal_comma);
                    if word_weight {
                        report.notes.push(ReadNote::EdgeHeader {
                            line,
                            words: rec.iter().map(|w| w.to_string()).collect(),
                            rule: HeaderRule::WeightNotNumber,
                        });
                    } else if (rec.len() == 2 || (rec.len() == 3 && rec[2].is_empty()))
                        && !rec[0].is_empty()
                        && !rec[1].is_empty()
                    {
                        chunk.candidate = Some((line, [rec[0].to_string(), rec[1].to_string()]));
                    }
                    word_weight
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
            Some(w) => fields.value(w, line, 3, "a missing or empty weight counts as 1")?,
        };
        if rec.iter().all(|f| f.is_empty()) {
            return Err(fields.error(line, None, EMPTY_FIELDS.into()));
        }
        for (k, side) in [(0usize, "row"), (1, "column")] {
            if rec[k].is_empty() {
                return Err(fields.error(
                    line,
                    Some(k + 1),
                    format!("empty {side} label; expected a label"),
                ));
            }
        }
        match (&rec[0], &rec[1]) {
            (&Cow::Borrowed(r), &Cow::Borrowed(c)) => {
                batch.push((r, c, weight));
                if batch.len() == LOOKUP_BATCH {
                    resolve_batch(&mut batch, &mut chunk, fields.source)?;
                }
            }
            // A label unquoted into a new string (it held `""`): the lines
            // before it first, to keep the order of first appearance.
            (r, c) => {
                resolve_batch(&mut batch, &mut chunk, fields.source)?;
                let (hr, hc) = (label_hash(r.as_bytes()), label_hash(c.as_bytes()));
                add_line(&mut chunk, (r, hr), (c, hc), weight, fields.source)?;
            }
        }
    }
    resolve_batch(&mut batch, &mut chunk, fields.source)?;
    Ok(chunk)
}

/// Reads an edge list (all lines in one pass; see [`edge_lines`]), then
/// judges a first line of two labels (see [`judge_first_line`]).
pub(super) fn parse_edges(
    fields: &mut Fields<'_>,
    header: EdgeHeader,
    report: &mut ReadReport,
) -> Result<Table> {
    let mut chunk = edge_lines(fields, header, report)?;
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
    // Each side's labels become strings on its own thread when there are two.
    let (rows, cols) = (chunk.rows, chunk.cols);
    let (mut rows, mut cols) = rayon::join(|| rows.into_strings(), || cols.into_strings());
    if let Some((line, words)) = chunk.candidate.take() {
        if judge_first_line(
            fields,
            &chunk.entries,
            (rows.len(), cols.len()),
            line,
            &words,
        )? {
            // Its labels are row 0 and column 0 and appear nowhere else.
            chunk.entries.remove(0);
            for e in &mut chunk.entries {
                e.0 -= 1;
                e.1 -= 1;
            }
            rows.remove(0);
            cols.remove(0);
            report.notes.push(ReadNote::EdgeHeader {
                line,
                words: words.to_vec(),
                rule: HeaderRule::LabelsAppearOnce,
            });
        }
    }
    Ok(Table {
        rows,
        cols,
        cells: TableCells::Triplets(chunk.entries),
    })
}

/// The rule of [`EdgeHeader::Auto`] for a first line of two labels
/// (`entries[0]`, labels row 0 and column 0), [`HeaderRule::LabelsAppearOnce`]:
/// * either label appears on another line (in its own column): data;
/// * neither does, there are at least [`HEADER_MIN_LINES`] lines below it,
///   and every line below shares its row or its column label with another
///   line: a header (a line that shares nothing stands out only if no data
///   line does);
/// * otherwise (too few lines, or other lines share nothing either): an
///   error asking the user to say which.
///
/// Returns whether the line is a header. Cost: one pass over the entries.
fn judge_first_line(
    fields: &Fields<'_>,
    entries: &[(u32, u32, f64)],
    (m, n): (usize, usize),
    line: usize,
    words: &[String; 2],
) -> Result<bool> {
    let mut row_lines = vec![0u32; m];
    let mut col_lines = vec![0u32; n];
    for &(i, j, _) in entries {
        row_lines[i as usize] = row_lines[i as usize].saturating_add(1);
        col_lines[j as usize] = col_lines[j as usize].saturating_add(1);
    }
    if row_lines[0] > 1 || col_lines[0] > 1 {
        return Ok(false);
    }
    let below = entries.len() - 1;
    let lonely = entries[1..]
        .iter()
        .filter(|&&(i, j, _)| row_lines[i as usize] == 1 && col_lines[j as usize] == 1)
        .count();
    if below >= HEADER_MIN_LINES && lonely == 0 {
        return Ok(true);
    }
    let why = if below < HEADER_MIN_LINES {
        format!(
            "the file has {below} line{} below it, too few to judge (at least {HEADER_MIN_LINES} needed)",
            if below == 1 { "" } else { "s" }
        )
    } else {
        format!(
            "so do {lonely} other line{}, so a line that shares no label may well be data",
            if lonely == 1 { "" } else { "s" }
        )
    };
    Err(fields.error(
        line,
        None,
        format!(
            "cannot tell whether the first line (\"{}\", \"{}\") is a header or an interaction: \
             neither label appears on another line, but {why}; say which with the edge header \
             setting (--edge-header yes for a header, no for data)",
            words[0], words[1]
        ),
    ))
}
