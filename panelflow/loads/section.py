"""Dimensional pressure loads of one angle of attack: pascals and newtons for structural models.

From a solved :class:`~panelflow.analysis.result.Result` and the :class:`~panelflow.conditions.fluids.Conditions`
this module gives, per body, the pressure on every panel, the force on every panel, those forces
split onto the panel end points, the totals, and a check that the totals equal the analysis
coefficients times ``q c`` (times the span). Loads can also be moved onto the nodes of the user's
own finite-element mesh.

Units and frames
----------------
Coordinates are the outline's, times the length scale of the conditions (metres per outline
unit); the frame is the input's (x along the freestream at zero angle of attack). Pressures are
in Pa, ``p = q Cp`` (gauge, relative to the freestream static pressure) or ``p_s + q Cp``
(absolute), with ``q = rho V^2 / 2``. Forces are per metre of span (N/m) unless a span is given
(N); moments likewise N m/m or N m, positive nose-up (clockwise in the x-y plane) like ``cm``.

Panel loads
-----------
Along a straight panel from A to B (length ``L``, unit tangent ``t`` along the loop, which runs
counter-clockwise, so ``i t`` points into the body) the surface speed is linear, so the
pressure is a quadratic ``p(s)`` with end values ``p_A``, ``p_B`` and midpoint value ``p_M``
(from the mean of the two end speeds, as in :mod:`panelflow.flow.surface`). The pressure pushes on
the surface along the inward normal, so the panel carries the force and the moment about A
(counter-clockwise positive; ``s`` runs from 0 at A to ``L`` at B)::

    F   = i t  int_0^L p ds   = i t L (p_A + 4 p_M + p_B) / 6
    M_A = int_0^L s p ds       = L^2 (2 p_M + p_B) / 6

both exact, because Simpson's rule integrates polynomials up to the third degree exactly and the
integrands are of degree two and three. (With ``i t`` the direction, the arm ``s t`` crosses the
force ``i t p ds`` to ``s p ds``.) The reported panel pressure is the panel mean
``(p_A + 4 p_M + p_B) / 6``: a uniform pressure of that value on the panel has the same force.

Nodal split
-----------
Two forces at A and B, both along ``i t``::

    f_A = i t L (p_A + 2 p_M) / 6,    f_B = i t L (2 p_M + p_B) / 6

carry the panel's force (``f_A + f_B = F``) and its moment about A (``L |f_B| = M_A``).
Matching the force and the moment about one point matches the moment about *every* point P:
the moment of the pair about P is ``(A - P) x f_A + (B - P) x f_B = (A - P) x (f_A + f_B) +
(B - A) x f_B = (A - P) x F + M_A``, which is the panel's moment about P by the same transfer
rule. So the sum over all panels of the nodal loads has the exact total force and the exact total
moment about any point, to rounding. (These are also the work-equivalent loads of linear shape
functions; the only freedom left, an equal and opposite pair along AB, is set to zero.)

The base of a blunt trailing edge carries the uniform base pressure of
:func:`panelflow.flow.surface._basis_loads`; its force is split in halves onto the two corners.

Totals against the coefficients
-------------------------------
The lift and pressure drag of the loads are those of the *pressure integration*
(``cl_pressure``, ``cd_pressure``) and the moment that of ``cm``, each times ``q c`` (``q c^2``
for moments) times the span: the same integrals, so they agree to rounding, and
:class:`Equilibrium` checks it to ``EQUILIBRIUM_TOLERANCE``. The reported ``cl`` of an analysis is
the circulation lift (see DEVELOPERS.md); the two differ by the discretisation error, which the
loads report beside the check.

Transfer to structural nodes
----------------------------
Each node of the user's mesh is projected onto the nearest panel of any body (an error when
farther than the tolerance). Per body the nodes are ordered by their arc position along the
loop, and every nodal panel load is shared between the two structural nodes that enclose it
along the loop, in proportion to the arc distances (linear interpolation). The shares of every
load add up to one, so the total force is kept exactly; the moment changes only where the loop
curves between two structural nodes, and since the total force is unchanged, the moment change
is the same about every point. It is reported and limited to ``MOMENT_TRANSFER_TOLERANCE``.
"""

from __future__ import annotations

import csv
import math
import re
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from panelflow.analysis.result import as_result, margin_record
from panelflow.errors import InputError
from panelflow.files import read_input
from panelflow.conditions.fluids import Conditions
from panelflow.geometry.outline import BLUNT, SHARP

EQUILIBRIUM_TOLERANCE = 1e-9
# a relative difference of a value far below the force scale means nothing (a drag or moment
# that vanishes by symmetry is a sum of O(1) terms cancelling to round-off): below a thousandth
# of q c (q c^2 for moments) the difference is taken relative to that instead
_SMALL = 1e-3
MOMENT_TRANSFER_TOLERANCE = 1e-3
# default distance allowed between a structural node and the outline, as a fraction of the main
# chord: far more than the panels' chordal deviation from a smooth outline (about 5e-5 c at the
# leading edge with 200 panels), far less than any wrong unit or origin
NODE_TOLERANCE_FRACTION = 1e-3

LOAD_CAUTIONS = (
    "Inviscid, attached-flow, steady two-dimensional loads from a potential-flow panel method.",
    "Not included: stall, flow separation, viscous drag, cavitation or ventilation, slamming, "
    "waves, gusts, vibration, fatigue or any other dynamic effect.",
    "These loads carry no safety factor: apply the load and material factors of the applicable "
    "design code.",
    "Final structures need checking under local codes and by licensed engineering practice.",
)


