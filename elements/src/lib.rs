//! Element kinds of glaze and the rotation helpers they share.
//!
//! Every kind implements [`Element`]: for the current nodal positions and
//! rotations it returns the internal force vector and the consistent
//! tangent stiffness in global coordinates, its lumped mass and its section
//! results. The kinds:
//!
//! - [`CorotationalBeam`]: 3D corotational Euler–Bernoulli beam;
//! - [`Cable`]: two-node large-displacement truss that carries no compression;
//! - [`Link`]: two-node large-displacement truss that carries compression too.
//!
//! The crate knows nothing of models, input files or solvers.

#![deny(missing_docs)]

mod cable;
mod corotational_beam;
mod element;
#[cfg(test)]
mod energy_tests;
mod error;
mod link;
pub mod so3;
#[cfg(test)]
mod test_util;
mod torsion_restraint;
mod truss;

pub use cable::Cable;
pub use corotational_beam::{BeamSection, CorotationalBeam};
pub use element::{Element, ElementContext, ElementOutput, NodeState};
pub use error::ElementError;
pub use link::Link;
pub use torsion_restraint::TorsionRestraint;
pub use truss::TrussSection;
