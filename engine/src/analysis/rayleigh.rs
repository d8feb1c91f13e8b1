//! Rayleigh damping `C = a0 M + a1 K` fitted to two modes (Clough &
//! Penzien, *Dynamics of Structures*, 2nd ed. 1993, §12.4): the damping
//! ratio of a mode of circular frequency ω is `ξ(ω) = a0/(2ω) + a1 ω/2`.

/// Rayleigh coefficients.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rayleigh {
    /// Mass-proportional coefficient a0, in 1/s.
    pub mass: f64,
    /// Stiffness-proportional coefficient a1, in s.
    pub stiffness: f64,
}

impl Rayleigh {
    /// The coefficients that give ratio `xi[k]` at circular frequency
    /// `omega[k]` (rad/s), k = 0, 1, with `omega[0] < omega[1]`:
    /// `a0 = 2 ω₁ω₂ (ξ₁ω₂ − ξ₂ω₁)/(ω₂² − ω₁²)`, `a1 = 2 (ξ₂ω₂ − ξ₁ω₁)/(ω₂² − ω₁²)`
    /// (Clough & Penzien 1993, eq. 12-35).
    pub fn fit(omega: [f64; 2], xi: [f64; 2]) -> Result<Self, String> {
        let [w1, w2] = omega;
        if !(w1 > 0.0 && w2 > w1) {
            return Err(format!(
                "Rayleigh damping needs two distinct positive frequencies, got ω = {w1} and {w2} rad/s"
            ));
        }
        let d = w2 * w2 - w1 * w1;
        let r = Self {
            mass: 2.0 * w1 * w2 * (xi[0] * w2 - xi[1] * w1) / d,
            stiffness: 2.0 * (xi[1] * w2 - xi[0] * w1) / d,
        };
        if r.mass < 0.0 || r.stiffness < 0.0 {
            return Err(format!(
                "the fit to ξ = {xi:?} at ω = {omega:?} rad/s gives a negative coefficient (a0 = {:.3e}, a1 = {:.3e}); \
                 choose modes and ratios with ξ₂/ξ₁ between ω₁/ω₂ and ω₂/ω₁",
                r.mass, r.stiffness
            ));
        }
        Ok(r)
    }

    /// Damping ratio at circular frequency `omega`, in rad/s.
    pub fn ratio(&self, omega: f64) -> f64 {
        self.mass / (2.0 * omega) + self.stiffness * omega / 2.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fit_reproduces_both_target_ratios() {
        // The defining property of the fit (Clough & Penzien 1993, eq. 12-34).
        let r = Rayleigh::fit([1.2, 9.0], [0.01, 0.02]).unwrap();
        assert!((r.ratio(1.2) - 0.01).abs() < 1e-15);
        assert!((r.ratio(9.0) - 0.02).abs() < 1e-15);
        // Equal ratios: the minimum of ξ(ω) lies at √(ω₁ω₂) and is below both.
        let r = Rayleigh::fit([1.0, 4.0], [0.02, 0.02]).unwrap();
        assert!(r.ratio(2.0) < 0.02);
    }

    #[test]
    fn impossible_fits_are_errors() {
        assert!(Rayleigh::fit([2.0, 1.0], [0.01, 0.01]).is_err());
        assert!(Rayleigh::fit([1.0, 10.0], [0.5, 0.001]).is_err());
    }
}
