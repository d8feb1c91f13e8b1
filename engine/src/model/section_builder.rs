//! Builds the model of a tension section: insulator strings hung from the
//! towers, every subconductor of every phase strung through all spans at
//! one horizontal tension (the ruling-span method), spacer frames on the
//! bundles, and the devices of the chosen layout.
//!
//! **Stringing state.** Each span of each subconductor is form-found as a
//! discrete chain ([`DiscreteChain::strung_with`]) at the phase's
//! horizontal tension, bare, with the spacers' weight at their nodes.
//! On a straight route suspension strings hang plumb: with one tension in
//! every span their horizontal pulls cancel. At an angle tower (see
//! [`RoutePlan`]) an I-string leans into the angle under the pull
//! `2 H sin(θ/2)` of each subconductor, and dead-end strings lie along the
//! resultant of the conductor pull and their own weight; both found by
//! fixed-point iteration. A V-string's yoke stays under its crossarm, the
//! legs sharing the angle load by the statics of the yoke. Each string's unstretched length is its length less the
//! stretch under its stringing tension, so the strung section is in
//! equilibrium (up to the small deformation of the next-to-rigid yoke and
//! spacer frames). Devices, ice, temperature and wind make the load case.

use super::route::RoutePlan;
use super::{DofMap, Model, SpanMesh, StringMesh, DOF_PER_NODE};
use crate::aero_loads::ElementAero;
use crate::devices::{self, Covering, DeviceSite, Station, RIGID_ARM};
use crate::error::{InputError, InputErrorKind};
use crate::formfinding::{CatenarySpan, ChainLayout, DiscreteChain};
use crate::input::Locator;
use crate::registry::{ConductorElementKind, SegmentSpec};
use crate::spec::{
    InsulatorKind, MeshDensity, SectionSpec, SpacerDamper, SpacerKind, TensionSection, TowerKind,
};
use glaze_aero::CoefficientTable;
use glaze_elements::{
    ClampJoint, ClampStiffness, Element, Link, NodeState, PointMass, TorsionRestraint, TrussSection,
};
use nalgebra::Vector3;
use std::collections::BTreeMap;
use std::sync::Arc;

/// Stiffness of the twist restraint at dead-end yokes over GJ/ℓ of the
/// adjacent element (as at the supports of a row).
const TORSION_RESTRAINT_FACTOR: f64 = 1e4;

/// A chain form-found in one span, its unit plan direction and plan length (m).
type Chain = (DiscreteChain, Vector3<f64>, f64);

/// Two stations of one phase closer than this share a node, in m.
const STATION_MERGE: f64 = 0.5;

/// A conductor point where a node is forced: spacer, device, covering end.
#[derive(Clone, Debug)]
struct StationNode {
    distance: f64,
    spacer: bool,
    /// Index of the node within the span's chain.
    chain_index: usize,
    /// Bundle centre node (spacer frame), once made.
    hub: Option<usize>,
}

/// Everything built so far.
#[derive(Default)]
struct Mesh {
    nodes: Vec<Vector3<f64>>,
    restrained: Vec<[bool; DOF_PER_NODE]>,
    elements: Vec<Box<dyn Element>>,
    aero: Vec<Option<ElementAero>>,
    /// Per element: bare mass per length of a conductor element (its
    /// stringing weight), `None` for other elements.
    bare_conductor: Vec<Option<f64>>,
    /// Per element: part of a device (weighed only in the load case).
    device: Vec<bool>,
    /// Tower and wire of each restrained node, for reports.
    support_label: BTreeMap<usize, String>,
    /// Consistent loads of the weight on curved conductor elements
    /// `(node, dof, value at stringing, case/stringing weight ratio)`.
    curvature: Vec<(usize, usize, f64, f64)>,
}

impl Mesh {
    fn node(&mut self, x: Vector3<f64>) -> usize {
        self.nodes.push(x);
        self.restrained.push([false; DOF_PER_NODE]);
        self.nodes.len() - 1
    }

    fn push(&mut self, e: Box<dyn Element>, aero: Option<ElementAero>, bare: Option<f64>, device: bool) {
        self.elements.push(e);
        self.aero.push(aero);
        self.bare_conductor.push(bare);
        self.device.push(device);
    }

