//! Sparse direct solver on faer: Cholesky $A = LL^\top$ when it can, LU with
//! partial pivoting $PAQ = LU$ when it must.
//!
//! The pattern is fixed at construction; each symbolic analysis (AMD ordering
//! and elimination structure for LLᵀ, COLAMD ordering for LU) runs once, on
//! the first factorisation that needs it, and every later [`factor`] only
//! recomputes numbers into preallocated buffers (faer's
//! `SymbolicCholesky::factorize_numeric_llt` and
//! `SymbolicLu::factorize_numeric_lu`, the low-level forms of
//! `Llt::try_new_with_symbolic` / `Lu::try_new_with_symbolic` that let the
//! factor values and workspaces be reused instead of reallocated).
//!
//! **Singularity.** A Cholesky pivot $L_{kk}^2$ is a Schur complement, so
//! $A_{kk} / L_{kk}^2 \le \kappa_2(A)$: the largest such *pivot ratio* is a
//! cheap lower bound on the condition number, and the DOF where it occurs is
//! where a mechanism shows (the classic FE "MAXRATIO" check). faer's LU does
//! not stop at a numerically zero pivot, so after an LU solve the solution is
//! checked: non-finite entries, the lower bound
//! $\kappa_\infty(A) \ge \|A\|_\infty \|x\|_\infty / \|b\|_\infty$, and the
//! residual $\|b - Ax\|_\infty$ after up to two steps of iterative refinement.
//! Any of these beyond its threshold is reported as [`SolverError::Singular`].
//!
//! [`factor`]: LinearSolver::factor

use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::linalg::cholesky::llt::factor::{LltError, LltRegularization};
use faer::sparse::linalg::cholesky::supernodal::SupernodalLltRef;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, LltRef, SymbolicCholesky, SymbolicCholeskyRaw,
    SymmetricOrdering,
};
use faer::sparse::linalg::lu::{factorize_symbolic_lu, LuRef, LuSymbolicParams, NumericLu, SymbolicLu};
use faer::sparse::linalg::{LuError, SupernodalThreshold};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMat};
use faer::{Conj, MatMut, Par, Side};

use super::{FactorStats, Factorisation, LinearSolver};
use crate::{SolverError, SparsityPattern};

/// Refine an LU solution while ‖b − Ax‖∞ exceeds this many ε·(‖A‖∞‖x‖∞ + ‖b‖∞).
const REFINE_EPS_MULTIPLE: f64 = 1e3;
/// Iterative refinement steps at most per LU solve.
const MAX_REFINEMENT_STEPS: usize = 2;
/// Accept an LU solution only if ‖b − Ax‖∞ ≤ √ε·(‖A‖∞‖x‖∞ + ‖b‖∞).
const ACCEPT_RELATIVE_RESIDUAL: f64 = 1.490_116_119_384_765_6e-8;

/// faer sparse direct solver: Cholesky (LLᵀ) on the lower triangle when the values are
/// symmetric (checked to a relative tolerance) and positive definite, otherwise LU with
/// partial pivoting. Each symbolic analysis (LLᵀ, LU) is computed once and reused.
///
/// ```
/// use glaze_solvers::{Factorisation, LinearSolver, SparseDirect, SparsityPattern};
/// // Two springs k = 100 N/m in series, fixed at one end: K = [[200, -100], [-100, 100]].
/// let groups: [&[Option<usize>]; 2] = [&[None, Some(0)], &[Some(0), Some(1)]];
/// let pattern = SparsityPattern::from_dof_groups(2, groups);
/// let mut solver = SparseDirect::new(&pattern);
/// let values = [200.0, -100.0, -100.0, 100.0]; // column-major on the 2×2 pattern
/// assert_eq!(solver.factor(&values)?, Factorisation::Cholesky);
/// let mut x = [0.0, 10.0]; // 10 N at the free end
/// solver.solve_in_place(&mut x)?;
/// assert!((x[0] - 0.1).abs() < 1e-12 && (x[1] - 0.2).abs() < 1e-12); // m
/// # Ok::<(), glaze_solvers::SolverError>(())
/// ```
pub struct SparseDirect {
    n: usize,
    /// Both triangles (the caller's pattern).
    full: SymbolicSparseColMat<usize>,
    /// Lower triangle with diagonal, for LLᵀ.
    lower: SymbolicSparseColMat<usize>,
    /// Index in the full values of each lower-triangle entry.
    lower_src: Vec<usize>,
    /// (k, kᵀ) for every strictly upper entry k and its mirror kᵀ.
    mirror_pairs: Vec<(usize, usize)>,
    /// Index in the full values of each diagonal entry.
    diag: Vec<usize>,
    /// Copy of the values last given to `factor` (residual checks need A).
    values: Vec<f64>,
    lower_values: Vec<f64>,
    /// ‖A‖∞ of the last LU-factored matrix.
    norm_inf: f64,
    /// n-length work vectors for LU checks.
    work_b: Vec<f64>,
    work_r: Vec<f64>,
    llt: Option<LltState>,
    lu: Option<LuState>,
    current: Option<Factorisation>,
    stats: FactorStats,
    symmetry_tolerance: f64,
    singularity_threshold: f64,
    par: Par,
    pivot_ratio: Option<(f64, usize)>,
    /// Equation where the last numeric Cholesky met a non-positive pivot.
    cholesky_failure: Option<usize>,
    /// faer's choice between simplicial and supernodal kernels (tests force each).
    supernodal: SupernodalThreshold,
    /// Fill-reducing ordering of LLᵀ.
    cholesky_ordering: CholeskyOrdering,
    /// Its permutation (perm, inverse) for [`CholeskyOrdering::ReverseCuthillMcKee`].
    custom_perm: Option<(Vec<usize>, Vec<usize>)>,
}

