"""The newer command-line commands and options, run in-process like tests/test_cli.py.

``field``, ``compare`` and ``loads``, and ``solve`` with ``--plot``, ``--mach``, ``--depth``,
``--ground`` / ``--free-surface`` and ``--flap``. Each test calls :func:`panelflow.cli.main.main`
with an argument list and reads what it printed (capsys) and what it wrote (tmp_path). Bad input
follows the contract of tests/test_bad_input.py: exit 1, one line ``panelflow: error: ...`` on
stderr, nothing on stdout and no file left behind; usage errors exit 2.

The section numbers are checked against formulas written out here (isentropic flow, the
cavitation number, thin-airfoil flap theory, the image vortex of a plane), not against
panelflow's own modules; panelflow is only asked for its fluid presets.
"""

from __future__ import annotations

import contextlib
import csv
import importlib.util
import io
import json
import math
import re
import subprocess
import sys
import types
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

from text_tables import tables

from conftest import run, run_json

from panelflow.cli.main import main
from panelflow.conditions.fluids import FLUIDS
from panelflow.geometry.readers import load_outlines

REPO = Path(__file__).resolve().parents[1]

# Few panels and a coarse grid: these tests check what the commands print and write, not the
# accuracy of the numbers (tests/test_solver_exact.py and friends do that).
QUICK = ("--panels", "80")
NX, NY = 41, 31
GRID = ("--resolution", f"{NX},{NY}")
WINDOW = (-0.5, 1.5, -0.4, 0.4)
WINDOW_ARG = ("--window", ",".join(f"{v:g}" for v in WINDOW))

# File signatures: PNG (ISO/IEC 15948, the 8-byte signature), PDF (ISO 32000-1, "%PDF-"
# header); SVG is XML with an <svg> root element (W3C SVG 1.1).
MAGIC = {".png": b"\x89PNG\r\n\x1a\n", ".pdf": b"%PDF-"}

STANDARD_GRAVITY = 9.80665  # m/s^2, 3rd CGPM (1901), ISO 80000-3
HEAT_RATIO = 1.4  # air, common practice


# ---------------------------------------------------------------------------------- helpers


def run_quiet(*argv):
    """Like :func:`run` without capsys (for module-scoped fixtures)."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main([str(a) for a in argv])
    return code, out.getvalue(), err.getvalue()


def assert_one_line_error(err: str) -> str:
    """The CLI's error contract; returns the message after the prefix."""
    assert "Traceback" not in err
    assert err.endswith("\n") and err.count("\n") == 1, err
    assert err.startswith("panelflow: error: "), err
    return err[len("panelflow: error: "):]


def assert_usage_error(argv, capsys):
    with pytest.raises(SystemExit) as info:
        main([str(a) for a in argv])
    assert info.value.code == 2
    _, err = capsys.readouterr()
    assert "Traceback" not in err
    assert err.count("\n") == 1 and "error:" in err, err
    return err


def files_in(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir())


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def section_after(out: str, title: str) -> str:
    """The printed text from the line starting with ``title`` on."""
    start = out.index("\n" + title) + 1
    return out[start:]


def is_figure(path: Path) -> bool:
    data = path.read_bytes()
    ext = path.suffix.lower()
    if ext == ".svg":
        return b"<svg" in data[:2000]
    return data.startswith(MAGIC[ext])


@pytest.fixture
def workdir(tmp_path, monkeypatch) -> Path:
    monkeypatch.chdir(tmp_path)
    return tmp_path


@pytest.fixture
def no_h5py(monkeypatch):
    """meshio 5.3's XDMF reader imports h5py even for inline XML data, which never uses it.

    Without h5py installed an empty stand-in module lets it run (as in tests/test_field_io.py).
    """
    if importlib.util.find_spec("h5py") is None:
        monkeypatch.setitem(sys.modules, "h5py", types.ModuleType("h5py"))


def free_air(capsys, spec, alphas, *extra) -> list[dict]:
    """Per-angle results of ``solve --json`` (the reference for other runs)."""
    rec = run_json(capsys, "solve", spec, "--alpha", *alphas, *QUICK, *extra)
    return rec["results"]


# ---------------------------------------------------------------------------------- field
SUMMARY = re.compile(r"field at alpha (\S+) deg: (\d+) points(?: on a (\d+) x (\d+) grid)?, "
                     r"(\d+) inside bodies")


@pytest.fixture(scope="module")
def field_run(tmp_path_factory):
    """One ``field`` run writing all three formats on a small grid."""
    folder = tmp_path_factory.mktemp("field")
    paths = {ext: folder / f"flow{ext}" for ext in (".vtu", ".xdmf", ".csv")}
    argv = ["field", "naca2412", "--alpha", "4", *QUICK, *GRID, *WINDOW_ARG]
    for p in paths.values():
        argv += ["-o", p]
    code, out, err = run_quiet(*argv)
    assert code == 0, err
    return paths, out, err


def read_field_csv(path):
    with open(path, encoding="utf-8", newline="") as fh:
        lines = [ln for ln in fh.read().splitlines() if not ln.startswith("#")]
    rows = list(csv.reader(lines))
    header, body = rows[0], rows[1:]
    return header, np.array([[float(v) for v in r] for r in body])


def test_field_summary_names_grid_and_inside_count(field_run):
    paths, out, err = field_run
    m = SUMMARY.search(out)
    assert m, out
    assert float(m.group(1)) == 4.0
    assert int(m.group(2)) == NX * NY
    assert (int(m.group(3)), int(m.group(4))) == (NX, NY)
    _, table = read_field_csv(paths[".csv"])
    # the printed inside count is the number of points the file flags as inside
    assert int(m.group(5)) == int(table[:, 5].sum()) > 0
    for p in paths.values():
        assert f"wrote {p}" in err


