"""The library's one entry point: ``solve(problem) -> Result``.

Every command and every case file comes through here, so every condition combines with every
output the same way:

    Problem ──> geometry (flap applied) ──> angles (given, or the one for a target lift)
            ──> inviscid solution (free space, or near a plane: one system per angle)
            ──> margins (compressibility, cavitation, the plane's effect) ──> Result

Nothing here prints; the notes on where the model stops are plain sentences in the result.
"""

from __future__ import annotations

import numpy as np

from panelflow.analysis.inviscid import alpha_for_cl, analyse, analyse_near_plane
from panelflow.analysis.problem import Problem
from panelflow.analysis.result import PlaneEffect, Result, ViscousPart
from panelflow.errors import InputError
from panelflow.geometry.outline import SMOOTH

__all__ = ["solve", "model_notes"]

# Beyond these the attached-flow answer is doubtful for ordinary sections (common practice:
# typical sections stall between about 10 and 16 degrees from zero lift, and a suction peak far
# below Cp = -3 usually means leading-edge separation is near).
ALPHA_WARN_DEG = 10.0
CP_MIN_WARN = -3.0
# Target lift near a plane: secant iterations on the angle, and the lift tolerance.
_SECANT_STEPS = 30
_CL_TOLERANCE = 1e-10


def _geometry(problem: Problem):
    """(bodies, chord line or None, flapped section or None, smoothing sentences, the bodies
    before smoothing as solved (flap applied) or None)."""
    bodies, smoothing, given = problem.bodies, (), None
    if problem.smoothing is not None:
        from panelflow.geometry.quality import smoothed

        fits = [smoothed(o, problem.smoothing) for o in bodies]
        given, bodies = bodies, tuple(f.outline for f in fits)
        smoothing = tuple(f.describe() for f in fits)
    if problem.flap is None:
        return bodies, None, None, smoothing, given
    fs = problem.flap.apply(bodies[0])
    if given is not None:  # the comparison bodies get the same flap
        from panelflow.errors import PanelflowError

        try:
            given = (*problem.flap.apply(given[0]).outlines, *given[1:])
        except PanelflowError:
            given = None
    return (*fs.outlines, *bodies[1:]), fs.chord_line, fs, smoothing, given


def _near_plane(problem, bodies, alpha, chord_line, error_estimate):
    return analyse_near_plane(bodies, alpha, problem.operating.plane, n_panels=problem.panels,
                              reference_point=problem.reference_point,
                              error_estimate=error_estimate, chord_line=chord_line)


def _angle_for_lift(problem: Problem, bodies, chord_line) -> float:
    """The angle of attack that gives the target lift coefficient.

    Free space: closed form (the circulation lift is a sinusoid of the angle). Near a plane the
    images move with the angle, so a secant iteration starts from the free-space angle.
    """
    target = problem.operating.target_cl
    a0 = alpha_for_cl(bodies, target, problem.panels, chord_line=chord_line)
    if problem.operating.plane is None:
        return a0

    def lift(a):
        inv, _ = _near_plane(problem, bodies, [a], chord_line, False)
        return float(inv.cl[0]) - target

    a1 = a0 + 0.5
    f0, f1 = lift(a0), lift(a1)
    for _ in range(_SECANT_STEPS):
        if abs(f1) < _CL_TOLERANCE:
            return a1
        if f1 == f0:
            break
        a0, a1, f0 = a1, a1 - f1 * (a1 - a0) / (f1 - f0), f1
        if not np.isfinite(a1) or abs(a1) > 45.0:
            break
        f1 = lift(a1)
    plane = problem.operating.plane
    raise InputError(f"no angle of attack up to 45 deg gives cl = {target:g} near the "
                     f"{plane.label} {plane.distance:g} away")


# A suction peak within this fraction of its own body's chord from that body's nose is a nose
# peak; one within this fraction of the main chord from a plain flap's hinge is the hinge's
# (common practice for where a peak's separation starts).
_NOSE_FRACTION = 0.1
_HINGE_FRACTION = 0.05


