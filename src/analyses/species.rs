//! Which species make a network nested: per-species contributions to NODF
//! (Saavedra, Stouffer, Uzzi & Bascompte 2011, Nature 478:233-235), the
//! change of NODF when a species is left out, and each species' share of
//! the matrix temperature (Atmar & Patterson 1993, Oecologia 96:373-382).
//!
//! * [`species_contributions`]: the whole table for every species of both
//!   sides ([`SpeciesAnalysis`], one [`SpeciesRecord`] each).
//! * [`NodfEngine`]: the incremental NODF behind the contributions (one
//!   species' cells replaced, updated in `O(k n / 64 + |D| s)` instead of a
//!   full NODF; see its module for the formulas).
//! * [`redraw`], [`leave_one_out`], [`idiosyncratic_temperatures`]: the
//!   three parts, usable alone.
//!
//! Definitions, defaults and sources: `docs/methods.md`, section "Species
//! roles"; METHODS.md §8.

use std::fmt;
use std::str::FromStr;

use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;

use crate::bits::BitMatrix;
use crate::error::{Error, Result};
use crate::metrics::temperature::{temperature_with_table, UnexpectednessTable, U_MAX};
use crate::metrics::{nodf, wnodf, Order, TemperatureOptions};
use crate::network::{Csr, Network, Weight};
use crate::null::{draw_key, floyd, shuffle};

pub mod engine;

pub use engine::{NodfEngine, Scratch, Side, OVERLAP_TABLE_LIMIT};

/// How a species' cells are re-drawn for its contribution.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub enum RedrawModel {
    /// `proportional`: each cell of the species present independently with
    /// the probability of Bascompte et al. (2003, PNAS 100:9383-9387),
    /// `(d_i / n + d_j / m) / 2` with the observed degrees (the default).
    #[default]
    #[cfg_attr(feature = "serde", serde(rename = "proportional"))]
    Proportional,
    /// `keep-degree`: the species keeps its degree; its links go to a
    /// uniformly random set of partners on the other side.
    #[cfg_attr(feature = "serde", serde(rename = "keep-degree"))]
    KeepDegree,
}

impl RedrawModel {
    /// Every model.
    pub const ALL: &'static [RedrawModel] = &[RedrawModel::Proportional, RedrawModel::KeepDegree];

    /// The command-line name.
    pub fn name(self) -> &'static str {
        match self {
            RedrawModel::Proportional => "proportional",
            RedrawModel::KeepDegree => "keep-degree",
        }
    }
}

impl fmt::Display for RedrawModel {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for RedrawModel {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        crate::error::find_by_name(s, RedrawModel::ALL, RedrawModel::name, "re-draw model")
    }
}

/// Settings of [`species_contributions`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SpeciesOptions {
    /// How a species' cells are re-drawn (default `proportional`).
    pub model: RedrawModel,
    /// Re-draws per species `R` (default 999; at least 2).
    pub draws: usize,
    /// Seed: draw `r` of a species depends on `(seed, species key, r)` alone.
    pub seed: u64,
    /// Random starts of the temperature packing besides the degree-sorted
    /// one (see [`TemperatureOptions`]); the packing's own seed is `seed`.
    pub pack_restarts: usize,
    /// Also compute WNODF contributions ([`wnodf_redraw`]; full WNODF per
    /// draw, so much slower than the NODF ones). Default `false`.
    pub wnodf: bool,
}

impl Default for SpeciesOptions {
    /// `proportional`, 999 draws, seed 1, 4 packing restarts, no WNODF.
    fn default() -> Self {
        SpeciesOptions {
            model: RedrawModel::Proportional,
            draws: 999,
            seed: 1,
            pack_restarts: 4,
            wnodf: false,
        }
    }
}

