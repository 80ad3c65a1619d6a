"""The solver against exact potential-flow solutions (tests/exact.py).

Every reference value comes from a closed form that does not use panelflow: the circle
(Anderson, *Fundamentals of Aerodynamics*, ch. 3), the elliptic cylinder (Milne-Thomson,
*Theoretical Hydrodynamics*) and the Joukowski / Karman-Trefftz sections (Katz & Plotkin,
*Low-Speed Aerodynamics*, ch. 6). Tolerances were set from measured errors at 200 panels with
about 2-4x margin unless a requirement is quoted; the measured value is written beside each.

Conventions: panelflow takes angles in degrees, exact.py in radians; both count lift positive
for clockwise circulation and Cm positive nose-up.
"""

import numpy as np
import pytest
from exact import circle_cp, ellipse_cm, ellipse_surface_speed

import panelflow as pf
from panelflow.analysis.inviscid import ORDER, ROUND_OFF, ROUND_OFF_PER_PANEL, SAFETY_FACTOR
from panelflow.geometry.sections import circle, ellipse

N_PANELS = 200
SMOOTH_ALPHAS_DEG = np.array([0.0, 10.0, 33.0, -25.0])

ELLIPSES = [  # (a, b, max surface-speed error allowed at 200 panels, measured at alpha 0 / 10)
    pytest.param(2.0, 1.0, 1.5e-3, id="ellipse-2to1"),  # measured 5.0e-4 / 5.3e-4
    pytest.param(1.0, 0.25, 3e-3, id="ellipse-4to1"),  # measured 9.8e-4 / 1.1e-3
    pytest.param(1.0, 0.1, 1e-2, id="ellipse-10to1"),  # measured 1.6e-3 / 3.6e-3 (nose peak)
]


# ----------------------------------------------------------------------------- helpers
@pytest.fixture(scope="module")
def circle_result():
    # 2001 exact points: the spline through them is the circle to ~1e-13.
    return pf.analyse([circle(1.0, n_points=2001)], SMOOTH_ALPHAS_DEG, n_panels=N_PANELS)


@pytest.fixture(scope="module")
def ellipse_results():
    cache = {}

    def get(a, b):
        if (a, b) not in cache:
            cache[a, b] = pf.analyse([ellipse(a, b, n_points=2001)], [0.0, 10.0],
                                     n_panels=N_PANELS, reference_point=(0.0, 0.0))
        return cache[a, b]

    return get


def exact_cp_at_nodes(case, result):
    """Exact Cp at the solver's own nodes, and each node's chord fraction.

    The nodes lie on the spline through exact surface points (within ~1e-10 of the surface), so
    each is mapped back to its circle angle with the exact inverse map (exact.py
    ``circle_angles_of``) and the exact Cp is taken there. This avoids interpolating the exact
    Cp, which varies steeply at the leading edge. The map round trip is checked too.
    """
    sec = case.section
    nodes = result.fine.panels.nodes
    theta = sec.circle_angles_of(nodes)
    assert np.all(np.isfinite(theta))
    # Nodes must map back onto themselves, so a wrong branch of the inverse map cannot slip
    # through: spline-geometry plus map error measured <= 5.2e-11 chord (kt-15deg-sharp-nose);
    # 1.5e-10 (about 3x) also holds the input spline to the accuracy conftest.py relies on.
    assert np.max(np.hypot(*(sec.surface(theta) - nodes).T)) < 1.5e-10 * sec.chord
    cp = np.array([sec.cp_at_circle_angles(theta, a)
                   for a in np.radians(result.alpha_deg)])
    le, te = sec.leading_edge, sec.trailing_edge
    fraction = (nodes - le) @ (te - le) / sec.chord**2
    return cp, fraction


def pressure_lift_error_estimate(result):
    """Richardson estimate of the pressure lift, with panelflow's safety factor and order.

    Taken angle by angle (panelflow's ``cl_error_estimate`` also sums over the angle-independent
    lift components, which are not exposed for the pressure lift).
    """
    ratio = result.fine.panels.n_panels / result.coarse.n_panels
    diff = np.abs(result.fine.cl_pressure - result.coarse.cl_pressure)
    return SAFETY_FACTOR * diff / (ratio**ORDER - 1.0)


