//! Matrix temperature (Atmar & Patterson 1993, Oecologia 96:373-382) with
//! the isocline family of Rodriguez-Girones & Santamaria (2006, J. Biogeogr.
//! 33:924-935), in the given, degree-sorted and packed orders
//! (docs/methods.md §4).
//!
//! # Geometry
//! The `m x n` matrix sits in the unit square, rows top to bottom, columns
//! left to right; cell `(i, j)` (0-based here) has centre
//! `x = (j + 1/2)/n`, `y = (i + 1/2)/m`. For `p > 0` the isocline is
//! `(1-x)^p + (1-y)^p = 1`; the presence region, the top-left side
//! `(1-x)^p + (1-y)^p > 1`, has area `1 - Gamma(1+1/p)^2 / Gamma(1+2/p)`,
//! and `p` is chosen so that this area equals the fill `phi = L/(m n)`
//! ([`isocline_p`]).
//!
//! Through each cell centre runs the line `(x + t, y + t)` parallel to the
//! main diagonal; its part inside the square has parameter length
//! `D = 1 - |x - y|` and it crosses the isocline at exactly one `t*`
//! (`t* > 0` inside the presence region). A presence outside the region or
//! an absence inside it is unexpected and scores `u = (t*/D)^2`; other
//! cells score 0. Then `T = 100 sum(u) / (m n U_max)` with
//! `U_max = 0.04145` ([`U_MAX`]); `T` can exceed 100, and a matrix of fill 0
//! or 1 has `T = 0` (convention).
//!
//! # Packing
//! The packed order is the pair of row and column orders that minimises
//! `T`. For a fixed column order, placing data row `r` at position `i` costs
//! `sum_j u(i, j | cell)`, which depends on `r` only through its own cells,
//! so the best row order is a linear assignment problem ([`crate::numerics::assign`]);
//! the same holds for columns given the rows. See [`TemperatureOptions`] for
//! the search built on that fact, exact on small matrices.

use rayon::prelude::*;

use crate::error::{Error, Result};
use crate::metrics::degree_order;
use crate::metrics::registry::IndexOptions;
use crate::null::{purpose, shuffle, stream_rng};
use crate::numerics::assign::Workspace;
use crate::numerics::special::ln_gamma;
use crate::storage::BitMatrix;
use crate::storage::NetView;
use crate::tolerance;

/// The normalising constant of temperature: `T = 100 U / U_max` with `U` the
/// mean unexpectedness per cell (Atmar & Patterson 1993). With it a large
/// uniformly random matrix at fill 1/2 scores close to 100 (its mean `u`
/// tends to `1/24 = 0.041667` under this geometry; see the tests).
pub const U_MAX: f64 = 0.04145;

/// Largest number of cells `m n` for which temperature is computed
/// (2^24, e.g. 4096 x 4096). The per-cell table takes two `f64` per cell
/// (256 MiB at the limit) and each cell needs one root solve: measured
/// with two threads in release builds (`examples/temperature_timing.rs`,
/// random square matrices), the given and sorted values took 15 ms at
/// 200 x 200, 1.8 s at 2000 x 2000 and 16 s at 4096 x 4096. Packing costs
/// far more at large sizes (see [`TemperatureOptions`]). Larger networks get
/// [`Error::TooLarge`].
pub const TEMPERATURE_CELL_LIMIT: usize = 1 << 24;

/// The exact packing enumerates every order of the smaller side `k =
/// min(m, n)` when `k <= 8` and `k! (K^3 + K L + m n) <= EXACT_WORK_LIMIT`,
/// with `K = max(m, n)`: roughly 0.1 s of work.
pub const EXACT_WORK_LIMIT: f64 = 5e7;

/// Largest side (rows or columns) whose order the packing search finds:
/// each step solves a `k x k` assignment (`8 k^2` bytes, `O(k^3)` time at
/// worst) for a side of `k` members, so a 1 x 100,000 table would need an
/// 80 GB table. Above it the packing is exact by the few-members search
/// when the smaller side has at most [`FEW_MEMBERS`] members and few
/// patterns ([`few_members_applies`]: every order of the small side, each
/// with the optimal order of the large side by a transportation problem
/// over the patterns of its members), and refused otherwise (use the
/// sorted order).
pub const PACKING_SIDE_LIMIT: usize = 2000;

/// Rounds of the alternating search from one start are capped here (each
/// accepted round lowers `T`, so in practice it stops long before).
const MAX_ROUNDS: usize = 1000;

/// How [`temperature`] searches for the packed order.
///
/// * `pack`: compute the packed order at all (the slow part; `false` gives
///   the given and sorted values only).
/// * `restarts`: random starts of the alternating search besides the
///   degree-sorted one (default 4). Cost grows linearly with it; 0 is the
///   cheapest packing. Ignored when the exact search applies.
/// * `seed`: start `k` (1-based) is a uniformly random pair of row and
///   column orders, shuffled by the crate's own Fisher-Yates shuffle on the
///   crate's stream [`stream_rng`]`(seed, purpose::TEMPERATURE_PACKING, k)`,
///   so results depend on `(seed, k)` alone: not on the number of threads,
///   nor on the version of rand.
///
/// The search. Exact, when the smaller side is small (see
/// [`EXACT_WORK_LIMIT`]): every order of the smaller side is tried, each
/// with the best order of the other side found by one exact assignment; this
/// visits the optimum, so the packed `T` is the global minimum over all row
/// and column orders. Otherwise, alternating: from each start, solve the row
/// assignment for the current columns, then the column assignment for the
/// current rows, and repeat until a whole round lowers `T` by no more than
/// `1e-12 (1 + U)`; keep the best start. This reaches a point that no
/// single-side reordering improves, not necessarily the global minimum. The
/// degree-sorted orders are always a candidate, so packed `T <=` sorted `T`.
/// Ties in `T` keep the first found (sorted start, then restarts in order).
///
/// Cost of the alternating search: each step builds an `m x m` (or
/// `n x n`) cost table in `O(m L)` and solves it by Jonker-Volgenant
/// shortest augmenting paths ([`crate::numerics::assign`]), `O(m^3)` at worst but
/// much less in practice because each solve starts from the prices of the
/// previous one; a start takes a few to a few tens of rounds. Measured in
/// release builds with two threads (criterion bench `benches/temperature.rs`
/// and `examples/temperature_timing.rs`, seeded random matrices): 200 x 200
/// at fill 0.2 with the default 5 starts, 0.3-0.6 s; 500 x 500 at fill 0.2
/// with one start (`restarts = 0`), about 1.2 s; 1000 x 1000 at fill 0.1
/// with one start, about 30 s. For matrices beyond a few hundred rows use
/// `restarts = 0`, or `pack = false`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct TemperatureOptions {
    /// Search for the packed order.
    pub pack: bool,
    /// Random starts besides the degree-sorted one.
    pub restarts: usize,
    /// Seed of the random starts.
    pub seed: u64,
}

impl TemperatureOptions {
    /// Options with these settings (`TemperatureOptions::default()` is
    /// `new(true, 4, 1)`; new settings may be added).
    pub const fn new(pack: bool, restarts: usize, seed: u64) -> Self {
        TemperatureOptions {
            pack,
            restarts,
            seed,
        }
    }

