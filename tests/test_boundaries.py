"""Plane wall and free surface by images (panelflow.flow.images).

References
----------
* Method of images for a plane (L. M. Milne-Thomson, *Theoretical Hydrodynamics*, images in a
  plane, from memory): a wall is a streamline of the flow of the bodies plus their mirror images
  with vorticity of the opposite sense; a constant-potential surface that of the images with
  vorticity of the same sense and sources of the opposite sign.
* Explicit model: the bodies and their mirrored copies solved together by the ordinary
  multi-body solver. In a freestream along the plane that flow is symmetric about it (the
  image of the solution is a solution, and it is unique), so it is exactly the wall solution;
  in a freestream normal to the plane the flow is antisymmetric, the images carry vorticity of
  the same sense, and it is exactly the tied system of a constant-potential plane.
* First-order effect of the plane on lift (derived here from the Kutta-Joukowski theorem, Anderson,
  *Fundamentals of Aerodynamics*, ch. 3-4): far from the plane (distance h), the image of a
  lifting body is a vortex of circulation -s Gamma at distance 2h, which induces at the body a
  uniform velocity u = -Gamma / (4 pi h) along the stream, the same for a wall (s = -1, image
  below, opposite sense) and a free surface (s = +1, image above, same sense). The body then
  sees the onset speed U + u: its circulation scales with it and its lift with its square, so
  Cl(h) / Cl_inf - 1 = 2 u / U = -Cl_inf c / (4 pi h) + O((c/h)^2).
"""

import functools
from pathlib import Path

import numpy as np
import pytest

import panelflow as pf
from panelflow.analysis.inviscid import analyse_near_plane
from panelflow.analysis.problem import OperatingPoint, Problem
from panelflow.analysis.solve import solve
from panelflow.errors import GeometryError, InputError
from panelflow.flow import images as bnd
from panelflow.flow import influence, solver
from panelflow.geometry.panelling import respline
from panelflow.geometry.panels import Panels
from panelflow.geometry.sections import circle, naca4

GEOMETRIES = Path(__file__).resolve().parent.parent / "geometries"


def _two_bodies():
    return tuple(pf.load_outlines(str(GEOMETRIES / "front_foil_with_flap.dat")))


SECTIONS = {
    "naca2412-sharp": lambda: (naca4("2412", n_points=161, closed_te=True),),
    "naca0012-blunt": lambda: (naca4("0012", n_points=161),),
    "circle": lambda: (circle(0.3, n_points=121).translated(0.3, 0.0),),
    "foil-and-flap": _two_bodies,
}
KINDS = [bnd.WALL, bnd.FREE_SURFACE]


def boundary(kind, distance):
    if kind == bnd.WALL:
        return bnd.Boundary.ground(distance)
    return bnd.Boundary.free_surface(distance)


def pitch_point(bodies):
    return bodies[0].chord_point(0.25)


def panels_of(bodies, alpha, n=100):
    about = pitch_point(bodies)
    return Panels.from_panellings([respline(o.rotated(alpha, about=about), n) for o in bodies])


def near(bodies, alpha, plane, **kw):
    """Solve bodies near a plane through the one entry point."""
    return solve(Problem(tuple(bodies), OperatingPoint(alpha_deg=tuple(np.atleast_1d(alpha)),
                                                       plane=plane), **kw))


