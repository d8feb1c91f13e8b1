//! Unit tests of the corotational beam: objectivity, tangent against
//! central differences, symmetry at equilibrium, section results, mass.
//!
//! Tolerances: objectivity 1e-11 relative to the force scale (round-off of
//! O(10) operations on O(1) data); tangent 1e-6 relative to the largest
//! entry (units made consistent by the element length), with h = 1e-6 —
//! central-difference truncation is O(h²) ≈ 1e-12 and round-off
//! O(1e-16/h) ≈ 1e-10, so 1e-6 leaves a wide margin yet catches any missing
//! geometric term, which shows up at O(force/stiffness) ≈ 1e-2..1.

use super::*;
use crate::test_util::{rigid_motion, tangent_error, Lcg};
use std::f64::consts::PI;

fn section(bowing: bool, coupling: bool) -> BeamSection {
    BeamSection {
        ea: 400.0,
        ei_y: 2.0,
        ei_z: 3.0,
        gj: 1.5,
        mass_per_length: 1.3,
        polar_inertia_per_length: 0.02,
        thermal_expansion: 2e-3,
        bowing,
        axial_torsion_coupling: if coupling { 0.4 * (400.0_f64 * 1.5).sqrt() } else { 0.0 },
    }
}

/// A beam of random orientation and a random deformed state: nodal
/// displacements up to 0.15 L, nodal rotations up to `rot` rad, then a
/// rigid rotation of up to π.
fn random_case(rng: &mut Lcg, s: BeamSection, rot: f64) -> (CorotationalBeam, Vec<NodeState>) {
    let x1 = rng.vector(3.0);
    let len = rng.range(1.0, 3.0);
    let x2 = x1 + rng.direction() * len;
    let beam = CorotationalBeam::new([0, 1], [x1, x2], 1.02 * len, rng.direction(), s).unwrap();
    let mut nodes = vec![NodeState::at_rest(x1), NodeState::at_rest(x2)];
    for n in &mut nodes {
        n.x += rng.vector(0.15 * len);
        n.rotation = rng.rotation(rot);
    }
    let q = rng.rotation(PI);
    let c = rng.vector(5.0);
    (beam, rigid_motion(&nodes, &q, &c))
}

fn ctx() -> ElementContext {
    ElementContext { temperature_change: 7.0 }
}

fn force(beam: &CorotationalBeam, ctx: &ElementContext, nodes: &[NodeState]) -> Vec<f64> {
    let mut f = vec![0.0; 12];
    beam.internal_force(ctx, nodes, &mut f);
    f
}

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

#[test]
fn tangent_matches_central_differences() {
    let mut rng = Lcg::new(2024);
    for (bowing, coupling) in [(false, false), (true, false), (false, true), (true, true)] {
        for rot in [0.3, 1.5, 2.8] {
            for _ in 0..10 {
                let (beam, nodes) = random_case(&mut rng, section(bowing, coupling), rot);
                let len = beam.reference_length();
                let err = tangent_error(&beam, &ctx(), &nodes, 1e-6, len);
                assert!(err < 1e-6, "bowing {bowing} coupling {coupling} rot {rot}: rel. error {err:e}");
            }
        }
    }
}

