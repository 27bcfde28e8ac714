//! Merging saved-draws files in memory bounded by the network, not by the
//! number of draws: two passes over each part, line by line.
//!
//! The first pass ([`index_file`]) reads every section of a part and checks
//! all of it: the header, every draw (numbers in the run's or shard's order
//! without a gap, values an index can take, lines of at most
//! [`MAX_LINE`](crate::null::draws_file::MAX_LINE) bytes of UTF-8 text) and the trailer (count and checksum).
//! Of each section it keeps only the header, where the draws start (byte
//! offset, line number, checksum so far) and how many there are.
//!
//! The second pass reads the draws again from those places and feeds them
//! in draw-number order (draw `k` of a run split into `K` shards is draw
//! `k / K` of shard `k % K + 1`) into the same [`DrawSummaries`] the
//! unsplit run uses: the merged summaries are the unsplit run's, bit for
//! bit, also past [`EXACT_DRAWS`] draws where the summaries turn to
//! streaming statistics that depend on the order of the draws. The second
//! pass checks every line and each section's checksum again, so a part
//! changed between the passes is refused, not half read.
//!
//! At most [`MAX_OPEN`] parts are open at once: a run split into more
//! shards reads each part in turns of a few lines, reopening it at the
//! byte where the last turn stopped.
//!
//! Memory: the sections' headers, one buffer of lines per part of the run
//! being merged (together at most about 2^16 lines), and the
//! [`DrawSummaries`] (at most `EXACT_DRAWS` values per index, then the
//! quantile sketch); nothing grows with the number of draws but the
//! sketch's levels (one buffer per doubling).

use std::fs::File;
use std::io::{BufReader, Seek, SeekFrom};
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::index::Direction;
use crate::null::accumulate::{DrawSummaries, EXACT_DRAWS};
use crate::null::draws_file::{group_parts, Body, LineReader};
use crate::null::run::NullRun;
use crate::null::Fnv1a;
use crate::significance::as_extreme;

/// The most part files the merge keeps open at once.
pub const MAX_OPEN: usize = 64;

/// Lines read per turn from a part that is not kept open.
const TURN_LINES: usize = 1 << 16;

/// One checked section of a saved-draws file and where its draws are.
#[derive(Clone, Debug)]
pub struct SectionIndex {
    /// The network file's label (as given to the run that saved it).
    pub file: String,
    /// The run without its draws (`draw_ids` and `values` are empty).
    pub run: NullRun,
    /// The number of draws the section holds.
    pub count: usize,
    path: PathBuf,
    /// Byte offset of the first draw line.
    start: u64,
    /// Number of the column line (the line before the first draw).
    line: usize,
    /// The section's checksum through its column line.
    sum: Fnv1a,
}

impl SectionIndex {
    /// The part file holding the section.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The number of the draw that follows the saved ones in the run (or
    /// shard): where a resumed run starts.
    pub fn next_draw(&self) -> u64 {
        let b = Body::of(&self.run);
        b.next + self.count as u64 * b.step
    }

    /// Reads the section's draws again, in order, handing each to
    /// `f(k, values)`; every line and the checksum are checked again.
    /// Memory: one line at a time.
    pub fn replay<E: From<Error>>(
        &self,
        mut f: impl FnMut(u64, &[f64]) -> std::result::Result<(), E>,
    ) -> std::result::Result<(), E> {
        let mut c = Cursor::new(self, true, 256);
        while let Some((k, v)) = c.next()? {
            f(k, v)?;
        }
        c.finish()?;
        Ok(())
    }

    fn changed(&self) -> Error {
        Error::InvalidArgument(format!(
            "{}: the section of {} ({}) from line {} changed while it was being read \
             (another program writing the part?); run the merge again",
            self.path.display(),
            self.file,
            self.run.model,
            self.line
        ))
    }
}

/// The first pass over a saved-draws file: every section checked (header,
/// draws, trailer), kept without its draws. Reads the file line by line;
/// memory: one line and the sections' headers.
///
/// Errors: [`Error::Io`] when the file cannot be read, [`Error::Parse`]
/// naming the line for anything wrong in it (a line over [`MAX_LINE`](crate::null::draws_file::MAX_LINE)
/// bytes, bytes that are not UTF-8 with their column, a gap in the draw
/// numbers, a missing trailer, a count or checksum that does not match,
/// ...).
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{index::IndexKind, Network};
/// use nidus::null::{merge_stream::index_file, run_null, NullConfig, NullModel};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 1], [0, 1, 0]]).unwrap();
/// let config = NullConfig::new(NullModel::FixedRows, vec![IndexKind::named("nodf").unwrap()], 20, 5);
/// let run = run_null(&net, &config).unwrap();
/// let path = std::env::temp_dir().join(format!("nidus-index-doc-{}.tsv", std::process::id()));
/// let mut text = Vec::new();
/// run.write_draws("web.csv", &mut text).unwrap();
/// std::fs::write(&path, &text).unwrap();
/// let sections = index_file(&path).unwrap();
/// assert_eq!((sections[0].file.as_str(), sections[0].count), ("web.csv", 20));
/// assert_eq!(sections[0].next_draw(), 20);
/// std::fs::remove_file(&path).unwrap();
/// ```
pub fn index_file(path: &Path) -> Result<Vec<SectionIndex>> {
    let file = File::open(path).map_err(|source| Error::Io {
        path: path.into(),
        source,
    })?;
    let mut l = LineReader::new(path, BufReader::with_capacity(1 << 16, file));
    let mut out = Vec::new();
    let mut v = Vec::new();
    while let Some((file, run)) = l.section_head()? {
        let (start, line, sum) = (l.pos, l.no, l.sum);
        let mut body = Body::of(&run);
        while l.next_draw(&file, &run, &mut body, &mut v)?.is_some() {}
        out.push(SectionIndex {
            file,
            run,
            count: body.count,
            path: path.into(),
            start,
            line,
            sum,
        });
    }
    Ok(out)
}