    /// These options with packing on or off.
    pub const fn with_pack(self, pack: bool) -> Self {
        TemperatureOptions { pack, ..self }
    }

    /// These options with `restarts` random starts.
    pub const fn with_restarts(self, restarts: usize) -> Self {
        TemperatureOptions { restarts, ..self }
    }

    /// These options with seed `seed` for the random starts.
    pub const fn with_seed(self, seed: u64) -> Self {
        TemperatureOptions { seed, ..self }
    }
}

impl Default for TemperatureOptions {
    /// `pack: true, restarts: 4, seed: 1`.
    fn default() -> Self {
        TemperatureOptions {
            pack: true,
            restarts: 4,
            seed: 1,
        }
    }
}

/// Temperature of one matrix in three orders.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Temperature {
    /// `T` with rows and columns in input order.
    pub given: f64,
    /// `T` with rows and columns by decreasing degree (ties in input order).
    pub sorted: f64,
    /// The smallest `T` found by packing (`None` when not asked for).
    pub packed: Option<f64>,
    /// The isocline exponent `p` for this fill (`+inf` at fill 0, 0 at fill 1).
    pub isocline_p: f64,
    /// Input row index at each position: the packed order when packed,
    /// else the sorted order.
    pub row_order: Vec<usize>,
    /// Input column index at each position, likewise.
    pub col_order: Vec<usize>,
}

/// Area of the presence region `(1-x)^p + (1-y)^p > 1` of the unit square:
/// `1 - Gamma(1+1/p)^2 / Gamma(1+2/p)` (the complement of the area of the
/// superellipse quadrant `a^p + b^p <= 1`).
///
/// Decreasing in `p`: 1 as `p -> 0`, 1/2 at `p = 1`, `1 - pi/4` at `p = 2`,
/// about `pi^2 / (6 p^2)` for large `p`. Evaluated as
/// `-expm1(2 ln Gamma(1+e) - ln Gamma(1+2e))` with `e = 1/p`, by a power
/// series in `e` when `e <= 0.02`, so small areas keep full relative
/// precision. Returns NaN for `p <= 0` or NaN.
///
/// Cost: `O(1)`.
///
/// # Example
/// ```
/// use nidus::metrics::temperature::isocline_area;
/// assert!((isocline_area(1.0) - 0.5).abs() < 1e-15);
/// assert!((isocline_area(0.5) - 5.0 / 6.0).abs() < 1e-14);
/// ```
pub fn isocline_area(p: f64) -> f64 {
    if p.is_nan() || p <= 0.0 {
        return f64::NAN;
    }
    if p.is_infinite() {
        return 0.0;
    }
    -log_quadrant(1.0 / p).exp_m1()
}

/// `ln(Gamma(1+e)^2 / Gamma(1+2e))`, the log of the quadrant area for
/// exponent `p = 1/e`.
fn log_quadrant(e: f64) -> f64 {
    if e > 0.02 {
        return 2.0 * ln_gamma(1.0 + e) - ln_gamma(1.0 + 2.0 * e);
    }
    // ln Gamma(1+z) = -gamma z + sum_{k>=2} (-1)^k zeta(k) z^k / k
    // (Abramowitz & Stegun 1964, 6.1.33), so the Euler-gamma terms cancel:
    // 2 lnG(1+e) - lnG(1+2e) = sum_{k>=2} (-1)^k zeta(k) (2 - 2^k) e^k / k.
    let mut sum = 0.0;
    let mut ek = e * e;
    for k in 2..=24usize {
        let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
        sum += sign * zeta(k) * (2.0 - (k as f64).exp2()) * ek / k as f64;
        ek *= e;
    }
    sum
}

/// Riemann zeta at integers `k >= 2`: exact or tabled values below 10, a
/// direct sum above (its tail past 40 is below `1e-16` there).
fn zeta(k: usize) -> f64 {
    use std::f64::consts::PI;
    match k {
        2 => PI * PI / 6.0,
        3 => ZETA_ODD[0],
        4 => PI.powi(4) / 90.0,
        5 => ZETA_ODD[1],
        6 => PI.powi(6) / 945.0,
        7 => ZETA_ODD[2],
        8 => PI.powi(8) / 9450.0,
        9 => ZETA_ODD[3],
        _ => (1..=40).rev().map(|n| (n as f64).powi(-(k as i32))).sum(),
    }
}

/// `zeta(3), zeta(5), zeta(7), zeta(9)`: the first three as tabulated in
/// OEIS A002117, A013663 and A013665 (Abramowitz & Stegun 1964, p. 811);
/// all four checked in the tests against the series summed to 2000 terms
/// with its Euler-Maclaurin tail, to 1e-15.
#[allow(clippy::excessive_precision)]
const ZETA_ODD: [f64; 4] = [
    1.2020569031595942,
    1.0369277551433699,
    1.0083492773819228,
    1.0020083928260822,
];

/// The isocline exponent `p` whose presence area equals `fill`
/// (see [`isocline_area`]): the unique solution of
/// `Gamma(1+1/p)^2 / Gamma(1+2/p) = 1 - fill`, found by bisection on
/// `ln(1/p)` to full double precision (about 120 evaluations).
///
/// `fill = 1/2` gives `p = 1` (the anti-diagonal). Limits: `fill <= 0`
/// gives `+inf`, `fill >= 1` gives 0; NaN gives NaN.
///
/// Cost: `O(1)` (a few hundred log-gamma evaluations).
///
/// # Example
/// ```
/// use nidus::metrics::temperature::isocline_p;
/// assert!((isocline_p(0.5) - 1.0).abs() < 1e-12);
/// assert!((isocline_p(1.0 - std::f64::consts::PI / 4.0) - 2.0).abs() < 1e-10);
/// ```
pub fn isocline_p(fill: f64) -> f64 {
    if fill.is_nan() {
        return f64::NAN;
    }
    if fill <= 0.0 {
        return f64::INFINITY;
    }
    if fill >= 1.0 {
        return 0.0;
    }
    // log_quadrant(e) is decreasing in e = 1/p; solve log_quadrant(e) = ln(1 - fill).
    let target = (-fill).ln_1p();
    let (mut lo, mut hi) = (-60.0f64, 60.0f64); // bounds on ln e
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if log_quadrant(mid.exp()) > target {
            lo = mid; // area too small: e must grow
        } else {
            hi = mid;
        }
    }
    (-0.5 * (lo + hi)).exp()
}

