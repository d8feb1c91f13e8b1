//! The dynamic stage: static state (with or without the mean wind), modes
//! for the damping fit and the perturbation, then the nonlinear time
//! integration with histories streamed to the results file.

use super::dynamic_system::{gather_into, node_velocity, DynamicSystem};
use super::modal::{self, Linearisation, ModalSettings};
use super::rayleigh::Rayleigh;
use super::static_stage::run_static;
use super::static_system::Configuration;
use crate::error::{GlazeError, InputErrorKind};
use crate::input::Locator;
use crate::model::{self, Model, DOF_PER_NODE};
use crate::registry::ElementRegistry;
use crate::results::{Checkpoint, EnergyState, HistoryWriter, Record, ResultsWriter};
use crate::spec::{
    DampingSpec, DynamicsSpec, Perturbation, PerturbationSize, PerturbationStart, SchemeSpec, SectionSpec,
    MAX_PERTURBATION_TWIST,
};
use glaze_elements::{ElementContext, NodeState};
use glaze_solvers::{Integrator, IntegratorSettings, NewtonSettings, Scheme, SecondOrderSystem};
use rayon::prelude::*;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Instant;

/// Progress of a run, reported after every output interval.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Progress {
    /// Simulated time reached, in s.
    pub time: f64,
    /// Simulated time to reach, in s.
    pub duration: f64,
    /// Steps taken.
    pub steps: usize,
    /// Newton iterations so far.
    pub iterations: usize,
}

/// How a run ended.
#[derive(Clone, Debug, PartialEq)]
pub struct DynamicSummary {
    /// Simulated time reached, in s.
    pub time: f64,
    /// Whether the run was stopped before its end.
    pub interrupted: bool,
    /// Records written.
    pub records: usize,
    /// Steps, rejected steps, Newton iterations, factorisations.
    pub steps: usize,
    /// Rejected (cut-back) steps.
    pub rejected_steps: usize,
    /// Newton iterations.
    pub iterations: usize,
    /// Numeric factorisations.
    pub factorisations: usize,
    /// Rayleigh coefficients used (a0 in 1/s, a1 in s).
    pub rayleigh: (f64, f64),
    /// Largest |energy balance residual| / largest energy term over the run.
    pub energy_balance_error: f64,
    /// Frequency (Hz) and Rayleigh damping ratio of each mode computed for
    /// the fit, as a check of the fit.
    pub modal_damping: Vec<(f64, f64)>,
    /// Wall time of the run before this process resumed it, s (0 for a fresh run).
    pub prior_wall_time_s: f64,
    /// Where this process's stepping spent its wall time.
    pub timings: RunTimings,
}

/// Wall time of the time stepping by part, s (of this process when resumed).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct RunTimings {
    /// Element forces and tangents, with their assembly.
    pub elements_s: f64,
    /// Aerodynamic loads and Jacobians, with their assembly.
    pub aerodynamics_s: f64,
    /// Numeric factorisations of the step matrix.
    pub factorisation_s: f64,
    /// Solves with the factor.
    pub solve_s: f64,
    /// Records, HDF5 output and checkpoints.
    pub output_s: f64,
    /// The whole stepping loop (the rest is the integrator's own vector work).
    pub stepping_s: f64,
    /// Numeric factorisations and solves counted, for per-call times.
    pub factorisations: usize,
    /// Solves with the factor.
    pub solves: usize,
}

/// Stopping, checkpoints and resume of a run.
pub struct RunControl<'a> {
    /// Polled between output intervals: a set flag stops the run there.
    pub stop: &'a AtomicBool,
    /// Write checkpoints (`TARGET.checkpoint`) as `[dynamics.checkpoint]`
    /// says, and one when stopped.
    pub checkpoints: bool,
    /// Continue from this checkpoint; the writer must be reopened
    /// ([`ResultsWriter::reopen`]).
    pub resume: Option<Checkpoint>,
}

/// Runs the dynamic stage of `spec`, writing `/model`, `/static` and
/// `/dynamic` into `writer`. `stop` is polled between output intervals.
/// No checkpoints (see [`run_dynamic_with`]).
pub fn run_dynamic(
    spec: &SectionSpec,
    registry: &ElementRegistry,
    writer: &ResultsWriter,
    stop: &AtomicBool,
    progress: &mut dyn FnMut(Progress),
) -> Result<DynamicSummary, GlazeError> {
    let mut control = RunControl { stop, checkpoints: false, resume: None };
    run_dynamic_with(spec, registry, writer, &mut control, progress)
}

