//! `[post]`: what `glaze post` needs beyond the results: required
//! clearances, the transient to skip, and S–N curves for fatigue; with
//! the conductors' wire data (`[conductors.NAME.wires]`) for the clamp
//! bending stress. Read with the rest of the input by `glaze check`, and
//! on its own from the input text kept in a results file by [`load_post`].

use super::Locator;
use crate::error::{InputError, InputErrorKind as K};
use serde::Deserialize;
use std::collections::BTreeMap;
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
    /// tower attachment, N) or `"clamp_bending_stress"` (zero-to-peak
    /// bending stress amplitude of the outer wires at a suspension clamp,
    /// MPa; needs `[conductors.NAME.wires]`).
    pub applies_to: String,
    /// `[cycles, range]` points (`[cycles, amplitude]` for a stress curve),
    /// cycles ascending and range descending.
    pub points: Vec<[f64; 2]>,
    /// Below the last point: `"limit"` (endurance limit, infinite life) or
    /// `"extrapolate"` (the last slope goes on). Default `"limit"`.
    pub below_last: Option<String>,
}

/// `[conductors.NAME.wires]`: stranding of a conductor, for the
/// Poffenberger–Swart bending stress at clamps.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawWires {
    /// The wire group the outer layer is made of (for ACSR: all aluminium wires).
    pub outer: RawWireGroup,
    /// The other wire groups (for ACSR: the steel core).
    #[serde(default)]
    pub others: Vec<RawWireGroup>,
    /// Minimum bending stiffness EI_min, N·m² (default: Σ count·E·π·d⁴/64 over the groups).
    pub ei_min: Option<f64>,
}

/// One group of equal wires in `[conductors.NAME.wires]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawWireGroup {
    /// Number of wires (may be left out of `outer` when `ei_min` is given).
    pub count: Option<usize>,
    /// Wire diameter, m.
    pub diameter: f64,
    /// Young's modulus of the wire, Pa.
    pub modulus: f64,
}

/// A validated wire group.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WireGroupSpec {
    /// Number of wires (0 when not given).
    pub count: usize,
    /// Diameter, m.
    pub diameter: f64,
    /// Young's modulus, Pa.
    pub modulus: f64,
}

/// Validated wire data of one conductor type.
#[derive(Debug, Clone, PartialEq)]
pub struct WiresSpec {
    /// Outer-layer wire group.
    pub outer: WireGroupSpec,
    /// Other groups.
    pub others: Vec<WireGroupSpec>,
    /// EI_min given directly, N·m².
    pub ei_min: Option<f64>,
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
    /// Wire data by conductor type name (only types that give `wires`).
    pub wires: BTreeMap<String, WiresSpec>,
    /// Conductor type name of each phase (and earth wire), by phase index.
    pub phase_conductors: Vec<String>,
}

/// Quantity an S–N curve is counted on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FatigueQuantity {
    /// Range of the force magnitude at a tower attachment, N.
    AttachmentTension,
    /// Zero-to-peak bending stress amplitude σ_a of the outer wires at a
    /// suspension clamp (Poffenberger–Swart), given in MPa.
    ClampBendingStress,
}

/// A validated S–N curve.
#[derive(Debug, Clone, PartialEq)]
pub struct SnCurveSpec {
    /// Name.
    pub name: String,
    /// Counted quantity.
    pub applies_to: FatigueQuantity,
    /// `(cycles, range)` points as typed (N for a force range, MPa for a
    /// stress amplitude), cycles strictly ascending, range strictly descending.
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
        #[serde(default)]
        conductors: BTreeMap<String, OnlyWires>,
        #[serde(default)]
        phases: Vec<OnlyConductor>,
    }
    #[derive(Deserialize)]
    struct OnlyWires {
        wires: Option<RawWires>,
    }
    #[derive(Deserialize)]
    struct OnlyConductor {
        conductor: String,
    }
    let loc = Locator::new(origin, text);
    let raw: OnlyPost = toml::from_str(text).map_err(|e| loc.toml_error(&e))?;
    let wires: Vec<(&str, Option<&RawWires>)> =
        raw.conductors.iter().map(|(k, c)| (k.as_str(), c.wires.as_ref())).collect();
    let phases: Vec<&str> = raw.phases.iter().map(|p| p.conductor.as_str()).collect();
    validate_post(raw.post.as_ref(), &wires, &phases, &loc)
}

