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

from dataclasses import dataclass, field

import numpy as np

from panelflow.errors import GeometryError
from panelflow.geometry.curve import PARAMETERS, parametric_spline
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
# Largest length ratio of neighbouring panels the node density is graded to (the trailing-edge
# spacing has about 2.1 by design, kept as it is).
_GRADE = 2.5
# Density samples per panel, at least (see _resolved).
_SAMPLES_PER_STEP = 4


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
    arc_fractions : ndarray or None
        Arc length from the first node to each node over the whole length, along the spline
        (spline panellings only), so that another curve can be panelled the same way.
    """

    outline: Outline
    nodes: np.ndarray
    method: str
    arc_fractions: np.ndarray | None = field(default=None, repr=False, compare=False)
    curve: object = field(default=None, repr=False, compare=False)

    def __post_init__(self):
        self.nodes.setflags(write=False)

    @property
    def n_panels(self) -> int:
        return len(self.nodes) - 1

    def coarsened(self) -> "Panelling":
        """The same body with about half the panels (for the discretisation error estimate).

        Made once per panelling: the geometry check and the error estimate use the same one.
        """
        done = self.__dict__.get("_coarsened")
        if done is not None:
            return done
        n = max(MIN_PANELS, self.n_panels // 2)
        if self.method == "spline":
            done = respline(self.outline, n, curve=self.curve)  # the same fit, not a new one
        else:
            idx = np.unique(np.r_[np.arange(0, len(self.nodes) - 1, 2), len(self.nodes) - 1])
            done = Panelling(self.outline, self.nodes[idx].copy(), self.method)
        self.__dict__["_coarsened"] = done
        return done


def _spline(outline: Outline, parameter: str = "chord"):
    """Parametric cubic spline through the outline (see :func:`curve.parametric_spline`)."""
    return parametric_spline(outline.points, outline.kind == SMOOTH, parameter)


def _te_density(s: np.ndarray, chord: float, n_panels: int) -> np.ndarray:
    """Node density growing like d^-1/2 towards the trailing edge, as cosine spacing does: the
    surface speed is not smooth there (it varies like a fractional power of the distance), and
    panels shrinking like 1/n^2 at the edge keep the error of that end region small."""
    d_te = np.minimum(s, s[-1] - s) / chord + (_TE_CUTOFF / n_panels) ** 2
    return _TE_WEIGHT * np.maximum(np.sqrt(_TE_WIDTH / d_te) - 1.0, 0.0)


def _resolved(t, s, curvature_density, n_panels, chord, trailing_edge):
    """The node density on samples fine enough that no sample step holds much of a panel.

    The curvature part is known on the even samples ``t``; the trailing-edge part is evaluated
    exactly wherever a sample lands. The samples are placed at equal steps of ``4 u + m s/L``
    (``u`` the panel count reached, ``m`` the even samples, ``L`` the length), so each panel gets
    at least about four and the even spacing is kept elsewhere; without that the first
    trailing-edge panels and a thin section's nose fell inside one step, in runs of equal
    spacing with jumps of 4 to 12 between the runs. Every step here is a continuous function of
    the points, so nearly equal outlines get nearly equal nodes.

    Returns
    -------
    (t, s, density) on the new samples.
    """
    def total(sq, base):
        return base + (_te_density(sq, chord, n_panels) if trailing_edge else 0.0)

    dens = total(s, curvature_density)
    cum = np.r_[0.0, np.cumsum(0.5 * (dens[1:] + dens[:-1]) * np.diff(s))]
    m = len(t) - 1
    w = _SAMPLES_PER_STEP * n_panels * cum / cum[-1] + m * s / s[-1]
    tq = np.interp(np.linspace(0.0, w[-1], _SAMPLES_PER_STEP * n_panels + m + 1), w, t)
    sq = np.interp(tq, t, s)
    return tq, sq, total(sq, np.interp(tq, t, curvature_density))


def _graded(density: np.ndarray, s: np.ndarray, n_panels: int, closed: bool) -> np.ndarray:
    """Raise the node density where it falls faster than neighbouring panels may grow.

    With ``u`` the panel count reached at arc length ``s``, neighbouring panels differ in length
    by about ``exp(|d ln(density)/du|)``; the smallest density at or above the given one with
    that slope at most ``ln(_GRADE)`` is the upper envelope of cones ``ln d(v) - L |u - v|``
    (two running maxima). A nose much smaller than a panel otherwise gets a cluster of tiny
    panels next to long ones (a factor 10 between neighbours on a 1 %-thick NACA section).
    """
    f = np.log(density)
    slope = np.log(_GRADE)
    for _ in range(3):  # u moves as the density rises; three passes settle it (a fixed count,
        # so that the nodes stay a continuous function of the points)
        cum = np.r_[0.0, np.cumsum(0.5 * (density[1:] + density[:-1]) * np.diff(s))]
        u = cum * (n_panels / cum[-1])
        if closed:  # the loop continues past its ends: envelope over three periods
            uu = np.r_[u - n_panels, u, u + n_panels]
            ff = np.r_[f, f, f]
        else:
            uu, ff = u, f
        up = np.maximum.accumulate(ff + slope * uu) - slope * uu
        down = np.maximum.accumulate((ff - slope * uu)[::-1])[::-1] + slope * uu
        g = np.maximum(up, down)
        if closed:
            g = g[len(u):2 * len(u)]
        f = g
        density = np.exp(f)
    return density


def _fine_samples(spl, t_end: float, m: int):
    """Parameter, arc length and curvature at ``m + 1`` even parameter steps along the curve.

    Kept on the spline: the half-count panelling of the error estimate (and any other count up to
    ``2000 / _SAMPLES_PER_PANEL`` panels) samples the same curve at the same points.
    """
    cache = spl.__dict__.setdefault("_fine_samples", {})
    done = cache.get((t_end, m))
    if done is None:
        t = np.linspace(0.0, t_end, m + 1)
        d1, d2 = spl.derivatives(t)
        speed = np.hypot(d1[:, 0], d1[:, 1])
        kappa = np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]) / speed**3
        # arc length along the fine parameter grid (trapezoid)
        s = np.r_[0.0, np.cumsum(0.5 * (speed[1:] + speed[:-1]) * np.diff(t))]
        for a in (t, s, kappa):
            a.setflags(write=False)
        done = cache[(t_end, m)] = (t, s, kappa)
    return done


def respline(outline: Outline, n_panels: int, parameter: str = "chord",
             curve=None) -> Panelling:
    """Re-panel an outline with ``n_panels`` panels on a smooth spline through its points.

    Parameters
    ----------
    outline : Outline
    n_panels : int
        Number of surface panels (the base of a blunt trailing edge is extra).
    parameter : {"chord", "centripetal"}
        Spline parameter; the second gives another curve through the same points, used to
        estimate how much the answer depends on the curve between the points.
    curve : (CubicSpline, float), optional
        The fitted spline and its parameter end, from an earlier panelling of the same outline
        (``Panelling.curve``), so that the half-panel solve does not fit it again.

    Returns
    -------
    Panelling
    """
    if n_panels < MIN_PANELS:
        raise GeometryError(f"{outline.label}: at least {MIN_PANELS} panels needed, got {n_panels}")
    if parameter not in PARAMETERS:
        raise GeometryError(f"unknown spline parameter {parameter!r}; use one of {PARAMETERS}")
    spl, t_end = curve if curve is not None else _spline(outline, parameter)
    m = max(2000, _SAMPLES_PER_PANEL * n_panels)  # fine samples for curvature and arc length
    t, s, kappa = _fine_samples(spl, t_end, m)
    chord = outline.chord
    density = 1.0 + _CURVATURE_WEIGHT * (kappa * chord) ** _CURVATURE_POWER
    # Smooth the curvature term over about one mean panel so spacing changes gradually.
    # odd width: a centred moving average, so mirror-image outlines get mirror-image nodes
    width = 2 * (int(round(m / n_panels)) // 2) + 1
    kernel = np.ones(width) / width
    mode = "wrap" if outline.kind == SMOOTH else "edge"
    density = np.convolve(np.pad(density, width, mode=mode), kernel, mode="same")[width:-width]
    t, s, density = _resolved(t, s, density, n_panels, chord, outline.kind != SMOOTH)
    density = _graded(density, s, n_panels, outline.kind == SMOOTH)
    cum = np.r_[0.0, np.cumsum(0.5 * (density[1:] + density[:-1]) * np.diff(s))]
    targets = np.linspace(0.0, cum[-1], n_panels + 1)
    t_nodes = np.interp(targets, cum, t)
    nodes = spl(t_nodes)
    nodes[0] = outline.points[0]
    nodes[-1] = outline.points[-1]
    return Panelling(outline, nodes, "spline", np.interp(t_nodes, t, s) / s[-1], (spl, t_end))


def panelled_like(outline: Outline, reference: Panelling, parameter: str = "chord") -> Panelling:
    """Panel ``outline`` with the nodes at the same arc-length fractions as ``reference``.

    Used to compare two curves through nearly the same points without the comparison being
    blurred by a different choice of nodes: the node density follows the curvature, which two
    such curves share only to second order.

    Parameters
    ----------
    outline : Outline
        The other curve's body (same kind as the reference's).
    reference : Panelling
        A spline panelling (``arc_fractions`` set).
    parameter : {"chord", "centripetal"}
        Spline parameter of the other curve.

    Returns
    -------
    Panelling
    """
    if reference.arc_fractions is None:
        raise GeometryError(f"{outline.label}: the reference panelling has no arc fractions")
    spl, t_end = _spline(outline, parameter)
    m = max(2000, _SAMPLES_PER_PANEL * reference.n_panels)
    t = np.linspace(0.0, t_end, m + 1)
    speed = np.hypot(*spl(t, 1).T)
    s = np.r_[0.0, np.cumsum(0.5 * (speed[1:] + speed[:-1]) * np.diff(t))]
    frac = reference.arc_fractions
    if outline.kind == SMOOTH:
        # start where the reference starts (the loop of the other curve may start elsewhere)
        pts = spl(t)
        s0 = s[int(np.argmin(np.hypot(*(pts - reference.nodes[0]).T)))]
        target = (s0 + frac * s[-1]) % s[-1]
        target[-1] = target[0]
    else:
        target = frac * s[-1]
    nodes = spl(np.interp(target, s, t))
    if outline.kind != SMOOTH:
        nodes[0] = outline.points[0]
        nodes[-1] = outline.points[-1]
    else:
        nodes[-1] = nodes[0]
    return Panelling(outline, nodes, "spline", frac.copy())


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
