//! Running one scale case: static state, modes for the damping fit, then
//! the time stepping with its output, timed, and the fingerprint read back
//! from the results file.

use crate::cases::ScaleCase;
use crate::record::{peak_memory_bytes, CaseRecord, PhaseTimes};
use crate::BenchError;
use glaze_engine::analysis::dynamic_stage::{run_dynamic, RunTimings};
use glaze_engine::results::ResultsWriter;
use glaze_engine::spec::SchemeSpec;
use glaze_engine::{input, model, ElementRegistry};
use glaze_report::ResultsFile;
use glaze_solvers::SolverBackend;
use std::path::Path;
use std::sync::atomic::AtomicBool;
use std::time::Instant;

/// Runs `case` for `duration` s with the linear solver `solver` in the
/// folder `work` (its results file is removed afterwards unless `keep`).
pub fn run_case(
    case: ScaleCase,
    duration: f64,
    solver: SolverBackend,
    work: &Path,
    keep: bool,
) -> Result<CaseRecord, BenchError> {
    let name = case.name();
    let dir = match solver {
        SolverBackend::SparseDirect => work.join(&name),
        other => work.join(format!("{name}-{}", other.name())),
    };
    let text = case
        .input(&dir, duration, solver)
        .map_err(|e| BenchError::Io { path: dir.clone(), message: e.to_string() })?;
    let input_path = dir.join("input.toml");
    std::fs::write(&input_path, &text)
        .map_err(|e| BenchError::Io { path: input_path.clone(), message: e.to_string() })?;
    let registry = ElementRegistry::with_builtin();
    let start = Instant::now();
    let spec = input::load_str(&input_path, &text, &registry)
        .map_err(|e| BenchError::Case(name.clone(), e.to_string()))?;
    let m = model::build(&spec, &registry).map_err(|e| BenchError::Case(name.clone(), e.to_string()))?;
    let (dof, elements) = (6 * m.nodes.len(), m.elements.len());
    drop(m);
    let results = dir.join("result.h5");
    let writer = ResultsWriter::create(&results, &spec.source)
        .map_err(|e| BenchError::Case(name.clone(), e.to_string()))?;
    let stop = AtomicBool::new(false);
    let summary = run_dynamic(&spec, &registry, &writer, &stop, &mut |_| {})
        .map_err(|e| BenchError::Case(name.clone(), e.to_string()))?;
    writer
        .finish(start.elapsed().as_secs_f64())
        .map_err(|e| BenchError::Case(name.clone(), e.to_string()))?;
    // The stepping's own clock (the loop of steps with their output), so
    // that its phases add up to it; the rest of the wall time is setup.
    let dynamic_s = summary.timings.stepping_s;
    let setup_s = (start.elapsed().as_secs_f64() - dynamic_s).max(0.0);
    let fingerprint = fingerprint(&results).map_err(|e| BenchError::Case(name.clone(), e))?;
    if !keep {
        let _ = std::fs::remove_file(&results);
    }
    let d = spec.dynamics.as_ref().ok_or_else(|| BenchError::Case(name.clone(), "no [dynamics]".into()))?;
    let scheme = match d.scheme {
        SchemeSpec::Hht(alpha) => format!("hht α={alpha}"),
        SchemeSpec::GeneralizedAlpha(rho) => format!("generalised-α ρ∞={rho}"),
    };
    Ok(CaseRecord {
        name,
        linear_solver: solver.name().into(),
        dof,
        elements,
        solver: format!(
            "{scheme}, Δt={} s, modified Newton {}",
            d.time_step,
            if d.modified_newton { "on" } else { "off" }
        ),
        steps: summary.steps,
        rejected_steps: summary.rejected_steps,
        newton_iterations: summary.iterations,
        factorisations: summary.factorisations,
        records: summary.records,
        setup_s,
        dynamic_s,
        steps_per_s: summary.steps as f64 / dynamic_s.max(1e-9),
        real_time_factor: summary.time / dynamic_s.max(1e-9),
        peak_memory_bytes: peak_memory_bytes(),
        energy_balance_error: summary.energy_balance_error,
        fingerprint,
        phases: phases(&summary.timings, summary.steps),
    })
}

/// The run's timings as [`PhaseTimes`].
fn phases(t: &RunTimings, steps: usize) -> PhaseTimes {
    let per = |total: f64, count: usize| if count > 0 { total / count as f64 } else { 0.0 };
    let floor = per(t.factorisation_s, t.factorisations) + per(t.solve_s, t.solves);
    let parts = t.elements_s + t.aerodynamics_s + t.factorisation_s + t.solve_s + t.output_s;
    let step = per(t.stepping_s, steps);
    PhaseTimes {
        elements_s: t.elements_s,
        aerodynamics_s: t.aerodynamics_s,
        factorisation_s: t.factorisation_s,
        solve_s: t.solve_s,
        output_s: t.output_s,
        other_s: (t.stepping_s - parts).max(0.0),
        floor_per_step_s: floor,
        step_over_floor: if floor > 0.0 { step / floor } else { 0.0 },
    }
}

/// Σ|u|, max |u| and Σ axial force at the last record of `results`.
fn fingerprint(results: &Path) -> Result<Vec<f64>, String> {
    let f = ResultsFile::open(results, false).map_err(|e| e.to_string())?;
    let last = f.records().checked_sub(1).ok_or("the run wrote no record")?;
    let u = f.displacement(last..last + 1).map_err(|e| e.to_string())?;
    let n = f.axial_force(last..last + 1).map_err(|e| e.to_string())?;
    let sum_abs: f64 = u.iter().map(|x| x.abs()).sum();
    let max_abs = u.iter().fold(0.0f64, |m, x| m.max(x.abs()));
    Ok(vec![sum_abs, max_abs, n.iter().sum()])
}
