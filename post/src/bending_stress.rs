//! Idealised dynamic bending stress of the outer-layer wires at a clamp.
//!
//! Poffenberger–Swart formula (Poffenberger, J.C. & Swart, R.L., 1965,
//! "Differential displacement and dynamic conductor strain", IEEE Trans.
//! PAS-84, pp. 281–289; also in IEEE Std 1368 and the CIGRÉ / EPRI
//! "Orange Book" on conductor vibration):
//!
//! `σ_a = K · Y_b`, `K = E_a d_a p² / (4 (e^(−p x) − 1 + p x))`,
//! `p = √(T / EI_min)`,
//!
//! with `Y_b` the peak-to-peak bending amplitude measured at `x` from the
//! last point of contact (89 mm by convention) and `σ_a` the zero-to-peak
//! stress amplitude in the outer-layer wires (E_a, d_a) there. `EI_min` is
//! the sum of the wires' own `E π d⁴/64`: the wires bend separately.
//!
//! It is the curvature form of [`ConductorBending::stress_from_curvature`]
//! applied to the clamped tensioned beam `y = κ₀ (e^(−p x) − 1 + p x)/p²`,
//! with `Y_b = 2 y(x)`. That beam leaves the clamp at the slope Δθ = κ₀/p
//! (y' → κ₀/p far from it), so a conductor whose slope outside the clamp
//! differs from the clamp body's by Δθ has `κ₀ = p Δθ`
//! ([`ConductorBending::stress_from_clamp_rotation`]).

use thiserror::Error;

/// Standard distance of the bending-amplitude measuring point from the
/// last point of contact of the clamp, in m (IEEE Std 1368: 89 mm).
pub const STANDARD_MEASURING_DISTANCE: f64 = 0.089;

/// Bad input to the bending-stress functions.
#[derive(Debug, Clone, Copy, PartialEq, Error)]
pub enum BendingError {
    /// A quantity that must be positive and finite is not.
    #[error("conductor bending: {what} is {value}, not a positive finite number")]
    NotPositive {
        /// Name of the quantity, with its unit.
        what: &'static str,
        /// The offending value.
        value: f64,
    },
    /// No wires, or none with a positive count.
    #[error("conductor bending: the wire list is empty")]
    NoWires,
    /// The index of the outer-layer group is not in the list.
    #[error("conductor bending: outer-layer group {index} is not in the list of {len} wire groups")]
    OuterIndex {
        /// Index given.
        index: usize,
        /// Number of groups.
        len: usize,
    },
}

fn positive(what: &'static str, value: f64) -> Result<f64, BendingError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(BendingError::NotPositive { what, value })
    }
}

/// Wires of one material and diameter in a stranded conductor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WireGroup {
    /// Number of wires.
    pub count: usize,
    /// Wire diameter, in m.
    pub diameter: f64,
    /// Young's modulus of the wire material, in Pa.
    pub modulus: f64,
}

impl WireGroup {
    /// Sum of the wires' own bending stiffness `count · E π d⁴/64`, in N m².
    pub fn bending_stiffness(&self) -> f64 {
        self.count as f64 * self.modulus * std::f64::consts::PI * self.diameter.powi(4) / 64.0
    }
}

/// Outer-wire properties and minimum bending stiffness of a conductor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ConductorBending {
    outer_wire_modulus: f64,
    outer_wire_diameter: f64,
    ei_min: f64,
}

impl ConductorBending {
    /// From the outer-layer wire modulus (Pa) and diameter (m) and the
    /// minimum bending stiffness EI_min (N m²).
    pub fn new(outer_wire_modulus: f64, outer_wire_diameter: f64, ei_min: f64) -> Result<Self, BendingError> {
        Ok(Self {
            outer_wire_modulus: positive("the outer-wire modulus (Pa)", outer_wire_modulus)?,
            outer_wire_diameter: positive("the outer-wire diameter (m)", outer_wire_diameter)?,
            ei_min: positive("EI_min (N m²)", ei_min)?,
        })
    }

    /// From all the wires of the conductor, EI_min = Σ count · E π d⁴/64;
    /// `wires[outer]` is the group the outer layer is made of (for ACSR the
    /// aluminium wires).
    pub fn from_wires(wires: &[WireGroup], outer: usize) -> Result<Self, BendingError> {
        if wires.iter().all(|w| w.count == 0) {
            return Err(BendingError::NoWires);
        }
        let outer_group =
            wires.get(outer).ok_or(BendingError::OuterIndex { index: outer, len: wires.len() })?;
        for w in wires {
            positive("a wire diameter (m)", w.diameter)?;
            positive("a wire modulus (Pa)", w.modulus)?;
        }
        let ei_min = wires.iter().map(WireGroup::bending_stiffness).sum();
        Self::new(outer_group.modulus, outer_group.diameter, ei_min)
    }

