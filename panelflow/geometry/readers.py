"""Outline input: coordinate tables, meshes with line cells, and built-in section specs.

Coordinate tables
-----------------
Plain text, one point a line as ``x y``; values are separated by whitespace, commas, or both.
``#`` starts a comment (whole line or after the values). Two layouts are recognised:

(a) one loop that starts and ends at the trailing edge, in either direction;
(b) the upper and the lower surface listed separately, each from the leading edge to the
    trailing edge. The surfaces are told apart by a count line (two whole numbers above 2 that
    equal the numbers of points that follow, e.g. ``61. 61.``), by a blank line between them, or
    by the x coordinate jumping back to the leading edge. They are merged into one loop
    TE (upper) -> LE -> TE (lower), with a point shared at the leading edge kept once.

Title line and several bodies
-----------------------------
The first line of the file (comments aside) is a *title line* unless it is two numbers. Later,
a line with a word in it is a title line when it comes directly after a blank line (comment
lines in between do not count); anywhere else it is an error. Each title line after a body's
points starts a new body, so a file with two bodies reads::

    Main element
    1.000 0.000
    ...

    Flap
    1.300 -0.050
    ...

The body name is its title line; a body without one is named after the file stem, with
``-1``, ``-2``, ... appended when the file holds several bodies. A title of two column labels
(``x y``, ``x/c, y/c``) is a column header, not a name; such a header may also follow the title
line directly. Blank lines that are not followed by a
title line only separate the two surfaces of layout (b).

Column headers and units
------------------------
A header line names the columns: ``x y``, ``x/c, y/c``, ``x_mm,y_mm``, ``x [in]  y [in]``,
``x (m); y (m)``. A unit in it (``m``, ``cm``, ``mm``, ``in``, ``ft`` and their words) is the
outline's length unit (``Outline.unit``): the loads take it, and a command-line unit that
disagrees is refused. A header that names a unit panelflow does not know, or two different
units, is refused with the line.

Decimal commas
--------------
Values with a decimal comma are read when the values are separated by semicolons
(``0,25;0,031``) or by blanks with a comma in every value (``0,25 0,031``), as spreadsheets in
many locales write them. A comma between two numbers with nothing else is a separator.

panelflow's own layout (what it writes)
---------------------------------------
One header row of named columns, then one point per row::

    body,point,x,y
    naca2412,1,1.000084,0.00126
    ...

``body`` groups the points into bodies (in order of first appearance), ``point`` numbers them
along the outline from the upper trailing edge; ``x`` and ``y`` may carry a unit (``x_mm``).
Any table whose header names more than two columns, two of them x and y, is read this way
(other columns are ignored), so a spreadsheet export with extra columns reads as it is.

Registry
--------
:data:`READERS` maps a lower-case file extension to its reader; :func:`register_reader` adds one.
``.dat``, ``.txt``, ``.csv``, ``.xy`` are coordinate tables; the extensions meshio knows read as
meshes with line cells; any other extension is tried as a table.
"""

from __future__ import annotations

import contextlib
import io
import math
import re
from pathlib import Path
from typing import Callable

import numpy as np

from panelflow.errors import GeometryError, InputError, OutputError
from panelflow.geometry.outline import MAX_COORDINATE, Outline
from panelflow.geometry.specs import SPEC_HELP, parse_spec
from panelflow.files import atomic_write_text, check_input, read_input

__all__ = [
    "READERS",
    "register_reader",
    "read_outline_table",
    "read_outline_mesh",
    "load_outlines",
    "write_outline_table",
]

Reader = Callable[[Path], "list[Outline]"]
READERS: dict[str, Reader] = {}

_SPLIT = re.compile(r"[,\s]+")
_DECIMAL_COMMA = re.compile(r"[-+]?\d*,\d+(?:[eE][-+]?\d+)?")
# unit words of column headers -> panelflow's unit names
UNIT_WORDS = {"m": "m", "metre": "m", "metres": "m", "meter": "m", "meters": "m",
              "cm": "cm", "mm": "mm", "millimetre": "mm", "millimetres": "mm",
              "millimeter": "mm", "millimeters": "mm", "in": "in", "inch": "in",
              "inches": "in", '"': "in", "ft": "ft", "foot": "ft", "feet": "ft"}
