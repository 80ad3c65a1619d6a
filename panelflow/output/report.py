"""Readable text reports: the tables ``panelflow solve`` and ``panelflow check`` print.

Only formatting lives here; the numbers come from :mod:`panelflow.analysis` and
:mod:`panelflow.geometry.check`.
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass

import numpy as np

from panelflow.analysis.result import as_result, margin_columns
from panelflow.output.columns import describe
from panelflow.output.writers import CAUTION


def _num(v, fmt):
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return ""  # undefined: a blank cell (the notes say why)
    return format(v, fmt)


def decimals(errors) -> int:
    """Decimals that reach the digit the largest error estimate affects (3 to 8)."""
    finite = [e for e in errors if math.isfinite(e) and e > 0]
    if not finite:
        return 5
    return min(8, max(3, -int(math.floor(math.log10(max(finite))))))


# ------------------------------------------------------------------------- aligned text tables
@dataclass(frozen=True)
class TextColumn:
    """One column of a text table: header words, unit, the cells, and which side they keep.

    The header is the words wrapped to the column's width (never cut: a long word widens the
    column), the unit in brackets beneath; a rule of dashes marks each column's extent.
    """

    words: str
    unit: str
    cells: tuple
    left: bool = False

    @classmethod
    def of(cls, name: str, cells, left: bool = False, words: str | None = None):
        """A column described by :mod:`panelflow.output.columns` (``words`` overrides)."""
        d = describe(name)
        return cls(d.words if words is None else words, d.unit, tuple(cells), left)


_MIN_WIDTH = 7


def text_table(columns, indent: int = 0) -> list:
    """Lines of an aligned table: wrapped headers, units, a rule, then the rows.

    Parameters
    ----------
    columns : sequence of TextColumn
        All with the same number of cells.
    indent : int
        Blanks before every line.
    """
    columns = list(columns)
    widths, heads = [], []
    for c in columns:
        longest_word = max((len(w) for w in c.words.split()), default=0)
        unit = f"[{c.unit}]" if c.unit else ""
        w = max([_MIN_WIDTH, longest_word, len(unit), *(len(x) for x in c.cells)])
        # a short column takes two header lines at most: widen it rather than stack words
        lines = textwrap.wrap(c.words, w, break_long_words=False) or [""]
        while len(lines) > 2 and w < len(c.words):
            w += 1
            lines = textwrap.wrap(c.words, w, break_long_words=False)
        widths.append(w)
        heads.append(lines + ([unit] if unit else []))
    height = max(len(h) for h in heads)
    pad = " " * indent
    out = []
    for row in range(height):
        cells = []
        for c, w, h in zip(columns, widths, heads, strict=True):
            k = row - (height - len(h))  # headers sit on the rule
            text = h[k] if k >= 0 else ""
            cells.append(text.ljust(w) if c.left else text.rjust(w))
        out.append(pad + "  ".join(cells).rstrip())
    out.append(pad + "  ".join("-" * w for w in widths))
    n = len(columns[0].cells) if columns else 0
    for i in range(n):
        cells = [(c.cells[i].ljust(w) if c.left else c.cells[i].rjust(w))
                 for c, w in zip(columns, widths, strict=True)]
        out.append(pad + "  ".join(cells).rstrip())
    return out


def _peak_columns(result, several: bool) -> list:
    """Suction peak over all bodies: value, position and (several bodies) the body."""
    from panelflow.output.writers import suction_peak

    cp, x, k = suction_peak(result)
    names = [o.name for o in result.outlines]
    cols = [TextColumn.of("cp_min", [f"{v:.4f}" for v in cp]),
            TextColumn.of("x_cp_min", [_num(float(v), ".4f") for v in x])]
    if several:
        cols.append(TextColumn.of("cp_min_body", [names[int(j)] for j in k], left=True,
                                  words="on body"))
    return cols


def lift_line_text(result) -> str:
    """The zero-lift angle and lift slope in one sentence."""
    from panelflow.output.tables import lift_line

    a0, slope = lift_line(result)
    if not (math.isfinite(a0) and math.isfinite(slope)):
        return "zero-lift angle and lift slope: not found (near a plane they need two angles)"
    how = ("exact for this geometry in free space" if result.plane is None else
           "interpolated between the two angles closest to zero lift")
    return (f"zero-lift angle {a0:.3f} deg, lift slope {slope:.5f} per deg "
            f"({slope * 180.0 / math.pi:.4f} per rad; {how})")


# The sections of the solve report after its main tables, in order: each takes the result and
# returns its text ("" when the result has no such part). A new part of the analysis adds its
# section with add_solve_section(function).
SOLVE_SECTIONS: list = []


def add_solve_section(func):
    """Append a section to the ``solve`` report (usable as a decorator); returns ``func``."""
    SOLVE_SECTIONS.append(func)
    return func


def solve_table(result) -> str:
    """The ``solve`` report: per-angle totals, per-body rows when there is more than one body,
    the zero-lift angle and lift slope, then every section of :data:`SOLVE_SECTIONS`
    (compressibility, cavitation, plane, ...), the notes on the model's limits and the
    cautions."""
    result = as_result(result)
    analysis = result
    lines = []
    o = analysis.outlines
    several = len(o) > 1
    ref = analysis.reference_point
    lines.append("bodies: " + "; ".join(f"({k + 1}) {b.name}" if several else b.name
                                        for k, b in enumerate(o)))
    lines.append(f"panels: {', '.join(str(p.n_panels) for p in analysis.panellings)}; "
                 f"chord {analysis.chord:.6g} outline units; moments about ({ref[0]:.6g}, "
                 f"{ref[1]:.6g}), nose-up positive; every x/c along the main body's chord line")
    if result.plane is not None:
        lines.append(_plane_line(result))
    lines.append("")
    # one number of decimals per column, down to the digit the largest error estimate affects
    dl = decimals(analysis.cl_error_estimate)
    dm = decimals(analysis.cm_error_estimate)
    rs = list(analysis)
    cols = [
        TextColumn.of("alpha_deg", [f"{r.alpha_deg:.2f}" for r in rs]),
        TextColumn.of("cl", [f"{r.cl:.{dl}f}" for r in rs]),
        TextColumn.of("cl_error_estimate", [_num(r.cl_error_estimate, ".1e") for r in rs],
                      words="error estimate"),
        TextColumn.of("cm", [f"{r.cm:.{dm}f}" for r in rs]),
        TextColumn.of("cm_error_estimate", [_num(r.cm_error_estimate, ".1e") for r in rs],
                      words="error estimate"),
        TextColumn.of("cd_pressure", [f"{r.cd_pressure:.1e}" for r in rs]),
        TextColumn.of("cl_pressure", [f"{r.cl_pressure:.5f}" for r in rs]),
        TextColumn.of("x_center_of_pressure", [_num(r.x_center_of_pressure, ".4f")
                                               for r in rs]),
        *_peak_columns(result, several),
        TextColumn.of("x_stagnation", [_num(r.bodies[0].x_stagnation, ".4f") for r in rs]),
    ]
    lines += text_table(cols)
    lines.append(lift_line_text(result))
    if several:
        lines += ["", "per body:"]
        pairs = [(r, b) for r in rs for b in r.bodies]
        lines += text_table([
            TextColumn.of("alpha_deg", [f"{r.alpha_deg:.2f}" for r, _ in pairs]),
            TextColumn.of("body", [b.name for _, b in pairs], left=True),
            TextColumn.of("cl", [f"{b.cl:.5f}" for _, b in pairs]),
            TextColumn.of("cm", [f"{b.cm:.5f}" for _, b in pairs]),
            TextColumn.of("cd_pressure", [f"{b.cd_pressure:.1e}" for _, b in pairs]),
            TextColumn.of("cp_min", [f"{b.cp_min:.4f}" for _, b in pairs]),
            TextColumn.of("x_cp_min", [_num(b.x_cp_min, ".4f") for _, b in pairs]),
            TextColumn("base pressure coefficient", "",
                       tuple(_num(b.cp_base, ".4f") for _, b in pairs)),
        ])
    else:
        cpb = [r.bodies[0].cp_base for r in analysis]
        if not all(math.isnan(v) for v in cpb):
            lines.append("base pressure coefficient of the blunt trailing edge: "
                         + ", ".join(f"{v:.4f}" for v in cpb))
    lines.append("")
    if any(o.kind == "blunt" for o in o):
        lines.append("blunt trailing edge: the base carries the pressure of the flow leaving its "
                     "corners, above the")
        lines.append("  (viscous) real base pressure, so there the pressure drag is no drag "
                     "estimate and no accuracy check")
    lines.append("lift coefficient: from the circulation (Kutta-Joukowski); pressure lift: the "
                 "surface pressure integrated;")
    lines.append("pressure drag: zero in exact inviscid flow (shows the discretisation error); "
                 "error estimate: panels and input points;")
    lines.append("lowest Cp: the suction peak over every body; a blank cell is undefined (the "
                 "notes say why)")
    if result.plane is not None:
        lines.append("near a plane, the lift coefficient is the generalised circulation "
                     "(Lagally) lift: the bodies and their image pull on each other")
    text = "\n".join(lines) + "\n"
    text += "".join(section(result) for section in SOLVE_SECTIONS)
    notes = [f"note: {n}" for n in result.notes if n not in _margin_warnings(result)]
    cautions = [f"caution: {c}" for c in (*_cautions(result), CAUTION)]
    return text + "".join(line + "\n" for line in notes + cautions)


def _margin_warnings(result) -> tuple:
    c = result.compressibility
    return tuple(c.warnings) if c is not None else ()


def _cautions(result) -> tuple:
    out = ()
    if result.cavitation is not None:
        out += tuple(result.cavitation.cautions)
    if result.plane is not None:
        out += tuple(result.plane.cautions)
    return out


def _plane_line(result) -> str:
    p = result.plane
    side = "above" if p.boundary.above else "below"
    return (f"{p.boundary.label} {p.boundary.distance:.6g} {side} ({p.pitch_point[0]:.6g}, "
            f"{p.pitch_point[1]:.6g}), parallel to the freestream at every angle (coordinates "
            "are the outlines' own)")


def margins_text(result) -> str:
    """The sections of :data:`SOLVE_SECTIONS` for a result, each only when it was computed."""
    return "".join(section(result) for section in SOLVE_SECTIONS)


def viscous_table(result) -> str:
    """The viscous analysis per angle: lift, moment, drag and its parts, transition, separation."""
    v = result.viscous
    tr = v.transition
    trips = [f"{side} trip at x/c {x:g}" for side, x in (("upper", tr.upper_trip),
                                                        ("lower", tr.lower_trip)) if x is not None]
    lines = ["", f"viscous analysis at Reynolds number {v.reynolds:.4g} ({v.reynolds_source}); "
             f"transition at amplification factor {tr.critical_amplification:.3g}"
             + (", " + ", ".join(trips) if trips else "")]
    rows = {k: [] for k in ("alpha_deg", "cl_viscous", "cm_viscous", "cd", "cd_friction",
                            "cd_form", "lift_to_drag", "transition_upper", "transition_lower",
                            "separation_upper", "separation_lower")}
    remarks = []
    for a, r, late in zip(result.alpha_deg, v.results, v.after_failure):
        rows["alpha_deg"].append(f"{a:.2f}")
        if not r.converged:
            for k in list(rows)[1:]:
                rows[k].append("")
            remarks.append(f"not converged (residual {r.residual:.1e} after {r.iterations} "
                           "iterations): no numbers")
            continue
        rows["cl_viscous"].append(f"{r.cl:.4f}")
        rows["cm_viscous"].append(f"{r.cm:.5f}")
        rows["cd"].append(f"{r.cd:.5f}")
        rows["cd_friction"].append(f"{r.cd_friction:.5f}")
        rows["cd_form"].append(f"{r.cd_pressure:.5f}")
        rows["lift_to_drag"].append(f"{r.lift_to_drag:.1f}")
        rows["transition_upper"].append(_blank(r.transition_upper)
                                        + (" trip" if r.transition_upper_forced else ""))
        rows["transition_lower"].append(_blank(r.transition_lower)
                                        + (" trip" if r.transition_lower_forced else ""))
        rows["separation_upper"].append(_blank(r.separation_upper))
        rows["separation_lower"].append(_blank(r.separation_lower))
        remarks.append("reached after an unconverged angle: check" if late else "")
    cols = [TextColumn.of(k, cells) for k, cells in rows.items()]
    if any(remarks):
        cols.append(TextColumn("remark", "", tuple(remarks), left=True))
    lines += text_table(cols)
    lines.append("drag from the wake far downstream; friction: the skin friction; form: the rest "
                 "(pressure drag of the boundary layer's displacement); trip: transition at a "
                 "trip; separation: where the skin friction first turns negative (blank: none); "
                 "transition blank: laminar to the trailing edge")
    lines.append(f"limits: {v.limits}")
    return "\n".join(lines) + "\n"


def _blank(v: float) -> str:
    return "" if not math.isfinite(v) else f"{v:.3f}"


def _resolution_lines(rep) -> list[str]:
    """How well the points define the shape, in the outline's units and in % of chord."""
    if not rep.panels:  # not measured (the outline is unusable)
        return []
    c = rep.chord

    def pct(v):
        return f"{100 * v / c:.2g} % of chord"

    if rep.scatter_cause == "rounding":
        cause = f"what rounding the coordinates to {rep.rounding:g} gives"
    elif rep.scatter_cause == "noise":
        cause = "random, as digitising noise is" + (
            f" (more than the rounding to {rep.rounding:g} gives)" if rep.rounding else "")
    else:
        cause = "the curve's own bending between the points, not noise"
    return [
        f"  spacing          up to {rep.largest_spacing:.2g} ({pct(rep.largest_spacing)}); "
        f"{rep.nose_spacing:.2g} at the nose, whose radius is about {rep.nose_radius:.2g}; "
        f"turns up to {rep.largest_turn_deg:.0f} deg from point to point",
        f"  scatter          {rep.scatter:.2g} ({pct(rep.scatter)}) about a smooth curve "
        f"through the neighbours: {cause}",
        f"  panels           checked on the curve through the points at {rep.panels} and "
        f"{max(8, rep.panels // 2)} panels",
    ]


