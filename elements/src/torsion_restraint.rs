//! A one-node rotational spring to ground about a fixed axis: restrains
//! the twist of a conductor at a clamp while leaving its bending rotations
//! free (a conductor clamp transmits torque but next to no moment).
//!
//! Energy `½ k (e·θ)²` with θ = log(R) the node's rotation vector and `e`
//! the unit axis. With spatial spin increments δ = T(θ) δθ (Battini &
//! Pacoste 2002) the conjugate moment is `m = k (e·θ) T⁻ᵀ e` and the
//! tangent `k [T⁻ᵀ e eᵀ T⁻¹ + (e·θ) ∂(T⁻ᵀ e)/∂θ T⁻¹]`.
//!
//! Unlike the structural kinds this element is tied to ground, so it is
//! not invariant under rigid rotations: that is its purpose.

use crate::element::{Element, ElementContext, ElementOutput, NodeState};
use crate::error::ElementError;
use crate::so3;
use nalgebra::Vector3;

/// Rotational spring to ground about a fixed axis.
#[derive(Clone, Debug, PartialEq)]
pub struct TorsionRestraint {
    nodes: [usize; 1],
    axis: Vector3<f64>,
    stiffness: f64,
}

impl TorsionRestraint {
    /// Restrains rotation of `node` about `axis` (normalised here) with
    /// stiffness `stiffness`, in N·m/rad.
    pub fn new(node: usize, axis: Vector3<f64>, stiffness: f64) -> Result<Self, ElementError> {
        let n = axis.norm();
        if !(n.is_finite() && n > 0.0) {
            return Err(ElementError::InvalidValue {
                kind: "torsion_restraint",
                parameter: "axis",
                value: n,
                expected: "a non-zero finite vector",
            });
        }
        if !(stiffness.is_finite() && stiffness > 0.0) {
            return Err(ElementError::InvalidValue {
                kind: "torsion_restraint",
                parameter: "stiffness",
                value: stiffness,
                expected: "a positive finite stiffness in N·m/rad",
            });
        }
        Ok(Self { nodes: [node], axis: axis / n, stiffness })
    }

    fn moment(&self, nodes: &[NodeState]) -> (Vector3<f64>, f64, Vector3<f64>) {
        let theta = so3::log(&nodes[0].rotation);
        let twist = self.axis.dot(&theta);
        let m = so3::tangent_inv(&theta).transpose() * self.axis * (self.stiffness * twist);
        (m, twist, theta)
    }
}

impl Element for TorsionRestraint {
    fn kind(&self) -> &'static str {
        "torsion_restraint"
    }

    fn nodes(&self) -> &[usize] {
        &self.nodes
    }

    fn uses_rotations(&self) -> bool {
        true
    }

    fn internal_force(&self, _ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64]) {
        f[..6].fill(0.0);
        let (m, _, _) = self.moment(nodes);
        f[3..6].copy_from_slice(m.as_slice());
    }

    fn tangent(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64], k: &mut [f64]) {
        self.internal_force(ctx, nodes, f);
        k[..36].fill(0.0);
        let (_, twist, theta) = self.moment(nodes);
        let t_inv = so3::tangent_inv(&theta);
        let a = t_inv.transpose() * self.axis;
        let kk = (a * a.transpose()
            + so3::tangent_inv_transpose_derivative(&theta, &self.axis) * t_inv * twist)
            * self.stiffness;
        for r in 0..3 {
            for c in 0..3 {
                k[(3 + r) * 6 + 3 + c] = kk[(r, c)];
            }
        }
    }

    fn lumped_mass(&self, _nodes: &[NodeState], m: &mut [f64]) {
        m[..36].fill(0.0);
    }

    fn output(&self, _ctx: &ElementContext, nodes: &[NodeState]) -> ElementOutput {
        let (_, twist, _) = self.moment(nodes);
        ElementOutput { torque: self.stiffness * twist, ..ElementOutput::default() }
    }

    fn strain_energy(&self, _ctx: &ElementContext, nodes: &[NodeState]) -> f64 {
        let (_, twist, _) = self.moment(nodes);
        0.5 * self.stiffness * twist * twist
    }

    fn unstretched_length(&self) -> f64 {
        0.0
    }

    fn mass_per_length(&self) -> f64 {
        0.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tangent_matches_central_differences() {
        // Perturb the rotation multiplicatively, R ← exp(h eᵢ) R (the DOF convention).
        let e = TorsionRestraint::new(0, Vector3::new(1.0, 0.2, -0.1), 3.0e4).unwrap();
        let r = so3::exp(&Vector3::new(0.3, -0.2, 0.4));
        let node = NodeState { x0: Vector3::zeros(), x: Vector3::zeros(), rotation: r };
        let ctx = ElementContext::default();
        let (mut f, mut k) = (vec![0.0; 6], vec![0.0; 36]);
        e.tangent(&ctx, &[node], &mut f, &mut k);
        let h = 1e-6;
        for c in 0..3 {
            let mut d = Vector3::zeros();
            d[c] = h;
            let (mut fp, mut fm) = (vec![0.0; 6], vec![0.0; 6]);
            let plus = NodeState { rotation: so3::exp(&d) * r, ..node };
            let minus = NodeState { rotation: so3::exp(&(-d)) * r, ..node };
            e.internal_force(&ctx, &[plus], &mut fp);
            e.internal_force(&ctx, &[minus], &mut fm);
            for row in 0..3 {
                let fd = (fp[3 + row] - fm[3 + row]) / (2.0 * h);
                let an = k[(3 + row) * 6 + 3 + c];
                // Central differences: error O(h²·k) ≈ 1e-8 relative to k.
                assert!((fd - an).abs() < 1e-6 * 3.0e4, "({row},{c}): {fd} vs {an}");
            }
        }
    }

    #[test]
    fn rotation_about_other_axes_costs_nothing() {
        let e = TorsionRestraint::new(0, Vector3::x(), 1.0e3).unwrap();
        let node = NodeState {
            x0: Vector3::zeros(),
            x: Vector3::zeros(),
            rotation: so3::exp(&Vector3::new(0.0, 0.3, -0.2)),
        };
        let mut f = vec![0.0; 6];
        e.internal_force(&ElementContext::default(), &[node], &mut f);
        assert!(f.iter().all(|v| v.abs() < 1e-12));
    }
}