_COLUMN_LABEL = re.compile(r"[(\[]?[xy]([^a-z].*)?", re.IGNORECASE)
# Points of one body read from a file: checking the points costs about 60 microseconds each,
# so this keeps a file's checks within seconds
MAX_OUTLINE_POINTS = 100_000
# Extensions a coordinate table is written under (all the same text layout)
TABLE_EXTENSIONS = (".csv", ".dat", ".txt", ".xy")
_BINARY_PROBE = 8192  # bytes looked at for NUL bytes; text tables never hold one


def register_reader(ext: str, func: Reader) -> None:
    """Register ``func(path) -> list[Outline]`` for files ending in ``ext``.

    Parameters
    ----------
    ext : str
        Extension with or without the leading dot, matched case-insensitively; may be compound
        (``.vol.gz``).
    func : callable
        Reader taking a :class:`pathlib.Path`.
    """
    e = ext.lower()
    READERS[e if e.startswith(".") else "." + e] = func


def _reader_for(path: Path) -> Reader:
    _register_mesh_extensions()
    suffixes = [s.lower() for s in path.suffixes]
    for k in range(len(suffixes), 0, -1):  # longest compound extension first
        func = READERS.get("".join(suffixes[-k:]))
        if func is not None:
            return func
    return read_outline_table


# ---------------------------------------------------------------------------------- file access
def _read_bytes(path: Path) -> bytes:
    return read_input(path, "coordinate table or mesh file")


def _read_text(path: Path) -> str:
    data = _read_bytes(path)
    if b"\x00" in data[:_BINARY_PROBE]:
        raise InputError(f"{path}: binary file, not a text coordinate table")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        text = data.decode("latin-1")
        # latin-1 decodes anything, so also look for control characters text never has
        if re.search(r"[\x01-\x08\x0e-\x1f\x7f]", text[:_BINARY_PROBE]):
            raise InputError(f"{path}: binary file, not a text coordinate table") from None
    return text


# ---------------------------------------------------------------------------------- table parsing
def _as_number(token: str) -> float | None:
    try:
        return float(token)
    except ValueError:
        return None


class _Body:
    """Rows of one body while a table is parsed."""

    def __init__(self, title: str | None, line: int):
        self.title = title
        self.line = line  # first line of the body, for messages
        self.rows: list[tuple[float, float]] = []
        self.lines: list[int] = []
        self.breaks: list[int] = []  # row indices where a blank line came before
        self.unit: str | None = None  # from a column header

    def add(self, x: float, y: float, line: int, after_blank: bool) -> None:
        if after_blank and self.rows:
            self.breaks.append(len(self.rows))
        self.rows.append((x, y))
        self.lines.append(line)


def _decimal_commas(content: str) -> str:
    """A line with decimal commas (``0,25;0,031`` or ``0,25 0,031``) in decimal points."""
    if ";" in content:
        parts = [p.strip() for p in content.split(";")]
        if all(_DECIMAL_COMMA.fullmatch(p) or _as_number(p) is not None for p in parts if p):
            return " ".join(p.replace(",", ".") for p in parts if p)
        return content
    tokens = content.split()
    if len(tokens) >= 2 and all(_DECIMAL_COMMA.fullmatch(t) for t in tokens):
        return " ".join(t.replace(",", ".") for t in tokens)
    return content


def _header_unit(content: str, path: Path, number: int):
    """(True, unit or None) when ``content`` is a column header of x and y, else (False, None).

    Raises InputError for a header that names an unknown unit or two different ones.
    """
    words = re.sub(r"[()\[\]_,;:\t]", " ", content.lower()).split()
    if len(words) < 2 or words[0] not in ("x", "x/c"):
        return False, None
    try:
        k = next(i for i, w in enumerate(words[1:], start=1) if w in ("y", "y/c"))
    except StopIteration:
        return False, None
    x_unit, y_unit = words[1:k], words[k + 1:]
    found = []
    for part in (x_unit, y_unit):
        if not part:
            continue
        unit = UNIT_WORDS.get(" ".join(part))
        if unit is None:
            if len(part) > 2:  # more words than a unit: a title that starts with x
                return False, None
            raise InputError(f"{path}: line {number}: column header {content!r} names the unit "
                             f"{' '.join(part)!r}, which panelflow does not know; use m, cm, mm, "
                             "in or ft (or leave the unit out and give --unit)")
        found.append(unit)
    if len(set(found)) > 1:
        raise InputError(f"{path}: line {number}: column header {content!r} gives x and y in "
                         f"different units ({found[0]}, {found[1]})")
    if found and (words[0] == "x/c" or words[k] == "y/c"):
        raise InputError(f"{path}: line {number}: column header {content!r} gives chord "
                         f"fractions (x/c) and a unit ({found[0]}) at once")
    return True, (found[0] if found else None)


