//! Shared helpers of the unit tests: a seeded generator, random states and
//! the finite-difference tangent of any element.

use crate::{so3, Element, ElementContext, NodeState};
use nalgebra::{Matrix3, Vector3};

/// A 64-bit linear congruential generator (Knuth's MMIX constants), so
/// that every test draws the same numbers on every machine.
pub struct Lcg(u64);

impl Lcg {
    pub fn new(seed: u64) -> Self {
        Self(seed.wrapping_mul(6364136223846793005).wrapping_add(1))
    }

    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        self.0 = self.0.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Uniform in [lo, hi).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.uniform()
    }

    /// Vector with components uniform in [−a, a).
    pub fn vector(&mut self, a: f64) -> Vector3<f64> {
        Vector3::new(self.range(-a, a), self.range(-a, a), self.range(-a, a))
    }

    /// Unit vector, uniform on the sphere.
    pub fn direction(&mut self) -> Vector3<f64> {
        loop {
            let v = self.vector(1.0);
            let n = v.norm();
            if n > 0.1 && n <= 1.0 {
                return v / n;
            }
        }
    }

    /// Random rotation of angle up to `max_angle` (rad).
    pub fn rotation(&mut self, max_angle: f64) -> Matrix3<f64> {
        let axis = self.direction();
        so3::exp(&(axis * self.range(0.0, max_angle)))
    }
}

/// Applies a rigid motion `x ↦ q x + c`, `R ↦ q R` to every node.
pub fn rigid_motion(nodes: &[NodeState], q: &Matrix3<f64>, c: &Vector3<f64>) -> Vec<NodeState> {
    nodes.iter().map(|n| NodeState { x0: n.x0, x: q * n.x + c, rotation: q * n.rotation }).collect()
}

/// Perturbs DOF `dof` of `nodes` by `h`: additive for translations,
/// `R ← exp(h e_i) R` for rotations.
pub fn perturb(nodes: &[NodeState], dof: usize, h: f64) -> Vec<NodeState> {
    let mut out = nodes.to_vec();
    let (node, local) = (dof / 6, dof % 6);
    if local < 3 {
        out[node].x[local] += h;
    } else {
        let mut e = Vector3::zeros();
        e[local - 3] = h;
        out[node].rotation = so3::exp(&e) * out[node].rotation;
    }
    out
}

/// Central-difference tangent `∂f/∂[δu, δθ]` (row-major), step `h` for
/// translations scaled by `length` (m) and `h` for rotations (rad).
pub fn fd_tangent(
    element: &dyn Element,
    ctx: &ElementContext,
    nodes: &[NodeState],
    h: f64,
    length: f64,
) -> Vec<f64> {
    let n = 6 * nodes.len();
    let mut k = vec![0.0; n * n];
    let mut fp = vec![0.0; n];
    let mut fm = vec![0.0; n];
    for j in 0..n {
        let step = if j % 6 < 3 { h * length } else { h };
        element.internal_force(ctx, &perturb(nodes, j, step), &mut fp);
        element.internal_force(ctx, &perturb(nodes, j, -step), &mut fm);
        for i in 0..n {
            k[i * n + j] = (fp[i] - fm[i]) / (2.0 * step);
        }
    }
    k
}

/// Largest absolute difference between the analytic tangent and central
/// differences, relative to the largest tangent entry, with the entries
/// scaled to consistent units (forces per m, moments per rad) by `length`.
pub fn tangent_error(
    element: &dyn Element,
    ctx: &ElementContext,
    nodes: &[NodeState],
    h: f64,
    length: f64,
) -> f64 {
    let n = 6 * nodes.len();
    let mut f = vec![0.0; n];
    let mut k = vec![0.0; n * n];
    element.tangent(ctx, nodes, &mut f, &mut k);
    let kfd = fd_tangent(element, ctx, nodes, h, length);
    // Scale row i, column j by L for translational rows/cols so that every
    // entry has units of a moment per rad.
    let s = |i: usize| if i % 6 < 3 { length } else { 1.0 };
    let (mut err, mut big) = (0.0_f64, 0.0_f64);
    for i in 0..n {
        for j in 0..n {
            let w = s(i) * s(j);
            err = err.max((k[i * n + j] - kfd[i * n + j]).abs() * w);
            big = big.max(k[i * n + j].abs() * w);
        }
    }
    err / big.max(f64::MIN_POSITIVE)
}
