//! Compressed sparse column pattern of a structurally symmetric global matrix.
//!
//! Equation numbers couple when they appear together in a DOF group (one
//! group per element): entry $(i, j)$ is stored iff $i = j$ or $i$ and $j$
//! share a group. Both triangles are stored so the same pattern serves the
//! symmetric stiffness and mass matrices and the non-symmetric tangents that
//! follower and aerodynamic loads produce.

/// Structurally symmetric sparsity pattern in compressed sparse column form,
/// both triangles stored, row indices sorted within each column, diagonal
/// always present.
///
/// Values of a matrix on this pattern are a `&[f64]` of length [`nnz`](Self::nnz):
/// entry `k` sits at row `row_idx()[k]` of the column `j` with
/// `col_ptr()[j] <= k < col_ptr()[j + 1]`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SparsityPattern {
    n: usize,
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
}

impl SparsityPattern {
    /// Pattern of an `n × n` matrix assembled from DOF groups.
    ///
    /// `groups`: for each element, the global equation numbers of its local
    /// DOF (`None` = constrained DOF, not in the system). Every pair of free
    /// DOF in a group couples. An equation may repeat within a group.
    ///
    /// Cost O(Σ m_g² + nnz log) time, O(nnz + Σ m_g) memory, where m_g is the
    /// size of group g.
    ///
    /// # Panics
    /// If an equation number is `>= n` (an inconsistent DOF map, a programming
    /// error in the caller).
    pub fn from_dof_groups<'a, I: IntoIterator<Item = &'a [Option<usize>]>>(n: usize, groups: I) -> Self {
        // Free equations of each group, flattened (CSR by group).
        let mut group_ptr = vec![0usize];
        let mut group_eq = Vec::new();
        for g in groups {
            for &e in g.iter().flatten() {
                assert!(e < n, "equation number {e} out of range for {n} equations");
                group_eq.push(e);
            }
            group_ptr.push(group_eq.len());
        }
        let n_groups = group_ptr.len() - 1;

        // Incidence: equation -> groups containing it (CSR by equation).
        let mut eq_ptr = vec![0usize; n + 1];
        for &e in &group_eq {
            eq_ptr[e + 1] += 1;
        }
        for i in 0..n {
            eq_ptr[i + 1] += eq_ptr[i];
        }
        let mut fill = eq_ptr.clone();
        let mut eq_group = vec![0usize; group_eq.len()];
        for g in 0..n_groups {
            for &e in &group_eq[group_ptr[g]..group_ptr[g + 1]] {
                eq_group[fill[e]] = g;
                fill[e] += 1;
            }
        }

        // Column j = {j} ∪ all equations of groups containing j, marked to dedupe.
        let mut marker = vec![usize::MAX; n];
        let mut col_ptr = Vec::with_capacity(n + 1);
        col_ptr.push(0);
        let mut row_idx = Vec::new();
        for j in 0..n {
            let start = row_idx.len();
            marker[j] = j;
            row_idx.push(j);
            for &g in &eq_group[eq_ptr[j]..eq_ptr[j + 1]] {
                for &e in &group_eq[group_ptr[g]..group_ptr[g + 1]] {
                    if marker[e] != j {
                        marker[e] = j;
                        row_idx.push(e);
                    }
                }
            }
            row_idx[start..].sort_unstable();
            col_ptr.push(row_idx.len());
        }
        Self { n, col_ptr, row_idx }
    }

    /// Number of equations n (rows = columns).
    pub fn dim(&self) -> usize {
        self.n
    }

    /// Number of stored entries (both triangles and the diagonal).
    pub fn nnz(&self) -> usize {
        self.row_idx.len()
    }

    /// Column pointers, length n + 1.
    pub fn col_ptr(&self) -> &[usize] {
        &self.col_ptr
    }

    /// Row index of each stored entry, sorted within each column, length nnz.
    pub fn row_idx(&self) -> &[usize] {
        &self.row_idx
    }

    /// Row indices of column `col`.
    pub fn col(&self, col: usize) -> &[usize] {
        &self.row_idx[self.col_ptr[col]..self.col_ptr[col + 1]]
    }