/// Validates `[conductors.NAME.wires]`.
fn validate_wires(name: &str, w: &RawWires, loc: &Locator<'_>) -> Result<WiresSpec, InputError> {
    let base = format!("conductors.{name}.wires");
    let group = |g: &RawWireGroup, key: String| -> Result<WireGroupSpec, InputError> {
        for (k, v, what) in
            [("diameter", g.diameter, "diameter in m"), ("modulus", g.modulus, "modulus in Pa")]
        {
            if !(v.is_finite() && v > 0.0) {
                return Err(loc.error(
                    K::InvalidValue,
                    &format!("{key}.{k}"),
                    format!("must be a positive {what}, got {v}"),
                ));
            }
        }
        if g.count == Some(0) {
            return Err(loc.error(K::InvalidValue, &format!("{key}.count"), "must be at least 1"));
        }
        Ok(WireGroupSpec { count: g.count.unwrap_or(0), diameter: g.diameter, modulus: g.modulus })
    };
    let outer = group(&w.outer, format!("{base}.outer"))?;
    let others = w
        .others
        .iter()
        .enumerate()
        .map(|(i, g)| {
            let key = format!("{base}.others[{i}]");
            if g.count.is_none() {
                return Err(loc.error(
                    K::InvalidValue,
                    &key,
                    "`count` is needed for every group of `others`",
                ));
            }
            group(g, key)
        })
        .collect::<Result<Vec<_>, _>>()?;
    match w.ei_min {
        Some(v) if !(v.is_finite() && v > 0.0) => {
            return Err(loc.error(
                K::InvalidValue,
                &format!("{base}.ei_min"),
                format!("must be a positive bending stiffness in N·m², got {v}"),
            ))
        }
        None if w.outer.count.is_none() => {
            return Err(loc.error(
                K::InvalidValue,
                &format!("{base}.outer"),
                "give `count` (to sum EI_min over the wires) or `ei_min` in `wires`",
            ))
        }
        _ => {}
    }
    Ok(WiresSpec { outer, others, ei_min: w.ei_min })
}

/// Validates `[post]` (absent: all defaults) with the conductors' wire
/// data (`conductors`: type name and its `wires`) and each phase's
/// conductor type name (`phases`).
pub(super) fn validate_post(
    raw: Option<&RawPost>,
    conductors: &[(&str, Option<&RawWires>)],
    phases: &[&str],
    loc: &Locator<'_>,
) -> Result<PostSpec, InputError> {
    let mut wires = BTreeMap::new();
    for (name, w) in conductors {
        if let Some(w) = w {
            wires.insert(name.to_string(), validate_wires(name, w, loc)?);
        }
    }
    let phase_conductors: Vec<String> = phases.iter().map(|s| s.to_string()).collect();
    let Some(raw) = raw else { return Ok(PostSpec { wires, phase_conductors, ..PostSpec::default() }) };
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
            "clamp_bending_stress" => {
                if !phase_conductors.iter().any(|c| wires.contains_key(c)) {
                    let example = phase_conductors.first().map_or("NAME", String::as_str);
                    return Err(loc.error(
                        K::InvalidValue,
                        &key("applies_to"),
                        format!(
                            "`clamp_bending_stress` needs the wire data of a phase's conductor: \
                             add `[conductors.{example}.wires]` (outer = {{ count, diameter, modulus }}, \
                             others, or ei_min); no phase's conductor gives `wires`"
                        ),
                    ));
                }
                FatigueQuantity::ClampBendingStress
            }
            other => {
                return Err(loc.error(
                    K::UnknownName,
                    &key("applies_to"),
                    format!(
                        "unknown quantity `{other}`; known: `attachment_tension`, `clamp_bending_stress`"
                    ),
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
    Ok(PostSpec { transient, phase_to_phase: p2p, phase_to_ground: p2g, fatigue, wires, phase_conductors })
}
