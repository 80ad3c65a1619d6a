"""Design case files: the section, the job and the outputs of ``panelflow optimise`` in TOML.

The file is checked completely before anything is solved; every error names the file, the line
and the key (the line finder and checks of :mod:`panelflow.study.cases`), and an unknown key is
refused with the closest valid one. Relative paths are taken from the case file's folder.

Schema
------
Top level
    ``title``       text, optional.
    ``output``      folder for the results, relative to the case file; default
                    ``CASE_results`` beside it (``panelflow optimise -o DIR`` overrides).

``[section]``       the start: ``file`` (a coordinate table) or ``spec`` (``naca2412``);
                    ``name`` of the optimised section (default: the start's, ", optimised").

``[objective]``
    ``kind``        ``"inception-speed"``: the highest cavitation-inception speed at ``cl``;
                    ``"widest-range"``: the widest range free of cavitation, ``measure`` =
                    ``"angle"`` (default) or ``"lift"``, optionally containing ``cl``, with
                    ``checks`` angles across it inside the optimisation (default 5);
                    ``"least-drag"``: the least viscous drag at ``cl`` and ``reynolds``
                    (``critical_amplification`` of the transition criterion, default 9;
                    ``trip_upper``, ``trip_lower``: forced transition at these x/c).

``[conditions]``    ``depth`` (m), ``fluid`` (``sea-water`` or ``fresh-water``), ``speed``
                    (m/s; needed by ``widest-range``), ``margin`` (share of the cavitation
                    number kept in hand, default 0). Needed by the cavitation objectives.

``[constraints]``   all optional:
    ``thickness``   a list of ``{ at = X, min = T, max = T }`` or ``{ from = X0, to = X1,
                    min = T, max = T }`` (chords; at least one of min and max);
    ``keep_thickness``  ``{ at = [X, ...], within = F }``: the start's own thickness at these
                    stations, to within a fraction F (0 holds it exactly);
    ``area``        a number (the least area, chords squared) or ``{ min = A, max = A }``;
    ``moment``      ``{ min = CM, max = CM, cl = C }``: pitching moment about the quarter chord
                    at a lift (default the objective's ``cl``);
    ``leading_edge_radius``  a number (least, chords) or ``{ min, max }``;
    ``trailing_edge_angle``  a number (least, degrees) or ``{ min, max }``.

``[design]``        all optional: ``functions`` (shape functions, default 12), ``panels``
                    (design model, default 200; the check uses twice as many), ``starts``
                    (default 1), ``seed`` (default 0), ``spread`` (chords, default 0.004),
                    ``iterations`` (per stage, default 100).

``[outputs]``       file names inside the output folder: ``section`` (the optimised
                    section's coordinate table, default ``SECTION_optimised.dat``), ``table``
                    (before/after table, ``.csv`` or ``.json``; default ``before_after.csv``),
                    ``cp_figure`` and ``polar_figure`` (``.png``, ``.svg``, ``.pdf``; optional).
                    A ``manifest.json`` is always written.
"""

from __future__ import annotations

import difflib
import hashlib
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from panelflow.design.inverse import ThicknessLimit
from panelflow.design.job import (Cavitation, InceptionSpeed, Job, LeastDrag, Limits,
                                  MomentLimit, WidestRange)
from panelflow.errors import InputError, PanelflowError
from panelflow.files import read_input
from panelflow.study.cases import MAX_CASE_BYTES, _Checker, _kind, case_head
from panelflow.study.runner import file_sha256

__all__ = ["DesignCase", "load_design_case", "parse_design_case", "DESIGN_KEYS",
           "OBJECTIVE_KINDS"]

