"""Inviscid analysis: outlines in, surface results at any number of angles out, with error estimates.

The inviscid core of :func:`panelflow.analysis.solve.solve`. It composes the one-way chain

    outlines -> check -> panelling -> panels -> factorised system -> surface solution

twice, at ``n`` and about ``n/2`` panels, and estimates the discretisation error of Cl and Cm
from the difference (Richardson extrapolation with a safety factor, Roache's grid convergence
index): ``error = F * |f_n - f_n/2| / (r^p - 1)`` with ``r`` the panel-count ratio, ``p = 2`` the
order of the method (measured in tests/test_convergence.py) and ``F = 3``, Roache's factor for a
two-grid study (P. J. Roache, Verification and Validation in Computational Science and
Engineering, 1998), floored at round-off level.

Near a plane boundary (:func:`analyse_near_plane`) each angle has its own system (the images
move with the angle); the results are joined into the same :class:`Analysis`, in the bodies' own
frame, with a per-angle error estimate. :func:`panelflow.analysis.accuracy.supplement`
adds the excess of a third panel count's estimate and the error due to the input points.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from dataclasses import replace

from panelflow import threads
from panelflow.analysis.accuracy import (CP_MIN_UNRESOLVED_SHARE, ErrorTerms,
                                         centre_of_pressure, cp_min_panels, supplement)
from panelflow.errors import InputError
from panelflow.flow import images
from panelflow.flow.solver import System, factorise
from panelflow.flow.surface import (ChordLine, Coefficients, SurfaceSolution, coefficients,
                                    evaluate, stack)
from panelflow.geometry import check
from panelflow.geometry.panelling import panel_outline
from panelflow.geometry.panels import Panels
from panelflow.geometry.quality import checked_panellings

DEFAULT_PANELS = 200
ORDER = 2.0
SAFETY_FACTOR = 3.0
ROUND_OFF = 1e-10
ROUND_OFF_PER_PANEL = 1e-12


@dataclass(frozen=True)
class AngleResult:
    """All reported quantities of one angle of attack (totals and per body).

    Coefficients use the reference chord; moments are about the reference point, positive
    nose-up. ``surface`` holds, per body, the node coordinates and their Cp.
    """

    alpha_deg: float
    cl: float
    cl_pressure: float
    cl_circulation: float
    cd_pressure: float
    cm: float
    cl_error_estimate: float
    cm_error_estimate: float
    x_center_of_pressure: float
    bodies: tuple = field(repr=False)

    def __repr__(self) -> str:
        return (f"AngleResult(alpha={self.alpha_deg:g} deg, cl={self.cl:.5f} "
                f"+/- {self.cl_error_estimate:.1e}, cm={self.cm:.5f} +/- "
                f"{self.cm_error_estimate:.1e}, cd_pressure={self.cd_pressure:.1e})")


@dataclass(frozen=True)
class BodyAngleResult:
    """One body at one angle: pressure-integrated coefficients, extremes and surface Cp."""

    name: str
    cl: float
    cd_pressure: float
    cm: float
    cl_circulation: float
    cp_min: float
    x_cp_min: float
    xy_cp_min: tuple
    stagnation_xy: tuple
    x_stagnation: float
    cp_base: float
    x: np.ndarray = field(repr=False)
    y: np.ndarray = field(repr=False)
    cp: np.ndarray = field(repr=False)
    cp_min_error_estimate: float = float("nan")


def _error(weights, fine_units, coarse_units, ratio):
    """Richardson estimate bounded component by component on the angle basis.

    A coefficient is a fixed combination of a few angle-independent components (see
    :func:`~panelflow.flow.surface.unit_coefficients`); summing the absolute changes of the
    components keeps the estimate from collapsing at the angle where the changes cancel.
    """
    diff = np.abs(np.asarray(fine_units) - np.asarray(coarse_units))
    est = SAFETY_FACTOR * (np.abs(weights) @ diff) / (ratio**ORDER - 1.0)
    return np.maximum(est, ROUND_OFF)


@dataclass(frozen=True)
class Analysis:
    """Solution of one geometry at several angles, with its discretisation error estimate.

    Attributes
    ----------
    outlines : tuple of Outline
    panellings : tuple of Panelling
    fine : SurfaceSolution
        Results at the requested panel count (these are the reported numbers). Near a plane
        its ``cl_circulation`` is the generalised (Lagally) circulation lift and each angle has
        its own system (``fine.system_at(i)``).
    coarse : Coefficients or None
        Coefficients at about half the panels (for the error estimate); None when switched off.
    cl_error_estimate, cm_error_estimate : ndarray, shape (n_alpha,)
        Discretisation error estimates; computed from ``coarse`` on the angle basis unless given
        (per angle, near a plane). NaN without an estimate.
    extra_error : ErrorTerms or None
        What is added to the two-panel-count estimate: a third panel count's excess and the
        share due to the input points (see :mod:`panelflow.analysis.accuracy`).
    notes : tuple of str
        Plain sentences on what limits the result (see :func:`accuracy.result_notes`).
    x_center_of_pressure : ndarray
        Centre of pressure per angle, NaN where the normal force cannot place it.
    coarse_cp_min : ndarray, shape (n_alpha, n_bodies), or None
        Each body's lowest Cp at about half the panels.
    cp_min_error_estimate : ndarray, shape (n_alpha, n_bodies)
        Error estimate of each body's lowest Cp (the suction peak): the panels' share from
        ``coarse_cp_min`` (:func:`accuracy.cp_min_panels`) plus ``extra_error.cp_min`` (third
        panel count, input points, smoothing). NaN without an estimate.
    """

    outlines: tuple
    panellings: tuple
    fine: SurfaceSolution
    coarse: Coefficients | None = field(repr=False)
    extra_error: ErrorTerms | None = field(default=None, repr=False)
    notes: tuple = ()
    cl_error_estimate: np.ndarray | None = field(default=None, repr=False)
    cm_error_estimate: np.ndarray | None = field(default=None, repr=False)
    coarse_cp_min: np.ndarray | None = field(default=None, repr=False)
    x_center_of_pressure: np.ndarray = field(init=False, repr=False)
    cp_min_error_estimate: np.ndarray = field(init=False, repr=False)

    def __post_init__(self):
        cl_err, cm_err = self.cl_error_estimate, self.cm_error_estimate
        if cl_err is None or cm_err is None:  # else given per angle (near a plane)
            if self.coarse is None:
                cl_err = cm_err = np.full(len(self.fine.alpha_deg), np.nan)
            else:
                f, c = self.fine, self.coarse
                ratio = f.panels.n_panels / c.n_panels
                a = np.radians(f.alpha_deg)
                ca, sa = np.cos(a), np.sin(a)
                cl_err = _error(np.stack([ca, sa], axis=1), f.unit_cl, c.unit_cl, ratio)
                cm_w = np.stack([np.ones_like(a), ca * ca, 2 * ca * sa, sa * sa], axis=1)
                cm_err = _error(cm_w, f.unit_cm, c.unit_cm, ratio)
            if self.extra_error is not None:  # third panel count, input points (accuracy.py)
                cl_err, cm_err = cl_err + self.extra_error.cl, cm_err + self.extra_error.cm
            # round-off grows with the number of panels summed (measured: the zero-lift cl of a
            # symmetric section 2.3e-10 at 400 panels, where a fixed 1e-10 floor failed)
            floor = max(ROUND_OFF, ROUND_OFF_PER_PANEL * self.fine.panels.n_panels)
            cl_err, cm_err = np.maximum(cl_err, floor), np.maximum(cm_err, floor)
        cp_err = np.full(np.shape(self.fine.cp_min), np.nan)
        if self.coarse_cp_min is not None and self.coarse is not None:
            ratio = self.fine.panels.n_panels / self.coarse.n_panels
            cp_err = cp_min_panels(self.fine.cp_min, self.coarse_cp_min, ratio)
            if self.extra_error is not None and self.extra_error.cp_min is not None:
                cp_err = cp_err + self.extra_error.cp_min
            cp_err = np.maximum(cp_err, max(ROUND_OFF, ROUND_OFF_PER_PANEL * self.n_panels))
            unresolved = cp_err > CP_MIN_UNRESOLVED_SHARE * np.abs(self.fine.cp_min)
            cp_err = np.where(unresolved, np.nan, cp_err)
        object.__setattr__(self, "cp_min_error_estimate", np.asarray(cp_err, float))
        object.__setattr__(self, "cl_error_estimate", np.asarray(cl_err, float))
        object.__setattr__(self, "cm_error_estimate", np.asarray(cm_err, float))
        x_cp, _ = centre_of_pressure(self.fine, np.nan_to_num(cl_err), np.nan_to_num(cm_err))
        object.__setattr__(self, "x_center_of_pressure", x_cp)

    @property
    def alpha_deg(self) -> np.ndarray:
        return self.fine.alpha_deg

    @property
    def chord(self) -> float:
        return self.fine.chord_line.length

    @property
    def reference_point(self) -> np.ndarray:
        return self.fine.reference_point

    @property
    def n_panels(self) -> int:
        return self.fine.panels.n_panels

    @property
    def cl(self) -> np.ndarray:
        return self.fine.cl

    @property
    def cm(self) -> np.ndarray:
        return self.fine.cm

    @property
    def cd_pressure(self) -> np.ndarray:
        return self.fine.cd_pressure

    def __len__(self) -> int:
        return len(self.alpha_deg)

    def system_at(self, i: int) -> System:
        """The factorised system of angle number ``i`` (for the field and streamlines)."""
        return self.fine.system_at(i)

    def angle_index(self, alpha_deg: float) -> int:
        """Index of the solved angle equal to ``alpha_deg`` (to 1e-9 deg).

        Raises
        ------
        InputError
            When that angle was not solved.
        """
        a = np.asarray(self.alpha_deg, float)
        hit = np.flatnonzero(np.abs(a - float(alpha_deg)) <= 1e-9)
        if not len(hit):
            raise InputError(f"angle {alpha_deg:g} deg was not solved (solved: "
                             f"{', '.join(f'{v:g}' for v in a[:8])}"
                             f"{', ...' if len(a) > 8 else ''})")
        return int(hit[0])

    def __getitem__(self, i: int) -> AngleResult:
        f = self.fine
        p = f.panels
        cl_err, cm_err = self.cl_error_estimate[i], self.cm_error_estimate[i]
        bodies = []
        chord = self.chord
        for k in range(p.n_bodies):
            nodes = p.body_nodes(k)
            xy = p.nodes[nodes]
            j = int(f.cp_min_node[i, k])
            zs = f.stagnation[i, k]
            bodies.append(BodyAngleResult(
                name=p.names[k], cl=float(f.body_cl[i, k]), cd_pressure=float(f.body_cd[i, k]),
                cm=float(f.body_cm[i, k]),
                cl_circulation=float(-2.0 * f.body_circulation[i, k] / chord),
                cp_min=float(f.cp_min[i, k]), x_cp_min=float(f.x_cp_min[i, k]),
                xy_cp_min=(float(p.nodes[j, 0]), float(p.nodes[j, 1])),
                stagnation_xy=(float(zs.real), float(zs.imag)),
                x_stagnation=float(f.x_stagnation[i, k]), cp_base=float(f.cp_base[i, k]),
                x=xy[:, 0], y=xy[:, 1], cp=f.cp[i, nodes],
                cp_min_error_estimate=float(self.cp_min_error_estimate[i, k])))
        return AngleResult(float(f.alpha_deg[i]), float(f.cl[i]), float(f.cl_pressure[i]),
                           float(f.cl_circulation[i]), float(f.cd_pressure[i]), float(f.cm[i]),
                           float(cl_err), float(cm_err), float(self.x_center_of_pressure[i]),
                           tuple(bodies))

    def __iter__(self):
        return (self[i] for i in range(len(self)))


def default_reference(outlines) -> tuple[ChordLine, np.ndarray]:
    """Reference chord line (the main, i.e. first, body's) and its quarter-chord point."""
    main = outlines[0]
    chord = ChordLine(main.leading_edge, main.trailing_edge.point.copy())
    return chord, main.chord_point(0.25)


def checked_inputs(outlines, alpha_deg) -> tuple[tuple, np.ndarray]:
    """The outlines as a tuple and the angles as a 1-D array, or InputError."""
    outlines = tuple(outlines)
    if not outlines:
        raise InputError("no outline given")
    alpha = np.atleast_1d(np.asarray(alpha_deg, float))
    if alpha.ndim != 1 or not np.all(np.isfinite(alpha)):
        raise InputError("angles of attack must be finite numbers")
    return outlines, alpha


def _reference(outlines, chord_line):
    if chord_line is None:
        return default_reference(outlines)
    le, te = (np.asarray(p, float) for p in chord_line)
    line = ChordLine(le, te)
    if not line.length > 0:
        raise InputError("the reference chord line has zero length")
    return line, le + 0.25 * (te - le)


def build(outlines, n_panels: int | None = DEFAULT_PANELS, error_estimate: bool = False):
    """Check the outlines, panel them and factorise the system.

    ``error_estimate`` also checks the half-count panellings the estimate will solve.

    Returns
    -------
    (panellings, system) : tuple of Panelling, System
    """
    outlines = tuple(outlines)
    check.validate(outlines)
    panellings = checked_panellings(outlines, lambda o: panel_outline(o, n_panels),
                                    halves=error_estimate)
    return panellings, factorise(Panels.from_panellings(panellings))


@threads.blas_single
def analyse(outlines, alpha_deg, n_panels: int | None = DEFAULT_PANELS, reference_point=None,
            error_estimate: bool = True, chord_line=None, smoothing=None) -> Analysis:
    """Solve the flow around one or more bodies at any number of angles of attack.

    Parameters
    ----------
    outlines : sequence of Outline
        The bodies; the first is the main body whose chord is the reference length.
    alpha_deg : float or array_like
        Angles of attack in degrees from the input's x-axis (an outline drawn at incidence keeps
        it).
    n_panels : int or None
        Panels per body on a smooth spline through the points; None keeps the given points.
    reference_point : (x, y), optional
        Moment reference point; default the quarter chord of the main body's chord line.
    error_estimate : bool
        Solve again at half the panels to estimate the discretisation error of Cl and Cm.
    chord_line : (leading_edge, trailing_edge), optional
        Reference chord line; default the main body's (a deflected flap's section uses the
        undeflected chord). The default reference point is its quarter chord.
    smoothing : (given outlines, distance), optional
        When ``outlines`` are smoothing curves (:func:`panelflow.geometry.quality.smoothed`):
        the bodies before smoothing and the distance, for the smoothing's share of the error
        estimate (:func:`panelflow.analysis.accuracy.smoothing_error`).

    Returns
    -------
    Analysis
    """
    outlines, alpha = checked_inputs(outlines, alpha_deg)
    chord, quarter = _reference(outlines, chord_line)
    ref = quarter if reference_point is None else np.asarray(reference_point, float)
    panellings, system = build(outlines, n_panels, error_estimate)
    fine = evaluate(system, alpha, chord, ref)
    if not error_estimate:
        return Analysis(outlines, panellings, fine, None)
    halves = [pl.coarsened() for pl in panellings]
    coarse_system = factorise(Panels.from_panellings(halves))
    coarse = coefficients(coarse_system, alpha, chord, ref)
    coarse_cp_min = evaluate(coarse_system, alpha, chord, ref).cp_min
    two = Analysis(outlines, panellings, fine, coarse, coarse_cp_min=coarse_cp_min)
    cp_panels = cp_min_panels(fine.cp_min, coarse_cp_min, two.n_panels / coarse.n_panels)
    extra, notes = supplement(outlines, panellings, halves, fine, coarse, two.cl_error_estimate,
                              two.cm_error_estimate, chord_line, reference_point, coarse_cp_min,
                              cp_panels, smoothing)
    return Analysis(outlines, panellings, fine, coarse, extra, notes,
                    coarse_cp_min=coarse_cp_min)


def _richardson(fine, coarse, ratio):
    return max(SAFETY_FACTOR * abs(fine - coarse) / (ratio**ORDER - 1.0), ROUND_OFF)


def _plane_angle(panels: Panels, boundary, pitch, alpha: float, chord, ref) -> SurfaceSolution:
    """Solution at one angle near a plane: its own system, Lagally lift as the circulation lift."""
    system = images.factorise(panels, boundary.image(pitch, alpha))
    sol = evaluate(system, [alpha], chord, ref)
    lift = images.lagally_lift(system, alpha)
    return replace(sol, cl_circulation=np.array([2.0 * lift.sum() / chord.length]))


def analyse_near_plane(outlines, alpha_deg, boundary, n_panels: int | None = DEFAULT_PANELS,
                       reference_point=None, error_estimate: bool = True, chord_line=None,
                       pitch_point=None):
    """Solve bodies near a wall or free surface at any number of angles of attack.

    Parameters
    ----------
    outlines, alpha_deg, n_panels, reference_point, error_estimate, chord_line
        As for :func:`analyse`. Results are in the bodies' own frame, as in free space: the
        freestream at ``alpha`` and the plane parallel to it.
    boundary : panelflow.flow.images.Boundary
        The plane, at ``boundary.distance`` from the pitch point normal to the freestream.
    pitch_point : (x, y), optional
        Point the distance is measured from; default the quarter chord of the reference chord
        line.

    Returns
    -------
    (Analysis, clearance)
        ``clearance`` (n_alpha,) is the smallest distance from any body to the plane.

    Raises
    ------
    GeometryError
        A body reaches or crosses the plane at some angle.
    """
    outlines, alpha = checked_inputs(outlines, alpha_deg)
    chord, quarter = _reference(outlines, chord_line)
    ref = quarter if reference_point is None else np.asarray(reference_point, float)
    pitch = quarter if pitch_point is None else np.asarray(pitch_point, float)
    gaps = np.array([images.clearance(outlines, boundary.image(pitch, a), a) for a in alpha])
    check.validate(outlines)
    panellings = checked_panellings(outlines, lambda o: panel_outline(o, n_panels),
                                    halves=error_estimate)
    panels = Panels.from_panellings(panellings)
    sols = [_plane_angle(panels, boundary, pitch, float(a), chord, ref) for a in alpha]
    fine = stack(sols)
    cl_err = cm_err = np.full(len(alpha), np.nan)
    coarse = None
    if error_estimate:
        coarse_panels = Panels.from_panellings([pl.coarsened() for pl in panellings])
        ratio = panels.n_panels / coarse_panels.n_panels
        cs = [_plane_angle(coarse_panels, boundary, pitch, float(a), chord, ref) for a in alpha]
        cl_c = np.array([s.cl_circulation[0] for s in cs])
        cm_c = np.array([s.cm[0] for s in cs])
        cl_err = np.array([_richardson(f, c, ratio) for f, c in zip(fine.cl_circulation, cl_c)])
        cm_err = np.array([_richardson(f, c, ratio) for f, c in zip(fine.cm, cm_c)])
        coarse = Coefficients(coarse_panels.n_panels, alpha, cl_c,
                              np.array([s.cl_pressure[0] for s in cs]),
                              np.array([s.cd_pressure[0] for s in cs]), cm_c,
                              np.full(2, np.nan), np.full(4, np.nan))
        coarse_cp_min = np.array([s.cp_min[0] for s in cs])
    else:
        coarse_cp_min = None
    return Analysis(outlines, panellings, fine, coarse, cl_error_estimate=cl_err,
                    cm_error_estimate=cm_err, coarse_cp_min=coarse_cp_min), gaps


def alpha_for_cl(outlines, target_cl: float, n_panels: int | None = DEFAULT_PANELS,
                 chord_line=None) -> float:
    """Angle of attack in degrees at which the total lift coefficient equals ``target_cl``.

    The circulation lift is exactly ``A cos(alpha) + B sin(alpha)`` (superposition of the two
    unit solutions), so the angle follows in closed form; of the two roots the one nearer zero
    is returned.

    Raises
    ------
    InputError
        When no angle gives that lift (no body with a trailing edge, or ``|target|`` beyond the
        peak of the sinusoid).
    """
    outlines = tuple(outlines)
    chord, quarter = _reference(outlines, chord_line)
    _, system = build(outlines, n_panels)
    unit = evaluate(system, [0.0, 90.0], chord, quarter).cl
    return angle_for_lift(float(unit[0]), float(unit[1]), target_cl)


def angle_for_lift(cl_0: float, cl_90: float, target_cl: float) -> float:
    """The angle (degrees) where ``cl_0 cos(alpha) + cl_90 sin(alpha)`` is ``target_cl``: the
    circulation lift from the lifts at 0 and 90 degrees; of the two roots the one nearer zero.

    Raises
    ------
    InputError
        When no angle gives that lift.
    """
    amp = np.hypot(cl_0, cl_90)
    if amp < 1e-12 or abs(target_cl) > amp:
        raise InputError(f"no angle of attack gives cl = {target_cl:g} (largest |cl| is "
                         f"{amp:.4g}; a body without a trailing edge carries no lift)")
    # a cos x + b sin x = amp sin(x + phi)
    phi = np.arctan2(cl_0, cl_90)
    base = np.arcsin(target_cl / amp)
    roots = np.array([base - phi, np.pi - base - phi])
    roots = (roots + np.pi) % (2.0 * np.pi) - np.pi
    return float(np.degrees(roots[np.argmin(np.abs(roots))]))
