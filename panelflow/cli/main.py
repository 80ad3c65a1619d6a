"""Command line: ``panelflow solve | field | compare | loads | run | check | section``.

It composes library calls and prints; every number comes from the library. OUTLINE arguments
(files or section specs with ``@`` transforms) and angle lists are read by
:mod:`panelflow.geometry.arguments`.
"""

from __future__ import annotations

import argparse
import json
import re
import sys

import numpy as np

from panelflow.version import __version__
from panelflow.geometry import arguments as bodies_mod
from panelflow.geometry.arguments import load_bodies, parse_point
from panelflow.errors import InputError, PanelflowError


class _Parser(argparse.ArgumentParser):
    """argparse with one-line errors (the usage is one ``--help`` away)."""

    def error(self, message):
        self.exit(2, f"{self.prog}: error: {message}\n")


_ANGLE_TOKEN = re.compile(r"^[-+]?[\d.]+(e[-+]?\d+)?([:,][-+]?[\d.]+(e[-+]?\d+)?)*$", re.I)


# option -> takes several values; values may be negative, so they are folded into the option
_NUMERIC_OPTIONS = {"--alpha": True, "--ref": False, "--cl": False, "--about": False,
                    "--speed": False, "--density": False, "--chord": False, "--span": False,
                    "--static-pressure": False, "--window": False, "--mach": False,
                    "--ground": False, "--free-surface": False, "--depth": False, "--flap": False,
                    "--resolution": False, "--flap-gap": False, "--flap-radius": False,
                    "--node-tolerance": False, "--smooth-within": False}


def _join_numeric_values(argv):
    """Fold the values after numeric options into one ``--option=A,B,...`` token.

    Without this argparse would read a negative value such as ``-4:8:2`` or ``-0.2,0`` as an
    option name.
    """
    out, i = [], 0
    while i < len(argv):
        tok = argv[i]
        if tok in _NUMERIC_OPTIONS:
            j = i + 1
            limit = len(argv) if _NUMERIC_OPTIONS[tok] else min(len(argv), i + 2)
            while j < limit and _ANGLE_TOKEN.match(argv[j]):
                j += 1
            if j > i + 1:
                out.append(tok + "=" + ",".join(argv[i + 1:j]))
                i = j
                continue
        out.append(tok)
        i += 1
    return out


def parse_angles(items) -> np.ndarray:
    """``--alpha`` values (see :func:`panelflow.geometry.arguments.parse_angles`), errors naming the option."""
    try:
        return bodies_mod.parse_angles(list(items))
    except InputError as exc:
        raise InputError(f"--alpha {exc}") from None


def _flapped(ns, bodies):
    """Bodies with the ``--flap`` deflection applied to the first one, and the chord line."""
    if not getattr(ns, "flap", None):
        return bodies, None
    from panelflow.geometry.flap import plain_flap, slotted_flap

    hinge, angle = _parse_numbers(ns.flap, 2, "--flap")
    if ns.flap_gap is not None:
        fs = slotted_flap(bodies[0], hinge, angle, gap=ns.flap_gap, radius=ns.flap_radius)
    else:
        fs = plain_flap(bodies[0], hinge, angle, radius=ns.flap_radius)
    return [*fs.outlines, *bodies[1:]], fs.chord_line


def _cmd_solve(ns) -> int:
    from panelflow.analysis.inviscid import alpha_for_cl, analyse
    from panelflow.output.report import solve_table
    from panelflow.output.writers import analysis_json, check_outputs, write_result

    bodies, smoothing = _smoothed(ns, load_bodies(ns.outlines))
    bodies, chord_line = _flapped(ns, bodies)
    n_panels = None if ns.keep_points else ns.panels
    boundary = _boundary(ns)
    if ns.cl is not None and boundary is not None:
        raise InputError("--cl cannot be combined with --ground or --free-surface")
    _check_margins(ns)
    if ns.cl is not None:
        alphas = [alpha_for_cl(bodies, ns.cl, n_panels, chord_line=chord_line)]
        if ns.alpha:
            raise InputError("give either --alpha or --cl, not both")
    elif ns.alpha:
        alphas = parse_angles(ns.alpha)
    else:
        raise InputError("give the angles of attack with --alpha (or a target lift with --cl)")
    ref = parse_point(ns.ref, "--ref") if ns.ref else None
    check_outputs(ns.output or [], overwrite=ns.force)  # before solving: fail early, write nothing
    if ns.plot:
        from panelflow.output.figures import check_figure_path

        check_figure_path(ns.plot, ns.force)
    if boundary is not None:
        return _solve_near_plane(ns, bodies, alphas, n_panels, ref, boundary)
    result = analyse(bodies, alphas, n_panels=n_panels, reference_point=ref,
                     chord_line=chord_line)
    for path in ns.output or []:
        write_result(result, path, overwrite=ns.force)
    if ns.plot:
        from panelflow.output.figures import surface_cp_figure

        surface_cp_figure(result, ns.plot, float(result.alpha_deg[0]), overwrite=ns.force)
    for line in smoothing:  # what the smoothing moved, where the user will see it
        print(f"smoothing: {line}", file=sys.stderr if ns.json else sys.stdout)
    if ns.json:
        sys.stdout.write(analysis_json(result))
    else:
        if ns.cl is not None:
            sys.stdout.write(f"angle of attack for cl = {ns.cl:g}: {alphas[0]:.4f} deg\n")
        sys.stdout.write(solve_table(result))
        sys.stdout.write(_margins(ns, result))
    for path in [*(ns.output or []), *([ns.plot] if ns.plot else [])]:
        print(f"wrote {path}", file=sys.stderr)
    return 0


