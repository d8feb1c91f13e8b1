//! The finite element model of a section: nodes, elements, supports,
//! groups, and the loads of the stringing state and of the load case.

mod builder;
mod dof_map;
mod route;
mod section_builder;

pub use builder::{build, COARSE_ELEMENT_LENGTH};
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
    /// Names of the supports or towers at the two ends.
    pub end_names: [String; 2],
    /// Route span index (0-based); equals the position in a row.
    pub route_span: usize,
    /// Phase index of a section (`None` in a row).
    pub phase: Option<usize>,
    /// Subconductor index within the phase's bundle (0 in a row).
    pub subconductor: usize,
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

/// One insulator string of a section.
#[derive(Debug, Clone, PartialEq)]
pub struct StringMesh {
    /// Tower index.
    pub tower: usize,
    /// Phase index.
    pub phase: usize,
    /// Hinge nodes at the tower (two for a V-string).
    pub hinges: Vec<usize>,
    /// The yoke node at the conductor end.
    pub yoke: usize,
    /// Element indices of the string's links.
    pub elements: Vec<usize>,
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
    /// Meshed spans (in a section: one per phase, subconductor and span).
    pub spans: Vec<SpanMesh>,
    /// Insulator strings (sections only).
    pub strings: Vec<StringMesh>,
    /// Restrained nodes, in the order of `/static/support_force`.
    pub support_nodes: Vec<usize>,
    /// What each restrained node is, in the same order: the support's name
    /// in a row; tower and phase (with `leg k` for V-string legs, `spring x`
    /// for the ground end of a tower-flexibility spring) in a section.
    pub support_labels: Vec<String>,
    /// Rated (breaking) strength of each conductor type, by the index
    /// [`SpanMesh::conductor`] uses, in N.
    pub conductor_rated_strength: Vec<f64>,
    /// Towers of a section in chainage order: name and chainage, m (empty for a row).
    pub towers: Vec<(String, f64)>,
    /// Plan point `(x, y)` of each tower on the route, in m (empty for a
    /// row); the route is the polyline through them.
    pub route: Vec<[f64; 2]>,
    /// Ground of a section's route: (chainage m, elevation m) points (empty if none given).
    pub ground_profile: Vec<(f64, f64)>,
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
    /// Names of a section's phases and earth wires, by index (empty for a row).
    pub phase_names: Vec<String>,
}

impl Model {
    /// Chainage along the route of the plan position of `p`, m (global X
    /// in a row).
    pub fn chainage_of(&self, p: Vector3<f64>) -> f64 {
        match glaze_post::clearance::Route::through(&self.route) {
            Ok(route) => route.chainage_of([p.x, p.y, p.z]),
            Err(_) => p.x,
        }
    }

    /// Unit plan vectors `(along, across)` of the route at tower `t`: the
    /// bisector of the spans either side (forward) and `z × along` (to the
    /// left); at an end tower its span's direction. `(X, Y)` without a route.
    pub fn route_axes(&self, t: usize) -> (Vector3<f64>, Vector3<f64>) {
        let leg = |a: usize| {
            let (p, q) = (self.route[a], self.route[a + 1]);
            Vector3::new(q[0] - p[0], q[1] - p[1], 0.0).normalize()
        };
        let n = self.route.len();
        let along = match t {
            _ if n < 2 || t >= n => Vector3::x(),
            0 => leg(0),
            t if t == n - 1 => leg(n - 2),
            t => (leg(t - 1) + leg(t)).normalize(),
        };
        (along, Vector3::z().cross(&along))
    }

    /// Number of nodes.
    pub fn node_count(&self) -> usize {
        self.nodes.len()
    }
}

/// Unit tangents of a conductor meshed as the polygon `points`: at an
/// interior node the bisector of the two chords, at the ends the end chord
/// unless `ends` gives them.
pub(crate) fn polygon_tangents(
    points: &[Vector3<f64>],
    ends: [Option<Vector3<f64>>; 2],
) -> Vec<Vector3<f64>> {
    let n = points.len();
    let chord = |j: usize| (points[j + 1] - points[j]).normalize();
    (0..n)
        .map(|j| match j {
            0 => ends[0].unwrap_or_else(|| chord(0)),
            j if j == n - 1 => ends[1].unwrap_or_else(|| chord(n - 2)),
            j => (chord(j - 1) + chord(j)).normalize(),
        })
        .collect()
}

/// The nodal loads that hold a conductor element curved to its nodal
/// tangents in its rest shape at the stringing temperature: its rest
/// internal force less that of the straight element on the same chord.
/// They are the consistent end loads (end moments `∓ q h²/12`, and shears
/// where the end slopes differ) of the weight q it carries along its arc,
/// which lumping the weight at the nodes leaves out; the bowing of the
/// rest arc under tension balances them. Constant in direction, like the
/// weight. Returns `(node, dof, value)`.
pub(crate) fn curvature_loads(
    curved: &dyn glaze_elements::Element,
    straight: &dyn glaze_elements::Element,
    nodes: &[Vector3<f64>],
) -> Vec<(usize, usize, f64)> {
    let ids = curved.nodes();
    let states: Vec<glaze_elements::NodeState> =
        ids.iter().map(|&a| glaze_elements::NodeState::at_rest(nodes[a])).collect();
    let ctx = glaze_elements::ElementContext::default();
    let (mut fc, mut fs) = (vec![0.0; ids.len() * DOF_PER_NODE], vec![0.0; ids.len() * DOF_PER_NODE]);
    curved.internal_force(&ctx, &states, &mut fc);
    straight.internal_force(&ctx, &states, &mut fs);
    let mut out = Vec::new();
    for (local, &a) in ids.iter().enumerate() {
        for d in 0..DOF_PER_NODE {
            let v = fc[local * DOF_PER_NODE + d] - fs[local * DOF_PER_NODE + d];
            if v != 0.0 {
                out.push((a, d, v));
            }
        }
    }
    out
}
