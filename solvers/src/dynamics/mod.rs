//! Implicit time integration of $M a + C v + g(q, v, t) = 0$: HHT-α,
//! generalised-α and Newmark, with Newton iterations per step.
//!
//! **Equations.** [`Integrator`] advances the semi-discrete system of a
//! [`SecondOrderSystem`] with the unified residual of Chung & Hulbert (1993)
//! (see [`Scheme`] for the schemes and their parameters):
//!
//! $$ R(\Delta q) = (1-\alpha_m) M a_{n+1} + \alpha_m M a_n
//!    + (1-\alpha_f)\,[C v_{n+1} + g_{n+1}] + \alpha_f\,[C v_n + g_n] = 0 $$
//!
//! The unknown of each step is the increment Δq from the last committed
//! configuration (rotations may compose multiplicatively inside the system;
//! the integrator only ever adds vectors in the tangent space), with the
//! Newmark relations
//!
//! $$ a_{n+1} = \frac{\Delta q - h v_n - h^2(\tfrac12-\beta) a_n}{\beta h^2}, \qquad
//!    v_{n+1} = v_n + h[(1-\gamma) a_n + \gamma a_{n+1}], $$
//!
//! and $g_{n+1} = g(q_n \oplus \Delta q, v_{n+1}, t_{n+1})$. $g_n$ is the value
//! stored when step n converged, never re-evaluated. Newton on Δq uses the
//! effective matrix
//!
//! $$ S = \frac{1-\alpha_m}{\beta h^2} M + (1-\alpha_f)\Big[\frac{\gamma}{\beta h}(C + D) + K\Big],
//!    \qquad K = \partial g/\partial q,\; D = \partial g/\partial v, $$
//!
//! assembled on the system's pattern and factorised with one
//! [`SparseDirect`](crate::SparseDirect) for the whole run (each symbolic
//! analysis, LLᵀ and LU, at most once; LU is chosen automatically when K or D
//! is unsymmetric, e.g. aerodynamic stiffness and damping).
//!
//! **Convergence** of a step: $\|R\|_2 \le \varepsilon_r F$ with the force scale
//!
//! $$ F = (1-\alpha_m)\|M a_{n+1}\|_2 + \alpha_m\|M a_n\|_2
//!      + (1-\alpha_f)(\|C v_{n+1}\|_2 + \|g_{n+1}\|_2) + \alpha_f(\|C v_n\|_2 + \|g_n\|_2)
//!      + F_{sys} $$
//!
//! ($\alpha$ weights taken by magnitude; $F_{sys}$ from
//! [`SecondOrderSystem::force_scale`], 0 by default), or
//! $\|\delta\|_\infty \le \varepsilon_x \max(1, \|\Delta q\|_\infty)$ after a
//! full (uncapped) correction δ (m or rad; the floor 1 makes it absolute for
//! small motions), with ε_r, ε_x from [`NewtonSettings`](crate::NewtonSettings).
//!
//! **Step control.** A step that fails (no convergence, a state the model
//! cannot evaluate, a non-finite value, a singular S) is rejected
//! ([`SecondOrderSystem::reject`]) and retried at half the step, down to
//! `min_dt`; below it the run stops with
//! [`SolverError::StepFailed`](crate::SolverError::StepFailed). After [`IntegratorSettings::EASY_STEPS`] steps in a
//! row that converge at the first try within
//! [`IntegratorSettings::EASY_ITERATIONS`] iterations the step doubles, up to
//! `max_dt`. There is no error estimator: the step changes only for Newton's
//! sake.

mod integrator;
mod scheme;
#[cfg(test)]
mod tests;

pub use integrator::{
    IntegrationStats, Integrator, IntegratorSettings, IntegratorState, Predictor, StepReport, StepTimings,
};
pub use scheme::{AlphaParameters, Scheme};

use crate::{EvalError, SparsityPattern};

/// A semi-discrete second-order system $M a + C v + g(q, v, t) = 0$ with
/// $g = f_{int}(q) - f_{ext}(q, v, t)$ (N and N·m per equation), on a
/// configuration space where increments may act multiplicatively
/// (rotations): the integrator only ever sees increments Δq from the last
/// committed configuration q_n.
///
/// Protocol: during a step the integrator calls [`set_increment`](Self::set_increment)
/// with the current trial Δq, then [`evaluate`](Self::evaluate) (several times
/// per step); at convergence [`commit`](Self::commit), after a failed attempt
/// [`reject`](Self::reject). [`Integrator::new`] sets a zero increment and
/// evaluates once at t₀ (no commit).
pub trait SecondOrderSystem {
    /// Number of equations n.
    fn dim(&self) -> usize;
    /// Sparsity pattern of M, C, K and D (both triangles).
    fn pattern(&self) -> &SparsityPattern;
    /// Constant mass matrix values on `pattern()` (kg, kg·m²).
    fn mass(&self) -> &[f64];
    /// Constant linear damping values on `pattern()` (e.g. Rayleigh), N·s/m
    /// (N·m·s/rad for rotations).
    fn damping(&self) -> &[f64];
    /// Set the trial configuration q_{n+1} = q_n ⊕ Δq (m, rad).
    fn set_increment(&mut self, dq: &[f64]);
    /// g at the trial configuration with velocity `v` (m/s, rad/s) at time `t`
    /// (s), in N and N·m; if requested, the stiffness K = ∂g/∂q (N/m) and the
    /// damping D = ∂g/∂v (N·s/m) on `pattern()` — aerodynamic stiffness and
    /// damping make both unsymmetric in general. All buffers are zeroed by the
    /// integrator before the call (a system may overwrite or add).
    ///
    /// # Errors
    /// An [`EvalError`] for a state the model cannot evaluate; the integrator
    /// cuts the step back.
    fn evaluate(
        &mut self,
        t: f64,
        v: &[f64],
        g: &mut [f64],
        stiffness: Option<&mut [f64]>,
        damping: Option<&mut [f64]>,
    ) -> Result<(), EvalError>;
    /// Accept the trial configuration as q_{n+1}.
    fn commit(&mut self);
    /// Called after a rejected attempt: the trial is discarded (the next
    /// `set_increment` starts from q_n again).
    fn reject(&mut self) {}
    /// An extra force scale F_sys ≥ 0 (N) added to the integrator's own (see
    /// the module notes), e.g. the norm of the static loads, so that round-off
    /// in f_int − f_ext of a heavily loaded structure moving little is not
    /// taken for an out-of-balance. Default 0.
    fn force_scale(&self) -> f64 {
        0.0
    }
}
