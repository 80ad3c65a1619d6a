"""Spreadsheet-ready outputs: surface pressure tables, one header row per CSV file with its notes
beside it, and the zero-lift angle and lift slope in the tables.

References: the Karman-Trefftz conformal map of ``tests/exact.py`` (zero lift at
``alpha = -beta``, lift slope ``8 pi a / c`` per radian; Katz & Plotkin ch. 6) for the lift
line; the result's own per-body arrays for the surface table (what is checked is that the file
carries them all, in the documented columns and units).
"""

from __future__ import annotations

import csv
import json
import math

import numpy as np
import pytest
from conftest import MAPPED_CASES, run

import panelflow as pf
from panelflow.output.columns import COLUMNS, sidecar_path
from panelflow.output.surface_files import SURFACE_COLUMNS, surface_table, write_surface
from panelflow.output.tables import lift_line, read_table

N_PANELS = 120


@pytest.mark.parametrize("case", MAPPED_CASES, ids=lambda c: c.name)
def test_lift_line_against_the_conformal_map(case, mapped_analysis):
    analysis = mapped_analysis(case, 200)
    a0, slope = lift_line(analysis)
    exact_a0 = -math.degrees(case.section.beta)
    exact_slope = 8.0 * math.pi * case.section.radius / case.section.chord * math.pi / 180.0
    # the circulation lift's error at 200 panels is below 1e-4 of cl (test_solver_exact.py), so
    # the zero-lift angle is good to about 1e-4 / (2 pi) rad, 1e-3 deg, and the slope to 1e-4
    # relative; measured within 9e-4 deg and 3.3e-5 relative
    assert a0 == pytest.approx(exact_a0, abs=2e-3)
    assert slope == pytest.approx(exact_slope, rel=2e-4)


def test_lift_line_near_a_plane_interpolates():
    foil = pf.load_outlines("naca2412")[0]
    op = pf.OperatingPoint(alpha_deg=(-3.0, -1.0, 2.0), plane=pf.Boundary.ground(0.5))
    r = pf.solve(pf.Problem(foil, op, panels=60, error_estimate=False))
    a0, slope = lift_line(r)
    # the secant through the two angles nearest zero lift (-3 and -1 deg): by its definition
    i, j = 0, 1
    expect_slope = (r.cl[j] - r.cl[i]) / 2.0
    assert slope == pytest.approx(expect_slope, rel=1e-12)
    assert a0 == pytest.approx(-1.0 - r.cl[1] / expect_slope, abs=1e-9)


@pytest.fixture(scope="module")
def flapped():
    op = pf.OperatingPoint(alpha_deg=(0.0, 4.0), mach=0.3)
    return pf.solve(pf.Problem(pf.load_outlines("naca2412")[0], op, panels=N_PANELS,
                               flap=pf.Flap(0.7, 20.0, gap=0.01)))


def test_surface_table_carries_every_node(flapped):
    t = surface_table(flapped)
    assert t.names == (*SURFACE_COLUMNS, "cp_mach")
    nodes = sum(len(b.x) for b in flapped[0].bodies)
    assert len(t) == 2 * nodes
    for i, r in enumerate(flapped):
        for b in r.bodies:
            rows = np.flatnonzero((t["alpha_deg"] == r.alpha_deg)
                                  & np.array([n == b.name for n in t["body"]]))
            np.testing.assert_array_equal(t["cp"][rows], b.cp)
            np.testing.assert_array_equal(t["x"][rows], b.x)
            np.testing.assert_array_equal(t["point"][rows], np.arange(1, len(b.x) + 1))
            # arc length: the polygon through the nodes, from the first (round-off only)
            s = t["arc_length"][rows]
            assert s[0] == 0.0 and np.all(np.diff(s) > 0)
            assert s[-1] == pytest.approx(np.sum(np.hypot(np.diff(b.x), np.diff(b.y))),
                                          rel=1e-12)
    main_rows = np.array([n == flapped.outlines[0].name for n in t["body"]])
    # main chord line from the nose (x/c 0) to the undeflected trailing edge (x/c 1): the main
    # element of a slotted flap ends ahead of it and its nose is the chord line's start
    assert t["x_over_c"][main_rows].min() == pytest.approx(0.0, abs=2e-3)
    assert np.all(np.isfinite(t["cp_mach"]))


@pytest.mark.parametrize("ext", [".csv", ".json"])
def test_surface_file_round_trip(flapped, tmp_path, ext):
    path = write_surface(flapped, tmp_path / f"surface{ext}")
    back = read_table(path)
    t = surface_table(flapped)
    assert back.names == t.names
    # CSV: 10 significant digits; JSON: bit for bit
    rtol = 5e-10 if ext == ".csv" else 0.0
    for name in ("x", "y", "cp", "arc_length", "x_over_c"):
        np.testing.assert_allclose(back[name], t[name], rtol=rtol, atol=1e-12 * (ext == ".csv"))
    assert list(back["body"]) == list(t["body"])


def _one_header_row(path):
    text = path.read_text()
    rows = list(csv.reader(text.splitlines()))
    assert rows[0][0] and not rows[0][0].startswith("#")
    # every later row is data: as many fields, and the first numeric or a name seen before
    assert all(len(r) == len(rows[0]) for r in rows[1:])
    assert not any(ln.startswith("#") for ln in text.splitlines())
    notes = json.loads(sidecar_path(path).read_text())
    assert [c["name"] for c in notes["columns"]] == rows[0]
    assert pf.__version__ == notes["panelflow_version"] and "caution" in notes
    return rows[0], notes


def test_every_csv_has_one_header_row_and_its_notes(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, _, err = run(capsys, "solve", "naca2412", "--alpha", "0:4:2", "--panels", "60",
                       "-o", "polar.csv", "--surface-pressures", "surface.csv")
    assert code == 0, err
    code, _, err = run(capsys, "compare", "naca2412", "naca0012", "--alpha", "0", "4",
                       "--panels", "60", "-o", "sweep.csv")
    assert code == 0, err
    for name in ("polar.csv", "surface.csv", "sweep.csv"):
        header, notes = _one_header_row(tmp_path / name)
        for col in notes["columns"]:
            if col["name"] in COLUMNS:  # described in words, with the unit
                assert col["words"] == COLUMNS[col["name"]].words
    header, notes = _one_header_row(tmp_path / "sweep.csv")
    assert header[:2] == ["section", "alpha_deg"]
    assert {"cp_min_body", "alpha_zero_lift_deg", "lift_slope_per_deg"} <= set(header)
    units = {c["name"]: c["unit"] for c in notes["columns"]}
    assert units["alpha_deg"] == "deg" and units["lift_slope_per_deg"] == "1/deg"
    sweep = read_table(tmp_path / "sweep.csv")
    # the zero-lift angle of a symmetric section is zero (by symmetry)
    zero = sweep.where("section", "naca0012")["alpha_zero_lift_deg"]
    assert np.all(np.abs(zero) < 1e-9)
