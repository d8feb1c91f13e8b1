//! Raw input schema, version 1: exactly what the user typed, checked only
//! for syntax, types and unknown keys. [`super::validate`] turns it into a
//! [`crate::SectionSpec`] that cannot be invalid.
//!
//! Units are SI throughout except temperatures, which are in °C.

use serde::Deserialize;
use std::collections::BTreeMap;

/// The current input schema version.
pub const SCHEMA_VERSION: u32 = 1;

/// The whole input file.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawInput {
    /// File header.
    pub glaze: RawHeader,
    /// Conductor types by name.
    pub conductors: BTreeMap<String, RawConductor>,
    /// Support points of a row of spans (attachment points of the
    /// conductor), in route order; a row gives `supports` and `spans`, a
    /// tension section gives `towers` and `phases` instead.
    #[serde(default)]
    pub supports: Vec<RawSupport>,
    /// Spans between supports of a row.
    #[serde(default)]
    pub spans: Vec<RawSpan>,
    /// Insulator string types of a section, by name.
    #[serde(default)]
    pub insulators: BTreeMap<String, RawInsulator>,
    /// Towers of a section, in chainage order.
    #[serde(default)]
    pub towers: Vec<RawTower>,
    /// Route data of a section (ground profile).
    pub route: Option<RawRoute>,
    /// Phases and earth wires of a section.
    #[serde(default)]
    pub phases: Vec<RawPhase>,
    /// Spacers on the bundles of a section.
    pub spacers: Option<RawSpacers>,
    /// Section settings (the layout of devices to model).
    pub section: Option<RawSectionSettings>,
    /// Named device layouts of a section.
    #[serde(default)]
    pub layouts: BTreeMap<String, RawLayout>,
    /// How each span is meshed.
    pub mesh: RawMesh,
    /// The state in which the stringing targets hold.
    pub stringing: RawStringing,
    /// The load case to solve.
    pub load_case: RawLoadCase,
    /// Nonlinear solver settings (all optional).
    #[serde(default)]
    pub solver: RawSolver,
    /// Galloping-onset screening (needed by `glaze screen`).
    pub screening: Option<RawScreening>,
    /// Time simulation (needed by `glaze run`).
    pub dynamics: Option<RawDynamics>,
    /// Post-processing settings (`glaze post`).
    pub post: Option<super::post::RawPost>,
}

/// `[dynamics]`: nonlinear time simulation from the static state.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDynamics {
    /// Simulated time, in s.
    pub duration: f64,
    /// Time step, in s.
    pub time_step: f64,
    /// Interval between recorded states, in s (at least the time step; default the time step).
    pub output_interval: Option<f64>,
    /// `hht` (default) or `generalized_alpha`.
    pub scheme: Option<String>,
    /// HHT-α parameter in [−1/3, 0] (default −0.05).
    pub alpha: Option<f64>,
    /// Generalised-α spectral radius at infinite frequency in [0, 1] (default 0.8).
    pub rho_inf: Option<f64>,
    /// Reuse the factorisation while Newton converges fast (default true).
    pub modified_newton: Option<bool>,
    /// Linear solver of the step: `sparse_direct` (default; faer), or the
    /// banded LU baselines `banded_natural` and `banded_rcm`.
    pub linear_solver: Option<String>,
    /// Time over which the mean wind rises smoothly from zero, in s (default 0:
    /// the run starts from the static state in the full mean wind).
    pub wind_ramp: Option<f64>,
    /// Linear (Rayleigh) damping.
    pub damping: Option<RawDamping>,
    /// Initial perturbation in a mode.
    pub perturbation: Option<RawPerturbation>,
    /// When `glaze run` writes its checkpoint.
    pub checkpoint: Option<RawCheckpoint>,
}

/// `[dynamics.checkpoint]`: checkpoints of `glaze run` for `--resume`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCheckpoint {
    /// Write checkpoints (default true).
    pub enabled: Option<bool>,
    /// Simulated time between checkpoints, in s (default: none, by wall time).
    pub every_simulated: Option<f64>,
    /// Wall time between checkpoints, in minutes (default 5).
    pub every_wall_minutes: Option<f64>,
}

