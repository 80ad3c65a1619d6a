"""Case files: the schema, the example case, and errors that name the key and the line."""

from __future__ import annotations

import json
import os
import textwrap
from pathlib import Path

import pytest

from panelflow.study.cases import KEYS, KeyLines, load_case, parse_angle_values, parse_case
from panelflow.errors import InputError

ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "geometries" / "tender_study.toml"


def _case(tmp_path, text, name="case.toml"):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text))
    return path


MINIMAL = """\
[[section]]
spec = "naca0012"

[conditions]
alpha = "0:4:2"
"""


# ------------------------------------------------------------------------------ the example
def test_example_case_resolves():
    case = load_case(EXAMPLE)
    assert case.labels == ("front foil", "naca2412", "naca4412", "naca0009", "naca0012",
                           "naca0015")
    alphas = case.tasks[0].alpha_deg
    assert alphas == tuple(float(a) for a in range(-4, 11))  # "-4:10:1", STOP included
    assert all(t.panels == 200 for t in case.tasks)
    front = case.tasks[0].bodies[0]
    assert front.is_file and Path(front.source) == (ROOT / "geometries" /
                                                    "tender_front_foil.dat")
    out = case.outputs
    assert out.tables == ("polars.csv",)
    assert [f.file for f in out.polar_figures] == ["polars.png"]
    assert out.cp_figures[0].alpha == 4.0
    assert out.cp_figures[0].sections == ("front foil", "naca2412", "naca4412")
    assert out.fields[0].section == "front foil" and out.fields[0].resolution == (161, 81)
    loads = out.loads[0]
    assert (loads.fluid, loads.speed, loads.chord, loads.span) == ("sea-water", 8.0, 0.25, 1.2)
    assert case.output == EXAMPLE.parent / "tender_study_results"


def test_settings_are_plain_data_without_absolute_paths():
    case = load_case(EXAMPLE)
    text = json.dumps(case.settings())  # JSON-serialisable
    assert str(ROOT) not in text
    sections = case.settings()["sections"]
    assert sections[0]["bodies"][0]["file"] == "tender_front_foil.dat"
    assert len(sections[0]["bodies"][0]["sha256"]) == 64


def test_relative_paths_from_the_case_folder(tmp_path, monkeypatch):
    (tmp_path / "outlines").mkdir()
    for name in ("b.dat", "a.dat"):
        (tmp_path / "outlines" / name).write_text(
            (ROOT / "geometries" / "tender_stabiliser.dat").read_text())
    path = _case(tmp_path, """\
        output = "results"
        [[section]]
        label = "set"
        file = "outlines/*.dat"
        [conditions]
        alpha = 0
        """)
    monkeypatch.chdir(ROOT)  # somewhere else: paths still come from the case file's folder
    case = load_case(path)
    assert case.labels == ("set: a", "set: b")  # sorted pattern members
    assert case.output == tmp_path / "results"


def test_defaults(tmp_path):
    case = load_case(_case(tmp_path, MINIMAL, "my_case.toml"))
    assert case.outputs.tables == ("polars.csv",)
    assert case.output == tmp_path / "my_case_results"
    t = case.tasks[0]
    assert (t.panels, t.reference_point, t.error_estimate, t.flap) == (200, None, True, None)
    assert t.alpha_deg == (0.0, 2.0, 4.0)


def test_bodies_transforms_and_flap(tmp_path):
    case = load_case(_case(tmp_path, """\
        [[section]]
        label = "with flap"
        flap = { hinge = 0.7, angle = 20, gap = 0.01 }
        [[section.body]]
        spec = "naca2412"
        [[section.body]]
        spec = "naca0012"
        name = "tab"
        scale = 0.2
        pitch = 5
        move = [1.1, -0.05]
        [conditions]
        alpha = [0, "2:4:2"]
        keep_points = true
        reference_point = [0.3, 0.0]
        """))
    (t,) = case.tasks
    assert t.label == "with flap"
    assert [b.source for b in t.bodies] == ["naca2412", "naca0012"]
    tab = t.bodies[1]
    assert (tab.name, tab.scale, tab.pitch, tab.move) == ("tab", 0.2, 5.0, (1.1, -0.05))
    assert (t.flap.hinge, t.flap.angle, t.flap.gap, t.flap.radius) == (0.7, 20.0, 0.01, 0.01)
    assert t.alpha_deg == (0.0, 2.0, 4.0)
    assert t.panels is None and t.reference_point == (0.3, 0.0)


