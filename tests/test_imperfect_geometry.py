"""Imperfect geometry gives no confident wrong answer: smoothing that keeps the trailing edge,
the smoothing's share of the error estimate, mirrored outlines, and the suction peak's estimate.

Reference: the exact Karman-Trefftz flow of ``exact.py`` (Katz & Plotkin, *Low-Speed
Aerodynamics*, ch. 6; Milne-Thomson, *Theoretical Hydrodynamics*), on tables of its surface
points with invented scatter and rounding of the kind a digitised drawing has.
"""

from __future__ import annotations

import numpy as np
import pytest
from exact import KarmanTrefftz

import panelflow as pf
from panelflow.analysis.problem import OperatingPoint, Problem
from panelflow.errors import GeometryError
from panelflow.geometry import quality
from panelflow.geometry.outline import BLUNT, SHARP, Outline
from panelflow.geometry.readers import parse_spec

# The section of the trial (circle centre -0.08 + 0.06i, trailing-edge angle 8 deg).
TRIAL = KarmanTrefftz(-0.08 + 0.06j, 8.0)


def kt_table(section: KarmanTrefftz, n_points: int) -> np.ndarray:
    """``n_points`` exact surface points, evenly spaced round the circle, trailing edge first."""
    pts = section.surface(section.circle_angles(n_points - 1))
    pts[0] = pts[-1] = section.trailing_edge
    return pts


def noisy(pts: np.ndarray, level: float, seed: int, decimals: int = 6) -> np.ndarray:
    """Normal scatter of ``level`` chords in x and y, the end points kept, then rounded."""
    rng = np.random.default_rng(seed)
    out = pts + rng.normal(0.0, level * np.ptp(pts[:, 0]), pts.shape)
    out[0], out[-1] = pts[0], pts[-1]
    return np.round(out, decimals)


def table_outline(pts: np.ndarray) -> Outline:
    """As a coordinate table reads: input line numbers kept (title on line 1)."""
    return Outline.from_points(pts, name="trial section", source="trial.dat",
                               lines=np.arange(len(pts)) + 2)


def exact_cl(section: KarmanTrefftz, alpha_deg: float) -> float:
    return section.cl(np.radians(alpha_deg))


# ----------------------------------------------------------------- 1. smoothing keeps the edge
@pytest.mark.parametrize("seed", [1, 3, 6, 7, 9, 10, 11])
def test_smoothing_finds_the_sharp_edge_that_scatter_hid(seed):
    # Scatter of 3e-4 chord hides the 8 deg corner from the reader (the body reads as having
    # no trailing edge, hence no lift); smoothed within 0.002 the corner at the input's first
    # point shows again and is kept, exactly where the table put it.
    o = table_outline(noisy(kt_table(TRIAL, 161), 3e-4, seed))
    assert o.kind == "none"  # what the trial met: the scatter hides the corner
    fit = quality.smoothed(o, 0.002)
    assert fit.edge_found and fit.outline.kind == SHARP
    np.testing.assert_array_equal(fit.outline.trailing_edge.point, TRIAL.trailing_edge.round(6))
    assert "hidden by the scatter" in fit.describe()
    try:
        result = pf.solve(Problem((o,), OperatingPoint(alpha_deg=(4.0,)), smoothing=0.002))
    except GeometryError as e:  # seed 10: the spline through the smoothed points still loops
        assert "crosses itself" in str(e)
        return
    # the lift is there: within 2 % of the exact 0.86 (the smoothing's share is checked below)
    assert result.cl[0] == pytest.approx(exact_cl(TRIAL, 4.0), rel=0.02)
    assert not any("no trailing edge" in n for n in result.notes)


