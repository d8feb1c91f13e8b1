//! Modal analysis about a converged static state: the free vibrations
//! K φ = ω² M φ of the structure linearised there.
//!
//! - **K** is the static system's tangent at the static configuration
//!   (material and geometric stiffness of the elements; weight and ice are
//!   dead loads and add none), over the free DOF (supports removed: the DOF
//!   map has no equations for restrained DOF). The system is evaluated on
//!   its gravity path at λ = 1, so the load stiffness of a mean wind is
//!   *not* in K: the modes are the structure's still-air modes about the
//!   (possibly wind-deflected) static state, and the aerodynamic terms are
//!   left to the screening. At equilibrium K is symmetric up to round-off;
//!   the relative asymmetry max|Kᵢⱼ − Kⱼᵢ| / max|Kᵢⱼ| is reported and K is
//!   replaced by (K + Kᵀ)/2.
//! - **M** is the elements' lumped mass (translational mass and rotational
//!   inertia, [`glaze_elements::Element::lumped_mass`]) scattered on the
//!   same pattern. The kinds give their rotary inertia in the reference
//!   configuration; it is turned to the static state as Rₐ J Rₐᵀ with each
//!   node's rotation Rₐ, since the rotational DOF are spatial increments.
//! - **Solver**: `glaze_solvers::dense_shift_invert` for small systems
//!   (at most [`DENSE_LIMIT`] DOF, or when the modes asked for are close to
//!   the DOF count) and `glaze_solvers::lanczos_shift_invert` otherwise,
//!   with a shift σ slightly below zero (see [`Linearisation::default_shift`])
//!   so that K − σM is positive definite even if K is nearly singular.
//!   DOF without inertia (none for the shipped kinds) are left to the eigen
//!   solvers, which never invert M and exclude the infinite eigenvalues.
//!
//! Shapes are mass-normalised (φᵀMφ = 1, so translations are in kg^-1/2)
//! and signed so that their largest component is positive.

use super::mode_shape::{self, NodeFrame, ENERGY_CLASSES};
use super::static_stage::StaticResult;
use super::static_system::{Configuration, StaticSystem};
use crate::error::GlazeError;
use crate::model::{Model, DOF_PER_NODE};
use glaze_elements::{Element, ElementContext, NodeState};
use glaze_solvers::{
    dense_shift_invert, lanczos_shift_invert, shift_below_spectrum, Assembler, EigenSettings,
    NonlinearSystem, SolverError, SparsityPattern,
};
use nalgebra::{DMatrix, Matrix3, Matrix6};
use std::io::Write;
use std::path::Path;

/// Systems with at most this many DOF are solved by the dense path in
/// [`EigenMethod::Auto`].
pub const DENSE_LIMIT: usize = 600;

/// Relative acceptance tolerance on the true residual
/// ‖Kφ − λMφ‖ / (‖Kφ‖ + |λ|‖Mφ‖) (default of [`ModalSettings`]).
pub const DEFAULT_TOLERANCE: f64 = 1e-10;

/// Which eigen solver runs.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum EigenMethod {
    /// Dense for at most [`DENSE_LIMIT`] DOF or when `2·count + 10 ≥ n`
    /// (the Lanczos basis would span nearly everything), Lanczos otherwise.
    #[default]
    Auto,
    /// Dense shift-invert (faer's self-adjoint eigen solver).
    Dense,
    /// Sparse shift-invert Lanczos.
    Lanczos,
}

impl EigenMethod {
    /// The method `Auto` resolves to for `n` DOF and `count` modes.
    pub fn resolve(self, n: usize, count: usize) -> Self {
        match self {
            Self::Auto if n <= DENSE_LIMIT || 2 * count + 10 >= n => Self::Dense,
            Self::Auto => Self::Lanczos,
            m => m,
        }
    }

    /// `"auto"`, `"dense"` or `"lanczos"`.
    pub fn name(self) -> &'static str {
        match self {
            Self::Auto => "auto",
            Self::Dense => "dense",
            Self::Lanczos => "lanczos",
        }
    }
}

