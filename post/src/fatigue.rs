//! S–N curves and Palmgren–Miner damage.
//!
//! An [`SnCurve`] is a list of points (N cycles to failure, stress S) joined
//! by straight lines in log N – log S, i.e. `N = N_i (S/S_i)^(−m_i)` on each
//! segment with the slope `m_i = −Δlog N/Δlog S`. Damage is the linear sum
//! `D = Σ n_j/N_j` (Miner, M.A., 1945, "Cumulative damage in fatigue",
//! J. Appl. Mech. 12, A159–A164; Palmgren 1924); failure at D = 1.
//!
//! Stresses are in Pa; whether they are ranges or amplitudes is the
//! curve's convention, and the caller's closure in [`miner_damage`] must
//! match it.

use crate::rainflow::Cycle;
use thiserror::Error;

/// What the curve does below the stress of its last point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EndBehaviour {
    /// The last point's stress is a fatigue limit: infinite life below it.
    Limit,
    /// The last segment's slope goes on to zero stress.
    Extrapolate,
}

/// An S–N curve that is not valid.
#[derive(Debug, Clone, Copy, PartialEq, Error)]
pub enum SnCurveError {
    /// Fewer than two points: no slope.
    #[error("S–N curve: {count} point(s) given, at least 2 are needed")]
    TooFewPoints {
        /// Number of points given.
        count: usize,
    },
    /// A cycle number or stress that is not a positive finite number.
    #[error("S–N curve point {point}: cycles {cycles} and stress {stress} Pa must be positive and finite")]
    NotPositive {
        /// 1-based point number.
        point: usize,
        /// Cycles of the point.
        cycles: f64,
        /// Stress of the point, in Pa.
        stress: f64,
    },
    /// N not strictly increasing.
    #[error("S–N curve point {point}: {cycles:e} cycles is not above point {}'s {previous:e}", .point - 1)]
    CyclesNotIncreasing {
        /// 1-based point number.
        point: usize,
        /// Cycles of the point.
        cycles: f64,
        /// Cycles of the point before.
        previous: f64,
    },
    /// S not strictly decreasing.
    #[error("S–N curve point {point}: stress {} MPa is not below point {}'s {} MPa", .stress / 1e6, .point - 1, .previous / 1e6)]
    StressNotDecreasing {
        /// 1-based point number.
        point: usize,
        /// Stress of the point, in Pa.
        stress: f64,
        /// Stress of the point before, in Pa.
        previous: f64,
    },
}

/// A piecewise log–log linear S–N curve (stress in Pa, life in cycles).
#[derive(Debug, Clone, PartialEq)]
pub struct SnCurve {
    points: Vec<(f64, f64)>,
    log_n: Vec<f64>,
    log_s: Vec<f64>,
    end: EndBehaviour,
}

impl SnCurve {
    /// A curve through `points` = (cycles N, stress S in Pa), N strictly
    /// increasing and S strictly decreasing; above the first point's stress
    /// the first slope goes on, below the last one `end` decides.
    pub fn new(points: &[(f64, f64)], end: EndBehaviour) -> Result<Self, SnCurveError> {
        if points.len() < 2 {
            return Err(SnCurveError::TooFewPoints { count: points.len() });
        }
        for (i, &(cycles, stress)) in points.iter().enumerate() {
            let point = i + 1;
            let positive = |x: f64| x.is_finite() && x > 0.0;
            if !positive(cycles) || !positive(stress) {
                return Err(SnCurveError::NotPositive { point, cycles, stress });
            }
            if i > 0 {
                let (n0, s0) = points[i - 1];
                if cycles <= n0 {
                    return Err(SnCurveError::CyclesNotIncreasing { point, cycles, previous: n0 });
                }
                if stress >= s0 {
                    return Err(SnCurveError::StressNotDecreasing { point, stress, previous: s0 });
                }
            }
        }
        Ok(Self {
            points: points.to_vec(),
            log_n: points.iter().map(|p| p.0.log10()).collect(),
            log_s: points.iter().map(|p| p.1.log10()).collect(),
            end,
        })
    }

