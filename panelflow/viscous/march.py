"""Marching the integral boundary-layer equations along one surface or the wake.

Equations, per unit span, s along the surface, Ue the edge speed (freestream 1, chord 1,
nu = 1/Re):

* momentum integral (von Karman): d(ln theta) = Cf/(2 theta) ds - (H + 2) d(ln Ue);
* laminar: kinetic-energy integral, d(ln H*) = (2 CD/H* - Cf/2)/theta ds - (1 - H) d(ln Ue),
  and the amplification factor dN = (dN/ds) ds (see :mod:`panelflow.viscous.transition`);
* turbulent and wake: the lag-entrainment method of Green, Weeks & Brooman (ARC R&M 3791, 1977),
  entrainment dH1 = (C_E - H1 Cf/2)/theta ds + H1 (H + 1) d(ln Ue) and the lag equation
  dC_E = F/theta [2.8/(H + H1) (C_tau,EQ0^1/2 - lambda C_tau^1/2) + (theta/Ue dUe/ds)_EQ0] ds
  - F d(ln Ue); in the wake Cf = 0, lambda = 0.5 and theta is the half-wake's.

Each interval between two stations is discretised by the trapezoidal rule (second order) with the
logarithmic differences above, which stay exact for power-law edge speeds at any step ratio in
the d(ln Ue) terms. The unknowns of a station are solved by Newton's method with a
finite-difference Jacobian (two unknowns laminar, three turbulent).

The edge speed of a station may also be tied to the station's displacement by a local law
``Ue = A + K m`` with ``m = Ue delta*`` (A and K from the caller, an interaction law in the sense
of A. E. P. Veldman, AIAA J. 19, 1981); K = 0 is the direct problem, the only use here: the
coupled analysis solves all stations together instead (see ``simultaneous``). The direct march
meets Goldstein's singularity at laminar separation; it starts the coupled iteration and
serves the checks on given edge speeds.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from panelflow.viscous import closures
from panelflow.viscous.transition import amplification_rate

MAX_NEWTON = 25
NEWTON_TOL = 1e-10
H_LIMITS_LAMINAR = (1.9, 20.0)
H_LIMITS_TURBULENT = (1.05, 12.0)
CE_MIN = 1e-6


@dataclass
class State:
    """Boundary-layer state at one station (mutable scratch object of the march)."""

    theta: float
    h: float
    third: float  # amplification factor N (laminar) or entrainment coefficient C_E (turbulent)
    ue: float
    turbulent: bool

    @property
    def delta_star(self) -> float:
        return self.h * self.theta


def _ue(a, k, dstar):
    """Edge speed from the interaction law Ue = A + K Ue delta*."""
    d = 1.0 - k * dstar
    if d < 0.2:  # far outside the law's range; keeps Newton away from the pole
        d = 0.2
    return max(a / d, 1e-6)


# --- laminar --------------------------------------------------------------------------------

def _lam_terms(theta, h, ue, re):
    hs, f1, f2 = closures.laminar(h)
    k = 1.0 / (re * ue * theta * theta)
    return hs, f1 * k, (2.0 * f2 / hs - f1) * k


def _lam_residual(ta, ha, ua, hsa, q1a, q2a, lt, h, a, k, ds, re):
    theta = math.exp(lt)
    ue = _ue(a, k, h * theta)
    hs, q1, q2 = _lam_terms(theta, h, ue, re)
    dl = math.log(ue / ua)
    r1 = lt - math.log(ta) - 0.5 * ds * (q1a + q1) + (0.5 * (ha + h) + 2.0) * dl
    r2 = math.log(hs / hsa) - 0.5 * ds * (q2a + q2) + (1.0 - 0.5 * (ha + h)) * dl
    return r1, r2


def laminar_step(sa: State, ds: float, a: float, k: float, re: float,
                 h_max: float | None = None,
                 tolerance: float = NEWTON_TOL) -> tuple[State, bool]:
    """Laminar state one interval ``ds`` downstream of ``sa`` (edge speed by the law A, K)."""
    ta, ha, ua = sa.theta, sa.h, sa.ue
    hsa, q1a, q2a = _lam_terms(ta, ha, ua, re)
    lt, h = math.log(ta), ha
    lo, hi = H_LIMITS_LAMINAR
    hi = hi if h_max is None else min(hi, h_max)
    ok = False
    for _ in range(MAX_NEWTON):
        r1, r2 = _lam_residual(ta, ha, ua, hsa, q1a, q2a, lt, h, a, k, ds, re)
        if abs(r1) + abs(r2) < tolerance:
            ok = True
            break
        e1, e2 = 1e-7, 1e-7 * max(1.0, h)
        p1, p2 = _lam_residual(ta, ha, ua, hsa, q1a, q2a, lt + e1, h, a, k, ds, re)
        s1, s2 = _lam_residual(ta, ha, ua, hsa, q1a, q2a, lt, h + e2, a, k, ds, re)
        j11, j21 = (p1 - r1) / e1, (p2 - r2) / e1
        j12, j22 = (s1 - r1) / e2, (s2 - r2) / e2
        det = j11 * j22 - j12 * j21
        if det == 0.0 or not math.isfinite(det):
            break
        dlt = -(r1 * j22 - r2 * j12) / det
        dh = -(j11 * r2 - j21 * r1) / det
        # damping: steps of ln(theta) and H limited, so a bad start cannot throw Newton away
        f = min(1.0, 0.5 / max(abs(dlt), 1e-30), 0.5 * max(h - 1.0, 0.5) / max(abs(dh), 1e-30))
        lt += f * dlt
        h = min(max(h + f * dh, lo), hi)
    theta = math.exp(lt)
    ue = _ue(a, k, h * theta)
    n = sa.third + 0.5 * ds * (amplification_rate(ha, re * ua * ta, ta)
                               + amplification_rate(h, re * ue * theta, theta))
    return State(theta, h, n, ue, False), ok


# --- turbulent and wake ---------------------------------------------------------------------

def _turb_terms(theta, h, ce, ue, re, wake):
    re_theta = re * ue * theta
    cf, h1, cf0, ce_eq, grad_eq = closures.turbulent(h, re_theta, wake)
    lam = closures.WAKE_LAMBDA if wake else 1.0
    tau = closures.shear_stress(max(ce, CE_MIN), cf0)
    tau_eq = closures.shear_stress(max(ce_eq, CE_MIN), cf0)
    big_f = closures.lag_factor(max(ce, CE_MIN), cf0)
    q1 = 0.5 * cf / theta
    q2 = (ce - h1 * 0.5 * cf) / theta
    q3 = big_f / theta * (2.8 / (h + h1) * (math.sqrt(tau_eq) - lam * math.sqrt(tau)) + grad_eq)
    return h1, q1, q2, q3, big_f


def _turb_residual(ta, ha, ca, ua, terms_a, lt, h, ce, a, k, ds, re, wake):
    theta = math.exp(lt)
    ue = _ue(a, k, h * theta)
    h1, q1, q2, q3, big_f = _turb_terms(theta, h, ce, ue, re, wake)
    h1a, q1a, q2a, q3a, fa = terms_a
    dl = math.log(ue / ua)
    r1 = lt - math.log(ta) - 0.5 * ds * (q1a + q1) + (0.5 * (ha + h) + 2.0) * dl
    r2 = h1 - h1a - 0.5 * ds * (q2a + q2) - 0.5 * (h1a * (ha + 1.0) + h1 * (h + 1.0)) * dl
    r3 = ce - ca - 0.5 * ds * (q3a + q3) + 0.5 * (fa + big_f) * dl
    return r1, r2, r3


def _solve3(j, r):
    """Solve the 3x3 system j x = -r by Cramer's rule (plain floats)."""
    (a, b, c), (d, e, f), (g, h, i) = j
    det = a * (e * i - f * h) - b * (d * i - f * g) + c * (d * h - e * g)
    if det == 0.0 or not math.isfinite(det):
        return None
    r1, r2, r3 = -r[0], -r[1], -r[2]
    x = (r1 * (e * i - f * h) - b * (r2 * i - f * r3) + c * (r2 * h - e * r3)) / det
    y = (a * (r2 * i - f * r3) - r1 * (d * i - f * g) + c * (d * r3 - r2 * g)) / det
    z = (a * (e * r3 - r2 * h) - b * (d * r3 - r2 * g) + r1 * (d * h - e * g)) / det
    return x, y, z


