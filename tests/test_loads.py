"""Dimensional loads: equilibrium with the coefficients, the nodal split, scaling, node transfer.

The loads and the coefficients come from the same exact panel integrals (Simpson on a quadratic
pressure), computed in different orders, so they agree to rounding; the tolerance 1e-9 relative
is the issue's requirement; the measured differences (<= 1.4e-12 of the larger of the value and
a thousandth of the force scale, where a quantity vanishes by symmetry and is a sum of O(1) terms
cancelling to round-off) are beside each check. The nodal split is checked against an
independent Gauss-Legendre integration of the pressure over every cell.

Bodies: the demo front foil with its flap (two bodies, sharp trailing edges), a NACA 2412 with
its published open trailing edge (NACA Report 460; a blunt base), an ellipse (no trailing edge)
and the demo strut fairing drawn in mm.
"""

from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import panelflow as pf
from panelflow.errors import InputError
from panelflow.conditions.fluids import Conditions, get_fluid, user_fluid
from panelflow.loads.section import (EQUILIBRIUM_TOLERANCE, LOAD_CAUTIONS, StructuralNodes, read_nodes,
                             section_loads, transfer_to_nodes)
from panelflow.geometry.sections import ellipse, naca4

GEOMETRIES = Path(__file__).resolve().parent.parent / "geometries"
ALPHAS = (0.0, 4.0)
ROUNDING = 1e-12  # exact scalings and re-orderings: a few units of round-off, measured <= 1.5e-15

CASES = {
    "foil-with-flap": lambda: pf.load_outlines(str(GEOMETRIES / "front_foil_with_flap.dat")),
    "blunt-naca2412": lambda: [naca4("2412", n_points=161)],
    "ellipse": lambda: [ellipse(1.0, 0.25, n_points=201)],
    "strut-mm": lambda: pf.load_outlines(str(GEOMETRIES / "tender_strut_fairing.dat")),
}

SEA = Conditions(get_fluid("sea-water"), 6.0, chord=0.25, span=1.2)


@pytest.fixture(scope="module", params=sorted(CASES))
def case(request):
    outlines = CASES[request.param]()
    return request.param, outlines, pf.analyse(outlines, ALPHAS, error_estimate=False)


@pytest.fixture(scope="module")
def flap_analysis():
    outlines = CASES["foil-with-flap"]()
    return outlines, pf.analyse(outlines, [4.0], error_estimate=False)


def all_nodes(loads):
    cat = lambda key: np.concatenate([getattr(b, key) for b in loads.bodies])  # noqa: E731
    return cat("x"), cat("y"), cat("fx"), cat("fy")


def nose_up(x, y, fx, fy, p):
    return -np.sum((x - p[0]) * fy - (y - p[1]) * fx)


# ------------------------------------------------------------------ equilibrium
@pytest.mark.parametrize("alpha", ALPHAS)
def test_equilibrium_about_two_points(case, alpha):
    name, outlines, analysis = case
    # a hinge-like point near the trailing edge and one far off the section, outline units
    c0 = analysis.chord
    points = [(1.02 * c0, -0.05 * c0), (-3.0 * c0, 2.0 * c0)]
    loads = section_loads(analysis, SEA, alpha, about=points)
    i = ALPHAS.index(alpha)
    f = analysis.fine
    q, c, b = SEA.dynamic_pressure, loads.chord, SEA.span
    force = q * c * b * (f.cd_pressure[i] + 1j * f.cl_pressure[i]) * np.exp(1j * np.radians(alpha))
    ref = loads.reference_point
    x, y, fx, fy = all_nodes(loads)
    assert loads.equilibrium.ok and loads.equilibrium.max_relative < EQUILIBRIUM_TOLERANCE
    # the resultant of the nodes against cl_p, cd_p times q c b (measured <= 1.4e-15 of q c b)
    assert abs(complex(fx.sum(), fy.sum()) - force) <= EQUILIBRIUM_TOLERANCE * q * c * b
    for p in points:
        pm = loads.length_scale * np.asarray(p)
        expected = f.cm[i] * q * c * c * b - ((ref[0] - pm[0]) * force.imag
                                               - (ref[1] - pm[1]) * force.real)
        got = nose_up(x, y, fx, fy, pm)
        # relative to the moment or, when that is small, to q c^2 b (measured <= 4.8e-15)
        assert abs(got - expected) <= EQUILIBRIUM_TOLERANCE * max(abs(expected), q * c * c * b)


