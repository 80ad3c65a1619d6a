"""The independent check: a written section read back and analysed afresh.

Nothing of the design's internal state is used here. The section file is read like any other
outline, panelled by the analysis's own rules at twice the design model's panel count, and
solved through the one entry point (:func:`panelflow.analysis.solve.solve` on a
:class:`~panelflow.analysis.problem.Problem`); the geometry is measured by
:mod:`panelflow.geometry.measure`. Every figure a design reports comes from here, for the start
and for the result alike, so a before/after table compares like with like.

Drag comes the same way: the viscous analysis is part of the description (the Reynolds number
and transition settings of :class:`OperatingPoint`), at the angle where the viscous lift is the
design lift.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.analysis.problem import OperatingPoint, Problem
from panelflow.analysis.solve import solve
from panelflow.design.job import InceptionSpeed, Job, LeastDrag, WidestRange
from panelflow.design.targets import CpTarget
from panelflow.errors import PanelflowError
from panelflow.geometry.measure import decompose, measure
from panelflow.geometry.outline import Outline

__all__ = ["Figure", "Check", "job_check", "inverse_check", "surface_cp", "RANGE_STEP_DEG",
           "TOLERANCE"]

RANGE_STEP_DEG = 0.02
_RANGE_SPAN_DEG = 15.0
# How far a measured figure may pass its limit and still count as holding: the measure's own
# uncertainty on a written section (12 significant digits, 801 points; its spline's error,
# tests/test_measure.py and tests/test_design_shape.py), never more. The optimiser keeps a
# little more than this inside each limit (panelflow.design.objectives.ALLOWANCE).
TOLERANCE = {"thickness": 1e-6, "area": 1e-6, "radius": 1e-5, "angle": 0.01, "moment": 0.0}


@dataclass(frozen=True)
class Figure:
    """One reported number.

    Attributes
    ----------
    key : str
        Machine name (JSON, table column).
    label : str
        What it is, in words.
    unit : str
    value : float
        NaN when it could not be computed (``note`` says why).
    limit : str
        The constraint in words ('' for an objective or a plain figure).
    holds : bool or None
        Whether the constraint holds (None: no constraint).
    better : str
        For the objective: ``"higher"`` or ``"lower"``; '' otherwise.
    note : str
    """

    key: str
    label: str
    unit: str
    value: float
    limit: str = ""
    holds: bool | None = None
    better: str = ""
    note: str = ""


@dataclass(frozen=True)
class Check:
    """Every figure of one section, from its written file.

    Attributes
    ----------
    label : str
    panels : int
    figures : tuple of Figure
    result : Result
        The analysis at the design point (for figures).
    notes : tuple of str
    """

    label: str
    panels: int
    figures: tuple
    result: object = field(repr=False, default=None)
    notes: tuple = ()

    def __getitem__(self, key: str) -> Figure:
        for f in self.figures:
            if f.key == key:
                return f
        raise KeyError(key)

    @property
    def constraints_hold(self) -> bool:
        return all(f.holds for f in self.figures if f.holds is not None)

    @property
    def failed(self) -> tuple:
        return tuple(f for f in self.figures if f.holds is False)


def surface_cp(result, index: int = 0):
    """(x_upper, cp_upper, x_lower, cp_lower) of the first body at angle ``index`` of a
    result, in x/c of its chord line, each surface from the nose."""
    body = result[index].bodies[0]
    line = result.fine.chord_line
    z = body.x + 1j * body.y
    x = line.fraction(z)
    i = int(np.argmin(x))
    return x[:i + 1][::-1], body.cp[:i + 1][::-1], x[i:], body.cp[i:]


def _thickness_figures(outline: Outline, limits) -> list:
    if not limits:
        return []
    shape = decompose(outline)
    out = []
    for k, lim in enumerate(limits):
        t = 2.0 * shape.at(shape.half_thickness, lim.stations)
        # 1e-6 relative: the measure's own spline through the written points (12 digits)
        out.append(Figure(f"thickness_{k + 1}", f"thickness at {lim.where()}", "chords",
                          lim.figure_value(t), lim.bounds(),
                          lim.holds(t, TOLERANCE["thickness"])))
    return out


def _geometry_figures(outline: Outline, job: Job) -> list:
    out = []
    m = measure(outline)
    out += _thickness_figures(outline, job.thickness)
    for key, label, unit, value, lim, tol in (
            ("area", "section area", "chords^2", m.area, job.area, TOLERANCE["area"]),
            ("leading_edge_radius", "leading-edge radius", "chords", m.leading_edge_radius,
             job.leading_edge_radius, TOLERANCE["radius"]),
            ("trailing_edge_angle", "trailing-edge angle", "deg", m.trailing_edge_angle_deg,
             job.trailing_edge_angle, TOLERANCE["angle"])):
        out.append(Figure(key, label, unit, float(value),
                          lim.describe() if lim is not None else "",
                          lim.holds(value, tol) if lim is not None else None))
    out.append(Figure("thickness", "maximum thickness", "chords", m.thickness))
    out.append(Figure("thickness_position", "  at x/c", "", m.thickness_position))
    return out


def _free_range(result, allowed: float, inside_alpha):
    """(lo, hi) in degrees of the cavitation-free interval (the one containing
    ``inside_alpha`` when given, else the widest), from a result on an angle grid; None when
    there is none."""
    alpha = np.asarray(result.alpha_deg, float)
    suction = -np.asarray(result.cavitation.section_cp_min, float)
    free = suction <= allowed
    if not np.any(free):
        return None
    edges = np.flatnonzero(np.diff(np.r_[0, free.astype(int), 0]))
    runs = list(zip(edges[::2], edges[1::2] - 1))
    if inside_alpha is not None:
        k = int(np.argmin(np.abs(alpha - inside_alpha)))
        runs = [r for r in runs if r[0] <= k <= r[1]]
        if not runs:
            return None
    lo, hi = max(runs, key=lambda r: r[1] - r[0])

    def edge(i, j):  # linear interpolation of the crossing between grid angles i and j
        s0, s1 = suction[i] - allowed, suction[j] - allowed
        if s1 == s0:
            return float(alpha[i])
        return float(alpha[i] + (alpha[j] - alpha[i]) * (-s0) / (s1 - s0))

    a_lo = edge(lo, lo - 1) if lo > 0 else float(alpha[lo])
    a_hi = edge(hi, hi + 1) if hi < len(alpha) - 1 else float(alpha[hi])
    return a_lo, a_hi


def job_check(outline: Outline, job: Job, panels: int, label: str | None = None) -> Check:
    """Every objective and constraint figure of ``outline`` for ``job``, analysed afresh at
    ``panels`` panels (pass twice the design model's).

    Returns
    -------
    Check
    """
    bodies = [outline]
    obj = job.objective
    cav = job.cavitation
    figures, notes = [], []
    design_result = None
    if isinstance(obj, InceptionSpeed):
        op = OperatingPoint(target_cl=obj.cl, depth=cav.depth, fluid=cav.fluid, speed=cav.speed)
        res = solve(Problem(bodies, op, panels=panels))
        design_result = res
        v = float(res.cavitation.section_inception_speed[0])
        figures.append(Figure("inception_speed", f"inception speed at cl {obj.cl:g}, "
                              f"{cav.depth:g} m deep", "m/s", v, better="higher"))
        figures.append(Figure("cp_min", f"lowest Cp at cl {obj.cl:g}", "",
                              float(res[0].bodies[0].cp_min)))
        figures.append(Figure("alpha", f"angle of attack at cl {obj.cl:g}", "deg",
                              float(res.alpha_deg[0])))
    elif isinstance(obj, WidestRange):
        allowed = cav.sigma() * (1.0 - cav.margin)
        inside = None
        if obj.cl is not None:
            at = solve(Problem(bodies, OperatingPoint(target_cl=obj.cl), panels=panels,
                               error_estimate=False))
            inside = float(at.alpha_deg[0])
            design_result = at
        grid = np.arange(-_RANGE_SPAN_DEG, _RANGE_SPAN_DEG + 1e-9, RANGE_STEP_DEG)
        op = OperatingPoint(alpha_deg=tuple(grid), depth=cav.depth, fluid=cav.fluid,
                            speed=cav.speed)
        res = solve(Problem(bodies, op, panels=panels, error_estimate=False))
        rng = _free_range(res, allowed, inside)
        if inside is not None:
            contains = rng is not None
            figures.append(Figure("contains_cl", f"free of cavitation at cl {obj.cl:g}", "",
                                  float(contains), "yes", contains))
            if rng is None:  # report the widest free range there is, all the same
                rng = _free_range(res, allowed, None)
        if rng is None:
            figures.append(Figure("free_range", "cavitation-free range", "deg", float("nan"),
                                  better="higher", note="cavitates at every angle"))
        else:
            lo, hi = rng
            cl = np.interp([lo, hi], res.alpha_deg, res.cl)
            key, lab, unit, value = (("free_range", "cavitation-free angle range", "deg", hi - lo)
                                     if obj.measure == "angle" else
                                     ("free_lift_range", "cavitation-free lift range", "",
                                      float(cl[1] - cl[0])))
            figures.append(Figure(key, f"{lab}, {cav.speed:g} m/s, {cav.depth:g} m deep", unit,
                                  float(value), better="higher"))
            figures.append(Figure("range_low", "  from angle", "deg", lo))
            figures.append(Figure("range_high", "  to angle", "deg", hi))
            figures.append(Figure("range_cl_low", "  from cl", "", float(cl[0])))
            figures.append(Figure("range_cl_high", "  to cl", "", float(cl[1])))
        if design_result is None:
            design_result = solve(Problem(bodies, OperatingPoint(alpha_deg=(0.0,)),
                                          panels=panels, error_estimate=False))
    else:
        figures += _drag_figures(outline, obj, panels, notes)
        design_result = solve(Problem(bodies, OperatingPoint(target_cl=obj.cl), panels=panels,
                                      error_estimate=False))
    if job.moment is not None:
        res = solve(Problem(bodies, OperatingPoint(target_cl=job.moment_cl), panels=panels))
        cm = float(res.cm[0])
        figures.append(Figure("cm", f"pitching moment at cl {job.moment_cl:g}", "", cm,
                              _moment_text(job.moment), _moment_holds(job.moment, cm)))
    figures += _geometry_figures(outline, job)
    return Check(label or outline.name, int(panels), tuple(figures), design_result,
                 tuple(notes))


def _moment_text(lim) -> str:
    if lim.minimum is not None and lim.maximum is not None:
        return f"{lim.minimum:g} to {lim.maximum:g}"
    return f"at least {lim.minimum:g}" if lim.minimum is not None else f"at most {lim.maximum:g}"


def _moment_holds(lim, cm: float) -> bool:
    ok = True
    if lim.minimum is not None:
        ok &= cm >= lim.minimum - TOLERANCE["moment"]
    if lim.maximum is not None:
        ok &= cm <= lim.maximum + TOLERANCE["moment"]
    return bool(ok)


def _drag_figures(outline: Outline, obj: LeastDrag, panels: int, notes: list) -> list:
    op = OperatingPoint(target_cl=obj.cl, reynolds=obj.reynolds,
                        critical_amplification=obj.critical_amplification,
                        trip_upper=obj.trip_upper, trip_lower=obj.trip_lower)
    res = None
    try:
        # the angle search itself refuses a target it cannot converge at
        part = solve(Problem([outline], op, panels=panels, error_estimate=False)).viscous
        res = part.results[0] if part.converged[0] else None
    except PanelflowError as exc:
        notes.append(f"viscous analysis failed: {exc}")
    if res is None:
        notes.append("the viscous analysis did not converge at the design lift: no drag figure")
        return [Figure("cd", f"drag coefficient at cl {obj.cl:g}", "", float("nan"),
                       better="lower", note="viscous analysis not converged")]
    return [Figure("cd", f"drag coefficient at cl {obj.cl:g}, Re {obj.reynolds:.3g}", "",
                   float(res.cd), better="lower"),
            Figure("alpha", f"angle of attack at viscous cl {obj.cl:g}", "deg",
                   float(res.alpha_deg)),
            Figure("transition_upper", "  transition, upper surface", "x/c",
                   float(res.transition_upper)),
            Figure("transition_lower", "  transition, lower surface", "x/c",
                   float(res.transition_lower))]


def inverse_check(outline: Outline, target: CpTarget, panels: int, alpha_deg=None, cl=None,
                  thickness=(), allowance: float = 0.01, label: str | None = None) -> Check:
    """Cp mismatch against the target and the thickness limits of a section, analysed afresh.

    The mismatch is taken at the analysis's own nodes inside the target's span (the last
    ``allowance`` of the chord left out, as in the design).
    """
    op = OperatingPoint(alpha_deg=(float(alpha_deg),)) if cl is None else OperatingPoint(
        target_cl=float(cl))
    res = solve(Problem([outline], op, panels=panels))
    xu, cu, xl, cl_ = surface_cp(res)
    diffs = []
    for side, x, cp in (("upper", xu, cu), ("lower", xl, cl_)):
        keep = x <= 1.0 - allowance
        t, defined = target.at(x[keep], side)
        diffs.append(cp[keep][defined] - t[defined])
    d = np.concatenate(diffs)
    figures = [Figure("rms_mismatch", "Cp mismatch, root mean square", "",
                      float(np.sqrt(np.mean(d * d))) if len(d) else float("nan")),
               Figure("max_mismatch", "Cp mismatch, largest", "",
                      float(np.max(np.abs(d))) if len(d) else float("nan")),
               Figure("alpha", "angle of attack", "deg", float(res.alpha_deg[0])),
               Figure("cl", "lift coefficient", "", float(res.cl[0])),
               Figure("cm", "pitching moment", "", float(res.cm[0])),
               Figure("cp_min", "lowest Cp", "", float(res[0].bodies[0].cp_min))]
    m = measure(outline)
    figures += _thickness_figures(outline, thickness)
    figures += [Figure("thickness", "maximum thickness", "chords", m.thickness),
                Figure("thickness_position", "  at x/c", "", m.thickness_position),
                Figure("trailing_edge_thickness", "trailing-edge thickness", "chords",
                       m.trailing_edge_thickness),
                Figure("area", "section area", "chords^2", m.area)]
    return Check(label or outline.name, int(panels), tuple(figures), res)
