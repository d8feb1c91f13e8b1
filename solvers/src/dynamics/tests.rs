//! Tests of the time integrators against closed forms, the schemes' own
//! amplification matrices (derived here, independently of the integrator
//! code) and their published properties.
//!
//! Sources of the check values:
//!
//! - Amplification matrix of the unified α-form for the undamped SDOF
//!   a + ω²q = 0 with X = (q, h v, h² a): L X_{n+1} = R X_n, from the Newmark
//!   relations and the residual of Chung & Hulbert (1993), written out in
//!   [`amplification_eigenvalues`]. λ = exp(Ω̄(−ξ̄ ± i)) (Hughes, *The Finite
//!   Element Method*, 1987, §9.3, from memory) gives ξ̄ = −ln|λ| / arg λ and
//!   T̄/T − 1 = Ω / arg λ − 1.
//! - Small-Ω expansions: derived for this test by series expansion of
//!   det(R − λL) with λ = exp(z), z = Σ c_k Ω^k, solved order by order
//!   (sympy 1.14; script at the end of these notes):
//!
//!   ```text
//!   generalised-α  ξ̄     = (1−ρ∞)³/(2(1+ρ∞)³) Ω³ + (ρ∞−1)³(85ρ∞²−154ρ∞+85)/(48(1+ρ∞)⁵) Ω⁵
//!                  T̄/T−1 = (11ρ∞²−14ρ∞+11)/(24(1+ρ∞)²) Ω²
//!                          − (4937ρ∞⁴−18772ρ∞³+28182ρ∞²−18772ρ∞+4937)/(5760(1+ρ∞)⁴) Ω⁴
//!   HHT-α          ξ̄     = −α(1+α)²/8 Ω³ − α(1+α)²(27α²+18α−10)/192 Ω⁵
//!                  T̄/T−1 = (2−6α−9α²)/24 Ω² − (405α⁴+180α³−720α²−480α+32)/5760 Ω⁴
//!   ```
//!
//!   Checks on these against memory: both reduce to the trapezoidal rule's
//!   T̄/T − 1 = Ω²/12 at α = 0 / ρ∞ = 1 and Newmark's ξ̄ = (γ − ½)Ω/2 has an
//!   O(Ω) term that γ = ½ − α (HHT) cancels against α_f (Hughes 1987 §9.3,
//!   Hilber et al. 1977: second-order accuracy, dissipation O(Ω³) at low
//!   frequency; from memory). Note: ξ̄ ≈ −αΩ/2 is the damping of *plain*
//!   Newmark with HHT's γ = ½ − α, not of HHT-α.
//! - Spectral radius at Ω → ∞: ρ∞ for generalised-α (Chung & Hulbert 1993),
//!   (1 + α)/(1 − α) for HHT-α (Hilber et al. 1977).
//! - Trapezoidal eigenvalues λ = (1 − Ω²/4 ± iΩ)/(1 + Ω²/4) (Cayley transform
//!   of the rotation generator; elementary).
//! - Exact solutions: damped SDOF e^{−ξωt} cos(ω_d t), ω_d = ω√(1−ξ²)
//!   (Clough & Penzien, *Dynamics of Structures*); gyroscopic pair through
//!   z = x + iy; pendulum period 4K(sin(θ₀/2))/ω₀ with K by the
//!   arithmetic–geometric mean (standard; from memory); Duffing period by
//!   quadrature of the energy integral; van der Pol limit cycle amplitude 2
//!   for small μ (first-order averaging, Strogatz, *Nonlinear Dynamics and
//!   Chaos*, 1994, §7.6; from memory).
//!
//! The expansion script (sympy; `subs` chooses the scheme, e.g. HHT
//! `{am: 0, af: -a, g: 1/2 - a, b: (1 - a)**2/4}`):
//!
//! ```text
//! W, am, af, b, g, a = symbols('Omega alpha_m alpha_f beta gamma alpha', real=True); lam = Symbol('lambda')
//! L = Matrix([[1,0,-b],[0,1,-g],[(1-af)*W**2,0,1-am]]); R = Matrix([[1,1,S(1)/2-b],[0,1,1-g],[-af*W**2,0,-am]])
//! p = expand((R - lam*L).det()).subs(subs); cs = symbols('c1:7'); z = sum(cs[k]*W**(k+1) for k in range(6))
//! poly = Poly(expand(series(p.subs(lam, exp(z)), W, 0, 9).removeO()), W); sol = {}
//! for c in poly.all_coeffs()[::-1]:          # order by order; c1 = +i picks the principal root
//!     c = expand(c.subs(sol)); free = [s for s in cs if s in c.free_symbols]
//!     if free: r = solve(c, free[0]); sol[free[0]] = [x for x in r if im(x) > 0][0] if free[0] == cs[0] else r[0]
//! zz = expand(z.subs(sol)); xi = series(-re(zz)/im(zz), W, 0, 6); period = series(W/im(zz) - 1, W, 0, 5)
//! ```

use super::*;
use crate::{EvalError, NewtonSettings, SolverError, SparsityPattern};
use std::f64::consts::PI;

// ---------------------------------------------------------------------------
// Test systems
// ---------------------------------------------------------------------------

fn dense_pattern(n: usize) -> SparsityPattern {
    let all: Vec<Option<usize>> = (0..n).map(Some).collect();
    SparsityPattern::from_dof_groups(n, [&all[..]])
}

/// Values on `pattern` of the dense row-major n×n matrix `rows`.
fn values(pattern: &SparsityPattern, rows: &[f64]) -> Vec<f64> {
    let n = pattern.dim();
    let mut v = vec![0.0; pattern.nnz()];
    for i in 0..n {
        for j in 0..n {
            v[pattern.value_index(i, j).expect("dense pattern")] = rows[i * n + j];
        }
    }
    v
}

