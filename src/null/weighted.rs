//! Weighted permutation null models (METHODS.md §6): `shuffle-cells` and
//! `shuffle-weights`.

use ndarray::Array2;
use rand::distr::Distribution;
use rand::Rng;

use crate::error::Result;
use crate::null::shuffle;
use crate::storage::{Network, Weight};

/// `shuffle-cells`: all `m n` cell values (zeros included) permuted
/// uniformly. On a binary network this is the `equiprobable` model with
/// weights 0 and 1.
///
/// Cost per draw: `O(m n)`; memory `O(m n)` values.
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, ShuffleCells}, Network};
/// let net = Network::from_array(array![[3.0, 1.0], [0.0, 2.0]]).unwrap();
/// let w = ShuffleCells::new(&net).unwrap().sample(&mut draw_rng(1, 0));
/// let mut v: Vec<f64> = w.iter().copied().collect();
/// v.sort_by(f64::total_cmp);
/// assert_eq!(v, vec![0.0, 1.0, 2.0, 3.0]);
/// ```
#[derive(Clone, Debug)]
pub struct ShuffleCells {
    shape: (usize, usize),
    values: Vec<f64>,
}

impl ShuffleCells {
    /// Prepares the model; errors only for a network too large for a dense table.
    pub fn new<T: Weight>(net: &Network<T>) -> Result<Self> {
        let w = net.to_dense()?;
        Ok(ShuffleCells {
            shape: w.dim(),
            values: w.iter().map(|x| x.as_f64()).collect(),
        })
    }

    /// One draw.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Array2<f64> {
        let mut v = self.values.clone();
        shuffle(&mut v, rng);
        Array2::from_shape_vec(self.shape, v).expect("shape matches the value count")
    }
}

/// `shuffle-weights`: the binary structure kept, the non-zero values
/// permuted uniformly among the occupied cells. On a binary network every
/// draw equals the observed matrix.
///
/// Cost per draw: `O(m n)` to build the table, `O(L)` to permute.
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, ShuffleWeights}, Network};
/// let net = Network::from_array(array![[3.0, 1.0], [0.0, 2.0]]).unwrap();
/// let w = ShuffleWeights::new(&net).unwrap().sample(&mut draw_rng(1, 0));
/// assert_eq!(w[[1, 0]], 0.0);
/// assert_eq!(w.sum(), 6.0);
/// ```
#[derive(Clone, Debug)]
pub struct ShuffleWeights {
    shape: (usize, usize),
    cells: Vec<(usize, usize)>,
    values: Vec<f64>,
}

impl ShuffleWeights {
    /// Prepares the model; errors only for a network too large for a dense table.
    pub fn new<T: Weight>(net: &Network<T>) -> Result<Self> {
        crate::storage::check_dense_size(
            "a weighted null matrix",
            net.nrows(),
            net.ncols(),
            std::mem::size_of::<f64>(),
        )?;
        let csr = net.csr();
        let mut cells = Vec::with_capacity(csr.nnz());
        let mut values = Vec::with_capacity(csr.nnz());
        for i in 0..net.nrows() {
            let (cols, vals) = csr.row(i);
            for (&j, &x) in cols.iter().zip(vals) {
                cells.push((i, j as usize));
                values.push(x.as_f64());
            }
        }
        Ok(ShuffleWeights {
            shape: (net.nrows(), net.ncols()),
            cells,
            values,
        })
    }

    /// One draw.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Array2<f64> {
        let mut v = self.values.clone();
        shuffle(&mut v, rng);
        let mut w = Array2::zeros(self.shape);
        for (&c, x) in self.cells.iter().zip(v) {
            w[c] = x;
        }
        w
    }
}
impl Distribution<Array2<f64>> for ShuffleCells {
    /// One draw (see [`ShuffleCells::sample`]).
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Array2<f64> {
        ShuffleCells::sample(self, rng)
    }
}

impl Distribution<Array2<f64>> for ShuffleWeights {
    /// One draw (see [`ShuffleWeights::sample`]).
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Array2<f64> {
        ShuffleWeights::sample(self, rng)
    }
}
