//! The error returned by element constructors for invalid input.

use std::fmt;

/// An element could not be built from the values given.
#[derive(Clone, Debug, PartialEq)]
pub enum ElementError {
    /// A length or section value is out of its valid range.
    InvalidValue {
        /// Element kind (`"beam"`, `"cable"`, `"link"`).
        kind: &'static str,
        /// Name of the offending parameter, as in the constructor.
        parameter: &'static str,
        /// The value given.
        value: f64,
        /// What was expected, e.g. `"a finite value > 0"`.
        expected: &'static str,
    },
    /// The beam's reference vector is (nearly) parallel to its axis, so it
    /// cannot fix the local y axis.
    ParallelReference {
        /// Sine of the angle between the reference vector and the axis.
        sine: f64,
    },
}

impl fmt::Display for ElementError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::InvalidValue { kind, parameter, value, expected } => {
                write!(f, "{kind} element: `{parameter}` = {value} is invalid, expected {expected}")
            }
            Self::ParallelReference { sine } => write!(
                f,
                "beam element: the reference vector is parallel to the element axis \
                 (sine of the angle {sine:.3e}); give one that is not"
            ),
        }
    }
}

impl std::error::Error for ElementError {}

/// Checks that `value` is finite and > 0.
pub(crate) fn positive(kind: &'static str, parameter: &'static str, value: f64) -> Result<f64, ElementError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(ElementError::InvalidValue { kind, parameter, value, expected: "a finite value > 0" })
    }
}

/// Checks that `value` is finite and ≥ 0.
pub(crate) fn non_negative(
    kind: &'static str,
    parameter: &'static str,
    value: f64,
) -> Result<f64, ElementError> {
    if value.is_finite() && value >= 0.0 {
        Ok(value)
    } else {
        Err(ElementError::InvalidValue { kind, parameter, value, expected: "a finite value ≥ 0" })
    }
}

/// Checks that `value` is finite.
pub(crate) fn finite(kind: &'static str, parameter: &'static str, value: f64) -> Result<f64, ElementError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(ElementError::InvalidValue { kind, parameter, value, expected: "a finite value" })
    }
}
