//! Second input stage: every check on values and names, with the key path
//! of the offending value in each error.

use super::schema::{RawInput, SCHEMA_VERSION};
use super::Locator;
use crate::error::{InputError, InputErrorKind as K};
use crate::registry::ElementRegistry;
use crate::spec::{
    Conductor, DampingSpec, DynamicsSpec, LoadCase, MeshDensity, Perturbation, PerturbationSize,
    PerturbationStart, SchemeSpec, ScreeningSpec, SectionSpec, SolverSpec, SpanSpec, StringingTarget,
    Support, WindSpec, MAX_PERTURBATION_TWIST,
};
use glaze_aero::ice::GLAZE_ICE_DENSITY;
use glaze_aero::{CoefficientTable, MeanWind, RadialIce, TableOptions, WindProfile, ISA_AIR_DENSITY};
use nalgebra::Vector3;
use std::collections::BTreeMap;
use std::sync::Arc;

/// A round section: C_D = 1 at every angle, no lift or moment. The drag
/// factor 1.0 for stranded conductors is that of IEC 60826 §6.2.6
/// (common practice).
pub(crate) fn round_section(diameter: f64) -> Arc<CoefficientTable> {
    let mut text = String::from("alpha_deg, cd, cl, cm\n");
    for a in (-180..=180).step_by(30) {
        text.push_str(&format!("{a}, 1.0, 0.0, 0.0\n"));
    }
    let options = TableOptions { reference_diameter: Some(diameter), ..TableOptions::default() };
    // The text above is a valid table for any positive diameter.
    Arc::new(
        CoefficientTable::from_csv_str(&text, "(built-in round section)", &options)
            .expect("built-in round table"),
    )
}

/// Reads a coefficient table named at `key`, relative to the input file.
fn table_at(loc: &Locator<'_>, key: &str, name: &str) -> Result<Arc<CoefficientTable>, InputError> {
    let base = loc.path().parent().unwrap_or_else(|| std::path::Path::new("."));
    let path = base.join(name);
    CoefficientTable::from_csv_path(&path, &TableOptions::default())
        .map(Arc::new)
        .map_err(|e| loc.error(K::InvalidValue, key, format!("aerodynamic table: {e}")))
}

/// Largest conductor diameter, in m: beyond it a diameter is a typing
/// error (common practice: the largest conductors are under 0.1 m).
const MAX_DIAMETER: f64 = 1.0;

/// Largest radial ice thickness, in m: beyond it a thickness is a typing
/// error (common practice: recorded accretions stay well under 0.3 m).
const MAX_ICE_THICKNESS: f64 = 1.0;

/// Longest span, in m: beyond it a span is a typing error (common
/// practice: the longest river and fjord crossings are about 5 km).
pub(super) const MAX_SPAN_LENGTH: f64 = 20_000.0;

/// Most elements in one span: beyond it a mesh is a typing error (common
/// practice: 1e5 elements of 1 cm cover a 1 km span).
const MAX_ELEMENTS_PER_SPAN: usize = 100_000;

/// Standard gravity, in m/s² (CGPM 1901, ISO 80000-3).
pub const STANDARD_GRAVITY: f64 = 9.80665;

fn positive(loc: &Locator<'_>, key: &str, value: f64, unit: &str) -> Result<f64, InputError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(loc.error(
            K::InvalidValue,
            key,
            format!("must be a positive finite number ({unit}), got {value}"),
        ))
    }
}

fn temperature(loc: &Locator<'_>, key: &str, value: f64) -> Result<f64, InputError> {
    // A conductor outside −80…+250 °C is a typing error, not a load case (common practice).
    if value.is_finite() && (-80.0..=250.0).contains(&value) {
        Ok(value)
    } else {
        Err(loc.error(
            K::InvalidValue,
            key,
            format!("must be a conductor temperature in °C between −80 and 250, got {value}"),
        ))
    }
}

