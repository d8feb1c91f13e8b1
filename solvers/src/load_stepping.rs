//! Load stepping: λ from 0 to 1 in Newton-solved steps with automatic
//! cut-back and regrowth (Crisfield, *Non-linear Finite Element Analysis of
//! Solids and Structures*, Vol. 1, 1991, §9.5: automatic increments).
//!
//! A step that fails (divergence, a state the model cannot evaluate, a
//! singular tangent) is undone with [`NonlinearSystem::restore_state`] and
//! retried at half the size; below `min_step` the path stops with
//! [`SolverError::StepTooSmall`]. After a step converging in at most
//! [`LoadStepSettings::EASY_ITERATIONS`] iterations (and not straight after a
//! cut-back) the step grows by `growth`, up to `max_step`.

use crate::newton::newton_iterate;
use crate::{FactorStats, LinearSolver, NewtonSettings, NonlinearSystem, SolverError};

/// Load-stepping settings; all values are fractions of the full load
/// (dimensionless, λ ∈ [0, 1]).
#[derive(Debug, Clone, PartialEq)]
pub struct LoadStepSettings {
    /// First step Δλ. Default 0.25.
    pub initial_step: f64,
    /// Smallest step before giving up. Default 1e-4.
    pub min_step: f64,
    /// Largest step. Default 1.0.
    pub max_step: f64,
    /// Step growth factor after an easy step (≥ 1). Default 1.5.
    pub growth: f64,
}

impl Default for LoadStepSettings {
    fn default() -> Self {
        Self { initial_step: 0.25, min_step: 1e-4, max_step: 1.0, growth: 1.5 }
    }
}

impl LoadStepSettings {
    /// A step converging in at most this many Newton iterations is "easy"
    /// and lets the next step grow (common practice: a quarter of the default
    /// iteration limit).
    pub const EASY_ITERATIONS: usize = 6;

    /// Checks 0 < min_step ≤ initial_step ≤ max_step ≤ 1 and finite growth ≥ 1.
    ///
    /// # Errors
    /// [`SolverError::InvalidSettings`] naming the first bad field.
    pub fn validate(&self) -> Result<(), SolverError> {
        let bad = |name, value, expected| Err(SolverError::InvalidSettings { name, value, expected });
        if !(self.min_step > 0.0 && self.min_step <= 1.0) {
            return bad("min_step", self.min_step, "a load fraction in (0, 1]");
        }
        if !(self.max_step >= self.min_step && self.max_step <= 1.0) {
            return bad("max_step", self.max_step, "a load fraction in [min_step, 1]");
        }
        if !(self.initial_step >= self.min_step && self.initial_step <= self.max_step) {
            return bad("initial_step", self.initial_step, "a load fraction in [min_step, max_step]");
        }
        if !(self.growth >= 1.0 && self.growth.is_finite()) {
            return bad("growth", self.growth, "a finite factor >= 1");
        }
        Ok(())
    }
}

/// Outcome of a completed load path (λ reached 1).
#[derive(Debug, Clone, PartialEq)]
pub struct LoadPathReport {
    /// Converged load steps.
    pub steps: usize,
    /// Failed attempts that were undone and retried with half the step.
    pub cutbacks: usize,
    /// Newton iterations over all attempts, failed ones included.
    pub total_iterations: usize,
    /// Relative residual ‖r‖₂ / force_scale(1) of the final state (dimensionless).
    pub final_residual: f64,
    /// Work done by the linear solver during this path (difference of its
    /// counters; `symbolic` is 0 if the solver had analysed the pattern before).
    pub factor_stats: FactorStats,
}