/// The parameter `t*` where the line `(x + t, y + t)` crosses the isocline
/// of exponent `p`, written with `a = 1 - x`, `b = 1 - y`: the root of
/// `h(t) = (a-t)^p + (b-t)^p - 1` on `[max(a,b) - 1, min(a,b)]`, where `h`
/// falls from `>= 0` to `<= 0`. Newton steps kept inside a shrinking
/// bracket, with bisection when a step leaves it.
fn crossing(a: f64, b: f64, p: f64) -> f64 {
    let (mut lo, mut hi) = (a.max(b) - 1.0, a.min(b));
    if p == 1.0 {
        return (a + b - 1.0) * 0.5;
    }
    let mut t = 0.5 * (lo + hi);
    for _ in 0..200 {
        let (ea, eb) = ((a - t).max(0.0), (b - t).max(0.0));
        let (pa, pb) = (ea.powf(p), eb.powf(p));
        let h = pa + pb - 1.0;
        if h == 0.0 {
            return t;
        }
        if h > 0.0 {
            lo = t;
        } else {
            hi = t;
        }
        if hi - lo <= tolerance::ISOCLINE_BRACKET {
            break;
        }
        let slope =
            -p * (if ea > 0.0 { pa / ea } else { 0.0 } + if eb > 0.0 { pb / eb } else { 0.0 });
        let next = t - h / slope;
        let next = if next.is_finite() && next > lo && next < hi {
            next
        } else {
            0.5 * (lo + hi)
        };
        if (next - t).abs() <= tolerance::ISOCLINE_STEP {
            t = next;
            break;
        }
        t = next;
    }
    t
}

#[doc(hidden)]
/// The unexpectedness every cell of an `m x n` matrix with `L` ones would
/// get, for a presence and for an absence, at every position: the table
/// behind [`temperature`]. Reusable for all matrices of the same shape and
/// number of ones (each thread keeps recent tables, see
/// [`TABLE_CACHE_CELLS`]).
///
/// Cost: `O(m n)` root solves (about half of them for a square shape,
/// whose table is symmetric) and `16 m n` bytes.
#[derive(Clone, Debug)]
pub struct UnexpectednessTable {
    m: usize,
    n: usize,
    links: usize,
    p: f64,
    /// `u` of a presence at position `(i, j)`, row-major.
    present: Vec<f64>,
    /// `u` of an absence at position `(i, j)`, row-major.
    absent: Vec<f64>,
}

/// Per row or column position `k` of `len`: the centre coordinate
/// `(k + 1/2)/len`, its complement `1 - x` and that to the power `p`, by
/// the expressions every table build and [`unexpected_total`] use.
fn centres(len: usize, p: f64) -> Vec<(f64, f64, f64)> {
    (0..len)
        .map(|k| {
            let x = (k as f64 + 0.5) / len as f64;
            let a = 1.0 - x;
            (x, a, a.powf(p))
        })
        .collect()
}

/// The value of one cell of the table: `Some((u, absent))` with `absent`
/// true when `u` is the value of an absence (the cell lies inside the
/// presence region), `None` on the isocline (both values 0). `(x, a, ap)`
/// is the column's entry of [`centres`], `(y, b, bp)` the row's.
#[inline]
fn cell_value(col: (f64, f64, f64), row: (f64, f64, f64), p: f64) -> Option<(f64, bool)> {
    let ((x, a, ap), (y, b, bp)) = (col, row);
    let level = ap + bp;
    if level == 1.0 {
        return None; // on the isocline: nothing is unexpected
    }
    let r = crossing(a, b, p) / (1.0 - (x - y).abs());
    Some((r * r, level > 1.0))
}

impl UnexpectednessTable {
    /// Builds the table for `m x n` matrices with `links` ones.
    ///
    /// The powers `(1-x)^p` and `(1-y)^p` are computed once per column and
    /// row. A square shape (`m == n`) gives positions `(i, j)` and `(j, i)`
    /// the same two coordinates swapped, computed by the same expression,
    /// and every step of a cell's value is symmetric in them bit for bit
    /// (`max`, `min`, sums of two terms and `|x - y|`), so only the cells
    /// with `j >= i` are solved and the rest copied. The values equal
    /// [`UnexpectednessTable::new_cell_by_cell`]'s bit for bit (tests).
    ///
    /// Errors: an empty shape ([`Error::EmptyNetwork`]), more than
    /// [`TEMPERATURE_CELL_LIMIT`] cells ([`Error::TooLarge`]), `links > m n`.
    pub fn new(m: usize, n: usize, links: usize) -> Result<Self> {
        let (p, mut present, mut absent) = Self::empty(m, n, links)?;
        if links > 0 && links < m * n {
            let cols = centres(n, p);
            let rows = if m == n { cols.clone() } else { centres(m, p) };
            let square = m == n;
            present
                .par_chunks_mut(n)
                .zip(absent.par_chunks_mut(n))
                .enumerate()
                .for_each(|(i, (pres, abs))| {
                    let first = if square { i } else { 0 };
                    for j in first..n {
                        if let Some((u, inside)) = cell_value(cols[j], rows[i], p) {
                            if inside {
                                abs[j] = u;
                            } else {
                                pres[j] = u;
                            }
                        }
                    }
                });
            if square {
                for i in 1..n {
                    for j in 0..i {
                        present[i * n + j] = present[j * n + i];
                        absent[i * n + j] = absent[j * n + i];
                    }
                }
            }
        }
        Ok(UnexpectednessTable {
            m,
            n,
            links,
            p,
            present,
            absent,
        })
    }

    /// [`UnexpectednessTable::new`] as it was built before: every cell
    /// solved, with both powers computed per cell. The same values bit for
    /// bit; kept for the tests and side-by-side timing, not part of the API.
    #[doc(hidden)]
    pub fn new_cell_by_cell(m: usize, n: usize, links: usize) -> Result<Self> {
        let (p, mut present, mut absent) = Self::empty(m, n, links)?;
        if links > 0 && links < m * n {
            present
                .par_chunks_mut(n)
                .zip(absent.par_chunks_mut(n))
                .enumerate()
                .for_each(|(i, (pres, abs))| {
                    let y = (i as f64 + 0.5) / m as f64;
                    for j in 0..n {
                        let x = (j as f64 + 0.5) / n as f64;
                        let (a, b) = (1.0 - x, 1.0 - y);
                        let level = a.powf(p) + b.powf(p);
                        if level == 1.0 {
                            continue; // on the isocline: nothing is unexpected
                        }
                        let r = crossing(a, b, p) / (1.0 - (x - y).abs());
                        if level > 1.0 {
                            abs[j] = r * r;
                        } else {
                            pres[j] = r * r;
                        }
                    }
                });
        }
        Ok(UnexpectednessTable {
            m,
            n,
            links,
            p,
            present,
            absent,
        })
    }

    /// Checks the arguments of a build; returns `p` and two zeroed tables.
    fn empty(m: usize, n: usize, links: usize) -> Result<(f64, Vec<f64>, Vec<f64>)> {
        check_size(m, n)?;
        if links > m * n {
            return Err(Error::InvalidArgument(format!(
                "{links} ones do not fit in a {m} x {n} matrix"
            )));
        }
        let cells = m * n;
        let p = isocline_p(links as f64 / cells as f64);
        Ok((p, vec![0.0; cells], vec![0.0; cells]))
    }

    /// Rows `m`.
    pub fn nrows(&self) -> usize {
        self.m
    }
    /// Columns `n`.
    pub fn ncols(&self) -> usize {
        self.n
    }
    /// Number of ones `L` the table was built for.
    pub fn links(&self) -> usize {
        self.links
    }
    /// The isocline exponent `p`.
    pub fn p(&self) -> f64 {
        self.p
    }
    /// `u` of a presence at position `(i, j)` (0 inside the presence region).
    pub fn if_present(&self, i: usize, j: usize) -> f64 {
        self.present[i * self.n + j]
    }
    /// `u` of an absence at position `(i, j)` (0 outside the presence region).
    pub fn if_absent(&self, i: usize, j: usize) -> f64 {
        self.absent[i * self.n + j]
    }