#[test]
fn rigid_motion_of_a_stressed_state_rotates_the_force() {
    let mut rng = Lcg::new(99);
    for (bowing, coupling) in [(false, false), (true, true)] {
        for _ in 0..20 {
            let (beam, nodes) = random_case(&mut rng, section(bowing, coupling), 1.0);
            let f = force(&beam, &ctx(), &nodes);
            let q = rng.rotation(PI);
            let moved = rigid_motion(&nodes, &q, &rng.vector(10.0));
            let g = force(&beam, &ctx(), &moved);
            let scale = norm(&f) * beam.reference_length();
            for blk in 0..4 {
                let a = Vector3::from_column_slice(&f[3 * blk..3 * blk + 3]);
                let b = Vector3::from_column_slice(&g[3 * blk..3 * blk + 3]);
                let w = if blk % 2 == 0 { beam.reference_length() } else { 1.0 };
                assert!((q * a - b).norm() * w < 1e-11 * scale);
            }
            // The tangent rotates the same way: K' = diag(Q) K diag(Q)ᵀ.
            let (mut k1, mut k2, mut fb) = (vec![0.0; 144], vec![0.0; 144], vec![0.0; 12]);
            beam.tangent(&ctx(), &nodes, &mut fb, &mut k1);
            beam.tangent(&ctx(), &moved, &mut fb, &mut k2);
            let big = k1.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
            for bi in 0..4 {
                for bj in 0..4 {
                    let blk = |k: &[f64]| Matrix3::from_fn(|i, j| k[(3 * bi + i) * 12 + 3 * bj + j]);
                    let d = q * blk(&k1) * q.transpose() - blk(&k2);
                    assert!(d.amax() < 1e-10 * big);
                }
            }
        }
    }
}

#[test]
fn rigid_motion_of_the_reference_state_gives_zero_force() {
    let mut rng = Lcg::new(5);
    for _ in 0..20 {
        let x1 = rng.vector(3.0);
        let len = rng.range(1.0, 3.0);
        let x2 = x1 + rng.direction() * len;
        let s = section(true, true);
        // Stress-free: unstretched length equal to the chord, no ΔT.
        let beam = CorotationalBeam::new([0, 1], [x1, x2], len, rng.direction(), s).unwrap();
        let rest = [NodeState::at_rest(x1), NodeState::at_rest(x2)];
        let moved = rigid_motion(&rest, &rng.rotation(PI), &rng.vector(10.0));
        let f = force(&beam, &ElementContext::default(), &moved);
        // Force scale EA; round-off of unit-size geometry ≈ 1e-15 × EA.
        assert!(norm(&f) < 1e-11 * s.ea, "{f:?}");
    }
}

/// Newton on the free node of a one-element cantilever under a tip force,
/// with this element's own tangent; returns the converged state.
fn cantilever_equilibrium(beam: &CorotationalBeam, x: [Vector3<f64>; 2], p: Vector3<f64>) -> Vec<NodeState> {
    let mut nodes = vec![NodeState::at_rest(x[0]), NodeState::at_rest(x[1])];
    let (mut f, mut k) = (vec![0.0; 12], vec![0.0; 144]);
    for step in 1..=10 {
        let load = p * (step as f64 / 10.0);
        for _ in 0..50 {
            beam.tangent(&ElementContext::default(), &nodes, &mut f, &mut k);
            let mut r = nalgebra::SVector::<f64, 6>::from_column_slice(&f[6..]);
            for i in 0..3 {
                r[i] -= load[i];
            }
            if r.norm() < 1e-13 * p.norm() {
                break;
            }
            let kk = nalgebra::SMatrix::<f64, 6, 6>::from_fn(|i, j| k[(6 + i) * 12 + 6 + j]);
            let dx = kk.lu().solve(&(-r)).unwrap();
            nodes[1].x += dx.fixed_rows::<3>(0);
            nodes[1].rotation = so3::exp(&dx.fixed_rows::<3>(3).into_owned()) * nodes[1].rotation;
        }
    }
    nodes
}

