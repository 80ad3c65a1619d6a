"""Viscous-inviscid coupling: one Newton iteration on the whole boundary layer, wake and outer flow.

Unknowns at every station (both surfaces from the stagnation point, then the wake): ln(theta),
the shape factor H, the third variable (amplification factor N while laminar, entrainment
coefficient C_E when turbulent) and the edge speed Ue. Equations at every station:

* three boundary-layer equations of the interval from the previous station (the trapezoidal
  discretisation of :mod:`panelflow.viscous.march`, laminar, turbulent, wake, or the interval
  holding transition), or at the first stations the Hiemenz stagnation-point solution, or at the
  wake's first station the merging of the two trailing-edge layers;
* the outer flow: ``Ue_i = Ue_inviscid_i + sum_j D_ij m_j`` with m = Ue delta* and ``D`` the
  mass-defect influence of :mod:`panelflow.viscous.displacement`.

The Jacobian's boundary-layer rows are block-bidiagonal along each march (finite differences,
evaluated for all stations at once); they are eliminated station by station in the inverse form
(each station's unknowns as functions of the mass defects), which leaves a dense system for the
mass-defect corrections alone (one unknown per station). The iteration is damped (bounded
changes of each variable) and the transition interval is moved one station at a time as N
passes the critical value.

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

from panelflow.viscous import closures
from panelflow.viscous import march as bl
from panelflow.viscous.transition import amplification_rate_array

START, INTERVAL, WAKE_START = 0, 1, 2
LAMINAR, TURBULENT, WAKE = 0, 1, 2
CE_MIN = 1e-6
H_MIN, H_MAX = 1.002, 15.0
MIN_STEP = 0.25
# shape factors between which intervals go from the trapezoidal rule to backward Euler
UPWIND_LAMINAR = (3.0, 4.5)
UPWIND_TURBULENT = (2.0, 3.0)
STAGNATION_SETTLED = 1e-3


# --- residuals, vectorised over stations ------------------------------------------------------

def _lam_terms(y, re):
    """H*, Cf/(2 theta), (2 CD/H* - Cf/2)/theta and dN/ds at stations y."""
    theta = np.exp(y[:, 0])
    h, ue = y[:, 1], y[:, 3]
    hs, f1, f2 = closures.laminar_array(h)
    k = 1.0 / (re * ue * theta * theta)
    rate = amplification_rate_array(h, re * ue * theta, theta)
    return hs, f1 * k, (2.0 * f2 / hs - f1) * k, rate


def _turb_terms(y, re, wake, ce=None):
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
    return h1, 0.5 * cf / theta, (ce - 0.5 * h1 * cf) / theta, q3, big_f, ce_eq


def _weight(ha, hb, start, full):
    """Weight of the downstream station in an interval's averages.

    0.5 (the trapezoidal rule, second order) where the layer is attached; rising to 1 (backward
    Euler, first order but damping) as the larger shape factor goes from ``start`` to ``full``.
    The trapezoidal rule does not damp the stiff odd-even mode of the shape-factor equation, which
    showed as a saw-tooth in H through laminar separation near a leading edge.
    """
    h = np.maximum(ha, hb)
    return 0.5 + 0.5 * np.clip((h - start) / (full - start), 0.0, 1.0)


def _laminar(ya, yb, ds, re, terms_a=None, terms_b=None):
    hsa, q1a, q2a, ra = _lam_terms(ya, re) if terms_a is None else terms_a
    hsb, q1b, q2b, rb = _lam_terms(yb, re) if terms_b is None else terms_b
    w = _weight(ya[:, 1], yb[:, 1], *UPWIND_LAMINAR)
    v = 1.0 - w
    dl = np.log(yb[:, 3] / ya[:, 3])
    hm = v * ya[:, 1] + w * yb[:, 1]
    return np.stack([yb[:, 0] - ya[:, 0] - ds * (v * q1a + w * q1b) + (hm + 2.0) * dl,
                     np.log(hsb / hsa) - ds * (v * q2a + w * q2b) + (1.0 - hm) * dl,
                     yb[:, 2] - ya[:, 2] - 0.5 * ds * (ra + rb)], axis=1)


def _turbulent(ya, yb, ds, re, wake, ce_a=None, terms_a=None, terms_b=None, dl_scale=1.0):
    h1a, q1a, q2a, q3a, fa, _ = _turb_terms(ya, re, wake, ce_a) if terms_a is None else terms_a
    h1b, q1b, q2b, q3b, fb, _ = _turb_terms(yb, re, wake) if terms_b is None else terms_b
    w = _weight(ya[:, 1], yb[:, 1], *UPWIND_TURBULENT)
    v = 1.0 - w
    dl = dl_scale * np.log(yb[:, 3] / ya[:, 3])
    ha, hb = ya[:, 1], yb[:, 1]
    cea = ya[:, 2] if ce_a is None else ce_a
    return np.stack([yb[:, 0] - ya[:, 0] - ds * (v * q1a + w * q1b)
                     + (v * ha + w * hb + 2.0) * dl,
                     h1b - h1a - ds * (v * q2a + w * q2b)
                     - (v * h1a * (ha + 1.0) + w * h1b * (hb + 1.0)) * dl,
                     yb[:, 2] - cea - ds * (v * q3a + w * q3b) + (v * fa + w * fb) * dl], axis=1)


def _fraction(ya, la, lb, ds, n_crit, trip):
    n_end = ya[:, 2] + 0.5 * ds * (la[3] + lb[3])
    rise = n_end - ya[:, 2]
    free = np.where(rise > 1e-12, (n_crit - ya[:, 2]) / np.maximum(rise, 1e-12), 1.0)
    f = np.where(np.isnan(trip), free, np.minimum(free, np.nan_to_num(trip, nan=1.0)))
    return np.clip(f, 0.0, 1.0), n_end, free


def _transition_fraction(ya, yb, ds, re, n_crit, trip):
    """Laminar fraction of a transition interval and the laminar N it would reach at its end."""
    return _fraction(ya, _lam_terms(ya, re), _lam_terms(yb, re), ds, n_crit, trip)


def _transition(ya, yb, ds, re, n_crit, trip):
    """Interval holding transition: laminar for a fraction f of it, then turbulent.

    Momentum: the laminar and turbulent wall friction weighted by their lengths. Shape and lag
    equations: the turbulent ones over the turbulent part, starting from the laminar state at
    a (the laminar H carried over, C_E at its equilibrium value). So the station at the end of
    the interval always carries a turbulent shape factor that starts from the laminar one as f
    goes to 1; blending the laminar and turbulent shape equations by f instead made that shape
    factor jump with f and the transition interval ping-pong between stations (measured).
    """
    la, lb = _lam_terms(ya, re), _lam_terms(yb, re)
    f, _, _ = _fraction(ya, la, lb, ds, n_crit, trip)
    wall = np.zeros(len(ya), bool)
    ta0 = _turb_terms(ya, re, wall, ce=np.full(len(ya), 0.01))
    ce_a = np.clip(ta0[5], 1e-4, 0.2)
    ta = _turb_terms(ya, re, wall, ce_a)
    tb = _turb_terms(yb, re, wall)
    rl = _laminar(ya, yb, ds, re, la, lb)
    rt_full = _turbulent(ya, yb, ds, re, wall, ce_a, ta, tb)
    rt = _turbulent(ya, yb, (1.0 - f) * ds, re, wall, ce_a, ta, tb, dl_scale=1.0 - f)
    return np.stack([f * rl[:, 0] + (1.0 - f) * rt_full[:, 0], rt[:, 1], rt[:, 2]], axis=1)


def _start(y, s, re):
    """Hiemenz stagnation-point flow of the integral method: theta^2 = lam s/(Ue Re), H fixed."""
    h, lam = closures.laminar_similar_state(1.0)
    return np.stack([y[:, 0] - 0.5 * np.log(lam * s / (y[:, 3] * re)), y[:, 1] - h, y[:, 2]],
                    axis=1)


def _wake_target(yu, yl, turbulent_u, turbulent_l, base, re):
    """ln(theta), H and C_E of the half-wake at the trailing edge from the two surfaces' layers.

    theta and delta* of the whole wake are the sums of the two sides' (plus, for a blunt edge,
    the base height in delta*: the dead-water region displaces the flow like the base source of
    the inviscid model); C_E is the theta-weighted mean, a laminar side taken at its turbulent
    equilibrium (the wake is turbulent).
    """
    tu, tl = np.exp(yu[:, 0]), np.exp(yl[:, 0])
    wall = np.zeros(len(yu), bool)
    ce = []
    for y, turb in ((yu, turbulent_u), (yl, turbulent_l)):
        eq = np.clip(_turb_terms(y, re, wall, ce=np.full(len(y), 0.01))[5], 1e-4, 0.2)
        ce.append(y[:, 2] if turb else eq)
    th = tu + tl
    return np.stack([np.log(0.5 * th), (tu * yu[:, 1] + tl * yl[:, 1] + base) / th,
                     (ce[0] * tu + ce[1] * tl) / th], axis=1)


def _wake_start(yu, yl, yw, turbulent_u, turbulent_l, base, re):
    """Residuals of the wake's first station (half-wake variables)."""
    return yw[:, :3] - _wake_target(yu, yl, turbulent_u, turbulent_l, base, re)


