//! Interphase spacer: an insulating strut between two phases at one
//! point of a span, carrying tension and compression. Hinged ends (the
//! usual ball-and-socket fittings) make it a two-node link; fixed ends a
//! beam with the given bending stiffness.

use super::placement::{distance_in, phase_index, positive, span_index};
use super::{arm, parameters, Device, DeviceContext, DeviceError, DeviceKind, DeviceSite, RigidArm, Station};
use glaze_elements::{Element, Link, TrussSection};
use serde::Deserialize;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Params {
    /// Span number, 1-based.
    span: usize,
    /// Distance from the span's first tower, in m.
    distance: f64,
    /// The two phases it joins.
    phases: [String; 2],
    /// Axial stiffness EA, in N.
    axial_stiffness: f64,
    /// Mass, in kg.
    mass: f64,
    /// Hinged ends (default true).
    hinged: Option<bool>,
    /// Bending stiffness EI with fixed ends, in N·m².
    bending_stiffness: Option<f64>,
}

#[derive(Debug)]
struct InterphaseSpacer {
    stations: [Station; 2],
    axial_stiffness: f64,
    mass: f64,
    fixed_ends_ei: Option<f64>,
}

pub(super) struct InterphaseSpacerKind;

impl DeviceKind for InterphaseSpacerKind {
    fn name(&self) -> &'static str {
        "interphase_spacer"
    }
    fn description(&self) -> &'static str {
        "insulating strut between two phases (tension and compression), hinged or fixed ends"
    }
    fn parse(&self, table: toml::Table, ctx: &DeviceContext<'_>) -> Result<Box<dyn Device>, DeviceError> {
        let p: Params = parameters(table)?;
        let span = span_index(ctx, p.span)?;
        let distance = distance_in(ctx, span, p.distance, "distance")?;
        let a = phase_index(ctx, &p.phases[0], "phases")?;
        let b = phase_index(ctx, &p.phases[1], "phases")?;
        if a == b {
            return Err(DeviceError::at("phases", "an interphase spacer joins two different phases"));
        }
        let hinged = p.hinged.unwrap_or(true);
        let fixed_ends_ei = match (hinged, p.bending_stiffness) {
            (true, None) => None,
            (true, Some(_)) => {
                return Err(DeviceError::at(
                    "bending_stiffness",
                    "a hinged interphase spacer carries no moment; give bending_stiffness only with hinged = false",
                ))
            }
            (false, Some(ei)) => Some(positive("bending_stiffness", ei, "N·m²")?),
            (false, None) => {
                return Err(DeviceError::at(
                    "bending_stiffness",
                    "hinged = false needs the strut's bending stiffness in N·m²",
                ))
            }
        };
        Ok(Box::new(InterphaseSpacer {
            stations: [Station { phase: a, span, distance }, Station { phase: b, span, distance }],
            axial_stiffness: positive("axial_stiffness", p.axial_stiffness, "N")?,
            mass: positive("mass", p.mass, "kg")?,
            fixed_ends_ei,
        }))
    }
}

impl Device for InterphaseSpacer {
    fn stations(&self) -> Vec<Station> {
        self.stations.to_vec()
    }

    fn shares_points(&self) -> bool {
        true
    }

    fn build(&self, site: &mut dyn DeviceSite) -> Result<(), String> {
        let a = site.attachment(0);
        let b = site.attachment(1);
        let (xa, xb) = (site.position(a), site.position(b));
        let length = (xb - xa).norm();
        if length < 0.1 {
            return Err(format!("the two phases are only {length:.3} m apart at this point"));
        }
        let mass_per_length = self.mass / length;
        let element: Box<dyn Element> = match self.fixed_ends_ei {
            None => Box::new(
                Link::new(
                    [a, b],
                    length,
                    TrussSection { ea: self.axial_stiffness, mass_per_length, thermal_expansion: 0.0 },
                )
                .map_err(|e| e.to_string())?,
            ),
            Some(ei) => arm(
                [a, b],
                [xa, xb],
                RigidArm { ea: self.axial_stiffness, ei, gj: ei },
                mass_per_length,
                site.along(0),
            )?,
        };
        site.add_element(element);
        Ok(())
    }
}