@pytest.mark.parametrize("name", SECTIONS)
@pytest.mark.parametrize("alpha", [0.0, 4.0])
def test_wall_matches_explicit_mirrored_model(name, alpha):
    bodies = SECTIONS[name]()
    wall = bnd.Boundary.ground(0.35)
    # given points: the explicit model's mirrored bodies then have exactly the mirrored nodes
    r = near(bodies, alpha, wall, panels=None, error_estimate=False)
    # in the bodies' frame the plane runs along the freestream, exp(i alpha)
    pair = bnd.mirrored_pair(bodies, wall.image(pitch_point(bodies), alpha))
    explicit = pf.analyse(pair, alpha, n_panels=None, reference_point=pitch_point(bodies),
                          error_estimate=False)[0]
    k = len(bodies)
    for j in range(k):
        real, image = explicit.bodies[j], explicit.bodies[k + j]
        # 1e-9: the same discrete system solved two ways (measured differences below 5e-12)
        np.testing.assert_allclose(r[0].bodies[j].cp, real.cp, atol=1e-9)
        assert r.fine.body_cl[0, j] == pytest.approx(real.cl, abs=1e-9)
        assert r.fine.body_cm[0, j] == pytest.approx(real.cm, abs=1e-9)
        assert r[0].bodies[j].cp_min == pytest.approx(real.cp_min, abs=1e-9)
        # the symmetric flow pushes the image the opposite way (lift normal to the stream)
        assert image.cl == pytest.approx(-real.cl, abs=1e-9)


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("alpha", [-3.0, 6.0])
def test_body_frame_equals_pitched_bodies_in_a_level_stream(kind, alpha):
    # The plane inclined with the freestream in the bodies' frame is the same flow as the bodies
    # pitched nose-up by alpha in a stream along a level plane (a rotation of the whole picture).
    foil = naca4("2412", n_points=161, closed_te=True)
    plane = boundary(kind, 0.4)
    r = near([foil], alpha, plane, panels=None, error_estimate=False)
    about = pitch_point([foil])
    level = near([foil.rotated(alpha, about=about)], 0.0, plane, panels=None,
                 error_estimate=False, reference_point=tuple(about))
    # 1e-9: rotated nodes differ by round-off only
    assert r.cl[0] == pytest.approx(level.cl[0], abs=1e-9)
    assert r.cm[0] == pytest.approx(level.cm[0], abs=1e-9)
    np.testing.assert_allclose(r[0].bodies[0].cp, level[0].bodies[0].cp, atol=1e-9)
    assert r.plane.clearance[0] == pytest.approx(level.plane.clearance[0], abs=1e-12)


@pytest.mark.parametrize("name", SECTIONS)
@pytest.mark.parametrize("kind", KINDS)
def test_tied_system_matches_explicit_two_body_system(name, kind):
    bodies = SECTIONS[name]()
    pan = panels_of(bodies, 3.0)
    img = boundary(kind, 0.4).image(pitch_point(bodies))
    tied = bnd.factorise(pan, img)
    full, mirror = bnd._with_images(pan, img)
    explicit = solver.factorise(full)
    m = pan.n_nodes
    # wall: freestream along the plane (column 0); free surface: normal to it (column 1), the
    # case where the explicit pair has same-sense images
    col = 0 if kind == bnd.WALL else 1
    scale = np.abs(tied.unit[:m, col]).max()
    # 1e-10 of the largest strength: two factorisations of equivalent systems
    np.testing.assert_allclose(explicit.unit[:m, col], tied.unit[:m, col], atol=1e-10 * scale)
    np.testing.assert_allclose(explicit.unit[m:2 * m, col],
                               img.vortex_sign * tied.unit[mirror, col], atol=1e-10 * scale)


@pytest.mark.parametrize("kind", KINDS)
def test_image_kernels_inside_assembly_equal_the_tied_system(kind, monkeypatch):
    # The hook proposed for solver.assemble: add Image.vortex_psi / Image.source_psi to the
    # kernels of the real panels. Emulated here by wrapping the influence functions (the
    # assembly takes the node-summed vortex kernel, influence.node_psi).
    bodies = (naca4("2412", n_points=161), circle(0.08, n_points=61).translated(1.35, -0.12))
    pan = Panels.from_panellings([respline(bodies[0].rotated(3.0), 90),
                                  respline(bodies[1], 40)])
    img = boundary(kind, 0.4).image(pitch_point(bodies))
    tied, rhs_tied, base_tied = bnd.reduced_system(pan, img)
    node_psi, source_psi = influence.node_psi, influence.source_psi

    def vortex_with_image(points, panels, out=None):
        out = node_psi(points, panels, out=out)
        ia, ib = img.vortex_psi(points, panels)
        n = len(points)
        out[:n, panels.start] += ia
        out[:n, panels.end] += ib
        return out

    def source_with_image(points, z1, tangent, length):
        return source_psi(points, z1, tangent, length) + img.source_psi(points, z1, tangent,
                                                                         length)

    monkeypatch.setattr(influence, "node_psi", vortex_with_image)
    monkeypatch.setattr(influence, "source_psi", source_with_image)
    hooked, rhs, base = solver.assemble(pan)
    # 1e-12: the same kernel values, summed in another order
    np.testing.assert_allclose(hooked, tied, atol=1e-12)
    np.testing.assert_array_equal(rhs, rhs_tied)
    np.testing.assert_array_equal(base, base_tied)


