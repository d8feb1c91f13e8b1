//! The step-by-step integrator: Newton on the displacement increment of each
//! step, one sparse factor for the run, cut-back and regrowth of the step.
//! The equations are in the [module notes](super).

use super::SecondOrderSystem;
use crate::newton::norm_inf;
use crate::{
    AlphaParameters, CompressedMatrix, FactorStats, LinearSolver, NewtonSettings, Scheme, SolverBackend,
    SolverError, SparsityPattern,
};
use std::time::Instant;

/// A final step up to this fraction longer than the current step is taken
/// as one step (no sliver step at `t_end`).
const SNAP_FRACTION: f64 = 1e-6;
/// A gap to `t_end` below this fraction of the step is absorbed (time set to
/// `t_end` without a step).
const ABSORB_FRACTION: f64 = 1e-9;
/// Modified Newton keeps a factor of S for step sizes within this relative
/// difference (S changes by about twice as much): a final step stretched or
/// shortened by round-off to land on `t_end` does not refactor.
const SAME_STEP_FRACTION: f64 = 1e-9;

/// First guess of the increment Δq of a step.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Predictor {
    /// Δq = 0 (constant displacement). Robust: the first trial is the
    /// committed, admissible configuration, and unresolved stiff modes
    /// (axial cable modes with Ω = ωh ≫ 1) do not spoil it. The default.
    #[default]
    ConstantDisplacement,
    /// Δq = h v_n (constant velocity).
    ConstantVelocity,
    /// Δq = h v_n + ½ h² a_n (a_{n+1} = a_n): closest for smooth, resolved
    /// motion, but h² a_n is large in unresolved stiff modes.
    ConstantAcceleration,
}

/// Settings of an [`Integrator`].
#[derive(Debug, Clone, PartialEq)]
pub struct IntegratorSettings {
    /// The scheme and its parameters.
    pub scheme: Scheme,
    /// Initial step size h, s; > 0.
    pub dt: f64,
    /// Smallest step size a cut-back may try, s; in (0, dt]. Default
    /// (`new`) dt/1024, ten halvings.
    pub min_dt: f64,
    /// Largest step size regrowth may reach, s; ≥ dt. Default (`new`) dt.
    pub max_dt: f64,
    /// Newton tolerances and iteration limit of each step (see the module
    /// notes for the force scale); `max_step_length` caps each correction.
    pub newton: NewtonSettings,
    /// Modified Newton: keep the last factor of S while every iteration
    /// reduces ‖R‖₂ to at most `reuse_ratio` times its previous value (and
    /// the step size is unchanged, also across steps); refactor otherwise.
    /// Default false (full Newton: refactor every iteration).
    pub modified_newton: bool,
    /// Residual reduction ratio per iteration that keeps the factor in
    /// modified Newton, in (0, 1) (dimensionless). Default 0.25.
    pub reuse_ratio: f64,
    /// First guess of each step's increment. Default
    /// [`Predictor::ConstantDisplacement`].
    pub predictor: Predictor,
    /// Linear solver of the iteration matrix. Default
    /// [`SolverBackend::SparseDirect`].
    pub linear_solver: SolverBackend,
}

impl IntegratorSettings {
    /// A step converging at the first try within this many Newton iterations
    /// is "easy".
    pub const EASY_ITERATIONS: usize = 6;
    /// After this many easy steps in a row the step size doubles (up to `max_dt`).
    pub const EASY_STEPS: usize = 4;

    /// Settings with step `dt` (s): min_dt = dt/1024, max_dt = dt, default
    /// Newton settings, full Newton, reuse_ratio 0.25, constant-displacement
    /// predictor, faer's sparse direct solver.
    pub fn new(scheme: Scheme, dt: f64) -> Self {
        Self {
            scheme,
            dt,
            min_dt: dt / 1024.0,
            max_dt: dt,
            newton: NewtonSettings::default(),
            modified_newton: false,
            reuse_ratio: 0.25,
            predictor: Predictor::default(),
            linear_solver: SolverBackend::default(),
        }
    }