/// The plain-words role of a species (rule at [`Role::of`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub enum Role {
    /// A generalist (degree above its side's median) that does not break
    /// the pattern.
    #[cfg_attr(feature = "serde", serde(rename = "core"))]
    Core,
    /// A species of median degree or less that does not break the pattern:
    /// its partners sit inside those of the generalists.
    #[cfg_attr(feature = "serde", serde(rename = "nested inside"))]
    NestedInside,
    /// Contribution `<= -2`: the network is clearly less nested with this
    /// species' observed links than with re-drawn ones.
    #[cfg_attr(feature = "serde", serde(rename = "breaks the pattern"))]
    BreaksPattern,
    /// No links: no contribution is defined.
    #[cfg_attr(feature = "serde", serde(rename = "no links"))]
    NoLinks,
}

/// Contributions at or below `-ROLE_Z` read as "breaks the pattern" (two
/// standard deviations: common practice for a z-score).
pub const ROLE_Z: f64 = 2.0;

impl Role {
    /// The rule: no links gives [`Role::NoLinks`]; a contribution `<=
    /// -`[`ROLE_Z`] gives [`Role::BreaksPattern`]; otherwise a degree above
    /// the median degree of the species' side gives [`Role::Core`], else
    /// [`Role::NestedInside`].
    pub fn of(degree: usize, contribution: Option<f64>, side_median: f64) -> Role {
        if degree == 0 {
            Role::NoLinks
        } else if contribution.is_some_and(|c| c <= -ROLE_Z) {
            Role::BreaksPattern
        } else if degree as f64 > side_median {
            Role::Core
        } else {
            Role::NestedInside
        }
    }

    /// The words used in output.
    pub fn name(self) -> &'static str {
        match self {
            Role::Core => "core",
            Role::NestedInside => "nested inside",
            Role::BreaksPattern => "breaks the pattern",
            Role::NoLinks => "no links",
        }
    }
}

/// Mean and standard deviation of one species' re-drawn NODF values.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Redraws {
    /// Mean of `N*_i`.
    pub mean: f64,
    /// Standard deviation of `N*_i` (divisor `R - 1`).
    pub sd: f64,
    /// `(N - mean) / sd`; `None` when `sd = 0`.
    pub z: Option<f64>,
}

/// One species' row of the table.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SpeciesRecord {
    /// `row` or `col`.
    pub side: Side,
    /// Position in its side, 0-based, in input order.
    pub index: usize,
    /// Its label.
    pub label: String,
    /// Its number of partners.
    pub degree: usize,
    /// Contribution z-score `c_i = (N - mean(N*_i)) / sd(N*_i)`; `None` for
    /// a species with no links or when every re-draw gives the same NODF.
    pub contribution: Option<f64>,
    /// Mean NODF of the re-draws (`None` for a species with no links).
    pub null_mean: Option<f64>,
    /// Standard deviation of the re-draws (`None` likewise).
    pub null_sd: Option<f64>,
    /// NODF without this species (partners left with no link dropped)
    /// minus the observed NODF; `None` when NODF is undefined without it.
    pub leave_one_out: Option<f64>,
    /// `100 * sum of u over the species' cells / (k U_max)` in the packed
    /// order, `k` the size of the other side (see
    /// [`idiosyncratic_temperatures`]).
    pub idiosyncratic_temperature: f64,
    /// The plain-words reading ([`Role::of`]).
    pub role: Role,
    /// WNODF contribution ([`wnodf_redraw`]) when asked for
    /// ([`SpeciesOptions::wnodf`]) and defined, else `None`.
    pub wnodf_contribution: Option<f64>,
}

/// The species table of one network.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SpeciesAnalysis {
    /// Observed NODF (sorted order).
    pub nodf: f64,
    /// Temperature in the packed order (the mean of the row values, and of
    /// the column values, of `idiosyncratic_temperature`).
    pub temperature: f64,
    /// The settings used.
    pub options: SpeciesOptions,
    /// Every species of both sides, by decreasing contribution (undefined
    /// contributions last; ties: rows first, then input order).
    pub species: Vec<SpeciesRecord>,
}

