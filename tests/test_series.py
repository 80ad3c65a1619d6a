"""The modified 4-digit, 16-series and a-series sections against their defining equations,
published values and thin-airfoil theory (sources in tests/section_references.py)."""

import numpy as np
import pytest
from section_references import (IDEAL_ANGLE_DEG, NACA0012_TABLE, a_series_load,
                                glauert_design_cl, glauert_ideal_angle, report460_thickness,
                                sixteen_series_thickness, thin_airfoil_slope)

import panelflow as pf
from panelflow.errors import InputError
from panelflow.geometry.families import expand_family
from panelflow.geometry.measure import measure
from panelflow.geometry.sections import naca4
from panelflow.geometry.specs import parse_spec
from panelflow.geometry.series import (TRAILING_EDGE_SLOPES, a_series_ideal_angle_deg,
                                       a_series_mean_line, leading_edge_radius, modified_thickness,
                                       modified_thickness_coefficients, naca16)

INDICES = [0, 2, 4, 6, 8, 9]
POSITIONS = [2, 3, 4, 5, 6]
A_VALUES = [0.0, 0.3, 0.5, 0.8, 1.0]


def surfaces(outline):
    """Upper and lower surface points of a built-in section, each from the nose (the sections
    put a single nose point in the middle of the loop)."""
    pts = outline.points
    k = (len(pts) + 1) // 2
    return pts[:k][::-1], pts[k - 1:]


def derivative(f, x, h=1e-6):
    """Central difference (the functions are smooth on each side of the joint)."""
    return (f(x + h) - f(x - h)) / (2 * h)


# ---------------------------------------------------------------------------------- modified
@pytest.mark.parametrize("index", INDICES)
@pytest.mark.parametrize("position", POSITIONS)
def test_modified_thickness_meets_its_defining_conditions(index, position):
    t, m = 0.12, position / 10

    def y(x):
        return modified_thickness(x, t, index, position)

    # Maximum t/2 at x = m with zero slope from both sides (Abbott & von Doenhoff 6.4); the
    # one-sided differences of step 1e-7 carry an error of about 1e-7 times the curvature.
    assert y(m) == pytest.approx(t / 2, abs=1e-14)
    assert abs((y(m) - y(m - 1e-7)) / 1e-7) < 1e-6
    assert abs((y(m + 1e-7) - y(m)) / 1e-7) < 1e-6
    # Equal curvature of the two parts at m: one-sided second differences on each side,
    # Richardson-extrapolated from steps 2e-4 and 1e-4 (error ~1e-8 times the fourth
    # derivative; round-off ~1e-8)
    def second(sign, h):
        return (y(m) - 2 * y(m + sign * h) + y(m + 2 * sign * h)) / h**2

    fore, aft = (2 * second(s, 1e-4) - second(s, 2e-4) for s in (-1, 1))
    assert fore == pytest.approx(aft, abs=1e-5 * abs(aft) + 1e-6)
    # Trailing edge: half thickness 0.002 t/0.2 and slope -d1 t/0.2 from the tabulated d1.
    assert y(1.0) == pytest.approx(0.002 * 5 * t, abs=1e-14)
    assert derivative(y, 1.0 - 1e-5) == pytest.approx(-TRAILING_EDGE_SLOPES[position] * 5 * t,
                                                      rel=1e-4)
    # Rising to the maximum, falling after it, and nowhere thicker.
    x = np.linspace(0.0, 1.0, 20001)
    yx = y(x)
    assert np.all(np.diff(yx[x <= m]) > 0) and np.all(np.diff(yx[x >= m]) < 0)
    assert yx.max() == pytest.approx(t / 2, abs=1e-15)


