//! One pass over the histories of a results file, keeping only the compact
//! series a report needs: the motion of every station (bundle centre) of
//! every span across and along the vertical, the closest approach of every
//! pair of wires and of every wire to the ground, the largest conductor
//! tension of every span, the string tensions and the support forces.

use crate::results_file::{ModelInfo, ModesInfo, ResultsFile};
use crate::ReportError;
use glaze_post::clearance::{min_vertical_clearance, ClearanceSearch, GroundProfile, PolylineSet, Route};
use rayon::prelude::*;

/// Records read from the file at a time.
const BLOCK: usize = 128;

/// The stations of one route span of one phase (or of a row's span).
#[derive(Debug, Clone)]
pub struct SpanStations {
    /// Route span, 0-based.
    pub route_span: usize,
    /// Phase (`None` in a row).
    pub phase: Option<usize>,
    /// Node lists of the subconductors, station by station (equal lengths).
    pub subconductors: Vec<Vec<usize>>,
    /// Horizontal unit vector across the span (z × plan direction).
    pub across: [f64; 2],
    /// Chainage (distance from the span's first end in plan) of each station at rest, m.
    pub distance: Vec<f64>,
    /// Per record, per station: displacement across, m.
    pub y: Vec<Vec<f64>>,
    /// Per record, per station: vertical displacement, m.
    pub z: Vec<Vec<f64>>,
}

/// Closest approach of two wires at one record.
#[derive(Debug, Clone, Copy)]
pub struct Approach {
    /// Distance, m.
    pub distance: f64,
    /// Point on the first wire, m.
    pub point: [f64; 3],
}

/// The compact series of one results file.
#[derive(Debug, Clone)]
pub struct Series {
    /// Output times, s.
    pub time: Vec<f64>,
    /// Stations of every (route span, phase).
    pub spans: Vec<SpanStations>,
    /// Pairs of phases `(i, j)`, i < j, with their closest approach per record.
    pub pairs: Vec<((usize, usize), Vec<Approach>)>,
    /// Per phase, the lowest clearance above ground per record (empty without a profile).
    pub ground: Vec<(usize, Vec<Approach>)>,
    /// Per meshed span (model order), the largest conductor axial force per record, N.
    pub span_tension: Vec<Vec<f64>>,
    /// Per string, the largest leg axial force per record, N.
    pub string_tension: Vec<Vec<f64>>,
    /// Per support, the force per record (global X, Y, Z), N.
    pub support_force: Vec<Vec<[f64; 3]>>,
    /// Segments in the clearance search and the segment pairs it tested, summed over records.
    pub clearance_work: (usize, u64),
    /// Wall time of the clearance searches (wire pairs and ground), summed over records, s.
    pub clearance_seconds: f64,
    /// Bending rotation at every suspension clamp.
    pub clamps: crate::clamp_bending::ClampSeries,
    /// The motion projected on the linear modes, if the file has them.
    pub modal: Option<ModalSeries>,
}

/// Modal coordinates of the motion: with Δ(t) the displacement and
/// rotation from the static state (rotation vector of R(t) R_staticᵀ, in
/// global axes) and φ_k the mass-normalised shapes, q_k(t) = φ_kᵀ M Δ(t),
/// the coordinate of mode k in the M-orthogonal expansion Δ = Σ q_k φ_k
/// (e.g. Clough & Penzien, *Dynamics of Structures*, on normal
/// coordinates). `norm2` is ΔᵀMΔ: Σ_k q_k² ≤ ΔᵀMΔ, with the rest in modes
/// that were not computed (and in the nonlinear part of the motion).
#[derive(Debug, Clone)]
pub struct ModalSeries {
    /// Natural frequencies, Hz.
    pub frequency_hz: Vec<f64>,
    /// Labels of the modes.
    pub labels: Vec<String>,
    /// Per mode, per record: q_k, kg^1/2 m.
    pub q: Vec<Vec<f64>>,
    /// Per record: ΔᵀMΔ, kg m².
    pub norm2: Vec<f64>,
    /// Per mode: the largest translation of the shape over the nodes, kg^-1/2
    /// (q_k times it is the largest displacement the mode makes, m).
    pub shape_peak: Vec<f64>,
}