/// Load stepping λ: 0 → 1 with automatic cut-back (halve on failure, restore state) and regrowth.
///
/// The state on entry is the state at λ = 0 (saved first). On success the
/// system is left in equilibrium at λ = 1; on failure at the last converged λ.
///
/// # Errors
/// [`SolverError::StepTooSmall`] (carrying the last failure) when
/// the step falls below `min_step`; [`SolverError::InvalidSettings`] and
/// [`SolverError::Faer`] at once, without cut-back.
pub fn solve_load_path(
    sys: &mut dyn NonlinearSystem,
    solver: &mut dyn LinearSolver,
    newton: &NewtonSettings,
    steps: &LoadStepSettings,
) -> Result<LoadPathReport, SolverError> {
    newton.validate()?;
    steps.validate()?;
    let stats0 = solver.stats();
    let mut lambda = 0.0f64;
    let mut step = steps.initial_step;
    let mut report = LoadPathReport {
        steps: 0,
        cutbacks: 0,
        total_iterations: 0,
        final_residual: f64::NAN,
        factor_stats: FactorStats::default(),
    };
    let mut just_cut = false;
    sys.save_state();
    while lambda < 1.0 {
        let mut target = (lambda + step).min(1.0);
        if 1.0 - target < 0.5 * steps.min_step {
            target = 1.0; // no sliver step at the end
        }
        let (result, iterations) = newton_iterate(sys, target, solver, newton);
        report.total_iterations += iterations;
        match result {
            Ok(r) => {
                lambda = target;
                report.steps += 1;
                report.final_residual = r.residual_norm;
                sys.save_state();
                tracing::info!(lambda, iterations = r.iterations, step, "load step converged");
                if r.iterations <= LoadStepSettings::EASY_ITERATIONS && !just_cut {
                    step = (step * steps.growth).min(steps.max_step);
                }
                just_cut = false;
            }
            Err(e) if e.is_recoverable() => {
                sys.restore_state();
                report.cutbacks += 1;
                step *= 0.5;
                just_cut = true;
                tracing::info!(lambda, target, next_step = step, error = %e, "load step failed, cutting back");
                if step < steps.min_step {
                    return Err(SolverError::StepTooSmall { lambda, step, last: Box::new(e) });
                }
            }
            Err(e) => return Err(e),
        }
    }
    report.factor_stats = diff(solver.stats(), stats0);
    Ok(report)
}

