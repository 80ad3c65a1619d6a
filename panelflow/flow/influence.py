"""Influence kernels: stream function and velocity induced by straight panels, in closed form.

Two singularity distributions are used:

* linear-strength vortex panels (surface vorticity varying linearly between the two end nodes),
* constant-strength source panels (the base of a blunt trailing edge).

For a panel from z1 to z2 with length L and unit tangent e, the local coordinate is
zeta = conj(e) (z - z1), so the panel spans [0, L] on the local real axis. With
G(u) = u log u - u and H(u) = u^2/2 log u - u^2/4 the integrals of the complex potential are

    int_0^L log(zeta - xi) dxi    = G(zeta) - G(zeta - L)
    int_0^L xi log(zeta - xi) dxi = zeta [G(zeta) - G(zeta - L)] - [H(zeta) - H(zeta - L)]

(antiderivatives by substitution u = zeta - xi; Katz & Plotkin, Low-Speed Aerodynamics, ch. 10,
give the same integrals in real form). The vortex potential is -i/(2 pi) int gamma log(.) and the
source potential sigma/(2 pi) int log(.). All functions broadcast points against panels and
return arrays of shape (n_points, n_panels).
"""

from __future__ import annotations

import os
from dataclasses import dataclass

import numpy as np

from panelflow import threads

try:  # the compiled kernels (setup.py); the numpy versions below compute the same formulas
    from panelflow.flow import _kernels as _compiled
except ImportError:  # pragma: no cover - depends on the install
    _compiled = None

_TWO_PI = 2.0 * np.pi
# Point-panel pairs per block: about 50 000 keeps each block's temporaries in the processor cache
# (measured 2x faster than whole-matrix evaluation at 800 panels), and bounds memory for any size.
BLOCK_PAIRS = 50_000
# Set to "numpy" to run the numpy kernels even where the compiled ones are built (for checks and
# the benchmark; the two agree to 1e-12, tests/test_kernels.py).
KERNELS_VARIABLE = "PANELFLOW_KERNELS"


def compiled_kernels() -> bool:
    """True when the compiled kernels are built and not switched off by ``PANELFLOW_KERNELS``."""
    return _compiled is not None and os.environ.get(KERNELS_VARIABLE, "").strip() != "numpy"


def _use_compiled(kernel: str | None) -> bool:
    if kernel is None:
        return compiled_kernels()
    if kernel == "compiled":
        if _compiled is None:
            raise RuntimeError("the compiled kernels are not built in this install")
        return True
    if kernel == "numpy":
        return False
    raise ValueError(f"kernel {kernel!r}: use 'compiled', 'numpy' or None")


