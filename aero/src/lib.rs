//! Atmospheric loads on conductors for glaze: the ice description, the
//! mean wind field, aerodynamic coefficient tables and the quasi-steady
//! section loads built from them.

#![deny(missing_docs)]

pub mod coefficient_table;
pub mod ice;
pub mod section_load;
pub mod wind;

pub use coefficient_table::{CoefficientTable, Coefficients, Interpolation, TableError, TableOptions};
pub use ice::RadialIce;
pub use section_load::{section_load, SectionAero, SectionFrame, SectionLoad, SectionState};
pub use wind::{MeanWind, WindProfile, ISA_AIR_DENSITY};
