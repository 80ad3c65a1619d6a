"""Outline input: coordinate tables, meshes, specs, the registry, and the table writer."""

import importlib.util
from pathlib import Path

import csv
import dataclasses

import meshio

import numpy as np
import pytest

import panelflow as pf

from panelflow.errors import GeometryError, InputError, OutputError
from panelflow.geometry.readers import (READERS, load_outlines, read_outline_mesh, read_outline_table,
                               register_reader, write_outline_table)
from panelflow.geometry.sections import naca4

ROOT = Path(__file__).resolve().parent.parent
# Written with 10 decimals, so read-back points agree to 1e-10 (rounding of the text).
TEXT_TOL = 1e-9


def reference(closed=True, n=61):
    return naca4("2412", n_points=n, closed_te=closed)


def surfaces(outline):
    pts = outline.points
    k = (len(pts) + 1) // 2
    return pts[:k][::-1], pts[k - 1:]  # upper, lower; both LE -> TE, sharing the LE point


def rows(pts, sep=" "):
    return [f"{x:.10f}{sep}{y:.10f}" for x, y in pts]


def write(tmp_path, name, lines):
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def same_points(outline, ref):
    assert outline.kind == ref.kind
    np.testing.assert_allclose(outline.points, ref.points, atol=TEXT_TOL)


# ---------------------------------------------------------------------------------- layouts
@pytest.mark.parametrize("closed", [True, False])
@pytest.mark.parametrize("reverse", [False, True])
def test_layout_a_both_directions(tmp_path, closed, reverse):
    ref = reference(closed)
    pts = ref.points[::-1] if reverse else ref.points
    (o,) = read_outline_table(write(tmp_path, "foil.dat", rows(pts)))
    same_points(o, ref)


@pytest.mark.parametrize("closed", [True, False])
@pytest.mark.parametrize("style", ["count", "count-blank", "blank", "jump", "te-first"])
def test_layout_b(tmp_path, closed, style):
    ref = reference(closed)
    up, lo = surfaces(ref)
    if style == "count":
        lines = [f"{len(up)}. {len(lo)}.", *rows(up), *rows(lo)]
    elif style == "count-blank":  # the layout with blank lines round each block
        lines = [f"{len(up)} {len(lo)}", "", *rows(up), "", *rows(lo)]
    elif style == "blank":
        lines = [*rows(up), "", *rows(lo)]
    elif style == "jump":  # x runs LE -> TE twice, nothing in between
        lines = [*rows(up), *rows(lo)]
    else:  # both surfaces listed from the trailing edge
        lines = [*rows(up[::-1]), *rows(lo[::-1])]
    (o,) = read_outline_table(write(tmp_path, "foil.dat", ["Foil", *lines]))
    same_points(o, ref)
    assert o.name == "Foil"


def test_layout_b_lower_first_gives_same_loop(tmp_path):
    ref = reference()
    up, lo = surfaces(ref)
    (o,) = read_outline_table(write(tmp_path, "f.dat", [*rows(lo), "", *rows(up)]))
    same_points(o, ref)  # orientation is normalised, so the order of the surfaces is free


def test_layout_b_leading_edge_not_duplicated(tmp_path):
    ref = reference()
    up, lo = surfaces(ref)
    (o,) = read_outline_table(write(tmp_path, "f.dat", [*rows(up), "", *rows(lo)]))
    assert len(o.points) == len(up) + len(lo) - 1  # the shared LE point once
    le = np.flatnonzero(np.all(np.abs(o.points) < 1e-12, axis=1))
    assert len(le) == 1


@pytest.mark.parametrize("sep", [" ", "  ", "\t", ",", ", ", " , "])
def test_separators(tmp_path, sep):
    ref = reference()
    (o,) = read_outline_table(write(tmp_path, "f.csv", rows(ref.points, sep)))
    same_points(o, ref)