def _parse_table(text: str, path: Path) -> list[_Body]:
    bodies: list[_Body] = []
    current: _Body | None = None
    after_blank = True  # the start of the file counts as "after a blank line"
    for number, raw in enumerate(text.splitlines(), start=1):
        content = _decimal_commas(raw.split("#", 1)[0].strip())
        if not content:
            if not raw.strip():
                after_blank = True
            continue  # comment-only lines keep the state
        header, unit = _header_unit(content, path, number)
        if header:
            if current is not None and current.rows:
                raise InputError(f"{path}: line {number}: a column header among the points "
                                 "(a new body starts with a title line after a blank line)")
            if current is None:
                current = _Body(None, number)
                bodies.append(current)
            current.unit = unit
            after_blank = False
            continue
        tokens = [t for t in _SPLIT.split(content) if t]
        values = [_as_number(t) for t in tokens]
        first_line = not bodies
        # the file's first line is a title unless it is two numbers; later titles need a word
        if any(v is None for v in values) or (first_line and len(values) != 2):
            if after_blank and (current is None or current.rows):
                current = _Body(_title(content), number)
                bodies.append(current)
                after_blank = False
                continue
            if current is not None and not current.rows and _title(content) is None:
                continue  # column header (x y) under the title line (read above when it can)
            bad = next(t for t, v in zip(tokens, values) if v is None)
            if ";" in content:
                raise InputError(f"{path}: line {number}: {content!r}: values separated by "
                                 "semicolons must be numbers, with a decimal point or a "
                                 f"decimal comma; {bad!r} is neither")
            where = "after the body's title line" if current and not current.rows else "here"
            raise InputError(f"{path}: line {number}: {bad!r} is not a number (a title line is "
                             f"only allowed at the start of the file or after a blank line, "
                             f"not {where})")
        if len(values) != 2:
            if len(values) == 4 and content.count(",") >= 2 and ";" not in content:
                raise InputError(f"{path}: line {number}: {content!r} reads as 4 numbers: with "
                                 "decimal commas, separate the two values by a semicolon or "
                                 "blanks (0,25;0,031), not by another comma")
            raise InputError(f"{path}: line {number}: expected 2 values (x y), found "
                             f"{len(values)}")
        if not all(math.isfinite(v) for v in values):
            raise InputError(f"{path}: line {number}: coordinates must be finite numbers, "
                             f"found {content!r}")
        if current is None:
            current = _Body(None, number)
            bodies.append(current)
        current.add(values[0], values[1], number, after_blank)
        after_blank = False
    return bodies


def _fields(content: str, delimiter: str | None = None) -> list:
    """Fields of a named-column row: split at ``delimiter`` (CSV quoting honoured), else at
    blanks."""
    if delimiter is None:
        return content.split()
    import csv

    return [f.strip() for f in next(csv.reader([content], delimiter=delimiter))]


def _delimiter(header: str) -> str | None:
    for d in (",", ";", "\t"):
        if d in header:
            return d
    return None


def _named_column(field: str):
    """(base name, unit or None) of a header field such as ``x_mm`` or ``y [in]``."""
    words = re.sub(r"[()\[\]_]", " ", field.lower()).split()
    if not words:
        return "", None
    return words[0], (" ".join(words[1:]) or None)


