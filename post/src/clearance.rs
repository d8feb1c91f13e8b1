//! Clearance between conductor sets and to the ground, for one time instant.
//!
//! A [`PolylineSet`] is one phase (or earth wire): several subconductor
//! polylines, each a list of node positions (m). [`ClearanceSearch`] finds
//! the closest pair of points between two sets with a bounding-volume
//! hierarchy per set: a balanced binary tree over runs of consecutive
//! segments (consecutive segments of a conductor are close in space, so no
//! sorting is needed), each node holding the axis-aligned box of its
//! segments. The two trees are traversed together depth first, nearer child
//! pair first, and a pair of boxes is dropped as soon as its box distance is
//! not below the best segment distance found so far (branch and bound). For
//! line-like geometry the work stays near linear in the number of segments.
//! The trees keep their storage between calls: a new time step with the same
//! topology only refits the boxes bottom up.
//!
//! [`min_vertical_clearance`] measures the vertical clearance to a
//! [`GroundProfile`] given along a straight route.

use crate::segment_distance::{lerp, segment_segment, Point3};

/// Errors of the clearance inputs.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ClearanceError {
    /// A polyline has fewer than two nodes, or the starts are not `0, …`
    /// increasing within the positions.
    #[error("polyline {polyline} is malformed: each polyline needs at least two nodes and starts must begin at 0 and increase")]
    BadPolyline {
        /// Index of the offending polyline.
        polyline: usize,
    },
    /// A coordinate is NaN or infinite.
    #[error("position {index} is not finite")]
    NonFinite {
        /// Index of the offending node or profile point.
        index: usize,
    },
    /// New positions do not match the number of nodes of the set.
    #[error("expected {expected} positions, got {got}")]
    LengthMismatch {
        /// Nodes in the set.
        expected: usize,
        /// Positions given.
        got: usize,
    },
    /// The ground profile is empty, its chainages do not increase strictly,
    /// or its route direction is zero or not finite.
    #[error("bad ground profile: {0}")]
    BadProfile(&'static str),
}

/// Several polylines stored flat: all node positions (m) one after the other
/// and the index of the first node of each polyline.
#[derive(Debug, Clone, PartialEq)]
pub struct PolylineSet {
    positions: Vec<Point3>,
    /// First node of each polyline, then `positions.len()`.
    bounds: Vec<usize>,
}

impl PolylineSet {
    /// A set from flat positions (m) and the first node index of each
    /// polyline (`starts[0] = 0`, increasing, each polyline ≥ 2 nodes). An
    /// empty `starts` with empty `positions` is an empty set.
    pub fn new(positions: Vec<Point3>, starts: Vec<usize>) -> Result<Self, ClearanceError> {
        let mut bounds = starts;
        if bounds.is_empty() && !positions.is_empty() {
            return Err(ClearanceError::BadPolyline { polyline: 0 });
        }
        if !bounds.is_empty() && bounds[0] != 0 {
            return Err(ClearanceError::BadPolyline { polyline: 0 });
        }
        bounds.push(positions.len());
        for (k, w) in bounds.windows(2).enumerate() {
            if w[1] < w[0].saturating_add(2) {
                return Err(ClearanceError::BadPolyline { polyline: k });
            }
        }
        check_finite(&positions)?;
        if bounds.len() == 1 {
            bounds.clear();
        }
        Ok(Self { positions, bounds })
    }

    /// A set from one node list per polyline (m).
    pub fn from_polylines<P: AsRef<[Point3]>>(polylines: &[P]) -> Result<Self, ClearanceError> {
        let mut positions = Vec::new();
        let mut starts = Vec::with_capacity(polylines.len());
        for p in polylines {
            starts.push(positions.len());
            positions.extend_from_slice(p.as_ref());
        }
        Self::new(positions, starts)
    }

    /// Replace all node positions (m), keeping the topology (same node count).
    pub fn set_positions(&mut self, positions: &[Point3]) -> Result<(), ClearanceError> {
        if positions.len() != self.positions.len() {
            return Err(ClearanceError::LengthMismatch {
                expected: self.positions.len(),
                got: positions.len(),
            });
        }
        check_finite(positions)?;
        self.positions.copy_from_slice(positions);
        Ok(())
    }

    /// All node positions, m.
    pub fn positions(&self) -> &[Point3] {
        &self.positions
    }

    /// Number of polylines.
    pub fn polyline_count(&self) -> usize {
        self.bounds.len().saturating_sub(1)
    }

    /// Nodes of polyline `k`, m.
    pub fn polyline(&self, k: usize) -> Option<&[Point3]> {
        let lo = *self.bounds.get(k)?;
        let hi = *self.bounds.get(k + 1)?;
        self.positions.get(lo..hi)
    }

    /// Total number of segments.
    pub fn segment_count(&self) -> usize {
        self.positions.len().saturating_sub(self.polyline_count())
    }

    /// Polyline and local segment index of the segment starting at node `n`.
    fn locate(&self, n: usize) -> (usize, usize) {
        let k = self.bounds.partition_point(|&b| b <= n).saturating_sub(1);
        (k, n - self.bounds[k])
    }
}

