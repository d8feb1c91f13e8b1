//! A start in a torsional mode: `perturbation.twist` sizes it by its
//! largest rotation, and an `amplitude` in metres on such a mode is refused
//! (scaled by its tiny translations it would wind the conductor up by
//! thousands of radians).
//!
//! Reference: the torsional string `j θ_tt = GJ θ_ss`, both ends held in
//! twist, whose first mode oscillates at `f₁ = 1/(2S) √(GJ/j)` with S the
//! conductor length and `j = m d²/8` the polar inertia per length of a solid
//! round section (closed form of the wave equation; the same reference as
//! `closed_form_frequencies.rs`, where the modal solver meets it to 0.5 %).
//! Released from rest in that mode, undamped, with HHT α = 0 (no
//! algorithmic damping), the midspan twist must swing at f₁ and keep its
//! amplitude.

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::analysis::mode_shape::class;
use glaze_engine::analysis::{run_modal, run_static, ModalSettings};
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, model, ElementRegistry};
use std::path::Path;
use std::sync::atomic::AtomicBool;

const L: f64 = 400.0; // m, level span
const H: f64 = 24000.0; // N, horizontal tension
const M: f64 = 1.628; // kg/m
const D: f64 = 0.02814; // m
const GJ: f64 = 35.0; // N m²/rad
const ELEMENTS: usize = 80;

fn input_text(dynamics: &str) -> String {
    format!(
        r#"[glaze]
schema_version = 1
[conductors.c]
diameter = {D}
mass_per_length = {M}
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = {GJ}
thermal_expansion = 18.9e-6
rated_strength = 140100.0
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [{L}, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = {H}
[mesh]
type = "beam"
elements_per_span = {ELEMENTS}
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
{dynamics}
"#
    )
}

/// The first torsional mode's number (1-based) and the conductor length S, m.
fn first_torsional_mode() -> (usize, f64) {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("twist.toml"), &input_text(""), &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let r = run_modal(&mdl, &stat, &ModalSettings::new(10)).unwrap();
    let k = (0..r.frequency_hz.len())
        .find(|&k| r.energy_share[k][class::TORSIONAL] > 0.99)
        .expect("a torsional mode among the lowest 10");
    (k + 1, stat.spans[0].conductor_length)
}

fn run(dir: &Path, perturbation: &str, duration: f64) -> Result<std::path::PathBuf, String> {
    let dynamics = format!(
        "[dynamics]\nduration = {duration}\ntime_step = 0.01\noutput_interval = 0.01\nscheme = \"hht\"\n\
         alpha = 0.0\nperturbation = {perturbation}\n"
    );
    let text = input_text(&dynamics);
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(&dir.join("run.toml"), &text, &registry).unwrap();
    let writer = ResultsWriter::create(&dir.join("run.h5"), &text).unwrap();
    run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {})
        .map_err(|e| e.to_string())?;
    Ok(writer.finish(0.0).unwrap())
}

#[test]
fn a_torsional_mode_is_started_by_its_twist_and_swings_at_the_string_frequency() {
    let (mode, s) = first_torsional_mode();
    let f1 = 1.0 / (2.0 * s) * (GJ / (M * D * D / 8.0)).sqrt();
    let dir = tempfile::tempdir().unwrap();

    // Metres on a torsional mode: refused, and the message says what to give.
    let err = run(dir.path(), &format!("{{ mode = {mode}, amplitude = 0.1 }}"), 0.1).unwrap_err();
    assert!(err.contains("dynamics.perturbation") && err.contains("`twist`"), "{err}");
    assert!(!dir.path().join("run.h5").exists(), "a refused run leaves no results file");

    // 0.05 rad of twist, four periods.
    let theta0 = 0.05;
    let out = run(dir.path(), &format!("{{ mode = {mode}, twist = {theta0} }}"), 4.0 / f1).unwrap();
    let file = hdf5::File::open(&out).unwrap();
    let time = file.dataset("dynamic/time").unwrap().read_raw::<f64>().unwrap();
    let rot = file.dataset("dynamic/rotation").unwrap();
    let nn = rot.shape()[1];
    let q = rot.read_raw::<f64>().unwrap();
    let mid = ELEMENTS / 2; // the mesh numbers the span's nodes in order from A
                            // Twist about the span axis (global X) from the quaternion (w, x, y, z).
    let twist: Vec<f64> = (0..time.len())
        .map(|r| {
            let b = (r * nn + mid) * 4;
            2.0 * q[b + 1].atan2(q[b])
        })
        .collect();
    // The largest rotation of the first torsional mode is at midspan.
    assert!((twist[0].abs() - theta0).abs() < 1e-3 * theta0, "start twist {} rad", twist[0]);
    // Zero crossings (linear interpolation) give the period.
    let crossings: Vec<f64> = (1..twist.len())
        .filter(|&i| twist[i - 1].signum() != twist[i].signum())
        .map(|i| time[i - 1] + (time[i] - time[i - 1]) * twist[i - 1] / (twist[i - 1] - twist[i]))
        .collect();
    assert!(crossings.len() >= 7, "{} zero crossings", crossings.len());
    let period = 2.0 * (crossings[crossings.len() - 1] - crossings[0]) / (crossings.len() - 1) as f64;
    let rel = period * f1 - 1.0;
    println!("first torsional mode {mode}: period {period:.4} s, closed form {:.4} s ({rel:+.2e})", 1.0 / f1);
    // 5 m elements: the modal frequency is 0.5 % above the closed form
    // (closed_form_frequencies.rs); Δt = T/340 adds ≈ 0.003 % of period
    // elongation (trapezoidal rule, (ωΔt)²/12).
    assert!(rel.abs() < 0.01, "period {period} s against {} s", 1.0 / f1);
    // Undamped: the amplitude stays at its start value.
    let late = twist[twist.len() / 2..].iter().fold(0.0f64, |a, &b| a.max(b.abs()));
    assert!((late / theta0 - 1.0).abs() < 0.02, "late amplitude {late} rad against {theta0} rad");
}
