"""Plane boundaries by images: a wall (or the ground) and a free surface at high Froude number.

A plane near the bodies is represented by the bodies' mirror images (method of images; L. M.
Milne-Thomson, *Theoretical Hydrodynamics*, images in a plane, from memory):

* **wall / ground** -- no flow through the plane (it is a streamline). The image is the
  reflected geometry with vorticity of the opposite sense and sources of the same sign;
* **free surface, infinite Froude number** -- the perturbation potential is constant on the
  undisturbed surface (``u' = 0`` there: the disturbance velocity is normal to the surface). The
  image is the reflected geometry with vorticity of the same sense and sources of the opposite
  sign. Gravity waves are neglected, which holds only when the depth Froude number
  ``U / sqrt(g h)`` is large.

Both are steady only with the freestream parallel to the plane. Everything here is worked in the
bodies' own frame (the frame of the outlines, as without a plane): at angle of attack ``alpha``
the freestream comes along ``exp(i alpha)`` and the plane runs parallel to it at its distance from
the pitch point (default the main body's quarter chord). In the plane's frame this is the same as
the bodies pitched nose-up by ``alpha`` with the freestream along the plane. The plane's direction
changes with the angle, so each angle has its own matrix (one factorisation per angle); surface
results, forces and moments come out in the same frame and convention as in free space.

Built on the multi-body solver: the reflected panels are added to the panel set as extra bodies,
the multi-body matrix is assembled by :func:`panelflow.flow.solver.assemble` unchanged, and the
image strengths are then tied to the real ones (``gamma_image = s gamma_real`` at the mirrored node,
``s = -1`` for a wall, ``+1`` for a free surface); only the real bodies' equations are kept. The
image of a blunt base follows from the tie (its source strength is fixed by the image's
trailing-edge speed), with the right sign in both cases. :class:`Image` holds the same image
terms as kernels (stream function and velocity of the mirrored panels), for use inside the
assembly and the field evaluation.

Forces: with images, the Kutta-Joukowski lift of a body's own circulation is no longer its lift
(the body and its image pull on each other). The generalised circulation force used here is the
Lagally form ``F_x + i F_y = -rho int i gamma conj(w_ext) ds - rho sigma h conj(w_ext)`` (Blasius'
theorem with the images and the freestream as the external flow ``w_ext = u_ext - i v_ext``; its
lift component reduces to ``-rho U Gamma`` in free space); the pressure-integrated lift is reported
beside it.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg

from panelflow import threads
from panelflow.errors import GeometryError, InputError, SolveError
from panelflow.flow import influence
from panelflow.flow.solver import System, assemble
from panelflow.geometry.outline import SMOOTH, Outline
from panelflow.geometry.panels import Panels

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


def reflect(z, point: complex, direction: complex = 1.0):
    """Mirror complex points in the line through ``point`` along the unit vector ``direction``."""
    e2 = complex(direction) ** 2
    return complex(point) + e2 * np.conj(np.asarray(z, complex) - complex(point))


@dataclass(frozen=True)
class Boundary:
    """A plane wall or free surface, placed relative to the bodies' pitch point.

    Attributes
    ----------
    kind : str
        ``"wall"`` (ground, tank floor, tunnel wall) or ``"free-surface"``.
    distance : float
        Distance from the pitch point to the plane, normal to the freestream, in the outline's
        length unit (positive).
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

    @property
    def label(self) -> str:
        """Plain words: ``"wall"`` or ``"free surface"``."""
        return self.kind.replace("-", " ")

    def image(self, pitch_point, alpha_deg: float = 0.0) -> Image:
        """The image kernels of this boundary at angle of attack ``alpha_deg``.

        In the bodies' frame the freestream and the plane run along ``exp(i alpha)``; the plane
        passes at ``distance`` from ``pitch_point``, on the side given by ``above``.
        """
        e = complex(np.exp(1j * np.radians(float(alpha_deg))))
        up = 1j * e
        p0 = complex(*np.asarray(pitch_point, float)) + (1.0 if self.above else -1.0) * \
            self.distance * up
        return Image(p0, e, self.vortex_sign, fluid_above=not self.above)