def turbulent_step(sa: State, ds: float, a: float, k: float, re: float,
                   wake: bool = False, h_max: float | None = None,
                   tolerance: float = NEWTON_TOL) -> tuple[State, bool]:
    """Turbulent (or wake) state one interval ``ds`` downstream of ``sa``."""
    ta, ha, ca, ua = sa.theta, sa.h, sa.third, sa.ue
    terms_a = _turb_terms(ta, ha, ca, ua, re, wake)
    x = [math.log(ta), ha, ca]
    lo, hi = H_LIMITS_TURBULENT
    hi = hi if h_max is None else min(hi, h_max)
    ok = False
    for _ in range(MAX_NEWTON):
        r = _turb_residual(ta, ha, ca, ua, terms_a, *x, a, k, ds, re, wake)
        if abs(r[0]) + abs(r[1]) + abs(r[2]) < tolerance:
            ok = True
            break
        steps = (1e-7, 1e-7 * max(1.0, x[1]), 1e-7 * max(1e-3, abs(x[2])))
        cols = []
        for n, e in enumerate(steps):
            y = list(x)
            y[n] += e
            rp = _turb_residual(ta, ha, ca, ua, terms_a, *y, a, k, ds, re, wake)
            cols.append([(rp[i] - r[i]) / e for i in range(3)])
        jac = [[cols[0][i], cols[1][i], cols[2][i]] for i in range(3)]
        dx = _solve3(jac, r)
        if dx is None:
            break
        f = min(1.0, 0.5 / max(abs(dx[0]), 1e-30),
                0.3 * max(x[1] - 1.0, 0.2) / max(abs(dx[1]), 1e-30),
                0.5 * max(x[2], 1e-3) / max(abs(dx[2]), 1e-30))
        x[0] += f * dx[0]
        x[1] = min(max(x[1] + f * dx[1], lo), hi)
        x[2] = max(x[2] + f * dx[2], CE_MIN)
    theta = math.exp(x[0])
    return State(theta, x[1], x[2], _ue(a, k, x[1] * theta), True), ok