/// Fill-reducing ordering of the LLᵀ factor (faer's LU always uses COLAMD).
/// Measured on the scale sections (docs/benchmarks.md, "Orderings"): AMD
/// gives the least fill and the fastest factor and solves, so it is the
/// default.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum CholeskyOrdering {
    /// Approximate minimum degree (Amestoy, Davis & Duff 1996, SIAM J.
    /// Matrix Anal. Appl. 17), faer's implementation.
    #[default]
    Amd,
    /// The equation order as given (chainage order of the model's nodes).
    Natural,
    /// Reverse Cuthill–McKee ([`reverse_cuthill_mckee`](super::reverse_cuthill_mckee)).
    ReverseCuthillMcKee,
}

/// Symbolic LLᵀ with its numeric values and workspaces, allocated once.
struct LltState {
    symbolic: SymbolicCholesky<usize>,
    l_values: Vec<f64>,
    factor_scratch: MemBuffer,
    solve_scratch: MemBuffer,
}

/// Symbolic LU with its numeric factor and workspaces, allocated once.
struct LuState {
    symbolic: SymbolicLu<usize>,
    numeric: NumericLu<usize, f64>,
    factor_scratch: MemBuffer,
    solve_scratch: MemBuffer,
}

fn faer_error(e: impl std::fmt::Debug) -> SolverError {
    SolverError::Faer(format!("{e:?}"))
}

fn buffer(req: StackReq) -> Result<MemBuffer, SolverError> {
    MemBuffer::try_new(req).map_err(|_| SolverError::Faer("out of memory for workspace".into()))
}

impl LltState {
    fn scratch(symbolic: &SymbolicCholesky<usize>, par: Par) -> Result<(MemBuffer, MemBuffer), SolverError> {
        Ok((
            buffer(symbolic.factorize_numeric_llt_scratch::<f64>(par, Default::default()))?,
            buffer(symbolic.solve_in_place_scratch::<f64>(1, par))?,
        ))
    }
}

impl LuState {
    fn scratch(symbolic: &SymbolicLu<usize>, par: Par) -> Result<(MemBuffer, MemBuffer), SolverError> {
        Ok((
            buffer(symbolic.factorize_numeric_lu_scratch::<f64>(par, Default::default()))?,
            buffer(symbolic.solve_in_place_scratch::<f64>(1, par))?,
        ))
    }

    fn solve(&mut self, par: Par, x: &mut [f64]) {
        let n = x.len();
        LuRef::new_unchecked(&self.symbolic, &self.numeric).solve_in_place_with_conj(
            Conj::No,
            MatMut::from_column_major_slice_mut(x, n, 1),
            par,
            MemStack::new(&mut self.solve_scratch),
        );
    }
}

impl SparseDirect {
    /// Default relative symmetry tolerance: values count as symmetric when
    /// |a_ij − a_ji| ≤ 1e-10 · max |a| (dimensionless).
    pub const DEFAULT_SYMMETRY_TOLERANCE: f64 = 1e-10;
    /// Default singularity threshold on the condition-number lower bounds
    /// (Cholesky pivot ratio, ‖A‖‖x‖/‖b‖ after LU): 1e12 leaves about four
    /// significant digits in double precision (dimensionless).
    pub const DEFAULT_SINGULARITY_THRESHOLD: f64 = 1e12;

    /// A solver for matrices on `pattern`. Cheap: index maps only; the
    /// symbolic analyses run on the first [`factor`](LinearSolver::factor).
    pub fn new(pattern: &SparsityPattern) -> Self {
        let n = pattern.dim();
        let col_ptr = pattern.col_ptr();
        let row_idx = pattern.row_idx();
        let diag = pattern.diagonal_indices();
        let transpose = pattern.transpose_indices();

        let mut lower_ptr = Vec::with_capacity(n + 1);
        lower_ptr.push(0);
        let mut lower_rows = Vec::with_capacity((pattern.nnz() + n) / 2);
        let mut lower_src = Vec::with_capacity((pattern.nnz() + n) / 2);
        let mut mirror_pairs = Vec::with_capacity(pattern.nnz().saturating_sub(n) / 2);
        for j in 0..n {
            for k in col_ptr[j]..diag[j] {
                mirror_pairs.push((k, transpose[k]));
            }
            for (k, &row) in row_idx.iter().enumerate().take(col_ptr[j + 1]).skip(diag[j]) {
                lower_rows.push(row);
                lower_src.push(k);
            }
            lower_ptr.push(lower_rows.len());
        }
        let lower_nnz = lower_rows.len();
        Self {
            n,
            full: SymbolicSparseColMat::new_checked(n, n, col_ptr.to_vec(), None, row_idx.to_vec()),
            lower: SymbolicSparseColMat::new_checked(n, n, lower_ptr, None, lower_rows),
            lower_src,
            mirror_pairs,
            diag,
            values: vec![0.0; pattern.nnz()],
            lower_values: vec![0.0; lower_nnz],
            norm_inf: 0.0,
            work_b: vec![0.0; n],
            work_r: vec![0.0; n],
            llt: None,
            lu: None,
            current: None,
            stats: FactorStats::default(),
            symmetry_tolerance: Self::DEFAULT_SYMMETRY_TOLERANCE,
            singularity_threshold: Self::DEFAULT_SINGULARITY_THRESHOLD,
            par: Par::Seq,
            pivot_ratio: None,
            cholesky_failure: None,
            supernodal: SupernodalThreshold::AUTO,
            cholesky_ordering: CholeskyOrdering::Amd,
            custom_perm: None,
        }
    }

    /// Sets the fill-reducing ordering of LLᵀ (default AMD); `pattern` must
    /// be the one given to [`new`](Self::new). Takes effect at the next
    /// symbolic analysis, i.e. call it before the first factorisation.
    pub fn with_cholesky_ordering(mut self, pattern: &SparsityPattern, ordering: CholeskyOrdering) -> Self {
        self.cholesky_ordering = ordering;
        // The natural order goes in as the identity permutation: faer 0.24's
        // `SymmetricOrdering::Identity` takes the matrix as the upper
        // triangle unconverted, and ours is the lower one.
        self.custom_perm = (ordering != CholeskyOrdering::Amd).then(|| {
            let perm = match ordering {
                CholeskyOrdering::ReverseCuthillMcKee => super::reverse_cuthill_mckee(pattern),
                _ => (0..pattern.dim()).collect(),
            };
            let mut inverse = vec![0; perm.len()];
            for (new, &old) in perm.iter().enumerate() {
                inverse[old] = new;
            }
            (perm, inverse)
        });
        self
    }

