"""Design case files and the ``inverse`` and ``optimise`` commands, in-process."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from conftest import run

from panelflow.design.job import InceptionSpeed, LeastDrag, WidestRange
from panelflow.design.spec import load_design_case, parse_design_case
from panelflow.errors import InputError
from panelflow.geometry.measure import decompose
from panelflow.geometry.readers import load_outlines

ROOT = Path(__file__).resolve().parent.parent
FOIL = ROOT / "geometries" / "tender_front_foil.dat"

BASE = f"""
[section]
file = "{FOIL.as_posix()}"

[objective]
kind = "inception-speed"
cl = 0.6

[conditions]
depth = 0.5
fluid = "sea-water"
"""


def _case(tmp_path, text, name="case.toml"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_the_demo_case_reads(tmp_path):
    case = load_design_case(ROOT / "geometries" / "tender_front_foil_design.toml")
    job = case.job
    assert isinstance(job.objective, InceptionSpeed) and job.objective.cl == 0.6
    assert job.starts == 4 and job.functions == 12 and job.panels == 200
    # keep_thickness: the start's own thickness at each station, within 2 %
    shape = decompose(case.start())
    lim = job.thickness[4]
    t = float(2.0 * shape.at(shape.half_thickness, [0.36])[0])
    assert (lim.minimum, lim.maximum) == pytest.approx((0.98 * t, 1.02 * t))
    assert case.outputs["section"] == "front_foil_optimised.dat"


@pytest.mark.parametrize("extra, kind", [
    ('[objective]\nkind = "widest-range"\nmeasure = "lift"\n', WidestRange),
    ('[objective]\nkind = "least-drag"\ncl = 0.5\nreynolds = 1e6\n', LeastDrag),
])
def test_other_objectives(tmp_path, extra, kind):
    text = BASE.split("[objective]")[0] + extra + \
        '[conditions]\ndepth = 0.5\nfluid = "sea-water"\nspeed = 12.0\n'
    case = load_design_case(_case(tmp_path, text))
    assert isinstance(case.job.objective, kind)


@pytest.mark.parametrize("change, where, message", [
    ('cl = 0.6', 'cl = "high"', "line 7: objective.cl: must be a number"),
    ('kind = "inception-speed"', 'kind = "inception"', "did you mean 'inception-speed'"),
    ('depth = 0.5', 'dpth = 0.5', "unknown key 'dpth'; did you mean 'depth'"),
    ('fluid = "sea-water"', 'fluid = "air"', "liquid"),
    ('cl = 0.6', 'cl = 0.6\nreynolds = 1e6', "does not belong to the inception-speed"),
])
def test_errors_name_the_key_and_line(tmp_path, change, where, message):
    with pytest.raises(InputError, match=message) as info:
        load_design_case(_case(tmp_path, BASE.replace(change, where)))
    assert str(info.value).startswith("case.toml")


@pytest.mark.parametrize("block, message", [
    ('[constraints]\nthickness = [{ at = 0.3 }]', "needs a minimum, a maximum or both"),
    ('[constraints]\nthickness = [{ at = 0.3, from = 0.1, min = 0.1 }]', "either 'at'"),
    ('[constraints]\narea = { min = 0.08, max = 0.07 }', "above the maximum"),
    ('[constraints]\nmoment = { mn = -0.1 }', "did you mean 'min'"),
    ('[design]\nfunctions = 80', "design.functions: must be at most 40"),
    ('[outputs]\ntable = "t.txt"', "use one of .csv, .json"),
    ('[outputs]\ncp_figure = "sub/cp.png"', "without folders"),
])
def test_constraint_and_output_errors(tmp_path, block, message):
    with pytest.raises(InputError, match=message):
        load_design_case(_case(tmp_path, BASE + block))


def test_a_start_file_changed_after_reading_is_refused(tmp_path):
    foil = tmp_path / "foil.dat"
    foil.write_text(FOIL.read_text())
    case = load_design_case(_case(tmp_path, BASE.replace(FOIL.as_posix(), foil.as_posix())))
    foil.write_text(FOIL.read_text() + "\n")
    with pytest.raises(InputError, match="changed since the case was read"):
        case.start()


def test_missing_section_file(tmp_path):
    text = BASE.replace(FOIL.as_posix(), "nowhere.dat")
    with pytest.raises(InputError, match="line 3: section.file: nowhere.dat: no such file"):
        parse_design_case(text, tmp_path / "case.toml")


def test_inverse_command(tmp_path, capsys):
    out = tmp_path / "inverse.dat"
    fig = tmp_path / "inverse.png"
    code, text, err = run(capsys, "inverse", FOIL, "--plateau", "-0.64,0.04,0.45,0.8", "--cl",
                          "0.6", "--keep-thickness-at", "0.36", "-o", out, "--plot", fig)
    assert code == 0, err
    assert "every constraint holds on the written section" in text
    assert out.exists() and fig.exists()
    assert load_outlines(str(out))[0].kind == "sharp"
    # no second write over it without --force
    code, _, err = run(capsys, "inverse", FOIL, "--plateau", "-0.64,0.04,0.45,0.8", "--cl",
                       "0.6", "-o", out)
    assert code == 1 and "exists" in err


def test_inverse_command_json_and_table_target(tmp_path, capsys):
    target = tmp_path / "target.csv"
    x = np.linspace(0.1, 0.5, 9)
    target.write_text("x,surface,cp\n" + "".join(f"{v},upper,{-0.6 - 0.1 * np.sin(np.pi * v)}\n"
                                                 for v in x))
    out = tmp_path / "t.dat"
    code, text, err = run(capsys, "inverse", FOIL, "--target", target, "--alpha", "1.0",
                          "--functions", "12", "--panels", "160", "-o", out, "--json")
    assert code == 0, err
    record = json.loads(text)
    assert record["check_panels"] == 320
    keys = {r["key"] for r in record["rows"]}
    assert {"rms_mismatch", "max_mismatch", "cp_min"} <= keys


@pytest.mark.parametrize("args, message", [
    (["--alpha", "1"], "--target FILE or --plateau"),
    (["--plateau", "-0.6,0.1,0.4,0.8"], "design angle"),
    (["--plateau", "-0.6,0.1,0.4", "--alpha", "1"], "give 4 numbers"),
    (["--plateau", "-0.6,0.1,0.4,0.8", "--alpha", "1", "--thickness-at", "0.3"],
     "X,MIN or X,MIN,MAX"),
])
def test_inverse_command_refusals(tmp_path, capsys, args, message):
    code, _, err = run(capsys, "inverse", FOIL, *args, "-o", tmp_path / "x.dat")
    assert code == 1
    assert message in err
    assert err.count("\n") == 1  # one line, no traceback


def test_optimise_command(tmp_path, capsys):
    text = BASE + """
