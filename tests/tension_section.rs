//! Whole tension sections (issue 5, "Must show"): global equilibrium,
//! stringing by the ruling-span method, change of state, unbalanced ice,
//! string swing in a cross wind, and bundle torsion with detuning pendulums.
//!
//! References outside glaze:
//! - `tests/python/ruling_span.py` (NumPy/SciPy): the ruling span and the
//!   exact multi-span equilibrium of elastic catenaries (Irvine, *Cable
//!   Structures*, 1981, ch. 2) hung from rigid pendulum strings;
//! - `tests/python/bundle_torsion.py` (NumPy/SciPy): the bundle-torsion
//!   string K_t = nTr² + nGJ, I = n(mr² + j) (Nigol & Clarke, IEEE PES 1974,
//!   from memory) with point inertias solved exactly by transfer matrices;
//! - the hand calculation of a suspension string's swing from half the
//!   adjacent spans' wind and weight (common practice, e.g. IEC 60826 §7.1).

mod common;

use common::{json_array, json_f64, json_f64s, json_num, python_json};
use glaze_engine::analysis::{run_modal, run_static, ModalSettings, StaticResult};
use glaze_engine::model::Model;
use glaze_engine::{input, model, ElementRegistry};
use std::path::Path;

const G: f64 = 9.80665; // m/s², standard gravity (ISO 80000-3)
                        // ACSR 26/7, 795 kcmil class (ASTM B232 table values, from memory).
const D: f64 = 0.02814; // m
const MASS: f64 = 1.628; // kg/m
const EA: f64 = 3.28e7; // N
const GJ: f64 = 35.0; // N·m²
const ALPHA: f64 = 18.9e-6; // 1/K
                            // Insulators of a 230 kV class line (common practice).
const I_LENGTH: f64 = 2.6; // m
const I_MASS: f64 = 90.0; // kg
const DE_LENGTH: f64 = 3.2; // m
const DE_MASS: f64 = 120.0; // kg
/// Conductor height of a level section, in m (suspension hinges at 30 + 2.6 m).
const LEVEL: f64 = 30.0;
const RHO_ICE: f64 = 900.0; // kg/m³, glaze ice (IEC 60826 §3, from memory)
const RHO_AIR: f64 = 1.225; // kg/m³, ISA sea level (ISO 2533)

/// A level section of `spans` between two dead-ends, towers on flat
/// ground: `phases` names the phases (all on the same conductor, across
/// offsets 0, 6, 12 m), `rest` is appended (load case, spacers, layouts).
fn section_toml(spans: &[f64], phases: &[(&str, usize)], h: f64, rest: &str) -> String {
    let mut text = format!(
        r#"[glaze]
schema_version = 1
[conductors.acsr]
diameter = {D}
mass_per_length = {MASS}
axial_stiffness = {EA}
bending_stiffness = 44.0
torsional_stiffness = {GJ}
thermal_expansion = {ALPHA}
rated_strength = 140100.0
[insulators.i_string]
kind = "suspension"
length = {I_LENGTH}
mass = {I_MASS}
[insulators.dead_end]
kind = "dead_end"
length = {DE_LENGTH}
mass = {DE_MASS}
"#
    );
    let mut chainage = 0.0;
    for t in 0..=spans.len() {
        let dead_end = t == 0 || t == spans.len();
        let (kind, ins, z) = if dead_end {
            ("dead_end", "dead_end", LEVEL)
        } else {
            ("suspension", "i_string", LEVEL + I_LENGTH)
        };
        let att: Vec<String> =
            phases.iter().enumerate().map(|(k, (p, _))| format!("{p} = [{}, {z}]", 6.0 * k as f64)).collect();
        text += &format!(
            "[[towers]]\nname = \"T{}\"\nchainage = {chainage}\nground = 0.0\nkind = \"{kind}\"\ninsulator = \"{ins}\"\nattachments = {{ {} }}\n",
            t + 1,
            att.join(", ")
        );
        if t < spans.len() {
            chainage += spans[t];
        }
    }
    for (p, count) in phases {
        text += &format!(
            "[[phases]]\nname = \"{p}\"\nconductor = \"acsr\"\nbundle = {{ count = {count}, spacing = 0.457 }}\nhorizontal_tension = {h}\n"
        );
    }
    text += "[mesh]\ntype = \"beam\"\nelement_length = 10.0\n[stringing]\ntemperature = 15.0\n";
    text + rest
}