fn mat_vec(pattern: &SparsityPattern, vals: &[f64], x: &[f64]) -> Vec<f64> {
    let mut y = vec![0.0; x.len()];
    pattern.mul_vec(vals, x, &mut y);
    y
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// Linear M a + C v + D v + K q = 0 on a dense pattern, with failure injection.
struct Linear {
    pattern: SparsityPattern,
    m: Vec<f64>,
    c: Vec<f64>,
    k: Vec<f64>,
    /// Constant ∂g/∂v passed as D (g = K q + D v), possibly unsymmetric.
    d: Vec<f64>,
    q: Vec<f64>,
    trial: Vec<f64>,
    /// `evaluate` fails when ‖Δq‖∞ exceeds this (m).
    max_increment: Option<f64>,
    /// g becomes NaN at trial times beyond this (s).
    nan_after: Option<f64>,
    rejects: usize,
    commits: usize,
    largest_committed_increment: f64,
}

impl Linear {
    fn new(n: usize, m: &[f64], c: &[f64], k: &[f64], d: &[f64], q0: &[f64]) -> Self {
        let pattern = dense_pattern(n);
        Self {
            m: values(&pattern, m),
            c: values(&pattern, c),
            k: values(&pattern, k),
            d: values(&pattern, d),
            pattern,
            q: q0.to_vec(),
            trial: q0.to_vec(),
            max_increment: None,
            nan_after: None,
            rejects: 0,
            commits: 0,
            largest_committed_increment: 0.0,
        }
    }

    fn sdof(m: f64, c: f64, k: f64, q0: f64) -> Self {
        Self::new(1, &[m], &[c], &[k], &[0.0], &[q0])
    }

    /// ½ vᵀ M v + ½ qᵀ K q at the committed state, J.
    fn energy(&self, v: &[f64]) -> f64 {
        0.5 * dot(v, &mat_vec(&self.pattern, &self.m, v))
            + 0.5 * dot(&self.q, &mat_vec(&self.pattern, &self.k, &self.q))
    }
}

impl SecondOrderSystem for Linear {
    fn dim(&self) -> usize {
        self.q.len()
    }
    fn pattern(&self) -> &SparsityPattern {
        &self.pattern
    }
    fn mass(&self) -> &[f64] {
        &self.m
    }
    fn damping(&self) -> &[f64] {
        &self.c
    }
    fn set_increment(&mut self, dq: &[f64]) {
        for i in 0..self.q.len() {
            self.trial[i] = self.q[i] + dq[i];
        }
    }
    fn evaluate(
        &mut self,
        t: f64,
        v: &[f64],
        g: &mut [f64],
        stiffness: Option<&mut [f64]>,
        damping: Option<&mut [f64]>,
    ) -> Result<(), EvalError> {
        if let Some(limit) = self.max_increment {
            let inc = self.q.iter().zip(&self.trial).fold(0.0f64, |m, (a, b)| m.max((b - a).abs()));
            if inc > limit {
                return Err(EvalError::new(format!("increment {inc:.4} m beyond the model's {limit} m")));
            }
        }
        let kq = mat_vec(&self.pattern, &self.k, &self.trial);
        let dv = mat_vec(&self.pattern, &self.d, v);
        for i in 0..g.len() {
            g[i] = kq[i] + dv[i];
        }
        if self.nan_after.is_some_and(|t_nan| t > t_nan) {
            g[0] = f64::NAN;
        }
        if let Some(kk) = stiffness {
            kk.copy_from_slice(&self.k);
        }
        if let Some(dd) = damping {
            dd.copy_from_slice(&self.d);
        }
        Ok(())
    }
    fn commit(&mut self) {
        let inc = self.q.iter().zip(&self.trial).fold(0.0f64, |m, (a, b)| m.max((b - a).abs()));
        self.largest_committed_increment = self.largest_committed_increment.max(inc);
        self.q.copy_from_slice(&self.trial);
        self.commits += 1;
    }
    fn reject(&mut self) {
        self.rejects += 1;
    }
}

/// One-DOF nonlinear oscillators, m = 1 kg, no linear damping.
#[derive(Clone, Copy)]
enum Law {
    /// θ'' + ω₀² sin θ = 0 (rad, rad/s²).
    Pendulum { w2: f64 },
    /// q'' + k q + k3 q³ = 0 (per unit mass).
    Duffing { k: f64, k3: f64 },
    /// Van der Pol q'' − μ(1 − q²) q' + q = 0: negative damping that
    /// saturates; D = ∂g/∂v = −μ(1 − q²), K = ∂g/∂q = 1 + 2μ q v.
    VanDerPol { mu: f64 },
}

struct Nonlinear1 {
    pattern: SparsityPattern,
    m: Vec<f64>,
    c: Vec<f64>,
    law: Law,
    q: f64,
    trial: f64,
}

impl Nonlinear1 {
    fn new(law: Law, q0: f64) -> Self {
        Self { pattern: dense_pattern(1), m: vec![1.0], c: vec![0.0], law, q: q0, trial: q0 }
    }

    /// Conserved energy per unit mass (Pendulum, Duffing), J/kg.
    fn energy(&self, v: f64) -> f64 {
        let q = self.q;
        match self.law {
            Law::Pendulum { w2 } => 0.5 * v * v + w2 * (1.0 - q.cos()),
            Law::Duffing { k, k3 } => 0.5 * v * v + 0.5 * k * q * q + 0.25 * k3 * q.powi(4),
            Law::VanDerPol { .. } => f64::NAN,
        }
    }
}

impl SecondOrderSystem for Nonlinear1 {
    fn dim(&self) -> usize {
        1
    }
    fn pattern(&self) -> &SparsityPattern {
        &self.pattern
    }
    fn mass(&self) -> &[f64] {
        &self.m
    }
    fn damping(&self) -> &[f64] {
        &self.c
    }
    fn set_increment(&mut self, dq: &[f64]) {
        self.trial = self.q + dq[0];
    }
    fn evaluate(
        &mut self,
        _t: f64,
        v: &[f64],
        g: &mut [f64],
        stiffness: Option<&mut [f64]>,
        damping: Option<&mut [f64]>,
    ) -> Result<(), EvalError> {
        let (q, v) = (self.trial, v[0]);
        let (gv, kv, dv) = match self.law {
            Law::Pendulum { w2 } => (w2 * q.sin(), w2 * q.cos(), 0.0),
            Law::Duffing { k, k3 } => (k * q + k3 * q * q * q, k + 3.0 * k3 * q * q, 0.0),
            Law::VanDerPol { mu } => {
                (q - mu * (1.0 - q * q) * v, 1.0 + 2.0 * mu * q * v, -mu * (1.0 - q * q))
            }
        };
        g[0] = gv;
        if let Some(k) = stiffness {
            k[0] = kv;
        }
        if let Some(d) = damping {
            d[0] = dv;
        }
        Ok(())
    }
    fn commit(&mut self) {
        self.q = self.trial;
    }
}

fn hht(alpha: f64) -> Scheme {
    Scheme::Hht { alpha }
}

fn ga(rho_inf: f64) -> Scheme {
    Scheme::GeneralizedAlpha { rho_inf }
}

/// Runs to `t_end` and returns the committed displacement history of DOF 0
/// (q₀ first) and the integrator.
fn run_linear(
    sys: Linear,
    v0: Vec<f64>,
    settings: IntegratorSettings,
    t_end: f64,
) -> (Vec<f64>, Integrator<Linear>) {
    let mut history = vec![sys.q[0]];
    let mut it = Integrator::new(sys, v0, 0.0, settings).unwrap();
    it.advance_to(t_end, |it, _| history.push(it.system().q[0])).unwrap();
    (history, it)
}

// ---------------------------------------------------------------------------
// The amplification matrix, independently of the integrator
// ---------------------------------------------------------------------------

/// Eigenvalues (re, im) of the amplification matrix A(Ω) = L⁻¹R of the
/// undamped SDOF a + ω²q = 0 with X = (q, h v, h² a), Ω = ωh:
///
/// ```text
///   q₁ − β A₁ = q + V + (½ − β) A                       (Newmark displacement)
///   V₁ − γ A₁ = V + (1 − γ) A                            (Newmark velocity)
///   (1 − α_f) Ω² q₁ + (1 − α_m) A₁ = −α_f Ω² q − α_m A   (unified residual × h²)
/// ```
///
/// The third rows are divided by 1 + Ω² (no change to the eigenvalues) so
/// that Ω = ∞ is the limit. The roots of det(R − λL), a cubic whose
/// coefficients come from four evaluations, by bisection for a real root
/// and the deflated quadratic for the other two.
fn amplification_eigenvalues(p: &AlphaParameters, omega: f64) -> [(f64, f64); 3] {
    let (s_w, s_1) = if omega.is_infinite() {
        (1.0, 0.0)
    } else {
        let w2 = omega * omega;
        (w2 / (1.0 + w2), 1.0 / (1.0 + w2))
    };
    let l =
        [[1.0, 0.0, -p.beta], [0.0, 1.0, -p.gamma], [(1.0 - p.alpha_f) * s_w, 0.0, (1.0 - p.alpha_m) * s_1]];
    let r = [[1.0, 1.0, 0.5 - p.beta], [0.0, 1.0, 1.0 - p.gamma], [-p.alpha_f * s_w, 0.0, -p.alpha_m * s_1]];
    let det_at = |lam: f64| {
        let m: Vec<[f64; 3]> = (0..3)
            .map(|i| [r[i][0] - lam * l[i][0], r[i][1] - lam * l[i][1], r[i][2] - lam * l[i][2]])
            .collect();
        m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1]) - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
            + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0])
    };
    // d(λ) = c0 + c1 λ + c2 λ² + c3 λ³ from d(0), d(±1), d(2).
    let (d0, d1, dm1, d2) = (det_at(0.0), det_at(1.0), det_at(-1.0), det_at(2.0));
    let c0 = d0;
    let c2 = 0.5 * (d1 + dm1) - c0;
    let odd = 0.5 * (d1 - dm1);
    let c3 = ((d2 - c0 - 4.0 * c2) - 2.0 * odd) / 6.0;
    let c1 = odd - c3;
    let poly = |x: f64| ((c3 * x + c2) * x + c1) * x + c0;
    let bound = 1.0 + [c0, c1, c2].iter().fold(0.0f64, |m, c| m.max((c / c3).abs()));
    let (mut lo, mut hi) = (-bound, bound);
    let sign_lo = poly(lo).signum();
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if poly(mid).signum() == sign_lo {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let root = 0.5 * (lo + hi);
    // p(λ) / (λ − root) = c3 λ² + b λ + c.
    let b = c2 + c3 * root;
    let c = c1 + b * root;
    let disc = b * b - 4.0 * c3 * c;
    let pair = if disc < 0.0 {
        let re = -b / (2.0 * c3);
        let im = (-disc).sqrt() / (2.0 * c3.abs());
        [(re, im), (re, -im)]
    } else {
        let sq = disc.sqrt();
        [((-b + sq) / (2.0 * c3), 0.0), ((-b - sq) / (2.0 * c3), 0.0)]
    };
    [pair[0], pair[1], (root, 0.0)]
}

