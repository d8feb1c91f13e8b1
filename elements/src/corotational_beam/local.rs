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
//! θ̄⁰1, θ̄⁰2) the bending and twist terms take `θ̄ − θ̄⁰`, and the bowing
//! strain is measured from the nearest rest arc turned about the chord:
//! `b = min_ψ Q(θ̄ − R(ψ)θ̄⁰)` over the end slopes' lateral parts, which is
//! `(Q(θ̄) + Q(θ̄⁰) − |Z|)/30` with `Z = M θ̄` (derived here; `M` from
//! `p = 4θ̄⁰1 − θ̄⁰2`, `q = 4θ̄⁰2 − θ̄⁰1`, the lateral parts read as complex
//! numbers). Turning the arc about its chord does not lengthen it, so the
//! tension neither resists it nor, at rest, bends the element: there is no
//! prestress to balance. The bowing strain
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
            bow += (2.0 * a * a - a * b + 2.0 * b * b + (2.0 * a0 * a0 - a0 * b0 + 2.0 * b0 * b0)) / 30.0;
            g_eps[1 + c] = (4.0 * a - b) / 30.0;
            g_eps[4 + c] = (4.0 * b - a) / 30.0;
            h_b[(1 + c, 1 + c)] = 4.0 / 30.0;
            h_b[(4 + c, 4 + c)] = 4.0 / 30.0;
            h_b[(1 + c, 4 + c)] = -1.0 / 30.0;
            h_b[(4 + c, 1 + c)] = -1.0 / 30.0;
        }
        // − |Z| / 30: Z = M [θ̄1y, θ̄1z, θ̄2y, θ̄2z] (rows: real, imaginary part).
        let p = [4.0 * rest[0].y - rest[1].y, 4.0 * rest[0].z - rest[1].z];
        let q = [4.0 * rest[1].y - rest[0].y, 4.0 * rest[1].z - rest[0].z];
        if p != [0.0; 2] || q != [0.0; 2] {
            // Local DOF of the four lateral rotations.
            let dof = [2, 3, 5, 6];
            let m = [[p[0], p[1], q[0], q[1]], [p[1], -p[0], q[1], -q[0]]];
            let x = [t1.y, t1.z, t2.y, t2.z];
            let z: [f64; 2] = std::array::from_fn(|r| (0..4).map(|k| m[r][k] * x[k]).sum());
            // −f(|Z|) with f(r) = r from the rest value r0 = |Z⁰| = 2 Q(θ̄⁰)
            // up, and (r² + r0²)/(2 r0) below it (C¹ at r0): the exact
            // distance to the turned rest arcs curves the wrong way for an
            // element straighter than at rest, which would let the tension
            // buckle a torsionally soft conductor sideways; below r0 the
            // tension neither resists nor drives the turning.
            let (a0, b0) = (rest[0], rest[1]);
            let r0 = 2.0
                * (0..2)
                    .map(|c| {
                        2.0 * a0[c + 1] * a0[c + 1] - a0[c + 1] * b0[c + 1] + 2.0 * b0[c + 1] * b0[c + 1]
                    })
                    .sum::<f64>();
            let r = (z[0] * z[0] + z[1] * z[1]).sqrt();
            let mz: [f64; 4] = std::array::from_fn(|k| m[0][k] * z[0] + m[1][k] * z[1]);
            if r >= r0 && r > 0.0 {
                bow -= r / 30.0;
                for k in 0..4 {
                    g_eps[dof[k]] -= mz[k] / (30.0 * r);
                }
                for i in 0..4 {
                    for j in 0..4 {
                        let mm = m[0][i] * m[0][j] + m[1][i] * m[1][j];
                        h_b[(dof[i], dof[j])] -= (mm / r - mz[i] * mz[j] / (r * r * r)) / 30.0;
                    }
                }
            } else {
                bow -= (r * r + r0 * r0) / (2.0 * r0) / 30.0;
                for k in 0..4 {
                    g_eps[dof[k]] -= mz[k] / (30.0 * r0);
                }
                for i in 0..4 {
                    for j in 0..4 {
                        let mm = m[0][i] * m[0][j] + m[1][i] * m[1][j];
                        h_b[(dof[i], dof[j])] -= mm / r0 / 30.0;
                    }
                }
            }
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
