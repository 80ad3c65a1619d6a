"""Figures: surface Cp of one case, Cp of several cases compared, the Cp field around bodies, and
polars (Cl, Cm and minimum Cp against the angle of attack, several sections overlaid).

Every figure is drawn on a bare :class:`matplotlib.figure.Figure` with the Agg canvas (no pyplot,
no global figure state, no window) and written atomically in the format named by the file's
extension (``.png``, ``.svg``, ``.pdf``): rendered to a temporary file in the same folder, then
renamed (``overwrite``) or hard-linked into place, so an existing file is never replaced without
being asked and an interrupted run leaves no half-written figure.

matplotlib is imported inside the functions only, so importing panelflow (and starting the CLI)
does not pay for it.

Layout of the Cp figures (panelflow's own): the title with a muted line beneath naming the case,
panels and moment reference point; the legend in a row along the top of the Cp axes (curves on
the left, the surface key on the right); the Cp axes across the page's width with negative Cp
upward (the trade's convention: suction up); the section(s) true to scale beneath on the same x/c
axis; under both a strip of numbers, one row per curve set with its colour swatch (angle, Cl and
Cm with their error estimates, the lowest Cp over every body and where it sits, the margins); the
caution line small along the bottom. Upper surfaces are solid lines, lower surfaces dashed, in the
same colour. The polar figure follows the same plan: three axes across the width, the legend
above, a strip of each section's numbers beneath.
"""

from __future__ import annotations

import textwrap
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from panelflow.errors import InputError
from panelflow.output.writers import CAUTION, atomic_write, check_outputs

__all__ = [
    "FIGURE_FORMATS",
    "check_figure_path",
    "surface_cp_figure",
    "compare_cp_figure",
    "field_figure",
    "polar_figure",
]

FIGURE_FORMATS = (".png", ".svg", ".pdf")
SHORT_CAUTION = "Inviscid, attached-flow estimate: no separation, stall or cavitation."

# --------------------------------------------------------------------------------- the look
# panelflow's own restrained palette: ink for text and outlines, a few muted hues for curves.
INK = "#22262c"
MUTED = "#6b7280"
RULE = "#d5d9de"
SECTION_FILL = "#e3e7eb"
# Twelve hues, told apart by hue and lightness alike (a section beyond the twelfth in a polar
# also changes its marker, see _marker).
PALETTE = ("#1f4e79", "#b5562f", "#4f7f52", "#7a5c8e", "#a88a2c", "#3d8a99", "#8c4a5a",
           "#5b6f2a", "#c06c9e", "#d48a1e", "#5d8fc4", "#7d5a3c")
MARKERS = ("o", "s", "^", "D", "v")


def _colour(j: int) -> str:
    """The j-th curve colour (the palette repeats only after twelve)."""
    return PALETTE[j % len(PALETTE)]


