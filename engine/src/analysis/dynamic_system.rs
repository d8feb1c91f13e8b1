//! The equations of motion of a [`Model`] as a [`SecondOrderSystem`]:
//! `M a + C v + g(q, v, t) = 0` with `g = f_int(q) − f_weight − f_aero(q, v, t)`.
//!
//! - M: lumped mass of the elements (conductor, ice), constant.
//! - C: Rayleigh damping `a0 M + a1 K0` with K0 the symmetrised tangent at
//!   the start state (Clough & Penzien 1993, §12.4), plus the constant
//!   damping matrices of dashpot devices (`Element::damping_matrix`).
//! - f_aero: quasi-steady loads of [`crate::aero_loads`], with the conductor
//!   velocity and twist rate in the relative wind, so their derivatives
//!   give the aerodynamic stiffness K and damping D of the Newton matrix.
//!
//! Element loop: in windows of [`WINDOW`] elements, every element's force
//! and tangent (and every aerodynamic element's load and Jacobians) is
//! computed in parallel (rayon) into its own block, then the blocks are
//! added into the global vectors and matrices one after another in element
//! order, so the sums, and the results, are the same bit for bit on any
//! number of threads. A window's blocks stay in cache between the two.
//!
//! Rotations: the solver's unknowns for rotational DOF are spatial
//! rotation-vector increments, applied as `R ← exp(Δθ̂) R`; angular
//! velocities and accelerations are spatial vectors on which the Newmark
//! relations act additively. This is the spatial form of Simo & Vu-Quoc
//! (1988, "On the dynamics in space of rods undergoing large motions — a
//! geometrically exact approach", CMAME 66) with the inertia held at its
//! reference value and the gyroscopic term neglected, which is accurate for
//! the nearly axisymmetric, slowly twisting sections of conductors.

use super::static_system::Configuration;
use crate::aero_loads::{element_jacobian, element_load, Derivative, Flow, NodeVelocity};
use crate::model::{Model, DOF_PER_NODE};
use glaze_elements::{so3, ElementContext, NodeState};
use glaze_solvers::{Assembler, EvalError, SecondOrderSystem, SparsityPattern};
use nalgebra::Vector3;
use rayon::prelude::*;

/// Elements per rayon task of the element loops (small enough to balance
/// two cores on the smallest sections, large enough to amortise a task).
const ELEMENTS_PER_TASK: usize = 16;

/// Elements computed before their blocks are added in: about 200 kB of
/// blocks, which stay in the second-level cache.
const WINDOW: usize = 128;

/// One element's inputs and outputs in the parallel element loop,
/// allocated once.
#[derive(Debug, Default)]
struct ElementBlock {
    nodes: Vec<NodeState>,
    f: Vec<f64>,
    k: Vec<f64>,
}

/// One aerodynamic element's block: load, ∂/∂q and ∂/∂v, and a failure.
#[derive(Debug, Default)]
struct AeroBlock {
    nodes: Vec<NodeState>,
    velocity: [NodeVelocity; 2],
    f: Vec<f64>,
    k: Vec<f64>,
    d: Vec<f64>,
    failure: Option<String>,
}

/// The states at `config` of the nodes of `element` into `out`.
pub(crate) fn gather_into(model: &Model, config: &Configuration, element: usize, out: &mut Vec<NodeState>) {
    out.clear();
    for &n in model.elements[element].nodes() {
        out.push(NodeState { x0: model.nodes[n], x: config.positions[n], rotation: config.rotations[n] });
    }
}

/// Dynamic system of a model.
pub struct DynamicSystem<'m> {
    model: &'m Model,
    pattern: SparsityPattern,
    assembler: Assembler,
    mass: Vec<f64>,
    damping: Vec<f64>,
    /// Committed configuration q_n.
    pub committed: Configuration,
    /// Trial configuration q_n ⊕ Δq.
    pub trial: Configuration,
    wind_ramp: f64,
    gather: Vec<NodeState>,
    k_local: Vec<f64>,
    /// Internal force at the last evaluation, on the equations.
    pub internal_force: Vec<f64>,
    /// Aerodynamic force at the last evaluation, on the equations.
    pub aero_force: Vec<f64>,
    weight_norm: f64,
    /// Blocks of one window of elements.
    blocks: Vec<ElementBlock>,
    /// Elements with aerodynamic loads, ascending.
    aero_elements: Vec<usize>,
    /// Blocks of one window of aerodynamic elements.
    aero_blocks: Vec<AeroBlock>,
    /// Wall time in the element loop and in the aerodynamic loop, s.
    loop_seconds: [f64; 2],
}

