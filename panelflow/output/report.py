"""Readable text reports: the tables ``panelflow solve`` and ``panelflow check`` print.

Only formatting lives here; the numbers come from :mod:`panelflow.analysis` and
:mod:`panelflow.geometry.check`.
"""

from __future__ import annotations

import math

import numpy as np

from panelflow.analysis.result import as_result
from panelflow.output.writers import CAUTION

def _num(v, fmt):
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "-".rjust(int(fmt.split(".")[0] or 0))  # keep the column width
    return format(v, fmt)


def decimals(errors) -> int:
    """Decimals that reach the digit the largest error estimate affects (3 to 8)."""
    finite = [e for e in errors if math.isfinite(e) and e > 0]
    if not finite:
        return 5
    return min(8, max(3, -int(math.floor(math.log10(max(finite))))))


def solve_table(result) -> str:
    """The ``solve`` report: per-angle totals, per-body lines when there is more than one body,
    then every margin the result carries (compressibility, cavitation, plane), the notes on the
    model's limits and the caution."""
    result = as_result(result)
    analysis = result
    lines = []
    o = analysis.outlines
    names = ", ".join(b.name for b in o)
    ref = analysis.reference_point
    lines.append(f"bodies: {names}")
    lines.append(f"panels: {', '.join(str(p.n_panels) for p in analysis.panellings)}   "
                 f"chord {analysis.chord:.6g}   moments about ({ref[0]:.6g}, {ref[1]:.6g}), "
                 "nose-up positive")
    if result.plane is not None:
        lines.append(_plane_line(result))
    head = (f"{'alpha':>7} {'cl':>10} {'+/-':>8} {'cm':>10} {'+/-':>8} {'cd_p':>9} "
            f"{'cl_p':>9} {'x_cp':>7} {'cp_min':>8} {'at x/c':>7} {'stag x/c':>8}")
    lines.append(head)
    # one number of decimals per column, down to the digit the largest error estimate affects
    dl = decimals(analysis.cl_error_estimate)
    dm = decimals(analysis.cm_error_estimate)
    for r in analysis:
        main = r.bodies[0]
        lines.append(
            f"{r.alpha_deg:7.2f} {r.cl:10.{dl}f} "
            f"{_num(r.cl_error_estimate, '8.1e')} {r.cm:10.{dm}f} "
            f"{_num(r.cm_error_estimate, '8.1e')} {r.cd_pressure:9.1e} {r.cl_pressure:9.5f} "
            f"{_num(r.x_center_of_pressure, '7.4f')} {main.cp_min:8.4f} "
            f"{_num(main.x_cp_min, '7.4f')} {_num(main.x_stagnation, '8.4f')}")
    if len(o) > 1:
        lines.append("")
        lines.append(f"{'alpha':>7} {'body':<16} {'cl':>9} {'cm':>9} {'cd_p':>9} {'cp_min':>8} "
                     f"{'cp_base':>8}")
        for r in analysis:
            for b in r.bodies:
                lines.append(f"{r.alpha_deg:7.2f} {b.name[:16]:<16} {b.cl:9.5f} {b.cm:9.5f} "
                             f"{b.cd_pressure:9.1e} {b.cp_min:8.4f} {_num(b.cp_base, '8.4f')}")
    else:
        cpb = [r.bodies[0].cp_base for r in analysis]
        if not all(math.isnan(v) for v in cpb):
            lines.append("base pressure of the blunt trailing edge: "
                         + ", ".join(f"{v:.4f}" for v in cpb))
    lines.append("")
    if any(o.kind == "blunt" for o in o):
        lines.append("blunt trailing edge: the base carries the pressure of the flow leaving its "
                     "corners, above the")
        lines.append("  (viscous) real base pressure, so there cd_p is no drag estimate and no "
                     "accuracy check")
    lines.append("cl: lift from the circulation (Kutta-Joukowski); cl_p: pressure-integrated lift;")
    lines.append("cd_p: pressure drag, zero in exact inviscid flow (an accuracy check); "
                 "+/-: error estimate (panels and input points)")
    if result.plane is not None:
        lines.append("near a plane, cl is the generalised circulation (Lagally) lift: the "
                     "bodies and their image pull on each other")
    text = "\n".join(lines) + "\n"
    text += margins_text(result)
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
    """The margin sections of a result, each only when it was computed."""
    text = ""
    if result.compressibility is not None:
        text += compressibility_table(result.compressibility)
    if result.cavitation is not None:
        op = result.operating
        text += cavitation_table(result.cavitation, result.alpha_deg, op.depth, op.fluid.name,
                                 op.speed)
    if result.plane is not None:
        text += plane_table(result)
    if result.viscous is not None:
        text += viscous_table(result)
    return text


