//! The answers of `glaze post`, computed from the compact [`Series`] of a
//! results file and the `[post]` settings: clearances, galloping envelope
//! per span, loads at the attachments, conductor and string tensions, and
//! fatigue of the attachments.

use crate::results_file::ModelInfo;
use crate::series::{Approach, Series};
use crate::ReportError;
use glaze_engine::input::post::{FatigueQuantity, PostSpec};
use glaze_post::bending_stress::{ConductorBending, WireGroup};
use glaze_post::fatigue::{hours_to_failure, miner_damage, EndBehaviour, SnCurve};
use glaze_post::orbit::{fit_orbit, RotationSense};
use glaze_post::rainflow::rainflow;
use glaze_post::spectrum::{dominant_frequencies, SpectrumOptions};
use serde::Serialize;

/// The caution every report carries.
pub const CAUTION: &str = "glaze results support, and never replace, the judgement of a licensed engineer \
and the clearances and load cases of the local code.";

/// Windows the record is cut into to find where the galloping settles.
const SETTLE_WINDOWS: usize = 10;
/// Share within which the amplitude of every later window must stay of the
/// last window's for the motion to count as steady (common practice).
const SETTLE_TOLERANCE: f64 = 0.10;

/// Everything `glaze post` reports, serialised to `report.json`.
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    /// The caution.
    pub caution: &'static str,
    /// The results file read.
    pub results_file: String,
    /// Whether the file was complete.
    pub complete: bool,
    /// Output records and simulated duration, s.
    pub records: usize,
    /// Simulated duration, s.
    pub duration_s: f64,
    /// Start of the steady part used for envelopes, loads and fatigue, s.
    pub steady_from_s: f64,
    /// How `steady_from_s` was chosen: `"given"` (`post.transient`), `"detected"` or `"not settled"`.
    pub steady_from: &'static str,
    /// Clearances.
    pub clearance: ClearanceReport,
    /// Galloping envelope of every route span and phase.
    pub spans: Vec<SpanEnvelope>,
    /// Forces at every support (tower attachment).
    pub supports: Vec<SupportLoad>,
    /// Conductor tension per meshed span.
    pub conductors: Vec<ConductorTension>,
    /// Insulator string tensions.
    pub strings: Vec<StringTension>,
    /// Fatigue of the attachments per S–N curve.
    pub fatigue: Vec<FatigueResult>,
    /// Bending-stress fatigue at the suspension clamps per S–N curve.
    pub clamp_fatigue: Vec<ClampFatigueResult>,
    /// The steady motion projected on the linear modes about the start
    /// state (empty for a file without `/modes`).
    pub modes: Vec<ModeParticipation>,
    /// Share of the steady motion's mean ΔᵀMΔ in the modes listed (the
    /// rest is in modes not computed, or nonlinear); `None` without modes.
    pub modes_captured_share: Option<f64>,
}

/// One linear mode's part in the steady motion (see [`crate::series::ModalSeries`]).
#[derive(Debug, Clone, Serialize)]
pub struct ModeParticipation {
    /// Mode number, 1-based.
    pub mode: usize,
    /// Natural frequency, Hz.
    pub frequency_hz: f64,
    /// Description.
    pub label: String,
    /// RMS of the modal coordinate q_k = φ_kᵀMΔ, kg^1/2 m.
    pub rms_coordinate: f64,
    /// Largest |q_k|, kg^1/2 m.
    pub peak_coordinate: f64,
    /// Largest displacement the mode makes: peak |q_k| times the shape's largest translation, m.
    pub peak_displacement_m: f64,
    /// Share of the mean ΔᵀMΔ of the steady motion, mean(q_k²) / mean(ΔᵀMΔ).
    pub share: f64,
}

/// Clearances over the steady part.
#[derive(Debug, Clone, Serialize)]
pub struct ClearanceReport {
    /// Required phase-to-phase distance, m (from `post.clearance`; the local code decides it).
    pub required_phase_to_phase_m: Option<f64>,
    /// Required height above ground, m.
    pub required_phase_to_ground_m: Option<f64>,
    /// Every pair of wires.
    pub pairs: Vec<PairClearance>,
    /// Every wire above the ground.
    pub ground: Vec<GroundClearance>,
}

