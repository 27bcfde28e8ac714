//! Minimum-cost linear assignment for `f64` costs.
//!
//! Given a cost table `c` with `r <= k` rows and `k` columns, find distinct
//! columns `col(0), ..., col(r-1)` minimising `sum_i c[i][col(i)]`. Used by
//! the temperature packing (METHODS.md §4), where rows are data rows and
//! columns are positions.
//!
//! Method: Jonker & Volgenant (1987, Computing 38:325-340): column
//! reduction gives feasible prices and a partial assignment, then every
//! free row is assigned by a shortest augmenting path (Dijkstra over the
//! reduced costs `c[i][j] - v[j]`, scanning only unfinished columns and
//! updating prices once per path). The prices `v` and the implied row
//! potentials `u[i] = c[i][col(i)] - v[col(i)]` stay dual feasible
//! (`u[i] + v[j] <= c[i][j]`) with equality on matched cells, which
//! certifies optimality by linear-programming duality (the Hungarian method
//! of Kuhn 1955, Naval Res. Logist. Q. 2:83-97, rests on the same fact).
//! A table with fewer rows than columns is padded with zero-cost rows.

use crate::error::{Error, Result};

/// An optimal assignment with its dual certificate.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Assignment {
    /// `cols[i]` = the column given to row `i`; all distinct.
    pub cols: Vec<usize>,
    /// `sum_i c[i][cols[i]]`, summed in row order.
    pub cost: f64,
    /// Row potentials `u` of the dual certificate.
    pub row_potentials: Vec<f64>,
    /// Column potentials `v`: `u[i] + v[j] <= c[i][j]` for every cell (up to
    /// rounding), with equality where `j = cols[i]`.
    pub col_potentials: Vec<f64>,
}

/// Solves the assignment problem for a row-major `rows x cols` cost table
/// (`rows <= cols`): each row gets its own column, total cost minimal.
///
/// Ties between optimal assignments are broken deterministically (the same
/// input always gives the same answer).
///
/// Errors: `cost.len() != rows * cols`, `rows > cols`, or a cost that is NaN
/// or infinite ([`Error::InvalidArgument`]).
///
/// Cost: `O(cols^3)` time in the worst case (far less on typical tables),
/// `O(cols)` memory beyond the table (`O(cols^2)` when it must be padded to
/// a square).
///
/// # Example
/// ```
/// use nidus::numerics::assign::assign;
/// // Rows are workers, columns jobs.
/// let c = [4.0, 1.0, 3.0,
///          2.0, 0.0, 5.0,
///          3.0, 2.0, 2.0];
/// let a = assign(&c, 3, 3).unwrap();
/// assert_eq!(a.cols, vec![1, 0, 2]);
/// assert_eq!(a.cost, 5.0);
/// ```
pub fn assign(cost: &[f64], rows: usize, cols: usize) -> Result<Assignment> {
    if cost.len() != rows * cols {
        return Err(Error::InvalidArgument(format!(
            "assignment: a {rows} x {cols} cost table needs {} values, got {}",
            rows * cols,
            cost.len()
        )));
    }
    if rows > cols {
        return Err(Error::InvalidArgument(format!(
            "assignment: {rows} rows cannot get distinct columns among {cols}"
        )));
    }
    if let Some(k) = cost.iter().position(|c| !c.is_finite()) {
        return Err(Error::InvalidArgument(format!(
            "assignment: cost ({}, {}) is {}",
            k / cols,
            k % cols,
            cost[k]
        )));
    }
    let padded;
    let square = if rows < cols {
        let mut p = cost.to_vec();
        p.resize(cols * cols, 0.0);
        padded = p;
        &padded[..]
    } else {
        cost
    };
    let mut work = Workspace::default();
    let assigned = work.solve(square, cols)[..rows].to_vec();
    let total = (0..rows).map(|i| cost[i * cols + assigned[i]]).sum();
    let v = work.v.clone();
    let u = (0..rows)
        .map(|i| cost[i * cols + assigned[i]] - v[assigned[i]])
        .collect();
    Ok(Assignment {
        cols: assigned,
        cost: total,
        row_potentials: u,
        col_potentials: v,
    })
}

const NONE: usize = usize::MAX;