def check_table(reports, overlap_messages) -> str:
    """The ``panelflow check`` report."""
    lines = []
    for rep in reports:
        lines.append(f"{rep.name}  ({rep.source or 'built in'})")
        lines.append(f"  points           {rep.n_points}")
        te = rep.trailing_edge
        kind = {"sharp": "sharp", "blunt": "blunt (base)", "none": "none (smooth body)"}[te]
        lines.append(f"  trailing edge    {kind}; gap {rep.trailing_edge_gap:.6g}; included angle "
                     f"{rep.trailing_edge_angle_deg:.2f} deg")
        lines.append(f"  leading edge     ({rep.leading_edge[0]:.6g}, {rep.leading_edge[1]:.6g})")
        lines.append(f"  trailing edge at ({rep.trailing_edge_point[0]:.6g}, "
                     f"{rep.trailing_edge_point[1]:.6g})")
        lines.append(f"  chord            {rep.chord:.6g}; chord-line incidence "
                     f"{rep.chord_angle_deg:.3f} deg (nose-up positive)")
        lines.append(f"  thickness        {_num(100 * rep.max_thickness, '.2f')} % of chord; "
                     f"area {rep.area:.6g}")
        lines += _resolution_lines(rep)
        lines.append("  status           " + ("ok" if rep.ok else "; ".join(rep.problems)))
        lines += [f"  warning          {w}" for w in rep.warnings]
    for msg in overlap_messages:
        lines.append("problem: " + msg)
    lines.append("lengths in the outline's own units; spacing, scatter and nose radius measured "
                 "on the input points")
    return "\n".join(lines) + "\n"