/// Settings of a modal analysis.
#[derive(Clone, Debug, PartialEq)]
pub struct ModalSettings {
    /// Number of lowest modes wanted.
    pub count: usize,
    /// Eigen solver.
    pub method: EigenMethod,
    /// Shift σ, in rad²/s²; `None` picks [`Linearisation::default_shift`]
    /// for the dense solver and, for Lanczos, moves it towards ω₁² with
    /// [`glaze_solvers::shift_below_spectrum`].
    pub shift: Option<f64>,
    /// Relative residual tolerance for accepting a mode.
    pub tolerance: f64,
}

impl ModalSettings {
    /// The lowest `count` modes, automatic method and shift.
    pub fn new(count: usize) -> Self {
        Self { count, method: EigenMethod::Auto, shift: None, tolerance: DEFAULT_TOLERANCE }
    }
}

/// Why a modal analysis failed.
#[derive(Debug, thiserror::Error)]
pub enum ModalError {
    /// No modes were asked for.
    #[error("at least one mode must be asked for")]
    NoModes,
    /// More modes asked for than the model has.
    #[error(
        "{requested} modes were asked for, but the model has only {available} \
         (its free degrees of freedom that carry mass); ask for at most {available}"
    )]
    TooManyModes {
        /// Modes asked for.
        requested: usize,
        /// Finite eigenvalues the model has.
        available: usize,
    },
    /// The tangent at the static state could not be evaluated.
    #[error("the tangent stiffness at the static state could not be evaluated: {0}")]
    Tangent(String),
    /// The static state is not stable: a mode has ω² < 0.
    #[error(
        "mode {mode} has ω² = {omega_squared:.6e} rad²/s² < 0: the static state is not stable \
         (a slack or compressed part?), so it has no free vibrations about it"
    )]
    Unstable {
        /// 1-based mode number.
        mode: usize,
        /// Its eigenvalue, rad²/s².
        omega_squared: f64,
    },
    /// The eigen solver failed.
    #[error("the eigen solver failed: {0}")]
    Solver(#[from] SolverError),
}

impl From<ModalError> for GlazeError {
    fn from(e: ModalError) -> Self {
        GlazeError::Analysis { message: format!("modal analysis: {e}") }
    }
}

/// K and M of a structure linearised about a state, on one sparsity
/// pattern of the free DOF.
#[derive(Clone, Debug)]
pub struct Linearisation {
    /// Pattern of both matrices (both triangles stored).
    pub pattern: SparsityPattern,
    /// Symmetrised tangent stiffness (K + Kᵀ)/2, in N/m, N/rad, N·m/rad.
    pub stiffness: Vec<f64>,
    /// Lumped mass, in kg and kg·m².
    pub mass: Vec<f64>,
    /// max|Kᵢⱼ − Kⱼᵢ| / max|Kᵢⱼ| before symmetrising (round-off at equilibrium).
    pub asymmetry: f64,
    /// Equation of each DOF `6·node + d`, `None` for restrained or unused DOF.
    pub equations: Vec<Option<usize>>,
    /// Lumped mass block of each node (6×6 on `[u, θ]`), kg and kg·m²; the
    /// mass is block diagonal by node for lumped kinds.
    pub node_mass: Vec<Matrix6<f64>>,
    /// Free DOF whose mass diagonal is zero (no inertia).
    pub massless_dofs: usize,
}

impl Linearisation {
    /// Linearises `model` about `config` (normally `StaticResult::config`):
    /// K from the static system's tangent at the load case (λ = 1).
    pub fn about(model: &Model, config: &Configuration) -> Result<Self, ModalError> {
        let mut system = StaticSystem::new(model);
        system.config = config.clone();
        let pattern = system.pattern().clone();
        let mut residual = vec![0.0; pattern.dim()];
        let mut k = vec![0.0; pattern.nnz()];
        system.evaluate(1.0, &mut residual, Some(&mut k)).map_err(|e| ModalError::Tangent(e.message))?;
        let states = node_states(model, config);
        Self::assemble(pattern, model.dofs.all().to_vec(), k, &model.elements, &states)
    }

