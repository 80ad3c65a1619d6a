"""The description of one analysis: what is solved (the bodies) and how (the operating point).

Every way into panelflow builds the same two immutable objects -- the command line from its
options, a case file from its tables, a Python user directly -- and hands them to
:func:`panelflow.analysis.solve.solve`:

* :class:`OperatingPoint` -- the angles of attack or a target lift, the free stream (Mach number
  and correction rule), the fluid with its speed, the running depth and the length scale, and a
  plane boundary (wall or free surface). It holds no geometry, so one operating point serves a
  whole comparison or study;
* :class:`Problem` -- the bodies (outlines with their transforms applied), a flap deflection of
  the first body, the panelling, the moment reference point and the operating point.

Both check themselves on construction: a bad value or a combination that cannot be computed is
refused with one clear sentence (:class:`~panelflow.errors.InputError`) before any work is done.
Which outputs each condition combines with is tabulated in DEVELOPERS.md.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields, replace

import numpy as np

from panelflow.conditions.compressibility import KARMAN_TSIEN, RULES, check_mach
from panelflow.conditions.fluids import (STANDARD_SEA_LEVEL_TEMPERATURE, UNITS, Fluid, make_fluid,
                                         user_fluid)
from panelflow.errors import InputError
from panelflow.flow.images import MAX_DISTANCE_CHORDS, Boundary
from panelflow.geometry.outline import MAX_COORDINATE, Outline

DEFAULT_PANELS = 200
# the error estimate solves again at half the panels, which needs 8 at least
MIN_PANELS = 16
# A dense LU of N unknowns needs 8 N^2 bytes and ~N^3 operations: 8000 unknowns are 0.5 GB and
# some seconds, beyond any accuracy the inputs support (second order: 2000 panels per body put
# the discretisation error of cl near 1e-6).
MAX_PANELS_PER_BODY = 4000
MAX_PANELS_TOTAL = 8000
# Free space: every angle is a superposition of two unit solutions and costs microseconds. With
# a plane each angle is a factorisation of its own.
MAX_ANGLES = 100_000
MAX_PLANE_ANGLES = 2000
MAX_ABS_ALPHA_DEG = 90.0
# Air: ISO 2533's gas constant (J/(kg K)) and ratio of specific heats, for the speed of sound;
# above INCOMPRESSIBLE_MACH the incompressible pressures err by more than about 5 % (the
# Prandtl-Glauert factor 1/sqrt(1 - M^2) is 1.048 at 0.3; common practice)
AIR_GAS_CONSTANT = 287.05287
AIR_HEAT_RATIO = 1.4
INCOMPRESSIBLE_MACH = 0.3
# Ranges of the operating conditions (each refusal says why)
MIN_MACH = 0.01
MAX_TARGET_CL = 10.0
MAX_SPEED = 1000.0  # m/s
MAX_DEPTH = 11_000.0  # m
CHORD_RANGE = (1e-6, 1e3)  # m
FLAP_GAP_RANGE = (1e-3, 0.1)  # chord fractions
MAX_FLAP_RADIUS = 0.1  # chord fraction
MAX_SMOOTHING = 0.01  # fraction of the body's chord

__all__ = ["Flap", "OperatingPoint", "Problem", "check_output", "outline_unit", "OUTPUTS", "DEFAULT_PANELS",
           "MIN_PANELS", "MAX_PANELS_PER_BODY", "MAX_PANELS_TOTAL", "MAX_ANGLES",
           "MAX_PLANE_ANGLES"]

# The outputs every operating point is checked against (the combination table of DEVELOPERS.md):
# the solve report and its files, the flow field, dimensional loads, comparisons, case-file runs
# and figures.
OUTPUTS = ("solve", "field", "loads", "compare", "run", "figures")


def _finite(value, what: str) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, got {value!r}") from None
    if not math.isfinite(v):
        raise InputError(f"{what} must be a finite number, got {value!r}")
    return v


def _positive(value, what: str, allow_zero: bool = False) -> float:
    v = _finite(value, what)
    if v < 0.0 or (v == 0.0 and not allow_zero):
        raise InputError(f"{what} must be {'zero or ' if allow_zero else ''}positive, got {v:g}")
    return v


def _within(value: float, low: float, high: float, what: str, why: str) -> float:
    """``value`` when ``low <= |value| <= high``, else one line with the range and the reason."""
    if not low <= abs(value) <= high:
        size = " in size" if value < 0 else ""
        span = f"at most {high:g}{size}" if low == 0 else f"{low:g} to {high:g}{size}"
        raise InputError(f"{what} {value:g}: give {span} ({why})")
    return value


@dataclass(frozen=True)
class Flap:
    """A flap deflection of the first body (see :mod:`panelflow.geometry.flap`).

    Attributes
    ----------
    hinge : float
        Hinge station as a fraction of the chord, 0 < hinge < 1.
    angle : float
        Deflection in degrees, trailing edge down positive, at most 60 either way.
    gap : float or None
        None: a plain flap (one body, hinge rounded over ``radius``); a number: a separate flap
        body with this slot gap (chord fraction).
    radius : float
        Corner rounding radius at the hinge (chord fraction).
    """

    hinge: float
    angle: float
    gap: float | None = None
    radius: float = 0.01

    def __post_init__(self):
        h = _finite(self.hinge, "flap hinge")
        if not 0.0 < h < 1.0:
            raise InputError(f"flap hinge {h:g}: give a chord fraction between 0 and 1")
        a = _finite(self.angle, "flap angle")
        if abs(a) > 60.0:
            raise InputError(f"flap angle {a:g} deg: at most 60 deg either way")
        object.__setattr__(self, "hinge", h)
        object.__setattr__(self, "angle", a)
        if self.gap is not None:
            object.__setattr__(self, "gap", _within(
                _positive(self.gap, "flap gap"), *FLAP_GAP_RANGE, "flap gap (chord fraction)",
                "a narrower slot is finer than the panels around it can follow; a wider one "
                "is no longer a slotted flap"))
        object.__setattr__(self, "radius", _within(
            _positive(self.radius, "flap radius"), 0.0, MAX_FLAP_RADIUS,
            "flap radius (chord fraction)", "a rounding of the hinge corner, not a new nose"))

    def apply(self, outline: Outline):
        """The flapped section of ``outline`` (:class:`~panelflow.geometry.flap.FlappedSection`)."""
        from panelflow.geometry.flap import plain_flap, slotted_flap

        if self.gap is not None:
            return slotted_flap(outline, self.hinge, self.angle, gap=self.gap,
                                radius=self.radius)
        return plain_flap(outline, self.hinge, self.angle, radius=self.radius)

    def record(self) -> dict:
        return {f.name: getattr(self, f.name) for f in fields(self)
                if getattr(self, f.name) is not None}


@dataclass(frozen=True)
class OperatingPoint:
    """Where and how the bodies are solved: angles or target lift and the surrounding conditions.

    Attributes
    ----------
    alpha_deg : tuple of float
        Angles of attack in degrees from the outline's x-axis (the freestream direction).
    target_cl : float or None
        Instead of angles: solve the one angle that gives this lift coefficient.
    mach : float or None
        Freestream Mach number (0 <= M < 1): compressibility-corrected coefficients, Cp* and the
        critical Mach number are added to the result.
    mach_rule : str
        ``"karman-tsien"`` (default), ``"prandtl-glauert"`` or ``"laitone"``.
    fluid : Fluid or None
        A preset name (``"air"``, ``"fresh-water"``, ``"sea-water"``) or a
        :class:`~panelflow.conditions.fluids.Fluid`; ``density`` instead gives a fluid known by its
        density only.
    temperature, salinity, altitude : float or None
        With a preset name: the fluid's temperature (°C), absolute salinity (g/kg, sea water)
        and the altitude of the air or of the water surface (m); the preset's properties are
        computed from the published standards there
        (:func:`~panelflow.conditions.fluids.make_fluid`). Defaults: 15 °C water, 35 g/kg sea
        water, the standard atmosphere at sea level.
    speed : float or None
        Freestream speed in m/s (cavitation number and margin, dimensional loads).
    depth : float or None
        Running depth below the free surface in metres: the cavitation check (needs a liquid).
    unit, chord : str or float, optional
        Length scale: the outline's unit (``m``, ``cm``, ``mm``, ``in``, ``ft``) or the main
        chord in metres (loads).
    plane : Boundary or None
        A wall or free surface near the bodies
        (:class:`~panelflow.flow.images.Boundary`): each angle pitches the bodies relative to
        it.
    reynolds : float or None
        Reynolds number on the freestream speed and the main chord: adds the viscous analysis
        (boundary layer, transition, drag; :mod:`panelflow.viscous`).
    viscous : bool
        Add the viscous analysis with the Reynolds number from the fluid, the speed and the
        chord in metres (``chord``, or ``unit`` times the outline's chord). Set by ``reynolds``.
    critical_amplification : float or None
        Critical amplification factor of the e^N transition method (default 9); or
    turbulence_level : float or None
        the freestream turbulence level in percent, from which it follows (Mack 1977).
    trip_upper, trip_lower : float or None
        Forced transition (a trip) at this x/c on the upper or lower surface.
    """

    alpha_deg: tuple = ()
    target_cl: float | None = None
    mach: float | None = None
    mach_rule: str = KARMAN_TSIEN
    fluid: Fluid | str | None = None
    density: float | None = field(default=None, repr=False)
    speed: float | None = None
    depth: float | None = None
    unit: str | None = None
    chord: float | None = None
    plane: Boundary | None = None
    temperature: float | None = None
    salinity: float | None = None
    altitude: float | None = None
    reynolds: float | None = None
    viscous: bool = False
    critical_amplification: float | None = None
    turbulence_level: float | None = None
    trip_upper: float | None = None
    trip_lower: float | None = None

    def __post_init__(self):
        alpha = np.atleast_1d(np.asarray(self.alpha_deg, dtype=float)).ravel() \
            if not isinstance(self.alpha_deg, str) else None
        if alpha is None:
            raise InputError("angles of attack must be numbers (parse text such as "
                             "'-4:10:2' with panelflow.geometry.arguments.parse_angles)")
        if self.target_cl is not None:
            if len(alpha):
                raise InputError("give either angles of attack or a target lift, not both")
            object.__setattr__(self, "target_cl", _within(
                _finite(self.target_cl, "target lift"), 0.0, MAX_TARGET_CL,
                "target lift coefficient", "beyond what any section of this model carries"))
        elif not len(alpha):
            raise InputError("give the angles of attack (or a target lift coefficient)")
        if not np.all(np.isfinite(alpha)):
            raise InputError("angles of attack must be finite numbers")
        if len(alpha) and np.max(np.abs(alpha)) > MAX_ABS_ALPHA_DEG:
            raise InputError(f"angle of attack {alpha[np.argmax(np.abs(alpha))]:g} deg: at most "
                             f"{MAX_ABS_ALPHA_DEG:g} deg either way")
        limit = MAX_PLANE_ANGLES if self.plane is not None else MAX_ANGLES
        if len(alpha) > limit:
            raise InputError(f"{len(alpha)} angles of attack: at most {limit} in one analysis"
                             + (" near a plane (each is a factorisation)" if self.plane else ""))
        object.__setattr__(self, "alpha_deg", tuple(float(a) for a in alpha))
        if self.mach is not None:
            mach = float(check_mach(self.mach))
            if mach < MIN_MACH:
                raise InputError(f"Mach number {mach:g}: below {MIN_MACH:g} the corrections "
                                 "change the coefficients by less than 1e-4 (and the critical "
                                 "pressure coefficient is not finite at 0): leave it out for "
                                 "incompressible flow")
            object.__setattr__(self, "mach", mach)
        rule = str(self.mach_rule).lower()
        if rule not in RULES:
            raise InputError(f"Mach correction rule {self.mach_rule!r}: use one of "
                             f"{', '.join(RULES)}")
        object.__setattr__(self, "mach_rule", rule)
        self._check_fluid()
        if self.plane is not None and not isinstance(self.plane, Boundary):
            raise InputError(f"plane must be a Boundary (Boundary.ground(h) or "
                             f"Boundary.free_surface(h)), got {type(self.plane).__name__}")
        self._check_viscous()

    def _check_viscous(self) -> None:
        if self.reynolds is not None:
            re = _positive(self.reynolds, "Reynolds number")
            if not 1e3 <= re <= 1e9:
                raise InputError(f"Reynolds number {re:.3g}: give a value from 1e3 to 1e9")
            object.__setattr__(self, "reynolds", re)
            object.__setattr__(self, "viscous", True)
        object.__setattr__(self, "viscous", bool(self.viscous))
        settings = ("critical_amplification", "turbulence_level", "trip_upper", "trip_lower")
        given = [k for k in settings if getattr(self, k) is not None]
        if given and not self.viscous:
            raise InputError(f"{given[0].replace('_', ' ')} belongs to the viscous analysis: "
                             "give the Reynolds number (or ask for the viscous analysis)")
        if self.critical_amplification is not None and self.turbulence_level is not None:
            raise InputError("give either the critical amplification factor or the turbulence "
                             "level, not both")
        if self.viscous:
            self.transition()  # refuse bad transition settings now, before any work
            if self.plane is not None:
                raise InputError("the viscous analysis is for free flow: a wall or free surface "
                                 "is not modelled with it")
            if self.reynolds is None:
                missing = [w for w, v in (("the fluid", self.fluid), ("the speed", self.speed))
                           if v is None]
                if self.chord is None and self.unit is None:
                    missing.append("the chord in metres (or the outline's unit)")
                if missing:
                    raise InputError("the Reynolds number of the viscous analysis comes from the "
                                     "fluid, the speed and the chord: give " + ", ".join(missing)
                                     + ", or the Reynolds number itself")

    def transition(self):
        """The transition settings of the viscous analysis (:class:`panelflow.viscous.Transition`)."""
        from panelflow.viscous import Transition

        trips = {"upper_trip": self.trip_upper, "lower_trip": self.trip_lower}
        if self.turbulence_level is not None:
            level = _positive(self.turbulence_level, "turbulence level")
            return Transition.from_turbulence_level(level, **trips)
        n = 9.0 if self.critical_amplification is None else self.critical_amplification
        return Transition(_positive(n, "critical amplification factor"), **trips)

    def _check_air_speed(self) -> None:
        """Refuse an air speed whose Mach number the incompressible loads cannot carry."""
        if self.fluid is None or self.fluid.name != "air":
            return
        t = STANDARD_SEA_LEVEL_TEMPERATURE if self.fluid.temperature_c is None else (
            self.fluid.temperature_c + 273.15)
        # speed of sound of an ideal gas with ISO 2533's gas constant and heat-capacity ratio
        mach = self.speed / math.sqrt(AIR_HEAT_RATIO * AIR_GAS_CONSTANT * t)
        if mach >= 1.0:
            raise InputError(f"speed {self.speed:g} m/s in air is Mach {mach:.2f}: the flow is "
                             "transonic or supersonic, outside this model")
        if mach > INCOMPRESSIBLE_MACH and self.mach is None:
            raise InputError(
                f"speed {self.speed:g} m/s in air is Mach {mach:.2f}: above Mach "
                f"{INCOMPRESSIBLE_MACH:g} the pressures need the compressibility correction; "
                f"give --mach {mach:.2f} (case files: mach = {mach:.2f})")

    def _check_fluid(self) -> None:
        if self.fluid is not None and self.density is not None:
            raise InputError("give either a fluid or a density, not both")
        state = {k: getattr(self, k) for k in ("temperature", "salinity", "altitude")
                 if getattr(self, k) is not None}
        attribute = {"temperature": "temperature_c", "salinity": "salinity",
                     "altitude": "altitude"}
        if state and isinstance(self.fluid, Fluid) and all(
                getattr(self.fluid, attribute[k]) == v for k, v in state.items()):
            pass  # a fluid made from these values already (with_angles, dataclasses.replace)
        elif state and not isinstance(self.fluid, str):
            raise InputError(f"the {' and '.join(state)} set a preset fluid's properties: give "
                             "the fluid by name (air, fresh-water or sea-water)")
        if isinstance(self.fluid, str):
            object.__setattr__(self, "fluid", make_fluid(self.fluid, **state))
        elif self.density is not None:
            object.__setattr__(self, "fluid", user_fluid(self.density))
        elif self.fluid is not None and not isinstance(self.fluid, Fluid):
            raise InputError(f"fluid must be a preset name or a Fluid, got "
                             f"{type(self.fluid).__name__}")
        object.__setattr__(self, "density", None)
        if self.speed is not None:
            object.__setattr__(self, "speed", _within(
                _positive(self.speed, "speed"), 0.0, MAX_SPEED, "speed (m/s)",
                "faster than sound in air, and far beyond cavitation in water: the flow is no "
                "longer the incompressible one solved here"))
            self._check_air_speed()
        if self.depth is not None:
            object.__setattr__(self, "depth", _within(
                _positive(self.depth, "depth", allow_zero=True), 0.0, MAX_DEPTH, "depth (m)",
                "the deepest ocean"))
            if self.fluid is None:
                raise InputError("the cavitation check at a depth needs the fluid: fresh-water "
                                 "or sea-water")
            if self.fluid.vapour_pressure is None:
                what = ("a fluid given by its density alone" if self.fluid.name == "user"
                        else self.fluid.name)
                raise InputError(f"the cavitation check needs a liquid with a vapour pressure; "
                                 f"{what} has none: use fresh-water or sea-water")
        if self.unit is not None and self.chord is not None:
            raise InputError("give either the outline's unit or a chord in metres, not both")
        if self.unit is not None and self.unit not in UNITS:
            raise InputError(f"unknown length unit {self.unit!r}; use one of {', '.join(UNITS)}")
        if self.chord is not None:
            object.__setattr__(self, "chord", _within(
                _positive(self.chord, "chord"), *CHORD_RANGE, "chord (m)",
                "from a model's micro-foil to a ship's rudder, with room to spare"))

    @property
    def n_angles(self) -> int:
        return len(self.alpha_deg) or 1

    def with_angles(self, alpha_deg) -> OperatingPoint:
        """The same conditions at other angles (no target lift)."""
        return replace(self, alpha_deg=tuple(np.atleast_1d(alpha_deg)), target_cl=None)

    def record(self) -> dict:
        """Plain data for manifests and JSON files (unset conditions left out)."""
        out = {"alpha_deg": list(self.alpha_deg)} if self.alpha_deg else {
            "target_cl": self.target_cl}
        if self.mach is not None:
            out.update(mach=self.mach, mach_rule=self.mach_rule)
        if self.fluid is not None:
            out["fluid"] = self.fluid.name
            out["density_kg_m3"] = self.fluid.density
            out["fluid_source"] = self.fluid.source
        for key in ("temperature", "salinity", "altitude"):
            if getattr(self, key) is not None:
                out[key] = getattr(self, key)
        for key in ("speed", "depth", "unit", "chord"):
            if getattr(self, key) is not None:
                out[key] = getattr(self, key)
        if self.plane is not None:
            out["plane"] = {"kind": self.plane.kind, "distance": self.plane.distance}
        if self.viscous:
            out["viscous"] = {k: getattr(self, k) for k in
                              ("reynolds", "critical_amplification", "turbulence_level",
                               "trip_upper", "trip_lower") if getattr(self, k) is not None}
        return out


@dataclass(frozen=True)
class Problem:
    """The bodies to solve and how: the whole input of :func:`panelflow.analysis.solve.solve`.

    Attributes
    ----------
    bodies : tuple of Outline
        The first is the main body: its chord is the reference length and the flap, if any,
        deflects it.
    operating : OperatingPoint
    panels : int or None
        Panels per body on a spline through the points (default 200); None keeps the given
        points as panel ends.
    error_estimate : bool
        Solve again at about half the panels for the discretisation error estimate.
    reference_point : (x, y) or None
        Moment reference point; default the quarter chord of the main body's (undeflected)
        chord line.
    flap : Flap or None
    smoothing : float or None
        Fit each body with a smoothing curve that moves no input point by more than this
        distance (outline units; leading and trailing edges kept) before the flap and the
        panelling: for digitised or noisy tables (:func:`panelflow.geometry.quality.smoothed`).
    label : str
        A name for tables and figures; default the bodies' names joined.
    """

    bodies: tuple
    operating: OperatingPoint
    panels: int | None = DEFAULT_PANELS
    error_estimate: bool = True
    reference_point: tuple | None = None
    flap: Flap | None = None
    smoothing: float | None = None
    label: str = ""

    def __post_init__(self):
        bodies = (self.bodies,) if isinstance(self.bodies, Outline) else tuple(self.bodies)
        if not bodies:
            raise InputError("no outline given")
        for b in bodies:
            if not isinstance(b, Outline):
                raise InputError(f"bodies must be Outline objects, got {type(b).__name__}")
        object.__setattr__(self, "bodies", bodies)
        if not isinstance(self.operating, OperatingPoint):
            raise InputError("operating must be an OperatingPoint")
        if self.panels is not None:
            if isinstance(self.panels, bool) or not isinstance(self.panels, (int, np.integer)):
                raise InputError(f"panels must be a whole number, got {self.panels!r}")
            n = int(self.panels)
            if n < MIN_PANELS:
                raise InputError(f"{n} panels: at least {MIN_PANELS} per body")
            if n > MAX_PANELS_PER_BODY:
                raise InputError(f"{n} panels: at most {MAX_PANELS_PER_BODY} per body (the "
                                 "error estimate shows when more would help)")
            object.__setattr__(self, "panels", n)
        counts = [self.panels if self.panels is not None else len(b.points) - 1 for b in bodies]
        if sum(counts) > MAX_PANELS_TOTAL:
            raise InputError(f"{sum(counts)} panels in all: at most {MAX_PANELS_TOTAL} (the dense "
                             f"system would need {8 * sum(counts)**2 / 2**30:.1f} GiB)")
        if self.reference_point is not None:
            ref = tuple(_within(_finite(v, "reference point"), 0.0, MAX_COORDINATE,
                                "reference point coordinate", "the outlines' own range")
                        for v in np.ravel(self.reference_point))
            if len(ref) != 2:
                raise InputError("the reference point needs two coordinates (x, y)")
            object.__setattr__(self, "reference_point", ref)
        if self.smoothing is not None:
            d = _positive(self.smoothing, "smoothing distance")
            for b in bodies:
                if d > MAX_SMOOTHING * b.chord:
                    raise InputError(
                        f"{b.label}: smoothing distance {d:g} is {100 * d / b.chord:.3g} % of "
                        f"its chord {b.chord:g}; at most {100 * MAX_SMOOTHING:g} %: smoothing "
                        "takes out digitising noise (a fraction of a millimetre on a chord of "
                        "a few hundred), it does not reshape a section (the reshape command "
                        "does)")
            object.__setattr__(self, "smoothing", d)
        if self.flap is not None and not isinstance(self.flap, Flap):
            raise InputError(f"flap must be a Flap, got {type(self.flap).__name__}")
        object.__setattr__(self, "error_estimate", bool(self.error_estimate))
        if not self.label:
            object.__setattr__(self, "label", ", ".join(b.name for b in bodies))
        file_unit = outline_unit(bodies)
        op_unit = self.operating.unit
        if file_unit is not None and op_unit is not None and op_unit != file_unit:
            raise InputError(f"length unit {op_unit}: the outline file's column header says "
                             f"{file_unit}; leave the unit out or give {file_unit}")
        if self.operating.viscous:
            if len(bodies) > 1 or (self.flap is not None and self.flap.gap is not None):
                raise InputError(
                    "the viscous analysis handles one body: the boundary layers of several "
                    "bodies in each other's flow (a flap's slot, a wake over another body) are "
                    "not modelled; analyse these bodies inviscidly")
            from panelflow.geometry.outline import SMOOTH

            if bodies[0].kind == SMOOTH:
                raise InputError(
                    f"{bodies[0].name}: no trailing edge, and the viscous analysis needs one to "
                    "start the wake (a rounded tail's separation is outside this model)")
        plane = self.operating.plane
        if plane is not None and plane.distance > MAX_DISTANCE_CHORDS * bodies[0].chord:
            raise InputError(
                f"{plane.label} {plane.distance:g} away is more than {MAX_DISTANCE_CHORDS:g} "
                "chords from the bodies: its effect on lift is below 0.04 % there and the image "
                "terms lose precision; solve without it")

    @property
    def length_unit(self) -> str | None:
        """The outline's length unit: the operating point's, else the one the outline files'
        column headers name (None: neither; the loads then take metres)."""
        return self.operating.unit or outline_unit(self.bodies)

    def with_error_estimate(self, on: bool) -> Problem:
        """The same problem with the half-panel error estimate switched on or off."""
        return replace(self, error_estimate=bool(on))

    def with_operating(self, operating: OperatingPoint) -> Problem:
        """The same bodies under another operating point."""
        return replace(self, operating=operating)

    def record(self) -> dict:
        """Plain data for manifests and JSON files."""
        out = {"label": self.label, "bodies": [b.name for b in self.bodies],
               "panels": self.panels, "error_estimate": self.error_estimate,
               "reference_point": list(self.reference_point) if self.reference_point else None}
        if self.flap is not None:
            out["flap"] = self.flap.record()
        if self.smoothing is not None:
            out["smoothing"] = self.smoothing
        out.update(self.operating.record())
        return out


def outline_unit(bodies) -> str | None:
    """The length unit the bodies' files name in their column headers (None when none does).

    Raises
    ------
    InputError
        When two bodies name different units.
    """
    units = {b.unit: b.name for b in bodies if getattr(b, "unit", None)}
    if len(units) > 1:
        raise InputError("the outlines are in different units ("
                         + ", ".join(f"{n}: {u}" for u, n in units.items())
                         + "); give them in one unit")
    return next(iter(units), None)


def _refusals(op: OperatingPoint, output: str) -> list:
    """Why ``output`` cannot be made under ``op`` (empty when it can)."""
    out = []
    if output == "field":
        if op.mach is not None:
            out.append("the flow field is incompressible: the Mach number corrections apply to "
                       "surface pressures only; leave out the Mach number")
        if op.depth is not None:
            out.append("the cavitation check is made on the surface pressures; the field does "
                       "not use a running depth")
    if output == "field" and op.viscous:
        out.append("the flow field is the inviscid solution's; the displacement of the "
                   "boundary layer is not in it: leave out the viscous analysis")
    if output == "loads" and (op.fluid is None or op.speed is None):
        out.append("loads need the fluid (or its density) and the speed")
    if output in ("solve", "compare", "field", "figures") and op.depth is None and (
            not op.viscous or op.reynolds is not None) and (
            op.fluid is not None or op.speed is not None):
        # (temperature, salinity and altitude need a fluid, so they are refused with it)
        out.append("a fluid and a speed serve the cavitation check or the viscous analysis "
                   "here: " + ("the Reynolds number is given, so they are not used; leave them "
                               "out, or leave out the Reynolds number to have it from them"
                               if op.reynolds is not None else
                               "give the running depth, or ask for the viscous analysis")
                   + " (loads take them without)")
    if output in ("solve", "compare", "field", "figures") and (
            not op.viscous or op.reynolds is not None) and (op.unit is not None
                                                            or op.chord is not None):
        out.append("a length unit or chord in metres serves the loads or the viscous "
                   "analysis's Reynolds number; the coefficients here do not depend on it"
                   + (" (the Reynolds number is given)" if op.reynolds is not None else ""))
    return out


def check_output(operating: OperatingPoint, output: str) -> None:
    """Refuse, before any work, an output that the operating point cannot give.

    Parameters
    ----------
    operating : OperatingPoint
    output : str
        One of :data:`OUTPUTS`.

    Raises
    ------
    InputError
        With the reason, naming the output.
    """
    if output not in OUTPUTS:
        raise InputError(f"unknown output {output!r}; one of {', '.join(OUTPUTS)}")
    reasons = _refusals(operating, output)
    if reasons:
        raise InputError(f"{output}: {reasons[0]}")
