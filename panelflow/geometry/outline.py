"""Outline: one body's closed contour, validated for order and oriented the same way every time.

Convention inside panelflow (whatever the order of the input):

* the loop runs counter-clockwise (body interior on the left);
* a body with a trailing edge starts at the upper trailing-edge point and ends at the lower one;
  for a sharp trailing edge both are the same point (``points[0] == points[-1]``), for a blunt
  one they differ and the segment from ``points[-1]`` to ``points[0]`` is the base;
* a smooth body with no trailing edge (circle, rounded fairing) is a closed loop
  (``points[0] == points[-1]``) that starts at the point nearest the downstream end of its
  longest extent.

The leading edge is taken from the smooth curve through the points (see
:mod:`panelflow.geometry.curve`): the point of that curve farthest from the trailing edge. A smooth
body's chord is its longest extent (the two points of the curve farthest apart), which turns with
the body, so a pitched body and the same points read back from a file have the same chord.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.errors import GeometryError
from panelflow.geometry import curve

SHARP = "sharp"
BLUNT = "blunt"
SMOOTH = "none"
TRAILING_EDGE_KINDS = (SHARP, BLUNT, SMOOTH)

# Corner thresholds (common practice for drawn sections, whose smooth parts turn far less per
# point): a trailing edge given at the loop's start is a corner when the outline turns there by
# more than _START_TURN; searched for anywhere, a sharp edge must turn by more than _CORNER_TURN.
# A blunt base has two corners each turning more than _BASE_TURN, together more than
# _CORNER_TURN, joined by a straight run (each point on it turning less than _STRAIGHT_TURN)
# shorter than _BASE_MAX_FRACTION of the outline's size.
_START_TURN = np.radians(30.0)
_CORNER_TURN = np.radians(100.0)
_BASE_TURN = np.radians(30.0)
_STRAIGHT_TURN = np.radians(3.0)
_BASE_MAX_FRACTION = 0.25
MIN_POINTS = 5
# Largest coordinate magnitude of any outline, in its own length unit: a kilometre in metres or a
# metre in micrometres fits; beyond, the geometry's products (areas, squared distances) leave
# float64's range long before anything meaningful is asked of them.
MAX_COORDINATE = 1e9


def _feature_at_start(poly, turn, first, open_ends):
    """Trailing edge where the input loop starts and ends, or None when that is no corner.

    Returns (kind, lower, upper) with polygon indices of the lower and upper trailing-edge
    points (equal for a sharp edge).
    """
    m = len(poly)
    # The freestream runs along +x: a trailing edge upstream of the body's middle is a loop that
    # starts elsewhere (at a leading edge, say), so leave it to the search.
    middle = 0.5 * (poly[:, 0].min() + poly[:, 0].max())
    # A corner also stands out from the outline's typical turn (a coarse circle turns evenly)
    # and is among the outline's sharpest (a loop that starts at a coarsely drawn leading edge
    # turns there, but far less than at its trailing edge).
    least = max(2.0 * float(np.median(np.abs(turn))), 0.5 * float(np.max(turn)))
    if open_ends:
        # the closing segment joins the input's last and first points
        a, b = (first - 1) % m, first
        lower, upper = (a, b) if (b - a) % m == 1 else (b, a)
        if (min(turn[lower], turn[upper]) > max(_BASE_TURN, least)
                and poly[[lower, upper], 0].mean() > middle):
            return BLUNT, lower, upper
        return None
    if (turn[first] > max(_START_TURN, least) and _stands_alone(turn, first)
            and poly[first, 0] > middle):
        return SHARP, first, first
    return None


def _stands_alone(turn, i: int) -> bool:
    """A corner turns at one point; a rounded nose, however coarsely drawn, also at the next."""
    m = len(turn)
    return bool(turn[i] > 2.0 * max(turn[(i - 1) % m], turn[(i + 1) % m]))


def _search_feature(poly, turn, size):
    """The most downstream sharp corner or blunt base of a loop with no known start, or None."""
    m = len(poly)
    nxt = np.roll(poly, -1, axis=0)
    edge = np.hypot(*(nxt - poly).T)  # edge i runs from vertex i to i+1
    candidates = []  # (x position, kind, lower, upper)
    for i in np.flatnonzero(turn > _CORNER_TURN):
        if _stands_alone(turn, int(i)):
            candidates.append((poly[i, 0], SHARP, int(i), int(i)))
    for i in np.flatnonzero(turn > _BASE_TURN):
        # walk along a straight run from corner i (the lower one, in CCW order) to the next corner
        length, j = edge[i], (i + 1) % m
        while abs(turn[j]) < _STRAIGHT_TURN and length < _BASE_MAX_FRACTION * size and j != i:
            length += edge[j]
            j = (j + 1) % m
        if (j != i and turn[j] > _BASE_TURN and turn[i] + turn[j] > _CORNER_TURN
                and length < _BASE_MAX_FRACTION * size):
            mid = 0.5 * (poly[i, 0] + poly[j, 0])
            candidates.append((mid, BLUNT, int(i), int(j)))
    # a corner of a base is no sharp trailing edge of its own
    corners = {i for c in candidates if c[1] == BLUNT for i in c[2:]}
    candidates = [c for c in candidates if c[1] == BLUNT or c[2] not in corners]
    if not candidates:
        return None
    _, kind, lower, upper = max(candidates, key=lambda c: c[0])
    return kind, lower, upper


def _as_points(points) -> np.ndarray:
    arr = np.asarray(points, dtype=float)
    if arr.ndim != 2 or arr.shape[1] != 2:
        raise GeometryError(f"outline points must have shape (n, 2), got {arr.shape}")
    return arr


def signed_area(points: np.ndarray) -> float:
    """Shoelace area of the polygon through ``points`` (positive when counter-clockwise)."""
    x, y = points[:, 0], points[:, 1]
    return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))


def _turning(poly: np.ndarray) -> np.ndarray:
    """Signed turning angle at each vertex of a cyclic polygon (positive = left turn)."""
    d_in = poly - np.roll(poly, 1, axis=0)
    d_out = np.roll(poly, -1, axis=0) - poly
    cross = d_in[:, 0] * d_out[:, 1] - d_in[:, 1] * d_out[:, 0]
    dot = np.sum(d_in * d_out, axis=1)
    return np.arctan2(cross, dot)


def _smooth_loop(poly: np.ndarray, order: np.ndarray) -> np.ndarray:
    """``order`` rolled to start at the downstream end of the longest extent of the points, with
    that first index repeated at the end (a closed loop)."""
    loop = poly[order]
    i, j = curve.extent_samples(np.vstack([loop, loop[:1]]))
    dx = loop[i, 0] - loop[j, 0]
    if abs(dx) <= curve.TIE * np.hypot(*(loop[i] - loop[j])):
        dx = 1.0 if i == 0 else -1.0  # across the stream (turned by 90 deg): keep the start
    rolled = np.roll(order, -(i if dx > 0 else j))
    return np.r_[rolled, rolled[:1]]


@dataclass(frozen=True)
class TrailingEdge:
    """Trailing-edge facts of an outline.

    Attributes
    ----------
    kind : str
        ``"sharp"``, ``"blunt"`` or ``"none"`` (smooth body, no Kutta condition).
    point : ndarray, shape (2,)
        Trailing-edge point: the corner, the base midpoint, or the most downstream point.
    gap : float
        Base length (zero unless blunt).
    included_angle_deg : float
        Angle between upper and lower surfaces at the trailing edge, in degrees
        (180 for a smooth body).
    """

    kind: str
    point: np.ndarray
    gap: float
    included_angle_deg: float


@dataclass(frozen=True)
class Outline:
    """One body's closed contour in the input's own frame.

    Build it with :meth:`from_points`, which detects the trailing edge and puts the points in the
    module's convention; the constructor only checks that an already normalised loop is sound.

    Attributes
    ----------
    name : str
        Body name used in reports.
    points : ndarray, shape (n, 2)
        Loop in panelflow's convention (see module docstring).
    kind : str
        Trailing-edge kind: ``"sharp"``, ``"blunt"`` or ``"none"``.
    source : str
        Where the outline came from (file path or section spec), for messages.
    lines : ndarray of int or None
        Line of the input file each point was read from (one per row of ``points``), so that
        checks can name the line of a doubtful point; None when the points were not read from a
        text table.
    exact : bool
        True for points generated from a defining equation at the density a solve needs (the
        built-in sections): the curve through them is the section to far below the panels'
        error, so the error estimate adds no share for the input's own resolution.
    """

    name: str
    points: np.ndarray
    kind: str
    source: str = ""
    lines: np.ndarray | None = field(default=None, repr=False, compare=False)
    exact: bool = field(default=False, repr=False, compare=False)
    trailing_edge: TrailingEdge = field(init=False, repr=False, compare=False)
    _leading_edge: np.ndarray = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        pts = _as_points(self.points)
        pts.setflags(write=False)
        object.__setattr__(self, "points", pts)
        if self.kind not in TRAILING_EDGE_KINDS:
            raise GeometryError(f"{self.label}: unknown trailing-edge kind {self.kind!r}")
        if len(pts) < MIN_POINTS:
            raise GeometryError(f"{self.label}: {len(pts)} points; at least {MIN_POINTS} needed")
        if not np.all(np.isfinite(pts)):
            raise GeometryError(f"{self.label}: coordinates must be finite numbers")
        big = np.abs(pts) > MAX_COORDINATE
        if np.any(big):
            k = int(np.argmax(big.any(axis=1)))
            raise GeometryError(f"{self.label}: point {k + 1} ({pts[k, 0]:.6g}, {pts[k, 1]:.6g}) "
                                f"is beyond +/-{MAX_COORDINATE:.0e}: not a section outline in "
                                "any length unit (check the spec, the file or the transforms)")
        if self.lines is not None:
            lines = np.asarray(self.lines, dtype=np.int64)
            if lines.shape != (len(pts),):
                raise GeometryError(f"{self.label}: {len(lines)} line numbers for {len(pts)} "
                                    "points")
            lines.setflags(write=False)
            object.__setattr__(self, "lines", lines)
        le, te_point = self._fitted_ends()
        object.__setattr__(self, "_leading_edge", le)
        object.__setattr__(self, "trailing_edge", self._trailing_edge(te_point))

    # ------------------------------------------------------------------ construction
    @classmethod
    def from_points(cls, points, name: str = "body", source: str = "",
                    starts_at_trailing_edge: bool = True, lines=None,
                    exact: bool = False) -> "Outline":
        """Normalise any closed loop of points into an :class:`Outline`.

        Parameters
        ----------
        points : array_like, shape (n, 2)
            The loop in either direction; the first point may or may not be repeated at the end.
            A loop whose two ends are apart is closed by a segment, the base of a blunt trailing
            edge when both ends are corners.
        name, source : str
            Body name and origin (for messages).
        starts_at_trailing_edge : bool
            True when the loop should start and end at the trailing edge (coordinate tables,
            built-in sections); then that point is taken as the trailing edge when it is a
            corner in the downstream half of the body. Otherwise, and when the start is no such
            corner (a table that starts at the leading edge, a polyline from a mesh file), the
            trailing edge is searched for: the most downstream (largest x) sharp corner or blunt
            base, if any.
        lines : array_like of int, optional
            Input-file line of each point, kept beside the points through the reordering (see
            the ``lines`` attribute).
        exact : bool
            The points sample a defining equation as finely as a solve needs (a built-in
            section): the input adds no error of its own (see the ``exact`` attribute).

        Returns
        -------
        Outline
        """
        label = source or name
        pts = _as_points(points)
        if not np.all(np.isfinite(pts)):
            raise GeometryError(f"{label}: coordinates must be finite numbers (found NaN or inf)")
        # index of each kept point in the input, carried through every reordering below
        idx = np.arange(len(pts))
        size = float(np.max(np.ptp(pts, axis=0))) if len(pts) else 0.0
        tol = 1e-9 * size
        if len(pts):
            keep = np.r_[True, np.hypot(*np.diff(pts, axis=0).T) > tol]
            poly, idx = pts[keep], idx[keep]
        else:
            poly = pts
        open_ends = len(poly) > 1 and np.hypot(*(poly[-1] - poly[0])) > tol
        if not open_ends:
            poly, idx = poly[:-1], idx[:-1]
        if len(poly) < MIN_POINTS or size == 0.0:
            raise GeometryError(f"{label}: {len(poly)} distinct points; at least {MIN_POINTS} needed")
        area = signed_area(poly)
        if abs(area) <= 1e-12 * size * size:
            raise GeometryError(f"{label}: the outline encloses no area")
        first = 0
        if area < 0:
            poly, idx = poly[::-1].copy(), idx[::-1]
            first = len(poly) - 1
        turn = _turning(poly)
        m = len(poly)
        in_lines = None if lines is None else np.asarray(lines, dtype=np.int64)
        if in_lines is not None and in_lines.shape != (len(pts),):
            raise GeometryError(f"{label}: {len(in_lines)} line numbers for {len(pts)} points")

        def make(loop_idx, kind):
            return cls(name, poly[loop_idx], kind, source,
                       None if in_lines is None else in_lines[idx[loop_idx]], exact)

        feature = None
        if starts_at_trailing_edge:
            feature = _feature_at_start(poly, turn, first, open_ends)
        if feature is None:
            feature = _search_feature(poly, turn, size)
        if feature is None:
            return make(_smooth_loop(poly, np.arange(m)), SMOOTH)
        kind, lower, upper = feature
        if kind == SHARP:
            loop = np.roll(np.arange(m), -upper)
            return make(np.r_[loop, loop[:1]], SHARP)
        # blunt: CCW order ... lower corner -> base (maybe with points on it) -> upper corner ...
        n_keep = (lower - upper) % m + 1
        return make(np.roll(np.arange(m), -upper)[:n_keep], BLUNT)

    # ------------------------------------------------------------------ derived facts
    @property
    def label(self) -> str:
        return self.source or self.name

    def _fitted_ends(self) -> tuple[np.ndarray, np.ndarray]:
        """Leading edge and trailing-edge point on the smooth curve through the points."""
        pts = self.points
        closed = self.kind == SMOOTH
        spline = curve.parametric_spline(pts, closed)
        if closed:
            p, q = curve.longest_extent(pts, spline)
            # the loop starts at the downstream end: the other end is the leading edge
            near_start = np.hypot(*(p - pts[0])) <= np.hypot(*(q - pts[0]))
            return (q, p) if near_start else (p, q)
        te = pts[0] if self.kind == SHARP else 0.5 * (pts[0] + pts[-1])
        return curve.farthest_point(pts, False, te, spline), te.copy()

    def _trailing_edge(self, point: np.ndarray) -> TrailingEdge:
        pts = self.points
        if self.kind == SMOOTH:
            return TrailingEdge(SMOOTH, point, 0.0, 180.0)
        up = pts[1] - pts[0]  # along the upper surface, away from the trailing edge
        lo = pts[-2] - pts[-1]  # along the lower surface, away from the trailing edge
        cosang = np.dot(up, lo) / (np.linalg.norm(up) * np.linalg.norm(lo))
        angle = float(np.degrees(np.arccos(np.clip(cosang, -1.0, 1.0))))
        if self.kind == SHARP:
            return TrailingEdge(SHARP, point, 0.0, angle)
        gap = float(np.hypot(*(pts[0] - pts[-1])))
        return TrailingEdge(BLUNT, point, gap, angle)

    @property
    def polygon(self) -> np.ndarray:
        """Distinct vertices of the closed polygon (base included for a blunt body)."""
        return self.points if self.kind == BLUNT else self.points[:-1]

    @property
    def leading_edge(self) -> np.ndarray:
        """The point of the smooth curve through the points farthest from the trailing edge.

        For a body without a trailing edge: the upstream end of its longest extent.
        """
        return self._leading_edge.copy()

    @property
    def chord(self) -> float:
        """Distance from leading edge to trailing edge."""
        return float(np.hypot(*(self.trailing_edge.point - self.leading_edge)))

    @property
    def chord_angle_deg(self) -> float:
        """Incidence of the chord line to the x-axis in degrees, positive nose-up."""
        d = self.trailing_edge.point - self.leading_edge
        return float(np.degrees(np.arctan2(-d[1], d[0])))

    def chord_point(self, fraction: float) -> np.ndarray:
        """Point on the chord line at ``fraction`` of the chord from the leading edge."""
        le = self.leading_edge
        return le + fraction * (self.trailing_edge.point - le)

    @property
    def area(self) -> float:
        return signed_area(self.polygon)

    # ------------------------------------------------------------------ transforms
    def _mapped(self, pts: np.ndarray) -> "Outline":
        if self.kind == SMOOTH:  # start again at the downstream end of the turned body
            order = _smooth_loop(pts[:-1], np.arange(len(pts) - 1))
            return Outline(self.name, pts[:-1][order], self.kind, self.source,
                           None if self.lines is None else self.lines[:-1][order], self.exact)
        return Outline(self.name, pts, self.kind, self.source, self.lines, self.exact)

    def scaled(self, factor: float, about=(0.0, 0.0)) -> "Outline":
        """Return a copy scaled by ``factor`` about the point ``about``."""
        if not np.isfinite(factor) or factor <= 0:
            raise GeometryError(f"{self.label}: scale factor must be positive, got {factor}")
        c = np.asarray(about, float)
        return self._mapped(c + factor * (self.points - c))

    def translated(self, dx: float, dy: float) -> "Outline":
        """Return a copy moved by ``(dx, dy)``."""
        return self._mapped(self.points + np.array([dx, dy], float))

    def rotated(self, angle_deg: float, about=(0.0, 0.0)) -> "Outline":
        """Return a copy pitched nose-up by ``angle_deg`` (clockwise in the x-y plane) about ``about``.

        Pitching a body nose-up by d has the same effect as raising the angle of attack by d.
        """
        a = np.radians(angle_deg)
        rot = np.array([[np.cos(a), np.sin(a)], [-np.sin(a), np.cos(a)]])
        c = np.asarray(about, float)
        return self._mapped(c + (self.points - c) @ rot.T)

    def renamed(self, name: str) -> "Outline":
        return Outline(name, self.points, self.kind, self.source, self.lines, self.exact)

    def __repr__(self) -> str:
        te = self.trailing_edge
        return (f"Outline({self.name!r}, {len(self.points)} points, trailing edge {te.kind}, "
                f"chord {self.chord:.6g})")