@pytest.mark.parametrize("index", INDICES)
def test_modified_leading_edge_radius(index):
    # Abbott & von Doenhoff 6.4 (from memory): radius 1.1019 (t I / 6)^2 for I <= 8 and three
    # times the 4-digit radius 1.1019 t^2 for I = 9. 1.1019 is 12.5 * 0.2969^2 = 1.10186
    # rounded, so the check allows 5e-5 relative.
    t = 0.15
    expected = 1.1019 * (t * index / 6) ** 2 if index <= 8 else 3 * 1.1019 * t**2
    assert leading_edge_radius(t, index) == pytest.approx(expected, rel=5e-5)
    # and the equation near the nose really is y = k sqrt(x) with r = k^2 / 2
    x = 1e-10
    k = modified_thickness(x, t, index, 4) / np.sqrt(x)
    # (at x = 1e-10 the next term, a1 x, adds ~1e-5 relative, or 1e-11 absolute for I = 0)
    assert 0.5 * k * k == pytest.approx(leading_edge_radius(t, index), rel=1e-4, abs=1e-10)


def test_sixteen_series_is_modified_thickness_45():
    # The 16-series thickness is the modified 4-digit form with I = 4 and M = 5; the solved
    # coefficients match the published closed form (values with six decimals, from memory):
    # a0 = 0.989665 against 5 * 0.2969 * 4/6 = 0.989667, the rest to 1e-7.
    a0, a1, a2, a3, d0, d1, d2, d3 = (5 * c for c in modified_thickness_coefficients(4, 5))
    np.testing.assert_allclose([a0, a1, a2, a3], [0.989665, -0.23925, -0.041, -0.5594],
                               atol=3e-6)
    np.testing.assert_allclose([d0, d1, d2, d3], [0.01, 2.325, -3.42, 1.46], atol=1e-6)


@pytest.mark.parametrize("thickness", ["06", "09", "12", "21"])
def test_sixteen_series_ordinates_match_published_equation(thickness):
    t = int(thickness) / 100
    up, lo = surfaces(naca16("0" + thickness))
    # symmetric: upper and lower mirror each other; against the published equation the
    # difference is the rounding of its coefficients (3e-6 on a0 times sqrt(x) times t)
    np.testing.assert_allclose(up[:, 0], lo[:, 0], atol=1e-15)
    np.testing.assert_allclose(up[:, 1], sixteen_series_thickness(up[:, 0], t), atol=4e-6 * t)
    np.testing.assert_allclose(lo[:, 1], -up[:, 1], atol=1e-15)


def test_naca0012_against_tabulated_ordinates():
    # Report 460 thickness against the tabulated NACA 0012 (Abbott & von Doenhoff appendix I,
    # from memory): the table gives three decimals of a percent, so 6e-6 chords covers its
    # rounding.
    x, y = np.array(NACA0012_TABLE).T / 100
    np.testing.assert_allclose(report460_thickness(x, 0.12), y, atol=6e-6)
    up, _ = surfaces(naca4("0012", n_points=2001))
    np.testing.assert_allclose(np.interp(x, up[:, 0], up[:, 1]), y, atol=2e-5)  # linear interp.


SPECS = [  # spec, thickness, I, M, closed trailing edge
    ("naca0012-64", 0.12, 6, 4, False),
    ("naca0010-35", 0.10, 3, 5, False),
    ("naca0015-92", 0.15, 9, 2, False),
    ("naca0012-64-closed", 0.12, 6, 4, True),
    ("naca16-012", 0.12, 4, 5, False),
    ("naca16-009-closed", 0.09, 4, 5, True),
]


@pytest.mark.parametrize("spec,t,index,position,closed", SPECS)
def test_measured_section_figures(spec, t, index, position, closed):
    m = measure(parse_spec(spec))
    d1 = TRAILING_EDGE_SLOPES[position]
    # From the 201-point tables (measured: thickness within 3.1e-6 relative, its position
    # within 8e-6, the nose radius within 4.7e-5 relative, the trailing-edge angle within
    # 0.013 deg, from the spline's end curvature); tolerances about twice those.
    assert m.thickness == pytest.approx(t, rel=1e-5)
    assert m.thickness_position == pytest.approx(position / 10, abs=2e-5)
    assert m.camber == 0.0
    assert m.leading_edge_radius == pytest.approx(leading_edge_radius(t, index), rel=1e-4)
    # trailing edge: thickness 2 * 0.002 * 5t (or 0), angle 2 atan(5 t d1) from the slope d1
    assert m.trailing_edge_thickness == pytest.approx(0.0 if closed else 0.02 * t, abs=1e-9)
    expected_angle = 2 * np.degrees(np.arctan(5 * t * d1))
    assert m.trailing_edge_angle_deg == pytest.approx(expected_angle, abs=0.02)


