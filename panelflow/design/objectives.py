"""Objectives and constraints of a job as functions of the design variables, with gradients.

The design variables are the shape coefficients ``c`` (:mod:`panelflow.design.shape`) followed
by a few extra variables an objective needs:

* :class:`~panelflow.design.job.InceptionSpeed`: one bound ``t`` on the suction; minimise ``t``
  subject to ``-Cp_i <= t`` at every node at the design lift (the bound form of a minimax: the
  largest suction is not differentiable where the peak moves from node to node, the bound form
  is smooth);
* :class:`~panelflow.design.job.WidestRange`: the ends of the range ``a_lo``, ``a_hi`` (degrees
  from the chord); maximise their distance (or the lift difference) subject to
  ``-Cp_i <= sigma (1 - margin)`` at every node at ``checks`` angles spread over the range;
* :class:`~panelflow.design.job.LeastDrag`: none; the drag and its gradient come from the
  viscous analysis (:mod:`panelflow.design.drag`).

Every function is scaled to order one (SLSQP's stopping tests are absolute), and every gradient
is exact (the panel sensitivities) except the drag's, which is a finite difference of the
viscous analysis. ``tests/test_design_optimise.py`` checks each gradient against finite
differences.
"""

from __future__ import annotations

import numpy as np

from panelflow.design.job import InceptionSpeed, Job, LeastDrag, WidestRange
from panelflow.design.inverse import ThicknessLimit
from panelflow.design.model import DesignModel
from panelflow.design.shape import SectionForm
from panelflow.errors import InputError

__all__ = ["Formulation", "free_range", "SCALES", "ALLOWANCE"]

# Constraint and objective scales (values handed to SLSQP are the physical ones times these).
SCALES = {"thickness": 100.0, "area": 100.0, "radius": 1000.0, "angle": 0.1, "moment": 10.0,
          "suction": 1.0, "range_deg": 0.1, "lift": 1.0, "drag": 100.0}
# What the optimiser keeps inside each limit, so that the limit still holds when the written
# section is measured and analysed afresh (panelflow.design.check): a little more than the
# measures' own uncertainty on a written 801-point table (check.TOLERANCE) and, for the
# moment, than the difference between the 200-panel design model and the 400-panel check
# (measured 1.9e-4 on the demo's optimised section, whose cm error estimate at 200 panels is
# 6e-4).
# The allowed suction of a cavitation-free range is lowered by a share ("suction"): the lowest
# Cp of the design model and of the check differ by up to 0.6 % on the demo sections (120 to
# 400 panels, measured), and the range's ends sit exactly on the limit.
ALLOWANCE = {"thickness": 2e-6, "area": 2e-6, "radius": 2e-5, "angle": 0.02, "moment": 5e-4,
             "suction": 0.01}
_MIN_RANGE_DEG = 0.2


def _inside(lo, hi, allowance):
    """Limits moved inwards by ``allowance`` where the gap between them leaves room."""
    if lo is not None and hi is not None and hi - lo <= 4.0 * allowance:
        return lo, hi
    return (None if lo is None else lo + allowance), (None if hi is None else hi - allowance)
_SCAN = np.arange(-15.0, 15.0001, 0.02)


def free_range(state, allowed: float, contains_alpha: float | None = None):
    """The interval of angle (degrees from the chord) where ``-Cp_min <= allowed``.

    Scanned on a 0.02-degree grid from -15 to 15 degrees (the unit solutions make each angle a
    few multiplications); the interval containing ``contains_alpha`` when given, else the
    widest. Returns ``(lo, hi)`` or None when no angle is free.
    """
    a = np.radians(_SCAN)
    m = state.m
    g = np.cos(a)[:, None] * state.unit[None, :m, 0] + np.sin(a)[:, None] * state.unit[None, :m, 1]
    suction = np.max(g * g - 1.0, axis=1)
    free = suction <= allowed
    if not np.any(free):
        return None
    edges = np.flatnonzero(np.diff(np.r_[0, free.astype(int), 0]))
    runs = list(zip(edges[::2], edges[1::2] - 1))
    if contains_alpha is not None:
        k = int(np.argmin(np.abs(_SCAN - contains_alpha)))
        inside = [r for r in runs if r[0] <= k <= r[1]]
        if not inside:
            return None
        lo, hi = inside[0]
    else:
        lo, hi = max(runs, key=lambda r: r[1] - r[0])
    return float(_SCAN[lo]), float(_SCAN[hi])