def test_totals_are_coefficients_times_qc(case):
    name, outlines, analysis = case
    loads = section_loads(analysis, SEA, 4.0)
    f = analysis.fine
    qcb = SEA.dynamic_pressure * loads.chord * SEA.span
    tol = EQUILIBRIUM_TOLERANCE * qcb  # relative to the force scale (rounding, as above)
    assert abs(loads.lift - f.cl_pressure[1] * qcb) <= tol
    assert abs(loads.drag - f.cd_pressure[1] * qcb) <= tol
    assert abs(loads.moment - f.cm[1] * qcb * loads.chord) <= tol * loads.chord
    assert loads.lift_circulation == pytest.approx(f.cl_circulation[1] * qcb, rel=1e-14)
    # both lift estimates are printed with the check
    assert "lift from pressure integration" in loads.notes[0] and "circulation" in loads.notes[0]
    for k, body in enumerate(loads.bodies):
        assert abs(body.lift - f.body_cl[1, k] * qcb) <= tol
        assert abs(body.moment - f.body_cm[1, k] * qcb * loads.chord) <= tol * loads.chord


def test_nodal_split_against_direct_integration(case):
    """Force and moment about random points of each body's nodal loads equal the pressure
    integrated over its cells by 3-point Gauss-Legendre (exact to degree 5; the integrands are
    of degree 2 and 3), with the quadratic pressure rebuilt from the node and panel-mean values.
    """
    name, outlines, analysis = case
    loads = section_loads(analysis, SEA, 4.0)
    rng = np.random.default_rng(7)
    g, w = np.polynomial.legendre.leggauss(3)
    t, w = 0.5 * (g + 1.0), 0.5 * w
    for body in loads.bodies:
        z = body.x + 1j * body.y
        a, e = body.cells[:, 0], body.cells[:, 1]
        za, ze = z[a], z[e]
        pa, pb, mean = body.pressure[a], body.pressure[e], body.panel_pressure
        pa = np.where(body.base, mean, pa)  # the base carries its uniform base pressure
        pb = np.where(body.base, mean, pb)
        pm = (6.0 * mean - pa - pb) / 4.0  # mean = (pa + 4 pm + pb) / 6
        # quadratic through (0, pa), (1/2, pm), (1, pb)
        p = (pa[:, None] * (1 - t) * (1 - 2 * t) + 4 * pm[:, None] * t * (1 - t)
             + pb[:, None] * t * (2 * t - 1))
        L = np.abs(ze - za)[:, None]
        inward = 1j * (ze - za)[:, None] / L
        dF = inward * p * L * w * SEA.span  # force of each Gauss point
        zq = za[:, None] + t * (ze - za)[:, None]
        F = dF.sum()
        scale = np.abs(dF).sum()  # the size of the terms summed: rounding is relative to it
        assert abs(complex(body.fx.sum(), body.fy.sum()) - F) <= 1e-12 * scale  # measured 2.3e-16
        for pt in rng.uniform(-2, 2, size=(4, 2)) * loads.chord:
            m_direct = -np.sum(((zq - complex(*pt)).conj() * dF).imag)
            m_nodes = nose_up(body.x, body.y, body.fx, body.fy, pt)
            lever = scale * (np.abs(zq - complex(*pt)).max())
            assert abs(m_nodes - m_direct) <= 1e-12 * lever  # measured <= 2.8e-16


def test_scaling_with_q_c_and_span(case):
    name, outlines, analysis = case
    a = section_loads(analysis, Conditions(get_fluid("sea-water"), 5.0, chord=0.2, span=1.0), 4.0)
    b = section_loads(analysis, Conditions(get_fluid("air"), 30.0, chord=0.5, span=2.5), 4.0)
    rq = b.dynamic_pressure / a.dynamic_pressure
    rc = b.chord / a.chord
    rho_air, rho_sea = get_fluid("air").density, get_fluid("sea-water").density
    assert rq == pytest.approx((rho_air * 30.0**2) / (rho_sea * 5.0**2), rel=1e-14)
    assert rc == pytest.approx(2.5, rel=1e-14)
    for ba, bb in zip(a.bodies, b.bodies):
        np.testing.assert_allclose(bb.x, rc * ba.x, rtol=ROUNDING, atol=ROUNDING * b.chord)
        np.testing.assert_allclose(bb.pressure, rq * ba.pressure, rtol=ROUNDING,
                                   atol=ROUNDING * b.dynamic_pressure)
        fa = np.abs(ba.fx + 1j * ba.fy).max()
        np.testing.assert_allclose(bb.fx, rq * rc * 2.5 * ba.fx, rtol=ROUNDING,
                                   atol=ROUNDING * rq * rc * 2.5 * fa)
    # relative to the force scale: the ellipse's lift is round-off only (measured <= 1.5e-15)
    assert abs(b.lift - rq * rc * 2.5 * a.lift) <= ROUNDING * b.force_scale
    assert abs(b.moment - rq * rc * rc * 2.5 * a.moment) <= ROUNDING * b.force_scale * b.chord


