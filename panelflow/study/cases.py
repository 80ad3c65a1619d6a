"""Case files: a whole study -- sections, conditions and outputs -- in one TOML file.

``panelflow run CASE.toml`` reads the file with the standard library's :mod:`tomllib`, checks it
completely before solving anything, expands section families and file patterns
(:mod:`panelflow.geometry.families`) and runs the study (:func:`panelflow.study.run_case`). Every error
names the file, the line and the key (``tender.toml, line 14: section[2].scale: ...``; ``[2]``
counts the ``[[section]]`` tables from 1); an unknown key is refused with the closest valid key
suggested. Relative paths are taken from the case file's folder.

Schema
------
Top level
    ``title``       text, optional: a name for the study (kept in the manifest).
    ``output``      folder for the results, relative to the case file; default
                    ``CASE_results`` beside it (``panelflow run -o DIR`` overrides).

``[[section]]`` (one table per section; at least one)
    ``spec``        a section spec (``naca2412``) or a family (``naca00{06..18:3}``), or
    ``file``        a coordinate or mesh file, or a pattern (``outlines/*.dat``); a file with
                    several bodies is one section, a family or pattern one section per member;
    ``body``        instead of ``spec`` / ``file``: a list of bodies (``[[section.body]]`` tables,
                    each with ``spec`` or ``file`` and the transforms below), the first the main
                    body; no families or patterns here.
    ``label``       the section's name in tables and figures; default the spec, the file's
                    stem, or the bodies' joined; with a family or pattern ``LABEL: MEMBER``.
                    Labels must differ.
    ``name``        body name (single-body sections and in ``[[section.body]]``).
    ``scale``       scale factor about the origin (> 0);
    ``pitch``       nose-up pitch in degrees about the body's leading edge;
    ``move``        ``[DX, DY]`` translation. Applied in this order: scale, pitch, move.
    ``flap``        ``{ hinge = XH, angle = DEG }``: deflect the first body's aft part about
                    a hinge at chord fraction ``hinge`` by ``angle`` degrees, trailing edge down
                    positive (see ``--flap``); optional ``gap`` (a separate flap body with
                    this gap) and ``radius`` (corner rounding, default 0.01).

``[conditions]``
    ``alpha``       angles of attack in degrees; a number, a text ``"START:STOP:STEP"`` (STOP
                    included) or a list of both; or instead
    ``cl``          a target lift coefficient: each section is solved at the angle that gives
                    it (outputs below may then leave out ``alpha``).
    ``panels``      panels per body (default 200, at least 8).
    ``keep_points`` true: use the given points as panel ends (no re-panelling).
    ``reference_point``  ``[X, Y]`` moment reference point (default each section's quarter chord).
    ``error_estimate``   false: skip the half-panel solve (no error estimates; faster).
    ``fluid``       ``air``, ``fresh-water`` or ``sea-water``, or ``density`` in kg/m^3;
    ``speed``       m/s. Both are the defaults of the load outputs.
    ``temperature`` °C, ``salinity`` g/kg (sea water), ``altitude`` m (of the air or of the
                    water surface): the preset fluid's state; its properties are computed from
                    the published standards there (default 15 °C, 35 g/kg, sea level).
    ``mach``        subsonic Mach number: adds ``cl_mach``, ``cm_mach``, ``cp_min_mach`` and
                    ``mach_critical`` columns (``mach_rule`` ``karman-tsien`` (default),
                    ``prandtl-glauert`` or ``laitone``).
    ``depth``       running depth in metres (with a liquid ``fluid``): adds
                    ``inception_speed`` and, with ``speed``, ``cavitation_number`` and
                    ``cavitation_margin`` columns.
    ``ground``      a wall this far below the main body's quarter chord (outline units), or
    ``free_surface`` a free surface this far above it: adds ``plane_clearance``,
                    ``cl_free_space`` and ``cm_free_space`` columns; every output (figures,
                    fields, loads) is computed with the plane.
    ``unit`` / ``chord``  the outline's length unit or the main chord in metres: the default
                    scale of the load outputs.
    ``reynolds``    Reynolds number: adds the viscous analysis (``cl_viscous``, ``cd``,
                    ``cd_friction``, ``cd_form``, ``lift_to_drag``, transition and separation
                    columns); or ``viscous`` (true) with ``fluid``, ``speed`` and
                    ``chord``/``unit`` for the Reynolds number; ``critical_amplification`` (default 9) or
                    ``turbulence_level`` (percent), ``trip_upper`` / ``trip_lower`` (x/c).
    ``smooth_within``  fit every body with a smoothing curve moving no point farther than this
                    (outline units) before solving.

``[outputs]`` (file names inside the output folder; no folders)
    ``table``       a name or a list of names, ``.csv`` or ``.json``: the tidy table, one row
                    per section and angle; default ``polars.csv``.
    ``[[outputs.polar_figure]]``  ``file`` (``.png``, ``.svg``, ``.pdf``), ``sections`` (labels,
                    default all), ``title``.
    ``[[outputs.cp_figure]]``     ``file``, ``alpha`` (one angle), ``sections`` (default all;
                    one section gives the single-case figure, several the comparison), ``title``.
    ``[[outputs.field]]``   ``file`` (``.vtu``, ``.xdmf``, ``.csv``), ``alpha``, ``section``
                    (needed when there are several), ``window`` ``[X0, X1, Y0, Y1]``,
                    ``resolution`` ``[NX, NY]`` (default ``[201, 121]``), ``figure`` (a figure
                    file of the field), ``streamlines`` (in the figure, default 17).
    ``[[outputs.loads]]``   ``file`` (``.json``, ``.csv``, ``.vtu``, ``.inp``), ``alpha``,
                    ``section``, ``fluid`` or ``density`` (with ``temperature``,
                    ``salinity``, ``altitude``) and ``speed`` (default the
                    conditions'), ``chord`` (m) or ``unit`` (``m``, ``cm``, ``mm``, ``in``,
                    ``ft``), ``span`` (m), ``about`` (a list of ``[X, Y]`` extra moment points).
    Each of the four may be one table (``[outputs.loads]``) or several (``[[outputs.loads]]``).

Loads are steady, inviscid estimates without safety factors; see the cautions in every load
file and check structures under the applicable codes and by licensed engineering practice.
"""