def _peak_place(result: Result, k: int, body) -> str:
    """Where a deep suction peak sits, and what separation it threatens, in words."""
    outline = result.outlines[k]
    name = outline.name
    le = np.asarray(outline.leading_edge, float)
    axis = np.asarray(outline.trailing_edge.point, float) - le
    own = float(np.dot(np.asarray(body.xy_cp_min, float) - le, axis) / np.dot(axis, axis))
    several = len(result.outlines) > 1
    flap = result.flap
    if own < _NOSE_FRACTION:
        if k == 0:
            return f"at the leading edge of {name}: leading-edge separation likely"
        return (f"at the nose of {name}, which the slot feeds: separation from that nose "
                "likely (a slot peak, not the main leading edge's)")
    if (flap is not None and flap.kind == "plain" and k == 0
            and abs(body.x_cp_min - flap.hinge) < _HINGE_FRACTION):
        return (f"at the flap hinge of {name} (x/c {body.x_cp_min:.3f}): separation over the "
                "flap likely")
    if several and k == 0 and own > 1.0 - 2.0 * _NOSE_FRACTION:
        return (f"in the slot, on the trailing part of {name} (x/c {body.x_cp_min:.3f}): the "
                "flow through the slot may separate")
    return (f"on {name} at x/c {body.x_cp_min:.3f}: separation behind the peak likely")
def _reynolds(problem: Problem, chord_outline: float) -> tuple[float, str]:
    """The Reynolds number of the viscous analysis and how it was found."""
    op = problem.operating
    if op.reynolds is not None:
        return op.reynolds, "given"
    from panelflow.conditions.fluids import UNITS
    from panelflow.conditions.viscosity import preset_kinematic_viscosity, reynolds_number

    fluid = op.fluid  # at the user's temperature, salinity and altitude
    nu, where = preset_kinematic_viscosity(fluid.name, fluid.temperature_c, fluid.salinity,
                                           fluid.altitude)
    chord_m = op.chord if op.chord is not None else UNITS[op.unit] * chord_outline
    re = reynolds_number(op.speed, chord_m, nu)
    return re, (f"{op.speed:g} m/s x {chord_m:.4g} m chord / kinematic viscosity of {where}")


def _viscous(problem: Problem, inviscid, alpha) -> ViscousPart:
    """The viscous analysis at every angle, warm-started along the sweep."""
    from panelflow.viscous import LIMITS, polar

    reynolds, source = _reynolds(problem, inviscid.chord)
    transition = problem.operating.transition()
    f = inviscid.fine
    sweep = polar(f.system, alpha, reynolds, transition, chord_line=f.chord_line,
                  reference_point=f.reference_point)
    index = {float(a): k for k, a in enumerate(sweep.alpha_deg)}
    order = [index[float(a)] for a in alpha]
    return ViscousPart(reynolds, source, transition, tuple(sweep.results[k] for k in order),
                       np.asarray(sweep.after_failure)[order], LIMITS)


def _viscous_angle_for_lift(problem: Problem, inviscid_angle: float, bodies, chord_line):
    """The angle whose viscous lift is the target: a secant iteration from the inviscid one.

    The boundary layer takes some lift away, so the viscous angle is a little larger; each
    step is a warm-started viscous solve of the same factorised system.
    """
    from panelflow.viscous import solve as viscous_solve

    target = problem.operating.target_cl
    inviscid = analyse(bodies, [inviscid_angle], n_panels=problem.panels,
                       reference_point=problem.reference_point, error_estimate=False,
                       chord_line=chord_line)
    f = inviscid.fine
    reynolds, _ = _reynolds(problem, inviscid.chord)
    transition = problem.operating.transition()

    def lift(a, warm=None):
        r = viscous_solve(f.system, a, reynolds, transition, warm, chord_line=f.chord_line,
                          reference_point=f.reference_point)
        if not r.converged:
            raise InputError(f"the viscous analysis did not converge at {a:.3g} deg while "
                             f"looking for cl = {target:g}: {r.residual:.1e} residual; the "
                             "target may lie beyond the maximum lift this model gives")
        return r.cl - target, r

    a0 = inviscid_angle
    f0, r0 = lift(a0)
    slope = 2.0 * np.pi * np.pi / 180.0  # thin-airfoil lift slope per degree, a first step
    a1 = a0 - f0 / slope
    f1, r1 = lift(a1, r0)
    for _ in range(_SECANT_STEPS):
        if abs(f1) < 1e-6:
            return a1
        if f1 == f0:
            break
        a0, a1, f0 = a1, a1 - f1 * (a1 - a0) / (f1 - f0), f1
        f1, r1 = lift(a1, r1)
    raise InputError(f"no angle of attack gives a viscous cl of {target:g} (the iteration "
                     "stalled)")


