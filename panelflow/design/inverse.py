"""Inverse design: the section whose surface Cp best matches a target, under constraints.

Method: Gauss-Newton iteration with Levenberg-Marquardt damping (K. Levenberg, Q. Appl. Math.
2, 1944; D. W. Marquardt, J. SIAM 11, 1963) on the coefficients of the shape form
(:mod:`panelflow.design.shape`), with the Jacobian of Cp from the exact sensitivities of the
panel solution (:mod:`panelflow.design.sensitivity`). Each step solves the linearised least
squares problem under the linearised constraints (a small quadratic programme, scipy's SLSQP):

* closure and the trailing-edge thickness hold by construction (the form keeps both edges);
* thickness limits, ``t(x) >= t_min`` at stations or over a range, are linear in the
  coefficients;
* at a design lift the angle of attack is one more unknown and the lift an equality.

Stages: the panel nodes stay at fixed places along the section during the iteration (so the
solution is a smooth function of the coefficients); between stages the section is panelled
again on its new shape, and the iteration continues until a stage changes nothing.

The target is matched at the panel nodes that lie inside its span; the last
``trailing_edge_allowance`` of the chord is left out, because at a trailing edge of finite angle
the exact speed falls to zero like a fractional power of the distance, which no panel method
resolves at its last nodes (the change of the shape there still follows from the rest).

Measured (``tests/test_design_inverse.py``): a Karman-Trefftz section is recovered from its
exact pressure distribution, starting from a NACA 0012, to within 3.3e-5 chords at 400 panels.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.design.model import DesignModel
from panelflow.design.shape import (DEFAULT_FUNCTIONS, SectionForm, form_of, full_basis,
                                    segment_basis)
from panelflow.design.targets import CpTarget, design_spans
from panelflow.errors import GeometryError, InputError, SolveError
from panelflow.geometry.outline import Outline

__all__ = ["ThicknessLimit", "InverseResult", "inverse_design", "design_form",
           "DEFAULT_DESIGN_PANELS", "TRAILING_EDGE_ALLOWANCE"]

# shape functions of an inverse design (the optimisation takes the same range, design/job.py)
MIN_FUNCTIONS, MAX_FUNCTIONS = 4, 40
DEFAULT_DESIGN_PANELS = 240
TRAILING_EDGE_ALLOWANCE = 0.01
# Second-difference smoothing of the coefficients, relative to the mean diagonal of J^T J: only
# fixes directions the target does not see (a partial target near a segment end).
_SMOOTHING = 1e-7
_RANGE_STATIONS = 41


@dataclass(frozen=True)
class ThicknessLimit:
    """Thickness (``y_upper - y_lower``, chords) within limits from ``x_from`` to ``x_to`` (one
    station when they are equal).

    Attributes
    ----------
    x_from, x_to : float
        Chord fractions, ``0 < x_from <= x_to < 1``.
    minimum, maximum : float or None
        Chords; at least one (equal: the thickness is held there).
    """

    x_from: float
    x_to: float
    minimum: float | None = None
    maximum: float | None = None

    def __post_init__(self):
        a, b = float(self.x_from), float(self.x_to)
        if not (np.isfinite(a) and np.isfinite(b) and 0.0 < a <= b < 1.0):
            raise InputError(f"thickness limit from x/c {a:g} to {b:g}: need 0 < from <= to < 1")
        if self.minimum is None and self.maximum is None:
            raise InputError("a thickness limit needs a minimum, a maximum or both")
        for key in ("minimum", "maximum"):
            v = getattr(self, key)
            if v is None:
                continue
            t = float(v)
            if not (np.isfinite(t) and t > 0.0):
                raise InputError(f"thickness {key} {t:g}: give a positive thickness in chords")
            object.__setattr__(self, key, t)
        if self.minimum is not None and self.maximum is not None and self.minimum > self.maximum:
            raise InputError(f"thickness minimum {self.minimum:g} above its maximum "
                             f"{self.maximum:g}")
        object.__setattr__(self, "x_from", a)
        object.__setattr__(self, "x_to", b)

    @property
    def stations(self) -> np.ndarray:
        if self.x_from == self.x_to:
            return np.array([self.x_from])
        return np.linspace(self.x_from, self.x_to, _RANGE_STATIONS)

    def where(self) -> str:
        return (f"x/c {self.x_from:g}" if self.x_from == self.x_to
                else f"x/c {self.x_from:g} to {self.x_to:g}")

    def bounds(self) -> str:
        if self.minimum is not None and self.maximum is not None:
            if self.minimum == self.maximum:
                return f"equal to {self.minimum:g}"
            return f"{self.minimum:g} to {self.maximum:g}"
        if self.minimum is not None:
            return f"at least {self.minimum:g}"
        return f"at most {self.maximum:g}"

    def describe(self) -> str:
        return f"thickness at {self.where()} {self.bounds()}"

    def figure_value(self, thickness) -> float:
        """The thickness a report shows: the smallest (the largest for a maximum only)."""
        t = np.asarray(thickness, float)
        return float(t.min()) if self.minimum is not None else float(t.max())

    def holds(self, thickness, tolerance: float = 1e-9) -> bool:
        """True when every given thickness is within the limits (to ``tolerance`` chords)."""
        t = np.asarray(thickness, float)
        ok = True
        if self.minimum is not None:
            ok &= bool(np.all(t >= self.minimum - tolerance))
        if self.maximum is not None:
            ok &= bool(np.all(t <= self.maximum + tolerance))
        return ok

    def linear(self, form) -> tuple[np.ndarray, np.ndarray]:
        """(G, h) with the limits as ``G c >= h`` for a form's coefficients."""
        t0, tm = form.thickness_linear(self.stations)
        rows, rhs = [], []
        if self.minimum is not None:
            rows.append(tm)
            rhs.append(self.minimum - t0)
        if self.maximum is not None:
            rows.append(-tm)
            rhs.append(t0 - self.maximum)
        return np.vstack(rows), np.concatenate(rhs)


