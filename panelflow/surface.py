"""Surface results: Cp by Bernoulli's equation, forces and moments, for many angles at once.

Everything is non-dimensional: freestream speed 1, dynamic pressure 1, lengths divided by the
reference chord. With the flow inside each body at rest, the tangential speed just outside the
surface equals the nodal vorticity, so Bernoulli's equation along the surface streamline gives
Cp = 1 - (V/U)^2 at the nodes.

Forces come two ways: integrating the pressure over the panels (Cp varies quadratically along a
panel, so Simpson's rule is exact), and from the total circulation by the Kutta-Joukowski theorem.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .outline import SMOOTH
from .solver import System


@dataclass(frozen=True)
class ChordLine:
    """Reference chord line: leading edge, trailing edge and length (input frame)."""

    leading_edge: np.ndarray
    trailing_edge: np.ndarray

    @property
    def length(self) -> float:
        return float(np.hypot(*(self.trailing_edge - self.leading_edge)))

    @property
    def direction(self) -> complex:
        d = self.trailing_edge - self.leading_edge
        return complex(d[0], d[1]) / self.length

    def fraction(self, z) -> np.ndarray:
        """Chordwise position x/c of points (complex) projected on the chord line."""
        le = complex(*self.leading_edge)
        return ((np.asarray(z) - le) * np.conj(self.direction)).real / self.length


@dataclass(frozen=True)
class SurfaceSolution:
    """Surface pressure and integrated coefficients of one geometry at several angles.

    Array fields have the angle as their first axis (``n_alpha``); body fields then the body
    (``n_bodies``). Coefficients use the reference chord and are taken about the reference point.

    Attributes
    ----------
    alpha_deg : (n_alpha,) angles of attack from the input x-axis, degrees.
    gamma : (n_alpha, n_nodes) tangential surface speed along the loop direction (U = 1).
    cp : (n_alpha, n_nodes) pressure coefficient at the nodes.
    cl_pressure, cd_pressure, cm : (n_alpha,) totals from pressure integration.
    cl_circulation : (n_alpha,) total lift from the circulation (Kutta-Joukowski).
    body_cl, body_cd, body_cm : (n_alpha, n_bodies) per body, pressure integration.
    body_circulation : (n_alpha, n_bodies) circulation of each body (counter-clockwise positive).
    cp_base : (n_alpha, n_bodies) base pressure of blunt trailing edges (NaN elsewhere).
    cp_min : (n_alpha, n_bodies) minimum Cp of each body; ``cp_min_node`` its node index.
    stagnation : (n_alpha, n_bodies) complex position of the front stagnation point.
    x_cp : (n_alpha,) centre of pressure as a chord fraction (NaN when the normal force is ~0).
    """

    system: System = field(repr=False)
    chord_line: ChordLine
    reference_point: np.ndarray
    alpha_deg: np.ndarray
    gamma: np.ndarray = field(repr=False)
    cp: np.ndarray = field(repr=False)
    cl_pressure: np.ndarray
    cd_pressure: np.ndarray
    cm: np.ndarray
    cl_circulation: np.ndarray
    body_cl: np.ndarray = field(repr=False)
    body_cd: np.ndarray = field(repr=False)
    body_cm: np.ndarray = field(repr=False)
    body_circulation: np.ndarray = field(repr=False)
    cp_base: np.ndarray = field(repr=False)
    cp_min: np.ndarray = field(repr=False)
    cp_min_node: np.ndarray = field(repr=False)
    stagnation: np.ndarray = field(repr=False)
    x_cp: np.ndarray = field(repr=False)

    @property
    def panels(self):
        return self.system.panels

    @property
    def cl(self) -> np.ndarray:
        """Best lift estimate: the circulation lift (see DEVELOPERS.md, accuracy)."""
        return self.cl_circulation


def _body_loops(panels):
    """Per body: node slice and the panel mask."""
    return [(panels.body_nodes(k), panels.body == k) for k in range(panels.n_bodies)]


def evaluate(system: System, alpha_deg, chord_line: ChordLine, reference_point) -> SurfaceSolution:
    """Surface Cp, forces and moments at the given angles.

    Parameters
    ----------
    system : System
        Factorised panel system.
    alpha_deg : array_like
        Angles of attack in degrees, measured from the input's x-axis.
    chord_line : ChordLine
        Reference chord (normally the main body's); coefficients are divided by its length.
    reference_point : array_like, shape (2,)
        Moment reference point in the input frame.

    Returns
    -------
    SurfaceSolution
    """
    p = system.panels
    alpha = np.atleast_1d(np.asarray(alpha_deg, float))
    g = system.gamma(alpha)  # (na, m)
    cp = 1.0 - g * g
    c = chord_line.length
    zr = complex(reference_point[0], reference_point[1])
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]

    # --- pressure integration, panel by panel (Simpson: exact for quadratic Cp times linear r)
    ga, gb = g[:, p.start], g[:, p.end]
    cpa, cpb = cp[:, p.start], cp[:, p.end]
    cpm = 1.0 - (0.5 * (ga + gb)) ** 2
    n_out = -1j * p.tangent  # right of the loop direction: out of the body
    L = p.length
    force = -n_out * L * (cpa + 4.0 * cpm + cpb) / 6.0  # complex Fx + i Fy, (na, np)
    w = L / 6.0 * (cpa * np.conj(p.z1 - zr) + 4.0 * cpm * np.conj(p.mid - zr)
                   + cpb * np.conj(p.z2 - zr))
    moment = -(n_out * w).imag  # counter-clockwise moment of -Cp n ds about the reference
    circ = L * 0.5 * (ga + gb)

    nb = p.n_bodies
    na = len(alpha)
    body_force = np.zeros((na, nb), complex)
    body_moment = np.zeros((na, nb))
    body_circ = np.zeros((na, nb))
    cp_base = np.full((na, nb), np.nan)
    cp_min = np.zeros((na, nb))
    cp_min_node = np.zeros((na, nb), int)
    stagnation = np.zeros((na, nb), complex)
    base_rows = {int(k): i for i, k in enumerate(p.base_body)}
    for k, (nodes, on) in enumerate(_body_loops(p)):
        body_force[:, k] = force[:, on].sum(axis=1)
        body_moment[:, k] = moment[:, on].sum(axis=1)
        body_circ[:, k] = circ[:, on].sum(axis=1)
        gk = g[:, nodes]
        if k in base_rows:
            # dead-water base at the pressure of the flow leaving the two corners
            v_te = 0.5 * (gk[:, -1] - gk[:, 0])
            cpb_k = 1.0 - v_te**2
            cp_base[:, k] = cpb_k
            z_lo, z_up = zn[nodes][-1], zn[nodes][0]
            h = abs(z_up - z_lo)
            nb_out = -1j * (z_up - z_lo) / h
            body_force[:, k] += -cpb_k * nb_out * h
            arm = 0.5 * (z_up + z_lo) - zr
            body_moment[:, k] += (np.conj(arm) * (-cpb_k * nb_out * h)).imag
        i_min = np.argmin(cp[:, nodes], axis=1)
        cp_min[:, k] = cp[np.arange(na), nodes.start + i_min]
        cp_min_node[:, k] = nodes.start + i_min
        stagnation[:, k] = _stagnation(gk, zn[nodes], p.kinds[k] == SMOOTH)

    rot = np.exp(-1j * np.radians(alpha))[:, None]
    body_cl = (rot * body_force).imag / c
    body_cd = (rot * body_force).real / c
    body_cm = -body_moment / c**2
    total_force = body_force.sum(axis=1)
    total_moment = body_moment.sum(axis=1)
    cl_p = body_cl.sum(axis=1)
    cd_p = body_cd.sum(axis=1)
    cm = body_cm.sum(axis=1)
    cl_g = -2.0 * body_circ.sum(axis=1) / c
    # centre of pressure: the point on the chord line about which the pressure moment vanishes
    e = chord_line.direction
    normal = (np.conj(e) * total_force).imag  # force component normal to the chord line
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.where(np.abs(normal) > 1e-9 * c, total_moment / normal, np.nan)
    x_cp = chord_line.fraction(zr + s * e)
    return SurfaceSolution(system, chord_line, np.asarray(reference_point, float), alpha, g, cp,
                           cl_p, cd_p, cm, cl_g, body_cl, body_cd, body_cm, body_circ, cp_base,
                           cp_min, cp_min_node, stagnation, x_cp)


def _stagnation(gk: np.ndarray, zk: np.ndarray, closed: bool) -> np.ndarray:
    """Front stagnation point of one body for each angle.

    The loop runs counter-clockwise, so the speed along it is negative on the upper side and
    positive on the lower side; the attachment point is where it changes from - to +. With more
    than one such change (a smooth body, noise near an edge) the one farthest from the trailing
    edge (the loop's first node) is taken.
    """
    if closed:
        gk = np.concatenate([gk, gk[:, :1]], axis=1)
        zk = np.concatenate([zk, zk[:1]])
    g0, g1 = gk[:, :-1], gk[:, 1:]
    cross = (g0 <= 0) & (g1 > 0)
    t = np.where(cross, g0 / np.where(cross, g0 - g1, 1.0), 0.0)
    z = zk[:-1][None, :] + t * (zk[1:] - zk[:-1])[None, :]
    dist = np.where(cross, np.abs(z - zk[0]), -1.0)
    j = np.argmax(dist, axis=1)
    rows = np.arange(len(gk))
    out = z[rows, j]
    out[dist[rows, j] < 0] = np.nan
    return out