def test_unit_and_chord_scaling_agree():
    # the strut fairing is drawn in mm with a 220 mm chord: --unit mm and --chord 0.22 are the
    # same scaling (the outline's chord is 220 to within the file's rounding)
    outlines = CASES["strut-mm"]()
    analysis = pf.analyse(outlines, [3.0], error_estimate=False)
    by_unit = section_loads(analysis, Conditions(get_fluid("fresh-water"), 4.0, unit="mm"))
    by_chord = section_loads(analysis, Conditions(get_fluid("fresh-water"), 4.0,
                                                  chord=analysis.chord * 1e-3))
    assert by_unit.chord == pytest.approx(0.22, rel=1e-6)  # file coordinates to 6 digits
    assert by_chord.lift == pytest.approx(by_unit.lift, rel=ROUNDING)
    assert by_chord.moment == pytest.approx(by_unit.moment, rel=ROUNDING)


def test_absolute_pressures_shift_pressure_not_totals(flap_analysis):
    outlines, analysis = flap_analysis
    gauge = section_loads(analysis, SEA)
    absolute = section_loads(analysis, Conditions(SEA.fluid, SEA.speed, chord=SEA.chord,
                                                  span=SEA.span, static_pressure=2e5))
    for g, a in zip(gauge.bodies, absolute.bodies):
        np.testing.assert_allclose(a.pressure - g.pressure, 2e5, rtol=1e-14)
        np.testing.assert_allclose(a.panel_pressure - g.panel_pressure, 2e5, rtol=1e-14)
    # a uniform pressure on a closed polygon has no resultant and no moment (the integrand is an
    # exact differential); rounding grows with p_s / q = 11, measured 1.1e-15 of q c b
    qcb = gauge.force_scale
    assert abs(absolute.lift - gauge.lift) < 1e-12 * qcb
    assert abs(absolute.moment - gauge.moment) < 1e-12 * qcb * gauge.chord
    assert absolute.equilibrium.ok


def test_blunt_base_carries_base_pressure():
    outline = naca4("2412", n_points=161)
    analysis = pf.analyse([outline], [3.0], error_estimate=False)
    loads = section_loads(analysis, SEA)
    body = loads.bodies[0]
    assert body.kind == "blunt" and body.base[-1] and body.base.sum() == 1
    q = SEA.dynamic_pressure
    assert body.panel_pressure[-1] == pytest.approx(q * analysis.fine.cp_base[0, 0], rel=1e-14)
    assert tuple(body.cells[-1]) == (body.n_nodes - 1, 0)  # lower corner to upper corner
    # its force is along the base's inward normal (-x for a base facing downstream), with the
    # magnitude pressure x height x span
    h = np.hypot(body.x[0] - body.x[-1], body.y[0] - body.y[-1])
    f = complex(body.panel_fx[-1], body.panel_fy[-1])
    assert abs(f) == pytest.approx(abs(body.panel_pressure[-1]) * h * SEA.span, rel=1e-13)


def test_sharp_trailing_edge_is_one_node(flap_analysis):
    outlines, analysis = flap_analysis
    loads = section_loads(analysis, SEA)
    for k, body in enumerate(loads.bodies):
        n_panels = int(np.sum(analysis.fine.panels.body == k))
        assert body.kind == "sharp" and body.n_nodes == n_panels == len(body.cells)
        assert len(np.unique(np.round(body.x + 1j * body.y, 12))) == body.n_nodes


@pytest.mark.parametrize("alpha, words", [(None, "2 angles of attack"), (7.0, "7 deg is not")])
def test_angle_must_be_one_of_the_analysis(case, alpha, words):
    with pytest.raises(InputError, match=words):
        section_loads(case[2], SEA, alpha)


