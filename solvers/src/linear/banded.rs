//! Banded LU with partial pivoting: a dense-band baseline beside the sparse
//! [`SparseDirect`](crate::SparseDirect).
//!
//! The matrix is permuted symmetrically, $\tilde A = P A P^\top$
//! ([`BandOrdering`]), stored in LAPACK band storage with room for the fill
//! of row interchanges, and factored $\Pi \tilde A = L U$ by the unblocked
//! right-looking algorithm of LAPACK `dgbtf2`; solves follow `dgbtrs`
//! (Anderson et al., *LAPACK Users' Guide*, 3rd ed., SIAM 1999, §5.3.2 band
//! storage; Golub & Van Loan, *Matrix Computations*, 4th ed. 2013, §4.3.5:
//! with partial pivoting U has upper bandwidth kl + ku, L keeps kl).
//!
//! Cost: memory (2 kl + ku + 1) · n values; factorisation about
//! 2 n kl (kl + ku) flops, each solve about 2 n (2 kl + ku) flops.

use super::ordering::inverse_permutation;
use super::{BandOrdering, FactorStats, Factorisation, LinearSolver};
use crate::{SolverError, SparsityPattern};

/// LU with partial pivoting of a band matrix in LAPACK band storage
/// (`dgbtf2`/`dgbtrs`, Anderson et al., *LAPACK Users' Guide*, 3rd ed. 1999),
/// after a symmetric bandwidth-reducing permutation. Factor and solve do not
/// allocate.
///
/// A pivot of magnitude at most n · ε · max|a_ij| (zero included) is
/// reported as [`SolverError::Singular`] with the equation (original
/// numbering) of that elimination step.
///
/// ```
/// use glaze_solvers::{BandOrdering, BandedLu, Factorisation, LinearSolver, SparsityPattern};
/// // Two springs k = 100 N/m in series, fixed at one end: K = [[200, -100], [-100, 100]].
/// let groups: [&[Option<usize>]; 2] = [&[None, Some(0)], &[Some(0), Some(1)]];
/// let pattern = SparsityPattern::from_dof_groups(2, groups);
/// let mut solver = BandedLu::new(&pattern, BandOrdering::ReverseCuthillMcKee);
/// assert_eq!(solver.bandwidths(), (1, 1));
/// let values = [200.0, -100.0, -100.0, 100.0]; // column-major on the 2×2 pattern
/// assert_eq!(solver.factor(&values)?, Factorisation::Lu);
/// let mut x = [0.0, 10.0]; // 10 N at the free end
/// solver.solve_in_place(&mut x)?;
/// assert!((x[0] - 0.1).abs() < 1e-12 && (x[1] - 0.2).abs() < 1e-12); // m
/// # Ok::<(), glaze_solvers::SolverError>(())
/// ```
pub struct BandedLu {
    n: usize,
    kl: usize,
    ku: usize,
    /// Leading dimension of the band storage, 2 kl + ku + 1.
    ldab: usize,
    /// `perm[new] = old`.
    perm: Vec<usize>,
    /// Position in `ab` of each pattern entry, in the pattern's value order.
    band_index: Vec<usize>,
    /// Band storage, column-major: entry (i, j) of the permuted matrix at
    /// `j * ldab + kl + ku + i − j`; rows 0..kl of each column take the fill.
    ab: Vec<f64>,
    /// Row interchanged with row j at elimination step j (permuted numbering).
    ipiv: Vec<usize>,
    work: Vec<f64>,
    factored: bool,
    stats: FactorStats,
}