# ----------------------------------------------------------------------------- circle
def test_circle_cp_at_nodes(circle_result):
    # Cp = 1 - 4 sin^2(theta - alpha) with no circulation (Anderson ch. 3; exact.circle_cp).
    r = circle_result
    nodes = r.fine.panels.nodes
    theta = np.arctan2(nodes[:, 1], nodes[:, 0])
    exact = np.array([circle_cp(theta, np.radians(a)) for a in r.alpha_deg])
    # Measured max error 9.87e-4 at 200 panels at every angle (second order: 3.95e-3 at 100).
    assert np.max(np.abs(r.fine.cp - exact)) < 2e-3


def test_circle_carries_no_lift(circle_result):
    # No trailing edge -> no Kutta condition -> zero circulation (Kelvin), so no lift at any
    # angle (Anderson ch. 3). Measured |Cl| <= 9.5e-16 (circulation) and 1.8e-15 (pressure):
    # 1e-12 is round-off level for O(1) Cp summed over 200 panels.
    r = circle_result
    assert np.max(np.abs(r.cl)) < 1e-12
    assert np.max(np.abs(r.fine.cl_pressure)) < 1e-12


# ----------------------------------------------------------------------------- ellipse
@pytest.mark.parametrize("a,b,tol", ELLIPSES)
def test_ellipse_surface_speed(ellipse_results, a, b, tol):
    # Surface speed of the elliptic cylinder without circulation (Milne-Thomson, elliptic
    # cylinder; exact.ellipse_surface_speed). panelflow's gamma is the signed tangential speed.
    r = ellipse_results(a, b)
    nodes = r.fine.panels.nodes
    for i, alpha in enumerate(r.alpha_deg):
        exact = ellipse_surface_speed(a, b, np.radians(alpha), nodes)
        assert np.max(np.abs(np.abs(r.fine.gamma[i]) - exact)) < tol


@pytest.mark.parametrize("a,b,tol", ELLIPSES)
def test_ellipse_no_lift_and_exact_couple(ellipse_results, a, b, tol):
    # Zero lift without a trailing edge (Kelvin); the couple about the centre is the exact
    # pi (a^2 - b^2) sin(2 alpha) / (4 a^2) (Milne-Thomson; exact.ellipse_cm, chord 2a).
    r = ellipse_results(a, b)
    assert np.max(np.abs(r.cl)) < 1e-12  # measured <= 2.8e-15: round-off
    exact = np.array([ellipse_cm(a, b, np.radians(al)) for al in r.alpha_deg])
    # Measured |error| at 10 degrees: 2:1 1.7e-6, 4:1 3.0e-5, 10:1 7.9e-5 (0.03 %; 0 deg is
    # round-off, <= 2.3e-15). Bound 2e-4 (2.5x the worst), still 10x inside the 0.002 asked of
    # Cm.
    assert np.max(np.abs(r.cm - exact)) < 2e-4


# ----------------------------------------------------------------------------- mapped sections
def test_mapped_section_lift(mapped_case, mapped_analysis):
    # Exact Kutta-Joukowski lift 8 pi a sin(alpha + beta) / c (Katz & Plotkin ch. 6).
    # Requirement: within 0.2 % at 200 panels. The absolute error does not vanish at zero lift
    # (3.4e-5 .. 1.7e-4 along the polars of the cambered sections: an offset of the zero-lift
    # angle plus a part growing with Cl), so near zero lift a relative tolerance means nothing:
    # there the 0.2 % applies to |Cl| = 0.05, i.e. 1e-4 absolute. Measured worst: 0.13 % of
    # 0.05 (kt-10deg at Cl = 0.029); 0.040 % or less where |Cl| > 0.2, typically 0.009 %
    # (median).
    r = mapped_analysis(mapped_case, N_PANELS)
    exact = mapped_case.cl_exact(r.alpha_deg)
    assert np.all(np.abs(r.cl - exact) <= 2e-3 * np.maximum(np.abs(exact), 0.05))


