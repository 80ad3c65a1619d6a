"""Panel system: assembly, LU factorisation and unit solutions.

Formulation (a linear-vorticity, stream-function panel method):

* every body surface carries a vortex sheet whose strength varies linearly between nodes;
* the body contour is a streamline, psi = Psi_k (an unknown constant per body), imposed at the
  nodes; with the flow inside the body then at rest, the surface speed just outside
  equals the local sheet strength, so Cp = 1 - gamma^2 directly at the nodes;
* a body with a trailing edge gets a Kutta condition (equal speeds, hence equal pressures, on the
  two sides of the trailing edge: gamma_first + gamma_last = 0); there the two trailing-edge
  nodes share one streamline condition and the mean of the two trailing-edge panel midpoints
  supplies the other;
* a body without a trailing edge carries no net circulation (Kelvin);
* a blunt trailing edge's base is a constant source panel whose strength is the trailing-edge speed
  times the cosine between the base normal and the mean trailing-edge direction: the flux of a
  dead-water wake as thick as the base. The outer flow leaves both corners without passing through
  the base, and the base pressure equals the corner pressure.

The matrix depends only on the geometry; it is LU-factorised once. The freestream enters the
right-hand side linearly, so two unit solutions (freestream along x and along y) give the strengths
at any angle of attack by superposition.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg

from panelflow import threads
from panelflow.flow import influence
from panelflow.errors import SolveError
from panelflow.geometry.outline import SMOOTH
from panelflow.geometry.panels import Panels


@dataclass(frozen=True)
class System:
    """The factorised panel system of one geometry.

    Attributes
    ----------
    panels : Panels
    unit : ndarray, shape (n_nodes + n_bodies, 2)
        Nodal vorticities followed by body stream-function constants for a unit freestream along
        x (column 0) and along y (column 1).
    base_factor : ndarray, shape (n_base, n_nodes)
        Base source strength of each blunt body per unit nodal vorticity.
    image : object or None
        The mirror images of a plane boundary (:class:`panelflow.flow.images.Image`) when the
        system was solved with one; the field then includes their velocity.
    condition : float
        Smallest over largest LU pivot magnitude (replaced by the 1-norm reciprocal condition
        estimate when that ratio is below 1e-10), for diagnostics.
    lu : tuple or None
        The LU factors and pivots of the matrix (``scipy.linalg.lu_factor`` output), kept so that
        further right-hand sides (the boundary layer's transpiration sources) are solved without
        factorising again.
    """

    panels: Panels
    unit: np.ndarray = field(repr=False)
    base_factor: np.ndarray = field(repr=False)
    condition: float
    image: object = field(default=None, repr=False)
    lu: tuple | None = field(default=None, repr=False, compare=False)

    def gamma(self, alpha_deg) -> np.ndarray:
        """Nodal vorticity (= tangential surface speed for unit freestream), shape (n_alpha, n_nodes)."""
        a = np.radians(np.atleast_1d(np.asarray(alpha_deg, float)))
        m = self.panels.n_nodes
        return np.cos(a)[:, None] * self.unit[None, :m, 0] + np.sin(a)[:, None] * self.unit[None, :m, 1]

    def base_sigma(self, gamma: np.ndarray) -> np.ndarray:
        """Base source strengths for the given nodal vorticities, shape (n_alpha, n_base)."""
        return gamma @ self.base_factor.T


def _base_factor(panels: Panels) -> np.ndarray:
    """Rows mapping nodal vorticity to each base panel's source strength."""
    bodies = panels.base_body
    out = np.zeros((len(bodies), panels.n_nodes))
    zn = panels.nodes[:, 0] + 1j * panels.nodes[:, 1]
    for row, k in enumerate(bodies):
        first, last = int(panels.node_start[k]), int(panels.node_stop[k]) - 1
        # mean downstream direction at the trailing edge, from the two surfaces' end panels
        d_up = zn[first] - zn[first + 1]
        d_lo = zn[last] - zn[last - 1]
        d = d_up / abs(d_up) + d_lo / abs(d_lo)
        d /= abs(d)
        base_t = (zn[first] - zn[last]) / abs(zn[first] - zn[last])
        n_out = -1j * base_t  # right of the base direction = out of the body
        cos = (d.real * n_out.real + d.imag * n_out.imag)
        # trailing-edge speed = (gamma_last - gamma_first)/2, both sides flowing downstream
        out[row, last] = 0.5 * cos
        out[row, first] = -0.5 * cos
    return out


def _closure_row(panels, first, last):
    """Trailing-edge closure: the row of the extra condition on one body's nodal vorticity.

    The two trailing-edge nodes carry separate vorticities; the Kutta condition ties their
    magnitudes and this condition fixes their level from the neighbouring surface speeds.
    """
    zn = panels.nodes[first:last + 1, 0] + 1j * panels.nodes[first:last + 1, 1]
    row = np.zeros(last + 1 - first)
    # Surface speed is -gamma on the upper side and +gamma on the lower side (both flow towards
    # the edge). Each side's speed extrapolated linearly from its two nearest nodes to the edge;
    # the trailing-edge speed (gamma_last - gamma_first)/2 is set to their mean.
    ru = abs(zn[1] - zn[0]) / abs(zn[2] - zn[1])
    rl = abs(zn[-2] - zn[-1]) / abs(zn[-3] - zn[-2])
    row[[0, -1]] = -0.5, 0.5
    row[[1, 2]] += 0.5 * (1.0 + ru), -0.5 * ru
    row[[-2, -3]] += -0.5 * (1.0 + rl), 0.5 * rl
    return row


def assemble(panels: Panels) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Build the dense matrix and the two unit right-hand sides.

    Returns
    -------
    matrix : ndarray, shape (n, n)
    rhs : ndarray, shape (n, 2)
    base_factor : ndarray
    """
    m, k_bodies = panels.n_nodes, panels.n_bodies
    n = m + k_bodies
    # Collocation: every node of a smooth body; for a body with a trailing edge the nodes between
    # the two trailing-edge points and the mean of those two (they coincide on a sharp edge); the
    # Kutta and closure conditions complete the rows. Nodes rather than panel midpoints: midpoint
    # collocation leaves an odd-even (saw-tooth) vorticity mode undetermined.
    zn = panels.nodes[:, 0] + 1j * panels.nodes[:, 1]
    pts, pairs, owner = [], [], []
    for k in range(k_bodies):
        first, last = int(panels.node_start[k]), int(panels.node_stop[k]) - 1
        if panels.kinds[k] == SMOOTH:
            pts.append(zn[first:last + 1])
            owner.append(np.full(last + 1 - first, k))
            continue
        pts.append(zn[first + 1:last])
        owner.append(np.full(last - first - 1, k))
        pairs.append((k, zn[first], zn[last]))
    n_single = sum(len(p) for p in pts)
    n_pair = len(pairs)
    if pairs:
        pts.append(np.array([p[1] for p in pairs]))
        pts.append(np.array([p[2] for p in pairs]))
        owner.append(np.array([p[0] for p in pairs]))
    pts = np.concatenate(pts)
    owner = np.concatenate(owner)
    n_psi = n_single + n_pair  # rows of streamline conditions; the rest follow them

    # The point rows are written straight into the matrix (len(pts) <= n rows); the second
    # point of each pair is averaged into the first, and its row then reused.
    matrix = np.zeros((n, n))
    influence.node_psi(pts, panels, out=matrix)
    base_factor = _base_factor(panels)
    if len(base_factor):
        bz1, bz2 = panels.base_z1, panels.base_z2
        bl = np.abs(bz2 - bz1)
        matrix[:len(pts), :m] += influence.source_psi(pts, bz1, (bz2 - bz1) / bl, bl) @ base_factor
    free = np.stack([-pts.imag, pts.real], axis=1)  # -psi of unit streams along x and y
    rhs = np.zeros((n, 2))
    rhs[:n_psi] = free[:n_psi]
    if n_pair:
        second = slice(n_psi, n_psi + n_pair)
        matrix[n_single:n_psi] = 0.5 * (matrix[n_single:n_psi] + matrix[second])
        rhs[n_single:n_psi] = 0.5 * (free[n_single:n_psi] + free[second])
        matrix[second] = 0.0
    matrix[np.arange(n_psi), m + owner] = -1.0
    row = n_psi
    scale = float(np.mean(panels.length))
    for k in range(k_bodies):
        first, last = int(panels.node_start[k]), int(panels.node_stop[k]) - 1
        if panels.kinds[k] == SMOOTH:
            # zero net circulation: trapezoidal integral of gamma around the loop
            sl = panels.body_nodes(k)
            on = panels.body == k
            w = np.zeros(m)
            np.add.at(w, panels.start[on], 0.5 * panels.length[on])
            np.add.at(w, panels.end[on], 0.5 * panels.length[on])
            matrix[row, sl] = w[sl]
        else:
            matrix[row, first] = scale
            matrix[row, last] = scale
            row += 1
            matrix[row, first:last + 1] = _closure_row(panels, first, last) * scale
        row += 1
    if row != n:
        raise SolveError(f"internal: {row} equations for {n} unknowns")
    return matrix, rhs, base_factor


# From this size on (None: never), the blocked factorisation below, whose trailing updates run
# on panelflow's threads; otherwise LAPACK on one thread. Chosen by size only, so the bits of a
# result never depend on the number of threads (LAPACK's own threading changes them). Off by
# default because it did not pay on the 2-core development machine (scripts/bench.py, 2502
# unknowns: 670-714 ms on both cores against 338-409 ms for LAPACK on one thread): its updates
# pass over the trailing matrix once more than LAPACK's, which a second core did not make up.
LU_BLOCKED_FROM: int | None = None
# Column width of the blocked factorisation's panels and of its update chunks.
LU_PANEL = 128
LU_CHUNK = 256


def _lu_blocked(a: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Right-looking blocked LU with partial pivoting (the algorithm of LAPACK's dgetrf).

    Each panel of ``LU_PANEL`` columns is factorised by LAPACK on one thread; the update of the
    trailing matrix is split into fixed chunks of ``LU_CHUNK`` columns, each one BLAS call on one
    thread, run on panelflow's threads. The partition depends on the size only, so the result is
    bit-identical whatever the number of threads.

    Returns ``(lu, piv)`` in the form of :func:`scipy.linalg.lu_factor`.
    """
    from scipy.linalg import blas, lapack

    a = np.array(a, order="F")
    n = a.shape[0]
    piv = np.empty(n, dtype=np.int32)
    for k in range(0, n, LU_PANEL):
        b = min(LU_PANEL, n - k)
        panel, ipiv, info = lapack.dgetrf(a[k:, k:k + b])
        if info < 0:  # pragma: no cover - an argument error would be a bug here
            raise SolveError(f"internal: dgetrf argument {-info}")
        a[k:, k:k + b] = panel
        piv[k:k + b] = ipiv[:b] + k
        # the panel's row interchanges, applied to the columns left and right of it (column
        # blocks of a Fortran-ordered array are contiguous: LAPACK swaps them in place)
        for cols in (slice(0, k), slice(k + b, n)):
            block = a[:, cols]
            if block.shape[1]:
                out = lapack.dlaswp(block, piv, overwrite_a=1, k1=k, k2=k + b - 1)
                if not np.shares_memory(out, a):  # pragma: no cover - f2py copied after all
                    a[:, cols] = out
        if k + b >= n:
            break
        a[k:k + b, k + b:] = blas.dtrsm(1.0, a[k:k + b, k:k + b], a[k:k + b, k + b:], lower=1,
                                        diag=1)
        lower = np.asfortranarray(a[k + b:, k:k + b])
        starts = list(range(k + b, n, LU_CHUNK))

        def update(i, lower=lower, starts=starts, top=k + b):
            c0 = starts[i]
            c1 = min(n, c0 + LU_CHUNK)
            # the product in Fortran order, like the block it updates: one streaming pass
            prod = np.empty((n - top, c1 - c0), order="F")
            np.matmul(lower, a[top - b:top, c0:c1], out=prod)
            a[top:, c0:c1] -= prod

        threads.run_blocks(update, len(starts))
    return a, piv


def lu_factor(matrix: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """LU factorisation with partial pivoting, as :func:`scipy.linalg.lu_factor` gives it.

    LAPACK on one thread; from ``LU_BLOCKED_FROM`` unknowns (when set) the blocked
    factorisation, its trailing updates on all of panelflow's threads. Either way the result
    does not depend on the thread count.

    Non-finite entries are not checked here (a full pass over the matrix): they propagate into
    the pivots, which :func:`factorise` screens.
    """
    with threads.one_blas_thread():
        if LU_BLOCKED_FROM is None or len(matrix) < LU_BLOCKED_FROM:
            # LAPACK directly: scipy.linalg.lu_factor's checks and lookups cost a tenth of a
            # 200-panel factorisation
            lu, piv, info = scipy.linalg.lapack.dgetrf(matrix, overwrite_a=True)
            if info < 0:  # pragma: no cover - an argument error would be a bug here
                raise SolveError(f"internal: dgetrf argument {-info}")
            return lu, piv
        return _lu_blocked(matrix)


def lu_solve(lu: tuple, rhs: np.ndarray) -> np.ndarray:
    """Solve with a factorisation from :func:`lu_factor` (LAPACK on one thread)."""
    with threads.one_blas_thread():
        x, info = scipy.linalg.lapack.dgetrs(lu[0], lu[1], rhs)
    if info < 0:  # pragma: no cover - an argument error would be a bug here
        raise SolveError(f"internal: dgetrs argument {-info}")
    return x


@threads.blas_single
def factorise(panels: Panels) -> System:
    """Assemble, LU-factorise once and compute the two unit solutions.

    Raises
    ------
    SolveError
        When the matrix is singular to working precision (for example coincident bodies).
    """
    matrix, rhs, base_factor = assemble(panels)
    try:
        lu = lu_factor(matrix)
    except (ValueError, np.linalg.LinAlgError) as exc:
        raise SolveError(f"panel system cannot be factorised: {exc}") from None
    # Cheap screen on the pivots; the condition estimate (a few percent of the factorisation
    # time, and the matrix's norm: it is assembled again, the factorisation overwrote it) is
    # computed only when the pivots look suspicious.
    pivots = np.abs(np.diag(lu[0]))
    if not np.all(np.isfinite(pivots)):
        raise SolveError("panel system cannot be factorised: it has non-finite entries "
                         "(check the geometry for coincident points)")
    ratio = float(pivots.min() / pivots.max()) if pivots.max() > 0 else 0.0
    rcond = ratio
    if ratio < 1e-10:
        anorm = np.linalg.norm(assemble(panels)[0], 1)
        rcond = float(scipy.linalg.lapack.dgecon(lu[0], anorm, norm="1")[0])
    if not np.isfinite(rcond) or rcond < 1e-14:
        raise SolveError(
            f"panel system is singular (reciprocal condition {rcond:.1e}): check for bodies that "
            "touch, duplicated points or panels far shorter than their neighbours")
    unit = lu_solve(lu, rhs)
    if not np.all(np.isfinite(unit)):
        raise SolveError("panel system gave non-finite strengths: check the geometry")
    return System(panels, unit, base_factor, rcond, lu=lu)
