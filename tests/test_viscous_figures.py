"""The viscous figures: written, and the section strip shows the whole section.

Reference: the section's own outline (its extreme ordinates in the chord frame), which the
strip must contain; a strip of fixed height once clipped the demo foil top and bottom.
"""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np
import pytest

import panelflow as pf
from panelflow.output.viscous_figures import (_build_boundary_layer_figure,
                                              boundary_layer_figure, drag_polar_figure)

FOIL = Path(__file__).resolve().parent.parent / "geometries" / "tender_front_foil.dat"


@pytest.fixture(scope="module")
def result():
    op = pf.OperatingPoint(alpha_deg=(0.0, 2.0), reynolds=1e6)
    r = pf.solve(pf.Problem(pf.load_outlines(str(FOIL)), op, error_estimate=False))
    assert all(x.converged for x in r.viscous.results)
    return r


def test_section_strip_contains_the_section(result):
    fig = _build_boundary_layer_figure(result, 2.0)
    strip = fig.axes[3]
    fig.savefig(io.BytesIO(), format="png")  # the equal aspect settles the limits on drawing
    y0, y1 = strip.get_ylim()
    (poly,) = [p for p in strip.patches]
    ys = poly.get_xy()[:, 1]
    # the whole outline inside the strip's limits (no margin needed: touching is not clipping)
    assert y0 <= ys.min() and ys.max() <= y1


def test_viscous_figures_are_written(result, tmp_path):
    a = boundary_layer_figure(result, tmp_path / "layer.png", 2.0)
    b = drag_polar_figure([result], tmp_path / "drag.png")
    assert a.stat().st_size > 10_000 and b.stat().st_size > 10_000
    assert np.all(np.isfinite(result.viscous.column("cd")))