    /// `u` of a presence minus `u` of an absence at every position,
    /// row-major: what a one at that position adds to `sum(u)` (the
    /// packing's cost tables are built from it).
    fn deltas(&self) -> Vec<f64> {
        self.present
            .iter()
            .zip(&self.absent)
            .map(|(p, a)| p - a)
            .collect()
    }

    /// `sum(u)` of `b` with position `(i, j)` holding cell
    /// `(rows[i], cols[j])`, summed row by row. Cost `O(m n)`.
    pub fn total(&self, b: &BitMatrix, rows: &[usize], cols: &[usize]) -> f64 {
        let n = self.n;
        let mut total = 0.0;
        for (i, &r) in rows.iter().enumerate() {
            let (pres, abs) = (&self.present[i * n..][..n], &self.absent[i * n..][..n]);
            let row = b.row(r);
            let mut s = 0.0;
            for (j, &c) in cols.iter().enumerate() {
                s += if (row[c / 64] >> (c % 64)) & 1 == 1 {
                    pres[j]
                } else {
                    abs[j]
                };
            }
            total += s;
        }
        total
    }

    /// `T = 100 sum(u) / (m n U_max)` for the given orders (see
    /// [`UnexpectednessTable::total`]).
    pub fn temperature(&self, b: &BitMatrix, rows: &[usize], cols: &[usize]) -> f64 {
        self.to_t(self.total(b, rows, cols))
    }

    fn to_t(&self, total: f64) -> f64 {
        to_t(self.m, self.n, total)
    }
}

fn check_size(m: usize, n: usize) -> Result<()> {
    if m == 0 {
        return Err(Error::EmptyNetwork("it has no rows"));
    }
    if n == 0 {
        return Err(Error::EmptyNetwork("it has no columns"));
    }
    let cells = m as u128 * n as u128;
    if cells > TEMPERATURE_CELL_LIMIT as u128 {
        return Err(Error::TooLarge {
            what: "temperature (two f64 per cell)",
            rows: m,
            cols: n,
            bytes: cells * 16,
        });
    }
    Ok(())
}

/// Temperature of the binary view of any [`NetView`] in the given, sorted and
/// (optionally) packed orders.
///
/// `T = 100 sum(u_ij) / (m n U_max)`, `u_ij = (t*/D)^2` for unexpected cells
/// (see the [module documentation](self) for the geometry). Fill 0 or 1
/// gives `T = 0`. The packed search is described at [`TemperatureOptions`].
///
/// Cost: `O(m n)` root solves for the table (parallel over rows; half as
/// many for a square shape), `O(m n)` per order evaluated, plus the
/// packing; memory `16 m n` bytes, and each thread keeps recent tables for
/// reuse within 16 MiB ([`TABLE_CACHE_CELLS`]). Networks above
/// [`TEMPERATURE_CELL_LIMIT`] cells give [`Error::TooLarge`].
///
/// References: Atmar & Patterson (1993), Oecologia 96:373-382;
/// Rodriguez-Girones & Santamaria (2006), J. Biogeogr. 33:924-935.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::metrics::temperature::{temperature, TemperatureOptions};
/// use nidus::Network;
/// // A staircase is perfectly nested: T = 0 in the sorted order.
/// let net = Network::from_array(array![[1, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
/// let t = temperature(&net, &TemperatureOptions::default()).unwrap();
/// assert_eq!(t.sorted, 0.0);
/// assert_eq!(t.packed, Some(0.0));
/// // Shuffled, the given order is hot, but sorting and packing restore it.
/// let hot = Network::from_array(array![[1, 0, 0], [1, 1, 1], [1, 1, 0]]).unwrap();
/// let t = temperature(&hot, &TemperatureOptions::default()).unwrap();
/// assert!(t.given > 0.0);
/// assert_eq!(t.packed, Some(0.0));
/// assert_eq!(t.row_order, vec![1, 2, 0]);
/// ```
pub fn temperature<V: NetView + ?Sized>(
    view: &V,
    opts: &TemperatureOptions,
) -> Result<Temperature> {
    check_size(view.nrows(), view.ncols())?;
    temperature_of_bits(&*view.bits()?, opts)
}

/// Registry evaluator of `temperature` (packed order, packing on).
pub(crate) fn packed(v: &dyn NetView, o: &IndexOptions) -> Result<f64> {
    let opts = TemperatureOptions {
        pack: true,
        ..o.temperature
    };
    let t = temperature(v, &opts)?;
    Ok(t.packed.unwrap_or(t.sorted))
}

/// Registry evaluator of `temperature-sorted` (no packing search): the
/// same value as [`temperature`]`(..).sorted`, bit for bit, computed by
/// [`sorted_of_bits`].
pub(crate) fn sorted(v: &dyn NetView, _o: &IndexOptions) -> Result<f64> {
    check_size(v.nrows(), v.ncols())?;
    sorted_of_bits(&*v.bits()?)
}

/// `T` of `b` in the degree-sorted order, as [`temperature`] gives it.
///
/// A table of the thread's cache for this shape and `L` serves when there
/// is one ([`TABLE_CACHE_CELLS`]). Otherwise building the table would cost
/// a root solve for every cell, where the sorted value needs few: each
/// cell's side of the isocline is read from `a^p + b^p` (one power per row
/// and per column) and only the unexpected cells, a presence outside the
/// presence region or an absence inside it, get their root solve. Every
/// value is computed by the same expressions as the table's and summed in
/// the same order (the skipped cells add `+0`), so the result equals the
/// table's bit for bit.
///
/// A table costs about two such sums to build at 300 x 300 (square shapes,
/// `benches/temperature.rs`, `table_build`), and pays off only if it is
/// used again before the cache drops it. So it is built (and kept) when
/// the same shape and `L` came among the last `C` matrices this path saw,
/// `C` the number of such tables the cache holds (`TABLE_CACHE_CELLS / (m
/// n)`, at most [`TABLE_CACHE_TABLES`]): always under a model that keeps
/// `L`, for the recurring values of `L` of a small network under one that
/// does not, and seldom for a large one, where `L` spreads over more values
/// than the cache holds.
pub(crate) fn sorted_of_bits(b: &BitMatrix) -> Result<f64> {
    let key = (b.nrows(), b.ncols(), b.count_ones());
    check_size(key.0, key.1)?;
    let rows = degree_order(&b.row_degrees());
    let cols = degree_order(&b.col_degrees());
    let (cached, recent) = TABLES.with(|c| {
        let mut c = c.borrow_mut();
        let recent = c.seen_recently(key);
        (c.get(key), recent)
    });
    if let Some(table) = cached {
        return Ok(table.to_t(table.total(b, &rows, &cols)));
    }
    if recent {
        let table = std::sync::Arc::new(UnexpectednessTable::new(key.0, key.1, key.2)?);
        TABLES.with(|c| c.borrow_mut().keep(&table));
        return Ok(table.to_t(table.total(b, &rows, &cols)));
    }
    Ok(to_t(key.0, key.1, unexpected_total(b, &rows, &cols)))
}

