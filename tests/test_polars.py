"""Polars, tidy tables and their files, and the polar figure.

The figure is checked through its matplotlib objects (curves, axis direction, legend), as in
tests/test_plots.py, not by pixels.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

import panelflow as pf
from panelflow.output import figures as plots
from panelflow.errors import InputError, OutputError
from panelflow.output.tables import POLAR_COLUMNS, SECTION_COLUMNS, Polar, Table, polar, read_table, tidy_table, write_table
from panelflow.output.writers import polar_rows as writer_rows

N_PANELS = 60  # coarse: a few milliseconds per analysis; the checks do not depend on it
ANGLES = [-2.0, 0.0, 2.0, 4.0, 6.0]
MAGIC = {".png": b"\x89PNG\r\n\x1a\n", ".pdf": b"%PDF-"}  # PNG spec 5.2; ISO 32000-1 7.5.2


@pytest.fixture(scope="module")
def analyses():
    return {spec: pf.analyse(pf.load_outlines(spec), ANGLES, n_panels=N_PANELS)
            for spec in ("naca2412", "naca0012", "naca4412")}


def test_polar_equals_the_writers_rows(analyses):
    a = analyses["naca2412"]
    p = polar(a)
    assert p.label == "naca2412"
    # then the suction peak's error estimate, the one margin column of a plain analysis
    assert p.columns == (*POLAR_COLUMNS, "cp_min_error_estimate")
    rows = list(writer_rows(a))
    assert len(rows) == len(p)
    for i, row in enumerate(rows):
        for name, value in zip(p.columns, row, strict=True):
            # the same numbers from the same arrays: exact
            assert p.column(name)[i] == value, name


def test_polar_arrays_are_read_only(analyses):
    p = polar(analyses["naca2412"])
    with pytest.raises(ValueError):
        p.cl[0] = 1.0


def test_polar_checks_lengths():
    cols = {name: [0.0, 1.0] for name in POLAR_COLUMNS}
    cols["cm"] = [0.0]
    with pytest.raises(InputError, match="column cm has 1 values"):
        Polar("x", **cols)
    with pytest.raises(InputError, match="extra column"):
        Polar("x", **{n: [0.0] for n in POLAR_COLUMNS}, extra={"cl": [1.0]})


def test_tidy_table(analyses):
    polars = [polar(a, lab) for lab, a in analyses.items()]
    polars[1] = polar(analyses["naca0012"], "naca0012", extra={"cl_mach": np.arange(5.0)})
    t = tidy_table(polars)
    assert t.names == ("section", *POLAR_COLUMNS, *SECTION_COLUMNS, "cp_min_error_estimate",
                       "cl_mach")
    assert len(t) == 3 * len(ANGLES)
    assert t["section"] == tuple(lab for lab in analyses for _ in ANGLES)
    np.testing.assert_array_equal(t.where("section", "naca4412")["cl"], analyses["naca4412"].cl)
    mach = t["cl_mach"]
    # the polars without the column get NaN in it; the one with it keeps its values exactly
    assert np.isnan(mach[:5]).all() and np.isnan(mach[10:]).all()
    np.testing.assert_array_equal(mach[5:10], np.arange(5.0))


def test_tidy_table_refuses_duplicate_labels(analyses):
    p = polar(analyses["naca2412"])
    with pytest.raises(InputError, match="used twice: naca2412"):
        tidy_table([p, p])
    with pytest.raises(InputError, match="no polar"):
        tidy_table([])


def test_table_columns_must_match():
    with pytest.raises(InputError, match="has 1 values"):
        Table({"a": [1.0, 2.0], "b": [1.0]})


@pytest.mark.parametrize("ext", [".csv", ".json"])
def test_table_file_round_trip(analyses, tmp_path, ext):
    t = tidy_table([polar(a) for a in analyses.values()])
    path = write_table(t, tmp_path / f"polars{ext}", notes=["a note"])
    back = read_table(path)
    assert back.names == t.names
    assert back["section"] == t["section"]
    for name in POLAR_COLUMNS:
        if ext == ".json":
            # JSON keeps every bit of a double (shortest round-trip repr)
            np.testing.assert_array_equal(back[name], t[name])
        else:
            # CSV: 10 significant digits, so a relative difference of at most 5e-10
            np.testing.assert_allclose(back[name], t[name], rtol=5e-10, atol=0.0)


@pytest.mark.parametrize("ext", [".csv", ".json"])
def test_same_table_same_bytes_and_no_silent_overwrite(analyses, tmp_path, ext):
    t = tidy_table([polar(a) for a in analyses.values()])
    first = write_table(t, tmp_path / f"a{ext}").read_bytes()
    second = write_table(t, tmp_path / f"b{ext}").read_bytes()
    assert first == second
    with pytest.raises(OutputError, match="exists"):
        write_table(t, tmp_path / f"a{ext}")
    write_table(t.where("section", "naca0012"), tmp_path / f"a{ext}", overwrite=True)
    assert (tmp_path / f"a{ext}").read_bytes() != first


def test_undefined_numbers(tmp_path):
    t = Table({"section": ["x", "y"], "alpha_deg": [0.0, 1.0], "cl": [math.nan, 0.5]})
    csv_text = write_table(t, tmp_path / "t.csv").read_text()
    assert csv_text.splitlines()[-2] == "x,0,"
    rec = json.loads(write_table(t, tmp_path / "t.json").read_text())
    assert rec["rows"][0]["cl"] is None
    assert rec["format"] == "panelflow table"
    assert np.isnan(read_table(tmp_path / "t.json")["cl"][0])


def test_unknown_table_format(analyses, tmp_path):
    t = polar(analyses["naca2412"]).table()
    with pytest.raises(OutputError, match="unknown table format .xlsx"):
        write_table(t, tmp_path / "t.xlsx")


# ------------------------------------------------------------------------------ the figure
def test_polar_figure_objects(analyses):
    fig = plots._build_polar_figure(list(analyses.values()))
    ax_cl, ax_cm, ax_cp = fig.axes[:3]
    assert [ax.get_ylabel() for ax in (ax_cl, ax_cm, ax_cp)] == ["Cl", "Cm", "lowest Cp"]
    assert ax_cp.yaxis_inverted() and not ax_cl.yaxis_inverted()  # suction up
    legend = [t.get_text() for t in ax_cl.get_legend().get_texts()]
    assert legend == list(analyses)
    # one curve per section on each axes, carrying the polar's numbers exactly
    curves = [ln for ln in ax_cl.get_lines() if len(ln.get_xdata()) == len(ANGLES)]
    assert len(curves) == 3
    for line, a in zip(curves, analyses.values(), strict=True):
        np.testing.assert_array_equal(line.get_xdata(), ANGLES)
        np.testing.assert_array_equal(line.get_ydata(), a.cl)
    cp_curves = [ln for ln in ax_cp.get_lines() if len(ln.get_xdata()) == len(ANGLES)]
    np.testing.assert_array_equal(cp_curves[0].get_ydata(), analyses["naca2412"].fine.cp_min[:, 0])


def test_polar_figure_from_a_study_table_matches(analyses):
    t = tidy_table([polar(a) for a in analyses.values()])
    from_table = plots._build_polar_figure(t)
    from_analyses = plots._build_polar_figure(list(analyses.values()))
    for ax_t, ax_a in zip(from_table.axes[:3], from_analyses.axes[:3], strict=True):
        for lt, la in zip(ax_t.get_lines(), ax_a.get_lines(), strict=True):
            np.testing.assert_array_equal(lt.get_ydata(), la.get_ydata())


def test_lift_fit_zero_lift_angle(analyses):
    # The inviscid circulation lift is exactly A cos(a) + B sin(a) for one geometry, so the
    # fitted zero-lift angle must give zero lift when solved there (1e-10: round-off of the fit).
    for spec, a in analyses.items():
        a0, slope = plots._lift_fit(a.alpha_deg, a.cl)
        check = pf.analyse(pf.load_outlines(spec), [a0], n_panels=N_PANELS,
                           error_estimate=False)
        assert abs(check.cl[0]) < 1e-10, spec
        # thin-aerofoil theory's lift slope is 2 pi per radian; thickness adds to it
        # (about 0.8 t/c for these sections, Abbott & von Doenhoff, from memory): within 15 %
        assert 2 * np.pi < slope < 1.15 * 2 * np.pi, spec
    a0, _ = plots._lift_fit(analyses["naca0012"].alpha_deg, analyses["naca0012"].cl)
    assert abs(a0) < 1e-9  # a symmetric section lifts nothing at zero incidence


def test_lift_fit_declines_data_that_do_not_follow_it():
    a0, slope = plots._lift_fit(np.array([0.0, 2.0, 4.0]), np.array([0.0, 0.2, 0.1]))
    assert math.isnan(a0) and math.isnan(slope)


@pytest.mark.parametrize("ext", [".png", ".svg", ".pdf"])
def test_polar_figure_files(analyses, tmp_path, ext):
    path = plots.polar_figure(list(analyses.values()), ["a", "b", "c"], tmp_path / f"p{ext}")
    data = path.read_bytes()
    if ext == ".svg":
        assert b"<svg" in data[:2000]
    else:
        assert data.startswith(MAGIC[ext])
    with pytest.raises(OutputError, match="exists"):
        plots.polar_figure(list(analyses.values()), None, path)
    plots.polar_figure(list(analyses.values()), None, path, overwrite=True)


@pytest.mark.parametrize("items, labels, fragment", [
    ([], None, "no polar"),
    (["not a polar"], None, "cannot draw a polar of a str"),
    ("two", ["x"], "1 labels for 2 polars"),
])
def test_polar_figure_bad_input(analyses, tmp_path, items, labels, fragment):
    if items == "two":
        items = [analyses["naca2412"], analyses["naca0012"]]
    with pytest.raises(InputError, match=fragment):
        plots.polar_figure(items, labels, tmp_path / "p.png")
    assert not (tmp_path / "p.png").exists()
