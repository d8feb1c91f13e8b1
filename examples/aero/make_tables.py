#!/usr/bin/env python3
"""Generate the two example aerodynamic coefficient tables of glaze.

THESE ARE INVENTED CURVES, NOT MEASURED DATA. They are smooth synthetic
curves of our own making, shaped like published wind-tunnel results for
crescent (thin, windward) glaze ice on a stranded conductor, so that the
examples and tests have a realistic galloping-prone section to work with.
Do not use them for the design or assessment of a real line: use coefficients
measured for the ice shape in question.

Sign convention (that of `glaze_aero::coefficient_table`): alpha is the angle
of the relative wind measured from the section's reference axis, positive
right-handed about the conductor axis e_x = e_y x e_z (from the downwind
horizontal e_y toward the vertical e_z: wind blowing upward onto a level
section has alpha > 0). Lift is perpendicular to the relative wind, the
drag direction turned +90 deg about e_x; the moment is positive about e_x.
With this convention a section at mean angle alpha_0 is Den Hartog unstable
for plunge when dC_L/dalpha + C_D < 0 at alpha_0.

Both tables run from alpha = -180 deg to +180 deg; the last row repeats the
first so that glaze treats them as periodic over 360 deg.

bare_round.csv -- a bare round stranded conductor, 28.14 mm diameter
(reference_diameter = 0.02814 m), 10 deg steps:

    C_D(alpha) = 1.0,   C_L(alpha) = 0,   C_M(alpha) = 0.

C_D = 1.0 is a common-practice round value for a stranded conductor at
subcritical Reynolds number, not a measurement.

crescent_ice.csv -- the same conductor with a crescent of ice, reference
diameter 0.0531 m (about 28.14 mm + 2 x 12.5 mm), 5 deg steps, with
a = alpha in rad and a_c = 35 deg:

    C_D(a) = 1.20 + 0.10 cos(a) - 0.12 cos(2a) + 0.04 sin(a)
    C_L(a) = -0.20 + 0.08 sin(a) - 0.45 * sum_{k=1..4} (1 - k/5) sin(k (a - a_c))
    C_M(a) = 0.02 - 0.02 cos(a) - 0.06 sin(a) + 0.03 sin(2a)

The C_L sum is the conjugate Fejer kernel of order 5: its slope is most
negative at a = a_c, where sum k (1 - k/5) = 4 gives dC_L/da ~ -1.8 per rad,
so dC_L/da + C_D < 0 (Den Hartog unstable) for alpha between about 18 deg
and 50 deg, and nowhere else. C_D stays between about 0.98 and 1.37.

Values are rounded to 6 decimals. The script is deterministic (no random
numbers); run it from any directory:

    python3 examples/aero/make_tables.py

It rewrites both CSV files next to itself and prints the unstable range.
"""

import os

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
ALPHA_C_DEG = 35.0


def crescent(alpha_deg):
    """Return (C_D, C_L, C_M, dC_L/dalpha per rad) of the crescent section."""
    a = np.deg2rad(alpha_deg)
    ac = np.deg2rad(ALPHA_C_DEG)
    cd = 1.20 + 0.10 * np.cos(a) - 0.12 * np.cos(2 * a) + 0.04 * np.sin(a)
    cl = -0.20 + 0.08 * np.sin(a)
    dcl = 0.08 * np.cos(a)
    for k in range(1, 5):
        w = 1.0 - k / 5.0
        cl = cl - 0.45 * w * np.sin(k * (a - ac))
        dcl = dcl - 0.45 * w * k * np.cos(k * (a - ac))
    cm = 0.02 - 0.02 * np.cos(a) - 0.06 * np.sin(a) + 0.03 * np.sin(2 * a)
    return cd, cl, cm, dcl


def write_table(name, description, diameter, alpha_deg, cd, cl, cm):
    """Write one table; the last row is made an exact copy of the first."""
    cd, cl, cm = (np.array(c, dtype=float) for c in (cd, cl, cm))
    for c in (cd, cl, cm):
        c[-1] = c[0]
    path = os.path.join(HERE, name)
    with open(path, "w", encoding="utf-8", newline="\n") as f:
        f.write("# glaze aerodynamic coefficient table\n")
        for line in description:
            f.write(f"# {line}\n")
        f.write("# alpha_deg in degrees; cd, cl, cm dimensionless\n")
        f.write(f"# reference_diameter = {diameter}\n")
        f.write("alpha_deg,cd,cl,cm\n")
        for a, d, l, m in zip(alpha_deg, cd, cl, cm):
            # "+ 0.0" turns a rounded -0.0 into 0.0.
            f.write(
                f"{a:.0f},{round(d, 6) + 0.0:.6f},"
                f"{round(l, 6) + 0.0:.6f},{round(m, 6) + 0.0:.6f}\n"
            )
    return path


def main():
    alpha = np.arange(-180.0, 180.0 + 0.5, 10.0)
    zeros = np.zeros_like(alpha)
    write_table(
        "bare_round.csv",
        [
            "bare round stranded conductor, 28.14 mm diameter",
            "C_D = 1.0 is a common-practice round value, not measured data",
        ],
        0.02814,
        alpha,
        np.ones_like(alpha),
        zeros,
        zeros,
    )

    alpha = np.arange(-180.0, 180.0 + 0.5, 5.0)
    cd, cl, cm, _ = crescent(alpha)
    write_table(
        "crescent_ice.csv",
        [
            "crescent glaze ice on a 28.14 mm conductor, outer size about 53.1 mm",
            "INVENTED smooth curves, not measured data (see make_tables.py)",
        ],
        0.0531,
        alpha,
        cd,
        cl,
        cm,
    )

    fine = np.arange(-180.0, 180.0, 0.1)
    cd, _, _, dcl = crescent(fine)
    unstable = fine[dcl + cd < 0]
    print(
        "crescent_ice: dC_L/dalpha + C_D < 0 for alpha in "
        f"[{unstable.min():.1f}, {unstable.max():.1f}] deg "
        f"(minimum {np.min(dcl + cd):.3f})"
    )


if __name__ == "__main__":
    main()