from __future__ import annotations

import difflib
import json
import math
import os
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from panelflow.analysis.problem import (MAX_PANELS_PER_BODY, MIN_PANELS, Flap, OperatingPoint,
                                       check_output)
from panelflow.errors import InputError, PanelflowError
from panelflow.files import read_input
from panelflow.geometry.arguments import parse_angles
from panelflow.study.runner import BodySource, SectionTask, file_sha256

__all__ = ["KeyLines", "Case", "Outputs", "PolarFigureOutput", "CpFigureOutput", "FieldOutput",
           "LoadsOutput", "load_case", "parse_case", "parse_angle_values", "KEYS"]

DEFAULT_TABLE = "polars.csv"
# A case file is a page of settings; a megabyte is far beyond any real one.
MAX_CASE_BYTES = 2**20
DEFAULT_RESOLUTION = (201, 121)
DEFAULT_STREAMLINES = 17

# Valid keys of every table, for the unknown-key check and its suggestion.
_BODY_KEYS = ("spec", "file", "name", "scale", "pitch", "move")
KEYS = {
    "top": ("title", "output", "section", "conditions", "outputs"),
    "section": ("label", "spec", "file", "body", "name", "scale", "pitch", "move", "flap"),
    "body": _BODY_KEYS,
    "flap": ("hinge", "angle", "gap", "radius"),
    "conditions": ("alpha", "cl", "panels", "keep_points", "reference_point", "error_estimate",
                   "fluid", "density", "speed", "mach", "mach_rule", "depth", "unit", "chord",
                   "ground", "free_surface", "temperature", "salinity", "altitude",
                   "reynolds", "viscous", "critical_amplification", "turbulence_level",
                   "trip_upper", "trip_lower", "smooth_within"),
    "outputs": ("table", "polar_figure", "cp_figure", "field", "loads"),
    "polar_figure": ("file", "sections", "title"),
    "cp_figure": ("file", "alpha", "sections", "title"),
    "field": ("file", "alpha", "section", "window", "resolution", "figure", "streamlines"),
    "loads": ("file", "alpha", "section", "fluid", "density", "speed", "chord", "unit", "span",
              "about", "temperature", "salinity", "altitude"),
}


# ------------------------------------------------------------------------------ key lines
_BARE = r"[A-Za-z0-9_-]+"
_QUOTED = r"\"(?:[^\"\\]|\\.)*\"|'[^']*'"
_KEY = rf"(?:{_BARE}|{_QUOTED})"
_DOTTED = rf"{_KEY}(?:\s*\.\s*{_KEY})*"
_AOT_HEADER = re.compile(rf"\s*\[\[\s*({_DOTTED})\s*\]\]")
_TABLE_HEADER = re.compile(rf"\s*\[\s*({_DOTTED})\s*\]")
_KEY_EQ = re.compile(rf"\s*({_DOTTED})\s*=")
_KEY_PART = re.compile(_KEY)


def _split_key(text: str) -> tuple:
    parts = []
    for m in _KEY_PART.finditer(text):
        k = m.group(0)
        if k.startswith('"'):
            try:
                k = json.loads(k)
            except ValueError:
                k = k[1:-1]
        elif k.startswith("'"):
            k = k[1:-1]
        parts.append(k)
    return tuple(parts)