/// [`run_dynamic`] with checkpoints and resume. A run that diverges keeps
/// its finite records and the last converged state (`/divergence`) in the
/// writer's file and returns [`GlazeError::Diverged`]: the caller keeps
/// the file incomplete ([`ResultsWriter::keep_incomplete`]).
pub fn run_dynamic_with(
    spec: &SectionSpec,
    registry: &ElementRegistry,
    writer: &ResultsWriter,
    control: &mut RunControl<'_>,
    progress: &mut dyn FnMut(Progress),
) -> Result<DynamicSummary, GlazeError> {
    let loc = Locator::new(&spec.file, &spec.source);
    let dynamics = spec.dynamics.as_ref().ok_or_else(|| {
        loc.error(
            InputErrorKind::MissingKey,
            "dynamics",
            "a run needs a [dynamics] table: duration, time_step, output_interval, …",
        )
    })?;
    let model = model::build(spec, registry)?;
    // With a wind ramp the run starts from the state without wind.
    let static_spec = if dynamics.wind_ramp > 0.0 {
        let mut s = spec.clone();
        s.load_case.wind = None;
        s
    } else {
        spec.clone()
    };
    let static_model = model::build(&static_spec, registry)?;
    let state = run_static(&static_spec, &static_model)?;
    writer.write_model(&model)?;
    writer.write_static(&static_model, &state, &spec.load_case.name)?;

    // Modes: for the Rayleigh fit and the perturbation.
    let needed = match dynamics.damping {
        DampingSpec::Fit { modes, .. } => modes[1],
        DampingSpec::Coefficients(..) => 0,
    }
    .max(dynamics.perturbation.map_or(0, |p| p.mode));
    let modes = if needed > 0 {
        let lin = Linearisation::about(&static_model, &state.config)?;
        if needed > lin.mode_capacity() {
            return Err(loc
                .error(
                    InputErrorKind::InvalidValue,
                    "dynamics",
                    format!(
                        "mode {needed} is asked for, but the model has only {} modes",
                        lin.mode_capacity()
                    ),
                )
                .into());
        }
        let set = lin.solve(&ModalSettings::new(needed))?;
        // The modes about the start state go into the file, for the
        // projection of the motion on them (`glaze post`).
        let frames = modal::node_frames(&static_model, &state.config);
        writer.write_modes(&static_model, &modal::describe(&static_model, &lin, &set, &frames))?;
        Some((set, lin))
    } else {
        None
    };
    let rayleigh = match (dynamics.damping, &modes) {
        (DampingSpec::Fit { modes: m, ratios }, Some((set, _))) => {
            let omega = [set.omega_squared[m[0] - 1].sqrt(), set.omega_squared[m[1] - 1].sqrt()];
            Rayleigh::fit(omega, ratios)
                .map_err(|e| loc.error(InputErrorKind::InvalidValue, "dynamics.damping", e))?
        }
        (DampingSpec::Coefficients(a0, a1), _) => Rayleigh { mass: a0, stiffness: a1 },
        _ => Rayleigh { mass: 0.0, stiffness: 0.0 },
    };

    let mut system =
        DynamicSystem::new(&model, &state.config, rayleigh.mass, rayleigh.stiffness, dynamics.wind_ramp)
            .map_err(|e| GlazeError::Analysis { message: format!("dynamic system: {}", e.message) })?;
    let mut v0 = vec![0.0; model.dofs.len()];
    if let (Some(perturbation), Some((set, lin))) = (dynamics.perturbation, &modes) {
        let k = perturbation.mode - 1;
        let dq = perturbation_increment(&set.vectors[k], &lin.equations, perturbation)?;
        match perturbation.start {
            PerturbationStart::Displacement => {
                system.set_increment(&dq);
                system.commit();
            }
            PerturbationStart::Velocity => {
                let omega = set.omega_squared[k].max(0.0).sqrt();
                v0 = dq.iter().map(|x| omega * x).collect();
            }
        }
    }
    let modal_damping = modes.as_ref().map_or(Vec::new(), |(set, _)| {
        set.omega_squared
            .iter()
            .map(|w2| {
                let w = w2.max(0.0).sqrt();
                (w / (2.0 * std::f64::consts::PI), rayleigh.ratio(w))
            })
            .collect()
    });
    let mut summary =
        integrate(spec, dynamics, &model, &state.config, system, v0, writer, control, progress, rayleigh)?;
    summary.modal_damping = modal_damping;
    Ok(summary)
}

/// The start increment along mode shape `phi` (over the free equations;
/// `equations[node·6 + d]` maps a nodal DOF to its equation), scaled so
/// that its largest translation (or rotation, for `Twist`) is the given
/// size. A translation size that would twist a node by more than
/// [`MAX_PERTURBATION_TWIST`] is refused: the mode is (nearly) torsional
/// and its linear shape scaled to metres would wind the conductor up.
fn perturbation_increment(
    phi: &[f64],
    equations: &[Option<usize>],
    perturbation: Perturbation,
) -> Result<Vec<f64>, GlazeError> {
    let peak = |rotational: bool| {
        equations
            .iter()
            .enumerate()
            .filter(|(i, _)| (i % DOF_PER_NODE >= 3) == rotational)
            .filter_map(|(_, eq)| eq.map(|q| phi[q].abs()))
            .fold(0.0, f64::max)
    };
    let (translation, rotation) = (peak(false), peak(true));
    let scale = match perturbation.size {
        PerturbationSize::Translation(a) => {
            let scale = a / translation.max(f64::MIN_POSITIVE);
            if (scale * rotation).abs() > MAX_PERTURBATION_TWIST || translation == 0.0 {
                return Err(GlazeError::Analysis {
                    message: format!(
                        "dynamics.perturbation: mode {} moves its nodes mostly in twist (largest rotation {:.3e} rad per \
                         {:.3e} m of translation in the mode shape); an amplitude of {a} m would twist it by {:.3} rad. \
                         Give `twist` (largest rotation, rad) for a torsional mode, or choose a mode with translation \
                         (`glaze modes` lists them)",
                        perturbation.mode,
                        rotation,
                        translation,
                        (scale * rotation).abs(),
                    ),
                });
            }
            scale
        }
        PerturbationSize::Twist(t) => t / rotation.max(f64::MIN_POSITIVE),
    };
    Ok(phi.iter().map(|x| x * scale).collect())
}