def test_single_output_tables_and_arrays_both_work(tmp_path):
    case = load_case(_case(tmp_path, MINIMAL + """\
        [outputs]
        table = ["p.csv", "p.json"]
        [outputs.polar_figure]
        file = "p.png"
        [[outputs.cp_figure]]
        file = "cp0.png"
        alpha = 0
        [[outputs.cp_figure]]
        file = "cp2.svg"
        alpha = 2
        """))
    assert case.outputs.tables == ("p.csv", "p.json")
    assert [f.file for f in case.outputs.polar_figures] == ["p.png"]
    assert [f.alpha for f in case.outputs.cp_figures] == [0.0, 2.0]


# ------------------------------------------------------------------------------ key lines
KEYLINE_TEXT = """\
title = "x # not a comment = not a key"
[[section]]
spec = "naca0012"   # a comment with key = value
scale = 2
[[section]]
label = 'two'
flap = { hinge = 0.7, angle = 10 }
[[section.body]]
spec = "a"
[[section.body]]
file = "b.dat"
[conditions]
alpha = [
  0,
  "2:4:2",   # comment
]
[outputs]
loads = [{ file = "a.json" },
         { file = "b.json", alpha = 3 }]
"""


@pytest.mark.parametrize("path, line", [
    (("title",), 1),
    (("section",), 2),
    (("section", 0), 2),
    (("section", 0, "spec"), 3),
    (("section", 0, "scale"), 4),
    (("section", 1), 5),
    (("section", 1, "label"), 6),
    (("section", 1, "flap", "angle"), 7),
    (("section", 1, "body", 0, "spec"), 9),
    (("section", 1, "body", 1), 10),
    (("section", 1, "body", 1, "file"), 11),
    (("conditions",), 12),
    (("conditions", "alpha"), 13),
    (("conditions", "alpha", 1), 15),
    (("outputs", "loads", 0, "file"), 18),
    (("outputs", "loads", 1, "alpha"), 19),
    (("section", 0, "missing"), 2),  # falls back to the nearest recorded parent
    (("nowhere",), None),
])
def test_key_lines(path, line):
    assert KeyLines(textwrap.dedent(KEYLINE_TEXT)).line(path) == line


