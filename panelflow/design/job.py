"""The job a section is optimised for: one objective and the designer's constraints, as data.

Everything here is plain, frozen, picklable data, checked on construction, so a job goes to a
worker process or a Dask worker as it is (:mod:`panelflow.design.optimise`). A case file builds
it (:mod:`panelflow.design.spec`); a Python user may build it directly.

Objectives (one per job)
------------------------
:class:`InceptionSpeed`
    the highest cavitation-inception speed at a design lift: the least suction peak
    ``-Cp_min`` there, since the inception speed is ``sqrt(2 (p_atm + rho g h - p_v) /
    (rho (-Cp_min)))`` (:mod:`panelflow.conditions.cavitation`);
:class:`WidestRange`
    the widest range of angle of attack, or of lift, free of cavitation at a given depth and
    speed: ``-Cp_min <= sigma (1 - margin)`` over the whole range;
:class:`LeastDrag`
    the least drag at a design lift from the viscous analysis (:mod:`panelflow.viscous`).

Constraints
-----------
Thickness at stations or over ranges (:class:`~panelflow.design.inverse.ThicknessLimit`),
section area, a pitching-moment range at the design lift (:class:`MomentLimit`), the least
leading-edge radius and the least trailing-edge angle. Closure and the trailing-edge thickness
hold by construction (:mod:`panelflow.design.shape`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields

from panelflow.conditions.fluids import get_fluid
from panelflow.design.inverse import ThicknessLimit
from panelflow.errors import InputError

__all__ = ["Limits", "Cavitation", "InceptionSpeed", "WidestRange", "LeastDrag", "MomentLimit",
           "Job",
           "DEFAULT_OPTIMISATION_PANELS", "DEFAULT_OPTIMISATION_FUNCTIONS"]

DEFAULT_OPTIMISATION_PANELS = 200
DEFAULT_OPTIMISATION_FUNCTIONS = 12


def _number(value, what: str, low=None, high=None, low_open=False) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, got {value!r}") from None
    if not math.isfinite(v):
        raise InputError(f"{what} must be finite, got {value!r}")
    if low is not None and (v < low or (low_open and v == low)):
        raise InputError(f"{what} {v:g}: must be {'above' if low_open else 'at least'} {low:g}")
    if high is not None and v > high:
        raise InputError(f"{what} {v:g}: must be at most {high:g}")
    return v


def _record(obj) -> dict:
    out = {}
    for f in fields(obj):
        v = getattr(obj, f.name)
        if v is None:
            continue
        if isinstance(v, tuple):
            v = [_record(x) if hasattr(x, "__dataclass_fields__") else x for x in v]
        elif hasattr(v, "__dataclass_fields__"):
            v = _record(v)
        out[f.name] = v
    return out


@dataclass(frozen=True)
class Limits:
    """A lower and/or upper limit of one measure.

    Attributes
    ----------
    minimum, maximum : float or None
        At least one.
    """

    minimum: float | None = None
    maximum: float | None = None

    def __post_init__(self):
        if self.minimum is None and self.maximum is None:
            raise InputError("a limit needs a minimum, a maximum or both")
        for k in ("minimum", "maximum"):
            if getattr(self, k) is not None:
                object.__setattr__(self, k, _number(getattr(self, k), k))
        if self.minimum is not None and self.maximum is not None and self.minimum > self.maximum:
            raise InputError(f"minimum {self.minimum:g} above the maximum {self.maximum:g}")

    @classmethod
    def of(cls, value, what: str, low: float, high: float) -> "Limits | None":
        """``value`` as limits (a number is a minimum), each within ``[low, high]``."""
        if value is None:
            return None
        lim = value if isinstance(value, Limits) else cls(minimum=value)
        for v in (lim.minimum, lim.maximum):
            if v is not None:
                _number(v, what, low, high)
        return lim

    def holds(self, value: float, tolerance: float = 0.0) -> bool:
        """True when ``value`` is within the limits, to ``tolerance`` (in its own unit)."""
        ok = True
        if self.minimum is not None:
            ok &= value >= self.minimum - tolerance
        if self.maximum is not None:
            ok &= value <= self.maximum + tolerance
        return bool(ok)

    def describe(self) -> str:
        if self.minimum is not None and self.maximum is not None:
            return f"{self.minimum:g} to {self.maximum:g}"
        if self.minimum is not None:
            return f"at least {self.minimum:g}"
        return f"at most {self.maximum:g}"


@dataclass(frozen=True)
class Cavitation:
    """Where the section runs: depth below the free surface, the liquid, and the speed.

    Attributes
    ----------
    depth : float
        Metres below the free surface.
    fluid : str
        ``"sea-water"`` or ``"fresh-water"`` (a preset with a vapour pressure).
    speed : float or None
        m/s; needed for a cavitation-free range (it sets the cavitation number).
    margin : float
        Share of the cavitation number kept in hand: the range counts as free while
        ``-Cp_min <= sigma (1 - margin)`` (0 is the bare inviscid inception estimate).
    """

    depth: float
    fluid: str = "sea-water"
    speed: float | None = None
    margin: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "depth", _number(self.depth, "depth (m)", 0.0))
        fluid = get_fluid(self.fluid)
        if fluid.vapour_pressure is None:
            raise InputError(f"fluid {fluid.name}: cavitation needs a liquid (sea-water or "
                             "fresh-water)")
        object.__setattr__(self, "fluid", fluid.name)
        if self.speed is not None:
            object.__setattr__(self, "speed",
                               _number(self.speed, "speed (m/s)", 0.0, low_open=True))
        object.__setattr__(self, "margin", _number(self.margin, "cavitation margin", 0.0, 0.9))

    def sigma(self) -> float:
        """Cavitation number at the speed (needs the speed)."""
        from panelflow.conditions.cavitation import STANDARD_ATMOSPHERE, cavitation_number

        if self.speed is None:
            raise InputError("the cavitation number needs the speed")
        f = get_fluid(self.fluid)
        ambient = f.ambient_pressure or STANDARD_ATMOSPHERE
        return float(cavitation_number(self.speed, self.depth, f.density, f.vapour_pressure,
                                       ambient))

    def inception_speed(self, cp_min: float) -> float:
        """Inception speed (m/s) of a suction peak at this depth."""
        from panelflow.conditions.cavitation import STANDARD_ATMOSPHERE, inception_speed

        f = get_fluid(self.fluid)
        ambient = f.ambient_pressure or STANDARD_ATMOSPHERE
        return float(inception_speed(cp_min, self.depth, f.density, f.vapour_pressure, ambient))


@dataclass(frozen=True)
class InceptionSpeed:
    """Objective: the highest cavitation-inception speed at the design lift ``cl``."""

    cl: float

    def __post_init__(self):
        object.__setattr__(self, "cl", _number(self.cl, "design lift coefficient", -3.0, 3.0))

    @property
    def design_cl(self):
        return self.cl

    def describe(self) -> str:
        return f"highest cavitation-inception speed at cl {self.cl:g}"


@dataclass(frozen=True)
class WidestRange:
    """Objective: the widest range free of cavitation, in angle of attack or in lift.

    Attributes
    ----------
    measure : {"angle", "lift"}
    cl : float or None
        A lift the range must contain (the cruise lift, say).
    checks : int
        Angles checked across the range inside the optimisation (the ends included); the
        re-analysis finds the free range on a 0.02-degree grid.
    """

    measure: str = "angle"
    cl: float | None = None
    checks: int = 5

    def __post_init__(self):
        if self.measure not in ("angle", "lift"):
            raise InputError(f"range measure {self.measure!r}: use angle or lift")
        if self.cl is not None:
            object.__setattr__(self, "cl", _number(self.cl, "lift inside the range", -3.0, 3.0))
        n = int(self.checks)
        if n < 2 or n > 41:
            raise InputError(f"{n} check angles: give 2 to 41")
        object.__setattr__(self, "checks", n)

    @property
    def design_cl(self):
        return self.cl

    def describe(self) -> str:
        what = "angle of attack" if self.measure == "angle" else "lift"
        inside = f" containing cl {self.cl:g}" if self.cl is not None else ""
        return f"widest {what} range free of cavitation{inside}"


@dataclass(frozen=True)
class LeastDrag:
    """Objective: the least drag at the design lift, from the viscous analysis.

    Attributes
    ----------
    cl : float
        Design lift (the viscous lift: the angle is found so that it is met).
    reynolds : float
        Reynolds number on the chord.
    critical_amplification : float
        Transition criterion of the e^N method (9 by default).
    trip_upper, trip_lower : float or None
        Forced transition (a trip strip) at this x/c.
    """

    cl: float
    reynolds: float
    critical_amplification: float = 9.0
    trip_upper: float | None = None
    trip_lower: float | None = None

    def __post_init__(self):
        object.__setattr__(self, "cl", _number(self.cl, "design lift coefficient", -3.0, 3.0))
        object.__setattr__(self, "reynolds", _number(self.reynolds, "Reynolds number", 1e4, 1e9))
        object.__setattr__(self, "critical_amplification",
                           _number(self.critical_amplification, "critical amplification", 1.0,
                                   20.0))
        for key in ("trip_upper", "trip_lower"):
            if getattr(self, key) is not None:
                object.__setattr__(self, key, _number(getattr(self, key),
                                                      key.replace("_", " "), 0.0, 1.0))

    def transition(self):
        """The transition settings of the viscous analysis."""
        from panelflow.viscous import Transition

        return Transition(self.critical_amplification, self.trip_upper, self.trip_lower)

    @property
    def design_cl(self):
        return self.cl

    def describe(self) -> str:
        return f"least drag at cl {self.cl:g}, Reynolds number {self.reynolds:.3g}"


@dataclass(frozen=True)
class MomentLimit:
    """Pitching moment about the quarter chord (nose-up positive) at a lift, within limits.

    Attributes
    ----------
    minimum, maximum : float or None
        At least one.
    cl : float or None
        The lift it applies at; default the objective's design lift.
    """

    minimum: float | None = None
    maximum: float | None = None
    cl: float | None = None

    def __post_init__(self):
        if self.minimum is None and self.maximum is None:
            raise InputError("a moment limit needs a minimum, a maximum or both")
        for k in ("minimum", "maximum"):
            if getattr(self, k) is not None:
                object.__setattr__(self, k, _number(getattr(self, k), f"moment {k}", -2.0, 2.0))
        if self.minimum is not None and self.maximum is not None and self.minimum > self.maximum:
            raise InputError(f"moment minimum {self.minimum:g} above its maximum "
                             f"{self.maximum:g}")
        if self.cl is not None:
            object.__setattr__(self, "cl", _number(self.cl, "lift of the moment limit", -3.0,
                                                   3.0))


@dataclass(frozen=True)
class Job:
    """What a section is optimised for.

    Attributes
    ----------
    objective : InceptionSpeed, WidestRange or LeastDrag
    cavitation : Cavitation or None
        Needed by the cavitation objectives (the range needs the speed too).
    thickness : tuple of ThicknessLimit
    area : Limits or None
        Section area, chords squared (a number: the least area).
    moment : MomentLimit or None
    leading_edge_radius : Limits or None
        Nose radius, chords (a number: the least radius).
    trailing_edge_angle : Limits or None
        Trailing-edge angle, degrees (a number: the least angle).
    functions : int
        Shape functions over the whole section (the design variables).
    panels : int
        Panels of the design model (the check re-analyses at twice as many).
    starts : int
        Starting points: the start section, then smooth random variations of it.
    seed : int
        Seed of those variations (the run repeats exactly).
    spread : float
        Size of the variations, chords (largest change of y).
    max_iterations : int
        SLSQP iterations per stage.
    """

    objective: object
    cavitation: Cavitation | None = None
    thickness: tuple = ()
    area: Limits | None = None
    moment: MomentLimit | None = None
    leading_edge_radius: Limits | None = None
    trailing_edge_angle: Limits | None = None
    functions: int = DEFAULT_OPTIMISATION_FUNCTIONS
    panels: int = DEFAULT_OPTIMISATION_PANELS
    starts: int = 1
    seed: int = 0
    spread: float = 0.004
    max_iterations: int = 100

    def __post_init__(self):
        if not isinstance(self.objective, (InceptionSpeed, WidestRange, LeastDrag)):
            raise InputError("the objective must be InceptionSpeed, WidestRange or LeastDrag")
        if isinstance(self.objective, (InceptionSpeed, WidestRange)) and self.cavitation is None:
            raise InputError(f"{self.objective.describe()}: give the cavitation conditions "
                             "(depth and fluid)")
        if isinstance(self.objective, WidestRange) and self.cavitation.speed is None:
            raise InputError("a range free of cavitation needs the speed (it sets the "
                             "cavitation number)")
        thk = tuple(self.thickness)
        for t in thk:
            if not isinstance(t, ThicknessLimit):
                raise InputError("thickness limits must be ThicknessLimit objects")
        object.__setattr__(self, "thickness", thk)
        object.__setattr__(self, "area", Limits.of(self.area, "section area", 0.0, 0.5))
        object.__setattr__(self, "leading_edge_radius",
                           Limits.of(self.leading_edge_radius, "leading-edge radius", 0.0, 0.2))
        object.__setattr__(self, "trailing_edge_angle",
                           Limits.of(self.trailing_edge_angle, "trailing-edge angle", 0.0, 90.0))
        if self.moment is not None:
            if not isinstance(self.moment, MomentLimit):
                raise InputError("the moment limit must be a MomentLimit")
            if self.moment.cl is None and self.objective.design_cl is None:
                raise InputError("the moment limit needs the lift it applies at (the objective "
                                 "has no design lift)")
        for key, low, high in (("functions", 4, 40), ("panels", 40, 1000), ("starts", 1, 64),
                               ("max_iterations", 1, 1000)):
            v = getattr(self, key)
            if isinstance(v, bool) or int(v) != v or not low <= int(v) <= high:
                raise InputError(f"{key.replace('_', ' ')} {v!r}: give a whole number from "
                                 f"{low} to {high}")
            object.__setattr__(self, key, int(v))
        object.__setattr__(self, "seed", int(self.seed))
        object.__setattr__(self, "spread", _number(self.spread, "spread of the starts", 0.0,
                                                   0.05))

    @property
    def moment_cl(self):
        if self.moment is None:
            return None
        return self.moment.cl if self.moment.cl is not None else self.objective.design_cl

    def record(self) -> dict:
        """Plain data for manifests."""
        out = _record(self)
        out["objective"] = {"kind": type(self.objective).__name__, **_record(self.objective)}
        return out
