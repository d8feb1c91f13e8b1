//! A twin-bundle span started with the velocity of its first mode
//! (`perturbation.start = "velocity"`), undamped, HHT α = 0.
//!
//! Reference: an undamped linear mode is a single-degree-of-freedom
//! oscillator, q(t) = (v₀/ω) sin ωt (closed form of free vibration). Started
//! with v₀ = ω A φ̂ from the static state, the largest displacement over the
//! run is A, reached a quarter period T/4 = 1/(4f) after the start, f the
//! mode's natural frequency from the modal solver; and the total energy
//! (kinetic + strain + gravity) stays at its start value, since the
//! trapezoidal rule (α = 0) conserves the energy of a linear system
//! (Newmark 1959, average acceleration; from memory).
//!
//! The displacement start (the state moved along the linear shape) is the
//! contrast: scaled to a finite size, the linear shape stretches the rigid
//! spacer frames and the conductor to second order, and that strain energy
//! is shed in the first step.

mod common;

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::analysis::{run_modal, run_static, ModalSettings};
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, model, ElementRegistry};
use std::path::Path;
use std::sync::atomic::AtomicBool;

const A: f64 = 0.05; // m, size of the start

fn input_text(dynamics: &str) -> String {
    common::level_span_input(
        300.0,
        10.0,
        "bundle = { count = 2, spacing = 0.457 }",
        "[spacers]\nkind = \"rigid\"\nmax_subspan = 60.0\nmass = 2.5\n",
        dynamics,
    )
}

fn run(
    dir: &Path,
    start: &str,
    duration: f64,
) -> (glaze_engine::analysis::dynamic_stage::DynamicSummary, std::path::PathBuf) {
    let dynamics = format!(
        "[dynamics]\nduration = {duration}\ntime_step = 0.01\noutput_interval = 0.01\nscheme = \"hht\"\nalpha = 0.0\n\
         damping = {{ mass_coefficient = 0.0, stiffness_coefficient = 0.0 }}\n\
         perturbation = {{ mode = 1, amplitude = {A}, start = \"{start}\" }}\n"
    );
    let text = input_text(&dynamics);
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(&dir.join(format!("{start}.toml")), &text, &registry).unwrap();
    let path = dir.join(format!("{start}.h5"));
    let writer = ResultsWriter::create(&path, &text).unwrap();
    let s = run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).unwrap();
    (s, writer.finish(0.0).unwrap())
}

#[test]
fn a_velocity_start_swings_to_its_size_a_quarter_period_later_and_keeps_its_energy() {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("twin.toml"), &input_text(""), &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let modes = run_modal(&mdl, &stat, &ModalSettings::new(1)).unwrap();
    let f1 = modes.frequency_hz[0];

    let dir = tempfile::tempdir().unwrap();
    let duration = 1.5 / f1;
    let (summary, path) = run(dir.path(), "velocity", duration);
    let file = hdf5::File::open(&path).unwrap();
    let time = file.dataset("dynamic/time").unwrap().read_raw::<f64>().unwrap();
    let u = file.dataset("dynamic/displacement").unwrap().read_raw::<f64>().unwrap();
    let per_record = u.len() / time.len();
    let magnitude = |r: usize, node: usize| {
        let p = &u[r * per_record + 3 * node..r * per_record + 3 * node + 3];
        (p[0] * p[0] + p[1] * p[1] + p[2] * p[2]).sqrt()
    };
    let nodes = per_record / 3;
    let (mut peak, mut at_record, mut at_node) = (0.0, 0, 0);
    for r in 0..time.len() {
        for n in 0..nodes {
            if magnitude(r, n) > peak {
                (peak, at_record, at_node) = (magnitude(r, n), r, n);
            }
        }
    }
    // Largest displacement A (closed form x_max = v₀/ω = A), within 1 %.
    assert!((peak / A - 1.0).abs() < 0.01, "peak {peak} m against {A} m");
    // First maximum of that node at T/4 (and the record at T/4 within one output interval).
    let first_peak = (0..time.len())
        .take_while(|&r| time[r] < 0.5 / f1)
        .max_by(|&a, &b| magnitude(a, at_node).total_cmp(&magnitude(b, at_node)))
        .unwrap();
    let quarter = 0.25 / f1;
    assert!(
        (time[first_peak] - quarter).abs() <= 0.02 * quarter + 0.01,
        "first maximum at {} s, T/4 = {quarter} s (f1 = {f1} Hz; overall peak at record {at_record})",
        time[first_peak]
    );
    // Energy conserved to 0.5 % of the largest term (trapezoidal rule, linear limit).
    assert!(summary.energy_balance_error < 5e-3, "energy balance error {}", summary.energy_balance_error);
    assert_eq!(summary.rejected_steps, 0);

    // The displacement start of the same size loses energy in its first step.
    let (displaced, _) = run(dir.path(), "displacement", 0.2);
    assert!(
        displaced.energy_balance_error > 10.0 * summary.energy_balance_error,
        "displacement start {} against velocity start {}",
        displaced.energy_balance_error,
        summary.energy_balance_error
    );
}
