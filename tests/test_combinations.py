"""Every operating condition against every output: it works, or it is refused clearly.

One cell per (condition, output) pair of the table in DEVELOPERS.md ("Conditions and
outputs"), which this module also reads: the table and the behaviour cannot drift apart. A cell
that works is checked for what the condition adds to that output (the margins in the files, the
corrected pressures in the loads, the masked far side of a plane in the field); a refused cell
for a one-line error that gives the reason, a non-zero exit and no file written.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
from conftest import run

import panelflow as pf
from panelflow.analysis.problem import OUTPUTS, OperatingPoint, check_output
from panelflow.errors import InputError

ROOT = Path(__file__).resolve().parent.parent
QUICK = ("--panels", "60")

# condition -> its command-line options (the angles are added per output unless the condition
# gives a target lift)
CONDITIONS = {
    "none": (),
    "flap": ("--flap", "0.75,10"),
    "target lift": ("--cl", "0.5"),
    "Mach number": ("--mach", "0.4"),
    "cavitation": ("--depth", "0.5", "--fluid", "sea-water", "--speed", "9"),
    "wall": ("--ground", "0.5"),
    "free surface": ("--free-surface", "0.5"),
    "fluid and speed": ("--fluid", "sea-water", "--speed", "9"),
    "length scale": ("--chord", "0.25"),
    "Reynolds number": ("--reynolds", "2e6"),
}

# (condition, output) -> a fragment of the refusal; cells not listed work
REFUSED = {
    ("Mach number", "field"): "incompressible",
    ("cavitation", "field"): "running depth",
    ("fluid and speed", "solve"): "running depth",
    ("fluid and speed", "field"): "running depth",
    ("fluid and speed", "compare"): "running depth",
    ("fluid and speed", "figures"): "running depth",
    ("length scale", "solve"): "serves the loads",
    ("length scale", "field"): "serves the loads",
    ("length scale", "compare"): "serves the loads",
    ("length scale", "figures"): "serves the loads",
    ("Reynolds number", "field"): "inviscid solution's",
}

# what a working condition adds to the files: JSON keys per angle / CSV columns
MARGIN_COLUMNS = {
    "Mach number": ("cl_mach", "cm_mach", "cp_min_mach", "mach_critical"),
    "cavitation": ("inception_speed", "cavitation_number", "cavitation_margin"),
    "wall": ("plane_clearance", "cl_free_space", "cm_free_space"),
    "free surface": ("plane_clearance", "cl_free_space", "cm_free_space"),
    "Reynolds number": ("cl_viscous", "cd", "cd_friction", "cd_form", "lift_to_drag",
                        "transition_upper", "transition_lower", "viscous_converged"),
}
MARGIN_RECORDS = {"Mach number": "compressibility", "cavitation": "cavitation",
                  "wall": "plane", "free surface": "plane", "flap": "flap",
                  "Reynolds number": "viscous"}


def _csv_header(path) -> list:
    return next(ln for ln in Path(path).read_text().splitlines()
                if not ln.startswith("#")).split(",")


def _angles(condition, several=True):
    if condition == "target lift":
        return ()
    return ("--alpha", "0", "4") if several else ("--alpha", "4")


def _refused(capsys, argv, fragment, folder):
    code, out, err = run(capsys, *argv)
    lines = err.strip().splitlines()
    assert code == 1, err
    assert len(lines) == 1 and lines[0].startswith("panelflow: error:"), err
    assert fragment in lines[0], lines[0]
    assert out == ""
    assert not any(folder.iterdir())  # refused before anything was written


def _check_solve(capsys, condition, folder):
    argv = ("solve", "naca2412", *_angles(condition), *QUICK, *CONDITIONS[condition],
            "-o", folder / "r.json", "-o", folder / "r.csv")
    code, out, err = run(capsys, *argv)
    assert code == 0, err
    rec = json.loads((folder / "r.json").read_text())
    header = _csv_header(folder / "r.csv")
    for key in MARGIN_COLUMNS.get(condition, ()):
        assert all(key in r for r in rec["results"]), key
        assert key in header, key
    if condition in MARGIN_RECORDS:
        assert MARGIN_RECORDS[condition] in rec
    if condition == "target lift":
        assert len(rec["results"]) == 1
        # the angle found gives the target to the solver's round-off
        assert rec["results"][0]["cl"] == pytest.approx(0.5, abs=1e-9)
    assert rec["conditions"]["panels"] == 60


def _check_figures(capsys, condition, folder):
    for argv in (("solve", "naca2412", *_angles(condition), *QUICK, *CONDITIONS[condition],
                  "--plot", folder / "cp.png"),
                 ("compare", "naca2412", "naca0012", *_angles(condition), *QUICK,
                  *CONDITIONS[condition], "--plot", folder / "polars.png")):
        code, out, err = run(capsys, *argv)
        assert code == 0, err
    for name in ("cp.png", "polars.png"):
        assert (folder / name).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def _check_field(capsys, condition, folder):
    out_file = folder / "f.csv"
    code, out, err = run(capsys, "field", "naca2412", *_angles(condition, several=False),
                         *QUICK, *CONDITIONS[condition], "--resolution", "21,11",
                         "-o", out_file)
    assert code == 0, err
    rows = [ln.split(",") for ln in out_file.read_text().splitlines()
            if ln and not ln.startswith("#")][1:]
    inside = np.array([r[5].strip() == "1" for r in rows])
    assert 0 < inside.sum() < len(rows)
    if condition in ("wall", "free surface"):
        assert "points beyond the plane are masked" in out


def _check_loads(capsys, condition, folder):
    base = ("--fluid", "sea-water", "--speed", "8")
    code, out, err = run(capsys, "loads", "naca2412", *_angles(condition, several=False),
                         *QUICK, *base, *CONDITIONS[condition], "-o", folder / "l.json")
    assert code == 0, err
    assert "within tolerance" in out
    rec = json.loads((folder / "l.json").read_text())
    assert rec["equilibrium"]["ok"]
    if condition == "Mach number":
        assert any("corrected to Mach 0.4 by the karman-tsien rule" in n for n in rec["notes"])
        assert rec["analysis"]["compressibility"]["mach"] == 0.4
    if condition == "cavitation":
        assert any("0.5 m depth" in n for n in rec["notes"])
    if condition in ("wall", "free surface"):
        assert rec["analysis"]["plane"]["distance"] == 0.5
    if condition == "length scale":
        assert rec["units"]["length"] == "m" and rec["bodies"][0]["chord"] == pytest.approx(0.25)
    if condition == "Reynolds number":
        # the viscous pressures and the skin friction: a drag the inviscid loads do not have
        assert any("skin friction of the boundary-layer analysis" in n for n in rec["notes"])
        assert rec["totals"]["cd_pressure"] > 1e-3


def _check_compare(capsys, condition, folder):
    code, out, err = run(capsys, "compare", "naca2412", "naca0012", *_angles(condition),
                         *QUICK, *CONDITIONS[condition], "-o", folder / "t.csv")
    assert code == 0, err
    lines = [ln for ln in (folder / "t.csv").read_text().splitlines() if not ln.startswith("#")]
    header = lines[0].split(",")
    assert header[0] == "section"
    for key in MARGIN_COLUMNS.get(condition, ()):
        assert key in header, key
    n_angles = 1 if condition == "target lift" else 2
    assert len(lines) - 1 == 2 * n_angles


# [conditions] keys of a case file per condition (and of a flap, per section)
CASE_CONDITIONS = {
    "none": "alpha = [0, 4]\n",
    "flap": "alpha = [0, 4]\n",
    "target lift": "cl = 0.5\n",
    "Mach number": "alpha = [0, 4]\nmach = 0.4\n",
    "cavitation": "alpha = [0, 4]\ndepth = 0.5\nfluid = \"sea-water\"\nspeed = 9.0\n",
    "wall": "alpha = [0, 4]\nground = 0.5\n",
    "free surface": "alpha = [0, 4]\nfree_surface = 0.5\n",
    "fluid and speed": "alpha = [0, 4]\nfluid = \"sea-water\"\nspeed = 9.0\n",
    "length scale": "alpha = [0, 4]\nchord = 0.25\nfluid = \"sea-water\"\nspeed = 9.0\n",
    "Reynolds number": "alpha = [0, 4]\nreynolds = 2e6\n",
}


def _check_run(capsys, condition, folder):
    flap = "flap = { hinge = 0.75, angle = 10 }\n" if condition == "flap" else ""
    alpha = "" if condition == "target lift" else "alpha = 4\n"
    loads = ("[[outputs.loads]]\nfile = \"loads.json\"\nfluid = \"sea-water\"\nspeed = 8.0\n"
             + alpha)
    text = (f"[[section]]\nspec = \"naca2412\"\n{flap}\n[conditions]\npanels = 60\n"
            f"{CASE_CONDITIONS[condition]}\n[outputs]\ntable = \"table.csv\"\n"
            f"[[outputs.cp_figure]]\nfile = \"cp.png\"\n{alpha}\n{loads}")
    case = folder.parent / f"{folder.name}.toml"
    case.write_text(text)
    code, out, err = run(capsys, "run", case, "-o", folder)
    assert code == 0, err
    header = _csv_header(folder / "table.csv")
    for key in MARGIN_COLUMNS.get(condition, ()):
        assert key in header, key
    rec = json.loads((folder / "loads.json").read_text())
    assert rec["equilibrium"]["ok"]
    if condition == "length scale":
        assert rec["bodies"][0]["chord"] == pytest.approx(0.25)
    manifest = json.loads((folder / "manifest.json").read_text())
    assert manifest["settings"]["conditions"]["panels"] == 60


CHECKS = {"solve": _check_solve, "field": _check_field, "loads": _check_loads,
          "compare": _check_compare, "run": _check_run, "figures": _check_figures}


def _refusal_argv(condition, output, folder):
    if output == "field":
        return ("field", "naca2412", *_angles(condition, False), *QUICK, *CONDITIONS[condition],
                "--resolution", "11,7", "-o", folder / "f.csv")
    if output == "figures":
        return ("solve", "naca2412", *_angles(condition), *QUICK, *CONDITIONS[condition],
                "--plot", folder / "cp.png")
    if output == "compare":
        return ("compare", "naca2412", "naca0012", *_angles(condition), *QUICK,
                *CONDITIONS[condition], "-o", folder / "t.csv")
    return ("solve", "naca2412", *_angles(condition), *QUICK, *CONDITIONS[condition],
            "-o", folder / "r.json")


@pytest.mark.parametrize("output", OUTPUTS)
@pytest.mark.parametrize("condition", CONDITIONS)
def test_cell(condition, output, tmp_path, capsys):
    folder = tmp_path / "out"
    folder.mkdir()
    if (condition, output) in REFUSED:
        _refused(capsys, _refusal_argv(condition, output, folder),
                 REFUSED[(condition, output)], folder)
    else:
        CHECKS[output](capsys, condition, folder)


def _table_in_developers_guide() -> dict:
    text = (ROOT / "DEVELOPERS.md").read_text()
    block = text.split("<!-- combinations -->")[1]
    rows = [ln for ln in block.strip().splitlines() if ln.startswith("|")]
    head = [c.strip() for c in rows[0].strip("|").split("|")]
    table = {}
    for ln in rows[2:]:
        cells = [c.strip() for c in ln.strip("|").split("|")]
        for output, cell in zip(head[1:], cells[1:]):
            table[(cells[0], output)] = cell
    return table


def test_developers_guide_table_matches():
    table = _table_in_developers_guide()
    assert {c for c, _ in table} == set(CONDITIONS)
    assert {o for _, o in table} == set(OUTPUTS)
    for cell, text in table.items():
        if cell in REFUSED:
            assert text.startswith("refused"), (cell, text)
        else:
            assert text.startswith("yes"), (cell, text)


def test_library_refuses_the_same_cells():
    # the command line refuses through check_output; the library answers the same way
    ops = {"Mach number": OperatingPoint(alpha_deg=(4,), mach=0.4),
           "cavitation": OperatingPoint(alpha_deg=(4,), depth=0.5, fluid="sea-water", speed=9),
           "fluid and speed": OperatingPoint(alpha_deg=(4,), fluid="sea-water", speed=9),
           "length scale": OperatingPoint(alpha_deg=(4,), chord=0.25),
           "Reynolds number": OperatingPoint(alpha_deg=(4,), reynolds=2e6)}
    for (condition, output), fragment in REFUSED.items():
        with pytest.raises(InputError, match=re.escape(fragment)):
            check_output(ops[condition], output)


def test_case_file_refuses_a_field_with_a_mach_number(tmp_path):
    from panelflow.study.cases import parse_case

    text = ("[[section]]\nspec = \"naca0012\"\n[conditions]\nalpha = 4\nmach = 0.5\n"
            "[[outputs.field]]\nfile = \"f.vtu\"\nalpha = 4\n")
    with pytest.raises(InputError, match=r"line 6: outputs.field\[1\]: the flow field is "
                                         r"incompressible"):
        parse_case(text, tmp_path / "c.toml")


def test_field_of_a_mach_result_is_refused_by_the_library():
    from panelflow.flow.field import flow_field

    r = pf.solve(pf.Problem(pf.load_outlines("naca0012"),
                            pf.OperatingPoint(alpha_deg=[2.0], mach=0.5), panels=40,
                            error_estimate=False))
    with pytest.raises(InputError, match="incompressible"):
        flow_field(r, [2.0 + 0.5j], [2.0])
    # its inviscid part is the incompressible field
    assert np.isfinite(flow_field(r.inviscid, [2.0 + 0.5j], [2.0]).cp).all()
