//! The static equilibrium problem of a [`Model`] as a
//! [`NonlinearSystem`]: residual `r(x, λ) = f_int(x, λ ΔT) − f_ext(λ)` with
//! `f_ext(λ) = f_stringing + λ (f_case − f_stringing)`.
//!
//! λ = 0 is the stringing state, in which the form-found mesh is already in
//! equilibrium; λ = 1 is the load case. With [`LoadPath::Wind`] weight, ice
//! and temperature stay at the load case and λ ramps the mean wind's
//! dynamic pressure (its velocity scaled by √λ): the quasi-steady loads
//! of [`crate::aero_loads`] join the residual and their derivatives the
//! (unsymmetric) tangent.

use crate::aero_loads::{element_jacobian, element_load, Derivative, Flow, NodeVelocity};
use crate::model::{Model, DOF_PER_NODE};
use glaze_elements::{so3, ElementContext, NodeState};
use glaze_solvers::{Assembler, EvalError, NonlinearSystem, SparsityPattern};
use nalgebra::{Matrix3, Vector3};

/// Current configuration: positions and rotations of all nodes.
#[derive(Clone, Debug, PartialEq)]
pub struct Configuration {
    /// Positions, in m.
    pub positions: Vec<Vector3<f64>>,
    /// Rotations from the reference triads.
    pub rotations: Vec<Matrix3<f64>>,
}

impl Configuration {
    /// The reference (stringing) configuration of `model`.
    pub fn reference(model: &Model) -> Self {
        Self { positions: model.nodes.clone(), rotations: vec![Matrix3::identity(); model.nodes.len()] }
    }
}

/// What the load factor λ ramps.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LoadPath {
    /// Weight, ice and temperature from the stringing state; no wind.
    Gravity,
    /// The load case's weight, ice and temperature, with the mean wind ramped.
    Wind,
}

/// Static equilibrium of a model along the load path.
pub struct StaticSystem<'m> {
    /// What λ ramps.
    pub path: LoadPath,
    aero_norm: f64,
    model: &'m Model,
    pattern: SparsityPattern,
    assembler: Assembler,
    /// Current configuration.
    pub config: Configuration,
    saved: Configuration,
    f_local: Vec<f64>,
    k_local: Vec<f64>,
    gather: Vec<NodeState>,
}

impl<'m> StaticSystem<'m> {
    /// Sets up the system starting from the reference configuration.
    pub fn new(model: &'m Model) -> Self {
        let element_equations: Vec<Vec<Option<usize>>> =
            model.elements.iter().map(|e| model.dofs.element_equations(e.nodes())).collect();
        let pattern = SparsityPattern::from_dof_groups(
            model.dofs.len(),
            element_equations.iter().map(|v| v.as_slice()),
        );
        let assembler = Assembler::new(&pattern, element_equations.iter().map(|v| v.as_slice()));
        let max_nodes = model.elements.iter().map(|e| e.nodes().len()).max().unwrap_or(0);
        let m = max_nodes * DOF_PER_NODE;
        let config = Configuration::reference(model);
        Self {
            path: LoadPath::Gravity,
            aero_norm: 0.0,
            model,
            pattern,
            assembler,
            saved: config.clone(),
            config,
            f_local: vec![0.0; m],
            k_local: vec![0.0; m * m],
            gather: Vec::with_capacity(max_nodes),
        }
    }

    /// Element context at load factor λ.
    pub fn context(&self, lambda: f64) -> ElementContext {
        let t = match self.path {
            LoadPath::Gravity => lambda,
            LoadPath::Wind => 1.0,
        };
        ElementContext { temperature_change: t * self.model.temperature_change }
    }

    /// Wind velocity scale at λ (0 without wind).
    pub fn wind_scale(&self, lambda: f64) -> f64 {
        match (self.path, &self.model.wind) {
            (LoadPath::Wind, Some(_)) => lambda.max(0.0).sqrt(),
            _ => 0.0,
        }
    }

    /// External nodal load at λ for global DOF index `i` (node × 6 + d), in N or N·m.
    fn external(&self, lambda: f64, i: usize) -> f64 {
        let (s, c) = (self.model.stringing_load[i], self.model.case_load[i]);
        match self.path {
            LoadPath::Gravity => s + lambda * (c - s),
            LoadPath::Wind => c,
        }
    }

    /// Aerodynamic nodal loads at λ at every DOF (length `6 × nodes`), at rest.
    pub fn full_aero_load(&mut self, lambda: f64) -> Vec<f64> {
        let mut out = vec![0.0; self.model.node_count() * DOF_PER_NODE];
        let scale = self.wind_scale(lambda);
        let Some(wind) = self.model.wind else { return out };
        if scale == 0.0 {
            return out;
        }
        for e in 0..self.model.elements.len() {
            let Some(aero) = &self.model.aero[e] else { continue };
            self.gather_nodes(e);
            let m = 2 * DOF_PER_NODE;
            if element_load(
                aero,
                Flow { wind: &wind, scale },
                &self.gather,
                &[NodeVelocity::default(); 2],
                &mut self.f_local[..m],
            )
            .is_err()
            {
                continue;
            }
            for (a, &n) in self.model.elements[e].nodes().iter().enumerate() {
                for d in 0..DOF_PER_NODE {
                    out[n * DOF_PER_NODE + d] += self.f_local[a * DOF_PER_NODE + d];
                }
            }
        }
        out
    }

    fn gather_nodes(&mut self, e: usize) {
        self.gather.clear();
        for &n in self.model.elements[e].nodes() {
            self.gather.push(NodeState {
                x0: self.model.nodes[n],
                x: self.config.positions[n],
                rotation: self.config.rotations[n],
            });
        }
    }

