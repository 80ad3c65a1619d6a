"""The compiled influence kernels against the numpy ones, and their numerical functions against
numpy's logarithm and arctangent (general-purpose reference implementations from the package
index).

Tolerances: the closed-form panel integrals add terms as large as
``scale = (L + r^2 / L)(1 + |ln r|)`` (r the distance from the panel, L its length) that cancel
down to the result, so two correct implementations differ by rounding of that size. The checks
allow 1e-12 of it; measured differences are below 5e-17 of it. Where no cancellation happens
(points within a few panel lengths of unit panels) the same 1e-12 is also absolute.
"""

from __future__ import annotations

import numpy as np
import pytest

from panelflow.flow import influence
from panelflow.geometry.panelling import respline
from panelflow.geometry.panels import Panels
from panelflow.geometry.sections import circle, naca4

needs_compiled = pytest.mark.skipif(
    influence._compiled is None,
    reason="compiled kernels not built (install with pip install -e '.[test]')")

RNG = np.random.default_rng(11)


# ------------------------------------------------------------------------------- functions
@needs_compiled
@pytest.mark.parametrize("low, high", [(1e-300, 1e-250), (1e-20, 1e-5), (0.5, 2.0),
                                       (1.0 - 1e-8, 1.0 + 1e-8), (1.0, 1e6), (1e100, 1e300)])
def test_log_against_numpy(low, high):
    x = np.exp(RNG.uniform(np.log(low), np.log(high), 20_000))
    x = np.r_[x, low, high, 1.0, 2.0, 0.5, np.sqrt(2.0), np.nextafter(np.sqrt(2.0), 3.0)]
    out = np.empty_like(x)
    influence._compiled.log(x, out)
    ref = np.log(x)
    # 4 units in the last place of the result (series truncated below 1e-17, a few roundings)
    assert np.all(np.abs(out - ref) <= 4 * np.spacing(np.abs(ref)) + 1e-300)


@needs_compiled
def test_log_clamps_zero_to_a_finite_value():
    out = np.empty(2)
    influence._compiled.log(np.array([0.0, 1e-320]), out)
    # a point on a node: ln of the clamp 1e-300, finite, always multiplied by an exact zero
    np.testing.assert_allclose(out, np.log(1e-300), rtol=1e-15)


@needs_compiled
@pytest.mark.parametrize("scale", [1e-200, 1e-8, 1.0, 1e8, 1e200])
def test_atan2_against_numpy(scale):
    y = RNG.normal(size=20_000) * scale
    x = RNG.normal(size=20_000) * scale
    edge = np.array([0.0, -0.0, 1.0, -1.0])
    ye, xe = np.meshgrid(edge * scale, edge * scale)
    y = np.r_[y, ye.ravel(), scale, scale, -scale]
    x = np.r_[x, xe.ravel(), scale * np.tan(np.pi / 12), scale * np.sqrt(3.0), 1e-30 * scale]
    out = np.empty_like(y)
    influence._compiled.atan2(y, x, out)
    ref = np.arctan2(y, x)
    # 4 units in the last place of pi (the absolute precision of an angle near +-pi); signs of
    # zero as in C (atan2(-0, -1) = -pi)
    assert np.all(np.abs(out - ref) <= 4 * np.spacing(np.pi))
    assert np.array_equal(np.signbit(out), np.signbit(ref))


# ------------------------------------------------------------------------------- geometries
def _panels(length: float):
    """Twelve random panels of about ``length``."""
    z1 = RNG.normal(size=12) + 1j * RNG.normal(size=12)
    t = np.exp(1j * RNG.uniform(-np.pi, np.pi, 12))
    L = length * RNG.uniform(0.5, 2.0, 12)
    return z1, t, L


