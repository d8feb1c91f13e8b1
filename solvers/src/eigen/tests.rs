//! Tests of the eigen solvers: closed forms, an independent condensed dense
//! reference for a singular mass matrix, and Lanczos against the dense path
//! on seeded random FE-like assemblies.

use faer::{Mat, Side};

use super::*;
use crate::test_util::Lcg;
use crate::{dense_shift_invert, lanczos_shift_invert, Assembler, SparsityPattern};

/// A symmetric pencil (K, M) on one pattern.
struct Problem {
    pattern: SparsityPattern,
    k: Vec<f64>,
    m: Vec<f64>,
}

impl Problem {
    fn n(&self) -> usize {
        self.pattern.dim()
    }
}

fn assemble(n: usize, groups: &[Vec<Option<usize>>], kl: &[Vec<f64>], ml: &[Vec<f64>]) -> Problem {
    let pattern = SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()));
    let asm = Assembler::new(&pattern, groups.iter().map(|g| g.as_slice()));
    let mut k = vec![0.0; pattern.nnz()];
    let mut m = vec![0.0; pattern.nnz()];
    for g in 0..groups.len() {
        asm.add_matrix(g, &kl[g], &mut k);
        asm.add_matrix(g, &ml[g], &mut m);
    }
    Problem { pattern, k, m }
}

/// Fixed–fixed chain of `n` masses `mass` (kg) joined by n + 1 springs `k` (N/m).
fn chain(n: usize, k: f64, mass: f64) -> Problem {
    let mut groups = vec![vec![None, Some(0)]];
    groups.extend((0..n - 1).map(|i| vec![Some(i), Some(i + 1)]));
    groups.push(vec![Some(n - 1), None]);
    let kl = vec![vec![k, -k, -k, k]; groups.len()];
    let mut ml = vec![vec![0.0; 4]; groups.len()];
    // Each spring element carries half of the mass of each of its nodes (every
    // node has two springs, so gets m).
    for (g, grp) in groups.iter().enumerate() {
        for (a, dof) in grp.iter().enumerate() {
            if dof.is_some() {
                ml[g][a * 2 + a] = 0.5 * mass;
            }
        }
    }
    Problem::from_parts(n, &groups, &kl, &ml)
}

impl Problem {
    fn from_parts(n: usize, groups: &[Vec<Option<usize>>], kl: &[Vec<f64>], ml: &[Vec<f64>]) -> Self {
        assemble(n, groups, kl, ml)
    }

    /// Dense copies (tests only).
    fn dense(&self, values: &[f64]) -> Mat<f64> {
        let n = self.n();
        let mut a = Mat::zeros(n, n);
        for j in 0..n {
            for idx in self.pattern.col_ptr()[j]..self.pattern.col_ptr()[j + 1] {
                a[(self.pattern.row_idx()[idx], j)] = values[idx];
            }
        }
        a
    }

    fn m_dot(&self, x: &[f64], y: &[f64]) -> f64 {
        let mut my = vec![0.0; self.n()];
        self.pattern.mul_vec(&self.m, y, &mut my);
        x.iter().zip(&my).map(|(a, b)| a * b).sum()
    }
}

/// Random m×r matrix G (row-major) and G Gᵀ (m×m, row-major): a random
/// positive semi-definite element matrix of rank r.
fn random_gram(rng: &mut Lcg, m: usize, r: usize, scale: f64) -> Vec<f64> {
    let g: Vec<f64> = (0..m * r).map(|_| rng.symmetric()).collect();
    let mut out = vec![0.0; m * m];
    for a in 0..m {
        for b in 0..m {
            out[a * m + b] = scale * (0..r).map(|c| g[a * r + c] * g[b * r + c]).sum::<f64>();
        }
    }
    out
}

/// Mass kind for the random problems.
#[derive(Clone, Copy, Debug)]
enum MassKind {
    /// Lumped: random positive nodal masses.
    Diagonal,
    /// Consistent-like: random positive definite element mass matrices.
    Consistent,
}

