"""Before/after tables of a design: every objective and constraint, start against result.

Both columns come from :mod:`panelflow.design.check` (each section read from its file and
analysed afresh), so the table compares like with like. Text for the terminal; CSV or JSON
files with the same rows.
"""

from __future__ import annotations

import csv
import io
import json
import math
from pathlib import Path

from panelflow.design.check import Check
from panelflow.errors import OutputError
from panelflow.files import atomic_write_text

__all__ = ["before_after_rows", "before_after_text", "write_before_after", "DESIGN_CAUTION"]

DESIGN_CAUTION = (
    "Designed from the inviscid panel model (the drag objective from the viscous analysis): "
    "check the section's real behaviour - separation, stall, cavitation inception with real "
    "water and surface finish, loads - by test and against the applicable design codes; a "
    "changed section changes strength and stiffness too, and final designs need checking under "
    "local codes and by licensed engineering practice.")

_COLUMNS = ("key", "figure", "unit", "start", "result", "change", "limit", "start_holds",
            "result_holds", "better")


def _clean(v):
    if isinstance(v, float) and not math.isfinite(v):
        return None
    return v


def before_after_rows(start: Check, result: Check) -> list:
    """One row per figure of the result: start and result values, change, limit, holds."""
    rows = []
    for f in result.figures:
        try:
            s = start[f.key]
        except KeyError:
            s = None
        sv = s.value if s is not None else float("nan")
        rows.append({"key": f.key, "figure": f.label, "unit": f.unit, "start": sv,
                     "result": f.value, "change": f.value - sv, "limit": f.limit,
                     "start_holds": None if s is None else s.holds, "result_holds": f.holds,
                     "better": f.better})
    return rows


def _num(v: float) -> str:
    if v is None or not math.isfinite(v):
        return "-"
    a = abs(v)
    if a != 0.0 and (a < 1e-3 or a >= 1e5):
        return f"{v:.4e}"
    return f"{v:.6g}" if a >= 1.0 else f"{v:.6f}"


def _holds(h) -> str:
    return "" if h is None else ("holds" if h else "VIOLATED")


def before_after_text(start: Check, result: Check, title: str = "") -> str:
    """The before/after table for the terminal."""
    rows = before_after_rows(start, result)
    head = ("figure", "unit", "start", "result", "change", "limit", "start", "result")
    body = [(r["figure"] + (" (objective, " + r["better"] + " is better)" if r["better"]
                            else ""), r["unit"], _num(r["start"]), _num(r["result"]),
             _num(r["change"]),
             r["limit"], _holds(r["start_holds"]), _holds(r["result_holds"])) for r in rows]
    widths = [max(len(h), *(len(b[i]) for b in body)) for i, h in enumerate(head)]
    lines = []
    if title:
        lines.append(title)
    lines.append(f"each section read from its file and analysed afresh at {result.panels} "
                 "panels")
    lines.append("  ".join(h.ljust(widths[i]) if i in (0, 1, 5) else h.rjust(widths[i])
                           for i, h in enumerate(head)))
    for b in body:
        lines.append("  ".join(v.ljust(widths[i]) if i in (0, 1, 5) else v.rjust(widths[i])
                               for i, v in enumerate(b)).rstrip())
    failed = [f.label.strip() for f in result.failed]
    if failed:
        lines.append("NOT MET on the written section: " + "; ".join(failed))
    elif any(f.holds is not None for f in result.figures):
        lines.append("every constraint holds on the written section")
    return "\n".join(lines) + "\n"


def write_before_after(path, start: Check, result: Check, notes=(), overwrite: bool = False
                       ) -> Path:
    """Write the before/after rows as ``.csv`` (``#`` comment lines first) or ``.json``."""
    p = Path(path)
    rows = before_after_rows(start, result)
    ext = p.suffix.lower()
    if ext == ".json":
        record = {"format": "panelflow design before/after table", "panels": result.panels,
                  "start": start.label, "result": result.label, "notes": list(notes),
                  "caution": DESIGN_CAUTION,
                  "rows": [{k: _clean(v) for k, v in r.items()} for r in rows]}
        return atomic_write_text(p, json.dumps(record, indent=1, allow_nan=False) + "\n",
                                 overwrite)
    if ext != ".csv":
        raise OutputError(f"{p}: unknown table format {ext or '(none)'}; use .csv or .json")
    buf = io.StringIO()
    for n in [f"start: {start.label}; result: {result.label}; analysed afresh at "
              f"{result.panels} panels", *notes, DESIGN_CAUTION]:
        buf.write(f"# {n}\n")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(_COLUMNS)
    for r in rows:
        w.writerow(["" if _clean(r[c]) is None else
                    (repr(float(r[c])) if isinstance(r[c], float) else r[c]) for c in _COLUMNS])
    return atomic_write_text(p, buf.getvalue(), overwrite)
