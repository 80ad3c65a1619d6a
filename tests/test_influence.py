"""Closed-form panel kernels against direct numerical quadrature of their defining integrals.

Definitions (Katz & Plotkin, Low-Speed Aerodynamics, ch. 10): a vortex sheet of strength
gamma(xi) on a straight panel induces the stream function psi = -1/(2 pi) int gamma ln|z - xi| dxi
and the complex velocity u - i v = -i/(2 pi) int gamma / (z - xi) dxi; a source sheet of
strength sigma induces u - i v = 1/(2 pi) int sigma / (z - xi) dxi.
"""

import numpy as np
import pytest
from scipy import integrate

from panelflow.flow import influence

RNG = np.random.default_rng(7)
Z1 = np.array([0.3 - 0.2j, -1.0 + 0.5j, 2.0 + 1.0j])
Z2 = np.array([1.1 + 0.4j, -1.3 + 0.45j, 2.0 + 1.5j])
LENGTH = np.abs(Z2 - Z1)
TANGENT = (Z2 - Z1) / LENGTH
# points off the panels, at panel ends (nodes) and on a panel (midpoint): psi is continuous there
POINTS = np.concatenate([RNG.normal(size=12) * 1.5 + 1j * RNG.normal(size=12), Z1, Z2,
                         0.5 * (Z1 + Z2)])


def _on_panel(z, j):
    return abs(abs(z - Z1[j]) + abs(z - Z2[j]) - LENGTH[j]) < 1e-12


def _quad(f, j, z):
    """Integral over panel j of f(xi_local, point on panel); break at the point's projection."""
    xi_z = ((z - Z1[j]) * np.conj(TANGENT[j])).real
    pts = [xi_z] if 0.0 < xi_z < LENGTH[j] else None
    val, _ = integrate.quad(lambda s: f(s, Z1[j] + s * TANGENT[j]), 0.0, LENGTH[j],
                            points=pts, limit=200, epsabs=1e-13, epsrel=1e-12)
    return val


@pytest.mark.parametrize("j", range(3))
def test_vortex_psi_matches_quadrature(j):
    a, b = influence.vortex_psi(POINTS, Z1, TANGENT, LENGTH)
    L = LENGTH[j]
    for i, z in enumerate(POINTS):
        ka = _quad(lambda s, w: -(1 - s / L) * np.log(abs(z - w)) / (2 * np.pi), j, z)
        kb = _quad(lambda s, w: -(s / L) * np.log(abs(z - w)) / (2 * np.pi), j, z)
        # quadrature of a log singularity with a break point: 1e-10 absolute is safe
        assert a[i, j] == pytest.approx(ka, abs=1e-10)
        assert b[i, j] == pytest.approx(kb, abs=1e-10)


@pytest.mark.parametrize("j", range(3))
def test_vortex_velocity_matches_quadrature(j):
    off = np.array([z for z in POINTS if not any(_on_panel(z, k) for k in range(3))
                    and np.min(np.abs(z - np.r_[Z1, Z2])) > 1e-9])
    a, b = influence.vortex_velocity(off, Z1, TANGENT, LENGTH)
    L = LENGTH[j]
    for i, z in enumerate(off):
        for coef, shape in ((a, lambda s: 1 - s / L), (b, lambda s: s / L)):
            re = _quad(lambda s, w: (-1j * shape(s) / (2 * np.pi * (z - w))).real, j, z)
            im = _quad(lambda s, w: (-1j * shape(s) / (2 * np.pi * (z - w))).imag, j, z)
            # smooth integrands away from the panel: 1e-10
            assert coef[i, j] == pytest.approx(re + 1j * im, abs=1e-10)


def test_velocity_is_the_curl_of_psi():
    """u = d psi / dy, v = -d psi / dx (definition of the stream function), by central differences."""
    z = np.array([0.2 + 0.9j, -0.7 - 0.3j, 1.8 + 0.2j])
    h = 1e-5
    a, b = influence.vortex_velocity(z, Z1, TANGENT, LENGTH)
    pa = [influence.vortex_psi(z + d, Z1, TANGENT, LENGTH) for d in (h, -h, 1j * h, -1j * h)]
    for k, coef in enumerate((a, b)):
        u = (pa[2][k] - pa[3][k]) / (2 * h)
        v = -(pa[0][k] - pa[1][k]) / (2 * h)
        # central difference error ~ h^2 * psi''' ~ 1e-10, rounding ~ 1e-16 / h ~ 1e-11
        np.testing.assert_allclose(coef.real, u, atol=1e-8)
        np.testing.assert_allclose(-coef.imag, v, atol=1e-8)


def test_source_kernels():
    z = np.array([0.2 + 0.9j, -0.7 - 0.3j, 1.8 + 0.2j])
    w = influence.source_velocity(z, Z1, TANGENT, LENGTH)
    for j in range(3):
        for i, zi in enumerate(z):
            re = _quad(lambda s, q: (1 / (2 * np.pi * (zi - q))).real, j, zi)
            im = _quad(lambda s, q: (1 / (2 * np.pi * (zi - q))).imag, j, zi)
            assert w[i, j] == pytest.approx(re + 1j * im, abs=1e-10)  # smooth integrand
    # stream function of the source: its curl is the velocity (cut lies to the right of the
    # panel, away from these points)
    h = 1e-5
    ps = [influence.source_psi(z + d, Z1, TANGENT, LENGTH) for d in (h, -h, 1j * h, -1j * h)]
    u = (ps[2] - ps[3]) / (2 * h)
    v = -(ps[0] - ps[1]) / (2 * h)
    np.testing.assert_allclose(w.real, u, atol=1e-8)  # central differences, as above
    np.testing.assert_allclose(-w.imag, v, atol=1e-8)


def test_blockwise_equals_direct():
    pts = RNG.normal(size=500) + 1j * RNG.normal(size=500)
    direct = influence.vortex_psi(pts, Z1, TANGENT, LENGTH)
    old = influence.BLOCK_PAIRS
    try:
        influence.BLOCK_PAIRS = 7  # force many small blocks, run in threads
        blocked = influence.blockwise(
            lambda p: influence.vortex_psi(p, Z1, TANGENT, LENGTH), pts, 3, n_out=2)
    finally:
        influence.BLOCK_PAIRS = old
    for d, b in zip(direct, blocked):
        np.testing.assert_array_equal(d, b)  # same arithmetic, block by block: bit-identical