fn spectral_radius(p: &AlphaParameters, omega: f64) -> f64 {
    amplification_eigenvalues(p, omega).iter().fold(0.0f64, |m, &(re, im)| m.max(re.hypot(im)))
}

/// (ξ̄, T̄/T − 1) of the principal (complex) pair.
fn damping_and_period_error(p: &AlphaParameters, omega: f64) -> (f64, f64) {
    let [(re, im), ..] = amplification_eigenvalues(p, omega);
    assert!(im > 0.0, "no complex principal pair at Ω = {omega}");
    let arg = im.atan2(re);
    let modulus = re.hypot(im);
    (-modulus.ln() / arg, omega / arg - 1.0)
}

/// Two-term small-Ω expansions (ξ̄, T̄/T − 1), derived for this test (module notes).
fn expansion(scheme: Scheme, omega: f64) -> (f64, f64) {
    let (w2, w3) = (omega * omega, omega.powi(3));
    match scheme {
        Scheme::Hht { alpha: a } => {
            let s = a * (1.0 + a) * (1.0 + a);
            let xi = -s / 8.0 * w3 - s * (27.0 * a * a + 18.0 * a - 10.0) / 192.0 * w3 * w2;
            let period = (2.0 - 6.0 * a - 9.0 * a * a) / 24.0 * w2
                - (405.0 * a.powi(4) + 180.0 * a.powi(3) - 720.0 * a * a - 480.0 * a + 32.0) / 5760.0
                    * w2
                    * w2;
            (xi, period)
        }
        Scheme::GeneralizedAlpha { rho_inf: r } => {
            let xi = (1.0 - r).powi(3) / (2.0 * (1.0 + r).powi(3)) * w3
                + (r - 1.0).powi(3) * (85.0 * r * r - 154.0 * r + 85.0) / (48.0 * (1.0 + r).powi(5))
                    * w3
                    * w2;
            let period = (11.0 * r * r - 14.0 * r + 11.0) / (24.0 * (1.0 + r).powi(2)) * w2
                - (4937.0 * r.powi(4) - 18772.0 * r.powi(3) + 28182.0 * r * r - 18772.0 * r + 4937.0)
                    / (5760.0 * (1.0 + r).powi(4))
                    * w2
                    * w2;
            (xi, period)
        }
        Scheme::Newmark { .. } => unreachable!("not used"),
    }
}

// ---------------------------------------------------------------------------
// Fits
// ---------------------------------------------------------------------------

/// Least-squares slope and intercept of y against x.
fn line_fit(x: &[f64], y: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    let slope = sxy / sxx;
    (slope, my - slope * mx)
}

/// Positive local maxima of a sampled signal by parabolic interpolation:
/// (time, value), with sample spacing h.
fn peaks(h: f64, q: &[f64]) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    for n in 1..q.len() - 1 {
        let (a, b, c) = (q[n - 1], q[n], q[n + 1]);
        if b > a && b >= c && b > 0.0 {
            let curv = a - 2.0 * b + c;
            let delta = 0.5 * (a - c) / curv;
            out.push(((n as f64 + delta) * h, b - 0.25 * (a - c) * delta));
        }
    }
    out
}

/// (ξ̄, T̄/T − 1) measured from the peaks of a free vibration with period
/// T: T̄ from a line through the peak times, ξ̄ from the decay of ln(peak)
/// per period, −slope / 2π. Skips the first 3 peaks (spurious root) and
/// peaks below 1e-12 of the first.
fn measured_damping_and_period(h: f64, period: f64, q: &[f64]) -> (f64, f64, usize) {
    let all = peaks(h, q);
    let first = all[0].1;
    let used: Vec<(f64, f64)> = all.iter().copied().skip(3).take_while(|p| p.1 > 1e-12 * first).collect();
    let idx: Vec<f64> = (0..used.len()).map(|i| i as f64).collect();
    let times: Vec<f64> = used.iter().map(|p| p.0).collect();
    let logs: Vec<f64> = used.iter().map(|p| p.1.ln()).collect();
    let (t_bar, _) = line_fit(&idx, &times);
    let (decay, _) = line_fit(&idx, &logs);
    (-decay / (2.0 * PI), t_bar / period - 1.0, used.len())
}

// ---------------------------------------------------------------------------
// Accuracy and dissipation of the schemes
// ---------------------------------------------------------------------------

#[test]
fn the_amplification_matrix_of_the_test_is_right_for_the_trapezoidal_rule() {
    // HHT α = 0 and Newmark β = ¼, γ = ½ are the trapezoidal rule:
    // λ = (1 − Ω²/4 ± iΩ)/(1 + Ω²/4), |λ| = 1 (Cayley transform).
    for scheme in [hht(0.0), Scheme::Newmark { beta: 0.25, gamma: 0.5 }] {
        let p = scheme.parameters().unwrap();
        for omega in [0.01, 0.3, 1.0, 3.0, 30.0] {
            let [(re, im), ..] = amplification_eigenvalues(&p, omega);
            let d = 1.0 + omega * omega / 4.0;
            let (re_x, im_x) = ((1.0 - omega * omega / 4.0) / d, omega / d);
            assert!((re - re_x).abs() < 1e-12 && (im - im_x).abs() < 1e-12, "Ω = {omega}: {re} {im}");
        }
    }
    // Newmark γ > ½: ξ̄ = (γ − ½)Ω/2 + O(Ω³) (Hughes 1987 §9.3, from memory).
    let p = Scheme::Newmark { beta: 0.3025, gamma: 0.6 }.parameters().unwrap();
    let omega = 1e-3;
    let (xi, _) = damping_and_period_error(&p, omega);
    assert!((xi - 0.05 * omega).abs() < 1e-3 * 0.05 * omega, "ξ̄ = {xi}");
}