OBJECTIVE_KINDS = ("inception-speed", "widest-range", "least-drag")
TABLE_FORMATS = (".csv", ".json")
DESIGN_KEYS = {
    "top": ("title", "output", "section", "objective", "conditions", "constraints", "design",
            "outputs"),
    "section": ("file", "spec", "name"),
    "objective": ("kind", "cl", "measure", "checks", "reynolds", "critical_amplification",
                  "trip_upper", "trip_lower"),
    "conditions": ("depth", "fluid", "speed", "margin"),
    "constraints": ("thickness", "keep_thickness", "area", "moment", "leading_edge_radius",
                    "trailing_edge_angle"),
    "thickness": ("at", "from", "to", "min", "max"),
    "keep_thickness": ("at", "within"),
    "limits": ("min", "max"),
    "moment": ("min", "max", "cl"),
    "design": ("functions", "panels", "starts", "seed", "spread", "iterations"),
    "outputs": ("section", "table", "cp_figure", "polar_figure"),
}
# which keys belong to which objective (others are refused with the reason)
_OBJECTIVE_KEYS = {"inception-speed": {"kind", "cl"},
                   "widest-range": {"kind", "cl", "measure", "checks"},
                   "least-drag": {"kind", "cl", "reynolds", "critical_amplification",
                                  "trip_upper", "trip_lower"}}


class _DesignChecker(_Checker):
    """The case checker with the design schema's keys."""

    known_keys = DESIGN_KEYS


@dataclass(frozen=True)
class DesignCase:
    """A checked design case file.

    Attributes
    ----------
    path : Path
    sha256 : str
    title : str
    output : Path
        Default output folder.
    source : str
        The start section: a file path (absolute) or a spec.
    is_file : bool
    name : str
        Name of the optimised section.
    job : Job
    outputs : dict
        ``section``, ``table``, ``cp_figure``, ``polar_figure`` (file names or None).
    source_sha256 : str or None
        SHA-256 of the start's file when the case was read.
    """

    path: Path
    sha256: str
    title: str
    output: Path
    source: str
    is_file: bool
    name: str
    job: Job
    outputs: dict
    source_sha256: str | None = None

    def start(self):
        """The start outline (read again, checked against the hash taken at parse time)."""
        from panelflow.geometry.readers import load_outlines

        if self.is_file and self.source_sha256 is not None \
                and file_sha256(self.source) != self.source_sha256:
            raise InputError(f"{self.source}: the file changed since the case was read")
        outlines = load_outlines(self.source)
        if len(outlines) != 1:
            raise InputError(f"{self.source}: the start section must be one body, found "
                             f"{len(outlines)}")
        return outlines[0]

    def input_files(self) -> list:
        return [self.path] + ([Path(self.source)] if self.is_file else [])

    def settings(self) -> dict:
        base = self.path.parent
        src = (Path(os.path.relpath(self.source, base)).as_posix() if self.is_file
               else self.source)
        return {"case_file": self.path.name, "title": self.title,
                "section": {"file" if self.is_file else "spec": src, "name": self.name},
                "job": self.job.record(), "outputs": dict(self.outputs)}


def _limits(ck: _DesignChecker, value, path, low: float, high: float) -> Limits:
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return Limits(minimum=ck.number(value, path, low, high))
    t = ck.table(value, path, "a number (the least value) or a table { min = ..., max = ... }")
    ck.keys(t, "limits", path)
    lo = ck.number(t["min"], path + ("min",), low, high) if "min" in t else None
    hi = ck.number(t["max"], path + ("max",), low, high) if "max" in t else None
    try:
        return Limits(lo, hi)
    except InputError as exc:
        raise ck.error(path, str(exc)) from None


def _thickness(ck: _DesignChecker, value, path) -> list:
    if not isinstance(value, list) or not value:
        raise ck.error(path, f"must be a list of tables {{ at = X, min = T }}, got {_kind(value)}")
    out = []
    for k, item in enumerate(value):
        p = path + (k,)
        t = ck.table(item, p, "a table { at = X, min = T } or { from = X0, to = X1, min = T }")
        ck.keys(t, "thickness", p)
        if "at" in t and ("from" in t or "to" in t):
            raise ck.error(p + ("at",), "give either 'at' or 'from' and 'to'")
        if "at" in t:
            a = b = ck.number(t["at"], p + ("at",), 0.0, 1.0, True, True)
        elif "from" in t and "to" in t:
            a = ck.number(t["from"], p + ("from",), 0.0, 1.0, True, True)
            b = ck.number(t["to"], p + ("to",), 0.0, 1.0, True, True)
        else:
            raise ck.error(p, "missing key 'at' (a station) or 'from' and 'to' (a range)")
        lo = ck.number(t["min"], p + ("min",), 0.0, 1.0, True) if "min" in t else None
        hi = ck.number(t["max"], p + ("max",), 0.0, 1.0, True) if "max" in t else None
        try:
            out.append(ThicknessLimit(a, b, lo, hi))
        except InputError as exc:
            raise ck.error(p, str(exc)) from None
    return out