impl SpeciesAnalysis {
    /// `(label, contribution)` of every species with a defined contribution,
    /// in table order: the plain data a species figure needs.
    pub fn contributions(&self) -> Vec<(&str, f64)> {
        self.species
            .iter()
            .filter_map(|s| s.contribution.map(|c| (s.label.as_str(), c)))
            .collect()
    }
}

/// Contributions, leave-one-out changes and idiosyncratic temperatures of
/// every species of both sides of `net`'s binary view, sorted by
/// contribution.
///
/// * Contribution (Saavedra et al. 2011): `c_i = (N - mean(N*_i)) /
///   sd(N*_i)` over `R` re-draws of species `i`'s cells alone ([`redraw`]),
///   `N` NODF in the sorted order.
/// * Leave-one-out: [`leave_one_out`].
/// * Idiosyncratic temperature: [`idiosyncratic_temperatures`].
///
/// Weights are ignored (the binary view is used), except by the optional
/// WNODF contributions ([`SpeciesOptions::wnodf`]). Species are processed in
/// parallel; each one's draws depend on `(seed, species key, r)` alone and
/// are summed in draw order, so the result is identical for any number of
/// threads.
///
/// Cost: the engine ([`NodfEngine`]) plus `(m + n) R` incremental NODF
/// evaluations, `(m + n)` full NODF computations for the leave-one-out
/// values, and one packed temperature (see [`TemperatureOptions`]). Memory
/// `O(m n / 8 + m^2 + n^2)` bytes (the overlap tables, capped at
/// [`OVERLAP_TABLE_LIMIT`] entries each), independent of `R`.
///
/// Errors: `draws < 2`, a 1 x 1 network, a network above the temperature
/// cell limit, or one too large for a bit table.
///
/// References: Saavedra, Stouffer, Uzzi & Bascompte (2011), Nature
/// 478:233-235; Bascompte, Jordano, Melián & Olesen (2003), PNAS
/// 100:9383-9387; Almeida-Neto et al. (2008), Oikos 117:1227-1239; Atmar &
/// Patterson (1993), Oecologia 96:373-382.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::analyses::species::{species_contributions, Side, SpeciesOptions};
/// use nidus::Network;
/// let net = Network::from_array(array![
///     [1, 1, 1, 1],
///     [1, 1, 1, 0],
///     [1, 1, 0, 0],
///     [0, 0, 1, 1],
/// ])
/// .unwrap();
/// let opts = SpeciesOptions { draws: 199, seed: 7, ..SpeciesOptions::default() };
/// let a = species_contributions(&net, &opts).unwrap();
/// assert_eq!(a.species.len(), 8);
/// // The row that breaks the staircase comes last among the rows.
/// let rows: Vec<_> = a.species.iter().filter(|s| s.side == Side::Row).collect();
/// assert_eq!(rows.last().unwrap().label, "R4");
/// ```
pub fn species_contributions<T: Weight>(
    net: &Network<T>,
    opts: &SpeciesOptions,
) -> Result<SpeciesAnalysis> {
    if opts.draws < 2 {
        return Err(Error::InvalidArgument(format!(
            "species contributions need at least 2 draws per species (an sd), got {}",
            opts.draws
        )));
    }
    let b = net.binary()?;
    let (m, n) = (b.nrows(), b.ncols());
    let engine = NodfEngine::new(&b)?;
    let temps = idiosyncratic_temperatures(&b, opts.pack_restarts, opts.seed)?;
    let all: Vec<(Side, usize)> = (0..m)
        .map(|i| (Side::Row, i))
        .chain((0..n).map(|j| (Side::Col, j)))
        .collect();
    let weighted = if opts.wnodf {
        let csr = net.to_f64().csr().into_owned();
        let t = csr.transpose();
        Some((csr, t))
    } else {
        None
    };
    let results: Vec<(Option<Redraws>, Option<f64>, Option<f64>)> = all
        .par_iter()
        .map_init(
            || engine.scratch(),
            |scratch, &(side, i)| {
                let r = redraw(&engine, side, i, opts.model, opts.draws, opts.seed, scratch);
                let w = weighted.as_ref().and_then(|(rows, cols)| {
                    let own = if side == Side::Row { rows } else { cols };
                    wnodf_redraw(own, side, i, opts.draws, opts.seed).and_then(|r| r.z)
                });
                (r, leave_one_out(&b, side, i, engine.observed()), w)
            },
        )
        .collect();
    let medians = [
        median(engine.degrees(Side::Row)),
        median(engine.degrees(Side::Col)),
    ];
    let mut species: Vec<SpeciesRecord> = all
        .iter()
        .zip(results)
        .map(|(&(side, i), (r, loo, wz))| {
            let degree = engine.degrees(side)[i];
            let contribution = r.and_then(|r| r.z);
            let (label, temp, med) = match side {
                Side::Row => (&net.row_labels()[i], temps.rows[i], medians[0]),
                Side::Col => (&net.col_labels()[i], temps.cols[i], medians[1]),
            };
            SpeciesRecord {
                side,
                index: i,
                label: label.clone(),
                degree,
                contribution,
                null_mean: r.map(|r| r.mean),
                null_sd: r.map(|r| r.sd),
                leave_one_out: loo,
                idiosyncratic_temperature: temp,
                role: Role::of(degree, contribution, med),
                wnodf_contribution: wz,
            }
        })
        .collect();
    species.sort_by(|a, b| match (a.contribution, b.contribution) {
        (Some(x), Some(y)) => y.total_cmp(&x),
        (Some(_), None) => std::cmp::Ordering::Less,
        (None, Some(_)) => std::cmp::Ordering::Greater,
        (None, None) => std::cmp::Ordering::Equal,
    });
    Ok(SpeciesAnalysis {
        nodf: engine.observed(),
        temperature: temps.temperature,
        options: *opts,
        species,
    })
}

