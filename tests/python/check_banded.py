#!/usr/bin/env python3
"""Independent SciPy/NumPy references for glaze's banded LU and its ordering
(solvers/tests/banded_scipy.rs).

Usage:
  check_banded.py solve FILE  FILE: "n nnz", nnz lines "i j a_ij" (0-based),
                              n lines "b_i". Solves A x = b with
                              numpy.linalg.solve (LAPACK dgesv, partial
                              pivoting) and checks scipy.sparse.linalg.spsolve
                              (SuperLU) agrees. Prints "cond2 <value>" (2-norm
                              condition number, numpy.linalg.cond), then the n
                              components of x, one per line (17 digits).
  check_banded.py rcm FILE    FILE: "n nnz", nnz lines "i j" (0-based, both
                              triangles). Orders with
                              scipy.sparse.csgraph.reverse_cuthill_mckee
                              (symmetric_mode=True) and prints
                              "bandwidth <lower> <upper>" of A[perm][:, perm].
Exits 1 on a failed internal check.
"""
import sys

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph
import scipy.sparse.linalg


def read_entries(path, with_values):
    with open(path) as f:
        n, nnz = (int(t) for t in f.readline().split())
        rows, cols, vals = [], [], []
        for _ in range(nnz):
            parts = f.readline().split()
            rows.append(int(parts[0]))
            cols.append(int(parts[1]))
            vals.append(float(parts[2]) if with_values else 1.0)
        rest = [float(line) for line in f if line.strip()]
    a = scipy.sparse.csc_matrix((vals, (rows, cols)), shape=(n, n))
    return n, a, np.array(rest)


def solve(path):
    n, a, b = read_entries(path, True)
    assert len(b) == n, f"{len(b)} right-hand side values for n = {n}"
    dense = a.toarray()
    x = np.linalg.solve(dense, b)
    x_superlu = scipy.sparse.linalg.spsolve(a, b)
    diff = np.max(np.abs(x - x_superlu)) / np.max(np.abs(x))
    if not diff <= 1e-11:
        print(f"numpy.linalg.solve and spsolve differ by {diff:e} (relative)", file=sys.stderr)
        sys.exit(1)
    print(f"cond2 {np.linalg.cond(dense):.17e}")
    for v in x:
        print(f"{v:.17e}")


def rcm(path):
    n, a, _ = read_entries(path, False)
    a = a.tocsr()
    perm = scipy.sparse.csgraph.reverse_cuthill_mckee(a, symmetric_mode=True)
    b = a[perm][:, perm].tocoo()
    d = b.row.astype(np.int64) - b.col.astype(np.int64)
    lower = int(max(d.max(), 0)) if b.nnz else 0
    upper = int(max((-d).max(), 0)) if b.nnz else 0
    print(f"bandwidth {lower} {upper}")


def main():
    mode, path = sys.argv[1:3]
    {"solve": solve, "rcm": rcm}[mode](path)


if __name__ == "__main__":
    main()
