"""Closure relations of the integral boundary-layer equations, laminar and turbulent.

Laminar (two-equation method: momentum and kinetic-energy integrals)
    Three functions of the shape factor H = delta*/theta, fitted to the Falkner-Skan family of
    similar profiles computed with scipy's ``solve_bvp`` (``scripts/fit_laminar_closures.py``
    reproduces the fit): the kinetic-energy shape factor H* = theta*/theta, the skin friction
    ``Re_theta Cf/2`` and the dissipation ``Re_theta CD``. The family runs from strongly
    accelerated profiles (H = 2.09) through the separation profile (H = 4.03, beta = -0.1988)
    along the reverse-flow branch to H = 8.5; that branch carries a laminar separation bubble.
    Beyond the fitted range the functions continue linearly with their end slopes; a laminar
    shear layer with H above about 8.5 is outside the data (stated in the results' limits).

Turbulent (lag-entrainment method)
    Green, Weeks & Brooman, "Prediction of turbulent boundary layers and wakes in compressible
    flow by a lag-entrainment method", ARC R&M 3791 (1977), incompressible form: Head's
    entrainment shape factor H1(H), the flat-plate skin friction Cf0(Re_theta), the skin friction
    at other shape factors, the equilibrium entrainment coefficient and the lag equation's
    coefficients. Constants are as recalled from that report (from memory); the turbulent
    flat-plate check against Schlichting's correlation in tests/test_viscous_march.py tests
    them together.

All functions take and return plain floats (the boundary-layer march calls them station by
station, where Python floats are several times faster than numpy scalars).
"""

from __future__ import annotations

import functools
import math

import numpy as np

# Polynomials in ln(H - 1), highest power first, from scripts/fit_laminar_closures.py
# (179 Falkner-Skan profiles, H from 2.0915 to 8.5006; largest fit errors 7e-6, 1.3e-5, 6e-7).
ENERGY_SHAPE = (-1.5480023241e-03, 1.3970312963e-02, -5.2371085578e-02, 1.0637309571e-01,
                -1.2807366085e-01, 1.1478654284e-01, 4.1327013681e-02, -2.5002554250e-01,
                1.6724071161e+00)
FRICTION = (3.6155414964e-03, -3.5357460261e-02, 1.4567486390e-01, -3.1540510247e-01,
            3.4307373825e-01, -1.2908414740e-01, 1.4864602800e-01, -6.1129556869e-01,
            4.7485375066e-01)
DISSIPATION = (3.9250823122e-04, -1.5487310348e-03, -9.3192712734e-03, 7.3353074333e-02,
               -1.7036936612e-01, 1.0240441885e-01, 1.5850426095e-01, -2.4719170446e-01,
               2.5019289436e-01)
LAMINAR_H_RANGE = (2.0915, 8.5006)
SEPARATION_H = 4.0292  # the Falkner-Skan separation profile (beta = -0.1988)


def _poly(c, t):
    v = 0.0
    for a in c:
        v = v * t + a
    return v


def _dpoly(c, t):
    n = len(c) - 1
    v = 0.0
    for k, a in enumerate(c[:-1]):
        v = v * t + (n - k) * a
    return v


def _fitted(c, h):
    lo, hi = LAMINAR_H_RANGE
    if lo <= h <= hi:
        return _poly(c, math.log(h - 1.0))
    edge = lo if h < lo else hi
    t = math.log(edge - 1.0)
    return _poly(c, t) + _dpoly(c, t) / (edge - 1.0) * (h - edge)


def laminar(h: float) -> tuple[float, float, float]:
    """Laminar closures at shape factor ``h``.

    Returns
    -------
    energy_shape : float
        H* = theta*/theta.
    friction : float
        Re_theta Cf/2 (negative in reversed flow).
    dissipation : float
        Re_theta CD, CD = (1/(rho Ue^3)) int tau du/dy dy.
    """
    return _fitted(ENERGY_SHAPE, h), _fitted(FRICTION, h), _fitted(DISSIPATION, h)


@functools.lru_cache(maxsize=64)  # a pure function of m, asked for m = 1 at every iteration
def laminar_similar_state(m: float) -> tuple[float, float]:
    """Self-similar solution of the laminar integral equations for Ue = C s^m.

    With theta^2 = lam nu s / Ue and H constant, the momentum integral gives
    ``lam = f1 / ((1 - m)/2 + (H + 2) m)`` and the kinetic-energy integral
    ``2 f2 - H* f1 = lam H* (1 - H) m``; the second is solved for H by bisection.

    Returns
    -------
    h, lam : float
        Shape factor and theta^2 Ue / (nu s); for m = 1 (stagnation, Ue = a s) ``lam`` is
        theta^2 a / nu.
    """
    def resid(h):
        hs, f1, f2 = laminar(h)
        lam = f1 / (0.5 * (1.0 - m) + (h + 2.0) * m)
        return 2.0 * f2 - hs * f1 - lam * hs * (1.0 - h) * m

    a, b = 2.0, SEPARATION_H
    fa = resid(a)
    for _ in range(80):
        c = 0.5 * (a + b)
        fc = resid(c)
        if (fc > 0) == (fa > 0):
            a, fa = c, fc
        else:
            b = c
    h = 0.5 * (a + b)
    _, f1, _ = laminar(h)
    return h, f1 / (0.5 * (1.0 - m) + (h + 2.0) * m)


