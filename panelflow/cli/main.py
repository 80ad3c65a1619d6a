"""Command line: ``panelflow solve | field | compare | loads | run | check | section | reshape |
inverse | optimise``.

Each command is options -> description (:mod:`panelflow.cli.options`) -> one library call
(:func:`panelflow.analysis.solve.solve`) -> writers. No command chooses between analyses: a
plane boundary, a Mach number or a running depth are properties of the description, and the
result carries their parts to every output. Only this package prints.
"""

from __future__ import annotations

import argparse
import json
import sys
import warnings

import numpy as np

from panelflow.cli.options import (Parser, add_condition_options, add_geometry_options,
                                   checked_operating, input_files, join_numeric_values,
                                   parse_angles, parse_numbers, problem_of)
from panelflow.errors import InputError, PanelflowError
from panelflow.geometry.arguments import load_bodies, parse_point
from panelflow.version import __version__

# kept importable from here for earlier callers
_join_numeric_values = join_numeric_values
# exit status of a design that finished but did not reach its goal (its files are written)
EXIT_NOT_REACHED = 3
# streamlines a field figure may ask for: more than this fill the window with ink
MAX_STREAMLINES = 200


def _solve(problem):
    from panelflow.analysis.solve import solve

    return solve(problem)


def _wrote(paths) -> None:
    for path in paths:
        print(f"wrote {path}", file=sys.stderr)


def _check_figure(ns) -> None:
    from panelflow.output.figures import check_figure_path

    for path in (ns.plot, getattr(ns, "layer_plot", None), getattr(ns, "drag_plot", None)):
        if path:
            check_figure_path(path, ns.force)
    if (getattr(ns, "layer_plot", None) or getattr(ns, "drag_plot", None)) and not (
            ns.reynolds or ns.viscous):
        raise InputError("--layer-plot and --drag-plot draw the viscous analysis: give "
                         "--reynolds (or --viscous)")


def _viscous_figures(ns, results) -> list:
    """The boundary-layer figure (first angle of the first result) and the drag polar."""
    written = []
    if getattr(ns, "layer_plot", None):
        from panelflow.output.viscous_figures import boundary_layer_figure

        written.append(boundary_layer_figure(results[0], ns.layer_plot,
                                             float(results[0].alpha_deg[0]),
                                             overwrite=ns.force))
    if getattr(ns, "drag_plot", None):
        from panelflow.output.viscous_figures import drag_polar_figure

        written.append(drag_polar_figure(results, ns.drag_plot, overwrite=ns.force))
    return written


def _guard(ns, outputs) -> None:
    """Refuse any output that is one of the command's own input files (``--force`` or not)."""
    from panelflow.files import refuse_inputs

    refuse_inputs([o for o in outputs if o], input_files(ns))


def _cmd_solve(ns) -> int:
    from panelflow.output.report import solve_table
    from panelflow.output.writers import analysis_json, check_outputs, write_result

    operating = checked_operating(ns, "solve")
    problem = problem_of(ns, load_bodies(ns.outlines), operating)
    _guard(ns, [*(ns.output or []), ns.plot, ns.layer_plot, ns.drag_plot])
    check_outputs(ns.output or [], overwrite=ns.force)  # before solving: fail early, write nothing
    _check_figure(ns)
    result = _solve(problem)
    written = [write_result(result, path, overwrite=ns.force) for path in ns.output or []]
    if ns.plot:
        from panelflow.output.figures import surface_cp_figure

        written.append(surface_cp_figure(result, ns.plot, float(result.alpha_deg[0]),
                                         overwrite=ns.force))
    written += _viscous_figures(ns, [result])
    if ns.json:
        sys.stdout.write(analysis_json(result))
    else:
        if operating.target_cl is not None:
            sys.stdout.write(f"angle of attack for cl = {operating.target_cl:g}: "
                             f"{result.alpha_deg[0]:.4f} deg\n")
        sys.stdout.write(solve_table(result))
    _wrote(written)
    return 0


