"""Every body counts: the suction peak, its body, the notes and the per-body rows of arrangements
with a flap or a second element.

Before, the headline suction peak, the polars and the compare table took the first body only
(a flap peak of -6.06 showed as -3.35), a peak in a slot was called "leading-edge separation"
and body names were cut to 16 characters. The references here are the per-body surface
solutions of the same result (panelflow's own, checked against exact solutions elsewhere):
what is tested is that no body is left out, not the solver.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from text_tables import tables

import panelflow as pf
from panelflow.cli.main import main
from panelflow.output.tables import polar
from panelflow.output.writers import analysis_record, suction_peak

N_PANELS = 100  # nothing here depends on the discretisation error
LONG_MAIN = "Front foil main element of the yard's tender, port side"


def _slotted(alpha=(0.0, 6.0), angle=35.0):
    main_body = pf.load_outlines("naca2412")[0].renamed(LONG_MAIN)
    op = pf.OperatingPoint(alpha_deg=alpha)
    return pf.solve(pf.Problem(main_body, op, panels=N_PANELS,
                               flap=pf.Flap(0.7, angle, gap=0.01)))


@pytest.fixture(scope="module")
def slotted():
    return _slotted()


def test_flap_peak_below_the_main_one_is_the_headline(slotted):
    per_body = np.array([[b.cp_min for b in r.bodies] for r in slotted])
    # the case is chosen so that at 0 deg the flap's nose carries the deeper peak
    assert per_body[0, 1] < per_body[0, 0]
    cp, x, k = suction_peak(slotted)
    np.testing.assert_array_equal(cp, per_body.min(axis=1))  # the same numbers, chosen
    assert list(k) == list(per_body.argmin(axis=1))
    p = polar(slotted)
    np.testing.assert_array_equal(p.cp_min, per_body.min(axis=1))
    assert p.cp_min_body[0] == slotted.outlines[1].name
    rec = analysis_record(slotted)
    assert rec["results"][0]["cp_min_body"] == slotted.outlines[1].name
    assert rec["results"][0]["cp_min"] == pytest.approx(per_body[0, 1], abs=0.0)


def test_slot_peak_is_called_a_slot_peak(slotted):
    note = next(n for n in slotted.notes if n.startswith("alpha 0: suction peak"))
    flap_name = slotted.outlines[1].name
    assert f"at the nose of {flap_name}, which the slot feeds" in note
    assert "slot peak" in note


def test_plain_flap_hinge_peak_is_named_as_such():
    foil = pf.load_outlines("naca2412")[0]
    r = pf.solve(pf.Problem(foil, pf.OperatingPoint(alpha_deg=(0.0,)), panels=N_PANELS,
                            flap=pf.Flap(0.75, 25.0)))
    note = next(n for n in r.notes if n.startswith("alpha 0: suction peak"))
    assert "at the flap hinge" in note and "leading-edge separation" not in note
    # and the peak is where the note says: within 5 % of the chord of the hinge
    assert abs(r[0].bodies[0].x_cp_min - 0.75) < 0.05


def test_full_body_names_in_every_table(slotted, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    main_body = pf.load_outlines("naca2412")[0].renamed(LONG_MAIN)
    # the same arrangement through the command line: a file with two bodies
    lines = []
    for o in slotted.outlines:
        lines.append(o.name)
        lines += [f"{x:.12g} {y:.12g}" for x, y in o.points]
        lines.append("")
    (tmp_path / "two.dat").write_text("\n".join(lines))
    assert main(["solve", "two.dat", "--alpha", "0", "--panels", str(N_PANELS)]) == 0
    out = capsys.readouterr().out
    headline, per_body = tables(out)[:2]
    head, rows = headline
    assert head[8:11] == ["lowest pressure coefficient", "suction peak position [x/c]",
                          "on body"]
    assert rows[0][10] == slotted.outlines[1].name  # in full, never cut
    assert {r[1] for r in per_body[1]} == {o.name for o in slotted.outlines}
    assert main_body.name in out
    assert main(["compare", "two.dat", "--alpha", "0", "--panels", str(N_PANELS), "--json"]) \
        == 0
    rec = json.loads(capsys.readouterr().out)
    assert rec["rows"][0]["cp_min_body"] == slotted.outlines[1].name