def test_field_csv_grid(field_run):
    paths, _, _ = field_run
    header, t = read_field_csv(paths[".csv"])
    assert header == ["x", "y", "u", "v", "cp", "inside"]
    assert len(t) == NX * NY
    xs, ys = np.unique(t[:, 0]), np.unique(t[:, 1])
    assert (len(xs), len(ys)) == (NX, NY)
    # window ends are grid points: -0.5, 1.5, -0.4, 0.4 survive 15 significant digits exactly
    assert (xs[0], xs[-1], ys[0], ys[-1]) == WINDOW
    outside = t[:, 5] == 0
    # Bernoulli per unit freestream speed, Cp = 1 - (u^2 + v^2) (steady incompressible flow);
    # 1e-12: the file's 15 significant digits, squared speeds of order 1
    u, v, cp = t[outside, 2], t[outside, 3], t[outside, 4]
    np.testing.assert_allclose(cp, 1.0 - (u * u + v * v), rtol=0, atol=1e-12)
    assert np.all(np.isnan(t[~outside, 2:5]))


@pytest.mark.parametrize("ext", [".vtu", ".xdmf"])
def test_field_mesh_files_read_back(field_run, ext, no_h5py):
    import meshio

    paths, out, _ = field_run
    mesh = meshio.read(paths[ext])
    n = NX * NY
    quads = [c.data for c in mesh.cells if c.type == "quad"]
    assert len(quads) == 1 and len(quads[0]) == (NX - 1) * (NY - 1)
    grid = mesh.points[:n]
    assert len(np.unique(grid[:, 0])) == NX and len(np.unique(grid[:, 1])) == NY
    # binary float64 (.vtu) and 17 significant digits (.xdmf): window ends exactly
    assert (grid[:, 0].min(), grid[:, 0].max(), grid[:, 1].min(), grid[:, 1].max()) == WINDOW
    inside = mesh.point_data["inside"][:n].astype(bool)
    assert int(inside.sum()) == int(SUMMARY.search(out).group(5))
    assert np.all(np.isnan(mesh.point_data["cp"][:n][inside]))
    assert np.all(np.isfinite(mesh.point_data["cp"][:n][~inside]))


def test_field_xdmf_is_xml(field_run):
    # the file stands alone: one grid, inline XML data (no HDF5 companion)
    root = ET.parse(field_run[0][".xdmf"]).getroot()
    assert root.tag == "Xdmf"
    assert {d.get("Format") for d in root.iter("DataItem")} == {"XML"}


PROBES = [(-0.5, 0.2), (0.3, 0.02), (0.5, -0.3), (1.2, 0.1), (2.0, -0.05)]  # 2nd inside the foil


@pytest.mark.parametrize("ext", [".csv", ".vtu"])
def test_field_at_points_file(ext, workdir, capsys):
    (workdir / "probes.csv").write_text("x,y\n" + "".join(f"{x},{y}\n" for x, y in PROBES))
    code, out, err = run(capsys, "field", "naca2412", "--alpha", "4", *QUICK,
                         "--points", "probes.csv", "-o", f"probes_out{ext}")
    assert code == 0, err
    m = SUMMARY.search(out)
    assert m and m.group(3) is None, out  # no grid mentioned for scattered points
    assert int(m.group(2)) == len(PROBES)
    assert int(m.group(5)) == 1
    if ext == ".csv":
        _, t = read_field_csv(workdir / "probes_out.csv")
        assert len(t) == len(PROBES)
        # the decimal text of the probes parses to the same doubles both ways
        np.testing.assert_array_equal(t[:, :2], PROBES)
        assert t[:, 5].tolist() == [0, 1, 0, 0, 0]
    else:
        import meshio

        mesh = meshio.read(workdir / "probes_out.vtu")
        verts = [c.data for c in mesh.cells if c.type == "vertex"]
        assert len(verts) == 1 and len(verts[0]) == len(PROBES)
        np.testing.assert_array_equal(mesh.points[:len(PROBES), :2], PROBES)


@pytest.mark.parametrize("n_lines", ["4", "0"])
def test_field_plot(n_lines, workdir, capsys):
    code, out, err = run(capsys, "field", "naca2412", "--alpha", "4", *QUICK, *GRID,
                         "--plot", "flow.png", "--streamlines", n_lines)
    assert code == 0, err
    assert is_figure(workdir / "flow.png")
    assert files_in(workdir) == ["flow.png"]
    assert SUMMARY.search(out)
    assert "wrote flow.png" in err


