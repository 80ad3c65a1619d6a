"""Displacement effect: how the boundary layer's mass defect changes the surface and wake speeds.

The boundary layer and wake displace the outer flow by their mass defect m = Ue delta*. Its
effect on the inviscid flow is that of a source sheet of strength sigma = dm/ds on the body and
along the wake (the equivalent-source or transpiration model of M. J. Lighthill, "On
displacement thickness", J. Fluid Mech. 4, 1958). Here the sources are constant on each panel;
with the signed mass defect mt = gamma delta* at the nodes (gamma the nodal vorticity, negative on
the upper side) a body panel's strength is (mt_end - mt_start)/length for either side and for
the panel holding the stagnation point, so the map from nodal mass defects to source strengths
is fixed.

The body stays a streamline of the flow inside it (psi constant, the flow inside at rest), so the
sources enter the panel system as extra right-hand sides: their stream function at the
collocation points, solved with the LU factors kept on the System. The surface speed just outside
is still the nodal vorticity, and the wake's edge speed is the tangential velocity at the wake
panel midpoints, averaged to the nodes. All of it is linear: ``speeds = inviscid + D @ mt`` with
``D`` computed once per geometry and wake path.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg

from panelflow.errors import SolveError
from panelflow.flow import influence
from panelflow.flow.solver import System, assemble


def factors(system: System):
    """The LU factors of the system's matrix (kept on the System, or factorised here once)."""
    lu = getattr(system, "lu", None)
    if lu is None:
        matrix, _, _ = assemble(system.panels)
        lu = scipy.linalg.lu_factor(matrix, check_finite=False)
    return lu


def _collocation_rhs(system: System, psi_nodes: np.ndarray) -> np.ndarray:
    """Right-hand sides of the panel matrix for stream-function values given at every node.

    Reproduces the row layout of :func:`panelflow.flow.solver.assemble` for one body with a
    trailing edge: the inner nodes, then the mean of the two trailing-edge nodes, then the Kutta
    and closure rows (zero).
    """
    p = system.panels
    m = p.n_nodes
    rhs = np.zeros((m + 1, psi_nodes.shape[1]))
    rhs[:m - 2] = -psi_nodes[1:m - 1]
    rhs[m - 2] = -0.5 * (psi_nodes[0] + psi_nodes[m - 1])
    return rhs


@dataclass(frozen=True)
class Influence:
    """Linear map from nodal mass defects to surface and wake speeds.

    Attributes
    ----------
    wake : ndarray of complex, shape (n_wake,)
        Wake nodes, the first at the trailing edge.
    matrix : ndarray, shape (m + n_wake, m + n_wake)
        Change of [nodal vorticity (m), wake edge speed (n_wake)] per unit signed mass defect
        [gamma delta* at the body nodes, Ue delta* at the wake nodes].
    wake_inviscid : ndarray, shape (n_wake,)
        Inviscid wake edge speed at the nodes.
    """

    wake: np.ndarray
    matrix: np.ndarray
    wake_inviscid: np.ndarray


def source_map(system: System, wake: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray,
                                                            np.ndarray]:
    """Source panels (body surface panels, then wake panels) and the nodal-defect-to-strength map.

    Returns
    -------
    z1, tangent, length : ndarrays over source panels
    s_map : ndarray, shape (n_src, m + n_wake)
    """
    p = system.panels
    m = p.n_nodes
    nw = len(wake)
    n_src = p.n_panels + nw - 1
    s_map = np.zeros((n_src, m + nw))
    rows = np.arange(p.n_panels)
    s_map[rows, p.end] = 1.0 / p.length
    s_map[rows, p.start] = -1.0 / p.length
    wl = np.abs(np.diff(wake))
    rows_w = p.n_panels + np.arange(nw - 1)
    s_map[rows_w, m + np.arange(1, nw)] = 1.0 / wl
    s_map[rows_w, m + np.arange(nw - 1)] = -1.0 / wl
    z1 = np.concatenate([p.z1, wake[:-1]])
    tangent = np.concatenate([p.tangent, np.diff(wake) / wl])
    length = np.concatenate([p.length, wl])
    return z1, tangent, length, s_map


def build(system: System, gamma_inviscid: np.ndarray, alpha_deg: float,
          wake: np.ndarray) -> Influence:
    """Assemble the mass-defect influence for one body with a trailing edge and its wake path."""
    from panelflow.viscous.wake import body_velocity

    p = system.panels
    if p.n_bodies != 1 or getattr(system, "image", None) is not None:
        raise SolveError("the viscous analysis handles one body in free flow")
    m = p.n_nodes
    nw = len(wake)
    z1, tangent, length, s_map = source_map(system, wake)
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    # stream function of unit sources at the nodes; cuts run out of the body (see influence)
    psi = influence.source_psi(zn, z1, tangent, length)
    strength = scipy.linalg.lu_solve(factors(system), _collocation_rhs(system, psi),
                                     check_finite=False)[:m]  # d gamma / d sigma
    d_gamma = strength @ s_map  # (m, m + nw)

    # wake speeds at panel midpoints: freestream + vorticity (+ base) + sources
    mids = 0.5 * (wake[1:] + wake[:-1])
    t_w = np.diff(wake) / np.abs(np.diff(wake))
    a, b = influence.vortex_velocity(mids, p.z1, p.tangent, p.length)
    v_gamma = np.zeros((len(mids), m), complex)
    np.add.at(v_gamma.T, p.start, a.T)
    np.add.at(v_gamma.T, p.end, b.T)
    if len(p.base_body):
        bz1, bz2 = p.base_z1, p.base_z2
        bl = np.abs(bz2 - bz1)
        v_gamma += influence.source_velocity(mids, bz1, (bz2 - bz1) / bl, bl) @ system.base_factor
    # a constant source panel's own tangential velocity vanishes at its midpoint (principal
    # value); the log-singular point lies at its ends
    v_src = influence.source_velocity(mids, z1, tangent, length)
    tang = (lambda w: (w * t_w[:, None]).real)
    mid_map = tang(v_gamma) @ d_gamma + tang(v_src) @ s_map
    mid_inv = (body_velocity(system, gamma_inviscid, mids, alpha_deg) * t_w).real

    # midpoints to nodes: the edge node takes the trailing-edge speed of the surface,
    # inner nodes the mean of their panels, the last node a linear extrapolation
    first, last = 0, m - 1
    to_nodes = np.zeros((nw, nw - 1))
    idx = np.arange(1, nw - 1)
    to_nodes[idx, idx - 1] = 0.5
    to_nodes[idx, idx] = 0.5
    to_nodes[nw - 1, nw - 2], to_nodes[nw - 1, nw - 3] = 1.5, -0.5
    wake_map = to_nodes @ mid_map
    wake_map[0] = 0.5 * (d_gamma[last] - d_gamma[first])
    wake_inv = to_nodes @ mid_inv
    wake_inv[0] = 0.5 * (gamma_inviscid[last] - gamma_inviscid[first])
    if not (np.all(np.isfinite(d_gamma)) and np.all(np.isfinite(wake_map))):
        raise SolveError("the displacement influence is not finite: check the geometry")
    return Influence(wake, np.vstack([d_gamma, wake_map]), wake_inv)
