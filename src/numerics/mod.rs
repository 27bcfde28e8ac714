//! Numerical tools that are not indices: linear assignment (temperature's
//! packing), the Lanczos eigen-solver on an operator (the spectral radius)
//! and special functions (the isocline area).

pub mod assign;
pub mod lanczos;
pub mod special;
