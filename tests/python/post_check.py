"""Independent recomputation of `glaze post` figures from a results file.

Reads the HDF5 file with h5py and recomputes, with NumPy and the PyPI
`rainflow` package (ASTM E1049-85 counting), the steady-part quantities
that `glaze post` reports: the largest vertical and horizontal
peak-to-peak motion over the stations of the span, the peak support force
magnitude and its ratio to the static one, the peak conductor tension, and
the Miner damage per hour of every support on a log-log S-N curve with an
endurance limit below its last point (Palmgren-Miner linear damage sum).

Usage: post_check.py RESULT.h5 TRANSIENT_S SN_JSON  ->  JSON on stdout
"""
import json
import sys

import h5py
import numpy as np
import rainflow


def cycles_to_failure(points, s):
    n = np.array([p[0] for p in points], dtype=float)
    r = np.array([p[1] for p in points], dtype=float)
    if s < r[-1]:
        return np.inf  # endurance limit below the last point
    if s >= r[0]:
        i = 0
    else:
        i = int(np.nonzero(r <= s)[0][0]) - 1
        i = min(max(i, 0), len(r) - 2)
    slope = (np.log(n[i + 1]) - np.log(n[i])) / (np.log(r[i + 1]) - np.log(r[i]))
    return float(np.exp(np.log(n[i]) + slope * (np.log(s) - np.log(r[i]))))


def main():
    path, transient, sn = sys.argv[1], float(sys.argv[2]), json.loads(sys.argv[3])
    h = h5py.File(path, "r")
    t = h["dynamic/time"][:]
    r0 = int(np.nonzero(t >= transient)[0][0])
    disp = h["dynamic/displacement"][r0:]
    static = h["static/position"][:]
    nodes = h["model/spans/nodes"][:]
    off = h["model/spans/node_offset"][:]
    span = nodes[off[0]:off[1]]
    a, b = static[span[0]], static[span[-1]]
    d = np.array([b[0] - a[0], b[1] - a[1]])
    d /= np.linalg.norm(d)
    across = np.array([-d[1], d[0]])
    z = disp[:, span, 2]
    y = disp[:, span, 0] * across[0] + disp[:, span, 1] * across[1]
    vpp = z.max(axis=0) - z.min(axis=0)
    hpp = y.max(axis=0) - y.min(axis=0)
    k = int(np.argmax(vpp))
    station = float((static[span[k], 0] - a[0]) * d[0] + (static[span[k], 1] - a[1]) * d[1])

    sf = h["dynamic/support_force"][r0:]
    mag = np.linalg.norm(sf, axis=2)
    static_sf = np.linalg.norm(h["static/support_force"][:], axis=1)
    el = h["model/spans/elements"][:]
    axial = h["dynamic/element_axial_force"][r0:, el[0, 0]:el[0, 1]]

    hours = (t[-1] - t[r0]) / 3600.0
    damage = []
    for s in range(mag.shape[1]):
        dsum = 0.0
        for rng, count in rainflow.count_cycles(mag[:, s]):
            dsum += count / cycles_to_failure(sn, rng)
        damage.append(dsum / hours)
    print(json.dumps({
        "vertical_pp": float(vpp.max()),
        "horizontal_pp": float(hpp.max()),
        "worst_station": station,
        "support_peak": [float(v) for v in mag.max(axis=0)],
        "support_ratio": [float(v) for v in mag.max(axis=0) / static_sf],
        "conductor_peak": float(axial.max()),
        "damage_per_hour": damage,
    }))


if __name__ == "__main__":
    main()
