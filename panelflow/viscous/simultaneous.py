"""Viscous-inviscid coupling: one Newton iteration on the boundary layer, wake and outer flow.

Unknowns at every station (both surfaces from the stagnation point, then the wake): ln(theta),
the shape factor H, the third variable (amplification factor N while laminar, entrainment
coefficient C_E when turbulent) and the edge speed Ue. Equations at every station:

* three boundary-layer equations of the interval from the previous station (the trapezoidal
  discretisation of :mod:`panelflow.viscous.march`, laminar, turbulent, wake, or the interval
  holding transition), or at the first stations the Hiemenz stagnation-point solution, or at the
  wake's first station the merging of the two trailing-edge layers;
* the outer flow: ``Ue_i = Ue_inviscid_i + sum_j D_ij m_j`` with m = Ue delta* and ``D`` the
  mass-defect influence of :mod:`panelflow.viscous.displacement`.

The transition interval (laminar station a, first turbulent station b) is split at the point T
where the amplification factor reaches its critical value: laminar equations from a to T,
turbulent ones from T to b, with T's state interpolated between a and b and its entrainment
coefficient at the equilibrium value of T's profile. When T reaches b the turbulent part
vanishes and b obeys the laminar equations; when T reaches a the laminar part vanishes. So the
equations are continuous as transition crosses a station, and moving the interval by one
station changes nothing at the crossing: the iteration cannot cycle between the two
neighbouring intervals. (An earlier form carried the laminar shape factor of a to b as T
reached b; the two neighbouring intervals then disagreed, and on the graded panellings the
iteration cycled between them without end -- measured on NACA 0012 at 200 panels, Re 3e6,
2 degrees.)

The Jacobian's boundary-layer rows are block-bidiagonal along each march (finite differences
of each interval's equations, all intervals of a kind evaluated in one batch). With each
station's mass defect as the free variable (the inverse form, regular through separation, where
eliminating with the edge speed free -- the direct form -- is singular) they are solved along
each surface and the wake as banded systems, one right-hand side per mass defect, which leaves
a dense system for the mass-defect corrections alone (one unknown per station).

Why a fully simultaneous Newton iteration rather than a local interaction law swept station by
station (the quasi-simultaneous method of A. E. P. Veldman, AIAA J. 19, 1981; J. Eng. Math. 65,
2009): the panelling shrinks the trailing-edge panels like 1/n^2 (second-order lift convergence
needs it), and the influence matrix's local coefficient is about 1.8/ds (measured on NACA 0012
at 200 panels: D_ii = 105 at ds = 0.018, 9 400 at ds = 0.0002). Near the trailing edge
D_ii delta* reaches 20-50, a local law no longer represents the interaction, and Gauss-Seidel
sweeps with it diverged in their first sweep. Newton's method with the whole matrix is
indifferent to that stiffness, and with the edge speed among the unknowns the equations stay
regular through laminar and turbulent separation, where a march on given speeds meets
Goldstein's singularity. The panel system itself is never rebuilt: ``D`` comes from one set of
extra right-hand sides solved with the kept LU factors.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg

from panelflow.viscous import closures
from panelflow.viscous import march as bl
from panelflow.viscous.transition import amplification_rate_array

START, INTERVAL, WAKE_START = 0, 1, 2
LAMINAR, TURBULENT, WAKE = 0, 1, 2
CE_MIN = 1e-6
# entrainment coefficient where a turbulent layer starts (transition, a laminar side's share of
# the wake): the equilibrium value, kept inside this range
CE_START = (1e-4, 0.2)
H_MIN, H_MAX = 1.002, 15.0
MIN_STEP = 0.25
# shape factors between which intervals go from the trapezoidal rule to backward Euler
UPWIND_LAMINAR = (3.0, 4.5)
UPWIND_TURBULENT = (2.0, 3.0)
# ... or, when the iteration stalls, below this
STALLED_SETTLED = 0.2
# transition intervals move only once the residual is below this: moved in an unsettled
# state they chased the iterate's noise, one station per iteration (measured)
TRANSITION_SETTLED = 2e-2
# ... and forward over laminar stations past the critical N only below this: right after a
# large change (a move, a warm start) the iterate's N overshoot where the converged ones do not
CALM = 0.3
# The laminar fraction of the transition interval is allowed a little beyond [0, 1] (the
# transition point then extrapolated a little past either station): clipping it at 0 and 1 put
# a kink into the equations where the converged transition point sits near a station, and
# Newton's method cycled across it (measured). The interval moves once the fraction leaves
# [-MOVE_MARGIN, 1 + MOVE_MARGIN].
FRACTION_RANGE = (-0.5, 1.5)
MOVE_MARGIN = 0.1
# Newton tolerance of the direct marches that start the iteration (an estimate; the march's
# default, 1e-10, cost a quarter of a converged point's time)
START_TOLERANCE = 1e-3
# a laminar fraction for an interval in which N does not reach the critical value
NO_CROSSING = 10.0


# --- station terms, vectorised over stations --------------------------------------------------

def _lam_terms(y, re):
    """H*, Cf/(2 theta), (2 CD/H* - Cf/2)/theta and dN/ds at stations y."""
    theta = np.exp(y[:, 0])
    h, ue = y[:, 1], y[:, 3]
    hs, f1, f2 = closures.laminar_array(h)
    k = 1.0 / (re * ue * theta * theta)
    rate = amplification_rate_array(h, re * ue * theta, theta)
    return hs, f1 * k, (2.0 * f2 / hs - f1) * k, rate


def _turb_terms(y, re, wake, ce=None):
    """H1, Cf/(2 theta), (C_E/H1 - Cf/2)/theta, the lag equation's source, F and (C_E)_EQ0."""
    theta = np.exp(y[:, 0])
    h, ue = y[:, 1], y[:, 3]
    ce = y[:, 2] if ce is None else ce
    cf, h1, cf0, ce_eq, grad_eq = closures.turbulent_array(h, re * ue * theta, wake)
    lam = np.where(wake, closures.WAKE_LAMBDA, 1.0)
    cec = np.maximum(ce, CE_MIN)
    tau = closures.shear_stress(cec, cf0)
    tau_eq = closures.shear_stress(np.maximum(ce_eq, CE_MIN), cf0)
    big_f = closures.lag_factor(cec, cf0)
    q3 = big_f / theta * (2.8 / (h + h1) * (np.sqrt(tau_eq) - lam * np.sqrt(tau)) + grad_eq)
    return h1, 0.5 * cf / theta, (ce / h1 - 0.5 * cf) / theta, q3, big_f, ce_eq