/// The second pass over one section: its draws in order, read in turns of
/// up to `turn` lines, the file kept open between turns or reopened.
struct Cursor<'a> {
    sec: &'a SectionIndex,
    reader: Option<LineReader<BufReader<File>>>,
    /// Line number, byte offset and checksum where the last turn stopped.
    no: usize,
    pos: u64,
    sum: Fnv1a,
    body: Body,
    keep_open: bool,
    turn: usize,
    ids: Vec<u64>,
    /// The values of the draws of `ids`, one index after another.
    vals: Vec<f64>,
    /// The next draw of `ids` to hand out.
    at: usize,
    /// The trailer has been read and checked.
    ended: bool,
    scratch: Vec<f64>,
}

impl<'a> Cursor<'a> {
    fn new(sec: &'a SectionIndex, keep_open: bool, turn: usize) -> Self {
        Cursor {
            sec,
            reader: None,
            no: sec.line,
            pos: sec.start,
            sum: sec.sum,
            body: Body::of(&sec.run),
            keep_open,
            turn: turn.max(1),
            ids: Vec::new(),
            vals: Vec::new(),
            at: 0,
            ended: false,
            scratch: Vec::new(),
        }
    }

    fn refill(&mut self) -> Result<()> {
        let sec = self.sec;
        let mut l = match self.reader.take() {
            Some(l) => l,
            None => {
                let io = |source| Error::Io {
                    path: sec.path.clone(),
                    source,
                };
                let mut f = File::open(&sec.path).map_err(io)?;
                f.seek(SeekFrom::Start(self.pos)).map_err(io)?;
                let cap = if self.keep_open { 1 << 16 } else { 1 << 13 };
                LineReader::at(
                    &sec.path,
                    BufReader::with_capacity(cap, f),
                    self.no,
                    self.pos,
                    self.sum,
                )
            }
        };
        self.ids.clear();
        self.vals.clear();
        self.at = 0;
        for _ in 0..self.turn {
            match l.next_draw(&sec.file, &sec.run, &mut self.body, &mut self.scratch)? {
                Some(k) => {
                    self.ids.push(k);
                    self.vals.extend_from_slice(&self.scratch);
                }
                None => {
                    self.ended = true;
                    break;
                }
            }
        }
        (self.no, self.pos, self.sum) = (l.no, l.pos, l.sum);
        if self.keep_open && !self.ended {
            self.reader = Some(l);
        }
        Ok(())
    }

    /// The next draw: its number and values.
    fn next(&mut self) -> Result<Option<(u64, &[f64])>> {
        if self.at == self.ids.len() {
            if self.ended {
                return Ok(None);
            }
            self.refill()?;
            if self.at == self.ids.len() {
                return Ok(None);
            }
        }
        let n = self.sec.run.indices.len();
        let t = self.at;
        self.at += 1;
        Ok(Some((self.ids[t], &self.vals[t * n..(t + 1) * n])))
    }

    /// Checks that the section ends here, with the draws the first pass
    /// counted, and closes the part.
    fn finish(&mut self) -> Result<()> {
        if self.at < self.ids.len() {
            return Err(self.sec.changed());
        }
        while !self.ended {
            self.refill()?;
            if !self.ids.is_empty() {
                return Err(self.sec.changed());
            }
        }
        self.reader = None;
        if self.body.count != self.sec.count {
            return Err(self.sec.changed());
        }
        Ok(())
    }
}

/// A run merged from its parts: the run without draws (unsplit) and the
/// summaries of all its draws.
#[derive(Clone, Debug)]
pub struct MergedRun {
    /// The network file's label (the first part's).
    pub file: String,
    /// The run without its draws, as the unsplit run (no shard).
    pub run: NullRun,
    /// Every draw, fed in draw order: [`DrawSummaries::summaries`] gives
    /// the unsplit run's summaries.
    pub summaries: DrawSummaries,
}