@dataclass(frozen=True)
class BodyLoads:
    """Loads on one body, as a closed loop of nodes and cells.

    Cell ``j`` joins node ``j`` to node ``(j + 1) % n`` (``cells`` spells this out); for a blunt
    trailing edge the last cell is the base. The two trailing-edge nodes of a sharp edge are one
    node here.

    Attributes
    ----------
    name, kind : str
        Body name and trailing-edge kind.
    x, y : ndarray (n,)
        Node coordinates, m.
    pressure : ndarray (n,)
        Pressure at the nodes, Pa.
    fx, fy : ndarray (n,)
        Nodal loads (N, or N/m without a span).
    cells : ndarray of int (n, 2)
    panel_x, panel_y, panel_length : ndarray (n,)
        Cell midpoints and lengths, m.
    panel_nx, panel_ny : ndarray (n,)
        Outward unit normal of each cell.
    panel_pressure : ndarray (n,)
        Mean pressure on each cell, Pa (its force divided by its length).
    panel_fx, panel_fy : ndarray (n,)
        Force on each cell.
    base : ndarray of bool (n,)
        True for the base cell of a blunt trailing edge.
    lift, drag, moment : float
        Totals of this body; moment nose-up about the reference point.
    moments_about : ndarray (k,)
        Nose-up moment about each of the extra points of :attr:`Loads.about`.
    chord : float
        This body's chord, m.
    leading_edge, trailing_edge : ndarray (2,)
        Ends of this body's chord line, m.
    """

    name: str
    kind: str
    x: np.ndarray = field(repr=False)
    y: np.ndarray = field(repr=False)
    pressure: np.ndarray = field(repr=False)
    fx: np.ndarray = field(repr=False)
    fy: np.ndarray = field(repr=False)
    cells: np.ndarray = field(repr=False)
    panel_x: np.ndarray = field(repr=False)
    panel_y: np.ndarray = field(repr=False)
    panel_length: np.ndarray = field(repr=False)
    panel_nx: np.ndarray = field(repr=False)
    panel_ny: np.ndarray = field(repr=False)
    panel_pressure: np.ndarray = field(repr=False)
    panel_fx: np.ndarray = field(repr=False)
    panel_fy: np.ndarray = field(repr=False)
    base: np.ndarray = field(repr=False)
    lift: float
    drag: float
    moment: float
    moments_about: np.ndarray
    chord: float
    leading_edge: np.ndarray = field(repr=False)
    trailing_edge: np.ndarray = field(repr=False)

    def __post_init__(self):
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)

    @property
    def n_nodes(self) -> int:
        return len(self.x)


@dataclass(frozen=True)
class Check:
    """One line of the equilibrium check: a total from the loads against the coefficients."""

    quantity: str
    body: str | None  # None for the whole geometry
    from_loads: float
    from_coefficients: float
    unit: str
    relative: float

    @property
    def difference(self) -> float:
        return self.from_loads - self.from_coefficients


@dataclass(frozen=True)
class Equilibrium:
    """Totals of the nodal loads against the analysis coefficients times ``q c`` (x span).

    ``relative`` of each check is the difference divided by the coefficient value, or by a
    thousandth of the force scale ``q c b`` (moments ``q c^2 b``) when the value is smaller (a
    drag or moment that vanishes by symmetry has no meaningful relative error).
    """

    checks: tuple
    tolerance: float = EQUILIBRIUM_TOLERANCE

    @property
    def max_relative(self) -> float:
        return max(c.relative for c in self.checks)

    @property
    def ok(self) -> bool:
        return self.max_relative <= self.tolerance


@dataclass(frozen=True)
class StructuralNodes:
    """Node ids and coordinates of a structural mesh, in the outline's frame and unit."""

    ids: np.ndarray
    xy: np.ndarray
    source: str = "nodes"

    def __post_init__(self):
        ids = np.asarray(self.ids)
        xy = np.asarray(self.xy, float)
        if ids.ndim != 1 or xy.shape != (len(ids), 2):
            raise InputError(f"{self.source}: node ids and coordinates do not match in number")
        if len(ids) == 0:
            raise InputError(f"{self.source}: no nodes")
        if not np.all(np.isfinite(xy)):
            bad = int(ids[np.flatnonzero(~np.all(np.isfinite(xy), axis=1))[0]])
            raise InputError(f"{self.source}: node {bad}: coordinates must be finite numbers")
        if not np.issubdtype(ids.dtype, np.integer):
            raise InputError(f"{self.source}: node ids must be whole numbers")
        if np.any(ids <= 0):
            raise InputError(f"{self.source}: node {int(ids[ids <= 0][0])}: node ids must be "
                             "positive")
        uniq, counts = np.unique(ids, return_counts=True)
        if np.any(counts > 1):
            raise InputError(f"{self.source}: node {int(uniq[counts > 1][0])} is listed more "
                             "than once")
        for name, value in (("ids", ids.astype(np.int64)), ("xy", xy)):
            value.setflags(write=False)
            object.__setattr__(self, name, value)


@dataclass(frozen=True)
class StructuralBodyLoads:
    """Loads moved onto the structural nodes of one body, in loop order.

    ``distance`` is each node's distance from the panelled outline (m).
    """

    name: str
    ids: np.ndarray = field(repr=False)
    x: np.ndarray = field(repr=False)
    y: np.ndarray = field(repr=False)
    fx: np.ndarray = field(repr=False)
    fy: np.ndarray = field(repr=False)
    distance: np.ndarray = field(repr=False)
    force_difference: float
    moment_difference: float
    moment_relative: float

    @property
    def n_nodes(self) -> int:
        return len(self.ids)


@dataclass(frozen=True)
class NodeTransfer:
    """Loads on the user's structural nodes and how well they keep the panel loads' totals.

    Attributes
    ----------
    bodies : tuple of StructuralBodyLoads
        One per body of the loads, in the same order (empty for a body without nodes).
    force_difference : float
        Magnitude of the change of total force (to rounding: zero).
    force_relative : float
        That divided by the magnitude of the total force.
    moment_difference : float
        Change of the total moment (the same about every point, since the force is unchanged).
    moment_relative : float
        That divided by the larger of the moment about the reference point and the total force
        times the chord (i.e. the shift of the centre of pressure as a fraction of the chord,
        where the moment is small).
    tolerance : float
        Distance allowed between a node and the outline, m.
    untransferred : tuple of str
        Bodies without structural nodes: their loads are not in the node loads.
    source : str
    """

    bodies: tuple
    force_difference: float
    force_relative: float
    moment_difference: float
    moment_relative: float
    tolerance: float
    untransferred: tuple
    source: str

    @property
    def n_nodes(self) -> int:
        return sum(b.n_nodes for b in self.bodies)


@dataclass(frozen=True)
class HingeMoment:
    """The moment of a flap's loads about its hinge.

    Attributes
    ----------
    kind : str
        ``"plain"`` (the deflected part of the one body: its load nodes behind the line through
        the hinge normal to the undeflected chord) or ``"slotted"`` (the whole flap body).
    hinge_point : ndarray (2,)
        The point the flap turned about, m.
    moment : float
        Nose-up moment about the hinge point (N m, or N m/m without a span): a positive value
        turns the flap's trailing edge down, as a positive deflection does.
    coefficient : float
        ``moment / (q c_f^2 b)`` with the flap chord ``c_f`` (the undeflected chord behind the
        hinge) and the span ``b`` (1 m without one): the hinge-moment coefficient as the trade
        forms it, with the same sign.
    flap_chord : float
        ``c_f``, m.
    normal_force : float
        Sum of the flap's loads normal to the undeflected chord, positive towards the upper
        side (N or N/m).
    nodes : int
        Load nodes counted as the flap's.
    """

    kind: str
    hinge_point: np.ndarray
    moment: float
    coefficient: float
    flap_chord: float
    normal_force: float
    nodes: int


