//! Linear solvers for `A x = b` on a [`SparsityPattern`](crate::SparsityPattern):
//! [`SparseDirect`] (faer) and the banded baseline [`BandedLu`] with its
//! orderings ([`BandOrdering`], [`reverse_cuthill_mckee`]).

mod banded;
mod direct;
mod ordering;

pub use banded::BandedLu;
pub use direct::{CholeskyOrdering, SparseDirect};
pub use ordering::{bandwidths, reverse_cuthill_mckee, BandOrdering};

use crate::{SolverError, SparsityPattern};

/// Which [`LinearSolver`] a time integration factorises its iteration
/// matrix with.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum SolverBackend {
    /// faer's sparse Cholesky / LU ([`SparseDirect`], COLAMD ordering for LU).
    #[default]
    SparseDirect,
    /// Banded LU with partial pivoting ([`BandedLu`]) on the given ordering:
    /// the baseline that shows what the sparse factor buys.
    Banded(BandOrdering),
}

impl SolverBackend {
    /// A solver of this kind for `pattern`.
    pub fn build(self, pattern: &SparsityPattern) -> Box<dyn LinearSolver + Send> {
        match self {
            Self::SparseDirect => Box::new(SparseDirect::new(pattern)),
            Self::Banded(ordering) => Box::new(BandedLu::new(pattern, ordering)),
        }
    }

    /// Short name: `sparse_direct`, `banded_natural` or `banded_rcm`.
    pub fn name(self) -> &'static str {
        match self {
            Self::SparseDirect => "sparse_direct",
            Self::Banded(BandOrdering::Natural) => "banded_natural",
            Self::Banded(BandOrdering::ReverseCuthillMcKee) => "banded_rcm",
        }
    }

    /// The backend of a [`name`](Self::name), if it is one.
    pub fn from_name(name: &str) -> Option<Self> {
        [
            Self::SparseDirect,
            Self::Banded(BandOrdering::Natural),
            Self::Banded(BandOrdering::ReverseCuthillMcKee),
        ]
        .into_iter()
        .find(|b| b.name() == name)
    }
}

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
