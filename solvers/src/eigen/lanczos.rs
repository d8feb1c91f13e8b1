//! Shift-invert Lanczos with full reorthogonalisation and thick restarts.
//!
//! **Spectral transformation.** With $A = K - \sigma M$ factorised once by
//! [`SparseDirect`] (one symbolic and one numeric factorisation: LLᵀ when
//! σ is below the spectrum; when $A$ is indefinite faer's LLᵀ stops at a
//! negative pivot and LU with partial pivoting is used), the operator
//! $\mathrm{Op} = A^{-1}M$ has the eigenpairs $(\mu, \varphi)$ with
//! $\mu = 1/(\lambda - \sigma)$ (Ericsson & Ruhe 1980, "The spectral
//! transformation Lanczos method for the numerical solution of large sparse
//! generalized symmetric eigenvalue problems", Math. Comp. 35). The
//! eigenvalues closest above σ are the largest μ, which Lanczos finds first;
//! λ below σ give μ < 0 and are never wanted.
//!
//! **Inner product.** Op is self-adjoint in every inner product
//! $\langle x, y\rangle_B = x^\top B y$ with $B = K - \tau M$, because
//! $(K - \tau M)A^{-1}M = M + (\sigma - \tau) M A^{-1} M$ is symmetric. The
//! iteration uses $B = A = K - \sigma M$ when that is positive definite (the
//! usual case, σ below the spectrum; no extra matrix) and $B = K + |\sigma| M$
//! when A is indefinite (σ inside the spectrum; positive definite for a
//! positive semi-definite K). The M inner product, the textbook choice, is
//! only semi-definite when M is singular; see below why it is not used.
//!
//! **Iteration.** Lanczos in the B inner product with full
//! reorthogonalisation: every new vector is orthogonalised against the
//! locked vectors and the whole basis by classical Gram–Schmidt applied
//! twice ("twice is enough", Parlett, "The Symmetric Eigenvalue Problem",
//! §6.9, after Kahan), with B·v stored for every basis vector so each step
//! costs one solve and one sparse product with B. The projected matrix
//! $H = V^\top B\,\mathrm{Op}\,V$ is taken from the Gram–Schmidt coefficients,
//! so it is the actual Rayleigh quotient of the computed basis. When the
//! basis is full it is thick restarted (Wu & Simon 2000, "Thick-restart
//! Lanczos method for large symmetric eigenvalue problems", SIAM J. Matrix
//! Anal. Appl. 22; for the symmetric case the same as Stewart's 2001
//! Krylov–Schur restart): the Ritz vectors of the largest Ritz values are kept
//! (the wanted ones still unconverged plus half of the remaining room), with
//! the residual vector as the next basis vector, and $H$ becomes diagonal
//! plus one coupling row. After an invariant subspace (β ≈ 0) the iteration
//! continues from a fresh pseudo-random vector orthogonal to the basis.
//!
//! **Acceptance and locking.** A Ritz pair is locked (removed from the
//! active basis; every new vector is then orthogonalised against it) when
//! (a) its Ritz residual β|s_m| is below 0.01·tolerance·μ (or at rounding
//! level) — locking drops the pair's coupling β·s_m to the rest of the basis,
//! a perturbation of Op of that size, which must stay far below the accuracy
//! asked of the other pairs (otherwise the second copy of a repeated
//! eigenvalue cannot reach the tolerance afterwards); and (b) its *true*
//! residual $\|K\varphi - \lambda M\varphi\| / (\|K\varphi\| + |\lambda|\|M\varphi\|)$,
//! with the original K and M and λ the Rayleigh quotient, is within
//! [`EigenSettings::tolerance`] or its rounding floor. The floor (see
//! [`EigenPairs::residuals`]) is the larger of the rounding error of
//! evaluating the residual and 10× the residual of a normwise backward error
//! of ε; during the iteration it is widened by μ_max/μ because a long Krylov
//! recurrence represents Op only to ≈ ε·μ_max, so the Ritz vectors of the
//! smaller μ carry proportionally larger rounding errors.
//!
//! **Missed copies of repeated eigenvalues.** A Krylov space from one start
//! vector holds one direction of each eigenspace, so a second copy of a
//! repeated eigenvalue appears only from rounding. When `count` pairs are
//! locked the iteration therefore starts again from a fresh random vector,
//! orthogonal to the locked ones, and stops only when the largest Ritz value
//! θ of that new space is converged (Ritz residual ‖r‖ ≤ 1e-6·θ) with
//! θ + ‖r‖ not above the smallest locked μ, or has converged to an
//! eigenvalue equal to the largest locked one, or the space is exhausted. A
//! smaller eigenvalue found this way replaces the largest locked pair and the
//! check repeats.
//!
//! **Final refinement.** One Rayleigh–Ritz step for (K, M) on the span of the
//! locked vectors makes them M-orthonormal to rounding. If a pair then misses
//! its tolerance (the rounding errors of the recurrence, typical for the
//! higher wanted modes of a stiff model with a wide spectrum), up to three
//! block refinement rounds follow: Rayleigh–Ritz on span(X, Op X), X the
//! wanted vectors plus count/2 (at least 2) guard vectors, the Ritz vectors
//! beyond the wanted ones from the last active basis (one block Lanczos
//! step; the guards supply the neighbouring directions the errors of the
//! highest wanted modes lie in). Each round costs count + guards solves. If a
//! pair still misses its tolerance, [`SolverError::EigenNotConverged`] is
//! returned.
//!
//! **Singular M (massless DOF).** Chosen approach: *no explicit
//! condensation*; the spectral transformation does it implicitly. M is never
//! inverted. Op has exactly the finite eigenpairs of the pencil on range(Op)
//! — the same as those of the statically condensed problem — and μ = 0 on
//! null(M) = null(Op) (the infinite eigenvalues). This needs K positive
//! definite on null(M), the condition under which static condensation of the
//! massless DOF exists (otherwise K − σM is singular and
//! [`SolverError::Singular`] is returned). Measures: (1) every start vector
//! (the seeded pseudo-random one and any fresh one) is passed through Op
//! once, which removes its null(M) component; (2) the B inner product keeps
//! null(M) visible: for $x = A^{-1}My \in$ range(Op) and $z \in$ null(M),
//! $z^\top B x = z^\top A x + (\sigma - \tau) z^\top M x = z^\top M y = 0$,
//! so null(M) is B-orthogonal to range(Op) and any rounding-level null(M)
//! component of a Lanczos vector counts in its norm and is never amplified.
//! (In the M semi-inner product such components are invisible, and the
//! normalisation by small β multiplies them at every step: in our tests they
//! grew by 10⁸ within one basis of 50 vectors and overflowed; Nour-Omid,
//! Parlett, Ericsson & Jensen 1987, "How to implement the spectral
//! transformation", Math. Comp. 48, describe this growth.) (3) Accepted Ritz
//! vectors are purified by the Ericsson–Ruhe correction
//! $x = y + (s_m/\theta)\,r = \mathrm{Op}\,y/\theta$, r the unnormalised
//! residual vector. (4) Ritz values μ ≤ 100·n·ε·max|μ| count as infinite λ
//! and are discarded. When the Krylov space exhausts range(Op) (rank M
//! vectors) before `count` pairs are found, there are fewer finite
//! eigenvalues above σ than requested and [`SolverError::InvalidSettings`] on
//! `count` is returned.