def model_notes(result: Result) -> tuple:
    """Plain sentences on where the inviscid model is likely to stop being valid here.

    Every body counts: a suction peak below Cp = -3 on any body is named with the body.
    """
    from panelflow.geometry.check import reversed_note

    notes = [n for n in map(reversed_note, result.outlines) if n]
    names = [o.name for o in result.outlines]
    for name in (o.name for o in result.outlines if o.kind == SMOOTH):
        notes.append(
            f"{name}: no trailing edge, so in this model the body carries no circulation and no "
            "lift at any angle (a real rounded-tail body separates and does lift); its pressures "
            "and moment are those of attached flow")
    notes += list(getattr(result.inviscid, "notes", ()))
    for r in result:
        flags = []
        if abs(r.alpha_deg) > ALPHA_WARN_DEG:
            flags.append(f"|alpha| above {ALPHA_WARN_DEG:g} deg: real sections may be near stall")
        for k, b in enumerate(r.bodies):
            if b.cp_min < CP_MIN_WARN:
                flags.append(f"suction peak Cp {b.cp_min:.2f} {_peak_place(result, k, b)}")
        if flags:
            notes.append(f"alpha {r.alpha_deg:g}: " + "; ".join(flags))
    if result.compressibility is not None:
        notes.extend(result.compressibility.warnings)
    v = result.viscous
    if v is not None:
        for r in v.results:
            if not r.converged:
                from panelflow.viscous.section import unconverged_message

                notes.append(unconverged_message(r))
    if result.cavitation is not None:
        notes.extend(result.cavitation.notes)
    if result.cavitation is not None and np.any(result.cavitation.cavitating):
        a = result.alpha_deg[np.asarray(result.cavitation.cavitating)]
        notes.append(f"cavitation expected at alpha {', '.join(f'{v:g}' for v in a)} deg at "
                     f"{result.cavitation.speed:g} m/s and {result.cavitation.depth:g} m depth")
    return tuple(notes)


def solve(problem: Problem) -> Result:
    """Solve a problem: the inviscid flow and every margin its operating point asks for.

    Parameters
    ----------
    problem : Problem
        The bodies and the operating point (:mod:`panelflow.analysis.problem`).

    Returns
    -------
    Result
        ``inviscid`` always; ``compressibility`` with a Mach number, ``cavitation`` with a depth,
        ``plane`` with a wall or free surface, ``flap`` with a flap.

    Raises
    ------
    PanelflowError
        Unusable geometry (:class:`~panelflow.errors.GeometryError`), a singular system
        (:class:`~panelflow.errors.SolveError`), an unreachable target lift or a body reaching
        the plane.
    """
    if not isinstance(problem, Problem):
        raise InputError(f"solve takes a Problem, got {type(problem).__name__}")
    op = problem.operating
    bodies, chord_line, flapped, smoothing, given = _geometry(problem)
    alpha = (np.array([_angle_for_lift(problem, bodies, chord_line)]) if op.target_cl is not None
             else np.asarray(op.alpha_deg, float))
    if op.target_cl is not None and op.viscous:
        alpha = np.array([_viscous_angle_for_lift(problem, float(alpha[0]), bodies, chord_line)])
    plane = None
    if op.plane is None:
        inviscid = analyse(bodies, alpha, n_panels=problem.panels,
                           reference_point=problem.reference_point,
                           error_estimate=problem.error_estimate, chord_line=chord_line,
                           smoothing=None if given is None else (given, problem.smoothing))
    else:
        from panelflow.flow.images import CAUTIONS

        inviscid, gaps = _near_plane(problem, bodies, alpha, chord_line, problem.error_estimate)
        free = analyse(bodies, alpha, n_panels=problem.panels,
                       reference_point=problem.reference_point, error_estimate=False,
                       chord_line=chord_line)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.where(np.abs(free.cl) > 1e-3, inviscid.cl / free.cl, np.nan)
        line = inviscid.fine.chord_line
        pitch = np.asarray(line.leading_edge, float) + 0.25 * (
            np.asarray(line.trailing_edge, float) - np.asarray(line.leading_edge, float))
        plane = PlaneEffect(op.plane, pitch, gaps, np.asarray(free.cl),
                            np.asarray(free.cm), ratio, CAUTIONS[op.plane.kind])
    compressibility = cavitation = None
    if op.mach is not None:
        from panelflow.conditions.compressibility import correct

        compressibility = correct(inviscid, op.mach, op.mach_rule)
    if op.depth is not None:
        from panelflow.conditions.cavitation import assess_in

        cavitation = assess_in(inviscid, op.depth, op.fluid, speed=op.speed)
    viscous = _viscous(problem, inviscid, alpha) if op.viscous else None
    result = Result(problem, inviscid, compressibility, cavitation, plane, flapped,
                    viscous=viscous)
    return Result(problem, inviscid, compressibility, cavitation, plane, flapped,
                  tuple(f"smoothing: {s}" for s in smoothing) + model_notes(result), viscous)