# ------------------------------------------------------------------------------ errors
ERRORS = [
    # (case text, line, key shown, message fragment)
    (MINIMAL.replace('spec = "naca0012"', 'spec = "naca0012"\npich = 2'), 3, "section[1].pich",
     "unknown key 'pich'; did you mean 'pitch'?"),
    (MINIMAL.replace("alpha =", "alpah ="), 5, "conditions.alpah",
     "did you mean 'alpha'?"),
    (MINIMAL.replace("[conditions]", "[condition]"), 4, "condition",
     "did you mean 'conditions'?"),
    (MINIMAL + "wobble = 1\n", 6, "conditions.wobble", "valid keys here: alpha, cl, panels"),
    ("[[section]]\nspec = \"naca0012\"\n[[section]]\nspec = \"naca2412\"\nscale = -1\n"
     "[conditions]\nalpha = 0\n", 5, "section[2].scale", "must be above 0, got -1"),
    ("[[section]]\nspec = \"naca0012\"\n\n[conditions]\npanels = 100\n", 4, "conditions",
     "missing key 'alpha'"),
    (MINIMAL.replace('"0:4:2"', '"0:4:-2"'), 5, "conditions.alpha",
     "STEP must be non-zero and go from START to STOP"),
    (MINIMAL.replace('"0:4:2"', '[\n  0,\n  "x",\n]'), 7, "conditions.alpha[2]",
     "x: not a number"),
    (MINIMAL.replace("naca0012", "nacaXY"), 2, "section[1].spec", "4 or 5 digits"),
    (MINIMAL.replace("naca0012", "wing.dat"), 2, "section[1].spec", "not a section spec"),
    (MINIMAL.replace('spec = "naca0012"', 'file = "nowhere.dat"'), 2, "section[1].file",
     "nowhere.dat: no such file"),
    (MINIMAL.replace('spec = "naca0012"', 'spec = "naca0012"\nfile = "x.dat"'), 3,
     "section[1].file", "give only one of 'spec' or 'file' or 'body'"),
    ("[[section]]\nlabel = \"x\"\n[conditions]\nalpha = 0\n", 1, "section[1]",
     "give the geometry with"),
    (MINIMAL.replace("naca0012", "naca00{12..18:0}"), 2, "section[1].spec",
     "STEP must not be zero"),
    (MINIMAL + "panels = 4\n", 6, "conditions.panels", "at least 16"),
    (MINIMAL + "panels = 100000\n", 6, "conditions.panels", "at most 4000"),
    (MINIMAL + "panels = 100.5\n", 6, "conditions.panels", "whole number"),
    (MINIMAL + "error_estimate = \"no\"\n", 6, "conditions.error_estimate", "true or false"),
    (MINIMAL + "fluid = \"lava\"\n", 6, "conditions.fluid", "unknown fluid 'lava'"),
    (MINIMAL + "fluid = \"air\"\ndepth = 0.5\n", 7, "conditions.depth",
     "needs fluid = \"sea-water\""),
    (MINIMAL + "mach = 1.2\n", 6, "conditions.mach", "must be below 1"),
    (MINIMAL + "mach = 0.3\nmach_rule = \"karman\"\n", 7, "conditions.mach_rule",
     "did you mean 'karman-tsien'?"),
    (MINIMAL + "[outputs]\ntable = \"out/p.csv\"\n", 7, "outputs.table", "without folders"),
    (MINIMAL + "[outputs]\ntable = \"p.xlsx\"\n", 7, "outputs.table",
     "unknown table format .xlsx"),
    (MINIMAL + "[outputs]\ntable = [\"p.csv\", \"P.csv\"]\n", 7, "outputs.table[2]",
     "already an output"),
    (MINIMAL + "[outputs]\ntable = \"manifest.json\"\n", 7, "outputs.table", "run manifest"),
    (MINIMAL + "[[outputs.cp_figure]]\nfile = \"cp.png\"\nalpha = 2\nsections = [\"naca0021\"]\n",
     9, "outputs.cp_figure[1].sections[1]", "no section labelled 'naca0021'; did you mean "
     "'naca0012'?"),
    (MINIMAL + "[[outputs.cp_figure]]\nfile = \"cp.png\"\n", 6, "outputs.cp_figure[1]",
     "missing key 'alpha'"),
    (MINIMAL + "[[outputs.polar_figure]]\nfile = \"p.bmp\"\n", 7,
     "outputs.polar_figure[1].file", "unknown figure format .bmp"),
    ("[[section]]\nspec = \"naca0012\"\n[[section]]\nspec = \"naca2412\"\n[conditions]\n"
     "alpha = 0\n[[outputs.field]]\nfile = \"f.vtu\"\nalpha = 0\n", 7, "outputs.field[1]",
     "missing key 'section'"),
    (MINIMAL + "[[outputs.field]]\nfile = \"f.vtu\"\nalpha = 0\nwindow = [1, 0, 0, 1]\n", 9,
     "outputs.field[1].window", "X0 < X1"),
    (MINIMAL + "[[outputs.loads]]\nfile = \"l.json\"\nalpha = 0\n", 6, "outputs.loads[1]",
     "loads need a fluid"),
    (MINIMAL + "fluid = \"sea-water\"\n[[outputs.loads]]\nfile = \"l.json\"\nalpha = 0\n", 7,
     "outputs.loads[1]", "loads need a speed"),
    (MINIMAL + "fluid = \"sea-water\"\nspeed = 8\n[[outputs.loads]]\nfile = \"l.json\"\n"
     "alpha = 0\nunit = \"furlong\"\n", 11, "outputs.loads[1].unit", "unknown unit"),
    ("[[section]]\nspec = \"naca0012\"\n[[section]]\nspec = \"naca0012\"\n[conditions]\n"
     "alpha = 0\n", 4, "section[2].spec", "label 'naca0012' is used twice (also at line 2)"),
    ("[[section]]\nflap = { hinge = 0.7 }\nspec = \"naca2412\"\n[conditions]\nalpha = 0\n", 2,
     "section[1].flap", "missing key 'angle'"),
    ("[[section]]\nflap = { hinge = 0.7, angel = 5 }\nspec = \"naca2412\"\n[conditions]\n"
     "alpha = 0\n", 2, "section[1].flap.angel", "did you mean 'angle'?"),
    ("[[section]]\n[[section.body]]\nspec = \"naca00{09..12:3}\"\n[conditions]\nalpha = 0\n", 3,
     "section[1].body[1].spec", "expands to 2 members"),
    ("[[section]]\nscale = 2\n[[section.body]]\nspec = \"naca0012\"\n[conditions]\nalpha = 0\n",
     2, "section[1].scale", "give 'scale' in each [[section.body]]"),
    ("section = 3\n[conditions]\nalpha = 0\n", 1, "section", "must be [[section]] tables"),
    ("[conditions]\nalpha = 0\n", None, "(top level)", "no [[section]]"),
    (MINIMAL.replace("[conditions]\nalpha = \"0:4:2\"\n", ""), None, "(top level)",
     "no [conditions] table"),
]


