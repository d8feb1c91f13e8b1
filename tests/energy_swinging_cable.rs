//! Energy conservation of the undamped nonlinear integration (issue 4,
//! "Must show: Energy"): a sagged cable span swinging freely in its first
//! (out-of-plane, pendulum) mode after a finite 1 m perturbation, without
//! wind or Rayleigh damping, keeps its total mechanical energy over 100
//! periods of that mode, for HHT-α with α = 0 (the trapezoidal rule) and
//! generalised-α with ρ∞ = 1 (Hilber, Hughes & Taylor 1977; Chung &
//! Hulbert 1993: both have no algorithmic dissipation, and both satisfy
//! the discrete energy identity `ΔKE = −½ Δqᵀ (g_n + g_{n+1})` when
//! α_m = α_f ∈ {0, ½}, β = ¼, γ = ½).
//!
//! Through the engine: TOML text → `input::load_str` → `run_dynamic` →
//! `/dynamic` read back with the `hdf5` crate.
//!
//! Two energy totals are checked:
//!
//! 1. the engine's own columns of `/dynamic/energy`: kinetic + strain
//!    (the strain energy stored in the elements, less its initial value) +
//!    gravity_potential (+ dissipated − aerodynamic_work, both zero here):
//!    within 0.1 % of E_s over 100 periods at Δt = T/100 (issue 4);
//! 2. an independent total from the other histories: kinetic energy
//!    `½ Σ m_i |v_i|²` from `/dynamic/velocity` with the lumped masses,
//!    stored strain energy `Σ N² L_t / (2 EA)` from
//!    `/dynamic/element_axial_force` (Hooke's law of the elastic cable,
//!    Irvine 1981, *Cable Structures*, ch. 2), and the work of gravity
//!    `Σ W_i Δz_i` from `/dynamic/displacement`. The schemes conserve the
//!    trapezoidal work of the internal forces exactly; the stored energy
//!    differs from it by the quadrature error of `∫ f·dq`, which is bounded
//!    and O(h²). Checked: within 1 % of E_s at every record, and no secular
//!    drift (mean over the last 10 periods within 0.1 % of E_s of the mean
//!    over the first 10).
//!
//! Normalisation (stated, as the issue asks): the energy that swings, E_s =
//! the largest kinetic energy in the first period. The cable is released at
//! rest from the perturbed shape, so E_s is (nearly) the potential energy of
//! the perturbation above the static state, released at the passage through
//! it: 166 J here. The absolute energy levels (strain energy of the static
//! tension, potential of the weight) are arbitrary offsets and are not used.
//!
//! The span is chosen so that the 1 m swing never slackens the cable (see
//! [`DEEP`]); a shallower span where it does is the last test, which shows
//! the trapezoidal rule's nonlinear instability and that the engine's
//! energy diagnostics do not report it.

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::analysis::{run_modal, run_static, ModalSettings};
use glaze_engine::model::{self, DOF_PER_NODE};
use glaze_engine::results::{ResultsWriter, ENERGY_COLUMNS};
use glaze_engine::{input, ElementRegistry};
use std::path::Path;
use std::sync::atomic::AtomicBool;

const EA: f64 = 3.28e7; // N (ACSR 26/7 class, as the examples; from memory)
/// Δt = T/100: the trapezoidal quadrature error of the stored energy is
/// 0.35 % of E_s at T/50 and 0.08 % at T/100 (measured), so T/100 meets
/// the 0.1 % criterion.
const STEPS_PER_PERIOD: f64 = 100.0;

/// A level span and its mesh.
#[derive(Clone, Copy)]
struct Span {
    length: f64,
    sag: f64,
    elements: usize,
}

/// 200 m with 6 m sag (3 %, a common stringing sag): a 1 m swing at
/// midspan (9.5°) keeps every element in tension (9–17 kN about the
/// static 13.3 kN).
const DEEP: Span = Span { length: 200.0, sag: 6.0, elements: 20 };