/// Precomputed M φ_k per node, and the static rotations, for the projection.
struct Projection {
    modes: usize,
    /// `[mode][node][6]` of M_n φ_k,n.
    m_phi: Vec<f64>,
    /// `[node][36]` lumped masses.
    node_mass: Vec<f64>,
    /// Conjugate of each node's static rotation quaternion.
    static_conj: Vec<[f64; 4]>,
}

impl Projection {
    fn new(m: &ModesInfo, n: usize) -> Self {
        let k = m.frequency_hz.len();
        let mut m_phi = vec![0.0; k * n * 6];
        for mode in 0..k {
            for node in 0..n {
                let phi = &m.shapes[(mode * n + node) * 6..(mode * n + node + 1) * 6];
                let mass = &m.node_mass[node * 36..(node + 1) * 36];
                for r in 0..6 {
                    m_phi[(mode * n + node) * 6 + r] = (0..6).map(|c| mass[r * 6 + c] * phi[c]).sum();
                }
            }
        }
        let static_conj = m.static_rotation.iter().map(|q| [q[0], -q[1], -q[2], -q[3]]).collect();
        Self { modes: k, m_phi, node_mass: m.node_mass.clone(), static_conj }
    }

    /// (q_k for every mode, ΔᵀMΔ) of one record; `delta` is scratch of 6n.
    fn project(&self, d: &[f64], rot: &[f64], delta: &mut [f64]) -> (Vec<f64>, f64) {
        let n = self.static_conj.len();
        for node in 0..n {
            let out = &mut delta[node * 6..node * 6 + 6];
            out[..3].copy_from_slice(&d[3 * node..3 * node + 3]);
            let q = &rot[4 * node..4 * node + 4];
            let theta = rotation_vector(quat_mul([q[0], q[1], q[2], q[3]], self.static_conj[node]));
            out[3..].copy_from_slice(&theta);
        }
        let q = (0..self.modes)
            .map(|k| {
                self.m_phi[k * n * 6..(k + 1) * n * 6].iter().zip(delta.iter()).map(|(a, b)| a * b).sum()
            })
            .collect();
        let mut norm2 = 0.0;
        for node in 0..n {
            let x = &delta[node * 6..node * 6 + 6];
            let mass = &self.node_mass[node * 36..(node + 1) * 36];
            for r in 0..6 {
                if x[r] != 0.0 {
                    norm2 += x[r] * (0..6).map(|c| mass[r * 6 + c] * x[c]).sum::<f64>();
                }
            }
        }
        (q, norm2)
    }
}

/// Hamilton product a ⊗ b of quaternions (w, x, y, z).
fn quat_mul(a: [f64; 4], b: [f64; 4]) -> [f64; 4] {
    [
        a[0] * b[0] - a[1] * b[1] - a[2] * b[2] - a[3] * b[3],
        a[0] * b[1] + a[1] * b[0] + a[2] * b[3] - a[3] * b[2],
        a[0] * b[2] - a[1] * b[3] + a[2] * b[0] + a[3] * b[1],
        a[0] * b[3] + a[1] * b[2] - a[2] * b[1] + a[3] * b[0],
    ]
}

/// Rotation vector (axis × angle, rad) of a unit quaternion, angle in [0, π].
fn rotation_vector(q: [f64; 4]) -> [f64; 3] {
    let s = if q[0] < 0.0 { -1.0 } else { 1.0 };
    let (w, v) = (s * q[0], [s * q[1], s * q[2], s * q[3]]);
    let sin_half = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
    if sin_half < 1e-12 {
        return [2.0 * v[0], 2.0 * v[1], 2.0 * v[2]];
    }
    let scale = 2.0 * sin_half.atan2(w) / sin_half;
    [scale * v[0], scale * v[1], scale * v[2]]
}

