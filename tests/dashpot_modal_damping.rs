//! A linear dashpot across the line at midspan of a single conductor damps
//! the first (transverse, one-loop) mode at the ratio that first-order
//! perturbation of the undamped modes gives for light damping:
//! ζ₁ = c φ₁(x_d)² / (2 ω₁), with φ₁ mass-normalised (φᵀMφ = 1) and
//! φ₁(x_d) its component along the dashpot's line at the dashpot (the
//! diagonal term of the modal damping matrix ΦᵀCΦ; Rayleigh's
//! approximation for non-classical damping, e.g. Chopra, *Dynamics of
//! Structures*, from memory). The run starts with the mode's velocity,
//! undamped otherwise (no Rayleigh damping, HHT α = 0), and the ratio is
//! measured from the logarithmic decrement of the midspan motion,
//! ζ = δ / √(4π² + δ²) (free vibration of a damped oscillator, closed form).
//! The dashpot's dissipation enters the energy balance, which must close.

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::analysis::{run_modal, run_static, ModalSettings};
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, model, ElementRegistry};
use std::path::Path;
use std::sync::atomic::AtomicBool;

const C: f64 = 15.0; // N·s/m
const SPAN: f64 = 300.0; // m

fn input_text(dynamics: &str) -> String {
    format!(
        r#"[glaze]
schema_version = 1
[conductors.acsr_795]
diameter = 0.02814
mass_per_length = 1.628
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 140100.0
[insulators.dead_end]
kind = "dead_end"
length = 2.0
mass = 60.0
[[towers]]
name = "T1"
chainage = 0.0
ground = 100.0
kind = "dead_end"
insulator = "dead_end"
attachments = {{ A = [3.0, 24.0] }}
[[towers]]
name = "T2"
chainage = {SPAN}
ground = 100.0
kind = "dead_end"
insulator = "dead_end"
attachments = {{ A = [3.0, 24.0] }}
[[phases]]
name = "A"
conductor = "acsr_795"
horizontal_tension = 24000.0
[mesh]
type = "beam"
element_length = 7.5
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
[section]
layout = "damped"
[layouts.damped]
devices = [{{ type = "linear_dashpot", span = 1, distance = 150.0, phase = "A", coefficient = {C}, direction = "across" }}]
{dynamics}
"#
    )
}

#[test]
fn a_midspan_dashpot_damps_the_first_mode_at_the_perturbation_ratio() {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("dashpot.toml"), &input_text(""), &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let modes = run_modal(&mdl, &stat, &ModalSettings::new(2)).unwrap();
    assert!(modes.labels[0].starts_with("transverse, 1 loop"), "mode 1 is {}", modes.labels[0]);
    let mid = (0..mdl.nodes.len())
        .filter(|&n| mdl.nodes[n].y.abs() < 10.0)
        .min_by(|&a, &b| (mdl.nodes[a].x - 150.0).abs().total_cmp(&(mdl.nodes[b].x - 150.0).abs()))
        .unwrap();
    assert!((mdl.nodes[mid].x - 150.0).abs() < 1e-6, "a node at the dashpot");
    let across = modes.shapes[0][mid][1]; // e_T = z × e_L = +Y for a span along +X
    let omega = modes.omega[0];
    let zeta_ref = C * across * across / (2.0 * omega);
    assert!(zeta_ref > 0.005 && zeta_ref < 0.05, "light damping: ζ = {zeta_ref}");

    let periods = 8.0;
    let dynamics = format!(
        "[dynamics]\nduration = {}\ntime_step = 0.01\noutput_interval = 0.01\nscheme = \"hht\"\nalpha = 0.0\n\
         damping = {{ mass_coefficient = 0.0, stiffness_coefficient = 0.0 }}\n\
         perturbation = {{ mode = 1, amplitude = 0.05, start = \"velocity\" }}\n",
        periods * 2.0 * std::f64::consts::PI / omega
    );
    let text = input_text(&dynamics);
    let spec = input::load_str(Path::new("dashpot.toml"), &text, &registry).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let writer = ResultsWriter::create(&dir.path().join("run.h5"), &text).unwrap();
    let summary = run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).unwrap();
    let path = writer.finish(0.0).unwrap();
    assert!(summary.energy_balance_error < 1e-2, "energy balance error {}", summary.energy_balance_error);

    let file = hdf5::File::open(&path).unwrap();
    let u = file.dataset("dynamic/displacement").unwrap().read_raw::<f64>().unwrap();
    let records = file.dataset("dynamic/time").unwrap().read_raw::<f64>().unwrap().len();
    let per = u.len() / records;
    let y: Vec<f64> = (0..records).map(|r| u[r * per + 3 * mid + 1]).collect();
    // Positive peaks of the midspan across-line motion.
    let peaks: Vec<f64> = (1..records - 1)
        .filter(|&r| y[r] > y[r - 1] && y[r] >= y[r + 1] && y[r] > 0.0)
        .map(|r| y[r])
        .collect();
    assert!(peaks.len() >= 6, "{} peaks", peaks.len());
    let n = peaks.len() - 1;
    let delta = (peaks[0] / peaks[n]).ln() / n as f64;
    let zeta = delta / (4.0 * std::f64::consts::PI.powi(2) + delta * delta).sqrt();
    println!(
        "measured ζ = {zeta:.5}, first-order ζ = {zeta_ref:.5}, energy error {:.2e}",
        summary.energy_balance_error
    );
    assert!(
        (zeta / zeta_ref - 1.0).abs() < 0.05,
        "measured ζ = {zeta:.5} from {} peaks, first-order ζ = c φ² / 2ω = {zeta_ref:.5}",
        peaks.len()
    );
}
