//! 3D two-node corotational Euler–Bernoulli beam.
//!
//! Formulation of Battini & Pacoste (2002), "Co-rotational beam elements
//! with warping effects in instability problems", CMAME 191, 1755–1789
//! (without the warping DOF), which builds on Crisfield (1990), "A
//! consistent co-rotational formulation for non-linear, three-dimensional,
//! beam-elements", CMAME 81, 131–150. Notation follows Battini & Pacoste:
//!
//! - current element frame `R_r = [r1 r2 r3]`: `r1 = (x2 − x1)/l`,
//!   `r3 = r1 × q / |r1 × q|`, `r2 = r3 × r1`, with the auxiliary vector
//!   `q = ½ (R1 R0 e2 + R2 R0 e2)` (mean of the nodal y axes; `R0` is the
//!   reference element frame and `Ri` the total nodal rotations);
//! - local rotations `R̄i = R_rᵀ Ri R0`, `θ̄i = log(R̄i)`, and elongation
//!   `ū = l − Lt`;
//! - variations `δd_l = [δū, δθ̄s1, δθ̄s2] = B δd_g` with
//!   `B = [r; P Eᵀ]`, `P = [0 I 0 0; 0 0 0 I] − [Gᵀ; Gᵀ]`,
//!   `E = diag(R_r, R_r, R_r, R_r)`, where `Gᵀ` gives the spin of the
//!   element frame (their matrix G, re-derived below), and
//!   `δd_a = B_a δd_l`, `B_a = diag(1, T_s⁻¹(θ̄1), T_s⁻¹(θ̄2))`;
//! - internal force `f_g = Bᵀ B_aᵀ f_a` and the consistent tangent
//!   `K_g = Bᵀ (B_aᵀ K_a B_a + K_h) B + (terms from δE and δG)`, with
//!   `K_h = diag(0, K_h1, K_h2)` the derivative of `T_s⁻ᵀ(θ̄i) m̄i`
//!   ([`so3::tangent_inv_transpose_derivative`]).
//!
//! Every geometric term is kept, including the variation of the ratios
//! `η = q̄1/q̄2`, `η_ij = q̄ij/q̄2` inside G. The matrices are re-derived
//! here from the definitions above rather than transcribed (equation
//! numbers of the paper are therefore not quoted), and the unit tests check
//! force and tangent against central differences. The local response is in
//! [`local`].

mod local;

use crate::error::{finite, non_negative, positive, ElementError};
use crate::{so3, Element, ElementContext, ElementOutput, NodeState};
use nalgebra::{Matrix3, SMatrix, SVector, Vector3};

type Mat12 = SMatrix<f64, 12, 12>;
type Vec12 = SVector<f64, 12>;

/// Section properties of a beam element.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BeamSection {
    /// Axial stiffness E·A, in N.
    pub ea: f64,
    /// Bending stiffness about the local y axis E·I_y, in N·m².
    pub ei_y: f64,
    /// Bending stiffness about the local z axis E·I_z, in N·m².
    pub ei_z: f64,
    /// Torsional stiffness G·J, in N·m².
    pub gj: f64,
    /// Mass per unstretched length, in kg/m.
    pub mass_per_length: f64,
    /// Mass polar moment of inertia per length (about the axis), in kg·m.
    pub polar_inertia_per_length: f64,
    /// Coefficient of linear thermal expansion α, in 1/K.
    pub thermal_expansion: f64,
    /// Whether to add the bowing (shallow-arch) axial strain from bending.
    pub bowing: bool,
    /// Coupling stiffness C between axial strain and twist per length, in
    /// N·m (`N = EA ε + C κ`, `T = GJ κ + C ε`); 0 for none. Must satisfy
    /// `C² < EA·GJ`.
    pub axial_torsion_coupling: f64,
}

/// Two-node 3D corotational Euler–Bernoulli beam (Battini & Pacoste 2002).
///
/// Axial strain is measured on the temperature-scaled unstretched length
/// `Lt = L0 (1 + α ΔT)`: `N = EA (l − Lt)/Lt` (plus bowing and coupling
/// when on), the same law as [`crate::Cable`]. Bending and torsion use the
/// reference chord `L = |X2 − X1|`.
#[derive(Clone, Debug, PartialEq)]
pub struct CorotationalBeam {
    nodes: [usize; 2],
    unstretched_length: f64,
    reference_length: f64,
    /// Reference element frame `R0 = [e1 e2 e3]` (columns), dimensionless.
    frame0: Matrix3<f64>,
    /// Rest rotation of each end's triad relative to `R0` (identity for a
    /// straight element; see [`CorotationalBeam::with_end_tangents`]).
    end_offset: [Matrix3<f64>; 2],
    /// `log(end_offset)`: the local rotations at rest, rad.
    rest_theta: [Vector3<f64>; 2],
    section: BeamSection,
}

