"""Inverse design: recovering an exact section from its exact pressure, partial targets, limits.

Reference: the Karman-Trefftz section and its exact surface pressure with the Kutta condition
(tests/exact.py, conformal map; Katz & Plotkin, Low-Speed Aerodynamics, ch. 6; Milne-Thomson,
Theoretical Hydrodynamics). The design starts from a different section (NACA 0012 with a closed
trailing edge, NACA Report 460), is written to a file, read back, and compared point by point
with the exact surface.
"""

from __future__ import annotations

import numpy as np
import pytest
import shapely
from exact import KarmanTrefftz

import panelflow as pf
from panelflow.design.check import surface_cp
from panelflow.design.inverse import ThicknessLimit, inverse_design
from panelflow.design.run import run_inverse
from panelflow.design.targets import CpTarget, design_spans, plateau_target, read_target
from panelflow.errors import InputError
from panelflow.geometry.measure import ChordFrame, _surfaces, measure
from panelflow.geometry.readers import load_outlines

KT = KarmanTrefftz(-0.08 + 0.06j, 8.0)  # 12 % thick, 2.7 % camber, 8-degree trailing edge
ALPHA_CHORD = 2.0  # design angle from the chord line, degrees


def _exact_chord_frame(section, n=20001):
    """Exact surface in its chord frame (dense), with the circle angles and the upper mask."""
    theta = np.sort(np.r_[-section.beta + np.linspace(0.0, 2.0 * np.pi, n),
                          section.leading_edge_angle])
    frame = ChordFrame(section.leading_edge, section.trailing_edge)
    q = frame.to_chord(section.surface(theta))
    return theta, q, theta <= section.leading_edge_angle


def _exact_target(section, alpha_chord_deg):
    """The exact Cp on each surface at an angle from the chord line, as a target table."""
    theta, q, upper = _exact_chord_frame(section, 4001)
    alpha = np.radians(alpha_chord_deg) - section.chord_angle  # from the map's x-axis
    cp = section.cp_at_circle_angles(theta, alpha)

    def side(mask):
        x, c = np.clip(q[mask, 0], 0.0, 1.0), cp[mask]
        order = np.argsort(x)
        x, c = x[order], c[order]
        keep = np.r_[True, np.diff(x) > 0.0]
        return x[keep], c[keep]

    return CpTarget("exact Karman-Trefftz", *side(upper), *side(~upper),
                    source="tests/exact.py")


def _distance_to_exact(outline, section) -> float:
    """Largest distance (chords) of the outline's points from the exact surface."""
    _, q, _ = _exact_chord_frame(section)
    curve = shapely.LineString(q)
    pts = outline.points  # the start's frame is the chord frame here (NACA 0012, chord 1)
    return float(np.max(shapely.distance(shapely.points(pts), curve)))


@pytest.fixture(scope="module")
def kt_target():
    return _exact_target(KT, ALPHA_CHORD)


@pytest.mark.parametrize("point", ["angle", "lift"])
def test_recovers_a_karman_trefftz_section_from_its_exact_pressure(kt_target, tmp_path, point):
    start = pf.load_outlines("naca0012-closed")[0]
    assert _distance_to_exact(start, KT) > 0.02  # a different section indeed
    kw = {"alpha_deg": ALPHA_CHORD} if point == "angle" else {
        "cl": KT.cl(np.radians(ALPHA_CHORD) - KT.chord_angle)}
    path = tmp_path / "recovered.dat"
    run = run_inverse(start, kt_target, path, panels=240, **kw)
    recovered = load_outlines(str(path))[0]
    # the requirement: within 2e-4 chords everywhere (measured 9e-5 at 240 panels,
    # 3.3e-5 at 400; the design model's discretisation error in Cp sets it)
    assert _distance_to_exact(recovered, KT) < 2e-4
    assert run.result.converged
    # the independent re-analysis of the written file matches the exact pressure to the panel
    # method's own accuracy at 480 panels (the start was 0.3 off)
    assert run.designed["rms_mismatch"].value < 2e-3
    assert run.start["rms_mismatch"].value > 0.1


def _front_foil():
    return pf.load_outlines("geometries/tender_front_foil.dat")[0]


