//! Errors of the solver layer.
//!
//! Every variant carries the data a line engineer needs to act on it: the load
//! factor λ at which it happened, the equation (DOF) number involved, the
//! iteration count and the out-of-balance force reached. Equation numbers are
//! the global equation numbers of the system (the ones in the DOF groups given
//! to [`SparsityPattern::from_dof_groups`](crate::SparsityPattern::from_dof_groups));
//! the engine maps them back to a node and a DOF name.

use thiserror::Error;

/// Failure of a linear solve, a Newton iteration or a load path.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum SolverError {
    /// The matrix is singular (or numerically singular) even for LU with
    /// partial pivoting.
    #[error(
        "the stiffness matrix is singular{}: the structure has a mechanism \
         (a free rigid-body motion, a missing support or connection, an unrestrained \
         rotation, or a slack cable with no transverse stiffness) or has reached a limit \
         point where it carries no more load; check the supports, end releases, cable \
         pretension and the load level",
        match pivot { Some(p) => format!(" near equation {p}"), None => String::new() }
    )]
    Singular {
        /// Equation number (original ordering) where the singularity showed: the
        /// column with the smallest relative pivot, the column LU could not pivot,
        /// or the largest (or first non-finite) component of the solution. `None`
        /// when it could not be located.
        pivot: Option<usize>,
    },
    /// Newton–Raphson did not reach the tolerances within the allowed iterations.
    #[error(
        "Newton iterations did not converge at load factor λ = {lambda} after {iterations} \
         iterations (relative out-of-balance {residual:.3e}, largest at equation {worst_dof}); \
         the structure may be unstable at this load (buckling, snap-through, slack cables) or \
         the load step too large: use smaller load steps or more iterations"
    )]
    Diverged {
        /// Load factor λ of the failed solve (dimensionless, 0 to 1).
        lambda: f64,
        /// Newton iterations performed.
        iterations: usize,
        /// Last relative residual ‖r‖₂ / force_scale(λ) (dimensionless).
        residual: f64,
        /// Equation with the largest out-of-balance |rᵢ| at the last iteration.
        worst_dof: usize,
    },
    /// Load stepping cut the step below `min_step` without converging.
    #[error(
        "load stepping stalled at load factor λ = {lambda}: the load step was cut back to \
         {step:.3e}, below the minimum step; the structure cannot carry more load along this \
         path (limit point or instability) or the model is wrong. Last failure: {last}"
    )]
    StepTooSmall {
        /// Last converged load factor λ (dimensionless).
        lambda: f64,
        /// Step size that would have been tried next (dimensionless).
        step: f64,
        /// The failure of the last attempted step. Part of the message (callers
        /// format errors with `{}`), so deliberately not also a `source()`.
        last: Box<SolverError>,
    },
    /// The nonlinear system could not evaluate its residual or tangent.
    #[error("the model could not be evaluated at load factor λ = {lambda}: {message}")]
    Evaluation {
        /// Load factor λ of the evaluation (dimensionless).
        lambda: f64,
        /// What the model reported.
        message: String,
    },
    /// A residual, tangent, right-hand side or solution value is NaN or infinite.
    #[error(
        "non-finite value (NaN or infinity) at equation {dof}{}: the model state is \
         invalid (check material and section data, zero-length elements, or an iteration \
         that diverged)",
        if lambda.is_nan() { String::new() } else { format!(", load factor λ = {lambda}") }
    )]
    NonFinite {
        /// Load factor λ (dimensionless); NaN when raised by a linear solver
        /// used outside a load path.
        lambda: f64,
        /// First equation with a non-finite value.
        dof: usize,
    },
    /// A settings value is out of its valid range.
    #[error("invalid solver setting `{name}` = {value}: {expected}")]
    InvalidSettings {
        /// Name of the field, e.g. `min_step`.
        name: &'static str,
        /// The value given.
        value: f64,
        /// What is expected, e.g. "a number in (0, 1]".
        expected: &'static str,
    },
    /// [`LinearSolver::solve_in_place`](crate::LinearSolver::solve_in_place) was
    /// called without a successful factorisation.
    #[error(
        "linear solve requested without a valid factorisation (the last factor failed or none was computed)"
    )]
    NotFactored,
    /// The eigen solver did not converge the wanted eigenpairs within the
    /// allowed restarts.
    #[error(
        "the eigen solver found {found} of the {wanted} wanted modes after {restarts} restarts; \
         allow more restarts or a larger subspace, loosen the tolerance, or move the shift \
         closer to the wanted frequencies"
    )]
    EigenNotConverged {
        /// Eigenpairs accepted (true residual within the tolerance).
        found: usize,
        /// Eigenpairs requested (`count`).
        wanted: usize,
        /// Thick restarts performed.
        restarts: usize,
    },
    /// The Newton iterations of one time step did not reach the tolerances
    /// within the allowed iterations.
    #[error(
        "Newton iterations of the time step from t = {time} s (Δt = {dt:.3e} s) did not converge \
         after {iterations} iterations (relative out-of-balance {residual:.3e}, largest at \
         equation {worst_dof})"
    )]
    StepNotConverged {
        /// Start time t_n of the step, s.
        time: f64,
        /// Step size tried, s.
        dt: f64,
        /// Newton iterations performed.
        iterations: usize,
        /// Last relative residual of the step (dimensionless; see the force
        /// scale of the integrator).
        residual: f64,
        /// Equation with the largest out-of-balance at the last iteration.
        worst_dof: usize,
    },
    /// The model could not be evaluated at a trial state of a time step.
    #[error("the model could not be evaluated at time t = {time} s: {message}")]
    EvaluationAtTime {
        /// Time of the trial state, s.
        time: f64,
        /// What the model reported.
        message: String,
    },
    /// Time integration cannot go on: a step failed even when cut back to
    /// the minimum step. The integrator is left at the last converged state.
    #[error(
        "time integration stopped at t = {time} s: the time step failed even at Δt = {dt:.3e} s \
         and cannot be cut back below the minimum step{}; the motion may have become unstable \
         (an amplitude growing without bound, a cable going slack and snapping taut), the model \
         may be wrong, or the minimum step is too large. Last failure: {last}",
        match (worst_dof, residual.is_finite()) {
            (Some(d), true) => format!(" (relative out-of-balance {residual:.3e}, largest at equation {d})"),
            _ => String::new(),
        }
    )]
    StepFailed {
        /// Last converged time t_n, s (where the state is left).
        time: f64,
        /// Smallest step size tried, s (halving it would fall below `min_dt`).
        dt: f64,
        /// Equation with the largest out-of-balance at the last iteration of
        /// the last attempt; `None` when that attempt failed before a residual
        /// was computed (e.g. the model could not be evaluated).
        worst_dof: Option<usize>,
        /// Relative residual at the last iteration of the last attempt
        /// (dimensionless); NaN when none was computed.
        residual: f64,
        /// The failure of the last attempt. Part of the message, so
        /// deliberately not also a `source()`.
        last: Box<SolverError>,
    },
    /// The mass matrix is singular, so the initial acceleration
    /// M a₀ = −C v₀ − g₀ cannot be solved.
    #[error(
        "the mass matrix is singular{}: every equation needs mass or rotational inertia to start \
         a time integration from the equation of motion; give the DOF inertia, or start from a \
         known initial acceleration",
        match pivot { Some(p) => format!(" near equation {p}"), None => String::new() }
    )]
    SingularMass {
        /// Equation where the singularity showed, if located.
        pivot: Option<usize>,
    },
    /// faer reported a failure that is not a property of the matrix (for
    /// example an allocation failure).
    #[error("sparse linear algebra failure in faer: {0}")]
    Faer(String),
}

