"""Geometry edits: each does what it says, measured on the new outline, and nothing else.

"Nothing else" is checked against the same section passed through the edits with no edit at
all (the same resampling onto new points), so that the tolerances below are the edits' own.
"""

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy.interpolate import CubicSpline

import panelflow as pf
from panelflow.errors import InputError
from panelflow.geometry import edits as E
from panelflow.geometry.measure import decompose, measure
from panelflow.geometry.outline import Outline
from panelflow.geometry.readers import write_outline_table
from panelflow.geometry.sections import naca4

SECTIONS = ["naca2412-closed", "naca0012", "naca4415-closed", "naca16-212",
            "geometries/tender_front_foil.dat", "geometries/tender_strut_fairing.dat"]

# What each edit keeps, with the tolerance and the largest change measured over SECTIONS
# (relative for thickness, camber, radius, area; absolute for positions and the angle).
KEPT = {
    "thickness": {"thickness_position": 1e-7, "camber": 1e-8, "camber_position": 1e-7},
    # measured 0, 9e-9, 3.1e-15 / 1.6e-7 (the a = 1 mean line's blunt edge), 0, 8.8e-6
    "camber": {"thickness": 1e-8, "thickness_position": 1e-7, "leading_edge_radius": 1e-6,
               "trailing_edge_thickness": 1e-12, "area": 2e-5},
    # measured 1.8e-7, 3.4e-5, 0, 0.0064 deg (the spline's end curvature sees the remap), 1e-15
    "thickness_position": {"thickness": 1e-6, "leading_edge_radius": 1e-4,
                           "trailing_edge_thickness": 1e-12, "trailing_edge_angle_deg": 0.01,
                           "camber": 1e-8},
    # measured 1e-14, 0, 8.5e-9, 0, 3e-4 deg, 4.1e-6 (the camber maximum, a hair off the grid)
    "camber_position": {"thickness": 1e-8, "thickness_position": 1e-7,
                        "leading_edge_radius": 1e-7, "trailing_edge_thickness": 1e-12,
                        "trailing_edge_angle_deg": 1e-3, "camber": 1e-5},
    # measured 1.8e-7, 1.2e-5, 0, 2.3e-12, 0, 1.5e-6 deg
    "trailing_edge_thickness": {"thickness": 1e-6, "thickness_position": 5e-5, "camber": 1e-8,
                                "camber_position": 1e-7, "leading_edge_radius": 1e-12,
                                "trailing_edge_angle_deg": 1e-5},
    # measured 2.5e-6, 3.8e-5 (the flat maximum moves a little), 0, 1e-8, 0, 0
    "leading_edge_radius": {"thickness": 1e-5, "thickness_position": 1e-4, "camber": 1e-8,
                            "camber_position": 1e-7, "trailing_edge_thickness": 1e-12,
                            "trailing_edge_angle_deg": 1e-9},
}
RELATIVE = {"thickness", "camber", "leading_edge_radius", "area"}


def edit_for(kind, base):
    """The edit under test and the value it must give, from the unedited measures."""
    return {
        "thickness": (E.Thickness(scale=1.3), 1.3 * base.thickness),
        "camber": (E.Camber(scale=1.5), 1.5 * base.camber),
        "thickness_position": (E.ThicknessPosition(0.42), 0.42),
        "camber_position": (E.CamberPosition(0.3), 0.3),
        "trailing_edge_thickness": (E.TrailingEdgeThickness(0.006), 0.006),
        "leading_edge_radius": (E.LeadingEdgeRadius(scale=1.6), 1.6 * base.leading_edge_radius),
    }[kind]


# Accuracy of the edited figure (measured: 2.8e-17, 2.1e-17, 1.8e-5, 4.5e-4 -- the 4-digit
# mean line's curvature jumps at its maximum --, 2.6e-18, and 2.1e-5 relative for the radius,
# whose new nose term the spline resolves a little differently from the old one)
TARGET = {"thickness": 1e-12, "camber": 1e-12, "thickness_position": 1e-4,
          "camber_position": 1e-3, "trailing_edge_thickness": 1e-12,
          "leading_edge_radius": 5e-5}


@pytest.fixture(scope="module")
def unedited():
    return {s: E.reshape(pf.load_outlines(s)[0]).after for s in SECTIONS}


