//! Warnings for legal but physically implausible input: each check runs
//! on the validated [`SectionSpec`] and names the key, the threshold and
//! where the threshold comes from.

use super::Locator;
use crate::error::InputWarning;
use crate::spec::{MeshDensity, SectionSpec, StringingTarget};

/// Share of the rated strength above which a stringing tension draws a
/// warning: everyday tensions of undamped conductors are kept to about
/// 18–25 % of the rated tensile strength against aeolian-vibration
/// fatigue (common practice).
pub const STRINGING_SHARE_OF_RTS: f64 = 0.25;

/// Radial ice thicker than this many conductor radii draws a warning
/// (common practice: accretions measured on lines stay well below).
pub const ICE_RADII: f64 = 10.0;

/// Density of pure ice at 0 °C, in kg/m³: no accretion is denser.
pub const PURE_ICE_DENSITY: f64 = 917.0;

/// Load-case temperature above which ice draws a warning, in °C: ice and
/// wet snow accrete at about −10…+2 °C (common practice).
pub const WARM_ICE: f64 = 5.0;

/// Mean wind speed above which glaze warns, in m/s: beyond the 10-minute
/// mean design wind speeds of most codes (common practice).
pub const HIGH_WIND: f64 = 60.0;

/// Conductor temperatures outside this range, in °C, draw a warning:
/// rare outside high-temperature conductors and polar sites (common
/// practice).
pub const PLAUSIBLE_TEMPERATURE: [f64; 2] = [-50.0, 100.0];

/// Insulator string lengths outside this range, in m, draw a warning:
/// from short distribution strings to extra-high-voltage ones (common
/// practice).
pub const PLAUSIBLE_STRING_LENGTH: [f64; 2] = [0.2, 15.0];

/// Fewest time steps per period of the lowest mode without a warning
/// (common practice: 10 to 20 steps resolve a period).
pub const STEPS_PER_PERIOD: f64 = 10.0;

/// Every warning for `spec`, located in the text of `loc`.
pub(super) fn warnings(spec: &SectionSpec, loc: &Locator<'_>) -> Vec<InputWarning> {
    let mut out = Vec::new();
    let spans = spans(spec);
    stringing_tension(spec, loc, &spans, &mut out);
    mesh(spec, loc, &spans, &mut out);
    ice(spec, loc, &spans, &mut out);
    wind(spec, loc, &mut out);
    temperatures(spec, loc, &mut out);
    strings(spec, loc, &mut out);
    time_step(spec, loc, &spans, &mut out);
    out
}

/// One conductor span as the checks see it.
struct SpanView {
    /// 1-based route span number.
    number: usize,
    /// Horizontal length, in m.
    length: f64,
    /// Conductor index.
    conductor: usize,
    /// Horizontal tension at stringing (exact or estimated), in N.
    tension: f64,
    /// Key of the stringing target.
    key: String,
    /// Whether `tension` is an estimate (from a sag).
    estimated: bool,
}

fn spans(spec: &SectionSpec) -> Vec<SpanView> {
    let g = spec.load_case.gravity;
    if let Some(section) = &spec.section {
        let mut out = Vec::new();
        for (i, p) in section.phases.iter().enumerate() {
            for s in 0..section.span_count() {
                out.push(SpanView {
                    number: s + 1,
                    length: section.span_length(s),
                    conductor: p.conductor,
                    tension: p.horizontal_tension,
                    key: format!("phases[{i}].horizontal_tension"),
                    estimated: false,
                });
            }
        }
        return out;
    }
    spec.spans
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let d = spec.supports[s.to].position - spec.supports[s.from].position;
            let length = d.x.hypot(d.y);
            let w = spec.conductors[s.conductor].mass_per_length * g;
            let (tension, field, estimated) = match s.target {
                StringingTarget::HorizontalTension(h) => (h, "horizontal_tension", false),
                StringingTarget::CatenaryParameter(c) => (c * w, "catenary_parameter", false),
                // Parabola: H = w L² / (8 d).
                StringingTarget::Sag(sag) => (w * length * length / (8.0 * sag), "sag", true),
            };
            SpanView {
                number: i + 1,
                length,
                conductor: s.conductor,
                tension,
                key: format!("spans[{i}].{field}"),
                estimated,
            }
        })
        .collect()
}