use faer::linalg::matmul::matmul;
use faer::{Accum, Col, ColMut, ColRef, Mat, MatRef, Par, Side};

use super::{check_input, normalise, too_many, EigenPairs, EigenSettings, Pencil, Residual};
use crate::{Factorisation, LinearSolver, SolverError, SparseDirect, SparsityPattern};

/// Ritz values μ ≤ this · n · ε · max|μ| are taken as μ = 0 (infinite λ).
const ZERO_MU_FACTOR: f64 = 100.0;
/// A new vector keeping at most this fraction of its M-norm after
/// orthogonalisation lies in the span (invariant subspace, or exhausted).
const TINY: f64 = 1e3 * f64::EPSILON;
/// A pair is locked once its Ritz residual is below this fraction of
/// tolerance · μ (or at rounding level).
const LOCK_FRACTION: f64 = 1e-2;
/// Ritz pairs whose Ritz residual exceeds this fraction of |μ| are not
/// worth a true-residual evaluation.
const RITZ_SCREEN: f64 = 1e-3;
/// Relative Ritz residual at which the largest Ritz value of the verification
/// space is trusted as a bound.
const VERIFY_RITZ: f64 = 1e-6;
/// Relative tie between a verified eigenvalue and the largest locked one.
const TIE: f64 = 1e-8;
/// Seed of the start vectors (deterministic runs).
const SEED: u64 = 0x9e1a_2e5e_ed00_0001;
/// Block refinement rounds at most in the final step.
const REFINE_ROUNDS: usize = 3;
/// In the verification phase, Ritz values are examined every this many steps.
const CHECK_EVERY: usize = 5;

