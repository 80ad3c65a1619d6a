"""Outline quality: digitising noise, resolution, doubtful points, and the panelled geometry.

A coordinate table is rarely clean: points are digitised from a drawing (scatter), rounded to a
few decimals, too few at the nose, or one of them is mistyped. The panel method places its
panels on a smooth curve through every point, so each of these reaches the answer. This module
measures them, names the input line of a doubtful point, and checks the geometry the panels
actually describe, not only the input polygon:

* :func:`inspect_input` -- scatter of the points about a smooth curve (with the rounding step of
  the coordinates when there is one), point spacing and the nose radius it has to resolve, and
  points that lie far off the curve through their neighbours (a mistyped coordinate);
* :func:`panel_problems` / :func:`checked_panellings` -- the panelled loops: crossing themselves
  or each other, folding back, neighbouring panels of very different length, and bodies too
  thin for their panels;
* :func:`smoothed` -- a smoothing curve within a tolerance the user states;
* :func:`thinned` -- the outline through every other input point, from which the error due to
  the input's own resolution is estimated (see :mod:`panelflow.analysis.accuracy`).

The rule that decides between refusing and warning is stated beside each limit below: geometry
on which no number can be right (panels that cross or fold back, a body thinner than
:data:`MIN_THICKNESS` of its chord) is refused with the reason; anything that only limits the
accuracy (a doubtful point that leaves the curve simple, abrupt panel spacing, coarse or noisy
points) becomes a sentence in the result's notes, and its size goes into the printed error
estimate.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from shapely.geometry import LinearRing

from panelflow.errors import GeometryError
from panelflow.geometry import curve
from panelflow.geometry.outline import BLUNT, SHARP, SMOOTH, Outline

# --------------------------------------------------------------------------- stated limits
# A point is doubtful (probably mistyped) when its distance from the curve through its
# neighbours is more than SUSPECT_RATIO times the typical distance of the points around it and
# of the whole outline, and more than SUSPECT_FLOOR of the chord. Measured: scatter of 1e-4 to
# 3e-4 chord or six-decimal rounding gives ratios below 6; one y value ten times too large,
# a spike of 1e-4 chord or a swapped digit gives 30 and more (tests/test_quality.py).
SUSPECT_RATIO = 15.0
SUSPECT_FLOOR = 2e-5
MAX_SUSPECTS = 10
# Neighbouring panels whose lengths differ by more than this factor are reported (common
# practice for panel methods: the spacing should change gradually). The spline panelling grades
# its spacing to at most 2.5, so only given points (--keep-points) can reach it.
PANEL_LENGTH_RATIO = 4.0
# A panel that turns back on its neighbour by more than this (degrees) folds the outline back
# on itself: a loop or needle of the curve through the points, never a real section. The sharp
# trailing edge is the loop's ends, not a turn between neighbouring panels, and the nodes next
# to the leading edge (both chord ends of a body without a trailing edge) are not counted: a
# sharp nose at a coarse panel count turns that much.
FOLD_TURN_DEG = 150.0
# Neighbours on each side used to fit the local curve that a point is compared with.
_HALF = 3


# --------------------------------------------------------------------------- local fits
def _chain(outline: Outline) -> tuple[np.ndarray, bool]:
    """The outline's distinct points in loop order and whether they close on themselves.

    A body with a trailing edge is an open chain from the upper to the lower trailing-edge point
    (a sharp edge's shared point once at each end); a smooth body is a closed loop.
    """
    pts = np.asarray(outline.points, float)
    if outline.kind == SMOOTH:
        return pts[:-1], True
    return pts, False


def _stencils(n: int, closed: bool, excluded: np.ndarray, half: int = _HALF) -> np.ndarray:
    """Indices of the ``2 * _HALF`` neighbours used for each point, skipping ``excluded`` ones.

    For a closed loop the neighbours wrap round (indices below 0 or from n up stand for the
    points one period away); at the ends of an open chain the window shifts inwards, so the
    end point is extrapolated to.
    """
    k = 2 * half
    avail = np.setdiff1d(np.arange(n), excluded)
    ext = np.r_[avail - n, avail, avail + n] if closed else avail
    i = np.arange(n)
    pos = np.searchsorted(ext, i)
    lo = pos - (half + 1)
    if not closed:
        lo = np.clip(lo, 0, len(ext) - (k + 2))
    idx = ext[lo[:, None] + np.arange(k + 2)[None, :]]
    dist = np.abs(idx - i[:, None]).astype(float)
    dist[idx == i[:, None]] = np.inf  # never a point's own neighbour
    order = np.argsort(dist, axis=1, kind="stable")[:, :k]
    return np.take_along_axis(idx, order, axis=1)


def _parameter(pts: np.ndarray, closed: bool, excluded) -> tuple[np.ndarray, float]:
    """Chord-length parameter of each point along the points that are not excluded.

    An excluded point (a doubtful one) must not stretch the parameter of its neighbours, so it
    gets the parameter of its projection on the chord between the kept points either side.

    Returns
    -------
    (t, period) : ndarray (n,) and the loop's length (0 for an open chain)
    """
    n = len(pts)
    excluded = np.asarray(excluded, int)
    keep = np.setdiff1d(np.arange(n), excluded)
    if closed:  # one kept point beyond each end, so every excluded point has two neighbours
        ring = np.r_[keep[-1] - n, keep, keep[0] + n]
        tk = curve.chord_parameter(pts[ring % n])
        tk = tk - tk[1]
        period = float(tk[-1])
    else:
        ring = keep
        tk = curve.chord_parameter(pts[ring])
        period = 0.0
    t = np.interp(np.arange(n), ring, tk)
    for i in excluded:
        j = int(np.searchsorted(ring, i))
        if 0 < j < len(ring):  # between two kept points: project on their chord
            a, b = pts[ring[j - 1] % n], pts[ring[j] % n]
            ab = b - a
            f = np.clip(np.dot(pts[i] - a, ab) / max(np.dot(ab, ab), 1e-300), 0.0, 1.0)
            t[i] = tk[j - 1] + f * (tk[j] - tk[j - 1])
    return t, period


def local_residuals(points: np.ndarray, closed: bool, excluded=(), degree: int = 3, only=None):
    """Distance of each point from a cubic through its neighbours, normal to that curve.

    Each point is compared with the cubic (in the chord-length parameter) fitted by least
    squares through its ``2 * _HALF`` nearest neighbours along the outline, itself left out: a
    leave-one-out prediction. The idea is the difference-based scatter estimate of Gasser,
    Sroka and Jennen-Steinmetz (Biometrika 73, 1986), with local cubics instead of lines so that
    the curvature of a nose does not read as scatter.

    Parameters
    ----------
    points : ndarray, shape (n, 2)
        Distinct points in loop order.
    closed : bool
        The points close on themselves (wrap round).
    excluded : sequence of int
        Points not to be used as neighbours (already found doubtful).
    degree : int
        Of the local polynomial (3 or 5).
    only : sequence of int, optional
        Compute these points only (the others are NaN).

    Returns
    -------
    residual : ndarray, shape (n,)
        Signed normal distance of each point from the fitted curve (outline units).
    gain : ndarray, shape (n,)
        ``sqrt(1 + sum of squared fit weights)``: random scatter of size s at every point gives
        residuals of size ``s * gain``.
    """
    pts = np.asarray(points, float)
    n = len(pts)
    excluded = np.asarray(excluded, int)
    half = (degree + 3) // 2  # 6 neighbours for a cubic, 8 for a quintic
    if n - len(excluded) < 2 * half + 2:
        return np.full(n, np.nan), np.full(n, np.nan)
    rows = np.arange(n) if only is None else np.asarray(only, int)
    nb = _stencils(n, closed, excluded, half)[rows]
    t, period = _parameter(pts, closed, excluded)
    tn = t[nb % n] + period * np.floor_divide(nb, n)  # unwrapped parameter of each neighbour
    tau = tn - t[rows, None]
    scale = np.max(np.abs(tau), axis=1, keepdims=True)
    scale[scale == 0] = 1.0
    u = tau / scale
    vander = u[:, :, None] ** np.arange(degree + 1)  # (n, k, degree + 1)
    vt = np.swapaxes(vander, 1, 2)
    # least-squares weights (V^T V)^-1 V^T by the normal equations: u lies in [-1, 1], so they
    # are well conditioned for these small degrees, and far cheaper than an SVD per point
    try:
        pinv = np.linalg.solve(vt @ vander, vt)  # (n, degree + 1, k)
    except np.linalg.LinAlgError:
        # a degenerate stencil (met on a plain flap with a tight hinge rounding, naca0012 with
        # radius 0.003 at 10 deg): the minimum-norm least-squares weights by the SVD instead
        pinv = np.linalg.pinv(vander)
    w0, w1 = pinv[:, 0, :], pinv[:, 1, :]  # value and slope at the point
    q = pts[nb % n]  # (n, k, 2)
    pred = np.einsum("nk,nkd->nd", w0, q)
    tangent = np.einsum("nk,nkd->nd", w1, q)
    norm = np.hypot(tangent[:, 0], tangent[:, 1])
    norm[norm == 0] = 1.0
    normal = np.stack([-tangent[:, 1], tangent[:, 0]], axis=1) / norm[:, None]
    residual = np.full(n, np.nan)
    gain = np.full(n, np.nan)
    residual[rows] = np.sum((pts[rows] - pred) * normal, axis=1)
    gain[rows] = np.sqrt(1.0 + np.sum(w0 * w0, axis=1))
    return residual, gain


def _scatter(z: np.ndarray) -> float:
    """Robust size of normalised residuals: 1.4826 x median (the standard deviation for
    normally distributed ones)."""
    z = z[np.isfinite(z)]
    return float(1.4826 * np.median(z)) if len(z) else 0.0


def _near(i: int, n: int, closed: bool, reach: int) -> np.ndarray:
    """Indices within ``reach`` of ``i`` along the chain (wrapping on a closed loop)."""
    idx = np.arange(i - reach, i + reach + 1)
    idx = idx[idx != i]
    return idx % n if closed else idx[(idx >= 0) & (idx < n)]


def doubtful_points(points: np.ndarray, closed: bool, size: float, with_residuals=False):
    """Points that lie far off the curve through their neighbours, worst first.

    A point is doubtful when, with it left out of its neighbours' fits, its distance from the
    curve through those neighbours exceeds :data:`SUSPECT_RATIO` times both the typical distance
    of its nearest neighbours from their own fits (median over ``_HALF`` a side, the point left
    out) and that of the whole outline,
    and :data:`SUSPECT_FLOOR` times ``size``. A coarsely drawn nose fails the first test, since
    its neighbours are as far off their own fits; scatter fails the second.

    Returns
    -------
    list of (index, deviation, ratio)
        Deviation in outline units (signed; positive towards the inside of the loop), ratio to
        the larger typical distance. With ``with_residuals``, also the first pass's
        ``(residual, gain)`` of :func:`local_residuals` (nothing excluded), for reuse.
    """
    pts = np.asarray(points, float)
    n = len(pts)
    found: list = []
    floor = 1e-12 * size  # round-off of the coordinates
    first = None
    for _ in range(MAX_SUSPECTS):
        excluded = [f[0] for f in found]
        r, g = local_residuals(pts, closed, excluded)
        if first is None:
            first = (r, g)
        if not np.all(np.isfinite(r[np.setdiff1d(np.arange(n), excluded)])):
            break
        z = np.abs(r) / g
        z[excluded] = -1.0
        overall = _scatter(z[z >= 0])
        best = None
        for c in np.argsort(-z)[:5]:
            if z[c] < 0:
                continue
            near = np.setdiff1d(_near(int(c), n, closed, _HALF), excluded)
            r2, g2 = local_residuals(pts, closed, [*excluded, int(c)], only=np.r_[int(c), near])
            z2 = np.abs(r2) / g2
            local = float(np.median(z2[near])) if len(near) else 0.0
            ratio = z2[c] / max(local, overall, floor)
            if best is None or ratio > best[2]:
                best = (int(c), float(r2[c]), float(ratio))
        if best is None or best[2] <= SUSPECT_RATIO or abs(best[1]) <= SUSPECT_FLOOR * size:
            break
        found.append(best)
    return (found, first) if with_residuals else found


# --------------------------------------------------------------------------- thinned input
def thinned(outline: Outline, parity: int) -> Outline:
    """The outline through every other input point, for the input-resolution error estimate.

    ``parity`` 0 keeps the even-numbered points, 1 the odd-numbered ones; the trailing-edge
    points (the loop's ends) are always kept, so the body keeps its trailing edge and kind. A
    smooth body keeps the points of one parity round its loop.

    Raises
    ------
    GeometryError
        Fewer than the points an outline needs would remain.
    """
    pts = np.asarray(outline.points, float)
    n = len(pts)
    if outline.kind == SMOOTH:
        idx = np.arange(parity, n - 1, 2)
        idx = np.r_[idx, idx[:1]]
    else:
        idx = np.unique(np.r_[0, np.arange(parity, n, 2), n - 1])
    lines = None if outline.lines is None else outline.lines[idx]
    return Outline(outline.name, pts[idx], outline.kind, outline.source, lines)


# --------------------------------------------------------------------------- smoothing
@dataclass(frozen=True)
class Smoothing:
    """A smoothing curve fitted within a stated distance of every input point.

    Attributes
    ----------
    outline : Outline
        The body through the smoothed points (same number, order and kind as the input).
    tolerance : float
        The distance asked for (outline units).
    largest_deviation : float
        The largest distance of a smoothed point from its input point (outline units).
    index : int
        Row of ``outline.points`` where that largest move happens.
    line : int or None
        Input line of that point, when known.
    edge_found : bool
        The body was read without a trailing edge and the smoothed points show the sharp edge
        at the input's first point that the scatter had hidden (see :func:`smoothed`).
    """

    outline: Outline
    tolerance: float
    largest_deviation: float
    index: int
    line: int | None
    edge_found: bool = False

    def describe(self) -> str:
        """One sentence for reports."""
        where = f"line {self.line}" if self.line is not None else f"point {self.index + 1}"
        x, y = self.outline.points[self.index]
        return (f"{self.outline.name}: smoothed within {self.tolerance:.3g}; the largest move is "
                f"{self.largest_deviation:.3g} ({100 * self.largest_deviation / self.outline.chord:.3g}"
                f" % of chord) at {where}, now ({x:.6g}, {y:.6g}); "
                + ("the sharp trailing edge at the input's first point, hidden by the "
                   "scatter of the points, found again on the smoothed curve and kept"
                   if self.edge_found else self._edges()))

    def _edges(self) -> str:
        if self.outline.kind == SMOOTH:
            return "leading edge kept; no trailing edge (a rounded body)"
        return f"leading edge and {self.outline.kind} trailing edge kept"


def _smoothing_fit(t, pts, weights, lam):
    from scipy.interpolate import make_smoothing_spline

    return make_smoothing_spline(t, pts, w=weights, lam=lam)(t)


# After smoothing, the trailing edge must be found again where it was, of the same kind: the
# points are re-read as a fresh input would be (Outline.from_points) and the edge point may move
# by no more than this fraction of the chord (round-off of the held points only).
EDGE_KEPT = 1e-9


def _fit_within(outline: Outline, tol: float):
    """The smoothed points of ``outline`` (ends and nose held), largest move, its index."""
    pts, closed = _chain(outline)
    n = len(pts)
    if n < 8:
        raise GeometryError(f"{outline.label}: {n} points are too few to smooth")
    le = int(np.argmin(np.hypot(*(pts - outline.leading_edge).T)))
    if closed:  # wrap points round so the fit has no ends on a loop
        k = min(n // 2, 24)
        ext = np.vstack([pts[-k:], pts, pts[:k]])
        t = curve.chord_parameter(ext)
        core = slice(k, k + n)
        held = [k + le]
    else:
        ext, t, core = pts, curve.chord_parameter(pts), slice(0, n)
        held = [0, n - 1, le]
    w = np.ones(len(ext))
    w[held] = 1e6
    span = t[-1] - t[0]

    def fit(log_lam):
        q = _smoothing_fit(t, ext, w, 10.0**log_lam * span**3)[core]
        return q, float(np.max(np.hypot(*(q - pts).T)))

    lo, hi = -16.0, 2.0  # lam relative to span^3: from interpolation to a near straight line
    best = pts.copy()
    q, d = fit(lo)
    if d <= tol:
        best = q
        for _ in range(40):
            mid = 0.5 * (lo + hi)
            q, d = fit(mid)
            if d <= tol:
                lo, best = mid, q
            else:
                hi = mid
            if hi - lo < 0.01:
                break
    if not closed:
        best[0], best[-1] = pts[0], pts[-1]  # the trailing edge exactly as given
    best[le] = pts[le]
    dist = np.hypot(*(best - pts).T)
    i = int(np.argmax(dist))
    loop = np.vstack([best, best[:1]]) if closed else best
    index_map = np.r_[np.arange(n), 0] if closed else np.arange(n)
    lines = None if outline.lines is None else outline.lines[index_map]
    new = Outline(outline.name, loop, outline.kind, outline.source, lines)
    ring = LinearRing(new.polygon)
    if not ring.is_simple:
        raise GeometryError(f"{outline.label}: the outline smoothed within {tol:g} crosses "
                            "itself (the points of the two surfaces lie closer together than "
                            "that, or cross already)")
    return new, float(dist[i]), i


def _reread(outline: Outline) -> Outline | None:
    """The outline's points read as a fresh input would be, or None where they are no outline."""
    try:
        return Outline.from_points(outline.points, outline.name, outline.source,
                                   starts_at_trailing_edge=True, lines=outline.lines)
    except GeometryError:
        return None


def _edge_kept(before: Outline, after: Outline) -> bool:
    """The smoothed points still show the same kind of trailing edge at the same place."""
    again = _reread(after)
    if again is None or again.kind != before.kind:
        return False
    if before.kind == SMOOTH:
        return True
    move = np.hypot(*(again.trailing_edge.point - before.trailing_edge.point))
    return bool(move <= EDGE_KEPT * before.chord)


def _opened_at_input_start(outline: Outline) -> Outline | None:
    """A body read without a trailing edge, opened as a sharp-edged chain at the input's first
    point (a coordinate table starts at its trailing edge), or None when that is not known."""
    if outline.lines is None:
        return None
    ring = np.asarray(outline.points[:-1], float)
    start = int(np.argmin(outline.lines[:-1]))
    order = np.r_[np.roll(np.arange(len(ring)), -start), start]  # counter-clockwise, as given
    try:
        return Outline(outline.name, ring[order], SHARP, outline.source,
                       outline.lines[:-1][order])
    except GeometryError:
        return None


def smoothed(outline: Outline, tolerance: float) -> Smoothing:
    """Fit a smoothing curve that stays within ``tolerance`` of every input point.

    The cubic smoothing spline (Reinsch, Numerische Mathematik 10, 1967; the penalised fit
    ``sum w |p - f|^2 + lam * integral |f''|^2`` of scipy.interpolate.make_smoothing_spline) is
    fitted to x and y against the chord-length parameter, with the trailing-edge points and the
    point at the leading edge held (weights a million times the others). The smoothing weight
    ``lam`` is raised, by bisection on its logarithm, as far as the largest distance of a point
    from its input position allows.

    The trailing edge keeps its kind and place. The smoothed points are read again as a fresh
    input would be; a sharp or blunt edge that would no longer be found there (rounded, or
    closed) is refused. A body read without a trailing edge whose points scatter so much that
    the corner at the input's first point was hidden is smoothed with that point held as a
    sharp edge; where the smoothed points then show the corner, the edge is taken
    (:attr:`Smoothing.edge_found`), otherwise the body is smoothed round its closed loop.

    Parameters
    ----------
    outline : Outline
    tolerance : float
        Largest distance a point may move, in the outline's units.

    Returns
    -------
    Smoothing

    Raises
    ------
    GeometryError
        A tolerance that is not a positive number, too few points, a smoothed outline that is
        no longer a simple loop, or one on which the trailing edge would be rounded or closed.
    """
    tol = float(tolerance)
    if not np.isfinite(tol) or tol <= 0.0:
        raise GeometryError(f"{outline.label}: the smoothing tolerance must be a positive "
                            f"length, got {tolerance!r}")
    if outline.kind == SMOOTH:
        opened = _opened_at_input_start(outline)
        if opened is not None:
            try:
                new, dev, i = _fit_within(opened, tol)
            except GeometryError:
                new = None
            again = None if new is None else _reread(new)
            if (again is not None and again.kind == SHARP and np.hypot(
                    *(again.trailing_edge.point - opened.trailing_edge.point))
                    <= EDGE_KEPT * opened.chord):
                return Smoothing(new, tol, dev, i,
                                 None if new.lines is None else int(new.lines[i]), True)
    new, dev, i = _fit_within(outline, tol)
    if not _edge_kept(outline, new):
        what = {SHARP: "sharp", BLUNT: "blunt"}.get(outline.kind, "no")
        raise GeometryError(
            f"{outline.label}: smoothing within {tol:g} would round or close the {what} "
            "trailing edge (the smoothed points no longer show it where it was); try a "
            f"smaller distance than {tol:g}")
    return Smoothing(new, tol, dev, i, None if outline.lines is None else int(outline.lines[i]))


def scatter(outline: Outline) -> float:
    """Random scatter of the points about a smooth curve, in outline units; 0 when the scatter
    is rather the curve's own bending between coarse points (see :func:`inspect_input`)."""
    pts, closed = _chain(outline)
    r3, g3 = local_residuals(pts, closed, degree=3)
    r5, g5 = local_residuals(pts, closed, degree=5)
    s3, s5 = _scatter(np.abs(r3) / g3), _scatter(np.abs(r5) / g5)
    return s5 if (np.isfinite(s5) and s3 > 0 and s5 >= NOISE_SHARE * s3) else 0.0


# --------------------------------------------------------------------------- panelled geometry
def _nodes_loop(pl) -> np.ndarray:
    """Closed node loop of one panelling (the base of a blunt edge closes it)."""
    nodes = np.asarray(pl.nodes, float)
    if np.hypot(*(nodes[-1] - nodes[0])) > 0.0:
        return np.vstack([nodes, nodes[:1]])
    return nodes


def local_thickness(pl) -> tuple[np.ndarray, np.ndarray]:
    """Thickness across each panel and its length.

    The thickness at a panel is the distance from its midpoint, along the inward normal, to the
    far side of the body (the first crossing of the panelled loop).

    Returns
    -------
    thickness, length : ndarray, shape (n_panels,)
    """
    import shapely

    nodes = np.asarray(pl.nodes, float)
    a, b = nodes[:-1], nodes[1:]
    d = b - a
    length = np.hypot(d[:, 0], d[:, 1])
    inward = np.stack([-d[:, 1], d[:, 0]], axis=1) / np.where(length > 0, length, 1.0)[:, None]
    mid = 0.5 * (a + b)
    reach = 2.0 * float(np.max(np.ptp(nodes, axis=0)))
    start = mid + 1e-9 * reach * inward
    rays = shapely.linestrings(np.stack([start, mid + reach * inward], axis=1))
    hits = shapely.intersection(rays, shapely.linearrings(_nodes_loop(pl)))
    thickness = shapely.distance(shapely.points(mid), hits)
    thickness = np.where(np.isfinite(thickness), thickness, 0.0)
    return thickness, length


# --------------------------------------------------------------------------- input report
# A body thinner than this fraction of its chord is refused: below it the panel solution was not
# found to stay within its own error estimate (measured on Karman-Trefftz and NACA sections of
# 0.1 to 1 % thickness, tests/test_thin_bodies.py), and the nose radius (about 1.1 t^2 c for a
# NACA-like nose) falls below 1e-5 of the chord. Thin-airfoil theory is the tool there.
MIN_THICKNESS = 0.005
# Scatter counts as random (digitising noise or rounding) when the local quintic fits leave at
# least this fraction of what the cubics leave; a smooth but coarse outline leaves much less to
# the quintics (measured: 0.3 or below for clean inputs of 35 to 60 points, 0.67 and above with
# scatter of 1e-4 chord, tests/test_quality.py).
NOISE_SHARE = 0.5


@dataclass(frozen=True)
class DoubtfulPoint:
    """An input point far off the smooth curve through its neighbours.

    Attributes
    ----------
    index : int
        Row of the outline's ``points``.
    line : int or None
        Input-file line.
    xy : tuple of float
    deviation : float
        Distance from the curve through its neighbours (outline units).
    ratio : float
        That distance over the typical one of the points around it.
    """

    index: int
    line: int | None
    xy: tuple
    deviation: float
    ratio: float

    def describe(self, chord: float) -> str:
        where = f"line {self.line}" if self.line is not None else f"point {self.index + 1}"
        times = "over 1000" if self.ratio > 1000 else f"{self.ratio:.0f}"
        return (f"{where} ({self.xy[0]:.6g}, {self.xy[1]:.6g}) looks mistyped: it lies "
                f"{self.deviation:.3g} ({100 * self.deviation / chord:.3g} % of chord) off the "
                f"smooth curve through its neighbours, {times} times as far as the points "
                "around it")


@dataclass(frozen=True)
class InputQuality:
    """How well an outline's points define its shape (what ``panelflow check`` reports).

    Lengths are in the outline's own units; ``chord`` gives the scale.

    Attributes
    ----------
    n_points : int
        Distinct points.
    chord : float
    scatter : float
        Typical distance of a point from the smooth curve through its neighbours (the robust
        standard deviation of leave-one-out residuals of local quintics), doubtful points left
        out.
    scatter_is_noise : bool
        True when that scatter is random (digitising noise, rounding); False when it is the
        curve's own bending between coarse points.
    rounding : float or None
        Step the coordinates are rounded to (``10**-k``), when they all are.
    largest_spacing : float
        Longest distance between neighbouring points.
    nose_spacing : float
        Distance between the two points either side of the leading edge (the curve's nose).
    nose_radius : float
        Radius of curvature of the curve through the points at its leading edge.
    largest_turn_deg : float
        Largest change of direction between neighbouring point-to-point segments, trailing-edge
        corners excluded: how coarsely the tightest bend is drawn.
    thickness : float
        Largest thickness normal to the chord line over the chord.
    doubtful : tuple of DoubtfulPoint
    """

    n_points: int
    chord: float
    scatter: float
    scatter_is_noise: bool
    rounding: float | None
    largest_spacing: float
    nose_spacing: float
    nose_radius: float
    largest_turn_deg: float
    thickness: float
    doubtful: tuple

    @property
    def scatter_cause(self) -> str:
        """``"rounding"`` (the scatter is what the rounding step gives), ``"noise"`` (more than
        that: digitising) or ``"bending"`` (not random: the curve between coarse points)."""
        if not self.scatter_is_noise:
            return "bending"
        # rounding to a step spreads +/- step/2 uniformly: standard deviation step/sqrt(12)
        if self.rounding is not None and self.scatter <= 2.0 * self.rounding / np.sqrt(12.0):
            return "rounding"
        return "noise"

    def sentences(self, name: str) -> list[str]:
        """Plain sentences on what limits this input (empty when nothing does)."""
        c = self.chord
        out = [f"{name}: {p.describe(c)}" for p in self.doubtful]
        if self.thickness < MIN_THICKNESS:
            out.append(f"{name}: {100 * self.thickness:.3g} % thick, below the "
                       f"{100 * MIN_THICKNESS:g} % this panel method solves reliably")
        return out


def _rounding(values: np.ndarray) -> float | None:
    """The decimal step every coordinate is a whole multiple of (1e-1 .. 1e-8), or None."""
    v = np.asarray(values, float).ravel()
    for k in range(1, 9):
        step = 10.0 ** -k
        q = v / step
        if np.all(np.abs(q - np.round(q)) <= 1e-6 * np.maximum(1.0, np.abs(q)) * 1e-3 + 1e-6):
            return step
    return None


def _turns(pts: np.ndarray, closed: bool) -> np.ndarray:
    """Change of direction (radians) at each interior point of the chain."""
    loop = np.vstack([pts[-1:], pts, pts[:1]]) if closed else pts
    d_in = loop[1:-1] - loop[:-2]
    d_out = loop[2:] - loop[1:-1]
    cross = d_in[:, 0] * d_out[:, 1] - d_in[:, 1] * d_out[:, 0]
    return np.abs(np.arctan2(cross, np.sum(d_in * d_out, axis=1)))


def body_thickness(outline: Outline) -> float:
    """Largest extent normal to the chord line at one chordwise station, over the chord.

    At 399 stations along the chord the crossings of the outline's edges with the normal to the
    chord line are found; the thickness there is the distance between the outermost two.
    """
    le, te = outline.leading_edge, outline.trailing_edge.point
    c = outline.chord
    e = (te - le) / c
    poly = np.asarray(outline.polygon, float) - le
    xi, eta = poly @ e, poly @ np.array([-e[1], e[0]])  # along and normal to the chord
    a_xi, b_xi, a_eta, b_eta = xi, np.roll(xi, -1), eta, np.roll(eta, -1)
    x = np.linspace(0.0, c, 401)[1:-1]
    # the stations each edge spans, as index ranges into the sorted stations
    k0 = np.searchsorted(x, np.minimum(a_xi, b_xi), side="left")
    k1 = np.searchsorted(x, np.maximum(a_xi, b_xi), side="left")
    count = np.where(a_xi != b_xi, k1 - k0, 0)
    edge = np.repeat(np.arange(len(poly)), count)
    station = (np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count)
               + np.repeat(k0, count))
    f = (x[station] - a_xi[edge]) / (b_xi[edge] - a_xi[edge])
    y = a_eta[edge] + f * (b_eta[edge] - a_eta[edge])
    top = np.full(len(x), -np.inf)
    bottom = np.full(len(x), np.inf)
    np.maximum.at(top, station, y)
    np.minimum.at(bottom, station, y)
    width = np.where(np.isfinite(top) & np.isfinite(bottom), top - bottom, 0.0)
    return float(np.max(width)) / c


def inspect_input(outline: Outline) -> InputQuality:
    """Measure how well the outline's points define its shape.

    Parameters
    ----------
    outline : Outline

    Returns
    -------
    InputQuality
        Measured once per outline (outlines are immutable) and kept with it.
    """
    done = outline.__dict__.get("_input_quality")
    if done is None:
        done = outline.__dict__["_input_quality"] = _inspect(outline)
    return done


def _inspect(outline: Outline) -> InputQuality:
    pts, closed = _chain(outline)
    chord = outline.chord
    found, first = doubtful_points(pts, closed, chord, with_residuals=True)
    bad = [f[0] for f in found]
    r3, g3 = first if not bad else local_residuals(pts, closed, bad, degree=3)
    r5, g5 = local_residuals(pts, closed, bad, degree=5)
    keep = np.setdiff1d(np.arange(len(pts)), bad)
    s3 = _scatter((np.abs(r3) / g3)[keep])
    s5 = _scatter((np.abs(r5) / g5)[keep])
    if not np.isfinite(s5):  # too few points for quintics
        s5 = s3 if np.isfinite(s3) else 0.0
    steps = np.hypot(*np.diff(np.vstack([pts, pts[:1]]) if closed else pts, axis=0).T)
    spl, t_end = curve.parametric_spline(outline.points, closed)
    t = curve.chord_parameter(outline.points)
    le = outline.leading_edge
    # the leading edge lies on the curve within an interval of its nearest input point
    j = int(np.argmin(np.hypot(*(outline.points - le).T)))
    fine = np.linspace(t[max(j - 1, 0)], t[min(j + 1, len(t) - 1)], 401)
    k = int(np.argmin(np.hypot(*(spl(fine) - le).T)))
    d1, d2 = spl(fine[k:k + 1], 1)[0], spl(fine[k:k + 1], 2)[0]
    kappa = abs(d1[0] * d2[1] - d1[1] * d2[0]) / max(np.hypot(*d1) ** 3, 1e-300)
    j = int(np.clip(np.searchsorted(t, fine[k]), 1, len(t) - 1))
    nose_spacing = float(np.hypot(*(outline.points[j] - outline.points[j - 1])))
    lines = outline.lines
    doubtful = tuple(DoubtfulPoint(i, None if lines is None else int(lines[i]),
                                   (float(pts[i, 0]), float(pts[i, 1])), abs(d), ratio)
                     for i, d, ratio in found)
    return InputQuality(
        n_points=len(pts), chord=chord, scatter=s5,
        scatter_is_noise=bool(s3 > 0 and s5 >= NOISE_SHARE * s3),
        rounding=_rounding(outline.points), largest_spacing=float(np.max(steps)),
        nose_spacing=nose_spacing, nose_radius=1.0 / kappa if kappa > 0 else float("inf"),
        largest_turn_deg=float(np.degrees(np.max(_turns(pts, closed)))) if len(pts) > 2 else 0.0,
        thickness=body_thickness(outline), doubtful=doubtful)


# --------------------------------------------------------------------------- panelled checks
@dataclass(frozen=True)
class PanelCheck:
    """What the check of the panelled geometry found.

    Attributes
    ----------
    problems : tuple of str
        Geometry no number can be right on (panels crossing or folding back, a body too thin):
        the solve refuses with the first.
    notes : tuple of str
        Things that limit the accuracy (neighbouring panels of very different length).
    """

    problems: tuple
    notes: tuple


def _where(outline: Outline, xy) -> str:
    """``near (x, y), input line N`` for a place on a body."""
    pts = np.asarray(outline.points, float)
    i = int(np.argmin(np.hypot(*(pts - np.asarray(xy, float)).T)))
    line = "" if outline.lines is None else f", input line {int(outline.lines[i])}"
    return f"near ({xy[0]:.6g}, {xy[1]:.6g}){line}"


def _crossings(loop: np.ndarray) -> list:
    """Points where non-neighbouring segments of a closed loop meet."""
    import shapely

    if shapely.is_simple(shapely.linearrings(loop)):  # one GEOS call settles the usual case
        return []
    segs = shapely.linestrings(np.stack([loop[:-1], loop[1:]], axis=1))
    tree = shapely.STRtree(segs)
    a, b = tree.query(segs, predicate="intersects")
    m = len(segs)
    gap = np.abs(a - b)
    far = (a < b) & (gap > 1) & (gap < m - 1)
    out = []
    for i, j in zip(a[far], b[far]):
        p = shapely.get_coordinates(shapely.intersection(segs[i], segs[j]))
        if len(p):
            out.append(p[0])
    return out


def panel_problems(panellings) -> PanelCheck:
    """Check the panelled loops the solver will see (see the module docstring for the rules).

    Parameters
    ----------
    panellings : sequence of Panelling

    Returns
    -------
    PanelCheck
        Found once per set of panellings (they are immutable) and kept with the first.
    """
    panellings = tuple(panellings)
    cache = panellings[0].__dict__.setdefault("_panel_checks", {}) if panellings else {}
    key = tuple(id(pl) for pl in panellings)
    hit = cache.get(key)
    if hit is None or any(a is not b for a, b in zip(hit[0], panellings)):
        hit = cache[key] = (panellings, _panel_problems(panellings))
    return hit[1]


def _panel_problems(panellings) -> PanelCheck:
    import shapely

    problems, notes = [], []
    loops = []
    for pl in panellings:
        o = pl.outline
        loop = _nodes_loop(pl)
        loops.append(loop)
        hits = _crossings(loop)
        if hits:
            problems.append(
                f"{o.label}: with {pl.n_panels} panels the outline crosses itself "
                f"{_where(o, hits[0])}: the smooth curve through the points loops there, "
                "which a mistyped point usually causes")
            continue
        nodes = np.asarray(pl.nodes, float)
        chain = nodes[:-1] if o.kind == SMOOTH else nodes
        turn = np.degrees(_turns(chain, o.kind == SMOOTH))
        # a sharp nose turns nearly all the way round within a panel or two at coarse counts
        # (a 1 %-thick section at 40 panels: 162 deg); only elsewhere is such a turn a fold
        first = 0 if o.kind == SMOOTH else 1
        ends = [o.leading_edge] + ([o.trailing_edge.point] if o.kind == SMOOTH else [])
        for end in ends:
            k = int(np.argmin(np.hypot(*(chain - end).T))) - first
            turn[max(k - 1, 0):k + 2] = 0.0
            if o.kind == SMOOTH:
                turn[(np.arange(k - 1, k + 2)) % len(turn)] = 0.0
        if len(turn) and turn.max() > FOLD_TURN_DEG:
            k = int(np.argmax(turn)) + first
            problems.append(
                f"{o.label}: with {pl.n_panels} panels the outline folds back on itself "
                f"{_where(o, chain[k])} (neighbouring panels turn by {turn.max():.0f} deg, more "
                f"than {FOLD_TURN_DEG:g})")
            continue
        length = np.hypot(*np.diff(nodes, axis=0).T)
        if o.kind == SMOOTH:
            pair = np.stack([length, np.roll(length, -1)], axis=1)
        else:
            pair = np.stack([length[:-1], length[1:]], axis=1)
        ratio = pair.max(axis=1) / np.maximum(pair.min(axis=1), 1e-300)
        if len(ratio) and ratio.max() > PANEL_LENGTH_RATIO:
            k = int(np.argmax(ratio)) + 1
            notes.append(
                f"{o.label}: neighbouring panels differ in length by a factor "
                f"{ratio.max():.1f} {_where(o, nodes[k % len(nodes)])} (more than "
                f"{PANEL_LENGTH_RATIO:g}): the spacing of the points changes abruptly there")
    polys = [shapely.polygons(lp) for lp in loops]
    for i in range(len(polys)):
        for j in range(i + 1, len(polys)):
            if polys[i].is_valid and polys[j].is_valid and polys[i].intersects(polys[j]):
                a, b = panellings[i].outline, panellings[j].outline
                xy = shapely.get_coordinates(shapely.intersection(polys[i], polys[j]))
                near = f" near ({xy[0][0]:.6g}, {xy[0][1]:.6g})" if len(xy) else ""
                problems.append(f"the panels of bodies {a.name!r} and {b.name!r} overlap or "
                                f"touch{near}")
    return PanelCheck(tuple(problems), tuple(notes))


def thin_problems(outlines) -> list[str]:
    """Refusals for bodies thinner than :data:`MIN_THICKNESS` of their chord."""
    out = []
    for o in outlines:
        t = body_thickness(o)
        if t < MIN_THICKNESS:
            out.append(
                f"{o.label}: the body is {100 * t:.3g} % of its chord thick, thinner than the "
                f"{100 * MIN_THICKNESS:g} % this panel method solves reliably (its two surfaces "
                "and its nose are then finer than the panels can follow); thin-airfoil theory "
                "is the tool for such a plate")
    return out


def checked_panellings(outlines, panel, halves: bool = True) -> tuple:
    """Panel every body and check the result before anything is solved.

    Parameters
    ----------
    outlines : sequence of Outline
    panel : callable
        ``panel(outline) -> Panelling`` (for example
        :func:`panelflow.geometry.panelling.panel_outline` with the panel count bound).
    halves : bool
        Check the half-count panellings of the error estimate too (made once, and kept for the
        estimate).

    Returns
    -------
    tuple of Panelling

    Raises
    ------
    GeometryError
        A body too thin to solve, or panels (at the requested count or at the half count of the
        error estimate) that cross or fold back.
    """
    outlines = tuple(outlines)
    thin = thin_problems(outlines)
    if thin:
        raise GeometryError(thin[0])
    panellings = tuple(panel(o) for o in outlines)
    checks = [panellings] + ([tuple(pl.coarsened() for pl in panellings)] if halves else [])
    for pls in checks:
        found = panel_problems(pls)
        if found.problems:
            raise GeometryError(found.problems[0])
    return panellings