def _weight(ha, hb, start, full):
    """Weight of the downstream station in an interval's averages.

    0.5 (the trapezoidal rule, second order) where the layer is attached; rising to 1 (backward
    Euler, first order but damping) as the larger shape factor goes from ``start`` to ``full``.
    The trapezoidal rule does not damp the stiff odd-even mode of the shape-factor equation, which
    showed as a saw-tooth in H through laminar separation near a leading edge.
    """
    h = np.maximum(ha, hb)
    return 0.5 + 0.5 * np.clip((h - start) / (full - start), 0.0, 1.0)


# --- interval equations -----------------------------------------------------------------------

def _laminar(ya, yb, ds, re, terms_a=None, terms_b=None):
    """Momentum, kinetic-energy and amplification equations of a laminar interval."""
    hsa, q1a, q2a, ra = _lam_terms(ya, re) if terms_a is None else terms_a
    hsb, q1b, q2b, rb = _lam_terms(yb, re) if terms_b is None else terms_b
    w = _weight(ya[:, 1], yb[:, 1], *UPWIND_LAMINAR)
    v = 1.0 - w
    dl = np.log(yb[:, 3] / ya[:, 3])
    hm = v * ya[:, 1] + w * yb[:, 1]
    return np.stack([yb[:, 0] - ya[:, 0] - ds * (v * q1a + w * q1b) + (hm + 2.0) * dl,
                     np.log(hsb / hsa) - ds * (v * q2a + w * q2b) + (1.0 - hm) * dl,
                     yb[:, 2] - ya[:, 2] - 0.5 * ds * (ra + rb)], axis=1)


def _turbulent(ya, yb, ds, re, wake, terms_a=None, terms_b=None, ce_a=None):
    """Momentum, entrainment and lag equations of a turbulent or wake interval.

    The entrainment equation is written for ln(H1), so that it has the scale of the laminar
    kinetic-energy equation (the two are added in a transition interval).
    """
    h1a, q1a, q2a, q3a, fa, _ = _turb_terms(ya, re, wake, ce_a) if terms_a is None else terms_a
    h1b, q1b, q2b, q3b, fb, _ = _turb_terms(yb, re, wake) if terms_b is None else terms_b
    w = _weight(ya[:, 1], yb[:, 1], *UPWIND_TURBULENT)
    v = 1.0 - w
    dl = np.log(yb[:, 3] / ya[:, 3])
    hm = v * ya[:, 1] + w * yb[:, 1]
    cea = ya[:, 2] if ce_a is None else ce_a
    return np.stack([yb[:, 0] - ya[:, 0] - ds * (v * q1a + w * q1b) + (hm + 2.0) * dl,
                     np.log(h1b / h1a) - ds * (v * q2a + w * q2b) - (hm + 1.0) * dl,
                     yb[:, 2] - cea - ds * (v * q3a + w * q3b) + (v * fa + w * fb) * dl],
                    axis=1)


def _fraction(ya, yb, ds, re, n_crit, trip):
    """Laminar fraction f of a transition interval (in FRACTION_RANGE), and the free one.

    N grows along the interval with a rate interpolated linearly between the rate at a and a
    laminar rate at b: ``N_crit = N_a + ds (r_a f + (r_b - r_a) f^2 / 2)``, so that at f = 1 it
    is the trapezoidal amplification equation of a laminar interval ending at b, and the
    transition point found here and the one of the next interval nearly agree as it crosses b
    (the small difference is inside MOVE_MARGIN). The laminar rate at b takes b's momentum
    thickness and edge speed with a's shape factor: b's own shape factor is a turbulent one
    once the point lies inside the interval, and its rate (about zero) made the point run
    away aft of the interval while the iteration was unsettled (measured). The same root
    continues smoothly below 0 (N_a past the critical value) and above 1. A trip ends the
    laminar part at its own fraction if that comes first.
    """
    ra = _lam_terms(ya, re)[3]
    yb_lam = yb.copy()
    yb_lam[:, 1] = ya[:, 1]
    rb = _lam_terms(yb_lam, re)[3]
    g = (n_crit - ya[:, 2]) / ds
    disc = ra * ra + 2.0 * (rb - ra) * g
    den = ra + np.sqrt(np.maximum(disc, 0.0))
    root = (disc >= 0.0) & (den > 1e-300)
    free = np.where(root, 2.0 * g / np.where(root, den, 1.0),
                    np.where(g > 0.0, NO_CROSSING, -NO_CROSSING))
    forced = np.where(np.isnan(trip), np.inf, trip)
    return np.clip(np.minimum(free, forced), *FRACTION_RANGE), free


def _transition_state(ya, yb, f, ds, re):
    """Laminar state at the transition point T, a fraction f into the interval from a.

    The edge speed is interpolated geometrically, the momentum thickness follows the laminar
    momentum equation from a (one explicit step), and the shape factor stays a's: the laminar
    shape factor changes little over an interval, while interpolating it towards b's turbulent
    one put a partly turbulent profile into laminar equations (the iteration then wandered to
    shape factors near 1.1 after transition; measured on the demo front foil).
    """
    yt = ya.copy()
    yt[:, 3] = ya[:, 3] * (yb[:, 3] / ya[:, 3]) ** f
    q1a = _lam_terms(ya, re)[1]
    yt[:, 0] = ya[:, 0] + f * ds * q1a - (ya[:, 1] + 2.0) * np.log(yt[:, 3] / ya[:, 3])
    return yt


def _transition(ya, yb, ds, re, n_crit, trip):
    """Interval holding transition: turbulent equations from the transition point T to b.

    T's state is the laminar state reached from a (``_transition_state``), its entrainment
    coefficient the equilibrium value of its profile. As T reaches b the turbulent part
    vanishes and b takes T's laminar state; as T reaches a the interval is turbulent from a.
    The laminar interval that ends at b when transition lies one interval further holds nearly
    the same state at b, so moving the interval at a crossing changes little.
    """
    f, _ = _fraction(ya, yb, ds, re, n_crit, trip)
    yt = _transition_state(ya, yb, f, ds, re)
    wall = np.zeros(len(ya), bool)
    return _turbulent(yt, yb, (1.0 - f) * ds, re, wall, ce_a=equilibrium_entrainment(yt, re))


def equilibrium_entrainment(y, re):
    """(C_E)_EQ0 of each station's profile, kept in CE_START: where a turbulent layer starts."""
    wall = np.zeros(len(y), bool)
    return np.clip(_turb_terms(y, re, wall, ce=np.full(len(y), 0.01))[5], *CE_START)