def test_title_comments_and_blank_lines(tmp_path):
    ref = reference()
    body = rows(ref.points)
    body[3] += "   # a trailing comment"
    lines = ["# header comment", "", "  # indented comment", "Front foil, trial 3", "# more",
             *body[:10], "# in the middle", *body[10:], "", "# trailing comment", ""]
    (o,) = read_outline_table(write(tmp_path, "trial.dat", lines))
    same_points(o, ref)
    assert o.name == "Front foil, trial 3"
    assert str(tmp_path / "trial.dat") in o.source


@pytest.mark.parametrize("header, name", [(None, "stem_name"), ("x y", "stem_name"),
                                          ("x_mm,y_mm", "stem_name"), ("Strut", "Strut")])
def test_name_from_title_or_stem(tmp_path, header, name):
    lines = ([header] if header else []) + rows(reference().points)
    (o,) = read_outline_table(write(tmp_path, "stem_name.txt", lines))
    assert o.name == name


def test_column_header_under_title(tmp_path):
    lines = ["Mast", "x, y", *rows(reference().points)]
    (o,) = read_outline_table(write(tmp_path, "m.csv", lines))
    assert o.name == "Mast"


def test_first_line_single_number_is_a_title(tmp_path):
    (o,) = read_outline_table(write(tmp_path, "t.dat", ["2412", *rows(reference().points)]))
    assert o.name == "2412"


def test_blunt_layout_a(tmp_path):
    ref = reference(closed=False)
    (o,) = read_outline_table(write(tmp_path, "b.dat", rows(ref.points)))
    assert o.kind == "blunt"
    # open-TE base of the 12 % section: 0.021 t = 0.00252 (NACA Report 460 coefficients)
    assert o.trailing_edge.gap == pytest.approx(0.00252, abs=TEXT_TOL)


def test_count_line_that_does_not_fit(tmp_path):
    up, lo = surfaces(reference())
    path = write(tmp_path, "c.dat", ["Foil", "61 70", *rows(up), *rows(lo)])
    with pytest.raises(InputError) as err:
        read_outline_table(path)
    assert str(path) in str(err.value) and "line 2" in str(err.value)


def test_integer_first_point_is_not_a_count_line(tmp_path):
    # a foil drawn in mm whose trailing edge is at (150, 3): whole numbers that fit the points
    pts = 150.0 * reference(closed=False).points + [0.0, 3.0 - 150.0 * 0.00126]
    pts[0] = [150.0, 3.0]
    (o,) = read_outline_table(write(tmp_path, "mm.dat", rows(pts)))
    assert len(o.points) == len(pts)


# ---------------------------------------------------------------------------------- several bodies
def two_body_lines():
    main = reference()
    flap = reference().scaled(0.3).translated(1.05, -0.04)
    return main, flap, ["# two bodies", "Main element", *rows(main.points), "",
                        "# the flap follows", "Flap", *rows(flap.points)]


def test_two_bodies(tmp_path):
    main, flap, lines = two_body_lines()
    bodies = read_outline_table(write(tmp_path, "pair.dat", lines))
    assert [b.name for b in bodies] == ["Main element", "Flap"]
    same_points(bodies[0], main)
    same_points(bodies[1], flap)


def test_two_bodies_layout_b_and_duplicate_titles(tmp_path):
    ref = reference()
    up, lo = surfaces(ref)
    block = [f"{len(up)} {len(lo)}", "", *rows(up), "", *rows(lo)]
    lines = ["Wing", *block, "", "Wing", *block]
    bodies = read_outline_table(write(tmp_path, "w.dat", lines))
    assert [b.name for b in bodies] == ["Wing", "Wing-2"]
    for b in bodies:
        same_points(b, ref)


def test_untitled_first_body_gets_stem_suffix(tmp_path):
    ref = reference()
    lines = [*rows(ref.points), "", "Second", *rows(ref.translated(2, 0).points)]
    bodies = read_outline_table(write(tmp_path, "set.dat", lines))
    assert [b.name for b in bodies] == ["set-1", "Second"]