fn median(d: &[usize]) -> f64 {
    let mut v = d.to_vec();
    v.sort_unstable();
    let k = v.len();
    if k == 0 {
        0.0
    } else if k % 2 == 1 {
        v[k / 2] as f64
    } else {
        (v[k / 2 - 1] + v[k / 2]) as f64 / 2.0
    }
}

/// The key of a species' random stream: `2 i` for row `i`, `2 j + 1` for
/// column `j` (so a species' key does not depend on the other side's size).
pub fn species_key(side: Side, index: usize) -> u64 {
    2 * index as u64 + u64::from(side == Side::Col)
}

/// The generator of draw `r` of a species: Xoshiro256PlusPlus seeded from
/// `draw_key(draw_key(seed, species_key), r)` (the null module's draw-key
/// contract applied twice: first to the species, then to the draw).
pub fn species_rng(seed: u64, side: Side, index: usize, r: u64) -> Xoshiro256PlusPlus {
    Xoshiro256PlusPlus::seed_from_u64(draw_key(draw_key(seed, species_key(side, index)), r))
}

/// Re-draws species `index` of `side` `draws` times with `model` and
/// summarises the NODF values `N*_i`: mean, sd (divisor `R - 1`) and the
/// z-score `(N - mean) / sd`. `None` for a species with no links (its
/// contribution is undefined: it has nothing to re-draw).
///
/// Draw `r` uses [`species_rng`]`(seed, side, index, r)` alone:
/// * `proportional`: cell `j` present when `u < (d_i / k + d_j / m') / 2`
///   (`k` members on the other side, `m'` on the species' side, observed
///   degrees), `u` a 53-bit uniform from one `u64` per cell in cell order
///   (as [`crate::null::unit`]);
/// * `keep-degree`: `d_i` distinct partners by Floyd's algorithm
///   (Bentley & Floyd 1987) with Lemire's bounded integers
///   ([`crate::null::below`]).
///
/// Values are accumulated in draw order (Welford's update), so the result
/// does not depend on threads.
///
/// Cost: `R` evaluations of [`NodfEngine::nodf_with`] plus `O(R k)` random
/// numbers (`proportional`) or `O(R d_i)` (`keep-degree`).
///
/// # Example
/// ```
/// use nidus::analyses::species::{redraw, NodfEngine, RedrawModel, Side};
/// use nidus::BitMatrix;
/// let b = BitMatrix::from_fn(5, 5, |i, j| i + j < 5);
/// let engine = NodfEngine::new(&b).unwrap();
/// let mut s = engine.scratch();
/// let r = redraw(&engine, Side::Row, 2, RedrawModel::KeepDegree, 99, 1, &mut s).unwrap();
/// assert!(r.mean < 100.0 && r.z.unwrap() > 0.0); // a staircase is maximally nested
/// ```
pub fn redraw(
    engine: &NodfEngine,
    side: Side,
    index: usize,
    model: RedrawModel,
    draws: usize,
    seed: u64,
    scratch: &mut Scratch,
) -> Option<Redraws> {
    let degrees = engine.degrees(side);
    let d = degrees[index];
    if d == 0 {
        return None;
    }
    let other = match side {
        Side::Row => engine.degrees(Side::Col),
        Side::Col => engine.degrees(Side::Row),
    };
    let (k, own_len) = (other.len(), degrees.len());
    engine.focus(side, index, scratch);
    // unit(rng) < p  <=>  (x >> 11) < ceil(p 2^53), exactly.
    let thresholds: Vec<u64> = match model {
        RedrawModel::Proportional => other
            .iter()
            .map(|&c| {
                let p = (d as f64 / k as f64 + c as f64 / own_len as f64) / 2.0;
                (p * (1u64 << 53) as f64).ceil() as u64
            })
            .collect(),
        RedrawModel::KeepDegree => Vec::new(),
    };
    let mut cells = vec![0u64; engine.words(side)];
    let mut acc = Welford::default();
    for r in 0..draws {
        let mut rng = species_rng(seed, side, index, r as u64);
        cells.fill(0);
        match model {
            RedrawModel::Proportional => {
                use rand::RngCore;
                for (j, &t) in thresholds.iter().enumerate() {
                    if (rng.next_u64() >> 11) < t {
                        cells[j / 64] |= 1 << (j % 64);
                    }
                }
            }
            RedrawModel::KeepDegree => floyd(&mut rng, k, d, |t, j| {
                let pick = if (cells[t / 64] >> (t % 64)) & 1 == 1 {
                    j
                } else {
                    t
                };
                cells[pick / 64] |= 1 << (pick % 64);
            }),
        }
        acc.push(engine.nodf_with(&cells, scratch));
    }
    Some(acc.finish(engine.observed(), draws))
}

