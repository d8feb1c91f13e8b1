#!/usr/bin/env python3
"""Independent reference for a tension section with line angles in plan:
static equilibrium of a multi-span section whose route turns at suspension
towers, single conductor, elastic catenaries, rigid insulator strings
swinging in 3D. NumPy/SciPy only; nothing here calls glaze.

Usage
-----
    angle_section.py [INPUT.json | -]   JSON in (file, or stdin when absent
                                        or "-"), JSON out on stdout
    angle_section.py --selftest         runs the built-in checks, exit 0 on pass

Errors (bad input, no convergence) go to stderr with exit status 1; the
output never contains NaN or infinity.

Relation to ruling_span.py
--------------------------
This is the 3D generalisation of the "section" mode of ruling_span.py (same
folder), with the same conventions, weight bases and continuation. The
elastic-catenary primitives (cat_end, cat_jac, span_given_H, span_given_S0,
sag_of) and the input helpers are imported from ruling_span.py rather than
copied, so both references share one catenary implementation (checked by
ruling_span.py's own self-test); the folder of this file is put on sys.path
so the script runs standalone from anywhere, and bytecode writing is turned
off so the import leaves no __pycache__ behind. The self-test calls
ruling_span.run_section for the straight-route comparison.

Units: SI throughout (m, N, N/m, kg, K or degC, 1/K).

Input
-----
    {"towers": [{"x": m, "y": m (default 0), "z": m,
                 "string_length": m, "string_mass": kg, "dead_end": bool}, ...],
     "EA": N (scalar or per span), "alpha": 1/K (scalar or per span),
     "H1": N, "t1": degC, "t2": degC,
     "w1": [N/m per span] or scalar, "w2": [N/m per span] or scalar,
     "g": m/s^2 (default 9.80665),
     "continuation_steps": int (default 10),
     "weight_basis": "reference" (default) | "current"   (as ruling_span.py),
     "string_cg_fraction": 0.5 (default; distance of the string's centre of
                                mass from the hinge over its length)}

(x, y, z) is the hinge of the string at the cross-arm, or the clamp point of
the conductor when string_length is 0 (a clamp: the conductor is fixed there;
its string_mass is then ignored). string_length is required at suspension
towers (it may be 0) and defaults to 0 at dead ends. The first and last
towers must be dead ends; an intermediate tower flagged dead_end must have
string_length 0 (a rigid point; an intermediate anchor with two strings is
not modelled: split the section there). Spans run from tower k to k + 1
(k = 0 .. n-1, zero based). Plan legs between consecutive hinges must be
non-zero, and the line angle at each tower must be below 90 deg.

Geometry, frames and signs (z up)
---------------------------------
Route legs: u_i = unit plan vector from hinge i to hinge i+1 (z = 0).
Line angle at interior tower k: theta_k = signed angle from u_{k-1} to u_k,
positive when the route turns left (counter-clockwise seen from above).
Route frame at tower k (fixed, from the hinges, the same in both states):
    t_k = unit(u_{k-1} + u_k) at interior towers (the bisector, forward along
          the route); t_0 = u_0 and t_n = u_{n-1} at the end towers;
    n_k = z x t_k (horizontal, to the left of the route).
The inside of a left turn (theta > 0) is +n.

Swing angles, with d = yoke - hinge (hinge to string bottom):
    swing_along  = atan2(d . t_k, -d . z)
    swing_across = atan2(d . n_k, -d . z)
    swing total  = atan2(|d_xy|, -d . z)   (angle from the downward vertical)
all in degrees, 0 at clamps (string_length 0). A suspension string swung
forward along the route has swing_along > 0; one leaning to the left has
swing_across > 0. At a dead end the same formulas hold with t = the single
adjacent leg's direction (forward along the route), so the first dead-end
string, pointing into the section (forward), has swing_along near +90 deg
minus its droop and the last one near -90 deg plus its droop; their
swing_along equals ruling_span.py's "dead_end_angle_deg" on a straight route.

Spans: span i joins the yokes Y_i (end A) and Y_{i+1} (end B). It is an
elastic catenary (Irvine 1981, as in ruling_span.py) in the vertical plane
through Y_i and Y_{i+1}: plan length l = |(Y_{i+1} - Y_i)_xy|, plan direction
e_i = (Y_{i+1} - Y_i)_xy / l, height difference h = z_B - z_A. It pulls its
ends with
    on A: H e_i + V_A z,      on B: -H e_i - V_B z,     V_B = V_A + w S0.
Net cable force on yoke k: F_k = (sum of the pulls of spans k-1 and k).

Strings: rigid uniform rods of length L_k hinged at the tower point, free to
swing in both directions, weight m_k g at c L_k from the hinge (c =
string_cg_fraction, 0.5), tension along the rod. Equilibrium = moment
balance about the hinge:
    M_k = d_k x (F_k - c m_k g z) = 0,
i.e. the string lies along F'_k = F_k - c m_k g z and is in tension
(F'_k . d_k > 0, checked). Yoke parametrisation, regular about the nominal
direction a_k of the string (gnomonic: no singularity in the open hemisphere
around a_k, and no bound on the unknowns):
    d_k = L_k (a_k + p_k e1_k + q_k e2_k) / sqrt(1 + p_k^2 + q_k^2)
    suspension: a = -z, e1 = t_k, e2 = n_k, so p = tan(swing_along),
                q = tan(swing_across);
    dead end:   a = unit plan direction from the hinge into the section
                (u_0 at the first tower, -u_{n-1} at the last), e1 = z x a,
                e2 = z (q < 0: the string droops).
Residuals per string: (M_k . e1_k, M_k . e2_k) / L_k (N); they vanish iff
M_k = 0 since M_k is normal to d_k and d_k . a_k > 0.

Stringing state (state 1): every span at horizontal tension H1 under w1 at
t1 (ruling-span method); for given yokes each span's unstretched length S0
and V_A follow from the exact inclined catenary (span_given_H); the yokes
solve the string moment balance: fixed-point iteration (each string put
along the resultant F'_k of the current geometry) from plumb suspension
strings and horizontal dead-end strings, polished with scipy.optimize.root
(hybr). At an angle tower the string leans into the inside of the angle:
the two spans' horizontal pulls H1 (e_k - e_{k-1}) add up to 2 H1 sin(th/2)
along the inward bisector of the conductor directions (th = angle between
e_{k-1} and e_k, i.e. the angle of the conductor between the yokes, which
differs slightly from the route angle theta_k at the hinges), so
    tan(lean) = 2 H1 sin(th/2) / (V_down,left + V_down,right + c m g).
From that geometry: S0(t1) of each span.

State 2: S0(t2) = S0(t1) (1 + alpha (t2 - t1)); weights w2 on the chosen
basis ("reference": w2 per metre of unstretched conductor at t1, span weight
w2 S0(t1); per unstretched metre at t2 that is w2 / (1 + alpha dt));
unknown yokes; each span's (H, V_A) from span_given_S0 between the current
yokes; every string in moment balance; scipy.optimize.root (hybr) with
continuation: temperature and weights go from state 1 to state 2 in
continuation_steps equal steps, each solve starting from the previous one
(the first from the state-1 yokes). Residuals must end below 1e-10 * H1 (N),
else exit 1.

Output
------
    {"H1_check": [N per span: H recomputed from S0(t1) and the state-1 yokes
                  with span_given_S0; equals H1 to round-off],
     "H2": [N per span],
     "yoke_1": [[x, y, z] per tower] (state 1; the hinge itself at clamps),
     "yoke_2": [[x, y, z] per tower] (state 2),
     "swing_along_deg_2": [...], "swing_across_deg_2": [...]   (state 2),
     "swing_1_deg": [...]   (state 1, total angle from the downward vertical),
     "support_reactions_2": [[Fx, Fy, Fz] per tower] (N, force of the line --
                  cables and string -- on the tower at the hinge or clamp,
                  global axes; Fz includes the string's weight),
     "T_left": [N], "T_right": [N]  (state-2 tension at span ends A and B),
     "residual_max": N  (largest state-2 moment residual |M| / L),
     and also
     "line_angle_deg": [route angle theta_k per tower, 0 at the ends],
     "swing_along_deg_1", "swing_across_deg_1", "swing_2_deg": [...],
     "support_reactions_1": [[Fx, Fy, Fz] per tower] (state 1),
     "S0_t1", "S0_t2": [m per span],
     "V_left", "V_right": [N per span, state 2: vertical force of the cable
                  on its end A / end B, z up (negative = downward pull)],
     "sag": [m per span, state 2: largest vertical distance from the chord
             between the yokes to the cable],
     "residual_max_1": N  (same as residual_max, state 1)}
"""
import json
import math
import os
import sys

