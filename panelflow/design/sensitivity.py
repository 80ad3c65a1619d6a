"""Sensitivities of the panel solution to the positions of its nodes, in closed form.

The panel system of :mod:`panelflow.flow.solver` is ``A(z) x = b(z)``: ``x`` holds the nodal
vorticities and the bodies' stream-function constants, ``z`` the node positions. Differentiating
the residual ``R(x, z) = A(z) x - b(z)`` at a solution gives

    dx/dz = -A^-1 dR/dz

so the derivative of the solution with respect to any number of shape parameters costs one
pass over the point-panel pairs (the derivatives of the closed-form influence integrals below)
and one solve with the LU factors the analysis already has. Nothing is factorised again.

For a linear vortex panel from ``z1`` to ``z2`` (length ``L``, unit tangent ``e``, nodal
strengths ``g1``, ``g2``) the stream function at ``z`` is ``psi = -(L / 2 pi) Re I`` with
``I = int_0^1 g(t) log(z - zeta(t)) dt``, ``zeta(t) = z1 + (z2 - z1) t``. With ``u`` the point in
panel units (``u = conj(e)(z - z1) / L``) and ``Lam = log u - log(u - 1)``, the integrals needed
are ``int_0^1 t^k / (u - t) dt`` = ``Lam``, ``u Lam - 1``, ``u (u Lam - 1) - 1/2`` (k = 0, 1, 2)
and ``int_0^1 t^k log(u - t) dt`` (k = 0, 1), all elementary (the same antiderivatives as the
influence kernels, Katz & Plotkin, Low-Speed Aerodynamics, ch. 10). Differentiating under the
integral sign with ``dL/dz1 = -e``, ``dzeta/dz1 = 1 - t``, ``dzeta/dz2 = t`` gives the derivatives
with respect to each end point; the derivative with respect to the point itself follows from
translation invariance (moving the point and both ends together changes nothing). A collocation
point sitting on one end of a panel moves with that node, and the one derivative needed there
(with respect to the other end) is regular, so every term is finite.

The derivatives of the trailing-edge conditions (Kutta and closure rows, whose coefficients
depend on the lengths of the panels next to the edge), of a blunt base's source panel and of its
strength factor, and of the freestream's right-hand side complete ``dR/dz``. For a sharp
trailing edge the two trailing-edge nodes are one point: they must move together (their
columns are meaningful only summed).

Checked against central finite differences of the whole analysis in
``tests/test_design_sensitivity.py``.
"""

from __future__ import annotations

import numpy as np

from panelflow import threads
from panelflow.errors import InputError
from panelflow.flow import influence
from panelflow.flow.solver import System, _base_factor, lu_solve
from panelflow.geometry.outline import SMOOTH
from panelflow.geometry.panels import Panels

__all__ = ["collocation_nodes", "residual_derivatives", "unit_derivatives",
           "angle_derivative"]

_TWO_PI = 2.0 * np.pi
# Point-panel pairs per block (as the influence kernels): bounded temporaries at any size.
_BLOCK_PAIRS = 40_000


def collocation_nodes(panels: Panels):
    """Node of every collocation point, in the order :func:`panelflow.flow.solver.assemble`
    uses, and the pairs of trailing-edge nodes whose rows are averaged.

    Returns
    -------
    single : ndarray of int
        Node index of each single collocation row (rows ``0 .. len(single) - 1``).
    pairs : ndarray of int, shape (n_pair, 2)
        The (first, last) trailing-edge nodes of each body with a trailing edge; row
        ``len(single) + k`` is the mean of the two.
    """
    single, pairs = [], []
    for k in range(panels.n_bodies):
        first, last = int(panels.node_start[k]), int(panels.node_stop[k]) - 1
        if panels.kinds[k] == SMOOTH:
            single.append(np.arange(first, last + 1))
        else:
            single.append(np.arange(first + 1, last))
            pairs.append((first, last))
    return np.concatenate(single), np.array(pairs, int).reshape(-1, 2)


