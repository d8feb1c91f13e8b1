#!/usr/bin/env python3
"""Independent references for tension sections: ruling span, change of state
on the ruling span, and the exact multi-span equilibrium with swinging
suspension strings. NumPy/SciPy only; nothing here calls glaze.

Usage
-----
    ruling_span.py [INPUT.json | -]     JSON in (file, or stdin when absent
                                        or "-"), JSON out on stdout
    ruling_span.py --selftest           runs the built-in checks, exit 0 on pass

The mode is "ruling_span" or "section": the key "mode" when present,
otherwise "section" when the input has "towers", else "ruling_span".
Errors (bad input, no convergence) go to stderr with exit status 1; the
output never contains NaN or infinity.

Units: SI throughout (m, N, N/m, kg, K or degC, 1/K).

Coordinates and signs
---------------------
x along the line, increasing from the first tower to the last (tower x must
strictly increase); z up. A span runs from its left support A (smaller x) to
its right support B. Elastic catenary in Lagrangian form (Irvine, "Cable
Structures", MIT Press 1981, ch. 2, eqs. 2.5-2.7 in the unstretched arc
length s; from memory), measured from A, with H the horizontal tension, V(s)
= V_A + w s the vertical component of the tension (positive when the cable
rises with s), w the weight per unit unstretched length, EA the axial
stiffness, S0 the unstretched length:

    x(s) = H s / EA + (H / w) [asinh(V(s)/H) - asinh(V_A/H)]
    z(s) = (V_A s + w s^2 / 2) / EA + [sqrt(H^2 + V(s)^2) - sqrt(H^2 + V_A^2)] / w

and the span closes with x(S0) = l, z(S0) = h (l, h: horizontal and vertical
distances from A to B). The cable pulls its supports with

    on A: (+H, V_A)        on B: (-H, -V_B),   V_B = V_A + w S0

so in a sagging level span V_A < 0 and both vertical pulls are downward.

Thermal strain and weight
-------------------------
The unstretched length at temperature t is S0(t) = S0(t1) (1 + alpha (t - t1)).
"weight_basis" (optional, default "reference"): with "reference" the given
weights w1, w2 are per metre of unstretched conductor at the stringing
temperature t1, so a span's total weight w S0(t1) does not change with
temperature (mass conserved; per unstretched metre at t2 the weight is
w / (1 + alpha (t2 - t1))). With "current" the given w is per metre of
unstretched conductor at the temperature of that state. At t2 = t1 the two
agree.

Mode "ruling_span"
------------------
Input:  {"spans": [l_i], "height_differences": [h_i] (optional, default 0),
         "EA": N, "alpha": 1/K, "w1": N/m, "H1": N, "t1": degC,
         "w2": N/m, "t2": degC, "weight_basis": "reference"|"current"}
Output: {"ruling_span": L_r (m), "H2": N, "H2_parabolic": N,
         "S0_ruling_t1": unstretched length of the ruling span at t1 (m),
         "H2_equal_tension": N,
         and, when height_differences are given and not all zero:
         "ruling_span_inclined": m, "thermal_factor_inclined": -,
         "H2_parabolic_inclined": N}

(a) Ruling (equivalent) span of a section of level spans:
        L_r = sqrt(sum l_i^3 / sum l_i)
    IEC 60050-466 (International Electrotechnical Vocabulary, overhead
    lines, 1990), entry "equivalent span / ruling span" (read on the IEV
    web site); the same expression is in Winkelmann, "Sag-tension
    computations and field measurements of Bonneville Power
    Administration", AIEE Trans. PAS 78, 1959, and the usual handbooks
    (from memory). The horizontal span lengths l_i are used even when
    height differences are given.
(b) Change of state on the ruling span, exact: the ruling span is a level
    elastic catenary of length L_r. State 1: S0 solves
        L_r = H1 S0 / EA + (2 H1 / w1) asinh(w1 S0 / (2 H1))
    (scipy.optimize.brentq). State 2: S0_2 = S0 (1 + alpha (t2 - t1)) and
    the span weight W2 = w2 S0 ("reference") or w2 S0_2 ("current");
    H2 solves L_r = H2 S0_2 / EA + (2 H2 S0_2 / W2) asinh(W2 / (2 H2))
    (brentq).
    Parabolic approximation "H2_parabolic", the textbook change-of-state
    cubic (from memory; sag S - l = w^2 l^3 / (24 H^2), stretch H l / EA):
        H2^2 [H2 - H1 + EA w1^2 L_r^2 / (24 H1^2) + EA alpha (t2 - t1)]
            = EA w2^2 L_r^2 / 24      (brentq on the positive root)
    "H2_equal_tension": the idealisation behind the ruling span solved
    exactly on the actual spans (inclined when height differences are
    given): the conductor is clamped at every string, so each span keeps its
    own unstretched length S0_i (found from H1, w1 at t1, then times
    1 + alpha dt) and its weight; the strings are infinitely compliant in
    the line direction, so every span has the same horizontal tension H2 and
    only the horizontal span lengths change (heights h_i kept), with their
    sum fixed by the dead ends: sum_i l_i(H2) = sum_i l_i. Each l_i(H) by
    brentq on the exact elastic catenary (V_A from z(S0) = h_i, then
    l_i = x(S0)). It is the long-string, massless-string limit of mode
    "section", and for equal level spans it equals "H2".
    Inclined variant (derived here, parabolic, for the same clamped-
    conductor idealisation): with chords c_i = sqrt(l_i^2 + h_i^2), span
    length S_i ~ c_i + w^2 l_i^4 / (24 H^2 c_i) (w per metre of conductor),
    stretch H c_i^2 / (l_i EA), thermal growth alpha dt c_i, and a change
    dl_i of the horizontal length changing the chord by (l_i/c_i) dl_i;
    eliminating the dl_i with sum dl_i = 0 (first order) gives the level-span
    cubic above with
        L_r^2 = sum(l_i^3) / sum(c_i^3 / l_i^2)      ("ruling_span_inclined")
    and alpha multiplied by sum(c_i^2/l_i) / sum(c_i^3/l_i^2)
    ("thermal_factor_inclined"), EA unchanged ("H2_parabolic_inclined").
    Both reduce to the level formulas when every h_i = 0.

Mode "section"
--------------
Input:  {"towers": [{"x": m, "z": m, "string_length": m, "string_mass": kg,
                     "dead_end": bool}, ...],
         "EA": N (scalar or per span), "alpha": 1/K (scalar or per span),
         "H1": N, "t1": degC, "t2": degC,
         "w1": [N/m per span] (or scalar), "w2": [N/m per span] (or scalar),
         "g": m/s^2 (default 9.80665),
         "string_cg_fraction": 0.5 (optional: distance of the string's
                                centre of mass from the hinge over its length),
         "weight_basis": "reference"|"current",
         "continuation_steps": 10 (optional, see below)}
    The first and last towers must be dead ends. For a suspension tower
    (z, x) is the hinge of the string at the cross-arm; for a dead end it is
    the cable attachment point when its string_length is absent or 0, else
    the hinge of a dead-end string: a rigid uniform rod like the suspension
    strings, pointing into the section, on whose end the cable is clamped.
    Its angle solves the same moment balance (in the stringing state too:
    it lies along the conductor pull less half its own weight); output
    "dead_end_angle_deg" gives it from the downward vertical, 0 when rigid.
Output: {"H2": [N per span], "swing_deg": [deg per tower, 0 at dead ends],
         "string_bottom": [[x, z] per tower] (state 2; the attachment at dead
         ends), "support_reactions": [[Fx, Fz] per tower] (N, force the line
         -- cables and string -- exerts on the tower at the hinge or
         attachment, x along the line, z up; the vertical includes the
         string's weight), "S0_t1": [unstretched length per span at t1, m],
         "S0_t2": [.. at t2], "V_left": [N], "V_right": [N] (vertical force
         of each span's cable on its left / right support, z up, so negative
         = downward pull), "T_left": [N], "T_right": [N] (tension at the
         span ends), "sag": [m] (state 2: largest vertical distance from the
         chord between the span's supports to the cable),
         "residual_max": N (largest moment-balance residual divided by L)}

(c) Stringing state: strings plumb (bottom at (x, z - L)), every span at
    horizontal tension H1 under w1 at t1; each span's S0 from the exact
    inclined elastic catenary (Newton on (V_A, S0), analytic Jacobian).
    With strings plumb and equal H the strings are in equilibrium, whatever
    the heights.
    State 2: unknowns = swing angle phi_k of each suspension string in the
    line direction (phi > 0: the bottom moves towards +x); bottom at
        x_k + L_k sin(phi_k),   z_k - L_k cos(phi_k).
    Each span's (H, V_A) from its exact elastic catenary between the current
    supports with S0_t2 and its state-2 weight. A string is a rigid uniform
    rod (mass m_k, centre of mass at string_cg_fraction * L_k from the hinge,
    0.5 by default) hinged at the top and loaded at the bottom by the net
    cable force (Fx, Fz) = (H_right - H_left, V_A,right - V_B,left). Moment
    balance about the hinge (virtual work of a rotation dphi):
        Fx L cos(phi) + (Fz - c m g) L sin(phi) = 0,     c = cg fraction
    i.e. Fx cos(phi) = (V_down + m g / 2) sin(phi) with V_down = -Fz, the
    downward cable load. Solved with scipy.optimize.root (hybr), residuals
    below 1e-10 * H1 (checked, else exit 1), by continuation: temperature
    and weights go from state 1 to state 2 in "continuation_steps" equal
    steps, each solve starting from the previous one, so the result is the
    equilibrium reached from plumb strings (the system also has non-physical
    roots with strings past the horizontal; |phi| >= 90 deg is refused).
    The final state depends only on state 2, not on the steps.
"""
import json
import math
import sys

