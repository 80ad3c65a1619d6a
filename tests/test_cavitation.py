"""Cavitation number, inception criterion and inception speed (panelflow.conditions.cavitation).

The worked values are hand arithmetic of sigma = (p_atm + rho g h - p_v) / (rho V^2 / 2) with
g = 9.80665 m/s^2 (standard gravity, 3rd CGPM 1901 / ISO 80000-3) and p_atm = 101 325 Pa (the
standard atmosphere, ISO 2533). Water properties in the worked cases are round textbook figures
used only as inputs (sea water 1025 kg/m^3; vapour pressure of water 1705 Pa at 15 degC and
2339 Pa at 20 degC, from memory).
"""

import functools
from pathlib import Path

import numpy as np
import pytest

import panelflow as pf
from panelflow.conditions import cavitation as cav
from panelflow.errors import InputError
from panelflow.geometry.sections import naca4

FRONT_FOIL = Path(__file__).resolve().parent.parent / "geometries" / "tender_front_foil.dat"


@functools.cache
def front_foil():
    foil = pf.load_outlines(str(FRONT_FOIL))
    return pf.analyse(foil, [0.0, 2.0, 4.0, 6.0])


def test_standard_constants():
    # defined values, exact
    assert cav.STANDARD_GRAVITY == 9.80665
    assert cav.STANDARD_ATMOSPHERE == 101325.0


def test_cavitation_number_worked_value():
    # sea water 1025 kg/m^3, p_v 1705 Pa, 0.5 m deep, 10 m/s:
    # head = 101325 + 1025 * 9.80665 * 0.5 - 1705 = 104645.908125 Pa
    # q = 0.5 * 1025 * 10^2 = 51250 Pa; sigma = 2.04187138
    sigma = cav.cavitation_number(10.0, 0.5, 1025.0, 1705.0)
    assert sigma == pytest.approx(2.04187138, abs=5e-9)  # hand value rounded to 8 decimals


def test_cavitation_number_second_worked_value():
    # fresh water 998.2 kg/m^3, p_v 2339 Pa, at the surface, 5 m/s:
    # (101325 - 2339) / (0.5 * 998.2 * 25) = 98986 / 12477.5 = 7.93315969
    assert cav.cavitation_number(5.0, 0.0, 998.2, 2339.0) == pytest.approx(7.93315969, abs=5e-9)


def test_inception_speed_worked_value_and_inverse():
    # Cp_min = -1 in the first worked case: V_i = sqrt(2 * 104645.908125 / 1025) = 14.28940649
    v = cav.inception_speed(-1.0, 0.5, 1025.0, 1705.0)
    assert v == pytest.approx(14.28940649, abs=5e-8)
    # at the inception speed the cavitation number equals -Cp_min (round-off only)
    cp = np.array([-0.3, -0.8, -2.5])
    vi = cav.inception_speed(cp, 2.0, 998.2, 2339.0)
    np.testing.assert_allclose(cav.cavitation_number(vi, 2.0, 998.2, 2339.0), -cp, rtol=1e-13)
    # no suction, no inception by this criterion
    assert np.isinf(cav.inception_speed(0.2, 0.5, 1025.0, 1705.0))


@pytest.mark.parametrize("speed", [2.0, 5.0, 20.0])
def test_sigma_scales_with_inverse_square_of_speed(speed):
    s1 = cav.cavitation_number(1.0, 1.0, 1025.0, 1705.0)
    assert cav.cavitation_number(speed, 1.0, 1025.0, 1705.0) == pytest.approx(s1 / speed**2,
                                                                               rel=1e-14)


def test_deeper_means_later_inception():
    depths = np.array([0.0, 0.5, 1.0, 3.0])
    v = cav.inception_speed(-1.2, depths, 1025.0, 1705.0)
    assert np.all(np.diff(v) > 0)  # hydrostatic head only adds pressure


def test_assess_analysis():
    r = front_foil()
    res = cav.assess(r, 0.5, 1025.0, 1705.0, speed=12.0)
    cp = r.fine.cp_min[:, 0]
    np.testing.assert_array_equal(res.section_cp_min, cp)
    np.testing.assert_allclose(res.margin, res.sigma + cp, rtol=1e-15)
    np.testing.assert_array_equal(res.cavitating, -cp >= res.sigma)
    # inception below 12 m/s exactly where the criterion says it cavitates at 12 m/s
    np.testing.assert_array_equal(res.section_inception_speed <= 12.0, res.cavitating)
    # this foil's suction grows with angle from 0 to 6 deg, so inception comes sooner
    assert np.all(np.diff(res.section_inception_speed) < 0)
    assert res.cavitating[-1] and not res.cavitating[0]
    assert any("water quality" in c for c in res.cautions)


def test_assess_without_speed():
    res = cav.assess(front_foil(), 0.5, 1025.0, 1705.0)
    assert np.isnan(res.speed) and np.isnan(res.sigma)
    assert np.all(np.isnan(res.margin)) and not res.cavitating.any()
    assert np.all(np.isfinite(res.section_inception_speed))


def test_assess_with_fluid_preset():
    from panelflow.conditions import fluids

    sea = fluids.get_fluid("sea-water")
    res = cav.assess_in(front_foil(), 0.5, "sea-water", speed=10.0)
    direct = cav.assess(front_foil(), 0.5, sea.density, sea.vapour_pressure, speed=10.0,
                        atmospheric_pressure=sea.ambient_pressure)
    np.testing.assert_array_equal(res.section_inception_speed, direct.section_inception_speed)
    assert res.sigma == direct.sigma
    cond = fluids.Conditions(sea, 10.0)
    assert cav.assess_in(front_foil(), 0.5, cond).sigma == direct.sigma  # speed from conditions
    with pytest.raises(InputError, match="vapour pressure"):
        cav.assess_in(front_foil(), 0.5, "air", speed=10.0)


@pytest.mark.parametrize("kwargs,match", [
    ({"depth": -0.5}, "depth"),
    ({"speed": 0.0}, "speed"),
    ({"speed": -3.0}, "speed"),
    ({"density": 0.0}, "density"),
    ({"vapour_pressure": -1.0}, "vapour pressure"),
    ({"vapour_pressure": 2.0e5}, "boil"),
    ({"depth": float("nan")}, "depth"),
])
def test_bad_input(kwargs, match):
    args = {"speed": 10.0, "depth": 0.5, "density": 1025.0, "vapour_pressure": 1705.0}
    args.update(kwargs)
    with pytest.raises(InputError, match=match):
        cav.cavitation_number(**args)


def test_bad_input_in_assess():
    r = pf.analyse([naca4("0012", closed_te=True)], [2.0], n_panels=60, error_estimate=False)
    with pytest.raises(InputError, match="depth"):
        cav.assess(r, -1.0, 1025.0, 1705.0, speed=5.0)
    with pytest.raises(InputError, match="single number"):
        cav.assess(r, [0.5, 1.0], 1025.0, 1705.0)
