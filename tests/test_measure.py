"""Section measures against exact geometry: ellipses, the NACA 4-digit equations (Report 460),
Karman-Trefftz sections (conformal map, tests/exact.py), and their convergence with the number
of points."""

import numpy as np
import pytest
from conftest import exact_outline
from exact import KarmanTrefftz
from scipy.optimize import minimize_scalar

import panelflow as pf
from panelflow.errors import GeometryError
from panelflow.geometry.measure import decompose, measure, measure_shape
from panelflow.geometry.outline import Outline
from panelflow.geometry.sections import ellipse, naca4

# NACA Report 460 closed-trailing-edge thickness coefficients (a4 = -0.1036: common practice)
A = (0.2969, -0.1260, -0.3516, 0.2843, -0.1036)


def report460_exact(t):
    """Exact figures of the symmetric closed 4-digit section of thickness t, from its equation:
    nose radius 12.5 a0^2 t^2 (y = 5 t a0 sqrt(x) near the nose), trailing-edge angle from the
    slope 5 t (a0/2 + a1 + 2 a2 + 3 a3 + 4 a4), area 10 t (2 a0/3 + a1/2 + a2/3 + a3/4 + a4/5),
    and the maximum of the polynomial (not exactly t: the equation peaks a hair above it)."""
    a0, a1, a2, a3, a4 = A
    slope = 5 * t * (a0 / 2 + a1 + 2 * a2 + 3 * a3 + 4 * a4)
    best = minimize_scalar(
        lambda x: -5 * t * (a0 * np.sqrt(x) + a1 * x + a2 * x**2 + a3 * x**3 + a4 * x**4),
        bounds=(0.2, 0.4), method="bounded", options={"xatol": 1e-12})
    return {"leading_edge_radius": 12.5 * a0**2 * t**2,
            "trailing_edge_angle_deg": 2 * np.degrees(np.arctan(-slope)),
            "area": 10 * t * (2 * a0 / 3 + a1 / 2 + a2 / 3 + a3 / 4 + a4 / 5),
            "thickness": -2 * best.fun, "thickness_position": best.x}


@pytest.mark.parametrize("a,b", [(2.0, 1.0), (3.0, 0.5), (1.0, 1.0)])
def test_ellipse(a, b):
    # Exact: chord 2a, thickness 2b at the middle, nose radius b^2/a, area pi a b, rounded tail.
    m = measure(ellipse(a, b))
    c = 2 * a
    assert m.chord == pytest.approx(c, rel=1e-12)
    assert m.thickness == pytest.approx(2 * b / c, rel=1e-12)
    assert m.thickness_position == pytest.approx(0.5, abs=1e-10)
    assert m.camber == 0.0 and np.isnan(m.camber_position)
    # 161 points evenly spaced in the ellipse's angle; measured within 4.2e-7 chords (circle)
    assert m.leading_edge_radius == pytest.approx(b * b / a / c, abs=1e-6)
    assert m.area == pytest.approx(np.pi * a * b / c**2, abs=1e-8)  # measured 2.6e-9
    assert m.trailing_edge_angle_deg == 180.0 and m.trailing_edge_thickness == 0.0


@pytest.mark.parametrize("t", [0.06, 0.12, 0.21])
def test_naca_four_digit(t):
    exact = report460_exact(t)
    m = measure(naca4(f"00{round(t * 100):02d}", n_points=201, closed_te=True))
    # 201 points (nose a point): measured relative errors 3.5e-5 (radius), 1.9e-9 (area),
    # 2.4e-9 (thickness), position within 2.6e-7 and angle within 0.004 deg at t = 0.12
    # (the same relative figures at every thickness: the shape scales)
    assert m.leading_edge_radius == pytest.approx(exact["leading_edge_radius"], rel=1e-4)
    assert m.area == pytest.approx(exact["area"], rel=1e-8)
    assert m.thickness == pytest.approx(exact["thickness"], rel=1e-8)
    assert m.thickness_position == pytest.approx(exact["thickness_position"], abs=1e-6)
    assert m.trailing_edge_angle_deg == pytest.approx(exact["trailing_edge_angle_deg"],
                                                      abs=0.01)
    assert m.trailing_edge_thickness == 0.0 and m.camber == 0.0


def test_open_trailing_edge_thickness():
    # Report 460 open trailing edge: 2 * 5 t (a0 + a1 + a2 + a3 - 0.1015) = 0.02 * 0.126 t/0.12
    m = measure(naca4("0012"))
    assert m.trailing_edge_thickness == pytest.approx(
        10 * 0.12 * (0.2969 - 0.1260 - 0.3516 + 0.2843 - 0.1015), abs=1e-12)


