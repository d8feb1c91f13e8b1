//! Linear solvers for `A x = b` on a [`SparsityPattern`](crate::SparsityPattern).

mod direct;

pub use direct::SparseDirect;

use crate::SolverError;

/// Which factorisation the last [`LinearSolver::factor`] produced.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Factorisation {
    /// Cholesky $A = L L^\top$ of a symmetric positive definite matrix.
    Cholesky,
    /// LU with partial pivoting $P A Q = L U$ of a general (or symmetric
    /// indefinite) matrix.
    Lu,
}

/// Work counters of a linear solver, so callers and tests can see reuse.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct FactorStats {
    /// Symbolic analyses (fill-reducing ordering and elimination structure),
    /// LLᵀ and LU together: `symbolic_cholesky + symbolic_lu`.
    pub symbolic: usize,
    /// Symbolic LLᵀ analyses (AMD ordering, elimination tree); at most 1 per solver.
    pub symbolic_cholesky: usize,
    /// Symbolic LU analyses (COLAMD ordering); at most 1 per solver.
    pub symbolic_lu: usize,
    /// Successful numeric Cholesky factorisations.
    pub numeric_cholesky: usize,
    /// Successful numeric LU factorisations.
    pub numeric_lu: usize,
    /// Calls to [`LinearSolver::solve_in_place`].
    pub solves: usize,
    /// Numeric Cholesky attempts that stopped at a non-positive pivot (the
    /// matrix was symmetric but not positive definite) and fell back to LU.
    pub cholesky_failures: usize,
}

/// A linear solver with a fixed sparsity pattern and changing values.
pub trait LinearSolver {
    /// Numeric factorisation of the matrix with the solver's pattern and these values.
    /// Symbolic analysis is done once on the first call and reused.
    ///
    /// # Errors
    /// [`SolverError::Singular`] for a (numerically) singular matrix,
    /// [`SolverError::NonFinite`] for NaN or infinite values,
    /// [`SolverError::Faer`] for a failure inside faer (e.g. out of memory).
    fn factor(&mut self, values: &[f64]) -> Result<Factorisation, SolverError>;

    /// Solve A x = b in place (b becomes x) with the last factor.
    ///
    /// # Errors
    /// [`SolverError::NotFactored`] without a successful factor,
    /// [`SolverError::Singular`] when the solution shows the matrix is singular,
    /// [`SolverError::NonFinite`] for a non-finite right-hand side.
    fn solve_in_place(&mut self, rhs: &mut [f64]) -> Result<(), SolverError>;

    /// Work counters since construction.
    fn stats(&self) -> FactorStats;
}