    /// A spacer-damper: from `hub`, per node of `clamps`, a hinge (a joint
    /// soft and damped in rotation about `along`, see
    /// [`ClampJoint::with_twist_damping`]) to a node at the hub, then a
    /// rigid arm and a grip as in [`frame`](Self::frame).
    fn hinged_frame(
        &mut self,
        hub: usize,
        clamps: &[usize],
        along: Vector3<f64>,
        damper: &SpacerDamper,
        grip: ClampStiffness,
    ) -> Result<(), String> {
        // Stiff against translation and the rotations across the axis, as the grip.
        let hinge = ClampStiffness {
            translation: grip.translation,
            twist: damper.hinge_stiffness,
            bending: grip.twist,
        };
        for &c in clamps {
            let root = self.node(self.nodes[hub]);
            let joint = ClampJoint::new([hub, root], along, hinge)
                .and_then(|j| j.with_twist_damping(damper.hinge_damping))
                .map_err(|e| e.to_string())?;
            self.push(Box::new(joint), None, None, false);
            self.frame(root, &[c], along, RIGID_ARM, grip, false)?;
        }
        if damper.frame_mass > 0.0 {
            let pm =
                PointMass::new(hub, damper.frame_mass, damper.frame_inertia).map_err(|e| e.to_string())?;
            self.push(Box::new(pm), None, None, false);
        }
        Ok(())
    }

    /// A rigid (massless) frame from `hub` to each node of `clamps`.
    fn frame(
        &mut self,
        hub: usize,
        clamps: &[usize],
        along: Vector3<f64>,
        stiffness: devices::RigidArm,
        grip: ClampStiffness,
        device: bool,
    ) -> Result<(), String> {
        for &c in clamps {
            // Arm from the hub to a node at the clamp, joined to the
            // conductor by a clamp that is soft in bending (see ClampJoint).
            let end = self.node(self.nodes[c]);
            let e = devices::arm([hub, end], [self.nodes[hub], self.nodes[end]], stiffness, 0.0, along)?;
            self.push(e, None, None, device);
            let joint = ClampJoint::new([end, c], along, grip).map_err(|e| e.to_string())?;
            self.push(Box::new(joint), None, None, device);
        }
        Ok(())
    }
}