def _smoothed(ns, bodies):
    """Bodies smoothed within ``--smooth-within`` (outline units), and a sentence for each."""
    if getattr(ns, "smooth_within", None) is None:
        return bodies, []
    from panelflow.geometry.quality import smoothed

    fits = [smoothed(o, ns.smooth_within) for o in bodies]
    return [f.outline for f in fits], [f.describe() for f in fits]


def _boundary(ns):
    from panelflow.flow.images import Boundary

    if ns.ground is not None:  # argparse keeps the two options exclusive
        return Boundary.ground(ns.ground)
    if ns.free_surface is not None:
        return Boundary.free_surface(ns.free_surface)
    return None


def _check_margins(ns) -> None:
    """Refuse bad --mach / --depth values before any work, so a failing run writes nothing."""
    if ns.mach is not None:
        from panelflow.conditions.compressibility import check_mach

        check_mach(ns.mach)
    if ns.depth is None:
        if ns.fluid or ns.speed is not None:
            raise InputError("--fluid and --speed on solve are for the cavitation check: "
                             "give --depth too")
        return
    if not ns.fluid:
        raise InputError("--depth needs --fluid (fresh-water or sea-water) for the cavitation check")
    from panelflow.conditions.cavitation import cavitation_number
    from panelflow.conditions.fluids import get_fluid

    fluid = get_fluid(ns.fluid)
    if fluid.vapour_pressure is None:
        raise InputError(f"--fluid {ns.fluid}: no vapour pressure; the cavitation check needs "
                         "a liquid (fresh-water or sea-water)")
    cavitation_number(1.0 if ns.speed is None else ns.speed, ns.depth, fluid.density,
                      fluid.vapour_pressure)


def _margins(ns, result) -> str:
    """Compressibility and cavitation sections of the ``solve`` report, when asked for."""
    from panelflow.output.report import cavitation_table, compressibility_table

    text = ""
    if ns.mach is not None:
        from panelflow.conditions.compressibility import correct

        text += compressibility_table(correct(result, ns.mach, ns.mach_rule))
    if ns.depth is not None:
        from panelflow.conditions.cavitation import assess_in

        text += cavitation_table(assess_in(result, ns.depth, ns.fluid, speed=ns.speed),
                                 result.alpha_deg, ns.depth, ns.fluid, ns.speed)
    return text


def _solve_near_plane(ns, bodies, alphas, n_panels, ref, boundary) -> int:
    from panelflow.flow.images import analyse_with_boundary
    from panelflow.output.report import boundary_table

    if ns.output or ns.plot or ns.json or ns.mach is not None or ns.depth is not None:
        raise InputError("with --ground or --free-surface only the printed table is available "
                         "(no -o, --plot, --json, --mach or --depth yet)")
    result = analyse_with_boundary(bodies, alphas, boundary, n_panels=n_panels,
                                   reference_point=ref)
    sys.stdout.write(boundary_table(result))
    return 0


def _parse_numbers(text: str, count: int, option: str, kind=float) -> tuple:
    try:
        values = tuple(kind(v) for v in text.split(","))
    except ValueError:
        values = ()
    if len(values) != count:
        raise InputError(f"{option} {text}: give {count} numbers separated by commas")
    return values


