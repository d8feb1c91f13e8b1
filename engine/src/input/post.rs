//! `[post]`: what `glaze post` needs beyond the results: required
//! clearances, the transient to skip, and S–N curves for fatigue. Read
//! with the rest of the input by `glaze check`, and on its own from the
//! input text kept in a results file by [`load_post`].

use super::Locator;
use crate::error::{InputError, InputErrorKind as K};
use serde::Deserialize;
use std::path::Path;

/// `[post]` as typed.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawPost {
    /// Start of the steady galloping, s (default: detected).
    pub transient: Option<f64>,
    /// Required clearances.
    pub clearance: Option<RawClearance>,
    /// S–N curves.
    #[serde(default)]
    pub fatigue: Vec<RawSnCurve>,
}

/// `[post.clearance]` as typed.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawClearance {
    /// Least distance between any two phases (or a phase and an earth wire), m.
    pub phase_to_phase: Option<f64>,
    /// Least height of any conductor above the ground profile, m.
    pub phase_to_ground: Option<f64>,
}

/// `[[post.fatigue]]` as typed.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSnCurve {
    /// Name in the report.
    pub name: String,
    /// What the curve is for: `"attachment_tension"` (force range at a
    /// tower attachment, N) is the one quantity so far.
    pub applies_to: String,
    /// `[cycles, range]` points, cycles ascending and range descending.
    pub points: Vec<[f64; 2]>,
    /// Below the last point: `"limit"` (endurance limit, infinite life) or
    /// `"extrapolate"` (the last slope goes on). Default `"limit"`.
    pub below_last: Option<String>,
}

/// Validated `[post]`.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PostSpec {
    /// Time from which the motion is taken as steady, s; `None`: detect it.
    pub transient: Option<f64>,
    /// Required phase-to-phase clearance, m.
    pub phase_to_phase: Option<f64>,
    /// Required phase-to-ground clearance, m.
    pub phase_to_ground: Option<f64>,
    /// S–N curves.
    pub fatigue: Vec<SnCurveSpec>,
}

/// Quantity an S–N curve is counted on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FatigueQuantity {
    /// Range of the force magnitude at a tower attachment, N.
    AttachmentTension,
}

/// A validated S–N curve.
#[derive(Debug, Clone, PartialEq)]
pub struct SnCurveSpec {
    /// Name.
    pub name: String,
    /// Counted quantity.
    pub applies_to: FatigueQuantity,
    /// `(cycles, range)` points, cycles strictly ascending, range strictly descending.
    pub points: Vec<(f64, f64)>,
    /// Endurance limit below the last point (else the last slope goes on).
    pub limit_below_last: bool,
}

/// Reads only `[post]` from input text kept in a results file (the rest of
/// the input is not validated again: its tables may not be at hand).
/// `origin` names where the text came from in messages.
///
/// # Errors
/// A located [`InputError`] for bad TOML or a bad `[post]`.
pub fn load_post(origin: &Path, text: &str) -> Result<PostSpec, InputError> {
    #[derive(Deserialize)]
    struct OnlyPost {
        #[serde(default)]
        post: Option<RawPost>,
    }
    let loc = Locator::new(origin, text);
    let raw: OnlyPost = toml::from_str(text).map_err(|e| loc.toml_error(&e))?;
    validate_post(raw.post.as_ref(), &loc)
}

/// Validates `[post]` (absent: all defaults).
pub(super) fn validate_post(raw: Option<&RawPost>, loc: &Locator<'_>) -> Result<PostSpec, InputError> {
    let Some(raw) = raw else { return Ok(PostSpec::default()) };
    let positive = |v: Option<f64>, key: &str, what: &str| -> Result<Option<f64>, InputError> {
        match v {
            Some(x) if !(x.is_finite() && x >= 0.0) => {
                Err(loc.error(K::InvalidValue, key, format!("must be a {what} of zero or more, got {x}")))
            }
            v => Ok(v),
        }
    };
    let transient = positive(raw.transient, "post.transient", "time in s")?;
    let (p2p, p2g) = match &raw.clearance {
        Some(c) => (
            positive(c.phase_to_phase, "post.clearance.phase_to_phase", "distance in m")?,
            positive(c.phase_to_ground, "post.clearance.phase_to_ground", "distance in m")?,
        ),
        None => (None, None),
    };
    let mut fatigue = Vec::new();
    for (i, c) in raw.fatigue.iter().enumerate() {
        let key = |k: &str| format!("post.fatigue[{i}].{k}");
        let applies_to = match c.applies_to.as_str() {
            "attachment_tension" => FatigueQuantity::AttachmentTension,
            other => {
                return Err(loc.error(
                    K::UnknownName,
                    &key("applies_to"),
                    format!("unknown quantity `{other}`; known: `attachment_tension`"),
                ))
            }
        };
        if c.points.len() < 2 {
            return Err(loc.error(
                K::InvalidValue,
                &key("points"),
                "an S–N curve needs at least two [cycles, range] points",
            ));
        }
        for (j, p) in c.points.iter().enumerate() {
            if !(p[0].is_finite() && p[0] > 0.0 && p[1].is_finite() && p[1] > 0.0) {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("points"),
                    format!(
                        "point {}: cycles and range must be positive and finite, got [{}, {}]",
                        j + 1,
                        p[0],
                        p[1]
                    ),
                ));
            }
            if j > 0 {
                let q = c.points[j - 1];
                if p[0] <= q[0] {
                    return Err(loc.error(
                        K::InvalidValue,
                        &key("points"),
                        format!(
                            "point {}: {} cycles is not above point {}'s {}: cycles must ascend",
                            j + 1,
                            p[0],
                            j,
                            q[0]
                        ),
                    ));
                }
                if p[1] >= q[1] {
                    return Err(loc.error(
                        K::InvalidValue,
                        &key("points"),
                        format!(
                            "point {}: range {} is not below point {}'s {}: an S–N curve must decrease",
                            j + 1,
                            p[1],
                            j,
                            q[1]
                        ),
                    ));
                }
            }
        }
        let limit_below_last = match c.below_last.as_deref() {
            None | Some("limit") => true,
            Some("extrapolate") => false,
            Some(other) => {
                return Err(loc.error(
                    K::UnknownName,
                    &key("below_last"),
                    format!("unknown `{other}`; known: `limit`, `extrapolate`"),
                ))
            }
        };
        fatigue.push(SnCurveSpec {
            name: c.name.clone(),
            applies_to,
            points: c.points.iter().map(|p| (p[0], p[1])).collect(),
            limit_below_last,
        });
    }
    Ok(PostSpec { transient, phase_to_phase: p2p, phase_to_ground: p2g, fatigue })
}
