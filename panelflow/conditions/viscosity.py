"""Viscosity of the working fluids and the Reynolds number, each relation with its source.

Water (fresh and sea)
    M. H. Sharqawy, J. H. Lienhard V & S. M. Zubair, "Thermophysical properties of seawater: a
    review of existing correlations and data", Desalination and Water Treatment 16 (2010):
    pure-water viscosity (their eq. 22, a fit to IAPWS 2008 data), the salinity factor of
    sea water (eq. 22-23, after Isdale et al.), and the densities of pure and sea water (eq. 8,
    after Isdale & Morris). Valid 0-180 °C and 0-150 g/kg; here limited to 0-100 °C and
    0-120 g/kg. Coefficients as recalled (from memory); tests/test_viscosity.py checks them
    against the IAPWS formulation for pure water (the ``iapws`` package) and a general-purpose
    property library's implementation of the same seawater correlation (``CoolProp``).
Air
    International Standard Atmosphere (ISO 2533:1975, the same as the U.S. Standard Atmosphere
    1976 below 20 km): temperature falling 6.5 K/km from 288.15 K to 11 km, constant 216.65 K
    to 20 km; pressure by the hydrostatic law; density from the ideal-gas law with
    R = 287.05287 J/(kg K); viscosity by Sutherland's law as the standard defines it,
    mu = 1.458e-6 T^1.5 / (T + 110.4) Pa s. Checked against the ``fluids`` package's 1976
    atmosphere.
"""

from __future__ import annotations

import math

from panelflow.errors import InputError

GAS_CONSTANT_AIR = 287.05287  # J/(kg K), ISO 2533
GRAVITY = 9.80665  # m/s^2, standard
SEA_LEVEL_TEMPERATURE = 288.15  # K
SEA_LEVEL_PRESSURE = 101325.0  # Pa
LAPSE_RATE = 0.0065  # K/m below 11 km
TROPOPAUSE = 11000.0  # m
STRATOSPHERE_TOP = 20000.0  # m, end of the isothermal layer
SUTHERLAND_BETA = 1.458e-6  # kg/(m s K^0.5)
SUTHERLAND_S = 110.4  # K


def in_range(name: str, value, lo: float, hi: float, unit: str) -> float:
    """``value`` as a float, or one line saying it is outside the range of the formula used."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a number, got {value!r}") from None
    if not (math.isfinite(v) and lo <= v <= hi):
        raise InputError(f"{name} {v:g} {unit} is outside {lo:g} to {hi:g} {unit}, the range "
                         "of the published formula used here")
    return v


def water_density(temperature_c: float, salinity: float = 0.0) -> float:
    """Density of pure or sea water at atmospheric pressure, kg/m³.

    Parameters
    ----------
    temperature_c : float
        °C, 0-100.
    salinity : float
        Absolute salinity, g/kg (0 fresh water, about 35 the open sea), 0-120.
    """
    t = in_range("water temperature", temperature_c, 0.0, 100.0, "°C")
    s = in_range("salinity", salinity, 0.0, 120.0, "g/kg") / 1000.0  # kg/kg
    rho_w = (9.999e2 + 2.034e-2 * t - 6.162e-3 * t * t + 2.261e-5 * t**3 - 4.657e-8 * t**4)
    return rho_w + s * (8.020e2 - 2.001 * t + 1.677e-2 * t * t - 3.060e-5 * t**3
                        - 1.613e-5 * s * t * t)


def water_dynamic_viscosity(temperature_c: float, salinity: float = 0.0) -> float:
    """Dynamic viscosity of pure or sea water at atmospheric pressure, Pa s."""
    t = in_range("water temperature", temperature_c, 0.0, 100.0, "°C")
    s = in_range("salinity", salinity, 0.0, 120.0, "g/kg") / 1000.0
    mu_w = 4.2844e-5 + 1.0 / (0.157 * (t + 64.993) ** 2 - 91.296)
    a = 1.541 + 1.998e-2 * t - 9.52e-5 * t * t
    b = 7.974 - 7.561e-2 * t + 4.724e-4 * t * t
    return mu_w * (1.0 + a * s + b * s * s)


def water_kinematic_viscosity(temperature_c: float, salinity: float = 0.0) -> float:
    """Kinematic viscosity of pure or sea water, m²/s."""
    return water_dynamic_viscosity(temperature_c, salinity) / water_density(temperature_c,
                                                                          salinity)


def standard_atmosphere(altitude_m: float = 0.0) -> dict:
    """ISO 2533 standard atmosphere at a geopotential altitude (m, -500 to 20 000).

    Returns
    -------
    dict
        ``temperature`` (K), ``pressure`` (Pa), ``density`` (kg/m³), ``dynamic_viscosity``
        (Pa s), ``kinematic_viscosity`` (m²/s).
    """
    h = in_range("altitude", altitude_m, -500.0, STRATOSPHERE_TOP, "m")
    exponent = GRAVITY / (GAS_CONSTANT_AIR * LAPSE_RATE)
    if h <= TROPOPAUSE:
        t = SEA_LEVEL_TEMPERATURE - LAPSE_RATE * h
        p = SEA_LEVEL_PRESSURE * (t / SEA_LEVEL_TEMPERATURE) ** exponent
    else:
        t = SEA_LEVEL_TEMPERATURE - LAPSE_RATE * TROPOPAUSE
        p11 = SEA_LEVEL_PRESSURE * (t / SEA_LEVEL_TEMPERATURE) ** exponent
        p = p11 * math.exp(-GRAVITY * (h - TROPOPAUSE) / (GAS_CONSTANT_AIR * t))
    rho = p / (GAS_CONSTANT_AIR * t)
    mu = air_dynamic_viscosity(t)
    return {"temperature": t, "pressure": p, "density": rho, "dynamic_viscosity": mu,
            "kinematic_viscosity": mu / rho}


def air_dynamic_viscosity(temperature_k: float) -> float:
    """Sutherland's law as the standard atmosphere defines it, Pa s (150-500 K)."""
    t = in_range("air temperature", temperature_k, 150.0, 500.0, "K")
    return SUTHERLAND_BETA * t**1.5 / (t + SUTHERLAND_S)


