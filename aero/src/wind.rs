//! Mean wind field: speed at a reference height, horizontal direction,
//! vertical profile, air density and an optional start-up ramp.

use nalgebra::Vector3;

/// Air density of the ISA standard atmosphere at sea level, in kg/m³
/// (ISO 2533:1975).
pub const ISA_AIR_DENSITY: f64 = 1.225;

/// Vertical profile of the mean wind speed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum WindProfile {
    /// The same speed at every height.
    Uniform,
    /// Power law `U(z) = U_ref (z / z_ref)^a` (Davenport 1960; e.g.
    /// EN 1991-1-4 and IEC 60826 use power or log laws for terrain), with
    /// exponent `a` (dimensionless).
    PowerLaw {
        /// Exponent `a`.
        exponent: f64,
    },
    /// Logarithmic law `U(z) = U_ref ln(z/z0) / ln(z_ref/z0)` with roughness
    /// length `z0` in m (e.g. EN 1991-1-4 §4.3.2).
    Logarithmic {
        /// Roughness length `z0`, in m.
        roughness_length: f64,
    },
}

/// A steady, horizontal mean wind.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MeanWind {
    /// Mean speed at the reference height, in m/s.
    pub speed: f64,
    /// Direction the wind blows *towards*, from global +X, in rad
    /// (π/2 blows along +Y, square to a line along X).
    pub direction: f64,
    /// Reference height of `speed` above the ground datum z = 0, in m.
    pub reference_height: f64,
    /// Vertical profile.
    pub profile: WindProfile,
    /// Air density, in kg/m³.
    pub air_density: f64,
}

impl MeanWind {
    /// Unit vector of the wind direction (horizontal).
    pub fn unit(&self) -> Vector3<f64> {
        Vector3::new(self.direction.cos(), self.direction.sin(), 0.0)
    }

    /// Mean speed at height `z` above the datum, in m/s. Heights below
    /// 1 m use the speed at 1 m (the profiles are not meant for the surface layer).
    pub fn speed_at(&self, z: f64) -> f64 {
        let z = z.max(1.0);
        match self.profile {
            WindProfile::Uniform => self.speed,
            WindProfile::PowerLaw { exponent } => self.speed * (z / self.reference_height).powf(exponent),
            WindProfile::Logarithmic { roughness_length } => {
                let z0 = roughness_length;
                self.speed * ((z.max(z0 * 1.0001) / z0).ln() / (self.reference_height / z0).ln())
            }
        }
    }

    /// Mean wind velocity at height `z`, in m/s.
    pub fn velocity_at(&self, z: f64) -> Vector3<f64> {
        self.unit() * self.speed_at(z)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn profiles_give_the_reference_speed_at_the_reference_height() {
        for profile in [
            WindProfile::Uniform,
            WindProfile::PowerLaw { exponent: 0.16 },
            WindProfile::Logarithmic { roughness_length: 0.05 },
        ] {
            let w = MeanWind {
                speed: 20.0,
                direction: 1.0,
                reference_height: 10.0,
                profile,
                air_density: ISA_AIR_DENSITY,
            };
            assert!((w.speed_at(10.0) - 20.0).abs() < 1e-12);
        }
        // Power law at twice the height: 2^0.16 (direct evaluation).
        let w = MeanWind {
            speed: 20.0,
            direction: 0.0,
            reference_height: 10.0,
            profile: WindProfile::PowerLaw { exponent: 0.16 },
            air_density: ISA_AIR_DENSITY,
        };
        assert!((w.speed_at(20.0) / 20.0 - 2f64.powf(0.16)).abs() < 1e-12);
    }
}
