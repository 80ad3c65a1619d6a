"""Figures: file formats, atomic and refusing writes, the Cp conventions, and import hygiene.

The figures are checked through their matplotlib objects (axis direction, aspect, legend, colour
bar label) rather than by pixels, so the checks hold for any look.
"""

from __future__ import annotations

import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

import panelflow as pf
from panelflow.output import figures as plots
from panelflow.flow.field import flow_field, grid_points
from panelflow.output.writers import CAUTION

# Coarse panelling keeps each analysis to a few milliseconds; the figures do not depend on it.
N_PANELS = 60
ANGLES = [0.0, 4.0]

# First bytes of each format: PNG signature (PNG specification, section 5.2), PDF header
# (ISO 32000-1, 7.5.2); an SVG file is XML text with an <svg> root element (SVG 1.1, 5.1).
MAGIC = {".png": b"\x89PNG\r\n\x1a\n", ".pdf": b"%PDF-"}


@dataclass(frozen=True)
class _Line:
    """Any object with x and y arrays stands for a streamline."""

    x: np.ndarray
    y: np.ndarray


@pytest.fixture(scope="module")
def foil():
    return pf.analyse(pf.load_outlines("naca2412"), ANGLES, n_panels=N_PANELS)


@pytest.fixture(scope="module")
def other():
    return pf.analyse(pf.load_outlines("naca0012"), ANGLES, n_panels=N_PANELS)


@pytest.fixture(scope="module")
def field(foil):
    pts, shape = grid_points((-0.5, 1.5, -0.5, 0.5), (24, 14))
    return flow_field(foil.fine.system, pts, ANGLES, shape)


def _lines():
    t = np.linspace(-0.5, 1.5, 30)
    return [_Line(t, 0.3 + 0.0 * t), np.column_stack([t, -0.3 + 0.0 * t])]


# one writer call per figure kind, taking (path, overwrite)
WRITERS = {
    "surface": lambda fx, path, ow: plots.surface_cp_figure(fx["foil"], path, alpha_deg=4.0,
                                                            overwrite=ow),
    "compare": lambda fx, path, ow: plots.compare_cp_figure(
        [fx["foil"], fx["other"]], ["cambered", "symmetric"], 4.0, path, overwrite=ow),
    "field": lambda fx, path, ow: plots.field_figure(fx["field"], fx["foil"], path,
                                                     streamlines=_lines(), overwrite=ow),
}


@pytest.fixture(scope="module")
def fixtures(foil, other, field):
    return {"foil": foil, "other": other, "field": field}


def _is_format(data: bytes, ext: str) -> bool:
    if ext == ".svg":
        return b"<svg" in data[:2000] and data.rstrip().endswith(b"</svg>")
    return data.startswith(MAGIC[ext])


@pytest.mark.parametrize("kind", sorted(WRITERS))
@pytest.mark.parametrize("ext", plots.FIGURE_FORMATS)
def test_writes_each_format(tmp_path, fixtures, kind, ext):
    path = tmp_path / f"figure{ext}"
    out = WRITERS[kind](fixtures, path, False)
    assert Path(out) == path
    data = path.read_bytes()
    # a real figure is kilobytes; 1000 bytes rules out an empty or truncated file
    assert len(data) > 1000
    assert _is_format(data, ext)
    # the temporary file is gone: the folder holds the figure only
    assert sorted(p.name for p in tmp_path.iterdir()) == [path.name]


@pytest.mark.parametrize("kind", sorted(WRITERS))
def test_refuses_to_overwrite(tmp_path, fixtures, kind):
    path = tmp_path / "figure.png"
    path.write_bytes(b"keep me")
    with pytest.raises(pf.OutputError, match="figure.png"):
        WRITERS[kind](fixtures, path, False)
    assert path.read_bytes() == b"keep me"
    WRITERS[kind](fixtures, path, True)
    assert _is_format(path.read_bytes(), ".png")
    assert sorted(p.name for p in tmp_path.iterdir()) == [path.name]


@pytest.mark.parametrize("kind", sorted(WRITERS))
@pytest.mark.parametrize("name", ["figure.jpg", "figure.json", "figure"])
def test_unknown_extension(tmp_path, fixtures, kind, name):
    with pytest.raises(pf.OutputError, match="unknown figure format"):
        WRITERS[kind](fixtures, tmp_path / name, False)
    assert list(tmp_path.iterdir()) == []


