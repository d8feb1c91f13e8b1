//! Devices as plug-in kinds: interphase spacers, detuning pendulums,
//! air-flow spoilers, lumped masses, … Each kind has a name, a serde
//! parameter struct and a builder that adds nodes and elements to the
//! section through a [`DeviceSite`]. A new kind is one file in this folder
//! plus one line in [`DeviceRegistry::with_builtin`] (see DEVELOPERS.md).

mod detuning_pendulum;
mod interphase_spacer;
mod linear_dashpot;
mod lumped_mass;
mod placement;
mod spoiler;

pub use placement::{Station, TOWER_CLEARANCE};

use glaze_aero::CoefficientTable;
use glaze_elements::Element;
use nalgebra::Vector3;
use std::path::Path;
use std::sync::Arc;

/// What a kind needs to read its parameters.
pub struct DeviceContext<'a> {
    /// Phase and earth-wire names, in input order.
    pub phases: &'a [String],
    /// Subconductors per phase.
    pub subconductors: &'a [usize],
    /// Horizontal length of each span, in m.
    pub span_lengths: &'a [f64],
    /// Folder of the input file (tables are relative to it).
    pub base_dir: &'a Path,
}

/// A parameter problem, at `field` of the device's table (empty: the table).
#[derive(Clone, Debug, PartialEq)]
pub struct DeviceError {
    /// Key inside the device table, e.g. `mass`.
    pub field: String,
    /// What is wrong.
    pub message: String,
}

impl DeviceError {
    /// An error at `field`.
    pub fn at(field: &str, message: impl Into<String>) -> Self {
        Self { field: field.to_string(), message: message.into() }
    }
}

/// A length of conductor whose section another table describes (spoilers).
#[derive(Clone, Debug)]
pub struct Covering {
    /// Phase index.
    pub phase: usize,
    /// Span index (0-based).
    pub span: usize,
    /// Start and end distance from the span's first tower, in m.
    pub extent: [f64; 2],
    /// Coefficient table of the covered section.
    pub table: Arc<CoefficientTable>,
    /// Mass added per length of each covered subconductor, in kg/m.
    pub added_mass_per_length: f64,
}

/// One validated device.
pub trait Device: std::fmt::Debug + Send + Sync {
    /// Conductor points the device grips: the mesh puts a node at each.
    fn stations(&self) -> Vec<Station>;
    /// A covered length with its own section, if the device has one.
    fn covering(&self) -> Option<Covering> {
        None
    }
    /// Whether another device that also shares may grip the same point
    /// (interphase spacers meeting on the middle phase); default no.
    fn shares_points(&self) -> bool {
        false
    }
    /// Adds the device's nodes and elements.
    fn build(&self, site: &mut dyn DeviceSite) -> Result<(), String>;
}

/// The section as a device builder sees it.
pub trait DeviceSite {
    /// The node a device clamps to at its `i`-th station: the conductor
    /// node of a single conductor, the centre of a spacer frame (made if
    /// none is there) of a bundle.
    fn attachment(&mut self, station: usize) -> usize;
    /// Reference position of `node`, in m.
    fn position(&self, node: usize) -> Vector3<f64>;
    /// Unit vector along the span at the `i`-th station, in plan.
    fn along(&self, station: usize) -> Vector3<f64>;
    /// Adds a node at `position`; returns its index.
    fn add_node(&mut self, position: Vector3<f64>) -> usize;
    /// Adds an element; its lumped mass is weighed in the load case.
    fn add_element(&mut self, element: Box<dyn Element>);
}