import numpy as np
from scipy.optimize import brentq, root

G0 = 9.80665  # standard gravity, m/s^2


class InputError(Exception):
    pass


# ---------------------------------------------------------------------------
# Elastic catenary (Irvine 1981), general inclined span
# ---------------------------------------------------------------------------

def cat_end(H, VA, S0, w, EA):
    """(x, z) of the end s = S0 of a cable starting at A with (H, V_A)."""
    VB = VA + w * S0
    x = H * S0 / EA + (H / w) * (math.asinh(VB / H) - math.asinh(VA / H))
    z = (VA * S0 + 0.5 * w * S0 * S0) / EA + (math.hypot(H, VB) - math.hypot(H, VA)) / w
    return x, z


def cat_jac(H, VA, S0, w, EA):
    """Partial derivatives of (x, z) at s = S0 w.r.t. H, V_A and S0."""
    VB = VA + w * S0
    TA, TB = math.hypot(H, VA), math.hypot(H, VB)
    dx_dH = S0 / EA + (math.asinh(VB / H) - math.asinh(VA / H)) / w - (VB / TB - VA / TA) / w
    dx_dV = (H / w) * (1.0 / TB - 1.0 / TA)
    dx_dS = H / EA + H / TB
    dz_dH = (H / TB - H / TA) / w
    dz_dV = S0 / EA + (VB / TB - VA / TA) / w
    dz_dS = VB / EA + VB / TB
    return dx_dH, dx_dV, dx_dS, dz_dH, dz_dV, dz_dS


