//! Dense shift-invert reference solver.
//!
//! With $A = K - \sigma_0 M = LL^\top$ (dense Cholesky, faer `Llt`), the pencil
//! $K\varphi = \lambda M\varphi$ becomes the standard symmetric problem
//! $C y = \mu y$ with $C = L^{-1} M L^{-\top}$, $\varphi = L^{-\top} y$ and
//! $\lambda = \sigma_0 + 1/\mu$ (the spectral transformation of Ericsson &
//! Ruhe 1980, "The spectral transformation Lanczos method for the numerical
//! solution of large sparse generalized symmetric eigenvalue problems",
//! Math. Comp. 35). C is decomposed by faer's self-adjoint eigen solver.
//!
//! **Singular M.** C has the rank of M; its zero eigenvalues μ = 0 are the
//! infinite λ of the massless DOF. They are computed as |μ| of the order of
//! ε·max μ and discarded: only μ > 100·n·ε·max μ is kept. No condensation is
//! needed because nothing is inverted but $K - \sigma_0 M$.
//!
//! **Shift.** Cholesky needs $K - \sigma_0 M$ positive definite, i.e. σ₀ below
//! the lowest eigenvalue. When the requested σ is inside the spectrum (the
//! Cholesky of $K - \sigma M$ fails) the solve is repeated with σ₀ = 0 (if σ >
//! 0) and then with σ₀ = min(σ, 0) − 10⁻³·max Kᵢᵢ / max Mᵢᵢ, which works for
//! any positive semi-definite K, and the eigenvalues above σ are picked from
//! that spectrum. If none of these factorises, K is not positive
//! semi-definite and the dense path gives up with
//! [`SolverError::InvalidSettings`] on `shift` (use [`lanczos_shift_invert`],
//! which factorises an indefinite $K - \sigma M$ by LU).
//!
//! Cost O(n³) time and O(n²) memory: a reference for tests and small models.
//!
//! [`lanczos_shift_invert`]: crate::lanczos_shift_invert

use faer::{Mat, MatRef, Side};

use super::{check_input, normalise, too_many, EigenPairs, EigenSettings, Pencil};
use crate::{SolverError, SparseDirect, SparsityPattern};

/// Ratio (relative to ε·n·max μ) under which μ counts as zero (λ infinite).
const ZERO_MU_FACTOR: f64 = 100.0;

/// Dense reference path for small models (n up to a few thousand): K − σM = LLᵀ
/// (dense Cholesky), eigen-decomposition of L⁻¹ M L⁻ᵀ with faer's self-adjoint
/// eigen solver, λ = σ + 1/μ for μ > 0. Same output conventions as
/// [`lanczos_shift_invert`](crate::lanczos_shift_invert): the `count` lowest
/// eigenvalues strictly above σ, ascending, M-normalised vectors, true residuals.
///
/// `k` and `m` are values on `pattern` (both triangles, symmetric); M may be
/// singular (positive semi-definite). A σ inside the spectrum is handled by
/// factorising at a lower shift (see the module notes); `tolerance`,
/// `max_restarts` and `subspace` are not used.
///
/// ```
/// use glaze_solvers::{dense_shift_invert, EigenSettings, SparsityPattern};
/// // Two masses m = 1 kg between springs k = 1 N/m, fixed at both ends:
/// // ω² = 1 and 3 rad²/s².
/// let groups: [&[Option<usize>]; 3] = [&[None, Some(0)], &[Some(0), Some(1)], &[Some(1), None]];
/// let pattern = SparsityPattern::from_dof_groups(2, groups);
/// let k = [2.0, -1.0, -1.0, 2.0];
/// let m = [1.0, 0.0, 0.0, 1.0];
/// let modes = dense_shift_invert(&pattern, &k, &m, &EigenSettings::new(2))?;
/// assert!((modes.values[0] - 1.0).abs() < 1e-12 && (modes.values[1] - 3.0).abs() < 1e-12);
/// # Ok::<(), glaze_solvers::SolverError>(())
/// ```
///
/// # Errors
/// [`SolverError::InvalidSettings`] for invalid settings (see
/// [`EigenSettings::validate`]), asymmetric K or M, a negative mass diagonal,
/// `count` above the number of finite eigenvalues above σ, or a K that is not
/// positive semi-definite; [`SolverError::Singular`] when K − σM factorises
/// with a pivot ratio above [`SparseDirect::DEFAULT_SINGULARITY_THRESHOLD`]
/// (σ at the lowest eigenvalue, or K and M share a null vector). A σ at a
/// higher eigenvalue makes K − σM indefinite and is handled like any σ inside
/// the spectrum: that eigenvalue, not strictly above σ, is not returned; [`SolverError::NonFinite`] for NaN or infinite values.
///
/// # Panics
/// If `k` or `m` does not have `pattern.nnz()` entries.
pub fn dense_shift_invert(
    pattern: &SparsityPattern,
    k: &[f64],
    m: &[f64],
    settings: &EigenSettings,
) -> Result<EigenPairs, SolverError> {
    let n = pattern.dim();
    settings.validate(n)?;
    check_input(pattern, k, m)?;
    let kd = scatter(pattern, k);
    let md = scatter(pattern, m);
    let sigma = settings.shift;
    let max_kii = (0..n).fold(0.0f64, |a, i| a.max(kd[(i, i)].abs()));
    let max_mii = (0..n).fold(0.0f64, |a, i| a.max(md[(i, i)]));
    if max_mii == 0.0 {
        return Err(too_many(settings.count));
    }
    // An equation with neither stiffness nor mass is singular at every shift.
    if let Some(j) = (0..n).find(|&j| (0..n).all(|i| kd[(i, j)] == 0.0 && md[(i, j)] == 0.0)) {
        return Err(SolverError::Singular { pivot: Some(j) });
    }
    let mut shifts = vec![sigma];
    if sigma > 0.0 {
        shifts.push(0.0);
    }
    shifts.push(sigma.min(0.0) - 1e-3 * max_kii.max(f64::MIN_POSITIVE) / max_mii);
    let mut singular_at = None;
    for (attempt, &s0) in shifts.iter().enumerate() {
        let a = Mat::from_fn(n, n, |i, j| kd[(i, j)] - s0 * md[(i, j)]);
        let Ok(llt) = a.llt(Side::Lower) else {
            singular_at = None;
            continue;
        };
        let l = llt.L();
        let (ratio, eq) = (0..n).fold((0.0f64, 0usize), |(r, e), j| {
            let q = a[(j, j)] / (l[(j, j)] * l[(j, j)]);
            if q > r {
                (q, j)
            } else {
                (r, e)
            }
        });
        if ratio > SparseDirect::DEFAULT_SINGULARITY_THRESHOLD {
            if attempt == 0 {
                return Err(SolverError::Singular { pivot: Some(eq) });
            }
            singular_at = Some(eq);
            continue;
        }
        return solve_factored(pattern, k, m, l, &md, s0, settings);
    }
    if let Some(eq) = singular_at {
        // Positive semi-definite but singular at every shift: K and M share a
        // null vector (a mechanism without mass).
        return Err(SolverError::Singular { pivot: Some(eq) });
    }
    Err(SolverError::InvalidSettings {
        name: "shift",
        value: sigma,
        expected: "a shift with K − σM positive definite for the dense solver; \
                   K − σM could not be factorised even at a shift below zero, so K is \
                   not positive semi-definite or K and M share a null vector (a \
                   mechanism without mass); for an indefinite K − σM use \
                   lanczos_shift_invert",
    })
}