/// `sum(u)` of `b` with position `(i, j)` holding cell `(rows[i], cols[j])`:
/// [`UnexpectednessTable::total`] without the table, root solves only for
/// the unexpected cells (see [`sorted_of_bits`]). Rows are summed in
/// parallel, their sums added in row order.
///
/// Cost: `O(m n)` additions plus one root solve per unexpected cell.
#[doc(hidden)]
pub fn unexpected_total(b: &BitMatrix, rows: &[usize], cols: &[usize]) -> f64 {
    let (m, n) = (b.nrows(), b.ncols());
    let cells = m * n;
    let links = b.count_ones();
    if links == 0 || links == cells {
        return 0.0; // the table is all zeros
    }
    let p = isocline_p(links as f64 / cells as f64);
    // Per column: x, a = 1 - x and a^p, as the table's build computes them.
    let xs = centres(n, p);
    let sums: Vec<f64> = (0..m)
        .into_par_iter()
        .map(|i| {
            let y = (i as f64 + 0.5) / m as f64;
            let bb = 1.0 - y;
            let bp = bb.powf(p);
            let row = b.row(rows[i]);
            let mut s = 0.0;
            for (&c, &(x, a, ap)) in cols.iter().zip(&xs) {
                let level = ap + bp;
                if level == 1.0 {
                    continue; // on the isocline: nothing is unexpected
                }
                let present = (row[c / 64] >> (c % 64)) & 1 == 1;
                if present == (level > 1.0) {
                    continue; // expected: u = 0
                }
                let r = crossing(a, bb, p) / (1.0 - (x - y).abs());
                s += r * r;
            }
            s
        })
        .collect();
    let mut total = 0.0;
    for s in sums {
        total += s;
    }
    total
}

fn to_t(m: usize, n: usize, total: f64) -> f64 {
    100.0 * total / (m as f64 * n as f64 * U_MAX)
}

/// [`temperature`] of a bit-packed binary matrix (null-model draws).
///
/// The table of cell values depends only on the shape and the number of
/// ones, so each thread keeps the tables it built recently, within
/// [`TABLE_CACHE_CELLS`], and reuses one when a later matrix has the same
/// shape and number of ones: every draw of a model that keeps `L`, and the
/// recurring values of `L` under one that does not (`proportional`, or the
/// binary view of `fixed-totals` draws). The result is the same either way.
///
/// Errors: an empty shape or more than [`TEMPERATURE_CELL_LIMIT`] cells.
pub(crate) fn temperature_of_bits(b: &BitMatrix, opts: &TemperatureOptions) -> Result<Temperature> {
    let key = (b.nrows(), b.ncols(), b.count_ones());
    let table = match TABLES.with(|c| c.borrow_mut().get(key)) {
        Some(t) => t,
        None => {
            let t = std::sync::Arc::new(UnexpectednessTable::new(key.0, key.1, key.2)?);
            TABLES.with(|c| c.borrow_mut().keep(&t));
            t
        }
    };
    temperature_with_table(b, &table, opts)
}

#[doc(hidden)]
/// The cell budget of the tables that [`temperature`] keeps per thread for
/// reuse: 2^20 cells (two `f64` each: 16 MiB) in all, and at most
/// [`TABLE_CACHE_TABLES`] tables; the least recently used table is dropped
/// first, and a table of more cells than the budget is not kept. So each
/// thread that evaluates temperature holds at most 16 MiB of kept tables
/// (plus under 64 KiB of their headers), whatever the number of draws, on
/// top of the one table in use.
pub const TABLE_CACHE_CELLS: usize = 1 << 20;

#[doc(hidden)]
/// Most tables kept per thread (see [`TABLE_CACHE_CELLS`]); bounds the
/// cache's bookkeeping for tiny tables and its linear search.
pub const TABLE_CACHE_TABLES: usize = 256;

/// Shape and number of ones of a table: `(m, n, L)`.
type TableKey = (usize, usize, usize);

/// The tables one thread keeps (see [`TABLE_CACHE_CELLS`]).
struct TableCache {
    /// Kept tables with the tick of their last use.
    tables: Vec<(u64, std::sync::Arc<UnexpectednessTable>)>,
    /// Cells charged for the kept tables.
    cells: usize,
    /// Counts lookups and insertions (the recency order).
    tick: u64,
    /// Shape and `L` of the last matrices [`sorted_of_bits`] saw, the
    /// latest first (at most [`TABLE_CACHE_TABLES`]).
    recent: std::collections::VecDeque<TableKey>,
}

impl TableCache {
    const fn new() -> Self {
        TableCache {
            tables: Vec::new(),
            cells: 0,
            tick: 0,
            recent: std::collections::VecDeque::new(),
        }
    }

    /// True when `key` is among the last `C` keys recorded here, `C` the
    /// number of tables of its size the cache holds; then records it.
    fn seen_recently(&mut self, key: TableKey) -> bool {
        let holds = (TABLE_CACHE_CELLS / (key.0 * key.1)).min(TABLE_CACHE_TABLES);
        let seen = self.recent.iter().take(holds).any(|&k| k == key);
        if self.recent.len() == TABLE_CACHE_TABLES {
            self.recent.pop_back();
        }
        self.recent.push_front(key);
        seen
    }

    fn charge(t: &UnexpectednessTable) -> usize {
        t.m * t.n
    }

    /// The kept table for `key`, marked as just used.
    fn get(&mut self, key: TableKey) -> Option<std::sync::Arc<UnexpectednessTable>> {
        self.tick += 1;
        let tick = self.tick;
        self.tables
            .iter_mut()
            .find(|(_, t)| (t.m, t.n, t.links) == key)
            .map(|(used, t)| {
                *used = tick;
                t.clone()
            })
    }

    /// Keeps `table`, dropping the least recently used tables as needed to
    /// stay within the budget; a table above the whole budget is not kept,
    /// and one whose key is kept already (built meanwhile by a job that
    /// rayon ran on this thread during the build) is not kept twice.
    fn keep(&mut self, table: &std::sync::Arc<UnexpectednessTable>) {
        let charge = Self::charge(table);
        let key = (table.m, table.n, table.links);
        if charge > TABLE_CACHE_CELLS || self.get(key).is_some() {
            return;
        }
        while self.cells + charge > TABLE_CACHE_CELLS || self.tables.len() >= TABLE_CACHE_TABLES {
            let oldest = (0..self.tables.len()).min_by_key(|&k| self.tables[k].0);
            let Some(k) = oldest else { break };
            let (_, gone) = self.tables.swap_remove(k);
            self.cells -= Self::charge(&gone);
        }
        self.tick += 1;
        self.tables.push((self.tick, table.clone()));
        self.cells += charge;
    }
}

thread_local! {
    static TABLES: std::cell::RefCell<TableCache> = const { std::cell::RefCell::new(TableCache::new()) };
}

/// [`temperature`] of a bit matrix with a table built beforehand (it must
/// have been built for the same shape and number of ones, else
/// [`Error::InvalidArgument`]). A kernel for timing; not part of the API.
#[doc(hidden)]
pub fn temperature_with_table(
    b: &BitMatrix,
    table: &UnexpectednessTable,
    opts: &TemperatureOptions,
) -> Result<Temperature> {
    with_table(b, table, opts, CostLoop::Lanes)
}