@pytest.mark.parametrize("tol", [0.002, 0.02, 0.2])
@pytest.mark.parametrize("kind_spec", [("sharp", None), ("blunt", "naca0012")])
def test_smoothing_keeps_kind_and_place_of_the_edge(kind_spec, tol):
    kind, spec = kind_spec
    o = table_outline(kt_table(TRIAL, 161).round(6)) if spec is None else parse_spec(spec)
    assert o.kind == kind
    fit = quality.smoothed(o, tol)
    again = Outline.from_points(fit.outline.points)
    assert fit.outline.kind == again.kind == kind
    np.testing.assert_allclose(again.trailing_edge.point, o.trailing_edge.point, atol=1e-12)
    assert f"{kind} trailing edge kept" in fit.describe()


@pytest.mark.parametrize("spec", ["naca4412", "naca0006"])
def test_smoothing_that_would_round_the_edge_is_refused(spec):
    # Within 0.2 chord the smoothed surfaces no longer meet the base at corners: refused, with
    # the body named and a smaller distance suggested.
    o = parse_spec(spec)
    assert o.kind == BLUNT
    with pytest.raises(GeometryError, match=rf"{spec}: smoothing within 0.2 would round or "
                                            r"close the blunt trailing edge.*smaller distance"):
        quality.smoothed(o, 0.2)


# ----------------------------------------------------------------- 3. outlines drawn backwards
def mirrored(o: Outline) -> Outline:
    """The same points with x negated, as a table drawn from right to left reads."""
    pts = np.array(o.points)
    pts[:, 0] *= -1.0
    return Outline.from_points(pts, name=o.name, source=o.source)


@pytest.mark.parametrize("spec", ["naca2412", "naca0012"])
def test_mirrored_outline_is_warned_about_in_check_and_solve(spec, tmp_path, capsys):
    from panelflow.cli.main import main
    from panelflow.geometry.check import inspect

    o = mirrored(parse_spec(spec))
    assert abs(o.chord_angle_deg) > 179.0
    report = inspect(o)
    assert report.ok  # a user may mean it: warned, not refused
    assert any(w.startswith(f"{spec}: the trailing edge lies upstream") and
               "the flow meets the trailing edge first" in w for w in report.warnings)
    result = pf.solve(Problem((o,), OperatingPoint(alpha_deg=(4.0,))))
    assert any(n.startswith(f"{spec}: the trailing edge lies upstream") for n in result.notes)
    # and the forward outline has no such note
    forward = pf.solve(Problem((parse_spec(spec),), OperatingPoint(alpha_deg=(4.0,))))
    assert not any("upstream of the leading edge" in n for n in forward.notes)
    path = tmp_path / "mirrored.dat"
    path.write_text(f"{spec} mirrored\n" + "".join(f"{x:.6f} {y:.6f}\n" for x, y in o.points))
    assert main(["check", str(path)]) == 0
    assert "the flow meets the trailing edge first" in capsys.readouterr().out


@pytest.mark.parametrize("turn_deg, warned", [(0.0, False), (30.0, False), (-89.0, False),
                                              (89.5, False), (91.0, True), (-120.0, True),
                                              (180.0, True)])
def test_the_rule_is_an_incidence_beyond_90_degrees(turn_deg, warned):
    from panelflow.geometry.check import reversed_note

    o = parse_spec("naca2412").rotated(turn_deg, about=(0.5, 0.0))
    assert (reversed_note(o) is not None) == warned


def test_a_body_without_trailing_edge_is_never_backwards():
    from panelflow.geometry.check import reversed_note

    t = np.linspace(0.0, 2.0 * np.pi, 121)
    ellipse = Outline.from_points(np.c_[-0.5 * np.cos(t), 0.1 * np.sin(t)], name="strut")
    assert ellipse.kind == "none"
    assert reversed_note(ellipse) is None and reversed_note(ellipse.rotated(170.0)) is None


# ----------------------------------------------------------------- exact suction peak
def exact_cp_min(section: KarmanTrefftz, alpha_deg: float) -> float:
    """Lowest Cp of the exact flow: a fine sweep of the circle angle, then a bounded search
    about its best sample (scipy.optimize.minimize_scalar)."""
    from scipy.optimize import minimize_scalar

    a = np.radians(alpha_deg)
    theta = np.linspace(-np.pi, np.pi, 40001)
    i = int(np.argmin(section.cp_at_circle_angles(theta, a)))
    found = minimize_scalar(lambda t: float(section.cp_at_circle_angles(np.array([t]), a)[0]),
                            bounds=(theta[i - 1], theta[i + 1]), method="bounded",
                            options={"xatol": 1e-12})
    return float(found.fun)


