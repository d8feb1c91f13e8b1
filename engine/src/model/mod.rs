//! The finite element model of a section: nodes, elements, supports,
//! groups, and the loads of the stringing state and of the load case.

mod builder;
mod dof_map;

pub use builder::build;
pub use dof_map::{DofMap, DOF_PER_NODE};

use crate::aero_loads::ElementAero;
use crate::formfinding::DiscreteChain;
use crate::spec::WindSpec;
use glaze_elements::Element;
use nalgebra::Vector3;
use std::collections::BTreeMap;

/// One meshed span.
#[derive(Debug, Clone)]
pub struct SpanMesh {
    /// Node indices from the first support to the second.
    pub nodes: Vec<usize>,
    /// Element indices, in order along the span.
    pub elements: std::ops::Range<usize>,
    /// Support indices (into the spec) at the two ends.
    pub supports: [usize; 2],
    /// Conductor index.
    pub conductor: usize,
    /// Unit vector along the span in plan.
    pub direction: Vector3<f64>,
    /// Horizontal length, in m.
    pub horizontal_length: f64,
    /// Height of the far support above the near one, in m.
    pub height_difference: f64,
    /// The strung chain (stringing state).
    pub stringing: DiscreteChain,
}

/// The model of a section for one load case.
#[derive(Debug)]
pub struct Model {
    /// Reference (stringing state) positions, in m.
    pub nodes: Vec<Vector3<f64>>,
    /// Elements.
    pub elements: Vec<Box<dyn Element>>,
    /// Restrained DOF per node.
    pub restrained: Vec<[bool; DOF_PER_NODE]>,
    /// Equation numbering.
    pub dofs: DofMap,
    /// Meshed spans.
    pub spans: Vec<SpanMesh>,
    /// Restrained nodes, in the order of `/static/support_force`.
    pub support_nodes: Vec<usize>,
    /// Named node-index groups written to `/model/groups`.
    pub groups: BTreeMap<String, Vec<usize>>,
    /// Nodal loads of the stringing state (bare weight), length `6 × nodes`, in N and N·m.
    pub stringing_load: Vec<f64>,
    /// Nodal loads of the load case (weight with ice), length `6 × nodes`.
    pub case_load: Vec<f64>,
    /// Temperature of the load case less the stringing temperature, in K.
    pub temperature_change: f64,
    /// Aerodynamic data per element (`None` for elements the wind does not load).
    pub aero: Vec<Option<ElementAero>>,
    /// Mean wind of the load case.
    pub wind: Option<WindSpec>,
}

impl Model {
    /// Number of nodes.
    pub fn node_count(&self) -> usize {
        self.nodes.len()
    }
}
