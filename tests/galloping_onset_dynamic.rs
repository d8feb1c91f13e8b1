//! Galloping onset in the time domain (issue 4, "Must show: Galloping
//! onset"): the single taut span of `tests/den_hartog_onset.rs` (cable
//! elements; lift table C_D = 0, C_L = −2α, C_M = 0, invented for the
//! test), its first vertical mode's onset speed U_c from `run_screening`,
//! then nonlinear simulations through the engine (`run_dynamic`, HHT α = 0)
//! at 0.9 U_c and 1.1 U_c from a small perturbation in that mode.
//!
//! Structural damping: Rayleigh, stiffness-proportional only, `a1 = 2ξ/ω_v`
//! with ω_v the circular frequency of that mode, so its modal damping ratio
//! is exactly `a1 ω_v / 2 = ξ` (Clough & Penzien 1993, eq. 12-34); the
//! same ξ = 1 % the screening assumes.
//!
//! Linear prediction: in vertical motion the quasi-steady aerodynamic
//! damping ratio is Den Hartog's `ξ_a = ρ U D (dC_L/dα + C_D) / (4 m ω)`
//! (Den Hartog 1932, Trans. AIEE 51; Blevins, *Flow-Induced Vibration*,
//! 2nd ed. 1990, §4.2), proportional to U, so the total `ξ + ξ_a` vanishes
//! at U_c and is `ξ (1 − U/U_c)`: +0.1 ξ at 0.9 U_c (decay), −0.1 ξ at
//! 1.1 U_c (growth). The amplitude envelope of a lightly damped mode is
//! `exp(−(ξ + ξ_a) ω t)`. Checks:
//!
//! - the mean of the first three positive peaks of the vertical midspan
//!   displacement against the last three: smaller at 0.9 U_c, larger at
//!   1.1 U_c;
//! - the envelope rate (least-squares slope of ln(peak) against time over
//!   the whole run) against `−(ξ + ξ_a) ω` within 20 % (issue brief).

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::analysis::run_screening;
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, ElementRegistry};
use std::f64::consts::PI;
use std::path::Path;
use std::sync::atomic::AtomicBool;

const K_LIFT: f64 = -2.0; // dC_L/dα, 1/rad (the table below)
const D: f64 = 0.03; // m, reference diameter
const RHO: f64 = 1.225; // kg/m³, ISA sea level (ISO 2533), the engine default
const M: f64 = 1.628; // kg/m
const XI: f64 = 0.01; // structural damping ratio
const ELEMENTS: usize = 40;
const PERIODS: f64 = 100.0;
const STEPS_PER_PERIOD: f64 = 50.0;

