//! Generalised symmetric eigenproblems $K\varphi = \lambda M \varphi$ of a
//! linearised structure: λ = ω² (rad²/s²) and the mode shapes φ.
//!
//! Two solvers share one set of conventions ([`EigenSettings`], [`EigenPairs`]):
//!
//! - [`lanczos_shift_invert`] — shift-invert Lanczos on the faer sparse factor
//!   of $K - \sigma M$ with full reorthogonalisation and thick restarts, for
//!   models of any size;
//! - [`dense_shift_invert`] — a dense reference (n up to a few thousand), used
//!   to validate the Lanczos solver and for very small models.
//!
//! Both return the `count` lowest eigenvalues strictly above the shift σ,
//! ascending, with M-normalised vectors ($\varphi^\top M \varphi = 1$, sign
//! fixed so that the component of largest magnitude is positive) and the
//! relative residual
//! $\|K\varphi - \lambda M\varphi\|_2 / (\|K\varphi\|_2 + |\lambda|\,\|M\varphi\|_2)$
//! of every returned pair, computed with the original K and M (see
//! [`EigenPairs::residuals`] for the rounding floor of this measure).
//!
//! K and M are values on one [`SparsityPattern`] (both triangles stored) and
//! must be symmetric; K positive (semi-)definite, M positive semi-definite.
//! A singular M (massless DOF, e.g. rotations without rotational inertia)
//! gives infinite eigenvalues, which are never returned; see the module
//! notes of each solver for how they are excluded.

mod dense;
mod lanczos;
mod shift;
#[cfg(test)]
mod tests;

pub use dense::dense_shift_invert;
pub use lanczos::lanczos_shift_invert;
pub use shift::{shift_below_spectrum, ShiftChoice};

use crate::{FactorStats, SolverError, SparsityPattern};

/// Settings of the generalised symmetric eigen solve $K\varphi = \lambda M\varphi$
/// (λ = ω², rad²/s²).
#[derive(Debug, Clone, PartialEq)]
pub struct EigenSettings {
    /// Number of lowest eigenpairs wanted above the shift, ≥ 1 and ≤ n. Default 10.
    pub count: usize,
    /// Shift σ, rad²/s². The solvers return the eigenvalues strictly above σ
    /// closest to it. $K - \sigma M$ must be non-singular: with a singular K
    /// (a free structure, rigid-body modes at λ = 0) use a small negative
    /// shift, e.g. −1e-3 of the lowest elastic λ expected. Default 0.0.
    pub shift: f64,
    /// Acceptance tolerance on the relative residual
    /// $\|K\varphi - \lambda M\varphi\| / (\|K\varphi\| + |\lambda|\|M\varphi\|)$
    /// (dimensionless), in (0, 1). Default 1e-10. Where rounding alone makes a
    /// larger residual unavoidable (the lowest modes of a stiff, finely
    /// meshed model), the rounding floor described at
    /// [`EigenPairs::residuals`] applies instead.
    pub tolerance: f64,
    /// Thick restarts allowed to the Lanczos solver. Default 50.
    pub max_restarts: usize,
    /// Lanczos basis size (locked vectors included), at least
    /// min(n, count + 2); capped at n. Default `None`:
    /// min(n, max(3·count + 24, 60)).
    pub subspace: Option<usize>,
}

impl Default for EigenSettings {
    fn default() -> Self {
        Self { count: 10, shift: 0.0, tolerance: 1e-10, max_restarts: 50, subspace: None }
    }
}

impl EigenSettings {
    /// Default settings for the `count` lowest eigenpairs.
    pub fn new(count: usize) -> Self {
        Self { count, ..Self::default() }
    }

