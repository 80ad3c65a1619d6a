"""Section measures and the camber-and-thickness form of an outline.

Chord frame
-----------
A body is measured in its chord frame: leading edge at (0, 0), trailing edge at (1, 0), lengths
in chords. The trailing edge is the outline's (the corner, the middle of a blunt base, or the
most downstream point of a rounded tail); the leading edge is the point of a smooth spline
through the outline's points that lies farthest from the trailing edge (between the points, so
it does not depend on where they happen to fall).

Camber and thickness
--------------------
Each surface runs from the leading edge to the trailing edge as a function ``y(x)``: the upper
one (first in panelflow's loop) and the lower one. Thickness and camber are measured
perpendicular to the chord line, the usual way for drawings and coordinate tables (common
practice)::

    camber yc = (y_upper + y_lower) / 2        half thickness yt = (y_upper - y_lower) / 2

at the same ``x``. (NACA sections lay their thickness off normal to the mean line; for a
cambered NACA section the two ways differ by a fraction of a percent of the thickness.) When a
blunt base is not square to the chord, each surface is stretched along x to end at the chord's
end, so that the stations pair up from the nose to the base.

Each surface is a cubic spline in the angle coordinate ``theta``, ``x = (1 - cos theta) / 2``:
with it a round nose (``y ~ sqrt(x)``) and a rounded tail are smooth functions, so the nose
radius comes from the spline's slope at ``theta = 0``: ``y = k sqrt(x)`` near the nose gives the
radius ``k^2 / 2``. Near a trailing edge ``dy/dtheta = 0`` (a finite ``dy/dx``), which is the
spline's end condition there; its second derivative gives the edge slopes.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from panelflow.errors import GeometryError, InputError
from panelflow.geometry.outline import BLUNT, SHARP, SMOOTH, Outline

__all__ = ["ChordFrame", "SectionMeasures", "SectionShape", "measure", "measure_shape",
           "decompose", "trailing_edge_kind", "MEASURE_LABELS"]

# A surface point more than this (in chords) behind an earlier one makes the surface no
# function y(x); smaller reversals are noise in the points (sorted by x, with a note).
_REVERSAL_LIMIT = 0.01
_DENSE = 4097  # theta samples for the extremes (then refined); spacing 8e-4 rad
_MIN_SURFACE_POINTS = 4  # a cubic spline with a not-a-knot end needs four
_SNAP = 0.05  # fraction of the local point spacing within which a point is the nose
# Camber below this (chords) is the rounding of the points and the interpolation between the two
# surfaces' different stations, not a camber line (measured 2.4e-6 on the demo flap, a symmetric
# 81-point table with six decimals on a 0.3 chord): the section counts as symmetric.
_CAMBER_FLOOR = 1e-5

MEASURE_LABELS = {
    "chord": ("chord", "outline units"),
    "thickness": ("maximum thickness", "chords"),
    "thickness_position": ("  at x/c", ""),
    "camber": ("maximum camber", "chords"),
    "camber_position": ("  at x/c", ""),
    "leading_edge_radius": ("leading-edge radius", "chords"),
    "trailing_edge_thickness": ("trailing-edge thickness", "chords"),
    "trailing_edge_angle_deg": ("trailing-edge angle", "deg"),
    "area": ("area", "chords^2"),
}


@dataclass(frozen=True)
class ChordFrame:
    """Leading and trailing edge of a body: the frame its shape is measured in.

    Attributes
    ----------
    leading_edge, trailing_edge : ndarray, shape (2,)
        In the outline's own coordinates.
    """

    leading_edge: np.ndarray
    trailing_edge: np.ndarray

    def __post_init__(self):
        for name in ("leading_edge", "trailing_edge"):
            v = np.array(getattr(self, name), dtype=float).reshape(2)
            v.setflags(write=False)
            object.__setattr__(self, name, v)
        if not self.chord > 0.0:
            raise GeometryError("leading and trailing edge coincide: no chord")

    @property
    def chord(self) -> float:
        return float(np.hypot(*(self.trailing_edge - self.leading_edge)))

    @property
    def direction(self) -> np.ndarray:
        """Unit vector from the leading to the trailing edge."""
        return (self.trailing_edge - self.leading_edge) / self.chord

    def to_chord(self, points) -> np.ndarray:
        """Points in chords, leading edge at (0, 0), trailing edge at (1, 0)."""
        e = self.direction
        d = np.asarray(points, dtype=float) - self.leading_edge
        return np.column_stack([d @ e, d @ np.array([-e[1], e[0]])]) / self.chord

    def from_chord(self, q) -> np.ndarray:
        """The inverse of :meth:`to_chord`."""
        e = self.direction
        q = np.asarray(q, dtype=float) * self.chord
        return self.leading_edge + q[:, :1] * e + q[:, 1:2] * np.array([-e[1], e[0]])


@dataclass(frozen=True)
class SectionMeasures:
    """Shape figures of one body, in chords (see the module docstring for the conventions).

    Attributes
    ----------
    chord : float
        Leading edge to trailing edge, in the outline's units.
    thickness, thickness_position : float
        Largest ``y_upper - y_lower`` and its x/c.
    camber, camber_position : float
        Largest ``|yc|`` (with its sign, positive towards the upper surface) and its x/c;
        zero and NaN for a symmetric section (camber below 1e-5 chords, the rounding of the
        points).
    leading_edge_radius : float
        Radius of the nose, ``k^2/2`` for ``yt = k sqrt(x)`` near it (zero for a sharp nose).
    trailing_edge_thickness : float
        ``y_upper - y_lower`` at the trailing edge (zero when sharp).
    trailing_edge_angle_deg : float
        Angle between the surfaces at the trailing edge; 180 for a rounded tail.
    area : float
        Area enclosed, in chords squared.
    notes : tuple of str
        Anything the figures rest on that the user should know (e.g. points re-ordered).
    """

    chord: float
    thickness: float
    thickness_position: float
    camber: float
    camber_position: float
    leading_edge_radius: float
    trailing_edge_thickness: float
    trailing_edge_angle_deg: float
    area: float
    notes: tuple = field(default=(), repr=False)

    def as_dict(self) -> dict:
        """The figures by name (``MEASURE_LABELS`` order), notes left out."""
        return {k: getattr(self, k) for k in MEASURE_LABELS}

    def __repr__(self) -> str:
        return (f"SectionMeasures(thickness={self.thickness:.5f} at {self.thickness_position:.4f}, "
                f"camber={self.camber:.5f} at {self.camber_position:.4f}, "
                f"le_radius={self.leading_edge_radius:.5f}, "
                f"te_thickness={self.trailing_edge_thickness:.5f}, "
                f"te_angle={self.trailing_edge_angle_deg:.3f} deg, area={self.area:.5f})")


# ---------------------------------------------------------------------------------- surfaces
def _x_of(theta):
    return 0.5 * (1.0 - np.cos(theta))


def _theta_of(x):
    return np.arccos(np.clip(1.0 - 2.0 * np.asarray(x, dtype=float), -1.0, 1.0))


def _surface_spline(theta, y, kind: str):
    from scipy.interpolate import CubicSpline

    # a trailing edge has finite dy/dx, so dy/dtheta = 0 there; a rounded tail does not
    end = (1, 0.0) if kind != SMOOTH else "not-a-knot"
    return CubicSpline(theta, y, bc_type=("not-a-knot", end))


@dataclass(frozen=True)
class _Surfaces:
    """Upper and lower surface splines ``y(theta)`` in the chord frame."""

    upper: object
    lower: object
    ends: tuple  # x of each surface's last point (1 unless a slanted base)
    kind: str
    frame: ChordFrame
    notes: tuple

    def y(self, theta):
        return self.upper(theta), self.lower(theta)

    def x(self, theta):
        """Chord station of a theta, the two surfaces' mean when their ends differ."""
        return _x_of(theta) * 0.5 * (self.ends[0] + self.ends[1])