impl<'m> DynamicSystem<'m> {
    /// Sets up the system at `start` with Rayleigh coefficients `a0`
    /// (1/s) and `a1` (s); `wind_ramp` in s (0: full wind from t = 0).
    pub fn new(
        model: &'m Model,
        start: &Configuration,
        a0: f64,
        a1: f64,
        wind_ramp: f64,
    ) -> Result<Self, EvalError> {
        let groups: Vec<Vec<Option<usize>>> =
            model.elements.iter().map(|e| model.dofs.element_equations(e.nodes())).collect();
        let pattern = SparsityPattern::from_dof_groups(model.dofs.len(), groups.iter().map(|g| g.as_slice()));
        let assembler = Assembler::new(&pattern, groups.iter().map(|g| g.as_slice()));
        let max_nodes = model.elements.iter().map(|e| e.nodes().len()).max().unwrap_or(2).max(2);
        let m = max_nodes * DOF_PER_NODE;
        let mut s = Self {
            model,
            mass: vec![0.0; pattern.nnz()],
            damping: vec![0.0; pattern.nnz()],
            pattern,
            assembler,
            committed: start.clone(),
            trial: start.clone(),
            wind_ramp,
            gather: Vec::with_capacity(max_nodes),
            k_local: vec![0.0; m * m],
            internal_force: vec![0.0; model.dofs.len()],
            aero_force: vec![0.0; model.dofs.len()],
            weight_norm: model
                .dofs
                .all()
                .iter()
                .zip(&model.case_load)
                .filter(|(eq, _)| eq.is_some())
                .map(|(_, f)| f * f)
                .sum::<f64>()
                .sqrt(),
            blocks: (0..WINDOW.min(model.elements.len()))
                .map(|_| ElementBlock {
                    nodes: Vec::with_capacity(max_nodes),
                    f: vec![0.0; m],
                    k: vec![0.0; m * m],
                })
                .collect(),
            aero_elements: (0..model.elements.len()).filter(|&e| model.aero[e].is_some()).collect(),
            aero_blocks: (0..WINDOW.min(model.elements.len()))
                .map(|_| AeroBlock {
                    nodes: Vec::with_capacity(2),
                    f: vec![0.0; 2 * DOF_PER_NODE],
                    k: vec![0.0; 4 * DOF_PER_NODE * DOF_PER_NODE],
                    d: vec![0.0; 4 * DOF_PER_NODE * DOF_PER_NODE],
                    ..AeroBlock::default()
                })
                .collect(),
            loop_seconds: [0.0; 2],
        };
        let mut mass = vec![0.0; s.pattern.nnz()];
        for e in 0..model.elements.len() {
            s.gather_nodes(e, false);
            let n = model.elements[e].nodes().len() * DOF_PER_NODE;
            model.elements[e].lumped_mass(&s.gather, &mut s.k_local[..n * n]);
            s.assembler.add_matrix(e, &s.k_local[..n * n], &mut mass);
        }
        s.mass = mass;
        if a1 != 0.0 {
            let mut k0 = vec![0.0; s.pattern.nnz()];
            let mut g = vec![0.0; model.dofs.len()];
            let zero = vec![0.0; model.dofs.len()];
            s.internal(&zero, 0.0, &mut g, Some(&mut k0), None, false)?;
            let transpose = s.pattern.transpose_indices();
            s.damping = (0..k0.len()).map(|i| a1 * 0.5 * (k0[i] + k0[transpose[i]])).collect();
        }
        for (c, m) in s.damping.iter_mut().zip(&s.mass) {
            *c += a0 * m;
        }
        // Dashpots of devices: constant matrices about the start state.
        for e in 0..model.elements.len() {
            s.gather_nodes(e, false);
            let n = model.elements[e].nodes().len() * DOF_PER_NODE;
            if model.elements[e].damping_matrix(&s.gather, &mut s.k_local[..n * n]) {
                let mut damping = std::mem::take(&mut s.damping);
                s.assembler.add_matrix(e, &s.k_local[..n * n], &mut damping);
                s.damping = damping;
            }
        }
        Ok(s)
    }

