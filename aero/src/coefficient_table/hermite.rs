//! Piecewise cubic Hermite and piecewise linear interpolation of one column.
//!
//! The node derivatives of the monotone cubic follow SciPy's
//! `PchipInterpolator` exactly (so the two can be compared to rounding):
//!
//! - interior nodes: zero where the neighbouring secant slopes differ in sign
//!   or either is zero, else the weighted harmonic mean of Fritsch & Butland
//!   (1984, "A method for constructing local monotone piecewise cubic
//!   interpolants", SIAM J. Sci. Stat. Comput. 5(2), 300–304),
//!   `1/d_k = (w₁/m_{k−1} + w₂/m_k)/(w₁ + w₂)`, `w₁ = 2h_k + h_{k−1}`,
//!   `w₂ = h_k + 2h_{k−1}`;
//! - end nodes of a non-periodic table: the one-sided three-point estimate
//!   `d = ((2h₀ + h₁)m₀ − h₀m₁)/(h₀ + h₁)`, set to 0 if its sign differs from
//!   `m₀`'s and limited to `3m₀` if `m₀` and `m₁` differ in sign and
//!   `|d| > 3|m₀|` (Moler 2004, *Numerical Computing with MATLAB*, §3.6,
//!   `pchiptx`);
//! - a periodic table instead applies the interior formula at the seam, with
//!   the last interval as the one before the first.
//!
//! Every node derivative then satisfies `0 ≤ d_k/m ≤ 3` against both adjacent
//! secants `m` (zero where they disagree), which is inside the monotonicity
//! region of Fritsch & Carlson (1980, "Monotone piecewise cubic
//! interpolation", SIAM J. Numer. Anal. 17(2), 238–246: the square
//! `0 ≤ d_i/m, d_{i+1}/m ≤ 3` lies inside their monotonicity region): on data
//! monotone over an interval the interpolant is monotone there and never
//! leaves the range of the interval's two end values.
//!
//! On an interval `[x_i, x_i + h]` with `s = x − x_i`, secant `m`, the cubic
//! is written in SciPy's power form `c₀s³ + c₁s² + c₂s + c₃` with
//! `t = (d_i + d_{i+1} − 2m)/h`, `c₀ = t/h`, `c₁ = (m − d_i)/h − t`,
//! `c₂ = d_i`, `c₃ = y_i`; its derivative is `3c₀s² + 2c₁s + c₂`, so the
//! derivative is exactly that of the evaluated polynomial.

/// Sign as NumPy's `sign`: −1, 0 or +1 (no signed zero).
fn sign(v: f64) -> i8 {
    if v > 0.0 {
        1
    } else if v < 0.0 {
        -1
    } else {
        0
    }
}

/// Fritsch–Butland weighted harmonic mean at a node between an interval of
/// width `h_prev`, secant `m_prev` and one of width `h_next`, secant `m_next`.
fn interior(h_prev: f64, h_next: f64, m_prev: f64, m_next: f64) -> f64 {
    if m_prev == 0.0 || m_next == 0.0 || sign(m_prev) != sign(m_next) {
        return 0.0;
    }
    let w1 = 2.0 * h_next + h_prev;
    let w2 = h_next + 2.0 * h_prev;
    let whmean = (w1 / m_prev + w2 / m_next) / (w1 + w2);
    1.0 / whmean
}

/// Shape-preserving one-sided three-point end derivative (SciPy `_edge_case`).
/// `h0, m0` belong to the end interval, `h1, m1` to its neighbour.
fn edge(h0: f64, h1: f64, m0: f64, m1: f64) -> f64 {
    let d = ((2.0 * h0 + h1) * m0 - h0 * m1) / (h0 + h1);
    if sign(d) != sign(m0) {
        0.0
    } else if sign(m0) != sign(m1) && d.abs() > 3.0 * m0.abs() {
        3.0 * m0
    } else {
        d
    }
}

/// Node derivatives of the monotone piecewise cubic through `(x, y)`.
///
/// `x` must be strictly increasing with at least two points. With
/// `periodic`, `y[0] == y[n−1]` is assumed and `d[0] == d[n−1]` results.
pub(super) fn pchip_derivatives(x: &[f64], y: &[f64], periodic: bool) -> Vec<f64> {
    let n = x.len();
    debug_assert!(n >= 2 && y.len() == n);
    let h: Vec<f64> = x.windows(2).map(|w| w[1] - w[0]).collect();
    let m: Vec<f64> = y.windows(2).zip(&h).map(|(w, h)| (w[1] - w[0]) / h).collect();
    if n == 2 {
        return vec![m[0], m[0]];
    }
    let mut d = vec![0.0; n];
    for k in 1..n - 1 {
        d[k] = interior(h[k - 1], h[k], m[k - 1], m[k]);
    }
    if periodic {
        d[0] = interior(h[n - 2], h[0], m[n - 2], m[0]);
        d[n - 1] = d[0];
    } else {
        d[0] = edge(h[0], h[1], m[0], m[1]);
        d[n - 1] = edge(h[n - 2], h[n - 3], m[n - 2], m[n - 3]);
    }
    d
}

/// Index `i` of the interval `[x_i, x_{i+1})` holding `xv`, for `xv` in
/// `[x_0, x_{n−1}]`; returns `n − 1` for `xv == x_{n−1}`.
pub(super) fn locate(x: &[f64], xv: f64) -> usize {
    // Number of nodes ≤ xv, minus one.
    x.partition_point(|&xi| xi <= xv).saturating_sub(1)
}