    /// Checks every range and returns the scheme's parameters.
    ///
    /// # Errors
    /// [`SolverError::InvalidSettings`] naming the first bad field (`alpha`,
    /// `rho_inf`, `beta`, `gamma`, `dt`, `min_dt`, `max_dt`, `reuse_ratio`,
    /// or a Newton tolerance).
    pub fn validate(&self) -> Result<AlphaParameters, SolverError> {
        let bad = |name, value, expected| Err(SolverError::InvalidSettings { name, value, expected });
        let p = self.scheme.parameters()?;
        self.newton.validate()?;
        if !(self.dt > 0.0 && self.dt.is_finite()) {
            return bad("dt", self.dt, "a finite time step > 0 (s)");
        }
        if !(self.min_dt > 0.0 && self.min_dt <= self.dt) {
            return bad("min_dt", self.min_dt, "a time step in (0, dt] (s)");
        }
        if !(self.max_dt >= self.dt && self.max_dt.is_finite()) {
            return bad("max_dt", self.max_dt, "a finite time step >= dt (s)");
        }
        if !(self.reuse_ratio > 0.0 && self.reuse_ratio < 1.0) {
            return bad("reuse_ratio", self.reuse_ratio, "a ratio in (0, 1)");
        }
        Ok(p)
    }
}

/// Outcome of one accepted step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StepReport {
    /// Time reached t_{n+1}, s.
    pub t: f64,
    /// Size of the step taken, s.
    pub dt: f64,
    /// Newton corrections in the accepted attempt (0: the predictor was in
    /// balance).
    pub iterations: usize,
    /// Numeric factorisations of S in the accepted attempt.
    pub factorisations: usize,
    /// Attempts rejected (cut back) before this one.
    pub rejected: usize,
    /// Final relative residual ‖R‖₂ / F (dimensionless).
    pub residual: f64,
}

/// Work counters of an [`Integrator`] since construction.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct IntegrationStats {
    /// Accepted steps.
    pub steps: usize,
    /// Rejected attempts (each followed by halving the step).
    pub rejected_steps: usize,
    /// Newton corrections, rejected attempts included.
    pub newton_iterations: usize,
    /// Calls to [`SecondOrderSystem::evaluate`], the one at t₀ included.
    pub evaluations: usize,
    /// Successful numeric factorisations (Cholesky + LU), the mass matrix
    /// for a₀ included.
    pub factorisations: usize,
    /// Linear solves with a factor, the one for a₀ included.
    pub solves: usize,
    /// The sparse solver's own counters (symbolic analyses: at most one LLᵀ
    /// and one LU for the whole run).
    pub factor_stats: FactorStats,
}

/// Wall time an [`Integrator`] spent in each part of its steps since it was
/// made (or resumed), s: not part of the results, nor of a checkpoint.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct StepTimings {
    /// In [`SecondOrderSystem::evaluate`] (forces, tangents, loads).
    pub evaluation_s: f64,
    /// In numeric factorisations of the step matrix.
    pub factorisation_s: f64,
    /// In solves with the factor.
    pub solve_s: f64,
}

/// Everything the next step of an [`Integrator`] reads, for a checkpoint:
/// [`Integrator::resume`] from it takes exactly the steps the original
/// would have taken, bit for bit (the held factor of S is rebuilt from its
/// values, so modified Newton makes the same reuse decisions).
#[derive(Debug, Clone, PartialEq)]
pub struct IntegratorState {
    /// Committed time t_n, s.
    pub t: f64,
    /// Current (nominal) step size, s.
    pub dt: f64,
    /// Easy steps in a row (regrowth counter).
    pub easy: usize,
    /// v_n (m/s, rad/s), a_n (m/s², rad/s²), g_n (N, N·m), M a_n and C v_n (N, N·m).
    pub v: Vec<f64>,
    /// a_n.
    pub a: Vec<f64>,
    /// g_n.
    pub g: Vec<f64>,
    /// M a_n.
    pub ma: Vec<f64>,
    /// C v_n.
    pub cv: Vec<f64>,
    /// Step size (s) and values of S on the pattern of the factor held for
    /// modified Newton, if one is held.
    pub factor: Option<(f64, Vec<f64>)>,
    /// Work counters at the snapshot.
    pub stats: IntegrationStats,
}

/// Bookkeeping of one attempt at a step.
#[derive(Debug, Clone, Copy)]
struct Attempt {
    iterations: usize,
    factorisations: usize,
    /// Last relative residual; NaN before the first.
    residual: f64,
    worst: Option<usize>,
}