/// Closest approach of two wires.
#[derive(Debug, Clone, Serialize)]
pub struct PairClearance {
    /// The two phases (or earth wires).
    pub phases: [String; 2],
    /// Least distance, m.
    pub min_distance_m: f64,
    /// When, s.
    pub time_s: f64,
    /// Where: chainage along the route of the point on the first wire, m.
    pub chainage_m: f64,
    /// Distance at rest (first record), m.
    pub initial_distance_m: f64,
    /// `min_distance − required` when a requirement is given, m (negative: infringed).
    pub margin_m: Option<f64>,
}

/// Lowest point of a wire above the ground.
#[derive(Debug, Clone, Serialize)]
pub struct GroundClearance {
    /// Phase or earth wire.
    pub phase: String,
    /// Least height above the ground profile, m.
    pub min_clearance_m: f64,
    /// When, s.
    pub time_s: f64,
    /// Chainage, m.
    pub chainage_m: f64,
    /// `min_clearance − required`, m.
    pub margin_m: Option<f64>,
}

/// Galloping envelope of one route span of one phase (bundle centre).
#[derive(Debug, Clone, Serialize)]
pub struct SpanEnvelope {
    /// Route span, 1-based.
    pub span: usize,
    /// Phase (`conductor` in a row).
    pub phase: String,
    /// Largest peak-to-peak vertical motion over the stations, m.
    pub vertical_peak_to_peak_m: f64,
    /// Largest peak-to-peak horizontal motion across the span, m.
    pub horizontal_peak_to_peak_m: f64,
    /// Station with the largest vertical motion: distance from the span's first end, m.
    pub worst_station_m: f64,
    /// Steady orbit of that station, if it moves.
    pub orbit: Option<OrbitSummary>,
    /// Dominant frequencies of its vertical motion.
    pub frequencies: Vec<FrequencyPeak>,
    /// Per station: distance m, vertical and horizontal peak-to-peak m.
    #[serde(skip)]
    pub stations: Vec<[f64; 3]>,
}

/// Fitted ellipse of an orbit.
#[derive(Debug, Clone, Serialize)]
pub struct OrbitSummary {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// Semi-axes, m.
    pub semi_major_m: f64,
    /// Semi-minor axis, m.
    pub semi_minor_m: f64,
    /// Tilt of the major axis from the horizontal, degrees.
    pub tilt_deg: f64,
    /// `counter-clockwise`, `clockwise` or `linear`, looking along the span from its first end.
    pub sense: &'static str,
}

/// One spectral peak.
#[derive(Debug, Clone, Serialize)]
pub struct FrequencyPeak {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// Amplitude, m.
    pub amplitude_m: f64,
}

/// Force at one support over the steady part (global X along the line in a section).
#[derive(Debug, Clone, Serialize)]
pub struct SupportLoad {
    /// Tower and phase (or a row's support name).
    pub label: String,
    /// Static force, N.
    pub static_n: [f64; 3],
    /// Largest component values, N.
    pub max_n: [f64; 3],
    /// Smallest component values, N.
    pub min_n: [f64; 3],
    /// Largest magnitude, N.
    pub peak_magnitude_n: f64,
    /// Peak over static magnitude.
    pub dynamic_ratio: f64,
}

/// Conductor tension of one meshed span.
#[derive(Debug, Clone, Serialize)]
pub struct ConductorTension {
    /// Route span, 1-based.
    pub span: usize,
    /// Phase.
    pub phase: String,
    /// Subconductor, 1-based.
    pub subconductor: usize,
    /// Largest static tension, N.
    pub static_n: f64,
    /// Largest tension in the steady part, N.
    pub peak_n: f64,
    /// Peak over rated strength.
    pub share_of_rated: f64,
}

/// Tension of one insulator string.
#[derive(Debug, Clone, Serialize)]
pub struct StringTension {
    /// Tower name.
    pub tower: String,
    /// Phase.
    pub phase: String,
    /// Static tension (largest leg), N.
    pub static_n: f64,
    /// Largest and smallest in the steady part, N.
    pub peak_n: f64,
    /// Smallest, N (negative: the string would be pushed).
    pub min_n: f64,
}