pub(super) fn validate(
    raw: RawInput,
    loc: &Locator<'_>,
    registry: &ElementRegistry,
) -> Result<SectionSpec, InputError> {
    if raw.glaze.schema_version != SCHEMA_VERSION {
        return Err(loc.error(
            K::InvalidValue,
            "glaze.schema_version",
            format!(
                "this glaze reads schema version {SCHEMA_VERSION}, the file says {}",
                raw.glaze.schema_version
            ),
        ));
    }

    let mut conductors = Vec::new();
    let mut conductor_index = BTreeMap::new();
    for (name, c) in &raw.conductors {
        let key = |field: &str| format!("conductors.{name}.{field}");
        let diameter = positive(loc, &key("diameter"), c.diameter, "m")?;
        if diameter >= MAX_DIAMETER {
            return Err(loc.error(
                K::InvalidValue,
                &key("diameter"),
                format!("must be a conductor diameter in m below {MAX_DIAMETER} m, got {diameter}"),
            ));
        }
        let mass = positive(loc, &key("mass_per_length"), c.mass_per_length, "kg/m")?;
        let alpha = c.thermal_expansion;
        if !(alpha.is_finite() && (0.0..1e-3).contains(&alpha)) {
            return Err(loc.error(
                K::InvalidValue,
                &key("thermal_expansion"),
                format!("must be in 1/K between 0 and 1e-3, got {alpha}"),
            ));
        }
        let polar = match c.polar_inertia_per_length {
            Some(j) => positive(loc, &key("polar_inertia_per_length"), j, "kg·m")?,
            None => mass * diameter * diameter / 8.0,
        };
        let aero_table = match &c.aero_table {
            Some(file) => table_at(loc, &key("aero_table"), file)?,
            None => round_section(diameter),
        };
        conductor_index.insert(name.clone(), conductors.len());
        conductors.push(Conductor {
            name: name.clone(),
            diameter,
            mass_per_length: mass,
            axial_stiffness: positive(loc, &key("axial_stiffness"), c.axial_stiffness, "N")?,
            bending_stiffness: positive(loc, &key("bending_stiffness"), c.bending_stiffness, "N·m²")?,
            torsional_stiffness: positive(loc, &key("torsional_stiffness"), c.torsional_stiffness, "N·m²")?,
            thermal_expansion: alpha,
            rated_strength: positive(loc, &key("rated_strength"), c.rated_strength, "N")?,
            polar_inertia_per_length: polar,
            aero_table,
        });
    }
    if conductors.is_empty() {
        return Err(loc.error(
            K::MissingKey,
            "conductors",
            "define at least one conductor type, e.g. [conductors.main]",
        ));
    }

    let is_section = !raw.towers.is_empty() || !raw.phases.is_empty();
    let section = if is_section {
        Some(super::validate_section::validate_section(&raw, loc, registry, &conductors, &conductor_index)?)
    } else {
        None
    };
    let (supports, spans) = if is_section {
        (Vec::new(), Vec::new())
    } else {
        let mut supports = Vec::new();
        let mut support_index = BTreeMap::new();
        for (i, s) in raw.supports.iter().enumerate() {
            let key = format!("supports[{i}]");
            if s.name.trim().is_empty() {
                return Err(loc.error(
                    K::InvalidValue,
                    &format!("{key}.name"),
                    "a support needs a non-empty name",
                ));
            }
            if support_index.insert(s.name.clone(), i).is_some() {
                return Err(loc.error(
                    K::InvalidValue,
                    &format!("{key}.name"),
                    format!("support name `{}` is used twice", s.name),
                ));
            }
            if s.position.iter().any(|v| !v.is_finite()) {
                return Err(loc.error(
                    K::InvalidValue,
                    &format!("{key}.position"),
                    "coordinates must be finite numbers in m",
                ));
            }
            supports.push(Support { name: s.name.clone(), position: Vector3::from(s.position) });
        }
        if supports.len() < 2 {
            return Err(loc.error(K::MissingKey, "supports", "a section needs at least two [[supports]]"));
        }

        let mut spans = Vec::new();
        for (i, s) in raw.spans.iter().enumerate() {
            let key = |field: &str| format!("spans[{i}].{field}");
            let find = |field: &str, name: &str| {
                support_index.get(name).copied().ok_or_else(|| {
                    let known: Vec<&str> = supports.iter().map(|s| s.name.as_str()).collect();
                    loc.error(
                        K::UnknownName,
                        &key(field),
                        format!("no support named `{name}`; known supports: {}", known.join(", ")),
                    )
                })
            };
            let from = find("from", &s.from)?;
            let to = find("to", &s.to)?;
            let conductor = *conductor_index.get(&s.conductor).ok_or_else(|| {
                let known: Vec<&str> = conductors.iter().map(|c| c.name.as_str()).collect();
                loc.error(
                    K::UnknownName,
                    &key("conductor"),
                    format!("no conductor named `{}`; known conductors: {}", s.conductor, known.join(", ")),
                )
            })?;
            let d = supports[to].position - supports[from].position;
            let horizontal = d.x.hypot(d.y);
            if !(horizontal > 1e-3 && horizontal <= MAX_SPAN_LENGTH) {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("to"),
                    format!(
                        "span from `{}` to `{}` has a horizontal length of {horizontal} m; it must be positive and at most {MAX_SPAN_LENGTH} m",
                        s.from, s.to
                    ),
                ));
            }
            let rts = conductors[conductor].rated_strength;
            let target = match (s.horizontal_tension, s.sag, s.catenary_parameter) {
                (Some(h), None, None) => {
                    let h = positive(loc, &key("horizontal_tension"), h, "N")?;
                    if h >= rts {
                        return Err(loc.error(
                            K::Impossible,
                            &key("horizontal_tension"),
                            format!("{h} N is not below the rated strength {rts} N of `{}`", s.conductor),
                        ));
                    }
                    StringingTarget::HorizontalTension(h)
                }
                (None, Some(d), None) => {
                    let d = positive(loc, &key("sag"), d, "m")?;
                    if d >= horizontal {
                        return Err(loc.error(K::Impossible, &key("sag"), format!("a sag of {d} m is not less than the span length {horizontal:.3} m; no strung span hangs like that")));
                    }
                    StringingTarget::Sag(d)
                }
                (None, None, Some(c)) => {
                    StringingTarget::CatenaryParameter(positive(loc, &key("catenary_parameter"), c, "m")?)
                }
                (None, None, None) => {
                    return Err(loc.error(
                        K::MissingKey,
                        &format!("spans[{i}]"),
                        "give one stringing target: horizontal_tension, sag or catenary_parameter",
                    ))
                }
                _ => {
                    return Err(loc.error(
                        K::InvalidValue,
                        &format!("spans[{i}]"),
                        "give only one of horizontal_tension, sag and catenary_parameter",
                    ))
                }
            };
            spans.push(SpanSpec { from, to, conductor, target });
        }
        if spans.is_empty() {
            return Err(loc.error(K::MissingKey, "spans", "a section needs at least one [[spans]]"));
        }
        if let Some(i) = (0..supports.len()).find(|&i| !spans.iter().any(|s| s.from == i || s.to == i)) {
            return Err(loc.error(
                K::InvalidValue,
                &format!("supports[{i}].name"),
                format!(
                    "support `{}` is referenced by no span; remove it or add a [[spans]] to it",
                    supports[i].name
                ),
            ));
        }
        (supports, spans)
    };
    let span_count = section.as_ref().map_or(spans.len(), |s| s.span_count());

    if registry.get(&raw.mesh.kind).is_none() {
        return Err(loc.error(
            K::UnknownName,
            "mesh.type",
            format!("unknown element type `{}`; known types: {}", raw.mesh.kind, registry.names().join(", ")),
        ));
    }
    if section.is_some() && raw.mesh.kind != "beam" {
        return Err(loc.error(
            K::InvalidValue,
            "mesh.type",
            format!(
                "a tension section needs conductor elements that turn (type = \"beam\"): yokes, spacers and devices grip the conductor and twist it; got `{}`",
                raw.mesh.kind
            ),
        ));
    }
    let mesh = match (raw.mesh.elements_per_span, raw.mesh.element_length) {
        (Some(n), None) => {
            if !(2..=MAX_ELEMENTS_PER_SPAN).contains(&n) {
                return Err(loc.error(
                    K::InvalidValue,
                    "mesh.elements_per_span",
                    format!("must be between 2 and {MAX_ELEMENTS_PER_SPAN}, got {n}"),
                ));
            }
            MeshDensity::ElementsPerSpan(n)
        }
        (None, Some(l)) => {
            let l = positive(loc, "mesh.element_length", l, "m")?;
            MeshDensity::ElementLength(l)
        }
        (Some(_), Some(_)) => {
            return Err(loc.error(
                K::InvalidValue,
                "mesh",
                "give elements_per_span or element_length, not both",
            ))
        }
        (None, None) => {
            return Err(loc.error(K::MissingKey, "mesh", "give elements_per_span or element_length (m)"))
        }
    };
    if let MeshDensity::ElementLength(l) = mesh {
        // Horizontal span lengths, as the builders mesh them.
        let lengths: Vec<f64> = match &section {
            Some(sec) => (0..sec.span_count()).map(|i| sec.span_length(i)).collect(),
            None => spans
                .iter()
                .map(|s| {
                    let d = supports[s.to].position - supports[s.from].position;
                    d.x.hypot(d.y)
                })
                .collect(),
        };
        if let Some((i, n)) = lengths
            .iter()
            .map(|&len| len / l)
            .enumerate()
            .find(|(_, n)| n.is_nan() || *n > MAX_ELEMENTS_PER_SPAN as f64)
        {
            return Err(loc.error(
                K::InvalidValue,
                "mesh.element_length",
                format!(
                    "{l} m gives {n:.3e} elements in span {} ({:.1} m); at most {MAX_ELEMENTS_PER_SPAN} per span",
                    i + 1,
                    lengths[i]
                ),
            ));
        }
    }
    let iced_spans = match &raw.load_case.iced_spans {
        None => None,
        Some(list) => {
            let mut out = Vec::new();
            for &i in list {
                if i == 0 || i > span_count {
                    return Err(loc.error(
                        K::InvalidValue,
                        "load_case.iced_spans",
                        format!("no span {i}: spans are numbered 1 to {span_count}"),
                    ));
                }
                out.push(i - 1);
            }
            if raw.load_case.ice.is_none() {
                return Err(loc.error(
                    K::MissingKey,
                    "load_case.ice",
                    "iced_spans needs the ice: give load_case.ice",
                ));
            }
            Some(out)
        }
    };

    let ice = match &raw.load_case.ice {
        None => None,
        Some(ice) => {
            let t = ice.thickness;
            if !(t.is_finite() && (0.0..MAX_ICE_THICKNESS).contains(&t)) {
                return Err(loc.error(
                    K::InvalidValue,
                    "load_case.ice.thickness",
                    format!(
                        "must be a radial thickness in m from zero to below {MAX_ICE_THICKNESS} m, got {t}"
                    ),
                ));
            }
            let density = match ice.density {
                Some(rho) => positive(loc, "load_case.ice.density", rho, "kg/m³")?,
                None => GLAZE_ICE_DENSITY,
            };
            Some(RadialIce { thickness: t, density })
        }
    };
    let iced_aero_table = match &raw.load_case.ice {
        Some(ice) => match &ice.aero_table {
            Some(file) => Some(table_at(loc, "load_case.ice.aero_table", file)?),
            None => None,
        },
        None => None,
    };
    let ice_orientation = match raw.load_case.ice.as_ref().and_then(|i| i.orientation) {
        Some(a) if a.is_finite() && a.abs() <= 180.0 => a.to_radians(),
        Some(a) => {
            return Err(loc.error(
                K::InvalidValue,
                "load_case.ice.orientation",
                format!("must be an angle in degrees between −180 and 180, got {a}"),
            ))
        }
        None => 0.0,
    };
    let wind = match &raw.load_case.wind {
        None => None,
        Some(w) => {
            let key = |f: &str| format!("load_case.wind.{f}");
            if !(w.speed.is_finite() && w.speed >= 0.0 && w.speed < 150.0) {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("speed"),
                    format!("must be a mean wind speed in m/s between 0 and 150, got {}", w.speed),
                ));
            }
            if !w.direction.is_finite() {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("direction"),
                    "must be an angle in degrees from +X",
                ));
            }
            let profile = match w.profile.as_deref().unwrap_or("uniform") {
                "uniform" => WindProfile::Uniform,
                "power_law" => {
                    let a = w.exponent.ok_or_else(|| {
                        loc.error(
                            K::MissingKey,
                            &key("exponent"),
                            "profile = \"power_law\" needs an exponent, e.g. 0.16",
                        )
                    })?;
                    if !(a.is_finite() && (0.0..1.0).contains(&a)) {
                        return Err(loc.error(
                            K::InvalidValue,
                            &key("exponent"),
                            format!("must be in [0, 1), got {a}"),
                        ));
                    }
                    WindProfile::PowerLaw { exponent: a }
                }
                "logarithmic" => {
                    let z0 = w.roughness_length.ok_or_else(|| {
                        loc.error(
                            K::MissingKey,
                            &key("roughness_length"),
                            "profile = \"logarithmic\" needs a roughness_length in m, e.g. 0.05",
                        )
                    })?;
                    WindProfile::Logarithmic {
                        roughness_length: positive(loc, &key("roughness_length"), z0, "m")?,
                    }
                }
                other => {
                    return Err(loc.error(
                        K::UnknownName,
                        &key("profile"),
                        format!("unknown profile `{other}`; known profiles: uniform, power_law, logarithmic"),
                    ))
                }
            };
            let reference_height = match w.reference_height {
                Some(h) => positive(loc, &key("reference_height"), h, "m")?,
                None => 10.0,
            };
            if let WindProfile::Logarithmic { roughness_length } = profile {
                if roughness_length >= reference_height {
                    return Err(loc.error(
                        K::InvalidValue,
                        &key("roughness_length"),
                        "must be below the reference height",
                    ));
                }
            }
            let radius = w.characteristic_radius;
            if let Some(radius) = radius.filter(|r| !(r.is_finite() && *r >= 0.0)) {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("characteristic_radius"),
                    format!("must be zero or a positive radius in m, got {radius}"),
                ));
            }
            Some(WindSpec {
                wind: MeanWind {
                    speed: w.speed,
                    direction: w.direction.to_radians(),
                    reference_height,
                    profile,
                    air_density: match w.air_density {
                        Some(rho) => positive(loc, &key("air_density"), rho, "kg/m³")?,
                        None => ISA_AIR_DENSITY,
                    },
                },
                include_twist: w.include_twist.unwrap_or(true),
                characteristic_radius: radius,
            })
        }
    };
    let screening = match &raw.screening {
        None => None,
        Some(sc) => {
            let speeds = &sc.wind_speeds;
            if speeds.is_empty() {
                return Err(loc.error(
                    K::InvalidValue,
                    "screening.wind_speeds",
                    "give at least one wind speed in m/s",
                ));
            }
            if speeds.iter().any(|u| !(u.is_finite() && *u > 0.0 && *u < 150.0))
                || speeds.windows(2).any(|w| w[1] <= w[0])
            {
                return Err(loc.error(
                    K::InvalidValue,
                    "screening.wind_speeds",
                    "wind speeds must be positive (m/s, below 150) and strictly increasing",
                ));
            }
            let xi = sc.structural_damping;
            if !(xi.is_finite() && (0.0..1.0).contains(&xi)) {
                return Err(loc.error(
                    K::InvalidValue,
                    "screening.structural_damping",
                    format!("must be a damping ratio in [0, 1), got {xi}"),
                ));
            }
            let modes = sc.modes.unwrap_or(20);
            if modes == 0 {
                return Err(loc.error(K::InvalidValue, "screening.modes", "must be at least 1"));
            }
            Some(ScreeningSpec { wind_speeds: speeds.clone(), structural_damping: xi, modes })
        }
    };
    let dynamics = match &raw.dynamics {
        None => None,
        Some(d) => Some(validate_dynamics(d, loc)?),
    };
    let wires: Vec<(&str, Option<&super::post::RawWires>)> =
        raw.conductors.iter().map(|(k, c)| (k.as_str(), c.wires.as_ref())).collect();
    let phases: Vec<&str> = raw.phases.iter().map(|p| p.conductor.as_str()).collect();
    let post = super::post::validate_post(raw.post.as_ref(), &wires, &phases, loc)?;
    let gravity = match raw.load_case.gravity {
        Some(g) => positive(loc, "load_case.gravity", g, "m/s²")?,
        None => STANDARD_GRAVITY,
    };

    let solver = SolverSpec {
        max_iterations: match raw.solver.max_iterations {
            Some(0) => return Err(loc.error(K::InvalidValue, "solver.max_iterations", "must be at least 1")),
            Some(n) => n,
            None => 30,
        },
        residual_tolerance: match raw.solver.residual_tolerance {
            Some(t) => positive(loc, "solver.residual_tolerance", t, "relative")?,
            None => 1e-9,
        },
        initial_load_step: match raw.solver.initial_load_step {
            Some(s) if s > 0.0 && s <= 1.0 => s,
            Some(s) => {
                return Err(loc.error(
                    K::InvalidValue,
                    "solver.initial_load_step",
                    format!("must be in (0, 1], got {s}"),
                ))
            }
            None => 0.25,
        },
        min_load_step: match raw.solver.min_load_step {
            Some(s) if s > 0.0 && s <= 1.0 => s,
            Some(s) => {
                return Err(loc.error(
                    K::InvalidValue,
                    "solver.min_load_step",
                    format!("must be in (0, 1], got {s}"),
                ))
            }
            None => 1e-4,
        },
    };

    let mut spec = SectionSpec {
        file: loc.path().to_path_buf(),
        source: loc.text().to_string(),
        title: raw.glaze.title,
        conductors,
        supports,
        spans,
        section,
        element_kind: raw.mesh.kind,
        mesh,
        stringing_temperature: temperature(loc, "stringing.temperature", raw.stringing.temperature)?,
        load_case: LoadCase {
            name: raw.load_case.name,
            temperature: temperature(loc, "load_case.temperature", raw.load_case.temperature)?,
            ice,
            iced_spans,
            gravity,
            wind,
            iced_aero_table,
            ice_orientation,
        },
        solver,
        screening,
        dynamics,
        post,
        warnings: Vec::new(),
    };
    spec.warnings = super::plausibility::warnings(&spec, loc);
    Ok(spec)
}

