//! Closest points between two 3D segments and between a point and a segment.
//!
//! Method: the clamped-parameter method of Lumelsky (1985), "On fast
//! computation of distance between line segments", *Inf. Process. Lett.* 21,
//! in the form given by C. Ericson, *Real-Time Collision Detection* (2005),
//! §5.1.9 (from memory): take the parameter `s` of the closest point of the
//! two infinite lines, clamp it to `[0, 1]`, project that point onto the
//! other line for `t`; if `t` leaves `[0, 1]`, clamp it and re-project for
//! `s`. For parallel pairs (sin²θ at rounding level) a closest pair has an
//! endpoint of one segment, so the best of the four endpoint projections is
//! taken; zero-length segments are points.
//!
//! Coordinates in m. Non-finite input gives a non-finite distance (no panic);
//! the parameters are always in `[0, 1]`.

/// A point or vector in 3D, m.
pub type Point3 = [f64; 3];

/// Closest pair of points between segments `P0P1` and `Q0Q1`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Closest {
    /// Distance between the closest points, m.
    pub distance: f64,
    /// Parameter of the closest point on `P0P1` (`P = P0 + s (P1 − P0)`), in `[0, 1]`.
    pub s: f64,
    /// Parameter of the closest point on `Q0Q1` (`Q = Q0 + t (Q1 − Q0)`), in `[0, 1]`.
    pub t: f64,
    /// Closest point on `P0P1`, m.
    pub point_p: Point3,
    /// Closest point on `Q0Q1`, m.
    pub point_q: Point3,
}

/// Closest point of a segment `AB` to a point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PointClosest {
    /// Distance from the point to the segment, m.
    pub distance: f64,
    /// Parameter of the closest point (`A + t (B − A)`), in `[0, 1]`.
    pub t: f64,
    /// Closest point on the segment, m.
    pub point: Point3,
}

#[inline]
pub(crate) fn sub(a: Point3, b: Point3) -> Point3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