    /// Values stored in the LLᵀ factor (its fill), once analysed.
    pub fn cholesky_factor_len(&self) -> Option<usize> {
        self.llt.as_ref().map(|st| st.symbolic.len_val())
    }

    /// Sets the relative symmetry tolerance (see [`Self::DEFAULT_SYMMETRY_TOLERANCE`]).
    /// A negative value forces LU for every matrix.
    pub fn with_symmetry_tolerance(mut self, tolerance: f64) -> Self {
        self.symmetry_tolerance = tolerance;
        self
    }

    /// Sets the singularity threshold (see [`Self::DEFAULT_SINGULARITY_THRESHOLD`]).
    pub fn with_singularity_threshold(mut self, threshold: f64) -> Self {
        self.singularity_threshold = threshold;
        self
    }

    /// Sets faer's parallelism for factorisation and solves (default
    /// `Par::Seq`; `Par::Rayon` needs faer's `rayon` feature).
    ///
    /// # Errors
    /// [`SolverError::Faer`] if the workspaces cannot be reallocated.
    pub fn with_parallelism(mut self, par: Par) -> Result<Self, SolverError> {
        self.par = par;
        if let Some(st) = &mut self.llt {
            (st.factor_scratch, st.solve_scratch) = LltState::scratch(&st.symbolic, par)?;
        }
        if let Some(st) = &mut self.lu {
            (st.factor_scratch, st.solve_scratch) = LuState::scratch(&st.symbolic, par)?;
        }
        Ok(self)
    }

    /// Number of equations n.
    pub fn dim(&self) -> usize {
        self.n
    }

    /// The factorisation ready for [`solve_in_place`](LinearSolver::solve_in_place),
    /// `None` before the first or after a failed [`factor`](LinearSolver::factor).
    pub fn last_factorisation(&self) -> Option<Factorisation> {
        self.current
    }

    /// Largest Cholesky pivot ratio A_kk / L_kk² of the last successful
    /// numeric Cholesky, with its equation number: a lower bound on κ₂(A).
    /// `None` when the last factorisation was not a successful Cholesky.
    pub fn pivot_ratio(&self) -> Option<(f64, usize)> {
        self.pivot_ratio
    }

    /// First equation whose row or column of `values` is entirely zero.
    fn zero_row_or_column(&mut self, values: &[f64]) -> Option<usize> {
        let row_nonzero = &mut self.work_r;
        row_nonzero.fill(0.0);
        let col_ptr = self.full.col_ptr();
        let row_idx = self.full.row_idx();
        let mut zero_col = None;
        for j in 0..self.n {
            let mut any = false;
            for k in col_ptr[j]..col_ptr[j + 1] {
                if values[k] != 0.0 {
                    any = true;
                    row_nonzero[row_idx[k]] = 1.0;
                }
            }
            if !any && zero_col.is_none() {
                zero_col = Some(j);
            }
        }
        let zero_row = row_nonzero.iter().position(|&f| f == 0.0);
        match (zero_col, zero_row) {
            (Some(a), Some(b)) => Some(a.min(b)),
            (a, b) => a.or(b),
        }
    }

    /// Tries LLᵀ of the lower triangle of `self.values`. `Ok(false)`: not
    /// positive definite (caller falls back to LU).
    fn factor_cholesky(&mut self) -> Result<bool, SolverError> {
        for (dst, &src) in self.lower_values.iter_mut().zip(&self.lower_src) {
            *dst = self.values[src];
        }
        if self.llt.is_none() {
            let symbolic = factorize_symbolic_cholesky(
                self.lower.as_ref(),
                Side::Lower,
                match (self.cholesky_ordering, &self.custom_perm) {
                    (_, Some((perm, inverse))) => {
                        SymmetricOrdering::Custom(faer::perm::PermRef::new_checked(perm, inverse, self.n))
                    }
                    _ => SymmetricOrdering::Amd,
                },
                CholeskySymbolicParams {
                    supernodal_flop_ratio_threshold: self.supernodal,
                    ..Default::default()
                },
            )
            .map_err(faer_error)?;
            self.stats.symbolic += 1;
            self.stats.symbolic_cholesky += 1;
            tracing::debug!(n = self.n, len_l = symbolic.len_val(), "symbolic LLt analysis");
            let (factor_scratch, solve_scratch) = LltState::scratch(&symbolic, self.par)?;
            self.llt = Some(LltState {
                l_values: vec![0.0; symbolic.len_val()],
                symbolic,
                factor_scratch,
                solve_scratch,
            });
        }
        let Some(st) = self.llt.as_mut() else {
            return Err(SolverError::Faer("symbolic LLt missing".into()));
        };
        let a = SparseColMatRef::new(self.lower.as_ref(), &self.lower_values);
        match st.symbolic.factorize_numeric_llt(
            &mut st.l_values,
            a,
            Side::Lower,
            LltRegularization::default(),
            self.par,
            MemStack::new(&mut st.factor_scratch),
            Default::default(),
        ) {
            Ok(_) => {}
            Err(LltError::NonPositivePivot { index }) => {
                // faer 0.24 reports the simplicial failure 1-based and the
                // supernodal one 0-based (pinned by a test below), in the
                // permuted ordering.
                let k = match st.symbolic.raw() {
                    SymbolicCholeskyRaw::Simplicial(_) => index.saturating_sub(1),
                    SymbolicCholeskyRaw::Supernodal(_) => index,
                };
                let perm = st.symbolic.perm();
                self.cholesky_failure = Some(perm.map_or(k, |p| p.arrays().0.get(k).copied().unwrap_or(k)));
                self.stats.cholesky_failures += 1;
                tracing::debug!("matrix symmetric but not positive definite, using LU");
                return Ok(false);
            }
        }
        self.stats.numeric_cholesky += 1;
        let (ratio, dof) = cholesky_pivot_ratio(&st.symbolic, &st.l_values, &self.values, &self.diag);
        self.pivot_ratio = Some((ratio, dof));
        if ratio.is_nan() || ratio > self.singularity_threshold {
            tracing::debug!(ratio, dof, "Cholesky pivot ratio above singularity threshold");
            return Err(SolverError::Singular { pivot: Some(dof) });
        }
        Ok(true)
    }