def _logs(u):
    """log|u|, log|u - 1| (floored: a node meets a vanishing factor) and the subtended angle."""
    ur, ui = u.real, u.imag
    r0 = ur * ur + ui * ui
    r1 = (ur - 1.0) ** 2 + ui * ui
    lu = 0.5 * np.log(np.maximum(r0, 1e-300))
    lu1 = 0.5 * np.log(np.maximum(r1, 1e-300))
    # arg(u) - arg(u - 1) on the principal branches: arg(u conj(u - 1))
    theta = np.arctan2(-ui, ur * (ur - 1.0) + ui * ui)
    return lu, lu1, theta


def _vortex_terms(pts, panels: Panels, gamma, with_x: bool = True):
    """Derivatives of the vortex sheet's stream function at ``pts`` with respect to each
    panel's end points, for every solution column of ``gamma``.

    Returns
    -------
    dx1, dy1, dx2, dy2 : ndarray, shape (k, n, p)
        Zero where the point coincides with that end (the caller's translation-invariance
        bookkeeping makes the total right there); ``dx1``, ``dx2`` None unless ``with_x``.
    """
    z1, e, L = panels.z1, panels.tangent, panels.length
    g1 = gamma[panels.start].T[:, None, :]  # (k, 1, p)
    g2 = gamma[panels.end].T[:, None, :]
    w = pts[:, None] - z1[None, :]
    u = (np.conj(e) / L)[None, :] * w
    at1 = w == 0
    at2 = pts[:, None] == panels.z2[None, :]
    lu, lu1, theta = _logs(u)
    ur, ui = u.real, u.imag
    u2r = ur * ur - ui * ui
    re_p0 = ur * lu + (1.0 - ur) * lu1 - ui * theta - 1.0
    re_p1 = 0.5 * (u2r * lu - (u2r - 1.0) * lu1 - 2.0 * ur * ui * theta - ur) - 0.25
    re_i = (0.5 * np.log(L)[None, None, :] * (g1 + g2) + g1 * (re_p0 - re_p1)[None]
            + g2 * re_p1[None])
    # (1-u)^2 Lam, u (1-u) Lam, u^2 Lam: each log meets a factor vanishing at its node
    lam = (lu - lu1) + 1j * theta
    one_u = 1.0 - u
    ul = u * lam
    a2 = one_u * ul + u - 0.5
    a1 = one_u * (one_u * lam) + 1.5 - u
    a3 = u * ul - u - 0.5
    # Im(conj(e) Z) = ex Im Z - ey Re Z, Re(conj(e) Z) = ex Re Z + ey Im Z
    ex, ey = e.real[None, None, :], e.imag[None, None, :]
    e1 = g1 * a1[None] + g2 * a2[None]
    e2 = g1 * a2[None] + g2 * a3[None]
    im1 = ex * e1.imag - ey * e1.real
    im2 = ex * e2.imag - ey * e2.real
    dy1 = (ey * re_i - im1) / _TWO_PI
    dy2 = (-ey * re_i - im2) / _TWO_PI
    dy1[:, at1] = 0.0
    dy2[:, at2] = 0.0
    if not with_x:
        return None, dy1, None, dy2
    dx1 = (ex * re_i + ex * e1.real + ey * e1.imag) / _TWO_PI
    dx2 = (-ex * re_i + ex * e2.real + ey * e2.imag) / _TWO_PI
    dx1[:, at1] = 0.0
    dx2[:, at2] = 0.0
    return dx1, dy1, dx2, dy2