/// A kind of device.
pub trait DeviceKind: Send + Sync {
    /// The `type` string in input files.
    fn name(&self) -> &'static str;
    /// One line for `glaze check` and error messages.
    fn description(&self) -> &'static str;
    /// Reads and checks one device's parameters (`table` without `type`).
    fn parse(&self, table: toml::Table, ctx: &DeviceContext<'_>) -> Result<Box<dyn Device>, DeviceError>;
}

/// A device of the modelled layout with where it came from.
#[derive(Clone, Debug)]
pub struct PlacedDevice {
    /// Kind name.
    pub kind: &'static str,
    /// Key path of its table in the input, e.g. `layouts.main.devices[2]`.
    pub key: String,
    /// The device.
    pub device: Arc<dyn Device>,
}

/// The known device kinds.
pub struct DeviceRegistry {
    kinds: Vec<Box<dyn DeviceKind>>,
}

impl DeviceRegistry {
    /// The kinds glaze ships.
    pub fn with_builtin() -> Self {
        let mut r = Self { kinds: Vec::new() };
        r.register(Box::new(interphase_spacer::InterphaseSpacerKind));
        r.register(Box::new(detuning_pendulum::DetuningPendulumKind));
        r.register(Box::new(spoiler::SpoilerKind));
        r.register(Box::new(lumped_mass::LumpedMassKind));
        r.register(Box::new(linear_dashpot::LinearDashpotKind));
        r
    }

    /// Adds a kind (a later kind of the same name replaces the earlier one).
    pub fn register(&mut self, kind: Box<dyn DeviceKind>) {
        self.kinds.retain(|k| k.name() != kind.name());
        self.kinds.push(kind);
    }

    /// The kind called `name`.
    pub fn get(&self, name: &str) -> Option<&dyn DeviceKind> {
        self.kinds.iter().find(|k| k.name() == name).map(|k| k.as_ref())
    }

    /// Names of all kinds, in registration order.
    pub fn names(&self) -> Vec<&'static str> {
        self.kinds.iter().map(|k| k.name()).collect()
    }
}

/// Deserialises a parameter struct from a device table, naming the field
/// at fault where serde says which.
pub(crate) fn parameters<P: serde::de::DeserializeOwned>(table: toml::Table) -> Result<P, DeviceError> {
    toml::Value::Table(table).try_into::<P>().map_err(|e| {
        let message = e.message().to_string();
        let field = message
            .split('`')
            .nth(1)
            .filter(|f| f.chars().all(|c| c.is_ascii_alphanumeric() || c == '_'))
            .unwrap_or("")
            .to_string();
        DeviceError { field, message }
    })
}

/// Stiffness of "rigid" device arms and frames: EA in N, EI and GJ in N·m².
/// About a hundred times the conductor's axial and a thousand times its
/// bending stiffness per length, so they act as rigid without spoiling the
/// conditioning of the tangent (common practice for rigid links in FE).
pub const RIGID_ARM: RigidArm = RigidArm { ea: 1.0e8, ei: 1.0e5, gj: 1.0e5 };

/// Section stiffnesses of a next-to-rigid arm.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RigidArm {
    /// Axial stiffness, in N.
    pub ea: f64,
    /// Bending stiffness, in N·m².
    pub ei: f64,
    /// Torsional stiffness, in N·m².
    pub gj: f64,
}

/// A massless beam from `a` to `b` with the given stiffnesses.
pub(crate) fn arm(
    nodes: [usize; 2],
    x0: [Vector3<f64>; 2],
    stiffness: RigidArm,
    mass_per_length: f64,
    reference_y: Vector3<f64>,
) -> Result<Box<dyn Element>, String> {
    let section = glaze_elements::BeamSection {
        ea: stiffness.ea,
        ei_y: stiffness.ei,
        ei_z: stiffness.ei,
        gj: stiffness.gj,
        mass_per_length,
        polar_inertia_per_length: 0.0,
        thermal_expansion: 0.0,
        bowing: false,
        axial_torsion_coupling: 0.0,
    };
    let length = (x0[1] - x0[0]).norm();
    // A reference vector along the arm is replaced by another one across it.
    let axis = (x0[1] - x0[0]) / length;
    let y = if axis.cross(&reference_y).norm() > 1e-3 * reference_y.norm() {
        reference_y
    } else if axis.z.abs() < 0.9 {
        Vector3::z()
    } else {
        Vector3::x()
    };
    glaze_elements::CorotationalBeam::new(nodes, x0, length, y, section)
        .map(|b| Box::new(b) as Box<dyn Element>)
        .map_err(|e| e.to_string())
}