def _marker(j: int) -> str:
    """The j-th section's marker: a new one each time the palette comes round again."""
    return MARKERS[(j // len(PALETTE)) % len(MARKERS)]
# Cp field: deep blue for suction through a warm off-white at Cp = 0 to burnt orange at
# stagnation (diverging about zero, so the sign of the pressure reads at a glance).
FIELD_COLOURS = ("#0f2a47", "#2f5f8f", "#7fa9cf", "#cfe0ee", "#f5f2ea", "#f3d3a4", "#e09a4f",
                 "#b8571f", "#7a2e12")
BODY_FILL = "#454b54"
PLANE_FILL = "#eef1f4"  # the far side of a wall or free surface (no flow there)
PLANE_LINE = "#1b3a5c"
STREAM = "#15181c"

FONT = {"title": 11.0, "label": 9.5, "tick": 8.5, "card": 8.2, "legend": 8.2, "note": 6.6}
LINE = {"upper": 1.5, "lower": 1.3, "outline": 0.9, "stream": 0.7}
_LOWER_DASH = (0, (4.0, 2.0))

# Cp figure layout, inches
_W = 9.7
_LEFT, _RIGHT = 0.95, 0.12
_YLABEL_X = 0.78  # y-axis labels this far left of the axes, so Cp and y/c line up
_TITLE_H = 0.5
_CP_H = 3.6
_SEC_GAP = 0.1
_SEC_MIN_H = 0.55
_XLABEL_H = 0.5
_NOTE_LINE_H = 0.13


# ------------------------------------------------------------------------------- file output
def check_figure_path(path, overwrite: bool = False) -> Path:
    """Raise :class:`OutputError` unless a figure can be written to ``path``.

    Known format (``FIGURE_FORMATS``), folder present, and not an existing file unless
    ``overwrite``. Called before any drawing, so a figure that cannot be written costs nothing.

    Returns
    -------
    Path
    """
    check_outputs([path], overwrite, registry=FIGURE_FORMATS, what="figure")
    return Path(path)


def _save(fig, path, overwrite: bool) -> Path:
    """Render ``fig`` to a temporary file beside ``path`` and move it into place atomically
    (:func:`panelflow.output.writers.atomic_write`)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    p = check_figure_path(path, overwrite)
    ext = p.suffix.lower()
    FigureCanvasAgg(fig)
    # fixed metadata: the same figure gives the same bytes (no creation date in SVG/PDF)
    metadata = {".png": {"Software": "panelflow"}, ".svg": {"Date": None},
                ".pdf": {"CreationDate": None, "Producer": "panelflow"}}[ext]
    return atomic_write(p, lambda fh: fig.savefig(fh, format=ext[1:], dpi=150,
                                                  metadata=metadata),
                        overwrite, binary=True, suffix=ext)


# ----------------------------------------------------------------------------- data helpers
@dataclass(frozen=True)
class _Trace:
    """One body's surface Cp at one angle, split at its leading edge, in chord-line terms."""

    label: str
    colour: str
    s_upper: np.ndarray
    cp_upper: np.ndarray
    s_lower: np.ndarray
    cp_lower: np.ndarray


@dataclass(frozen=True)
class _Shape:
    """One body's outline in the reference chord frame (x/c, y/c), closed."""

    s: np.ndarray
    n: np.ndarray
    edge: str
    fill: str | None


def _chord_frame(chord_line, x, y):
    """Chord fraction x/c and normal distance y/c (positive on the upper side) of points."""
    z = (np.asarray(x) + 1j * np.asarray(y) - complex(*chord_line.leading_edge))
    w = z * np.conj(chord_line.direction) / chord_line.length
    return w.real, w.imag


def _leading_edge_index(x, y) -> int:
    """Node farthest from the trailing edge (mid-point of the first and last node)."""
    te = 0.5 * (x[0] + x[-1]), 0.5 * (y[0] + y[-1])
    return int(np.argmax(np.hypot(x - te[0], y - te[1])))


def _trace(chord_line, body, label, colour) -> _Trace:
    # node loops run trailing edge -> upper surface -> leading edge -> lower surface -> trailing
    # edge (counter-clockwise), so the leading-edge node splits the two surfaces
    s, _ = _chord_frame(chord_line, body.x, body.y)
    i = _leading_edge_index(np.asarray(body.x), np.asarray(body.y))
    cp = np.asarray(body.cp)
    return _Trace(label, colour, s[:i + 1], cp[:i + 1], s[i:], cp[i:])


def _shapes(analysis, edges, fill) -> list:
    """Outlines of an analysis's bodies, ``edges`` one colour per body."""
    line = analysis.fine.chord_line
    out = []
    for o, edge in zip(analysis.outlines, edges, strict=True):
        poly = np.vstack([o.polygon, o.polygon[:1]])
        s, n = _chord_frame(line, poly[:, 0], poly[:, 1])
        out.append(_Shape(s, n, edge, fill))
    return out


def _angle_index(analysis, alpha_deg) -> int:
    angles = np.asarray(analysis.alpha_deg, float)
    hit = np.flatnonzero(np.isclose(angles, float(alpha_deg), rtol=0.0, atol=1e-9))
    if len(hit) == 0:
        have = ", ".join(f"{a:g}" for a in angles)
        raise InputError(f"angle of attack {float(alpha_deg):g} deg is not in the analysis "
                         f"(angles: {have})")
    return int(hit[0])


def _angle_indices(analysis, alpha_deg) -> list:
    if alpha_deg is None:
        return [0]
    return [_angle_index(analysis, a) for a in np.atleast_1d(np.asarray(alpha_deg, float))]


def _minus(text: str) -> str:
    """Typographic minus sign, as on the axes' tick labels."""
    return text.replace("-", "\u2212")


def _fixed(value: float, decimals: int) -> str:
    text = f"{value:.{decimals}f}"
    # a value that rounds to zero prints without a sign
    return _minus(f"{0.0:.{decimals}f}" if float(text) == 0.0 else text)


def _pm(value: float, error: float) -> str:
    """``value ± error`` with the error to two significant figures and the value to match."""
    if not np.isfinite(value):
        return "undefined"
    if not np.isfinite(error):
        return f"{_fixed(value, 4)} (no estimate)"
    if error < 5e-7:
        return f"{_fixed(value, 6)} ± <1e\u22126"
    decimals = int(min(6, max(0, 1 - np.floor(np.log10(error)))))
    return f"{_fixed(value, decimals)} ± {error:.{decimals}f}"


def _xy(value, scale: float) -> str:
    # coordinates within round-off of zero (relative to the chord) print as 0
    v = [0.0 if abs(c) < 1e-9 * scale else float(c) for c in value]
    return _minus(f"({v[0]:.4g}, {v[1]:.4g})")


def _angle(a: float) -> str:
    return _minus(f"{round(a, 2) + 0.0:.2f}°")  # + 0.0: no "-0.00" for a tiny negative


def _panels(analysis) -> str:
    counts = [pl.n_panels for pl in analysis.panellings]
    return " + ".join(str(c) for c in counts)


# --------------------------------------------------------------------------- Cp figure core
def _style_axes(ax) -> None:
    ax.tick_params(labelsize=FONT["tick"], colors=INK, length=3, width=0.6)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    for side in ("left", "bottom"):
        ax.spines[side].set_color(MUTED)
        ax.spines[side].set_linewidth(0.7)
    ax.grid(True, color=RULE, linewidth=0.6)
    ax.set_axisbelow(True)


def _note_lines(text: str, width_in: float, size: float) -> list:
    # DejaVu Sans averages about 0.55 em per character
    per_line = max(40, int(width_in * 72.0 / (0.55 * size)))
    return textwrap.wrap(text, per_line)


def _wrap_card(text: str, chars: int = 36) -> list:
    return textwrap.wrap(text, chars) or [""]


def _text_width_in(text: str, size: float) -> float:
    # DejaVu Sans averages about 0.55 em per character (0.6 for the digits and signs)
    return max((len(part) for part in str(text).split("\n")), default=0) * 0.58 * size / 72.0


@dataclass(frozen=True)
class _Table:
    """The results strip of a Cp figure: one row per drawn curve set, a colour swatch first.

    Attributes
    ----------
    headers : tuple of str
        Column headers (a ``\\n`` splits one over two lines).
    rows : tuple of (colour, tuple of str)
        A colour of ``None`` draws no swatch.
    """

    headers: tuple
    rows: tuple


_ROW_H = 0.19  # inches per table row
_HEAD_H = 0.36  # two header lines
_COL_GAP = 0.22


def _table_layout(table: _Table, width_in: float):
    """(column widths in inches, font size) that fit the table into ``width_in``."""
    size = FONT["card"]
    for _ in range(6):
        widths = [max([_text_width_in(h, size)] + [_text_width_in(r[1][k], size)
                                                    for r in table.rows]) + _COL_GAP
                  for k, h in enumerate(table.headers)]
        if sum(widths) + 0.3 <= width_in:
            break
        size *= 0.9
    return widths, size


def _draw_table(fig, table: _Table, left_in: float, top_in: float, width_in: float, W: float,
                H: float) -> None:
    """Draw the results strip with its top at ``top_in`` inches from the bottom."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Rectangle

    widths, size = _table_layout(table, width_in)
    x = left_in + 0.3  # after the swatch
    y_head = top_in
    for k, head in enumerate(table.headers):
        fig.text((x + widths[k] - _COL_GAP) / W, y_head / H, head, fontsize=size, color=MUTED,
                 va="top", ha="right", linespacing=1.2)
        x += widths[k]
    y = top_in - _HEAD_H
    fig.add_artist(Line2D([left_in / W, min(x, left_in + width_in) / W], [y / H, y / H],
                          color=RULE, linewidth=0.7, transform=fig.transFigure))
    y -= 0.06
    for colour, cells in table.rows:
        if colour is not None:
            fig.add_artist(Rectangle((left_in / W, (y - 0.1) / H), 0.2 / W, 0.08 / H,
                                     facecolor=colour, edgecolor="none",
                                     transform=fig.transFigure))
        x = left_in + 0.3
        for k, cell in enumerate(cells):
            fig.text((x + widths[k] - _COL_GAP) / W, y / H, cell, fontsize=size, color=INK,
                     va="top", ha="right")
            x += widths[k]
        y -= _ROW_H


def _cp_figure(traces, shapes, table, title, subtitle="", legend_labels=(), legend_title=None,
               reference=None, levels=()):
    """Lay out a Cp figure: title and what was solved, the Cp axes (negative up) with the
    legend along their top, the sections true to scale beneath, the results strip, the caution.

    panelflow's own composition: the numbers sit in a strip under the plot, one row per
    curve set with its colour, so the plot keeps the page's full width.

    Parameters
    ----------
    traces : list of _Trace
    shapes : list of _Shape
    table : _Table
    title : str
    subtitle : str
        One muted line under the title (case, panels, moment reference, conditions).
    legend_labels : sequence of (label, colour)
        Legend entries (solid line samples), in a row along the top of the Cp axes.
    legend_title : str, optional
        Not drawn (the title names what the legend's entries are); kept for callers.
    reference : (x/c, y/c), optional
        Moment reference point, marked on the section.
    levels : sequence of (Cp, label)
        Reference levels drawn across the Cp axes (the critical Cp*, minus the cavitation
        number), each labelled at its right end.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.ticker import MaxNLocator

    if not isinstance(table, _Table):  # card entries, as the design figures give them
        table = _table_from_card(table)
    # x range over curves and sections; section height from the true aspect ratio
    s_all = np.concatenate([t.s_upper for t in traces] + [t.s_lower for t in traces]
                           + [sh.s for sh in shapes])
    n_all = np.concatenate([sh.n for sh in shapes])
    x0, x1 = float(np.nanmin(s_all)), float(np.nanmax(s_all))
    pad = 0.04 * (x1 - x0)
    x0, x1 = x0 - pad, x1 + pad
    n0, n1 = float(np.nanmin(n_all)), float(np.nanmax(n_all))
    n_pad = 0.12 * max(n1 - n0, 0.02 * (x1 - x0))
    n0, n1 = n0 - n_pad, n1 + n_pad

    plot_w = _W - _LEFT - _RIGHT
    sec_h = max(_SEC_MIN_H, plot_w * (n1 - n0) / (x1 - x0))
    note = _note_lines(CAUTION, _W - _LEFT - _RIGHT, FONT["note"])
    note_h = 0.12 + _NOTE_LINE_H * len(note)
    sub = (textwrap.wrap(subtitle, int((_W - _LEFT - _RIGHT) * 72.0 / (0.52 * FONT["card"])),
                         break_on_hyphens=False) if subtitle else [])
    sub_h = 0.19 * len(sub)
    n_cols = max(1, min(len(legend_labels), 4))
    legend_rows = max(1, -(-len(legend_labels) // n_cols))
    legend_h = 0.2 * legend_rows + 0.12
    table_h = _HEAD_H + 0.1 + _ROW_H * len(table.rows) + 0.15
    H = _TITLE_H + sub_h + legend_h + _CP_H + _SEC_GAP + sec_h + _XLABEL_H + table_h + note_h

    fig = Figure(figsize=(_W, H))
    FigureCanvasAgg(fig)

    def rect(left, bottom, width, height):
        return [left / _W, bottom / H, width / _W, height / H]

    y_table_top = note_h + table_h
    y_sec = y_table_top + _XLABEL_H
    y_cp = y_sec + sec_h + _SEC_GAP
    ax_cp = fig.add_axes(rect(_LEFT, y_cp, plot_w, _CP_H))
    ax_sec = fig.add_axes(rect(_LEFT, y_sec, plot_w, sec_h), sharex=ax_cp)

    # --- Cp curves
    _style_axes(ax_cp)
    ax_cp.axhline(0.0, color=MUTED, linewidth=0.7, zorder=1)
    for t in traces:
        ax_cp.plot(t.s_upper, t.cp_upper, color=t.colour, linewidth=LINE["upper"],
                   solid_joinstyle="round", zorder=3)
        ax_cp.plot(t.s_lower, t.cp_lower, color=t.colour, linewidth=LINE["lower"],
                   linestyle=_LOWER_DASH, zorder=3)
    cps = np.concatenate([t.cp_upper for t in traces] + [t.cp_lower for t in traces]
                         + [np.array([v for v, _ in levels], float)])
    lo = float(np.nanmin(cps))
    hi = max(1.0, float(np.nanmax(cps)))
    for value, label in levels:
        ax_cp.axhline(value, color=MUTED, linewidth=0.9, linestyle=(0, (5, 3)), zorder=2)
        ax_cp.annotate(label, xy=(1.0, value), xycoords=("axes fraction", "data"),
                       xytext=(-3, 3), textcoords="offset points", ha="right", va="bottom",
                       fontsize=FONT["legend"], color=MUTED)
    c_pad = 0.06 * (hi - lo)
    ax_cp.set_ylim(hi + c_pad, lo - c_pad)  # negative Cp upward
    ax_cp.set_xlim(x0, x1)
    ax_cp.set_ylabel("Cp", fontsize=FONT["label"], color=INK, rotation=0, ha="left",
                     va="center")
    ax_cp.yaxis.set_label_coords(-_YLABEL_X / plot_w, 0.5)
    ax_cp.tick_params(labelbottom=False)
    ax_cp.yaxis.set_major_locator(MaxNLocator(nbins=8, steps=[1, 2, 2.5, 5, 10]))

    # legend in a row along the top of the Cp axes: the curves' colours on the left, the
    # surface key on the right
    lift = 1.0 + 0.06 / _CP_H
    if legend_labels:
        handles = [Line2D([], [], color=c, linewidth=LINE["upper"]) for _, c in legend_labels]
        leg = ax_cp.legend(handles, [lab for lab, _ in legend_labels], loc="lower left",
                           bbox_to_anchor=(0.0, lift), ncol=n_cols, fontsize=FONT["legend"],
                           frameon=False, borderpad=0.0, borderaxespad=0.0, handlelength=2.3,
                           handletextpad=0.5, columnspacing=1.4, labelspacing=0.35)
        for text in leg.get_texts():
            text.set_color(INK)
    key = fig.legend([Line2D([], [], color=MUTED, linewidth=LINE["upper"]),
                      Line2D([], [], color=MUTED, linewidth=LINE["lower"],
                             linestyle=_LOWER_DASH)], ["upper surface", "lower surface"],
                     loc="lower right", bbox_to_anchor=((_LEFT + plot_w) / _W,
                                                        (y_cp + _CP_H + 0.06) / H),
                     ncol=2, fontsize=FONT["legend"], frameon=False, borderpad=0.0,
                     borderaxespad=0.0, handlelength=2.3, handletextpad=0.5,
                     columnspacing=1.4)
    for text in key.get_texts():
        text.set_color(MUTED)

    # --- sections, true to scale
    _style_axes(ax_sec)
    ax_sec.grid(False)
    ax_sec.axhline(0.0, color=RULE, linewidth=0.6, zorder=0)
    for sh in shapes:
        if sh.fill is not None:
            ax_sec.fill(sh.s, sh.n, facecolor=sh.fill, edgecolor="none", zorder=2)
        ax_sec.plot(sh.s, sh.n, color=sh.edge, linewidth=LINE["outline"], zorder=3)
    if reference is not None:
        ax_sec.plot([reference[0]], [reference[1]], marker="+", markersize=7, color=INK,
                    markeredgewidth=1.0, zorder=4, linestyle="none")
    ax_sec.set_aspect("equal", adjustable="datalim")
    ax_sec.set_ylim(n0, n1)
    ax_sec.yaxis.set_major_locator(MaxNLocator(nbins=3, steps=[1, 2, 5, 10]))
    ax_sec.set_xlabel("x/c", fontsize=FONT["label"], color=INK)
    ax_sec.set_ylabel("y/c", fontsize=FONT["label"], color=INK, rotation=0, ha="left",
                      va="center")
    ax_sec.yaxis.set_label_coords(-_YLABEL_X / plot_w, 0.5)

    y_top = H - 0.22
    if title:
        fig.text(_LEFT / _W, y_top / H, title, fontsize=FONT["title"], color=INK,
                 weight="bold", va="center", ha="left")
    if sub:
        fig.text(_LEFT / _W, (y_top - 0.2) / H, "\n".join(sub), fontsize=FONT["card"],
                 color=MUTED, va="top", ha="left", linespacing=1.5)

    # --- the results strip under the plot, one row per curve set
    _draw_table(fig, table, _LEFT - 0.3, y_table_top - 0.05, _W - _LEFT - _RIGHT + 0.3, _W, H)

    # --- caution, small along the bottom
    fig.text(_LEFT / _W, (0.08 + _NOTE_LINE_H * (len(note) - 0.5)) / H, "\n".join(note),
             fontsize=FONT["note"], color=MUTED, va="center", ha="left", linespacing=1.35)
    return fig


def _reference_text(analysis) -> str:
    """Moment reference point as a chord position and in input coordinates."""
    ref = analysis.reference_point
    s_ref, n_ref = _chord_frame(analysis.fine.chord_line, ref[0], ref[1])
    return (f"moments about x/c {_fixed(float(s_ref), 3)}, y/c {_fixed(float(n_ref), 3)} "
            f"(x, y = {_xy(ref, analysis.chord)}), nose-up positive")


def _peak_cells(analysis, i, several_bodies: bool) -> list:
    """Lowest Cp over every body at angle ``i``, where it sits, and (several bodies) on which."""
    from panelflow.output.writers import suction_peak

    cp, at, k = suction_peak(analysis)
    cells = [_fixed(float(cp[i]), 3), _fixed(float(at[i]), 3)]
    if several_bodies:
        cells.append(analysis.outlines[int(k[i])].name)
    return cells


def _base_cell(r) -> str | None:
    b = r.bodies[0]
    return _fixed(b.cp_base, 3) if np.isfinite(b.cp_base) else None


def _margins(result, indices):
    """Reference levels, subtitle phrases, and (header, cells per angle) of the margins."""
    levels, phrases, columns = [], [], []
    c = getattr(result, "compressibility", None)
    if c is not None:
        if np.isfinite(c.cp_star):
            levels.append((float(c.cp_star), f"Cp* at Mach {c.mach:g}"))
        phrases.append(f"Mach {c.mach:g} ({c.rule})")
        columns.append((f"lift coefficient\nat Mach {c.mach:g}",
                        [_pm(float(c.cl[i]), float(c.cl_error_estimate[i])) for i in indices]))
        columns.append(("critical\nMach number",
                        [_fixed(float(c.critical_mach[i]), 3) for i in indices]))
    v = getattr(result, "cavitation", None)
    if v is not None:
        phrases.append(f"{v.depth:g} m deep")
        if np.isfinite(v.sigma):
            levels.append((-float(v.sigma), f"minus the cavitation number ({v.sigma:.3g} at "
                                            f"{v.speed:g} m/s)"))
        columns.append(("cavitation inception\nspeed [m/s]",
                        [f"{float(v.section_inception_speed[i]):.3g}" for i in indices]))
    p = getattr(result, "plane", None)
    if p is not None:
        phrases.append(f"{p.boundary.label} {p.boundary.distance:g} from the pitch point")
        columns.append(("lift coefficient\nin free space",
                        [_fixed(float(p.cl_free[i]), 4) for i in indices]))
    return levels, phrases, columns


def _build_surface_cp_figure(analysis, alpha_deg=None, title=None):
    """The surface Cp figure of one analysis, unsaved (see :func:`surface_cp_figure`).

    Returns
    -------
    matplotlib.figure.Figure
        ``fig.axes[0]`` is the Cp axes (y inverted), ``fig.axes[1]`` the section axes.
    """
    indices = _angle_indices(analysis, alpha_deg)
    line = analysis.fine.chord_line
    names = [o.name for o in analysis.outlines]
    several = len(indices) > 1
    traces, legend = [], []
    for j, i in enumerate(indices):
        r = analysis[i]
        for k, b in enumerate(r.bodies):
            # colour tells the angles apart when several are drawn, else the bodies
            colour = _colour(j if several else k)
            traces.append(_trace(line, b, b.name, colour))
        if several:
            legend.append((_angle(r.alpha_deg), _colour(j)))
    if not several and len(names) > 1:
        legend = [(n, _colour(k)) for k, n in enumerate(names)]
    several_bodies = len(names) > 1
    levels, phrases, margin_columns = _margins(analysis, indices)
    headers = ["angle of\nattack", "lift coefficient\nCl", "moment coefficient\nCm",
               "lowest\nCp", "at\nx/c"] + (["on\nbody"] if several_bodies else [])
    bases = [_base_cell(analysis[i]) for i in indices]
    if any(b is not None for b in bases):
        headers.append("base Cp\n(blunt edge)")
    headers += [h for h, _ in margin_columns]
    rows = []
    for j, i in enumerate(indices):
        r = analysis[i]
        cells = [_angle(r.alpha_deg), _pm(r.cl, r.cl_error_estimate),
                 _pm(r.cm, r.cm_error_estimate), *_peak_cells(analysis, i, several_bodies)]
        if any(b is not None for b in bases):
            cells.append(bases[j] or "")
        cells += [col[j] for _, col in margin_columns]
        rows.append((_colour(j) if several else None, tuple(cells)))
    if title is None:
        angles = ", ".join(_angle(analysis.alpha_deg[i]) for i in indices)
        title = f"Surface pressure, angle of attack {angles}"
    subtitle = "; ".join([", ".join(names), f"{_panels(analysis)} panels",
                          _reference_text(analysis), *phrases])
    ref = analysis.reference_point
    s_ref, n_ref = _chord_frame(line, ref[0], ref[1])
    # outlines in the body colours when colour tells the bodies apart
    edges = ([_colour(k) for k in range(len(names))]
             if not several and several_bodies else [INK] * len(names))
    return _cp_figure(traces, _shapes(analysis, edges, SECTION_FILL),
                      _Table(tuple(headers), tuple(rows)), title, subtitle,
                      legend_labels=legend,
                      legend_title="angle of attack" if several else None,
                      reference=(float(s_ref), float(n_ref)), levels=levels)


def _table_from_card(card) -> _Table:
    """A results strip from card entries (``("head", label, colour)`` then ``("row", key,
    value)`` ...): one row per head, a column per key in the order they first appear."""
    groups, keys = [], []
    for entry in card:
        if entry[0] == "head":
            if groups and groups[-1][1] is not None and not groups[-1][2]:
                groups[-1] = (groups[-1][0] + " " + entry[1], groups[-1][1], {})  # wrapped
                continue
            groups.append((entry[1], entry[2], {}))
        elif entry[0] == "row" and groups:
            key = entry[1] or "(continued)"
            if key not in keys:
                keys.append(key)
            groups[-1][2][key] = entry[2]
    headers = ("case", *keys)
    rows = tuple((colour, (label, *(values.get(k, "") for k in keys)))
                 for label, colour, values in groups)
    return _Table(headers, rows)


def surface_cp_figure(analysis, path, alpha_deg=None, *, overwrite: bool = False,
                      title: str | None = None) -> Path:
    """Write the surface Cp of one analysis against x/c, negative Cp upward.

    Every body is drawn (upper surface solid, lower surface dashed); the sections are drawn to
    scale beneath on the same x/c axis (the main body's chord line); a line under the title names
    the bodies, panels and moment reference point, and a strip beneath the plot gives per angle
    Cl and Cm with their error estimates and the lowest Cp over every body with its position
    (and body); the caution line runs along the bottom.

    Parameters
    ----------
    analysis : Analysis
    path : str or Path
        Output file; the format follows the extension (``.png``, ``.svg``, ``.pdf``).
    alpha_deg : float or sequence of float, optional
        Angle(s) of attack to draw, each one of the analysis's angles; several are overlaid in
        different colours. Default the first angle.
    overwrite : bool
        Replace an existing file.
    title : str, optional
        Figure title; default names the angle of attack.

    Returns
    -------
    Path

    Raises
    ------
    OutputError
        Unknown extension, missing folder, or existing file without ``overwrite``.
    InputError
        An angle that the analysis does not hold.
    """
    check_figure_path(path, overwrite)
    return _save(_build_surface_cp_figure(analysis, alpha_deg, title), path, overwrite)


def _build_compare_cp_figure(analyses, labels, alpha_deg=None, title=None):
    """The comparison figure, unsaved (see :func:`compare_cp_figure`).

    Returns
    -------
    matplotlib.figure.Figure
        ``fig.axes[0]`` is the Cp axes (y inverted, legend = labels), ``fig.axes[1]`` the
        section axes.
    """
    analyses = list(analyses)
    labels = [str(lab) for lab in labels]
    if not analyses:
        raise InputError("no analysis to compare")
    if len(labels) != len(analyses):
        raise InputError(f"{len(labels)} labels for {len(analyses)} analyses; give one each")
    traces, shapes, legend, rows, angles = [], [], [], [], []
    several_bodies = any(len(a.outlines) > 1 for a in analyses)
    for j, (a, lab) in enumerate(zip(analyses, labels, strict=True)):
        colour = _colour(j)
        i = 0 if alpha_deg is None else _angle_index(a, alpha_deg)
        r = a[i]
        angles.append(r.alpha_deg)
        line = a.fine.chord_line
        traces += [_trace(line, b, lab, colour) for b in r.bodies]
        # outlines only: overlaid fills would muddy each other
        shapes += _shapes(a, [colour] * len(a.outlines), None)
        legend.append((lab, colour))
        ref = a.reference_point
        s_ref, n_ref = _chord_frame(line, ref[0], ref[1])
        rows.append((colour, (lab, _angle(r.alpha_deg), _panels(a),
                              _pm(r.cl, r.cl_error_estimate), _pm(r.cm, r.cm_error_estimate),
                              f"x/c {_fixed(float(s_ref), 3)}, y/c {_fixed(float(n_ref), 3)}",
                              *_peak_cells(a, i, several_bodies))))
    headers = ("case", "angle of\nattack", "panels", "lift coefficient\nCl",
               "moment coefficient\nCm", "moments\nabout", "lowest\nCp", "at\nx/c",
               *(("on\nbody",) if several_bodies else ()))
    if title is None:
        same = np.allclose(angles, angles[0], rtol=0.0, atol=1e-9)
        title = ("Surface pressure compared, angle of attack " + _angle(angles[0]) if same
                 else "Surface pressure compared")
    subtitle = ("each case on its own main chord line (x/c from 0 at its leading edge to 1 at "
                "its trailing edge); moments nose-up positive")
    return _cp_figure(traces, shapes, _Table(headers, tuple(rows)), title, subtitle,
                      legend_labels=legend)


def compare_cp_figure(analyses, labels, alpha_deg, path, overwrite: bool = False,
                      title: str | None = None) -> Path:
    """Write the surface Cp of several cases overlaid, negative Cp upward, with a legend.

    Each case is drawn on its own main chord line (x/c from 0 at its leading edge to 1 at its
    trailing edge), so sections of different size and incidence compare shape for shape; the
    sections are overlaid to scale beneath.

    Parameters
    ----------
    analyses : sequence of Analysis
    labels : sequence of str
        One legend label per analysis.
    alpha_deg : float or None
        Angle of attack to draw, one of each analysis's angles; None takes each one's first.
    path : str or Path
        Output file (``.png``, ``.svg``, ``.pdf``).
    overwrite : bool
    title : str, optional

    Returns
    -------
    Path

    Raises
    ------
    OutputError, InputError
    """
    check_figure_path(path, overwrite)
    return _save(_build_compare_cp_figure(analyses, labels, alpha_deg, title), path, overwrite)


# ------------------------------------------------------------------------------- field figure
def _polygons(bodies) -> list:
    """Body outlines as (n, 2) arrays from an Analysis, Outlines, Panellings or point arrays."""
    if bodies is None:
        return []
    if hasattr(bodies, "outlines"):
        bodies = bodies.outlines
    if hasattr(bodies, "polygon") or hasattr(bodies, "nodes"):
        bodies = [bodies]
    elif isinstance(bodies, np.ndarray) and bodies.ndim == 2 and bodies.shape[1] == 2:
        bodies = [bodies]
    out = []
    for b in bodies:
        if hasattr(b, "polygon"):
            pts = np.asarray(b.polygon, float)
        elif hasattr(b, "nodes"):
            pts = np.asarray(b.nodes, float)
        else:
            arr = np.asarray(b)
            pts = (np.column_stack([arr.real, arr.imag]) if np.iscomplexobj(arr)
                   else np.asarray(arr, float))
        if pts.ndim != 2 or pts.shape[1] != 2 or len(pts) < 3:
            raise InputError(f"body outline of shape {pts.shape}: need (n, 2) points, n >= 3")
        out.append(pts)
    return out


def _stream_xy(line):
    """x and y arrays of one streamline: an object with ``x`` and ``y``, (n, 2) or complex."""
    if hasattr(line, "x") and hasattr(line, "y"):
        return np.asarray(line.x, float).ravel(), np.asarray(line.y, float).ravel()
    arr = np.asarray(line)
    if np.iscomplexobj(arr):
        return arr.real.ravel(), arr.imag.ravel()
    arr = np.asarray(arr, float)
    if arr.ndim != 2 or arr.shape[1] != 2:
        raise InputError(f"streamline of shape {arr.shape}: need x and y arrays or (n, 2)")
    return arr[:, 0], arr[:, 1]


def _field_levels(cp, levels):
    from matplotlib.ticker import MaxNLocator

    lo, hi = float(np.nanmin(cp)), float(np.nanmax(cp))
    if levels is None or np.isscalar(levels):
        n = 20 if levels is None else int(levels)
        if n < 2:
            raise InputError(f"levels = {levels}: need at least 2")
        top = min(hi, 1.0)  # Cp cannot exceed 1 in steady potential flow
        if lo < 0.0 < top:
            # each side of Cp = 0 gets bands of its own, in proportion to its share of the
            # range but never fewer than a third of them: a deep suction peak must not leave
            # the pressure side (0 to 1) with one or two bands
            share = -lo / (top - lo)
            n_neg = int(np.clip(round(n * share), n // 3, n - n // 3))
            neg = MaxNLocator(nbins=n_neg, steps=[1, 2, 2.5, 5, 10]).tick_values(lo, 0.0)
            pos = MaxNLocator(nbins=n - n_neg, steps=[1, 2, 2.5, 5, 10]).tick_values(0.0, top)
            lev = np.r_[neg[neg <= 0.0], pos[(pos > 0.0) & (pos < top)], top]
        else:
            lev = MaxNLocator(nbins=n, steps=[1, 2, 2.5, 5, 10]).tick_values(lo, top)
            lev = np.r_[lev[lev < top], top]
        lev = lev[(lev >= lo - 1e-12) | (np.arange(len(lev)) == 0)]
        lev = np.unique(lev)
    else:
        lev = np.unique(np.asarray(levels, float))
        if len(lev) < 2 or not np.all(np.isfinite(lev)):
            raise InputError("levels: need at least 2 finite values")
    extend = {(False, False): "neither", (True, False): "min", (False, True): "max",
              (True, True): "both"}[(lo < lev[0] - 1e-12, hi > lev[-1] + 1e-12)]
    return lev, extend


def _build_field_figure(field, bodies, streamlines=(), levels=None, title=None, alpha_index=0,
                        plane=None):
    """The field figure, unsaved (see :func:`field_figure`).

    Returns
    -------
    matplotlib.figure.Figure
        ``fig.axes[0]`` is the field axes (equal aspect), ``fig.axes[1]`` the colour bar.
    """
    from matplotlib.colors import LinearSegmentedColormap, Normalize, TwoSlopeNorm
    from matplotlib.figure import Figure
    from matplotlib.patches import Polygon

    shape = tuple(field.shape)
    if len(shape) != 2 or shape[0] < 2 or shape[1] < 2:
        raise InputError(f"field of shape {shape}: a grid field (ny, nx) is needed "
                         "(see panelflow.flow.field.grid_points)")
    n_alpha = len(field.alpha_deg)
    if not -n_alpha <= alpha_index < n_alpha:
        raise InputError(f"alpha_index {alpha_index}: the field holds {n_alpha} angle(s)")
    gx = np.asarray(field.x, float).reshape(shape)
    gy = np.asarray(field.y, float).reshape(shape)
    cp = np.array(field.cp[alpha_index], float).reshape(shape)
    invalid = ~np.isfinite(cp)
    if invalid.all():
        raise InputError("field: no point outside the bodies")
    polys = _polygons(bodies)
    image = None if plane is None else plane.image(float(field.alpha_deg[alpha_index]))
    beyond = (np.zeros(shape, bool) if image is None
              else image.beyond(gx + 1j * gy).reshape(shape))
    lev, extend = _field_levels(cp[~beyond], levels)
    hidden = invalid | beyond  # inside a body, or on the far side of the plane
    if (polys and (invalid & ~beyond).any()) or beyond.any():
        # Fill hidden points with their nearest value in the flow before contouring: the bands
        # then run up to the body outline and the plane (both drawn over them) instead of
        # stopping a grid cell short in a saw-tooth of blank cells.
        from scipy.ndimage import distance_transform_edt

        idx = distance_transform_edt(hidden, return_distances=False, return_indices=True)
        cp = cp[tuple(idx)]
        if not polys:  # no outline to cover the body's cells: keep them blank
            cp = np.ma.masked_array(cp, invalid & ~beyond)
    else:
        cp = np.ma.masked_invalid(cp)
    x0, x1 = float(gx.min()), float(gx.max())
    y0, y1 = float(gy.min()), float(gy.max())
    ax_w = 6.6
    ax_h = float(np.clip(ax_w * (y1 - y0) / (x1 - x0), 1.5, 7.0))
    ax_w = ax_h * (x1 - x0) / (y1 - y0) if ax_h in (1.5, 7.0) else ax_w
    left, right, bar_gap, bar_w, bar_label = 0.75, 0.3, 0.22, 0.16, 0.55
    top, bottom = 0.5, 0.78
    W = left + ax_w + bar_gap + bar_w + bar_label + right
    H = top + ax_h + bottom
    fig = Figure(figsize=(W, H))
    ax = fig.add_axes([left / W, bottom / H, ax_w / W, ax_h / H])
    cax = fig.add_axes([(left + ax_w + bar_gap) / W, bottom / H, bar_w / W, ax_h / H])

    cmap = LinearSegmentedColormap.from_list("panelflow_cp", FIELD_COLOURS)
    if lev[0] < 0.0 < lev[-1]:
        norm = TwoSlopeNorm(vmin=lev[0], vcenter=0.0, vmax=lev[-1])
    else:
        norm = Normalize(vmin=lev[0], vmax=lev[-1])
    filled = ax.contourf(gx, gy, cp, levels=lev, cmap=cmap, norm=norm, extend=extend, zorder=1)
    # (no line at Cp = 0: the diverging colours already turn there, and an unlabelled line
    # across the field reads as a streamline or a boundary)

    for pts in polys:
        ax.add_patch(Polygon(pts, closed=True, facecolor=BODY_FILL, edgecolor=INK,
                             linewidth=LINE["outline"], zorder=5))
    if image is not None:
        # the far side of the plane is no flow: a plain grey band and the plane's line
        span = 2.0 * float(np.hypot(x1 - x0, y1 - y0)) + float(abs(image.point))
        a, b = image.line(span)
        out = -1j * image.direction * (1.0 if image.fluid_above else -1.0) * span
        band = np.array([a, b, b + out, a + out])
        # the far side is no flow: pale and hatched, unlike the solid bodies and unlike any
        # Cp colour, with the plane itself as a firm line that stays visible over it
        ax.add_patch(Polygon(np.column_stack([band.real, band.imag]), closed=True,
                             facecolor=PLANE_FILL, edgecolor=RULE, hatch="////",
                             linewidth=0.0, zorder=3))
        ax.plot([a.real, b.real], [a.imag, b.imag], color=PLANE_LINE, linewidth=1.6,
                zorder=5)
        boundary = getattr(plane, "boundary", plane)  # a PlaneEffect or a Boundary
        label = getattr(boundary, "label", "plane")
        # name the plane at the window's middle, on its far side
        mid = complex(0.5 * (x0 + x1), 0.5 * (y0 + y1))
        foot = image.point + image.direction * ((mid - image.point)
                                                / image.direction).real
        away = -1j * image.direction * (1.0 if image.fluid_above else -1.0)
        ax.annotate(f"{label}: no flow beyond", xy=(foot.real, foot.imag),
                    xytext=(6.0 * away.real, 6.0 * away.imag), textcoords="offset points",
                    ha="center", va="bottom" if image.fluid_above is False else "top",
                    rotation=float(np.degrees(np.angle(image.direction))),
                    rotation_mode="anchor", fontsize=FONT["legend"], color=INK, zorder=6,
                    bbox=dict(boxstyle="square,pad=0.15", facecolor=PLANE_FILL,
                              edgecolor="none"))
    for line in streamlines:
        sx, sy = _stream_xy(line)
        ok = np.isfinite(sx) & np.isfinite(sy)
        sx, sy = sx[ok], sy[ok]
        if len(sx) < 2:
            continue
        ax.plot(sx, sy, color=STREAM, linewidth=LINE["stream"], alpha=0.8, zorder=4)
        # one arrowhead per line, where it is inside the window, shows the flow direction
        inwin = np.flatnonzero((sx > x0) & (sx < x1) & (sy > y0) & (sy < y1))
        if len(inwin) > 2:
            m = int(inwin[len(inwin) // 3])
            m = min(m, len(sx) - 2)
            ax.annotate("", xy=(sx[m + 1], sy[m + 1]), xytext=(sx[m], sy[m]),
                        arrowprops=dict(arrowstyle="-|>", color=STREAM, linewidth=0.6,
                                        mutation_scale=7, shrinkA=0, shrinkB=0), zorder=4)

    ax.set_xlim(x0, x1)
    ax.set_ylim(y0, y1)
    ax.set_aspect("equal", adjustable="box")
    _style_axes(ax)
    ax.grid(False)
    for side in ("top", "right"):
        ax.spines[side].set_visible(True)
        ax.spines[side].set_color(MUTED)
        ax.spines[side].set_linewidth(0.7)
    ax.set_xlabel("x", fontsize=FONT["label"], color=INK)
    ax.set_ylabel("y", fontsize=FONT["label"], color=INK, rotation=0, labelpad=10)

    bar = fig.colorbar(filled, cax=cax)
    bar.set_label("Cp", fontsize=FONT["label"], color=INK, rotation=0, labelpad=12)
    bar.ax.tick_params(labelsize=FONT["tick"], colors=INK, length=2.5, width=0.6)
    bar.outline.set_linewidth(0.6)
    bar.outline.set_edgecolor(MUTED)

    alpha = float(field.alpha_deg[alpha_index])
    if title is None:
        title = f"Pressure field, angle of attack {_angle(alpha)}"
    fig.text(left / W, 1.0 - 0.25 / H, title, fontsize=FONT["title"], color=INK, weight="bold",
             va="center", ha="left")
    fig.text(left / W, 0.16 / H, SHORT_CAUTION + " Coordinates in the input frame.",
             fontsize=FONT["note"], color=MUTED, va="center", ha="left")
    return fig


def field_figure(field, bodies, path, streamlines=(), overwrite: bool = False, levels=None,
                 title: str | None = None, alpha_index: int = 0, plane=None) -> Path:
    """Write filled Cp contours of a grid flow field, with bodies and streamlines drawn over.

    Parameters
    ----------
    field : FlowField
        A grid field (``shape`` = (ny, nx), see :func:`panelflow.flow.field.grid_points`); NaN at
        points inside bodies.
    bodies : Analysis, Outline, Panelling or sequence of them or of (n, 2) point arrays
        Bodies to fill (an Analysis gives its outlines).
    path : str or Path
        Output file (``.png``, ``.svg``, ``.pdf``).
    streamlines : sequence
        Each an object with ``x`` and ``y`` arrays, an (n, 2) array or a complex array.
    overwrite : bool
    levels : int or sequence of float, optional
        Number of contour bands (default about 20, from the lowest Cp to 1) or the band edges.
    title : str, optional
    alpha_index : int
        Which of the field's angles to draw (default the first).
    plane : PlaneEffect, optional
        A result's wall or free surface (``Result.plane``): drawn as a line, with the far side
        shaded as no flow.

    Returns
    -------
    Path

    Raises
    ------
    OutputError, InputError
    """
    check_figure_path(path, overwrite)
    fig = _build_field_figure(field, bodies, streamlines, levels, title, alpha_index, plane)
    return _save(fig, path, overwrite)


# ------------------------------------------------------------------------------- polar figure
_POLAR_AX_H = 1.85  # inches per coefficient axes
_POLAR_AX_GAP = 0.14
_POLAR_MARKERS_UP_TO = 30  # points marked when a polar has at most this many angles


@dataclass(frozen=True)
class _PolarTrace:
    label: str
    alpha: np.ndarray
    cl: np.ndarray
    cm: np.ndarray
    cp_min: np.ndarray
    panels: str


def _polar_traces(items, labels) -> list:
    """Analyses, Polars or Tables (one per section, or a tidy table split by its section
    column) as traces sorted by angle."""
    from panelflow.output.tables import Polar, Table, polar

    items = list(items) if isinstance(items, (list, tuple)) else [items]
    if not items:
        raise InputError("no polar to draw")
    if labels is not None:
        labels = [str(lab) for lab in labels]
        if len(labels) != len(items):
            raise InputError(f"{len(labels)} labels for {len(items)} polars; give one each")
    out = []
    for j, item in enumerate(items):
        given = None if labels is None else labels[j]
        if hasattr(item, "fine"):
            item = polar(item, given)
        if isinstance(item, Polar):
            parts = [(given or item.label, item.alpha_deg, item.cl, item.cm, item.cp_min,
                      " + ".join(str(n) for n in item.panels))]
        elif isinstance(item, Table):
            if "section" in item.names:
                sections = list(dict.fromkeys(item["section"]))
                if len(sections) > 1 and given is not None:
                    raise InputError("a table of several sections takes its labels from its "
                                     "section column; give labels=None")
                groups = [(given or s, item.where("section", s)) for s in sections]
            else:
                groups = [(given or f"polar {j + 1}", item)]
            parts = [(lab, t["alpha_deg"], t["cl"], t["cm"], t["cp_min"], "")
                     for lab, t in groups]
        else:
            raise InputError(f"cannot draw a polar of a {type(item).__name__}: give an "
                             "Analysis, a Polar or a Table")
        for lab, a, cl, cm, cpm, panels in parts:
            a = np.asarray(a, float)
            order = np.argsort(a, kind="stable")
            out.append(_PolarTrace(str(lab), a[order], np.asarray(cl, float)[order],
                                   np.asarray(cm, float)[order], np.asarray(cpm, float)[order],
                                   panels))
    if any(len(t.alpha) == 0 for t in out):
        raise InputError("a polar without angles cannot be drawn")
    return out


def _lift_fit(alpha_deg, cl):
    """Zero-lift angle (deg) and lift slope (per radian at zero lift) of ``cl = A cos a + B sin a``.

    The circulation lift of one geometry is exactly of this form (superposition of two unit
    solutions), so two angles fix it; the fit is used only where it reproduces the data to
    1e-9 (a table from elsewhere may not follow it). Returns (nan, nan) otherwise.
    """
    a = np.radians(alpha_deg)
    ok = np.isfinite(cl)
    if ok.sum() < 2 or np.ptp(a[ok]) < 1e-6:
        return float("nan"), float("nan")
    basis = np.column_stack([np.cos(a[ok]), np.sin(a[ok])])
    (coef_a, coef_b), *_ = np.linalg.lstsq(basis, cl[ok], rcond=None)
    amp = float(np.hypot(coef_a, coef_b))
    if amp < 1e-12 or np.max(np.abs(basis @ [coef_a, coef_b] - cl[ok])) > 1e-9 * max(amp, 1):
        return float("nan"), float("nan")
    # A cos a + B sin a = amp sin(a - a0) with a0 the zero-lift angle
    a0 = float(np.degrees(np.arctan2(-coef_a, coef_b)))
    return a0, amp


def _build_polar_figure(items, labels=None, title=None):
    """The polar figure, unsaved (see :func:`polar_figure`).

    Returns
    -------
    matplotlib.figure.Figure
        ``fig.axes[0:3]`` are the Cl, Cm and Cp-min axes (the last with y inverted: suction up),
        sharing the angle-of-attack axis; the legend is on the Cl axes.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.ticker import MaxNLocator

    traces = _polar_traces(items, labels)
    plot_w = _W - _LEFT - _RIGHT
    note = _note_lines(CAUTION, _W - _LEFT - _RIGHT, FONT["note"])
    note_h = 0.12 + _NOTE_LINE_H * len(note)
    axes_h = 3 * _POLAR_AX_H + 2 * _POLAR_AX_GAP
    n_cols = max(1, min(len(traces), 4))
    legend_h = 0.2 * -(-len(traces) // n_cols) + 0.12
    # the results strip under the plot: one row per section
    rows = []
    for j, t in enumerate(traces):
        a_zero, slope = _lift_fit(t.alpha, t.cl)
        i_min = int(np.nanargmin(t.cp_min)) if np.isfinite(t.cp_min).any() else None
        rows.append((_colour(j), (
            t.label, t.panels or "not recorded",
            f"{len(t.alpha)}, {_angle(t.alpha[0])} to {_angle(t.alpha[-1])}",
            "not fitted" if not np.isfinite(a_zero) else _angle(a_zero),
            "not fitted" if not np.isfinite(slope) else f"{slope:.4f}",
            "undefined" if i_min is None else _fixed(t.cp_min[i_min], 3),
            "" if i_min is None else _angle(t.alpha[i_min]))))
    table = _Table(("section", "panels", "angles", "zero-lift\nangle", "lift slope\n[per rad]",
                    "lowest Cp\n(every body)", "at angle\nof attack"), tuple(rows))
    table_h = _HEAD_H + 0.1 + _ROW_H * len(rows) + 0.15
    H = _TITLE_H + legend_h + axes_h + _XLABEL_H + table_h + note_h
    fig = Figure(figsize=(_W, H))
    FigureCanvasAgg(fig)

    def rect(left, bottom, width, height):
        return [left / _W, bottom / H, width / _W, height / H]

    top = note_h + table_h + _XLABEL_H + axes_h
    axes = []
    for k in range(3):
        bottom = top - (k + 1) * _POLAR_AX_H - k * _POLAR_AX_GAP
        ax = fig.add_axes(rect(_LEFT, bottom, plot_w, _POLAR_AX_H),
                          sharex=axes[0] if axes else None)
        _style_axes(ax)
        axes.append(ax)
    ax_cl, ax_cm, ax_cp = axes
    many = max(len(t.alpha) for t in traces) > _POLAR_MARKERS_UP_TO
    for j, t in enumerate(traces):
        # a colour and a marker of its own for each section (markers stay on with more
        # sections than colours, so no two sections look alike)
        marked = not many or j >= len(PALETTE)
        style = dict(color=_colour(j), linewidth=LINE["upper"], solid_joinstyle="round",
                     zorder=3, marker=_marker(j) if marked else None,
                     markersize=2.8 if j < len(PALETTE) else 3.6, markeredgewidth=0,
                     markevery=max(1, len(t.alpha) // 15) if many else 1)
        ax_cl.plot(t.alpha, t.cl, **style)
        ax_cm.plot(t.alpha, t.cm, **style)
        ax_cp.plot(t.alpha, t.cp_min, **style)
    for ax, name in ((ax_cl, "Cl"), (ax_cm, "Cm"), (ax_cp, "lowest Cp")):
        ax.axhline(0.0, color=MUTED, linewidth=0.7, zorder=1)
        ax.axvline(0.0, color=RULE, linewidth=0.8, zorder=1)
        # upright labels along the axes' left edge: clear of tick labels of any width
        ax.set_ylabel(name, fontsize=FONT["label"], color=INK, rotation=90, ha="center",
                      va="center")
        ax.yaxis.set_label_coords(-_YLABEL_X / plot_w, 0.5)
        ax.yaxis.set_major_locator(MaxNLocator(nbins=6, steps=[1, 2, 2.5, 5, 10]))
    for ax in (ax_cl, ax_cm):
        ax.tick_params(labelbottom=False)
    ax_cp.invert_yaxis()  # suction up, as on the Cp figures
    a_all = np.concatenate([t.alpha for t in traces])
    a0, a1 = float(a_all.min()), float(a_all.max())
    pad = 0.03 * (a1 - a0) if a1 > a0 else 1.0
    ax_cp.set_xlim(a0 - pad, a1 + pad)
    ax_cp.xaxis.set_major_locator(MaxNLocator(nbins=10, steps=[1, 2, 2.5, 5, 10],
                                              integer=True))
    ax_cp.xaxis.set_major_formatter(lambda v, _pos: _minus(f"{v:g}°"))
    ax_cp.set_xlabel("angle of attack", fontsize=FONT["label"], color=INK)

    if title is None:
        title = "Lift, pitching moment and suction peak against angle of attack"
    fig.text(_LEFT / _W, 1.0 - 0.22 / H, title, fontsize=FONT["title"], color=INK,
             weight="bold", va="center", ha="left")

    # legend in rows along the top of the Cl axes
    handles = [Line2D([], [], color=_colour(j), linewidth=LINE["upper"],
                      marker=_marker(j) if (not many or j >= len(PALETTE)) else None,
                      markersize=3.6, markeredgewidth=0) for j in range(len(traces))]
    leg = ax_cl.legend(handles, [t.label for t in traces], loc="lower left",
                       bbox_to_anchor=(0.0, 1.0 + 0.06 / _POLAR_AX_H), ncol=n_cols,
                       fontsize=FONT["legend"], frameon=False, borderpad=0.0,
                       borderaxespad=0.0, handlelength=2.3, handletextpad=0.5,
                       columnspacing=1.4, labelspacing=0.35)
    for text in leg.get_texts():
        text.set_color(INK)
    _draw_table(fig, table, _LEFT - 0.3, note_h + table_h - 0.05, _W - _LEFT - _RIGHT + 0.3,
                _W, H)

    fig.text(_LEFT / _W, (0.08 + _NOTE_LINE_H * (len(note) - 0.5)) / H, "\n".join(note),
             fontsize=FONT["note"], color=MUTED, va="center", ha="left", linespacing=1.35)
    return fig


def polar_figure(analyses_or_tables, labels=None, path=None, overwrite: bool = False,
                 title: str | None = None) -> Path:
    """Write Cl, Cm and the minimum Cp against the angle of attack, several sections overlaid.

    Three axes share the angle-of-attack axis: lift coefficient, pitching moment coefficient
    (about each case's reference point, nose-up positive) and the lowest Cp over every body with
    suction upward, as on the Cp figures. The legend above names the sections; the strip beneath
    gives for each its panels, angle range, the zero-lift angle and lift slope fitted to
    ``cl = A cos(alpha) + B sin(alpha)`` (exact for the inviscid circulation lift of one
    geometry; "not fitted" where the data do not follow it) and its lowest Cp with its angle.

    Parameters
    ----------
    analyses_or_tables : Analysis, Polar or Table, or a sequence of them
        One per section; a :class:`~panelflow.output.tables.Table` with a ``section`` column (a study
        table) gives one curve per section.
    labels : sequence of str, optional
        One legend label per item; default each polar's label (an analysis: its body names).
    path : str or Path
        Output file (``.png``, ``.svg``, ``.pdf``).
    overwrite : bool
    title : str, optional

    Returns
    -------
    Path

    Raises
    ------
    OutputError
        Unknown extension, missing folder, or an existing file without ``overwrite``.
    InputError
        Nothing to draw, labels that do not match the items.
    """
    if path is None:
        raise InputError("polar_figure: give the figure's path")
    check_figure_path(path, overwrite)
    return _save(_build_polar_figure(analyses_or_tables, labels, title), path, overwrite)