def test_cavitation_caution():
    outlines = [naca4("0012", n_points=161)]
    analysis = pf.analyse(outlines, [6.0], error_estimate=False)
    slow = section_loads(analysis, Conditions(get_fluid("fresh-water"), 3.0, chord=0.2))
    fast = section_loads(analysis, Conditions(get_fluid("fresh-water"), 15.0, chord=0.2))
    assert slow.cautions == LOAD_CAUTIONS
    assert any("expect cavitation" in c for c in fast.cautions)
    # sigma = (p_atm - p_v) / q, at 15 m/s 0.88; -Cp_min of a NACA 0012 at 6 deg is about 2
    assert "cavitation number 0.8" in fast.notes[1]
    air = section_loads(analysis, Conditions(get_fluid("air"), 50.0, chord=0.2))
    assert len(air.notes) == 1  # no vapour pressure, no cavitation note


# ------------------------------------------------------------------ transfer to structural nodes
def _on_outline(loads, fractions_per_body):
    """Points on the panelled outline (outline units) at the given arc fractions of each body."""
    pts = []
    for body, fr in zip(loads.bodies, fractions_per_body):
        z = body.x + 1j * body.y
        a, e = body.cells[:, 0], body.cells[:, 1]
        s = np.r_[0.0, np.cumsum(body.panel_length)]
        target = np.asarray(fr) * s[-1]
        j = np.clip(np.searchsorted(s, target, side="right") - 1, 0, len(a) - 1)
        t = (target - s[j]) / body.panel_length[j]
        zz = z[a[j]] + t * (z[e[j]] - z[a[j]])
        pts.append(np.stack([zz.real, zz.imag], axis=1) / loads.length_scale)
    return np.vstack(pts)


@pytest.fixture(scope="module")
def flap_loads(flap_analysis):
    return section_loads(flap_analysis[1], SEA, about=[(1.02, -0.05)])


@settings(max_examples=40, deadline=None)
@given(st.data())
def test_transfer_keeps_force_for_random_nodes(flap_loads, data):
    fractions = [np.sort(data.draw(st.lists(st.floats(0.0, 0.999999), min_size=3, max_size=60,
                                            unique=True)))
                 for _ in flap_loads.bodies]
    pts = _on_outline(flap_loads, fractions)
    ids = np.arange(1, len(pts) + 1) * 3
    t = transfer_to_nodes(flap_loads, StructuralNodes(ids, pts), moment_tolerance=None)
    total = abs(complex(sum(b.fx.sum() for b in flap_loads.bodies),
                        sum(b.fy.sum() for b in flap_loads.bodies)))
    # every panel load is shared with weights adding up to one: rounding only (measured 3.9e-16)
    assert t.force_difference <= 1e-12 * total
    for body, s in zip(flap_loads.bodies, t.bodies):
        assert abs(complex(s.fx.sum() - body.fx.sum(), s.fy.sum() - body.fy.sum())) <= (
            1e-12 * np.abs(body.fx + 1j * body.fy).sum())
    assert sorted(np.concatenate([s.ids for s in t.bodies])) == sorted(ids)
    # the moment change is the same about every point, since the force is unchanged
    for s, body in zip(t.bodies, flap_loads.bodies):
        d_ref = nose_up(s.x, s.y, s.fx, s.fy, flap_loads.reference_point) - body.moment
        d_hinge = nose_up(s.x, s.y, s.fx, s.fy, flap_loads.about[0]) - body.moments_about[0]
        assert abs(d_ref - d_hinge) <= 1e-9 * flap_loads.force_scale * flap_loads.chord


@pytest.mark.parametrize("every, limit", [(1, 1e-6), (4, 2e-5), (8, 3e-4)])
def test_transfer_moment_on_mesh_like_nodes(flap_analysis, flap_loads, every, limit):
    """Nodes on the drawn outline (a mesh made from the same drawing), every n-th point.

    Measured moment changes (relative, see NodeTransfer): 2.4e-8 (all 240 points), 3.6e-6 (60),
    4.0e-5 (30); each limit is 5 to 40 times the measured value, all far inside the 0.1 % the
    export allows.
    """
    outlines = flap_analysis[0]
    pts = np.vstack([o.polygon[::every] for o in outlines])
    t = transfer_to_nodes(flap_loads, StructuralNodes(np.arange(1, len(pts) + 1), pts))
    assert t.moment_relative < limit
    assert max(b.distance.max() for b in t.bodies) < 1e-4 * flap_loads.chord  # spline vs drawing


def test_transfer_via_section_loads_and_caution_for_body_without_nodes(flap_analysis):
    outlines, analysis = flap_analysis
    pts = outlines[1].polygon  # the flap only: a hinge-moment model
    loads = section_loads(analysis, SEA, nodes=StructuralNodes(np.arange(100, 100 + len(pts)), pts))
    t = loads.transfer
    assert t.untransferred == (outlines[0].name,)
    assert t.bodies[0].n_nodes == 0 and t.bodies[1].n_nodes == len(pts)
    assert any("No structural nodes on" in c for c in loads.cautions)