fn input_text(speed: f64, dynamics: &str) -> String {
    format!(
        r#"[glaze]
schema_version = 1
[conductors.c]
diameter = {D}
mass_per_length = {M}
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 140100.0
aero_table = "linear_lift.csv"
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [200.0, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = 60000.0
[mesh]
type = "cable"
elements_per_span = {ELEMENTS}
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
wind = {{ speed = {speed}, direction = 90.0 }}
[screening]
wind_speeds = [2.0, 30.0]
structural_damping = {XI}
modes = 6
{dynamics}
"#
    )
}

fn table() -> String {
    let mut t = format!("# reference_diameter = {D}\nalpha_deg, cd, cl, cm\n");
    for a in (-30..=30).step_by(5) {
        let r = (a as f64).to_radians();
        t.push_str(&format!("{a}, 0.0, {}, 0.0\n", K_LIFT * r));
    }
    t
}

/// The first vertical mode: number, circular frequency (rad/s), screening onset (m/s).
fn first_vertical(dir: &Path) -> (usize, f64, f64) {
    let path = dir.join("onset.toml");
    std::fs::write(&path, input_text(10.0, "")).unwrap();
    let registry = ElementRegistry::with_builtin();
    let spec = input::load(&path, &registry).unwrap();
    let r = run_screening(&spec, &registry).unwrap();
    let m = r
        .modes
        .iter()
        .filter(|m| m.at_speed[0].label.starts_with("vertical"))
        .min_by(|a, b| a.at_speed[0].frequency_hz.total_cmp(&b.at_speed[0].frequency_hz))
        .expect("a vertical mode");
    let omega = 2.0 * PI * m.at_speed[0].frequency_hz;
    let onset = m.onset_speed.expect("onset inside the sweep");
    // The screening onset is Den Hartog's (tests/den_hartog_onset.rs checks it to 0.5 %).
    let closed_form = -4.0 * M * XI * omega / (RHO * D * K_LIFT);
    assert!((onset / closed_form - 1.0).abs() < 5e-3, "onset {onset} vs Den Hartog {closed_form}");
    (m.mode, omega, onset)
}

struct Envelope {
    /// Positive peaks (time s, amplitude m).
    peaks: Vec<(f64, f64)>,
    /// Least-squares slope of ln(peak) against time, 1/s.
    rate: f64,
    steps: usize,
}

fn simulate(dir: &Path, speed: f64, mode: usize, omega: f64) -> Envelope {
    let period = 2.0 * PI / omega;
    let dt = period / STEPS_PER_PERIOD;
    let a1 = 2.0 * XI / omega;
    let dynamics = format!(
        "[dynamics]\nduration = {}\ntime_step = {dt}\noutput_interval = {dt}\nscheme = \"hht\"\nalpha = 0.0\n\
         damping = {{ stiffness_coefficient = {a1:.17e} }}\nperturbation = {{ mode = {mode}, amplitude = 0.05 }}\n",
        PERIODS * period
    );
    let text = input_text(speed, &dynamics);
    let path = dir.join(format!("run_{speed:.4}.toml"));
    std::fs::write(&path, &text).unwrap();
    let registry = ElementRegistry::with_builtin();
    let spec = input::load(&path, &registry).unwrap();
    let target = dir.join(format!("run_{speed:.4}.h5"));
    let writer = ResultsWriter::create(&target, &text).unwrap();
    let summary = run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {})
        .unwrap_or_else(|e| panic!("U = {speed}: {e}"));
    assert!((summary.rayleigh.1 - a1).abs() < 1e-12 * a1 && summary.rayleigh.0 == 0.0);
    let out = writer.finish(0.0).unwrap();

    let file = hdf5::File::open(&out).unwrap();
    let ds = file.dataset("dynamic/displacement").unwrap();
    let shape = ds.shape();
    let (records, nn) = (shape[0], shape[1]);
    let disp = ds.read_raw::<f64>().unwrap();
    let time = file.dataset("dynamic/time").unwrap().read_raw::<f64>().unwrap();
    // Midspan node: the mesh numbers the span's nodes in order from A.
    let model = glaze_engine::model::build(&spec, &registry).unwrap();
    let mid = model.spans[0].nodes[ELEMENTS / 2];
    assert!(mid < nn);
    let z: Vec<f64> = (0..records).map(|r| disp[(r * nn + mid) * 3 + 2]).collect();
    let y_max = (0..records).map(|r| disp[(r * nn + mid) * 3 + 1].abs()).fold(0.0, f64::max);
    let z_max = z.iter().fold(0.0f64, |a, &b| a.max(b.abs()));
    // The wind has no drag and the mode is vertical: the span does not swing.
    assert!(y_max < 1e-2 * z_max, "lateral {y_max} m against vertical {z_max} m");
    // Positive peaks, refined by the parabola through the three samples.
    let peaks: Vec<(f64, f64)> = (1..records - 1)
        .filter(|&i| z[i] > 0.0 && z[i] > z[i - 1] && z[i] >= z[i + 1])
        .map(|i| {
            let c = z[i + 1] - 2.0 * z[i] + z[i - 1];
            let s = 0.5 * (z[i - 1] - z[i + 1]) / c;
            (time[i] + s * (time[i + 1] - time[i]), z[i] - 0.25 * (z[i + 1] - z[i - 1]) * s)
        })
        .collect();
    assert!(peaks.len() as f64 > 0.9 * PERIODS, "{} peaks in {PERIODS} periods", peaks.len());
    // Least-squares slope of ln(peak) on time.
    let n = peaks.len() as f64;
    let (st, sl) = peaks.iter().fold((0.0, 0.0), |(a, b), &(t, p)| (a + t, b + p.ln()));
    let (mt, ml) = (st / n, sl / n);
    let (num, den) = peaks
        .iter()
        .fold((0.0, 0.0), |(a, b), &(t, p)| (a + (t - mt) * (p.ln() - ml), b + (t - mt) * (t - mt)));
    Envelope { peaks, rate: num / den, steps: summary.steps }
}

#[test]
fn first_vertical_mode_decays_below_and_grows_above_the_screening_onset() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("linear_lift.csv"), table()).unwrap();
    let (mode, omega, onset) = first_vertical(dir.path());
    let mut report = vec![format!(
        "first vertical mode {mode}: ω = {omega:.5} rad/s, screening onset U_c = {onset:.5} m/s"
    )];
    for factor in [0.9, 1.1] {
        let speed = factor * onset;
        let env = simulate(dir.path(), speed, mode, omega);
        // Den Hartog: ξ_a = ρ U D (dC_L/dα + C_D)/(4 m ω).
        let xi_a = RHO * speed * D * (K_LIFT + 0.0) / (4.0 * M * omega);
        let predicted = -(XI + xi_a) * omega;
        let k = env.peaks.len();
        let first = env.peaks[..3].iter().map(|p| p.1).sum::<f64>() / 3.0;
        let last = env.peaks[k - 3..].iter().map(|p| p.1).sum::<f64>() / 3.0;
        let line = format!(
            "U = {factor} U_c = {speed:.4} m/s: ξ + ξ_a = {:+.5}, envelope rate {:+.5e} 1/s vs predicted {:+.5e} \
             ({:+.1} %), first peaks {first:.5} m, last {last:.5} m, {k} peaks, {} steps",
            XI + xi_a,
            env.rate,
            predicted,
            100.0 * (env.rate / predicted - 1.0),
            env.steps
        );
        report.push(line);
        let text = report.join("\n");
        if factor < 1.0 {
            assert!(last < first, "below onset the oscillation must decay:\n{text}");
        } else {
            assert!(last > first, "above onset the oscillation must grow:\n{text}");
        }
        // 20 % of the linear prediction.
        assert!((env.rate / predicted - 1.0).abs() < 0.2, "envelope rate:\n{text}");
    }
    println!("{}", report.join("\n"));
}
