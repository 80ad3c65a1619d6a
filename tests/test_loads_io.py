"""Load files: every format written and read back (json, csv, meshio.read), cautions in every
header, no overwriting, and the example structural script run on a JSON export.

Values are written with full round-trip precision (Python's shortest repr in JSON and CSV,
17 significant digits in the Abaqus file, raw float64 in the VTU), so read-back values must be
equal exactly; the tolerance 0 is the check.
"""

import csv
import importlib.util
import io
import json
from pathlib import Path

import meshio
import numpy as np
import pytest

from panelflow.output.columns import sidecar_path

import panelflow as pf
from panelflow.errors import OutputError
from panelflow.conditions.fluids import Conditions, get_fluid
from panelflow.loads.section import LOAD_CAUTIONS, StructuralNodes, equilibrium_text, section_loads
from panelflow.output.load_files import (LOAD_WRITERS, check_load_outputs, companion_path, load_nodes,
                                write_loads)

ROOT = Path(__file__).resolve().parent.parent
HINGE = (1.02, -0.05)  # outline units: just ahead of the demo flap's leading edge


@pytest.fixture(scope="module")
def geometry():
    outlines = pf.load_outlines(str(ROOT / "geometries" / "front_foil_with_flap.dat"))
    return outlines, pf.analyse(outlines, [4.0], error_estimate=False)


@pytest.fixture(scope="module", params=["panel-nodes", "structural-nodes"])
def loads(request, geometry):
    outlines, analysis = geometry
    cond = Conditions(get_fluid("sea-water"), 6.0, chord=0.25, span=1.2)
    nodes = None
    if request.param == "structural-nodes":
        pts = np.vstack([o.polygon[::2] for o in outlines])
        nodes = StructuralNodes(np.arange(1, len(pts) + 1) * 10 + 5, pts, "fe-nodes.csv")
    return section_loads(analysis, cond, about=[HINGE], nodes=nodes)


def comment_lines(text: str, marker: str) -> str:
    return "\n".join(line for line in text.splitlines() if line.startswith(marker))


def assert_cautions(text: str):
    for caution in LOAD_CAUTIONS:
        assert caution in text


def data_rows(text: str):
    # exactly one header row, nothing before it: a spreadsheet opens the file as it is
    assert not text.startswith("#")
    return list(csv.reader(io.StringIO(text)))


def notes_of(path) -> str:
    """The notes written beside a CSV file (cautions, conditions, totals) as one text."""
    rec = json.loads(sidecar_path(path).read_text())
    assert rec["table"] == path.name
    return "\n".join([*rec["notes"], rec["caution"], *rec.get("cautions", [])])


# ------------------------------------------------------------------ read back
def test_json_read_back(tmp_path, loads):
    [path] = write_loads(loads, tmp_path / "loads.json")
    data = json.loads(path.read_text())
    assert data["cautions"][:len(LOAD_CAUTIONS)] == list(LOAD_CAUTIONS)
    assert data["units"]["force"] == "N" and data["units"]["length"] == "m"
    assert data["totals"]["lift"] == loads.lift and data["totals"]["moment"] == loads.moment
    assert data["totals"]["drag"] == loads.drag
    assert data["totals"]["moments_about"][0]["moment"] == loads.moments_about[0]
    assert data["equilibrium"]["ok"] and data["equilibrium"]["max_relative"] < 1e-9
    assert data["conditions"]["dynamic_pressure"] == loads.dynamic_pressure
    for rec, body in zip(data["bodies"], loads.bodies):
        assert rec["name"] == body.name
        for key in ("x", "y", "fx", "fy", "pressure"):
            np.testing.assert_array_equal(rec["nodes"][key], getattr(body, key))
        np.testing.assert_array_equal(rec["panels"]["pressure"], body.panel_pressure)
        np.testing.assert_array_equal(rec["panels"]["x"], body.panel_x)
        assert ("structural_nodes" in rec) == (loads.transfer is not None)
    if loads.transfer is not None:
        for rec, s in zip(data["bodies"], loads.transfer.bodies):
            np.testing.assert_array_equal(rec["structural_nodes"]["id"], s.ids)
            np.testing.assert_array_equal(rec["structural_nodes"]["fx"], s.fx)
        assert data["transfer"]["moment_relative"] == loads.transfer.moment_relative