fn solve(text: &str) -> (Model, StaticResult) {
    let registry = ElementRegistry::with_builtin();
    // Under examples/ so that coefficient tables resolve against examples/aero.
    let spec = input::load_str(Path::new("examples/test_section.toml"), text, &registry)
        .unwrap_or_else(|e| panic!("{e}\n{text}"));
    let m = model::build(&spec, &registry).unwrap_or_else(|e| panic!("{e}"));
    let r = run_static(&spec, &m).unwrap_or_else(|e| panic!("{e}"));
    (m, r)
}

/// Swing of each string `[along, across]` in degrees: the yoke's offset from
/// below its hinge (positive along +x and +y).
fn swings(m: &Model, r: &StaticResult) -> Vec<[f64; 2]> {
    m.strings
        .iter()
        .map(|s| {
            let top = r.config.positions[s.hinges[0]];
            let d = r.config.positions[s.yoke] - top;
            [d.x.atan2(-d.z).to_degrees(), d.y.atan2(-d.z).to_degrees()]
        })
        .collect()
}

const SPANS: [f64; 5] = [340.0, 460.0, 280.0, 390.0, 410.0];
const H1: f64 = 24000.0;

/// Ice mass per length on a round conductor, π ρ t (D + t), in kg/m
/// (IEC 60826 §3.1, common practice).
fn ice_mass(t: f64) -> f64 {
    RHO_ICE * std::f64::consts::PI * t * (D + t)
}

#[test]
fn reactions_balance_the_weight_of_conductors_ice_strings_and_devices() {
    let t_ice = 0.010;
    let rest = format!(
        r#"[spacers]
kind = "rigid"
max_subspan = 60.0
mass = 2.5
[load_case]
temperature = -5.0
ice = {{ thickness = {t_ice}, density = {RHO_ICE} }}
iced_spans = [2, 3]
[section]
layout = "mixed"
[layouts.mixed]
devices = [
  {{ type = "interphase_spacer", span = 2, distance = 230.0, phases = ["A", "B"], hinged = true, axial_stiffness = 2.0e7, mass = 35.0 }},
  {{ type = "detuning_pendulum", span = 4, distance = 130.0, phase = "A", mass = 18.0, arm = 0.45 }},
  {{ type = "lumped_mass", span = 1, distance = 170.0, phase = "B", mass = 12.0 }},
  {{ type = "air_flow_spoiler", span = 5, phase = "B", from = 100.0, to = 300.0, aero_table = "aero/bare_round.csv", mass_per_length = 0.4 }},
]
"#
    );
    let text = section_toml(&SPANS, &[("A", 2), ("B", 2)], H1, &rest);
    let (m, r) = solve(&text);

    // The weight, summed from the input: conductors (mass per unstretched
    // length), ice on spans 2 and 3, strings, spacers and devices.
    let mut mass = 0.0;
    for s in &m.spans {
        let ice = if [1, 2].contains(&s.route_span) { ice_mass(t_ice) } else { 0.0 };
        mass += (MASS + ice) * s.stringing.unstretched_length;
    }
    let towers = SPANS.len() + 1;
    mass += 2.0 * (2.0 * DE_MASS + (towers - 2) as f64 * I_MASS);
    let spacers = m.groups["spacers"].len();
    // max_subspan 60 m: ⌈l/60⌉ − 1 spacers per span and bundle.
    let expected_spacers: usize = SPANS.iter().map(|l| (l / 60.0_f64).ceil() as usize - 1).sum::<usize>() * 2;
    assert_eq!(spacers, expected_spacers);
    mass += 2.5 * spacers as f64;
    mass += 35.0 + 18.0 + 12.0;
    // The spoiler's added mass over the conductor length it covers (two
    // subconductors); its ends fall on nodes, so the covered length is 200 m
    // of horizontal distance times the conductor's stretch-free length ratio.
    let sp = m.spans.iter().find(|s| s.route_span == 4 && s.phase == Some(1)).expect("span 5 of phase B");
    mass += 2.0 * 0.4 * 200.0 * sp.stringing.unstretched_length / sp.horizontal_length;
    let weight = mass * G;

    let sum: [f64; 3] = std::array::from_fn(|d| r.support_force.iter().map(|f| f[d]).sum());
    println!("Σ reactions {sum:?} N, weight {weight:.3} N");
    // The spoiler's covered length is counted on chords of its elements,
    // not the arc: the arc and chord of a 10 m element differ by ~1e-6.
    assert!((sum[2] / weight - 1.0).abs() < 2e-6, "vertical: {} vs {weight}", sum[2]);
    assert!(sum[0].abs() < 1e-9 * weight && sum[1].abs() < 1e-9 * weight, "horizontal {sum:?}");

    // And exactly against the model's own masses (Newton's law, 1e-9).
    let own: f64 = -m.case_load.iter().skip(2).step_by(6).sum::<f64>();
    assert!((sum[2] / own - 1.0).abs() < 1e-9, "{} vs {own}", sum[2]);
}