def test_node_off_outline_is_named(flap_analysis, flap_loads):
    pts = np.vstack([o.polygon[::4] for o in flap_analysis[0]])
    pts[5] += (0.0, 0.01)  # 1 % of the chord off the outline
    ids = np.arange(1, len(pts) + 1) + 1000
    with pytest.raises(InputError) as exc:
        transfer_to_nodes(flap_loads, StructuralNodes(ids, pts, "fe.csv"))
    msg = str(exc.value)
    assert msg.startswith("fe.csv: node 1006 at") and "tolerance" in msg and "\n" not in msg
    # a wider tolerance (m) accepts it
    t = transfer_to_nodes(flap_loads, StructuralNodes(ids, pts), tolerance=0.02 * flap_loads.chord)
    assert t.n_nodes == len(pts)


def test_too_few_or_too_sparse_nodes(flap_analysis, flap_loads):
    outlines = flap_analysis[0]
    two = np.vstack([outlines[0].polygon[::4], outlines[1].polygon[[0, 40]]])
    with pytest.raises(InputError, match="flap has 2 structural nodes"):
        transfer_to_nodes(flap_loads, StructuralNodes(np.arange(1, len(two) + 1), two))
    sparse = np.vstack([outlines[0].polygon[[0, 5, 150]], outlines[1].polygon[::4]])
    with pytest.raises(InputError, match=r"moment by 59 % \(limit 0.1 %\); the widest gap"):
        transfer_to_nodes(flap_loads, StructuralNodes(np.arange(1, len(sparse) + 1), sparse))


# ------------------------------------------------------------------ reading the node file
@pytest.mark.parametrize("text", [
    "id,x,y\n1,0.5,0.1\n2,0.6,0.1\n",
    "# mesh export\nnode, x [mm], y [mm], z [mm]\n1, 0.5, 0.1, 0\n2, 0.6, 0.1, 0\n",
    "1 0.5 0.1\n2 0.6 0.1   # comment\n",
    "x,y,Node\n0.5,0.1,1\n0.6,0.1,2\n",
    "id,x,y\n1.0,0.5,0.1\n2,0.6,0.1\n",
])
def test_read_nodes_layouts(tmp_path, text):
    p = tmp_path / "n.csv"
    p.write_text(text)
    nodes = read_nodes(p)
    assert list(nodes.ids) == [1, 2]
    np.testing.assert_array_equal(nodes.xy, [[0.5, 0.1], [0.6, 0.1]])


@pytest.mark.parametrize("text, words", [
    ("id,x,y\n1,0.5,0.1\n1,0.6,0.1\n", "node 1 is listed more than once (lines 2, 3)"),
    ("id,x,y\nA7,0.5,0.1\n", "line 2: node id 'A7' is not a whole number"),
    ("id,x,y\n1.5,0.5,0.1\n", "node id '1.5' is not a whole number"),
    ("id,x,y\n3,0.5\n", "line 2: expected node id, x, y"),
    ("id,x,y\n3,0.5,abc\n", "node 3: coordinates '0.5', 'abc' are not numbers"),
    ("id,x,y\n0,0.5,0.1\n", "node id 0 must be positive"),
    ("id,x,y\n4,nan,0.1\n", "node 4: coordinates must be finite"),
    ("name,u,v\n1,2,3\n", "header must name the columns id, x and y"),
    ("# nothing\n", "no nodes"),
])
def test_read_nodes_errors(tmp_path, text, words):
    p = tmp_path / "bad.csv"
    p.write_text(text)
    with pytest.raises(InputError) as exc:
        read_nodes(p)
    assert words in str(exc.value) and str(exc.value).startswith(str(p))
    assert "\n" not in str(exc.value)


def test_read_nodes_missing_file(tmp_path):
    with pytest.raises(InputError, match="no such file"):
        read_nodes(tmp_path / "none.csv")


def test_user_density_loads(flap_analysis):
    # a user density gives the same loads as a preset of the same density
    loads = section_loads(flap_analysis[1], Conditions(user_fluid(SEA.fluid.density), 6.0,
                                                       chord=0.25, span=1.2))
    assert loads.lift == pytest.approx(section_loads(flap_analysis[1], SEA).lift, rel=ROUNDING)
