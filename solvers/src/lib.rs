//! Sparse linear and nonlinear solvers for glaze.
//!
//! The crate knows matrices and callbacks, never lines, wind or a model:
//!
//! - [`SparsityPattern`] — the CSC pattern (both triangles) of a global matrix,
//!   built from per-element DOF groups; [`Assembler`] — the precomputed
//!   scatter of element matrices and vectors into it.
//! - [`LinearSolver`] and its faer implementation [`SparseDirect`]: Cholesky
//!   $LL^\top$ for symmetric positive definite values, LU otherwise, each
//!   symbolic analysis done once per pattern and reused ([`FactorStats`]
//!   counts it), singular matrices reported as [`SolverError::Singular`].
//! - [`newton_solve`] — Newton–Raphson at a fixed load factor λ on a
//!   [`NonlinearSystem`]; [`solve_load_path`] — λ from 0 to 1 with automatic
//!   cut-back and regrowth.
//! - [`Integrator`] — implicit time integration of a [`SecondOrderSystem`]
//!   $M a + C v + g(q, v, t) = 0$ by HHT-α, generalised-α or Newmark
//!   ([`Scheme`]), Newton per step (optionally modified Newton reusing the
//!   factor), automatic step cut-back and regrowth.
//! - [`lanczos_shift_invert`] — the lowest eigenpairs of $K\varphi = \lambda M\varphi$
//!   above a shift by shift-invert Lanczos (full reorthogonalisation, thick
//!   restarts, acceptance on the true residual, singular M allowed);
//!   [`dense_shift_invert`] — its dense reference ([`EigenSettings`],
//!   [`EigenPairs`]).
//!
//! Units are SI throughout: forces in N (moments N·m), displacements in m
//! (rotations rad); load factors and tolerances are dimensionless.
//!
//! ```
//! use glaze_solvers::{Assembler, LinearSolver, SparseDirect, SparsityPattern};
//!
//! // Three bars of axial stiffness EA/L = 1e6 N/m in a row; node 0 is fixed
//! // (its DOF is None), nodes 1..3 carry equations 0..2.
//! let groups: [&[Option<usize>]; 3] = [&[None, Some(0)], &[Some(0), Some(1)], &[Some(1), Some(2)]];
//! let pattern = SparsityPattern::from_dof_groups(3, groups);
//! let assembler = Assembler::new(&pattern, groups);
//! let k = 1e6;
//! let mut values = vec![0.0; pattern.nnz()];
//! for g in 0..3 {
//!     assembler.add_matrix(g, &[k, -k, -k, k], &mut values);
//! }
//! let mut solver = SparseDirect::new(&pattern);
//! solver.factor(&values)?;
//! let mut u = vec![0.0, 0.0, 1e3]; // 1 kN pulling the free end
//! solver.solve_in_place(&mut u)?;
//! // Each bar stretches 1e3 / 1e6 = 1 mm.
//! assert!((u[2] - 3e-3).abs() < 1e-15);
//! # Ok::<(), glaze_solvers::SolverError>(())
//! ```
#![deny(missing_docs)]
// Sparse kernels index several parallel arrays (col_ptr, row_idx, values,
// maps) by the same position; index loops mirror the CSC algorithms.
#![allow(clippy::needless_range_loop)]

mod dynamics;
mod eigen;
mod error;
mod linear;
mod load_stepping;
mod newton;
mod sparse;
#[cfg(test)]
mod test_util;

pub use dynamics::{
    AlphaParameters, IntegrationStats, Integrator, IntegratorSettings, IntegratorState, Predictor, Scheme,
    SecondOrderSystem, StepReport, StepTimings,
};
pub use eigen::{
    dense_shift_invert, lanczos_shift_invert, shift_below_spectrum, EigenPairs, EigenSettings, ShiftChoice,
};
pub use error::{EvalError, SolverError};
pub use linear::{
    bandwidths, reverse_cuthill_mckee, BandOrdering, BandedLu, CholeskyOrdering, FactorStats, Factorisation,
    LinearSolver, SolverBackend, SparseDirect,
};
pub use load_stepping::{solve_load_path, LoadPathReport, LoadStepSettings};
pub use newton::{newton_solve, NewtonReport, NewtonSettings, NonlinearSystem};
pub use sparse::{Assembler, CompressedMatrix, SparsityPattern};
