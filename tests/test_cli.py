"""The command line run in-process: ``solve``, ``check`` and ``section`` on good input.

Every test calls :func:`panelflow.cli.main.main` with an argument list and reads what it printed
(capsys), so the exit code, stdout and stderr are checked exactly as a user would see them.
Bad input has its own module, tests/test_bad_input.py.
"""

from __future__ import annotations

import csv
import json
import math
import subprocess
import sys
import tomllib
from pathlib import Path

import numpy as np
import pytest

from text_tables import tables

from conftest import run, run_json

from panelflow.geometry.readers import load_outlines

REPO = Path(__file__).resolve().parents[1]
GEOMETRIES = REPO / "geometries"

# Demo outlines with the facts geometries/README.md states about them: trailing-edge kind per
# body and the chord of the main body (in the file's own units). The cambered front foil's
# chord is 1.0000966: the point of its formula (scripts/make_demo_geometries.py, sampled at
# 100001 stations) farthest from the trailing edge lies just ahead of x = 0.
DEMO_FILES = {
    "tender_front_foil.dat": (("sharp",), 1.0000966),
    "tender_stabiliser.dat": (("sharp",), 1.0),
    "tender_strut_fairing.dat": (("blunt",), 220.0),
    "mast_fairing.csv": (("none",), 100.0),
    "front_foil_with_flap.dat": (("sharp", "sharp"), 1.0000966),
}

# Few panels where the numbers themselves are not what is checked: keeps each solve short.
QUICK = ("--panels", "60")




def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def table_rows(out: str) -> list[list[str]]:
    """Cells of the rows of the first table (the per-angle totals)."""
    head, rows = tables(out)[0]
    assert head[0] == "angle of attack [deg]", head
    return rows


def table_alphas(out: str) -> list[float]:
    return [float(r[0]) for r in table_rows(out)]


# ---------------------------------------------------------------------------------- solve
@pytest.mark.parametrize("spec", ["naca2412", "naca0012-closed", "naca23012", "circle",
                                  "ellipse:2,1", "joukowski:-0.1,0.1",
                                  "karman-trefftz:-0.1,0.05,10"])
def test_solve_builtin_spec_prints_one_row_per_angle(spec, capsys):
    code, out, err = run(capsys, "solve", spec, "--alpha", "0", "4", *QUICK)
    assert code == 0, err
    assert err == ""
    header = tables(out)[0][0]
    assert header[:2] == ["angle of attack [deg]", "lift coefficient"]
    # the table prints alpha with 2 decimals: compare to that rounding
    assert table_alphas(out) == pytest.approx([0.0, 4.0], abs=5e-3)
    assert "caution:" in out  # the model's limits are always stated


@pytest.mark.parametrize("name", sorted(DEMO_FILES))
def test_solve_demo_file(name, capsys, monkeypatch):
    monkeypatch.chdir(REPO)  # relative paths, as a user in the project folder types them
    code, out, err = run(capsys, "solve", f"geometries/{name}", "--alpha", "0", "4", *QUICK)
    assert code == 0, err
    assert table_alphas(out) == pytest.approx([0.0, 4.0], abs=5e-3)  # printed to 2 decimals


def test_demo_table_covers_every_demo_file():
    """A new demo outline must be added to DEMO_FILES (and so to the checks above)."""
    found = {p.name for p in GEOMETRIES.iterdir() if p.suffix in (".dat", ".csv")}
    assert found == set(DEMO_FILES)


@pytest.mark.parametrize("alpha_args, expected", [
    (["--alpha=-2:6:2"], [-2, 0, 2, 4, 6]),
    (["--alpha", "6:-2:-2"], [6, 4, 2, 0, -2]),  # ranges may run downwards
    (["--alpha", "0:1:0.25"], [0, 0.25, 0.5, 0.75, 1.0]),  # STOP included despite float steps
    (["--alpha", "0", "4"], [0, 4]),
    (["--alpha", "-3", "1:2:1", "7.5"], [-3, 1, 2, 7.5]),  # values and ranges mixed
])
def test_solve_angle_lists(alpha_args, expected, capsys):
    code, out, err = run(capsys, "solve", "naca0012", *alpha_args, *QUICK)
    assert code == 0, err
    # table alpha printed with 2 decimals: half a unit of the last digit
    assert table_alphas(out) == pytest.approx(expected, abs=5e-3)


