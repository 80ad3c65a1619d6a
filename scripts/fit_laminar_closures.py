"""Fit the laminar closure relations of panelflow.viscous.closures to Falkner-Skan profiles.

The laminar integral method needs three functions of the shape factor H = delta*/theta: the
kinetic-energy shape factor H* = theta*/theta, the skin friction Re_theta Cf/2 and the dissipation
Re_theta CD. For the Falkner-Skan family of similar profiles,

    f''' + f f'' + beta (1 - f'^2) = 0,   f(0) = f'(0) = 0,   f'(inf) = 1,

they follow exactly from the profile: with eta the similarity variable, theta_eta = int f'(1-f'),
delta*_eta = int (1-f'), theta*_eta = int f'(1-f'^2), Re_theta Cf/2 = theta_eta f''(0) and
Re_theta CD = theta_eta int f''^2 (the length scale cancels). The family is traced with
scipy.integrate.solve_bvp by continuation in the wall shear f''(0), with beta as the unknown
parameter, so the march passes the separation profile (beta = -0.1988, f''(0) = 0) and continues
on the reverse-flow branch (f''(0) < 0) up to H of about 8.5. Each function is then fitted by a
degree-8 polynomial in ln(H - 1).

Run ``python scripts/fit_laminar_closures.py`` to print the coefficients and the fit errors
(about 20 s). The coefficients in panelflow/viscous/closures.py were produced by this script.
"""

from __future__ import annotations

import numpy as np
from scipy.integrate import solve_bvp, trapezoid

DEGREE = 8


def falkner_skan_family(wall_shear):
    """Profiles along the family, one row per wall shear f''(0).

    Returns an array with columns beta, f''(0), H, H*, Re_theta Cf/2, Re_theta CD.
    """
    eta = np.linspace(0.0, 10.0, 400)
    y = np.vstack([eta - 1.2 * (1.0 - np.exp(-eta)), 1.0 - np.exp(-eta), np.exp(-eta)])
    p = [0.5]
    rows = []
    for s in wall_shear:
        # reverse-flow profiles are thicker: lengthen the domain as the wall shear falls
        length = 10.0 if s > 0.1 else (10.0 + 150.0 * (0.1 - s) if s > 0 else 25.0 + 200.0 * -s)
        length = min(length, 60.0)
        if eta[-1] != length:
            new = np.linspace(0.0, length, 600)
            y = np.vstack([np.interp(new, eta, y[0]) + np.maximum(new - eta[-1], 0.0),
                           np.interp(new, eta, y[1]), np.interp(new, eta, y[2])])
            eta = new

        def fun(_x, f, par):
            return np.vstack([f[1], f[2], -f[0] * f[2] - par[0] * (1.0 - f[1] ** 2)])

        def bc(a, b, _par, s=s):
            return np.array([a[0], a[1], a[2] - s, b[1] - 1.0])

        sol = solve_bvp(fun, bc, eta, y, p=p, tol=1e-8, max_nodes=200_000)
        if not sol.success:
            raise RuntimeError(f"Falkner-Skan continuation failed at f''(0) = {s}: {sol.message}")
        eta, y, p = sol.x, sol.y, sol.p
        e = np.linspace(0.0, eta[-1], 20_001)
        _, fp, fpp = sol.sol(e)
        disp = trapezoid(1.0 - fp, e)
        mom = trapezoid(fp * (1.0 - fp), e)
        energy = trapezoid(fp * (1.0 - fp * fp), e)
        dissipation = trapezoid(fpp * fpp, e)
        rows.append((p[0], s, disp / mom, energy / mom, mom * s, mom * dissipation))
    return np.array(rows)


def fit():
    """Polynomial coefficients (highest power first) in ln(H - 1) and the data they fit."""
    accelerated = falkner_skan_family(np.linspace(3.5, 1.6, 30)[:-1])
    main = falkner_skan_family(np.concatenate([np.linspace(1.6, 0.05, 60),
                                               np.linspace(0.04, -0.1, 60),
                                               np.linspace(-0.101, -0.14, 30)]))
    data = np.vstack([accelerated, main])
    data = data[np.argsort(data[:, 2])]
    t = np.log(data[:, 2] - 1.0)
    coeffs = {name: np.polyfit(t, data[:, col], DEGREE)
              for name, col in (("energy_shape", 3), ("friction", 4), ("dissipation", 5))}
    return coeffs, data


if __name__ == "__main__":
    coeffs, data = fit()
    t = np.log(data[:, 2] - 1.0)
    print(f"H from {data[:, 2].min():.4f} to {data[:, 2].max():.4f}, {len(data)} profiles")
    for (name, c), col in zip(coeffs.items(), (3, 4, 5)):
        err = np.abs(np.polyval(c, t) - data[:, col]).max()
        print(f"{name.upper()} = ({', '.join(f'{v:.10e}' for v in c)})  # max error {err:.1e}")