    /// Linearises any set of elements about node states `states`:
    /// K = Σ element tangents in context `ctx`, equations per DOF
    /// `6·node + d` as in [`Linearisation::equations`] (numbered
    /// `0..n` without gaps).
    pub fn from_elements(
        elements: &[Box<dyn Element>],
        states: &[NodeState],
        equations: Vec<Option<usize>>,
        ctx: &ElementContext,
    ) -> Result<Self, ModalError> {
        let groups = element_groups(elements, &equations);
        let n = equations.iter().flatten().count();
        let pattern = SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()));
        let assembler = Assembler::new(&pattern, groups.iter().map(|g| g.as_slice()));
        let mut k = vec![0.0; pattern.nnz()];
        for (g, e) in elements.iter().enumerate() {
            let local: Vec<NodeState> = e.nodes().iter().map(|&i| states[i]).collect();
            let m = local.len() * DOF_PER_NODE;
            let mut f = vec![0.0; m];
            let mut ke = vec![0.0; m * m];
            e.tangent(ctx, &local, &mut f, &mut ke);
            assembler.add_matrix(g, &ke, &mut k);
        }
        Self::assemble(pattern, equations, k, elements, states)
    }

    fn assemble(
        pattern: SparsityPattern,
        equations: Vec<Option<usize>>,
        k: Vec<f64>,
        elements: &[Box<dyn Element>],
        states: &[NodeState],
    ) -> Result<Self, ModalError> {
        if let Some(bad) = k.iter().position(|v| !v.is_finite()) {
            return Err(ModalError::Tangent(format!("non-finite stiffness entry {bad}")));
        }
        let transpose = pattern.transpose_indices();
        let peak = k.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
        let skew = k.iter().zip(&transpose).fold(0.0_f64, |m, (v, &t)| m.max((v - k[t]).abs()));
        let asymmetry = if peak > 0.0 { skew / peak } else { 0.0 };
        let stiffness: Vec<f64> = k.iter().zip(&transpose).map(|(v, &t)| 0.5 * (v + k[t])).collect();

        let groups = element_groups(elements, &equations);
        let assembler = Assembler::new(&pattern, groups.iter().map(|g| g.as_slice()));
        let mut mass = vec![0.0; pattern.nnz()];
        let mut node_mass = vec![Matrix6::zeros(); states.len()];
        for (g, e) in elements.iter().enumerate() {
            let local: Vec<NodeState> = e.nodes().iter().map(|&i| states[i]).collect();
            let rotations: Vec<Matrix3<f64>> = local.iter().map(|s| s.rotation).collect();
            let m = local.len() * DOF_PER_NODE;
            let mut me = vec![0.0; m * m];
            e.lumped_mass(&local, &mut me);
            let me = rotate_inertia(&me, &rotations);
            assembler.add_matrix(g, &me, &mut mass);
            for (a, &node) in e.nodes().iter().enumerate() {
                for i in 0..DOF_PER_NODE {
                    for j in 0..DOF_PER_NODE {
                        node_mass[node][(i, j)] += me[(a * DOF_PER_NODE + i) * m + a * DOF_PER_NODE + j];
                    }
                }
            }
        }
        // T M Tᵀ is symmetric up to round-off; make it exactly so.
        let mass: Vec<f64> = mass.iter().zip(&transpose).map(|(v, &t)| 0.5 * (v + mass[t])).collect();
        let massless_dofs = pattern.diagonal_indices().iter().filter(|&&d| mass[d] == 0.0).count();
        Ok(Self { pattern, stiffness, mass, asymmetry, equations, node_mass, massless_dofs })
    }

    /// Number of equations (free DOF).
    pub fn dim(&self) -> usize {
        self.pattern.dim()
    }

    /// Number of finite eigenvalues: free DOF that carry mass.
    pub fn mode_capacity(&self) -> usize {
        self.dim() - self.massless_dofs
    }

    /// σ = −10⁻⁶ · max diag(K) / max diag(M) over the translational DOF
    /// (N/m over kg, so that rotary terms with other units do not mix in;
    /// over all DOF if no translation carries mass), in rad²/s²: below the
    /// lowest ω² of a stable structure yet small against the stiffness
    /// scale, so K − σM is positive definite and well conditioned.
    pub fn default_shift(&self) -> f64 {
        let diag = self.pattern.diagonal_indices();
        let translations: Vec<usize> = self
            .equations
            .iter()
            .enumerate()
            .filter_map(|(i, e)| e.filter(|_| i % DOF_PER_NODE < 3))
            .filter(|&e| self.mass[diag[e]] > 0.0)
            .collect();
        let chosen: Vec<usize> =
            if translations.is_empty() { (0..self.dim()).collect() } else { translations };
        let kmax = chosen.iter().fold(0.0_f64, |m, &e| m.max(self.stiffness[diag[e]].abs()));
        let mmax = chosen.iter().fold(0.0_f64, |m, &e| m.max(self.mass[diag[e]]));
        if kmax > 0.0 && mmax > 0.0 {
            -1e-6 * kmax / mmax
        } else {
            -1e-6
        }
    }

    /// The lowest `settings.count` modes.
    pub fn solve(&self, settings: &ModalSettings) -> Result<ModeSet, ModalError> {
        let n = self.dim();
        if settings.count == 0 {
            return Err(ModalError::NoModes);
        }
        if settings.count > self.mode_capacity() {
            return Err(ModalError::TooManyModes {
                requested: settings.count,
                available: self.mode_capacity(),
            });
        }
        let method = settings.method.resolve(n, settings.count);
        // Lanczos gets its shift moved from the safe floor to just below
        // ω₁² (certified by Cholesky): it separates the clusters of nearly
        // equal modes of a section of similar spans.
        let floor = self.default_shift();
        let mut shift = match (settings.shift, method) {
            (Some(s), _) => s,
            (None, EigenMethod::Lanczos) => {
                shift_below_spectrum(&self.pattern, &self.stiffness, &self.mass, floor)?.shift
            }
            (None, _) => floor,
        };
        let eigen = |shift| EigenSettings {
            count: settings.count,
            shift,
            tolerance: settings.tolerance,
            ..EigenSettings::default()
        };
        let pairs = match method {
            EigenMethod::Lanczos => {
                match lanczos_shift_invert(&self.pattern, &self.stiffness, &self.mass, &eigen(shift)) {
                    // The moved shift is an optimisation: if the solver does
                    // not converge with it, the safe floor gets its turn.
                    Err(SolverError::EigenNotConverged { .. })
                        if settings.shift.is_none() && shift != floor =>
                    {
                        tracing::warn!(
                            shift,
                            floor,
                            "Lanczos did not converge with the moved shift; retrying at the floor"
                        );
                        shift = floor;
                        lanczos_shift_invert(&self.pattern, &self.stiffness, &self.mass, &eigen(shift))?
                    }
                    other => other?,
                }
            }
            _ => dense_shift_invert(&self.pattern, &self.stiffness, &self.mass, &eigen(shift))?,
        };
        // A negative ω² within round-off of the stiffness scale is a zero
        // frequency; anything beyond that is an unstable state.
        let floor = 1e-9 * shift.abs();
        let mut omega_squared = Vec::with_capacity(pairs.values.len());
        for (i, &l) in pairs.values.iter().enumerate() {
            if l < -floor {
                return Err(ModalError::Unstable { mode: i + 1, omega_squared: l });
            }
            omega_squared.push(l.max(0.0));
        }
        let vectors = pairs
            .vectors
            .into_iter()
            .map(|mut v| {
                let big = v.iter().fold(0.0_f64, |m, &x| if x.abs() > m.abs() { x } else { m });
                if big < 0.0 {
                    v.iter_mut().for_each(|x| *x = -*x);
                }
                v
            })
            .collect();
        Ok(ModeSet { omega_squared, vectors, residuals: pairs.residuals, method, shift })
    }

    /// A mode vector (over equations) spread to nodes, six components each
    /// (zero at restrained and unused DOF).
    pub fn node_shape(&self, vector: &[f64]) -> Vec<[f64; 6]> {
        self.equations
            .chunks(DOF_PER_NODE)
            .map(|eqs| std::array::from_fn(|d| eqs[d].map_or(0.0, |e| vector[e])))
            .collect()
    }

    /// Writes K and M as Matrix Market files (`coordinate real general`,
    /// both triangles, 1-based, shortest round-trip decimal).
    pub fn write_matrix_market(&self, stiffness_path: &Path, mass_path: &Path) -> std::io::Result<()> {
        write_matrix_market(stiffness_path, &self.pattern, &self.stiffness)?;
        write_matrix_market(mass_path, &self.pattern, &self.mass)
    }
}

