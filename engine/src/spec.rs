//! The validated description of a section: built only by
//! [`crate::input::load`], so every value in it has passed its checks.

use glaze_aero::{CoefficientTable, MeanWind, RadialIce};
use nalgebra::Vector3;
use std::path::PathBuf;
use std::sync::Arc;

/// A conductor type, SI units.
#[derive(Clone, Debug)]
pub struct Conductor {
    /// Name in the input.
    pub name: String,
    /// Diameter, in m.
    pub diameter: f64,
    /// Mass per length, in kg/m.
    pub mass_per_length: f64,
    /// EA, in N.
    pub axial_stiffness: f64,
    /// EI, in N·m².
    pub bending_stiffness: f64,
    /// GJ, in N·m².
    pub torsional_stiffness: f64,
    /// Thermal expansion, in 1/K.
    pub thermal_expansion: f64,
    /// Rated tensile strength, in N.
    pub rated_strength: f64,
    /// Mass polar moment of inertia per length, in kg·m.
    pub polar_inertia_per_length: f64,
    /// Aerodynamic coefficients of the bare section.
    pub aero_table: Arc<CoefficientTable>,
}

/// A fixed attachment point.
#[derive(Clone, Debug, PartialEq)]
pub struct Support {
    /// Name in the input.
    pub name: String,
    /// Position, in m.
    pub position: Vector3<f64>,
}

/// How a span is strung (at the stringing temperature, bare, no wind).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum StringingTarget {
    /// Horizontal tension, in N.
    HorizontalTension(f64),
    /// Largest vertical distance between chord and conductor, in m.
    Sag(f64),
    /// Catenary parameter H/w, in m.
    CatenaryParameter(f64),
}

/// One span.
#[derive(Clone, Debug, PartialEq)]
pub struct SpanSpec {
    /// Index into [`SectionSpec::supports`] of the first support.
    pub from: usize,
    /// Index of the second support.
    pub to: usize,
    /// Index into [`SectionSpec::conductors`].
    pub conductor: usize,
    /// Stringing target.
    pub target: StringingTarget,
}

/// Static load case.
#[derive(Clone, Debug)]
pub struct LoadCase {
    /// Name shown in reports.
    pub name: String,
    /// Conductor temperature, in °C.
    pub temperature: f64,
    /// Ice on the iced spans.
    pub ice: Option<RadialIce>,
    /// Spans (0-based, route order) that carry `ice`; `None`: all.
    pub iced_spans: Option<Vec<usize>>,
    /// Gravitational acceleration, in m/s².
    pub gravity: f64,
    /// Mean wind.
    pub wind: Option<WindSpec>,
    /// Aerodynamic coefficients of the iced section (with `ice`).
    pub iced_aero_table: Option<Arc<CoefficientTable>>,
    /// Orientation of the iced section's reference axis, in rad (see the schema).
    pub ice_orientation: f64,
}

/// Mean wind of a load case and how the sections see it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WindSpec {
    /// The wind field.
    pub wind: MeanWind,
    /// Whether the section twist enters the angle of attack.
    pub include_twist: bool,
    /// Characteristic radius of the twist-rate term, in m; `None`: half the
    /// reference diameter of sections whose table has a moment column, 0
    /// otherwise.
    pub characteristic_radius: Option<f64>,
}

/// Galloping-onset screening settings.
#[derive(Clone, Debug, PartialEq)]
pub struct ScreeningSpec {
    /// Mean wind speeds at the reference height, ascending, in m/s.
    pub wind_speeds: Vec<f64>,
    /// Structural damping ratio.
    pub structural_damping: f64,
    /// Number of modes.
    pub modes: usize,
}

/// Nonlinear solver settings.
#[derive(Clone, Debug, PartialEq)]
pub struct SolverSpec {
    /// Newton iterations per load step.
    pub max_iterations: usize,
    /// Relative residual tolerance.
    pub residual_tolerance: f64,
    /// First load step (fraction of the load case).
    pub initial_load_step: f64,
    /// Smallest load step.
    pub min_load_step: f64,
}

/// A validated section description.
#[derive(Clone, Debug)]
pub struct SectionSpec {
    /// Input file.
    pub file: PathBuf,
    /// Full input text (kept for the results file and error lines).
    pub source: String,
    /// Title.
    pub title: String,
    /// Conductor types.
    pub conductors: Vec<Conductor>,
    /// Supports.
    pub supports: Vec<Support>,
    /// Spans.
    pub spans: Vec<SpanSpec>,
    /// A tension section (towers, strings, phases, devices); `None` for a
    /// row of spans between fixed `supports`.
    pub section: Option<TensionSection>,
    /// Element kind name (registered).
    pub element_kind: String,
    /// How finely each span is meshed.
    pub mesh: MeshDensity,
    /// Stringing temperature, in °C.
    pub stringing_temperature: f64,
    /// The load case.
    pub load_case: LoadCase,
    /// Solver settings.
    pub solver: SolverSpec,
    /// Screening settings, when given.
    pub screening: Option<ScreeningSpec>,
    /// Time simulation settings, when given.
    pub dynamics: Option<DynamicsSpec>,
    /// Post-processing settings (defaults when `[post]` is absent).
    pub post: crate::input::post::PostSpec,
    /// Legal but implausible values, located (every command prints them).
    pub warnings: Vec<crate::error::InputWarning>,
}