/// Implicit time integrator of a [`SecondOrderSystem`] (see the module notes).
pub struct Integrator<S: SecondOrderSystem> {
    system: S,
    settings: IntegratorSettings,
    params: AlphaParameters,
    solver: Box<dyn LinearSolver + Send>,
    n: usize,
    /// Committed time t_n, s.
    t: f64,
    /// Current (nominal) step size, s.
    dt: f64,
    /// Easy steps in a row.
    easy: usize,
    // Committed state: v_n, a_n, g_n and the products M a_n, C v_n.
    v: Vec<f64>,
    a: Vec<f64>,
    g: Vec<f64>,
    ma: Vec<f64>,
    cv: Vec<f64>,
    // Trial state of the current attempt.
    dq: Vec<f64>,
    v1: Vec<f64>,
    a1: Vec<f64>,
    g1: Vec<f64>,
    ma1: Vec<f64>,
    cv1: Vec<f64>,
    /// Residual R, then the correction δ.
    r: Vec<f64>,
    delta: Vec<f64>,
    /// α_m M a_n + α_f (C v_n + g_n): the part of R fixed during a step.
    r_old: Vec<f64>,
    k_vals: Vec<f64>,
    d_vals: Vec<f64>,
    s_vals: Vec<f64>,
    /// The constant M and C without their zero entries, for the products.
    mass: CompressedMatrix,
    damping: CompressedMatrix,
    /// Step size of the factor of S held by `solver`, if it holds one.
    factor_h: Option<f64>,
    steps: usize,
    rejected: usize,
    iterations: usize,
    evaluations: usize,
    /// Solver counters of the run before a [`resume`](Self::resume).
    base_factor_stats: FactorStats,
    timings: StepTimings,
}

impl<S: SecondOrderSystem> Integrator<S> {
    /// Start from q₀ (the system's current configuration), v₀ (m/s, rad/s) at
    /// t₀ (s); a₀ from M a₀ = −C v₀ − g(q₀, v₀, t₀), with the run's sparse
    /// factor (M must be non-singular).
    ///
    /// # Errors
    /// [`SolverError::InvalidSettings`] for bad settings or inconsistent sizes
    /// (`v0`, `mass`, `damping`, `pattern` lengths); [`SolverError::NonFinite`]
    /// for non-finite v₀, M, C or g₀; [`SolverError::EvaluationAtTime`] when
    /// the model cannot be evaluated at t₀; [`SolverError::SingularMass`].
    pub fn new(system: S, v0: Vec<f64>, t0: f64, settings: IntegratorSettings) -> Result<Self, SolverError> {
        let mut it = Self::prepare(system, v0, t0, settings)?;
        for i in 0..it.n {
            it.a[i] = -(it.cv[i] + it.g[i]);
        }
        let as_mass = |e: SolverError| match e {
            SolverError::Singular { pivot } => SolverError::SingularMass { pivot },
            other => other,
        };
        it.solver.factor(it.system.mass()).map_err(as_mass)?;
        it.solver.solve_in_place(&mut it.a).map_err(as_mass)?;
        if let Some(dof) = first_non_finite(&it.a) {
            return Err(SolverError::NonFinite { lambda: f64::NAN, dof });
        }
        it.mass.mul_vec(&it.a, &mut it.ma);
        Ok(it)
    }

    /// Start from a known initial acceleration a₀ (m/s², rad/s²) instead of
    /// solving for it: for a singular M (massless DOF) or a restart. g₀ is
    /// still evaluated at (q₀, v₀, t₀).
    ///
    /// # Errors
    /// As [`new`](Self::new), without `SingularMass`; a₀ is checked like v₀.
    pub fn with_initial_acceleration(
        system: S,
        v0: Vec<f64>,
        a0: Vec<f64>,
        t0: f64,
        settings: IntegratorSettings,
    ) -> Result<Self, SolverError> {
        let mut it = Self::prepare(system, v0, t0, settings)?;
        if a0.len() != it.n {
            return Err(SolverError::InvalidSettings {
                name: "a0 length",
                value: a0.len() as f64,
                expected: "one initial acceleration per equation",
            });
        }
        if let Some(dof) = first_non_finite(&a0) {
            return Err(SolverError::NonFinite { lambda: f64::NAN, dof });
        }
        it.a = a0;
        it.mass.mul_vec(&it.a, &mut it.ma);
        Ok(it)
    }