@dataclass(frozen=True)
class InverseResult:
    """An inverse design.

    Attributes
    ----------
    outline : Outline
        The designed section in the start outline's frame (801 points).
    form : SectionForm
    target : CpTarget
    alpha_deg : float
        Design angle of attack, degrees from the outline's x-axis (given, or found for the
        design lift).
    cl : float
        Lift coefficient of the design model at that angle.
    rms_mismatch, max_mismatch : float
        Cp mismatch at the targeted nodes of the design model (the written file's own check is
        made by :mod:`panelflow.design.check`).
    iterations, stages : int
    converged : bool
        The last stage changed the shape by less than the tolerance.
    limits : tuple of (str, float, float, bool)
        Each thickness limit: description, smallest and largest thickness found, held.
    history : tuple of float
        RMS mismatch after each iteration.
    notes : tuple of str
    """

    outline: Outline
    form: SectionForm = field(repr=False)
    target: CpTarget = field(repr=False)
    alpha_deg: float
    cl: float
    rms_mismatch: float
    max_mismatch: float
    iterations: int
    stages: int
    converged: bool
    limits: tuple = ()
    history: tuple = field(default=(), repr=False)
    notes: tuple = ()

    @property
    def limits_hold(self) -> bool:
        return all(h for *_, h in self.limits)


def design_form(outline: Outline, target: CpTarget, functions: int = DEFAULT_FUNCTIONS,
                trailing_edge_thickness: float | None = None) -> SectionForm:
    """The shape form an inverse design of ``outline`` towards ``target`` works on: the whole
    section (``functions`` shape functions, the start fitted) or, for a target over part of it,
    the start itself plus functions inside the targeted span(s), in proportion to their
    length."""
    n = int(functions)
    if not MIN_FUNCTIONS <= n <= MAX_FUNCTIONS:
        raise InputError(f"{functions} shape functions: give {MIN_FUNCTIONS} to {MAX_FUNCTIONS} "
                         "(more than the panels' sensitivities can tell apart only slows the "
                         "design down)")
    spans = design_spans(target)
    if spans is None:
        form = form_of(outline, full_basis(functions))
        if trailing_edge_thickness is not None:
            t = float(trailing_edge_thickness)
            if not (np.isfinite(t) and 0.0 <= t < 0.1):
                raise InputError(f"trailing-edge thickness {t:g}: give chords, 0 to 0.1")
            kind = "blunt" if t > 0.0 else "sharp"
            form = SectionForm(form.name, form.frame, kind, form.basis, form.coefficients,
                               form.ends if t > 0 else (1.0, 1.0), (0.5 * t, -0.5 * t),
                               source=form.source)
        return form
    if trailing_edge_thickness is not None:
        raise InputError("a trailing-edge thickness can be set only when the target covers the "
                         "whole section (the trailing edge lies outside a partial target)")
    basis = None
    for lo, hi in spans:
        n = max(3, int(round(functions * (hi - lo) / 2.0)))
        part = segment_basis(lo, hi, n)
        basis = part if basis is None else basis.joined(part)
    return form_of(outline, basis, partial=True)


def _second_differences(form: SectionForm) -> np.ndarray:
    rows = []
    offset = 0
    for active in form.basis.active:
        n = len(active)
        for i in range(n - 2):
            r = np.zeros(form.size)
            r[offset + i:offset + i + 3] = (1.0, -2.0, 1.0)
            rows.append(r)
        offset += n
    return np.array(rows).reshape(-1, form.size)


