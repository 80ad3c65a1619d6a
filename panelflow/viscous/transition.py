"""Transition: the amplification-factor (e^N) envelope method, its critical value, forced trips.

The envelope of the Tollmien-Schlichting amplification rates of the Falkner-Skan profiles is
approximated as a function of the shape factor and the momentum-thickness Reynolds number
(M. Drela & M. B. Giles, "Viscous-inviscid analysis of transonic and low Reynolds number
airfoils", AIAA Journal 25(10), 1987, eqs. for dN/dRe_theta, Re_theta0, m(H) and l(H); constants
from memory):

    dN/dRe_theta = 0.01 sqrt((2.4 H - 3.7 + 2.5 tanh(1.5 H - 4.65))^2 + 0.25)
    log10 Re_theta0 = (1.415/(H-1) - 0.489) tanh(20/(H-1) - 12.9) + 3.295/(H-1) + 0.44
    dN/ds = dN/dRe_theta (m + 1)/2 l / theta,   zero below Re_theta0

with l(H) = (6.54 H - 14.07)/H^2 and m(H) = (0.058 (H-4)^2/(H-1) - 0.068)/l(H). The onset is
blended over a small range of Re_theta (a smooth ramp instead of a step) so that the coupled
iteration sees a continuous rate.

The boundary layer turns turbulent where N reaches the critical amplification factor, 9 for a
smooth model in a quiet stream (common practice), or the value Mack's correlation gives for a
free-stream turbulence level Tu (L. M. Mack, "Transition and laminar instability", JPL
Publication 77-15, 1977): N_crit = -8.43 - 2.4 ln(Tu), Tu as a fraction (from memory).
"""

from __future__ import annotations

import math

import numpy as np
from dataclasses import dataclass

from panelflow.errors import InputError

# half-width of the onset ramp in log10(Re_theta); a step makes the coupled iteration chatter
ONSET_RAMP = 0.08


def critical_factor_from_turbulence(turbulence_level: float) -> float:
    """Mack's critical amplification factor for a free-stream turbulence level (a fraction).

    Raises
    ------
    InputError
        For levels outside 0.0001-0.03 (0.01 %-3 %), where the correlation has no support.
    """
    tu = float(turbulence_level)
    if not 1e-4 <= tu <= 0.03:
        raise InputError(f"free-stream turbulence level {tu:g} is outside 0.0001-0.03 "
                         "(0.01 % to 3 %), the range of Mack's correlation")
    return -8.43 - 2.4 * math.log(tu)


def amplification_rate(h: float, re_theta: float, theta: float) -> float:
    """dN/ds of the envelope method at one station (zero below the critical Re_theta)."""
    if h < 1.05:
        h = 1.05
    hm1 = h - 1.0
    log_crit = ((1.415 / hm1 - 0.489) * math.tanh(20.0 / hm1 - 12.9) + 3.295 / hm1 + 0.44)
    if re_theta <= 0.0:
        return 0.0
    excess = (math.log10(re_theta) - log_crit) / ONSET_RAMP
    if excess <= -1.0:
        return 0.0
    ramp = 1.0 if excess >= 1.0 else 0.5 + 0.75 * excess - 0.25 * excess ** 3
    slope = 0.01 * math.sqrt((2.4 * h - 3.7 + 2.5 * math.tanh(1.5 * h - 4.65)) ** 2 + 0.25)
    ell = (6.54 * h - 14.07) / (h * h)
    m = (0.058 * (h - 4.0) ** 2 / hm1 - 0.068) / ell
    return ramp * slope * 0.5 * (m + 1.0) * ell / theta


@dataclass(frozen=True)
class Transition:
    """How the boundary layer turns turbulent.

    Attributes
    ----------
    critical_amplification : float
        N at which free transition happens (9: a smooth model in a quiet stream).
    upper_trip, lower_trip : float or None
        Forced transition (a trip strip) at this x/c on the upper or lower surface; the layer is
        turbulent from there on, or earlier if free transition comes first.
    """

    critical_amplification: float = 9.0
    upper_trip: float | None = None
    lower_trip: float | None = None

    def __post_init__(self):
        n = float(self.critical_amplification)
        if not 0.5 <= n <= 20.0:
            raise InputError(f"critical amplification factor {n:g} is outside 0.5-20")
        for name in ("upper_trip", "lower_trip"):
            v = getattr(self, name)
            if v is not None and not 0.0 <= float(v) <= 1.0:
                raise InputError(f"{name.replace('_', ' ')} at x/c = {float(v):g} is not on "
                                 "the chord (0 to 1)")

    @classmethod
    def from_turbulence_level(cls, turbulence_level: float, upper_trip=None, lower_trip=None):
        """Settings with the critical factor from a free-stream turbulence level (Mack 1977)."""
        return cls(critical_factor_from_turbulence(turbulence_level), upper_trip, lower_trip)


def amplification_rate_array(h, re_theta, theta):
    """:func:`amplification_rate` on arrays."""
    h = np.maximum(np.asarray(h, float), 1.05)
    hm1 = h - 1.0
    log_crit = (1.415 / hm1 - 0.489) * np.tanh(20.0 / hm1 - 12.9) + 3.295 / hm1 + 0.44
    excess = np.clip((np.log10(np.maximum(re_theta, 1e-30)) - log_crit) / ONSET_RAMP, -1.0, 1.0)
    ramp = 0.5 + 0.75 * excess - 0.25 * excess ** 3
    slope = 0.01 * np.sqrt((2.4 * h - 3.7 + 2.5 * np.tanh(1.5 * h - 4.65)) ** 2 + 0.25)
    ell = (6.54 * h - 14.07) / (h * h)
    m = (0.058 * (h - 4.0) ** 2 / hm1 - 0.068) / ell
    return ramp * slope * 0.5 * (m + 1.0) * ell / theta