#[test]
fn tangent_is_symmetric_at_equilibrium() {
    // At an equilibrium under conservative nodal forces the tangent in
    // spin variables is the Hessian of the total potential, hence
    // symmetric; away from equilibrium it is not. Tolerance 1e-9 relative.
    let mut rng = Lcg::new(17);
    for (bowing, coupling) in [(false, false), (true, true)] {
        let x1 = rng.vector(1.0);
        let x2 = x1 + rng.direction() * 2.0;
        let s = section(bowing, coupling);
        let beam = CorotationalBeam::new([0, 1], [x1, x2], 2.0, rng.direction(), s).unwrap();
        // Tip force of the size that gives rotations ~0.5 rad.
        let p = rng.direction() * 1.5;
        let nodes = cantilever_equilibrium(&beam, [x1, x2], p);
        let (mut f, mut k) = (vec![0.0; 12], vec![0.0; 144]);
        beam.tangent(&ElementContext::default(), &nodes, &mut f, &mut k);
        let tip_rotation = so3::log(&nodes[1].rotation).norm();
        assert!(tip_rotation > 0.2, "test load too small: {tip_rotation}");
        let big = k.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
        let mut asym = 0.0_f64;
        for i in 6..12 {
            for j in 6..12 {
                asym = asym.max((k[i * 12 + j] - k[j * 12 + i]).abs());
            }
        }
        assert!(asym < 1e-9 * big, "asymmetry {asym:e} of {big:e}");
        // Sanity: off equilibrium (a perturbed state) it is not symmetric.
        let mut off = nodes.clone();
        off[1].rotation = so3::exp(&Vector3::new(0.3, 0.0, 0.2)) * off[1].rotation;
        beam.tangent(&ElementContext::default(), &off, &mut f, &mut k);
        let asym_off = (6..12)
            .flat_map(|i| (6..12).map(move |j| (i, j)))
            .fold(0.0_f64, |m, (i, j)| m.max((k[i * 12 + j] - k[j * 12 + i]).abs()));
        assert!(asym_off > 1e-6 * big);
    }
}

#[test]
fn section_results_of_simple_states() {
    let x1 = Vector3::new(1.0, 2.0, 3.0);
    let e1 = Vector3::new(2.0, -1.0, 2.0) / 3.0;
    let len = 2.0;
    let x2 = x1 + e1 * len;
    let s = section(false, false);
    let beam = CorotationalBeam::new([3, 8], [x1, x2], len, Vector3::z(), s).unwrap();
    let c0 = ElementContext::default();
    // Stretch by 1 %: N = EA·0.01 (Irvine 1981, Hooke's law on L0).
    let mut n = [NodeState::at_rest(x1), NodeState::at_rest(x2)];
    n[1].x = x1 + e1 * len * 1.01;
    let o = beam.output(&c0, &n);
    assert!((o.axial_force - 0.01 * s.ea).abs() < 1e-12 * s.ea);
    assert!(o.torque.abs() < 1e-12 && o.bending_moment_y[0].abs() < 1e-12);
    // Heating to Lt = l makes it stress-free: α ΔT = 0.01.
    let hot = ElementContext { temperature_change: 0.01 / s.thermal_expansion };
    assert!(beam.output(&hot, &n).axial_force.abs() < 1e-10);
    assert!(norm(&force(&beam, &hot, &n)) < 1e-10);
    // Twist node 2 by φ about the axis: T = GJ φ / L.
    let phi = 0.1;
    let mut n = [NodeState::at_rest(x1), NodeState::at_rest(x2)];
    n[1].rotation = so3::exp(&(e1 * phi));
    let o = beam.output(&c0, &n);
    assert!((o.torque - s.gj * phi / len).abs() < 1e-12);
    // Antisymmetric end rotations about local z (uniform curvature κ = 2φ/L
    // about z, chord unchanged): moments [−EI κ, EI κ].
    let e3 = beam.reference_frame().column(2).into_owned();
    let mut n = [NodeState::at_rest(x1), NodeState::at_rest(x2)];
    n[0].rotation = so3::exp(&(e3 * -phi));
    n[1].rotation = so3::exp(&(e3 * phi));
    let o = beam.output(&c0, &n);
    let m = s.ei_z * 2.0 * phi / len;
    assert!((o.bending_moment_z[0] + m).abs() < 1e-12 && (o.bending_moment_z[1] - m).abs() < 1e-12);
    assert!(o.bending_moment_y[0].abs() < 1e-12 && o.torque.abs() < 1e-12);
    // With bowing, the same state shortens nothing but strains the axis:
    // ε = (1/30)(2φ² + φ² + 2φ²) = φ²/6.
    let bow = CorotationalBeam::new([3, 8], [x1, x2], len, Vector3::z(), section(true, false)).unwrap();
    let o = bow.output(&c0, &n);
    assert!((o.axial_strain - phi * phi / 6.0).abs() < 1e-14);
    assert!((o.axial_force - s.ea * phi * phi / 6.0).abs() < 1e-11);
}