def air_kinematic_viscosity(altitude_m: float = 0.0) -> float:
    """Kinematic viscosity of the standard atmosphere at an altitude, m²/s."""
    return standard_atmosphere(altitude_m)["kinematic_viscosity"]


def reynolds_number(speed: float, chord: float, kinematic_viscosity: float) -> float:
    """Reynolds number U c / nu (speed m/s, chord m, kinematic viscosity m²/s)."""
    for name, v in (("speed", speed), ("chord", chord),
                    ("kinematic viscosity", kinematic_viscosity)):
        if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            raise InputError(f"{name} must be a positive number, got {v!r}")
    return speed * chord / kinematic_viscosity


# The fluid presets of panelflow.conditions.fluids, at the states their densities are given for:
# fresh and sea water at 15 °C (sea water 35 g/kg), air at sea level in the standard atmosphere.
PRESET_STATES = {"fresh-water": ("water", 15.0, 0.0), "sea-water": ("water", 15.0, 35.0),
                 "air": ("air", 0.0, None)}


def preset_kinematic_viscosity(name: str, temperature_c: float | None = None,
                               salinity: float | None = None,
                               altitude: float | None = None) -> tuple[float, str]:
    """Kinematic viscosity of a fluid preset (m²/s) and the sentence saying where it comes from.

    Parameters
    ----------
    name : str
        ``"fresh-water"``, ``"sea-water"`` or ``"air"``.
    temperature_c, salinity, altitude : float, optional
        The state the fluid was made for (:func:`panelflow.conditions.fluids.make_fluid`);
        each left out takes the preset's state of :data:`PRESET_STATES`. Air at a given
        temperature takes Sutherland's law there and the ideal-gas density at the standard
        atmosphere's pressure of the altitude.

    Raises
    ------
    InputError
        For a fluid known only by its density (give the Reynolds number instead).
    """
    state = PRESET_STATES.get(name)
    if state is None:
        raise InputError(f"fluid {name!r} has no viscosity here: give the Reynolds number "
                         "directly")
    kind, a, b = state
    if kind == "water":
        t = a if temperature_c is None else temperature_c
        s = b if salinity is None else salinity
        nu = water_kinematic_viscosity(t, s)
        what = ("fresh water" if not s else f"sea water of {s:g} g/kg") + f" at {t:g} °C"
        return nu, f"{what}, Sharqawy, Lienhard & Zubair (2010): {nu:.4g} m²/s"
    h = a if altitude is None else altitude
    atmosphere = standard_atmosphere(h)
    if temperature_c is None or abs(temperature_c + 273.15 - atmosphere["temperature"]) < 1e-9:
        nu = atmosphere["kinematic_viscosity"]
        return nu, (f"ISO 2533 standard atmosphere at {h:g} m, Sutherland's law: "
                    f"{nu:.4g} m²/s")
    t_k = temperature_c + 273.15
    nu = air_dynamic_viscosity(t_k) * GAS_CONSTANT_AIR * t_k / atmosphere["pressure"]
    return nu, (f"air at {temperature_c:g} °C and the ISO 2533 standard atmosphere's pressure "
                f"at {h:g} m, Sutherland's law and the ideal-gas law: {nu:.4g} m²/s")