def test_csv_read_back(tmp_path, loads):
    [path, notes] = write_loads(loads, tmp_path / "loads.csv")
    assert notes == sidecar_path(path)
    text = path.read_text()
    assert_cautions(notes_of(path))
    rows = data_rows(text)
    assert rows[0] == ["body", "node", "x [m]", "y [m]", "fx [N]", "fy [N]"]
    expected = [(name, int(i), float(x), float(y), float(fx), float(fy))
                for name, ids, xs, ys, fxs, fys, _ in load_nodes(loads)
                for i, x, y, fx, fy in zip(ids, xs, ys, fxs, fys)]
    got = [(r[0], int(r[1]), *map(float, r[2:])) for r in rows[1:]]
    assert got == expected
    if loads.transfer is not None:  # keyed by the mesh's own ids
        assert {r[1] for r in got} == {int(i) for s in loads.transfer.bodies for i in s.ids}


def test_vtu_read_back(tmp_path, loads):
    [path] = write_loads(loads, tmp_path / "loads.vtu")
    assert_cautions(path.read_text())
    mesh = meshio.read(path)
    x = np.concatenate([b.x for b in loads.bodies])
    fy = np.concatenate([b.fy for b in loads.bodies])
    np.testing.assert_array_equal(mesh.points[:, 0], x)
    np.testing.assert_array_equal(mesh.point_data["force"][:, 1], fy)
    np.testing.assert_array_equal(mesh.cell_data["pressure"][0],
                                  np.concatenate([b.panel_pressure for b in loads.bodies]))
    assert mesh.cells[0].type == "line" and len(mesh.cells[0].data) == len(x)


def test_inp_and_companion_read_back(tmp_path, loads):
    paths = write_loads(loads, tmp_path / "section.inp")
    assert paths == [tmp_path / "section.inp", tmp_path / "section.loads.csv",
                     tmp_path / "section.loads.about.json"]
    assert_cautions(comment_lines(paths[0].read_text(), "**"))
    assert_cautions(notes_of(paths[1]))
    mesh = meshio.read(paths[0])
    groups = load_nodes(loads)
    xy = np.vstack([np.stack([g[2], g[3]], axis=1) for g in groups])
    np.testing.assert_array_equal(mesh.points[:, :2], xy)
    assert mesh.cells[0].type == "line" and len(mesh.cells[0].data) == len(xy)
    assert len(mesh.point_sets) == len(groups)
    rows = data_rows(paths[1].read_text())
    assert rows[0] == ["node", "id", "body", "x [m]", "y [m]", "fx [N]", "fy [N]"]
    node = np.array([int(r[0]) for r in rows[1:]])
    ids = np.array([int(r[1]) for r in rows[1:]])
    fx = np.array([float(r[5]) for r in rows[1:]])
    # keyed by the .inp node numbers: row k is point k - 1 of the mesh
    np.testing.assert_array_equal(node, np.arange(1, len(xy) + 1))
    np.testing.assert_array_equal(np.array([float(r[3]) for r in rows[1:]]), mesh.points[:, 0])
    np.testing.assert_array_equal(fx, np.concatenate([g[4] for g in groups]))
    np.testing.assert_array_equal(ids, np.concatenate([g[1] for g in groups]))


def test_json_header_and_check_text_name_both_lifts(loads):
    text = equilibrium_text(loads)
    assert "lift from pressure integration" in text and "lift from circulation" in text
    assert "within tolerance" in text and "NOT" not in text
    assert text.count("\n") >= 5