/// The eigenpairs of a [`Linearisation`].
#[derive(Clone, Debug)]
pub struct ModeSet {
    /// ω², ascending, in rad²/s².
    pub omega_squared: Vec<f64>,
    /// Mass-normalised vectors over the equations, largest component positive.
    pub vectors: Vec<Vec<f64>>,
    /// Relative residuals ‖Kφ − ω²Mφ‖ / (‖Kφ‖ + ω²‖Mφ‖).
    pub residuals: Vec<f64>,
    /// The method that ran (never `Auto`).
    pub method: EigenMethod,
    /// Shift used, in rad²/s².
    pub shift: f64,
}

/// Modes of a model about its static state, described.
#[derive(Clone, Debug)]
pub struct ModalResult {
    /// Natural frequencies, in Hz, ascending.
    pub frequency_hz: Vec<f64>,
    /// Periods, in s (infinite for a zero frequency).
    pub period_s: Vec<f64>,
    /// Circular frequencies ω, in rad/s.
    pub omega: Vec<f64>,
    /// Mode shapes `[mode][node]` = `[u_x, u_y, u_z, θ_x, θ_y, θ_z]`,
    /// mass-normalised (φᵀMφ = 1: kg^-1/2 for translations, kg^-1/2·m^-1
    /// for rotations), zero at restrained DOF.
    pub shapes: Vec<Vec<[f64; 6]>>,
    /// Share of modal kinetic energy `[mode][class]`, classes in
    /// [`ENERGY_CLASSES`] order, each row summing to 1.
    pub energy_share: Vec<[f64; 4]>,
    /// Share of modal kinetic energy per span `[mode][span]` (summing to 1
    /// when every node belongs to a span, as in models built from a section).
    pub span_share: Vec<Vec<f64>>,
    /// Loops of the dominant component `[mode][span]`.
    pub loops: Vec<Vec<usize>>,
    /// One-line descriptions, e.g. "vertical, 2 loops, span 1".
    pub labels: Vec<String>,
    /// Relative residuals of the eigenpairs.
    pub residuals: Vec<f64>,
    /// Eigen solver that ran.
    pub method: EigenMethod,
    /// Shift σ, in rad²/s².
    pub shift: f64,
    /// Relative asymmetry of the tangent before symmetrising.
    pub stiffness_asymmetry: f64,
    /// Number of free DOF.
    pub dofs: usize,
    /// Lumped mass of every node (translations, then rotations about the
    /// global axes; kg, kg·m, kg·m²), the M of the normalisation φᵀMφ = 1.
    pub node_mass: Vec<Matrix6<f64>>,
}