/// `[dynamics.damping]`: Rayleigh damping, fitted or given.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDamping {
    /// Two mode numbers (1-based) to fit to, with `ratios`.
    pub modes: Option<[usize; 2]>,
    /// Damping ratios at those modes.
    pub ratios: Option<[f64; 2]>,
    /// Mass-proportional coefficient a0, in 1/s (instead of a fit).
    pub mass_coefficient: Option<f64>,
    /// Stiffness-proportional coefficient a1, in s (instead of a fit).
    pub stiffness_coefficient: Option<f64>,
}

/// `[dynamics.perturbation]`: initial displacement along a mode.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawPerturbation {
    /// Mode number (1-based, by frequency, about the static state).
    pub mode: usize,
    /// Largest translational displacement of the perturbation, in m.
    pub amplitude: Option<f64>,
    /// Largest rotation of the perturbation, in rad (for a torsional mode).
    pub twist: Option<f64>,
    /// `displacement` (default: the state displaced along the mode, released
    /// from rest) or `velocity` (the static state given the mode's velocity
    /// ω·φ, reaching about the size a quarter period later).
    pub start: Option<String>,
}

/// `[glaze]`: schema version and a free title.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawHeader {
    /// Must equal [`SCHEMA_VERSION`].
    pub schema_version: u32,
    /// Free text shown in reports.
    #[serde(default)]
    pub title: String,
}

/// `[conductors.NAME]`: one conductor type.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawConductor {
    /// Overall diameter, in m.
    pub diameter: f64,
    /// Mass per unit length, in kg/m.
    pub mass_per_length: f64,
    /// Axial stiffness EA, in N.
    pub axial_stiffness: f64,
    /// Bending stiffness EI, in N·m².
    pub bending_stiffness: f64,
    /// Torsional stiffness GJ, in N·m².
    pub torsional_stiffness: f64,
    /// Coefficient of linear thermal expansion, in 1/K.
    pub thermal_expansion: f64,
    /// Rated tensile strength, in N.
    pub rated_strength: f64,
    /// Mass polar moment of inertia per length, in kg·m; default from a
    /// solid round section, m·D²/8.
    pub polar_inertia_per_length: Option<f64>,
    /// CSV coefficient table of the bare section (path relative to the
    /// input file); default: round section, C_D = 1, no lift or moment.
    pub aero_table: Option<String>,
    /// Wire data for the clamp bending stress of `glaze post` (optional).
    pub wires: Option<super::post::RawWires>,
}

/// `[[supports]]`: a fixed attachment point.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSupport {
    /// Unique name, referred to by spans.
    pub name: String,
    /// Position `[x, y, z]`, in m (x along the route, z up).
    pub position: [f64; 3],
}

/// `[[spans]]`: one span and its stringing target (exactly one of the three).
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSpan {
    /// Name of the support at the start.
    pub from: String,
    /// Name of the support at the end.
    pub to: String,
    /// Name of a conductor type in `[conductors]`.
    pub conductor: String,
    /// Target horizontal tension at stringing, in N.
    pub horizontal_tension: Option<f64>,
    /// Target sag at stringing (largest vertical distance between chord and conductor), in m.
    pub sag: Option<f64>,
    /// Target catenary parameter H/w at stringing (w: bare weight per unstretched length), in m.
    pub catenary_parameter: Option<f64>,
}

/// `[mesh]`: element kind and density.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawMesh {
    /// Element kind from the registry (`beam`, `cable`, `link`).
    #[serde(rename = "type")]
    pub kind: String,
    /// Elements per span (at least 2); a row gives this or `element_length`.
    pub elements_per_span: Option<usize>,
    /// Largest element length along a span, in m (sections, or rows).
    pub element_length: Option<f64>,
}

