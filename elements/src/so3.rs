//! Rotation helpers on SO(3): hat/vee, exponential and logarithm maps, the
//! tangent operator of the exponential map and unit quaternions.
//!
//! Convention: rotation vectors θ (rad) act by `R = exp(θ̂)`, and a
//! *spatial* increment δθ updates a rotation by left multiplication,
//! `R ← exp(δθ̂) R`. The tangent operator `T(θ)` links a change of rotation
//! vector to the spatial spin it causes:
//! `exp((θ + δθ)^) ≈ exp((T(θ) δθ)^) exp(θ̂)`. This is the `T_s` of Battini &
//! Pacoste (2002), CMAME 191, and the "left Jacobian" of Lie-group
//! texts (Battini & Pacoste give T_s and its inverse with the same formulas;
//! equation numbers are not quoted here because they were not checked
//! against the paper). Crisfield (1990) and Simo & Vu-Quoc (1986) use the same map.
//!
//! Every function is accurate to round-off for small angles (Taylor series
//! below a threshold, half-angle forms elsewhere) and [`log`] is robust near
//! both 0 and π (it goes through Shepperd's quaternion extraction).

use nalgebra::{Matrix3, Vector3};

/// The hat map `v ↦ v̂`: the skew-symmetric matrix with `v̂ a = v × a`.
pub fn skew(v: &Vector3<f64>) -> Matrix3<f64> {
    Matrix3::new(0.0, -v.z, v.y, v.z, 0.0, -v.x, -v.y, v.x, 0.0)
}

/// Same as [`skew`]: the hat map `v ↦ v̂`.
pub fn hat(v: &Vector3<f64>) -> Matrix3<f64> {
    skew(v)
}

/// The vee map, inverse of [`skew`]: the axial vector of the skew-symmetric
/// part of `m`, `vee(m) = axial((m − mᵀ)/2)`.
pub fn vee(m: &Matrix3<f64>) -> Vector3<f64> {
    Vector3::new(0.5 * (m[(2, 1)] - m[(1, 2)]), 0.5 * (m[(0, 2)] - m[(2, 0)]), 0.5 * (m[(1, 0)] - m[(0, 1)]))
}

/// Coefficients `sin t / t` and `(1 − cos t)/t²` of Rodrigues' formula.
fn rodrigues_coefficients(t: f64) -> (f64, f64) {
    if t < 1e-4 {
        let t2 = t * t;
        (1.0 - t2 / 6.0 * (1.0 - t2 / 20.0), 0.5 - t2 / 24.0 * (1.0 - t2 / 30.0))
    } else {
        let s = (0.5 * t).sin() / (0.5 * t);
        (t.sin() / t, 0.5 * s * s)
    }
}

/// Exponential map (Rodrigues' formula): the rotation matrix of rotation
/// vector `theta` (rad), `R = I + (sin t/t) θ̂ + ((1 − cos t)/t²) θ̂²`, `t = |θ|`.
pub fn exp(theta: &Vector3<f64>) -> Matrix3<f64> {
    let (a, b) = rodrigues_coefficients(theta.norm());
    let w = skew(theta);
    Matrix3::identity() + w * a + w * w * b
}

/// Logarithm map: the rotation vector θ (rad, `|θ| ≤ π`) with `exp(θ̂) = R`.
///
/// `R` must be a rotation matrix (orthonormal, det +1). At exactly π either
/// of the two valid vectors may be returned.
pub fn log(r: &Matrix3<f64>) -> Vector3<f64> {
    let [w, x, y, z] = to_quaternion(r);
    let v = Vector3::new(x, y, z);
    let s = v.norm();
    // θ = 2 atan2(s, w) v/s, with w ≥ 0.
    if s < 1e-4 * w {
        let x2 = (s / w) * (s / w);
        v * (2.0 / w * (1.0 - x2 / 3.0 + x2 * x2 / 5.0))
    } else {
        v * (2.0 * s.atan2(w) / s)
    }
}

/// Coefficients `(1 − cos t)/t²` and `(t − sin t)/t³` of [`tangent`].
fn tangent_coefficients(t: f64) -> (f64, f64) {
    if t < 0.05 {
        let t2 = t * t;
        (
            0.5 - t2 / 24.0 + t2 * t2 / 720.0 - t2 * t2 * t2 / 40320.0,
            1.0 / 6.0 - t2 / 120.0 + t2 * t2 / 5040.0 - t2 * t2 * t2 / 362880.0,
        )
    } else {
        let (_, b) = rodrigues_coefficients(t);
        (b, (t - t.sin()) / (t * t * t))
    }
}

/// Tangent operator `T(θ) = I + ((1 − cos t)/t²) θ̂ + ((t − sin t)/t³) θ̂²`:
/// the spatial spin caused by a change δθ of rotation vector is `T(θ) δθ`
/// (Battini & Pacoste 2002, their `T_s`).
pub fn tangent(theta: &Vector3<f64>) -> Matrix3<f64> {
    let (a, b) = tangent_coefficients(theta.norm());
    let w = skew(theta);
    Matrix3::identity() + w * a + w * w * b
}

/// |B₂ₙ|/(2n)! for n = 1..6: the series `(1 − (t/2)cot(t/2))/t² = Σ c_n t^(2n−2)`.
const COT_SERIES: [f64; 6] = [
    1.0 / 12.0,
    1.0 / 720.0,
    1.0 / 30240.0,
    1.0 / 1209600.0,
    1.0 / 47900160.0,
    691.0 / (2730.0 * 479001600.0),
];