/// Integration scheme.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SchemeSpec {
    /// HHT-α with α in [−1/3, 0].
    Hht(f64),
    /// Generalised-α with ρ∞ in [0, 1].
    GeneralizedAlpha(f64),
}

/// Rayleigh damping C = a0 M + a1 K.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum DampingSpec {
    /// Fit a0, a1 to two modes (1-based) and ratios (Clough & Penzien).
    Fit {
        /// Mode numbers.
        modes: [usize; 2],
        /// Damping ratios.
        ratios: [f64; 2],
    },
    /// Given coefficients a0 (1/s) and a1 (s).
    Coefficients(f64, f64),
}

/// Time simulation settings.
#[derive(Clone, Debug, PartialEq)]
pub struct DynamicsSpec {
    /// Simulated time, in s.
    pub duration: f64,
    /// Time step, in s.
    pub time_step: f64,
    /// Output interval, in s.
    pub output_interval: f64,
    /// Scheme.
    pub scheme: SchemeSpec,
    /// Modified Newton.
    pub modified_newton: bool,
    /// Linear solver of the iteration matrix.
    pub linear_solver: glaze_solvers::SolverBackend,
    /// Wind ramp time, in s.
    pub wind_ramp: f64,
    /// Damping.
    pub damping: DampingSpec,
    /// Initial perturbation along a mode.
    pub perturbation: Option<Perturbation>,
    /// When `glaze run` writes its checkpoint.
    pub checkpoint: CheckpointSpec,
}

/// `[dynamics.checkpoint]`: a checkpoint is written at the first output
/// record after either interval has passed since the last one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CheckpointSpec {
    /// Whether checkpoints are written at all.
    pub enabled: bool,
    /// Simulated time between checkpoints, in s (`None`: by wall time only).
    pub every_simulated: Option<f64>,
    /// Wall time between checkpoints, in minutes (default 5).
    pub every_wall_minutes: Option<f64>,
}

impl CheckpointSpec {
    /// Default wall time between checkpoints, in minutes (common practice).
    pub const DEFAULT_WALL_MINUTES: f64 = 5.0;
}

impl Default for CheckpointSpec {
    fn default() -> Self {
        Self { enabled: true, every_simulated: None, every_wall_minutes: Some(Self::DEFAULT_WALL_MINUTES) }
    }
}

/// Largest rotation a perturbation may put in, rad (0.5 rad ≈ 29°): beyond
/// it a linear mode shape is no longer a sensible start.
pub const MAX_PERTURBATION_TWIST: f64 = 0.5;

/// `[dynamics.perturbation]`: a start along one mode of the static state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Perturbation {
    /// Mode number, 1-based by frequency.
    pub mode: usize,
    /// How the mode shape is scaled.
    pub size: PerturbationSize,
    /// Whether the mode shape is a start displacement or a start velocity.
    pub start: PerturbationStart,
}

/// How a perturbation starts the motion.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PerturbationStart {
    /// The state is displaced along the mode shape (scaled to the size) and
    /// released from rest. Nonlinear terms (stretch, stiff frames) make the
    /// displaced state slightly out of equilibrium where a linear shape is
    /// scaled to finite size.
    Displacement,
    /// The static state is started with velocity ω·φ (φ scaled to the
    /// size), so it swings to about the size in a quarter period: the
    /// start is an exact equilibrium and the energy balance holds from t = 0.
    Velocity,
}

/// Scale of a perturbation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PerturbationSize {
    /// Largest nodal translation, m.
    Translation(f64),
    /// Largest nodal rotation, rad (for torsional modes).
    Twist(f64),
}

impl LoadCase {
    /// The ice on span `span` (0-based), if any.
    pub fn ice_on(&self, span: usize) -> Option<RadialIce> {
        match &self.iced_spans {
            Some(list) if !list.contains(&span) => None,
            _ => self.ice,
        }
    }
}

/// How finely spans are meshed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum MeshDensity {
    /// The same number of elements in every span.
    ElementsPerSpan(usize),
    /// Elements no longer than this, in m.
    ElementLength(f64),
}

impl MeshDensity {
    /// Elements for a span of horizontal length `length` m (at least 2).
    pub fn elements_for(&self, length: f64) -> usize {
        match *self {
            MeshDensity::ElementsPerSpan(n) => n,
            MeshDensity::ElementLength(l) => ((length / l).ceil() as usize).max(2),
        }
    }
}

/// Kind of tower.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TowerKind {
    /// Tension tower at an end of the section: dead-end strings.
    DeadEnd,
    /// Suspension tower: strings hang from the arms and swing.
    Suspension,
}