/// 1D chain of `nodes` nodes with 2 DOF each; each element couples two
/// neighbouring nodes by a random rank-3 4×4 stiffness (one rigid mode per
/// element, like a FE element), node 0 is tied to ground by a random 2×2 block.
fn block_chain(rng: &mut Lcg, nodes: usize, mass: MassKind) -> Problem {
    let n = 2 * nodes;
    let mut groups = vec![vec![Some(0), Some(1)]];
    let mut kl = vec![random_gram(rng, 2, 2, 1e3)];
    for e in 0..nodes - 1 {
        groups.push((2 * e..2 * e + 4).map(Some).collect());
        let scale = 1e3 * (0.5 + rng.uniform());
        kl.push(random_gram(rng, 4, 3, scale));
    }
    let ml = masses(rng, &groups, mass);
    assemble(n, &groups, &kl, &ml)
}

/// A "3D-like" random pattern: `elements` groups of 3–6 random DOF out of n
/// (local clustering so the graph resembles a mesh), each with a random
/// rank-deficient stiffness; a soft ground spring on every DOF.
fn random_mesh(rng: &mut Lcg, n: usize, elements: usize, mass: MassKind) -> Problem {
    let mut groups: Vec<Vec<Option<usize>>> = (0..n).map(|i| vec![Some(i)]).collect();
    let mut kl: Vec<Vec<f64>> = (0..n).map(|_| vec![1.0 + rng.uniform()]).collect();
    for _ in 0..elements {
        let size = 3 + rng.below(4);
        let centre = rng.below(n);
        let mut g = Vec::with_capacity(size);
        while g.len() < size {
            let off = rng.below(31) as isize - 15;
            let d = (centre as isize + off).rem_euclid(n as isize) as usize;
            if !g.contains(&Some(d)) {
                g.push(Some(d));
            }
        }
        let scale = 1e2 * (0.5 + rng.uniform());
        kl.push(random_gram(rng, size, size - 1, scale));
        groups.push(g);
    }
    let ml = masses(rng, &groups, mass);
    assemble(n, &groups, &kl, &ml)
}

fn masses(rng: &mut Lcg, groups: &[Vec<Option<usize>>], mass: MassKind) -> Vec<Vec<f64>> {
    groups
        .iter()
        .map(|g| {
            let s = g.len();
            match mass {
                MassKind::Diagonal => {
                    let mut d = vec![0.0; s * s];
                    for a in 0..s {
                        d[a * s + a] = 0.5 + rng.uniform();
                    }
                    d
                }
                MassKind::Consistent => {
                    let mut d = random_gram(rng, s, s, 0.3);
                    for a in 0..s {
                        d[a * s + a] += 0.2;
                    }
                    d
                }
            }
        })
        .collect()
}

/// Checks the common output conventions and returns the max residual. The
/// residual must be within `tol` or the rounding floor of its evaluation.
fn check_conventions(p: &Problem, r: &EigenPairs, tol: f64) -> f64 {
    let count = r.values.len();
    assert_eq!(r.vectors.len(), count);
    assert_eq!(r.residuals.len(), count);
    for w in r.values.windows(2) {
        assert!(w[0] <= w[1], "values not ascending: {:?}", r.values);
    }
    // M-orthonormality to 1e-10.
    for a in 0..count {
        for b in 0..=a {
            let d = p.m_dot(&r.vectors[a], &r.vectors[b]);
            let want = if a == b { 1.0 } else { 0.0 };
            assert!((d - want).abs() <= 1e-10, "φ{a}ᵀMφ{b} = {d:e}");
        }
    }
    // Residuals as reported and as recomputed.
    let mut worst = 0.0f64;
    let (mut kx, mut mx) = (vec![0.0; p.n()], vec![0.0; p.n()]);
    for i in 0..count {
        let (res, floor) =
            residual_and_floor(&p.pattern, &p.k, &p.m, r.values[i], &r.vectors[i], &mut kx, &mut mx);
        assert!((res - r.residuals[i]).abs() <= 1e-3 * res, "{res} vs {}", r.residuals[i]);
        assert!(res <= tol.max(floor), "pair {i}: residual {res:e} > {tol:e} (floor {floor:e})");
        worst = worst.max(res);
    }
    worst
}