def _cmd_field(ns) -> int:
    from panelflow.flow.field import default_window, flow_field, grid_points
    from panelflow.output.field_files import check_field_outputs, read_points_csv, write_field
    from panelflow.output.report import field_summary

    operating = checked_operating(ns, "field", single_angle=True)
    problem = problem_of(ns, load_bodies(ns.outlines), operating)
    outputs = ns.output or []
    if not outputs and not ns.plot:
        raise InputError("give a field file with -o FILE and/or a figure with --plot FIGURE")
    if ns.points and ns.plot:
        raise InputError("--plot draws a grid field: use --window/--resolution, not --points")
    if ns.points and ns.window:
        raise InputError("--window: it places a grid; with --points the field is at the file's "
                         "points")
    if not 0 <= ns.streamlines <= MAX_STREAMLINES:
        raise InputError(f"--streamlines {ns.streamlines}: give 0 to {MAX_STREAMLINES}")
    _guard(ns, [*outputs, ns.plot])
    check_field_outputs(outputs, ns.force)
    _check_figure(ns)
    resolution = parse_numbers(ns.resolution, 2, "--resolution", int)
    window = parse_numbers(ns.window, 4, "--window") if ns.window else None
    points = read_points_csv(ns.points) if ns.points else None
    from panelflow.flow.field import check_field_size

    panels = sum(problem.panels or len(b.points) - 1 for b in problem.bodies)
    check_field_size(len(points) if points is not None else resolution[0] * resolution[1],
                     panels, f"--points {ns.points}" if points is not None
                     else f"--resolution {ns.resolution}")  # refused before the solve
    result = _solve(problem.with_error_estimate(False))
    alpha = float(result.alpha_deg[0])
    if points is None:
        window = window or default_window(result.outlines)
        points, shape = grid_points(window, resolution)
    else:
        shape = None
    flow = flow_field(result, points, [alpha], shape)
    if flow.inside.all():
        raise InputError(f"all {len(flow.points)} field points lie inside a body or beyond the "
                         "plane: there is no flow to write")
    written = [write_field(flow, path, outlines=result.outlines, overwrite=ns.force)
               for path in outputs]
    if ns.plot:
        from panelflow.flow.streamlines import streamlines
        from panelflow.output.figures import field_figure

        lines = streamlines(result, alpha, window, n=ns.streamlines) if ns.streamlines else ()
        written.append(field_figure(flow, result.outlines, ns.plot, streamlines=lines,
                                    overwrite=ns.force, plane=result.plane))
    sys.stdout.write(field_summary(flow, result))
    _wrote(written)
    return 0


def _cmd_compare(ns) -> int:
    from panelflow.geometry.families import expand_arguments
    from panelflow.output.report import compare_table

    operating = checked_operating(ns, "compare")
    cases = [load_bodies([arg]) for arg in expand_arguments(ns.outlines)]
    problems = [problem_of(ns, bodies, operating) for bodies in cases]
    _guard(ns, [*(ns.output or []), ns.plot, ns.layer_plot, ns.drag_plot])
    _check_figure(ns)
    if ns.output:
        from panelflow.output.tables import check_table_outputs

        check_table_outputs(ns.output, ns.force)
    results = [_solve(p) for p in problems]
    labels = [r.label for r in results]
    written = []
    if ns.output or ns.json:
        from panelflow.output.tables import polar, table_record, tidy_table, write_table

        table = tidy_table([polar(r) for r in results])
        written += [write_table(table, path, ns.force) for path in ns.output or []]
    if ns.json:
        json.dump(table_record(table), sys.stdout, indent=1, allow_nan=False)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(compare_table(results, labels))
    if ns.plot:
        if len(results[0].alpha_deg) > 1:  # a range of angles: polars; one: Cp distributions
            from panelflow.output.figures import polar_figure

            written.append(polar_figure(results, labels, ns.plot, overwrite=ns.force))
        else:
            from panelflow.output.figures import compare_cp_figure

            written.append(compare_cp_figure(results, labels, None, ns.plot,
                                             overwrite=ns.force))
    written += _viscous_figures(ns, results)
    _wrote(written)
    return 0


def _cmd_run(ns) -> int:
    from panelflow.study.cases import load_case
    from panelflow.study.runner import DEFAULT_TIMEOUT, open_executor, run_case

    case = load_case(ns.case)
    if ns.timeout is not None and not ns.timeout > 0:
        raise InputError(f"--timeout {ns.timeout:g}: give a positive number of seconds")
    with open_executor(workers=ns.workers, scheduler=ns.scheduler) as executor:
        report = run_case(case, executor, output=ns.output, overwrite=ns.force,
                          progress=True if ns.progress else None,
                          timeout=ns.timeout or DEFAULT_TIMEOUT)
    sys.stdout.write(report.summary())
    return 0