class KeyLines:
    """Line numbers of the keys, tables and array elements of a TOML text.

    :mod:`tomllib` reports no positions, so the text is scanned for table headers (``[a.b]``,
    ``[[a]]``, with arrays of tables counted), ``key = value`` lines, keys inside inline tables
    and the elements of arrays (also across lines). A path is a tuple of keys and list indices
    as in the parsed data: ``("section", 1, "scale")`` is ``scale`` in the second
    ``[[section]]``. Strings and comments are skipped, so a ``#`` or ``=`` inside a string does
    not confuse it.
    """

    def __init__(self, text: str):
        self._lines: dict = {}
        self._aot: dict = {}  # array-of-tables path -> index of its current element
        self._scan(text)

    def line(self, path) -> int | None:
        """Line (from 1) of ``path``, else of its nearest recorded parent, else None."""
        path = tuple(path)
        while path:
            if path in self._lines:
                return self._lines[path]
            path = path[:-1]
        return None

    # -- scanning
    def _record(self, path, lineno):
        self._lines.setdefault(tuple(path), lineno)

    def _resolve(self, keys) -> tuple:
        path = ()
        for k in keys:
            path += (k,)
            if path in self._aot:
                path += (self._aot[path],)
        return path

    def _scan(self, text: str) -> None:
        current = ()
        stack = []  # open arrays and inline tables: [kind, path, index, expecting_key]
        in_string = None  # closing quotes of an open multi-line string
        for lineno, line in enumerate(text.splitlines(), start=1):
            i = 0
            if in_string is not None:
                end = line.find(in_string)
                if end < 0:
                    continue
                i, in_string = end + 3, None
            owner = None
            if not stack and in_string is None and i == 0:
                m = _AOT_HEADER.match(line)
                if m:
                    keys = _split_key(m.group(1))
                    arr = self._resolve(keys[:-1]) + (keys[-1],)
                    self._aot[arr] = self._aot.get(arr, -1) + 1
                    current = arr + (self._aot[arr],)
                    self._record(current, lineno)
                    self._record(arr, lineno)
                    continue
                m = _TABLE_HEADER.match(line)
                if m:
                    current = self._resolve(_split_key(m.group(1)))
                    self._record(current, lineno)
                    continue
                m = _KEY_EQ.match(line)
                if not m:
                    continue
                owner = current + _split_key(m.group(1))
                self._record(owner, lineno)
                i = m.end()
            in_string = self._scan_value(line, i, owner, stack, lineno)

    def _scan_value(self, line, i, owner, stack, lineno):
        """Walk one line of a value; returns the closing quotes of a multi-line string left
        open, else None."""
        n = len(line)
        while i < n:
            top = stack[-1] if stack else None
            if top is not None and top[0] == "t" and top[3]:
                m = _KEY_EQ.match(line, i)
                if m:
                    owner = top[1] + _split_key(m.group(1))
                    self._record(owner, lineno)
                    top[3] = False
                    i = m.end()
                    continue
            c = line[i]
            if c.isspace():
                i += 1
                continue
            if c == "#":
                break
            if c in ",]}":
                if c == "," and top is not None:
                    if top[0] == "a":
                        top[2] += 1
                    else:
                        top[3] = True
                elif c in "]}" and stack:
                    stack.pop()
                i += 1
                continue
            # the start of a value
            if top is not None and top[0] == "a":
                element = top[1] + (top[2],)
                self._record(element, lineno)
                if owner is None:
                    owner = element
            if c in "[{":
                path = owner if owner is not None else ()
                stack.append(["a" if c == "[" else "t", path, 0, c == "{"])
                owner = None
                i += 1
                continue
            owner = None
            if c in "\"'":
                triple = line[i:i + 3]
                if triple in ('"""', "'''"):
                    end = line.find(triple, i + 3)
                    if end < 0:
                        return triple
                    i = end + 3
                    continue
                j = i + 1
                while j < n and line[j] != c:
                    j += 2 if (c == '"' and line[j] == "\\") else 1
                i = j + 1
                continue
            while i < n and line[i] not in ",]}#" and not line[i].isspace():
                i += 1
        return None


# ------------------------------------------------------------------------------ results
@dataclass(frozen=True)
class PolarFigureOutput:
    file: str
    sections: tuple = ()
    title: str | None = None


@dataclass(frozen=True)
class CpFigureOutput:
    file: str
    alpha: float
    sections: tuple = ()
    title: str | None = None


@dataclass(frozen=True)
class FieldOutput:
    file: str
    alpha: float
    section: str
    window: tuple | None = None
    resolution: tuple = DEFAULT_RESOLUTION
    figure: str | None = None
    streamlines: int = DEFAULT_STREAMLINES


@dataclass(frozen=True)
class LoadsOutput:
    file: str
    alpha: float
    section: str
    speed: float
    fluid: str | None = None
    density: float | None = None
    chord: float | None = None
    unit: str | None = None
    span: float | None = None
    about: tuple = ()
    fluid_state: tuple = ()  # ((key, value), ...) of temperature, salinity, altitude


@dataclass(frozen=True)
class Outputs:
    """Everything a case writes, as file names inside the output folder."""

    tables: tuple = (DEFAULT_TABLE,)
    polar_figures: tuple = ()
    cp_figures: tuple = ()
    fields: tuple = ()
    loads: tuple = ()

    def record(self) -> dict:
        def rec(obj):
            return {k: (list(v) if isinstance(v, tuple) else v) for k, v in vars(obj).items()
                    if v is not None and v != ()}

        return {"table": list(self.tables),
                "polar_figure": [rec(o) for o in self.polar_figures],
                "cp_figure": [rec(o) for o in self.cp_figures],
                "field": [rec(o) for o in self.fields],
                "loads": [rec(o) for o in self.loads]}


@dataclass(frozen=True)
class Case:
    """A checked case file, ready for :func:`panelflow.study.run_case`.

    Attributes
    ----------
    path : Path
        The case file.
    sha256 : str
        SHA-256 of the case file as read.
    title : str
    output : Path
        Default output folder.
    tasks : tuple of SectionTask
        One per section (families and patterns expanded), in file order.
    outputs : Outputs
    conditions : dict
        The resolved conditions (plain data, for the manifest).
    """

    path: Path
    sha256: str
    title: str
    output: Path
    tasks: tuple
    outputs: Outputs
    conditions: dict = field(default_factory=dict)

    @property
    def labels(self) -> tuple:
        return tuple(t.label for t in self.tasks)

    def input_files(self) -> list:
        """The case file and every geometry file, each once, in order of first use."""
        files = [self.path]
        for t in self.tasks:
            files += [Path(b.source) for b in t.bodies if b.is_file]
        return list(dict.fromkeys(files))

    def settings(self) -> dict:
        """The resolved settings, plain JSON data (paths relative to the case file's folder)."""
        base = self.path.parent
        return {"case_file": self.path.name, "title": self.title,
                "conditions": self.conditions,
                "sections": [t.record(base) for t in self.tasks],
                "outputs": self.outputs.record()}


# ------------------------------------------------------------------------------ checking
def _where(path) -> str:
    out = ""
    for part in path:
        if isinstance(part, int):
            out += f"[{part + 1}]"
        else:
            out += ("." if out else "") + str(part)
    return out or "(top level)"


