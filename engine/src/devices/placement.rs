//! Where a device sits: phase, span and distance, checked against the
//! section.

use super::{DeviceContext, DeviceError};

/// A conductor point: phase, span and distance along it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Station {
    /// Phase index.
    pub phase: usize,
    /// Span index, 0-based.
    pub span: usize,
    /// Horizontal distance from the span's first tower, in m.
    pub distance: f64,
}

/// Smallest distance of a device from a tower, in m: the length of a
/// suspension clamp and its armour rods (common practice).
pub const TOWER_CLEARANCE: f64 = 1.0;

/// 0-based index of 1-based span `span`, checked.
pub fn span_index(ctx: &DeviceContext<'_>, span: usize) -> Result<usize, DeviceError> {
    let n = ctx.span_lengths.len();
    if span == 0 || span > n {
        return Err(DeviceError::at("span", format!("no span {span}: spans are numbered 1 to {n}")));
    }
    Ok(span - 1)
}

/// Index of the phase called `name`.
pub fn phase_index(ctx: &DeviceContext<'_>, name: &str, field: &str) -> Result<usize, DeviceError> {
    ctx.phases.iter().position(|p| p == name).ok_or_else(|| {
        DeviceError::at(field, format!("no phase named `{name}`; known phases: {}", ctx.phases.join(", ")))
    })
}

/// `d` checked to lie in span `span`, away from its towers.
pub fn distance_in(ctx: &DeviceContext<'_>, span: usize, d: f64, field: &str) -> Result<f64, DeviceError> {
    let l = ctx.span_lengths[span];
    if d.is_finite() && d >= TOWER_CLEARANCE && d <= l - TOWER_CLEARANCE {
        Ok(d)
    } else {
        Err(DeviceError::at(
            field,
            format!(
                "{d} m is outside span {} ({l:.1} m long): a device sits at least {TOWER_CLEARANCE} m from the towers",
                span + 1
            ),
        ))
    }
}

/// A positive finite value of `field`.
pub fn positive(field: &str, value: f64, unit: &str) -> Result<f64, DeviceError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(DeviceError::at(field, format!("must be a positive finite number ({unit}), got {value}")))
    }
}
