"""Design figures: start and result overlaid, Cp at the design point and the polars.

Both are drawn with the shared look and layout of :mod:`panelflow.output.figures` (its Cp and
polar figure builders, palette, fonts and atomic saving), so a design figure reads like every
other panelflow figure: the start in the first colour, the result in the second, a target Cp
(inverse design) in ink, and the cavitation onset level ``-sigma`` across the Cp axes where the
job has a speed. matplotlib is imported inside the functions only.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from panelflow.errors import InputError

__all__ = ["design_cp_figure", "design_polar_figure"]


def design_cp_figure(checks, labels, path, *, target=None, sigma=None, title=None,
                     overwrite: bool = False) -> Path:
    """Surface Cp of the start and the result at their design points, overlaid.

    Parameters
    ----------
    checks : sequence of Check
        :mod:`panelflow.design.check` results (each holds its analysis at the design point).
    labels : sequence of str
    path : str or Path
        ``.png``, ``.svg`` or ``.pdf``.
    target : CpTarget, optional
        Drawn in ink (inverse design).
    sigma : float, optional
        Cavitation number (allowed suction): a level at ``-sigma``.
    title : str, optional

    Returns
    -------
    Path
    """
    from panelflow.output import figures as F

    F.check_figure_path(path, overwrite)
    checks = list(checks)
    if len(labels) != len(checks):
        raise InputError(f"{len(labels)} labels for {len(checks)} sections")
    traces, shapes, legend, card = [], [], [], []
    for j, (chk, lab) in enumerate(zip(checks, labels)):
        res = chk.result
        if res is None:
            raise InputError(f"{lab}: no analysis at the design point to draw")
        colour = F.PALETTE[j % len(F.PALETTE)]
        r = res[0]
        line = res.fine.chord_line
        traces.append(F._trace(line, r.bodies[0], lab, colour))
        shapes += F._shapes(res, [colour], None)
        legend.append((lab, colour))
        if card:
            card.append(("gap",))
        card += [("head", text, colour) for text in F._wrap_card(lab)]
        card.append(("row", "angle of attack", F._angle(r.alpha_deg)))
        card.append(("row", "panels", F._panels(res)))
        card.append(("row", "Cl", F._pm(r.cl, r.cl_error_estimate)))
        card.append(("row", "Cm", F._pm(r.cm, r.cm_error_estimate)))
        main = r.bodies[0]
        card.append(("row", "Cp min", f"{F._fixed(main.cp_min, 3)} at x/c "
                                       f"{F._fixed(main.x_cp_min, 3)}"))
    if target is not None:
        empty = np.zeros(0)
        traces.append(F._Trace("target", F.INK,
                               np.asarray(target.upper_x), np.asarray(target.upper_cp),
                               np.asarray(target.lower_x) if len(target.lower_x) else empty,
                               np.asarray(target.lower_cp) if len(target.lower_x) else empty))
        legend.append(("target", F.INK))
    levels = []
    if sigma is not None and np.isfinite(sigma):
        levels.append((-float(sigma), f"cavitation onset, Cp = \u2212{sigma:.3g}"))
    if title is None:
        title = "Surface pressure at the design point, start and result"
    fig = F._cp_figure(traces, shapes, card, title, legend_labels=legend, levels=levels)
    return F._save(fig, path, overwrite)


def design_polar_figure(outlines, labels, path, *, panels: int, alpha_deg=None, sigma=None,
                        design_cl=None, title=None, overwrite: bool = False) -> Path:
    """Cl, Cm and the minimum Cp against the angle of attack of the start and the result.

    Each section is analysed afresh (:func:`panelflow.analysis.solve.solve`) at ``panels``
    panels over ``alpha_deg`` (default -6 to 8 degrees in 0.1-degree steps). The cavitation
    onset ``-sigma`` is drawn across the minimum-Cp axes (the bucket below it is free of
    cavitation) and the design lift across the lift axes.
    """
    from panelflow.analysis.problem import OperatingPoint, Problem
    from panelflow.analysis.solve import solve
    from panelflow.output import figures as F

    F.check_figure_path(path, overwrite)
    alpha = np.arange(-6.0, 8.001, 0.1) if alpha_deg is None else np.asarray(alpha_deg, float)
    results = [solve(Problem([o], OperatingPoint(alpha_deg=tuple(alpha)), panels=panels))
               for o in outlines]
    if title is None:
        title = "Lift, pitching moment and suction peak, start and result"
    fig = F._build_polar_figure(results, list(labels), title)
    ax_cl, _, ax_cp = fig.axes[:3]
    if sigma is not None and np.isfinite(sigma):
        ax_cp.axhline(-float(sigma), color=F.MUTED, linewidth=0.9, linestyle=(0, (5, 3)),
                      zorder=2)
        ax_cp.annotate(f"cavitation onset, Cp = \u2212{sigma:.3g}", xy=(1.0, -float(sigma)),
                       xycoords=("axes fraction", "data"), xytext=(-3, 3),
                       textcoords="offset points", ha="right", va="bottom",
                       fontsize=F.FONT["legend"], color=F.MUTED)
        # the bucket is what matters here: suction up to three times the onset level
        ax_cp.set_ylim(0.5, -3.0 * float(sigma))
    if design_cl is not None:
        ax_cl.axhline(float(design_cl), color=F.MUTED, linewidth=0.9, linestyle=(0, (2, 2)),
                      zorder=2)
        ax_cl.annotate(f"design lift {design_cl:g}", xy=(0.0, float(design_cl)),
                       xycoords=("axes fraction", "data"), xytext=(3, 3),
                       textcoords="offset points", ha="left", va="bottom",
                       fontsize=F.FONT["legend"], color=F.MUTED)
    return F._save(fig, path, overwrite)