class _Checker:
    """Error messages with file, line and key."""

    # the keys each kind of table may hold (a design case file's checker has its own)
    known_keys = KEYS

    def __init__(self, name: str, lines: KeyLines):
        self.name = name
        self.lines = lines

    def error(self, path, message: str) -> InputError:
        line = self.lines.line(path)
        loc = f"{self.name}, line {line}" if line else self.name
        return InputError(f"{loc}: {_where(path)}: {message}")

    def keys(self, table: dict, kind: str, path) -> None:
        allowed = self.known_keys[kind]
        for key in table:
            if key in allowed:
                continue
            close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
            hint = (f"did you mean {close[0]!r}?" if close
                    else f"valid keys here: {', '.join(allowed)}")
            raise self.error(tuple(path) + (key,), f"unknown key {key!r}; {hint}")

    # -- value checks
    def table(self, value, path, what="a table") -> dict:
        if not isinstance(value, dict):
            raise self.error(path, f"must be {what}, got {_kind(value)}")
        return value

    def tables(self, value, path) -> list:
        """One table or an array of tables, as a list."""
        if isinstance(value, dict):
            return [value]
        if isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            return value
        raise self.error(path, f"must be a table or an array of tables, got {_kind(value)}")

    def text(self, value, path) -> str:
        if not isinstance(value, str) or not value.strip():
            raise self.error(path, f"must be a non-empty text, got {_kind(value)}")
        return value.strip()

    def texts(self, value, path) -> tuple:
        if isinstance(value, str):
            return (self.text(value, path),)
        if not isinstance(value, list) or not value:
            raise self.error(path, f"must be a text or a list of texts, got {_kind(value)}")
        return tuple(self.text(v, tuple(path) + (k,)) for k, v in enumerate(value))

    def number(self, value, path, low=None, high=None, low_open=False, high_open=False) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.error(path, f"must be a number, got {_kind(value)}")
        v = float(value)
        if not math.isfinite(v):
            raise self.error(path, f"must be a finite number, got {value}")
        if low is not None and (v < low or (low_open and v == low)):
            raise self.error(path, f"must be {'above' if low_open else 'at least'} {low:g}, "
                             f"got {v:g}")
        if high is not None and (v > high or (high_open and v == high)):
            raise self.error(path, f"must be {'below' if high_open else 'at most'} {high:g}, "
                             f"got {v:g}")
        return v

    def integer(self, value, path, low) -> int:
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.error(path, f"must be a whole number, got {_kind(value)}")
        if value < low:
            raise self.error(path, f"must be at least {low}, got {value}")
        return int(value)

    def boolean(self, value, path) -> bool:
        if not isinstance(value, bool):
            raise self.error(path, f"must be true or false, got {_kind(value)}")
        return value

    def numbers(self, value, path, count: int, what: str) -> tuple:
        if not isinstance(value, list) or len(value) != count:
            raise self.error(path, f"must be {what}, got {_kind(value)}")
        return tuple(self.number(v, tuple(path) + (k,)) for k, v in enumerate(value))


def _kind(value) -> str:
    if isinstance(value, bool):
        return f"the boolean {str(value).lower()}"
    if isinstance(value, (int, float)):
        return f"the number {value}"
    if isinstance(value, str):
        return f"the text {value!r}" if value.strip() else "an empty text"
    if isinstance(value, list):
        return f"a list of {len(value)}"
    if isinstance(value, dict):
        return "a table"
    return type(value).__name__


def parse_angle_values(value) -> list:
    """Angles from a number, a ``"START:STOP:STEP"`` or ``"A, B"`` text, or a list of these
    (:func:`panelflow.geometry.arguments.parse_angles`; the case checker adds file, line and key)."""
    return [float(a) for a in parse_angles(value)]


def _plain_name(ck: _Checker, value, path, formats, what) -> str:
    name = ck.text(value, path)
    if "/" in name or "\\" in name or name in (".", "..") or os.path.isabs(name):
        raise ck.error(path, f"{name!r}: give a file name inside the output folder, without "
                       "folders")
    ext = Path(name).suffix.lower()
    if ext not in formats:
        raise ck.error(path, f"{name!r}: unknown {what} format {ext or '(no extension)'}; use "
                       f"one of {', '.join(sorted(formats))}")
    return name


def _expand_files(ck: _Checker, text: str, base: Path, path) -> list:
    from panelflow.geometry.families import expand_family, expand_files, is_pattern

    try:
        members = expand_family(text) if not (base / text).exists() else [text]
        out = []
        for m in members:
            full = m if os.path.isabs(m) else str(base / m)
            out.extend(expand_files(m, base) if is_pattern(full) else [full])
    except InputError as exc:
        raise ck.error(path, str(exc)) from None
    for f in out:
        if not os.path.isfile(f):
            raise ck.error(path, f"{_shown(f, base)}: no such file")
    return [os.path.abspath(f) for f in out]


def _shown(path, base) -> str:
    try:
        return Path(os.path.relpath(path, base)).as_posix()
    except ValueError:
        return str(path)


def _expand_specs(ck: _Checker, text: str, path) -> list:
    from panelflow.geometry.families import expand_family
    from panelflow.geometry.specs import parse_spec

    try:
        members = expand_family(text)
    except InputError as exc:
        raise ck.error(path, str(exc)) from None
    for m in members:
        try:
            outline = parse_spec(m)
        except PanelflowError as exc:
            raise ck.error(path, str(exc)) from None
        if outline is None:
            from panelflow.geometry.specs import SPEC_HELP

            raise ck.error(path, f"{m!r} is not a section spec ({SPEC_HELP}); a file goes under "
                           "'file'")
    return members