def _wake_target(yu, yl, turbulent_u, turbulent_l, base, re):
    """ln(theta), H and C_E of the half-wake at the trailing edge from the two surfaces' layers.

    theta and delta* of the whole wake are the sums of the two sides' (plus, for a blunt edge,
    the base height in delta*: the dead-water region displaces the flow like the base source of
    the inviscid model); C_E is the theta-weighted mean, a laminar side taken at its turbulent
    equilibrium (the wake is turbulent).
    """
    tu, tl = np.exp(yu[:, 0]), np.exp(yl[:, 0])
    ce = [y[:, 2] if turb else equilibrium_entrainment(y, re)
          for y, turb in ((yu, turbulent_u), (yl, turbulent_l))]
    th = tu + tl
    return np.stack([np.log(0.5 * th), (tu * yu[:, 1] + tl * yl[:, 1] + base) / th,
                     (ce[0] * tu + ce[1] * tl) / th], axis=1)


def _steps(y):
    """Finite-difference steps of the four unknowns at each station."""
    return np.stack([np.full(len(y), 1e-7), 1e-7 * np.maximum(1.0, np.abs(y[:, 1])),
                     1e-7 * np.maximum(1e-3, np.abs(y[:, 2])),
                     1e-7 * np.maximum(1e-3, np.abs(y[:, 3]))], axis=1)


def _with_derivatives(func, ya, yb, *per_interval):
    """Residuals (n, 3) of ``func(ya, yb, *per_interval)`` and their derivatives (n, 3, 4) on ya
    and on yb, by forward differences evaluated in one batch of 9 n intervals."""
    n = len(ya)
    ha, hb = _steps(ya), _steps(yb)
    a = np.repeat(ya[None], 9, axis=0)
    b = np.repeat(yb[None], 9, axis=0)
    for v in range(4):
        a[1 + v, :, v] += ha[:, v]
        b[5 + v, :, v] += hb[:, v]
    extra = [np.tile(np.asarray(x), 9) for x in per_interval]
    out = func(a.reshape(9 * n, 4), b.reshape(9 * n, 4), *extra).reshape(9, n, 3)
    r = out[0]
    da = ((out[1:5] - r) / ha.T[:, :, None]).transpose(1, 2, 0)
    db = ((out[5:9] - r) / hb.T[:, :, None]).transpose(1, 2, 0)
    return r, da, db


# --- the layout of stations -------------------------------------------------------------------

@dataclass
class Layout:
    """Stations of one iteration: upper surface and lower surface from the stagnation point, then
    the wake. Arrays over stations; ``prev`` is the station an interval starts from."""

    node: np.ndarray
    side: np.ndarray  # 0 upper, 1 lower, 2 wake
    kind: np.ndarray  # START, INTERVAL, WAKE_START
    prev: np.ndarray
    regime: np.ndarray  # LAMINAR, TURBULENT, WAKE
    trip: np.ndarray  # trip's fraction of the interval ending here (NaN: none)
    s: np.ndarray = field(default=None)

    @property
    def n(self) -> int:
        return len(self.node)

    def side_stations(self, side: int) -> np.ndarray:
        return np.flatnonzero(self.side == side)

    def copy(self) -> "Layout":
        return Layout(self.node.copy(), self.side.copy(), self.kind.copy(), self.prev.copy(),
                      self.regime.copy(), self.trip.copy(),
                      None if self.s is None else self.s.copy())


def first_marched(s: np.ndarray) -> int:
    """Last station of a surface in the stagnation-point flow (at least the second): the
    nodes before it lie so close to the stagnation point (the next node more than twice as
    far) that they take the stagnation-point solution."""
    for i in range(1, min(len(s) - 1, 6)):
        if s[i + 1] <= 2.0 * s[i]:
            return i
    return min(len(s) - 2, 6)


def station_nodes(arc: np.ndarray, xc: np.ndarray, min_spacing: float) -> np.ndarray:
    """Body nodes that carry boundary-layer stations.

    Every node, except that over the aft half of each surface, walking upstream from the
    trailing edge, a node closer than ``min_spacing`` (arc length) to the last station kept is
    skipped. The panelling shrinks the trailing-edge panels like 1/n^2 for the inviscid
    solution's sake; a boundary-layer station every few thousandths of a layer thickness there
    only made the coupled equations stiff (the outer flow's local coefficient grows like 1/ds),
    and the iteration's convergence then depended on the panel count (measured).
    """
    m = len(arc)
    keep = np.ones(m, bool)
    if min_spacing > 0.0:
        for order in (range(m), range(m - 1, -1, -1)):
            last = None
            for j in order:
                if xc[j] < 0.5:
                    break
                if last is not None and abs(arc[j] - arc[last]) < min_spacing:
                    keep[j] = False
                else:
                    last = j
    return np.flatnonzero(keep)


def _banded(rows, cols, vals, size):
    """Banded storage (scipy.linalg.solve_banded) of a matrix given by its entries."""
    lower = max(int(np.max(rows - cols)), 0)
    upper = max(int(np.max(cols - rows)), 0)
    ab = np.zeros((lower + upper + 1, size))
    np.add.at(ab, (upper + rows - cols, cols), vals)
    return (lower, upper), ab


# --- the iteration ----------------------------------------------------------------------------

@dataclass
class Solution:
    """Converged (or last) state of the coupled iteration."""

    layout: Layout
    y: np.ndarray  # (n, 4): ln theta, H, N or C_E, Ue
    transition_arc: tuple  # per surface: arc length of transition (NaN: laminar to the edge)
    transition_forced: tuple
    stagnation_arc: float
    gamma: np.ndarray
    wake_speed: np.ndarray
    mass_defect: np.ndarray  # signed like gamma on the body, positive in the wake
    converged: bool
    residual: float
    iterations: int
    history: list

    @property
    def theta(self):
        return np.exp(self.y[:, 0])