fn input_text(span: Span, dynamics: &str) -> String {
    let Span { length, sag, elements } = span;
    format!(
        r#"[glaze]
schema_version = 1
title = "swinging cable, energy"
[conductors.c]
diameter = 0.02814
mass_per_length = 1.628
axial_stiffness = {EA}
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 140100.0
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [{length}, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
sag = {sag}
[mesh]
type = "cable"
elements_per_span = {elements}
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
{dynamics}
"#
    )
}

/// Reads a dataset as (shape, values in row-major order).
fn read(file: &hdf5::File, name: &str) -> (Vec<usize>, Vec<f64>) {
    let ds = file.dataset(name).unwrap_or_else(|e| panic!("{name}: {e}"));
    (ds.shape(), ds.read_raw::<f64>().unwrap())
}

struct Run {
    /// E_s: the largest kinetic energy in the first period, J.
    swing_energy: f64,
    /// Largest |E − E(0)| / E_s, engine columns.
    engine_drift: f64,
    /// Largest |E − E(0)| / E_s, independent total.
    independent_drift: f64,
    /// Mean of the independent total over the last 10 % of the run less its
    /// mean over the first 10 %, over E_s (secular drift).
    independent_secular: f64,
    /// Largest |strain column − (U − U(0))| / E_s, U = Σ N² L_t / (2 EA).
    strain_mismatch: f64,
    /// The run summary's energy balance error (relative to its largest term).
    reported_balance_error: f64,
    /// Largest kinetic energy of the whole run, J.
    peak_kinetic: f64,
    /// Smallest element tension of the run, N.
    min_tension: f64,
    /// Largest lateral midspan displacement in the last 10 % of the run, m.
    late_amplitude: f64,
    records: usize,
    steps: usize,
    iterations: usize,
    /// The divergence report, when the run was stopped as diverged.
    diverged: Option<String>,
}

fn first_mode_period(span: Span) -> f64 {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("swing.toml"), &input_text(span, ""), &registry).unwrap();
    let m = model::build(&spec, &registry).unwrap();
    let st = run_static(&spec, &m).unwrap();
    let modes = run_modal(&m, &st, &ModalSettings::new(4)).unwrap();
    assert!(
        modes.labels[0].starts_with("transverse"),
        "mode 1 should be the out-of-plane swing: {:?}",
        modes.labels
    );
    // The swing of a shallow span: ω ≈ π √(g / (8 d)) for sag d (the
    // taut-string first mode with H = w L²/(8d); Irvine 1981, §3.3), a
    // sanity check of the set-up only: 5 %.
    let omega = modes.omega[0];
    let estimate = std::f64::consts::PI * (9.80665 / (8.0 * span.sag)).sqrt();
    assert!((omega / estimate - 1.0).abs() < 0.05, "ω1 = {omega} vs {estimate}");
    2.0 * std::f64::consts::PI / omega
}