def _parse_named(text: str, path: Path) -> list[_Body] | None:
    """Bodies of a table whose header names more than two columns (panelflow's own layout),
    or None when the file is not such a table."""
    lines = text.splitlines()
    first = next(((n, ln.split("#", 1)[0].strip()) for n, ln in enumerate(lines, start=1)
                  if ln.split("#", 1)[0].strip()), None)
    if first is None:
        return None
    number, header = first
    if _header_unit(header, path, number)[0]:
        return None  # a header of x and y alone (with their unit): the plain layouts
    delimiter = _delimiter(header)
    names = [_named_column(f) for f in _fields(header, delimiter)]
    bases = [b for b, _ in names]
    if len(names) < 3 or not ({"x", "x/c"} & set(bases) and {"y", "y/c"} & set(bases)):
        return None
    ix = next(i for i, b in enumerate(bases) if b in ("x", "x/c"))
    iy = next(i for i, b in enumerate(bases) if b in ("y", "y/c"))
    units = set()
    for i in (ix, iy):
        if names[i][1] is not None:
            unit = UNIT_WORDS.get(names[i][1])
            if unit is None:
                raise InputError(f"{path}: line {number}: the header {header!r} names the unit "
                                 f"{names[i][1]!r}, which panelflow does not know; use m, cm, "
                                 "mm, in or ft")
            units.add(unit)
    if len(units) > 1:
        raise InputError(f"{path}: line {number}: the x and y columns are in different units "
                         f"({', '.join(sorted(units))})")
    unit = units.pop() if units else None
    ib = bases.index("body") if "body" in bases else None
    bodies: dict = {}
    for n, raw in enumerate(lines[number:], start=number + 1):
        content = raw.split("#", 1)[0].strip()
        if not content:
            continue
        fields = _fields(content, delimiter)
        if delimiter == ";":
            fields = [f.replace(",", ".") if _DECIMAL_COMMA.fullmatch(f) else f for f in fields]
        if len(fields) != len(names):
            raise InputError(f"{path}: line {n}: {len(fields)} values, but the header (line "
                             f"{number}) names {len(names)} columns")
        x, y = _as_number(fields[ix]), _as_number(fields[iy])
        if x is None or y is None or not (math.isfinite(x) and math.isfinite(y)):
            bad = fields[ix] if x is None or not math.isfinite(x) else fields[iy]
            raise InputError(f"{path}: line {n}: {bad!r} is not a finite number (columns "
                             f"{header!r})")
        key = fields[ib] if ib is not None else ""
        if key not in bodies:
            bodies[key] = _Body(key or None, n)
            bodies[key].unit = unit
        bodies[key].add(x, y, n, False)
    return list(bodies.values())


def _title(content: str) -> str | None:
    """Body name from a title line, or None for a header of two column labels."""
    tokens = [t for t in _SPLIT.split(content) if t]
    if len(tokens) == 2 and all(_COLUMN_LABEL.fullmatch(t) for t in tokens) and \
            tokens[0].lstrip("([").lower().startswith("x") and \
            tokens[1].lstrip("([").lower().startswith("y"):
        return None
    return content


def _count_line(body: _Body, path: Path) -> tuple[int, int] | None:
    """Point counts of layout (b) when the body's first row is a count line."""
    if len(body.rows) < 3:
        return None
    a, b = body.rows[0]
    if not (a.is_integer() and b.is_integer() and a > 2 and b > 2):
        return None
    rest = np.asarray(body.rows[1:])
    if int(a) + int(b) == len(rest):
        return int(a), int(b)
    lo, hi = rest.min(axis=0), rest.max(axis=0)
    span = float(np.max(hi - lo))
    if np.any(np.array([a, b]) > hi + span) or np.any(np.array([a, b]) < lo - span):
        # far outside the other points: meant as counts, but they do not match
        raise InputError(f"{path}: line {body.lines[0]}: looks like a count line "
                         f"({int(a)} {int(b)}) but {len(rest)} points follow, not "
                         f"{int(a) + int(b)}")
    return None


def _surfaces_by_jump(x: np.ndarray) -> int | None:
    """Split index of layout (b) without separator: one jump across most of the x range."""
    span = float(np.ptp(x))
    if span == 0.0 or len(x) < 4:
        return None
    d = np.diff(x)
    starts_front = x[0] - x.min() < 0.5 * span
    jumps = np.flatnonzero(d < -0.5 * span) if starts_front else np.flatnonzero(d > 0.5 * span)
    return int(jumps[0]) + 1 if len(jumps) == 1 else None


def _runs_end_to_end(x: np.ndarray, span: float) -> bool:
    return len(x) >= 2 and abs(x[-1] - x[0]) > 0.5 * span


def _merge_surfaces(first: np.ndarray, second: np.ndarray) -> np.ndarray:
    """Join two surfaces listed from the same end into one loop through that end.

    Rows are ``x, y`` and may carry more columns (the input line), which follow their point.
    """
    if first[0, 0] > first[-1, 0]:  # listed TE -> LE: turn both round
        first, second = first[::-1], second[::-1]
    loop_start = first[::-1]  # TE -> LE
    if np.allclose(second[0, :2], first[0, :2], rtol=0.0,
                   atol=1e-12 * max(1.0, np.ptp(first[:, :2]))):
        second = second[1:]  # leading-edge point shared by both lists
    return np.vstack([loop_start, second])