def _steps(y):
    return np.stack([np.full(len(y), 1e-7), 1e-7 * np.maximum(1.0, np.abs(y[:, 1])),
                     1e-7 * np.maximum(1e-3, np.abs(y[:, 2])),
                     1e-7 * np.maximum(1e-3, np.abs(y[:, 3]))], axis=1)


def _with_derivatives(func, ya, yb):
    """Residuals (n, 3) and their derivatives (n, 3, 4) on ya and on yb, by differences."""
    r = func(ya, yb)
    da = np.empty((len(ya), 3, 4))
    db = np.empty((len(ya), 3, 4))
    ha, hb = _steps(ya), _steps(yb)
    for v in range(4):
        yp = ya.copy()
        yp[:, v] += ha[:, v]
        da[:, :, v] = (func(yp, yb) - r) / ha[:, v, None]
        yp = yb.copy()
        yp[:, v] += hb[:, v]
        db[:, :, v] = (func(ya, yp) - r) / hb[:, v, None]
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


def first_marched(s: np.ndarray) -> int:
    """First station of a surface whose interval from it is not dominated by the stagnation
    point: the nodes before it lie so close to it (the next node more than twice as far) that
    they take the stagnation-point solution of their own distance."""
    for i in range(min(len(s) - 1, 6)):
        if s[i + 1] <= 2.0 * s[i]:
            return i
    return min(len(s) - 2, 6)


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

    def __init__(self, influence, gamma_inv, arc, xc, re, transition, base=0.0):
        self.d = influence.matrix
        self.wake_nodes = influence.wake
        self.m_nodes = len(gamma_inv)
        self.nw = len(influence.wake)
        self.u_inv = np.concatenate([gamma_inv, influence.wake_inviscid])
        self.arc = arc
        self.xc = xc
        self.re = re
        self.transition = transition
        self.base = base
        self.wake_s = np.concatenate([[0.0], np.cumsum(np.abs(np.diff(influence.wake)))])
        self.trace = []  # per iteration: residual and where it is largest (for diagnosis)

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
    def equations(self, lay: Layout, y: np.ndarray, dh: np.ndarray, u_s: np.ndarray,
                  jacobian: bool = True):
        n = lay.n
        re = self.re
        r = np.zeros((n, 4))
        da = np.zeros((n, 3, 4))  # derivative on the previous station (intervals)
        db = np.zeros((n, 3, 4))  # derivative on the station itself
        extra = {}  # wake start: derivatives on the two trailing-edge stations
        extra_start = {}  # stagnation stations: derivative of ln(theta) on station f's Ue
        ds = np.zeros(n)
        inner = lay.kind == INTERVAL
        ds[inner] = lay.s[inner] - lay.s[lay.prev[inner]]
        n_crit = self.transition.critical_amplification
        groups = []
        pr = np.where(lay.prev >= 0, lay.regime[np.maximum(lay.prev, 0)], -1)
        groups.append((inner & (lay.regime == LAMINAR), lambda a, b, sl: _laminar(a, b, ds[sl], re)))
        groups.append((inner & (lay.regime == TURBULENT) & (pr == TURBULENT),
                       lambda a, b, sl: _turbulent(a, b, ds[sl], re, np.zeros(len(a), bool))))
        groups.append((inner & (lay.regime == WAKE),
                       lambda a, b, sl: _turbulent(a, b, ds[sl], re, np.ones(len(a), bool))))
        groups.append((inner & (lay.regime == TURBULENT) & (pr == LAMINAR),
                       lambda a, b, sl: _transition(a, b, ds[sl], re, n_crit, lay.trip[sl])))
        for mask, func in groups:
            idx = np.flatnonzero(mask)
            if len(idx) == 0:
                continue
            if not jacobian:
                r[idx, :3] = func(y[lay.prev[idx]], y[idx], idx)
                continue
            res, a_, b_ = _with_derivatives(lambda a, b: func(a, b, idx), y[lay.prev[idx]], y[idx])
            r[idx, :3], da[idx], db[idx] = res, a_, b_
        # stagnation-point flow (Hiemenz): theta and H are constant there, theta^2 = lam nu/a with
        # the speed gradient a = Ue/s of each surface's last such station (the ones closer to
        # the stagnation point have too small s and Ue to give it)
        h_st, lam = closures.laminar_similar_state(1.0)
        for side in (0, 1):
            st = lay.side_stations(side)
            st = st[lay.kind[st] == START]
            f = st[-1]
            r[st, 0] = y[st, 0] - 0.5 * np.log(lam * lay.s[f] / (y[f, 3] * re))
            r[st, 1] = y[st, 1] - h_st
            r[st, 2] = y[st, 2]
            db[st, 0, 0] = 1.0
            db[st, 1, 1] = 1.0
            db[st, 2, 2] = 1.0
            if len(st) > 1:
                # the others depend on station f's speed: an off-diagonal term, carried by the
                # elimination as a 'previous station'
                for i in st[:-1]:
                    extra_start[i] = (f, 0.5 / y[f, 3])
            db[f, 0, 3] = 0.5 / y[f, 3]
        w0 = int(np.flatnonzero(lay.kind == WAKE_START)[0])
        ends = [lay.side_stations(0)[-1], lay.side_stations(1)[-1]]
        turb = [lay.regime[e] == TURBULENT for e in ends]
        args = [y[ends[0]][None], y[ends[1]][None], y[w0][None]]

        def wfun(*a):
            return _wake_start(*a, turb[0], turb[1], self.base, re)[0]

        r0 = wfun(*args)
        r[w0, :3] = r0
        for which in range(3 if jacobian else 0):
            dd = np.empty((3, 4))
            h = _steps(args[which])[0]
            for v in range(4):
                a = [x.copy() for x in args]
                a[which][0, v] += h[v]
                dd[:, v] = (wfun(*a) - r0) / h[v]
            if which == 2:
                db[w0] = dd
            else:
                extra[ends[which]] = dd
        # the outer flow
        theta = np.exp(y[:, 0])
        m = theta * y[:, 1] * y[:, 3]
        r[:, 3] = y[:, 3] - u_s - dh @ m
        return r, da, db, (w0, extra, extra_start), m

    def newton_step(self, lay, y, r, da, db, wake_link, m, dh):
        """Correction of all unknowns.

        Each station's three boundary-layer equations and the definition of its mass defect
        m = theta H Ue are solved for its four unknowns as affine functions of the mass defects
        (the inverse problem, regular through separation, where eliminating with the edge speed
        as the free variable -- the direct problem -- is singular); along each march this gives
        dUe/dm, lower-triangular. The outer-flow rows then leave a dense system for the
        mass-defect corrections alone (one unknown per station). Checked against a dense solve
        of the whole system: the same corrections, at half the cost.
        """
        n = lay.n
        p = np.zeros((n, 4))
        q = np.zeros((n, 4, n))
        w0, extra, extra_start = wake_link
        theta = np.exp(y[:, 0])
        h = y[:, 1]
        block = np.zeros((n, 4, 4))
        block[:, :3, :] = db
        block[:, 3, 0] = m
        block[:, 3, 1] = m / h
        block[:, 3, 3] = theta * h
        try:
            inv = np.linalg.inv(block)
        except np.linalg.LinAlgError:
            return None
        for i in self._order(lay):
            kind = lay.kind[i]
            if kind == INTERVAL:
                preds = ((lay.prev[i], da[i]),)
            elif kind == WAKE_START:
                preds = tuple(extra.items())
            else:
                preds = ()
            rp = np.zeros(4)
            rp[:3] = -r[i, :3]
            qi = np.zeros((4, n))
            for j, a in preds:
                rp[:3] -= a @ p[j]
                qi[:3] -= a @ q[j]
            if i in extra_start:
                f, dr = extra_start[i]
                rp[0] -= dr * p[f, 3]
                qi[0] -= dr * q[f, 3]
            qi[3, i] = 1.0
            p[i] = inv[i] @ rp
            q[i] = inv[i] @ qi
        # outer flow: Ue + dUe - u_s - D (m + dm) = 0, with dUe = p3 + Q3 dm
        try:
            dm = np.linalg.solve(q[:, 3, :] - dh, -r[:, 3] - p[:, 3])
        except np.linalg.LinAlgError:
            return None
        return p + np.einsum("ikn,n->ik", q, dm)

    @staticmethod
    def _order(lay: Layout):
        """Stations in an order where each comes after those it depends on: on each surface the
        stagnation-point stations from the last (whose speed gradient the others use) back to
        the first, then the marched ones; the wake last."""
        order = []
        for side in (0, 1):
            st = lay.side_stations(side)
            starts = st[lay.kind[st] == START]
            order.extend(starts[::-1])
            order.extend(st[lay.kind[st] != START])
        order.extend(lay.side_stations(2))
        return order

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
                           trip_arc=trip, h_max=(3.5, 1.8))
            y[st[f:]] = np.stack([np.log(res.theta), res.h, res.third, res.ue], axis=1)
            lay.regime[st[f:]] = np.where(res.turbulent, TURBULENT, LAMINAR)
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
                       h_max=(3.5, 1.8))
        y[wk] = np.stack([np.log(res.theta), res.h, res.third, res.ue], axis=1)
        return lay, y

    # regimes and the stagnation point -----------------------------------------------------------
    def update_regimes(self, lay: Layout, y: np.ndarray) -> list:
        """Move each surface's transition interval by at most one station; returns the surfaces
        whose interval moved. (Jumping several stations at once, or taking the regimes of a
        fresh direct march, both disrupted Newton more than they saved: measured on NACA 0012.)
        """
        n_crit = self.transition.critical_amplification
        moved_sides = []
        wall = np.zeros(1, bool)
        for side in (0, 1):
            st = lay.side_stations(side)
            turb = np.flatnonzero(lay.regime[st] == TURBULENT)
            forced = np.flatnonzero(~np.isnan(lay.trip[st]))
            if len(turb) == 0:
                lam_n = y[st, 2]
                over = np.flatnonzero((lam_n >= n_crit) & (lay.kind[st] == INTERVAL))
                cand = [int(over[0])] if len(over) else []
                if len(forced):
                    cand.append(int(forced[0]))
                if not cand:
                    continue
                b = min(cand)
                ce = _turb_terms(y[st[b]][None], self.re, wall, ce=np.full(1, 0.01))[5]
                y[st[b:], 2] = np.clip(ce[0], 1e-4, 0.2)
                lay.regime[st[b:]] = TURBULENT
                moved_sides.append(side)
                continue
            b = int(turb[0])
            a = b - 1
            if lay.kind[st[a]] != INTERVAL or lay.kind[st[b]] != INTERVAL:
                continue
            if y[st[a], 2] >= n_crit and lay.kind[st[a - 1]] == INTERVAL:
                ce = _turb_terms(y[st[a]][None], self.re, wall, ce=np.full(1, 0.01))[5]
                y[st[a], 2] = np.clip(ce[0], 1e-4, 0.2)
                lay.regime[st[a]] = TURBULENT
                moved_sides.append(side)
                continue
            ds = np.array([lay.s[st[b]] - lay.s[st[a]]])
            _, n_end, free = _transition_fraction(y[st[a]][None], y[st[b]][None], ds, self.re,
                                                  n_crit, lay.trip[st[b]][None])
            forced_here = not np.isnan(lay.trip[st[b]])
            earlier_trip = len(forced) and forced[0] < b
            if free[0] > 1.02 and not forced_here and not earlier_trip and b < len(st) - 1:
                # the laminar layer at b starts from a's shape (the turbulent one was thinner)
                y[st[b], 2] = n_end[0]
                y[st[b], 1] = y[st[a], 1]
                lay.regime[st[b]] = LAMINAR
                moved_sides.append(side)
        return moved_sides

    def run(self, y=None, lay=None, max_iterations: int = 80, tolerance: float = 1e-7,
            bold: bool = False):
        """Iterate to convergence from the given (or a direct-march) start.

        ``bold`` also tries the whole clipped Newton step first when the damping factor is small
        (it helped through laminar separation bubbles at low Reynolds numbers and hurt at high
        ones, both measured on NACA 0012; ``solve`` retries with it when the first run fails).

        BLAS runs on one thread here: the dense systems are small (a few hundred unknowns), and
        a second thread made each solve ten times slower on the development machine.
        """
        from threadpoolctl import threadpool_limits

        with threadpool_limits(limits=1):
            return self._run(y, lay, max_iterations, tolerance, bold)

    def _run(self, y, lay, max_iterations, tolerance, bold):
        if lay is None:
            k, s0 = _stagnation(self.u_inv[:self.m_nodes], self.arc)
            lay, y = self.initial(k, s0)
        else:
            # a neighbouring angle's solution: its stagnation point moved with the angle
            y = y.copy()
            lay = Layout(lay.node.copy(), lay.side.copy(), lay.kind.copy(), lay.prev.copy(),
                         lay.regime.copy(), lay.trip.copy())
            sign = np.where(lay.side == 0, -1.0, 1.0)
            mt = np.empty(self.m_nodes + self.nw)
            mt[lay.node] = sign * np.exp(y[:, 0]) * y[:, 1] * y[:, 3]
            speeds = self.u_inv + self.d @ mt
            k, s0 = _stagnation(speeds[:self.m_nodes], self.arc)
            if k != lay.node[lay.side_stations(0)[0]]:
                lay, y = self.relayout(lay, y, k, speeds, s0)
        history = []
        converged = False
        residual = np.inf
        fresh = True
        for it in range(1, max_iterations + 1):
            up, lo = lay.side_stations(0), lay.side_stations(1)
            ku, kl = lay.node[up[0]], lay.node[lo[0]]
            uu, ul = max(y[up[0], 3], 0.0), max(y[lo[0], 3], 0.0)
            t = uu / (uu + ul) if uu + ul > 0 else 0.5
            s0 = float(self.arc[ku] + t * (self.arc[kl] - self.arc[ku]))
            lay.s = self.arc_lengths(lay, s0)
            if it == 1 or lay.trip is None or fresh:
                self.set_starts(lay)  # fixed for a layout: switching equations stalls Newton
                fresh = False
            marched = lay.kind != START
            y[marched, 3] = np.maximum(y[marched, 3], 1e-6)
            sign = np.where(lay.side == 0, -1.0, 1.0)
            dn = self.d[np.ix_(lay.node, lay.node)]
            dh = sign[:, None] * dn * sign[None, :]
            u_s = sign * self.u_inv[lay.node]
            r, da, db, link, m = self.equations(lay, y, dh, u_s)
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
            dy = self.newton_step(lay, y, r, da, db, link, m, dh)
            if dy is None or not np.all(np.isfinite(dy)):
                break
            # damping: bounded relative changes (theta, H, C_E, Ue), N free
            lim = [np.abs(dy[:, 0]) / 0.5,
                   np.abs(dy[:, 1]) / (0.3 * np.maximum(y[:, 1] - 1.0, 0.2)),
                   np.where(lay.regime == LAMINAR, 0.0,
                            np.abs(dy[:, 2]) / (0.5 * np.maximum(y[:, 2], 1e-3))),
                   np.abs(dy[:, 3]) / (0.3 * np.maximum(y[:, 3], 0.02))]
            # the stagnation-point stations are algebraic and their speeds tiny: not limiting
            lim = [np.where(lay.kind == START, 0.0, v) for v in lim]
            worst = max(float(np.max(v)) for v in lim)
            # a global factor keeps Newton's direction; where it would stall the iteration (a
            # few stations far off, in a separated region or at a moving transition point) a
            # larger step with each change clipped to its own bound is tried first, and kept if
            # it lowers the residual
            fac = min(1.0, 1.0 / worst if worst > 0 else 1.0)
            self.trace.append(("step", fac, [int(np.argmax(v)) for v in lim],
                               [float(np.max(v)) for v in lim]))
            bound = np.stack([np.full(lay.n, 0.5), 0.3 * np.maximum(y[:, 1] - 1.0, 0.2),
                              np.where(lay.regime == LAMINAR, np.inf,
                                       0.5 * np.maximum(y[:, 2], 1e-3)),
                              0.3 * np.maximum(y[:, 3], 0.02)], axis=1)
            norm = float(np.sqrt(np.mean(r * r)))
            y_new = y + fac * dy
            for trial in ((1.0,) if bold else ()) + (MIN_STEP, MIN_STEP / 4.0):
                if trial <= fac:
                    break
                cand = self._limited(lay, y + np.clip(trial * dy, -bound, bound))
                rc = self.equations(lay, cand, dh, u_s, jacobian=False)[0]
                if np.all(np.isfinite(rc)) and np.sqrt(np.mean(rc * rc)) < norm:
                    y_new = cand
                    break
            y = self._limited(lay, y_new)
            if it < max_iterations - 2:
                for side in self.update_regimes(lay, y):
                    self.trace.append(("transition moved", it, side))
            # the stagnation point moves with the outer flow's speeds
            theta = np.exp(y[:, 0])
            mt = np.empty(self.m_nodes + self.nw)
            mt[lay.node] = sign * theta * y[:, 1] * y[:, 3]
            speeds = self.u_inv + self.d @ mt
            k_new, s0_new = _stagnation(speeds[:self.m_nodes], self.arc)
            # one node per iteration at most: far moves come from an unconverged state
            k_new = min(max(k_new, ku - 1, 3), ku + 1, self.m_nodes - 5)
            # ... only once the iteration has settled (it chases noise before), and only when
            # the point left the current panel by a quarter of the next panel (a stagnation
            # point on a node -- a symmetric section at zero angle -- flipped the layout back
            # and forth otherwise)
            margin = 0.25 * np.diff(self.arc)[min(max(ku + (1 if k_new > ku else -1), 0),
                                                  len(self.arc) - 2)]
            left = s0_new < self.arc[ku] - margin or s0_new > self.arc[ku + 1] + margin
            if k_new != ku and residual < STAGNATION_SETTLED and left:
                lay, y = self.relayout(lay, y, k_new, speeds, s0_new)
                fresh = True
        return self.solution(lay, y, converged, residual, it, history)

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
        theta = np.exp(y[:, 0])
        sign = np.where(lay.side == 0, -1.0, 1.0)
        mt = np.empty(self.m_nodes + self.nw)
        mt[lay.node] = sign * theta * y[:, 1] * y[:, 3]
        speeds = self.u_inv + self.d @ mt
        arcs, forced = [], []
        n_crit = self.transition.critical_amplification
        for side in (0, 1):
            st = lay.side_stations(side)
            turb = np.flatnonzero(lay.regime[st] == TURBULENT)
            if len(turb) == 0 or lay.kind[st[turb[0]]] != INTERVAL:
                arcs.append(np.nan if len(turb) == 0 else float(lay.s[st[turb[0]]]))
                forced.append(False)
                continue
            a, b = st[turb[0] - 1], st[turb[0]]
            ds = np.array([lay.s[b] - lay.s[a]])
            f, _, free = _transition_fraction(y[a][None], y[b][None], ds, self.re, n_crit,
                                              lay.trip[b][None])
            arcs.append(float(lay.s[a] + f[0] * ds[0]))
            forced.append(bool(not np.isnan(lay.trip[b]) and lay.trip[b] <= free[0]))
        up, lo = lay.side_stations(0), lay.side_stations(1)
        uu, ul = max(y[up[0], 3], 0.0), max(y[lo[0], 3], 0.0)
        t = uu / (uu + ul) if uu + ul > 0 else 0.5
        ku, kl = lay.node[up[0]], lay.node[lo[0]]
        s0 = float(self.arc[ku] + t * (self.arc[kl] - self.arc[ku]))
        return Solution(lay, y, tuple(arcs), tuple(forced), s0, speeds[:self.m_nodes],
                        speeds[self.m_nodes:], mt, converged, residual, iterations, history)


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