    /// Index into the values array of entry (row, col), if stored.
    /// Binary search in the column: O(log of column length). For set-up, not
    /// for hot loops (use [`Assembler`](crate::Assembler) there).
    pub fn value_index(&self, row: usize, col: usize) -> Option<usize> {
        if row >= self.n || col >= self.n {
            return None;
        }
        let start = self.col_ptr[col];
        self.col(col).binary_search(&row).ok().map(|k| start + k)
    }

    /// Index of the diagonal entry (j, j) in the values of each column j.
    pub fn diagonal_indices(&self) -> Vec<usize> {
        (0..self.n)
            .map(|j| {
                let start = self.col_ptr[j];
                // The diagonal is always stored (construction invariant).
                start + self.col(j).partition_point(|&r| r < j)
            })
            .collect()
    }

    /// For each stored entry k = (i, j), the index of its mirror (j, i).
    /// Exists for every entry because the pattern is structurally symmetric.
    pub fn transpose_indices(&self) -> Vec<usize> {
        // Walking columns in order visits the rows of each mirror column in
        // increasing order, so a running cursor per column gives the map in O(nnz).
        let mut cursor = self.col_ptr[..self.n].to_vec();
        let mut t = vec![0usize; self.nnz()];
        for j in 0..self.n {
            for k in self.col_ptr[j]..self.col_ptr[j + 1] {
                let i = self.row_idx[k];
                // Entry (j, i) in column i: the next unvisited one there has row j.
                let kt = cursor[i];
                debug_assert_eq!(self.row_idx[kt], j);
                t[k] = kt;
                cursor[i] += 1;
            }
        }
        t
    }

    /// y = A x for the matrix with these `values` on this pattern.
    ///
    /// # Panics
    /// If `values.len() != nnz()` or `x`, `y` are not of length n.
    pub fn mul_vec(&self, values: &[f64], x: &[f64], y: &mut [f64]) {
        assert_eq!(values.len(), self.nnz(), "values length");
        assert_eq!(x.len(), self.n, "x length");
        assert_eq!(y.len(), self.n, "y length");
        y.fill(0.0);
        for (j, &xj) in x.iter().enumerate() {
            if xj == 0.0 {
                continue;
            }
            let range = self.col_ptr[j]..self.col_ptr[j + 1];
            for (&i, &a) in self.row_idx[range.clone()].iter().zip(&values[range]) {
                y[i] += a * xj;
            }
        }
    }
}

/// The entries of a matrix on a [`SparsityPattern`] that are not zero, in
/// compressed rows: for repeated products with a constant matrix that
/// fills little of its pattern (a lumped mass on the stiffness pattern).
///
/// Each yᵢ of a product is summed over row i in ascending column order,
/// the order in which a column-by-column scatter adds to it, so the result
/// is the same to the bit however the rows are shared between threads
/// (large matrices are multiplied on rayon's pool).
#[derive(Debug, Clone, PartialEq)]
pub struct CompressedMatrix {
    n: usize,
    row_ptr: Vec<usize>,
    col_idx: Vec<usize>,
    values: Vec<f64>,
}

/// Products with at least this many stored entries run on rayon's pool
/// (below it the hand-over to the pool costs more than it saves).
const PARALLEL_NNZ: usize = 1 << 17;
/// Rows per rayon task of a parallel product.
const ROWS_PER_TASK: usize = 2048;

