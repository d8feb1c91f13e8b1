//! Form-finding of the discretised span: the chain of `n` straight
//! elastic elements of equal unstretched length with the weight of each
//! element lumped half to each of its nodes, in exact equilibrium at a
//! given horizontal tension.
//!
//! This is the discrete counterpart of Irvine's elastic catenary
//! ([`super::elastic_catenary`]): with `V_k = V_0 + k w ℓ` the vertical
//! force in element `k`, `T_k = √(H² + V_k²)` and `ℓ = L0/n`, the chain
//! closes on the far support when
//!
//! ```text
//! Σ ℓ (1 + T_k/EA) H/T_k = l,    Σ ℓ (1 + T_k/EA) V_k/T_k = h.
//! ```
//!
//! Solving these two equations for `(V_0, L0)` strings the *mesh* to the
//! target exactly, so a cable or beam model at its stringing state is in
//! equilibrium with no residual and the stringing target is met to
//! round-off, whatever the element count.

use super::elastic_catenary::{Catenary, CatenaryError, CatenarySpan};

/// A strung chain: node coordinates in the span's vertical plane.
#[derive(Clone, Debug, PartialEq)]
pub struct DiscreteChain {
    /// Horizontal tension `H`, in N.
    pub horizontal_tension: f64,
    /// Vertical force in the first element, along increasing `s`, in N.
    pub first_vertical: f64,
    /// Total unstretched length `L0`, in m.
    pub unstretched_length: f64,
    /// `(x, z)` of the `n + 1` nodes relative to the first support, in m.
    pub nodes: Vec<(f64, f64)>,
}

impl DiscreteChain {
    /// Strings a chain of `elements` elements to horizontal tension `h`,
    /// starting from the continuous elastic catenary.
    pub fn strung(span: CatenarySpan, h: f64, elements: usize) -> Result<Self, CatenaryError> {
        let continuous = Catenary::from_horizontal_tension(span, h)?;
        let n = elements.max(1) as f64;
        let (w, ea) = (span.weight_per_length, span.axial_stiffness);
        let mut l0 = continuous.unstretched_length;
        let mut v0 = continuous.vertical_at_start + 0.5 * w * l0 / n;
        let scale = span.horizontal_length.hypot(span.height_difference);
        for _ in 0..100 {
            let ell = l0 / n;
            let (mut gx, mut gz, mut dgx_dv, mut dgz_dv, mut dgx_dl, mut dgz_dl) =
                (0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
            for k in 0..elements {
                let kf = k as f64;
                let v = v0 + kf * w * ell;
                let t = h.hypot(v);
                let t3 = t * t * t;
                gx += h / t + h / ea;
                gz += v / t + v / ea;
                let ddx = -h * v / t3;
                let ddz = h * h / t3 + 1.0 / ea;
                dgx_dv += ddx;
                dgz_dv += ddz;
                dgx_dl += ddx * kf * w / n;
                dgz_dl += ddz * kf * w / n;
            }
            let rx = ell * gx - span.horizontal_length;
            let rz = ell * gz - span.height_difference;
            if rx.abs() < 1e-13 * scale && rz.abs() < 1e-13 * scale {
                return Ok(Self::build(span, h, v0, l0, elements));
            }
            let (a, b) = (ell * dgx_dv, gx / n + ell * dgx_dl);
            let (c, d) = (ell * dgz_dv, gz / n + ell * dgz_dl);
            let det = a * d - b * c;
            if det.abs() < f64::MIN_POSITIVE {
                break;
            }
            v0 += (-rx * d + rz * b) / det;
            l0 += (-a * rz + c * rx) / det;
        }
        Err(CatenaryError::NoConvergence("discrete chain stringing"))
    }

    fn build(span: CatenarySpan, h: f64, v0: f64, l0: f64, elements: usize) -> Self {
        let (w, ea) = (span.weight_per_length, span.axial_stiffness);
        let ell = l0 / elements as f64;
        let mut nodes = Vec::with_capacity(elements + 1);
        let (mut x, mut z) = (0.0, 0.0);
        nodes.push((x, z));
        for k in 0..elements {
            let v = v0 + k as f64 * w * ell;
            let t = h.hypot(v);
            let stretch = ell * (1.0 + t / ea);
            x += stretch * h / t;
            z += stretch * v / t;
            nodes.push((x, z));
        }
        // Remove the round-off drift so the last node sits on the support.
        if let Some(last) = nodes.last_mut() {
            *last = (span.horizontal_length, span.height_difference);
        }
        Self { horizontal_tension: h, first_vertical: v0, unstretched_length: l0, nodes }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chain_converges_to_the_continuous_catenary() {
        // A polygon inscribed in a smooth curve is shorter by Σ κ² Δs³/24
        // (second-order), so the chain's L0 tends to Irvine's as 1/n².
        let span = CatenarySpan {
            horizontal_length: 350.0,
            height_difference: 40.0,
            weight_per_length: 15.97,
            axial_stiffness: 2.9e7,
        };
        let cont = Catenary::from_horizontal_tension(span, 25_000.0).unwrap();
        let e20 = (DiscreteChain::strung(span, 25_000.0, 20).unwrap().unstretched_length
            - cont.unstretched_length)
            .abs();
        let e40 = (DiscreteChain::strung(span, 25_000.0, 40).unwrap().unstretched_length
            - cont.unstretched_length)
            .abs();
        let ratio = e20 / e40;
        assert!((ratio - 4.0).abs() < 0.2, "ratio {ratio}");
    }
}