def _newton2(fun, u0, scale, positive_index, tol=1e-13, maxit=100):
    """Damped Newton for 2 unknowns; fun(u) -> (r[2], J[2x2]).
    Keeps u[positive_index] > 0. Converges to |r| < tol * scale."""
    u = np.array(u0, float)
    r, J = fun(u)
    norm = np.max(np.abs(r))
    polish = 0
    for _ in range(maxit):
        if norm < tol * scale:
            # Two more steps (quadratic convergence) to reach round-off,
            # kept only while they reduce the residual.
            polish += 1
            if polish > 2:
                return u
            try:
                ut = u + np.linalg.solve(J, -r)
                rt, Jt = fun(ut)
            except (ValueError, OverflowError, ZeroDivisionError, np.linalg.LinAlgError):
                return u
            nt = np.max(np.abs(rt))
            if not nt < norm or ut[positive_index] <= 0.0:
                return u
            u, r, J, norm = ut, rt, Jt, nt
            continue
        du = np.linalg.solve(J, -r)
        lam = 1.0
        while True:
            trial = u + lam * du
            if trial[positive_index] > 0.0:
                try:
                    rt, Jt = fun(trial)
                    nt = np.max(np.abs(rt))
                except (ValueError, OverflowError, ZeroDivisionError):
                    nt = math.inf
                if nt < norm or lam < 1e-12:
                    break
            lam *= 0.5
            if lam < 1e-12:
                break
        if not math.isfinite(nt):
            raise ArithmeticError("catenary Newton failed")
        u, r, J, norm = trial, rt, Jt, nt
    if norm < 1e-10 * scale:
        return u
    raise ArithmeticError(f"catenary Newton did not converge (residual {norm:.3e})")


def span_given_H(H, l, h, w, EA):
    """Unstretched length S0 and V_A of the span (l, h) at horizontal tension H."""
    c = math.hypot(l, h)
    # Start: parabolic sag S - c ~ w^2 l^4 / (24 H^2 c), elastic stretch H c^2 / (l EA).
    S_guess = c + w * w * l**4 / (24.0 * H * H * c) - H * c * c / (l * EA)
    S_guess = max(S_guess, 0.5 * c)
    VA_guess = H * h / l - 0.5 * w * S_guess

    def fun(u):
        VA, S0 = u
        x, z = cat_end(H, VA, S0, w, EA)
        j = cat_jac(H, VA, S0, w, EA)
        return np.array([x - l, z - h]), np.array([[j[1], j[2]], [j[4], j[5]]])

    VA, S0 = _newton2(fun, [VA_guess, S_guess], c, 1)
    return S0, VA


def span_given_S0(S0, l, h, w, EA, guess=None):
    """(H, V_A) of the span (l, h) with unstretched length S0."""
    c = math.hypot(l, h)
    if guess is None:
        # Parabolic estimate of H: S0 = c + w^2 l^4/(24 H^2 c) - H c^2/(l EA).
        def g(Hh):
            return c + w * w * l**4 / (24.0 * Hh * Hh * c) - Hh * c * c / (l * EA) - S0
        Hh = brentq(g, 1e-9 * w * c, 1e3 * EA + w * c)
        guess = (Hh, Hh * h / l - 0.5 * w * S0)

    def fun(u):
        H, VA = u
        x, z = cat_end(H, VA, S0, w, EA)
        j = cat_jac(H, VA, S0, w, EA)
        return np.array([x - l, z - h]), np.array([[j[0], j[1]], [j[3], j[4]]])

    H, VA = _newton2(fun, guess, c, 0)
    return H, VA


def span_l_given_H_S0(H, S0, h, w, EA):
    """Horizontal length of a span of unstretched length S0, height
    difference h and horizontal tension H (brentq on V_A, then x(S0))."""
    fz = lambda VA: cat_end(H, VA, S0, w, EA)[1] - h
    # z(S0) increases with V_A; |h| < S0 needed.
    W = w * S0
    lo, hi = -W - H, H
    while fz(lo) > 0.0:
        lo = 2.0 * lo - H
    while fz(hi) < 0.0:
        hi = 2.0 * hi + H
    VA = brentq(fz, lo, hi, xtol=1e-12 * (W + H), rtol=1e-15, maxiter=500)
    return cat_end(H, VA, S0, w, EA)[0]


def sag_of(H, VA, S0, l, h, w, EA):
    """Largest vertical distance from the chord to the cable."""
    s_star = min(max((H * h / l - VA) / w, 0.0), S0)
    x, z = cat_end(H, VA, s_star, w, EA)
    return h * x / l - z


# ---------------------------------------------------------------------------
# Helpers
# ---------------------------------------------------------------------------

def per_span(value, n, name):
    if isinstance(value, (list, tuple)):
        if len(value) != n:
            raise InputError(f"{name}: {len(value)} values for {n} spans")
        out = [float(v) for v in value]
    else:
        out = [float(value)] * n
    for v in out:
        if not math.isfinite(v):
            raise InputError(f"{name}: non-finite value")
    return out


def weight_basis(data):
    basis = data.get("weight_basis", "reference")
    if basis not in ("reference", "current"):
        raise InputError('weight_basis must be "reference" or "current"')
    return basis


def w_state2(w2, alpha, dt, basis):
    """State-2 weight per unstretched metre at t2."""
    return w2 / (1.0 + alpha * dt) if basis == "reference" else w2


def require_positive(name, v):
    if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
        raise InputError(f"{name} must be a positive number")


# ---------------------------------------------------------------------------
# (a) + (b) ruling span
# ---------------------------------------------------------------------------

def ruling_span_length(spans):
    s = np.asarray(spans, float)
    return math.sqrt(float(np.sum(s**3) / np.sum(s)))


def level_S0(L, H, w, EA):
    """Unstretched length of a level elastic catenary of span L at tension H."""
    f = lambda S0: H * S0 / EA + (2.0 * H / w) * math.asinh(w * S0 / (2.0 * H)) - L
    # x(S0) increases with S0, x(S0) <= S0 (1 + H/EA): bracket.
    lo = L / (1.0 + H / EA)
    hi = lo
    while f(hi) < 0.0:
        hi *= 1.5
    return brentq(f, lo, hi, xtol=1e-14 * L, rtol=1e-15, maxiter=500)


