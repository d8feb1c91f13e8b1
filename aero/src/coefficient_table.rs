//! Aerodynamic coefficient tables: drag C_D, lift C_L and moment C_M of a
//! conductor section versus angle of attack α, read from CSV and
//! interpolated linearly or by a monotone piecewise cubic.
//!
//! # Sign convention
//!
//! Work in the section plane, square to the conductor, with right-handed unit
//! vectors
//!
//! - `e_y`: horizontal, perpendicular to the conductor, pointing downwind
//!   (the way the component of the mean wind normal to the conductor blows);
//! - `e_z`: vertical, up;
//! - `e_x = e_y × e_z`: along the conductor. For wind square to the line
//!   along global +Y (direction 90°, DESIGN §3) these are global X, Y, Z.
//!
//! The section's *reference axis* is a direction fixed in the section that
//! coincides with `e_y` when the section's twist θ (its rotation about `e_x`,
//! right-handed) is zero. The relative wind is the normal wind minus the
//! conductor's velocity, `V = U_n − ẋ`, with direction angle
//! `β = atan2(V·e_z, V·e_y)`. Then
//!
//! - **α = β − θ**: the angle from the reference axis to the relative wind
//!   velocity, positive right-handed about `e_x` (from `e_y` toward `e_z`).
//!   Wind blowing *upward* onto an untwisted section has α > 0; a section
//!   moving *up* with speed ż in a horizontal wind U sees α ≈ −ż/U.
//! - Per unit length, with `q = ½ρ|V|²` and reference diameter `D`:
//!   drag `q D C_D` along `V/|V|`; lift `q D C_L` along `e_x × V/|V|` (the
//!   drag direction turned +90° about `e_x`, i.e. *up* for a horizontal wind
//!   along `e_y`); moment `q D² C_M` about `e_x` (positive in the sense of θ
//!   and α).
//!
//! With this convention the Den Hartog criterion has its textbook form
//! (Den Hartog 1932, "Transmission line vibration due to sleet", Trans.
//! AIEE 51; Blevins, *Flow-Induced Vibration*, 2nd ed. 1990, ch. 4): in a
//! horizontal wind U, a section held at angle α₀ (by its static twist) and
//! moving vertically feels
//! `F_z = q D (C_L(α) cos β + C_D(α) sin β)` with `β ≈ −ż/U`, `α = α₀ + β`,
//! so `∂F_z/∂ż = −(ρ U D / 2)(dC_L/dα + C_D)` at α₀: an aerodynamic damping
//! ratio `ρ U D (dC_L/dα + C_D)/(4 m ω)`, and the section is **unstable when
//! `dC_L/dα + C_D < 0`** (see [`CoefficientTable::den_hartog`]).
//!
//! α is in rad everywhere in the API (SI); the file gives it in degrees.
//!
//! # File format
//!
//! ```text
//! # any comment
//! # reference_diameter = 0.0531
//! alpha_deg, cd, cl, cm
//! -180, 0.98, -0.27, 0.04
//! ...
//! ```
//!
//! Comment lines start with `#`; a `# reference_diameter = <m>` comment
//! gives `D` (or pass [`TableOptions::reference_diameter`]; if both are given
//! they must agree). The header names the columns `alpha_deg`, `cd`, `cl` and
//! optionally `cm` in any order (case-insensitive; other columns are
//! ignored); without `cm`, C_M and its derivative are zero. `alpha_deg` must
//! be strictly increasing with no step larger than
//! [`TableOptions::max_spacing`] (30° by default).
//!
//! # Range and periodicity
//!
//! - If the table spans exactly 360° (last α − first α = 360° within 1e-9°),
//!   it is **periodic**: its last row must repeat the first (each coefficient
//!   equal within 1e-9 relative, else [`TableError::PeriodMismatch`]), the
//!   seam is interpolated like any interior node, and any finite α is
//!   accepted, reduced modulo 2π.
//! - If it spans less, α outside `[first, last]` (with 1e-12 rad slack for
//!   rounding) is an error, [`TableError::OutOfRange`]: a table is never
//!   extrapolated or clamped silently.
//! - A span over 360° is rejected ([`TableError::SpanExceedsPeriod`]).
//!
//! # Interpolation
//!
//! [`Interpolation::MonotoneCubic`] (the default) is the C¹ piecewise cubic
//! Hermite interpolant with the shape-preserving node derivatives of
//! Fritsch & Carlson (1980, "Monotone piecewise cubic interpolation", SIAM J.
//! Numer. Anal. 17(2), 238–246) in the weighted-harmonic-mean form of
//! Fritsch & Butland (1984), with the one-sided three-point shape-preserving
//! end derivatives of Moler's `pchiptx`. These are exactly the rules of
//! SciPy's `scipy.interpolate.PchipInterpolator`, and the crate's tests
//! compare against it to 1e-12; a periodic table differs from SciPy only in
//! the first and last interval, where it uses the periodic interior rule
//! instead of SciPy's end rule. The interpolant passes through every
//! tabulated point, is monotone wherever the data are, and does not
//! overshoot. [`CoefficientTable::derivative`] is the analytic derivative of
//! the same cubic.
//!
//! [`Interpolation::Linear`] joins the points by straight lines; its
//! derivative is the slope of the interval containing α (at a node, the
//! interval to its right; at the last node of a non-periodic table, the last
//! interval), so it jumps at the nodes.