def _transforms(ck: _Checker, table: dict, path) -> dict:
    out = {}
    if "name" in table:
        out["name"] = ck.text(table["name"], path + ("name",))
    if "scale" in table:
        out["scale"] = ck.number(table["scale"], path + ("scale",), low=0.0, low_open=True)
    if "pitch" in table:
        out["pitch"] = ck.number(table["pitch"], path + ("pitch",), low=-90.0, high=90.0)
    if "move" in table:
        out["move"] = ck.numbers(table["move"], path + ("move",), 2, "[DX, DY]")
    return out


def _sources(ck: _Checker, table: dict, path, base: Path, allow_many: bool):
    """(members, is_file, key) of the spec or file of a section or body table."""
    given = [k for k in ("spec", "file", "body") if k in table]
    choices = "'spec' or 'file'" + (" or 'body'" if allow_many else "")
    if len(given) != 1 or (given[0] == "body" and not allow_many):
        if not given:
            raise ck.error(path, f"give the geometry with {choices}")
        raise ck.error(path + (given[1 if len(given) > 1 else 0],),
                       f"give only one of {choices}")
    key = given[0]
    if key == "body":
        return None, False, key
    if key == "spec":
        return _expand_specs(ck, ck.text(table["spec"], path + ("spec",)), path + ("spec",)), \
            False, key
    return _expand_files(ck, ck.text(table["file"], path + ("file",)), base, path + ("file",)), \
        True, key


def _body(member: str, is_file: bool, transforms: dict) -> BodySource:
    return BodySource(member, is_file, file_sha256(member) if is_file else None, **transforms)


def _member_name(member: str, is_file: bool) -> str:
    return Path(member).stem if is_file else member


def _sections(ck: _Checker, doc: dict, base: Path, settings: dict):
    """(task, path) pairs of every section, families and patterns expanded."""
    if "section" not in doc:
        raise ck.error((), "no [[section]]: give at least one section (spec or file)")
    raw = doc["section"]
    if not (isinstance(raw, list) and raw and all(isinstance(s, dict) for s in raw)):
        raise ck.error(("section",), "must be [[section]] tables (an array of tables)")
    out = []
    for i, sec in enumerate(raw):
        path = ("section", i)
        ck.keys(sec, "section", path)
        label = ck.text(sec["label"], path + ("label",)) if "label" in sec else None
        flap = _flap(ck, sec["flap"], path + ("flap",)) if "flap" in sec else None
        members, is_file, key = _sources(ck, sec, path, base, allow_many=True)
        if key == "body":
            for k in ("name", "scale", "pitch", "move"):
                if k in sec:
                    raise ck.error(path + (k,), f"with 'body' give {k!r} in each "
                                   "[[section.body]]")
            bodies, names = [], []
            for j, b in enumerate(ck.tables(sec["body"], path + ("body",))):
                bpath = path + ("body", j)
                ck.keys(b, "body", bpath)
                ms, b_file, b_key = _sources(ck, b, bpath, base, allow_many=False)
                if len(ms) != 1:
                    raise ck.error(bpath + (b_key,), f"expands to {len(ms)} members; families "
                                   "and file patterns belong in a section's own spec or file")
                tr = _transforms(ck, b, bpath)
                bodies.append(_body(ms[0], b_file, tr))
                names.append(tr.get("name", _member_name(ms[0], b_file)))
            out.append((SectionTask(label or ", ".join(names), tuple(bodies), flap=flap,
                                    **settings), path))
            continue
        tr = _transforms(ck, sec, path)
        for m in members:
            name = _member_name(m, is_file)
            if len(members) == 1:
                lab = label or tr.get("name", name)
            else:
                lab = f"{label}: {name}" if label else name
            out.append((SectionTask(lab, (_body(m, is_file, tr),), flap=flap, **settings),
                        path + (key,)))
    seen = {}
    for task, path in out:
        if task.label in seen:
            raise ck.error(path, f"section label {task.label!r} is used twice (also at line "
                           f"{ck.lines.line(seen[task.label])}); give each section a 'label'")
        seen[task.label] = path
    return out


def _flap(ck: _Checker, value, path) -> Flap:
    t = ck.table(value, path, "a table { hinge = XH, angle = DEG }")
    ck.keys(t, "flap", path)
    for k in ("hinge", "angle"):
        if k not in t:
            raise ck.error(path, f"missing key {k!r} (flap = {{ hinge = 0.75, angle = 10 }})")
    hinge = ck.number(t["hinge"], path + ("hinge",), 0.0, 1.0, True, True)
    angle = ck.number(t["angle"], path + ("angle",), -60.0, 60.0)
    gap = (ck.number(t["gap"], path + ("gap",), 0.0, low_open=True) if "gap" in t else None)
    radius = (ck.number(t["radius"], path + ("radius",), 0.0, low_open=True) if "radius" in t
              else 0.01)
    return Flap(hinge, angle, gap, radius)


_STATE_KEYS = ("temperature", "salinity", "altitude")


def _fluid_state(ck: _Checker, table: dict, path) -> tuple:
    """The fluid's ``temperature``, ``salinity`` and ``altitude`` keys as ((key, value), ...)."""
    return tuple((k, ck.number(table[k], path + (k,))) for k in _STATE_KEYS if k in table)


