"""Viscous results: the boundary layer along each surface and the wake, and the coefficients.

Drag comes from the wake's momentum thickness at its end, carried to infinity by the
Squire-Young formula (H. B. Squire & A. D. Young, ARC R&M 1838, 1938):
``cd = 2 theta Ue^((H + 5)/2) / c``; the same formula applied to each surface's trailing-edge
state is the cross-check ``cd_squire_young``. Friction drag integrates the wall shear along both
surfaces; pressure drag is the rest. Lift is the circulation lift of the viscous surface speeds
(Kutta-Joukowski; the displacement sources add no lift), the moment integrates the viscous Cp.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

# limits stated with every result (the lead's outputs print them)
LIMITS = (
    "Integral boundary-layer model coupled to the panel solution: attached flow, laminar "
    "separation bubbles and moderate trailing-edge separation. Beyond maximum lift (massive "
    "separation) and with compressibility beyond the corrections of the inviscid analysis the "
    "results are not valid. Maximum lift is over-predicted (NACA 0012 at a Reynolds number of "
    "3 million: 1.93 near 22 degrees against about 1.6 near 16 degrees published), so treat "
    "results past the first trailing-edge separation as qualitative. Near a Reynolds number of "
    "1e5, "
    "where a laminar layer runs separated to the trailing edge, many angles do not converge. "
    "Unconverged angles carry no coefficients, and "
    "a polar marks every angle past its first failure. Loads derived from these results "
    "need the usual safety factors and checking under the applicable design codes and licensed "
    "engineering practice.")


@dataclass(frozen=True)
class SurfaceLayer:
    """The boundary layer along one surface (from the stagnation point to the trailing edge) or
    the wake (from the trailing edge downstream), at its stations.

    Attributes
    ----------
    name : str
        ``"upper"``, ``"lower"`` or ``"wake"``.
    x, y : ndarray
        Station coordinates in the input frame.
    x_over_chord : ndarray
        Chordwise position x/c (the wake continues past 1).
    arc_length : ndarray
        Distance along the surface from the stagnation point (wake: from the trailing edge).
    edge_speed : ndarray
        Speed at the edge of the layer over the freestream speed.
    pressure_coefficient : ndarray
        Viscous Cp = 1 - edge_speed^2.
    displacement_thickness, momentum_thickness : ndarray
        delta* and theta (wake: of the whole wake), in the input's length unit.
    shape_factor : ndarray
        H = delta*/theta.
    skin_friction : ndarray
        Wall shear stress over the freestream dynamic pressure (0 in the wake; negative where
        the flow is reversed).
    amplification_factor : ndarray
        N of the e^N method where laminar (NaN where turbulent).
    entrainment_coefficient : ndarray
        C_E of the lag-entrainment method where turbulent (NaN where laminar).
    turbulent : ndarray of bool
    """

    name: str
    x: np.ndarray = field(repr=False)
    y: np.ndarray = field(repr=False)
    x_over_chord: np.ndarray = field(repr=False)
    arc_length: np.ndarray = field(repr=False)
    edge_speed: np.ndarray = field(repr=False)
    pressure_coefficient: np.ndarray = field(repr=False)
    displacement_thickness: np.ndarray = field(repr=False)
    momentum_thickness: np.ndarray = field(repr=False)
    shape_factor: np.ndarray = field(repr=False)
    skin_friction: np.ndarray = field(repr=False)
    amplification_factor: np.ndarray = field(repr=False)
    entrainment_coefficient: np.ndarray = field(repr=False)
    turbulent: np.ndarray = field(repr=False)

    def __post_init__(self):
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)

    def __len__(self) -> int:
        return len(self.x)


@dataclass(frozen=True)
class ViscousResult:
    """One angle of attack of the viscous analysis.

    Coefficients use the reference chord, the moment is about the reference point, positive
    nose-up. An angle whose iteration did not converge has ``converged`` False and NaN in every
    coefficient and position (the last iterate's values are kept in ``last_iterate`` for
    diagnosis only); its surface layers are those of the last iterate.

    Attributes
    ----------
    alpha_deg, reynolds : float
    cl, cm : float
        Viscous lift (circulation) and pitching moment (viscous Cp integrated).
    cd, cd_friction, cd_pressure : float
        Drag from the wake far downstream, its skin-friction part and the rest.
    cd_squire_young : float
        Squire-Young formula on the trailing-edge states (a cross-check of ``cd``).
    lift_to_drag : float
    transition_upper, transition_lower : float
        x/c of transition on each surface (NaN: laminar to the trailing edge, where the wake
        then turns turbulent); ``transition_upper_forced`` / ``_lower_forced`` tell a trip.
    separation_upper, reattachment_upper, separation_lower, reattachment_lower : float
        x/c where the skin friction first turns negative and where it turns positive again
        after that (NaN: none; a separation without reattachment reaches the trailing edge).
    converged : bool
    residual : float
        Largest residual of the coupled equations at the last iteration.
    iterations : int
    upper, lower, wake : SurfaceLayer
    inviscid_cl, inviscid_cm : float
        The inviscid solution at the same angle, panels and reference.
    """

    alpha_deg: float
    reynolds: float
    cl: float
    cm: float
    cd: float
    cd_friction: float
    cd_pressure: float
    cd_squire_young: float
    lift_to_drag: float
    transition_upper: float
    transition_lower: float
    transition_upper_forced: bool
    transition_lower_forced: bool
    separation_upper: float
    reattachment_upper: float
    separation_lower: float
    reattachment_lower: float
    converged: bool
    residual: float
    iterations: int
    inviscid_cl: float
    inviscid_cm: float
    upper: SurfaceLayer = field(repr=False)
    lower: SurfaceLayer = field(repr=False)
    wake: SurfaceLayer = field(repr=False)
    last_iterate: dict = field(repr=False, default_factory=dict)
    state: object = field(repr=False, default=None, compare=False)

    def __repr__(self) -> str:
        if not self.converged:
            return (f"ViscousResult(alpha={self.alpha_deg:g} deg, Re={self.reynolds:.3g}, "
                    f"NOT CONVERGED, residual {self.residual:.1e})")
        return (f"ViscousResult(alpha={self.alpha_deg:g} deg, Re={self.reynolds:.3g}, "
                f"cl={self.cl:.4f}, cd={self.cd:.5f}, cm={self.cm:.4f}, "
                f"transition x/c {self.transition_upper:.3f} upper, "
                f"{self.transition_lower:.3f} lower)")


def crossings(x: np.ndarray, cf: np.ndarray) -> tuple[float, float]:
    """x where ``cf`` first goes from >= 0 to < 0, and where it next returns to >= 0 (NaN)."""
    neg = cf < 0
    sep = reat = np.nan
    idx = np.flatnonzero(~neg[:-1] & neg[1:])
    if len(idx):
        i = idx[0]
        sep = float(x[i] + cf[i] / (cf[i] - cf[i + 1]) * (x[i + 1] - x[i]))
        back = np.flatnonzero(neg[i + 1:-1] & ~neg[i + 2:])
        if len(back):
            j = i + 1 + back[0]
            reat = float(x[j] + cf[j] / (cf[j] - cf[j + 1]) * (x[j + 1] - x[j]))
    return sep, reat


def squire_young(theta: float, ue: float, h: float) -> float:
    """Drag (times chord) of a layer or wake state carried to infinity: 2 theta Ue^((H+5)/2)."""
    return 2.0 * theta * max(ue, 0.0) ** (0.5 * (h + 5.0))