/// Lowest `count` eigenpairs above σ of K φ = λ M φ by shift-invert Lanczos on
/// the faer sparse factor of K − σM, in a (K − τM) inner product, with full
/// reorthogonalisation, thick restarts and acceptance on the true residual
/// (see the module notes for the algorithm and the handling of a singular M).
///
/// `k` and `m` are values on the same `pattern` (both triangles, symmetric);
/// M may be singular (positive semi-definite): it is never inverted and the
/// modes of infinite λ are excluded. Runs are deterministic (seeded start
/// vectors).
///
/// ```
/// use glaze_solvers::{lanczos_shift_invert, Assembler, EigenSettings, SparsityPattern};
/// // Fixed–fixed chain of 100 masses of 2 kg and 101 springs of 5e3 N/m:
/// // ω_j² = (4k/m) sin²(jπ / 202).
/// let n = 100;
/// let mut groups = vec![vec![None, Some(0)], vec![Some(n - 1), None]];
/// groups.extend((0..n - 1).map(|i| vec![Some(i), Some(i + 1)]));
/// let pattern = SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()));
/// let asm = Assembler::new(&pattern, groups.iter().map(|g| g.as_slice()));
/// let (mut k, mut m) = (vec![0.0; pattern.nnz()], vec![0.0; pattern.nnz()]);
/// for g in 0..groups.len() {
///     asm.add_matrix(g, &[5e3, -5e3, -5e3, 5e3], &mut k);
/// }
/// for d in pattern.diagonal_indices() {
///     m[d] = 2.0;
/// }
/// let modes = lanczos_shift_invert(&pattern, &k, &m, &EigenSettings::new(5))?;
/// for (j, lambda) in modes.values.iter().enumerate() {
///     let s = ((j + 1) as f64 * std::f64::consts::PI / 202.0).sin();
///     assert!((lambda - 4.0 * 5e3 / 2.0 * s * s).abs() < 1e-9 * lambda);
/// }
/// # Ok::<(), glaze_solvers::SolverError>(())
/// ```
///
/// # Errors
/// [`SolverError::InvalidSettings`] for invalid settings (see
/// [`EigenSettings::validate`]), asymmetric K or M, a negative mass diagonal,
/// or `count` above the number of finite eigenvalues above σ;
/// [`SolverError::Singular`] when K − σM is singular (σ is an eigenvalue, a
/// mechanism, or K and M share a null vector); [`SolverError::NonFinite`] for
/// NaN or infinite values; [`SolverError::EigenNotConverged`] when the pairs
/// are not all accepted within `max_restarts` restarts.
///
/// # Panics
/// If `k` or `m` does not have `pattern.nnz()` entries.
pub fn lanczos_shift_invert(
    pattern: &SparsityPattern,
    k: &[f64],
    m: &[f64],
    settings: &EigenSettings,
) -> Result<EigenPairs, SolverError> {
    let n = pattern.dim();
    settings.validate(n)?;
    check_input(pattern, k, m)?;
    let a: Vec<f64> = k.iter().zip(m).map(|(k, m)| k - settings.shift * m).collect();
    let mut solver = SparseDirect::new(pattern);
    // Inner product B: K − σM itself when positive definite (Cholesky
    // succeeded), else K + |σ|M (see the module notes).
    let b = match solver.factor(&a)? {
        Factorisation::Cholesky => a,
        Factorisation::Lu => k.iter().zip(m).map(|(k, m)| k + settings.shift.abs() * m).collect(),
    };
    let mut run = Lanczos {
        pattern,
        k,
        m,
        n,
        p: settings.subspace_size(n),
        settings,
        solver,
        b,
        pencil: Pencil::new(pattern, k, m),
        guard: Vec::new(),
        applications: 0,
        rng: Lcg(SEED),
        locked: Vec::new(),
        ly: Mat::zeros(n, settings.count),
        lby: Mat::zeros(n, settings.count),
        vb: Mat::zeros(0, 0),
        bvb: Mat::zeros(0, 0),
        len: 0,
        h: Mat::zeros(0, 0),
        kx: vec![0.0; n],
        mx: vec![0.0; n],
    };
    run.h = Mat::zeros(run.p, run.p);
    run.vb = Mat::zeros(n, run.p);
    run.bvb = Mat::zeros(n, run.p);
    let restarts = run.iterate()?;
    run.finish(restarts)
}

/// 64-bit linear congruential generator (Knuth's MMIX constants) for the
/// start vectors.
struct Lcg(u64);

impl Lcg {
    /// Uniform in [−1, 1).
    fn symmetric(&mut self) -> f64 {
        self.0 = self.0.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
        2.0 * ((self.0 >> 11) as f64 * (1.0 / (1u64 << 53) as f64)) - 1.0
    }
}

/// An accepted eigenpair.
struct Locked {
    /// Rayleigh quotient λ = φᵀKφ (φ M-normalised), rad²/s².
    lambda: f64,
    /// The Ritz vector in the span of the basis (B-orthogonal to the active
    /// basis; used for orthogonalisation) and B·y, also held as columns of
    /// `Lanczos::ly` and `Lanczos::lby`.
    y: Vec<f64>,
    by: Vec<f64>,
    /// The purified, M-normalised eigenvector returned.
    x: Vec<f64>,
}

/// A B-normalised vector v with B·v.
type Pair = (Vec<f64>, Vec<f64>);

