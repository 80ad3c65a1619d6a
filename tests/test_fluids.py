"""Fluid presets against their named sources and independent formulas; Conditions validation.

Independent references, written out here (not taken from panelflow):

* ISO 2533:1975 standard atmosphere, sea level: p0 = 101325 Pa, T0 = 288.15 K, rho0 = 1.225 kg/m³,
  universal gas constant R* = 8.31432 J/(mol K) and molar mass of air M0 = 28.9644 kg/kmol
  (the standard's values; R* and M0 from memory).
* Tanaka, Girard, Davis, Peuto, Bignell (2001), "Recommended table for the density of water
  between 0 °C and 40 °C based on recent experimental reports", Metrologia 38, 301-309:
  rho = a5 [1 - (t + a1)^2 (t + a2) / (a3 (t + a4))] (coefficients below, from memory; checked
  against the table's 20 °C value 998.2067 kg/m³, from memory).
* UNESCO (1981) one-atmosphere international equation of state of sea water (Millero & Poisson
  1981; UNESCO Technical Papers in Marine Science 36/44), coefficients from memory, checked
  against the published check value rho(S = 35, t = 5 °C, p = 0) = 1027.67547 kg/m³ (from
  memory).
* IAPWS-IF97 saturation-pressure equation (region 4), coefficients n1..n10 from memory, checked
  against the release's verification values p_s(300 K) = 3.53658941e-3 MPa, p_s(500 K) =
  2.63889776 MPa, p_s(600 K) = 12.3443146 MPa (from memory).

Reproducing each published check value to its printed digits is what makes the coefficients
recalled from memory trustworthy: a wrong digit would not reproduce it.
"""

import math

import pytest

from panelflow.errors import InputError
from panelflow.conditions.fluids import (FLUIDS, UNITS, Conditions, Fluid, get_fluid,
                                        make_fluid, resolve_fluid, user_fluid)
from panelflow.conditions.viscosity import standard_atmosphere

# ---------------------------------------------------------------- independent reference formulas
TANAKA = (-3.983035, 301.797, 522528.9, 69.34881, 999.974950)  # degC, degC, degC^2, degC, kg/m3


def tanaka_density(t_c: float) -> float:
    a1, a2, a3, a4, a5 = TANAKA
    return a5 * (1.0 - (t_c + a1) ** 2 * (t_c + a2) / (a3 * (t_c + a4)))


def unesco_seawater_density(s: float, t: float) -> float:
    """One-atmosphere density of sea water, practical salinity ``s``, temperature ``t`` degC."""
    rho_w = (999.842594 + 6.793952e-2 * t - 9.095290e-3 * t**2 + 1.001685e-4 * t**3
             - 1.120083e-6 * t**4 + 6.536332e-9 * t**5)
    b = 8.24493e-1 - 4.0899e-3 * t + 7.6438e-5 * t**2 - 8.2467e-7 * t**3 + 5.3875e-9 * t**4
    c = -5.72466e-3 + 1.0227e-4 * t - 1.6546e-6 * t**2
    return rho_w + b * s + c * s**1.5 + 4.8314e-4 * s**2


IF97_N = (0.11670521452767e4, -0.72421316703206e6, -0.17073846940092e2, 0.12020824702470e5,
          -0.32325550322333e7, 0.14915108613530e2, -0.48232657361591e4, 0.40511340542057e6,
          -0.23855557567849, 0.65017534844798e3)


def if97_saturation_pressure(T: float) -> float:
    """Saturation pressure of water in Pa at ``T`` kelvin (IAPWS-IF97 region 4)."""
    n = IF97_N
    th = T + n[8] / (T - n[9])
    A = th * th + n[0] * th + n[1]
    B = n[2] * th * th + n[3] * th + n[4]
    C = n[5] * th * th + n[6] * th + n[7]
    return 1e6 * (2.0 * C / (-B + math.sqrt(B * B - 4.0 * A * C))) ** 4


# ---------------------------------------------------------------- the reference formulas themselves
@pytest.mark.parametrize("t_c, rho", [(20.0, 998.2067), (-TANAKA[0], TANAKA[4])])
def test_tanaka_correlation_reproduces_its_table(t_c, rho):
    # table printed to 4 decimals: half a unit of the last digit
    assert abs(tanaka_density(t_c) - rho) < 5e-5


