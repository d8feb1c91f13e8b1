//! Galloping orbit of one station: the ellipse of the steady motion in the
//! plane of horizontal (`y`, m) and vertical (`z`, m) displacement.
//!
//! Each coordinate is fitted by least squares to `c + a cos ωt + b sin ωt`
//! at the dominant angular frequency `ω = 2πf` (given, or estimated with
//! [`crate::spectrum`] and refined by maximising the fitted harmonic, i.e.
//! minimising the residual over `f` by golden-section search within ±½ DFT
//! bin). For harmonic motion this recovers the ellipse exactly. With the
//! phasors `P = (a_y, a_z)` and `Q = (b_y, b_z)` the orbit is
//! `r(t) − c = P cos ωt + Q sin ωt`, the image of the unit circle under the
//! matrix `M = [P Q]`; with `S = M Mᵀ = [[S_yy, S_yz], [S_yz, S_zz]]` the
//! semi-axes are the square roots of the eigenvalues of `S` and the major axis
//! makes the angle `ψ = ½ atan2(2 S_yz, S_yy − S_zz)` with the horizontal —
//! the polarisation ellipse of two phasors, `tan 2ψ = 2 E_y E_z cos δ /
//! (E_y² − E_z²)` (Born & Wolf, *Principles of Optics*, §1.4.2, from memory).
//! The sense of rotation is the sign of `det M = a_y b_z − a_z b_y`.

use crate::spectrum::{dominant_frequencies, SpectrumError, SpectrumOptions};

/// Sense of rotation of the orbit, as seen with `y` to the right and `z` up
/// (looking along −x for a right-handed `x, y, z`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RotationSense {
    /// Counter-clockwise (positive about `x = y × z`).
    CounterClockwise,
    /// Clockwise.
    Clockwise,
    /// A straight line (no area swept).
    Linear,
}

/// An ellipse from two phasors.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ellipse {
    /// Semi-major axis, m.
    pub semi_major: f64,
    /// Semi-minor axis, m (≥ 0).
    pub semi_minor: f64,
    /// Angle of the major axis from the horizontal `y` towards `z`, degrees
    /// in (−90, 90]; 0 for a circle.
    pub tilt_deg: f64,
    /// Sense of rotation.
    pub sense: RotationSense,
}

/// Fitted steady orbit of one station.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Orbit {
    /// Frequency of the fit, Hz.
    pub frequency_hz: f64,
    /// Mean position `(y, z)`, m.
    pub center: [f64; 2],
    /// Cosine and sine coefficients `(a_y, b_y)` of `y`, m.
    pub phasor_y: [f64; 2],
    /// Cosine and sine coefficients `(a_z, b_z)` of `z`, m.
    pub phasor_z: [f64; 2],
    /// The ellipse of the fitted harmonic.
    pub ellipse: Ellipse,
    /// Root-mean-square distance of the samples from the fitted orbit
    /// point at the same time, m (0 for harmonic motion).
    pub rms_residual: f64,
    /// Envelope `max y − min y` of the samples, m.
    pub peak_to_peak_y: f64,
    /// Envelope `max z − min z` of the samples, m.
    pub peak_to_peak_z: f64,
}

/// Errors of the orbit fit.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum OrbitError {
    /// Fewer than 4 samples.
    #[error("need at least 4 samples, got {0}")]
    TooFewSamples(usize),
    /// `t`, `y` and `z` differ in length.
    #[error("t, y and z must have the same length")]
    LengthMismatch,
    /// A sample is NaN or infinite.
    #[error("sample {0} is not finite")]
    NonFinite(usize),
    /// The times are not uniform (needed to estimate the frequency).
    #[error("times must be uniformly spaced and increasing to estimate the frequency")]
    NonUniformTime,
    /// The given frequency is not finite and positive.
    #[error("frequency {0} Hz must be finite and positive")]
    BadFrequency(f64),
    /// The three-term fit is singular (e.g. the record is far shorter than a period).
    #[error("the harmonic fit is singular at this frequency")]
    Singular,
    /// The spectrum estimate failed.
    #[error(transparent)]
    Spectrum(#[from] SpectrumError),
}

