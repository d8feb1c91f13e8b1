#!/usr/bin/env python3
"""Independent reference for the torsional frequencies of a bundle span,
with and without detuning pendulums. NumPy/SciPy only; nothing here calls
glaze.

Usage
-----
    bundle_torsion.py [INPUT.json | -]   JSON in (file, or stdin when absent
                                         or "-"), JSON out on stdout
    bundle_torsion.py --selftest         built-in checks, exit 0 on pass

Errors go to stderr with exit status 1; the output never holds NaN/inf.

Model
-----
The standard bundle-torsion model (Nigol & Clarke, "Conductor galloping and
control based on torsional mechanism", IEEE PES 1974; CIGRE TB 322, "State
of the art of conductor galloping", 2007; both from memory): n
subconductors, each at tension T and at radius r from the bundle axis, the
section kept rigid by the spacers, twist theta(x, t) of the whole bundle.
A twist theta' per length tilts each subconductor by r theta' against its
tension, so the tensions give a torque n T r^2 theta' (the geometric
stiffness); the subconductors' own torsional rigidity adds n GJ (they twist
with the bundle). The subconductors' bending stiffness and the spacers'
inertia are neglected. Per unit length:

    I theta_tt = K_t theta_xx,   K_t = n T r^2 + n GJ,   I = n (m r^2 + j)

with m the mass per length and j the polar mass moment of inertia per length
of one subconductor about its own axis (kg m). Both ends fixed in twist
(theta = 0 at the towers). Frequencies

    f_k = k / (2 L) sqrt(K_t / I),    k = 1, 2, ...

Detuning pendulums: a point mass M on an arm a from the bundle axis (a is
measured from the torsion axis to the mass centre), at distance x from the
left end, adds the point inertia J_p = M a^2 + J0 (J0: the pendulum's own
inertia about its centre, default 0). Optionally ("pendulum_gravity": true)
its weight adds the point torsional spring k_p = M g a (hanging below the
axis, a twist theta lifts the mass by a (1 - cos theta)). At a pendulum the
torque jumps: K_t [theta'(x+) - theta'(x-)] = (k_p - omega^2 J_p) theta(x).

- "f_pendulum_exact": exact, by the transfer matrix of the torsional string
  (field: theta(l) = theta0 cos(kl) + tau0 sin(kl)/(K_t k), tau(l) =
  -theta0 K_t k sin(kl) + tau0 cos(kl), k = omega/c, c = sqrt(K_t/I);
  point: tau+ = tau- + (k_p - omega^2 J_p) theta), theta(0) = 0, tau(0) = 1,
  the roots of theta(L; omega) = 0 by a fine scan and brentq. For a single
  pendulum this is the characteristic equation
      K_t k sin(kL) + (k_p - J_p c^2 k^2) sin(kx) sin(k(L - x)) = 0.
- "f1_pendulum_rayleigh": Rayleigh quotient with the unperturbed first mode
  sin(pi x / L):  omega^2 = [K_t pi^2/(2L) + sum k_p s^2] / [I L/2 +
  sum J_p s^2], s = sin(pi x_p / L) (an upper bound of the exact f1 when
  there are no springs).
- "f_pendulum_fd": linear finite elements with lumped inertia (about
  fd_nodes elements, the mesh piecewise uniform with a node at every
  pendulum; the same stencil as central finite differences on each uniform
  piece) and scipy.linalg.eigh_tridiagonal of the symmetrised problem.

Input
-----
{"n": number of subconductors (>= 2),
 "spacing": m (distance between adjacent subconductors of the regular
            polygon; r = spacing / (2 sin(pi/n)), so r = spacing/2 for a twin)
   or "radius": m (r directly; one of the two),
 "T": N (tension of each subconductor),
 "L": m (span),
 "m": kg/m (mass per length of each subconductor),
 "j": kg m (optional; default m d^2/8 from "diameter" when given, else 0),
 "diameter": m (optional, only for the default j),
 "GJ": N m^2 (optional, each subconductor, default 0),
 "modes": how many frequencies (default 3),
  "pendulums": [{"M": kg, "a": m (>= 0), "x": m, "J0": kg m^2 (optional)}] (optional),
 "pendulum_gravity": false (optional), "g": 9.80665 (optional),
 "fd_nodes": 4000 (optional)}

Output
------
{"radius": m, "K_t": N m^2, "I": kg m, "wave_speed": m/s,
 "f1": Hz, "f_torsion": [Hz, modes],
 "f_vertical_string": sqrt(T/m)/(2L) (Hz, first vertical mode of one
                      subconductor as a taut string, for comparison),
 "torsion_to_vertical_ratio": f1 / f_vertical_string,
 and with pendulums:
 "J_pendulums": [kg m^2], "k_pendulums": [N m/rad],
 "f1_pendulum_exact": Hz, "f_pendulum_exact": [Hz, modes],
 "f1_pendulum_rayleigh": Hz, "f_pendulum_fd": [Hz, modes],
 "fd_vs_exact_max_rel": -}
"""
import json
import math
import sys

