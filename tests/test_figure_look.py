"""The figure problems a new user met, each checked through the figure's matplotlib objects.

* polars: the palette repeated after 7 sections; the Cp-min axis label overlapped its ticks; the
  card column left a third of the page empty;
* field: a deep suction peak left the pressure side two colour bands; an unlabelled Cp = 0
  contour crossed the plot; near a plane the far side had a Cp colour (or the bodies' colour,
  hiding the plane's line);
* surface Cp: composed as a column of parameters beside the plot; now the plot keeps the full
  width and the numbers sit in a strip beneath, one row per curve set;
* every body counts: the compare figure's lowest Cp is the lowest over every body.
"""

from __future__ import annotations

import numpy as np
import pytest

import panelflow as pf
from panelflow.flow.field import flow_field, grid_points
from panelflow.output import figures as plots

N_PANELS = 50


@pytest.fixture(scope="module")
def sections():
    names = [f"naca00{t:02d}" for t in range(6, 21)]  # 15 sections, more than the palette
    return names, [pf.analyse(pf.load_outlines(n), [-2.0, 0.0, 2.0, 4.0], n_panels=N_PANELS)
                   for n in names]


def _bbox(artist, fig):
    return artist.get_window_extent(fig.canvas.get_renderer())


def test_polar_lines_all_look_different(sections):
    names, analyses = sections
    fig = plots._build_polar_figure(analyses, names)
    looks = {(ln.get_color(), ln.get_marker()) for ln in fig.axes[0].get_lines()
             if len(ln.get_xdata()) == 4}  # the sections' lines (the zero lines have 2 points)
    assert len(looks) == len(names)  # every section has a look of its own
    assert len(set(plots.PALETTE)) == len(plots.PALETTE) >= 12


def test_polar_axis_labels_clear_of_their_ticks(sections):
    names, analyses = sections
    fig = plots._build_polar_figure(analyses, names)
    fig.canvas.draw()
    for ax in fig.axes[:3]:
        label = _bbox(ax.yaxis.label, fig)
        for tick in ax.get_yticklabels():
            if tick.get_text():
                assert not label.overlaps(_bbox(tick, fig)), (ax.get_ylabel(), tick.get_text())


@pytest.mark.parametrize("count", [3, 15])
def test_polar_page_is_used(sections, count):
    names, analyses = sections
    fig = plots._build_polar_figure(analyses[:count], names[:count])
    fig.canvas.draw()
    width = fig.get_size_inches()[0] * fig.dpi
    # the axes take the page's width (no side column) ...
    for ax in fig.axes[:3]:
        assert _bbox(ax, fig).width > 0.8 * width
    # ... and the page ends below its last table row, with no empty band beneath
    lowest_row = min(_bbox(t, fig).y0 for t in fig.texts if t.get_text() == names[count - 1])
    caution = min(_bbox(t, fig).y0 for t in fig.texts)
    assert lowest_row - caution < 0.6 * fig.dpi  # under 0.6 in between the rows and the note


def test_field_levels_keep_the_pressure_side():
    # a flap's suction peak of -4.5 beside a stagnation point: the 0..1 side gets its own bands
    lev, _ = plots._field_levels(np.array([-4.5, 0.3, 1.0]), None)
    assert (lev > 0.0).sum() >= 5  # five bands from 0 to 1 (the old levels gave two)
    assert (lev < 0.0).sum() >= 5
    assert 0.0 in lev


@pytest.fixture(scope="module")
def foil():
    return pf.solve(pf.Problem(pf.load_outlines("naca2412"), pf.OperatingPoint(alpha_deg=[4.0]),
                               panels=N_PANELS))


def test_field_has_no_stray_zero_contour(foil):
    from matplotlib.contour import ContourSet

    pts, shape = grid_points((-0.5, 1.5, -0.5, 0.5), (30, 16))
    field = flow_field(foil, pts, [4.0], shape)
    fig = plots._build_field_figure(field, foil.inviscid)
    sets = [a for a in fig.axes[0].get_children() if isinstance(a, ContourSet)]
    assert len(sets) == 1 and sets[0].filled  # the filled bands only, no line at Cp = 0


@pytest.mark.parametrize("plane", ["free_surface", "ground"])
def test_field_near_a_plane_shows_the_plane(plane):
    boundary = getattr(pf.Boundary, plane)(0.3)
    result = pf.solve(pf.Problem(pf.load_outlines("naca2412"),
                                 pf.OperatingPoint(alpha_deg=[4.0], plane=boundary),
                                 panels=N_PANELS))
    pts, shape = grid_points((-0.5, 1.5, -0.5, 0.5), (30, 16))
    field = flow_field(result, pts, [4.0], shape)
    fig = plots._build_field_figure(field, result.inviscid, plane=result.plane)
    ax = fig.axes[0]
    band = [p for p in ax.patches if p.get_hatch()]
    assert len(band) == 1
    # pale and hatched: neither a body's fill nor a colour of the Cp scale near zero
    from matplotlib.colors import to_hex

    assert to_hex(band[0].get_facecolor()) == plots.PLANE_FILL
    assert plots.PLANE_FILL not in plots.FIELD_COLOURS and plots.PLANE_FILL != plots.BODY_FILL
    # the plane's line is drawn above the band, and named
    line = [ln for ln in ax.get_lines() if to_hex(ln.get_color()) == plots.PLANE_LINE]
    assert line and line[0].get_zorder() > band[0].get_zorder()
    assert any("no flow beyond" in t.get_text() for t in ax.texts)


def test_surface_cp_numbers_beneath_the_plot(foil):
    fig = plots._build_surface_cp_figure(foil.inviscid, [4.0])
    fig.canvas.draw()
    ax_cp, ax_sec = fig.axes[:2]
    width = fig.get_size_inches()[0] * fig.dpi
    assert _bbox(ax_cp, fig).width > 0.8 * width  # the plot keeps the width
    right = _bbox(ax_cp, fig).x1
    beneath = _bbox(ax_sec, fig).y0
    r = foil.inviscid[0]
    numbers = [t for t in fig.texts if t.get_text() == plots._pm(r.cl, r.cl_error_estimate)]
    assert numbers and all(_bbox(t, fig).y1 < beneath for t in numbers)
    # nothing stands beside the plot: every text starts left of the Cp axes' right edge
    assert all(_bbox(t, fig).x0 < right for t in fig.texts if t.get_text())


def test_compare_figure_lowest_cp_over_every_body():
    from panelflow.geometry.arguments import load_bodies

    flapped = pf.analyse(load_bodies(["naca2412", "naca0012@name=flap@scale=0.3@pitch=15"
                                                  "@move=1.03,-0.07"]), [4.0], n_panels=N_PANELS)
    fig = plots._build_compare_cp_figure([flapped], ["with flap"], 4.0)
    texts = [t.get_text() for t in fig.texts]
    r = flapped[0]
    k = int(np.argmin([b.cp_min for b in r.bodies]))
    assert r.bodies[k].name == "flap"  # the flap's nose peak is the deeper one here
    assert plots._fixed(r.bodies[k].cp_min, 3) in texts and "flap" in texts
