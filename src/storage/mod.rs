//! Storage: the forms a network's cells take and the one view every index
//! reads.
//!
//! * [`Network`]: validated weights with labels, dense or sparse.
//! * [`BitMatrix`]: bit-packed binary rows, the form null draws take.
//! * [`Csr`]: compressed rows (its transpose gives compressed columns).
//! * [`NetView`]: what every index needs (shape, degrees, links, compressed
//!   rows and columns, bit-packed rows, weights), implemented for
//!   [`Network`], [`BitMatrix`], [`Csr`] and any two-dimensional `ndarray`
//!   array or view, so that `nodf(&array.view(), Order::Sorted)` works
//!   without copying into a network.

pub mod bits;
pub(crate) mod lists;
pub mod network;
mod view;

pub use bits::BitMatrix;
pub use network::{check_dense_size, Csr, Network, Weight, DENSE_BYTE_LIMIT, DENSE_CELL_LIMIT};
pub use view::{Layout, NetView};