FIELD_BAD = [
    # (id, extra arguments, fragment of the message)
    ("two-angles", ("--alpha", "4", "6", "-o", "f.csv"), "one angle"),
    ("no-output", ("--alpha", "4"), "-o FILE"),
    ("points-with-plot", ("--alpha", "4", "--points", "probes.csv", "--plot", "f.png"),
     "--points"),
    ("window-x-reversed", ("--alpha", "4", "--window", "1,0,-1,1", "-o", "f.csv"), "X0 < X1"),
    ("window-x-equal", ("--alpha", "4", "--window", "1,1,-1,1", "-o", "f.csv"), "X0 < X1"),
    ("window-y-reversed", ("--alpha", "4", "--window", "0,1,1,-1", "-o", "f.csv"), "Y0 < Y1"),
    ("window-three-numbers", ("--alpha", "4", "--window", "0,1,-1", "-o", "f.csv"), "--window"),
    ("resolution-one-number", ("--alpha", "4", "--resolution", "41", "-o", "f.csv"),
     "--resolution"),
    ("resolution-not-integer", ("--alpha", "4", "--resolution", "41.5,31", "-o", "f.csv"),
     "--resolution"),
    ("resolution-one-point", ("--alpha", "4", "--resolution", "1,31", "-o", "f.csv"),
     "resolution"),
    # 10^14 points: far beyond any memory; must be refused, not attempted
    ("resolution-huge", ("--alpha", "4", "--resolution", "10000000,10000000", "-o", "f.csv"),
     "resolution"),
    ("exists", ("--alpha", "4", "-o", "existing.vtu"), "existing.vtu"),
    ("figure-exists", ("--alpha", "4", "--plot", "existing.png"), "existing.png"),
    ("unknown-extension", ("--alpha", "4", "-o", "f.txt"), "f.txt"),
    ("figure-as-field", ("--alpha", "4", "-o", "f.png"), "f.png"),
    ("field-as-figure", ("--alpha", "4", "--plot", "f.csv"), "f.csv"),
    ("second-output-bad", ("--alpha", "4", "-o", "f.csv", "-o", "g.dat"), "g.dat"),
]


@pytest.mark.parametrize("argv, fragment", [c[1:] for c in FIELD_BAD],
                         ids=[c[0] for c in FIELD_BAD])
def test_field_bad_input(argv, fragment, workdir, capsys):
    (workdir / "probes.csv").write_text("x,y\n0.5,0.3\n")
    (workdir / "existing.vtu").write_text("keep me\n")
    (workdir / "existing.png").write_text("keep me\n")
    before = files_in(workdir)
    code, out, err = run(capsys, "field", "naca2412", *QUICK, *GRID, *argv)
    assert code == 1
    assert fragment in assert_one_line_error(err)
    assert out == ""
    assert files_in(workdir) == before
    assert (workdir / "existing.vtu").read_text() == "keep me\n"
    assert (workdir / "existing.png").read_text() == "keep me\n"


def test_field_force_replaces(workdir, capsys):
    (workdir / "flow.csv").write_text("old\n")
    code, _, err = run(capsys, "field", "naca2412", "--alpha", "4", *QUICK, *GRID,
                       "-o", "flow.csv", "--force")
    assert code == 0, err
    _, t = read_field_csv(workdir / "flow.csv")
    assert len(t) == NX * NY


# ---------------------------------------------------------------------------------- compare
COMPARE_CASES = ["naca2412", "naca0012@name=rudder", "geometries/front_foil_with_flap.dat"]


def compare_rows(out: str, labels) -> dict[str, list[list[str]]]:
    """Table rows of ``compare`` per case label (labels may contain spaces), without the
    label: angle, lift, its estimate, moment, ..."""
    head, body = tables(out)[0]
    assert head[:3] == ["case", "angle of attack [deg]", "lift coefficient"], head
    rows = {lb: [] for lb in labels}
    for row in body:
        rows[row[0]].append(row[1:])
    assert sum(len(r) for r in rows.values()) == len(body)
    return rows


def test_compare_table_matches_solve(capsys, monkeypatch):
    monkeypatch.chdir(REPO)  # the demo file by its relative path, as a user types it
    code, out, err = run(capsys, "compare", *COMPARE_CASES, "--alpha", "0", "4", *QUICK)
    assert code == 0, err
    refs = [run_json(capsys, "solve", case, "--alpha", "0", "4", *QUICK)
            for case in COMPARE_CASES]
    labels = [", ".join(r["bodies"]) for r in refs]
    assert labels[1] == "rudder" and len(refs[2]["bodies"]) == 2
    rows = compare_rows(out, labels)
    for label, ref in zip(labels, refs):
        assert len(rows[label]) == 2  # one row per angle
        for row, res in zip(rows[label], ref["results"]):
            assert float(row[0]) == res["alpha_deg"]  # 0.00, 4.00: exact
            # the same computation: the printed 5 decimals are those of solve's cl
            assert row[1] == f"{res['cl']:.5f}"
            assert row[3] == f"{res['cm']:.5f}"
    assert "caution:" in out


def test_compare_plot(workdir, capsys):
    code, out, err = run(capsys, "compare", "naca2412", "naca0012", "--alpha", "4", *QUICK,
                         "--plot", "cmp.png")
    assert code == 0, err
    assert is_figure(workdir / "cmp.png")
    assert "wrote cmp.png" in err
    # a second run refuses to replace it, before solving
    before = (workdir / "cmp.png").read_bytes()
    code, out, err = run(capsys, "compare", "naca2412", "naca0012", "--alpha", "4", *QUICK,
                         "--plot", "cmp.png")
    assert code == 1
    assert "cmp.png" in assert_one_line_error(err)
    assert out == ""
    assert (workdir / "cmp.png").read_bytes() == before


# ---------------------------------------------------------------------------------- solve --plot
@pytest.mark.parametrize("ext", [".png", ".svg", ".pdf"])
def test_solve_plot(ext, workdir, capsys):
    code, out, err = run(capsys, "solve", "naca2412", "--alpha", "4", *QUICK, "--plot",
                         f"cp{ext}")
    assert code == 0, err
    assert is_figure(workdir / f"cp{ext}")
    assert files_in(workdir) == [f"cp{ext}"]
    assert tables(out)[0][1], out  # the table is still printed