/// WNODF contribution of species `index` of `side`: `(W - mean(W*_i)) /
/// sd(W*_i)` with `W` the observed WNODF (sorted order; Almeida-Neto &
/// Ulrich 2011) and `W*_i` the WNODF of `draws` networks in which only the
/// species' cells are re-drawn: its `k` cell values (visit counts and
/// zeros) are permuted uniformly across the other side's `k` members, so it
/// keeps its degree and its visit counts and moves them to random partners.
/// `own` holds the species' side as compressed rows (the network for a row
/// species, its transpose for a column species; WNODF is the same either
/// way). `None` for a species with no links.
///
/// Draw `r` uses [`species_rng`]`(seed, side, index, r)` and a Fisher-Yates
/// shuffle with Lemire's bounded integers ([`crate::null::below`]).
///
/// Cost: per draw, a compressed copy (`O(L log L)`) and a full WNODF
/// (`O(L log m)`); no incremental update.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::analyses::species::{wnodf_redraw, Side};
/// use nidus::Csr;
/// let w = array![[5.0, 4.0, 3.0], [2.0, 1.0, 0.0], [1.0, 0.0, 0.0]];
/// let csr = Csr::from_dense(w.view()); // WNODF 100
/// let r = wnodf_redraw(&csr, Side::Row, 1, 99, 1).unwrap();
/// assert!(r.mean < 100.0 && r.z.unwrap() > 0.0);
/// ```
pub fn wnodf_redraw(
    own: &Csr<f64>,
    side: Side,
    index: usize,
    draws: usize,
    seed: u64,
) -> Option<Redraws> {
    let (k, width) = (own.nrows(), own.ncols());
    let (cols, vals) = own.row(index);
    if cols.is_empty() {
        return None;
    }
    let observed = wnodf(own, Order::Sorted).ok()?.total;
    let mut base: Vec<(u32, u32, f64)> = Vec::with_capacity(own.nnz());
    for r in (0..k).filter(|&r| r != index) {
        let (c, v) = own.row(r);
        base.extend(c.iter().zip(v).map(|(&j, &x)| (r as u32, j, x)));
    }
    let mut cells = vec![0.0f64; width];
    let mut acc = Welford::default();
    for r in 0..draws {
        cells.fill(0.0);
        for (&j, &x) in cols.iter().zip(vals) {
            cells[j as usize] = x;
        }
        shuffle(&mut cells, &mut species_rng(seed, side, index, r as u64));
        let mut t = base.clone();
        t.extend(
            cells
                .iter()
                .enumerate()
                .filter(|(_, &x)| x > 0.0)
                .map(|(j, &x)| (index as u32, j as u32, x)),
        );
        let v = wnodf(&Csr::from_triplets(k, width, t), Order::Sorted)
            .ok()?
            .total;
        acc.push(v);
    }
    Some(acc.finish(observed, draws))
}

