"""One result object for one :class:`~panelflow.analysis.problem.Problem`.

:class:`Result` carries every part that was asked for -- the inviscid surface solution with its
error estimates, the compressibility-corrected coefficients, the cavitation margins, the effect of
a plane boundary, the flapped geometry -- and the notes on where the model stops. Field,
streamlines, loads, writers, figures, polars and the study runner all take it.

For the common quantities it reads like the inviscid :class:`~panelflow.analysis.inviscid.Analysis`
(``result.cl``, ``result[i]``, ``len(result)``), so code written for that keeps working.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.analysis.inviscid import Analysis, AngleResult
from panelflow.analysis.problem import OperatingPoint, Problem

__all__ = ["PlaneEffect", "ViscousPart", "Result", "as_result", "margin_columns",
           "margin_record", "VISCOUS_COLUMNS"]


@dataclass(frozen=True)
class PlaneEffect:
    """What a wall or free surface does to the bodies, per angle.

    Attributes
    ----------
    boundary : panelflow.flow.images.Boundary
    pitch_point : ndarray, shape (2,)
        The point the distance to the plane is measured from (the bodies pitch about it).
    clearance : (n_alpha,) smallest distance from any body to the plane, outline units.
    cl_free, cm_free : (n_alpha,) the same bodies' lift and moment in free space.
    cl_ratio : (n_alpha,) lift near the plane over lift in free space (NaN where the free-space
        lift is below 1e-3).
    cautions : tuple of str
    """

    boundary: object
    pitch_point: np.ndarray
    clearance: np.ndarray
    cl_free: np.ndarray
    cm_free: np.ndarray
    cl_ratio: np.ndarray
    cautions: tuple = field(default=(), repr=False)

    def __post_init__(self):
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)

    def image(self, alpha_deg: float):
        """The plane's image kernels at an angle (for the plane's line in figures)."""
        return self.boundary.image(self.pitch_point, alpha_deg)


@dataclass(frozen=True)
class ViscousPart:
    """The viscous analysis of a result, one :class:`panelflow.viscous.ViscousResult` per angle.

    Attributes
    ----------
    reynolds : float
    reynolds_source : str
        How the Reynolds number was found (given, or from the fluid, speed and chord).
    transition : panelflow.viscous.Transition
    results : tuple of ViscousResult
        In the order of the result's angles; an unconverged angle has ``converged`` False and
        NaN in every coefficient.
    after_failure : ndarray of bool
        Angles reached in a sweep only after an unconverged one (their start was older).
    limits : str
        Where the viscous model stops (stated with every output).
    """

    reynolds: float
    reynolds_source: str
    transition: object
    results: tuple = field(repr=False)
    after_failure: np.ndarray = field(repr=False)
    limits: str = field(repr=False, default="")

    def column(self, name: str) -> np.ndarray:
        """One quantity over the angles (NaN where the iteration did not converge)."""
        return np.array([float(getattr(r, name)) for r in self.results], float)

    @property
    def converged(self) -> np.ndarray:
        return np.array([bool(r.converged) for r in self.results])


@dataclass(frozen=True)
class Result:
    """Everything computed for one problem.

    Attributes
    ----------
    problem : Problem
        What was asked; with a target lift, ``problem.operating`` still holds the target and
        :attr:`alpha_deg` the angle found.
    inviscid : Analysis
        Surface solution, coefficients and discretisation error estimates at every angle.
    compressibility : CompressibleResult or None
        With a Mach number: corrected Cp and coefficients, Cp*, critical Mach number
        (:mod:`panelflow.conditions.compressibility`).
    cavitation : CavitationResult or None
        With a running depth: cavitation number, inception speed and margin per angle
        (:mod:`panelflow.conditions.cavitation`).
    plane : PlaneEffect or None
        With a wall or free surface: clearance and the change from free space.
    flap : FlappedSection or None
        With a flap: the deflected geometry, hinge point and undeflected chord line.
    viscous : ViscousPart or None
        With a Reynolds number: drag, transition, separation, viscous lift and moment per angle.
    notes : tuple of str
        Plain sentences on where the model stops for these inputs (to be shown with the
        numbers).
    """

    problem: Problem
    inviscid: Analysis
    compressibility: object = None
    cavitation: object = None
    plane: PlaneEffect | None = None
    flap: object = None
    notes: tuple = ()
    viscous: ViscousPart | None = None

    # -- the inviscid quantities, read through
    @property
    def operating(self) -> OperatingPoint:
        return self.problem.operating

    @property
    def label(self) -> str:
        return self.problem.label

    @property
    def outlines(self) -> tuple:
        """The bodies as solved (a flap applied)."""
        return self.inviscid.outlines

    @property
    def panellings(self) -> tuple:
        return self.inviscid.panellings

    @property
    def fine(self):
        return self.inviscid.fine

    @property
    def alpha_deg(self) -> np.ndarray:
        return self.inviscid.alpha_deg

    @property
    def chord(self) -> float:
        return self.inviscid.chord

    @property
    def reference_point(self) -> np.ndarray:
        return self.inviscid.reference_point

    @property
    def n_panels(self) -> int:
        return self.inviscid.n_panels

    @property
    def cl(self) -> np.ndarray:
        return self.inviscid.cl

    @property
    def cm(self) -> np.ndarray:
        return self.inviscid.cm

    @property
    def cd_pressure(self) -> np.ndarray:
        return self.inviscid.cd_pressure

    @property
    def cl_error_estimate(self) -> np.ndarray:
        return self.inviscid.cl_error_estimate

    @property
    def cp_min_error_estimate(self) -> np.ndarray:
        """Error estimate of each body's lowest Cp, shape (n_alpha, n_bodies); NaN without one."""
        est = getattr(self.inviscid, "cp_min_error_estimate", None)
        return (np.full(np.shape(self.fine.cp_min), np.nan) if est is None
                else np.asarray(est))

    @property
    def cm_error_estimate(self) -> np.ndarray:
        return self.inviscid.cm_error_estimate

    def __len__(self) -> int:
        return len(self.inviscid)

    def __getitem__(self, i: int) -> AngleResult:
        return self.inviscid[i]

    def __iter__(self):
        return iter(self.inviscid)

    def system_at(self, i: int):
        """The factorised system of angle number ``i`` (for the field and streamlines)."""
        return self.inviscid.fine.system_at(i)

    def angle_index(self, alpha_deg: float) -> int:
        """Index of the solved angle equal to ``alpha_deg`` (see :meth:`Analysis.angle_index`)."""
        return self.inviscid.angle_index(alpha_deg)

    def __repr__(self) -> str:
        parts = [f"{self.label!r}", f"{len(self)} angle(s)"]
        for name in ("compressibility", "cavitation", "plane", "flap", "viscous"):
            if getattr(self, name) is not None:
                parts.append(name)
        return f"Result({', '.join(parts)})"


