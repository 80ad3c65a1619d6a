"""Outline: one body's closed contour, validated for order and oriented the same way every time.

Convention inside panelflow (whatever the order of the input):

* the loop runs counter-clockwise (body interior on the left);
* a body with a trailing edge starts at the upper trailing-edge point and ends at the lower one;
  for a sharp trailing edge both are the same point (``points[0] == points[-1]``), for a blunt
  one they differ and the segment from ``points[-1]`` to ``points[0]`` is the base;
* a smooth body with no trailing edge (circle, rounded fairing) is a closed loop
  (``points[0] == points[-1]``) that starts at its most downstream point.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.errors import GeometryError

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
    """

    name: str
    points: np.ndarray
    kind: str
    source: str = ""
    trailing_edge: TrailingEdge = field(init=False, repr=False, compare=False)

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
        object.__setattr__(self, "trailing_edge", self._trailing_edge())

    # ------------------------------------------------------------------ construction
    @classmethod
    def from_points(cls, points, name: str = "body", source: str = "",
                    starts_at_trailing_edge: bool = True) -> "Outline":
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

        Returns
        -------
        Outline
        """
        label = source or name
        pts = _as_points(points)
        if not np.all(np.isfinite(pts)):
            raise GeometryError(f"{label}: coordinates must be finite numbers (found NaN or inf)")
        size = float(np.max(np.ptp(pts, axis=0))) if len(pts) else 0.0
        tol = 1e-9 * size
        if len(pts):
            keep = np.r_[True, np.hypot(*np.diff(pts, axis=0).T) > tol]
            poly = pts[keep]
        else:
            poly = pts
        open_ends = len(poly) > 1 and np.hypot(*(poly[-1] - poly[0])) > tol
        if not open_ends:
            poly = poly[:-1]
        if len(poly) < MIN_POINTS or size == 0.0:
            raise GeometryError(f"{label}: {len(poly)} distinct points; at least {MIN_POINTS} needed")
        area = signed_area(poly)
        if abs(area) <= 1e-12 * size * size:
            raise GeometryError(f"{label}: the outline encloses no area")
        first = 0
        if area < 0:
            poly = poly[::-1].copy()
            first = len(poly) - 1
        turn = _turning(poly)
        m = len(poly)
        feature = None
        if starts_at_trailing_edge:
            feature = _feature_at_start(poly, turn, first, open_ends)
        if feature is None:
            feature = _search_feature(poly, turn, size)
        if feature is None:
            i = int(np.argmax(poly[:, 0]))
            loop = np.roll(poly, -i, axis=0)
            return cls(name, np.vstack([loop, loop[:1]]), SMOOTH, source)
        kind, lower, upper = feature
        if kind == SHARP:
            loop = np.roll(poly, -upper, axis=0)
            return cls(name, np.vstack([loop, loop[:1]]), SHARP, source)
        # blunt: CCW order ... lower corner -> base (maybe with points on it) -> upper corner ...
        n_keep = (lower - upper) % m + 1
        loop = np.roll(poly, -upper, axis=0)[:n_keep]
        return cls(name, loop, BLUNT, source)

    # ------------------------------------------------------------------ derived facts
    @property
    def label(self) -> str:
        return self.source or self.name

    def _trailing_edge(self) -> TrailingEdge:
        pts = self.points
        if self.kind == SMOOTH:
            return TrailingEdge(SMOOTH, pts[0].copy(), 0.0, 180.0)
        up = pts[1] - pts[0]  # along the upper surface, away from the trailing edge
        lo = pts[-2] - pts[-1]  # along the lower surface, away from the trailing edge
        cosang = np.dot(up, lo) / (np.linalg.norm(up) * np.linalg.norm(lo))
        angle = float(np.degrees(np.arccos(np.clip(cosang, -1.0, 1.0))))
        if self.kind == SHARP:
            return TrailingEdge(SHARP, pts[0].copy(), 0.0, angle)
        gap = float(np.hypot(*(pts[0] - pts[-1])))
        return TrailingEdge(BLUNT, 0.5 * (pts[0] + pts[-1]), gap, angle)

    @property
    def polygon(self) -> np.ndarray:
        """Distinct vertices of the closed polygon (base included for a blunt body)."""
        return self.points if self.kind == BLUNT else self.points[:-1]

    @property
    def leading_edge(self) -> np.ndarray:
        """The point of the outline farthest from the trailing edge."""
        index = self.__dict__.get("_leading_edge_index")
        if index is None:  # found once (an analysis asks a few times per body)
            d = np.hypot(*(self.points - self.trailing_edge.point).T)
            index = int(np.argmax(d))
            self.__dict__["_leading_edge_index"] = index
        return self.points[index].copy()

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
        return Outline(self.name, pts, self.kind, self.source)

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
        return Outline(name, self.points, self.kind, self.source)

    def __repr__(self) -> str:
        te = self.trailing_edge
        return (f"Outline({self.name!r}, {len(self.points)} points, trailing edge {te.kind}, "
                f"chord {self.chord:.6g})")