# --- turbulent: lag-entrainment method (Green, Weeks & Brooman 1977), incompressible ----------

WAKE_LAMBDA = 0.5  # dissipation scaling in wakes (from memory, R&M 3791)


def flat_plate_friction(re_theta: float) -> float:
    """Cf0: flat-plate skin friction at momentum-thickness Reynolds number ``re_theta``."""
    lg = math.log10(min(max(re_theta, 40.0), 1e9))
    return 0.01013 / (lg - 1.02) - 0.00075


def entrainment_shape(h: float) -> float:
    """Head's entrainment shape factor H1 = (delta - delta*)/theta as a function of H."""
    return 3.15 + 1.72 / (h - 1.0) - 0.01 * (h - 1.0) ** 2


def turbulent(h: float, re_theta: float, wake: bool = False):
    """Turbulent closures at shape factor ``h`` and ``re_theta``.

    Returns
    -------
    cf : float
        Skin friction coefficient on the edge speed (0 in a wake).
    h1 : float
        Head's entrainment shape factor.
    cf0 : float
        Flat-plate skin friction at the same Re_theta.
    ce_eq : float
        Equilibrium entrainment coefficient (C_E)_EQ0.
    grad_eq : float
        Equilibrium pressure-gradient parameter (theta/Ue dUe/ds)_EQ0.
    """
    cf0 = flat_plate_friction(re_theta)
    h0 = 1.0 / (1.0 - 6.55 * math.sqrt(0.5 * cf0))
    if wake:
        cf = 0.0
    else:
        cf = cf0 * (0.9 / (h / h0 - 0.4) - 0.5)
    h1 = entrainment_shape(h)
    grad_eq = 1.25 / h * (0.5 * cf - ((h - 1.0) / (6.432 * h)) ** 2)
    ce_eq = h1 * (0.5 * cf - (h + 1.0) * grad_eq)
    return cf, h1, cf0, ce_eq, grad_eq


def shear_stress(ce: float, cf0: float) -> float:
    """Maximum shear-stress coefficient C_tau from the entrainment coefficient (incompressible)."""
    return 0.024 * ce + 1.2 * ce * ce + 0.32 * cf0


def lag_factor(ce: float, cf0: float) -> float:
    """F, the factor of the lag equation."""
    return (0.02 * ce + ce * ce + 0.8 * cf0 / 3.0) / (0.01 + ce)


# --- the same relations on arrays (the simultaneous Newton iteration evaluates all stations at
# once) ---------------------------------------------------------------------------------------

_DERIVATIVES = {}


def _fitted_array(c, h):
    lo, hi = LAMINAR_H_RANGE
    hc = np.clip(h, lo, hi)
    t = np.log(hc - 1.0)
    v = np.polyval(c, t)
    out = hc != h
    if np.any(out):
        d = _DERIVATIVES.setdefault(c, np.polyder(np.asarray(c)))
        v = v + np.polyval(d, t) / (hc - 1.0) * (h - hc)
    return v


def laminar_array(h):
    """:func:`laminar` on an array of shape factors."""
    h = np.asarray(h, float)
    lo, hi = LAMINAR_H_RANGE
    hc = np.clip(h, lo, hi)
    t = np.log(hc - 1.0)
    out = hc != h
    values = []
    for c in (ENERGY_SHAPE, FRICTION, DISSIPATION):  # the logarithm shared by the three fits
        v = np.polyval(c, t)
        if np.any(out):
            d = _DERIVATIVES.setdefault(c, np.polyder(np.asarray(c)))
            v = v + np.polyval(d, t) / (hc - 1.0) * (h - hc)
        values.append(v)
    return tuple(values)


def turbulent_array(h, re_theta, wake):
    """:func:`turbulent` on arrays; ``wake`` is a boolean array (zero wall friction)."""
    h = np.asarray(h, float)
    lg = np.log10(np.clip(re_theta, 40.0, 1e9))
    cf0 = 0.01013 / (lg - 1.02) - 0.00075
    h0 = 1.0 / (1.0 - 6.55 * np.sqrt(0.5 * cf0))
    cf = np.where(wake, 0.0, cf0 * (0.9 / (h / h0 - 0.4) - 0.5))
    h1 = entrainment_shape(h)
    grad_eq = 1.25 / h * (0.5 * cf - ((h - 1.0) / (6.432 * h)) ** 2)
    ce_eq = h1 * (0.5 * cf - (h + 1.0) * grad_eq)
    return cf, h1, cf0, ce_eq, grad_eq
