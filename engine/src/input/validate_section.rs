//! Validation of a tension section: towers, insulator strings, phases and
//! bundles, spacers, ground profile and the devices of the chosen layout.

use super::schema::{RawInput, RawSpacers};
use super::Locator;
use crate::devices::{DeviceContext, PlacedDevice, Station, TOWER_CLEARANCE};
use crate::error::{InputError, InputErrorKind as K};
use crate::registry::ElementRegistry;
use crate::spec::{
    Bundle, Conductor, Insulator, InsulatorKind, Phase, SpacerDamper, SpacerKind, SpacerSpec, TensionSection,
    Tower, TowerKind,
};
use std::collections::BTreeMap;
use std::sync::Arc;

/// Default axial stiffness of an insulator string, in N: a porcelain or
/// glass string stretches by well under a millimetre under its working
/// load (common practice), so 1e8 N acts as rigid.
const STRING_AXIAL_STIFFNESS: f64 = 1.0e8;

/// Most spacers in one span (a typing-error guard, common practice: 1000
/// spacers at 20 m fill a 20 km span).
const MAX_SPACERS_PER_SPAN: usize = 1000;

/// Largest line angle taken at one tower, in degrees (a larger turn is
/// made by two towers or is outside what the plan geometry here checks).
const MAX_LINE_ANGLE_DEG: f64 = 60.0;

/// Distance within which two device or spacer stations of one phase share
/// a node, in m (the length of a clamp, common practice).
pub const STATION_MERGE: f64 = 0.5;

fn finite(loc: &Locator<'_>, key: &str, v: f64, what: &str) -> Result<f64, InputError> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(loc.error(K::InvalidValue, key, format!("must be a finite {what}, got {v}")))
    }
}

fn positive(loc: &Locator<'_>, key: &str, v: f64, unit: &str) -> Result<f64, InputError> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        Err(loc.error(K::InvalidValue, key, format!("must be a positive finite number ({unit}), got {v}")))
    }
}

/// The hinges and frame of `kind = "damper"` spacers.
fn spacer_damper(s: &RawSpacers, loc: &Locator<'_>) -> Result<SpacerDamper, InputError> {
    let needed = |key: &str, v: Option<f64>, what: &str| {
        v.ok_or_else(|| loc.error(K::MissingKey, key, format!("a spacer-damper needs {what}")))
    };
    let at_least_zero = |key: &str, v: f64, unit: &str| {
        if v.is_finite() && v >= 0.0 {
            Ok(v)
        } else {
            Err(loc.error(
                K::InvalidValue,
                key,
                format!("must be zero or a positive finite number ({unit}), got {v}"),
            ))
        }
    };
    let hinge_stiffness = positive(
        loc,
        "spacers.hinge_stiffness",
        needed("spacers.hinge_stiffness", s.hinge_stiffness, "hinge_stiffness in N·m/rad")?,
        "N·m/rad",
    )?;
    let hinge_damping = at_least_zero(
        "spacers.hinge_damping",
        needed("spacers.hinge_damping", s.hinge_damping, "hinge_damping in N·m·s/rad")?,
        "N·m·s/rad",
    )?;
    let frame_mass = at_least_zero("spacers.frame_mass", s.frame_mass.unwrap_or(0.0), "kg")?;
    if frame_mass >= s.mass {
        return Err(loc.error(
            K::InvalidValue,
            "spacers.frame_mass",
            format!("{frame_mass} kg is not less than the spacer's mass of {} kg (the rest is on the arms and clamps)", s.mass),
        ));
    }
    let frame_inertia = at_least_zero("spacers.frame_inertia", s.frame_inertia.unwrap_or(0.0), "kg·m²")?;
    if frame_inertia > 0.0 && frame_mass == 0.0 {
        return Err(loc.error(
            K::InvalidValue,
            "spacers.frame_inertia",
            "a frame with rotary inertia needs a frame_mass",
        ));
    }
    Ok(SpacerDamper { hinge_stiffness, hinge_damping, frame_mass, frame_inertia })
}

