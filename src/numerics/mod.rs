//! Numerical tools that are not indices: linear assignment (temperature's
//! packing) and special functions (the isocline area).

pub mod assign;
pub mod special;
