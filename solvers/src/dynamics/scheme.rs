//! The one-step schemes: HHT-α, generalised-α and Newmark, all written in
//! the unified form of Chung & Hulbert (1993).
//!
//! Every scheme is a set of four numbers [`AlphaParameters`]
//! $(\alpha_m, \alpha_f, \beta, \gamma)$ for the residual
//!
//! $$ (1-\alpha_m) M a_{n+1} + \alpha_m M a_n
//!    + (1-\alpha_f)\,[C v_{n+1} + g_{n+1}] + \alpha_f\,[C v_n + g_n] = 0 $$
//!
//! with the Newmark relations
//! $q_{n+1} = q_n + h v_n + h^2[(\tfrac12-\beta) a_n + \beta a_{n+1}]$ and
//! $v_{n+1} = v_n + h[(1-\gamma) a_n + \gamma a_{n+1}]$.
//!
//! - HHT-α (Hilber, Hughes & Taylor 1977, *Earthquake Eng. Struct. Dyn.* 5,
//!   283–292): α ∈ [−1/3, 0], γ = (1 − 2α)/2, β = (1 − α)²/4, and in the
//!   unified form α_m = 0, α_f = −α. Spectral radius at Ω = ωh → ∞:
//!   ρ∞ = (1 + α)/(1 − α).
//! - Generalised-α (Chung & Hulbert 1993, *J. Appl. Mech.* 60, 371–375), from
//!   the spectral radius ρ∞ ∈ [0, 1] wanted at Ω → ∞:
//!   α_m = (2ρ∞ − 1)/(ρ∞ + 1), α_f = ρ∞/(ρ∞ + 1), γ = ½ − α_m + α_f,
//!   β = ¼(1 − α_m + α_f)². Second-order accurate, unconditionally stable
//!   for linear systems, least low-frequency dissipation for the chosen ρ∞.
//! - Newmark (1959) with its own β, γ: α_m = α_f = 0. Second order only for
//!   γ = ½; β = ¼, γ = ½ is the trapezoidal rule (no algorithmic damping).

use crate::SolverError;

/// A one-step time integration scheme.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Scheme {
    /// HHT-α (Hilber, Hughes & Taylor 1977).
    Hht {
        /// α ∈ [−1/3, 0] (dimensionless); 0 is the trapezoidal rule, more
        /// negative values damp high frequencies more (ρ∞ = (1 + α)/(1 − α)).
        alpha: f64,
    },
    /// Generalised-α (Chung & Hulbert 1993).
    GeneralizedAlpha {
        /// Spectral radius at infinite frequency ρ∞ ∈ [0, 1] (dimensionless):
        /// 1 keeps every frequency (no algorithmic damping), 0 annihilates
        /// the highest frequencies in one step.
        rho_inf: f64,
    },
    /// Newmark's method with explicit parameters (α_m = α_f = 0).
    Newmark {
        /// β ∈ (0, 1] (dimensionless; β = 0, the explicit central difference
        /// form, is not available: the unknown is the displacement increment).
        beta: f64,
        /// γ ∈ [½, 1] (dimensionless); γ > ½ damps at first order in Ω.
        gamma: f64,
    },
}

/// The parameters of the unified α-form (Chung & Hulbert 1993):
/// HHT-α is α_m = 0, α_f = −α; Newmark is α_m = α_f = 0. All dimensionless.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AlphaParameters {
    /// Weight of the old acceleration a_n in the inertia term.
    pub alpha_m: f64,
    /// Weight of the old state (C v_n + g_n) in the force terms.
    pub alpha_f: f64,
    /// Newmark β of the displacement update.
    pub beta: f64,
    /// Newmark γ of the velocity update.
    pub gamma: f64,
}

