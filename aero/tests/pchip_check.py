#!/usr/bin/env python3
"""Reference values for glaze's coefficient-table interpolation, from SciPy.

Usage: pchip_check.py TABLE.csv LO_RAD HI_RAD N [pchip|linear]

Reads a glaze coefficient table (comment lines start with '#', a header row
names alpha_deg, cd, cl and optionally cm), converts alpha to rad with
numpy.deg2rad, and at N evenly spaced angles in [LO_RAD, HI_RAD] prints one
line per angle:

    alpha cd cl cm dcd dcl dcm

each as Python's shortest round-trip repr. With "pchip" (the default) the
values and first derivatives come from scipy.interpolate.PchipInterpolator
(interior node derivatives: Fritsch-Butland weighted harmonic mean; ends:
the one-sided three-point shape-preserving formula of Moler's pchiptx). With
"linear" they come from numpy.interp, and the derivatives are the secant
slope of the interval holding each angle (the right-hand one at a node).

Used by aero/tests/scipy_pchip.rs; exits non-zero (with the reason on stderr)
if numpy or scipy is missing or the table cannot be read.
"""

import csv
import sys

import numpy as np
from scipy.interpolate import PchipInterpolator


def read_table(path):
    with open(path, encoding="utf-8-sig") as f:
        lines = [ln for ln in f if ln.strip() and not ln.lstrip().startswith("#")]
    rows = list(csv.reader(lines))
    names = [n.strip().strip('"').strip().lower() for n in rows[0]]
    data = np.array([[float(v) for v in r] for r in rows[1:]])
    col = {n: data[:, i] for i, n in enumerate(names)}
    zeros = np.zeros(len(data))
    return np.deg2rad(col["alpha_deg"]), [col["cd"], col["cl"], col.get("cm", zeros)]


def main():
    path, lo, hi, n = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), int(sys.argv[4])
    mode = sys.argv[5] if len(sys.argv) > 5 else "pchip"
    x, columns = read_table(path)
    xs = np.linspace(lo, hi, n)
    values, slopes = [], []
    for y in columns:
        if mode == "pchip":
            p = PchipInterpolator(x, y, extrapolate=False)
            values.append(p(xs))
            slopes.append(p.derivative()(xs))
        elif mode == "linear":
            values.append(np.interp(xs, x, y))
            i = np.clip(np.searchsorted(x, xs, side="right") - 1, 0, len(x) - 2)
            slopes.append((y[i + 1] - y[i]) / (x[i + 1] - x[i]))
        else:
            sys.exit(f"unknown mode {mode!r}: expected pchip or linear")
    for k, a in enumerate(xs):
        fields = [a] + [v[k] for v in values] + [s[k] for s in slopes]
        print(" ".join(repr(float(f)) for f in fields))


if __name__ == "__main__":
    main()