def test_second_body_geometry_error_names_file_and_body(tmp_path):
    lines = ["A", *rows(reference().points), "", "B", "0 0", "1 0", "0.5 0.1"]
    path = write(tmp_path, "bad2.dat", lines)
    with pytest.raises(GeometryError) as err:
        read_outline_table(path)
    msg = str(err.value)
    assert msg.startswith(str(path)) and "'B'" in msg


# ---------------------------------------------------------------------------------- errors
def error_message(path, kind=InputError):
    with pytest.raises(kind) as err:
        load_outlines(str(path))
    msg = str(err.value)
    assert msg.startswith(str(path)), msg
    return msg


def test_missing_file(tmp_path):
    msg = error_message(tmp_path / "nowhere.dat")
    assert "no such file" in msg and "naca0012" in msg  # hints at the spec syntax


def test_folder_is_not_a_file(tmp_path):
    assert "folder" in error_message(tmp_path)


@pytest.mark.parametrize("content", ["", "\n\n", "# only comments\n", "Just a title\n# and\n"])
def test_empty_file(tmp_path, content):
    path = tmp_path / "empty.dat"
    path.write_text(content)
    assert "no points" in error_message(path)


def test_title_without_points_in_second_body(tmp_path):
    lines = ["A", *rows(reference().points), "", "B"]
    path = write(tmp_path, "t.dat", lines)
    msg = error_message(path)
    assert "line 64" in msg and "no points" in msg


def test_non_numeric_line(tmp_path):
    lines = ["Foil", *rows(reference().points[:5]), "0.5 zero", *rows(reference().points[5:])]
    msg = error_message(write(tmp_path, "nn.dat", lines))
    assert "line 7" in msg and "'zero'" in msg


def test_second_word_line_without_blank_is_an_error(tmp_path):
    lines = ["Foil", "Another title", *rows(reference().points)]
    assert "line 2" in error_message(write(tmp_path, "tt.dat", lines))


@pytest.mark.parametrize("bad, found", [("0.5 0.01 0.0", "found 3"), ("0.5", "found 1")])
def test_wrong_number_of_values(tmp_path, bad, found):
    lines = [*rows(reference().points[:5]), bad, *rows(reference().points[5:])]
    msg = error_message(write(tmp_path, "wn.dat", lines))
    assert "line 6" in msg and found in msg


@pytest.mark.parametrize("bad", ["0.5 nan", "inf 0.0", "0.5, -Infinity", "NaN NaN"])
def test_not_finite(tmp_path, bad):
    lines = ["Foil", *rows(reference().points[:5]), bad, *rows(reference().points[5:])]
    msg = error_message(write(tmp_path, "nan.dat", lines))
    assert "line 7" in msg and "finite" in msg


@pytest.mark.parametrize("n", [1, 3, 4])
def test_too_few_points(tmp_path, n):
    pts = np.array([[1.0, 0.0], [0.5, 0.05], [0.0, 0.0], [0.5, -0.05]])[:n]
    msg = error_message(write(tmp_path, "few.dat", rows(pts)), GeometryError)
    assert "at least 5" in msg


def test_no_area(tmp_path):
    pts = np.column_stack([np.linspace(0, 1, 9), np.zeros(9)])
    assert "no area" in error_message(write(tmp_path, "line.dat", rows(pts)), GeometryError)


@pytest.mark.parametrize("data", [b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR",
                                  bytes(range(256)),
                                  b"\xff\xfe\x01\x02\x03garbage\x04"])
def test_binary_file(tmp_path, data):
    path = tmp_path / "picture.dat"
    path.write_bytes(data)
    assert "binary" in error_message(path)