/// Value and derivative of the cubic Hermite interpolant at `xv`, on the
/// interval `i` returned by [`locate`].
pub(super) fn cubic(x: &[f64], y: &[f64], d: &[f64], i: usize, xv: f64) -> (f64, f64) {
    if i + 1 >= x.len() {
        // At the last node: the tabulated value itself.
        return (y[x.len() - 1], d[x.len() - 1]);
    }
    let h = x[i + 1] - x[i];
    let s = xv - x[i];
    let slope = (y[i + 1] - y[i]) / h;
    let t = (d[i] + d[i + 1] - 2.0 * slope) / h;
    let c0 = t / h;
    let c1 = (slope - d[i]) / h - t;
    let c2 = d[i];
    let c3 = y[i];
    let value = ((c0 * s + c1) * s + c2) * s + c3;
    let derivative = (3.0 * c0 * s + 2.0 * c1) * s + c2;
    (value, derivative)
}

/// Value and derivative of the piecewise linear interpolant at `xv`, on the
/// interval `i` returned by [`locate`]. The derivative is the secant slope of
/// the interval (at a node, that of the interval to its right; at the last
/// node, that of the last interval).
pub(super) fn linear(x: &[f64], y: &[f64], i: usize, xv: f64) -> (f64, f64) {
    let n = x.len();
    if i + 1 >= n {
        return (y[n - 1], (y[n - 1] - y[n - 2]) / (x[n - 1] - x[n - 2]));
    }
    let h = x[i + 1] - x[i];
    let slope = (y[i + 1] - y[i]) / h;
    (y[i] + (y[i + 1] - y[i]) * ((xv - x[i]) / h), slope)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Dense evaluation of the cubic on `[x_0, x_{n−1}]`.
    fn sample(x: &[f64], y: &[f64], d: &[f64], per_interval: usize) -> Vec<(f64, f64)> {
        let mut out = Vec::new();
        for i in 0..x.len() - 1 {
            for j in 0..per_interval {
                let xv = x[i] + (x[i + 1] - x[i]) * j as f64 / per_interval as f64;
                out.push((xv, cubic(x, y, d, locate(x, xv), xv).0));
            }
        }
        out
    }

    #[test]
    fn node_derivatives_lie_in_the_fritsch_carlson_square() {
        // Fritsch & Carlson (1980): 0 ≤ d/m ≤ 3 on both sides of every node
        // of a monotone stretch suffices for monotonicity.
        let x = [0.0, 0.3, 0.5, 1.4, 1.5, 2.7, 3.0];
        let y = [0.0, 0.01, 0.9, 1.0, 3.5, 3.6, 7.0];
        let d = pchip_derivatives(&x, &y, false);
        for k in 0..x.len() - 1 {
            let m = (y[k + 1] - y[k]) / (x[k + 1] - x[k]);
            for dk in [d[k], d[k + 1]] {
                assert!((0.0..=3.0 * m * (1.0 + 1e-15)).contains(&dk), "d={dk} m={m}");
            }
        }
    }

    #[test]
    fn monotone_data_give_a_monotone_interpolant_without_overshoot() {
        // Increasing data with flat parts and steep jumps, where an ordinary
        // C² spline overshoots (the example shape of Fritsch & Carlson 1980).
        let x = [0.0, 1.0, 2.0, 2.5, 3.0, 4.5, 5.0, 6.0, 8.0];
        let y = [0.0, 0.0, 0.1, 3.0, 3.0, 3.05, 9.0, 9.0, 9.5];
        for (xs, ys) in [(x.to_vec(), y.to_vec()), (x.to_vec(), y.iter().map(|v| -v).collect())] {
            let d = pchip_derivatives(&xs, &ys, false);
            let pts = sample(&xs, &ys, &d, 400);
            let increasing = ys[ys.len() - 1] > ys[0];
            for w in pts.windows(2) {
                let step = w[1].1 - w[0].1;
                assert!(if increasing { step >= -1e-15 } else { step <= 1e-15 }, "{w:?}");
            }
            for (xv, v) in pts {
                let i = locate(&xs, xv);
                let (lo, hi) = (ys[i].min(ys[i + 1]), ys[i].max(ys[i + 1]));
                assert!(v >= lo - 1e-15 && v <= hi + 1e-15, "overshoot {v} at {xv}");
            }
        }
    }

    #[test]
    fn end_conditions_follow_the_shape_preserving_rules() {
        // Left end: three-point estimate (3·1 − 5)/2 = −1 has the wrong sign → 0.
        let d = pchip_derivatives(&[0.0, 1.0, 2.0, 3.0], &[0.0, 1.0, 6.0, 7.0], false);
        assert_eq!(d[0], 0.0);
        // Right end: secants …, −10, 1: estimate (3·1 + 10)/2 = 6.5 > 3 → 3·1.
        let d = pchip_derivatives(&[0.0, 1.0, 2.0, 3.0], &[0.0, 11.0, 1.0, 2.0], false);
        assert_eq!(d[3], 3.0);
        // Unlimited case: secants 1, 2 → (3·1 − 2)/2 = 0.5.
        let d = pchip_derivatives(&[0.0, 1.0, 2.0, 3.0], &[0.0, 1.0, 3.0, 4.0], false);
        assert_eq!(d[0], 0.5);
    }

    #[test]
    fn cubic_derivative_is_continuous_at_nodes() {
        let x = [0.0, 0.4, 1.0, 1.7, 2.0];
        let y = [1.0, 1.3, 0.2, 0.5, 0.9];
        let d = pchip_derivatives(&x, &y, false);
        for k in 1..x.len() - 1 {
            let (vl, dl) = cubic(&x, &y, &d, k - 1, x[k]);
            let (vr, dr) = cubic(&x, &y, &d, k, x[k]);
            assert!((vl - vr).abs() < 1e-14 && (dl - dr).abs() < 1e-12);
            assert_eq!(vr, y[k]);
        }
    }
}