/// The lowest modes of `model` about its static state `static_result`.
pub fn run_modal(
    model: &Model,
    static_result: &StaticResult,
    settings: &ModalSettings,
) -> Result<ModalResult, ModalError> {
    let lin = Linearisation::about(model, &static_result.config)?;
    let modes = lin.solve(settings)?;
    let frames = node_frames(model, &static_result.config);
    Ok(describe(model, &lin, &modes, &frames))
}

/// Describes the modes of `model`: frequencies, shapes per node, energy
/// shares with `frames`, span shares, loops and labels.
pub fn describe(model: &Model, lin: &Linearisation, modes: &ModeSet, frames: &[NodeFrame]) -> ModalResult {
    let omega: Vec<f64> = modes.omega_squared.iter().map(|l| l.sqrt()).collect();
    let frequency_hz: Vec<f64> = omega.iter().map(|w| w / (2.0 * std::f64::consts::PI)).collect();
    let period_s = frequency_hz.iter().map(|f| 1.0 / f).collect();
    let shapes: Vec<Vec<[f64; 6]>> = modes.vectors.iter().map(|v| lin.node_shape(v)).collect();
    let mut energy_share = Vec::new();
    let mut span_share = Vec::new();
    let mut loops = Vec::new();
    let mut labels = Vec::new();
    for shape in &shapes {
        let per_node = mode_shape::node_energies(shape, &lin.node_mass, frames);
        let mut sum = [0.0; 4];
        for e in &per_node {
            for c in 0..4 {
                sum[c] += e[c];
            }
        }
        let shares = mode_shape::normalise(sum);
        // Node totals φₐᵀMₐₐφₐ ≥ 0 (the class parts summed before any clamping).
        let node_total: Vec<f64> = per_node.iter().map(|e| e.iter().sum::<f64>().max(0.0)).collect();
        let total: f64 = node_total.iter().sum();
        let spans: Vec<f64> = model
            .spans
            .iter()
            .map(|s| {
                let e: f64 = s.nodes.iter().map(|&n| node_total[n]).sum();
                if total > 0.0 {
                    e / total
                } else {
                    0.0
                }
            })
            .collect();
        let dominant = (0..4).max_by(|&a, &b| shares[a].total_cmp(&shares[b]).then(b.cmp(&a))).unwrap_or(0);
        let span_loops: Vec<usize> = model
            .spans
            .iter()
            .map(|s| {
                let values: Vec<f64> =
                    s.nodes.iter().map(|&n| frames[n].component(dominant, &shape[n])).collect();
                mode_shape::loops(&values)
            })
            .collect();
        labels.push(section_label(model, &shares, &spans, &span_loops));
        energy_share.push(shares);
        span_share.push(spans);
        loops.push(span_loops);
    }
    debug_assert_eq!(ENERGY_CLASSES.len(), 4);
    ModalResult {
        frequency_hz,
        period_s,
        omega,
        shapes,
        energy_share,
        span_share,
        loops,
        labels,
        residuals: modes.residuals.clone(),
        method: modes.method,
        shift: modes.shift,
        stiffness_asymmetry: lin.asymmetry,
        dofs: lin.dim(),
        node_mass: lin.node_mass.clone(),
    }
}