    /// Checks the settings for a problem with `n` equations.
    ///
    /// # Errors
    /// [`SolverError::InvalidSettings`] when `count` is 0 or greater than n,
    /// σ is not finite, the tolerance is not in (0, 1), or `subspace` is
    /// below min(n, count + 2).
    pub fn validate(&self, n: usize) -> Result<(), SolverError> {
        if self.count == 0 || self.count > n {
            return Err(SolverError::InvalidSettings {
                name: "count",
                value: self.count as f64,
                expected: "at least 1 and at most the number of equations",
            });
        }
        if !self.shift.is_finite() {
            return Err(SolverError::InvalidSettings {
                name: "shift",
                value: self.shift,
                expected: "a finite number (rad²/s²)",
            });
        }
        if !(self.tolerance > 0.0 && self.tolerance < 1.0) {
            return Err(SolverError::InvalidSettings {
                name: "tolerance",
                value: self.tolerance,
                expected: "a relative residual in (0, 1), e.g. 1e-10",
            });
        }
        if let Some(s) = self.subspace {
            if s < n.min(self.count + 2) {
                return Err(SolverError::InvalidSettings {
                    name: "subspace",
                    value: s as f64,
                    expected: "at least count + 2 (or the number of equations if smaller)",
                });
            }
        }
        Ok(())
    }

    /// The Lanczos basis size used for `n` equations (after [`validate`](Self::validate)):
    /// by default 3k + 24, at least 60. A section of many similar spans and
    /// wires has clusters of modes within a per cent of each other; with
    /// the former 2k + 10 (at least 40) the check for missed eigenvalues of
    /// a 10-span, 13-wire section (39 k DOF, 12 modes) kept swapping modes
    /// of the cluster and ran out of restarts, while 60 converged.
    pub fn subspace_size(&self, n: usize) -> usize {
        self.subspace.unwrap_or((3 * self.count + 24).max(60)).min(n)
    }
}

/// Eigenpairs returned by [`lanczos_shift_invert`] and [`dense_shift_invert`].
#[derive(Debug, Clone, PartialEq)]
pub struct EigenPairs {
    /// Eigenvalues λ = ω² (rad²/s²), ascending, all strictly above the shift.
    pub values: Vec<f64>,
    /// Mode shapes, one per value, M-normalised ($\varphi^\top M\varphi = 1$,
    /// units of 1/√kg for translational DOF), largest-magnitude component positive.
    pub vectors: Vec<Vec<f64>>,
    /// Relative residual $\|K\varphi - \lambda M\varphi\|_2 / (\|K\varphi\|_2 + |\lambda|\|M\varphi\|_2)$
    /// of each returned pair (dimensionless), computed with the original K and M.
    ///
    /// [`lanczos_shift_invert`] guarantees each is at most the larger of the
    /// tolerance and the rounding floor: (a) the rounding error of evaluating
    /// the residual, (c+2)·ε·(‖|K||φ|‖ + |λ|‖|M||φ|‖)/(‖Kφ‖ + |λ|‖Mφ‖), c the
    /// largest column count of the pattern, and (b) 10·ε·(‖K‖₁ + |λ|‖M‖₁)‖φ‖ /
    /// (‖Kφ‖ + |λ|‖Mφ‖), ten times the residual of a normwise backward error
    /// of ε (Higham & Higham 1998, "Structured backward error and condition of
    /// generalized eigenvalue problems", SIAM J. Matrix Anal. Appl. 20), the
    /// best a backward-stable factorisation of K − σM can deliver. Both are
    /// ≈ ε·‖K‖/(λ‖M‖): e.g. ≈ 2e-7 for the lowest mode of a clamped beam of
    /// 200 elements (‖K‖₁ ≈ 4e7 N/m, λ ≈ 0.33 rad²/s²). [`dense_shift_invert`]
    /// reports the residuals it gets without a guarantee.
    pub residuals: Vec<f64>,
    /// Thick restarts performed (0 for the dense path).
    pub restarts: usize,
    /// Applications of the operator $(K - \sigma M)^{-1} M$, i.e. sparse
    /// solves with the factor (0 for the dense path).
    pub operator_applications: usize,
    /// Work of the sparse factorisation of $K - \sigma M$: one symbolic and one
    /// numeric factorisation per Lanczos solve (when K − σM is indefinite: the
    /// failed LLᵀ attempt, `cholesky_failures` = 1, then one LU, so two
    /// symbolic analyses); `solves` = `operator_applications`. All zero for
    /// the dense path.
    pub factor_stats: FactorStats,
}