/// Ellipse traced by `P cos ωt + Q sin ωt` for `phasor_y = (a_y, b_y)` and
/// `phasor_z = (a_z, b_z)`, i.e. `P = (a_y, a_z)`, `Q = (b_y, b_z)` (m).
pub fn ellipse_from_phasors(phasor_y: [f64; 2], phasor_z: [f64; 2]) -> Ellipse {
    let [ay, by] = phasor_y;
    let [az, bz] = phasor_z;
    let syy = ay * ay + by * by;
    let szz = az * az + bz * bz;
    let syz = ay * az + by * bz;
    let mean = 0.5 * (syy + szz);
    let radius = (0.5 * (syy - szz)).hypot(syz);
    let semi_major = (mean + radius).sqrt();
    // λ₂ = det S / λ₁ avoids the cancellation of mean − radius.
    let det = ay * bz - az * by;
    let semi_minor = if semi_major > 0.0 { det.abs() / semi_major } else { 0.0 };
    // atan2 ∈ (−180°, 180°], so ψ ∈ (−90°, 90°]; guard the rounding at −90°.
    let mut tilt_deg = 0.5 * (2.0 * syz).atan2(syy - szz).to_degrees();
    if tilt_deg <= -90.0 {
        tilt_deg += 180.0;
    }
    let sense = if det > 0.0 {
        RotationSense::CounterClockwise
    } else if det < 0.0 {
        RotationSense::Clockwise
    } else {
        RotationSense::Linear
    };
    Ellipse { semi_major, semi_minor, tilt_deg, sense }
}

/// `max − min` of `x` (m); `None` for an empty slice or a non-finite value.
pub fn peak_to_peak(x: &[f64]) -> Option<f64> {
    if x.is_empty() || !x.iter().all(|v| v.is_finite()) {
        return None;
    }
    let (lo, hi) = x.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| (lo.min(v), hi.max(v)));
    Some(hi - lo)
}

/// Least-squares fit of `y` and `z` to `c + a cos ωτ + b sin ωτ`, `τ = t − t_mid`.
struct Fit {
    y: [f64; 3],
    z: [f64; 3],
    rss: f64,
}

fn harmonic_fit(t: &[f64], y: &[f64], z: &[f64], omega: f64, t_mid: f64) -> Option<Fit> {
    let mut m = [[0.0; 3]; 3];
    let (mut ry, mut rz) = ([0.0; 3], [0.0; 3]);
    for ((&tk, &yk), &zk) in t.iter().zip(y).zip(z) {
        let (s, c) = (omega * (tk - t_mid)).sin_cos();
        let phi = [1.0, c, s];
        for i in 0..3 {
            for j in 0..3 {
                m[i][j] += phi[i] * phi[j];
            }
            ry[i] += phi[i] * yk;
            rz[i] += phi[i] * zk;
        }
    }
    let cy = solve3(m, ry)?;
    let cz = solve3(m, rz)?;
    let mut rss = 0.0;
    for ((&tk, &yk), &zk) in t.iter().zip(y).zip(z) {
        let (s, c) = (omega * (tk - t_mid)).sin_cos();
        let ey = yk - (cy[0] + cy[1] * c + cy[2] * s);
        let ez = zk - (cz[0] + cz[1] * c + cz[2] * s);
        rss += ey * ey + ez * ez;
    }
    Some(Fit { y: cy, z: cz, rss })
}

/// Gaussian elimination with partial pivoting; `None` if (nearly) singular.
fn solve3(mut m: [[f64; 3]; 3], mut r: [f64; 3]) -> Option<[f64; 3]> {
    let scale = (0..3).map(|i| m[i][i].abs()).fold(0.0, f64::max);
    for col in 0..3 {
        let p = (col..3).max_by(|&i, &j| m[i][col].abs().total_cmp(&m[j][col].abs()))?;
        let pivot = m[p][col].abs();
        if pivot.is_nan() || pivot <= 1e-10 * scale {
            return None;
        }
        m.swap(col, p);
        r.swap(col, p);
        for row in col + 1..3 {
            let f = m[row][col] / m[col][col];
            let pivot_row = m[col];
            for (x, pv) in m[row].iter_mut().zip(pivot_row).skip(col) {
                *x -= f * pv;
            }
            r[row] -= f * r[col];
        }
    }
    let mut x = [0.0; 3];
    for i in (0..3).rev() {
        let s: f64 = (i + 1..3).map(|k| m[i][k] * x[k]).sum();
        x[i] = (r[i] - s) / m[i][i];
    }
    Some(x)
}