class Formulation:
    """A job on a design model: variables, objective, constraints and their gradients.

    Parameters
    ----------
    job : Job
    form : SectionForm
        The form whose coefficients are the first variables.
    model : DesignModel
        Its panel model at this stage.
    drag : object, optional
        The viscous drag evaluator (:class:`panelflow.design.drag.DragAtLift`) for
        :class:`LeastDrag`.
    """

    def __init__(self, job: Job, form: SectionForm, model: DesignModel, drag=None):
        self.job, self.form, self.model = job, form, model
        self.p = form.size
        obj = job.objective
        self.kind = type(obj)
        self.n_extra = {InceptionSpeed: 1, WidestRange: 2, LeastDrag: 0}[self.kind]
        self.drag = drag
        if self.kind is LeastDrag and drag is None:
            raise InputError("the drag objective needs the viscous drag evaluator")
        self.allowed = None
        if job.cavitation is not None and job.cavitation.speed is not None:
            self.allowed = (job.cavitation.sigma() * (1.0 - job.cavitation.margin)
                            * (1.0 - ALLOWANCE["suction"]))
        # node rows that carry a pressure (both trailing-edge nodes left out: a stagnation
        # corner or a cusp's repeated point, never a suction peak)
        self.rows = np.arange(1, len(model.u) - 1)
        self._linear = self._linear_constraints()

    # ------------------------------------------------------------------ variables
    def c_of(self, z):
        return np.asarray(z[:self.p], float)

    def state(self, z):
        return self.model.state(self.c_of(z))

    def initial(self, c) -> np.ndarray:
        """Starting variables for coefficients ``c`` (the extras from the state there)."""
        st = self.model.state(c)
        if self.kind is InceptionSpeed:
            a = st.alpha_for_cl(self.job.objective.cl)
            return np.r_[c, float(np.max(-st.cp(a)[self.rows]))]
        if self.kind is WidestRange:
            inside = (st.alpha_for_cl(self.job.objective.cl)
                      if self.job.objective.cl is not None else None)
            rng = free_range(st, self.allowed, inside)
            if rng is None:
                where = (f" at cl {self.job.objective.cl:g}" if inside is not None else "")
                raise InputError(f"the start cavitates at every angle{where} at this depth and "
                                 "speed: no range to widen (lower the speed or the margin)")
            lo, hi = rng
            if hi - lo < _MIN_RANGE_DEG:
                mid = 0.5 * (lo + hi)
                lo, hi = mid - _MIN_RANGE_DEG, mid + _MIN_RANGE_DEG
            return np.r_[c, lo, hi]
        return np.asarray(c, float).copy()

    def bounds(self):
        out = [(None, None)] * self.p
        if self.kind is InceptionSpeed:
            out.append((0.0, None))
        elif self.kind is WidestRange:
            out += [(-15.0, 15.0), (-15.0, 15.0)]
        return out

    # ------------------------------------------------------------------ objective
    def objective(self, z) -> float:
        obj = self.job.objective
        if self.kind is InceptionSpeed:
            return float(z[self.p])
        if self.kind is WidestRange:
            lo, hi = float(z[self.p]), float(z[self.p + 1])
            if obj.measure == "angle":
                return -SCALES["range_deg"] * (hi - lo)
            st = self.state(z)
            return -SCALES["lift"] * (st.cl(hi) - st.cl(lo))
        return SCALES["drag"] * self.drag.value(self.c_of(z))

    def objective_grad(self, z) -> np.ndarray:
        obj = self.job.objective
        g = np.zeros(self.p + self.n_extra)
        if self.kind is InceptionSpeed:
            g[self.p] = 1.0
            return g
        if self.kind is WidestRange:
            lo, hi = float(z[self.p]), float(z[self.p + 1])
            if obj.measure == "angle":
                g[self.p], g[self.p + 1] = SCALES["range_deg"], -SCALES["range_deg"]
                return g
            st = self.state(z)
            dh, dh_a = st.cl_derivatives(hi)
            dl, dl_a = st.cl_derivatives(lo)
            g[:self.p] = -SCALES["lift"] * (dh - dl)
            g[self.p], g[self.p + 1] = SCALES["lift"] * dl_a, -SCALES["lift"] * dh_a
            return g
        g[:self.p] = SCALES["drag"] * self.drag.gradient(self.c_of(z))
        return g

    # ------------------------------------------------------------------ constraints
    def _linear_constraints(self):
        """(G, h) of the linear geometric constraints G c >= h, scaled."""
        rows, rhs = [], []
        f = self.form
        for lim in self.job.thickness:
            lo, hi = _inside(lim.minimum, lim.maximum, ALLOWANCE["thickness"])
            gm, h = ThicknessLimit(lim.x_from, lim.x_to, lo, hi).linear(f)
            rows.append(SCALES["thickness"] * gm)
            rhs.append(SCALES["thickness"] * h)
        area = self.job.area
        if area is not None:
            a0, am = f.area_linear()
            lo, hi = _inside(area.minimum, area.maximum, ALLOWANCE["area"])
            for sign, bound in ((1.0, lo), (-1.0, hi)):
                if bound is not None:
                    rows.append(sign * SCALES["area"] * am[None, :])
                    rhs.append(sign * SCALES["area"] * np.array([bound - a0]))
        if not rows:
            return None
        return np.vstack(rows), np.concatenate(rhs)

    def constraints(self) -> list:
        """SLSQP constraint dictionaries (each ``fun(z) >= 0`` or ``== 0``, with ``jac``)."""
        out = []
        if self._linear is not None:
            gm, h = self._linear

            def lin(z, gm=gm, h=h):
                return gm @ self.c_of(z) - h

            full = np.hstack([gm, np.zeros((len(h), self.n_extra))])
            out.append({"type": "ineq", "fun": lin, "jac": lambda z, full=full: full})
        job = self.job
        if job.leading_edge_radius is not None:
            out.append({"type": "ineq", "fun": self._radius, "jac": self._radius_jac})
        if job.trailing_edge_angle is not None:
            out.append({"type": "ineq", "fun": self._te_angle, "jac": self._te_angle_jac})
        if job.moment is not None:
            out.append({"type": "ineq", "fun": self._moment, "jac": self._moment_jac})
        if self.kind is InceptionSpeed:
            out.append({"type": "ineq", "fun": self._suction_bound,
                        "jac": self._suction_bound_jac})
        elif self.kind is WidestRange:
            out.append({"type": "ineq", "fun": self._range_suction,
                        "jac": self._range_suction_jac})
            out.append({"type": "ineq",
                        "fun": lambda z: np.array([z[self.p + 1] - z[self.p] - _MIN_RANGE_DEG]),
                        "jac": lambda z: np.r_[np.zeros(self.p), -1.0, 1.0][None, :]})
            if job.objective.cl is not None:
                out.append({"type": "ineq", "fun": self._range_contains,
                            "jac": self._range_contains_jac})
        return out

    def _pad(self, grad_c, extra=None):
        g = np.zeros((grad_c.shape[0], self.p + self.n_extra))
        g[:, :self.p] = grad_c
        if extra is not None:
            g[:, self.p:] = extra
        return g

    @staticmethod
    def _bounded(value, grad, lim, scale: float, allowance: float):
        """Values and gradients of ``value >= minimum`` and ``value <= maximum`` (each moved
        inwards by ``allowance``), scaled."""
        lo, hi = _inside(lim.minimum, lim.maximum, allowance)
        vals, rows = [], []
        if lo is not None:
            vals.append(value - lo)
            rows.append(grad)
        if hi is not None:
            vals.append(hi - value)
            rows.append(-grad)
        return scale * np.array(vals), scale * np.array(rows)

    def _radius_parts(self, z):
        k0, km = self.form.nose_slope_linear()
        k = k0 + km @ self.c_of(z)
        end = 0.5 * (self.form.ends[0] + self.form.ends[1])
        return self._bounded(k * k / (2.0 * end), (k / end) * km, self.job.leading_edge_radius,
                             SCALES["radius"], ALLOWANCE["radius"])

    def _radius(self, z):
        return self._radius_parts(z)[0]

    def _radius_jac(self, z):
        return self._pad(self._radius_parts(z)[1])

    def _te_parts(self, z):
        s0, sm = self.form.trailing_edge_slopes_linear()
        s = s0 + sm @ self.c_of(z)
        angle = float(np.degrees(np.arctan(s[1]) - np.arctan(s[0])))
        d = np.degrees(sm[1] / (1.0 + s[1] ** 2) - sm[0] / (1.0 + s[0] ** 2))
        return self._bounded(angle, d, self.job.trailing_edge_angle, SCALES["angle"],
                             ALLOWANCE["angle"])

    def _te_angle(self, z):
        return self._te_parts(z)[0]

    def _te_angle_jac(self, z):
        return self._pad(self._te_parts(z)[1])

    def _moment_values(self, z):
        st = self.state(z)
        a = st.alpha_for_cl(self.job.moment_cl)
        cm = st.cm(a)
        dcm, dcm_da = st.cm_derivatives(a)
        grad = dcm + dcm_da * st.alpha_for_cl_derivative(a)
        return cm, grad

    def _moment(self, z):
        cm, grad = self._moment_values(z)
        return self._bounded(cm, grad, self.job.moment, SCALES["moment"],
                             ALLOWANCE["moment"])[0]

    def _moment_jac(self, z):
        cm, grad = self._moment_values(z)
        return self._pad(self._bounded(cm, grad, self.job.moment, SCALES["moment"],
                                       ALLOWANCE["moment"])[1])

    def _design_cp(self, z):
        """Cp at the design lift and its total derivative (the angle follows the lift)."""
        st = self.state(z)
        a = st.alpha_for_cl(self.job.objective.cl)
        cp = st.cp(a)[self.rows]
        dcp, dcp_da = st.cp_derivatives(a)
        grad = dcp[self.rows] + dcp_da[self.rows, None] * st.alpha_for_cl_derivative(a)[None, :]
        return cp, grad

    def _suction_bound(self, z):
        cp, _ = self._design_cp(z)
        return SCALES["suction"] * (float(z[self.p]) + cp)

    def _suction_bound_jac(self, z):
        _, grad = self._design_cp(z)
        return self._pad(SCALES["suction"] * grad, np.ones((len(grad), 1)))

    def _check_angles(self, z):
        lo, hi = float(z[self.p]), float(z[self.p + 1])
        w = np.linspace(0.0, 1.0, self.job.objective.checks)
        return lo + w * (hi - lo), w

    def _range_suction(self, z):
        st = self.state(z)
        angles, _ = self._check_angles(z)
        return SCALES["suction"] * np.concatenate(
            [self.allowed + st.cp(a)[self.rows] for a in angles])

    def _range_suction_jac(self, z):
        st = self.state(z)
        angles, w = self._check_angles(z)
        blocks = []
        for a, wk in zip(angles, w):
            dcp, dcp_da = st.cp_derivatives(a)
            extra = np.column_stack([(1.0 - wk) * dcp_da[self.rows], wk * dcp_da[self.rows]])
            blocks.append(self._pad(dcp[self.rows], extra))
        return SCALES["suction"] * np.vstack(blocks)

    def _range_contains(self, z):
        st = self.state(z)
        cl = self.job.objective.cl
        lo, hi = float(z[self.p]), float(z[self.p + 1])
        return np.array([cl - st.cl(lo), st.cl(hi) - cl])

    def _range_contains_jac(self, z):
        st = self.state(z)
        lo, hi = float(z[self.p]), float(z[self.p + 1])
        dl, dl_a = st.cl_derivatives(lo)
        dh, dh_a = st.cl_derivatives(hi)
        return np.vstack([self._pad(-dl[None, :], np.array([[-dl_a, 0.0]])),
                          self._pad(dh[None, :], np.array([[0.0, dh_a]]))])

    # ------------------------------------------------------------------ summary
    def violation(self, z) -> float:
        """Largest scaled constraint violation (0 when every constraint holds)."""
        worst = 0.0
        for c in self.constraints():
            v = np.atleast_1d(c["fun"](z))
            if c["type"] == "ineq":
                worst = max(worst, float(np.max(-v, initial=0.0)))
            else:
                worst = max(worst, float(np.max(np.abs(v), initial=0.0)))
        return worst