/// Checks the value arrays and the symmetry and mass diagonal of the input.
///
/// # Panics
/// If `k` or `m` does not have `pattern.nnz()` entries.
fn check_input(pattern: &SparsityPattern, k: &[f64], m: &[f64]) -> Result<(), SolverError> {
    assert_eq!(k.len(), pattern.nnz(), "stiffness values length");
    assert_eq!(m.len(), pattern.nnz(), "mass values length");
    let n = pattern.dim();
    for (values, _) in [(k, "stiffness"), (m, "mass")] {
        for j in 0..n {
            for idx in pattern.col_ptr()[j]..pattern.col_ptr()[j + 1] {
                if !values[idx].is_finite() {
                    return Err(SolverError::NonFinite {
                        lambda: f64::NAN,
                        dof: pattern.row_idx()[idx].min(j),
                    });
                }
            }
        }
    }
    let transpose = pattern.transpose_indices();
    for (values, name) in [(k, "stiffness asymmetry"), (m, "mass asymmetry")] {
        let scale = values.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        let asym = values.iter().zip(&transpose).fold(0.0f64, |a, (v, &t)| a.max((v - values[t]).abs()));
        if asym > SYMMETRY_TOLERANCE * scale {
            return Err(SolverError::InvalidSettings {
                name,
                value: asym / scale,
                expected: "symmetric values (relative asymmetry at most 1e-10)",
            });
        }
    }
    for &d in &pattern.diagonal_indices() {
        if m[d] < 0.0 {
            return Err(SolverError::InvalidSettings {
                name: "mass diagonal",
                value: m[d],
                expected: "a positive semi-definite mass matrix (no negative diagonal entry)",
            });
        }
    }
    Ok(())
}

/// Relative asymmetry max|a_ij − a_ji| / max|a| accepted for K and M.
const SYMMETRY_TOLERANCE: f64 = 1e-10;

/// Normwise backward errors at this multiple of ε·(‖K‖ + |λ|‖M‖)‖φ‖ count
/// as rounding level (see [`Residual::floor`]).
const BACKWARD_ERROR_FACTOR: f64 = 10.0;

/// The true relative residual of a pair and the levels below which rounding
/// errors make it meaningless.
#[derive(Debug, Clone, Copy)]
struct Residual {
    /// ‖Kφ − λMφ‖₂ / (‖Kφ‖₂ + |λ|‖Mφ‖₂).
    value: f64,
    /// Rounding-error bound of evaluating the residual itself,
    /// (c+2)·ε·(‖|K||φ|‖ + |λ|‖|M||φ|‖) / (‖Kφ‖ + |λ|‖Mφ‖) with c the
    /// largest number of entries in a column (Higham, "Accuracy and
    /// Stability of Numerical Algorithms", §3.5, for the matrix–vector
    /// product).
    evaluation: f64,
    /// The residual of a pair whose normwise backward error
    /// ‖Kφ − λMφ‖ / ((‖K‖ + |λ|‖M‖)‖φ‖) is ε (Higham & Higham 1998,
    /// "Structured backward error and condition of generalized eigenvalue
    /// problems", SIAM J. Matrix Anal. Appl. 20): ε·(‖K‖₁ + |λ|‖M‖₁)‖φ‖ /
    /// (‖Kφ‖ + |λ|‖Mφ‖). A backward-stable factorisation of K − σM cannot
    /// deliver a smaller residual than a modest multiple of this.
    backward: f64,
}

impl Residual {
    /// The level a residual must reach to be accepted: the tolerance, or
    /// rounding level if that is larger — the evaluation floor, or
    /// [`BACKWARD_ERROR_FACTOR`]·`backward` times `spread` (1 for a final
    /// pair; the Lanczos iterate uses μ_max/μ, see there). Both floors are
    /// ≈ ε·κ_λ with κ_λ = ‖K‖/(λ‖M‖): for the lowest modes of a finely
    /// meshed, stiff model they exceed 1e-10.
    fn floor(&self, tolerance: f64, spread: f64) -> f64 {
        tolerance.max(self.evaluation).max(BACKWARD_ERROR_FACTOR * spread * self.backward)
    }
}

/// ‖A‖₁ (= ‖A‖∞ for symmetric values) of values on `pattern`.
fn norm_1(pattern: &SparsityPattern, values: &[f64]) -> f64 {
    (0..pattern.dim())
        .map(|j| values[pattern.col_ptr()[j]..pattern.col_ptr()[j + 1]].iter().map(|v| v.abs()).sum::<f64>())
        .fold(0.0, f64::max)
}

