//! Quasi-steady aerodynamic loads per unit length on a conductor section.
//!
//! Quasi-steady theory (Den Hartog 1932; Blevins, *Flow-Induced
//! Vibration*, 2nd ed. 1990, §4.2): the section feels, at every instant,
//! the steady-flow forces of the wind *relative* to it. With the frame and
//! angle conventions of [`crate::coefficient_table`]:
//!
//! - relative wind in the section plane `V = P (U − ẋ) + R θ̇ e_z`, where
//!   `P = I − e_x e_xᵀ` keeps the component normal to the conductor (the
//!   independence principle) and the last term is the twist-rate term of
//!   the torsional mechanism of Nigol & Buchan (1981, "Conductor galloping
//!   part II: torsional mechanism", IEEE Trans. PAS-100): the wind is seen
//!   at the windward point of the characteristic radius `R`, which moves
//!   with `−R θ̇ e_z` (R = 0 switches it off);
//! - `β = atan2(V·e_z, V·e_y)`, `α = β − θ` (θ = 0 when twist is ignored);
//! - drag `q D C_D(α)` along `V/|V|`, lift `q D C_L(α)` along `e_x × V/|V|`,
//!   moment `q D² C_M(α)` about `e_x`, with `q = ½ ρ |V|²`.

use crate::coefficient_table::{CoefficientTable, TableError};
use nalgebra::Vector3;

/// Right-handed section frame: `e_x` along the conductor, `e_y`
/// horizontal and downwind for the mean wind, `e_z = e_x × e_y` (up).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SectionFrame {
    /// Along the conductor.
    pub e_x: Vector3<f64>,
    /// In the section plane, the reference axis of an untwisted section.
    pub e_y: Vector3<f64>,
    /// In the section plane, `e_x × e_y`.
    pub e_z: Vector3<f64>,
}

impl SectionFrame {
    /// The frame of a conductor with unit tangent `t` in a mean wind of
    /// direction `wind` (unit, horizontal): `e_z` is the vertical made
    /// normal to `t`, `e_y = e_z × e_x`, and `e_x = ±t` chosen so that
    /// `e_y` points downwind (`e_y · wind ≥ 0`).
    pub fn for_conductor(t: Vector3<f64>, wind: Vector3<f64>) -> Self {
        let up = Vector3::z();
        let mut e_z = up - t * t.dot(&up);
        if e_z.norm() < 1e-9 {
            // A vertical conductor: any horizontal normal will do.
            e_z = Vector3::x() - t * t.x;
        }
        let e_z = e_z.normalize();
        let mut e_x = t;
        let mut e_y = e_z.cross(&e_x);
        if e_y.dot(&wind) < 0.0 {
            e_x = -e_x;
            e_y = -e_y;
        }
        Self { e_x, e_y, e_z }
    }
}

/// Aerodynamic properties of a section.
#[derive(Clone, Copy, Debug)]
pub struct SectionAero<'a> {
    /// Coefficient table of the section (bare or iced).
    pub table: &'a CoefficientTable,
    /// Reference diameter `D` of the coefficients, in m.
    pub diameter: f64,
    /// Air density `ρ`, in kg/m³.
    pub air_density: f64,
    /// Characteristic radius `R` of the twist-rate term, in m (0 = off).
    pub characteristic_radius: f64,
    /// Whether the section's own twist enters the angle of attack.
    pub include_twist: bool,
}

/// Motion and wind at a section.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct SectionState {
    /// Free-stream wind velocity at the section, in m/s.
    pub wind: Vector3<f64>,
    /// Velocity of the section, in m/s.
    pub velocity: Vector3<f64>,
    /// Twist θ about `e_x` from the untwisted reference, in rad.
    pub twist: f64,
    /// Twist rate θ̇, in rad/s.
    pub twist_rate: f64,
}

/// Loads per unit length on the section.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct SectionLoad {
    /// Force per unit length (drag + lift), global axes, in N/m.
    pub force: Vector3<f64>,
    /// Moment per unit length about `e_x`, in N·m/m.
    pub moment: f64,
    /// Angle of attack α, in rad.
    pub alpha: f64,
    /// Relative wind speed in the section plane |V|, in m/s.
    pub relative_speed: f64,
}