def turbulent_start(st: State, re: float) -> State:
    """Turbulent state at transition: theta, H and Ue carried over, C_E at its equilibrium value.

    The lag equation then relaxes C_E from the equilibrium of the laminar profile's shape factor
    (common practice for starting a lag-entrainment calculation).
    """
    h = min(max(st.h, H_LIMITS_TURBULENT[0]), H_LIMITS_TURBULENT[1])
    ce_eq = closures.turbulent(h, re * st.ue * st.theta)[3]
    return State(st.theta, h, min(max(ce_eq, 1e-4), 0.2), st.ue, True)


# --- whole march ----------------------------------------------------------------------------

@dataclass
class MarchResult:
    """Station values of one march (surface or wake), arrays over stations.

    ``transition_index`` is the first turbulent station (-1 if none) and ``transition_arc`` the
    arc length where N reached the critical factor or the trip was passed (NaN if none).
    ``failed`` counts stations whose Newton iteration did not converge.
    """

    s: np.ndarray
    theta: np.ndarray
    h: np.ndarray
    third: np.ndarray
    ue: np.ndarray
    turbulent: np.ndarray
    transition_index: int = -1
    transition_arc: float = float("nan")
    transition_forced: bool = False
    failed: int = 0
    skin_friction: np.ndarray = field(default=None)

    @property
    def delta_star(self) -> np.ndarray:
        return self.theta * self.h


class DirectEdge:
    """Given edge speeds, no interaction (the direct problem)."""

    def __init__(self, ue):
        self.ue = np.asarray(ue, float)

    def law(self, i):
        return float(self.ue[i]), 0.0

    def commit(self, i, m):
        pass