def _cmd_field(ns) -> int:
    from panelflow.analysis.inviscid import analyse
    from panelflow.output.report import field_summary
    from panelflow.flow.field import default_window, flow_field, grid_points
    from panelflow.output.field_files import check_field_outputs, read_points_csv, write_field

    bodies, chord_line = _flapped(ns, load_bodies(ns.outlines))
    alphas = parse_angles(ns.alpha)
    if len(alphas) != 1:
        raise InputError(f"--alpha: a field is for one angle, got {len(alphas)}")
    outputs = ns.output or []
    if not outputs and not ns.plot:
        raise InputError("give a field file with -o FILE and/or a figure with --plot FIGURE")
    if ns.points and ns.plot:
        raise InputError("--plot draws a grid field: use --window/--resolution, not --points")
    check_field_outputs(outputs, ns.force)
    if ns.plot:
        from panelflow.output.figures import check_figure_path

        check_figure_path(ns.plot, ns.force)
    if ns.points:
        points, shape, window = read_points_csv(ns.points), None, None
    else:
        window = (_parse_numbers(ns.window, 4, "--window") if ns.window
                  else default_window(bodies))
        points, shape = grid_points(window, _parse_numbers(ns.resolution, 2, "--resolution", int))
    n_panels = None if ns.keep_points else ns.panels
    boundary = _boundary(ns)
    if boundary is None:
        result = analyse(bodies, alphas, n_panels=n_panels, error_estimate=False,
                         chord_line=chord_line)
        system, field_alpha = result.fine.system, alphas
    else:
        from panelflow.flow.images import analyse_with_boundary

        # with a plane the freestream stays along x and the angle pitches the bodies
        result = analyse_with_boundary(bodies, alphas, boundary, n_panels=n_panels,
                                       error_estimate=False)
        system, field_alpha, bodies = result.surfaces[0].system, [0.0], list(result.pitched[0])
    flow = flow_field(system, points, field_alpha, shape)
    for path in outputs:
        write_field(flow, path, outlines=bodies, overwrite=ns.force)
    if ns.plot:
        from panelflow.output.figures import field_figure
        from panelflow.flow.streamlines import streamlines

        lines = (streamlines(system, field_alpha[0], window, n=ns.streamlines)
                 if ns.streamlines else ())
        title = None if boundary is None else (
            f"Pressure field near a {boundary.kind.replace('-', ' ')}, bodies pitched "
            f"{alphas[0]:g}°")
        field_figure(flow, bodies, ns.plot, streamlines=lines, overwrite=ns.force, title=title)
    sys.stdout.write(field_summary(flow, result))
    for path in [*outputs, *([ns.plot] if ns.plot else [])]:
        print(f"wrote {path}", file=sys.stderr)
    return 0


def _cmd_compare(ns) -> int:
    from panelflow.analysis.inviscid import analyse
    from panelflow.geometry.families import expand_arguments
    from panelflow.output.report import compare_table

    cases = [load_bodies([arg]) for arg in expand_arguments(ns.outlines)]
    alphas = parse_angles(ns.alpha)
    if ns.plot:
        from panelflow.output.figures import check_figure_path

        check_figure_path(ns.plot, ns.force)
    if ns.output:
        from panelflow.output.tables import check_table_outputs

        check_table_outputs(ns.output, ns.force)
    n_panels = None if ns.keep_points else ns.panels
    analyses = [analyse(bodies, alphas, n_panels=n_panels) for bodies in cases]
    labels = [", ".join(o.name for o in bodies) for bodies in cases]
    sys.stdout.write(compare_table(analyses, labels))
    written = []
    if ns.output:
        from panelflow.output.tables import polar, tidy_table, write_table

        table = tidy_table([polar(a, label) for a, label in zip(analyses, labels)])
        written += [write_table(table, path, ns.force) for path in ns.output]
    if ns.plot:
        if len(alphas) > 1:  # a range of angles: polars; one angle: the Cp distributions
            from panelflow.output.figures import polar_figure

            written.append(polar_figure(analyses, labels, ns.plot, overwrite=ns.force))
        else:
            from panelflow.output.figures import compare_cp_figure

            written.append(compare_cp_figure(analyses, labels, alphas[0], ns.plot,
                                             overwrite=ns.force))
    for path in written:
        print(f"wrote {path}", file=sys.stderr)
    return 0


def _cmd_run(ns) -> int:
    from panelflow.study.cases import load_case
    from panelflow.study.runner import open_executor, run_case

    case = load_case(ns.case)
    with open_executor(workers=ns.workers, scheduler=ns.scheduler) as executor:
        report = run_case(case, executor, output=ns.output, overwrite=ns.force,
                          progress=True if ns.progress else None)
    sys.stdout.write(report.summary())
    return 0


