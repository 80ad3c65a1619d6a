"""Command-line behaviour a new user meets: check on several files, several angles on a Cp
figure, progress bars on the long commands.

Before, ``check *.dat`` treated seven good files as one arrangement and reported 21 false
overlaps, ``solve --plot`` with several angles drew the first one silently, and ``field`` on
600 000 points ran with no sign of progress.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from conftest import run

REPO = Path(__file__).resolve().parent.parent
DEMO = sorted(str(p) for p in (REPO / "geometries").glob("*.dat"))


def test_check_each_file_on_its_own(capsys):
    # the demo files all sit near the origin with chord 1: together they would overlap
    code, out, err = run(capsys, "check", *DEMO, "naca2412", "naca0012")
    assert code == 0, out + err
    assert "problem:" not in out
    assert out.count("status           ok") == out.count("  points ")


def test_overlap_within_one_arrangement_is_found(capsys):
    # a body placed with @move joins the arrangement before it: this flap cuts the main foil
    code, out, _ = run(capsys, "check", "naca2412", "naca0012@name=flap@scale=0.3@move=0.5,0")
    assert code == 1
    assert "problem: bodies 'naca2412' (naca2412) and 'flap' (naca0012) overlap" in out
    # and placed clear of it, none
    code, out, _ = run(capsys, "check", "naca2412",
                       "naca0012@name=flap@scale=0.3@pitch=15@move=1.03,-0.07")
    assert code == 0 and "problem:" not in out


def test_several_angles_on_one_cp_figure(capsys, tmp_path, monkeypatch):
    from panelflow.output import figures

    monkeypatch.chdir(tmp_path)
    drawn = {}
    real = figures._build_surface_cp_figure

    def spy(analysis, alpha_deg=None, title=None):
        drawn["alpha"] = list(alpha_deg)
        return real(analysis, alpha_deg, title)

    monkeypatch.setattr(figures, "_build_surface_cp_figure", spy)
    code, _, err = run(capsys, "solve", "naca2412", "--alpha", "0", "3", "6", "--panels", "60",
                       "--plot", "cp.png")
    assert code == 0, err
    assert drawn["alpha"] == [0.0, 3.0, 6.0]
    code, out, err = run(capsys, "solve", "naca2412", "--alpha", "-4:10:1", "--panels", "60",
                         "--plot", "many.png")
    assert code == 1 and "at most 8 angles" in err and out == ""
    assert not (tmp_path / "many.png").exists()


@pytest.mark.parametrize("argv, unit, total", [
    (["field", "naca0012", "--alpha", "2", "--resolution", "300,200", "-o", "f.csv"], "point",
     "/60.0k"),
    (["compare", "naca0012", "naca2412", "naca4412", "--alpha", "2"], "case", "/3.00"),
])
def test_progress_bar_on_long_commands(argv, unit, total, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(capsys, *argv, "--panels", "60", "--progress")
    assert code == 0, err
    # the bar's text: its total in the unit of the work (it redraws at most ten times a second,
    # so how far a quick run's last drawing got is not fixed)
    assert "panelflow:" in err and unit in err and total in err
    assert "panelflow:" not in out  # the bar never mixes with the results
    code, out, err = run(capsys, *argv, "--panels", "60", "--force")
    assert "%|" not in err  # not a terminal, not forced: no bar
