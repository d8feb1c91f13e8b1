//! Newton–Raphson for the static equilibrium $r(x, \lambda) = f_{int}(x) - f_{ext}(\lambda) = 0$
//! at a fixed load factor λ.
//!
//! Each iteration solves $K_T\,\Delta x = -r$ with the tangent
//! $K_T = \partial r / \partial x$ on the system's sparsity pattern, then
//! applies $x \leftarrow x \oplus \Delta x$ (rotations multiplicatively, by the
//! system). Convergence (Bathe, *Finite Element Procedures*, 2nd ed., §8.4.4):
//!
//! - residual test $\|r\|_2 \le \varepsilon_r \, F(\lambda)$ with the force
//!   scale $F(\lambda)$ from [`NonlinearSystem::force_scale`], or
//! - increment test $\|\Delta x\|_\infty \le \varepsilon_x \max(1, \|x - x_0\|_\infty)$
//!   after a full (uncapped) Newton correction, $x_0$ the state at entry, in m or
//!   rad (the floor of 1 makes it absolute for tiny motions). This stops an
//!   iteration stuck at the round-off floor of a stiff system.

use crate::{EvalError, LinearSolver, SolverError, SparsityPattern};

/// A discretised structure under a proportional load λ·f_ext. The solver
/// sees only equations, never the model (glaze invariant: solvers never
/// import engine).
pub trait NonlinearSystem {
    /// Number of equations (free DOF) n.
    fn dim(&self) -> usize;
    /// Sparsity pattern of the tangent (both triangles).
    fn pattern(&self) -> &SparsityPattern;
    /// Residual r(x, λ) = f_int(x) − f_ext(λ) (out-of-balance force, N and N·m),
    /// and if `tangent` is Some, the tangent values ∂r/∂x on `pattern()`.
    /// Both buffers are overwritten. Returns Err for a non-finite or invalid state.
    fn evaluate(
        &mut self,
        lambda: f64,
        residual: &mut [f64],
        tangent: Option<&mut [f64]>,
    ) -> Result<(), EvalError>;
    /// Apply the correction `dx` (x ← x ⊕ dx; rotations multiplicatively).
    fn apply_increment(&mut self, dx: &[f64]);
    /// Save the current state (start of a load step).
    fn save_state(&mut self);
    /// Go back to the last saved state (cut-back).
    fn restore_state(&mut self);
    /// A force scale for the relative residual test at load factor λ (e.g. norm of
    /// external load + reactions), > 0, in N.
    fn force_scale(&self, lambda: f64) -> f64;
}

/// Newton–Raphson settings. Defaults are common practice for static cable
/// and beam analysis, not derived values.
#[derive(Debug, Clone, PartialEq)]
pub struct NewtonSettings {
    /// Largest number of corrections per solve. Default 25.
    pub max_iterations: usize,
    /// Relative residual tolerance ‖r‖₂ / force_scale(λ) (dimensionless). Default 1e-9.
    pub residual_tolerance: f64,
    /// Relative increment tolerance ‖Δx‖∞ / max(1, ‖x − x₀‖∞) (dimensionless;
    /// the floor 1 is in m or rad). Default 1e-10.
    pub increment_tolerance: f64,
    /// Cap on ‖Δx‖∞ per iteration (m or rad): a longer correction is scaled
    /// down to this length, a line-search-like safety for the first iterations
    /// from a slack or badly guessed state. Default `None` (full steps).
    pub max_step_length: Option<f64>,
}

impl Default for NewtonSettings {
    fn default() -> Self {
        Self {
            max_iterations: 25,
            residual_tolerance: 1e-9,
            increment_tolerance: 1e-10,
            max_step_length: None,
        }
    }
}

impl NewtonSettings {
    /// Checks the ranges: tolerances finite and ≥ 0, the cap finite and > 0.
    ///
    /// # Errors
    /// [`SolverError::InvalidSettings`] naming the first bad field.
    pub fn validate(&self) -> Result<(), SolverError> {
        let bad = |name, value, expected| Err(SolverError::InvalidSettings { name, value, expected });
        if !(self.residual_tolerance >= 0.0 && self.residual_tolerance.is_finite()) {
            return bad("residual_tolerance", self.residual_tolerance, "a finite number >= 0");
        }
        if !(self.increment_tolerance >= 0.0 && self.increment_tolerance.is_finite()) {
            return bad("increment_tolerance", self.increment_tolerance, "a finite number >= 0");
        }
        if let Some(cap) = self.max_step_length {
            if !(cap > 0.0 && cap.is_finite()) {
                return bad("max_step_length", cap, "a finite length > 0 (m or rad)");
            }
        }
        Ok(())
    }
}

/// Outcome of a converged Newton solve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NewtonReport {
    /// Corrections applied (0 if the entry state was already in equilibrium).
    pub iterations: usize,
    /// Final relative residual ‖r‖₂ / force_scale(λ) (dimensionless).
    pub residual_norm: f64,
    /// ‖Δx‖∞ of the last correction applied, m or rad (0 if none).
    pub increment_norm: f64,
}