/// Validates the section part of `raw`.
pub(super) fn validate_section(
    raw: &RawInput,
    loc: &Locator<'_>,
    registry: &ElementRegistry,
    conductors: &[Conductor],
    conductor_index: &BTreeMap<String, usize>,
) -> Result<TensionSection, InputError> {
    if !raw.supports.is_empty() || !raw.spans.is_empty() {
        let key = if raw.supports.is_empty() { "spans" } else { "supports" };
        return Err(loc.error(
            K::InvalidValue,
            key,
            "a file describes either a row (supports and spans) or a section (towers and phases), not both",
        ));
    }

    // Insulator types.
    let mut insulators = Vec::new();
    let mut insulator_index = BTreeMap::new();
    for (name, s) in &raw.insulators {
        let key = |f: &str| format!("insulators.{name}.{f}");
        let kind = match s.kind.as_str() {
            "suspension" => InsulatorKind::Suspension,
            "dead_end" => InsulatorKind::DeadEnd,
            "v_string" => {
                let a = s.half_angle.ok_or_else(|| {
                    loc.error(
                        K::MissingKey,
                        &key("half_angle"),
                        "a V-string needs half_angle in degrees, e.g. 45",
                    )
                })?;
                if !(a.is_finite() && a > 5.0 && a < 80.0) {
                    return Err(loc.error(
                        K::InvalidValue,
                        &key("half_angle"),
                        format!("must be between 5 and 80 degrees, got {a}"),
                    ));
                }
                InsulatorKind::VString { half_angle: a.to_radians() }
            }
            other => {
                return Err(loc.error(
                    K::UnknownName,
                    &key("kind"),
                    format!("unknown insulator kind `{other}`; known kinds: suspension, v_string, dead_end"),
                ))
            }
        };
        if s.half_angle.is_some() && !matches!(kind, InsulatorKind::VString { .. }) {
            return Err(loc.error(
                K::InvalidValue,
                &key("half_angle"),
                "half_angle belongs to kind = \"v_string\"",
            ));
        }
        insulator_index.insert(name.clone(), insulators.len());
        insulators.push(Insulator {
            name: name.clone(),
            kind,
            length: positive(loc, &key("length"), s.length, "m")?,
            mass: positive(loc, &key("mass"), s.mass, "kg")?,
            axial_stiffness: match s.axial_stiffness {
                Some(ea) => positive(loc, &key("axial_stiffness"), ea, "N")?,
                None => STRING_AXIAL_STIFFNESS,
            },
        });
    }

    // Phases.
    if raw.phases.is_empty() {
        return Err(loc.error(K::MissingKey, "phases", "a section needs at least one [[phases]]"));
    }
    let mut phases = Vec::new();
    let mut phase_index = BTreeMap::new();
    for (i, p) in raw.phases.iter().enumerate() {
        let key = |f: &str| format!("phases[{i}].{f}");
        if p.name.trim().is_empty() {
            return Err(loc.error(K::InvalidValue, &key("name"), "a phase needs a non-empty name"));
        }
        if phase_index.insert(p.name.clone(), i).is_some() {
            return Err(loc.error(
                K::InvalidValue,
                &key("name"),
                format!("phase name `{}` is used twice", p.name),
            ));
        }
        let conductor = *conductor_index.get(&p.conductor).ok_or_else(|| {
            let known: Vec<&str> = conductors.iter().map(|c| c.name.as_str()).collect();
            loc.error(
                K::UnknownName,
                &key("conductor"),
                format!("no conductor named `{}`; known conductors: {}", p.conductor, known.join(", ")),
            )
        })?;
        let bundle = match &p.bundle {
            None => Bundle { count: 1, radius: 0.0, orientation: 0.0 },
            Some(b) => {
                if ![1, 2, 3, 4, 6].contains(&b.count) {
                    return Err(loc.error(
                        K::InvalidValue,
                        &key("bundle.count"),
                        format!("bundles of 1, 2, 3, 4 or 6 subconductors are supported, got {}", b.count),
                    ));
                }
                let radius = match (b.count, b.spacing) {
                    (1, _) => 0.0,
                    (_, None) => {
                        return Err(loc.error(
                            K::MissingKey,
                            &key("bundle.spacing"),
                            "a bundle needs its spacing in m",
                        ))
                    }
                    (n, Some(s)) => {
                        let s = positive(loc, &key("bundle.spacing"), s, "m")?;
                        let d = conductors[conductor].diameter;
                        // Circle diameter s: the twin's spacing is the same number.
                        let radius = 0.5 * s;
                        let gap = 2.0 * radius * (std::f64::consts::PI / n as f64).sin();
                        if gap <= 2.0 * d {
                            return Err(loc.error(
                                K::Impossible,
                                &key("bundle.spacing"),
                                format!("subconductors would be {gap:.3} m apart, less than two diameters ({:.3} m)", 2.0 * d),
                            ));
                        }
                        radius
                    }
                };
                let orientation = finite(
                    loc,
                    &key("bundle.orientation"),
                    b.orientation.unwrap_or(0.0),
                    "angle in degrees",
                )?;
                Bundle { count: b.count, radius, orientation: orientation.to_radians() }
            }
        };
        if p.earth_wire && bundle.count != 1 {
            return Err(loc.error(
                K::InvalidValue,
                &key("bundle.count"),
                "an earth wire is a single conductor",
            ));
        }
        let h = positive(loc, &key("horizontal_tension"), p.horizontal_tension, "N")?;
        let rts = conductors[conductor].rated_strength;
        if h >= rts {
            return Err(loc.error(
                K::Impossible,
                &key("horizontal_tension"),
                format!("{h} N is not below the rated strength {rts} N of `{}`", p.conductor),
            ));
        }
        phases.push(Phase {
            name: p.name.clone(),
            conductor,
            bundle,
            earth_wire: p.earth_wire,
            horizontal_tension: h,
        });
    }

    // Towers.
    if raw.towers.len() < 2 {
        return Err(loc.error(K::MissingKey, "towers", "a section needs at least two [[towers]]"));
    }
    let mut towers = Vec::new();
    let mut names = BTreeMap::new();
    for (i, t) in raw.towers.iter().enumerate() {
        let key = |f: &str| format!("towers[{i}].{f}");
        if t.name.trim().is_empty() {
            return Err(loc.error(K::InvalidValue, &key("name"), "a tower needs a non-empty name"));
        }
        if names.insert(t.name.clone(), i).is_some() {
            return Err(loc.error(
                K::InvalidValue,
                &key("name"),
                format!("tower name `{}` is used twice", t.name),
            ));
        }
        let chainage = finite(loc, &key("chainage"), t.chainage, "chainage in m")?;
        if let Some(prev) = towers.last().map(|p: &Tower| p.chainage) {
            if chainage - prev < 2.0 * TOWER_CLEARANCE + 1.0 {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("chainage"),
                    format!("towers must be in increasing chainage order, at least 3 m apart; {chainage} m follows {prev} m"),
                ));
            }
            if chainage - prev > super::validate::MAX_SPAN_LENGTH {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("chainage"),
                    format!(
                        "a span of {:.1} m from {prev} m: spans longer than {} m are typing errors",
                        chainage - prev,
                        super::validate::MAX_SPAN_LENGTH
                    ),
                ));
            }
        }
        let ground = finite(loc, &key("ground"), t.ground, "elevation in m")?;
        let last = i + 1 == raw.towers.len();
        let kind = match t.kind.as_str() {
            "dead_end" => TowerKind::DeadEnd,
            "suspension" => TowerKind::Suspension,
            other => {
                return Err(loc.error(
                    K::UnknownName,
                    &key("kind"),
                    format!("unknown tower kind `{other}`; known kinds: dead_end, suspension"),
                ))
            }
        };
        if (i == 0 || last) && kind != TowerKind::DeadEnd {
            return Err(loc.error(
                K::InvalidValue,
                &key("kind"),
                "a tension section starts and ends at a dead_end tower",
            ));
        }
        if i > 0 && !last && kind == TowerKind::DeadEnd {
            return Err(loc.error(
                K::InvalidValue,
                &key("kind"),
                "a dead_end tower inside the route ends the tension section; model each section in its own file",
            ));
        }
        let line_angle = match t.line_angle {
            None => 0.0,
            Some(a) if a.is_finite() && a.abs() <= MAX_LINE_ANGLE_DEG => a.to_radians(),
            Some(a) => {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("line_angle"),
                    format!(
                        "a line angle is the change of route direction in degrees, within ±{MAX_LINE_ANGLE_DEG}; got {a}"
                    ),
                ))
            }
        };
        let needs_string = phases.iter().any(|p| !p.earth_wire);
        let insulator = match &t.insulator {
            None if needs_string => {
                return Err(loc.error(
                    K::MissingKey,
                    &format!("towers[{i}]"),
                    "name the insulator string type of the phases at this tower: insulator = \"...\"",
                ))
            }
            None => None,
            Some(name) => {
                let s = *insulator_index.get(name).ok_or_else(|| {
                    let known: Vec<&str> = insulators.iter().map(|s| s.name.as_str()).collect();
                    loc.error(
                        K::UnknownName,
                        &key("insulator"),
                        format!("no insulator type named `{name}`; known types: {}", known.join(", ")),
                    )
                })?;
                let ok = matches!(
                    (kind, insulators[s].kind),
                    (TowerKind::DeadEnd, InsulatorKind::DeadEnd)
                        | (TowerKind::Suspension, InsulatorKind::Suspension | InsulatorKind::VString { .. })
                );
                if !ok {
                    return Err(loc.error(
                        K::InvalidValue,
                        &key("insulator"),
                        format!(
                            "`{name}` does not fit a {} tower (dead_end towers take dead_end strings, suspension towers suspension or v_string ones)",
                            t.kind
                        ),
                    ));
                }
                Some(s)
            }
        };
        let mut attachments = Vec::new();
        for p in &phases {
            let a = t.attachments.get(&p.name).ok_or_else(|| {
                loc.error(
                    K::MissingKey,
                    &key("attachments"),
                    format!("no attachment point for phase `{}` on tower `{}`", p.name, t.name),
                )
            })?;
            let akey = format!("towers[{i}].attachments.{}", p.name);
            finite(loc, &akey, a[0], "offset in m")?;
            if !(a[1].is_finite() && a[1] > 0.0) {
                return Err(loc.error(
                    K::InvalidValue,
                    &akey,
                    format!("the height above ground must be positive, got {}", a[1]),
                ));
            }
            attachments.push(*a);
        }
        if let Some(extra) = t.attachments.keys().find(|k| !phase_index.contains_key(*k)) {
            return Err(loc.error(
                K::UnknownName,
                &format!("towers[{i}].attachments.{extra}"),
                format!(
                    "no phase named `{extra}`; known phases: {}",
                    phases.iter().map(|p| p.name.as_str()).collect::<Vec<_>>().join(", ")
                ),
            ));
        }
        let stiffness = match t.stiffness {
            None => None,
            Some(k) => {
                for (j, v) in k.iter().enumerate() {
                    if !(v.is_finite() && *v > 0.0) {
                        return Err(loc.error(
                            K::InvalidValue,
                            &key("stiffness"),
                            format!("component {j} must be a positive stiffness in N/m, got {v}"),
                        ));
                    }
                }
                Some(k)
            }
        };
        towers.push(Tower {
            name: t.name.clone(),
            chainage,
            ground,
            kind,
            insulator,
            attachments,
            stiffness,
            line_angle,
        });
    }
    // Attachment points must not clash: phases on one tower at least 0.5 m apart.
    for (i, t) in towers.iter().enumerate() {
        for a in 0..phases.len() {
            for b in a + 1..phases.len() {
                let (pa, pb) = (t.attachments[a], t.attachments[b]);
                if (pa[0] - pb[0]).hypot(pa[1] - pb[1]) < 0.5 {
                    return Err(loc.error(
                        K::InvalidValue,
                        &format!("towers[{i}].attachments.{}", phases[b].name),
                        format!(
                            "phases `{}` and `{}` attach less than 0.5 m apart",
                            phases[a].name, phases[b].name
                        ),
                    ));
                }
            }
        }
    }
    let span_lengths: Vec<f64> = towers.windows(2).map(|w| w[1].chainage - w[0].chainage).collect();

    // Ground profile: the user's points and the towers' ground, by chainage.
    let mut ground_profile: Vec<(f64, f64)> = towers.iter().map(|t| (t.chainage, t.ground)).collect();
    if let Some(route) = &raw.route {
        for (j, p) in route.ground_profile.iter().enumerate() {
            let key = format!("route.ground_profile[{j}]");
            finite(loc, &key, p[0], "chainage in m")?;
            finite(loc, &key, p[1], "elevation in m")?;
            if p[0] < towers[0].chainage || p[0] > towers[towers.len() - 1].chainage {
                return Err(loc.error(
                    K::InvalidValue,
                    &key,
                    format!("chainage {} m lies outside the section", p[0]),
                ));
            }
            ground_profile.push((p[0], p[1]));
        }
    }
    ground_profile.sort_by(|a, b| a.0.total_cmp(&b.0));
    ground_profile.dedup_by(|a, b| (a.0 - b.0).abs() < 1e-9);

    // Spacers.
    let spacers = match &raw.spacers {
        None => None,
        Some(s) => {
            let kind_name = s.kind.as_deref().unwrap_or("rigid");
            if kind_name != "elastic" && s.arm_bending_stiffness.is_some() {
                return Err(loc.error(
                    K::InvalidValue,
                    "spacers.arm_bending_stiffness",
                    "belongs to kind = \"elastic\"",
                ));
            }
            if kind_name != "damper" {
                for (key, v) in [
                    ("spacers.hinge_stiffness", s.hinge_stiffness),
                    ("spacers.hinge_damping", s.hinge_damping),
                    ("spacers.frame_mass", s.frame_mass),
                    ("spacers.frame_inertia", s.frame_inertia),
                ] {
                    if v.is_some() {
                        return Err(loc.error(K::InvalidValue, key, "belongs to kind = \"damper\""));
                    }
                }
            }
            let kind = match kind_name {
                "rigid" => SpacerKind::Rigid,
                "damper" => SpacerKind::Damper(spacer_damper(s, loc)?),
                "elastic" => SpacerKind::Elastic(positive(
                    loc,
                    "spacers.arm_bending_stiffness",
                    s.arm_bending_stiffness.ok_or_else(|| {
                        loc.error(
                            K::MissingKey,
                            "spacers.arm_bending_stiffness",
                            "an elastic spacer needs arm_bending_stiffness in N·m²",
                        )
                    })?,
                    "N·m²",
                )?),
                other => {
                    return Err(loc.error(
                        K::UnknownName,
                        "spacers.kind",
                        format!("unknown spacer kind `{other}`; known kinds: rigid, elastic, damper"),
                    ))
                }
            };
            let mut positions = vec![Vec::new(); span_lengths.len()];
            match (s.max_subspan, &s.positions) {
                (Some(d), None) => {
                    let d = positive(loc, "spacers.max_subspan", d, "m")?;
                    for (i, &l) in span_lengths.iter().enumerate() {
                        if (l / d).is_nan() || l / d > MAX_SPACERS_PER_SPAN as f64 {
                            return Err(loc.error(
                                K::InvalidValue,
                                "spacers.max_subspan",
                                format!(
                                    "{d} m gives {:.3e} spacers in span {} ({l:.1} m); at most {MAX_SPACERS_PER_SPAN} per span",
                                    l / d,
                                    i + 1
                                ),
                            ));
                        }
                        let n = (l / d).ceil() as usize;
                        positions[i] = (1..n).map(|k| l * k as f64 / n as f64).collect();
                    }
                }
                (None, Some(list)) => {
                    for (j, sp) in list.iter().enumerate() {
                        let key = format!("spacers.positions[{j}]");
                        if sp.span == 0 || sp.span > span_lengths.len() {
                            return Err(loc.error(
                                K::InvalidValue,
                                &format!("{key}.span"),
                                format!(
                                    "no span {}: spans are numbered 1 to {}",
                                    sp.span,
                                    span_lengths.len()
                                ),
                            ));
                        }
                        let l = span_lengths[sp.span - 1];
                        let mut d = sp.distances.clone();
                        for &x in &d {
                            if !(x.is_finite() && x >= TOWER_CLEARANCE && x <= l - TOWER_CLEARANCE) {
                                return Err(loc.error(
                                    K::InvalidValue,
                                    &format!("{key}.distances"),
                                    format!("a spacer at {x} m lies outside span {} ({l:.1} m long, {TOWER_CLEARANCE} m clear of the towers)", sp.span),
                                ));
                            }
                        }
                        d.sort_by(f64::total_cmp);
                        if d.windows(2).any(|w| w[1] - w[0] < STATION_MERGE) {
                            return Err(loc.error(
                                K::InvalidValue,
                                &format!("{key}.distances"),
                                "two spacers overlap (closer than 0.5 m)",
                            ));
                        }
                        positions[sp.span - 1].extend(d);
                    }
                }
                (Some(_), Some(_)) => {
                    return Err(loc.error(
                        K::InvalidValue,
                        "spacers",
                        "give max_subspan or positions, not both",
                    ))
                }
                (None, None) => {
                    return Err(loc.error(
                        K::MissingKey,
                        "spacers",
                        "give max_subspan (m) or positions of the spacers",
                    ))
                }
            }
            Some(SpacerSpec { kind, positions, mass: positive(loc, "spacers.mass", s.mass, "kg")? })
        }
    };

    // Devices of the chosen layout.
    let layout = raw.section.as_ref().and_then(|s| s.layout.clone()).unwrap_or_else(|| "none".to_string());
    let mut devices = Vec::new();
    if layout != "none" {
        let chosen = raw.layouts.get(&layout).ok_or_else(|| {
            let known: Vec<&str> = raw.layouts.keys().map(|s| s.as_str()).collect();
            loc.error(
                K::UnknownName,
                "section.layout",
                format!(
                    "no layout named `{layout}`; known layouts: none{}{}",
                    if known.is_empty() { "" } else { ", " },
                    known.join(", ")
                ),
            )
        })?;
        let phase_names: Vec<String> = phases.iter().map(|p| p.name.clone()).collect();
        let subconductors: Vec<usize> = phases.iter().map(|p| p.bundle.count).collect();
        let base_dir = loc.path().parent().unwrap_or_else(|| std::path::Path::new("."));
        let ctx = DeviceContext {
            phases: &phase_names,
            subconductors: &subconductors,
            span_lengths: &span_lengths,
            base_dir,
        };
        for (j, table) in chosen.devices.iter().enumerate() {
            let key = format!("layouts.{layout}.devices[{j}]");
            let mut table = table.clone();
            let kind_name = match table.remove("type") {
                Some(toml::Value::String(s)) => s,
                Some(_) => {
                    return Err(loc.error(
                        K::InvalidValue,
                        &format!("{key}.type"),
                        "must be a string naming a device kind",
                    ))
                }
                None => {
                    return Err(loc.error(
                        K::MissingKey,
                        &key,
                        format!(
                            "a device needs a type; known types: {}",
                            registry.devices().names().join(", ")
                        ),
                    ))
                }
            };
            let kind = registry.devices().get(&kind_name).ok_or_else(|| {
                loc.error(
                    K::UnknownName,
                    &format!("{key}.type"),
                    format!(
                        "unknown device type `{kind_name}`; known types: {}",
                        registry.devices().names().join(", ")
                    ),
                )
            })?;
            let device = kind.parse(table, &ctx).map_err(|e| {
                let at = if e.field.is_empty() { key.clone() } else { format!("{key}.{}", e.field) };
                loc.error(K::InvalidValue, &at, format!("{kind_name}: {}", e.message))
            })?;
            devices.push(PlacedDevice { kind: kind.name(), key, device: Arc::from(device) });
        }
        check_overlaps(loc, &devices, &phases)?;
    } else if let Some(name) = raw.layouts.keys().next().filter(|_| raw.section.is_none()) {
        tracing::debug!("layouts given but [section] layout not set; modelling none (first: {name})");
    }

    Ok(TensionSection { insulators, towers, phases, ground_profile, spacers, layout, devices })
}