/// The outcome of one expansion: Op V = V H + r e_mᵀ with r = `raw`.
struct Step {
    /// The next basis vector r / β (with B·r / β), or a fresh vector after an
    /// invariant subspace; `None` when the space is exhausted.
    next: Option<Pair>,
    /// The residual r = Op v_m − V h (after orthogonalisation, unnormalised).
    raw: Vec<f64>,
    /// β = ‖r‖_B.
    beta: f64,
}

/// The examination of a Rayleigh–Ritz step.
struct Examined {
    /// Ritz indices locked in this step.
    locked: Vec<usize>,
    /// The largest active Ritz value is converged to an eigenvalue not below
    /// the largest locked one, or no positive Ritz value is left.
    verified: bool,
    /// Every Ritz pair with μ > 0 was accepted.
    all_positive_accepted: bool,
}

struct Lanczos<'a> {
    pattern: &'a SparsityPattern,
    k: &'a [f64],
    m: &'a [f64],
    n: usize,
    /// Basis size, locked vectors included.
    p: usize,
    settings: &'a EigenSettings,
    solver: SparseDirect,
    /// Values of the inner-product matrix B (positive definite) on the pattern.
    b: Vec<f64>,
    /// K and M with their norms, for the true residuals.
    pencil: Pencil<'a>,
    /// Approximate eigenvectors beyond the wanted ones (final refinement).
    guard: Vec<Vec<f64>>,
    applications: usize,
    rng: Lcg,
    /// Accepted pairs, ascending λ, at most `count`.
    locked: Vec<Locked>,
    /// The locked y and B·y as n × count matrices (first `locked.len()` columns).
    ly: Mat<f64>,
    lby: Mat<f64>,
    /// Active B-orthonormal basis and B times each vector, n × p matrices of
    /// which the first `len` columns are in use; the last vector's column of
    /// `h` is pending until it is expanded.
    vb: Mat<f64>,
    bvb: Mat<f64>,
    len: usize,
    /// Projected matrix VᵀB·Op·V, upper triangle (columns from Gram–Schmidt).
    h: Mat<f64>,
    kx: Vec<f64>,
    mx: Vec<f64>,
}

