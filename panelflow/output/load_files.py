"""Load files: JSON, CSV, VTU and an Abaqus-format mesh with a companion CSV of nodal loads.

The format follows the output name's extension (:data:`LOAD_WRITERS`); every file is written
atomically (:func:`panelflow.output.writers.atomic_write_text`) and none is replaced without
``overwrite``. Every file starts with the load cautions.

* ``.json`` -- everything: units, conditions, totals, the equilibrium check, cautions, and per
  body its panel-end nodes (``nodes``: ``x``, ``y``, ``pressure``, ``fx``, ``fy``), its panels
  (``panels``: ``x``, ``y`` midpoints, ``length``, ``nx``, ``ny``, ``pressure``, ``fx``, ``fy``,
  ``base``) and, with a node transfer, its ``structural_nodes`` (``id``, ``x``, ``y``, ``fx``,
  ``fy``).
* ``.csv`` -- one row per load node (the structural nodes when given, else the panel end points,
  numbered 1, 2, ... over all bodies) under one header row with the units in the column names;
  cautions, conditions and totals go beside it into ``NAME.about.json``.
* ``.vtu`` -- the panels as line cells (through meshio) with point data ``force`` (the nodal
  panel loads, 3 components) and ``pressure``, and cell data ``pressure`` (panel mean) and
  ``body``; cautions in an XML comment.
* ``.inp`` -- Abaqus-format nodes and two-node line elements of the load nodes (structural nodes
  in loop order when given), one node set per body, written by meshio; the nodal loads go to the
  companion file ``NAME.loads.csv`` keyed by the same node numbers (with the structural node
  ids beside them; its notes in ``NAME.loads.about.json``). Cautions in ``**`` comment lines.

Coordinates are in metres, the x-y plane of the input frame (the VTU adds z = 0).
"""

from __future__ import annotations

import csv
import io
import json
import math
import re
import tempfile
from pathlib import Path

import numpy as np

from panelflow.version import __version__
from panelflow.errors import OutputError
from panelflow.loads.section import Loads
from panelflow.output.writers import atomic_write_text, check_outputs, json_ready

LOAD_WRITERS: dict = {}
FORMAT = "panelflow section loads"


def register_load_writer(ext: str):
    """Decorator registering a load-file writer for an extension (with the dot)."""
    def deco(func):
        LOAD_WRITERS[ext.lower()] = func
        return func
    return deco


def companion_path(path) -> Path:
    """The nodal-load CSV that goes with a mesh file: ``NAME.inp`` -> ``NAME.loads.csv``."""
    p = Path(path)
    return p.with_name(p.stem + ".loads.csv")


def output_paths(path) -> list:
    """Every file one output name writes (a mesh format adds its companion CSV; a CSV file
    has its notes beside it)."""
    from panelflow.output.columns import with_sidecar

    p = Path(path)
    if p.suffix.lower() == ".inp":
        return [p, *with_sidecar(companion_path(p))]
    return with_sidecar(p)


def check_load_outputs(paths, overwrite: bool = False) -> None:
    """Raise :class:`OutputError` unless every load file (companions included) can be written;
    see :func:`panelflow.output.writers.check_outputs`. Call it before solving, so that a run that
    cannot finish writes nothing.
    """
    check_outputs(paths, overwrite, registry=LOAD_WRITERS, what="load file", expand=output_paths)


def write_loads(loads: Loads, path, overwrite: bool = False) -> list:
    """Write ``loads`` in the format of the extension of ``path``; returns the paths written."""
    check_load_outputs([path], overwrite)
    return LOAD_WRITERS[Path(path).suffix.lower()](loads, path, overwrite)


# --------------------------------------------------------------------------- shared pieces
def _num(v) -> float | None:
    v = float(v)
    return v if math.isfinite(v) else None


def _list(arr) -> list:
    return [_num(v) for v in np.asarray(arr, float)]


def _pt(p) -> list:
    return [float(p[0]), float(p[1])]


def units(loads: Loads) -> dict:
    return {"length": "m", "pressure": "Pa", "force": loads.force_unit,
            "moment": loads.moment_unit, "angle": "deg", "density": "kg/m3", "speed": "m/s"}


def conditions_record(loads: Loads) -> dict:
    c = loads.conditions
    fl = c.fluid
    outline_chord = loads.chord / loads.length_scale
    return {
        "fluid": fl.name, "fluid_source": fl.source, "density": fl.density,
        "temperature_c": fl.temperature_c, "vapour_pressure": fl.vapour_pressure,
        "speed": c.speed, "dynamic_pressure": loads.dynamic_pressure,
        "pressures": "gauge" if c.gauge else "absolute",
        "static_pressure": c.static_pressure,
        "length_scale": loads.length_scale, "scaling": c.describe_scale(outline_chord),
        "chord": loads.chord, "span": c.span, "alpha_deg": loads.alpha_deg,
    }