    /// Young's modulus of the outer-layer wires, in Pa.
    pub fn outer_wire_modulus(&self) -> f64 {
        self.outer_wire_modulus
    }

    /// Diameter of the outer-layer wires, in m.
    pub fn outer_wire_diameter(&self) -> f64 {
        self.outer_wire_diameter
    }

    /// Minimum bending stiffness EI_min, in N m².
    pub fn ei_min(&self) -> f64 {
        self.ei_min
    }

    /// Poffenberger–Swart K (Pa per m of peak-to-peak bending amplitude
    /// `Y_b`) at tension `tension` (N, ≥ 0) and measuring distance `x`
    /// (m, positive; [`STANDARD_MEASURING_DISTANCE`] by convention):
    /// `K = E_a d_a p² / (4 (e^(−p x) − 1 + p x))`, `p = √(T/EI_min)`
    /// (Poffenberger & Swart 1965, IEEE Trans. PAS-84). `σ_a = K Y_b` is a
    /// zero-to-peak amplitude. At T = 0 it is the limit `E_a d_a / (2 x²)`.
    pub fn stress_per_bending_amplitude(&self, tension: f64, x: f64) -> Result<f64, BendingError> {
        if !(tension.is_finite() && tension >= 0.0) {
            return Err(BendingError::NotPositive { what: "the tension (N)", value: tension });
        }
        let x = positive("the measuring distance x (m)", x)?;
        let u = (tension / self.ei_min).sqrt() * x;
        // K = E_a d_a p² / (4 u² h(u)) = E_a d_a / (4 x² h(u)).
        Ok(self.outer_wire_modulus * self.outer_wire_diameter / (4.0 * x * x * h(u)))
    }

    /// Bending stress (Pa) of the outer fibre of an outer-layer wire at
    /// conductor curvature `curvature` (1/m): `σ = E_a (d_a/2) κ`, the
    /// bending strain `ε = κ d/2` of a wire bent about its own axis (the
    /// relation under the Poffenberger–Swart formula). Signed as κ; an
    /// amplitude of κ gives an amplitude of σ.
    pub fn stress_from_curvature(&self, curvature: f64) -> f64 {
        self.outer_wire_modulus * 0.5 * self.outer_wire_diameter * curvature
    }

    /// Outer-wire bending stress (Pa) at the clamp exit when the conductor
    /// outside the clamp's boundary layer is turned by `rotation` (rad)
    /// from the clamp body, at tension `tension` (N): `σ = E_a (d_a/2) p Δθ`,
    /// `κ₀ = p Δθ`, `p = √(T/EI_min)` (tensioned beam, module docs). Signed as Δθ.
    pub fn stress_from_clamp_rotation(&self, tension: f64, rotation: f64) -> f64 {
        self.stress_from_curvature((tension.max(0.0) / self.ei_min).sqrt() * rotation)
    }
}

/// Bending rotation (rad) of a conductor at a freely pivoting clamp, in
/// the vertical plane and in the horizontal plane: `[½(β_f + β_b),
/// ½(α_f + α_b)]`. `back`, `clamp` and `forward` are the positions (m) of
/// the conductor nodes before, at and after the clamp; `along` the plan
/// unit vector of the line. Per side, with `v` the chord from the clamp to
/// the neighbour, `h = |along · v|`: `β = atan2(v_z, h)` (elevation) and
/// `α = atan2(across · v, h)`, `across = z × along`. A straight conductor
/// gives zero; a clamp that pivots freely between equal tensioned-beam
/// stiffnesses `√(EI T)` on both sides turns to the mean of the two sides,
/// so each side bends by this half sum relative to it. Its change from the
/// static state is the Δθ of [`ConductorBending::stress_from_clamp_rotation`].
pub fn free_clamp_rotation(back: [f64; 3], clamp: [f64; 3], forward: [f64; 3], along: [f64; 2]) -> [f64; 2] {
    let across = [-along[1], along[0]];
    let side = |p: [f64; 3]| {
        let v = [p[0] - clamp[0], p[1] - clamp[1], p[2] - clamp[2]];
        let h = (along[0] * v[0] + along[1] * v[1]).abs();
        (v[2].atan2(h), (across[0] * v[0] + across[1] * v[1]).atan2(h))
    };
    let (bf, af) = side(forward);
    let (bb, ab) = side(back);
    [0.5 * (bf + bb), 0.5 * (af + ab)]
}

