"""The smooth curve through an outline's points: a parametric cubic spline, and points on it.

The panelling puts its nodes on this curve, and the outline takes its leading edge (and, for a
body without a trailing edge, both ends of its chord) from it rather than from the nearest input
point: an outline drawn with 35 points rarely has one exactly at the nose, and the chord from the
farthest *input* point is short by about the square of the point spacing.

The spline is written out (second-derivative form, banded solve) rather than taken from
scipy.interpolate, whose import alone costs about half a second of start-up.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg

from panelflow.errors import GeometryError

# A closed loop is splined as an open one with this many points wrapped on at each end: the end
# conditions' influence decays by about a factor 3.7 per point, so 24 points leave < 1e-13.
WRAP = 24
# Relative difference below which two lengths count as equal when a circle's chord is chosen:
# the rounding of a table given to six decimals.
TIE = 1e-6


class CubicSpline:
    """Cubic interpolating spline with not-a-knot ends, for values of shape (n, d).

    The second derivatives come from one banded solve (LAPACK's ``dgbsv`` directly: the checks of
    scipy.linalg.solve_banded cost as much as the solve); each interval then holds its cubic in
    powers of ``u = t - t_i``, evaluated from gathers of the four coefficients.
    """

    def __init__(self, t: np.ndarray, y: np.ndarray):
        n = len(t) - 1
        h = np.diff(t)
        dy = np.diff(y, axis=0) / h[:, None]
        ab = np.zeros((7, n + 1))  # bands for (l, u) = (2, 2), two more rows for the pivoting
        rhs = np.zeros((n + 1, y.shape[1]))
        i = np.arange(1, n)
        ab[4 + 1, i - 1] = h[:-1]  # a[i, i-1]: ab[4 + i - j, j] = a[i, j]
        ab[4, i] = 2.0 * (h[:-1] + h[1:])
        ab[4 - 1, i + 1] = h[1:]  # a[i, i+1]
        rhs[1:n] = 6.0 * (dy[1:] - dy[:-1])
        # not-a-knot: third derivative continuous at the second and the last-but-one point
        ab[4, 0], ab[3, 1], ab[2, 2] = h[1], -(h[0] + h[1]), h[0]
        ab[6, n - 2], ab[5, n - 1], ab[4, n] = h[n - 1], -(h[n - 2] + h[n - 1]), h[n - 2]
        _, _, m, info = scipy.linalg.lapack.dgbsv(2, 2, ab, rhs, overwrite_ab=True,
                                                  overwrite_b=True)
        if info != 0:
            raise GeometryError("spline through the outline points cannot be fitted "
                                "(repeated points?)")
        self.t, self.y, self.h, self.m = t, y, h, m
        hh = h[:, None]
        self._coef = (y[:-1], dy - hh * (2.0 * m[:-1] + m[1:]) / 6.0, 0.5 * m[:-1],
                      (m[1:] - m[:-1]) / (6.0 * hh))

    def _where(self, tq, first: int):
        tq = np.asarray(tq, float)
        i = np.clip(np.searchsorted(self.t, tq, side="right") - 1, 0, len(self.h) - 1)
        return ((tq - self.t[i])[..., None],) + tuple(c[i] for c in self._coef[first:])

    def __call__(self, tq, nu: int = 0) -> np.ndarray:
        """Value (nu = 0), first (1) or second (2) derivative at parameters ``tq``."""
        if nu == 0:
            u, c0, c1, c2, c3 = self._where(tq, 0)
            return c0 + u * (c1 + u * (c2 + u * c3))
        u, c1, c2, c3 = self._where(tq, 1)
        if nu == 1:
            return c1 + u * (2.0 * c2 + 3.0 * u * c3)
        return 2.0 * c2 + 6.0 * u * c3

    def derivatives(self, tq) -> tuple[np.ndarray, np.ndarray]:
        """First and second derivatives at ``tq`` (one interval search for both)."""
        u, c1, c2, c3 = self._where(tq, 1)
        c3u = u * c3
        return c1 + u * (2.0 * c2 + 3.0 * c3u), 2.0 * c2 + 6.0 * c3u


PARAMETERS = ("chord", "centripetal")


def chord_parameter(points: np.ndarray, kind: str = "chord") -> np.ndarray:
    """Cumulative parameter along the points: chord length, or its square root per step.

    The centripetal parameter (steps ``|p[i+1] - p[i]| ** 0.5``; E. T. Y. Lee, Computer-Aided
    Design 21, 1989) gives another smooth curve through the same points; how far the answer
    moves between the two curves measures how loosely the points fix the shape between them.
    """
    steps = np.hypot(*np.diff(points, axis=0).T)
    return np.r_[0.0, np.cumsum(np.sqrt(steps) if kind == "centripetal" else steps)]


def parametric_spline(points: np.ndarray, closed: bool,
                      parameter: str = "chord") -> tuple[CubicSpline, float]:
    """Spline through ``points`` with the cumulative chord length as parameter.

    Parameters
    ----------
    points : ndarray, shape (n, 2)
        For a closed loop the last point repeats the first.
    closed : bool
        Periodic loop (a body without a trailing edge): the spline is continuous in curvature
        all round, including at the first point.
    parameter : {"chord", "centripetal"}
        See :func:`chord_parameter`.

    Returns
    -------
    (spline, t_end)
        Parameter 0 is the first point, ``t_end`` the last.
    """
    pts = np.asarray(points, float)
    t = chord_parameter(pts, parameter)
    if not closed:
        return CubicSpline(t, pts), float(t[-1])
    k = min(WRAP, len(pts) - 2)
    period = t[-1]
    tt = np.r_[t[-k - 1:-1] - period, t, t[1:k + 1] + period]
    yy = np.vstack([pts[-k - 1:-1], pts, pts[1:k + 1]])
    return CubicSpline(tt, yy), float(period)


def _bracket(t: np.ndarray, k: int, closed: bool) -> tuple[float, float]:
    """Parameters of the knots on either side of knot ``k`` (across the seam of a loop)."""
    last = len(t) - 1
    if closed:
        k = k % last
        lo = t[k - 1] if k > 0 else t[last - 1] - t[last]
        return float(lo), float(t[k + 1])
    return float(t[max(k - 1, 0)]), float(t[min(k + 1, last)])


def _farthest_on(spl: CubicSpline, lo: float, hi: float, tk: float, origin: np.ndarray) -> float:
    """Parameter in ``[lo, hi]`` of the curve point farthest from ``origin``, starting at ``tk``.

    The squared distance is stationary at its maximum, so its derivative is searched for a root
    (Newton's method kept inside a shrinking bracket, to round-off). Without an interior root the
    start ``tk`` is kept.
    """
    def parts(x):
        q = np.array([x])
        return spl(q)[0] - origin, spl(q, 1)[0], spl(q, 2)[0]

    r, d1, _ = parts(lo)
    f_lo = float(np.dot(r, d1))
    r, d1, _ = parts(hi)
    f_hi = float(np.dot(r, d1))
    if not (f_lo > 0.0 > f_hi):
        return float(tk)
    x = float(tk)
    tiny = 4.0 * np.finfo(float).eps * max(abs(lo), abs(hi), hi - lo)
    for _ in range(200):
        r, d1, d2 = parts(x)
        f = float(np.dot(r, d1))
        if f > 0.0:
            lo = x
        else:
            hi = x
        df = float(np.dot(d1, d1) + np.dot(r, d2))
        step = -f / df if df < 0.0 else np.inf
        if abs(step) <= 16.0 * tiny:  # converged (Newton is quadratic near the root)
            return min(max(x + step, lo), hi)
        nxt = x + step
        if not lo <= nxt <= hi:
            nxt = 0.5 * (lo + hi)
        if hi - lo <= tiny:
            return nxt
        x = nxt
    return x


def farthest_point(points: np.ndarray, closed: bool, origin, spline=None) -> np.ndarray:
    """Point of the smooth curve through ``points`` farthest from ``origin``.

    Parameters
    ----------
    points : ndarray, shape (n, 2)
    closed : bool
        As in :func:`parametric_spline`.
    origin : array_like, shape (2,)
    spline : (CubicSpline, t_end), optional
        The curve, when already built.

    Returns
    -------
    ndarray, shape (2,)
    """
    pts = np.asarray(points, float)
    o = np.asarray(origin, float)
    spl, t_end = spline or parametric_spline(pts, closed)
    t = chord_parameter(pts)
    k = int(np.argmax(np.hypot(*(pts - o).T)))
    tk = _farthest_on(spl, *_bracket(t, k, closed), float(t[k]), o)
    return spl(np.array([tk]))[0]


def extent_samples(points: np.ndarray) -> tuple[int, int]:
    """Indices of the two points of a closed loop that lie farthest apart.

    Among pairs within ``TIE`` of the longest (a circle, whose diameters differ only by the
    rounding of its coordinates) the pair with a point nearest the loop's first point is taken,
    so that a circle keeps the chord it was drawn with when it is turned, written out and read
    back.

    Parameters
    ----------
    points : ndarray, shape (n, 2)
        A closed loop, the last point repeating the first.
    """
    import shapely

    pts = np.asarray(points, float)
    loop = pts[:-1]
    hull = shapely.get_coordinates(shapely.convex_hull(shapely.multipoints(loop)))[:-1]
    rows = []
    for start in range(0, len(hull), 1024):  # chunks keep the distance table small
        block = hull[start:start + 1024]
        d = np.hypot(*(block[:, None, :] - hull[None, :, :]).transpose(2, 0, 1))
        near = d >= d.max() * (1.0 - TIE)
        to_first = np.minimum(np.hypot(*(block - pts[0]).T)[:, None],
                              np.hypot(*(hull - pts[0]).T)[None, :])
        a, b = np.unravel_index(int(np.argmin(np.where(near, to_first, np.inf))), d.shape)
        rows.append((float(d[a, b]), float(to_first[a, b]), block[a], hull[b]))
    top = max(r[0] for r in rows)
    _, _, p, q = min((r for r in rows if r[0] >= top * (1.0 - TIE)), key=lambda r: r[1])
    i, j = (int(np.argmin(np.hypot(*(loop - e).T))) for e in (p, q))
    return i, j


def longest_extent(points: np.ndarray, spline=None) -> tuple[np.ndarray, np.ndarray]:
    """The two points of the closed curve through ``points`` that lie farthest apart.

    The pair of :func:`extent_samples`, each end then moved along the curve (by turns, each
    within the intervals beside its sample, so that it cannot wander round a circle) to where
    the distance is largest.

    Returns
    -------
    (p, q) : ndarray, shape (2,) each
        ``p`` near the first sample of :func:`extent_samples`, ``q`` near the second.
    """
    pts = np.asarray(points, float)
    spl, _ = spline or parametric_spline(pts, True)
    i, j = extent_samples(pts)
    t = chord_parameter(pts)
    bi, bj = _bracket(t, i, True), _bracket(t, j, True)
    ti, tj = float(t[i]), float(t[j])
    p, q = pts[i], pts[j]
    size = float(np.hypot(*(p - q)))
    for _ in range(50):
        ti = _farthest_on(spl, *bi, ti, q)
        p_new = spl(np.array([ti]))[0]
        tj = _farthest_on(spl, *bj, tj, p_new)
        q_new = spl(np.array([tj]))[0]
        moved = max(np.hypot(*(p_new - p)), np.hypot(*(q_new - q)))
        p, q = p_new, q_new
        if moved <= 1e-14 * size:
            break
    return p, q
