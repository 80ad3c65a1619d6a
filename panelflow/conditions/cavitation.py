"""Cavitation inception: cavitation number, the inviscid inception criterion and inception speed.

For a section at depth ``h`` below the free surface moving at speed ``V`` through a liquid of
density ``rho`` and vapour pressure ``p_v``, under an atmospheric pressure ``p_atm``, the
cavitation number is::

    sigma = (p_atm + rho g h - p_v) / (rho V^2 / 2)

The local pressure ``p = p_inf + Cp rho V^2 / 2`` falls to the vapour pressure where
``Cp = -sigma``; the usual first estimate of inception is therefore ``-Cp_min >= sigma``, with
``Cp_min`` the lowest surface pressure coefficient of the potential flow. At a given depth this
gives the inception speed::

    V_i = sqrt(2 (p_atm + rho g h - p_v) / (rho (-Cp_min)))

``g`` is the standard acceleration of gravity, 9.80665 m/s^2 (3rd CGPM, 1901; ISO 80000-3).
SI units throughout: m, m/s, kg/m^3, Pa.

Cautions: this is an inviscid estimate. Real inception depends on the water's dissolved gas and
nuclei content, surface roughness and finish, viscous effects (laminar separation bubbles, tip and
gap vortices), unsteadiness and scale; it may begin at a lower speed than estimated here (or, with
very clean water, tension may delay it). The hydrostatic pressure is taken at the stated depth;
the variation over the section's own height, and the free surface's waves, are neglected.
Erosion, noise and the loss of lift once cavitation develops are not assessed.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.errors import InputError

STANDARD_GRAVITY = 9.80665  # m/s^2, 3rd CGPM (1901), ISO 80000-3
STANDARD_ATMOSPHERE = 101325.0  # Pa, the standard atmosphere at sea level (ISO 2533)
# A suction peak known no better than this fraction of itself gets its inception speed as a
# range in the notes (the analysis notes the peak itself at the same share).
PEAK_NOTE_SHARE = 0.05

CAUTIONS = (
    ("Cavitation inception is the inviscid first estimate -Cp_min >= sigma: real inception also "
     "depends on water quality (dissolved gas, nuclei), surface roughness and finish, viscous "
     "effects (separation bubbles, tip and gap vortices) and unsteady flow, and may come at a "
     "lower speed; keep a margin and confirm by test or established practice."),
    ("The hydrostatic pressure is taken at the stated depth; its variation over the section's "
     "height and the effect of waves are neglected."),
    ("Cavitation erosion, noise and the change of the loads once cavitation develops are not "
     "assessed."),
)


def _positive(value, what: str, allow_zero: bool = False) -> np.ndarray:
    arr = np.asarray(value, float)
    if not np.all(np.isfinite(arr)):
        raise InputError(f"{what} must be a finite number")
    bad = arr < 0.0 if allow_zero else arr <= 0.0
    if np.any(bad):
        worst = float(np.min(arr))
        need = "zero or positive" if allow_zero else "positive"
        raise InputError(f"{what} {worst:g}: must be {need}")
    return arr


def _head(depth, density, vapour_pressure, atmospheric_pressure, gravity):
    """Pressure margin above vapour ``p_atm + rho g h - p_v`` (Pa), after checking the inputs."""
    h = _positive(depth, "depth (m below the free surface)", allow_zero=True)
    rho = _positive(density, "density (kg/m^3)")
    pv = _positive(vapour_pressure, "vapour pressure (Pa)", allow_zero=True)
    pa = _positive(atmospheric_pressure, "atmospheric pressure (Pa)", allow_zero=True)
    g = _positive(gravity, "acceleration of gravity (m/s^2)")
    head = pa + rho * g * h - pv
    if np.any(head <= 0.0):
        raise InputError(
            "the pressure at that depth (atmospheric + hydrostatic) does not exceed the vapour "
            "pressure: the liquid would boil there; check the vapour pressure and depth")
    return head, rho


def cavitation_number(speed, depth, density, vapour_pressure,
                      atmospheric_pressure=STANDARD_ATMOSPHERE, gravity=STANDARD_GRAVITY):
    """Cavitation number ``sigma = (p_atm + rho g h - p_v) / (rho V^2 / 2)``.

    Parameters
    ----------
    speed : array_like
        Speed through the water, m/s (positive).
    depth : array_like
        Depth below the free surface, m (zero or positive).
    density : array_like
        Liquid density, kg/m^3.
    vapour_pressure : array_like
        Vapour pressure of the liquid at its temperature, Pa.
    atmospheric_pressure : array_like
        Pressure on the free surface, Pa (default the standard atmosphere, 101 325 Pa).
    gravity : float
        Acceleration of gravity, m/s^2 (default standard gravity).

    Returns
    -------
    ndarray
        Broadcast over all array arguments.

    Raises
    ------
    InputError
        Negative depth, non-positive speed or density, negative pressures, or a pressure at depth
        not above the vapour pressure.
    """
    head, rho = _head(depth, density, vapour_pressure, atmospheric_pressure, gravity)
    v = _positive(speed, "speed (m/s)")
    return head / (0.5 * rho * v * v)


def inception_speed(cp_min, depth, density, vapour_pressure,
                    atmospheric_pressure=STANDARD_ATMOSPHERE, gravity=STANDARD_GRAVITY):
    """Speed at which ``-Cp_min`` reaches the cavitation number: ``sqrt(2 head / (rho (-Cp_min)))``.

    Parameters
    ----------
    cp_min : array_like
        Minimum pressure coefficient(s) of the section.
    depth, density, vapour_pressure, atmospheric_pressure, gravity
        As for :func:`cavitation_number`.

    Returns
    -------
    ndarray
        Inception speed in m/s, broadcast over the arguments; ``inf`` where ``Cp_min >= 0`` (no
        point of the surface is below the freestream pressure).
    """
    head, rho = _head(depth, density, vapour_pressure, atmospheric_pressure, gravity)
    cp = np.asarray(cp_min, float)
    if np.any(np.isnan(cp)):
        raise InputError("minimum Cp must be a number (got NaN)")
    suction = np.maximum(-cp, 0.0)
    with np.errstate(divide="ignore"):
        return np.sqrt(2.0 * head / (rho * suction))


@dataclass(frozen=True)
class CavitationResult:
    """Inviscid cavitation-inception estimate of a solved section at several angles.

    Attributes
    ----------
    alpha_deg : (n_alpha,) angles of attack, degrees.
    body_names : tuple of str
    depth, density, vapour_pressure, atmospheric_pressure : float
        Conditions (m, kg/m^3, Pa, Pa).
    speed : float
        Speed through the water, m/s; NaN when not given.
    sigma : float
        Cavitation number at ``speed``; NaN when no speed is given.
    cp_min : (n_alpha, n_bodies) minimum Cp of each body (the "bucket" against angle).
    section_cp_min : (n_alpha,) lowest of the bodies.
    inception_speed : (n_alpha, n_bodies) speed at which each body starts to cavitate, m/s
        (``inf`` without suction).
    section_inception_speed : (n_alpha,) lowest of the bodies.
    margin : (n_alpha,) ``sigma + section_cp_min``: positive while free of cavitation by this
        estimate, zero or negative at and beyond inception; NaN when no speed is given.
    cavitating : (n_alpha,) bool, True where ``-section_cp_min >= sigma``; all False when no
        speed is given (there is nothing to compare; read ``section_inception_speed``).
    cautions : tuple of str
    cp_min_error_estimate : (n_alpha, n_bodies) error estimate of each body's lowest Cp (NaN
        when the result carries none).
    section_inception_speed_low, section_inception_speed_high : (n_alpha,) the range of the
        inception speed over ``cp_min -/+ cp_min_error_estimate`` (lowest of the bodies at each
        end; NaN without an estimate, ``inf`` where the peak may not be below zero at all).
    notes : tuple of str
        Angles whose suction peak is known no better than ``PEAK_NOTE_SHARE`` of itself (the
        inception speed as a range), and angles at which cavitation is possible within the
        estimate though not expected at the peak as computed.
    """

    alpha_deg: np.ndarray
    body_names: tuple
    depth: float
    density: float
    vapour_pressure: float
    atmospheric_pressure: float
    speed: float
    sigma: float
    cp_min: np.ndarray = field(repr=False)
    section_cp_min: np.ndarray
    inception_speed: np.ndarray = field(repr=False)
    section_inception_speed: np.ndarray
    margin: np.ndarray = field(repr=False)
    cavitating: np.ndarray
    cautions: tuple = field(default=CAUTIONS, repr=False)
    cp_min_error_estimate: np.ndarray | None = field(default=None, repr=False)
    section_inception_speed_low: np.ndarray | None = field(default=None, repr=False)
    section_inception_speed_high: np.ndarray | None = field(default=None, repr=False)
    notes: tuple = ()

    def __post_init__(self):
        nan = np.full(np.shape(self.cp_min), np.nan)
        for name, value in (("cp_min_error_estimate", nan),
                            ("section_inception_speed_low", nan[:, 0] if nan.ndim == 2 else nan),
                            ("section_inception_speed_high", nan[:, 0] if nan.ndim == 2 else nan)):
            if getattr(self, name) is None:
                object.__setattr__(self, name, value.copy())
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)


def _cp_min_of(result):
    """(alpha_deg, cp_min (n_alpha, n_bodies), names) of an Analysis, SurfaceSolution or similar."""
    fine = getattr(result, "fine", result)
    cp = np.asarray(fine.cp_min, float)
    alpha = np.asarray(fine.alpha_deg, float)
    if cp.ndim == 1:
        cp = cp[:, None]
    names = getattr(getattr(fine, "panels", None), "names", None)
    if names is None:
        names = getattr(result, "body_names", tuple(f"body-{k + 1}" for k in range(cp.shape[1])))
    return alpha, cp, tuple(names)


def assess(result, depth, density, vapour_pressure, speed=None,
           atmospheric_pressure=STANDARD_ATMOSPHERE, gravity=STANDARD_GRAVITY) -> CavitationResult:
    """Cavitation-inception estimate of a solved section.

    Parameters
    ----------
    result : Analysis, SurfaceSolution or an image-boundary result
        Anything with ``alpha_deg`` and ``cp_min`` of shape (n_alpha, n_bodies) (directly or on
        its ``fine`` solution).
    depth : float
        Depth of the section below the free surface, m.
    density : float
        Liquid density, kg/m^3.
    vapour_pressure : float
        Vapour pressure at the water temperature, Pa.
    speed : float, optional
        Speed through the water, m/s; with it the cavitation number and the margin are given.
    atmospheric_pressure : float
        Pa, default 101 325.
    gravity : float
        m/s^2, default standard gravity.

    Returns
    -------
    CavitationResult
    """
    alpha, cp, names = _cp_min_of(result)
    args = (depth, density, vapour_pressure, atmospheric_pressure, gravity)
    for name, value in zip(("depth", "density", "vapour pressure", "atmospheric pressure",
                            "gravity"), args):
        if np.ndim(value) != 0:
            raise InputError(f"{name} must be a single number here")
    v_i = inception_speed(cp, *args)
    section_cp = cp.min(axis=1)
    err = getattr(result, "cp_min_error_estimate", None)
    err = np.full(cp.shape, np.nan) if err is None else np.asarray(err, float).reshape(cp.shape)
    known = np.all(np.isfinite(err), axis=1)
    with np.errstate(invalid="ignore"):
        low = inception_speed(np.where(np.isfinite(err), cp - err, cp), *args).min(axis=1)
        high = inception_speed(np.where(np.isfinite(err), cp + err, cp), *args).min(axis=1)
    low, high = np.where(known, low, np.nan), np.where(known, high, np.nan)
    if speed is None:
        v, sigma = float("nan"), float("nan")
        margin = np.full(len(alpha), np.nan)
        cavitating = np.zeros(len(alpha), bool)
    else:
        v = float(speed)
        sigma = float(cavitation_number(v, *args))
        margin = sigma + section_cp
        cavitating = -section_cp >= sigma
    notes = _range_notes(alpha, names, cp, err, v_i.min(axis=1), low, high, sigma, cavitating)
    return CavitationResult(
        alpha_deg=alpha, body_names=names, depth=float(depth), density=float(density),
        vapour_pressure=float(vapour_pressure), atmospheric_pressure=float(atmospheric_pressure),
        speed=v, sigma=sigma, cp_min=cp.copy(), section_cp_min=section_cp, inception_speed=v_i,
        section_inception_speed=v_i.min(axis=1), margin=margin, cavitating=cavitating,
        cp_min_error_estimate=err, section_inception_speed_low=low,
        section_inception_speed_high=high, notes=tuple(notes))


def _range_notes(alpha, names, cp, err, v_i, low, high, sigma, cavitating) -> list[str]:
    """Sentences on inception speeds that rest on an uncertain suction peak."""
    out = []
    k = np.argmin(cp, axis=1)
    rows = np.arange(len(alpha))
    peak, e = cp[rows, k], err[rows, k]
    with np.errstate(invalid="ignore", divide="ignore"):
        share = e / np.abs(peak)
    for i in np.flatnonzero(~(share <= PEAK_NOTE_SHARE)):
        if not np.isfinite(e[i]):
            out.append(f"alpha {alpha[i]:g}: the inception speed {v_i[i]:.3g} m/s rests on a "
                       f"suction peak of {names[k[i]]} (Cp {peak[i]:.3g}) without an error "
                       "estimate: treat it as unchecked")
            continue
        out.append(f"alpha {alpha[i]:g}: the suction peak of {names[k[i]]}, Cp {peak[i]:.3g} "
                   f"+/- {e[i]:.2g}, is known only to {100 * share[i]:.0f} %: the inception speed "
                   + (f"lies between {low[i]:.3g} and {high[i]:.3g} m/s" if np.isfinite(high[i])
                      else f"is {low[i]:.3g} m/s or more")
                   + f" (computed {v_i[i]:.3g}); use the lower")
    if np.isfinite(sigma):
        with np.errstate(invalid="ignore"):
            maybe = ~cavitating & (-(cp - np.nan_to_num(err)).min(axis=1) >= sigma)
        for i in np.flatnonzero(maybe):
            out.append(f"alpha {alpha[i]:g}: cavitation possible within the suction peak's error "
                       f"estimate (inception from {low[i]:.3g} m/s)")
    return out


def assess_in(result, depth, fluid, speed=None, gravity=STANDARD_GRAVITY) -> CavitationResult:
    """:func:`assess` with density, vapour and ambient pressure taken from a fluid preset.

    Parameters
    ----------
    result : Analysis, SurfaceSolution or an image-boundary result
    depth : float
        Depth below the free surface, m.
    fluid : str, panelflow.conditions.fluids.Fluid or panelflow.conditions.fluids.Conditions
        A preset name (``"sea-water"``, ``"fresh-water"``), a fluid, or load conditions (whose
        speed is used when ``speed`` is not given).
    speed : float, optional
        Speed through the water, m/s.

    Raises
    ------
    InputError
        For a fluid without a vapour pressure (air, a fluid known only by its density).
    """
    from panelflow.conditions import fluids

    if isinstance(fluid, fluids.Conditions):
        speed = fluid.speed if speed is None else speed
        fluid = fluid.fluid
    elif not isinstance(fluid, fluids.Fluid):
        fluid = fluids.get_fluid(fluid)
    if fluid.vapour_pressure is None:
        raise InputError(f"fluid {fluid.name!r} has no vapour pressure: cavitation needs a "
                         "liquid preset (sea-water, fresh-water) or the vapour pressure given")
    ambient = STANDARD_ATMOSPHERE if fluid.ambient_pressure is None else fluid.ambient_pressure
    return assess(result, depth, fluid.density, fluid.vapour_pressure, speed=speed,
                  atmospheric_pressure=ambient, gravity=gravity)