def _source_terms(pts, z1, z2):
    """Stream function of a unit constant source panel at ``pts`` and its derivatives with
    respect to the panel's end points (zero where the point is that end).

    Returns
    -------
    s, dx1, dy1, dx2, dy2 : ndarray, shape (n,)
    """
    L = abs(z2 - z1)
    e = (z2 - z1) / L
    s = influence.source_psi(pts, np.array([z1]), np.array([e]), np.array([L]))[:, 0]
    w = pts - z1
    u = np.conj(e) * w / L
    lu, lu1, theta = _logs(u)
    lam = (lu - lu1) + 1j * theta
    c1 = np.conj(e) * ((1.0 - u) * lam + 1.0)
    c2 = np.conj(e) * (u * lu - u * lu1 + 1j * u * theta - 1.0)
    # the kernel takes the logarithm in the panel's own frame, so turning the panel shifts the
    # stream function by -L/(2 pi) times the change of its direction angle
    dx1 = -e.real / L * s - (c1.imag + e.imag) / _TWO_PI
    dy1 = -e.imag / L * s - (c1.real - e.real) / _TWO_PI
    dx2 = e.real / L * s - (c2.imag - e.imag) / _TWO_PI
    dy2 = e.imag / L * s - (c2.real + e.real) / _TWO_PI
    dx1[w == 0], dy1[w == 0] = 0.0, 0.0
    dx2[pts == z2], dy2[pts == z2] = 0.0, 0.0
    return s, dx1, dy1, dx2, dy2


def _unit(a):
    return a / abs(a)


def _d_unit(a, da):
    """Derivative of a / |a| (complex) for a change da."""
    ah = a / abs(a)
    return (da - ah * (np.conj(ah) * da).real) / abs(a)


def _base_cos_derivatives(panels: Panels, k: int) -> dict:
    """d cos / d(node coordinate) of a blunt body's base strength factor
    (:func:`panelflow.flow.solver._base_factor`), as {(node, axis): value}."""
    zn = panels.nodes[:, 0] + 1j * panels.nodes[:, 1]
    first, last = int(panels.node_start[k]), int(panels.node_stop[k]) - 1
    nodes = (first, first + 1, last - 1, last)
    out = {}
    for node in nodes:
        for axis, dz in ((0, 1.0 + 0j), (1, 1j)):
            def delta(i):
                return dz if i == node else 0j

            d_up = zn[first] - zn[first + 1]
            d_lo = zn[last] - zn[last - 1]
            dd_up = delta(first) - delta(first + 1)
            dd_lo = delta(last) - delta(last - 1)
            d = _unit(d_up) + _unit(d_lo)
            dd = _d_unit(d_up, dd_up) + _d_unit(d_lo, dd_lo)
            dh = _unit(d)
            ddh = _d_unit(d, dd)
            bt = zn[first] - zn[last]
            dbt = delta(first) - delta(last)
            n_out = -1j * _unit(bt)
            dn_out = -1j * _d_unit(bt, dbt)
            # cos = Re(conj(dh) n_out)
            value = (np.conj(ddh) * n_out + np.conj(dh) * dn_out).real
            out[(node, axis)] = out.get((node, axis), 0.0) + float(value)
    return out


def _ratio_derivative(za, zb, zc):
    """|zb - za| / |zc - zb| and its derivatives with respect to (za, zb, zc), x and y."""
    a, b = zb - za, zc - zb
    la, lb = abs(a), abs(b)
    ha, hb = a / la, b / lb
    r = la / lb
    out = {}
    # d|a| = Re(conj(ha) da), d|b| = Re(conj(hb) db); dr = d|a|/lb - la d|b|/lb^2
    for which, (da, db) in (("a", (-1.0, 0.0)), ("b", (1.0, -1.0)), ("c", (0.0, 1.0))):
        for axis, unit in ((0, 1.0 + 0j), (1, 1j)):
            dla = (np.conj(ha) * unit * da).real
            dlb = (np.conj(hb) * unit * db).real
            out[(which, axis)] = dla / lb - la * dlb / lb**2
    return r, out