def _fluid(ck: _Checker, table: dict, path):
    """(fluid name, density, state) of a table, checked; (None, None, ()) when neither is
    given. ``state`` holds the temperature, salinity and altitude given with a preset."""
    from panelflow.conditions.fluids import make_fluid

    if "fluid" in table and "density" in table:
        raise ck.error(path + ("density",), "give either 'fluid' or 'density', not both")
    state = _fluid_state(ck, table, path)
    if "fluid" in table:
        name = ck.text(table["fluid"], path + ("fluid",))
        try:
            return make_fluid(name, **dict(state)).name, None, state
        except InputError as exc:
            key = next((k for k, _ in state if k in str(exc)), "fluid")
            raise ck.error(path + (key,), str(exc)) from None
    if state:
        raise ck.error(path + (state[0][0],), f"'{state[0][0]}' sets a preset fluid's state: "
                       "give 'fluid' (air, fresh-water or sea-water) too")
    if "density" in table:
        return None, ck.number(table["density"], path + ("density",), 0.0, low_open=True), ()
    return None, None, ()


def _conditions(ck: _Checker, doc: dict):
    """(task settings, resolved conditions record, fluid, density, speed, unit, chord)."""
    from panelflow.conditions.compressibility import RULES
    from panelflow.flow.images import Boundary

    path = ("conditions",)
    if "conditions" not in doc:
        raise ck.error((), "no [conditions] table: give at least alpha = \"START:STOP:STEP\"")
    c = ck.table(doc["conditions"], path)
    ck.keys(c, "conditions", path)
    if "alpha" in c and "cl" in c:
        raise ck.error(path + ("cl",), "give either 'alpha' or 'cl', not both")
    alpha, target = [], None
    if "cl" in c:
        target = ck.number(c["cl"], path + ("cl",))
    elif "alpha" not in c:
        raise ck.error(path, "missing key 'alpha' (angles of attack, e.g. alpha = \"-4:10:1\"), "
                       "or 'cl' (a target lift coefficient)")
    else:
        raw = c["alpha"]
        for k, item in enumerate(raw if isinstance(raw, list) else [raw]):
            where = path + ("alpha",) + ((k,) if isinstance(raw, list) else ())
            try:
                alpha += parse_angle_values(item)
            except InputError as exc:
                raise ck.error(where, str(exc)) from None
        if not alpha:
            raise ck.error(path + ("alpha",), "no angle given")
    panels = ck.integer(c["panels"], path + ("panels",), MIN_PANELS) if "panels" in c else 200
    if panels > MAX_PANELS_PER_BODY:
        raise ck.error(path + ("panels",), f"must be at most {MAX_PANELS_PER_BODY}, got {panels}")
    keep = ck.boolean(c["keep_points"], path + ("keep_points",)) if "keep_points" in c else False
    ref = (ck.numbers(c["reference_point"], path + ("reference_point",), 2, "[X, Y]")
           if "reference_point" in c else None)
    est = (ck.boolean(c["error_estimate"], path + ("error_estimate",)) if "error_estimate" in c
           else True)
    fluid, density, state = _fluid(ck, c, path)
    speed = (ck.number(c["speed"], path + ("speed",), 0.0, low_open=True) if "speed" in c
             else None)
    mach = (ck.number(c["mach"], path + ("mach",), 0.0, 1.0, high_open=True) if "mach" in c
            else None)
    rule = "karman-tsien"
    if "mach_rule" in c:
        rule = ck.text(c["mach_rule"], path + ("mach_rule",)).lower()
        if rule not in RULES:
            close = difflib.get_close_matches(rule, RULES, n=1)
            raise ck.error(path + ("mach_rule",), f"unknown rule {rule!r}; use one of "
                           f"{', '.join(RULES)}" + (f" (did you mean {close[0]!r}?)" if close
                                                     else ""))
        if mach is None:
            raise ck.error(path + ("mach_rule",), "mach_rule needs mach")
    depth = (ck.number(c["depth"], path + ("depth",), 0.0) if "depth" in c else None)
    if depth is not None:
        from panelflow.conditions.fluids import get_fluid

        if fluid is None or get_fluid(fluid).vapour_pressure is None:
            raise ck.error(path + ("depth",), "the cavitation check needs fluid = "
                           "\"sea-water\" or \"fresh-water\"")
    if "unit" in c and "chord" in c:
        raise ck.error(path + ("unit",), "give either 'unit' or 'chord', not both")
    unit = _unit(ck, c, path)
    chord = (ck.number(c["chord"], path + ("chord",), 0.0, low_open=True) if "chord" in c
             else None)
    if "ground" in c and "free_surface" in c:
        raise ck.error(path + ("free_surface",), "give either 'ground' or 'free_surface', not "
                       "both")
    plane = None
    if "ground" in c:
        plane = Boundary.ground(ck.number(c["ground"], path + ("ground",), 0.0, low_open=True))
    elif "free_surface" in c:
        plane = Boundary.free_surface(ck.number(c["free_surface"], path + ("free_surface",),
                                                0.0, low_open=True))
    viscous = {}
    for key in ("reynolds", "critical_amplification", "turbulence_level", "trip_upper",
                "trip_lower"):
        if key in c:
            viscous[key] = ck.number(c[key], path + (key,), 0.0, low_open=True)
    if "viscous" in c:
        viscous["viscous"] = ck.boolean(c["viscous"], path + ("viscous",))
    smooth = (ck.number(c["smooth_within"], path + ("smooth_within",), 0.0, low_open=True)
              if "smooth_within" in c else None)
    from_fluid = viscous.get("viscous", False) and "reynolds" not in viscous
    try:
        operating = OperatingPoint(
            alpha_deg=tuple(alpha), target_cl=target, mach=mach, mach_rule=rule,
            fluid=fluid if depth is not None or from_fluid else None,
            speed=speed if depth is not None or from_fluid else None, depth=depth, plane=plane,
            unit=unit if from_fluid else None, chord=chord if from_fluid else None, **viscous,
            **(dict(state) if depth is not None or from_fluid else {}))
    except InputError as exc:
        raise ck.error(path, str(exc)) from None
    settings = dict(operating=operating, panels=None if keep else panels, reference_point=ref,
                    error_estimate=est, smoothing=smooth)
    record = {"alpha_deg": alpha, "cl": target, "panels": None if keep else panels,
              "keep_points": keep, "reference_point": list(ref) if ref else None,
              "error_estimate": est, "fluid": fluid, "density": density, "speed": speed,
              "mach": mach, "mach_rule": rule if mach is not None else None, "depth": depth,
              "unit": unit, "chord": chord, **dict(state),
              "plane": ({"kind": plane.kind, "distance": plane.distance} if plane else None),
              **{k: v for k, v in viscous.items()}, "smooth_within": smooth}
    return settings, record, (fluid, state), density, speed, unit, chord