def test_unesco_equation_reproduces_its_check_value():
    # check value printed to 5 decimals
    assert abs(unesco_seawater_density(35.0, 5.0) - 1027.67547) < 5e-6


@pytest.mark.parametrize("T, p_mpa", [(300.0, 3.53658941e-3), (500.0, 2.63889776),
                                      (600.0, 12.3443146)])
def test_if97_saturation_equation_reproduces_verification_values(T, p_mpa):
    # verification values printed to 9 significant digits
    assert abs(if97_saturation_pressure(T) / 1e6 - p_mpa) / p_mpa < 1e-8


# ---------------------------------------------------------------- presets against the references
def test_air_is_iso_2533_sea_level():
    air = get_fluid("air")
    # the standard's sea-level density is printed to 4 significant digits (1.225): computed
    # from its formulas it agrees to half a unit of the last (4e-4 relative); measured 1.5e-8
    assert abs(air.density - 1.225) / 1.225 < 4e-4
    assert air.ambient_pressure == 101325.0
    assert air.temperature_c + 273.15 == pytest.approx(288.15, abs=1e-12)  # rounding only
    assert air.vapour_pressure is None
    # ideal gas with the standard's constants: measured 6.9e-7
    r_air = 8.31432 / 28.9644e-3
    assert abs(101325.0 / (r_air * 288.15) - air.density) / air.density < 4e-4
    assert "ISO 2533" in air.source


@pytest.mark.parametrize("t_c", [0.5, 4.0, 15.0, 20.0, 30.0, 40.0])
def test_fresh_water_density_against_tanaka(t_c):
    # TEOS-10 at zero salinity against Tanaka et al.'s formula for air-free water: measured
    # within 0.0021 kg/m3 over 0-40 degC; 0.01 kg/m3 allows for the two formulations' own
    # difference (a wrong coefficient or unit would be off by far more)
    fresh = make_fluid("fresh-water", temperature=t_c)
    assert abs(fresh.density - tanaka_density(t_c)) < 0.01
    assert "TEOS-10" in fresh.source and f"{t_c:g} degC" in fresh.source


@pytest.mark.parametrize("t_c, sa", [(15.0, 35.0), (5.0, 35.0), (25.0, 30.0), (10.0, 20.0)])
def test_sea_water_density_against_unesco(t_c, sa):
    # TEOS-10 takes absolute salinity; EOS-80 (UNESCO 1981) practical salinity: SP = SA x
    # 35 / 35.16504 for standard sea water (TEOS-10's reference composition). The two equations
    # differ by a few thousandths of a kg/m3 (measured up to 0.003); 0.01 kg/m3 allowed
    sea = make_fluid("sea-water", temperature=t_c, salinity=sa)
    assert abs(sea.density - unesco_seawater_density(sa * 35.0 / 35.16504, t_c)) < 0.01
    assert f"absolute salinity {sa:g} g/kg" in sea.source


@pytest.mark.parametrize("name", ["fresh-water", "sea-water"])
@pytest.mark.parametrize("t_c", [2.0, 15.0, 27.0])
def test_vapour_pressure_against_if97(name, t_c):
    # the same equation written out above, and the iapws package's implementation of it:
    # round-off only
    fluid = make_fluid(name, temperature=t_c)
    assert fluid.vapour_pressure == pytest.approx(if97_saturation_pressure(t_c + 273.15),
                                                  rel=1e-12)
    from iapws.iapws97 import _PSat_T

    assert fluid.vapour_pressure == pytest.approx(_PSat_T(t_c + 273.15) * 1e6, rel=1e-9)
    assert "IAPWS-IF97" in fluid.source


def test_every_preset_names_its_source():
    for fluid in FLUIDS.values():
        assert fluid.source and fluid.density > 0 and fluid.ambient_pressure == 101325.0
        assert "memory" not in fluid.source


@pytest.mark.parametrize("altitude", [0.0, 800.0, 2500.0])
def test_altitude_sets_the_ambient_pressure(altitude):
    # a lake at altitude: the water surface is at the standard atmosphere's pressure there
    # (ISO 2533; the same formulas are checked against the fluids package in
    # test_viscosity.py), and air there has the standard's density
    ref = standard_atmosphere(altitude)
    lake = make_fluid("fresh-water", altitude=altitude)
    assert lake.ambient_pressure == pytest.approx(ref["pressure"], rel=1e-15)
    assert make_fluid("air", altitude=altitude).density == pytest.approx(ref["density"],
                                                                         rel=1e-15)


