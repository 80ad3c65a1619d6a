"""Panelling: place the panel end points (nodes) on an outline.

Two ways:

* :func:`respline` fits a smooth parametric cubic spline through the given points and puts
  ``n_panels`` panels on it, shorter where the curvature is high (leading edge, a rounded nose)
  and near the trailing edge, where the Kutta condition acts;
* :func:`given_points` keeps the points exactly as given.

Both return a :class:`Panelling`: the nodes of one body in the outline's convention. The spline
curve (its fit and its fine samples of curvature and arc length) is kept so that a coarser
panelling of the *same* curve can be made for the error estimate without fitting it again.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg

from panelflow.errors import GeometryError
from panelflow.geometry.outline import SMOOTH, Outline

MIN_PANELS = 8
# Spacing parameters, tuned against the exact Joukowski and Karman-Trefftz solutions
# (tests/test_solver_exact.py): node density 1 + weight * (curvature * chord)^power, which
# resolves suction peaks at sharp noses (a square root instead left Cp errors 5x larger there);
# weight and chord-fraction extent of the extra density towards the trailing edge; the
# trailing-edge panel is about (cutoff/n)^2 long.
_CURVATURE_WEIGHT = 0.5
_CURVATURE_POWER = 0.85
_TE_WEIGHT = 2.0
_TE_WIDTH = 0.2
_TE_CUTOFF = 1.0
_SAMPLES_PER_PANEL = 8


@dataclass(frozen=True)
class Panelling:
    """Node positions of one body.

    Attributes
    ----------
    outline : Outline
        The body the nodes lie on.
    nodes : ndarray, shape (n + 1, 2)
        Node loop in the outline's convention: first and last node are the trailing-edge points
        (the same point for a sharp trailing edge or a smooth body).
    method : str
        ``"spline"`` or ``"given"``.
    """

    outline: Outline
    nodes: np.ndarray
    method: str
    curve: object = field(default=None, repr=False, compare=False)

    def __post_init__(self):
        self.nodes.setflags(write=False)

    @property
    def n_panels(self) -> int:
        return len(self.nodes) - 1

    def coarsened(self) -> "Panelling":
        """The same body with about half the panels (for the discretisation error estimate)."""
        n = max(MIN_PANELS, self.n_panels // 2)
        if self.method == "spline":
            return respline(self.outline, n, curve=self.curve)
        idx = np.unique(np.r_[np.arange(0, len(self.nodes) - 1, 2), len(self.nodes) - 1])
        return Panelling(self.outline, self.nodes[idx].copy(), self.method)


class _Spline:
    """Cubic interpolating spline with not-a-knot ends, for values of shape (n, d).

    Written out (second-derivative form, banded solve) rather than taken from
    scipy.interpolate, whose import alone costs about half a second of start-up.
    """

    def __init__(self, t: np.ndarray, y: np.ndarray):
        n = len(t) - 1
        h = np.diff(t)
        dy = np.diff(y, axis=0) / h[:, None]
        ab = np.zeros((5, n + 1))  # bands for (l, u) = (2, 2): ab[2 + i - j, j] = a[i, j]
        rhs = np.zeros((n + 1, y.shape[1]))
        i = np.arange(1, n)
        ab[2 + 1, i - 1] = h[:-1]  # a[i, i-1]
        ab[2, i] = 2.0 * (h[:-1] + h[1:])
        ab[2 - 1, i + 1] = h[1:]  # a[i, i+1]
        rhs[1:n] = 6.0 * (dy[1:] - dy[:-1])
        # not-a-knot: third derivative continuous at the second and the last-but-one point
        ab[2, 0], ab[1, 1], ab[0, 2] = h[1], -(h[0] + h[1]), h[0]
        ab[4, n - 2], ab[3, n - 1], ab[2, n] = h[n - 1], -(h[n - 2] + h[n - 1]), h[n - 2]
        self.t, self.y, self.h = t, y, h
        # LAPACK's banded solver directly (scipy.linalg.solve_banded's checks cost as much);
        # dgbsv wants two more rows of band storage for the fill-in of the pivoting
        lub = np.zeros((7, n + 1))
        lub[2:] = ab
        _, _, m, info = scipy.linalg.lapack.dgbsv(2, 2, lub, rhs, overwrite_ab=True,
                                                  overwrite_b=True)
        if info != 0:
            raise GeometryError("spline through the outline points cannot be fitted "
                                "(repeated points?)")
        self.m = m
        # per interval, the cubic in u = t - t_i: y = c0 + u (c1 + u (c2 + u c3)), evaluated
        # from gathers of its coefficients (the second-derivative form needed more work)
        hh = h[:, None]
        self._coef = (y[:-1], dy - hh * (2.0 * m[:-1] + m[1:]) / 6.0, 0.5 * m[:-1],
                      (m[1:] - m[:-1]) / (6.0 * hh))

    def _where(self, tq: np.ndarray, first: int):
        t = self.t
        i = np.clip(np.searchsorted(t, tq, side="right") - 1, 0, len(self.h) - 1)
        return ((tq - t[i])[:, None],) + tuple(c[i] for c in self._coef[first:])

    def __call__(self, tq: np.ndarray, nu: int = 0) -> np.ndarray:
        """Value (nu = 0), first (1) or second (2) derivative at parameters ``tq``."""
        if nu == 0:
            u, c0, c1, c2, c3 = self._where(tq, 0)
            return c0 + u * (c1 + u * (c2 + u * c3))
        u, c1, c2, c3 = self._where(tq, 1)
        if nu == 1:
            return c1 + u * (2.0 * c2 + 3.0 * u * c3)
        return 2.0 * c2 + 6.0 * u * c3

    def derivatives(self, tq: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """First and second derivatives at ``tq`` (one interval search for both)."""
        u, c1, c2, c3 = self._where(tq, 1)
        c3u = u * c3
        return c1 + u * (2.0 * c2 + 3.0 * c3u), 2.0 * c2 + 6.0 * c3u


# A closed loop is splined as an open one with this many points wrapped on at each end: the end
# conditions' influence decays by about a factor 3.7 per point, so 24 points leave < 1e-13.
_WRAP = 24


def _spline(outline: Outline):
    """Parametric cubic spline through the outline, parameter = cumulative chord length."""
    pts = np.asarray(outline.points)
    t = np.r_[0.0, np.cumsum(np.hypot(*np.diff(pts, axis=0).T))]
    if outline.kind != SMOOTH:
        return _Spline(t, pts), t[-1]
    k = min(_WRAP, len(pts) - 2)
    period = t[-1]
    tt = np.r_[t[-k - 1:-1] - period, t, t[1:k + 1] + period]
    yy = np.vstack([pts[-k - 1:-1], pts, pts[1:k + 1]])
    return _Spline(tt, yy), period


@dataclass(frozen=True)
class _Curve:
    """A spline fit of one outline with its fine samples: parameter, arc length, curvature."""

    spline: _Spline
    t: np.ndarray
    s: np.ndarray
    kappa: np.ndarray

    @property
    def samples(self) -> int:
        return len(self.t) - 1


def _samples(n_panels: int) -> int:
    return max(2000, _SAMPLES_PER_PANEL * n_panels)  # fine samples for curvature and arc length


def _fit(outline: Outline, n_panels: int) -> _Curve:
    spl, t_end = _spline(outline)
    m = _samples(n_panels)
    t = np.linspace(0.0, t_end, m + 1)
    d1, d2 = spl.derivatives(t)
    speed = np.hypot(d1[:, 0], d1[:, 1])
    kappa = np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]) / speed**3
    # arc length along the fine parameter grid (trapezoid)
    s = np.empty(m + 1)
    s[0] = 0.0
    np.cumsum(0.5 * (speed[1:] + speed[:-1]) * np.diff(t), out=s[1:])
    return _Curve(spl, t, s, kappa)


def respline(outline: Outline, n_panels: int, curve=None) -> Panelling:
    """Re-panel an outline with ``n_panels`` panels on a smooth spline through its points.

    Parameters
    ----------
    outline : Outline
    n_panels : int
        Number of surface panels (the base of a blunt trailing edge is extra).
    curve : optional
        The ``curve`` of an earlier panelling of the same outline (:attr:`Panelling.curve`):
        its spline fit and fine samples are reused when they are at least as fine as
        ``n_panels`` needs (the half-panel solve of the error estimate).

    Returns
    -------
    Panelling
    """
    if n_panels < MIN_PANELS:
        raise GeometryError(f"{outline.label}: at least {MIN_PANELS} panels needed, got {n_panels}")
    if not isinstance(curve, _Curve) or curve.samples < _samples(n_panels):
        curve = _fit(outline, n_panels)
    t, s, kappa = curve.t, curve.s, curve.kappa
    m = curve.samples
    chord = outline.chord
    density = 1.0 + _CURVATURE_WEIGHT * (kappa * chord) ** _CURVATURE_POWER
    # Smooth the curvature term over about one mean panel so spacing changes gradually.
    # odd width: a centred moving average, so mirror-image outlines get mirror-image nodes
    width = 2 * (int(round(m / n_panels)) // 2) + 1
    kernel = np.ones(width) / width
    if outline.kind == SMOOTH:  # np.pad's "wrap" and "edge", written out (np.pad costs more)
        padded = np.concatenate([density[-width:], density, density[:width]])
    else:
        padded = np.concatenate([np.full(width, density[0]), density,
                                 np.full(width, density[-1])])
    density = np.convolve(padded, kernel, mode="same")[width:-width]
    if outline.kind != SMOOTH:
        # Node density growing like d^-1/2 towards the trailing edge, as cosine spacing does: the
        # surface speed is not smooth there (it varies like a fractional power of the distance),
        # and panels shrinking like 1/n^2 at the edge keep the error of that end region small.
        d_te = np.minimum(s, s[-1] - s) / chord + (_TE_CUTOFF / n_panels) ** 2
        density += _TE_WEIGHT * np.maximum(np.sqrt(_TE_WIDTH / d_te) - 1.0, 0.0)
    cum = np.empty(m + 1)
    cum[0] = 0.0
    np.cumsum(0.5 * (density[1:] + density[:-1]) * np.diff(s), out=cum[1:])
    targets = np.linspace(0.0, cum[-1], n_panels + 1)
    t_nodes = np.interp(targets, cum, t)
    nodes = curve.spline(t_nodes)
    nodes[0] = outline.points[0]
    nodes[-1] = outline.points[-1]
    return Panelling(outline, nodes, "spline", curve)


def given_points(outline: Outline) -> Panelling:
    """Use the outline's own points as panel nodes."""
    if len(outline.points) - 1 < MIN_PANELS:
        raise GeometryError(
            f"{outline.label}: {len(outline.points) - 1} panels from the given points; "
            f"at least {MIN_PANELS} needed")
    return Panelling(outline, np.array(outline.points, float), "given")


def panel_outline(outline: Outline, n_panels: int | None) -> Panelling:
    """Re-panel with ``n_panels`` panels, or keep the given points when ``n_panels`` is None."""
    return given_points(outline) if n_panels is None else respline(outline, n_panels)