/// `periods` periods of the first mode after a 1 m perturbation in it.
fn run(span: Span, scheme: &str, period: f64, periods: f64) -> Run {
    let dt = period / STEPS_PER_PERIOD;
    let duration = periods * period;
    let dynamics = format!(
        "[dynamics]\nduration = {duration}\ntime_step = {dt}\noutput_interval = {dt}\n{scheme}\nperturbation = {{ mode = 1, amplitude = 1.0 }}\n"
    );
    let text = input_text(span, &dynamics);
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("swing.toml"), &text, &registry).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("swing.h5");
    let writer = ResultsWriter::create(&target, &text).unwrap();
    // A run that blows up is stopped as diverged (issue 8): its finite
    // records stay in the partial file and are checked all the same.
    let (summary, path, diverged) =
        match run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}) {
            Ok(s) => (s, writer.finish(0.0).unwrap(), None),
            Err(glaze_engine::GlazeError::Diverged { report }) => {
                let summary = glaze_engine::analysis::dynamic_stage::DynamicSummary {
                    time: f64::NAN,
                    interrupted: false,
                    records: 0,
                    steps: 0,
                    rejected_steps: 0,
                    iterations: 0,
                    factorisations: 0,
                    rayleigh: (0.0, 0.0),
                    energy_balance_error: f64::INFINITY,
                    modal_damping: Vec::new(),
                    prior_wall_time_s: 0.0,
                    timings: Default::default(),
                };
                (summary, writer.keep_incomplete(0.0).unwrap(), Some(report))
            }
            Err(e) => panic!("{scheme}: {e}"),
        };
    assert!(!summary.interrupted);
    assert_eq!(summary.rayleigh, (0.0, 0.0));

    let model = model::build(&spec, &registry).unwrap();
    let nn = model.node_count();
    let ne = model.elements.len();
    // Lumped masses (half of each adjacent element) and nodal weights.
    let mut mass = vec![0.0; nn];
    for el in &model.elements {
        for &n in el.nodes() {
            mass[n] += 0.5 * el.mass_per_length() * el.unstretched_length();
        }
    }
    let weight: Vec<f64> = (0..nn).map(|n| -model.case_load[n * DOF_PER_NODE + 2]).collect();
    let free: Vec<bool> = (0..nn).map(|n| !model.restrained[n][0]).collect();

    let file = hdf5::File::open(&path).unwrap();
    let (eshape, energy) = read(&file, "dynamic/energy");
    assert_eq!(eshape[1], ENERGY_COLUMNS.len());
    let records = eshape[0];
    assert!(diverged.is_some() || records == summary.records);
    let (_, time) = read(&file, "dynamic/time");
    let (_, disp) = read(&file, "dynamic/displacement");
    let (_, vel) = read(&file, "dynamic/velocity");
    let (ashape, axial) = read(&file, "dynamic/element_axial_force");
    assert_eq!(ashape, vec![records, ne]);
    assert!(diverged.is_some() || (time[records - 1] - duration).abs() < 1e-9 * period);

    let col = |name: &str| ENERGY_COLUMNS.iter().position(|c| *c == name).unwrap();
    let (ck, cs, cg, cd, ca) =
        (col("kinetic"), col("strain"), col("gravity_potential"), col("dissipated"), col("aerodynamic_work"));
    let e = |r: usize, c: usize| energy[r * ENERGY_COLUMNS.len() + c];
    let first_period = time.iter().position(|&t| t > period).unwrap_or(records);
    let swing_energy = (0..first_period).map(|r| e(r, ck)).fold(0.0, f64::max);
    assert!(swing_energy > 1.0, "no swing: largest kinetic energy {swing_energy} J");
    let engine_total = |r: usize| e(r, ck) + e(r, cs) + e(r, cg) + e(r, cd) - e(r, ca);

    // Stored strain energy of the tension-only cable elements, ½ N² L_t / EA.
    let strain_energy = |r: usize| -> f64 {
        (0..ne)
            .map(|k| {
                let n = axial[r * ne + k];
                n * n * model.elements[k].unstretched_length() / (2.0 * EA)
            })
            .sum()
    };
    let independent_total = |r: usize| -> f64 {
        let mut kinetic = 0.0;
        let mut gravity = 0.0;
        for n in (0..nn).filter(|&n| free[n]) {
            let v = &vel[(r * nn + n) * 3..(r * nn + n) * 3 + 3];
            kinetic += 0.5 * mass[n] * (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
            gravity += weight[n] * (disp[(r * nn + n) * 3 + 2] - disp[n * 3 + 2]);
        }
        kinetic + strain_energy(r) - strain_energy(0) + gravity
    };
    let (e0, i0, u0) = (engine_total(0), independent_total(0), strain_energy(0));
    let mut engine_drift: f64 = 0.0;
    let mut independent_drift: f64 = 0.0;
    let mut strain_mismatch: f64 = 0.0;
    for r in 0..records {
        assert!(e(r, cd).abs() < 1e-9 && e(r, ca).abs() < 1e-9, "no damping or wind");
        engine_drift = engine_drift.max((engine_total(r) - e0).abs() / swing_energy);
        independent_drift = independent_drift.max((independent_total(r) - i0).abs() / swing_energy);
        strain_mismatch = strain_mismatch.max((e(r, cs) - (strain_energy(r) - u0)).abs() / swing_energy);
    }
    let mean = |range: std::ops::Range<usize>| {
        let k = range.len() as f64;
        range.map(independent_total).sum::<f64>() / k
    };
    let tenth = records / 10;
    let independent_secular = (mean(records - tenth..records) - mean(0..tenth)) / swing_energy;
    let peak_kinetic = (0..records).map(|r| e(r, ck)).fold(0.0, f64::max);
    let min_tension = axial.iter().copied().fold(f64::INFINITY, f64::min);
    // The swing is still there at the end (lateral midspan motion).
    let mid = model.spans[0].nodes[span.elements / 2];
    let late = time.iter().position(|&t| t >= 0.9 * duration).unwrap_or(records);
    let late_amplitude = (late..records).map(|r| disp[(r * nn + mid) * 3 + 1].abs()).fold(0.0, f64::max);
    Run {
        swing_energy,
        engine_drift,
        independent_drift,
        independent_secular,
        strain_mismatch,
        reported_balance_error: summary.energy_balance_error,
        peak_kinetic,
        min_tension,
        late_amplitude,
        records,
        steps: summary.steps,
        iterations: summary.iterations,
        diverged,
    }
}