    /// Checks, allocation and g₀, C v₀ (a₀ and M a₀ left to the caller).
    fn prepare(
        mut system: S,
        v0: Vec<f64>,
        t0: f64,
        settings: IntegratorSettings,
    ) -> Result<Self, SolverError> {
        let params = settings.validate()?;
        let bad = |name, value: usize, expected| {
            Err(SolverError::InvalidSettings { name, value: value as f64, expected })
        };
        let n = system.dim();
        let pattern: &SparsityPattern = system.pattern();
        let nnz = pattern.nnz();
        if pattern.dim() != n {
            return bad("pattern dimension", pattern.dim(), "the system dimension");
        }
        if system.mass().len() != nnz {
            return bad("mass length", system.mass().len(), "one value per pattern entry (nnz)");
        }
        if system.damping().len() != nnz {
            return bad("damping length", system.damping().len(), "one value per pattern entry (nnz)");
        }
        if v0.len() != n {
            return bad("v0 length", v0.len(), "one initial velocity per equation");
        }
        if !t0.is_finite() {
            return Err(SolverError::InvalidSettings {
                name: "t0",
                value: t0,
                expected: "a finite time (s)",
            });
        }
        if let Some(dof) = first_non_finite(&v0) {
            return Err(SolverError::NonFinite { lambda: f64::NAN, dof });
        }
        for values in [system.mass(), system.damping()] {
            if let Some(k) = first_non_finite(values) {
                return Err(SolverError::NonFinite { lambda: f64::NAN, dof: pattern.row_idx()[k] });
            }
        }
        let mass = CompressedMatrix::from_pattern(pattern, system.mass());
        let damping = CompressedMatrix::from_pattern(pattern, system.damping());
        let mut cv = vec![0.0; n];
        damping.mul_vec(&v0, &mut cv);
        let zeros = vec![0.0; n];
        let mut g = vec![0.0; n];
        system.set_increment(&zeros);
        system
            .evaluate(t0, &v0, &mut g, None, None)
            .map_err(|e| SolverError::EvaluationAtTime { time: t0, message: e.message })?;
        if let Some(dof) = first_non_finite(&g) {
            return Err(SolverError::NonFinite { lambda: f64::NAN, dof });
        }
        Ok(Self::allocate(system, settings, params, v0, g, cv, mass, damping, t0))
    }

    /// The integrator's buffers around a committed state (no evaluation).
    #[allow(clippy::too_many_arguments)]
    fn allocate(
        system: S,
        settings: IntegratorSettings,
        params: AlphaParameters,
        v0: Vec<f64>,
        g: Vec<f64>,
        cv: Vec<f64>,
        mass: CompressedMatrix,
        damping: CompressedMatrix,
        t0: f64,
    ) -> Self {
        let n = system.dim();
        let nnz = system.pattern().nnz();
        let solver = settings.linear_solver.build(system.pattern());
        let dt = settings.dt;
        Self {
            system,
            settings,
            params,
            solver,
            n,
            t: t0,
            dt,
            easy: 0,
            v: v0,
            a: vec![0.0; n],
            g,
            ma: vec![0.0; n],
            cv,
            dq: vec![0.0; n],
            v1: vec![0.0; n],
            a1: vec![0.0; n],
            g1: vec![0.0; n],
            ma1: vec![0.0; n],
            cv1: vec![0.0; n],
            r: vec![0.0; n],
            delta: vec![0.0; n],
            r_old: vec![0.0; n],
            k_vals: vec![0.0; nnz],
            d_vals: vec![0.0; nnz],
            s_vals: vec![0.0; nnz],
            mass,
            damping,
            factor_h: None,
            steps: 0,
            rejected: 0,
            iterations: 0,
            evaluations: 1,
            base_factor_stats: FactorStats::default(),
            timings: StepTimings::default(),
        }
    }

    /// Continue from a snapshot taken by [`state`](Self::state): `system`
    /// must hold the snapshot's committed configuration and the same M and
    /// C (the caller restores them); nothing is evaluated, and a held factor
    /// of S is refactorised from its stored values, so the steps that
    /// follow are those the original run took, bit for bit.
    ///
    /// # Errors
    /// [`SolverError::InvalidSettings`] for bad settings or a snapshot of
    /// another size; [`SolverError::NonFinite`] for non-finite values; an
    /// error of the factorisation.
    pub fn resume(
        system: S,
        state: IntegratorState,
        settings: IntegratorSettings,
    ) -> Result<Self, SolverError> {
        let params = settings.validate()?;
        let n = system.dim();
        let nnz = system.pattern().nnz();
        if system.mass().len() != nnz || system.damping().len() != nnz {
            return Err(SolverError::InvalidSettings {
                name: "mass or damping length",
                value: system.mass().len() as f64,
                expected: "one value per pattern entry (nnz)",
            });
        }
        let lengths = [state.v.len(), state.a.len(), state.g.len(), state.ma.len(), state.cv.len()];
        let factor_len = state.factor.as_ref().map_or(nnz, |(_, s)| s.len());
        if lengths.iter().any(|&l| l != n)
            || factor_len != nnz
            || !state.t.is_finite()
            || state.dt.is_nan()
            || state.dt <= 0.0
        {
            return Err(SolverError::InvalidSettings {
                name: "checkpoint state",
                value: n as f64,
                expected: "vectors of the system's dimension, S on its pattern, a finite time and step",
            });
        }
        for v in [&state.v, &state.a, &state.g, &state.ma, &state.cv] {
            if let Some(dof) = first_non_finite(v) {
                return Err(SolverError::NonFinite { lambda: f64::NAN, dof });
            }
        }
        let mass = CompressedMatrix::from_pattern(system.pattern(), system.mass());
        let damping = CompressedMatrix::from_pattern(system.pattern(), system.damping());
        let IntegratorState { t, dt, easy, v, a, g, ma, cv, factor, stats } = state;
        let mut it = Self::allocate(system, settings, params, v, g, cv, mass, damping, t);
        it.dt = dt;
        it.easy = easy;
        it.a = a;
        it.ma = ma;
        it.steps = stats.steps;
        it.rejected = stats.rejected_steps;
        it.iterations = stats.newton_iterations;
        it.evaluations = stats.evaluations;
        if let Some((h, values)) = factor {
            it.solver.factor(&values)?;
            it.s_vals = values;
            it.factor_h = Some(h);
        }
        // The refactorisation above is the original's factor again: not counted.
        let mut base = stats.factor_stats;
        let now = it.solver.stats();
        base.symbolic = base.symbolic.saturating_sub(now.symbolic);
        base.symbolic_cholesky = base.symbolic_cholesky.saturating_sub(now.symbolic_cholesky);
        base.symbolic_lu = base.symbolic_lu.saturating_sub(now.symbolic_lu);
        base.numeric_cholesky = base.numeric_cholesky.saturating_sub(now.numeric_cholesky);
        base.numeric_lu = base.numeric_lu.saturating_sub(now.numeric_lu);
        base.cholesky_failures = base.cholesky_failures.saturating_sub(now.cholesky_failures);
        it.base_factor_stats = base;
        Ok(it)
    }