/// Closed form of the fixed–fixed chain of n equal masses m and n + 1 equal
/// springs k: ω_j² = (4k/m) sin²(jπ / (2(n+1))), j = 1..n (a standard result,
/// e.g. any vibrations textbook; quoted from memory).
fn chain_closed_form(n: usize, k: f64, m: f64, j: usize) -> f64 {
    let s = (j as f64 * std::f64::consts::PI / (2.0 * (n as f64 + 1.0))).sin();
    4.0 * k / m * s * s
}

#[test]
fn dense_chain_matches_closed_form() {
    let (n, k, m) = (300, 2.5e4, 1.7);
    let p = chain(n, k, m);
    let r = dense_shift_invert(&p.pattern, &p.k, &p.m, &EigenSettings::new(20)).unwrap();
    check_conventions(&p, &r, 1e-12);
    for j in 0..20 {
        let exact = chain_closed_form(n, k, m, j + 1);
        let rel = (r.values[j] - exact).abs() / exact;
        // Dense shift-invert: relative error ~ ε·κ-ish, well under 1e-10 here.
        assert!(rel <= 1e-10, "mode {j}: {} vs {exact} ({rel:e})", r.values[j]);
    }
    // All n modes, the highest included.
    let r = dense_shift_invert(&p.pattern, &p.k, &p.m, &EigenSettings::new(n)).unwrap();
    let top = chain_closed_form(n, k, m, n);
    assert!((r.values[n - 1] - top).abs() <= 1e-10 * top);
}

/// Independent reference for a diagonal M with zero masses: static
/// condensation of the massless DOF (exact here, Guyan reduction with no mass
/// on the condensed DOF), K_c = K_rr − K_rn K_nn⁻¹ K_nr, then the standard
/// symmetric problem M_r^{-1/2} K_c M_r^{-1/2}.
fn condensed_reference(p: &Problem) -> Vec<f64> {
    let kd = p.dense(&p.k);
    let md = p.dense(&p.m);
    let n = p.n();
    let r: Vec<usize> = (0..n).filter(|&i| md[(i, i)] > 0.0).collect();
    let z: Vec<usize> = (0..n).filter(|&i| md[(i, i)] == 0.0).collect();
    let krr = Mat::from_fn(r.len(), r.len(), |a, b| kd[(r[a], r[b])]);
    let knn = Mat::from_fn(z.len(), z.len(), |a, b| kd[(z[a], z[b])]);
    let mut knr = Mat::from_fn(z.len(), r.len(), |a, b| kd[(z[a], r[b])]);
    let llt = knn.llt(Side::Lower).unwrap();
    let l = llt.L();
    l.solve_lower_triangular_in_place(&mut knr); // L⁻¹ K_nr
    let kc = Mat::from_fn(r.len(), r.len(), |a, b| {
        let corr: f64 = (0..z.len()).map(|c| knr[(c, a)] * knr[(c, b)]).sum();
        (krr[(a, b)] - corr) / (md[(r[a], r[a])] * md[(r[b], r[b])]).sqrt()
    });
    kc.self_adjoint_eigenvalues(Side::Lower).unwrap()
}

/// Random FE-like problem with some zero lumped masses.
fn with_zero_masses(rng: &mut Lcg, nodes: usize, every: usize) -> Problem {
    let mut p = block_chain(rng, nodes, MassKind::Diagonal);
    let diag = p.pattern.diagonal_indices();
    for (i, &d) in diag.iter().enumerate() {
        if i % every == 1 {
            p.m[d] = 0.0;
        }
    }
    p
}

