//! A zero-length joint between a conductor node and the frame that grips
//! it (a spacer or yoke arm, a device): stiff in the three translations and
//! in twist about the conductor, soft in the two bending rotations.
//!
//! A clamp on a conductor at tension T holds the twist, but the moment it
//! can put into the conductor's bending is that of the boundary layer of a
//! tensioned beam, of length √(EI/T): an end slope ψ costs `M = √(EI·T) ψ`
//! on each side of the clamp (the tensioned-beam solution behind the
//! Poffenberger–Swart bending amplitude, IEEE Trans. PAS 84, 1965; from
//! memory). Elements of several metres cannot resolve that layer: a rigid
//! connection would lock their end rotations with the geometric stiffness
//! `≈ 2TL/15` per side, thirty times too stiff, and lock a twisted bundle's
//! subconductors in bending. This joint gives the bending rotations the
//! layer's stiffness instead.
//!
//! Energy `U = ½ k_t |x_b − x_a|² + ½ θᵀ C θ`, with θ = log(R_aᵀ R_b) the
//! rotation of b relative to a (both rotations from the reference state)
//! and `C = k_r e eᵀ + k_b (I − e eᵀ)` in a's frame, `e` the conductor axis
//! at rest. It is objective: a rigid rotation of both nodes costs nothing.
//! With spatial spins (δR = δ̂ R), δθ = T⁻¹(θ) R_aᵀ (δ_b − δ_a) (Battini &
//! Pacoste 2002, `T_s`), so the moment on b is `m_b = R_a T⁻ᵀ C θ`, on a
//! its opposite.

use crate::element::{Element, ElementContext, ElementOutput, NodeState};
use crate::error::ElementError;
use crate::so3;
use nalgebra::{Matrix3, Vector3};

/// Stiffnesses of a [`ClampJoint`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ClampStiffness {
    /// Translational stiffness, in N/m.
    pub translation: f64,
    /// Rotational stiffness about the conductor axis, in N·m/rad.
    pub twist: f64,
    /// Rotational stiffness about each axis across the conductor, in N·m/rad.
    pub bending: f64,
}

impl ClampStiffness {
    /// A clamp on a conductor of bending stiffness `ei` (N·m²) at tension
    /// `tension` (N): bending `2√(EI·T)` (both sides of the clamp), and
    /// translation and twist next to rigid.
    pub fn on_conductor(ei: f64, tension: f64) -> Self {
        Self { translation: 1e9, twist: 1e6, bending: 2.0 * (ei * tension).max(0.0).sqrt() }
    }
}

/// Zero-length joint from frame node `a` to conductor node `b`.
#[derive(Clone, Debug, PartialEq)]
pub struct ClampJoint {
    nodes: [usize; 2],
    axis: Vector3<f64>,
    stiffness: ClampStiffness,
    /// Viscous damping of the twist about the axis, in N·m·s/rad.
    twist_damping: f64,
}

impl ClampJoint {
    /// Joins frame node `a` to conductor node `b` (coincident at rest) with
    /// the conductor along `axis` (normalised here).
    pub fn new(
        nodes: [usize; 2],
        axis: Vector3<f64>,
        stiffness: ClampStiffness,
    ) -> Result<Self, ElementError> {
        let n = axis.norm();
        if !(n.is_finite() && n > 0.0) {
            return Err(ElementError::InvalidValue {
                kind: "clamp_joint",
                parameter: "axis",
                value: n,
                expected: "a non-zero finite vector",
            });
        }
        for (parameter, value) in [
            ("translation", stiffness.translation),
            ("twist", stiffness.twist),
            ("bending", stiffness.bending),
        ] {
            if !(value.is_finite() && value >= 0.0) {
                return Err(ElementError::InvalidValue {
                    kind: "clamp_joint",
                    parameter,
                    value,
                    expected: "a finite stiffness, zero or positive",
                });
            }
        }
        Ok(Self { nodes, axis: axis / n, stiffness, twist_damping: 0.0 })
    }

    /// The same joint with a rotational dashpot `c` (N·m·s/rad) on the
    /// twist about its axis: the moment `−c ((ω_b − ω_a)·e) e` on b, `e`
    /// the axis turned with a (the hinge of a spacer-damper arm, whose
    /// elastomer bushing resists the arm's swing in the spacer's plane).
    ///
    /// # Errors
    /// [`ElementError::InvalidValue`] for a negative or non-finite `c`.
    pub fn with_twist_damping(mut self, c: f64) -> Result<Self, ElementError> {
        if !(c.is_finite() && c >= 0.0) {
            return Err(ElementError::InvalidValue {
                kind: "clamp_joint",
                parameter: "twist_damping",
                value: c,
                expected: "a finite damping coefficient, zero or positive (N·m·s/rad)",
            });
        }
        self.twist_damping = c;
        Ok(self)
    }

    fn compliance_matrix(&self) -> Matrix3<f64> {
        let ee = self.axis * self.axis.transpose();
        ee * self.stiffness.twist + (Matrix3::identity() - ee) * self.stiffness.bending
    }

