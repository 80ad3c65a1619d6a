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

from panelflow import threads

from panelflow.geometry.outline import SMOOTH
from panelflow.flow.solver import System


@dataclass(frozen=True)
class ChordLine:
    """Reference chord line: leading edge, trailing edge and length (input frame)."""

    leading_edge: np.ndarray
    trailing_edge: np.ndarray
    length: float = field(init=False)
    direction: complex = field(init=False)

    def __post_init__(self):
        d = complex(*(np.asarray(self.trailing_edge) - np.asarray(self.leading_edge)))
        object.__setattr__(self, "length", abs(d))
        object.__setattr__(self, "direction", d / abs(d))

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
    cp_min : (n_alpha, n_bodies) minimum Cp of each body; ``cp_min_node`` its node index and
        ``x_cp_min`` its chordwise position x/c.
    stagnation : (n_alpha, n_bodies) complex position of the front stagnation point;
        ``x_stagnation`` its chordwise position x/c.
    unit_cl, unit_cm : (2,), (4,) components of cl and cm on the angle basis (see
        :func:`unit_coefficients`); NaN when each angle has its own system.
    x_cp : (n_alpha,) centre of pressure as a chord fraction (NaN when the normal force is ~0).
    angle_systems : tuple of System
        Empty when one system serves every angle (free space); otherwise one system per angle
        (a plane boundary, whose images depend on the angle). :meth:`system_at` picks the one
        to use for the field and streamlines of an angle.
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
    x_cp_min: np.ndarray = field(repr=False)
    x_stagnation: np.ndarray = field(repr=False)
    unit_cl: np.ndarray = field(repr=False)
    unit_cm: np.ndarray = field(repr=False)
    angle_systems: tuple = field(default=(), repr=False)

    def __post_init__(self):
        # results hand out views of these arrays (per angle, per body): keep them read-only
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)

    @property
    def panels(self):
        return self.system.panels

    def system_at(self, i: int) -> System:
        """The factorised system that gives the flow at angle number ``i``."""
        return self.angle_systems[i] if self.angle_systems else self.system

    @property
    def cl(self) -> np.ndarray:
        """Best lift estimate: the circulation lift (see DEVELOPERS.md, accuracy)."""
        return self.cl_circulation


def _integrals(system: System, alpha: np.ndarray, zr: complex):
    """Angle weights of the four Cp fields and the per-body integrals at each angle.

    Cp = 1 - (cos a u0 + sin a u1)^2 is a combination of four fixed fields, so every integral of
    Cp is computed once for those fields and combined per angle at almost no cost.
    """
    p = system.panels
    na = len(alpha)
    basis = _basis_loads(system, zr)
    ca, sa = np.cos(np.radians(alpha)), np.sin(np.radians(alpha))
    weights = np.stack([np.ones(na), -ca * ca, -2.0 * ca * sa, -sa * sa], axis=1)  # (na, 4)
    body_force = weights @ basis["force"]
    body_moment = weights @ basis["moment"]
    body_circ = np.stack([ca, sa], axis=1) @ basis["circulation"]
    cp_base = np.full((na, p.n_bodies), np.nan)
    if len(p.base_body):
        cp_base[:, p.base_body] = weights @ basis["cp_base"]
    return weights, basis, body_force, body_moment, body_circ, cp_base


@dataclass(frozen=True)
class Coefficients:
    """Total coefficients only (no surface data), as used for the coarse error-estimate solve.

    Attributes
    ----------
    n_panels : int
    alpha_deg, cl, cl_pressure, cd_pressure, cm : ndarray, shape (n_alpha,)
        ``cl`` is the circulation lift; the others as in :class:`SurfaceSolution`.
    """

    n_panels: int
    alpha_deg: np.ndarray
    cl: np.ndarray
    cl_pressure: np.ndarray
    cd_pressure: np.ndarray
    cm: np.ndarray
    unit_cl: np.ndarray
    unit_cm: np.ndarray


def unit_coefficients(basis: dict, c: float):
    """Components of cl and cm on the angle basis.

    ``cl(alpha) = [cos a, sin a] . unit_cl`` (circulation lift) and
    ``cm(alpha) = [1, -cos^2 a, -2 cos a sin a, -sin^2 a] . unit_cm``.
    """
    return (-2.0 * basis["circulation"].sum(axis=1) / c, -basis["moment"].sum(axis=1) / c**2)


@threads.blas_single
def coefficients(system: System, alpha_deg, chord_line: ChordLine, reference_point) -> Coefficients:
    """Total lift, pressure drag and moment coefficients at the given angles (see ``evaluate``)."""
    alpha = np.atleast_1d(np.asarray(alpha_deg, float))
    zr = complex(reference_point[0], reference_point[1])
    _, basis, force, moment, circ, _ = _integrals(system, alpha, zr)
    c = chord_line.length
    total = (np.exp(-1j * np.radians(alpha)) * force.sum(axis=1)) / c
    return Coefficients(system.panels.n_panels, alpha, -2.0 * circ.sum(axis=1) / c, total.imag,
                        total.real, -moment.sum(axis=1) / c**2, *unit_coefficients(basis, c))


