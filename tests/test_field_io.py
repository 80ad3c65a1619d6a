"""Flow-field files (.vtu, .xdmf, .csv) read back, atomic writing, and the points reader."""

import csv
import json
import importlib.util
import os
import sys
import types
import xml.etree.ElementTree as ET

import meshio
import numpy as np
import pytest

from panelflow.output.columns import sidecar_path, with_sidecar

import panelflow as pf
from panelflow.errors import InputError, OutputError
from panelflow.flow.field import FlowField, flow_field, grid_points
from panelflow.output.field_files import (FIELD_COLUMNS, FIELD_WRITERS, check_field_outputs,
                                read_points_csv, write_field)
from panelflow.geometry.sections import naca4
from panelflow.output.writers import CAUTION

ALPHAS = [4.0, 8.0]
NX, NY = 21, 15
MESH_EXTS = [".vtu", ".xdmf"]
ALL_EXTS = MESH_EXTS + [".csv"]
# The CSV holds 15 significant digits, so read-back values agree to ~5e-16 relative; 1e-12
# leaves room for the last digit's rounding in values near zero without hiding a wrong column.
CSV_RTOL, CSV_ATOL = 1e-12, 1e-14


@pytest.fixture(scope="module")
def bodies():
    # Demo layout: the tender's front hydrofoil section and a small rear stabiliser behind it.
    front = naca4("2412", n_points=81)
    rear = naca4("0012", n_points=41).scaled(0.4).translated(1.6, -0.25).renamed("stabiliser")
    return [front, rear]


@pytest.fixture(scope="module")
def system(bodies):
    return pf.analyse(bodies, [4.0], n_panels=60, error_estimate=False).fine.system


@pytest.fixture(scope="module")
def grid_field(system):
    pts, shape = grid_points((-0.5, 2.5, -0.6, 0.5), (NX, NY))
    field = flow_field(system, pts, ALPHAS, shape)
    # the checks on masked points below need some grid points inside the bodies
    assert field.inside.sum() >= 5
    return field


@pytest.fixture(scope="module")
def scattered_field(system):
    # two points inside the front foil, the rest outside
    pts = np.array([0.3 + 0.02j, 0.5 + 0.03j, -0.4 + 0.1j, 1.2 - 0.3j, 2.2 + 0.4j])
    field = flow_field(system, pts, ALPHAS)
    assert field.inside.tolist() == [True, True, False, False, False]
    return field


@pytest.fixture
def no_h5py(monkeypatch):
    """meshio 5.3's XDMF reader imports h5py even for inline XML data, which never uses it.

    Without h5py installed, an empty stand-in module lets it run; with h5py present nothing
    changes.
    """
    if importlib.util.find_spec("h5py") is None:
        monkeypatch.setitem(sys.modules, "h5py", types.ModuleType("h5py"))


def listing(folder):
    return sorted(os.listdir(folder))


def equal_nan(a, b):
    # vtu holds binary float64 and xdmf 17 significant digits: both round-trip exactly
    np.testing.assert_array_equal(np.asarray(a), np.asarray(b))


def expected_quads(nx, ny):
    quads = []
    for j in range(ny - 1):
        for i in range(nx - 1):
            k = j * nx + i
            quads.append([k, k + 1, k + 1 + nx, k + nx])
    return np.array(quads)


def cells_of(mesh, kind):
    blocks = [i for i, c in enumerate(mesh.cells) if c.type == kind]
    assert len(blocks) == 1, [c.type for c in mesh.cells]
    return blocks[0], mesh.cells[blocks[0]].data