def level_H_given_S0(L, S0, W, EA):
    """Horizontal tension of a level elastic catenary, unstretched length S0,
    total weight W: L = H S0/EA + (2 H S0/W) asinh(W/(2H))."""
    f = lambda H: H * S0 / EA + (2.0 * H * S0 / W) * math.asinh(W / (2.0 * H)) - L
    # f increases with H; f -> -S0... at H -> 0 (x -> 0) and f -> +inf.
    lo, hi = 1e-6, max(W, 1.0)
    while f(lo) > 0.0:
        lo *= 1e-3
    while f(hi) < 0.0:
        hi *= 2.0
    return brentq(f, lo, hi, xtol=1e-13 * hi, rtol=1e-15, maxiter=500)


def parabolic_change_of_state(L, EA, alpha, w1, H1, t1, w2, t2):
    dt = t2 - t1
    k = H1 - EA * w1 * w1 * L * L / (24.0 * H1 * H1) - EA * alpha * dt
    rhs = EA * w2 * w2 * L * L / 24.0
    f = lambda H: H * H * (H - k) - rhs
    # f < 0 for 0 < H <= max(k, 0) and increases beyond: one positive root.
    lo = max(k, 0.0)
    hi = lo + rhs ** (1.0 / 3.0) + 1.0
    while f(hi) < 0.0:
        hi *= 2.0
    return brentq(f, lo, hi, xtol=1e-12, rtol=1e-15, maxiter=500)


def run_ruling(data):
    spans = data.get("spans")
    if not isinstance(spans, list) or not spans:
        raise InputError("spans: a non-empty list of span lengths")
    spans = [float(s) for s in spans]
    if any(not (math.isfinite(s) and s > 0) for s in spans):
        raise InputError("spans must be positive")
    n = len(spans)
    heights = data.get("height_differences")
    heights = [0.0] * n if heights is None else per_span(heights, n, "height_differences")
    for key in ("EA", "w1", "H1", "w2"):
        require_positive(key, data.get(key))
    EA, w1, H1, w2 = (float(data[k]) for k in ("EA", "w1", "H1", "w2"))
    alpha, t1, t2 = float(data["alpha"]), float(data["t1"]), float(data["t2"])
    basis = weight_basis(data)
    dt = t2 - t1
    scale = 1.0 + alpha * dt

    Lr = ruling_span_length(spans)
    S0 = level_S0(Lr, H1, w1, EA)
    S0_2 = S0 * scale
    W2 = w2 * S0 if basis == "reference" else w2 * S0_2
    H2 = level_H_given_S0(Lr, S0_2, W2, EA)
    H2p = parabolic_change_of_state(Lr, EA, alpha, w1, H1, t1, w2, t2)

    # Equal horizontal tension on the actual spans, each span clamped
    # (own S0), total horizontal length fixed.
    wc2 = w_state2(w2, alpha, dt, basis)
    S0_2s = [span_given_H(H1, l, h, w1, EA)[0] * scale for l, h in zip(spans, heights)]
    total = sum(spans)
    f = lambda H: sum(span_l_given_H_S0(H, S, h, wc2, EA) for S, h in zip(S0_2s, heights)) - total
    lo, hi = 0.5 * H2, 2.0 * H2
    while f(lo) > 0.0:
        lo *= 0.5
    while f(hi) < 0.0:
        hi *= 2.0
    H2_eq = brentq(f, lo, hi, xtol=1e-12 * H2, rtol=1e-15, maxiter=500)

    out = {"ruling_span": Lr, "H2": H2, "H2_parabolic": H2p, "S0_ruling_t1": S0,
           "H2_equal_tension": H2_eq}
    if any(h != 0.0 for h in heights):
        l = np.asarray(spans)
        c = np.hypot(l, np.asarray(heights))
        A = float(np.sum(l**3) / np.sum(c**3 / l**2))
        B = float(np.sum(c * c / l) / np.sum(c**3 / l**2))
        out["ruling_span_inclined"] = math.sqrt(A)
        out["thermal_factor_inclined"] = B
        out["H2_parabolic_inclined"] = parabolic_change_of_state(
            math.sqrt(A), EA, alpha * B, w1, H1, t1, w2, t2)
    return out


# ---------------------------------------------------------------------------
# (c) section with suspension strings
# ---------------------------------------------------------------------------

