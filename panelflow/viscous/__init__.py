"""Viscous analysis: the boundary layer and wake of a section, coupled to the panel solution.

Stage of the data flow between ``flow`` (the inviscid panel solution) and ``conditions``; it
imports geometry and flow only.

Modules, one concept each:

* ``closures``   -- laminar closures fitted to Falkner-Skan profiles; Green's lag-entrainment
                    relations (turbulent boundary layer and wake)
* ``transition`` -- amplification-factor (e^N) envelope, critical factor (user or Mack 1977),
                    forced trips
* ``march``      -- the integral equations marched on given edge speeds
"""