def _totals(lift, drag, moment, about, moments_about) -> dict:
    return {"lift": lift, "drag": drag, "moment": moment,
            "moments_about": [{"point": _pt(p), "moment": float(m)}
                              for p, m in zip(about, moments_about)]}


def transfer_record(loads: Loads) -> dict | None:
    t = loads.transfer
    if t is None:
        return None
    return {"source": t.source, "nodes": t.n_nodes, "tolerance": t.tolerance,
            "force_difference": t.force_difference, "force_relative": t.force_relative,
            "moment_difference": t.moment_difference, "moment_relative": t.moment_relative,
            "untransferred_bodies": list(t.untransferred),
            "bodies": [{"name": b.name, "nodes": b.n_nodes,
                        "moment_difference": b.moment_difference,
                        "moment_relative": b.moment_relative,
                        "max_distance": float(b.distance.max()) if b.n_nodes else None}
                       for b in t.bodies]}


def loads_record(loads: Loads) -> dict:
    """The machine-readable form of :class:`~panelflow.loads.Loads` (the JSON file)."""
    eq = loads.equilibrium
    totals = _totals(loads.lift, loads.drag, loads.moment, loads.about, loads.moments_about)
    totals.update(lift_circulation=loads.lift_circulation, cl_pressure=loads.cl_pressure,
                  cd_pressure=loads.cd_pressure, cm=loads.cm, cl_circulation=loads.cl_circulation)
    bodies = []
    for k, b in enumerate(loads.bodies):
        rec = {
            "name": b.name, "kind": b.kind, "chord": b.chord,
            "leading_edge": _pt(b.leading_edge), "trailing_edge": _pt(b.trailing_edge),
            "totals": _totals(b.lift, b.drag, b.moment, loads.about, b.moments_about),
            "nodes": {"x": _list(b.x), "y": _list(b.y), "pressure": _list(b.pressure),
                      "fx": _list(b.fx), "fy": _list(b.fy)},
            "panels": {"x": _list(b.panel_x), "y": _list(b.panel_y),
                       "length": _list(b.panel_length), "nx": _list(b.panel_nx),
                       "ny": _list(b.panel_ny), "pressure": _list(b.panel_pressure),
                       "fx": _list(b.panel_fx), "fy": _list(b.panel_fy),
                       "base": [bool(v) for v in b.base],
                       "node_a": [int(v) for v in b.cells[:, 0]],
                       "node_b": [int(v) for v in b.cells[:, 1]]},
        }
        if loads.transfer is not None:
            s = loads.transfer.bodies[k]
            rec["structural_nodes"] = {"id": [int(v) for v in s.ids], "x": _list(s.x),
                                       "y": _list(s.y), "fx": _list(s.fx), "fy": _list(s.fy)}
        bodies.append(rec)
    return {
        "format": FORMAT,
        "panelflow_version": __version__,
        "cautions": list(loads.cautions),
        "units": units(loads),
        "conditions": conditions_record(loads),
        "reference_point": _pt(loads.reference_point),
        "totals": totals,
        "equilibrium": {
            "tolerance": eq.tolerance, "max_relative": eq.max_relative, "ok": eq.ok,
            "checks": [{"quantity": c.quantity, "body": c.body, "from_loads": c.from_loads,
                        "from_coefficients": c.from_coefficients,
                        "unit": loads.force_unit if c.unit == "force" else loads.moment_unit,
                        "relative": c.relative} for c in eq.checks]},
        "notes": list(loads.notes),
        "analysis": json_ready(loads.analysis),
        "transfer": transfer_record(loads),
        "flap_hinge": hinge_record(loads),
        "bodies": bodies,
    }


def hinge_record(loads: Loads) -> dict | None:
    """The flap's hinge moment as plain data (None without a flap)."""
    h = loads.hinge
    if h is None:
        return None
    return {"kind": h.kind, "hinge_point": _pt(h.hinge_point), "moment": h.moment,
            "coefficient": h.coefficient, "flap_chord": h.flap_chord,
            "normal_force": h.normal_force, "nodes": h.nodes,
            "convention": "moment nose-up about the hinge point (positive turns the trailing "
                          "edge down); coefficient = moment / (q flap_chord^2 span)"}


