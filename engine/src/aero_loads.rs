//! Quasi-steady aerodynamic loads on conductor elements: the section loads
//! of [`glaze_aero::section_load`] integrated along each element with its
//! own linear interpolation at two Gauss points, and their derivatives with
//! respect to nodal displacements and rotations (aerodynamic stiffness) and
//! nodal velocities (aerodynamic damping).
//!
//! The derivatives are central finite differences of the integrated nodal
//! loads (steps 1e-7 of the element length, 1e-7 rad, 1e-6 of the wind
//! speed), accurate to about 1e-8 relative: enough for Newton's quadratic
//! convergence to the tolerances used, and exact for the modal damping to
//! the digits reported. The tangent they give is not symmetric.

use crate::model::DOF_PER_NODE;
use crate::spec::WindSpec;
use glaze_aero::{section_load, CoefficientTable, SectionAero, SectionFrame, SectionState, TableError};
use glaze_elements::{so3, NodeState};
use nalgebra::Vector3;
use std::sync::Arc;

/// Aerodynamic data of one two-node conductor element.
#[derive(Clone, Debug)]
pub struct ElementAero {
    /// Coefficient table of the section (bare or iced).
    pub table: Arc<CoefficientTable>,
    /// Whether the element carries nodal rotations (twist, moments).
    pub uses_rotations: bool,
    /// Fixed rotation of the section's reference axis about the conductor
    /// axis (ice orientation), added to the twist, in rad.
    pub orientation: f64,
}

/// Nodal velocities of an element's two nodes.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct NodeVelocity {
    /// Translational velocity, in m/s.
    pub velocity: Vector3<f64>,
    /// Angular velocity (spatial), in rad/s.
    pub angular: Vector3<f64>,
}

/// The mean wind acting on an element, its velocity scaled by `scale`.
#[derive(Clone, Copy, Debug)]
pub struct Flow<'a> {
    /// The wind of the load case.
    pub wind: &'a WindSpec,
    /// Factor on the wind velocity (ramps and load stepping), dimensionless.
    pub scale: f64,
}

/// Gauss–Legendre points and weights on [−1, 1], two points.
const GAUSS: [(f64, f64); 2] = [(-0.577_350_269_189_625_8, 1.0), (0.577_350_269_189_625_8, 1.0)];

/// Nodal aerodynamic loads (length 12: force and moment at each node, N
/// and N·m) of a two-node element, with the wind velocity scaled by `scale`.
pub fn element_load(
    aero: &ElementAero,
    flow: Flow<'_>,
    nodes: &[NodeState],
    vel: &[NodeVelocity; 2],
    out: &mut [f64],
) -> Result<(), TableError> {
    let (wind, scale) = (flow.wind, flow.scale);
    out[..2 * DOF_PER_NODE].fill(0.0);
    let chord = nodes[1].x - nodes[0].x;
    let length = chord.norm();
    if length < f64::MIN_POSITIVE {
        return Ok(());
    }
    let unit = wind.wind.unit();
    let frame = SectionFrame::for_conductor(chord / length, unit);
    let reference = SectionFrame::for_conductor((nodes[1].x0 - nodes[0].x0).normalize(), unit);
    let twist = |a: usize| {
        if !aero.uses_rotations {
            return 0.0;
        }
        let m = nodes[a].rotation * reference.e_y;
        m.dot(&frame.e_z).atan2(m.dot(&frame.e_y))
    };
    let (theta0, theta1) = (twist(0), twist(1));
    let section = SectionAero {
        table: &aero.table,
        diameter: aero.table.reference_diameter(),
        air_density: wind.wind.air_density,
        // Nigol & Buchan (1981) take R of the order of the section's radius
        // (from memory); the default applies it where a moment curve exists.
        characteristic_radius: wind.characteristic_radius.unwrap_or(if aero.table.has_moment() {
            0.5 * aero.table.reference_diameter()
        } else {
            0.0
        }),
        // The switch is applied here so that the fixed orientation always counts.
        include_twist: true,
    };
    for (xi, w) in GAUSS {
        let n = [(1.0 - xi) / 2.0, (1.0 + xi) / 2.0];
        let x = nodes[0].x * n[0] + nodes[1].x * n[1];
        let state = SectionState {
            wind: wind.wind.velocity_at(x.z) * scale,
            velocity: vel[0].velocity * n[0] + vel[1].velocity * n[1],
            twist: if wind.include_twist { theta0 * n[0] + theta1 * n[1] } else { 0.0 } + aero.orientation,
            twist_rate: (vel[0].angular * n[0] + vel[1].angular * n[1]).dot(&frame.e_x),
        };
        let load = section_load(&section, &frame, &state)?;
        let jac = w * length / 2.0;
        for (a, na) in n.iter().enumerate() {
            for d in 0..3 {
                out[a * DOF_PER_NODE + d] += jac * na * load.force[d];
                if aero.uses_rotations {
                    out[a * DOF_PER_NODE + 3 + d] += jac * na * load.moment * frame.e_x[d];
                }
            }
        }
    }
    Ok(())
}

/// Which derivative [`element_jacobian`] computes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Derivative {
    /// ∂f/∂[u, θ]: aerodynamic stiffness.
    Displacement,
    /// ∂f/∂[u̇, ω]: aerodynamic damping.
    Velocity,
}

/// Loads `f` and their 12×12 row-major Jacobian `jac` (see [`Derivative`]).
pub fn element_jacobian(
    aero: &ElementAero,
    flow: Flow<'_>,
    nodes: &[NodeState],
    vel: &[NodeVelocity; 2],
    which: Derivative,
    f: &mut [f64],
    jac: &mut [f64],
) -> Result<(), TableError> {
    const M: usize = 2 * DOF_PER_NODE;
    let (wind, scale) = (flow.wind, flow.scale);
    element_load(aero, flow, nodes, vel, f)?;
    jac[..M * M].fill(0.0);
    let length = (nodes[1].x - nodes[0].x).norm().max(1e-9);
    let speed = (wind.wind.speed * scale).max(1.0);
    let (mut fp, mut fm) = ([0.0; M], [0.0; M]);
    let mut pert = [nodes[0], nodes[1]];
    for col in 0..M {
        let (a, d) = (col / DOF_PER_NODE, col % DOF_PER_NODE);
        if d >= 3 && !aero.uses_rotations {
            continue;
        }
        let h = match (which, d < 3) {
            (Derivative::Displacement, true) => 1e-7 * length,
            (Derivative::Displacement, false) => 1e-7,
            (Derivative::Velocity, true) => 1e-6 * speed,
            (Derivative::Velocity, false) => 1e-6 * speed / length,
        };
        for (sign, out) in [(1.0, &mut fp), (-1.0, &mut fm)] {
            let mut v = *vel;
            pert[a] = nodes[a];
            match (which, d < 3) {
                (Derivative::Displacement, true) => pert[a].x[d] += sign * h,
                (Derivative::Displacement, false) => {
                    let mut e = Vector3::zeros();
                    e[d - 3] = sign * h;
                    pert[a].rotation = so3::exp(&e) * nodes[a].rotation;
                }
                (Derivative::Velocity, true) => v[a].velocity[d] += sign * h,
                (Derivative::Velocity, false) => v[a].angular[d - 3] += sign * h,
            }
            element_load(aero, flow, &pert, &v, out)?;
        }
        pert[a] = nodes[a];
        for row in 0..M {
            jac[row * M + col] = (fp[row] - fm[row]) / (2.0 * h);
        }
    }
    Ok(())
}
