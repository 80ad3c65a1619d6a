"""Command-line options shared by the commands, and their translation into the description.

Every command that solves (``solve``, ``field``, ``loads``, ``compare``) takes the same geometry
and condition options and turns them into the same :class:`~panelflow.analysis.problem.Problem`
through :func:`problem_of`; what a command cannot give under some condition is refused by
:func:`~panelflow.analysis.problem.check_output` before any work.
"""

from __future__ import annotations

import argparse
import math
import re

from panelflow.analysis.problem import (DEFAULT_PANELS, MAX_PANELS_PER_BODY, MIN_PANELS, Flap,
                                       OperatingPoint, Problem, check_output)
from panelflow.errors import InputError
from panelflow.geometry import arguments

_ANGLE_TOKEN = re.compile(r"^[-+]?[\d.]+(e[-+]?\d+)?([:,][-+]?[\d.]+(e[-+]?\d+)?)*$", re.I)

# option -> takes several values; values may be negative, so they are folded into the option
NUMERIC_OPTIONS = {"--alpha": True, "--ref": False, "--cl": False, "--about": False,
                   "--speed": False, "--density": False, "--chord": False, "--span": False,
                   "--static-pressure": False, "--window": False, "--mach": False,
                   "--ground": False, "--free-surface": False, "--depth": False, "--flap": False,
                   "--resolution": False, "--flap-gap": False, "--flap-radius": False,
                   "--node-tolerance": False, "--smooth-within": False, "--reynolds": False,
                   "--critical-amplification": False, "--turbulence-level": False,
                   "--trip-upper": False, "--trip-lower": False}


def join_numeric_values(argv):
    """Fold the values after numeric options into one ``--option=A,B,...`` token.

    Without this argparse would read a negative value such as ``-4:8:2`` or ``-0.2,0`` as an
    option name.
    """
    out, i = [], 0
    while i < len(argv):
        tok = argv[i]
        if tok in NUMERIC_OPTIONS:
            j = i + 1
            limit = len(argv) if NUMERIC_OPTIONS[tok] else min(len(argv), i + 2)
            while j < limit and _ANGLE_TOKEN.match(argv[j]):
                j += 1
            if j > i + 1:
                out.append(tok + "=" + ",".join(argv[i + 1:j]))
                i = j
                continue
        out.append(tok)
        i += 1
    return out


def parse_numbers(text: str, count: int, option: str, kind=float) -> tuple:
    """``"A,B,..."`` as ``count`` numbers, or InputError naming the option."""
    try:
        values = tuple(kind(v) for v in text.split(","))
    except ValueError:
        values = ()
    if len(values) != count:
        raise InputError(f"{option} {text}: give {count} numbers separated by commas")
    return values


def parse_angles(items):
    """``--alpha`` values (see :func:`panelflow.geometry.arguments.parse_angles`)."""
    try:
        return arguments.parse_angles(list(items))
    except InputError as exc:
        raise InputError(f"--alpha {exc}") from None


def add_geometry_options(g) -> None:
    """Panelling and flap options."""
    g.add_argument("--panels", type=int, metavar="N",
                   help=f"panels per body on a spline through the points (default "
                   f"{DEFAULT_PANELS})")
    g.add_argument("--keep-points", action="store_true",
                   help="use the given points as panel ends instead of re-panelling")
    g.add_argument("--ref", metavar="X,Y", help="moment reference point (default: quarter chord)")
    g.add_argument("--flap", metavar="XH,ANGLE",
                   help="deflect the first body's aft part about a hinge at chord fraction XH by "
                   "ANGLE degrees (trailing edge down positive)")
    g.add_argument("--flap-gap", type=float, metavar="G",
                   help="make it a separate flap body with this slot gap (fraction of the chord)")
    g.add_argument("--flap-radius", type=float, metavar="R",
                   help="rounding radius at the hinge (fraction of the chord, default 0.01)")
    g.add_argument("--smooth-within", type=float, metavar="D",
                   help="first fit each body with a smoothing curve that moves no point by more "
                   "than D (outline units; leading and trailing edges kept), for digitised or "
                   "noisy tables")


def add_condition_options(g, angles_help: str) -> None:
    """The operating point: angles or target lift, free stream, fluid, depth, scale, plane."""
    g.add_argument("--alpha", nargs="+", action="extend", metavar="A", help=angles_help)
    g.add_argument("--cl", type=float, metavar="TARGET",
                   help="instead of --alpha: solve the angle that gives this lift coefficient")
    g.add_argument("--mach", type=float, metavar="M",
                   help="freestream Mach number: compressibility-corrected coefficients and "
                   "pressures, and the critical Mach number")
    g.add_argument("--mach-rule",
                   choices=("karman-tsien", "prandtl-glauert", "laitone"),
                   help="compressibility correction (default karman-tsien)")
    g.add_argument("--fluid", metavar="NAME", help="air, fresh-water or sea-water")
    g.add_argument("--density", type=float, metavar="RHO",
                   help="fluid density in kg/m^3 (instead of --fluid)")
    g.add_argument("--speed", type=float, metavar="V", help="freestream speed in m/s")
    g.add_argument("--depth", type=float, metavar="H",
                   help="running depth in metres: the cavitation check (with a liquid --fluid)")
    g.add_argument("--unit", metavar="U",
                   help="length unit of the outline: m, cm, mm, in, ft (default m)")
    g.add_argument("--chord", type=float, metavar="C",
                   help="scale the main chord to C metres (instead of --unit)")
    v = g.add_argument_group("viscous analysis (boundary layer, transition, drag)")
    v.add_argument("--reynolds", type=float, metavar="RE",
                   help="Reynolds number on the speed and the main chord: adds drag, "
                   "transition and separation, viscous lift and moment")
    v.add_argument("--viscous", action="store_true",
                   help="the same, with the Reynolds number from --fluid, --speed and --chord "
                   "(or --unit)")
    v.add_argument("--critical-amplification", type=float, metavar="N",
                   help="critical amplification factor of the e^N transition method (default 9: "
                   "a smooth section in a quiet stream)")
    v.add_argument("--turbulence-level", type=float, metavar="PERCENT",
                   help="freestream turbulence level in percent, instead of "
                   "--critical-amplification")
    v.add_argument("--trip-upper", type=float, metavar="X",
                   help="forced transition (a trip strip) at x/c X on the upper surface")
    v.add_argument("--trip-lower", type=float, metavar="X",
                   help="forced transition at x/c X on the lower surface")
    plane = g.add_mutually_exclusive_group()
    plane.add_argument("--ground", type=float, metavar="H",
                       help="plane wall (ground effect) H below the quarter chord, in outline "
                       "units, parallel to the freestream")
    plane.add_argument("--free-surface", type=float, metavar="H",
                       help="free surface H above the quarter chord (high Froude number limit)")


