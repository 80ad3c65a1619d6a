"""The printed error estimate against exact answers when the input, not the panels, limits it.

References, all independent of panelflow: the exact Karman-Trefftz and Joukowski solutions and
the exact ellipse (tests/exact.py: conformal maps, Katz & Plotkin ch. 6, Milne-Thomson), and
thin-airfoil theory (Anderson, *Fundamentals of Aerodynamics*, ch. 4: cl = 2 pi alpha for a
symmetric section of vanishing thickness).

Inputs are what users give: exact surface points, but only 35 to 200 of them, clustered at nose
and tail (equal steps of the circle angle) or evenly spaced along the surface, with no point at
the nose; scatter of 1e-5 to 3e-4 chord; built-in sections of 1 % thickness.
"""

from pathlib import Path

import numpy as np
import pytest
from conftest import exact_outline
from exact import KarmanTrefftz, ellipse_cp

import panelflow as pf
from panelflow.analysis.accuracy import INPUT_FACTOR
from panelflow.geometry.outline import Outline
from panelflow.geometry.specs import parse_spec

ROOT = Path(__file__).resolve().parent.parent
ALPHAS = np.array([0.0, 4.0, 8.0])
SECTIONS = {
    "kt-10deg": KarmanTrefftz(-0.08 + 0.08j, 10.0),
    "joukowski": KarmanTrefftz(-0.10 + 0.05j, 0.0),
    "kt-5deg-symmetric": KarmanTrefftz(-0.10 + 0.00j, 5.0),
    "kt-15deg-sharp-nose": KarmanTrefftz(-0.05 + 0.05j, 15.0),
}


def kt_points(section, n, spacing, offset=0.37):
    """n + 1 exact surface points, none at the nose (``offset`` of a step away from it).

    ``clustered``: equal steps of the circle angle (close together at nose and tail);
    ``uniform``: equal steps of arc length.
    """
    frac = np.r_[0.0, (np.arange(1, n) + offset - 0.5) / n, 1.0]
    if spacing == "clustered":
        theta = -section.beta + 2 * np.pi * frac
    else:
        t = -section.beta + np.linspace(0.0, 2 * np.pi, 20001)
        p = section.surface(t)
        s = np.r_[0.0, np.cumsum(np.hypot(*np.diff(p, axis=0).T))]
        theta = np.interp(frac * s[-1], s, t)
    pts = section.surface(theta)
    pts[0] = pts[-1] = section.trailing_edge
    return pts


def exact(section, alphas=ALPHAS):
    a = np.radians(alphas)
    return (np.array([section.cl(x) for x in a]), np.array([section.cm(x) for x in a]))


def ratios(section, pts, n_panels, alphas=ALPHAS):
    """|error| / printed estimate for cl and cm (moments about the exact quarter chord)."""
    r = pf.analyse([Outline.from_points(pts)], alphas, n_panels=n_panels,
                   reference_point=section.quarter_chord)
    cl, cm = exact(section, alphas)
    return np.abs(r.cl - cl) / r.cl_error_estimate, np.abs(r.cm - cm) / r.cm_error_estimate


# ------------------------------------------------------------------------- coarse clean inputs
@pytest.mark.parametrize("name", ["kt-10deg", "kt-15deg-sharp-nose"])
@pytest.mark.parametrize("spacing", ["clustered", "uniform"])
@pytest.mark.parametrize("n", [35, 60, 120])
@pytest.mark.parametrize("offset", [0.13, 0.71])
def test_estimate_brackets_coarse_inputs(name, spacing, n, offset):
    # Before the input's share was in the estimate these errors were up to 27 times the
    # estimate (uniform 60 points: 12-20 times). A sample of the calibration below.
    lift, moment = ratios(SECTIONS[name], kt_points(SECTIONS[name], n, spacing, offset), 200)
    assert np.all(lift <= 1.0) and np.all(moment <= 1.0)


@pytest.mark.slow
def test_input_factor_calibration():
    # INPUT_FACTOR was calibrated (analysis/accuracy.py) on 4 sections x 2 spacings x 8 point
    # counts x 5 offsets x 100 and 400 panels x 3 angles = 1920 cases: with the factor 2 every
    # error within its estimate (largest ratio 0.91 for cl, 0.92 for cm; median 0.11 and 0.10),
    # with factor 1 only 97.3 % (cl) and 99.3 % (cm). This repeats 120 of them at 200 panels.
    worst = []
    for section in SECTIONS.values():
        for spacing in ("clustered", "uniform"):
            for n in (35, 45, 60, 120, 200):
                for offset in (0.13, 0.55, 0.9):
                    lift, moment = ratios(section, kt_points(section, n, spacing, offset), 200)
                    worst.append(max(lift.max(), moment.max()))
    assert INPUT_FACTOR == 2.0
    assert len(worst) == 120 and max(worst) <= 1.0