impl CompressedMatrix {
    /// The non-zero entries of `values` (one per entry of `pattern`).
    ///
    /// # Panics
    /// If `values.len() != pattern.nnz()`.
    pub fn from_pattern(pattern: &SparsityPattern, values: &[f64]) -> Self {
        assert_eq!(values.len(), pattern.nnz(), "values length");
        let n = pattern.n;
        let mut row_ptr = vec![0usize; n + 1];
        for j in 0..n {
            for k in pattern.col_ptr[j]..pattern.col_ptr[j + 1] {
                if values[k] != 0.0 {
                    row_ptr[pattern.row_idx[k] + 1] += 1;
                }
            }
        }
        for i in 0..n {
            row_ptr[i + 1] += row_ptr[i];
        }
        let nnz = row_ptr[n];
        let (mut col_idx, mut kept) = (vec![0usize; nnz], vec![0.0; nnz]);
        let mut next = row_ptr[..n].to_vec();
        // Columns in ascending order: every row's entries end up sorted by column.
        for j in 0..n {
            for k in pattern.col_ptr[j]..pattern.col_ptr[j + 1] {
                if values[k] != 0.0 {
                    let i = pattern.row_idx[k];
                    col_idx[next[i]] = j;
                    kept[next[i]] = values[k];
                    next[i] += 1;
                }
            }
        }
        Self { n, row_ptr, col_idx, values: kept }
    }

    /// Stored (non-zero) entries.
    pub fn nnz(&self) -> usize {
        self.values.len()
    }