@pytest.mark.parametrize("option, value", [("--alpha", "-2:6:2"), ("--ref", "-0.2,-0.05")])
def test_negative_option_values_after_a_space(option, value, capsys):
    """``--alpha -2:6:2`` and ``--ref -0.2,-0.05`` are the forms a user types first."""
    extra = ["--alpha", "0"] if option == "--ref" else []
    code, out, err = run(capsys, "solve", "naca0012", option, value, *extra, *QUICK)
    assert code == 0, err


def test_solve_json_alphas_are_exact(capsys):
    rec = run_json(capsys, "solve", "naca0012", "--alpha=-2:6:2", *QUICK)
    # START + k * STEP in binary floating point: exact for these small integers
    assert [r["alpha_deg"] for r in rec["results"]] == [-2.0, 0.0, 2.0, 4.0, 6.0]


def test_solve_json_structure(capsys):
    rec = run_json(capsys, "solve", "naca2412", "--alpha", "0", "4", *QUICK)
    assert {"chord", "reference_point", "results"} <= set(rec)
    assert rec["chord"] == pytest.approx(1.0, abs=1e-4)  # NACA chord 1 (leading edge rounded)
    assert len(rec["reference_point"]) == 2
    assert len(rec["results"]) == 2
    for res, alpha in zip(rec["results"], (0.0, 4.0)):
        assert res["alpha_deg"] == alpha
        for key in ("cl", "cm", "cd_pressure", "cl_error_estimate", "cm_error_estimate"):
            assert isinstance(res[key], float) and math.isfinite(res[key]), key
        assert len(res["surface"]) == 1
        body = res["surface"][0]
        assert body["name"] == "naca2412"
        assert len(body["x"]) == len(body["y"]) == len(body["cp"]) > 0
    # thin-aerofoil theory: cl rises about 2 pi per radian (common practice); a loose check
    # that the rows are not swapped or copies of each other
    slope = (rec["results"][1]["cl"] - rec["results"][0]["cl"]) / math.radians(4.0)
    assert 5.5 < slope < 7.5


def test_solve_panels_option(capsys):
    rec = run_json(capsys, "solve", "naca0012", "--alpha", "2", "--panels", "120")
    assert rec["panels_per_body"] == [120]


@pytest.mark.parametrize("name", ["tender_stabiliser.dat", "tender_strut_fairing.dat",
                                  "mast_fairing.csv"])
def test_solve_keep_points_uses_the_file_points(name, capsys):
    path = GEOMETRIES / name
    outline = load_outlines(path)[0]
    rec = run_json(capsys, "solve", path, "--alpha", "3", "--keep-points")
    # one panel between each pair of neighbouring points of the closed loop
    assert rec["panels_per_body"] == [len(outline.points) - 1]
    body = rec["results"][0]["surface"][0]
    nodes = np.column_stack([body["x"], body["y"]])
    dist = np.min(np.hypot(*(nodes[:, None, :] - outline.points[None, :, :]).transpose(2, 0, 1)),
                  axis=1)
    # every panel node is a given point: only JSON float round trip (repr is exact) separates them
    assert np.max(dist) <= 1e-12 * outline.chord