fn settings(d: &DynamicsSpec) -> IntegratorSettings {
    let scheme = match d.scheme {
        SchemeSpec::Hht(alpha) => Scheme::Hht { alpha },
        SchemeSpec::GeneralizedAlpha(rho_inf) => Scheme::GeneralizedAlpha { rho_inf },
    };
    let mut s = IntegratorSettings::new(scheme, d.time_step);
    s.newton = NewtonSettings { max_iterations: 20, residual_tolerance: 1e-8, ..NewtonSettings::default() };
    s.modified_newton = d.modified_newton;
    s.linear_solver = d.linear_solver;
    s.predictor = glaze_solvers::Predictor::ConstantAcceleration;
    s
}

/// Energy bookkeeping between steps (trapezoidal rule).
struct Energy {
    initial_strain: Option<f64>,
    dissipated: f64,
    aero_work: f64,
    f_int: Vec<f64>,
    f_aero: Vec<f64>,
    v: Vec<f64>,
    config: Configuration,
    time: f64,
    worst: f64,
    initial_total: Option<f64>,
    origin: Vec<nalgebra::Vector3<f64>>,
    /// Rayleigh dissipation power `vᵀC v` at `v`, W, once known (the
    /// trapezoid's end value of one step is the start value of the next).
    damping_power: Option<f64>,
}

