"""Property tests: random valid outlines give the same answer however they reach the solver.

Potential flow past a body has no length scale, origin or preferred direction (Anderson,
*Fundamentals of Aerodynamics*, ch. 3), and an outline is the same body whichever point its table
starts at, whichever way round it runs and whether it went through a file. The panelling is built
from the points alone (a spline in the chord-length parameter, node density from curvature and
distance along the curve; the leading edge and, for a body without a trailing edge, both chord ends
taken on that curve), so all of these must agree to round-off. The bounds below are round-off
bounds, measured over the draws of this module and written beside each check.

Random outlines (hypothesis strategies below, our own formulas):

* foils: a round-nosed thickness form ``A sqrt(x)(1 - x)(1 + k x)`` laid off a parabolic-arc mean
  line, 6-20 % thick, 0-6 % camber, sharp or cut-off trailing edge, 41-161 stations per surface
  clustered at both ends;
* smooth bodies: egg-shaped loops ``(a cos s, b sin s (1 + e cos s))``, fineness 1.5-6, 40-200
  points.
"""

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import panelflow as pf
from panelflow.geometry.outline import Outline
from panelflow.geometry.readers import read_outline_table, write_outline_table

ALPHAS = np.array([-2.0, 3.0, 7.0])
DRAWS = settings(max_examples=12, deadline=None,
                 suppress_health_check=[HealthCheck.function_scoped_fixture])
N_PANELS = 120  # enough to be a real solve, few enough to keep each draw short


def foil_points(t, m, p, sharp, n, tail):
    """Loop upper TE -> LE -> lower TE of a random foil (see module docstring)."""
    x = 0.5 * (1.0 - np.cos(np.linspace(0.0, np.pi, n)))
    fine = np.linspace(0.0, 1.0, 4001)
    shape = np.sqrt(fine) * (1.0 - fine) * (1.0 + tail * fine)
    yt = 0.5 * t * np.sqrt(x) * (1.0 - x) * (1.0 + tail * x) / shape.max()
    if not sharp:
        yt = yt + 0.004 * x  # cut-off tail 0.8 % of chord high
    front = x < p
    k = np.where(front, m / p**2, m / (1.0 - p) ** 2)
    yc = np.where(front, k * (2 * p * x - x * x), k * (1 - 2 * p + 2 * p * x - x * x))
    th = np.arctan(2.0 * k * (p - x))
    upper = np.column_stack([x - yt * np.sin(th), yc + yt * np.cos(th)])
    lower = np.column_stack([x + yt * np.sin(th), yc - yt * np.cos(th)])
    return np.vstack([upper[::-1], lower[1:]])


def smooth_points(fineness, egg, n):
    s = np.linspace(0.0, 2.0 * np.pi, n, endpoint=False)
    return np.column_stack([fineness * np.cos(s), np.sin(s) * (1.0 + egg * np.cos(s))])


foils = st.builds(foil_points, t=st.floats(0.06, 0.20), m=st.floats(0.0, 0.06),
                  p=st.floats(0.25, 0.6), sharp=st.booleans(), n=st.integers(41, 161),
                  tail=st.floats(-0.2, 0.6))
smooth_bodies = st.builds(smooth_points, fineness=st.floats(1.5, 6.0), egg=st.floats(-0.3, 0.3),
                          n=st.integers(40, 200))
outlines = st.one_of(foils, smooth_bodies).map(lambda pts: Outline.from_points(pts, name="b"))


def solve(outline, alphas=ALPHAS, **kw):
    return pf.analyse([outline], alphas, n_panels=N_PANELS, error_estimate=False, **kw)


def close(a, b, coeff=1e-9, cp=1e-7):
    """Same coefficients and nodal Cp to round-off."""
    for name in ("cl", "cm", "cd_pressure"):
        assert np.max(np.abs(getattr(a, name) - getattr(b, name))) <= coeff, name
    assert np.max(np.abs(a.fine.cl_pressure - b.fine.cl_pressure)) <= coeff
    assert np.max(np.abs(a.fine.cp - b.fine.cp)) <= cp


@DRAWS
@given(outline=outlines, reverse=st.booleans(), shift=st.integers(0, 400))
def test_order_and_start_of_the_points_do_not_matter(outline, reverse, shift):
    # the same loop from another point, in either direction, found again exactly
    loop = outline.polygon if outline.kind == "blunt" else outline.points[:-1]
    k = shift % len(loop)
    other = np.roll(loop, -k, axis=0)[::-1 if reverse else 1]
    again = Outline.from_points(other, name="b", starts_at_trailing_edge=False)
    assert again.kind == outline.kind
    # Measured: identical points for every draw (the normalisation only reorders them).
    np.testing.assert_array_equal(again.points, outline.points)


@DRAWS
@given(outline=outlines, dx=st.floats(-50, 50), dy=st.floats(-50, 50),
       scale=st.floats(0.01, 100.0))