fn diff(a: FactorStats, b: FactorStats) -> FactorStats {
    FactorStats {
        symbolic: a.symbolic.saturating_sub(b.symbolic),
        symbolic_cholesky: a.symbolic_cholesky.saturating_sub(b.symbolic_cholesky),
        symbolic_lu: a.symbolic_lu.saturating_sub(b.symbolic_lu),
        numeric_cholesky: a.numeric_cholesky.saturating_sub(b.numeric_cholesky),
        numeric_lu: a.numeric_lu.saturating_sub(b.numeric_lu),
        solves: a.solves.saturating_sub(b.solves),
        cholesky_failures: a.cholesky_failures.saturating_sub(b.cholesky_failures),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_util::{Law, Springs};
    use crate::SparseDirect;

    fn hardening(p: f64) -> Springs {
        Springs::new([Law::Cubic { k: 1e3, c: 5e4 }, Law::Cubic { k: 2e3, c: 1e5 }], p)
    }

    fn assert_at_exact(sys: &Springs, lambda: f64) {
        let exact = sys.exact(lambda);
        for i in 0..2 {
            // Residual tolerance 1e-9 of a force scale ~2P over a tangent ≥ k:
            // state error well under 1e-8 of the displacement.
            assert!(
                (sys.x[i] - exact[i]).abs() <= 1e-8 * exact[1].abs(),
                "λ = {lambda}: x{i} = {} vs closed form {}",
                sys.x[i],
                exact[i]
            );
        }
    }

    #[test]
    fn easy_path_grows_the_step_and_reuses_the_analysis() {
        let mut sys = hardening(1.0); // P = 1 N: nearly linear
        let mut solver = SparseDirect::new(sys.pattern());
        let rep =
            solve_load_path(&mut sys, &mut solver, &NewtonSettings::default(), &LoadStepSettings::default())
                .unwrap();
        // 0.25, then ×1.5 = 0.375 (λ = 0.625), then 0.5625 clipped to λ = 1.
        assert_eq!((rep.steps, rep.cutbacks), (3, 0));
        assert_eq!(rep.factor_stats.symbolic, 1);
        assert_eq!(rep.factor_stats.numeric_cholesky, rep.total_iterations);
        assert!(rep.final_residual <= 1e-9);
        assert_at_exact(&sys, 1.0);
        assert_eq!(sys.saves, 1 + rep.steps);
    }

    #[test]
    fn cuts_back_when_the_model_rejects_a_full_step_and_recovers() {
        let mut sys = hardening(500.0);
        // Linear predictor of a full step: e1 = P / k1 = 0.5 m, beyond the
        // 0.3 m table; the converged e1(P) ≈ 0.185 m is inside it.
        sys.e_max = Some(0.3);
        let mut solver = SparseDirect::new(sys.pattern());
        let steps = LoadStepSettings { initial_step: 1.0, ..LoadStepSettings::default() };
        let rep = solve_load_path(&mut sys, &mut solver, &NewtonSettings::default(), &steps).unwrap();
        assert!(rep.cutbacks >= 1, "{rep:?}");
        assert_eq!(sys.restores, rep.cutbacks);
        assert!(rep.steps >= 2);
        assert_at_exact(&sys, 1.0);
    }

    #[test]
    fn cuts_back_when_full_step_newton_does_not_converge_in_time() {
        let mut sys = hardening(500.0);
        let mut solver = SparseDirect::new(sys.pattern());
        // The full step needs 8 iterations from rest; allow 4.
        let newton = NewtonSettings { max_iterations: 4, ..NewtonSettings::default() };
        let steps = LoadStepSettings { initial_step: 1.0, ..LoadStepSettings::default() };
        let rep = solve_load_path(&mut sys, &mut solver, &newton, &steps).unwrap();
        assert!(rep.cutbacks >= 1, "{rep:?}");
        assert_eq!(sys.restores, rep.cutbacks);
        assert_at_exact(&sys, 1.0);
        assert_eq!(rep.factor_stats.symbolic, 1, "one analysis for the whole path");
    }

    #[test]
    fn load_beyond_capacity_gives_step_too_small_near_the_limit() {
        // Softening springs with force limit 400 N under P = 500 N: no
        // equilibrium beyond λ* = 400 / 500 = 0.8.
        let laws = [Law::Tanh { f_max: 400.0, e0: 0.1 }, Law::Tanh { f_max: 600.0, e0: 0.05 }];
        let mut sys = Springs::new(laws, 500.0);
        let mut solver = SparseDirect::new(sys.pattern());
        let err =
            solve_load_path(&mut sys, &mut solver, &NewtonSettings::default(), &LoadStepSettings::default())
                .unwrap_err();
        match &err {
            SolverError::StepTooSmall { lambda, step, last } => {
                assert!(*lambda < 0.8 && *lambda > 0.79, "stalled at λ = {lambda}");
                assert!(*step < 1e-4);
                assert!(last.is_recoverable(), "{last}");
                // Left at the last converged state.
                let exact = sys.exact(*lambda);
                assert!((sys.x[0] - exact[0]).abs() <= 1e-6 * exact[0], "{:?} vs {exact:?}", sys.x);
            }
            other => panic!("expected StepTooSmall, got {other}"),
        }
        assert!(err.to_string().contains("Last failure"), "{err}");
    }

    #[test]
    fn invalid_settings_fail_before_any_work() {
        let mut sys = hardening(500.0);
        let mut solver = SparseDirect::new(sys.pattern());
        for (steps, name) in [
            (LoadStepSettings { min_step: 0.0, ..Default::default() }, "min_step"),
            (LoadStepSettings { max_step: 2.0, ..Default::default() }, "max_step"),
            (LoadStepSettings { initial_step: 1e-5, ..Default::default() }, "initial_step"),
            (LoadStepSettings { growth: 0.5, ..Default::default() }, "growth"),
        ] {
            match solve_load_path(&mut sys, &mut solver, &NewtonSettings::default(), &steps) {
                Err(SolverError::InvalidSettings { name: got, .. }) => assert_eq!(got, name),
                other => panic!("expected InvalidSettings({name}), got {other:?}"),
            }
        }
        assert!(sys.history.is_empty());
    }
}