def _cmd_loads(ns) -> int:
    from panelflow.conditions.fluids import Conditions
    from panelflow.loads.section import equilibrium_text, read_nodes, section_loads
    from panelflow.output.load_files import check_load_outputs, write_loads

    operating = checked_operating(ns, "loads", single_angle=True)
    problem = problem_of(ns, load_bodies(ns.outlines), operating)
    if not ns.output:
        raise InputError("give the load file(s) with -o FILE (.json, .csv, .vtu, .inp)")
    if ns.absolute and ns.static_pressure is not None:
        raise InputError("give either --absolute or --static-pressure, not both")
    scale = {"unit": operating.unit, "chord": operating.chord, "span": ns.span}
    fluid, speed = operating.fluid, operating.speed
    conditions = (Conditions.absolute(fluid, speed, **scale) if ns.absolute else
                  Conditions(fluid, speed, static_pressure=ns.static_pressure, **scale))
    about = [parse_point(t, "--about") for t in ns.about or []]
    nodes = read_nodes(ns.nodes) if ns.nodes else None
    from panelflow.output.load_files import output_paths

    _guard(ns, [q for path in ns.output for q in output_paths(path)])
    check_load_outputs(ns.output, overwrite=ns.force)
    result = _solve(problem)
    loads = section_loads(result, conditions, about=about, nodes=nodes,
                          node_tolerance=ns.node_tolerance)
    written = [w for path in ns.output for w in write_loads(loads, path, overwrite=ns.force)]
    if operating.target_cl is not None:
        sys.stdout.write(f"angle of attack for cl = {operating.target_cl:g}: "
                         f"{result.alpha_deg[0]:.4f} deg\n")
    sys.stdout.write(equilibrium_text(loads))
    sys.stdout.write("".join(f"caution: {line}\n" for line in loads.cautions))
    _wrote(written)
    return 0


def _cmd_check(ns) -> int:
    from panelflow.geometry.check import inspect, overlaps
    from panelflow.output.report import check_table

    bodies = load_bodies(ns.outlines)
    reports = [inspect(o) for o in bodies]
    clashes = overlaps(bodies)
    if ns.json:
        rec = [{**{k: getattr(r, k) for k in r.__dataclass_fields__}, "ok": r.ok} for r in reports]
        json.dump({"outlines": rec, "problems": clashes}, sys.stdout, indent=1, default=list)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(check_table(reports, clashes))
    bad = clashes or any(not r.ok for r in reports)
    return 1 if bad else 0


def _cmd_section(ns) -> int:
    from panelflow.geometry.readers import write_outline_table
    from panelflow.geometry.specs import parse_spec

    outline = (parse_spec(ns.spec, n_points=ns.points) if ns.points is not None
               else parse_spec(ns.spec))
    if outline is None:
        raise InputError(f"{ns.spec}: not a section spec (try naca2412, naca23012, circle, "
                         "ellipse:A,B, joukowski:XC,YC, karman-trefftz:XC,YC,TAU)")
    write_outline_table(outline, ns.output, overwrite=ns.force)
    print(f"wrote {ns.output} ({len(outline.points)} points)", file=sys.stderr)
    return 0


