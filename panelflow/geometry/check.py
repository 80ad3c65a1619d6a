"""Geometry check of outlines with shapely: what ``panelflow check`` reports.

An outline is usable when its loop is closed (true by construction of :class:`Outline`), simple
(no self-intersection), encloses a non-zero area, has enough points, does not overlap any other
body of the same analysis, is not thinner than the solver handles, and its panels (on the smooth
curve through the points, at the solve's default count and at half of it) neither cross nor fold
back. The report also measures how well the points define the shape (scatter, spacing, the nose,
doubtful points; see :mod:`panelflow.geometry.quality`).
"""

from __future__ import annotations

from dataclasses import dataclass

import re

import numpy as np
import shapely
from shapely.geometry import LinearRing, Polygon
from shapely.validation import explain_validity

from panelflow.errors import GeometryError
from panelflow.geometry import quality
from panelflow.geometry.outline import MIN_POINTS, SMOOTH, Outline
from panelflow.geometry.panelling import respline


@dataclass(frozen=True)
class OutlineReport:
    """Facts about one outline, as printed by ``panelflow check``.

    Attributes
    ----------
    name, source : str
    n_points : int
    trailing_edge : str
        ``"sharp"``, ``"blunt"`` or ``"none"``.
    trailing_edge_gap : float
    trailing_edge_angle_deg : float
        Included angle between the surfaces at the trailing edge.
    leading_edge, trailing_edge_point : tuple of float
    chord : float
    chord_angle_deg : float
        Incidence of the chord line to the x-axis, positive nose-up.
    area : float
    max_thickness : float
        Largest thickness normal to the chord line, as a fraction of the chord.
    problems : tuple of str
        Empty when the outline is usable.
    scatter : float
        Typical distance of a point from the smooth curve through its neighbours (outline units).
    scatter_is_noise : bool
        The scatter is random (digitising, rounding) rather than the curve bending between
        coarse points.
    scatter_cause : str
        ``"rounding"``, ``"noise"`` or ``"bending"`` (see ``InputQuality.scatter_cause``).
    rounding : float or None
        Decimal step all coordinates are rounded to.
    largest_spacing, nose_spacing, nose_radius : float
        Longest gap between neighbouring points, the gap at the nose and the nose radius of the
        curve through the points (outline units).
    largest_turn_deg : float
        Largest change of direction from one point to the next.
    panels : int
        Panel count the panelled geometry was checked at (and half of it).
    warnings : tuple of str
        An outline drawn backwards (:func:`reversed_note`), doubtful (probably mistyped) points
        with their input lines, and panel spacing notes.
    """

    name: str
    source: str
    n_points: int
    trailing_edge: str
    trailing_edge_gap: float
    trailing_edge_angle_deg: float
    leading_edge: tuple
    trailing_edge_point: tuple
    chord: float
    chord_angle_deg: float
    area: float
    max_thickness: float
    problems: tuple
    scatter: float = float("nan")
    scatter_is_noise: bool = False
    scatter_cause: str = ""
    rounding: float | None = None
    largest_spacing: float = float("nan")
    nose_spacing: float = float("nan")
    nose_radius: float = float("nan")
    largest_turn_deg: float = float("nan")
    panels: int = 0
    warnings: tuple = ()

    @property
    def ok(self) -> bool:
        return not self.problems


# A chord line turned more than this from the x-axis (the freestream's direction at zero angle)
# puts the trailing edge upstream of the leading edge: the outline is drawn backwards. A user
# may mean it (a section run tail-first), so this is a warning, not a refusal.
REVERSED_BEYOND_DEG = 90.0


def reversed_note(outline: Outline) -> str | None:
    """A warning sentence when the outline's trailing edge lies upstream of its leading edge.

    A body without a trailing edge never is (its leading edge is the upstream end of its
    longest extent).

    Returns
    -------
    str or None
    """
    if outline.kind == SMOOTH or abs(outline.chord_angle_deg) <= REVERSED_BEYOND_DEG:
        return None
    return (f"{outline.name}: the trailing edge lies upstream of the leading edge (chord-line "
            f"incidence {outline.chord_angle_deg:.1f} deg, beyond +/-{REVERSED_BEYOND_DEG:g}): "
            "the outline is drawn backwards, so the flow meets the trailing edge first and the "
            "results are those of the section run tail-first; if that is not meant, mirror the "
            "x coordinates (x to -x)")