/// Miner damage of one attachment on one S–N curve.
#[derive(Debug, Clone, Serialize)]
pub struct FatigueResult {
    /// Curve name.
    pub curve: String,
    /// Support label.
    pub support: String,
    /// Rainflow cycles counted (half cycles as 0.5).
    pub cycles: f64,
    /// Largest range, N.
    pub max_range_n: f64,
    /// Damage per hour of this galloping.
    pub damage_per_hour: f64,
    /// Hours of this galloping to damage 1.
    pub hours_to_failure: f64,
}

/// Bending-stress fatigue of one conductor at one suspension clamp, in one
/// plane, on one S–N curve (see [`crate::clamp_bending`]).
#[derive(Debug, Clone, Serialize)]
pub struct ClampFatigueResult {
    /// Curve name.
    pub curve: String,
    /// Tower name.
    pub tower: String,
    /// Phase.
    pub phase: String,
    /// Subconductor, 1-based.
    pub subconductor: usize,
    /// Bending plane: `vertical` or `horizontal`.
    pub plane: &'static str,
    /// Static conductor tension at the clamp used in p = √(T/EI_min), N.
    pub static_tension_n: f64,
    /// Largest rainflow range of the outer-wire stress σ = E_a (d_a/2) p Δθ, MPa (peak to peak).
    pub max_range_mpa: f64,
    /// Largest clamp rotation change |Δθ| from the static state, rad.
    pub max_rotation_rad: f64,
    /// Rainflow cycles counted (half cycles as 0.5).
    pub cycles: f64,
    /// Damage per hour of this galloping (the curve read as zero-to-peak amplitudes, range/2).
    pub damage_per_hour: f64,
    /// Hours of this galloping to damage 1.
    pub hours_to_failure: f64,
}

/// The Poffenberger–Swart data of phase `phase`'s conductor, if its type gives `wires`.
fn conductor_bending(post: &PostSpec, phase: usize) -> Result<Option<ConductorBending>, ReportError> {
    let Some(w) = post.phase_conductors.get(phase).and_then(|c| post.wires.get(c)) else { return Ok(None) };
    let group = |g: &glaze_engine::input::post::WireGroupSpec| WireGroup {
        count: g.count,
        diameter: g.diameter,
        modulus: g.modulus,
    };
    let b = match w.ei_min {
        Some(ei) => ConductorBending::new(w.outer.modulus, w.outer.diameter, ei),
        None => {
            let wires: Vec<WireGroup> = std::iter::once(&w.outer).chain(&w.others).map(group).collect();
            ConductorBending::from_wires(&wires, 0)
        }
    };
    b.map(Some).map_err(|e| ReportError::Analysis(format!("conductor wires of phase {phase}: {e}")))
}

fn norm(v: [f64; 3]) -> f64 {
    (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()
}

fn pp(x: impl Iterator<Item = f64>) -> f64 {
    let (lo, hi) = x.fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), v| (l.min(v), h.max(v)));
    if hi >= lo {
        hi - lo
    } else {
        0.0
    }
}

/// First record of the steady part and how it was chosen. Detected: the
/// record is cut into ten windows; the largest vertical peak-to-peak over
/// all stations is taken per window, and the motion is steady from the
/// first window after which every window stays within 10 % of the last
/// (common practice). A record that never settles uses its second half
/// and says so.
fn steady_start(series: &Series, post: &PostSpec) -> Result<(usize, &'static str), ReportError> {
    let t = &series.time;
    let last = *t.last().unwrap_or(&0.0);
    if let Some(from) = post.transient {
        if from >= last {
            return Err(ReportError::Analysis(format!(
                "post.transient = {from} s is not before the end of the record ({last} s)"
            )));
        }
        return Ok((t.iter().position(|&x| x >= from).unwrap_or(0), "given"));
    }
    let n = t.len();
    if n < 2 * SETTLE_WINDOWS {
        return Ok((0, "not settled"));
    }
    let amp = |w: usize| -> f64 {
        let (a, b) = (w * n / SETTLE_WINDOWS, (w + 1) * n / SETTLE_WINDOWS);
        series
            .spans
            .iter()
            .flat_map(|g| (0..g.distance.len()).map(move |i| pp((a..b).map(|r| g.z[r][i]))))
            .fold(0.0, f64::max)
    };
    let amps: Vec<f64> = (0..SETTLE_WINDOWS).map(amp).collect();
    let final_amp = amps[SETTLE_WINDOWS - 1];
    let within = |a: f64| (a - final_amp).abs() <= SETTLE_TOLERANCE * final_amp.max(f64::MIN_POSITIVE);
    let mut first = SETTLE_WINDOWS - 1;
    while first > 0 && within(amps[first - 1]) {
        first -= 1;
    }
    if first < SETTLE_WINDOWS - 1 {
        Ok((first * n / SETTLE_WINDOWS, "detected"))
    } else {
        // Still growing or decaying: the second half, long enough for its frequencies.
        Ok((n / 2, "not settled"))
    }
}

