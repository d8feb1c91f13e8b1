//! Swing of a bare level span in a steady uniform cross wind against the
//! hand calculation `tan φ = drag per length / weight per length`
//! (common practice, e.g. IEC 60826 §7.1 conductor swing; the drag per
//! length is ½ ρ U² D C_D, the weight m g).
//!
//! The hand value treats the whole conductor as square to the wind; the
//! model uses only the wind component normal to the conductor, which is
//! lower near the supports where the swung conductor slopes across the
//! wind, by a fraction of the order of (sag slope)² sin²φ. The span here
//! is taut (sag/span ≈ 1.6 %) so that the two agree to 0.2 %.

use glaze_engine::{analysis::run_static, input, model, ElementRegistry};
use std::path::Path;

const D: f64 = 0.02814; // m, ACSR 26/7 (ASTM B232, from memory)
const MASS: f64 = 1.628; // kg/m
const RHO: f64 = 1.225; // kg/m³, ISA sea level (ISO 2533)
const G: f64 = 9.80665; // m/s²

fn input_text(kind: &str, speed: f64) -> String {
    format!(
        r#"
[glaze]
schema_version = 1
[conductors.c]
diameter = {D}
mass_per_length = {MASS}
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 140100.0
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [400.0, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = 20000.0
[mesh]
type = "{kind}"
elements_per_span = 40
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
wind = {{ speed = {speed}, direction = 90.0 }}
"#
    )
}

#[test]
fn midspan_swing_angle_matches_drag_over_weight() {
    let registry = ElementRegistry::with_builtin();
    for kind in ["cable", "beam"] {
        for speed in [10.0, 25.0] {
            let spec = input::load_str(Path::new("swing.toml"), &input_text(kind, speed), &registry).unwrap();
            let m = model::build(&spec, &registry).unwrap();
            let r = run_static(&spec, &m).unwrap();
            let mid = m.spans[0].nodes[20];
            let p = r.config.positions[mid];
            // Swing of the midspan point about the chord (both supports at z = 30, y = 0).
            let tan_phi = p.y / (30.0 - p.z);
            // Default bare section: C_D = 1 (IEC 60826 §6.2.6, common practice).
            let hand = 0.5 * RHO * speed * speed * D * 1.0 / (MASS * G);
            assert!((tan_phi / hand - 1.0).abs() < 2e-3, "{kind} U={speed}: tan φ {tan_phi} vs hand {hand}");
        }
    }
}