    /// A snapshot of everything the next step reads (see [`IntegratorState`]).
    pub fn state(&self) -> IntegratorState {
        IntegratorState {
            t: self.t,
            dt: self.dt,
            easy: self.easy,
            v: self.v.clone(),
            a: self.a.clone(),
            g: self.g.clone(),
            ma: self.ma.clone(),
            cv: self.cv.clone(),
            factor: self.factor_h.map(|h| (h, self.s_vals.clone())),
            stats: self.stats(),
        }
    }

    /// One step of the current step size (cut back by halves on failure down
    /// to `min_dt`, regrown by ×2 after [`IntegratorSettings::EASY_STEPS`]
    /// easy steps, up to `max_dt`).
    ///
    /// # Errors
    /// [`SolverError::StepFailed`] (carrying the last failure) when the step
    /// cannot be cut back further; the state stays at the last converged
    /// step. [`SolverError::InvalidSettings`] and [`SolverError::Faer`] at
    /// once, without cut-back.
    pub fn step(&mut self) -> Result<StepReport, SolverError> {
        self.step_towards(None)
    }

    /// Advance exactly to `t_end` (s): the last step is shortened to land on
    /// it (a final step up to 1e-6 of a step longer is stretched instead; a
    /// gap below 1e-9 of a step is absorbed without a step). `on_step` is
    /// called after every accepted step. `t_end` equal to the current time
    /// does nothing.
    ///
    /// # Errors
    /// As [`step`](Self::step); [`SolverError::InvalidSettings`] for a
    /// `t_end` that is not finite or lies before the current time.
    pub fn advance_to(
        &mut self,
        t_end: f64,
        mut on_step: impl FnMut(&Self, &StepReport),
    ) -> Result<(), SolverError> {
        if !(t_end.is_finite() && t_end >= self.t) {
            return Err(SolverError::InvalidSettings {
                name: "t_end",
                value: t_end,
                expected: "a finite time not before the current time (s)",
            });
        }
        while let Some(report) = self.step_until(t_end)? {
            on_step(self, &report);
        }
        Ok(())
    }

    /// One step of [`advance_to`](Self::advance_to)`(t_end)`: `None` once
    /// `t_end` is reached (a gap below 1e-9 of a step is absorbed then), so
    /// a caller can stop or save between any two steps of an interval.
    ///
    /// # Errors
    /// As [`advance_to`](Self::advance_to).
    pub fn step_until(&mut self, t_end: f64) -> Result<Option<StepReport>, SolverError> {
        if !(t_end.is_finite() && t_end >= self.t) {
            return Err(SolverError::InvalidSettings {
                name: "t_end",
                value: t_end,
                expected: "a finite time not before the current time (s)",
            });
        }
        if self.t >= t_end {
            return Ok(None);
        }
        if t_end - self.t <= ABSORB_FRACTION * self.dt {
            self.t = t_end;
            return Ok(None);
        }
        self.step_towards(Some(t_end)).map(Some)
    }

    /// Committed time t_n, s.
    pub fn time(&self) -> f64 {
        self.t
    }

    /// Current step size, s (after cut-backs and regrowth).
    pub fn dt(&self) -> f64 {
        self.dt
    }

