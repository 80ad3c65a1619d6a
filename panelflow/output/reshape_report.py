"""The before-and-after table of a geometry edit, as text and as a JSON record.

Only formatting lives here; the numbers come from :mod:`panelflow.geometry.edits` and
:mod:`panelflow.geometry.measure`.
"""

from __future__ import annotations

import json
import math

from panelflow.geometry.measure import MEASURE_LABELS
from panelflow.version import __version__

RESHAPE_CAUTION = ("A changed section changes its strength, stiffness and flow: check the spar "
                   "depth and the structure against the applicable design codes, and analyse "
                   "the new section before it is built.")

_FORMATS = {"chord": ".6g", "thickness_position": ".4f", "camber_position": ".4f",
            "trailing_edge_angle_deg": ".3f"}


def _text(v, fmt: str) -> str:
    return "-" if v is None or (isinstance(v, float) and math.isnan(v)) else format(v, fmt)


def _change(before, after, fmt: str) -> str:
    if any(isinstance(v, float) and math.isnan(v) for v in (before, after)):
        return "-"
    d = after - before
    if d == 0.0:
        return "0"
    text = format(d, "+" + fmt) if fmt.endswith("f") else format(d, "+.3g")
    return "0" if float(text) == 0.0 else text


def reshape_table(result) -> str:
    """The steps, then one row per measure: before, after and the change.

    Parameters
    ----------
    result : panelflow.geometry.edits.EditResult

    Returns
    -------
    str
    """
    lines = [f"reshaped: {result.outline.name}"]
    lines += [f"  {k}. {step}" for k, step in enumerate(result.steps, 1)] or ["  (no edits)"]
    lines.append(f"  {'measure':<26} {'unit':<13} {'before':>12} {'after':>12} {'change':>11}")
    for key, (label, unit) in MEASURE_LABELS.items():
        fmt = _FORMATS.get(key, ".6f")
        b, a = getattr(result.before, key), getattr(result.after, key)
        lines.append(f"  {label:<26} {unit:<13} {_text(b, fmt):>12} {_text(a, fmt):>12} "
                     f"{_change(b, a, fmt):>11}")
    notes = [f"before: {n}" for n in result.before.notes] + [
        f"after: {n}" for n in result.after.notes]
    lines += [f"note: {n}" for n in notes]
    lines.append("thickness and camber are measured perpendicular to the chord line, from the "
                 "nose (the point farthest from the trailing edge)")
    lines.append(f"caution: {RESHAPE_CAUTION}")
    return "\n".join(lines) + "\n"


def _clean(v):
    return None if isinstance(v, float) and not math.isfinite(v) else v


def reshape_record(result) -> dict:
    """The machine-readable form of an edit result (no coordinates: those go to the file)."""
    return {
        "panelflow_version": __version__,
        "name": result.outline.name,
        "source": result.outline.source,
        "steps": list(result.steps),
        "before": {k: _clean(v) for k, v in result.before.as_dict().items()},
        "after": {k: _clean(v) for k, v in result.after.as_dict().items()},
        "units": {k: unit or "x/c" for k, (_, unit) in MEASURE_LABELS.items()},
        "notes": {"before": list(result.before.notes), "after": list(result.after.notes)},
        "caution": RESHAPE_CAUTION,
    }


def reshape_json(result) -> str:
    return json.dumps(reshape_record(result), indent=1) + "\n"
