"""Panelling: place the panel end points (nodes) on an outline.

Two ways:

* :func:`respline` fits a smooth parametric cubic spline through the given points and puts
  ``n_panels`` panels on it, shorter where the curvature is high (leading edge, a rounded nose)
  and near the trailing edge, where the Kutta condition acts;
* :func:`given_points` keeps the points exactly as given.

Both return a :class:`Panelling`: the nodes of one body in the outline's convention. The spline
curve is kept so that a coarser panelling of the *same* curve can be made for the error estimate.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from panelflow.errors import GeometryError
from panelflow.geometry.curve import parametric_spline
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

    def __post_init__(self):
        self.nodes.setflags(write=False)

    @property
    def n_panels(self) -> int:
        return len(self.nodes) - 1

    def coarsened(self) -> "Panelling":
        """The same body with about half the panels (for the discretisation error estimate)."""
        n = max(MIN_PANELS, self.n_panels // 2)
        if self.method == "spline":
            return respline(self.outline, n)
        idx = np.unique(np.r_[np.arange(0, len(self.nodes) - 1, 2), len(self.nodes) - 1])
        return Panelling(self.outline, self.nodes[idx].copy(), self.method)


def _spline(outline: Outline):
    """Parametric cubic spline through the outline, parameter = cumulative chord length."""
    return parametric_spline(outline.points, outline.kind == SMOOTH)


def respline(outline: Outline, n_panels: int) -> Panelling:
    """Re-panel an outline with ``n_panels`` panels on a smooth spline through its points.

    Parameters
    ----------
    outline : Outline
    n_panels : int
        Number of surface panels (the base of a blunt trailing edge is extra).

    Returns
    -------
    Panelling
    """
    if n_panels < MIN_PANELS:
        raise GeometryError(f"{outline.label}: at least {MIN_PANELS} panels needed, got {n_panels}")
    spl, t_end = _spline(outline)
    m = max(2000, _SAMPLES_PER_PANEL * n_panels)  # fine samples for curvature and arc length
    t = np.linspace(0.0, t_end, m + 1)
    d1 = spl(t, 1)
    d2 = spl(t, 2)
    speed = np.hypot(d1[:, 0], d1[:, 1])
    kappa = np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]) / speed**3
    # arc length along the fine parameter grid (trapezoid)
    s = np.r_[0.0, np.cumsum(0.5 * (speed[1:] + speed[:-1]) * np.diff(t))]
    chord = outline.chord
    density = 1.0 + _CURVATURE_WEIGHT * (kappa * chord) ** _CURVATURE_POWER
    # Smooth the curvature term over about one mean panel so spacing changes gradually.
    # odd width: a centred moving average, so mirror-image outlines get mirror-image nodes
    width = 2 * (int(round(m / n_panels)) // 2) + 1
    kernel = np.ones(width) / width
    mode = "wrap" if outline.kind == SMOOTH else "edge"
    density = np.convolve(np.pad(density, width, mode=mode), kernel, mode="same")[width:-width]
    if outline.kind != SMOOTH:
        # Node density growing like d^-1/2 towards the trailing edge, as cosine spacing does: the
        # surface speed is not smooth there (it varies like a fractional power of the distance),
        # and panels shrinking like 1/n^2 at the edge keep the error of that end region small.
        d_te = np.minimum(s, s[-1] - s) / chord + (_TE_CUTOFF / n_panels) ** 2
        density += _TE_WEIGHT * np.maximum(np.sqrt(_TE_WIDTH / d_te) - 1.0, 0.0)
    cum = np.r_[0.0, np.cumsum(0.5 * (density[1:] + density[:-1]) * np.diff(s))]
    targets = np.linspace(0.0, cum[-1], n_panels + 1)
    t_nodes = np.interp(targets, cum, t)
    nodes = spl(t_nodes)
    nodes[0] = outline.points[0]
    nodes[-1] = outline.points[-1]
    return Panelling(outline, nodes, "spline")


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