/// [`temperature_with_table`] with the packing search's cost tables built
/// by the direct gather loop that the blocked loop replaced (same result,
/// bit for bit). Kept for side-by-side timing; not part of the API.
#[doc(hidden)]
pub fn temperature_with_table_direct_gathers(
    b: &BitMatrix,
    table: &UnexpectednessTable,
    opts: &TemperatureOptions,
) -> Result<Temperature> {
    with_table(b, table, opts, CostLoop::Direct)
}

/// [`temperature_with_table`] with the packing search's cost tables built
/// by the blocked loop that adds into the table in memory (the loop before
/// the register lanes; same result, bit for bit). Kept for side-by-side
/// timing; not part of the API.
#[doc(hidden)]
pub fn temperature_with_table_blocked(
    b: &BitMatrix,
    table: &UnexpectednessTable,
    opts: &TemperatureOptions,
) -> Result<Temperature> {
    with_table(b, table, opts, CostLoop::Blocked)
}

/// How the packing search builds its cost tables; every loop gives the
/// same table bit for bit (the other two are kept for timing and tests).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum CostLoop {
    /// A gather over the members' positions for each entry.
    Direct,
    /// Contiguous additions into the table, a block of positions at a time.
    Blocked,
    /// Sums of [`LANES`] positions (twice as many with AVX2) kept in
    /// registers while the members' rows are added (the default).
    Lanes,
}

/// Positions summed together in registers by [`CostLoop::Lanes`].
const LANES: usize = 16;

fn with_table(
    b: &BitMatrix,
    table: &UnexpectednessTable,
    opts: &TemperatureOptions,
    how: CostLoop,
) -> Result<Temperature> {
    let (m, n) = (b.nrows(), b.ncols());
    let links = b.count_ones();
    if (m, n, links) != (table.m, table.n, table.links) {
        return Err(Error::InvalidArgument(format!(
            "the temperature table was built for {} x {} with {} ones, not {m} x {n} with {links}",
            table.m, table.n, table.links
        )));
    }
    let given_rows: Vec<usize> = (0..m).collect();
    let given_cols: Vec<usize> = (0..n).collect();
    let sorted_rows = degree_order(&b.row_degrees());
    let sorted_cols = degree_order(&b.col_degrees());
    let given = table.temperature(b, &given_rows, &given_cols);
    let sorted_total = table.total(b, &sorted_rows, &sorted_cols);
    let sorted = table.to_t(sorted_total);
    let (packed, row_order, col_order) = if opts.pack {
        if m.max(n) > PACKING_SIDE_LIMIT {
            if !few::few_members_applies(b) {
                let k = m.max(n);
                return Err(Error::TooLarge {
                    what: "temperature's packing search (an assignment over the larger side, \
                           or an exact search when the smaller side has at most 5 members and \
                           few patterns; temperature-sorted or --no-packing avoid it)",
                    rows: k,
                    cols: k,
                    bytes: 8 * (k as u128) * (k as u128),
                });
            }
            let best = pack_few_members(b, table, (sorted_total, sorted_rows, sorted_cols));
            return Ok(Temperature {
                given,
                sorted,
                packed: Some(table.to_t(best.0)),
                isocline_p: table.p,
                row_order: best.1,
                col_order: best.2,
            });
        }
        let best = pack(
            b,
            table,
            (sorted_total, sorted_rows, sorted_cols),
            opts,
            true,
            how,
        );
        (Some(table.to_t(best.0)), best.1, best.2)
    } else {
        (None, sorted_rows, sorted_cols)
    };
    Ok(Temperature {
        given,
        sorted,
        packed,
        isocline_p: table.p,
        row_order,
        col_order,
    })
}

/// The per-cell unexpectedness `u_ij` of a network's binary view in its
/// given order (0 for expected cells); `T = 100 sum / (m n U_max)`.
///
/// Cost and errors as for [`temperature`] without packing.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::metrics::temperature::unexpectedness;
/// use nidus::Network;
/// let net = Network::from_array(array![[0, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
/// let u = unexpectedness(&net).unwrap();
/// assert!(u[[0, 0]] > 0.0); // an absence in the top-left corner
/// assert_eq!(u[[2, 2]], 0.0); // an absence in the bottom-right corner
/// ```
pub fn unexpectedness<V: NetView + ?Sized>(view: &V) -> Result<ndarray::Array2<f64>> {
    check_size(view.nrows(), view.ncols())?;
    let b = view.bits()?;
    let table = UnexpectednessTable::new(b.nrows(), b.ncols(), b.count_ones())?;
    Ok(ndarray::Array2::from_shape_fn(
        (b.nrows(), b.ncols()),
        |(i, j)| {
            if b.get(i, j) {
                table.if_present(i, j)
            } else {
                table.if_absent(i, j)
            }
        },
    ))
}

/// A candidate: `(sum of u, row order, column order)`.
type Candidate = (f64, Vec<usize>, Vec<usize>);

/// The search state shared by all starts: the matrix's ones by row and by
/// column, and the cost of a presence relative to an absence at every
/// position (`delta`, row-major, and its transpose).
struct Packer<'a> {
    b: &'a BitMatrix,
    table: &'a UnexpectednessTable,
    row_ones: Vec<Vec<usize>>,
    col_ones: Vec<Vec<usize>>,
    /// `delta[i n + j] = present - absent` at position `(i, j)`.
    delta: Vec<f64>,
    /// `delta_t[j m + i]` = the same, transposed.
    delta_t: Vec<f64>,
    /// The loop that builds cost tables.
    how: CostLoop,
}

impl<'a> Packer<'a> {
    fn new(b: &'a BitMatrix, table: &'a UnexpectednessTable, how: CostLoop) -> Self {
        let (m, n) = (b.nrows(), b.ncols());
        let row_ones: Vec<Vec<usize>> = (0..m).map(|i| b.row_ones(i).collect()).collect();
        let mut col_ones = vec![Vec::new(); n];
        for (i, ones) in row_ones.iter().enumerate() {
            for &j in ones {
                col_ones[j].push(i);
            }
        }
        let delta = table.deltas();
        let mut delta_t = vec![0.0; m * n];
        for i in 0..m {
            for j in 0..n {
                delta_t[j * m + i] = delta[i * n + j];
            }
        }
        Packer {
            b,
            table,
            row_ones,
            col_ones,
            delta,
            delta_t,
            how,
        }
    }