/// `[stringing]`: the stringing condition (bare conductor, no wind).
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStringing {
    /// Conductor temperature at which the targets hold, in °C.
    pub temperature: f64,
}

/// `[load_case]`: temperature and ice for the static solve.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawLoadCase {
    /// Name shown in reports.
    #[serde(default)]
    pub name: String,
    /// Conductor temperature, in °C.
    pub temperature: f64,
    /// Radial ice on every span (none when absent).
    pub ice: Option<RawIce>,
    /// Spans (1-based, in route order) that carry the ice; default all.
    pub iced_spans: Option<Vec<usize>>,
    /// Gravitational acceleration, in m/s² (default 9.80665, standard gravity).
    pub gravity: Option<f64>,
    /// Mean wind (none when absent).
    pub wind: Option<RawWind>,
}

/// `[load_case.wind]`: steady mean wind.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawWind {
    /// Mean speed at the reference height, in m/s (the screening sweeps its own speeds).
    pub speed: f64,
    /// Direction the wind blows towards, in degrees from +X (90 = along +Y).
    pub direction: f64,
    /// Height of `speed` above z = 0, in m (default 10).
    pub reference_height: Option<f64>,
    /// `uniform` (default), `power_law` or `logarithmic`.
    pub profile: Option<String>,
    /// Power-law exponent (with `profile = "power_law"`).
    pub exponent: Option<f64>,
    /// Roughness length, in m (with `profile = "logarithmic"`).
    pub roughness_length: Option<f64>,
    /// Air density, in kg/m³ (default 1.225, ISA sea level).
    pub air_density: Option<f64>,
    /// Whether the section twist enters the angle of attack (default true).
    pub include_twist: Option<bool>,
    /// Characteristic radius of the twist-rate term, in m (default: half the
    /// reference diameter of a table with a moment column, else 0).
    pub characteristic_radius: Option<f64>,
}

/// `[screening]`: galloping-onset screening settings.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawScreening {
    /// Mean wind speeds to evaluate, strictly increasing, in m/s.
    pub wind_speeds: Vec<f64>,
    /// Structural damping ratio of every mode (e.g. 0.005).
    pub structural_damping: f64,
    /// Number of lowest modes to screen (default 20).
    pub modes: Option<usize>,
}

/// Uniform radial ice.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawIce {
    /// Radial thickness, in m.
    pub thickness: f64,
    /// Density, in kg/m³ (default 900, glaze ice per IEC 60826).
    pub density: Option<f64>,
    /// CSV coefficient table of the iced section (path relative to the
    /// input file); default: round iced section, C_D = 1, no lift or moment.
    pub aero_table: Option<String>,
    /// Orientation of the iced section's reference axis about the conductor
    /// axis, in degrees, positive from downwind towards up (the sense of
    /// the twist θ): the untwisted section in a horizontal wind sees
    /// α = −orientation (default 0).
    pub orientation: Option<f64>,
}

/// `[solver]`: Newton and load-stepping settings.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSolver {
    /// Newton iterations per load step (default 30).
    pub max_iterations: Option<usize>,
    /// Relative residual tolerance (default 1e-9).
    pub residual_tolerance: Option<f64>,
    /// First load step as a fraction of the load case (default 0.25).
    pub initial_load_step: Option<f64>,
    /// Smallest load step before giving up (default 1e-4).
    pub min_load_step: Option<f64>,
}

/// `[insulators.NAME]`: an insulator string type.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawInsulator {
    /// `suspension` (I-string hinged at the arm), `v_string` (two legs) or `dead_end`.
    pub kind: String,
    /// Length from the tower hinge to the yoke, in m (for a V-string, the
    /// vertical distance from the arm to the yoke).
    pub length: f64,
    /// Mass of the string (both legs of a V), in kg.
    pub mass: f64,
    /// Axial stiffness of the string, in N (default 1e8: next to rigid).
    pub axial_stiffness: Option<f64>,
    /// Half the angle between the legs of a V-string, in degrees.
    pub half_angle: Option<f64>,
}