@threads.blas_single
def residual_derivatives(system: System, motion=None, solutions=None) -> np.ndarray:
    """Derivative of the panel residual ``A x - b`` along given node motions.

    Parameters
    ----------
    system : System
        A factorised free-space system (no plane boundary).
    motion : ndarray, shape (n_nodes, 2, P), optional
        How every node moves (x, y) per unit of each of P parameters; default: each node
        coordinate on its own (P = 2 n_nodes, node-major: x of node 0, y of node 0, ...).
    solutions : ndarray, shape (n, k), optional
        Solution vectors ``x`` (vorticities then stream-function constants) with their right-hand
        sides: by default the two unit solutions (freestream along x and along y).

    Returns
    -------
    ndarray, shape (k, n, P)
        The change of each residual row of each solution per unit of each parameter.

    Raises
    ------
    InputError
        For a system with a plane boundary (its images move with the bodies).
    """
    if system.image is not None:
        raise InputError("shape sensitivities are for free space: a plane boundary's images "
                         "are not differentiated")
    p = system.panels
    m = p.n_nodes
    if motion is None:
        motion = np.eye(2 * m).reshape(m, 2, 2 * m)
    motion = np.asarray(motion, float)
    if motion.ndim != 3 or motion.shape[:2] != (m, 2):
        raise InputError(f"node motion must have shape ({m}, 2, P), got {motion.shape}")
    mx, my = motion[:, 0, :], motion[:, 1, :]
    moves_x = bool(np.any(mx))
    x = system.unit if solutions is None else np.asarray(solutions, float)
    if x.ndim == 1:
        x = x[:, None]
    k = x.shape[1]
    own_rhs = solutions is None
    gamma = x[:m]
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    single, pairs = collocation_nodes(p)
    pt_nodes = np.concatenate([single, pairs[:, 0], pairs[:, 1]])
    pts = zn[pt_nodes]
    npts = len(pts)
    n_par = motion.shape[2]
    jac = np.zeros((k, npts, n_par))  # per collocation point, before pairs are averaged
    rows = max(1, _BLOCK_PAIRS // max(p.n_panels, 1))
    mx_s, mx_e, my_s, my_e = mx[p.start], mx[p.end], my[p.start], my[p.end]
    for r0 in range(0, npts, rows):
        sl = slice(r0, min(npts, r0 + rows))
        dx1, dy1, dx2, dy2 = _vortex_terms(pts[sl], p, gamma, moves_x)
        own = pt_nodes[sl]
        # each panel's ends, then the point itself (translation invariance)
        block = dy1 @ my_s + dy2 @ my_e - (dy1 + dy2).sum(axis=2)[..., None] * my[own][None]
        if moves_x:
            block += (dx1 @ mx_s + dx2 @ mx_e
                      - (dx1 + dx2).sum(axis=2)[..., None] * mx[own][None])
        jac[:, sl] = block
    base = p.base_body
    if len(base):
        factor = _base_factor(p)
        for row_b, kb in enumerate(base):
            first, last = int(p.node_start[kb]), int(p.node_stop[kb]) - 1
            sigma = gamma.T @ factor[row_b]  # (k,)
            s, sx1, sy1, sx2, sy2 = _source_terms(pts, zn[last], zn[first])
            geo = (np.outer(sx1, mx[last]) + np.outer(sy1, my[last]) + np.outer(sx2, mx[first])
                   + np.outer(sy2, my[first]) - (sx1 + sx2)[:, None] * mx[pt_nodes]
                   - (sy1 + sy2)[:, None] * my[pt_nodes])  # (npts, P)
            jac += sigma[:, None, None] * geo[None]
            half = 0.5 * (gamma[last] - gamma[first])  # (k,)
            dcos = np.zeros(n_par)
            for (node, axis), value in _base_cos_derivatives(p, kb).items():
                dcos += value * motion[node, axis]
            jac += half[:, None, None] * s[None, :, None] * dcos[None, None, :]
    if own_rhs:
        # R = A x - b with b = (-y, x) at the points: d(-b)/dz of the two unit streams
        jac[0] += my[pt_nodes]
        jac[1] -= mx[pt_nodes]
    n_single, n_pair = len(single), len(pairs)
    n = m + p.n_bodies
    out = np.zeros((k, n, n_par))
    out[:, :n_single] = jac[:, :n_single]
    if n_pair:
        out[:, n_single:n_single + n_pair] = 0.5 * (jac[:, n_single:n_single + n_pair]
                                                   + jac[:, n_single + n_pair:])
    _condition_rows(p, gamma, motion, out, n_single + n_pair)
    return out


def _condition_rows(p: Panels, gamma, motion, out, row0: int) -> None:
    """Derivatives of the Kutta, closure and zero-circulation rows (in place)."""
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    t = p.tangent
    # d(scale): scale is the mean panel length over all bodies
    dlen = (t.real[:, None] * (motion[p.end, 0] - motion[p.start, 0])
            + t.imag[:, None] * (motion[p.end, 1] - motion[p.start, 1]))  # (panels, P)
    dscale = dlen.mean(axis=0)
    scale = float(np.mean(p.length))
    row = row0
    for kb in range(p.n_bodies):
        first, last = int(p.node_start[kb]), int(p.node_stop[kb]) - 1
        g = gamma[first:last + 1]  # (nodes, k)
        if p.kinds[kb] == SMOOTH:
            # zero circulation: sum over the body's panels of L (g_start + g_end) / 2
            on = p.body == kb
            hg = 0.5 * (gamma[p.start[on]] + gamma[p.end[on]])  # (panels, k)
            out[:, row] += hg.T @ dlen[on]
            row += 1
            continue
        kutta = g[0] + g[-1]
        out[:, row] += kutta[:, None] * dscale[None]
        row += 1
        ru, dru = _ratio_derivative(zn[first], zn[first + 1], zn[first + 2])
        rl, drl = _ratio_derivative(zn[last], zn[last - 1], zn[last - 2])
        closure = (-0.5 * g[0] + 0.5 * g[-1] + 0.5 * (1.0 + ru) * g[1] - 0.5 * ru * g[2]
                   - 0.5 * (1.0 + rl) * g[-2] + 0.5 * rl * g[-3])
        out[:, row] += closure[:, None] * dscale[None]
        d_ru = np.zeros(motion.shape[2])
        d_rl = np.zeros(motion.shape[2])
        for (which, axis), v in dru.items():
            d_ru += v * motion[{"a": first, "b": first + 1, "c": first + 2}[which], axis]
        for (which, axis), v in drl.items():
            d_rl += v * motion[{"a": last, "b": last - 1, "c": last - 2}[which], axis]
        du = 0.5 * (g[1] - g[2]) * scale
        dl = 0.5 * (g[-3] - g[-2]) * scale
        out[:, row] += du[:, None] * d_ru[None] + dl[:, None] * d_rl[None]
        row += 1


@threads.blas_single
def unit_derivatives(system: System, node_motion: np.ndarray) -> np.ndarray:
    """Derivatives of the two unit solutions with respect to shape parameters.

    Parameters
    ----------
    system : System
        Factorised, free space, with its LU factors kept (``system.lu``).
    node_motion : ndarray, shape (n_nodes, 2, n_params)
        How each node moves per unit change of each parameter (x and y).

    Returns
    -------
    ndarray, shape (n, 2, n_params)
        ``d unit[:, c] / d param`` for the unit solutions c = 0 (freestream along x) and 1
        (along y); rows are the nodal vorticities, then the bodies' stream-function constants.
    """
    motion = np.asarray(node_motion, float)
    p = system.panels
    if motion.ndim != 3 or motion.shape[:2] != (p.n_nodes, 2):
        raise InputError(f"node motion must have shape ({p.n_nodes}, 2, n_params), got "
                         f"{motion.shape}")
    dres = residual_derivatives(system, motion)  # (2, n, P)
    rhs = -np.concatenate([dres[0], dres[1]], axis=1)
    lu = system.lu
    if lu is None:
        raise InputError("the system's LU factors are needed (factorise keeps them)")
    sol = lu_solve(lu, rhs)
    n_params = motion.shape[2]
    return np.stack([sol[:, :n_params], sol[:, n_params:]], axis=1)


def angle_derivative(unit: np.ndarray, alpha_deg: float) -> np.ndarray:
    """d x / d alpha (per radian) of the solution at ``alpha_deg`` from the unit solutions."""
    a = np.radians(alpha_deg)
    return -np.sin(a) * unit[:, 0] + np.cos(a) * unit[:, 1]