def test_solve_plot_refuses_to_overwrite(workdir, capsys):
    (workdir / "cp.png").write_text("keep me\n")
    code, out, err = run(capsys, "solve", "naca2412", "--alpha", "4", *QUICK, "--plot", "cp.png",
                         "-o", "polar.csv")
    assert code == 1
    assert "cp.png" in assert_one_line_error(err)
    assert out == ""  # refused before solving
    assert (workdir / "cp.png").read_text() == "keep me\n"
    assert files_in(workdir) == ["cp.png"]  # nor the other output
    code, out, err = run(capsys, "solve", "naca2412", "--alpha", "4", *QUICK, "--plot", "cp.png",
                         "--force")
    assert code == 0, err
    assert is_figure(workdir / "cp.png")


# ---------------------------------------------------------------------------------- --mach
def cp_star(mach: float, g: float = HEAT_RATIO) -> float:
    """Critical pressure coefficient, isentropic perfect gas (NACA Report 1135)."""
    return 2.0 / (g * mach**2) * (((2.0 + (g - 1.0) * mach**2) / (g + 1.0)) ** (g / (g - 1.0))
                                  - 1.0)


def mach_table(out: str):
    """Header line and rows of the compressibility section."""
    text = section_after(out, "compressibility:")
    head = text.splitlines()[0]
    return head, tables(text)[0][1], text


@pytest.mark.parametrize("spec, alpha, mach", [("naca2412", "4", 0.3), ("naca0012", "2", 0.5)])
def test_mach_karman_tsien_raises_lift(spec, alpha, mach, capsys):
    cl0 = free_air(capsys, spec, [alpha])[0]["cl"]
    code, out, err = run(capsys, "solve", spec, "--alpha", alpha, *QUICK, "--mach", mach)
    assert code == 0, err
    head, rows, _ = mach_table(out)
    assert f"karman-tsien at Mach {mach:g}" in head
    # critical Cp printed to 4 decimals
    assert float(re.search(r"Cp\* (-?[\d.]+)", head).group(1)) == pytest.approx(
        cp_star(mach), abs=5e-5)
    beta = math.sqrt(1.0 - mach**2)
    ratio = float(rows[0][1]) / cl0
    # Karman-Tsien scales a local Cp0 by 1 / (beta + M^2 Cp0 / (2 (1 + beta))) (Anderson,
    # Modern Compressible Flow, ch. 9, from memory), i.e. Prandtl-Glauert's 1 / beta times
    # 1 / (1 + M^2 Cp0 / (2 beta (1 + beta))): more on the suction side, less on the pressure
    # side. At the suction peaks here (Cp0 -1.45 at M 0.3, -0.80 at M 0.5) that extra factor is
    # 1.036 and 1.066, on the stagnation point (Cp0 = 1) 0.976 and 0.928; the lift, carried
    # mostly by the suction side, lands in between. Measured: 1.0165 / beta and 1.047 / beta.
    assert 0.98 / beta < ratio < 1.1 / beta
    assert ratio > 1.0


def test_mach_prandtl_glauert_scales_lift_by_beta(capsys):
    cl0 = free_air(capsys, "naca2412", ["0", "4"])
    code, out, err = run(capsys, "solve", "naca2412", "--alpha", "0", "4", *QUICK,
                         "--mach", "0.5", "--mach-rule", "prandtl-glauert")
    assert code == 0, err
    head, rows, _ = mach_table(out)
    assert "prandtl-glauert" in head
    beta = math.sqrt(1.0 - 0.25)
    for row, ref in zip(rows, cl0):
        # Cp = Cp0 / beta everywhere, so cl = cl0 / beta (Glauert 1928, from memory);
        # printed to 5 decimals
        assert float(row[1]) == pytest.approx(ref["cl"] / beta, abs=5e-6)


@pytest.mark.parametrize("spec, alpha, mach, sonic", [
    ("naca2412", "4", "0.3", False),
    ("naca0012", "8", "0.6", True),  # suction peak near Cp -4.3: sonic well below Mach 0.6
])
def test_mach_sonic_flag_and_warning(spec, alpha, mach, sonic, capsys):
    code, out, err = run(capsys, "solve", spec, "--alpha", alpha, *QUICK, "--mach", mach)
    assert code == 0, err
    _, rows, text = mach_table(out)
    row = rows[0]
    m_crit = float(row[6])
    assert (m_crit <= float(mach)) == sonic  # the flag follows the printed critical Mach
    assert ("sonic" in " ".join(row[7:])) == sonic
    warnings = [ln for ln in text.splitlines() if ln.startswith("warning:")]
    assert bool(warnings) == sonic
    if sonic:
        assert "critical Mach" in warnings[0]


# ---------------------------------------------------------------------------------- --depth
def cavitation_rows(out: str):
    text = section_after(out, "cavitation at")
    return text.splitlines()[0], tables(text)[0][1], text