def test_convergence_orders():
    # Errors against the equation for 51 to 801 points; the fitted orders were measured 3.0
    # (nose radius: the spline's slope at the nose), 2.0 (trailing-edge angle: its end
    # curvature) and 4.0 (area: the spline's values).
    exact = report460_exact(0.12)
    counts = np.array([51, 101, 201, 401, 801])
    errors = {k: [] for k in ("leading_edge_radius", "trailing_edge_angle_deg", "area")}
    for n in counts:
        m = measure(naca4("0012", n_points=int(n), closed_te=True))
        for k in errors:
            errors[k].append(abs(getattr(m, k) - exact[k]))
    orders = {k: -np.polyfit(np.log(counts), np.log(v), 1)[0] for k, v in errors.items()}
    assert orders["leading_edge_radius"] > 2.8
    assert orders["trailing_edge_angle_deg"] > 1.9
    assert orders["area"] > 3.8


CONFORMAL = [KarmanTrefftz(-0.10 + 0.05j, 10.0), KarmanTrefftz(-0.08 + 0.10j, 20.0),
             KarmanTrefftz(-0.12 + 0.00j, 5.0)]


def conformal_reference(section: KarmanTrefftz, n=200001):
    """Measures of the exact mapped section from a dense set of its points in its exact chord
    frame (leading edge from tests/exact.py), by linear interpolation between them."""
    le, te = section.leading_edge, section.trailing_edge
    e = (te - le) / np.hypot(*(te - le))
    theta_le = section.leading_edge_angle
    theta = np.linspace(-section.beta, -section.beta + 2 * np.pi, n)
    pts = section.surface(theta)
    q = np.column_stack([(pts - le) @ e, (pts - le) @ np.array([-e[1], e[0]])]) / section.chord
    upper = q[theta < theta_le][::-1]  # nose to tail
    lower = q[theta > theta_le]
    x = np.linspace(0.0, 1.0, 20001)
    yu = np.interp(x, upper[:, 0], upper[:, 1])
    yl = np.interp(x, lower[:, 0], lower[:, 1])
    area = 0.5 * abs(np.sum(q[:-1, 0] * q[1:, 1] - q[1:, 0] * q[:-1, 1]))
    # nose radius: curvature of the exact curve at the nose, by central differences in theta
    h = 1e-4
    p0, pp, pm = (section.surface(np.array([theta_le + d]))[0] for d in (0.0, h, -h))
    d1, d2 = (pp - pm) / (2 * h), (pp - 2 * p0 + pm) / h**2
    radius = np.hypot(*d1) ** 3 / abs(d1[0] * d2[1] - d1[1] * d2[0]) / section.chord
    i, j = int(np.argmax(yu - yl)), int(np.argmax(np.abs(yu + yl)))
    return {"thickness": (yu - yl)[i], "thickness_position": x[i],
            "camber": 0.5 * (yu + yl)[j], "camber_position": x[j], "area": area,
            "leading_edge_radius": radius, "trailing_edge_angle_deg": section.te_angle_deg}


@pytest.mark.parametrize("section", CONFORMAL, ids=lambda s: f"kt-{s.te_angle_deg:g}deg")
def test_conformal_sections(section):
    ref = conformal_reference(section)
    m = measure(exact_outline(section, 400))  # 401 exact points and the exact nose
    assert m.chord == pytest.approx(section.chord, rel=1e-12)
    # The reference is linear interpolation on 2e5 points (values to ~1e-9, positions to the
    # 5e-5 grid of x); the measure works from 401 points. Measured: thickness and camber within
    # 2e-10 (1.6e-6 for the symmetric section, the reference's interpolation noise), their
    # positions within 2e-5, area within 2e-10 relative, nose radius within 7.2e-6 relative and
    # the trailing-edge angle within 0.0055 deg of the map's exact angle.
    assert m.thickness == pytest.approx(ref["thickness"], abs=1e-8)
    assert m.thickness_position == pytest.approx(ref["thickness_position"], abs=1e-4)
    assert m.camber == pytest.approx(ref["camber"], abs=2e-6)
    if ref["camber"] > 1e-4:
        assert m.camber_position == pytest.approx(ref["camber_position"], abs=1e-4)
    assert m.area == pytest.approx(ref["area"], rel=1e-8)
    assert m.leading_edge_radius == pytest.approx(ref["leading_edge_radius"], rel=5e-5)
    assert m.trailing_edge_angle_deg == pytest.approx(ref["trailing_edge_angle_deg"], abs=0.01)


