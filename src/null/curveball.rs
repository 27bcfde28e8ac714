//! The curveball chain for `fixed-both` (Strona, Nappo, Boccacci, Fattorini
//! & San-Miguel-Ayanz 2014, Nat. Commun. 5:4114).

use rand::Rng;

use crate::null::{below, Chain};
use crate::storage::BitMatrix;

/// A Markov chain over binary matrices with fixed row and column degrees
/// whose stationary distribution is uniform (the curveball algorithm of
/// Strona et al. 2014, Nat. Commun. 5:4114).
///
/// One [`step`](Self::step) is one *trade*: two distinct rows `a`, `b` are
/// picked uniformly; the columns that only `a` has and those that only `b`
/// has are pooled, the pool is shuffled and dealt back, `a` getting as many
/// as it gave. Row and column degrees never change.
///
/// Cost: `O(d_a + d_b)` per trade on row lists, plus bit updates; memory
/// `O(m n / 64 + L)`.
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, CurveballChain}, Network};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 0], [0, 1, 1]]).unwrap();
/// let mut chain = CurveballChain::new(&net.binary().unwrap());
/// chain.run(&mut draw_rng(5, 0), CurveballChain::default_burn_in(3, 3));
/// assert_eq!(chain.matrix().row_degrees(), vec![2, 1, 2]);
/// assert_eq!(chain.matrix().col_degrees(), vec![2, 2, 1]);
/// ```
#[derive(Clone, Debug)]
pub struct CurveballChain {
    rows: Vec<Vec<u32>>,
    bits: BitMatrix,
    pool: Vec<u32>,
    shared: Vec<u32>,
}

impl CurveballChain {
    /// A chain started at `start`.
    pub fn new(start: &BitMatrix) -> Self {
        let rows = (0..start.nrows())
            .map(|i| start.row_ones(i).map(|j| j as u32).collect())
            .collect();
        CurveballChain {
            rows,
            bits: start.clone(),
            pool: Vec::new(),
            shared: Vec::new(),
        }
    }

    /// The default number of trades per independent draw, `5 * max(m, n)`
    /// (METHODS.md §6).
    pub fn default_burn_in(m: usize, n: usize) -> usize {
        5 * m.max(n)
    }

    /// The current matrix.
    pub fn matrix(&self) -> &BitMatrix {
        &self.bits
    }

    /// The current matrix, consuming the chain.
    pub fn into_matrix(self) -> BitMatrix {
        self.bits
    }

    /// Runs `trades` steps.
    pub fn run<R: Rng + ?Sized>(&mut self, rng: &mut R, trades: usize) {
        for _ in 0..trades {
            self.step(rng);
        }
    }

    /// One trade. A matrix with fewer than two rows has a single state and
    /// does not change.
    pub fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
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
        // The first `only_a` places of a partial Fisher-Yates shuffle are a
        // uniform subset of the pool: they go to row `a`.
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
}
impl Chain for CurveballChain {
    type State = BitMatrix;
    /// One trade (see [`CurveballChain::step`]).
    fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        CurveballChain::step(self, rng)
    }
    fn state(&self) -> &BitMatrix {
        &self.bits
    }
    fn into_state(self) -> BitMatrix {
        self.bits
    }
}