    /// LU of `self.values` (both triangles).
    fn factor_lu(&mut self) -> Result<(), SolverError> {
        if self.lu.is_none() {
            let symbolic = factorize_symbolic_lu(
                self.full.as_ref(),
                LuSymbolicParams { supernodal_flop_ratio_threshold: self.supernodal, ..Default::default() },
            )
            .map_err(faer_error)?;
            self.stats.symbolic += 1;
            self.stats.symbolic_lu += 1;
            tracing::debug!(n = self.n, "symbolic LU analysis");
            let (factor_scratch, solve_scratch) = LuState::scratch(&symbolic, self.par)?;
            self.lu = Some(LuState { symbolic, numeric: NumericLu::new(), factor_scratch, solve_scratch });
        }
        let Some(st) = self.lu.as_mut() else {
            return Err(SolverError::Faer("symbolic LU missing".into()));
        };
        let a = SparseColMatRef::new(self.full.as_ref(), &self.values);
        match st.symbolic.factorize_numeric_lu(
            &mut st.numeric,
            a,
            self.par,
            MemStack::new(&mut st.factor_scratch),
            Default::default(),
        ) {
            Ok(_) => {}
            Err(LuError::SymbolicSingular { index }) => {
                let pivot = st.symbolic.col_perm().arrays().0.get(index).copied();
                return Err(SolverError::Singular { pivot });
            }
            Err(LuError::Generic(e)) => return Err(faer_error(e)),
        }
        self.stats.numeric_lu += 1;
        // ‖A‖∞ = max row sum of |a_ij|.
        let row_sum = &mut self.work_r;
        row_sum.fill(0.0);
        for (&i, &v) in self.full.row_idx().iter().zip(&self.values) {
            row_sum[i] += v.abs();
        }
        self.norm_inf = row_sum.iter().fold(0.0, |m: f64, &s| m.max(s));
        Ok(())
    }

    /// LU solve with the singularity checks and iterative refinement.
    fn solve_lu_checked(&mut self, x: &mut [f64]) -> Result<(), SolverError> {
        let b_norm = norm_inf(x);
        if b_norm == 0.0 {
            return Ok(()); // x = 0
        }
        let Some(st) = self.lu.as_mut() else {
            return Err(SolverError::NotFactored);
        };
        self.work_b.copy_from_slice(x);
        st.solve(self.par, x);
        if first_non_finite(x).is_some() {
            return Err(SolverError::Singular { pivot: self.cholesky_failure });
        }
        let pattern = (self.full.col_ptr(), self.full.row_idx());
        let mut step = 0;
        loop {
            // r = b − A x
            residual(pattern, &self.values, x, &self.work_b, &mut self.work_r);
            let x_norm = norm_inf(x);
            let scale = self.norm_inf * x_norm + b_norm;
            let r_norm = norm_inf(&self.work_r);
            if self.norm_inf * x_norm > self.singularity_threshold * b_norm {
                // κ∞(A) ≥ ‖A‖‖x‖/‖b‖ is beyond the threshold.
                return Err(SolverError::Singular { pivot: Some(arg_max_abs(x)) });
            }
            if r_norm <= REFINE_EPS_MULTIPLE * f64::EPSILON * scale || step == MAX_REFINEMENT_STEPS {
                if r_norm.is_nan() || r_norm > ACCEPT_RELATIVE_RESIDUAL * scale {
                    return Err(SolverError::Singular { pivot: Some(arg_max_abs(&self.work_r)) });
                }
                return Ok(());
            }
            step += 1;
            st.solve(self.par, &mut self.work_r);
            if first_non_finite(&self.work_r).is_some() {
                return Err(SolverError::Singular { pivot: self.cholesky_failure });
            }
            for (xi, di) in x.iter_mut().zip(&self.work_r) {
                *xi += di;
            }
        }
    }

    /// Forces faer's simplicial (`false`) or supernodal (`true`) kernels.
    #[cfg(test)]
    fn force_supernodal(mut self, supernodal: bool) -> Self {
        self.supernodal = if supernodal {
            SupernodalThreshold::FORCE_SUPERNODAL
        } else {
            SupernodalThreshold::FORCE_SIMPLICIAL
        };
        self
    }

    #[cfg(test)]
    fn cholesky_is_supernodal(&self) -> Option<bool> {
        self.llt.as_ref().map(|st| matches!(st.symbolic.raw(), SymbolicCholeskyRaw::Supernodal(_)))
    }
}

impl LinearSolver for SparseDirect {
    fn factor(&mut self, values: &[f64]) -> Result<Factorisation, SolverError> {
        assert_eq!(values.len(), self.values.len(), "values length must equal the pattern's nnz");
        self.current = None;
        self.pivot_ratio = None;
        self.cholesky_failure = None;
        let mut max_abs = 0.0f64;
        for (k, &v) in values.iter().enumerate() {
            if !v.is_finite() {
                return Err(SolverError::NonFinite { lambda: f64::NAN, dof: self.full.row_idx()[k] });
            }
            max_abs = max_abs.max(v.abs());
        }
        // An all-zero row or column (a DOF nothing gives stiffness to, e.g. the
        // rotations of a cable-only node) is singular for sure and easy to name.
        if let Some(dof) = self.zero_row_or_column(values) {
            return Err(SolverError::Singular { pivot: Some(dof) });
        }
        self.values.copy_from_slice(values);
        if self.n == 0 {
            self.current = Some(Factorisation::Cholesky);
            return Ok(Factorisation::Cholesky);
        }
        let tol = self.symmetry_tolerance * max_abs;
        let symmetric = self.symmetry_tolerance >= 0.0
            && self.mirror_pairs.iter().all(|&(k, kt)| (values[k] - values[kt]).abs() <= tol);
        let kind = if symmetric && self.factor_cholesky()? {
            Factorisation::Cholesky
        } else {
            self.factor_lu()?;
            Factorisation::Lu
        };
        self.current = Some(kind);
        Ok(kind)
    }