impl BandedLu {
    /// A solver for matrices on `pattern`: computes the ordering, the
    /// bandwidths of the permuted pattern and the map of each pattern entry
    /// into band storage, and allocates everything `factor` and `solve` use.
    /// Counts as the one symbolic (LU) analysis in [`FactorStats`].
    pub fn new(pattern: &SparsityPattern, ordering: BandOrdering) -> Self {
        let n = pattern.dim();
        let perm = ordering.permutation(pattern);
        let inv = inverse_permutation(&perm, n);
        let (kl, ku) = super::bandwidths(pattern, &perm);
        let kv = kl + ku;
        let ldab = 2 * kl + ku + 1;
        let mut band_index = Vec::with_capacity(pattern.nnz());
        for j in 0..n {
            let nj = inv[j];
            for &i in pattern.col(j) {
                // kv + ni − nj ∈ [kl, 2 kl + ku] since |ni − nj| is within the band.
                band_index.push(nj * ldab + kv + inv[i] - nj);
            }
        }
        let len = n.checked_mul(ldab).expect("band storage size overflows usize");
        let stats = FactorStats { symbolic: 1, symbolic_lu: 1, ..FactorStats::default() };
        tracing::debug!(n, kl, ku, bytes = len * 8, "banded LU storage");
        Self {
            n,
            kl,
            ku,
            ldab,
            perm,
            band_index,
            ab: vec![0.0; len],
            ipiv: vec![0; n],
            work: vec![0.0; n],
            factored: false,
            stats,
        }
    }

    /// Number of equations n.
    pub fn dim(&self) -> usize {
        self.n
    }

    /// Lower and upper bandwidths (kl, ku) of the permuted matrix $P A P^\top$.
    pub fn bandwidths(&self) -> (usize, usize) {
        (self.kl, self.ku)
    }

    /// Size of the band storage, bytes: (2 kl + ku + 1) · n · 8.
    pub fn band_storage_bytes(&self) -> usize {
        self.ab.len() * std::mem::size_of::<f64>()
    }

    /// The symmetric permutation, `perm[new] = old`.
    pub fn permutation(&self) -> &[usize] {
        &self.perm
    }

    /// Equation (original numbering) of the row stored at band position `p`.
    fn dof_at(&self, p: usize) -> usize {
        let (col, row_in_col) = (p / self.ldab, p % self.ldab);
        self.perm[col + row_in_col - (self.kl + self.ku)]
    }
}

/// Unblocked right-looking band LU with partial pivoting, LAPACK `dgbtf2`
/// (0-based): `ab` in band storage with leading dimension `ldab = 2 kl + ku + 1`
/// and zeros in the fill rows. On success `ab` holds U (upper bandwidth
/// kl + ku) and the multipliers of L below the diagonal, `ipiv[j]` the row
/// interchanged at step j. `Err(j)`: the pivot of step j has magnitude
/// `<= tiny` (or is NaN).
fn band_lu(
    n: usize,
    kl: usize,
    ku: usize,
    ab: &mut [f64],
    ipiv: &mut [usize],
    tiny: f64,
) -> Result<(), usize> {
    let kv = kl + ku;
    let ldab = kv + kl + 1;
    // Last column touched by the row interchanges so far.
    let mut ju = 0;
    for j in 0..n {
        let km = kl.min(n - 1 - j);
        let piv_col = &ab[j * ldab + kv..=j * ldab + kv + km];
        // First entry of largest magnitude (LAPACK idamax).
        let (mut jp, mut best) = (0, piv_col[0].abs());
        for (i, v) in piv_col.iter().enumerate().skip(1) {
            if v.abs() > best {
                (jp, best) = (i, v.abs());
            }
        }
        ipiv[j] = j + jp;
        if best.is_nan() || best <= tiny {
            return Err(j);
        }
        ju = ju.max((j + ku + jp).min(n - 1));
        if jp != 0 {
            // Rows j and j + jp across columns j..=ju: row j of column c sits
            // at offset kv − (c − j) ≥ 0 because c − j ≤ ku + jp ≤ kv.
            for c in j..=ju {
                let at = c * ldab + kv + j - c;
                ab.swap(at, at + jp);
            }
        }
        if km == 0 {
            continue;
        }
        let (head, tail) = ab.split_at_mut((j + 1) * ldab);
        let piv_col = &mut head[j * ldab + kv..=j * ldab + kv + km];
        let r = 1.0 / piv_col[0];
        for v in &mut piv_col[1..] {
            *v *= r;
        }
        let l = &piv_col[1..];
        // Rank-1 update of columns j+1..=ju, rows j+1..=j+km (LAPACK dger).
        for (d, col) in tail.chunks_exact_mut(ldab).take(ju - j).enumerate() {
            let at = kv - d - 1; // row j of column j + d + 1
            let u = col[at];
            if u != 0.0 {
                for (a, &li) in col[at + 1..=at + km].iter_mut().zip(l) {
                    *a -= li * u;
                }
            }
        }
    }
    Ok(())
}