    /// The points (cycles, stress in Pa) the curve was built from.
    pub fn points(&self) -> &[(f64, f64)] {
        &self.points
    }

    /// The behaviour below the last point's stress.
    pub fn end_behaviour(&self) -> EndBehaviour {
        self.end
    }

    /// Slope `m = −Δlog N/Δlog S` of segment `i` (0-based).
    fn slope(&self, i: usize) -> f64 {
        -(self.log_n[i + 1] - self.log_n[i]) / (self.log_s[i + 1] - self.log_s[i])
    }

    /// Cycles to failure at stress `s` (Pa): `f64::INFINITY` for `s ≤ 0`
    /// and below a fatigue limit, 0 for an infinite stress, NaN for NaN.
    pub fn cycles_to_failure(&self, s: f64) -> f64 {
        if s.is_nan() {
            return f64::NAN;
        }
        if s <= 0.0 {
            return f64::INFINITY;
        }
        let last = self.points.len() - 1;
        if s < self.points[last].1 && self.end == EndBehaviour::Limit {
            return f64::INFINITY;
        }
        // Segment i joins points i and i + 1 (stresses decrease with i):
        // the first with s ≥ S_{i+1}, or the last one below the curve.
        let i = (0..last).find(|&i| s >= self.points[i + 1].1).unwrap_or(last - 1);
        let log_n = self.log_n[i] - self.slope(i) * (s.log10() - self.log_s[i]);
        10f64.powf(log_n)
    }
}

/// Palmgren–Miner damage `D = Σ count/N(S)` of rainflow `cycles` on
/// `curve` (Miner 1945, J. Appl. Mech. 12), with `S = to_stress(cycle)` in
/// Pa: the closure picks the range (`|c| c.range`) or the amplitude
/// (`|c| c.range / 2`) to match the curve, converts units, and applies any
/// mean-stress correction; none is applied here. Dimensionless; NaN if a
/// stress is NaN.
pub fn miner_damage(cycles: &[Cycle], curve: &SnCurve, to_stress: impl Fn(&Cycle) -> f64) -> f64 {
    cycles.iter().map(|c| c.count / curve.cycles_to_failure(to_stress(c))).sum()
}