@pytest.mark.parametrize("ref", [(0.5, 0.0), (0.5, 0.1), (-0.2, -0.05)])
def test_solve_ref_transfers_the_moment(ref, capsys):
    """Moment about another point follows from the same pressure force.

    With r the point a force F acts at, the nose-up moment is M = -[(r - P) x F]_z (x
    downstream, y up: nose-up is clockwise). Moving the reference from P1 to P2 gives
    M2 = M1 + [(P2 - P1) x F]_z = M1 + dx Fy - dy Fx, and with coefficients over chord c
    cm2 = cm1 + (dx Fy - dy Fx) / c, where in x-y axes (statics; common practice)
    Fx = cd_p cos(a) - cl_p sin(a), Fy = cl_p cos(a) + cd_p sin(a).
    The pressure-integrated cl_p (not the circulation cl) is the force the moment comes from.
    """
    base = run_json(capsys, "solve", "naca2412", "--alpha", "0", "4", "8", *QUICK)
    moved = run_json(capsys, "solve", "naca2412", "--alpha", "0", "4", "8", *QUICK,
                     f"--ref={ref[0]},{ref[1]}")
    assert moved["reference_point"] == list(ref)
    c = base["chord"]
    dx = ref[0] - base["reference_point"][0]
    dy = ref[1] - base["reference_point"][1]
    for r1, r2 in zip(base["results"], moved["results"]):
        a = math.radians(r1["alpha_deg"])
        fx = r1["cd_pressure"] * math.cos(a) - r1["cl_pressure"] * math.sin(a)
        fy = r1["cl_pressure"] * math.cos(a) + r1["cd_pressure"] * math.sin(a)
        # same panels and pressures in both runs: only summation round-off differs
        assert r2["cm"] == pytest.approx(r1["cm"] + (dx * fy - dy * fx) / c, abs=1e-12)
        assert r2["cl"] == r1["cl"]  # the reference point does not change the lift


def test_solve_flap_file_has_two_bodies(capsys):
    rec = run_json(capsys, "solve", GEOMETRIES / "front_foil_with_flap.dat", "--alpha", "2",
                   *QUICK)
    names = [b["name"] for b in rec["results"][0]["surface"]]
    assert names == ["Front foil main element", "Front foil flap"]  # the title lines
    code, out, err = run(capsys, "solve", GEOMETRIES / "front_foil_with_flap.dat",
                         "--alpha", "2", *QUICK)
    assert code == 0, err
    assert "Front foil flap" in out  # the per-body table


def test_solve_transforms_make_named_second_body(capsys):
    flap = "naca0012@name=flap@scale=0.3@pitch=10@move=1.05,-0.08"
    rec = run_json(capsys, "solve", "naca2412", flap, "--alpha", "2", *QUICK)
    assert rec["bodies"] == ["naca2412", "flap"]
    assert [b["name"] for b in rec["results"][0]["surface"]] == ["naca2412", "flap"]
    # the main body's chord stays the reference length (1 for a NACA section, LE rounded)
    assert rec["chord"] == pytest.approx(1.0, abs=1e-4)


def test_check_shows_the_transformed_flap(capsys):
    flap = "naca0012@name=flap@scale=0.3@pitch=10@move=1.05,-0.08"
    code, out, err = run(capsys, "check", "naca2412", flap, "--json")
    assert code == 0, err + out
    rep = json.loads(out)["outlines"][1]
    assert rep["name"] == "flap"
    # scale about the origin (the NACA leading edge), pitch about that leading edge, then
    # move: exact arithmetic on the points, so round-off only
    assert rep["leading_edge"] == pytest.approx([1.05, -0.08], abs=1e-12)
    assert rep["chord"] == pytest.approx(0.3, abs=1e-12)
    assert rep["chord_angle_deg"] == pytest.approx(10.0, abs=1e-9)  # nose-up positive
    te = np.array([1.05, -0.08]) + 0.3 * np.array([math.cos(math.radians(10)),
                                                   -math.sin(math.radians(10))])
    assert rep["trailing_edge_point"] == pytest.approx(te.tolist(), abs=1e-12)


