//! Den Hartog onset against its closed form (Den Hartog 1932, "Transmission
//! line vibration due to sleet", Trans. AIEE 51; Blevins, *Flow-Induced
//! Vibration*, 2nd ed. 1990, §4.2): a section with a linear lift slope
//! `dC_L/dα = k` and drag `C_D` in a horizontal wind `U` has aerodynamic
//! damping ratio `ρ U D (k + C_D) / (4 m ω)` in vertical motion, so a mode of
//! structural damping ξ starts to gallop at
//! `U = −4 m ξ ω / (ρ D (k + C_D))`.
//!
//! Model: a taut level span (sag 0.33 % of the span, so its vertical modes
//! are vertical to better than 0.1 % of their kinetic energy) with a table
//! C_D = 0, C_L = −2α, C_M = 0 (invented for the test): no drag, so the span
//! does not swing, and the angle of attack stays 0 at every speed.

use glaze_engine::analysis::run_screening;
use glaze_engine::{input, ElementRegistry};

const K_LIFT: f64 = -2.0; // dC_L/dα, 1/rad
const D: f64 = 0.03; // reference diameter, m
const RHO: f64 = 1.225; // ISA air density, kg/m³
const M: f64 = 1.628; // mass per length, kg/m
const XI: f64 = 0.01; // structural damping ratio

fn input_text(kind: &str) -> String {
    format!(
        r#"
[glaze]
schema_version = 1
[conductors.c]
diameter = 0.03
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
type = "{kind}"
elements_per_span = 60
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
wind = {{ speed = 10.0, direction = 90.0 }}
[screening]
wind_speeds = [2.0, 30.0]
structural_damping = {XI}
modes = 6
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

#[test]
fn first_vertical_mode_onset_matches_den_hartog() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("linear_lift.csv"), table()).unwrap();
    for kind in ["cable", "beam"] {
        let path = dir.path().join(format!("span_{kind}.toml"));
        let text = input_text(kind);
        std::fs::write(&path, &text).unwrap();
        let registry = ElementRegistry::with_builtin();
        let spec = input::load(&path, &registry).unwrap();
        let r = run_screening(&spec, &registry).unwrap();
        let vertical: Vec<_> =
            r.modes.iter().filter(|m| m.at_speed[0].label.starts_with("vertical")).collect();
        assert!(vertical.len() >= 2, "{kind}: vertical modes found: {}", vertical.len());
        for m in vertical {
            let omega = 2.0 * std::f64::consts::PI * m.at_speed[0].frequency_hz;
            let closed_form = -4.0 * M * XI * omega / (RHO * D * (K_LIFT + 0.0));
            let dh = m.den_hartog_speed.expect("negative aerodynamic damping");
            let onset = m.onset_speed.expect("onset inside the sweep");
            // 0.5 %: lumped mass against Gauss-integrated aerodynamic damping (O(h²)).
            assert!(
                (dh / closed_form - 1.0).abs() < 5e-3,
                "{kind} {}: DH {dh} vs {closed_form}",
                m.at_speed[0].label
            );
            assert!((onset / closed_form - 1.0).abs() < 5e-3, "{kind}: onset {onset} vs {closed_form}");
        }
        // Horizontal modes feel no damping without drag (C_yy = ρ U D C_D = 0).
        for m in r.modes.iter().filter(|m| m.at_speed[0].label.starts_with("transverse")) {
            assert!(m.at_speed[0].aero_damping.abs() < 1e-9, "{kind}: {:?}", m.at_speed[0]);
        }
    }
}