fn check_finite(positions: &[Point3]) -> Result<(), ClearanceError> {
    match positions.iter().position(|p| !p.iter().all(|c| c.is_finite())) {
        Some(index) => Err(ClearanceError::NonFinite { index }),
        None => Ok(()),
    }
}

/// Closest pair of points between two polyline sets.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClearanceHit {
    /// Minimum distance, m.
    pub distance: f64,
    /// Polyline of set `a`.
    pub polyline_a: usize,
    /// Segment within that polyline (between its nodes `segment_a` and `segment_a + 1`).
    pub segment_a: usize,
    /// Parameter along that segment, in `[0, 1]`.
    pub s: f64,
    /// Polyline of set `b`.
    pub polyline_b: usize,
    /// Segment within that polyline.
    pub segment_b: usize,
    /// Parameter along that segment, in `[0, 1]`.
    pub t: f64,
    /// Closest point on set `a`, m.
    pub point_a: Point3,
    /// Closest point on set `b`, m.
    pub point_b: Point3,
}

/// Work counters of the last [`ClearanceSearch::search`].
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct SearchStats {
    /// Segment pairs whose exact distance was computed.
    pub segment_pairs: u64,
    /// Box pairs whose distance was computed.
    pub box_pairs: u64,
}

/// Segments per leaf of the hierarchy.
const LEAF_SEGMENTS: usize = 4;

#[derive(Debug, Clone, Copy)]
struct Node {
    min: Point3,
    max: Point3,
    /// Range of entries of `Bvh::segments`.
    lo: usize,
    hi: usize,
    /// Children (leaf when `left == usize::MAX`); in pre-order, children come after the parent.
    left: usize,
    right: usize,
}

impl Node {
    fn is_leaf(&self) -> bool {
        self.left == usize::MAX
    }
    fn extent2(&self) -> f64 {
        (0..3).map(|i| (self.max[i] - self.min[i]).powi(2)).sum()
    }
}

/// Squared distance between two boxes (0 when they overlap).
fn box_distance2(a: &Node, b: &Node) -> f64 {
    let mut d2 = 0.0;
    for i in 0..3 {
        let gap = (b.min[i] - a.max[i]).max(a.min[i] - b.max[i]);
        if gap > 0.0 {
            d2 += gap * gap;
        }
    }
    d2
}

/// Bounding-volume hierarchy over the segments of one set.
#[derive(Debug, Clone, Default)]
struct Bvh {
    /// First node of each segment.
    segments: Vec<usize>,
    nodes: Vec<Node>,
    /// The `bounds` of the set the tree was built for.
    topology: Vec<usize>,
}

impl Bvh {
    /// Rebuild when the topology changed, then refit the boxes to the positions.
    fn update(&mut self, set: &PolylineSet) {
        if self.topology != set.bounds || self.nodes.is_empty() != (set.segment_count() == 0) {
            self.topology.clear();
            self.topology.extend_from_slice(&set.bounds);
            self.segments.clear();
            for w in set.bounds.windows(2) {
                self.segments.extend(w[0]..w[1] - 1);
            }
            self.nodes.clear();
            if !self.segments.is_empty() {
                self.build(0, self.segments.len());
            }
        }
        self.refit(&set.positions);
    }

    fn build(&mut self, lo: usize, hi: usize) -> usize {
        let index = self.nodes.len();
        self.nodes.push(Node { min: [0.0; 3], max: [0.0; 3], lo, hi, left: usize::MAX, right: usize::MAX });
        if hi - lo > LEAF_SEGMENTS {
            let mid = lo + (hi - lo) / 2;
            let left = self.build(lo, mid);
            let right = self.build(mid, hi);
            self.nodes[index].left = left;
            self.nodes[index].right = right;
        }
        index
    }

    fn refit(&mut self, positions: &[Point3]) {
        for i in (0..self.nodes.len()).rev() {
            let node = self.nodes[i];
            let (mut min, mut max) = ([f64::INFINITY; 3], [f64::NEG_INFINITY; 3]);
            if node.is_leaf() {
                for &n in &self.segments[node.lo..node.hi] {
                    for p in [positions[n], positions[n + 1]] {
                        for k in 0..3 {
                            min[k] = min[k].min(p[k]);
                            max[k] = max[k].max(p[k]);
                        }
                    }
                }
            } else {
                let (l, r) = (self.nodes[node.left], self.nodes[node.right]);
                for k in 0..3 {
                    min[k] = l.min[k].min(r.min[k]);
                    max[k] = l.max[k].max(r.max[k]);
                }
            }
            self.nodes[i].min = min;
            self.nodes[i].max = max;
        }
    }
}

/// Reusable closest-pair search between two polyline sets: keeps the two
/// hierarchies and the traversal stack between calls, so a sequence of time
/// steps with the same topology allocates nothing.
#[derive(Debug, Clone, Default)]
pub struct ClearanceSearch {
    tree_a: Bvh,
    tree_b: Bvh,
    stack: Vec<(usize, usize, f64)>,
    stats: SearchStats,
}

impl ClearanceSearch {
    /// An empty search object; storage grows on the first [`Self::search`].
    pub fn new() -> Self {
        Self::default()
    }