def _cmd_loads(ns) -> int:
    from panelflow.analysis.inviscid import analyse
    from panelflow.conditions.fluids import Conditions, resolve_fluid
    from panelflow.loads.section import equilibrium_text, read_nodes, section_loads
    from panelflow.output.load_files import check_load_outputs, write_loads

    bodies, chord_line = _flapped(ns, load_bodies(ns.outlines))
    alphas = parse_angles(ns.alpha)
    if len(alphas) != 1:
        raise InputError(f"--alpha: loads are for one angle, got {len(alphas)}")
    if not ns.output:
        raise InputError("give the load file(s) with -o FILE (.json, .csv, .vtu, .inp)")
    fluid = resolve_fluid(ns.fluid, ns.density)
    if ns.absolute and ns.static_pressure is not None:
        raise InputError("give either --absolute or --static-pressure, not both")
    scale = {"unit": ns.unit, "chord": ns.chord, "span": ns.span}
    conditions = (Conditions.absolute(fluid, ns.speed, **scale) if ns.absolute else
                  Conditions(fluid, ns.speed, static_pressure=ns.static_pressure, **scale))
    about = [parse_point(t, "--about") for t in ns.about or []]
    nodes = read_nodes(ns.nodes) if ns.nodes else None
    check_load_outputs(ns.output, overwrite=ns.force)
    ref = parse_point(ns.ref, "--ref") if ns.ref else None
    result = analyse(bodies, alphas, n_panels=None if ns.keep_points else ns.panels,
                     reference_point=ref, chord_line=chord_line)
    loads = section_loads(result, conditions, about=about, nodes=nodes,
                          node_tolerance=ns.node_tolerance)
    written = [w for path in ns.output for w in write_loads(loads, path, overwrite=ns.force)]
    sys.stdout.write(equilibrium_text(loads))
    sys.stdout.write("".join(f"caution: {line}\n" for line in loads.cautions))
    for path in written:
        print(f"wrote {path}", file=sys.stderr)
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
    from panelflow.geometry.sections import parse_spec

    outline = parse_spec(ns.spec, n_points=ns.points) if ns.points else parse_spec(ns.spec)
    if outline is None:
        raise InputError(f"{ns.spec}: not a section spec (try naca2412, naca23012, circle, "
                         "ellipse:A,B, joukowski:XC,YC, karman-trefftz:XC,YC,TAU)")
    write_outline_table(outline, ns.output, overwrite=ns.force)
    print(f"wrote {ns.output} ({len(outline.points)} points)", file=sys.stderr)
    return 0


def _geometry_parent() -> argparse.ArgumentParser:
    g = argparse.ArgumentParser(add_help=False)
    g.add_argument("--panels", type=int, default=200, metavar="N",
                   help="panels per body on a spline through the points (default 200)")
    g.add_argument("--keep-points", action="store_true",
                   help="use the given points as panel ends instead of re-panelling")
    g.add_argument("--force", action="store_true", help="replace existing output files")
    g.add_argument("--flap", metavar="XH,ANGLE",
                   help="deflect the first body's aft part about a hinge at chord fraction XH by "
                   "ANGLE degrees (trailing edge down positive)")
    g.add_argument("--flap-gap", type=float, metavar="G",
                   help="make it a separate flap body with this gap (outline units)")
    g.add_argument("--flap-radius", type=float, default=0.01, metavar="R",
                   help="rounding radius at the hinge (outline units, default 0.01)")
    return g


def _add_plane_options(parser) -> None:
    plane = parser.add_mutually_exclusive_group()
    plane.add_argument("--ground", type=float, metavar="H",
                       help="plane wall (ground effect) H below the quarter chord (outline units; "
                       "the angle pitches the bodies)")
    plane.add_argument("--free-surface", type=float, metavar="H",
                       help="free surface H above the quarter chord (high Froude number limit)")