def test_transforms_on_a_path_containing_at_sign(tmp_path, capsys):
    """A folder name with ``@`` must not stop transforms from working on a file inside it."""
    folder = tmp_path / "run@2"
    folder.mkdir()
    target = folder / "foil.dat"
    target.write_text((GEOMETRIES / "tender_front_foil.dat").read_text())
    code, out, err = run(capsys, "check", f"{target}@name=moved@move=0,5", "--json")
    assert code == 0, err
    rep = json.loads(out)["outlines"][0]
    assert rep["name"] == "moved"
    le = load_outlines(target)[0].leading_edge
    # a translation moves the leading edge by exactly the offset: round-off only
    assert rep["leading_edge"] == pytest.approx([le[0], le[1] + 5.0], abs=1e-12)


# ---------------------------------------------------------------------------------- --cl
def test_solve_target_cl(capsys):
    rec = run_json(capsys, "solve", "naca2412", "--cl", "0.5", *QUICK)
    (res,) = rec["results"]
    # the angle comes from the exact superposition of the two unit solutions, so the lift at
    # that angle is the target to round-off
    assert res["cl"] == pytest.approx(0.5, abs=1e-9)
    code, out, err = run(capsys, "solve", "naca2412", "--cl", "0.5", *QUICK)
    assert code == 0, err
    first = out.splitlines()[0]
    assert first.startswith("angle of attack for cl = 0.5:")
    printed = float(first.split(":")[1].split()[0])
    assert printed == pytest.approx(res["alpha_deg"], abs=5e-5)  # printed to 4 decimals
    assert table_alphas(out) == pytest.approx([res["alpha_deg"]], abs=5e-3)  # 2 decimals


@pytest.mark.parametrize("spec", ["circle", "ellipse:2,1"])
def test_solve_target_cl_on_smooth_body_is_an_error(spec, capsys):
    code, out, err = run(capsys, "solve", spec, "--cl", "0.5", *QUICK)
    assert code == 1
    assert err.startswith("panelflow: error: ") and err.count("\n") == 1
    assert "trailing edge" in err  # the reason: no trailing edge, so no lift


# ---------------------------------------------------------------------------------- -o files
def read_polar_csv(path: Path) -> list[dict]:
    lines = [ln for ln in path.read_text().splitlines() if not ln.startswith("#")]
    return list(csv.DictReader(lines))


