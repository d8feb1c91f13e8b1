//! What a mode looks like: the split of its kinetic energy into vertical,
//! horizontal-transverse, longitudinal and torsional motion, the spans it
//! lives in, its number of loops, and a one-line label in our own words
//! ("vertical, 2 loops, span 1").
//!
//! **Energy split.** The modal kinetic energy is ½ ω² φᵀMφ; the shares are
//! ratios, so ω² cancels and only φᵀMφ is split. The lumped mass of glaze's
//! element kinds is block diagonal by node, so the energy is a sum of node
//! terms φₐᵀ Mₐₐ φₐ (off-node mass terms, zero for every shipped kind, are
//! not attributed). Each node term is split with complementary projectors in
//! the node's own frame:
//!
//! - translations along global Z → **vertical**; along `z × e_L`
//!   (horizontal, across the span in plan) → **transverse**; along `e_L`
//!   (the span direction in plan) → **longitudinal**;
//! - rotation about the conductor axis `t` (the local tangent at the
//!   static state) → **torsional**;
//! - the two bending rotations go with the translation they accompany:
//!   rotation about the horizontal axis across the conductor (`b₁`, the
//!   conductor tilting up and down) → **vertical**; rotation about
//!   `b₂ = t × b₁` (close to vertical, the conductor swinging sideways) →
//!   **transverse**.
//!
//! The projectors sum to the identity, so the four parts add up to φᵀMφ
//! exactly; there is no remainder bucket. A part can only come out negative
//! through mass cross terms between classes (a rotary inertia whose
//! principal axis is off the node's tangent); such parts, at round-off
//! level for the shipped kinds, are set to zero before the shares are
//! normalised to sum to 1.

use nalgebra::{Matrix6, Vector3, Vector6};

/// Names of the four energy classes, in the column order of
/// `/modes/energy_share`.
pub const ENERGY_CLASSES: [&str; 4] = ["vertical", "transverse", "longitudinal", "torsional"];

/// Index of each class in an energy-share row.
pub mod class {
    /// Translation along global Z and bending rotation in the vertical plane.
    pub const VERTICAL: usize = 0;
    /// Horizontal translation across the span and bending rotation in plan.
    pub const TRANSVERSE: usize = 1;
    /// Translation along the span.
    pub const LONGITUDINAL: usize = 2;
    /// Rotation about the conductor axis.
    pub const TORSIONAL: usize = 3;
}

/// Values of a component smaller than this fraction of the largest one in a
/// span are ignored when counting sign changes (loops).
pub const LOOP_THRESHOLD: f64 = 0.02;

/// The spans named in a label are the fewest, largest-share spans that
/// together hold at least this fraction of the modal kinetic energy.
pub const SPAN_ENERGY_COVER: f64 = 0.8;

/// A second energy class holding at least this share is named in the
/// label after the dominant one ("vertical + longitudinal").
pub const SECOND_CLASS_SHARE: f64 = 0.3;

/// The directions in which a node's motion is described.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct NodeFrame {
    /// Unit span direction in plan `e_L` (horizontal), dimensionless.
    pub longitudinal: Vector3<f64>,
    /// Unit conductor axis (tangent) `t` at the node, dimensionless.
    pub axis: Vector3<f64>,
}

impl NodeFrame {
    /// A frame whose span direction is the plan projection of `axis`
    /// (global X if `axis` is vertical).
    pub fn along(axis: Vector3<f64>) -> Self {
        let plan = Vector3::new(axis.x, axis.y, 0.0);
        let longitudinal = if plan.norm() > 1e-12 * axis.norm() { plan.normalize() } else { Vector3::x() };
        let axis = if axis.norm() > 0.0 { axis.normalize() } else { longitudinal };
        Self { longitudinal, axis }
    }

    /// Unit horizontal direction across the span, `z × e_L`.
    pub fn transverse(&self) -> Vector3<f64> {
        Vector3::z().cross(&self.longitudinal)
    }

    /// Unit vertical, global Z.
    pub fn vertical(&self) -> Vector3<f64> {
        Vector3::z()
    }

    /// The two bending axes `(b₁, b₂)` perpendicular to the conductor axis:
    /// `b₁` horizontal across the conductor, `b₂ = t × b₁`.
    pub fn bending_axes(&self) -> (Vector3<f64>, Vector3<f64>) {
        let t = self.axis;
        let e_t = self.transverse();
        let mut b1 = e_t - t * e_t.dot(&t);
        if b1.norm() < 1e-9 {
            // Conductor axis across the span: fall back on the vertical.
            b1 = Vector3::z() - t * t.z;
        }
        let b1 = b1.normalize();
        (b1, t.cross(&b1))
    }

    /// The four complementary projectors (6×6, on `[u, θ]`) of the energy
    /// classes, in [`ENERGY_CLASSES`] order; they sum to the identity.
    pub fn projectors(&self) -> [Matrix6<f64>; 4] {
        let (b1, b2) = self.bending_axes();
        let block = |trans: Option<Vector3<f64>>, rot: Option<Vector3<f64>>| {
            let mut p = Matrix6::zeros();
            if let Some(e) = trans {
                p.fixed_view_mut::<3, 3>(0, 0).copy_from(&(e * e.transpose()));
            }
            if let Some(e) = rot {
                p.fixed_view_mut::<3, 3>(3, 3).copy_from(&(e * e.transpose()));
            }
            p
        };
        [
            block(Some(self.vertical()), Some(b1)),
            block(Some(self.transverse()), Some(b2)),
            block(Some(self.longitudinal), None),
            block(None, Some(self.axis)),
        ]
    }