def _cmd_reshape(ns) -> int:
    from pathlib import Path

    from panelflow.errors import OutputError
    from panelflow.geometry import edits
    from panelflow.geometry.readers import write_outline_table
    from panelflow.output.reshape_report import reshape_json, reshape_table

    def one_body(arg, what):
        found = load_bodies([arg])
        if len(found) != 1:
            raise InputError(f"{what} {arg}: one body needed, it holds {len(found)} "
                             f"({', '.join(o.name for o in found)}); give it with @name=... "
                             "from a file of its own")
        return found[0]

    foil = one_body(ns.outline, "reshape")
    _guard(ns, [ns.output])
    if ns.output and Path(ns.output).exists() and not ns.force:
        raise OutputError(f"{ns.output}: exists; not overwritten (use --force to replace it)")
    steps = []  # in the order the help text gives
    if ns.blend_with is not None:
        weight = 0.5 if ns.blend_weight is None else ns.blend_weight
        steps.append(edits.Blend(one_body(ns.blend_with, "--blend-with"), weight))
    elif ns.blend_weight is not None:
        raise InputError("--blend-weight needs --blend-with OUTLINE")
    if ns.thickness_position is not None:
        steps.append(edits.ThicknessPosition(ns.thickness_position))
    if ns.camber_position is not None:
        steps.append(edits.CamberPosition(ns.camber_position))
    if ns.thickness is not None or ns.thickness_scale is not None:
        steps.append(edits.Thickness(scale=ns.thickness_scale, value=ns.thickness))
    if ns.camber is not None or ns.camber_scale is not None:
        steps.append(edits.Camber(scale=ns.camber_scale, value=ns.camber))
    if ns.leading_edge_radius is not None or ns.leading_edge_radius_scale is not None:
        steps.append(edits.LeadingEdgeRadius(value=ns.leading_edge_radius,
                                             scale=ns.leading_edge_radius_scale,
                                             blend_to=ns.leading_edge_blend_to))
    elif ns.leading_edge_blend_to is not None:
        raise InputError("--leading-edge-blend-to goes with --leading-edge-radius(-scale)")
    if ns.trailing_edge_thickness is not None:
        steps.append(edits.TrailingEdgeThickness(ns.trailing_edge_thickness,
                                                 blend_from=ns.trailing_edge_blend_from))
    elif ns.trailing_edge_blend_from is not None:
        raise InputError("--trailing-edge-blend-from goes with --trailing-edge-thickness")
    if not steps and not ns.smooth:
        raise InputError("nothing to change: give an edit such as --thickness 0.12, or --smooth")
    result = edits.reshape(foil, steps, smooth=ns.smooth, n_points=ns.points, name=ns.name)
    if ns.output:
        write_outline_table(result.outline, ns.output, overwrite=ns.force)
    sys.stdout.write(reshape_json(result) if ns.json else reshape_table(result))
    if ns.output:
        print(f"wrote {ns.output} ({len(result.outline.points)} points)", file=sys.stderr)
    return 0


def _add_reshape_parser(sub, common) -> None:
    e = sub.add_parser(
        "reshape", parents=[common],
        help="edit a section (thickness, camber, their positions, nose radius, trailing edge, "
        "blend, smoothing) and show its measures before and after",
        description="Edit one section and print its measures before and after. Lengths are "
        "fractions of the chord. The edits apply in this order: --smooth, --blend-with, "
        "positions, thickness, camber, leading-edge radius, trailing-edge thickness.")
    e.add_argument("outline", metavar="OUTLINE", help="file or section spec (one body)")
    e.add_argument("-o", "--output", metavar="FILE",
                   help="write the new section as a coordinate table (without: table only)")
    e.add_argument("--force", action="store_true", help="replace an existing file")
    e.add_argument("--json", action="store_true", help="print the measures as JSON")
    e.add_argument("--points", type=int, metavar="N",
                   help="points of the new outline (default: the original's, at least 201)")
    e.add_argument("--name", metavar="TEXT", help="name of the new section")
    e.add_argument("--smooth", action="store_true",
                   help="smooth noisy points first (strength by generalised cross-validation)")
    e.add_argument("--blend-with", metavar="OUTLINE", help="mix in another section")
    e.add_argument("--blend-weight", type=float, metavar="W",
                   help="share of the --blend-with section, 0 to 1 (default 0.5)")
    e.add_argument("--thickness-position", type=float, metavar="X",
                   help="move the maximum thickness to x/c = X")
    e.add_argument("--camber-position", type=float, metavar="X",
                   help="move the maximum camber to x/c = X")
    th = e.add_mutually_exclusive_group()
    th.add_argument("--thickness", type=float, metavar="T", help="maximum thickness T chords")
    th.add_argument("--thickness-scale", type=float, metavar="K", help="thickness times K")
    ca = e.add_mutually_exclusive_group()
    ca.add_argument("--camber", type=float, metavar="C", help="maximum camber C chords")
    ca.add_argument("--camber-scale", type=float, metavar="K", help="camber line times K")
    le = e.add_mutually_exclusive_group()
    le.add_argument("--leading-edge-radius", type=float, metavar="R",
                    help="nose radius R chords")
    le.add_argument("--leading-edge-radius-scale", type=float, metavar="K",
                    help="nose radius times K")
    e.add_argument("--leading-edge-blend-to", type=float, metavar="X",
                   help="x/c where the nose change has faded out (default: maximum thickness)")
    e.add_argument("--trailing-edge-thickness", type=float, metavar="G",
                   help="trailing-edge thickness G chords (0 closes it)")
    e.add_argument("--trailing-edge-blend-from", type=float, metavar="X",
                   help="x/c where the trailing-edge change starts (default: maximum thickness)")
    e.set_defaults(func=_cmd_reshape)