/// Builds the model of `section`.
pub(super) fn build_section(
    spec: &SectionSpec,
    section: &TensionSection,
    kind: &dyn ConductorElementKind,
    loc: &Locator<'_>,
) -> Result<Model, InputError> {
    let g = spec.load_case.gravity;
    let towers = &section.towers;
    let n_spans = section.span_count();
    let route = RoutePlan::of(section);
    let mut mesh = Mesh::default();
    let mut spans = Vec::new();
    let mut strings = Vec::new();
    let mut groups: BTreeMap<String, Vec<usize>> = BTreeMap::new();
    // Node indices of every (phase, span, subconductor) chain.
    let mut station_index: BTreeMap<(usize, usize, usize), Vec<usize>> = BTreeMap::new();
    let invalid = |key: &str, m: String| loc.error(InputErrorKind::InvalidValue, key, m);

    // Stations per (phase, span): spacers, device points and covering ends.
    let coverings: Vec<Covering> = section.devices.iter().filter_map(|d| d.device.covering()).collect();
    let mut stations: BTreeMap<(usize, usize), Vec<StationNode>> = BTreeMap::new();
    for (p, phase) in section.phases.iter().enumerate() {
        for s in 0..n_spans {
            let mut list: Vec<StationNode> = Vec::new();
            if let (Some(sp), true) = (&section.spacers, phase.bundle.count > 1) {
                list.extend(sp.positions[s].iter().map(|&d| StationNode {
                    distance: d,
                    spacer: true,
                    chain_index: 0,
                    hub: None,
                }));
            }
            for d in &section.devices {
                for st in d.device.stations() {
                    if st.phase == p && st.span == s {
                        list.push(StationNode {
                            distance: st.distance,
                            spacer: false,
                            chain_index: 0,
                            hub: None,
                        });
                    }
                }
            }
            list.sort_by(|a, b| a.distance.total_cmp(&b.distance));
            let mut merged: Vec<StationNode> = Vec::new();
            for st in list {
                match merged.last_mut() {
                    Some(last) if st.distance - last.distance < STATION_MERGE => last.spacer |= st.spacer,
                    _ => merged.push(st),
                }
            }
            stations.insert((p, s), merged);
        }
    }

    // Clamps on every phase's conductor, soft in bending by √(EI·T).
    let grips: Vec<ClampStiffness> = section
        .phases
        .iter()
        .map(|ph| {
            ClampStiffness::on_conductor(
                spec.conductors[ph.conductor].bending_stiffness,
                ph.horizontal_tension,
            )
        })
        .collect();
    for (p, phase) in section.phases.iter().enumerate() {
        let c = &spec.conductors[phase.conductor];
        let h = phase.horizontal_tension;
        let w = c.mass_per_length * g;
        let count = phase.bundle.count;
        let grip = grips[p];
        // Subconductor offsets from the bundle centre at each tower, in the
        // crossarm's frame (the bundle turns with the route at an angle tower).
        let offsets: Vec<Vec<Vector3<f64>>> = (0..towers.len())
            .map(|t| {
                (0..count)
                    .map(|k| phase.bundle.offset(k))
                    .map(|[a, u]| route.across[t] * a + Vector3::z() * u)
                    .collect()
            })
            .collect();
        let attach: Vec<Vector3<f64>> = towers
            .iter()
            .enumerate()
            .map(|(t, tw)| route.at(t, tw.attachments[p][0], tw.ground + tw.attachments[p][1]))
            .collect();
        let string_of =
            |t: usize| towers[t].insulator.filter(|_| !phase.earth_wire).map(|i| &section.insulators[i]);
        let half_string_weight = |t: usize| string_of(t).map_or(0.0, |s| 0.5 * s.mass * g);

        // Horizontal distance from each tower to the conductor's end at it:
        // the length of a dead-end string (the conductor starts at its yoke).
        let end_offset = |t: usize| match (string_of(t), towers[t].kind) {
            (Some(s), TowerKind::DeadEnd) => s.length,
            _ => 0.0,
        };
        // Chain layouts per span (spacer weight at its nodes). Station
        // distances are horizontal, from the span's first tower.
        let spacer_load = section.spacers.as_ref().map_or(0.0, |s| s.mass / count as f64 * g);
        let mut layouts = Vec::new();
        let mut conductor_extent = Vec::new();
        for s in 0..n_spans {
            let (start, end) = (end_offset(s), section.span_length(s) - end_offset(s + 1));
            let l = end - start;
            conductor_extent.push([start, end]);
            let st = stations.get_mut(&(p, s)).expect("stations of every span");
            if let Some(x) = st.iter().find(|x| x.distance <= start + 0.1 || x.distance >= end - 0.1) {
                return Err(invalid(
                    if x.spacer { "spacers" } else { "section.layout" },
                    format!(
                        "phase {}, span {}: a spacer or device at {:.2} m lies on the dead-end string (the conductor runs from {start:.2} to {end:.2} m)",
                        phase.name,
                        s + 1,
                        x.distance
                    ),
                ));
            }
            let mut breaks: Vec<f64> = vec![start];
            breaks.extend(st.iter().map(|x| x.distance));
            breaks.push(end);
            let mut fractions = Vec::new();
            let mut point_loads = vec![0.0];
            for (j, seg) in breaks.windows(2).enumerate() {
                let len = seg[1] - seg[0];
                let n = match spec.mesh {
                    MeshDensity::ElementLength(e) => (len / e).ceil().max(1.0) as usize,
                    MeshDensity::ElementsPerSpan(n) => ((n as f64 * len / l).round() as usize).max(1),
                };
                for _ in 0..n {
                    fractions.push(len / l / n as f64);
                    point_loads.push(0.0);
                }
                if j < st.len() {
                    st[j].chain_index = fractions.len();
                    if st[j].spacer {
                        *point_loads.last_mut().expect("a node") = spacer_load;
                    }
                }
            }
            *point_loads.last_mut().expect("end node") = 0.0;
            layouts.push(ChainLayout { fractions, point_loads });
        }

        // Yoke (bundle centre at the string's lower end, or the clamp of an earth wire).
        let mut yoke: Vec<Vector3<f64>> = (0..towers.len())
            .map(|t| match string_of(t) {
                None => attach[t],
                Some(s) => match towers[t].kind {
                    TowerKind::Suspension => attach[t] - Vector3::z() * s.length,
                    TowerKind::DeadEnd => {
                        let into =
                            if t == 0 { route.span_direction[0] } else { -route.span_direction[n_spans - 1] };
                        attach[t] + into * s.length
                    }
                },
            })
            .collect();
        let chain_between = |a: Vector3<f64>,
                             b: Vector3<f64>,
                             s: usize|
         -> Result<(DiscreteChain, Vector3<f64>, f64), InputError> {
            let plan = Vector3::new(b.x - a.x, b.y - a.y, 0.0);
            let span = CatenarySpan {
                horizontal_length: plan.norm(),
                height_difference: b.z - a.z,
                weight_per_length: w,
                axial_stiffness: c.axial_stiffness,
            };
            let chain = DiscreteChain::strung_with(span, h, &layouts[s]).map_err(|e| {
                loc.error(
                    InputErrorKind::Impossible,
                    &format!("phases[{p}].horizontal_tension"),
                    format!("span {}: {e}", s + 1),
                )
            })?;
            Ok((chain, plan / plan.norm(), span.horizontal_length))
        };
        // Chains of every subconductor in every span, between the yokes' clamps.
        let sub_chains = |yoke: &[Vector3<f64>], s: usize| -> Result<Vec<Chain>, InputError> {
            (0..count)
                .map(|k| chain_between(yoke[s] + offsets[s][k], yoke[s + 1] + offsets[s + 1][k], s))
                .collect()
        };
        // Pull of one subconductor on its clamp at the start (`first`) or end of a span.
        let pull = |(chain, dir, _): &Chain, first: bool| -> Vector3<f64> {
            let n = chain.element_lengths.len();
            if first {
                dir * h + Vector3::z() * (chain.first_vertical - 0.5 * w * chain.element_lengths[0])
            } else {
                -dir * h - Vector3::z() * (chain.last_vertical + 0.5 * w * chain.element_lengths[n - 1])
            }
        };
        // Force on the string's lower end at tower t: the conductors' pulls
        // and half the string's weight (its moment about the hinge).
        let yoke_force = |subs: &[Vec<Chain>], t: usize| -> Vector3<f64> {
            let mut f = -Vector3::z() * half_string_weight(t);
            if t > 0 {
                f += subs[t - 1].iter().map(|c| pull(c, false)).sum::<Vector3<f64>>();
            }
            if t < n_spans {
                f += subs[t].iter().map(|c| pull(c, true)).sum::<Vector3<f64>>();
            }
            f
        };
        // Strings that swing to the resultant (I-strings and dead-end
        // strings; a V-string's yoke stays below its crossarm): fixed-point
        // iteration, re-forming only the spans whose ends moved. On a straight
        // route the suspension strings come out plumb at the first pass.
        let swings = |t: usize| {
            string_of(t).is_some_and(|s| {
                towers[t].kind == TowerKind::DeadEnd || !matches!(s.kind, InsulatorKind::VString { .. })
            })
        };
        let mut subs: Vec<Vec<Chain>> =
            (0..n_spans).map(|s| sub_chains(&yoke, s)).collect::<Result<_, _>>()?;
        let mut converged = false;
        for _ in 0..100 {
            let mut moved = vec![0.0f64; towers.len()];
            for t in (0..towers.len()).filter(|&t| swings(t)) {
                let length = string_of(t).map_or(0.0, |s| s.length);
                let y = attach[t] + yoke_force(&subs, t).normalize() * length;
                moved[t] = (y - yoke[t]).norm();
                yoke[t] = y;
            }
            if moved.iter().all(|&m| m < 1e-12) {
                converged = true;
                break;
            }
            for s in 0..n_spans {
                if moved[s] > 0.0 || moved[s + 1] > 0.0 {
                    subs[s] = sub_chains(&yoke, s)?;
                }
            }
        }
        if !converged {
            return Err(loc.error(
                InputErrorKind::Impossible,
                &format!("phases[{p}].horizontal_tension"),
                "the insulator strings found no stringing equilibrium in 100 passes",
            ));
        }
        let chains: Vec<Chain> =
            (0..n_spans).map(|s| chain_between(yoke[s], yoke[s + 1], s)).collect::<Result<_, _>>()?;

        // Conductor tangent at chain node i of span s (clamp and twist axes:
        // a clamp's twist axis must follow the conductor, or the stiff twist
        // spring locks part of its bending rotation).
        let tangent = |s: usize, i: usize| -> Vector3<f64> {
            let (chain, dir, _) = &chains[s];
            let n = chain.nodes.len();
            let (a, b) = (chain.nodes[i.saturating_sub(1)], chain.nodes[(i + 1).min(n - 1)]);
            (dir * (b.0 - a.0) + Vector3::z() * (b.1 - a.1)).normalize()
        };
        let tower_tangent = |t: usize| -> Vector3<f64> {
            let left = (t > 0).then(|| tangent(t - 1, chains[t - 1].0.nodes.len() - 1));
            let right = (t < n_spans).then(|| tangent(t, 0));
            match (left, right) {
                (Some(l), Some(r)) => (l + r).normalize(),
                (Some(v), None) | (None, Some(v)) => v,
                (None, None) => Vector3::x(),
            }
        };

        // Tower side: hinges, strings, yokes and clamps.
        let mut clamps: Vec<Vec<usize>> = Vec::new();
        for t in 0..towers.len() {
            let tower = &towers[t];
            let key = format!("towers[{t}]");
            let fix = |mesh: &mut Mesh, node: usize, label: String| -> Result<(), InputError> {
                match tower.stiffness {
                    None => {
                        mesh.restrained[node] = [true, true, true, false, false, false];
                        mesh.support_label.insert(node, label);
                    }
                    Some(k) => {
                        for (d, kd) in k.iter().enumerate() {
                            let frame = [route.along[t], route.across[t], Vector3::z()];
                            let ground = mesh.node(mesh.nodes[node] + frame[d]);
                            mesh.restrained[ground] = [true; DOF_PER_NODE];
                            mesh.support_label.insert(
                                ground,
                                format!("{label} spring {}", ["along", "across", "vertical"][d]),
                            );
                            let spring = Link::new(
                                [node, ground],
                                1.0,
                                TrussSection { ea: kd * 1.0, mass_per_length: 0.0, thermal_expansion: 0.0 },
                            )
                            .map_err(|e| invalid(&format!("{key}.stiffness"), e.to_string()))?;
                            mesh.push(Box::new(spring), None, None, false);
                        }
                    }
                }
                Ok(())
            };
            let y = mesh.node(yoke[t]);
            match string_of(t) {
                None => fix(&mut mesh, y, format!("{} {}", tower.name, phase.name))?,
                Some(s) => {
                    // Force on the yoke from the conductors and half the string.
                    let f = yoke_force(&subs, t);
                    let legs: Vec<Vector3<f64>> = match s.kind {
                        InsulatorKind::VString { half_angle } => {
                            let spread = route.across[t] * (s.length * half_angle.tan());
                            vec![attach[t] + spread, attach[t] - spread]
                        }
                        _ => vec![attach[t]],
                    };
                    // Leg tensions that hold the yoke: along the string for
                    // one leg; for a V, the force's components across and
                    // up shared by the two legs (the V's plane).
                    let axes: Vec<Vector3<f64>> =
                        legs.iter().map(|top| (top - yoke[t]).normalize()).collect();
                    let tensions: Vec<f64> = match axes.as_slice() {
                        [_] => vec![f.norm()],
                        [a, b] => {
                            let (n, z) = (route.across[t], Vector3::z());
                            let det = a.dot(&n) * b.dot(&z) - b.dot(&n) * a.dot(&z);
                            let (fn_, fz) = (-f.dot(&n), -f.dot(&z));
                            vec![
                                (fn_ * b.dot(&z) - b.dot(&n) * fz) / det,
                                (a.dot(&n) * fz - fn_ * a.dot(&z)) / det,
                            ]
                        }
                        _ => unreachable!("a string has one or two legs"),
                    };
                    if let Some(k) = tensions.iter().position(|&x| x.is_nan() || x <= 0.0) {
                        return Err(invalid(
                            &key,
                            format!(
                                "leg {} of the V-string of phase {} would be in compression in the stringing state ({:.0} N): the line angle is too large for this V-string",
                                k + 1,
                                phase.name,
                                tensions[k]
                            ),
                        ));
                    }
                    let mut hinges = Vec::new();
                    let mut elements = Vec::new();
                    for (leg, top) in legs.iter().enumerate() {
                        let hinge = mesh.node(*top);
                        let label = match legs.len() {
                            1 => format!("{} {}", tower.name, phase.name),
                            _ => format!("{} {} leg {}", tower.name, phase.name, leg + 1),
                        };
                        fix(&mut mesh, hinge, label)?;
                        let length = (yoke[t] - top).norm();
                        let l0 = length / (1.0 + tensions[leg] / s.axial_stiffness);
                        let leg_mass = s.mass / legs.len() as f64;
                        let link = Link::new(
                            [hinge, y],
                            l0,
                            TrussSection {
                                ea: s.axial_stiffness,
                                mass_per_length: leg_mass / l0,
                                thermal_expansion: 0.0,
                            },
                        )
                        .map_err(|e| invalid(&format!("insulators.{}", s.name), e.to_string()))?;
                        elements.push(mesh.elements.len());
                        mesh.push(Box::new(link), None, None, false);
                        hinges.push(hinge);
                    }
                    strings.push(StringMesh { tower: t, phase: p, hinges, yoke: y, elements });
                }
            }
            // Twist restraint at the ends of the section (dead-end hardware and earth-wire clamps).
            if tower.kind == TowerKind::DeadEnd || phase.earth_wire {
                let s = if t == 0 { 0 } else { t - 1 };
                let ell = chains[s.min(n_spans - 1)].0.element_lengths[0];
                let k = TORSION_RESTRAINT_FACTOR * c.torsional_stiffness * count as f64 / ell;
                let r = TorsionRestraint::new(y, tower_tangent(t), k)
                    .map_err(|e| invalid(&key, e.to_string()))?;
                mesh.push(Box::new(r), None, None, false);
            }
            let clamp: Vec<usize> = if count == 1 {
                vec![y]
            } else {
                let cl: Vec<usize> = offsets[t].iter().map(|o| mesh.node(yoke[t] + o)).collect();
                mesh.frame(y, &cl, tower_tangent(t), RIGID_ARM, grip, false).map_err(|e| invalid(&key, e))?;
                cl
            };
            clamps.push(clamp);
            groups.entry("yokes".into()).or_default().push(y);
        }

        // Spans of every subconductor.
        let spacer_arm = match section.spacers.as_ref().map(|s| s.kind) {
            Some(SpacerKind::Elastic(ei)) => devices::RigidArm { ea: RIGID_ARM.ea, ei, gj: ei },
            _ => RIGID_ARM,
        };
        for s in 0..n_spans {
            let across = Vector3::z().cross(&chains[s].1);
            let span_ice = spec.load_case.ice_on(s);
            let ice_mass = span_ice.map_or(0.0, |i| i.mass_per_length(c.diameter));
            let ice_polar = span_ice.map_or(0.0, |i| i.polar_inertia_per_length(c.diameter));
            let (table, orientation) = match span_ice {
                Some(ice) if ice.thickness > 0.0 => match &spec.load_case.iced_aero_table {
                    Some(t) => (t.clone(), spec.load_case.ice_orientation),
                    None => (crate::input::round_section(ice.iced_diameter(c.diameter)), 0.0),
                },
                _ => (c.aero_table.clone(), 0.0),
            };
            let covered: Vec<&Covering> =
                coverings.iter().filter(|cv| cv.phase == p && cv.span == s).collect();
            let mut span_nodes: Vec<Vec<usize>> = Vec::new();
            for (k, (chain, dir, _)) in subs[s].iter().enumerate() {
                let start = yoke[s] + offsets[s][k];
                let mut ids = vec![clamps[s][k]];
                for &(x, z) in &chain.nodes[1..chain.nodes.len() - 1] {
                    ids.push(mesh.node(start + dir * x + Vector3::z() * z));
                }
                ids.push(clamps[s + 1][k]);
                let first_element = mesh.elements.len();
                let points: Vec<Vector3<f64>> = ids.iter().map(|&n| mesh.nodes[n]).collect();
                // Smooth within the span; at a yoke the concentrated load kinks the
                // conductor, so the end elements stay straight there.
                // Earth wires keep straight chords for now: curved, the iced
                // earth wire clamped over the towers stalls the mean-wind load
                // path (open; its twist is then over-stiff, see
                // `CorotationalBeam::with_end_tangents`).
                let tangents: Vec<Vector3<f64>> = if phase.earth_wire {
                    points.windows(2).map(|w| (w[1] - w[0]).normalize()).collect()
                } else {
                    super::polygon_tangents(&points, [None, None])
                };
                let mut travelled = 0.0;
                for (j, &ell) in chain.element_lengths.iter().enumerate() {
                    let [start, end] = conductor_extent[s];
                    let mid = start + (travelled + 0.5 * ell) / chain.unstretched_length * (end - start);
                    travelled += ell;
                    let cover = covered.iter().find(|cv| mid > cv.extent[0] && mid < cv.extent[1]);
                    let added = cover.map_or(0.0, |cv| cv.added_mass_per_length);
                    let e_nodes = [ids[j], ids[j + 1]];
                    let segment = SegmentSpec {
                        nodes: e_nodes,
                        x0: [mesh.nodes[e_nodes[0]], mesh.nodes[e_nodes[1]]],
                        unstretched_length: ell,
                        reference_y: across,
                        conductor: c,
                        mass_per_length: c.mass_per_length + ice_mass + added,
                        polar_inertia_per_length: c.polar_inertia_per_length + ice_polar,
                        end_tangents: if phase.earth_wire {
                            [tangents[j]; 2]
                        } else {
                            [tangents[j], tangents[j + 1]]
                        },
                    };
                    let chord = (segment.x0[1] - segment.x0[0]).normalize();
                    if let (Ok(curved), Ok(straight)) = (
                        kind.build(&segment),
                        kind.build(&SegmentSpec { end_tangents: [chord; 2], ..segment }),
                    ) {
                        let ratio = segment.mass_per_length / c.mass_per_length;
                        let loads = super::curvature_loads(curved.as_ref(), straight.as_ref(), &mesh.nodes);
                        mesh.curvature.extend(loads.into_iter().map(|(n, d, v)| (n, d, v, ratio)));
                    }
                    let element = kind.build(&segment).map_err(|e| {
                        invalid(&format!("phases[{p}]"), format!("span {}, element {j}: {e}", s + 1))
                    })?;
                    let (tab, orient): (Arc<CoefficientTable>, f64) = match cover {
                        Some(cv) => (cv.table.clone(), 0.0),
                        None => (table.clone(), orientation),
                    };
                    let aero = ElementAero {
                        table: tab,
                        uses_rotations: element.uses_rotations(),
                        orientation: orient,
                    };
                    mesh.push(element, Some(aero), Some(c.mass_per_length), false);
                }
                let label = if count > 1 {
                    format!("phase_{}_sub_{}_span_{}", phase.name, k + 1, s + 1)
                } else {
                    format!("phase_{}_span_{}", phase.name, s + 1)
                };
                groups.insert(label, ids.clone());
                groups.entry(format!("phase_{}", phase.name)).or_default().extend(ids.iter().copied());
                spans.push(SpanMesh {
                    nodes: ids.clone(),
                    elements: first_element..mesh.elements.len(),
                    end_names: [towers[s].name.clone(), towers[s + 1].name.clone()],
                    route_span: s,
                    phase: Some(p),
                    subconductor: k,
                    conductor: phase.conductor,
                    direction: *dir,
                    horizontal_length: chain.nodes[chain.nodes.len() - 1].0,
                    height_difference: chain.nodes[chain.nodes.len() - 1].1,
                    stringing: chain.clone(),
                });
                span_nodes.push(ids);
            }
            // Spacer frames: hub at the bundle centre, point masses at the clamps.
            let st = stations.get_mut(&(p, s)).expect("stations of every span");
            for station in st.iter_mut().filter(|x| x.spacer) {
                let sub: Vec<usize> = span_nodes.iter().map(|ids| ids[station.chain_index]).collect();
                // Bundle centre: the mean of the subconductors (a regular polygon).
                let centre = sub.iter().map(|&n| mesh.nodes[n]).sum::<Vector3<f64>>() / count as f64;
                let hub = mesh.node(centre);
                let axis = tangent(s, station.chain_index);
                let frame_mass = match section.spacers.as_ref().map(|x| x.kind) {
                    Some(SpacerKind::Damper(d)) => {
                        mesh.hinged_frame(hub, &sub, axis, &d, grip).map_err(|e| invalid("spacers", e))?;
                        d.frame_mass
                    }
                    _ => {
                        mesh.frame(hub, &sub, axis, spacer_arm, grip, false)
                            .map_err(|e| invalid("spacers", e))?;
                        0.0
                    }
                };
                let mass = (section.spacers.as_ref().map_or(0.0, |x| x.mass) - frame_mass) / count as f64;
                for &n in &sub {
                    let pm =
                        PointMass::new(n, mass, 0.0).map_err(|e| invalid("spacers.mass", e.to_string()))?;
                    mesh.push(Box::new(pm), None, None, false);
                }
                station.hub = Some(hub);
                groups.entry("spacers".into()).or_default().push(hub);
            }
            for (k, ids) in span_nodes.into_iter().enumerate() {
                station_index.insert((p, s, k), ids);
            }
        }
    }

    // Devices of the layout.
    for d in &section.devices {
        let own = d.device.stations();
        let mut site = Site {
            mesh: &mut mesh,
            stations: &mut stations,
            chains: &station_index,
            section,
            own: &own,
            grip: &grips,
        };
        d.device.build(&mut site).map_err(|e| invalid(&d.key, format!("{}: {e}", d.kind)))?;
    }

    finish(spec, section, mesh, spans, strings, groups)
}