def test_air_temperature_changes_density_by_the_gas_law():
    # the same pressure, another temperature: rho T constant (ideal gas); round-off only
    warm = make_fluid("air", temperature=35.0)
    std = get_fluid("air")
    assert warm.density * (35.0 + 273.15) == pytest.approx(std.density * 288.15, rel=1e-9)


@pytest.mark.parametrize("name, kwargs, words", [
    ("fresh-water", {"salinity": 35.0}, "use sea-water"),
    ("air", {"salinity": 35.0}, "not air"),
    ("sea-water", {"temperature": 55.0}, "outside"),
    ("sea-water", {"salinity": 80.0}, "outside"),
    ("air", {"altitude": 30000.0}, "outside"),
    ("fresh-water", {"temperature": 40.0, "altitude": 19000.0}, "boils"),
])
def test_bad_fluid_states(name, kwargs, words):
    with pytest.raises(InputError, match=words):
        make_fluid(name, **kwargs)


@pytest.mark.parametrize("spelling, name", [
    ("Sea Water", "sea-water"), ("sea_water", "sea-water"), ("seawater", "sea-water"),
    ("FRESH-WATER", "fresh-water"), ("Air", "air")])
def test_fluid_names_are_forgiving(spelling, name):
    assert get_fluid(spelling) is FLUIDS[name]


# ---------------------------------------------------------------- conditions
def test_dynamic_pressure_and_units():
    sea = get_fluid("sea-water")
    c = Conditions(sea, 6.0, span=1.5)
    assert c.dynamic_pressure == pytest.approx(0.5 * sea.density * 36.0, rel=1e-15)  # rounding
    assert (c.force_unit, c.moment_unit, c.span_factor) == ("N", "N m", 1.5)
    per_m = Conditions(get_fluid("air"), 10.0)
    assert (per_m.force_unit, per_m.moment_unit, per_m.span_factor) == ("N/m", "N m/m", 1.0)
    assert per_m.gauge and not Conditions.absolute(get_fluid("air"), 10.0).gauge


@pytest.mark.parametrize("unit", sorted(UNITS))
def test_length_scale_from_unit(unit):
    # exact definitions of the units; no arithmetic involved
    assert Conditions(get_fluid("air"), 1.0, unit=unit).length_scale(123.0) == UNITS[unit]


def test_length_scale_from_chord():
    c = Conditions(get_fluid("air"), 1.0, chord=0.25)
    assert c.length_scale(220.0) == pytest.approx(0.25 / 220.0, rel=1e-15)  # one division
    assert Conditions(get_fluid("air"), 1.0).length_scale(3.0) == 1.0  # default: metres


@pytest.mark.parametrize("kwargs, words", [
    (dict(speed=-3.0), "speed must be positive, got -3"),
    (dict(speed=0.0), "speed must be positive, got 0"),
    (dict(speed=float("nan")), "speed must be positive"),
    (dict(speed=float("inf")), "speed must be positive"),
    (dict(speed=5.0, chord=0.0), "chord must be positive, got 0"),
    (dict(speed=5.0, chord=-0.2), "chord must be positive, got -0.2"),
    (dict(speed=5.0, span=0.0), "span must be positive, got 0"),
    (dict(speed=5.0, unit="yd"), "unknown length unit 'yd'"),
    (dict(speed=5.0, unit="mm", chord=0.2), "either the outline's unit or a chord"),
    (dict(speed=5.0, static_pressure=-1.0), "static pressure must be a positive"),
    (dict(speed=5.0, static_pressure=0.0), "static pressure must be a positive"),  # a vacuum
    # found by a user trial: accepted, with 300-digit loads
    (dict(speed=5.0, static_pressure=1e300), "at most 1.1e+08 Pa"),
    (dict(speed=5.0, span=1e300), "at most 1000 m"),
])
def test_bad_conditions(kwargs, words):
    with pytest.raises(InputError) as exc:
        Conditions(get_fluid("air"), **kwargs)
    assert words in str(exc.value) and "\n" not in str(exc.value)