def test_moving_and_scaling_do_not_change_coefficients(outline, dx, dy, scale):
    ref = solve(outline)
    moved = outline.scaled(scale).translated(dx, dy)
    # Coefficients measured <= 8e-12 apart over 60 draws (digits lost in the stream function of
    # a body far from the origin, as in tests/test_invariance.py); nodal Cp <= 4e-10.
    close(solve(moved), ref, coeff=1e-8, cp=1e-6)


@DRAWS
@given(outline=outlines, pitch=st.floats(-30.0, 30.0))
def test_pitch_is_the_same_as_a_higher_angle(outline, pitch):
    # @pitch=D turns the body nose-up about its leading edge; at angle a it must give what the
    # unturned body gives at a + D (coefficients on the turned chord line, moments about the
    # turned quarter chord: both move with the body).
    turned = load_bodies_like(outline, f"@pitch={pitch!r}")
    # measured <= 2.5e-12 (coefficients) and 2.7e-10 (nodal Cp) over 60 draws
    close(solve(turned), solve(outline, ALPHAS + pitch), coeff=1e-9, cp=1e-7)


def load_bodies_like(outline, transforms):
    """The outline after OUTLINE-argument transforms (the command line's own code path)."""
    from panelflow.geometry.arguments import transformed

    out = outline
    for step in transforms.split("@")[1:]:
        key, _, value = step.partition("=")
        out = transformed(out, key, float(value), "test")
    return out


@DRAWS
@given(outline=outlines, pitch=st.floats(-40.0, 40.0))
def test_file_round_trip_with_pitch(outline, pitch, tmp_path_factory):
    # The case: a body turned with @pitch and the same points written and read back.
    # Before the chord of a smooth body was its longest extent, these differed by up to 0.17
    # in cm (the re-read body measured its chord from its new most downstream point).
    turned = load_bodies_like(outline, f"@pitch={pitch!r}")
    path = tmp_path_factory.mktemp("trip") / "turned.dat"
    write_outline_table(turned, path)
    (back,) = read_outline_table(path)
    assert back.kind == turned.kind
    # 12 significant digits in the file: points within 1e-11 of the chord. Coefficients
    # measured <= 2.6e-10 apart over 60 draws. Nodal Cp up to 4e-5 apart: the node density
    # follows the curvature of the spline through the points, whose second derivatives amplify
    # the rounding of the file (about 5e-13) to 2e-7 relative, which moves the nodes by up to
    # 3e-8 of the chord; near a sharp nose, where Cp changes by 1e3 per chord length along the
    # surface, that is a few 1e-5 in the nodal Cp. 1e-4 bounds it.
    assert np.max(np.abs(back.points - turned.points)) <= 1e-11 * turned.chord
    assert back.chord == pytest.approx(turned.chord, rel=1e-10)
    close(solve(back), solve(turned), coeff=1e-9, cp=1e-4)


@settings(max_examples=6, deadline=None)
@given(outline=foils.map(lambda pts: Outline.from_points(pts, name="b")))
def test_file_round_trip_keeps_the_error_estimate(outline, tmp_path_factory):
    # the printed +/- (panels and input points) is reproduced from the file as well
    path = tmp_path_factory.mktemp("trip") / "foil.dat"
    write_outline_table(outline, path)
    (back,) = read_outline_table(path)
    a = pf.analyse([outline], ALPHAS, n_panels=N_PANELS)
    b = pf.analyse([back], ALPHAS, n_panels=N_PANELS)
    # measured <= 3.3e-10 apart over 20 draws (estimates are differences of nearby solutions)
    np.testing.assert_allclose(a.cl_error_estimate, b.cl_error_estimate, rtol=1e-6, atol=1e-9)
    np.testing.assert_allclose(a.cm_error_estimate, b.cm_error_estimate, rtol=1e-6, atol=1e-9)


@settings(max_examples=8, deadline=None)
@given(pts=foils)
def test_split_surfaces_read_as_the_same_loop(pts, tmp_path_factory):
    # Layout (b): upper and lower surfaces from the leading edge, after a count line.
    o = Outline.from_points(pts, name="b")
    i = int(np.argmin(pts[:, 0]))
    upper, lower = pts[:i + 1][::-1], pts[i:]
    rows = [f"{len(upper)} {len(lower)}"] + [f"{x:.15g} {y:.15g}" for x, y in
                                             np.vstack([upper, lower])]
    path = tmp_path_factory.mktemp("split") / "split.dat"
    path.write_text("split body\n" + "\n".join(rows) + "\n")
    (back,) = read_outline_table(path)
    assert back.kind == o.kind
    # 15 significant digits written: points equal to 1e-14 of the chord
    np.testing.assert_allclose(back.points, o.points, rtol=0.0, atol=1e-14 * o.chord)