    /// Internal force at every DOF (restrained ones too), length `6 × nodes`.
    pub fn full_internal_force(&mut self, lambda: f64) -> Vec<f64> {
        let ctx = self.context(lambda);
        let mut out = vec![0.0; self.model.node_count() * DOF_PER_NODE];
        for e in 0..self.model.elements.len() {
            self.gather_nodes(e);
            let element = &self.model.elements[e];
            let m = element.nodes().len() * DOF_PER_NODE;
            element.internal_force(&ctx, &self.gather, &mut self.f_local[..m]);
            for (a, &n) in element.nodes().iter().enumerate() {
                for d in 0..DOF_PER_NODE {
                    out[n * DOF_PER_NODE + d] += self.f_local[a * DOF_PER_NODE + d];
                }
            }
        }
        out
    }

    /// Support reactions at λ: force exerted by the supports on each
    /// restrained node, `f_int − f_ext` there, length `6 × nodes` (zero at free DOF).
    pub fn reactions(&mut self, lambda: f64) -> Vec<f64> {
        let mut r = self.full_internal_force(lambda);
        let aero = self.full_aero_load(lambda);
        for (i, value) in r.iter_mut().enumerate() {
            let (node, d) = (i / DOF_PER_NODE, i % DOF_PER_NODE);
            *value = if self.model.restrained[node][d] {
                *value - self.external(lambda, i) - aero[i]
            } else {
                0.0
            };
        }
        r
    }
}

impl NonlinearSystem for StaticSystem<'_> {
    fn dim(&self) -> usize {
        self.model.dofs.len()
    }

    fn pattern(&self) -> &SparsityPattern {
        &self.pattern
    }

    fn evaluate(
        &mut self,
        lambda: f64,
        residual: &mut [f64],
        mut tangent: Option<&mut [f64]>,
    ) -> Result<(), EvalError> {
        residual.fill(0.0);
        if let Some(t) = tangent.as_deref_mut() {
            t.fill(0.0);
        }
        let ctx = self.context(lambda);
        for e in 0..self.model.elements.len() {
            self.gather_nodes(e);
            let element = &self.model.elements[e];
            let m = element.nodes().len() * DOF_PER_NODE;
            match tangent.as_deref_mut() {
                Some(t) => {
                    element.tangent(&ctx, &self.gather, &mut self.f_local[..m], &mut self.k_local[..m * m]);
                    self.assembler.add_matrix(e, &self.k_local[..m * m], t);
                }
                None => element.internal_force(&ctx, &self.gather, &mut self.f_local[..m]),
            }
            self.assembler.add_vector(e, &self.f_local[..m], residual);
        }
        let scale = self.wind_scale(lambda);
        if let (Some(wind), true) = (self.model.wind, scale > 0.0) {
            let mut norm2 = 0.0;
            let m = 2 * DOF_PER_NODE;
            let rest = [NodeVelocity::default(); 2];
            for e in 0..self.model.elements.len() {
                let Some(aero) = &self.model.aero[e] else { continue };
                self.gather_nodes(e);
                let outcome = match tangent.as_deref_mut() {
                    Some(t) => {
                        let r = element_jacobian(
                            aero,
                            Flow { wind: &wind, scale },
                            &self.gather,
                            &rest,
                            Derivative::Displacement,
                            &mut self.f_local[..m],
                            &mut self.k_local[..m * m],
                        );
                        // r = f_int − f_ext − f_aero: the tangent takes −∂f_aero/∂x.
                        self.k_local[..m * m].iter_mut().for_each(|v| *v = -*v);
                        self.assembler.add_matrix(e, &self.k_local[..m * m], t);
                        r
                    }
                    None => element_load(
                        aero,
                        Flow { wind: &wind, scale },
                        &self.gather,
                        &rest,
                        &mut self.f_local[..m],
                    ),
                };
                outcome.map_err(|err| EvalError {
                    message: format!("aerodynamic load of element {e}: {err}"),
                })?;
                norm2 += self.f_local[..m].iter().map(|v| v * v).sum::<f64>();
                self.f_local[..m].iter_mut().for_each(|v| *v = -*v);
                self.assembler.add_vector(e, &self.f_local[..m], residual);
            }
            self.aero_norm = norm2.sqrt();
        }
        for (i, eq) in self.model.dofs.all().iter().enumerate() {
            if let Some(eq) = eq {
                residual[*eq] -= self.external(lambda, i);
            }
        }
        if let Some(bad) = residual.iter().position(|v| !v.is_finite()) {
            return Err(EvalError { message: format!("non-finite residual at equation {bad}") });
        }
        Ok(())
    }

    fn apply_increment(&mut self, dx: &[f64]) {
        for n in 0..self.model.node_count() {
            let mut theta = Vector3::zeros();
            for d in 0..DOF_PER_NODE {
                if let Some(eq) = self.model.dofs.equation(n, d) {
                    if d < 3 {
                        self.config.positions[n][d] += dx[eq];
                    } else {
                        theta[d - 3] = dx[eq];
                    }
                }
            }
            if theta != Vector3::zeros() {
                self.config.rotations[n] = so3::exp(&theta) * self.config.rotations[n];
            }
        }
    }

    fn save_state(&mut self) {
        self.saved.clone_from(&self.config);
    }

    fn restore_state(&mut self) {
        self.config.clone_from(&self.saved);
    }

    fn force_scale(&self, lambda: f64) -> f64 {
        let n = self.model.stringing_load.len();
        let norm = (0..n).map(|i| self.external(lambda, i).powi(2)).sum::<f64>().sqrt();
        norm.max(self.aero_norm).max(1.0)
    }
}