/// Current-configuration kinematics of the element.
struct Kinematics {
    /// Element frame `R_r` (columns r1, r2, r3).
    rr: Matrix3<f64>,
    /// Current chord length, m.
    l: f64,
    /// Local rotation vectors θ̄1, θ̄2, rad.
    theta: [Vector3<f64>; 2],
    /// Local components of q (third is zero).
    q: Vector3<f64>,
    /// Local components of the nodal y axes q1, q2.
    qi: [Vector3<f64>; 2],
}

const KIND: &str = "beam";

impl CorotationalBeam {
    /// Beam between `nodes` with reference positions `x0` (m), unstretched
    /// length `unstretched_length` (m, at the reference temperature), and
    /// `reference_y`, any vector not parallel to the axis: its component
    /// orthogonal to the axis is the local y axis in the reference
    /// configuration. Fails on a zero length, non-positive EA, EI or GJ,
    /// negative mass or inertia, `C² ≥ EA·GJ` or a parallel reference vector.
    pub fn new(
        nodes: [usize; 2],
        x0: [Vector3<f64>; 2],
        unstretched_length: f64,
        reference_y: Vector3<f64>,
        section: BeamSection,
    ) -> Result<Self, ElementError> {
        positive(KIND, "unstretched_length", unstretched_length)?;
        let chord = x0[1] - x0[0];
        positive(KIND, "|x0[1] - x0[0]|", chord.norm())?;
        positive(KIND, "ea", section.ea)?;
        positive(KIND, "ei_y", section.ei_y)?;
        positive(KIND, "ei_z", section.ei_z)?;
        positive(KIND, "gj", section.gj)?;
        non_negative(KIND, "mass_per_length", section.mass_per_length)?;
        non_negative(KIND, "polar_inertia_per_length", section.polar_inertia_per_length)?;
        finite(KIND, "thermal_expansion", section.thermal_expansion)?;
        let c = finite(KIND, "axial_torsion_coupling", section.axial_torsion_coupling)?;
        if c * c >= section.ea * section.gj {
            return Err(ElementError::InvalidValue {
                kind: KIND,
                parameter: "axial_torsion_coupling",
                value: c,
                expected: "|C| < sqrt(EA·GJ) (positive definite strain energy)",
            });
        }
        let e1 = chord.normalize();
        let y = reference_y - e1 * e1.dot(&reference_y);
        let sine = y.norm() / reference_y.norm();
        if sine.is_nan() || sine <= 1e-6 {
            return Err(ElementError::ParallelReference { sine });
        }
        let e2 = y.normalize();
        let e3 = e1.cross(&e2);
        Ok(Self {
            nodes,
            unstretched_length,
            reference_length: chord.norm(),
            frame0: Matrix3::from_columns(&[e1, e2, e3]),
            end_offset: [Matrix3::identity(); 2],
            rest_theta: [Vector3::zeros(); 2],
            section,
        })
    }

    /// The same element, initially curved: at rest its ends are tangent to
    /// `tangents` (global, any length) instead of to the chord. A conductor
    /// meshed as a polygon of chords has a kink at every node; with the
    /// nodal tangent taken as the bisector of the two chords, a rotation of
    /// a node about that tangent is a pure twist of both elements. Without
    /// it the rigid joint swings each chord's end sideways by half the kink
    /// angle times the twist, which the bowing term charges at the tension
    /// (`≈ N L/24 (κ L)²` per unit twist² and element, thirty to a hundred
    /// times a conductor's own torsional stiffness in a sagging span meshed
    /// at 10 m). Bending and twist are measured from the rest state; the
    /// bowing strain is `b(θ̄) − b(θ̄⁰)`, invariant under a common twist of
    /// both ends (it depends on the end slopes only through `2|θ̄1|² −
    /// θ̄1·θ̄2 + 2|θ̄2|²` over both planes). Under tension the rest arc has
    /// end moments: in a model they are the consistent end loads of the
    /// weight the arc carries (`∓ q L²/12`), which the model builder adds
    /// (`model::curvature_loads`). Long elements of a torsionally soft
    /// conductor then lose stability in twist (40 m elements of a 400 m
    /// span), and `model::build` warns above 20 m. Fails if a tangent is
    /// more than 30° from the chord.
    pub fn with_end_tangents(mut self, tangents: [Vector3<f64>; 2]) -> Result<Self, ElementError> {
        let e1 = Vector3::x();
        for (i, t) in tangents.iter().enumerate() {
            let local = self.frame0.transpose() * t;
            let n = local.norm();
            if !(n.is_finite() && n > 0.0) {
                return Err(ElementError::InvalidValue {
                    kind: KIND,
                    parameter: "end_tangent",
                    value: n,
                    expected: "a non-zero finite vector",
                });
            }
            let local = local / n;
            let axis = e1.cross(&local);
            let angle = axis.norm().atan2(e1.dot(&local));
            if angle > 30f64.to_radians() {
                return Err(ElementError::InvalidValue {
                    kind: KIND,
                    parameter: "end_tangent",
                    value: angle.to_degrees(),
                    expected: "an end tangent within 30 degrees of the chord",
                });
            }
            let v = if axis.norm() > 0.0 { axis * (angle / axis.norm()) } else { Vector3::zeros() };
            self.end_offset[i] = so3::exp(&v);
            self.rest_theta[i] = v;
        }
        Ok(self)
    }

