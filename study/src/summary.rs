//! `case.json`: what one case answers, drawn from its `glaze post` report
//! and its run. Written last in the case folder, so its presence marks the
//! case complete; `glaze compare` reads nothing else of a case.

use glaze_report::Report;
use serde::{Deserialize, Serialize};

/// Format name of `case.json`.
pub const CASE_FORMAT: &str = "glaze-case-summary";

/// The answers of one case. Values over the whole section: the worst span,
/// pair or support.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CaseSummary {
    /// Always [`CASE_FORMAT`].
    pub format: String,
    /// Case identifier.
    pub id: String,
    /// Layout name.
    pub layout: String,
    /// Ice case name.
    pub ice: String,
    /// Mean wind speed at the reference height, m/s.
    pub wind_speed_m_s: f64,
    /// Wind direction, degrees from +X.
    pub wind_direction_deg: f64,
    /// FNV-1a hash of the case's input text (a changed study reruns the case).
    pub input_hash: String,
    /// Simulated time, s.
    pub duration_s: f64,
    /// Start of the steady part the envelopes use, s, and how it was chosen.
    pub steady_from_s: f64,
    /// `given`, `settled` or `not settled`.
    pub steady_from: String,
    /// Largest vertical peak-to-peak motion of any span, m.
    pub max_vertical_peak_to_peak_m: f64,
    /// Where: `span K phase P`.
    pub max_vertical_at: String,
    /// Largest horizontal peak-to-peak motion of any span, m.
    pub max_horizontal_peak_to_peak_m: f64,
    /// Least distance between two wires of different phases over the run, m.
    pub min_phase_distance_m: Option<f64>,
    /// Which pair (`A-B`).
    pub min_phase_distance_pair: Option<String>,
    /// Least margin to the required phase-to-phase clearance, m (negative: inside it).
    pub phase_margin_m: Option<f64>,
    /// Least height of any wire above the ground profile, m.
    pub min_ground_clearance_m: Option<f64>,
    /// Least margin to the required phase-to-ground clearance, m.
    pub ground_margin_m: Option<f64>,
    /// Largest conductor tension over the run as a share of rated strength.
    pub peak_tension_share_of_rated: f64,
    /// Largest ratio of a support's peak force magnitude to its static value.
    pub peak_support_ratio: f64,
    /// Largest Miner damage per hour over all S–N curves and locations (none without curves).
    pub max_damage_per_hour: Option<f64>,
    /// Where: `curve at location`.
    pub max_damage_at: Option<String>,
    /// Largest energy-balance error of the run, relative to the largest energy term.
    pub energy_balance_error: f64,
    /// Integration steps.
    pub steps: usize,
}

/// FNV-1a, 64 bit (Fowler, Noll and Vo), as 16 hex digits: a fingerprint
/// of a case input, not a security hash.
pub fn fnv1a(text: &str) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

fn min_opt(a: Option<f64>, b: f64) -> Option<f64> {
    Some(a.map_or(b, |a| a.min(b)))
}

impl CaseSummary {
    /// The summary of `case` from its report and run figures.
    pub fn from_report(case: &crate::Case, report: &Report, energy_balance_error: f64, steps: usize) -> Self {
        let mut s = CaseSummary {
            format: CASE_FORMAT.into(),
            id: case.id.clone(),
            layout: case.layout.clone(),
            ice: case.ice.clone(),
            wind_speed_m_s: case.wind_speed,
            wind_direction_deg: case.wind_direction,
            input_hash: fnv1a(&case.input),
            duration_s: report.duration_s,
            steady_from_s: report.steady_from_s,
            steady_from: report.steady_from.to_string(),
            max_vertical_peak_to_peak_m: 0.0,
            max_vertical_at: String::new(),
            max_horizontal_peak_to_peak_m: 0.0,
            min_phase_distance_m: None,
            min_phase_distance_pair: None,
            phase_margin_m: None,
            min_ground_clearance_m: None,
            ground_margin_m: None,
            peak_tension_share_of_rated: 0.0,
            peak_support_ratio: 0.0,
            max_damage_per_hour: None,
            max_damage_at: None,
            energy_balance_error,
            steps,
        };
        for e in &report.spans {
            if e.vertical_peak_to_peak_m > s.max_vertical_peak_to_peak_m || s.max_vertical_at.is_empty() {
                s.max_vertical_peak_to_peak_m = e.vertical_peak_to_peak_m;
                s.max_vertical_at = if e.phase.is_empty() {
                    format!("span {}", e.span)
                } else {
                    format!("span {} phase {}", e.span, e.phase)
                };
            }
            s.max_horizontal_peak_to_peak_m =
                s.max_horizontal_peak_to_peak_m.max(e.horizontal_peak_to_peak_m);
        }
        for p in &report.clearance.pairs {
            if s.min_phase_distance_m.is_none_or(|d| p.min_distance_m < d) {
                s.min_phase_distance_m = Some(p.min_distance_m);
                s.min_phase_distance_pair = Some(format!("{}-{}", p.phases[0], p.phases[1]));
            }
            if let Some(m) = p.margin_m {
                s.phase_margin_m = min_opt(s.phase_margin_m, m);
            }
        }
        for g in &report.clearance.ground {
            s.min_ground_clearance_m = min_opt(s.min_ground_clearance_m, g.min_clearance_m);
            if let Some(m) = g.margin_m {
                s.ground_margin_m = min_opt(s.ground_margin_m, m);
            }
        }
        for c in &report.conductors {
            s.peak_tension_share_of_rated = s.peak_tension_share_of_rated.max(c.share_of_rated);
        }
        for l in &report.supports {
            if l.dynamic_ratio.is_finite() {
                s.peak_support_ratio = s.peak_support_ratio.max(l.dynamic_ratio);
            }
        }
        for f in &report.fatigue {
            if s.max_damage_per_hour.is_none_or(|d| f.damage_per_hour > d) {
                s.max_damage_per_hour = Some(f.damage_per_hour);
                s.max_damage_at = Some(format!("{} at {}", f.curve, f.support));
            }
        }
        s
    }
}

#[cfg(test)]
mod tests {
    use super::fnv1a;

    /// Test vectors of the FNV-1a 64-bit hash from its authors' reference
    /// page (isthe.com/chongo/tech/comp/fnv, from memory).
    #[test]
    fn fnv1a_reference_vectors() {
        assert_eq!(fnv1a(""), "cbf29ce484222325");
        assert_eq!(fnv1a("a"), "af63dc4c8601ec8c");
        assert_eq!(fnv1a("foobar"), "85944171f73967e8");
    }
}