/// `c(t) = (1 − (t/2)cot(t/2))/t²` and `c'(t)/t`, the two scalars of
/// `T⁻¹` and of its derivative (Battini & Pacoste's η and μ).
fn inverse_coefficients(t: f64) -> (f64, f64) {
    if t < 0.25 {
        // c = Σ c_n t^(2n−2), c'/t = Σ (2n−2) c_n t^(2n−4).
        let t2 = t * t;
        let (mut c, mut dc) = (0.0, 0.0);
        let (mut p, mut q) = (1.0, 1.0);
        for (n, cn) in COT_SERIES.iter().enumerate() {
            c += cn * p;
            p *= t2;
            if n >= 1 {
                dc += (2 * n) as f64 * cn * q;
                q *= t2;
            }
        }
        (c, dc)
    } else {
        let half = 0.5 * t;
        let cot = half.cos() / half.sin();
        let csc2 = 1.0 / (half.sin() * half.sin());
        let c = 1.0 / (t * t) - cot / (2.0 * t);
        let dc = -2.0 / (t * t * t) + cot / (2.0 * t * t) + csc2 / (4.0 * t);
        (c, dc / t)
    }
}

/// Inverse tangent operator
/// `T⁻¹(θ) = I − ½ θ̂ + ((1 − (t/2)cot(t/2))/t²) θ̂²`
/// (Battini & Pacoste 2002, `T_s⁻¹`). Singular at `t = 2π`.
pub fn tangent_inv(theta: &Vector3<f64>) -> Matrix3<f64> {
    let (c, _) = inverse_coefficients(theta.norm());
    let w = skew(theta);
    Matrix3::identity() - w * 0.5 + w * w * c
}

/// Derivative of `T⁻ᵀ(θ) m` with respect to θ at fixed `m`:
/// `−½ m̂ + η ((θᵀm) I + θ mᵀ − 2 m θᵀ) + μ (θ̂² m) θᵀ`, with
/// `η = (1 − (t/2)cot(t/2))/t²` and `μ = η'(t)/t`. Multiplied on the right
/// by `T⁻¹(θ)` it is the `K_h` matrix of Battini & Pacoste (2002) (their η
/// and μ, derived here afresh and checked against finite differences).
pub fn tangent_inv_transpose_derivative(theta: &Vector3<f64>, m: &Vector3<f64>) -> Matrix3<f64> {
    let (eta, mu) = inverse_coefficients(theta.norm());
    let w = skew(theta);
    let ww_m = w * (w * m);
    skew(m) * -0.5
        + (Matrix3::identity() * theta.dot(m) + theta * m.transpose() - m * theta.transpose() * 2.0) * eta
        + ww_m * theta.transpose() * mu
}

/// Unit quaternion `[w, x, y, z]` (scalar first, `w ≥ 0`) of rotation matrix
/// `r`, by Shepperd's (1978) method, accurate at every angle.
pub fn to_quaternion(r: &Matrix3<f64>) -> [f64; 4] {
    let tr = r.trace();
    let d = [r[(0, 0)], r[(1, 1)], r[(2, 2)]];
    let mut q = if tr >= d[0] && tr >= d[1] && tr >= d[2] {
        let w = 0.5 * (1.0 + tr).sqrt();
        let f = 0.25 / w;
        [w, (r[(2, 1)] - r[(1, 2)]) * f, (r[(0, 2)] - r[(2, 0)]) * f, (r[(1, 0)] - r[(0, 1)]) * f]
    } else if d[0] >= d[1] && d[0] >= d[2] {
        let x = 0.5 * (1.0 + 2.0 * d[0] - tr).sqrt();
        let f = 0.25 / x;
        [(r[(2, 1)] - r[(1, 2)]) * f, x, (r[(0, 1)] + r[(1, 0)]) * f, (r[(0, 2)] + r[(2, 0)]) * f]
    } else if d[1] >= d[2] {
        let y = 0.5 * (1.0 + 2.0 * d[1] - tr).sqrt();
        let f = 0.25 / y;
        [(r[(0, 2)] - r[(2, 0)]) * f, (r[(0, 1)] + r[(1, 0)]) * f, y, (r[(1, 2)] + r[(2, 1)]) * f]
    } else {
        let z = 0.5 * (1.0 + 2.0 * d[2] - tr).sqrt();
        let f = 0.25 / z;
        [(r[(1, 0)] - r[(0, 1)]) * f, (r[(0, 2)] + r[(2, 0)]) * f, (r[(1, 2)] + r[(2, 1)]) * f, z]
    };
    let n = q.iter().map(|c| c * c).sum::<f64>().sqrt();
    let sign = if q[0] < 0.0 { -1.0 } else { 1.0 };
    for c in &mut q {
        *c *= sign / n;
    }
    q
}

/// Rotation matrix of quaternion `[w, x, y, z]` (normalised first; any sign).
pub fn from_quaternion(q: &[f64; 4]) -> Matrix3<f64> {
    let n = q.iter().map(|c| c * c).sum::<f64>().sqrt();
    let [w, x, y, z] = q.map(|c| c / n);
    Matrix3::new(
        1.0 - 2.0 * (y * y + z * z),
        2.0 * (x * y - w * z),
        2.0 * (x * z + w * y),
        2.0 * (x * y + w * z),
        1.0 - 2.0 * (x * x + z * z),
        2.0 * (y * z - w * x),
        2.0 * (x * z - w * y),
        2.0 * (y * z + w * x),
        1.0 - 2.0 * (x * x + y * y),
    )
}

#[cfg(test)]
mod tests;
