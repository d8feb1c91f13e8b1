//! Two-node large-displacement truss kinematics, shared by [`crate::Cable`]
//! and [`crate::Link`].
//!
//! Engineering strain on the temperature-scaled unstretched length
//! `Lt = L0 (1 + α ΔT)`: `N = EA (l − Lt)/Lt` (Hooke's law of Irvine's
//! elastic catenary, Irvine 1981, "Cable Structures", ch. 2). With
//! `n = (x2 − x1)/l` the nodal forces are `∓N n` and the consistent tangent
//! of one node pair is `K = (EA/Lt) n nᵀ + (N/l)(I − n nᵀ)` (material plus
//! geometric stiffness; e.g. Crisfield 1991, "Non-linear Finite Element
//! Analysis of Solids and Structures", vol. 1, ch. 3).

use crate::error::{finite, non_negative, positive, ElementError};
use crate::{ElementContext, ElementOutput, NodeState};
use nalgebra::{Matrix3, Vector3};

/// Section of a two-node truss (cable or link).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TrussSection {
    /// Axial stiffness E·A, in N.
    pub ea: f64,
    /// Mass per unstretched length, in kg/m.
    pub mass_per_length: f64,
    /// Coefficient of linear thermal expansion α, in 1/K.
    pub thermal_expansion: f64,
}

/// State of a truss for one set of nodal positions.
struct TrussState {
    /// Unit vector from node 1 to node 2.
    n: Vector3<f64>,
    /// Current length, m.
    l: f64,
    /// Temperature-scaled unstretched length, m.
    lt: f64,
    /// Axial force, N.
    force: f64,
    /// Whether the element carries force (false for a slack cable).
    active: bool,
}

/// Two-node truss: nodes, unstretched length and section, and whether it
/// carries compression.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Truss {
    pub(crate) nodes: [usize; 2],
    pub(crate) unstretched_length: f64,
    pub(crate) section: TrussSection,
    tension_only: bool,
}

impl Truss {
    /// Checks the data: `L0 > 0`, `EA > 0`, mass ≥ 0, α finite.
    pub(crate) fn new(
        kind: &'static str,
        nodes: [usize; 2],
        unstretched_length: f64,
        section: TrussSection,
        tension_only: bool,
    ) -> Result<Self, ElementError> {
        positive(kind, "unstretched_length", unstretched_length)?;
        positive(kind, "ea", section.ea)?;
        non_negative(kind, "mass_per_length", section.mass_per_length)?;
        finite(kind, "thermal_expansion", section.thermal_expansion)?;
        Ok(Self { nodes, unstretched_length, section, tension_only })
    }

    fn state(&self, ctx: &ElementContext, nodes: &[NodeState]) -> TrussState {
        let d = nodes[1].x - nodes[0].x;
        let l = d.norm();
        let lt = self.unstretched_length * (1.0 + self.section.thermal_expansion * ctx.temperature_change);
        let active = !(self.tension_only && l <= lt);
        let force = if active { self.section.ea * (l - lt) / lt } else { 0.0 };
        // A compressed link of zero length has no direction: NaN makes the
        // assembler report a non-finite state instead of a silent answer.
        let n = if l > 0.0 { d / l } else { Vector3::repeat(f64::NAN) };
        TrussState { n, l, lt, force, active }
    }

    /// Nodal force vector `[−N n, 0, N n, 0]` (N), 12 entries.
    pub(crate) fn internal_force(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64]) {
        let s = self.state(ctx, nodes);
        write_force(&s, f);
    }

    /// Force and consistent tangent (row-major 12 × 12, N/m).
    pub(crate) fn tangent(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64], k: &mut [f64]) {
        let s = self.state(ctx, nodes);
        write_force(&s, f);
        k[..144].fill(0.0);
        if !s.active {
            return;
        }
        let nn = s.n * s.n.transpose();
        let kt = nn * (self.section.ea / s.lt) + (Matrix3::identity() - nn) * (s.force / s.l);
        for (a, b, sign) in [(0, 0, 1.0), (0, 6, -1.0), (6, 0, -1.0), (6, 6, 1.0)] {
            for i in 0..3 {
                for j in 0..3 {
                    k[(a + i) * 12 + b + j] = sign * kt[(i, j)];
                }
            }
        }
    }

    /// Lumped mass `m L0 / 2` on each node's translations (kg).
    pub(crate) fn lumped_mass(&self, m: &mut [f64]) {
        m[..144].fill(0.0);
        let half = 0.5 * self.section.mass_per_length * self.unstretched_length;
        for i in [0, 1, 2, 6, 7, 8] {
            m[i * 12 + i] = half;
        }
    }

    /// Axial force and mechanical strain `(l − Lt)/Lt` (the kinematic
    /// strain, negative for a slack cable even though its force is zero).
    /// Strain energy `½ EA (l − Lt)²/Lt` while it carries force, in J.
    pub(crate) fn strain_energy(&self, ctx: &ElementContext, nodes: &[NodeState]) -> f64 {
        let s = self.state(ctx, nodes);
        if s.active {
            0.5 * self.section.ea * (s.l - s.lt).powi(2) / s.lt
        } else {
            0.0
        }
    }

    pub(crate) fn output(&self, ctx: &ElementContext, nodes: &[NodeState]) -> ElementOutput {
        let s = self.state(ctx, nodes);
        ElementOutput { axial_force: s.force, axial_strain: (s.l - s.lt) / s.lt, ..ElementOutput::default() }
    }
}

fn write_force(s: &TrussState, f: &mut [f64]) {
    f[..12].fill(0.0);
    if !s.active {
        return;
    }
    for i in 0..3 {
        f[i] = -s.force * s.n[i];
        f[6 + i] = s.force * s.n[i];
    }
}

/// Implements [`crate::Element`] for a newtype around [`Truss`] (used by
/// the cable and the link so that neither repeats the other).
macro_rules! impl_truss_element {
    ($ty:ident, $kind:literal) => {
        impl $crate::Element for $ty {
            fn kind(&self) -> &'static str {
                $kind
            }
            fn nodes(&self) -> &[usize] {
                &self.0.nodes
            }
            fn uses_rotations(&self) -> bool {
                false
            }
            fn internal_force(
                &self,
                ctx: &$crate::ElementContext,
                nodes: &[$crate::NodeState],
                f: &mut [f64],
            ) {
                self.0.internal_force(ctx, nodes, f);
            }
            fn tangent(
                &self,
                ctx: &$crate::ElementContext,
                nodes: &[$crate::NodeState],
                f: &mut [f64],
                k: &mut [f64],
            ) {
                self.0.tangent(ctx, nodes, f, k);
            }
            fn lumped_mass(&self, _nodes: &[$crate::NodeState], m: &mut [f64]) {
                self.0.lumped_mass(m);
            }
            fn output(
                &self,
                ctx: &$crate::ElementContext,
                nodes: &[$crate::NodeState],
            ) -> $crate::ElementOutput {
                self.0.output(ctx, nodes)
            }
            fn strain_energy(&self, ctx: &$crate::ElementContext, nodes: &[$crate::NodeState]) -> f64 {
                self.0.strain_energy(ctx, nodes)
            }

            fn unstretched_length(&self) -> f64 {
                self.0.unstretched_length
            }
            fn mass_per_length(&self) -> f64 {
                self.0.section.mass_per_length
            }
        }
    };
}
pub(crate) use impl_truss_element;

#[cfg(test)]
mod tests;