def test_cambered_modified_sections_keep_their_mean_line():
    # naca2412-34: Report 460 mean line (the midpoint of each upper/lower pair, since the
    # thickness is laid off normal to it) with the modified thickness I = 3, M = 4
    up, lo = surfaces(parse_spec("naca2412-34"))
    mid = 0.5 * (up + lo)
    x = mid[:, 0]
    expected = np.where(x < 0.4, 0.02 / 0.16 * (0.8 * x - x * x),
                        0.02 / 0.36 * (0.2 + 0.8 * x - x * x))
    np.testing.assert_allclose(mid[:, 1], expected, atol=1e-15)
    half = 0.5 * np.hypot(*(up - lo).T)
    np.testing.assert_allclose(half, modified_thickness(x, 0.12, 3, 4), atol=1e-15)


# ---------------------------------------------------------------------------------- a-series
@pytest.mark.parametrize("a", A_VALUES)
def test_a_series_mean_line_ends_and_slope(a):
    x = np.linspace(0.0, 1.0, 2001)
    yc, dyc = a_series_mean_line(x, a, 0.4)
    assert yc[0] == 0.0 and abs(yc[-1]) < 1e-15
    # the slope is the derivative of the ordinate (central differences away from the
    # logarithmic end points and the joint at x = a; step 1e-6 leaves ~1e-9)
    inner = (x > 0.01) & (x < 0.99) & (np.abs(x - a) > 0.01)
    numeric = (a_series_mean_line(x[inner] + 1e-6, a, 0.4)[0]
               - a_series_mean_line(x[inner] - 1e-6, a, 0.4)[0]) / 2e-6
    np.testing.assert_allclose(dyc[inner], numeric, atol=1e-8)


@pytest.mark.parametrize("a", A_VALUES)
@pytest.mark.parametrize("cl", [0.2, 0.6])
def test_a_series_ideal_angle_and_lift_by_thin_airfoil_theory(a, cl):
    def slope(x):
        return float(a_series_mean_line(x, a, cl)[1])

    # Glauert's series for the library's slope (quadrature to ~1e-9): A0 = 0 at the ideal
    # angle, and the lift there is the design value
    assert np.radians(a_series_ideal_angle_deg(a, cl)) == pytest.approx(
        glauert_ideal_angle(slope), abs=1e-8)
    assert glauert_design_cl(slope) == pytest.approx(cl, rel=1e-7)


@pytest.mark.parametrize("a", A_VALUES)
def test_a_series_carries_the_uniform_load(a):
    # Thin-airfoil theory: the mean line's slope minus the ideal angle is the upwash of the
    # design load (uniform to x = a, then linear to zero) at every station (Cauchy principal
    # values by quadrature, ~1e-9)
    cl = 0.5
    alpha_i = np.radians(a_series_ideal_angle_deg(a, cl))
    x0 = np.array([0.02, 0.1, 0.25, 0.4, 0.55, 0.7, 0.85, 0.95, 0.99])
    x0 = x0[np.abs(x0 - a) > 1e-3]
    induced = np.array([thin_airfoil_slope(x, a, cl) for x in x0])
    np.testing.assert_allclose(a_series_mean_line(x0, a, cl)[1] - alpha_i, induced, atol=1e-7)


@pytest.mark.parametrize("a", sorted(IDEAL_ANGLE_DEG))
def test_a_series_ideal_angle_against_table(a):
    # Abbott & von Doenhoff appendix II tabulates alpha_i for cl_i = 1 to two decimals (from
    # memory)
    assert a_series_ideal_angle_deg(a, 1.0) == pytest.approx(IDEAL_ANGLE_DEG[a], abs=0.005)


