"""Independent recomputation of the clamp bending stress of `glaze post`.

Reads the results file with h5py. A suspension clamp is a node that ends
one meshed span and starts the next span of the same phase and
subconductor. Per record, from the node positions (static position plus
displacement) of the nodes before, at and after it, each side's chord v
from the clamp gives an elevation beta = atan2(v_z, h) and a plan angle
alpha = atan2(across . v, h), h = |along . v| (along: plan direction back
node -> forward node at rest, across = z x along). A freely pivoting clamp
takes the mean of the two sides, so each side bends by
dtheta = (x_forward + x_back)/2 less its static value. Stress
(Poffenberger & Swart 1965, clamped tensioned beam): kappa0 = p dtheta,
p = sqrt(T/EI_min), sigma = E_a d_a/2 kappa0, T the static tension at the
clamp (mean axial force of the two end elements), EI_min = sum n E pi d^4/64.
Cycles: the PyPI `rainflow` package (ASTM E1049-85), Miner damage per hour
on the S-N curve read as amplitudes (range/2) with the last slope
extrapolated.

Usage: clamp_bending_check.py RESULT.h5 TRANSIENT_S WIRES_JSON SN_JSON -> JSON
WIRES_JSON: [[count, diameter_m, modulus_pa], ...], the outer group first.
SN_JSON: [[cycles, amplitude_mpa], ...].
"""
import json
import sys

import h5py
import numpy as np
import rainflow


def cycles_to_failure(points, s):
    n = np.log([p[0] for p in points])
    r = np.log([p[1] * 1e6 for p in points])
    ls = np.log(s)
    i = 0
    while i < len(r) - 2 and ls < r[i + 1]:
        i += 1
    slope = (n[i + 1] - n[i]) / (r[i + 1] - r[i])
    return float(np.exp(n[i] + slope * (ls - r[i])))


def main():
    path, transient = sys.argv[1], float(sys.argv[2])
    wires, sn = json.loads(sys.argv[3]), json.loads(sys.argv[4])
    h = h5py.File(path, "r")
    t = h["dynamic/time"][:]
    r0 = int(np.nonzero(t >= transient)[0][0])
    pos0 = h["static/position"][:]
    disp = h["dynamic/displacement"][r0:]
    axial0 = h["static/element_axial_force"][:]
    nodes = h["model/spans/nodes"][:]
    off = h["model/spans/node_offset"][:]
    elements = h["model/spans/elements"][:]
    route = h["model/spans/route_span"][:]
    phase = h["model/spans/phase"][:]
    sub = h["model/spans/subconductor"][:]
    tower_names = [s.decode() if isinstance(s, bytes) else s for s in h["model/towers/name"][:]]
    phase_names = [s.decode() if isinstance(s, bytes) else s for s in h["model/phase_names"][:]]
    ei_min = sum(n * e * np.pi * d**4 / 64 for n, d, e in wires)
    _, d_a, e_a = wires[0]
    hours = (t[-1] - t[r0]) / 3600.0

    out = []
    spans = range(len(route))
    for a in spans:
        if phase[a] < 0:
            continue
        na = nodes[off[a]:off[a + 1]]
        for b in spans:
            nb = nodes[off[b]:off[b + 1]]
            if not (phase[b] == phase[a] and sub[b] == sub[a] and route[b] == route[a] + 1 and nb[0] == na[-1]):
                continue
            k, c, f = na[-2], nb[0], nb[1]
            along = pos0[f, :2] - pos0[k, :2]
            along /= np.linalg.norm(along)
            across = np.array([-along[1], along[0]])
            tension = 0.5 * (axial0[elements[a, 1] - 1] + axial0[elements[b, 0]])
            p = np.sqrt(tension / ei_min)

            def angles(pk, pc, pf):
                res = []
                for q in (pf, pk):
                    v = q - pc
                    hh = np.abs(v[..., :2] @ along)
                    res.append((np.arctan2(v[..., 2], hh), np.arctan2(v[..., :2] @ across, hh)))
                return [0.5 * (res[0][i] + res[1][i]) for i in range(2)]

            static = angles(pos0[k], pos0[c], pos0[f])
            now = angles(pos0[k] + disp[:, k], pos0[c] + disp[:, c], pos0[f] + disp[:, f])
            for plane, name in enumerate(["vertical", "horizontal"]):
                dtheta = now[plane] - static[plane]
                sigma = e_a * d_a / 2 * p * dtheta
                cyc = list(rainflow.extract_cycles(sigma))
                max_range = max((cy[0] for cy in cyc), default=0.0)
                damage = sum(cy[2] / cycles_to_failure(sn, cy[0] / 2) for cy in cyc if cy[0] > 0)
                out.append({
                    "tower": tower_names[route[b]],
                    "phase": phase_names[phase[a]],
                    "subconductor": int(sub[a]) + 1,
                    "plane": name,
                    "static_tension_n": float(tension),
                    "max_range_mpa": float(max_range) / 1e6,
                    "damage_per_hour": float(damage / hours),
                })
    print(json.dumps(out))


if __name__ == "__main__":
    main()