def header_lines(loads: Loads) -> list:
    """Cautions, conditions and totals as plain lines (each file adds its comment marker)."""
    c = loads.conditions
    fu, mu = loads.force_unit, loads.moment_unit
    lines = [f"{FORMAT}, panelflow {__version__}"]
    lines += [f"CAUTION: {text}" for text in loads.cautions]
    lines.append(f"fluid {c.fluid.name} ({c.fluid.source}): density {c.fluid.density:g} kg/m3; "
                 f"speed {c.speed:g} m/s; q {loads.dynamic_pressure:.8g} Pa; pressures "
                 + ("gauge (relative to the freestream static pressure)" if c.gauge else
                    f"absolute (static pressure {c.static_pressure:g} Pa)"))
    lines.append(f"lengths in m ({c.describe_scale(loads.chord / loads.length_scale)}); chord "
                 f"{loads.chord:.8g} m; "
                 + ("forces per metre of span" if c.span is None else f"span {c.span:g} m"))
    ref = loads.reference_point
    lines.append(f"angle of attack {loads.alpha_deg:g} deg; moments nose-up about the reference "
                 f"point ({ref[0]:.8g}, {ref[1]:.8g}) m")
    tot = (f"totals: lift {loads.lift:.10g} {fu}, drag {loads.drag:.10g} {fu}, moment "
           f"{loads.moment:.10g} {mu}")
    for p, m in zip(loads.about, loads.moments_about):
        tot += f", moment about ({p[0]:.8g}, {p[1]:.8g}) m {m:.10g} {mu}"
    lines.append(tot)
    eq = loads.equilibrium
    lines.append(f"equilibrium check against coefficients x q c: largest relative difference "
                 f"{eq.max_relative:.1e} (tolerance {eq.tolerance:.0e}, "
                 f"{'passed' if eq.ok else 'FAILED'})")
    h = loads.hinge
    if h is not None:
        lines.append(f"flap hinge moment {h.moment:.10g} {mu} nose-up about "
                     f"({h.hinge_point[0]:.8g}, {h.hinge_point[1]:.8g}) m "
                     f"({'deflected part' if h.kind == 'plain' else 'flap body'}); coefficient "
                     f"{h.coefficient:.6g} per q c_f^2, flap chord {h.flap_chord:.8g} m")
    t = loads.transfer
    if t is not None:
        lines.append(f"loads moved onto {t.n_nodes} structural nodes from {t.source}: force kept "
                     f"to {t.force_relative:.1e}, moment to {t.moment_relative:.1e} (relative)")
    return lines


def load_nodes(loads: Loads):
    """The nodes the CSV and mesh files carry: per body (name, ids, x, y, fx, fy, cells).

    Structural nodes when the loads have a transfer (bodies without any are left out), else
    the panel end points numbered 1, 2, ... over all bodies. ``cells`` index the body's nodes.
    """
    out = []
    if loads.transfer is not None:
        for s in loads.transfer.bodies:
            if s.n_nodes:
                j = np.arange(s.n_nodes)
                out.append((s.name, s.ids, s.x, s.y, s.fx, s.fy,
                            np.stack([j, (j + 1) % s.n_nodes], axis=1)))
        return out
    first = 1
    for b in loads.bodies:
        out.append((b.name, np.arange(first, first + b.n_nodes), b.x, b.y, b.fx, b.fy, b.cells))
        first += b.n_nodes
    return out


def _csv_text(columns, rows) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    w.writerows(rows)
    return buf.getvalue()


def _write_csv_with_notes(path, loads: Loads, columns, rows, what: str, overwrite) -> list:
    """A load CSV (one header row) and its notes beside it: cautions, conditions, totals."""
    from panelflow.output.columns import write_sidecar

    lines = header_lines(loads)
    notes = [line for line in lines if not line.startswith("CAUTION: ")] + [what]
    extra = {"cautions": list(loads.cautions), "units": units(loads),
             "conditions": json_ready(conditions_record(loads))}
    out = atomic_write_text(path, _csv_text(columns, rows), overwrite)
    return [out, write_sidecar(path, columns, " ".join(loads.cautions), notes, overwrite,
                               extra)]


# --------------------------------------------------------------------------- writers
@register_load_writer(".json")
def write_json(loads: Loads, path, overwrite: bool = False) -> list:
    text = json.dumps(loads_record(loads), indent=1, allow_nan=False) + "\n"
    return [atomic_write_text(path, text, overwrite)]


@register_load_writer(".csv")
def write_csv(loads: Loads, path, overwrite: bool = False) -> list:
    fu = loads.force_unit
    what = ("structural nodes (node = the mesh's node id)" if loads.transfer is not None else
            "panel end points (node numbered over all bodies, as in the .inp export)")
    rows = []
    for name, ids, x, y, fx, fy, _ in load_nodes(loads):
        rows += [[name, int(i), repr(float(a)), repr(float(b)), repr(float(c)), repr(float(d))]
                 for i, a, b, c, d in zip(ids, x, y, fx, fy)]
    columns = ["body", "node", "x [m]", "y [m]", f"fx [{fu}]", f"fy [{fu}]"]
    return _write_csv_with_notes(path, loads, columns, rows, f"one row per load node: {what}",
                                 overwrite)