@pytest.mark.parametrize("section", SECTIONS)
@pytest.mark.parametrize("kind", list(KEPT))
def test_edit_does_what_it_says_and_nothing_else(unedited, section, kind):
    base = unedited[section]
    if kind.startswith("camber") and base.camber == 0.0:
        pytest.skip("symmetric section: no camber line to edit")
    edit, target = edit_for(kind, base)
    after = E.reshape(pf.load_outlines(section)[0], [edit]).after
    got = getattr(after, kind)
    if kind in RELATIVE:
        assert got == pytest.approx(target, rel=TARGET[kind])
    else:
        assert got == pytest.approx(target, abs=TARGET[kind])
    for key, tol in KEPT[kind].items():
        b, a = getattr(base, key), getattr(after, key)
        if key in RELATIVE:
            assert a == pytest.approx(b, rel=tol, abs=1e-15), key
        else:
            assert a == pytest.approx(b, abs=tol, nan_ok=True), key


def test_round_trip_keeps_the_section(unedited):
    # No edit: the resampling alone, against the original's own measures (nose radius to
    # 0.1 %, the nose falling between the original points for the cambered NACA sections:
    # measured 7.7e-4; the rest to 2e-5, measured 1.5e-5 on the demo foil's thickness position)
    for s in SECTIONS:
        before, after = measure(pf.load_outlines(s)[0]), unedited[s]
        assert after.leading_edge_radius == pytest.approx(before.leading_edge_radius, rel=5e-3)
        for key in ("thickness", "camber", "area"):
            assert getattr(after, key) == pytest.approx(getattr(before, key), rel=2e-5, abs=1e-12)
        for key in ("thickness_position", "camber_position", "trailing_edge_thickness"):
            assert getattr(after, key) == pytest.approx(getattr(before, key), abs=2e-5,
                                                        nan_ok=True)


# ---------------------------------------------------------------------------------- exact
def off_report460(outline: Outline, t: float) -> float:
    """Largest distance in y of a symmetric outline's points from the Report 460 thickness."""
    x, y = outline.points.T
    exact = 5 * t * (0.2969 * np.sqrt(np.clip(x, 0, 1)) - 0.1260 * x - 0.3516 * x**2
                     + 0.2843 * x**3 - 0.1036 * x**4)
    return float(np.max(np.abs(np.abs(y) - exact)))


def test_thickness_scale_turns_one_naca_section_into_another():
    # Report 460 thickness is proportional to t: 0012 x 1.5 is 0018 (closed edges, symmetric);
    # the new points sit at the old stations, measured 2.8e-17 off the 0018 equation
    new = E.reshape(naca4("0012", closed_te=True), [E.Thickness(scale=1.5)]).outline
    assert off_report460(new, 0.18) < 1e-12


def test_blend_of_two_thicknesses_is_the_one_between():
    # and a half-and-half blend of 0010 and 0014 is 0012
    blend = E.Blend(naca4("0014", closed_te=True), 0.5)
    new = E.reshape(naca4("0010", closed_te=True), [blend]).outline
    assert off_report460(new, 0.12) < 1e-12
    assert measure(new).thickness == pytest.approx(measure(naca4("0012", closed_te=True)).thickness,
                                                   rel=1e-12)


def test_trailing_edge_edits_change_the_kind():
    opened = E.reshape(naca4("2412", closed_te=True), [E.TrailingEdgeThickness(0.01)])
    assert opened.outline.kind == "blunt"
    assert opened.outline.trailing_edge.gap == pytest.approx(0.01 * opened.after.chord,
                                                             rel=1e-9)
    closed = E.reshape(pf.load_outlines("geometries/tender_strut_fairing.dat")[0],
                       [E.TrailingEdgeThickness(0.0)])
    assert closed.outline.kind == "sharp" and closed.after.trailing_edge_thickness == 0.0
    # the strut's chord is 220 mm: the frame and size are kept
    assert closed.after.chord == pytest.approx(closed.before.chord, rel=1e-9)


def test_edits_keep_the_outline_frame():
    # a section drawn at 6 degrees in mm stays there: leading and trailing edge unmoved
    foil = pf.load_outlines("geometries/tender_front_foil.dat")[0].scaled(250.0).rotated(6.0)
    result = E.reshape(foil, [E.Thickness(scale=1.1), E.CamberPosition(0.4)])
    assert np.allclose(result.outline.trailing_edge.point, foil.trailing_edge.point, atol=1e-9)
    # the nose (farthest from the trailing edge, between the points) stays: measured 1e-10 mm
    nose = decompose(foil).frame.leading_edge
    assert np.allclose(decompose(result.outline).frame.leading_edge, nose, atol=1e-6 * 250)
    assert result.after.chord == pytest.approx(result.before.chord, rel=1e-9)


