//! Static equilibrium of single spans against Irvine's elastic catenary
//! (H. M. Irvine, *Cable Structures*, MIT Press 1981, §2.2, Lagrangian
//! form, eqs. 2.5–2.7), solved here independently of glaze's own
//! form-finding code.
//!
//! Conductor: ACSR 26/7 of 795 kcmil (ASTM B232 table values, from memory:
//! d = 28.14 mm, 1.628 kg/m, RTS 140.1 kN, α = 18.9e-6 /K, EA ≈ 3.28e7 N).
//! Ice: radial glaze ice of 900 kg/m³ (IEC 60826).

use glaze_engine::{analysis::run_static, input, model, ElementRegistry};
use std::path::Path;

const G: f64 = 9.80665;
const EA: f64 = 3.28e7;
const MASS: f64 = 1.628;
const DIAMETER: f64 = 0.02814;
const ALPHA: f64 = 18.9e-6;

/// Irvine's elastic catenary: (x, z) at unstretched arc length s.
fn irvine(h: f64, v0: f64, w: f64, s: f64) -> (f64, f64) {
    let v = v0 + w * s;
    let x = h * s / EA + (h / w) * ((v / h).asinh() - (v0 / h).asinh());
    let z = (v0 * s + 0.5 * w * s * s) / EA + (h.hypot(v) - h.hypot(v0)) / w;
    (x, z)
}

/// Newton on two unknowns with a central-difference Jacobian.
fn newton2(mut u: [f64; 2], f: impl Fn([f64; 2]) -> [f64; 2]) -> [f64; 2] {
    for _ in 0..100 {
        let r = f(u);
        if r[0].abs() + r[1].abs() < 1e-11 {
            return u;
        }
        let mut j = [[0.0; 2]; 2];
        for k in 0..2 {
            let step = 1e-7 * u[k].abs().max(1.0);
            let (mut up, mut um) = (u, u);
            up[k] += step;
            um[k] -= step;
            let (fp, fm) = (f(up), f(um));
            for i in 0..2 {
                j[i][k] = (fp[i] - fm[i]) / (2.0 * step);
            }
        }
        let det = j[0][0] * j[1][1] - j[0][1] * j[1][0];
        u[0] -= (r[0] * j[1][1] - r[1] * j[0][1]) / det;
        u[1] -= (j[0][0] * r[1] - j[1][0] * r[0]) / det;
    }
    panic!("reference Newton did not converge");
}

struct Reference {
    sag: f64,
    horizontal: f64,
    tension: [f64; 2],
}

/// Strung to horizontal tension `h0` bare at the stringing temperature,
/// then changed to ice `t_ice` and temperature change `dt`.
fn reference(l: f64, dz: f64, h0: f64, t_ice: f64, dt: f64) -> Reference {
    let w0 = MASS * G;
    let [_, l0] = newton2([h0 * dz / l - w0 * l / 2.0, l.hypot(dz)], |[v0, l0]| {
        let (x, z) = irvine(h0, v0, w0, l0);
        [x - l, z - dz]
    });
    let ice = 900.0 * std::f64::consts::PI * t_ice * (DIAMETER + t_ice);
    let scale = 1.0 + ALPHA * dt;
    let (l0c, wc) = (l0 * scale, (MASS + ice) * G / scale);
    let [h, v0] = newton2([h0, h0 * dz / l - wc * l0c / 2.0], |[h, v0]| {
        let (x, z) = irvine(h, v0, wc, l0c);
        [x - l, z - dz]
    });
    // Largest sag where the slope V/H equals the chord slope.
    let s_star = (h * dz / l - v0) / wc;
    let (x, z) = irvine(h, v0, wc, s_star);
    Reference { sag: dz * x / l - z, horizontal: h, tension: [h.hypot(v0), h.hypot(v0 + wc * l0c)] }
}

fn input_text(kind: &str, elements: usize, l: f64, dz: f64, h0: f64, t_ice: f64, temperature: f64) -> String {
    format!(
        r#"
[glaze]
schema_version = 1
[conductors.c]
diameter = {DIAMETER}
mass_per_length = {MASS}
axial_stiffness = {EA}
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = {ALPHA}
rated_strength = 140100.0
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [{l}, 0.0, {zb}]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = {h0}
[mesh]
type = "{kind}"
elements_per_span = {elements}
[stringing]
temperature = 15.0
[load_case]
temperature = {temperature}
ice = {{ thickness = {t_ice} }}
"#,
        zb = 30.0 + dz
    )
}

fn check(kind: &str, elements: usize, l: f64, dz: f64, h0: f64, t_ice: f64, temperature: f64) {
    let registry = ElementRegistry::with_builtin();
    let text = input_text(kind, elements, l, dz, h0, t_ice, temperature);
    let spec = input::load_str(Path::new("irvine.toml"), &text, &registry).unwrap();
    let m = model::build(&spec, &registry).unwrap();
    let r = run_static(&spec, &m).unwrap();
    let s = &r.spans[0];
    let want = reference(l, dz, h0, t_ice, temperature - 15.0);
    let rel = |got: f64, want: f64| (got / want - 1.0).abs();
    let case = format!("{kind}, {elements} el, l={l}, h={dz}, ice={t_ice}, T={temperature}");
    // Issue #2 asks for 0.1 % on sag and horizontal tension.
    assert!(rel(s.sag, want.sag) < 1e-3, "{case}: sag {} vs Irvine {}", s.sag, want.sag);
    assert!(
        rel(s.horizontal_tension, want.horizontal) < 1e-3,
        "{case}: H {} vs Irvine {}",
        s.horizontal_tension,
        want.horizontal
    );
    for k in 0..2 {
        assert!(
            rel(s.support_tension[k], want.tension[k]) < 1e-3,
            "{case}: T[{k}] {} vs Irvine {}",
            s.support_tension[k],
            want.tension[k]
        );
    }
}

#[test]
fn level_400_m_span_iced_cold() {
    for kind in ["cable", "beam"] {
        check(kind, 20, 400.0, 0.0, 28_000.0, 0.0125, -5.0);
    }
}

#[test]
fn inclined_350_m_span_40_m_height_iced_cold() {
    for kind in ["cable", "beam"] {
        check(kind, 20, 350.0, 40.0, 25_000.0, 0.0125, -5.0);
    }
}

#[test]
fn level_and_inclined_spans_hot_bare() {
    for kind in ["cable", "beam"] {
        check(kind, 20, 400.0, 0.0, 28_000.0, 0.0, 75.0);
        check(kind, 40, 350.0, 40.0, 25_000.0, 0.0, 75.0);
    }
}

#[test]
fn stringing_state_reproduces_the_target() {
    for kind in ["cable", "beam"] {
        check(kind, 20, 350.0, 40.0, 25_000.0, 0.0, 15.0);
    }
}