def run_section(data):
    towers = data.get("towers")
    if not isinstance(towers, list) or len(towers) < 2:
        raise InputError("towers: a list of at least two towers")
    nt = len(towers)
    ns = nt - 1
    xs = [float(t["x"]) for t in towers]
    zs = [float(t["z"]) for t in towers]
    if any(b <= a for a, b in zip(xs, xs[1:])):
        raise InputError("tower x must strictly increase")
    dead = [bool(t.get("dead_end", False)) for t in towers]
    if not (dead[0] and dead[-1]):
        raise InputError("the first and last towers must be dead ends")
    Ls = [float(t.get("string_length", 0.0)) if d else float(t["string_length"]) for t, d in zip(towers, dead)]
    ms = [float(t.get("string_mass", 0.0)) for t in towers]
    for k in range(nt):
        if not dead[k] or Ls[k] > 0:
            require_positive(f"towers[{k}].string_length", Ls[k])
            if ms[k] < 0 or not math.isfinite(ms[k]):
                raise InputError(f"towers[{k}].string_mass must be >= 0")
        elif Ls[k] < 0 or not math.isfinite(Ls[k]):
            raise InputError(f"towers[{k}].string_length must be >= 0")
        else:
            ms[k] = 0.0
    EA = per_span(data["EA"], ns, "EA")
    alpha = per_span(data["alpha"], ns, "alpha")
    w1 = per_span(data["w1"], ns, "w1")
    w2 = per_span(data["w2"], ns, "w2")
    for name, vals in (("EA", EA), ("w1", w1), ("w2", w2)):
        if any(v <= 0 for v in vals):
            raise InputError(f"{name} must be positive")
    require_positive("H1", data.get("H1"))
    H1 = float(data["H1"])
    t1, t2 = float(data["t1"]), float(data["t2"])
    g = float(data.get("g", G0))
    cg = float(data.get("string_cg_fraction", 0.5))
    basis = weight_basis(data)
    dt = t2 - t1
    free = [k for k in range(nt) if Ls[k] > 0]
    # Angle of each string from the downward vertical in the stringing state:
    # 0 for suspension strings, found below for dead-end strings.
    phi1 = [0.0] * nt
    for k in (0, nt - 1):
        if Ls[k] > 0:
            phi1[k] = 0.5 * math.pi if k == 0 else -0.5 * math.pi

    def supports(phi_free):
        pts = []
        phi = [0.0] * nt
        for k, p in zip(free, phi_free):
            phi[k] = p
        for k in range(nt):
            if Ls[k] == 0:
                pts.append((xs[k], zs[k]))
            else:
                pts.append((xs[k] + Ls[k] * math.sin(phi[k]), zs[k] - Ls[k] * math.cos(phi[k])))
        return pts, phi

    def net_force(k, sp):
        """(Fx, Fz) of the cables on support k; sp[i] = (H, V_A, V_B, ...)."""
        Fx = (sp[k][0] if k < ns else 0.0) - (sp[k - 1][0] if k > 0 else 0.0)
        Fz = (sp[k][1] if k < ns else 0.0) - (sp[k - 1][2] if k > 0 else 0.0)
        return Fx, Fz

    # Stringing state: suspension strings plumb, every span at H1; the
    # dead-end strings by fixed-point iteration on their moment balance.
    for _ in range(200):
        pts0, _ = supports([phi1[k] for k in free])
        S0_1, sp1 = [], []
        for i in range(ns):
            l = pts0[i + 1][0] - pts0[i][0]
            h = pts0[i + 1][1] - pts0[i][1]
            S0, VA = span_given_H(H1, l, h, w1[i], EA[i])
            S0_1.append(S0)
            sp1.append((H1, VA, VA + w1[i] * S0))
        moved = 0.0
        for k in (0, nt - 1):
            if dead[k] and Ls[k] > 0:
                Fx, Fz = net_force(k, sp1)
                new = math.atan2(Fx, -(Fz - cg * ms[k] * g))
                moved = max(moved, abs(new - phi1[k]))
                phi1[k] = new
        if moved < 1e-15:
            break
    S0_2 = [S0 * (1.0 + a * dt) for S0, a in zip(S0_1, alpha)]
    wc2 = [w_state2(w, a, dt, basis) for w, a in zip(w2, alpha)]

    warm = [None] * ns
    # Current state of the load path (see the continuation below).
    cur = {"S0": list(S0_2), "w": list(wc2)}

    def spans_at(phi_free):
        pts, phi = supports(phi_free)
        res = []
        for i in range(ns):
            l = pts[i + 1][0] - pts[i][0]
            h = pts[i + 1][1] - pts[i][1]
            if l <= 0:
                raise ArithmeticError("string bottoms crossed")
            S0, w = cur["S0"][i], cur["w"][i]
            H, VA = span_given_S0(S0, l, h, w, EA[i], warm[i])
            warm[i] = (H, VA)
            res.append((H, VA, VA + w * S0, l, h))
        return pts, phi, res

    def residual(phi_free):
        try:
            _, phi, sp = spans_at(phi_free)
        except (ArithmeticError, ValueError, OverflowError, np.linalg.LinAlgError):
            warm[:] = [None] * ns
            return np.full(len(free), 1e3)  # pushes hybr back
        r = []
        for k in free:
            Fx, Fz = net_force(k, sp)
            p = phi[k]
            r.append((Fx * math.cos(p) + (Fz - cg * ms[k] * g) * math.sin(p)) / H1)
        return np.array(r)

    # Continuation from the stringing state (plumb strings) to state 2 in
    # equal steps of temperature and weight, each solve starting from the
    # previous one: this follows the physical branch (with a plumb start
    # straight at state 2, hybr can land on a second, non-physical root with
    # strings swung past the horizontal).
    steps = int(data.get("continuation_steps", 10))
    if steps < 1:
        raise InputError("continuation_steps must be >= 1")
    phi_free = np.array([phi1[k] for k in free])
    rmax = 0.0
    if free:
        for j in range(1, steps + 1):
            lam = j / steps
            for i in range(ns):
                cur["S0"][i] = S0_1[i] * (1.0 + alpha[i] * lam * dt)
                wl = w1[i] + lam * (w2[i] - w1[i])
                cur["w"][i] = w_state2(wl, alpha[i], lam * dt, basis)
            sol = root(residual, phi_free, method="hybr", options={"xtol": 1e-14, "maxfev": 20000})
            phi_free = sol.x
        rmax = float(np.max(np.abs(residual(phi_free)))) * H1
        if not rmax <= 1e-10 * H1:
            raise ArithmeticError(f"section equilibrium not converged: residual {rmax:.3e} N ({sol.message})")
        if any(abs(p) >= 0.5 * math.pi for k, p in zip(free, phi_free) if not dead[k]):
            raise ArithmeticError("a string swung past the horizontal: no physical equilibrium found")
    pts, phi, sp = spans_at(phi_free)

    reactions = []
    for k in range(nt):
        Fx = Fz = 0.0
        if k > 0:  # right end of span k-1
            Fx -= sp[k - 1][0]
            Fz -= sp[k - 1][2]
        if k < ns:  # left end of span k
            Fx += sp[k][0]
            Fz += sp[k][1]
        Fz -= ms[k] * g
        reactions.append([Fx, Fz])

    return {
        "H2": [s[0] for s in sp],
        "swing_deg": [0.0 if dead[k] else math.degrees(p) for k, p in enumerate(phi)],
        "dead_end_angle_deg": [math.degrees(p) if dead[k] else 0.0 for k, p in enumerate(phi)],
        "string_bottom": [[p[0], p[1]] for p in pts],
        "support_reactions": reactions,
        "S0_t1": S0_1,
        "S0_t2": S0_2,
        "V_left": [s[1] for s in sp],
        "V_right": [-s[2] for s in sp],
        "T_left": [math.hypot(s[0], s[1]) for s in sp],
        "T_right": [math.hypot(s[0], s[2]) for s in sp],
        "sag": [sag_of(s[0], s[1], S0_2[i], s[3], s[4], wc2[i], EA[i]) for i, s in enumerate(sp)],
        "residual_max": rmax,
    }