def _kkt(hess, grad0, a_eq, b_eq):
    """argmin 1/2 d^T H d + g^T d subject to A d = b, from the KKT system."""
    n, k = len(grad0), len(b_eq)
    if not k:
        return np.linalg.solve(hess, -grad0)
    kkt = np.zeros((n + k, n + k))
    kkt[:n, :n] = hess
    kkt[:n, n:] = a_eq.T
    kkt[n:, :n] = a_eq
    return np.linalg.solve(kkt, np.r_[-grad0, b_eq])[:n]


def _qp_step(jac, res, reg, g_ineq, h_ineq, a_eq, b_eq):
    """argmin 1/2 |J d + r|^2 + 1/2 d^T R d subject to G d >= h, A d = b.

    The equality-constrained solution when it meets the inequalities; otherwise SLSQP on the
    problem scaled to unit curvature (its stopping test is on absolute changes).
    """
    hess = jac.T @ jac + reg
    grad0 = jac.T @ res
    d = _kkt(hess, grad0, a_eq, b_eq)
    if not len(h_ineq) or np.all(g_ineq @ d >= h_ineq - 1e-12 * (1.0 + np.abs(h_ineq))):
        return d
    from scipy.optimize import minimize

    scale = float(np.mean(np.diag(hess))) or 1.0
    hs, gs = hess / scale, grad0 / scale
    cons = [{"type": "ineq", "fun": lambda d: g_ineq @ d - h_ineq, "jac": lambda d: g_ineq}]
    if len(b_eq):
        cons.append({"type": "eq", "fun": lambda d: a_eq @ d - b_eq, "jac": lambda d: a_eq})
    out = minimize(lambda d: 0.5 * d @ hs @ d + gs @ d, np.zeros(len(gs)),
                   jac=lambda d: hs @ d + gs, constraints=cons, method="SLSQP",
                   options={"maxiter": 500, "ftol": 1e-15})
    return out.x


def _targeted(model: DesignModel, target: CpTarget, allowance: float):
    """Indices of the model nodes the target covers, and their target Cp."""
    x, u = model.x, model.u
    idx, cp = [], []
    for side, on in (("upper", u > 0.0), ("lower", u < 0.0)):
        nodes = np.flatnonzero(on & (x <= 1.0 - allowance))
        values, defined = target.at(x[nodes], side)
        idx.append(nodes[defined])
        cp.append(values[defined])
    idx = np.concatenate(idx)
    if len(idx) < 3:
        raise InputError(f"target {target.name}: fewer than 3 panel nodes lie inside it; give "
                         "a longer target or more panels")
    return idx, np.concatenate(cp)


