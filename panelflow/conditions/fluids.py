"""Fluid presets and the dimensional conditions of a load export.

The panel solution is non-dimensional (freestream speed 1, dynamic pressure 1, lengths in the
outline's own unit). :class:`Conditions` holds what turns it into pascals and newtons: the fluid's
density, the freestream speed, the length of one outline unit in metres, the span, and the
static pressure that absolute pressures are measured from.

Presets and their sources
-------------------------
Each preset is computed from a published standard at the temperature, salinity and altitude the
user gives (:func:`make_fluid`); the defaults are 15 °C, 35 g/kg for sea water and sea level.

``air``
    ISO 2533:1975 *Standard Atmosphere* at the altitude (-500 to 20 000 m): temperature,
    pressure and density from the standard's formulas (:mod:`panelflow.conditions.viscosity`).
    With a temperature given, the standard's pressure at that altitude and the ideal-gas law
    with the standard's gas constant for air give the density.
``fresh-water``, ``sea-water``
    Density from TEOS-10, the International Thermodynamic Equation of Seawater 2010 (IOC, SCOR
    and IAPSO 2010), through the ``gsw`` package (the Gibbs SeaWater toolbox that implements
    it): absolute salinity 0 g/kg (fresh water) or as given (sea water, default 35 g/kg), in-situ
    temperature 0-40 °C, at the surface. Vapour pressure from the saturation-pressure equation
    of IAPWS-IF97 (IAPWS R7-97, region 4) at the temperature; for sea water the pure-water
    value is taken: salt lowers the vapour pressure, so the cavitation number comes out a
    little low and the check errs on the safe side. Ambient pressure: the ISO 2533 pressure at
    the altitude of the water surface (sea level by default).

Checked in ``tests/test_fluids.py`` against the Tanaka et al. (2001) water-density table, the
UNESCO 1981 equation of state of sea water, the IF97 verification values and the ``iapws``
package, and the ``fluids`` package's standard atmosphere.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

from panelflow.conditions.viscosity import in_range as _in_range
from panelflow.errors import InputError

# ISO 2533:1975 sea-level values; the ambient pressure of every preset at sea level.
STANDARD_SEA_LEVEL_PRESSURE = 101325.0  # Pa
STANDARD_SEA_LEVEL_TEMPERATURE = 288.15  # K
KELVIN = 273.15  # K at 0 degC (the definition of the Celsius scale)

DEFAULT_WATER_TEMPERATURE = 15.0  # degC
DEFAULT_SEA_SALINITY = 35.0  # g/kg, absolute salinity of the open ocean (TEOS-10's reference)
# Ranges of the formulas used here (TEOS-10's oceanographic range, the standard atmosphere)
WATER_TEMPERATURE_RANGE = (0.0, 40.0)  # degC
SALINITY_RANGE = (0.0, 42.0)  # g/kg
AIR_TEMPERATURE_RANGE = (-60.0, 60.0)  # degC, near the ground and on small craft
ALTITUDE_RANGE = (-500.0, 20000.0)  # m

# Ranges of what the user gives for loads (each refusal says why)
MAX_LENGTH = 1000.0  # m, chord or span
MAX_DENSITY = 20_000.0  # kg/m^3
MAX_STATIC_PRESSURE = 1.1e8  # Pa, about 11 km under water

# Metres per unit of length (exact by the definitions of the inch and foot, 1959).
UNITS = {"m": 1.0, "cm": 0.01, "mm": 0.001, "in": 0.0254, "ft": 0.3048}

# IAPWS-IF97 (IAPWS R7-97(2012)), region 4: coefficients n1..n10 of the saturation equation.
_IF97_N = (0.11670521452767e4, -0.72421316703206e6, -0.17073846940092e2, 0.12020824702470e5,
           -0.32325550322333e7, 0.14915108613530e2, -0.48232657361591e4, 0.40511340542057e6,
           -0.23855557567849, 0.65017534844798e3)


def saturation_pressure(temperature_c: float) -> float:
    """Vapour (saturation) pressure of pure water in Pa, IAPWS-IF97 region 4 (0-370 °C)."""
    t = _in_range("water temperature", temperature_c, 0.0, 370.0, "degC") + KELVIN
    n = _IF97_N
    th = t + n[8] / (t - n[9])
    a = th * th + n[0] * th + n[1]
    b = n[2] * th * th + n[3] * th + n[4]
    c = n[5] * th * th + n[6] * th + n[7]
    return 1e6 * (2.0 * c / (-b + math.sqrt(b * b - 4.0 * a * c))) ** 4


def water_density_teos10(temperature_c: float, salinity: float = 0.0) -> float:
    """Density of fresh or sea water at the surface, kg/m³, by TEOS-10 (the ``gsw`` package).

    Parameters
    ----------
    temperature_c : float
        In-situ temperature, °C (0-40).
    salinity : float
        Absolute salinity, g/kg (0 fresh water, 0-42).
    """
    t = _in_range("water temperature", temperature_c, *WATER_TEMPERATURE_RANGE, "degC")
    sa = _in_range("salinity", salinity, *SALINITY_RANGE, "g/kg")
    try:
        import gsw
    except ImportError:  # pragma: no cover - a dependency
        raise InputError("water properties need the gsw package (TEOS-10): pip install gsw") \
            from None
    ct = gsw.CT_from_t(sa, t, 0.0)  # sea pressure 0 dbar: at the surface
    return float(gsw.rho(sa, ct, 0.0))


def _positive(option: str, value) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{option} must be a number, got {value!r}") from None
    if not math.isfinite(v) or v <= 0.0:
        raise InputError(f"{option} must be positive, got {v:g}")
    return v


@dataclass(frozen=True)
class Fluid:
    """A fluid's properties as used for loads.

    Attributes
    ----------
    name : str
        Preset name, or ``"user"`` for a density given by the user.
    density : float
        kg/m³.
    ambient_pressure : float or None
        Pa; the static pressure absolute pressures are referred to unless one is given.
    vapour_pressure : float or None
        Pa; None where it does not apply (air) or is unknown (user density).
    temperature_c : float or None
        °C, the temperature the values belong to.
    source : str
        Where the values come from, each named.
    salinity : float or None
        Absolute salinity in g/kg (water).
    altitude : float or None
        Altitude of the air, or of the water surface, in metres.
    """

    name: str
    density: float
    ambient_pressure: float | None = None
    vapour_pressure: float | None = None
    temperature_c: float | None = None
    source: str = ""
    salinity: float | None = None
    altitude: float | None = None

    def __post_init__(self):
        object.__setattr__(self, "density", _positive("density", self.density))
        for key in ("ambient_pressure", "vapour_pressure"):
            value = getattr(self, key)
            if value is not None and not (math.isfinite(value) and value >= 0.0):
                raise InputError(f"{key.replace('_', ' ')} must be a non-negative number, "
                                 f"got {value:g}")


PRESETS = ("air", "fresh-water", "sea-water")


def make_fluid(name: str, temperature: float | None = None, salinity: float | None = None,
               altitude: float | None = None) -> Fluid:
    """A preset fluid at a temperature, salinity and altitude, from the published standards.

    Parameters
    ----------
    name : str
        ``"air"``, ``"fresh-water"`` or ``"sea-water"`` (case, ``-``, ``_`` and spaces
        ignored).
    temperature : float, optional
        °C. Water: default 15 (0-40). Air: default the standard atmosphere's at the altitude.
    salinity : float, optional
        Absolute salinity, g/kg: sea water only (default 35, 0-42).
    altitude : float, optional
        Metres above sea level of the air, or of the water surface (default 0).

    Returns
    -------
    Fluid
        With ``source`` naming each standard and the state it was evaluated at.

    Raises
    ------
    InputError
        An unknown name, a value out of the formulas' range, salinity for air or fresh water,
        or water that would boil at that altitude.
    """
    from panelflow.conditions.viscosity import GAS_CONSTANT_AIR, standard_atmosphere

    key = _preset_key(name)
    h = 0.0 if altitude is None else _in_range("altitude", altitude, *ALTITUDE_RANGE, "m")
    atmosphere = standard_atmosphere(h)
    where = "sea level" if h == 0.0 else f"{h:g} m"
    if key == "air":
        if salinity is not None:
            raise InputError("salinity is for sea water, not air")
        if temperature is None:
            t = atmosphere["temperature"] - KELVIN
            rho = atmosphere["density"]
            source = (f"ISO 2533:1975 standard atmosphere at {where}: {t:.2f} degC, "
                      f"{atmosphere['pressure']:.0f} Pa")
        else:
            t = _in_range("air temperature", temperature, *AIR_TEMPERATURE_RANGE, "degC")
            rho = atmosphere["pressure"] / (GAS_CONSTANT_AIR * (t + KELVIN))
            source = (f"pressure {atmosphere['pressure']:.0f} Pa of the ISO 2533:1975 standard "
                      f"atmosphere at {where}; density at {t:g} degC by the ideal-gas law with "
                      f"the standard's gas constant for air, {GAS_CONSTANT_AIR} J/(kg K)")
        return Fluid("air", rho, atmosphere["pressure"], None, t, source, None, h)
    t = (DEFAULT_WATER_TEMPERATURE if temperature is None else
         _in_range("water temperature", temperature, *WATER_TEMPERATURE_RANGE, "degC"))
    if key == "freshwater":
        if salinity not in (None, 0, 0.0):
            raise InputError(f"salinity {salinity:g} g/kg: fresh water has none; use sea-water")
        sa = 0.0
    else:
        sa = (DEFAULT_SEA_SALINITY if salinity is None else
              _in_range("salinity", salinity, *SALINITY_RANGE, "g/kg"))
    rho = water_density_teos10(t, sa)
    pv = saturation_pressure(t)
    p_amb = atmosphere["pressure"]
    if pv >= p_amb:
        raise InputError(f"water at {t:g} degC boils at the pressure of {where} "
                         f"({p_amb:.0f} Pa): its vapour pressure is {pv:.0f} Pa")
    vapour = ("IAPWS-IF97 saturation-pressure equation (IAPWS R7-97, region 4) at "
              f"{t:g} degC")
    if key == "seawater":
        vapour += (", pure water's value: salt lowers the vapour pressure, so the cavitation "
                   "number comes out a little low, on the safe side")
    source = (f"density: TEOS-10 (IOC, SCOR and IAPSO 2010, through the gsw package) at "
              f"{t:g} degC and absolute salinity {sa:g} g/kg; vapour pressure: {vapour}; "
              f"ambient pressure at the water surface: ISO 2533:1975 standard atmosphere at "
              f"{where}")
    return Fluid("fresh-water" if key == "freshwater" else "sea-water", rho, p_amb, pv, t,
                 source, sa, h)


def _preset_key(name) -> str:
    key = "".join(ch for ch in str(name).lower() if ch.isalnum())
    if key not in ("air", "freshwater", "seawater"):
        raise InputError(f"unknown fluid {name!r}; use one of {', '.join(PRESETS)} or give a "
                         "density")
    return key


@functools.lru_cache(maxsize=None)
def _default(name: str) -> Fluid:
    return make_fluid(name)


def __getattr__(attr):
    # FLUIDS, the presets at their defaults (15 degC water, 35 g/kg sea water, sea level), is
    # made on first use: TEOS-10's package stays out of the command line's start-up
    if attr == "FLUIDS":
        return {name: _default(name) for name in PRESETS}
    raise AttributeError(f"module {__name__!r} has no attribute {attr!r}")


def get_fluid(name: str) -> Fluid:
    """The preset called ``name`` (case, ``-``, ``_`` and spaces ignored).

    Raises
    ------
    InputError
        For an unknown name; the message lists the presets.
    """
    key = _preset_key(name)
    return _default(next(p for p in PRESETS if p.replace("-", "") == key))


def user_fluid(density: float) -> Fluid:
    """A fluid known only by its density (kg/m³); no ambient or vapour pressure."""
    rho = _positive("density", density)
    if rho > MAX_DENSITY:
        raise InputError(f"density {rho:g} kg/m^3: at most {MAX_DENSITY:g} (denser than any "
                         "liquid a foil runs in; mercury is about 13 600)")
    return Fluid("user", rho, None, None, None, "density given by the user")


def resolve_fluid(name: str | None = None, density: float | None = None) -> Fluid:
    """The fluid of a preset name or of a density: exactly one of the two must be given."""
    if (name is None) == (density is None):
        raise InputError("give either a fluid preset or a density, not "
                         + ("both" if name is not None else "neither"))
    return get_fluid(name) if name is not None else user_fluid(density)


@dataclass(frozen=True)
class Conditions:
    """Everything that turns a non-dimensional solution into pascals and newtons.

    Parameters
    ----------
    fluid : Fluid
    speed : float
        Freestream speed in m/s.
    unit : str, optional
        The outline's length unit, one of ``UNITS``; default metres when no chord is given.
    chord : float, optional
        Scale the outline so that the main body's chord is this many metres (instead of
        ``unit``).
    span : float, optional
        Span in metres: forces in N and moments in N m. Without it forces are per metre of span
        (N/m) and moments N m/m.
    static_pressure : float, optional
        Pa. When given, pressures are absolute (this plus q Cp); otherwise gauge (q Cp, relative
        to the freestream static pressure).

    Raises
    ------
    InputError
        For a non-positive or non-finite speed, chord or span, an unknown unit, or both a unit
        and a chord.
    """

    fluid: Fluid
    speed: float
    unit: str | None = None
    chord: float | None = None
    span: float | None = None
    static_pressure: float | None = None

    def __post_init__(self):
        if not isinstance(self.fluid, Fluid):
            raise InputError(f"fluid must be a Fluid, got {type(self.fluid).__name__}")
        object.__setattr__(self, "speed", _positive("speed", self.speed))
        if self.unit is not None and self.chord is not None:
            raise InputError("give either the outline's unit or a chord, not both")
        if self.unit is not None and self.unit not in UNITS:
            raise InputError(f"unknown length unit {self.unit!r}; use one of {', '.join(UNITS)}")
        for key in ("chord", "span"):
            if getattr(self, key) is not None:
                v = _positive(key, getattr(self, key))
                if v > MAX_LENGTH:
                    raise InputError(f"{key} {v:g} m: at most {MAX_LENGTH:g} m (a ship's rudder "
                                     "or a turbine blade fits with room to spare)")
                object.__setattr__(self, key, v)
        if self.static_pressure is not None:
            p = self.static_pressure
            if not (isinstance(p, (int, float)) and math.isfinite(p) and p > 0.0):
                raise InputError(f"static pressure must be a positive number in Pa, got {p}")
            if p > MAX_STATIC_PRESSURE:
                raise InputError(f"static pressure {p:g} Pa: at most {MAX_STATIC_PRESSURE:g} Pa "
                                 "(the pressure 10 km under water)")
            object.__setattr__(self, "static_pressure", float(p))

    @classmethod
    def absolute(cls, fluid: Fluid, speed: float, **kwargs) -> "Conditions":
        """Conditions with absolute pressures referred to the fluid's ambient pressure."""
        if fluid.ambient_pressure is None:
            raise InputError(f"fluid {fluid.name!r} has no ambient pressure: give the static "
                             "pressure for absolute pressures")
        return cls(fluid, speed, static_pressure=fluid.ambient_pressure, **kwargs)

    @property
    def density(self) -> float:
        return self.fluid.density

    @property
    def dynamic_pressure(self) -> float:
        """q = rho V^2 / 2 in Pa."""
        return 0.5 * self.fluid.density * self.speed**2

    @property
    def gauge(self) -> bool:
        return self.static_pressure is None

    @property
    def span_factor(self) -> float:
        """Multiplier from per-metre-of-span loads to the reported ones."""
        return 1.0 if self.span is None else self.span

    @property
    def force_unit(self) -> str:
        return "N/m" if self.span is None else "N"

    @property
    def moment_unit(self) -> str:
        return "N m/m" if self.span is None else "N m"

    def length_scale(self, outline_chord: float) -> float:
        """Metres per outline unit, given the main body's chord in outline units."""
        if self.chord is not None:
            return self.chord / _positive("outline chord", outline_chord)
        return UNITS[self.unit or "m"]

    def describe_scale(self, outline_chord: float) -> str:
        """How the outline was scaled, in words (for file headers)."""
        s = self.length_scale(outline_chord)
        if self.chord is not None:
            return (f"main chord {self.chord:.6g} m requested: outline chord {outline_chord:.6g} "
                    f"units x {s:.6g} m/unit")
        return f"outline unit {self.unit or 'm'} ({s:g} m)"