/// `h(u) = (e^(−u) − 1 + u)/u²`, without the cancellation at small u:
/// the series `Σ_{k≥2} (−u)^(k−2)/k!` below u = 0.1 (terms to k = 12, the
/// rest < 1e-20 relative), `expm1` above (relative error ≈ 2ε/u ≤ 5e-15).
fn h(u: f64) -> f64 {
    if u < 0.1 {
        let mut term = 0.5; // k = 2
        let mut sum = term;
        for k in 3..=12 {
            term *= -u / k as f64;
            sum += term;
        }
        sum
    } else {
        ((-u).exp_m1() + u) / (u * u)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// ACSR "Drake" 26/7 (795 kcmil): 26 aluminium wires of 4.44 mm and 7
    /// steel wires of 3.45 mm (from memory: ASTM B232 / manufacturers'
    /// tables list 0.1749 in and 0.1360 in); E_a = 69 GPa, E_s = 207 GPa
    /// (from memory, the usual values for EI_min).
    fn drake() -> ConductorBending {
        let wires = [
            WireGroup { count: 26, diameter: 4.44e-3, modulus: 69e9 },
            WireGroup { count: 7, diameter: 3.45e-3, modulus: 207e9 },
        ];
        ConductorBending::from_wires(&wires, 0).unwrap()
    }

    #[test]
    fn drake_hand_calculation() {
        // Hand calculation (to 6 figures):
        //   aluminium wire: I = π (4.44e-3)⁴/64 = 1.90766e-11 m⁴, E I = 1.31629 N m², × 26 = 34.2235
        //   steel wire:     I = π (3.45e-3)⁴/64 = 6.95419e-12 m⁴, E I = 1.43952 N m², × 7 = 10.0766
        //   EI_min = 44.3001 N m².
        //   T = 28 kN (about 20 % of Drake's RTS, 138.8 kN, from memory):
        //   p² = 28000/44.3001 = 632.053 m⁻², p = 25.1407 m⁻¹,
        //   p x = 25.1407 · 0.089 = 2.23752, e^(−p x) = 0.106723,
        //   e^(−p x) − 1 + p x = 1.34424,
        //   K = 69e9 · 4.44e-3 · 632.053 / (4 · 1.34424) = 3.60121e10 Pa/m
        //     = 36.01 MPa/mm.
        // (A published K of roughly 30–35 MPa/mm for Drake is recalled from
        // memory only; it is not asserted.)
        let c = drake();
        assert_relative_eq!(c.ei_min(), 44.3001, max_relative = 1e-5);
        let k = c.stress_per_bending_amplitude(28e3, STANDARD_MEASURING_DISTANCE).unwrap();
        assert_relative_eq!(k, 3.60121e10, max_relative = 0.01);
        // The 6-figure hand value is in fact met to 1e-5.
        assert_relative_eq!(k, 3.60121e10, max_relative = 1e-5);
    }

    #[test]
    fn small_px_follows_the_series() {
        // e^(−u) − 1 + u = u²/2 (1 − u/3 + u²/12 − u³/60 + …), so
        // K = E_a d_a/(2 x²) · (1 + u/3 + u²/36 − u³/540 + O(u⁴)) (hand
        // series inversion; the next coefficient is −1/6480). Checked for u
        // from 1e-6 to 0.05 with tolerance 2u⁴/6480 + 1e-14 (rounding, a few ulp).
        let c = drake();
        let x = STANDARD_MEASURING_DISTANCE;
        let k0 = c.outer_wire_modulus() * c.outer_wire_diameter() / (2.0 * x * x);
        for u in [1e-6, 1e-4, 1e-3, 1e-2, 0.05, 0.099, 0.1, 0.101] {
            let tension = c.ei_min() * (u / x).powi(2);
            let k = c.stress_per_bending_amplitude(tension, x).unwrap();
            let series = k0 * (1.0 + u / 3.0 + u * u / 36.0 - u.powi(3) / 540.0);
            let tol = 2.0 * u.powi(4) / 6480.0 + 1e-14;
            assert_relative_eq!(k, series, max_relative = tol);
        }
        // T = 0 is the limit itself.
        assert_relative_eq!(c.stress_per_bending_amplitude(0.0, x).unwrap(), k0, max_relative = 1e-15);
    }

    #[test]
    fn k_is_the_curvature_form_at_the_clamp() {
        // Derivation of the formula (module docs): a peak-to-peak Y_b at x
        // means an amplitude Y_b/2 = κ₀ (e^(−p x) − 1 + p x)/p² with κ₀ the
        // curvature amplitude at the last point of contact, and σ_a =
        // E_a d_a κ₀/2. Drake at 28 kN, Y_b = 0.5 mm (invented).
        let c = drake();
        let (t, x, yb) = (28e3, STANDARD_MEASURING_DISTANCE, 0.5e-3);
        let p = (t / c.ei_min()).sqrt();
        let kappa0 = p * p * 0.5 * yb / ((-p * x).exp() - 1.0 + p * x);
        let k = c.stress_per_bending_amplitude(t, x).unwrap();
        assert_relative_eq!(k * yb, c.stress_from_curvature(kappa0), max_relative = 1e-13);
        // σ = E d κ/2 by hand: 69e9 · 4.44e-3 / 2 · 1e-3 m⁻¹ = 153.18 kPa.
        assert_relative_eq!(c.stress_from_curvature(1e-3), 153_180.0, max_relative = 1e-12);
    }

    #[test]
    fn prescribed_clamp_rotation_gives_the_closed_form_amplitude() {
        // Both sides of a clamp (static slopes −0.06 and −0.04 rad, 5 m
        // elements) lifted by θ(t) = θ_a sin(2π t/T) in the vertical plane,
        // θ_a = 0.01 rad, plus a rigid pitch of the whole conductor by
        // 0.02 sin(…) (which a free clamp follows: no bending), 40 records
        // per period, 5 periods. Hand calculation, Drake at T = 28 kN:
        // p = √(28000/44.3001) = 25.14066 m⁻¹, σ_a = E_a (d_a/2) p θ_a =
        // 69e9 · 2.22e-3 · 25.14066 · 0.01 = 38.5105 MPa; rainflow range 2σ_a
        // = 77.0209 MPa (9 full cycles and two half cycles of it).
        let c = drake();
        let (t, theta_a, ell) = (28e3, 0.01, 5.0);
        let along = [1.0, 0.0];
        let node = |beta: f64, sign: f64| [sign * ell * beta.cos(), 0.0, ell * beta.sin()];
        let (b0, f0) = (-0.06, -0.04);
        let rot0 = free_clamp_rotation(node(b0, -1.0), [0.0; 3], node(f0, 1.0), along);
        let history: Vec<f64> = (0..=200)
            .map(|i| {
                let phase = 2.0 * std::f64::consts::PI * i as f64 / 40.0;
                let (bend, pitch) = (theta_a * phase.sin(), 0.02 * phase.cos());
                // A pitch raises the forward side and lowers the back one.
                let r = free_clamp_rotation(
                    node(b0 + bend - pitch, -1.0),
                    [0.0; 3],
                    node(f0 + bend + pitch, 1.0),
                    along,
                );
                c.stress_from_clamp_rotation(t, r[0] - rot0[0])
            })
            .collect();
        let amplitude = history.iter().fold(0.0_f64, |m, s| m.max(s.abs()));
        assert_relative_eq!(amplitude, 38.5105e6, max_relative = 1e-5);
        let cycles = crate::rainflow::rainflow(&history).unwrap();
        let max_range = cycles.iter().map(|c| c.range).fold(0.0, f64::max);
        assert_relative_eq!(max_range, 77.0209e6, max_relative = 1e-5);
        // The horizontal plane does not move.
        let r = free_clamp_rotation(node(b0, -1.0), [0.0; 3], node(f0, 1.0), along);
        assert!(r[1].abs() < 1e-15);
    }

    #[test]
    fn bad_input_is_an_error() {
        let c = drake();
        assert!(c.stress_per_bending_amplitude(-1.0, 0.089).is_err());
        assert!(c.stress_per_bending_amplitude(f64::NAN, 0.089).is_err());
        let e = c.stress_per_bending_amplitude(28e3, 0.0).unwrap_err();
        assert!(e.to_string().contains("measuring distance"), "{e}");
        assert_eq!(ConductorBending::from_wires(&[], 0).unwrap_err(), BendingError::NoWires);
        let w = [WireGroup { count: 7, diameter: 3.45e-3, modulus: 207e9 }];
        assert_eq!(
            ConductorBending::from_wires(&w, 1).unwrap_err(),
            BendingError::OuterIndex { index: 1, len: 1 }
        );
        let bad = [WireGroup { count: 7, diameter: -3.45e-3, modulus: 207e9 }];
        assert!(ConductorBending::from_wires(&bad, 0).is_err());
        assert!(ConductorBending::new(69e9, 4.44e-3, 0.0).is_err());
    }
}