impl Lanczos<'_> {
    /// out = (K − σM)⁻¹ M x.
    fn apply(&mut self, x: &[f64]) -> Result<Vec<f64>, SolverError> {
        let mut out = vec![0.0; self.n];
        self.pattern.mul_vec(self.m, x, &mut out);
        self.solver.solve_in_place(&mut out)?;
        self.applications += 1;
        Ok(out)
    }

    /// Classical Gram–Schmidt twice in the B inner product against the locked
    /// vectors and the active basis; adds the basis coefficients to `coeffs`.
    /// Returns the B-norms of `w` before and after, and B·w (after).
    fn orthogonalise(
        &self,
        w: &mut [f64],
        mut coeffs: Option<&mut [f64]>,
    ) -> Result<(f64, f64, Vec<f64>), SolverError> {
        let mut removed2 = 0.0;
        let nl = self.locked.len();
        let (ly, lby) = (self.ly.subcols(0, nl), self.lby.subcols(0, nl));
        let (v, bv) = (self.vb.subcols(0, self.len), self.bvb.subcols(0, self.len));
        for _pass in 0..2 {
            // c = (BY)ᵀw, (BV)ᵀw from the same w (classical), then w −= Y cl + V cb.
            let cl = gemv_t(lby, w);
            let cb = gemv_t(bv, w);
            gemv_sub(ly, &cl, w);
            gemv_sub(v, &cb, w);
            if let Some(h) = coeffs.as_deref_mut() {
                for (h, c) in h.iter_mut().zip(cb.iter()) {
                    *h += c;
                }
            }
            removed2 += cl.iter().chain(cb.iter()).map(|c| c * c).sum::<f64>();
        }
        let mut bw = vec![0.0; self.n];
        self.pattern.mul_vec(&self.b, w, &mut bw);
        let after2 = dot(w, &bw);
        if after2 < 0.0 {
            // Rounding can make a tiny B-norm² slightly negative; a clearly
            // negative one means B = K + |σ|M is indefinite.
            let bound = abs_quadratic(self.pattern, &self.b, w);
            if -after2 > f64::EPSILON.sqrt() * bound {
                return Err(SolverError::InvalidSettings {
                    name: "stiffness",
                    value: after2 / bound,
                    expected: "a positive semi-definite stiffness K (K + |σ|M positive definite \
                               when σ is inside the spectrum); K has negative eigenvalues: the \
                               linearised state is unstable",
                });
            }
        }
        let after2 = after2.max(0.0);
        // ‖w₀‖²_B = Σ c² + ‖w‖²_B (Pythagoras over the two passes).
        Ok(((removed2 + after2).sqrt(), after2.sqrt(), bw))
    }

    /// A pseudo-random vector passed once through Op (purified of null(M)),
    /// B-orthonormalised against the locked vectors and the basis; `None` if
    /// nothing is left (range(Op) is spanned).
    fn fresh_vector(&mut self) -> Result<Option<Pair>, SolverError> {
        let r: Vec<f64> = (0..self.n).map(|_| self.rng.symmetric()).collect();
        let mut w = self.apply(&r)?;
        let (before, after, bw) = self.orthogonalise(&mut w, None)?;
        if after <= TINY * before || after.is_nan() {
            return Ok(None);
        }
        Ok(Some((scaled(&w, 1.0 / after), scaled(&bw, 1.0 / after))))
    }

    /// Applies Op to the last basis vector and fills its column of `h`.
    fn expand(&mut self) -> Result<Step, SolverError> {
        let j = self.len - 1;
        let v = self.vb.col_as_slice(j).to_vec();
        let mut w = self.apply(&v)?;
        let mut coeffs = vec![0.0; j + 1];
        let (before, after, bw) = self.orthogonalise(&mut w, Some(&mut coeffs))?;
        for (i, c) in coeffs.iter().enumerate() {
            self.h[(i, j)] = *c;
        }
        let next = if self.len + self.locked.len() >= self.n {
            None
        } else if after <= TINY * before || after.is_nan() {
            // Invariant subspace: continue with a fresh direction.
            self.fresh_vector()?
        } else {
            Some((scaled(&w, 1.0 / after), scaled(&bw, 1.0 / after)))
        };
        Ok(Step { next, raw: w, beta: after })
    }

    fn push(&mut self, (v, bv): Pair) {
        self.vb.col_as_slice_mut(self.len).copy_from_slice(&v);
        self.bvb.col_as_slice_mut(self.len).copy_from_slice(&bv);
        self.len += 1;
    }

    /// Copies the locked vectors into `ly`, `lby` after a change.
    fn store_locked(&mut self) {
        for (j, l) in self.locked.iter().enumerate() {
            self.ly.col_as_slice_mut(j).copy_from_slice(&l.y);
            self.lby.col_as_slice_mut(j).copy_from_slice(&l.by);
        }
    }

    /// Ritz values (ascending) and vectors (columns) of the projected matrix.
    fn ritz(&self) -> Result<(Vec<f64>, Mat<f64>), SolverError> {
        let len = self.len;
        let hs = Mat::from_fn(len, len, |i, j| if i <= j { self.h[(i, j)] } else { self.h[(j, i)] });
        let evd = hs
            .self_adjoint_eigen(Side::Lower)
            .map_err(|e| SolverError::Faer(format!("Lanczos Rayleigh–Ritz eigen solver: {e:?}")))?;
        let theta = evd.S().column_vector().iter().copied().collect();
        Ok((theta, evd.U().to_owned()))
    }

    /// V s[:, i] for V = `vectors` (its first `len` columns).
    fn combine(&self, vectors: &Mat<f64>, s: &Mat<f64>, i: usize) -> Vec<f64> {
        let mut y = vec![0.0; self.n];
        matmul(
            ColMut::from_slice_mut(&mut y),
            Accum::Replace,
            vectors.subcols(0, self.len),
            s.col(i),
            1.0,
            Par::Seq,
        );
        y
    }

    /// Tests the leading Ritz pairs on their true residual and locks the accepted ones.
    fn examine(&mut self, theta: &[f64], s: &Mat<f64>, step: &Step, verifying: bool) -> Examined {
        let len = self.len;
        let count = self.settings.count;
        let exhausted = step.next.is_none();
        let mut order: Vec<usize> = (0..len).collect();
        order.sort_by(|&a, &b| theta[b].total_cmp(&theta[a]));
        let scale = theta.iter().fold(0.0f64, |a, t| a.max(t.abs()));
        let scale = self.locked.iter().fold(scale, |a, l| a.max(1.0 / (l.lambda - self.settings.shift)));
        let cutoff = ZERO_MU_FACTOR * self.n as f64 * f64::EPSILON * scale;
        let positive = order.iter().filter(|&&i| theta[i] > cutoff).count();
        let mut out = Examined { locked: Vec::new(), verified: false, all_positive_accepted: true };
        let candidates = count - self.locked.len() + 1;
        let mut accepted = 0;
        for (rank, &i) in order.iter().take(candidates).enumerate() {
            if theta[i] <= cutoff {
                if rank == 0 {
                    out.verified = true;
                }
                break;
            }
            // Ritz residual ‖Op y − θ y‖_B = β |s_m|.
            let estimate = step.beta * s[(len - 1, i)].abs();
            let lockable = estimate <= (LOCK_FRACTION * self.settings.tolerance * theta[i]).max(TINY * scale);
            let top_check = rank == 0 && verifying && self.locked.len() == count;
            if top_check {
                // No eigenvalue of the deflated operator above the locked ones:
                // its largest Ritz value, converged to VERIFY_RITZ, is bounded by
                // θ + ‖r‖ below the smallest locked μ.
                let mu_c = 1.0 / (self.locked[count - 1].lambda - self.settings.shift);
                if estimate <= VERIFY_RITZ * theta[i] && theta[i] + estimate <= mu_c * (1.0 + TIE) {
                    out.verified = true;
                    break;
                }
            }
            // The true residual is only worth evaluating for a pair that could
            // be locked now, or (a tie with the largest locked one) verified.
            if !(lockable || exhausted || (top_check && estimate <= RITZ_SCREEN * theta[i])) {
                continue;
            }
            // Ericsson–Ruhe purification: x = y + (s_m / θ) r = Op y / θ.
            let y = self.combine(&self.vb, s, i);
            let mut x = y.clone();
            axpy(s[(len - 1, i)] / theta[i], &step.raw, &mut x);
            self.pattern.mul_vec(self.m, &x, &mut self.mx);
            let norm = dot(&x, &self.mx).sqrt();
            x.iter_mut().for_each(|v| *v /= norm);
            self.pattern.mul_vec(self.k, &x, &mut self.kx);
            let lambda = dot(&x, &self.kx);
            let res = self.pencil.residual(lambda, &x, &mut self.kx, &mut self.mx);
            // A Krylov basis represents Op to about ε·max μ, so the Ritz vector
            // of μ carries rounding errors ~ε·max μ / μ (relative): its floor
            // is spread by that ratio; the final refinement removes it.
            let floor = res.floor(self.settings.tolerance, scale / theta[i]);
            if res.value > floor || res.value.is_nan() || lambda <= self.settings.shift {
                continue;
            }
            accepted += 1;
            let largest = self.locked.last().map_or(f64::INFINITY, |l| l.lambda);
            if self.locked.len() < count || lambda < largest - TIE * largest.abs() {
                if !lockable {
                    continue;
                }
                if self.locked.len() == count {
                    self.locked.pop();
                }
                let by = self.combine(&self.bvb, s, i);
                let at = self.locked.partition_point(|l| l.lambda <= lambda);
                self.locked.insert(at, Locked { lambda, y, by, x });
                out.locked.push(i);
            } else if top_check {
                out.verified = true;
            }
        }
        out.all_positive_accepted = accepted == positive;
        if !out.locked.is_empty() {
            self.store_locked();
        }
        out
    }

    /// Thick restart: keeps the largest non-locked Ritz vectors and the next vector.
    /// The coupling row β·s_m of the kept vectors enters `h` through the
    /// Gram–Schmidt column of `next` when it is expanded.
    fn restart(&mut self, theta: &[f64], s: &Mat<f64>, next: Pair, locked_now: &[usize]) {
        let len = self.len;
        let cap = self.p - self.locked.len();
        let need = self.settings.count - self.locked.len();
        let mut order: Vec<usize> = (0..len).filter(|i| !locked_now.contains(i)).collect();
        order.sort_by(|&a, &b| theta[b].total_cmp(&theta[a]));
        let keep = (need + (cap.saturating_sub(need)) / 2).max(1).min(cap.saturating_sub(1)).min(order.len());
        // [V S_keep, next] (and the same for B·V).
        let s_keep = Mat::from_fn(len, keep, |r, c| s[(r, order[c])]);
        for store in [&mut self.vb, &mut self.bvb] {
            let mut kept = Mat::zeros(self.n, keep);
            matmul(&mut kept, Accum::Replace, store.subcols(0, len), &s_keep, 1.0, Par::Seq);
            store.subcols_mut(0, keep).copy_from(&kept);
        }
        self.len = keep;
        self.push(next);
        self.h.fill(0.0);
        for (a, &i) in order[..keep].iter().enumerate() {
            self.h[(a, a)] = theta[i];
        }
    }

    /// Keeps the (purified) Ritz vectors of the largest positive Ritz values
    /// of the final active basis, approximations of the eigenvectors just
    /// beyond the wanted ones, for the final refinement.
    fn keep_guards(&mut self, theta: &[f64], s: &Mat<f64>, step: &Step) {
        let len = self.len;
        let mut order: Vec<usize> = (0..len).filter(|&i| theta[i] > 0.0).collect();
        order.sort_by(|&a, &b| theta[b].total_cmp(&theta[a]));
        let guards = (self.settings.count / 2).max(2);
        self.guard = order
            .iter()
            .take(guards)
            .map(|&i| {
                let mut x = self.combine(&self.vb, s, i);
                axpy(s[(len - 1, i)] / theta[i], &step.raw, &mut x);
                x
            })
            .collect();
    }

    /// Discards the active basis and starts from a fresh vector; false if
    /// none is left.
    fn fresh_start(&mut self) -> Result<bool, SolverError> {
        self.len = 0;
        self.h.fill(0.0);
        Ok(match self.fresh_vector()? {
            Some(v) => {
                self.push(v);
                true
            }
            None => false,
        })
    }

    /// The main loop; returns the number of restarts.
    fn iterate(&mut self) -> Result<usize, SolverError> {
        let count = self.settings.count;
        let mut restarts = 0;
        let mut verifying = false;
        let not_converged =
            |found: usize, restarts: usize| SolverError::EigenNotConverged { found, wanted: count, restarts };
        if !self.fresh_start()? {
            return Err(too_many(count));
        }
        loop {
            let cap = self.p - self.locked.len();
            let step = self.expand()?;
            let exhausted = step.next.is_none();
            let full = self.len >= cap;
            let check_due = verifying && self.len >= 2 * CHECK_EVERY && self.len.is_multiple_of(CHECK_EVERY);
            if !(full || exhausted || check_due) {
                self.push(step.next.expect("not exhausted"));
                continue;
            }
            let (theta, s) = self.ritz()?;
            let ex = self.examine(&theta, &s, &step, verifying);
            let done_locking = self.locked.len() == count;
            if done_locking && (exhausted || (verifying && ex.verified && ex.locked.is_empty())) {
                self.keep_guards(&theta, &s, &step);
                return Ok(restarts);
            }
            if exhausted {
                return Err(if ex.all_positive_accepted {
                    too_many(count)
                } else {
                    not_converged(self.locked.len(), restarts)
                });
            }
            let next = step.next.expect("not exhausted");
            if done_locking && (!verifying || !ex.locked.is_empty()) {
                // Start the check for missed eigenvalues from a fresh vector.
                verifying = true;
                restarts += 1;
                if restarts > self.settings.max_restarts {
                    return Err(not_converged(self.locked.len(), restarts - 1));
                }
                if !self.fresh_start()? {
                    return Ok(restarts);
                }
                continue;
            }
            if full || !ex.locked.is_empty() {
                restarts += 1;
                if restarts > self.settings.max_restarts {
                    return Err(not_converged(self.locked.len(), restarts - 1));
                }
                self.restart(&theta, &s, next, &ex.locked);
            } else {
                self.push(next);
            }
        }
    }

    /// Rayleigh–Ritz for the pencil (K, M) on the span of the M-orthonormal
    /// `w`: the Ritz pairs with λ above σ, ascending, M-normalised with the
    /// sign convention, and their residuals.
    fn rayleigh_ritz(&mut self, w: &[Vec<f64>]) -> Result<Vec<(f64, Vec<f64>, Residual)>, SolverError> {
        let c = w.len();
        let mut kw = Vec::with_capacity(c);
        let mut mw = Vec::with_capacity(c);
        for v in w {
            self.pattern.mul_vec(self.k, v, &mut self.kx);
            self.pattern.mul_vec(self.m, v, &mut self.mx);
            kw.push(self.kx.clone());
            mw.push(self.mx.clone());
        }
        let g = Mat::from_fn(c, c, |i, j| 0.5 * (dot(&w[i], &mw[j]) + dot(&w[j], &mw[i])));
        let kp = Mat::from_fn(c, c, |i, j| 0.5 * (dot(&w[i], &kw[j]) + dot(&w[j], &kw[i])));
        // G ≈ I; C = L⁻¹ Kp L⁻ᵀ.
        let llt = g
            .llt(Side::Lower)
            .map_err(|e| SolverError::Faer(format!("eigenvector basis is not M-independent: {e:?}")))?;
        let l = llt.L();
        let mut t = kp.clone();
        l.solve_lower_triangular_in_place(&mut t);
        let mut cmat = t.transpose().to_owned();
        l.solve_lower_triangular_in_place(&mut cmat);
        let cmat = Mat::from_fn(c, c, |i, j| 0.5 * (cmat[(i, j)] + cmat[(j, i)]));
        let evd = cmat
            .self_adjoint_eigen(Side::Lower)
            .map_err(|e| SolverError::Faer(format!("Rayleigh–Ritz eigen solver: {e:?}")))?;
        let mut q = evd.U().to_owned();
        l.transpose().solve_upper_triangular_in_place(&mut q);
        let values = evd.S().column_vector();
        let mut out = Vec::new();
        for a in 0..c {
            let lambda = values[a];
            if lambda <= self.settings.shift {
                continue;
            }
            let mut phi = vec![0.0; self.n];
            for (b, v) in w.iter().enumerate() {
                axpy(q[(b, a)], v, &mut phi);
            }
            self.pattern.mul_vec(self.m, &phi, &mut self.mx);
            normalise(&mut phi, &self.mx);
            let res = self.pencil.residual(lambda, &phi, &mut self.kx, &mut self.mx);
            out.push((lambda, phi, res));
        }
        Ok(out)
    }

    /// M-orthonormal basis of span(`vectors`) by classical Gram–Schmidt twice,
    /// dropping vectors that are (numerically) in the span of the previous ones.
    fn m_orthonormal(&mut self, vectors: Vec<Vec<f64>>) -> Vec<Vec<f64>> {
        let mut q: Vec<Vec<f64>> = Vec::with_capacity(vectors.len());
        let mut mq: Vec<Vec<f64>> = Vec::with_capacity(vectors.len());
        for mut v in vectors {
            self.pattern.mul_vec(self.m, &v, &mut self.mx);
            let before = dot(&v, &self.mx).max(0.0).sqrt();
            for _pass in 0..2 {
                let c: Vec<f64> = mq.iter().map(|mqj| dot(mqj, &v)).collect();
                for (qj, cj) in q.iter().zip(&c) {
                    axpy(-cj, qj, &mut v);
                }
            }
            self.pattern.mul_vec(self.m, &v, &mut self.mx);
            let after = dot(&v, &self.mx).max(0.0).sqrt();
            if after > TINY * before && after > 0.0 {
                v.iter_mut().for_each(|x| *x /= after);
                mq.push(scaled(&self.mx, 1.0 / after));
                q.push(v);
            }
        }
        q
    }

    /// Final Rayleigh–Ritz on the locked vectors and, while a pair is not
    /// within its tolerance, block refinement: Rayleigh–Ritz on
    /// span(X, Op X) (one block Lanczos step; `count` solves), which removes
    /// the rounding errors the long Krylov recurrence left in the vectors of
    /// the smaller μ.
    fn finish(mut self, restarts: usize) -> Result<EigenPairs, SolverError> {
        let c = self.locked.len();
        let tol = self.settings.tolerance;
        let worst = |pairs: &[(f64, Vec<f64>, Residual)]| {
            pairs.iter().map(|(_, _, r)| r.value / r.floor(tol, 1.0)).fold(0.0f64, f64::max)
        };
        let x: Vec<Vec<f64>> = self.locked.iter().map(|l| l.x.clone()).collect();
        let x = self.m_orthonormal(x);
        let mut best = self.rayleigh_ritz(&x)?;
        best.truncate(c);
        // The refinement block: the wanted vectors and the guards.
        let mut block: Vec<Vec<f64>> = x;
        block.extend(std::mem::take(&mut self.guard));
        for _round in 0..REFINE_ROUNDS {
            if best.len() == c && worst(&best) <= 1.0 {
                break;
            }
            let mut w = block.clone();
            for v in &block {
                w.push(self.apply(v)?);
            }
            let w = self.m_orthonormal(w);
            let mut refined = self.rayleigh_ritz(&w)?;
            refined.truncate(block.len());
            block = refined.iter().map(|(_, v, _)| v.clone()).collect();
            refined.truncate(c);
            if refined.len() < c || worst(&refined) >= worst(&best) {
                break;
            }
            best = refined;
        }
        let accepted = best.iter().filter(|(_, _, r)| r.value <= r.floor(tol, 1.0)).count();
        if best.len() < c || accepted < c {
            return Err(SolverError::EigenNotConverged {
                found: accepted,
                wanted: self.settings.count,
                restarts,
            });
        }
        let mut pairs = EigenPairs {
            values: Vec::with_capacity(c),
            vectors: Vec::with_capacity(c),
            residuals: Vec::with_capacity(c),
            restarts,
            operator_applications: self.applications,
            factor_stats: self.solver.stats(),
        };
        for (lambda, phi, res) in best {
            pairs.values.push(lambda);
            pairs.vectors.push(phi);
            pairs.residuals.push(res.value);
        }
        Ok(pairs)
    }
}

