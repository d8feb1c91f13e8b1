//! The plan of a tension section's route: a polyline through the towers
//! that turns by each tower's line angle.
//!
//! Span `s` runs from tower `s` to `s + 1` along the heading
//! `h_s = a_1 + … + a_s` from +X (the first span lies along +X); its plan
//! length is the chainage difference. Each tower's crossarm lies on the
//! bisector of the route there, as on an angle tower: `along` is the mean
//! of the headings in and out (at an end tower the route is taken to turn
//! by its own line angle into the next section), `across` is `z × along`
//! (to the left), and attachment offsets and tower stiffness are given in
//! that frame. Angles are positive turning left (counter-clockwise seen
//! from above).

use crate::spec::TensionSection;
use nalgebra::Vector3;

/// Plan geometry of a route (vectors horizontal, `z = 0`).
#[derive(Clone, Debug)]
pub(crate) struct RoutePlan {
    /// Route point of each tower (chainage 0 at the origin), in m.
    pub points: Vec<Vector3<f64>>,
    /// Unit plan direction of each span.
    pub span_direction: Vec<Vector3<f64>>,
    /// Unit bisector of the route at each tower, forward.
    pub along: Vec<Vector3<f64>>,
    /// Unit crossarm direction at each tower (`z × along`).
    pub across: Vec<Vector3<f64>>,
}

impl RoutePlan {
    pub fn of(section: &TensionSection) -> RoutePlan {
        let towers = &section.towers;
        let unit = |h: f64| Vector3::new(h.cos(), h.sin(), 0.0);
        let mut heading = -towers[0].line_angle;
        let mut points = vec![Vector3::zeros()];
        let (mut along, mut across, mut span_direction) = (Vec::new(), Vec::new(), Vec::new());
        for (t, tower) in towers.iter().enumerate() {
            let bisector = heading + 0.5 * tower.line_angle;
            heading += tower.line_angle;
            along.push(unit(bisector));
            across.push(Vector3::z().cross(&unit(bisector)));
            if t + 1 < towers.len() {
                let d = unit(heading);
                points.push(points[t] + d * section.span_length(t));
                span_direction.push(d);
            }
        }
        RoutePlan { points, span_direction, along, across }
    }

    /// Point of tower `t`'s crossarm `across` m to the left of the route, `z` m up.
    pub fn at(&self, t: usize, across: f64, z: f64) -> Vector3<f64> {
        self.points[t] + self.across[t] * across + Vector3::z() * z
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Closed-form plan of a polyline: heading sums and the bisector.
    #[test]
    fn headings_add_and_crossarms_bisect_the_angle() {
        let a = 20f64.to_radians();
        let plan = |angles: [f64; 3]| {
            let mut towers = Vec::new();
            for (t, (c, la)) in [0.0, 300.0, 700.0].into_iter().zip(angles).enumerate() {
                towers.push(crate::spec::Tower {
                    name: format!("T{t}"),
                    chainage: c,
                    ground: 0.0,
                    kind: crate::spec::TowerKind::Suspension,
                    insulator: None,
                    attachments: Vec::new(),
                    stiffness: None,
                    line_angle: la,
                });
            }
            RoutePlan::of(&TensionSection {
                insulators: Vec::new(),
                towers,
                phases: Vec::new(),
                ground_profile: Vec::new(),
                spacers: None,
                layout: "none".into(),
                devices: Vec::new(),
            })
        };
        let p = plan([0.0, a, 0.0]);
        assert!((p.points[1] - Vector3::new(300.0, 0.0, 0.0)).norm() < 1e-12);
        let second = p.points[1] + Vector3::new(a.cos(), a.sin(), 0.0) * 400.0;
        assert!((p.points[2] - second).norm() < 1e-12);
        assert!((p.along[1] - Vector3::new((a / 2.0).cos(), (a / 2.0).sin(), 0.0)).norm() < 1e-15);
        assert!((p.across[1] - Vector3::new(-(a / 2.0).sin(), (a / 2.0).cos(), 0.0)).norm() < 1e-15);
        // An angle at the first tower turns only its crossarm.
        let q = plan([a, 0.0, 0.0]);
        assert!((q.span_direction[0] - Vector3::x()).norm() < 1e-15);
        assert!((q.along[0].y + (a / 2.0).sin()).abs() < 1e-15);
    }
}