import numpy as np
from scipy.linalg import eigh_tridiagonal
from scipy.optimize import brentq

G0 = 9.80665


class InputError(Exception):
    pass


def positive(data, key, default=None, allow_zero=False):
    v = data.get(key, default)
    if v is None:
        raise InputError(f"{key} is required")
    v = float(v)
    if not math.isfinite(v) or v < 0 or (v == 0 and not allow_zero):
        raise InputError(f"{key} must be {'non-negative' if allow_zero else 'positive'}")
    return v


def theta_end(k, L, Kt, points):
    """theta(L) for theta(0) = 0, tau(0) = 1 at wavenumber k (points sorted
    by x: (x, J, kp)); c^2 = Kt / I so omega^2 = k^2 Kt / I is passed as
    point 'jump(k)' callables."""
    theta, tau, x0 = 0.0, 1.0, 0.0
    for x, jump in points:
        l = x - x0
        c, s = math.cos(k * l), math.sin(k * l)
        theta, tau = theta * c + tau * s / (Kt * k), -theta * Kt * k * s + tau * c
        tau += jump(k) * theta
        x0 = x
    l = L - x0
    return theta * math.cos(k * l) + tau * math.sin(k * l) / (Kt * k)


def exact_roots(L, Kt, I, pend, count):
    """First `count` wavenumbers with theta(L) = 0."""
    pts = sorted(pend, key=lambda p: p[0])
    points = [(x, (lambda k, J=J, kp=kp: kp - J * (k * k * Kt / I))) for x, J, kp in pts]
    f = lambda k: theta_end(k, L, Kt, points)
    roots = []
    dk = math.pi / L / 400.0
    k_prev, f_prev = 1e-9 / L, f(1e-9 / L)
    kmax = (count + 2 + len(pts)) * math.pi / L * 4.0
    k = k_prev
    while len(roots) < count and k < kmax:
        k = k_prev + dk
        fk = f(k)
        if fk == 0.0:
            roots.append(k)
        elif f_prev * fk < 0.0:
            roots.append(brentq(f, k_prev, k, xtol=1e-15 / L, rtol=1e-15, maxiter=500))
        k_prev, f_prev = k, fk
    if len(roots) < count:
        raise ArithmeticError("transfer-matrix scan found fewer roots than asked")
    return roots


def fd_frequencies(L, Kt, I, pend, count, N):
    """Linear finite elements with lumped inertia on a mesh of about N
    elements, piecewise uniform so that every pendulum sits on a node."""
    cuts = sorted({0.0, L, *[x for x, _, _ in pend]})
    nodes = [0.0]
    for a, b in zip(cuts, cuts[1:]):
        ne = max(2, int(round(N * (b - a) / L)))
        nodes.extend(np.linspace(a, b, ne + 1)[1:].tolist())
    xn = np.array(nodes)
    he = np.diff(xn)
    nn = len(xn)
    diag = np.zeros(nn)
    mass = np.zeros(nn)
    diag[:-1] += Kt / he
    diag[1:] += Kt / he
    mass[:-1] += 0.5 * I * he
    mass[1:] += 0.5 * I * he
    off = -Kt / he
    for x, J, kp in pend:
        i = int(np.argmin(np.abs(xn - x)))
        mass[i] += J
        diag[i] += kp
    # Fixed ends: drop the first and last nodes.
    d, mm, e = diag[1:-1], mass[1:-1], off[1:-1]
    sm = 1.0 / np.sqrt(mm)
    lam = eigh_tridiagonal(d * sm * sm, e * sm[:-1] * sm[1:], eigvals_only=True,
                           select="i", select_range=(0, count - 1))
    return [math.sqrt(v) / (2.0 * math.pi) for v in lam]