#[inline]
pub(crate) fn dot(a: Point3, b: Point3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// `a + s (b − a)`.
#[inline]
pub(crate) fn lerp(a: Point3, b: Point3, s: f64) -> Point3 {
    [a[0] + s * (b[0] - a[0]), a[1] + s * (b[1] - a[1]), a[2] + s * (b[2] - a[2])]
}

#[inline]
pub(crate) fn dist(a: Point3, b: Point3) -> f64 {
    let d = sub(a, b);
    dot(d, d).sqrt()
}

/// Clamp to `[0, 1]`; NaN goes to 0.
#[inline]
fn clamp01(x: f64) -> f64 {
    if x > 0.0 {
        if x < 1.0 {
            x
        } else {
            1.0
        }
    } else {
        0.0
    }
}

/// Closest points between segments `p0p1` and `q0q1` (Lumelsky 1985 clamped
/// parameters, Ericson 2005 §5.1.9). Robust for parallel and zero-length
/// segments; for parallel overlapping segments any one of the equally close
/// pairs is returned.
pub fn segment_segment(p0: Point3, p1: Point3, q0: Point3, q1: Point3) -> Closest {
    let d1 = sub(p1, p0);
    let d2 = sub(q1, q0);
    let r = sub(p0, q0);
    let a = dot(d1, d1);
    let e = dot(d2, d2);
    let f = dot(d2, r);
    // A segment shorter than rounding of the whole configuration is a point.
    let tiny = f64::EPSILON * f64::EPSILON * (a + e + dot(r, r));
    let (s, t) = if a <= tiny && e <= tiny {
        (0.0, 0.0)
    } else if a <= tiny {
        (0.0, clamp01(f / e))
    } else {
        let c = dot(d1, r);
        if e <= tiny {
            (clamp01(-c / a), 0.0)
        } else {
            let b = dot(d1, d2);
            let denom = a * e - b * b;
            // denom = a e sin²θ; at rounding level the lines are parallel.
            if denom <= 4.0 * f64::EPSILON * a * e {
                return parallel(p0, p1, q0, q1, [a, b, c, e, f]);
            }
            let mut s = clamp01((b * f - c * e) / denom);
            let mut t = (b * s + f) / e;
            if t < 0.0 {
                t = 0.0;
                s = clamp01(-c / a);
            } else if t > 1.0 {
                t = 1.0;
                s = clamp01((b - c) / a);
            } else if t.is_nan() {
                t = 0.0;
            }
            (s, t)
        }
    };
    let point_p = lerp(p0, p1, s);
    let point_q = lerp(q0, q1, t);
    Closest { distance: dist(point_p, point_q), s, t, point_p, point_q }
}

/// Parallel (or nearly parallel) segments: a closest pair has an endpoint
/// of one segment, so take the best of the four endpoint projections. With
/// `a = d1·d1, b = d1·d2, c = d1·r, e = d2·d2, f = d2·r`, `r = p0 − q0`.
fn parallel(p0: Point3, p1: Point3, q0: Point3, q1: Point3, k: [f64; 5]) -> Closest {
    let [a, b, c, e, f] = k;
    let candidates = [
        (0.0, clamp01(f / e)),
        (1.0, clamp01((b + f) / e)),
        (clamp01(-c / a), 0.0),
        (clamp01((b - c) / a), 1.0),
    ];
    let mut best: Option<Closest> = None;
    for (s, t) in candidates {
        let point_p = lerp(p0, p1, s);
        let point_q = lerp(q0, q1, t);
        let distance = dist(point_p, point_q);
        if best.is_none_or(|bst| distance < bst.distance) {
            best = Some(Closest { distance, s, t, point_p, point_q });
        }
    }
    // The array is never empty; the fallback keeps the function panic-free.
    best.unwrap_or(Closest { distance: dist(p0, q0), s: 0.0, t: 0.0, point_p: p0, point_q: q0 })
}

/// Closest point of segment `ab` to point `p` (orthogonal projection,
/// clamped). A zero-length segment is the point `a` (`t = 0`).
pub fn point_segment(p: Point3, a: Point3, b: Point3) -> PointClosest {
    let d = sub(b, a);
    let w = sub(p, a);
    let e = dot(d, d);
    let t = if e <= f64::EPSILON * f64::EPSILON * (e + dot(w, w)) { 0.0 } else { clamp01(dot(w, d) / e) };
    let point = lerp(a, b, t);
    PointClosest { distance: dist(p, point), t, point }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    /// Fixed LCG (Knuth MMIX constants), uniform in [-1, 1).
    struct Lcg(u64);
    impl Lcg {
        fn next(&mut self) -> f64 {
            self.0 = self.0.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            ((self.0 >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
        }
        fn point(&mut self, scale: f64) -> Point3 {
            [scale * self.next(), scale * self.next(), scale * self.next()]
        }
    }

    fn check_consistent(c: &Closest, p0: Point3, p1: Point3, q0: Point3, q1: Point3) {
        assert!((0.0..=1.0).contains(&c.s) && (0.0..=1.0).contains(&c.t));
        let pp = lerp(p0, p1, c.s);
        let qq = lerp(q0, q1, c.t);
        assert_abs_diff_eq!(dist(pp, c.point_p), 0.0, epsilon = 1e-14);
        assert_abs_diff_eq!(dist(qq, c.point_q), 0.0, epsilon = 1e-14);
        assert_abs_diff_eq!(dist(pp, qq), c.distance, epsilon = 1e-14);
    }

    #[test]
    fn parallel_overlapping_lines() {
        // exact geometry: both along x, 2 m apart in y, Q's span inside P's.
        let (p0, p1) = ([0.0, 0.0, 0.0], [10.0, 0.0, 0.0]);
        let (q0, q1) = ([3.0, 2.0, 0.0], [8.0, 2.0, 0.0]);
        let c = segment_segment(p0, p1, q0, q1);
        check_consistent(&c, p0, p1, q0, q1);
        assert_abs_diff_eq!(c.distance, 2.0, epsilon = 1e-14); // exact geometry
        assert!((0.3..=0.8).contains(&c.s)); // exact geometry: overlap x in [3, 8]
                                             // anti-parallel Q, partially overlapping: distance still 2 (exact geometry)
        let c = segment_segment(p0, p1, [12.0, 0.0, 2.0], [7.0, 0.0, 2.0]);
        check_consistent(&c, p0, p1, [12.0, 0.0, 2.0], [7.0, 0.0, 2.0]);
        assert_abs_diff_eq!(c.distance, 2.0, epsilon = 1e-14);
        assert!(c.point_p[0] >= 7.0 - 1e-12 && c.point_p[0] <= 10.0 + 1e-12);
        // swapped roles
        let c = segment_segment(q0, q1, p0, p1);
        assert_abs_diff_eq!(c.distance, 2.0, epsilon = 1e-14);
    }

    #[test]
    fn parallel_disjoint_lines_end_to_end() {
        // exact geometry: P ends at x = 1, Q starts at x = 3, 1 m apart in y:
        // closest pair P1–Q0 at √(2² + 1²) = √5.
        let (p0, p1) = ([0.0, 0.0, 0.0], [1.0, 0.0, 0.0]);
        let (q0, q1) = ([3.0, 1.0, 0.0], [5.0, 1.0, 0.0]);
        let c = segment_segment(p0, p1, q0, q1);
        check_consistent(&c, p0, p1, q0, q1);
        assert_abs_diff_eq!(c.distance, 5f64.sqrt(), epsilon = 1e-14);
        assert_eq!((c.s, c.t), (1.0, 0.0)); // exact geometry
                                            // Q reversed: the near end is now Q1 (exact geometry)
        let c = segment_segment(p0, p1, q1, q0);
        assert_abs_diff_eq!(c.distance, 5f64.sqrt(), epsilon = 1e-14);
        assert_eq!((c.s, c.t), (1.0, 1.0));
        // P reversed as well (exact geometry)
        let c = segment_segment(p1, p0, q1, q0);
        assert_abs_diff_eq!(c.distance, 5f64.sqrt(), epsilon = 1e-14);
        assert_eq!((c.s, c.t), (0.0, 1.0));
    }

    #[test]
    fn crossing_pair() {
        // exact geometry: cross at (1, 0, 0); s = 2/4, t = 2/8.
        let (p0, p1) = ([-1.0, 0.0, 0.0], [3.0, 0.0, 0.0]);
        let (q0, q1) = ([1.0, -2.0, 0.0], [1.0, 6.0, 0.0]);
        let c = segment_segment(p0, p1, q0, q1);
        check_consistent(&c, p0, p1, q0, q1);
        assert_abs_diff_eq!(c.distance, 0.0, epsilon = 1e-15);
        assert_abs_diff_eq!(c.s, 0.5, epsilon = 1e-15);
        assert_abs_diff_eq!(c.t, 0.25, epsilon = 1e-15);
        assert_abs_diff_eq!(dist(c.point_p, [1.0, 0.0, 0.0]), 0.0, epsilon = 1e-15);
    }

    #[test]
    fn skew_perpendicular() {
        // exact geometry: P along x at z = 0, Q along y at x = 0.5, z = 3;
        // closest pair (0.5, 0, 0)–(0.5, 0, 3), s = 2.5/4, t = 1/5.
        let (p0, p1) = ([-2.0, 0.0, 0.0], [2.0, 0.0, 0.0]);
        let (q0, q1) = ([0.5, -1.0, 3.0], [0.5, 4.0, 3.0]);
        let c = segment_segment(p0, p1, q0, q1);
        check_consistent(&c, p0, p1, q0, q1);
        assert_abs_diff_eq!(c.distance, 3.0, epsilon = 1e-14);
        assert_abs_diff_eq!(c.s, 0.625, epsilon = 1e-15);
        assert_abs_diff_eq!(c.t, 0.2, epsilon = 1e-15);
    }

    #[test]
    fn endpoint_cases() {
        // exact geometry: end P1 = (1,0,0) to end Q0 = (2,1,0), √2.
        let (p0, p1) = ([0.0, 0.0, 0.0], [1.0, 0.0, 0.0]);
        let (q0, q1) = ([2.0, 1.0, 0.0], [2.0, 5.0, 0.0]);
        let c = segment_segment(p0, p1, q0, q1);
        check_consistent(&c, p0, p1, q0, q1);
        assert_abs_diff_eq!(c.distance, 2f64.sqrt(), epsilon = 1e-14);
        assert_eq!((c.s, c.t), (1.0, 0.0));
        // exact geometry: end P1 to the interior of Q at (3, 0, 1): √(2² + 1²).
        let (q0, q1) = ([3.0, -1.0, 1.0], [3.0, 1.0, 1.0]);
        let c = segment_segment(p0, p1, q0, q1);
        check_consistent(&c, p0, p1, q0, q1);
        assert_abs_diff_eq!(c.distance, 5f64.sqrt(), epsilon = 1e-14);
        assert_eq!(c.s, 1.0);
        assert_abs_diff_eq!(c.t, 0.5, epsilon = 1e-15);
        // and the same with roles swapped (exact geometry)
        let c = segment_segment(q0, q1, p0, p1);
        assert_abs_diff_eq!(c.distance, 5f64.sqrt(), epsilon = 1e-14);
        assert_abs_diff_eq!(c.s, 0.5, epsilon = 1e-15);
        assert_eq!(c.t, 1.0);
    }

    #[test]
    fn degenerate_segments() {
        let pt = [1.0, 2.0, 3.0];
        let (q0, q1) = ([0.0, 0.0, 0.0], [2.0, 0.0, 0.0]);
        // exact geometry: foot of (1,2,3) on the x axis is (1,0,0), √13.
        let c = segment_segment(pt, pt, q0, q1);
        check_consistent(&c, pt, pt, q0, q1);
        assert_abs_diff_eq!(c.distance, 13f64.sqrt(), epsilon = 1e-14);
        assert_abs_diff_eq!(c.t, 0.5, epsilon = 1e-15);
        let c = segment_segment(q0, q1, pt, pt);
        assert_abs_diff_eq!(c.distance, 13f64.sqrt(), epsilon = 1e-14);
        assert_abs_diff_eq!(c.s, 0.5, epsilon = 1e-15);
        // two points (exact geometry: |(1,2,3) − (4,6,3)| = 5)
        let c = segment_segment(pt, pt, [4.0, 6.0, 3.0], [4.0, 6.0, 3.0]);
        assert_abs_diff_eq!(c.distance, 5.0, epsilon = 1e-14);
        assert_eq!((c.s, c.t), (0.0, 0.0));
        // a segment of length 1e-20 next to unit scale: finite, ≈ point (constructed)
        let tiny = [1.0 + 1e-20, 2.0, 3.0];
        let c = segment_segment(pt, tiny, q0, q1);
        assert!(c.distance.is_finite() && c.s.is_finite() && c.t.is_finite());
        assert_abs_diff_eq!(c.distance, 13f64.sqrt(), epsilon = 1e-14);
        // point_segment on a zero-length segment
        let pc = point_segment([0.0, 3.0, 4.0], [0.0; 3], [0.0; 3]);
        assert_abs_diff_eq!(pc.distance, 5.0, epsilon = 1e-14);
        assert_eq!(pc.t, 0.0);
        // non-finite input: no panic, parameters stay in [0, 1]
        let c = segment_segment([f64::NAN; 3], pt, q0, q1);
        assert!((0.0..=1.0).contains(&c.s) && (0.0..=1.0).contains(&c.t));
    }

    #[test]
    fn point_segment_cases() {
        let (a, b) = ([0.0, 0.0, 0.0], [4.0, 0.0, 0.0]);
        // exact geometry: interior foot (1, 0, 0), distance 2
        let pc = point_segment([1.0, 2.0, 0.0], a, b);
        assert_abs_diff_eq!(pc.distance, 2.0, epsilon = 1e-15);
        assert_abs_diff_eq!(pc.t, 0.25, epsilon = 1e-15);
        // exact geometry: beyond B, nearest is B, distance √(1 + 4)
        let pc = point_segment([5.0, 0.0, 2.0], a, b);
        assert_abs_diff_eq!(pc.distance, 5f64.sqrt(), epsilon = 1e-15);
        assert_eq!(pc.t, 1.0);
        // exact geometry: before A, nearest is A, distance 3
        let pc = point_segment([-3.0, 0.0, 0.0], a, b);
        assert_abs_diff_eq!(pc.distance, 3.0, epsilon = 1e-15);
        assert_eq!(pc.t, 0.0);
    }

    /// Reference by convex reduction (constructed): g(s) = dist(P(s), Q) is
    /// convex in s (distance to a convex set along a line), so golden-section
    /// search over s with exact point–segment distance gives the minimum.
    fn golden_reference(p0: Point3, p1: Point3, q0: Point3, q1: Point3) -> f64 {
        let g = |s: f64| point_segment(lerp(p0, p1, s), q0, q1).distance;
        let r = 0.5 * (5f64.sqrt() - 1.0);
        let (mut lo, mut hi) = (0.0f64, 1.0f64);
        let mut x1 = hi - r * (hi - lo);
        let mut x2 = lo + r * (hi - lo);
        let (mut f1, mut f2) = (g(x1), g(x2));
        for _ in 0..200 {
            if f1 <= f2 {
                hi = x2;
                x2 = x1;
                f2 = f1;
                x1 = hi - r * (hi - lo);
                f1 = g(x1);
            } else {
                lo = x1;
                x1 = x2;
                f1 = f2;
                x2 = lo + r * (hi - lo);
                f2 = g(x2);
            }
        }
        g(0.0).min(g(1.0)).min(f1).min(f2)
    }

    #[test]
    fn against_brute_force_random() {
        let mut rng = Lcg(0x5eed_0001);
        let n = 120; // samples per segment for the dense search
        for case in 0..400 {
            let p0 = rng.point(1.0);
            let mut p1 = rng.point(1.0);
            let mut q0 = rng.point(1.0);
            let mut q1 = rng.point(1.0);
            match case % 5 {
                // nearly parallel: Q = P shifted, ends perturbed by ~1e-9 (constructed)
                1 => {
                    let sh = rng.point(0.5);
                    q0 = [p0[0] + sh[0], p0[1] + sh[1], p0[2] + sh[2] + 1e-9 * rng.next()];
                    let d = sub(p1, p0);
                    q1 = [q0[0] + 1.7 * d[0], q0[1] + 1.7 * d[1], q0[2] + 1.7 * d[2] + 1e-9];
                }
                // exactly parallel, opposite direction (constructed)
                2 => {
                    let sh = rng.point(0.5);
                    let d = sub(p1, p0);
                    q0 = [p0[0] + sh[0], p0[1] + sh[1], p0[2] + sh[2]];
                    q1 = [q0[0] - 0.6 * d[0], q0[1] - 0.6 * d[1], q0[2] - 0.6 * d[2]];
                }
                // a very short P (constructed)
                3 => {
                    let d = rng.point(1e-7);
                    p1 = [p0[0] + d[0], p0[1] + d[1], p0[2] + d[2]];
                }
                _ => {}
            }
            let c = segment_segment(p0, p1, q0, q1);
            check_consistent(&c, p0, p1, q0, q1);
            let mut brute = f64::INFINITY;
            for i in 0..n {
                let pp = lerp(p0, p1, i as f64 / (n - 1) as f64);
                for j in 0..n {
                    brute = brute.min(dist(pp, lerp(q0, q1, j as f64 / (n - 1) as f64)));
                }
            }
            // the true minimiser has a sample within half a step on each segment
            let sampling = 0.5 * (dist(p0, p1) + dist(q0, q1)) / (n - 1) as f64;
            assert!(c.distance <= brute + 1e-12, "case {case}: {} > {brute}", c.distance);
            assert!(c.distance >= brute - sampling - 1e-12, "case {case}");
            let reference = golden_reference(p0, p1, q0, q1);
            assert_abs_diff_eq!(c.distance, reference, epsilon = 1e-9);
            // symmetric in the roles of P and Q
            let cs = segment_segment(q0, q1, p0, p1);
            assert_abs_diff_eq!(cs.distance, c.distance, epsilon = 1e-12);
        }
    }
}
