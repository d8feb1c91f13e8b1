//! Unit tests of the SO(3) helpers. Tolerances are absolute on
//! dimensionless matrices and on angles in rad.

use super::*;
use crate::test_util::Lcg;
use std::f64::consts::PI;

fn max_abs(m: &Matrix3<f64>) -> f64 {
    m.iter().fold(0.0_f64, |a, b| a.max(b.abs()))
}

/// Random angles plus the edge cases 0, 1e-9, 1e-4 (series switch),
/// 0.05, 0.25 (other switches) and π − 1e-6.
fn test_vectors() -> Vec<Vector3<f64>> {
    let mut rng = Lcg::new(7);
    let mut out = vec![Vector3::zeros()];
    for t in [1e-9, 1e-4, 0.05, 0.25, 1.0, 3.0, PI - 1e-6] {
        for _ in 0..5 {
            out.push(rng.direction() * t);
        }
    }
    for _ in 0..50 {
        out.push(rng.direction() * rng.range(0.0, PI - 1e-3));
    }
    out
}

#[test]
fn hat_and_vee_are_inverse() {
    let v = Vector3::new(0.3, -1.2, 2.5);
    assert_eq!(vee(&skew(&v)), v);
    assert_eq!(hat(&v) * Vector3::new(1.0, 2.0, 3.0), v.cross(&Vector3::new(1.0, 2.0, 3.0)));
}

#[test]
fn exp_is_a_rotation() {
    for t in test_vectors() {
        let r = exp(&t);
        assert!(max_abs(&(r.transpose() * r - Matrix3::identity())) < 1e-15 * 4.0);
        assert!((r.determinant() - 1.0).abs() < 1e-14);
    }
}

#[test]
fn log_of_exp_round_trip() {
    // |θ| < π: log(exp(θ)) = θ to 1e-14 rad, except that the angle is
    // conditioned like 1/sin near π: allow 1e-9 rad for π − 1e-6.
    for t in test_vectors() {
        let back = log(&exp(&t));
        let tol = if t.norm() > 3.0 { 1e-9 } else { 1e-14 };
        assert!((back - t).norm() <= tol * t.norm().max(1e-300) + 1e-300, "{t:?} -> {back:?}");
    }
}

#[test]
fn exp_of_log_round_trip() {
    let mut rng = Lcg::new(11);
    for _ in 0..200 {
        let r = rng.rotation(PI);
        assert!(max_abs(&(exp(&log(&r)) - r)) < 1e-14);
    }
    // Exactly π, either sign is valid.
    for axis in [Vector3::x(), Vector3::new(1.0, 2.0, -2.0) / 3.0] {
        let r = exp(&(axis * PI));
        let t = log(&r);
        assert!((t.norm() - PI).abs() < 1e-12);
        assert!(max_abs(&(exp(&t) - r)) < 1e-14);
    }
    assert_eq!(log(&Matrix3::identity()), Vector3::zeros());
}

#[test]
fn small_angles() {
    // exp(θ) = I + θ̂ + θ̂²/2 to O(t³); log of that returns θ to round-off.
    let t = Vector3::new(1e-9, -2e-9, 0.5e-9);
    let r = exp(&t);
    let expected = Matrix3::identity() + skew(&t) + skew(&t) * skew(&t) * 0.5;
    assert!(max_abs(&(r - expected)) < 1e-24);
    assert!((log(&r) - t).norm() < 1e-16 * 3.0);
    assert!(max_abs(&(tangent(&t) - Matrix3::identity() - skew(&t) * 0.5)) < 1e-18);
    assert!(max_abs(&(tangent_inv(&t) - Matrix3::identity() + skew(&t) * 0.5)) < 1e-18);
}

#[test]
fn tangent_times_inverse_is_identity() {
    for t in test_vectors() {
        let p = tangent(&t) * tangent_inv(&t);
        assert!(max_abs(&(p - Matrix3::identity())) < 1e-13, "{t:?}");
    }
}

#[test]
fn tangent_matches_finite_differences_of_exp() {
    // exp(θ + h e_i) exp(θ)ᵀ ≈ I + h (T e_i)^ ; central differences with
    // h = 1e-6 have truncation error O(h²) ≈ 1e-12; tolerance 1e-8.
    let h = 1e-6;
    for t in test_vectors().into_iter().filter(|t| t.norm() < 3.0) {
        let r = exp(&t);
        let tm = tangent(&t);
        for i in 0..3 {
            let mut e = Vector3::zeros();
            e[i] = h;
            let d = (exp(&(t + e)) - exp(&(t - e))) * r.transpose() / (2.0 * h);
            let spin = vee(&d);
            assert!((spin - tm.column(i)).norm() < 1e-8, "{t:?} {i}");
            assert!(max_abs(&(d - skew(&spin))) < 1e-8);
        }
    }
}

#[test]
fn inverse_tangent_derivative_matches_finite_differences() {
    // ∂(T⁻ᵀ(θ) m)/∂θ by central differences, h = 1e-6, tolerance 1e-8
    // relative to |m|; covers both sides of the series switch at 0.25.
    let mut rng = Lcg::new(3);
    let h = 1e-6;
    for t in test_vectors().into_iter().filter(|t| t.norm() < 3.0) {
        let m = rng.vector(2.0);
        let d = tangent_inv_transpose_derivative(&t, &m);
        for i in 0..3 {
            let mut e = Vector3::zeros();
            e[i] = h;
            let fd =
                (tangent_inv(&(t + e)).transpose() * m - tangent_inv(&(t - e)).transpose() * m) / (2.0 * h);
            assert!((fd - d.column(i)).norm() < 1e-8 * m.norm(), "{t:?}");
        }
    }
}

#[test]
fn quaternion_round_trip() {
    for t in test_vectors() {
        let r = exp(&t);
        let q = to_quaternion(&r);
        assert!(q[0] >= 0.0);
        let norm: f64 = q.iter().map(|c| c * c).sum();
        assert!((norm - 1.0).abs() < 1e-15);
        assert!(max_abs(&(from_quaternion(&q) - r)) < 1e-15 * 4.0);
        // q = (cos t/2, sin t/2 n)
        let half = 0.5 * t.norm();
        assert!((q[0] - half.cos()).abs() < 1e-15);
    }
    // Sign and scale of the input do not matter.
    let q = [-0.5, 1.0, -2.0, 0.25];
    let r = from_quaternion(&q);
    let back = to_quaternion(&r);
    let n = q.iter().map(|c| c * c).sum::<f64>().sqrt();
    for k in 0..4 {
        assert!((back[k] + q[k] / n).abs() < 1e-15);
    }
}