fn worst(approaches: &[Approach], from: usize) -> Option<(usize, Approach)> {
    approaches
        .iter()
        .enumerate()
        .skip(from)
        .filter(|(_, a)| a.distance.is_finite())
        .min_by(|a, b| a.1.distance.total_cmp(&b.1.distance))
        .map(|(r, a)| (r, *a))
}

/// Builds the report.
///
/// # Errors
/// [`ReportError::Analysis`] for settings that do not fit the record (a
/// transient past its end) or an S–N curve the fatigue module refuses.
pub fn build_report(
    model: &ModelInfo,
    series: &Series,
    post: &PostSpec,
    results_file: String,
    complete: bool,
) -> Result<Report, ReportError> {
    let (from, how) = steady_start(series, post)?;
    let t = &series.time;
    let steady_t = &t[from..];
    let steady_duration = steady_t.last().copied().unwrap_or(0.0) - steady_t.first().copied().unwrap_or(0.0);

    // Clearances.
    let pairs = series
        .pairs
        .iter()
        .filter_map(|((i, j), a)| {
            let (r, hit) = worst(a, from)?;
            Some(PairClearance {
                phases: [model.phase_name(Some(*i)), model.phase_name(Some(*j))],
                min_distance_m: hit.distance,
                time_s: t[r],
                chainage_m: model.chainage_of(hit.point),
                initial_distance_m: a[0].distance,
                margin_m: post.phase_to_phase.map(|req| hit.distance - req),
            })
        })
        .collect();
    let ground = series
        .ground
        .iter()
        .filter_map(|(p, a)| {
            let (r, hit) = worst(a, from)?;
            Some(GroundClearance {
                phase: model.phase_name(Some(*p)),
                min_clearance_m: hit.distance,
                time_s: t[r],
                chainage_m: model.chainage_of(hit.point),
                margin_m: post.phase_to_ground.map(|req| hit.distance - req),
            })
        })
        .collect();

    // Envelopes.
    let dt = if steady_t.len() > 1 {
        (steady_t[steady_t.len() - 1] - steady_t[0]) / (steady_t.len() - 1) as f64
    } else {
        0.0
    };
    let mut spans = Vec::new();
    for g in &series.spans {
        let stations: Vec<[f64; 3]> = (0..g.distance.len())
            .map(|i| {
                [g.distance[i], pp(g.z[from..].iter().map(|z| z[i])), pp(g.y[from..].iter().map(|y| y[i]))]
            })
            .collect();
        let (w, worst_station) = stations
            .iter()
            .enumerate()
            .max_by(|a, b| a.1[1].total_cmp(&b.1[1]))
            .map_or((0, [0.0; 3]), |(i, s)| (i, *s));
        let y: Vec<f64> = g.y[from..].iter().map(|v| v[w]).collect();
        let z: Vec<f64> = g.z[from..].iter().map(|v| v[w]).collect();
        let moving = worst_station[1] > 1e-6 && steady_t.len() >= 8 && dt > 0.0;
        let frequencies = if moving {
            dominant_frequencies(
                &z,
                1.0 / dt,
                &SpectrumOptions { max_peaks: 3, ..SpectrumOptions::default() },
            )
            .map(|v| {
                v.into_iter()
                    .map(|p| FrequencyPeak { frequency_hz: p.frequency_hz, amplitude_m: p.amplitude })
                    .collect()
            })
            .unwrap_or_default()
        } else {
            Vec::new()
        };
        let orbit = if moving {
            fit_orbit(steady_t, &y, &z, frequencies.first().map(|p: &FrequencyPeak| p.frequency_hz)).ok().map(
                |o| OrbitSummary {
                    frequency_hz: o.frequency_hz,
                    semi_major_m: o.ellipse.semi_major,
                    semi_minor_m: o.ellipse.semi_minor,
                    tilt_deg: o.ellipse.tilt_deg,
                    sense: match o.ellipse.sense {
                        RotationSense::CounterClockwise => "counter-clockwise",
                        RotationSense::Clockwise => "clockwise",
                        RotationSense::Linear => "linear",
                    },
                },
            )
        } else {
            None
        };
        spans.push(SpanEnvelope {
            span: g.route_span + 1,
            phase: model.phase_name(g.phase),
            vertical_peak_to_peak_m: worst_station[1],
            horizontal_peak_to_peak_m: stations.iter().map(|s| s[2]).fold(0.0, f64::max),
            worst_station_m: worst_station[0],
            orbit,
            frequencies,
            stations,
        });
    }

    // Loads.
    let supports: Vec<SupportLoad> = series
        .support_force
        .iter()
        .enumerate()
        .map(|(k, f)| {
            let steady = &f[from..];
            let comp = |d: usize, pick: fn(f64, f64) -> f64, start: f64| {
                steady.iter().map(|v| v[d]).fold(start, pick)
            };
            let stat = model.static_support_force.get(k).copied().unwrap_or([0.0; 3]);
            let peak = steady.iter().map(|v| norm(*v)).fold(0.0, f64::max);
            SupportLoad {
                label: model.support_labels.get(k).cloned().unwrap_or_default(),
                static_n: stat,
                max_n: std::array::from_fn(|d| comp(d, f64::max, f64::NEG_INFINITY)),
                min_n: std::array::from_fn(|d| comp(d, f64::min, f64::INFINITY)),
                peak_magnitude_n: peak,
                dynamic_ratio: peak / norm(stat).max(f64::MIN_POSITIVE),
            }
        })
        .collect();
    let conductors = model
        .spans
        .iter()
        .zip(&series.span_tension)
        .map(|(s, f)| {
            let peak = f[from..].iter().copied().fold(f64::NEG_INFINITY, f64::max);
            let stat = model.static_axial_force[s.elements.0..s.elements.1]
                .iter()
                .copied()
                .fold(f64::NEG_INFINITY, f64::max);
            ConductorTension {
                span: s.route_span + 1,
                phase: model.phase_name(s.phase),
                subconductor: s.subconductor + 1,
                static_n: stat,
                peak_n: peak,
                share_of_rated: peak / s.rated_strength.max(f64::MIN_POSITIVE),
            }
        })
        .collect();
    let strings = model
        .strings
        .iter()
        .zip(&series.string_tension)
        .map(|(s, f)| StringTension {
            tower: model.towers.get(s.tower).map_or_else(|| s.tower.to_string(), |t| t.0.clone()),
            phase: model.phase_name(Some(s.phase)),
            static_n: s
                .elements
                .iter()
                .map(|&e| model.static_axial_force[e])
                .fold(f64::NEG_INFINITY, f64::max),
            peak_n: f[from..].iter().copied().fold(f64::NEG_INFINITY, f64::max),
            min_n: f[from..].iter().copied().fold(f64::INFINITY, f64::min),
        })
        .collect();

    // Fatigue of the attachments.
    let mut fatigue = Vec::new();
    let mut clamp_fatigue = Vec::new();
    for c in &post.fatigue {
        let end = if c.limit_below_last { EndBehaviour::Limit } else { EndBehaviour::Extrapolate };
        // Stress curves are typed in MPa.
        let scale = match c.applies_to {
            FatigueQuantity::AttachmentTension => 1.0,
            FatigueQuantity::ClampBendingStress => 1e6,
        };
        let points: Vec<(f64, f64)> = c.points.iter().map(|&(n, s)| (n, s * scale)).collect();
        let curve = SnCurve::new(&points, end)
            .map_err(|e| ReportError::Analysis(format!("post.fatigue curve `{}`: {e}", c.name)))?;
        match c.applies_to {
            FatigueQuantity::ClampBendingStress => {
                let cs = &series.clamps;
                let mut stress = Vec::with_capacity(t.len().saturating_sub(from));
                for (clamp, rot) in cs.clamps.iter().zip(&cs.rotation) {
                    let Some(bending) = conductor_bending(post, clamp.phase)? else { continue };
                    for (plane, name) in [(0, "vertical"), (1, "horizontal")] {
                        stress.clear();
                        stress.extend(
                            rot[from..]
                                .iter()
                                .map(|r| bending.stress_from_clamp_rotation(clamp.static_tension, r[plane])),
                        );
                        let cycles =
                            rainflow(&stress).map_err(|e| ReportError::Analysis(format!("rainflow: {e}")))?;
                        let damage = miner_damage(&cycles, &curve, |c| c.range / 2.0);
                        let hours = steady_duration / 3600.0;
                        clamp_fatigue.push(ClampFatigueResult {
                            curve: c.name.clone(),
                            tower: model
                                .towers
                                .get(clamp.tower)
                                .map_or_else(|| clamp.tower.to_string(), |t| t.0.clone()),
                            phase: model.phase_name(Some(clamp.phase)),
                            subconductor: clamp.subconductor + 1,
                            plane: name,
                            static_tension_n: clamp.static_tension,
                            max_range_mpa: cycles.iter().map(|c| c.range).fold(0.0, f64::max) / 1e6,
                            max_rotation_rad: rot[from..].iter().map(|r| r[plane].abs()).fold(0.0, f64::max),
                            cycles: cycles.iter().map(|c| c.count).sum(),
                            damage_per_hour: if hours > 0.0 { damage / hours } else { 0.0 },
                            hours_to_failure: hours_to_failure(damage, steady_duration),
                        });
                    }
                }
            }
            FatigueQuantity::AttachmentTension => {
                for (k, f) in series.support_force.iter().enumerate() {
                    let magnitude: Vec<f64> = f[from..].iter().map(|v| norm(*v)).collect();
                    let cycles =
                        rainflow(&magnitude).map_err(|e| ReportError::Analysis(format!("rainflow: {e}")))?;
                    let damage = miner_damage(&cycles, &curve, |c| c.range);
                    let hours = steady_duration / 3600.0;
                    fatigue.push(FatigueResult {
                        curve: c.name.clone(),
                        support: model.support_labels.get(k).cloned().unwrap_or_default(),
                        cycles: cycles.iter().map(|c| c.count).sum(),
                        max_range_n: cycles.iter().map(|c| c.range).fold(0.0, f64::max),
                        damage_per_hour: if hours > 0.0 { damage / hours } else { 0.0 },
                        hours_to_failure: hours_to_failure(damage, steady_duration),
                    });
                }
            }
        }
    }

    // Projection on the linear modes.
    let (modes, modes_captured_share) = match &series.modal {
        None => (Vec::new(), None),
        Some(ms) => {
            let steady = ms.norm2.len().saturating_sub(from).max(1) as f64;
            let total: f64 = ms.norm2[from.min(ms.norm2.len())..].iter().sum::<f64>() / steady;
            let list: Vec<ModeParticipation> =
                ms.q.iter()
                    .enumerate()
                    .map(|(k, q)| {
                        let q = &q[from.min(q.len())..];
                        let mean_square = q.iter().map(|x| x * x).sum::<f64>() / steady;
                        let peak = q.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
                        ModeParticipation {
                            mode: k + 1,
                            frequency_hz: ms.frequency_hz[k],
                            label: ms.labels[k].clone(),
                            rms_coordinate: mean_square.sqrt(),
                            peak_coordinate: peak,
                            peak_displacement_m: peak * ms.shape_peak[k],
                            share: if total > 0.0 { mean_square / total } else { 0.0 },
                        }
                    })
                    .collect();
            let captured = list.iter().map(|m| m.share).sum();
            (list, Some(captured))
        }
    };

    Ok(Report {
        caution: CAUTION,
        results_file,
        complete,
        records: t.len(),
        duration_s: t.last().copied().unwrap_or(0.0) - t.first().copied().unwrap_or(0.0),
        steady_from_s: t.get(from).copied().unwrap_or(0.0),
        steady_from: how,
        clearance: ClearanceReport {
            required_phase_to_phase_m: post.phase_to_phase,
            required_phase_to_ground_m: post.phase_to_ground,
            pairs,
            ground,
        },
        spans,
        supports,
        conductors,
        strings,
        fatigue,
        clamp_fatigue,
        modes,
        modes_captured_share,
    })
}