@pytest.mark.parametrize("name", SECTIONS)
@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("alpha", [0.0, 5.0])
def test_condition_on_the_plane(name, kind, alpha):
    bodies = SECTIONS[name]()
    pan = Panels.from_panellings([respline(o, 100) for o in bodies])
    img = boundary(kind, 0.4).image(pitch_point(bodies), alpha)
    system = bnd.factorise(pan, img)
    s = np.linspace(-4.0, 5.0, 37)
    into_fluid = 1j * img.direction * (1.0 if img.fluid_above else -1.0)
    # 1e-12 into the fluid: an inclined line's points are on the plane only to round-off
    w = bnd.velocity(system, img.point + s * img.direction + 1e-12 * into_fluid, alpha)
    # velocity components along and normal to the plane, and the disturbance
    along = (np.conj(w) * np.conj(img.direction)).real
    normal = (np.conj(w) * np.conj(img.direction)).imag
    size = np.abs(along - 1.0).max() + np.abs(normal).max()
    assert size > 1e-3  # the bodies do disturb the flow there
    # 1e-11 of the disturbance: exact cancellation of each panel by its image, up to the
    # round-off of an inclined mirror's coordinates (measured 2.6e-13 at 5 deg, 1e-15 level)
    if kind == bnd.WALL:
        assert np.abs(normal).max() < 1e-11 * size + 1e-13  # no flow through the wall
    else:
        # constant potential: the disturbance velocity along the surface vanishes
        assert np.abs(along - 1.0).max() < 1e-11 * size + 1e-13
    # the far side of the plane is outside the flow
    beyond = img.point - 0.1 * into_fluid
    assert np.isnan(bnd.velocity(system, [beyond], alpha)).all()


def test_symmetric_section_between_mirror_walls():
    # A symmetric section at zero incidence above a wall, and the same section with its mirror
    # image in free flow: no flow through the symmetry line, and the same velocity along it.
    foil = naca4("0012", n_points=161, closed_te=True).translated(0.0, 0.3)
    img = bnd.Image(0j, 1.0 + 0j, -1.0, fluid_above=True)  # the line y = 0, fluid above
    pan = Panels.from_panellings([respline(foil, 120)])
    walled = bnd.factorise(pan, img)
    full, _ = bnd._with_images(pan, img)
    pair = solver.factorise(full)
    x = np.linspace(-1.0, 2.0, 31)
    on_line = x + 0j
    w_pair = bnd._real_velocity(pair, on_line, *bnd._strengths(pair, 0.0)) + 1.0
    w_wall = bnd.velocity(walled, on_line, 0.0)
    # no flow through the symmetry line (1e-10: round-off of the two-body solve)
    assert np.abs(w_pair.imag).max() < 1e-10
    # the image kernels reproduce the explicit mirror body's field (1e-9: two solves)
    np.testing.assert_allclose(w_wall, w_pair, atol=1e-9)
    # the gap between section and wall speeds the flow up (Venturi): u > 1 under the section
    assert np.all(w_wall.real[(x > 0.1) & (x < 0.9)] > 1.0)