/// Quasi-steady loads per unit length (see the module docs).
pub fn section_load(
    aero: &SectionAero<'_>,
    frame: &SectionFrame,
    state: &SectionState,
) -> Result<SectionLoad, TableError> {
    let w = state.wind - state.velocity;
    let v = w - frame.e_x * w.dot(&frame.e_x) + frame.e_z * (aero.characteristic_radius * state.twist_rate);
    let speed = v.norm();
    if speed < 1e-9 {
        return Ok(SectionLoad::default());
    }
    let beta = v.dot(&frame.e_z).atan2(v.dot(&frame.e_y));
    let alpha = if aero.include_twist { beta - state.twist } else { beta };
    let c = aero.table.evaluate(alpha)?;
    let q = 0.5 * aero.air_density * speed * speed;
    let drag_dir = v / speed;
    let lift_dir = frame.e_x.cross(&drag_dir);
    let d = aero.diameter;
    Ok(SectionLoad {
        force: (drag_dir * c.cd + lift_dir * c.cl) * (q * d),
        moment: q * d * d * c.cm,
        alpha,
        relative_speed: speed,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::coefficient_table::TableOptions;

    fn table() -> CoefficientTable {
        // Linear lift C_L = −2α (per rad) about 0, C_D = 1, C_M = 0.1·α.
        let mut text = String::from("# reference_diameter = 0.03\nalpha_deg, cd, cl, cm\n");
        for a in (-20..=20).step_by(5) {
            let r = (a as f64).to_radians();
            text.push_str(&format!("{a}, 1.0, {}, {}\n", -2.0 * r, 0.1 * r));
        }
        CoefficientTable::from_csv_str(&text, "linear.csv", &TableOptions::default()).unwrap()
    }

    #[test]
    fn drag_and_lift_of_a_horizontal_wind() {
        // Horizontal wind along +Y on a conductor along +X: α = 0, drag along +Y,
        // q D C_D with q = ½ ρ U² (definition of the drag coefficient).
        let t = table();
        let aero = SectionAero {
            table: &t,
            diameter: 0.03,
            air_density: 1.225,
            characteristic_radius: 0.0,
            include_twist: true,
        };
        let frame = SectionFrame::for_conductor(Vector3::x(), Vector3::y());
        let s = SectionState { wind: Vector3::new(0.0, 10.0, 0.0), ..Default::default() };
        let l = section_load(&aero, &frame, &s).unwrap();
        assert!((l.force.y - 0.5 * 1.225 * 100.0 * 0.03).abs() < 1e-12);
        assert!(l.force.z.abs() < 1e-12 && l.alpha.abs() < 1e-15);
    }

    #[test]
    fn vertical_velocity_damping_is_den_hartog() {
        // ∂F_z/∂ż = −½ρUD(dC_L/dα + C_D) (Den Hartog 1932; Blevins 1990, eq. 4.11):
        // here dC_L/dα = −2, C_D = 1, so ∂F_z/∂ż = +½ρUD (negative damping).
        let t = table();
        let aero = SectionAero {
            table: &t,
            diameter: 0.03,
            air_density: 1.225,
            characteristic_radius: 0.0,
            include_twist: true,
        };
        let frame = SectionFrame::for_conductor(Vector3::x(), Vector3::y());
        let at = |zdot: f64| {
            let s = SectionState {
                wind: Vector3::new(0.0, 10.0, 0.0),
                velocity: Vector3::new(0.0, 0.0, zdot),
                ..Default::default()
            };
            section_load(&aero, &frame, &s).unwrap().force.z
        };
        let h = 1e-4;
        let slope = (at(h) - at(-h)) / (2.0 * h);
        let expected = -0.5 * 1.225 * 10.0 * 0.03 * (-2.0 + 1.0);
        assert!((slope - expected).abs() < 1e-6 * expected.abs(), "{slope} vs {expected}");
    }

    #[test]
    fn twist_lowers_the_angle_of_attack() {
        let t = table();
        let aero = SectionAero {
            table: &t,
            diameter: 0.03,
            air_density: 1.225,
            characteristic_radius: 0.0,
            include_twist: true,
        };
        let frame = SectionFrame::for_conductor(Vector3::x(), Vector3::y());
        let s = SectionState { wind: Vector3::new(0.0, 10.0, 0.0), twist: 0.1, ..Default::default() };
        let l = section_load(&aero, &frame, &s).unwrap();
        assert!((l.alpha + 0.1).abs() < 1e-15);
        let off = SectionAero { include_twist: false, ..aero };
        assert!(section_load(&off, &frame, &s).unwrap().alpha.abs() < 1e-15);
    }

    #[test]
    fn frame_is_right_handed_and_downwind() {
        for wind in [Vector3::y(), -Vector3::y()] {
            let f = SectionFrame::for_conductor(Vector3::new(0.99, 0.0, -0.141).normalize(), wind);
            assert!((f.e_x.cross(&f.e_y) - f.e_z).norm() < 1e-12);
            assert!(f.e_y.dot(&wind) > 0.0 && f.e_z.z > 0.0);
        }
    }
}