def _ordered_surface(q: np.ndarray, which: str, label: str, notes: list):
    """theta and y of one surface (leading edge first), sorted when the points reverse a little."""
    end = q[-1, 0]
    if not end > 0.0:
        raise GeometryError(f"{label}: the {which} surface does not reach the trailing edge")
    xi = q[:, 0] / end
    dx = np.diff(q[:, 0])
    if np.any(dx <= 0.0):
        worst = float(-dx.min())
        # running maximum: how far any point lies behind one before it
        behind = np.maximum.accumulate(q[:, 0]) - q[:, 0]
        if behind.max() > _REVERSAL_LIMIT:
            i = int(np.argmax(behind))
            raise GeometryError(
                f"{label}: the {which} surface turns back by {behind.max():.3g} chords near "
                f"x/c = {q[i, 0]:.3g}; measures and edits need each surface to run from the "
                "leading to the trailing edge")
        order = np.argsort(xi, kind="stable")
        xi, q = xi[order], q[order]
        notes.append(f"the {which} surface's points go back by up to {worst:.2g} chords in x "
                     "(noise?); they were taken in order of x")
    theta = _theta_of(np.clip(xi, 0.0, 1.0))
    keep = np.r_[True, np.diff(theta) > 1e-12]
    theta, y = theta[keep], q[keep, 1]
    if len(theta) < _MIN_SURFACE_POINTS:
        raise GeometryError(f"{label}: the {which} surface has {len(theta)} distinct points; "
                            f"at least {_MIN_SURFACE_POINTS} are needed")
    theta[0], theta[-1] = 0.0, np.pi
    return theta, y, end