@pytest.mark.parametrize("density, words", [(0.0, "density must be positive, got 0"),
                                            (-1000.0, "density must be positive, got -1000"),
                                            ("abc", "density must be a number"),
                                            (1e300, "at most 20000")])
def test_bad_density(density, words):
    with pytest.raises(InputError, match=words):
        user_fluid(density)


def test_unknown_fluid_lists_presets():
    with pytest.raises(InputError) as exc:
        get_fluid("oil")
    msg = str(exc.value)
    assert "unknown fluid 'oil'" in msg and all(name in msg for name in FLUIDS)


@pytest.mark.parametrize("kwargs, words", [(dict(name="air", density=1.2), "not both"),
                                           (dict(), "not neither")])
def test_fluid_or_density(kwargs, words):
    with pytest.raises(InputError, match=words):
        resolve_fluid(**kwargs)


def test_user_density_has_no_pressures():
    f = resolve_fluid(density=1010.0)
    assert (f.name, f.density, f.vapour_pressure, f.ambient_pressure) == ("user", 1010.0, None,
                                                                          None)
    with pytest.raises(InputError, match="no ambient pressure"):
        Conditions.absolute(f, 3.0)
    assert isinstance(f, Fluid)


# ---------------------------------------------------------------- through the command line
def test_state_options_reach_the_cavitation_check_and_the_loads(tmp_path, capsys):
    import json

    from panelflow.cli.main import main

    args = ["naca0012", "--alpha", "4", "--panels", "60", "--fluid", "sea-water",
            "--temperature", "25", "--salinity", "30", "--altitude", "0"]
    assert main(["solve", *args, "--depth", "0.5", "--speed", "9", "--json"]) == 0
    rec = json.loads(capsys.readouterr().out)
    warm = make_fluid("sea-water", temperature=25.0, salinity=30.0)
    assert rec["cavitation"]["density_kg_m3"] == warm.density
    assert rec["cavitation"]["vapour_pressure_pa"] == warm.vapour_pressure
    assert rec["conditions"]["temperature"] == 25.0 and rec["conditions"]["salinity"] == 30.0
    out = tmp_path / "loads.json"
    assert main(["loads", *args, "--speed", "9", "--chord", "0.25", "-o", str(out)]) == 0
    capsys.readouterr()
    cond = json.loads(out.read_text())["conditions"]
    assert cond["density"] == warm.density and cond["temperature_c"] == 25.0
    assert "TEOS-10" in cond["fluid_source"] and "memory" not in out.read_text()


@pytest.mark.parametrize("argv, words", [
    (["--temperature", "20"], "fluid by name"),  # a state without a preset fluid
    (["--fluid", "fresh-water", "--salinity", "10"], "use sea-water"),
])
def test_state_options_refused(argv, words, capsys):
    from panelflow.cli.main import main

    assert main(["loads", "naca0012", "--alpha", "4", "--panels", "60", "--speed", "5",
                 "--density", "1000", *argv, "-o", "x.json"] if "--fluid" not in argv else
                ["loads", "naca0012", "--alpha", "4", "--panels", "60", "--speed", "5", *argv,
                 "-o", "x.json"]) == 1
    assert words in capsys.readouterr().err


def test_case_file_state_keys(tmp_path):
    from panelflow.study.cases import load_case

    case = tmp_path / "study.toml"
    case.write_text('[[section]]\nspec = "naca0012"\n[conditions]\nalpha = 4\n'
                    'fluid = "fresh-water"\nspeed = 6.0\ndepth = 1.0\ntemperature = 8.0\n'
                    'altitude = 1200.0\n[[outputs.loads]]\nfile = "l.json"\nalpha = 4\n'
                    'chord = 0.2\n')
    c = load_case(case)
    lake = make_fluid("fresh-water", temperature=8.0, altitude=1200.0)
    assert c.tasks[0].operating.fluid == lake
    assert dict(c.outputs.loads[0].fluid_state) == {"temperature": 8.0, "altitude": 1200.0}
    case.write_text(case.read_text().replace("temperature = 8.0", "temperature = 80.0"))
    with pytest.raises(InputError, match=r"conditions\.temperature.*outside"):
        load_case(case)