def march(s, edge, re: float, start: State, *, critical_amplification: float = 9.0,
          trip_arc: float | None = None, wake: bool = False,
          h_max: tuple | None = None, tolerance: float = NEWTON_TOL) -> MarchResult:
    """March from ``start`` (the state at station 0) over the stations at arc lengths ``s``.

    Parameters
    ----------
    s : ndarray
        Arc lengths of the stations, increasing.
    edge : object
        ``edge.law(i) -> (A, K)``: the interaction law of station i (Ue = A + K Ue delta*), and
        ``edge.commit(i, m)`` told each station's mass defect Ue delta* once solved.
    re : float
        Reynolds number on the unit speed and length.
    start : State
        State at station 0.
    critical_amplification : float
        N of free transition.
    trip_arc : float or None
        Arc length of forced transition.
    wake : bool
        Wake stations (turbulent, no wall friction).
    h_max : (float, float) or None
        Caps of the laminar and turbulent shape factors (a rough attached-flow march, used to
        start the coupled iteration); None: the methods' own limits.
    tolerance : float
        Of each step's Newton iteration (a march that only starts the coupled iteration needs
        less than the default).
    """
    s = np.asarray(s, float)
    n = len(s)
    cap_l, cap_t = (None, None) if h_max is None else h_max
    out = np.empty((5, n))
    turb = np.zeros(n, bool)
    st = start
    failed = 0
    t_index, t_arc, forced = -1, float("nan"), False
    if st.turbulent:
        t_index = 0
    edge.commit(0, st.ue * st.delta_star)
    out[:, 0] = st.theta, st.h, st.third, st.ue, 0.0
    turb[0] = st.turbulent
    for i in range(1, n):
        ds = s[i] - s[i - 1]
        a, k = edge.law(i)
        if st.turbulent:
            new, ok = turbulent_step(st, ds, a, k, re, wake, cap_t, tolerance)
        else:
            new, ok = laminar_step(st, ds, a, k, re, cap_l, tolerance)
            trip_here = trip_arc is not None and s[i - 1] < trip_arc <= s[i]
            if new.third >= critical_amplification or trip_here:
                # transition inside the interval: laminar up to the point, turbulent after it
                if new.third >= critical_amplification and (
                        not trip_here or s[i - 1] + (critical_amplification - st.third)
                        / max(new.third - st.third, 1e-30) * ds < trip_arc):
                    frac = (critical_amplification - st.third) / max(new.third - st.third, 1e-30)
                    forced = False
                else:
                    frac = (trip_arc - s[i - 1]) / ds
                    forced = True
                frac = min(max(frac, 0.0), 1.0)
                t_arc = s[i - 1] + frac * ds
                t_index = i
                if frac > 1e-6:
                    ue_t = st.ue + frac * (new.ue - st.ue)
                    mid, ok_l = laminar_step(st, frac * ds, ue_t, 0.0, re, cap_l, tolerance)
                else:
                    mid, ok_l = st, True
                tstart = turbulent_start(mid, re)
                if frac < 1.0 - 1e-6:
                    new, ok = turbulent_step(tstart, (1.0 - frac) * ds, a, k, re, wake, cap_t,
                                             tolerance)
                else:
                    new, ok = tstart, ok_l
                ok = ok and ok_l
        failed += not ok
        st = new
        edge.commit(i, st.ue * st.delta_star)
        out[:, i] = st.theta, st.h, st.third, st.ue, 0.0
        turb[i] = st.turbulent
    res = MarchResult(s, out[0], out[1], out[2], out[3], turb, t_index, t_arc, forced, failed)
    res.skin_friction = skin_friction(res, re, wake)
    return res


def skin_friction(res: MarchResult, re: float, wake: bool = False) -> np.ndarray:
    """Local skin friction coefficient on the edge speed, tau_w / (rho Ue^2 / 2)."""
    cf = np.zeros(len(res.s))
    if wake:
        return cf
    for i in range(len(cf)):
        re_theta = re * res.ue[i] * res.theta[i]
        if res.turbulent[i]:
            cf[i] = closures.turbulent(res.h[i], re_theta)[0]
        else:
            cf[i] = 2.0 * closures.laminar(res.h[i])[1] / max(re_theta, 1e-300)
    return cf


def similar_start(s0: float, ue0: float, m: float, re: float) -> State:
    """Laminar state at ``s0`` of the integral method's own similar solution for Ue ~ s^m."""
    h, lam = closures.laminar_similar_state(m)
    theta = math.sqrt(lam * s0 / (re * ue0))
    return State(theta, h, 0.0, ue0, False)


def march_edge_velocity(s, ue, reynolds: float, *, critical_amplification: float = 9.0,
                        trip_arc: float | None = None) -> MarchResult:
    """Boundary layer on a given edge-speed distribution (the direct problem).

    The march starts at the first station with the integral method's own similar solution for
    the local power law Ue ~ s^m (m from the first two stations; m = 1 is a stagnation point).

    Parameters
    ----------
    s, ue : array_like
        Arc lengths (> 0, increasing) and edge speeds (> 0), on the unit length and speed.
    reynolds : float
        Reynolds number on the unit speed and length (1/nu).
    critical_amplification : float
        N of free transition.
    trip_arc : float or None
        Arc length of forced transition; 0 or less trips at the first station.
    """
    s = np.asarray(s, float)
    ue = np.asarray(ue, float)
    m = math.log(ue[1] / ue[0]) / math.log(s[1] / s[0])
    start = similar_start(float(s[0]), float(ue[0]), m, float(reynolds))
    if trip_arc is not None and trip_arc <= s[0]:
        start = turbulent_start(start, reynolds)
    return march(s, DirectEdge(ue), float(reynolds), start,
                 critical_amplification=critical_amplification, trip_arc=trip_arc)
