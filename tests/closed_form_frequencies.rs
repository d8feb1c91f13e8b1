//! Natural frequencies against closed forms:
//!
//! - a taut string (a very tight span through the whole engine):
//!   f_n = n/(2l) √(T/m) (Rayleigh, *The Theory of Sound*, 1877, §124; any
//!   vibrations text, e.g. Clough & Penzien, *Dynamics of Structures*);
//! - a simply supported Euler–Bernoulli beam: ω_n = (nπ/L)² √(EI/m)
//!   (Clough & Penzien, *Dynamics of Structures*, 2nd ed. 1993, §18-2);
//! - a rigid pendulum like a suspension insulator string: a link hinged at
//!   the top with a point mass at its tip, ω² = g/L for small amplitude,
//!   the same for swings along and across the line.
//!
//! The beam and the pendulum are built with the validation harness
//! (`tests/common`), linearised with `Linearisation::from_elements`.

mod common;

use glaze_elements::{BeamSection, Element, ElementContext, Link, NodeState, TrussSection};
use glaze_engine::analysis::mode_shape::{class, energy_shares, NodeFrame};
use glaze_engine::analysis::{run_modal, run_static, EigenMethod, Linearisation, ModalSettings};
use glaze_engine::{input, model, ElementRegistry};
use nalgebra::Vector3;
use std::f64::consts::PI;
use std::path::Path;

/// Numbers the DOF `6·node + d` that are not in `fixed`, in order.
fn equations(nodes: usize, fixed: &[usize]) -> Vec<Option<usize>> {
    let mut count = 0;
    (0..6 * nodes)
        .map(|d| {
            (!fixed.contains(&d)).then(|| {
                count += 1;
                count - 1
            })
        })
        .collect()
}

