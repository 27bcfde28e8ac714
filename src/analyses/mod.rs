//! Analyses built on the indices and the null runner: which species make a
//! network nested, how index and null model behave on networks like the
//! user's, and whether the sampling effort was enough. One file each.
pub mod assess;
pub mod species;

pub mod effort;
