//! Irvine's elastic catenary (H. M. Irvine, *Cable Structures*, MIT Press
//! 1981, §2.2, eqs. 2.5–2.7 in Lagrangian form).
//!
//! A cable of unstretched length `L0`, weight `w` per unstretched length and
//! axial stiffness `EA` hangs between A (origin) and B at horizontal
//! distance `l` and height `h` above A. With `s` the unstretched arc length
//! from A, `H` the (constant) horizontal force and `V(s) = V0 + w s` the
//! vertical component of the tension force pointing along increasing `s`
//! (so `V0 < 0` where the cable leaves A downwards), and `T = √(H²+V²)`:
//!
//! ```text
//! x(s) = H s/EA + (H/w) [asinh(V(s)/H) − asinh(V0/H)]
//! z(s) = (V0 s + w s²/2)/EA + (1/w) [T(s) − T(0)]
//! ```
//!
//! Hooke's law is `T = EA (dp/ds − 1)`, with `p` the stretched arc length.

/// Geometry, weight and stiffness of one span, in its vertical plane.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CatenarySpan {
    /// Horizontal distance between supports `l`, in m (> 0).
    pub horizontal_length: f64,
    /// Height of the far support above the near one `h`, in m.
    pub height_difference: f64,
    /// Weight per unstretched length `w`, in N/m (> 0).
    pub weight_per_length: f64,
    /// Axial stiffness `EA`, in N (> 0).
    pub axial_stiffness: f64,
}

/// A solved elastic catenary.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Catenary {
    /// The span it hangs in.
    pub span: CatenarySpan,
    /// Horizontal force `H`, in N.
    pub horizontal_tension: f64,
    /// Vertical tension component at A along increasing `s`, `V0`, in N.
    pub vertical_at_start: f64,
    /// Unstretched length `L0`, in m.
    pub unstretched_length: f64,
}

/// Why a catenary could not be found.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum CatenaryError {
    /// The iteration did not converge (unphysical data).
    #[error("the elastic catenary equations did not converge ({0})")]
    NoConvergence(&'static str),
    /// A target that no hanging cable can meet.
    #[error("{0}")]
    Impossible(String),
}

impl Catenary {
    fn end_residual(span: &CatenarySpan, h: f64, v0: f64, l0: f64) -> (f64, f64) {
        let (x, z) = position(span, h, v0, l0);
        (x - span.horizontal_length, z - span.height_difference)
    }

    /// Solves for `V0` and `L0` given the horizontal tension `H`.
    pub fn from_horizontal_tension(span: CatenarySpan, h: f64) -> Result<Self, CatenaryError> {
        if !(h > 0.0 && h.is_finite()) {
            return Err(CatenaryError::Impossible(format!("horizontal tension must be positive, got {h} N")));
        }
        let (l, dz, w) = (span.horizontal_length, span.height_difference, span.weight_per_length);
        // Start from the inextensible parabola.
        let chord = (l * l + dz * dz).sqrt();
        let mut l0 = chord * (1.0 + (w * l).powi(2) / (24.0 * h * h)) / (1.0 + h / span.axial_stiffness);
        let mut v0 = h * dz / l - w * l0 / 2.0;
        for _ in 0..100 {
            let (rx, rz) = Self::end_residual(&span, h, v0, l0);
            if rx.abs() < 1e-12 * chord && rz.abs() < 1e-12 * chord {
                return Ok(Self {
                    span,
                    horizontal_tension: h,
                    vertical_at_start: v0,
                    unstretched_length: l0,
                });
            }
            // Analytic Jacobian of (x(L0), z(L0)) with respect to (V0, L0).
            let vb = v0 + w * l0;
            let (ta, tb) = ((h * h + v0 * v0).sqrt(), (h * h + vb * vb).sqrt());
            let ea = span.axial_stiffness;
            let dx_dv0 = (1.0 / w) * (h / tb - h / ta);
            let dx_dl0 = h / ea + h / tb;
            let dz_dv0 = l0 / ea + (vb / tb - v0 / ta) / w;
            let dz_dl0 = vb / ea + vb / tb;
            let det = dx_dv0 * dz_dl0 - dx_dl0 * dz_dv0;
            if det.abs() < f64::MIN_POSITIVE {
                break;
            }
            let d_v0 = (-rx * dz_dl0 + rz * dx_dl0) / det;
            let d_l0 = (-dx_dv0 * rz + dz_dv0 * rx) / det;
            // Backtrack until the end residual decreases (guards steep starts).
            let norm = rx.hypot(rz);
            let mut t = 1.0;
            loop {
                let (v_try, l_try) = (v0 + t * d_v0, (l0 + t * d_l0).max(0.5 * l0));
                let (ex, ez) = Self::end_residual(&span, h, v_try, l_try);
                if ex.hypot(ez) < norm || t < 1e-4 {
                    v0 = v_try;
                    l0 = l_try;
                    break;
                }
                t *= 0.5;
            }
        }
        Err(CatenaryError::NoConvergence("from horizontal tension"))
    }

    /// Solves for `H` and `V0` given the unstretched length `L0`.
    pub fn from_unstretched_length(span: CatenarySpan, l0: f64) -> Result<Self, CatenaryError> {
        // L0 decreases monotonically with H. Parabola estimate from the
        // slack, then a bracket in log H.
        let chord = span.horizontal_length.hypot(span.height_difference);
        let slack = (l0 - chord).max(1e-6 * chord);
        let estimate = span.weight_per_length * (span.horizontal_length.powi(3) / (24.0 * slack)).sqrt();
        let h = bisect_log(estimate, l0, |h| {
            Self::from_horizontal_tension(span, h).map(|c| c.unstretched_length)
        })
        .ok_or_else(|| {
            CatenaryError::Impossible(format!("no catenary of unstretched length {l0} m fits this span"))
        })?;
        Self::from_horizontal_tension(span, h)
    }