mod error;
mod hermite;
mod parse;

use std::f64::consts::TAU;
use std::path::{Path, PathBuf};

pub use error::TableError;

/// Tolerance on the 360° span of a periodic table, in degrees.
const PERIOD_TOL_DEG: f64 = 1e-9;
/// Relative tolerance on first-versus-last row values of a periodic table,
/// and on two reference diameters agreeing.
const VALUE_TOL: f64 = 1e-9;
/// Slack on the ends of a non-periodic table's range, in rad.
const RANGE_SLACK: f64 = 1e-12;

/// How a table is interpolated between its rows.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum Interpolation {
    /// Piecewise linear; needs at least 2 rows.
    Linear,
    /// Monotone piecewise cubic Hermite (Fritsch & Carlson 1980), C¹, the
    /// same as SciPy's `PchipInterpolator`; needs at least 4 rows.
    #[default]
    MonotoneCubic,
}

impl Interpolation {
    /// The smallest number of table rows this interpolation accepts.
    pub fn min_points(self) -> usize {
        match self {
            Self::Linear => 2,
            Self::MonotoneCubic => 4,
        }
    }

    /// Short name for messages: `"linear"` or `"monotone-cubic"`.
    pub fn name(self) -> &'static str {
        match self {
            Self::Linear => "linear",
            Self::MonotoneCubic => "monotone-cubic",
        }
    }
}

/// Drag, lift and moment coefficients at one angle of attack
/// (dimensionless), or their derivatives with respect to α (per rad).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Coefficients {
    /// Drag coefficient C_D (or dC_D/dα, per rad).
    pub cd: f64,
    /// Lift coefficient C_L (or dC_L/dα, per rad).
    pub cl: f64,
    /// Moment coefficient C_M, referred to `D²` (or dC_M/dα, per rad);
    /// zero for a table without a `cm` column.
    pub cm: f64,
}

/// Options for reading a table.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TableOptions {
    /// Interpolation between rows (default monotone cubic).
    pub interpolation: Interpolation,
    /// Reference diameter `D`, in m; `None` (default) takes it from the
    /// file's `# reference_diameter = …` comment. If both are given they must
    /// agree to 1e-9 relative.
    pub reference_diameter: Option<f64>,
    /// Largest allowed step between consecutive angles, in rad (default 30°);
    /// `f64::INFINITY` disables the check.
    pub max_spacing: f64,
}

impl Default for TableOptions {
    fn default() -> Self {
        Self {
            interpolation: Interpolation::default(),
            reference_diameter: None,
            max_spacing: 30f64.to_radians(),
        }
    }
}

/// One coefficient versus α, with its node derivatives for the cubic.
#[derive(Clone, Debug)]
struct Column {
    /// Tabulated values.
    y: Vec<f64>,
    /// Node derivatives (per rad) of the monotone cubic; empty for linear.
    d: Vec<f64>,
}

/// A table of C_D, C_L and C_M versus angle of attack for one section
/// shape, with its reference diameter. See the [module docs](self) for the
/// sign convention, the file format and the range rules.
#[derive(Clone, Debug)]
pub struct CoefficientTable {
    path: PathBuf,
    /// Tabulated angles, in rad, strictly increasing.
    alpha: Vec<f64>,
    /// C_D, C_L, C_M.
    columns: [Column; 3],
    has_moment: bool,
    reference_diameter: f64,
    interpolation: Interpolation,
    periodic: bool,
}

impl CoefficientTable {
    /// Read a table from a CSV file.
    ///
    /// # Errors
    /// [`TableError::Unreadable`] if the file cannot be read, and any of the
    /// content errors of [`CoefficientTable::from_csv_str`].
    pub fn from_csv_path(path: impl AsRef<Path>, options: &TableOptions) -> Result<Self, TableError> {
        let path = path.as_ref();
        let text = std::fs::read_to_string(path)
            .map_err(|source| TableError::Unreadable { path: path.to_path_buf(), source })?;
        Self::from_csv_str(&text, path, options)
    }

