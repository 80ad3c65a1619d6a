"""Surface pressure tables: Cp at every panel node of every body, at every angle, one row each.

The table (:func:`surface_table`) is tidy -- one observation per row, ready for a spreadsheet:

``alpha_deg, body, point, x, y, x_over_c, arc_length, cp`` and, with a Mach number,
``cp_mach`` (the pressure corrected by the result's rule).

``x``, ``y`` and ``arc_length`` are in the outline's own units and frame; ``x_over_c`` is the
chord fraction along the main body's chord line (as every x/c panelflow reports); ``point``
numbers the nodes along each body from its first (the upper trailing edge). Files go through
the table writers (:mod:`panelflow.output.tables`): ``.csv`` with one header row and its notes
in ``NAME.about.json``, or ``.json``.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from panelflow.analysis.result import as_result

__all__ = ["SURFACE_COLUMNS", "surface_table", "write_surface", "check_surface_outputs"]

SURFACE_COLUMNS = ("alpha_deg", "body", "point", "x", "y", "x_over_c", "arc_length", "cp")


def surface_table(result):
    """The surface pressures of a result as a :class:`~panelflow.output.tables.Table`.

    Parameters
    ----------
    result : Result or Analysis

    Returns
    -------
    Table
        One row per angle, body and panel node, columns :data:`SURFACE_COLUMNS` (and
        ``cp_mach`` with a Mach number).
    """
    from panelflow.output.tables import Table

    result = as_result(result)
    f = result.fine
    line = f.chord_line
    mach = result.compressibility
    cols = {name: [] for name in SURFACE_COLUMNS}
    cp_mach = []
    for i, r in enumerate(result):
        for k, b in enumerate(r.bodies):
            x, y = np.asarray(b.x, float), np.asarray(b.y, float)
            n = len(x)
            cols["alpha_deg"].append(np.full(n, r.alpha_deg))
            cols["body"] += [b.name] * n
            cols["point"].append(np.arange(1, n + 1, dtype=float))
            cols["x"].append(x)
            cols["y"].append(y)
            cols["x_over_c"].append(np.asarray(line.fraction(x + 1j * y), float))
            cols["arc_length"].append(np.r_[0.0, np.cumsum(np.hypot(np.diff(x), np.diff(y)))])
            cols["cp"].append(np.asarray(b.cp, float))
            if mach is not None:
                cp_mach.append(np.asarray(mach.cp[i, f.panels.body_nodes(k)], float))
    table = {name: (values if name == "body" else np.concatenate(values))
             for name, values in cols.items()}
    if mach is not None:
        table["cp_mach"] = np.concatenate(cp_mach)
    return Table(table)


def check_surface_outputs(paths, overwrite: bool = False) -> None:
    """Raise :class:`~panelflow.errors.OutputError` unless every surface table can be written
    (``.csv`` with its notes, or ``.json``); call it before solving."""
    from panelflow.output.tables import check_table_outputs

    check_table_outputs(paths, overwrite)


def write_surface(result, path, overwrite: bool = False) -> Path:
    """Write the surface pressures of ``result`` (:func:`surface_table`) to ``path``.

    Returns
    -------
    Path
        The table file (a CSV file's notes are written beside it).
    """
    from panelflow.output.tables import write_table

    result = as_result(result)
    ref = result.reference_point
    notes = [f"bodies: {'; '.join(o.name for o in result.outlines)}; main chord "
             f"{result.chord:.9g} outline units; x/c along the main body's chord line",
             f"panels per body: {', '.join(str(p.n_panels) for p in result.panellings)}; "
             f"moments of the polar about ({ref[0]:.9g}, {ref[1]:.9g})", *result.notes]
    if result.compressibility is not None:
        c = result.compressibility
        notes.append(f"cp_mach: corrected by the {c.rule} rule at Mach {c.mach:g}")
    return write_table(surface_table(result), path, overwrite, notes)