def check_outline_lines(mesh, bodies, n_field):
    """Line cells form each outline's closed polygon, with body ids and the documented data."""
    b, lines = cells_of(mesh, "line")
    body = mesh.cell_data["body"][b]
    assert len(lines) == sum(len(o.polygon) for o in bodies)
    start = n_field
    for k, outline in enumerate(bodies):
        poly = outline.polygon
        mine = lines[body == k]
        assert len(mine) == len(poly)
        # each side joins consecutive polygon vertices, the last one back to the first
        np.testing.assert_array_equal(mesh.points[mine[:, 0], :2], poly)
        np.testing.assert_array_equal(mesh.points[mine[:, 1], :2], np.roll(poly, -1, axis=0))
        start += len(poly)
    extra = slice(n_field, None)
    assert np.all(np.isnan(mesh.point_data["velocity"][extra, :2]))
    assert np.all(np.isnan(mesh.point_data["cp"][extra]))
    assert np.all(mesh.point_data["inside"][extra] == 1)


# ---------------------------------------------------------------------------------- vtu / xdmf
@pytest.mark.parametrize("alpha_index", [0, 1])
@pytest.mark.parametrize("ext", MESH_EXTS)
def test_grid_mesh_round_trip(tmp_path, grid_field, bodies, ext, alpha_index, no_h5py):
    path = write_field(grid_field, tmp_path / f"field{ext}", bodies, alpha_index=alpha_index)
    mesh = meshio.read(path)
    f, k, n = grid_field, alpha_index, len(grid_field.points)
    assert len(mesh.points) == n + sum(len(o.polygon) for o in bodies)
    equal_nan(mesh.points[:n, 0], f.x)
    equal_nan(mesh.points[:n, 1], f.y)
    assert np.all(mesh.points[:, 2] == 0.0)

    b, quads = cells_of(mesh, "quad")
    assert len(quads) == (NX - 1) * (NY - 1)
    np.testing.assert_array_equal(quads, expected_quads(NX, NY))
    assert np.all(mesh.cell_data["body"][b] == -1)

    vel = mesh.point_data["velocity"]
    assert vel.shape == (len(mesh.points), 3)
    assert np.all(vel[:, 2] == 0.0)
    equal_nan(vel[:n, 0], f.u[k])
    equal_nan(vel[:n, 1], f.v[k])
    equal_nan(mesh.point_data["speed"][:n], f.speed[k])
    equal_nan(mesh.point_data["cp"][:n], f.cp[k])
    np.testing.assert_array_equal(mesh.point_data["inside"][:n], f.inside.astype(int))
    check_outline_lines(mesh, bodies, n)


@pytest.mark.parametrize("ext", MESH_EXTS)
def test_masked_points_flagged_and_nan(tmp_path, grid_field, ext, no_h5py):
    mesh = meshio.read(write_field(grid_field, tmp_path / f"field{ext}"))
    inside = mesh.point_data["inside"].astype(bool)
    np.testing.assert_array_equal(inside, grid_field.inside)
    for name in ("speed", "cp"):
        np.testing.assert_array_equal(np.isnan(mesh.point_data[name]), inside)
    # without outlines the mesh is the grid alone
    assert [c.type for c in mesh.cells] == ["quad"]


@pytest.mark.parametrize("ext", MESH_EXTS)
def test_scattered_points_without_outlines(tmp_path, scattered_field, ext, no_h5py):
    mesh = meshio.read(write_field(scattered_field, tmp_path / f"points{ext}"))
    assert [c.type for c in mesh.cells] == ["vertex"]
    verts = mesh.cells[0].data
    np.testing.assert_array_equal(verts.ravel(), np.arange(5))
    equal_nan(mesh.point_data["cp"], scattered_field.cp[0])


def test_scattered_points_with_outlines_vtu(tmp_path, scattered_field, bodies):
    mesh = meshio.read(write_field(scattered_field, tmp_path / "points.vtu", bodies))
    _, verts = cells_of(mesh, "vertex")
    np.testing.assert_array_equal(verts.ravel(), np.arange(5))
    equal_nan(mesh.point_data["velocity"][:5, 0], scattered_field.u[0])
    check_outline_lines(mesh, bodies, 5)