    /// Read a table from CSV text; `origin` names it in errors (a file path,
    /// or something like `"<inline>"`).
    ///
    /// # Errors
    /// A [`TableError`] naming `origin` and the line for a missing header or
    /// column, a bad or non-finite number, too few rows for the
    /// interpolation, angles repeated, decreasing, too far apart or spanning
    /// more than 360°, a 360° table whose last row differs from its first,
    /// or a missing, non-positive or conflicting reference diameter.
    pub fn from_csv_str(
        text: &str,
        origin: impl AsRef<Path>,
        options: &TableOptions,
    ) -> Result<Self, TableError> {
        let path = origin.as_ref();
        let mut raw = parse::parse(text, path)?;
        let n = raw.alpha_deg.len();
        let interpolation = options.interpolation;
        if n < interpolation.min_points() {
            return Err(TableError::TooFewPoints {
                path: path.to_path_buf(),
                line: raw.header_line,
                found: n,
                required: interpolation.min_points(),
                interpolation: interpolation.name(),
            });
        }
        check_angles(&raw, path, options.max_spacing.to_degrees())?;
        let periodic = check_period(&mut raw, path)?;
        let reference_diameter = resolve_diameter(&raw, path, options.reference_diameter)?;

        let mut alpha: Vec<f64> = raw.alpha_deg.iter().map(|a| a.to_radians()).collect();
        if periodic {
            alpha[n - 1] = alpha[0] + TAU;
        }
        let [cd, cl, cm] = raw.values;
        let column = |y: Vec<f64>| {
            let d = match interpolation {
                Interpolation::Linear => Vec::new(),
                Interpolation::MonotoneCubic => hermite::pchip_derivatives(&alpha, &y, periodic),
            };
            Column { y, d }
        };
        let columns = [column(cd), column(cl), column(cm)];
        Ok(Self {
            path: path.to_path_buf(),
            alpha,
            columns,
            has_moment: raw.has_moment,
            reference_diameter,
            interpolation,
            periodic,
        })
    }

    /// Coefficients C_D, C_L, C_M at angle of attack `alpha` (rad).
    ///
    /// # Errors
    /// [`TableError::OutOfRange`] for α outside a non-periodic table,
    /// [`TableError::NonFiniteAngle`] for NaN or infinite α.
    pub fn evaluate(&self, alpha: f64) -> Result<Coefficients, TableError> {
        Ok(self.evaluate_with_derivative(alpha)?.0)
    }

    /// Derivatives dC_D/dα, dC_L/dα, dC_M/dα at `alpha` (rad), per rad: the
    /// exact derivative of the interpolant [`CoefficientTable::evaluate`]
    /// uses.
    ///
    /// # Errors
    /// As [`CoefficientTable::evaluate`].
    pub fn derivative(&self, alpha: f64) -> Result<Coefficients, TableError> {
        Ok(self.evaluate_with_derivative(alpha)?.1)
    }

    /// Coefficients and their α-derivatives (per rad) at `alpha` (rad) in one
    /// table look-up, for the Newton tangent of the quasi-steady loads.
    ///
    /// # Errors
    /// As [`CoefficientTable::evaluate`].
    pub fn evaluate_with_derivative(&self, alpha: f64) -> Result<(Coefficients, Coefficients), TableError> {
        let xv = self.reduce(alpha)?;
        let x = &self.alpha;
        let i = hermite::locate(x, xv);
        let one = |c: &Column| match self.interpolation {
            Interpolation::Linear => hermite::linear(x, &c.y, i, xv),
            Interpolation::MonotoneCubic => hermite::cubic(x, &c.y, &c.d, i, xv),
        };
        let [(cd, dcd), (cl, dcl), (cm, dcm)] =
            [one(&self.columns[0]), one(&self.columns[1]), one(&self.columns[2])];
        Ok((Coefficients { cd, cl, cm }, Coefficients { cd: dcd, cl: dcl, cm: dcm }))
    }

    /// Den Hartog coefficient `dC_L/dα + C_D` at `alpha` (rad), with
    /// dC_L/dα per rad (dimensionless). Negative means the section is
    /// unstable in plunge at that mean angle of attack in the absence of
    /// structural damping (module docs); DESIGN §4 screens with onset where
    /// `ρ U D (dC_L/dα + C_D)/(4 m ω) = −ξ`.
    ///
    /// # Errors
    /// As [`CoefficientTable::evaluate`].
    pub fn den_hartog(&self, alpha: f64) -> Result<f64, TableError> {
        let (c, d) = self.evaluate_with_derivative(alpha)?;
        Ok(d.cl + c.cd)
    }

    /// Reference diameter `D` the coefficients are referred to, in m.
    pub fn reference_diameter(&self) -> f64 {
        self.reference_diameter
    }

    /// The interpolation in use.
    pub fn interpolation(&self) -> Interpolation {
        self.interpolation
    }

    /// Whether the table spans 360° and is evaluated periodically.
    pub fn is_periodic(&self) -> bool {
        self.periodic
    }