def build_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="panelflow", description="2D inviscid panel analysis of foil and fairing "
                "sections: surface pressure, lift and pitching moment with error estimates.")
    p.add_argument("--version", action="version", version=f"panelflow {__version__}")
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help="show the full traceback on errors")
    p.add_argument("--debug", action="store_true", help="show the full traceback on errors")
    geometry = _geometry_parent()
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)
    outline_help = "file or section spec, with optional @name=..@scale=..@pitch=..@move=X,Y"
    alpha_help = ("angles of attack in degrees: values or START:STOP:STEP (STOP included), "
                  "e.g. --alpha -4:10:2 12")

    s = sub.add_parser("solve", parents=[common, geometry],
                       help="surface pressure, lift and moment at given angles")
    s.add_argument("outlines", nargs="+", metavar="OUTLINE", help=outline_help)
    s.add_argument("--alpha", nargs="+", action="extend", metavar="A", help=alpha_help)
    s.add_argument("--cl", type=float, metavar="TARGET",
                   help="find and solve the angle that gives this lift coefficient")
    s.add_argument("--ref", metavar="X,Y", help="moment reference point (default: quarter chord)")
    s.add_argument("--json", action="store_true", help="print machine-readable JSON")
    s.add_argument("-o", "--output", action="append", metavar="FILE",
                   help="also write the results (.json: everything; .csv: one row per angle)")
    s.add_argument("--plot", metavar="FIGURE",
                   help="surface Cp figure (.png, .svg or .pdf) at the first angle")
    s.add_argument("--smooth-within", type=float, metavar="DISTANCE",
                   help="first fit a smoothing curve to each outline that moves no point by "
                   "more than DISTANCE (outline units; leading and trailing edges kept) and "
                   "report the largest move: for digitised or rounded coordinates")
    s.add_argument("--mach", type=float, metavar="M",
                   help="compressibility-corrected coefficients and the critical Mach number")
    s.add_argument("--mach-rule", default="karman-tsien",
                   choices=("karman-tsien", "prandtl-glauert", "laitone"),
                   help="compressibility correction (default karman-tsien)")
    s.add_argument("--depth", type=float, metavar="H",
                   help="running depth in metres for the cavitation check (with --fluid)")
    s.add_argument("--fluid", metavar="NAME", help="fresh-water or sea-water (for --depth)")
    s.add_argument("--speed", type=float, metavar="V",
                   help="speed in m/s for the cavitation number and margin (with --depth)")
    _add_plane_options(s)
    s.set_defaults(func=_cmd_solve)

    f = sub.add_parser("field", parents=[common, geometry],
                       help="velocity and Cp around the bodies, to mesh/CSV files and a figure")
    f.add_argument("outlines", nargs="+", metavar="OUTLINE", help=outline_help)
    f.add_argument("--alpha", nargs="+", action="extend", metavar="A", required=True,
                   help="angle of attack in degrees (one value)")
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
    _add_plane_options(f)
    f.set_defaults(func=_cmd_field)

    m = sub.add_parser("compare", parents=[common, geometry],
                       help="several sections (or cases) side by side")
    m.add_argument("outlines", nargs="+", metavar="OUTLINE",
                   help="one case per argument (a file with several bodies is one case); "
                   "families such as naca00{06..18:3} and file patterns such as *.dat expand")
    m.add_argument("--alpha", nargs="+", action="extend", metavar="A", required=True,
                   help=alpha_help)
    m.add_argument("--plot", metavar="FIGURE",
                   help="figure (.png/.svg/.pdf): overlaid surface Cp for one angle, polars "
                   "(Cl, Cm, minimum Cp against angle) for several")
    m.add_argument("-o", "--output", action="append", metavar="FILE",
                   help="table with one row per case and angle (.csv or .json)")
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
    r.set_defaults(func=_cmd_run)

    ld = sub.add_parser("loads", parents=[common, geometry],
                        help="dimensional pressure loads for a structural model")
    ld.add_argument("outlines", nargs="+", metavar="OUTLINE", help=outline_help)
    ld.add_argument("--alpha", nargs="+", action="extend", metavar="A", required=True,
                    help="angle of attack in degrees (one value)")
    fl = ld.add_mutually_exclusive_group(required=True)
    fl.add_argument("--fluid", metavar="NAME", help="air, fresh-water or sea-water")
    fl.add_argument("--density", type=float, metavar="RHO", help="fluid density in kg/m^3")
    ld.add_argument("--speed", type=float, required=True, metavar="V",
                    help="freestream speed in m/s")
    sc = ld.add_mutually_exclusive_group()
    sc.add_argument("--unit", metavar="U", help="length unit of the outline: m, cm, mm, in, ft")
    sc.add_argument("--chord", type=float, metavar="C", help="scale the main chord to C metres")
    ld.add_argument("--span", type=float, metavar="S",
                    help="span in metres for forces in N (default: per metre of span)")
    ld.add_argument("--about", action="append", metavar="X,Y",
                    help="extra moment point, e.g. a flap hinge (outline units; repeatable)")
    ld.add_argument("--ref", metavar="X,Y", help="moment reference point (default: quarter chord)")
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
    return p


def main(argv=None) -> int:
    """Run the command line; returns the exit status."""
    parser = build_parser()
    argv = sys.argv[1:] if argv is None else list(argv)
    ns = parser.parse_args(_join_numeric_values(argv))
    try:
        if getattr(ns, "panels", None) is not None and ns.panels < 8:
            raise InputError(f"--panels {ns.panels}: at least 8 panels needed")
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
