//! The curveball trade as it was before the word-level rewrite (row lists,
//! a partial Fisher-Yates shuffle of the pooled columns), kept only so the
//! benches can time the old and the new trade side by side in one run.
//! Same chain (uniform subset of the pool to row `a`), different random
//! stream use, so seeded matrices differ.

use nidus::null::{below, Chain};
use nidus::BitMatrix;
use rand::Rng;

#[derive(Clone, Debug)]
pub struct ListCurveball {
    rows: Vec<Vec<u32>>,
    bits: BitMatrix,
    pool: Vec<u32>,
    shared: Vec<u32>,
}

impl ListCurveball {
    pub fn new(start: &BitMatrix) -> Self {
        let rows = (0..start.nrows())
            .map(|i| start.row_ones(i).map(|j| j as u32).collect())
            .collect();
        ListCurveball {
            rows,
            bits: start.clone(),
            pool: Vec::new(),
            shared: Vec::new(),
        }
    }
}

impl Chain for ListCurveball {
    type State = BitMatrix;
    fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        let m = self.rows.len();
        if m < 2 {
            return;
        }
        let a = below(rng, m);
        let mut b = below(rng, m - 1);
        if b >= a {
            b += 1;
        }
        self.pool.clear();
        self.shared.clear();
        for &j in &self.rows[a] {
            if self.bits.get(b, j as usize) {
                self.shared.push(j);
            } else {
                self.pool.push(j);
            }
        }
        let only_a = self.pool.len();
        for &j in &self.rows[b] {
            if !self.bits.get(a, j as usize) {
                self.pool.push(j);
            }
        }
        let total = self.pool.len();
        if only_a == 0 || only_a == total {
            return;
        }
        for i in 0..only_a {
            let k = i + below(rng, total - i);
            self.pool.swap(i, k);
        }
        for &j in &self.pool[..only_a] {
            self.bits.set(a, j as usize, true);
            self.bits.set(b, j as usize, false);
        }
        for &j in &self.pool[only_a..] {
            self.bits.set(a, j as usize, false);
            self.bits.set(b, j as usize, true);
        }
        let ra = &mut self.rows[a];
        ra.clear();
        ra.extend_from_slice(&self.shared);
        ra.extend_from_slice(&self.pool[..only_a]);
        let rb = &mut self.rows[b];
        rb.clear();
        rb.extend_from_slice(&self.shared);
        rb.extend_from_slice(&self.pool[only_a..]);
    }
    fn state(&self) -> &BitMatrix {
        &self.bits
    }
    fn into_state(self) -> BitMatrix {
        self.bits
    }
}
