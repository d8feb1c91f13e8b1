//! Air-flow spoiler: a helical rod wrapped on a length of conductor. It
//! changes the section's aerodynamic coefficients over the covered length
//! (the user's table, measured or estimated for the spoiled section) and
//! adds its mass per length.

use super::placement::{distance_in, phase_index, span_index};
use super::{parameters, Covering, Device, DeviceContext, DeviceError, DeviceKind, DeviceSite, Station};
use glaze_aero::{CoefficientTable, TableOptions};
use serde::Deserialize;
use std::sync::Arc;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Params {
    /// Span number, 1-based.
    span: usize,
    /// Phase it is wrapped on.
    phase: String,
    /// Distances of its two ends from the span's first tower, in m.
    from: f64,
    /// See `from`.
    to: f64,
    /// CSV coefficient table of the covered section (relative to the input file).
    aero_table: String,
    /// Added mass per length, in kg/m (default 0).
    mass_per_length: Option<f64>,
}

#[derive(Debug)]
struct Spoiler {
    covering: Covering,
}

pub(super) struct SpoilerKind;

impl DeviceKind for SpoilerKind {
    fn name(&self) -> &'static str {
        "air_flow_spoiler"
    }
    fn description(&self) -> &'static str {
        "a covered length of conductor with its own coefficient table and added mass"
    }
    fn parse(&self, table: toml::Table, ctx: &DeviceContext<'_>) -> Result<Box<dyn Device>, DeviceError> {
        let p: Params = parameters(table)?;
        let span = span_index(ctx, p.span)?;
        let phase = phase_index(ctx, &p.phase, "phase")?;
        let from = distance_in(ctx, span, p.from, "from")?;
        let to = distance_in(ctx, span, p.to, "to")?;
        if to - from < 1.0 {
            return Err(DeviceError::at(
                "to",
                format!("must be at least 1 m beyond from = {from} m, got {to} m"),
            ));
        }
        let added = p.mass_per_length.unwrap_or(0.0);
        if !(added.is_finite() && added >= 0.0) {
            return Err(DeviceError::at(
                "mass_per_length",
                format!("must be zero or positive (kg/m), got {added}"),
            ));
        }
        let path = ctx.base_dir.join(&p.aero_table);
        let table = CoefficientTable::from_csv_path(&path, &TableOptions::default())
            .map_err(|e| DeviceError::at("aero_table", format!("aerodynamic table: {e}")))?;
        Ok(Box::new(Spoiler {
            covering: Covering {
                phase,
                span,
                extent: [from, to],
                table: Arc::new(table),
                added_mass_per_length: added,
            },
        }))
    }
}

impl Device for Spoiler {
    fn stations(&self) -> Vec<Station> {
        let c = &self.covering;
        c.extent.iter().map(|&distance| Station { phase: c.phase, span: c.span, distance }).collect()
    }

    fn covering(&self) -> Option<Covering> {
        Some(self.covering.clone())
    }

    fn build(&self, _site: &mut dyn DeviceSite) -> Result<(), String> {
        // The mesh gives the covered elements their table and mass.
        Ok(())
    }
}
