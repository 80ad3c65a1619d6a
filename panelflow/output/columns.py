"""What every output column means: its name in full words, its unit and one sentence.

Column *names* in files (``cl``, ``x_cp_min``, ...) stay short and stable for programs that read
them; people read the words. Text tables print the words as their headers, CSV files carry the
words, units and sentences in their sidecar file (:func:`sidecar_path`), and ``--help`` and the
README point here. A column this module does not know (one added by a later part of the
analysis) is described as such rather than dropped, so new columns flow through every writer.

A CSV table is exactly one header row and one line per row, so a spreadsheet opens it as it is;
what a reader needs besides the numbers (panelflow version, caution, notes, the column
descriptions) is written beside it as ``NAME.about.json``.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

__all__ = ["Column", "COLUMNS", "describe", "sidecar_path", "with_sidecar", "sidecar_record",
           "write_sidecar", "SIDECAR_FORMAT"]

SIDECAR_FORMAT = "panelflow table notes"


@dataclass(frozen=True)
class Column:
    """One column: its header in words, unit (``""`` for a pure number) and meaning."""

    words: str
    unit: str
    meaning: str

    def header(self) -> str:
        """The column header of a text table: the words, the unit in brackets."""
        return f"{self.words} [{self.unit}]" if self.unit else self.words


_C = Column
COLUMNS = {
    "section": _C("section", "", "the case: one argument of compare or one section of a case "
                  "file (its bodies' names joined when not labelled)"),
    "alpha_deg": _C("angle of attack", "deg", "from the outline's x-axis, which is the "
                    "freestream direction"),
    "cl": _C("lift coefficient", "", "lift from the circulation (Kutta-Joukowski theorem) "
             "divided by dynamic pressure and the main body's chord"),
    "cm": _C("moment coefficient", "", "pitching moment about the reference point, nose-up "
             "positive, per dynamic pressure and chord squared"),
    "cd_pressure": _C("pressure drag coefficient", "", "the surface pressure integrated along "
                      "the freestream: zero in exact inviscid flow, so it shows the "
                      "discretisation error"),
    "cl_pressure": _C("pressure lift coefficient", "", "the surface pressure integrated "
                      "normal to the freestream (the circulation lift is the one reported as "
                      "cl)"),
    "cl_circulation": _C("circulation lift coefficient", "", "the same as cl"),
    "x_center_of_pressure": _C("centre of pressure", "x/c", "where the lift acts on the main "
                               "chord line; blank when the lift is too small to place it "
                               "within 1 % of the chord"),
    "cp_min": _C("lowest pressure coefficient", "", "the suction peak over every body"),
    "x_cp_min": _C("suction peak position", "x/c", "where the suction peak sits, along the "
                   "main body's chord line"),
    "cp_min_error_estimate": _C("suction peak error estimate", "", "the main body's lowest "
                                "Cp is within this of the exact inviscid value (panels, "
                                "input points and smoothing; blank where it cannot be "
                                "estimated)"),
    "cp_min_body": _C("body with the suction peak", "", "name of the body that carries the "
                      "suction peak"),
    "x_stagnation": _C("stagnation point", "x/c", "on the main body, along its chord line"),
    "cl_error_estimate": _C("lift coefficient error estimate", "", "discretisation and input "
                            "points, at the safety factor of a grid-convergence index"),
    "cm_error_estimate": _C("moment coefficient error estimate", "", "as for the lift"),
    "alpha_zero_lift_deg": _C("zero-lift angle", "deg", "the angle of attack where the lift "
                              "vanishes: exact in free space (the circulation lift is a "
                              "sinusoid of the angle), near a plane interpolated between the "
                              "two solved angles closest to zero lift; blank when it cannot be "
                              "found"),
    "lift_slope_per_deg": _C("lift slope", "1/deg", "rise of the lift coefficient per degree "
                             "at zero lift (free space), or between the two solved angles "
                             "closest to zero lift (near a plane)"),
    # margins (panelflow.analysis.result.margin_columns)
    "cl_mach": _C("lift coefficient at the Mach number", "", "corrected by the chosen "
                  "compressibility rule"),
    "cl_mach_error_estimate": _C("lift coefficient at the Mach number, error estimate", "",
                                 "of the corrected lift"),
    "cm_mach": _C("moment coefficient at the Mach number", "", "corrected by the chosen rule"),
    "cm_mach_error_estimate": _C("moment coefficient at the Mach number, error estimate", "",
                                 "of the corrected moment"),
    "cp_min_mach": _C("lowest pressure coefficient at the Mach number", "", "the corrected "
                      "suction peak of the main body"),
    "mach_critical": _C("critical Mach number", "", "freestream Mach number at which the "
                        "corrected suction peak reaches sonic speed (Cp*)"),
    "inception_speed": _C("cavitation inception speed", "m/s", "freestream speed at which the "
                          "suction peak reaches the vapour pressure at the running depth"),
    "inception_speed_low": _C("inception speed, low end", "m/s", "the inception speed with "
                              "the suction peak at the deep end of its error estimate: the "
                              "figure to design with"),
    "inception_speed_high": _C("inception speed, high end", "m/s", "the inception speed with "
                               "the suction peak at the shallow end of its error estimate"),
    "cavitation_number": _C("cavitation number", "", "(ambient plus hydrostatic pressure "
                            "minus vapour pressure) over the dynamic pressure"),
    "cavitation_margin": _C("cavitation margin", "", "cavitation number plus the lowest Cp: "
                            "negative when cavitating"),
    "plane_clearance": _C("clearance to the plane", "outline units", "smallest distance from "
                          "any body to the wall or free surface"),
    "cl_free_space": _C("lift coefficient in free space", "", "the same bodies without the "
                        "plane"),
    "cm_free_space": _C("moment coefficient in free space", "", "the same bodies without the "
                        "plane"),
    # the viscous analysis (panelflow.analysis.result.VISCOUS_COLUMNS)
    "cl_viscous": _C("viscous lift coefficient", "", "circulation lift of the surface speeds "
                     "with the boundary layer and wake (the viscous analysis)"),
    "cm_viscous": _C("viscous moment coefficient", "", "the viscous pressures' moment about "
                     "the reference point, nose-up positive"),
    "cd": _C("drag coefficient", "", "from the wake's momentum thickness far downstream "
             "(Squire & Young, ARC R&M 1838, 1938)"),
    "cd_friction": _C("friction drag coefficient", "", "the skin friction integrated along "
                      "both surfaces"),
    "cd_form": _C("form drag coefficient", "", "the drag less its friction part: the pressure "
                  "drag of the boundary layer's displacement"),
    "cd_squire_young": _C("trailing-edge drag coefficient", "", "the Squire-Young formula on "
                          "the trailing-edge states of both surfaces: a check of the drag"),
    "lift_to_drag": _C("lift-to-drag ratio", "", "viscous lift coefficient over drag "
                       "coefficient"),
    "transition_upper": _C("upper transition", "x/c", "where the upper boundary layer turns "
                           "turbulent, freely or at a trip; blank: laminar to the trailing "
                           "edge"),
    "transition_lower": _C("lower transition", "x/c", "the same on the lower surface"),
    "separation_upper": _C("upper separation", "x/c", "where the upper skin friction first "
                           "turns negative; blank: none"),
    "reattachment_upper": _C("upper reattachment", "x/c", "where the upper skin friction "
                             "turns positive again after separating; blank: none (a "
                             "separation without it reaches the trailing edge)"),
    "separation_lower": _C("lower separation", "x/c", "the same on the lower surface"),
    "reattachment_lower": _C("lower reattachment", "x/c", "the same on the lower surface"),
    "viscous_converged": _C("viscous iteration converged", "", "1 when the coupled iteration "
                            "converged; 0 when it did not (its numbers are then blank)"),
    "viscous_residual": _C("viscous residual", "", "largest residual of the coupled equations "
                           "at the last iteration"),
    # surface tables
    "body": _C("body", "", "the body's name"),
    "point": _C("point", "", "panel node number along the body, from the upper trailing edge "
                "over the leading edge to the lower trailing edge (a body without a trailing "
                "edge: from the downstream end of its longest extent, counter-clockwise)"),
    "x": _C("x", "outline units", "node position in the outline's own frame"),
    "y": _C("y", "outline units", "node position in the outline's own frame"),
    "x_over_c": _C("chord position", "x/c", "along the main body's chord line"),
    "arc_length": _C("arc length", "outline units", "along the body from its first node"),
    "cp": _C("pressure coefficient", "", "(p - p_freestream) over the dynamic pressure, "
             "from Bernoulli's equation"),
    "cp_mach": _C("pressure coefficient at the Mach number", "", "corrected by the chosen "
                  "compressibility rule"),
    # field files
    "u": _C("velocity along x", "freestream speeds", "per unit freestream speed"),
    "v": _C("velocity along y", "freestream speeds", "per unit freestream speed"),
    "inside": _C("inside a body", "", "1 inside a body (or beyond a plane), where u, v and cp "
                 "are nan; else 0"),
    # load files (their units stand in the names, e.g. "fx [N]")
    "node": _C("node", "", "load node number"),
    "id": _C("node id", "", "the structural mesh's own node id"),
    "fx": _C("force along x", "", "nodal load, statically equivalent to the panel pressures"),
    "fy": _C("force along y", "", "nodal load, statically equivalent to the panel pressures"),
}


def describe(name: str) -> Column:
    """The description of column ``name`` (a generic one for a column not listed here).

    A name that carries its unit in brackets (``fx [N]``) takes that unit.
    """
    base, unit = name, None
    if name.endswith("]") and " [" in name:
        base, unit = name[:-1].split(" [", 1)
    col = COLUMNS.get(base, Column(base.replace("_", " "), "",
                                   "see the README for this column"))
    return col if unit is None else Column(col.words, unit, col.meaning)


def sidecar_path(path) -> Path:
    """Where the notes of the CSV file ``path`` go: ``NAME.about.json`` beside it."""
    p = Path(path)
    return p.with_name(p.stem + ".about.json")


def with_sidecar(path) -> list:
    """Every file one table output writes: a CSV file and its notes, other formats alone."""
    p = Path(path)
    return [p, sidecar_path(p)] if p.suffix.lower() == ".csv" else [p]


def sidecar_record(table_path, names, caution: str, notes=(), extra=None) -> dict:
    """The notes of one CSV table as plain data (see the module docstring)."""
    from panelflow.version import __version__

    record = {
        "format": SIDECAR_FORMAT,
        "table": Path(table_path).name,
        "panelflow_version": __version__,
        "caution": caution,
        "notes": [" ".join(str(n).split()) for n in notes],
        "columns": [{"name": n, "words": describe(n).words, "unit": describe(n).unit,
                     "meaning": describe(n).meaning} for n in names],
    }
    record.update(extra or {})
    return record


def write_sidecar(table_path, names, caution: str, notes=(), overwrite: bool = False,
                  extra=None) -> Path:
    """Write the notes of the CSV table ``table_path`` beside it, atomically.

    Returns
    -------
    Path
        The notes file.
    """
    from panelflow.files import atomic_write_text

    text = json.dumps(sidecar_record(table_path, names, caution, notes, extra), indent=1,
                      allow_nan=False) + "\n"
    return atomic_write_text(sidecar_path(table_path), text, overwrite)