/// Newton–Raphson at fixed λ.
///
/// Allocates its work vectors (n and nnz long) per call; the factorisation
/// reuses `solver`'s symbolic analysis.
///
/// # Errors
/// [`SolverError::Diverged`] after `max_iterations` without convergence;
/// [`SolverError::Evaluation`] or [`SolverError::NonFinite`] for a bad state;
/// [`SolverError::Singular`] for a singular tangent;
/// [`SolverError::InvalidSettings`] for bad settings or a bad force scale.
pub fn newton_solve(
    sys: &mut dyn NonlinearSystem,
    lambda: f64,
    solver: &mut dyn LinearSolver,
    s: &NewtonSettings,
) -> Result<NewtonReport, SolverError> {
    newton_iterate(sys, lambda, solver, s).0
}

/// Newton iteration; also returns the corrections applied, success or not
/// (load stepping counts the work of failed attempts too).
pub(crate) fn newton_iterate(
    sys: &mut dyn NonlinearSystem,
    lambda: f64,
    solver: &mut dyn LinearSolver,
    s: &NewtonSettings,
) -> (Result<NewtonReport, SolverError>, usize) {
    let mut iterations = 0;
    let result = iterate(sys, lambda, solver, s, &mut iterations);
    (result, iterations)
}

fn iterate(
    sys: &mut dyn NonlinearSystem,
    lambda: f64,
    solver: &mut dyn LinearSolver,
    s: &NewtonSettings,
    iterations: &mut usize,
) -> Result<NewtonReport, SolverError> {
    s.validate()?;
    let n = sys.dim();
    let nnz = sys.pattern().nnz();
    assert_eq!(sys.pattern().dim(), n, "pattern dimension must equal the system dimension");
    let mut r = vec![0.0; n];
    let mut k = vec![0.0; nnz];
    let mut dx = vec![0.0; n];
    let mut moved = vec![0.0; n]; // x − x₀, for the increment test scale
    let mut last_increment = 0.0;
    let mut last_was_full = false;

    let mut iter = 0;
    loop {
        *iterations = iter;
        sys.evaluate(lambda, &mut r, Some(&mut k))
            .map_err(|e| SolverError::Evaluation { lambda, message: e.message })?;
        if let Some(dof) = r.iter().position(|v| !v.is_finite()) {
            return Err(SolverError::NonFinite { lambda, dof });
        }
        let scale = sys.force_scale(lambda);
        if !(scale > 0.0 && scale.is_finite()) {
            return Err(SolverError::InvalidSettings {
                name: "force_scale",
                value: scale,
                expected: "a finite force > 0 (N) from NonlinearSystem::force_scale",
            });
        }
        let rel = norm2(&r) / scale;
        let moved_norm = norm_inf(&moved);
        tracing::trace!(lambda, iter, relative_residual = rel, increment = last_increment, "Newton");
        let residual_ok = rel <= s.residual_tolerance;
        let increment_ok = last_was_full && last_increment <= s.increment_tolerance * moved_norm.max(1.0);
        if residual_ok || increment_ok {
            tracing::debug!(lambda, iterations = iter, relative_residual = rel, "Newton converged");
            return Ok(NewtonReport { iterations: iter, residual_norm: rel, increment_norm: last_increment });
        }
        if iter >= s.max_iterations {
            return Err(SolverError::Diverged {
                lambda,
                iterations: iter,
                residual: rel,
                worst_dof: arg_max_abs(&r),
            });
        }
        if let Some(e) = k.iter().position(|v| !v.is_finite()) {
            return Err(SolverError::NonFinite { lambda, dof: sys.pattern().row_idx()[e] });
        }
        solver.factor(&k).map_err(|e| with_lambda(e, lambda))?;
        for (d, ri) in dx.iter_mut().zip(&r) {
            *d = -ri;
        }
        solver.solve_in_place(&mut dx).map_err(|e| with_lambda(e, lambda))?;
        let mut len = norm_inf(&dx);
        last_was_full = true;
        if let Some(cap) = s.max_step_length {
            if len > cap {
                let f = cap / len;
                dx.iter_mut().for_each(|d| *d *= f);
                len = cap;
                last_was_full = false;
            }
        }
        sys.apply_increment(&dx);
        for (m, d) in moved.iter_mut().zip(&dx) {
            *m += d;
        }
        last_increment = len;
        iter += 1;
    }
}

/// Fills in λ for errors raised by the linear solver, which does not know it.
fn with_lambda(e: SolverError, lambda: f64) -> SolverError {
    match e {
        SolverError::NonFinite { dof, .. } => SolverError::NonFinite { lambda, dof },
        other => other,
    }
}

fn norm2(v: &[f64]) -> f64 {
    // Scaled to avoid overflow for huge out-of-balance forces.
    let m = norm_inf(v);
    if m == 0.0 || !m.is_finite() {
        return m;
    }
    m * v.iter().map(|x| (x / m) * (x / m)).sum::<f64>().sqrt()
}

