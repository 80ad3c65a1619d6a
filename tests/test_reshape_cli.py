"""The reshape command: edits from options, the before/after table, the written file."""

import json

import pytest
from conftest import run

import panelflow as pf
from panelflow.geometry.measure import measure


def test_reshape_writes_the_new_section(capsys, tmp_path):
    out = tmp_path / "front_foil_thicker.dat"
    code, stdout, stderr = run(capsys, "reshape", "geometries/tender_front_foil.dat",
                               "--thickness", "0.12", "--trailing-edge-thickness", "0.004",
                               "-o", out)
    assert code == 0, stderr
    assert f"wrote {out}" in stderr
    lines = stdout.splitlines()
    assert lines[1].startswith("  1. thickness scaled by") and "trailing-edge" in lines[2]
    row = next(line for line in lines if line.strip().startswith("maximum thickness"))
    assert row.split()[-2] == "0.120000"
    assert "caution:" in stdout
    # the file reads back with what the table says
    m = measure(pf.load_outlines(str(out))[0])
    assert m.thickness == pytest.approx(0.12, rel=1e-9)
    assert m.trailing_edge_thickness == pytest.approx(0.004, rel=1e-9)


def test_reshape_json_and_order_of_edits(capsys):
    record = json.loads(run(capsys, "reshape", "naca2412", "--camber-position", "0.3",
                            "--camber", "0.03", "--thickness-scale", "0.9",
                            "--leading-edge-radius-scale", "1.2", "--json")[1])
    assert [s.split()[0:2] for s in record["steps"]] == [
        ["maximum", "camber"], ["thickness", "scaled"], ["camber", "scaled"],
        ["leading-edge", "radius"]]
    after, before = record["after"], record["before"]
    assert after["camber"] == pytest.approx(0.03, rel=1e-9)
    assert after["camber_position"] == pytest.approx(0.3, abs=1e-3)
    assert after["thickness"] == pytest.approx(0.9 * before["thickness"], rel=1e-5)
    assert record["units"]["thickness_position"] == "x/c" and record["caution"]


def test_reshape_negative_camber_and_blend(capsys):
    code, out, err = run(capsys, "reshape", "naca0012", "--blend-with", "naca4412",
                         "--blend-weight", "0.25", "--camber", "-0.01", "--json")
    assert code == 0, err
    record = json.loads(out)
    assert record["after"]["camber"] == pytest.approx(-0.01, rel=1e-9)
    assert record["steps"][0] == "blended with naca4412 at weight 0.25"


def test_reshape_smooth_only(capsys):
    code, out, err = run(capsys, "reshape", "geometries/tender_stabiliser.dat", "--smooth")
    assert code == 0, err
    assert "points smoothed" in out


@pytest.mark.parametrize("args,message", [
    ([], "nothing to change"),
    (["--blend-weight", "0.3"], "--blend-weight needs --blend-with"),
    (["--leading-edge-blend-to", "0.3"], "goes with --leading-edge-radius"),
    (["--trailing-edge-blend-from", "0.5"], "goes with --trailing-edge-thickness"),
    (["--thickness", "0"], "must be positive"),
    (["--thickness-position", "1.2"], "between 0.05 and 0.95"),
])
def test_reshape_errors(capsys, args, message):
    code, out, err = run(capsys, "reshape", "naca0012", *args)
    assert code == 1 and message in err and out == ""


def test_reshape_refuses_two_bodies_and_existing_files(capsys, tmp_path):
    code, _, err = run(capsys, "reshape", "geometries/front_foil_with_flap.dat", "--thickness",
                       "0.1")
    assert code == 1 and "one body needed, it holds 2" in err
    target = tmp_path / "kept.dat"
    target.write_text("keep me\n")
    code, _, err = run(capsys, "reshape", "naca0012", "--thickness", "0.1", "-o", target)
    assert code == 1 and "exists" in err and target.read_text() == "keep me\n"


def test_exclusive_options(capsys):
    with pytest.raises(SystemExit):
        run(capsys, "reshape", "naca0012", "--thickness", "0.1", "--thickness-scale", "1.1")
    assert "not allowed with argument" in capsys.readouterr().err