#[allow(clippy::too_many_arguments)]
fn integrate(
    spec: &SectionSpec,
    d: &DynamicsSpec,
    model: &Model,
    start: &Configuration,
    system: DynamicSystem<'_>,
    v0: Vec<f64>,
    writer: &ResultsWriter,
    control: &mut RunControl<'_>,
    progress: &mut dyn FnMut(Progress),
    rayleigh: Rayleigh,
) -> Result<DynamicSummary, GlazeError> {
    let started = Instant::now();
    let dims = (model.node_count(), model.elements.len(), model.support_nodes.len());
    let fingerprint = system_fingerprint(&system);
    let mut system = system;
    let start_error = |e: glaze_solvers::SolverError| GlazeError::Analysis {
        message: format!("the dynamic run could not start: {e}"),
    };
    let resume = control.resume.take();
    let prior_wall = resume.as_ref().map_or(0.0, |c| c.wall_time_s);
    let (mut history, mut integ, mut energy, first_output) = match resume {
        None => {
            let mut history = HistoryWriter::create(writer, dims.0, dims.1, dims.2)?;
            let first_config = system.committed.clone();
            let origin = first_config.positions.clone();
            let integ = match initial_acceleration(&mut system, &v0) {
                None => Integrator::new(system, v0.clone(), 0.0, settings(d)).map_err(start_error)?,
                Some(a0) => {
                    let a0 = a0.map_err(start_error)?;
                    Integrator::with_initial_acceleration(system, v0.clone(), a0, 0.0, settings(d))
                        .map_err(start_error)?
                }
            };
            let mut energy = Energy {
                initial_strain: None,
                dissipated: 0.0,
                aero_work: 0.0,
                f_int: integ.system().internal_force.clone(),
                f_aero: integ.system().aero_force.clone(),
                v: v0,
                config: first_config,
                time: 0.0,
                worst: 0.0,
                initial_total: None,
                origin,
                damping_power: None,
            };
            history.push(record(model, start, &integ, &mut energy))?;
            (history, integ, energy, 1)
        }
        Some(cp) => {
            let path = crate::results::checkpoint_path(writer.target());
            let refuse = |message: String| GlazeError::Resume { path: path.clone(), message };
            if cp.system_fingerprint != fingerprint
                || cp.positions.len() != dims.0
                || cp.rotations.len() != dims.0
            {
                return Err(refuse(
                    "the model this input builds differs from the checkpoint's (another glaze build?); run \
                     again without --resume"
                        .into(),
                ));
            }
            for (n, (p, r)) in cp.positions.iter().zip(&cp.rotations).enumerate() {
                system.committed.positions[n] = nalgebra::Vector3::from(*p);
                system.committed.rotations[n] = nalgebra::Matrix3::from_column_slice(r);
            }
            system.trial.clone_from(&system.committed);
            let mut history = HistoryWriter::reopen(writer, dims, cp.records_written, cp.buffered)?;
            if let (Some(t), Some(last)) = (cp.last_written_time, cp.records_written.checked_sub(1)) {
                if history.written_time(last)?.to_bits() != t.to_bits() {
                    return Err(refuse(format!(
                        "the results file does not hold the checkpoint's records (record {last} is not at \
                         t = {t} s); run again without --resume"
                    )));
                }
            }
            let integ = Integrator::resume(system, cp.integrator, settings(d))
                .map_err(|e| refuse(format!("the integrator state does not fit the model: {e}")))?;
            let config = integ.system().committed.clone();
            let e = cp.energy;
            let energy = Energy {
                initial_strain: e.initial_strain,
                dissipated: e.dissipated,
                aero_work: e.aero_work,
                f_int: e.f_int,
                f_aero: e.f_aero,
                v: e.v,
                config,
                time: e.time,
                worst: e.worst,
                initial_total: e.initial_total,
                origin: e.origin.into_iter().map(nalgebra::Vector3::from).collect(),
                damping_power: None,
            };
            (history, integ, energy, cp.next_output)
        }
    };
    let outputs = (d.duration / d.output_interval - 1e-9).ceil() as usize;
    // Time and axial forces of the last record, for a divergence report.
    let mut last_record = history.buffered().last().map(|r| (r.time, r.axial_force.clone()));
    let policy = &d.checkpoint;
    let mut last_checkpoint = (integ.time(), Instant::now());
    let extent = model_extent(model);
    let mut interrupted = false;
    let mut next = first_output;
    let stepping = Instant::now();
    let mut output_s = 0.0;
    let counted = integ.stats();
    while next <= outputs {
        let k = next;
        if control.stop.load(Ordering::Relaxed) {
            interrupted = true;
            break;
        }
        let t_k = (k as f64 * d.output_interval).min(d.duration);
        let stepped = loop {
            match integ.step_until(t_k) {
                Ok(Some(_)) => accumulate(&integ, &mut energy),
                Ok(None) => break Ok(()),
                Err(e) => break Err(Divergence::Solver(e)),
            }
        };
        let clock = Instant::now();
        let rec = record(model, start, &integ, &mut energy);
        let outcome = stepped.and_then(|()| check_record(&rec, extent));
        if let Err(why) = outcome {
            return Err(diverged(spec, model, writer, &mut history, &integ, last_record.as_ref(), why));
        }
        last_record = Some((rec.time, rec.axial_force.clone()));
        history.push(rec)?;
        output_s += clock.elapsed().as_secs_f64();
        next = k + 1;
        let stats = integ.stats();
        progress(Progress {
            time: t_k,
            duration: d.duration,
            steps: stats.steps,
            iterations: stats.newton_iterations,
        });
        let due =
            policy.every_simulated.is_some_and(|s| integ.time() - last_checkpoint.0 >= s * (1.0 - 1e-9))
                || policy
                    .every_wall_minutes
                    .is_some_and(|m| last_checkpoint.1.elapsed().as_secs_f64() >= 60.0 * m);
        if control.checkpoints && policy.enabled && due && next <= outputs {
            let clock = Instant::now();
            let wall = prior_wall + started.elapsed().as_secs_f64();
            write_checkpoint(spec, writer, &mut history, &integ, &energy, fingerprint, next, wall)?;
            last_checkpoint = (integ.time(), Instant::now());
            output_s += clock.elapsed().as_secs_f64();
        }
    }
    if interrupted && control.checkpoints && policy.enabled {
        let wall = prior_wall + started.elapsed().as_secs_f64();
        write_checkpoint(spec, writer, &mut history, &integ, &energy, fingerprint, next, wall)?;
    }
    history.flush()?;
    let stats = integ.stats();
    let (steps_t, loops) = (integ.timings(), integ.system().loop_seconds());
    let timings = RunTimings {
        elements_s: loops[0],
        aerodynamics_s: loops[1],
        factorisation_s: steps_t.factorisation_s,
        solve_s: steps_t.solve_s,
        output_s,
        stepping_s: stepping.elapsed().as_secs_f64(),
        factorisations: stats.factorisations - counted.factorisations,
        solves: stats.solves - counted.solves,
    };
    Ok(DynamicSummary {
        time: integ.time(),
        interrupted,
        records: history.len(),
        steps: stats.steps,
        rejected_steps: stats.rejected_steps,
        iterations: stats.newton_iterations,
        factorisations: stats.factorisations,
        rayleigh: (rayleigh.mass, rayleigh.stiffness),
        energy_balance_error: energy.worst,
        modal_damping: Vec::new(),
        prior_wall_time_s: prior_wall,
        timings,
    })
}

/// Fingerprint of what a resumed run rebuilds rather than stores: sizes,
/// mass and damping values (bits).
fn system_fingerprint(system: &DynamicSystem<'_>) -> u64 {
    let mut bytes = Vec::with_capacity(16 * system.mass().len() + 16);
    bytes.extend_from_slice(&(system.dim() as u64).to_le_bytes());
    bytes.extend_from_slice(&(system.pattern().nnz() as u64).to_le_bytes());
    for x in system.mass().iter().chain(system.damping()) {
        bytes.extend_from_slice(&x.to_bits().to_le_bytes());
    }
    crate::results::fnv1a64(&bytes)
}