def test_scattered_points_with_outlines_xdmf(tmp_path, scattered_field, bodies):
    # meshio 5.3.5's reader does not skip the node count that the XDMF mixed topology puts after
    # a polyvertex id (its own writer writes it too), so this file is checked with ElementTree.
    path = write_field(scattered_field, tmp_path / "points.xdmf", bodies)
    grid = ET.parse(path).getroot().find("Domain/Grid")
    topo = grid.find("Topology")
    assert topo.get("TopologyType") == "Mixed"
    data = np.array(topo.find("DataItem").text.split(), int)
    # XDMF 3 mixed layout: polyvertex = 1, count 1, node; polyline = 2, count 2, two nodes
    sizes = [len(o.polygon) for o in bodies]
    expect = [[1, 1, i] for i in range(5)]
    start = 5
    for m in sizes:
        expect += [[2, 2, start + i, start + (i + 1) % m] for i in range(m)]
        start += m
    np.testing.assert_array_equal(data, np.concatenate(expect))
    assert int(topo.get("NumberOfElements")) == 5 + sum(sizes)
    body = np.array(grid.find("Attribute[@Name='body']/DataItem").text.split(), int)
    np.testing.assert_array_equal(body, np.repeat([-1, 0, 1], [5] + sizes))


def test_xdmf_is_one_text_file(tmp_path, grid_field, bodies):
    path = write_field(grid_field, tmp_path / "field.xdmf", bodies)
    assert listing(tmp_path) == ["field.xdmf"]  # no .h5 or .bin companion
    items = ET.parse(path).getroot().iter("DataItem")
    formats = {item.get("Format") for item in items}
    assert formats == {"XML"}


@pytest.mark.parametrize("ext", MESH_EXTS)
def test_mesh_files_carry_angle_and_caution(tmp_path, grid_field, ext):
    text = write_field(grid_field, tmp_path / f"field{ext}", alpha_index=1).read_text()
    head = text[:text.index("-->")]
    assert f"panelflow {pf.__version__}" in head
    assert "angle of attack 8 deg" in head
    assert "per unit freestream speed" in head
    assert CAUTION in head


# ---------------------------------------------------------------------------------- csv
def read_csv(path):
    """(notes, header, rows): one header row first, the notes in the file beside it."""
    with open(path, encoding="utf-8", newline="") as fh:
        lines = fh.read().splitlines()
    assert not lines[0].startswith("#")
    rows = list(csv.reader(lines))
    rec = json.loads(sidecar_path(path).read_text())
    return [*rec["notes"], rec["caution"]], rows[0], rows[1:]


@pytest.mark.parametrize("alpha_index", [0, 1])
@pytest.mark.parametrize("which", ["grid", "scattered"])
def test_csv_round_trip(tmp_path, grid_field, scattered_field, which, alpha_index):
    f = grid_field if which == "grid" else scattered_field
    k = alpha_index
    comments, header, rows = read_csv(write_field(f, tmp_path / "field.csv",
                                                  alpha_index=alpha_index))
    text = "\n".join(comments)
    assert f"panelflow {pf.__version__}" in text
    assert f"angle of attack {ALPHAS[k]:g} deg" in text
    assert "per unit freestream speed" in text
    assert CAUTION in text
    assert tuple(header) == FIELD_COLUMNS == ("x", "y", "u", "v", "cp", "inside")
    assert len(rows) == len(f.points)
    table = np.array([[float(v) for v in row[:5]] for row in rows])
    inside = np.array([int(row[5]) for row in rows])
    for col, ref in enumerate([f.x, f.y, f.u[k], f.v[k], f.cp[k]]):
        np.testing.assert_allclose(table[:, col], ref, rtol=CSV_RTOL, atol=CSV_ATOL)
    np.testing.assert_array_equal(inside, f.inside.astype(int))
    # masked points: flagged, and no velocity or Cp
    assert inside.sum() > 0
    np.testing.assert_array_equal(np.isnan(table[:, 2:]).any(axis=1), inside == 1)
    np.testing.assert_array_equal(np.isnan(table[:, 2:]).all(axis=1), inside == 1)


