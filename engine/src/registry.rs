//! Registry of conductor element kinds, resolved from the `type` string of
//! `[mesh]`. A new kind plugs in by implementing [`ConductorElementKind`]
//! and adding one line to [`ElementRegistry::with_builtin`].

use crate::spec::Conductor;
use glaze_elements::{BeamSection, Cable, CorotationalBeam, Element, Link, TrussSection};
use nalgebra::Vector3;

/// Everything a kind needs to build one conductor element.
#[derive(Clone, Copy, Debug)]
pub struct SegmentSpec<'a> {
    /// Global node indices.
    pub nodes: [usize; 2],
    /// Reference positions, in m.
    pub x0: [Vector3<f64>; 2],
    /// Unstretched length at the stringing temperature, in m.
    pub unstretched_length: f64,
    /// A vector across the element fixing its local y axis (horizontal, across the span).
    pub reference_y: Vector3<f64>,
    /// Conductor data.
    pub conductor: &'a Conductor,
    /// Mass per unstretched length including ice, in kg/m.
    pub mass_per_length: f64,
    /// Mass polar moment of inertia per length including ice, in kg·m.
    pub polar_inertia_per_length: f64,
    /// The conductor's tangent at each node (unit): the bisector of the
    /// two chords meeting there, or the chord at an end. Element kinds with
    /// rotations curve their ends to it (see `CorotationalBeam::with_end_tangents`).
    pub end_tangents: [Vector3<f64>; 2],
}

/// A kind of element that can model a conductor segment.
pub trait ConductorElementKind: Send + Sync {
    /// The `type` string in input files.
    fn name(&self) -> &'static str;
    /// One line for `glaze check` and error messages.
    fn description(&self) -> &'static str;
    /// Builds the element.
    fn build(&self, segment: &SegmentSpec<'_>) -> Result<Box<dyn Element>, String>;
}

struct BeamKind;
impl ConductorElementKind for BeamKind {
    fn name(&self) -> &'static str {
        "beam"
    }
    fn description(&self) -> &'static str {
        "3D corotational Euler–Bernoulli beam (axial, bending, torsion)"
    }
    fn build(&self, s: &SegmentSpec<'_>) -> Result<Box<dyn Element>, String> {
        let c = s.conductor;
        let section = BeamSection {
            ea: c.axial_stiffness,
            ei_y: c.bending_stiffness,
            ei_z: c.bending_stiffness,
            gj: c.torsional_stiffness,
            mass_per_length: s.mass_per_length,
            polar_inertia_per_length: s.polar_inertia_per_length,
            thermal_expansion: c.thermal_expansion,
            bowing: true,
            axial_torsion_coupling: 0.0,
        };
        CorotationalBeam::new(s.nodes, s.x0, s.unstretched_length, s.reference_y, section)
            .and_then(|b| b.with_end_tangents(s.end_tangents))
            .map(|b| Box::new(b) as Box<dyn Element>)
            .map_err(|e| e.to_string())
    }
}

fn truss_section(s: &SegmentSpec<'_>) -> TrussSection {
    TrussSection {
        ea: s.conductor.axial_stiffness,
        mass_per_length: s.mass_per_length,
        thermal_expansion: s.conductor.thermal_expansion,
    }
}

struct CableKind;
impl ConductorElementKind for CableKind {
    fn name(&self) -> &'static str {
        "cable"
    }
    fn description(&self) -> &'static str {
        "2-node large-displacement truss, tension only (slack allowed)"
    }
    fn build(&self, s: &SegmentSpec<'_>) -> Result<Box<dyn Element>, String> {
        Cable::new(s.nodes, s.unstretched_length, truss_section(s))
            .map(|e| Box::new(e) as Box<dyn Element>)
            .map_err(|e| e.to_string())
    }
}

struct LinkKind;
impl ConductorElementKind for LinkKind {
    fn name(&self) -> &'static str {
        "link"
    }
    fn description(&self) -> &'static str {
        "2-node large-displacement truss carrying tension and compression"
    }
    fn build(&self, s: &SegmentSpec<'_>) -> Result<Box<dyn Element>, String> {
        Link::new(s.nodes, s.unstretched_length, truss_section(s))
            .map(|e| Box::new(e) as Box<dyn Element>)
            .map_err(|e| e.to_string())
    }
}

/// The known element kinds, and the device kinds of sections.
pub struct ElementRegistry {
    kinds: Vec<Box<dyn ConductorElementKind>>,
    devices: crate::devices::DeviceRegistry,
}

impl ElementRegistry {
    /// The kinds glaze ships.
    pub fn with_builtin() -> Self {
        let mut r = Self { kinds: Vec::new(), devices: crate::devices::DeviceRegistry::with_builtin() };
        r.register(Box::new(BeamKind));
        r.register(Box::new(CableKind));
        r.register(Box::new(LinkKind));
        r
    }

    /// Adds a kind (a later kind of the same name replaces the earlier one).
    pub fn register(&mut self, kind: Box<dyn ConductorElementKind>) {
        self.kinds.retain(|k| k.name() != kind.name());
        self.kinds.push(kind);
    }

    /// The kind called `name`.
    pub fn get(&self, name: &str) -> Option<&dyn ConductorElementKind> {
        self.kinds.iter().find(|k| k.name() == name).map(|k| k.as_ref())
    }

    /// Names of all kinds, in registration order.
    pub fn names(&self) -> Vec<&'static str> {
        self.kinds.iter().map(|k| k.name()).collect()
    }

    /// The device kinds.
    pub fn devices(&self) -> &crate::devices::DeviceRegistry {
        &self.devices
    }

    /// The device kinds, to register more.
    pub fn devices_mut(&mut self) -> &mut crate::devices::DeviceRegistry {
        &mut self.devices
    }
}