@pytest.mark.parametrize("text, line, key, fragment", ERRORS)
def test_errors_name_key_and_line(tmp_path, text, line, key, fragment):
    path = _case(tmp_path, text)
    with pytest.raises(InputError) as info:
        load_case(path)
    msg = str(info.value)
    where = f"case.toml, line {line}: " if line else "case.toml: "
    assert msg.startswith(where + key + ": "), msg
    assert fragment in msg, msg


def test_invalid_toml_gives_tomllib_line(tmp_path):
    path = _case(tmp_path, MINIMAL + "panels = = 3\n")
    with pytest.raises(InputError, match=r"case.toml: not valid TOML: .*line 6"):
        load_case(path)


@pytest.mark.parametrize("data, fragment", [
    (None, "no such file"),
    (b"\xff\xfe[", "not UTF-8"),
])
def test_unreadable_case_files(tmp_path, data, fragment):
    path = tmp_path / "c.toml"
    if data is not None:
        path.write_bytes(data)
    with pytest.raises(InputError, match=fragment):
        load_case(path)


def test_every_documented_key_is_in_the_module_docstring():
    import panelflow.study.cases as cases

    doc = cases.__doc__
    for table, keys in KEYS.items():
        for key in keys:
            assert f"``{key}``" in doc or f"[{key}]" in doc or f"[[{key}]]" in doc or \
                f"outputs.{key}" in doc, (table, key)


@pytest.mark.parametrize("value, angles", [
    (4, [4.0]),
    ("-2:2:2", [-2.0, 0.0, 2.0]),
    ("0, 3", [0.0, 3.0]),
    ([1, "2:3:0.5"], [1.0, 2.0, 2.5, 3.0]),
])
def test_angle_values(value, angles):
    assert parse_angle_values(value) == angles


def test_the_case_file_itself_is_hashed(tmp_path):
    import hashlib

    path = _case(tmp_path, MINIMAL)
    case = load_case(path)
    assert case.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert case.input_files() == [path]
    assert os.path.isabs(case.tasks[0].bodies[0].source) is False  # a spec stays a spec


def test_parse_case_from_text(tmp_path):
    case = parse_case(MINIMAL, tmp_path / "virtual.toml")
    assert case.labels == ("naca0012",)