def _keep_thickness(ck: _DesignChecker, value, path, start) -> list:
    from panelflow.geometry.measure import decompose

    t = ck.table(value, path, "a table { at = [X, ...], within = F }")
    ck.keys(t, "keep_thickness", path)
    if "at" not in t:
        raise ck.error(path, "missing key 'at' (a list of stations)")
    raw = t["at"]
    if not isinstance(raw, list) or not raw:
        raise ck.error(path + ("at",), f"must be a list of stations, got {_kind(raw)}")
    xs = [ck.number(v, path + ("at", k), 0.0, 1.0, True, True) for k, v in enumerate(raw)]
    within = ck.number(t.get("within", 0.0), path + ("within",), 0.0, 0.5)
    try:
        shape = decompose(start)
    except PanelflowError as exc:
        raise ck.error(path, f"the start cannot be measured: {exc}") from None
    thick = 2.0 * shape.at(shape.half_thickness, np.array(xs))
    return [ThicknessLimit(x, x, float(tk) * (1.0 - within), float(tk) * (1.0 + within))
            for x, tk in zip(xs, thick)]


def _objective(ck: _DesignChecker, doc: dict):
    path = ("objective",)
    if "objective" not in doc:
        raise ck.error((), "no [objective] table: give kind = \"inception-speed\", "
                       "\"widest-range\" or \"least-drag\"")
    o = ck.table(doc["objective"], path)
    ck.keys(o, "objective", path)
    if "kind" not in o:
        raise ck.error(path, f"missing key 'kind' (one of {', '.join(OBJECTIVE_KINDS)})")
    kind = ck.text(o["kind"], path + ("kind",))
    if kind not in OBJECTIVE_KINDS:
        close = difflib.get_close_matches(kind, OBJECTIVE_KINDS, n=1)
        raise ck.error(path + ("kind",), f"unknown objective {kind!r}; use one of "
                       f"{', '.join(OBJECTIVE_KINDS)}" + (f" (did you mean {close[0]!r}?)"
                                                          if close else ""))
    for key in o:
        if key not in _OBJECTIVE_KEYS[kind]:
            raise ck.error(path + (key,), f"{key!r} does not belong to the {kind} objective "
                           f"(its keys: {', '.join(sorted(_OBJECTIVE_KEYS[kind]))})")
    cl = ck.number(o["cl"], path + ("cl",), -3.0, 3.0) if "cl" in o else None
    try:
        if kind == "inception-speed":
            if cl is None:
                raise ck.error(path, "missing key 'cl' (the design lift)")
            return InceptionSpeed(cl)
        if kind == "widest-range":
            measure = ck.text(o["measure"], path + ("measure",)) if "measure" in o else "angle"
            if measure not in ("angle", "lift"):
                raise ck.error(path + ("measure",), f"unknown measure {measure!r}; use "
                               "\"angle\" or \"lift\"")
            checks = (ck.integer(o["checks"], path + ("checks",), 2) if "checks" in o else 5)
            return WidestRange(measure, cl, checks)
        if cl is None:
            raise ck.error(path, "missing key 'cl' (the design lift)")
        if "reynolds" not in o:
            raise ck.error(path, "missing key 'reynolds' (Reynolds number on the chord)")
        re = ck.number(o["reynolds"], path + ("reynolds",), 1e4, 1e9)
        n = (ck.number(o["critical_amplification"], path + ("critical_amplification",), 1.0,
                       20.0) if "critical_amplification" in o else 9.0)
        trips = [ck.number(o[k], path + (k,), 0.0, 1.0) if k in o else None
                 for k in ("trip_upper", "trip_lower")]
        return LeastDrag(cl, re, n, *trips)
    except InputError as exc:
        if str(exc).startswith(ck.name):
            raise
        raise ck.error(path, str(exc)) from None