#[test]
fn sdof_period_elongation_and_damping_match_the_amplification_matrix() {
    // Undamped SDOF m = 1 kg, T = 1 s (k = 4π² N/m), q₀ = 1 m, v₀ = 0,
    // integrated over 100 periods (full Newton, default tolerances).
    let schemes = [hht(0.0), hht(-0.05), hht(-0.1), hht(-0.3), ga(1.0), ga(0.8), ga(0.5), ga(0.0)];
    let omega_n = 2.0 * PI;
    let mut worst = [0.0f64; 4];
    for scheme in schemes {
        let p = scheme.parameters().unwrap();
        for ratio in [0.01, 0.05, 0.1] {
            let h = ratio; // T = 1 s
            let omega = omega_n * h;
            let sys = Linear::sdof(1.0, 0.0, omega_n * omega_n, 1.0);
            let (q, it) = run_linear(sys, vec![0.0], IntegratorSettings::new(scheme, h), 100.0);
            assert_eq!(it.stats().steps, (100.0 / h).round() as usize);
            let (xi_m, dt_m, count) = measured_damping_and_period(h, 1.0, &q);
            let (xi_e, dt_e) = damping_and_period_error(&p, omega);
            let (xi_s, dt_s) = expansion(scheme, omega);
            eprintln!(
                "{scheme:?} Δt/T = {ratio}: measured ξ̄ = {xi_m:.6e}, T̄/T−1 = {dt_m:.6e} ({count} peaks); \
                 eigen ξ̄ = {xi_e:.6e}, T̄/T−1 = {dt_e:.6e}; expansion {xi_s:.6e}, {dt_s:.6e}"
            );
            assert!(count >= 10);
            // Measured against the eigenvalues. Tolerances: the parabolic
            // peak interpolation errs by O(Ω²) in a peak's value and O(Ω³)
            // in its time, varying from peak to peak; the fits over up to 97
            // periods average that. Observed: |ΔT̄/T| ≤ 2.2e-6 Ω²,
            // |Δξ̄| ≤ 3.6e-4 ξ̄ + 1.1e-8 (module test output).
            let tol_period = 1e-9 + 5e-6 * omega * omega;
            let tol_xi = 5e-8 + 5e-4 * xi_e.abs();
            worst[0] = worst[0].max((dt_m - dt_e).abs() / tol_period);
            worst[1] = worst[1].max((xi_m - xi_e).abs() / tol_xi);
            assert!((dt_m - dt_e).abs() <= tol_period, "period: measured {dt_m:e} vs eigen {dt_e:e}");
            assert!((xi_m - xi_e).abs() <= tol_xi, "ξ̄: measured {xi_m:e} vs eigen {xi_e:e}");
            // Eigenvalues against the two-term expansions, where they are
            // meant (Δt/T ≤ 0.05; at Ω = 0.63 the series of ρ∞ = 0 has
            // diverged). The remainders are O(Ω⁶) in T̄/T − 1 and O(Ω⁷) in
            // ξ̄; observed coefficients ≤ 0.01 except ρ∞ = 0 (3.2 and 7.3,
            // the (1 + ρ∞)⁻ᵏ factors), hence 5Ω⁶ and 10Ω⁷.
            if ratio <= 0.05 {
                let (tol_ps, tol_xs) = (5.0 * omega.powi(6) + 1e-14, 10.0 * omega.powi(7) + 1e-14);
                worst[2] = worst[2].max((dt_e - dt_s).abs() / tol_ps);
                worst[3] = worst[3].max((xi_e - xi_s).abs() / tol_xs);
                assert!((dt_e - dt_s).abs() <= tol_ps, "period: eigen {dt_e:e} vs series {dt_s:e}");
                assert!((xi_e - xi_s).abs() <= tol_xs, "ξ̄: eigen {xi_e:e} vs series {xi_s:e}");
            }
        }
    }
    eprintln!(
        "largest error / tolerance: measured period {:.3}, ξ̄ {:.3}; series period {:.3}, ξ̄ {:.3}",
        worst[0], worst[1], worst[2], worst[3]
    );
}

#[test]
fn spectral_radius_at_high_frequency_is_the_published_one() {
    let cases = [
        (hht(0.0), 1.0),
        (hht(-0.05), 0.95 / 1.05),
        (hht(-0.1), 0.9 / 1.1),
        (hht(-0.3), 0.7 / 1.3),
        (hht(-1.0 / 3.0), 0.5),
        (ga(1.0), 1.0),
        (ga(0.8), 0.8),
        (ga(0.5), 0.5),
        (ga(0.0), 0.0),
    ];
    for (scheme, rho_inf) in cases {
        let p = scheme.parameters().unwrap();
        // Ω = ∞ exactly (the limit rows) and Ω = 1e8. Tolerance 1e-4: the
        // roots are (near-)multiple at infinity, so round-off in the cubic's
        // coefficients moves them by ~ε^{1/3}.
        let rho = spectral_radius(&p, f64::INFINITY);
        assert!((rho - rho_inf).abs() < 1e-4, "{scheme:?}: ρ(A(∞)) = {rho}, published {rho_inf}");
        let rho8 = spectral_radius(&p, 1e8);
        assert!((rho8 - rho_inf).abs() < 1e-4, "{scheme:?}: ρ(A(1e8)) = {rho8}");

        // Stiff SDOF, Ω = ωh = 1e4, from q₀ = 1 m at rest. First, step by
        // step, the simulated X_n = (q, h v, h² a) against the test's own
        // recursion L X_{n+1} = R X_n (`sdof_step`): the transient is
        // non-normal (h v₁ reaches 2.5e7 m for ρ∞ = 0), so the tolerance is
        // 1e-9 of the largest ‖X_k‖ so far. Then the decay rate: fit
        // ln‖X_n‖ = c + p ln n + n ln ρ over steps 20..120 (the ln n term
        // takes the polynomial growth of the nearly defective eigenvalues
        // at infinity), with ‖X‖² = q² + (v/ω)² + (a/ω²)².
        let h = 1e-3;
        let w = 1e4 / h;
        let sys = Linear::sdof(1.0, 0.0, w * w, 1.0);
        let mut it = Integrator::new(sys, vec![0.0], 0.0, IntegratorSettings::new(scheme, h)).unwrap();
        let mut x_ref = [1.0, 0.0, -1e8];
        let mut largest = 1e8f64;
        let mut norms = vec![];
        for n in 0..120 {
            it.step().unwrap();
            let (q, v, a) = (it.system().q[0], it.velocity()[0], it.acceleration()[0]);
            norms.push((q * q + (v / w).powi(2) + (a / (w * w)).powi(2)).sqrt());
            if n < 10 {
                x_ref = sdof_step(&p, 1e4, x_ref);
                largest = x_ref.iter().fold(largest, |m, x| m.max(x.abs()));
                let x_sim = [q, h * v, h * h * a];
                for i in 0..3 {
                    assert!(
                        (x_sim[i] - x_ref[i]).abs() <= 1e-9 * largest,
                        "{scheme:?} step {}: X = {x_sim:?} vs recursion {x_ref:?}",
                        n + 1
                    );
                }
            }
        }
        if rho_inf == 0.0 {
            // ρ(A(1e4)) ≈ 2e-3, after the transient: 1e-4 at step 3 (as the
            // recursion), then fast decay.
            assert!(norms[7] < 1e-15, "{scheme:?}: ‖X₈‖ = {:e}", norms[7]);
            continue;
        }
        let rows: Vec<[f64; 3]> = (20..=120).map(|n| [1.0, (n as f64).ln(), n as f64]).collect();
        let ys: Vec<f64> = (20..=120).map(|n| norms[n - 1].ln()).collect();
        let coef = least_squares3(&rows, &ys);
        let rho_sim = coef[2].exp();
        eprintln!(
            "{scheme:?}: ρ(A(∞)) = {rho:.6}, simulated at Ω = 1e4: {rho_sim:.6} (published {rho_inf:.6})"
        );
        // Tolerance 5e-3: at Ω = 1e4 the eigenvalues still differ from their
        // limits by up to 2e-3 (ρ(A(1e4)) = 0.8017 for ρ∞ = 0.8).
        assert!((rho_sim - rho_inf).abs() < 5e-3, "{scheme:?}: simulated ρ = {rho_sim}");
    }
}

/// One step of the undamped SDOF recursion L X₁ = R X₀ with X = (q, h v, h² a)
/// (see [`amplification_eigenvalues`]), solved in closed form: the first two
/// rows give q₁ = c_q + β A₁, V₁ = c_v + γ A₁, the third then A₁.
fn sdof_step(p: &AlphaParameters, omega: f64, x: [f64; 3]) -> [f64; 3] {
    let (q, vv, aa) = (x[0], x[1], x[2]);
    let w2 = omega * omega;
    let cq = q + vv + (0.5 - p.beta) * aa;
    let cv = vv + (1.0 - p.gamma) * aa;
    let a1 = (-p.alpha_f * w2 * q - p.alpha_m * aa - (1.0 - p.alpha_f) * w2 * cq)
        / ((1.0 - p.alpha_f) * w2 * p.beta + (1.0 - p.alpha_m));
    [cq + p.beta * a1, cv + p.gamma * a1, a1]
}