    /// y = A x.
    ///
    /// # Panics
    /// On length mismatch.
    pub fn mul_vec(&self, x: &[f64], y: &mut [f64]) {
        use rayon::prelude::*;
        assert_eq!(x.len(), self.n, "x length");
        assert_eq!(y.len(), self.n, "y length");
        let row = |i: usize| {
            let range = self.row_ptr[i]..self.row_ptr[i + 1];
            let mut sum = 0.0;
            for (&j, &a) in self.col_idx[range.clone()].iter().zip(&self.values[range]) {
                sum += a * x[j];
            }
            sum
        };
        if self.nnz() >= PARALLEL_NNZ {
            y.par_chunks_mut(ROWS_PER_TASK).enumerate().for_each(|(c, ys)| {
                for (k, yi) in ys.iter_mut().enumerate() {
                    *yi = row(c * ROWS_PER_TASK + k);
                }
            });
        } else {
            for (i, yi) in y.iter_mut().enumerate() {
                *yi = row(i);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_util::Lcg;

    /// Brute force: dense boolean coupling matrix from the same groups.
    fn dense_pattern(n: usize, groups: &[Vec<Option<usize>>]) -> Vec<Vec<bool>> {
        let mut d = vec![vec![false; n]; n];
        for (i, row) in d.iter_mut().enumerate() {
            row[i] = true;
        }
        for g in groups {
            for a in g.iter().flatten() {
                for b in g.iter().flatten() {
                    d[*a][*b] = true;
                }
            }
        }
        d
    }

    fn random_groups(rng: &mut Lcg, n: usize, count: usize) -> Vec<Vec<Option<usize>>> {
        (0..count)
            .map(|_| {
                let m = 1 + rng.below(12);
                (0..m).map(|_| if rng.uniform() < 0.2 { None } else { Some(rng.below(n)) }).collect()
            })
            .collect()
    }

    #[test]
    fn pattern_from_overlapping_groups_equals_dense_brute_force() {
        let mut rng = Lcg::new(0x5eed_0001);
        for &(n, count) in &[(1, 1), (7, 3), (50, 40), (200, 90)] {
            let groups = random_groups(&mut rng, n, count);
            let p = SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()));
            let d = dense_pattern(n, &groups);
            let mut nnz = 0;
            for (j, col) in (0..n).map(|j| (j, p.col(j))) {
                assert!(col.windows(2).all(|w| w[0] < w[1]), "sorted, unique");
                for (i, row) in d.iter().enumerate() {
                    assert_eq!(p.value_index(i, j).is_some(), row[j], "entry ({i},{j})");
                    nnz += usize::from(row[j]);
                }
            }
            assert_eq!(p.nnz(), nnz);
            assert_eq!(p.col_ptr().len(), n + 1);
            let diag = p.diagonal_indices();
            let t = p.transpose_indices();
            for j in 0..n {
                assert_eq!(p.row_idx()[diag[j]], j);
                for k in p.col_ptr()[j]..p.col_ptr()[j + 1] {
                    let i = p.row_idx()[k];
                    assert_eq!(p.value_index(j, i), Some(t[k]));
                }
            }
        }
    }

    #[test]
    fn constrained_dofs_and_empty_system() {
        let groups: Vec<Vec<Option<usize>>> = vec![vec![None, Some(1), None, Some(0)]];
        let p = SparsityPattern::from_dof_groups(3, groups.iter().map(|g| g.as_slice()));
        assert_eq!(p.nnz(), 5); // 2×2 block + isolated diagonal of equation 2
        assert_eq!(p.value_index(2, 2), Some(4));
        assert_eq!(p.value_index(0, 2), None);
        assert_eq!(p.value_index(5, 0), None);
        let empty = SparsityPattern::from_dof_groups(0, std::iter::empty());
        assert_eq!((empty.dim(), empty.nnz()), (0, 0));
    }

    #[test]
    fn compressed_matrix_keeps_the_non_zeros_and_multiplies_alike() {
        let groups: Vec<Vec<Option<usize>>> = vec![vec![Some(0), Some(2)], vec![Some(1), Some(2)]];
        let p = SparsityPattern::from_dof_groups(3, groups.iter().map(|g| g.as_slice()));
        let values: Vec<f64> = (0..p.nnz()).map(|k| if k % 2 == 0 { k as f64 + 1.0 } else { 0.0 }).collect();
        let c = CompressedMatrix::from_pattern(&p, &values);
        assert_eq!(c.nnz(), values.iter().filter(|v| **v != 0.0).count());
        let x = [1.0, -2.0, 0.5];
        let (mut y, mut z) = ([0.0; 3], [0.0; 3]);
        p.mul_vec(&values, &x, &mut y);
        c.mul_vec(&x, &mut z);
        assert_eq!(y, z);
    }

    #[test]
    fn large_compressed_products_on_the_pool_equal_the_serial_scatter_bit_for_bit() {
        // Above PARALLEL_NNZ the rows are shared between rayon's threads;
        // each yᵢ is still summed in ascending column order, as the
        // column scatter of `SparsityPattern::mul_vec` adds to it.
        let mut rng = Lcg::new(0x5eed_0a11);
        let n = 30_000;
        let mut groups: Vec<Vec<Option<usize>>> =
            (0..n - 5).map(|i| (i..i + 6).map(Some).collect()).collect();
        groups.extend((0..n / 10).map(|_| vec![Some(rng.below(n)), Some(rng.below(n))]));
        let p = SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()));
        let values: Vec<f64> = (0..p.nnz()).map(|_| rng.symmetric()).collect();
        let c = CompressedMatrix::from_pattern(&p, &values);
        assert!(c.nnz() >= PARALLEL_NNZ, "{} entries", c.nnz());
        let x: Vec<f64> = (0..n).map(|i| if i % 7 == 0 { 0.0 } else { rng.symmetric() }).collect();
        let (mut y, mut z) = (vec![0.0; n], vec![1.0; n]);
        p.mul_vec(&values, &x, &mut y);
        c.mul_vec(&x, &mut z);
        assert!(y.iter().zip(&z).all(|(a, b)| a.to_bits() == b.to_bits()));
    }

    #[test]
    fn mul_vec_matches_dense() {
        let groups: Vec<Vec<Option<usize>>> = vec![vec![Some(0), Some(2)], vec![Some(1), Some(2)]];
        let p = SparsityPattern::from_dof_groups(3, groups.iter().map(|g| g.as_slice()));
        let values: Vec<f64> = (0..p.nnz()).map(|k| k as f64 + 1.0).collect();
        let mut dense = [[0.0; 3]; 3];
        for j in 0..3 {
            for k in p.col_ptr()[j]..p.col_ptr()[j + 1] {
                dense[p.row_idx()[k]][j] = values[k];
            }
        }
        let x = [1.0, -2.0, 0.5];
        let mut y = [0.0; 3];
        p.mul_vec(&values, &x, &mut y);
        for i in 0..3 {
            let yi: f64 = (0..3).map(|j| dense[i][j] * x[j]).sum();
            assert_eq!(y[i], yi);
        }
    }
}