def operating_of(ns, single_angle: bool = False) -> OperatingPoint:
    """The operating point of the command-line options (checked)."""
    from panelflow.flow.images import Boundary

    if ns.cl is not None and ns.alpha:
        raise InputError("give either --alpha or --cl, not both")
    if ns.cl is None and not ns.alpha:
        raise InputError("give the angles of attack with --alpha (or a target lift with --cl)")
    if ns.mach_rule is not None and ns.mach is None:
        raise InputError("--mach-rule: the correction rule needs a Mach number (--mach)")
    alpha = tuple(parse_angles(ns.alpha)) if ns.alpha else ()
    if single_angle and len(alpha) > 1:
        raise InputError(f"--alpha: {ns.command} is for one angle, got {len(alpha)}")
    plane = None
    if ns.ground is not None:  # argparse keeps the two options exclusive
        plane = Boundary.ground(ns.ground)
    elif ns.free_surface is not None:
        plane = Boundary.free_surface(ns.free_surface)
    rule = {} if ns.mach_rule is None else {"mach_rule": ns.mach_rule}
    return OperatingPoint(alpha_deg=alpha, target_cl=ns.cl, mach=ns.mach, **rule,
                          fluid=ns.fluid, density=ns.density, speed=ns.speed, depth=ns.depth,
                          unit=ns.unit, chord=ns.chord, plane=plane, reynolds=ns.reynolds,
                          viscous=ns.viscous,
                          critical_amplification=ns.critical_amplification,
                          turbulence_level=ns.turbulence_level, trip_upper=ns.trip_upper,
                          trip_lower=ns.trip_lower)


def flap_of(ns) -> Flap | None:
    if not ns.flap:
        unused = [o for o, v in (("--flap-gap", ns.flap_gap), ("--flap-radius", ns.flap_radius))
                  if v is not None]
        if unused:
            raise InputError(f"{unused[0]}: it shapes a flap; give the flap with --flap XH,ANGLE")
        return None
    hinge, angle = parse_numbers(ns.flap, 2, "--flap")
    radius = {} if ns.flap_radius is None else {"radius": ns.flap_radius}
    return Flap(hinge, angle, ns.flap_gap, **radius)


def _check_panels(n: int) -> None:
    if not MIN_PANELS <= n <= MAX_PANELS_PER_BODY:
        raise InputError(f"--panels {n}: give {MIN_PANELS} to {MAX_PANELS_PER_BODY} panels per "
                         "body")


def problem_of(ns, bodies, operating: OperatingPoint, label: str = "") -> Problem:
    """The problem of the command-line options for ``bodies`` under ``operating``."""
    ref = None
    if ns.ref:
        ref = arguments.parse_point(ns.ref, "--ref")
        if not all(math.isfinite(v) for v in ref):
            raise InputError(f"--ref {ns.ref}: give two finite numbers as X,Y")
    if ns.keep_points and ns.panels is not None:
        raise InputError(f"--panels {ns.panels}: not used with --keep-points (the given points "
                         "are the panel ends); give one of the two")
    panels = DEFAULT_PANELS if ns.panels is None else ns.panels
    if not ns.keep_points:
        _check_panels(panels)
    return Problem(tuple(bodies), operating, panels=None if ns.keep_points else panels,
                   reference_point=ref, flap=flap_of(ns), smoothing=ns.smooth_within,
                   label=label)


def checked_operating(ns, output: str, single_angle: bool = False) -> OperatingPoint:
    """:func:`operating_of`, refused when ``output`` cannot be made under it."""
    op = operating_of(ns, single_angle)
    check_output(op, output)
    return op


class Parser(argparse.ArgumentParser):
    """argparse with one-line errors (the usage is one ``--help`` away)."""

    def error(self, message):
        self.exit(2, f"{self.prog}: error: {message}\n")


def input_files(ns) -> list:
    """The files a command reads: outline files (without their ``@`` transforms), point and node
    tables."""
    import os

    files = []
    args = list(getattr(ns, "outlines", None) or [])
    args += [getattr(ns, k) for k in ("outline", "blend_with") if getattr(ns, k, None)]
    for arg in args:
        source, _ = arguments.split_transforms(arg)
        if os.path.isfile(source):
            files.append(source)
    for key in ("points", "nodes", "case"):
        value = getattr(ns, key, None)
        if isinstance(value, str) and os.path.isfile(value):
            files.append(value)
    return files