/// The frame of every node of `model` at `config`: span direction in plan
/// of the span holding the node, conductor axis from the neighbouring nodes
/// of the span (central difference, one-sided at the ends). Nodes in no
/// span get the global X axis (the line route).
pub fn node_frames(model: &Model, config: &Configuration) -> Vec<NodeFrame> {
    let mut frames = vec![NodeFrame::along(nalgebra::Vector3::x()); model.node_count()];
    for span in &model.spans {
        let nodes = &span.nodes;
        for (k, &n) in nodes.iter().enumerate() {
            let before = nodes[k.saturating_sub(1)];
            let after = nodes[(k + 1).min(nodes.len() - 1)];
            let mut axis = config.positions[after] - config.positions[before];
            if axis.norm() == 0.0 {
                axis = span.direction;
            }
            frames[n] = NodeFrame { longitudinal: span.direction, axis: axis.normalize() };
        }
    }
    frames
}

/// Writes `values` on `pattern` as a Matrix Market file (`coordinate real
/// general`, both triangles, 1-based indices, shortest round-trip
/// decimals), readable by `scipy.io.mmread`.
pub fn write_matrix_market(path: &Path, pattern: &SparsityPattern, values: &[f64]) -> std::io::Result<()> {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path)?);
    let n = pattern.dim();
    writeln!(out, "%%MatrixMarket matrix coordinate real general")?;
    writeln!(out, "% written by glaze {}", env!("CARGO_PKG_VERSION"))?;
    writeln!(out, "{n} {n} {}", pattern.nnz())?;
    let col_ptr = pattern.col_ptr();
    let rows = pattern.row_idx();
    for j in 0..n {
        for k in col_ptr[j]..col_ptr[j + 1] {
            writeln!(out, "{} {} {:e}", rows[k] + 1, j + 1, values[k])?;
        }
    }
    out.flush()
}

fn node_states(model: &Model, config: &Configuration) -> Vec<NodeState> {
    (0..model.node_count())
        .map(|i| NodeState { x0: model.nodes[i], x: config.positions[i], rotation: config.rotations[i] })
        .collect()
}

fn element_groups(elements: &[Box<dyn Element>], equations: &[Option<usize>]) -> Vec<Vec<Option<usize>>> {
    elements
        .iter()
        .map(|e| {
            e.nodes()
                .iter()
                .flat_map(|&n| (0..DOF_PER_NODE).map(move |d| equations[n * DOF_PER_NODE + d]))
                .collect()
        })
        .collect()
}

