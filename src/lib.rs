//! # nidus
//!
//! Measures how nested a bipartite ecological network is (plants and
//! pollinators, hosts and parasites, sites and species) and whether that
//! nestedness is more than chance.
//!
//! * [`storage`]: [`Network`] (validated weights with labels, dense or
//!   sparse), [`BitMatrix`], [`Csr`] and the one view every index reads,
//!   [`NetView`] (also implemented for `ndarray` arrays and views).
//! * [`metrics`]: NODF, WNODF and the other indices, one public function
//!   each, generic over the view; [`Statistic`] and the registry of built-in
//!   indices ([`metrics::registry`]).
//! * [`null`]: null models as `rand` distributions (and chains with a
//!   burn-in), and a seeded runner that tests any statistics against any
//!   sampler ([`null::run_test`]).
//! * [`io`]: reading matrix and edge-list files.
//!
//! ```
//! use ndarray::array;
//! use nidus::{metrics::{nodf, Order}, Network};
//! let net = Network::from_array(array![[1, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
//! assert_eq!(nodf(&net, Order::Sorted).unwrap().total, 100.0);
//! // Or straight from a borrowed table:
//! let w = array![[1, 1, 1], [1, 1, 0], [1, 0, 0]];
//! assert_eq!(nodf(&w.view(), Order::Sorted).unwrap().total, 100.0);
//! ```
#![warn(missing_docs)]

pub mod analyses;
pub mod error;
#[cfg(feature = "figures")]
pub mod figures;
pub mod index;
pub mod io;
/// Bit-packing and popcount kernels with their CPU dispatch: internal,
/// public only so that the tests can compare every path.
#[doc(hidden)]
pub mod kernels;
pub mod measure;
pub mod metrics;
pub mod null;
pub mod numerics;
pub mod significance;
pub mod tolerance;

/// The `ndarray` this crate is built with: use `nidus::ndarray` to build
/// arrays whose type matches the library's signatures.
pub use ndarray;
/// The `rand` this crate is built with (samplers take `R: rand::Rng`).
pub use rand;
/// The `rand_xoshiro` this crate is built with: the generator type of
/// [`null::draw_rng`].
pub use rand_xoshiro;

pub mod storage;

/// The former paths of the storage types (`nidus::network`,
/// `nidus::bits`), kept so existing imports keep compiling.
#[doc(hidden)]
pub use storage::{bits, network};

pub use error::{Error, Result};
pub use metrics::{Direction, Order, Statistic};
pub use storage::{BitMatrix, Csr, Layout, NetView, Network, Weight};

/// The README's "Library use" blocks, compiled and run as doc-tests so
/// they cannot rot.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
pub struct ReadmeDoctests;