/// Fit the steady orbit of samples `y(t)`, `z(t)` (m, s). At least 4
/// samples. With `frequency_hz = Some(f)` (Hz) any sampling works; with
/// `None` the times must be uniform (relative spread ≤ 1e-6 of the step) and
/// the frequency is the strongest spectral line of `y` or `z`, refined by
/// minimising the fit residual within ±½ DFT bin (`1/(2T)`, `T` = record
/// length) of it. The record should span several periods.
pub fn fit_orbit(t: &[f64], y: &[f64], z: &[f64], frequency_hz: Option<f64>) -> Result<Orbit, OrbitError> {
    let n = t.len();
    if y.len() != n || z.len() != n {
        return Err(OrbitError::LengthMismatch);
    }
    if n < 4 {
        return Err(OrbitError::TooFewSamples(n));
    }
    if let Some(i) = (0..n).find(|&i| !(t[i].is_finite() && y[i].is_finite() && z[i].is_finite())) {
        return Err(OrbitError::NonFinite(i));
    }
    let t_mid = 0.5 * (t[0] + t[n - 1]);
    let tau = std::f64::consts::TAU;
    let (frequency_hz, fit) = match frequency_hz {
        Some(f) => {
            if !(f.is_finite() && f > 0.0) {
                return Err(OrbitError::BadFrequency(f));
            }
            (f, harmonic_fit(t, y, z, tau * f, t_mid).ok_or(OrbitError::Singular)?)
        }
        None => {
            let span = t[n - 1] - t[0];
            let dt = span / (n - 1) as f64;
            if dt.is_nan() || dt <= 0.0 || t.windows(2).any(|w| ((w[1] - w[0]) - dt).abs() > 1e-6 * dt) {
                return Err(OrbitError::NonUniformTime);
            }
            let fs = 1.0 / dt;
            let opts = SpectrumOptions { max_peaks: 1, min_relative_amplitude: 0.0 };
            let py = dominant_frequencies(y, fs, &opts)?.first().copied();
            let pz = dominant_frequencies(z, fs, &opts)?.first().copied();
            let f0 = match (py, pz) {
                (Some(a), Some(b)) => {
                    if a.amplitude >= b.amplitude {
                        a.frequency_hz
                    } else {
                        b.frequency_hz
                    }
                }
                (Some(a), None) | (None, Some(a)) => a.frequency_hz,
                (None, None) => return Err(SpectrumError::NoPeak.into()),
            };
            let half_bin = 0.5 / (n as f64 * dt);
            refine(t, y, z, t_mid, (f0 - half_bin).max(0.5 * f0), f0 + half_bin)?
        }
    };
    let ellipse = ellipse_from_phasors([fit.y[1], fit.y[2]], [fit.z[1], fit.z[2]]);
    Ok(Orbit {
        frequency_hz,
        center: [fit.y[0], fit.z[0]],
        phasor_y: [fit.y[1], fit.y[2]],
        phasor_z: [fit.z[1], fit.z[2]],
        ellipse,
        rms_residual: (fit.rss / n as f64).sqrt(),
        peak_to_peak_y: peak_to_peak(y).unwrap_or(0.0),
        peak_to_peak_z: peak_to_peak(z).unwrap_or(0.0),
    })
}