/// The section as devices see it while they are built.
struct Site<'a> {
    mesh: &'a mut Mesh,
    stations: &'a mut BTreeMap<(usize, usize), Vec<StationNode>>,
    chains: &'a BTreeMap<(usize, usize, usize), Vec<usize>>,
    section: &'a TensionSection,
    own: &'a [Station],
    /// Clamp stiffness per phase.
    grip: &'a [ClampStiffness],
}

impl Site<'_> {
    /// Conductor tangent (first subconductor) at the node of station `i`.
    fn tangent(&self, i: usize) -> Vector3<f64> {
        let (st, j) = self.station(i);
        let index = self.stations[&(st.phase, st.span)][j].chain_index;
        let ids = &self.chains[&(st.phase, st.span, 0)];
        let (a, b) = (ids[index.saturating_sub(1)], ids[(index + 1).min(ids.len() - 1)]);
        (self.mesh.nodes[b] - self.mesh.nodes[a]).normalize()
    }

    fn station(&self, i: usize) -> (Station, usize) {
        let st = self.own[i];
        let list = &self.stations[&(st.phase, st.span)];
        let j = list
            .iter()
            .position(|x| (x.distance - st.distance).abs() < STATION_MERGE)
            .expect("every device station has a node");
        (st, j)
    }
}

