//! Element kinds of glaze and the rotation helpers they share.
//!
//! Every kind implements [`Element`]: for the current nodal positions and
//! rotations it returns the internal force vector and the consistent
//! tangent stiffness in global coordinates, its lumped mass and its section
//! results. The kinds:
//!
//! - [`CorotationalBeam`]: 3D corotational Euler–Bernoulli beam;
//! - [`Cable`]: two-node large-displacement truss that carries no compression;
//! - [`Link`]: two-node large-displacement truss that carries compression too;
//! - [`PointMass`]: a concentrated mass with rotary inertia, no stiffness;
//! - [`TorsionRestraint`]: a twist spring to ground about a fixed axis;
//! - [`ClampJoint`]: a zero-length clamp, stiff in translation and twist,
//!   soft in bending.
//!
//! The crate knows nothing of models, input files or solvers.

#![deny(missing_docs)]

mod cable;
mod clamp_joint;
mod corotational_beam;
mod dashpot;
mod element;
#[cfg(test)]
mod energy_tests;
mod error;
mod link;
mod point_mass;
pub mod so3;
#[cfg(test)]
mod test_util;
mod torsion_restraint;
mod truss;

pub use cable::Cable;
pub use clamp_joint::{ClampJoint, ClampStiffness};
pub use corotational_beam::{BeamSection, CorotationalBeam};
pub use dashpot::Dashpot;
pub use element::{Element, ElementContext, ElementOutput, NodeState};
pub use error::ElementError;
pub use link::Link;
pub use point_mass::PointMass;
pub use torsion_restraint::TorsionRestraint;
pub use truss::TrussSection;