#[test]
fn lumped_mass_in_global_axes() {
    let x1 = Vector3::zeros();
    let x2 = Vector3::new(0.0, 3.0, 0.0);
    let s = section(false, false);
    let beam = CorotationalBeam::new([0, 1], [x1, x2], 3.0, Vector3::x(), s).unwrap();
    let mut m = vec![0.0; 144];
    beam.lumped_mass(&[NodeState::at_rest(x1), NodeState::at_rest(x2)], &mut m);
    let total: f64 = [0, 1, 2].iter().map(|&i| m[i * 12 + i] + m[(i + 6) * 12 + i + 6]).sum();
    assert!((total - 3.0 * s.mass_per_length * 3.0).abs() < 1e-12);
    // Axis along Y: polar inertia on θ_y, HRZ μ L³/78 on θ_x and θ_z.
    assert!((m[4 * 12 + 4] - 0.5 * s.polar_inertia_per_length * 3.0).abs() < 1e-14);
    assert!((m[3 * 12 + 3] - s.mass_per_length * 27.0 / 78.0).abs() < 1e-14);
    assert!((m[11 * 12 + 11] - s.mass_per_length * 27.0 / 78.0).abs() < 1e-14);
    assert!(m[3 * 12 + 4].abs() < 1e-15);
}

#[test]
fn constructor_rejects_bad_input() {
    let (x1, x2) = (Vector3::zeros(), Vector3::x());
    let ok = section(false, false);
    let new = |x2: Vector3<f64>, l0: f64, y: Vector3<f64>, s: BeamSection| {
        CorotationalBeam::new([0, 1], [x1, x2], l0, y, s)
    };
    assert!(new(x2, 1.0, Vector3::y(), ok).is_ok());
    assert!(new(x1, 1.0, Vector3::y(), ok).is_err());
    assert!(new(x2, 0.0, Vector3::y(), ok).is_err());
    assert!(new(x2, f64::NAN, Vector3::y(), ok).is_err());
    assert!(matches!(
        new(x2, 1.0, Vector3::new(2.0, 1e-9, 0.0), ok),
        Err(ElementError::ParallelReference { .. })
    ));
    assert!(new(x2, 1.0, Vector3::zeros(), ok).is_err());
    for bad in [
        BeamSection { ea: 0.0, ..ok },
        BeamSection { ei_y: -1.0, ..ok },
        BeamSection { ei_z: 0.0, ..ok },
        BeamSection { gj: 0.0, ..ok },
        BeamSection { mass_per_length: -1.0, ..ok },
        BeamSection { axial_torsion_coupling: (ok.ea * ok.gj).sqrt(), ..ok },
    ] {
        let err = new(x2, 1.0, Vector3::y(), bad).unwrap_err();
        assert!(err.to_string().contains("beam element"), "{err}");
    }
}

/// An initially curved copy of `beam`: end tangents tilted from the chord
/// by up to 0.1 rad.
fn curved(rng: &mut Lcg, beam: CorotationalBeam) -> CorotationalBeam {
    let e1 = beam.reference_frame().column(0).into_owned();
    let tilt = |rng: &mut Lcg| (e1 + rng.vector(0.1).cross(&e1)).normalize();
    let t = [tilt(rng), tilt(rng)];
    beam.with_end_tangents(t).unwrap()
}

#[test]
fn curved_element_tangent_matches_central_differences() {
    let mut rng = Lcg::new(77);
    for (bowing, coupling) in [(false, false), (true, false), (true, true)] {
        for rot in [0.3, 1.5] {
            for _ in 0..10 {
                let (beam, nodes) = random_case(&mut rng, section(bowing, coupling), rot);
                let beam = curved(&mut rng, beam);
                let err = tangent_error(&beam, &ctx(), &nodes, 1e-6, beam.reference_length());
                assert!(err < 1e-6, "bowing {bowing} coupling {coupling} rot {rot}: rel. error {err:e}");
            }
        }
    }
}