    /// Counters of the last search.
    pub fn stats(&self) -> SearchStats {
        self.stats
    }

    /// Closest pair of points between sets `a` and `b` (different sets: on
    /// one set the distance would be 0 at a shared node). `None` when either
    /// set has no segment. Among equally close pairs one is returned.
    pub fn search(&mut self, a: &PolylineSet, b: &PolylineSet) -> Option<ClearanceHit> {
        self.stats = SearchStats::default();
        self.tree_a.update(a);
        self.tree_b.update(b);
        let (ta, tb) = (&self.tree_a, &self.tree_b);
        if ta.nodes.is_empty() || tb.nodes.is_empty() {
            return None;
        }
        let (pa, pb) = (&a.positions, &b.positions);
        let mut best2 = f64::INFINITY;
        let mut best: Option<(usize, usize, f64, f64, Point3, Point3)> = None;
        self.stack.clear();
        self.stats.box_pairs += 1;
        self.stack.push((0, 0, box_distance2(&ta.nodes[0], &tb.nodes[0])));
        while let Some((ia, ib, lower2)) = self.stack.pop() {
            if lower2 >= best2 {
                continue;
            }
            let (na, nb) = (&ta.nodes[ia], &tb.nodes[ib]);
            if na.is_leaf() && nb.is_leaf() {
                for &sa in &ta.segments[na.lo..na.hi] {
                    for &sb in &tb.segments[nb.lo..nb.hi] {
                        self.stats.segment_pairs += 1;
                        let c = segment_segment(pa[sa], pa[sa + 1], pb[sb], pb[sb + 1]);
                        let d2 = c.distance * c.distance;
                        if d2 < best2 {
                            best2 = d2;
                            best = Some((sa, sb, c.s, c.t, c.point_p, c.point_q));
                        }
                    }
                }
                continue;
            }
            // Split the larger box (or the one that is not a leaf).
            let split_a = !na.is_leaf() && (nb.is_leaf() || na.extent2() >= nb.extent2());
            let (c1, c2) =
                if split_a { ((na.left, ib), (na.right, ib)) } else { ((ia, nb.left), (ia, nb.right)) };
            let d1 = box_distance2(&ta.nodes[c1.0], &tb.nodes[c1.1]);
            let d2 = box_distance2(&ta.nodes[c2.0], &tb.nodes[c2.1]);
            self.stats.box_pairs += 2;
            // Push the farther pair first so the nearer one is explored first.
            let (near, far) = if d1 <= d2 { ((c1, d1), (c2, d2)) } else { ((c2, d2), (c1, d1)) };
            for ((x, y), d) in [far, near] {
                if d < best2 {
                    self.stack.push((x, y, d));
                }
            }
        }
        let (sa, sb, s, t, point_a, point_b) = best?;
        let (polyline_a, segment_a) = a.locate(sa);
        let (polyline_b, segment_b) = b.locate(sb);
        Some(ClearanceHit {
            distance: best2.sqrt(),
            polyline_a,
            segment_a,
            s,
            polyline_b,
            segment_b,
            t,
            point_a,
            point_b,
        })
    }
}

/// Closest pair of points between sets `a` and `b` (one-off; for many time
/// steps keep a [`ClearanceSearch`]). `None` when either set is empty.
pub fn min_distance(a: &PolylineSet, b: &PolylineSet) -> Option<ClearanceHit> {
    ClearanceSearch::new().search(a, b)
}

/// A route in plan as a polyline of straight legs. A plan point `(x, y)`
/// takes the chainage of its projection on the nearest leg (the first and
/// last legs reach on without end), so on a straight route from origin
/// `(x₀, y₀)` along unit `u` it is `c = (x − x₀, y − y₀)·u`.
#[derive(Debug, Clone, PartialEq)]
pub struct Route {
    legs: Vec<Leg>,
}

/// One straight leg of a route: start point, unit direction, length (m)
/// and chainage at its start (m).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Leg {
    origin: [f64; 2],
    direction: [f64; 2],
    length: f64,
    chainage: f64,
}

impl Route {
    /// A straight route from the plan origin (m) along `direction` (any
    /// length, normalised here), chainage 0 at the origin.
    pub fn straight(origin: [f64; 2], direction: [f64; 2]) -> Result<Self, ClearanceError> {
        let norm = direction[0].hypot(direction[1]);
        if !norm.is_finite() || norm <= 0.0 || !origin.iter().all(|v| v.is_finite()) {
            return Err(ClearanceError::BadProfile(
                "route origin and direction must be finite, direction non-zero",
            ));
        }
        let direction = [direction[0] / norm, direction[1] / norm];
        Ok(Self { legs: vec![Leg { origin, direction, length: f64::INFINITY, chainage: 0.0 }] })
    }

