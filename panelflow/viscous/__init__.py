"""Viscous analysis: the boundary layer and wake of a section, coupled to the panel solution.

Stage of the data flow between ``flow`` (the inviscid panel solution) and ``conditions``; it
imports geometry and flow only.

Modules, one concept each:

* ``closures``   -- laminar closures fitted to Falkner-Skan profiles; Green's lag-entrainment
                    relations (turbulent boundary layer and wake)
* ``transition`` -- amplification-factor (e^N) envelope, critical factor (user or Mack 1977),
                    forced trips
* ``march``      -- the integral equations marched on given edge speeds
* ``wake``       -- the wake's path, the dividing streamline from the trailing edge
* ``displacement`` -- transpiration sources: mass defect to surface and wake speeds (linear)
* ``simultaneous`` -- Newton iteration of boundary layer, wake and outer flow together
* ``results``    -- ViscousResult, SurfaceLayer, drag formulas
* ``section``    -- ``solve`` (one angle) and ``polar`` (warm-started sweep)

Typical use::

    from panelflow.viscous import solve, polar, Transition
    result = solve(panels, 4.0, 3e6)               # ViscousResult
    sweep = polar(panels, range(-4, 13), 3e6, Transition(critical_amplification=7))
"""

from panelflow.viscous.results import LIMITS, SurfaceLayer, ViscousResult
from panelflow.viscous.section import ViscousPolar, check_supported, polar, solve
from panelflow.viscous.transition import Transition, critical_factor_from_turbulence

__all__ = ["LIMITS", "SurfaceLayer", "Transition", "ViscousPolar", "ViscousResult",
           "check_supported", "critical_factor_from_turbulence", "polar", "solve"]
