"""The coupled viscous iteration converges on the panellings panelflow produces.

The iteration was once tuned on one panelling and stopped converging when the panelling changed
(graded trailing-edge panels, spline re-panelling): these checks run it over panel counts from
120 to 400, on a built-in section (NACA 0012 as published, blunt 0.25 % trailing edge) and on a
coordinate file (geometries/tender_front_foil.dat), at Reynolds numbers 1e6 and 1e7 and at 0 and
2 degrees, each from a cold start. A converged point's residual is below the iteration's
tolerance and its transition points lie on the section.

Not covered here, and stated in ``LIMITS``: near Re 1e5, where a laminar layer runs separated
to the trailing edge, the iteration converges only on some panellings (the laminar bubble check
in test_viscous_sections.py is one that does).
"""

from pathlib import Path

import numpy as np
import pytest

import panelflow as pf
from panelflow.analysis.inviscid import build
from panelflow.geometry.sections import naca4
from panelflow.viscous import solve

FRONT_FOIL = Path(__file__).resolve().parent.parent / "geometries" / "tender_front_foil.dat"
TOLERANCE = 1e-7  # the iteration's own convergence tolerance on the largest residual


def _outline(name):
    if name == "naca0012":
        return naca4("0012")
    return pf.load_outlines(str(FRONT_FOIL))[0]


def _check(name, n_panels, reynolds, alpha):
    system = build([_outline(name)], n_panels)[1]
    r = solve(system, alpha, reynolds)
    assert r.converged, f"{name}, {n_panels} panels, Re {reynolds:g}, {alpha} deg: {r!r}"
    assert r.residual < TOLERANCE
    # transition on the section (free transition, no trips): 0 < x/c <= 1
    assert 0.0 < r.transition_upper <= 1.0 and 0.0 < r.transition_lower <= 1.0
    assert np.isfinite([r.cl, r.cd, r.cm]).all() and r.cd > 0.0
    return r


# quick: one panelling of each section
@pytest.mark.parametrize("name, n_panels", [("naca0012", 120), ("front_foil", 200)])
def test_converges_quick(name, n_panels):
    _check(name, n_panels, 1e6, 2.0)


@pytest.mark.slow
@pytest.mark.parametrize("alpha", [0.0, 2.0])
@pytest.mark.parametrize("reynolds", [1e6, 1e7])
@pytest.mark.parametrize("n_panels", [120, 200, 300, 400])
@pytest.mark.parametrize("name", ["naca0012", "front_foil"])
def test_converges_over_panellings(name, n_panels, reynolds, alpha):
    _check(name, n_panels, reynolds, alpha)


@pytest.mark.slow
@pytest.mark.parametrize("reynolds", [1e6, 1e7])
def test_drag_settles_over_panellings(reynolds):
    # NACA 0012 at 2 degrees: the drag from 200, 300 and 400 panels within 2 % of the 400-panel
    # value (the grid-convergence band); measured +1.71 % and +1.52 % at Re 1e6 (the
    # transition point moves by about a station between panellings), +0.75 % and +0.01 % at 1e7
    system = {n: build([naca4("0012")], n)[1] for n in (200, 300, 400)}
    cd = {n: solve(s, 2.0, reynolds).cd for n, s in system.items()}
    for n in (200, 300):
        assert cd[n] == pytest.approx(cd[400], rel=0.02)