fn group_stations(model: &ModelInfo) -> Vec<SpanStations> {
    let mut out: Vec<SpanStations> = Vec::new();
    for s in &model.spans {
        let slot = out.iter_mut().find(|g| g.route_span == s.route_span && g.phase == s.phase);
        match slot {
            Some(g) if g.subconductors[0].len() == s.nodes.len() => g.subconductors.push(s.nodes.clone()),
            Some(_) => {} // different station count: the first subconductor stands for the bundle
            None => {
                let (a, b) = (
                    model.static_position[s.nodes[0]],
                    model.static_position[*s.nodes.last().unwrap_or(&s.nodes[0])],
                );
                let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
                let l = dx.hypot(dy).max(f64::MIN_POSITIVE);
                let dir = [dx / l, dy / l];
                let distance = s
                    .nodes
                    .iter()
                    .map(|&n| {
                        let p = model.static_position[n];
                        (p[0] - a[0]) * dir[0] + (p[1] - a[1]) * dir[1]
                    })
                    .collect();
                out.push(SpanStations {
                    route_span: s.route_span,
                    phase: s.phase,
                    subconductors: vec![s.nodes.clone()],
                    across: [-dir[1], dir[0]],
                    distance,
                    y: Vec::new(),
                    z: Vec::new(),
                });
            }
        }
    }
    out.sort_by_key(|g| (g.phase, g.route_span));
    out
}

/// Polylines of each phase: one per meshed span of its subconductors.
fn phase_polylines(model: &ModelInfo) -> Vec<(usize, Vec<Vec<usize>>)> {
    let mut phases: Vec<(usize, Vec<Vec<usize>>)> = Vec::new();
    for s in &model.spans {
        let Some(p) = s.phase else { continue };
        match phases.iter_mut().find(|(q, _)| *q == p) {
            Some((_, lines)) => lines.push(s.nodes.clone()),
            None => phases.push((p, vec![s.nodes.clone()])),
        }
    }
    phases.sort_by_key(|(p, _)| *p);
    phases
}

fn to_set(lines: &[Vec<usize>], pos: &[[f64; 3]]) -> Result<PolylineSet, ReportError> {
    let polylines: Vec<Vec<[f64; 3]>> = lines.iter().map(|l| l.iter().map(|&n| pos[n]).collect()).collect();
    PolylineSet::from_polylines(&polylines)
        .map_err(|e| ReportError::Analysis(format!("clearance geometry: {e}")))
}

