"""Polars and tidy tables: one row per angle of one section, or per section and angle of a study.

A :class:`Polar` holds one geometry's coefficients against the angle of attack, as arrays (the
columns of :data:`POLAR_COLUMNS`, the same as ``panelflow solve -o polar.csv``, plus optional
extra columns such as compressibility-corrected ones). A :class:`Table` is a *tidy* table: named
columns of equal length, one observation per row, so a study of many sections at many angles is
one table with a ``section`` column, ready for a spreadsheet or a data-frame library.

Files (by extension, :data:`TABLE_WRITERS`), both written atomically and never replacing a file
unless asked:

``.csv``
    Exactly one header row with the column names, then one line per row, so a spreadsheet opens
    it as it is. Numbers are written with 10 significant digits (the solver's accuracy is far
    coarser), text as is; an undefined number is an empty field. The panelflow version, the
    caution, any notes and what each column means (words, unit) go beside it into
    ``NAME.about.json`` (:mod:`panelflow.output.columns`).
``.json``
    ``{"format": "panelflow table", "panelflow_version", "caution", "notes", "columns",
    "rows", "column_descriptions"}`` with ``rows`` a list of objects keyed by column name; numbers at full precision
    (they read back bit for bit), undefined numbers ``null``.

Both formats give the same text for the same numbers, so a re-run of a study can be compared
file by file (and by its SHA-256 in the run manifest).
"""

from __future__ import annotations

import csv
import io
import json
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from panelflow.version import __version__
from panelflow.errors import InputError
from panelflow.analysis.result import as_result
from panelflow.output.columns import describe, with_sidecar, write_sidecar
from panelflow.output.writers import (CAUTION, POLAR_COLUMNS, _floats, atomic_write_text,
                                     check_outputs, peak_bodies, polar_columns, register_writer)

__all__ = ["POLAR_COLUMNS", "SECTION_COLUMNS", "Polar", "lift_line", "Table", "polar", "polar_rows", "tidy_table",
           "TABLE_WRITERS", "check_table_outputs", "write_table", "write_table_csv",
           "write_table_json", "read_table"]

TABLE_FORMAT = "panelflow table"
CSV_DIGITS = 10  # significant digits in CSV files
# after the per-angle numbers of POLAR_COLUMNS: the body with the suction peak (text) and the
# section's zero-lift angle and lift slope (one value per section, repeated on each row)
SECTION_COLUMNS = ("cp_min_body", "alpha_zero_lift_deg", "lift_slope_per_deg")


@dataclass(frozen=True)
class Polar:
    """One geometry's results against the angle of attack.

    Attributes
    ----------
    label : str
        The section's name in tables and figure legends.
    alpha_deg, cl, cm, cd_pressure, cp_min, x_cp_min, x_stagnation, cl_error_estimate,
    cm_error_estimate : ndarray, shape (n_alpha,)
        As in :data:`POLAR_COLUMNS`: totals of all bodies; ``cp_min`` and its chord position
        are the suction peak over all bodies, the stagnation point is the main (first) body's.
    chord : float
        Reference chord (the main body's), outline units.
    reference_point : (float, float)
        Moment reference point.
    panels : tuple of int
        Panels per body.
    bodies : tuple of str
        Body names.
    extra : dict of str to ndarray
        Further per-angle columns (e.g. ``cl_mach``), in order; empty by default.
    cp_min_body : tuple of str
        Per angle, the name of the body with the suction peak (empty: not recorded).
    alpha_zero_lift, lift_slope : float
        Zero-lift angle (deg) and lift slope (per degree), see :func:`lift_line`; NaN when not
        known.
    """

    label: str
    alpha_deg: np.ndarray
    cl: np.ndarray
    cm: np.ndarray
    cd_pressure: np.ndarray
    cp_min: np.ndarray
    x_cp_min: np.ndarray
    x_stagnation: np.ndarray
    cl_error_estimate: np.ndarray
    cm_error_estimate: np.ndarray
    chord: float = 1.0
    reference_point: tuple = (0.25, 0.0)
    panels: tuple = ()
    bodies: tuple = ()
    extra: dict = field(default_factory=dict)
    cp_min_body: tuple = ()
    alpha_zero_lift: float = float("nan")
    lift_slope: float = float("nan")

    def __post_init__(self):
        n = None
        for name in POLAR_COLUMNS:
            arr = np.array(getattr(self, name), float).ravel()
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)
            if n is not None and len(arr) != n:
                raise InputError(f"polar {self.label!r}: column {name} has {len(arr)} values, "
                                 f"alpha_deg {n}")
            n = len(arr)
        extra = {}
        for name, values in dict(self.extra).items():
            if name in POLAR_COLUMNS:
                raise InputError(f"polar {self.label!r}: extra column {name!r} is a standard one")
            arr = np.array(values, float).ravel()
            if len(arr) != n:
                raise InputError(f"polar {self.label!r}: column {name} has {len(arr)} values, "
                                 f"alpha_deg {n}")
            arr.setflags(write=False)
            extra[str(name)] = arr
        object.__setattr__(self, "extra", extra)
        object.__setattr__(self, "reference_point",
                           tuple(float(v) for v in self.reference_point))
        object.__setattr__(self, "panels", tuple(int(v) for v in self.panels))
        object.__setattr__(self, "bodies", tuple(str(v) for v in self.bodies))
        peak = tuple(str(v) for v in self.cp_min_body)
        if peak and len(peak) != n:
            raise InputError(f"polar {self.label!r}: {len(peak)} suction-peak bodies for {n} "
                             "angles")
        object.__setattr__(self, "cp_min_body", peak)
        object.__setattr__(self, "alpha_zero_lift", float(self.alpha_zero_lift))
        object.__setattr__(self, "lift_slope", float(self.lift_slope))

    @property
    def columns(self) -> tuple:
        """Names of all per-angle columns: :data:`POLAR_COLUMNS`, then the extra ones."""
        return POLAR_COLUMNS + tuple(self.extra)

    def column(self, name: str) -> np.ndarray:
        if name in POLAR_COLUMNS:
            return getattr(self, name)
        try:
            return self.extra[name]
        except KeyError:
            raise InputError(f"polar {self.label!r} has no column {name!r}; it has "
                             f"{', '.join(self.columns)}") from None

    def __len__(self) -> int:
        return len(self.alpha_deg)

    def table(self) -> Table:
        """This polar as a table, one row per angle (no section column): :data:`POLAR_COLUMNS`,
        :data:`SECTION_COLUMNS`, then the extra columns."""
        return Table(self._columns())

    def _columns(self) -> dict:
        n = len(self)
        cols = {name: getattr(self, name) for name in POLAR_COLUMNS}
        cols["cp_min_body"] = self.cp_min_body or ("",) * n
        cols["alpha_zero_lift_deg"] = np.full(n, self.alpha_zero_lift)
        cols["lift_slope_per_deg"] = np.full(n, self.lift_slope)
        cols.update(self.extra)
        return cols


