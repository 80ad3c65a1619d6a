"""Fluid presets and the dimensional conditions of a load export.

The panel solution is non-dimensional (freestream speed 1, dynamic pressure 1, lengths in the
outline's own unit). :class:`Conditions` holds what turns it into pascals and newtons: the fluid's
density, the freestream speed, the length of one outline unit in metres, the span, and the
static pressure that absolute pressures are measured from.

Presets and their sources
-------------------------
``air``
    ISO 2533:1975 *Standard Atmosphere*, sea level: density 1.225 kg/m³, pressure 101 325 Pa,
    temperature 288.15 K. These three are the standard's defining sea-level values; the density
    follows from the others by the ideal-gas law with the standard's gas constant for air
    (checked in ``tests/test_fluids.py``).
``fresh-water``
    Fresh water at 15 °C, ITTC Recommended Procedure 7.5-02-01-03 *Fresh Water and Seawater
    Properties*: density 999.10 kg/m³ (from memory; checked against the Tanaka et al. (2001)
    density correlation in the tests). Vapour pressure 1705.7 Pa: the IAPWS-IF97 saturation
    pressure at 288.15 K (computed in the tests; the ITTC table's figure, about 1705 Pa from
    memory, agrees).
``sea-water``
    Sea water at 15 °C and salinity 35 g/kg, same ITTC procedure: density 1025.90 kg/m³ (from
    memory; checked against the UNESCO 1981 one-atmosphere equation of state in the tests). The
    vapour pressure given is fresh water's: sea water's is about 2 % lower (from memory), so the
    fresh-water figure makes a cavitation check err on the safe side.

All three presets take the ISO 2533 sea-level pressure as the ambient pressure (the water
presets: at the water surface); a section under water sees this plus ``rho g depth``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from panelflow.errors import InputError

# ISO 2533:1975 sea-level values; the ambient pressure of every preset.
STANDARD_SEA_LEVEL_PRESSURE = 101325.0  # Pa
STANDARD_SEA_LEVEL_TEMPERATURE = 288.15  # K

# Metres per unit of length (exact by the definitions of the inch and foot, 1959).
UNITS = {"m": 1.0, "cm": 0.01, "mm": 0.001, "in": 0.0254, "ft": 0.3048}


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
        Where the values come from.
    """

    name: str
    density: float
    ambient_pressure: float | None = None
    vapour_pressure: float | None = None
    temperature_c: float | None = None
    source: str = ""

    def __post_init__(self):
        object.__setattr__(self, "density", _positive("density", self.density))
        for key in ("ambient_pressure", "vapour_pressure"):
            value = getattr(self, key)
            if value is not None and not (math.isfinite(value) and value >= 0.0):
                raise InputError(f"{key.replace('_', ' ')} must be a non-negative number, "
                                 f"got {value:g}")


FLUIDS = {
    "air": Fluid("air", 1.225, STANDARD_SEA_LEVEL_PRESSURE, None, 15.0,  # 288.15 K
                 "ISO 2533:1975 standard atmosphere, sea level"),
    "fresh-water": Fluid("fresh-water", 999.10, STANDARD_SEA_LEVEL_PRESSURE, 1705.7, 15.0,
                         "ITTC 7.5-02-01-03 fresh water at 15 degC (density from memory); "
                         "vapour pressure IAPWS-IF97"),
    "sea-water": Fluid("sea-water", 1025.90, STANDARD_SEA_LEVEL_PRESSURE, 1705.7, 15.0,
                       "ITTC 7.5-02-01-03 sea water at 15 degC, salinity 35 g/kg (density from "
                       "memory); vapour pressure: fresh water's, on the safe side"),
}


def get_fluid(name: str) -> Fluid:
    """The preset called ``name`` (case, ``-``, ``_`` and spaces ignored).

    Raises
    ------
    InputError
        For an unknown name; the message lists the presets.
    """
    key = "".join(ch for ch in str(name).lower() if ch.isalnum())
    for preset, fluid in FLUIDS.items():
        if key == preset.replace("-", ""):
            return fluid
    raise InputError(f"unknown fluid {name!r}; use one of {', '.join(FLUIDS)} or give a density")


def user_fluid(density: float) -> Fluid:
    """A fluid known only by its density (kg/m³); no ambient or vapour pressure."""
    return Fluid("user", _positive("density", density), None, None, None,
                 "density given by the user")


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
                object.__setattr__(self, key, _positive(key, getattr(self, key)))
        if self.static_pressure is not None:
            p = self.static_pressure
            if not (isinstance(p, (int, float)) and math.isfinite(p) and p >= 0.0):
                raise InputError(f"static pressure must be a non-negative number in Pa, got {p}")
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
