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
#[cfg(feature = "figures")]
pub mod figures;
pub mod index;
pub mod io;
pub mod kernels;
pub mod measure;
pub mod metrics;
pub mod network;
pub mod null;
pub mod significance;
pub mod special;

pub use bits::BitMatrix;
pub use error::{Error, Result};
pub use metrics::Order;
pub use network::{Csr, Network, Weight};