@pytest.mark.parametrize("name", ["joukowski", "kt-10deg"])
def test_clustered_input_converges_at_second_order(name):
    # The cl error due to the points alone (against the same section drawn with 2000 points, at
    # the same 400 panels) for clean clustered inputs: measured order 1.99 (Joukowski) and
    # 1.85 (kt-10deg). The half-input change then shrinks as fast, so the input's share of the
    # estimate vanishes as the input is refined.
    section = SECTIONS[name]
    ref = pf.analyse([exact_outline(section)], [4.0], n_panels=400, error_estimate=False,
                     reference_point=section.quarter_chord).cl[0]
    sizes = np.array([35, 50, 70, 100, 140, 200, 280])
    err = [abs(pf.analyse([Outline.from_points(kt_points(section, n, "clustered"))], [4.0],
                          n_panels=400, error_estimate=False,
                          reference_point=section.quarter_chord).cl[0] - ref) for n in sizes]
    order = -np.polyfit(np.log(sizes), np.log(err), 1)[0]
    assert order > 1.6


@pytest.mark.parametrize("spacing", ["clustered", "uniform"])
@pytest.mark.parametrize("n", [35, 45, 60, 100])
def test_chord_comes_from_the_curve_through_the_points(spacing, n):
    # No point at the nose. Chord error of the farthest input point against that of the curve's
    # farthest point, measured: clustered 35/45/60/100 points -1.1e-3/-7.2e-4/-4.5e-4/-7.4e-5
    # against -5.3e-4/-1.6e-4/-6.2e-5/-4.3e-6; uniform -4.1e-3/-1.4e-3/-6.0e-3/-1.8e-3 against
    # -3.6e-3/-1.1e-3/-4.2e-3/-8.6e-4 (evenly spaced points leave the nose itself a guess: the
    # estimate's input share covers that, test_estimate_brackets_coarse_inputs).
    section = SECTIONS["kt-10deg"]
    pts = kt_points(section, n, spacing)
    farthest = np.max(np.hypot(*(pts - section.trailing_edge).T))
    fitted = Outline.from_points(pts).chord
    assert abs(fitted - section.chord) < abs(farthest - section.chord)
    if spacing == "clustered" and n >= 45:
        assert fitted == pytest.approx(section.chord, rel=2e-4)


# ------------------------------------------------------------------------- scatter
@pytest.mark.parametrize("sigma", [1e-5, 1e-4])
@pytest.mark.parametrize("seed", range(4))
def test_estimate_brackets_scattered_inputs(sigma, seed):
    # Scatter of sigma times the chord on 160 clustered points. Before, the estimate stayed at
    # the panels' 2e-4 while cl moved by up to 11 % (demo foil, 3e-4 chord). Measured over 195
    # draws (two sections, 60 and 160 points, 1e-5 to 3e-4): 99.5 % bracketed, largest ratio
    # 1.05; the draws here are all bracketed (seeds fixed).
    section = SECTIONS["kt-10deg"]
    rng = np.random.default_rng(100 + seed)
    pts = kt_points(section, 160, "clustered", offset=rng.uniform())
    pts = pts + rng.normal(0.0, sigma * section.chord, pts.shape)
    pts[0] = pts[-1] = section.trailing_edge
    try:
        lift, moment = ratios(section, pts, 200)
    except pf.GeometryError as exc:  # the scatter crossed the surfaces near the tail
        assert "crosses itself" in str(exc)
        return
    assert np.all(lift <= 1.0)


def test_noisy_demo_foil_says_the_input_limits_the_result():
    rng = np.random.default_rng(8)
    from test_quality import digitised, front_foil_points

    r = pf.analyse([Outline.from_points(digitised(front_foil_points(), 3e-4, rng))], [4.0])
    limit = [n for n in r.notes if n.startswith("the input points, not the panels")]
    assert limit and "scatter by" in limit[0] and "digitising noise" in limit[0]
    inputs = r.extra_error.inputs.cl[0]
    assert inputs > 2 * (r.cl_error_estimate[0] - inputs)


# ------------------------------------------------------------------------- thin sections
THIN = {  # exact sections of about 1 % thickness (measured 0.99 % for both)
    "symmetric": KarmanTrefftz(-0.0077 + 0.00j, 0.0),
    "cambered": KarmanTrefftz(-0.0077 + 0.02j, 0.0),
}