/// The towers of `ruling_span.py` ("section" mode) for the level section
/// built by `section_toml`: hinges of the suspension strings, and of the
/// dead-end strings (rigid rods there too, as the links are here).
fn reference_towers() -> String {
    let mut towers = Vec::new();
    let chainages: Vec<f64> = std::iter::once(0.0)
        .chain(SPANS.iter().scan(0.0, |x, l| Some(*x + l).inspect(|&v| *x = v)))
        .collect();
    for (t, &chainage) in chainages.iter().enumerate() {
        let dead_end = t == 0 || t == SPANS.len();
        let (z, l, m) =
            if dead_end { (LEVEL, DE_LENGTH, DE_MASS) } else { (LEVEL + I_LENGTH, I_LENGTH, I_MASS) };
        towers.push(format!(
            r#"{{"x": {}, "z": {}, "string_length": {l}, "string_mass": {m}, "dead_end": {dead_end}}}"#,
            json_num(chainage),
            json_num(z)
        ));
    }
    format!("[{}]", towers.join(", "))
}

fn span_tensions(r: &StaticResult) -> Vec<f64> {
    r.spans.iter().map(|s| s.horizontal_tension).collect()
}

#[test]
fn strung_section_has_the_ruling_span_tension_and_plumb_strings() {
    let text = section_toml(&SPANS, &[("A", 1)], H1, "[load_case]\ntemperature = 15.0\n");
    let (m, r) = solve(&text);
    for (i, h) in span_tensions(&r).iter().enumerate() {
        println!("span {}: H = {h:.2} N (strung at {H1} N)", i + 1);
        assert!((h / H1 - 1.0).abs() < 0.01, "span {}: {h}", i + 1);
    }
    for (k, s) in swings(&m, &r).iter().enumerate().filter(|(k, _)| *k > 0 && *k < SPANS.len()) {
        println!("string at T{}: swing {:+.4}° along, {:+.4}° across", k + 1, s[0], s[1]);
        assert!(s[0].abs() < 0.1 && s[1].abs() < 0.1, "T{}: {s:?}", k + 1);
    }
}

/// Runs glaze and the SciPy section reference for a load case and compares
/// the span tensions and string swings.
fn compare_with_reference(load_case: &str, w2: &[f64], t2: f64, swing_tol_deg: f64) {
    let text = section_toml(&SPANS, &[("A", 1)], H1, load_case);
    let (m, r) = solve(&text);
    let w1 = vec![MASS * G; SPANS.len()];
    let input = format!(
        r#"{{"mode": "section", "towers": {}, "EA": {EA}, "alpha": {ALPHA}, "H1": {H1}, "t1": 15.0, "t2": {t2},
            "w1": {}, "w2": {}, "g": {G}, "weight_basis": "reference"}}"#,
        reference_towers(),
        json_array(&w1),
        json_array(w2)
    );
    let out = python_json("ruling_span.py", &input);
    let h_ref = json_f64s(&out, "H2");
    let swing_ref = json_f64s(&out, "swing_deg");
    let h = span_tensions(&r);
    let sw = swings(&m, &r);
    for i in 0..SPANS.len() {
        let rel = h[i] / h_ref[i] - 1.0;
        println!("span {}: glaze H {:.2} N, SciPy {:.2} N, rel {rel:+.2e}", i + 1, h[i], h_ref[i]);
        assert!(rel.abs() < 0.02, "span {}: {} vs {}", i + 1, h[i], h_ref[i]);
    }
    for k in 1..SPANS.len() {
        let (a, b) = (sw[k][0], swing_ref[k]);
        println!("string T{}: glaze {a:+.3}°, SciPy {b:+.3}°", k + 1);
        assert!((a - b).abs() <= (0.02 * b.abs()).max(swing_tol_deg), "string at T{}: {a}° vs {b}°", k + 1);
    }
    let _ = json_f64(&out, "residual_max");
}

