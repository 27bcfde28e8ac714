//! Low-level kernels shared by the indices: word popcounts and bit packing,
//! with run-time selection of the fastest instruction set.
//!
//! The indices in [`crate::metrics`] call these; they are public so that the
//! paths can be tested and timed one by one.

pub mod pack;
pub mod popcount;