def polar(result, label: str | None = None, extra=None) -> Polar:
    """The polar of a :class:`~panelflow.analysis.result.Result` (or Analysis), all its angles.

    Parameters
    ----------
    result : Result or Analysis
    label : str, optional
        Default: the result's label (the body names joined by ``", "``, as ``panelflow compare``
        labels a case).
    extra : dict of str to array_like, optional
        Further per-angle columns, after the margin columns the result carries (compressibility,
        cavitation, plane; see :func:`panelflow.output.writers.polar_columns`).

    Returns
    -------
    Polar
        The numbers equal those of :func:`panelflow.output.writers.polar_rows` (taken from the
        same arrays, all angles at once).
    """
    result = as_result(result)
    columns = polar_columns(result)
    margins = {k: v for k, v in columns.items() if k not in POLAR_COLUMNS}
    margins.update(extra or {})
    names = tuple(o.name for o in result.outlines)
    a0, slope = lift_line(result)
    return Polar(
        label=result.label if label is None else str(label),
        **{k: columns[k] for k in POLAR_COLUMNS},
        chord=float(result.chord), reference_point=tuple(result.reference_point),
        panels=tuple(pl.n_panels for pl in result.panellings), bodies=names, extra=margins,
        cp_min_body=peak_bodies(result), alpha_zero_lift=a0, lift_slope=slope)


def lift_line(result) -> tuple:
    """Zero-lift angle (deg) and lift slope (per degree) of a result.

    In free space the circulation lift of one geometry is exactly ``A cos a + B sin a`` (two
    unit solutions superposed), whose components the solution keeps: the zero-lift angle and the
    slope there follow exactly, whichever angles were solved. Near a plane the images move with
    the angle, so both are interpolated between the two solved angles closest to zero lift
    (NaN with fewer than two angles).

    Returns
    -------
    (float, float)
    """
    result = as_result(result)
    unit = np.asarray(getattr(result.fine, "unit_cl", [np.nan, np.nan]), float)
    if np.all(np.isfinite(unit)) and np.hypot(*unit) > 1e-12:
        a, b = unit  # cl = a cos(alpha) + b sin(alpha) = amp sin(alpha - alpha_0)
        amp = float(np.hypot(a, b))
        return float(np.degrees(np.arctan2(-a, b))), amp * np.pi / 180.0
    alpha = np.asarray(result.alpha_deg, float)
    cl = np.asarray(result.cl, float)
    ok = np.isfinite(cl)
    alpha, cl = alpha[ok], cl[ok]
    if len(np.unique(alpha)) < 2:
        return float("nan"), float("nan")
    order = np.argsort(np.abs(cl), kind="stable")
    i = order[0]
    j = next((k for k in order[1:] if alpha[k] != alpha[i]), None)
    slope = (cl[j] - cl[i]) / (alpha[j] - alpha[i])
    if not np.isfinite(slope) or slope == 0.0:
        return float("nan"), float("nan")
    return float(alpha[i] - cl[i] / slope), float(slope)