#[test]
fn temperature_change_matches_the_multispan_catenary_reference() {
    // −5 °C bare from 24 kN at 15 °C. The swings are a fraction of a degree;
    // they are compared to 0.02° (2 % of the largest).
    compare_with_reference("[load_case]\ntemperature = -5.0\n", &[MASS * G; 5], -5.0, 0.02);
}

#[test]
fn unbalanced_ice_matches_the_multispan_catenary_reference() {
    // 25 mm of glaze ice on span 2 only, at −5 °C: the strings either side
    // swing towards the iced span by tens of degrees.
    let t = 0.025;
    let lc = format!(
        "[load_case]\ntemperature = -5.0\nice = {{ thickness = {t}, density = {RHO_ICE} }}\niced_spans = [2]\n"
    );
    let mut w2 = vec![MASS * G; 5];
    w2[1] = (MASS + ice_mass(t)) * G;
    compare_with_reference(&lc, &w2, -5.0, 0.02);
}

#[test]
fn string_swing_in_a_cross_wind_matches_the_hand_calculation() {
    // Uniform cross wind on the bare conductor, C_D = 1 (IEC 60826 §6.2.6,
    // common practice). Hand calculation at a suspension string: wind and
    // weight of half of each adjacent span on the yoke, the string a rigid
    // rod whose weight acts at mid-length:
    //     tan ψ = F_wind / (W_conductor + W_string / 2).
    let u = 25.0;
    let lc = format!("[load_case]\ntemperature = 15.0\nwind = {{ speed = {u}, direction = 90.0 }}\n");
    let text = section_toml(&SPANS, &[("A", 1)], H1, &lc);
    let (m, r) = solve(&text);
    let sw = swings(&m, &r);
    let q = 0.5 * RHO_AIR * u * u * D;
    let yoke_y: Vec<f64> = m.strings.iter().map(|s| r.config.positions[s.yoke].y).collect();
    let h: Vec<f64> = span_tensions(&r);
    for k in 1..SPANS.len() {
        let half = 0.5 * (SPANS[k - 1] + SPANS[k]);
        let down = MASS * G * half + 0.5 * I_MASS * G;
        let hand = (q * half / down).atan().to_degrees();
        // The same, with the pull of the spans' tensions along their chords,
        // which turn in plan when neighbouring yokes swing by different
        // amounts (the dead-end yokes hardly move): H Δy / l per span.
        let chords = h[k - 1] * (yoke_y[k - 1] - yoke_y[k]) / SPANS[k - 1]
            + h[k] * (yoke_y[k + 1] - yoke_y[k]) / SPANS[k];
        let hand_chords = ((q * half + chords) / down).atan().to_degrees();
        let (rel, rel_c) = (sw[k][1] / hand - 1.0, sw[k][1] / hand_chords - 1.0);
        println!(
            "string T{}: glaze {:.3}° across, hand {hand:.3}° (rel {rel:+.2e}), with chord turn {hand_chords:.3}° (rel {rel_c:+.2e})",
            k + 1,
            sw[k][1]
        );
        // The plain hand value ignores the chord turn: within 4 %.
        assert!(rel.abs() < 0.04, "T{}: {}° vs {hand}°", k + 1, sw[k][1]);
        // With it, what is left is the weight span taken on the span length
        // rather than the arc ((8/3)(sag/span)² ≈ 0.3 %): within 1 %.
        assert!(rel_c.abs() < 0.01, "T{}: {}° vs {hand_chords}°", k + 1, sw[k][1]);
    }
}

/// Twist of a vertical twin at `na`/`nb` (the two subconductors at one
/// station) in a mode shape: the half-difference of their lateral motion,
/// and the largest common lateral or any vertical motion there.
fn twist_at(shape: &[[f64; 6]], na: usize, nb: usize) -> (f64, f64) {
    let (sa, sb) = (shape[na], shape[nb]);
    let twist = 0.5 * (sa[1] - sb[1]);
    let other = (0.5 * (sa[1] + sb[1])).abs().max(sa[2].abs()).max(sb[2].abs());
    (twist, other)
}

