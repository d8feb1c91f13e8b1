//! The model summary printed by `glaze check`.

use crate::model::Model;
use crate::spec::{SectionSpec, StringingTarget};

/// One span line of the summary.
#[derive(Clone, Debug, PartialEq)]
pub struct SpanLine {
    /// Support names at the two ends.
    pub supports: [String; 2],
    /// Conductor type name.
    pub conductor: String,
    /// Horizontal length, in m.
    pub horizontal_length: f64,
    /// Height of the far support over the near one, in m.
    pub height_difference: f64,
    /// Stringing target as written.
    pub target: StringingTarget,
    /// Conductor mass of the span (unstretched length × mass per length), in kg.
    pub conductor_mass: f64,
    /// Ice mass of the span in the load case, in kg.
    pub ice_mass: f64,
}

/// Counts and per-span masses of a model.
#[derive(Clone, Debug, PartialEq)]
pub struct ModelSummary {
    /// Nodes.
    pub nodes: usize,
    /// Elements.
    pub elements: usize,
    /// Free DOF (equations).
    pub dofs: usize,
    /// Restrained nodes.
    pub supports: usize,
    /// Per span.
    pub spans: Vec<SpanLine>,
}

impl ModelSummary {
    /// Summarises `model`, built from `spec`.
    pub fn of(spec: &SectionSpec, model: &Model) -> Self {
        let spans = spec
            .spans
            .iter()
            .zip(&model.spans)
            .map(|(s, m)| {
                let c = &spec.conductors[s.conductor];
                let l0 = m.stringing.unstretched_length;
                SpanLine {
                    supports: [spec.supports[s.from].name.clone(), spec.supports[s.to].name.clone()],
                    conductor: c.name.clone(),
                    horizontal_length: m.horizontal_length,
                    height_difference: m.height_difference,
                    target: s.target,
                    conductor_mass: c.mass_per_length * l0,
                    ice_mass: spec.load_case.ice.map_or(0.0, |i| i.mass_per_length(c.diameter)) * l0,
                }
            })
            .collect();
        Self {
            nodes: model.node_count(),
            elements: model.elements.len(),
            dofs: model.dofs.len(),
            supports: model.support_nodes.len(),
            spans,
        }
    }
}