/// Reads every record of `file` once and keeps the series of [`Series`].
///
/// # Errors
/// [`ReportError`] for a file whose histories cannot be read or do not match its model.
pub fn read_series(file: &ResultsFile) -> Result<Series, ReportError> {
    let model = &file.model;
    let t_count = file.records();
    if t_count == 0 {
        return Err(ReportError::Analysis(format!(
            "{} has no /dynamic records: post-processing needs a time simulation (`glaze run`)",
            file.path().display()
        )));
    }
    let n = model.node_count();
    let mut spans = group_stations(model);
    let phases = phase_polylines(model);
    let profile = if model.ground_profile.len() >= 2 {
        Some(
            match model.route.len() {
                0 | 1 => GroundProfile::new([0.0, 0.0], [1.0, 0.0], &model.ground_profile),
                _ => {
                    Route::through(&model.route).and_then(|r| GroundProfile::along(r, &model.ground_profile))
                }
            }
            .map_err(|e| ReportError::Analysis(format!("ground profile: {e}")))?,
        )
    } else {
        None
    };
    let pair_ids: Vec<(usize, usize)> =
        (0..phases.len()).flat_map(|i| (i + 1..phases.len()).map(move |j| (i, j))).collect();
    let sets: Vec<PolylineSet> =
        phases.iter().map(|(_, lines)| to_set(lines, &model.static_position)).collect::<Result<_, _>>()?;
    let searches: Vec<ClearanceSearch> = pair_ids.iter().map(|_| ClearanceSearch::new()).collect();
    let mut pairs: Vec<((usize, usize), Vec<Approach>)> =
        pair_ids.iter().map(|&(i, j)| ((phases[i].0, phases[j].0), Vec::with_capacity(t_count))).collect();
    let mut ground: Vec<(usize, Vec<Approach>)> = match profile {
        Some(_) => phases.iter().map(|(p, _)| (*p, Vec::with_capacity(t_count))).collect(),
        None => Vec::new(),
    };
    let mut span_tension = vec![Vec::with_capacity(t_count); model.spans.len()];
    let mut string_tension = vec![Vec::with_capacity(t_count); model.strings.len()];
    let s_count = model.support_nodes.len();
    let mut support_force = vec![Vec::with_capacity(t_count); s_count];
    let e_count = model.element_kind.len();
    let pos = model.static_position.clone();
    let mut work = (sets.iter().map(PolylineSet::segment_count).sum::<usize>(), 0u64);
    let mut clamps = crate::clamp_bending::ClampSeries::new(model, t_count);

    // Records are independent: each block is read whole (HDF5 is serial),
    // then its records are worked out in parallel, each worker with its own
    // geometry scratch, and appended in record order (the same result on
    // any number of threads).
    let modes = file.modes()?;
    let projection = modes.as_ref().map(|m| Projection::new(m, n));
    let mut modal = modes.map(|m| ModalSeries {
        shape_peak: m
            .shapes
            .chunks_exact(6 * n)
            .map(|shape| {
                shape
                    .chunks_exact(6)
                    .map(|p| (p[0] * p[0] + p[1] * p[1] + p[2] * p[2]).sqrt())
                    .fold(0.0, f64::max)
            })
            .collect(),
        q: vec![Vec::with_capacity(t_count); m.frequency_hz.len()],
        norm2: Vec::with_capacity(t_count),
        frequency_hz: m.frequency_hz,
        labels: m.labels,
    });
    let delta = vec![0.0; if projection.is_some() { 6 * n } else { 0 }];
    let scratch = Scratch { pos, sets, searches, delta };
    // While a block is worked out, the next one is read (HDF5 reads and
    // decompresses on one thread at a time).
    let read = |start: usize| -> Result<Option<Block>, ReportError> {
        if start >= t_count {
            return Ok(None);
        }
        let end = (start + BLOCK).min(t_count);
        Ok(Some(Block {
            end,
            len: end - start,
            disp: file.displacement(start..end)?,
            axial: file.axial_force(start..end)?,
            forces: file.support_force(start..end)?,
            rot: if projection.is_some() { file.rotation(start..end)? } else { Vec::new() },
        }))
    };
    let mut clearance_seconds = 0.0;
    let mut current = read(0)?;
    while let Some(block) = current {
        let Block { end, len, disp, axial, forces, rot } = block;
        clamps.push_block(model, &disp, len);
        let work_out = || {
            (0..len)
                .into_par_iter()
                .map_init(
                    || scratch.clone(),
                    |sc, r| {
                        let modal = projection.as_ref().map(|p| {
                            p.project(
                                &disp[r * n * 3..(r + 1) * n * 3],
                                &rot[r * n * 4..(r + 1) * n * 4],
                                &mut sc.delta,
                            )
                        });
                        one_record(
                            model,
                            &spans,
                            &phases,
                            &pair_ids,
                            profile.as_ref(),
                            sc,
                            &disp[r * n * 3..(r + 1) * n * 3],
                            &axial[r * e_count..(r + 1) * e_count],
                            &forces[r * s_count * 3..(r + 1) * s_count * 3],
                        )
                        .map(|mut o| {
                            o.modal = modal;
                            o
                        })
                    },
                )
                .collect::<Result<Vec<RecordOut>, _>>()
        };
        let (next, outs) = rayon::join(|| read(end), work_out);
        let outs = outs?;
        for o in outs {
            for (g, (ys, zs)) in spans.iter_mut().zip(o.stations) {
                g.y.push(ys);
                g.z.push(zs);
            }
            for (q, a) in o.pairs.into_iter().enumerate() {
                pairs[q].1.push(a);
            }
            work.1 += o.segment_pairs;
            clearance_seconds += o.clearance_seconds;
            for (q, a) in o.ground.into_iter().enumerate() {
                ground[q].1.push(a);
            }
            for (k, t) in o.span_tension.into_iter().enumerate() {
                span_tension[k].push(t);
            }
            for (k, t) in o.string_tension.into_iter().enumerate() {
                string_tension[k].push(t);
            }
            for (k, f) in o.support_force.into_iter().enumerate() {
                support_force[k].push(f);
            }
            if let (Some(ms), Some((q, norm2))) = (modal.as_mut(), o.modal) {
                for (series, value) in ms.q.iter_mut().zip(q) {
                    series.push(value);
                }
                ms.norm2.push(norm2);
            }
        }
        current = next?;
    }
    Ok(Series {
        time: file.time.clone(),
        spans,
        pairs,
        ground,
        span_tension,
        string_tension,
        support_force,
        clearance_work: work,
        clearance_seconds,
        clamps,
        modal,
    })
}