/// Welford's running mean and sum of squares, in draw order, with the
/// all-equal case kept exact (sd 0).
#[derive(Default)]
struct Welford {
    n: usize,
    mean: f64,
    m2: f64,
    first: Option<f64>,
    constant: bool,
}

impl Welford {
    fn push(&mut self, v: f64) {
        match self.first {
            None => {
                self.first = Some(v);
                self.constant = true;
            }
            Some(f) => self.constant &= f.to_bits() == v.to_bits(),
        }
        self.n += 1;
        let delta = v - self.mean;
        self.mean += delta / self.n as f64;
        self.m2 += delta * (v - self.mean);
    }

    fn finish(&self, observed: f64, draws: usize) -> Redraws {
        let (mean, sd) = if self.constant {
            (self.first.unwrap_or(f64::NAN), 0.0)
        } else {
            (self.mean, (self.m2 / (draws as f64 - 1.0)).sqrt())
        };
        let z = (sd > 0.0).then(|| (observed - mean) / sd);
        Redraws { mean, sd, z }
    }
}

/// NODF (sorted order) of `b` without species `index` of `side`, with the
/// partners that are left with no link dropped (as the readers drop
/// species with no links), minus `observed` (NODF of `b`). `None` when NODF
/// is undefined without the species (no pair left on either side).
///
/// Cost: one copy of the reduced matrix (`O(m n / 64 + L)`) and one NODF.
///
/// Panics when `index` is out of range for `side`.
///
/// # Example
/// ```
/// use nidus::analyses::species::{leave_one_out, Side};
/// use nidus::metrics::{nodf, Order};
/// use nidus::BitMatrix;
/// let b = BitMatrix::from_fn(3, 3, |i, j| i + j < 3); // staircase, NODF 100
/// // Without the top row, column 3 has no link left and is dropped:
/// // a 2 x 2 staircase, still NODF 100.
/// assert_eq!(leave_one_out(&b, Side::Row, 0, 100.0), Some(0.0));
/// ```
pub fn leave_one_out(b: &BitMatrix, side: Side, index: usize, observed: f64) -> Option<f64> {
    let t;
    let own = match side {
        Side::Row => b,
        Side::Col => {
            t = b.transpose();
            &t
        }
    };
    let (k, width) = (own.nrows(), own.ncols());
    let mut deg = own.col_degrees();
    for j in own.row_ones(index) {
        deg[j] -= 1;
    }
    let keep: Vec<usize> = (0..width).filter(|&j| deg[j] > 0).collect();
    let mut pos = vec![usize::MAX; width];
    for (q, &j) in keep.iter().enumerate() {
        pos[j] = q;
    }
    if k < 2 || keep.is_empty() {
        return None;
    }
    let mut reduced = BitMatrix::zeros(k - 1, keep.len());
    for (r, src) in (0..k).filter(|&r| r != index).enumerate() {
        if keep.len() == width {
            reduced.row_mut(r).copy_from_slice(own.row(src));
        } else {
            for j in own.row_ones(src) {
                reduced.set(r, pos[j], true);
            }
        }
    }
    nodf(&reduced, Order::Sorted)
        .ok()
        .map(|p| p.total - observed)
}

