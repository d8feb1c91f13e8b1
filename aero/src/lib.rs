//! Atmospheric loads on conductors for glaze: the ice description and the
//! aerodynamic coefficient tables; quasi-steady section loads later.

#![deny(missing_docs)]

pub mod coefficient_table;
pub mod ice;

pub use coefficient_table::{
    CoefficientTable, Coefficients, Interpolation, TableError, TableOptions,
};
pub use ice::RadialIce;