def _add_viscous_figures(parser) -> None:
    parser.add_argument("--layer-plot", metavar="FIGURE",
                        help="with the viscous analysis: Cp, skin friction and shape factor "
                        "along the surface at the first angle, transition and separation marked")
    parser.add_argument("--drag-plot", metavar="FIGURE",
                        help="with the viscous analysis: drag polar (cl against cd) and cl/cd "
                        "against the angle")


# ------------------------------------------------------------------------- section design
# Options whose values may start with a minus sign (a suction Cp), folded like --alpha's.
_DESIGN_NUMERIC = ("--plateau", "--thickness-at")


def _fold_design_values(argv):
    """``--plateau -0.6,0.05,0.4,0.8`` as one token, so the value is not read as an option."""
    out, i = [], 0
    while i < len(argv):
        tok = argv[i]
        if tok in _DESIGN_NUMERIC and i + 1 < len(argv) and argv[i + 1][:1] == "-":
            try:
                [float(v) for v in argv[i + 1].split(",")]
            except ValueError:
                pass
            else:
                out.append(f"{tok}={argv[i + 1]}")
                i += 2
                continue
        out.append(tok)
        i += 1
    return out


def _design_target(ns, start):
    """The inverse design's target: a table, or the plateau on the start's own Cp."""
    from panelflow.design.check import surface_cp
    from panelflow.design.targets import plateau_target, read_target

    if (ns.target is None) == (ns.plateau is None):
        raise InputError("give the target with --target FILE or --plateau CP,FROM,TO,END")
    if ns.target is not None:
        return read_target(ns.target)
    level, a, b, c = parse_numbers(ns.plateau, 4, "--plateau")
    from panelflow.analysis.problem import OperatingPoint, Problem

    op = (OperatingPoint(alpha_deg=parse_angles([ns.alpha])) if ns.alpha is not None
          else OperatingPoint(target_cl=float(ns.cl)))
    xu, cu, xl, cl = surface_cp(_solve(Problem([start], op, panels=ns.panels,
                                               error_estimate=False)))
    mine, other = ((xu, cu), (xl, cl)) if ns.surface == "upper" else ((xl, cl), (xu, cu))
    return plateau_target(lambda x: np.interp(x, *mine), ns.surface, level, a, b, c,
                          other=lambda x: np.interp(x, *other))


def _cmd_inverse(ns) -> int:
    from panelflow.design.inverse import ThicknessLimit
    from panelflow.design.run import run_inverse
    from panelflow.geometry.measure import decompose

    bodies = load_bodies([ns.outline])
    if len(bodies) != 1:
        raise InputError(f"inverse {ns.outline}: one body needed, it holds {len(bodies)}")
    start = bodies[0]
    if (ns.alpha is None) == (ns.cl is None):
        raise InputError("give the design angle with --alpha A or the design lift with --cl C")
    alpha = None
    if ns.alpha is not None:
        angles = parse_angles([ns.alpha])
        if len(angles) != 1:
            raise InputError("--alpha: one design angle")
        alpha = float(angles[0])
    cl = None if ns.cl is None else float(parse_numbers(ns.cl, 1, "--cl")[0])
    limits = []
    for text in ns.thickness_at or []:
        parts = text.split(",")
        if len(parts) not in (2, 3):
            raise InputError(f"--thickness-at {text}: give X,MIN or X,MIN,MAX (chords)")
        x, lo, *hi = parse_numbers(text, len(parts), "--thickness-at")
        limits.append(ThicknessLimit(x, x, lo, hi[0] if hi else None))
    if ns.keep_thickness_at:
        shape = decompose(start)
        for x in ns.keep_thickness_at:
            t = float(2.0 * shape.at(shape.half_thickness, [x])[0])
            limits.append(ThicknessLimit(x, x, t, t))
    from panelflow.files import refuse_inputs

    inputs = input_files(ns) + ([ns.target] if ns.target else [])
    refuse_inputs([o for o in (ns.output, ns.plot) if o], inputs)
    target = _design_target(ns, start)
    run = run_inverse(start, target, ns.output, alpha_deg=alpha, cl=cl, panels=ns.panels,
                      functions=ns.functions, thickness=limits,
                      trailing_edge_thickness=ns.trailing_edge_thickness, name=ns.name,
                      plot=ns.plot, overwrite=ns.force, inputs=inputs)
    if ns.json:
        from panelflow.design.report import before_after_rows
        from panelflow.output.writers import json_ready

        r = run.result
        record = {"target": r.target.record(), "alpha_deg": r.alpha_deg,
                  "design_model": {"rms_mismatch": r.rms_mismatch,
                                   "max_mismatch": r.max_mismatch, "iterations": r.iterations,
                                   "stages": r.stages, "converged": r.converged},
                  "check_panels": run.designed.panels, "notes": list(r.notes),
                  "rows": before_after_rows(run.start, run.designed),
                  "written": [str(w) for w in run.written]}
        sys.stdout.write(json.dumps(json_ready(record), indent=1) + "\n")
    else:
        sys.stdout.write(run.summary())
    return _design_status(run, "the inverse design did not converge (its mismatch is in the "
                          "table)" if not run.result.converged else
                          "a thickness limit does not hold in the design model")


