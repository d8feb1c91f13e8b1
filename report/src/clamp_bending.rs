//! Bending at the suspension clamps, for the clamp bending-stress fatigue
//! of `glaze post` (`applies_to = "clamp_bending_stress"`).
//!
//! **What the model does at a clamp.** At a suspension tower the conductor
//! runs through one node (a single conductor: the yoke node at the
//! string's lower end; a bundle: one node per subconductor, held by a
//! `ClampJoint` to the yoke frame). The string is a link and puts no
//! moment on the yoke, so the clamp pivots freely: the conductor is a
//! continuous beam there, and the clamp body takes the mean rotation of
//! the two sides (moment balance of the equal tensioned-beam stiffnesses
//! `√(EI·T)` either side). Each side then bends relative to the clamp by
//! half the change of the kink between the two end-element chords
//! ([`glaze_post::bending_stress::free_clamp_rotation`]), in the vertical
//! and in the horizontal plane. The chords stand for the slope outside the
//! clamp's boundary layer (`√(EI/T)`, a few cm, far shorter than an
//! element). Stress: `σ = E_a (d_a/2) p Δθ`, `p = √(T/EI_min)` with the
//! static conductor tension T at the clamp (mean axial force of the two
//! end elements in `/static`).

use crate::results_file::ModelInfo;
use glaze_post::bending_stress::free_clamp_rotation;

/// A conductor passing a suspension clamp.
#[derive(Debug, Clone)]
pub struct Clamp {
    /// Tower index (chainage order).
    pub tower: usize,
    /// Phase index.
    pub phase: usize,
    /// Subconductor, 0-based.
    pub subconductor: usize,
    /// Conductor nodes before, at and after the clamp.
    pub nodes: [usize; 3],
    /// Plan unit vector of the line at the clamp (back to forward node).
    pub along: [f64; 2],
    /// Static conductor tension at the clamp, N.
    pub static_tension: f64,
    /// Clamp rotation at the static state (vertical, horizontal plane), rad.
    pub static_rotation: [f64; 2],
}

/// Bending rotation histories of every suspension clamp.
#[derive(Debug, Clone, Default)]
pub struct ClampSeries {
    /// The clamps: every node where the last node of a meshed span is the
    /// first of the next span of the same phase and subconductor.
    pub clamps: Vec<Clamp>,
    /// Per clamp, per record: Δθ from the static state (vertical, horizontal plane), rad.
    pub rotation: Vec<Vec<[f64; 2]>>,
}

impl ClampSeries {
    /// Finds the clamps of `model`; room for `records` records.
    pub fn new(model: &ModelInfo, records: usize) -> Self {
        let mut clamps = Vec::new();
        for a in &model.spans {
            let Some(phase) = a.phase else { continue };
            let Some(b) = model.spans.iter().find(|b| {
                b.phase == a.phase
                    && b.subconductor == a.subconductor
                    && b.route_span == a.route_span + 1
                    && b.nodes.first() == a.nodes.last()
            }) else {
                continue;
            };
            let nodes = [a.nodes[a.nodes.len() - 2], b.nodes[0], b.nodes[1]];
            let p = |k: usize| model.static_position[nodes[k]];
            let (dx, dy) = (p(2)[0] - p(0)[0], p(2)[1] - p(0)[1]);
            let l = dx.hypot(dy).max(f64::MIN_POSITIVE);
            let along = [dx / l, dy / l];
            let static_tension =
                0.5 * (model.static_axial_force[a.elements.1 - 1] + model.static_axial_force[b.elements.0]);
            clamps.push(Clamp {
                tower: b.route_span,
                phase,
                subconductor: a.subconductor,
                nodes,
                along,
                static_tension,
                static_rotation: free_clamp_rotation(p(0), p(1), p(2), along),
            });
        }
        let rotation = clamps.iter().map(|_| Vec::with_capacity(records)).collect();
        Self { clamps, rotation }
    }

    /// Appends `records` records of `/dynamic/displacement` (`disp`,
    /// record-major `[r][node][3]`, m); no allocation beyond the series.
    pub fn push_block(&mut self, model: &ModelInfo, disp: &[f64], records: usize) {
        let n = model.node_count();
        for r in 0..records {
            let d = &disp[r * n * 3..(r + 1) * n * 3];
            for (c, series) in self.clamps.iter().zip(self.rotation.iter_mut()) {
                let p = |k: usize| {
                    let (s, i) = (model.static_position[c.nodes[k]], 3 * c.nodes[k]);
                    [s[0] + d[i], s[1] + d[i + 1], s[2] + d[i + 2]]
                };
                let now = free_clamp_rotation(p(0), p(1), p(2), c.along);
                series.push([now[0] - c.static_rotation[0], now[1] - c.static_rotation[1]]);
            }
        }
    }
}
