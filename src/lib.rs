//! # nidus
//!
//! Measures how nested a bipartite ecological network is (plants and
//! pollinators, hosts and parasites, sites and species) and whether that
//! nestedness is more than chance.
//!
//! * [`Network`]: a validated weighted network with labels, dense or sparse.
//! * [`metrics`]: NODF, WNODF and the other indices, one file each.
//! * [`io`]: reading matrix and edge-list files.
//!
//! ```
//! use ndarray::array;
//! use nidus::{metrics::{nodf, Order}, Network};
//! let net = Network::from_array(array![[1, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
//! assert_eq!(nodf(&net, Order::Sorted).unwrap().total, 100.0);
//! ```
#![warn(missing_docs)]

pub mod analyses;
pub mod assign;
pub mod bits;
pub mod error;
pub mod index;
pub mod io;
/// Bit-packing and popcount kernels with their CPU dispatch: internal,
/// public only so that the tests can compare every path.
#[doc(hidden)]
pub mod kernels;
pub mod measure;
pub mod metrics;
pub mod network;
pub mod null;
pub mod significance;
pub mod special;
pub mod tolerance;

/// The `ndarray` this crate is built with: use `nidus::ndarray` to build
/// arrays whose type matches the library's signatures.
pub use ndarray;
/// The `rand` this crate is built with (samplers take `R: rand::Rng`).
pub use rand;
/// The `rand_xoshiro` this crate is built with: the generator type of
/// [`null::draw_rng`].
pub use rand_xoshiro;

pub use bits::BitMatrix;
pub use error::{Error, Result};
pub use metrics::Order;
pub use network::{Csr, Network, Weight};