def polar_rows(p: Polar):
    """One tuple per angle, in the order of ``p.columns``."""
    cols = [p.column(name) for name in p.columns]
    for i in range(len(p)):
        yield tuple(float(c[i]) for c in cols)


@dataclass(frozen=True)
class Table:
    """Named columns of equal length (a tidy table: one observation per row).

    Parameters
    ----------
    columns : dict of str to array_like
        In order. Numeric columns become float arrays, others tuples of str.
    """

    columns: dict

    def __post_init__(self):
        cols, n = {}, None
        for name, values in dict(self.columns).items():
            values = list(values) if not isinstance(values, np.ndarray) else values
            if _numeric(values):
                col = np.array(values, float).ravel()
                col.setflags(write=False)
            else:
                col = tuple(str(v) for v in values)
            if n is not None and len(col) != n:
                raise InputError(f"table column {name!r} has {len(col)} values, the others {n}")
            n = len(col)
            cols[str(name)] = col
        object.__setattr__(self, "columns", cols)

    @property
    def names(self) -> tuple:
        return tuple(self.columns)

    def __len__(self) -> int:
        return len(next(iter(self.columns.values()))) if self.columns else 0

    def __getitem__(self, name: str):
        try:
            return self.columns[name]
        except KeyError:
            raise InputError(f"the table has no column {name!r}; it has "
                             f"{', '.join(self.columns)}") from None

    def rows(self):
        """One tuple per row (floats and strings)."""
        cols = list(self.columns.values())
        for i in range(len(self)):
            yield tuple(c[i] if isinstance(c, tuple) else float(c[i]) for c in cols)

    def where(self, name: str, value) -> Table:
        """The rows whose column ``name`` equals ``value``."""
        col = self[name]
        keep = np.array([v == value for v in col], bool)
        return Table({k: (np.asarray(c)[keep] if isinstance(c, np.ndarray)
                          else tuple(v for v, ok in zip(c, keep, strict=True) if ok))
                      for k, c in self.columns.items()})


def _numeric(values) -> bool:
    if isinstance(values, np.ndarray):
        return values.dtype.kind in "fiub"
    return all(isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, bool)
               for v in values) and len(values) > 0


def tidy_table(polars, key: str = "section") -> Table:
    """One table of several polars: a ``key`` column with each polar's label, then its columns.

    Polars with extra columns that others lack get NaN in those columns; the column order is
    ``key``, :data:`POLAR_COLUMNS`, then extra columns in order of first appearance.

    Raises
    ------
    InputError
        No polar, or two with the same label (rows could not be told apart).
    """
    polars = list(polars)
    if not polars:
        raise InputError("no polar to tabulate")
    labels = [p.label for p in polars]
    dup = sorted({lab for lab in labels if labels.count(lab) > 1})
    if dup:
        raise InputError(f"section labels must differ; used twice: {', '.join(dup)}")
    parts = [p._columns() for p in polars]
    names = list(POLAR_COLUMNS) + list(SECTION_COLUMNS)
    for p in polars:
        names += [n for n in p.extra if n not in names]
    cols = {key: tuple(p.label for p in polars for _ in range(len(p)))}
    for name in names:
        if name == "cp_min_body":
            cols[name] = tuple(v for part in parts for v in part[name])
            continue
        cols[name] = np.concatenate([
            part[name] if name in part else np.full(len(p), np.nan)
            for p, part in zip(polars, parts, strict=True)])
    return Table(cols)


# ------------------------------------------------------------------------------------ files
TABLE_WRITERS: dict = {}


def _register(ext):
    def deco(func):
        TABLE_WRITERS[ext] = func
        return func
    return deco


def check_table_outputs(paths, overwrite: bool = False) -> None:
    """Raise :class:`OutputError` unless every table file (a CSV file's notes beside it
    included) can be written (known format, folder present, not existing unless
    ``overwrite``); see :func:`panelflow.output.writers.check_outputs`."""
    check_outputs(paths, overwrite, registry=TABLE_WRITERS, what="table", expand=with_sidecar)


def _csv_value(v) -> str:
    if isinstance(v, str):
        return v
    return "" if not math.isfinite(v) else f"{v:.{CSV_DIGITS}g}"