    /// Dynamic-pressure factor of the wind at time `t`: a half-cosine rise
    /// over the ramp time, then 1.
    pub fn wind_factor(&self, t: f64) -> f64 {
        if self.wind_ramp <= 0.0 || t >= self.wind_ramp {
            1.0
        } else if t <= 0.0 {
            0.0
        } else {
            0.5 * (1.0 - (std::f64::consts::PI * t / self.wind_ramp).cos())
        }
    }

    fn gather_nodes(&mut self, e: usize, trial: bool) {
        let config = if trial { &self.trial } else { &self.committed };
        gather_into(self.model, config, e, &mut self.gather);
    }

    /// g, K, D at the trial (or committed) configuration.
    fn internal(
        &mut self,
        v: &[f64],
        t: f64,
        g: &mut [f64],
        k: Option<&mut [f64]>,
        d: Option<&mut [f64]>,
        with_wind: bool,
    ) -> Result<(), EvalError> {
        // On a pool thread for the whole evaluation: the window loops then
        // start their parallel parts without a hand-over from this thread
        // to the pool each time.
        let mut out = Ok(());
        rayon::scope(|_| out = self.internal_on_pool(v, t, g, k, d, with_wind));
        out
    }

    fn internal_on_pool(
        &mut self,
        v: &[f64],
        t: f64,
        g: &mut [f64],
        mut k: Option<&mut [f64]>,
        mut d: Option<&mut [f64]>,
        with_wind: bool,
    ) -> Result<(), EvalError> {
        g.fill(0.0);
        self.internal_force.fill(0.0);
        self.aero_force.fill(0.0);
        if let Some(k) = k.as_deref_mut() {
            k.fill(0.0);
        }
        if let Some(d) = d.as_deref_mut() {
            d.fill(0.0);
        }
        let ctx = ElementContext { temperature_change: self.model.temperature_change };
        let model = self.model;
        let config = &self.trial;
        let tangent = k.is_some();
        let clock = std::time::Instant::now();
        for first in (0..model.elements.len()).step_by(WINDOW) {
            let count = WINDOW.min(model.elements.len() - first);
            let blocks = &mut self.blocks[..count];
            blocks.par_iter_mut().with_min_len(ELEMENTS_PER_TASK).enumerate().for_each(|(i, b)| {
                let e = first + i;
                gather_into(model, config, e, &mut b.nodes);
                let element = &model.elements[e];
                let m = b.nodes.len() * DOF_PER_NODE;
                if tangent {
                    element.tangent(&ctx, &b.nodes, &mut b.f[..m], &mut b.k[..m * m]);
                } else {
                    element.internal_force(&ctx, &b.nodes, &mut b.f[..m]);
                }
            });
            for (i, b) in blocks.iter().enumerate() {
                let m = b.nodes.len() * DOF_PER_NODE;
                if let Some(k) = k.as_deref_mut() {
                    self.assembler.add_matrix(first + i, &b.k[..m * m], k);
                }
                self.assembler.add_vector(first + i, &b.f[..m], &mut self.internal_force);
            }
        }
        self.loop_seconds[0] += clock.elapsed().as_secs_f64();
        g.copy_from_slice(&self.internal_force);
        for (i, eq) in self.model.dofs.all().iter().enumerate() {
            if let Some(eq) = eq {
                g[*eq] -= self.model.case_load[i];
            }
        }
        let scale = self.wind_factor(t).sqrt();
        if let (true, Some(wind), true) = (with_wind, self.model.wind, scale > 0.0) {
            let damping = d.is_some();
            let clock = std::time::Instant::now();
            for window in self.aero_elements.chunks(WINDOW) {
                let blocks = &mut self.aero_blocks[..window.len()];
                blocks.par_iter_mut().with_min_len(ELEMENTS_PER_TASK).zip(window).for_each(|(b, &e)| {
                    let Some(aero) = &model.aero[e] else { return };
                    gather_into(model, config, e, &mut b.nodes);
                    let ids = model.elements[e].nodes();
                    b.velocity = [node_velocity(model, v, ids[0]), node_velocity(model, v, ids[1])];
                    let flow = Flow { wind: &wind, scale };
                    let mut run = || -> Result<(), glaze_aero::TableError> {
                        if tangent {
                            element_jacobian(
                                aero,
                                flow,
                                &b.nodes,
                                &b.velocity,
                                Derivative::Displacement,
                                &mut b.f,
                                &mut b.k,
                            )?;
                            b.k.iter_mut().for_each(|x| *x = -*x);
                        }
                        if damping {
                            element_jacobian(
                                aero,
                                flow,
                                &b.nodes,
                                &b.velocity,
                                Derivative::Velocity,
                                &mut b.f,
                                &mut b.d,
                            )?;
                            b.d.iter_mut().for_each(|x| *x = -*x);
                        }
                        if !tangent && !damping {
                            element_load(aero, flow, &b.nodes, &b.velocity, &mut b.f)?;
                        }
                        Ok(())
                    };
                    b.failure = run().err().map(|err| format!("aerodynamic load of element {e}: {err}"));
                });
                for (b, &e) in blocks.iter().zip(window) {
                    if let Some(message) = &b.failure {
                        return Err(EvalError { message: message.clone() });
                    }
                    if let Some(k) = k.as_deref_mut() {
                        self.assembler.add_matrix(e, &b.k, k);
                    }
                    if let Some(d) = d.as_deref_mut() {
                        self.assembler.add_matrix(e, &b.d, d);
                    }
                    self.assembler.add_vector(e, &b.f, &mut self.aero_force);
                }
            }
            self.loop_seconds[1] += clock.elapsed().as_secs_f64();
            for (gi, fa) in g.iter_mut().zip(&self.aero_force) {
                *gi -= fa;
            }
        }
        if let Some(bad) = g.iter().position(|x| !x.is_finite()) {
            return Err(EvalError { message: format!("non-finite force at equation {bad}") });
        }
        Ok(())
    }