def _xml_comment(lines) -> str:
    body = "\n".join(line.replace("--", "- -") for line in lines)
    return f"<!--\n{body}\n-->\n"


def _meshio_text(mesh, fmt: str, suffix: str) -> str:
    """Text of a mesh as meshio writes it (through a private temporary folder)."""
    import meshio

    with tempfile.TemporaryDirectory() as tmp:
        target = Path(tmp) / f"mesh{suffix}"
        try:
            meshio.write(target, mesh, file_format=fmt)
        except Exception as exc:  # noqa: BLE001 - meshio raises many kinds
            raise OutputError(f"meshio could not write the {fmt} mesh ({exc})") from None
        return target.read_text(encoding="utf-8")


@register_load_writer(".vtu")
def write_vtu(loads: Loads, path, overwrite: bool = False) -> list:
    import meshio

    pts, cells, force, p_node, p_cell, body = [], [], [], [], [], []
    offset = 0
    for k, b in enumerate(loads.bodies):
        pts.append(np.stack([b.x, b.y, np.zeros(b.n_nodes)], axis=1))
        force.append(np.stack([b.fx, b.fy, np.zeros(b.n_nodes)], axis=1))
        p_node.append(b.pressure)
        cells.append(b.cells + offset)
        p_cell.append(b.panel_pressure)
        body.append(np.full(len(b.cells), k))
        offset += b.n_nodes
    mesh = meshio.Mesh(np.vstack(pts), [("line", np.vstack(cells))],
                       point_data={"force": np.vstack(force), "pressure": np.concatenate(p_node)},
                       cell_data={"pressure": [np.concatenate(p_cell)],
                                  "body": [np.concatenate(body)]})
    text = _meshio_text(mesh, "vtu", ".vtu")
    lines = header_lines(loads) + [
        f"point data force: nodal panel loads [{loads.force_unit}]; point data pressure [Pa]; "
        "cell data pressure: panel mean [Pa]; cell data body: "
        + ", ".join(f"{k} = {b.name}" for k, b in enumerate(loads.bodies))]
    decl_end = text.index("?>") + 2 if text.startswith("<?xml") else 0
    text = (text[:decl_end] + ("\n" if decl_end else "") + _xml_comment(lines)
            + text[decl_end:].lstrip("\n"))
    return [atomic_write_text(path, text, overwrite)]


def _set_name(name: str, taken: set) -> str:
    base = re.sub(r"[^A-Za-z0-9_]+", "_", name).strip("_") or "BODY"
    if base[0].isdigit():
        base = "B_" + base
    out, n = base, 1
    while out.upper() in taken:
        n += 1
        out = f"{base}_{n}"
    taken.add(out.upper())
    return out


@register_load_writer(".inp")
def write_inp(loads: Loads, path, overwrite: bool = False) -> list:
    import meshio

    groups = load_nodes(loads)
    pts, cells, sets, rows = [], [], {}, []
    taken: set = set()
    offset = 0
    fu = loads.force_unit
    for name, ids, x, y, fx, fy, c in groups:
        n = len(ids)
        pts.append(np.stack([x, y], axis=1))
        cells.append(c + offset)
        sets[_set_name(name, taken)] = np.arange(offset, offset + n)
        rows += [[offset + j + 1, int(ids[j]), name, repr(float(x[j])), repr(float(y[j])),
                  repr(float(fx[j])), repr(float(fy[j]))] for j in range(n)]
        offset += n
    mesh = meshio.Mesh(np.vstack(pts), [("line", np.vstack(cells))], point_sets=sets)
    text = _meshio_text(mesh, "abaqus", ".inp")
    companion = companion_path(path)
    lines = header_lines(loads) + [
        f"nodes in m; nodal loads [{fu}] in {companion.name}, keyed by these node numbers"]
    text = "".join(f"** {line}\n" for line in lines) + text
    id_what = ("the structural mesh's own node id" if loads.transfer is not None else
               "the same number (panel end points)")
    written = [atomic_write_text(path, text, overwrite)]
    written += _write_csv_with_notes(
        companion, loads, ["node", "id", "body", "x [m]", "y [m]", f"fx [{fu}]", f"fy [{fu}]"],
        rows, f"nodal loads for {Path(path).name}: node = its node number, id = {id_what}",
        overwrite)
    return written