def _loop_spline(points: np.ndarray):
    from scipy.interpolate import CubicSpline

    s = np.r_[0.0, np.cumsum(np.hypot(*np.diff(points, axis=0).T))]
    keep = np.r_[True, np.diff(s) > 1e-12 * s[-1]]
    return CubicSpline(s[keep], points[keep]), s[keep], points[keep]


def _leading_edge(points: np.ndarray, te: np.ndarray):
    """Parameter and point of the spline through ``points`` farthest from ``te``."""
    from scipy.optimize import brentq, minimize_scalar

    spline, s, pts = _loop_spline(points)
    i = int(np.argmax(np.hypot(*(pts - te).T)))
    lo, hi = s[max(i - 1, 0)], s[min(i + 1, len(s) - 1)]

    def slope(t):  # derivative of half the squared distance
        return float(np.dot(spline(t) - te, spline(t, 1)))

    if slope(lo) > 0.0 > slope(hi):
        t0 = brentq(slope, lo, hi, xtol=1e-14 * s[-1])
    else:
        t0 = minimize_scalar(lambda t: -float(np.sum((spline(t) - te) ** 2)), bounds=(lo, hi),
                             method="bounded", options={"xatol": 1e-13 * s[-1]}).x
    # A point that nearly is the nose is taken as the nose: the spline's own error there would
    # otherwise leave a second point a hair's breadth away, which spoils the nose slope.
    j = int(np.argmin(np.abs(s - t0)))
    spacing = min(np.diff(s)[max(j - 1, 0):j + 1])
    if abs(s[j] - t0) < _SNAP * spacing:
        return float(s[j]), pts[j].copy(), s, pts
    return float(t0), spline(t0), s, pts


def _surfaces(outline: Outline) -> _Surfaces:
    label = outline.label
    te = np.asarray(outline.trailing_edge.point, dtype=float)
    t0, le, s, pts = _leading_edge(np.asarray(outline.points, dtype=float), te)
    frame = ChordFrame(le, te)
    q = frame.to_chord(pts)
    if outline.kind != BLUNT:
        q[0] = q[-1] = (1.0, 0.0)  # the trailing edge itself, without round-off
    close = 1e-9
    upper = q[s < t0][::-1]
    lower = q[s > t0]
    upper = upper[np.hypot(*upper.T) > close]
    lower = lower[np.hypot(*lower.T) > close]
    origin = np.zeros((1, 2))
    notes: list = []
    tu, yu, eu = _ordered_surface(np.vstack([origin, upper]), "upper", label, notes)
    tl, yl, el = _ordered_surface(np.vstack([origin, lower]), "lower", label, notes)
    return _Surfaces(_surface_spline(tu, yu, outline.kind), _surface_spline(tl, yl, outline.kind),
                     (float(eu), float(el)), outline.kind, frame, tuple(notes))


# ---------------------------------------------------------------------------------- measures
def _extreme(f, sign: float = 1.0):
    """theta in [0, pi] where ``sign * f`` is largest, refined between grid points."""
    from scipy.optimize import minimize_scalar

    grid = np.linspace(0.0, np.pi, _DENSE)
    values = sign * f(grid)
    i = int(np.argmax(values))
    lo, hi = grid[max(i - 1, 0)], grid[min(i + 1, _DENSE - 1)]
    best = minimize_scalar(lambda t: -sign * float(f(t)), bounds=(lo, hi), method="bounded",
                           options={"xatol": 1e-12})
    return (best.x, float(f(best.x))) if -best.fun >= values[i] else (grid[i], float(f(grid[i])))