def test_latin1_title_is_text(tmp_path):
    path = tmp_path / "l1.dat"
    path.write_bytes("Profil \xe9t\xe9\n".encode("latin-1") +
                     "\n".join(rows(reference().points)).encode())
    (o,) = read_outline_table(path)
    assert o.name == "Profil \xe9t\xe9"


# ---------------------------------------------------------------------------------- meshes
def loop_cells(n, start=0):
    i = np.arange(n) + start
    return np.column_stack([i, np.roll(i, -1)])


@pytest.mark.parametrize("ext, fmt", [(".vtu", None), (".vtk", None), (".msh", "gmsh22"),
                                      (".inp", None)])
def test_mesh_round_trip(tmp_path, ext, fmt):
    ref = reference()
    poly = ref.polygon  # distinct vertices
    path = tmp_path / f"foil{ext}"
    mesh = meshio.Mesh(np.column_stack([poly, np.zeros(len(poly))]),
                       [("line", loop_cells(len(poly)))])
    meshio.write(path, mesh, file_format=fmt) if fmt else meshio.write(path, mesh)
    (o,) = load_outlines(str(path))
    assert o.name == "foil"
    np.testing.assert_allclose(o.points, ref.points, atol=1e-6)  # formats store float32 or text


def test_mesh_two_loops_shuffled_segments(tmp_path):
    ref = reference()
    a = ref.polygon
    b = ref.translated(1.2, -0.1).scaled(0.5).polygon
    pts = np.vstack([a, b])
    cells = np.vstack([loop_cells(len(a)), loop_cells(len(b), len(a))[:, ::-1]])
    cells = cells[np.random.default_rng(1).permutation(len(cells))]
    path = tmp_path / "pair.vtu"
    meshio.write(path, meshio.Mesh(pts, [("line", cells)]))
    bodies = read_outline_mesh(path)
    assert [o.name for o in bodies] == ["pair-1", "pair-2"]
    np.testing.assert_allclose(bodies[0].points, ref.points, atol=1e-9)
    assert bodies[1].chord == pytest.approx(0.5 * ref.chord, rel=1e-9)


def test_mesh_duplicate_points_per_segment(tmp_path):
    poly = reference().polygon
    seg_a, seg_b = poly, np.roll(poly, -1, axis=0)
    pts = np.vstack([seg_a, seg_b])  # every segment has its own two points
    cells = np.column_stack([np.arange(len(poly)), np.arange(len(poly)) + len(poly)])
    path = tmp_path / "dup.vtu"
    meshio.write(path, meshio.Mesh(pts, [("line", cells)]))
    (o,) = read_outline_mesh(path)
    np.testing.assert_allclose(o.points, reference().points, atol=1e-9)


def test_mesh_open_chain(tmp_path):
    poly = reference().polygon
    path = tmp_path / "open.vtu"
    meshio.write(path, meshio.Mesh(poly, [("line", loop_cells(len(poly))[:-1])]))
    msg = error_message(path)
    assert "closed" in msg and "open end" in msg


def test_mesh_without_line_cells(tmp_path):
    path = tmp_path / "tri.vtu"
    meshio.write(path, meshio.Mesh(np.array([[0, 0], [1, 0], [0, 1.0]]),
                                   [("triangle", np.array([[0, 1, 2]]))]))
    assert "no line cells" in error_message(path)


def test_mesh_not_planar(tmp_path):
    poly = reference().polygon
    pts = np.column_stack([poly, np.linspace(0, 1, len(poly))])
    path = tmp_path / "twisted.vtu"
    meshio.write(path, meshio.Mesh(pts, [("line", loop_cells(len(poly)))]))
    assert "x-y plane" in error_message(path)


def test_mesh_unreadable(tmp_path):
    path = tmp_path / "junk.vtu"
    path.write_text("this is not a mesh\n")
    assert "cannot read as a mesh" in error_message(path)