def csv_text(table: Table) -> str:
    """The CSV text of a table: one header row, one line per row."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(table.names)
    for row in table.rows():
        w.writerow([_csv_value(v) for v in row])
    return buf.getvalue()


@_register(".csv")
def write_table_csv(table: Table, path, overwrite: bool = False, notes=(), extra=None) -> Path:
    """Write ``table`` as CSV (one header row) and its notes beside it (version, caution,
    ``notes``, the columns' words and units: ``NAME.about.json``).

    Returns
    -------
    Path
        The CSV file.
    """
    out = atomic_write_text(path, csv_text(table), overwrite)
    write_sidecar(path, table.names, CAUTION, notes, overwrite, extra)
    return out


def _json_value(v):
    if isinstance(v, str):
        return v
    return float(v) if math.isfinite(v) else None


def table_record(table: Table, notes=()) -> dict:
    """The JSON form of a table (see the module docstring)."""
    return {
        "format": TABLE_FORMAT,
        "panelflow_version": __version__,
        "caution": CAUTION,
        "notes": [str(n) for n in notes],
        "columns": list(table.names),
        "column_descriptions": {n: {"words": describe(n).words, "unit": describe(n).unit}
                                for n in table.names},
        "rows": [{k: _json_value(v) for k, v in zip(table.names, row, strict=True)}
                 for row in table.rows()],
    }


@_register(".json")
def write_table_json(table: Table, path, overwrite: bool = False, notes=()) -> Path:
    """Write ``table`` as JSON (see the module docstring).

    Returns
    -------
    Path
    """
    text = json.dumps(table_record(table, notes), indent=1, allow_nan=False) + "\n"
    return atomic_write_text(path, text, overwrite)


def write_table(table: Table, path, overwrite: bool = False, notes=()) -> Path:
    """Write ``table`` in the format of the extension of ``path`` (``.csv`` or ``.json``).

    Raises
    ------
    OutputError
        Unknown extension, missing folder, or an existing file without ``overwrite``.
    """
    check_table_outputs([path], overwrite)
    return TABLE_WRITERS[Path(path).suffix.lower()](table, path, overwrite, notes)


def read_table(path) -> Table:
    """Read a table written by :func:`write_table` (CSV or JSON) back.

    Columns whose every value is a number (or empty / null) become float columns, the others
    text. Meant for tables panelflow wrote (other CSV files work when they have one header
    row; ``#`` lines before it, as earlier versions wrote, are skipped).

    Raises
    ------
    InputError
        Missing or unreadable file, unknown extension, or a malformed table.
    """
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except OSError as exc:
        raise InputError(f"{p}: cannot read ({exc.strerror or exc})") from None
    ext = p.suffix.lower()
    if ext == ".json":
        try:
            rec = json.loads(text)
            names = [str(n) for n in rec["columns"]]
            raw = {n: [row.get(n) for row in rec["rows"]] for n in names}
        except (ValueError, KeyError, TypeError, AttributeError) as exc:
            raise InputError(f"{p}: not a panelflow table ({exc})") from None
        return Table({n: _column(v) for n, v in raw.items()})
    if ext != ".csv":
        raise InputError(f"{p}: unknown table format {ext or '(no extension)'}; use .csv or .json")
    lines = [ln for ln in text.splitlines() if ln.strip() and not ln.lstrip().startswith("#")]
    rows = list(csv.reader(lines))
    if not rows:
        raise InputError(f"{p}: no header row")
    names = rows[0]
    if any(len(r) != len(names) for r in rows[1:]):
        raise InputError(f"{p}: rows of different lengths")
    return Table({n: _column([r[k] for r in rows[1:]]) for k, n in enumerate(names)})


def _column(values):
    def num(v):
        if v is None or v == "":
            return math.nan
        if isinstance(v, bool):
            raise TypeError("a flag, not a number")
        return float(v)  # raises ValueError for text

    try:
        out = [num(v) for v in values]
    except (TypeError, ValueError):
        return ["" if v is None else str(v) for v in values]
    return np.array(out, float)


# The polar CSV writer lives here, beside the table it writes, so that writers.py need not
# import this module (which imports it); panelflow/output/__init__.py imports this module, so
# the writer is registered whenever any output module is.
@register_writer(".csv")
def write_polar_csv(result, path, overwrite=False) -> Path:
    """Write one row per angle as CSV (one header row: the columns of
    :func:`polar`), its notes beside it in ``NAME.about.json``."""
    result = as_result(result)
    ref = result.reference_point
    notes = [f"chord {result.chord:.9g} (outline units); moments about ({ref[0]:.9g}, "
             f"{ref[1]:.9g}), nose-up positive", *result.notes]
    extra = {"bodies": [o.name for o in result.outlines], "chord": result.chord,
             "reference_point": _floats(ref)}
    return write_table_csv(polar(result).table(), path, overwrite, notes, extra)