def _area(surf: _Surfaces) -> float:
    """Enclosed area in chords^2 (Green's theorem, Gauss-Legendre on each spline piece)."""
    nodes, weights = np.polynomial.legendre.leggauss(6)
    total = 0.0
    for spline, end, sign in ((surf.upper, surf.ends[0], 1.0), (surf.lower, surf.ends[1], -1.0)):
        knots = spline.x
        a, b = knots[:-1, None], knots[1:, None]
        t = 0.5 * (a + b) + 0.5 * (b - a) * nodes
        integrand = spline(t) * end * 0.5 * np.sin(t)  # y dx/dtheta
        total += sign * float(np.sum(0.5 * (b - a) * integrand * weights))
    # the base from the lower to the upper corner (zero for a square base or a sharp edge)
    y_u, y_l = float(surf.upper(np.pi)), float(surf.lower(np.pi))
    return total - (surf.ends[0] - surf.ends[1]) * 0.5 * (y_u + y_l)


def _measures(surf: _Surfaces, chord: float) -> SectionMeasures:
    def half_thickness(t):
        return 0.5 * (surf.upper(t) - surf.lower(t))

    def camber(t):
        return 0.5 * (surf.upper(t) + surf.lower(t))

    t_max, yt_max = _extreme(half_thickness)
    grid = np.linspace(0.0, np.pi, _DENSE)
    if np.max(np.abs(camber(grid))) < _CAMBER_FLOOR:
        c_max, c_pos = 0.0, float("nan")
    else:
        sign = 1.0 if camber(grid).max() >= -camber(grid).min() else -1.0
        t_c, c_max = _extreme(camber, sign)
        c_pos = float(surf.x(t_c))
    # nose: y = +-k sqrt(x), x = end * (1 - cos theta)/2  ->  dy/dtheta(0) = +-k sqrt(end)/2
    k = (float(surf.upper(0.0, 1)) / np.sqrt(surf.ends[0])
         - float(surf.lower(0.0, 1)) / np.sqrt(surf.ends[1]))
    radius = 0.5 * k * k
    y_u, y_l = float(surf.upper(np.pi)), float(surf.lower(np.pi))
    if surf.kind == SMOOTH:
        te_thickness, te_angle = 0.0, 180.0
    else:
        # dy/dx = y''(theta) / x''(theta) at theta = pi, where x'' = -end/2
        slope_u = -2.0 * float(surf.upper(np.pi, 2)) / surf.ends[0]
        slope_l = -2.0 * float(surf.lower(np.pi, 2)) / surf.ends[1]
        te_thickness = y_u - y_l if surf.kind == BLUNT else 0.0
        te_angle = float(np.degrees(np.arctan(slope_l) - np.arctan(slope_u)))
    return SectionMeasures(
        chord=float(chord), thickness=2.0 * yt_max, thickness_position=float(surf.x(t_max)),
        camber=float(c_max), camber_position=c_pos, leading_edge_radius=float(radius),
        trailing_edge_thickness=float(te_thickness), trailing_edge_angle_deg=te_angle,
        area=_area(surf), notes=surf.notes)


def measure(outline: Outline) -> SectionMeasures:
    """Thickness, camber, nose radius, trailing-edge thickness and angle, and area of a body.

    Parameters
    ----------
    outline : Outline
        A foil or fairing; each surface must run from the nose to the tail (see the module
        docstring for the conventions).

    Returns
    -------
    SectionMeasures
        In chords; the chord itself in the outline's units.

    Raises
    ------
    GeometryError
        A surface that turns back along the chord, or too few points.
    """
    surf = _surfaces(outline)
    return _measures(surf, surf.frame.chord)