def test_mapped_section_quarter_chord_moment(mapped_case, mapped_analysis):
    # Exact Cm about the exact quarter chord by the theorem of Blasius (Milne-Thomson;
    # exact.KarmanTrefftz.cm). Requirement 0.002; measured worst 7.0e-5 at 200 panels
    # (joukowski-sharp-nose at 10 deg; 2.2e-5 .. 7.0e-5 over the cases), so 2e-4 is used: 2.9x
    # margin, and it catches regressions the requirement would miss.
    r = mapped_analysis(mapped_case, N_PANELS)
    assert np.max(np.abs(r.cm - mapped_case.cm_exact(r.alpha_deg))) < 2e-4


def test_mapped_section_cp(mapped_case, mapped_analysis):
    # Exact surface Cp with the Kutta condition (Katz & Plotkin ch. 6; exact.py), compared at
    # the solver's nodes (see exact_cp_at_nodes). RMS over the nodes ahead of 99 % chord: at
    # the trailing edge itself the exact Cp of a finite-angle edge is a stagnation value that a
    # linear-vorticity panel cannot reach, so the last 1 % of the chord is left out.
    # Requirement: RMS <= 0.01 at moderate angles. Measured at 200 panels: at most 0.0025 for
    # every case without a sharp nose at any angle here (-4 .. 10 deg); the sharp-nosed cases
    # reach 0.0042 at 6 deg, 0.0071 at 8 deg and 0.0109 at 10 deg (joukowski-sharp-nose,
    # suction peak Cp -15.3), growing with the peak: RMS / (1 - Cp_min) 2.8e-4 .. 8.3e-4 over
    # all cases and angles (the largest at -2 deg, Cp_min -1.06). Bounds: 0.01 up to 8 deg for
    # all (the requirement; 1.4x margin on 0.0071), and 1.5e-3 (1 - Cp_min) at every angle
    # (1.8x margin).
    r = mapped_analysis(mapped_case, N_PANELS)
    exact, fraction = exact_cp_at_nodes(mapped_case, r)
    ahead = fraction < 0.99
    rms = np.sqrt(np.mean((r.fine.cp - exact)[:, ahead] ** 2, axis=1))
    moderate = r.alpha_deg <= 8.0
    assert np.all(rms[moderate] <= 0.01)
    assert np.all(rms <= 1.5e-3 * (1.0 - exact.min(axis=1)))
    if not mapped_case.sharp_nose:
        assert np.all(rms <= 0.005)  # measured <= 0.0025 (kt-10deg at 10 deg)


def test_cl_error_estimate_brackets_true_error(mapped_case, mapped_analysis):
    # panelflow's estimate (Richardson over 200 and 100 panels with Roache's two-grid safety
    # factor 3, summed over the two angle-independent lift components, panelflow/analysis.py)
    # must bound the true error at every angle. Measured estimate / true error 2.51 .. 4.91
    # for all cases and angles (largest for kt-5deg at -4 deg, near its zero-lift angle), so it
    # brackets; bound 8 on the ratio (1.6x margin) to catch an estimate grown absurdly large.
    # At zero lift on the symmetric section both are at round-off (true error 6.2e-13) and the
    # estimate sits at its floor ROUND_OFF, hence that allowance; the 1e-12 allows for round-off
    # in the true error there.
    r = mapped_analysis(mapped_case, N_PANELS)
    err = np.abs(r.cl - mapped_case.cl_exact(r.alpha_deg))
    assert np.all(err <= r.cl_error_estimate + 1e-12)
    floor = max(ROUND_OFF, ROUND_OFF_PER_PANEL * r.n_panels)  # the estimate's round-off floor
    assert np.all(r.cl_error_estimate <= 8.0 * err + floor)


