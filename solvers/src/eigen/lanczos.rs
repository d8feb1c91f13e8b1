//! Shift-invert Lanczos (placeholder while the dense path lands).

use super::{EigenPairs, EigenSettings};
use crate::{SolverError, SparsityPattern};

/// Lowest `count` eigenpairs above σ by shift-invert Lanczos.
pub fn lanczos_shift_invert(
    pattern: &SparsityPattern,
    k: &[f64],
    m: &[f64],
    settings: &EigenSettings,
) -> Result<EigenPairs, SolverError> {
    super::dense_shift_invert(pattern, k, m, settings)
}