def _hinge_moment(flap, bodies, scale: float, q: float, span_factor: float):
    """The :class:`HingeMoment` of a flapped section's loads (None without a flap)."""
    if flap is None:
        return None
    le, te = (np.asarray(p, float) * scale for p in flap.chord_line)
    e = (te - le) / np.hypot(*(te - le))
    n = np.array([-e[1], e[0]])
    hinge = np.asarray(flap.hinge_point, float) * scale
    if flap.kind == "slotted":
        part = bodies[1]
        keep = np.ones(part.n_nodes, bool)
    else:
        part = bodies[0]
        keep = (part.x - hinge[0]) * e[0] + (part.y - hinge[1]) * e[1] > 0.0
    x, y, fx, fy = part.x[keep], part.y[keep], part.fx[keep], part.fy[keep]
    moment = float(_nose_up(x, y, fx, fy, hinge[None, :])[0])
    c_f = (1.0 - flap.hinge) * flap.reference_chord * scale
    return HingeMoment(flap.kind, hinge, moment, moment / (q * c_f**2 * span_factor), c_f,
                       float(np.sum(fx * n[0] + fy * n[1])), int(keep.sum()))


@dataclass(frozen=True)
class Loads:
    """Dimensional loads of every body at one angle of attack.

    Attributes
    ----------
    conditions : Conditions
    alpha_deg : float
    length_scale : float
        Metres per outline unit.
    chord : float
        Main chord, m (the reference length of the coefficients).
    dynamic_pressure : float
        q, Pa.
    reference_point : ndarray (2,)
        Moment reference point, m.
    about : ndarray (k, 2)
        Extra moment points (hinges, fixings), m.
    bodies : tuple of BodyLoads
    lift, drag, moment : float
        Totals from the nodal loads (lift and drag: normal and along the freestream); moment
        nose-up about the reference point.
    moments_about : ndarray (k,)
        Nose-up moments about the points ``about``.
    lift_circulation : float
        The lift of the circulation, ``cl q c b`` (reported, not carried by the loads).
    cl_pressure, cd_pressure, cm, cl_circulation : float
        The analysis coefficients the totals are checked against.
    equilibrium : Equilibrium
    cautions : tuple of str
        The standing load cautions, then those of this case.
    notes : tuple of str
        Facts of this case worth printing (lift estimates, cavitation number).
    transfer : NodeTransfer or None
        Loads moved onto the user's structural nodes, when given.
    analysis : dict
        The solved problem as plain data (:meth:`Problem.record` and the margins' settings of
        :func:`~panelflow.analysis.result.margin_record`): what the pressures were computed for.
    hinge : HingeMoment or None
        With a flap: the moment of the flap's loads about its hinge.
    """

    conditions: Conditions
    alpha_deg: float
    length_scale: float
    chord: float
    dynamic_pressure: float
    reference_point: np.ndarray
    about: np.ndarray
    bodies: tuple
    lift: float
    drag: float
    moment: float
    moments_about: np.ndarray
    lift_circulation: float
    cl_pressure: float
    cd_pressure: float
    cm: float
    cl_circulation: float
    equilibrium: Equilibrium
    cautions: tuple
    notes: tuple
    transfer: NodeTransfer | None = None
    analysis: dict = field(default_factory=dict, repr=False)
    hinge: HingeMoment | None = None

    def __repr__(self) -> str:
        return (f"Loads(alpha={self.alpha_deg:g} deg, lift={self.lift:.6g} {self.force_unit}, "
                f"drag={self.drag:.3g} {self.force_unit}, moment={self.moment:.6g} "
                f"{self.moment_unit}, {len(self.bodies)} bodies"
                + ("" if self.transfer is None else f", {self.transfer.n_nodes} structural nodes")
                + ")")

    @property
    def force_scale(self) -> float:
        """q c b: the force of a unit coefficient."""
        return self.dynamic_pressure * self.chord * self.conditions.span_factor

    @property
    def force_unit(self) -> str:
        return self.conditions.force_unit

    @property
    def moment_unit(self) -> str:
        return self.conditions.moment_unit


# ---------------------------------------------------------------------------------------------
def _angle_index(analysis, alpha_deg) -> int:
    alphas = np.asarray(analysis.alpha_deg, float)
    if alpha_deg is None:
        if len(alphas) != 1:
            raise InputError(f"the analysis has {len(alphas)} angles of attack; loads are for "
                             "one: give alpha")
        return 0
    hit = np.flatnonzero(np.isclose(alphas, float(alpha_deg), rtol=0.0, atol=1e-9))
    if not len(hit):
        raise InputError(f"angle of attack {alpha_deg:g} deg is not in the analysis "
                         f"({', '.join(f'{a:g}' for a in alphas)})")
    return int(hit[0])


def _points(points, option: str) -> np.ndarray:
    try:
        arr = np.asarray(points, float).reshape(-1, 2) if len(points) else np.zeros((0, 2))
    except (TypeError, ValueError):
        raise InputError(f"{option}: give points as (x, y) pairs of numbers") from None
    if not np.all(np.isfinite(arr)):
        raise InputError(f"{option}: points must be finite numbers")
    return arr


def _nose_up(x, y, fx, fy, about) -> np.ndarray:
    """Nose-up (clockwise) moment of forces at (x, y) about each point of ``about`` (k, 2)."""
    ax, ay = about[:, 0:1], about[:, 1:2]
    return -np.sum((x - ax) * fy - (y - ay) * fx, axis=1)


@dataclass(frozen=True)
class _Pressures:
    """Cp the loads carry, per angle: at the nodes, the panel midpoints and the bases, and the
    coefficients of the same integrals (checked against the loads)."""

    node: np.ndarray
    mid: np.ndarray
    base: np.ndarray  # (n_alpha, n_bodies), NaN for bodies without a base
    cl: np.ndarray
    cd: np.ndarray
    cm: np.ndarray
    body_cl: np.ndarray
    body_cd: np.ndarray
    body_cm: np.ndarray
    note: str
    # (n_alpha, n_nodes) skin friction over q, signed along the loop direction; None: no shear
    friction: np.ndarray | None = None