def compare_table(analyses, labels) -> str:
    """Each case and angle (``panelflow compare``): lift and moment with their error
    estimates, the suction peak over all bodies, every margin column the results carry, then
    each case's zero-lift angle and lift slope."""
    from panelflow.output.tables import lift_line
    from panelflow.output.writers import suction_peak

    results = [as_result(a) for a in analyses]
    labels = [str(lab) for lab in labels]
    several = any(len(r.outlines) > 1 for r in results)
    case, alpha, cl, ecl, cm, ecm, cp, x, body = ([] for _ in range(9))
    margins: dict = {}
    for label, r in zip(labels, results, strict=True):
        peak, at, k = suction_peak(r)
        names = [o.name for o in r.outlines]
        for i, row in enumerate(r):
            case.append(label)
            alpha.append(f"{row.alpha_deg:.2f}")
            cl.append(f"{row.cl:.5f}")
            ecl.append(_num(row.cl_error_estimate, ".1e"))
            cm.append(f"{row.cm:.5f}")
            ecm.append(_num(row.cm_error_estimate, ".1e"))
            cp.append(f"{peak[i]:.4f}")
            x.append(_num(float(at[i]), ".4f"))
            body.append(names[int(k[i])])
    n = len(case)
    row0 = 0
    for r in results:
        for name, values in margin_columns(r).items():
            margins.setdefault(name, [""] * n)
            spec = ".1e" if name.endswith("_error_estimate") else ".5g"
            for i, v in enumerate(np.asarray(values, float)):
                margins[name][row0 + i] = _num(float(v), spec)
        row0 += len(r)
    cols = [TextColumn.of("section", case, left=True, words="case"),
            TextColumn.of("alpha_deg", alpha), TextColumn.of("cl", cl),
            TextColumn.of("cl_error_estimate", ecl, words="error estimate"),
            TextColumn.of("cm", cm),
            TextColumn.of("cm_error_estimate", ecm, words="error estimate"),
            TextColumn.of("cp_min", cp), TextColumn.of("x_cp_min", x)]
    if several:
        cols.append(TextColumn.of("cp_min_body", body, left=True, words="on body"))
    cols += [TextColumn.of(name, cells) for name, cells in margins.items()]
    lines = text_table(cols)
    lines.append("")
    fits = [lift_line(r) for r in results]
    lines += text_table([
        TextColumn.of("section", labels, left=True, words="case"),
        TextColumn.of("alpha_zero_lift_deg", [_num(a, ".3f") for a, _ in fits]),
        TextColumn.of("lift_slope_per_deg", [_num(b, ".5f") for _, b in fits]),
    ])
    lines.append("")
    lines.append("moments about each case's own reference point (default its quarter chord), "
                 "nose-up positive; x/c along each case's main chord line;")
    lines.append("lowest Cp: the suction peak over all bodies of the case; zero-lift angle and "
                 "lift slope exact in free space, interpolated near a plane")
    for label, r in zip(labels, results, strict=True):
        lines += [f"note: {label}: {n_}" for n_ in r.notes]
    lines += _viscous_ranking(analyses, labels)
    lines.append("caution: " + CAUTION)
    return "\n".join(lines) + "\n"