# ---------------------------------------------------------------------------------- registry
@pytest.mark.parametrize("ext", [".dat", ".txt", ".csv", ".xy", ".DAT"])
def test_table_extensions(tmp_path, ext):
    (o,) = load_outlines(str(write(tmp_path, f"foil{ext}", rows(reference().points))))
    same_points(o, reference())


@pytest.mark.parametrize("ext", [".vtu", ".vtk", ".msh", ".obj", ".inp", ".xdmf"])
def test_mesh_extensions_registered(ext):
    assert READERS[ext] is read_outline_mesh


@pytest.mark.parametrize("name", ["foil.coords", "foil"])
def test_unknown_extension_tries_table(tmp_path, name):
    (o,) = load_outlines(str(write(tmp_path, name, rows(reference().points))))
    same_points(o, reference())


def test_register_reader(tmp_path, monkeypatch):
    monkeypatch.setitem(READERS, ".foil", None)  # undone after the test
    register_reader("FOIL", lambda p: [naca4("0012").renamed(p.stem)])
    path = tmp_path / "custom.foil"
    path.write_text("anything")
    (o,) = load_outlines(str(path))
    assert o.name == "custom"


def test_load_outlines_spec_and_path_like_spec(tmp_path, monkeypatch):
    (o,) = load_outlines("naca0012")
    assert o.name == "naca0012" and o.source == "naca0012"
    monkeypatch.chdir(tmp_path)
    write(tmp_path, "naca0012", ["My own", *rows(reference().points)])
    (f,) = load_outlines("./naca0012")  # a folder in front makes it a path
    assert f.name == "My own"


# ---------------------------------------------------------------------------------- writer
@pytest.mark.parametrize("ext", [".dat", ".csv"])
@pytest.mark.parametrize("spec", ["naca2412", "naca0012-closed", "circle:0.5",
                                  "karman-trefftz:-0.1,0.05,10"])
def test_write_and_read_back(tmp_path, spec, ext):
    (o,) = load_outlines(spec)
    path = write_outline_table(o, tmp_path / f"out{ext}")
    text = path.read_text()
    # panelflow's own layout: one header row, then body, point number, x, y per row
    assert text.splitlines()[0] == "body,point,x,y"
    rows = list(csv.reader(text.splitlines()[1:]))
    assert [r[0] for r in rows] == [spec] * len(o.points)
    assert [int(r[1]) for r in rows] == list(range(1, len(o.points) + 1))
    (back,) = read_outline_table(path)
    assert back.name == o.name and back.kind == o.kind
    np.testing.assert_allclose(back.points, o.points, atol=1e-11)  # 12 significant digits
    assert [p.name for p in tmp_path.iterdir()] == [f"out{ext}"]  # no temp file left


def test_several_bodies_and_a_unit_round_trip(tmp_path):
    main_body = pf.load_outlines("naca2412")[0].renamed("main, port")
    flap_body = pf.load_outlines("naca0012")[0].scaled(0.3).translated(1.02, -0.05)
    mm = [dataclasses.replace(b.scaled(250.0), unit="mm") for b in (main_body, flap_body)]
    path = write_outline_table(mm, tmp_path / "pair.csv")
    assert path.read_text().splitlines()[0] == "body,point,x_mm,y_mm"
    back = read_outline_table(path)
    assert [b.name for b in back] == ["main, port", mm[1].name]
    assert all(b.unit == "mm" for b in back)
    for b, o in zip(back, mm):
        np.testing.assert_allclose(b.points, o.points, atol=250 * 1e-11)


def test_write_refuses_existing_file(tmp_path):
    path = tmp_path / "keep.dat"
    path.write_text("precious\n")
    with pytest.raises(OutputError) as err:
        write_outline_table(naca4("0012"), path)
    assert str(path) in str(err.value)
    assert path.read_text() == "precious\n"
    assert [p.name for p in tmp_path.iterdir()] == ["keep.dat"]
    write_outline_table(naca4("0012"), path, overwrite=True)
    assert path.read_text().startswith("body,point,x,y\nnaca0012,1,")