    /// The section data.
    pub fn section(&self) -> &BeamSection {
        &self.section
    }

    /// Reference chord length `|X2 − X1|`, in m.
    pub fn reference_length(&self) -> f64 {
        self.reference_length
    }

    /// Reference element frame `[e1 e2 e3]` (columns: axis, local y, local z).
    pub fn reference_frame(&self) -> Matrix3<f64> {
        self.frame0
    }

    fn kinematics(&self, nodes: &[NodeState]) -> Kinematics {
        let d = nodes[1].x - nodes[0].x;
        let l = d.norm();
        let r1 = d / l;
        let e2 = self.frame0.column(1).into_owned();
        let qg = [nodes[0].rotation * e2, nodes[1].rotation * e2];
        let q = (qg[0] + qg[1]) * 0.5;
        let r3 = r1.cross(&q).normalize();
        let r2 = r3.cross(&r1);
        let rr = Matrix3::from_columns(&[r1, r2, r3]);
        let theta = [0, 1]
            .map(|i| so3::log(&(rr.transpose() * nodes[i].rotation * self.frame0 * self.end_offset[i])));
        Kinematics { rr, l, theta, q: rr.transpose() * q, qi: qg.map(|v| rr.transpose() * v) }
    }

    fn lt(&self, ctx: &ElementContext) -> f64 {
        self.unstretched_length * (1.0 + self.section.thermal_expansion * ctx.temperature_change)
    }

    fn local(&self, ctx: &ElementContext, kin: &Kinematics) -> local::LocalResponse {
        local::response(
            &self.section,
            kin.l,
            self.lt(ctx),
            self.reference_length,
            &kin.theta[0],
            &kin.theta[1],
            &self.rest_theta,
        )
    }

    /// Force, and the tangent if `k` is given, in global components.
    fn evaluate(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64], k: Option<&mut [f64]>) {
        let kin = self.kinematics(nodes);
        let loc = self.local(ctx, &kin);
        let gt = frame_spin(&kin);
        let b = projector(&gt);
        let tinv = kin.theta.map(|t| so3::tangent_inv(&t));

        // f_l = B_aᵀ f_a: [N, m1, m2] with mi = T_s⁻ᵀ(θ̄i) m̄i.
        let mbar = [loc.f.fixed_rows::<3>(1).into_owned(), loc.f.fixed_rows::<3>(4).into_owned()];
        let m = [tinv[0].transpose() * mbar[0], tinv[1].transpose() * mbar[1]];
        let mut fl = SVector::<f64, 7>::zeros();
        fl[0] = loc.f[0];
        fl.fixed_rows_mut::<3>(1).copy_from(&m[0]);
        fl.fixed_rows_mut::<3>(4).copy_from(&m[1]);
        let floc: Vec12 = b.transpose() * fl;

        let to_global = |v: &Vec12, out: &mut [f64]| {
            for blk in 0..4 {
                let g = kin.rr * v.fixed_rows::<3>(3 * blk);
                out[3 * blk..3 * blk + 3].copy_from_slice(g.as_slice());
            }
        };
        to_global(&floc, f);
        let Some(k) = k else { return };

        // K_l = B_aᵀ K_a B_a + diag(0, K_h1, K_h2).
        let mut ba = SMatrix::<f64, 7, 7>::identity();
        ba.fixed_view_mut::<3, 3>(1, 1).copy_from(&tinv[0]);
        ba.fixed_view_mut::<3, 3>(4, 4).copy_from(&tinv[1]);
        let mut kl = ba.transpose() * loc.k * ba;
        for i in 0..2 {
            let kh = so3::tangent_inv_transpose_derivative(&kin.theta[i], &mbar[i]) * tinv[i];
            let mut blk = kl.fixed_view_mut::<3, 3>(1 + 3 * i, 1 + 3 * i);
            blk += kh;
        }
        let mut kloc: Mat12 = b.transpose() * kl * b;

        // Rotation of the frame acting on the whole local force: −Q Gᵀ,
        // Q = [f̂_1; f̂_2; f̂_3; f̂_4] (this also yields the N D term).
        for blk in 0..4 {
            let q = so3::skew(&floc.fixed_rows::<3>(3 * blk).into_owned());
            let mut rows = kloc.fixed_rows_mut::<3>(3 * blk);
            rows -= q * gt;
        }
        // Variation of G at fixed moments: −Σ_k a_k ∂g_k/∂d, a = m1 + m2.
        kloc -= frame_spin_derivative(&kin, &gt, &(m[0] + m[1]));

        // K_g = E K_loc Eᵀ.
        for bi in 0..4 {
            for bj in 0..4 {
                let blk = kin.rr * kloc.fixed_view::<3, 3>(3 * bi, 3 * bj) * kin.rr.transpose();
                for i in 0..3 {
                    for j in 0..3 {
                        k[(3 * bi + i) * 12 + 3 * bj + j] = blk[(i, j)];
                    }
                }
            }
        }
    }
}