def run(data):
    mode = data.get("mode", "section" if "towers" in data else "ruling_span")
    if mode == "ruling_span":
        return run_ruling(data)
    if mode == "section":
        return run_section(data)
    raise InputError('mode must be "ruling_span" or "section"')


# ---------------------------------------------------------------------------
# Self-test
# ---------------------------------------------------------------------------

def selftest():
    failures = []

    def check(name, ok, detail=""):
        print(f"{'ok  ' if ok else 'FAIL'} {name} {detail}")
        if not ok:
            failures.append(name)

    g = G0
    EA, alpha, w1, H1 = 3.28e7, 18.9e-6, 1.628 * g, 24000.0
    wice = w1 + 4.09 * g

    # Catenary primitives: Jacobian against central differences, and the two
    # inverse problems against each other.
    H, VA, S0, w = 20000.0, -3000.0, 402.0, 20.0
    j = cat_jac(H, VA, S0, w, EA)
    fd = []
    for idx, step in ((0, 1e-2), (1, 1e-2), (2, 1e-5)):
        u = [H, VA, S0]
        up, dn = list(u), list(u)
        up[idx] += step
        dn[idx] -= step
        xp, zp = cat_end(up[0], up[1], up[2], w, EA)
        xm, zm = cat_end(dn[0], dn[1], dn[2], w, EA)
        fd.append(((xp - xm) / (2 * step), (zp - zm) / (2 * step)))
    an = [(j[0], j[3]), (j[1], j[4]), (j[2], j[5])]
    err = max(abs(a - b) / max(abs(b), 1e-6) for pa, pb in zip(an, fd) for a, b in zip(pa, pb))
    check("catenary Jacobian vs central differences", err < 1e-6, f"(max rel {err:.1e})")
    S0h, VAh = span_given_H(24000.0, 400.0, 35.0, w1, EA)
    Hb, VAb = span_given_S0(S0h, 400.0, 35.0, w1, EA)
    check("span_given_S0 inverts span_given_H", abs(Hb / 24000.0 - 1) < 1e-11 and abs(VAb - VAh) < 1e-7,
          f"(H {Hb:.10f})")
    # Level span: V_A = -W/2 and the brentq level formula.
    S0l, VAl = span_given_H(H1, 400.0, 0.0, w1, EA)
    S0b = level_S0(400.0, H1, w1, EA)
    check("level span: V_A = -w S0 / 2, Newton = brentq", abs(VAl + 0.5 * w1 * S0l) < 1e-8
          and abs(S0l - S0b) < 1e-9, f"(S0 {S0l:.9f} vs {S0b:.9f})")
    # Inextensible limit: the classical catenary length 2 (H/w) sinh(w l / 2H).
    S_inext = level_S0(400.0, H1, w1, 1e18)
    S_cl = 2 * H1 / w1 * math.sinh(w1 * 400.0 / (2 * H1))
    check("inextensible limit: 2 (H/w) sinh(w l / 2H)", abs(S_inext - S_cl) < 1e-9, f"({S_inext:.9f})")

    spans = [340.0, 460.0, 280.0, 390.0, 410.0]
    base = {"spans": spans, "EA": EA, "alpha": alpha, "w1": w1, "H1": H1, "t1": 15.0}

    # (a) ruling span by hand.
    Lr = run({**base, "w2": w1, "t2": 15.0})["ruling_span"]
    hand = math.sqrt(sum(s**3 for s in spans) / sum(spans))
    check("ruling span formula", abs(Lr - hand) < 1e-9, f"({Lr:.6f} m)")

    # (b) no change -> H1.
    o = run({**base, "w2": w1, "t2": 15.0})
    check("ruling span: no change of state gives H1",
          max(abs(o["H2"] - H1), abs(o["H2_parabolic"] - H1), abs(o["H2_equal_tension"] - H1)) < 1e-6 * H1,
          f"({o['H2']}, {o['H2_parabolic']}, {o['H2_equal_tension']})")
    # Parabolic close to exact for this sag-to-span (~2 %).
    o = run({**base, "w2": wice, "t2": -5.0})
    rel = abs(o["H2_parabolic"] / o["H2"] - 1)
    check("parabolic within 1 % of exact (iced, -5 C)", rel < 1e-2, f"(rel {rel:.2e})")
    # Equal spans: ruling span = span; equal tension exact = ruling exact.
    o = run({"spans": [400.0] * 4, "EA": EA, "alpha": alpha, "w1": w1, "H1": H1, "t1": 15.0,
             "w2": wice, "t2": -5.0})
    check("equal spans: H2_equal_tension = H2", abs(o["H2_equal_tension"] - o["H2"]) < 1e-7 * H1,
          f"({o['H2']:.9f} vs {o['H2_equal_tension']:.9f})")
    # Weight bases agree at t2 = t1.
    oa = run({**base, "w2": wice, "t2": 15.0})
    ob = run({**base, "w2": wice, "t2": 15.0, "weight_basis": "current"})
    check("weight bases agree at t2 = t1", abs(oa["H2"] - ob["H2"]) < 1e-9 * H1)

    # Inclined parabolic ruling span: it carries the effect of the heights
    # on the exact equal-tension result (parabolic error unchanged).
    hs = [60.0, -80.0, 70.0, -50.0, 40.0]
    oi = run({**base, "w2": w1, "t2": -5.0, "height_differences": hs})
    ol = run({**base, "w2": w1, "t2": -5.0})
    effect = oi["H2_equal_tension"] - ol["H2_equal_tension"]
    gap = abs((oi["H2_equal_tension"] - oi["H2_parabolic_inclined"]) - (ol["H2_equal_tension"] - ol["H2_parabolic"]))
    check("inclined parabolic ruling span follows the heights", gap < 0.05 * abs(effect),
          f"(height effect {effect:.2f} N, parabolic error change {gap:.3f} N)")

    # (c) sections.
    def section(xs, zs, dead_mask, L=2.6, m=90.0):
        # Dead ends rigid here (string_length 0); dead-end strings are checked below.
        return [{"x": x, "z": z, "string_length": 0.0 if d else L, "string_mass": m, "dead_end": d}
                for x, z, d in zip(xs, zs, dead_mask)]

    xs = np.concatenate([[0.0], np.cumsum(spans)]).tolist()
    zs_level = [30.0 if k in (0, 5) else 32.6 for k in range(6)]  # string bottoms all at 30 m
    dmask = [True, False, False, False, False, True]
    sec = {"towers": section(xs, zs_level, dmask), "EA": EA, "alpha": alpha, "H1": H1, "t1": 15.0}

    o = run({**sec, "t2": 15.0, "w1": w1, "w2": w1})
    dev = max(abs(h - H1) for h in o["H2"])
    sw = max(abs(s) for s in o["swing_deg"])
    check("section: no change gives H1 and plumb strings", dev < 1e-9 * H1 and sw < 1e-9,
          f"(max |H - H1| {dev:.1e} N, max swing {sw:.1e} deg)")

    # Uneven heights, no change: still H1 and plumb.
    zs_hilly = [212.0 + 32.0, 231.0 + 34.6, 205.0 + 34.6, 240.0 + 34.6, 226.0 + 34.6, 218.0 + 32.0]
    o = run({"towers": section(xs, zs_hilly, dmask), "EA": EA, "alpha": alpha, "H1": H1, "t1": 15.0,
             "t2": 15.0, "w1": w1, "w2": w1})
    dev = max(abs(h - H1) for h in o["H2"])
    sw = max(abs(s) for s in o["swing_deg"])
    check("inclined section: no change gives H1 and plumb strings", dev < 1e-9 * H1 and sw < 1e-9,
          f"({dev:.1e} N, {sw:.1e} deg)")

    # Equal level spans, uniform change: no swing, H2 = single-span change of state.
    xe = [0.0, 400.0, 800.0, 1200.0, 1600.0]
    ze = [30.0, 32.6, 32.6, 32.6, 30.0]
    o = run({"towers": section(xe, ze, [True, False, False, False, True]), "EA": EA, "alpha": alpha,
             "H1": H1, "t1": 15.0, "t2": -5.0, "w1": w1, "w2": wice})
    single = run({"spans": [400.0], "EA": EA, "alpha": alpha, "w1": w1, "H1": H1, "t1": 15.0,
                  "w2": wice, "t2": -5.0})["H2"]
    dev = max(abs(h - single) for h in o["H2"])
    sw = max(abs(s) for s in o["swing_deg"])
    check("equal level spans, uniform change: no swing, H2 = single span", dev < 1e-8 * H1 and sw < 1e-9,
          f"(H2 {o['H2'][0]:.9f} vs {single:.9f}, swing {sw:.1e} deg)")
    # Same with the current weight basis.
    o = run({"towers": section(xe, ze, [True, False, False, False, True]), "EA": EA, "alpha": alpha,
             "H1": H1, "t1": 15.0, "t2": -5.0, "w1": w1, "w2": wice, "weight_basis": "current"})
    single = run({"spans": [400.0], "EA": EA, "alpha": alpha, "w1": w1, "H1": H1, "t1": 15.0,
                  "w2": wice, "t2": -5.0, "weight_basis": "current"})["H2"]
    dev = max(abs(h - single) for h in o["H2"])
    check("same, current weight basis", dev < 1e-8 * H1, f"({o['H2'][0]:.9f} vs {single:.9f})")

    # Very long massless strings -> the equal-tension idealisation of the ruling span.
    Lbig = 1e6
    zs_long = [30.0 if k in (0, 5) else 30.0 + Lbig for k in range(6)]
    o = run({"towers": section(xs, zs_long, dmask, L=Lbig, m=0.0), "EA": EA, "alpha": alpha, "H1": H1,
             "t1": 15.0, "t2": -5.0, "w1": w1, "w2": w1})
    ref = run({**base, "w2": w1, "t2": -5.0})["H2_equal_tension"]
    dev = max(abs(h - ref) for h in o["H2"])
    check("strings 1e6 m, massless -> H2_equal_tension", dev < 1e-6 * ref,
          f"(max dev {dev:.2e} N, H {ref:.6f})")

    # The same on inclined spans (string bottoms at uneven heights).
    zb = [30.0, 90.0, 10.0, 80.0, 30.0, 70.0]
    o = run({"towers": section(xs, [z + (0.0 if d else Lbig) for z, d in zip(zb, dmask)], dmask, L=Lbig, m=0.0),
             "EA": EA, "alpha": alpha, "H1": H1, "t1": 15.0, "t2": -5.0, "w1": w1, "w2": w1})
    ref = run({**base, "w2": w1, "t2": -5.0, "height_differences": np.diff(zb).tolist()})["H2_equal_tension"]
    dev = max(abs(h - ref) for h in o["H2"])
    check("inclined, strings 1e6 m -> H2_equal_tension", dev < 1e-6 * ref, f"(max dev {dev:.2e} N, H {ref:.6f})")

    # Equilibrium: total horizontal reaction zero, vertical = weights.
    o = run({**sec, "t2": -5.0, "w1": w1, "w2": [w1, wice, w1, w1, w1]})
    fx = sum(r[0] for r in o["support_reactions"])
    fz = sum(r[1] for r in o["support_reactions"])
    weight = sum(w * S for w, S in zip([w1, wice, w1, w1, w1], o["S0_t1"])) + 4 * 90.0 * g
    check("global equilibrium of the section", abs(fx) < 1e-8 * H1 and abs(fz + weight) < 1e-8 * weight,
          f"(sum Fx {fx:.1e} N, sum Fz + weight {fz + weight:.1e} N)")
    # Swing direction: iced span 2 pulls the strings of towers 1 and 2 towards it.
    s = o["swing_deg"]
    check("iced span 2 pulls its strings inwards", s[1] > 0 and s[2] < 0, f"(swing {s[1]:.4f}, {s[2]:.4f} deg)")
    # Re-evaluate each string's moment balance from the outputs (independent of residual()).
    worst = 0.0
    for k in range(1, 5):
        Fx = o["H2"][k] - o["H2"][k - 1]
        Fz = o["V_left"][k] + o["V_right"][k - 1]
        p = math.radians(s[k])
        worst = max(worst, abs(Fx * math.cos(p) + (Fz - 0.5 * 90.0 * g) * math.sin(p)))
    check("string moment balance from the outputs", worst < 1e-9 * H1, f"({worst:.1e} N)")
    # String bottoms at the string length from the hinges.
    dl = max(abs(math.hypot(b[0] - x, b[1] - z) - 2.6)
             for b, x, z, d in zip(o["string_bottom"], xs, zs_level, dmask) if not d)
    check("string bottoms at L from the hinges", dl < 1e-12, f"({dl:.1e} m)")

    # Stationary potential energy: at the solution of the iced case the
    # derivative of the total potential energy (strain energy of the spans,
    # their weight, the strings' weight) w.r.t. each swing angle vanishes.
    # An energy route, independent of the force and moment formulas.
    from scipy.integrate import quad
    w2s = [w1, wice, w1, w1, w1]
    wc = [w / (1.0 + alpha * (-20.0)) for w in w2s]

    def energy(phis):
        pts = [(xs[0], zs_level[0])]
        for k in range(1, 5):
            pts.append((xs[k] + 2.6 * math.sin(phis[k - 1]), zs_level[k] - 2.6 * math.cos(phis[k - 1])))
        pts.append((xs[5], zs_level[5]))
        E = sum(90.0 * g * (zs_level[k] - 1.3 * math.cos(phis[k - 1])) for k in range(1, 5))
        for i in range(5):
            l, h = pts[i + 1][0] - pts[i][0], pts[i + 1][1] - pts[i][1]
            S = o["S0_t2"][i]
            Hh, VA = span_given_S0(S, l, h, wc[i], EA, (o["H2"][i], o["V_left"][i]))
            VB = VA + wc[i] * S
            E += (Hh * Hh * S + (VB**3 - VA**3) / (3.0 * wc[i])) / (2.0 * EA)
            zint, _ = quad(lambda t: cat_end(Hh, VA, t, wc[i], EA)[1], 0.0, S, epsabs=1e-12, epsrel=1e-13,
                           limit=200)
            E += wc[i] * (pts[i][1] * S + zint)
        return E

    phis = [math.radians(a) for a in o["swing_deg"][1:5]]
    step = 1e-5
    grads = []
    for k in range(4):
        up, dn = list(phis), list(phis)
        up[k] += step
        dn[k] -= step
        grads.append((energy(up) - energy(dn)) / (2 * step))
    gmax = max(abs(v) for v in grads)
    check("dE/dphi = 0 at the solution (energy route)", gmax < 1e-6 * H1 * 2.6,
          f"(max |dE/dphi| {gmax:.1e} N m, scale H1 L = {H1 * 2.6:.0f})")
    # And it is a minimum: E rises for a small swing of any single string.
    E0 = energy(phis)
    rises = all(energy([p + (1e-3 if j == k else 0.0) for j, p in enumerate(phis)]) > E0 for k in range(4))
    check("the solution is an energy minimum", rises)

    # Dead-end strings (rigid rods hinged at the dead-end towers): in both
    # states, the moment about the hinge of the cable's pull on the rod end
    # and of the rod's weight at mid-length vanishes; the rod keeps its length.
    de = section(xs, zs_level, dmask)
    for k in (0, 5):
        de[k].update({"string_length": 3.2, "string_mass": 120.0})
    for label, extra in (("strung", {"t2": 15.0, "w1": w1, "w2": w1}),
                         ("iced span 2", {"t2": -5.0, "w1": w1, "w2": [w1, wice, w1, w1, w1]})):
        o = run({"towers": de, "EA": EA, "alpha": alpha, "H1": H1, "t1": 15.0, **extra})
        worst = 0.0
        for k, sgn in ((0, 1.0), (5, -1.0)):
            bx, bz = o["string_bottom"][k]
            dx, dz = bx - xs[k], bz - zs_level[k]
            i = 0 if k == 0 else 4
            # Pull of span i on the rod end: (+H, V_left) at a left end, (-H, V_right) at a right end.
            Fx = sgn * o["H2"][i]
            Fz = o["V_left"][i] if k == 0 else o["V_right"][i]
            moment = dx * Fz - dz * Fx + 0.5 * dx * (-120.0 * g)
            worst = max(worst, abs(moment) / 3.2, abs(math.hypot(dx, dz) - 3.2) * H1)
        check(f"dead-end strings in moment balance, {label}", worst < 1e-8 * H1,
              f"({worst:.1e} N; angles {o['dead_end_angle_deg'][0]:.3f}, {o['dead_end_angle_deg'][5]:.3f} deg)")

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
        print(f"ruling_span.py: {type(e).__name__}: {e}", file=sys.stderr)
        sys.exit(1)


if __name__ == "__main__":
    main()