def _row_blocks(n: int, pairs_per_point: int) -> list[slice]:
    """Row blocks of about ``BLOCK_PAIRS`` pairs; they depend on the sizes only, never on the
    number of threads, so results are the same bits however many threads run them."""
    rows = max(1, BLOCK_PAIRS // max(pairs_per_point, 1))
    return [slice(i, min(n, i + rows)) for i in range(0, n, rows)]


def blockwise(kernel, points, n_cols: int, n_out: int = 1, dtype=float, out=None,
              pairs_per_point: int | None = None):
    """Evaluate ``kernel(points_block)`` in row blocks of about ``BLOCK_PAIRS`` point-panel pairs.

    ``kernel`` returns one array (``n_out == 1``) or a tuple of ``n_out`` arrays of shape
    (len(block), n_cols). The blocks run on panelflow's threads (:func:`panelflow.threads.run_blocks`:
    BLAS on one thread, at most the thread cap); each block's temporaries stay small and
    cache-resident. With ``out`` (one array, ``n_out == 1``) the results fill its first rows and
    columns instead of a new array. ``pairs_per_point`` is the number of panels the kernel pairs
    each point with (default ``n_cols``), which sets the block size.
    """
    points = np.asarray(points)
    n = len(points)
    if out is not None:
        target = out
        out = [target[:n, :n_cols]]
    else:
        out = [np.empty((n, n_cols), dtype) for _ in range(n_out)]
    blocks = _row_blocks(n, n_cols if pairs_per_point is None else pairs_per_point)

    def job(i):
        sl = blocks[i]
        res = kernel(points[sl])
        for o, r in zip(out, res if n_out > 1 else (res,)):
            o[sl] = r

    threads.run_blocks(job, len(blocks))
    return out if n_out > 1 else out[0]


def _xlogx(u: np.ndarray) -> np.ndarray:
    """u log u with its limit 0 at u = 0 (nodes lie at panel ends)."""
    out = np.zeros_like(u)
    nz = u != 0
    out[nz] = u[nz] * np.log(u[nz])
    return out


def _G(u):
    return _xlogx(u) - u


def _local(points: np.ndarray, z1: np.ndarray, tangent: np.ndarray) -> np.ndarray:
    return np.conj(tangent)[None, :] * (points[:, None] - z1[None, :])


def _half_log(r2):
    """ln|u| from |u|^2; u = 0 (a node) gives a large finite value that always meets a factor 0."""
    return 0.5 * np.log(np.maximum(r2, 1e-300))


def vortex_psi(points, z1, tangent, length, kernel: str | None = None):
    """Stream function at ``points`` per unit nodal vorticity of linear vortex panels.

    Two logarithms and one arctangent per point-panel pair: the real parts of the complex
    integrals in the module docstring.

    Parameters
    ----------
    points : ndarray of complex, shape (n,)
    z1, tangent, length : ndarray, shape (p,)
        Panel start points (complex), unit tangents (complex) and lengths.
    kernel : {None, "compiled", "numpy"}
        Which implementation; None takes the compiled one where it is built.

    Returns
    -------
    (a, b) : tuple of ndarray, shape (n, p)
        Stream function per unit vorticity at the panel's start node (a) and end node (b).
    """
    points = np.asarray(points, complex).ravel()
    z1 = np.asarray(z1, complex).ravel()
    tangent = np.asarray(tangent, complex).ravel()
    length = np.ascontiguousarray(length, float).ravel()
    if not _use_compiled(kernel):
        return _vortex_psi_numpy(points, z1, tangent, length)
    n, p = len(points), len(z1)
    a, b = np.empty((n, p)), np.empty((n, p))
    args = (np.ascontiguousarray(z1.real), np.ascontiguousarray(z1.imag),
            np.ascontiguousarray(tangent.real), np.ascontiguousarray(tangent.imag), length)
    px, py = np.ascontiguousarray(points.real), np.ascontiguousarray(points.imag)
    blocks = _row_blocks(n, p)

    def job(i):
        sl = blocks[i]
        _compiled.vortex_psi(px[sl], py[sl], *args, a[sl], b[sl])

    threads.run_blocks(job, len(blocks))
    return a, b


def _vortex_psi_numpy(points, z1, tangent, length):
    dx = points.real[:, None] - z1.real[None, :]
    dy = points.imag[:, None] - z1.imag[None, :]
    tx, ty = tangent.real[None, :], tangent.imag[None, :]
    x = dx * tx + dy * ty
    y = dy * tx - dx * ty
    L = length[None, :]
    xm = x - L
    y2 = y * y
    l1 = _half_log(x * x + y2)
    l2 = _half_log(xm * xm + y2)
    # angle subtended by the panel, arg(zeta) - arg(zeta - L), on the principal branches
    dt = np.arctan2(-y * L, x * xm + y2)
    # Real parts of int gamma log(zeta - xi) for gamma = 1 and gamma = xi / L, from the
    # antiderivatives G(u) = u log u - u and H(u) = u^2/2 log u - u^2/4. Each logarithm is
    # multiplied by a factor that vanishes at its own node (x and x - L), so a point on a node
    # meets no cancellation of the large logarithm there.
    dg_re = x * l1 - xm * l2 - y * dt - L
    i1 = (0.5 * (x * x - y2) * l1 - 0.5 * (xm * xm + 2.0 * L * xm - y2) * l2 - x * y * dt
          - 0.5 * x * L - 0.25 * L * L) / L
    # psi = Im(-i/(2 pi) * integral) = -Re(integral)/(2 pi)
    return (i1 - dg_re) / _TWO_PI, -i1 / _TWO_PI


@dataclass(frozen=True)
class Chains:
    """Panels as chains: runs of consecutive panels, each ending where the next one starts.

    A body's panels form one chain (a closed loop repeats its first node at the end), so the
    logarithm and the angle of the distance to a node are computed once per point and shared
    by the two panels that meet there: one logarithm and one arctangent per point-panel pair.

    Attributes
    ----------
    node_x, node_y : ndarray, shape (p + n_chains,)
        Chain nodes (a chain of ``c`` panels has ``c + 1``).
    tx, ty, length : ndarray, shape (p,)
        Panel unit tangents and lengths, in the panels' own order.
    panel_off, node_off, count : ndarray of int64, shape (n_chains,)
        First panel, first chain node and number of panels of each chain.
    col_start, col_end : ndarray of int64, shape (p,)
        Node index (matrix column) of each panel's start and end.
    chain_start, chain_end : ndarray of intp, shape (p,)
        Chain-node index of each panel's start and end.
    n_nodes : int
        Number of distinct nodes (columns).
    """

    node_x: np.ndarray
    node_y: np.ndarray
    tx: np.ndarray
    ty: np.ndarray
    length: np.ndarray
    panel_off: np.ndarray
    node_off: np.ndarray
    count: np.ndarray
    col_start: np.ndarray
    col_end: np.ndarray
    chain_start: np.ndarray
    chain_end: np.ndarray
    n_nodes: int

    @classmethod
    def of(cls, panels) -> "Chains":
        """The chains of a :class:`~panelflow.geometry.panels.Panels` (any panel order).

        Kept on the panels after the first call (the field asks for them once per block).
        """
        cached = getattr(panels, "_chains", None)
        if cached is not None:
            return cached
        start = np.asarray(panels.start, np.int64)
        end = np.asarray(panels.end, np.int64)
        p = len(start)
        breaks = np.flatnonzero(start[1:] != end[:-1]) + 1
        n_chains = len(breaks) + 1
        panel_off = np.empty(n_chains, np.int64)
        panel_off[0] = 0
        panel_off[1:] = breaks
        count = np.diff(panel_off, append=p)
        if n_chains == 1:  # one body: no repeats needed
            chain_start = np.arange(p)
        else:
            chain_start = np.arange(p) + np.repeat(np.arange(n_chains), count)
        chain_end = chain_start + 1  # one extra node per earlier chain
        node_off = panel_off + np.arange(n_chains)
        idx = np.empty(p + n_chains, np.int64)
        idx[chain_start] = start
        idx[chain_end] = end
        nodes = np.asarray(panels.nodes, float)
        t = np.asarray(panels.tangent)
        out = cls(nodes[idx, 0], nodes[idx, 1], np.ascontiguousarray(t.real),
                  np.ascontiguousarray(t.imag), np.ascontiguousarray(panels.length, float),
                  panel_off, node_off, count, start, end, chain_start, chain_end,
                  int(panels.n_nodes))
        try:  # a cache on the (frozen) panels, not part of their value
            object.__setattr__(panels, "_chains", out)
        except AttributeError:  # pragma: no cover - an object without a __dict__
            pass
        return out

    def arrays(self) -> tuple:
        return (self.node_x, self.node_y, self.tx, self.ty, self.length, self.panel_off,
                self.node_off, self.count)


def _node_values(points: np.ndarray, ch: Chains):
    """ln r and the angle from every chain node to every point, shape (n, p + n_chains)."""
    dx = points.real[:, None] - ch.node_x[None, :]
    dy = points.imag[:, None] - ch.node_y[None, :]
    return _half_log(dx * dx + dy * dy), np.arctan2(dy, dx), dx, dy


def _wrap(d):
    """Into (-pi, pi]: the angle the panel subtends, from its two nodes' angles."""
    d = np.where(d > np.pi, d - _TWO_PI, d)
    return np.where(d <= -np.pi, d + _TWO_PI, d)


def _node_psi_numpy(points: np.ndarray, ch: Chains, out: np.ndarray) -> None:
    lg, th, dx, dy = _node_values(points, ch)
    s, e = ch.chain_start, ch.chain_end
    tx, ty, L = ch.tx[None, :], ch.ty[None, :], ch.length[None, :]
    dxs, dys, dxe, dye = dx[:, s], dy[:, s], dx[:, e], dy[:, e]
    x1, y1 = dxs * tx + dys * ty, dys * tx - dxs * ty
    x2, y2 = dxe * tx + dye * ty, dye * tx - dxe * ty
    l1, l2 = lg[:, s], lg[:, e]
    dt = _wrap(th[:, s] - th[:, e])
    dg = x1 * l1 - x2 * l2 - y1 * dt - L
    i1 = (0.5 * (x1 * x1 - y1 * y1) * l1 - 0.5 * (x2 * x2 + 2.0 * L * x2 - y2 * y2) * l2
          - x1 * y1 * dt - 0.5 * x1 * L - 0.25 * L * L) / L
    # start (and end) nodes are unique within the panel list: fancy-index += is safe
    out[:, ch.col_start] += (i1 - dg) / _TWO_PI
    out[:, ch.col_end] += -i1 / _TWO_PI


def node_psi(points, panels, out=None, kernel: str | None = None) -> np.ndarray:
    """Stream function at ``points`` per unit nodal vorticity, summed onto the nodes.

    The matrix of the streamline conditions: entry (i, k) is the stream function at point i of
    the vortex sheet whose strength is 1 at node k and 0 at every other node (the two panels
    meeting at node k each contribute). Equal to summing :func:`vortex_psi`'s ``a`` and ``b``
    onto each panel's start and end node, at about half the cost: the logarithm and angle of
    each node's distance are shared by its two panels.

    Parameters
    ----------
    points : ndarray of complex, shape (n,)
    panels : Panels
    out : ndarray of float64, shape (>= n, >= n_nodes), C-contiguous, optional
        The result is added to ``out[:n, :n_nodes]`` (pass zeros); default a new array.
    kernel : {None, "compiled", "numpy"}

    Returns
    -------
    ndarray
        ``out`` (or a new array of shape (n, n_nodes)).
    """
    points = np.asarray(points, complex).ravel()
    ch = Chains.of(panels)
    n = len(points)
    if out is None:
        out = np.zeros((n, ch.n_nodes))
    if out.ndim != 2 or out.shape[0] < n or out.shape[1] < ch.n_nodes:
        raise ValueError(f"out has shape {out.shape}; need at least ({n}, {ch.n_nodes})")
    blocks = _row_blocks(n, len(ch.tx))
    if _use_compiled(kernel):
        if not (out.flags.c_contiguous and out.dtype == np.float64):
            raise ValueError("out must be a C-contiguous array of float64")
        px, py = np.ascontiguousarray(points.real), np.ascontiguousarray(points.imag)
        stride = out.shape[1]
        flat = out.reshape(-1)
        arrays = ch.arrays()

        def job(i):
            sl = blocks[i]
            _compiled.psi_nodes(px[sl], py[sl], *arrays, ch.col_start, ch.col_end,
                                flat[sl.start * stride:sl.stop * stride], stride)
    else:
        def job(i):
            sl = blocks[i]
            _node_psi_numpy(points[sl], ch, out[sl])

    threads.run_blocks(job, len(blocks))
    return out


def _node_velocity_numpy(points: np.ndarray, ch: Chains, coef: np.ndarray) -> np.ndarray:
    lg, th, dx, dy = _node_values(points, ch)
    s, e = ch.chain_start, ch.chain_end
    tx, ty, L = ch.tx[None, :], ch.ty[None, :], ch.length[None, :]
    dxs, dys = dx[:, s], dy[:, s]
    x1, y1 = dxs * tx + dys * ty, dys * tx - dxs * ty
    lam_r = lg[:, s] - lg[:, e]
    lam_i = _wrap(th[:, s] - th[:, e])
    j_r = (x1 * lam_r - y1 * lam_i) / L - 1.0
    j_i = (x1 * lam_i + y1 * lam_r) / L
    start = coef[:, 0] + 1j * coef[:, 1]  # (k, p)
    delta = coef[:, 2] + 1j * coef[:, 3]
    return (lam_r + 1j * lam_i) @ start.T + (j_r + 1j * j_i) @ delta.T


def node_velocity(points, panels, start, delta, kernel: str | None = None) -> np.ndarray:
    """Complex velocity ``u - i v`` of linear vortex panels, summed over the panels.

    Parameters
    ----------
    points : ndarray of complex, shape (n,)
        Points off the panels (the velocity jumps across a vortex sheet).
    panels : Panels
    start, delta : ndarray of complex, shape (p, k)
        Per panel, ``conj(t) (-i / 2 pi)`` times the start-node strength and times the
        end-minus-start strength of each of ``k`` solutions.
    kernel : {None, "compiled", "numpy"}

    Returns
    -------
    ndarray of complex, shape (n, k)
    """
    points = np.asarray(points, complex).ravel()
    ch = Chains.of(panels)
    start = np.asarray(start, complex).reshape(len(ch.tx), -1)
    delta = np.asarray(delta, complex).reshape(len(ch.tx), -1)
    k = start.shape[1]
    # per solution four rows: start re, start im, delta re, delta im
    coef = np.ascontiguousarray(np.stack([start.real.T, start.imag.T, delta.real.T,
                                          delta.imag.T], axis=1))
    n = len(points)
    out = np.empty((n, k), complex)
    blocks = _row_blocks(n, len(ch.tx))
    if _use_compiled(kernel):
        px, py = np.ascontiguousarray(points.real), np.ascontiguousarray(points.imag)
        arrays = ch.arrays()
        flat = out.view(float).reshape(-1)

        def job(i):
            sl = blocks[i]
            _compiled.velocity_nodes(px[sl], py[sl], *arrays, coef,
                                     flat[2 * k * sl.start:2 * k * sl.stop])
    else:
        def job(i):
            sl = blocks[i]
            out[sl] = _node_velocity_numpy(points[sl], ch, coef)

    threads.run_blocks(job, len(blocks))
    return out


def nearest_panel(points, z1, tangent, length, kernel: str | None = None):
    """Nearest point on a set of panels: distance, panel index and fraction along it.

    Parameters
    ----------
    points : ndarray of complex, shape (n,)
    z1, tangent, length : ndarray, shape (p,)
    kernel : {None, "compiled", "numpy"}

    Returns
    -------
    d : ndarray, shape (n,)
    j : ndarray of int, shape (n,)
        The first panel at the smallest distance.
    t : ndarray, shape (n,)
        Fraction of panel ``j``'s length from its start, in [0, 1].
    """
    points = np.asarray(points, complex).ravel()
    z1 = np.asarray(z1, complex).ravel()
    tangent = np.asarray(tangent, complex).ravel()
    length = np.ascontiguousarray(length, float).ravel()
    n, p = len(points), len(z1)
    d, j, t = np.empty(n), np.empty(n, np.int64), np.empty(n)
    blocks = _row_blocks(n, p)
    if _use_compiled(kernel):
        args = (np.ascontiguousarray(z1.real), np.ascontiguousarray(z1.imag),
                np.ascontiguousarray(tangent.real), np.ascontiguousarray(tangent.imag), length)
        px, py = np.ascontiguousarray(points.real), np.ascontiguousarray(points.imag)

        def job(i):
            sl = blocks[i]
            _compiled.nearest_panel(px[sl], py[sl], *args, d[sl], j[sl], t[sl])
    else:
        def job(i):
            sl = blocks[i]
            rel = (points[sl, None] - z1[None, :]) * np.conj(tangent)[None, :]
            frac = np.clip(rel.real / length[None, :], 0.0, 1.0)
            dist = np.abs(rel - frac * length[None, :])
            k = np.argmin(dist, axis=1)
            r = np.arange(len(k))
            d[sl], j[sl], t[sl] = dist[r, k], k, frac[r, k]

    threads.run_blocks(job, len(blocks))
    return d, j, t


def vortex_velocity(points, z1, tangent, length):
    """Complex velocity ``u - i v`` at ``points`` per unit nodal vorticity of linear vortex panels.

    Points must not lie on a panel (the velocity jumps across the vortex sheet there).

    Returns
    -------
    (a, b) : tuple of ndarray of complex, shape (n, p)
    """
    zeta = _local(points, z1, tangent)
    L = length[None, :]
    lam = np.log(zeta) - np.log(zeta - L)  # principal logs: the cut lies on the panel only
    j1 = (zeta * lam - L) / L
    rot = np.conj(tangent)[None, :] * (-1j / _TWO_PI)
    return rot * (lam - j1), rot * j1


def source_psi(points, z1, tangent, length):
    """Stream function at ``points`` per unit strength of constant source panels.

    The stream function of a source is many-valued; its cut is placed along the panel's outward
    normal (to the right of the panel direction), i.e. downstream of a trailing-edge base, so that
    it never crosses the body surface.
    """
    zeta = _local(points, z1, tangent)
    L = length[None, :]
    # log with its cut along -i: log(-i w) + i pi/2, integrated by substitution u = -i (zeta - xi)
    integral = -1j * (_G(-1j * (zeta - L)) - _G(-1j * zeta)) + 0.5j * np.pi * L
    return integral.imag / _TWO_PI


def source_velocity(points, z1, tangent, length):
    """Complex velocity ``u - i v`` at ``points`` per unit strength of constant source panels."""
    zeta = _local(points, z1, tangent)
    L = length[None, :]
    lam = np.log(zeta) - np.log(zeta - L)
    return np.conj(tangent)[None, :] * lam / _TWO_PI