    /// Committed velocity v_n, m/s and rad/s.
    pub fn velocity(&self) -> &[f64] {
        &self.v
    }

    /// Committed algorithmic acceleration a_n, m/s² and rad/s². For HHT-α and
    /// Newmark it satisfies the equation of motion at t_n; for generalised-α
    /// it is the scheme's acceleration variable, which need not.
    pub fn acceleration(&self) -> &[f64] {
        &self.a
    }

    /// g_n = f_int − f_ext at the committed state (as last evaluated), N and N·m.
    pub fn force(&self) -> &[f64] {
        &self.g
    }

    /// The system.
    pub fn system(&self) -> &S {
        &self.system
    }

    /// The system, mutably (for output between steps). Changing its
    /// committed configuration, M or C between steps makes the stored g_n,
    /// M a_n, C v_n stale: do not.
    pub fn system_mut(&mut self) -> &mut S {
        &mut self.system
    }

    /// Give the system back.
    pub fn into_system(self) -> S {
        self.system
    }

    /// The settings in use.
    pub fn settings(&self) -> &IntegratorSettings {
        &self.settings
    }

    /// The unified-form parameters of the scheme.
    pub fn parameters(&self) -> AlphaParameters {
        self.params
    }

    /// Wall time spent in evaluation, factorisation and solves (see [`StepTimings`]).
    pub fn timings(&self) -> StepTimings {
        self.timings
    }

    /// Work counters since construction.
    pub fn stats(&self) -> IntegrationStats {
        let (b, s) = (self.base_factor_stats, self.solver.stats());
        let fs = FactorStats {
            symbolic: b.symbolic + s.symbolic,
            symbolic_cholesky: b.symbolic_cholesky + s.symbolic_cholesky,
            symbolic_lu: b.symbolic_lu + s.symbolic_lu,
            numeric_cholesky: b.numeric_cholesky + s.numeric_cholesky,
            numeric_lu: b.numeric_lu + s.numeric_lu,
            solves: b.solves + s.solves,
            cholesky_failures: b.cholesky_failures + s.cholesky_failures,
        };
        IntegrationStats {
            steps: self.steps,
            rejected_steps: self.rejected,
            newton_iterations: self.iterations,
            evaluations: self.evaluations,
            factorisations: fs.numeric_cholesky + fs.numeric_lu,
            solves: fs.solves,
            factor_stats: fs,
        }
    }

    /// One accepted step, towards `t_end` if given.
    fn step_towards(&mut self, t_end: Option<f64>) -> Result<StepReport, SolverError> {
        let t0 = self.t;
        // The landing time of a final step, exactly t_end.
        let mut landing = t_end.filter(|&te| te - t0 <= self.dt * (1.0 + SNAP_FRACTION));
        let mut h = match landing {
            Some(te) => te - t0,
            None => self.dt,
        };
        let mut rejected = 0;
        loop {
            let t1 = landing.unwrap_or(t0 + h);
            let mut info = Attempt { iterations: 0, factorisations: 0, residual: f64::NAN, worst: None };
            let result = self.attempt(h, t1, &mut info);
            self.iterations += info.iterations;
            match result {
                Ok(()) => {
                    self.system.commit();
                    self.commit_state();
                    self.t = t1;
                    self.steps += 1;
                    self.control_step(h, rejected, info.iterations);
                    tracing::debug!(t = t1, dt = h, iterations = info.iterations, "time step converged");
                    return Ok(StepReport {
                        t: t1,
                        dt: h,
                        iterations: info.iterations,
                        factorisations: info.factorisations,
                        rejected,
                        residual: info.residual,
                    });
                }
                Err(e) => {
                    self.system.reject();
                    if !e.is_recoverable() {
                        return Err(e);
                    }
                    rejected += 1;
                    self.rejected += 1;
                    let next = 0.5 * h;
                    if next < self.settings.min_dt {
                        return Err(SolverError::StepFailed {
                            time: t0,
                            dt: h,
                            worst_dof: info.worst,
                            residual: info.residual,
                            last: Box::new(e),
                        });
                    }
                    tracing::warn!(t = t0, dt = h, next_dt = next, error = %e, "time step failed, cutting back");
                    h = next;
                    landing = None;
                }
            }
        }
    }

    /// Cut-back memory and regrowth after an accepted step of size `h`.
    fn control_step(&mut self, h: f64, rejected: usize, iterations: usize) {
        if rejected > 0 {
            self.dt = self.dt.min(h);
            self.easy = 0;
        } else if iterations <= IntegratorSettings::EASY_ITERATIONS {
            self.easy += 1;
            if self.easy >= IntegratorSettings::EASY_STEPS && self.dt < self.settings.max_dt {
                self.dt = (2.0 * self.dt).min(self.settings.max_dt);
                self.easy = 0;
                tracing::debug!(dt = self.dt, "time step regrown");
            }
        } else {
            self.easy = 0;
        }
    }