def _body_points(body: _Body, path: Path) -> np.ndarray:
    """The body's points as one loop, rows ``x, y, input line``."""
    pts = np.column_stack([np.asarray(body.rows, dtype=float).reshape(-1, 2),
                           np.asarray(body.lines, dtype=float)])
    counts = _count_line(body, path)
    if counts is not None:
        nu, _ = counts
        rest = pts[1:]
        return _merge_surfaces(rest[:nu], rest[nu:])
    span = float(np.ptp(pts[:, 0])) if len(pts) else 0.0
    if len(body.breaks) == 1 and span > 0:
        k = body.breaks[0]
        first, second = pts[:k], pts[k:]
        same_end = (first[0, 0] < first[-1, 0]) == (second[0, 0] < second[-1, 0])
        if _runs_end_to_end(first[:, 0], span) and _runs_end_to_end(second[:, 0], span) \
                and same_end:
            return _merge_surfaces(first, second)
    k = _surfaces_by_jump(pts[:, 0])
    if k is not None:
        return _merge_surfaces(pts[:k], pts[k:])
    return pts  # layout (a)


def _names(bodies: list[_Body], stem: str) -> list[str]:
    names = []
    for i, body in enumerate(bodies, start=1):
        base = body.title or (stem if len(bodies) == 1 else f"{stem}-{i}")
        name, k = base, 2
        while name in names:  # keep names unique for reports
            name, k = f"{base}-{k}", k + 1
        names.append(name)
    return names


def _outline(points: np.ndarray, name: str, path: Path, where: str,
             starts_at_te: bool = True, lines=None, unit: str | None = None) -> Outline:
    if len(points) > MAX_OUTLINE_POINTS:
        raise InputError(f"{path}: {where}{len(points)} points; at most {MAX_OUTLINE_POINTS} per "
                         "body (a section needs a few hundred, and the panels are placed on a "
                         "curve through them: thin a scan out first)")
    big = np.abs(points) > MAX_COORDINATE
    if np.any(big):
        k = int(np.argmax(big.any(axis=1)))
        raise InputError(f"{path}: {where}point {k + 1} ({points[k, 0]:.6g}, {points[k, 1]:.6g}) "
                         f"is beyond +/-{MAX_COORDINATE:.0e}: not a section outline in any "
                         "length unit; check the file")
    try:
        return Outline.from_points(points, name=name, source=str(path),
                                   starts_at_trailing_edge=starts_at_te, lines=lines, unit=unit)
    except GeometryError as exc:
        msg = str(exc)
        if msg.startswith(str(path) + ": "):
            msg = msg[len(str(path)) + 2:]
        raise GeometryError(f"{path}: {where}{msg}") from None


def read_outline_table(path) -> list[Outline]:
    """Read a plain-text coordinate table (see the module docstring for the format).

    Parameters
    ----------
    path : str or os.PathLike
        The table file.

    Returns
    -------
    list of Outline
        One outline per body, in file order.

    Raises
    ------
    InputError
        Missing, unreadable, binary or empty file; a line that is not two finite numbers.
        Messages start with the path and name the line at fault.
    GeometryError
        A body is not a valid outline (too few points, no area, ...); the message starts with
        the path.
    """
    p = Path(path)
    text = _read_text(p)
    bodies = _parse_named(text, p)
    if bodies is None:
        bodies = _parse_table(text, p)
    if not bodies or not any(b.rows for b in bodies):
        raise InputError(f"{p}: no points found (expected lines of x y)")
    for body in bodies:
        if not body.rows:
            raise InputError(f"{p}: line {body.line}: body {body.title!r} has no points")
    names = _names(bodies, p.stem)
    many = len(bodies) > 1
    out = []
    for b, n in zip(bodies, names):
        rows = _body_points(b, p)
        out.append(_outline(rows[:, :2], n, p, f"body {n!r} (from line {b.line}): " if many
                            else "", lines=rows[:, 2].astype(np.int64), unit=b.unit))
    return out


for _ext in (".dat", ".txt", ".csv", ".xy"):
    register_reader(_ext, read_outline_table)


# ---------------------------------------------------------------------------------- meshes
def _mesh_formats(path: Path) -> list[str]:
    import meshio

    suffixes = [s.lower() for s in path.suffixes]
    for k in range(len(suffixes), 0, -1):
        formats = meshio.extension_to_filetypes.get("".join(suffixes[-k:]))
        if formats:
            return list(formats)
    return []