def _points(z1, t, L, where: str):
    """Points on the panels, at their ends, near them or far away (distances in panel lengths)."""
    z2 = z1 + L * t
    if where == "on panels":
        return (z1[:, None] + np.array([0.1, 0.5, 0.9])[None, :] * (z2 - z1)[:, None]).ravel()
    if where == "at panel ends":
        return np.r_[z1, z2]
    dist = {"near": 1e-3, "one length": 1.0, "far": 1e2, "very far": 1e4}[where]
    mid = 0.5 * (z1 + z2)
    ang = np.exp(1j * RNG.uniform(-np.pi, np.pi, (len(z1), 4)))
    return (mid[:, None] + dist * L[:, None] * ang).ravel()


def _scale(points, z1, t, L):
    r = np.abs(points[:, None] - (z1 + 0.5 * L * t)[None, :])
    return (L[None, :] + r * r / L[None, :]) * (1.0 + np.abs(np.log(np.maximum(r, 1e-300))))


WHERE = ["on panels", "at panel ends", "near", "one length", "far", "very far"]


@needs_compiled
@pytest.mark.parametrize("length", [1.0, 1e-2, 1e-5])
@pytest.mark.parametrize("where", WHERE)
def test_vortex_psi_compiled_equals_numpy(length, where):
    z1, t, L = _panels(length)
    pts = _points(z1, t, L, where)
    a1, b1 = influence.vortex_psi(pts, z1, t, L, kernel="compiled")
    a2, b2 = influence.vortex_psi(pts, z1, t, L, kernel="numpy")
    tol = 1e-12 * _scale(pts, z1, t, L)  # see the module docstring
    assert np.all(np.abs(a1 - a2) <= tol)
    assert np.all(np.abs(b1 - b2) <= tol)