[constraints]
thickness = [{ at = 0.36, min = 0.095 }]
[design]
functions = 8
panels = 100
starts = 2
[outputs]
section = "small.dat"
table = "table.json"
"""
    case = _case(tmp_path, text)
    code, out, err = run(capsys, "optimise", case, "-o", tmp_path / "res", "--workers", "2")
    assert code == 0, err
    assert "every constraint holds on the written section" in out
    table = json.loads((tmp_path / "res" / "table.json").read_text())
    rows = {r["key"]: r for r in table["rows"]}
    assert rows["inception_speed"]["result"] > rows["inception_speed"]["start"]
    assert rows["thickness_1"]["result_holds"] is True
    code, _, err = run(capsys, "optimise", case, "-o", tmp_path / "res")
    assert code == 1 and "exists" in err


def test_optimise_that_cannot_meet_its_constraints_exits_with_status_3(tmp_path, capsys):
    # 30 % thick at 30 % chord within 5 % of the chord's square in area: impossible; the files
    # are written for inspection and the exit status says the goal was not reached
    text = BASE + """
[constraints]
thickness = [{ at = 0.3, min = 0.3, max = 0.3 }]
area = { max = 0.05 }
[design]
functions = 6
panels = 100
starts = 1
iterations = 20
"""
    code, out, err = run(capsys, "optimise", _case(tmp_path, text), "-o", tmp_path / "res")
    assert code == 3, err
    assert "WITHOUT meeting every constraint" in out
    assert err.strip().splitlines()[-1].startswith("panelflow: the optimised section does not")
    assert (tmp_path / "res" / "manifest.json").exists()


def test_inverse_that_does_not_converge_exits_with_status_3(tmp_path, capsys):
    # half a chord thick at 30 % chord and a plateau for a 10 %-thick foil: the iteration stops
    # unconverged; the section is written for inspection, the exit status says so
    out = tmp_path / "x.dat"
    code, text, err = run(capsys, "inverse", FOIL, "--plateau", "-0.6,0.05,0.4,0.8", "--alpha",
                          "2", "--thickness-at", "0.3,0.5", "--functions", "8", "--panels",
                          "120", "-o", out)
    assert code == 3, err
    assert "NOT converged" in text
    assert "did not converge" in err.strip().splitlines()[-1]
    assert out.exists()