@pytest.mark.parametrize("fluid, depth, speed", [
    ("sea-water", 0.5, 10.0),
    ("fresh-water", 2.0, None),
])
def test_cavitation_inception_speed(fluid, depth, speed, capsys):
    extra = ("--speed", f"{speed:g}") if speed else ()
    code, out, err = run(capsys, "solve", "naca2412", "--alpha", "4", "8", *QUICK,
                         "--depth", f"{depth:g}", "--fluid", fluid, *extra)
    assert code == 0, err
    head, rows, text = cavitation_rows(out)
    assert f"{depth:g} m depth in {fluid}" in head
    f = FLUIDS[fluid]
    # pressure above vapour at the running depth: p_atm + rho g h - p_v (definition of the
    # cavitation number, sigma = (p_atm + rho g h - p_v) / (rho V^2 / 2))
    head_pressure = f.ambient_pressure + f.density * STANDARD_GRAVITY * depth - f.vapour_pressure
    solve_rows = tables(out)[0][1]
    assert len(rows) == 2
    for row, srow in zip(rows, solve_rows):
        neg_cp_min = float(row[1])
        assert neg_cp_min == -float(srow[8])  # the solve table's cp_min, same 4 decimals
        # inception when -Cp_min = sigma: V_i = sqrt(2 dp / (rho (-Cp_min))). V_i printed to
        # 2 decimals (0.005) and -Cp_min to 4 (relative 5e-5 / 1.4, half of it in V_i: 2e-4 m/s)
        v_i = math.sqrt(2.0 * head_pressure / (f.density * neg_cp_min))
        assert float(row[2]) == pytest.approx(v_i, abs=0.006)
        if speed:
            sigma = head_pressure / (0.5 * f.density * speed**2)
            margin = float(row[3])
            # margin = sigma - (-Cp_min): printed to 3 decimals, sigma from 4-decimal Cp_min
            assert margin == pytest.approx(sigma - neg_cp_min, abs=6e-4)
            assert (row[4] == "cavitating") == (margin < 0)
    if speed:
        printed_sigma = float(re.search(r"cavitation number ([\d.]+)", head).group(1))
        assert printed_sigma == pytest.approx(sigma, abs=5e-5)  # printed to 4 decimals
    assert any(ln.startswith("caution:") for ln in text.splitlines())


SOLVE_BAD = [
    # (id, extra arguments, fragment); -o out.json is added, and must not be written
    ("depth-without-fluid", ("--depth", "0.5"), "fluid"),
    ("depth-negative", ("--depth", "-1", "--fluid", "sea-water"), "depth"),
    ("depth-in-air", ("--depth", "0.5", "--fluid", "air"), "air"),
    ("depth-unknown-fluid", ("--depth", "0.5", "--fluid", "oil"), "oil"),
    ("mach-supersonic", ("--mach", "1.2"), "Mach"),
    ("mach-sonic", ("--mach", "1"), "Mach"),
    ("mach-negative", ("--mach", "-0.2"), "Mach"),
    ("fluid-without-depth", ("--fluid", "sea-water", "--speed", "8"), "depth"),
    ("chord-on-solve", ("--chord", "0.25"), "loads"),
    ("flap-hinge-beyond-chord", ("--flap", "1.2,10"), "hinge"),
    ("flap-hinge-at-nose", ("--flap", "0,10"), "hinge"),
    ("flap-one-number", ("--flap", "0.75"), "--flap"),
]


@pytest.mark.parametrize("argv, fragment", [c[1:] for c in SOLVE_BAD],
                         ids=[c[0] for c in SOLVE_BAD])
def test_solve_bad_new_options(argv, fragment, workdir, capsys):
    alpha = () if "--cl" in argv else ("--alpha", "4")
    code, out, err = run(capsys, "solve", "naca2412", *alpha, *QUICK, *argv, "-o", "out.json")
    assert code == 1
    assert fragment in assert_one_line_error(err)
    assert files_in(workdir) == []  # refused before any result is written ...
    assert out == ""  # ... or printed


# ---------------------------------------------------------------------------------- near a plane
def plane_rows(out: str):
    head, rows = tables(out)[0]
    assert head[:5] == ["angle of attack [deg]", "lift coefficient", "error estimate",
                        "moment coefficient", "error estimate"]
    return rows


@pytest.mark.parametrize("option, word", [("--ground", "wall"),
                                          ("--free-surface", "free surface")])
def test_near_plane_lift_differs_from_free_air(option, word, capsys):
    ref = free_air(capsys, "naca2412", ["0", "4"])
    code, out, err = run(capsys, "solve", "naca2412", "--alpha", "0", "4", *QUICK, option, "0.5")
    assert code == 0, err
    assert word in out
    rows = plane_rows(out)
    assert [float(r[0]) for r in rows] == [0.0, 4.0]
    for row, res in zip(rows, ref):
        cl, cl_err = float(row[1]), float(row[2])
        # half a chord from the plane the image changes the lift by far more than the
        # discretisation error of either run
        assert abs(cl - res["cl"]) > cl_err + res["cl_error_estimate"], (row, res)
    assert sum(ln.startswith("caution:") for ln in out.splitlines()) >= 2


@pytest.mark.parametrize("option", ["--ground", "--free-surface"])
def test_far_plane_approaches_free_air(option, capsys):
    """50 chords from the plane the image acts like one vortex 100 chords away.

    Method of images (Milne-Thomson, Theoretical Hydrodynamics, from memory): a wall mirrors
    the bound vortex Gamma with the opposite sign, a constant-potential surface with the same
    sign; either image induces a velocity Gamma / (4 pi h) against the freestream at the foil.
    With Gamma = cl c U / 2 and lift ~ U_eff^2 the first-order change is
    d cl = -cl^2 c / (4 pi h): -8.8e-4 at cl 0.744 and h = 50 c; measured -8.4e-4 (both planes).
    """
    h = 50.0
    ref = free_air(capsys, "naca2412", ["0", "4"])
    near = free_air(capsys, "naca2412", ["0", "4"], option, f"{h:g}")
    for row, res in zip(near, ref):
        first_order = res["cl"] ** 2 / (4.0 * math.pi * h)
        d_cl = row["cl"] - res["cl"]
        # lower, by the first-order estimate to within 50 % (higher-order image terms)
        assert -1.5 * first_order < d_cl < -0.5 * first_order, (d_cl, first_order)
        # the file carries the free-space lift it is compared with (the same solve)
        assert row["cl_free_space"] == pytest.approx(res["cl"], abs=1e-12)