    /// Whether the file has a `cm` column (otherwise C_M ≡ 0).
    pub fn has_moment(&self) -> bool {
        self.has_moment
    }

    /// First and last tabulated angle, in rad.
    pub fn alpha_range(&self) -> (f64, f64) {
        (self.alpha[0], self.alpha[self.alpha.len() - 1])
    }

    /// The tabulated angles, in rad (strictly increasing).
    pub fn alpha_points(&self) -> &[f64] {
        &self.alpha
    }

    /// The file (or origin name) the table was read from.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Map `alpha` into the tabulated range, or fail.
    fn reduce(&self, alpha: f64) -> Result<f64, TableError> {
        if !alpha.is_finite() {
            return Err(TableError::NonFiniteAngle { path: self.path.clone(), alpha });
        }
        let (lo, hi) = self.alpha_range();
        if (lo..=hi).contains(&alpha) {
            return Ok(alpha);
        }
        if self.periodic {
            // rem_euclid may round up to TAU itself: clamp to the last node,
            // whose values equal the first node's.
            return Ok((lo + (alpha - lo).rem_euclid(TAU)).clamp(lo, hi));
        }
        if alpha >= lo - RANGE_SLACK && alpha <= hi + RANGE_SLACK {
            return Ok(alpha.clamp(lo, hi));
        }
        Err(TableError::OutOfRange {
            path: self.path.clone(),
            alpha_deg: alpha.to_degrees(),
            min_deg: lo.to_degrees(),
            max_deg: hi.to_degrees(),
        })
    }
}

/// Strictly increasing angles with no gap over `max_deg`.
fn check_angles(raw: &parse::RawTable, path: &Path, max_deg: f64) -> Result<(), TableError> {
    for i in 1..raw.alpha_deg.len() {
        let (prev, cur) = (raw.alpha_deg[i - 1], raw.alpha_deg[i]);
        let (previous_line, line) = (raw.lines[i - 1], raw.lines[i]);
        let path = path.to_path_buf();
        if cur == prev {
            return Err(TableError::DuplicateAlpha { path, line, previous_line, alpha_deg: cur });
        }
        if cur < prev {
            return Err(TableError::NotIncreasing {
                path,
                line,
                previous_line,
                alpha_deg: cur,
                previous_deg: prev,
            });
        }
        let gap = cur - prev;
        if gap > max_deg * (1.0 + 1e-12) + 1e-9 {
            return Err(TableError::Gap { path, line, previous_line, gap_deg: gap, max_deg });
        }
    }
    Ok(())
}

/// Whether the table is periodic; for a periodic one, check that the last
/// row repeats the first and make it repeat it exactly.
fn check_period(raw: &mut parse::RawTable, path: &Path) -> Result<bool, TableError> {
    let n = raw.alpha_deg.len();
    let span = raw.alpha_deg[n - 1] - raw.alpha_deg[0];
    let (first_line, line) = (raw.lines[0], raw.lines[n - 1]);
    if span > 360.0 + PERIOD_TOL_DEG {
        return Err(TableError::SpanExceedsPeriod {
            path: path.to_path_buf(),
            line,
            first_line,
            span_deg: span,
        });
    }
    if span < 360.0 - PERIOD_TOL_DEG {
        return Ok(false);
    }
    let names = ["cd", "cl", "cm"];
    for (values, name) in raw.values.iter_mut().zip(names) {
        let (first, last) = (values[0], values[n - 1]);
        if (first - last).abs() > VALUE_TOL * first.abs().max(last.abs()).max(1.0) {
            return Err(TableError::PeriodMismatch {
                path: path.to_path_buf(),
                line,
                first_line,
                column: name.to_string(),
                first,
                last,
            });
        }
        values[n - 1] = first;
    }
    Ok(true)
}

/// The reference diameter from the caller or the file, checked.
fn resolve_diameter(raw: &parse::RawTable, path: &Path, given: Option<f64>) -> Result<f64, TableError> {
    match (given, raw.diameter) {
        (Some(value), file) => {
            if !(value.is_finite() && value > 0.0) {
                return Err(TableError::InvalidReferenceDiameter {
                    path: path.to_path_buf(),
                    line: None,
                    value,
                });
            }
            if let Some((in_file, line)) = file {
                if (in_file - value).abs() > VALUE_TOL * value {
                    return Err(TableError::ConflictingReferenceDiameter {
                        path: path.to_path_buf(),
                        line,
                        value: in_file,
                        other: value,
                        other_origin: "given by the caller".to_string(),
                    });
                }
            }
            Ok(value)
        }
        (None, Some((value, _))) => Ok(value),
        (None, None) => {
            Err(TableError::MissingReferenceDiameter { path: path.to_path_buf(), line: raw.header_line })
        }
    }
}

#[cfg(test)]
mod tests;