/// `Gᵀ` (3 × 12, local components): the spin ω of the element frame is
/// `ω = Gᵀ δd` for local-component increments `δd = Eᵀ δd_g`. Re-derived
/// from `r3 · q = 0`: `ω2 = −r3·(δu2 − δu1)/l`, `ω3 = r2·(δu2 − δu1)/l`,
/// `ω1 = η ω2 + ½ Σi (ηi2 δw̄ix − ηi1 δw̄iy)` with `η = q̄x/q̄y` and
/// `ηij = q̄ij/q̄y` (Battini & Pacoste's G with their q components).
fn frame_spin(kin: &Kinematics) -> SMatrix<f64, 3, 12> {
    let (l, qy) = (kin.l, kin.q.y);
    let eta = kin.q.x / qy;
    let mut gt = SMatrix::<f64, 3, 12>::zeros();
    gt[(0, 2)] = eta / l;
    gt[(0, 8)] = -eta / l;
    for i in 0..2 {
        gt[(0, 3 + 6 * i)] = 0.5 * kin.qi[i].y / qy;
        gt[(0, 4 + 6 * i)] = -0.5 * kin.qi[i].x / qy;
    }
    gt[(1, 2)] = 1.0 / l;
    gt[(1, 8)] = -1.0 / l;
    gt[(2, 1)] = -1.0 / l;
    gt[(2, 7)] = 1.0 / l;
    gt
}

/// `B = [r̄; P]` (7 × 12, local components) with `r̄ = [−e1ᵀ 0 e1ᵀ 0]` and
/// `P = [0 I 0 0; 0 0 0 I] − [Gᵀ; Gᵀ]`.
fn projector(gt: &SMatrix<f64, 3, 12>) -> SMatrix<f64, 7, 12> {
    let mut b = SMatrix::<f64, 7, 12>::zeros();
    b[(0, 0)] = -1.0;
    b[(0, 6)] = 1.0;
    for i in 0..2 {
        for c in 0..3 {
            b[(1 + 3 * i + c, 3 + 6 * i + c)] = 1.0;
        }
        let mut rows = b.fixed_rows_mut::<3>(1 + 3 * i);
        rows -= gt;
    }
    b
}

