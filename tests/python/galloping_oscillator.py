#!/usr/bin/env python3
"""Independent reference for glaze's quasi-steady galloping: the steady
(limit-cycle) amplitude of the one-degree-of-freedom galloping oscillator,
integrated with scipy.integrate.solve_ivp (DOP853, rtol 1e-10).

Model (quasi-steady theory, Den Hartog 1932; Blevins, "Flow-Induced
Vibration", 2nd ed. 1990, ch. 4; Parkinson & Smith 1964 for the cubic lift
curve), a section moving vertically with z(t) in a horizontal wind U along
e_y, per unit length:

    m z'' + 2 m xi omega z' + m omega^2 z = F_z(z')

Relative wind V = U e_y - z' e_z, beta = atan2(-z', U), angle of attack
alpha = beta (no twist), q = rho (U^2 + z'^2) / 2. Drag q D C_D along V/|V|
= (cos beta, sin beta) in (e_y, e_z); lift q D C_L along e_x x V/|V|
= (-sin beta, cos beta). Vertical component:

    F_z = q D (C_L(alpha) cos beta + C_D(alpha) sin beta)

(the convention of glaze's aero/src/coefficient_table.rs and
section_load.rs, derived again here). C_D = 0 and the cubic lift curve
C_L = a1 alpha + a3 alpha^3 (a1 < 0: Den Hartog unstable about 0; a3 > 0:
a stable limit cycle), evaluated exactly (no table).

Usage: galloping_oscillator.py m omega xi rho D U a1 a3 z0 t_end
Prints "amplitude <A>" (m, the mean |z| at the velocity zeros of the last
20 cycles) and "spread <s>" (max - min of those extrema over their mean).
"""
import math
import sys

import numpy as np
from scipy.integrate import solve_ivp


def main():
    m, omega, xi, rho, d, u, a1, a3, z0, t_end = (float(x) for x in sys.argv[1:11])

    def force(zdot):
        beta = math.atan2(-zdot, u)
        alpha = beta
        cl = a1 * alpha + a3 * alpha**3
        cd = 0.0
        q = 0.5 * rho * (u * u + zdot * zdot)
        return q * d * (cl * math.cos(beta) + cd * math.sin(beta))

    def rhs(_t, y):
        z, zdot = y
        return [zdot, -2.0 * xi * omega * zdot - omega * omega * z + force(zdot) / m]

    def velocity_zero(_t, y):
        return y[1]

    sol = solve_ivp(
        rhs,
        (0.0, t_end),
        [z0, 0.0],
        method="DOP853",
        rtol=1e-10,
        atol=1e-12,
        events=velocity_zero,
        dense_output=False,
    )
    if not sol.success:
        print(f"solve_ivp failed: {sol.message}")
        sys.exit(1)
    extrema = np.abs(sol.y_events[0][:, 0])
    if len(extrema) < 40:
        print(f"only {len(extrema)} velocity zeros: lengthen t_end")
        sys.exit(1)
    last = extrema[-40:]
    amplitude = float(np.mean(last))
    spread = float((last.max() - last.min()) / amplitude)
    print(f"amplitude {amplitude:.12e}")
    print(f"spread {spread:.3e}")
    print(f"rhs evaluations {sol.nfev}, velocity zeros {len(extrema)}")


if __name__ == "__main__":
    main()