/// Least squares with three unknowns by the normal equations (Cramer).
fn least_squares3(rows: &[[f64; 3]], y: &[f64]) -> [f64; 3] {
    let mut a = [[0.0; 3]; 3];
    let mut b = [0.0; 3];
    for (r, &yi) in rows.iter().zip(y) {
        for i in 0..3 {
            b[i] += r[i] * yi;
            for j in 0..3 {
                a[i][j] += r[i] * r[j];
            }
        }
    }
    let det3 = |m: [[f64; 3]; 3]| {
        m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1]) - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
            + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0])
    };
    let d = det3(a);
    let mut x = [0.0; 3];
    for k in 0..3 {
        let mut m = a;
        for i in 0..3 {
            m[i][k] = b[i];
        }
        x[k] = det3(m) / d;
    }
    x
}

// ---------------------------------------------------------------------------
// Energy
// ---------------------------------------------------------------------------

#[test]
fn non_dissipative_schemes_keep_the_energy_of_an_undamped_two_dof_chain() {
    // Wall – k – m – k – m, m = 1 kg, k = 1 N/m: ω² = (3 ∓ √5)/2,
    // T₁ = 10.17 s, T₂ = 3.883 s. Δt = 0.02 T₂, 100 T₁.
    let w2 = ((3.0 + 5f64.sqrt()) / 2.0).sqrt();
    let w1 = ((3.0 - 5f64.sqrt()) / 2.0).sqrt();
    let (t1, t2) = (2.0 * PI / w1, 2.0 * PI / w2);
    for scheme in [hht(0.0), ga(1.0)] {
        let sys =
            Linear::new(2, &[1.0, 0.0, 0.0, 1.0], &[0.0; 4], &[2.0, -1.0, -1.0, 1.0], &[0.0; 4], &[1.0, 0.5]);
        let v0 = vec![0.0, 0.3];
        let e0 = sys.energy(&v0);
        let mut it = Integrator::new(sys, v0, 0.0, IntegratorSettings::new(scheme, 0.02 * t2)).unwrap();
        let mut worst = 0.0f64;
        it.advance_to(100.0 * t1, |it, _| {
            let e = it.system().energy(it.velocity());
            worst = worst.max((e / e0 - 1.0).abs());
        })
        .unwrap();
        eprintln!("{scheme:?}: 2-DOF max |E/E₀ − 1| = {worst:.3e} over {} steps", it.stats().steps);
        // Required 1e-3; for a linear system the scheme is the trapezoidal
        // rule on (q, v) (a Cayley transform), which conserves the energy
        // exactly, so only round-off and the Newton tolerance remain.
        assert!(worst < 1e-9, "{scheme:?}: {worst:e}");
    }
}

/// Complete elliptic integral of the first kind K(k) by the arithmetic–geometric mean.
fn elliptic_k(k: f64) -> f64 {
    let (mut a, mut b) = (1.0f64, (1.0 - k * k).sqrt());
    for _ in 0..30 {
        (a, b) = (0.5 * (a + b), (a * b).sqrt());
    }
    PI / (2.0 * a)
}

/// Period of q'' + k q + k3 q³ = 0 at amplitude A: with q = A sin φ,
/// T = 4 ∫₀^{π/2} dφ / √(k + ½ k3 A² (1 + sin²φ)) (Simpson, 2000 panels).
fn duffing_period(k: f64, k3: f64, amp: f64) -> f64 {
    let f = |phi: f64| 1.0 / (k + 0.5 * k3 * amp * amp * (1.0 + phi.sin().powi(2))).sqrt();
    let n = 2000;
    let hh = 0.5 * PI / n as f64;
    let mut s = f(0.0) + f(0.5 * PI);
    for i in 1..n {
        s += if i % 2 == 1 { 4.0 } else { 2.0 } * f(i as f64 * hh);
    }
    4.0 * s * hh / 3.0
}

#[test]
fn non_dissipative_schemes_keep_the_energy_of_nonlinear_oscillators() {
    // Pendulum ω₀ = 2π rad/s, θ₀ = 1 rad: T = 4K(sin ½)/ω₀ = 1.0663 s.
    // Duffing k = 4π² N/m per kg with k3 = k/4 (the cubic force a quarter of
    // the linear one at the 1 m amplitude) and k3 = k (equal to it). The
    // trapezoidal rule conserves energy exactly only for linear forces; for
    // these its bounded error at Δt/T = 0.02 is 6.9e-4, 8.6e-4 and 2.5e-3
    // (the last above the 1e-3 target: a hard spring needs Δt/T ≈ 0.012).
    let w2 = 4.0 * PI * PI;
    let cases = [
        (Law::Pendulum { w2 }, 1.0, 4.0 * elliptic_k(0.5f64.sin()) / (2.0 * PI), 1e-3),
        (Law::Duffing { k: w2, k3: 0.25 * w2 }, 1.0, duffing_period(w2, 0.25 * w2, 1.0), 1e-3),
        (Law::Duffing { k: w2, k3: w2 }, 1.0, duffing_period(w2, w2, 1.0), 3e-3),
    ];
    for (law, q0, period, tolerance) in cases {
        for scheme in [hht(0.0), ga(1.0)] {
            let sys = Nonlinear1::new(law, q0);
            let e0 = sys.energy(0.0);
            let h = 0.02 * period;
            let mut it = Integrator::new(sys, vec![0.0], 0.0, IntegratorSettings::new(scheme, h)).unwrap();
            let mut worst = 0.0f64;
            let mut worst_first_10 = 0.0f64;
            let mut q = vec![q0];
            it.advance_to(100.0 * period, |it, r| {
                worst = worst.max((it.system().energy(it.velocity()[0]) / e0 - 1.0).abs());
                if r.t <= 10.0 * period {
                    worst_first_10 = worst;
                }
                q.push(it.system().q);
            })
            .unwrap();
            let (_, t_err, _) = measured_damping_and_period(h, period, &q);
            eprintln!(
                "{scheme:?} T = {period:.5} s: max |E/E₀ − 1| = {worst:.3e}, T̄/T − 1 = {t_err:.3e}, \
                 {:.2} iterations/step",
                it.stats().newton_iterations as f64 / it.stats().steps as f64
            );
            assert!(worst < tolerance, "{scheme:?}: energy error {worst:e}");
            // Bounded, not drifting: the time-reversible scheme's error after
            // 100 periods is that of the first 10.
            assert!(worst <= 1.05 * worst_first_10, "drift: {worst_first_10:e} → {worst:e}");
            // The trapezoidal rule's period error is Ω²/12 = 1.3e-3 at
            // Δt/T = 0.02 for a linear oscillator; allow twice that.
            assert!(t_err.abs() < 2.6e-3, "{scheme:?}: period error {t_err:e}");
        }
    }
}

// ---------------------------------------------------------------------------
// Damping and order of accuracy
// ---------------------------------------------------------------------------

