//! Uniform radial ice accretion.

use std::f64::consts::PI;

/// Glaze ice density used by IEC 60826 (Design criteria of overhead
/// transmission lines, §6.4), in kg/m³.
pub const GLAZE_ICE_DENSITY: f64 = 900.0;

/// A uniform annulus of ice of radial thickness `t` around a conductor.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RadialIce {
    /// Radial thickness `t`, in m.
    pub thickness: f64,
    /// Density `ρ`, in kg/m³.
    pub density: f64,
}

impl RadialIce {
    /// Ice mass per length around a conductor of diameter `d` (m):
    /// `ρ π t (d + t)`, in kg/m (the annulus between radii d/2 and d/2 + t).
    pub fn mass_per_length(&self, diameter: f64) -> f64 {
        self.density * PI * self.thickness * (diameter + self.thickness)
    }

    /// Outer diameter of the iced conductor, `d + 2t`, in m.
    pub fn iced_diameter(&self, diameter: f64) -> f64 {
        diameter + 2.0 * self.thickness
    }

    /// Mass polar moment of inertia per length of the ice annulus about the
    /// conductor axis, `m_ice (r_i² + r_o²)/2`, in kg·m.
    pub fn polar_inertia_per_length(&self, diameter: f64) -> f64 {
        let (ri, ro) = (diameter / 2.0, diameter / 2.0 + self.thickness);
        self.mass_per_length(diameter) * (ri * ri + ro * ro) / 2.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn annulus_mass_matches_area_difference() {
        // Area of an annulus π(r_o² − r_i²) (elementary geometry).
        let ice = RadialIce { thickness: 0.0125, density: GLAZE_ICE_DENSITY };
        let d = 0.02814;
        let area = PI * ((d / 2.0 + 0.0125f64).powi(2) - (d / 2.0f64).powi(2));
        assert!((ice.mass_per_length(d) - 900.0 * area).abs() < 1e-12);
    }
}