def test_a_partial_target_changes_only_its_segment(tmp_path):
    start = _front_foil()
    res = pf.solve(pf.Problem([start], pf.OperatingPoint(alpha_deg=(1.5,)), panels=240))
    xu, cu, _, _ = surface_cp(res)
    x = np.linspace(0.15, 0.55, 81)
    # flatten the upper suction peak between x/c 0.15 and 0.55 a little
    cp = np.interp(x, xu, cu)
    cp = cp + 0.6 * (cp.min() + 0.05 - cp) * np.sin(np.pi * (x - 0.15) / 0.4) ** 2 * (cp < -0.5)
    target = CpTarget("flatter", x, cp, [], [])
    assert design_spans(target) == [(pytest.approx(2 / np.pi * np.arcsin(np.sqrt(0.15))),
                                     pytest.approx(2 / np.pi * np.arcsin(np.sqrt(0.55))))]
    path = tmp_path / "partial.dat"
    run_inverse(start, target, path, alpha_deg=1.5, panels=200)
    new = load_outlines(str(path))[0]
    surf = _surfaces(start)  # the start's own curve (the measures' spline)
    q = surf.frame.to_chord(new.points)
    i_le = int(np.argmin(q[:, 0]))
    upper, lower = q[:i_le + 1], q[i_le:]
    theta_u = np.arccos(np.clip(1.0 - 2.0 * upper[:, 0], -1.0, 1.0))
    theta_l = np.arccos(np.clip(1.0 - 2.0 * lower[:, 0], -1.0, 1.0))
    du = upper[:, 1] - surf.upper(theta_u)
    dl = lower[:, 1] - surf.lower(theta_l)
    outside = (upper[:, 0] < 0.15) | (upper[:, 0] > 0.55)
    # unchanged outside the segment: 1e-9 chords covers the base spline's interpolation of the
    # start (3e-11) and the 12 digits of the written file
    assert np.max(np.abs(du[outside])) < 1e-9
    assert np.max(np.abs(dl)) < 1e-9
    assert np.max(np.abs(du[~outside])) > 2e-4  # and changed inside it


def test_thickness_limit_and_design_lift_hold():
    start = _front_foil()
    m = measure(start)
    res = pf.solve(pf.Problem([start], pf.OperatingPoint(target_cl=0.6), panels=200))
    xu, cu, xl, cl = surface_cp(res)
    target = plateau_target(lambda x: np.interp(x, xu, cu), "upper", -0.64, 0.04, 0.45, 0.8,
                            other=lambda x: np.interp(x, xl, cl))
    lim = ThicknessLimit(m.thickness_position, m.thickness_position, m.thickness, m.thickness)
    r = inverse_design(start, target, cl=0.6, thickness=[lim], panels=200)
    assert r.limits_hold
    assert r.cl == pytest.approx(0.6, abs=1e-9)  # an equality of the design model
    check = pf.solve(pf.Problem([r.outline], pf.OperatingPoint(target_cl=0.6), panels=400))
    # the suction peak came down (measured -0.711 to -0.668 at 400 panels)
    assert check[0].bodies[0].cp_min > res[0].bodies[0].cp_min + 0.03


def test_a_new_trailing_edge_thickness_for_a_whole_section(kt_target):
    r = inverse_design(pf.load_outlines("naca0012-closed")[0], kt_target, ALPHA_CHORD,
                       panels=160, trailing_edge_thickness=0.004, stages=1)
    m = measure(r.outline)
    assert m.trailing_edge_thickness == pytest.approx(0.004, abs=1e-9)
    assert r.outline.kind == "blunt"


def test_refusals():
    start = _front_foil()
    target = CpTarget("t", [0.1, 0.5], [-0.5, -0.5], [], [])
    with pytest.raises(InputError, match="either"):
        inverse_design(start, target)
    with pytest.raises(InputError, match="either"):
        inverse_design(start, target, 1.0, 0.5)
    with pytest.raises(InputError, match="whole section"):
        inverse_design(start, target, 1.0, trailing_edge_thickness=0.01)
    with pytest.raises(InputError, match="trailing edge"):
        inverse_design(pf.load_outlines("ellipse:1,0.2")[0], target, 1.0)


@pytest.mark.parametrize("text, message", [
    ("x,cp\n0.1,-0.5\n", "surface"),
    ("x,surface,cp\n0.1,upper,-0.5\n0.2,middle,-0.5\n", "line 3: surface 'middle'"),
    ("x,surface,cp\n0.1,upper,-0.5\n0.2,upper,abc\n", "line 3"),
    ("x,surface,cp\n0.2,upper,-0.5\n0.1,upper,-0.5\n", "increase"),
    ("x,surface,cp,speed\n", "either"),
    ("x,surface,cp\n0.1,upper,1.5\n0.2,upper,-0.5\n", "above 1"),
])
def test_target_table_errors_name_the_file_and_line(tmp_path, text, message):
    p = tmp_path / "target.csv"
    p.write_text(text)
    with pytest.raises(InputError, match=message) as info:
        read_target(p)
    assert "target.csv" in str(info.value)


def test_target_table_with_speeds(tmp_path):
    p = tmp_path / "target.csv"
    p.write_text("# a comment\nx surface speed\n0.1 upper 1.2\n0.5 upper 1.1\n"
                 "0.2 lower 0.9\n0.6 lower 0.95\n")
    t = read_target(p)
    # Bernoulli: Cp = 1 - q^2
    assert t.upper_cp.tolist() == pytest.approx([1 - 1.44, 1 - 1.21])
    assert t.at([0.3], "lower")[1].tolist() == [True]
    assert t.at([0.7], "lower")[1].tolist() == [False]
    assert design_spans(t) == [(pytest.approx(-2 / np.pi * np.arcsin(np.sqrt(0.6))),
                                pytest.approx(-2 / np.pi * np.arcsin(np.sqrt(0.2)))),
                               (pytest.approx(2 / np.pi * np.arcsin(np.sqrt(0.1))),
                                pytest.approx(2 / np.pi * np.arcsin(np.sqrt(0.5))))]