import numpy as np
from scipy.optimize import root

sys.dont_write_bytecode = True  # importing ruling_span must not leave a __pycache__
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import ruling_span  # noqa: E402  (same folder; NumPy/SciPy only)
from ruling_span import (  # noqa: E402
    G0, InputError, cat_end, per_span, require_positive, sag_of, span_given_H,
    span_given_S0, w_state2, weight_basis,
)

EZ = np.array([0.0, 0.0, 1.0])


def _finite(name, v):
    v = float(v)
    if not math.isfinite(v):
        raise InputError(f"{name} must be finite")
    return v


class Section:
    """Parsed input, frames and the force/moment evaluation of a section."""

    def __init__(self, data):
        towers = data.get("towers")
        if not isinstance(towers, list) or len(towers) < 2:
            raise InputError("towers: a list of at least two towers")
        self.nt = nt = len(towers)
        self.ns = ns = nt - 1
        self.P = np.array([[_finite(f"towers[{k}].x", t["x"]), _finite(f"towers[{k}].y", t.get("y", 0.0)),
                            _finite(f"towers[{k}].z", t["z"])] for k, t in enumerate(towers)])
        self.dead = [bool(t.get("dead_end", False)) for t in towers]
        if not (self.dead[0] and self.dead[-1]):
            raise InputError("the first and last towers must be dead ends")
        self.L = [float(t.get("string_length", 0.0)) if d else float(t["string_length"])
                  for t, d in zip(towers, self.dead)]
        self.m = [float(t.get("string_mass", 0.0)) for t in towers]
        for k in range(nt):
            if not (math.isfinite(self.L[k]) and self.L[k] >= 0.0):
                raise InputError(f"towers[{k}].string_length must be >= 0")
            if self.L[k] > 0.0:
                if not (math.isfinite(self.m[k]) and self.m[k] >= 0.0):
                    raise InputError(f"towers[{k}].string_mass must be >= 0")
                if self.dead[k] and 0 < k < nt - 1:
                    raise InputError(f"towers[{k}]: an intermediate dead end must have string_length 0 "
                                     "(anchor strings are modelled at the section ends only)")
            else:
                self.m[k] = 0.0
        self.EA = per_span(data["EA"], ns, "EA")
        self.alpha = per_span(data["alpha"], ns, "alpha")
        self.w1 = per_span(data["w1"], ns, "w1")
        self.w2 = per_span(data["w2"], ns, "w2")
        for name, vals in (("EA", self.EA), ("w1", self.w1), ("w2", self.w2)):
            if any(v <= 0 for v in vals):
                raise InputError(f"{name} must be positive")
        require_positive("H1", data.get("H1"))
        self.H1 = float(data["H1"])
        self.t1 = _finite("t1", data["t1"])
        self.t2 = _finite("t2", data["t2"])
        self.g = float(data.get("g", G0))
        require_positive("g", self.g)
        self.cg = float(data.get("string_cg_fraction", 0.5))
        if not (0.0 <= self.cg <= 1.0):
            raise InputError("string_cg_fraction must be in [0, 1]")
        self.basis = weight_basis(data)
        self.steps = int(data.get("continuation_steps", 10))
        if self.steps < 1:
            raise InputError("continuation_steps must be >= 1")

        # Route legs, line angles and the route frame at each tower.
        u = []
        for i in range(ns):
            leg = self.P[i + 1, :2] - self.P[i, :2]
            ll = math.hypot(leg[0], leg[1])
            if not ll > 1e-9 * (1.0 + np.max(np.abs(self.P[:, :2]))):
                raise InputError(f"towers {i} and {i + 1} coincide in plan")
            u.append(np.array([leg[0] / ll, leg[1] / ll, 0.0]))
        self.u = u
        self.theta = [0.0] * nt
        self.t = [None] * nt
        self.t[0], self.t[-1] = u[0], u[-1]
        for k in range(1, nt - 1):
            a, b = u[k - 1], u[k]
            th = math.atan2(a[0] * b[1] - a[1] * b[0], a[0] * b[0] + a[1] * b[1])
            if abs(th) >= 0.5 * math.pi:
                raise InputError(f"towers[{k}]: line angle {math.degrees(th):.3f} deg, must be below 90 deg")
            self.theta[k] = th
            s = a + b
            self.t[k] = s / np.linalg.norm(s)
        self.n = [np.cross(EZ, t) for t in self.t]

        # Free strings and their (a, e1, e2) frames.
        self.free = [k for k in range(nt) if self.L[k] > 0.0]
        self.frame = {}
        for k in self.free:
            if self.dead[k]:
                a = u[0] if k == 0 else -u[-1]
                self.frame[k] = (a, np.cross(EZ, a), EZ.copy())
            else:
                self.frame[k] = (-EZ, self.t[k], self.n[k])

    # -- geometry ------------------------------------------------------------

    def yokes(self, x):
        """Yoke positions (nt x 3) from the unknowns x = [p, q per free string]."""
        Y = self.P.copy()
        for j, k in enumerate(self.free):
            p, q = x[2 * j], x[2 * j + 1]
            a, e1, e2 = self.frame[k]
            Y[k] = self.P[k] + self.L[k] * (a + p * e1 + q * e2) / math.sqrt(1.0 + p * p + q * q)
        return Y

    def params_of(self, Y):
        """Inverse of yokes() (for the strings of Y)."""
        x = np.zeros(2 * len(self.free))
        for j, k in enumerate(self.free):
            a, e1, e2 = self.frame[k]
            d = Y[k] - self.P[k]
            ca = float(d @ a)
            if not ca > 0.0:
                raise ArithmeticError(f"string {k} outside its hemisphere")
            x[2 * j], x[2 * j + 1] = float(d @ e1) / ca, float(d @ e2) / ca
        return x

    def span_geom(self, Y, i):
        e = Y[i + 1, :2] - Y[i, :2]
        l = math.hypot(e[0], e[1])
        ehat = np.array([e[0] / l, e[1] / l, 0.0]) if l > 0 else None
        if not l > 1e-6 or float(ehat @ self.u[i]) <= 0.0:
            raise ArithmeticError(f"string bottoms of span {i} crossed")
        return l, float(Y[i + 1, 2] - Y[i, 2]), ehat

    # -- forces --------------------------------------------------------------

    def cable_forces(self, sp):
        """Net cable force on each yoke; sp[i] = dict with H, VA, VB, e."""
        F = np.zeros((self.nt, 3))
        for i, s in enumerate(sp):
            F[i] += s["H"] * s["e"] + s["VA"] * EZ
            F[i + 1] += -s["H"] * s["e"] - s["VB"] * EZ
        return F

    def moments(self, Y, F):
        """Moment residuals (M . e1, M . e2) / L per free string, in N."""
        r = np.zeros(2 * len(self.free))
        for j, k in enumerate(self.free):
            a, e1, e2 = self.frame[k]
            d = Y[k] - self.P[k]
            M = np.cross(d, F[k] - self.cg * self.m[k] * self.g * EZ)
            r[2 * j], r[2 * j + 1] = float(M @ e1) / self.L[k], float(M @ e2) / self.L[k]
        return r

    def reactions(self, F):
        return [(F[k] - self.m[k] * self.g * EZ).tolist() for k in range(self.nt)]

    def check_tension(self, Y, F, label):
        for k in self.free:
            d = Y[k] - self.P[k]
            if not float(d @ (F[k] - self.cg * self.m[k] * self.g * EZ)) > 0.0:
                raise ArithmeticError(f"{label}: string {k} in compression (non-physical equilibrium)")

    def swings(self, Y):
        along, across, total = [], [], []
        for k in range(self.nt):
            d = Y[k] - self.P[k]
            if self.L[k] == 0.0:
                along.append(0.0)
                across.append(0.0)
                total.append(0.0)
                continue
            down = -float(d[2])
            along.append(math.degrees(math.atan2(float(d @ self.t[k]), down)))
            across.append(math.degrees(math.atan2(float(d @ self.n[k]), down)))
            total.append(math.degrees(math.atan2(math.hypot(d[0], d[1]), down)))
        return along, across, total

    # -- spans ---------------------------------------------------------------

    def spans_at_H(self, Y, H, w):
        """Spans at horizontal tension H (state 1): S0 and V_A from the geometry."""
        sp = []
        for i in range(self.ns):
            l, h, e = self.span_geom(Y, i)
            S0, VA = span_given_H(H, l, h, w[i], self.EA[i])
            sp.append({"H": H, "VA": VA, "VB": VA + w[i] * S0, "S0": S0, "l": l, "h": h, "e": e, "w": w[i]})
        return sp

    def spans_at_S0(self, Y, S0s, ws, warm):
        """Spans of given unstretched lengths and weights between the yokes Y."""
        sp = []
        for i in range(self.ns):
            l, h, e = self.span_geom(Y, i)
            H, VA = span_given_S0(S0s[i], l, h, ws[i], self.EA[i], warm[i])
            warm[i] = (H, VA)
            sp.append({"H": H, "VA": VA, "VB": VA + ws[i] * S0s[i], "S0": S0s[i], "l": l, "h": h, "e": e,
                       "w": ws[i]})
        return sp