/// The pencil (K, M) on its pattern, with ‖K‖₁ and ‖M‖₁.
struct Pencil<'a> {
    pattern: &'a SparsityPattern,
    k: &'a [f64],
    m: &'a [f64],
    norms: (f64, f64),
}

impl<'a> Pencil<'a> {
    fn new(pattern: &'a SparsityPattern, k: &'a [f64], m: &'a [f64]) -> Self {
        Self { pattern, k, m, norms: (norm_1(pattern, k), norm_1(pattern, m)) }
    }

    /// The residual of (λ, φ) with the original matrices; `kx`, `mx` are work
    /// vectors of length n that receive Kφ and Mφ.
    fn residual(&self, lambda: f64, phi: &[f64], kx: &mut [f64], mx: &mut [f64]) -> Residual {
        residual(self.pattern, self.k, self.m, self.norms, lambda, phi, (kx, mx))
    }
}

/// See [`Pencil::residual`].
fn residual(
    pattern: &SparsityPattern,
    k: &[f64],
    m: &[f64],
    norms: (f64, f64),
    lambda: f64,
    phi: &[f64],
    (kx, mx): (&mut [f64], &mut [f64]),
) -> Residual {
    pattern.mul_vec(k, phi, kx);
    pattern.mul_vec(m, phi, mx);
    let (mut r2, mut k2, mut m2, mut x2) = (0.0, 0.0, 0.0, 0.0);
    for i in 0..phi.len() {
        let r = kx[i] - lambda * mx[i];
        r2 += r * r;
        k2 += kx[i] * kx[i];
        m2 += mx[i] * mx[i];
        x2 += phi[i] * phi[i];
    }
    let denom = k2.sqrt() + lambda.abs() * m2.sqrt();
    let denom = if denom > 0.0 { denom } else { 1.0 };
    let n = pattern.dim();
    let max_col = (0..n).map(|j| pattern.col_ptr()[j + 1] - pattern.col_ptr()[j]).max().unwrap_or(0);
    let evaluation = (max_col as f64 + 2.0)
        * f64::EPSILON
        * (abs_mul_norm(pattern, k, phi) + lambda.abs() * abs_mul_norm(pattern, m, phi));
    let backward = f64::EPSILON * (norms.0 + lambda.abs() * norms.1) * x2.sqrt();
    Residual { value: r2.sqrt() / denom, evaluation: evaluation / denom, backward: backward / denom }
}

/// ‖|A||x|‖₂ for the values of A on `pattern`.
fn abs_mul_norm(pattern: &SparsityPattern, values: &[f64], x: &[f64]) -> f64 {
    let mut y = vec![0.0; pattern.dim()];
    for j in 0..pattern.dim() {
        let xj = x[j].abs();
        for idx in pattern.col_ptr()[j]..pattern.col_ptr()[j + 1] {
            y[pattern.row_idx()[idx]] += values[idx].abs() * xj;
        }
    }
    y.iter().map(|v| v * v).sum::<f64>().sqrt()
}

/// Scales φ to φᵀMφ = 1 (with `mx` = Mφ before scaling) and makes its
/// largest-magnitude component positive (the first of those within a relative
/// 1e-8 of the largest, so symmetric modes get a reproducible sign).
fn normalise(phi: &mut [f64], mx: &[f64]) {
    let norm = phi.iter().zip(mx).map(|(a, b)| a * b).sum::<f64>().sqrt();
    let max = phi.iter().fold(0.0f64, |a, v| a.max(v.abs()));
    let big = phi.iter().copied().find(|v| v.abs() >= (1.0 - 1e-8) * max).unwrap_or(0.0);
    let scale = if big < 0.0 { -1.0 / norm } else { 1.0 / norm };
    for v in phi.iter_mut() {
        *v *= scale;
    }
}

/// `count` exceeds the finite eigenvalues above the shift.
fn too_many(count: usize) -> SolverError {
    SolverError::InvalidSettings {
        name: "count",
        value: count as f64,
        expected: "at most the number of finite eigenvalues above the shift \
                   (n minus the rank deficiency of M, minus those at or below σ)",
    }
}