/// Reusable buffers for repeated square assignments (the packing solves
/// hundreds); the caller guarantees finite costs.
#[derive(Clone, Debug, Default)]
pub(crate) struct Workspace {
    /// Column prices.
    v: Vec<f64>,
    /// Column of each row (`NONE`: free).
    x: Vec<usize>,
    /// Row of each column (`NONE`: free).
    y: Vec<usize>,
    d: Vec<f64>,
    pred: Vec<usize>,
    collist: Vec<usize>,
}

impl Workspace {
    /// Solves the `n x n` row-major table and returns the column of every
    /// row (borrowed from the workspace).
    pub(crate) fn solve(&mut self, c: &[f64], n: usize) -> &[usize] {
        self.solve_from(c, n, false)
    }

    /// As [`Workspace::solve`], but when `warm` and the previous solve had
    /// the same size, starts from that solve's column prices: each row takes
    /// its cheapest column under those prices if still free (feasible and
    /// tight by construction), and only the rest are assigned by the
    /// phases below. Exact either way; fast when the costs changed little.
    pub(crate) fn solve_from(&mut self, c: &[f64], n: usize, warm: bool) -> &[usize] {
        debug_assert_eq!(c.len(), n * n);
        let warm = warm && self.v.len() == n && n > 0;
        if !warm {
            self.v.clear();
            self.v.resize(n, 0.0);
        }
        self.x.clear();
        self.x.resize(n, NONE);
        self.y.clear();
        self.y.resize(n, NONE);
        self.d.clear();
        self.d.resize(n, 0.0);
        self.pred.clear();
        self.pred.resize(n, 0);
        self.collist.clear();
        self.collist.resize(n, 0);
        if n == 0 {
            return &self.x;
        }
        if warm {
            for i in 0..n {
                let row = &c[i * n..(i + 1) * n];
                let (mut min, mut jmin) = (f64::INFINITY, 0);
                for j in 0..n {
                    let h = row[j] - self.v[j];
                    if h < min {
                        min = h;
                        jmin = j;
                    }
                }
                if self.y[jmin] == NONE {
                    self.x[i] = jmin;
                    self.y[jmin] = i;
                }
            }
        } else {
            // Column reduction: v[j] = min_i c[i][j]; a row that is the first
            // minimiser of a column and still free takes it. Reduced costs are
            // then >= 0 with zeros on the matched cells.
            for j in (0..n).rev() {
                let (mut min, mut imin) = (c[j], 0);
                for i in 1..n {
                    let cij = c[i * n + j];
                    if cij < min {
                        min = cij;
                        imin = i;
                    }
                }
                self.v[j] = min;
                if self.x[imin] == NONE {
                    self.x[imin] = j;
                    self.y[j] = imin;
                }
            }
            // Reduction transfer: a matched row's column is made cheaper by
            // the row's second-best reduced cost, keeping the match tight.
            for i in 0..n {
                let j1 = self.x[i];
                if j1 == NONE {
                    continue;
                }
                let row = &c[i * n..(i + 1) * n];
                let mut min = f64::INFINITY;
                for j in 0..n {
                    if j != j1 {
                        min = min.min(row[j] - self.v[j]);
                    }
                }
                if min.is_finite() {
                    self.v[j1] -= min;
                }
            }
        }
        // Augmenting row reduction, two passes: a free row takes its
        // cheapest column, lowering that column's price to the row's
        // second-best reduced cost; the displaced row is retried at once.
        // Prices only fall, so feasibility and tight matches are kept.
        let mut free: Vec<usize> = (0..n).filter(|&i| self.x[i] == NONE).collect();
        for _ in 0..2 {
            let mut budget = 4 * n; // guards against long chains of tiny price cuts
            let mut next_free = Vec::with_capacity(free.len());
            let mut k = 0;
            while k < free.len() {
                let i = free[k];
                k += 1;
                let row = &c[i * n..(i + 1) * n];
                let (mut umin, mut usub) = (row[0] - self.v[0], f64::INFINITY);
                let (mut j1, mut j2) = (0usize, NONE);
                for j in 1..n {
                    let h = row[j] - self.v[j];
                    if h < usub {
                        if h >= umin {
                            usub = h;
                            j2 = j;
                        } else {
                            usub = umin;
                            umin = h;
                            j2 = j1;
                            j1 = j;
                        }
                    }
                }
                let mut i0 = self.y[j1];
                let strict = umin < usub;
                if strict {
                    self.v[j1] -= usub - umin;
                } else if i0 != NONE && j2 != NONE {
                    // A tie: the second column may be free.
                    j1 = j2;
                    i0 = self.y[j2];
                }
                self.x[i] = j1;
                self.y[j1] = i;
                if i0 != NONE {
                    self.x[i0] = NONE;
                    if strict && budget > 0 {
                        budget -= 1;
                        k -= 1;
                        free[k] = i0;
                    } else {
                        next_free.push(i0);
                    }
                }
            }
            free = next_free;
        }
        for f in free {
            self.augment(c, n, f);
        }
        &self.x
    }

