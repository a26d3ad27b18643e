"""Reference values for the geometric (orthogonal-distance) ellipse fit, computed independently
of conicut with SciPy's general-purpose nonlinear least-squares solver.

Formulation (Gander, Golub, Strebel, BIT 34 (1994), the parametric form): the unknowns are the
ellipse (x0, y0, a, b, theta) and one curve parameter t_i per point; the residuals are the 2m
coordinate differences p_i - x(t_i). At the minimum each t_i is the nearest point's, so the sum of
squares is the sum of squared orthogonal distances. conicut minimises over the five ellipse
parameters with exact nearest points instead: a different method for the same minimum.

Run:  pip install numpy scipy && python3 docs/reference/geometric_fit.py
"""
import math
import os
import re

import numpy as np
from scipy.optimize import least_squares


def fit(points, start):
    x0, y0, a, b, th = start
    pts = np.asarray(points, float)
    c, s = math.cos(th), math.sin(th)
    # Start each t at the angle of the point in the start ellipse's frame.
    ts = []
    for px, py in pts:
        u = (c * (px - x0) + s * (py - y0)) / a
        v = (-s * (px - x0) + c * (py - y0)) / b
        ts.append(math.atan2(v, u))

    def res(z):
        x0, y0, a, b, th = z[:5]
        t = z[5:]
        c, s = math.cos(th), math.sin(th)
        ex = x0 + a * np.cos(t) * c - b * np.sin(t) * s
        ey = y0 + a * np.cos(t) * s + b * np.sin(t) * c
        return np.concatenate([pts[:, 0] - ex, pts[:, 1] - ey])

    z = least_squares(res, np.array([x0, y0, a, b, th] + ts), xtol=1e-15, ftol=1e-15,
                      gtol=1e-15, method="lm", max_nfev=100000).x
    x0, y0, a, b, th = z[:5]
    if b > a:
        a, b, th = b, a, th + math.pi / 2
    th = (th + math.pi / 2) % math.pi - math.pi / 2
    r = res(z)
    d = np.hypot(r[: len(pts)], r[len(pts):])
    return x0, y0, abs(a), abs(b), th, math.sqrt(np.mean(d * d)), d.max()


def partial_arc():
    """50 points on the arc from -60 to 100 degrees of a 40 x 15 mm ellipse centred at
    (120, 80), turned 25 degrees, each moved along its direction from the centre by
    0.05 * sin(12.9898 k) mm (a fixed, repeatable noise)."""
    out = []
    th = math.radians(25.0)
    for k in range(50):
        t = math.radians(-60.0 + 160.0 * k / 49)
        x, y = 40.0 * math.cos(t), 15.0 * math.sin(t)
        r = math.hypot(x, y)
        n = 0.05 * math.sin(12.9898 * k)
        x, y = x * (1 + n / r), y * (1 + n / r)
        out.append((120.0 + x * math.cos(th) - y * math.sin(th),
                    80.0 + x * math.sin(th) + y * math.cos(th)))
    return out


# The 20 perturbed points of docs/sources.md M9, read from the tests' own copy
# (tests/support/perturbed_points.rs), which the end-to-end job test moves by (200, 150).
HERE = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(HERE, "..", "..", "tests", "support", "perturbed_points.rs")) as f:
    PERTURBED = [(float(x), float(y)) for x, y in
                 re.findall(r"\((-?[0-9.]+), (-?[0-9.]+)\)", f.read())]
assert len(PERTURBED) == 20

GANDER = [(1, 7), (2, 6), (5, 8), (7, 7), (9, 5), (3, 7), (6, 2), (8, 4)]

for name, pts, start in [
    ("gander", GANDER, (3.0, 4.0, 6.0, 3.0, 0.4)),
    ("partial arc", partial_arc(), (120.0, 80.0, 40.0, 15.0, math.radians(25.0))),
    ("perturbed, moved", [(x + 200.0, y + 150.0) for x, y in PERTURBED],
     (230.0, 138.0, 40.0, 15.0, math.radians(25.0))),
]:
    x0, y0, a, b, th, rms, worst = fit(pts, start)
    print(f"{name}: centre ({x0:.12f}, {y0:.12f}) a {a:.12f} b {b:.12f} "
          f"angle {th:.12f} rad, rms {rms:.12f}, largest {worst:.12f}")