fn stringing_tension(spec: &SectionSpec, loc: &Locator<'_>, spans: &[SpanView], out: &mut Vec<InputWarning>) {
    let mut seen = std::collections::BTreeSet::new();
    for s in spans {
        let c = &spec.conductors[s.conductor];
        let share = s.tension / c.rated_strength;
        if share > STRINGING_SHARE_OF_RTS && seen.insert(s.key.clone()) {
            let about = if s.estimated { "about " } else { "" };
            out.push(loc.warning(
                &s.key,
                format!(
                    "a stringing tension of {about}{:.0} N is {:.0} % of the rated strength of `{}` ({:.0} N); \
                     everyday tensions above {:.0} % invite aeolian-vibration fatigue (common practice)",
                    s.tension,
                    100.0 * share,
                    c.name,
                    c.rated_strength,
                    100.0 * STRINGING_SHARE_OF_RTS
                ),
            ));
        }
    }
}

fn mesh(spec: &SectionSpec, loc: &Locator<'_>, spans: &[SpanView], out: &mut Vec<InputWarning>) {
    let key = match spec.mesh {
        MeshDensity::ElementsPerSpan(_) => "mesh.elements_per_span",
        MeshDensity::ElementLength(_) => "mesh.element_length",
    };
    if let MeshDensity::ElementLength(l) = spec.mesh {
        if let Some(s) = spans.iter().filter(|s| s.length < l).min_by(|a, b| a.length.total_cmp(&b.length)) {
            out.push(loc.warning(
                key,
                format!(
                    "an element length of {l} m is longer than span {} ({:.1} m): that span gets the fewest elements \
                     glaze allows, whatever the length asked for",
                    s.number, s.length
                ),
            ));
        }
    }
    if spec.element_kind != "beam" {
        return;
    }
    let longest = spans
        .iter()
        .map(|s| (s, s.length / spec.mesh.elements_for(s.length) as f64))
        .max_by(|a, b| a.1.total_cmp(&b.1));
    if let Some((s, length)) = longest.filter(|(_, l)| *l > crate::model::COARSE_ELEMENT_LENGTH) {
        out.push(loc.warning(
            key,
            format!(
                "conductor elements about {length:.1} m long in span {}: above {} m the twist of a sagging conductor \
                 is poorly resolved (glaze's convergence tests: −5 % on the first torsional frequency at 10 m, \
                 no stable static state at 40 m); give more elements per span or a shorter element_length",
                s.number,
                crate::model::COARSE_ELEMENT_LENGTH
            ),
        ));
    }
}

fn ice(spec: &SectionSpec, loc: &Locator<'_>, spans: &[SpanView], out: &mut Vec<InputWarning>) {
    let Some(ice) = spec.load_case.ice else { return };
    let thinnest =
        spans.iter().map(|s| &spec.conductors[s.conductor]).min_by(|a, b| a.diameter.total_cmp(&b.diameter));
    if let Some(c) = thinnest {
        let radius = 0.5 * c.diameter;
        if ice.thickness > ICE_RADII * radius {
            out.push(loc.warning(
                "load_case.ice.thickness",
                format!(
                    "radial ice of {:.1} mm is more than {ICE_RADII} times the radius of `{}` ({:.1} mm); \
                     accretions measured on lines stay well below that (common practice): check the unit (m)",
                    1e3 * ice.thickness,
                    c.name,
                    1e3 * radius
                ),
            ));
        }
    }
    if ice.density > PURE_ICE_DENSITY {
        out.push(loc.warning(
            "load_case.ice.density",
            format!("{:.0} kg/m³ is denser than pure ice ({PURE_ICE_DENSITY} kg/m³ at 0 °C)", ice.density),
        ));
    }
    if ice.thickness > 0.0 && spec.load_case.temperature > WARM_ICE {
        out.push(loc.warning(
            "load_case.temperature",
            format!(
                "ice at {} °C: ice and wet snow accrete at about −10…+2 °C, and melt above {WARM_ICE} °C (common practice)",
                spec.load_case.temperature
            ),
        ));
    }
}

