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
    /// Vertical force in the last element, along increasing `s`, in N.
    pub last_vertical: f64,
    /// Total unstretched length `L0`, in m.
    pub unstretched_length: f64,
    /// Unstretched length of each element, in m.
    pub element_lengths: Vec<f64>,
    /// `(x, z)` of the `n + 1` nodes relative to the first support, in m.
    pub nodes: Vec<(f64, f64)>,
}

/// How a chain is divided: element shares of the unstretched length and
/// concentrated weights at its nodes (spacers, hardware).
#[derive(Clone, Debug, PartialEq)]
pub struct ChainLayout {
    /// Share of the unstretched length of each element; positive, summing to 1.
    pub fractions: Vec<f64>,
    /// Downward concentrated load at each of the `n + 1` nodes, in N (the
    /// end values act on the supports and do not enter the chain).
    pub point_loads: Vec<f64>,
}

impl ChainLayout {
    /// `elements` equal elements, no concentrated loads.
    pub fn uniform(elements: usize) -> Self {
        let n = elements.max(1);
        Self { fractions: vec![1.0 / n as f64; n], point_loads: vec![0.0; n + 1] }
    }
}

impl DiscreteChain {
    /// Strings a chain of `elements` equal elements to horizontal tension
    /// `h`, starting from the continuous elastic catenary.
    pub fn strung(span: CatenarySpan, h: f64, elements: usize) -> Result<Self, CatenaryError> {
        Self::strung_with(span, h, &ChainLayout::uniform(elements))
    }

    /// Strings a chain divided as `layout` to horizontal tension `h`. With
    /// `ℓ_k = f_k L0` and `V_k = V_{k−1} + w (ℓ_{k−1} + ℓ_k)/2 + P_k` the
    /// closure equations of the module docs are solved for `(V_0, L0)` by
    /// Newton's method.
    pub fn strung_with(span: CatenarySpan, h: f64, layout: &ChainLayout) -> Result<Self, CatenaryError> {
        let continuous = Catenary::from_horizontal_tension(span, h)?;
        let f = &layout.fractions;
        let n = f.len();
        let (w, ea) = (span.weight_per_length, span.axial_stiffness);
        // c_k = ∂V_k/∂L0 and p_k = Σ_{j≤k} P_j (interior nodes only).
        let mut c = vec![0.0; n];
        let mut p = vec![0.0; n];
        for k in 1..n {
            c[k] = c[k - 1] + 0.5 * w * (f[k - 1] + f[k]);
            p[k] = p[k - 1] + layout.point_loads[k];
        }
        let mut l0 = continuous.unstretched_length;
        let mut v0 = continuous.vertical_at_start + 0.5 * w * l0 * f[0] - 0.5 * p[n - 1];
        let scale = span.horizontal_length.hypot(span.height_difference);
        for _ in 0..100 {
            let (mut rx, mut rz, mut a, mut b, mut cc, mut d) = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
            for k in 0..n {
                let ell = f[k] * l0;
                let v = v0 + c[k] * l0 + p[k];
                let t = h.hypot(v);
                let t3 = t * t * t;
                let gx = h / t + h / ea;
                let gz = v / t + v / ea;
                rx += ell * gx;
                rz += ell * gz;
                let ddx = -h * v / t3;
                let ddz = h * h / t3 + 1.0 / ea;
                a += ell * ddx;
                b += f[k] * gx + ell * ddx * c[k];
                cc += ell * ddz;
                d += f[k] * gz + ell * ddz * c[k];
            }
            rx -= span.horizontal_length;
            rz -= span.height_difference;
            if rx.abs() < 1e-13 * scale && rz.abs() < 1e-13 * scale {
                return Ok(Self::build(span, h, v0, l0, layout, &c, &p));
            }
            let det = a * d - b * cc;
            if det.abs() < f64::MIN_POSITIVE {
                break;
            }
            v0 += (-rx * d + rz * b) / det;
            l0 += (-a * rz + cc * rx) / det;
        }
        Err(CatenaryError::NoConvergence("discrete chain stringing"))
    }

    fn build(
        span: CatenarySpan,
        h: f64,
        v0: f64,
        l0: f64,
        layout: &ChainLayout,
        c: &[f64],
        p: &[f64],
    ) -> Self {
        let ea = span.axial_stiffness;
        let n = layout.fractions.len();
        let mut nodes = Vec::with_capacity(n + 1);
        let (mut x, mut z) = (0.0, 0.0);
        nodes.push((x, z));
        let mut v = v0;
        for k in 0..n {
            let ell = layout.fractions[k] * l0;
            v = v0 + c[k] * l0 + p[k];
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
        Self {
            horizontal_tension: h,
            first_vertical: v0,
            last_vertical: v,
            unstretched_length: l0,
            element_lengths: layout.fractions.iter().map(|f| f * l0).collect(),
            nodes,
        }
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

    #[test]
    fn point_load_gives_the_statics_of_a_funicular_polygon() {
        // A weightless-like chain (tiny w) with one point load P at mid-span
        // of a level span: the two halves are straight and the vertical end
        // forces are ±P/2 (statics of a funicular polygon).
        let span = CatenarySpan {
            horizontal_length: 100.0,
            height_difference: 0.0,
            weight_per_length: 1e-9,
            axial_stiffness: 1e12,
        };
        let layout = ChainLayout { fractions: vec![0.5, 0.5], point_loads: vec![0.0, 1000.0, 0.0] };
        let chain = DiscreteChain::strung_with(span, 10_000.0, &layout).unwrap();
        assert!((chain.first_vertical + 500.0).abs() < 1e-6, "{}", chain.first_vertical);
        assert!((chain.last_vertical - 500.0).abs() < 1e-6, "{}", chain.last_vertical);
        // Sag P l / 4H = 2.5 m (statics).
        assert!((chain.nodes[1].1 + 2.5).abs() < 1e-6, "{:?}", chain.nodes[1]);
    }

    #[test]
    fn uneven_layout_matches_uniform_when_equal() {
        let span = CatenarySpan {
            horizontal_length: 300.0,
            height_difference: 12.0,
            weight_per_length: 15.97,
            axial_stiffness: 2.9e7,
        };
        let a = DiscreteChain::strung(span, 25_000.0, 30).unwrap();
        let b = DiscreteChain::strung_with(span, 25_000.0, &ChainLayout::uniform(30)).unwrap();
        assert_eq!(a, b);
        assert!((a.last_vertical - (a.first_vertical + 29.0 * 15.97 * a.element_lengths[0])).abs() < 1e-8);
    }
}
