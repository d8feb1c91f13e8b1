#!/usr/bin/env python3
"""Independent cross-check of a glaze static results file.

Reads the results file with h5py, takes the input TOML stored in it, solves
every span's elastic catenary (Irvine, Cable Structures, 1981, eqs. 2.5-2.7
in Lagrangian form) with scipy.optimize.fsolve from the stringing target at
the stringing temperature, changes state to the load case (temperature
scales the unstretched length by 1 + alpha*dT, ice adds rho*pi*t*(d+t) kg/m,
total mass conserved), and compares sag, horizontal tension and the two
support tensions with glaze's /static/spans datasets.

Usage: catenary_crosscheck.py RESULTS.h5 [RELATIVE_TOLERANCE]
Exit 0 when every quantity agrees within the tolerance (default 1e-3).
"""
import math
import sys
import tomllib

import h5py
import numpy as np
from scipy.optimize import brentq, fsolve

G0 = 9.80665  # standard gravity, m/s^2


def shape(H, V0, s, w, EA):
    """(x, z) at unstretched arc length s (Irvine 1981)."""
    V = V0 + w * s
    x = H * s / EA + (H / w) * (math.asinh(V / H) - math.asinh(V0 / H))
    z = (V0 * s + 0.5 * w * s * s) / EA + (math.hypot(H, V) - math.hypot(H, V0)) / w
    return x, z


def solve_given_h(H, l, h, w, EA):
    """Unknowns V0 and L0 so that the cable reaches (l, h)."""
    chord = math.hypot(l, h)
    guess = [H * h / l - w * chord / 2, chord]

    def f(u):
        x, z = shape(H, u[0], u[1], w, EA)
        return [x - l, z - h]

    (V0, L0), info, ier, msg = fsolve(f, guess, xtol=1e-13, full_output=True)
    assert max(abs(r) for r in f([V0, L0])) < 1e-9 * chord, msg
    return V0, L0


def solve_given_l0(L0, l, h, w, EA, H_guess):
    def f(u):
        x, z = shape(u[0], u[1], L0, w, EA)
        return [x - l, z - h]

    (H, V0), info, ier, msg = fsolve(f, [H_guess, H_guess * h / l - w * L0 / 2], xtol=1e-13, full_output=True)
    assert max(abs(r) for r in f([H, V0])) < 1e-9 * L0, msg
    return H, V0


def sag(H, V0, L0, l, h, w, EA):
    s_star = min(max((H * h / l - V0) / w, 0.0), L0)
    x, z = shape(H, V0, s_star, w, EA)
    return h * x / l - z


def main():
    path = sys.argv[1]
    tol = float(sys.argv[2]) if len(sys.argv) > 2 else 1e-3
    with h5py.File(path, "r") as f:
        assert f.attrs["format"] == "glaze-results", "not a glaze results file"
        assert int(f.attrs["complete"]) == 1, "results file is not complete"
        text = f.attrs["input_toml"]
        text = text.decode() if isinstance(text, bytes) else str(text)
        spans_out = {k: np.array(f["static/spans"][k]) for k in f["static/spans"]}
    cfg = tomllib.loads(text)
    g = cfg["load_case"].get("gravity", G0)
    supports = {s["name"]: np.array(s["position"], float) for s in cfg["supports"]}
    dT = cfg["load_case"]["temperature"] - cfg["stringing"]["temperature"]
    worst = 0.0
    for i, sp in enumerate(cfg["spans"]):
        c = cfg["conductors"][sp["conductor"]]
        a, b = supports[sp["from"]], supports[sp["to"]]
        l = math.hypot(b[0] - a[0], b[1] - a[1])
        h = b[2] - a[2]
        EA = c["axial_stiffness"]
        w = c["mass_per_length"] * g
        if "horizontal_tension" in sp:
            H0 = sp["horizontal_tension"]
        elif "catenary_parameter" in sp:
            H0 = sp["catenary_parameter"] * w
        else:
            target = sp["sag"]
            H0 = brentq(lambda H: sag(H, *solve_given_h(H, l, h, w, EA), l, h, w, EA) - target,
                        w * l * l / (8 * target) / 3, w * l * l / (8 * target) * 3, xtol=1e-12, rtol=1e-15)
        _, L0 = solve_given_h(H0, l, h, w, EA)
        # Change of state to the load case.
        ice = cfg["load_case"].get("ice")
        m = c["mass_per_length"]
        if ice:
            t = ice["thickness"]
            m += ice.get("density", 900.0) * math.pi * t * (c["diameter"] + t)
        scale = 1.0 + c["thermal_expansion"] * dT
        L0c = L0 * scale
        wc = m * g / scale
        H, V0 = solve_given_l0(L0c, l, h, wc, EA, H0)
        ref = {
            "sag": sag(H, V0, L0c, l, h, wc, EA),
            "horizontal_tension": H,
            "tension_start": math.hypot(H, V0),
            "tension_end": math.hypot(H, V0 + wc * L0c),
        }
        got = {
            "sag": spans_out["sag"][i],
            "horizontal_tension": spans_out["horizontal_tension"][i],
            "tension_start": spans_out["support_tension"][i][0],
            "tension_end": spans_out["support_tension"][i][1],
        }
        for k in ref:
            rel = abs(got[k] / ref[k] - 1.0)
            worst = max(worst, rel)
            status = "ok" if rel <= tol else "FAIL"
            print(f"span {i + 1} {k:20s} glaze {got[k]:14.6f} scipy {ref[k]:14.6f} rel {rel:.2e} {status}")
    print(f"worst relative difference {worst:.3e} (tolerance {tol:.1e})")
    sys.exit(0 if worst <= tol else 1)


if __name__ == "__main__":
    main()