@functools.cache
def _naca0012_lift(kind, distance, alpha=4.0):
    foil = naca4("0012", n_points=201, closed_te=True)
    if kind is None:
        r = pf.analyse([foil], [alpha], error_estimate=False)
        return float(r.cl[0]), float(r.cm[0])
    r = near([foil], alpha, boundary(kind, distance), error_estimate=False)
    return float(r.cl[0]), float(r.cm[0])


@pytest.mark.parametrize("kind", KINDS)
def test_far_from_the_plane_is_free_flow(kind):
    cl_free, cm_free = _naca0012_lift(None, None)
    cl, cm = _naca0012_lift(kind, 100.0)
    # pitching the body by alpha in a stream along x is the free-flow case at alpha; the plane's
    # effect at h = 100 c is about Cl c / (4 pi h) = 3.8e-4 relative (measured 3.8e-4 and
    # 3.9e-4), hence 1e-3; on Cm measured 1.6e-6 and 2.5e-6
    assert cl == pytest.approx(cl_free, rel=1e-3)
    assert cm == pytest.approx(cm_free, abs=1e-5)


@pytest.mark.parametrize("kind", KINDS)
def test_first_order_effect_of_the_image_vortex(kind):
    cl_free, _ = _naca0012_lift(None, None)
    f = {h: (_naca0012_lift(kind, h)[0] / cl_free - 1.0) * h for h in (20.0, 40.0)}
    # f(h) = A + B / h + ...: Richardson extrapolation of the two heights to h -> infinity
    a = 2.0 * f[40.0] - f[20.0]
    # theory A = -Cl_inf / (4 pi) (module docstring). Measured within 0.05 % (wall -0.03839,
    # free surface -0.03840, theory -0.03841); 1 % allows for the O(h^-3) remainder
    assert a == pytest.approx(-cl_free / (4.0 * np.pi), rel=0.01)


@functools.cache
def _near(kind):
    foil = naca4("2412", n_points=201, closed_te=True)
    return near([foil], [0.0, 4.0], boundary(kind, 0.5))


@pytest.mark.parametrize("kind", KINDS)
def test_forces_near_the_plane(kind):
    r = _near(kind)
    # steady 2D potential flow with a plane and no waves has no drag: the pressure drag is the
    # discretisation error (measured |cd| < 1.1e-4 here, as in free flow at 200 panels)
    assert np.all(np.abs(r.cd_pressure) < 2e-4)
    # the Lagally lift and the pressure lift are two estimates of one force: they agree within
    # the discretisation error (measured differences below 6e-5)
    f = r.fine
    assert np.all(np.abs(f.cl_circulation - f.cl_pressure) < 3.0 * r.cl_error_estimate + 1e-4)
    assert np.all(r.cl_error_estimate < 1e-3)
    assert np.all(r.plane.clearance > 0.0)


def test_free_surface_lowers_lift():
    # Near a free surface a hydrofoil loses lift, tending to half its deep-water lift as the
    # depth goes to zero in the infinite-Froude limit (linearised hydrofoil theory, from memory).
    foil = naca4("2412", n_points=201, closed_te=True)
    deep = pf.analyse([foil], [4.0], error_estimate=False).cl[0]
    depths = [0.25, 0.5, 1.0, 2.0]
    cl = [near([foil], 4.0, bnd.Boundary.free_surface(d), error_estimate=False).cl[0]
          for d in depths]
    assert np.all(np.diff(cl) > 0) and cl[-1] < deep
    assert 0.5 * deep < cl[0] < deep


@pytest.mark.parametrize("distance", [0.0, -0.5, float("nan"), float("inf")])
def test_bad_distance(distance):
    with pytest.raises(InputError, match="positive distance"):
        bnd.Boundary.ground(distance)
    with pytest.raises(InputError, match="depth"):
        bnd.Boundary.free_surface(distance)


def test_plane_too_far():
    # beyond 100 chords the image terms lose precision and the effect is negligible
    with pytest.raises(InputError, match="solve without it"):
        near([naca4("0012")], 0.0, bnd.Boundary.ground(150.0))