#[test]
fn damped_oscillator_matches_the_exact_solution_to_second_order() {
    // m = 1 kg, ω = 2π rad/s, ξ = 0.05, c = 2ξω; q₀ = 1 m, v₀ = −ξω so that
    // q(t) = e^{−ξωt} cos(ω_d t) exactly (Clough & Penzien).
    let (w, xi): (f64, f64) = (2.0 * PI, 0.05);
    let wd = w * (1.0 - xi * xi).sqrt();
    let exact = |t: f64| (-xi * w * t).exp() * (wd * t).cos();
    let max_error = |scheme: Scheme, h: f64| {
        let sys = Linear::sdof(1.0, 2.0 * xi * w, w * w, 1.0);
        let (q, _) = run_linear(sys, vec![-xi * w], IntegratorSettings::new(scheme, h), 5.0);
        q.iter().enumerate().fold(0.0f64, |m, (n, &qn)| m.max((qn - exact(n as f64 * h)).abs()))
    };
    let second_order = [hht(0.0), hht(-0.1), hht(-0.3), ga(1.0), ga(0.8), ga(0.5), ga(0.0)];
    for scheme in second_order {
        let (e1, e2) = (max_error(scheme, 0.02), max_error(scheme, 0.01));
        let order = (e1 / e2).log2();
        eprintln!("{scheme:?}: max error {e1:.3e} (Δt = 0.02 s), {e2:.3e} (0.01 s), order {order:.3}");
        assert!((order - 2.0).abs() < 0.1, "{scheme:?}: order {order}");
        // Phase error over 5 periods ≈ 2π·5·(T̄/T − 1) with T̄/T − 1 ≤ (11/24)Ω²
        // (generalised-α, ρ∞ = 0, the largest); Ω = 2π·0.01.
        let bound = 2.0 * PI * 5.0 * (11.0 / 24.0) * (w * 0.01f64).powi(2);
        assert!(e2 < bound, "{scheme:?}: error {e2:e} above {bound:e}");
    }
    // Newmark γ = 0.6 (β = (γ + ½)²/4) is first order: ξ̄ = (γ − ½)Ω/2.
    let scheme = Scheme::Newmark { beta: 0.3025, gamma: 0.6 };
    let (e1, e2) = (max_error(scheme, 0.02), max_error(scheme, 0.01));
    let order = (e1 / e2).log2();
    eprintln!("{scheme:?}: order {order:.3}");
    assert!((order - 1.0).abs() < 0.15, "Newmark γ = 0.6: order {order}");
}

// ---------------------------------------------------------------------------
// Step control and failures
// ---------------------------------------------------------------------------

#[test]
fn cut_back_when_the_model_rejects_large_increments_and_reach_t_end_exactly() {
    // SDOF T = 1 s, q₀ = 1 m: |Δq| ≈ |v| h reaches 2π·0.02 = 0.126 m per
    // step at Δt = 0.02 s; the model refuses increments above 0.05 m.
    let w = 2.0 * PI;
    let mut sys = Linear::sdof(1.0, 0.0, w * w, 1.0);
    sys.max_increment = Some(0.05);
    let settings = IntegratorSettings::new(hht(-0.05), 0.02);
    let mut it = Integrator::new(sys, vec![0.0], 0.0, settings).unwrap();
    let mut reports = vec![];
    it.advance_to(2.0, |_, r| reports.push(*r)).unwrap();
    let stats = it.stats();
    assert_eq!(it.time(), 2.0, "lands exactly on t_end");
    assert_eq!(reports.last().map(|r| r.t), Some(2.0));
    assert!(stats.rejected_steps > 0, "{stats:?}");
    assert_eq!(it.system().rejects, stats.rejected_steps);
    assert_eq!(it.system().commits, stats.steps);
    assert!(it.system().largest_committed_increment <= 0.05);
    // Regrowth: after a cut-back, some later step is back at 0.02 s.
    let first_cut = reports.iter().position(|r| r.rejected > 0).unwrap();
    assert!(reports[first_cut + 1..].iter().any(|r| r.dt == 0.02), "no regrowth");
    assert!(reports.iter().all(|r| r.dt <= 0.02 * (1.0 + 1e-6)), "a final step may stretch by 1e-6");
    // Still the right motion: q(2 s) = cos(4π) = 1 up to the phase error.
    let q = it.system().q[0];
    eprintln!("cut-back run: {stats:?}, q(2 s) = {q}");
    assert!((q - 1.0).abs() < 1e-3, "q(2) = {q}");
}

#[test]
fn min_dt_reached_gives_step_failed_with_the_time_and_keeps_the_last_state() {
    // As above but min_dt = 0.01 s: once |v| > 5 m/s even 0.01 s gives
    // |Δq| > 0.05 m, and 0.005 s is below min_dt.
    let w = 2.0 * PI;
    let mut sys = Linear::sdof(1.0, 0.0, w * w, 1.0);
    sys.max_increment = Some(0.05);
    let settings = IntegratorSettings { min_dt: 0.01, ..IntegratorSettings::new(ga(0.8), 0.02) };
    let mut it = Integrator::new(sys, vec![0.0], 0.0, settings).unwrap();
    let err = it.advance_to(2.0, |_, _| {}).unwrap_err();
    match &err {
        SolverError::StepFailed { time, dt, worst_dof, residual, last } => {
            // sin(2πt) = 5/(2π) at t = 0.147 s.
            assert!(*time > 0.1 && *time < 0.2, "failed at t = {time}");
            assert_eq!(*time, it.time(), "state left at the last converged step");
            assert_eq!(*dt, 0.01);
            // The last attempt failed at its second evaluation (after one
            // correction), so a residual exists.
            assert_eq!(*worst_dof, Some(0));
            assert!(residual.is_finite());
            match last.as_ref() {
                SolverError::EvaluationAtTime { time: t1, message } => {
                    assert!((t1 - (time + 0.01)).abs() < 1e-12);
                    assert!(message.contains("beyond"), "{message}");
                }
                other => panic!("unexpected last failure {other}"),
            }
        }
        other => panic!("expected StepFailed, got {other}"),
    }
    let s = err.to_string();
    assert!(s.contains("t = ") && s.contains("Last failure") && s.contains("minimum step"), "{s}");
    // Committed state unchanged by the failed attempts: the integrator can
    // still report it, and v matches the exact motion there.
    let t = it.time();
    assert!((it.velocity()[0] + w * (w * t).sin()).abs() < 0.05);
}

#[test]
fn non_finite_values_are_errors_never_panics() {
    // g becomes NaN beyond t = 0.3 s: cut back to min_dt, then StepFailed
    // carrying NonFinite.
    let w = 2.0 * PI;
    let mut sys = Linear::sdof(1.0, 0.0, w * w, 1.0);
    sys.nan_after = Some(0.3);
    let mut it = Integrator::new(sys, vec![0.0], 0.0, IntegratorSettings::new(hht(-0.1), 0.01)).unwrap();
    match it.advance_to(1.0, |_, _| {}) {
        Err(SolverError::StepFailed { time, last, residual, worst_dof, .. }) => {
            assert!(time <= 0.3 && time > 0.3 - 0.011, "t = {time}");
            assert!(matches!(*last, SolverError::NonFinite { .. }), "{last}");
            assert!(residual.is_nan() && worst_dof.is_none());
        }
        other => panic!("expected StepFailed, got {other:?}"),
    }
    // Non-finite initial data and settings.
    let sdof = || Linear::sdof(1.0, 0.0, 1.0, 1.0);
    let s = IntegratorSettings::new(hht(0.0), 0.1);
    assert!(matches!(
        Integrator::new(sdof(), vec![f64::NAN], 0.0, s.clone()),
        Err(SolverError::NonFinite { dof: 0, .. })
    ));
    let mut bad = sdof();
    bad.m[0] = f64::INFINITY;
    assert!(matches!(Integrator::new(bad, vec![0.0], 0.0, s.clone()), Err(SolverError::NonFinite { .. })));
    let mut bad = sdof();
    bad.nan_after = Some(-1.0);
    assert!(matches!(Integrator::new(bad, vec![0.0], 0.0, s.clone()), Err(SolverError::NonFinite { .. })));
    assert!(matches!(
        Integrator::new(sdof(), vec![0.0], f64::NAN, s.clone()),
        Err(SolverError::InvalidSettings { name: "t0", .. })
    ));
    let mut it = Integrator::new(sdof(), vec![0.0], 0.0, s).unwrap();
    assert!(matches!(
        it.advance_to(f64::NAN, |_, _| {}),
        Err(SolverError::InvalidSettings { name: "t_end", .. })
    ));
    assert!(matches!(
        it.advance_to(-1.0, |_, _| {}),
        Err(SolverError::InvalidSettings { name: "t_end", .. })
    ));
}