def _conditions(ck: _DesignChecker, doc: dict, objective):
    path = ("conditions",)
    needs = isinstance(objective, (InceptionSpeed, WidestRange))
    if "conditions" not in doc:
        if needs:
            raise ck.error((), "no [conditions] table: the cavitation objectives need depth, "
                           "fluid and (for a range) speed")
        return None
    c = ck.table(doc["conditions"], path)
    ck.keys(c, "conditions", path)
    if "depth" not in c:
        raise ck.error(path, "missing key 'depth' (m below the free surface)")
    depth = ck.number(c["depth"], path + ("depth",), 0.0)
    fluid = ck.text(c["fluid"], path + ("fluid",)) if "fluid" in c else "sea-water"
    speed = (ck.number(c["speed"], path + ("speed",), 0.0, low_open=True) if "speed" in c
             else None)
    margin = ck.number(c["margin"], path + ("margin",), 0.0, 0.9) if "margin" in c else 0.0
    if isinstance(objective, WidestRange) and speed is None:
        raise ck.error(path, "missing key 'speed': the cavitation-free range depends on it")
    try:
        return Cavitation(depth, fluid, speed, margin)
    except InputError as exc:
        raise ck.error(path + ("fluid",), str(exc)) from None


def _constraints(ck: _DesignChecker, doc: dict, start) -> dict:
    path = ("constraints",)
    if "constraints" not in doc:
        return {}
    c = ck.table(doc["constraints"], path)
    ck.keys(c, "constraints", path)
    out = {"thickness": []}
    if "thickness" in c:
        out["thickness"] += _thickness(ck, c["thickness"], path + ("thickness",))
    if "keep_thickness" in c:
        out["thickness"] += _keep_thickness(ck, c["keep_thickness"], path + ("keep_thickness",),
                                            start)
    if "area" in c:
        out["area"] = _limits(ck, c["area"], path + ("area",), 0.0, 0.5)
    if "leading_edge_radius" in c:
        out["leading_edge_radius"] = _limits(ck, c["leading_edge_radius"],
                                             path + ("leading_edge_radius",), 0.0, 0.2)
    if "trailing_edge_angle" in c:
        out["trailing_edge_angle"] = _limits(ck, c["trailing_edge_angle"],
                                             path + ("trailing_edge_angle",), 0.0, 90.0)
    if "moment" in c:
        p = path + ("moment",)
        t = ck.table(c["moment"], p, "a table { min = CM, max = CM, cl = C }")
        ck.keys(t, "moment", p)
        try:
            out["moment"] = MomentLimit(
                ck.number(t["min"], p + ("min",), -2.0, 2.0) if "min" in t else None,
                ck.number(t["max"], p + ("max",), -2.0, 2.0) if "max" in t else None,
                ck.number(t["cl"], p + ("cl",), -3.0, 3.0) if "cl" in t else None)
        except InputError as exc:
            raise ck.error(p, str(exc)) from None
    out["thickness"] = tuple(out["thickness"])
    return out


def _design(ck: _DesignChecker, doc: dict) -> dict:
    path = ("design",)
    if "design" not in doc:
        return {}
    d = ck.table(doc["design"], path)
    ck.keys(d, "design", path)
    out = {}
    for key, low, high in (("functions", 4, 40), ("panels", 40, 1000), ("starts", 1, 64),
                           ("iterations", 1, 1000)):
        if key in d:
            v = ck.integer(d[key], path + (key,), low)
            if v > high:
                raise ck.error(path + (key,), f"must be at most {high}, got {v}")
            out["max_iterations" if key == "iterations" else key] = v
    if "seed" in d:
        out["seed"] = ck.integer(d["seed"], path + ("seed",), 0)
    if "spread" in d:
        out["spread"] = ck.number(d["spread"], path + ("spread",), 0.0, 0.05)
    return out