fn describe(label: &str, period: f64, r: &Run) -> String {
    format!(
        "{label}: T1 = {period:.4} s, E_s = {:.2} J, drift engine {:.2e}, independent {:.2e} \
         (secular {:+.2e}), \
         strain column vs stored {:.2e} (of E_s); reported balance error {:.2e}; peak KE {:.3e} J, \
         min tension {:.0} N, late lateral amplitude {:.3} m; {} records, {} steps, {:.2} Newton it./step",
        r.swing_energy,
        r.engine_drift,
        r.independent_drift,
        r.independent_secular,
        r.strain_mismatch,
        r.reported_balance_error,
        r.peak_kinetic,
        r.min_tension,
        r.late_amplitude,
        r.records,
        r.steps,
        r.iterations as f64 / r.steps as f64
    )
}

fn check(scheme: &str) {
    let period = first_mode_period(DEEP);
    let r = run(DEEP, scheme, period, 100.0);
    let text = describe(&scheme.replace('\n', " "), period, &r);
    println!("{text}");
    // The set-up: the cable never goes slack.
    assert!(r.min_tension > 0.0, "{text}");
    // 0.1 % of the swinging energy over 100 periods (issue 4).
    assert!(r.engine_drift < 1e-3, "engine energy drift: {text}");
    // The independent total differs from the conserved discrete energy by
    // the trapezoidal quadrature error of ∫ f·dq, bounded and O(h²). 1 % bound, and no secular
    // drift: the mean over the last 10 periods within 0.1 % of E_s of the
    // mean over the first 10.
    assert!(r.independent_drift < 1e-2, "independent energy deviation: {text}");
    assert!(r.independent_secular.abs() < 1e-3, "independent energy secular drift: {text}");
    // Without dissipation the swing keeps its amplitude (1 m released; at
    // least 0.8 m still reached in the last 10 periods).
    assert!(r.late_amplitude > 0.8, "late amplitude: {text}");
}

#[test]
fn hht_alpha_zero_conserves_energy_over_100_swing_periods() {
    check("scheme = \"hht\"\nalpha = 0.0");
}

#[test]
fn generalized_alpha_rho_one_conserves_energy_over_100_swing_periods() {
    check("scheme = \"generalized_alpha\"\nrho_inf = 1.0");
}

/// 100 m with 2 m sag: the same 1 m midspan swing is 27°, and the linear
/// mode shape stretches the cable from 10 to 26 kN; released, elements go
/// slack and snap. The trapezoidal rule (HHT α = 0) is not energy-stable
/// for such nonlinear, non-smooth response (Simo & Tarnow 1992, ZAMP 43;
/// Kuhl & Crisfield 1999, IJNME 45; both from memory): the run blows up
/// within a few periods.
/// That is the scheme's limitation, not a defect, but the run's own energy
/// diagnostics must show it: the `strain` column must be the strain energy
/// stored in the elements (here exactly Σ N² L_t / (2 EA) of the tension-
/// only cable elements, less its initial value) and the reported balance
/// error must flag a total energy that has grown many times over.
///
/// (A trapezoidal work column would not do: HHT α = 0 and generalised-α
/// ρ∞ = 1 balance it against ΔKE + Δ(gravity) exactly, by the schemes' own
/// equations, so such a balance could not fail whatever the motion.)
#[test]
fn energy_diagnostics_flag_an_unstable_undamped_run() {
    const SHALLOW: Span = Span { length: 100.0, sag: 2.0, elements: 16 };
    let period = first_mode_period(SHALLOW);
    let r = run(SHALLOW, "scheme = \"hht\"\nalpha = 0.0", period, 8.0);
    let text = describe("100 m / 2 m sag, HHT α = 0", period, &r);
    println!("{text}");
    // The column means what it says: stored strain energy (1 % of E_s).
    assert!(r.strain_mismatch < 1e-2, "`strain` is not the stored strain energy: {text}");
    // And a blown-up run is not reported as balanced: stopped as diverged
    // (issue 8), or its balance error says so.
    if let Some(report) = &r.diverged {
        assert!(report.contains("diverged") && report.contains("worst DOF"), "{report}");
    } else if r.independent_drift > 1.0 {
        assert!(r.reported_balance_error > 1e-2, "energy grew but the balance error says otherwise: {text}");
    }
}
