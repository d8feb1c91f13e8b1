"""Independent projection of a run's motion on the linear modes stored in
its results file (h5py, NumPy, SciPy's Rotation for the quaternions).

Input on stdin, JSON: {"file": PATH, "from_time": t0}. For every record at
t >= t0: Δ per node = [displacement, rotation vector of R(t) R_static^T];
q_k = Σ_n φ_k,n^T M_n Δ_n with the stored mass-normalised shapes and the
stored 6x6 node masses; ΔᵀMΔ likewise. Prints JSON with, per mode, the RMS
and peak |q_k| and the share mean(q_k²)/mean(ΔᵀMΔ).
"""
import json
import sys

import h5py
import numpy as np
from scipy.spatial.transform import Rotation


def main():
    args = json.load(sys.stdin)
    with h5py.File(args["file"], "r") as f:
        t = f["dynamic/time"][:]
        keep = t >= args["from_time"] - 1e-12
        disp = f["dynamic/displacement"][keep]  # [T, n, 3]
        rot = f["dynamic/rotation"][keep]  # [T, n, 4] (w, x, y, z)
        rot_static = f["static/rotation"][:]  # [n, 4]
        shape = f["modes/shape"][:]  # [k, n, 6]
        mass = f["modes/node_mass"][:]  # [n, 6, 6]
    records, n = disp.shape[0], disp.shape[1]
    # SciPy quaternions are scalar-last (x, y, z, w).
    r_static = Rotation.from_quat(rot_static[:, [1, 2, 3, 0]])
    delta = np.zeros((records, n, 6))
    delta[:, :, :3] = disp
    for r in range(records):
        rel = Rotation.from_quat(rot[r][:, [1, 2, 3, 0]]) * r_static.inv()
        delta[r, :, 3:] = rel.as_rotvec()
    m_delta = np.einsum("nij,tnj->tni", mass, delta)
    q = np.einsum("kni,tni->tk", shape, m_delta)  # [T, k]
    norm2 = np.einsum("tni,tni->t", delta, m_delta)
    mean_square = (q**2).mean(axis=0)
    out = {
        "records": int(records),
        "rms": np.sqrt(mean_square).tolist(),
        "peak": np.abs(q).max(axis=0).tolist(),
        "share": (mean_square / norm2.mean()).tolist(),
    }
    print(json.dumps(out))


if __name__ == "__main__":
    main()
