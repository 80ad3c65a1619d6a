"""Section families (brace ranges and lists) and file patterns.

The expected member lists are written out by hand from the syntax's definition (panelflow's own,
documented in panelflow/families.py); a property test checks the range arithmetic against
Python's ``range``.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from panelflow.errors import InputError
from panelflow.geometry.families import (
    MAX_MEMBERS,
    expand_arguments,
    expand_family,
    expand_files,
    is_family,
    is_pattern,
)
from panelflow.geometry.specs import parse_spec


@pytest.mark.parametrize("text, members", [
    ("naca0012", ["naca0012"]),
    ("naca00{06..18:3}", ["naca0006", "naca0009", "naca0012", "naca0015", "naca0018"]),
    ("naca{0..4:2}412", ["naca0412", "naca2412", "naca4412"]),
    ("naca{2,4}4{09..15:3}", ["naca2409", "naca2412", "naca2415",
                              "naca4409", "naca4412", "naca4415"]),
    ("naca00{12..08:-2}", ["naca0012", "naca0010", "naca0008"]),
    ("naca00{10..15:2}", ["naca0010", "naca0012", "naca0014"]),  # STOP not reached: left out
    ("naca00{09..09}", ["naca0009"]),
    ("ellipse:{2..3:0.5},1", ["ellipse:2.0,1", "ellipse:2.5,1", "ellipse:3.0,1"]),
    ("joukowski:-0.1,{0.02..0.06:0.02}", ["joukowski:-0.1,0.02", "joukowski:-0.1,0.04",
                                          "joukowski:-0.1,0.06"]),
    ("naca0012@pitch={-2..2:2}", ["naca0012@pitch=-2", "naca0012@pitch=0", "naca0012@pitch=2"]),
    ("x{ 1 .. 3 }", ["x1", "x2", "x3"]),  # spaces inside the braces are allowed
    ("{front,rear}_foil.dat", ["front_foil.dat", "rear_foil.dat"]),
    ("naca{2412,0012-closed}", ["naca2412", "naca0012-closed"]),
])
def test_members(text, members):
    assert expand_family(text) == members


def test_decimal_steps_are_exact():
    # binary floating point would give 0.30000000000000004 for 0.1 + 2 * 0.1
    assert expand_family("{0.1..0.3:0.1}") == ["0.1", "0.2", "0.3"]
    assert expand_family("{-0.3..0.3:0.15}") == ["-0.30", "-0.15", "0.00", "0.15", "0.30"]


def test_case_insensitive_family_gives_the_same_sections():
    lower = expand_family("naca24{09..15:3}")
    upper = expand_family("NACA24{09..15:3}")
    assert [s.lower() for s in upper] == lower
    for a, b in zip(lower, upper, strict=True):
        # same section whatever the case: identical points (exact, same formula)
        np.testing.assert_array_equal(parse_spec(a).points, parse_spec(b).points)


@given(start=st.integers(-50, 50), length=st.integers(0, 40), step=st.integers(1, 9),
       down=st.booleans())
def test_integer_ranges_match_python_range(start, length, step, down):
    stop = start - length if down else start + length
    step = -step if down else step
    got = [int(v) for v in expand_family(f"{{{start}..{stop}:{step}}}")]
    # STOP included when reached: range() with the stop moved one past it
    assert got == list(range(start, stop + (-1 if down else 1), step))


def test_zero_padding_keeps_the_width():
    assert expand_family("{008..012:2}") == ["008", "010", "012"]
    assert expand_family("{8..12:2}") == ["8", "10", "12"]


@pytest.mark.parametrize("text, fragment", [
    ("naca00{06..18:0}", "STEP must not be zero"),
    ("naca00{18..06:3}", "goes away from STOP"),
    ("naca00{06..18", "unbalanced"),
    ("naca00{{06..18}}", "unbalanced or nested"),
    ("naca0012}", "without an opening"),
    ("naca00{ab..cd}", "is not a range"),
    ("naca00{}", "is not a range"),
    ("naca00{06-18}", "is not a range"),  # one item: a typo for a range, not a list
    ("naca00{a..b,c}", "is not a range"),
    (f"{{1..{MAX_MEMBERS + 1}}}", "at most"),
    ("{1..200}{1..200}", "at most"),
])
def test_bad_families(text, fragment):
    with pytest.raises(InputError, match=fragment):
        expand_family(text)


def test_existing_file_with_braces_is_literal(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "foil{1..2}.dat").write_text("0 0\n")
    assert not is_family("foil{1..2}.dat")
    assert expand_family("foil{1..2}.dat") == ["foil{1..2}.dat"]
    assert is_family("other{1..2}.dat")


@pytest.fixture
def outline_folder(tmp_path):
    for name in ("b.dat", "a.dat", "c10.dat", "c2.dat", "notes.txt"):
        (tmp_path / name).write_text("0 0\n")
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "d.dat").write_text("0 0\n")
    return tmp_path


def test_glob_sorted_by_path(outline_folder):
    got = expand_files("*.dat", base=outline_folder)
    names = [p.rsplit("/", 1)[1] for p in got]
    assert names == ["a.dat", "b.dat", "c10.dat", "c2.dat"]  # character order, not natural
    assert all(p.startswith(outline_folder.as_posix()) for p in got)


def test_glob_recursive_and_transform_suffix(outline_folder):
    got = expand_files("**/*.dat@scale=2", base=outline_folder)
    assert [p.rsplit("/", 1)[1] for p in got] == ["a.dat@scale=2", "b.dat@scale=2",
                                                  "c10.dat@scale=2", "c2.dat@scale=2",
                                                  "d.dat@scale=2"]


def test_glob_without_match_is_an_error(outline_folder):
    with pytest.raises(InputError, match="no file matches"):
        expand_files("*.xyz", base=outline_folder)


def test_is_pattern():
    assert is_pattern("geometries/*.dat")
    assert is_pattern("foil?.dat")
    assert not is_pattern("naca0012")


def test_expand_arguments_families_then_patterns(outline_folder, monkeypatch):
    monkeypatch.chdir(outline_folder)
    got = expand_arguments(["naca00{09..12:3}", "{a,b}.dat", "c*.dat", "circle"])
    assert got == ["naca0009", "naca0012", "a.dat", "b.dat", "c10.dat", "c2.dat", "circle"]