def test_solve_writes_json_and_csv(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(capsys, "solve", "naca2412", "--alpha", "0", "4", *QUICK,
                         "-o", "out.json", "-o", "out.csv")
    assert code == 0, err
    assert "wrote out.json" in err and "wrote out.csv" in err
    rec = json.loads(Path("out.json").read_text())
    assert [r["alpha_deg"] for r in rec["results"]] == [0.0, 4.0]
    header = next(ln for ln in Path("out.csv").read_text().splitlines()
                  if not ln.startswith("#"))
    assert header.startswith("alpha_deg,cl,cm,")
    rows = read_polar_csv(Path("out.csv"))
    assert len(rows) == 2
    for row, res in zip(rows, rec["results"]):
        for key in ("alpha_deg", "cl", "cm", "cd_pressure", "cl_error_estimate"):
            # CSV numbers are written with 10 significant digits
            assert float(row[key]) == pytest.approx(res[key], rel=1e-9, abs=1e-300), key


@pytest.mark.parametrize("name", ["out.json", "out.csv"])
def test_solve_refuses_to_overwrite_without_force(name, tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert run(capsys, "solve", "naca0012", "--alpha", "0", *QUICK, "-o", name)[0] == 0
    before = Path(name).read_bytes()
    code, out, err = run(capsys, "solve", "naca0012", "--alpha", "5", *QUICK, "-o", name)
    assert code == 1
    assert err.startswith("panelflow: error: ") and err.count("\n") == 1
    assert name in err and "--force" in err
    assert Path(name).read_bytes() == before
    # no temporary file left; a CSV table has its notes beside it
    expected = [name] + (["out.about.json"] if name.endswith(".csv") else [])
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(expected)
    code, out, err = run(capsys, "solve", "naca0012", "--alpha", "5", *QUICK, "-o", name,
                         "--force")
    assert code == 0, err
    assert Path(name).read_bytes() != before  # alpha 5 instead of 0: new content


# ---------------------------------------------------------------------------------- check
@pytest.mark.parametrize("name", sorted(DEMO_FILES))
def test_check_demo_file(name, capsys):
    kinds, chord = DEMO_FILES[name]
    path = GEOMETRIES / name
    code, out, err = run(capsys, "check", path)
    assert code == 0, err + out
    shown = {"sharp": "sharp;", "blunt": "blunt (base);", "none": "none (smooth body);"}
    te_lines = [ln.split(None, 2)[2] for ln in out.splitlines()
                if ln.strip().startswith("trailing edge ") and "at (" not in ln]
    assert [ln.split(" gap")[0] for ln in te_lines] == [shown[k] for k in kinds]
    assert out.count("status           ok") == len(kinds)
    code, out, err = run(capsys, "check", path, "--json")
    rec = json.loads(out)
    assert [o["trailing_edge"] for o in rec["outlines"]] == list(kinds)
    # the leading edge is taken on the curve through the points (measured 1.0000957 for the
    # front foil, 81 stations a surface); 1e-5 covers that and the six decimals of the files
    assert rec["outlines"][0]["chord"] == pytest.approx(chord, rel=1e-5)
    assert rec["problems"] == []


def test_check_overlapping_bodies(capsys):
    code, out, err = run(capsys, "check", "naca0012", "naca0012@move=0.1,0")
    assert code == 1
    problems = [ln for ln in out.splitlines() if ln.startswith("problem:")]
    assert len(problems) == 1
    assert "'naca0012'" in problems[0] and "'naca0012-2'" in problems[0]  # both bodies named


def test_check_clear_bodies_pass(capsys):
    code, out, err = run(capsys, "check", "naca2412",
                         "naca0012@name=flap@scale=0.3@pitch=10@move=1.05,-0.08")
    assert code == 0, out
    assert "problem:" not in out


# ---------------------------------------------------------------------------------- section
@pytest.mark.parametrize("spec", ["naca2412", "naca0012-closed", "ellipse:2,1",
                                  "karman-trefftz:-0.1,0.05,10"])
def test_section_round_trip(spec, tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(capsys, "section", spec, "-o", "f.dat")
    assert code == 0, err
    (back,) = load_outlines("f.dat")
    (orig,) = load_outlines(spec)
    assert back.kind == orig.kind
    assert back.points.shape == orig.points.shape
    # written with 12 significant digits: ~1e-12 of the size, far below 1e-9
    assert np.max(np.abs(back.points - orig.points)) <= 1e-9 * orig.chord


def test_section_points_option(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(capsys, "section", "naca0012", "--points", "61", "-o", "f.dat")
    assert code == 0, err
    assert "61 points" in err
    (back,) = load_outlines("f.dat")
    assert len(back.points) == 61  # closed loop: the trailing edge counted at both ends


def test_section_refuses_to_overwrite(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert run(capsys, "section", "naca2412", "-o", "f.dat")[0] == 0
    before = Path("f.dat").read_bytes()
    code, out, err = run(capsys, "section", "naca0012", "-o", "f.dat")
    assert code == 1
    assert err.startswith("panelflow: error: ") and err.count("\n") == 1 and "f.dat" in err
    assert Path("f.dat").read_bytes() == before
    code, out, err = run(capsys, "section", "naca0012", "-o", "f.dat", "--force")
    assert code == 0, err
    # the new spec's name in every row of panelflow's own layout
    assert Path("f.dat").read_text().startswith("body,point,x,y\nnaca0012,1,")


# ---------------------------------------------------------------------------------- entry points
def test_module_version_via_subprocess():
    from panelflow import __version__

    proc = subprocess.run([sys.executable, "-m", "panelflow", "--version"], cwd=REPO,
                          capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip() == f"panelflow {__version__}"


def test_console_entry_point_declared():
    meta = tomllib.loads((REPO / "pyproject.toml").read_text())
    assert meta["project"]["scripts"]["panelflow"] == "panelflow.cli:main"