def test_ground_and_free_surface_together_is_a_usage_error(workdir, capsys):
    err = assert_usage_error(["solve", "naca2412", "--alpha", "4", "--ground", "0.5",
                              "--free-surface", "0.5"], capsys)
    assert "--free-surface" in err and "--ground" in err
    assert files_in(workdir) == []


# ---------------------------------------------------------------------------------- --flap
def thin_airfoil_flap_dcl(hinge: float, angle_deg: float) -> float:
    """Lift increment of a plain flap by thin-airfoil theory (Glauert; Abbott & von Doenhoff,
    Theory of Wing Sections, sec. 8.6, from memory): dcl = 2 (pi - th + sin th) delta with
    cos th = 1 - 2 x_h."""
    th = math.acos(1.0 - 2.0 * hinge)
    return 2.0 * (math.pi - th + math.sin(th)) * math.radians(angle_deg)


def test_plain_flap_raises_lift(capsys):
    plain = free_air(capsys, "naca2412", ["4"])[0]
    rec = run_json(capsys, "solve", "naca2412", "--alpha", "4", *QUICK, "--flap", "0.75,10")
    flapped = rec["results"][0]
    assert len(rec["bodies"]) == 1
    d_cl = flapped["cl"] - plain["cl"]
    assert d_cl > plain["cl_error_estimate"] + flapped["cl_error_estimate"]
    # thickness raises the lift slope above thin-airfoil theory by about 0.77 t/c (Abbott & von
    # Doenhoff, from memory: 9 % at t/c 0.12) and the hinge rounding costs a little: a loose band
    # that still catches a wrong hinge station or degrees read as radians. Measured: 1.097.
    assert 1.0 < d_cl / thin_airfoil_flap_dcl(0.75, 10.0) < 1.25


def test_slotted_flap_gives_two_bodies(capsys):
    rec = run_json(capsys, "solve", "naca2412", "--alpha", "4", *QUICK, "--flap", "0.75,10",
                   "--flap-gap", "0.01")
    assert len(rec["bodies"]) == 2
    assert len(rec["panels_per_body"]) == 2
    assert len(rec["results"][0]["surface"]) == 2
    plain = free_air(capsys, "naca2412", ["4"])[0]
    assert rec["results"][0]["cl"] > plain["cl"] + plain["cl_error_estimate"]


# ---------------------------------------------------------------------------------- loads
LOAD_CONDITIONS = ("--fluid", "sea-water", "--speed", "10", "--chord", "0.3", "--span", "1.2")
LOAD_CASES = {
    "single": ("naca2412",),
    "slotted-flap": ("naca2412", "--flap", "0.75,10", "--flap-gap", "0.01", "--about", "0.75,0"),
}


def body_sums(body: dict, alpha_deg: float, point, key: str = "nodes"):
    """Lift, drag and nose-up moment about ``point`` of one body's nodal loads."""
    n = body[key]
    x, y, fx, fy = (np.asarray(n[k], float) for k in ("x", "y", "fx", "fy"))
    a = math.radians(alpha_deg)
    Fx, Fy = fx.sum(), fy.sum()
    return {"lift": -Fx * math.sin(a) + Fy * math.cos(a),
            "drag": Fx * math.cos(a) + Fy * math.sin(a),
            "moment": float(-np.sum((x - point[0]) * fy - (y - point[1]) * fx))}


def assert_equilibrium(value, total, scale):
    # the equilibrium requirement: nodal loads add up to the totals. 1e-9 relative, the file's
    # own tolerance; drag is a near-zero difference of large nodal forces, so it is measured
    # against a thousandth of the force scale q c span (as the file's check does)
    assert abs(value - total) <= 1e-9 * max(abs(total), 1e-3 * scale), (value, total)


def read_comment_csv(path):
    lines = [ln for ln in Path(path).read_text().splitlines() if not ln.startswith("#")]
    rows = list(csv.reader(lines))
    return rows[0], rows[1:]


@pytest.fixture(scope="module", params=sorted(LOAD_CASES))
def load_run(request, tmp_path_factory):
    folder = tmp_path_factory.mktemp(f"loads-{request.param}")
    outs = [folder / f"loads{ext}" for ext in (".json", ".csv", ".inp")]
    code, out, err = run_quiet("loads", *LOAD_CASES[request.param], "--alpha", "4", *QUICK,
                               *LOAD_CONDITIONS, *(a for p in outs for a in ("-o", p)))
    assert code == 0, err
    return request.param, folder, out, err


def test_loads_files_and_report(load_run):
    _, folder, out, err = load_run
    assert files_in(folder) == ["loads.about.json", "loads.csv", "loads.inp", "loads.json",
                                "loads.loads.about.json", "loads.loads.csv"]
    for name in files_in(folder):
        assert f"wrote {folder / name}" in err
    assert out.startswith("equilibrium check")
    assert "within tolerance" in out
    cautions = [ln for ln in out.splitlines() if ln.startswith("caution:")]
    assert any("safety factor" in c for c in cautions)
    assert any("local codes" in c for c in cautions)