#[test]
fn curved_element_is_stress_free_at_rest_and_under_rigid_motion() {
    let mut rng = Lcg::new(5);
    for _ in 0..10 {
        let x1 = rng.vector(3.0);
        let len = rng.range(1.0, 3.0);
        let x2 = x1 + rng.direction() * len;
        let beam =
            CorotationalBeam::new([0, 1], [x1, x2], len, rng.direction(), section(true, true)).unwrap();
        let beam = curved(&mut rng, beam);
        let rest = vec![NodeState::at_rest(x1), NodeState::at_rest(x2)];
        let moved = rigid_motion(&rest, &rng.rotation(PI), &rng.vector(4.0));
        for nodes in [rest, moved] {
            let f = force(&beam, &ElementContext::default(), &nodes);
            assert!(norm(&f) < 1e-10, "{f:?}");
        }
    }
}

#[test]
fn twisting_a_kinked_chain_about_its_nodal_tangents_costs_only_torsion() {
    // Three nodes of a polygon with a kink of α = 0.05 rad at the middle node,
    // nodal tangents the bisectors (the chords at the two ends), both elements
    // with bowing under tension N. Twisting every node by φ about its own
    // tangent changes no shape, so curved elements take only the curved-rod
    // bending change (EI terms, O(EI α² φ²)). Straight elements with rigid
    // joints instead swing each chord's end at the kink sideways by δ = φα/2,
    // which the bowing term charges at N L 2δ²/30 per element (derived here
    // from the bowing strain of `local`), N L α² φ²/30 for the two.
    let alpha: f64 = 0.05;
    let len = 10.0;
    let x = [
        Vector3::zeros(),
        Vector3::new(len, 0.0, 0.0),
        Vector3::new(len + len * alpha.cos(), 0.0, len * alpha.sin()),
    ];
    let chord = [x[1] - x[0], x[2] - x[1]].map(|d| d.normalize());
    let tangent = [chord[0], (chord[0] + chord[1]).normalize(), chord[1]];
    let s = BeamSection { ea: 3.0e7, ei_y: 44.0, ei_z: 44.0, gj: 35.0, ..section(true, false) };
    let lt = 0.999 * len; // strained: N ≈ 3e4 N
    let n = 3.0e7 * (len / lt - 1.0);
    let c = ElementContext::default();
    let phi = 0.1;
    let extra = |curved_ends: bool| -> f64 {
        (0..2)
            .map(|i| {
                let b = CorotationalBeam::new([i, i + 1], [x[i], x[i + 1]], lt, Vector3::y(), s).unwrap();
                let b =
                    if curved_ends { b.with_end_tangents([tangent[i], tangent[i + 1]]).unwrap() } else { b };
                let rest: Vec<NodeState> = (i..i + 2).map(|j| NodeState::at_rest(x[j])).collect();
                let twisted: Vec<NodeState> = (i..i + 2)
                    .map(|j| NodeState {
                        rotation: so3::exp(&(tangent[j] * phi)),
                        ..NodeState::at_rest(x[j])
                    })
                    .collect();
                b.strain_energy(&c, &twisted) - b.strain_energy(&c, &rest)
            })
            .sum()
    };
    let ei_bound = 2.0 * 44.0 / len * (alpha * phi).powi(2);
    let curved = extra(true);
    assert!(curved.abs() <= ei_bound, "curved: {curved} J above the EI bound {ei_bound} J");
    let straight = extra(false);
    let estimate = n * len * (alpha * phi).powi(2) / 30.0;
    // The estimate is the small-angle bowing term alone; EI adds ~1e-3 of it.
    assert!((straight / estimate - 1.0).abs() < 0.05, "straight: {straight} J vs estimate {estimate} J");
}
