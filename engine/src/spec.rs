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
    /// Ice on every span.
    pub ice: Option<RadialIce>,
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
    /// Element kind name (registered).
    pub element_kind: String,
    /// Elements per span.
    pub elements_per_span: usize,
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
    /// Wind ramp time, in s.
    pub wind_ramp: f64,
    /// Damping.
    pub damping: DampingSpec,
    /// `(mode, amplitude m)` of the initial perturbation.
    pub perturbation: Option<(usize, f64)>,
}