def test_loads_json_adds_up(load_run):
    case, folder, _, _ = load_run
    data = json.loads((folder / "loads.json").read_text())
    assert data["format"] == "panelflow section loads"
    c = data["conditions"]
    rho = FLUIDS["sea-water"].density
    # q = rho V^2 / 2 from the preset; round-off only
    assert c["dynamic_pressure"] == pytest.approx(0.5 * rho * 10.0**2, rel=1e-12)
    assert (c["chord"], c["span"], c["alpha_deg"]) == (0.3, 1.2, 4.0)
    scale = c["dynamic_pressure"] * c["chord"] * c["span"]
    ref = data["reference_point"]
    totals = data["totals"]
    assert len(data["bodies"]) == (2 if case == "slotted-flap" else 1)
    summed = {"lift": 0.0, "drag": 0.0, "moment": 0.0}
    for body in data["bodies"]:
        sums = body_sums(body, 4.0, ref)
        for key in summed:
            assert_equilibrium(sums[key], body["totals"][key],
                               scale * (c["chord"] if key == "moment" else 1.0))
            summed[key] += sums[key]
    for key, value in summed.items():
        assert_equilibrium(value, totals[key],
                           scale * (c["chord"] if key == "moment" else 1.0))
    # the loads carry the pressure-integrated lift: L = cl_p q c span
    assert totals["lift"] == pytest.approx(totals["cl_pressure"] * scale, rel=1e-9)
    if case == "slotted-flap":
        (about,) = totals["moments_about"]
        # --about is in outline units; chord 1.00003 units scaled to 0.3 m
        assert about["point"] == pytest.approx([0.75 * c["length_scale"], 0.0], rel=1e-12)
        m = sum(body_sums(b, 4.0, about["point"])["moment"] for b in data["bodies"])
        assert_equilibrium(m, about["moment"], scale * c["chord"])


def test_loads_csv_and_inp_match_json(load_run):
    _, folder, _, _ = load_run
    data = json.loads((folder / "loads.json").read_text())
    n_nodes = sum(len(b["nodes"]["x"]) for b in data["bodies"])
    fx = sum(np.sum(b["nodes"]["fx"]) for b in data["bodies"])
    fy = sum(np.sum(b["nodes"]["fy"]) for b in data["bodies"])
    scale = data["conditions"]["dynamic_pressure"] * 0.3 * 1.2
    header, rows = read_comment_csv(folder / "loads.csv")
    assert header[:2] == ["body", "node"] and header[-2:] == ["fx [N]", "fy [N]"]
    assert len(rows) == n_nodes
    assert {r[0] for r in rows} == {b["name"] for b in data["bodies"]}
    assert_equilibrium(sum(float(r[-2]) for r in rows), fx, scale)
    assert_equilibrium(sum(float(r[-1]) for r in rows), fy, scale)
    inp = (folder / "loads.inp").read_text().splitlines()
    start = inp.index("*NODE") + 1
    end = next(i for i in range(start, len(inp)) if inp[i].startswith("*"))
    assert end - start == n_nodes
    _, companion = read_comment_csv(folder / "loads.loads.csv")
    assert len(companion) == n_nodes


def test_structural_example_reads_the_json(load_run):
    _, folder, _, _ = load_run
    proc = subprocess.run([sys.executable, str(REPO / "scripts" / "structural_example.py"),
                           str(folder / "loads.json"), "--stations", "6"],
                          capture_output=True, text=True, timeout=60, check=False)
    assert proc.returncode == 0, proc.stderr
    lines = proc.stdout.splitlines()
    assert "MISMATCH" not in proc.stdout
    head = next(i for i, ln in enumerate(lines) if "shear [N]" in ln and "bending" in ln)
    stations = [ln.split() for ln in lines[head + 1:head + 8]]
    # the six even stations and the spar (default 0.35 c) among them
    assert [float(s[0]) for s in stations] == pytest.approx(
        [0, 0.2, 0.35, 0.4, 0.6, 0.8, 1.0], abs=5e-4)  # printed to 3 decimals
    assert all(len(s) == 3 and all(_is_number(v) for v in s) for s in stations)
    assert "spar reaction" in proc.stdout


def write_nodes(path: Path, every: int = 8, move=None) -> int:
    """Structural nodes on the naca2412 outline (every ``every``-th point); returns the count.

    ``move`` = (node id, dy) shifts one node off the outline.
    """
    pts = np.array(load_outlines("naca2412")[0].points, float)[::every]  # a writable copy
    if move is not None:
        pts[move[0] - 1, 1] += move[1]
    path.write_text("id,x,y\n" + "".join(f"{i},{x!r},{y!r}\n"
                                         for i, (x, y) in enumerate(pts.tolist(), 1)))
    return len(pts)


def test_loads_onto_structural_nodes(workdir, capsys):
    n = write_nodes(workdir / "fe.csv")
    code, out, err = run(capsys, "loads", "naca2412", "--alpha", "4", *QUICK, "--fluid", "air",
                         "--speed", "30", "--nodes", "fe.csv", "-o", "loads.json")
    assert code == 0, err
    assert "within tolerance" in out
    data = json.loads((workdir / "loads.json").read_text())
    (body,) = data["bodies"]
    s = body["structural_nodes"]
    assert s["id"] == list(range(1, n + 1))
    c = data["conditions"]
    scale = c["dynamic_pressure"] * c["chord"]  # per metre of span
    sums = body_sums(body, 4.0, data["reference_point"], key="structural_nodes")
    # the transfer keeps the force exactly (equilibrium); the moment only to the node spacing
    for key in ("lift", "drag"):
        assert_equilibrium(sums[key], body["totals"][key], scale)