/// Flushes the results file to disk, then writes the checkpoint of the
/// state after the record just pushed (`next` is the next record's index).
#[allow(clippy::too_many_arguments)]
fn write_checkpoint(
    spec: &SectionSpec,
    writer: &ResultsWriter,
    history: &mut HistoryWriter,
    integ: &Integrator<DynamicSystem<'_>>,
    e: &Energy,
    fingerprint: u64,
    next: usize,
    wall_time_s: f64,
) -> Result<(), GlazeError> {
    // The block being written goes to the file first, then the file to disk.
    history.settle()?;
    writer.sync()?;
    let written = history.written();
    let last_written_time = match written.checked_sub(1) {
        Some(i) => Some(history.written_time(i)?),
        None => None,
    };
    let config = &integ.system().committed;
    let cp = Checkpoint {
        input_hash: crate::results::fnv1a64(spec.source.as_bytes()),
        system_fingerprint: fingerprint,
        records_written: written,
        last_written_time,
        buffered: history.buffered().to_vec(),
        next_output: next,
        wall_time_s,
        positions: config.positions.iter().map(|p| [p.x, p.y, p.z]).collect(),
        rotations: config.rotations.iter().map(|r| std::array::from_fn(|i| r.as_slice()[i])).collect(),
        integrator: integ.state(),
        energy: EnergyState {
            initial_strain: e.initial_strain,
            dissipated: e.dissipated,
            aero_work: e.aero_work,
            f_int: e.f_int.clone(),
            f_aero: e.f_aero.clone(),
            v: e.v.clone(),
            time: e.time,
            worst: e.worst,
            initial_total: e.initial_total,
            origin: e.origin.iter().map(|p| [p.x, p.y, p.z]).collect(),
        },
    };
    cp.write(writer.target())
}

