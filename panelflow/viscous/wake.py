"""The wake's path: the dividing streamline leaving the trailing edge, traced in the panel flow.

The wake panels follow the streamline that leaves the trailing edge along the bisector of the
two surfaces, traced by the midpoint rule (second order) in the inviscid flow of the body at the
given angle. Steps start at the size of the trailing-edge panels (or of the last boundary-layer
stations, if larger) and grow geometrically, so that the wake's first panels match the body's
and the wake reaches ``length`` chords downstream.
"""

from __future__ import annotations

import numpy as np

from panelflow.errors import SolveError
from panelflow.flow import influence
from panelflow.flow.solver import System
from panelflow.geometry.outline import SMOOTH

WAKE_LENGTH = 1.25  # chords: "at least one chord" with a margin for the Squire-Young end state


def body_velocity(system: System, gamma: np.ndarray, points: np.ndarray,
                  alpha_deg: float) -> np.ndarray:
    """Complex velocity ``u - i v`` of freestream, surface vorticity and base sources at points.

    ``gamma`` is the nodal vorticity (one angle); points must lie off the surface.
    """
    p = system.panels
    a, b = influence.vortex_velocity(points, p.z1, p.tangent, p.length)
    w = a @ gamma[p.start] + b @ gamma[p.end]
    if len(p.base_body):
        bz1, bz2 = p.base_z1, p.base_z2
        bl = np.abs(bz2 - bz1)
        sigma = system.base_sigma(gamma[None, :])[0]
        w = w + influence.source_velocity(points, bz1, (bz2 - bz1) / bl, bl) @ sigma
    return w + np.exp(-1j * np.radians(alpha_deg))


def trailing_edge(system: System, body: int = 0):
    """Trailing-edge point (mid-base for a blunt edge), downstream bisector and edge size.

    Returns
    -------
    point : complex
    direction : complex (unit)
    panel : float
        Mean length of the two trailing-edge panels.
    """
    p = system.panels
    if p.kinds[body] == SMOOTH:
        raise SolveError(f"body {p.names[body]!r} has no trailing edge to start a wake from")
    first, last = int(p.node_start[body]), int(p.node_stop[body]) - 1
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    d_up = zn[first] - zn[first + 1]
    d_lo = zn[last] - zn[last - 1]
    d = d_up / abs(d_up) + d_lo / abs(d_lo)
    return (0.5 * (zn[first] + zn[last]), d / abs(d),
            0.5 * (abs(d_up) + abs(d_lo)))


def wake_nodes(system: System, gamma: np.ndarray, alpha_deg: float, chord: float,
               n_nodes: int, length: float = WAKE_LENGTH, body: int = 0,
               first_step: float = 0.0) -> np.ndarray:
    """Nodes of the wake panels (complex), from the trailing edge downstream.

    Parameters
    ----------
    system : System
    gamma : ndarray
        Nodal vorticity at this angle.
    alpha_deg : float
    chord : float
        Reference chord; the wake is ``length`` chords long.
    n_nodes : int
        Number of wake nodes including the trailing-edge point.
    first_step : float
        Smallest first step (default: the trailing-edge panels' mean length).
    """
    z0, d0, h0 = trailing_edge(system, body)
    h0 = max(h0, first_step)
    total = length * chord
    n = n_nodes - 1
    # geometric growth ratio r with h0 (1 + r + ... + r^(n-1)) = total, by bisection
    lo, hi = 1.0, 2.0
    for _ in range(60):
        r = 0.5 * (lo + hi)
        if h0 * (r**n - 1.0) / (r - 1.0) < total:
            lo = r
        else:
            hi = r
    steps = h0 * r ** np.arange(n)
    steps *= total / steps.sum()
    z = np.empty(n_nodes, complex)
    z[0] = z0
    direction = d0
    for k in range(n):
        h = steps[k]
        # midpoint rule; at the edge itself the bisector gives the first half step
        mid = z[k] + 0.5 * h * direction
        w = body_velocity(system, gamma, np.array([mid]), alpha_deg)[0]
        v = np.conj(w)
        if abs(v) < 1e-9:
            raise SolveError("the wake streamline stagnates behind the trailing edge")
        direction = v / abs(v)
        z[k + 1] = z[k] + h * direction
    return z