    /// The converged trial becomes the committed state.
    fn commit_state(&mut self) {
        std::mem::swap(&mut self.v, &mut self.v1);
        std::mem::swap(&mut self.a, &mut self.a1);
        std::mem::swap(&mut self.g, &mut self.g1);
        std::mem::swap(&mut self.ma, &mut self.ma1);
        std::mem::swap(&mut self.cv, &mut self.cv1);
    }

    /// Newton iterations of one attempt at a step of size `h` to `t1`.
    fn attempt(&mut self, h: f64, t1: f64, info: &mut Attempt) -> Result<(), SolverError> {
        let AlphaParameters { alpha_m: am, alpha_f: af, beta, gamma } = self.params;
        let newton = &self.settings.newton;
        let (tol_r, tol_x, max_iterations, cap) = (
            newton.residual_tolerance,
            newton.increment_tolerance,
            newton.max_iterations,
            newton.max_step_length,
        );
        let modified = self.settings.modified_newton;
        let reuse_ratio = self.settings.reuse_ratio;
        let n = self.n;
        let ca = 1.0 / (beta * h * h);
        if !ca.is_finite() {
            return Err(SolverError::NonFinite { lambda: f64::NAN, dof: 0 });
        }
        for i in 0..n {
            self.r_old[i] = am * self.ma[i] + af * (self.cv[i] + self.g[i]);
        }
        let sys_scale = self.system.force_scale();
        if !(sys_scale >= 0.0 && sys_scale.is_finite()) {
            return Err(SolverError::InvalidSettings {
                name: "force_scale",
                value: sys_scale,
                expected: "a finite force >= 0 (N) from SecondOrderSystem::force_scale",
            });
        }
        let scale_old =
            am.abs() * norm2(&self.ma) + af.abs() * (norm2(&self.cv) + norm2(&self.g)) + sys_scale;
        match self.settings.predictor {
            Predictor::ConstantDisplacement => self.dq.fill(0.0),
            Predictor::ConstantVelocity => {
                for i in 0..n {
                    self.dq[i] = h * self.v[i];
                }
            }
            Predictor::ConstantAcceleration => {
                for i in 0..n {
                    self.dq[i] = h * self.v[i] + 0.5 * h * h * self.a[i];
                }
            }
        }
        let mut previous_norm: Option<f64> = None;
        let mut last_increment = 0.0;
        let mut last_was_full = false;
        let mut iter = 0;
        loop {
            for i in 0..n {
                self.a1[i] = ca * (self.dq[i] - h * self.v[i] - h * h * (0.5 - beta) * self.a[i]);
                self.v1[i] = self.v[i] + h * ((1.0 - gamma) * self.a[i] + gamma * self.a1[i]);
            }
            if let Some(dof) = first_non_finite(&self.a1).or_else(|| first_non_finite(&self.v1)) {
                return Err(SolverError::NonFinite { lambda: f64::NAN, dof });
            }
            self.system.set_increment(&self.dq);
            let factor_held =
                modified && self.factor_h.is_some_and(|hf| (hf - h).abs() <= SAME_STEP_FRACTION * h);
            let mut have_tangent = !factor_held;
            self.evaluate(t1, have_tangent)?;
            self.mass.mul_vec(&self.a1, &mut self.ma1);
            self.damping.mul_vec(&self.v1, &mut self.cv1);
            self.assemble_residual(am, af)?;
            let r_norm = norm2(&self.r);
            let scale = (1.0 - am).abs() * norm2(&self.ma1)
                + (1.0 - af).abs() * (norm2(&self.cv1) + norm2(&self.g1))
                + scale_old;
            let rel = if scale > 0.0 {
                r_norm / scale
            } else if r_norm == 0.0 {
                0.0
            } else {
                f64::INFINITY
            };
            let worst = arg_max_abs(&self.r);
            info.residual = rel;
            info.worst = Some(worst);
            tracing::trace!(
                t = t1,
                iter,
                relative_residual = rel,
                increment = last_increment,
                "Newton (dynamics)"
            );
            let residual_ok = r_norm <= tol_r * scale;
            let increment_ok = last_was_full && last_increment <= tol_x * norm_inf(&self.dq).max(1.0);
            if residual_ok || increment_ok {
                return Ok(());
            }
            if iter >= max_iterations {
                return Err(SolverError::StepNotConverged {
                    time: self.t,
                    dt: h,
                    iterations: iter,
                    residual: rel,
                    worst_dof: worst,
                });
            }
            let reuse = factor_held && previous_norm.is_none_or(|p| r_norm <= reuse_ratio * p);
            if !reuse {
                if !have_tangent {
                    // Same state again, now with the tangents.
                    self.evaluate(t1, true)?;
                    have_tangent = true;
                    self.assemble_residual(am, af)?;
                }
                debug_assert!(have_tangent);
                let (cm, cc, ck) = ((1.0 - am) * ca, (1.0 - af) * gamma / (beta * h), 1.0 - af);
                let (m, c) = (self.system.mass(), self.system.damping());
                for k in 0..self.s_vals.len() {
                    self.s_vals[k] = cm * m[k] + cc * (c[k] + self.d_vals[k]) + ck * self.k_vals[k];
                }
                self.factor_h = None;
                let clock = Instant::now();
                self.solver.factor(&self.s_vals)?;
                self.timings.factorisation_s += clock.elapsed().as_secs_f64();
                self.factor_h = Some(h);
                info.factorisations += 1;
            }
            for i in 0..n {
                self.delta[i] = -self.r[i];
            }
            let clock = Instant::now();
            let solved = self.solver.solve_in_place(&mut self.delta);
            self.timings.solve_s += clock.elapsed().as_secs_f64();
            if let Err(e) = solved {
                self.factor_h = None; // a factor that fails its solve checks is not reused
                return Err(e);
            }
            let mut len = norm_inf(&self.delta);
            if !len.is_finite() {
                return Err(SolverError::NonFinite { lambda: f64::NAN, dof: arg_max_abs(&self.delta) });
            }
            last_was_full = true;
            if let Some(cap) = cap {
                if len > cap {
                    let f = cap / len;
                    self.delta.iter_mut().for_each(|d| *d *= f);
                    len = cap;
                    last_was_full = false;
                }
            }
            for i in 0..n {
                self.dq[i] += self.delta[i];
            }
            last_increment = len;
            previous_norm = Some(r_norm);
            iter += 1;
            info.iterations = iter;
        }
    }

