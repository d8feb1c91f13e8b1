//! Seeded pseudo-random numbers for tests (no `rand` dependency).

/// 64-bit linear congruential generator (Knuth's MMIX constants), output
/// taken from the high bits. Deterministic across platforms.
pub(crate) struct Lcg(u64);

impl Lcg {
    pub(crate) fn new(seed: u64) -> Self {
        Self(seed ^ 0x9e37_79b9_7f4a_7c15)
    }

    pub(crate) fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
        self.0
    }

    /// Uniform in [0, 1).
    pub(crate) fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Uniform in [−1, 1).
    pub(crate) fn symmetric(&mut self) -> f64 {
        2.0 * self.uniform() - 1.0
    }

    /// Uniform integer in [0, n).
    pub(crate) fn below(&mut self, n: usize) -> usize {
        ((self.next_u64() >> 32) as usize) % n
    }
}

use crate::{Assembler, EvalError, NonlinearSystem, SparsityPattern};

/// Force–elongation law of a nonlinear spring.
#[derive(Clone, Copy)]
pub(crate) enum Law {
    /// Hardening (Duffing) spring f = k e + c e³ (N, e in m).
    Cubic { k: f64, c: f64 },
    /// Softening spring with a force limit f = F tanh(e / e0).
    Tanh { f_max: f64, e0: f64 },
}

impl Law {
    fn force(self, e: f64) -> (f64, f64) {
        match self {
            Law::Cubic { k, c } => (k * e + c * e * e * e, k + 3.0 * c * e * e),
            Law::Tanh { f_max, e0 } => {
                let t = (e / e0).tanh();
                (f_max * t, f_max / e0 * (1.0 - t * t))
            }
        }
    }

    /// Elongation at force p (closed form).
    pub(crate) fn elongation(self, p: f64) -> f64 {
        match self {
            // Cardano for c e³ + k e − p = 0 (one real root since k, c > 0).
            Law::Cubic { k, c } => {
                let q = p / (2.0 * c);
                let d = (q * q + (k / (3.0 * c)).powi(3)).sqrt();
                (q + d).cbrt() + (q - d).cbrt()
            }
            Law::Tanh { f_max, e0 } => e0 * (p / f_max).atanh(),
        }
    }
}

/// Two nonlinear springs in series, ground – spring 1 – node 0 – spring 2 –
/// node 1, load λ·P on node 1 along the springs. DOF: displacements x0, x1 (m).
/// Both springs carry P at equilibrium, so x0 = e1(P), x1 = e1(P) + e2(P).
pub(crate) struct Springs {
    pub(crate) laws: [Law; 2],
    /// Full load P, N.
    pub(crate) p: f64,
    pub(crate) x: [f64; 2],
    saved: [f64; 2],
    /// The "table" of the springs ends at this elongation (m): beyond it
    /// `evaluate` returns Err, as a model does for an inverted element.
    pub(crate) e_max: Option<f64>,
    pattern: SparsityPattern,
    assembler: Assembler,
    /// Relative residual at every evaluation.
    pub(crate) history: Vec<f64>,
    pub(crate) restores: usize,
    pub(crate) saves: usize,
}

impl Springs {
    pub(crate) fn new(laws: [Law; 2], p: f64) -> Self {
        let groups: [&[Option<usize>]; 2] = [&[Some(0)], &[Some(0), Some(1)]];
        let pattern = SparsityPattern::from_dof_groups(2, groups);
        let assembler = Assembler::new(&pattern, groups);
        Self {
            laws,
            p,
            x: [0.0; 2],
            saved: [0.0; 2],
            e_max: None,
            pattern,
            assembler,
            history: Vec::new(),
            restores: 0,
            saves: 0,
        }
    }

    /// Closed-form equilibrium at load factor λ.
    pub(crate) fn exact(&self, lambda: f64) -> [f64; 2] {
        let e1 = self.laws[0].elongation(lambda * self.p);
        let e2 = self.laws[1].elongation(lambda * self.p);
        [e1, e1 + e2]
    }
}

impl NonlinearSystem for Springs {
    fn dim(&self) -> usize {
        2
    }

    fn pattern(&self) -> &SparsityPattern {
        &self.pattern
    }

    fn evaluate(
        &mut self,
        lambda: f64,
        residual: &mut [f64],
        tangent: Option<&mut [f64]>,
    ) -> Result<(), EvalError> {
        let e = [self.x[0], self.x[1] - self.x[0]];
        if let Some(e_max) = self.e_max {
            for (i, ei) in e.iter().enumerate() {
                if ei.abs() > e_max {
                    return Err(EvalError::new(format!(
                        "spring {} elongation {ei:.3} m beyond its table (±{e_max} m)",
                        i + 1
                    )));
                }
            }
        }
        let (f1, k1) = self.laws[0].force(e[0]);
        let (f2, k2) = self.laws[1].force(e[1]);
        residual.fill(0.0);
        self.assembler.add_vector(0, &[f1], residual);
        self.assembler.add_vector(1, &[-f2, f2], residual);
        residual[1] -= lambda * self.p;
        if let Some(t) = tangent {
            t.fill(0.0);
            self.assembler.add_matrix(0, &[k1], t);
            self.assembler.add_matrix(1, &[k2, -k2, -k2, k2], t);
        }
        let r = (residual[0] * residual[0] + residual[1] * residual[1]).sqrt();
        self.history.push(r / self.force_scale(lambda));
        Ok(())
    }

    fn apply_increment(&mut self, dx: &[f64]) {
        self.x[0] += dx[0];
        self.x[1] += dx[1];
    }

    fn save_state(&mut self) {
        self.saved = self.x;
        self.saves += 1;
    }

    fn restore_state(&mut self) {
        self.x = self.saved;
        self.restores += 1;
    }

    /// Applied load plus ground reaction, floored at 1e-3 P so λ = 0 is valid.
    fn force_scale(&self, lambda: f64) -> f64 {
        (2.0 * lambda * self.p).max(1e-3 * self.p)
    }
}
