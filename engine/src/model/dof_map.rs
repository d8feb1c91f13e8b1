//! Numbering of the free degrees of freedom.

/// DOF per node: three translations, three rotations.
pub const DOF_PER_NODE: usize = 6;

/// Maps `(node, local dof)` to an equation number, or `None` when the DOF
/// is restrained (support) or unused (rotation of a node that no
/// rotational element touches).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DofMap {
    equations: Vec<Option<usize>>,
    count: usize,
}

impl DofMap {
    /// Numbers the DOF in node order, skipping those where `free` is false.
    pub fn new(free: &[[bool; DOF_PER_NODE]]) -> Self {
        let mut count = 0;
        let equations = free
            .iter()
            .flat_map(|node| node.iter())
            .map(|&f| {
                f.then(|| {
                    count += 1;
                    count - 1
                })
            })
            .collect();
        Self { equations, count }
    }

    /// Number of equations.
    pub fn len(&self) -> usize {
        self.count
    }

    /// Whether there are no equations.
    pub fn is_empty(&self) -> bool {
        self.count == 0
    }

    /// Equation of DOF `d` of `node`.
    pub fn equation(&self, node: usize, d: usize) -> Option<usize> {
        self.equations[node * DOF_PER_NODE + d]
    }

    /// Equations of all DOF, node-major (length `6 × nodes`).
    pub fn all(&self) -> &[Option<usize>] {
        &self.equations
    }

    /// Equations of the DOF of `nodes`, in element-local order.
    pub fn element_equations(&self, nodes: &[usize]) -> Vec<Option<usize>> {
        nodes
            .iter()
            .flat_map(|&n| (0..DOF_PER_NODE).map(move |d| (n, d)))
            .map(|(n, d)| self.equation(n, d))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbering_skips_restrained_dof() {
        let mut free = vec![[true; 6]; 3];
        free[0] = [false; 6];
        free[2][3] = false;
        let map = DofMap::new(&free);
        assert_eq!(map.len(), 11);
        assert_eq!(map.equation(0, 5), None);
        assert_eq!(map.equation(1, 0), Some(0));
        assert_eq!(map.equation(2, 3), None);
        assert_eq!(map.equation(2, 4), Some(9));
    }
}