def tables(kind: str) -> np.ndarray:
    """The trial's kinds of imperfect table of the section (161 points unless named)."""
    base = kt_table(TRIAL, 161)
    if kind == "clean":
        return base.round(6)
    if kind.startswith("rounded"):
        return base.round(int(kind[-1]))
    if kind.startswith("points"):
        return kt_table(TRIAL, int(kind.split()[1])).round(6)
    _, level, seed = kind.split()
    return noisy(base, float(level), int(seed))


ANGLES = (0.0, 4.0, 8.0)


def solved(pts, smoothing=None, **op):
    problem = Problem((table_outline(pts),), OperatingPoint(alpha_deg=ANGLES, **op),
                      smoothing=smoothing)
    return pf.solve(problem)


# ----------------------------------------------------------------- 2. the smoothing's share
# The trial: smoothing within 0.002 (0.05 % of the chord), 19 of 58 lifts outside the printed
# estimate (clean table: error -3.6e-4 against 1.8e-4). The cases below span the trial's: a
# clean table, rounding to 4 and 3 decimals, scatter of 1e-4 and 3e-4 chord (the given points
# of the rounded-to-3 and of most scattered tables cross at the thin trailing edge, so the
# smoothing is compared with other smoothings there).
SMOOTHED_CASES = ["clean", "rounded 4", "rounded 3", "noise 1e-4 1", "noise 1e-4 3",
                  "noise 1e-4 5", "noise 3e-4 1", "noise 3e-4 6"]


@pytest.mark.parametrize("kind", SMOOTHED_CASES)
def test_smoothing_share_brackets_the_lift_error(kind):
    result = solved(tables(kind), smoothing=0.002)
    exact = np.array([exact_cl(TRIAL, a) for a in ANGLES])
    error = np.abs(result.cl - exact)
    # the printed estimate must hold the true error at every angle (no tolerance: that is the
    # claim the +/- makes)
    assert np.all(error <= result.cl_error_estimate), (error, result.cl_error_estimate)
    assert any(n.startswith("the smoothing's share of the error estimate") for n in result.notes)
    share = result.inviscid.extra_error.smoothing
    assert np.all(share.cl > 0) and share.reference


def test_smoothing_share_is_what_the_clean_table_lacked():
    # Without the smoothing's share the clean table's estimate is below its error (the trial's
    # finding); the share is what lifts it above.
    result = solved(tables("clean"), smoothing=0.002)
    exact = np.array([exact_cl(TRIAL, a) for a in ANGLES])
    share = result.inviscid.extra_error.smoothing.cl
    error = np.abs(result.cl - exact)
    assert np.all(result.cl_error_estimate - share < error)
    assert np.all(result.cl_error_estimate >= error)


# ----------------------------------------------------------------- 4. the suction peak
# The trial's cases (25-point table, a thin section, scatter of 1e-4 chord, rounding) with the
# exact peak of the mapped flow. Where no honest estimate is available (a smoothing that could
# be compared only with other smoothings) the estimate is NaN and a note says so.
def thin_section() -> KarmanTrefftz:
    # 2.3 % thick (measured on the 161-point table), suction peak about -40 at 4 deg
    return KarmanTrefftz(-0.005 + 0.01j, 4.0)


PEAK_CASES = ["points 25", "points 61", "clean", "rounded 4", "noise 1e-4 4", "thin",
              "clean smoothed", "rounded 4 smoothed", "noise 3e-4 1 smoothed"]


