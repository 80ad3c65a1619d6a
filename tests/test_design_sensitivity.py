"""Exact sensitivities of the panel solution against finite differences of the whole analysis.

The derivatives in panelflow/design/sensitivity.py are differentiated closed forms; the
reference here is the analysis itself: assemble, factorise and solve again with the nodes moved
by +h and -h (central differences, error O(h^2) plus round-off of order eps/h times the
solution). Nothing of the sensitivity code is used by the reference.
"""

from __future__ import annotations

import numpy as np
import pytest

import panelflow as pf
from panelflow.analysis.inviscid import build
from panelflow.design.model import DesignModel
from panelflow.design.sensitivity import residual_derivatives, unit_derivatives
from panelflow.design.shape import form_of, full_basis
from panelflow.errors import InputError
from panelflow.flow.solver import assemble, factorise
from panelflow.flow.surface import ChordLine, evaluate
from panelflow.geometry.measure import ChordFrame
from panelflow.geometry.panels import Panels
from panelflow.geometry.sections import naca4


def _moved(p: Panels, nodes) -> Panels:
    return Panels(nodes, p.start, p.end, p.body, p.node_start, p.node_stop, p.kinds, p.names)


def _geometries():
    return {
        "sharp": [naca4("2412", closed_te=True)],
        "blunt": [naca4("2412")],
        "two bodies": [naca4("2412", closed_te=True),
                       naca4("0012").scaled(0.3).translated(1.05, -0.08)],
        "smooth": pf.load_outlines("ellipse:1,0.3"),
    }


def _random_motion(panels: Panels, n: int, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    motion = rng.normal(size=(panels.n_nodes, 2, n)) * 0.01
    for k in range(panels.n_bodies):  # a sharp edge's two nodes are one point: move together
        if panels.kinds[k] == "sharp":
            motion[panels.node_stop[k] - 1] = motion[panels.node_start[k]]
    return motion


@pytest.mark.parametrize("name", list(_geometries()))
def test_unit_solution_derivatives_match_finite_differences(name):
    _, system = build(_geometries()[name], 60)
    p = system.panels
    motion = _random_motion(p, 3, seed=1)
    exact = unit_derivatives(system, motion)
    h = 1e-6
    for j in range(motion.shape[2]):
        plus = factorise(_moved(p, p.nodes + h * motion[:, :, j])).unit
        minus = factorise(_moved(p, p.nodes - h * motion[:, :, j])).unit
        fd = (plus - minus) / (2.0 * h)
        # 2e-6 relative to the largest derivative: central-difference truncation (h^2 times the
        # third derivative) and round-off (1e-16 / 1e-6 times the condition of the system) are
        # both below it; measured 1e-8 (one body) to 7e-7 (two bodies, a small flap)
        assert np.max(np.abs(fd - exact[:, :, j])) <= 2e-6 * np.max(np.abs(fd)), (name, j)


@pytest.mark.parametrize("name", ["blunt", "smooth"])
@pytest.mark.parametrize("node", ["first", "second", "middle", "last"])
def test_residual_derivative_of_each_coordinate(name, node):
    # one node at a time, both axes: the residual with the solution held fixed
    _, system = build(_geometries()[name], 30)
    p = system.panels
    k = {"first": 0, "second": 1, "middle": p.n_nodes // 2, "last": p.n_nodes - 1}[node]
    d = residual_derivatives(system)  # default motion: node-major, x then y
    x = system.unit

    def residual(nodes):
        a, b, _ = assemble(_moved(p, nodes))
        return a @ x - b

    h = 1e-7
    for axis in (0, 1):
        dn = np.zeros_like(p.nodes)
        dn[k, axis] = h
        fd = (residual(p.nodes + dn) - residual(p.nodes - dn)) / (2.0 * h)
        # 1e-7 absolute: the residual's entries are of order 1; round-off of the difference is
        # 1e-16 / 1e-7 times those (measured below 3e-9)
        assert np.max(np.abs(fd - d[:, :, 2 * k + axis].T)) < 1e-7, (node, axis)


def test_a_plane_boundary_is_refused():
    from panelflow.flow import images

    outline = naca4("0012", closed_te=True)
    panels = build([outline], 40)[1].panels
    system = images.factorise(panels, pf.Boundary.ground(0.5).image(np.array([0.25, 0.0]), 2.0))
    with pytest.raises(InputError, match="free space"):
        residual_derivatives(system)


def _chord_form(outline, n_functions=10):
    f = form_of(outline, full_basis(n_functions))
    return f.__class__(f.name, ChordFrame((0.0, 0.0), (1.0, 0.0)), f.kind, f.basis,
                       f.coefficients, f.ends, f.te_y)


@pytest.mark.parametrize("spec", ["naca2412-closed", "naca2412"])
def test_design_model_matches_the_analysis(spec):
    # the model's own Cp, circulation lift and Simpson moment against flow/surface.py on the
    # same system: the same formulas, so round-off only
    form = _chord_form(pf.load_outlines(spec)[0])
    st = DesignModel(form, 120).state(form.coefficients)
    ref = evaluate(st.system, [3.0], ChordLine(np.zeros(2), np.array([1.0, 0.0])),
                   np.array([0.25, 0.0]))
    assert st.cl(3.0) == pytest.approx(ref.cl[0], abs=1e-13)
    assert st.cm(3.0) == pytest.approx(ref.cm[0], abs=1e-13)
    assert np.max(np.abs(st.cp(3.0) - ref.cp[0])) < 1e-13


@pytest.mark.parametrize("spec", ["naca2412-closed", "naca2412"])
@pytest.mark.parametrize("quantity", ["cp", "cl", "cm"])
def test_design_model_gradients(spec, quantity):
    form = _chord_form(pf.load_outlines(spec)[0])
    model = DesignModel(form, 120)
    c = form.coefficients
    alpha = 3.0
    st = model.state(c)
    exact, exact_a = getattr(st, f"{quantity}_derivatives")(alpha)
    value = getattr(type(st), quantity)
    h = 1e-4  # measured: the best step (1e-8 agreement); 1e-6 loses digits to round-off
    for j in range(len(c)):
        e = np.zeros(len(c))
        e[j] = h
        fd = (value(model.state(c + e), alpha) - value(model.state(c - e), alpha)) / (2.0 * h)
        col = exact[:, j] if quantity == "cp" else exact[j]
        # 1e-6 relative to the largest derivative: truncation h^2 and round-off eps/h
        scale = max(float(np.max(np.abs(fd))), 1e-3)
        assert np.max(np.abs(fd - col)) <= 1e-6 * scale, (quantity, j)
    st = model.state(c)
    da = 1e-5
    fd_a = (value(st, alpha + da) - value(st, alpha - da)) / (2.0 * da)
    assert np.max(np.abs(fd_a - exact_a)) <= 1e-6 * max(float(np.max(np.abs(fd_a))), 1e-3)