def as_result(obj) -> Result:
    """A :class:`Result` for ``obj``: itself, or an inviscid Analysis wrapped with no margins."""
    if isinstance(obj, Result):
        return obj
    if isinstance(obj, Analysis):
        op = OperatingPoint(alpha_deg=tuple(obj.alpha_deg))
        problem = Problem(obj.outlines, op, panels=None, error_estimate=obj.coarse is not None,
                          reference_point=tuple(obj.reference_point))
        return Result(problem, obj)
    raise TypeError(f"expected a Result or an Analysis, got {type(obj).__name__}")


def margin_columns(result: Result) -> dict:
    """Per-angle columns of the margins the result carries, for tables and files.

    Keys (each an array over the angles), present only when the part was computed:

    * compressibility: ``cl_mach``, ``cl_mach_error_estimate``, ``cm_mach``,
      ``cm_mach_error_estimate``, ``cp_min_mach`` (main body), ``mach_critical``;
    * cavitation: ``inception_speed`` (m/s), and with a speed ``cavitation_number`` and
      ``cavitation_margin`` (cavitation number plus the lowest Cp: negative when cavitating);
    * plane: ``plane_clearance`` (outline units), ``cl_free_space``, ``cm_free_space``;
    * viscous analysis: see :data:`VISCOUS_COLUMNS` (NaN where the iteration did not converge,
      ``viscous_converged`` 1 or 0);
    * last, with an error estimate: ``cp_min_error_estimate`` (the main body's suction peak, as
      ``cp_min``), and with cavitation ``inception_speed_low`` and ``inception_speed_high`` (the
      inception speed's range over that estimate).
    """
    out = {}
    c = result.compressibility
    if c is not None:
        out.update(cl_mach=np.asarray(c.cl), cl_mach_error_estimate=np.asarray(c.cl_error_estimate),
                   cm_mach=np.asarray(c.cm), cm_mach_error_estimate=np.asarray(c.cm_error_estimate),
                   cp_min_mach=np.asarray(c.cp_min)[:, 0], mach_critical=np.asarray(c.critical_mach))
    v = result.cavitation
    if v is not None:
        out["inception_speed"] = np.asarray(v.section_inception_speed)
        if np.isfinite(v.speed):
            out["cavitation_number"] = np.full(len(v.alpha_deg), v.sigma)
            out["cavitation_margin"] = np.asarray(v.margin)
    p = result.plane
    if p is not None:
        out.update(plane_clearance=np.asarray(p.clearance), cl_free_space=np.asarray(p.cl_free),
                   cm_free_space=np.asarray(p.cm_free))
    v = result.viscous
    if v is not None:
        out.update({column: v.column(field_) for column, field_ in VISCOUS_COLUMNS.items()})
        out["viscous_converged"] = v.converged.astype(float)
        out["viscous_residual"] = v.column("residual")
    # the suction peak's estimate and the inception speed's range over it, after the columns
    # above so that their order is kept
    est = getattr(result.inviscid, "cp_min_error_estimate", None)
    if est is not None and np.any(np.isfinite(est)):
        out["cp_min_error_estimate"] = np.asarray(est)[:, 0]  # the main body's, as cp_min
    v = result.cavitation
    if v is not None and np.any(np.isfinite(v.section_inception_speed_low)):
        out["inception_speed_low"] = np.asarray(v.section_inception_speed_low)
        out["inception_speed_high"] = np.asarray(v.section_inception_speed_high)
    return out