def test_bad_kind_and_empty_input():
    with pytest.raises(InputError, match="boundary kind"):
        bnd.Boundary("ceiling", 1.0, True)
    with pytest.raises(InputError, match="no outline"):
        near([], 0.0, bnd.Boundary.ground(1.0))


def test_body_reaching_the_plane():
    foil = naca4("0012", n_points=101, closed_te=True)
    # pitched 10 deg nose-up about the quarter chord the trailing edge drops 0.75 sin 10 = 0.13
    with pytest.raises(GeometryError, match="alpha = 10 deg"):
        near([foil], [0.0, 10.0], bnd.Boundary.ground(0.1), error_estimate=False)
    # nose-down, the leading edge rises 0.25 sin 10 = 0.043 towards a surface 0.05 above
    with pytest.raises(GeometryError, match="reaches the plane"):
        near([foil], -10.0, bnd.Boundary.free_surface(0.05), error_estimate=False)


# ----------------------------------------------------------------------------- field with a plane
@pytest.mark.parametrize("wall", [True, False], ids=["wall", "surface"])
def test_field_near_plane_meets_the_plane_condition(wall):
    """The field of a body near a plane (image included) satisfies the plane's condition.

    Wall: no flow through it, v = 0 on y = h (mirror-image construction, Milne-Thomson).
    Free surface in the high-Froude-number limit: constant potential along it, so the velocity
    along the surface is the freestream's, u = 1 (Katz & Plotkin treat the same image pair).
    """
    from panelflow.flow.field import flow_field

    plane = bnd.Boundary.ground(0.3) if wall else bnd.Boundary.free_surface(0.3)
    result = near([naca4("2412")], 4.0, plane, panels=120, error_estimate=False)
    image = result.plane.image(4.0)
    into_fluid = 1j * image.direction * (1.0 if image.fluid_above else -1.0)
    s = np.linspace(-1.0, 2.0, 13)
    on = flow_field(result, image.point + s * image.direction + 1e-9 * into_fluid, [4.0])
    vel = (on.u + 1j * on.v)[0] * np.conj(image.direction)  # along (real) and normal (imag)
    if wall:
        # at 1e-9 from the plane the normal velocity is ~1e-9 times its gradient: round-off
        assert np.max(np.abs(vel.imag)) < 1e-7
        assert np.min(np.abs(vel.real - 1.0)) > 1e-3  # the body does disturb the flow there
    else:
        assert np.max(np.abs(vel.real - 1.0)) < 1e-7  # constant potential: no tangential change
        assert np.max(np.abs(vel.imag)) > 1e-2  # while the flow does cross the mean surface
    beyond = flow_field(result, image.point + s * image.direction - 1e-3 * into_fluid, [4.0])
    assert beyond.inside.all() and np.isnan(beyond.cp).all()  # the far side is no flow


def test_field_command_near_a_wall(tmp_path, capsys):
    from conftest import run

    out = tmp_path / "f.csv"
    code, stdout, err = run(capsys, "field", "naca2412", "--alpha", "4", "--ground", "0.3",
                            "--panels", "80", "--resolution", "21,11", "-o", str(out),
                            "--plot", str(tmp_path / "f.png"), "--streamlines", "5")
    assert code == 0, err
    assert "near a wall" in stdout
    rows = [ln.split(",") for ln in out.read_text().splitlines()
            if ln and not ln.startswith("#")][1:]
    z = np.array([float(r[0]) + 1j * float(r[1]) for r in rows])
    inside = np.array([r[5].strip() == "1" for r in rows])
    # the default window reaches below the wall (0.3 under the quarter chord, normal to the
    # freestream): masked there, and not just above it
    h = bnd.Boundary.ground(0.3).image(pitch_point([naca4("2412")]), 4.0).height(z)
    assert inside[h < 0.0].all() and not inside[(h > 0.05) & (h < 0.2)].any()
    assert (h < 0.0).any()
