//! Unit tests of the truss kinematics through the two kinds that use it,
//! [`Cable`] and [`Link`]. Tolerances as for the beam: objectivity 1e-12
//! relative to the force scale, tangent 1e-6 relative with h = 1e-6 (see
//! `corotational_beam/tests.rs` for the reasoning).

use super::*;
use crate::test_util::{rigid_motion, tangent_error, Lcg};
use crate::{Cable, Element, ElementError, Link};
use std::f64::consts::PI;

const SECTION: TrussSection = TrussSection { ea: 2.0e7, mass_per_length: 1.6, thermal_expansion: 1.9e-5 };

fn force(e: &dyn Element, ctx: &ElementContext, nodes: &[NodeState]) -> Vec<f64> {
    let mut f = vec![0.0; 12];
    e.internal_force(ctx, nodes, &mut f);
    f
}

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// Random chord of length ~`len`, stretched by `strain` from `l0`, with
/// random nodal rotations (which must not matter).
fn random_state(rng: &mut Lcg, l0: f64, strain: f64) -> Vec<NodeState> {
    let x1 = rng.vector(50.0);
    let x2 = x1 + rng.direction() * l0 * (1.0 + strain);
    let mut nodes = vec![NodeState::at_rest(x1), NodeState::at_rest(x2)];
    for n in &mut nodes {
        n.x0 = rng.vector(50.0);
        n.rotation = rng.rotation(PI);
    }
    nodes
}

fn kinds(l0: f64) -> [Box<dyn Element>; 2] {
    [Box::new(Cable::new([0, 1], l0, SECTION).unwrap()), Box::new(Link::new([0, 1], l0, SECTION).unwrap())]
}

#[test]
fn tangent_matches_central_differences() {
    let mut rng = Lcg::new(41);
    let ctx = ElementContext { temperature_change: 25.0 };
    for _ in 0..50 {
        let l0 = rng.range(1.0, 400.0);
        for strain in [2e-3, 0.3] {
            let nodes = random_state(&mut rng, l0, strain);
            for e in kinds(l0) {
                let err = tangent_error(e.as_ref(), &ctx, &nodes, 1e-6, l0);
                assert!(err < 1e-6, "{}: {err:e}", e.kind());
            }
        }
        // Compressed: only the link has stiffness, and it is consistent.
        let nodes = random_state(&mut rng, l0, -0.2);
        let link = Link::new([0, 1], l0, SECTION).unwrap();
        assert!(tangent_error(&link, &ctx, &nodes, 1e-6, l0) < 1e-6);
    }
}

#[test]
fn rigid_motions_rotate_the_force_and_keep_rest_states_free() {
    let mut rng = Lcg::new(8);
    for _ in 0..50 {
        let l0 = rng.range(1.0, 400.0);
        for e in kinds(l0) {
            for strain in [0.0, 1e-3] {
                let nodes = random_state(&mut rng, l0, strain);
                let q = rng.rotation(PI);
                let moved = rigid_motion(&nodes, &q, &rng.vector(1e3));
                let (f, g) = (
                    force(e.as_ref(), &ElementContext::default(), &nodes),
                    force(e.as_ref(), &ElementContext::default(), &moved),
                );
                let scale = SECTION.ea * 1e-12;
                for blk in 0..4 {
                    let a = Vector3::from_column_slice(&f[3 * blk..3 * blk + 3]);
                    let b = Vector3::from_column_slice(&g[3 * blk..3 * blk + 3]);
                    assert!((q * a - b).norm() < scale, "{}", e.kind());
                }
                if strain == 0.0 {
                    assert!(norm(&g) < scale);
                }
            }
        }
    }
}

