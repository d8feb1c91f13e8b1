//! The 45° bend of Bathe & Bolourchi (1979), "Large displacement analysis
//! of three-dimensional beam structures", IJNME 14, 961–986: a cantilever
//! bend of radius 100 in the horizontal plane, unit square section,
//! E = 1e7, G = E/2, loaded at the tip by a dead vertical force P = 600.
//!
//! Geometry (consistent units, as in the paper): the arc starts clamped at
//! the origin tangent to +X and curves towards +Y about the centre
//! (0, 100, 0), so the undeformed tip is at (70.71, 29.29, 0). Section:
//! A = 1, I = 1/12, J = 1/6, i.e. EA = 1e7, EI = 8.333e5, GJ = 8.333e5 — the
//! data set as usually stated for this benchmark (from memory; Bathe &
//! Bolourchi's tip displacement is (−23.5, −13.4, 53.4) in our axes).
//!
//! Published tip positions at P = 600 (from memory):
//! Bathe & Bolourchi (1979): (47.2, 15.9, 53.4);
//! Simo & Vu-Quoc (1986), CMAME 58, 79–116: (47.23, 15.79, 53.37).
//!
//! Checks: the tip position vector within 1 % (of its length) of Bathe &
//! Bolourchi's, and every coordinate within 1 % of Simo & Vu-Quoc's.
//! Bathe & Bolourchi's y = 15.9 sits above converged solutions (this
//! Euler–Bernoulli element converges to y ≈ 15.69; shear-flexible
//! elements reach about 15.6), so a 1 % check of that single coordinate
//! against it would test their coarse mesh rather than ours.

mod common;

use common::{beam_chain, clamp, StaticProblem};
use glaze_elements::BeamSection;
use nalgebra::Vector3;
use std::f64::consts::FRAC_PI_4;

const BATHE_BOLOURCHI: [f64; 3] = [47.2, 15.9, 53.4];
const SIMO_VU_QUOC: [f64; 3] = [47.23, 15.79, 53.37];

fn tip_position(n_el: usize) -> (Vector3<f64>, usize) {
    let r = 100.0;
    let e = 1.0e7;
    let g = e / 2.0;
    let section = BeamSection {
        ea: e,
        ei_y: e / 12.0,
        ei_z: e / 12.0,
        gj: g / 6.0,
        mass_per_length: 1.0,
        polar_inertia_per_length: 0.0,
        thermal_expansion: 0.0,
        bowing: false,
        axial_torsion_coupling: 0.0,
    };
    let points: Vec<Vector3<f64>> = (0..=n_el)
        .map(|i| {
            let phi = FRAC_PI_4 * i as f64 / n_el as f64;
            Vector3::new(r * phi.sin(), r * (1.0 - phi.cos()), 0.0)
        })
        .collect();
    let mut problem = StaticProblem::new(
        &points,
        beam_chain(&points, Vector3::z(), section),
        &clamp(0),
        &[(n_el, [0.0, 0.0, 600.0, 0.0, 0.0, 0.0])],
    );
    let report = problem.solve(0.1);
    (problem.position(n_el), report.steps)
}

#[test]
fn bend_tip_matches_published_within_one_percent() {
    let bb = Vector3::from(BATHE_BOLOURCHI);
    for n_el in [8, 16] {
        let (tip, steps) = tip_position(n_el);
        let rel = (tip - bb).norm() / bb.norm();
        println!(
            "{n_el} elements: tip ({:.3}, {:.3}, {:.3}) in {steps} load steps; \
             |tip − Bathe & Bolourchi| / |Bathe & Bolourchi| = {:.2} %",
            tip.x,
            tip.y,
            tip.z,
            100.0 * rel
        );
        assert!(rel < 0.01, "{n_el} elements: tip {tip:?} vs Bathe & Bolourchi {bb:?}");
        for k in 0..3 {
            let rel = (tip[k] - SIMO_VU_QUOC[k]).abs() / SIMO_VU_QUOC[k];
            assert!(
                rel < 0.01,
                "{n_el} elements, coordinate {k}: {:.3} vs Simo & Vu-Quoc {:.3} ({:.2} %)",
                tip[k],
                SIMO_VU_QUOC[k],
                100.0 * rel
            );
        }
    }
}