    /// The component of a node's motion that shows class `c` along a span:
    /// the translation along Z, across, along the span, or the rotation
    /// about the conductor axis.
    pub fn component(&self, c: usize, phi: &[f64; 6]) -> f64 {
        let u = Vector3::new(phi[0], phi[1], phi[2]);
        let th = Vector3::new(phi[3], phi[4], phi[5]);
        match c {
            class::VERTICAL => u.z,
            class::TRANSVERSE => u.dot(&self.transverse()),
            class::LONGITUDINAL => u.dot(&self.longitudinal),
            _ => th.dot(&self.axis),
        }
    }
}

/// The four class parts of φₐᵀ Mₐₐ φₐ of one node (kg, for a
/// mass-normalised φ dimensionless), unclamped.
pub fn node_energy(phi: &[f64; 6], mass: &Matrix6<f64>, frame: &NodeFrame) -> [f64; 4] {
    let v = Vector6::from_column_slice(phi);
    let mv = mass * v;
    let p = frame.projectors();
    std::array::from_fn(|c| (p[c] * v).dot(&mv))
}

/// Clamps negative parts to zero and scales to sum 1 (all zero if the
/// total is zero).
pub fn normalise(parts: [f64; 4]) -> [f64; 4] {
    let clamped = parts.map(|p| p.max(0.0));
    let total: f64 = clamped.iter().sum();
    if total > 0.0 {
        clamped.map(|p| p / total)
    } else {
        [0.0; 4]
    }
}

/// Energy of a mode shape per node and class (the node terms of φᵀMφ).
pub fn node_energies(shape: &[[f64; 6]], node_mass: &[Matrix6<f64>], frames: &[NodeFrame]) -> Vec<[f64; 4]> {
    shape.iter().zip(node_mass).zip(frames).map(|((phi, m), f)| node_energy(phi, m, f)).collect()
}

/// Shares of the modal kinetic energy in the four classes, summing to 1.
pub fn energy_shares(shape: &[[f64; 6]], node_mass: &[Matrix6<f64>], frames: &[NodeFrame]) -> [f64; 4] {
    let mut sum = [0.0; 4];
    for e in node_energies(shape, node_mass, frames) {
        for c in 0..4 {
            sum[c] += e[c];
        }
    }
    normalise(sum)
}

/// Number of loops (half-waves) in a sequence of values along a span: one
/// more than the number of sign changes, values below
/// [`LOOP_THRESHOLD`] × the largest magnitude ignored; 0 if all are zero.
pub fn loops(values: &[f64]) -> usize {
    let peak = values.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    if peak == 0.0 || !peak.is_finite() {
        return 0;
    }
    let mut last_sign = 0.0;
    let mut changes = 0;
    for &v in values {
        if v.abs() < LOOP_THRESHOLD * peak {
            continue;
        }
        let s = v.signum();
        if last_sign != 0.0 && s != last_sign {
            changes += 1;
        }
        last_sign = s;
    }
    changes + 1
}

/// The spans a mode is labelled with (0-based, ascending): the fewest
/// spans, by descending share, holding at least [`SPAN_ENERGY_COVER`] of
/// the energy. Empty if there are no spans or no energy.
pub fn dominant_spans(span_share: &[f64]) -> Vec<usize> {
    let total: f64 = span_share.iter().sum();
    if span_share.is_empty() || total <= 0.0 {
        return Vec::new();
    }
    let mut order: Vec<usize> = (0..span_share.len()).collect();
    order.sort_by(|&a, &b| span_share[b].total_cmp(&span_share[a]).then(a.cmp(&b)));
    let mut chosen = Vec::new();
    let mut held = 0.0;
    for i in order {
        chosen.push(i);
        held += span_share[i];
        if held >= SPAN_ENERGY_COVER * total {
            break;
        }
    }
    chosen.sort_unstable();
    chosen
}

/// "span 2", "spans 1–3" (contiguous) or "spans 1, 3" (1-based).
pub fn span_words(spans: &[usize]) -> String {
    match spans {
        [] => String::new(),
        [one] => format!("span {}", one + 1),
        many => {
            let contiguous = many.windows(2).all(|w| w[1] == w[0] + 1);
            if contiguous {
                format!("spans {}–{}", many[0] + 1, many[many.len() - 1] + 1)
            } else {
                let list: Vec<String> = many.iter().map(|s| (s + 1).to_string()).collect();
                format!("spans {}", list.join(", "))
            }
        }
    }
}

