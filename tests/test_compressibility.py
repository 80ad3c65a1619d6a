"""Compressibility corrections, critical Cp and critical Mach number (panelflow.conditions.compressibility).

Sources
-------
* Similarity rules (Prandtl-Glauert, Karman-Tsien, Laitone): J. D. Anderson, *Modern
  Compressible Flow*, ch. 9 (formulas as given there, from memory); the hand values below are
  worked from those formulas with a calculator, to 7 significant figures.
* Isentropic-flow table: NACA Report 1135, *Equations, Tables, and Charts for Compressible
  Flow* (1953), Table I, p/p0 against M for gamma = 1.4 (five-figure values from memory).
* Critical Mach number of NACA 0012 at zero lift: Anderson, *Fundamentals of Aerodynamics*,
  worked example on the critical Mach number (Cp0,min = -0.43, Prandtl-Glauert, graphical
  answer about 0.74; from memory).
"""

import functools

import numpy as np
import pytest

import panelflow as pf
from panelflow.conditions import compressibility as cmp
from panelflow.errors import InputError
from panelflow.geometry.sections import naca4


@functools.cache
def naca0012():
    return pf.analyse([naca4("0012", n_points=401, closed_te=True)], [0.0, 2.0, 4.0])


# cp0, Mach, Prandtl-Glauert, Karman-Tsien, Laitone (gamma = 1.4), worked by hand:
#   M = 0.6: beta = 0.8; KT den = 0.8 + 0.36 cp0 / 3.6; Laitone den = 0.8 + 0.36*1.072 cp0 / 1.6
#   M = 0.5: beta = 0.8660254; KT den = beta + 0.25 cp0 / (2 * 1.8660254);
#            Laitone den = beta + 0.25 * 1.05 cp0 / (2 beta)
#   M = 0.3: beta = 0.9539392; KT den = beta + 0.09 cp0 / (2 * 1.9539392);
#            Laitone den = beta + 0.09 * 1.018 cp0 / (2 beta)
HAND = [
    (-0.5, 0.6, -0.6250000, -0.6666667, -0.7359435),
    (-0.3, 0.6, -0.3750000, -0.3896104, -0.4122918),
    (0.2, 0.5, 0.2309401, 0.2274219, 0.2231305),
    (-1.0, 0.3, -1.0482848, -1.0742191, -1.1038536),
]


@pytest.mark.parametrize("cp0,mach,pg,kt,la", HAND)
def test_rules_against_hand_values(cp0, mach, pg, kt, la):
    # 5e-7: the hand values are rounded to 7 decimals
    assert cmp.prandtl_glauert(cp0, mach) == pytest.approx(pg, abs=5e-7)
    assert cmp.karman_tsien(cp0, mach) == pytest.approx(kt, abs=5e-7)
    assert cmp.laitone(cp0, mach) == pytest.approx(la, abs=5e-7)
    for rule, want in zip(cmp.RULES, (pg, kt, la)):
        assert cmp.corrected_cp(cp0, mach, rule) == pytest.approx(want, abs=5e-7)


def test_rules_vectorised_and_identity_at_zero_mach():
    cp0 = np.linspace(-2.0, 1.0, 7)
    mach = np.array([[0.0], [0.3], [0.6]])
    for rule in cmp.RULES:
        out = cmp.corrected_cp(cp0, mach, rule)
        assert out.shape == (3, 7)
        # exactly the incompressible values at M = 0 (beta = 1, the M^2 terms vanish)
        np.testing.assert_array_equal(out[0], cp0)
        # every rule keeps the sign and amplifies suction (near stagnation, Cp0 -> 1, the
        # nonlinear rules may lower Cp slightly: measured 0.998 for Karman-Tsien at M = 0.3)
        assert np.all(np.sign(out[1:]) == np.sign(cp0))
        assert np.all(out[1:, cp0 < 0] < cp0[cp0 < 0])


# NACA Report 1135, Table I: p/p0 at M (gamma = 1.4), from memory; p*/p0 = 0.52828 at M = 1.
ISENTROPIC_TABLE = [(0.5, 0.84302), (0.6, 0.78400), (0.7, 0.72093), (0.8, 0.65602),
                    (0.9, 0.59126)]


@pytest.mark.parametrize("mach,p_ratio", ISENTROPIC_TABLE)
def test_critical_cp_against_isentropic_table(mach, p_ratio):
    # Cp* = (p*/p_inf - 1) / (gamma M^2 / 2) with p*/p_inf = (p*/p0) / (p_inf/p0)
    table = (0.52828 / p_ratio - 1.0) / (0.7 * mach**2)
    # 1e-4: the table's five figures (+-5e-6 in each ratio) move Cp* by up to 6e-5 at M = 0.5
    assert cmp.critical_cp(mach) == pytest.approx(table, abs=1e-4)


def test_critical_cp_limits():
    # Cp* = 0 at M = 1 exactly (the freestream is itself sonic), and tends to -inf as M -> 0
    # like -0.674/M^2 for gamma = 1.4: 2/1.4 * ((2/2.4)^3.5 - 1) = -0.67388 (hand value)
    assert cmp.critical_cp(1.0) == pytest.approx(0.0, abs=1e-15)
    # 1e-5: the M^2 term of the expansion is about 0.2 M^2 = 2e-7 relative at M = 1e-3
    assert cmp.critical_cp(1e-3) * 1e-6 == pytest.approx(-0.67388, abs=1e-5)


