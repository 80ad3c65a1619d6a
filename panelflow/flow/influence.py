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
from concurrent.futures import ThreadPoolExecutor

import numpy as np

_TWO_PI = 2.0 * np.pi
# Point-panel pairs per block: about 50 000 keeps each block's temporaries in the processor cache
# (measured 2x faster than whole-matrix evaluation at 800 panels), and bounds memory for any size.
BLOCK_PAIRS = 50_000
_THREADS = max(1, min(4, os.cpu_count() or 1))


def blockwise(kernel, points, n_cols: int, n_out: int = 1, dtype=float, out=None,
              pairs_per_point: int | None = None):
    """Evaluate ``kernel(points_block)`` in row blocks of about ``BLOCK_PAIRS`` point-panel pairs.

    ``kernel`` returns one array (``n_out == 1``) or a tuple of ``n_out`` arrays of shape
    (len(block), n_cols). numpy releases the GIL inside its array loops, so blocks run
    concurrently in threads; each block's temporaries stay small and cache-resident. With
    ``out`` (one array, ``n_out == 1``) the results fill its first rows and columns instead of a
    new array. ``pairs_per_point`` is the number of panels the kernel pairs each point with
    (default ``n_cols``), which sets the block size.
    """
    points = np.asarray(points)
    n = len(points)
    if out is not None:
        target = out
        out = [target[:n, :n_cols]]
    else:
        out = [np.empty((n, n_cols), dtype) for _ in range(n_out)]
    per_point = n_cols if pairs_per_point is None else pairs_per_point
    rows = max(1, BLOCK_PAIRS // max(per_point, 1))
    blocks = [slice(i, min(n, i + rows)) for i in range(0, n, rows)]

    def job(sl):
        res = kernel(points[sl])
        for o, r in zip(out, res if n_out > 1 else (res,)):
            o[sl] = r

    if len(blocks) <= 1 or _THREADS == 1:
        for sl in blocks:
            job(sl)
    else:
        with ThreadPoolExecutor(_THREADS) as pool:
            list(pool.map(job, blocks))
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


def vortex_psi(points, z1, tangent, length):
    """Stream function at ``points`` per unit nodal vorticity of linear vortex panels.

    Evaluated in real arithmetic (two logarithms and two arctangents per point-panel pair), the
    real parts of the complex integrals in the module docstring.

    Parameters
    ----------
    points : ndarray of complex, shape (n,)
    z1, tangent, length : ndarray, shape (p,)
        Panel start points (complex), unit tangents (complex) and lengths.

    Returns
    -------
    (a, b) : tuple of ndarray, shape (n, p)
        Stream function per unit vorticity at the panel's start node (a) and end node (b).
    """
    dx = points.real[:, None] - z1.real[None, :]
    dy = points.imag[:, None] - z1.imag[None, :]
    tx, ty = tangent.real[None, :], tangent.imag[None, :]
    x = dx * tx + dy * ty
    y = dy * tx - dx * ty
    L = length[None, :]
    xm = x - L
    x2, y2 = x * x, y * y
    l1 = _half_log(x2 + y2)
    l2 = _half_log(xm * xm + y2)
    dl = l1 - l2
    # angle subtended by the panel, arg(zeta) - arg(zeta - L), on the principal branches
    dt = np.arctan2(-y * L, x * xm + y2)
    # Real parts of int gamma log(zeta - xi) for gamma = 1 and gamma = xi / L, from the
    # antiderivatives G(u) = u log u - u and H(u) = u^2/2 log u - u^2/4, after cancellation:
    dg_re = x * dl + L * l2 - y * dt - L
    i1 = (0.5 * (x2 - y2) * dl + 0.5 * L * L * l2 - x * y * dt - 0.5 * x * L - 0.25 * L * L) / L
    # psi = Im(-i/(2 pi) * integral) = -Re(integral)/(2 pi)
    return (i1 - dg_re) / _TWO_PI, -i1 / _TWO_PI


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