@pytest.mark.parametrize("kind", PEAK_CASES)
def test_suction_peak_estimate_brackets_the_exact_error(kind):
    section = thin_section() if kind == "thin" else TRIAL
    smoothing = 0.002 if kind.endswith("smoothed") else None
    pts = (kt_table(section, 161).round(6) if kind == "thin"
           else tables(kind.removesuffix(" smoothed")))
    result = solved(pts, smoothing=smoothing)
    peak = result.fine.cp_min[:, 0]
    estimate = result.cp_min_error_estimate[:, 0]
    exact = np.array([exact_cp_min(section, a) for a in ANGLES])
    known = np.isfinite(estimate)
    # every finite estimate holds the true error (no tolerance: that is the claim)
    assert np.all(np.abs(peak - exact)[known] <= estimate[known]), (peak, exact, estimate)
    # an unknown or large one is said in the notes, with the body and the angle
    for i in np.flatnonzero(~known | (estimate > 0.05 * np.abs(peak))):
        assert any(n.startswith(f"alpha {ANGLES[i]:g}: the suction peak of trial section")
                   for n in result.notes)
    if kind in ("clean", "rounded 4"):  # a good table gets an estimate at every angle
        assert np.all(known)


@pytest.mark.parametrize("center, te_deg", [(-0.08 + 0.06j, 8.0), (-0.10 + 0.05j, 5.0)])
def test_suction_peak_order_is_above_the_one_assumed(center, te_deg):
    # The Richardson estimate of the peak takes order CP_ORDER = 1.5; measured on exact outlines
    # (tests/conftest.py) from 50 to 800 panels the order is 1.7 to 2.0.
    from conftest import exact_outline

    from panelflow.analysis.accuracy import CP_ORDER

    section = KarmanTrefftz(center, te_deg)
    o = exact_outline(section)
    counts = np.array([50, 100, 200, 400, 800])
    exact = exact_cp_min(section, 4.0)
    errors = [abs(pf.analyse([o], [4.0], n_panels=int(n), error_estimate=False).fine.cp_min[0, 0]
                  - exact) for n in counts]
    order = -np.polyfit(np.log(counts), np.log(errors), 1)[0]
    assert order > CP_ORDER


def test_inception_speed_comes_with_its_range_in_files(tmp_path):
    from panelflow.analysis.result import margin_columns
    from panelflow.conditions.cavitation import inception_speed

    result = solved(tables("points 25"), depth=0.5, speed=12.0, fluid="sea-water")
    cav = result.cavitation
    columns = margin_columns(result)
    for key in ("cp_min_error_estimate", "inception_speed", "inception_speed_low",
                "inception_speed_high"):
        assert key in columns
    # the range is the inception speed of the peak -/+ its estimate, through the same formula
    peak, est = result.fine.cp_min[:, 0], result.cp_min_error_estimate[:, 0]
    known = np.isfinite(est)
    assert known.any() and not known.all()  # 25 points: some peaks resolved, some not
    args = (cav.depth, cav.density, cav.vapour_pressure, cav.atmospheric_pressure)
    low, high = cav.section_inception_speed_low[known], cav.section_inception_speed_high[known]
    np.testing.assert_allclose(low, inception_speed(peak[known] - est[known], *args), rtol=1e-12)
    assert np.all(low < cav.section_inception_speed[known])
    assert np.all(cav.section_inception_speed[known] <= high)
    # the exact peak's inception speed lies inside the range
    exact = np.array([exact_cp_min(TRIAL, a) for a in ANGLES])
    v_exact = inception_speed(exact, *args)
    assert np.all((low <= v_exact[known]) & (v_exact[known] <= high))
    for i in np.flatnonzero(known):
        assert any(n.startswith(f"alpha {ANGLES[i]:g}: the suction peak of trial section, Cp")
                   and "the inception speed" in n for n in cav.notes)
    # without an estimate the range is unknown and the note says the speed is unchecked
    assert np.all(np.isnan(cav.section_inception_speed_low[~known]))
    for i in np.flatnonzero(~known):
        assert any(n.startswith(f"alpha {ANGLES[i]:g}: the inception speed") and "unchecked" in n
                   for n in cav.notes)
