//! The static stage: from the stringing state to equilibrium under the
//! load case, then the per-span summary an engineer reads.

use super::static_system::{Configuration, LoadPath, StaticSystem};
use crate::error::{InputError, InputErrorKind};
use crate::input::Locator;
use crate::model::{Model, DOF_PER_NODE};
use crate::spec::SectionSpec;
use glaze_elements::ElementOutput;
use glaze_solvers::{solve_load_path, LoadPathReport, LoadStepSettings, NewtonSettings, SparseDirect};

/// Results of one span at static equilibrium.
#[derive(Clone, Debug, PartialEq)]
pub struct SpanSummary {
    /// Horizontal distance between supports, in m.
    pub horizontal_length: f64,
    /// Straight distance between supports, in m.
    pub chord_length: f64,
    /// Stretched conductor length (sum of element chords), in m.
    pub conductor_length: f64,
    /// Unstretched conductor length at the stringing temperature, in m.
    pub unstretched_length: f64,
    /// Largest vertical distance between chord and conductor, in m.
    pub sag: f64,
    /// Horizontal distance from the first support to the point of largest sag, in m.
    pub sag_position: f64,
    /// Horizontal tension (mean of the horizontal support reactions of the span), in N.
    pub horizontal_tension: f64,
    /// Conductor tension at the first and second support (magnitude of the reaction), in N.
    pub support_tension: [f64; 2],
    /// Largest support tension over rated strength.
    pub strength_ratio: f64,
}

/// Results of the static stage.
#[derive(Clone, Debug)]
pub struct StaticResult {
    /// Equilibrium configuration.
    pub config: Configuration,
    /// Section results per element.
    pub element_output: Vec<ElementOutput>,
    /// Reaction force on each support node (order of `Model::support_nodes`), in N.
    pub support_force: Vec<[f64; 3]>,
    /// Per-span summary.
    pub spans: Vec<SpanSummary>,
    /// Solver statistics.
    pub report: LoadPathReport,
}

/// Solves the load case of `model` built from `spec`.
pub fn run_static(spec: &SectionSpec, model: &Model) -> Result<StaticResult, InputError> {
    let mut system = StaticSystem::new(model);
    let mut solver = SparseDirect::new(glaze_solvers::NonlinearSystem::pattern(&system));
    let newton = NewtonSettings {
        max_iterations: spec.solver.max_iterations,
        residual_tolerance: spec.solver.residual_tolerance,
        ..NewtonSettings::default()
    };
    let steps = LoadStepSettings {
        initial_step: spec.solver.initial_load_step,
        min_step: spec.solver.min_load_step,
        ..LoadStepSettings::default()
    };
    let not_converged = |stage: &str, key: &str, e: glaze_solvers::SolverError| {
        Locator::new(&spec.file, &spec.source).error(
            InputErrorKind::NotConverged,
            key,
            format!(
                "the static solve did not converge ({stage}): {e}. Check that the load case is physical \
                 (ice, temperature, wind), try more elements per span, a smaller [solver] initial_load_step, \
                 or more max_iterations"
            ),
        )
    };
    let mut report = solve_load_path(&mut system, &mut solver, &newton, &steps)
        .map_err(|e| not_converged("weight, ice and temperature", "load_case", e))?;
    if model.wind.is_some() {
        system.path = LoadPath::Wind;
        let wind = solve_load_path(&mut system, &mut solver, &newton, &steps)
            .map_err(|e| not_converged("mean wind", "load_case.wind", e))?;
        report = merge(report, wind);
    }

    let ctx = system.context(1.0);
    let element_output: Vec<glaze_elements::ElementOutput> = model
        .elements
        .iter()
        .map(|e| {
            let nodes: Vec<_> = e
                .nodes()
                .iter()
                .map(|&n| glaze_elements::NodeState {
                    x0: model.nodes[n],
                    x: system.config.positions[n],
                    rotation: system.config.rotations[n],
                })
                .collect();
            e.output(&ctx, &nodes)
        })
        .collect();
    let reactions = system.reactions(1.0);
    let force_at = |n: usize| -> [f64; 3] { std::array::from_fn(|d| reactions[n * DOF_PER_NODE + d]) };
    let support_force = model.support_nodes.iter().map(|&n| force_at(n)).collect();
    let spans = model
        .spans
        .iter()
        .map(|span| {
            let c = &spec.conductors[span.conductor];
            let positions: Vec<_> = span.nodes.iter().map(|&n| system.config.positions[n]).collect();
            let a = positions[0];
            let b = positions[positions.len() - 1];
            // A row's spans end on supports: the reaction is the end force. A
            // section's spans end on clamps shared with other spans: the end
            // force is the tension in the end element.
            let last = span.nodes.len() - 1;
            let ends = if span.phase.is_none() {
                [force_at(span.nodes[0]), force_at(span.nodes[last])]
            } else {
                let pull = |e: usize, from: usize, to: usize| -> [f64; 3] {
                    let n: &glaze_elements::ElementOutput = &element_output[e];
                    let d = (system.config.positions[to] - system.config.positions[from]).normalize();
                    std::array::from_fn(|k| n.axial_force * d[k])
                };
                [
                    pull(span.elements.start, span.nodes[0], span.nodes[1]),
                    pull(span.elements.end - 1, span.nodes[last], span.nodes[last - 1]),
                ]
            };
            let tension = ends.map(|f| (f[0] * f[0] + f[1] * f[1] + f[2] * f[2]).sqrt());
            let horizontal = ends.map(|f| f[0].hypot(f[1]));
            let (sag, sag_position) = sag_of(span.direction, &positions);
            SpanSummary {
                horizontal_length: span.horizontal_length,
                chord_length: (b - a).norm(),
                conductor_length: positions.windows(2).map(|w| (w[1] - w[0]).norm()).sum(),
                unstretched_length: span.stringing.unstretched_length,
                sag,
                sag_position,
                horizontal_tension: 0.5 * (horizontal[0] + horizontal[1]),
                support_tension: tension,
                strength_ratio: tension[0].max(tension[1]) / c.rated_strength,
            }
        })
        .collect();
    Ok(StaticResult { config: system.config, element_output, support_force, spans, report })
}

