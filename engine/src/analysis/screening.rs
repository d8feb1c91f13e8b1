//! Galloping-onset screening: for each mean wind speed of the study, the
//! static state in that wind, the structural modes about it, and the
//! quasi-steady aerodynamic damping of each mode.
//!
//! Modal aerodynamic damping ratio of a mass-normalised mode φ with circular
//! frequency ω: `ξ_a = φᵀ C_a φ / (2ω)`, where `C_a = −∂f_aero/∂[u̇, ω]` is
//! the aerodynamic damping matrix of the whole section at its static state
//! ([`crate::aero_loads`]). For a purely vertical mode of a uniform span
//! this is Den Hartog's ratio `ρ U D (dC_L/dα + C_D) / (4 m ω)` (Den Hartog
//! 1932, Trans. AIEE 51; Blevins, *Flow-Induced Vibration*, 1990, §4.2)
//! with `dC_L/dα + C_D` averaged over the mode with the weight of the
//! mode's kinetic energy at each section, evaluated at each section's own
//! angle of attack; horizontal, coupled and torsional motion (through the
//! moment table and the twist-rate term) enter the same expression.
//!
//! At fixed angles of attack `ξ_a` grows in proportion to U, so each state
//! gives a Den Hartog onset speed `U_DH = −ξ_s U / ξ_a` (when `ξ_a < 0`).
//! Because the angles change with U (swing and twist), the sweep also
//! reports the onset speed where the total damping `ξ_s + ξ_a(U)` first
//! crosses zero, interpolated linearly between the study's speeds.
//! Modes are followed from speed to speed by the modal assurance criterion
//! in the mass inner product.

use super::modal::{describe, node_frames, Linearisation, ModalSettings};
use super::static_stage::run_static;
use crate::aero_loads::{element_jacobian, Derivative, Flow, NodeVelocity};
use crate::error::{GlazeError, InputErrorKind};
use crate::input::Locator;
use crate::model::{self, DOF_PER_NODE};
use crate::registry::ElementRegistry;
use crate::spec::SectionSpec;
use glaze_elements::NodeState;

/// One mode at one wind speed.
#[derive(Clone, Debug, PartialEq)]
pub struct ModeAtSpeed {
    /// Natural frequency, in Hz.
    pub frequency_hz: f64,
    /// Description of the mode at this speed.
    pub label: String,
    /// Aerodynamic damping ratio ξ_a (negative: the wind feeds the mode).
    pub aero_damping: f64,
    /// Den Hartog onset speed from this state, in m/s (`None` when ξ_a ≥ 0).
    pub den_hartog_speed: Option<f64>,
    /// Modal assurance criterion against the same mode at the first speed.
    pub mac: f64,
}

/// Screening of one mode over the sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct ModeScreening {
    /// Mode number at the first speed (1-based, by frequency).
    pub mode: usize,
    /// The mode at each speed of the sweep.
    pub at_speed: Vec<ModeAtSpeed>,
    /// Lowest speed of the sweep at which ξ_s + ξ_a < 0, interpolated, in m/s.
    pub onset_speed: Option<f64>,
    /// Den Hartog onset speed from the first state in which ξ_a < 0, in m/s.
    pub den_hartog_speed: Option<f64>,
}

/// Result of a screening sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct ScreeningResult {
    /// Mean wind speeds at the reference height, in m/s.
    pub wind_speeds: Vec<f64>,
    /// Structural damping ratio used.
    pub structural_damping: f64,
    /// Per mode.
    pub modes: Vec<ModeScreening>,
    /// The first speed of the sweep with no static equilibrium, and why;
    /// the sweep stops there (`wind_speeds` holds the speeds screened).
    pub stopped_at: Option<(f64, String)>,
}

impl ScreeningResult {
    /// The mode with the lowest onset speed (sweep crossing, else Den
    /// Hartog estimate) and that speed, in m/s.
    pub fn critical(&self) -> Option<(usize, f64)> {
        self.modes
            .iter()
            .enumerate()
            .filter_map(|(i, m)| m.onset_speed.or(m.den_hartog_speed).map(|u| (i, u)))
            .min_by(|a, b| a.1.total_cmp(&b.1))
    }
}

/// Modal data kept per speed for tracking.
struct SpeedModes {
    omega: Vec<f64>,
    vectors: Vec<Vec<f64>>,
    mass: Vec<f64>,
    pattern: glaze_solvers::SparsityPattern,
    labels: Vec<String>,
    frequency_hz: Vec<f64>,
    aero: Vec<f64>,
}

