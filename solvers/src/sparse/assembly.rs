//! Scatter of element-local matrices and vectors into global values.
//!
//! All index look-ups happen once in [`Assembler::new`]; assembly itself is
//! a gather-free loop over precomputed positions (no search, no allocation),
//! so it can run once per Newton iteration on every element.

use super::SparsityPattern;

/// Marker for a constrained local DOF (no global equation, no stored entry).
const NONE: usize = usize::MAX;

/// Precomputed scatter from element-local matrices into the values of a pattern.
///
/// Group `g` has `m` local DOF; local entry (a, b) of its row-major `m × m`
/// matrix goes to value index `pos[(a, b)]` (or nowhere if a or b is
/// constrained) and local vector entry a goes to equation `eq[a]`.
#[derive(Debug, Clone)]
pub struct Assembler {
    n: usize,
    nnz: usize,
    /// Start of each group's local-DOF list in `eq` (length groups + 1).
    dof_ptr: Vec<usize>,
    /// Global equation of each local DOF, or `NONE`.
    eq: Vec<usize>,
    /// Start of each group's m×m block in `pos` (length groups + 1).
    mat_ptr: Vec<usize>,
    /// Value index of each local (a, b), row-major, or `NONE`.
    pos: Vec<usize>,
}

impl Assembler {
    /// Precomputes the scatter maps of `groups` (the same groups, in the same
    /// order, that built `pattern`, or any groups whose couplings `pattern`
    /// contains).
    ///
    /// # Panics
    /// If a free pair of a group is not stored in `pattern` (the pattern was
    /// built from other groups: a programming error in the caller).
    pub fn new<'a, I: IntoIterator<Item = &'a [Option<usize>]>>(
        pattern: &SparsityPattern,
        groups: I,
    ) -> Self {
        let mut dof_ptr = vec![0];
        let mut mat_ptr = vec![0];
        let mut eq = Vec::new();
        let mut pos = Vec::new();
        for (g, dofs) in groups.into_iter().enumerate() {
            for &d in dofs {
                eq.push(d.unwrap_or(NONE));
            }
            for &a in dofs {
                for &b in dofs {
                    let p = match (a, b) {
                        (Some(i), Some(j)) => pattern.value_index(i, j).unwrap_or_else(|| {
                            panic!("group {g}: entry ({i}, {j}) is not in the sparsity pattern")
                        }),
                        _ => NONE,
                    };
                    pos.push(p);
                }
            }
            dof_ptr.push(eq.len());
            mat_ptr.push(pos.len());
        }
        Self { n: pattern.dim(), nnz: pattern.nnz(), dof_ptr, eq, mat_ptr, pos }
    }

    /// Number of groups (elements).
    pub fn num_groups(&self) -> usize {
        self.dof_ptr.len() - 1
    }

    /// Number of local DOF m of group `g`.
    pub fn group_size(&self, g: usize) -> usize {
        self.dof_ptr[g + 1] - self.dof_ptr[g]
    }

    /// Adds row-major local matrix `k_local` (len m*m) of group `g` into `values`.
    /// Entries on constrained rows or columns are dropped.
    ///
    /// # Panics
    /// If `k_local.len() != m*m` or `values.len()` is not the pattern's nnz.
    #[inline]
    pub fn add_matrix(&self, g: usize, k_local: &[f64], values: &mut [f64]) {
        let pos = &self.pos[self.mat_ptr[g]..self.mat_ptr[g + 1]];
        assert_eq!(k_local.len(), pos.len(), "local matrix size of group {g}");
        assert_eq!(values.len(), self.nnz, "global values length");
        for (&p, &v) in pos.iter().zip(k_local) {
            if p != NONE {
                values[p] += v;
            }
        }
    }

    /// Adds local vector `f_local` (len m) of group `g` into global `rhs`.
    /// Entries of constrained DOF are dropped.
    ///
    /// # Panics
    /// If `f_local.len() != m` or `rhs.len()` is not the number of equations.
    #[inline]
    pub fn add_vector(&self, g: usize, f_local: &[f64], rhs: &mut [f64]) {
        let eq = &self.eq[self.dof_ptr[g]..self.dof_ptr[g + 1]];
        assert_eq!(f_local.len(), eq.len(), "local vector size of group {g}");
        assert_eq!(rhs.len(), self.n, "global vector length");
        for (&e, &v) in eq.iter().zip(f_local) {
            if e != NONE {
                rhs[e] += v;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_util::Lcg;

    #[test]
    fn assembler_equals_dense_assembly() {
        let mut rng = Lcg::new(0x5eed_0002);
        let n = 60;
        let groups: Vec<Vec<Option<usize>>> = (0..80)
            .map(|_| {
                let m = 1 + rng.below(12);
                (0..m).map(|_| (rng.uniform() > 0.15).then(|| rng.below(n))).collect()
            })
            .collect();
        let p = SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()));
        let asm = Assembler::new(&p, groups.iter().map(|g| g.as_slice()));
        assert_eq!(asm.num_groups(), groups.len());

        let mut values = vec![0.0; p.nnz()];
        let mut rhs = vec![0.0; n];
        let mut dense = vec![vec![0.0; n]; n];
        let mut dense_rhs = vec![0.0; n];
        for (g, dofs) in groups.iter().enumerate() {
            let m = dofs.len();
            assert_eq!(asm.group_size(g), m);
            let k: Vec<f64> = (0..m * m).map(|_| rng.symmetric()).collect();
            let f: Vec<f64> = (0..m).map(|_| rng.symmetric()).collect();
            asm.add_matrix(g, &k, &mut values);
            asm.add_vector(g, &f, &mut rhs);
            for a in 0..m {
                if let Some(i) = dofs[a] {
                    dense_rhs[i] += f[a];
                    for b in 0..m {
                        if let Some(j) = dofs[b] {
                            dense[i][j] += k[a * m + b];
                        }
                    }
                }
            }
        }
        // Same sums in the same order per entry, so equality is exact.
        for j in 0..n {
            for i in 0..n {
                let got = p.value_index(i, j).map_or(0.0, |k| values[k]);
                assert_eq!(got, dense[i][j], "entry ({i},{j})");
            }
        }
        assert_eq!(rhs, dense_rhs);
    }

    #[test]
    #[should_panic(expected = "not in the sparsity pattern")]
    fn foreign_group_is_rejected_at_setup() {
        let a: Vec<Option<usize>> = vec![Some(0), Some(1)];
        let b: Vec<Option<usize>> = vec![Some(0), Some(2)];
        let p = SparsityPattern::from_dof_groups(3, [a.as_slice()]);
        let _ = Assembler::new(&p, [b.as_slice()]);
    }
}