@pytest.mark.parametrize("name", sorted(THIN))
@pytest.mark.parametrize("n_panels", [80, 120, 200, 400])
@pytest.mark.parametrize("drawn", ["exact 2000 points", "built-in spec"])
def test_one_percent_sections_are_bracketed(name, n_panels, drawn):
    # Measured ratios 0.01-0.74 (cl) and 0.00-0.40 (cm) over these cases; errors 2e-6 to 5e-4
    # of cl.
    section = THIN[name]
    if drawn == "built-in spec":
        c = section.center
        o = parse_spec(f"karman-trefftz:{c.real},{c.imag},0")
    else:
        o = exact_outline(section)
    assert pf.geometry.quality.body_thickness(o) == pytest.approx(0.0099, abs=2e-4)
    r = pf.analyse([o], [0.0, 2.0, 6.0], n_panels=n_panels,
                   reference_point=section.quarter_chord)
    cl, cm = exact(section, [0.0, 2.0, 6.0])
    assert np.all(np.abs(r.cl - cl) <= r.cl_error_estimate)
    assert np.all(np.abs(r.cm - cm) <= r.cm_error_estimate)


@pytest.mark.parametrize("thickness", [0.005, 0.01])
@pytest.mark.parametrize("n_panels", [80, 200, 400])
def test_thin_naca_sections_against_thin_airfoil_theory(thickness, n_panels):
    # Symmetric NACA sections (NACA Report 460 thickness, closed tail) at 4 deg: thin-airfoil
    # theory gives cl = 2 pi sin(alpha) for zero thickness (the flat plate is exact in
    # potential flow); the panel solution lies above by the thickness effect, measured
    # 0.82 t (the existing thin-airfoil test fits 0.85 for thicker sections). Before, sections of
    # 0.1 % thickness at 200 panels were 3 % above with an estimate 30 times too small; now they
    # are refused (tests/test_quality.py) and these are solved with the excess inside
    # 0.6 t to 1.0 t.
    from panelflow.geometry import sections

    x = sections._cosine_stations(801)
    yt = sections._thickness(x, thickness, True)
    o = Outline.from_points(np.vstack([np.c_[x, yt][::-1], np.c_[x, -yt][1:]]))
    r = pf.analyse([o], [4.0], n_panels=n_panels)
    excess = r.cl[0] / (2 * np.pi * np.sin(np.radians(4.0))) - 1.0
    assert 0.6 * thickness < excess < 1.0 * thickness
    # and the estimate is finer than the thickness effect (measured at most 0.27 % of cl)
    assert r.cl_error_estimate[0] < thickness * r.cl[0]


# ------------------------------------------------------------------------- built-in sections
@pytest.mark.parametrize("b", [0.1, 0.05])
def test_built_in_ellipse_converges(b):
    # Drawn with 161 points the ellipse's surface Cp stalled at an error of 5e-3 (b = 0.1) and
    # 0.12 (b = 0.05) from 400 panels up; drawn at the built-in resolution (801 points) it
    # converges: measured 4.7e-3, 9.9e-4, 2.7e-4 (b = 0.1) and 6.5e-2, 7.0e-3, 1.5e-3 at 200,
    # 400, 800 panels.
    o = parse_spec(f"ellipse:1,{b}")
    errors = []
    for n in (200, 400, 800):
        r = pf.analyse([o], [4.0], n_panels=n, error_estimate=False)
        body = r[0].bodies[0]
        exact_cp = ellipse_cp(1.0, b, np.radians(4.0), np.c_[body.x, body.y])
        errors.append(np.max(np.abs(body.cp - exact_cp)))
    order = -np.polyfit(np.log([200, 400, 800]), np.log(errors), 1)[0]
    assert order > 1.5


# ------------------------------------------------------------------------- rounded tails
def test_a_body_without_trailing_edge_says_it_carries_no_lift():
    # The demo mast fairing (rounded nose and tail) at 10 deg: cl is zero in this model, and the
    # centre of pressure of a pure couple is not a point (before: x_cp 6018 with no word).
    (o,) = pf.load_outlines(str(ROOT / "geometries" / "mast_fairing.csv"))
    r = pf.solve(pf.Problem([o], pf.OperatingPoint(alpha_deg=[0.0, 10.0])))
    assert np.all(np.abs(r.cl) < 1e-12)  # zero circulation to round-off
    assert np.all(np.isnan(r.inviscid.x_center_of_pressure))
    assert any("carries no circulation and no lift" in n for n in r.notes)
    assert any(n.startswith("alpha 10: no centre of pressure") for n in r.notes)


def test_centre_of_pressure_where_lift_places_it():
    # NACA 0012 at 0 deg: no lift, no centre; at 4 deg near the quarter chord (thin-airfoil
    # theory: at c/4 for a symmetric section; measured 0.2617 with thickness)
    r = pf.analyse([parse_spec("naca0012")], [0.0, 4.0])
    assert np.isnan(r.x_center_of_pressure[0])
    assert r.x_center_of_pressure[1] == pytest.approx(0.25, abs=0.02)
    assert r[1].x_center_of_pressure == r.x_center_of_pressure[1]