def _viscous_nodes(result):
    """Viscous Cp and loop-signed skin friction at the panel nodes, per angle.

    The boundary layer's stations are the panel nodes themselves (marched from the stagnation
    point along each surface): the upper surface's flow runs against the loop direction (the
    loop goes from the upper trailing edge over the nose), the lower surface's with it.
    """
    f = result.fine
    p = f.panels
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    cp = np.array(f.cp, float)
    cf = np.zeros_like(cp)
    index = {complex(z): k for k, z in enumerate(zn)}
    for i, r in enumerate(result.viscous.results):
        if not r.converged:
            continue
        for layer, sign in ((r.upper, -1.0), (r.lower, 1.0)):
            for x, y, c, f_ in zip(layer.x, layer.y, layer.pressure_coefficient,
                                   layer.skin_friction):
                k = index.get(complex(x, y))
                if k is not None:
                    cp[i, k], cf[i, k] = c, sign * f_
    return cp, cf


def _viscous_pressures(result) -> _Pressures:
    """Viscous Cp and skin friction, and the coefficients of their integrals."""
    from panelflow.conditions.compressibility import _integrate

    f = result.fine
    p = f.panels
    cp, cf = _viscous_nodes(result)
    speed = np.sqrt(np.maximum(1.0 - cp, 0.0))  # |edge speed| at the nodes
    mid = 1.0 - (0.5 * (speed[:, p.start] + speed[:, p.end])) ** 2
    base = np.full(np.shape(f.cp_base), np.nan)
    first, last = p.node_start[p.base_body], p.node_stop[p.base_body] - 1
    if len(p.base_body):
        base[:, p.base_body] = 0.5 * (cp[:, first] + cp[:, last])
    force, moment = _integrate(p, cp, mid, base[:, p.base_body] if len(p.base_body) else
                               np.zeros((len(cp), 0)), f.chord_line, f.reference_point)
    # skin friction: linear along each panel, acting along it (the loop direction times the
    # signed coefficient); a force along the panel's line has the same moment about any point
    # as at its midpoint
    shear = 0.5 * (cf[:, p.start] + cf[:, p.end]) * p.length * p.tangent
    zr = complex(*f.reference_point)
    shear_moment = (np.conj(p.mid - zr) * shear).imag
    for k in range(p.n_bodies):
        on = p.body == k
        force[:, k] += shear[:, on].sum(axis=1)
        moment[:, k] += shear_moment[:, on].sum(axis=1)
    c = f.chord_line.length
    rot = np.exp(-1j * np.radians(f.alpha_deg))[:, None]
    body_cl, body_cd = (rot * force).imag / c, (rot * force).real / c
    body_cm = -moment / c**2
    return _Pressures(cp, mid, base, body_cl.sum(axis=1), body_cd.sum(axis=1),
                      body_cm.sum(axis=1), body_cl, body_cd, body_cm,
                      f"viscous pressures and skin friction of the boundary-layer analysis at "
                      f"Reynolds number {result.viscous.reynolds:.3g}", cf)


def _pressures(result) -> _Pressures:
    """The incompressible Cp, with a Mach number the corrected Cp of the result's rule, with the
    viscous analysis its pressures and skin friction."""
    f = result.fine
    p = f.panels
    c = result.compressibility
    if result.viscous is not None:
        return _viscous_pressures(result)
    if c is None:
        g = np.asarray(f.gamma)
        mid = 1.0 - (0.5 * (g[:, p.start] + g[:, p.end])) ** 2
        return _Pressures(np.asarray(f.cp), mid, np.asarray(f.cp_base), f.cl_pressure,
                          f.cd_pressure, f.cm, f.body_cl, f.body_cd, f.body_cm,
                          "incompressible pressures (Bernoulli's equation)")
    base = np.full(np.shape(f.cp_base), np.nan)
    if len(p.base_body):
        base[:, p.base_body] = c.cp_base
    return _Pressures(np.asarray(c.cp), np.asarray(c.cp_mid), base, c.cl_pressure,
                      c.cd_pressure, c.cm, c.body_cl, c.body_cd, c.body_cm,
                      f"pressures corrected to Mach {c.mach:g} by the {c.rule} rule")


def _body_loads(f, cp, i, k, outline, scale, conditions, p0, ref, about) -> BodyLoads:
    """Cells, pressures and nodal loads of body ``k`` at angle ``i`` (see module docstring)."""
    p = f.panels
    q = conditions.dynamic_pressure
    b = conditions.span_factor
    n0, n1 = int(p.node_start[k]), int(p.node_stop[k])
    kind = p.kinds[k]
    pn = p0 + q * cp.node[i, n0:n1]
    zn = scale * (p.nodes[n0:n1, 0] + 1j * p.nodes[n0:n1, 1])
    on = np.flatnonzero(p.body == k)
    a, e = p.start[on] - n0, p.end[on] - n0  # consecutive along the loop
    pm = p0 + q * cp.mid[i, on]
    pa, pb = pn[a], pn[e]
    n = n1 - n0
    if kind == SHARP:
        # the loop's first and last nodes are the same trailing-edge point (exactly, by the
        # outline convention and the panelling): make them one node
        n -= 1
        e = np.where(e == n, 0, e)
        pn = np.r_[0.5 * (pn[0] + pn[n]), pn[1:n]]
        zn = zn[:n]
    za, ze = zn[a], zn[e]
    if kind == BLUNT:
        # base: from the lower corner (last node) to the upper one (first), uniform pressure
        p_base = p0 + q * float(cp.base[i, k])
        a, e = np.r_[a, n - 1], np.r_[e, 0]
        pa, pm, pb = np.r_[pa, p_base], np.r_[pm, p_base], np.r_[pb, p_base]
        za, ze = zn[a], zn[e]
    L = np.abs(ze - za)
    inward = 1j * (ze - za) / L
    force_a = inward * L * (pa + 2.0 * pm) / 6.0 * b
    force_b = inward * L * (2.0 * pm + pb) / 6.0 * b
    if cp.friction is not None:
        # skin-friction shear, linear along the panel: split as work-equivalent nodal loads
        tau = q * cp.friction[i, n0:n1]  # Pa, along the loop (original node order)
        base_panel = np.zeros(int(kind == BLUNT))  # no shear on a base
        ta = np.r_[tau[p.start[on] - n0], base_panel]
        tb = np.r_[tau[p.end[on] - n0], base_panel]
        tangent = (ze - za) / L
        force_a = force_a + tangent * L * (2.0 * ta + tb) / 6.0 * b
        force_b = force_b + tangent * L * (ta + 2.0 * tb) / 6.0 * b
    panel_force = force_a + force_b
    nodal = np.zeros(n, complex)
    np.add.at(nodal, a, force_a)
    np.add.at(nodal, e, force_b)

    x, y = zn.real, zn.imag
    rot = np.exp(-1j * np.radians(f.alpha_deg[i]))
    total = complex(nodal.sum())
    moments = _nose_up(x, y, nodal.real, nodal.imag, np.vstack([ref, about]))
    mid = 0.5 * (za + ze)
    return BodyLoads(
        name=p.names[k], kind=kind, x=x, y=y, pressure=pn, fx=nodal.real.copy(),
        fy=nodal.imag.copy(), cells=np.stack([a, e], axis=1), panel_x=mid.real, panel_y=mid.imag,
        panel_length=L, panel_nx=-inward.real, panel_ny=-inward.imag,
        panel_pressure=(pa + 4.0 * pm + pb) / 6.0, panel_fx=panel_force.real,
        panel_fy=panel_force.imag, base=np.r_[np.zeros(len(on), bool), [True] * (kind == BLUNT)],
        lift=float((rot * total).imag), drag=float((rot * total).real), moment=float(moments[0]),
        moments_about=moments[1:], chord=outline.chord * scale,
        leading_edge=scale * np.asarray(outline.leading_edge, float),
        trailing_edge=scale * np.asarray(outline.trailing_edge.point, float))