def test_critical_mach_naca0012_worked_example():
    # Anderson's example: Cp0,min = -0.43 with Prandtl-Glauert gives M_cr about 0.74 (read from a
    # graph, so +-0.01)
    assert cmp.critical_mach(-0.43, cmp.PRANDTL_GLAUERT) == pytest.approx(0.74, abs=0.01)


@pytest.mark.parametrize("rule", cmp.RULES)
@pytest.mark.parametrize("cp0_min", [-0.2, -0.43, -1.0, -3.0])
def test_critical_mach_is_where_corrected_cp_meets_cp_star(rule, cp0_min):
    m = float(cmp.critical_mach(cp0_min, rule))
    assert 0.0 < m < 1.0
    # 1e-9: Brent's method converged to 1e-12 in M; the slopes of both sides are O(10)
    assert cmp.corrected_cp(cp0_min, m, rule) == pytest.approx(cmp.critical_cp(m), abs=1e-9)
    # just below it the section is subcritical, just above supercritical
    assert cmp.corrected_cp(cp0_min, m - 1e-3, rule) > cmp.critical_cp(m - 1e-3)
    assert cmp.corrected_cp(cp0_min, m + 1e-3, rule) < cmp.critical_cp(m + 1e-3)


def test_critical_mach_ordering_and_no_suction():
    cp0 = np.array([-0.3, -0.6, -1.2])
    pg, kt, la = (cmp.critical_mach(cp0, r) for r in cmp.RULES)
    # more suction, lower critical Mach; the nonlinear rules amplify suction more than P-G
    # (Anderson, Modern Compressible Flow, ch. 9), so their critical Mach numbers are lower
    assert np.all(np.diff(kt) < 0)
    assert np.all(la < kt) and np.all(kt < pg)
    # no suction anywhere: never sonic by these rules
    assert np.isnan(cmp.critical_mach(0.1)) and np.isnan(cmp.critical_mach(0.0))


def test_correct_at_zero_mach_reproduces_the_analysis():
    r = naca0012()
    c = cmp.correct(r, 0.0)
    # 1e-12: the same Simpson integrals as panelflow.flow.surface, summed in another order
    np.testing.assert_allclose(c.cl, r.cl, atol=1e-12)
    np.testing.assert_allclose(c.cl_pressure, r.fine.cl_pressure, atol=1e-12)
    np.testing.assert_allclose(c.cd_pressure, r.fine.cd_pressure, atol=1e-12)
    np.testing.assert_allclose(c.cm, r.cm, atol=1e-12)
    np.testing.assert_allclose(c.cp, r.fine.cp, atol=1e-15)
    assert np.isnan(c.cp_star) and not c.warnings and not c.supercritical.any()


def test_prandtl_glauert_scales_everything_by_one_over_beta():
    r = naca0012()
    beta = np.sqrt(1.0 - 0.5**2)
    c = cmp.correct(r, 0.5, cmp.PRANDTL_GLAUERT)
    # linear rule: exact scaling of Cp and every integral (round-off only)
    np.testing.assert_allclose(c.cp, r.fine.cp / beta, atol=1e-13)
    np.testing.assert_allclose(c.cl, r.cl / beta, atol=1e-12)
    np.testing.assert_allclose(c.cm, r.cm / beta, atol=1e-12)
    np.testing.assert_allclose(c.cl_error_estimate, r.cl_error_estimate / beta, rtol=1e-12)


def test_nonlinear_rules_raise_lift_more_than_prandtl_glauert():
    r = naca0012()
    pg, kt, la = (cmp.correct(r, 0.5, rule) for rule in cmp.RULES)
    lifting = r.cl > 0.1
    # the suction side is amplified more than the pressure side, so lift grows faster
    assert np.all(kt.cl[lifting] > pg.cl[lifting]) and np.all(la.cl[lifting] > kt.cl[lifting])
    # at zero lift the symmetric section stays at zero lift (1e-9: round-off of the integrals)
    assert abs(kt.cl[0]) < 1e-9 and abs(la.cl[0]) < 1e-9


def test_supercritical_warning():
    r = naca0012()
    below = cmp.correct(r, 0.4)
    assert not below.warnings and not below.supercritical.any()
    m_crit = below.critical_mach  # one per angle, falling with angle (more suction)
    assert np.all(np.diff(m_crit) < 0)
    between = 0.5 * (m_crit[1] + m_crit[2])
    c = cmp.correct(r, between)
    np.testing.assert_array_equal(c.supercritical, [False, False, True])
    assert len(c.warnings) == 1 and "critical Mach" in c.warnings[0] and "4 deg" in c.warnings[0]
    # at the critical Mach number itself the model is already outside its range
    at = cmp.correct(r, float(m_crit[0]) + 1e-9)
    assert at.supercritical[0]


@pytest.mark.parametrize("mach", [1.0, 1.2, -0.1, float("nan"), float("inf")])
def test_bad_mach_is_refused(mach):
    with pytest.raises(InputError, match="Mach number"):
        cmp.correct(naca0012(), mach)
    with pytest.raises(InputError, match="Mach number"):
        cmp.karman_tsien(-0.5, mach)


def test_bad_rule_and_heat_ratio():
    with pytest.raises(InputError, match="rule"):
        cmp.correct(naca0012(), 0.5, rule="linear")
    with pytest.raises(InputError, match="specific heats"):
        cmp.critical_cp(0.5, heat_ratio=1.0)