/// Frequencies in Hz of the twist-dominated modes with one loop (the same
/// sign of twist at the quarter points and midspan, each more than 5 times
/// any other motion there: a pendulum hanging below the axis couples the
/// twist with some lateral motion).
fn one_loop_torsion(m: &Model, r: &StaticResult, count: usize) -> Vec<f64> {
    let modes = run_modal(m, r, &ModalSettings::new(count)).unwrap();
    let a = &m.groups["phase_A_sub_1_span_1"];
    let b = &m.groups["phase_A_sub_2_span_1"];
    let at = |f: f64| ((a.len() - 1) as f64 * f).round() as usize;
    (0..modes.frequency_hz.len())
        .filter(|&k| {
            let sh = &modes.shapes[k];
            let (t1, o1) = twist_at(sh, a[at(0.25)], b[at(0.25)]);
            let (t3, o3) = twist_at(sh, a[at(0.75)], b[at(0.75)]);
            let (tm, _) = twist_at(sh, a[at(0.5)], b[at(0.5)]);
            t1 * t3 > 0.0 && t1 * tm > 0.0 && t1.abs() > 5.0 * o1 && t3.abs() > 5.0 * o3
        })
        .map(|k| modes.frequency_hz[k])
        .collect()
}

#[test]
fn twin_bundle_torsion_frequency_and_detuning_pendulums() {
    let l_route = 400.0;
    let spacer_mass = 2.5;
    let plain = section_toml(
        &[l_route],
        &[("A", 2)],
        H1,
        &format!("[spacers]\nkind = \"rigid\"\nmax_subspan = 60.0\nmass = {spacer_mass}\n[load_case]\ntemperature = 15.0\n"),
    );
    let pendulums = [135.0, 265.0];
    let (pm, arm) = (18.0, 0.45);
    let with = plain.replace(
        "[load_case]",
        &format!(
            "[section]\nlayout = \"p\"\n[layouts.p]\ndevices = [{}]\n[load_case]",
            pendulums
                .iter()
                .map(|x| format!(
                    "{{ type = \"detuning_pendulum\", span = 1, distance = {x}, phase = \"A\", mass = {pm}, arm = {arm} }}"
                ))
                .collect::<Vec<_>>()
                .join(", ")
        ),
    );

    // A vertical twin: the twist moves the subconductors across the plane
    // of the sag, so it does not stretch them. (A horizontal twin in sag
    // does: the upper subconductor runs on the inside of the sag curve,
    // and the spacers must yaw to let the two slide; the clamps' bending
    // stiffness resists it, raising the first torsional frequencies above
    // the taut-string value, which knows no sag.)
    let vertical = |t: &str| t.replace("spacing = 0.457 }", "spacing = 0.457, orientation = 90.0 }");
    let (plain, with) = (vertical(&plain), vertical(&with));
    let (m, r) = solve(&plain);
    let s = &r.spans[0];
    // The conductor between the dead-end clamps, along its arc.
    let clamp = m.nodes[m.strings[0].yoke].x;
    let arc = s.conductor_length;
    let scale = arc / s.horizontal_length;
    // Spacers: 2.5 kg split between the clamps at radius r = 0.2285 m, a
    // point inertia M r² without a gravity moment (the twin is level).
    let spacer_x: Vec<f64> = (1..7).map(|k| k as f64 * l_route / 7.0).collect();
    let spacer_json = || -> String {
        let items: Vec<String> = spacer_x
            .iter()
            .map(|x| {
                format!(
                    r#"{{"M": {spacer_mass}, "a": 0.0, "J0": {}, "x": {}}}"#,
                    json_num(spacer_mass * 0.2285 * 0.2285),
                    json_num((x - clamp) * scale)
                )
            })
            .collect();
        format!("[{}]", items.join(", "))
    };
    let base = format!(
        r#""n": 2, "spacing": 0.457, "T": {}, "L": {}, "m": {MASS}, "diameter": {D}, "GJ": {GJ}, "modes": 2, "g": {G}"#,
        json_num(s.horizontal_tension),
        json_num(arc)
    );
    let out = python_json("bundle_torsion.py", &format!("{{{base}, \"pendulums\": {}}}", spacer_json()));
    let f_ref = json_f64(&out, "f1_pendulum_exact");
    let f_bare = json_f64(&out, "f1");
    let f = one_loop_torsion(&m, &r, 16);
    println!("twin torsion: glaze {f:?} Hz, reference {f_ref:.5} Hz (without spacer inertia {f_bare:.5} Hz)");
    assert!(!f.is_empty(), "no torsional mode among the lowest 16");
    assert!((f[0] / f_ref - 1.0).abs() < 0.015, "torsion {} vs {f_ref}", f[0]);

    // Pendulums: bob M at arm a below the axis, own inertia of a cast-iron
    // sphere (2/5 M ρ_s², radius from 7200 kg/m³, handbook density from
    // memory), and gravity's restoring moment M g a.
    let (mp, rm) = solve(&with);
    let bob_r = (3.0 * pm / (4.0 * std::f64::consts::PI * 7200.0)).cbrt();
    let j0 = 0.4 * pm * bob_r * bob_r;
    let mut items = spacer_json();
    items.pop();
    for x in pendulums {
        items += &format!(
            r#", {{"M": {pm}, "a": {arm}, "J0": {}, "x": {}}}"#,
            json_num(j0),
            json_num((x - clamp) * scale)
        );
    }
    items.push(']');
    let out = python_json(
        "bundle_torsion.py",
        &format!("{{{base}, \"pendulum_gravity\": true, \"pendulums\": {items}}}"),
    );
    let f_ref_p = json_f64(&out, "f1_pendulum_exact");
    let fp = one_loop_torsion(&mp, &rm, 24);
    println!("with pendulums: glaze {fp:?} Hz, reference {f_ref_p:.5} Hz");
    assert!(!fp.is_empty(), "no torsional mode with pendulums");
    assert!((fp[0] / f_ref_p - 1.0).abs() < 0.02, "torsion with pendulums {} vs {f_ref_p}", fp[0]);
    // The shift itself, against the predicted shift.
    let shift = fp[0] / f[0] - 1.0;
    let shift_ref = f_ref_p / f_ref - 1.0;
    println!("shift glaze {shift:+.4}, reference {shift_ref:+.4}");
    assert!((shift - shift_ref).abs() < 0.1 * shift_ref.abs().max(0.01), "{shift} vs {shift_ref}");
}