# ---------------------------------------------------------------------------------- shape
@dataclass(frozen=True)
class SectionShape:
    """A body as camber and half thickness at stations ``x = (1 - cos theta)/2`` of its chord.

    The form the geometry edits work on; :meth:`outline` turns it back into points in the
    original frame. Build one with :func:`decompose`.

    Attributes
    ----------
    theta : ndarray, shape (n,)
        Stations, evenly spaced from 0 (leading edge) to pi (trailing edge).
    camber, half_thickness : ndarray, shape (n,)
        In chords, perpendicular to the chord line.
    frame : ChordFrame
        Where the chord lies in the outline's coordinates.
    kind : str
        Trailing-edge kind of the body it came from (``sharp``, ``blunt``, ``none``).
    ends : tuple of float
        x/c of the upper and lower surfaces' last points (1, 1 unless a slanted base).
    name, source : str
    """

    theta: np.ndarray
    camber: np.ndarray
    half_thickness: np.ndarray
    frame: ChordFrame
    kind: str
    ends: tuple = (1.0, 1.0)
    name: str = "body"
    source: str = ""

    def __post_init__(self):
        n = len(self.theta)
        for name in ("theta", "camber", "half_thickness"):
            v = np.array(getattr(self, name), dtype=float)
            if v.shape != (n,):
                raise GeometryError(f"{self.name}: {name} has shape {v.shape}, theta ({n},)")
            v.setflags(write=False)
            object.__setattr__(self, name, v)
        if n < _MIN_SURFACE_POINTS:
            raise GeometryError(f"{self.name}: {n} stations; at least {_MIN_SURFACE_POINTS}")

    @property
    def x(self) -> np.ndarray:
        """Chord stations of ``theta``."""
        return _x_of(self.theta)

    def replaced(self, **changes) -> "SectionShape":
        """A copy with some fields changed."""
        return replace(self, **changes)

    def function(self, values):
        """Cubic spline of station values as a function of theta (see the module docstring)."""
        return _surface_spline(self.theta, np.asarray(values, dtype=float), self.kind)

    def at(self, values, x) -> np.ndarray:
        """Station values interpolated at chord stations ``x``."""
        return self.function(values)(_theta_of(x))

    def outline(self, name: str | None = None, source: str | None = None) -> Outline:
        """Points of the shape in the original frame, as an :class:`Outline`.

        Raises
        ------
        GeometryError
            When the surfaces cross (negative thickness).
        """
        nm = self.name if name is None else name
        if np.any(self.half_thickness[1:-1] <= 0.0):
            i = 1 + int(np.argmin(self.half_thickness[1:-1]))
            raise GeometryError(f"{nm}: the surfaces cross near x/c = {self.x[i]:.3g} "
                                "(thickness not positive)")
        x = self.x
        upper = np.column_stack([x * self.ends[0], self.camber + self.half_thickness])
        lower = np.column_stack([x * self.ends[1], self.camber - self.half_thickness])
        loop = np.vstack([upper[::-1], lower[1:]])
        return Outline.from_points(self.frame.from_chord(loop), name=nm,
                                   source=self.source if source is None else source)


def decompose(outline: Outline, n_stations: int | None = None) -> SectionShape:
    """The camber-and-thickness form of a body at ``n_stations`` cosine-spaced stations.

    Parameters
    ----------
    outline : Outline
    n_stations : int, optional
        Stations from nose to tail; default enough for the outline's own points and at least
        101 (an outline of ``2 n - 1`` points comes back).

    Returns
    -------
    SectionShape

    Raises
    ------
    GeometryError
        See :func:`measure`.
    InputError
        Too few stations.
    """
    n = max(101, (len(outline.points) + 2) // 2) if n_stations is None else int(n_stations)
    if n < _MIN_SURFACE_POINTS + 2:
        raise InputError(f"{outline.label}: at least {_MIN_SURFACE_POINTS + 2} stations needed, "
                         f"got {n_stations}")
    surf = _surfaces(outline)
    theta = np.linspace(0.0, np.pi, n)
    yu, yl = surf.y(theta)
    yt = 0.5 * (yu - yl)
    yt[0] = 0.0
    if surf.kind != BLUNT:
        yt[-1] = 0.0
    return SectionShape(theta, 0.5 * (yu + yl), yt, surf.frame, surf.kind, surf.ends,
                        outline.name, outline.source)


def _shape_surfaces(shape: SectionShape) -> _Surfaces:
    return _Surfaces(shape.function(shape.camber + shape.half_thickness),
                     shape.function(shape.camber - shape.half_thickness),
                     tuple(shape.ends), shape.kind, shape.frame, ())


def measure_shape(shape: SectionShape) -> SectionMeasures:
    """:func:`measure` of a :class:`SectionShape` without turning it into points first."""
    return _measures(_shape_surfaces(shape), shape.frame.chord)


def trailing_edge_kind(shape: SectionShape) -> str:
    """``sharp``, ``blunt`` or ``none`` as the shape's points would make it."""
    if shape.kind == SMOOTH:
        return SMOOTH
    return BLUNT if shape.half_thickness[-1] > 0.0 else SHARP