def _relative(diff, value, scale) -> float:
    return float(abs(diff) / max(abs(value), _SMALL * scale))


def _checks(f, i, bodies, alpha, fscale, chord, ref, about, total_loads):
    # ``f`` holds the coefficients of the pressures the loads carry (see _Pressures)
    """Equilibrium checks of the totals and of every body (see :class:`Equilibrium`)."""
    mscale = fscale * chord
    rot = np.exp(1j * np.radians(alpha))
    out = []

    def add(quantity, body, loads_value, coeff_value, unit, scale):
        out.append(Check(quantity, body, float(loads_value), float(coeff_value), unit,
                         _relative(loads_value - coeff_value, coeff_value, scale)))

    def point_label(pt):
        return f"moment about ({pt[0]:.6g}, {pt[1]:.6g}) m"

    groups = [(None, f.cl[i], f.cd[i], f.cm[i], total_loads)]
    groups += [(bl.name, f.body_cl[i, k], f.body_cd[i, k], f.body_cm[i, k],
                (bl.lift, bl.drag, bl.moment, bl.moments_about)) for k, bl in enumerate(bodies)]
    if len(bodies) == 1:
        groups = groups[:1]  # one body: its checks are the totals'
    for name, cl, cd, cm, (lift, drag, moment, moments_about) in groups:
        force = fscale * (cd + 1j * cl) * rot  # the coefficients' force in the input frame
        m_ref = cm * mscale
        add("lift", name, lift, cl * fscale, "force", fscale)
        add("drag", name, drag, cd * fscale, "force", fscale)
        add("moment about reference point", name, moment, m_ref, "moment", mscale)
        for pt, m_loads in zip(about, moments_about):
            # nose-up about P = nose-up about R - (R - P) x F
            m_coeff = m_ref - ((ref[0] - pt[0]) * force.imag - (ref[1] - pt[1]) * force.real)
            add(point_label(pt), name, m_loads, m_coeff, "moment", mscale)
    return tuple(out)


def _cavitation(loads_cp_min, conditions, q, cavitation=None):
    """Cavitation number at the running depth of the result, at the static pressure of the
    conditions, or at the surface."""
    fluid = conditions.fluid
    if fluid.vapour_pressure is None:
        return (), ()
    if cavitation is not None:
        ps = cavitation.atmospheric_pressure + cavitation.density * 9.80665 * cavitation.depth
        where = f"static pressure {ps:.6g} Pa at {cavitation.depth:g} m depth"
    elif conditions.static_pressure is not None:
        ps, where = conditions.static_pressure, f"static pressure {conditions.static_pressure:g} Pa"
    elif fluid.ambient_pressure is not None:
        ps, where = fluid.ambient_pressure, (f"static pressure {fluid.ambient_pressure:g} Pa, "
                                             "i.e. at the surface")
    else:
        return (), ()
    sigma = (ps - fluid.vapour_pressure) / q
    note = (f"cavitation number {sigma:.4g} ({where}, vapour pressure "
            f"{fluid.vapour_pressure:g} Pa); -Cp_min = {-loads_cp_min:.4g}")
    if -loads_cp_min > sigma:
        return (f"The suction peak (-Cp_min {-loads_cp_min:.4g}) exceeds the cavitation number "
                f"{sigma:.4g} ({where}): expect cavitation, and these loads do not hold.",), (note,)
    return (), (note,)