def test_a_series_near_one_joins_the_a_one_line():
    # the general formula as a -> 1 meets the a = 1 closed form (cancellation in 1/(1-a)
    # leaves ~1e-10 at 1 - a = 1e-6, and the line itself moves by about 0.14 (1 - a) there,
    # measured)
    x = np.linspace(0.001, 0.999, 101)
    np.testing.assert_allclose(a_series_mean_line(x, 1 - 1e-6, 0.3)[0],
                               a_series_mean_line(x, 1.0, 0.3)[0], atol=3e-7)


@pytest.mark.parametrize("spec,a,cl", [("naca0010+a-series:0.8,0.3", 0.8, 0.3),
                                       ("naca16-212", 1.0, 0.2),
                                       ("naca0012-64+a-series:0.5,0.4", 0.5, 0.4),
                                       ("naca0009-closed+a-series:0,0.25", 0.0, 0.25)])
def test_a_series_sections_are_built_on_their_mean_line(spec, a, cl):
    # The thickness is laid off on both sides of the mean line, so each upper/lower pair's
    # midpoint is the mean line point (Report 824 construction), whatever the offset direction
    up, lo = surfaces(parse_spec(spec))
    mid = 0.5 * (up + lo)
    np.testing.assert_allclose(mid[:, 1], a_series_mean_line(mid[:, 0], a, cl)[0], atol=1e-15)
    # and the pair is as far apart as the thickness form says: 16-series (published equation)
    # or Report 460 / modified
    half = 0.5 * np.hypot(*(up - lo).T)
    if spec.startswith("naca16"):
        expected = sixteen_series_thickness(mid[:, 0], 0.12)
        np.testing.assert_allclose(half, expected, atol=4e-6 * 0.12)
    elif "-64" in spec:
        np.testing.assert_allclose(half, modified_thickness(mid[:, 0], 0.12, 6, 4), atol=1e-15)
    else:
        t = int(spec[6:8]) / 100
        np.testing.assert_allclose(half, report460_thickness(mid[:, 0], t, "closed" in spec),
                                   atol=1e-15)


@pytest.fixture(scope="module")
def ideal_angle_loads():
    """Panel solutions of 2 % and 4 % thick a-series sections at the ideal angle of thin-airfoil
    theory: {a: (x/c, load at 2 %, load at 4 %, cl at 2 %, cl at 4 %)}."""
    x = np.linspace(0.05, 0.95, 91)
    out = {}
    for a in (0.5, 0.8):
        alpha = a_series_ideal_angle_deg(a, 0.4)
        loads, lifts = [], []
        for t in ("02", "04"):
            foil = parse_spec(f"naca00{t}-closed+a-series:{a},0.4", n_points=401)
            result = pf.analyse([foil], [alpha], n_panels=300)
            body = result[0].bodies[0]
            k = int(np.argmin(body.x))
            upper = np.interp(x, body.x[:k + 1][::-1], body.cp[:k + 1][::-1])
            lower = np.interp(x, body.x[k:], body.cp[k:])
            loads.append(lower - upper)
            lifts.append(result.cl[0])
        out[a] = (x, *loads, *lifts)
    return out


@pytest.mark.parametrize("a", [0.5, 0.8])
def test_panel_method_load_at_the_ideal_angle(ideal_angle_loads, a):
    # Sections on the a-series mean line solved by the panel method at the ideal angle: the
    # load is uniform to x = a and falls linearly behind it (NACA Report 824). Thickness raises
    # it by the thickness flow's speed, linearly in t (measured: up to 4.3 % above the design
    # load at 2 % thickness, 8.6 % at 4 %), so the two are extrapolated to zero thickness,
    # 2 L(2 %) - L(4 %), which thin-airfoil theory describes.
    x, load2, load4, cl2, cl4 = ideal_angle_loads[a]
    design = a_series_load(x, a, 0.4)
    thin = 2 * load2 - load4
    # Measured within 0.6 % (a = 0.5) and 1.0 % (a = 0.8) from x/c 0.05 to 0.95; 1.5 % allows
    # for the second-order thickness term and the Kutta condition's pull near the edge.
    np.testing.assert_allclose(thin, design, rtol=0.015)
    # Lift extrapolated the same way: 0.39984 and 0.39951 against the design 0.4.
    assert 2 * cl2 - cl4 == pytest.approx(0.4, rel=0.005)
    # With thickness the load ahead of x = a stays flat: spread within 4 % at 2 % thickness
    # (measured 1.0 % and 3.4 %).
    front = (x >= 0.1) & (x <= a - 0.05)
    assert np.ptp(load2[front]) / load2[front].mean() < 0.04