class Coupled:
    """Newton iteration of one body's boundary layer, wake and panel solution at one angle."""

    def __init__(self, influence, gamma_inv, arc, xc, re, transition, base=0.0,
                 min_spacing=0.0):
        m_all = len(gamma_inv)
        self.nw = nw = len(influence.wake)
        self.wake_nodes = influence.wake
        self.kept = kept = station_nodes(arc, xc, min_spacing)
        self.m_all = m_all
        self.m_nodes = len(kept)
        # nodal mass defects between stations are interpolated linearly in arc length, so the
        # influence of a station's mass defect is its own column plus its share of the
        # skipped nodes' columns
        ext = np.concatenate([kept, m_all + np.arange(nw)])
        d_full = influence.matrix[:, ext].copy()
        self._skipped = []
        for j in np.setdiff1d(np.arange(m_all), kept):
            q = int(np.searchsorted(kept, j))
            p_, q_ = q - 1, q  # kept neighbours (positions in ``kept``)
            w = (arc[kept[q_]] - arc[j]) / (arc[kept[q_]] - arc[kept[p_]])
            d_full[:, p_] += w * influence.matrix[:, j]
            d_full[:, q_] += (1.0 - w) * influence.matrix[:, j]
            self._skipped.append((int(j), p_, q_, float(w)))
        self.d_full = d_full
        self.d = d_full[ext]
        self.u_inv_full = np.concatenate([gamma_inv, influence.wake_inviscid])
        self.u_inv = self.u_inv_full[ext]
        self.arc = arc[kept]
        self.xc = xc[kept]
        self.re = re
        self.transition = transition
        self.base = base
        self.wake_s = np.concatenate([[0.0], np.cumsum(np.abs(np.diff(influence.wake)))])
        self.trace = []  # per iteration: residual and where it is largest (for diagnosis)

    def full_mass_defect(self, mt: np.ndarray) -> np.ndarray:
        """Signed mass defects at every body node and wake node from the stations' values."""
        out = np.empty(self.m_all + self.nw)
        out[self.kept] = mt[:self.m_nodes]
        out[self.m_all:] = mt[self.m_nodes:]
        for j, p_, q_, w in self._skipped:
            out[j] = w * mt[p_] + (1.0 - w) * mt[q_]
        return out

    # layout ----------------------------------------------------------------------------------
    def layout(self, k: int) -> Layout:
        """Stations for a stagnation point on panel k (nodes k upper, k+1 lower)."""
        up = np.arange(k, -1, -1)
        lo = np.arange(k + 1, self.m_nodes)
        wk = self.m_nodes + np.arange(self.nw)
        node = np.concatenate([up, lo, wk])
        side = np.concatenate([np.zeros(len(up), int), np.ones(len(lo), int),
                               np.full(self.nw, 2)])
        n = len(node)
        kind = np.full(n, INTERVAL)
        prev = np.arange(-1, n - 1)
        kind[len(up) + len(lo)] = WAKE_START
        regime = np.where(side == 2, WAKE, LAMINAR)
        return Layout(node, side, kind, prev, regime, np.full(n, np.nan))

    def arc_lengths(self, lay: Layout, s0: float) -> np.ndarray:
        s = np.empty(lay.n)
        body = lay.side < 2
        s[body] = np.maximum(np.abs(self.arc[lay.node[body]] - s0), 1e-9)
        s[~body] = self.wake_s[lay.node[~body] - self.m_nodes]
        return s

    def set_starts(self, lay: Layout):
        """Stations in the stagnation-point flow and the trips' intervals."""
        lay.kind[lay.side < 2] = INTERVAL
        lay.trip[:] = np.nan
        for side, trip_xc in ((0, self.transition.upper_trip), (1, self.transition.lower_trip)):
            st = lay.side_stations(side)
            f = first_marched(lay.s[st])
            lay.kind[st[:f + 1]] = START
            if trip_xc is None:
                continue
            xs = self.xc[lay.node[st]]
            for i in range(len(st) - 1, 0, -1):  # the aft-most crossing of the trip's x/c
                if xs[i - 1] < trip_xc <= xs[i]:
                    lay.trip[st[i]] = (trip_xc - xs[i - 1]) / (xs[i] - xs[i - 1])
                    break
            else:
                if trip_xc <= xs[f + 1]:
                    lay.trip[st[f + 1]] = 0.0

    # residuals and Jacobian ------------------------------------------------------------------
    def _groups(self, lay: Layout):
        """Intervals by kind of equations: (mask, function of (ya, yb, ds[, trip]))."""
        re = self.re
        n_crit = self.transition.critical_amplification
        inner = lay.kind == INTERVAL
        pr = np.where(lay.prev >= 0, lay.regime[np.maximum(lay.prev, 0)], -1)
        return [
            (inner & (lay.regime == LAMINAR), False,
             lambda a, b, ds: _laminar(a, b, ds, re)),
            (inner & (lay.regime == TURBULENT) & (pr == TURBULENT), False,
             lambda a, b, ds: _turbulent(a, b, ds, re, np.zeros(len(a), bool))),
            (inner & (lay.regime == WAKE), False,
             lambda a, b, ds: _turbulent(a, b, ds, re, np.ones(len(a), bool))),
            (inner & (lay.regime == TURBULENT) & (pr == LAMINAR), True,
             lambda a, b, ds, trip: _transition(a, b, ds, re, n_crit, trip)),
        ]

    def equations(self, lay: Layout, y: np.ndarray, dh: np.ndarray, u_s: np.ndarray,
                  jacobian: bool = True):
        """Residuals (n, 4) and, with ``jacobian``, their derivatives.

        Returns
        -------
        r, da, db, links, m
            ``da``/``db`` (n, 3, 4): the boundary-layer rows' derivatives on the interval's
            previous station and on the station itself; ``links`` the other couplings (the
            wake's first station on the two trailing-edge stations, the stagnation stations on
            the speed of the last of them); ``m`` the mass defects.
        """
        n = lay.n
        re = self.re
        r = np.zeros((n, 4))
        da = np.zeros((n, 3, 4))
        db = np.zeros((n, 3, 4))
        ds = np.zeros(n)
        inner = lay.kind == INTERVAL
        ds[inner] = lay.s[inner] - lay.s[lay.prev[inner]]
        for mask, tripped, func in self._groups(lay):
            idx = np.flatnonzero(mask)
            if len(idx) == 0:
                continue
            args = (ds[idx], lay.trip[idx]) if tripped else (ds[idx],)
            if not jacobian:
                r[idx, :3] = func(y[lay.prev[idx]], y[idx], *args)
                continue
            r[idx, :3], da[idx], db[idx] = _with_derivatives(func, y[lay.prev[idx]], y[idx],
                                                             *args)
        # stagnation-point flow (Hiemenz): theta and H are constant there, theta^2 = lam nu/a,
        # with the speed gradient a between the first and the last such station of each
        # surface: a difference along the surface, so it does not depend on where between two
        # nodes the stagnation point lies (that position is not an unknown of the iteration;
        # a = Ue/s made the convergence linear wherever the point moved)
        h_st, lam = closures.laminar_similar_state(1.0)
        start_links = []
        for side in (0, 1):
            st = lay.side_stations(side)
            st = st[lay.kind[st] == START]
            first, f = st[0], st[-1]
            du = max(y[f, 3] - y[first, 3], 1e-12)
            grad = du / (lay.s[f] - lay.s[first])
            r[st, 0] = y[st, 0] - 0.5 * np.log(lam / (grad * re))
            r[st, 1] = y[st, 1] - h_st
            r[st, 2] = y[st, 2]
            db[st, 0, 0] = 1.0
            db[st, 1, 1] = 1.0
            db[st, 2, 2] = 1.0
            db[f, 0, 3] = 0.5 / du
            db[first, 0, 3] = -0.5 / du
            start_links.extend((int(i), int(f), 0.5 / du) for i in st[:-1])
            start_links.extend((int(i), int(first), -0.5 / du) for i in st[1:])
        w0 = int(np.flatnonzero(lay.kind == WAKE_START)[0])
        ends = [int(lay.side_stations(0)[-1]), int(lay.side_stations(1)[-1])]
        turb = [lay.regime[e] == TURBULENT for e in ends]
        trio = np.stack([y[ends[0]], y[ends[1]], y[w0]])

        def wake_start(t):  # t: (k, 3, 4) batches of (upper end, lower end, wake start)
            return t[:, 2, :3] - _wake_target(t[:, 0], t[:, 1], turb[0], turb[1], self.base, re)

        wake_links = {}
        if jacobian:
            steps = _steps(trio)
            batch = np.repeat(trio[None], 13, axis=0)
            for which in range(3):
                for v in range(4):
                    batch[1 + 4 * which + v, which, v] += steps[which, v]
            out = wake_start(batch)
            r[w0, :3] = out[0]
            for which in range(3):
                dd = ((out[1 + 4 * which:5 + 4 * which] - out[0]) / steps[which][:, None]).T
                if which == 2:
                    db[w0] = dd
                else:
                    wake_links[ends[which]] = dd
        else:
            r[w0, :3] = wake_start(trio[None])[0]
        # the outer flow
        theta = np.exp(y[:, 0])
        m = theta * y[:, 1] * y[:, 3]
        r[:, 3] = y[:, 3] - u_s - dh @ m
        return r, da, db, (w0, wake_links, start_links), m

    def newton_step(self, lay, y, r, da, db, links, m, dh):
        """Correction of all unknowns.

        Each station's three boundary-layer equations and the definition of its mass defect
        m = theta H Ue are solved for its four unknowns as affine functions of the mass defects
        (the inverse problem): along each surface a banded system with one right-hand side per
        mass defect of that surface, then the wake's with the trailing-edge stations' results
        carried into its first station. The outer-flow rows then leave a dense system for the
        mass-defect corrections alone (one unknown per station).
        """
        n = lay.n
        w0, wake_links, start_links = links
        theta = np.exp(y[:, 0])
        h = y[:, 1]
        block = np.zeros((n, 4, 4))
        block[:, :3, :] = db
        block[:, 3, 0] = m
        block[:, 3, 1] = m / h
        block[:, 3, 3] = theta * h
        sides = [lay.side_stations(s) for s in (0, 1, 2)]
        q = np.zeros((n, n))  # dUe/dm
        p = np.zeros(n)  # dUe at dm = 0
        solved = []
        local = np.empty(n, int)
        for side, st in enumerate(sides):
            local[st] = np.arange(len(st))
        four = np.arange(4)
        for side, st in enumerate(sides):
            size = 4 * len(st)
            li = np.arange(len(st))
            rows = [np.repeat(4 * li[:, None] + four, 4, axis=1).ravel()]
            cols = [np.tile(4 * li[:, None] + four, 4).ravel()]
            vals = [block[st].reshape(len(st), 16).ravel()]
            inner = np.flatnonzero(lay.kind[st] == INTERVAL)
            if len(inner):
                r3 = np.arange(3)
                rows.append((4 * inner[:, None, None] + r3[None, :, None]
                             + 0 * four[None, None, :]).ravel())
                cols.append((4 * (inner[:, None, None] - 1) + 0 * r3[None, :, None]
                             + four[None, None, :]).ravel())
                vals.append(da[st[inner]].ravel())
            for i, j, value in start_links:
                if lay.side[i] == side:
                    rows.append(np.array([4 * local[i]]))
                    cols.append(np.array([4 * local[j] + 3]))
                    vals.append(np.array([value]))
            band, ab = _banded(np.concatenate(rows), np.concatenate(cols),
                               np.concatenate(vals), size)
            # right-hand sides: the residuals, one per own mass defect, and for the wake three
            # unit vectors at its first station's rows (the trailing-edge stations' part
            # follows from them: a few columns instead of one per body station)
            ncols = 1 + len(st) + (3 if side == 2 else 0)
            rhs = np.zeros((size, ncols))
            rhs[:, 0] = np.concatenate([-r[st, :3], np.zeros((len(st), 1))], axis=1).ravel()
            rhs[4 * li + 3, 1 + li] = 1.0
            if side == 2:
                rows = 4 * local[w0] + np.arange(3)
                rhs[rows, 1 + len(st) + np.arange(3)] = 1.0
            try:
                x = scipy.linalg.solve_banded(band, ab, rhs, check_finite=False)
            except (np.linalg.LinAlgError, ValueError):
                return None
            if side == 2:
                unit = x[:, 1 + len(st):]
                full = np.zeros((size, 1 + n))
                full[:, 0] = x[:, 0]
                full[:, 1 + st] = x[:, 1:1 + len(st)]
                for e, dd in wake_links.items():
                    s_e = sides[lay.side[e]]
                    x_e = solved[lay.side[e]][4 * local[e]:4 * local[e] + 4]
                    full[:, 0] -= unit @ (dd @ x_e[:, 0])
                    full[:, 1 + s_e] -= unit @ (dd @ x_e[:, 1:])
                x = full
            solved.append(x)
            p[st] = x[3::4, 0]
            if side < 2:
                q[np.ix_(st, st)] = x[3::4, 1:]
            else:
                q[st] = x[3::4, 1:]
        # outer flow: Ue + dUe - u_s - D (m + dm) = 0, with dUe = p + Q dm
        try:
            dm = scipy.linalg.solve(q - dh, -r[:, 3] - p, check_finite=False)
        except (np.linalg.LinAlgError, ValueError):
            return None
        dy = np.empty((n, 4))
        for side, st in enumerate(sides):
            x = solved[side]
            cols = dm[st] if side < 2 else dm
            dy[st] = (x[:, 0] + x[:, 1:] @ cols).reshape(len(st), 4)
        return dy

    # start -----------------------------------------------------------------------------------
    def initial(self, k: int, s0: float):
        """Layout and unknowns from direct marches on the inviscid speeds (an attached-flow
        estimate: aft of x/c = 0.9 the speed is held, since the inviscid speed falls to zero at
        a sharp trailing edge and the viscous one does not; shape factors capped)."""
        lay = self.layout(k)
        lay.s = self.arc_lengths(lay, s0)
        self.set_starts(lay)
        y = np.zeros((lay.n, 4))
        ends = []
        for side, sgn in ((0, -1.0), (1, 1.0)):
            st = lay.side_stations(side)
            s = lay.s[st]
            ue = np.maximum(sgn * self.u_inv[lay.node[st]], 1e-4)
            aft = np.flatnonzero(self.xc[lay.node[st]] >= 0.9)
            if len(aft):
                ue[aft[0]:] = np.maximum(ue[aft[0]:], ue[aft[0]])
            f = int(np.flatnonzero(lay.kind[st] == START)[-1])
            for j in range(f):
                # the stagnation-point flow of station f's speed gradient (see equations)
                stt = bl.similar_start(float(s[f]), float(ue[f]), 1.0, self.re)
                y[st[j]] = np.log(stt.theta), stt.h, 0.0, ue[f] * s[j] / s[f]
            trip = None
            tr = np.flatnonzero(~np.isnan(lay.trip[st]))
            if len(tr):
                i = tr[0]
                trip = s[i - 1] + lay.trip[st[i]] * (s[i] - s[i - 1])
            res = bl.march(s[f:], bl.DirectEdge(ue[f:]), self.re,
                           bl.similar_start(float(s[f]), float(ue[f]), 1.0, self.re),
                           critical_amplification=self.transition.critical_amplification,
                           trip_arc=trip, h_max=(3.5, 1.8), tolerance=START_TOLERANCE)
            y[st[f:]] = np.stack([np.log(res.theta), res.h, res.third, res.ue], axis=1)
            lay.regime[st[f:]] = np.where(res.turbulent, TURBULENT, LAMINAR)
            if (lay.regime[st[-1]] == TURBULENT and lay.regime[st[-2]] == LAMINAR
                    and np.isnan(lay.trip[st[-1]])):
                self._laminar_to_edge(lay, y, st)
            ends.append(res)
        wk = lay.side_stations(2)
        u, lo_ = ends
        lt, h, ce = _wake_target(
            np.array([[np.log(u.theta[-1]), u.h[-1], u.third[-1], u.ue[-1]]]),
            np.array([[np.log(lo_.theta[-1]), lo_.h[-1], lo_.third[-1], lo_.ue[-1]]]),
            bool(u.turbulent[-1]), bool(lo_.turbulent[-1]), self.base, self.re)[0]
        ue0 = 0.5 * (u.ue[-1] + lo_.ue[-1])
        res = bl.march(lay.s[wk], bl.DirectEdge(np.maximum(self.u_inv[lay.node[wk]], ue0)),
                       self.re, bl.State(np.exp(lt), h, ce, ue0, True), wake=True,
                       h_max=(3.5, 1.8), tolerance=START_TOLERANCE)
        y[wk] = np.stack([np.log(res.theta), res.h, res.third, res.ue], axis=1)
        return lay, y

    # regimes and the stagnation point -----------------------------------------------------------
    def _first_turbulent(self, lay: Layout, st: np.ndarray) -> int:
        turb = np.flatnonzero(lay.regime[st] == TURBULENT)
        return int(turb[0]) if len(turb) else len(st)

    def update_regimes(self, lay: Layout, y: np.ndarray, pinned=(), settled=True,
                       calm=True) -> list:
        """Move each surface's transition interval where the amplification factors say.

        Forward to the first laminar station whose N reached the critical value (or to a trip
        passed), any number of stations at once, or by one station when the transition point
        lies more than MOVE_MARGIN of the interval before its start; aft, when it lies that far
        beyond its end, as far as a laminar march on the iterate's speeds says
        (``_laminar_aft``).
        Returns the surfaces whose interval moved; surfaces in ``pinned`` make only the sure
        forward moves (a pinned laminar layer otherwise ran on past N = 100). Until the
        iteration has ``settled`` only the first kind of move is made (a station past the
        critical value is a sure sign), except the one-station forward move when the point
        lies at the lower end of FRACTION_RANGE: there the interval's equations extrapolate
        and no longer hold it, and the iteration never settled (measured: the bubble behind a
        leading edge, NACA 0012 at Re 3e6 from 10 degrees up; converged with the move). The
        others, made on an unsettled iterate, chased its
        noise one station per iteration (measured).
        """
        n_crit = self.transition.critical_amplification
        moved = []
        for side in (0, 1):
            st = lay.side_stations(side)
            b = self._first_turbulent(lay, st)
            tripped = np.flatnonzero(~np.isnan(lay.trip[st]))
            t = int(tripped[0]) if len(tripped) else len(st)
            free = np.nan
            if b < len(st):
                a = b - 1
                ds = np.array([lay.s[st[b]] - lay.s[st[a]]])
                free = _fraction(y[st[a]][None], y[st[b]][None], ds, self.re, n_crit,
                                 lay.trip[st[b]][None])[1][0]
            # laminar stations before the interval's start that passed the critical value
            over = np.flatnonzero((y[st[:b - 1], 2] >= n_crit)
                                  & (lay.kind[st[:b - 1]] == INTERVAL))
            target = b
            if len(over) and calm:
                target = int(over[0])
            elif b == len(st):
                last = np.flatnonzero((y[st, 2] >= n_crit) & (lay.kind[st] == INTERVAL))
                target = int(last[0]) if len(last) else b
            elif ((settled and free < -MOVE_MARGIN or free <= FRACTION_RANGE[0])
                  and lay.kind[st[b - 1]] == INTERVAL):
                target = b - 1
            target = min(target, t)
            if side in pinned and target >= b:
                continue
            last = len(st) - 1
            if target == last and t != last:
                target = b  # not into the last interval (see _laminar_to_edge)
            if b == last and t != last:
                self._laminar_to_edge(lay, y, st)
                moved.append(side)
                continue
            if target < b:
                new = st[target:b]
                y[new, 2] = equilibrium_entrainment(y[new], self.re)
                lay.regime[new] = TURBULENT
                moved.append(side)
                continue
            if settled and b < len(st) and b != t and free > 1.0 + MOVE_MARGIN:
                if self._laminar_aft(lay, y, st, b, t) == b:
                    # the march crosses within b's interval after all: b turns laminar with
                    # a's shape factor (its own was a turbulent one) and the N its interval
                    # then gives, as in _fraction
                    a = b - 1
                    ds = lay.s[st[b]] - lay.s[st[a]]
                    y[st[b], 1] = y[st[a], 1]
                    rates = _lam_terms(y[[st[a], st[b]]], self.re)[3]
                    y[st[b], 2] = y[st[a], 2] + 0.5 * ds * (rates[0] + rates[1])
                    lay.regime[st[b]] = LAMINAR
                moved.append(side)
        return moved

    def _laminar_aft(self, lay: Layout, y: np.ndarray, st: np.ndarray, b: int, t: int) -> int:
        """Move a surface's transition aft over as many stations as a laminar march says.

        From the last laminar station (b - 1) the laminar equations are marched on the
        iterate's edge speeds (the direct problem, shape factor within the method's limits)
        until N reaches the critical value, a trip (t) or the surface's last interval; the
        stations passed turn laminar with the marched states. Moved one station per iteration,
        a transition point far aft of its interval (a warm start from a neighbouring angle, a
        laminar layer running to the trailing edge at low Reynolds numbers) took one Newton
        iteration and a residual jump per station (measured: 8 moves and no convergence on
        NACA 0012 at Re 1e5, 2 degrees, lower surface). Returns the new first turbulent
        station (b when the march crosses already in b's interval: nothing changed).
        """
        n_crit = self.transition.critical_amplification
        a = st[b - 1]
        state = bl.State(float(np.exp(y[a, 0])), float(y[a, 1]), float(y[a, 2]),
                         float(y[a, 3]), False)
        last = len(st) - 1
        j = b
        while j < min(t, last):
            ds = float(lay.s[st[j]] - lay.s[st[j - 1]])
            new, _ = bl.laminar_step(state, ds, float(y[st[j], 3]), 0.0, self.re)
            if not (np.isfinite(new.theta) and np.isfinite(new.third)) or new.third >= n_crit:
                break
            y[st[j], :3] = np.log(new.theta), new.h, new.third
            lay.regime[st[j]] = LAMINAR
            state = new
            j += 1
        if j == last and t != last:
            self._laminar_to_edge(lay, y, st)
        return j

    def _laminar_to_edge(self, lay: Layout, y: np.ndarray, st: np.ndarray):
        """Turn the trailing-edge station of a surface laminar: transition is not placed in a
        surface's last interval, it moves into the wake.

        A turbulent layer starting within the last interval, often from a laminar layer
        separated near the edge, carried its laminar shape factor (5 to 8) into the turbulent
        closures over a sliver of the surface, right where the outer flow's coupling is
        strongest; the iteration hopped between states there without converging (measured on
        NACA 0012 at Re 1e6, 4 degrees, lower surface). The wake starts turbulent in either case.
        """
        a, b = st[-2], st[-1]
        ds = lay.s[b] - lay.s[a]
        y[b, 1] = y[a, 1]
        rates = _lam_terms(y[[a, b]], self.re)[3]
        y[b, 2] = y[a, 2] + 0.5 * ds * (rates[0] + rates[1])
        lay.regime[b] = LAMINAR

    def run(self, y=None, lay=None, max_iterations: int = 80, tolerance: float = 1e-7,
            bold: bool = False):
        """Iterate to convergence from the given (or a direct-march) start.

        ``bold`` also tries the whole clipped Newton step first when the damping factor is small
        (``solve`` retries with it when the first run fails).

        BLAS runs on one thread here: the dense systems are small (a few hundred unknowns), and
        a second thread made each solve ten times slower on the development machine.
        """
        from threadpoolctl import threadpool_limits

        with threadpool_limits(limits=1), np.errstate(all="ignore"):
            return self._run(y, lay, max_iterations, tolerance, bold)

    def _speeds(self, lay: Layout, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Signed nodal mass defects and the outer flow's speeds they give."""
        sign = np.where(lay.side == 0, -1.0, 1.0)
        mt = np.empty(self.m_nodes + self.nw)
        mt[lay.node] = sign * np.exp(y[:, 0]) * y[:, 1] * y[:, 3]
        return mt, self.u_inv + self.d @ mt

    def _run(self, y, lay, max_iterations, tolerance, bold):
        if lay is None:
            k, s0 = _stagnation(self.u_inv[:self.m_nodes], self.arc)
            lay, y = self.initial(k, s0)
        else:
            # a neighbouring angle's solution: its stagnation point moved with the angle
            y = y.copy()
            lay = lay.copy()
            _, speeds = self._speeds(lay, y)
            k, s0 = _stagnation(speeds[:self.m_nodes], self.arc)
            if k != lay.node[lay.side_stations(0)[0]]:
                lay, y = self.relayout(lay, y, k, speeds, s0)
        history = []
        converged = False
        residual = np.inf
        fresh = True
        moves = {0: [], 1: []}
        pinned = set()
        it = 0
        for it in range(1, max_iterations + 1):
            up, lo = lay.side_stations(0), lay.side_stations(1)
            ku, kl = lay.node[up[0]], lay.node[lo[0]]
            uu, ul = max(y[up[0], 3], 0.0), max(y[lo[0], 3], 0.0)
            t = uu / (uu + ul) if uu + ul > 0 else 0.5
            s0 = float(self.arc[ku] + t * (self.arc[kl] - self.arc[ku]))
            lay.s = self.arc_lengths(lay, s0)
            if fresh:
                self.set_starts(lay)  # fixed for a layout: switching equations stalls Newton
                fresh = False
            marched = lay.kind != START
            y[marched, 3] = np.maximum(y[marched, 3], 1e-6)
            sign = np.where(lay.side == 0, -1.0, 1.0)
            dh = sign[:, None] * self.d[np.ix_(lay.node, lay.node)] * sign[None, :]
            u_s = sign * self.u_inv[lay.node]
            r, da, db, links, m = self.equations(lay, y, dh, u_s)
            residual = float(np.max(np.abs(r)))
            history.append(residual)
            worst = np.unravel_index(int(np.argmax(np.abs(r))), r.shape)
            self.trace.append((it, residual, int(worst[0]), int(worst[1]),
                               int(lay.node[worst[0]]), int(lay.regime[worst[0]])))
            if not np.isfinite(residual):
                break
            if residual < tolerance:
                converged = True
                break
            dy = self.newton_step(lay, y, r, da, db, links, m, dh)
            if dy is None or not np.all(np.isfinite(dy)):
                break
            y = self._damped(lay, y, dy, r, dh, u_s, bold)
            stalled = len(history) > 3 and residual > 0.7 * history[-4]
            if it < max_iterations - 2:
                settled = residual < TRANSITION_SETTLED or stalled and residual < STALLED_SETTLED
                calm = residual < CALM
                for side in self.update_regimes(lay, y, pinned, settled, calm):
                    b = self._first_turbulent(lay, lay.side_stations(side))
                    seen = moves[side]
                    # back to where it was two moves ago: the interval is cycling between two
                    # neighbours; keep it (its laminar fraction settles inside the interval)
                    if len(seen) >= 2 and seen[-2] == b:
                        pinned.add(side)
                    seen.append(b)
                    self.trace.append(("transition moved", it, side, b))
            # the stagnation point moves with the outer flow's speeds
            _, speeds = self._speeds(lay, y)
            k_new, s0_new = _stagnation(speeds[:self.m_nodes], self.arc)
            # one node per iteration at most: far moves come from an unconverged state
            k_new = min(max(k_new, ku - 1, 3), ku + 1, self.m_nodes - 5)
            # ... only when the point left the current panel by a quarter of the next panel (a
            # stagnation point on a node -- a symmetric section at zero angle -- flipped the
            # layout back and forth otherwise)
            margin = 0.25 * np.diff(self.arc)[min(max(ku + (1 if k_new > ku else -1), 0),
                                                  len(self.arc) - 2)]
            left = s0_new < self.arc[ku] - margin or s0_new > self.arc[ku + 1] + margin
            if k_new != ku and left:
                lay, y = self.relayout(lay, y, k_new, speeds, s0_new)
                fresh = True
        return self.solution(lay, y, converged, residual, it, history)

    def _damped(self, lay, y, dy, r, dh, u_s, bold):
        """The Newton step, limited to bounded changes of each variable.

        A global factor keeps Newton's direction; where it would stall the iteration (a few
        stations far off, in a separated region or at a moving transition point) a larger step
        with each change clipped to its own bound is tried first, and kept if it lowers the
        residual.
        """
        bound = np.stack([np.full(lay.n, 0.5), 0.3 * np.maximum(y[:, 1] - 1.0, 0.2),
                          np.where(lay.regime == LAMINAR, np.inf,
                                   0.5 * np.maximum(y[:, 2], 1e-3)),
                          0.3 * np.maximum(y[:, 3], 0.02)], axis=1)
        # the stagnation-point stations are algebraic and their speeds tiny: not limiting
        bound[lay.kind == START] = np.inf
        worst = float(np.max(np.abs(dy) / bound))
        fac = min(1.0, 1.0 / worst if worst > 0 else 1.0)
        arg = np.unravel_index(int(np.argmax(np.abs(dy) / bound)), dy.shape)
        self.trace.append(("step", fac, int(arg[0]), int(arg[1])))
        y_new = y + fac * dy
        norm = float(np.sqrt(np.mean(r * r)))
        for trial in ((1.0,) if bold else ()) + (MIN_STEP, MIN_STEP / 4.0):
            if trial <= fac:
                break
            cand = self._limited(lay, y + np.clip(trial * dy, -bound, bound))
            rc = self.equations(lay, cand, dh, u_s, jacobian=False)[0]
            if np.all(np.isfinite(rc)) and np.sqrt(np.mean(rc * rc)) < norm:
                return cand
        return self._limited(lay, y_new)

    @staticmethod
    def _limited(lay: Layout, y: np.ndarray) -> np.ndarray:
        """Unknowns kept in their ranges (shape factor, C_E, positive edge speeds except at the
        stations closest to the stagnation point, whose sign tells that it moved past them)."""
        y = y.copy()
        y[:, 1] = np.clip(y[:, 1], H_MIN, H_MAX)
        turb = lay.regime != LAMINAR
        y[turb, 2] = np.maximum(y[turb, 2], CE_MIN)
        free = (lay.kind == START) & (lay.s < 0.5 * np.max(lay.s[lay.kind == START]))
        y[~free, 3] = np.maximum(y[~free, 3], 1e-6)
        return y

    def relayout(self, lay: Layout, y: np.ndarray, k: int, speeds: np.ndarray, s0: float):
        """Stations for a stagnation point that moved to panel k; states carried by node, the
        stations nearest the new stagnation point restarted from the outer flow's speeds
        ``speeds`` (signed nodal) in Hiemenz flow."""
        new = self.layout(k)
        pos = np.empty(self.m_nodes + self.nw, int)
        pos[lay.node] = np.arange(lay.n)
        src = pos[new.node]
        y2 = y[src].copy()
        new.regime = lay.regime[src].copy()
        moved = lay.side[src] != new.side
        new.regime[moved] = LAMINAR
        y2[moved, 2] = 0.0
        y2[moved, 3] = np.abs(y2[moved, 3])
        new.s = self.arc_lengths(new, s0)
        for side, sgn in ((0, -1.0), (1, 1.0)):
            st = new.side_stations(side)[:4]
            ue = np.maximum(sgn * speeds[new.node[st]], 1e-6)
            a = ue[-1] / new.s[st[-1]]  # the speed gradient, from the farthest of them
            st_sim = bl.similar_start(float(new.s[st[-1]]), float(ue[-1]), 1.0, self.re)
            y2[st] = np.stack([np.full(len(st), np.log(st_sim.theta)), np.full(len(st), st_sim.h),
                               np.zeros(len(st)), np.maximum(a * new.s[st], 1e-6)], axis=1)
            new.regime[st] = LAMINAR
        return new, y2

    def solution(self, lay, y, converged, residual, iterations, history) -> Solution:
        mt, speeds = self._speeds(lay, y)
        gamma = self.u_inv_full[:self.m_all] + self.d_full[:self.m_all] @ mt
        arcs, forced = [], []
        n_crit = self.transition.critical_amplification
        for side in (0, 1):
            st = lay.side_stations(side)
            b = self._first_turbulent(lay, st)
            if b >= len(st) or lay.kind[st[b]] != INTERVAL:
                arcs.append(np.nan if b >= len(st) else float(lay.s[st[b]]))
                forced.append(False)
                continue
            a, b = st[b - 1], st[b]
            ds = np.array([lay.s[b] - lay.s[a]])
            f, free = _fraction(y[a][None], y[b][None], ds, self.re, n_crit, lay.trip[b][None])
            arcs.append(float(lay.s[a] + f[0] * ds[0]))
            forced.append(bool(not np.isnan(lay.trip[b]) and lay.trip[b] <= free[0]))
        up, lo = lay.side_stations(0), lay.side_stations(1)
        uu, ul = max(y[up[0], 3], 0.0), max(y[lo[0], 3], 0.0)
        t = uu / (uu + ul) if uu + ul > 0 else 0.5
        ku, kl = lay.node[up[0]], lay.node[lo[0]]
        s0 = float(self.arc[ku] + t * (self.arc[kl] - self.arc[ku]))
        return Solution(lay, y, tuple(arcs), tuple(forced), s0, gamma,
                        speeds[self.m_nodes:], self.full_mass_defect(mt), converged, residual,
                        iterations, history)


def _stagnation(gamma: np.ndarray, arc: np.ndarray) -> tuple[int, float]:
    """Panel k (nodes k, k+1) holding the front stagnation point, and its arc position.

    The loop's speed runs negative on the upper side and positive on the lower; of several sign
    changes from - to + the one nearest the middle of the loop (the leading edge) is taken.
    """
    g0, g1 = gamma[:-1], gamma[1:]
    cross = np.flatnonzero((g0 < 0) & (g1 >= 0))
    if len(cross) == 0:
        k = int(np.argmin(np.abs(gamma[:-1])))
        return k, float(arc[k])
    mid = 0.5 * (arc[-1] + arc[0])
    k = int(cross[np.argmin(np.abs(arc[cross] - mid))])
    t = g0[k] / (g0[k] - g1[k])
    return k, float(arc[k] + t * (arc[k + 1] - arc[k]))
