//! A concentrated mass on a conductor (marker balls, hardware, a bird
//! diverter): weight and translational inertia at one point.

use super::placement::{distance_in, phase_index, positive, span_index};
use super::{parameters, Device, DeviceContext, DeviceError, DeviceKind, DeviceSite, Station};
use glaze_elements::PointMass;
use serde::Deserialize;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Params {
    /// Span number, 1-based.
    span: usize,
    /// Distance from the span's first tower, in m.
    distance: f64,
    /// Phase it sits on.
    phase: String,
    /// Mass, in kg.
    mass: f64,
}

#[derive(Debug)]
struct LumpedMass {
    station: Station,
    mass: f64,
}

pub(super) struct LumpedMassKind;

impl DeviceKind for LumpedMassKind {
    fn name(&self) -> &'static str {
        "lumped_mass"
    }
    fn description(&self) -> &'static str {
        "a concentrated mass at one point of a conductor"
    }
    fn parse(&self, table: toml::Table, ctx: &DeviceContext<'_>) -> Result<Box<dyn Device>, DeviceError> {
        let p: Params = parameters(table)?;
        let span = span_index(ctx, p.span)?;
        Ok(Box::new(LumpedMass {
            station: Station {
                phase: phase_index(ctx, &p.phase, "phase")?,
                span,
                distance: distance_in(ctx, span, p.distance, "distance")?,
            },
            mass: positive("mass", p.mass, "kg")?,
        }))
    }
}

impl Device for LumpedMass {
    fn stations(&self) -> Vec<Station> {
        vec![self.station]
    }

    fn build(&self, site: &mut dyn DeviceSite) -> Result<(), String> {
        let node = site.attachment(0);
        site.add_element(Box::new(PointMass::new(node, self.mass, 0.0).map_err(|e| e.to_string())?));
        Ok(())
    }
}
