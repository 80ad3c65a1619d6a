"""References for the section families and the geometry measures, written without panelflow.

Nothing here imports panelflow, so a mistake in the library cannot leak into its own check.

Sources
-------
* NACA Report 824 (Abbott, von Doenhoff & Stivers, 1945) and Abbott & von Doenhoff, *Theory of
  Wing Sections* (1959), section 4.5 and appendix II: the a-series mean line, its uniform load
  to x/c = a and ideal angle; section 6.4: the modified 4-digit and 16-series thickness.
* Thin-airfoil theory (Abbott & von Doenhoff ch. 4; Anderson, *Fundamentals of Aerodynamics*,
  ch. 4): a vortex sheet ``gamma(x)`` on the chord induces the upwash
  ``v(x0) = (1/2 pi) PV int gamma(xi) / (xi - x0) dxi`` and the mean line follows the flow,
  ``dyc/dx = alpha + v``; the lift is ``cl = 2 int gamma dx`` (unit speed and chord) and the
  pressure jump ``Cp_lower - Cp_upper = 2 gamma``.
* NACA Report 460: the 4-digit thickness.
"""

from __future__ import annotations

import numpy as np
from scipy import integrate

# ---------------------------------------------------------------------------------- values
# The NACA 16-series thickness as published in closed form (Abbott & von Doenhoff 6.4), in
# units of t: ahead of x = 0.5 y/t = A0 sqrt(x) + A1 x + A2 x^2 + A3 x^3, behind it
# y/t = D0 + D1 (1-x) + D2 (1-x)^2 + D3 (1-x)^3 -- from memory.
SIXTEEN_SERIES = {"fore": (0.989665, -0.239250, -0.041000, -0.559400),
                  "aft": (0.010000, 2.325000, -3.420000, 1.460000)}

# Ideal angle of attack of the a-series mean lines for cl_i = 1, degrees, as tabulated in
# Abbott & von Doenhoff appendix II -- from memory.
IDEAL_ANGLE_DEG = {0.5: 3.04, 0.8: 1.54, 1.0: 0.0}

# NACA 0012 ordinates, percent of chord, as tabulated in Abbott & von Doenhoff appendix I --
# from memory: (x, y) pairs.
NACA0012_TABLE = ((1.25, 1.894), (2.5, 2.615), (5.0, 3.555), (7.5, 4.200), (10.0, 4.683),
                  (15.0, 5.345), (20.0, 5.737), (25.0, 5.941), (30.0, 6.002), (40.0, 5.803),
                  (50.0, 5.294), (60.0, 4.563), (70.0, 3.664), (80.0, 2.623), (90.0, 1.448),
                  (95.0, 0.807), (100.0, 0.126))


def sixteen_series_thickness(x, t):
    """Half thickness of the 16-series form from the published coefficients above."""
    x = np.asarray(x, dtype=float)
    a0, a1, a2, a3 = SIXTEEN_SERIES["fore"]
    d0, d1, d2, d3 = SIXTEEN_SERIES["aft"]
    s = 1.0 - x
    fore = a0 * np.sqrt(x) + a1 * x + a2 * x**2 + a3 * x**3
    aft = d0 + d1 * s + d2 * s**2 + d3 * s**3
    return t * np.where(x <= 0.5, fore, aft)


def report460_thickness(x, t, closed=False):
    """NACA Report 460 half thickness (closed trailing-edge coefficient -0.1036: common
    practice)."""
    a4 = -0.1036 if closed else -0.1015
    x = np.asarray(x, dtype=float)
    return 5 * t * (0.2969 * np.sqrt(x) - 0.1260 * x - 0.3516 * x**2 + 0.2843 * x**3 + a4 * x**4)


# ---------------------------------------------------------------------------------- a-series
def a_series_load(x, a, cl_ideal):
    """Pressure jump Cp_lower - Cp_upper of the a-series design load (Report 824): uniform up to
    x = a, then falling linearly to zero at the trailing edge, integrating to cl_ideal."""
    x = np.asarray(x, dtype=float)
    level = 2.0 * cl_ideal / (1.0 + a)  # area a * level + (1 - a) * level / 2 = cl_ideal
    if a >= 1.0:
        return np.full_like(x, level)
    return level * np.where(x <= a, 1.0, (1.0 - x) / (1.0 - a))


def _principal_value(f, x0, breaks):
    """PV int_0^1 f(xi) / (xi - x0) dxi, split at ``breaks`` (kinks of f)."""
    edges = sorted({0.0, 1.0, *[b for b in breaks if 0.0 < b < 1.0]})
    total = 0.0
    for lo, hi in zip(edges[:-1], edges[1:]):
        if lo < x0 < hi:
            total += integrate.quad(f, lo, hi, weight="cauchy", wvar=x0, limit=200)[0]
        else:
            total += integrate.quad(lambda xi: f(xi) / (xi - x0), lo, hi, limit=200)[0]
    return total


def thin_airfoil_slope(x0, a, cl_ideal):
    """Mean-line slope minus the ideal angle that carries the a-series load, by thin-airfoil
    theory: ``v(x0)`` induced by ``gamma = load / 2`` (see the module docstring)."""
    def gamma(xi):
        return 0.5 * float(a_series_load(xi, a, cl_ideal))

    return _principal_value(gamma, x0, [a]) / (2.0 * np.pi)


def glauert_ideal_angle(slope):
    """Ideal angle (radians): the angle with no leading-edge singularity, A0 = 0 in Glauert's
    series, ``alpha_i = (1/pi) int_0^pi dyc/dx dtheta`` with ``x = (1 - cos theta)/2``."""
    return integrate.quad(lambda th: slope(0.5 * (1.0 - np.cos(th))), 0.0, np.pi,
                          limit=400)[0] / np.pi


def glauert_design_cl(slope):
    """Lift coefficient at the ideal angle: ``pi A1 = 2 int_0^pi dyc/dx cos(theta) dtheta``."""
    return 2.0 * integrate.quad(lambda th: slope(0.5 * (1.0 - np.cos(th))) * np.cos(th), 0.0,
                                np.pi, limit=400)[0]