def test_write_missing_folder(tmp_path):
    with pytest.raises(OutputError, match="does not exist"):
        write_outline_table(naca4("0012"), tmp_path / "no" / "such.dat")


def test_write_unwritable_folder(tmp_path, monkeypatch):
    # a folder refusing new files (checked through the temp file, so it also holds for root)
    def refuse(*args, **kwargs):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr("panelflow.files._temporary", refuse)
    with pytest.raises(OutputError, match="cannot write.*Permission denied"):
        write_outline_table(naca4("0012"), tmp_path / "x.dat")
    assert list(tmp_path.iterdir()) == []


def test_write_no_hard_links_falls_back(tmp_path, monkeypatch):
    def no_link(src, dst):
        raise OSError(1, "Operation not permitted")

    monkeypatch.setattr("panelflow.files.os.link", no_link)
    path = write_outline_table(naca4("0012"), tmp_path / "y.dat")
    assert [p.name for p in tmp_path.iterdir()] == ["y.dat"]
    assert path.read_text().startswith("body,point,x,y\nnaca0012,1,")


def test_numeric_name_stays(tmp_path):
    # in the named-column layout a name is a field of its own: numbers are no risk
    o = naca4("0012").renamed("12 3")
    path = write_outline_table(o, tmp_path / "n.dat")
    (back,) = read_outline_table(path)
    assert back.name == "12 3" and len(back.points) == len(o.points)


# ---------------------------------------------------------------------------------- demo files
DEMO = {
    "tender_front_foil.dat": [("sharp", 1.0)],
    "tender_stabiliser.dat": [("sharp", 1.0)],
    "tender_strut_fairing.dat": [("blunt", 220.0)],
    "mast_fairing.csv": [("none", 100.0)],
    "front_foil_with_flap.dat": [("sharp", 1.0), ("sharp", 0.3)],
}


@pytest.mark.parametrize("name", sorted(DEMO))
def test_demo_geometries_read(name):
    bodies = load_outlines(str(ROOT / "geometries" / name))
    assert [b.kind for b in bodies] == [k for k, _ in DEMO[name]]
    # nominal chords; on a cambered section the point farthest from the TE (Outline's leading
    # edge) lies a few millionths of the chord off the nose point, hence 1e-4
    assert [b.chord for b in bodies] == pytest.approx([c for _, c in DEMO[name]], rel=1e-4)
    assert "invented demo" in (ROOT / "geometries" / name).read_text().lower()


def test_demo_strut_base_and_flap_clearance():
    (strut,) = load_outlines(str(ROOT / "geometries" / "tender_strut_fairing.dat"))
    assert strut.trailing_edge.gap / strut.chord == pytest.approx(0.015, abs=1e-6)
    main, flap = load_outlines(str(ROOT / "geometries" / "front_foil_with_flap.dat"))
    from shapely.geometry import Polygon

    assert Polygon(main.polygon).distance(Polygon(flap.polygon)) > 0.02  # a real gap