/// Runs the screening of `spec` (which must have `[screening]` and `[load_case.wind]`).
pub fn run_screening(spec: &SectionSpec, registry: &ElementRegistry) -> Result<ScreeningResult, GlazeError> {
    let loc = Locator::new(&spec.file, &spec.source);
    let screening = spec.screening.as_ref().ok_or_else(|| {
        loc.error(
            InputErrorKind::MissingKey,
            "screening",
            "screening needs a [screening] table: wind_speeds = [...], structural_damping = 0.005 (say)",
        )
    })?;
    let base_wind = spec.load_case.wind.ok_or_else(|| {
        loc.error(
            InputErrorKind::MissingKey,
            "load_case.wind",
            "screening needs [load_case.wind] for the wind direction and profile (its speed is replaced by each screening speed)",
        )
    })?;
    let mut per_speed = Vec::new();
    let mut stopped_at = None;
    for &u in &screening.wind_speeds {
        let mut case = spec.clone();
        let mut wind = base_wind;
        wind.wind.speed = u;
        case.load_case.wind = Some(wind);
        let model = model::build(&case, registry)?;
        let state = match run_static(&case, &model) {
            Ok(state) => state,
            // A speed with no static equilibrium (a limit point of the mean
            // wind, e.g. the ice's moment twisting the conductor past a
            // static limit) ends the sweep; the speeds below it stand.
            Err(e) if !per_speed.is_empty() => {
                tracing::warn!("screening stops at {u} m/s: {e}");
                stopped_at = Some((u, e.to_string()));
                break;
            }
            Err(e) => return Err(e.into()),
        };
        let lin = Linearisation::about(&model, &state.config)?;
        let count = screening.modes.min(lin.mode_capacity());
        let modes = lin.solve(&ModalSettings::new(count))?;
        let described = describe(&model, &lin, &modes, &node_frames(&model, &state.config));
        let omega: Vec<f64> = modes.omega_squared.iter().map(|w| w.max(0.0).sqrt()).collect();
        let aero = modal_aero_damping(&model, &state.config, &lin.equations, &modes.vectors, &omega)
            .map_err(|message| GlazeError::Analysis { message })?;
        per_speed.push(SpeedModes {
            omega,
            vectors: modes.vectors,
            mass: lin.mass.clone(),
            pattern: lin.pattern.clone(),
            labels: described.labels,
            frequency_hz: described.frequency_hz,
            aero,
        });
    }
    let xi_s = screening.structural_damping;
    let first = &per_speed[0];
    let mut result = Vec::new();
    for i in 0..first.omega.len() {
        let mut at_speed = Vec::new();
        for (k, s) in per_speed.iter().enumerate() {
            let (j, mac) = if k == 0 { (i, 1.0) } else { best_match(&first.vectors[i], s) };
            let xi_a = s.aero[j];
            let u = screening.wind_speeds[k];
            at_speed.push(ModeAtSpeed {
                frequency_hz: s.frequency_hz[j],
                label: s.labels[j].clone(),
                aero_damping: xi_a,
                den_hartog_speed: (xi_a < 0.0).then(|| -xi_s * u / xi_a),
                mac,
            });
        }
        let total: Vec<f64> = at_speed.iter().map(|m| xi_s + m.aero_damping).collect();
        let speeds = &screening.wind_speeds[..per_speed.len()];
        let onset_speed = (0..total.len()).find(|&k| total[k] < 0.0).map(|k| {
            if k == 0 {
                speeds[0]
            } else {
                let t = total[k - 1] / (total[k - 1] - total[k]);
                speeds[k - 1] + t * (speeds[k] - speeds[k - 1])
            }
        });
        let den_hartog_speed = at_speed.iter().find_map(|m| m.den_hartog_speed);
        result.push(ModeScreening { mode: i + 1, at_speed, onset_speed, den_hartog_speed });
    }
    Ok(ScreeningResult {
        wind_speeds: screening.wind_speeds[..per_speed.len()].to_vec(),
        structural_damping: xi_s,
        modes: result,
        stopped_at,
    })
}

/// The mode of `s` most like `reference` (mass-weighted MAC) and the MAC.
fn best_match(reference: &[f64], s: &SpeedModes) -> (usize, f64) {
    let mut mv = vec![0.0; reference.len()];
    s.pattern.mul_vec(&s.mass, reference, &mut mv);
    s.vectors
        .iter()
        .enumerate()
        .map(|(j, v)| {
            let dot: f64 = v.iter().zip(&mv).map(|(a, b)| a * b).sum();
            (j, dot * dot)
        })
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .unwrap_or((0, 0.0))
}

/// ξ_a of each mass-normalised mode: φᵀ C_a φ / (2ω), element by element.
pub fn modal_aero_damping(
    model: &model::Model,
    config: &super::Configuration,
    equations: &[Option<usize>],
    vectors: &[Vec<f64>],
    omega: &[f64],
) -> Result<Vec<f64>, String> {
    let mut out = vec![0.0; vectors.len()];
    let Some(wind) = model.wind else { return Ok(out) };
    const M: usize = 2 * DOF_PER_NODE;
    let (mut f, mut jac) = ([0.0; M], vec![0.0; M * M]);
    for (e, element) in model.elements.iter().enumerate() {
        let Some(aero) = &model.aero[e] else { continue };
        let ids = element.nodes();
        let nodes: Vec<NodeState> = ids
            .iter()
            .map(|&n| NodeState { x0: model.nodes[n], x: config.positions[n], rotation: config.rotations[n] })
            .collect();
        element_jacobian(
            aero,
            Flow { wind: &wind, scale: 1.0 },
            &nodes,
            &[NodeVelocity::default(); 2],
            Derivative::Velocity,
            &mut f,
            &mut jac,
        )
        .map_err(|err| format!("aerodynamic damping of element {e}: {err}"))?;
        for (i, phi) in vectors.iter().enumerate() {
            let local: Vec<f64> = (0..M)
                .map(|a| {
                    equations[ids[a / DOF_PER_NODE] * DOF_PER_NODE + a % DOF_PER_NODE].map_or(0.0, |q| phi[q])
                })
                .collect();
            // C_a = −J, so φᵀ C_a φ = −φᵀ J φ.
            let mut quad = 0.0;
            for r in 0..M {
                for c in 0..M {
                    quad -= local[r] * jac[r * M + c] * local[c];
                }
            }
            out[i] += quad;
        }
    }
    for (x, w) in out.iter_mut().zip(omega) {
        *x /= 2.0 * w.max(f64::MIN_POSITIVE);
    }
    Ok(out)
}
