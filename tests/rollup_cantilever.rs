//! Roll-up of a cantilever under an end moment: the exact solution of the
//! inextensible Euler–Bernoulli rod is a circular arc of curvature M/EI
//! (closed form; e.g. Simo & Vu-Quoc 1986 and Crisfield 1990 use it as a
//! benchmark). M = 2πEI/L closes a full circle (the tip returns to the
//! root); M = πEI/L gives a half circle with the tip at (0, 2L/π) from the
//! root. Check: tip within 1e-3 L of the closed form.

mod common;

use common::{beam_chain, clamp, StaticProblem};
use glaze_elements::BeamSection;
use nalgebra::Vector3;
use std::f64::consts::PI;

/// Tip position of a cantilever along +X, clamped at the origin, under an
/// end moment `M` about +Z, with `n_el` elements.
fn tip_under_moment(m_over_ei_l: f64, n_el: usize, bowing: bool) -> Vector3<f64> {
    let l = 5.0;
    let ei = 3.0e3;
    let section = BeamSection {
        ea: 1.0e7,
        ei_y: ei,
        ei_z: ei,
        gj: 2.0e3,
        mass_per_length: 1.0,
        polar_inertia_per_length: 0.0,
        thermal_expansion: 0.0,
        bowing,
        axial_torsion_coupling: 0.0,
    };
    let points: Vec<Vector3<f64>> =
        (0..=n_el).map(|i| Vector3::new(l * i as f64 / n_el as f64, 0.0, 0.0)).collect();
    let m = m_over_ei_l * ei / l;
    let mut problem = StaticProblem::new(
        &points,
        beam_chain(&points, Vector3::y(), section),
        &clamp(0),
        &[(n_el, [0.0, 0.0, 0.0, 0.0, 0.0, m])],
    );
    let report = problem.solve(0.1);
    println!("M = {m_over_ei_l:.4} EI/L, {n_el} elements, bowing {bowing}: {} load steps", report.steps);
    problem.position(n_el) / l
}

#[test]
fn full_circle_returns_the_tip_to_the_root() {
    for (n_el, bowing) in [(20, false), (20, true), (40, false)] {
        let tip = tip_under_moment(2.0 * PI, n_el, bowing);
        println!("full circle: tip / L = {tip:?}");
        assert!(tip.norm() < 1e-3, "tip at {tip:?} L from the root");
    }
}

#[test]
fn half_circle_puts_the_tip_at_two_l_over_pi() {
    let exact = Vector3::new(0.0, 2.0 / PI, 0.0);
    for (n_el, bowing) in [(20, false), (20, true), (40, false)] {
        let tip = tip_under_moment(PI, n_el, bowing);
        println!("half circle: tip / L = {tip:?}, exact {exact:?}");
        assert!((tip - exact).norm() < 1e-3, "tip at {tip:?} L, exact {exact:?} L");
    }
}