impl Scheme {
    /// The unified-form parameters of this scheme.
    ///
    /// # Errors
    /// [`SolverError::InvalidSettings`] naming the parameter (`alpha`,
    /// `rho_inf`, `beta`, `gamma`) when it is outside its range or not finite.
    pub fn parameters(&self) -> Result<AlphaParameters, SolverError> {
        let bad = |name, value, expected| Err(SolverError::InvalidSettings { name, value, expected });
        match *self {
            Scheme::Hht { alpha } => {
                if !((-1.0 / 3.0..=0.0).contains(&alpha)) {
                    return bad("alpha", alpha, "HHT-α needs α in [-1/3, 0]");
                }
                Ok(AlphaParameters {
                    alpha_m: 0.0,
                    alpha_f: -alpha,
                    beta: 0.25 * (1.0 - alpha) * (1.0 - alpha),
                    gamma: 0.5 - alpha,
                })
            }
            Scheme::GeneralizedAlpha { rho_inf } => {
                if !((0.0..=1.0).contains(&rho_inf)) {
                    return bad("rho_inf", rho_inf, "generalised-α needs ρ∞ in [0, 1]");
                }
                let alpha_m = (2.0 * rho_inf - 1.0) / (rho_inf + 1.0);
                let alpha_f = rho_inf / (rho_inf + 1.0);
                let s = 1.0 - alpha_m + alpha_f;
                Ok(AlphaParameters { alpha_m, alpha_f, beta: 0.25 * s * s, gamma: 0.5 - alpha_m + alpha_f })
            }
            Scheme::Newmark { beta, gamma } => {
                if !(beta > 0.0 && beta <= 1.0) {
                    return bad("beta", beta, "Newmark needs β in (0, 1]");
                }
                if !((0.5..=1.0).contains(&gamma)) {
                    return bad("gamma", gamma, "Newmark needs γ in [1/2, 1]");
                }
                Ok(AlphaParameters { alpha_m: 0.0, alpha_f: 0.0, beta, gamma })
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parameters_follow_the_published_formulas() {
        // HHT-α, α = −0.1: γ = (1 − 2α)/2 = 0.6, β = (1 − α)²/4 = 0.3025
        // (Hilber, Hughes & Taylor 1977).
        let p = Scheme::Hht { alpha: -0.1 }.parameters().unwrap();
        assert_eq!((p.alpha_m, p.alpha_f), (0.0, 0.1));
        assert!((p.gamma - 0.6).abs() < 1e-15 && (p.beta - 0.3025).abs() < 1e-15, "{p:?}");
        // Generalised-α, ρ∞ = 0.8 (Chung & Hulbert 1993): α_m = 0.6/1.8 = 1/3,
        // α_f = 0.8/1.8 = 4/9, γ = ½ − 1/3 + 4/9 = 11/18, β = ¼(10/9)² = 25/81.
        let p = Scheme::GeneralizedAlpha { rho_inf: 0.8 }.parameters().unwrap();
        for (got, want) in
            [(p.alpha_m, 1.0 / 3.0), (p.alpha_f, 4.0 / 9.0), (p.gamma, 11.0 / 18.0), (p.beta, 25.0 / 81.0)]
        {
            assert!((got - want).abs() < 1e-15, "{p:?}");
        }
        // ρ∞ = 1 is the trapezoidal rule averaged at the midpoint: α_m = α_f = ½.
        let p = Scheme::GeneralizedAlpha { rho_inf: 1.0 }.parameters().unwrap();
        assert_eq!(p, AlphaParameters { alpha_m: 0.5, alpha_f: 0.5, beta: 0.25, gamma: 0.5 });
        // ρ∞ = 0: α_m = −1, α_f = 0, γ = 3/2, β = 1.
        let p = Scheme::GeneralizedAlpha { rho_inf: 0.0 }.parameters().unwrap();
        assert_eq!(p, AlphaParameters { alpha_m: -1.0, alpha_f: 0.0, beta: 1.0, gamma: 1.5 });
    }

    #[test]
    fn out_of_range_parameters_are_named() {
        for (scheme, name) in [
            (Scheme::Hht { alpha: 0.1 }, "alpha"),
            (Scheme::Hht { alpha: -0.34 }, "alpha"),
            (Scheme::Hht { alpha: f64::NAN }, "alpha"),
            (Scheme::GeneralizedAlpha { rho_inf: 1.5 }, "rho_inf"),
            (Scheme::GeneralizedAlpha { rho_inf: -0.1 }, "rho_inf"),
            (Scheme::GeneralizedAlpha { rho_inf: f64::INFINITY }, "rho_inf"),
            (Scheme::Newmark { beta: 0.0, gamma: 0.5 }, "beta"),
            (Scheme::Newmark { beta: 0.25, gamma: 0.4 }, "gamma"),
        ] {
            match scheme.parameters() {
                Err(SolverError::InvalidSettings { name: got, .. }) => assert_eq!(got, name, "{scheme:?}"),
                other => panic!("{scheme:?}: expected InvalidSettings({name}), got {other:?}"),
            }
        }
        let e = Scheme::Hht { alpha: 0.1 }.parameters().unwrap_err().to_string();
        assert!(e.contains("alpha") && e.contains("0.1"), "{e}");
    }
}