@pytest.mark.parametrize("transform", ["scaled", "rotated", "translated"])
def test_measures_do_not_depend_on_the_frame(transform):
    foil = pf.load_outlines("geometries/tender_front_foil.dat")[0]
    moved = {"scaled": foil.scaled(0.25, about=(0.3, 0.1)),
             "rotated": foil.rotated(17.0, about=(0.5, -0.2)),
             "translated": foil.translated(3.0, -2.0)}[transform]
    a, b = measure(foil).as_dict(), measure(moved).as_dict()
    scale = 0.25 if transform == "scaled" else 1.0
    assert b.pop("chord") == pytest.approx(scale * a.pop("chord"), rel=1e-12)
    # the same shape in chords, up to rounding in the moved points (measured < 1e-10), which
    # moves the flat maxima's positions by up to 1.1e-8
    for k in a:
        tol = 1e-7 if k.endswith("position") else 1e-9
        assert b[k] == pytest.approx(a[k], rel=1e-8, abs=tol), k


def test_nose_between_points():
    # A table without a point at the nose (points evenly spaced in sqrt(x), shifted by half a
    # step): the nose radius comes from a spline through the neighbouring points; measured
    # 0.8 % low at 101 points and 0.4 % at 401. The other figures do not suffer.
    t = 0.12
    exact = report460_exact(t)
    for n, tol in ((101, 0.01), (401, 0.005)):
        u = np.linspace(1.0, -1.0, n)
        u = np.clip(u + 0.5 * (u[0] - u[1]) * (np.abs(u) < 1), -1, 1)
        x = u * u
        y = np.sign(u) * 5 * t * (A[0] * np.sqrt(x) + A[1] * x + A[2] * x**2 + A[3] * x**3
                                  + A[4] * x**4)
        m = measure(Outline.from_points(np.column_stack([x, y])))
        assert m.leading_edge_radius == pytest.approx(exact["leading_edge_radius"], rel=tol)
        assert m.thickness == pytest.approx(exact["thickness"], rel=1e-5)


def test_reversed_points_are_noted_or_refused():
    up = naca4("2412", n_points=101, closed_te=True)
    pts = up.points.copy()
    pts[30, 0] = pts[29, 0] + 2e-4  # a point 2e-4 behind its neighbour towards the tail
    m = measure(Outline.from_points(pts, name="noisy"))
    assert any("go back" in n for n in m.notes)
    pts = up.points.copy()
    pts[30, 0] += 0.05  # a real turn back along the chord
    with pytest.raises(GeometryError, match="turns back"):
        measure(Outline.from_points(pts, name="hooked"))


@pytest.mark.parametrize("spec", ["naca2412-closed", "naca0012", "geometries/tender_front_foil.dat",
                                  "geometries/tender_strut_fairing.dat",
                                  "geometries/mast_fairing.csv", "naca16-212"])
def test_decompose_round_trip(spec):
    foil = pf.load_outlines(spec)[0]
    shape = decompose(foil)
    again = shape.outline()
    assert again.kind == foil.kind
    # the shape measures what its points measure (same stations, same splines): 1e-9
    a, b = measure_shape(shape).as_dict(), measure(again).as_dict()
    for k in a:
        assert b[k] == pytest.approx(a[k], rel=1e-7, abs=1e-9, nan_ok=True), k
    # and the new points lie on the original outline as a chord-length spline draws it:
    # the two interpolations of the same points differ by up to 7.7e-6 chords (measured,
    # mast fairing; 5e-6 for the others)
    from scipy.spatial import cKDTree
    from scipy.interpolate import CubicSpline

    pts = foil.points
    s = np.r_[0, np.cumsum(np.hypot(*np.diff(pts, axis=0).T))]
    dense = CubicSpline(s, pts)(np.linspace(0, s[-1], 200001))
    gap = cKDTree(dense).query(again.points)[0].max() / foil.chord
    assert gap < 2e-5


def test_symmetric_table_with_rounded_points_has_no_camber():
    # the demo flap: a symmetric section, 81 points with six decimals on a 0.3 chord, drawn at
    # 10 degrees; rounding and the surfaces' different stations leave 2.4e-6 chords of "camber"
    flap = pf.load_outlines("geometries/front_foil_with_flap.dat")[1]
    m = measure(flap)
    assert m.camber == 0.0 and np.isnan(m.camber_position)
    assert m.thickness == pytest.approx(0.12, rel=1e-4)