/// The histories of one block of records.
struct Block {
    /// One past the block's last record.
    end: usize,
    len: usize,
    disp: Vec<f64>,
    axial: Vec<f64>,
    forces: Vec<f64>,
    rot: Vec<f64>,
}

/// Per-worker geometry of [`read_series`].
#[derive(Clone)]
struct Scratch {
    pos: Vec<[f64; 3]>,
    sets: Vec<PolylineSet>,
    searches: Vec<ClearanceSearch>,
    /// Displacement and rotation vector of every node, for the projection.
    delta: Vec<f64>,
}

/// What one record adds to the series.
struct RecordOut {
    stations: Vec<(Vec<f64>, Vec<f64>)>,
    pairs: Vec<Approach>,
    segment_pairs: u64,
    clearance_seconds: f64,
    ground: Vec<Approach>,
    span_tension: Vec<f64>,
    string_tension: Vec<f64>,
    support_force: Vec<[f64; 3]>,
    modal: Option<(Vec<f64>, f64)>,
}

#[allow(clippy::too_many_arguments)]
fn one_record(
    model: &ModelInfo,
    spans: &[SpanStations],
    phases: &[(usize, Vec<Vec<usize>>)],
    pair_ids: &[(usize, usize)],
    profile: Option<&GroundProfile>,
    sc: &mut Scratch,
    d: &[f64],
    f: &[f64],
    sf: &[f64],
) -> Result<RecordOut, ReportError> {
    for (k, p) in sc.pos.iter_mut().enumerate() {
        let s = model.static_position[k];
        *p = [s[0] + d[3 * k], s[1] + d[3 * k + 1], s[2] + d[3 * k + 2]];
    }
    let stations = spans
        .iter()
        .map(|g| {
            let m = g.subconductors.len() as f64;
            let count = g.subconductors[0].len();
            let (mut ys, mut zs) = (Vec::with_capacity(count), Vec::with_capacity(count));
            for i in 0..count {
                let (mut y, mut z) = (0.0, 0.0);
                for sub in &g.subconductors {
                    let k = sub[i];
                    y += d[3 * k] * g.across[0] + d[3 * k + 1] * g.across[1];
                    z += d[3 * k + 2];
                }
                ys.push(y / m);
                zs.push(z / m);
            }
            (ys, zs)
        })
        .collect();
    for (set, (_, lines)) in sc.sets.iter_mut().zip(phases) {
        let flat: Vec<[f64; 3]> = lines.iter().flat_map(|l| l.iter().map(|&k| sc.pos[k])).collect();
        set.set_positions(&flat).map_err(|e| ReportError::Analysis(format!("clearance geometry: {e}")))?;
    }
    let clock = std::time::Instant::now();
    let mut segment_pairs = 0;
    let pairs = pair_ids
        .iter()
        .enumerate()
        .map(|(q, &(i, j))| {
            let hit = sc.searches[q].search(&sc.sets[i], &sc.sets[j]);
            segment_pairs += sc.searches[q].stats().segment_pairs;
            hit.map_or(Approach { distance: f64::INFINITY, point: [f64::NAN; 3] }, |h| Approach {
                distance: h.distance,
                point: h.point_a,
            })
        })
        .collect();
    let ground = match profile {
        Some(profile) => sc
            .sets
            .iter()
            .map(|set| {
                min_vertical_clearance(set, profile).map_or(
                    Approach { distance: f64::INFINITY, point: [f64::NAN; 3] },
                    |h| Approach { distance: h.clearance, point: h.point },
                )
            })
            .collect(),
        None => Vec::new(),
    };
    let clearance_seconds = clock.elapsed().as_secs_f64();
    let span_tension = model
        .spans
        .iter()
        .map(|s| f[s.elements.0..s.elements.1].iter().fold(f64::NEG_INFINITY, |a, &b| a.max(b)))
        .collect();
    let string_tension = model
        .strings
        .iter()
        .map(|s| s.elements.iter().map(|&e| f[e]).fold(f64::NEG_INFINITY, f64::max))
        .collect();
    let support_force = (0..sf.len() / 3).map(|k| [sf[3 * k], sf[3 * k + 1], sf[3 * k + 2]]).collect();
    Ok(RecordOut {
        stations,
        pairs,
        segment_pairs,
        clearance_seconds,
        ground,
        span_tension,
        string_tension,
        support_force,
        modal: None,
    })
}
