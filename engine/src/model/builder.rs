//! Turns a [`SectionSpec`] into a [`Model`]: form-finds each span at its
//! stringing state, meshes it, and sets up supports and loads.

use super::{DofMap, Model, SpanMesh, DOF_PER_NODE};
use crate::aero_loads::ElementAero;
use crate::error::{InputError, InputErrorKind};
use crate::formfinding::{Catenary, CatenarySpan, DiscreteChain};
use crate::input::Locator;
use crate::registry::{ConductorElementKind, ElementRegistry, SegmentSpec};
use crate::spec::{SectionSpec, StringingTarget};
use glaze_elements::TorsionRestraint;

/// Stiffness of the twist restraint at supports over GJ/ℓ of the adjacent
/// element: stiff enough to act as a clamp (the twist it lets through is
/// 1e-4 of the element's), soft enough to keep the tangent well conditioned.
const TORSION_RESTRAINT_FACTOR: f64 = 1e4;
use nalgebra::Vector3;
use std::collections::BTreeMap;

fn target_key(i: usize, t: &StringingTarget) -> String {
    let field = match t {
        StringingTarget::HorizontalTension(_) => "horizontal_tension",
        StringingTarget::Sag(_) => "sag",
        StringingTarget::CatenaryParameter(_) => "catenary_parameter",
    };
    format!("spans[{i}].{field}")
}

/// Builds the model of `spec` with element kinds from `registry`.
pub fn build(spec: &SectionSpec, registry: &ElementRegistry) -> Result<Model, InputError> {
    let loc = Locator::new(&spec.file, &spec.source);
    let kind = registry.get(&spec.element_kind).ok_or_else(|| {
        loc.error(
            InputErrorKind::UnknownName,
            "mesh.type",
            format!(
                "unknown element type `{}`; known types: {}",
                spec.element_kind,
                registry.names().join(", ")
            ),
        )
    })?;
    match &spec.section {
        Some(section) => super::section_builder::build_section(spec, section, kind, &loc),
        None => build_row(spec, kind, &loc),
    }
}

/// Longest conductor element (m) above which the input draws a warning
/// (`input::plausibility`): with longer curved beam elements the twist of
/// a single sagging conductor converges poorly (−5 % on its first torsional frequency at 10 m, a static state
/// that is not stable at 40 m, in the 400 m spans of the tests).
pub const COARSE_ELEMENT_LENGTH: f64 = 20.0;