#[test]
fn dense_singular_mass_matches_condensation() {
    let mut rng = Lcg::new(0xe16e_0001);
    let p = with_zero_masses(&mut rng, 60, 3);
    let finite = p.n() - (0..p.n()).filter(|i| i % 3 == 1).count();
    let reference = condensed_reference(&p);
    assert_eq!(reference.len(), finite);
    let r = dense_shift_invert(&p.pattern, &p.k, &p.m, &EigenSettings::new(20)).unwrap();
    check_conventions(&p, &r, 1e-11);
    for j in 0..20 {
        let rel = (r.values[j] - reference[j]).abs() / reference[j];
        assert!(rel <= 1e-9, "mode {j}: {} vs {} ({rel:e})", r.values[j], reference[j]);
    }
    // Every finite eigenvalue and no more.
    let r = dense_shift_invert(&p.pattern, &p.k, &p.m, &EigenSettings::new(finite)).unwrap();
    let top = reference[finite - 1];
    assert!((r.values[finite - 1] - top).abs() <= 1e-8 * top);
    let e = dense_shift_invert(&p.pattern, &p.k, &p.m, &EigenSettings::new(finite + 1));
    assert!(matches!(e, Err(SolverError::InvalidSettings { name: "count", .. })), "{e:?}");
}

#[test]
fn dense_shift_inside_spectrum() {
    let mut rng = Lcg::new(0xe16e_0002);
    let p = random_mesh(&mut rng, 120, 200, MassKind::Consistent);
    let all = dense_shift_invert(&p.pattern, &p.k, &p.m, &EigenSettings::new(60)).unwrap();
    let sigma = 0.5 * (all.values[9] + all.values[10]);
    let s = EigenSettings { shift: sigma, ..EigenSettings::new(15) };
    let r = dense_shift_invert(&p.pattern, &p.k, &p.m, &s).unwrap();
    check_conventions(&p, &r, 1e-10);
    for j in 0..15 {
        let rel = (r.values[j] - all.values[10 + j]).abs() / all.values[10 + j];
        assert!(rel <= 1e-10, "{j}: {rel:e}");
    }
}

#[test]
fn invalid_settings_and_singular_shift() {
    let p = chain(10, 1.0, 1.0);
    for count in [0, 11] {
        for solve in [dense_shift_invert, lanczos_shift_invert] {
            let e = solve(&p.pattern, &p.k, &p.m, &EigenSettings::new(count));
            assert!(matches!(e, Err(SolverError::InvalidSettings { name: "count", .. })), "{e:?}");
        }
    }
    // σ at the lowest eigenvalue (to rounding): K − σM is singular. The
    // dense path either reports it or (Cholesky failed on a rounding-negative
    // pivot) factorises lower and returns the eigenvalues strictly above σ.
    let s = EigenSettings { shift: chain_closed_form(10, 1.0, 1.0, 1), ..EigenSettings::new(3) };
    match dense_shift_invert(&p.pattern, &p.k, &p.m, &s) {
        Err(SolverError::Singular { .. }) => {}
        Ok(r) => assert!((r.values[0] - chain_closed_form(10, 1.0, 1.0, 2)).abs() < 1e-12),
        Err(e) => panic!("{e}"),
    }
    // K and M share a null vector (an equation with no stiffness and no
    // mass): K − σM is singular for every σ.
    let mut q = chain(10, 1.0, 1.0);
    for j in 0..10 {
        for idx in q.pattern.col_ptr()[j]..q.pattern.col_ptr()[j + 1] {
            if j == 4 || q.pattern.row_idx()[idx] == 4 {
                q.k[idx] = 0.0;
                q.m[idx] = 0.0;
            }
        }
    }
    let e = dense_shift_invert(&q.pattern, &q.k, &q.m, &EigenSettings::new(3));
    assert!(matches!(e, Err(SolverError::Singular { .. })), "{e:?}");
}
