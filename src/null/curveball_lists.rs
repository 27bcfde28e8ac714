//! The curveball chain for `fixed-both` on sorted row lists (Strona, Nappo,
//! Boccacci, Fattorini & San-Miguel-Ayanz 2014, Nat. Commun. 5:4114): the
//! form large sparse networks are drawn in, `O(L)` memory instead of the
//! `m n / 8` bytes of a bit table.

use rand::Rng;

use crate::null::curveball::{subset_words, Halves};
use crate::null::Chain;
use crate::storage::{Csr, NetView};

/// The curveball chain of [`crate::null::CurveballChain`] walking over
/// compressed rows instead of a bit table: memory `O(m + L)` per chain,
/// cost per trade `O(d_a + d_b + min(k, t - k))` for rows `a`, `b` of
/// degrees `d_a`, `d_b` (no term in `n`).
///
/// One trade merges the two rows' sorted lists: the columns both rows hold
/// stay; the others (the symmetric difference, `t` columns in ascending
/// order) are pooled, and a uniform subset of the pool's ranks as large as
/// `a`'s share `k` is drawn by the bit chain's subset sampler (Floyd's
/// algorithm, Bentley & Floyd 1987, Commun. ACM 30:754, for a small side;
/// exact-count coins otherwise) and goes to `a`, the rest to `b`; both rows
/// are then written back ascending. Row and column degrees never change.
///
/// The random numbers are drawn exactly as by the bit-table chain (the same
/// pair of rows, the same ranks of the same pool in the same column
/// order), so from the same start and stream both chains visit the same
/// matrices: a seeded `fixed-both` run gives the same values whichever
/// storage its draws take.
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, CurveballChain, CurveballLists}, NetView, Network};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 0], [0, 1, 1]]).unwrap();
/// let mut lists = CurveballLists::new(&net).unwrap();
/// let mut bits = CurveballChain::new(&net.binary().unwrap());
/// let (mut r1, mut r2) = (draw_rng(5, 0), draw_rng(5, 0));
/// lists.run(&mut r1, 15);
/// bits.run(&mut r2, 15);
/// assert_eq!(lists.lists().row_degrees().to_vec(), vec![2, 1, 2]);
/// assert_eq!(&*lists.lists().bits().unwrap(), bits.matrix());
/// ```
#[derive(Clone, Debug)]
pub struct CurveballLists {
    rows: Csr<f64>,
    /// Scratch: the columns both rows hold, the pool, the chosen ranks.
    common: Vec<u32>,
    pool: Vec<u32>,
    pick: Vec<u64>,
}

impl CurveballLists {
    /// A chain started at the binary view of `net` (its links, as row
    /// lists). Errors only for an unvalidated table with invalid weights.
    pub fn new<V: NetView + ?Sized>(net: &V) -> crate::Result<Self> {
        let c = net.compressed_rows()?;
        Ok(CurveballLists {
            rows: Csr::ones_from_lists(
                c.nrows(),
                c.ncols(),
                c.indptr().to_vec(),
                c.indices().to_vec(),
            ),
            common: Vec::new(),
            pool: Vec::new(),
            pick: Vec::new(),
        })
    }

    /// The current matrix, as compressed rows (every weight 1).
    pub fn lists(&self) -> &Csr<f64> {
        &self.rows
    }

    /// Runs `trades` steps.
    pub fn run<R: Rng + ?Sized>(&mut self, rng: &mut R, trades: usize) {
        for _ in 0..trades {
            self.step(rng);
        }
    }

    /// One trade. A matrix with fewer than two rows does not change.
    pub fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        let m = self.rows.nrows();
        if m < 2 {
            return;
        }
        let mut draws = Halves::default();
        let (a, b) = draws.row_pair(rng, m);
        let (indptr, indices) = self.rows.lists_mut();
        let (ra, rb) = (indptr[a]..indptr[a + 1], indptr[b]..indptr[b + 1]);
        let (common, pool) = (&mut self.common, &mut self.pool);
        common.clear();
        pool.clear();
        // Merge the two ascending lists: shared columns apart, the rest
        // pooled in ascending order (the bit chain's rank order).
        let (mut i, mut j, mut only_a) = (ra.start, rb.start, 0usize);
        while i < ra.end && j < rb.end {
            let (x, y) = (indices[i], indices[j]);
            if x == y {
                common.push(x);
                i += 1;
                j += 1;
            } else if x < y {
                pool.push(x);
                only_a += 1;
                i += 1;
            } else {
                pool.push(y);
                j += 1;
            }
        }
        only_a += ra.end - i;
        pool.extend_from_slice(&indices[i..ra.end]);
        pool.extend_from_slice(&indices[j..rb.end]);
        // Both tails are ascending and above every earlier pool member, and
        // at most one is non-empty: the pool stays ascending.
        let total = pool.len();
        if only_a == 0 || only_a == total {
            return;
        }
        // The bit chain's subset of pool ranks for row `a` (the same draws
        // from the stream), so a seed gives the same matrices in either
        // storage.
        let pick = &mut self.pick;
        pick.clear();
        pick.resize(total.div_ceil(64) + 1, 0);
        subset_words::<R, false>(&mut draws, rng, total, only_a, pick);
        let goes_to_a = |r: usize| (pick[r >> 6] >> (r & 63)) & 1 == 1;
        write_row(&mut indices[ra], common, pool, goes_to_a);
        write_row(&mut indices[rb], common, pool, |r| !goes_to_a(r));
    }
}

/// Writes into `out` the ascending merge of `common` and the members of
/// `pool` (ascending) whose rank `keep` accepts; `out` has exactly the
/// room.
#[inline]
fn write_row(out: &mut [u32], common: &[u32], pool: &[u32], keep: impl Fn(usize) -> bool) {
    let mut c = common.iter().copied().peekable();
    let mut at = 0;
    for (r, &x) in pool.iter().enumerate() {
        if !keep(r) {
            continue;
        }
        while let Some(&y) = c.peek() {
            if y > x {
                break;
            }
            out[at] = y;
            at += 1;
            c.next();
        }
        out[at] = x;
        at += 1;
    }
    for y in c {
        out[at] = y;
        at += 1;
    }
    debug_assert_eq!(at, out.len());
}

impl Chain for CurveballLists {
    type State = Csr<f64>;
    /// One trade (see [`CurveballLists::step`]).
    fn step<R: Rng + ?Sized>(&mut self, rng: &mut R) {
        CurveballLists::step(self, rng)
    }
    fn state(&self) -> &Csr<f64> {
        &self.rows
    }
    fn into_state(self) -> Csr<f64> {
        self.rows
    }
}