def _polygon(outline: Outline) -> Polygon:
    return Polygon(outline.polygon)


def _thickness(outline: Outline) -> float:
    """Largest extent normal to the chord line at one chordwise station, over the chord."""
    le, te = outline.leading_edge, outline.trailing_edge.point
    c = outline.chord
    e = (te - le) / c
    n = 2.0 * c * np.array([-e[1], e[0]])
    stations = le + np.linspace(0.0, c, 201)[1:-1, None] * e
    cuts = shapely.intersection(_polygon(outline), shapely.linestrings(
        np.stack([stations - n, stations + n], axis=1)))
    return float(np.max(shapely.length(cuts))) / c


def _problems(outline: Outline) -> list[str]:
    problems = []
    ring = LinearRing(outline.polygon)
    if len(outline.polygon) < MIN_POINTS - 1:
        problems.append(f"only {len(outline.polygon)} distinct points; at least {MIN_POINTS} needed")
    if not ring.is_simple:
        # explain_validity names the first crossing as "Self-intersection[x y]"
        why = explain_validity(Polygon(outline.polygon))
        where = re.search(r"\[([-+\d.eE]+) ([-+\d.eE]+)\]", why)
        problems.append("the outline crosses itself" + (
            f" near ({float(where[1]):.6g}, {float(where[2]):.6g})" if where else ""))
    area = abs(outline.area)
    if area <= 1e-12 * outline.chord**2:
        problems.append("the outline encloses no area")
    return problems


def inspect(outline: Outline, n_panels: int = 200) -> OutlineReport:
    """Report on one outline; problems are listed rather than raised.

    Parameters
    ----------
    outline : Outline
    n_panels : int
        Panel count at which the panelled geometry is checked (with half of it, as the solve's
        error estimate uses); the solve's default.
    """
    problems = _problems(outline)
    te = outline.trailing_edge
    area = abs(outline.area)
    thick = _thickness(outline) if not problems else float("nan")
    backwards = reversed_note(outline)
    extra = {} if backwards is None else {"warnings": (backwards,)}
    if not problems:
        problems += quality.thin_problems([outline])
    if not problems:
        q = quality.inspect_input(outline)
        warnings = [p.describe(outline.chord) for p in q.doubtful]
        try:
            fine = respline(outline, n_panels)
            for pls in ((fine,), (fine.coarsened(),)):
                found = quality.panel_problems(pls)
                problems += [p.split(": ", 1)[-1] for p in found.problems]
                warnings += [w.split(": ", 1)[-1] for w in found.notes]
                if found.problems:
                    break
        except GeometryError as exc:
            problems.append(str(exc).split(": ", 1)[-1])
        extra = dict(scatter=q.scatter, scatter_is_noise=q.scatter_is_noise,
                     scatter_cause=q.scatter_cause, rounding=q.rounding,
                     largest_spacing=q.largest_spacing, nose_spacing=q.nose_spacing,
                     nose_radius=q.nose_radius, largest_turn_deg=q.largest_turn_deg,
                     panels=n_panels, warnings=tuple(dict.fromkeys(
                         ([backwards] if backwards else []) + warnings)))
    return OutlineReport(outline.name, outline.source, len(outline.points) - 1, te.kind, te.gap,
                         te.included_angle_deg, tuple(map(float, outline.leading_edge)),
                         tuple(map(float, te.point)), outline.chord, outline.chord_angle_deg,
                         area, thick, tuple(problems), **extra)


def overlaps(outlines) -> list[str]:
    """Messages for every pair of bodies that touch or overlap."""
    polys = [_polygon(o) for o in outlines]
    out = []
    for i in range(len(polys)):
        for j in range(i + 1, len(polys)):
            if polys[i].is_valid and polys[j].is_valid and polys[i].intersects(polys[j]):
                a, b = outlines[i], outlines[j]
                out.append(f"bodies {a.name!r} ({a.source or 'built in'}) and {b.name!r} "
                           f"({b.source or 'built in'}) overlap or touch")
    return out


def validate(outlines) -> None:
    """Raise :class:`GeometryError` naming the first problem of any outline or pair of bodies."""
    for o in outlines:
        problems = _problems(o)
        if problems:
            raise GeometryError(f"{o.label}: {problems[0]}")
    msgs = overlaps(outlines)
    if msgs:
        raise GeometryError(msgs[0])