# ---------------------------------------------------------------------------------- specs
@pytest.mark.parametrize("text,name", [
    ("naca0012-64", "naca0012-64"),
    ("NACA2412-34", "naca2412-34"),
    ("naca23012-64-closed", "naca23012-64-closed"),
    ("naca16-212", "naca16-212"),
    ("naca0010+a-series:0.80,0.30", "naca0010+a-series:0.8,0.3"),
    ("naca16-009-closed+A-SERIES:1,0.2", "naca16-009-closed+a-series:1,0.2"),
])
def test_spec_names(text, name):
    outline = pf.load_outlines(text)[0]
    assert outline.name == name and outline.source == name


@pytest.mark.parametrize("text,message", [
    ("naca64-212", "6-series sections are not built in"),
    ("naca64a210", "6-series sections are not built in"),
    ("naca63(2)-415", "6-series"),
    ("naca0012-17", "naca0012-17: position of maximum thickness must be 2 to 6"),
    ("naca0012-01", "must be 2 to 6"),
    ("naca16-21", "three digits"),
    ("naca16-200", "thickness must be at least 01"),
    ("naca2412+a-series:0.8,0.3", "symmetric thickness form"),
    ("naca0012+a-series:1.2,0.3", "a must be between 0 and 1"),
    ("naca0012+a-series:0.8", "a-series:A,CL"),
    ("naca0012+a-series:0.8,x", "'x' is not a number"),
    ("naca2012-64", "max-camber position"),
])
def test_spec_errors(text, message):
    with pytest.raises(InputError, match=message.replace("(", r"\(").replace(")", r"\)")):
        pf.load_outlines(text)


def test_file_with_a_spec_like_name_is_a_file(tmp_path):
    for name in ("naca0012+flap.dat", "naca64-212.dat"):
        path = tmp_path / name
        path.write_text(naca_table())
        assert pf.load_outlines(str(path))[0].source == str(path)
        assert parse_spec(name) is None


def naca_table():
    up, lo = surfaces(naca4("0012", n_points=41, closed_te=True))
    pts = np.vstack([up[::-1], lo[1:]])
    return "section\n" + "\n".join(f"{x:.6f} {y:.6f}" for x, y in pts) + "\n"


@pytest.mark.parametrize("family,members", [
    ("naca16-{1..3}12", ["naca16-112", "naca16-212", "naca16-312"]),
    ("naca0012-{4,6}{3,5}", ["naca0012-43", "naca0012-45", "naca0012-63", "naca0012-65"]),
    ("naca0010+a-series:{0.5..1:0.25},0.3", ["naca0010+a-series:0.50,0.3",
                                             "naca0010+a-series:0.75,0.3",
                                             "naca0010+a-series:1.00,0.3"]),
])
def test_families_over_the_new_parameters(family, members):
    assert expand_family(family) == members
    outlines = [pf.load_outlines(m)[0] for m in members]
    assert len({o.name for o in outlines}) == len(members)
    for m, o in zip(members, outlines):
        assert measure(o).thickness == pytest.approx(int(m[6:8] if not m.startswith("naca16")
                                                         else m[8:10]) / 100, rel=1e-3)


def test_case_files_and_commands_take_the_new_specs(tmp_path, capsys):
    from conftest import run

    from panelflow.study.cases import load_case

    case = tmp_path / "families.toml"
    case.write_text('[[section]]\nspec = "naca16-{1..2}12"\n\n[[section]]\n'
                    'spec = "naca0010+a-series:0.8,0.3"\n\n[conditions]\nalpha = "0:4:2"\n')
    assert load_case(case).labels == ("naca16-112", "naca16-212", "naca0010+a-series:0.8,0.3")
    code, out, err = run(capsys, "compare", "naca0012-{4,6}4", "--alpha", "2")
    assert code == 0, err
    assert "naca0012-44" in out and "naca0012-64" in out