_EVAL_ERRORS = (ArithmeticError, ValueError, OverflowError, np.linalg.LinAlgError)


def solve(data, keep=None):
    """Solve both states; returns the output dict. When keep is a dict, the
    Section and the final state-2 data are stored in it (for the self-test)."""
    sec = Section(data)
    nf = len(sec.free)
    H1 = sec.H1

    # ---------------- state 1 ----------------
    def eval1(x):
        Y = sec.yokes(x)
        sp = sec.spans_at_H(Y, H1, sec.w1)
        return Y, sp, sec.cable_forces(sp)

    def res1(x):
        try:
            Y, _, F = eval1(x)
        except _EVAL_ERRORS:
            return np.full(nf, 1e3)  # pushes hybr back
        return sec.moments(Y, F) / H1

    x1 = np.zeros(2 * nf)  # plumb suspension strings, horizontal dead-end strings
    if nf:
        # Fixed point: put each string along the resultant of the current geometry.
        for _ in range(300):
            try:
                Y, _, F = eval1(x1)
            except _EVAL_ERRORS:
                break
            new = np.empty_like(x1)
            ok = True
            for j, k in enumerate(sec.free):
                a, e1, e2 = sec.frame[k]
                Fp = F[k] - sec.cg * sec.m[k] * sec.g * EZ
                ca = float(Fp @ a)
                if not ca > 0.0:
                    ok = False
                    break
                new[2 * j], new[2 * j + 1] = float(Fp @ e1) / ca, float(Fp @ e2) / ca
            if not ok or not np.all(np.isfinite(new)):
                break
            moved = float(np.max(np.abs(new - x1)))
            x1 = new
            if moved < 1e-15 * (1.0 + float(np.max(np.abs(x1)))):
                break
        # Polish (and rescue, when the fixed point is slow or fails) with hybr.
        r_fp = float(np.max(np.abs(res1(x1))))
        sol = root(res1, x1, method="hybr", options={"xtol": 1e-14, "maxfev": 20000})
        if float(np.max(np.abs(res1(sol.x)))) < r_fp:
            x1 = sol.x
        rmax1 = float(np.max(np.abs(res1(x1)))) * H1
        if not rmax1 <= 1e-10 * H1:
            raise ArithmeticError(f"stringing state not converged: residual {rmax1:.3e} N ({sol.message})")
    else:
        rmax1 = 0.0
    Y1, sp1, F1 = eval1(x1)
    sec.check_tension(Y1, F1, "stringing state")
    S0_1 = [s["S0"] for s in sp1]
    H1_check = [span_given_S0(s["S0"], s["l"], s["h"], s["w"], sec.EA[i], (H1, s["VA"]))[0]
                for i, s in enumerate(sp1)]

    # ---------------- state 2 ----------------
    dt = sec.t2 - sec.t1
    S0_2 = [S0 * (1.0 + a * dt) for S0, a in zip(S0_1, sec.alpha)]
    wc2 = [w_state2(w, a, dt, sec.basis) for w, a in zip(sec.w2, sec.alpha)]
    warm = [(s["H"], s["VA"]) for s in sp1]
    cur = {"S0": list(S0_1), "w": list(sec.w1)}

    def eval2(x):
        Y = sec.yokes(x)
        sp = sec.spans_at_S0(Y, cur["S0"], cur["w"], warm)
        return Y, sp, sec.cable_forces(sp)

    def res2(x):
        try:
            Y, _, F = eval2(x)
        except _EVAL_ERRORS:
            warm[:] = [None] * sec.ns
            return np.full(nf, 1e3)
        return sec.moments(Y, F) / H1

    # Continuation from the stringing state in equal steps of temperature
    # and weight, each solve starting from the previous solution (follows the
    # physical branch; the final state depends only on state 2).
    x2 = x1.copy()
    for j in range(1, sec.steps + 1):
        lam = j / sec.steps
        for i in range(sec.ns):
            cur["S0"][i] = S0_1[i] * (1.0 + sec.alpha[i] * lam * dt)
            wl = sec.w1[i] + lam * (sec.w2[i] - sec.w1[i])
            cur["w"][i] = w_state2(wl, sec.alpha[i], lam * dt, sec.basis)
        if nf:
            sol = root(res2, x2, method="hybr", options={"xtol": 1e-14, "maxfev": 20000})
            x2 = sol.x
    cur["S0"], cur["w"] = list(S0_2), list(wc2)
    rmax = float(np.max(np.abs(res2(x2)))) * H1 if nf else 0.0
    if not rmax <= 1e-10 * H1:
        raise ArithmeticError(f"state-2 equilibrium not converged: residual {rmax:.3e} N")
    Y2, sp2, F2 = eval2(x2)
    sec.check_tension(Y2, F2, "state 2")

    al1, ac1, tot1 = sec.swings(Y1)
    al2, ac2, tot2 = sec.swings(Y2)
    out = {
        "H1_check": H1_check,
        "H2": [s["H"] for s in sp2],
        "yoke_1": Y1.tolist(),
        "yoke_2": Y2.tolist(),
        "swing_along_deg_2": al2,
        "swing_across_deg_2": ac2,
        "swing_1_deg": tot1,
        "support_reactions_2": sec.reactions(F2),
        "T_left": [math.hypot(s["H"], s["VA"]) for s in sp2],
        "T_right": [math.hypot(s["H"], s["VB"]) for s in sp2],
        "residual_max": rmax,
        "line_angle_deg": [math.degrees(th) for th in sec.theta],
        "swing_along_deg_1": al1,
        "swing_across_deg_1": ac1,
        "swing_2_deg": tot2,
        "support_reactions_1": sec.reactions(F1),
        "S0_t1": S0_1,
        "S0_t2": S0_2,
        "V_left": [s["VA"] for s in sp2],
        "V_right": [-s["VB"] for s in sp2],
        "sag": [sag_of(s["H"], s["VA"], s["S0"], s["l"], s["h"], s["w"], sec.EA[i]) for i, s in enumerate(sp2)],
        "residual_max_1": rmax1,
    }
    for key, val in out.items():
        if not np.all(np.isfinite(np.asarray(val, float))):
            raise ArithmeticError(f"non-finite value in output {key}")
    if keep is not None:
        keep.update({"sec": sec, "x2": x2, "S0_2": S0_2, "w2": wc2, "sp2": sp2, "sp1": sp1})
    return out