def test_missing_folder(tmp_path, fixtures):
    with pytest.raises(pf.OutputError, match="does not exist"):
        WRITERS["surface"](fixtures, tmp_path / "no-such-folder" / "figure.png", False)


def test_extension_case_insensitive(tmp_path, fixtures):
    path = tmp_path / "figure.PDF"
    WRITERS["surface"](fixtures, path, False)
    assert _is_format(path.read_bytes(), ".pdf")


# ----------------------------------------------------------------------- Cp conventions
def _cp_values(analysis, indices):
    return np.concatenate([b.cp for i in indices for b in analysis[i].bodies])


@pytest.mark.parametrize("alpha", [None, 4.0, [0.0, 4.0]])
def test_surface_cp_axes(foil, alpha):
    fig = plots._build_surface_cp_figure(foil, alpha)
    ax_cp, ax_sec = fig.axes[:2]
    # the trade's convention: negative Cp upward
    assert ax_cp.yaxis_inverted()
    # limits run from at least Cp = 1 (stagnation) down to beyond the suction peak
    indices = [0] if alpha is None else [ANGLES.index(a) for a in np.atleast_1d(alpha)]
    cp = _cp_values(foil, indices)
    bottom, top = ax_cp.get_ylim()
    assert bottom >= max(1.0, cp.max()) and top <= cp.min()
    # and not far beyond it: at most 10 % of the Cp range as margin (the layout uses 6 %)
    assert bottom - max(1.0, cp.max()) <= 0.1 * (bottom - top)
    assert cp.min() - top <= 0.1 * (bottom - top)
    # the section shares the x/c axis and is drawn to scale
    assert ax_sec.get_shared_x_axes().joined(ax_cp, ax_sec)
    assert ax_sec.get_aspect() == 1.0
    assert ax_cp.get_ylabel() == "Cp" and ax_sec.get_xlabel() == "x/c"


def test_section_true_to_scale(foil):
    fig = plots._build_surface_cp_figure(foil)
    fig.canvas.draw()
    ax_sec = fig.axes[1]
    # display units per data unit, the same both ways (to 0.5 %: pixel rounding of the box)
    (x0, y0), (x1, y1) = ax_sec.transData.transform([(0.0, 0.0), (1.0, 1.0)])
    assert (y1 - y0) == pytest.approx(x1 - x0, rel=5e-3)
    # and the whole section is inside the drawn limits (nothing cut off)
    lo, hi = ax_sec.get_ylim()
    ys = np.concatenate([o.polygon[:, 1] for o in foil.outlines])
    assert lo < ys.min() and ys.max() < hi


def test_surface_cp_card_and_caution(foil):
    fig = plots._build_surface_cp_figure(foil, 4.0)
    texts = " ".join(t.get_text() for t in fig.texts)
    r = foil[1]
    for expected in ("naca2412", "angle of attack", "4.00°", str(N_PANELS),
                     plots._pm(r.cl, r.cl_error_estimate), plots._pm(r.cm, r.cm_error_estimate),
                     "moments about", "x/c 0.250"):
        assert expected in texts, expected
    # the caution is wrapped over lines: compare without line breaks and spaces
    assert CAUTION.replace(" ", "") in texts.replace("\n", "").replace(" ", "")


def test_several_angles_legend(foil):
    fig = plots._build_surface_cp_figure(foil, [0.0, 4.0])
    labels = [t.get_text() for t in fig.axes[0].get_legend().get_texts()]
    assert labels == ["0.00°", "4.00°"]


def test_angle_not_in_analysis(tmp_path, foil):
    with pytest.raises(pf.InputError, match="angle of attack 3"):
        plots.surface_cp_figure(foil, tmp_path / "f.png", alpha_deg=3.0)
    assert list(tmp_path.iterdir()) == []


def test_compare_legend_and_axes(foil, other):
    labels = ["cambered", "symmetric", "cambered again"]
    fig = plots._build_compare_cp_figure([foil, other, foil], labels, 4.0)
    ax_cp, ax_sec = fig.axes[:2]
    assert [t.get_text() for t in ax_cp.get_legend().get_texts()] == labels
    assert ax_cp.yaxis_inverted()
    assert ax_sec.get_aspect() == 1.0


@pytest.mark.parametrize("labels", [["one"], ["one", "two", "three"]])
def test_compare_label_count(foil, other, labels):
    with pytest.raises(pf.InputError, match="labels"):
        plots._build_compare_cp_figure([foil, other], labels, 4.0)