/// Idiosyncratic temperatures of every row and every column in the packed
/// order, and the packed `T` itself.
///
/// With `u_ij` the unexpectedness of cell `(i, j)` at its packed position
/// (METHODS.md §4), row `i` of an `m x n` matrix scores
/// `T_i = 100 * sum_j u_ij / (n U_max)` and column `j` scores
/// `T_j = 100 * sum_i u_ij / (m U_max)`, so that the mean over rows and
/// the mean over columns both equal `T = 100 * sum u / (m n U_max)`. A row
/// whose cells are as the isocline predicts scores 0; values well above
/// the network's `T` mark the species that break the pattern.
///
/// The packed order comes from [`temperature_with_table`] with
/// `restarts` random starts seeded by `seed`.
///
/// Cost: one packed temperature (see [`TemperatureOptions`]) plus `O(m n)`.
///
/// Reference: Atmar & Patterson (1993), Oecologia 96:373-382.
///
/// # Example
/// ```
/// use nidus::analyses::species::idiosyncratic_temperatures;
/// use nidus::BitMatrix;
/// let b = BitMatrix::from_fn(4, 4, |i, j| i + j < 4 || (i, j) == (3, 3));
/// let it = idiosyncratic_temperatures(&b, 0, 1).unwrap();
/// let t = it.temperature;
/// let mean = it.rows.iter().sum::<f64>() / 4.0;
/// assert!((mean - t).abs() < 1e-9 * (1.0 + t));
/// assert!((it.cols.iter().sum::<f64>() / 4.0 - t).abs() < 1e-9 * (1.0 + t));
/// ```
pub fn idiosyncratic_temperatures(
    b: &BitMatrix,
    restarts: usize,
    seed: u64,
) -> Result<IdiosyncraticTemperatures> {
    let (m, n) = (b.nrows(), b.ncols());
    let table = UnexpectednessTable::new(m, n, b.count_ones())?;
    let opts = TemperatureOptions {
        pack: true,
        restarts,
        seed,
    };
    let t = temperature_with_table(b, &table, &opts)?;
    let (mut rows, mut cols) = (vec![0.0; m], vec![0.0; n]);
    for (pi, &r) in t.row_order.iter().enumerate() {
        for (pj, &c) in t.col_order.iter().enumerate() {
            let u = if b.get(r, c) {
                table.if_present(pi, pj)
            } else {
                table.if_absent(pi, pj)
            };
            rows[r] += u;
            cols[c] += u;
        }
    }
    for x in &mut rows {
        *x = 100.0 * *x / (n as f64 * U_MAX);
    }
    for x in &mut cols {
        *x = 100.0 * *x / (m as f64 * U_MAX);
    }
    Ok(IdiosyncraticTemperatures {
        rows,
        cols,
        temperature: t.packed.unwrap_or(t.sorted),
    })
}

/// Per-species temperatures of [`idiosyncratic_temperatures`].
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct IdiosyncraticTemperatures {
    /// One value per row, in input order.
    pub rows: Vec<f64>,
    /// One value per column, in input order.
    pub cols: Vec<f64>,
    /// The packed `T` of the whole matrix (the mean of `rows`, and of `cols`).
    pub temperature: f64,
}