def run(data):
    return solve(data)


# ---------------------------------------------------------------------------
# Self-test
# ---------------------------------------------------------------------------

def example(angles_deg=(0.0, 0.0, 12.0, -8.0, 0.0, 0.0), iced=2, t2=-5.0):
    """The test case of the brief: 5 spans, dead-end strings at both ends,
    line angles +12 deg at tower 2 and -8 deg at tower 3, span `iced` (zero
    based: span k runs from tower k to k+1) iced in state 2."""
    g = G0
    spans = [300.0, 420.0, 360.0, 450.0, 330.0]
    w1 = 1.6 * g
    w2 = [w1 + (2.4 * g if i == iced else 0.0) for i in range(5)]
    pts = [np.zeros(2)]
    heading = 0.0
    for i, s in enumerate(spans):
        heading += math.radians(angles_deg[i])  # turn at tower i, before leg i
        pts.append(pts[-1] + s * np.array([math.cos(heading), math.sin(heading)]))
    towers = []
    for k, p in enumerate(pts):
        d = k in (0, 5)
        towers.append({"x": float(p[0]), "y": float(p[1]), "z": 20.0 if d else 22.6,
                       "string_length": 3.2 if d else 2.6, "string_mass": 90.0 if d else 60.0, "dead_end": d})
    return {"towers": towers, "EA": 3.0e7, "alpha": 1.9e-5, "w1": w1, "w2": w2, "H1": 24000.0,
            "t1": 15.0, "t2": t2, "g": g, "continuation_steps": 10}


