//! Linear dashpot: a viscous damper of coefficient c (N·s/m) at one point
//! of a span, either between two phases (along the line joining them) or
//! from the conductor to a fixed point (a damper anchored to the tower or
//! the ground) along a vertical, across-line or along-line direction.
//! Linear about the static state of the run; it adds damping only, no
//! stiffness and no weight.

use super::placement::{distance_in, phase_index, positive, span_index};
use super::{parameters, Device, DeviceContext, DeviceError, DeviceKind, DeviceSite, Station};
use glaze_elements::Dashpot;
use nalgebra::Vector3;
use serde::Deserialize;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Params {
    /// Span number, 1-based.
    span: usize,
    /// Distance from the span's first tower, in m.
    distance: f64,
    /// Phase it grips.
    phase: String,
    /// Damping coefficient, N·s/m.
    coefficient: f64,
    /// `ground` (default: a fixed point) or the name of another phase.
    to: Option<String>,
    /// To ground: `vertical` (default), `across` (horizontal, across the
    /// line) or `along` (along the line).
    direction: Option<String>,
}

#[derive(Debug, Clone, Copy)]
enum Line {
    Vertical,
    Across,
    Along,
}

#[derive(Debug)]
struct LinearDashpot {
    stations: Vec<Station>,
    coefficient: f64,
    line: Line,
}

pub(super) struct LinearDashpotKind;

impl DeviceKind for LinearDashpotKind {
    fn name(&self) -> &'static str {
        "linear_dashpot"
    }
    fn description(&self) -> &'static str {
        "viscous damper (N·s/m) between two phases or from a conductor to a fixed point"
    }
    fn parse(&self, table: toml::Table, ctx: &DeviceContext<'_>) -> Result<Box<dyn Device>, DeviceError> {
        let p: Params = parameters(table)?;
        let span = span_index(ctx, p.span)?;
        let distance = distance_in(ctx, span, p.distance, "distance")?;
        let phase = phase_index(ctx, &p.phase, "phase")?;
        let coefficient = positive("coefficient", p.coefficient, "N·s/m")?;
        let mut stations = vec![Station { phase, span, distance }];
        match p.to.as_deref() {
            None | Some("ground") => {}
            Some(other) => {
                let b = phase_index(ctx, other, "to")?;
                if b == phase {
                    return Err(DeviceError::at("to", "a dashpot between phases joins two different phases"));
                }
                if p.direction.is_some() {
                    return Err(DeviceError::at(
                        "direction",
                        "a dashpot between phases acts along the line joining them; give `direction` only with to = \"ground\"",
                    ));
                }
                stations.push(Station { phase: b, span, distance });
            }
        }
        let line = match p.direction.as_deref() {
            None | Some("vertical") => Line::Vertical,
            Some("across") => Line::Across,
            Some("along") => Line::Along,
            Some(other) => {
                return Err(DeviceError::at(
                    "direction",
                    format!("`{other}`: give vertical, across or along"),
                ))
            }
        };
        Ok(Box::new(LinearDashpot { stations, coefficient, line }))
    }
}

impl Device for LinearDashpot {
    fn stations(&self) -> Vec<Station> {
        self.stations.clone()
    }

    fn shares_points(&self) -> bool {
        true
    }

    fn build(&self, site: &mut dyn DeviceSite) -> Result<(), String> {
        let a = site.attachment(0);
        let element = if self.stations.len() == 2 {
            let b = site.attachment(1);
            if (site.position(b) - site.position(a)).norm() < 0.1 {
                return Err("the two phases are less than 0.1 m apart at this point".into());
            }
            Dashpot::between(a, b, self.coefficient)
        } else {
            let along = site.along(0);
            let direction = match self.line {
                Line::Vertical => Vector3::z(),
                Line::Along => along,
                Line::Across => Vector3::z().cross(&along),
            };
            Dashpot::grounded(a, direction, self.coefficient)
        };
        site.add_element(Box::new(element.map_err(|e| e.to_string())?));
        Ok(())
    }
}