/// Two devices may not grip one phase at the same point, nor may covered
/// lengths overlap or hold another device's point.
fn check_overlaps(loc: &Locator<'_>, devices: &[PlacedDevice], phases: &[Phase]) -> Result<(), InputError> {
    let mut points: Vec<(Station, usize)> = Vec::new();
    for (i, d) in devices.iter().enumerate() {
        let mut own: Vec<Station> = d.device.stations();
        if d.device.covering().is_some() {
            own.clear();
        }
        for s in own {
            if let Some((_, j)) = points.iter().find(|(p, j)| {
                *j != i
                    && p.phase == s.phase
                    && p.span == s.span
                    && (p.distance - s.distance).abs() < STATION_MERGE
                    && !(d.device.shares_points() && devices[*j].device.shares_points())
            }) {
                return Err(loc.error(
                    K::InvalidValue,
                    &d.key,
                    format!(
                        "overlaps {} on phase `{}` in span {} at {:.2} m",
                        devices[*j].key,
                        phases[s.phase].name,
                        s.span + 1,
                        s.distance
                    ),
                ));
            }
            points.push((s, i));
        }
    }
    let covers: Vec<(usize, crate::devices::Covering)> =
        devices.iter().enumerate().filter_map(|(i, d)| d.device.covering().map(|c| (i, c))).collect();
    for (a, (i, ca)) in covers.iter().enumerate() {
        for (j, cb) in &covers[a + 1..] {
            if ca.phase == cb.phase
                && ca.span == cb.span
                && ca.extent[0] < cb.extent[1]
                && cb.extent[0] < ca.extent[1]
            {
                return Err(loc.error(
                    K::InvalidValue,
                    &devices[*j].key,
                    format!("its covered length overlaps {}", devices[*i].key),
                ));
            }
        }
        if let Some((s, j)) = points.iter().find(|(p, _)| {
            p.phase == ca.phase && p.span == ca.span && p.distance > ca.extent[0] && p.distance < ca.extent[1]
        }) {
            return Err(loc.error(
                K::InvalidValue,
                &devices[*j].key,
                format!("sits at {:.2} m inside the length covered by {}", s.distance, devices[*i].key),
            ));
        }
    }
    Ok(())
}
