//! Detuning pendulum: a mass on a rigid arm clamped to the conductor (or
//! to the bundle's spacer frame), hanging below it. Twisting the
//! conductor swings the mass, so it adds the torsional inertia `m a²` and
//! a gravity restoring moment `m g a` about the conductor axis, which
//! separates the torsional from the vertical frequencies (the detuning
//! principle; Nigol, Clarke & Havard 1977, from memory).

use super::placement::{distance_in, phase_index, positive, span_index};
use super::{
    arm, parameters, Device, DeviceContext, DeviceError, DeviceKind, DeviceSite, Station, RIGID_ARM,
};
use glaze_elements::PointMass;
use nalgebra::Vector3;
use serde::Deserialize;

/// Density of the bob, for its own rotary inertia: cast iron, about
/// 7200 kg/m³ (handbook value, from memory).
const BOB_DENSITY: f64 = 7200.0;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Params {
    /// Span number, 1-based.
    span: usize,
    /// Distance from the span's first tower, in m.
    distance: f64,
    /// Phase it hangs on.
    phase: String,
    /// Mass of the bob, in kg.
    mass: f64,
    /// Distance of the bob's centre below the conductor axis, in m.
    arm: f64,
}

#[derive(Debug)]
struct DetuningPendulum {
    station: Station,
    mass: f64,
    arm: f64,
}

pub(super) struct DetuningPendulumKind;

impl DeviceKind for DetuningPendulumKind {
    fn name(&self) -> &'static str {
        "detuning_pendulum"
    }
    fn description(&self) -> &'static str {
        "mass on a rigid arm below the conductor: adds torsional inertia m·a² and an offset"
    }
    fn parse(&self, table: toml::Table, ctx: &DeviceContext<'_>) -> Result<Box<dyn Device>, DeviceError> {
        let p: Params = parameters(table)?;
        let span = span_index(ctx, p.span)?;
        Ok(Box::new(DetuningPendulum {
            station: Station {
                phase: phase_index(ctx, &p.phase, "phase")?,
                span,
                distance: distance_in(ctx, span, p.distance, "distance")?,
            },
            mass: positive("mass", p.mass, "kg")?,
            arm: positive("arm", p.arm, "m")?,
        }))
    }
}

impl Device for DetuningPendulum {
    fn stations(&self) -> Vec<Station> {
        vec![self.station]
    }

    fn build(&self, site: &mut dyn DeviceSite) -> Result<(), String> {
        let top = site.attachment(0);
        let x_top = site.position(top);
        let x_bob = x_top - Vector3::z() * self.arm;
        let bob = site.add_node(x_bob);
        site.add_element(arm([top, bob], [x_top, x_bob], RIGID_ARM, 0.0, site.along(0))?);
        let inertia = PointMass::sphere_inertia(self.mass, BOB_DENSITY);
        site.add_element(Box::new(PointMass::new(bob, self.mass, inertia).map_err(|e| e.to_string())?));
        Ok(())
    }
}