def _position(v: float) -> str:
    return "-" if not math.isfinite(v) else f"{v:.3f}"


def viscous_table(result) -> str:
    """The viscous analysis per angle: lift, moment, drag and its parts, transition, separation."""
    v = result.viscous
    tr = v.transition
    trips = [f"{side} trip at x/c {x:g}" for side, x in (("upper", tr.upper_trip),
                                                        ("lower", tr.lower_trip)) if x is not None]
    lines = ["", f"viscous analysis at Reynolds number {v.reynolds:.4g} ({v.reynolds_source}); "
             f"transition at amplification factor {tr.critical_amplification:.3g}"
             + (", " + ", ".join(trips) if trips else ""),
             f"{'alpha':>7} {'lift':>8} {'moment':>9} {'drag':>8} {'friction':>8} {'form':>8} "
             f"{'lift/drag':>9}  {'transition x/c':>15}  {'separation x/c':>15}",
             f"{'':>7} {'cl':>8} {'cm':>9} {'cd':>8} {'cd':>8} {'cd':>8} {'':>9}  "
             f"{'upper':>7} {'lower':>7}  {'upper':>7} {'lower':>7}"]
    for a, r, late in zip(result.alpha_deg, v.results, v.after_failure):
        if not r.converged:
            lines.append(f"{a:7.2f}  not converged (residual {r.residual:.1e} after "
                         f"{r.iterations} iterations): no numbers")
            continue
        tu = _position(r.transition_upper) + ("t" if r.transition_upper_forced else " ")
        tl = _position(r.transition_lower) + ("t" if r.transition_lower_forced else " ")
        lines.append(f"{a:7.2f} {r.cl:8.4f} {r.cm:9.5f} {r.cd:8.5f} {r.cd_friction:8.5f} "
                     f"{r.cd_pressure:8.5f} {r.lift_to_drag:9.1f}  {tu:>7} {tl:>7}  "
                     f"{_position(r.separation_upper):>7} {_position(r.separation_lower):>7}"
                     + ("  (reached after an unconverged angle: check)" if late else ""))
    lines.append("drag from the wake far downstream; friction: skin friction; form: the rest "
                 "(pressure drag of the boundary layer's displacement); t: at a trip; "
                 "separation: where the skin friction first turns negative (- none)")
    lines.append(f"limits: {v.limits}")
    return "\n".join(lines) + "\n"


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
    """Cl, Cm, minimum Cp and its position for each case and angle (``panelflow compare``)."""
    width = max(12, *(len(lb) for lb in labels))
    lines = [f"{'case':<{width}} {'alpha':>7} {'cl':>9} {'+/-':>8} {'cm':>9} {'+/-':>8} "
             f"{'cp_min':>8} {'at x/c':>7}"]
    for label, a in zip(labels, analyses):
        for r in a:
            main = min(r.bodies, key=lambda b: b.cp_min)
            lines.append(f"{label:<{width}} {r.alpha_deg:7.2f} {r.cl:9.5f} "
                         f"{_num(r.cl_error_estimate, '8.1e')} {r.cm:9.5f} "
                         f"{_num(r.cm_error_estimate, '8.1e')} {main.cp_min:8.4f} "
                         f"{_num(main.x_cp_min, '7.4f')}")
    lines.append("")
    lines.append("moments about each case's own quarter chord, nose-up positive; cp_min over all "
                 "bodies of the case")
    lines += _viscous_ranking(analyses, labels)
    lines.append("caution: " + CAUTION)
    return "\n".join(lines) + "\n"