/// Kind of insulator string.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum InsulatorKind {
    /// I-string hinged at the arm tip.
    Suspension,
    /// V-string: two legs from the arm, `half_angle` rad from vertical.
    VString {
        /// Half the angle between the legs, in rad.
        half_angle: f64,
    },
    /// Dead-end string pulling along the line.
    DeadEnd,
}

/// An insulator string type.
#[derive(Clone, Debug, PartialEq)]
pub struct Insulator {
    /// Name in the input.
    pub name: String,
    /// Kind.
    pub kind: InsulatorKind,
    /// Length hinge to yoke (V: vertical depth), in m.
    pub length: f64,
    /// Mass, in kg.
    pub mass: f64,
    /// Axial stiffness, in N.
    pub axial_stiffness: f64,
}

/// A tower of a section.
#[derive(Clone, Debug, PartialEq)]
pub struct Tower {
    /// Name in the input.
    pub name: String,
    /// Chainage, in m.
    pub chainage: f64,
    /// Ground elevation, in m.
    pub ground: f64,
    /// Kind.
    pub kind: TowerKind,
    /// Index into [`TensionSection::insulators`] (phases only; earth wires clamp directly).
    pub insulator: Option<usize>,
    /// Per phase (index of [`TensionSection::phases`]): `[across, height above ground]`, in m.
    pub attachments: Vec<[f64; 2]>,
    /// Attachment stiffness `[along, across, vertical]` in the crossarm's
    /// frame, in N/m; `None`: rigid.
    pub stiffness: Option<[f64; 3]>,
    /// Change of route direction here, in rad (positive turning left).
    pub line_angle: f64,
}

/// Bundle geometry.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bundle {
    /// Subconductors: 1, 2, 3, 4 or 6.
    pub count: usize,
    /// Radius of the circle through the subconductor centres, in m.
    pub radius: f64,
    /// Angle of the first subconductor from horizontal (towards +across), in rad.
    pub orientation: f64,
}

impl Bundle {
    /// Offset of subconductor `k` from the bundle centre as `[across, up]`, in m.
    pub fn offset(&self, k: usize) -> [f64; 2] {
        if self.count == 1 {
            return [0.0, 0.0];
        }
        let a = self.orientation + std::f64::consts::TAU * k as f64 / self.count as f64;
        [self.radius * a.cos(), self.radius * a.sin()]
    }
}

/// A phase or earth wire.
#[derive(Clone, Debug, PartialEq)]
pub struct Phase {
    /// Name in the input.
    pub name: String,
    /// Index into [`SectionSpec::conductors`].
    pub conductor: usize,
    /// Bundle geometry.
    pub bundle: Bundle,
    /// Earth wire (clamped at towers, no string).
    pub earth_wire: bool,
    /// Horizontal tension of each subconductor at stringing, in N.
    pub horizontal_tension: f64,
}

/// Spacer kind.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SpacerKind {
    /// Arms next to rigid.
    Rigid,
    /// Arms of a given bending stiffness EI, in N·m².
    Elastic(f64),
    /// Spacer-damper: rigid arms hinged to a central frame, each hinge with
    /// a rotational spring and dashpot about the bundle axis (the
    /// elastomer bushing), the frame with its own mass and rotary inertia.
    Damper(SpacerDamper),
}

/// Hinges and frame of a spacer-damper.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SpacerDamper {
    /// Rotational stiffness of each arm's hinge, in N·m/rad.
    pub hinge_stiffness: f64,
    /// Rotational damping of each arm's hinge, in N·m·s/rad.
    pub hinge_damping: f64,
    /// Mass of the central frame (part of the spacer's mass), in kg.
    pub frame_mass: f64,
    /// Rotary inertia of the central frame, in kg·m².
    pub frame_inertia: f64,
}

/// Spacers on every bundle of more than one subconductor.
#[derive(Clone, Debug, PartialEq)]
pub struct SpacerSpec {
    /// Kind.
    pub kind: SpacerKind,
    /// Per span (0-based), distances from its first tower, in m, ascending.
    pub positions: Vec<Vec<f64>>,
    /// Mass of one spacer, in kg.
    pub mass: f64,
}

/// A tension section between two dead-ends.
#[derive(Clone, Debug)]
pub struct TensionSection {
    /// Insulator types.
    pub insulators: Vec<Insulator>,
    /// Towers in chainage order; the first and last are dead-ends.
    pub towers: Vec<Tower>,
    /// Phases and earth wires.
    pub phases: Vec<Phase>,
    /// Ground profile `(chainage, elevation)`, ascending, towers included, in m.
    pub ground_profile: Vec<(f64, f64)>,
    /// Spacers (bundles only).
    pub spacers: Option<SpacerSpec>,
    /// Name of the modelled layout (`none` when no devices).
    pub layout: String,
    /// Devices of that layout, validated.
    pub devices: Vec<crate::devices::PlacedDevice>,
}

impl TensionSection {
    /// Number of spans.
    pub fn span_count(&self) -> usize {
        self.towers.len() - 1
    }

    /// Horizontal length of span `i` (0-based), in m.
    pub fn span_length(&self, i: usize) -> f64 {
        self.towers[i + 1].chainage - self.towers[i].chainage
    }
}