def _design_status(run, why: str) -> int:
    """0 when a design reached its goal; else one line and EXIT_NOT_REACHED (files kept)."""
    if run.reached:
        return 0
    print(f"panelflow: {why}; the files are written for inspection (exit status "
          f"{EXIT_NOT_REACHED})", file=sys.stderr)
    return EXIT_NOT_REACHED


def _cmd_optimise(ns) -> int:
    from panelflow.design.run import run_optimisation
    from panelflow.design.spec import load_design_case
    from panelflow.study.runner import open_executor

    case = load_design_case(ns.case)
    with open_executor(workers=ns.workers, scheduler=ns.scheduler) as executor:
        run = run_optimisation(case, executor, output=ns.output, overwrite=ns.force)
    sys.stdout.write(run.summary())
    return _design_status(run, "the optimised section does not meet every constraint")


def _add_design_parsers(sub, common) -> None:
    v = sub.add_parser(
        "inverse", parents=[common],
        help="design a section whose surface Cp matches a target (all of the section or part)",
        description="Inverse design: find the section whose surface Cp at the design angle or "
        "lift matches a target in least squares, keeping the trailing edge and the thickness "
        "limits. A target over part of the section changes only that part. The section is "
        "written, read back and analysed afresh at twice the panels with the start; every "
        "printed figure comes from that check.")
    v.add_argument("outline", metavar="OUTLINE", help="the start: file or section spec (one body)")
    tg = v.add_mutually_exclusive_group()
    tg.add_argument("--target", metavar="FILE",
                    help="target table: columns x, surface (upper/lower) and cp or speed")
    tg.add_argument("--plateau", metavar="CP,FROM,TO,END",
                    help="a flat Cp plateau on one surface from x/c FROM to TO, recovering to "
                    "the start's own Cp by END; the other surface keeps its Cp to END")
    v.add_argument("--surface", choices=("upper", "lower"), default="upper",
                   help="surface of the plateau (default upper)")
    v.add_argument("--alpha", metavar="A", help="design angle of attack in degrees")
    v.add_argument("--cl", metavar="C", help="design lift coefficient (the angle is found)")
    v.add_argument("--functions", type=int, default=24, metavar="N",
                   help="shape functions over the whole section (default 24; a partial target "
                   "uses its share)")
    v.add_argument("--panels", type=int, default=240, metavar="N",
                   help="panels of the design model (default 240; the check uses twice)")
    v.add_argument("--thickness-at", action="append", metavar="X,MIN[,MAX]",
                   help="thickness limits at x/c X, in chords (repeatable)")
    v.add_argument("--keep-thickness-at", action="append", type=float, metavar="X",
                   help="hold the start's own thickness at x/c X (repeatable)")
    v.add_argument("--trailing-edge-thickness", type=float, metavar="T",
                   help="a new trailing-edge thickness in chords (whole-section targets only)")
    v.add_argument("--name", metavar="TEXT", help="name of the designed section")
    v.add_argument("-o", "--output", required=True, metavar="FILE",
                   help="the designed section (.dat, .txt or .xy)")
    v.add_argument("--plot", metavar="FIGURE",
                   help="Cp of start, result and target overlaid (.png, .svg or .pdf)")
    v.add_argument("--json", action="store_true", help="print the figures as JSON")
    v.add_argument("--force", action="store_true", help="replace existing output files")
    v.set_defaults(func=_cmd_inverse)

    o = sub.add_parser(
        "optimise", parents=[common],
        help="optimise a section for its job from a TOML design case file",
        description="Optimise a section for the objective and constraints of a design case "
        "file (see geometries/tender_front_foil_design.toml). Writes the section, a "
        "before/after table, figures and manifest.json into the output folder; every figure "
        "comes from the written section analysed afresh at twice the design panels.")
    o.add_argument("case", metavar="CASE.toml")
    where = o.add_mutually_exclusive_group()
    where.add_argument("--workers", type=int, metavar="N",
                       help="local worker processes for the starting points")
    where.add_argument("--scheduler", metavar="ADDRESS",
                       help="a running Dask distributed scheduler (needs panelflow[cluster])")
    o.add_argument("-o", "--output", metavar="DIR", help="output folder (default: from the case)")
    o.add_argument("--force", action="store_true", help="replace existing output files")
    o.set_defaults(func=_cmd_optimise)


