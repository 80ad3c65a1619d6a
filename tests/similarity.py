"""Boundary-layer reference solutions for the viscous checks, written independently of panelflow.

Nothing here imports panelflow. The similarity solutions are computed here with
scipy.integrate.solve_bvp; the correlations are quoted with their sources.

Sources
-------
* Falkner-Skan equation f''' + f f'' + beta (1 - f'^2) = 0, f(0) = f'(0) = 0, f'(inf) = 1, with
  the similarity variable eta = y sqrt((m + 1) U / (2 nu x)), U = C x^m, beta = 2m/(m + 1)
  (Schlichting, *Boundary-Layer Theory*, ch. on similar solutions; White, *Viscous Fluid Flow*,
  sec. 4-3; from memory). beta = 0 is Blasius' flat plate, beta = 1 Hiemenz' plane stagnation
  flow.
* Blasius flat plate: shape factor 2.59, Cf = 0.664/sqrt(Re_x) (Schlichting, from memory; the
  solution computed here reproduces both).
* Turbulent flat plate, total skin friction C_F = 0.455/(log10 Re_L)^2.58 (Prandtl-Schlichting
  formula; Schlichting, *Boundary-Layer Theory*, from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.integrate import solve_bvp, trapezoid


@dataclass(frozen=True)
class SimilarProfile:
    """Integral thicknesses of one Falkner-Skan profile in units of the similarity length
    sqrt(2 nu x / ((m + 1) U)), and the wall shear f''(0)."""

    beta: float
    wall_shear: float
    displacement: float
    momentum: float

    @property
    def m(self) -> float:
        """Exponent of the edge speed U = C x^m."""
        return self.beta / (2.0 - self.beta)

    @property
    def shape_factor(self) -> float:
        return self.displacement / self.momentum

    def thicknesses(self, x, u, nu):
        """Physical (delta*, theta) at x for edge speed u and kinematic viscosity nu."""
        scale = np.sqrt(2.0 * nu * x / ((self.m + 1.0) * u))
        return self.displacement * scale, self.momentum * scale


def falkner_skan(beta: float, length: float = 12.0) -> SimilarProfile:
    """Attached Falkner-Skan profile for pressure-gradient parameter ``beta`` (solve_bvp)."""
    eta = np.linspace(0.0, length, 300)
    guess = np.vstack([eta - 1.0 + np.exp(-eta), 1.0 - np.exp(-eta), np.exp(-eta)])

    def rhs(_x, f):
        return np.vstack([f[1], f[2], -f[0] * f[2] - beta * (1.0 - f[1] ** 2)])

    def bc(a, b):
        return np.array([a[0], a[1], b[1] - 1.0])

    sol = solve_bvp(rhs, bc, eta, guess, tol=1e-9, max_nodes=100_000)
    if not sol.success:
        raise RuntimeError(f"Falkner-Skan beta = {beta}: {sol.message}")
    e = np.linspace(0.0, length, 40_001)
    _, fp, _ = sol.sol(e)
    return SimilarProfile(beta, float(sol.sol(0.0)[2]), float(trapezoid(1.0 - fp, e)),
                          float(trapezoid(fp * (1.0 - fp), e)))


def turbulent_flat_plate_friction(reynolds_length: float) -> float:
    """Total skin-friction coefficient of a turbulent flat plate, 0.455/(log10 Re_L)^2.58."""
    return 0.455 / np.log10(reynolds_length) ** 2.58