    /// Relative rotation vector θ and the moment `T⁻ᵀ C θ` in a's frame.
    fn relative(&self, nodes: &[NodeState]) -> (Vector3<f64>, Vector3<f64>) {
        let theta = so3::log(&(nodes[0].rotation.transpose() * nodes[1].rotation));
        let w = so3::tangent_inv(&theta).transpose() * (self.compliance_matrix() * theta);
        (theta, w)
    }
}

impl Element for ClampJoint {
    fn kind(&self) -> &'static str {
        "clamp_joint"
    }

    fn nodes(&self) -> &[usize] {
        &self.nodes
    }

    fn uses_rotations(&self) -> bool {
        true
    }

    fn internal_force(&self, _ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64]) {
        let fb = (nodes[1].x - nodes[0].x) * self.stiffness.translation;
        let (_, w) = self.relative(nodes);
        let mb = nodes[0].rotation * w;
        for d in 0..3 {
            f[d] = -fb[d];
            f[3 + d] = -mb[d];
            f[6 + d] = fb[d];
            f[9 + d] = mb[d];
        }
    }

    fn tangent(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64], k: &mut [f64]) {
        self.internal_force(ctx, nodes, f);
        k[..144].fill(0.0);
        let kt = self.stiffness.translation;
        for d in 0..3 {
            k[d * 12 + d] = kt;
            k[(6 + d) * 12 + 6 + d] = kt;
            k[d * 12 + 6 + d] = -kt;
            k[(6 + d) * 12 + d] = -kt;
        }
        let (theta, w) = self.relative(nodes);
        let c = self.compliance_matrix();
        let ra = nodes[0].rotation;
        let t_inv = so3::tangent_inv(&theta);
        let dw =
            (so3::tangent_inv_transpose_derivative(&theta, &(c * theta)) + t_inv.transpose() * c) * t_inv;
        // ∂m_b/∂δ_b = K1, ∂m_b/∂δ_a = −K1 − (R_a w)^ (the spin of a turns R_a w).
        let k1 = ra * dw * ra.transpose();
        let spin = so3::skew(&(ra * w));
        for r in 0..3 {
            for col in 0..3 {
                let bb = k1[(r, col)];
                let ba = -k1[(r, col)] - spin[(r, col)];
                k[(9 + r) * 12 + 9 + col] = bb;
                k[(9 + r) * 12 + 3 + col] = ba;
                k[(3 + r) * 12 + 9 + col] = -bb;
                k[(3 + r) * 12 + 3 + col] = -ba;
            }
        }
    }

    fn lumped_mass(&self, _nodes: &[NodeState], m: &mut [f64]) {
        m[..144].fill(0.0);
    }

    fn output(&self, _ctx: &ElementContext, nodes: &[NodeState]) -> ElementOutput {
        let (theta, _) = self.relative(nodes);
        let twist = self.axis.dot(&theta);
        let bend = theta - self.axis * twist;
        ElementOutput {
            axial_force: self.stiffness.translation * (nodes[1].x - nodes[0].x).norm(),
            torque: self.stiffness.twist * twist,
            bending_moment_y: [self.stiffness.bending * bend.norm(); 2],
            ..ElementOutput::default()
        }
    }

    fn strain_energy(&self, _ctx: &ElementContext, nodes: &[NodeState]) -> f64 {
        let (theta, _) = self.relative(nodes);
        let d = nodes[1].x - nodes[0].x;
        0.5 * self.stiffness.translation * d.norm_squared()
            + 0.5 * theta.dot(&(self.compliance_matrix() * theta))
    }

    fn unstretched_length(&self) -> f64 {
        0.0
    }

    fn mass_per_length(&self) -> f64 {
        0.0
    }

    fn damping_matrix(&self, nodes: &[NodeState], c: &mut [f64]) -> bool {
        if self.twist_damping == 0.0 {
            return false;
        }
        let e = nodes[0].rotation * self.axis;
        c[..144].fill(0.0);
        for (a, sa) in [(3usize, 1.0f64), (9, -1.0)] {
            for (b, sb) in [(3usize, 1.0f64), (9, -1.0)] {
                for i in 0..3 {
                    for j in 0..3 {
                        c[(a + i) * 12 + b + j] = sa * sb * self.twist_damping * e[i] * e[j];
                    }
                }
            }
        }
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_util::{perturb, Lcg};

    fn joint() -> ClampJoint {
        let s = ClampStiffness { translation: 2.0e4, twist: 3.0e3, bending: 70.0 };
        ClampJoint::new([0, 1], Vector3::new(1.0, 0.2, -0.1), s).unwrap()
    }

    fn states(rng: &mut Lcg) -> Vec<NodeState> {
        let x0 = Vector3::new(2.0, 1.0, 3.0);
        let ra = rng.rotation(0.6);
        let rb = so3::exp(&rng.vector(0.3)) * ra;
        vec![
            NodeState { x0, x: x0 + rng.vector(0.1), rotation: ra },
            NodeState { x0, x: x0 + rng.vector(0.1), rotation: rb },
        ]
    }

    #[test]
    fn tangent_matches_central_differences() {
        let e = joint();
        let ctx = ElementContext::default();
        let mut rng = Lcg::new(11);
        for _ in 0..10 {
            let nodes = states(&mut rng);
            let (mut f, mut k) = (vec![0.0; 12], vec![0.0; 144]);
            e.tangent(&ctx, &nodes, &mut f, &mut k);
            let h = 1e-6;
            for c in 0..12 {
                let (mut fp, mut fm) = (vec![0.0; 12], vec![0.0; 12]);
                e.internal_force(&ctx, &perturb(&nodes, c, h), &mut fp);
                e.internal_force(&ctx, &perturb(&nodes, c, -h), &mut fm);
                for r in 0..12 {
                    let fd = (fp[r] - fm[r]) / (2.0 * h);
                    let an = k[r * 12 + c];
                    assert!((fd - an).abs() < 1e-5 * 2.0e4, "({r},{c}): {fd} vs {an}");
                }
            }
        }
    }

    #[test]
    fn a_rigid_motion_costs_nothing() {
        let e = joint();
        let q = so3::exp(&Vector3::new(0.7, -0.4, 1.1));
        let x = Vector3::new(1.0, -2.0, 0.5);
        let nodes = vec![NodeState { x0: x, x: x + Vector3::new(0.3, 0.1, -0.2), rotation: q }; 2];
        let mut f = vec![0.0; 12];
        e.internal_force(&ElementContext::default(), &nodes, &mut f);
        assert!(f.iter().all(|v| v.abs() < 1e-9), "{f:?}");
        assert!(e.strain_energy(&ElementContext::default(), &nodes).abs() < 1e-12);
    }

    #[test]
    fn small_relative_rotations_see_twist_and_bending_stiffness() {
        // Conductor along x: a small relative rotation about x costs the twist
        // stiffness, about y or z the bending stiffness.
        let s = ClampStiffness { translation: 1e6, twist: 5.0e3, bending: 40.0 };
        let e = ClampJoint::new([0, 1], Vector3::x(), s).unwrap();
        let x = Vector3::zeros();
        for (axis, want) in [(Vector3::x(), 5.0e3), (Vector3::y(), 40.0), (Vector3::z(), 40.0)] {
            let phi = 1e-4;
            let nodes = [
                NodeState { x0: x, x, rotation: Matrix3::identity() },
                NodeState { x0: x, x, rotation: so3::exp(&(axis * phi)) },
            ];
            let mut f = vec![0.0; 12];
            e.internal_force(&ElementContext::default(), &nodes, &mut f);
            let m = Vector3::new(f[9], f[10], f[11]);
            assert!((m.dot(&axis) / phi / want - 1.0).abs() < 1e-6, "{axis:?}: {m:?}");
        }
    }

    #[test]
    fn twist_dashpot_resists_only_relative_spin_about_the_turned_axis() {
        // Definition of the hinge dashpot: m_b = −c ((ω_b − ω_a)·e) e with e
        // the axis turned by a's rotation; a common spin of both nodes, or a
        // relative spin across the axis, meets no moment.
        let s = ClampStiffness { translation: 1e6, twist: 5.0e3, bending: 40.0 };
        let c = 12.0;
        let joint = ClampJoint::new([0, 1], Vector3::x(), s).unwrap().with_twist_damping(c).unwrap();
        let turn = so3::exp(&Vector3::new(0.0, 0.0, 0.3));
        let x = Vector3::zeros();
        let nodes = [NodeState { x0: x, x, rotation: turn }, NodeState { x0: x, x, rotation: turn }];
        let mut cm = vec![0.0; 144];
        assert!(joint.damping_matrix(&nodes, &mut cm));
        let e = turn * Vector3::x();
        let moment_on_b = |wa: Vector3<f64>, wb: Vector3<f64>| {
            let mut v = [0.0; 12];
            v[3..6].copy_from_slice(wa.as_slice());
            v[9..12].copy_from_slice(wb.as_slice());
            Vector3::from_fn(|r, _| -(0..12).map(|j| cm[(9 + r) * 12 + j] * v[j]).sum::<f64>())
        };
        let m = moment_on_b(Vector3::zeros(), e * 2.0);
        assert!((m + e * (2.0 * c)).norm() < 1e-12, "{m:?}");
        assert!(moment_on_b(e, e).norm() < 1e-12);
        let across = Vector3::z();
        assert!(moment_on_b(Vector3::zeros(), across).norm() < 1e-12);
        assert!(ClampJoint::new([0, 1], Vector3::x(), s).unwrap().with_twist_damping(-1.0).is_err());
        let plain = ClampJoint::new([0, 1], Vector3::x(), s).unwrap();
        assert!(!plain.damping_matrix(&nodes, &mut cm), "no dashpot, no matrix");
    }
}