def run(data):
    n = int(data.get("n", 0))
    if n < 2:
        raise InputError("n (subconductors) must be >= 2")
    if "radius" in data:
        r = positive(data, "radius")
    elif "spacing" in data:
        r = positive(data, "spacing") / (2.0 * math.sin(math.pi / n))
    else:
        raise InputError("give spacing or radius")
    T = positive(data, "T")
    L = positive(data, "L")
    m = positive(data, "m")
    if "j" in data:
        j = positive(data, "j", allow_zero=True)
    elif "diameter" in data:
        j = m * positive(data, "diameter") ** 2 / 8.0
    else:
        j = 0.0
    GJ = positive(data, "GJ", 0.0, allow_zero=True)
    modes = int(data.get("modes", 3))
    if modes < 1:
        raise InputError("modes must be >= 1")
    g = positive(data, "g", G0)

    Kt = n * T * r * r + n * GJ
    I = n * (m * r * r + j)
    c = math.sqrt(Kt / I)
    f_t = [k * c / (2.0 * L) for k in range(1, modes + 1)]
    f_v = math.sqrt(T / m) / (2.0 * L)
    out = {"radius": r, "K_t": Kt, "I": I, "wave_speed": c, "f1": f_t[0], "f_torsion": f_t,
           "f_vertical_string": f_v, "torsion_to_vertical_ratio": f_t[0] / f_v}

    pendulums = data.get("pendulums") or []
    if pendulums:
        grav = bool(data.get("pendulum_gravity", False))
        pend = []
        for p in pendulums:
            M = positive(p, "M")
            a = positive(p, "a", allow_zero=True)  # 0: a point inertia J0 on the axis (e.g. a spacer)
            x = float(p["x"])
            if not 0.0 < x < L:
                raise InputError("pendulum x must be inside the span")
            J = M * a * a + positive(p, "J0", 0.0, allow_zero=True)
            kp = M * g * a if grav else 0.0
            pend.append((x, J, kp))
        ks = exact_roots(L, Kt, I, pend, modes)
        f_ex = [k * c / (2.0 * math.pi) for k in ks]
        num = Kt * math.pi**2 / (2.0 * L) + sum(kp * math.sin(math.pi * x / L) ** 2 for x, _, kp in pend)
        den = I * L / 2.0 + sum(J * math.sin(math.pi * x / L) ** 2 for x, J, _ in pend)
        f_ray = math.sqrt(num / den) / (2.0 * math.pi)
        N = int(data.get("fd_nodes", 4000))
        f_fd = fd_frequencies(L, Kt, I, pend, modes, N)
        out.update({
            "pendulum_gravity_included": grav,
            "J_pendulums": [J for _, J, _ in pend],
            "k_pendulums": [kp for _, _, kp in pend],
            "f1_pendulum_exact": f_ex[0],
            "f_pendulum_exact": f_ex,
            "f1_pendulum_rayleigh": f_ray,
            "f_pendulum_fd": f_fd,
            "fd_vs_exact_max_rel": max(abs(a / b - 1.0) for a, b in zip(f_fd, f_ex)),
        })
    return out