    /// The polyline through the plan points `points` (m; at least two),
    /// chainage 0 at the first and the plan distance between points as the
    /// chainage difference.
    pub fn through(points: &[[f64; 2]]) -> Result<Self, ClearanceError> {
        if points.len() < 2 || !points.iter().flatten().all(|v| v.is_finite()) {
            return Err(ClearanceError::BadProfile("a route needs at least two finite plan points"));
        }
        let mut legs = Vec::with_capacity(points.len() - 1);
        let mut chainage = 0.0;
        for w in points.windows(2) {
            let d = [w[1][0] - w[0][0], w[1][1] - w[0][1]];
            let length = d[0].hypot(d[1]);
            if length <= 0.0 {
                return Err(ClearanceError::BadProfile("two route points coincide"));
            }
            legs.push(Leg { origin: w[0], direction: [d[0] / length, d[1] / length], length, chainage });
            chainage += length;
        }
        Ok(Self { legs })
    }

    /// Chainage (m) of the plan position of `p` (its height is ignored).
    pub fn chainage_of(&self, p: Point3) -> f64 {
        let last = self.legs.len() - 1;
        let mut best = (f64::INFINITY, 0.0);
        for (i, leg) in self.legs.iter().enumerate() {
            let (dx, dy) = (p[0] - leg.origin[0], p[1] - leg.origin[1]);
            let along = dx * leg.direction[0] + dy * leg.direction[1];
            let lo = if i == 0 { f64::NEG_INFINITY } else { 0.0 };
            let hi = if i == last { f64::INFINITY } else { leg.length };
            let t = along.clamp(lo, hi);
            let distance = (dx - t * leg.direction[0]).hypot(dy - t * leg.direction[1]);
            if distance < best.0 {
                best = (distance, leg.chainage + t);
            }
        }
        best.1
    }
}

/// Ground elevation (m) as a piecewise-linear function of the chainage along
/// a [`Route`]. Beyond the first and last profile points the elevation is
/// held constant.
#[derive(Debug, Clone, PartialEq)]
pub struct GroundProfile {
    route: Route,
    chainage: Vec<f64>,
    elevation: Vec<f64>,
}

impl GroundProfile {
    /// A profile along a straight route from the plan origin (m) in the plan
    /// direction `direction` with `(chainage m, elevation m)` points of
    /// strictly increasing chainage (at least one point).
    pub fn new(origin: [f64; 2], direction: [f64; 2], points: &[(f64, f64)]) -> Result<Self, ClearanceError> {
        Self::along(Route::straight(origin, direction)?, points)
    }

    /// A profile along `route` with points as in [`new`](Self::new).
    pub fn along(route: Route, points: &[(f64, f64)]) -> Result<Self, ClearanceError> {
        if points.is_empty() {
            return Err(ClearanceError::BadProfile("no profile points"));
        }
        if let Some(index) = points.iter().position(|(c, z)| !c.is_finite() || !z.is_finite()) {
            return Err(ClearanceError::NonFinite { index });
        }
        if points.windows(2).any(|w| w[1].0 <= w[0].0) {
            return Err(ClearanceError::BadProfile("chainages must increase strictly"));
        }
        Ok(Self {
            route,
            chainage: points.iter().map(|p| p.0).collect(),
            elevation: points.iter().map(|p| p.1).collect(),
        })
    }

    /// Chainage (m) of the plan position of `p`.
    pub fn chainage_of(&self, p: Point3) -> f64 {
        self.route.chainage_of(p)
    }

    /// Ground elevation (m) at chainage `c` (m).
    pub fn elevation_at(&self, c: f64) -> f64 {
        let (ch, el) = (&self.chainage, &self.elevation);
        let n = ch.len();
        if c <= ch[0] || c.is_nan() {
            return el[0];
        }
        if c >= ch[n - 1] {
            return el[n - 1];
        }
        let i = ch.partition_point(|&x| x <= c); // ch[i-1] <= c < ch[i]
        let w = (c - ch[i - 1]) / (ch[i] - ch[i - 1]);
        el[i - 1] + w * (el[i] - el[i - 1])
    }
}

/// Lowest vertical clearance of a polyline set above the ground.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GroundHit {
    /// Conductor elevation minus ground elevation under it, m (negative: below ground).
    pub clearance: f64,
    /// Polyline of the set.
    pub polyline: usize,
    /// Segment within that polyline.
    pub segment: usize,
    /// Parameter along that segment, in `[0, 1]`.
    pub s: f64,
    /// Conductor point, m.
    pub point: Point3,
    /// Chainage of the point, m.
    pub chainage: f64,
    /// Ground elevation under the point, m.
    pub ground_elevation: f64,
}

