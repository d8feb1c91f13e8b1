//! A concentrated mass at one node: translational mass and an isotropic
//! rotary inertia, no stiffness. Models lumped devices, the bob of a
//! detuning pendulum and hardware weights.

use crate::element::{Element, ElementContext, ElementOutput, NodeState};
use crate::error::ElementError;

/// A point mass `m` (kg) with rotary inertia `j` (kg·m²) about every axis.
#[derive(Clone, Debug, PartialEq)]
pub struct PointMass {
    nodes: [usize; 1],
    mass: f64,
    rotary_inertia: f64,
}

impl PointMass {
    /// A mass of `mass` kg at `node`, with rotary inertia `rotary_inertia`
    /// kg·m² (zero: the node's rotations get no inertia from this element).
    pub fn new(node: usize, mass: f64, rotary_inertia: f64) -> Result<Self, ElementError> {
        if !(mass.is_finite() && mass > 0.0) {
            return Err(ElementError::InvalidValue {
                kind: "point_mass",
                parameter: "mass",
                value: mass,
                expected: "a positive finite mass in kg",
            });
        }
        if !(rotary_inertia.is_finite() && rotary_inertia >= 0.0) {
            return Err(ElementError::InvalidValue {
                kind: "point_mass",
                parameter: "rotary_inertia",
                value: rotary_inertia,
                expected: "zero or a positive finite inertia in kg·m²",
            });
        }
        Ok(Self { nodes: [node], mass, rotary_inertia })
    }

    /// Rotary inertia of a solid sphere of density `density` (kg/m³) and
    /// mass `mass` (kg): `0.4 m r²` with `r = (3m / 4πρ)^(1/3)`, in kg·m².
    pub fn sphere_inertia(mass: f64, density: f64) -> f64 {
        let r = (3.0 * mass / (4.0 * std::f64::consts::PI * density)).cbrt();
        0.4 * mass * r * r
    }

    /// The mass, in kg.
    pub fn mass(&self) -> f64 {
        self.mass
    }
}

impl Element for PointMass {
    fn kind(&self) -> &'static str {
        "point_mass"
    }

    fn nodes(&self) -> &[usize] {
        &self.nodes
    }

    fn uses_rotations(&self) -> bool {
        self.rotary_inertia > 0.0
    }

    fn internal_force(&self, _ctx: &ElementContext, _nodes: &[NodeState], f: &mut [f64]) {
        f[..6].fill(0.0);
    }

    fn tangent(&self, _ctx: &ElementContext, _nodes: &[NodeState], f: &mut [f64], k: &mut [f64]) {
        f[..6].fill(0.0);
        k[..36].fill(0.0);
    }

    fn lumped_mass(&self, _nodes: &[NodeState], m: &mut [f64]) {
        m[..36].fill(0.0);
        for i in 0..3 {
            m[i * 6 + i] = self.mass;
            m[(3 + i) * 6 + 3 + i] = self.rotary_inertia;
        }
    }

    fn output(&self, _ctx: &ElementContext, _nodes: &[NodeState]) -> ElementOutput {
        ElementOutput::default()
    }

    fn strain_energy(&self, _ctx: &ElementContext, _nodes: &[NodeState]) -> f64 {
        0.0
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
    fn sphere_inertia_matches_the_closed_form() {
        // A 1 kg sphere of density 3/(4π) kg/m³ has r = 1 m, I = 0.4 kg·m² (closed form).
        let rho = 3.0 / (4.0 * std::f64::consts::PI);
        assert!((PointMass::sphere_inertia(1.0, rho) - 0.4).abs() < 1e-14);
    }

    #[test]
    fn rejects_bad_values() {
        assert!(PointMass::new(0, 0.0, 0.0).is_err());
        assert!(PointMass::new(0, 1.0, -1.0).is_err());
        assert!(PointMass::new(0, f64::NAN, 0.0).is_err());
    }
}
