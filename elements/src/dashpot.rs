//! A linear viscous dashpot: a force `c·(v·e) e` against the relative
//! velocity along its line `e`, between two nodes or from one node to a
//! fixed point. It has no stiffness and no mass; its damping matrix is
//! taken about the state it is given (the static state of a run), so the
//! line of action is fixed during the motion: the linear dashpot of small
//! motions about that state.

use crate::element::{Element, ElementContext, ElementOutput, NodeState};
use crate::error::ElementError;
use nalgebra::Vector3;

/// A dashpot of coefficient `c` (N·s/m).
#[derive(Clone, Debug, PartialEq)]
pub struct Dashpot {
    nodes: Vec<usize>,
    coefficient: f64,
    /// Line of action of a dashpot to a fixed point (unit vector).
    fixed_direction: Option<Vector3<f64>>,
}

fn check_coefficient(c: f64) -> Result<f64, ElementError> {
    if c.is_finite() && c > 0.0 {
        Ok(c)
    } else {
        Err(ElementError::InvalidValue {
            kind: "dashpot",
            parameter: "coefficient",
            value: c,
            expected: "a positive finite damping coefficient in N·s/m",
        })
    }
}

impl Dashpot {
    /// A dashpot between nodes `a` and `b`, along the line joining them.
    pub fn between(a: usize, b: usize, coefficient: f64) -> Result<Self, ElementError> {
        Ok(Self { nodes: vec![a, b], coefficient: check_coefficient(coefficient)?, fixed_direction: None })
    }

    /// A dashpot from `node` to a fixed point, along `direction`.
    pub fn grounded(node: usize, direction: Vector3<f64>, coefficient: f64) -> Result<Self, ElementError> {
        let n = direction.norm();
        if !(n.is_finite() && n > 0.0) {
            return Err(ElementError::InvalidValue {
                kind: "dashpot",
                parameter: "direction",
                value: n,
                expected: "a direction of non-zero finite length",
            });
        }
        Ok(Self {
            nodes: vec![node],
            coefficient: check_coefficient(coefficient)?,
            fixed_direction: Some(direction / n),
        })
    }

    /// The coefficient, N·s/m.
    pub fn coefficient(&self) -> f64 {
        self.coefficient
    }
}

impl Element for Dashpot {
    fn kind(&self) -> &'static str {
        "dashpot"
    }

    fn nodes(&self) -> &[usize] {
        &self.nodes
    }

    fn uses_rotations(&self) -> bool {
        false
    }

    fn internal_force(&self, _ctx: &ElementContext, _nodes: &[NodeState], f: &mut [f64]) {
        f.fill(0.0);
    }

    fn tangent(&self, _ctx: &ElementContext, _nodes: &[NodeState], f: &mut [f64], k: &mut [f64]) {
        f.fill(0.0);
        k.fill(0.0);
    }

    fn lumped_mass(&self, _nodes: &[NodeState], m: &mut [f64]) {
        m.fill(0.0);
    }

    fn output(&self, _ctx: &ElementContext, _nodes: &[NodeState]) -> ElementOutput {
        ElementOutput::default()
    }

    fn strain_energy(&self, _ctx: &ElementContext, _nodes: &[NodeState]) -> f64 {
        0.0
    }

    fn unstretched_length(&self) -> f64 {
        0.0
    }

    fn mass_per_length(&self) -> f64 {
        0.0
    }

    fn damping_matrix(&self, nodes: &[NodeState], c: &mut [f64]) -> bool {
        let e = match self.fixed_direction {
            Some(d) => d,
            None => {
                let d = nodes[1].x - nodes[0].x;
                let n = d.norm();
                if n == 0.0 {
                    c.fill(0.0);
                    return true;
                }
                d / n
            }
        };
        let size = 6 * self.nodes.len();
        c.fill(0.0);
        for (a, sa) in [(0usize, 1.0f64), (1, -1.0)].into_iter().take(self.nodes.len()) {
            for (b, sb) in [(0usize, 1.0f64), (1, -1.0)].into_iter().take(self.nodes.len()) {
                for i in 0..3 {
                    for j in 0..3 {
                        c[(6 * a + i) * size + 6 * b + j] = sa * sb * self.coefficient * e[i] * e[j];
                    }
                }
            }
        }
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn states(a: Vector3<f64>, b: Vector3<f64>) -> Vec<NodeState> {
        vec![NodeState::at_rest(a), NodeState::at_rest(b)]
    }

    /// The force c(v·e)e of a dashpot (its definition): only the relative
    /// velocity along the line is resisted; a common velocity of both ends,
    /// or one across the line, meets no force.
    #[test]
    fn resists_only_relative_velocity_along_its_line() {
        let d = Dashpot::between(0, 1, 500.0).unwrap();
        let nodes = states(Vector3::zeros(), Vector3::new(3.0, 4.0, 0.0));
        let mut c = vec![0.0; 144];
        assert!(d.damping_matrix(&nodes, &mut c));
        let force = |v: [f64; 12]| -> Vec<f64> {
            (0..12).map(|i| (0..12).map(|j| c[i * 12 + j] * v[j]).sum()).collect()
        };
        let common = force([1.0, 2.0, 3.0, 0.0, 0.0, 0.0, 1.0, 2.0, 3.0, 0.0, 0.0, 0.0]);
        assert!(common.iter().all(|f| f.abs() < 1e-12));
        let across = force(
            [0.0; 6]
                .into_iter()
                .chain([-4.0, 3.0, 0.0, 0.0, 0.0, 0.0])
                .collect::<Vec<_>>()
                .try_into()
                .unwrap(),
        );
        assert!(across.iter().all(|f| f.abs() < 1e-12));
        // Pulling node 1 away along e at 2 m/s: force −c·2 e on node 1, +c·2 e on node 0.
        let along = force(
            [0.0; 6]
                .into_iter()
                .chain([1.2, 1.6, 0.0, 0.0, 0.0, 0.0])
                .collect::<Vec<_>>()
                .try_into()
                .unwrap(),
        );
        assert!((along[6] - 500.0 * 2.0 * 0.6).abs() < 1e-9 && (along[7] - 500.0 * 2.0 * 0.8).abs() < 1e-9);
        assert!((along[0] + along[6]).abs() < 1e-9 && (along[1] + along[7]).abs() < 1e-9);
        // Symmetric and positive semi-definite: vᵀCv = c (Δv·e)² ≥ 0.
        for i in 0..12 {
            for j in 0..12 {
                assert_eq!(c[i * 12 + j], c[j * 12 + i]);
            }
        }
    }

    #[test]
    fn grounded_dashpot_acts_along_its_direction() {
        let d = Dashpot::grounded(0, Vector3::new(0.0, 0.0, 2.0), 80.0).unwrap();
        let mut c = vec![0.0; 36];
        assert!(d.damping_matrix(&[NodeState::at_rest(Vector3::zeros())], &mut c));
        assert_eq!(c[2 * 6 + 2], 80.0);
        assert_eq!(c.iter().filter(|x| **x != 0.0).count(), 1);
        assert!(Dashpot::grounded(0, Vector3::zeros(), 1.0).is_err());
        assert!(Dashpot::between(0, 1, -1.0).is_err());
    }
}