/// `Σ_k a_k ∂g_k/∂d` (12 × 12, local components), `g_k` the k-th column
/// of G. Uses `δl = r̄ δd`, and for the nodal y axes
/// `δq̄i = (δw̄i − ω) × q̄i`, i.e. `δq̄i = −q̄̂i (Si − Gᵀ) δd`.
fn frame_spin_derivative(kin: &Kinematics, gt: &SMatrix<f64, 3, 12>, a: &Vector3<f64>) -> Mat12 {
    let l = kin.l;
    let qy = kin.q.y;
    let eta = kin.q.x / qy;
    let mut rbar = SMatrix::<f64, 1, 12>::zeros();
    rbar[0] = -1.0;
    rbar[6] = 1.0;

    // J_i = ∂q̄i/∂d and J = ∂q̄/∂d.
    let ji = [0, 1].map(|i| {
        let mut s_minus_g = -gt;
        for c in 0..3 {
            s_minus_g[(c, 3 + 6 * i + c)] += 1.0;
        }
        -so3::skew(&kin.qi[i]) * s_minus_g
    });
    let j = (ji[0] + ji[1]) * 0.5;
    let dqy = j.row(1).into_owned();
    let deta = (j.row(0) - dqy * eta) / qy;
    let deta_over_l = deta / l - rbar * (eta / (l * l));

    let mut out = Mat12::zeros();
    // k = 1: g1 = (η/l)(e2 − e8) + ½ Σi (ηi2 e_{3+6i} − ηi1 e_{4+6i}).
    for c in 0..12 {
        out[(2, c)] += a.x * deta_over_l[c];
        out[(8, c)] -= a.x * deta_over_l[c];
    }
    for i in 0..2 {
        let deta_i1 = (ji[i].row(0) - dqy * (kin.qi[i].x / qy)) / qy;
        let deta_i2 = (ji[i].row(1) - dqy * (kin.qi[i].y / qy)) / qy;
        for c in 0..12 {
            out[(3 + 6 * i, c)] += 0.5 * a.x * deta_i2[c];
            out[(4 + 6 * i, c)] -= 0.5 * a.x * deta_i1[c];
        }
    }
    // k = 2, 3: g depends on l only, ∂g/∂d = −g r̄ / l.
    for (k, ak) in [(1, a.y), (2, a.z)] {
        let g = gt.row(k).transpose();
        out -= g * rbar * (ak / l);
    }
    out
}

impl Element for CorotationalBeam {
    fn kind(&self) -> &'static str {
        KIND
    }

    fn nodes(&self) -> &[usize] {
        &self.nodes
    }

    fn uses_rotations(&self) -> bool {
        true
    }

    fn internal_force(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64]) {
        self.evaluate(ctx, nodes, f, None);
    }

    fn tangent(&self, ctx: &ElementContext, nodes: &[NodeState], f: &mut [f64], k: &mut [f64]) {
        self.evaluate(ctx, nodes, f, Some(k));
    }

    /// Lumped mass (HRZ lumping; Hinton, Rock & Zienkiewicz 1976, EESD 4):
    /// `μ L0/2` per node on the translations; per node a rotational inertia
    /// `F diag(ρIp L0/2, μ L0³/78, μ L0³/78) Fᵀ` (kg·m²) in global axes, F
    /// the end's frame (`R0`, turned to the nodal tangent when curved),
    /// where `μ L0³/78` is the HRZ-scaled diagonal `4L²` entry of the
    /// consistent Euler–Bernoulli mass matrix (`μL/420 · 4L²` scaled by
    /// `μL / (μL/420 · 312)`).
    fn lumped_mass(&self, _nodes: &[NodeState], m: &mut [f64]) {
        m[..144].fill(0.0);
        let (mu, l0) = (self.section.mass_per_length, self.unstretched_length);
        let half = 0.5 * mu * l0;
        let diagonal = Matrix3::from_diagonal(&Vector3::new(
            0.5 * self.section.polar_inertia_per_length * l0,
            mu * l0.powi(3) / 78.0,
            mu * l0.powi(3) / 78.0,
        ));
        for node in 0..2 {
            // About the end's own axes (the nodal tangent of a curved
            // element), so that a twist about the tangent sees only the polar
            // inertia and not the far larger lumped bending inertia.
            let frame = self.frame0 * self.end_offset[node];
            let inertia = frame * diagonal * frame.transpose();
            let o = 6 * node;
            for i in 0..3 {
                m[(o + i) * 12 + o + i] = half;
                for j in 0..3 {
                    m[(o + 3 + i) * 12 + o + 3 + j] = inertia[(i, j)];
                }
            }
        }
    }

    /// Axial force N, torque T, and the end moments about local y and z as
    /// the conjugates of the local rotations (the moments the nodes apply
    /// to the element; a uniform bending moment M about z reads `[−M, M]`).
    fn strain_energy(&self, ctx: &ElementContext, nodes: &[NodeState]) -> f64 {
        self.local(ctx, &self.kinematics(nodes)).energy
    }

    fn output(&self, ctx: &ElementContext, nodes: &[NodeState]) -> ElementOutput {
        let kin = self.kinematics(nodes);
        let loc = self.local(ctx, &kin);
        ElementOutput {
            axial_force: loc.axial_force,
            torque: loc.torque,
            bending_moment_y: [loc.f[2], loc.f[5]],
            bending_moment_z: [loc.f[3], loc.f[6]],
            axial_strain: loc.strain,
        }
    }

    fn unstretched_length(&self) -> f64 {
        self.unstretched_length
    }

    fn mass_per_length(&self) -> f64 {
        self.section.mass_per_length
    }
}

#[cfg(test)]
mod tests;
