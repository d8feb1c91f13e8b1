//! The [`Element`] trait: what every element kind gives the assembler.
//!
//! Degrees of freedom: every node carries six, ordered
//! `[u_x, u_y, u_z, θ_x, θ_y, θ_z]` in global axes. Translations are additive
//! (m). Rotations are *spatial* incremental rotation vectors (rad): a node's
//! rotation is updated as `R ← exp(δθ̂) R` (left multiplication, see
//! [`crate::so3`]). Internal forces are the work conjugates of those
//! increments: forces in N, moments in N·m, all in global axes.

use nalgebra::{Matrix3, Vector3};

/// Kinematic state of one node as an element sees it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct NodeState {
    /// Reference (initial, stress-free geometry) position X, in m.
    pub x0: Vector3<f64>,
    /// Current position x, in m.
    pub x: Vector3<f64>,
    /// Current total rotation of the nodal triad from its reference triad
    /// (identity in the reference configuration), dimensionless.
    pub rotation: Matrix3<f64>,
}

impl NodeState {
    /// A node at rest in its reference configuration.
    pub fn at_rest(x0: Vector3<f64>) -> Self {
        Self { x0, x: x0, rotation: Matrix3::identity() }
    }
}

/// Load-case quantities that act inside elements rather than on nodes.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ElementContext {
    /// Temperature change from the stringing (reference) temperature, in K.
    /// Each element multiplies it by its own expansion coefficient.
    pub temperature_change: f64,
}

/// Section results of one element in its current state.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ElementOutput {
    /// Axial force, tension positive, in N.
    pub axial_force: f64,
    /// Torque about the element axis, in N·m (zero for kinds without torsion).
    pub torque: f64,
    /// Bending moment about the local y axis at the first and second node, in N·m.
    pub bending_moment_y: [f64; 2],
    /// Bending moment about the local z axis at the first and second node, in N·m.
    pub bending_moment_z: [f64; 2],
    /// Mechanical axial strain (total strain less thermal strain), dimensionless.
    pub axial_strain: f64,
}

/// One finite element.
///
/// Implementations own their material and section data and their node
/// indices. All arrays are laid out node after node, six DOF per node, so an
/// element with `n` nodes has vectors of length `6n` and row-major
/// `6n × 6n` matrices.
///
/// **Invariant:** rigid-body motions (any translation, any finite rotation
/// applied to the whole element) produce zero internal force.
pub trait Element: Send + Sync + std::fmt::Debug {
    /// Name of the element kind, as written in input files (`"beam"`, `"cable"`, …).
    fn kind(&self) -> &'static str;

    /// Global indices of the element's nodes, in local order.
    fn nodes(&self) -> &[usize];

    /// Whether the element has stiffness or inertia in rotational DOF.
    /// Rotations of nodes touched only by elements that return `false`
    /// are removed from the system by the assembler.
    fn uses_rotations(&self) -> bool;

    /// Internal force vector `f` (length `6n`) for the current state.
    fn internal_force(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64]);

    /// Internal force `f` (length `6n`) and consistent tangent stiffness
    /// `k = ∂f/∂[δu, δθ]` (row-major `6n × 6n`, including geometric terms).
    /// Both buffers are overwritten.
    fn tangent(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64], k: &mut [f64]);

    /// Lumped mass matrix (row-major `6n × 6n`), in kg and kg·m²,
    /// evaluated in the reference configuration: translational mass on the
    /// diagonal and, for kinds with rotational inertia, a 3×3 inertia block
    /// per node in global axes.
    fn lumped_mass(&self, nodes: &[NodeState], m: &mut [f64]);

    /// Section results for the current state.
    fn output(&self, ctx: &ElementContext, nodes: &[NodeState]) -> ElementOutput;

    /// Elastic strain energy stored in the current state, in J; its
    /// gradient with respect to the DOF is the internal force.
    fn strain_energy(&self, ctx: &ElementContext, nodes: &[NodeState]) -> f64;

    /// Unstretched (stress-free) length at the reference temperature, in m.
    fn unstretched_length(&self) -> f64;

    /// Mass per unstretched length, in kg/m.
    fn mass_per_length(&self) -> f64;

    /// Viscous damping matrix `c` (row-major `6n × 6n`, N·s/m and N·m·s/rad)
    /// about the given state, for kinds with dashpots: the time integration
    /// adds it to the Rayleigh damping as a constant matrix. Returns `false`
    /// (leaving `c` alone) for kinds without viscous damping, the default.
    fn damping_matrix(&self, nodes: &[NodeState], c: &mut [f64]) -> bool {
        let _ = (nodes, c);
        false
    }
}