    /// Solves for the horizontal tension that gives `sag` (largest vertical
    /// distance between the chord and the cable), in m.
    pub fn from_sag(span: CatenarySpan, sag: f64) -> Result<Self, CatenaryError> {
        if !(sag > 0.0 && sag.is_finite()) {
            return Err(CatenaryError::Impossible(format!("sag must be positive, got {sag} m")));
        }
        let estimate = span.weight_per_length * span.horizontal_length.powi(2) / (8.0 * sag);
        let h = bisect_log(estimate, sag, |h| Self::from_horizontal_tension(span, h).map(|c| c.sag()))
            .ok_or_else(|| {
                CatenaryError::Impossible(format!("no horizontal tension gives a sag of {sag} m"))
            })?;
        Self::from_horizontal_tension(span, h)
    }

    /// Position `(x, z)` at unstretched arc length `s` from A, in m.
    pub fn position(&self, s: f64) -> (f64, f64) {
        position(&self.span, self.horizontal_tension, self.vertical_at_start, s)
    }

    /// Tension magnitude at unstretched arc length `s`, in N.
    pub fn tension(&self, s: f64) -> f64 {
        let v = self.vertical_at_start + self.span.weight_per_length * s;
        self.horizontal_tension.hypot(v)
    }

    /// Tension at A and at B, in N.
    pub fn end_tensions(&self) -> (f64, f64) {
        (self.tension(0.0), self.tension(self.unstretched_length))
    }

    /// Largest vertical distance between the chord AB and the cable, in m.
    ///
    /// It occurs where the cable slope equals the chord slope, i.e. where
    /// `V(s) = H h / l` (the elastic terms do not change the slope `V/H`).
    pub fn sag(&self) -> f64 {
        let sp = &self.span;
        let s_star = ((self.horizontal_tension * sp.height_difference / sp.horizontal_length
            - self.vertical_at_start)
            / sp.weight_per_length)
            .clamp(0.0, self.unstretched_length);
        let (x, z) = self.position(s_star);
        sp.height_difference * x / sp.horizontal_length - z
    }
}

/// Finds `H` with `f(H) = target` for a quantity `f` that decreases with
/// `H` (sag, unstretched length): bracket around `estimate` in log H, then
/// bisect to round-off. `None` when no bracket is found.
fn bisect_log(estimate: f64, target: f64, f: impl Fn(f64) -> Result<f64, CatenaryError>) -> Option<f64> {
    let (mut lo, mut hi) = (estimate / 2.0, estimate * 2.0);
    let mut widen = 0;
    loop {
        let above = f(lo).ok().is_some_and(|v| v >= target);
        let below = f(hi).ok().is_some_and(|v| v <= target);
        if above && below {
            break;
        }
        if !above {
            lo /= 2.0;
        }
        if !below {
            hi *= 2.0;
        }
        widen += 1;
        if widen > 60 {
            return None;
        }
    }
    for _ in 0..200 {
        let mid = (lo * hi).sqrt();
        match f(mid) {
            Ok(v) if v > target => lo = mid,
            Ok(_) => hi = mid,
            Err(_) => return None,
        }
        if hi / lo - 1.0 < 4.0 * f64::EPSILON {
            break;
        }
    }
    Some((lo * hi).sqrt())
}

fn position(span: &CatenarySpan, h: f64, v0: f64, s: f64) -> (f64, f64) {
    let (w, ea) = (span.weight_per_length, span.axial_stiffness);
    let v = v0 + w * s;
    let x = h * s / ea + (h / w) * ((v / h).asinh() - (v0 / h).asinh());
    let z = (v0 * s + 0.5 * w * s * s) / ea + (h.hypot(v) - h.hypot(v0)) / w;
    (x, z)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn span(h: f64) -> CatenarySpan {
        CatenarySpan {
            horizontal_length: 400.0,
            height_difference: h,
            weight_per_length: 15.97,
            axial_stiffness: 2.9e7,
        }
    }

    #[test]
    fn solutions_reach_the_far_support() {
        for dz in [0.0, 40.0, -25.0] {
            let c = Catenary::from_horizontal_tension(span(dz), 28_000.0).unwrap();
            let (x, z) = c.position(c.unstretched_length);
            assert!((x - 400.0).abs() < 1e-9 && (z - dz).abs() < 1e-9);
        }
    }

    #[test]
    fn inverse_problems_round_trip() {
        let c = Catenary::from_horizontal_tension(span(40.0), 25_000.0).unwrap();
        let by_length = Catenary::from_unstretched_length(span(40.0), c.unstretched_length).unwrap();
        assert!((by_length.horizontal_tension / 25_000.0 - 1.0).abs() < 1e-9);
        let by_sag = Catenary::from_sag(span(40.0), c.sag()).unwrap();
        assert!((by_sag.horizontal_tension / 25_000.0 - 1.0).abs() < 1e-9);
    }

    #[test]
    fn inextensible_level_span_matches_the_classical_catenary() {
        // Inextensible catenary of a level span: sag = (H/w)(cosh(w l / 2H) − 1)
        // (Irvine 1981, §1.2). EA = 1e15 N makes elastic stretch negligible.
        let sp = CatenarySpan { axial_stiffness: 1e15, ..span(0.0) };
        let (h, w, l) = (40_000.0, 15.97, 400.0);
        let c = Catenary::from_horizontal_tension(sp, h).unwrap();
        let exact = (h / w) * ((w * l / (2.0 * h)).cosh() - 1.0);
        assert!((c.sag() / exact - 1.0).abs() < 1e-9, "{} vs {exact}", c.sag());
    }
}