def _read_mesh(path: Path):
    import meshio

    formats = _mesh_formats(path) or [None]
    problems = []
    for fmt in formats:
        sink = io.StringIO()
        try:
            # meshio prints its warnings and, when no format fits, calls sys.exit; keep both in.
            with contextlib.redirect_stdout(sink), contextlib.redirect_stderr(sink):
                return meshio.read(path, file_format=fmt)
        except (Exception, SystemExit) as exc:  # noqa: BLE001 - meshio raises many kinds
            text = sink.getvalue() if isinstance(exc, SystemExit) else str(exc)
            detail = [ln.strip() for ln in text.splitlines()
                      if ln.strip() and "couldn't read file" not in ln.lower()]
            problems.append(f"{fmt or 'format unknown'}: "
                            f"{detail[0] if detail else 'not a valid file of this format'}")
    raise InputError(f"{path}: cannot read as a mesh ({'; '.join(problems)})")


def _chain_loops(edges: np.ndarray, points: np.ndarray, path: Path) -> list[np.ndarray]:
    """Walk segments into closed loops of point indices (each loop without repeated start)."""
    edges = edges[edges[:, 0] != edges[:, 1]]
    edges = np.unique(np.sort(edges, axis=1), axis=0)  # a segment written twice counts once
    used, degree = np.unique(edges, return_counts=True)
    bad = used[degree != 2]
    if len(bad):
        v = int(bad[0])
        what = "an open end" if degree[degree != 2][0] == 1 else "a branch"
        raise InputError(f"{path}: the line cells do not form closed loops ({what} at point "
                         f"{v}: x={points[v, 0]:.6g}, y={points[v, 1]:.6g})")
    neighbours: dict[int, list[int]] = {int(v): [] for v in used}
    for a, b in edges.tolist():
        neighbours[a].append(b)
        neighbours[b].append(a)
    seen: set[int] = set()
    loops = []
    for start in neighbours:
        if start in seen:
            continue
        loop, prev, cur = [start], None, start
        seen.add(start)
        while True:
            a, b = neighbours[cur]
            nxt = b if a == prev else a
            if nxt == start:
                break
            loop.append(nxt)
            seen.add(nxt)
            prev, cur = cur, nxt
        loops.append(np.asarray(loop))
    return loops


def read_outline_mesh(path) -> list[Outline]:
    """Read the line cells of a mesh file (any format meshio reads) as closed outlines.

    Parameters
    ----------
    path : str or os.PathLike
        Mesh file with ``"line"`` cells in the x-y plane.

    Returns
    -------
    list of Outline
        One outline per connected loop, named after the file stem (``-1``, ``-2``, ... when
        there are several), ordered by their first point in the file.

    Raises
    ------
    InputError
        Missing or unreadable file, no line cells, a chain that is not closed, or points out of
        the x-y plane.
    GeometryError
        A loop is not a valid outline.
    """
    p = Path(path)
    check_input(p, "mesh file")  # a regular file within the size cap, before meshio opens it
    mesh = _read_mesh(p)
    blocks = [np.asarray(c.data, dtype=np.int64) for c in mesh.cells if c.type == "line"]
    if not blocks:
        kinds = ", ".join(sorted({c.type for c in mesh.cells})) or "none"
        raise InputError(f"{p}: the mesh has no line cells (cell types: {kinds})")
    edges = np.vstack(blocks)
    pts = np.asarray(mesh.points, dtype=float)
    if pts.ndim != 2 or pts.shape[1] < 2:
        raise InputError(f"{p}: the mesh points have no x and y coordinates")
    if edges.ndim != 2 or edges.shape[1] != 2 or edges.min() < 0 or edges.max() >= len(pts):
        bad = int(edges.max()) if len(pts) and edges.max() >= len(pts) else int(edges.min())
        raise InputError(f"{p}: a line cell refers to point {bad}, but the mesh has "
                         f"{len(pts)} points (0 to {len(pts) - 1})")
    if not np.all(np.isfinite(pts[np.unique(edges)])):
        raise InputError(f"{p}: point coordinates must be finite numbers")
    xy = pts[:, :2]
    size = float(np.max(np.ptp(xy[np.unique(edges)], axis=0)))
    if pts.shape[1] > 2 and np.ptp(pts[np.unique(edges), 2]) > 1e-9 * max(size, 1e-300):
        raise InputError(f"{p}: the line cells are not in one x-y plane (z varies)")
    # the same position written as two points (as some formats do per segment) is one point
    _, first, inverse = np.unique(np.round(xy / max(size, 1e-300) * 1e9), axis=0,
                                  return_index=True, return_inverse=True)
    edges = first[inverse.ravel()][edges]
    loops = _chain_loops(edges, xy, p)
    loops.sort(key=lambda lp: int(lp.min()))
    many = len(loops) > 1
    out = []
    for i, loop in enumerate(loops, start=1):
        name = f"{p.stem}-{i}" if many else p.stem
        # a polyline from a mesh may start anywhere: search for its trailing edge
        out.append(_outline(xy[loop], name, p, f"loop {i}: " if many else "",
                            starts_at_te=False))
    return out