def _viscous_ranking(results, labels) -> list:
    """With the viscous analysis and one angle per case (a target lift): the cases ranked by
    lift-to-drag ratio (the drag and transition per angle are the table's viscous columns)."""
    if not results or any(getattr(r, "viscous", None) is None for r in results):
        return []
    target = results[0].operating.target_cl
    if target is None or not all(len(r) == 1 for r in results):
        return []
    ranked = sorted(((r.viscous.results[0].lift_to_drag, lab) for lab, r in
                     zip(labels, results) if r.viscous.results[0].converged), reverse=True)
    return [f"ranked by lift-to-drag ratio at viscous lift coefficient {target:g}: "
            + "; ".join(f"{k + 1}. {lab} ({ld:.1f})" for k, (ld, lab) in enumerate(ranked))]


def field_summary(flow, analysis) -> str:
    """Short account of a computed field (``panelflow field``)."""
    cp = flow.cp[0]
    outside = ~flow.inside
    alpha = analysis.alpha_deg[0]
    lines = [f"field at alpha {alpha:g} deg: {len(flow.points)} points"
             + (f" on a {flow.shape[1]} x {flow.shape[0]} grid" if len(flow.shape) == 2 else "")
             + f", {int(flow.inside.sum())} inside bodies",
             f"Cp from {np.nanmin(cp[outside]):.4f} to {np.nanmax(cp[outside]):.4f}; "
             f"speed up to {np.nanmax(flow.speed[0][outside]):.4f} x freestream",
             f"cl {analysis.cl[0]:.5f}, cm {analysis.cm[0]:.5f}"]
    plane = getattr(analysis, "plane", None)
    if plane is not None:
        lines.append(f"near a {plane.boundary.label}: points beyond the plane are masked")
    return "\n".join(lines) + "\n"


