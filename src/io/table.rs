//! The table as read, and what acts on the whole network before it is built:
//! transposition, dropping species without links, the overflow check of
//! summed edge lines.

use super::*;

/// A table as read, before the options that act on whole networks
/// (transposition, dropping species without links) and validation.
pub(super) struct Table {
    pub(super) rows: Vec<String>,
    pub(super) cols: Vec<String>,
    pub(super) cells: TableCells,
}

pub(super) enum TableCells {
    /// Row-major values of a matrix-layout file.
    Dense(Array2<f64>),
    /// `(row, column, weight)` of an edge list, repeats not yet summed.
    Triplets(Vec<(u32, u32, f64)>),
}

impl Table {
    /// Transposes when asked, drops species without links unless kept
    /// (noting them), and builds the network.
    pub(super) fn finish(
        mut self,
        opts: &ReadOptions,
        report: &mut ReadReport,
    ) -> Result<Network<f64>> {
        if opts.transpose {
            std::mem::swap(&mut self.rows, &mut self.cols);
            self.cells = match self.cells {
                TableCells::Dense(a) => {
                    TableCells::Dense(a.reversed_axes().as_standard_layout().into_owned())
                }
                TableCells::Triplets(mut e) => {
                    for t in &mut e {
                        *t = (t.1, t.0, t.2);
                    }
                    TableCells::Triplets(e)
                }
            };
        }
        let total = if opts.keep_empty {
            None
        } else {
            self.drop_empty(report)?
        };
        match self.cells {
            TableCells::Dense(a) => Network::from_dense(a, self.rows, self.cols),
            TableCells::Triplets(e) => {
                check_sums(&self.rows, &self.cols, &e, total)?;
                // Interned labels: distinct on each side by construction.
                Network::from_triplets_distinct(self.rows, self.cols, e)
            }
        }
    }

    /// Removes the rows and columns without a positive weight. For triplets,
    /// returns the sum of their weights in their order (see [`check_sums`]),
    /// taken in the same pass.
    pub(super) fn drop_empty(&mut self, report: &mut ReadReport) -> Result<Option<f64>> {
        let (m, n) = (self.rows.len(), self.cols.len());
        let mut row_has = vec![false; m];
        let mut col_has = vec![false; n];
        let mut total = None;
        match &self.cells {
            TableCells::Dense(a) => {
                for ((i, j), &w) in a.indexed_iter() {
                    if w > 0.0 {
                        row_has[i] = true;
                        col_has[j] = true;
                    }
                }
            }
            TableCells::Triplets(e) => {
                let mut sum = 0.0;
                for &(i, j, w) in e {
                    sum += w;
                    if w > 0.0 {
                        row_has[i as usize] = true;
                        col_has[j as usize] = true;
                    }
                }
                total = Some(sum);
            }
        }
        if !row_has.iter().any(|&h| h) {
            return Err(Error::EmptyNetwork("no cell holds a non-zero weight"));
        }
        let keep_rows: Vec<usize> = (0..m).filter(|&i| row_has[i]).collect();
        let keep_cols: Vec<usize> = (0..n).filter(|&j| col_has[j]).collect();
        if keep_rows.len() == m && keep_cols.len() == n {
            return Ok(total);
        }
        for (side, labels, has) in [
            ("row", &self.rows, &row_has),
            ("column", &self.cols, &col_has),
        ] {
            let count = has.iter().filter(|&&h| !h).count();
            if count > 0 {
                report.notes.push(ReadNote::Dropped {
                    side,
                    count,
                    first: labels
                        .iter()
                        .zip(has)
                        .filter(|(_, &h)| !h)
                        .take(ReadNote::LISTED)
                        .map(|(l, _)| l.clone())
                        .collect(),
                });
            }
        }
        self.cells = match std::mem::replace(&mut self.cells, TableCells::Triplets(Vec::new())) {
            TableCells::Dense(a) => {
                TableCells::Dense(a.select(Axis(0), &keep_rows).select(Axis(1), &keep_cols))
            }
            TableCells::Triplets(e) => {
                let new_id = |has: &[bool]| {
                    let mut next = 0u32;
                    has.iter()
                        .map(|&h| {
                            let id = next;
                            next += u32::from(h);
                            id
                        })
                        .collect::<Vec<u32>>()
                };
                let (ri, ci) = (new_id(&row_has), new_id(&col_has));
                TableCells::Triplets(
                    e.into_iter()
                        .filter(|&(_, _, w)| w > 0.0)
                        .map(|(i, j, w)| (ri[i as usize], ci[j as usize], w))
                        .collect(),
                )
            }
        };
        let keep = |labels: &mut Vec<String>, has: &[bool]| {
            let mut k = 0;
            labels.retain(|_| {
                k += 1;
                has[k - 1]
            });
        };
        keep(&mut self.rows, &row_has);
        keep(&mut self.cols, &col_has);
        // Only zero weights were removed, so the sum is unchanged.
        Ok(total)
    }
}

/// Errors when repeated lines of one pair sum past the largest `f64`: the
/// sum of all weights, in their order, is checked first (finite for every
/// file but such a one, since weights are non-negative; `total` when the
/// caller has it), and only when it is infinite are the pairs summed to
/// find the first that overflows.
pub(super) fn check_sums(
    rows: &[String],
    cols: &[String],
    entries: &[(u32, u32, f64)],
    total: Option<f64>,
) -> Result<()> {
    let total = total.unwrap_or_else(|| entries.iter().map(|e| e.2).sum::<f64>());
    if total.is_finite() {
        return Ok(());
    }
    let mut sums: HashMap<(u32, u32), f64> = HashMap::new();
    for &(i, j, w) in entries {
        let s = sums.entry((i, j)).or_insert(0.0);
        *s += w;
        if s.is_infinite() {
            return Err(Error::BadWeight {
                row: rows[i as usize].clone(),
                col: cols[j as usize].clone(),
                value: "summed over the pair's repeated lines".into(),
                problem: "beyond the largest 64-bit float (about 1.8e308)",
            });
        }
    }
    Ok(())
}