/// Golden-section minimisation of the fit residual over `f ∈ [lo, hi]` (Hz).
fn refine(
    t: &[f64],
    y: &[f64],
    z: &[f64],
    t_mid: f64,
    mut lo: f64,
    mut hi: f64,
) -> Result<(f64, Fit), OrbitError> {
    let tau = std::f64::consts::TAU;
    let rss = |f: f64| harmonic_fit(t, y, z, tau * f, t_mid).map_or(f64::INFINITY, |r| r.rss);
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let mut x1 = hi - g * (hi - lo);
    let mut x2 = lo + g * (hi - lo);
    let (mut f1, mut f2) = (rss(x1), rss(x2));
    for _ in 0..60 {
        if f1 <= f2 {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - g * (hi - lo);
            f1 = rss(x1);
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + g * (hi - lo);
            f2 = rss(x2);
        }
    }
    let f = if f1 <= f2 { x1 } else { x2 };
    let fit = harmonic_fit(t, y, z, tau * f, t_mid).ok_or(OrbitError::Singular)?;
    Ok((f, fit))
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    /// Synthetic orbit (constructed): centre (0.3, −1.2) m, semi-axes `a`,
    /// `b`, major axis at `tilt` degrees, `sense` ±1, frequency `f`, start
    /// phase 0.7 rad, uniform noise of ±`noise` m from a fixed LCG; 25 Hz
    /// sampling for `cycles` periods.
    fn synthetic(
        a: f64,
        b: f64,
        tilt: f64,
        sense: f64,
        f: f64,
        noise: f64,
        cycles: f64,
    ) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
        let fs = 25.0;
        let n = (cycles / f * fs) as usize;
        let mut state: u64 = 0x0AB1_7005;
        let mut rnd = move || {
            state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
        };
        let (st, ct) = tilt.to_radians().sin_cos();
        let mut out = (Vec::new(), Vec::new(), Vec::new());
        for k in 0..n {
            let t = k as f64 / fs;
            let ph = 2.0 * PI * f * t + 0.7;
            let (u, v) = (a * ph.cos(), sense * b * ph.sin());
            out.0.push(t);
            out.1.push(0.3 + ct * u - st * v + noise * rnd());
            out.2.push(-1.2 + st * u + ct * v + noise * rnd());
        }
        out
    }

    fn tilt_error(got: f64, want: f64) -> f64 {
        let mut d = (got - want) % 180.0;
        if d > 90.0 {
            d -= 180.0;
        }
        if d <= -90.0 {
            d += 180.0;
        }
        d.abs()
    }

    #[test]
    fn known_ellipses_recovered() {
        // constructed: (semi-major, semi-minor, tilt °, sense, Hz)
        let cases = [
            (2.0, 0.6, 0.0, 1.0, 0.35),
            (2.0, 0.6, 30.0, -1.0, 0.35),
            (1.5, 0.4, -45.0, 1.0, 0.52),
            (3.0, 1.0, 80.0, 1.0, 0.27),
            (3.0, 1.0, -80.0, -1.0, 0.27),
            (1.2, 0.3, 90.0, 1.0, 0.61),
        ];
        for &(a, b, tilt, sense, f) in &cases {
            let (t, y, z) = synthetic(a, b, tilt, sense, f, 0.01, 20.0);
            for given in [Some(f), None] {
                let o = fit_orbit(&t, &y, &z, given).unwrap();
                let e = o.ellipse;
                assert!((e.semi_major / a - 1.0).abs() < 0.01, "{a} {tilt}: {o:?}");
                assert!((e.semi_minor / b - 1.0).abs() < 0.01, "{b} {tilt}: {o:?}");
                assert!(tilt_error(e.tilt_deg, tilt) < 0.5, "{tilt}: {o:?}");
                assert!(e.tilt_deg > -90.0 && e.tilt_deg <= 90.0);
                let want =
                    if sense > 0.0 { RotationSense::CounterClockwise } else { RotationSense::Clockwise };
                assert_eq!(e.sense, want);
                assert!((o.frequency_hz / f - 1.0).abs() < 1e-3, "{o:?}");
                assert!((o.center[0] - 0.3).abs() < 0.01 && (o.center[1] + 1.2).abs() < 0.01);
                assert!(o.rms_residual < 0.02); // noise rms √(2/3)·0.01
            }
        }
    }

    #[test]
    fn circle_and_flat_line() {
        // constructed: a circle of radius 1.1 m, counter-clockwise
        let (t, y, z) = synthetic(1.1, 1.1, 0.0, 1.0, 0.4, 0.005, 15.0);
        let o = fit_orbit(&t, &y, &z, None).unwrap();
        assert!((o.ellipse.semi_major / 1.1 - 1.0).abs() < 0.01, "{o:?}");
        assert!((o.ellipse.semi_minor / 1.1 - 1.0).abs() < 0.01, "{o:?}");
        assert_eq!(o.ellipse.sense, RotationSense::CounterClockwise);
        // constructed: a flat line of half-length 2.5 m at 25° (no minor axis)
        let (t, y, z) = synthetic(2.5, 0.0, 25.0, 1.0, 0.4, 0.005, 15.0);
        let o = fit_orbit(&t, &y, &z, None).unwrap();
        assert!((o.ellipse.semi_major / 2.5 - 1.0).abs() < 0.01, "{o:?}");
        assert!(o.ellipse.semi_minor < 0.01 * 2.5, "{o:?}");
        assert!(tilt_error(o.ellipse.tilt_deg, 25.0) < 0.5, "{o:?}");
        // exact line without noise through ellipse_from_phasors: linear
        let e = ellipse_from_phasors([1.0, 0.0], [2.0, 0.0]);
        assert_eq!(e.sense, RotationSense::Linear);
        assert_eq!(e.semi_minor, 0.0);
        // exact geometry: the line (1, 2) cos ωt has semi-axis √5 at atan 2
        assert!((e.semi_major - 5f64.sqrt()).abs() < 1e-14);
        assert!((e.tilt_deg - 2f64.atan().to_degrees()).abs() < 1e-12);
    }

    #[test]
    fn phasor_relation_exact() {
        // exact geometry: y = 3 cos ωt, z = 2 sin ωt is the axis-aligned
        // ellipse 3 × 2, counter-clockwise ((3,0) → (0,2) → …).
        let e = ellipse_from_phasors([3.0, 0.0], [0.0, 2.0]);
        assert!((e.semi_major - 3.0).abs() < 1e-14 && (e.semi_minor - 2.0).abs() < 1e-14);
        assert_eq!((e.tilt_deg, e.sense), (0.0, RotationSense::CounterClockwise));
        // exact geometry: y = 2 sin ωt, z = 3 cos ωt: major axis vertical
        // (90°), clockwise ((0,3) → (2,0) → …).
        let e = ellipse_from_phasors([0.0, 2.0], [3.0, 0.0]);
        assert!((e.semi_major - 3.0).abs() < 1e-14 && (e.semi_minor - 2.0).abs() < 1e-14);
        assert_eq!(e.tilt_deg, 90.0);
        assert_eq!(e.sense, RotationSense::Clockwise);
    }

    #[test]
    fn peak_to_peak_envelope() {
        // constructed: a sampled ellipse 2 × 0.6 at 0° has y range ≈ 4, z ≈ 1.2
        let (t, y, z) = synthetic(2.0, 0.6, 0.0, 1.0, 0.5, 0.0, 10.0);
        let o = fit_orbit(&t, &y, &z, Some(0.5)).unwrap();
        assert!((o.peak_to_peak_y - 4.0).abs() < 0.01, "{o:?}");
        assert!((o.peak_to_peak_z - 1.2).abs() < 0.01, "{o:?}");
        assert_eq!(peak_to_peak(&[1.0, -2.0, 0.5]), Some(3.0)); // exact
        assert_eq!(peak_to_peak(&[]), None);
    }

    #[test]
    fn bad_input() {
        let t = [0.0, 1.0, 2.0, 3.0, 4.0];
        let y = [0.0, 1.0, 0.0, -1.0, 0.0];
        assert_eq!(fit_orbit(&t, &y, &y[..4], None), Err(OrbitError::LengthMismatch));
        assert_eq!(fit_orbit(&t[..3], &y[..3], &y[..3], None), Err(OrbitError::TooFewSamples(3)));
        let mut bad = y;
        bad[2] = f64::NAN;
        assert_eq!(fit_orbit(&t, &bad, &y, None), Err(OrbitError::NonFinite(2)));
        let uneven = [0.0, 1.0, 2.5, 3.0, 4.0];
        assert_eq!(fit_orbit(&uneven, &y, &y, None), Err(OrbitError::NonUniformTime));
        assert!(fit_orbit(&uneven, &y, &y, Some(0.25)).is_ok());
        assert_eq!(fit_orbit(&t, &y, &y, Some(-1.0)), Err(OrbitError::BadFrequency(-1.0)));
        assert_eq!(
            fit_orbit(&t, &[1.0; 5], &[2.0; 5], None),
            Err(OrbitError::Spectrum(SpectrumError::NoPeak))
        );
        // ω τ ≈ 0 over the record: cos and 1 are collinear
        assert_eq!(fit_orbit(&t, &y, &y, Some(1e-9)), Err(OrbitError::Singular));
    }
}