def selftest():
    failures = []

    def check(name, ok, detail=""):
        print(f"{'ok  ' if ok else 'FAIL'} {name} {detail}")
        if not ok:
            failures.append(name)

    base = {"n": 2, "spacing": 0.457, "T": 24000.0, "L": 400.0, "m": 1.628, "diameter": 0.02814,
            "GJ": 35.0, "modes": 4}
    o = run(base)
    r = 0.457 / 2
    Kt = 2 * 24000.0 * r * r + 2 * 35.0
    I = 2 * (1.628 * r * r + 1.628 * 0.02814**2 / 8)
    f1 = math.sqrt(Kt / I) / 800.0
    check("twin: r = s/2 and f1 by hand", abs(o["radius"] - r) < 1e-15 and abs(o["f1"] / f1 - 1) < 1e-14,
          f"({o['f1']:.9f} Hz)")
    quad = run({**base, "n": 4, "spacing": 0.457})
    check("quad: r = s / sqrt(2)", abs(quad["radius"] - 0.457 / math.sqrt(2)) < 1e-15)
    # No GJ, no j: the torsional frequency equals the subconductor's string frequency.
    o2 = run({**base, "GJ": 0.0, "j": 0.0})
    check("GJ = j = 0: f_torsion = f_vertical_string", abs(o2["torsion_to_vertical_ratio"] - 1) < 1e-14)
    # Tiny pendulum: the exact and FD results go to the bare frequencies.
    p = run({**base, "pendulums": [{"M": 1e-9, "a": 0.5, "x": 100.0}]})
    dev = max(abs(a / b - 1) for a, b in zip(p["f_pendulum_exact"], o["f_torsion"]))
    check("negligible pendulum: exact = bare", dev < 1e-10, f"({dev:.1e})")
    dev = max(abs(a / b - 1) for a, b in zip(p["f_pendulum_fd"], o["f_torsion"]))
    check("negligible pendulum: FD = bare (O(h^2))", dev < 1e-6, f"({dev:.1e})")
    # One pendulum: transfer matrix = single-mass characteristic equation.
    M, a, x = 15.0, 0.6, 100.0
    p = run({**base, "pendulums": [{"M": M, "a": a, "x": x}]})
    J = M * a * a
    c = math.sqrt(Kt / I)
    char = lambda k: Kt * k * math.sin(k * 400.0) - J * c * c * k * k * math.sin(k * x) * math.sin(k * (400.0 - x))
    k1 = 2 * math.pi * p["f1_pendulum_exact"] / c
    check("single pendulum: characteristic equation holds", abs(char(k1)) < 1e-9 * Kt * k1,
          f"({char(k1):.1e})")
    check("pendulum lowers f1, Rayleigh is an upper bound",
          p["f1_pendulum_exact"] < o["f1"] and p["f1_pendulum_rayleigh"] >= p["f1_pendulum_exact"],
          f"({p['f1_pendulum_exact']:.6f} <= {p['f1_pendulum_rayleigh']:.6f} < {o['f1']:.6f})")
    check("FD within 1e-5 of exact", p["fd_vs_exact_max_rel"] < 1e-5, f"({p['fd_vs_exact_max_rel']:.1e})")
    # Midspan pendulum: the antisymmetric modes (2, 4) do not move.
    p = run({**base, "pendulums": [{"M": M, "a": a, "x": 200.0}]})
    dev = max(abs(p["f_pendulum_exact"][k] / o["f_torsion"][k] - 1) for k in (1, 3))
    check("midspan pendulum leaves modes 2 and 4", dev < 1e-10, f"({dev:.1e})")
    # Huge midspan inertia: the first mode is the inertia rocking on the two
    # half spans (static stiffness 2 K_t / (L/2)), the string's inertia
    # negligible (I L / J ~ 1e-7).
    p = run({**base, "pendulums": [{"M": 1e9, "a": 1.0, "x": 200.0}], "modes": 1})
    f_rock = math.sqrt(4 * Kt / 400.0 / 1e9) / (2 * math.pi)
    check("huge midspan inertia: rocking on the half spans", abs(p["f1_pendulum_exact"] / f_rock - 1) < 1e-6,
          f"({p['f1_pendulum_exact']:.9e} vs {f_rock:.9e})")
    # Gravity spring raises the frequency relative to inertia only.
    pg = run({**base, "pendulums": [{"M": M, "a": a, "x": x}], "pendulum_gravity": True})
    pi_ = run({**base, "pendulums": [{"M": M, "a": a, "x": x}]})
    check("gravity stiffness raises f1", pg["f1_pendulum_exact"] > pi_["f1_pendulum_exact"]
          and pg["fd_vs_exact_max_rel"] < 1e-5)
    # Two pendulums, symmetric: FD agrees.
    p2 = run({**base, "pendulums": [{"M": M, "a": a, "x": 100.0}, {"M": M, "a": a, "x": 300.0}]})
    check("two pendulums: FD agrees", p2["fd_vs_exact_max_rel"] < 1e-5, f"({p2['fd_vs_exact_max_rel']:.1e})")

    print("selftest", "FAILED: " + ", ".join(failures) if failures else "passed")
    return 0 if not failures else 1


def main():
    if len(sys.argv) > 1 and sys.argv[1] == "--selftest":
        sys.exit(selftest())
    try:
        if len(sys.argv) > 1 and sys.argv[1] != "-":
            with open(sys.argv[1]) as f:
                data = json.load(f)
        else:
            data = json.load(sys.stdin)
        print(json.dumps(run(data), allow_nan=False))
    except (InputError, KeyError, TypeError, ValueError, ArithmeticError) as e:
        print(f"bundle_torsion.py: {type(e).__name__}: {e}", file=sys.stderr)
        sys.exit(1)


if __name__ == "__main__":
    main()