def inverse_design(outline: Outline, target: CpTarget, alpha_deg: float | None = None,
                   cl: float | None = None, *, panels: int = DEFAULT_DESIGN_PANELS,
                   functions: int = DEFAULT_FUNCTIONS, thickness=(),
                   trailing_edge_thickness: float | None = None,
                   trailing_edge_allowance: float = TRAILING_EDGE_ALLOWANCE,
                   max_iterations: int = 30, stages: int = 4, tolerance: float = 1e-5,
                   name: str | None = None) -> InverseResult:
    """Find the section whose surface Cp matches ``target`` in least squares.

    Parameters
    ----------
    outline : Outline
        The start (sharp or blunt trailing edge). For a target over part of the section,
        everything outside the target's span stays exactly as it is.
    target : CpTarget
    alpha_deg : float, optional
        Design angle of attack in degrees from the outline's x-axis; or
    cl : float, optional
        a design lift coefficient (the angle is then found with the shape).
    panels : int
        Panels of the design model.
    functions : int
        Shape functions over the whole section (a partial target uses its share).
    thickness : sequence of ThicknessLimit
    trailing_edge_thickness : float, optional
        Set a new trailing-edge thickness (chords; whole-section targets only); default: kept.
    trailing_edge_allowance : float
        Chord fraction before the trailing edge left out of the match.
    max_iterations, stages : int
        Gauss-Newton iterations per stage, and stages (the model panelled again each time).
    tolerance : float
        A stage that moves no node by more than this (chords) ends the design (default 1e-5:
        each new panelling moves the answer 30 to 50 times less than the one before,
        measured).
    name : str, optional
        Name of the designed section (default: the start's, with "inverse design").

    Returns
    -------
    InverseResult

    Raises
    ------
    InputError
        Neither or both of ``alpha_deg`` and ``cl``, or a target the nodes do not reach.
    """
    if (alpha_deg is None) == (cl is None):
        raise InputError("give either the design angle of attack or the design lift")
    if not 0.0 <= trailing_edge_allowance < 0.2:
        raise InputError("the trailing-edge allowance must be a chord fraction from 0 to 0.2")
    limits = tuple(thickness)
    for lim in limits:
        if not isinstance(lim, ThicknessLimit):
            raise InputError("thickness limits must be ThicknessLimit objects")
    form = design_form(outline, target, functions, trailing_edge_thickness)
    chord_angle = float(outline.chord_angle_deg)
    # angles inside the design are from the chord line
    alpha = None if alpha_deg is None else float(alpha_deg) + chord_angle
    free_angle = cl is not None
    c = form.coefficients.copy()
    smooth = _second_differences(form)
    history, notes = [], []
    total_iter, converged, stage = 0, False, 0
    model = None
    for stage in range(1, int(stages) + 1):
        model = DesignModel(form.with_coefficients(c), panels)
        idx, cp_t = _targeted(model, target, trailing_edge_allowance)
        y_start = model.nodes(c)[:, 1]
        st = model.state(c)
        if alpha is None:
            alpha = st.alpha_for_cl(float(cl))
        g_rows, h_rows = [], []
        for lim in limits:
            gm, h = lim.linear(form)
            g_rows.append(gm)
            h_rows.append(h)
        g_thk = np.vstack(g_rows) if g_rows else np.zeros((0, form.size))
        h_thk = np.concatenate(h_rows) if h_rows else np.zeros(0)
        mu = 1e-3
        for _ in range(int(max_iterations)):
            cp = st.cp(alpha)[idx]
            r = cp - cp_t
            dcp, dcp_da = st.cp_derivatives(alpha)
            jac = dcp[idx]
            if free_angle:
                jac = np.hstack([jac, dcp_da[idx][:, None]])
            n = jac.shape[1]
            scale = float(np.mean(np.sum(jac * jac, axis=0))) or 1.0
            reg = np.zeros((n, n))
            reg[:form.size, :form.size] = _SMOOTHING * scale * (smooth.T @ smooth)
            g_in = np.hstack([g_thk, np.zeros((len(h_thk), n - form.size))])
            h_in = h_thk - g_thk @ c
            a_eq = np.zeros((0, n))
            b_eq = np.zeros(0)
            if free_angle:
                dcl, dcl_da = st.cl_derivatives(alpha)
                a_eq = np.r_[dcl, dcl_da][None, :]
                b_eq = np.array([float(cl) - st.cl(alpha)])
            cost = float(r @ r)
            accepted = False
            for _ in range(12):
                damp = reg + mu * scale * np.eye(n)
                step = _qp_step(jac, r, damp, g_in, h_in, a_eq, b_eq)
                c_new = c + step[:form.size]
                a_new = alpha + (step[-1] if free_angle else 0.0)
                try:
                    st_new = model.state(c_new)
                except (GeometryError, SolveError):
                    mu *= 10.0
                    continue
                r_new = st_new.cp(a_new)[idx] - cp_t
                if free_angle:  # hold the lift exactly by moving the angle along
                    a_new = st_new.alpha_for_cl(float(cl))
                    r_new = st_new.cp(a_new)[idx] - cp_t
                if float(r_new @ r_new) <= cost * (1.0 + 1e-12) or mu > 1e6:
                    accepted = True
                    break
                mu *= 10.0
            total_iter += 1
            if not accepted:
                notes.append(f"stage {stage}: no step reduced the mismatch further")
                break
            c, alpha, st = c_new, a_new, st_new
            history.append(float(np.sqrt(np.mean(r_new * r_new))))
            mu = max(mu / 10.0, 1e-9)
            if np.max(np.abs(model.motion @ step[:form.size])) < 0.1 * tolerance:
                break
        moved = float(np.max(np.abs(model.nodes(c)[:, 1] - y_start)))
        if moved < tolerance and stage > 1:
            converged = True
            break
    final = form.with_coefficients(c)
    if name:
        final = final.renamed(name)
    r = st.cp(alpha)[idx] - cp_t
    out_limits = []
    for lim in limits:
        t = final.thickness(lim.stations)
        out_limits.append((lim.describe(), float(t.min()), float(t.max()), lim.holds(t)))
    design_name = name or f"{outline.name}, inverse design"
    designed = final.renamed(design_name).outline(name=design_name)
    if not converged:
        notes.append(f"the shape still moved by more than {tolerance:g} chords in the last "
                     f"of {stage} stages")
    return InverseResult(designed, final, target, float(alpha - chord_angle),
                         float(st.cl(alpha)), float(np.sqrt(np.mean(r * r))),
                         float(np.max(np.abs(r))), total_iter, stage, converged,
                         tuple(out_limits), tuple(history), tuple(notes))