def _solving_parent(angles_help: str) -> argparse.ArgumentParser:
    """Options of every command that solves: geometry, operating point, --force."""
    g = argparse.ArgumentParser(add_help=False)
    add_geometry_options(g)
    add_condition_options(g, angles_help)
    g.add_argument("--force", action="store_true", help="replace existing output files")
    return g


def build_parser() -> argparse.ArgumentParser:
    p = Parser(prog="panelflow", description="2D inviscid panel analysis of foil and fairing "
               "sections: surface pressure, lift and pitching moment with error estimates.")
    p.add_argument("--version", action="version", version=f"panelflow {__version__}")
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help="show the full traceback on errors")
    p.add_argument("--debug", action="store_true", help="show the full traceback on errors")
    sub = p.add_subparsers(dest="command", required=True, parser_class=Parser)
    outline_help = "file or section spec, with optional @name=..@scale=..@pitch=..@move=X,Y"
    many = ("angles of attack in degrees: values or START:STOP:STEP (STOP included), "
            "e.g. --alpha -4:10:2 12")
    one = "angle of attack in degrees (one value)"

    s = sub.add_parser("solve", parents=[common, _solving_parent(many)],
                       help="surface pressure, lift and moment at given angles")
    s.add_argument("outlines", nargs="+", metavar="OUTLINE", help=outline_help)
    s.add_argument("--json", action="store_true", help="print machine-readable JSON")
    s.add_argument("-o", "--output", action="append", metavar="FILE",
                   help="also write the results (.json: everything; .csv: one row per angle)")
    s.add_argument("--plot", metavar="FIGURE",
                   help="surface Cp figure (.png, .svg or .pdf) at the first angle")
    _add_viscous_figures(s)
    s.set_defaults(func=_cmd_solve)

    f = sub.add_parser("field", parents=[common, _solving_parent(one)],
                       help="velocity and Cp around the bodies, to mesh/CSV files and a figure")
    f.add_argument("outlines", nargs="+", metavar="OUTLINE", help=outline_help)
    f.add_argument("--window", metavar="X0,X1,Y0,Y1",
                   help="grid window (default: the bodies with half a chord around them)")
    f.add_argument("--resolution", metavar="NX,NY", default="201,121",
                   help="grid points along x and y (default 201,121)")
    f.add_argument("--points", metavar="FILE.csv", help="evaluate at these x,y points instead")
    f.add_argument("-o", "--output", action="append", metavar="FILE",
                   help="field file: .vtu, .xdmf (mesh viewers) or .csv (one row per point)")
    f.add_argument("--plot", metavar="FIGURE", help="Cp contours and streamlines (.png/.svg/.pdf)")
    f.add_argument("--streamlines", type=int, default=17, metavar="N",
                   help="streamlines drawn in the figure (default 17)")
    f.set_defaults(func=_cmd_field)

    m = sub.add_parser("compare", parents=[common, _solving_parent(many)],
                       help="several sections (or cases) side by side")
    m.add_argument("outlines", nargs="+", metavar="OUTLINE",
                   help="one case per argument (a file with several bodies is one case); "
                   "families such as naca00{06..18:3} and file patterns such as *.dat expand")
    m.add_argument("--plot", metavar="FIGURE",
                   help="figure (.png/.svg/.pdf): overlaid surface Cp for one angle, polars "
                   "(Cl, Cm, minimum Cp against angle) for several")
    m.add_argument("-o", "--output", action="append", metavar="FILE",
                   help="table with one row per case and angle (.csv or .json)")
    m.add_argument("--json", action="store_true", help="print the table as JSON")
    _add_viscous_figures(m)
    m.set_defaults(func=_cmd_compare)

    r = sub.add_parser("run", parents=[common],
                       help="run a study from a TOML case file into an output folder")
    r.add_argument("case", metavar="CASE.toml")
    where = r.add_mutually_exclusive_group()
    where.add_argument("--workers", type=int, metavar="N", help="local worker processes")
    where.add_argument("--scheduler", metavar="ADDRESS",
                       help="a running Dask distributed scheduler (needs panelflow[cluster])")
    r.add_argument("-o", "--output", metavar="DIR", help="output folder (default: from the case)")
    r.add_argument("--force", action="store_true", help="replace existing output files")
    r.add_argument("--progress", action="store_true",
                   help="show the progress bar even when stderr is not a terminal")
    r.add_argument("--timeout", type=float, metavar="SECONDS",
                   help="with --workers or --scheduler: give up when no section finishes for "
                   "this long (default 600); finished sections are kept")
    r.set_defaults(func=_cmd_run)

    ld = sub.add_parser("loads", parents=[common, _solving_parent(one)],
                        help="dimensional pressure loads for a structural model (needs --fluid or "
                        "--density, and --speed)")
    ld.add_argument("outlines", nargs="+", metavar="OUTLINE", help=outline_help)
    ld.add_argument("--span", type=float, metavar="S",
                    help="span in metres for forces in N (default: per metre of span)")
    ld.add_argument("--about", action="append", metavar="X,Y",
                    help="extra moment point, e.g. a flap hinge (outline units; repeatable)")
    ld.add_argument("--nodes", metavar="FE.csv",
                    help="structural nodes (id, x, y in outline units) to carry the loads")
    ld.add_argument("--node-tolerance", type=float, metavar="D",
                    help="largest distance of a node from the outline (default 0.1 %% of chord)")
    pr = ld.add_mutually_exclusive_group()
    pr.add_argument("--absolute", action="store_true",
                    help="absolute pressures (the fluid's ambient pressure) instead of gauge")
    pr.add_argument("--static-pressure", type=float, metavar="P",
                    help="reference static pressure in Pa for absolute pressures")
    ld.add_argument("-o", "--output", action="append", metavar="FILE",
                    help="load file: .json, .csv, .vtu or .inp (+ companion .loads.csv)")
    ld.set_defaults(func=_cmd_loads)

    c = sub.add_parser("check", parents=[common],
                       help="geometry report of outlines (exit 1 if any is unusable)")
    c.add_argument("outlines", nargs="+", metavar="OUTLINE")
    c.add_argument("--json", action="store_true", help="print machine-readable JSON")
    c.set_defaults(func=_cmd_check)

    w = sub.add_parser("section", parents=[common],
                       help="write a built-in section as a coordinate table")
    w.add_argument("spec", metavar="SPEC", help="naca2412, naca23012, ellipse:2,1, ...")
    w.add_argument("-o", "--output", required=True, metavar="FILE")
    w.add_argument("--points", type=int, metavar="N", help="number of points")
    w.add_argument("--force", action="store_true", help="replace an existing file")
    w.set_defaults(func=_cmd_section)

    _add_reshape_parser(sub, common)
    _add_design_parsers(sub, common)
    return p


def main(argv=None) -> int:
    """Run the command line; returns the exit status."""
    parser = build_parser()
    argv = sys.argv[1:] if argv is None else list(argv)
    ns = parser.parse_args(join_numeric_values(_fold_design_values(argv)))
    try:
        # undefined numbers (a centre of pressure without lift, an estimate that cannot be
        # made) are NaN and print as such; numpy's floating-point warnings about them are noise
        with np.errstate(all="ignore"), warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            return ns.func(ns)
    except PanelflowError as exc:
        if ns.debug:
            raise
        print(f"panelflow: error: {exc}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print("panelflow: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