def section_loads(result, conditions: Conditions, alpha_deg: float | None = None,
                  about=(), nodes: StructuralNodes | None = None,
                  node_tolerance: float | None = None,
                  moment_tolerance: float | None = MOMENT_TRANSFER_TOLERANCE) -> Loads:
    """Pressures, panel and nodal loads and checked totals of every body at one angle.

    Parameters
    ----------
    result : Result or Analysis
        The solved geometry (the loads use its fine solution). With a Mach number the pressures
        are the compressibility-corrected ones of the result's rule; near a plane they are those
        of the solution with the plane; coordinates are always the outlines' own frame.
    conditions : Conditions
        Fluid, speed, length scale, span and pressure reference.
    alpha_deg : float, optional
        The angle of attack (degrees) among the analysis's; may be left out when it has one.
    about : sequence of (x, y)
        Extra moment points in the outline's frame and unit (e.g. a flap hinge); each body's and
        the total moment about each is reported and checked.
    nodes : StructuralNodes, optional
        Nodes of a structural mesh on the outlines (outline units): the loads are also moved
        onto them (see :func:`transfer_to_nodes`).
    node_tolerance : float, optional
        Distance (outline units) a structural node may lie from the outline; default
        ``NODE_TOLERANCE_FRACTION`` of the main chord.
    moment_tolerance : float or None
        Largest relative moment change the node transfer may make (None: no limit).

    Returns
    -------
    Loads

    Raises
    ------
    InputError
        For an angle not in the analysis, non-finite points, or structural nodes off the
        outlines (see :func:`transfer_to_nodes`).
    """
    if not isinstance(conditions, Conditions):
        raise InputError("conditions must be a Conditions object")
    result = as_result(result)
    i = _angle_index(result, alpha_deg)
    f = result.fine
    if result.viscous is not None and not result.viscous.results[i].converged:
        raise InputError(f"alpha {f.alpha_deg[i]:g} deg: the viscous iteration did not converge "
                         "there, so there are no viscous pressures to load the structure with")
    cp = _pressures(result)
    scale = conditions.length_scale(result.chord)
    q = conditions.dynamic_pressure
    p0 = 0.0 if conditions.static_pressure is None else conditions.static_pressure
    ref = scale * np.asarray(result.reference_point, float)
    about_m = scale * _points(about, "about")
    alpha = float(f.alpha_deg[i])

    bodies = tuple(_body_loads(f, cp, i, k, result.outlines[k], scale, conditions, p0, ref,
                               about_m) for k in range(f.panels.n_bodies))
    x = np.concatenate([bl.x for bl in bodies])
    y = np.concatenate([bl.y for bl in bodies])
    fx = np.concatenate([bl.fx for bl in bodies])
    fy = np.concatenate([bl.fy for bl in bodies])
    total = complex(fx.sum(), fy.sum())
    rot = np.exp(-1j * np.radians(alpha))
    moments = _nose_up(x, y, fx, fy, np.vstack([ref, about_m]))
    lift, drag = float((rot * total).imag), float((rot * total).real)

    chord = result.chord * scale
    fscale = q * chord * conditions.span_factor
    checks = _checks(cp, i, bodies, alpha, fscale, chord, ref, about_m,
                     (lift, drag, moments[0], moments[1:]))
    c, v = result.compressibility, result.viscous
    cl_c = float(v.results[i].cl if v is not None else
                 f.cl_circulation[i] if c is None else c.cl[i])
    cl_p = float(cp.cl[i])
    notes = [f"lift from pressure integration {lift:.6g} {conditions.force_unit} (cl_p "
             f"{cl_p:.6f}); lift from circulation {cl_c * fscale:.6g} {conditions.force_unit} "
             f"(cl {cl_c:.6f}). They differ by {_percent(cl_p, cl_c)}, the panel discretisation "
             f"error; the loads carry the pressure lift so that they add up, from {cp.note}."]
    if v is not None:
        cd_wake = float(v.results[i].cd)
        notes.append(
            f"drag of the loads {drag:.6g} {conditions.force_unit} (pressure and skin friction "
            f"integrated, cd {drag / fscale:.5f}) against the drag of the viscous analysis "
            f"{cd_wake * fscale:.6g} {conditions.force_unit} (wake momentum, cd {cd_wake:.5f}): "
            "the integrated surface drag carries the panel error of the pressure drag, of the "
            "drag's own size; use cd for performance and these loads for the structure")
    cav_caution, cav_note = _cavitation(float(np.nanmin(cp.node[i])), conditions, q,
                                        result.cavitation)
    size = size_warning(chord, conditions.describe_scale(result.chord))
    if size:
        notes.append(size)
    loads = Loads(conditions, alpha, scale, chord, q, ref, about_m, bodies, lift, drag,
                  float(moments[0]), moments[1:], cl_c * fscale, cl_p, float(cp.cd[i]),
                  float(cp.cm[i]), cl_c, Equilibrium(checks), LOAD_CAUTIONS + cav_caution,
                  tuple(notes) + cav_note,
                  analysis={**result.problem.record(), **margin_record(result)},
                  hinge=_hinge_moment(result.flap, bodies, scale, q, conditions.span_factor))
    if nodes is not None:
        tol = None if node_tolerance is None else node_tolerance * scale
        loads = with_transfer(loads, transfer_to_nodes(loads, nodes, tol, moment_tolerance))
    return loads


# Chords outside this range (metres) are unlikely for the sections panelflow serves, from a
# model's fin to a turbine blade's root (common practice): a wrong length unit is more likely.
PLAUSIBLE_CHORD_M = (0.005, 20.0)


def size_warning(chord_m: float, scaling: str) -> str:
    """A sentence when a chord of ``chord_m`` metres looks like a wrong length unit, else ""."""
    lo, hi = PLAUSIBLE_CHORD_M
    if lo <= chord_m <= hi:
        return ""
    guess = ("if the outline is in millimetres, give --unit mm (or a column header x_mm, y_mm)"
             if chord_m > hi else "if the outline is not in metres, give its --unit, or the "
             "chord in metres with --chord")
    return (f"warning: the main chord is {chord_m:.6g} m ({scaling}), outside the "
            f"{lo:g} to {hi:g} m usual for foil and fairing sections: {guess}")


def _percent(a, b) -> str:
    if abs(b) < 1e-6:  # no lift to speak of (a smooth body): the difference itself
        return f"{abs(a - b):.2g} in cl"
    return f"{100.0 * abs(a - b) / abs(b):.3g} %"


def with_transfer(loads: Loads, transfer: NodeTransfer) -> Loads:
    """The loads with a node transfer attached (and its caution for bodies left out)."""
    cautions = loads.cautions
    if transfer.untransferred:
        cautions += (f"No structural nodes on {', '.join(transfer.untransferred)}: the loads of "
                     "those bodies are not in the structural node loads.",)
    return replace(loads, transfer=transfer, cautions=cautions)


# --------------------------------------------------------------------------- structural nodes
_ID_NAMES = {"id", "node", "nodeid", "nid", "label", "number"}