/// Merges saved-draws files into complete runs, in memory bounded by the
/// network (see the module documentation): the parts are grouped and
/// checked as by [`crate::null::merge_runs`] (same settings, each shard
/// once), every shard must hold all of its draws (an unsplit part all `R`,
/// or, with a sequential stop, enough for every index to reach it), and
/// each run's draws are fed in draw order to a [`DrawSummaries`]. The
/// summaries equal those of the unsplit run, bit for bit.
///
/// Cost: two reads of every part; `O(D)` for `D` draws in all.
///
/// Errors: as [`index_file`] for a damaged part (naming the file and
/// line), [`Error::InvalidArgument`] naming the run for parts that do not
/// make a complete run.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{index::IndexKind, Network};
/// use nidus::null::{merge_stream::merge_files, run_null, NullConfig, NullModel, Shard};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 1], [0, 1, 0]]).unwrap();
/// let mut config = NullConfig::new(NullModel::FixedRows, vec![IndexKind::named("nodf").unwrap()], 20, 5);
/// let whole = run_null(&net, &config).unwrap();
/// let mut paths = Vec::new();
/// for i in 1..=2 {
///     config.shard = Some(Shard::new(i, 2).unwrap());
///     let mut text = Vec::new();
///     run_null(&net, &config).unwrap().write_draws("web.csv", &mut text).unwrap();
///     let p = std::env::temp_dir().join(format!("nidus-merge-doc-{}-{i}.tsv", std::process::id()));
///     std::fs::write(&p, &text).unwrap();
///     paths.push(p);
/// }
/// let merged = merge_files(&paths).unwrap();
/// assert_eq!(merged[0].summaries.summaries().unwrap(), whole.summaries().unwrap());
/// for p in paths { std::fs::remove_file(p).unwrap(); }
/// ```
pub fn merge_files<P: AsRef<Path>>(paths: &[P]) -> Result<Vec<MergedRun>> {
    merge_files_with_limit(paths, EXACT_DRAWS)
}

/// As [`merge_files`], with summaries that keep at most `limit` draws
/// exactly ([`DrawSummaries::with_limit`]); for tests of the streaming
/// summaries on few draws.
#[doc(hidden)]
pub fn merge_files_with_limit<P: AsRef<Path>>(paths: &[P], limit: usize) -> Result<Vec<MergedRun>> {
    let mut parts = Vec::new();
    for p in paths {
        for s in index_file(p.as_ref())? {
            parts.push((s.file.clone(), s.run.clone(), s));
        }
    }
    let groups = group_parts(parts)?;
    // Every count is checked before any part is read a second time.
    for (label, runs) in &groups {
        let what = format!("{label} / {}", runs[0].0.model.name());
        for (run, sec) in runs {
            let r = run.draws;
            match run.shard {
                Some(s) => {
                    let share = (r + s.count() - s.index()) / s.count();
                    if sec.count < share {
                        return Err(Error::InvalidArgument(format!(
                            "{what}: shard {s} in {} holds {} of its {share} draws: the shard \
                             was interrupted (continue it with `nidus null ... --shard {s} \
                             --save-draws PART --resume PART`)",
                            sec.path.display(),
                            sec.count
                        )));
                    }
                }
                None if sec.count < r && run.stop_after.is_none() => {
                    return Err(Error::InvalidArgument(format!(
                        "{what}: {} of the {r} draws are present in {}; a part is truncated \
                         (an interrupted run? continue it with `nidus null ... --save-draws PART \
                         --resume PART`)",
                        sec.count,
                        sec.path.display()
                    )));
                }
                None => {}
            }
        }
    }
    let mut out = Vec::with_capacity(groups.len());
    for (label, runs) in groups {
        let mut head = runs[0].0.clone();
        let k = runs.len();
        let keep_open = k <= MAX_OPEN;
        let turn = if keep_open {
            64
        } else {
            (TURN_LINES / k).clamp(1, 1024)
        };
        let mut cursors: Vec<Cursor<'_>> = runs
            .iter()
            .map(|(_, s)| Cursor::new(s, keep_open, turn))
            .collect();
        let dirs: Vec<Direction> = head.indices.iter().map(|i| i.more_nested()).collect();
        let mut acc =
            DrawSummaries::with_limit(head.observed.clone(), dirs.clone(), head.stop_after, limit);
        let mut hits = vec![0usize; dirs.len()];
        let total: usize = runs.iter().map(|r| r.1.count).sum();
        for d in 0..total as u64 {
            let c = &mut cursors[(d % k as u64) as usize];
            let sec = c.sec;
            match c.next()? {
                Some((id, v)) if id == d => {
                    acc.push(v);
                    for (i, (&x, &dir)) in v.iter().zip(&dirs).enumerate() {
                        hits[i] += usize::from(as_extreme(x, head.observed[i], dir));
                    }
                }
                _ => return Err(sec.changed()),
            }
        }
        for c in &mut cursors {
            c.finish()?;
        }
        if let Some(h) = head.stop_after {
            if total < head.draws && hits.iter().any(|&x| x < h) {
                return Err(Error::InvalidArgument(format!(
                    "{label} / {}: {total} of the {} draws are present and the sequential \
                     stop was not reached; a part is truncated",
                    head.model.name(),
                    head.draws
                )));
            }
        }
        head.shard = None;
        out.push(MergedRun {
            file: label,
            run: head,
            summaries: acc,
        });
    }
    Ok(out)
}
