//! Post-processing numerics of glaze, free of any file format: rainflow
//! counting and Miner damage, the Poffenberger–Swart bending stress at a
//! clamp, segment distances and clearance search between conductor
//! polylines, galloping orbits (ellipse fit) and dominant frequencies.
//!
//! The engine reads a results file and feeds these functions plain slices;
//! nothing here knows about HDF5, TOML or the model.

#![deny(missing_docs)]

pub mod bending_stress;
pub mod clearance;
pub mod fatigue;
pub mod orbit;
pub mod rainflow;
pub mod segment_distance;
pub mod spectrum;