/// Life in hours when `damage` accrues in `duration_s` seconds of
/// loading: `duration_s / damage / 3600`. Infinite for zero damage; NaN for
/// a negative or non-finite damage or duration.
pub fn hours_to_failure(damage: f64, duration_s: f64) -> f64 {
    if !(damage.is_finite() && damage >= 0.0 && duration_s.is_finite() && duration_s >= 0.0) {
        return f64::NAN;
    }
    if damage == 0.0 {
        return f64::INFINITY;
    }
    duration_s / damage / 3600.0
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rainflow::rainflow;
    use approx::assert_relative_eq;

    const MPA: f64 = 1e6;
    /// Relative tolerance of the log10/powf round trip (a few ulp of
    /// log N ≈ 7 amplified by ln 10 · log N): 1e-13.
    const TOL: f64 = 1e-13;

    /// Invented two-point curve with slope m = 3 (hand calculation: halving
    /// S multiplies N by 2³ = 8): (2e6, 100 MPa), (16e6, 50 MPa).
    fn m3(end: EndBehaviour) -> SnCurve {
        SnCurve::new(&[(2e6, 100.0 * MPA), (16e6, 50.0 * MPA)], end).unwrap()
    }

    fn cycles(n: usize, range: f64, count: f64) -> Vec<Cycle> {
        vec![Cycle { range, mean: 0.0, count, start: 0, end: 0 }; n]
    }

    #[test]
    fn two_point_curve_at_hand_computed_points() {
        // Hand calculation, N = 2e6 (100 MPa / S)³.
        let c = m3(EndBehaviour::Limit);
        assert_relative_eq!(c.cycles_to_failure(100.0 * MPA), 2e6, max_relative = TOL);
        assert_relative_eq!(c.cycles_to_failure(50.0 * MPA), 16e6, max_relative = TOL);
        // Above the first point, the first slope: 2e6 / 8.
        assert_relative_eq!(c.cycles_to_failure(200.0 * MPA), 2.5e5, max_relative = TOL);
        // 100/√2 MPa: 2e6 · 2^1.5 = 5 656 854.249…
        let s = 100.0 * MPA / 2f64.sqrt();
        assert_relative_eq!(c.cycles_to_failure(s), 5_656_854.249_492_38, max_relative = TOL);
        // 60 MPa: 2e6 · (5/3)³ = 2e6 · 125/27 = 9 259 259.259…
        assert_relative_eq!(c.cycles_to_failure(60.0 * MPA), 2.5e8 / 27.0, max_relative = TOL);
        // Below the limit: infinite life; with extrapolation 16e6 · 8.
        assert_eq!(c.cycles_to_failure(25.0 * MPA), f64::INFINITY);
        let e = m3(EndBehaviour::Extrapolate);
        assert_relative_eq!(e.cycles_to_failure(25.0 * MPA), 1.28e8, max_relative = TOL);
        assert_eq!(e.cycles_to_failure(0.0), f64::INFINITY);
        assert!(e.cycles_to_failure(f64::NAN).is_nan());
    }

    #[test]
    fn kinked_curve_uses_each_segment_slope() {
        // Invented curve (hand calculation): m = 3 from (1e5, 200 MPa) to
        // (8e5, 100 MPa) (8 = 2³), m = 5 from there to (25.6e6, 50 MPa)
        // (32 = 2⁵).
        let pts = [(1e5, 200.0 * MPA), (8e5, 100.0 * MPA), (25.6e6, 50.0 * MPA)];
        let c = SnCurve::new(&pts, EndBehaviour::Extrapolate).unwrap();
        let r2 = 2f64.sqrt();
        // 400 MPa, first slope: 1e5 / 8.
        assert_relative_eq!(c.cycles_to_failure(400.0 * MPA), 12_500.0, max_relative = TOL);
        // 100√2 MPa, first segment: 8e5 / (√2)³ = 8e5/2^1.5 = 282 842.712…
        assert_relative_eq!(c.cycles_to_failure(100.0 * MPA * r2), 8e5 / 2f64.powf(1.5), max_relative = TOL);
        // 100/√2 MPa, second segment: 8e5 · (√2)⁵ = 8e5 · 2^2.5 = 4 525 483.4…
        assert_relative_eq!(c.cycles_to_failure(100.0 * MPA / r2), 8e5 * 2f64.powf(2.5), max_relative = TOL);
        // 25 MPa, last slope extrapolated: 25.6e6 · 32.
        assert_relative_eq!(c.cycles_to_failure(25.0 * MPA), 8.192e8, max_relative = TOL);
    }

    #[test]
    fn miner_sum_of_a_block_loading() {
        // Hand calculation on the m = 3 curve with a limit at 50 MPa:
        //   10 cycles of 200 MPa: 10 / 2.5e5 = 4.0e-5
        //   100 cycles of 100 MPa: 100 / 2e6 = 5.0e-5
        //   400 cycles of 50 MPa: 400 / 16e6 = 2.5e-5
        //   1000 cycles of 25 MPa: below the limit, 0
        //   2 half cycles of 200 MPa: 1 / 2.5e5 = 4.0e-6
        //   D = 1.19e-4.
        let mut block = cycles(10, 200.0 * MPA, 1.0);
        block.extend(cycles(100, 100.0 * MPA, 1.0));
        block.extend(cycles(400, 50.0 * MPA, 1.0));
        block.extend(cycles(1000, 25.0 * MPA, 1.0));
        block.extend(cycles(2, 200.0 * MPA, 0.5));
        let d = miner_damage(&block, &m3(EndBehaviour::Limit), |c| c.range);
        assert_relative_eq!(d, 1.19e-4, max_relative = 1e-12);
        // Extrapolated: + 1000 / 1.28e8 = 7.8125e-6 → 1.268125e-4.
        let d_ext = miner_damage(&block, &m3(EndBehaviour::Extrapolate), |c| c.range);
        assert_relative_eq!(d_ext, 1.268125e-4, max_relative = 1e-12);
        // The same curve read as amplitudes, with ranges doubled: same damage.
        let doubled: Vec<Cycle> = block.iter().map(|c| Cycle { range: 2.0 * c.range, ..*c }).collect();
        let d_amp = miner_damage(&doubled, &m3(EndBehaviour::Limit), |c| c.range / 2.0);
        assert_relative_eq!(d_amp, d, max_relative = 1e-12);
        // That block every 600 s: 600 / 1.19e-4 / 3600 = 1400.560 h.
        assert_relative_eq!(hours_to_failure(d, 600.0), 600.0 / 1.19e-4 / 3600.0, max_relative = 1e-12);
        assert_relative_eq!(hours_to_failure(d, 600.0), 1400.560224, max_relative = 1e-9);
    }

    #[test]
    fn miner_sum_of_the_astm_rainflow_example() {
        // ASTM E1049-85 §5.4.4 example (Table 4, from memory) in MPa:
        // ranges 9 (½), 8 (1), 6 (½), 4 (1½), 3 (½). Curve N = 1e6 (10 MPa/S)³
        // (invented; through (1e6, 10 MPa) and (8e6, 5 MPa), extrapolated).
        // Hand calculation: D = Σ n S³ / (1e6 · 10³)
        //   = (0.5·729 + 1·512 + 0.5·216 + 1.5·64 + 0.5·27) / 1e9 = 1094 / 1e9.
        let series: Vec<f64> =
            [-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0].iter().map(|x| x * MPA).collect();
        let curve = SnCurve::new(&[(1e6, 10.0 * MPA), (8e6, 5.0 * MPA)], EndBehaviour::Extrapolate).unwrap();
        let d = miner_damage(&rainflow(&series).unwrap(), &curve, |c| c.range);
        assert_relative_eq!(d, 1.094e-6, max_relative = 1e-12);
    }

    #[test]
    fn bad_curves_are_refused_with_the_point_named() {
        let e = SnCurve::new(&[(1e5, 20.0 * MPA), (1e6, 12.0 * MPA), (1e7, 12.0 * MPA)], EndBehaviour::Limit)
            .unwrap_err();
        assert_eq!(e.to_string(), "S–N curve point 3: stress 12 MPa is not below point 2's 12 MPa");
        let e = SnCurve::new(&[(1e6, 20.0 * MPA), (1e5, 12.0 * MPA)], EndBehaviour::Limit).unwrap_err();
        assert_eq!(e.to_string(), "S–N curve point 2: 1e5 cycles is not above point 1's 1e6");
        let e = SnCurve::new(&[(1e6, 20.0 * MPA)], EndBehaviour::Limit).unwrap_err();
        assert_eq!(e, SnCurveError::TooFewPoints { count: 1 });
        let e = SnCurve::new(&[(1e5, 20.0 * MPA), (f64::NAN, 12.0 * MPA)], EndBehaviour::Limit).unwrap_err();
        assert!(matches!(e, SnCurveError::NotPositive { point: 2, .. }), "{e}");
        let e = SnCurve::new(&[(1e5, -20.0 * MPA), (1e6, 12.0 * MPA)], EndBehaviour::Limit).unwrap_err();
        assert!(matches!(e, SnCurveError::NotPositive { point: 1, .. }), "{e}");
    }

    #[test]
    fn hours_to_failure_edge_cases() {
        assert_eq!(hours_to_failure(0.0, 3600.0), f64::INFINITY);
        // Damage 0.5 in one hour: two hours (hand calculation).
        assert_eq!(hours_to_failure(0.5, 3600.0), 2.0);
        assert!(hours_to_failure(-1.0, 3600.0).is_nan());
        assert!(hours_to_failure(f64::NAN, 3600.0).is_nan());
    }
}
