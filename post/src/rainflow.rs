//! Rainflow cycle counting of a load, stress or displacement history.
//!
//! The three-point method of ASTM E1049-85 (reapproved 2017), "Standard
//! Practices for Cycle Counting in Fatigue Analysis", §5.4.4, for a history
//! that is not repeating: with X the most recent range and Y the one before
//! it,
//!
//! 1. read the next reversal (at the end of the data go to 5);
//! 2. with fewer than three points kept, go to 1;
//! 3. if |X| < |Y|, go to 1;
//! 4. if Y contains the starting point S, count Y as one half cycle, discard
//!    its first point and move S to its second point; otherwise count Y as
//!    one cycle and discard both its points; go to 2;
//! 5. count every range left as one half cycle.
//!
//! Ranges and means are in the same unit as the series.

use thiserror::Error;

/// A cycle or half cycle found by [`rainflow`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cycle {
    /// Range |x_start − x_end|, in the same unit as the series.
    pub range: f64,
    /// Mean (x_start + x_end)/2, in the same unit as the series.
    pub mean: f64,
    /// 1.0 for a full cycle, 0.5 for a half cycle.
    pub count: f64,
    /// Index into the input series of the first reversal of the range.
    pub start: usize,
    /// Index into the input series of the second reversal of the range.
    pub end: usize,
}

/// Input that cannot be counted.
#[derive(Debug, Clone, Copy, PartialEq, Error)]
pub enum RainflowError {
    /// A NaN or infinite sample.
    #[error("rainflow: sample {index} of the series is {value}, not a finite number")]
    NonFinite {
        /// Index of the sample in the series.
        index: usize,
        /// The offending value.
        value: f64,
    },
}

fn check_finite(series: &[f64]) -> Result<(), RainflowError> {
    match series.iter().position(|x| !x.is_finite()) {
        Some(index) => Err(RainflowError::NonFinite { index, value: series[index] }),
        None => Ok(()),
    }
}

/// Reversals (index, value): the first point, every point where the
/// direction changes and the last point. Intermediate points and repeated
/// values are dropped; an interior plateau counts once, at its last index.
/// A constant series has the first point only.
fn reversal_points(series: &[f64]) -> Vec<(usize, f64)> {
    let Some(&first) = series.first() else {
        return Vec::new();
    };
    let mut out = vec![(0, first)];
    // Latest distinct value, the last index it holds, and the direction
    // (+1 up, −1 down, 0 not yet known) by which it was reached.
    let (mut last_index, mut last_value, mut direction) = (0usize, first, 0i8);
    for (i, &x) in series.iter().enumerate().skip(1) {
        if x == last_value {
            last_index = i;
            continue;
        }
        let d = if x > last_value { 1 } else { -1 };
        if direction != 0 && d != direction {
            out.push((last_index, last_value));
        }
        direction = d;
        last_index = i;
        last_value = x;
    }
    if direction != 0 {
        out.push((series.len() - 1, last_value));
    }
    out
}

/// Peaks and valleys of `series` (same unit as the series): the first and
/// last points and every point where the direction changes; intermediate
/// points and plateaus are dropped (ASTM E1049-85 §3.1.5–3.1.6, §5.4.4).
///
/// Errors on a NaN or infinite sample.
pub fn reversals(series: &[f64]) -> Result<Vec<f64>, RainflowError> {
    check_finite(series)?;
    Ok(reversal_points(series).into_iter().map(|(_, x)| x).collect())
}

fn cycle(a: (usize, f64), b: (usize, f64), count: f64) -> Cycle {
    Cycle { range: (a.1 - b.1).abs(), mean: 0.5 * (a.1 + b.1), count, start: a.0, end: b.0 }
}

/// Rainflow cycles of `series` by ASTM E1049-85 §5.4.4 (three-point
/// method, history not repeating: the residual ranges are half cycles), in
/// the order they are counted. Ranges and means are in the same unit as the
/// series. An empty, one-point or constant series has no cycles.
///
/// Errors on a NaN or infinite sample.
pub fn rainflow(series: &[f64]) -> Result<Vec<Cycle>, RainflowError> {
    check_finite(series)?;
    let mut cycles = Vec::new();
    // Points not yet discarded; the starting point S is always `stack[0]`.
    let mut stack: Vec<(usize, f64)> = Vec::new();
    for point in reversal_points(series) {
        stack.push(point);
        while stack.len() >= 3 {
            let n = stack.len();
            let x = (stack[n - 1].1 - stack[n - 2].1).abs();
            let y = (stack[n - 2].1 - stack[n - 3].1).abs();
            if x < y {
                break;
            }
            if n == 3 {
                // Y contains S: one half cycle, S moves to Y's second point.
                cycles.push(cycle(stack[0], stack[1], 0.5));
                stack.remove(0);
            } else {
                cycles.push(cycle(stack[n - 3], stack[n - 2], 1.0));
                stack.drain(n - 3..n - 1);
            }
        }
    }
    cycles.extend(stack.windows(2).map(|w| cycle(w[0], w[1], 0.5)));
    Ok(cycles)
}