_MESH_EXTENSIONS_DONE = []


def _register_mesh_extensions() -> None:
    """Register the mesh reader for every extension meshio knows, on first use.

    Deferred so that importing panelflow (and every CLI start) does not pay for importing meshio.
    """
    if _MESH_EXTENSIONS_DONE:
        return
    _MESH_EXTENSIONS_DONE.append(True)
    try:
        import meshio
    except ImportError:  # meshio is a dependency; without it mesh files are simply unknown
        return
    for ext in meshio.extension_to_filetypes:
        if ext not in READERS:  # tables keep .dat (meshio: tecplot) and the like
            register_reader(ext, read_outline_mesh)


# ---------------------------------------------------------------------------------- front door
def load_outlines(spec_or_path) -> list[Outline]:
    """Outlines from a section spec (see :mod:`panelflow.geometry.sections`) or from a file.

    Parameters
    ----------
    spec_or_path : str or os.PathLike
        A spec such as ``naca0012`` or a file path; the reader is chosen by extension.

    Returns
    -------
    list of Outline

    Raises
    ------
    InputError, GeometryError
    """
    if isinstance(spec_or_path, str):
        outline = parse_spec(spec_or_path)
        if outline is not None:
            return [outline]
    p = Path(spec_or_path)
    if not p.exists():
        raise InputError(f"{p}: no such file, and not a section spec ({SPEC_HELP})")
    return _reader_for(p)(p)


# ---------------------------------------------------------------------------------- output
def _number_like(text: str) -> bool:
    tokens = [t for t in _SPLIT.split(text) if t]
    return bool(tokens) and all(_as_number(t) is not None for t in tokens)


def outline_table_text(outlines) -> str:
    """panelflow's own coordinate layout (see the module docstring): one header row
    ``body,point,x,y`` (``x_mm,y_mm`` and the like when the outlines carry a unit), then one
    point per row, numbered along each outline from its first point."""
    import csv

    outlines = [outlines] if isinstance(outlines, Outline) else list(outlines)
    units = {o.unit for o in outlines}
    unit = units.pop() if len(units) == 1 else None
    suffix = f"_{unit}" if unit else ""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["body", "point", f"x{suffix}", f"y{suffix}"])
    for o in outlines:
        name = " ".join(str(o.name).split()) or "body"
        w.writerows([name, k, f"{x:.12g}", f"{y:.12g}"]
                    for k, (x, y) in enumerate(o.points, start=1))
    return buf.getvalue()


def write_outline_table(outline, path, overwrite: bool = False) -> Path:
    """Write one outline (or several) in panelflow's own coordinate layout, atomically.

    The layout is the same whatever the extension (``.csv``, ``.dat``, ``.txt``): a header row
    ``body,point,x,y``, then one point per row in panelflow's order (upper trailing edge, leading
    edge, lower trailing edge), every body in one file. :func:`read_outline_table` reads it
    back, and so does any spreadsheet.

    Parameters
    ----------
    outline : Outline or sequence of Outline
        The body or bodies to write.
    path : str or os.PathLike
        Output file.
    overwrite : bool, optional
        Replace an existing file; by default an existing file is an error.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    OutputError
        The file exists (and ``overwrite`` is False), or the folder is missing or not writable.
    """
    path = Path(path)
    if path.suffix.lower() not in TABLE_EXTENSIONS:
        raise OutputError(f"{path}: a coordinate table is written as "
                          f"{', '.join(TABLE_EXTENSIONS)} (the layout is text; another "
                          "extension would mislabel it)")
    return atomic_write_text(path, outline_table_text(outline), overwrite=overwrite)