impl DeviceSite for Site<'_> {
    fn attachment(&mut self, i: usize) -> usize {
        let (st, j) = self.station(i);
        let count = self.section.phases[st.phase].bundle.count;
        let index = self.stations[&(st.phase, st.span)][j].chain_index;
        if let Some(hub) = self.stations[&(st.phase, st.span)][j].hub {
            return hub;
        }
        if count == 1 {
            // A node at the conductor, joined to it by a clamp.
            let c = self.chains[&(st.phase, st.span, 0)][index];
            let end = self.mesh.node(self.mesh.nodes[c]);
            let joint = ClampJoint::new([end, c], self.tangent(i), self.grip[st.phase])
                .expect("a clamp along the span's direction");
            self.mesh.push(Box::new(joint), None, None, true);
            if let Some(x) = self.stations.get_mut(&(st.phase, st.span)) {
                x[j].hub = Some(end);
            }
            return end;
        }
        let sub: Vec<usize> = (0..count).map(|k| self.chains[&(st.phase, st.span, k)][index]).collect();
        // Bundle centre: the mean of the subconductors (a regular polygon).
        let centre = sub.iter().map(|&n| self.mesh.nodes[n]).sum::<Vector3<f64>>() / count as f64;
        let hub = self.mesh.node(centre);
        // The frame joins the device to the bundle: built as device arms.
        // Arms of a few decimetres between distinct points cannot fail.
        let grip = self.grip[st.phase];
        let axis = self.tangent(i);
        self.mesh.frame(hub, &sub, axis, RIGID_ARM, grip, true).expect("a frame between distinct points");
        if let Some(x) = self.stations.get_mut(&(st.phase, st.span)) {
            x[j].hub = Some(hub);
        }
        hub
    }

    fn position(&self, node: usize) -> Vector3<f64> {
        self.mesh.nodes[node]
    }

    fn along(&self, i: usize) -> Vector3<f64> {
        let st = self.own[i];
        let ids = &self.chains[&(st.phase, st.span, 0)];
        let d = self.mesh.nodes[ids[ids.len() - 1]] - self.mesh.nodes[ids[0]];
        Vector3::new(d.x, d.y, 0.0).normalize()
    }

    fn add_node(&mut self, position: Vector3<f64>) -> usize {
        self.mesh.node(position)
    }

    fn add_element(&mut self, element: Box<dyn Element>) {
        self.mesh.push(element, None, None, true);
    }
}