/// Largest number of time steps of one run: beyond it a run is a typing
/// error rather than a study (common practice: 1e9 steps of 0.01 s is
/// over 100 days of simulated time).
const MAX_STEPS: f64 = 1e9;

fn validate_dynamics(d: &super::schema::RawDynamics, loc: &Locator<'_>) -> Result<DynamicsSpec, InputError> {
    let key = |f: &str| format!("dynamics.{f}");
    let duration = positive(loc, &key("duration"), d.duration, "s")?;
    let dt = positive(loc, &key("time_step"), d.time_step, "s")?;
    if dt > duration {
        return Err(loc.error(
            K::InvalidValue,
            &key("time_step"),
            format!("the time step {dt} s is longer than the duration {duration} s"),
        ));
    }
    if duration / dt > MAX_STEPS {
        return Err(loc.error(
            K::InvalidValue,
            &key("duration"),
            format!("{duration} s at {dt} s is {:.2e} steps, more than the {MAX_STEPS:.0e} one run may take; split the study or lengthen the step", duration / dt),
        ));
    }
    let output_interval = match d.output_interval {
        Some(o) => {
            let o = positive(loc, &key("output_interval"), o, "s")?;
            if o < dt * (1.0 - 1e-9) {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("output_interval"),
                    format!("the output interval {o} s is shorter than the time step {dt} s"),
                ));
            }
            o
        }
        None => dt,
    };
    let scheme_name = d.scheme.as_deref().unwrap_or("hht");
    if scheme_name == "hht" && d.rho_inf.is_some() {
        return Err(loc.error(
            K::InvalidValue,
            &key("rho_inf"),
            "rho_inf belongs to scheme = \"generalized_alpha\"; HHT-α takes alpha",
        ));
    }
    if scheme_name == "generalized_alpha" && d.alpha.is_some() {
        return Err(loc.error(
            K::InvalidValue,
            &key("alpha"),
            "alpha belongs to scheme = \"hht\"; generalised-α takes rho_inf",
        ));
    }
    let scheme = match scheme_name {
        "hht" => {
            let a = d.alpha.unwrap_or(-0.05);
            if !(a.is_finite() && (-1.0 / 3.0 - 1e-12..=0.0).contains(&a)) {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("alpha"),
                    format!("HHT-α needs α in [−1/3, 0], got {a}"),
                ));
            }
            SchemeSpec::Hht(a)
        }
        "generalized_alpha" => {
            let r = d.rho_inf.unwrap_or(0.8);
            if !(r.is_finite() && (0.0..=1.0).contains(&r)) {
                return Err(loc.error(
                    K::InvalidValue,
                    &key("rho_inf"),
                    format!("generalised-α needs ρ∞ in [0, 1], got {r}"),
                ));
            }
            SchemeSpec::GeneralizedAlpha(r)
        }
        other => {
            return Err(loc.error(
                K::UnknownName,
                &key("scheme"),
                format!("unknown scheme `{other}`; known schemes: hht, generalized_alpha"),
            ))
        }
    };
    let linear_solver = match d.linear_solver.as_deref() {
        None => glaze_solvers::SolverBackend::default(),
        Some(name) => glaze_solvers::SolverBackend::from_name(name).ok_or_else(|| {
            loc.error(
                K::UnknownName,
                &key("linear_solver"),
                format!("unknown linear solver `{name}`; known: sparse_direct, banded_natural, banded_rcm"),
            )
        })?,
    };
    let damping = match &d.damping {
        None => DampingSpec::Coefficients(0.0, 0.0),
        Some(dm) => match (dm.modes, dm.ratios, dm.mass_coefficient, dm.stiffness_coefficient) {
            (Some(modes), Some(ratios), None, None) => {
                if modes[0] == 0 || modes[1] <= modes[0] {
                    return Err(loc.error(K::InvalidValue, "dynamics.damping.modes", "give two increasing 1-based mode numbers, e.g. [1, 10]"));
                }
                if ratios.iter().any(|r| !(r.is_finite() && (0.0..1.0).contains(r))) {
                    return Err(loc.error(K::InvalidValue, "dynamics.damping.ratios", "damping ratios must be in [0, 1)"));
                }
                DampingSpec::Fit { modes, ratios }
            }
            (None, None, a0, a1) if a0.is_some() || a1.is_some() => {
                let (a0, a1) = (a0.unwrap_or(0.0), a1.unwrap_or(0.0));
                if !(a0.is_finite() && a0 >= 0.0 && a1.is_finite() && a1 >= 0.0) {
                    return Err(loc.error(K::InvalidValue, "dynamics.damping", "Rayleigh coefficients must be zero or positive"));
                }
                DampingSpec::Coefficients(a0, a1)
            }
            _ => {
                return Err(loc.error(
                    K::InvalidValue,
                    "dynamics.damping",
                    "give either modes = [i, j] with ratios = [ξi, ξj], or mass_coefficient and/or stiffness_coefficient",
                ))
            }
        },
    };
    let wind_ramp = match d.wind_ramp {
        Some(t) if t.is_finite() && t >= 0.0 => t,
        Some(t) => {
            return Err(loc.error(
                K::InvalidValue,
                &key("wind_ramp"),
                format!("must be zero or a positive time in s, got {t}"),
            ))
        }
        None => 0.0,
    };
    let perturbation = match &d.perturbation {
        None => None,
        Some(p) => {
            if p.mode == 0 {
                return Err(loc.error(
                    K::InvalidValue,
                    "dynamics.perturbation.mode",
                    "mode numbers start at 1",
                ));
            }
            let size = match (p.amplitude, p.twist) {
                (Some(a), None) if a.is_finite() => PerturbationSize::Translation(a),
                (Some(_), None) => {
                    return Err(loc.error(
                        K::InvalidValue,
                        "dynamics.perturbation.amplitude",
                        "must be a finite displacement in m",
                    ))
                }
                (None, Some(t)) if t.is_finite() && t.abs() <= MAX_PERTURBATION_TWIST => {
                    PerturbationSize::Twist(t)
                }
                (None, Some(t)) => {
                    return Err(loc.error(
                        K::InvalidValue,
                        "dynamics.perturbation.twist",
                        format!(
                            "must be a finite rotation in rad of at most {MAX_PERTURBATION_TWIST} in size, got {t}"
                        ),
                    ))
                }
                (Some(_), Some(_)) => {
                    return Err(loc.error(
                        K::InvalidValue,
                        "dynamics.perturbation",
                        "give either `amplitude` (largest translation, m) or `twist` (largest rotation, rad), not both",
                    ))
                }
                (None, None) => {
                    return Err(loc.error(
                        K::MissingKey,
                        "dynamics.perturbation",
                        "give `amplitude` (largest translation, m) or `twist` (largest rotation, rad)",
                    ))
                }
            };
            let start = match p.start.as_deref() {
                None | Some("displacement") => PerturbationStart::Displacement,
                Some("velocity") => PerturbationStart::Velocity,
                Some(other) => {
                    return Err(loc.error(
                        K::InvalidValue,
                        "dynamics.perturbation.start",
                        format!("`{other}`: give `displacement` or `velocity`"),
                    ))
                }
            };
            Some(Perturbation { mode: p.mode, size, start })
        }
    };
    let checkpoint = validate_checkpoint(d.checkpoint.as_ref(), loc)?;
    Ok(DynamicsSpec {
        duration,
        time_step: dt,
        output_interval,
        scheme,
        modified_newton: d.modified_newton.unwrap_or(true),
        linear_solver,
        wind_ramp,
        damping,
        perturbation,
        checkpoint,
    })
}

/// `[dynamics.checkpoint]`: each interval given must be a finite time > 0.
fn validate_checkpoint(
    c: Option<&super::schema::RawCheckpoint>,
    loc: &Locator<'_>,
) -> Result<crate::spec::CheckpointSpec, InputError> {
    let mut spec = crate::spec::CheckpointSpec::default();
    let Some(c) = c else { return Ok(spec) };
    spec.enabled = c.enabled.unwrap_or(true);
    if let Some(t) = c.every_simulated {
        spec.every_simulated = Some(positive(loc, "dynamics.checkpoint.every_simulated", t, "s")?);
    }
    if let Some(m) = c.every_wall_minutes {
        spec.every_wall_minutes =
            Some(positive(loc, "dynamics.checkpoint.every_wall_minutes", m, "minutes")?);
    }
    Ok(spec)
}