def compressibility_table(c) -> str:
    """Compressibility-corrected coefficients and critical Mach numbers (``solve --mach``)."""
    cp_min = np.min(np.asarray(c.cp_min).reshape(len(c.alpha_deg), -1), axis=1)
    n = len(c.alpha_deg)
    lines = ["", f"compressibility: {c.rule} at Mach {c.mach:g}; critical Cp* {c.cp_star:.4f} "
             "(isentropic, NACA Report 1135)"]
    lines += text_table([
        TextColumn.of("alpha_deg", [f"{a:.2f}" for a in c.alpha_deg]),
        TextColumn.of("cl_mach", [f"{c.cl[i]:.5f}" for i in range(n)],
                      words="lift coefficient"),
        TextColumn.of("cl_mach_error_estimate",
                      [_num(float(c.cl_error_estimate[i]), ".1e") for i in range(n)],
                      words="error estimate"),
        TextColumn.of("cm_mach", [f"{c.cm[i]:.5f}" for i in range(n)],
                      words="moment coefficient"),
        TextColumn.of("cm_mach_error_estimate",
                      [_num(float(c.cm_error_estimate[i]), ".1e") for i in range(n)],
                      words="error estimate"),
        TextColumn.of("cp_min_mach", [f"{v:.4f}" for v in cp_min], words="lowest Cp"),
        TextColumn.of("mach_critical", [_num(float(c.critical_mach[i]), ".4f")
                                        for i in range(n)]),
        TextColumn("sonic", "", tuple("sonic: model not valid" if c.supercritical[i] else ""
                                      for i in range(n)), left=True),
    ])
    lines.append("coefficients corrected by the rule; lowest Cp over all bodies; sonic: the "
                 "suction peak reaches Cp*")
    lines += [f"warning: {w}" for w in c.warnings]
    return "\n".join(lines) + "\n"


