//! The glaze engine: input, model building, form-finding, analysis stages
//! and results files for overhead-line tension sections.
//!
//! Data flow: [`input::load`] reads and validates a TOML file into a
//! [`SectionSpec`]; [`model::build`] form-finds each span and meshes it into
//! a [`model::Model`]; [`analysis::run_static`] solves the load case;
//! [`results::ResultsWriter`] writes the HDF5 results file.

#![deny(missing_docs)]

pub mod aero_loads;
pub mod analysis;
pub mod devices;
pub mod error;
pub mod formfinding;
pub mod input;
pub mod model;
pub mod registry;
pub mod results;
pub mod spec;
pub mod summary;

pub use error::{GlazeError, InputError, InputErrorKind, InputWarning};
pub use registry::ElementRegistry;
pub use spec::SectionSpec;