def _viscous_ranking(results, labels) -> list:
    """With the viscous analysis: drag and lift-to-drag per case and angle, and with one angle per
    case (a target lift) the cases ranked by lift-to-drag ratio."""
    if not results or any(getattr(r, "viscous", None) is None for r in results):
        return []
    width = max(12, *(len(lb) for lb in labels))
    lines = ["", f"viscous analysis: {'case':<{width}} {'alpha':>7} {'cl':>8} {'cd':>8} "
             f"{'lift/drag':>9}  {'transition upper/lower x/c':>26}"]
    for label, r in zip(labels, results):
        for a, v in zip(r.alpha_deg, r.viscous.results):
            if not v.converged:
                lines.append(f"                  {label:<{width}} {a:7.2f}  not converged")
                continue
            lines.append(f"                  {label:<{width}} {a:7.2f} {v.cl:8.4f} {v.cd:8.5f} "
                         f"{v.lift_to_drag:9.1f}  {_position(v.transition_upper):>12} "
                         f"{_position(v.transition_lower):>13}")
    target = results[0].operating.target_cl
    if target is not None and all(len(r) == 1 for r in results):
        ranked = sorted(((r.viscous.results[0].lift_to_drag, lab) for lab, r in
                         zip(labels, results) if r.viscous.results[0].converged), reverse=True)
        lines.append(f"ranked by lift-to-drag ratio at cl = {target:g}: "
                     + "; ".join(f"{k + 1}. {lab} ({ld:.1f})" for k, (ld, lab) in
                                 enumerate(ranked)))
    return lines


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
    lines = ["", f"compressibility: {c.rule} at Mach {c.mach:g}; critical Cp* {c.cp_star:.4f} "
             "(isentropic, NACA Report 1135)",
             f"{'alpha':>7} {'cl':>9} {'+/-':>8} {'cm':>9} {'+/-':>8} {'cp_min':>8} "
             f"{'M_crit':>7}"]
    cp_min = np.min(np.asarray(c.cp_min).reshape(len(c.alpha_deg), -1), axis=1)
    for i, a in enumerate(c.alpha_deg):
        flag = "  sonic: model not valid" if c.supercritical[i] else ""
        lines.append(f"{a:7.2f} {c.cl[i]:9.5f} {_num(float(c.cl_error_estimate[i]), '8.1e')} "
                     f"{c.cm[i]:9.5f} {_num(float(c.cm_error_estimate[i]), '8.1e')} "
                     f"{cp_min[i]:8.4f} {_num(float(c.critical_mach[i]), '7.4f')}{flag}")
    lines += [f"warning: {w}" for w in c.warnings]
    return "\n".join(lines) + "\n"


def cavitation_table(v, alpha_deg, depth, fluid, speed) -> str:
    """Cavitation inception check at a running depth (``solve --depth``)."""
    lines = ["", f"cavitation at {depth:g} m depth in {fluid}"
             + (f", {speed:g} m/s: cavitation number {float(np.ravel(v.sigma)[0]):.4f}"
                if speed else "") + " (inception when -Cp_min >= cavitation number)",
             f"{'alpha':>7} {'-cp_min':>8} {'V_incep':>9}" + (f" {'margin':>8}" if speed else "")]
    for i, a in enumerate(alpha_deg):
        row = f"{a:7.2f} {-v.section_cp_min[i]:8.4f} {v.section_inception_speed[i]:7.2f} m/s"
        if speed:
            row += f" {v.margin[i]:8.3f}" + ("  cavitating" if v.cavitating[i] else "")
        lines.append(row)
    lines += [f"caution: {c}" for c in v.cautions]
    return "\n".join(lines) + "\n"


def plane_table(result) -> str:
    """The plane's effect per angle: clearance and lift and moment against free space."""
    p = result.plane
    lines = ["", f"{p.boundary.label}: effect on the bodies",
             f"{'alpha':>7} {'clearance':>9} {'cl':>9} {'cl free':>9} {'ratio':>7} {'cm':>9} "
             f"{'cm free':>9}"]
    for i, a in enumerate(result.alpha_deg):
        lines.append(f"{a:7.2f} {p.clearance[i]:9.4g} {result.cl[i]:9.5f} {p.cl_free[i]:9.5f} "
                     f"{_num(float(p.cl_ratio[i]), '7.4f')} {result.cm[i]:9.5f} "
                     f"{p.cm_free[i]:9.5f}")
    lines.append("clearance: smallest distance from the bodies to the plane (outline units); "
                 "free: the same bodies without the plane")
    return "\n".join(lines) + "\n"
