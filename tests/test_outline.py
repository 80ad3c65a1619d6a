"""Trailing-edge detection and loop normalisation of Outline.from_points.

The reference is the same section given in the conventional order (upper trailing edge, over the
leading edge, to the lower trailing edge): any other start or direction must give the same loop
after normalisation, so the same trailing-edge kind, gap and chord.
"""

import numpy as np
import pytest

from panelflow.geometry.outline import BLUNT, SHARP, SMOOTH, Outline
from panelflow.geometry.sections import naca4


def _le_start(points: np.ndarray, closed: bool) -> np.ndarray:
    """The same loop started at its leading edge (the point of smallest x)."""
    i = int(np.argmin(points[:, 0]))
    return np.vstack([points[i:], points[1:i + 1]]) if closed else np.vstack([points[i:],
                                                                              points[:i + 1]])


@pytest.mark.parametrize("digits", ["0012", "4415", "0006"])
@pytest.mark.parametrize("closed", [False, True])
@pytest.mark.parametrize("n_points", [41, 61, 201])
@pytest.mark.parametrize("from_table", [True, False])  # table order known, or a mesh polyline
def test_leading_edge_start_finds_the_trailing_edge(digits, closed, n_points, from_table):
    ref = naca4(digits, n_points=n_points, closed_te=closed)
    o = Outline.from_points(_le_start(ref.points, closed), starts_at_trailing_edge=from_table)
    assert o.kind == (SHARP if closed else BLUNT)
    # same geometry, so the same facts to round-off
    assert o.trailing_edge.gap == pytest.approx(ref.trailing_edge.gap, abs=1e-12)
    assert o.chord == pytest.approx(ref.chord, rel=1e-12)
    np.testing.assert_allclose(o.points[0], ref.points[0], atol=1e-12)


@pytest.mark.parametrize("n", [8, 12, 40])
@pytest.mark.parametrize("repeat_first", [False, True])
@pytest.mark.parametrize("from_table", [True, False])
def test_coarse_circle_is_a_smooth_body(n, repeat_first, from_table):
    # an evenly turning polygon has no corner, whether or not the first point is repeated
    th = np.linspace(0.0, 2 * np.pi, n + 1)[: n + 1 if repeat_first else n]
    o = Outline.from_points(np.c_[np.cos(th), np.sin(th)], starts_at_trailing_edge=from_table)
    assert o.kind == SMOOTH


@pytest.mark.parametrize("reverse", [False, True])
def test_direction_does_not_matter(reverse):
    ref = naca4("2412", n_points=101)
    pts = ref.points[::-1] if reverse else ref.points
    o = Outline.from_points(pts)
    np.testing.assert_array_equal(o.points, ref.points)  # normalised to the same loop exactly