/// Why a run stopped as diverged.
enum Divergence {
    /// The integrator gave up (non-finite values, or a step that failed at
    /// the smallest step size).
    Solver(glaze_solvers::SolverError),
    /// A recorded value is not finite.
    NonFinite(&'static str),
    /// A node moved farther than the size of the whole model, m.
    RanAway(f64),
}

/// Diagonal of the bounding box of the reference nodes, m (at least 1 m).
fn model_extent(model: &Model) -> f64 {
    let mut lo = nalgebra::Vector3::repeat(f64::INFINITY);
    let mut hi = -lo;
    for p in &model.nodes {
        lo = lo.inf(p);
        hi = hi.sup(p);
    }
    (hi - lo).norm().max(1.0)
}

/// A record fit to write: finite everywhere, no node moved beyond `extent`.
fn check_record(r: &Record, extent: f64) -> Result<(), Divergence> {
    fn finite<'a>(v: impl IntoIterator<Item = &'a f64>) -> bool {
        v.into_iter().all(|x| x.is_finite())
    }
    let fields: [(&'static str, bool); 6] = [
        ("displacement", finite(r.displacement.iter().flatten())),
        ("rotation", finite(r.rotation.iter().flatten())),
        ("velocity", finite(r.velocity.iter().flatten())),
        ("element axial force", finite(&r.axial_force)),
        ("support force", finite(r.support_force.iter().flatten())),
        ("energy", finite(&r.energy)),
    ];
    if let Some((name, _)) = fields.iter().find(|(_, ok)| !ok) {
        return Err(Divergence::NonFinite(name));
    }
    let largest = r.displacement.iter().flatten().fold(0.0f64, |m, x| m.max(x.abs()));
    if largest > extent {
        return Err(Divergence::RanAway(largest));
    }
    Ok(())
}

/// Names of the six nodal DOF.
const DOF_NAMES: [&str; 6] = [
    "u_x (along the line)",
    "u_y (across the line)",
    "u_z (vertical)",
    "θ_x (rotation about X)",
    "θ_y (rotation about Y)",
    "θ_z (rotation about Z)",
];

/// Where node `node` is: its wire, span and chainage, or what else it is.
pub(crate) fn describe_node(model: &Model, node: usize) -> String {
    let chainage = model.nodes.get(node).map_or(f64::NAN, |&p| model.chainage_of(p));
    let mut what = Vec::new();
    if let Some(s) = model.spans.iter().find(|s| s.nodes.contains(&node)) {
        let span = s.route_span + 1;
        match s.phase.and_then(|p| model.phase_names.get(p)) {
            Some(name) => {
                let bundle =
                    model.spans.iter().filter(|o| o.phase == s.phase && o.route_span == s.route_span).count();
                if bundle > 1 {
                    what.push(format!("phase {name}, subconductor {}, span {span}", s.subconductor + 1));
                } else {
                    what.push(format!("phase {name}, span {span}"));
                }
            }
            None => what.push(format!("span {span}")),
        }
    }
    if let Some(st) = model.strings.iter().find(|st| st.yoke == node || st.hinges.contains(&node)) {
        let tower = model.towers.get(st.tower).map_or("?", |t| t.0.as_str());
        let phase = model.phase_names.get(st.phase).map_or("?", String::as_str);
        what.push(format!("insulator string of phase {phase} at tower {tower}"));
    }
    for (group, label) in [("spacers", "spacer hub"), ("yokes", "yoke")] {
        if model.groups.get(group).is_some_and(|g| g.contains(&node)) {
            what.push(label.into());
        }
    }
    if what.is_empty() {
        what.push("a device or frame node".into());
    }
    format!("node {node} ({}, chainage {chainage:.1} m)", what.join("; "))
}

/// The equation a solver error points at, if any.
fn worst_equation(e: &glaze_solvers::SolverError) -> Option<usize> {
    use glaze_solvers::SolverError as E;
    match e {
        E::StepFailed { worst_dof: Some(d), .. } => Some(*d),
        E::StepFailed { last, .. } => worst_equation(last),
        E::StepNotConverged { worst_dof, .. } | E::Diverged { worst_dof, .. } => Some(*worst_dof),
        E::NonFinite { dof, .. } => Some(*dof),
        E::Singular { pivot, .. } => *pivot,
        _ => None,
    }
}

/// Ends a diverged run: writes the finite records and `/divergence`, and
/// returns the report.
fn diverged(
    spec: &SectionSpec,
    model: &Model,
    writer: &ResultsWriter,
    history: &mut HistoryWriter,
    integ: &Integrator<DynamicSystem<'_>>,
    last_record: Option<&(f64, Vec<f64>)>,
    why: Divergence,
) -> GlazeError {
    let report = divergence_report(spec, model, history, integ, last_record, &why);
    let config = &integ.system().committed;
    let v = integ.velocity();
    let velocity: Vec<[f64; 3]> = (0..model.node_count())
        .map(|n| std::array::from_fn(|d| model.dofs.equation(n, d).map_or(0.0, |eq| v[eq])))
        .collect();
    let positions: Vec<[f64; 3]> = config.positions.iter().map(|p| [p.x, p.y, p.z]).collect();
    let rotations: Vec<[f64; 4]> = config.rotations.iter().map(glaze_elements::so3::to_quaternion).collect();
    let kept = history
        .flush()
        .and_then(|()| writer.write_divergence(&report, integ.time(), &positions, &rotations, &velocity));
    match kept {
        Ok(()) => GlazeError::Diverged { report },
        Err(e) => GlazeError::Diverged { report: format!("{report}\n(the results could not be kept: {e})") },
    }
}

fn divergence_report(
    spec: &SectionSpec,
    model: &Model,
    history: &HistoryWriter,
    integ: &Integrator<DynamicSystem<'_>>,
    last_record: Option<&(f64, Vec<f64>)>,
    why: &Divergence,
) -> String {
    let t = integ.time();
    let sys = integ.system();
    let v = integ.velocity();
    let (cause, eq) = match why {
        Divergence::Solver(e) => (format!("{e}"), worst_equation(e)),
        Divergence::NonFinite(field) => (format!("the {field} is not finite (NaN or infinity)"), None),
        Divergence::RanAway(x) => (
            format!(
                "a node moved {x:.3e} m, farther than the size of the whole section: the motion ran away"
            ),
            None,
        ),
    };
    // Without an equation from the solver: the fastest DOF.
    let eq = eq
        .filter(|&q| q < v.len())
        .or_else(|| v.iter().enumerate().max_by(|a, b| a.1.abs().total_cmp(&b.1.abs())).map(|(i, _)| i));
    let dof = eq.and_then(|q| {
        model.dofs.all().iter().position(|e| *e == Some(q)).map(|i| (q, i / DOF_PER_NODE, i % DOF_PER_NODE))
    });
    let mut lines = vec![format!(
        "the dynamic run of {} diverged: the last converged state is at t = {t:.4} s",
        spec.file.display()
    )];
    lines.push(format!("  cause: {cause}"));
    if let Some((q, node, d)) = dof {
        let disp = sys.committed.positions[node] - model.nodes[node];
        lines.push(format!(
            "  worst DOF: equation {q}, {} of {} (velocity {:.3e} {}, moved {:.3} m from the stringing state)",
            DOF_NAMES[d],
            describe_node(model, node),
            v[q],
            if d < 3 { "m/s" } else { "rad/s" },
            disp.norm()
        ));
    }
    // The element whose axial force changed most since the last record.
    if let Some((_, last)) = last_record.filter(|(_, l)| l.len() == model.elements.len()) {
        let ctx = ElementContext { temperature_change: model.temperature_change };
        let config = &sys.committed;
        let mut nodes = Vec::new();
        let change = model.elements.iter().zip(last).enumerate().map(|(i, (el, n0))| {
            gather_into(model, config, i, &mut nodes);
            let n1 = el.output(&ctx, &nodes).axial_force;
            (i, n1 - n0, n1)
        });
        if let Some((i, dn, n1)) = change.max_by(|a, b| a.1.abs().total_cmp(&b.1.abs())) {
            let el = &model.elements[i];
            lines.push(format!(
                "  largest force change since the last record: element {i} ({}, {}), axial force {:.4e} N, changed by {dn:.3e} N",
                el.kind(),
                describe_node(model, el.nodes()[0]),
                n1
            ));
        }
    }
    let written = history.len();
    lines.push(format!(
        "  kept: {written} records up to t = {:.4} s, and the last converged state in /divergence, in the results file marked incomplete",
        last_record.map_or(0.0, |r| r.0)
    ));
    let dt = spec.dynamics.as_ref().map_or(f64::NAN, |d| d.time_step);
    lines.push(format!(
        "  suggestion: try a smaller [dynamics] time_step (now {dt} s; halve it), more elements per span ([mesh]), and check \
         the aerodynamic coefficient tables for jumps or steep slopes; a wind far above the galloping onset can drive the \
         motion beyond what the section can follow"
    ));
    lines.join("\n")
}

/// After each accepted step: trapezoidal increments of the Rayleigh
/// dissipation and of the aerodynamic work (they have no potential).
fn accumulate(integ: &Integrator<DynamicSystem<'_>>, e: &mut Energy) {
    let sys = integ.system();
    let v = integ.velocity();
    let h = integ.time() - e.time;
    let power = |u: &[f64]| {
        let mut cu = vec![0.0; u.len()];
        sys.pattern().mul_vec(sys.damping(), u, &mut cu);
        u.iter().zip(&cu).map(|(a, b)| a * b).sum::<f64>()
    };
    let p0 = e.damping_power.unwrap_or_else(|| power(&e.v));
    let p1 = power(v);
    e.dissipated += 0.5 * h * (p0 + p1);
    e.damping_power = Some(p1);
    let w1: f64 = v.iter().zip(&sys.aero_force).map(|(a, b)| a * b).sum();
    let w0: f64 = e.v.iter().zip(&e.f_aero).map(|(a, b)| a * b).sum();
    e.aero_work += 0.5 * h * (w0 + w1);
    e.f_int.clone_from(&sys.internal_force);
    e.f_aero.clone_from(&sys.aero_force);
    e.v.copy_from_slice(v);
    e.config.clone_from(&sys.committed);
    e.time = integ.time();
}

fn record(
    model: &Model,
    start: &Configuration,
    integ: &Integrator<DynamicSystem<'_>>,
    e: &mut Energy,
) -> Record {
    let sys = integ.system();
    let config = &sys.committed;
    let v = integ.velocity();
    let nn = model.node_count();
    let mut velocity = vec![[0.0; 3]; nn];
    for (node, vel) in velocity.iter_mut().enumerate() {
        for (dof, slot) in vel.iter_mut().enumerate() {
            if let Some(eq) = model.dofs.equation(node, dof) {
                *slot = v[eq];
            }
        }
    }
    let mut mv = vec![0.0; v.len()];
    sys.pattern().mul_vec(sys.mass(), v, &mut mv);
    let kinetic = 0.5 * v.iter().zip(&mv).map(|(a, b)| a * b).sum::<f64>();
    // Potential of the constant nodal loads (weight), from the first state.
    let gravity: f64 = -(0..nn)
        .flat_map(|node| (0..3).map(move |dof| (node, dof)))
        .map(|(node, dof)| {
            model.case_load[node * DOF_PER_NODE + dof] * (config.positions[node][dof] - e.origin[node][dof])
        })
        .sum::<f64>();
    let ctx = ElementContext { temperature_change: model.temperature_change };
    // Stored strain energy of the state itself (not a path integral), so a
    // run that blows up shows in the balance.
    let gather = |el: &dyn glaze_elements::Element, nodes: &mut Vec<NodeState>| {
        nodes.clear();
        nodes.extend(el.nodes().iter().map(|&n| NodeState {
            x0: model.nodes[n],
            x: config.positions[n],
            rotation: config.rotations[n],
        }));
    };
    // Per element on the pool, summed in element order (the same on any
    // thread count).
    let per_element: Vec<(f64, f64)> = model
        .elements
        .par_iter()
        .map_init(Vec::new, |nodes, el| {
            gather(el.as_ref(), nodes);
            (el.strain_energy(&ctx, nodes), el.output(&ctx, nodes).axial_force)
        })
        .collect();
    let stored: f64 = per_element.iter().map(|p| p.0).sum();
    let strain = stored - *e.initial_strain.get_or_insert(stored);
    let total = kinetic + strain + gravity + e.dissipated - e.aero_work;
    let initial = *e.initial_total.get_or_insert(total);
    let scale = kinetic
        .abs()
        .max(strain.abs())
        .max(gravity.abs())
        .max(e.dissipated)
        .max(e.aero_work.abs())
        .max(f64::MIN_POSITIVE);
    if kinetic + e.dissipated + e.aero_work.abs() > 0.0 {
        e.worst = e.worst.max((total - initial).abs() / scale);
    }
    let axial_force = per_element.iter().map(|p| p.1).collect();
    Record {
        time: integ.time(),
        displacement: (0..nn)
            .map(|i| std::array::from_fn(|d| config.positions[i][d] - start.positions[i][d]))
            .collect(),
        rotation: config.rotations.iter().map(glaze_elements::so3::to_quaternion).collect(),
        velocity,
        axial_force,
        support_force: support_forces(model, config, sys, v, integ.time()),
        energy: [kinetic, strain, gravity, e.dissipated, e.aero_work],
    }
}

/// Force of each support on its node: internal force less the nodal
/// loads there (weight and wind on the supported node), in N.
fn support_forces(
    model: &Model,
    config: &Configuration,
    sys: &DynamicSystem<'_>,
    v: &[f64],
    t: f64,
) -> Vec<[f64; 3]> {
    let ctx = ElementContext { temperature_change: model.temperature_change };
    let mut full = vec![0.0; model.node_count() * DOF_PER_NODE];
    let mut f = vec![0.0; 12];
    // Only the entries of restrained nodes are read: the elements that
    // touch one (in element order, as a full assembly would add them).
    let supported =
        |el: &dyn glaze_elements::Element| el.nodes().iter().any(|&n| model.restrained[n].iter().any(|&r| r));
    for el in model.elements.iter().filter(|el| supported(el.as_ref())) {
        let nodes: Vec<NodeState> = el
            .nodes()
            .iter()
            .map(|&n| NodeState { x0: model.nodes[n], x: config.positions[n], rotation: config.rotations[n] })
            .collect();
        let m = nodes.len() * DOF_PER_NODE;
        f.resize(m, 0.0);
        el.internal_force(&ctx, &nodes, &mut f[..m]);
        for (a, &n) in el.nodes().iter().enumerate() {
            for d in 0..DOF_PER_NODE {
                full[n * DOF_PER_NODE + d] += f[a * DOF_PER_NODE + d];
            }
        }
    }
    let scale = sys.wind_factor(t).sqrt();
    if let (Some(wind), true) = (model.wind, scale > 0.0) {
        for (e, el) in model.elements.iter().enumerate() {
            let Some(aero) = &model.aero[e] else { continue };
            let ids = el.nodes();
            if !ids.iter().any(|&n| model.restrained[n].iter().any(|&r| r)) {
                continue;
            }
            let nodes: Vec<NodeState> = ids
                .iter()
                .map(|&n| NodeState {
                    x0: model.nodes[n],
                    x: config.positions[n],
                    rotation: config.rotations[n],
                })
                .collect();
            let vel = [node_velocity(model, v, ids[0]), node_velocity(model, v, ids[1])];
            let mut f = [0.0; 2 * DOF_PER_NODE];
            if crate::aero_loads::element_load(
                aero,
                crate::aero_loads::Flow { wind: &wind, scale },
                &nodes,
                &vel,
                &mut f,
            )
            .is_ok()
            {
                for (a, &n) in ids.iter().enumerate() {
                    for d in 0..DOF_PER_NODE {
                        full[n * DOF_PER_NODE + d] -= f[a * DOF_PER_NODE + d];
                    }
                }
            }
        }
    }
    model
        .support_nodes
        .iter()
        .map(|&n| std::array::from_fn(|d| full[n * DOF_PER_NODE + d] - model.case_load[n * DOF_PER_NODE + d]))
        .collect()
}

/// The initial acceleration when some equations carry no mass (the hubs of
/// spacer and yoke frames, the clamp nodes of `ClampJoint`s): M a₀ = −g₀
/// on the equations with mass, a₀ = 0 on the massless ones, which the
/// stiffness ties to the rest (M is lumped, so a massless equation's row is
/// empty). `None` when every equation has mass (the integrator solves for
/// a₀ itself).
fn initial_acceleration(
    system: &mut DynamicSystem<'_>,
    v0: &[f64],
) -> Option<Result<Vec<f64>, glaze_solvers::SolverError>> {
    use glaze_solvers::LinearSolver;
    use glaze_solvers::SecondOrderSystem;
    let n = system.dim();
    let diag = system.pattern().diagonal_indices();
    let scale = diag.iter().map(|&k| system.mass()[k].abs()).fold(0.0, f64::max);
    let massless: Vec<bool> = diag.iter().map(|&k| system.mass()[k].abs() <= 1e-14 * scale).collect();
    if !massless.iter().any(|&m| m) {
        return None;
    }
    let mut g = vec![0.0; n];
    if let Err(e) = system.evaluate(0.0, v0, &mut g, None, None) {
        return Some(Err(glaze_solvers::SolverError::EvaluationAtTime { time: 0.0, message: e.to_string() }));
    }
    let mut m = system.mass().to_vec();
    for (i, &k) in diag.iter().enumerate() {
        if massless[i] {
            m[k] = 1.0;
        }
    }
    let mut a: Vec<f64> = g.iter().zip(&massless).map(|(gi, &ml)| if ml { 0.0 } else { -gi }).collect();
    let mut solver = glaze_solvers::SparseDirect::new(system.pattern());
    Some(solver.factor(&m).and_then(|_| solver.solve_in_place(&mut a)).map(|_| a))
}