    fn solve_in_place(&mut self, rhs: &mut [f64]) -> Result<(), SolverError> {
        assert_eq!(rhs.len(), self.n, "right-hand side length must equal the dimension");
        let Some(kind) = self.current else {
            return Err(SolverError::NotFactored);
        };
        if let Some(i) = first_non_finite(rhs) {
            return Err(SolverError::NonFinite { lambda: f64::NAN, dof: i });
        }
        self.stats.solves += 1;
        if self.n == 0 {
            return Ok(());
        }
        match kind {
            Factorisation::Cholesky => {
                let Some(st) = self.llt.as_mut() else {
                    return Err(SolverError::NotFactored);
                };
                LltRef::new(&st.symbolic, &st.l_values).solve_in_place_with_conj(
                    Conj::No,
                    MatMut::from_column_major_slice_mut(rhs, self.n, 1),
                    self.par,
                    MemStack::new(&mut st.solve_scratch),
                );
                // Positive pivots under the ratio threshold: only overflow can
                // get here, and it does not locate a pivot.
                match first_non_finite(rhs) {
                    Some(_) => Err(SolverError::Singular { pivot: None }),
                    None => Ok(()),
                }
            }
            Factorisation::Lu => self.solve_lu_checked(rhs),
        }
    }

    fn stats(&self) -> FactorStats {
        self.stats
    }
}

impl std::fmt::Debug for SparseDirect {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SparseDirect")
            .field("n", &self.n)
            .field("nnz", &self.values.len())
            .field("current", &self.current)
            .field("stats", &self.stats)
            .field("symmetry_tolerance", &self.symmetry_tolerance)
            .field("singularity_threshold", &self.singularity_threshold)
            .field("par", &self.par)
            .finish_non_exhaustive()
    }
}

/// Largest A_kk / L_kk² over the columns, and the equation (original order) where it occurs.
fn cholesky_pivot_ratio(
    symbolic: &SymbolicCholesky<usize>,
    l_values: &[f64],
    values: &[f64],
    diag: &[usize],
) -> (f64, usize) {
    let perm = symbolic.perm();
    let fwd = perm.as_ref().map(|p| p.arrays().0);
    let mut worst = (0.0f64, 0usize);
    let mut visit = |k: usize, l_kk: f64| {
        let dof = fwd.map_or(k, |f| f[k]);
        let ratio = values[diag[dof]] / (l_kk * l_kk);
        if ratio.is_nan() || ratio > worst.0 {
            worst = (ratio, dof);
        }
    };
    match symbolic.raw() {
        SymbolicCholeskyRaw::Simplicial(s) => {
            // faer stores the diagonal first in each column of L.
            let col_ptr = s.col_ptr();
            for k in 0..s.nrows() {
                visit(k, l_values[col_ptr[k]]);
            }
        }
        SymbolicCholeskyRaw::Supernodal(s) => {
            let l = SupernodalLltRef::new(s, l_values);
            for sn in 0..s.n_supernodes() {
                let node = l.supernode(sn);
                let block = node.val();
                for j in 0..block.ncols() {
                    visit(node.start() + j, block[(j, j)]);
                }
            }
        }
    }
    worst
}

/// r = b − A x on the CSC pattern (col_ptr, row_idx).
fn residual(pattern: (&[usize], &[usize]), values: &[f64], x: &[f64], b: &[f64], r: &mut [f64]) {
    let (col_ptr, row_idx) = pattern;
    r.copy_from_slice(b);
    for (j, &xj) in x.iter().enumerate() {
        for k in col_ptr[j]..col_ptr[j + 1] {
            r[row_idx[k]] -= values[k] * xj;
        }
    }
}

fn norm_inf(v: &[f64]) -> f64 {
    v.iter().fold(0.0, |m: f64, x| m.max(x.abs()))
}

fn arg_max_abs(v: &[f64]) -> usize {
    let mut best = (0usize, -1.0f64);
    for (i, x) in v.iter().enumerate() {
        if x.abs() > best.1 {
            best = (i, x.abs());
        }
    }
    best.0
}