def test_demo_files_match_their_script(tmp_path):
    spec = importlib.util.spec_from_file_location(
        "make_demo_geometries", ROOT / "scripts" / "make_demo_geometries.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)  # importing writes nothing
    assert list(tmp_path.iterdir()) == []
    for path in module.write_all(tmp_path):
        assert path.read_text() == (ROOT / "geometries" / path.name).read_text(), path.name


# ---------------------------------------------------------------------------------- units, commas
@pytest.mark.parametrize("header, unit", [
    ("x_mm,y_mm", "mm"), ("x [in]  y [in]", "in"), ("x (m); y (m)", "m"), ("x/c y/c", None),
    ("X_MM, Y_MM", "mm"), ("x y", None), ("x[cm],y[cm]", "cm"), ("x (feet) y (feet)", "ft"),
])
def test_unit_header_is_honoured(tmp_path, header, unit):
    pts = reference().points
    path = write(tmp_path, "u.txt", [header, *rows(pts)])
    (o,) = read_outline_table(path)
    assert o.unit == unit
    np.testing.assert_allclose(o.points, pts, atol=1e-10)  # written to 10 decimals


@pytest.mark.parametrize("header, words", [
    ("x_furlong,y_furlong", "does not know"),
    ("x_mm,y_in", "different units"),
    ("x/c (mm), y/c (mm)", "chord fractions"),
])
def test_unit_header_refused_clearly(tmp_path, header, words):
    path = write(tmp_path, "u.txt", [header, *rows(reference().points)])
    with pytest.raises(InputError, match=words) as err:
        read_outline_table(path)
    assert "line 1" in str(err.value)


def test_header_unit_reaches_the_loads_and_a_contrary_unit_is_refused(tmp_path, capsys):
    from panelflow.cli.main import main

    pts = reference().points * 250.0  # a 250 mm chord
    path = write(tmp_path, "foil.csv", ["x_mm,y_mm", *(f"{x:.6f},{y:.6f}" for x, y in pts)])
    args = ["loads", str(path), "--alpha", "4", "--fluid", "sea-water", "--speed", "8",
            "--panels", "60"]
    assert main([*args, "-o", str(tmp_path / "a.json")]) == 0
    out = capsys.readouterr().out
    import json

    cond = json.loads((tmp_path / "a.json").read_text())["conditions"]
    # 250 mm read as millimetres: 0.25 m, not a 250 m chord (chord from the fitted curve)
    assert cond["chord"] == pytest.approx(0.25, rel=1e-3)
    assert "warning:" not in out
    assert main([*args, "--unit", "m", "-o", str(tmp_path / "b.json")]) == 1
    assert "column header says mm" in capsys.readouterr().err


def test_implausible_size_is_warned(tmp_path, capsys):
    from panelflow.cli.main import main

    pts = reference().points * 250.0  # millimetres with no header: read as metres
    path = write(tmp_path, "foil.dat", rows(pts))
    assert main(["loads", str(path), "--alpha", "4", "--fluid", "sea-water", "--speed", "8",
                 "--panels", "60", "-o", str(tmp_path / "a.json")]) == 0
    out = capsys.readouterr().out
    line = next(ln for ln in out.splitlines() if ln.startswith("warning:"))
    assert "250" in line and "--unit mm" in line


@pytest.mark.parametrize("separator", [";", "\t", "  "])
def test_decimal_commas_are_read(tmp_path, separator):
    pts = reference().points
    lines = ["Foil, rev. 2"] + [f"{x:.9f}{separator}{y:.9f}".replace(".", ",") for x, y in pts]
    path = write(tmp_path, "dc.txt", lines)
    (o,) = read_outline_table(path)
    assert o.name == "Foil, rev. 2"
    np.testing.assert_allclose(o.points, pts, atol=1e-9)


def test_decimal_commas_with_comma_separators_get_the_real_reason(tmp_path):
    pts = reference().points
    path = write(tmp_path, "dc.txt", ["Foil"] + [f"{x:.4f},{y:.4f}".replace(".", ",")
                                                for x, y in pts[:3]] + rows(pts[3:]))
    with pytest.raises(InputError, match="decimal commas") as err:
        read_outline_table(path)
    assert "title line" not in str(err.value)


def test_spreadsheet_export_with_extra_columns(tmp_path):
    pts = reference().points
    lines = ["station;x (mm);y (mm);note"] + [f"{k};{x:.6f};{y:.6f};ok".replace(".", ",")
                                               for k, (x, y) in enumerate(pts * 100.0)]
    (o,) = read_outline_table(write(tmp_path, "sheet.csv", lines))
    assert o.unit == "mm"
    np.testing.assert_allclose(o.points, pts * 100.0, atol=1e-6)