    /// Assigns free row `f` along a shortest augmenting path.
    ///
    /// The loops `for k in up..n` fix their range on entry while `up` grows
    /// inside (columns moved into the to-scan block), as in Jonker &
    /// Volgenant's own code.
    #[allow(clippy::mut_range_bound)]
    fn augment(&mut self, c: &[f64], n: usize, f: usize) {
        let row_f = &c[f * n..(f + 1) * n];
        for j in 0..n {
            self.d[j] = row_f[j] - self.v[j];
            self.pred[j] = f;
            self.collist[j] = j;
        }
        // collist[..low]: finished columns; collist[low..up]: columns at the
        // current minimum distance, to scan; collist[up..]: the rest.
        let (mut low, mut up, mut last) = (0usize, 0usize, 0usize);
        let mut min = 0.0;
        let end = 'search: loop {
            if up == low {
                last = low;
                min = self.d[self.collist[up]];
                up += 1;
                for k in up..n {
                    let j = self.collist[k];
                    let h = self.d[j];
                    if h <= min {
                        if h < min {
                            up = low;
                            min = h;
                        }
                        self.collist[k] = self.collist[up];
                        self.collist[up] = j;
                        up += 1;
                    }
                }
                for k in low..up {
                    let j = self.collist[k];
                    if self.y[j] == NONE {
                        break 'search j;
                    }
                }
            }
            let j1 = self.collist[low];
            low += 1;
            let i = self.y[j1];
            let row_i = &c[i * n..(i + 1) * n];
            let h = row_i[j1] - self.v[j1] - min;
            for k in up..n {
                let j = self.collist[k];
                let v2 = row_i[j] - self.v[j] - h;
                if v2 < self.d[j] {
                    self.pred[j] = i;
                    if v2 <= min {
                        // At the current minimum (`<` only by rounding).
                        if self.y[j] == NONE {
                            self.d[j] = v2;
                            break 'search j;
                        }
                        self.collist[k] = self.collist[up];
                        self.collist[up] = j;
                        up += 1;
                    }
                    self.d[j] = v2;
                }
            }
        };
        // Price update of the finished columns, then flip the path.
        for k in 0..last {
            let j = self.collist[k];
            self.v[j] += self.d[j] - min;
        }
        let mut j = end;
        loop {
            let i = self.pred[j];
            self.y[j] = i;
            let next = self.x[i];
            self.x[i] = j;
            if i == f {
                break;
            }
            j = next;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_xoshiro::Xoshiro256PlusPlus;

    /// Minimum over all injective maps rows -> columns, by enumeration
    /// (the definition of the problem).
    fn brute(cost: &[f64], rows: usize, cols: usize) -> f64 {
        fn go(cost: &[f64], rows: usize, cols: usize, i: usize, used: &mut [bool]) -> f64 {
            if i == rows {
                return 0.0;
            }
            let mut best = f64::INFINITY;
            for j in 0..cols {
                if !used[j] {
                    used[j] = true;
                    let c = cost[i * cols + j] + go(cost, rows, cols, i + 1, used);
                    used[j] = false;
                    best = best.min(c);
                }
            }
            best
        }
        go(cost, rows, cols, 0, &mut vec![false; cols])
    }

    /// Checks the LP-duality certificate: feasibility `u_i + v_j <= c_ij`,
    /// equality on the matched cells, distinct columns (Kuhn 1955).
    fn check_certificate(a: &Assignment, cost: &[f64], rows: usize, cols: usize) {
        let scale = 1.0 + cost.iter().fold(0.0f64, |s, c| s.max(c.abs()));
        let mut seen = vec![false; cols];
        for i in 0..rows {
            let j = a.cols[i];
            assert!(!seen[j], "column {j} used twice");
            seen[j] = true;
            let slack = cost[i * cols + j] - a.row_potentials[i] - a.col_potentials[j];
            assert!(slack.abs() <= 1e-9 * scale, "matched slack {slack}");
            for jj in 0..cols {
                let s = cost[i * cols + jj] - a.row_potentials[i] - a.col_potentials[jj];
                assert!(s >= -1e-9 * scale, "negative reduced cost {s}");
            }
        }
    }

    /// Optimal value equals brute-force enumeration on random tables up to
    /// 7 x 8, including integer tables full of ties and negative costs.
    #[test]
    fn matches_enumeration() {
        for seed in 0..400u64 {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
            let rows = rng.random_range(1..=7);
            let cols = rng.random_range(rows..=8);
            let ties = seed % 3 == 0;
            let cost: Vec<f64> = (0..rows * cols)
                .map(|_| {
                    if ties {
                        rng.random_range(0..4) as f64
                    } else {
                        rng.random_range(-1.0..1.0)
                    }
                })
                .collect();
            let a = assign(&cost, rows, cols).unwrap();
            let want = brute(&cost, rows, cols);
            assert!(
                (a.cost - want).abs() < 1e-12,
                "seed {seed}: {} vs {want}",
                a.cost
            );
            check_certificate(&a, &cost, rows, cols);
        }
    }

    /// Warm starts (prices of the previous solve) give optimal answers on
    /// sequences of perturbed tables, against enumeration.
    #[test]
    fn warm_starts_match_enumeration() {
        for seed in 0..60u64 {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(2000 + seed);
            let n = rng.random_range(1..=7);
            let mut cost: Vec<f64> = (0..n * n).map(|_| rng.random_range(0..5) as f64).collect();
            let mut work = Workspace::default();
            for step in 0..12 {
                let changes = rng.random_range(0..=n);
                for _ in 0..changes {
                    let k = rng.random_range(0..n * n);
                    cost[k] = if seed % 2 == 0 {
                        rng.random_range(0..5) as f64
                    } else {
                        rng.random_range(-2.0..2.0)
                    };
                }
                let cols = work.solve_from(&cost, n, true).to_vec();
                let mut seen = vec![false; n];
                for &j in &cols {
                    assert!(!seen[j]);
                    seen[j] = true;
                }
                let got: f64 = (0..n).map(|i| cost[i * n + cols[i]]).sum();
                let want = brute(&cost, n, n);
                assert!(
                    (got - want).abs() < 1e-12,
                    "seed {seed} step {step}: {got} vs {want}"
                );
            }
        }
    }

    /// Larger tables: the duality certificate proves optimality.
    #[test]
    fn certificate_on_larger_tables() {
        for seed in 0..6u64 {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(1000 + seed);
            let n = 60 + 10 * seed as usize;
            let cost: Vec<f64> = (0..n * n).map(|_| rng.random_range(0.0..1.0)).collect();
            let a = assign(&cost, n, n).unwrap();
            check_certificate(&a, &cost, n, n);
        }
    }

    /// A permutation-matrix cost table: zero cost only on the permutation,
    /// so the answer is the permutation (analytic).
    #[test]
    fn recovers_a_hidden_permutation() {
        let perm = [3usize, 0, 4, 1, 2];
        let mut cost = vec![1.0; 25];
        for (i, &j) in perm.iter().enumerate() {
            cost[i * 5 + j] = 0.0;
        }
        let a = assign(&cost, 5, 5).unwrap();
        assert_eq!(a.cols, perm);
        assert_eq!(a.cost, 0.0);
    }

    #[test]
    fn rejects_bad_input() {
        assert!(assign(&[1.0, 2.0], 2, 2).is_err());
        assert!(assign(&[1.0, 2.0], 2, 1).is_err());
        assert!(assign(&[1.0, f64::NAN, 0.0, 0.0], 2, 2).is_err());
        let empty = assign(&[], 0, 3).unwrap();
        assert!(empty.cols.is_empty());
    }
}