/// Counts summed over equal ranges: (range, count) pairs by descending
/// range, ranges in the unit of the cycles. Ranges are merged only when
/// exactly equal; bin them beforehand if needed.
pub fn histogram(cycles: &[Cycle]) -> Vec<(f64, f64)> {
    let mut sorted: Vec<(f64, f64)> = cycles.iter().map(|c| (c.range, c.count)).collect();
    sorted.sort_by(|a, b| b.0.total_cmp(&a.0));
    let mut out: Vec<(f64, f64)> = Vec::new();
    for (range, count) in sorted {
        match out.last_mut() {
            Some(last) if last.0 == range => last.1 += count,
            _ => out.push((range, count)),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Load history of the rainflow example of ASTM E1049-85 §5.4.4
    /// (Fig. 6 of the standard; from memory). The same series and counts
    /// are the ASTM example in the test suite of the PyPI package
    /// `rainflow` (tests/test_rainflow.py).
    const ASTM: [f64; 9] = [-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0];

    #[test]
    fn astm_e1049_table_4() {
        // Expected: ASTM E1049-85 Table 4 (from memory), checked by hand
        // with the steps of §5.4.4, points A..I = −2, 1, −3, 5, −1, 3, −4, 4, −2:
        //  A B C: Y = |1+2| = 3, X = |−3−1| = 4 ≥ Y, Y holds S → ½ of 3 (A–B), S = B.
        //  B C D: Y = 4, X = 8 ≥ Y, Y holds S → ½ of 4 (B–C), S = C.
        //  C D E: Y = 8, X = 6 < Y. D E F: Y = 6, X = 4 < Y.
        //  E F G: Y = 4, X = 7 ≥ Y, S not in Y → 1 of 4 (E–F), drop E, F.
        //  C D G: Y = 8, X = 9 ≥ Y, Y holds S → ½ of 8 (C–D), S = D.
        //  D G H: Y = 9, X = 8 < Y. G H I: Y = 8, X = 6 < Y. End of data.
        //  Residue D–G, G–H, H–I: ½ of 9, ½ of 8, ½ of 6.
        // Totals: 9 → 0.5, 8 → 1.0, 6 → 0.5, 4 → 1.5, 3 → 0.5 (and 10, 7,
        // 5, 2, 1 → 0, as the table lists).
        let cycles = rainflow(&ASTM).unwrap();
        let expected = [(9.0, 0.5), (8.0, 1.0), (6.0, 0.5), (4.0, 1.5), (3.0, 0.5)];
        assert_eq!(histogram(&cycles), expected);

        // The cycles in the order of the hand trace above (indices of A..I = 0..8).
        let trace: Vec<_> = cycles.iter().map(|c| (c.range, c.count, c.start, c.end)).collect();
        assert_eq!(
            trace,
            [
                (3.0, 0.5, 0, 1),
                (4.0, 0.5, 1, 2),
                (4.0, 1.0, 4, 5),
                (8.0, 0.5, 2, 3),
                (9.0, 0.5, 3, 6),
                (8.0, 0.5, 6, 7),
                (6.0, 0.5, 7, 8),
            ]
        );
        // Means: E–F is (−1 + 3)/2 = 1 (hand calculation).
        assert_eq!(cycles[2].mean, 1.0);
    }

    #[test]
    fn reversals_drop_plateaus_and_intermediate_points() {
        // Hand-made series (hand calculation): 0 → 1 → 2 (up), plateau 2, 2,
        // down to −1, up to 0.5, plateau at the end.
        let s = [0.0, 1.0, 2.0, 2.0, 2.0, 0.0, -1.0, 0.5, 0.5];
        assert_eq!(reversals(&s).unwrap(), [0.0, 2.0, -1.0, 0.5]);
        // The plateau is reported at its last index (4); the end at index 8.
        let idx: Vec<usize> = reversal_points(&s).iter().map(|p| p.0).collect();
        assert_eq!(idx, [0, 4, 6, 8]);
        // A series doubled point by point (each value twice) has the same
        // rainflow histogram as the ASTM example (ASTM E1049-85 Table 4, from memory).
        let doubled: Vec<f64> = ASTM.iter().flat_map(|&x| [x, x]).collect();
        assert_eq!(histogram(&rainflow(&doubled).unwrap()), histogram(&rainflow(&ASTM).unwrap()));
    }

    #[test]
    fn short_and_constant_series_have_no_cycles() {
        assert!(rainflow(&[]).unwrap().is_empty());
        assert!(rainflow(&[3.0]).unwrap().is_empty());
        assert!(rainflow(&[3.0, 3.0, 3.0]).unwrap().is_empty());
        assert_eq!(reversals(&[3.0, 3.0]).unwrap(), [3.0]);
        // Two points: one half cycle of range 2 (hand calculation).
        let c = rainflow(&[1.0, -1.0]).unwrap();
        assert_eq!(c, [Cycle { range: 2.0, mean: 0.0, count: 0.5, start: 0, end: 1 }]);
    }

    #[test]
    fn nan_and_infinity_are_errors() {
        let e = rainflow(&[0.0, 1.0, f64::NAN, 2.0]).unwrap_err();
        assert!(matches!(e, RainflowError::NonFinite { index: 2, .. }));
        assert!(e.to_string().contains("sample 2"), "{e}");
        assert!(reversals(&[f64::INFINITY]).is_err());
    }

    #[test]
    fn constant_amplitude_cosine_gives_n_cycles_of_twice_the_amplitude() {
        // x = A cos(2π i/P), N whole periods: reversals A, −A, A, …, A (2N + 1
        // of them, 2N ranges of 2A). Each range is counted; exact ties
        // (X = Y) make them ASTM half cycles, float noise may make some full
        // cycles, but the total count is N in both cases (see the
        // conservation test below). Tolerance: 1e-12·A for the float noise
        // of cos at the peaks (a few ulp).
        let (a, p, n) = (0.7, 40usize, 25usize);
        let series: Vec<f64> =
            (0..=n * p).map(|i| a * (2.0 * std::f64::consts::PI * i as f64 / p as f64).cos()).collect();
        let cycles = rainflow(&series).unwrap();
        assert!(cycles.iter().all(|c| (c.range - 2.0 * a).abs() <= 1e-12 * a), "{cycles:?}");
        let total: f64 = cycles.iter().map(|c| c.count).sum();
        assert_eq!(total, n as f64);

        // The exact alternating series: 2N half cycles, histogram [(2A, N)]
        // (hand calculation: every triple has X = Y and Y holds S).
        let exact: Vec<f64> = (0..=2 * n).map(|i| if i % 2 == 0 { a } else { -a }).collect();
        let cycles = rainflow(&exact).unwrap();
        assert!(cycles.iter().all(|c| c.count == 0.5));
        assert_eq!(histogram(&cycles), [(2.0 * a, n as f64)]);
    }

    /// Knuth's MMIX LCG (The Art of Computer Programming vol. 2), upper bits
    /// to [−1, 1).
    fn lcg_series(seed: u64, len: usize, levels: Option<u64>) -> Vec<f64> {
        let mut state = seed;
        (0..len)
            .map(|_| {
                state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                let u = (state >> 11) as f64 / (1u64 << 53) as f64;
                match levels {
                    Some(k) => (u * k as f64).floor(),
                    None => 2.0 * u - 1.0,
                }
            })
            .collect()
    }

    #[test]
    fn counts_are_conserved_and_largest_range_is_max_minus_min() {
        // Provable properties of the §5.4.4 procedure (proofs here):
        // (a) Σ 2·count = R − 1 for R ≥ 1 reversals: a full cycle drops two
        //     points (2·1), a step-4 half cycle drops one (2·½), and the k
        //     points left give k − 1 half cycles; R = 2F + H + k, so
        //     Σ 2·count = 2F + H + k − 1 = R − 1.
        // (b) The largest range is max − min of the series: a point holding
        //     the maximum is never the second point of a counted Y (the
        //     point kept before it would be higher, since |X| < |Y| held
        //     when it was read), and as Y's first point it is discarded only
        //     when X ≥ Y puts a point at least as high (so also the maximum)
        //     after it; likewise for the minimum, so a maximum and a minimum
        //     are always among the kept points; the kept points have
        //     strictly decreasing ranges (each triple has X < Y), so all of
        //     them lie within the first kept range, which therefore is
        //     max − min and is counted as a residual half cycle.
        for (seed, len, levels) in
            [(1, 1000, None), (2, 5000, None), (3, 2000, Some(7)), (4, 300, Some(3)), (5, 17, None)]
        {
            let s = lcg_series(seed, len, levels);
            let r = reversals(&s).unwrap().len();
            let cycles = rainflow(&s).unwrap();
            let twice: f64 = cycles.iter().map(|c| 2.0 * c.count).sum();
            assert_eq!(twice, (r - 1) as f64, "seed {seed}");
            let max = s.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            let min = s.iter().cloned().fold(f64::INFINITY, f64::min);
            assert_eq!(histogram(&cycles)[0].0, max - min, "seed {seed}");
            // Every cycle's end points are reversals of the series.
            assert!(cycles.iter().all(|c| (s[c.start] - s[c.end]).abs() == c.range));
        }
    }

    #[test]
    fn histogram_sums_equal_ranges_by_descending_range() {
        let c = |range, count| Cycle { range, mean: 0.0, count, start: 0, end: 0 };
        let h = histogram(&[c(1.0, 0.5), c(3.0, 1.0), c(1.0, 1.0), c(2.0, 0.5), c(3.0, 0.5)]);
        assert_eq!(h, [(3.0, 1.5), (2.0, 0.5), (1.0, 1.5)]);
        assert!(histogram(&[]).is_empty());
    }
}