impl SolverError {
    /// Whether a smaller load step may cure this failure. Load stepping cuts
    /// back on these and gives up at once on the others.
    /// Time integration cuts its step back on the same errors (and on
    /// `StepNotConverged`, `EvaluationAtTime`).
    pub fn is_recoverable(&self) -> bool {
        matches!(
            self,
            SolverError::Singular { .. }
                | SolverError::Diverged { .. }
                | SolverError::Evaluation { .. }
                | SolverError::NonFinite { .. }
                | SolverError::StepNotConverged { .. }
                | SolverError::EvaluationAtTime { .. }
        )
    }
}

/// Failure reported by [`NonlinearSystem::evaluate`](crate::NonlinearSystem::evaluate):
/// a state the model cannot evaluate (an inverted element, a NaN, a value
/// outside a table).
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[error("{message}")]
pub struct EvalError {
    /// What went wrong, in words a line engineer can act on (element id, value).
    pub message: String,
}

impl EvalError {
    /// An evaluation error with this message.
    pub fn new(message: impl Into<String>) -> Self {
        Self { message: message.into() }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn step_too_small_names_the_last_failure() {
        let e = SolverError::StepTooSmall {
            lambda: 0.5,
            step: 1e-5,
            last: Box::new(SolverError::Singular { pivot: Some(7) }),
        };
        let s = e.to_string();
        assert!(s.contains("near equation 7") && s.contains("λ = 0.5"), "{s}");
    }

    #[test]
    fn messages_name_the_data() {
        let e = SolverError::Diverged { lambda: 0.25, iterations: 25, residual: 1.5e-3, worst_dof: 42 };
        let s = e.to_string();
        assert!(s.contains("λ = 0.25") && s.contains("25") && s.contains("equation 42"));
        let e = SolverError::NonFinite { lambda: f64::NAN, dof: 3 };
        assert!(!e.to_string().contains("NaN,"));
    }
}