def test_steps_are_reported_in_order():
    result = E.reshape(pf.load_outlines("naca2412")[0],
                       [E.ThicknessPosition(0.35), E.Thickness(value=0.1),
                        E.LeadingEdgeRadius(value=0.01), E.TrailingEdgeThickness(0.0)])
    assert [s.split()[0:2] for s in result.steps] == [
        ["maximum", "thickness"], ["thickness", "scaled"], ["leading-edge", "radius"],
        ["trailing-edge", "thickness"]]
    a = result.after
    # the nose-radius step after the thickness one moves the thickness by 4e-7 (measured)
    assert (a.thickness, a.trailing_edge_thickness) == (pytest.approx(0.1, rel=1e-5), 0.0)
    assert a.thickness_position == pytest.approx(0.35, abs=1e-4)
    assert a.leading_edge_radius == pytest.approx(0.01, rel=1e-5)
    assert result.outline.name == "naca2412, reshaped"


def test_written_section_reads_back_the_same(tmp_path):
    result = E.reshape(pf.load_outlines("naca16-212")[0], [E.Camber(value=0.02)])
    path = write_outline_table(result.outline, tmp_path / "new.dat")
    again = measure(pf.load_outlines(str(path))[0])
    # twelve significant digits in the file (the flat maxima's positions move by up to 1.2e-8;
    # the trailing-edge angle, from the end slopes of the spline through the 801 points, by
    # 3.0e-5 deg: its last point spacing is 1.5e-5 chords, so a 1e-12 change moves the slope
    # by about 1e-7 rad)
    for k, v in result.after.as_dict().items():
        tol = {"trailing_edge_angle_deg": 1e-4}.get(k, 1e-7 if k.endswith("position") else 1e-9)
        assert getattr(again, k) == pytest.approx(v, rel=1e-8, abs=tol), k


@pytest.mark.parametrize("edits,message", [
    ([E.Thickness()], "either a scale factor or a value"),
    ([E.Thickness(scale=1.1, value=0.1)], "not both or neither"),
    ([E.Thickness(scale=-1.0)], "must be positive"),
    ([E.Camber(value=0.02)], "symmetric"),
    ([E.CamberPosition(0.4)], "symmetric"),
    ([E.ThicknessPosition(0.99)], "between 0.05 and 0.95"),
    ([E.TrailingEdgeThickness(0.2)], "less than the maximum thickness"),
    ([E.LeadingEdgeRadius(value=0.0)], "surfaces cross"),
    ([E.Blend(pf.load_outlines("ellipse:2,1")[0])], "differ in kind"),
    ([E.Blend(pf.load_outlines("naca2412")[0], 1.5)], "between 0 and 1"),
    (["thicker"], "not a geometry edit"),
])
def test_refused_edits(edits, message):
    with pytest.raises(InputError, match=message):
        E.reshape(naca4("0012"), edits)


def test_rounded_body_has_no_trailing_edge_to_edit():
    with pytest.raises(InputError, match="rounded tail"):
        E.reshape(pf.load_outlines("geometries/mast_fairing.csv")[0],
                  [E.TrailingEdgeThickness(0.01)])
    # but its thickness scales like any other
    r = E.reshape(pf.load_outlines("geometries/mast_fairing.csv")[0], [E.Thickness(scale=0.8)])
    assert r.after.thickness == pytest.approx(0.8 * r.before.thickness, rel=1e-4)
    assert r.outline.kind == "none"


# ---------------------------------------------------------------------------------- remap
def test_chord_remap_refuses_a_fold():
    # from 0.05 to 0.95 the map's slope would turn negative ahead of the new position
    with pytest.raises(InputError, match="too far"):
        E.chord_remap(0.05, 0.95)


@settings(max_examples=60, deadline=None)
@given(old=st.floats(0.1, 0.8), new=st.floats(0.1, 0.8))
def test_chord_remap_properties(old, new):
    try:
        phi = E.chord_remap(old, new)
    except InputError:
        assume(False)
    x = np.linspace(0.0, 1.0, 4001)
    p = phi(x)
    # ends fixed with unit slope, new -> old, monotone, slope continuous at new (one-sided
    # differences of step 1e-7: error ~1e-7 times phi'', which stays below 100 here)
    assert p[0] == 0.0 and p[-1] == pytest.approx(1.0, abs=1e-14)
    assert float(phi(new)) == pytest.approx(old, abs=1e-14)
    assert np.all(np.diff(p) > 0)
    h = 1e-7
    for at in (0.0, 1.0 - h):
        assert (phi(at + h) - phi(at)) / h == pytest.approx(1.0, abs=1e-4)
    left = (phi(new) - phi(new - h)) / h
    right = (phi(new + h) - phi(new)) / h
    assert left == pytest.approx(right, abs=1e-4)


