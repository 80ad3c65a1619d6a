"""Plane boundaries by images: a wall (or the ground) and a free surface at high Froude number.

A plane ``y = y_p`` near the bodies is represented by the bodies' mirror images (method of
images; L. M. Milne-Thomson, *Theoretical Hydrodynamics*, images in a plane, from memory):

* **wall / ground** -- no flow through the plane (it is a streamline). The image is the
  reflected geometry with vorticity of the opposite sense and sources of the same sign;
* **free surface, infinite Froude number** -- the perturbation potential is constant on the
  undisturbed surface (``u' = 0`` there: the disturbance velocity is normal to the surface). The
  image is the reflected geometry with vorticity of the same sense and sources of the opposite
  sign. Gravity waves are neglected, which holds only when the depth Froude number
  ``U / sqrt(g h)`` is large.

Both are steady only with the freestream parallel to the plane, so **with a boundary the
freestream is along +x and the angle of attack pitches the bodies**: at angle ``alpha`` every
body is rotated nose-up by ``alpha`` about the pitch point (default the main body's quarter
chord), and the plane stays at its distance from that point. One geometry per angle, so each
angle costs one factorisation.

Built on the multi-body solver: the reflected panels are added to the panel set as extra bodies,
the multi-body matrix is assembled by :func:`panelflow.flow.solver.assemble` unchanged, and the image
strengths are then tied to the real ones (``gamma_image = s gamma_real`` at the mirrored node,
``s = -1`` for a wall, ``+1`` for a free surface); only the real bodies' equations are kept. The
image of a blunt base follows from the tie (its source strength is fixed by the image's
trailing-edge speed), with the right sign in both cases. :class:`Image` holds the same image
terms as kernels (stream function and velocity of the mirrored panels), for use inside the
assembly and the field evaluation.

Forces: with images, the Kutta-Joukowski lift of a body's own circulation is no longer its lift
(the body and its image pull on each other). The generalised circulation lift used here is the
Lagally form ``L = -rho int gamma u_ext ds - rho sigma h v_ext`` (Blasius' theorem with the images
and the freestream as the external flow ``u_ext - i v_ext``; it reduces to ``-rho U Gamma`` in free
space); the pressure-integrated lift is reported beside it.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg

from panelflow.geometry import check
from panelflow.flow import influence
from panelflow.analysis.inviscid import (DEFAULT_PANELS, ORDER, ROUND_OFF, SAFETY_FACTOR, checked_inputs,
                       default_reference)
from panelflow.errors import GeometryError, InputError, SolveError
from panelflow.geometry.outline import SMOOTH, Outline
from panelflow.geometry.panelling import panel_outline
from panelflow.geometry.quality import checked_panellings
from panelflow.geometry.panels import Panels
from panelflow.flow.solver import System, assemble
from panelflow.flow.surface import evaluate

WALL = "wall"
FREE_SURFACE = "free-surface"
KINDS = (WALL, FREE_SURFACE)
# Farthest plane, in main-body chords. The closed-form panel stream function loses about
# (distance / panel length)^2 * 1e-16 to cancellation far from a panel (measured: Cm off by 1e-5
# at 1000 chords, lift wrong at 1e4), and the plane's effect on lift, Cl c / (4 pi h), is below
# 0.04 % beyond 100 chords: there the boundary is better left out.
MAX_DISTANCE_CHORDS = 100.0

# the kernels themselves, bound once (the assembly may be handed wrapped versions)
_vortex_psi, _source_psi = influence.vortex_psi, influence.source_psi
_source_velocity = influence.source_velocity

CAUTIONS = {
    WALL: (("Plane wall by the method of images: inviscid, no boundary layer on the wall (a "
            "moving ground, as for a craft over water or land, is the closer case)."),),
    FREE_SURFACE: (("Free surface in the infinite-Froude-number limit (constant potential on "
                    "the undisturbed surface): waves, spray and ventilation are not modelled; the "
                    "estimate needs a depth Froude number U / sqrt(g h) well above 1, and a foil "
                    "close to the surface may ventilate."),),
}


def _by_blocks(kernel, points, n_cols: int, n_panels: int) -> np.ndarray:
    """``kernel(block)`` over row blocks of about ``influence.BLOCK_PAIRS`` point-panel pairs."""
    n = len(points)
    out = np.empty((n, n_cols), complex)
    rows = max(1, influence.BLOCK_PAIRS // max(n_panels, 1))
    for i in range(0, n, rows):
        out[i:i + rows] = kernel(points[i:i + rows])
    return out


def _vortex_velocity(points, z1, tangent, length, g_start, g_end) -> np.ndarray:
    """Complex velocity ``u - i v`` of linear vortex panels with given nodal strengths.

    The closed form of :func:`panelflow.flow.influence.vortex_velocity` in real arithmetic (one
    logarithm and one arctangent per point-panel pair instead of two complex logarithms,
    about three times faster), already summed over the panels.

    Parameters
    ----------
    points : (n,) complex; z1, tangent : (p,) complex; length : (p,)
    g_start, g_end : (p, k) strengths at each panel's start and end node.

    Returns
    -------
    ndarray of complex, shape (n, k)
    """
    dx = points.real[:, None] - z1.real[None, :]
    dy = points.imag[:, None] - z1.imag[None, :]
    tx, ty = tangent.real[None, :], tangent.imag[None, :]
    x = dx * tx + dy * ty
    y = dy * tx - dx * ty
    L = length[None, :]
    y2 = y * y
    r1 = x * x + y2
    r2 = (x - L) ** 2 + y2
    lam_r = 0.5 * np.log(np.maximum(r1, 1e-300) / np.maximum(r2, 1e-300))
    lam_i = np.arctan2(-y * L, x * (x - L) + y2)  # log(zeta) - log(zeta - L), cut on the panel
    j_r = (x * lam_r - y * lam_i) / L - 1.0
    j_i = (x * lam_i + y * lam_r) / L
    rot = (np.conj(tangent) * (-0.5j / np.pi))[:, None]
    coef_start = (rot * g_start).astype(complex)  # complex x complex: BLAS
    coef_delta = (rot * (g_end - g_start)).astype(complex)
    return (lam_r + 1j * lam_i) @ coef_start + (j_r + 1j * j_i) @ coef_delta


def reflect(z, plane_y: float):
    """Mirror complex points in the line ``y = plane_y``."""
    return np.conj(np.asarray(z, complex)) + 2j * plane_y


@dataclass(frozen=True)
class Boundary:
    """A plane wall or free surface, placed relative to the bodies' pitch point.

    Attributes
    ----------
    kind : str
        ``"wall"`` (ground, tank floor, tunnel wall) or ``"free-surface"``.
    distance : float
        Distance from the pitch point to the plane, in the outline's length unit (positive).
    above : bool
        True when the plane lies above the pitch point (a free surface, a ceiling), False when
        below (the ground).
    """

    kind: str
    distance: float
    above: bool

    def __post_init__(self):
        if self.kind not in KINDS:
            raise InputError(f"boundary kind {self.kind!r}: use {' or '.join(KINDS)}")
        d = float(self.distance)
        if not np.isfinite(d) or d <= 0.0:
            what = "depth" if self.kind == FREE_SURFACE else "height"
            raise InputError(f"boundary {what} {self.distance}: must be a positive distance")
        object.__setattr__(self, "distance", d)

    @classmethod
    def ground(cls, height: float) -> Boundary:
        """Ground (a wall) ``height`` below the pitch point."""
        return cls(WALL, height, above=False)

    @classmethod
    def free_surface(cls, depth: float) -> Boundary:
        """Free surface ``depth`` above the pitch point."""
        return cls(FREE_SURFACE, depth, above=True)

    @property
    def vortex_sign(self) -> float:
        """Image vorticity per unit real vorticity: -1 for a wall, +1 for a free surface."""
        return -1.0 if self.kind == WALL else 1.0

    def plane_y(self, pitch_point) -> float:
        """y of the plane for the given pitch point."""
        y = float(np.asarray(pitch_point, float)[1])
        return y + self.distance if self.above else y - self.distance

    def image(self, pitch_point) -> Image:
        """The image kernels of this boundary for the given pitch point."""
        return Image(self.plane_y(pitch_point), self.vortex_sign, fluid_below=self.above)


@dataclass(frozen=True)
class Image:
    """Mirror images in the plane ``y = plane_y``, as kernels for assembly and field evaluation.

    The image of a vortex panel from ``z1`` to ``z2`` is the panel from ``R(z1)`` to ``R(z2)``
    (``R`` the reflection), carrying ``vortex_sign`` times the real nodal vorticities at the same
    node indices; the image of a base source panel is reflected and reversed (so its
    stream-function cut also points downstream) and carries ``-vortex_sign`` times the source
    strength.

    Attributes
    ----------
    plane_y : float
    vortex_sign : float
        -1 (wall) or +1 (free surface).
    fluid_below : bool
        True when the bodies and the fluid lie below the plane.
    """

    plane_y: float
    vortex_sign: float
    fluid_below: bool

    @property
    def source_sign(self) -> float:
        return -self.vortex_sign

    def reflect(self, z):
        return reflect(z, self.plane_y)

    def beyond(self, points) -> np.ndarray:
        """True for points on the far side of the plane (outside the flow)."""
        y = np.asarray(points, complex).imag
        return y > self.plane_y if self.fluid_below else y < self.plane_y

    def vortex_psi(self, points, panels: Panels):
        """Stream function at ``points`` of the mirrored vortex panels, per unit nodal vorticity.

        Returns ``(a, b)`` of shape (n_points, n_panels), the start- and end-node coefficients,
        to be added to those of :func:`panelflow.flow.influence.vortex_psi` of the real panels.
        """
        a, b = _vortex_psi(np.asarray(points, complex), self.reflect(panels.z1),
                           np.conj(panels.tangent), panels.length)
        return self.vortex_sign * a, self.vortex_sign * b

    def source_psi(self, points, z1, tangent, length):
        """Stream function at ``points`` of the mirrored base source panels, per unit strength.

        Same arguments as :func:`panelflow.flow.influence.source_psi` for the real base panels; the
        result is to be added to it.
        """
        z2 = np.asarray(z1) + np.asarray(length) * np.asarray(tangent)
        return self.source_sign * _source_psi(
            np.asarray(points, complex), self.reflect(z2), -np.conj(tangent), length)

    def velocity(self, points, panels: Panels, strengths, base_sigma=None) -> np.ndarray:
        """Complex velocity ``u - i v`` of the images at ``points``.

        Parameters
        ----------
        points : ndarray of complex, shape (n,)
        panels : Panels
            The real panels.
        strengths : ndarray, shape (n_nodes, k)
            Real nodal vorticities of ``k`` solutions.
        base_sigma : ndarray, shape (n_base, k), optional
            Real base source strengths.

        Returns
        -------
        ndarray of complex, shape (n, k)
        """
        g = np.asarray(strengths, float)
        if g.ndim == 1:
            g = g[:, None]
        pts = np.asarray(points, complex).ravel()
        z1, t = self.reflect(panels.z1), np.conj(panels.tangent)
        gs, ge = self.vortex_sign * g[panels.start], self.vortex_sign * g[panels.end]

        def kernel(block):
            return _vortex_velocity(block, z1, t, panels.length, gs, ge)

        w = _by_blocks(kernel, pts, g.shape[1], panels.n_panels)
        if base_sigma is not None and len(panels.base_body):
            bz1, bz2 = panels.base_z1, panels.base_z2
            bl = np.abs(bz2 - bz1)
            bt = (bz2 - bz1) / bl
            sig = self.source_sign * np.asarray(base_sigma, float).reshape(len(bl), -1)
            w = w + _source_velocity(pts, self.reflect(bz2), -np.conj(bt), bl) @ (
                sig.astype(complex))
        return w


def _with_images(panels: Panels, image: Image):
    """The real panels followed by their mirrored bodies, and the mirrored-node map.

    Returns
    -------
    full : Panels
        Bodies ``0..K-1`` real, ``K..2K-1`` their images (each a loop in the package's
        convention: reflection reverses the direction, so the node order is reversed).
    mirror : ndarray of int, shape (n_nodes,)
        For image node ``m + j`` (``m`` real nodes), the real node it mirrors is ``mirror[j]``.
    """
    m = panels.n_nodes
    zn = panels.nodes[:, 0] + 1j * panels.nodes[:, 1]
    nodes, start, end, body, n0, n1, mirror = [], [], [], [], [], [], []
    for k in range(panels.n_bodies):
        s0, s1 = int(panels.node_start[k]), int(panels.node_stop[k])
        n = s1 - s0
        j = np.arange(n)
        if panels.kinds[k] == SMOOTH:
            src = s0 + (-j) % n  # closed loop: start again at the mirror of node 0
            a, b = j, (j + 1) % n
        else:
            src = s0 + (n - 1 - j)  # starts at the mirror of the lower trailing-edge point
            a, b = j[:-1], j[:-1] + 1
        off = m + s0
        zi = image.reflect(zn[src])
        nodes.append(np.stack([zi.real, zi.imag], axis=1))
        start.append(a + off)
        end.append(b + off)
        body.append(np.full(len(a), panels.n_bodies + k))
        n0.append(off)
        n1.append(off + n)
        mirror.append(src)
    full = Panels(np.vstack([panels.nodes] + nodes), np.concatenate([panels.start] + start),
                  np.concatenate([panels.end] + end), np.concatenate([panels.body] + body),
                  np.r_[panels.node_start, n0], np.r_[panels.node_stop, n1],
                  panels.kinds * 2, panels.names + tuple(f"{n} (image)" for n in panels.names))
    return full, np.concatenate(mirror)


def reduced_system(panels: Panels, image: Image):
    """Matrix and right-hand sides of the real bodies with their images tied in.

    The multi-body system of bodies plus images is assembled unchanged; the image columns are
    folded onto the real nodes they mirror (times ``vortex_sign``) and only the real bodies' rows
    are kept (their streamline conditions at the real nodes, Kutta, closure and circulation
    conditions). The image bodies' own conditions are implied by symmetry and dropped.

    Returns
    -------
    matrix : ndarray, shape (n_nodes + n_bodies, n_nodes + n_bodies)
    rhs : ndarray, shape (n_nodes + n_bodies, 2)
        Unit freestreams along x (the physical one) and along y (satisfies the plane's
        condition only for a free surface; kept for checks).
    base_factor : ndarray, shape (n_base, n_nodes)
    """
    full, mirror = _with_images(panels, image)
    matrix, rhs, base_factor = assemble(full)
    m, k = panels.n_nodes, panels.n_bodies
    big_m = full.n_nodes
    psi_cols = matrix[:, big_m:]
    is_psi = np.any(psi_cols != 0.0, axis=1)
    # constraint rows (Kutta, closure, zero circulation) touch one body's nodes only
    first_node = np.argmax(matrix[:, :big_m] != 0.0, axis=1)
    node_body = np.searchsorted(full.node_stop, first_node, side="right")
    owner = np.where(is_psi, np.argmax(psi_cols != 0.0, axis=1), node_body)
    rows = np.flatnonzero(owner < k)
    if len(rows) != m + k:
        raise SolveError(f"internal: {len(rows)} real equations for {m + k} unknowns")
    sub = matrix[rows]
    out = np.empty((m + k, m + k))
    out[:, :m] = sub[:, :m]
    out[:, mirror] += image.vortex_sign * sub[:, m:big_m]  # mirror is a permutation: no repeats
    out[:, m:] = sub[:, big_m:big_m + k]
    n_base = len(panels.base_body)
    return out, rhs[rows], base_factor[:n_base, :m].copy()


def factorise(panels: Panels, image: Image) -> System:
    """Factorise the real bodies' system with their images and solve the two unit freestreams.

    Column 0 of ``System.unit`` (freestream along x, parallel to the plane) is the physical
    solution; column 1 (along y) satisfies the plane's condition only for a free surface and is
    kept for checks.

    Raises
    ------
    SolveError
        Singular system (bodies touching their images, i.e. the plane).
    """
    matrix, rhs, base_factor = reduced_system(panels, image)
    try:
        anorm = np.linalg.norm(matrix, 1)
        lu = scipy.linalg.lu_factor(matrix, overwrite_a=True, check_finite=True)
    except (ValueError, np.linalg.LinAlgError) as exc:
        raise SolveError(f"panel system with images cannot be factorised: {exc}") from None
    rcond = float(scipy.linalg.lapack.dgecon(lu[0], anorm, norm="1")[0])
    if not np.isfinite(rcond) or rcond < 1e-14:
        raise SolveError(f"panel system with images is singular (reciprocal condition "
                         f"{rcond:.1e}): a body is too close to the plane")
    unit = scipy.linalg.lu_solve(lu, rhs)
    if not np.all(np.isfinite(unit)):
        raise SolveError("panel system with images gave non-finite strengths")
    return System(panels, unit, base_factor, rcond, image)


def _real_velocity(system: System, points, column: int = 0) -> np.ndarray:
    """Complex velocity ``u - i v`` induced by the real panels (no freestream), one solution."""
    p = system.panels
    g = system.unit[:p.n_nodes, column]
    pts = np.asarray(points, complex).ravel()
    gs, ge = g[p.start, None], g[p.end, None]

    def kernel(block):
        return _vortex_velocity(block, p.z1, p.tangent, p.length, gs, ge)

    w = _by_blocks(kernel, pts, 1, p.n_panels)[:, 0]
    if len(p.base_body):
        bz1, bz2 = p.base_z1, p.base_z2
        bl = np.abs(bz2 - bz1)
        w = w + _source_velocity(pts, bz1, (bz2 - bz1) / bl, bl) @ (
            system.base_factor @ g).astype(complex)
    return w


def velocity(system: System, image: Image, points, column: int = 0) -> np.ndarray:
    """Total complex velocity ``u - i v`` (freestream, bodies and images) at points off the surface.

    For checks and simple field samples: no near-surface treatment, no inside mask (NaN only for
    points beyond the plane). ``column`` 0 is the freestream along x, 1 along y.

    Returns
    -------
    ndarray of complex, shape (n,)
    """
    p = system.panels
    pts = np.asarray(points, complex).ravel()
    g = system.unit[:p.n_nodes, column]
    w = _real_velocity(system, pts, column)
    w = w + image.velocity(pts, p, g[:, None], (system.base_factor @ g)[:, None])[:, 0]
    w = w + (1.0 if column == 0 else -1j)
    return np.where(image.beyond(pts), np.nan + 0j, w)


@dataclass(frozen=True)
class BoundaryAnalysis:
    """Solution of bodies near a plane boundary at several angles of attack.

    With a boundary the freestream is along +x and each angle pitches the bodies about
    ``pitch_point``; coefficients use the main body's chord (lift normal to the freestream,
    moments about the reference point, which pitches with the bodies; nose-up positive).

    Attributes
    ----------
    boundary : Boundary
    image : Image
        The plane (``image.plane_y``) and its image kernels.
    pitch_point : ndarray, shape (2,)
    alpha_deg : (n_alpha,)
    cl : (n_alpha,) total lift, the generalised circulation (Lagally) lift.
    cl_circulation, cl_pressure : (n_alpha,) that lift and the pressure-integrated one.
    cd_pressure : (n_alpha,) pressure drag (zero in exact inviscid flow: a check).
    cm : (n_alpha,) pitching moment about the reference point.
    cl_error_estimate, cm_error_estimate : (n_alpha,) Richardson estimates from a half-panel
        solve (per angle; the geometry changes with the angle, so the angle-basis components of
        the free-space estimate do not exist here).
    body_cl, body_cm : (n_alpha, n_bodies) per body, pressure integration.
    cp_min : (n_alpha, n_bodies) minimum Cp of each body.
    clearance : (n_alpha,) smallest distance from any body to the plane.
    body_names : tuple of str
    surfaces : tuple of SurfaceSolution
        Per angle, the surface solution of the pitched geometry (evaluated at 0 deg: the
        freestream along x), with node positions, Cp and stagnation points; its ``system``
        carries the image, so :func:`panelflow.flow.field.flow_field` on it (at 0 deg) gives the
        field with the plane.
    pitched : tuple of tuple of Outline
        Per angle, the bodies as pitched for it.
    cautions : tuple of str
    """

    boundary: Boundary
    image: Image
    pitch_point: np.ndarray
    alpha_deg: np.ndarray
    cl: np.ndarray
    cl_circulation: np.ndarray = field(repr=False)
    cl_pressure: np.ndarray = field(repr=False)
    cd_pressure: np.ndarray = field(repr=False)
    cm: np.ndarray
    cl_error_estimate: np.ndarray = field(repr=False)
    cm_error_estimate: np.ndarray = field(repr=False)
    body_cl: np.ndarray = field(repr=False)
    body_cm: np.ndarray = field(repr=False)
    cp_min: np.ndarray = field(repr=False)
    clearance: np.ndarray
    body_names: tuple = field(repr=False)
    surfaces: tuple = field(repr=False)
    pitched: tuple = field(repr=False)
    cautions: tuple = field(repr=False)

    def __post_init__(self):
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)

    def __len__(self) -> int:
        return len(self.alpha_deg)


def _lagally_lift(system: System, image: Image) -> np.ndarray:
    """Per-body lift ``-int gamma u_ext ds - sigma h v_ext`` (rho = U = 1, freestream along x).

    ``u_ext - i v_ext`` is the freestream plus the images' velocity; gamma is linear on each
    panel and u_ext smooth, so Simpson's rule on the panel's ends and midpoint is used.
    """
    p = system.panels
    g = system.unit[:p.n_nodes, 0]
    sig = system.base_factor @ g
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    pts = np.concatenate([zn, p.mid])
    w = 1.0 + image.velocity(pts, p, g[:, None], sig[:, None])[:, 0]
    u_node, u_mid = w[:p.n_nodes].real, w[p.n_nodes:].real
    ga, gb = g[p.start], g[p.end]
    per_panel = p.length / 6.0 * (ga * u_node[p.start] + 2.0 * (ga + gb) * u_mid
                                  + gb * u_node[p.end])
    lift = -np.bincount(p.body, weights=per_panel, minlength=p.n_bodies)
    if len(p.base_body):
        bz1, bz2 = p.base_z1, p.base_z2
        wb = 1.0 + image.velocity(0.5 * (bz1 + bz2), p, g[:, None], sig[:, None])[:, 0]
        lift[p.base_body] -= sig * np.abs(bz2 - bz1) * (-wb.imag)  # v_ext = -Im(u - i v)
    return lift


def _pitch(outlines, alpha: float, about):
    return tuple(o.rotated(alpha, about=about) for o in outlines)


def _rotate_point(point, alpha: float, about) -> np.ndarray:
    a = np.radians(alpha)
    rot = np.array([[np.cos(a), np.sin(a)], [-np.sin(a), np.cos(a)]])  # as Outline.rotated
    c = np.asarray(about, float)
    return c + rot @ (np.asarray(point, float) - c)


def _clearance(outlines, image: Image, alpha: float) -> float:
    gaps = []
    for o in outlines:
        y = o.points[:, 1]
        gap = image.plane_y - y.max() if image.fluid_below else y.min() - image.plane_y
        if gap <= 0.0:
            side = "below" if image.fluid_below else "above"
            other = "above" if image.fluid_below else "below"
            raise GeometryError(
                f"at alpha = {alpha:g} deg body {o.name!r} reaches the plane y = "
                f"{image.plane_y:.6g} (it must lie wholly {side} it; its extreme point is "
                f"{abs(gap):.4g} {other} the plane): increase the distance to the boundary or "
                "reduce the angle")
        gaps.append(gap)
    return float(min(gaps))


def _solve_angle(outlines, alpha, image, pitch, ref_given, n_panels):
    pitched = _pitch(outlines, alpha, pitch)
    clearance = _clearance(pitched, image, alpha)
    check.validate(pitched)
    panellings = checked_panellings(pitched, lambda o: panel_outline(o, n_panels))
    chord, quarter = default_reference(pitched)
    ref = quarter if ref_given is None else _rotate_point(ref_given, alpha, pitch)
    system = factorise(Panels.from_panellings(panellings), image)
    sol = evaluate(system, [0.0], chord, ref)
    return pitched, panellings, system, sol, chord, ref, clearance


def _coarse(panellings, image, chord, ref):
    system = factorise(Panels.from_panellings([pl.coarsened() for pl in panellings]), image)
    sol = evaluate(system, [0.0], chord, ref)
    c = chord.length
    return (float(_lagally_lift(system, image).sum() * 2.0 / c), float(sol.cm[0]),
            system.panels.n_panels)


def analyse_with_boundary(outlines, alpha_deg, boundary: Boundary,
                          n_panels: int | None = DEFAULT_PANELS, pitch_point=None,
                          reference_point=None, error_estimate: bool = True) -> BoundaryAnalysis:
    """Solve bodies near a wall or a free surface at any number of angles of attack.

    Parameters
    ----------
    outlines : sequence of Outline
        The bodies as drawn (at zero angle); the first is the main body (reference chord).
    alpha_deg : float or array_like
        Angles of attack in degrees: each pitches all bodies nose-up about ``pitch_point``; the
        freestream stays along +x, parallel to the plane.
    boundary : Boundary
        The plane, at ``boundary.distance`` from the pitch point.
    n_panels : int or None
        Panels per body (None keeps the given points).
    pitch_point : (x, y), optional
        Point the bodies pitch about and the boundary distance is measured from; default the
        main body's quarter chord.
    reference_point : (x, y), optional
        Moment reference point in the drawn (unpitched) frame, pitched with the bodies; default
        the main body's quarter chord.
    error_estimate : bool
        Solve again at half the panels for the discretisation error estimate.

    Returns
    -------
    BoundaryAnalysis

    Raises
    ------
    InputError
        No outline, bad angles, or a plane more than ``MAX_DISTANCE_CHORDS`` main-body chords
        away.
    GeometryError
        A body reaches or crosses the plane at some angle.
    """
    outlines, alpha = checked_inputs(outlines, alpha_deg)
    pitch = (outlines[0].chord_point(0.25) if pitch_point is None
             else np.asarray(pitch_point, float))
    if boundary.distance > MAX_DISTANCE_CHORDS * outlines[0].chord:
        raise InputError(
            f"boundary {boundary.distance:g} away is more than {MAX_DISTANCE_CHORDS:g} chords "
            "from the bodies: its effect on lift is below 0.04 % there and the image terms lose "
            "precision; solve without the boundary")
    image = boundary.image(pitch)
    ref_given = None if reference_point is None else np.asarray(reference_point, float)
    nb, na = len(outlines), len(alpha)
    cl_g, cl_p, cd_p, cm = (np.zeros(na) for _ in range(4))
    cl_err, cm_err = np.full(na, np.nan), np.full(na, np.nan)
    body_cl, body_cm, cp_min = (np.zeros((na, nb)) for _ in range(3))
    clearance = np.zeros(na)
    surfaces, pitched = [], []
    for i, a in enumerate(alpha):
        bodies, panellings, system, sol, chord, ref, clearance[i] = _solve_angle(
            outlines, float(a), image, pitch, ref_given, n_panels)
        pitched.append(tuple(bodies))
        c = chord.length
        cl_g[i] = 2.0 * _lagally_lift(system, image).sum() / c
        cl_p[i], cd_p[i], cm[i] = sol.cl_pressure[0], sol.cd_pressure[0], sol.cm[0]
        body_cl[i], body_cm[i], cp_min[i] = sol.body_cl[0], sol.body_cm[0], sol.cp_min[0]
        surfaces.append(sol)
        if error_estimate:
            cl_c, cm_c, n_c = _coarse(panellings, image, chord, ref)
            ratio = system.panels.n_panels / n_c
            k = SAFETY_FACTOR / (ratio**ORDER - 1.0)
            cl_err[i] = max(k * abs(cl_g[i] - cl_c), ROUND_OFF)
            cm_err[i] = max(k * abs(cm[i] - cm_c), ROUND_OFF)
    return BoundaryAnalysis(
        boundary=boundary, image=image, pitch_point=np.asarray(pitch, float).copy(),
        alpha_deg=alpha, cl=cl_g.copy(), cl_circulation=cl_g, cl_pressure=cl_p,
        cd_pressure=cd_p, cm=cm, cl_error_estimate=cl_err, cm_error_estimate=cm_err,
        body_cl=body_cl, body_cm=body_cm, cp_min=cp_min, clearance=clearance,
        body_names=tuple(o.name for o in outlines), surfaces=tuple(surfaces),
        pitched=tuple(pitched),
        cautions=CAUTIONS[boundary.kind])


def mirrored_pair(outlines, plane_y: float) -> tuple:
    """The bodies and their mirror images in ``y = plane_y`` as plain outlines.

    Solved together in a freestream along x by the ordinary multi-body solver, the pair is the
    explicit model of a wall at ``plane_y`` (the flow is symmetric, so the plane is a
    streamline); used to check the image construction.
    """
    out = list(outlines)
    for o in outlines:
        z = reflect(o.points[:, 0] + 1j * o.points[:, 1], plane_y)[::-1]
        out.append(Outline(f"{o.name} (image)", np.stack([z.real, z.imag], axis=1), o.kind,
                           o.source))
    return tuple(out)