def test_cm_error_estimate_brackets_worst_error_of_the_polar(mapped_case, mapped_analysis):
    # The Cm error changes sign along the polar at a slightly different angle for 100 and 200
    # panels (kt-15deg-sharp-nose near -2 deg: 2.4e-8 at 200 panels, 7.2e-6 at 100), where a
    # per-angle fine-coarse difference collapses while the true error does not. panelflow sums
    # the changes of the four angle-independent moment components instead, so its estimate does
    # not collapse there: measured estimate / true error per angle 1.64 .. 947 (947 is that
    # near-zero error; the symmetric section at 0 deg, both at round-off, gives 695). What is
    # asked of it is the bound over the whole polar: measured max(estimate) / max(true error)
    # 1.64 .. 2.65.
    r = mapped_analysis(mapped_case, N_PANELS)
    worst = np.max(np.abs(r.cm - mapped_case.cm_exact(r.alpha_deg)))
    assert worst <= np.max(r.cm_error_estimate)
    # Not absurdly conservative. The 200-panel Cm error could be accidentally tiny at every
    # angle, so the scale is the larger of it and the second-order expectation from the
    # 100-panel error, err_100 / 4 (measured: the 200-panel worst, 2.2e-5 .. 7.0e-5, is the
    # larger in every case; err_100 / 4 is 2.0e-5 .. 4.7e-5). Measured ratio 1.64 .. 2.65;
    # bound 5.
    coarse = mapped_analysis(mapped_case, N_PANELS // 2)
    worst_100 = np.max(np.abs(coarse.cm - mapped_case.cm_exact(coarse.alpha_deg)))
    assert np.max(r.cm_error_estimate) <= 5.0 * max(worst, worst_100 / 4.0)


def test_mapped_section_dalembert(mapped_case, mapped_analysis):
    # No drag in steady 2D potential flow (d'Alembert's paradox; Anderson ch. 3). The pressure
    # drag is pure discretisation error: measured |Cd_p| <= 8.8e-5 at 200 panels
    # (joukowski-cambered; second order: 3.3e-4 at 100, 2.3e-5 at 400). Bound 2.5e-4 (2.8x).
    r = mapped_analysis(mapped_case, N_PANELS)
    assert np.max(np.abs(r.cd_pressure)) < 2.5e-4


@pytest.mark.parametrize("a,b,tol", [
    pytest.param(1.0, 1.0, 1e-12, id="circle"),  # measured 1.4e-15: round-off
    pytest.param(2.0, 1.0, 2e-9, id="ellipse-2to1"),  # measured 7.6e-10 (at -25 deg)
    pytest.param(1.0, 0.25, 1e-7, id="ellipse-4to1"),  # measured 4.4e-8 (at -25 deg)
    pytest.param(1.0, 0.1, 3e-5, id="ellipse-10to1"),  # measured 7.1e-6 (at -25 deg)
])
def test_smooth_body_dalembert(a, b, tol):
    # d'Alembert (Anderson ch. 3) for bodies without a trailing edge, at 0, 10 and -25 deg.
    # The error grows with the nose suction peak, hence a bound per body (2.3-4.2x measured).
    outline = circle(a, n_points=2001) if a == b else ellipse(a, b, n_points=2001)
    r = pf.analyse([outline], [0.0, 10.0, -25.0], n_panels=N_PANELS, error_estimate=False)
    assert np.max(np.abs(r.cd_pressure)) < tol


def test_pressure_lift_matches_circulation_lift(mapped_case, mapped_analysis):
    # Integrated pressure and Kutta-Joukowski circulation are two routes to the same lift
    # (Anderson ch. 3). They differ by discretisation error only, so by no more than a small
    # multiple of the two error estimates (the pressure-lift estimate with panelflow's factor
    # and order, see pressure_lift_error_estimate). Measured |Cl_p - Cl_gamma| /
    # (est_gamma + est_p) <= 0.46 (joukowski-sharp-nose); bound 2 (4.4x).
    r = mapped_analysis(mapped_case, N_PANELS)
    bound = 2.0 * (r.cl_error_estimate + pressure_lift_error_estimate(r))
    assert np.all(np.abs(r.fine.cl_pressure - r.cl) <= bound)
