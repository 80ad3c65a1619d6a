"""NACA sections against thin-airfoil theory (tests/exact.py ``thin_airfoil_*``).

Thin-airfoil theory (Anderson, *Fundamentals of Aerodynamics*, ch. 4; Abbott & von Doenhoff,
*Theory of Wing Sections*, ch. 4) is first order in camber and angle and ignores thickness, so it
is not the exact answer for a 12 % thick section: the tolerances below allow for the thickness
effect, whose size was measured and is written beside each check. The sections are the NACA
4-digit ones of NACA Report 460 with the closed (sharp) trailing edge, so that the Kutta
condition applies at a single point as the theory assumes.

The NACA chord line runs from (0, 0) to (1, 0), the x-axis; panelflow measures angles from the
x-axis, so its angles compare directly with the theory's angles from the chord line. (The
outline's own chord line, from its farthest point to the trailing edge, is turned by 0.080 deg
(2412) and 0.159 deg (4412) and is not used here.)
"""

import numpy as np
import pytest
from exact import naca4_camber_slope, thin_airfoil_alpha_l0, thin_airfoil_cm_quarter

import panelflow as pf
from panelflow.geometry.sections import naca4

N_PANELS = 200
CAMBERED = [  # digits, max camber m, its position p (NACA Report 460 designation)
    pytest.param("2412", 0.02, 0.4, id="naca2412"),
    pytest.param("4412", 0.04, 0.4, id="naca4412"),
]
SYMMETRIC = ["0003", "0006", "0012", "0018"]


def section(digits):
    return naca4(digits, n_points=401, closed_te=True)


@pytest.mark.parametrize("digits,m,p", CAMBERED)
def test_zero_lift_angle(digits, m, p):
    foil = section(digits)
    alpha0 = pf.alpha_for_cl([foil], 0.0, n_panels=N_PANELS)
    # alpha_for_cl must really give zero lift, else the comparison below means nothing;
    # measured |Cl| <= 5.2e-16 (closed form of the two unit solutions).
    assert abs(pf.analyse([foil], alpha0, n_panels=N_PANELS).cl[0]) < 1e-9
    theory = np.degrees(thin_airfoil_alpha_l0(naca4_camber_slope(m, p)))  # -2.08, -4.15 deg
    # Thickness makes the thick section's zero-lift angle about 3 % more negative than the
    # thin-airfoil value: measured -2.149 vs -2.077 (0.071 deg, 3.4 %) for 2412 and -4.282 vs
    # -4.154 (0.128 deg, 3.1 %) for 4412. 0.3 deg allows for that first-order thickness effect.
    assert alpha0 == pytest.approx(theory, abs=0.3)


@pytest.mark.parametrize("digits,m,p", CAMBERED)
def test_quarter_chord_moment(digits, m, p):
    foil = section(digits)
    alpha0 = pf.alpha_for_cl([foil], 0.0, n_panels=N_PANELS)
    alphas = alpha0 + np.array([0.0, 2.0, 4.0])  # Cl from 0 to about 0.48
    r = pf.analyse([foil], alphas, n_panels=N_PANELS, reference_point=(0.25, 0.0))
    cm = r.cm * r.chord**2  # panelflow divides by its own chord squared; the NACA chord is 1
    theory = thin_airfoil_cm_quarter(naca4_camber_slope(m, p))  # -0.0531, -0.1062
    # Theory: Cm about c/4 is independent of the angle. With thickness the aerodynamic centre
    # in potential flow lies a little behind c/4 (measured dCm/dCl = -0.012, i.e. 0.262 c for
    # 2412 and 4412), so Cm about c/4 drifts nose-down with lift: measured
    # difference +0.0006 / -0.0021 / -0.0050 (2412) and +0.0017 / -0.0011 / -0.0040 (4412) at
    # Cl = 0 / 0.24 / 0.48. 0.01 allows for this thickness effect over the range.
    assert np.all(np.abs(cm - theory) < 0.01)


@pytest.fixture(scope="module")
def lift_slopes():
    """dCl/dalpha per radian of the symmetric sections, from alpha = -1 and +1 deg."""
    out = {}
    for digits in SYMMETRIC:
        r = pf.analyse([section(digits)], [-1.0, 1.0], n_panels=N_PANELS, error_estimate=False)
        out[digits] = (r.cl[1] - r.cl[0]) / np.radians(2.0)
    return out


def test_lift_slope_grows_with_thickness(lift_slopes):
    # Potential-flow lift slope rises with thickness (for Joukowski sections
    # 2 pi (1 + 0.77 t/c), from memory). Measured slope / 2 pi: 1.0251, 1.0503, 1.1011, 1.1523
    # for 0003, 0006, 0012, 0018.
    slopes = np.array([lift_slopes[d] for d in SYMMETRIC])
    assert np.all(np.diff(slopes) > 0.0)


def test_lift_slope_tends_to_thin_airfoil_value(lift_slopes):
    # Thin-airfoil theory: 2 pi per radian for zero thickness (Anderson ch. 4).
    t = np.array([int(d[2:]) / 100.0 for d in SYMMETRIC])
    ratio = np.array([lift_slopes[d] for d in SYMMETRIC]) / (2.0 * np.pi)
    # The thinnest section is already close: measured 2.51 % above 2 pi for 0003 (0006 is
    # already 5.03 % above, so 0003 is the one checked against 2 pi directly); 0.04 is 1.6x
    # that thickness effect.
    assert ratio[0] == pytest.approx(1.0, abs=0.04)
    # The excess is linear in thickness; extrapolated to t = 0 it must give 2 pi. Measured
    # intercept 0.9995 and slope 0.85 (d(ratio)/d(t/c)); 0.005 on the intercept is 1/10 of the
    # thickness effect of the 0006 section. The slope is checked loosely against the
    # Joukowski-section 0.77 (from memory): the NACA thickness form differs from Joukowski's.
    slope, intercept = np.polyfit(t, ratio, 1)
    assert intercept == pytest.approx(1.0, abs=0.005)
    assert 0.6 < slope < 1.0
