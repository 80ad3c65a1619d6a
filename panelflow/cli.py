"""Command line: ``panelflow solve | check | section``. It composes library calls and prints.

Every OUTLINE argument is a file path or a built-in section spec (``naca2412``), optionally
followed by transforms applied left to right, each introduced by ``@``::

    naca0012@name=flap@scale=0.3@pitch=15@move=1.02,-0.06

``name=TEXT`` names the body, ``scale=S`` scales about the origin, ``pitch=DEG`` pitches nose-up
about the body's own leading edge, ``move=DX,DY`` translates.
"""

from __future__ import annotations

import argparse
import json
import re
import sys
from pathlib import Path

import numpy as np

from . import __version__
from .errors import GeometryError, InputError, PanelflowError


class _Parser(argparse.ArgumentParser):
    """argparse with one-line errors (the usage is one ``--help`` away)."""

    def error(self, message):
        self.exit(2, f"{self.prog}: error: {message}\n")


_ANGLE_TOKEN = re.compile(r"^[-+]?[\d.]+(e[-+]?\d+)?([:,][-+]?[\d.]+(e[-+]?\d+)?)*$", re.I)


_NUMERIC_OPTIONS = {"--alpha": True, "--ref": False, "--cl": False}  # option: takes several


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
    """Angles from values and START:STOP:STEP ranges (STOP included), space or comma separated."""
    out = []
    for item in (part for text in items for part in text.split(",") if part):
        parts = item.split(":")
        try:
            nums = [float(p) for p in parts]
        except ValueError:
            raise InputError(f"--alpha {item}: not a number or START:STOP:STEP") from None
        if len(nums) == 1:
            out.append(nums[0])
        elif len(nums) == 3:
            start, stop, step = nums
            if step == 0 or (stop - start) * step < 0:
                raise InputError(f"--alpha {item}: STEP must be non-zero and go from START to STOP")
            count = int(np.floor((stop - start) / step + 1e-9)) + 1
            if count > 100_000:
                raise InputError(f"--alpha {item}: {count} angles is too many")
            out.extend(start + step * np.arange(count))
        else:
            raise InputError(f"--alpha {item}: use a value or START:STOP:STEP")
    angles = np.array(out, float)
    if not np.all(np.isfinite(angles)):
        raise InputError("--alpha: angles must be finite")
    return angles


def parse_point(text: str, option: str, sep: str = " ") -> tuple[float, float]:
    try:
        x, y = (float(v) for v in text.split(","))
    except ValueError:
        raise InputError(f"{option}{sep}{text}: give two numbers as X,Y") from None
    return x, y


def _transform(outline, key: str, value: str, arg: str):
    try:
        return _apply(outline, key, value, arg)
    except GeometryError as exc:
        raise InputError(f"{arg}: {key}={value}: {str(exc).split(': ', 1)[-1]}") from None


def _apply(outline, key: str, value: str, arg: str):
    try:
        if key == "name":
            return outline.renamed(value)
        if key == "scale":
            return outline.scaled(float(value))
        if key == "pitch":
            return outline.rotated(float(value), about=outline.leading_edge)
        if key == "move":
            dx, dy = parse_point(value, f"{arg}: move=", sep="")
            return outline.translated(dx, dy)
    except ValueError:
        raise InputError(f"{arg}: {key}={value} is not a number") from None
    raise InputError(f"{arg}: unknown transform {key!r}; use name=, scale=, pitch= or move=")


def _split_transforms(arg: str):
    """Source and transform steps of an OUTLINE argument (a path may itself contain '@')."""
    parts = arg.split("@")
    for k in range(len(parts), 0, -1):
        if Path("@".join(parts[:k])).exists():
            return "@".join(parts[:k]), parts[k:]
    return parts[0], parts[1:]


def load_bodies(args) -> list:
    """Outlines of every OUTLINE argument, transforms applied, names made unique."""
    from .readers import load_outlines

    bodies = []
    for arg in args:
        source, steps = _split_transforms(arg)
        outlines = load_outlines(source)
        for step in steps:
            key, sep, value = step.partition("=")
            if not sep:
                raise InputError(f"{arg}: transform {step!r} needs the form key=value")
            outlines = [_transform(o, key.strip().lower(), value.strip(), arg) for o in outlines]
        bodies.extend(outlines)
    seen = {}
    unique = []
    for o in bodies:
        n = seen.get(o.name, 0)
        seen[o.name] = n + 1
        unique.append(o if n == 0 else o.renamed(f"{o.name}-{n + 1}"))
    return unique