@pytest.mark.parametrize("value, error, text", [
    (0.74391234, 0.000142, "0.74391 ± 0.00014"),
    (-0.0616712, 3.3e-5, "\u22120.061671 ± 0.000033"),
    (1.2346, 0.012, "1.235 ± 0.012"),
    (12.3, 4.0, "12.3 ± 4.0"),
    (12.3, 40.0, "12 ± 40"),
    (-1e-9, 1e-10, "0.000000 ± <1e\u22126"),  # no negative zero
    (0.5, float("nan"), "0.5000 (no estimate)"),
])
def test_value_with_error(value, error, text):
    # exact strings: the card must show the error to two significant figures
    assert plots._pm(value, error) == text


# -------------------------------------------------------------------------- field figure
@pytest.mark.parametrize("bodies", ["analysis", "outlines", "arrays"])
def test_field_axes(foil, field, bodies):
    given = {"analysis": foil, "outlines": foil.outlines,
             "arrays": [o.polygon for o in foil.outlines]}[bodies]
    fig = plots._build_field_figure(field, given, _lines(), alpha_index=1)
    ax, bar = fig.axes[:2]
    assert ax.get_aspect() == 1.0
    assert bar.get_ylabel() == "Cp"
    # the body is drawn as one filled patch per polygon
    assert len(ax.patches) == len(foil.outlines)
    assert "4.00°" in " ".join(t.get_text() for t in fig.texts)


def test_field_masked_points_without_bodies(field):
    # without body outlines the NaN points stay masked (holes), which must still draw
    assert np.isnan(field.cp[0]).any()
    fig = plots._build_field_figure(field, [], ())
    fig.canvas.draw()
    # default bands cover the finite values (NaN ignored): lowest Cp up to min(highest, 1)
    cp = field.cp[0]
    levels = fig.axes[0].collections[0].levels
    assert np.isfinite(levels).all()
    assert levels[0] <= np.nanmin(cp)
    assert levels[-1] == pytest.approx(min(np.nanmax(cp), 1.0), rel=1e-12)  # round-off only
    assert not fig.axes[0].patches  # no body given, none drawn


@pytest.mark.parametrize("inner, extend", [(True, "both"), (False, "neither")])
def test_field_levels(field, inner, extend):
    cp = field.cp[1]
    lo, hi = np.nanmin(cp), np.nanmax(cp)
    assert lo < 0.0 < hi
    # band edges inside the data range (ends shown as extensions) or around it
    levels = [0.5 * lo, 0.0, 0.5 * hi] if inner else [lo - 0.1, 0.0, hi + 0.1]
    fig = plots._build_field_figure(field, [], (), levels=levels, alpha_index=1)
    filled = fig.axes[0].collections[0]
    assert list(filled.levels) == levels
    assert filled.extend == extend


def test_field_needs_grid(foil):
    pts = np.array([2.0 + 0.5j, 3.0 - 0.5j, -1.0 + 0j])
    line = flow_field(foil.fine.system, pts, 4.0)
    with pytest.raises(pf.InputError, match="grid"):
        plots._build_field_figure(line, foil, ())


def test_field_alpha_index(field, foil):
    with pytest.raises(pf.InputError, match="alpha_index"):
        plots._build_field_figure(field, foil, (), alpha_index=5)


# ------------------------------------------------------------------------- import hygiene
def test_core_imports_do_not_load_matplotlib():
    code = ("import sys, panelflow, panelflow.analysis.inviscid, panelflow.cli.main, panelflow.output.figures; "
            "assert 'matplotlib' not in sys.modules, 'matplotlib imported'")
    subprocess.run([sys.executable, "-c", code], check=True)


def test_figures_do_not_load_pyplot(tmp_path):
    # a figure built and saved goes through the Agg canvas only: no pyplot, no global figures
    code = ("import sys, panelflow as pf; from panelflow.output import figures as plots; "
            "a = pf.analyse(pf.load_outlines('naca0012'), 2.0, n_panels=40); "
            "plots.surface_cp_figure(a, sys.argv[1]); "
            "assert 'matplotlib.pyplot' not in sys.modules, 'pyplot imported'")
    subprocess.run([sys.executable, "-c", code, str(tmp_path / "f.png")], check=True)
    assert (tmp_path / "f.png").stat().st_size > 1000