    /// The best order of one side given the other side's positions:
    /// `ones[r]` are the members of the other side that item `r` holds,
    /// `other_pos` their positions, `by_other` the delta table with the
    /// other side's positions as rows (`by_other[q k + i]` = delta with this
    /// side at position `i`, the other at `q`; `k` items of this side).
    /// The cost of item `r` at position `i` is `sum_{c in ones[r]} d(i, pos(c))`
    /// (the absence part is the same for every item, so it is left out).
    ///
    /// The table is built a block of positions at a time: for each item,
    /// the rows `by_other[pos(c)]` restricted to the block are added in the
    /// order of `ones[r]` (contiguous, vectorised additions on a block that
    /// stays in cache). Each entry is the same sum in the same order as a
    /// gather over `pos(c)` for each position, so the table is bit for bit
    /// that of the direct loop.
    ///
    /// [`CostLoop::Lanes`] (the default) goes through the same blocks, but
    /// for each item and each run of [`LANES`] positions keeps the sums in
    /// registers while the members' rows are added (the blocked loop loads
    /// and stores the table entry at every addition, which bounded its
    /// speed); each entry is still `zero + d_1 + d_2 + ...` in the order of
    /// `ones[r]`, so the table is the same bit for bit.
    fn best_side(
        ones: &[Vec<usize>],
        other_pos: &[usize],
        (by_other, by_this): (&[f64], &[f64]),
        cost: &mut Vec<f64>,
        work: &mut Workspace,
        how: CostLoop,
    ) -> Vec<usize> {
        let k = ones.len();
        cost.clear();
        cost.resize(k * k, 0.0);
        if how == CostLoop::Direct {
            legacy_cost(ones, other_pos, by_this, by_other.len() / k.max(1), cost);
            return Self::order_from(work.solve_from(cost, k, true));
        }
        // The empty sum, as `Iterator::sum` gives it (its sign of zero
        // changed across Rust versions); every delta is +0 or nonzero, so
        // `zero + d == d` and the sums below match `Iterator::sum` exactly.
        let zero: f64 = std::iter::empty::<f64>().sum();
        let width = other_pos.len();
        // Positions per block: the block's slice of every row of
        // `by_other` in about 256 KiB (tests use small blocks so that small
        // matrices take several).
        const BLOCK_CELLS: usize = if cfg!(test) { 256 } else { 32_768 };
        let block = (BLOCK_CELLS / width.max(1)).clamp(16, k.max(16));
        // Whole runs of register lanes per block (any blocking gives the
        // same entries).
        let block = if how == CostLoop::Lanes {
            block.div_ceil(2 * LANES) * (2 * LANES)
        } else {
            block
        };
        let mut at: Vec<usize> = Vec::new();
        let mut starts = Vec::with_capacity(k + 1);
        starts.push(0);
        for row in ones {
            at.extend(row.iter().map(|&c| other_pos[c] * k));
            starts.push(at.len());
        }
        for i0 in (0..k).step_by(block) {
            let i1 = (i0 + block).min(k);
            for (r, out) in cost.chunks_exact_mut(k).enumerate() {
                let qs = &at[starts[r]..starts[r + 1]];
                if how == CostLoop::Lanes {
                    lane_sums(qs, by_other, zero, (i0, i1), out);
                    continue;
                }
                let out = &mut out[i0..i1];
                out.fill(zero);
                for &q in qs {
                    let src = &by_other[q + i0..q + i1];
                    for (o, &x) in out.iter_mut().zip(src) {
                        *o += x;
                    }
                }
            }
        }
        Self::order_from(work.solve_from(cost, k, true))
    }

    fn order_from(pos_of_item: &[usize]) -> Vec<usize> {
        let mut order = vec![0usize; pos_of_item.len()];
        for (r, &i) in pos_of_item.iter().enumerate() {
            order[i] = r;
        }
        order
    }

    fn positions(order: &[usize]) -> Vec<usize> {
        let mut pos = vec![0usize; order.len()];
        for (i, &r) in order.iter().enumerate() {
            pos[r] = i;
        }
        pos
    }

    fn best_rows(&self, cols: &[usize], cost: &mut Vec<f64>, work: &mut Workspace) -> Vec<usize> {
        let pos = Self::positions(cols);
        Self::best_side(
            &self.row_ones,
            &pos,
            (&self.delta_t, &self.delta),
            cost,
            work,
            self.how,
        )
    }

    fn best_cols(&self, rows: &[usize], cost: &mut Vec<f64>, work: &mut Workspace) -> Vec<usize> {
        let pos = Self::positions(rows);
        Self::best_side(
            &self.col_ones,
            &pos,
            (&self.delta, &self.delta_t),
            cost,
            work,
            self.how,
        )
    }

    /// Alternating exact assignments from one start until a round does not
    /// lower the total by more than `1e-12 (1 + total)`.
    fn descend(&self, mut rows: Vec<usize>, mut cols: Vec<usize>) -> Candidate {
        let mut total = self.table.total(self.b, &rows, &cols);
        let mut cost = Vec::new();
        // One workspace per side: each solve starts from the prices of the
        // previous solve of the same side.
        let (mut row_work, mut col_work) = (Workspace::default(), Workspace::default());
        for _ in 0..MAX_ROUNDS {
            let mut improved = false;
            let new_rows = self.best_rows(&cols, &mut cost, &mut row_work);
            let t = self.table.total(self.b, &new_rows, &cols);
            if t < total - tolerance::PACKING_IMPROVEMENT * (1.0 + total) {
                rows = new_rows;
                total = t;
                improved = true;
            }
            let new_cols = self.best_cols(&rows, &mut cost, &mut col_work);
            let t = self.table.total(self.b, &rows, &new_cols);
            if t < total - tolerance::PACKING_IMPROVEMENT * (1.0 + total) {
                cols = new_cols;
                total = t;
                improved = true;
            }
            if !improved {
                break;
            }
        }
        (total, rows, cols)
    }

    /// Every order of the rows, each with its best columns; strict
    /// improvements over `best` only, in enumeration order.
    fn exhaust_rows(&self, mut best: Candidate) -> Candidate {
        let (mut cost, mut work) = (Vec::new(), Workspace::default());
        for_each_permutation(self.b.nrows(), |rows| {
            let cols = self.best_cols(rows, &mut cost, &mut work);
            let t = self.table.total(self.b, rows, &cols);
            if t < best.0 {
                best = (t, rows.to_vec(), cols);
            }
        });
        best
    }

    /// Every order of the columns, each with its best rows.
    fn exhaust_cols(&self, mut best: Candidate) -> Candidate {
        let (mut cost, mut work) = (Vec::new(), Workspace::default());
        for_each_permutation(self.b.ncols(), |cols| {
            let rows = self.best_rows(cols, &mut cost, &mut work);
            let t = self.table.total(self.b, &rows, cols);
            if t < best.0 {
                best = (t, rows, cols.to_vec());
            }
        });
        best
    }
}