def _chain_panels(kind: str, n: int) -> Panels:
    if kind == "foil":
        return Panels.from_panellings([respline(naca4("2412", closed_te=True), n)])
    if kind == "blunt foil":
        return Panels.from_panellings([respline(naca4("0012", closed_te=False), n)])
    # a foil and a smooth body: two chains, one of them a closed loop
    return Panels.from_panellings([respline(naca4("4412", closed_te=True), n),
                                   respline(circle(0.1).translated(1.3, -0.1), n // 2)])


def _node_points(p: Panels, where: str):
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    if where == "at panel ends":
        return zn
    if where == "on panels":
        return p.mid
    n_out = -1j * p.tangent
    dist = {"near": 1e-3, "one length": 1.0, "far": 1e2, "very far": 1e4}[where]
    return p.mid + dist * p.length * n_out


def _node_scale(points, p: Panels):
    return _scale(points, p.z1, p.tangent, p.length).max(axis=1, keepdims=True)


@pytest.mark.parametrize("kind", ["foil", "blunt foil", "two bodies"])
@pytest.mark.parametrize("where", WHERE)
def test_node_psi_equals_vortex_psi_summed_onto_nodes(kind, where):
    """The node-shared kernel (one log and one angle per node) against the per-panel one."""
    p = _chain_panels(kind, 60)
    pts = _node_points(p, where)
    a, b = influence.vortex_psi(pts, p.z1, p.tangent, p.length, kernel="numpy")
    ref = np.zeros((len(pts), p.n_nodes))
    ref[:, p.start] += a
    ref[:, p.end] += b
    for kernel in ("numpy", "compiled") if influence._compiled is not None else ("numpy",):
        got = influence.node_psi(pts, p, kernel=kernel)
        # 1e-12 of the largest cancelling term in the row (module docstring)
        assert np.all(np.abs(got - ref) <= 1e-12 * _node_scale(pts, p)), kernel


@needs_compiled
@pytest.mark.parametrize("kind", ["foil", "blunt foil", "two bodies"])
@pytest.mark.parametrize("where", WHERE)
def test_node_psi_compiled_equals_numpy(kind, where):
    p = _chain_panels(kind, 60)
    pts = _node_points(p, where)
    c = influence.node_psi(pts, p, kernel="compiled")
    n = influence.node_psi(pts, p, kernel="numpy")
    assert np.all(np.abs(c - n) <= 1e-12 * _node_scale(pts, p))  # module docstring
    if where in ("on panels", "at panel ends", "near", "one length"):
        assert np.abs(c - n).max() <= 1e-12  # chord-sized bodies: no large cancellation


def _strengths(p: Panels, k: int = 3):
    g = RNG.normal(size=(p.n_nodes, k))
    rot = (np.conj(p.tangent) * (-1j / (2 * np.pi)))[:, None]
    return rot * g[p.start], rot * (g[p.end] - g[p.start]), g


@pytest.mark.parametrize("kind", ["foil", "two bodies"])
@pytest.mark.parametrize("where", ["near", "one length", "far", "very far"])
def test_node_velocity_equals_per_panel_complex_formula(kind, where):
    """Against the complex-logarithm form of influence.vortex_velocity (independent code)."""
    p = _chain_panels(kind, 60)
    pts = _node_points(p, where)
    start, delta, g = _strengths(p)
    a, b = influence.vortex_velocity(pts, p.z1, p.tangent, p.length)
    ref = a @ g[p.start] + b @ g[p.end]
    # velocity terms are of size (r / L) |ln r| times the strengths (|g| ~ 1) and cancel
    r = np.abs(pts[:, None] - p.mid[None, :])
    scale = (1.0 + r / p.length[None, :]) * (1.0 + np.abs(np.log(r)))
    tol = 1e-12 * scale.max(axis=1, keepdims=True) * np.abs(g).max()
    for kernel in ("numpy", "compiled") if influence._compiled is not None else ("numpy",):
        got = influence.node_velocity(pts, p, start, delta, kernel=kernel)
        assert np.all(np.abs(got - ref) <= tol), kernel


@needs_compiled
@pytest.mark.parametrize("kind", ["foil", "blunt foil", "two bodies"])
def test_nearest_panel_compiled_equals_numpy(kind):
    p = _chain_panels(kind, 60)
    pts = np.r_[_node_points(p, "near"), _node_points(p, "one length"),
                RNG.uniform(-0.5, 1.5, 500) + 1j * RNG.uniform(-0.5, 0.5, 500)]
    d1, j1, t1 = influence.nearest_panel(pts, p.z1, p.tangent, p.length, kernel="compiled")
    d2, j2, t2 = influence.nearest_panel(pts, p.z1, p.tangent, p.length, kernel="numpy")
    np.testing.assert_allclose(d1, d2, rtol=1e-12, atol=1e-15)  # one square root of a sum
    # the same panel, except where two are equally near (a corner), up to rounding
    other = j1 != j2
    assert np.all(np.abs(d1[other] - d2[other]) <= 1e-14)
    np.testing.assert_allclose(t1[~other], t2[~other], rtol=1e-12, atol=1e-14)


def test_chains_cover_every_panel_once():
    p = _chain_panels("two bodies", 40)
    ch = influence.Chains.of(p)
    assert list(ch.count) == [40, 20]  # the foil and the closed loop
    assert ch.count.sum() == p.n_panels
    xy = np.stack([ch.node_x, ch.node_y], axis=1)
    np.testing.assert_array_equal(xy[ch.chain_start], p.nodes[p.start])
    np.testing.assert_array_equal(xy[ch.chain_end], p.nodes[p.end])


@needs_compiled
@pytest.mark.parametrize("section", ["2412", "0012-blunt"])
def test_analysis_compiled_equals_numpy(section, monkeypatch):
    import panelflow as pf

    foil = [naca4(section.split("-")[0], closed_te=not section.endswith("blunt"))]
    compiled = pf.analyse(foil, [-2.0, 4.0], n_panels=120)
    monkeypatch.setenv(influence.KERNELS_VARIABLE, "numpy")
    assert not influence.compiled_kernels()
    plain = pf.analyse(foil, [-2.0, 4.0], n_panels=120)
    # matrix entries agree to ~1e-15; the solve multiplies by the condition number (~1e3)
    np.testing.assert_allclose(compiled.cl, plain.cl, rtol=1e-11)
    np.testing.assert_allclose(compiled.cm, plain.cm, rtol=1e-11, atol=1e-13)
    np.testing.assert_allclose(compiled.fine.cp, plain.fine.cp, atol=1e-10)
