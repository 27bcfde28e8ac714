//! Minimum-cost linear assignment for `f64` costs.
//!
//! Given a cost table `c` with `r <= k` rows and `k` columns, find distinct
//! columns `col(0), ..., col(r-1)` minimising `sum_i c[i][col(i)]`. Used by
//! the temperature packing (METHODS.md §4), where rows are data rows and
//! columns are positions.
//!
//! Method: the Hungarian method in its shortest-augmenting-path form
//! (Kuhn 1955, Naval Res. Logist. Q. 2:83-97; Munkres 1957, J. SIAM
//! 5:32-38; the `O(r^2 k)` augmenting-path organisation is that of Jonker &
//! Volgenant 1987, Computing 38:325-340, without their initialisation
//! heuristics). Rows are added one at a time; each is matched by a Dijkstra
//! search over reduced costs `c[i][j] - u[i] - v[j]`, keeping the dual
//! potentials `u`, `v` feasible (`u[i] + v[j] <= c[i][j]`) with equality on
//! matched cells, which certifies optimality by linear-programming duality.

use crate::error::{Error, Result};

/// An optimal assignment with its dual certificate.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
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
/// Cost: `O(rows^2 cols)` time, `O(rows + cols)` memory beyond the table.
///
/// # Example
/// ```
/// use nidus::assign::assign;
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
    let mut work = Workspace::default();
    let assigned = work.solve(cost, rows, cols);
    let total = (0..rows).map(|i| cost[i * cols + assigned[i]]).sum();
    Ok(Assignment {
        cols: assigned.to_vec(),
        cost: total,
        row_potentials: work.u[1..=rows].to_vec(),
        col_potentials: work.v[1..=cols].to_vec(),
    })
}

/// Reusable buffers for repeated assignments of the same size (the packing
/// solves hundreds); the caller guarantees finite costs and `rows <= cols`.
#[derive(Clone, Debug, Default)]
pub(crate) struct Workspace {
    u: Vec<f64>,
    v: Vec<f64>,
    /// `owner[j]`: 1-based row matched to 1-based column `j` (0: none).
    owner: Vec<usize>,
    way: Vec<usize>,
    minv: Vec<f64>,
    used: Vec<bool>,
    result: Vec<usize>,
}

impl Workspace {
    /// Solves and returns the column of every row (borrowed from the
    /// workspace). Indices inside are 1-based with column 0 a virtual source.
    pub(crate) fn solve(&mut self, cost: &[f64], rows: usize, cols: usize) -> &[usize] {
        debug_assert!(rows <= cols && cost.len() == rows * cols);
        let (n, m) = (rows, cols);
        self.u.clear();
        self.u.resize(n + 1, 0.0);
        self.v.clear();
        self.v.resize(m + 1, 0.0);
        self.owner.clear();
        self.owner.resize(m + 1, 0);
        self.way.clear();
        self.way.resize(m + 1, 0);
        for i in 1..=n {
            self.owner[0] = i;
            let mut j0 = 0usize;
            self.minv.clear();
            self.minv.resize(m + 1, f64::INFINITY);
            self.used.clear();
            self.used.resize(m + 1, false);
            loop {
                self.used[j0] = true;
                let i0 = self.owner[j0];
                let row = &cost[(i0 - 1) * m..i0 * m];
                let ui0 = self.u[i0];
                let mut delta = f64::INFINITY;
                let mut j1 = 0usize;
                for j in 1..=m {
                    if !self.used[j] {
                        let cur = row[j - 1] - ui0 - self.v[j];
                        if cur < self.minv[j] {
                            self.minv[j] = cur;
                            self.way[j] = j0;
                        }
                        if self.minv[j] < delta {
                            delta = self.minv[j];
                            j1 = j;
                        }
                    }
                }
                // Finite costs and rows <= cols: an unused column always exists.
                debug_assert!(j1 != 0);
                for j in 0..=m {
                    if self.used[j] {
                        self.u[self.owner[j]] += delta;
                        self.v[j] -= delta;
                    } else {
                        self.minv[j] -= delta;
                    }
                }
                j0 = j1;
                if self.owner[j0] == 0 {
                    break;
                }
            }
            // Flip the augmenting path back to the source.
            loop {
                let j1 = self.way[j0];
                self.owner[j0] = self.owner[j1];
                j0 = j1;
                if j0 == 0 {
                    break;
                }
            }
        }
        self.result.clear();
        self.result.resize(n, 0);
        for j in 1..=m {
            if self.owner[j] != 0 {
                self.result[self.owner[j] - 1] = j - 1;
            }
        }
        &self.result
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