#[test]
fn invalid_settings_are_named_before_any_work() {
    let sdof = || Linear::sdof(1.0, 0.0, 1.0, 1.0);
    let base = IntegratorSettings::new(ga(0.8), 0.01);
    for (settings, name) in [
        (IntegratorSettings::new(ga(0.8), 0.0), "dt"),
        (IntegratorSettings::new(ga(0.8), -1.0), "dt"),
        (IntegratorSettings::new(ga(0.8), f64::NAN), "dt"),
        (IntegratorSettings { min_dt: 0.02, ..base.clone() }, "min_dt"),
        (IntegratorSettings { min_dt: 0.0, ..base.clone() }, "min_dt"),
        (IntegratorSettings { max_dt: 0.005, ..base.clone() }, "max_dt"),
        (IntegratorSettings { reuse_ratio: 1.0, ..base.clone() }, "reuse_ratio"),
        (IntegratorSettings { scheme: hht(-0.5), ..base.clone() }, "alpha"),
        (IntegratorSettings { scheme: ga(1.2), ..base.clone() }, "rho_inf"),
        (
            IntegratorSettings {
                newton: NewtonSettings { residual_tolerance: -1.0, ..NewtonSettings::default() },
                ..base.clone()
            },
            "residual_tolerance",
        ),
    ] {
        match Integrator::new(sdof(), vec![0.0], 0.0, settings) {
            Err(SolverError::InvalidSettings { name: got, value, .. }) => {
                assert_eq!(got, name);
                let e = SolverError::InvalidSettings { name: got, value, expected: "" }.to_string();
                assert!(e.contains(name));
            }
            Err(other) => panic!("{name}: expected InvalidSettings, got {other}"),
            Ok(_) => panic!("{name}: accepted"),
        }
    }
    assert!(matches!(
        Integrator::new(sdof(), vec![0.0, 0.0], 0.0, base),
        Err(SolverError::InvalidSettings { name: "v0 length", .. })
    ));
}

#[test]
fn advance_to_shortens_the_last_step_and_counts_the_work() {
    let w = 2.0 * PI;
    for modified in [false, true] {
        let sys = Linear::sdof(1.0, 0.0, w * w, 1.0);
        let settings =
            IntegratorSettings { modified_newton: modified, ..IntegratorSettings::new(ga(0.8), 0.01) };
        let mut it = Integrator::new(sys, vec![0.0], 0.0, settings).unwrap();
        let mut dts = vec![];
        it.advance_to(0.105, |_, r| dts.push(r.dt)).unwrap();
        assert_eq!(it.time(), 0.105);
        assert_eq!(dts.len(), 11);
        assert!((dts[10] - 0.005).abs() < 1e-12, "{dts:?}");
        it.advance_to(0.105, |_, _| panic!("no step expected")).unwrap();
        let r = it.step().unwrap();
        assert_eq!((r.dt, r.iterations), (0.01, 1), "a linear step takes one correction");
        let s = it.stats();
        assert_eq!(s.steps, 12);
        assert_eq!(s.newton_iterations, 12);
        assert_eq!((s.factor_stats.symbolic_cholesky, s.factor_stats.symbolic_lu), (1, 0), "{s:?}");
        assert_eq!(s.solves, 1 + s.newton_iterations, "a₀ plus one solve per correction");
        assert_eq!(s.evaluations, 1 + 2 * 12);
        if modified {
            // M for a₀, S(0.01), S(0.005), S(0.01) again.
            assert_eq!(s.factorisations, 4, "{s:?}");
        } else {
            assert_eq!(s.factorisations, 1 + 12, "{s:?}");
        }
    }
}

// ---------------------------------------------------------------------------
// Newton variants and nonlinear, velocity-dependent, unsymmetric systems
// ---------------------------------------------------------------------------

#[test]
fn modified_newton_reuses_the_factor_and_agrees_with_full_newton() {
    // Hardening springs, amplitude 1 m, T = 0.96 s and 0.76 s: mild
    // (k3 = 0.1 k) at Δt = 0.01 s, where S is dominated by M/(βh²) and one
    // factor serves the whole run, and hard (k3 = k, tangent k to 4k) at
    // Δt = 0.2 s, where K dominates S and the factor must be renewed.
    let w2 = 4.0 * PI * PI;
    let newton =
        NewtonSettings { residual_tolerance: 1e-12, increment_tolerance: 0.0, ..NewtonSettings::default() };
    let run = |law: Law, dt: f64, modified: bool| {
        let settings = IntegratorSettings {
            modified_newton: modified,
            newton: newton.clone(),
            ..IntegratorSettings::new(ga(0.8), dt)
        };
        let mut it = Integrator::new(Nonlinear1::new(law, 1.0), vec![0.0], 0.0, settings).unwrap();
        it.advance_to(10.0, |_, _| {}).unwrap();
        (it.system().q, it.velocity()[0], it.stats())
    };
    for (k3, dt, reuse_at_least) in [(0.1 * w2, 0.01, 1000), (w2, 0.2, 2)] {
        let law = Law::Duffing { k: w2, k3 };
        let (q_full, v_full, s_full) = run(law, dt, false);
        let (q_mod, v_mod, s_mod) = run(law, dt, true);
        eprintln!("k3/k = {}: full Newton {s_full:?}\n  modified {s_mod:?}; q = {q_full} / {q_mod}", k3 / w2);
        assert_eq!(
            s_full.factorisations,
            1 + s_full.newton_iterations,
            "full Newton refactors every iteration"
        );
        // Iterations per factorisation of S (the first factorisation is M).
        let reuse = s_mod.newton_iterations / (s_mod.factorisations - 1);
        assert!(reuse >= reuse_at_least, "{reuse} iterations per factor: {s_mod:?}");
        if dt > 0.1 {
            assert!(
                s_mod.factorisations > 10,
                "the factor is renewed when it stops converging fast: {s_mod:?}"
            );
        }
        // Both converge to ‖R‖ ≤ 1e-12 F each step: the same trajectory.
        assert!((q_full - q_mod).abs() < 1e-9 && (v_full - v_mod).abs() < 1e-8, "{q_full} {q_mod}");
    }
}

#[test]
fn predictors_reach_the_same_solution() {
    // Duffing k3 = k/4 (T = 0.92 s) at Δt = 0.05 s over 5 s: the converged
    // steps do not depend on the first guess; on this smooth motion the
    // guess errs by O(h), O(h²), O(h³) and the corrections per step fall
    // (observed 2.93, 2.50, 2.00).
    let w2 = 4.0 * PI * PI;
    let newton = NewtonSettings { residual_tolerance: 1e-10, ..NewtonSettings::default() };
    let mut results = vec![];
    for predictor in
        [Predictor::ConstantDisplacement, Predictor::ConstantVelocity, Predictor::ConstantAcceleration]
    {
        let settings = IntegratorSettings {
            predictor,
            newton: newton.clone(),
            ..IntegratorSettings::new(hht(-0.1), 0.05)
        };
        let law = Law::Duffing { k: w2, k3: 0.25 * w2 };
        let mut it = Integrator::new(Nonlinear1::new(law, 1.0), vec![0.0], 0.0, settings).unwrap();
        it.advance_to(5.0, |_, _| {}).unwrap();
        eprintln!("{predictor:?}: {} iterations", it.stats().newton_iterations);
        results.push((it.system().q, it.stats().newton_iterations));
    }
    for r in &results[1..] {
        assert!((r.0 - results[0].0).abs() < 1e-9, "{results:?}");
    }
    assert!(results[2].1 < results[1].1 && results[1].1 < results[0].1, "{results:?}");
}