fn wind(spec: &SectionSpec, loc: &Locator<'_>, out: &mut Vec<InputWarning>) {
    let high = |u: f64| {
        format!(
            "a mean wind of {u} m/s is above {HIGH_WIND} m/s, beyond the 10-minute mean design wind speeds of most \
             codes (common practice); galloping happens at moderate winds"
        )
    };
    if let Some(w) = spec.load_case.wind.as_ref().filter(|w| w.wind.speed > HIGH_WIND) {
        out.push(loc.warning("load_case.wind.speed", high(w.wind.speed)));
    }
    if let Some(&u) = spec.screening.as_ref().and_then(|s| s.wind_speeds.last()).filter(|&&u| u > HIGH_WIND) {
        out.push(loc.warning("screening.wind_speeds", high(u)));
    }
}

fn temperatures(spec: &SectionSpec, loc: &Locator<'_>, out: &mut Vec<InputWarning>) {
    let [lo, hi] = PLAUSIBLE_TEMPERATURE;
    for (key, t) in [
        ("stringing.temperature", spec.stringing_temperature),
        ("load_case.temperature", spec.load_case.temperature),
    ] {
        if !(lo..=hi).contains(&t) {
            out.push(loc.warning(
                key,
                format!(
                    "a conductor temperature of {t} °C is outside {lo}…+{hi} °C, rare outside high-temperature \
                     conductors and polar sites (common practice)"
                ),
            ));
        }
    }
}

fn strings(spec: &SectionSpec, loc: &Locator<'_>, out: &mut Vec<InputWarning>) {
    let Some(section) = &spec.section else { return };
    let [lo, hi] = PLAUSIBLE_STRING_LENGTH;
    for s in section.insulators.iter().filter(|s| !(lo..=hi).contains(&s.length)) {
        out.push(loc.warning(
            &format!("insulators.{}.length", s.name),
            format!(
                "an insulator string of {} m is outside {lo}…{hi} m, from distribution to extra-high-voltage \
                 strings (common practice): check the unit (m)",
                s.length
            ),
        ));
    }
}

/// Time step and output interval against the shortest fundamental period
/// of the spans, estimated as a taut string: `T = 2 L / √(H/m)` (bare
/// conductor; the first antisymmetric in-plane and the first
/// out-of-plane mode of a sagging cable, Irvine, *Cable Structures*, 1981).
fn time_step(spec: &SectionSpec, loc: &Locator<'_>, spans: &[SpanView], out: &mut Vec<InputWarning>) {
    let Some(d) = &spec.dynamics else { return };
    let shortest = spans
        .iter()
        .map(|s| (s, 2.0 * s.length / (s.tension / spec.conductors[s.conductor].mass_per_length).sqrt()))
        .filter(|(_, t)| t.is_finite() && *t > 0.0)
        .min_by(|a, b| a.1.total_cmp(&b.1));
    let Some((s, period)) = shortest else { return };
    if d.time_step > period / STEPS_PER_PERIOD {
        out.push(loc.warning(
            "dynamics.time_step",
            format!(
                "a time step of {} s is more than a tenth of the {period:.2} s fundamental period of span {} \
                 (taut-string estimate 2L/√(H/m)); the motion is poorly resolved (common practice: at least \
                 {STEPS_PER_PERIOD} steps per period)",
                d.time_step, s.number
            ),
        ));
    }
    if d.output_interval > 0.5 * period {
        out.push(loc.warning(
            "dynamics.output_interval",
            format!(
                "an output interval of {} s is more than half the {period:.2} s fundamental period of span {} \
                 (taut-string estimate): the histories cannot resolve that mode (sampling theorem)",
                d.output_interval, s.number
            ),
        ));
    }
}