def _header_key(text: str) -> str:
    m = re.match(r"\s*([a-z]+)", text.lower())
    return m.group(1) if m else ""


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def read_nodes(path) -> StructuralNodes:
    """Structural node ids and coordinates from a CSV file.

    Columns ``id, x, y`` (commas, or whitespace on lines without commas); ``#`` starts a
    comment. An optional header names the columns (``id``/``node``, ``x``, ``y``, in any order,
    with or without a unit such as ``x [mm]``); further columns, e.g. ``z``, are ignored.
    Coordinates are in the outline's frame and unit.

    Raises
    ------
    InputError
        Naming the file and line of a missing file, a short row, a non-integer or repeated id,
        or a coordinate that is not a number.
    """
    p = Path(path)
    try:
        text = read_input(p, "structural node table").decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"{p}: not UTF-8 text (byte {exc.start})") from None
    cols = (0, 1, 2)
    ids, xy, lines, header_seen = [], [], [], False
    for lineno, raw in enumerate(text.splitlines(), 1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        fields = ([c.strip() for c in next(csv.reader([line]))] if "," in line
                  else line.split())
        if not ids and not header_seen and not all(_is_number(v) for v in fields[:3]):
            keys = [_header_key(v) for v in fields]
            try:
                cols = (next(j for j, k in enumerate(keys) if k in _ID_NAMES),
                        keys.index("x"), keys.index("y"))
            except (StopIteration, ValueError):
                raise InputError(f"{p} line {lineno}: header must name the columns id, x and y "
                                 f"(got {', '.join(fields)})") from None
            header_seen = True
            continue
        if len(fields) <= max(cols):
            raise InputError(f"{p} line {lineno}: expected node id, x, y; got {line!r}")
        node, xs, ys = (fields[j] for j in cols)
        try:
            node_id = int(node)
        except ValueError:
            try:
                v = float(node)
            except ValueError:
                v = math.nan
            if not (math.isfinite(v) and v == int(v)):
                raise InputError(f"{p} line {lineno}: node id {node!r} is not a whole "
                                 "number") from None
            node_id = int(v)
        try:
            xv, yv = float(xs), float(ys)
        except ValueError:
            raise InputError(f"{p} line {lineno}: node {node_id}: coordinates {xs!r}, {ys!r} "
                             "are not numbers") from None
        if not (math.isfinite(xv) and math.isfinite(yv)):
            raise InputError(f"{p} line {lineno}: node {node_id}: coordinates must be finite")
        if node_id <= 0:
            raise InputError(f"{p} line {lineno}: node id {node_id} must be positive")
        ids.append(node_id)
        xy.append((xv, yv))
        lines.append(lineno)
    if not ids:
        raise InputError(f"{p}: no nodes")
    uniq, counts = np.unique(ids, return_counts=True)
    if np.any(counts > 1):
        dup = int(uniq[counts > 1][0])
        where = [lines[j] for j, v in enumerate(ids) if v == dup]
        raise InputError(f"{p}: node {dup} is listed more than once (lines "
                         f"{', '.join(map(str, where))})")
    return StructuralNodes(np.array(ids, np.int64), np.array(xy, float), str(p))


def _segments(bodies):
    """All cells of all bodies: start, end (complex), body index, arc position of the start."""
    za, ze, body, s0 = [], [], [], []
    for k, bl in enumerate(bodies):
        z = bl.x + 1j * bl.y
        a, e = bl.cells[:, 0], bl.cells[:, 1]
        za.append(z[a])
        ze.append(z[e])
        body.append(np.full(len(a), k))
        s0.append(np.r_[0.0, np.cumsum(bl.panel_length)[:-1]])
    return np.concatenate(za), np.concatenate(ze), np.concatenate(body), np.concatenate(s0)


def _project(z, za, ze, block: int = 2048):
    """Nearest segment, distance and segment parameter of each point (blockwise over points)."""
    d = ze - za
    dd = np.maximum(np.abs(d) ** 2, 1e-300)
    best = np.empty(len(z), int)
    dist = np.empty(len(z))
    par = np.empty(len(z))
    for lo in range(0, len(z), block):
        zz = z[lo:lo + block, None]
        t = np.clip(((zz - za) * np.conj(d)).real / dd, 0.0, 1.0)
        r = np.abs(za + t * d - zz)
        j = np.argmin(r, axis=1)
        rows = np.arange(len(zz))
        best[lo:lo + block] = j
        dist[lo:lo + block] = r[rows, j]
        par[lo:lo + block] = t[rows, j]
    return best, dist, par


def _share(s_panel, s_struct, perimeter):
    """Left and right structural node (indices into the sorted ``s_struct``) and the weight of
    the right one, for every panel-node arc position, along a closed loop."""
    m = len(s_struct)
    idx = np.searchsorted(s_struct, s_panel, side="right")
    left = (idx - 1) % m
    right = idx % m
    s_left = s_struct[left] - np.where(idx == 0, perimeter, 0.0)
    s_right = s_struct[right] + np.where(idx == m, perimeter, 0.0)
    gap = s_right - s_left
    w = np.where(gap > 0.0, (s_panel - s_left) / np.where(gap > 0.0, gap, 1.0), 0.0)
    return left, right, w


def transfer_to_nodes(loads: Loads, nodes: StructuralNodes, tolerance: float | None = None,
                      moment_tolerance: float | None = MOMENT_TRANSFER_TOLERANCE) -> NodeTransfer:
    """Move the nodal panel loads onto the nodes of a structural mesh.

    Parameters
    ----------
    loads : Loads
    nodes : StructuralNodes
        In the outline's frame and unit (converted with the loads' length scale).
    tolerance : float, optional
        Distance in metres a node may lie from the panelled outline; default
        ``NODE_TOLERANCE_FRACTION`` of the main chord.
    moment_tolerance : float or None
        Raise when a body's (or the total) relative moment change exceeds this; None reports
        only.

    Returns
    -------
    NodeTransfer

    Raises
    ------
    InputError
        Naming the first node farther than ``tolerance`` from every outline, or the body whose
        nodes are too sparse to carry its moment within ``moment_tolerance``.
    """
    scale = loads.length_scale
    tol = NODE_TOLERANCE_FRACTION * loads.chord if tolerance is None else float(tolerance)
    if not (math.isfinite(tol) and tol > 0.0):
        raise InputError(f"node tolerance must be positive, got {tolerance}")
    z = scale * (nodes.xy[:, 0] + 1j * nodes.xy[:, 1])
    za, ze, seg_body, seg_s0 = _segments(loads.bodies)
    best, dist, par = _project(z, za, ze)
    off = np.flatnonzero(dist > tol)
    if len(off):
        j = off[0]  # the first in the file
        more = f" ({len(off) - 1} more nodes are off too)" if len(off) > 1 else ""
        raise InputError(
            f"{nodes.source}: node {int(nodes.ids[j])} at ({nodes.xy[j, 0]:.6g}, "
            f"{nodes.xy[j, 1]:.6g}) lies {dist[j] / scale:.3g} (outline units) from the nearest "
            f"outline ({loads.bodies[seg_body[best[j]]].name}); the tolerance is "
            f"{tol / scale:.3g}{more}")
    body_of = seg_body[best]
    s_node = seg_s0[best] + par * np.abs(ze - za)[best]

    out, untransferred = [], []
    ref = loads.reference_point[None, :]
    for k, bl in enumerate(loads.bodies):
        mine = np.flatnonzero(body_of == k)
        if not len(mine):
            untransferred.append(bl.name)
            empty = np.zeros(0)
            out.append(StructuralBodyLoads(bl.name, np.zeros(0, np.int64), empty, empty, empty,
                                           empty, empty, 0.0, 0.0, 0.0))
            continue
        if len(mine) < 3:
            raise InputError(f"{nodes.source}: {bl.name} has {len(mine)} structural node"
                             f"{'s' if len(mine) > 1 else ''} (node "
                             f"{', '.join(str(int(v)) for v in nodes.ids[mine])}); a closed "
                             "section needs at least 3 to carry its loads")
        order = mine[np.argsort(s_node[mine], kind="stable")]
        perimeter = float(bl.panel_length.sum())
        s_panel = np.r_[0.0, np.cumsum(bl.panel_length)[:-1]]  # node j starts cell j
        left, right, w = _share(s_panel, s_node[order], perimeter)
        fx = np.zeros(len(order))
        fy = np.zeros(len(order))
        np.add.at(fx, left, (1.0 - w) * bl.fx)
        np.add.at(fx, right, w * bl.fx)
        np.add.at(fy, left, (1.0 - w) * bl.fy)
        np.add.at(fy, right, w * bl.fy)
        xs, ys = z[order].real, z[order].imag
        m_struct = float(_nose_up(xs, ys, fx, fy, ref)[0])
        dF = abs(complex(fx.sum() - bl.fx.sum(), fy.sum() - bl.fy.sum()))
        dM = m_struct - bl.moment
        force_k = abs(complex(bl.fx.sum(), bl.fy.sum()))
        rel = _relative(dM, max(abs(bl.moment), force_k * bl.chord), loads.force_scale * bl.chord)
        out.append(StructuralBodyLoads(bl.name, nodes.ids[order], xs, ys, fx, fy, dist[order],
                                       dF, dM, rel))
        if moment_tolerance is not None and rel > moment_tolerance:
            gaps = np.diff(np.r_[s_node[order], s_node[order][0] + perimeter])
            g = int(np.argmax(gaps))
            ids = nodes.ids[order]
            raise InputError(
                f"{nodes.source}: moving the loads of {bl.name} onto its {len(order)} nodes "
                f"changes their moment by {100 * rel:.3g} % (limit {100 * moment_tolerance:g} "
                f"%); the widest gap, {gaps[g]:.3g} m, is between nodes {int(ids[g])} and "
                f"{int(ids[(g + 1) % len(ids)])}: give more nodes")

    done = [k for k, b in enumerate(out) if b.n_nodes]
    f_panel = sum(complex(loads.bodies[k].fx.sum(), loads.bodies[k].fy.sum()) for k in done)
    f_struct = sum(complex(out[k].fx.sum(), out[k].fy.sum()) for k in done)
    m_panel = sum(loads.bodies[k].moment for k in done)
    m_struct = m_panel + sum(out[k].moment_difference for k in done)
    dM = m_struct - m_panel
    rel = _relative(dM, max(abs(m_panel), abs(f_panel) * loads.chord),
                    loads.force_scale * loads.chord)
    if moment_tolerance is not None and rel > moment_tolerance:
        raise InputError(f"{nodes.source}: moving the loads onto the nodes changes the total "
                         f"moment by {100 * rel:.3g} % (limit {100 * moment_tolerance:g} %): "
                         "give more nodes")
    return NodeTransfer(tuple(out), abs(f_struct - f_panel),
                        abs(f_struct - f_panel) / max(abs(f_panel), 1e-300), dM, rel, tol,
                        tuple(untransferred), nodes.source)


# --------------------------------------------------------------------------- text summaries
def equilibrium_text(loads: Loads) -> str:
    """The equilibrium check as printed with every export (several lines, ending in newline)."""
    eq = loads.equilibrium
    fu, mu = loads.force_unit, loads.moment_unit
    span = ("" if loads.conditions.span is None else f" x span {loads.conditions.span:g} m")
    lines = [f"equilibrium check: sum of nodal loads against coefficients x q c{span} "
             f"(q {loads.dynamic_pressure:.6g} Pa, c {loads.chord:.6g} m; moments nose-up; "
             f"tolerance {eq.tolerance:.0e} relative)"]
    width = max(len(_check_name(c)) for c in eq.checks)
    lines.append(f"  {'quantity':<{width}}  {'from loads':>16}  {'from coefficients':>17}  "
                 f"{'unit':<5}  rel. diff")
    for c in eq.checks:
        unit = fu if c.unit == "force" else mu
        lines.append(f"  {_check_name(c):<{width}}  {c.from_loads:>16.10g}  "
                     f"{c.from_coefficients:>17.10g}  {unit:<5}  {c.relative:.1e}")
    lines.append(f"  {'within tolerance' if eq.ok else 'NOT WITHIN TOLERANCE'}: largest "
                 f"relative difference {eq.max_relative:.1e}")
    lines += hinge_lines(loads)
    lines += [f"  {note}" for note in loads.notes if not note.startswith("warning: ")]
    lines += [f"caution: {text}" for text in loads.cautions[len(LOAD_CAUTIONS):]]
    t = loads.transfer
    if t is not None:
        lines.append(f"node transfer onto {t.n_nodes} structural nodes ({t.source}): force "
                     f"changed by {t.force_difference:.2e} {fu} (relative {t.force_relative:.1e}),"
                     f" moment by {t.moment_difference:.3e} {mu} (relative "
                     f"{t.moment_relative:.1e}, limit {MOMENT_TRANSFER_TOLERANCE:.0e})")
        for b in t.bodies:
            if b.n_nodes:
                lines.append(f"  {b.name}: {b.n_nodes} nodes, farthest {b.distance.max():.2e} m "
                             f"from the outline, moment changed by {b.moment_difference:.3e} "
                             f"{mu} (relative {b.moment_relative:.1e})")
    return "\n".join(lines) + "\n"


def hinge_lines(loads: Loads) -> list:
    """The flap's hinge moment in words (empty without a flap)."""
    h = loads.hinge
    if h is None:
        return []
    part = "its deflected part" if h.kind == "plain" else "the flap body"
    return [f"  flap hinge at ({h.hinge_point[0]:.6g}, {h.hinge_point[1]:.6g}) m, {part} "
            f"({h.nodes} load nodes): hinge moment {h.moment:.6g} {loads.moment_unit} nose-up "
            f"(positive turns the trailing edge down), coefficient {h.coefficient:.5f} per "
            f"q c_f^2 (flap chord {h.flap_chord:.6g} m); normal force {h.normal_force:.6g} "
            f"{loads.force_unit}"]


def _check_name(c: Check) -> str:
    return c.quantity if c.body is None else f"{c.body}: {c.quantity}"