# ---------------------------------------------------------------------------------- smoothing
def surface_cp(outline):
    """Surface Cp at 4 degrees, interpolated onto fixed stations of each surface."""
    body = pf.analyse([outline], [4.0], n_panels=200)[0].bodies[0]
    k = int(np.argmin(body.x))
    x = np.linspace(0.02, 0.98, 200)
    upper = np.interp(x, body.x[:k + 1][::-1], body.cp[:k + 1][::-1])
    lower = np.interp(x, body.x[k:], body.cp[k:])
    return np.r_[upper, lower], body.cp_min


def test_smoothing_noisy_tables():
    # 101-point NACA 2412 tables with 1e-4 chord of noise on every coordinate (a carefully
    # digitised drawing), four noise draws: the noise roughens the surface Cp of the spline the
    # solver draws through the points. Smoothed, the RMS difference from the clean table's Cp
    # (2 to 98 % chord) falls 1.8 to 6.0 times (measured; median 4.2), and the points come
    # closer to the true section (RMS distance 0.61 to 0.81 of the noisy points'). The nose
    # stays only as good as the few points on it: its radius, and with it the suction peak,
    # can come out either way (the peak measured 0.4 to 50 times closer).
    clean = naca4("2412", n_points=101, closed_te=True)
    cp_clean, _ = surface_cp(clean)
    true = naca4("2412", n_points=4001, closed_te=True)
    gains = []
    for seed in range(4):
        pts = clean.points + np.random.default_rng(seed).normal(0.0, 1e-4, clean.points.shape)
        pts[-1] = pts[0]
        noisy = Outline.from_points(pts, name="digitised")
        assert noisy.kind == "sharp"
        smooth = E.smooth_outline(noisy)
        rms_cp = [np.sqrt(np.mean((surface_cp(o)[0] - cp_clean) ** 2)) for o in (noisy, smooth)]
        gains.append(rms_cp[0] / rms_cp[1])
        rms_xy = [np.sqrt(np.mean(distance_to_curve(o.points, true) ** 2))
                  for o in (noisy, smooth)]
        assert rms_xy[1] < 0.9 * rms_xy[0]
    assert min(gains) > 1.4 and np.median(gains) > 3.0


def distance_to_curve(points, outline, n=40001):
    """Distances of points from the chord-length cubic spline through an outline's points
    (drawn as a polyline of n points: its chords leave < 1e-7 chords)."""
    import shapely

    pts = outline.points
    s = np.r_[0, np.cumsum(np.hypot(*np.diff(pts, axis=0).T))]
    line = shapely.LineString(CubicSpline(s, pts)(np.linspace(0, s[-1], n)))
    return shapely.distance(shapely.points(points), line)


@pytest.mark.parametrize("spec", ["naca2412-closed", "geometries/tender_front_foil.dat",
                                  "geometries/mast_fairing.csv",
                                  "geometries/tender_strut_fairing.dat"])
def test_smoothing_a_clean_table_changes_little(spec):
    # Generalised cross-validation finds no noise in a clean table: the smoothed points stay
    # within 2e-6 chords of the original curve (measured 4.2e-7 on the NACA 2412, 1.4e-7 to
    # 3.8e-7 on the demo files) and the kind of trailing edge is kept
    foil = pf.load_outlines(spec)[0]
    smooth = E.smooth_outline(foil)
    assert smooth.kind == foil.kind and len(smooth.points) == len(foil.points)
    gap = distance_to_curve(smooth.points, foil).max() / foil.chord
    assert gap < 2e-6


def test_reshape_can_smooth_first():
    foil = pf.load_outlines("geometries/tender_front_foil.dat")[0]
    result = E.reshape(foil, [E.Thickness(scale=1.1)], smooth=True)
    assert result.steps[0].startswith("points smoothed")
    assert result.after.thickness == pytest.approx(1.1 * measure(E.smooth_outline(foil)).thickness,
                                                   rel=1e-6)