# ------------------------------------------------------------------ never overwrite
@pytest.mark.parametrize("ext", sorted(LOAD_WRITERS))
def test_existing_file_is_kept(tmp_path, loads, ext):
    target = tmp_path / f"out{ext}"
    target.write_text("keep me")
    before = sorted(p.name for p in tmp_path.iterdir())
    with pytest.raises(OutputError, match="exists; not overwritten"):
        write_loads(loads, target)
    assert target.read_text() == "keep me"
    assert sorted(p.name for p in tmp_path.iterdir()) == before  # no temporary or companion
    write_loads(loads, target, overwrite=True)
    assert target.read_text() != "keep me"


def test_existing_companion_stops_the_mesh(tmp_path, loads):
    companion = companion_path(tmp_path / "m.inp")
    companion.write_text("keep me")
    with pytest.raises(OutputError, match="m.loads.csv: exists"):
        write_loads(loads, tmp_path / "m.inp")
    assert not (tmp_path / "m.inp").exists() and companion.read_text() == "keep me"


@pytest.mark.parametrize("names, words", [
    (["a.xlsx"], "unknown load file format .xlsx"),
    (["a.inp", "a.loads.csv"], "named twice as an output (it is the companion"),
    (["a.json", "a.json"], "named twice"),
    (["missing/a.json"], "does not exist"),
])
def test_check_load_outputs(tmp_path, names, words):
    with pytest.raises(OutputError) as exc:
        check_load_outputs([tmp_path / n for n in names])
    assert words in str(exc.value) and "\n" not in str(exc.value)
    assert not any(tmp_path.iterdir())


# ------------------------------------------------------------------ the example structural script
def _script():
    spec = importlib.util.spec_from_file_location("structural_example",
                                                  ROOT / "scripts" / "structural_example.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_example_script_imports_quietly(capsys):
    _script()
    assert capsys.readouterr() == ("", "")


def test_example_script_on_a_json_export(tmp_path, loads, capsys):
    script = _script()
    [path] = write_loads(loads, tmp_path / "loads.json")
    data = script.read_load_file(path)
    checks = script.resultant_checks(data)
    assert [c[0] for c in checks[:3]] == ["lift", "drag", "moment"]
    assert max(c[3] for c in checks) < 1e-9  # the same sums in another order: rounding
    flap = script.find_body(data, loads.bodies[1].name)
    # the flap's hinge moment, by the script and by the export's own per-body moment about HINGE
    hinge_m = loads.length_scale * np.asarray(HINGE)
    assert script.hinge_moment(flap, hinge_m) == pytest.approx(loads.bodies[1].moments_about[0],
                                                               rel=1e-12)  # rounding
    # a rib clamped at the spar: the free parts ahead of and behind the spar together carry the
    # whole body's load, which the spar reaction balances
    rib = script.rib_diagram(data["bodies"][0], 0.35, np.array([0.35, 0.3500001]))
    main = loads.bodies[0]
    e = (main.trailing_edge - main.leading_edge) / main.chord
    normal = np.array([-e[1], e[0]])
    total_n = main.fx.sum() * normal[0] + main.fy.sum() * normal[1]
    # no node lies between the two cuts, so ahead + behind = all (rounding)
    assert rib["shear"].sum() == pytest.approx(total_n, rel=1e-12)
    assert rib["reaction_force"][0] == pytest.approx(-total_n, rel=1e-12)
    assert script.main([str(path), "--hinge", f"{hinge_m[0]},{hinge_m[1]}",
                        "--body", loads.bodies[1].name]) == 0
    out = capsys.readouterr().out
    assert "hinge moment" in out and "spar reaction" in out and LOAD_CAUTIONS[0] in out


def test_example_script_rejects_loads_that_do_not_add_up(tmp_path, loads, capsys):
    script = _script()
    [path] = write_loads(loads, tmp_path / "loads.json")
    data = json.loads(path.read_text())
    data["bodies"][0]["nodes"]["fy"] = [1.001 * v for v in data["bodies"][0]["nodes"]["fy"]]
    path.write_text(json.dumps(data))
    assert script.main([str(path)]) == 1
    assert "do not add up" in capsys.readouterr().err