#[test]
fn force_law_thermal_strain_and_slack() {
    let l0 = 300.0;
    let x1 = Vector3::new(0.0, 0.0, 10.0);
    let dir = Vector3::new(3.0, 0.0, 4.0) / 5.0;
    let at = |l: f64| [NodeState::at_rest(x1), NodeState::at_rest(x1 + dir * l)];
    let c0 = ElementContext::default();
    for e in kinds(l0) {
        // N = EA (l − L0)/L0 in tension for both.
        let o = e.output(&c0, &at(l0 * 1.001));
        assert!((o.axial_force - SECTION.ea * 1e-3).abs() < 1e-6);
        assert!((o.axial_strain - 1e-3).abs() < 1e-15);
        let f = force(e.as_ref(), &c0, &at(l0 * 1.001));
        assert!((Vector3::from_column_slice(&f[6..9]) - dir * o.axial_force).norm() < 1e-6);
        assert!(f[3..6].iter().chain(&f[9..12]).all(|&m| m == 0.0));
        // Heating by ΔT with α ΔT = 1e-3 makes l = Lt stress-free.
        let hot = ElementContext { temperature_change: 1e-3 / SECTION.thermal_expansion };
        assert!(e.output(&hot, &at(l0 * 1.001)).axial_force.abs() < 1e-5);
        assert!(!e.uses_rotations());
    }
    // Slack cable: no force, no stiffness; the link pushes back.
    let [cable, link] = kinds(l0);
    let short = at(l0 * 0.99);
    assert_eq!(force(cable.as_ref(), &c0, &short), vec![0.0; 12]);
    let (mut f, mut k) = (vec![1.0; 12], vec![1.0; 144]);
    cable.tangent(&c0, &short, &mut f, &mut k);
    assert!(f.iter().chain(&k).all(|&x| x == 0.0));
    assert_eq!(cable.output(&c0, &short).axial_force, 0.0);
    assert!((link.output(&c0, &short).axial_force + SECTION.ea * 0.01).abs() < 1e-6);
    // A cold cable that was slack becomes taut: α ΔT = −2 % shortens Lt.
    let cold = ElementContext { temperature_change: -0.02 / SECTION.thermal_expansion };
    let n = cable.output(&cold, &short).axial_force;
    assert!((n - SECTION.ea * (0.99 / 0.98 - 1.0)).abs() < 1e-6 * SECTION.ea);
}

#[test]
fn tangent_is_symmetric_and_has_geometric_stiffness() {
    let mut rng = Lcg::new(3);
    let nodes = random_state(&mut rng, 10.0, 0.01);
    let link = Link::new([0, 1], 10.0, SECTION).unwrap();
    let (mut f, mut k) = (vec![0.0; 12], vec![0.0; 144]);
    link.tangent(&ElementContext::default(), &nodes, &mut f, &mut k);
    for i in 0..12 {
        for j in 0..12 {
            assert_eq!(k[i * 12 + j], k[j * 12 + i]);
        }
    }
    // Transverse stiffness N / l.
    let d = nodes[1].x - nodes[0].x;
    let t = d.cross(&rng.direction()).normalize();
    let kt = Matrix3::from_fn(|i, j| k[(6 + i) * 12 + 6 + j]);
    let n = SECTION.ea * 0.01;
    assert!(((t.transpose() * kt * t)[0] - n / d.norm()).abs() < 1e-9 * n);
}

#[test]
fn lumped_mass_and_accessors() {
    for e in kinds(12.0) {
        let mut m = vec![0.0; 144];
        e.lumped_mass(&[], &mut m);
        let total: f64 = (0..12).map(|i| m[i * 12 + i]).sum();
        assert!((total - 3.0 * SECTION.mass_per_length * 12.0).abs() < 1e-12);
        assert!((3..6).all(|i| m[i * 12 + i] == 0.0));
        assert_eq!(e.unstretched_length(), 12.0);
        assert_eq!(e.mass_per_length(), SECTION.mass_per_length);
        assert_eq!(e.nodes(), &[0, 1]);
    }
    assert_eq!(kinds(1.0)[0].kind(), "cable");
    assert_eq!(kinds(1.0)[1].kind(), "link");
}

#[test]
fn constructors_reject_bad_input() {
    let bad = [
        (0.0, SECTION),
        (-1.0, SECTION),
        (f64::INFINITY, SECTION),
        (1.0, TrussSection { ea: 0.0, ..SECTION }),
        (1.0, TrussSection { mass_per_length: -1.0, ..SECTION }),
        (1.0, TrussSection { thermal_expansion: f64::NAN, ..SECTION }),
    ];
    for (l0, s) in bad {
        let e = Cable::new([0, 1], l0, s).unwrap_err();
        assert!(matches!(e, ElementError::InvalidValue { kind: "cable", .. }));
        let e = Link::new([0, 1], l0, s).unwrap_err();
        assert!(e.to_string().starts_with("link element"), "{e}");
    }
}
