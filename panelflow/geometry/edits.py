"""Geometry edits: a new outline with one property of a section changed and the others kept.

Each edit is a small frozen object applied to the section's camber-and-thickness form
(:class:`~panelflow.geometry.measure.SectionShape`, thickness and camber measured perpendicular
to the chord, stations ``x = (1 - cos theta)/2``); :func:`reshape` applies a list of them in the
order given, turns the result back into points in the original frame and measures it before
and after (:class:`EditResult`)::

    from panelflow.geometry import edits
    result = edits.reshape(foil, [edits.Thickness(value=0.12),
                                  edits.TrailingEdgeThickness(0.004)])
    result.outline, result.before, result.after

What each edit keeps
--------------------
* :class:`Thickness` scales the half thickness: the camber line and the position of maximum
  thickness stay; the nose radius goes with the square of the factor, the trailing-edge
  thickness with the factor.
* :class:`Camber` scales the camber line: the thickness distribution stays, and with it the
  thickness, nose radius, trailing-edge thickness and area.
* :class:`ThicknessPosition` remaps the thickness distribution along the chord with a smooth
  monotone map of unit slope at both ends (:func:`chord_remap`): the maximum thickness, nose
  radius, trailing-edge thickness and angle and the camber line stay.
* :class:`CamberPosition` applies the same remap to the camber line; the thickness stays.
* :class:`TrailingEdgeThickness` adds ``(t_te' - t_te)/2 * xi^3 (10 - 15 xi + 6 xi^2)`` to the
  half thickness behind ``blend_from`` (default: the position of maximum thickness), a blend
  whose slope and curvature vanish at both of its ends: everything ahead of it and the
  trailing-edge angle stay.
* :class:`LeadingEdgeRadius` adds ``(k' - k) sqrt(x) (1 - x/blend_to)^3`` ahead of
  ``blend_to`` (default: the position of maximum thickness), which turns ``y = k sqrt(x)`` near
  the nose into ``k'`` (radius ``k'^2/2``) and leaves value, slope and curvature at
  ``blend_to`` unchanged: the maximum thickness and everything behind it stay.
* :class:`Blend` takes the weighted mean of two sections' camber and thickness at the same
  stations, in the first section's frame.

Smoothing (:func:`smooth_outline`) works on the points themselves, before the others: a smoothing
spline through the loop, its strength chosen by generalised cross-validation (Craven & Wahba,
Numer. Math. 31, 1979, as implemented by ``scipy.interpolate.make_smoothing_spline``), fitted
against a parameter that advances with the curvature of a first fit, so the nose is not flattened.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.errors import GeometryError, InputError
from panelflow.geometry.measure import (SectionMeasures, SectionShape, _theta_of, decompose,
                                        measure, measure_shape, trailing_edge_kind)
from panelflow.geometry.outline import BLUNT, SHARP, SMOOTH, Outline
from panelflow.geometry.sections import MAX_THICKNESS

__all__ = ["Thickness", "Camber", "ThicknessPosition", "CamberPosition",
           "TrailingEdgeThickness", "LeadingEdgeRadius", "Blend", "EditResult", "reshape",
           "smooth_outline", "chord_remap"]

_MIN_REMAP_SLOPE = 0.05  # a remap flatter than this somewhere squeezes the shape into a kink
_POSITION_RANGE = (0.05, 0.95)
# Largest camber an edit may give, in chords (NACA families go to 0.09; common practice)
MAX_CAMBER = 0.2


def _number(value, what: str, positive: bool = False, allow_zero: bool = True) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, got {value!r}") from None
    if not np.isfinite(v):
        raise InputError(f"{what} must be finite, got {value!r}")
    if positive and (v < 0.0 or (v == 0.0 and not allow_zero)):
        raise InputError(f"{what} must be {'positive' if not allow_zero else 'zero or more'}, "
                         f"got {value!r}")
    return v


def _one_of(scale, value, what: str):
    if (scale is None) == (value is None):
        raise InputError(f"{what}: give either a scale factor or a value, not both or neither")


def _position(value, what: str) -> float:
    v = _number(value, what)
    lo, hi = _POSITION_RANGE
    if not lo <= v <= hi:
        raise InputError(f"{what} must be between {lo} and {hi} of the chord, got {v:g}")
    return v


# ---------------------------------------------------------------------------------- remap
def chord_remap(old: float, new: float):
    """Smooth monotone map ``phi`` of [0, 1] onto itself with ``phi(new) = old``.

    ``phi(0) = 0``, ``phi(1) = 1`` and ``phi' = 1`` at both ends, so a distribution ``f(phi(x))``
    keeps its value and slope at the nose and the tail (a nose ``k sqrt(x)`` keeps ``k``) and
    has at ``new`` what ``f`` has at ``old``. ``phi'`` is quadratic on each side of ``new`` and
    continuous there, with the harmonic mean of the two sides' mean slopes (as in monotone
    cubic interpolation, Fritsch & Carlson, SIAM J. Numer. Anal. 17, 1980).

    Parameters
    ----------
    old, new : float
        Chord stations strictly between 0 and 1.

    Returns
    -------
    callable
        ``phi(x)`` for arrays ``x`` in [0, 1].

    Raises
    ------
    InputError
        When the move is too large for a monotone map of this form (``phi'`` would fall below
        0.05 somewhere).
    """
    d1, d2 = old / new, (1.0 - old) / (1.0 - new)
    s = 2.0 * d1 * d2 / (d1 + d2)
    c1 = 6.0 * (d1 - 0.5 * (1.0 + s))
    c2 = 6.0 * (d2 - 0.5 * (1.0 + s))
    u = np.linspace(0.0, 1.0, 401)
    slope_fore = 1.0 + (s - 1.0) * u + c1 * u * (1.0 - u)
    slope_aft = s + (1.0 - s) * u + c2 * u * (1.0 - u)
    if min(slope_fore.min(), slope_aft.min()) < _MIN_REMAP_SLOPE:
        raise InputError(f"moving from x/c {old:.3g} to {new:.3g} is too far for a smooth "
                         "monotone remap of the chord; move it part of the way")

    def phi(x):
        x = np.asarray(x, dtype=float)
        u = np.clip(x / new, 0.0, 1.0)
        v = np.clip((x - new) / (1.0 - new), 0.0, 1.0)
        fore = new * (u + 0.5 * (s - 1.0) * u * u + c1 * (u * u / 2.0 - u**3 / 3.0))
        aft = old + (1.0 - new) * (s * v + 0.5 * (1.0 - s) * v * v
                                   + c2 * (v * v / 2.0 - v**3 / 3.0))
        return np.where(x <= new, fore, aft)

    return phi


def _remapped(shape: SectionShape, values, old: float, new: float) -> np.ndarray:
    phi = chord_remap(old, new)
    return shape.function(values)(_theta_of(phi(shape.x)))


# ---------------------------------------------------------------------------------- edits
@dataclass(frozen=True)
class Thickness:
    """Scale the thickness distribution by ``scale``, or to a maximum of ``value`` chords."""

    scale: float | None = None
    value: float | None = None

    def apply(self, shape: SectionShape) -> tuple[SectionShape, str]:
        _one_of(self.scale, self.value, "thickness")
        now = measure_shape(shape).thickness
        if self.scale is not None:
            k = _number(self.scale, "thickness scale", positive=True, allow_zero=False)
        else:
            k = _number(self.value, "thickness", positive=True, allow_zero=False) / now
        if k * now > MAX_THICKNESS:
            raise InputError(f"thickness {k * now:.4g} chords: at most {MAX_THICKNESS:g} (beyond, "
                             "the two surfaces no longer make a foil)")
        new = shape.replaced(half_thickness=k * shape.half_thickness)
        return new, f"thickness scaled by {k:.6g} ({now:.5g} -> {k * now:.5g} chords)"


@dataclass(frozen=True)
class Camber:
    """Scale the camber line by ``scale``, or to a maximum camber of ``value`` chords."""

    scale: float | None = None
    value: float | None = None

    def apply(self, shape: SectionShape) -> tuple[SectionShape, str]:
        _one_of(self.scale, self.value, "camber")
        now = measure_shape(shape).camber
        if self.scale is not None:
            k = _number(self.scale, "camber scale")
        else:
            if now == 0.0:
                raise InputError("camber: the section is symmetric, so there is no camber line "
                                 "to scale to a value")
            k = _number(self.value, "camber") / now
        if abs(k * now) > MAX_CAMBER:
            raise InputError(f"camber {k * now:.4g} chords: at most {MAX_CAMBER:g} either way "
                             "(a mean line that bent is no longer a foil section)")
        new = shape.replaced(camber=k * shape.camber)
        return new, f"camber scaled by {k:.6g} ({now:.5g} -> {k * now:.5g} chords)"


@dataclass(frozen=True)
class ThicknessPosition:
    """Move the maximum thickness to chord station ``position`` (x/c)."""

    position: float

    def apply(self, shape: SectionShape) -> tuple[SectionShape, str]:
        new_x = _position(self.position, "position of maximum thickness")
        old_x = measure_shape(shape).thickness_position
        yt = _remapped(shape, shape.half_thickness, old_x, new_x)
        yt[0] = 0.0
        yt[-1] = shape.half_thickness[-1]
        return (shape.replaced(half_thickness=yt),
                f"maximum thickness moved from x/c {old_x:.4f} to {new_x:.4f}")


@dataclass(frozen=True)
class CamberPosition:
    """Move the maximum camber to chord station ``position`` (x/c)."""

    position: float

    def apply(self, shape: SectionShape) -> tuple[SectionShape, str]:
        new_x = _position(self.position, "position of maximum camber")
        m = measure_shape(shape)
        if m.camber == 0.0:
            raise InputError("position of maximum camber: the section is symmetric")
        yc = _remapped(shape, shape.camber, m.camber_position, new_x)
        yc[0], yc[-1] = shape.camber[0], shape.camber[-1]
        return (shape.replaced(camber=yc),
                f"maximum camber moved from x/c {m.camber_position:.4f} to {new_x:.4f}")


def _smootherstep(xi):
    xi = np.clip(xi, 0.0, 1.0)
    return xi**3 * (10.0 + xi * (-15.0 + 6.0 * xi))


@dataclass(frozen=True)
class TrailingEdgeThickness:
    """Set the trailing-edge thickness to ``value`` chords, blended in from ``blend_from``.

    ``value = 0`` closes a blunt trailing edge into a sharp one. ``blend_from`` (x/c) defaults to
    the position of maximum thickness.
    """

    value: float
    blend_from: float | None = None

    def apply(self, shape: SectionShape) -> tuple[SectionShape, str]:
        if shape.kind == SMOOTH:
            raise InputError("trailing-edge thickness: the body has a rounded tail, no trailing "
                             "edge")
        target = _number(self.value, "trailing-edge thickness", positive=True)
        m = measure_shape(shape)
        if target >= m.thickness:
            raise InputError(f"trailing-edge thickness {target:g} must be less than the maximum "
                             f"thickness {m.thickness:.4g}")
        start = (m.thickness_position if self.blend_from is None
                 else _position(self.blend_from, "start of the trailing-edge blend"))
        now = 2.0 * shape.half_thickness[-1]
        blend = _smootherstep((shape.x - start) / (1.0 - start))
        yt = shape.half_thickness + 0.5 * (target - now) * blend
        yt[-1] = 0.5 * target
        ends = shape.ends
        if target == 0.0 and ends[0] != ends[1]:
            mean = 0.5 * (ends[0] + ends[1])  # a sharp edge is one point: square the base first
            ends = (mean, mean)
        new = shape.replaced(half_thickness=yt, ends=ends, kind=BLUNT if target > 0 else SHARP)
        return new, (f"trailing-edge thickness set from {now:.5g} to {target:.5g} chords, "
                     f"blended in from x/c {start:.4f}")


@dataclass(frozen=True)
class LeadingEdgeRadius:
    """Set the nose radius to ``value`` chords, or scale it by ``scale``.

    The change fades out at ``blend_to`` (x/c), by default the position of maximum thickness.
    """

    value: float | None = None
    scale: float | None = None
    blend_to: float | None = None

    def apply(self, shape: SectionShape) -> tuple[SectionShape, str]:
        _one_of(self.scale, self.value, "leading-edge radius")
        m = measure_shape(shape)
        now = m.leading_edge_radius
        if self.scale is not None:
            k = _number(self.scale, "leading-edge radius scale", positive=True)
            if now == 0.0:
                raise InputError("leading-edge radius: the nose is sharp (radius 0), so there "
                                 "is nothing to scale; give a value")
            target = k * now
        else:
            target = _number(self.value, "leading-edge radius", positive=True)
        end = (m.thickness_position if self.blend_to is None
               else _position(self.blend_to, "end of the leading-edge blend"))
        x = shape.x
        dk = np.sqrt(2.0 * target) - np.sqrt(2.0 * now)
        fade = np.clip(1.0 - x / end, 0.0, None) ** 3
        yt = shape.half_thickness + dk * np.sqrt(x) * fade
        return (shape.replaced(half_thickness=yt),
                f"leading-edge radius set from {now:.5g} to {target:.5g} chords, blended out "
                f"at x/c {end:.4f}")


@dataclass(frozen=True)
class Blend:
    """Mix in another section: ``(1 - weight)`` of this one plus ``weight`` of ``other``."""

    other: Outline = field(repr=False)
    weight: float = 0.5

    def apply(self, shape: SectionShape) -> tuple[SectionShape, str]:
        w = _number(self.weight, "blend weight")
        if not 0.0 <= w <= 1.0:
            raise InputError(f"blend weight must be between 0 and 1, got {w:g}")
        other = decompose(self.other, len(shape.theta))
        if (other.kind == SMOOTH) != (shape.kind == SMOOTH):
            raise InputError(f"blend: {self.other.label} and the section differ in kind (one "
                             "has a trailing edge, the other a rounded tail)")
        mix = (lambda a, b: (1.0 - w) * np.asarray(a) + w * np.asarray(b))  # noqa: E731
        new = shape.replaced(camber=mix(shape.camber, other.camber),
                             half_thickness=mix(shape.half_thickness, other.half_thickness),
                             ends=tuple(float(v) for v in mix(shape.ends, other.ends)))
        new = new.replaced(kind=trailing_edge_kind(new))
        return new, f"blended with {self.other.name} at weight {w:g}"


# ---------------------------------------------------------------------------------- smoothing
_CURVATURE_LENGTH = 0.05  # chords: below this radius the curvature sets the fit's parameter
_JOIN_FRACTION = 0.05  # of the loop's parameter: where two free ends are brought together


def _fit(u, pts):
    """Smoothing splines of x(u) and y(u), each point weighted by the stretch of u it stands
    for, so that a cluster of points (a densely drawn nose) is not fitted more closely than the
    rest."""
    from scipy.interpolate import make_smoothing_spline

    gaps = np.diff(u)
    w = 0.5 * (np.r_[gaps[:1], gaps] + np.r_[gaps, gaps[-1:]])
    w = w / w.mean()
    return [make_smoothing_spline(u, pts[:, j], w=w) for j in (0, 1)]


def _curvature_parameter(fits, s, size):
    """A parameter along the fitted curve advancing with arc length / 0.05 c plus turning."""
    fine = np.linspace(s[0], s[-1], 20 * len(s))
    d1 = np.column_stack([f.derivative(1)(fine) for f in fits])
    d2 = np.column_stack([f.derivative(2)(fine) for f in fits])
    speed = np.hypot(*d1.T)
    turn = np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]) / np.maximum(speed, 1e-300) ** 2
    density = speed / (_CURVATURE_LENGTH * size) + turn  # d(parameter)/d(s)
    advance = np.r_[0.0, np.cumsum(0.5 * (density[1:] + density[:-1]) * np.diff(fine))]
    return fine, advance


def _samples_with_nose(fits, lo: float, hi: float, n: int, tail) -> np.ndarray:
    """``n`` parameters evenly spaced from ``lo`` to ``hi``, one of them at the nose.

    The nose (the fitted curve's point farthest from ``tail``, or from the first point for a
    closed loop) is kept as a point, as in published coordinate tables: a nose between two
    points is measured less well (see panelflow.geometry.measure).
    """
    from scipy.optimize import minimize_scalar

    grid = np.linspace(lo, hi, 20 * n)
    curve = np.column_stack([f(grid) for f in fits])
    ref = curve[0] if tail is None else np.asarray(tail, dtype=float)
    i = int(np.argmax(np.hypot(*(curve - ref).T)))
    a, b = grid[max(i - 1, 0)], grid[min(i + 1, len(grid) - 1)]
    nose = minimize_scalar(lambda t: -float(np.hypot(fits[0](t) - ref[0], fits[1](t) - ref[1])),
                           bounds=(a, b), method="bounded", options={"xatol": 1e-12}).x
    k = int(round((nose - lo) / (hi - lo) * (n - 1)))
    k = min(max(k, 2), n - 3)
    return np.r_[np.linspace(lo, nose, k + 1)[:-1], np.linspace(nose, hi, n - k)]


# A cross-validated fit that leaves any input point farther than this (chords) from it has failed
# (no drawing is that noisy; measured: dense tables of 600 points and more gave 0.06 to 0.5).
_GCV_LIMIT = 2e-3
# The fallback smoothing moves no point by more than this many times the measured random scatter.
_BOUNDED_SPAN = 3.0


def _misfit(fits, u, pts) -> float:
    return float(np.max(np.hypot(fits[0](u) - pts[:, 0], fits[1](u) - pts[:, 1])))


def _bounded_smoothing(outline: Outline) -> Outline:
    """Smoothing within ``_BOUNDED_SPAN`` times the points' measured random scatter (the outline
    itself when they show none): :func:`panelflow.geometry.quality.smoothed`."""
    from panelflow.geometry.quality import inspect_input, smoothed

    q = inspect_input(outline)
    if not q.scatter_is_noise or q.scatter <= 1e-6 * outline.chord:
        return outline
    return smoothed(outline, _BOUNDED_SPAN * q.scatter).outline


def smooth_outline(outline: Outline) -> Outline:
    """The outline with the noise in its points smoothed out, as evenly spread new points.

    Two smoothing-spline fits of x and y along the loop, each with the smoothing chosen by
    generalised cross-validation. The second is fitted against a parameter that advances with
    the first fit's turning angle plus its arc length over 0.05 chords, which keeps the nose
    from being flattened; the new points are spaced evenly in that parameter (closer together
    where the outline turns). The two ends of a sharp trailing edge, fitted freely, are brought
    together over the last 5 % of each surface; a rounded body is smoothed round its whole loop.

    Parameters
    ----------
    outline : Outline

    Returns
    -------
    Outline
        As many points as the original, same name and source.
    """
    pts = np.asarray(outline.points, dtype=float)
    closed = outline.kind == SMOOTH
    size = float(outline.chord)
    if closed:  # wrap a quarter of the loop round each end so the seam is an interior point
        ring = pts[:-1]
        wrap = len(ring) // 4
        work = np.vstack([ring[-wrap:], ring, ring[:wrap + 1]])
    else:
        wrap, work = 0, pts
    s = np.r_[0.0, np.cumsum(np.hypot(*np.diff(work, axis=0).T))] / size
    if np.any(np.diff(s) <= 0.0):
        raise GeometryError(f"{outline.label}: repeated consecutive points; cannot smooth")
    first = _fit(s, work)
    fine, advance = _curvature_parameter(first, s, 1.0)
    u = np.interp(s, fine, advance)
    second = _fit(u, work)
    if _misfit(second, u, work) > _GCV_LIMIT * size:
        # the cross-validated fit fails on dense, strongly clustered tables (hundreds of points
        # a few millionths of a chord apart at the nose): smooth within the measured scatter
        return _bounded_smoothing(outline)
    if closed:
        lo, hi = u[wrap], u[wrap + len(ring)]
    else:
        lo, hi = u[0], u[-1]
    uq = _samples_with_nose(second, lo, hi, len(pts), None if closed else 0.5 * (pts[0] + pts[-1]))
    new = np.column_stack([f(uq) for f in second])
    if closed:
        new[-1] = new[0]
    elif outline.kind == SHARP:
        gap = new[-1] - new[0]
        t = (uq - lo) / (hi - lo)
        fade = (np.clip(1.0 - t / _JOIN_FRACTION, 0.0, None)
                - np.clip(1.0 - (1.0 - t) / _JOIN_FRACTION, 0.0, None))
        new = new + 0.5 * gap * fade[:, None]
        new[-1] = new[0]
    return Outline.from_points(new, name=outline.name, source=outline.source)


# ---------------------------------------------------------------------------------- reshape
@dataclass(frozen=True)
class EditResult:
    """A reshaped section with its measures before and after.

    Attributes
    ----------
    outline : Outline
        The new section, in the original's frame.
    before, after : SectionMeasures
        Measured on the original and on the new outline's points.
    steps : tuple of str
        What was done, in order, with the values each step found and set.
    """

    outline: Outline
    before: SectionMeasures
    after: SectionMeasures
    steps: tuple

    def __repr__(self) -> str:
        return f"EditResult({self.outline!r}, {len(self.steps)} steps)"


_EDITS = (Thickness, Camber, ThicknessPosition, CamberPosition, TrailingEdgeThickness,
          LeadingEdgeRadius, Blend)


def reshape(outline: Outline, edits=(), smooth: bool = False, n_points: int | None = None,
            name: str | None = None) -> EditResult:
    """Apply geometry edits to a section and measure it before and after.

    Parameters
    ----------
    outline : Outline
        A foil or fairing whose surfaces each run from the nose to the tail.
    edits : sequence
        Edit objects of this module, applied in the order given.
    smooth : bool, optional
        Smooth the points first (:func:`smooth_outline`).
    n_points : int, optional
        Points of the new outline (cosine-spaced from the nose on each surface); default the
        original's number, at least 201.
    name : str, optional
        Name of the new outline; default the original's with ``, reshaped``.

    Returns
    -------
    EditResult

    Raises
    ------
    InputError
        An edit with an unusable value, or one that makes the surfaces cross.
    GeometryError
        An outline that cannot be measured (see :func:`~panelflow.geometry.measure.measure`).
    """
    edits = list(edits)
    for e in edits:
        if not isinstance(e, _EDITS):
            raise InputError(f"{e!r} is not a geometry edit")
    n = None
    if n_points is not None:
        n = int(n_points)
        if n != n_points or n < 11:
            raise InputError(f"n_points must be a whole number of at least 11, got {n_points!r}")
    before = measure(outline)
    steps = []
    current = outline
    if smooth:
        current = smooth_outline(outline)
        steps.append("points smoothed (smoothing splines, strength by generalised "
                     "cross-validation)")
    stations = (n + 2) // 2 if n is not None else max(101, (len(outline.points) + 2) // 2)
    shape = decompose(current, stations)
    for edit in edits:
        shape, text = edit.apply(shape)
        steps.append(text)
    label = name if name is not None else f"{outline.name}, reshaped"
    try:
        new = shape.outline(name=label,
                            source=f"{outline.label} reshaped: " + "; ".join(steps))
    except GeometryError as exc:
        raise InputError(f"{outline.label}: the edits give no valid section: "
                         f"{str(exc).split(': ', 1)[-1]}") from None
    return EditResult(new, before, measure(new), tuple(steps))