# column name in tables and files -> field of panelflow.viscous.ViscousResult
VISCOUS_COLUMNS = {
    "cl_viscous": "cl", "cm_viscous": "cm", "cd": "cd", "cd_friction": "cd_friction",
    "cd_form": "cd_pressure", "cd_squire_young": "cd_squire_young",
    "lift_to_drag": "lift_to_drag", "transition_upper": "transition_upper",
    "transition_lower": "transition_lower", "separation_upper": "separation_upper",
    "reattachment_upper": "reattachment_upper", "separation_lower": "separation_lower",
    "reattachment_lower": "reattachment_lower",
}


def margin_record(result: Result) -> dict:
    """The settings and single numbers of each margin, as plain data (JSON files)."""
    out = {}
    c = result.compressibility
    if c is not None:
        out["compressibility"] = {"mach": c.mach, "rule": c.rule, "heat_ratio": c.heat_ratio,
                                  "cp_star": c.cp_star, "warnings": list(c.warnings)}
    v = result.cavitation
    if v is not None:
        out["cavitation"] = {
            "depth_m": v.depth, "speed_m_s": v.speed if np.isfinite(v.speed) else None,
            "cavitation_number": v.sigma if np.isfinite(v.sigma) else None,
            "density_kg_m3": v.density, "vapour_pressure_pa": v.vapour_pressure,
            "atmospheric_pressure_pa": v.atmospheric_pressure, "cautions": list(v.cautions)}
    p = result.plane
    if p is not None:
        out["plane"] = {"kind": p.boundary.kind, "distance": p.boundary.distance,
                        "side": "above" if p.boundary.above else "below",
                        "pitch_point": [float(x) for x in p.pitch_point],
                        "cautions": list(p.cautions)}
    f = result.flap
    if f is not None:
        out["flap"] = {"kind": f.kind, "hinge": f.hinge, "angle_deg": f.angle_deg}
    v = result.viscous
    if v is not None:
        tr = v.transition
        out["viscous"] = {"reynolds": v.reynolds, "reynolds_source": v.reynolds_source,
                          "critical_amplification": tr.critical_amplification,
                          "trip_upper": tr.upper_trip, "trip_lower": tr.lower_trip,
                          "unconverged_alpha_deg": [float(r.alpha_deg) for r in v.results
                                                    if not r.converged],
                          "limits": v.limits}
    return out