/// |w|ᵀ |B| |w|, the rounding scale of wᵀBw.
fn abs_quadratic(pattern: &SparsityPattern, values: &[f64], w: &[f64]) -> f64 {
    let mut sum = 0.0;
    for j in 0..pattern.dim() {
        for idx in pattern.col_ptr()[j]..pattern.col_ptr()[j + 1] {
            sum += (values[idx] * w[pattern.row_idx()[idx]] * w[j]).abs();
        }
    }
    sum
}

/// Aᵀx.
fn gemv_t(a: MatRef<'_, f64>, x: &[f64]) -> Col<f64> {
    let mut c = Col::zeros(a.ncols());
    matmul(&mut c, Accum::Replace, a.transpose(), ColRef::from_slice(x), 1.0, Par::Seq);
    c
}

/// w −= A c.
fn gemv_sub(a: MatRef<'_, f64>, c: &Col<f64>, w: &mut [f64]) {
    matmul(ColMut::from_slice_mut(w), Accum::Add, a, c, -1.0, Par::Seq);
}

fn scaled(v: &[f64], a: f64) -> Vec<f64> {
    v.iter().map(|x| a * x).collect()
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// y += a x.
fn axpy(a: f64, x: &[f64], y: &mut [f64]) {
    for (y, x) in y.iter_mut().zip(x) {
        *y += a * x;
    }
}