/// Largest vertical distance between the chord and the polyline of
/// `positions`, refined by the vertex of the parabola through the three
/// nodes around the discrete maximum; returns `(sag, plan distance)`, in m.
fn sag_of(direction: nalgebra::Vector3<f64>, positions: &[nalgebra::Vector3<f64>]) -> (f64, f64) {
    let a = positions[0];
    let b = positions[positions.len() - 1];
    let l = (b - a).dot(&direction);
    let dz = b.z - a.z;
    let samples: Vec<(f64, f64)> = positions
        .iter()
        .map(|p| {
            let x = (p - a).dot(&direction);
            (x, a.z + dz * x / l - p.z)
        })
        .collect();
    let (k, _) =
        samples.iter().enumerate().fold(
            (0, f64::NEG_INFINITY),
            |best, (i, &(_, d))| {
                if d > best.1 {
                    (i, d)
                } else {
                    best
                }
            },
        );
    if k == 0 || k + 1 == samples.len() {
        return (samples[k].1, samples[k].0);
    }
    let (x0, y0) = samples[k - 1];
    let (x1, y1) = samples[k];
    let (x2, y2) = samples[k + 1];
    // Lagrange parabola through the three points and its vertex.
    let d01 = (y1 - y0) / (x1 - x0);
    let d12 = (y2 - y1) / (x2 - x1);
    let curvature = (d12 - d01) / (x2 - x0);
    if curvature >= 0.0 {
        return (y1, x1);
    }
    let slope_at_x1 = d01 + curvature * (x1 - x0);
    let xv = x1 - slope_at_x1 / (2.0 * curvature);
    let yv = y1 + slope_at_x1 * (xv - x1) + curvature * (xv - x1).powi(2);
    (yv, xv)
}

/// Adds the counts of two load paths.
fn merge(a: LoadPathReport, b: LoadPathReport) -> LoadPathReport {
    let (fa, fb) = (&a.factor_stats, &b.factor_stats);
    LoadPathReport {
        steps: a.steps + b.steps,
        cutbacks: a.cutbacks + b.cutbacks,
        total_iterations: a.total_iterations + b.total_iterations,
        final_residual: b.final_residual,
        factor_stats: glaze_solvers::FactorStats {
            symbolic: fa.symbolic + fb.symbolic,
            symbolic_cholesky: fa.symbolic_cholesky + fb.symbolic_cholesky,
            symbolic_lu: fa.symbolic_lu + fb.symbolic_lu,
            numeric_cholesky: fa.numeric_cholesky + fb.numeric_cholesky,
            numeric_lu: fa.numeric_lu + fb.numeric_lu,
            solves: fa.solves + fb.solves,
            cholesky_failures: fa.cholesky_failures + fb.cholesky_failures,
        },
    }
}