fn first_non_finite(v: &[f64]) -> Option<usize> {
    v.iter().position(|x| !x.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_util::Lcg;
    use crate::Assembler;

    /// Random overlapping element groups over n equations: a chain of
    /// 2-equation links (so every equation is reached) plus random groups.
    fn random_groups(rng: &mut Lcg, n: usize, extra: usize, max_size: usize) -> Vec<Vec<Option<usize>>> {
        let mut groups: Vec<Vec<Option<usize>>> =
            (0..n.saturating_sub(1)).map(|i| vec![Some(i), Some(i + 1)]).collect();
        for _ in 0..extra {
            let m = 2 + rng.below(max_size - 1);
            groups.push((0..m).map(|_| Some(rng.below(n))).collect());
        }
        groups
    }

    fn pattern_of(n: usize, groups: &[Vec<Option<usize>>]) -> SparsityPattern {
        SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()))
    }

    /// SPD values: Σ_g G_g G_gᵀ (each G_g random m×m) plus 1e-2·I, assembled.
    fn spd_values(rng: &mut Lcg, p: &SparsityPattern, groups: &[Vec<Option<usize>>]) -> Vec<f64> {
        let asm = Assembler::new(p, groups.iter().map(|g| g.as_slice()));
        let mut values = vec![0.0; p.nnz()];
        for (g, dofs) in groups.iter().enumerate() {
            let m = dofs.len();
            let gm: Vec<f64> = (0..m * m).map(|_| rng.symmetric()).collect();
            let mut k = vec![0.0; m * m];
            for a in 0..m {
                for b in 0..m {
                    k[a * m + b] = (0..m).map(|c| gm[a * m + c] * gm[b * m + c]).sum();
                }
            }
            asm.add_matrix(g, &k, &mut values);
        }
        for k in p.diagonal_indices() {
            values[k] += 1e-2;
        }
        values
    }

    /// Diagonally dominant non-symmetric values (nonsingular by Gershgorin).
    fn dominant_values(rng: &mut Lcg, p: &SparsityPattern, symmetric: bool) -> Vec<f64> {
        let n = p.dim();
        let t = p.transpose_indices();
        let diag = p.diagonal_indices();
        let mut values: Vec<f64> = (0..p.nnz()).map(|_| rng.symmetric()).collect();
        if symmetric {
            for k in 0..values.len() {
                values[k] = values[t[k].min(k)];
            }
        }
        let mut row_sum = vec![0.0; n];
        for j in 0..n {
            for k in p.col_ptr()[j]..p.col_ptr()[j + 1] {
                row_sum[p.row_idx()[k]] += values[k].abs();
            }
        }
        for (i, &d) in diag.iter().enumerate() {
            values[d] = row_sum[i] + 1.0;
        }
        values
    }

    fn norm_inf_matrix(p: &SparsityPattern, values: &[f64]) -> f64 {
        let mut row = vec![0.0; p.dim()];
        for j in 0..p.dim() {
            for k in p.col_ptr()[j]..p.col_ptr()[j + 1] {
                row[p.row_idx()[k]] += values[k].abs();
            }
        }
        norm_inf(&row)
    }

    /// Solves A x = b and returns ‖Ax − b‖∞ / (ε · n · ‖A‖∞ · ‖x‖∞).
    fn scaled_residual(solver: &mut SparseDirect, p: &SparsityPattern, values: &[f64], rng: &mut Lcg) -> f64 {
        let n = p.dim();
        let b: Vec<f64> = (0..n).map(|_| rng.symmetric()).collect();
        let mut x = b.clone();
        solver.solve_in_place(&mut x).unwrap();
        let mut ax = vec![0.0; n];
        p.mul_vec(values, &x, &mut ax);
        let r = ax.iter().zip(&b).fold(0.0, |m: f64, (a, b)| m.max((a - b).abs()));
        r / (f64::EPSILON * n as f64 * norm_inf_matrix(p, values) * norm_inf(&x))
    }

    /// Backward-error bound: ‖Ax − b‖∞ ≤ c·ε·n·‖A‖∞‖x‖∞ with c = 10. Cholesky
    /// and partial-pivoting LU are backward stable with normwise backward error
    /// O(n ε) (Higham, *Accuracy and Stability of Numerical Algorithms*, 2nd ed.,
    /// Thm 10.3 and Thm 9.4; LU growth factor is tiny on these matrices).
    const C: f64 = 10.0;

    #[test]
    fn every_cholesky_ordering_is_backward_stable_and_natural_order_fills_a_band() {
        // Backward error as in Higham's Thm 10.3 (see `C`) for each ordering;
        // the natural order of a tridiagonal matrix has no fill at all
        // (n diagonal + n − 1 sub-diagonal values in L, closed form).
        let mut rng = Lcg::new(0x5eed_0300);
        for ordering in
            [CholeskyOrdering::Amd, CholeskyOrdering::Natural, CholeskyOrdering::ReverseCuthillMcKee]
        {
            for &n in &[50, 300] {
                let groups = random_groups(&mut rng, n, n / 2, 5);
                let p = pattern_of(n, &groups);
                let values = spd_values(&mut rng, &p, &groups);
                let mut solver = SparseDirect::new(&p).with_cholesky_ordering(&p, ordering);
                assert_eq!(solver.factor(&values).unwrap(), Factorisation::Cholesky);
                let res = scaled_residual(&mut solver, &p, &values, &mut rng);
                assert!(res <= C, "{ordering:?}, n = {n}: scaled residual {res}");
            }
            let n = 200;
            let groups: Vec<Vec<Option<usize>>> = (0..n - 1).map(|i| vec![Some(i), Some(i + 1)]).collect();
            let p = pattern_of(n, &groups);
            let values = spd_values(&mut rng, &p, &groups);
            let mut solver = SparseDirect::new(&p).with_cholesky_ordering(&p, ordering);
            solver.factor(&values).unwrap();
            if ordering == CholeskyOrdering::Natural {
                assert_eq!(solver.cholesky_factor_len(), Some(2 * n - 1));
            }
        }
    }

    #[test]
    fn spd_random_sparse_systems_use_cholesky_and_are_backward_stable() {
        let mut rng = Lcg::new(0x5eed_0100);
        for &n in &[50, 200, 400] {
            let groups = random_groups(&mut rng, n, n / 2, 8);
            let p = pattern_of(n, &groups);
            let values = spd_values(&mut rng, &p, &groups);
            let mut ratios = Vec::new();
            for supernodal in [false, true] {
                let mut solver = SparseDirect::new(&p).force_supernodal(supernodal);
                assert_eq!(solver.factor(&values).unwrap(), Factorisation::Cholesky);
                assert_eq!(solver.cholesky_is_supernodal(), Some(supernodal));
                let (ratio, dof) = solver.pivot_ratio().unwrap();
                assert!((1.0..1e12).contains(&ratio), "pivot ratio {ratio}");
                ratios.push((ratio, dof));
                for _ in 0..3 {
                    let s = scaled_residual(&mut solver, &p, &values, &mut rng);
                    assert!(s <= C, "n = {n}, supernodal = {supernodal}: scaled residual {s}");
                }
            }
            // Both kernels compute the same L (same AMD ordering), so the
            // diagonal read from either storage must give the same ratio.
            assert_eq!(ratios[0].1, ratios[1].1);
            assert!((ratios[0].0 - ratios[1].0).abs() <= 1e-8 * ratios[0].0, "{ratios:?}");
        }
    }

    #[test]
    fn default_kernel_choice_is_supernodal_for_dense_fronts() {
        // Groups of 40 equations overlapping by half: dense fronts.
        let n = 400;
        let groups: Vec<Vec<Option<usize>>> =
            (0..n / 20 - 1).map(|s| (20 * s..20 * s + 40).map(Some).collect()).collect();
        let mut rng = Lcg::new(0x5eed_0101);
        let p = pattern_of(n, &groups);
        let values = spd_values(&mut rng, &p, &groups);
        let mut solver = SparseDirect::new(&p);
        assert_eq!(solver.factor(&values).unwrap(), Factorisation::Cholesky);
        let s = scaled_residual(&mut solver, &p, &values, &mut rng);
        assert!(s <= C, "scaled residual {s}");
        // Which kernel faer picks is its business; record it for the log.
        eprintln!("supernodal chosen: {:?}", solver.cholesky_is_supernodal());
    }

    #[test]
    fn symmetric_indefinite_goes_to_lu() {
        let mut rng = Lcg::new(0x5eed_0102);
        let n = 200;
        let groups = random_groups(&mut rng, n, n / 2, 6);
        let p = pattern_of(n, &groups);
        let mut values = dominant_values(&mut rng, &p, true);
        // Flip a few diagonal entries: still diagonally dominant (nonsingular),
        // still symmetric, no longer positive definite.
        let diag = p.diagonal_indices();
        for &i in &[0, 17, 123] {
            values[diag[i]] = -values[diag[i]];
        }
        let mut solver = SparseDirect::new(&p);
        assert_eq!(solver.factor(&values).unwrap(), Factorisation::Lu);
        let st = solver.stats();
        assert_eq!((st.cholesky_failures, st.numeric_cholesky, st.numeric_lu), (1, 0, 1));
        assert_eq!(st.symbolic, 2, "LLᵀ analysed (then failed), LU analysed");
        assert_eq!((st.symbolic_cholesky, st.symbolic_lu), (1, 1));
        let s = scaled_residual(&mut solver, &p, &values, &mut rng);
        assert!(s <= C, "scaled residual {s}");
    }

    #[test]
    fn non_symmetric_goes_straight_to_lu() {
        let mut rng = Lcg::new(0x5eed_0103);
        for &n in &[50, 200, 400] {
            let groups = random_groups(&mut rng, n, n / 2, 6);
            let p = pattern_of(n, &groups);
            let values = dominant_values(&mut rng, &p, false);
            let mut solver = SparseDirect::new(&p);
            assert_eq!(solver.factor(&values).unwrap(), Factorisation::Lu);
            let st = solver.stats();
            assert_eq!((st.symbolic, st.cholesky_failures, st.numeric_lu), (1, 0, 1));
            let s = scaled_residual(&mut solver, &p, &values, &mut rng);
            assert!(s <= C, "n = {n}: scaled residual {s}");
        }
    }

    #[test]
    fn tiny_asymmetry_within_tolerance_is_symmetric() {
        let mut rng = Lcg::new(0x5eed_0104);
        let n = 50;
        let groups = random_groups(&mut rng, n, 20, 5);
        let p = pattern_of(n, &groups);
        let mut values = spd_values(&mut rng, &p, &groups);
        let max = norm_inf(&values);
        let k = p.value_index(1, 0).unwrap();
        values[k] += 1e-12 * max;
        let mut solver = SparseDirect::new(&p);
        assert_eq!(solver.factor(&values).unwrap(), Factorisation::Cholesky);
        values[k] += 1e-8 * max;
        assert_eq!(solver.factor(&values).unwrap(), Factorisation::Lu);
    }

    #[test]
    fn symbolic_analysis_is_done_once_across_refactorisations() {
        let mut rng = Lcg::new(0x5eed_0105);
        let n = 200;
        let groups = random_groups(&mut rng, n, n / 2, 8);
        let p = pattern_of(n, &groups);
        let mut solver = SparseDirect::new(&p);
        for _ in 0..10 {
            let values = spd_values(&mut rng, &p, &groups);
            assert_eq!(solver.factor(&values).unwrap(), Factorisation::Cholesky);
            let s = scaled_residual(&mut solver, &p, &values, &mut rng);
            assert!(s <= C, "scaled residual {s}");
        }
        let st = solver.stats();
        assert_eq!((st.symbolic, st.symbolic_cholesky, st.symbolic_lu), (1, 1, 0));
        assert_eq!(st.numeric_cholesky, 10);
        assert_eq!(st.solves, 10);
        // LU values on the same solver: one more symbolic analysis, then reuse.
        for _ in 0..10 {
            let values = dominant_values(&mut rng, &p, false);
            assert_eq!(solver.factor(&values).unwrap(), Factorisation::Lu);
            let s = scaled_residual(&mut solver, &p, &values, &mut rng);
            assert!(s <= C, "scaled residual {s}");
        }
        let st = solver.stats();
        assert_eq!((st.symbolic, st.numeric_lu, st.numeric_cholesky), (2, 10, 10));
    }

    /// Expects `Singular` from `factor` or from the first solve; never a panic,
    /// never a NaN solution handed back as `Ok`.
    fn assert_singular(p: &SparsityPattern, values: &[f64]) -> Vec<Option<usize>> {
        let mut pivots = Vec::new();
        for supernodal in [false, true] {
            let mut solver = SparseDirect::new(p).force_supernodal(supernodal);
            pivots.push(singular_pivot(&mut solver, p, values));
            // And through LU alone (a non-symmetric caller sees this path).
            let mut solver = SparseDirect::new(p).force_supernodal(supernodal).with_symmetry_tolerance(-1.0);
            pivots.push(singular_pivot(&mut solver, p, values));
        }
        pivots
    }

    fn singular_pivot(solver: &mut SparseDirect, p: &SparsityPattern, values: &[f64]) -> Option<usize> {
        match solver.factor(values) {
            Err(SolverError::Singular { pivot }) => pivot,
            Err(e) => panic!("expected Singular, got {e}"),
            Ok(kind) => {
                let mut x: Vec<f64> = (0..p.dim()).map(|i| 1.0 + i as f64).collect();
                match solver.solve_in_place(&mut x) {
                    Err(SolverError::Singular { pivot }) => pivot,
                    other => {
                        panic!("expected Singular after {kind:?}, got {other:?} with x = {x:?}")
                    }
                }
            }
        }
    }

    #[test]
    fn singular_matrices_give_singular() {
        // 1. Free spring chain, k = 1000 N/m, no support: K is the path
        //    Laplacian, PSD with the rigid translation in its null space.
        let n = 30;
        let groups: Vec<Vec<Option<usize>>> = (0..n - 1).map(|i| vec![Some(i), Some(i + 1)]).collect();
        let p = pattern_of(n, &groups);
        let asm = Assembler::new(&p, groups.iter().map(|g| g.as_slice()));
        let mut values = vec![0.0; p.nnz()];
        for g in 0..groups.len() {
            asm.add_matrix(g, &[1e3, -1e3, -1e3, 1e3], &mut values);
        }
        let _ = assert_singular(&p, &values);

        // 2. Same chain supported at equation 0 but with one spring of zero
        //    stiffness: equations 15.. float. Pivot located in the floating part.
        let mut values = vec![0.0; p.nnz()];
        for g in 0..groups.len() {
            let k = if g == 14 { 0.0 } else { 1e3 };
            asm.add_matrix(g, &[k, -k, -k, k], &mut values);
        }
        values[p.value_index(0, 0).unwrap()] += 1e3;
        // Symmetric path: located in the floating part. LU alone on a NaN
        // solution cannot locate it and says so (None).
        let pivots = assert_singular(&p, &values);
        assert!(pivots.iter().all(|p| p.is_none_or(|i| i >= 15)), "pivots {pivots:?}");
        assert!(pivots[0].is_some() && pivots[2].is_some(), "pivots {pivots:?}");

        // 3. A zero column and row (an unconnected equation with no stiffness).
        let mut rng = Lcg::new(0x5eed_0106);
        let groups = random_groups(&mut rng, 40, 20, 5);
        let p = pattern_of(40, &groups);
        let mut values = dominant_values(&mut rng, &p, true);
        for j in 0..40 {
            for k in p.col_ptr()[j]..p.col_ptr()[j + 1] {
                if j == 7 || p.row_idx()[k] == 7 {
                    values[k] = 0.0;
                }
            }
        }
        let pivots = assert_singular(&p, &values);
        assert!(pivots.iter().all(|&p| p == Some(7)), "pivots {pivots:?}");

        // 4. Non-symmetric, two equal rows.
        let mut values = dominant_values(&mut rng, &p, false);
        let (r0, r1) = (3, 4); // rows of equations 3 and 4 are coupled by the chain
        for j in 0..40 {
            match (p.value_index(r0, j), p.value_index(r1, j)) {
                (Some(a), Some(b)) => values[b] = values[a],
                (Some(a), None) => values[a] = 0.0,
                (None, Some(b)) => values[b] = 0.0,
                (None, None) => {}
            }
        }
        let _ = assert_singular(&p, &values);

        // 5. All zeros.
        let _ = assert_singular(&p, &vec![0.0; p.nnz()]);
    }

    #[test]
    fn misuse_and_bad_numbers_are_errors() {
        let groups: Vec<Vec<Option<usize>>> = vec![vec![Some(0), Some(1)]];
        let p = pattern_of(2, &groups);
        let mut solver = SparseDirect::new(&p);
        let mut x = [1.0, 2.0];
        assert_eq!(solver.solve_in_place(&mut x), Err(SolverError::NotFactored));
        let bad = [1.0, f64::NAN, 0.0, 1.0];
        assert!(matches!(solver.factor(&bad), Err(SolverError::NonFinite { dof: 1, .. })));
        assert_eq!(solver.solve_in_place(&mut x), Err(SolverError::NotFactored));
        solver.factor(&[2.0, 0.0, 0.0, 4.0]).unwrap();
        let mut y = [f64::INFINITY, 1.0];
        assert!(matches!(solver.solve_in_place(&mut y), Err(SolverError::NonFinite { dof: 0, .. })));
        solver.solve_in_place(&mut x).unwrap();
        assert!((x[0] - 0.5).abs() <= 4.0 * f64::EPSILON && (x[1] - 0.5).abs() <= 4.0 * f64::EPSILON);
        // Zero-sized system.
        let empty = SparsityPattern::from_dof_groups(0, std::iter::empty());
        let mut s = SparseDirect::new(&empty);
        s.factor(&[]).unwrap();
        s.solve_in_place(&mut []).unwrap();
    }

    #[test]
    fn cholesky_failure_is_located_in_both_kernels() {
        // Block diagonal, dense 4×4 blocks, identity values except one −1:
        // LLᵀ stops exactly at that equation. Pins faer's index convention.
        let n = 12;
        let groups: Vec<Vec<Option<usize>>> =
            (0..3).map(|b| (4 * b..4 * b + 4).map(Some).collect()).collect();
        let p = pattern_of(n, &groups);
        let diag = p.diagonal_indices();
        for bad in [0, 5, 11] {
            let mut v = vec![0.0; p.nnz()];
            for &d in &diag {
                v[d] = 1.0;
            }
            v[diag[bad]] = -1.0;
            for supernodal in [false, true] {
                let mut s = SparseDirect::new(&p).force_supernodal(supernodal);
                assert_eq!(s.factor(&v).unwrap(), Factorisation::Lu);
                assert_eq!(s.cholesky_is_supernodal(), Some(supernodal));
                assert_eq!(s.cholesky_failure, Some(bad), "supernodal = {supernodal}");
            }
        }
    }

    #[test]
    fn solver_is_send() {
        fn is_send<T: Send>() {}
        is_send::<SparseDirect>();
    }
}
