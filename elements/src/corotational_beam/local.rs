//! Local (corotated-frame) response of the beam: small-strain
//! Euler–Bernoulli axial, torsion and bending, optional bowing and
//! axial–torsion coupling, written as the gradient and Hessian of one strain
//! energy so that force and tangent are consistent by construction.
//!
//! Local DOF `d_a = [ū, θ̄1x, θ̄1y, θ̄1z, θ̄2x, θ̄2y, θ̄2z]` (m, rad): the
//! elongation and the two local rotation vectors (Battini & Pacoste 2002,
//! their `d_a`). Strain energy (J)
//!
//! `U = Lt (½ EA ε² + C ε κ) + L (½ GJ κ²)
//!      + Σ_{c=y,z} (2 EI_c / L)(θ̄1c² + θ̄1c θ̄2c + θ̄2c²)`
//!
//! with `ε = (l − Lt)/Lt + b`, `κ = (θ̄2x − θ̄1x)/L`, `Lt = L0 (1 + α ΔT)`
//! and `L = |X2 − X1|`. In an initially curved element (rest rotations
//! θ̄⁰1, θ̄⁰2) the bending and twist terms take `θ̄ − θ̄⁰` and the bowing
//! strain is `b(θ̄) − b(θ̄⁰)`. The bowing strain
//! `b = (1/30) Σ_c (2θ̄1c² − θ̄1c θ̄2c + 2θ̄2c²)` is the mean of `½ v'²` for
//! the cubic (Hermite) deflection with end slopes θ̄1, θ̄2 (derived here:
//! `∫₀¹ v'² dξ = (2θ1² − θ1θ2 + 2θ2²)/15`). It is the averaged "shallow
//! arch" strain `u' + ½(v'² + w'²)` of the local elements of Pacoste &
//! Eriksson (1997), CMAME 144, and Battini & Pacoste (2002) (cited from
//! memory); its Hessian gives the classical geometric stiffness
//! `N L/30 [4 −1; −1 4]`. Hence the section forces
//! `N = EA ε + C κ` (N) and `T = GJ κ + C ε Lt/L` (N·m): the coupling
//! energy is integrated over the unstretched length, so the torque carries
//! the factor `Lt/L` (≈ 1) that keeps the tangent symmetric.

use super::BeamSection;
use nalgebra::{SMatrix, SVector, Vector3};

/// Local force `f_a = ∂U/∂d_a`, local stiffness `K_a = ∂²U/∂d_a²` and the
/// section results.
pub(super) struct LocalResponse {
    pub f: SVector<f64, 7>,
    pub k: SMatrix<f64, 7, 7>,
    /// Axial force N, in N.
    pub axial_force: f64,
    /// Torque T, in N·m.
    pub torque: f64,
    /// Mechanical axial strain ε (with bowing), dimensionless.
    pub strain: f64,
    /// Strain energy U (module docs), in J.
    pub energy: f64,
}

/// Local response for current length `l` (m), temperature-scaled
/// unstretched length `lt` (m), reference chord `lr` (m) and local rotation
/// vectors `t1`, `t2` (rad), measured from the rest rotations `rest` (rad).
pub(super) fn response(
    s: &BeamSection,
    l: f64,
    lt: f64,
    lr: f64,
    t1: &Vector3<f64>,
    t2: &Vector3<f64>,
    rest: &[Vector3<f64>; 2],
) -> LocalResponse {
    let mut g_eps = SVector::<f64, 7>::zeros();
    g_eps[0] = 1.0 / lt;
    let mut h_b = SMatrix::<f64, 7, 7>::zeros();
    let mut bow = 0.0;
    if s.bowing {
        for c in 1..3 {
            let (a, b) = (t1[c], t2[c]);
            let (a0, b0) = (rest[0][c], rest[1][c]);
            bow += (2.0 * a * a - a * b + 2.0 * b * b - (2.0 * a0 * a0 - a0 * b0 + 2.0 * b0 * b0)) / 30.0;
            g_eps[1 + c] = (4.0 * a - b) / 30.0;
            g_eps[4 + c] = (4.0 * b - a) / 30.0;
            h_b[(1 + c, 1 + c)] = 4.0 / 30.0;
            h_b[(4 + c, 4 + c)] = 4.0 / 30.0;
            h_b[(1 + c, 4 + c)] = -1.0 / 30.0;
            h_b[(4 + c, 1 + c)] = -1.0 / 30.0;
        }
    }
    let mut g_kap = SVector::<f64, 7>::zeros();
    g_kap[1] = -1.0 / lr;
    g_kap[4] = 1.0 / lr;

    // Bending and twist from the rest state.
    let (t1, t2) = (&(t1 - rest[0]), &(t2 - rest[1]));
    let eps = (l - lt) / lt + bow;
    let kap = (t2.x - t1.x) / lr;
    let c = s.axial_torsion_coupling;
    let n = s.ea * eps + c * kap;
    let torque = s.gj * kap + c * eps * lt / lr;

    let mut f = g_eps * (lt * n) + g_kap * (lr * torque);
    let mut k = (g_eps * g_eps.transpose() * s.ea
        + (g_eps * g_kap.transpose() + g_kap * g_eps.transpose()) * c
        + h_b * n)
        * lt
        + g_kap * g_kap.transpose() * (lr * s.gj);

    let mut energy = lt * (0.5 * s.ea * eps * eps + c * eps * kap) + lr * 0.5 * s.gj * kap * kap;
    for (c, ei) in [(1, s.ei_y), (2, s.ei_z)] {
        let (i, j) = (1 + c, 4 + c);
        let kb = ei / lr;
        energy += 2.0 * kb * (t1[c] * t1[c] + t1[c] * t2[c] + t2[c] * t2[c]);
        f[i] += kb * (4.0 * t1[c] + 2.0 * t2[c]);
        f[j] += kb * (2.0 * t1[c] + 4.0 * t2[c]);
        k[(i, i)] += 4.0 * kb;
        k[(j, j)] += 4.0 * kb;
        k[(i, j)] += 2.0 * kb;
        k[(j, i)] += 2.0 * kb;
    }
    LocalResponse { f, k, axial_force: n, torque, strain: eps, energy }
}