/// Minimum of (conductor elevation − ground elevation under it) over all
/// segments of `set`. Along a segment both the conductor elevation and the
/// chainage are linear in the parameter and the ground is piecewise linear
/// in chainage, so the clearance is piecewise linear and its minimum lies at
/// a segment end or where the segment passes over a profile point: exactly
/// those candidates are evaluated. (A segment whose ends lie nearest to two
/// legs of a turning route, a few metres at an angle tower, takes its
/// chainage as linear between its ends.) `None` for an empty set.
pub fn min_vertical_clearance(set: &PolylineSet, profile: &GroundProfile) -> Option<GroundHit> {
    let mut best: Option<GroundHit> = None;
    let mut consider = |polyline: usize, segment: usize, s: f64, point: Point3, c: f64, g: f64| {
        let clearance = point[2] - g;
        if best.is_none_or(|b| clearance < b.clearance) {
            best =
                Some(GroundHit { clearance, polyline, segment, s, point, chainage: c, ground_elevation: g });
        }
    };
    for k in 0..set.polyline_count() {
        let nodes = set.polyline(k)?;
        for (j, w) in nodes.windows(2).enumerate() {
            let (p, q) = (w[0], w[1]);
            let (c0, c1) = (profile.chainage_of(p), profile.chainage_of(q));
            consider(k, j, 0.0, p, c0, profile.elevation_at(c0));
            consider(k, j, 1.0, q, c1, profile.elevation_at(c1));
            let (lo, hi) = if c0 <= c1 { (c0, c1) } else { (c1, c0) };
            if hi > lo {
                let first = profile.chainage.partition_point(|&x| x <= lo);
                let last = profile.chainage.partition_point(|&x| x < hi);
                for i in first..last {
                    let ci = profile.chainage[i];
                    let s = ((ci - c0) / (c1 - c0)).clamp(0.0, 1.0);
                    consider(k, j, s, lerp(p, q, s), ci, profile.elevation[i]);
                }
            }
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::segment_distance::{dist, point_segment};
    use approx::assert_abs_diff_eq;

    /// Fixed LCG (Knuth MMIX constants), uniform in [-1, 1).
    struct Lcg(u64);
    impl Lcg {
        fn next(&mut self) -> f64 {
            self.0 = self.0.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            ((self.0 >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
        }
    }

    /// Reference: every segment pair.
    fn brute(a: &PolylineSet, b: &PolylineSet) -> ClearanceHit {
        let mut best: Option<ClearanceHit> = None;
        for ka in 0..a.polyline_count() {
            let pa = a.polyline(ka).unwrap();
            for ja in 0..pa.len() - 1 {
                for kb in 0..b.polyline_count() {
                    let pb = b.polyline(kb).unwrap();
                    for jb in 0..pb.len() - 1 {
                        let c = segment_segment(pa[ja], pa[ja + 1], pb[jb], pb[jb + 1]);
                        if best.is_none_or(|h| c.distance < h.distance) {
                            best = Some(ClearanceHit {
                                distance: c.distance,
                                polyline_a: ka,
                                segment_a: ja,
                                s: c.s,
                                polyline_b: kb,
                                segment_b: jb,
                                t: c.t,
                                point_a: c.point_p,
                                point_b: c.point_q,
                            });
                        }
                    }
                }
            }
        }
        best.unwrap()
    }

    /// Every property of `hit` against the reference `r` and the geometry.
    fn check_hit(hit: &ClearanceHit, r: &ClearanceHit, a: &PolylineSet, b: &PolylineSet) {
        assert_abs_diff_eq!(hit.distance, r.distance, epsilon = 1e-12);
        // the points are unique for generic geometry even where the indices
        // are not (a closest point at a shared node lies on two segments)
        assert_abs_diff_eq!(dist(hit.point_a, r.point_a), 0.0, epsilon = 1e-7);
        assert_abs_diff_eq!(dist(hit.point_b, r.point_b), 0.0, epsilon = 1e-7);
        assert!((0.0..=1.0).contains(&hit.s) && (0.0..=1.0).contains(&hit.t));
        let pa = a.polyline(hit.polyline_a).unwrap();
        let pb = b.polyline(hit.polyline_b).unwrap();
        assert!(hit.segment_a + 1 < pa.len() && hit.segment_b + 1 < pb.len());
        let xa = lerp(pa[hit.segment_a], pa[hit.segment_a + 1], hit.s);
        let xb = lerp(pb[hit.segment_b], pb[hit.segment_b + 1], hit.t);
        assert_abs_diff_eq!(dist(xa, hit.point_a), 0.0, epsilon = 1e-12);
        assert_abs_diff_eq!(dist(xb, hit.point_b), 0.0, epsilon = 1e-12);
        assert_abs_diff_eq!(dist(xa, xb), hit.distance, epsilon = 1e-12);
    }

    /// A sagging, galloping-like conductor (constructed): parabolic sag `sag`
    /// over span `l` along x, lateral offset `y0`, height `z0`, displaced by
    /// a standing wave of `loops` loops with vertical amplitude `av` and
    /// horizontal amplitude `ah` at phase `phase`.
    #[allow(clippy::too_many_arguments)]
    fn conductor(
        n: usize,
        l: f64,
        y0: f64,
        z0: f64,
        sag: f64,
        loops: f64,
        av: f64,
        ah: f64,
        phase: f64,
    ) -> Vec<Point3> {
        (0..=n)
            .map(|i| {
                let x = l * i as f64 / n as f64;
                let shape = (std::f64::consts::PI * loops * x / l).sin();
                [
                    x,
                    y0 + ah * shape * phase.sin(),
                    z0 - 4.0 * sag * x / l * (1.0 - x / l) + av * shape * phase.cos(),
                ]
            })
            .collect()
    }

    #[test]
    fn parallel_straight_phases_known_spacing() {
        // exact geometry: two horizontal straight phases 7.5 m apart in y.
        let a =
            PolylineSet::from_polylines(&[(0..=50).map(|i| [i as f64 * 4.0, 0.0, 20.0]).collect::<Vec<_>>()])
                .unwrap();
        let b =
            PolylineSet::from_polylines(&[(0..=37).map(|i| [i as f64 * 5.3, 7.5, 20.0]).collect::<Vec<_>>()])
                .unwrap();
        let hit = min_distance(&a, &b).unwrap();
        assert_abs_diff_eq!(hit.distance, 7.5, epsilon = 1e-12);
        assert_abs_diff_eq!(hit.point_b[1] - hit.point_a[1], 7.5, epsilon = 1e-12);
        assert_abs_diff_eq!(hit.point_b[0], hit.point_a[0], epsilon = 1e-9);
    }

    #[test]
    fn crossing_pair() {
        // exact geometry: a along x at z = 10, b along y at z = 10 crossing
        // at (12.5, 0, 10): distance 0 on a's segment 2 (nodes 10, 15) at
        // s = 0.5 and b's segment 1 (nodes y = −3, 6) at t = 1/3.
        let a = PolylineSet::from_polylines(&[vec![
            [0.0, 0.0, 10.0],
            [5.0, 0.0, 10.0],
            [10.0, 0.0, 10.0],
            [15.0, 0.0, 10.0],
            [20.0, 0.0, 10.0],
        ]])
        .unwrap();
        let b = PolylineSet::from_polylines(&[
            vec![[30.0, -5.0, 0.0], [30.0, 5.0, 0.0]],
            vec![[12.5, -9.0, 10.0], [12.5, -3.0, 10.0], [12.5, 6.0, 10.0]],
        ])
        .unwrap();
        let hit = min_distance(&a, &b).unwrap();
        assert_abs_diff_eq!(hit.distance, 0.0, epsilon = 1e-14);
        assert_eq!((hit.polyline_a, hit.segment_a), (0, 2));
        assert_eq!((hit.polyline_b, hit.segment_b), (1, 1));
        assert_abs_diff_eq!(hit.s, 0.5, epsilon = 1e-14);
        assert_abs_diff_eq!(hit.t, 1.0 / 3.0, epsilon = 1e-14);
        check_hit(&hit, &brute(&a, &b), &a, &b);
    }

    #[test]
    fn random_geometries_against_brute_force() {
        let mut rng = Lcg(0xC1EA_0002);
        let mut search = ClearanceSearch::new();
        for case in 0..60 {
            let make = |rng: &mut Lcg, count: usize| {
                let polylines: Vec<Vec<Point3>> = (0..count)
                    .map(|_| {
                        let n = 2 + ((rng.next() + 1.0) * 20.0) as usize;
                        let mut p = [5.0 * rng.next(), 5.0 * rng.next(), 5.0 * rng.next()];
                        (0..n)
                            .map(|_| {
                                p = [p[0] + rng.next(), p[1] + rng.next(), p[2] + rng.next()];
                                p
                            })
                            .collect()
                    })
                    .collect();
                PolylineSet::from_polylines(&polylines).unwrap()
            };
            let a = make(&mut rng, 1 + case % 3);
            let b = make(&mut rng, 1 + (case / 3) % 3);
            let hit = search.search(&a, &b).unwrap();
            check_hit(&hit, &brute(&a, &b), &a, &b);
        }
    }

    #[test]
    fn galloping_bundles_against_brute_force_over_time() {
        // constructed: two 4-subconductor bundles (0.45 m square) 6 m apart
        // vertically-ish, galloping in antiphase; positions updated in place.
        let bundle = |y0: f64, z0: f64, phase: f64| {
            let offsets = [[-0.225, -0.225], [0.225, -0.225], [0.225, 0.225], [-0.225, 0.225]];
            let polylines: Vec<Vec<Point3>> = offsets
                .iter()
                .map(|o| conductor(150, 300.0, y0 + o[0], z0 + o[1], 9.0, 1.0, 2.8, 0.9, phase))
                .collect();
            PolylineSet::from_polylines(&polylines).unwrap()
        };
        let mut a = bundle(0.0, 30.0, 0.0);
        let mut b = bundle(1.5, 24.0, std::f64::consts::PI);
        let mut search = ClearanceSearch::new();
        for step in 0..12 {
            let phase = step as f64 * 0.55;
            a.set_positions(bundle(0.0, 30.0, phase).positions()).unwrap();
            b.set_positions(bundle(1.5, 24.0, phase + 2.6).positions()).unwrap();
            let hit = search.search(&a, &b).unwrap();
            check_hit(&hit, &brute(&a, &b), &a, &b);
            let fresh = min_distance(&a, &b).unwrap();
            assert_abs_diff_eq!(fresh.distance, hit.distance, epsilon = 0.0);
        }
    }

    #[test]
    fn far_fewer_pairs_than_brute_force_on_long_line() {
        // constructed: 3 phases side by side 8 m apart, 2000 segments each,
        // sag 12 m on 400 m, galloping with different phases.
        let n = 2000;
        let phases: Vec<PolylineSet> = (0..3)
            .map(|k| {
                let c = conductor(n, 400.0, 8.0 * k as f64, 25.0, 12.0, 2.0, 3.0, 1.0, 1.3 * k as f64);
                PolylineSet::from_polylines(&[c]).unwrap()
            })
            .collect();
        let mut search = ClearanceSearch::new();
        for (i, j) in [(0, 1), (1, 2), (0, 2)] {
            let hit = search.search(&phases[i], &phases[j]).unwrap();
            let stats = search.stats();
            let all = (n * n) as u64;
            eprintln!("phases {i}-{j}: {stats:?} of {all} segment pairs");
            assert!(stats.segment_pairs * 200 < all && stats.box_pairs * 50 < all, "{stats:?} of {all}");
            check_hit(&hit, &brute(&phases[i], &phases[j]), &phases[i], &phases[j]);
        }
    }

    #[test]
    fn bad_input_is_an_error() {
        assert_eq!(
            PolylineSet::new(vec![[0.0; 3]; 3], vec![0, 2]),
            Err(ClearanceError::BadPolyline { polyline: 1 })
        );
        assert_eq!(
            PolylineSet::new(vec![[0.0; 3]; 3], vec![0, usize::MAX]),
            Err(ClearanceError::BadPolyline { polyline: 1 })
        );
        assert_eq!(
            PolylineSet::new(vec![[0.0; 3]; 3], vec![1]),
            Err(ClearanceError::BadPolyline { polyline: 0 })
        );
        assert_eq!(
            PolylineSet::new(vec![[0.0; 3], [f64::NAN, 0.0, 0.0]], vec![0]),
            Err(ClearanceError::NonFinite { index: 1 })
        );
        let mut set = PolylineSet::new(vec![[0.0; 3]; 2], vec![0]).unwrap();
        assert!(matches!(set.set_positions(&[[0.0; 3]]), Err(ClearanceError::LengthMismatch { .. })));
        let empty = PolylineSet::new(vec![], vec![]).unwrap();
        assert_eq!(empty.polyline_count(), 0);
        assert!(min_distance(&empty, &set).is_none());
        assert!(GroundProfile::new([0.0; 2], [0.0; 2], &[(0.0, 0.0)]).is_err());
        assert!(GroundProfile::new([0.0; 2], [1.0, 0.0], &[]).is_err());
        assert!(GroundProfile::new([0.0; 2], [1.0, 0.0], &[(1.0, 0.0), (1.0, 2.0)]).is_err());
        let flat = GroundProfile::new([0.0; 2], [1.0, 0.0], &[(0.0, 0.0)]).unwrap();
        assert!(min_vertical_clearance(&empty, &flat).is_none());
    }

    /// Chainage on a route that turns 90° left at (300, 0) and is 400 m
    /// long after the turn: by hand, a point beside a leg takes the foot of
    /// its perpendicular, beyond the last point the last leg goes on.
    #[test]
    fn chainage_along_a_turning_route() {
        let route = Route::through(&[[0.0, 0.0], [300.0, 0.0], [300.0, 400.0]]).unwrap();
        assert_abs_diff_eq!(route.chainage_of([120.0, -7.0, 30.0]), 120.0, epsilon = 1e-12);
        assert_abs_diff_eq!(route.chainage_of([295.0, 250.0, 30.0]), 550.0, epsilon = 1e-12);
        assert_abs_diff_eq!(route.chainage_of([300.0, 450.0, 0.0]), 750.0, epsilon = 1e-12);
        assert_abs_diff_eq!(route.chainage_of([-20.0, 1.0, 0.0]), -20.0, epsilon = 1e-12);
        // Outside the corner the tower's point is the nearest: chainage 300.
        assert_abs_diff_eq!(route.chainage_of([310.0, -10.0, 0.0]), 300.0, epsilon = 1e-12);
        let ground = GroundProfile::along(route, &[(0.0, 0.0), (700.0, 70.0)]).unwrap();
        assert_abs_diff_eq!(
            ground.elevation_at(ground.chainage_of([299.0, 200.0, 0.0])),
            50.0,
            epsilon = 1e-12
        );
        assert!(Route::through(&[[0.0, 0.0]]).is_err());
        assert!(Route::through(&[[1.0, 2.0], [1.0, 2.0]]).is_err());
    }

    #[test]
    fn ground_under_sagging_conductor() {
        // constructed: route along the plan direction (0.6, 0.8) from origin
        // (10, −5); conductor z = 20 − 10 + 10 ((c − 200)/200)² over chainage
        // 0…400, nodes every 400/7 m (no node at c = 200). Ground 0 except a
        // ridge peaking at 5 m at c = 200 (± 100 m).
        let (o, u) = ([10.0, -5.0], [0.6, 0.8]);
        let z = |c: f64| 10.0 + 10.0 * ((c - 200.0) / 200.0).powi(2);
        let nodes: Vec<Point3> = (0..=7)
            .map(|i| {
                let c = 400.0 * i as f64 / 7.0;
                [o[0] + c * u[0], o[1] + c * u[1], z(c)]
            })
            .collect();
        let set = PolylineSet::from_polylines(std::slice::from_ref(&nodes)).unwrap();
        let ridge = GroundProfile::new(
            o,
            [3.0, 4.0], // normalised to (0.6, 0.8)
            &[(-50.0, 0.0), (100.0, 0.0), (200.0, 5.0), (300.0, 0.0), (450.0, 0.0)],
        )
        .unwrap();
        let hit = min_vertical_clearance(&set, &ridge).unwrap();
        // constructed: the chord of segment 3 (c = 1200/7 … 1600/7) over the
        // ridge top at c = 200; by symmetry the chord is flat at z(1200/7).
        let expected = z(1200.0 / 7.0) - 5.0;
        assert_abs_diff_eq!(hit.clearance, expected, epsilon = 1e-10);
        assert_eq!((hit.polyline, hit.segment), (0, 3));
        assert_abs_diff_eq!(hit.s, 0.5, epsilon = 1e-12);
        assert_abs_diff_eq!(hit.chainage, 200.0, epsilon = 1e-10);
        assert_abs_diff_eq!(hit.ground_elevation, 5.0, epsilon = 1e-12);
        assert_abs_diff_eq!(hit.point[2] - hit.ground_elevation, hit.clearance, epsilon = 1e-12);
        // flat ground at 2 m with a node at the sag bottom: clearance 10 − 2
        // at the middle node (exact geometry, nodes every 50 m)
        let nodes8: Vec<Point3> = (0..=8)
            .map(|i| {
                let c = 50.0 * i as f64;
                [o[0] + c * u[0], o[1] + c * u[1], z(c)]
            })
            .collect();
        let set8 = PolylineSet::from_polylines(&[nodes8]).unwrap();
        let flat = GroundProfile::new(o, u, &[(0.0, 2.0)]).unwrap();
        let hit = min_vertical_clearance(&set8, &flat).unwrap();
        assert_abs_diff_eq!(hit.clearance, 8.0, epsilon = 1e-12);
        assert_abs_diff_eq!(hit.chainage, 200.0, epsilon = 1e-10);
        // dense sampling never goes below the returned minimum (constructed)
        for w in nodes.windows(2) {
            for i in 0..=1000 {
                let p = lerp(w[0], w[1], i as f64 / 1000.0);
                let g = ridge.elevation_at(ridge.chainage_of(p));
                assert!(p[2] - g >= hit.clearance.min(expected) - 1e-9);
            }
        }
    }

    #[test]
    fn ground_random_against_sampling() {
        let mut rng = Lcg(0x6A0D_0003);
        for _ in 0..40 {
            let pts: Vec<(f64, f64)> =
                (0..25).map(|i| (i as f64 * 20.0 + 5.0 * rng.next(), 3.0 * rng.next())).collect();
            let dir = [rng.next(), rng.next() + 1.5];
            let profile = GroundProfile::new([rng.next(), rng.next()], dir, &pts).unwrap();
            let polylines: Vec<Vec<Point3>> = (0..2)
                .map(|k| {
                    conductor(37, 480.0, 3.0 * k as f64, 18.0, 8.0, 3.0, 2.0, 1.0, rng.next())
                        .into_iter()
                        .map(|p| {
                            // rotate the span onto the route direction in plan
                            let n = dir[0].hypot(dir[1]);
                            let (ux, uy) = (dir[0] / n, dir[1] / n);
                            [p[0] * ux - p[1] * uy, p[0] * uy + p[1] * ux, p[2]]
                        })
                        .collect()
                })
                .collect();
            let set = PolylineSet::from_polylines(&polylines).unwrap();
            let hit = min_vertical_clearance(&set, &profile).unwrap();
            let pl = set.polyline(hit.polyline).unwrap();
            let x = lerp(pl[hit.segment], pl[hit.segment + 1], hit.s);
            assert_abs_diff_eq!(dist(x, hit.point), 0.0, epsilon = 1e-12);
            let g = profile.elevation_at(profile.chainage_of(x));
            assert_abs_diff_eq!(x[2] - g, hit.clearance, epsilon = 1e-9);
            // dense sampling: ≥ the minimum, and within the sampling error of it
            let mut sampled = f64::INFINITY;
            for k in 0..set.polyline_count() {
                for w in set.polyline(k).unwrap().windows(2) {
                    for i in 0..=400 {
                        let p = lerp(w[0], w[1], i as f64 / 400.0);
                        let c = p[2] - profile.elevation_at(profile.chainage_of(p));
                        assert!(c >= hit.clearance - 1e-9);
                        sampled = sampled.min(c);
                    }
                }
            }
            // slope of clearance ≤ ~1 m/m here, step ≤ 13 m / 400
            assert!(sampled - hit.clearance < 0.1);
        }
    }

    #[test]
    fn point_segment_consistent_with_hit() {
        // constructed: the closest point on b is the foot of point_a on b's segment
        let a =
            PolylineSet::from_polylines(&[conductor(40, 200.0, 0.0, 20.0, 6.0, 1.0, 1.0, 0.5, 0.3)]).unwrap();
        let b =
            PolylineSet::from_polylines(&[conductor(33, 200.0, 4.0, 17.0, 6.0, 2.0, 1.5, 0.7, 2.0)]).unwrap();
        let hit = min_distance(&a, &b).unwrap();
        let pb = b.polyline(hit.polyline_b).unwrap();
        let foot = point_segment(hit.point_a, pb[hit.segment_b], pb[hit.segment_b + 1]);
        assert_abs_diff_eq!(foot.distance, hit.distance, epsilon = 1e-9);
    }
}
