"""Writers: results to JSON and CSV, always atomically (temporary file, then rename).

A registry keyed by file extension lets the CLI pick the writer from the output name.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

from panelflow.version import __version__
import numpy as np

from panelflow.analysis.result import as_result, margin_columns, margin_record
from panelflow.files import atomic_write, atomic_write_text
from panelflow.files import check_outputs as _check_paths

CAUTION = ("Inviscid, incompressible, attached-flow estimate: no stall, separation, cavitation or "
           "compressibility effects. Check designs against test data and the applicable design "
           "codes; final structures need checking under local codes and licensed practice.")

WRITERS: dict = {}


def register_writer(ext: str):
    """Decorator registering a result writer for a file extension (with the dot)."""
    def deco(func):
        WRITERS[ext.lower()] = func
        return func
    return deco


def _clean(value):
    """JSON has no NaN: undefined numbers become null."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def _floats(arr):
    return [_clean(float(v)) for v in arr]


def analysis_record(result) -> dict:
    """The machine-readable form of a :class:`~panelflow.analysis.result.Result` (or Analysis).

    Keys: ``panelflow_version``, ``chord``, ``reference_point``, ``panels_per_body``, ``bodies``,
    ``caution``, ``results`` (one object per angle: ``alpha_deg``, ``cl``, ``cm``,
    ``cd_pressure``, ``cl_error_estimate``, ``cm_error_estimate``, ``cl_pressure``,
    ``cl_circulation``, ``x_center_of_pressure``, the margin columns of
    :func:`~panelflow.analysis.result.margin_columns` when computed, and ``surface``: per body
    its coefficients and ``x``, ``y``, ``cp``); then ``conditions`` (the problem as solved),
    ``notes`` and, when computed, ``compressibility``, ``cavitation``, ``plane`` and ``flap``
    (see :func:`~panelflow.analysis.result.margin_record`).
    """
    result = as_result(result)
    columns = margin_columns(result)
    peak_cp, peak_x, peak_k = suction_peak(result)
    results = []
    for i, r in enumerate(result):
        row = {
            "alpha_deg": r.alpha_deg,
            "cl": _clean(r.cl),
            "cm": _clean(r.cm),
            "cd_pressure": _clean(r.cd_pressure),
            "cl_error_estimate": _clean(r.cl_error_estimate),
            "cm_error_estimate": _clean(r.cm_error_estimate),
            "cl_pressure": _clean(r.cl_pressure),
            "cl_circulation": _clean(r.cl_circulation),
            "x_center_of_pressure": _clean(r.x_center_of_pressure),
            "cp_min": _clean(float(peak_cp[i])),
            "x_cp_min": _clean(float(peak_x[i])),
            "cp_min_body": result.outlines[int(peak_k[i])].name,
        }
        row.update({name: _clean(float(values[i])) for name, values in columns.items()})
        row["surface"] = [{
            "name": b.name,
            "cl": _clean(b.cl), "cd_pressure": _clean(b.cd_pressure), "cm": _clean(b.cm),
            "cp_min": _clean(b.cp_min), "x_cp_min": _clean(b.x_cp_min),
            "x_stagnation": _clean(b.x_stagnation), "cp_base": _clean(b.cp_base),
            "x": _floats(b.x), "y": _floats(b.y), "cp": _floats(b.cp),
        } for b in r.bodies]
        if result.compressibility is not None:
            nodes = [result.fine.panels.body_nodes(k) for k in range(len(r.bodies))]
            for surf, sl in zip(row["surface"], nodes):
                surf["cp_mach"] = _floats(result.compressibility.cp[i, sl])
        results.append(row)
    record = {
        "panelflow_version": __version__,
        "chord": result.chord,
        "reference_point": _floats(result.reference_point),
        "panels_per_body": [pl.n_panels for pl in result.panellings],
        "bodies": [o.name for o in result.outlines],
        "caution": CAUTION,
        "results": results,
        "conditions": json_ready(result.problem.record()),
        "notes": list(result.notes),
    }
    record.update(json_ready(margin_record(result)))
    return record


def json_ready(value):
    """Nested plain data with NaN and infinities as null (JSON has neither)."""
    if isinstance(value, dict):
        return {k: json_ready(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_ready(v) for v in value]
    if isinstance(value, float):
        return _clean(value)
    return value


def analysis_json(result) -> str:
    return json.dumps(analysis_record(result), indent=1) + "\n"


POLAR_COLUMNS = ("alpha_deg", "cl", "cm", "cd_pressure", "cp_min", "x_cp_min", "x_stagnation",
                 "cl_error_estimate", "cm_error_estimate")


def suction_peak(result):
    """The lowest Cp over every body at each angle: ``(cp_min, x_cp_min, body index)``.

    ``x_cp_min`` is the chord fraction along the main body's chord line (as for every x/c in
    panelflow); the body index counts from 0 in ``result.outlines``. A flap's or a second
    element's nose often carries the deepest suction, so no body is left out.
    """
    f = as_result(result).fine
    cp = np.asarray(f.cp_min, float).reshape(len(f.alpha_deg), -1)
    k = np.argmin(np.where(np.isnan(cp), np.inf, cp), axis=1)
    rows = np.arange(len(k))
    return cp[rows, k], np.asarray(f.x_cp_min, float).reshape(cp.shape)[rows, k], k


def polar_columns(result) -> dict:
    """Per-angle numeric columns of a result: :data:`POLAR_COLUMNS`, then its margin columns.

    ``cp_min`` and ``x_cp_min`` are the suction peak over all bodies (:func:`suction_peak`;
    the body is named by :func:`peak_bodies`); ``x_stagnation`` is the main body's.
    """
    result = as_result(result)
    f = result.fine
    cp_min, x_cp_min, _ = suction_peak(result)
    out = {"alpha_deg": f.alpha_deg, "cl": f.cl, "cm": f.cm, "cd_pressure": f.cd_pressure,
           "cp_min": cp_min, "x_cp_min": x_cp_min,
           "x_stagnation": np.asarray(f.x_stagnation)[:, 0],
           "cl_error_estimate": result.cl_error_estimate,
           "cm_error_estimate": result.cm_error_estimate}
    out.update(margin_columns(result))
    return out


def peak_bodies(result) -> tuple:
    """Name of the body that carries the suction peak, per angle (see :func:`suction_peak`)."""
    result = as_result(result)
    names = [o.name for o in result.outlines]
    return tuple(names[int(k)] for k in suction_peak(result)[2])


def polar_rows(result):
    """One row per angle: :data:`POLAR_COLUMNS` then the margin columns (see
    :func:`polar_columns`)."""
    cols = list(polar_columns(result).values())
    for i in range(len(cols[0])):
        yield tuple(float(c[i]) for c in cols)


@register_writer(".json")
def write_json(result, path, overwrite=False) -> Path:
    """Write the full record (coefficients, margins and surface Cp) as JSON."""
    return atomic_write_text(path, analysis_json(result), overwrite)


def check_outputs(paths, overwrite=False, registry=None, what="output", expand=None) -> None:
    """:func:`panelflow.files.check_outputs` with the result writers as the default registry
    (a CSV file's notes beside it included)."""
    if registry is None and expand is None:
        from panelflow.output.columns import with_sidecar

        expand = with_sidecar
    _check_paths(paths, WRITERS if registry is None else registry, overwrite, what, expand)


def write_result(result, path, overwrite=False) -> Path:
    """Write a result (or an inviscid Analysis) in the format given by the extension of ``path``."""
    check_outputs([path], overwrite)
    return WRITERS[Path(path).suffix.lower()](result, path, overwrite)