def _outputs(ck: _DesignChecker, doc: dict, stem: str) -> dict:
    from panelflow.output.figures import FIGURE_FORMATS

    path = ("outputs",)
    o = ck.table(doc["outputs"], path) if "outputs" in doc else {}
    if o:
        ck.keys(o, "outputs", path)
    out = {"section": f"{stem}_optimised.dat", "table": "before_after.csv", "cp_figure": None,
           "polar_figure": None}
    formats = {"section": None, "table": TABLE_FORMATS, "cp_figure": FIGURE_FORMATS,
               "polar_figure": FIGURE_FORMATS}
    seen = {"manifest.json": None}
    for key in out:
        if key not in o:
            if out[key] is not None:
                seen[out[key].lower()] = None
            continue
        name = ck.text(o[key], path + (key,))
        if "/" in name or "\\" in name or name in (".", "..") or os.path.isabs(name):
            raise ck.error(path + (key,), f"{name!r}: give a file name inside the output "
                           "folder, without folders")
        ext = Path(name).suffix.lower()
        if formats[key] is not None and ext not in formats[key]:
            raise ck.error(path + (key,), f"{name!r}: use one of {', '.join(formats[key])}")
        if name.lower() in seen:
            raise ck.error(path + (key,), f"{name!r} is already an output")
        seen[name.lower()] = path + (key,)
        out[key] = name
    return out


def parse_design_case(text: str, path) -> DesignCase:
    """Check a design case file's text (see the module docstring for the schema).

    Raises
    ------
    InputError
        Invalid TOML, an unknown key (with the closest valid one), a missing or wrong value
        (with its line and key), a missing file.
    """
    from panelflow.geometry.readers import load_outlines
    from panelflow.geometry.specs import parse_spec

    p = Path(path)
    name = p.name
    doc, ck, base, title, output = case_head(text, path, _DesignChecker)
    if "section" not in doc:
        raise ck.error((), "no [section] table: give the start section's file or spec")
    sec = ck.table(doc["section"], ("section",))
    ck.keys(sec, "section", ("section",))
    given = [k for k in ("file", "spec") if k in sec]
    if len(given) != 1:
        raise ck.error(("section",) + ((given[1],) if len(given) > 1 else ()),
                       "give exactly one of 'file' and 'spec'")
    key = given[0]
    text_value = ck.text(sec[key], ("section", key))
    try:
        if key == "file":
            full = text_value if os.path.isabs(text_value) else str(base / text_value)
            if not os.path.isfile(full):
                raise ck.error(("section", "file"), f"{text_value}: no such file")
            source = os.path.abspath(full)
            outlines = load_outlines(source)
        else:
            source = text_value
            got = parse_spec(source)
            if got is None:
                raise ck.error(("section", "spec"), f"{source!r} is not a section spec")
            outlines = [got]
    except InputError as exc:
        if str(exc).startswith(name):
            raise
        raise ck.error(("section", key), str(exc)) from None
    except PanelflowError as exc:
        raise ck.error(("section", key), str(exc)) from None
    if len(outlines) != 1:
        raise ck.error(("section", key), f"the start must be one body, found {len(outlines)}")
    start = outlines[0]
    stem = Path(source).stem if key == "file" else source
    sname = ck.text(sec["name"], ("section", "name")) if "name" in sec else \
        f"{start.name}, optimised"
    objective = _objective(ck, doc)
    cavitation = _conditions(ck, doc, objective)
    constraints = _constraints(ck, doc, start)
    design = _design(ck, doc)
    try:
        job = Job(objective, cavitation, **constraints, **design)
    except InputError as exc:
        raise ck.error((), str(exc)) from None
    outputs = _outputs(ck, doc, stem)
    return DesignCase(p, hashlib.sha256(text.encode("utf-8")).hexdigest(), title, output,
                      source, key == "file", sname, job, outputs,
                      file_sha256(source) if key == "file" else None)


def load_design_case(path) -> DesignCase:
    """Read and check a design case file (see :func:`parse_design_case`)."""
    p = Path(path)
    data = read_input(p, "case file", limit=MAX_CASE_BYTES)
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"{p}: not UTF-8 text (byte {exc.start}); TOML files are UTF-8") \
            from None
    case = parse_design_case(text, p)
    return DesignCase(case.path, file_sha256(p), case.title, case.output, case.source,
                      case.is_file, case.name, case.job, case.outputs, case.source_sha256)