    /// Applies `dq` to `base`, giving `out` (translations add, rotations compose).
    fn compose(model: &Model, base: &Configuration, dq: &[f64], out: &mut Configuration) {
        for n in 0..model.node_count() {
            let mut theta = Vector3::zeros();
            out.positions[n] = base.positions[n];
            for d in 0..DOF_PER_NODE {
                if let Some(eq) = model.dofs.equation(n, d) {
                    if d < 3 {
                        out.positions[n][d] += dq[eq];
                    } else {
                        theta[d - 3] = dq[eq];
                    }
                }
            }
            out.rotations[n] = if theta == Vector3::zeros() {
                base.rotations[n]
            } else {
                so3::exp(&theta) * base.rotations[n]
            };
        }
    }

    /// Wall time spent in the element loop (internal forces and tangents)
    /// and in the aerodynamic loop (loads and their Jacobians), s.
    pub fn loop_seconds(&self) -> [f64; 2] {
        self.loop_seconds
    }

    /// The model.
    pub fn model(&self) -> &Model {
        self.model
    }
}

impl SecondOrderSystem for DynamicSystem<'_> {
    fn dim(&self) -> usize {
        self.model.dofs.len()
    }

    fn pattern(&self) -> &SparsityPattern {
        &self.pattern
    }

    fn mass(&self) -> &[f64] {
        &self.mass
    }

    fn damping(&self) -> &[f64] {
        &self.damping
    }

    fn set_increment(&mut self, dq: &[f64]) {
        let model = self.model;
        Self::compose(model, &self.committed, dq, &mut self.trial);
    }

    fn evaluate(
        &mut self,
        t: f64,
        v: &[f64],
        g: &mut [f64],
        stiffness: Option<&mut [f64]>,
        damping: Option<&mut [f64]>,
    ) -> Result<(), EvalError> {
        self.internal(v, t, g, stiffness, damping, true)
    }

    fn commit(&mut self) {
        self.committed.clone_from(&self.trial);
    }

    /// The norm of the weight on the free DOF, in N: the force level
    /// against which the residual of a step is judged (the internal and
    /// external forces nearly cancel, so their difference is no scale).
    fn force_scale(&self) -> f64 {
        self.weight_norm
    }

    fn reject(&mut self) {
        self.trial.clone_from(&self.committed);
    }
}

/// Velocity and angular velocity of `node` from the equation-space velocity `v`.
pub(crate) fn node_velocity(model: &Model, v: &[f64], node: usize) -> NodeVelocity {
    let mut out = NodeVelocity::default();
    for d in 0..DOF_PER_NODE {
        if let Some(eq) = model.dofs.equation(node, d) {
            if d < 3 {
                out.velocity[d] = v[eq];
            } else {
                out.angular[d - 3] = v[eq];
            }
        }
    }
    out
}
