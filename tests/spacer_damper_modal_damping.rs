//! Spacer-dampers on a quad-bundle span: rigid arms hinged to a central
//! frame, each hinge with a rotational spring and dashpot about the bundle
//! axis. The hinge dashpots damp a bundle mode that swings the arms at the
//! ratio that first-order perturbation of the undamped modes gives for
//! light damping: ζ = Σ_h c (Δθ_h · e)² / (2 ω), with the mode shape
//! mass-normalised (φᵀMφ = 1) and Δθ_h the rotation of hinge h's arm
//! relative to its frame in that shape (the diagonal term of ΦᵀCΦ;
//! Rayleigh's approximation for non-classical damping, e.g. Chopra,
//! *Dynamics of Structures*, from memory). The run starts with the mode's
//! velocity, otherwise undamped (no Rayleigh damping, HHT α = 0), and the
//! ratio is measured from the logarithmic decrement of the motion of the
//! mode's largest node, ζ = δ / √(4π² + δ²) (damped free vibration,
//! closed form). The dashpots' dissipation enters the energy balance.

mod common;

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::analysis::{run_modal, run_static, ModalSettings};
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, model, ElementRegistry};
use std::path::Path;
use std::sync::atomic::AtomicBool;

const HINGE_DAMPING: f64 = 2.0; // N·m·s/rad
const HINGE_STIFFNESS: f64 = 60.0; // N·m/rad

fn input_text(dynamics: &str) -> String {
    let spacers = format!(
        "[spacers]\nkind = \"damper\"\nmax_subspan = 70.0\nmass = 8.0\nframe_mass = 4.0\nframe_inertia = 0.15\n\
         hinge_stiffness = {HINGE_STIFFNESS}\nhinge_damping = {HINGE_DAMPING}\n"
    );
    common::level_span_input(
        200.0,
        10.0,
        "bundle = { count = 4, spacing = 0.457, orientation = 45.0 }",
        &spacers,
        dynamics,
    )
}

#[test]
fn hinge_dashpots_damp_a_bundle_mode_at_the_perturbation_ratio() {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("quad.toml"), &input_text(""), &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let count = 30;
    let modes = run_modal(&mdl, &stat, &ModalSettings::new(count)).unwrap();
    // Hinges: the clamp joints whose first node is a spacer frame's hub.
    let hubs = &mdl.groups["spacers"];
    let hinges: Vec<[usize; 2]> = mdl
        .elements
        .iter()
        .filter(|e| e.kind() == "clamp_joint" && hubs.contains(&e.nodes()[0]))
        .map(|e| [e.nodes()[0], e.nodes()[1]])
        .collect();
    assert_eq!(hinges.len(), 4 * hubs.len(), "one hinge per arm");
    // First-order ratio of every mode; the span runs along +X, so the
    // bundle axis at the spacers is X up to the sag slope (< 0.03 rad, an
    // error below 0.1 % in ζ).
    let zeta_of = |m: usize| {
        let s = &modes.shapes[m];
        let sum: f64 = hinges.iter().map(|&[h, r]| (s[r][3] - s[h][3]).powi(2)).sum();
        HINGE_DAMPING * sum / (2.0 * modes.omega[m])
    };
    // The most damped mode among those clear of their neighbours by 5 % in
    // frequency (light damping couples close modes, and a decay of two
    // beating modes has no single decrement).
    let f = &modes.frequency_hz;
    let clear = |m: usize| (m == 0 || f[m] > 1.05 * f[m - 1]) && m + 1 < count && f[m + 1] > 1.05 * f[m];
    let (mode, zeta_ref) =
        (0..count).filter(|&m| clear(m)).map(|m| (m, zeta_of(m))).max_by(|a, b| a.1.total_cmp(&b.1)).unwrap();
    println!(
        "mode {}: {} at {:.3} Hz, first-order ζ = {zeta_ref:.5}",
        mode + 1,
        modes.labels[mode],
        modes.frequency_hz[mode]
    );
    assert!(zeta_ref > 0.003 && zeta_ref < 0.05, "light damping: ζ = {zeta_ref}");

    let omega = modes.omega[mode];
    let periods = 10.0;
    let dynamics = format!(
        "[dynamics]\nduration = {}\ntime_step = {}\noutput_interval = {}\nscheme = \"hht\"\nalpha = 0.0\n\
         damping = {{ mass_coefficient = 0.0, stiffness_coefficient = 0.0 }}\n\
         perturbation = {{ mode = {}, amplitude = 0.02, start = \"velocity\" }}\n",
        periods * 2.0 * std::f64::consts::PI / omega,
        (2.0 * std::f64::consts::PI / omega / 80.0).min(0.01),
        (2.0 * std::f64::consts::PI / omega / 80.0).min(0.01),
        mode + 1
    );
    let text = input_text(&dynamics);
    let spec = input::load_str(Path::new("quad.toml"), &text, &registry).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let writer = ResultsWriter::create(&dir.path().join("run.h5"), &text).unwrap();
    let summary = run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).unwrap();
    let path = writer.finish(0.0).unwrap();
    // The balance books the dashpots' work as the trapezoid of the end-of-step
    // powers, which overstates it by (h/4) Δvᵀ C Δv per step where the
    // stiff hinge-and-frame motion rings: about 1 % here against 0.3 %
    // with the dashpots off.
    assert!(summary.energy_balance_error < 1.5e-2, "energy balance error {}", summary.energy_balance_error);

    // The mode's largest translation: its node and direction.
    let s = &modes.shapes[mode];
    let (node, dir) = (0..s.len())
        .flat_map(|n| (0..3).map(move |d| (n, d)))
        .max_by(|a, b| s[a.0][a.1].abs().total_cmp(&s[b.0][b.1].abs()))
        .unwrap();
    let file = hdf5::File::open(&path).unwrap();
    let u = file.dataset("dynamic/displacement").unwrap().read_raw::<f64>().unwrap();
    let records = file.dataset("dynamic/time").unwrap().read_raw::<f64>().unwrap().len();
    let per = u.len() / records;
    let sign = s[node][dir].signum();
    let y: Vec<f64> = (0..records).map(|r| sign * u[r * per + 3 * node + dir]).collect();
    let peaks: Vec<f64> = (1..records - 1)
        .filter(|&r| y[r] > y[r - 1] && y[r] >= y[r + 1] && y[r] > 0.0)
        .map(|r| y[r])
        .collect();
    assert!(peaks.len() >= 8, "{} peaks", peaks.len());
    let n = peaks.len() - 1;
    let delta = (peaks[0] / peaks[n]).ln() / n as f64;
    let zeta = delta / (4.0 * std::f64::consts::PI.powi(2) + delta * delta).sqrt();
    println!(
        "measured ζ = {zeta:.5} from {} peaks, first-order ζ = {zeta_ref:.5}, energy error {:.2e}",
        peaks.len(),
        summary.energy_balance_error
    );
    assert!(
        (zeta / zeta_ref - 1.0).abs() < 0.05,
        "measured ζ = {zeta:.5}, first-order ζ = Σ c Δθ² / 2ω = {zeta_ref:.5}"
    );
}