/// Entries `i0..i1` of one item's cost row:
/// `out[i] = zero + by_other[q_1 + i] + by_other[q_2 + i] + ...` over `qs` in order, `W` positions at a time
/// with the running sums in a local array (kept in registers), the
/// positions past the last whole run one by one. On x86-64 the same loop
/// is compiled for AVX2 and used when the CPU has it (additions of the same
/// numbers in the same order: the same bits).
fn lane_sums(qs: &[usize], by_other: &[f64], zero: f64, span: (usize, usize), out: &mut [f64]) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the CPU supports avx2 (checked).
            return unsafe { lane_sums_avx2(qs, by_other, zero, span, out) };
        }
    }
    lane_body::<LANES>(qs, by_other, zero, span, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn lane_sums_avx2(
    qs: &[usize],
    by_other: &[f64],
    zero: f64,
    span: (usize, usize),
    out: &mut [f64],
) {
    lane_body::<{ 2 * LANES }>(qs, by_other, zero, span, out)
}

#[inline(always)]
fn lane_body<const W: usize>(
    qs: &[usize],
    by_other: &[f64],
    zero: f64,
    (i0, i1): (usize, usize),
    out: &mut [f64],
) {
    let mut i = i0;
    while i + W <= i1 {
        let mut acc = [zero; W];
        for &q in qs {
            let src: &[f64; W] = by_other[q + i..q + i + W].try_into().expect("W values");
            for (a, &x) in acc.iter_mut().zip(src) {
                *a += x;
            }
        }
        out[i..i + W].copy_from_slice(&acc);
        i += W;
    }
    for (ii, o) in out.iter_mut().enumerate().take(i1).skip(i) {
        let mut a = zero;
        for &q in qs {
            a += by_other[q + ii];
        }
        *o = a;
    }
}

/// The direct loop that the blocked one replaced, kept to check that both
/// give the same packed orders and to time them side by side: for each
/// item and position, a gather over the positions of the item's members in
/// row `i` of `d` (`width` columns).
fn legacy_cost(
    ones: &[Vec<usize>],
    other_pos: &[usize],
    d: &[f64],
    width: usize,
    cost: &mut [f64],
) {
    let k = ones.len();
    let mut at: Vec<usize> = Vec::new();
    for (r, row) in ones.iter().enumerate() {
        at.clear();
        at.extend(row.iter().map(|&c| other_pos[c]));
        let out = &mut cost[r * k..(r + 1) * k];
        for (i, slot) in out.iter_mut().enumerate() {
            let di = &d[i * width..(i + 1) * width];
            *slot = at.iter().map(|&q| di[q]).sum();
        }
    }
}

/// Calls `visit` on every permutation of `0..k`, starting with the identity
/// (Heap's algorithm, iterative form: each step is one swap).
fn for_each_permutation(k: usize, mut visit: impl FnMut(&[usize])) {
    let mut p: Vec<usize> = (0..k).collect();
    visit(&p);
    let mut c = vec![0usize; k];
    let mut i = 1;
    while i < k {
        if c[i] < i {
            if i % 2 == 0 {
                p.swap(0, i);
            } else {
                p.swap(c[i], i);
            }
            visit(&p);
            c[i] += 1;
            i = 1;
        } else {
            c[i] = 0;
            i += 1;
        }
    }
}

/// True when packing an `m x n` matrix with `links` ones uses the exact
/// search (every order of the smaller side, see [`TemperatureOptions`]), so
/// that the packed `T` is the global minimum; false when it uses the
/// alternating search. Rule: `k = min(m, n) <= 8` and
/// `k! (K^3 + K L + m n) <= EXACT_WORK_LIMIT` with `K = max(m, n)`. (Above
/// [`PACKING_SIDE_LIMIT`] members the few-members search is exact as well:
/// see [`few_members_applies`].)
///
/// # Example
/// ```
/// use nidus::metrics::temperature::packing_is_exact;
/// assert!(packing_is_exact(5, 5, 12));
/// assert!(!packing_is_exact(200, 200, 8000));
/// ```
pub fn packing_is_exact(m: usize, n: usize, links: usize) -> bool {
    let (k, big) = (m.min(n), m.max(n));
    if k > 8 {
        return false;
    }
    let perms: f64 = (1..=k).map(|v| v as f64).product();
    let big = big as f64;
    perms * (big * big * big + big * links as f64 + (m * n) as f64) <= EXACT_WORK_LIMIT
}

/// The row and column orders of random start `k` (1-based): the identity
/// orders shuffled, rows first, by the crate's Fisher-Yates shuffle on
/// [`stream_rng`]`(seed, purpose::TEMPERATURE_PACKING, k)`. Depends on
/// `(seed, k)` and the sizes alone: the same for any thread count and any
/// rand version.
pub(crate) fn start_orders(seed: u64, k: u64, m: usize, n: usize) -> (Vec<usize>, Vec<usize>) {
    let mut rng = stream_rng(seed, purpose::TEMPERATURE_PACKING, k);
    let mut rows: Vec<usize> = (0..m).collect();
    let mut cols: Vec<usize> = (0..n).collect();
    shuffle(&mut rows, &mut rng);
    shuffle(&mut cols, &mut rng);
    (rows, cols)
}

/// The packed order by the exact few-members search ([`few`]): the best of
/// the sorted candidate and the optimum over every order of the small side.
fn pack_few_members(b: &BitMatrix, table: &UnexpectednessTable, sorted: Candidate) -> Candidate {
    let (m, n) = (b.nrows(), b.ncols());
    if table.links == 0 || table.links == m * n || sorted.0 == 0.0 {
        return sorted; // nothing can be lower than 0
    }
    few::pack_few(b, table, sorted)
}

/// The packed `T` of `b` by the exact search for a side of at most
/// [`FEW_MEMBERS`] members (the search used above
/// [`PACKING_SIDE_LIMIT`] members; any size here, for tests and timing):
/// `(T, row order, column order)`. Not part of the API.
///
/// Errors: a smaller side of more than 5 members, or as [`temperature`].
#[doc(hidden)]
pub fn packed_few_members(b: &BitMatrix) -> Result<(f64, Vec<usize>, Vec<usize>)> {
    let (m, n) = (b.nrows(), b.ncols());
    check_size(m, n)?;
    if m.min(n) > few::FEW_MEMBERS {
        return Err(Error::InvalidArgument(format!(
            "the few-members packing needs a side of at most {} members, not {m} x {n}",
            few::FEW_MEMBERS
        )));
    }
    let table = UnexpectednessTable::new(m, n, b.count_ones())?;
    let rows = degree_order(&b.row_degrees());
    let cols = degree_order(&b.col_degrees());
    let total = table.total(b, &rows, &cols);
    let best = pack_few_members(b, &table, (total, rows, cols));
    Ok((table.to_t(best.0), best.1, best.2))
}

/// The packed order: the best of the sorted candidate and the search (exact
/// where it applies and `allow_exact`, else alternating from the sorted
/// start and `opts.restarts` random starts).
fn pack(
    b: &BitMatrix,
    table: &UnexpectednessTable,
    sorted: Candidate,
    opts: &TemperatureOptions,
    allow_exact: bool,
    how: CostLoop,
) -> Candidate {
    let (m, n) = (b.nrows(), b.ncols());
    let links = table.links;
    if links == 0 || links == m * n || sorted.0 == 0.0 {
        return sorted; // nothing can be lower than 0
    }
    let packer = Packer::new(b, table, how);
    if allow_exact && packing_is_exact(m, n, links) {
        return if m <= n {
            packer.exhaust_rows(sorted)
        } else {
            packer.exhaust_cols(sorted)
        };
    }
    let starts: Vec<Candidate> = (0..=opts.restarts as u64)
        .into_par_iter()
        .map(|k| {
            if k == 0 {
                packer.descend(sorted.1.clone(), sorted.2.clone())
            } else {
                let (rows, cols) = start_orders(opts.seed, k, m, n);
                packer.descend(rows, cols)
            }
        })
        .collect();
    let mut best = sorted;
    for cand in starts {
        if cand.0 < best.0 {
            best = cand;
        }
    }
    best
}

mod few;
pub use few::{few_members_applies, FEW_MEMBERS, FEW_MEMBERS_WORK_LIMIT};

#[cfg(test)]
mod tests;