def _unit(ck: _Checker, table: dict, path):
    from panelflow.conditions.fluids import UNITS

    if "unit" not in table:
        return None
    unit = ck.text(table["unit"], path + ("unit",))
    if unit not in UNITS:
        raise ck.error(path + ("unit",), f"unknown unit {unit!r}; use one of {', '.join(UNITS)}")
    return unit


def _labels(ck: _Checker, value, path, labels) -> tuple:
    chosen = ck.texts(value, path)
    for k, lab in enumerate(chosen):
        _known_label(ck, lab, path + (k,) if not isinstance(value, str) else path, labels)
    return chosen


def _known_label(ck: _Checker, label: str, path, labels) -> str:
    if label not in labels:
        close = difflib.get_close_matches(label, labels, n=1, cutoff=0.5)
        hint = f"did you mean {close[0]!r}?" if close else f"sections: {', '.join(labels)}"
        raise ck.error(path, f"no section labelled {label!r}; {hint}")
    return label


def _section_of(ck: _Checker, t: dict, path, labels) -> str:
    if "section" in t:
        return _known_label(ck, ck.text(t["section"], path + ("section",)), path + ("section",),
                            labels)
    if len(labels) > 1:
        raise ck.error(path, f"missing key 'section': which of the {len(labels)} sections "
                       f"({', '.join(labels[:4])}{', ...' if len(labels) > 4 else ''})")
    return labels[0]


def _outputs(ck: _Checker, doc: dict, labels, fluid, density, speed, unit=None, chord=None,
             operating=None) -> Outputs:
    from panelflow.output.field_files import FIELD_WRITERS
    from panelflow.output.load_files import LOAD_WRITERS
    from panelflow.output.figures import FIGURE_FORMATS
    from panelflow.output.tables import TABLE_WRITERS

    if "outputs" not in doc:
        return Outputs()
    path = ("outputs",)
    o = ck.table(doc["outputs"], path)
    ck.keys(o, "outputs", path)
    names = {}

    def name(value, p, formats, what):
        n = _plain_name(ck, value, p, formats, what)
        if n.lower() in names or n.lower() == "manifest.json":
            other = names.get(n.lower())
            raise ck.error(p, f"{n!r} is already an output" + (
                f" (line {ck.lines.line(other)})" if other else " (the run manifest)"))
        names[n.lower()] = p
        return n

    tables = tuple(name(v, path + ("table",) if isinstance(o["table"], str)
                        else path + ("table", k), TABLE_WRITERS, "table")
                   for k, v in enumerate(ck.texts(o["table"], path + ("table",)))) \
        if "table" in o else (DEFAULT_TABLE,)

    def entries(kind):
        if kind not in o:
            return []
        items = ck.tables(o[kind], path + (kind,))
        out = []
        for k, t in enumerate(items):
            p = path + (kind,) + ((k,) if isinstance(o[kind], list) else ())
            ck.keys(t, kind, p)
            if "file" not in t:
                raise ck.error(p, "missing key 'file'")
            out.append((t, p))
        return out

    target = operating is not None and operating.target_cl is not None

    def alpha(t, p):
        if "alpha" not in t:
            if target:  # the sections' own target-lift angles
                return None
            raise ck.error(p, "missing key 'alpha' (one angle of attack in degrees)")
        return ck.number(t["alpha"], p + ("alpha",))

    def title(t, p):
        return ck.text(t["title"], p + ("title",)) if "title" in t else None

    polar_figs = tuple(PolarFigureOutput(
        name(t["file"], p + ("file",), FIGURE_FORMATS, "figure"),
        _labels(ck, t["sections"], p + ("sections",), labels) if "sections" in t else (),
        title(t, p)) for t, p in entries("polar_figure"))
    cp_figs = tuple(CpFigureOutput(
        name(t["file"], p + ("file",), FIGURE_FORMATS, "figure"), alpha(t, p),
        _labels(ck, t["sections"], p + ("sections",), labels) if "sections" in t else (),
        title(t, p)) for t, p in entries("cp_figure"))
    fields_ = []
    for t, p in entries("field"):
        if operating is not None:
            try:
                check_output(operating, "field")
            except InputError as exc:
                raise ck.error(p, str(exc).split(": ", 1)[-1]) from None
        window = None
        if "window" in t:
            window = ck.numbers(t["window"], p + ("window",), 4, "[X0, X1, Y0, Y1]")
            if not (window[1] > window[0] and window[3] > window[2]):
                raise ck.error(p + ("window",), "need X0 < X1 and Y0 < Y1")
        res = DEFAULT_RESOLUTION
        if "resolution" in t:
            v = t["resolution"]
            if not isinstance(v, list) or len(v) != 2:
                raise ck.error(p + ("resolution",), f"must be [NX, NY], got {_kind(v)}")
            res = tuple(ck.integer(x, p + ("resolution", k), 2) for k, x in enumerate(v))
        fields_.append(FieldOutput(
            name(t["file"], p + ("file",), FIELD_WRITERS, "field"), alpha(t, p),
            _section_of(ck, t, p, labels), window, res,
            name(t["figure"], p + ("figure",), FIGURE_FORMATS, "figure") if "figure" in t
            else None,
            ck.integer(t["streamlines"], p + ("streamlines",), 0) if "streamlines" in t
            else DEFAULT_STREAMLINES))
    loads = []
    for t, p in entries("loads"):
        f_name, f_density, f_state = _fluid(ck, t, p)
        if f_name is None and f_density is None:
            (f_name, f_state), f_density = fluid, density
        if f_name is None and f_density is None:
            raise ck.error(p, "loads need a fluid: give 'fluid' (or 'density') here or in "
                           "[conditions]")
        v = (ck.number(t["speed"], p + ("speed",), 0.0, low_open=True) if "speed" in t
             else speed)
        if v is None:
            raise ck.error(p, "loads need a speed: give 'speed' here or in [conditions]")
        if "chord" in t and "unit" in t:
            raise ck.error(p + ("unit",), "give either 'chord' or 'unit', not both")
        l_unit, l_chord = _unit(ck, t, p), (
            ck.number(t["chord"], p + ("chord",), 0.0, low_open=True) if "chord" in t else None)
        if l_unit is None and l_chord is None:
            l_unit, l_chord = unit, chord
        about = ()
        if "about" in t:
            pts = t["about"]
            if not isinstance(pts, list) or not pts:
                raise ck.error(p + ("about",), "must be a list of [X, Y] points")
            about = tuple(ck.numbers(q, p + ("about", k), 2, "[X, Y]")
                          for k, q in enumerate(pts))
        loads.append(LoadsOutput(
            name(t["file"], p + ("file",), LOAD_WRITERS, "load file"), alpha(t, p),
            _section_of(ck, t, p, labels), v, f_name, f_density, l_chord, l_unit,
            ck.number(t["span"], p + ("span",), 0.0, low_open=True) if "span" in t else None,
            about, f_state))
        if Path(loads[-1].file).suffix.lower() == ".inp":
            companion = Path(loads[-1].file).stem + ".loads.csv"
            name(companion, p + ("file",), {".csv"}, "load file")
    return Outputs(tables, polar_figs, cp_figs, tuple(fields_), tuple(loads))