#[test]
fn unsymmetric_gyroscopic_damping_goes_through_lu_and_keeps_the_energy() {
    // x'' + g y' + k x = 0, y'' − g x' + k y = 0: D = [[0, g], [−g, 0]].
    // With z = x + iy: z'' − i g z' + k z = 0, z = A e^{iω₁t} + B e^{iω₂t},
    // ω₁,₂ = (g ± √(g² + 4k))/2. Gyroscopic forces do no work.
    let (k, g) = (4.0 * PI * PI, PI);
    let disc = (g * g + 4.0 * k).sqrt();
    let (w1, w2) = ((g + disc) / 2.0, (g - disc) / 2.0);
    let (q0, v0) = ([1.0, 0.0], [0.0, 2.0]);
    // A + B = z₀, i(ω₁A + ω₂B) = z'₀ → B = (ω₁z₀ + i z'₀)/(ω₁ − ω₂), A = z₀ − B.
    let z0 = (q0[0], q0[1]);
    let dz0 = (v0[0], v0[1]);
    let b = ((w1 * z0.0 - dz0.1) / (w1 - w2), (w1 * z0.1 + dz0.0) / (w1 - w2));
    let a = (z0.0 - b.0, z0.1 - b.1);
    let exact = |t: f64| {
        let (c1, s1) = ((w1 * t).cos(), (w1 * t).sin());
        let (c2, s2) = ((w2 * t).cos(), (w2 * t).sin());
        [a.0 * c1 - a.1 * s1 + b.0 * c2 - b.1 * s2, a.0 * s1 + a.1 * c1 + b.0 * s2 + b.1 * c2]
    };
    let run = |scheme: Scheme, h: f64| {
        let sys =
            Linear::new(2, &[1.0, 0.0, 0.0, 1.0], &[0.0; 4], &[k, 0.0, 0.0, k], &[0.0, g, -g, 0.0], &q0);
        let e0 = sys.energy(&v0);
        let mut it = Integrator::new(sys, v0.to_vec(), 0.0, IntegratorSettings::new(scheme, h)).unwrap();
        let (mut err, mut drift) = (0.0f64, 0.0f64);
        it.advance_to(2.0, |it, r| {
            let x = exact(r.t);
            let q = &it.system().q;
            err = err.max((q[0] - x[0]).abs().max((q[1] - x[1]).abs()));
            drift = drift.max((it.system().energy(it.velocity()) / e0 - 1.0).abs());
        })
        .unwrap();
        (err, drift, it.stats())
    };
    for scheme in [hht(0.0), ga(0.8)] {
        let (e1, drift, stats) = run(scheme, 0.01);
        let (e2, _, _) = run(scheme, 0.005);
        let order = (e1 / e2).log2();
        eprintln!(
            "{scheme:?} gyroscopic: error {e1:.3e} / {e2:.3e}, order {order:.3}, energy drift {drift:.2e}"
        );
        assert!((order - 2.0).abs() < 0.1, "order {order}");
        let fs = stats.factor_stats;
        assert_eq!(fs.numeric_cholesky, 1, "only M for a₀ is symmetric: {fs:?}");
        assert_eq!((fs.symbolic_lu, fs.numeric_lu), (1, stats.steps), "{fs:?}");
        if scheme == hht(0.0) {
            // The trapezoidal rule conserves the quadratic invariants of a
            // linear system (Cayley transform), gyroscopic terms included.
            assert!(drift < 1e-10, "energy drift {drift:e}");
        }
    }
}

#[test]
fn van_der_pol_negative_damping_saturates_at_amplitude_two() {
    // q'' − μ(1 − q²)q' + q = 0, μ = 0.1, from q₀ = 0.5 at rest: the
    // amplitude grows to the limit cycle, 2 + O(μ²) (averaging; from memory).
    let mu = 0.1;
    let period = 2.0 * PI;
    for scheme in [hht(0.0), ga(0.8)] {
        let settings = IntegratorSettings::new(scheme, 0.02 * period);
        let mut it =
            Integrator::new(Nonlinear1::new(Law::VanDerPol { mu }, 0.5), vec![0.0], 0.0, settings).unwrap();
        it.advance_to(60.0 * period, |_, _| {}).unwrap();
        let mut amp = 0.0f64;
        it.advance_to(65.0 * period, |it, _| amp = amp.max(it.system().q.abs())).unwrap();
        let s = it.stats();
        let per_step = s.newton_iterations as f64 / s.steps as f64;
        eprintln!("{scheme:?} van der Pol: amplitude {amp:.5}, {per_step:.2} iterations/step");
        assert!((amp - 2.0).abs() < 0.02, "amplitude {amp}");
        // Exact K and D: quadratic convergence, about 2-3 corrections per step.
        assert!(per_step < 3.5, "{per_step} iterations per step");
    }
}

#[test]
fn singular_mass_is_named_and_a_known_acceleration_starts_the_run() {
    // Node 1 (m = 1 kg) on a spring k to the wall and a spring k to node 2,
    // which is massless and held by a spring k to the wall: node 2 follows
    // statically, q₂ = q₁/2, and ω² = (2k − k/2)/m = 1.5k.
    let k = 4.0 * PI * PI;
    let mk = || {
        Linear::new(2, &[1.0, 0.0, 0.0, 0.0], &[0.0; 4], &[2.0 * k, -k, -k, 2.0 * k], &[0.0; 4], &[1.0, 0.5])
    };
    let s = IntegratorSettings::new(ga(0.8), 0.005);
    match Integrator::new(mk(), vec![0.0, 0.0], 0.0, s.clone()) {
        Err(e @ SolverError::SingularMass { pivot: Some(1) }) => {
            assert!(e.to_string().contains("near equation 1"), "{e}");
        }
        Err(other) => panic!("expected SingularMass, got {other}"),
        Ok(_) => panic!("a singular M was accepted"),
    }
    let w = (1.5 * k).sqrt();
    let a0 = vec![-w * w, -0.5 * w * w];
    let mut it = Integrator::with_initial_acceleration(mk(), vec![0.0, 0.0], a0, 0.0, s).unwrap();
    let t_end = 2.0 * PI / w;
    it.advance_to(t_end, |_, _| {}).unwrap();
    let q = it.system().q.clone();
    // Back at q₁ = 1 after one period up to the phase error (Ω = 0.038).
    assert!((q[0] - 1.0).abs() < 1e-2 && (q[1] - 0.5 * q[0]).abs() < 1e-9, "{q:?}");
}

#[test]
fn resume_from_a_snapshot_takes_the_same_steps_bit_for_bit() {
    // Hard Duffing spring at a step where modified Newton renews its factor
    // now and then, plus Van der Pol (unsymmetric D, LU): a run snapshotted
    // at every step and resumed from each snapshot ends where the
    // uninterrupted run does, to the bit, with the same counters.
    let w2 = 4.0 * PI * PI;
    for (law, dt) in [(Law::Duffing { k: w2, k3: w2 }, 0.2), (Law::VanDerPol { mu: 2.0 }, 0.05)] {
        let settings = IntegratorSettings {
            modified_newton: true,
            max_dt: 4.0 * dt,
            ..IntegratorSettings::new(ga(0.8), dt)
        };
        let mut whole = Integrator::new(Nonlinear1::new(law, 1.0), vec![0.0], 0.0, settings.clone()).unwrap();
        let mut snapshots = Vec::new();
        while whole.step_until(6.0).unwrap().is_some() {
            snapshots.push((whole.state(), whole.system().q));
        }
        assert!(snapshots.len() > 20);
        assert!(snapshots.iter().any(|(s, _)| s.factor.is_some()), "a held factor is restored");
        let end = (whole.system().q.to_bits(), whole.velocity()[0].to_bits(), whole.time().to_bits());
        for (state, q) in snapshots.iter().step_by(7) {
            let mut sys = Nonlinear1::new(law, *q);
            sys.trial = *q;
            let mut again = Integrator::resume(sys, state.clone(), settings.clone()).unwrap();
            again.advance_to(6.0, |_, _| {}).unwrap();
            let got = (again.system().q.to_bits(), again.velocity()[0].to_bits(), again.time().to_bits());
            assert_eq!(got, end, "resumed at t = {}", state.t);
            let (a, b) = (again.stats(), whole.stats());
            assert_eq!(
                (a.steps, a.rejected_steps, a.newton_iterations, a.factorisations),
                (b.steps, b.rejected_steps, b.newton_iterations, b.factorisations)
            );
        }
    }
}