LOADS_BAD = [
    # (id, arguments after the outline, fragment); -o loads.json is added
    ("negative-speed", ("--alpha", "4", "--fluid", "sea-water", "--speed", "-3"), "speed"),
    ("zero-speed", ("--alpha", "4", "--fluid", "sea-water", "--speed", "0"), "speed"),
    ("zero-density", ("--alpha", "4", "--density", "0", "--speed", "3"), "density"),
    ("negative-density", ("--alpha", "4", "--density", "-1000", "--speed", "3"), "density"),
    ("unknown-fluid", ("--alpha", "4", "--fluid", "mud", "--speed", "3"), "mud"),
    ("two-angles", ("--alpha", "4", "6", "--fluid", "air", "--speed", "3"), "one angle"),
    ("exists", ("--alpha", "4", "--fluid", "air", "--speed", "3", "-o", "existing.json"),
     "existing.json"),
    ("unknown-extension", ("--alpha", "4", "--fluid", "air", "--speed", "3", "-o", "l.xyz"),
     "l.xyz"),
    ("node-off-outline", ("--alpha", "4", "--fluid", "air", "--speed", "3", "--nodes", "far.csv"),
     "node 5"),
]


@pytest.mark.parametrize("argv, fragment", [c[1:] for c in LOADS_BAD],
                         ids=[c[0] for c in LOADS_BAD])
def test_loads_bad_input(argv, fragment, workdir, capsys):
    (workdir / "existing.json").write_text("keep me\n")
    write_nodes(workdir / "far.csv", move=(5, 0.3))
    before = files_in(workdir)
    code, out, err = run(capsys, "loads", "naca2412", *QUICK, *argv, "-o", "loads.json")
    assert code == 1
    assert fragment in assert_one_line_error(err)
    assert out == ""
    assert files_in(workdir) == before
    assert (workdir / "existing.json").read_text() == "keep me\n"


def test_loads_without_output_is_an_error(workdir, capsys):
    code, out, err = run(capsys, "loads", "naca2412", "--alpha", "4", *QUICK, "--fluid", "air",
                         "--speed", "3")
    assert code == 1
    assert "-o" in assert_one_line_error(err)
    assert out == "" and files_in(workdir) == []


def test_loads_usage_errors(workdir, capsys):
    assert_usage_error(["loads", "naca2412", "--alpha", "4", *QUICK, "--fluid", "air", "--speed",
                        "3", "--absolute", "--static-pressure", "1e5", "-o", "loads.json"],
                       capsys)
    assert files_in(workdir) == []


@pytest.mark.parametrize("argv, fragment", [
    (("--fluid", "air", "--density", "1.2", "--speed", "3"), "density"),  # one or the other
    (("--speed", "3"), "fluid"),  # no fluid at all
    (("--fluid", "air"), "speed"),  # no speed
    (("--fluid", "air", "--speed", "3", "--unit", "mm", "--chord", "0.3"), "chord"),
], ids=["fluid-and-density", "no-fluid", "no-speed", "unit-and-chord"])
def test_loads_refused_conditions(argv, fragment, workdir, capsys):
    code, out, err = run(capsys, "loads", "naca2412", "--alpha", "4", *QUICK, *argv,
                         "-o", "loads.json")
    assert code == 1
    assert fragment in assert_one_line_error(err)
    assert out == "" and files_in(workdir) == []


# ----------------------------------------------------------------------------- run and sweeps
STUDY_CASE = Path(__file__).resolve().parent.parent / "geometries" / "tender_study.toml"


def test_run_example_case_writes_everything_once(tmp_path, capsys):
    out = tmp_path / "study"
    code, stdout, err = run(capsys, "run", str(STUDY_CASE), "-o", str(out), "--workers", "1")
    assert code == 0, err
    names = {p.name for p in out.iterdir()}
    assert {"polars.csv", "polars.png", "cp_4deg.png", "front_foil_field.vtu",
            "front_foil_loads.json", "manifest.json"} <= names
    manifest = json.loads((out / "manifest.json").read_text())
    assert any(k.endswith("tender_front_foil.dat") for k in json.dumps(manifest).split('"'))
    rows = list(csv.DictReader(line for line in (out / "polars.csv").read_text().splitlines()
                               if not line.startswith("#")))
    # 6 sections (front foil, two NACA candidates, a family of three) x 15 angles
    assert len(rows) == 6 * 15
    before = (out / "polars.csv").read_bytes()
    code, _, err = run(capsys, "run", str(STUDY_CASE), "-o", str(out))
    assert code == 1 and "exists" in err and len(err.strip().splitlines()) == 1
    assert (out / "polars.csv").read_bytes() == before  # refused before anything was written


def test_compare_family_table_and_polar_figure(tmp_path, capsys):
    table, fig = tmp_path / "sweep.csv", tmp_path / "polars.png"
    code, stdout, err = run(capsys, "compare", "naca00{09..15:6}", "--alpha", "0:4:2",
                            "--panels", "80", "-o", str(table), "--plot", str(fig))
    assert code == 0, err
    rows = list(csv.DictReader(line for line in table.read_text().splitlines()
                               if not line.startswith("#")))
    assert [r["section"] for r in rows] == ["naca0009"] * 3 + ["naca0015"] * 3
    assert fig.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    # the table's cl are the printed ones (same computation, 5 decimals printed)
    printed = [float(row[2]) for row in tables(stdout)[0][1]]
    # printed to 5 decimals: equal to within half a unit of the last one
    assert printed == pytest.approx([float(r["cl"]) for r in rows], abs=5e-6)