/// T M Tᵀ with T = diag(I₃, Rₐ) per node: the element's rotary inertia
/// (given in reference axes) turned to the current nodal triads.
fn rotate_inertia(m: &[f64], rotations: &[Matrix3<f64>]) -> Vec<f64> {
    if rotations.iter().all(|r| *r == Matrix3::identity()) {
        return m.to_vec();
    }
    let size = rotations.len() * DOF_PER_NODE;
    let mut t = DMatrix::<f64>::identity(size, size);
    for (a, r) in rotations.iter().enumerate() {
        let o = a * DOF_PER_NODE + 3;
        t.view_mut((o, o), (3, 3)).copy_from(r);
    }
    let m = DMatrix::from_row_slice(size, size, m);
    let rotated = &t * m * t.transpose();
    // Row-major out of nalgebra's column-major storage.
    rotated.transpose().as_slice().to_vec()
}

/// The label of a mode: for a row, by span; for a section, by route span
/// (the wires of a span summed, the loops of its most energetic wire) with
/// the phases that hold at least a fifth of the energy.
fn section_label(model: &Model, shares: &[f64; 4], spans: &[f64], span_loops: &[usize]) -> String {
    if model.spans.iter().all(|s| s.phase.is_none()) {
        return mode_shape::label(shares, spans, span_loops);
    }
    let route = model.spans.iter().map(|s| s.route_span + 1).max().unwrap_or(0);
    let phases = model.spans.iter().filter_map(|s| s.phase).max().map_or(0, |p| p + 1);
    let mut route_share = vec![0.0; route];
    let mut route_loops = vec![0; route];
    let mut best = vec![-1.0; route];
    let mut phase_share = vec![0.0; phases];
    for (k, s) in model.spans.iter().enumerate() {
        route_share[s.route_span] += spans[k];
        if spans[k] > best[s.route_span] {
            best[s.route_span] = spans[k];
            route_loops[s.route_span] = span_loops[k];
        }
        if let Some(p) = s.phase {
            phase_share[p] += spans[k];
        }
    }
    let mut text = mode_shape::label(shares, &route_share, &route_loops);
    let names: Vec<String> = (0..phases)
        .filter(|&p| phase_share[p] >= 0.2)
        .map(|p| model.phase_names.get(p).cloned().unwrap_or_else(|| format!("{}", p + 1)))
        .collect();
    if !names.is_empty() {
        text += &format!(", phase{} {}", if names.len() > 1 { "s" } else { "" }, names.join(", "));
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn auto_method_picks_dense_for_small_or_nearly_full_problems() {
        assert_eq!(EigenMethod::Auto.resolve(600, 10), EigenMethod::Dense);
        assert_eq!(EigenMethod::Auto.resolve(3000, 40), EigenMethod::Lanczos);
        assert_eq!(EigenMethod::Auto.resolve(1000, 495), EigenMethod::Dense);
        assert_eq!(EigenMethod::Lanczos.resolve(10, 2), EigenMethod::Lanczos);
    }

    #[test]
    fn rotary_inertia_turns_with_the_node() {
        // One node: mass 2 kg, inertia diag(1, 3, 3) about (x, y, z); after
        // a quarter turn about z the large axes are x and z.
        let mut m = vec![0.0; 36];
        for (i, v) in [2.0, 2.0, 2.0, 1.0, 3.0, 3.0].into_iter().enumerate() {
            m[i * 6 + i] = v;
        }
        let r =
            nalgebra::Rotation3::from_axis_angle(&nalgebra::Vector3::z_axis(), std::f64::consts::FRAC_PI_2)
                .into_inner();
        let out = rotate_inertia(&m, &[r]);
        let want = [2.0, 2.0, 2.0, 3.0, 1.0, 3.0];
        for i in 0..6 {
            for j in 0..6 {
                let w = if i == j { want[i] } else { 0.0 };
                assert!((out[i * 6 + j] - w).abs() < 1e-14, "({i},{j})");
            }
        }
    }
}