#[test]
fn taut_string_through_the_engine() {
    // 200 m level span, m = 1.628 kg/m, H = 300 kN: sag/span =
    // m g l / (8H) = 1.33e-3 (< 0.2 %). Cable elements, 100 per span.
    // Irvine's λ² = 64 (d/l)² EA/H ≈ 0.04 shifts the symmetric in-plane
    // modes up by about 0.04 λ² / n² (< 0.2 %), inside the 0.5 % asked.
    let (l, m, h, ea) = (200.0_f64, 1.628_f64, 3.0e5_f64, 1.0e8_f64);
    let text = format!(
        r#"
[glaze]
schema_version = 1
[conductors.c]
diameter = 0.02814
mass_per_length = {m}
axial_stiffness = {ea}
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 1.0e7
[[supports]]
name = "A"
position = [0.0, 0.0, 20.0]
[[supports]]
name = "B"
position = [{l}, 0.0, 20.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = {h}
[mesh]
type = "cable"
elements_per_span = 100
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
"#
    );
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("taut.toml"), &text, &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    assert!(stat.spans[0].sag / l < 2e-3, "sag/span {}", stat.spans[0].sag / l);
    let r = run_modal(&mdl, &stat, &ModalSettings::new(12)).unwrap();
    // The string's T and its mass per *stretched* length (the conductor's
    // mass is per unstretched length; the span is stretched by T/EA ≈ 0.3 %).
    let t = stat.spans[0].horizontal_tension;
    let m = m * stat.spans[0].unstretched_length / stat.spans[0].conductor_length;
    for (plane, c) in [("out-of-plane", class::TRANSVERSE), ("in-plane", class::VERTICAL)] {
        let f: Vec<f64> = (0..r.frequency_hz.len())
            .filter(|&k| r.energy_share[k][c] > 0.99)
            .map(|k| r.frequency_hz[k])
            .collect();
        assert!(f.len() >= 5, "{plane}: only {} modes among {:?}", f.len(), r.labels);
        for n in 1..=5 {
            let want = n as f64 / (2.0 * l) * (t / m).sqrt();
            let rel = f[n - 1] / want - 1.0;
            println!(
                "taut string {plane:12} n = {n}: glaze {:.6} Hz, n/(2l)√(T/m) {want:.6} Hz, rel {rel:+.2e}",
                f[n - 1]
            );
            assert!(rel.abs() < 5e-3, "{plane} n = {n}: {} Hz vs {want} Hz", f[n - 1]);
        }
    }
}

#[test]
fn simply_supported_beam() {
    // L = 10 m steel-tube-like beam along X, EI = 2e5 N·m² about both axes,
    // m = 20 kg/m, 40 elements. Pinned ends: translations fixed at both
    // ends, torsion fixed at the first. Lumped mass, so the error is O(h²):
    // about (nπ/N)²/… — below 0.5 % up to n = 4 at 40 elements (printed).
    let (len, n_el, ei, m) = (10.0, 40usize, 2.0e5, 20.0);
    let section = BeamSection {
        ea: 5.0e8,
        ei_y: ei,
        ei_z: ei,
        gj: 1.5e5,
        mass_per_length: m,
        polar_inertia_per_length: 0.05,
        thermal_expansion: 0.0,
        bowing: false,
        axial_torsion_coupling: 0.0,
    };
    let points: Vec<Vector3<f64>> =
        (0..=n_el).map(|i| Vector3::new(len * i as f64 / n_el as f64, 0.0, 0.0)).collect();
    let elements = common::beam_chain(&points, Vector3::y(), section);
    let states: Vec<NodeState> = points.iter().map(|&p| NodeState::at_rest(p)).collect();
    let fixed = [0, 1, 2, 3, 6 * n_el, 6 * n_el + 1, 6 * n_el + 2];
    let lin = Linearisation::from_elements(
        &elements,
        &states,
        equations(points.len(), &fixed),
        &ElementContext::default(),
    )
    .unwrap();
    let modes = lin.solve(&ModalSettings { method: EigenMethod::Dense, ..ModalSettings::new(16) }).unwrap();
    let frames = vec![NodeFrame::along(Vector3::x()); points.len()];
    for (plane, c) in [("vertical (Z)", class::VERTICAL), ("transverse (Y)", class::TRANSVERSE)] {
        let omega: Vec<f64> = modes
            .vectors
            .iter()
            .zip(&modes.omega_squared)
            .filter(|(v, _)| energy_shares(&lin.node_shape(v), &lin.node_mass, &frames)[c] > 0.99)
            .map(|(_, w2)| w2.sqrt())
            .collect();
        assert!(omega.len() >= 4, "{plane}: {} bending modes", omega.len());
        for n in 1..=4 {
            let want = (n as f64 * PI / len).powi(2) * (ei / m).sqrt();
            let rel = omega[n - 1] / want - 1.0;
            println!("simply supported beam {plane:14} n = {n}: glaze ω {:.5} rad/s, (nπ/L)²√(EI/m) {want:.5}, rel {rel:+.2e}", omega[n - 1]);
            assert!(rel.abs() < 5e-3, "{plane} n = {n}: ω {} vs {want}", omega[n - 1]);
        }
    }
}

const LINK_EA: f64 = 1.0e8;

/// A link of hanging length `length` under the tip weight `weight`: its
/// unstretched length is `length / (1 + weight/EA)`, so the reference
/// geometry is the hanging one and the link is taut from the start (an
/// unstressed link has no lateral stiffness to start Newton from). Half
/// the link's lumped mass sits at the hinge (fixed), half at the tip:
/// μ = 2 m_tip / L0 puts the point mass m_tip at the tip.
fn link(tip_mass: f64, length: f64, weight: f64) -> Vec<Box<dyn Element>> {
    let l0 = length / (1.0 + weight / LINK_EA);
    let section = TrussSection { ea: LINK_EA, mass_per_length: 2.0 * tip_mass / l0, thermal_expansion: 0.0 };
    vec![Box::new(Link::new([0, 1], l0, section).unwrap())]
}

#[test]
fn rigid_pendulum_like_a_suspension_string() {
    // Insulator-string-like link, L = 4 m, hinged at the top, 600 kg at the
    // tip (the conductor weight it carries), hanging under g = 9.80665.
    let (len, tip, g) = (4.0, 600.0, 9.80665);
    let x0 = [Vector3::new(0.0, 0.0, 0.0), Vector3::new(0.0, 0.0, -len)];
    let mut problem = common::StaticProblem::new(
        &x0,
        link(tip, len, tip * g),
        &[0, 1, 2],
        &[(1, [0.0, 0.0, -tip * g, 0.0, 0.0, 0.0])],
    );
    problem.solve(1.0);
    let states = problem.nodes().to_vec();
    let hanging = (states[1].x - states[0].x).norm();
    // Translations of the tip only (links have no rotations).
    let fixed: Vec<usize> = (0..12).filter(|d| !(6..9).contains(d)).collect();
    let lin = Linearisation::from_elements(
        &link(tip, len, tip * g),
        &states,
        equations(2, &fixed),
        &ElementContext::default(),
    )
    .unwrap();
    let modes = lin.solve(&ModalSettings { method: EigenMethod::Dense, ..ModalSettings::new(3) }).unwrap();
    let want = g / hanging;
    // Frames as on a line along X: longitudinal X, transverse Y.
    let frames = vec![NodeFrame::along(Vector3::x()); 2];
    let mut longitudinal = 0.0;
    let mut transverse = 0.0;
    for k in 0..2 {
        let w2 = modes.omega_squared[k];
        let rel = w2 / want - 1.0;
        let s = energy_shares(&lin.node_shape(&modes.vectors[k]), &lin.node_mass, &frames);
        println!("pendulum swing {}: ω² {w2:.9} rad²/s², g/L {want:.9}, rel {rel:+.2e}, shares {s:?}", k + 1);
        assert!(rel.abs() < 1e-3, "swing {k}: ω² {w2} vs g/L {want}");
        assert!(s[class::VERTICAL] < 1e-9, "a swing moves horizontally: {s:?}");
        longitudinal += s[class::LONGITUDINAL];
        transverse += s[class::TRANSVERSE];
    }
    // The two swings are equal: one frequency, and together they span the
    // horizontal plane (one full swing along the line, one across it).
    let split = modes.omega_squared[1] / modes.omega_squared[0] - 1.0;
    assert!(split.abs() < 1e-9, "along and across swings differ by {split:e}");
    assert!((longitudinal - 1.0).abs() < 1e-9 && (transverse - 1.0).abs() < 1e-9);
    // The third mode is the axial (bouncing) one at EA/(L m).
    let axial = LINK_EA / (len * tip);
    assert!((modes.omega_squared[2] / axial - 1.0).abs() < 1e-3);
}

#[test]
fn torsion_of_a_sagging_conductor() {
    // Torsional string: I θ_tt = GJ θ_ss, both ends held in twist, so
    // f_k = k/(2S) √(GJ/j) with S the conductor length and j = m d²/8 the
    // polar inertia per length of a solid round section (closed form of the
    // wave equation). The span sags 3 %: before the conductor elements were
    // curved to their nodal tangents, the kinks of the chord polygon locked
    // the twist and put these frequencies several times too high.
    let (l, h, m, d, gj): (f64, f64, f64, f64, f64) = (400.0, 24000.0, 1.628, 0.02814, 35.0);
    let text = format!(
        r#"
[glaze]
schema_version = 1
[conductors.c]
diameter = {d}
mass_per_length = {m}
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = {gj}
thermal_expansion = 18.9e-6
rated_strength = 140100.0
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [{l}, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = {h}
[mesh]
type = "beam"
elements_per_span = 80
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
"#
    );
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("twist.toml"), &text, &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let r = run_modal(&mdl, &stat, &ModalSettings::new(30)).unwrap();
    let s = stat.spans[0].conductor_length;
    let j = m * d * d / 8.0;
    let f: Vec<f64> = (0..r.frequency_hz.len())
        .filter(|&k| r.energy_share[k][class::TORSIONAL] > 0.99)
        .map(|k| r.frequency_hz[k])
        .collect();
    assert!(f.len() >= 2, "torsional modes: {:?}", r.labels);
    for (k, fk) in f.iter().take(2).enumerate() {
        let want = (k + 1) as f64 / (2.0 * s) * (gj / j).sqrt();
        let rel = fk / want - 1.0;
        println!("torsion k = {}: glaze {fk:.5} Hz, closed form {want:.5} Hz, rel {rel:+.2e}", k + 1);
        // 5 m elements: the remaining discretisation error is O(h⁴), ≈ 0.5 % here.
        assert!(rel.abs() < 0.01, "k = {}: {fk} vs {want}", k + 1);
    }
}

#[test]
fn a_bare_row_at_its_stringing_state_has_no_mode_below_the_first_swing() {
    // The out-of-plane (swinging) modes of a shallow cable are those of a
    // taut string at the horizontal tension: f_n = n/(2S) √(H/m) (Irvine,
    // *Cable Structures*, 1981, §4.2, from memory; S the arc length and m
    // per unit arc length). At the stringing state of the demo row (no ice,
    // stringing temperature) the lowest mode must be the first swing of the
    // longest span: a kinked polygon of curved elements must not add modes
    // of its own below it.
    let demo =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/row_of_spans.toml"))
            .unwrap();
    let text = format!(
        "{}[load_case]\ntemperature = 15.0\n",
        &demo[..demo.find("[load_case]").expect("a load case")]
    );
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("row_rest.toml"), &text, &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let r = run_modal(&mdl, &stat, &ModalSettings::new(6)).unwrap();
    let (k, s) = stat
        .spans
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.conductor_length.total_cmp(&b.1.conductor_length))
        .expect("spans");
    let c = &spec.conductors[mdl.spans[k].conductor];
    let m = c.mass_per_length * s.unstretched_length / s.conductor_length;
    let want = 1.0 / (2.0 * s.conductor_length) * (s.horizontal_tension / m).sqrt();
    let rel = r.frequency_hz[0] / want - 1.0;
    println!(
        "lowest mode {:.5} Hz ({}), first swing of span {} {want:.5} Hz, rel {rel:+.2e}",
        r.frequency_hz[0],
        r.labels[0],
        k + 1
    );
    assert!(r.labels[0].starts_with("transverse, 1 loop"), "lowest mode: {}", r.labels[0]);
    assert!(rel.abs() < 0.01, "{} Hz vs {want} Hz", r.frequency_hz[0]);
}