# ---------------------------------------------------------------------------------- atomicity
@pytest.mark.parametrize("ext", ALL_EXTS)
def test_existing_file_kept_without_overwrite(tmp_path, grid_field, ext):
    target = tmp_path / f"field{ext}"
    target.write_text("keep me\n")
    with pytest.raises(OutputError, match=f"field{ext}: exists"):
        write_field(grid_field, target)
    assert target.read_text() == "keep me\n"
    assert listing(tmp_path) == [target.name]


@pytest.mark.parametrize("ext", ALL_EXTS)
def test_overwrite_replaces_and_leaves_no_temporary(tmp_path, grid_field, ext):
    target = tmp_path / f"field{ext}"
    target.write_text("old\n")
    write_field(grid_field, target, overwrite=True)
    assert target.read_text() != "old\n"
    assert listing(tmp_path) == sorted(p.name for p in with_sidecar(target))


def failing_meshio_write(exc):
    def write(filename, *args, **kwargs):
        with open(filename, "w") as fh:
            fh.write("<VTKFile half written")  # a partial file, as a crash would leave
        raise exc
    return write


@pytest.mark.parametrize("existing", [False, True])
def test_failed_meshio_write_leaves_target_untouched(tmp_path, grid_field, monkeypatch,
                                                     existing):
    target = tmp_path / "field.vtu"
    if existing:
        target.write_text("previous result\n")
    monkeypatch.setattr(meshio, "write", failing_meshio_write(OSError(28, "No space left")))
    with pytest.raises(OutputError, match="field.vtu: cannot write"):
        write_field(grid_field, target, overwrite=True)
    if existing:
        assert target.read_text() == "previous result\n"
        assert listing(tmp_path) == ["field.vtu"]
    else:
        assert listing(tmp_path) == []


def test_unexpected_meshio_error_propagates_and_cleans_up(tmp_path, grid_field, monkeypatch):
    monkeypatch.setattr(meshio, "write", failing_meshio_write(RuntimeError("bug")))
    with pytest.raises(RuntimeError, match="bug"):
        write_field(grid_field, tmp_path / "field.vtu")
    assert listing(tmp_path) == []


@pytest.mark.parametrize("ext", ALL_EXTS)
def test_failed_rename_leaves_target_untouched(tmp_path, grid_field, monkeypatch, ext):
    target = tmp_path / f"field{ext}"
    target.write_text("previous result\n")

    def refuse(*args, **kwargs):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr(os, "replace", refuse)
    with pytest.raises(OutputError, match=f"field{ext}: cannot write"):
        write_field(grid_field, target, overwrite=True)
    assert target.read_text() == "previous result\n"
    assert listing(tmp_path) == [target.name]


# ---------------------------------------------------------------------------------- bad calls
def test_unknown_format_and_missing_folder(tmp_path, grid_field):
    with pytest.raises(OutputError, match=r"field\.png: unknown flow-field format \.png"):
        write_field(grid_field, tmp_path / "field.png")
    with pytest.raises(OutputError, match="does not exist"):
        write_field(grid_field, tmp_path / "nowhere" / "field.csv")
    with pytest.raises(OutputError, match="named twice"):
        check_field_outputs([tmp_path / "a.vtu", tmp_path / "a.vtu"])
    assert sorted(FIELD_WRITERS) == [".csv", ".vtu", ".xdmf"]
    assert listing(tmp_path) == []


@pytest.mark.parametrize("alpha_index, message", [
    (2, "alpha_index 2 out of range: the field holds 2 angles"),
    (-1, "alpha_index -1 out of range"),
    (0.5, "alpha_index must be an integer"),
])
def test_bad_alpha_index(tmp_path, grid_field, alpha_index, message):
    with pytest.raises(InputError, match=message):
        write_field(grid_field, tmp_path / "field.csv", alpha_index=alpha_index)
    assert listing(tmp_path) == []