/// `[[towers]]`: a tower of a section.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawTower {
    /// Unique name.
    pub name: String,
    /// Position along the route, in m.
    pub chainage: f64,
    /// Ground elevation at the tower, in m.
    pub ground: f64,
    /// `dead_end` or `suspension`.
    pub kind: String,
    /// Name of the insulator string type used by the phases at this tower.
    pub insulator: Option<String>,
    /// Per phase or earth wire name: `[across, height above ground]`, in m
    /// (across: along the crossarm, positive to the left looking up-chainage).
    pub attachments: BTreeMap<String, [f64; 2]>,
    /// Translational stiffness of each attachment point `[along, across, vertical]`
    /// in the crossarm's frame, in N/m (tower flexibility); default rigid.
    pub stiffness: Option<[f64; 3]>,
    /// Change of route direction at this tower, in degrees (positive turning
    /// left, at most 60 either way; default 0). The crossarm, the attachment
    /// offsets, the bundle and `stiffness` then lie on the bisector of the
    /// angle. The first span runs along +X; wind directions stay global.
    pub line_angle: Option<f64>,
}

/// `[route]`: ground along the section.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRoute {
    /// `[chainage, elevation]` points, in m, between the towers.
    #[serde(default)]
    pub ground_profile: Vec<[f64; 2]>,
}

/// `[[phases]]`: a phase (bundle of subconductors) or an earth wire.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawPhase {
    /// Unique name, used as the key of the towers' `attachments`.
    pub name: String,
    /// Conductor type of every subconductor.
    pub conductor: String,
    /// Bundle geometry (default a single conductor).
    pub bundle: Option<RawBundle>,
    /// An earth wire: clamped at the towers, no insulator string.
    #[serde(default)]
    pub earth_wire: bool,
    /// Horizontal tension of each subconductor at stringing, in N (one
    /// value for all spans: the ruling-span method).
    pub horizontal_tension: f64,
}

/// A bundle of subconductors.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawBundle {
    /// Subconductors: 1, 2, 3, 4 or 6.
    pub count: usize,
    /// For a twin, the distance between subconductors; otherwise the
    /// diameter of the circle through their centres, in m.
    pub spacing: Option<f64>,
    /// Angle of the first subconductor from horizontal, in degrees (default 0).
    pub orientation: Option<f64>,
}

/// `[spacers]`: spacers on every bundle.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSpacers {
    /// `rigid` (default) or `elastic`.
    pub kind: Option<String>,
    /// Largest distance between spacers (and from a tower to the first), in m.
    pub max_subspan: Option<f64>,
    /// Explicit positions: per span (1-based) the distances from its first tower, in m.
    pub positions: Option<Vec<RawSpacerSpan>>,
    /// Mass of one spacer, in kg.
    pub mass: f64,
    /// Bending stiffness EI of the arms of an `elastic` spacer, in N·m².
    pub arm_bending_stiffness: Option<f64>,
    /// Rotational stiffness of each arm's hinge of a `damper`, in N·m/rad.
    pub hinge_stiffness: Option<f64>,
    /// Rotational damping of each arm's hinge of a `damper`, in N·m·s/rad.
    pub hinge_damping: Option<f64>,
    /// Part of `mass` carried by the central frame of a `damper`, in kg.
    pub frame_mass: Option<f64>,
    /// Rotary inertia of the central frame of a `damper`, in kg·m².
    pub frame_inertia: Option<f64>,
}

/// Spacer positions in one span.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSpacerSpan {
    /// Span number, 1-based.
    pub span: usize,
    /// Distances from the span's first tower, in m.
    pub distances: Vec<f64>,
}

/// `[section]`: settings of a section.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSectionSettings {
    /// Name of the layout in `[layouts]` to model, or `none`.
    pub layout: Option<String>,
}

/// `[layouts.NAME]`: a set of devices.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawLayout {
    /// Devices, each a table with a `type` and the parameters of that kind.
    #[serde(default)]
    pub devices: Vec<toml::Table>,
}