def cavitation_table(v, alpha_deg, depth, fluid, speed, source: str = "") -> str:
    """Cavitation inception check at a running depth (``solve --depth``)."""
    n = len(alpha_deg)
    lines = ["", f"cavitation at {depth:g} m depth in {fluid}"
             + (f", {speed:g} m/s: cavitation number {float(np.ravel(v.sigma)[0]):.4f}"
                if speed else "") + " (inception when -Cp_min >= cavitation number)"]
    cols = [TextColumn.of("alpha_deg", [f"{a:.2f}" for a in alpha_deg]),
            TextColumn("minus the lowest Cp", "", tuple(f"{-v.section_cp_min[i]:.4f}"
                                                        for i in range(n))),
            TextColumn.of("inception_speed", [f"{v.section_inception_speed[i]:.2f}"
                                              for i in range(n)])]
    if speed:
        cols += [TextColumn.of("cavitation_margin", [f"{v.margin[i]:.3f}" for i in range(n)]),
                 TextColumn("cavitating", "", tuple("cavitating" if v.cavitating[i] else ""
                                                    for i in range(n)), left=True)]
    lines += text_table(cols)
    lines.append("inception speed: the freestream speed at which the suction peak reaches the "
                 "vapour pressure at this depth; margin: cavitation number plus the lowest Cp")
    if source:
        lines.append(f"fluid properties: {source}")
    return "\n".join(lines) + "\n"


def plane_table(result) -> str:
    """The plane's effect per angle: clearance and lift and moment against free space."""
    p = result.plane
    n = len(result.alpha_deg)
    lines = ["", f"{p.boundary.label}: effect on the bodies"]
    lines += text_table([
        TextColumn.of("alpha_deg", [f"{a:.2f}" for a in result.alpha_deg]),
        TextColumn.of("plane_clearance", [f"{p.clearance[i]:.4g}" for i in range(n)],
                      words="clearance"),
        TextColumn.of("cl", [f"{result.cl[i]:.5f}" for i in range(n)]),
        TextColumn.of("cl_free_space", [f"{p.cl_free[i]:.5f}" for i in range(n)]),
        TextColumn("lift ratio", "", tuple(_num(float(p.cl_ratio[i]), ".4f") for i in range(n))),
        TextColumn.of("cm", [f"{result.cm[i]:.5f}" for i in range(n)]),
        TextColumn.of("cm_free_space", [f"{p.cm_free[i]:.5f}" for i in range(n)]),
    ])
    lines.append("clearance: smallest distance from the bodies to the plane (outline units); "
                 "free space: the same bodies without the plane; lift ratio: near the plane "
                 "over free space")
    return "\n".join(lines) + "\n"


@add_solve_section
def _compressibility_section(result) -> str:
    c = result.compressibility
    return "" if c is None else compressibility_table(c)


@add_solve_section
def _cavitation_section(result) -> str:
    if result.cavitation is None:
        return ""
    op = result.operating
    return cavitation_table(result.cavitation, result.alpha_deg, op.depth, op.fluid.name,
                            op.speed, op.fluid.source)


@add_solve_section
def _plane_section(result) -> str:
    return "" if result.plane is None else plane_table(result)


@add_solve_section
def _viscous_section(result) -> str:
    return "" if result.viscous is None else viscous_table(result)
