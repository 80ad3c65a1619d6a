"""Accuracy beyond the two-panel-count estimate: a third panel count, the input's resolution.

What :mod:`panelflow.analysis.inviscid` estimates from ``n`` and ``n/2`` panels is supplemented
here in two ways (:func:`supplement` returns both, with the notes for the result).

A third panel count. A two-grid Richardson estimate vanishes when the two solutions happen to
agree, which happens where the error has not settled into its asymptotic order and changes sign
between the panel counts: measured on a 1 %-thick Karman-Trefftz section at 80 panels, an
estimate of 1.7e-6 against an error of 3.7e-5. The same Richardson estimate from ``n`` and
``0.7 n`` panels (:func:`third_panel_count`) is taken where it is larger; on the seven exact
mapped sections of tests/conftest.py and two of 1 % thickness at 60 to 400 panels this added
half a percent to the median estimate and removed every failure to bracket at 80 panels and up.

The input's own resolution.

The discretisation error estimate of :mod:`panelflow.analysis.inviscid` compares ``n`` and
``n/2`` panels on the *same* curve through the points; it cannot see that the curve itself is
only as good as the points it passes through. A coarse table (35 points, none at the nose), a
noisy one, or one with a mistyped point moves the curve, and with it the answer, by more than
the panels do. The input term estimates that part by solving again, at the coarse panel count,
on other curves the same input would support:

* the curve through every other input point, both halves (Richardson's idea applied to the
  input: see :func:`panelflow.geometry.quality.thinned`);
* the curve through all the points with the centripetal instead of the chord-length parameter
  (another interpolant that fits the points equally well; see
  :func:`panelflow.geometry.curve.chord_parameter`);
* when the points scatter randomly (digitising noise, rounding), a smoothing curve within three
  times that scatter (:func:`panelflow.geometry.quality.smoothed`), its change counted twice,

and takes ``INPUT_FACTOR`` times the largest change against the full input at that panel count:

    input error = 2 * max(|f(variant) - f(full input)|)

The factor 2 was calibrated against exact Karman-Trefftz solutions: over 1920 cases (four
sections, clustered and uniformly spaced inputs of 35 to 200 points at five offsets of the points
from the nose, 100 and 400 panels, three angles) the printed error (panels plus input) bracketed
the exact error of cl and of cm in every case, with factor 1 in 97 % (tests/test_accuracy.py
repeats a sample of these). For clean clustered inputs the half-input change alone converges at
the second order measured there, so the term vanishes as the input is refined. As for the panels,
the estimate is taken component by component on the angle basis, so it does not collapse where
the change of a coefficient happens to cross zero.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from panelflow.conditions.cavitation import PEAK_NOTE_SHARE
from panelflow.errors import GeometryError
from panelflow.geometry.panelling import MIN_PANELS, panelled_like, respline
from panelflow.geometry.panels import Panels
from panelflow.geometry.quality import inspect_input, scatter, smoothed, thinned
from panelflow.flow.solver import factorise
from panelflow.flow.surface import ChordLine, coefficients

INPUT_FACTOR = 2.0
# The third panel count as a share of n; the Richardson constants are those of
# analysis/inviscid.py (order 2 as measured, Roache's safety factor 3 for two grids).
THIRD_SHARE = 0.7
PANEL_ORDER = 2.0
PANEL_SAFETY = 3.0
# Points that scatter randomly by more than NOISE_FLOOR of the chord (more than the rounding of a
# six-decimal table of a unit chord) add one more curve: a smoothing curve within SMOOTHING_SPAN
# times the scatter, whose change counts NOISE_WEIGHT times (the smoothing may move no point by
# more than that, so it removes only part of the scatter's effect). Measured, the printed error
# against the exact (clean) answer: Karman-Trefftz inputs of 60 and 160 points with scatter of
# 1e-5 to 3e-4 chord, 96 % of 195 draws bracketed without this curve, 99.5 % with it (largest
# ratio 1.04); the demo front foil (161 points, 1e-4 and 3e-4 chord), 84 % of 25 solvable draws
# with weight 1 (largest 1.4), all with weight 2 (largest 0.75).
NOISE_FLOOR = 1e-6
SMOOTHING_SPAN = 3.0
NOISE_WEIGHT = 2.0


@dataclass(frozen=True)
class InputTerm:
    """Error estimate due to the input's resolution, per angle.

    Attributes
    ----------
    cl, cm : ndarray, shape (n_alpha,)
        Estimated error of the lift and moment coefficients from the input points alone.
    unit_cl, unit_cm : ndarray, shape (2,), (4,)
        The same, as bounds on the angle-basis components (see
        :func:`panelflow.flow.surface.unit_coefficients`).
    variants : int
        How many other curves were solved (0 when the given points are the panel ends: then the
        panels' own every-other-point coarsening already measures the input's resolution).
    cp_min : ndarray, shape (n_alpha, n_bodies), or None
        Estimated error of each body's lowest Cp from the input points alone (the largest
        change of the suction peak over the same curves, times ``INPUT_FACTOR``); None when
        not estimated.
    """

    cl: np.ndarray
    cm: np.ndarray
    unit_cl: np.ndarray
    unit_cm: np.ndarray
    variants: int
    cp_min: np.ndarray | None = None


@dataclass(frozen=True)
class ErrorTerms:
    """What is added to the two-panel-count error estimate, per angle.

    Attributes
    ----------
    cl, cm : ndarray, shape (n_alpha,)
        The additions: the third panel count's excess over the two-count estimate, plus the
        input's share.
    panels_cl, panels_cm : ndarray
        The third panel count's excess alone (zero where it is not larger).
    inputs : InputTerm
        The input's share.
    cp_min : ndarray, shape (n_alpha, n_bodies), or None
        The additions to the suction peak's two-panel-count estimate: the third panel count's
        excess, the input's share and the smoothing's share.
    smoothing : SmoothingTerm or None
        The smoothing's share, when the bodies were smoothed (:func:`smoothing_error`).
    """

    cl: np.ndarray
    cm: np.ndarray
    panels_cl: np.ndarray
    panels_cm: np.ndarray
    inputs: InputTerm
    cp_min: np.ndarray | None = None
    smoothing: "SmoothingTerm | None" = None


def _angle_weights(alpha_deg):
    a = np.radians(np.asarray(alpha_deg, float))
    ca, sa = np.cos(a), np.sin(a)
    return (np.stack([ca, sa], axis=1),
            np.stack([np.ones_like(a), ca * ca, 2 * ca * sa, sa * sa], axis=1))


def _variant(bodies, coarse_panellings, parameter, alpha, chord_line, reference_point):
    """Surface solution on other curves, panelled like the coarse solve (own chord line unless
    the user fixed one)."""
    from panelflow.flow.surface import evaluate

    panels = Panels.from_panellings([panelled_like(o, pl, parameter)
                                     for o, pl in zip(bodies, coarse_panellings)])
    if chord_line is None:
        main = bodies[0]
        line = ChordLine(main.leading_edge, main.trailing_edge.point.copy())
    else:
        line = ChordLine(*(np.asarray(p, float) for p in chord_line))
    ref = (np.asarray(reference_point, float) if reference_point is not None
           else line.leading_edge + 0.25 * (line.trailing_edge - line.leading_edge))
    return evaluate(factorise(panels), alpha, line, ref)


def input_resolution_error(outlines, coarse_panellings, alpha_deg, coarse, chord_line=None,
                           reference_point=None, scatters=None, coarse_cp_min=None) -> InputTerm:
    """Error estimate due to the input's own resolution (see the module docstring).

    Parameters
    ----------
    outlines : sequence of Outline
        The bodies as given.
    coarse_panellings : sequence of Panelling
        The panellings of the coarse solve; the other curves are panelled at the same arc-length
        fractions. Given points as panel ends (method ``"given"``) add no input term: the
        panels' own every-other-point coarsening already measures the input's resolution.
    alpha_deg : array_like
        Angles of attack.
    coarse : Coefficients
        The coarse solve on the full input (:func:`panelflow.flow.surface.coefficients`).
    chord_line : (leading_edge, trailing_edge), optional
        The reference chord line the user fixed; by default each thinned input takes its own
        (the main body's leading edge moves with the input, and that is part of the error).
    reference_point : (x, y), optional
        The moment reference point the user fixed; by default the quarter chord of the chord
        line in use.
    scatters : sequence of float, optional
        Random scatter of each body's points (0 where there is none), when already measured
        (:func:`panelflow.geometry.quality.scatter`).
    coarse_cp_min : ndarray, shape (n_alpha, n_bodies), optional
        Each body's lowest Cp in the coarse solve: the suction peak's input share is estimated
        beside the coefficients' (the peak is no linear combination of the angle basis, so it
        is compared angle by angle).

    Returns
    -------
    InputTerm
    """
    alpha = np.atleast_1d(np.asarray(alpha_deg, float))
    zero_cp = (None if coarse_cp_min is None
               else np.zeros_like(np.asarray(coarse_cp_min, float)))
    zero = InputTerm(np.zeros(len(alpha)), np.zeros(len(alpha)), np.zeros(2), np.zeros(4), 0,
                     zero_cp)
    if any(pl.method != "spline" for pl in coarse_panellings):
        return zero
    d_cl, d_cm, count = np.zeros(2), np.zeros(4), 0
    d_cp = None if zero_cp is None else zero_cp.copy()
    if scatters is None:
        scatters = [scatter(o) for o in outlines]
    for bodies, parameter, weight in _variants(outlines, scatters):
        try:
            other = _variant(bodies, coarse_panellings, parameter, alpha, chord_line,
                             reference_point)
        except GeometryError:  # too few points left to halve: nothing to compare with
            continue
        d_cl = np.maximum(d_cl, weight * np.abs(other.unit_cl - coarse.unit_cl))
        d_cm = np.maximum(d_cm, weight * np.abs(other.unit_cm - coarse.unit_cm))
        if d_cp is not None:
            d_cp = np.maximum(d_cp, weight * np.abs(other.cp_min - coarse_cp_min))
        count += 1
    if not count:
        return zero
    w_cl, w_cm = _angle_weights(alpha)
    return InputTerm(INPUT_FACTOR * np.abs(w_cl) @ d_cl, INPUT_FACTOR * np.abs(w_cm) @ d_cm,
                     INPUT_FACTOR * d_cl, INPUT_FACTOR * d_cm, count,
                     None if d_cp is None else INPUT_FACTOR * d_cp)


def _variants(outlines, scatters):
    """The other curves the input supports: (bodies, spline parameter, weight) triples."""
    for parity in (0, 1):
        try:
            yield [thinned(o, parity) for o in outlines], "chord", 1.0
        except GeometryError:  # fewer points than an outline needs
            continue
    yield list(outlines), "centripetal", 1.0
    smooth, moved = [], False
    for o, s in zip(outlines, scatters):
        if s > NOISE_FLOOR * o.chord:  # random scatter: the curve through the points
            try:                       # wiggles by about that much
                o = smoothed(o, SMOOTHING_SPAN * s).outline
                moved = True
            except GeometryError:
                pass
        smooth.append(o)
    if moved:
        yield smooth, "chord", NOISE_WEIGHT


# --------------------------------------------------------------------------- smoothing
# The smoothing's own share. A smoothing curve (--smooth-within) moves the points by up to the
# distance asked for, and the answer with them; the input term above, taken on the smoothed
# points, cannot see that. The share is the change of the answer between the smoothed curve and
# a reference curve, solved at the coarse panel count on the same arc-length fractions:
#
#   * the points as given, where they make a simple outline of the same trailing-edge kind
#     (a body whose edge the smoothing found again is opened at that edge, as the smoothing
#     did);
#   * otherwise (the given points cross themselves, say) the smoothing within a half or a
#     quarter of the distance or, where those still cross, within twice it: for a reference at
#     m times the distance the change is scaled by 1 / |m - 1| (the change grows about in
#     proportion to the distance: measured on Karman-Trefftz tables, see
#     tests/test_imperfect_geometry.py);
#
# and counts SMOOTHING_FACTOR times: measured against exact Karman-Trefftz solutions (161- and
# 60-point tables, clean, rounded to 3 or 4 decimals, scatter 1e-4 and 3e-4 chord, smoothing
# within 0.05 % of the chord) factor 1 left some lifts outside the printed estimate, factor 2
# none (tests/test_imperfect_geometry.py).
SMOOTHING_FACTOR = 2.0
_SMOOTHING_REFERENCES = (0.5, 0.25, 2.0)


@dataclass(frozen=True)
class SmoothingTerm:
    """Error estimate due to the smoothing of the input points, per angle.

    Attributes
    ----------
    cl, cm : ndarray, shape (n_alpha,)
    cp_min : ndarray, shape (n_alpha, n_bodies)
        The suction peak's share; NaN unless measured against the points as given (measured on
        Karman-Trefftz tables rounded to 3 decimals or with scatter of 1e-4 chord, whose given
        points cross at the trailing edge: against a smoothing within half the distance the
        change of the peak was a tenth of its error, so no estimate is given there).
    reference : str
        What the smoothed curve was compared with (for the notes); empty when nothing could be
        (then the smoothing's share is unknown and a note says so).
    """

    cl: np.ndarray
    cm: np.ndarray
    cp_min: np.ndarray
    reference: str


def _simple(outlines) -> bool:
    from shapely.geometry import LinearRing

    return all(LinearRing(o.polygon).is_simple for o in outlines)


def _smoothing_references(smoothed_bodies, given, tolerance):
    """(bodies, scale, description) of the curves the smoothed one is compared with."""
    from panelflow.geometry.quality import _opened_at_input_start, smoothed

    raw = []
    for s, g in zip(smoothed_bodies, given):
        if s.kind != g.kind:  # the smoothing found the edge the scatter hid: open it there
            g = _opened_at_input_start(g)
        raw.append(g)
    if all(r is not None for r in raw) and _simple(raw):
        yield raw, 1.0, "the points as given"
    for m in _SMOOTHING_REFERENCES:
        try:
            ref = [smoothed(g, m * tolerance).outline for g in given]
        except GeometryError:
            continue
        if all(r.kind == s.kind for r, s in zip(ref, smoothed_bodies)):
            yield ref, 1.0 / abs(m - 1.0), f"the smoothing within {m * tolerance:.3g}"


def smoothing_error(smoothed_bodies, given, tolerance, coarse_panellings, alpha_deg, coarse,
                    coarse_cp_min, chord_line=None, reference_point=None) -> SmoothingTerm:
    """Error estimate due to the smoothing (see the comment above :data:`SMOOTHING_FACTOR`).

    Parameters
    ----------
    smoothed_bodies : sequence of Outline
        The bodies as solved (smoothed).
    given : sequence of Outline
        The same bodies before smoothing.
    tolerance : float
        The smoothing distance.
    coarse_panellings : sequence of Panelling
        The half-count panellings of the smoothed bodies.
    alpha_deg : array_like
    coarse : Coefficients
        The coarse solve on the smoothed bodies.
    coarse_cp_min : ndarray, shape (n_alpha, n_bodies)
    chord_line, reference_point : optional
        As the user gave them.

    Returns
    -------
    SmoothingTerm
    """
    alpha = np.atleast_1d(np.asarray(alpha_deg, float))
    cp0 = np.asarray(coarse_cp_min, float)
    for bodies, scale, what in _smoothing_references(smoothed_bodies, given, tolerance):
        try:
            other = _variant(bodies, coarse_panellings, "chord", alpha, chord_line,
                             reference_point)
        except GeometryError:
            continue
        f = SMOOTHING_FACTOR * scale
        w_cl, w_cm = _angle_weights(alpha)
        # the suction peak changes as much with a small smoothing as with a larger one (the
        # nose is where the smoothing moves the points most): only the points as given
        # measure its share; against another smoothing it is unknown
        d_cp = (f * np.abs(other.cp_min - cp0) if scale == 1.0 and what.startswith("the points")
                else np.full_like(cp0, np.nan))
        return SmoothingTerm(f * np.abs(w_cl) @ np.abs(other.unit_cl - coarse.unit_cl),
                             f * np.abs(w_cm) @ np.abs(other.unit_cm - coarse.unit_cm),
                             d_cp, what)
    nan = np.full(len(alpha), np.nan)
    return SmoothingTerm(nan, nan, np.full_like(cp0, np.nan), "")


# --------------------------------------------------------------------------- centre of pressure
# The centre of pressure is given only where its own uncertainty, from the error estimates of
# the coefficients, is below this fraction of the chord.
CENTRE_OF_PRESSURE_TOLERANCE = 0.01


def centre_of_pressure(fine, cl_error, cm_error):
    """Centre of pressure where the normal force is large enough to place it, NaN elsewhere.

    ``x_cp = x_ref + cm / cn`` moves by ``(dcm + |x_cp - x_ref| dcn) / |cn|`` for errors ``dcm``
    and ``dcn`` of the coefficients; with ``dcn`` the lift error estimate plus the difference
    between pressure and circulation lift (both measure how well the normal force is known) and
    ``dcm`` the moment error estimate, the centre is given only where that is below
    :data:`CENTRE_OF_PRESSURE_TOLERANCE` of the chord. A pure couple (a body without a trailing
    edge at incidence, a foil at its zero-lift angle) has no centre of pressure.

    Parameters
    ----------
    fine : SurfaceSolution
    cl_error, cm_error : ndarray, shape (n_alpha,)
        The error estimates (panels and input).

    Returns
    -------
    x_cp : ndarray, shape (n_alpha,)
        Chord fraction, NaN where not defined.
    reasons : list of (index, sentence)
    """
    x_cp = np.array(fine.x_cp, float)
    line = fine.chord_line
    x_ref = float(line.fraction(complex(*fine.reference_point)))
    # normal-force coefficient (on the chord line) of the pressure forces: the wind-axis force
    # cd + i cl turned back into the input frame, then onto the chord line's normal
    turn = np.exp(1j * (np.radians(fine.alpha_deg) - np.angle(line.direction)))
    cn = np.imag(turn * (fine.cd_pressure + 1j * fine.cl_pressure))
    d_cn = np.abs(cl_error) + np.abs(fine.cl_pressure - fine.cl_circulation)
    with np.errstate(divide="ignore", invalid="ignore"):
        spread = (np.abs(cm_error) + np.abs(x_cp - x_ref) * d_cn) / np.abs(cn)
    bad = ~np.isfinite(x_cp) | ~(spread <= CENTRE_OF_PRESSURE_TOLERANCE)
    reasons = []
    for i in np.flatnonzero(bad):
        reasons.append((int(i), f"alpha {fine.alpha_deg[i]:g}: no centre of pressure: a normal "
                        f"force coefficient of {cn[i]:.2g} +/- {d_cn[i]:.1g} cannot place it "
                        f"within {100 * CENTRE_OF_PRESSURE_TOLERANCE:g} % of the chord"))
    x_cp[bad] = np.nan
    return x_cp, reasons


# --------------------------------------------------------------------------- notes
# The input points "limit the result" (a note says so) when their share of the printed error
# estimate is at least this many times the panels' share; below it the two are of a size and
# more panels would narrow the estimate about as much as a better table.
INPUT_LIMITS = 2.0
def _resolution_reasons(q, name: str) -> list[str]:
    """Why an input's own resolution is coarse: scatter, rounding, a coarsely drawn nose."""
    c = q.chord
    out = []
    if q.scatter_is_noise and q.scatter > NOISE_FLOOR * c:
        what = (f"coordinates rounded to {q.rounding:g}" if q.scatter_cause == "rounding"
                else "digitising noise")
        out.append(f"the points scatter by {q.scatter:.2g} ({100 * q.scatter / c:.2g} % of "
                   f"chord) about a smooth curve ({what})")
    if q.nose_spacing > q.nose_radius:
        out.append(f"the nose is drawn with points {q.nose_spacing:.2g} apart "
                   f"({100 * q.nose_spacing / c:.2g} % of chord), wider than its radius of about "
                   f"{q.nose_radius:.2g}")
    if q.largest_turn_deg > 30.0:
        out.append(f"the outline turns by up to {q.largest_turn_deg:.0f} deg from one point to "
                   "the next")
    return [f"{name}: {r}" for r in out]


def result_notes(outlines, panellings, alpha_deg, cl_panels, cm_panels, inputs, cp_reasons,
                 qualities=None):
    """Plain sentences on what limits a result, for the ``notes`` of an analysis.

    Parameters
    ----------
    outlines, panellings : sequences of Outline and Panelling
    alpha_deg : ndarray
    cl_panels, cm_panels : ndarray
        The panels' (discretisation) error estimates.
    inputs : InputTerm or None
        The input term (None when the error estimate was switched off).
    cp_reasons : list of (index, sentence)
        From :func:`centre_of_pressure`.
    qualities : sequence of InputQuality, optional
        :func:`panelflow.geometry.quality.inspect_input` of each body, when already measured.

    Returns
    -------
    tuple of str
    """
    from panelflow.geometry.quality import panel_problems

    notes = []  # a body without a trailing edge is noted by the solve, estimate or not
    if qualities is None:
        qualities = [None if o.exact else inspect_input(o) for o in outlines]
    for o, q in zip(outlines, qualities):
        if q is not None:
            notes += q.sentences(o.name)
    notes += list(panel_problems(panellings).notes)
    if inputs is not None and inputs.variants:
        share_cl = np.max(inputs.cl / np.maximum(cl_panels, 1e-300))
        share_cm = np.max(inputs.cm / np.maximum(cm_panels, 1e-300))
        if max(share_cl, share_cm) >= INPUT_LIMITS:
            reasons = [r for o, q in zip(outlines, qualities) if q is not None
                       for r in _resolution_reasons(q, o.name)]
            notes.append(
                "the input points, not the panels, limit the accuracy: of the error estimate "
                f"of cl (up to {np.max(cl_panels + inputs.cl):.2g}) {np.max(inputs.cl):.2g} and "
                f"of cm (up to {np.max(cm_panels + inputs.cm):.2g}) {np.max(inputs.cm):.2g} "
                "come from how loosely the points fix the shape"
                + (" (" + "; ".join(reasons) + ")" if reasons else "")
                + "; a finer table, or smoothing within the drawing's accuracy, would narrow it")
    notes += [text for _, text in cp_reasons]
    return tuple(notes)


# --------------------------------------------------------------------------- suction peak
# The suction peak (each body's lowest Cp, at a node) converges more slowly and less regularly
# than the integrated coefficients: measured on exact Karman-Trefftz sections at 50 to 800
# panels (np.polyfit of log error on log count), orders 1.7 to 2.0 on 10-16 % thick sections
# and an irregular sequence on a 3 %-thick one (tests/test_imperfect_geometry.py). The
# Richardson estimate takes order CP_ORDER, below those, with Roache's factor 3.
CP_ORDER = 1.5
# A suction peak known no better than this fraction of itself is noted, and the cavitation
# inception speed computed from it is given as a range (conditions/cavitation.py).
CP_MIN_NOTE_SHARE = PEAK_NOTE_SHARE
# An estimate above this fraction of the peak itself means the panel counts and the curves the
# input supports disagree by about as much as the peak: the solutions are outside the
# asymptotic range in which a Richardson estimate holds (Roache 1998 uses the grid convergence
# index only there), and no estimate is given (NaN, with a note). Measured: a 2.3 %-thick
# Karman-Trefftz table of 161 points at 4 deg gave Cp -59 +/- 49 against the exact -165;
# every estimate below half the peak bracketed the exact error (tests/test_imperfect_geometry.py).
CP_MIN_UNRESOLVED_SHARE = 0.5


def cp_min_panels(fine_cp_min, coarse_cp_min, ratio):
    """Richardson estimate of the panels' error of each body's lowest Cp.

    Parameters
    ----------
    fine_cp_min, coarse_cp_min : ndarray, shape (n_alpha, n_bodies)
    ratio : float
        Panel-count ratio of the two solutions (> 1).

    Returns
    -------
    ndarray, shape (n_alpha, n_bodies)
    """
    diff = np.abs(np.asarray(fine_cp_min, float) - np.asarray(coarse_cp_min, float))
    return PANEL_SAFETY * diff / (ratio**CP_ORDER - 1.0)


def cp_min_notes(alpha_deg, names, cp_min, cp_min_error) -> list[str]:
    """Sentences for suction peaks whose estimate is above :data:`CP_MIN_NOTE_SHARE`."""
    out = []
    cp, err = np.asarray(cp_min, float), np.asarray(cp_min_error, float)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = err / np.abs(cp)
        err = np.where(share > CP_MIN_UNRESOLVED_SHARE, np.nan, err)
    for i, k in zip(*np.nonzero(~(share <= CP_MIN_NOTE_SHARE))):
        if not np.isfinite(cp[i, k]):
            continue
        if np.isfinite(err[i, k]):
            out.append(f"alpha {alpha_deg[i]:g}: the suction peak of {names[k]}, Cp "
                       f"{cp[i, k]:.3g}, is known only +/- {err[i, k]:.2g} "
                       f"({100 * share[i, k]:.0f} %): more panels or a finer table would "
                       "narrow it")
        else:
            out.append(f"alpha {alpha_deg[i]:g}: the suction peak of {names[k]}, Cp "
                       f"{cp[i, k]:.3g}, has no error estimate: the panels or the input points "
                       "do not resolve it (the solutions compared differ by half the peak or "
                       "more), or a smoothing's share could not be measured against the points "
                       "as given; the true peak may be far lower")
    return out


# --------------------------------------------------------------------------- third panel count
# The third count is solved where the two-count estimate can fail: few panels, or a thin body
# whose nose the panels resolve only at high counts. Measured on the seven exact mapped sections
# of tests/conftest.py (10 to 20 % thick): at 150 panels and more the two-count estimate alone
# bracketed every case; the failures were at 60 to 100 panels and on 1 %-thick sections.
THIRD_BELOW_PANELS = 150
THIRD_BELOW_THICKNESS = 0.06


def needs_third_count(panellings) -> bool:
    """True when the third panel count is needed (see ``THIRD_BELOW_PANELS``)."""
    from panelflow.geometry.quality import body_thickness

    return any(pl.method == "spline" and (pl.n_panels < THIRD_BELOW_PANELS
                                          or body_thickness(pl.outline) < THIRD_BELOW_THICKNESS)
               for pl in panellings)


def third_panel_count(panellings, alpha_deg, fine):
    """Richardson estimate of the panels' error from ``n`` and ``THIRD_SHARE * n`` panels.

    Returns
    -------
    (cl, cm, cp_min) : ndarray each, shapes (n_alpha,), (n_alpha,), (n_alpha, n_bodies); or
        None for given points as panel ends
    """
    from panelflow.flow.surface import evaluate

    if any(pl.method != "spline" for pl in panellings):
        return None
    third = [respline(pl.outline, max(MIN_PANELS, int(round(THIRD_SHARE * pl.n_panels))))
             for pl in panellings]
    other = evaluate(factorise(Panels.from_panellings(third)), alpha_deg, fine.chord_line,
                     fine.reference_point)
    ratio = fine.panels.n_panels / other.panels.n_panels
    scale = PANEL_SAFETY / (ratio**PANEL_ORDER - 1.0)
    w_cl, w_cm = _angle_weights(alpha_deg)
    return (scale * np.abs(w_cl) @ np.abs(fine.unit_cl - other.unit_cl),
            scale * np.abs(w_cm) @ np.abs(fine.unit_cm - other.unit_cm),
            cp_min_panels(fine.cp_min, other.cp_min, ratio))


def supplement(outlines, panellings, halves, fine, coarse, cl_panels, cm_panels,
               chord_line=None, reference_point=None, coarse_cp_min=None, cp_panels=None,
               smoothing=None):
    """The additions to the two-panel-count estimate, and the notes for the result.

    Parameters
    ----------
    outlines, panellings : sequences of Outline and Panelling
        The bodies and their panels at the requested count.
    halves : sequence of Panelling
        The half-count panellings of the estimate.
    fine : SurfaceSolution
    coarse : Coefficients
        The solve on ``halves``.
    cl_panels, cm_panels : ndarray
        The two-panel-count estimate.
    chord_line, reference_point : optional
        As the user gave them to the analysis (None: the defaults).
    coarse_cp_min : ndarray, shape (n_alpha, n_bodies), optional
        Each body's lowest Cp on ``halves``; with it the suction peak gets its estimate too.
    cp_panels : ndarray, shape (n_alpha, n_bodies), optional
        The suction peak's two-panel-count estimate (:func:`cp_min_panels`).
    smoothing : (given outlines, distance), optional
        The bodies before smoothing and the smoothing distance, when they were smoothed.

    Returns
    -------
    (ErrorTerms, tuple of str)
    """
    alpha = fine.alpha_deg
    third = third_panel_count(panellings, alpha, fine) if needs_third_count(panellings) else None
    zero = np.zeros(len(alpha))
    zero_cp = np.zeros_like(np.asarray(fine.cp_min, float))
    cp_panels = zero_cp if cp_panels is None else np.asarray(cp_panels, float)
    p_cl, p_cm = ((zero, zero) if third is None else
                  (np.maximum(third[0] - cl_panels, 0.0), np.maximum(third[1] - cm_panels, 0.0)))
    p_cp = zero_cp if third is None else np.maximum(third[2] - cp_panels, 0.0)
    if all(o.exact for o in outlines):  # points from the defining equations: no input share
        qualities = None
        inputs = InputTerm(zero, zero, np.zeros(2), np.zeros(4), 0, zero_cp)
    else:
        qualities = [inspect_input(o) for o in outlines]
        scatters = [q.scatter if q.scatter_is_noise else 0.0 for q in qualities]
        inputs = input_resolution_error(outlines, halves, alpha, coarse, chord_line,
                                        reference_point, scatters, coarse_cp_min)
    smooth = None
    if smoothing is not None and coarse_cp_min is not None:
        given, distance = smoothing
        smooth = smoothing_error(outlines, given, distance, halves, alpha, coarse, coarse_cp_min,
                                 chord_line, reference_point)
    s_cl, s_cm, s_cp = ((zero, zero, zero_cp) if smooth is None
                        else (smooth.cl, smooth.cm, smooth.cp_min))
    in_cp = zero_cp if inputs.cp_min is None else inputs.cp_min
    terms = ErrorTerms(p_cl + inputs.cl + s_cl, p_cm + inputs.cm + s_cm, p_cl, p_cm, inputs,
                       p_cp + in_cp + s_cp, smooth)
    _, cp_reasons = centre_of_pressure(fine, np.nan_to_num(cl_panels + terms.cl, nan=np.inf),
                                       np.nan_to_num(cm_panels + terms.cm, nan=np.inf))
    notes = result_notes(outlines, panellings, alpha, cl_panels + p_cl, cm_panels + p_cm,
                         inputs, cp_reasons, qualities)
    if smooth is not None:
        if smooth.reference:
            notes += (f"the smoothing's share of the error estimate: up to {np.max(smooth.cl):.2g} "
                      f"in cl, {np.max(smooth.cm):.2g} in cm (the smoothed curve against "
                      f"{smooth.reference}, counted {SMOOTHING_FACTOR:g} times)",)
        else:
            notes += ("the smoothing's share of the error could not be measured (neither the "
                      "points as given nor a smoothing within a smaller distance make a usable "
                      "outline): no error estimate is given",)
    if coarse_cp_min is not None:
        names = [o.name for o in outlines]
        notes += tuple(cp_min_notes(alpha, names, fine.cp_min, cp_panels + terms.cp_min))
    return terms, notes