def _cmd_solve(ns) -> int:
    from .analysis import alpha_for_cl, analyse
    from .report import solve_table
    from .writers import analysis_json, check_outputs, write_result

    bodies = load_bodies(ns.outlines)
    n_panels = None if ns.keep_points else ns.panels
    if ns.cl is not None:
        alphas = [alpha_for_cl(bodies, ns.cl, n_panels)]
        if ns.alpha:
            raise InputError("give either --alpha or --cl, not both")
    elif ns.alpha:
        alphas = parse_angles(ns.alpha)
    else:
        raise InputError("give the angles of attack with --alpha (or a target lift with --cl)")
    ref = parse_point(ns.ref, "--ref") if ns.ref else None
    check_outputs(ns.output or [], overwrite=ns.force)  # before solving: fail early, write nothing
    result = analyse(bodies, alphas, n_panels=n_panels, reference_point=ref)
    for path in ns.output or []:
        write_result(result, path, overwrite=ns.force)
    if ns.json:
        sys.stdout.write(analysis_json(result))
    else:
        if ns.cl is not None:
            sys.stdout.write(f"angle of attack for cl = {ns.cl:g}: {alphas[0]:.4f} deg\n")
        sys.stdout.write(solve_table(result))
    for path in ns.output or []:
        print(f"wrote {path}", file=sys.stderr)
    return 0


def _cmd_check(ns) -> int:
    from .check import inspect, overlaps
    from .report import check_table

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
    from .readers import write_outline_table
    from .sections import parse_spec

    outline = parse_spec(ns.spec, n_points=ns.points) if ns.points else parse_spec(ns.spec)
    if outline is None:
        raise InputError(f"{ns.spec}: not a section spec (try naca2412, naca23012, circle, "
                         "ellipse:A,B, joukowski:XC,YC, karman-trefftz:XC,YC,TAU)")
    write_outline_table(outline, ns.output, overwrite=ns.force)
    print(f"wrote {ns.output} ({len(outline.points)} points)", file=sys.stderr)
    return 0


def build_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="panelflow", description="2D inviscid panel analysis of foil and fairing "
                "sections: surface pressure, lift and pitching moment with error estimates.")
    p.add_argument("--version", action="version", version=f"panelflow {__version__}")
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help="show the full traceback on errors")
    p.add_argument("--debug", action="store_true", help="show the full traceback on errors")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)

    s = sub.add_parser("solve", parents=[common], help="surface pressure, lift and moment at given angles")
    s.add_argument("outlines", nargs="+", metavar="OUTLINE",
                   help="file or section spec, with optional @name=..@scale=..@pitch=..@move=X,Y")
    s.add_argument("--alpha", nargs="+", action="extend", metavar="A",
                   help="angles of attack in degrees: values or START:STOP:STEP (STOP "
                   "included), e.g. --alpha -4:10:2 12")
    s.add_argument("--cl", type=float, metavar="TARGET",
                   help="find and solve the angle that gives this lift coefficient")
    s.add_argument("--panels", type=int, default=200, metavar="N",
                   help="panels per body on a spline through the points (default 200)")
    s.add_argument("--keep-points", action="store_true",
                   help="use the given points as panel ends instead of re-panelling")
    s.add_argument("--ref", metavar="X,Y", help="moment reference point (default: quarter chord)")
    s.add_argument("--json", action="store_true", help="print machine-readable JSON")
    s.add_argument("-o", "--output", action="append", metavar="FILE",
                   help="also write the results (.json: everything; .csv: one row per angle)")
    s.add_argument("--force", action="store_true", help="replace existing output files")
    s.set_defaults(func=_cmd_solve)

    c = sub.add_parser("check", parents=[common], help="geometry report of outlines (exit 1 if any is unusable)")
    c.add_argument("outlines", nargs="+", metavar="OUTLINE")
    c.add_argument("--json", action="store_true", help="print machine-readable JSON")
    c.set_defaults(func=_cmd_check)

    w = sub.add_parser("section", parents=[common], help="write a built-in section as a coordinate table")
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
        if ns.command == "solve" and ns.panels is not None and ns.panels < 8:
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