impl LinearSolver for BandedLu {
    /// Zeroes the band storage, scatters `values` (one per pattern entry, in
    /// the pattern's column-major order) and factors by LAPACK `dgbtf2`
    /// (Anderson et al., *LAPACK Users' Guide*, 3rd ed. 1999). Always
    /// [`Factorisation::Lu`].
    ///
    /// # Panics
    /// If `values.len()` is not the pattern's nnz.
    fn factor(&mut self, values: &[f64]) -> Result<Factorisation, SolverError> {
        assert_eq!(values.len(), self.band_index.len(), "values length must equal the pattern's nnz");
        self.factored = false;
        self.ab.fill(0.0);
        let mut max_abs = 0.0f64;
        for (&v, &p) in values.iter().zip(&self.band_index) {
            if !v.is_finite() {
                return Err(SolverError::NonFinite { lambda: f64::NAN, dof: self.dof_at(p) });
            }
            max_abs = max_abs.max(v.abs());
            self.ab[p] = v;
        }
        let tiny = self.n as f64 * f64::EPSILON * max_abs;
        if let Err(j) = band_lu(self.n, self.kl, self.ku, &mut self.ab, &mut self.ipiv, tiny) {
            tracing::debug!(step = j, dof = self.perm[j], "banded LU: pivot below n·ε·max|a|");
            return Err(SolverError::Singular { pivot: Some(self.perm[j]) });
        }
        self.stats.numeric_lu += 1;
        self.factored = true;
        Ok(Factorisation::Lu)
    }

    /// Permutes, applies the interchanges and L forward, solves with U
    /// (upper bandwidth kl + ku) backward, un-permutes: LAPACK `dgbtrs`.
    ///
    /// # Panics
    /// If `rhs.len()` is not the dimension.
    fn solve_in_place(&mut self, rhs: &mut [f64]) -> Result<(), SolverError> {
        assert_eq!(rhs.len(), self.n, "right-hand side length must equal the dimension");
        if !self.factored {
            return Err(SolverError::NotFactored);
        }
        if let Some(i) = rhs.iter().position(|v| !v.is_finite()) {
            return Err(SolverError::NonFinite { lambda: f64::NAN, dof: i });
        }
        self.stats.solves += 1;
        let Self { n, kl, ku, ldab, ab, ipiv, work: w, perm, .. } = self;
        let (n, kl, ldab, kv) = (*n, *kl, *ldab, *kl + *ku);
        for (wi, &old) in w.iter_mut().zip(perm.iter()) {
            *wi = rhs[old];
        }
        // L y = Π b, interchanges as they were made.
        if kl > 0 {
            for j in 0..n.saturating_sub(1) {
                let lm = kl.min(n - 1 - j);
                if ipiv[j] != j {
                    w.swap(j, ipiv[j]);
                }
                let wj = w[j];
                if wj != 0.0 {
                    let l = &ab[j * ldab + kv + 1..=j * ldab + kv + lm];
                    for (wi, &li) in w[j + 1..=j + lm].iter_mut().zip(l) {
                        *wi -= li * wj;
                    }
                }
            }
        }
        // U x = y, column by column from the last.
        for (j, col) in ab.chunks_exact(ldab).enumerate().rev() {
            let xj = w[j] / col[kv];
            w[j] = xj;
            if xj != 0.0 {
                let top = j.saturating_sub(kv);
                for (wi, &u) in w[top..j].iter_mut().zip(&col[kv + top - j..kv]) {
                    *wi -= u * xj;
                }
            }
        }
        for (&wi, &old) in w.iter().zip(perm.iter()) {
            rhs[old] = wi;
        }
        // Pivots above the threshold: only overflow gets here.
        match rhs.iter().position(|v| !v.is_finite()) {
            Some(i) => Err(SolverError::Singular { pivot: Some(i) }),
            None => Ok(()),
        }
    }