def case_head(text: str, path, checker=None):
    """The parts every case file shares: its TOML document (size, byte-order mark, nesting
    checked), a checker of its keys, the folder of relative paths, its title and output folder.

    Parameters
    ----------
    text : str
    path : str or Path
    checker : type, optional
        The :class:`_Checker` (sub)class whose key table applies (default the study's).

    Returns
    -------
    (doc, checker, base, title, output)
    """
    p = Path(path)
    name = p.name
    if len(text) > MAX_CASE_BYTES:
        raise InputError(f"{name}: {len(text)} characters, more than a case file may have "
                         f"({MAX_CASE_BYTES})")
    text = text.removeprefix("\ufeff")
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{name}: not valid TOML: {exc}") from None
    except (RecursionError, MemoryError):
        raise InputError(f"{name}: arrays or tables nested too deeply to be a case file") \
            from None
    ck = (checker or _Checker)(name, KeyLines(text))
    ck.keys(doc, "top", ())
    base = p.parent if str(p.parent) else Path(".")
    title = ck.text(doc["title"], ("title",)) if "title" in doc else p.stem
    if "output" in doc:
        out = ck.text(doc["output"], ("output",))
        output = Path(out) if os.path.isabs(out) else base / out
    else:
        output = base / f"{p.stem}_results"
    return doc, ck, base, title, output


def parse_case(text: str, path) -> Case:
    """Check a case file's text and resolve it (see the module docstring for the schema).

    Parameters
    ----------
    text : str
        The TOML text.
    path : str or Path
        The case file (names it in messages; its folder is the base of relative paths).

    Returns
    -------
    Case

    Raises
    ------
    InputError
        Invalid TOML (with tomllib's line and column), an unknown key (with the closest valid
        one), a missing or wrong value (with its line and key), a missing file.
    """
    p = Path(path)
    doc, ck, base, title, output = case_head(text, path, _Checker)
    settings, record, fluid, density, speed, unit, chord = _conditions(ck, doc)
    sections = _sections(ck, doc, base, settings)
    tasks = tuple(t for t, _ in sections)
    outputs = _outputs(ck, doc, [t.label for t in tasks], fluid, density, speed, unit, chord,
                       settings["operating"])
    import hashlib

    return Case(p, hashlib.sha256(text.encode("utf-8")).hexdigest(), title, output, tasks,
                outputs, record)


def load_case(path) -> Case:
    """Read and check a case file (see :func:`parse_case`).

    Raises
    ------
    InputError
        Missing or unreadable file, not UTF-8, or any problem :func:`parse_case` finds.
    """
    p = Path(path)
    data = read_input(p, "case file", limit=MAX_CASE_BYTES)
    try:
        text = data.decode("utf-8-sig")  # a byte-order mark some editors write is no content
    except UnicodeDecodeError as exc:
        raise InputError(f"{p}: not UTF-8 text (byte {exc.start}); TOML files are UTF-8") \
            from None
    case = parse_case(text, p)
    return Case(case.path, file_sha256(p), case.title, case.output, case.tasks, case.outputs,
                case.conditions)
