#!/usr/bin/env python3
"""Independent cross-check of glaze's modal analysis.

Reads the stiffness and mass matrices glaze exported as Matrix Market files
(scipy.io.mmread), solves K phi = omega^2 M phi for the COUNT eigenvalues
nearest SIGMA with scipy.sparse.linalg.eigsh in shift-invert mode (ARPACK,
tol=0: machine precision), and compares the natural frequencies
f = sqrt(lambda) / (2 pi) with those glaze wrote to GLAZE_FREQUENCIES (one
value in Hz per line, ascending).

Usage: eigsh_check.py K.mtx M.mtx COUNT SIGMA GLAZE_FREQUENCIES [RELATIVE_TOLERANCE]
Prints one line per mode and "worst relative difference ..."; exits 0 when
every frequency agrees within the tolerance (default 1e-8).
"""
import math
import sys

import numpy as np
import scipy.io
import scipy.sparse
from scipy.sparse.linalg import eigsh


def main():
    k_path, m_path, count, sigma, freq_path = sys.argv[1:6]
    tol = float(sys.argv[6]) if len(sys.argv) > 6 else 1e-8
    count = int(count)
    sigma = float(sigma)
    K = scipy.sparse.csc_matrix(scipy.io.mmread(k_path))
    M = scipy.sparse.csc_matrix(scipy.io.mmread(m_path))
    n = K.shape[0]
    asym = abs(K - K.T).max() / abs(K).max()
    print(f"n = {n}, nnz(K) = {K.nnz}, relative asymmetry of K {asym:.1e}, sigma = {sigma:.6e}")
    values = eigsh(K, k=count, M=M, sigma=sigma, which="LM", tol=0.0, return_eigenvectors=False)
    values = np.sort(values)
    scipy_f = np.sqrt(np.maximum(values, 0.0)) / (2.0 * math.pi)
    glaze_f = np.loadtxt(freq_path, ndmin=1)
    if len(glaze_f) < count:
        print(f"glaze gave {len(glaze_f)} frequencies, {count} wanted")
        sys.exit(1)
    worst = 0.0
    for i in range(count):
        rel = abs(glaze_f[i] / scipy_f[i] - 1.0)
        worst = max(worst, rel)
        status = "ok" if rel <= tol else "FAIL"
        print(f"mode {i + 1:3d} glaze {glaze_f[i]:.12f} Hz scipy {scipy_f[i]:.12f} Hz rel {rel:.2e} {status}")
    print(f"worst relative difference {worst:.3e} (tolerance {tol:.1e})")
    sys.exit(0 if worst <= tol else 1)


if __name__ == "__main__":
    main()