pub(crate) fn norm_inf(v: &[f64]) -> f64 {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_util::{Law, Springs};
    use crate::{Factorisation, SparseDirect};

    fn hardening() -> Springs {
        Springs::new([Law::Cubic { k: 1e3, c: 5e4 }, Law::Cubic { k: 2e3, c: 1e5 }], 500.0)
    }

    fn tight() -> NewtonSettings {
        NewtonSettings { residual_tolerance: 1e-13, increment_tolerance: 0.0, ..NewtonSettings::default() }
    }

    #[test]
    fn converges_quadratically_to_the_closed_form_root() {
        let mut sys = hardening();
        let mut solver = SparseDirect::new(sys.pattern());
        let rep = newton_solve(&mut sys, 1.0, &mut solver, &tight()).unwrap();
        let exact = sys.exact(1.0);
        // Closed form (Cardano) for two Duffing springs in series carrying P.
        for i in 0..2 {
            assert!((sys.x[i] - exact[i]).abs() <= 1e-12 * exact[1], "x{i} = {} vs {}", sys.x[i], exact[i]);
        }
        assert!(rep.residual_norm <= 1e-13);
        assert!(rep.iterations <= 10, "{} iterations, history {:?}", rep.iterations, sys.history);
        assert_eq!(solver.last_factorisation(), Some(Factorisation::Cholesky));
        assert_eq!(solver.stats().symbolic, 1);
        assert_eq!(solver.stats().numeric_cholesky, rep.iterations);

        // Order of convergence p from the last three residuals above the
        // round-off floor: ρ_{k+1} ≈ M ρ_k^p, quadratic means p ≈ 2.
        let h: Vec<f64> = sys.history.iter().copied().filter(|&r| r > 1e-14).collect();
        let m = h.len();
        assert!(m >= 3, "history {:?}", sys.history);
        let p = (h[m - 1] / h[m - 2]).ln() / (h[m - 2] / h[m - 3]).ln();
        assert!(p >= 1.8, "convergence order {p:.2}, history {:?}", sys.history);
    }

    #[test]
    fn equilibrium_on_entry_takes_no_iteration() {
        let mut sys = hardening();
        let mut solver = SparseDirect::new(sys.pattern());
        let rep = newton_solve(&mut sys, 0.0, &mut solver, &NewtonSettings::default()).unwrap();
        assert_eq!(rep.iterations, 0);
        assert_eq!(rep.increment_norm, 0.0);
        assert_eq!(solver.stats().numeric_cholesky, 0);
    }

    #[test]
    fn step_cap_limits_every_correction_and_still_converges() {
        let mut sys = hardening();
        let mut solver = SparseDirect::new(sys.pattern());
        let s = NewtonSettings { max_step_length: Some(0.05), ..tight() };
        let mut last = sys.x;
        let rep = newton_solve(&mut sys, 1.0, &mut solver, &s).unwrap();
        let exact = sys.exact(1.0);
        assert!((sys.x[1] - exact[1]).abs() <= 1e-12 * exact[1]);
        // x1 ≈ 0.27 m from 0 with corrections ≤ 0.05 m: at least 6 iterations.
        assert!(rep.iterations >= 6, "{} iterations", rep.iterations);
        assert!(rep.increment_norm <= 0.05);
        // Re-run from rest, watching each correction.
        let mut sys = hardening();
        let s = NewtonSettings { max_iterations: 1, ..s };
        for _ in 0..5 {
            let _ = newton_solve(&mut sys, 1.0, &mut solver, &s);
            let step = (sys.x[0] - last[0]).abs().max((sys.x[1] - last[1]).abs());
            assert!(step <= 0.05 * (1.0 + 1e-12), "step {step}");
            last = sys.x;
        }
    }

    #[test]
    fn iteration_limit_gives_diverged_with_data() {
        let mut sys = hardening();
        let mut solver = SparseDirect::new(sys.pattern());
        let s = NewtonSettings { max_iterations: 2, ..tight() };
        match newton_solve(&mut sys, 1.0, &mut solver, &s) {
            Err(SolverError::Diverged { lambda, iterations, residual, worst_dof }) => {
                assert_eq!((lambda, iterations), (1.0, 2));
                assert!(residual > 1e-13 && worst_dof < 2);
            }
            other => panic!("expected Diverged, got {other:?}"),
        }
    }

    #[test]
    fn model_failures_are_reported_with_lambda() {
        let mut sys = hardening();
        sys.e_max = Some(0.3);
        let mut solver = SparseDirect::new(sys.pattern());
        // First linear predictor at λ = 1: e1 = P / k1 = 0.5 m > 0.3 m.
        match newton_solve(&mut sys, 1.0, &mut solver, &NewtonSettings::default()) {
            Err(SolverError::Evaluation { lambda, message }) => {
                assert_eq!(lambda, 1.0);
                assert!(message.contains("spring 1"), "{message}");
            }
            other => panic!("expected Evaluation, got {other:?}"),
        }
        let bad = NewtonSettings { residual_tolerance: f64::NAN, ..NewtonSettings::default() };
        assert!(matches!(
            newton_solve(&mut sys, 1.0, &mut solver, &bad),
            Err(SolverError::InvalidSettings { name: "residual_tolerance", .. })
        ));
    }
}
