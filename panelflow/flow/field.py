"""Flow field: velocity and Cp at any points around the bodies, from the solved panel strengths.

The velocity is the freestream plus the closed-form velocity of every vortex panel (and base
source panel), evaluated in blocks so memory stays bounded for any number of points. Two details
make the field usable right up to the surface:

* points inside a body (shapely) are masked: NaN velocity and Cp, ``inside`` True;
* within a small distance of the surface (``NEAR`` panel lengths) the discrete sheet's field is
  not the smooth flow (it varies on the scale of one panel and has mild singularities at the
  panel corners), so there the velocity is interpolated along the surface normal between the
  surface value (the limiting value: tangential speed gamma at the nearest surface point, no
  normal flow) and the field value at the edge of that layer.

By superposition the field of any angle is ``freestream + cos(a) W0 + sin(a) W1``, with ``W0``
and ``W1`` the induced fields of the two unit solutions, so several angles cost little more than
one.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import shapely

from panelflow import threads
from panelflow.flow import influence
from panelflow.errors import InputError
from panelflow.geometry.outline import BLUNT
from panelflow.flow.solver import System

# Thickness of the near-surface layer, in local panel lengths: beyond it the discrete field is
# within the method's accuracy (measured against the exact circle and Karman-Trefftz fields in
# tests/test_field.py).
NEAR = 1.0
# Largest grid: 25 million points take about 1.5 GB for the results of one angle.
# Farthest field point, in body sizes from the bodies (see _check_reach)
MAX_REACH = 1e6
MAX_GRID_POINTS = 25_000_000
# Largest field in point-panel pairs: about 40 ns each on one core (measured, near-surface layer
# and masking included), so a field at the limit takes a minute or two, not an afternoon.
MAX_FIELD_PAIRS = 2_000_000_000


def check_field_size(n_points: int, n_panels: int, what: str = "") -> None:
    """Refuse a field of more than ``MAX_FIELD_PAIRS`` point-panel pairs, before any work.

    ``what`` names the option or file the points come from, for the message.

    Raises
    ------
    InputError
    """
    pairs = int(n_points) * int(n_panels)
    if pairs > MAX_FIELD_PAIRS:
        raise InputError(f"{what + ': ' if what else ''}{n_points} field points x {n_panels} "
                         f"panels = {pairs:.3g} point-panel "
                         f"pairs, more than the {MAX_FIELD_PAIRS:.0e} a field may have (about a "
                         "minute's work): use fewer points or panels, or several windows")
# Points evaluated together: the temporaries of one chunk (about 1 kB per point: masks, nearest
# surface point, layer blending, unit velocities) stay near 64 MiB whatever the grid size, and a
# chunk is still thousands of blocks of kernel work.
FIELD_CHUNK = 65_536
_TWO_PI = 2.0 * np.pi


@threads.blas_single
def induced_velocity(system: System, points, strengths=None) -> np.ndarray:
    """Velocity induced by the panels at ``points`` (no freestream), for nodal strengths.

    Parameters
    ----------
    system : System
    points : ndarray of complex, shape (n,)
    strengths : ndarray, shape (n_nodes, k), optional
        Nodal vorticities of ``k`` solutions; default the two unit solutions.

    Returns
    -------
    ndarray of complex, shape (n, k)
        ``u - i v`` of each solution.
    """
    p = system.panels
    g = system.unit[:p.n_nodes] if strengths is None else np.asarray(strengths, float)
    if g.ndim == 1:
        g = g[:, None]
    rot = (np.conj(p.tangent) * (-1j / _TWO_PI))[:, None]
    coef_start = rot * g[p.start]
    coef_delta = rot * (g[p.end] - g[p.start])
    pts = np.asarray(points, complex).ravel()
    w = influence.node_velocity(pts, p, coef_start, coef_delta)
    if len(p.base_body):
        bz1, bz2 = p.base_z1, p.base_z2
        bl = np.abs(bz2 - bz1)
        sigma = system.base_factor @ g  # (n_base, k)
        w += influence.blockwise(
            lambda blk: influence.source_velocity(blk, bz1, (bz2 - bz1) / bl, bl) @ sigma,
            pts, g.shape[1], dtype=complex, pairs_per_point=len(bz1))
    if system.image is not None:  # a plane boundary: the bodies' mirror images
        sigma = system.base_factor @ g if len(p.base_body) else None
        w += system.image.velocity(pts, p, g, sigma)
    return w


@dataclass(frozen=True)
class FlowField:
    """Velocity and Cp at a set of points, for one or more angles of attack.

    Attributes
    ----------
    points : ndarray of complex, shape (n,)
        Evaluation points (x + i y) in the input frame.
    alpha_deg : ndarray, shape (n_alpha,)
    u, v : ndarray, shape (n_alpha, n)
        Velocity components per unit freestream speed (NaN inside bodies).
    cp : ndarray, shape (n_alpha, n)
        Pressure coefficient, 1 - (u^2 + v^2) (Bernoulli's equation; NaN inside bodies).
    inside : ndarray of bool, shape (n,)
        True for points inside a body.
    shape : tuple
        Grid shape (ny, nx) for grid fields, else (n,).
    """

    points: np.ndarray
    alpha_deg: np.ndarray
    u: np.ndarray = field(repr=False)
    v: np.ndarray = field(repr=False)
    cp: np.ndarray = field(repr=False)
    inside: np.ndarray = field(repr=False)
    shape: tuple = ()

    def __post_init__(self):
        for value in (self.points, self.alpha_deg, self.u, self.v, self.cp, self.inside):
            value.setflags(write=False)

    @property
    def x(self) -> np.ndarray:
        return self.points.real

    @property
    def y(self) -> np.ndarray:
        return self.points.imag

    @property
    def speed(self) -> np.ndarray:
        return np.hypot(self.u, self.v)

    def __repr__(self) -> str:
        return (f"FlowField({len(self.points)} points, shape {self.shape}, "
                f"{int(self.inside.sum())} inside bodies, alpha {list(self.alpha_deg)})")


def _body_polygons(system: System):
    p = system.panels
    polys = []
    for k in range(p.n_bodies):
        polys.append(shapely.Polygon(p.nodes[p.body_nodes(k)]))
    return polys


def inside_bodies(system: System, points) -> np.ndarray:
    """True for points inside (or on) any body's panel polygon, or beyond a plane boundary."""
    pts = np.asarray(points, complex)
    mask = np.zeros(pts.shape, bool)
    for poly in _body_polygons(system):
        mask |= shapely.intersects_xy(poly, pts.real, pts.imag)
    if system.image is not None:  # the far side of a wall or free surface is no flow
        mask |= system.image.beyond(pts)
    return mask


def _nearest_surface(system: System, pts: np.ndarray):
    """Nearest point on the panel polygons: distance, panel index and position along it."""
    p = system.panels
    return influence.nearest_panel(pts, p.z1, p.tangent, p.length)


def _neighbours(panels):
    """For each panel, the panel meeting it at its start node and at its end node (-1: none).

    A smooth body closes its loop; at a sharp trailing edge the two edge panels meet at the
    coincident trailing-edge nodes; a blunt edge's corners meet the base, which has no sheet.
    """
    before = np.full(panels.n_panels, -1)
    after = np.full(panels.n_panels, -1)
    for k in range(panels.n_bodies):
        js = np.flatnonzero(panels.body == k)
        before[js[1:]] = js[:-1]
        after[js[:-1]] = js[1:]
        if panels.kinds[k] != BLUNT:
            before[js[0]] = js[-1]
            after[js[-1]] = js[0]
    return before, after


def _surface_layer(system: System, q, d, j, t):
    """Surface velocity, layer thickness and outward direction for points near the surface.

    The nearest surface point lies on panel ``j`` at fraction ``t``. Where it is a node (the point
    is in the wedge outside a corner), the three are interpolated by angle between the two panels
    meeting there, so the field is continuous across the corner's bisector.
    """
    p = system.panels
    g = system.unit[:p.n_nodes]
    zs = p.z1[j] + t * p.length[j] * p.tangent[j]
    w_surf = ((1.0 - t)[:, None] * g[p.start[j]] + t[:, None] * g[p.end[j]]) \
        * np.conj(p.tangent[j])[:, None]  # surface velocity gamma t, as u - i v
    layer = NEAR * p.length[j]
    n_out = -1j * p.tangent[j]
    before, after = _neighbours(p)
    other = np.where(t == 0.0, before[j], after[j])
    wedge = ((t == 0.0) | (t == 1.0)) & (d > 0) & (other >= 0)
    if np.any(wedge):
        jw, ow, tw = j[wedge], other[wedge], t[wedge]
        node_w = np.where(tw == 0.0, p.start[jw], p.end[jw])
        node_o = np.where(tw == 0.0, p.end[ow], p.start[ow])  # same place, maybe another node
        radial = (q[wedge] - zs[wedge]) / d[wedge]
        n_j, n_o = -1j * p.tangent[jw], -1j * p.tangent[ow]
        span = np.angle(n_o / n_j)
        f = np.clip(np.angle(radial / n_j) / np.where(span != 0, span, 1.0), 0.0, 1.0)[:, None]
        w_j = g[node_w] * np.conj(p.tangent[jw])[:, None]
        w_o = g[node_o] * np.conj(p.tangent[ow])[:, None]
        # turn the surface velocity from one panel's direction to the other's
        with np.errstate(invalid="ignore", divide="ignore"):
            turn = np.angle(w_o / w_j)
        rot = ((1.0 - f) * np.abs(w_j) + f * np.abs(w_o)) * np.exp(1j * (np.angle(w_j) + f * turn))
        w_surf[wedge] = np.where(np.isfinite(turn) & (np.abs(w_j) > 0), rot,
                                 (1.0 - f) * w_j + f * w_o)
        layer[wedge] = NEAR * ((1.0 - f[:, 0]) * p.length[jw] + f[:, 0] * p.length[ow])
        n_out[wedge] = radial
    return zs, w_surf, layer, n_out


@threads.blas_single
def unit_fields(system: System, points) -> tuple[np.ndarray, np.ndarray]:
    """Velocity of the two unit solutions (freestream included) and the inside mask.

    Evaluated in chunks of ``FIELD_CHUNK`` points, so the working memory does not grow with the
    number of points (only the returned arrays do).

    Returns
    -------
    w : ndarray of complex, shape (n, 2)
        ``u - i v`` for a unit freestream along x (column 0) and along y (column 1); NaN inside.
    inside : ndarray of bool, shape (n,)
    """
    pts = np.asarray(points, complex).ravel()
    w = np.empty((len(pts), 2), complex)
    inside = np.empty(len(pts), bool)
    for i in range(0, len(pts), FIELD_CHUNK):
        sl = slice(i, i + FIELD_CHUNK)
        w[sl], inside[sl] = _unit_fields_chunk(system, pts[sl])
    return w, inside


def _unit_fields_chunk(system: System, pts: np.ndarray):
    inside = inside_bodies(system, pts)
    w = np.full((len(pts), 2), np.nan + 0j)
    out = ~inside
    q = pts[out]
    d, j, t = _nearest_surface(system, q)
    zs, w_surf, layer, n_out = _surface_layer(system, q, d, j, t)
    near = d < layer
    free = np.array([1.0, -1j])  # unit freestreams along x and y: u - i v = 1 and -i
    w_out = np.empty((len(q), 2), complex)
    w_out[~near] = induced_velocity(system, q[~near]) + free
    if np.any(near):
        # linear in the distance from the surface value to the field at the layer's edge
        w_edge = induced_velocity(system, zs[near] + layer[near] * n_out[near]) + free
        frac = (d[near] / layer[near])[:, None]
        w_out[near] = w_surf[near] + frac * (w_edge - w_surf[near])
    w[out] = w_out
    return w, inside


def system_for(source, alpha_deg: float) -> System:
    """The system that gives the flow at ``alpha_deg``.

    ``source`` is a :class:`System`, or a solved result (anything with ``system_at`` and
    ``angle_index``, such as :class:`panelflow.analysis.result.Result`), whose angles may each
    have their own system (near a plane boundary).

    Raises
    ------
    InputError
        A result solved with a Mach number (the field is incompressible: the similarity rules
        correct surface pressures only), or an angle the result does not hold.
    """
    if isinstance(source, System):
        return source
    if getattr(source, "compressibility", None) is not None:
        raise InputError("the flow field is incompressible: the Mach number corrections apply "
                         "to surface pressures only; compute the field without a Mach number")
    try:
        pick, index = source.system_at, source.angle_index
    except AttributeError:
        raise InputError(f"expected a System or a solved result, got "
                         f"{type(source).__name__}") from None
    return pick(index(alpha_deg))


def flow_field(source, points, alpha_deg, shape=None, progress=None) -> FlowField:
    """Velocity and Cp at ``points`` for each angle of attack.

    Evaluated in chunks of ``FIELD_CHUNK`` points written straight into the result arrays: the
    memory needed beyond the result is bounded (about 64 MiB) at any grid size.

    Parameters
    ----------
    source : System or Result
        A factorised panel system, or a solved result (the field then uses each angle's own
        system; near a plane boundary a field is for one angle).
    points : array_like
        Complex ``x + i y`` or an (n, 2) array.
    alpha_deg : float or array_like
        Angles of attack in degrees from the input x-axis.
    shape : tuple, optional
        Recorded grid shape.
    progress : callable, optional
        Called with the number of points done after each chunk (a progress bar's update).

    Returns
    -------
    FlowField
    """
    pts = _as_points(points)
    alpha = np.atleast_1d(np.asarray(alpha_deg, float))
    systems = {id(s): s for s in (system_for(source, a) for a in alpha)}
    if len(systems) > 1:
        raise InputError("near a plane boundary each angle has its own flow: compute the field "
                         "of one angle at a time")
    system = next(iter(systems.values()))
    check_field_size(len(pts), system.panels.n_panels)
    _check_reach(pts, system.panels)
    a = np.radians(alpha)
    ca, sa = np.cos(a)[:, None], np.sin(a)[:, None]
    n = len(pts)
    u, v, cp = (np.empty((len(alpha), n)) for _ in range(3))
    inside = np.empty(n, bool)
    with threads.one_blas_thread():
        for i in range(0, n, FIELD_CHUNK):
            sl = slice(i, i + FIELD_CHUNK)
            w_unit, inside[sl] = _unit_fields_chunk(system, pts[sl])
            w = ca * w_unit[None, :, 0] + sa * w_unit[None, :, 1]
            u[:, sl], v[:, sl] = w.real, -w.imag
            cp[:, sl] = 1.0 - (w.real * w.real + w.imag * w.imag)
            if progress is not None:
                progress(len(pts[sl]))
    return FlowField(pts, alpha, u, v, cp, inside, tuple(shape) if shape else (len(pts),))


def _check_reach(pts: np.ndarray, panels) -> None:
    """Refuse points so far away that round-off, not the flow, sets their value.

    The induced velocity there is the difference of nearly equal logarithms and angles: at 1e9
    body sizes its error reached 6e-6 in Cp and at 1e12 2.6e-2 (measured), while the flow there
    is the freestream to 1e-12.
    """
    nodes = panels.nodes[:, 0] + 1j * panels.nodes[:, 1]
    centre = 0.5 * (nodes.real.min() + nodes.real.max()) + 0.5j * (nodes.imag.min()
                                                                  + nodes.imag.max())
    size = max(np.ptp(nodes.real), np.ptp(nodes.imag))
    if not np.all(np.isfinite(pts)):
        raise InputError("field points must be finite numbers")
    far = np.abs(pts - centre).max() if len(pts) else 0.0
    if far > MAX_REACH * size:
        raise InputError(f"a field point lies {far / size:.3g} body sizes from the bodies: at "
                         f"most {MAX_REACH:g} (farther out the flow is the freestream to "
                         "round-off, and round-off is all this would compute)")


def _as_points(points) -> np.ndarray:
    arr = np.asarray(points)
    if np.iscomplexobj(arr):
        return np.asarray(arr, complex).ravel()
    arr = np.asarray(arr, float)
    if arr.ndim != 2 or arr.shape[1] != 2:
        raise InputError(f"points must be complex or of shape (n, 2), got shape {arr.shape}")
    return arr[:, 0] + 1j * arr[:, 1]


def grid_points(window, resolution) -> tuple[np.ndarray, tuple]:
    """Points of a rectangular grid, row by row (x fastest).

    Parameters
    ----------
    window : (x0, x1, y0, y1)
    resolution : (nx, ny)

    Returns
    -------
    points : ndarray of complex, shape (ny * nx,)
    shape : (ny, nx)
    """
    x0, x1, y0, y1 = (float(v) for v in window)
    nx, ny = (int(v) for v in resolution)
    if not (x1 > x0 and y1 > y0):
        raise InputError(f"window {window}: need X0 < X1 and Y0 < Y1")
    if nx < 2 or ny < 2:
        raise InputError(f"resolution {nx},{ny}: need at least 2 points each way")
    if nx * ny > MAX_GRID_POINTS:
        raise InputError(f"resolution {nx},{ny}: {nx * ny:.3g} points is more than the "
                         f"{MAX_GRID_POINTS:.0e} a grid may have (evaluate several windows)")
    xs, ys = np.linspace(x0, x1, nx), np.linspace(y0, y1, ny)
    # one complex array, no meshgrid copies: row by row with x fastest
    return (xs[None, :] + 1j * ys[:, None]).ravel(), (ny, nx)


def default_window(outlines, margin: float = 0.5) -> tuple[float, float, float, float]:
    """Grid window around the bodies: their bounding box grown by ``margin`` main chords."""
    pts = np.vstack([np.asarray(o.points) for o in outlines])
    c = outlines[0].chord
    (x0, y0), (x1, y1) = pts.min(axis=0), pts.max(axis=0)
    return (x0 - margin * c, x1 + margin * c, y0 - 0.8 * margin * c, y1 + 0.8 * margin * c)