/// Dense copy of the values on `pattern`.
fn scatter(pattern: &SparsityPattern, values: &[f64]) -> Mat<f64> {
    let n = pattern.dim();
    let mut a = Mat::zeros(n, n);
    for j in 0..n {
        for idx in pattern.col_ptr()[j]..pattern.col_ptr()[j + 1] {
            a[(pattern.row_idx()[idx], j)] = values[idx];
        }
    }
    a
}

/// Eigenpairs from the Cholesky factor L of K − s0·M.
fn solve_factored(
    pattern: &SparsityPattern,
    k: &[f64],
    m: &[f64],
    l: MatRef<'_, f64>,
    md: &Mat<f64>,
    s0: f64,
    settings: &EigenSettings,
) -> Result<EigenPairs, SolverError> {
    let n = pattern.dim();
    // X = L⁻¹ M, then C = L⁻¹ Xᵀ = L⁻¹ M L⁻ᵀ.
    let mut x = md.clone();
    l.solve_lower_triangular_in_place(&mut x);
    let mut c = x.transpose().to_owned();
    l.solve_lower_triangular_in_place(&mut c);
    let c = Mat::from_fn(n, n, |i, j| 0.5 * (c[(i, j)] + c[(j, i)]));
    let evd = c
        .self_adjoint_eigen(Side::Lower)
        .map_err(|e| SolverError::Faer(format!("dense self-adjoint eigen solver: {e:?}")))?;
    let mu = evd.S().column_vector();
    let u = evd.U();
    let mu_max = (0..n).fold(0.0f64, |a, i| a.max(mu[i]));
    let cutoff = ZERO_MU_FACTOR * n as f64 * f64::EPSILON * mu_max;
    // Ascending μ: walk down from the largest μ (smallest λ above s0).
    let mut chosen = Vec::with_capacity(settings.count);
    for i in (0..n).rev() {
        if chosen.len() == settings.count || mu[i] <= cutoff {
            break;
        }
        let lambda = s0 + 1.0 / mu[i];
        if lambda > settings.shift {
            chosen.push((i, lambda));
        }
    }
    if chosen.len() < settings.count {
        return Err(too_many(settings.count));
    }
    let mut y = Mat::from_fn(n, chosen.len(), |r, c| u[(r, chosen[c].0)]);
    l.transpose().solve_upper_triangular_in_place(&mut y);
    let (mut kx, mut mx) = (vec![0.0; n], vec![0.0; n]);
    let pencil = Pencil::new(pattern, k, m);
    let mut pairs = EigenPairs {
        values: Vec::with_capacity(chosen.len()),
        vectors: Vec::with_capacity(chosen.len()),
        residuals: Vec::with_capacity(chosen.len()),
        restarts: 0,
        operator_applications: 0,
        factor_stats: Default::default(),
    };
    for (c, &(_, lambda)) in chosen.iter().enumerate() {
        let mut phi = y.col_as_slice(c).to_vec();
        pattern.mul_vec(m, &phi, &mut mx);
        normalise(&mut phi, &mx);
        let r = pencil.residual(lambda, &phi, &mut kx, &mut mx).value;
        pairs.values.push(lambda);
        pairs.vectors.push(phi);
        pairs.residuals.push(r);
    }
    Ok(pairs)
}
