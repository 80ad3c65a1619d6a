"""Make the README's viscous example: drag polar and transition of the demo front foil.

The tender's front foil section (geometries/tender_front_foil.dat, invented demo data) at a
Reynolds number of one million: 0.15 m chord at 8 m/s in sea water at 15 °C and 35 g/kg
(kinematic viscosity from panelflow.conditions.viscosity). Importing computes nothing; run
``python scripts/make_viscous_figure.py`` to rewrite scripts/figures/front_foil_viscous.png
(about a minute).
"""

from __future__ import annotations

from pathlib import Path

HERE = Path(__file__).resolve().parent
GEOMETRY = HERE.parent / "geometries" / "tender_front_foil.dat"
OUT = HERE / "figures" / "front_foil_viscous.png"
CHORD_M, SPEED_M_S, WATER_C, SALINITY = 0.15, 8.0, 15.0, 35.0


def compute(angles=None):
    """The viscous polar of the demo front foil (ViscousPolar) and its Reynolds number."""
    import numpy as np

    import panelflow as pf
    from panelflow.analysis.inviscid import build
    from panelflow.conditions.viscosity import reynolds_number, water_kinematic_viscosity
    from panelflow.viscous import polar

    angles = np.arange(-4.0, 12.5, 1.0) if angles is None else angles
    reynolds = reynolds_number(SPEED_M_S, CHORD_M, water_kinematic_viscosity(WATER_C, SALINITY))
    _, system = build(pf.load_outlines(str(GEOMETRY)), 200)
    return polar(system, angles, reynolds), reynolds


def draw(sweep, reynolds, path: Path = OUT) -> Path:
    """Two panels: lift against drag with the angles written beside the points, and the
    transition positions on both surfaces against the angle. Unconverged angles are left out
    and listed in the title."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    import matplotlib.ticker
    import numpy as np

    ok = sweep.converged
    a = sweep.alpha_deg
    fig, (left, right) = plt.subplots(1, 2, figsize=(10, 4.6), constrained_layout=True)
    left.plot(sweep.cd[ok], sweep.cl[ok], "-o", color="tab:blue", ms=4)
    for ai, cd, cl in zip(a[ok], sweep.cd[ok], sweep.cl[ok]):
        if ai % 2 == 0:
            left.annotate(f"{ai:g}°", (cd, cl), textcoords="offset points", xytext=(6, -3),
                          fontsize=8, color="0.3")
    left.xaxis.set_major_locator(matplotlib.ticker.MaxNLocator(5))
    left.set_xlabel("drag coefficient cd")
    left.set_ylabel("lift coefficient cl")
    left.grid(alpha=0.3)
    left.set_title("Drag polar")
    up = sweep.column("transition_upper")
    lo = sweep.column("transition_lower")
    # no transition on a surface: laminar to the trailing edge, drawn at x/c 1 with open marks
    for x, mark, colour, side in ((up, "^", "tab:red", "upper"), (lo, "v", "tab:green", "lower")):
        laminar = ok & np.isnan(x)
        right.plot(a[ok], np.where(np.isnan(x), 1.0, x)[ok], "-" + mark, color=colour, ms=4,
                   label=f"{side} surface")
        if laminar.any():
            right.plot(a[laminar], np.ones(laminar.sum()), mark, ms=7, mfc="white",
                       color=colour, label=f"{side}: laminar to the trailing edge")
    right.set_xlabel("angle of attack (degrees)")
    right.set_ylabel("transition x/c")
    right.set_ylim(0.0, 1.05)
    right.grid(alpha=0.3)
    right.legend(loc="upper center", bbox_to_anchor=(0.5, -0.16), ncol=2, fontsize=8)
    right.set_title("Transition (critical amplification factor 9)")
    missing = ", ".join(f"{x:g}°" for x in a[~ok])
    fig.suptitle(f"Demo front foil, Reynolds number {reynolds:.2g}"
                 + (f" (not converged: {missing})" if missing else ""), fontsize=11)
    path.parent.mkdir(exist_ok=True)
    fig.savefig(path, dpi=110)
    plt.close(fig)
    del np
    return path


if __name__ == "__main__":
    sweep, re = compute()
    for r in sweep.results:
        print(r)
    print(f"wrote {draw(sweep, re)}")