    fn stats(&self) -> FactorStats {
        self.stats
    }
}

impl std::fmt::Debug for BandedLu {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("BandedLu")
            .field("n", &self.n)
            .field("kl", &self.kl)
            .field("ku", &self.ku)
            .field("band_storage_bytes", &self.band_storage_bytes())
            .field("factored", &self.factored)
            .field("stats", &self.stats)
            .finish_non_exhaustive()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_util::Lcg;
    use crate::SparseDirect;

    fn pattern_of(n: usize, groups: &[Vec<Option<usize>>]) -> SparsityPattern {
        SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()))
    }

    /// A chain 0–1–…–(n−1) plus `extra` random groups of up to `max_size` equations.
    fn random_groups(rng: &mut Lcg, n: usize, extra: usize, max_size: usize) -> Vec<Vec<Option<usize>>> {
        let mut groups: Vec<Vec<Option<usize>>> =
            (0..n.saturating_sub(1)).map(|i| vec![Some(i), Some(i + 1)]).collect();
        for _ in 0..extra {
            let m = 2 + rng.below(max_size - 1);
            groups.push((0..m).map(|_| Some(rng.below(n))).collect());
        }
        groups
    }

    /// Random non-symmetric values, diagonal `diag_scale` times a random number.
    fn random_values(rng: &mut Lcg, p: &SparsityPattern, diag_scale: f64) -> Vec<f64> {
        let mut v: Vec<f64> = (0..p.nnz()).map(|_| rng.symmetric()).collect();
        for d in p.diagonal_indices() {
            v[d] *= diag_scale;
        }
        v
    }

    fn norm_inf(x: &[f64]) -> f64 {
        x.iter().fold(0.0, |m: f64, v| m.max(v.abs()))
    }

    fn residual_ratio(p: &SparsityPattern, values: &[f64], x: &[f64], b: &[f64]) -> f64 {
        let mut ax = vec![0.0; p.dim()];
        p.mul_vec(values, x, &mut ax);
        let r: Vec<f64> = ax.iter().zip(b).map(|(a, b)| a - b).collect();
        norm_inf(&r) / norm_inf(b)
    }

    #[test]
    fn agrees_with_sparse_direct_on_non_symmetric_matrices() {
        // faer's sparse LU (COLAMD, partial pivoting) is the independent
        // reference; both are backward stable, the matrices well enough
        // conditioned (checked through the residual) for 1e-10 agreement.
        let mut rng = Lcg::new(0x5eed_0b10);
        for &n in &[1, 2, 30, 200] {
            let groups = random_groups(&mut rng, n, n / 3, 6);
            let p = pattern_of(n, &groups);
            // Small diagonal: row interchanges are needed.
            let values = random_values(&mut rng, &p, 1e-3);
            let b: Vec<f64> = (0..n).map(|_| rng.symmetric()).collect();
            let mut reference = b.clone();
            let mut direct = SparseDirect::new(&p);
            assert_eq!(direct.factor(&values).unwrap(), Factorisation::Lu);
            direct.solve_in_place(&mut reference).unwrap();
            for ordering in [BandOrdering::Natural, BandOrdering::ReverseCuthillMcKee] {
                let mut lu = BandedLu::new(&p, ordering);
                assert_eq!(lu.factor(&values).unwrap(), Factorisation::Lu);
                let mut x = b.clone();
                lu.solve_in_place(&mut x).unwrap();
                let diff: Vec<f64> = x.iter().zip(&reference).map(|(a, b)| a - b).collect();
                let rel = norm_inf(&diff) / norm_inf(&reference);
                assert!(rel <= 1e-10, "n = {n}, {ordering:?}: relative difference {rel:e}");
                assert!(residual_ratio(&p, &values, &x, &b) <= 1e-12);
            }
        }
    }

    #[test]
    fn zero_leading_diagonal_needs_and_gets_a_row_interchange() {
        // [[0, 1], [1, 0]] x = [2, 3] → x = [3, 2]; no LU without pivoting exists.
        let groups: Vec<Vec<Option<usize>>> = vec![vec![Some(0), Some(1)]];
        let p = pattern_of(2, &groups);
        let mut lu = BandedLu::new(&p, BandOrdering::Natural);
        lu.factor(&[0.0, 1.0, 1.0, 0.0]).unwrap();
        assert_eq!(lu.ipiv, [1, 1]);
        let mut x = [2.0, 3.0];
        lu.solve_in_place(&mut x).unwrap();
        assert_eq!(x, [3.0, 2.0]);
    }

    #[test]
    fn singular_matrices_are_singular_with_a_pivot() {
        // Free chain of springs k = 1000 N/m: the path Laplacian, singular
        // (rigid translation). The last elimination step meets the zero pivot.
        let n = 30;
        let groups: Vec<Vec<Option<usize>>> = (0..n - 1).map(|i| vec![Some(i), Some(i + 1)]).collect();
        let p = pattern_of(n, &groups);
        let asm = crate::Assembler::new(&p, groups.iter().map(|g| g.as_slice()));
        let mut values = vec![0.0; p.nnz()];
        for g in 0..groups.len() {
            asm.add_matrix(g, &[1e3, -1e3, -1e3, 1e3], &mut values);
        }
        for ordering in [BandOrdering::Natural, BandOrdering::ReverseCuthillMcKee] {
            let mut lu = BandedLu::new(&p, ordering);
            match lu.factor(&values) {
                Err(SolverError::Singular { pivot: Some(d) }) => assert!(d < n),
                other => panic!("{ordering:?}: expected Singular with a pivot, got {other:?}"),
            }
            assert_eq!(lu.solve_in_place(&mut vec![1.0; n]), Err(SolverError::NotFactored));
            // SparseDirect agrees that it is singular.
            let mut direct = SparseDirect::new(&p).with_symmetry_tolerance(-1.0);
            let direct_singular = match direct.factor(&values) {
                Err(SolverError::Singular { .. }) => true,
                Ok(_) => {
                    matches!(direct.solve_in_place(&mut vec![1.0; n]), Err(SolverError::Singular { .. }))
                }
                Err(e) => panic!("{e}"),
            };
            assert!(direct_singular);
        }

        // A zero row and column (equation 7): located exactly.
        let mut rng = Lcg::new(0x5eed_0b11);
        let groups = random_groups(&mut rng, 40, 20, 5);
        let p = pattern_of(40, &groups);
        let mut values = random_values(&mut rng, &p, 1.0);
        for d in p.diagonal_indices() {
            values[d] = 20.0; // dominant: nonsingular without equation 7
        }
        for j in 0..40 {
            for k in p.col_ptr()[j]..p.col_ptr()[j + 1] {
                if j == 7 || p.row_idx()[k] == 7 {
                    values[k] = 0.0;
                }
            }
        }
        for ordering in [BandOrdering::Natural, BandOrdering::ReverseCuthillMcKee] {
            let mut lu = BandedLu::new(&p, ordering);
            assert_eq!(lu.factor(&values), Err(SolverError::Singular { pivot: Some(7) }), "{ordering:?}");
        }

        // Non-symmetric, two equal rows (3 and 4, coupled by the chain).
        let mut values = random_values(&mut rng, &p, 1.0);
        for j in 0..40 {
            match (p.value_index(3, j), p.value_index(4, j)) {
                (Some(a), Some(b)) => values[b] = values[a],
                (Some(a), None) => values[a] = 0.0,
                (None, Some(b)) => values[b] = 0.0,
                (None, None) => {}
            }
        }
        for ordering in [BandOrdering::Natural, BandOrdering::ReverseCuthillMcKee] {
            let mut lu = BandedLu::new(&p, ordering);
            assert!(matches!(lu.factor(&values), Err(SolverError::Singular { pivot: Some(_) })));
        }

        // All zeros: the first step.
        let mut lu = BandedLu::new(&p, BandOrdering::ReverseCuthillMcKee);
        let first = lu.permutation()[0];
        assert_eq!(lu.factor(&vec![0.0; p.nnz()]), Err(SolverError::Singular { pivot: Some(first) }));
    }

    #[test]
    fn misuse_bad_numbers_and_counters() {
        let groups: Vec<Vec<Option<usize>>> = vec![vec![Some(0), Some(1)]];
        let p = pattern_of(2, &groups);
        let mut lu = BandedLu::new(&p, BandOrdering::ReverseCuthillMcKee);
        let st = lu.stats();
        assert_eq!((st.symbolic, st.symbolic_lu, st.numeric_lu, st.solves), (1, 1, 0, 0));
        let mut x = [1.0, 2.0];
        assert_eq!(lu.solve_in_place(&mut x), Err(SolverError::NotFactored));
        // Entry 1 is (row 1, column 0).
        let bad = [1.0, f64::NAN, 0.0, 1.0];
        assert!(matches!(lu.factor(&bad), Err(SolverError::NonFinite { dof: 1, .. })));
        assert_eq!(lu.solve_in_place(&mut x), Err(SolverError::NotFactored));
        lu.factor(&[2.0, 0.0, 0.0, 4.0]).unwrap();
        let mut y = [f64::INFINITY, 1.0];
        assert!(matches!(lu.solve_in_place(&mut y), Err(SolverError::NonFinite { dof: 0, .. })));
        lu.solve_in_place(&mut x).unwrap();
        assert_eq!(x, [0.5, 0.5]);
        let st = lu.stats();
        assert_eq!((st.symbolic, st.symbolic_lu, st.numeric_lu, st.solves), (1, 1, 1, 1));
        // Zero-sized system.
        let empty = SparsityPattern::from_dof_groups(0, std::iter::empty());
        let mut s = BandedLu::new(&empty, BandOrdering::ReverseCuthillMcKee);
        assert_eq!((s.dim(), s.bandwidths(), s.band_storage_bytes()), (0, (0, 0), 0));
        s.factor(&[]).unwrap();
        s.solve_in_place(&mut []).unwrap();
    }

    #[test]
    fn band_storage_and_accessors() {
        // Tridiagonal, natural order: kl = ku = 1, ldab = 2·1 + 1 + 1 = 4.
        let n = 10;
        let groups: Vec<Vec<Option<usize>>> = (0..n - 1).map(|i| vec![Some(i), Some(i + 1)]).collect();
        let p = pattern_of(n, &groups);
        let lu = BandedLu::new(&p, BandOrdering::Natural);
        assert_eq!(lu.dim(), n);
        assert_eq!(lu.bandwidths(), (1, 1));
        assert_eq!(lu.band_storage_bytes(), 4 * n * 8);
        assert_eq!(lu.permutation(), (0..n).collect::<Vec<_>>().as_slice());
        // Every pattern entry maps to a distinct position holding its own row.
        let mut seen = std::collections::HashSet::new();
        for j in 0..n {
            for k in p.col_ptr()[j]..p.col_ptr()[j + 1] {
                assert!(seen.insert(lu.band_index[k]));
                assert_eq!(lu.dof_at(lu.band_index[k]), p.row_idx()[k]);
                assert_eq!(lu.band_index[k] / lu.ldab, j);
            }
        }
    }

    #[test]
    fn solver_is_send() {
        fn is_send<T: Send>() {}
        is_send::<BandedLu>();
    }
}
