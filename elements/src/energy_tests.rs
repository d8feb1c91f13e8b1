//! For every kind, the internal force is the gradient of the strain
//! energy: central differences of `strain_energy` under the DOF
//! convention (translations added, rotations `R ← exp(h eᵢ) R`) equal
//! `internal_force` at seeded random deformed states.

use crate::test_util::{perturb, Lcg};
use crate::{
    BeamSection, Cable, ClampJoint, ClampStiffness, CorotationalBeam, Element, ElementContext, Link,
    NodeState, TorsionRestraint, TrussSection,
};
use nalgebra::Vector3;

fn check(element: &dyn Element, nodes: &[NodeState], scale: f64) {
    let ctx = ElementContext { temperature_change: 12.0 };
    let m = nodes.len() * 6;
    let mut f = vec![0.0; m];
    element.internal_force(&ctx, nodes, &mut f);
    let h = 1e-6;
    for (dof, &fi) in f.iter().enumerate() {
        let up = element.strain_energy(&ctx, &perturb(nodes, dof, h));
        let down = element.strain_energy(&ctx, &perturb(nodes, dof, -h));
        let fd = (up - down) / (2.0 * h);
        // Central differences: O(h²) truncation plus round-off of U/h.
        assert!((fd - fi).abs() <= 1e-6 * scale, "{} dof {dof}: dU = {fd}, f = {fi}", element.kind(),);
    }
}

#[test]
fn internal_force_is_the_energy_gradient() {
    let mut rng = Lcg::new(7);
    for _ in 0..20 {
        let x0 = [Vector3::zeros(), Vector3::new(5.0, 0.3, -0.2)];
        let nodes: Vec<NodeState> = x0
            .iter()
            .map(|&x| NodeState { x0: x, x: x + rng.vector(0.3), rotation: rng.rotation(0.4) })
            .collect();
        let truss = TrussSection { ea: 3.0e7, mass_per_length: 1.6, thermal_expansion: 1.9e-5 };
        let l0 = 4.99;
        check(&Cable::new([0, 1], l0, truss).unwrap(), &nodes, 3.0e7 * 0.1);
        check(&Link::new([0, 1], l0, truss).unwrap(), &nodes, 3.0e7 * 0.1);
        let section = BeamSection {
            ea: 3.0e7,
            ei_y: 900.0,
            ei_z: 600.0,
            gj: 300.0,
            mass_per_length: 1.6,
            polar_inertia_per_length: 1e-3,
            thermal_expansion: 1.9e-5,
            bowing: true,
            axial_torsion_coupling: 40.0,
        };
        let beam = CorotationalBeam::new([0, 1], x0, l0, Vector3::y(), section).unwrap();
        check(&beam, &nodes, 3.0e7 * 0.1);
        check(&TorsionRestraint::new(0, Vector3::new(1.0, 0.1, 0.0), 2.0e4).unwrap(), &nodes[..1], 2.0e4);
        let clamp = ClampStiffness { translation: 3.0e4, twist: 2.0e4, bending: 90.0 };
        check(&ClampJoint::new([0, 1], Vector3::new(1.0, 0.1, 0.0), clamp).unwrap(), &nodes, 3.0e4 * 5.0);
    }
}
