//! The crate's stopping rules and storage thresholds, named in one place.
//!
//! Each constant is used where its doc comment says; changing one changes
//! results (in the last digits for tolerances), so they are part of the
//! values the tests pin.

/// Temperature's packing search stops when a whole round of row and
/// column assignments lowers the total unexpectedness `U` by no more than
/// `PACKING_IMPROVEMENT * (1 + U)`.
pub const PACKING_IMPROVEMENT: f64 = 1e-12;

/// Isocline crossing (temperature): the bracketing interval of the
/// Newton-bisection search is considered closed at this width.
pub const ISOCLINE_BRACKET: f64 = 1e-16;

/// Isocline crossing (temperature): a Newton step shorter than this ends
/// the search.
pub const ISOCLINE_STEP: f64 = 1e-17;

/// Lanczos (spectral radius): relative residual of the restarted phase,
/// `r <= LANCZOS_RESIDUAL * theta` (see `numerics::lanczos`).
pub const LANCZOS_RESIDUAL: f64 = 1e-12;

/// Lanczos: the Krylov space is invariant when the next off-diagonal
/// coefficient is below `LANCZOS_INVARIANT` times the largest coefficient.
pub const LANCZOS_INVARIANT: f64 = 1e-14;

/// Lanczos, long phase: stop when the top Ritz value changed by at most
/// this, relative, between checks.
pub const LANCZOS_LONG_CHANGE: f64 = 1e-13;

/// Jacobi sweeps (small symmetric eigenproblems) stop when the squared
/// off-diagonal mass is below `JACOBI_OFF_DIAGONAL` times the squared
/// diagonal.
pub const JACOBI_OFF_DIAGONAL: f64 = 1e-32;

/// A network read from triplets is stored sparsely when it has more than
/// `SPARSE_MIN_CELLS` cells (2^22) ...
pub const SPARSE_MIN_CELLS: u128 = 1 << 22;

/// ... and a fill below `SPARSE_MAX_FILL`.
pub const SPARSE_MAX_FILL: f64 = 0.05;