#[test]
fn v_string_leg_forces_in_a_cross_wind_match_the_statics_of_the_yoke() {
    // V-strings (legs at ±45° from the vertical) hold the yoke against the
    // cross wind: at the yoke, (T₊ + T₋) cos β = W and (T₋ − T₊) sin β = F,
    // with W the weight of half of each adjacent span and half the string,
    // F the wind on half of each adjacent span (statics of a two-bar
    // truss, common practice; the yoke barely moves, so the spans' chords
    // do not turn).
    let u = 25.0;
    let beta = 45f64.to_radians();
    let lc = format!("[load_case]\ntemperature = 15.0\nwind = {{ speed = {u}, direction = 90.0 }}\n");
    let text = section_toml(&SPANS, &[("A", 1)], H1, &lc).replace(
        "[insulators.i_string]\nkind = \"suspension\"",
        "[insulators.i_string]\nkind = \"v_string\"\nhalf_angle = 45.0",
    );
    let (m, r) = solve(&text);
    let q = 0.5 * RHO_AIR * u * u * D;
    for s in m.strings.iter().filter(|s| s.hinges.len() == 2) {
        let k = s.tower;
        let half = 0.5 * (SPANS[k - 1] + SPANS[k]);
        let w = MASS * G * half + 0.5 * I_MASS * G;
        let f = q * half;
        let legs: Vec<(f64, f64)> = s
            .elements
            .iter()
            .zip(&s.hinges)
            .map(|(&e, &h)| (m.nodes[h].y - m.nodes[s.yoke].y, r.element_output[e].axial_force))
            .collect();
        let plus = legs.iter().find(|l| l.0 > 0.0).expect("a leg on +y").1;
        let minus = legs.iter().find(|l| l.0 < 0.0).expect("a leg on −y").1;
        let want_plus = w / (2.0 * beta.cos()) - f / (2.0 * beta.sin());
        let want_minus = w / (2.0 * beta.cos()) + f / (2.0 * beta.sin());
        println!(
            "V-string T{}: legs +y {plus:.1} N (statics {want_plus:.1}), −y {minus:.1} N (statics {want_minus:.1})",
            k + 1
        );
        // Within 1 % of the larger leg force: the arc is longer than the span
        // by (8/3)(sag/span)² ≈ 0.3 % and the yoke moves a few millimetres.
        let scale = want_minus.abs().max(want_plus.abs());
        assert!((plus - want_plus).abs() < 0.01 * scale, "T{}: +y leg {plus} vs {want_plus}", k + 1);
        assert!((minus - want_minus).abs() < 0.01 * scale, "T{}: −y leg {minus} vs {want_minus}", k + 1);
    }
    assert_eq!(m.strings.iter().filter(|s| s.hinges.len() == 2).count(), SPANS.len() - 1);
}
