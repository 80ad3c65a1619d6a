"""Writers: results to JSON and CSV, always atomically (temporary file, then rename).

A registry keyed by file extension lets the CLI pick the writer from the output name.
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
import secrets
from pathlib import Path

from . import __version__
from .errors import OutputError

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


def _temporary(folder: Path, name: str, suffix: str):
    """Create a new hidden file beside the target, with the permissions the umask gives."""
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
    while True:
        tmp = folder / f".{name}.{secrets.token_hex(6)}{suffix}"
        try:
            return os.open(tmp, flags, 0o666), str(tmp)
        except FileExistsError:
            continue


def atomic_write(path, write, overwrite: bool = False, binary: bool = False,
                 suffix: str = ".tmp") -> Path:
    """Write a file through a temporary file in the same folder, then move it into place.

    ``write(fh)`` fills the open temporary file (text or binary). The file is flushed to disk,
    then renamed onto the target (``overwrite``) or hard-linked to the target name, which fails
    if the target appeared meanwhile: an existing file is never replaced without being asked, and
    an interrupted run leaves no half-written result. ``suffix`` is the temporary file's
    extension (some writers pick the format from it).

    Raises
    ------
    OutputError
        When the file exists and ``overwrite`` is false, or the folder is missing or not writable.
    """
    p = Path(path)
    folder = p.parent if str(p.parent) else Path(".")
    exists = f"{p}: exists; not overwritten (use --force to replace it)"
    if not folder.is_dir():
        raise OutputError(f"{p}: folder {folder} does not exist")
    if p.exists() and not overwrite:
        raise OutputError(exists)
    tmp = None
    try:
        fd, tmp = _temporary(folder, p.name, suffix)
        mode = {"mode": "wb"} if binary else {"mode": "w", "encoding": "utf-8", "newline": "\n"}
        with os.fdopen(fd, **mode) as fh:
            write(fh)
            fh.flush()
            os.fsync(fh.fileno())
        if overwrite:
            os.replace(tmp, p)
        else:
            try:
                os.link(tmp, p)
            except FileExistsError:
                raise OutputError(exists) from None
            except OSError:
                if p.exists():
                    raise OutputError(exists) from None
                os.replace(tmp, p)  # file system without hard links
    except OSError as exc:
        raise OutputError(f"{p}: cannot write ({exc.strerror or exc})") from None
    finally:
        if tmp is not None and os.path.exists(tmp):
            os.unlink(tmp)
    return p


def atomic_write_text(path, text: str, overwrite: bool = False) -> Path:
    """Write ``text`` to ``path`` atomically (see :func:`atomic_write`)."""
    return atomic_write(path, lambda fh: fh.write(text), overwrite)


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
    """Raise :class:`OutputError` unless every path can be written: format known to
    ``registry`` (default the result writers), folder present, each file named once, and none
    existing (unless ``overwrite``). ``expand(path)`` lists every file one output name writes
    (a mesh with its companion table), when that is more than the path itself.

    Called before any work so that a run that cannot finish writes nothing.
    """
    registry = WRITERS if registry is None else registry
    seen = {}  # absolute path -> the output name that writes it
    for path in paths:
        p = Path(path)
        ext = p.suffix.lower()
        if ext not in registry:
            raise OutputError(f"{p}: unknown {what} format {ext or '(no extension)'}; "
                              f"use one of {', '.join(sorted(registry))}")
        for target in (expand(p) if expand else [p]):
            key = os.path.abspath(target)
            if key in seen:
                owner = p if target != p else seen[key]
                raise OutputError(f"{target}: named twice as an output"
                                  + (f" (it is the companion of {owner})" if owner != target
                                     else ""))
            seen[key] = p
            folder = target.parent if str(target.parent) else Path(".")
            if not folder.is_dir():
                raise OutputError(f"{target}: folder {folder} does not exist")
            if target.exists() and not overwrite:
                raise OutputError(f"{target}: exists; not overwritten (use --force to replace it)")


def write_result(analysis, path, overwrite=False) -> Path:
    """Write ``analysis`` in the format given by the extension of ``path``."""
    check_outputs([path], overwrite)
    return WRITERS[Path(path).suffix.lower()](analysis, path, overwrite)