@dataclass(frozen=True)
class Image:
    """Mirror images in a straight line, as kernels for assembly and field evaluation.

    The image of a vortex panel from ``z1`` to ``z2`` is the panel from ``R(z1)`` to ``R(z2)``
    (``R`` the reflection), carrying ``vortex_sign`` times the real nodal vorticities at the same
    node indices; the image of a base source panel is reflected and reversed (so its
    stream-function cut also points downstream) and carries ``-vortex_sign`` times the source
    strength.

    Attributes
    ----------
    point : complex
        A point of the plane (the foot of the normal from the pitch point).
    direction : complex
        Unit vector along the plane (the freestream direction).
    vortex_sign : float
        -1 (wall) or +1 (free surface).
    fluid_above : bool
        True when the bodies and the fluid lie on the left of ``direction`` (above the plane).
    """

    point: complex
    direction: complex
    vortex_sign: float
    fluid_above: bool

    @property
    def source_sign(self) -> float:
        return -self.vortex_sign

    def reflect(self, z):
        return reflect(z, self.point, self.direction)

    def mirror_tangent(self, t):
        """Direction of a reflected panel whose real panel runs along ``t`` (start stays start)."""
        return self.direction**2 * np.conj(np.asarray(t, complex))

    def height(self, points) -> np.ndarray:
        """Signed distance of points from the plane, positive on the fluid's side."""
        h = ((np.asarray(points, complex) - self.point) * np.conj(self.direction)).imag
        return h if self.fluid_above else -h

    def beyond(self, points) -> np.ndarray:
        """True for points on the far side of the plane (outside the flow)."""
        return self.height(points) < 0.0

    def line(self, half_length: float = 1.0) -> np.ndarray:
        """Two points of the plane, ``half_length`` either side of :attr:`point` (for figures)."""
        return self.point + np.array([-1.0, 1.0]) * half_length * self.direction

    def vortex_psi(self, points, panels: Panels):
        """Stream function at ``points`` of the mirrored vortex panels, per unit nodal vorticity.

        Returns ``(a, b)`` of shape (n_points, n_panels), the start- and end-node coefficients,
        to be added to those of :func:`panelflow.flow.influence.vortex_psi` of the real panels.
        """
        a, b = _vortex_psi(np.asarray(points, complex), self.reflect(panels.z1),
                           self.mirror_tangent(panels.tangent), panels.length)
        return self.vortex_sign * a, self.vortex_sign * b

    def source_psi(self, points, z1, tangent, length):
        """Stream function at ``points`` of the mirrored base source panels, per unit strength.

        Same arguments as :func:`panelflow.flow.influence.source_psi` for the real base panels;
        the result is to be added to it.
        """
        z2 = np.asarray(z1) + np.asarray(length) * np.asarray(tangent)
        return self.source_sign * _source_psi(
            np.asarray(points, complex), self.reflect(z2), -self.mirror_tangent(tangent), length)

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
        z1, t = self.reflect(panels.z1), self.mirror_tangent(panels.tangent)
        gs, ge = self.vortex_sign * g[panels.start], self.vortex_sign * g[panels.end]

        def kernel(block):
            return _vortex_velocity(block, z1, t, panels.length, gs, ge)

        w = _by_blocks(kernel, pts, g.shape[1], panels.n_panels)
        if base_sigma is not None and len(panels.base_body):
            bz1, bz2 = panels.base_z1, panels.base_z2
            bl = np.abs(bz2 - bz1)
            bt = (bz2 - bz1) / bl
            sig = self.source_sign * np.asarray(base_sigma, float).reshape(len(bl), -1)
            w = w + _source_velocity(pts, self.reflect(bz2), -self.mirror_tangent(bt), bl) @ (
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


@threads.blas_single
def factorise(panels: Panels, image: Image) -> System:
    """Factorise the real bodies' system with their images and solve the two unit freestreams.

    The columns of ``System.unit`` are the unit freestreams along x and along y with the images
    tied in; only their combination along the plane (``image.direction``) is a physical flow,
    which is what :meth:`System.gamma` gives at the angle the image was built for.

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


def _strengths(system: System, alpha_deg: float):
    """Nodal vorticity and base source strengths of the physical solution at ``alpha_deg``."""
    g = system.gamma([alpha_deg])[0]
    return g, system.base_factor @ g


def _real_velocity(system: System, points, g, sigma) -> np.ndarray:
    """Complex velocity ``u - i v`` induced by the real panels (no freestream), one solution."""
    p = system.panels
    pts = np.asarray(points, complex).ravel()
    gs, ge = g[p.start, None], g[p.end, None]

    def kernel(block):
        return _vortex_velocity(block, p.z1, p.tangent, p.length, gs, ge)

    w = _by_blocks(kernel, pts, 1, p.n_panels)[:, 0]
    if len(p.base_body):
        bz1, bz2 = p.base_z1, p.base_z2
        bl = np.abs(bz2 - bz1)
        w = w + _source_velocity(pts, bz1, (bz2 - bz1) / bl, bl) @ sigma.astype(complex)
    return w


def velocity(system: System, points, alpha_deg: float) -> np.ndarray:
    """Total complex velocity ``u - i v`` (freestream, bodies and images) at points off the surface.

    For checks and simple field samples: no near-surface treatment, no inside mask (NaN only for
    points beyond the plane). ``system`` must carry the image built for ``alpha_deg``.

    Returns
    -------
    ndarray of complex, shape (n,)
    """
    image = system.image
    p = system.panels
    pts = np.asarray(points, complex).ravel()
    g, sigma = _strengths(system, alpha_deg)
    w = _real_velocity(system, pts, g, sigma)
    w = w + image.velocity(pts, p, g[:, None], sigma[:, None])[:, 0]
    w = w + np.exp(-1j * np.radians(alpha_deg))
    return np.where(image.beyond(pts), np.nan + 0j, w)


def lagally_lift(system: System, alpha_deg: float) -> np.ndarray:
    """Per-body lift (rho = U = 1) of the generalised circulation force, normal to the freestream.

    ``F = -int i gamma conj(w_ext) ds - sigma h conj(w_ext)`` with ``w_ext`` the freestream plus
    the images' velocity; gamma is linear on each panel and ``w_ext`` smooth, so Simpson's rule on
    the panel's ends and midpoint is used. The lift is the component of ``F`` normal to the
    freestream direction ``exp(i alpha)``.
    """
    p = system.panels
    image = system.image
    g, sig = _strengths(system, alpha_deg)
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    pts = np.concatenate([zn, p.mid])
    w_inf = np.exp(-1j * np.radians(alpha_deg))
    cw = np.conj(w_inf + image.velocity(pts, p, g[:, None], sig[:, None])[:, 0])
    c_node, c_mid = cw[:p.n_nodes], cw[p.n_nodes:]
    ga, gb = g[p.start], g[p.end]
    per_panel = -1j * p.length / 6.0 * (ga * c_node[p.start] + 2.0 * (ga + gb) * c_mid
                                        + gb * c_node[p.end])
    force = np.bincount(p.body, weights=per_panel.real, minlength=p.n_bodies) + 1j * np.bincount(
        p.body, weights=per_panel.imag, minlength=p.n_bodies)
    if len(p.base_body):
        bz1, bz2 = p.base_z1, p.base_z2
        wb = w_inf + image.velocity(0.5 * (bz1 + bz2), p, g[:, None], sig[:, None])[:, 0]
        force[p.base_body] -= sig * np.abs(bz2 - bz1) * np.conj(wb)
    return (force * np.conj(np.exp(1j * np.radians(alpha_deg)))).imag


def clearance(outlines, image: Image, alpha_deg: float) -> float:
    """Smallest distance from any body's points to the plane.

    Raises
    ------
    GeometryError
        A body reaches or crosses the plane.
    """
    gaps = []
    for o in outlines:
        h = image.height(o.points[:, 0] + 1j * o.points[:, 1])
        gap = float(h.min())
        if gap <= 0.0:
            side = "above" if image.fluid_above else "below"
            raise GeometryError(
                f"at alpha = {alpha_deg:g} deg body {o.name!r} reaches the plane (it must lie "
                f"wholly {side} it; its farthest point is {abs(gap):.4g} beyond it): increase the "
                "distance to the boundary or reduce the angle")
        gaps.append(gap)
    return float(min(gaps))


def mirrored_pair(outlines, image: Image) -> tuple:
    """The bodies and their mirror images in the plane of ``image`` as plain outlines.

    Solved together in a freestream along the plane by the ordinary multi-body solver, the pair is
    the explicit model of a wall there (the flow is symmetric, so the plane is a streamline); used
    to check the image construction.
    """
    out = list(outlines)
    for o in outlines:
        z = image.reflect(o.points[:, 0] + 1j * o.points[:, 1])[::-1]
        out.append(Outline(f"{o.name} (image)", np.stack([z.real, z.imag], axis=1), o.kind,
                           o.source))
    return tuple(out)
