"""Figures of the viscous analysis: the boundary layer along the surface, and drag polars.

* :func:`boundary_layer_figure` -- at one angle: viscous and inviscid Cp overlaid (negative up)
  with the transition and separation points marked, the skin friction and the shape factor
  along each surface, the section beneath, all against x/c;
* :func:`drag_polar_figure` -- for one or several sections: lift against drag (the drag polar)
  and lift-to-drag ratio against the angle of attack; unconverged angles are left out of the
  lines and listed under the figure.

Both use the look of :mod:`panelflow.output.figures` (colours, fonts, the caution line) and
write through its atomic saver; matplotlib is imported only inside.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from panelflow.errors import InputError
from panelflow.output.figures import (FONT, INK, LINE, MUTED, PALETTE, RULE, SECTION_FILL,
                                      _chord_frame, _minus, _note_lines, _save, _style_axes,
                                      check_figure_path)

__all__ = ["boundary_layer_figure", "drag_polar_figure"]

VISCOUS_CAUTION = ("Integral boundary-layer estimate coupled to the panel solution: attached flow, "
                   "laminar bubbles and moderate trailing-edge separation only; no stall, no "
                   "cavitation. Check designs against test data and the applicable codes.")
_W = 9.0
_LEFT, _RIGHT = 0.95, 0.25


def _angle_index(result, alpha_deg) -> int:
    if alpha_deg is None:
        return 0
    return result.angle_index(float(alpha_deg))


def _layer_xy(result, layer):
    s, n = _chord_frame(result.fine.chord_line, np.asarray(layer.x), np.asarray(layer.y))
    return np.asarray(s), np.asarray(n)


def _build_boundary_layer_figure(result, alpha_deg=None, title=None):
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    v = getattr(result, "viscous", None)
    if v is None:
        raise InputError("the boundary-layer figure needs the viscous analysis (a Reynolds "
                         "number)")
    i = _angle_index(result, alpha_deg)
    r = v.results[i]
    if not r.converged:
        raise InputError(f"alpha {r.alpha_deg:g} deg: the viscous iteration did not converge; "
                         "there is no boundary layer to draw")
    body = result[i].bodies[0]
    gaps, top, bottom = 0.12, 0.55, 0.55
    # the section strip as tall as the section drawn to scale across the plot's width (the
    # x-axis is shared, so an equal aspect cannot be had by widening the limits)
    poly = np.vstack([result.outlines[0].polygon, result.outlines[0].polygon[:1]])
    ps, pn = _chord_frame(result.fine.chord_line, poly[:, 0], poly[:, 1])
    span_s = float(np.ptp(ps)) * 1.1  # the plot's x-range is the chord with a margin
    strip = (_W - _LEFT - _RIGHT) * (float(np.ptp(pn)) * 1.3) / max(span_s, 1e-9)
    heights = (2.9, 1.5, 1.3, min(max(strip, 0.4), 2.0))  # Cp, skin friction, shape factor, section
    note = _note_lines(VISCOUS_CAUTION, _W - _LEFT - _RIGHT, FONT["note"])
    note_h = 0.12 + 0.13 * len(note)
    H = top + sum(heights) + gaps * (len(heights) - 1) + bottom + note_h
    fig = Figure(figsize=(_W, H))
    plot_w = _W - _LEFT - _RIGHT
    axes, y = [], H - top
    for h in heights:
        y -= h
        axes.append(fig.add_axes([_LEFT / _W, y / H, plot_w / _W, h / H],
                                 sharex=axes[0] if axes else None))
        y -= gaps
    ax_cp, ax_cf, ax_h, ax_sec = axes
    for ax in axes:
        _style_axes(ax)
    surfaces = (("upper", r.upper, PALETTE[0], "-"), ("lower", r.lower, PALETTE[1], "-"))
    # inviscid Cp of the same angle, thin and grey, under the viscous curves
    s_inv, _ = _chord_frame(result.fine.chord_line, np.asarray(body.x), np.asarray(body.y))
    ax_cp.plot(s_inv, body.cp, color=MUTED, linewidth=0.9, zorder=2)
    for name, layer, colour, style in surfaces:
        s, _ = _layer_xy(result, layer)
        ax_cp.plot(s, layer.pressure_coefficient, color=colour, linewidth=LINE["upper"],
                   linestyle=style, zorder=3)
        ax_cf.plot(s, layer.skin_friction, color=colour, linewidth=LINE["upper"], zorder=3)
        ax_h.plot(s, layer.shape_factor, color=colour, linewidth=LINE["upper"], zorder=3)
    marks = []
    for name, layer, colour, _ in surfaces:
        x_tr = getattr(r, f"transition_{name}")
        x_sep = getattr(r, f"separation_{name}")
        x_re = getattr(r, f"reattachment_{name}")
        for x, marker in ((x_tr, "^"), (x_sep, "v"), (x_re, "o")):
            if not np.isfinite(x):
                continue
            s, _ = _layer_xy(result, layer)
            k = int(np.argmin(np.abs(np.asarray(layer.x_over_chord) - x)))
            for ax, values in ((ax_cp, layer.pressure_coefficient), (ax_cf, layer.skin_friction),
                               (ax_h, layer.shape_factor)):
                ax.plot([s[k]], [values[k]], marker=marker, color=colour, markersize=6,
                        markeredgecolor=INK, markeredgewidth=0.5, zorder=5, linestyle="none")
        marks.append(name)
    ax_cp.invert_yaxis()
    ax_cf.axhline(0.0, color=MUTED, linewidth=0.7, zorder=1)
    for ax, label in ((ax_cp, "Cp"), (ax_cf, "skin\nfriction"), (ax_h, "shape\nfactor"),
                      (ax_sec, "y/c")):
        ax.set_ylabel(label, fontsize=FONT["label"], color=INK, rotation=0, ha="right",
                      va="center")
        ax.yaxis.set_label_coords(-0.06, 0.5)
        if ax is not ax_sec:
            ax.tick_params(labelbottom=False)
    ax_sec.fill(ps, pn, facecolor=SECTION_FILL, edgecolor=INK, linewidth=LINE["outline"])
    ax_sec.set_aspect("equal", adjustable="datalim")
    ax_sec.grid(False)
    ax_sec.set_xlabel("x/c", fontsize=FONT["label"], color=INK)
    handles = [Line2D([], [], color=PALETTE[0], linewidth=LINE["upper"]),
               Line2D([], [], color=PALETTE[1], linewidth=LINE["upper"]),
               Line2D([], [], color=MUTED, linewidth=0.9),
               Line2D([], [], marker="^", color=INK, linestyle="none", markersize=6),
               Line2D([], [], marker="v", color=INK, linestyle="none", markersize=6),
               Line2D([], [], marker="o", color=INK, linestyle="none", markersize=5)]
    labels = ["upper surface", "lower surface", "inviscid Cp", "transition", "separation",
              "reattachment"]
    leg = ax_cp.legend(handles, labels, loc="lower right", fontsize=FONT["legend"],
                       frameon=False, ncol=2)
    for text in leg.get_texts():
        text.set_color(INK)
    if title is None:
        title = (f"Boundary layer, angle of attack {_minus(f'{r.alpha_deg:.2f}')}°, Reynolds "
                 f"number {v.reynolds:.3g}")
    fig.text(_LEFT / _W, 1.0 - 0.25 / H, title, fontsize=FONT["title"], color=INK,
             weight="bold", va="center", ha="left")
    summary = (f"cl {r.cl:.4f}   cd {r.cd:.5f} (friction {r.cd_friction:.5f}, form "
               f"{r.cd_pressure:.5f})   cl/cd {r.lift_to_drag:.1f}   cm {r.cm:.4f}")
    fig.text(_LEFT / _W, 1.0 - 0.47 / H, _minus(summary), fontsize=FONT["card"], color=MUTED,
             va="center", ha="left")
    fig.text(_LEFT / _W, (0.08 + 0.13 * (len(note) - 0.5)) / H, "\n".join(note),
             fontsize=FONT["note"], color=MUTED, va="center", ha="left", linespacing=1.35)
    return fig


def boundary_layer_figure(result, path, alpha_deg=None, *, overwrite: bool = False,
                          title: str | None = None) -> Path:
    """Write the boundary layer of one angle: Cp (viscous over inviscid), skin friction and shape
    factor along each surface against x/c, with transition, separation and reattachment marked.

    Raises
    ------
    InputError
        A result without the viscous analysis, an angle it does not hold, or an angle whose
        iteration did not converge.
    OutputError
        The path cannot be written.
    """
    check_figure_path(path, overwrite)
    return _save(_build_boundary_layer_figure(result, alpha_deg, title), path, overwrite)


def _build_drag_polar_figure(results, labels=None, title=None):
    from matplotlib.figure import Figure

    results = list(results)
    if not results or any(getattr(r, "viscous", None) is None for r in results):
        raise InputError("the drag polar needs the viscous analysis of every section (a "
                         "Reynolds number)")
    labels = [r.label for r in results] if labels is None else [str(x) for x in labels]
    note = _note_lines(VISCOUS_CAUTION, _W - _LEFT - _RIGHT, FONT["note"])
    failed = []
    for lab, r in zip(labels, results):
        bad = [f"{a:g}" for a, ok in zip(r.alpha_deg, r.viscous.converged) if not ok]
        if bad:
            failed.append(f"{lab}: not converged at {', '.join(bad)} deg (left out)")
    extra = _note_lines("; ".join(failed), _W - _LEFT - _RIGHT, FONT["note"]) if failed else []
    note_h = 0.12 + 0.13 * (len(note) + len(extra))
    w_ax, h_ax, gap = (_W - _LEFT - _RIGHT - 0.9) / 2.0, 3.6, 0.9
    H = 0.6 + h_ax + 0.6 + note_h
    fig = Figure(figsize=(_W, H))
    bottom = (note_h + 0.6) / H
    ax_polar = fig.add_axes([_LEFT / _W, bottom, w_ax / _W, h_ax / H])
    ax_ratio = fig.add_axes([(_LEFT + w_ax + gap) / _W, bottom, w_ax / _W, h_ax / H])
    for ax in (ax_polar, ax_ratio):
        _style_axes(ax)
    for k, (lab, r) in enumerate(zip(labels, results)):
        colour = PALETTE[k % len(PALETTE)]
        order = np.argsort(r.alpha_deg)
        ok = r.viscous.converged[order]
        a = np.asarray(r.alpha_deg)[order][ok]
        cl, cd = r.viscous.column("cl")[order][ok], r.viscous.column("cd")[order][ok]
        style = dict(color=colour, linewidth=LINE["upper"], marker="o", markersize=2.6,
                     markeredgewidth=0)
        ax_polar.plot(cd, cl, label=lab, **style)
        with np.errstate(divide="ignore", invalid="ignore"):
            ax_ratio.plot(a, cl / cd, **style)
    ax_polar.set_xlabel("drag coefficient cd", fontsize=FONT["label"], color=INK)
    ax_polar.set_ylabel("lift coefficient cl", fontsize=FONT["label"], color=INK)
    ax_ratio.set_xlabel("angle of attack (deg)", fontsize=FONT["label"], color=INK)
    ax_ratio.set_ylabel("lift-to-drag ratio cl/cd", fontsize=FONT["label"], color=INK)
    ax_ratio.axhline(0.0, color=MUTED, linewidth=0.7)
    ax_ratio.axvline(0.0, color=RULE, linewidth=0.8)
    leg = ax_polar.legend(loc="lower right", fontsize=FONT["legend"], frameon=False)
    for text in leg.get_texts():
        text.set_color(INK)
    if title is None:
        res = sorted({f"{r.viscous.reynolds:.3g}" for r in results})
        title = f"Drag polar, Reynolds number {', '.join(res)}"
    fig.text(_LEFT / _W, 1.0 - 0.3 / H, title, fontsize=FONT["title"], color=INK, weight="bold",
             va="center", ha="left")
    lines = note + extra
    fig.text(_LEFT / _W, (0.08 + 0.13 * (len(lines) - 0.5)) / H, "\n".join(lines),
             fontsize=FONT["note"], color=MUTED, va="center", ha="left", linespacing=1.35)
    return fig


def drag_polar_figure(results, path, labels=None, *, overwrite: bool = False,
                      title: str | None = None) -> Path:
    """Write the drag polar (cl against cd) and cl/cd against the angle of attack.

    Parameters
    ----------
    results : sequence of Result
        Each with its viscous analysis; unconverged angles are left out and listed.
    path : str or Path
    labels : sequence of str, optional
        Legend labels (default: each result's label).

    Raises
    ------
    InputError
        A result without the viscous analysis.
    """
    check_figure_path(path, overwrite)
    return _save(_build_drag_polar_figure(results, labels, title), path, overwrite)
