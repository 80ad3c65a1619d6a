"""Drag at a design lift from the viscous analysis, with a finite-difference gradient.

The viscous analysis (:func:`panelflow.viscous.solve`) is a Newton iteration of boundary layer,
wake and outer flow; its derivative with respect to the shape is not available in closed form,
so the gradient is a forward difference over the shape coefficients, each perturbed section
solved from the converged state of the unperturbed one (a warm start: two or three Newton
steps). The lift is held: with ``cd`` and ``cl`` both differenced at the fixed angle and once in
the angle,

    d cd / d c |cl = d cd / d c |alpha - (d cd / d alpha) (d cl / d c) / (d cl / d alpha).

The viscous iteration does not converge everywhere (low Reynolds numbers, near maximum lift).
A section whose design point does not converge gets a penalty value (the best converged drag
so far plus 0.01) and a zero gradient, so the optimiser's line search backs off; a perturbation
that does not converge is taken backwards, and when that fails too its gradient component is
left at zero. Every such event is counted and reported (:attr:`DragAtLift.failures`).
"""

from __future__ import annotations

import numpy as np

from panelflow.design.job import LeastDrag
from panelflow.design.model import DesignModel
from panelflow.errors import PanelflowError
from panelflow.flow.surface import ChordLine

__all__ = ["DragAtLift", "viscous_at_lift"]

# Largest change of y (chords) of a finite-difference step of one coefficient.
_STEP_CHORDS = 1e-4
_ANGLE_STEP = 0.05  # degrees
_LIFT_TOLERANCE = 2e-4
_SECANT_STEPS = 8
_PENALTY = 0.01


def viscous_at_lift(system, cl: float, reynolds: float, transition, inviscid_alpha: float,
                    chord_line=None, reference_point=None, warm=None, start_alpha=None):
    """The viscous analysis at the angle where its own lift is ``cl`` (secant iteration).

    Parameters
    ----------
    system : System
        One body with a trailing edge.
    cl, reynolds : float
    transition : panelflow.viscous.Transition
    inviscid_alpha : float
        Angle of the same lift in inviscid flow (degrees, the system's frame): the viscous lift
        is a little lower, so the iteration starts a little above it.
    chord_line, reference_point : optional
        As for :func:`panelflow.viscous.solve`.
    warm : ViscousResult, optional
        A converged result of a nearby section or angle to start from.
    start_alpha : float, optional
        First angle tried (default ``inviscid_alpha`` + 0.3).

    Returns
    -------
    (ViscousResult or None, int)
        The converged result within ``2e-4`` of the lift (None when the iteration fails to
        converge or to reach it) and the number of viscous solutions made.
    """
    from panelflow.viscous import solve

    kw = {"chord_line": chord_line, "reference_point": reference_point}
    a0 = inviscid_alpha + 0.3 if start_alpha is None else float(start_alpha)
    r0 = solve(system, a0, reynolds, transition, warm_start=warm, **kw)
    n = 1
    if not r0.converged:
        return None, n
    if abs(r0.cl - cl) < _LIFT_TOLERANCE:
        return r0, n
    a1 = a0 + 0.3
    r1 = solve(system, a1, reynolds, transition, warm_start=r0, **kw)
    n += 1
    for _ in range(_SECANT_STEPS):
        if not r1.converged:
            return None, n
        if abs(r1.cl - cl) < _LIFT_TOLERANCE:
            return r1, n
        slope = (r1.cl - r0.cl) / (a1 - a0)
        if not np.isfinite(slope) or abs(slope) < 1e-3:
            return None, n
        a0, r0 = a1, r1
        a1 = a1 + (cl - r1.cl) / slope
        r1 = solve(system, a1, reynolds, transition, warm_start=r0, **kw)
        n += 1
    return None, n


class DragAtLift:
    """Viscous drag of the design model's section at a lift, and its gradient.

    Parameters
    ----------
    model : DesignModel
    objective : LeastDrag
    """

    def __init__(self, model: DesignModel, objective: LeastDrag):
        self.model = model
        self.objective = objective
        self.transition = objective.transition()
        self.chord = ChordLine(np.array([0.0, 0.0]), np.array([1.0, 0.0]))
        self.failures = {"design point": 0, "perturbation": 0, "gradient component": 0}
        self.evaluations = 0
        self._cache = {}
        self._best = None
        self._warm = None

    def _solve(self, state, alpha, warm=None):
        from panelflow.viscous import solve

        self.evaluations += 1
        return solve(state.system, float(alpha), self.objective.reynolds, self.transition,
                     warm_start=warm, chord_line=self.chord, reference_point=(0.25, 0.0))

    def point(self, c):
        """(cd, cl, alpha, result) at the design lift for coefficients ``c``, or None when the
        viscous iteration does not converge there."""
        key = np.asarray(c, float).tobytes()
        if key in self._cache:
            return self._cache[key]
        st = self.model.state(c)
        start = None if self._warm is None else self._warm.alpha_deg
        res, n = viscous_at_lift(st.system, self.objective.cl, self.objective.reynolds,
                                 self.transition, st.alpha_for_cl(self.objective.cl), self.chord,
                                 (0.25, 0.0), self._warm, start)
        self.evaluations += n
        out = None if res is None else (res.cd, res.cl, res.alpha_deg, res)
        if out is None:
            self.failures["design point"] += 1
        else:
            self._warm = res
            if self._best is None or out[0] < self._best:
                self._best = out[0]
        self._cache = {key: out}  # one point kept: the optimiser asks for value then gradient
        return out

    def value(self, c) -> float:
        p = self.point(c)
        if p is None:
            return (self._best if self._best is not None else 0.05) + _PENALTY
        return float(p[0])

    def gradient(self, c) -> np.ndarray:
        c = np.asarray(c, float)
        base = self.point(c)
        grad = np.zeros(len(c))
        if base is None:
            return grad
        cd, cl, alpha, res = base
        st = self.model.state(c)
        ra = self._solve(st, alpha + _ANGLE_STEP, res)
        if not ra.converged:
            ra = self._solve(st, alpha - _ANGLE_STEP, res)
            da = -_ANGLE_STEP
        else:
            da = _ANGLE_STEP
        if not ra.converged:
            self.failures["gradient component"] += len(c)
            return grad
        dcd_da = (ra.cd - cd) / da
        dcl_da = (ra.cl - cl) / da
        scale = np.max(np.abs(self.model.motion), axis=0)
        for j in range(len(c)):
            h = _STEP_CHORDS / max(float(scale[j]), 1e-12)
            got = None
            for sign in (1.0, -1.0):
                cj = c.copy()
                cj[j] += sign * h
                try:
                    r = self._solve(self.model.state(cj), alpha, res)
                except PanelflowError:  # a step that breaks the model: try the other way
                    r = None
                if r is not None and r.converged:
                    got = ((r.cd - cd) / (sign * h), (r.cl - cl) / (sign * h))
                    break
                self.failures["perturbation"] += 1
            if got is None:
                self.failures["gradient component"] += 1
                continue
            grad[j] = got[0] - dcd_da * got[1] / dcl_da
        self.model.state(c)  # leave the model at the base point
        return grad
