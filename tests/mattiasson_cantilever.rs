//! Large deflection of a cantilever under a dead tip load, against
//! Mattiasson (1981), "Numerical results from large deflection beam and
//! frame problems analysed by means of elliptic integrals", IJNME 17,
//! 145–153, and against the elastica solved inside this test by shooting.
//!
//! Clamped at x = 0 along +X, length L, tip load P in −Z. Check values:
//! tip deflection w/L and horizontal shortening u/L within 0.5 %.

mod common;

use common::{beam_chain, clamp, StaticProblem};
use glaze_elements::BeamSection;
use nalgebra::Vector3;

/// Mattiasson (1981), table of the cantilever under a tip load
/// (`(PL²/EI, w/L, u/L)`, from memory). Each value is also confirmed
/// below by the elastica solved in this file.
const MATTIASSON: [(f64, f64, f64); 4] =
    [(1.0, 0.30172, 0.05643), (2.0, 0.49346, 0.16064), (5.0, 0.71379, 0.38763), (10.0, 0.81061, 0.55500)];

/// Inextensible elastica of the cantilever, in s ∈ [0, 1] (s = arc length
/// / L): `θ'' = −α cos θ`, `θ(0) = 0`, `θ'(1) = 0` (no tip moment),
/// `x' = cos θ`, `z' = sin θ` (z towards the load), α = PL²/EI.
/// Returns `(θ'(1), x(1), z(1))` for a trial root curvature `k0`, by
/// classical RK4 with `n` steps (error O(n⁻⁴)).
fn shoot(alpha: f64, k0: f64, n: usize) -> (f64, f64, f64) {
    let rhs = |y: [f64; 4]| [y[1], -alpha * y[0].cos(), y[0].cos(), y[0].sin()];
    let h = 1.0 / n as f64;
    let mut y = [0.0, k0, 0.0, 0.0];
    let add = |y: [f64; 4], k: [f64; 4], s: f64| [0, 1, 2, 3].map(|i| y[i] + s * k[i]);
    for _ in 0..n {
        let k1 = rhs(y);
        let k2 = rhs(add(y, k1, h / 2.0));
        let k3 = rhs(add(y, k2, h / 2.0));
        let k4 = rhs(add(y, k3, h));
        y = [0, 1, 2, 3].map(|i| y[i] + h / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]));
    }
    (y[1], y[2], y[3])
}

/// Exact `(w/L, u/L)` by bisection on the root curvature: θ'(1) = k0 − α x(1)
/// is negative at k0 = 0 and non-negative at k0 = α.
fn elastica(alpha: f64) -> (f64, f64) {
    let n = 4000;
    let (mut lo, mut hi) = (0.0, alpha);
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if shoot(alpha, mid, n).0 < 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let (_, x, z) = shoot(alpha, 0.5 * (lo + hi), n);
    (z, 1.0 - x)
}

#[test]
fn elastica_reference_is_converged_and_matches_the_table() {
    for (alpha, w_table, u_table) in MATTIASSON {
        let (w, u) = elastica(alpha);
        // The root found with 4000 RK4 steps still has a zero tip moment
        // (θ'(1) < 1e-8 α) with 8000 steps: the integration is converged.
        let (k_fine, _, _) = shoot(alpha, alpha * (1.0 - u), 8000);
        assert!(k_fine.abs() < 1e-8 * alpha, "θ'(1) = {k_fine:e}");
        // The table is printed to 5 decimals; agreement to 1e-5 confirms
        // both the remembered values and the shooting solution.
        for (got, table) in [(w, w_table), (u, u_table)] {
            assert!((got - table).abs() < 1.5e-5, "α = {alpha}: {got} vs table {table}");
        }
    }
}

#[test]
fn cantilever_tip_matches_mattiasson_within_half_a_percent() {
    let n_el = 30;
    let l = 10.0; // m
    let ei = 2.0e4; // N·m²
                    // A slender section: EA/EI = 12/b² with b = L/100, so the axial strain
                    // P/EA ≤ 1e-4 and the rod is as good as inextensible, like the elastica.
    let b = l / 100.0;
    let section = BeamSection {
        ea: ei * 12.0 / (b * b),
        ei_y: ei,
        ei_z: ei,
        gj: ei / 1.3,
        mass_per_length: 1.0,
        polar_inertia_per_length: 0.0,
        thermal_expansion: 0.0,
        bowing: false,
        axial_torsion_coupling: 0.0,
    };
    let points: Vec<Vector3<f64>> =
        (0..=n_el).map(|i| Vector3::new(l * i as f64 / n_el as f64, 0.0, 0.0)).collect();
    for (alpha, w_table, u_table) in MATTIASSON {
        let p = alpha * ei / (l * l);
        let mut problem = StaticProblem::new(
            &points,
            beam_chain(&points, Vector3::y(), section),
            &clamp(0),
            &[(n_el, [0.0, 0.0, -p, 0.0, 0.0, 0.0])],
        );
        let report = problem.solve(0.1);
        let tip = problem.position(n_el);
        let w = -tip.z / l;
        let u = 1.0 - tip.x / l;
        let (w_exact, u_exact) = elastica(alpha);
        for (name, got, exact, table) in [("w/L", w, w_exact, w_table), ("u/L", u, u_exact, u_table)] {
            let rel_exact = (got - exact).abs() / exact;
            let rel_table = (got - table).abs() / table;
            println!(
                "PL²/EI = {alpha}: {name} = {got:.5} (elastica {exact:.5}, Mattiasson {table:.5}), \
                 rel. diff {rel_exact:.2e}; {} steps",
                report.steps
            );
            assert!(rel_exact < 5e-3, "{name} at α = {alpha}: {got} vs {exact}");
            assert!(rel_table < 5e-3, "{name} at α = {alpha}: {got} vs {table}");
        }
        assert!(tip.y.abs() < 1e-9 * l, "out-of-plane tip motion {}", tip.y);
    }
}