def _basis_loads(system: System, zr: complex) -> dict:
    """Integrals of the four fields whose combinations give Cp at any angle.

    With u0, u1 the unit solutions' surface speeds the fields are 1, u0^2, u0 u1 and u1^2. Per
    panel, Cp varies quadratically, so Simpson's rule integrates force and moment exactly. The
    base of a blunt trailing edge carries the pressure of the flow leaving its corners.

    Returns a dict of arrays: ``cp`` (4, n_nodes), ``force`` (4, n_bodies) complex Fx + i Fy of
    -Cp n ds, ``moment`` (4, n_bodies) counter-clockwise about ``zr``, ``circulation``
    (2, n_bodies) of the two unit solutions, ``cp_base`` (4, n_base).
    """
    p = system.panels
    m = p.n_nodes
    u0, u1 = system.unit[:m, 0], system.unit[:m, 1]
    cp = np.stack([np.ones(m), u0 * u0, u0 * u1, u1 * u1])
    h0 = 0.5 * (u0[p.start] + u0[p.end])
    h1 = 0.5 * (u1[p.start] + u1[p.end])
    cpm = np.stack([np.ones(p.n_panels), h0 * h0, h0 * h1, h1 * h1])
    cpa, cpb = cp[:, p.start], cp[:, p.end]
    n_out = -1j * p.tangent  # right of the loop direction: out of the body
    L = p.length
    force = -n_out * L * (cpa + 4.0 * cpm + cpb) / 6.0
    w = L / 6.0 * (cpa * np.conj(p.z1 - zr) + 4.0 * cpm * np.conj(p.mid - zr)
                   + cpb * np.conj(p.z2 - zr))
    moment = -(n_out * w).imag
    circ = L * np.stack([h0, h1])

    nb = p.n_bodies
    out = {"cp": cp, "force": np.zeros((4, nb), complex), "moment": np.zeros((4, nb)),
           "circulation": np.zeros((2, nb)), "cp_base": np.zeros((4, len(p.base_body)))}
    for k in range(nb):
        on = slice(None) if nb == 1 else p.body == k  # one body: no masked copies
        out["force"][:, k] = force[:, on].sum(axis=1)
        out["moment"][:, k] = moment[:, on].sum(axis=1)
        out["circulation"][:, k] = circ[:, on].sum(axis=1)
    for j, k in enumerate(p.base_body):
        first, last = int(p.node_start[k]), int(p.node_stop[k]) - 1
        v0 = 0.5 * (u0[last] - u0[first])  # trailing-edge speed of each unit solution
        v1 = 0.5 * (u1[last] - u1[first])
        cpb_k = np.array([1.0, v0 * v0, v0 * v1, v1 * v1])
        out["cp_base"][:, j] = cpb_k
        z_lo, z_up = complex(*p.nodes[last]), complex(*p.nodes[first])
        # -Cp n h with the outward normal n = -i (z_up - z_lo) / h
        base_force = 1j * cpb_k * (z_up - z_lo)
        out["force"][:, k] += base_force
        out["moment"][:, k] += (np.conj(0.5 * (z_up + z_lo) - zr) * base_force).imag
    return out


@threads.blas_single
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
    na, nb = len(alpha), p.n_bodies
    c = chord_line.length
    zr = complex(reference_point[0], reference_point[1])
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    weights, basis, body_force, body_moment, body_circ, cp_base = _integrals(system, alpha, zr)
    cp = weights @ basis["cp"]
    g = system.gamma(alpha)  # (na, m)

    cp_min = np.zeros((na, nb))
    cp_min_node = np.zeros((na, nb), int)
    stagnation = np.zeros((na, nb), complex)
    rows = np.arange(na)
    for k in range(nb):
        nodes = p.body_nodes(k)
        i_min = nodes.start + np.argmin(cp[:, nodes], axis=1)
        cp_min[:, k] = cp[rows, i_min]
        cp_min_node[:, k] = i_min
        stagnation[:, k] = stagnation_point(g[:, nodes], zn[nodes], p.kinds[k] == SMOOTH)

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
        # undefined without a normal force (below 1e-6 in coefficient terms)
        s = np.where(np.abs(normal) > 1e-6 * c, total_moment / normal, np.nan)
    x_cp = chord_line.fraction(zr + s * e)
    return SurfaceSolution(system, chord_line, np.asarray(reference_point, float), alpha, g, cp,
                           cl_p, cd_p, cm, cl_g, body_cl, body_cd, body_cm, body_circ, cp_base,
                           cp_min, cp_min_node, stagnation, x_cp,
                           chord_line.fraction(zn[cp_min_node]), chord_line.fraction(stagnation),
                           *unit_coefficients(basis, c))


def stagnation_point(gk: np.ndarray, zk: np.ndarray, closed: bool) -> np.ndarray:
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


def stack(solutions, **replace) -> SurfaceSolution:
    """One solution over all angles from single-angle solutions on the same panels.

    Each element keeps its own system (``angle_systems``); arrays are joined along the angle
    axis; the angle-basis components are NaN (they exist only for one system). ``replace``
    overrides fields of the result (arrays of shape (n_alpha, ...)).
    """
    sols = list(solutions)
    first = sols[0]
    joined = {}
    for name in first.__dataclass_fields__:
        if name in ("system", "chord_line", "reference_point", "angle_systems"):
            continue
        if name in ("unit_cl", "unit_cm"):
            joined[name] = np.full_like(getattr(first, name), np.nan)
            continue
        joined[name] = np.concatenate([np.asarray(getattr(s, name)) for s in sols], axis=0)
    joined.update(replace)
    return SurfaceSolution(system=first.system, chord_line=first.chord_line,
                           reference_point=first.reference_point,
                           angle_systems=tuple(s.system for s in sols), **joined)