fn build_row(
    spec: &SectionSpec,
    kind: &dyn ConductorElementKind,
    loc: &Locator<'_>,
) -> Result<Model, InputError> {
    let g = spec.load_case.gravity;

    let mut nodes: Vec<Vector3<f64>> = Vec::new();
    let mut elements = Vec::new();
    let mut spans = Vec::new();
    let mut restrained = Vec::new();
    let mut support_name: BTreeMap<usize, String> = BTreeMap::new();
    let mut uses_rotation = Vec::new();
    let mut stringing_load = Vec::new();
    let mut case_load = Vec::new();
    let mut aero = Vec::new();

    for (i, s) in spec.spans.iter().enumerate() {
        let c = &spec.conductors[s.conductor];
        let a = spec.supports[s.from].position;
        let b = spec.supports[s.to].position;
        let plan = Vector3::new(b.x - a.x, b.y - a.y, 0.0);
        let l = plan.norm();
        let n_el = spec.mesh.elements_for(l);
        let direction = plan / l;
        let cat_span = CatenarySpan {
            horizontal_length: l,
            height_difference: b.z - a.z,
            weight_per_length: c.mass_per_length * g,
            axial_stiffness: c.axial_stiffness,
        };
        let key = target_key(i, &s.target);
        let impossible =
            |e: crate::formfinding::CatenaryError| loc.error(InputErrorKind::Impossible, &key, e.to_string());
        let h = match s.target {
            StringingTarget::HorizontalTension(h) => h,
            StringingTarget::Sag(d) => {
                Catenary::from_sag(cat_span, d).map_err(impossible)?.horizontal_tension
            }
            StringingTarget::CatenaryParameter(p) => p * cat_span.weight_per_length,
        };
        let chain = DiscreteChain::strung(cat_span, h, n_el).map_err(impossible)?;
        // Largest stringing tension is at the higher support (or either on a level span).
        let v_last = chain.first_vertical
            + (n_el as f64 - 1.0) * cat_span.weight_per_length * chain.unstretched_length / n_el as f64;
        let end_weight = 0.5 * cat_span.weight_per_length * chain.unstretched_length / n_el as f64;
        let t_max = h.hypot(chain.first_vertical - end_weight).max(h.hypot(v_last + end_weight));
        if t_max >= c.rated_strength {
            return Err(loc.error(
                InputErrorKind::Impossible,
                &key,
                format!(
                    "this target needs a support tension of {t_max:.0} N, at or above the rated strength {:.0} N of `{}`: the conductor would break before it hangs so",
                    c.rated_strength, c.name
                ),
            ));
        }

        let first = nodes.len();
        for &(x, z) in &chain.nodes {
            nodes.push(a + direction * x + Vector3::z() * z);
            restrained.push([false; DOF_PER_NODE]);
            uses_rotation.push(false);
        }
        restrained[first] = [true; DOF_PER_NODE];
        restrained[first + n_el] = [true; DOF_PER_NODE];
        support_name.insert(first, spec.supports[s.from].name.clone());
        support_name.insert(first + n_el, spec.supports[s.to].name.clone());

        let ell = chain.unstretched_length / n_el as f64;
        let span_ice = spec.load_case.ice_on(i);
        let ice_mass = span_ice.map_or(0.0, |ice| ice.mass_per_length(c.diameter));
        let ice_polar = span_ice.map_or(0.0, |ice| ice.polar_inertia_per_length(c.diameter));
        let across = Vector3::z().cross(&direction);
        // Section of the load case: the iced table (or a round iced section), else the bare one.
        let (table, orientation) = match span_ice {
            Some(ice) if ice.thickness > 0.0 => match &spec.load_case.iced_aero_table {
                Some(t) => (t.clone(), spec.load_case.ice_orientation),
                None => (crate::input::round_section(ice.iced_diameter(c.diameter)), 0.0),
            },
            _ => (c.aero_table.clone(), 0.0),
        };
        let first_element = elements.len();
        let mut curvature = Vec::new();
        let tangents = super::polygon_tangents(&nodes[first..first + n_el + 1], [None, None]);
        for k in 0..n_el {
            let ids = [first + k, first + k + 1];
            let segment = SegmentSpec {
                nodes: ids,
                x0: [nodes[ids[0]], nodes[ids[1]]],
                unstretched_length: ell,
                reference_y: across,
                conductor: c,
                mass_per_length: c.mass_per_length + ice_mass,
                polar_inertia_per_length: c.polar_inertia_per_length + ice_polar,
                end_tangents: [tangents[k], tangents[k + 1]],
            };
            let chord = (segment.x0[1] - segment.x0[0]).normalize();
            let straight = kind.build(&SegmentSpec { end_tangents: [chord; 2], ..segment });
            let element = kind.build(&segment).map_err(|e| {
                loc.error(
                    InputErrorKind::InvalidValue,
                    &format!("spans[{i}]"),
                    format!("element {k} of this span: {e}"),
                )
            })?;
            if element.uses_rotations() {
                uses_rotation[ids[0]] = true;
                uses_rotation[ids[1]] = true;
            }
            if let Ok(straight) = straight {
                curvature.extend(super::curvature_loads(element.as_ref(), straight.as_ref(), &nodes));
            }
            aero.push(Some(ElementAero {
                table: table.clone(),
                uses_rotations: element.uses_rotations(),
                orientation,
            }));
            elements.push(element);
        }
        // Weight of each element lumped half to each node (consistent with the chain).
        let bare = 0.5 * c.mass_per_length * g * ell;
        let iced = 0.5 * (c.mass_per_length + ice_mass) * g * ell;
        stringing_load.resize(nodes.len() * DOF_PER_NODE, 0.0);
        case_load.resize(nodes.len() * DOF_PER_NODE, 0.0);
        for k in 0..n_el {
            for node in [first + k, first + k + 1] {
                stringing_load[node * DOF_PER_NODE + 2] -= bare;
                case_load[node * DOF_PER_NODE + 2] -= iced;
            }
        }
        for (node, d, v) in curvature {
            stringing_load[node * DOF_PER_NODE + d] += v;
            case_load[node * DOF_PER_NODE + d] += v * iced / bare;
        }

        // Supports: translations fixed. Kinds with rotations are clamped in
        // twist only, about the chord, by a stiff torsion restraint; their
        // bending rotations stay free (a clamp transmits torque but next
        // to no moment), so a swinging span rolls without a spurious
        // bending boundary layer.
        let conductor_elements = first_element..elements.len();
        if uses_rotation[first] {
            let chord = (b - a).normalize();
            let k = TORSION_RESTRAINT_FACTOR * c.torsional_stiffness / ell;
            for node in [first, first + n_el] {
                restrained[node] = [true, true, true, false, false, false];
                let r = TorsionRestraint::new(node, chord, k).map_err(|e| {
                    loc.error(InputErrorKind::InvalidValue, &format!("spans[{i}]"), e.to_string())
                })?;
                elements.push(Box::new(r));
                aero.push(None);
            }
        }
        spans.push(SpanMesh {
            nodes: (first..=first + n_el).collect(),
            elements: conductor_elements,
            end_names: [spec.supports[s.from].name.clone(), spec.supports[s.to].name.clone()],
            route_span: i,
            phase: None,
            subconductor: 0,
            conductor: s.conductor,
            direction,
            horizontal_length: l,
            height_difference: b.z - a.z,
            stringing: chain,
        });
    }

    let free: Vec<[bool; DOF_PER_NODE]> = restrained
        .iter()
        .zip(&uses_rotation)
        .map(|(r, &rot)| std::array::from_fn(|d| !r[d] && (d < 3 || rot)))
        .collect();
    let dofs = DofMap::new(&free);
    let support_nodes: Vec<usize> = (0..nodes.len()).filter(|&n| restrained[n].iter().any(|&r| r)).collect();

    let mut groups = BTreeMap::new();
    for (i, s) in spans.iter().enumerate() {
        groups.insert(format!("span_{}", i + 1), s.nodes.clone());
    }
    groups.insert("support".to_string(), support_nodes.clone());

    Ok(Model {
        nodes,
        elements,
        restrained,
        dofs,
        spans,
        strings: Vec::new(),
        phase_names: Vec::new(),
        support_labels: support_nodes
            .iter()
            .map(|a| support_name.get(a).cloned().unwrap_or_default())
            .collect(),
        support_nodes,
        conductor_rated_strength: spec.conductors.iter().map(|c| c.rated_strength).collect(),
        towers: Vec::new(),
        route: Vec::new(),
        ground_profile: Vec::new(),
        groups,
        stringing_load,
        case_load,
        temperature_change: spec.load_case.temperature - spec.stringing_temperature,
        aero,
        wind: spec.load_case.wind,
    })
}
