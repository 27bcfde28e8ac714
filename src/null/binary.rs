//! Independent-draw binary null models (METHODS.md §6): `equiprobable`,
//! `proportional`, `fixed-rows`, `fixed-columns`. Each reads the binary view
//! of the network.

use rand::distr::Distribution;
use rand::Rng;

use crate::error::Result;
use crate::null::{floyd, unit};
use crate::storage::BitMatrix;
use crate::storage::{check_dense_size, Network, Weight};

fn check_size<T: Weight>(net: &Network<T>) -> Result<()> {
    check_dense_size("a binary null matrix", net.nrows(), net.ncols(), 0)
}

/// `equiprobable`: the `L` ones of the observed binary view placed uniformly
/// among all `m n` cells (every matrix with `L` ones equally likely).
///
/// Cost per draw: `O(m n / 64)` to clear the matrix plus `O(L)` (Floyd's
/// sampling of `L` distinct cells).
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, Equiprobable}, Network};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 0]]).unwrap();
/// let b = Equiprobable::new(&net).unwrap().sample(&mut draw_rng(7, 0));
/// assert_eq!(b.links(), 3);
/// ```
#[derive(Clone, Debug)]
pub struct Equiprobable {
    m: usize,
    n: usize,
    links: usize,
}

impl Equiprobable {
    /// Prepares the model; errors only for a network too large for a dense bit table.
    pub fn new<T: Weight>(net: &Network<T>) -> Result<Self> {
        check_size(net)?;
        Ok(Equiprobable {
            m: net.nrows(),
            n: net.ncols(),
            links: net.links(),
        })
    }

    /// One draw.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> BitMatrix {
        let (m, n) = (self.m, self.n);
        let mut b = BitMatrix::zeros(m, n);
        floyd(rng, m * n, self.links, |t, c| {
            let c = if b.get(t / n, t % n) { c } else { t };
            b.set(c / n, c % n, true);
        });
        b
    }
}

/// `proportional` (Bascompte, Jordano, Melián & Olesen 2003, PNAS
/// 100:9383-9387): each cell is 1 independently with probability
/// `p_ij = (d_i/n + d_j/m) / 2`, from the observed row and column degrees.
/// Fill and degrees vary from draw to draw; their expectations follow the
/// observed ones.
///
/// Cost per draw: `O(m n)` uniform reals.
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, Proportional}, Network};
/// let net = Network::from_array(array![[1, 1], [1, 1]]).unwrap();
/// // All degrees full: every probability is 1.
/// let b = Proportional::new(&net).unwrap().sample(&mut draw_rng(1, 0));
/// assert_eq!(b.links(), 4);
/// ```
#[derive(Clone, Debug)]
pub struct Proportional {
    row_part: Vec<f64>,
    col_part: Vec<f64>,
}

impl Proportional {
    /// Prepares the model; errors only for a network too large for a dense bit table.
    pub fn new<T: Weight>(net: &Network<T>) -> Result<Self> {
        check_size(net)?;
        let (m, n) = (net.nrows() as f64, net.ncols() as f64);
        Ok(Proportional {
            row_part: net.row_degrees().iter().map(|&d| d as f64 / n).collect(),
            col_part: net.col_degrees().iter().map(|&d| d as f64 / m).collect(),
        })
    }

    /// The probability that cell `(i, j)` is 1.
    pub fn probability(&self, i: usize, j: usize) -> f64 {
        (self.row_part[i] + self.col_part[j]) / 2.0
    }

    /// One draw.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> BitMatrix {
        let (m, n) = (self.row_part.len(), self.col_part.len());
        let mut b = BitMatrix::zeros(m, n);
        for i in 0..m {
            for j in 0..n {
                if unit(rng) < self.probability(i, j) {
                    b.set(i, j, true);
                }
            }
        }
        b
    }
}

/// `fixed-rows`: each row keeps its degree, its ones placed uniformly among
/// its `n` cells, rows independent.
///
/// Cost per draw: `O(m n / 64 + L)`.
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, FixedRows}, Network};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 0]]).unwrap();
/// let b = FixedRows::new(&net).unwrap().sample(&mut draw_rng(3, 0));
/// assert_eq!(b.row_degrees(), vec![2, 1]);
/// ```
#[derive(Clone, Debug)]
pub struct FixedRows {
    n: usize,
    degrees: Vec<usize>,
}

impl FixedRows {
    /// Prepares the model; errors only for a network too large for a dense bit table.
    pub fn new<T: Weight>(net: &Network<T>) -> Result<Self> {
        check_size(net)?;
        Ok(FixedRows {
            n: net.ncols(),
            degrees: net.row_degrees().to_vec(),
        })
    }

    /// One draw.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> BitMatrix {
        let mut b = BitMatrix::zeros(self.degrees.len(), self.n);
        for (i, &d) in self.degrees.iter().enumerate() {
            let row = b.row_mut(i);
            floyd(rng, self.n, d, |t, j| {
                let c = if (row[t / 64] >> (t % 64)) & 1 == 1 {
                    j
                } else {
                    t
                };
                row[c / 64] |= 1u64 << (c % 64);
            });
        }
        b
    }
}

/// `fixed-columns`: each column keeps its degree, its ones placed uniformly
/// among its `m` cells, columns independent.
///
/// Cost per draw: `O(m n / 64 + L)`.
///
/// ```
/// use ndarray::array;
/// use nidus::{null::{draw_rng, FixedColumns}, Network};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 0]]).unwrap();
/// let b = FixedColumns::new(&net).unwrap().sample(&mut draw_rng(3, 0));
/// assert_eq!(b.col_degrees(), vec![2, 1, 0]);
/// ```
#[derive(Clone, Debug)]
pub struct FixedColumns {
    m: usize,
    degrees: Vec<usize>,
}

impl FixedColumns {
    /// Prepares the model; errors only for a network too large for a dense bit table.
    pub fn new<T: Weight>(net: &Network<T>) -> Result<Self> {
        check_size(net)?;
        Ok(FixedColumns {
            m: net.nrows(),
            degrees: net.col_degrees().to_vec(),
        })
    }

    /// One draw.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> BitMatrix {
        let mut b = BitMatrix::zeros(self.m, self.degrees.len());
        for (j, &d) in self.degrees.iter().enumerate() {
            floyd(rng, self.m, d, |t, i| {
                let r = if b.get(t, j) { i } else { t };
                b.set(r, j, true);
            });
        }
        b
    }
}
impl Distribution<BitMatrix> for Equiprobable {
    /// One draw (see [`Equiprobable::sample`]).
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> BitMatrix {
        Equiprobable::sample(self, rng)
    }
}

impl Distribution<BitMatrix> for Proportional {
    /// One draw (see [`Proportional::sample`]).
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> BitMatrix {
        Proportional::sample(self, rng)
    }
}

impl Distribution<BitMatrix> for FixedRows {
    /// One draw (see [`FixedRows::sample`]).
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> BitMatrix {
        FixedRows::sample(self, rng)
    }
}

impl Distribution<BitMatrix> for FixedColumns {
    /// One draw (see [`FixedColumns::sample`]).
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> BitMatrix {
        FixedColumns::sample(self, rng)
    }
}
