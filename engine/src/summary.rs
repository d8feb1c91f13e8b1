//! The model summary printed by `glaze check`.

use crate::model::Model;
use crate::spec::{SectionSpec, StringingTarget};

/// One span line of the summary.
#[derive(Clone, Debug, PartialEq)]
pub struct SpanLine {
    /// Support names at the two ends.
    pub supports: [String; 2],
    /// Phase (and subconductor, as `A/2`) of a section; empty in a row.
    pub wire: String,
    /// Route span index, 0-based.
    pub route_span: usize,
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
        let spans = model
            .spans
            .iter()
            .map(|m| {
                let c = &spec.conductors[m.conductor];
                let l0 = m.stringing.unstretched_length;
                let target = match (&spec.section, m.phase) {
                    (Some(s), Some(p)) => StringingTarget::HorizontalTension(s.phases[p].horizontal_tension),
                    _ => spec.spans[m.route_span].target,
                };
                let label = match (&spec.section, m.phase) {
                    (Some(s), Some(p)) => {
                        let phase = &s.phases[p];
                        if phase.bundle.count > 1 {
                            format!("{}/{}", phase.name, m.subconductor + 1)
                        } else {
                            phase.name.clone()
                        }
                    }
                    _ => String::new(),
                };
                SpanLine {
                    supports: m.end_names.clone(),
                    wire: label,
                    route_span: m.route_span,
                    conductor: c.name.clone(),
                    horizontal_length: m.horizontal_length,
                    height_difference: m.height_difference,
                    target,
                    conductor_mass: c.mass_per_length * l0,
                    ice_mass: spec
                        .load_case
                        .ice_on(m.route_span)
                        .map_or(0.0, |i| i.mass_per_length(c.diameter))
                        * l0,
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