def test_grid_shape_must_match_points(tmp_path, scattered_field):
    f = scattered_field
    wrong = FlowField(f.points.copy(), f.alpha_deg.copy(), f.u.copy(), f.v.copy(), f.cp.copy(),
                      f.inside.copy(), (2, 3))
    with pytest.raises(InputError, match=r"shape \(2, 3\) does not match its 5 points"):
        write_field(wrong, tmp_path / "field.vtu")
    assert listing(tmp_path) == []


# ---------------------------------------------------------------------------------- points in
GOOD_POINTS = {
    "header-commas": "x,y\n0.5,0.1\n1.5,-0.2\n2,0\n",
    "no-header-blanks": "0.5 0.1\n1.5\t-0.2\n2 0\n",
    "comments-blank-lines": "# probe points near the stabiliser\n\nx y  # header\n0.5 0.1\n\n"
                            "1.5 -0.2 # below\n2 0\n",
    "spaces-around-commas": "x , y\n 0.5 , 0.1\n1.5, -0.2\n2.0e0 ,0\n",
    "crlf-bom": "\ufeffX,Y\r\n0.5,0.1\r\n1.5,-0.2\r\n2,0\r\n",
}


@pytest.mark.parametrize("name", sorted(GOOD_POINTS))
def test_read_points_good(tmp_path, name):
    path = tmp_path / "probes.csv"
    path.write_bytes(GOOD_POINTS[name].encode("utf-8"))
    pts = read_points_csv(path)
    assert pts.dtype == complex
    # exact: the decimal text parses to the same doubles as the literals
    np.testing.assert_array_equal(pts, [0.5 + 0.1j, 1.5 - 0.2j, 2.0 + 0.0j])


BAD_POINTS = [
    ("letters", "x,y\n0.5,0.1\n0.7,abc\n", r"line 3: 'abc' is not a number"),
    ("header-late", "0.5,0.1\nx,y\n", r"line 2: 'x' is not a number"),
    ("three-columns", "0.5,0.1\n# fine\n1,2,3\n", r"line 3: expected 2 values \(x, y\), found 3"),
    ("one-column", "0.5 0.1\n0.7\n", r"line 2: expected 2 values \(x, y\), found 1"),
    ("empty-value", "0.5,0.1\n0.7,\n", r"line 2: an empty value"),
    ("nan", "0.5,0.1\n\nnan,0.2\n", r"line 3: coordinates must be finite numbers"),
    ("inf", "0.5,-inf\n", r"line 1: coordinates must be finite numbers"),
    ("empty", "", r"no points found"),
    ("comments-only", "# nothing here\nx,y\n", r"no points found"),
]


@pytest.mark.parametrize("name, text, message", BAD_POINTS, ids=[b[0] for b in BAD_POINTS])
def test_read_points_bad(tmp_path, name, text, message):
    path = tmp_path / f"{name}.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=f"{name}\\.csv: {message}"):
        read_points_csv(path)


def test_read_points_missing_file(tmp_path):
    with pytest.raises(InputError, match=r"absent\.csv: no such file"):
        read_points_csv(tmp_path / "absent.csv")


def test_points_file_drives_a_field(tmp_path, system):
    """The points read back give the same field as the points written."""
    pts = np.array([-0.4 + 0.3j, 1.2 - 0.3j])
    path = tmp_path / "probes.csv"
    path.write_text("x,y\n" + "".join(f"{float(p.real)!r},{float(p.imag)!r}\n" for p in pts))
    read = read_points_csv(path)
    np.testing.assert_array_equal(read, pts)  # repr round-trips floats exactly
    f = flow_field(system, read, [4.0])
    assert f.shape == (2,) and not f.inside.any()
