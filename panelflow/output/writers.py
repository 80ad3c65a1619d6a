"""Writers: results to JSON and CSV, always atomically (temporary file, then rename).

A registry keyed by file extension lets the CLI pick the writer from the output name.
"""

from __future__ import annotations

import csv
import io
import json
import math
from pathlib import Path

from panelflow.version import __version__
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


def analysis_record(analysis) -> dict:
    """The machine-readable form of an :class:`~panelflow.analysis.Analysis`."""
    results = []
    for r in analysis:
        results.append({
            "alpha_deg": r.alpha_deg,
            "cl": _clean(r.cl),
            "cm": _clean(r.cm),
            "cd_pressure": _clean(r.cd_pressure),
            "cl_error_estimate": _clean(r.cl_error_estimate),
            "cm_error_estimate": _clean(r.cm_error_estimate),
            "cl_pressure": _clean(r.cl_pressure),
            "cl_circulation": _clean(r.cl_circulation),
            "x_center_of_pressure": _clean(r.x_center_of_pressure),
            "surface": [{
                "name": b.name,
                "cl": _clean(b.cl), "cd_pressure": _clean(b.cd_pressure), "cm": _clean(b.cm),
                "cp_min": _clean(b.cp_min), "x_cp_min": _clean(b.x_cp_min),
                "x_stagnation": _clean(b.x_stagnation), "cp_base": _clean(b.cp_base),
                "x": _floats(b.x), "y": _floats(b.y), "cp": _floats(b.cp),
            } for b in r.bodies],
        })
    return {
        "panelflow_version": __version__,
        "chord": analysis.chord,
        "reference_point": _floats(analysis.reference_point),
        "panels_per_body": [pl.n_panels for pl in analysis.panellings],
        "bodies": [o.name for o in analysis.outlines],
        "caution": CAUTION,
        "results": results,
    }


def analysis_json(analysis) -> str:
    return json.dumps(analysis_record(analysis), indent=1) + "\n"


POLAR_COLUMNS = ("alpha_deg", "cl", "cm", "cd_pressure", "cp_min", "x_cp_min", "x_stagnation",
                 "cl_error_estimate", "cm_error_estimate")


def polar_rows(analysis):
    """One row per angle: totals, and the main body's minimum Cp and stagnation point."""
    for r in analysis:
        main = r.bodies[0]
        yield (r.alpha_deg, r.cl, r.cm, r.cd_pressure, main.cp_min, main.x_cp_min,
               main.x_stagnation, r.cl_error_estimate, r.cm_error_estimate)


@register_writer(".json")
def write_json(analysis, path, overwrite=False) -> Path:
    """Write the full record (coefficients and surface Cp) as JSON."""
    return atomic_write_text(path, analysis_json(analysis), overwrite)


@register_writer(".csv")
def write_polar_csv(analysis, path, overwrite=False) -> Path:
    """Write one row per angle (see ``POLAR_COLUMNS``) as CSV with a commented header."""
    buf = io.StringIO()
    buf.write(f"# panelflow {__version__}; chord {analysis.chord:.9g}; moments about "
              f"({analysis.reference_point[0]:.9g}, {analysis.reference_point[1]:.9g})\n")
    buf.write(f"# {CAUTION}\n")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(POLAR_COLUMNS)
    for row in polar_rows(analysis):
        w.writerow([f"{v:.10g}" for v in row])
    return atomic_write_text(path, buf.getvalue(), overwrite)


def check_outputs(paths, overwrite=False, registry=None, what="output", expand=None) -> None:
    """:func:`panelflow.files.check_outputs` with the result writers as the default registry."""
    _check_paths(paths, WRITERS if registry is None else registry, overwrite, what, expand)


def write_result(analysis, path, overwrite=False) -> Path:
    """Write ``analysis`` in the format given by the extension of ``path``."""
    check_outputs([path], overwrite)
    return WRITERS[Path(path).suffix.lower()](analysis, path, overwrite)