    /// R = (1 − α_m) M a₁ + (1 − α_f)(C v₁ + g₁) + [α_m M a_n + α_f (C v_n + g_n)].
    fn assemble_residual(&mut self, am: f64, af: f64) -> Result<(), SolverError> {
        for i in 0..self.n {
            self.r[i] = (1.0 - am) * self.ma1[i] + (1.0 - af) * (self.cv1[i] + self.g1[i]) + self.r_old[i];
        }
        match first_non_finite(&self.r) {
            Some(dof) => Err(SolverError::NonFinite { lambda: f64::NAN, dof }),
            None => Ok(()),
        }
    }

    /// g₁ (and K, D if `tangents`) at the trial state, checked finite.
    fn evaluate(&mut self, t1: f64, tangents: bool) -> Result<(), SolverError> {
        self.evaluations += 1;
        self.g1.fill(0.0);
        let clock = Instant::now();
        let result = if tangents {
            self.k_vals.fill(0.0);
            self.d_vals.fill(0.0);
            self.system.evaluate(t1, &self.v1, &mut self.g1, Some(&mut self.k_vals), Some(&mut self.d_vals))
        } else {
            self.system.evaluate(t1, &self.v1, &mut self.g1, None, None)
        };
        self.timings.evaluation_s += clock.elapsed().as_secs_f64();
        result.map_err(|e| SolverError::EvaluationAtTime { time: t1, message: e.message })?;
        if let Some(dof) = first_non_finite(&self.g1) {
            return Err(SolverError::NonFinite { lambda: f64::NAN, dof });
        }
        if tangents {
            let k = first_non_finite(&self.k_vals).or_else(|| first_non_finite(&self.d_vals));
            if let Some(k) = k {
                return Err(SolverError::NonFinite {
                    lambda: f64::NAN,
                    dof: self.system.pattern().row_idx()[k],
                });
            }
        }
        Ok(())
    }
}

fn first_non_finite(v: &[f64]) -> Option<usize> {
    v.iter().position(|x| !x.is_finite())
}

/// ‖v‖₂: one pass, then a scaled second one only when the plain sum of
/// squares over- or underflows.
fn norm2(v: &[f64]) -> f64 {
    let s: f64 = v.iter().map(|x| x * x).sum();
    if s.is_finite() && s > 1e-280 {
        return s.sqrt();
    }
    let m = norm_inf(v);
    if m == 0.0 || !m.is_finite() {
        return m;
    }
    m * v.iter().map(|x| (x / m) * (x / m)).sum::<f64>().sqrt()
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