def selftest():
    failures = []

    def check(name, ok, detail=""):
        print(f"{'ok  ' if ok else 'FAIL'} {name} {detail}")
        if not ok:
            failures.append(name)

    g = G0
    base = example()
    o = solve(base)
    H1 = base["H1"]

    # 0. Parametrisation: yokes <-> unknowns, string lengths kept.
    sec = Section(base)
    x = np.linspace(-0.3, 0.4, 2 * len(sec.free))
    err = float(np.max(np.abs(sec.params_of(sec.yokes(x)) - x)))
    lerr = max(abs(np.linalg.norm(Y - P) - L) for Y, P, L in zip(sec.yokes(x), sec.P, sec.L))
    check("yoke parametrisation round trip, |d| = L", err < 1e-12 and lerr < 1e-12,
          f"({err:.1e}, {lerr:.1e} m)")

    # 1. Zero line angles = ruling_span.py "section" mode (x along the line, y = 0).
    def rel_swing(a, b):
        return abs(a - b) / max(abs(b), 1.0)

    cases = [("example, straight", example(angles_deg=(0.0,) * 6)), None]
    hilly = example(angles_deg=(0.0,) * 6)
    for k, dz in enumerate([12.0, 31.0, -8.0, 40.0, 5.0, 18.0]):
        hilly["towers"][k]["z"] += dz
    hilly.update({"weight_basis": "current", "string_cg_fraction": 0.4, "EA": [3.0e7, 3.1e7, 2.9e7, 3.0e7, 3.2e7],
                  "w2": [w * 1.3 for w in hilly["w2"]]})
    cases[1] = ("hilly, current basis, cg 0.4, per-span EA", hilly)
    for label, dat in cases:
        a = solve(dat)
        rdat = {k: v for k, v in dat.items()}
        rdat["towers"] = [{kk: vv for kk, vv in t.items() if kk != "y"} for t in dat["towers"]]
        b = ruling_span.run_section(rdat)
        eH = max(abs(x / y - 1.0) for x, y in zip(a["H2"], b["H2"]))
        eS = 0.0
        for k in range(len(dat["towers"])):
            ref = b["dead_end_angle_deg"][k] if dat["towers"][k]["dead_end"] else b["swing_deg"][k]
            eS = max(eS, rel_swing(a["swing_along_deg_2"][k], ref))
        eA = max(abs(v) for v in a["swing_across_deg_2"])
        eY = max(max(abs(ya[0] - yb[0]), abs(ya[1]), abs(ya[2] - yb[1]))
                 for ya, yb in zip(a["yoke_2"], b["string_bottom"]))
        eR = max(max(abs(ra[0] - rb[0]), abs(ra[1]), abs(ra[2] - rb[1]))
                 for ra, rb in zip(a["support_reactions_2"], b["support_reactions"])) / H1
        eS0 = max(abs(x / y - 1.0) for x, y in zip(a["S0_t1"], b["S0_t1"]))
        check(f"zero line angles = ruling_span section ({label})",
              eH < 1e-9 and eS < 1e-9 and eA < 1e-12 and eY < 1e-9 and eR < 1e-9 and eS0 < 1e-12,
              f"(H2 rel {eH:.1e}, swing rel {eS:.1e}, across {eA:.1e} deg, yoke {eY:.1e} m, "
              f"reactions {eR:.1e} H1, S0 rel {eS0:.1e})")

    # 2. State 1 at the angle towers: closed-form lean from the script's own
    #    catenaries on the output geometry, in the bisector plane, inwards.
    Y1 = np.array(o["yoke_1"])
    P = np.array([[t["x"], t["y"], t["z"]] for t in base["towers"]])
    for k in (2, 3):
        tw = base["towers"][k]
        el, er = Y1[k] - Y1[k - 1], Y1[k + 1] - Y1[k]
        el[2] = er[2] = 0.0
        ll, lr = np.linalg.norm(el), np.linalg.norm(er)
        el, er = el / ll, er / lr
        th = math.atan2(abs(el[0] * er[1] - el[1] * er[0]), float(el @ er))
        S0l, VAl = span_given_H(H1, ll, Y1[k, 2] - Y1[k - 1, 2], base["w1"], base["EA"])
        S0r, VAr = span_given_H(H1, lr, Y1[k + 1, 2] - Y1[k, 2], base["w1"], base["EA"])
        V_down = (VAl + base["w1"] * S0l) + (-VAr)
        tan_cf = 2.0 * H1 * math.sin(0.5 * th) / (V_down + 0.5 * tw["string_mass"] * g)
        d = Y1[k] - P[k]
        tan_lean = math.hypot(d[0], d[1]) / -d[2]
        inward = (er - el) / np.linalg.norm(er - el)
        dh = d[:2] / math.hypot(d[0], d[1])
        cross = abs(dh[0] * inward[1] - dh[1] * inward[0])
        side = math.copysign(1.0, o["line_angle_deg"][k]) * o["swing_across_deg_1"][k]
        check(f"state 1, tower {k}: tan(lean) = 2 H1 sin(th/2) / (V_l + V_r + m g / 2)",
              abs(tan_lean / tan_cf - 1.0) < 1e-10 and cross < 1e-10 and float(dh @ inward[:2]) > 0
              and side > 0 and abs(np.linalg.norm(d) - tw["string_length"]) < 1e-12,
              f"(lean {math.degrees(math.atan(tan_lean)):.9f} deg, closed form "
              f"{math.degrees(math.atan(tan_cf)):.9f} deg, rel {abs(tan_lean / tan_cf - 1):.1e}; "
              f"conductor angle {math.degrees(th):.6f} vs route {abs(o['line_angle_deg'][k]):.1f} deg; "
              f"off bisector plane {cross:.1e})")

    # 2b. A clamp (string_length 0) at the angle tower takes the angle load.
    cl = example()
    cl["towers"][2]["string_length"] = 0.0
    oc = solve(cl)
    Yc = np.array(oc["yoke_1"])
    el, er = Yc[2] - Yc[1], Yc[3] - Yc[2]
    el[2] = er[2] = 0.0
    el, er = el / np.linalg.norm(el), er / np.linalg.norm(er)
    th = math.atan2(abs(el[0] * er[1] - el[1] * er[0]), float(el @ er))
    R = np.array(oc["support_reactions_1"][2])
    inward = (er - el) / np.linalg.norm(er - el)
    check("state 1, clamp at the angle tower: horizontal reaction 2 H1 sin(th/2), inwards",
          abs(math.hypot(R[0], R[1]) / (2 * H1 * math.sin(0.5 * th)) - 1) < 1e-12
          and float(R[:2] @ inward[:2]) > 0,
          f"({math.hypot(R[0], R[1]):.6f} N, th {math.degrees(th):.6f} deg)")

    # 3. Rotation in plan + translation: invariant results.
    beta, T = 2.1234, np.array([-1234.5, 987.6, 55.0])
    c, s = math.cos(beta), math.sin(beta)
    rot = {k: v for k, v in base.items()}
    rot["towers"] = [dict(t, x=c * t["x"] - s * t["y"] + T[0], y=s * t["x"] + c * t["y"] + T[1], z=t["z"] + T[2])
                     for t in base["towers"]]
    orr = solve(rot)
    eH = max(abs(a / b - 1) for a, b in zip(orr["H2"], o["H2"]))
    eS = max(rel_swing(a, b) for key in ("swing_along_deg_2", "swing_across_deg_2", "swing_1_deg")
             for a, b in zip(orr[key], o[key]))
    eR = max(abs(np.linalg.norm(a) / np.linalg.norm(b) - 1)
             for a, b in zip(orr["support_reactions_2"], o["support_reactions_2"]))
    Rm = np.array([[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]])
    eY = max(float(np.max(np.abs(np.array(a) - (Rm @ np.array(b) + T))))
             for a, b in zip(orr["yoke_2"], o["yoke_2"]))
    check("rotation + translation in plan: H2, swings, |reactions| unchanged",
          eH < 1e-9 and eS < 1e-9 and eR < 1e-9 and eY < 1e-9,
          f"(H2 rel {eH:.1e}, swing rel {eS:.1e}, |R| rel {eR:.1e}, yokes {eY:.1e} m)")

    # 4. Global equilibrium in both states.
    Wc = sum(w * S for w, S in zip(base["w2"], o["S0_t1"]))  # reference basis: w2 S0(t1)
    Ws = sum(t["string_mass"] * g for t in base["towers"] if t["string_length"] > 0)
    tot = np.sum(np.array(o["support_reactions_2"]), axis=0)
    e2 = float(np.max(np.abs(tot - np.array([0.0, 0.0, -(Wc + Ws)])))) / (Wc + Ws)
    Wc1 = sum(base["w1"] * S for S in o["S0_t1"])
    tot1 = np.sum(np.array(o["support_reactions_1"]), axis=0)
    e1 = float(np.max(np.abs(tot1 - np.array([0.0, 0.0, -(Wc1 + Ws)])))) / (Wc1 + Ws)
    check("global equilibrium: sum of reactions = (0, 0, -(conductor + string weight))", e2 < 1e-9 and e1 < 1e-9,
          f"(state 2 rel {e2:.1e}, state 1 rel {e1:.1e}; weight {Wc + Ws:.3f} N)")

    # 5. No change of state: state 2 = state 1.
    same = dict(base, t2=base["t1"], w2=base["w1"])
    o5 = solve(same)
    eH = max(abs(h / H1 - 1) for h in o5["H2"])
    eY = float(np.max(np.abs(np.array(o5["yoke_2"]) - np.array(o5["yoke_1"]))))
    eS = max(rel_swing(a, b) for a, b in zip(o5["swing_2_deg"], o5["swing_1_deg"]))
    eC = max(abs(h / H1 - 1) for h in o5["H1_check"])
    check("t2 = t1, w2 = w1: state 2 = state 1", eH < 1e-9 and eY < 1e-9 and eS < 1e-9 and eC < 1e-11,
          f"(max |H2/H1 - 1| {eH:.1e}, yokes {eY:.1e} m, swings {eS:.1e}, H1_check {eC:.1e})")

    # 6. Energy route: the total potential energy (strain energy of the
    #    spans, their weight, the strings' weight) is stationary and minimum
    #    at the state-2 solution w.r.t. each yoke unknown. Independent of the
    #    force and moment formulas.
    from scipy.integrate import quad
    keep = {}
    solve(base, keep)
    sec, x2, S0_2, wc = keep["sec"], keep["x2"], keep["S0_2"], keep["w2"]
    warmE = [(s["H"], s["VA"]) for s in keep["sp2"]]

    def energy(x):
        Y = sec.yokes(x)
        E = sum(sec.m[k] * g * (Y[k, 2] - (1 - sec.cg) * (Y[k, 2] - sec.P[k, 2])) for k in sec.free)
        for i in range(sec.ns):
            l, h, _ = sec.span_geom(Y, i)
            S, w, EA = S0_2[i], wc[i], sec.EA[i]
            Hh, VA = span_given_S0(S, l, h, w, EA, warmE[i])
            VB = VA + w * S
            E += (Hh * Hh * S + (VB**3 - VA**3) / (3.0 * w)) / (2.0 * EA)
            zint, _ = quad(lambda tt: cat_end(Hh, VA, tt, w, EA)[1], 0.0, S, epsabs=1e-12, epsrel=1e-13, limit=200)
            E += w * (Y[i, 2] * S + zint)
        return E

    step = 1e-5
    grads = []
    for j in range(len(x2)):
        up, dn = x2.copy(), x2.copy()
        up[j] += step
        dn[j] -= step
        grads.append((energy(up) - energy(dn)) / (2 * step))
    Lmax = max(sec.L)
    gmax = max(abs(v) for v in grads)
    E0 = energy(x2)
    rises = all(energy(x2 + 1e-3 * np.eye(len(x2))[j]) > E0 and energy(x2 - 1e-3 * np.eye(len(x2))[j]) > E0
                for j in range(len(x2)))
    check("dE/d(yoke unknowns) = 0 at the state-2 solution (energy route)", gmax < 1e-6 * H1 * Lmax,
          f"(max |dE/dp| {gmax:.1e} N m, scale H1 L = {H1 * Lmax:.0f})")
    check("the state-2 solution is an energy minimum (each unknown +-1e-3)", rises)

    # 7. Symmetry: equal level spans, one angle tower in the middle, uniform
    #    change: the middle string stays in the bisector plane (no swing along).
    ang = math.radians(10.0)
    de_t = {"z": 20.0, "string_length": 3.2, "string_mass": 90.0, "dead_end": True}
    sym = dict(base, towers=[dict(de_t, x=0.0, y=0.0),
                             {"x": 400.0, "y": 0.0, "z": 22.6, "string_length": 2.6, "string_mass": 60.0,
                              "dead_end": False},
                             dict(de_t, x=400.0 + 400.0 * math.cos(ang), y=400.0 * math.sin(ang))])
    sym.update(w2=sym["w1"] * 1.8, t2=-10.0)
    os_ = solve(sym)
    check("symmetric angle section: no swing along, equal H2",
          abs(os_["swing_along_deg_2"][1]) < 1e-9 and abs(os_["H2"][0] / os_["H2"][1] - 1) < 1e-12
          and abs(os_["swing_along_deg_1"][1]) < 1e-9 and os_["swing_across_deg_2"][1] > 0,
          f"(along {os_['swing_along_deg_2'][1]:.1e} deg, across {os_['swing_across_deg_2'][1]:.4f} deg)")

    # 8. Physical sense of the example: the iced span 2 (towers 2-3) pulls
    #    the strings at its ends towards it; left turn -> lean left.
    al = o["swing_along_deg_2"]
    check("iced span 2 pulls the strings of towers 2 and 3 towards it", al[2] > 0 and al[3] < 0,
          f"(along {al[2]:.4f}, {al[3]:.4f} deg)")
    ac = o["swing_across_deg_1"]
    check("strings lean into the angle (left at tower 2, right at tower 3)", ac[2] > 0 and ac[3] < 0,
          f"(across {ac[2]:.4f}, {ac[3]:.4f} deg)")

    # 9. Input errors are reported as InputError.
    bad = [dict(base, towers=[dict(base["towers"][0], dead_end=False)] + base["towers"][1:]),
           dict(base, towers=[base["towers"][0], dict(base["towers"][0], dead_end=False)] + base["towers"][1:]),
           dict(base, EA=-1.0), dict(base, continuation_steps=0),
           dict(base, towers=base["towers"][:2] + [dict(base["towers"][2], dead_end=True)] + base["towers"][3:])]
    raised = 0
    for dat in bad:
        try:
            solve(dat)
        except InputError:
            raised += 1
    check("bad inputs raise InputError", raised == len(bad), f"({raised}/{len(bad)})")

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
        out = run(data)
        print(json.dumps(out, allow_nan=False))
    except (InputError, KeyError, TypeError, ValueError, ArithmeticError) as e:
        print(f"angle_section.py: {type(e).__name__}: {e}", file=sys.stderr)
        sys.exit(1)


if __name__ == "__main__":
    main()