/// A one-line description of a mode: the dominant class (and a second one
/// holding at least [`SECOND_CLASS_SHARE`]), the loops of the dominant
/// component in each labelled span, and those spans.
///
/// `loops_per_span[p]` is the loop count of the dominant component in span
/// `p`; `span_share[p]` the span's share of the modal kinetic energy.
pub fn label(shares: &[f64; 4], span_share: &[f64], loops_per_span: &[usize]) -> String {
    let mut order = [0, 1, 2, 3];
    order.sort_by(|&a, &b| shares[b].total_cmp(&shares[a]).then(a.cmp(&b)));
    let mut kind = ENERGY_CLASSES[order[0]].to_string();
    if shares[order[1]] >= SECOND_CLASS_SHARE {
        kind = format!("{kind} + {}", ENERGY_CLASSES[order[1]]);
    }
    let spans = dominant_spans(span_share);
    if spans.is_empty() {
        return kind;
    }
    let counts: Vec<usize> = spans.iter().map(|&p| loops_per_span[p]).collect();
    let loops = if counts.iter().all(|&c| c == counts[0]) {
        let n = counts[0];
        format!("{n} loop{}", if n == 1 { "" } else { "s" })
    } else {
        let list: Vec<String> = counts.iter().map(|c| c.to_string()).collect();
        format!("{} loops", list.join("/"))
    };
    format!("{kind}, {loops}, {}", span_words(&spans))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lumped(m: f64, j: [f64; 3]) -> Matrix6<f64> {
        Matrix6::from_diagonal(&Vector6::new(m, m, m, j[0], j[1], j[2]))
    }

    #[test]
    fn projectors_sum_to_identity_for_an_inclined_axis() {
        let frame = NodeFrame {
            longitudinal: Vector3::new(0.6, 0.8, 0.0),
            axis: Vector3::new(0.6, 0.8, 0.3).normalize(),
        };
        let sum = frame.projectors().iter().fold(Matrix6::zeros(), |a, p| a + p);
        assert!((sum - Matrix6::identity()).norm() < 1e-14);
    }

    #[test]
    fn pure_motions_fall_in_their_class() {
        let frame = NodeFrame::along(Vector3::x());
        let m = lumped(2.0, [0.1, 0.3, 0.3]);
        let cases = [
            ([0.0, 0.0, 1.0, 0.0, 0.0, 0.0], class::VERTICAL),
            ([0.0, 1.0, 0.0, 0.0, 0.0, 0.0], class::TRANSVERSE),
            ([1.0, 0.0, 0.0, 0.0, 0.0, 0.0], class::LONGITUDINAL),
            ([0.0, 0.0, 0.0, 1.0, 0.0, 0.0], class::TORSIONAL),
            // Rotation about Y (across): the conductor tilts up and down.
            ([0.0, 0.0, 0.0, 0.0, 1.0, 0.0], class::VERTICAL),
            // Rotation about Z: the conductor swings sideways.
            ([0.0, 0.0, 0.0, 0.0, 0.0, 1.0], class::TRANSVERSE),
        ];
        for (phi, c) in cases {
            let s = energy_shares(&[phi], &[m], &[frame]);
            assert!((s[c] - 1.0).abs() < 1e-15, "{phi:?}: {s:?}");
        }
    }

    #[test]
    fn shares_follow_the_span_direction() {
        // A span running along +Y: motion along global X is transverse.
        let frame = NodeFrame::along(Vector3::y());
        let m = lumped(1.0, [0.0; 3]);
        let s = energy_shares(&[[3.0, 4.0, 0.0, 0.0, 0.0, 0.0]], &[m], &[frame]);
        assert!((s[class::TRANSVERSE] - 9.0 / 25.0).abs() < 1e-15);
        assert!((s[class::LONGITUDINAL] - 16.0 / 25.0).abs() < 1e-15);
    }

    #[test]
    fn loops_count_sign_changes_and_ignore_tiny_values() {
        let n = 41;
        let sine = |k: usize| -> Vec<f64> {
            (0..n).map(|i| (k as f64 * std::f64::consts::PI * i as f64 / (n - 1) as f64).sin()).collect()
        };
        for k in 1..=6 {
            assert_eq!(loops(&sine(k)), k);
        }
        // Round-off noise at the supports and at a node does not count.
        let mut v = sine(1);
        v[1] = -1e-4;
        v[20] = -1e-3;
        assert_eq!(loops(&v), 1);
        assert_eq!(loops(&[0.0; 5]), 0);
    }

    #[test]
    fn labels_name_class_loops_and_spans() {
        let vertical = [0.97, 0.01, 0.02, 0.0];
        assert_eq!(label(&vertical, &[0.0, 1.0, 0.0], &[0, 2, 0]), "vertical, 2 loops, span 2");
        assert_eq!(label(&vertical, &[0.4, 0.35, 0.25], &[1, 1, 1]), "vertical, 1 loop, spans 1–3");
        assert_eq!(label(&vertical, &[0.45, 0.1, 0.45], &[1, 3, 2]), "vertical, 1/2 loops, spans 1, 3");
        assert_eq!(label(&[0.6, 0.0, 0.4, 0.0], &[1.0], &[3]), "vertical + longitudinal, 3 loops, span 1");
        assert_eq!(label(&[0.0, 0.0, 0.0, 1.0], &[], &[]), "torsional");
    }
}