/// Numbering, supports, groups and the weights of both states.
fn finish(
    spec: &SectionSpec,
    section: &TensionSection,
    mesh: Mesh,
    spans: Vec<SpanMesh>,
    strings: Vec<StringMesh>,
    mut groups: BTreeMap<String, Vec<usize>>,
) -> Result<Model, InputError> {
    let g = spec.load_case.gravity;
    let n = mesh.nodes.len();
    let mut uses_rotation = vec![false; n];
    let mut stringing_load = vec![0.0; n * DOF_PER_NODE];
    let mut case_load = vec![0.0; n * DOF_PER_NODE];
    for (i, e) in mesh.elements.iter().enumerate() {
        let ids = e.nodes();
        if e.uses_rotations() {
            for &a in ids {
                uses_rotation[a] = true;
            }
        }
        // Weight = g × the element's lumped translational mass (so the
        // load case's weight and the mass matrix agree).
        let states: Vec<NodeState> = ids.iter().map(|&a| NodeState::at_rest(mesh.nodes[a])).collect();
        let dim = DOF_PER_NODE * ids.len();
        let mut m = vec![0.0; dim * dim];
        e.lumped_mass(&states, &mut m);
        for (local, &a) in ids.iter().enumerate() {
            let d = DOF_PER_NODE * local + 2;
            let weight = m[d * dim + d] * g;
            case_load[a * DOF_PER_NODE + 2] -= weight;
            let bare = match (mesh.device[i], mesh.bare_conductor[i]) {
                (true, _) => 0.0,
                (false, Some(mu)) => 0.5 * mu * e.unstretched_length() * g,
                (false, None) => weight,
            };
            stringing_load[a * DOF_PER_NODE + 2] -= bare;
        }
    }
    for &(node, d, v, ratio) in &mesh.curvature {
        stringing_load[node * DOF_PER_NODE + d] += v;
        case_load[node * DOF_PER_NODE + d] += v * ratio;
    }
    let free: Vec<[bool; DOF_PER_NODE]> = mesh
        .restrained
        .iter()
        .zip(&uses_rotation)
        .map(|(r, &rot)| std::array::from_fn(|d| !r[d] && (d < 3 || rot)))
        .collect();
    let dofs = DofMap::new(&free);
    let support_nodes: Vec<usize> = (0..n).filter(|&a| mesh.restrained[a].iter().any(|&r| r)).collect();
    groups.insert("support".to_string(), support_nodes.clone());
    let support_labels =
        support_nodes.iter().map(|a| mesh.support_label.get(a).cloned().unwrap_or_default()).collect();
    groups.insert(
        "strings".to_string(),
        strings.iter().flat_map(|s| s.hinges.iter().copied().chain([s.yoke])).collect(),
    );
    Ok(Model {
        nodes: mesh.nodes,
        elements: mesh.elements,
        restrained: mesh.restrained,
        dofs,
        spans,
        strings,
        phase_names: spec
            .section
            .as_ref()
            .map_or(Vec::new(), |s| s.phases.iter().map(|p| p.name.clone()).collect()),
        support_nodes,
        conductor_rated_strength: spec.conductors.iter().map(|c| c.rated_strength).collect(),
        support_labels,
        towers: section.towers.iter().map(|t| (t.name.clone(), t.chainage)).collect(),
        route: RoutePlan::of(section).points.iter().map(|p| [p.x, p.y]).collect(),
        ground_profile: section.ground_profile.clone(),
        groups,
        stringing_load,
        case_load,
        temperature_change: spec.load_case.temperature - spec.stringing_temperature,
        aero: mesh.aero,
        wind: spec.load_case.wind,
    })
}
