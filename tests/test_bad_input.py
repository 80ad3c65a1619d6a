"""Bad input through the command line: one clear line on stderr, exit 1, nothing written.

Each case is run in-process with :func:`panelflow.cli.main.main`. The contract checked for every
case: a non-zero exit code, exactly one line on stderr that starts with ``panelflow: error:``,
names the file (and the line, for a bad line) or the option at fault, carries no traceback,
and no output file (nor a temporary one) is left behind when ``-o`` was given. With
``--debug`` the same input raises the panelflow exception instead.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Callable

import numpy as np
import pytest

from panelflow.cli.main import main
from panelflow.errors import GeometryError, InputError, OutputError, PanelflowError

QUICK = ("--panels", "40")  # the cases fail before or right after the solve; keep it short


def assert_one_line_error(err: str) -> str:
    """The CLI's error contract; returns the message after the prefix."""
    assert "Traceback" not in err
    assert err.endswith("\n") and err.count("\n") == 1, err
    assert err.startswith("panelflow: error: "), err
    return err[len("panelflow: error: "):]


def files_in(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir())


# ---------------------------------------------------------------------------------- bad files
def _text(content: str) -> Callable[[Path], None]:
    return lambda p: p.write_text(content)


def _bytes(content: bytes) -> Callable[[Path], None]:
    return lambda p: p.write_bytes(content)


def _folder(p: Path) -> None:
    p.mkdir()


def _missing(p: Path) -> None:
    pass


def _random_binary(p: Path) -> None:
    data = np.random.default_rng(7).integers(0, 256, 4000, dtype=np.uint8).tobytes()
    p.write_bytes(b"\x89\x00\x01\x02" + data)  # a NUL byte for sure, as binary files have


def _triangle_mesh(p: Path) -> None:
    import meshio

    pts = np.array([[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [1.0, 1.0, 0.0]])
    meshio.Mesh(pts, [("triangle", np.array([[0, 1, 2], [1, 3, 2]]))]).write(p)


def _open_chain_mesh(p: Path) -> None:
    import meshio

    pts = np.array([[1.0, 0.0, 0.0], [0.5, 0.1, 0.0], [0.0, 0.0, 0.0], [0.5, -0.1, 0.0]])
    meshio.Mesh(pts, [("line", np.array([[0, 1], [1, 2], [2, 3]]))]).write(p)


# A small valid loop (a lens with a sharp trailing edge at x = 1) to build bad files from.
_LENS = ["1.0 0.0", "0.75 0.08", "0.5 0.1", "0.25 0.08", "0.0 0.0", "0.25 -0.08",
         "0.5 -0.1", "0.75 -0.08", "1.0 0.0"]


@dataclass(frozen=True)
class FileCase:
    """A bad input file: how to make it and what the error must say."""

    id: str
    name: str
    make: Callable[[Path], None]
    fragment: str  # part of the message that says what is wrong
    line: int | None  # the line at fault, when there is one
    error: type  # the exception ``--debug`` lets through
    load_fails: bool = True  # False: reading works, the check/solve stage rejects it


FILE_CASES = [
    FileCase("empty", "foil.dat", _text(""), "no points", None, InputError),
    FileCase("comments-only", "foil.dat", _text("# just\n# comments\n\n"), "no points", None,
             InputError),
    FileCase("title-only", "foil.dat", _text("Main foil\n"), "no points", None, InputError),
    FileCase("non-numeric", "foil.dat",
             _text("Main foil\n" + "\n".join(_LENS[:3] + ["0.25 abc"] + _LENS[4:]) + "\n"),
             "'abc' is not a number", 5, InputError),
    # three numbers on a line: the reader documents lines of two values (x y); a third is an
    # error rather than silently ignored
    FileCase("three-numbers", "foil.dat",
             _text("\n".join(_LENS[:2] + ["0.5 0.1 0.0"] + _LENS[3:]) + "\n"),
             "expected 2 values", 3, InputError),
    FileCase("nan", "foil.dat", _text("\n".join(_LENS[:3] + ["0.25 nan"] + _LENS[4:]) + "\n"),
             "finite", 4, InputError),
    FileCase("inf", "foil.dat", _text("\n".join(_LENS[:5] + ["-inf 0.1"] + _LENS[6:]) + "\n"),
             "finite", 6, InputError),
    FileCase("too-few-points", "foil.dat", _text("1 0\n0 0.1\n0 -0.1\n1 0\n"), "at least",
             None, GeometryError),
    FileCase("zero-area", "foil.dat", _text("0 0\n1 0\n2 0\n3 0\n4 0\n5 0\n"), "no area", None,
             GeometryError),
    # figure-eight: the loop crosses itself at (0.5, 0); lobes of different size so that the
    # signed area is not zero (that would be the zero-area case)
    FileCase("figure-eight", "foil.dat",
             _text("1 0\n0.75 0.2\n0.5 0\n0.25 -0.1\n0 0\n0.25 0.1\n0.5 0\n0.75 -0.2\n1 0\n"),
             "crosses itself", None, GeometryError, load_fails=False),
    FileCase("count-line-mismatch", "foil.dat",
             _text("61. 61.\n" + "\n".join(_LENS) + "\n"), "count line", 1, InputError),
    FileCase("binary-nul", "foil.dat", _random_binary, "binary", None, InputError),
    FileCase("binary-control-chars", "foil.dat", _bytes(bytes(range(1, 32)) * 50 + b"\xff"),
             "binary", None, InputError),
    FileCase("missing", "foil.dat", _missing, "no such file", None, InputError),
    FileCase("folder", "foil.dat", _folder, "folder", None, InputError),
    FileCase("mesh-without-lines", "foil.vtu", _triangle_mesh, "no line cells", None,
             InputError),
    FileCase("mesh-open-chain", "foil.vtu", _open_chain_mesh, "closed loops", None, InputError),
    FileCase("mesh-garbage", "foil.vtu", _random_binary, "cannot read as a mesh", None,
             InputError),
]


@pytest.fixture
def workdir(tmp_path, monkeypatch) -> Path:
    monkeypatch.chdir(tmp_path)
    return tmp_path


@pytest.mark.parametrize("case", FILE_CASES, ids=lambda c: c.id)
def test_bad_file_solve(case, workdir, capsys):
    case.make(workdir / case.name)
    before = files_in(workdir)
    code = main(["solve", case.name, "--alpha", "0", *QUICK, "-o", "out.json"])
    out, err = capsys.readouterr()
    assert code == 1
    msg = assert_one_line_error(err)
    assert msg.startswith(case.name + ": "), msg  # the file comes first
    assert case.fragment in msg
    if case.line is not None:
        assert f"line {case.line}:" in msg
    assert out == ""
    assert files_in(workdir) == before  # no out.json, no temporary file


@pytest.mark.parametrize("case", [c for c in FILE_CASES if c.load_fails], ids=lambda c: c.id)
def test_bad_file_check(case, workdir, capsys):
    case.make(workdir / case.name)
    code = main(["check", case.name])
    out, err = capsys.readouterr()
    assert code == 1
    msg = assert_one_line_error(err)
    assert msg.startswith(case.name + ": ") and case.fragment in msg
    if case.line is not None:
        assert f"line {case.line}:" in msg


def test_check_reports_self_intersection(workdir, capsys):
    """``check`` reads a crossing loop and reports it instead of stopping."""
    case = next(c for c in FILE_CASES if c.id == "figure-eight")
    case.make(workdir / case.name)
    code = main(["check", case.name])
    out, err = capsys.readouterr()
    assert code == 1
    assert err == ""
    status = [ln for ln in out.splitlines() if ln.strip().startswith("status")]
    assert len(status) == 1 and "crosses itself" in status[0]
    assert case.name in out  # the report names where the outline came from


@pytest.mark.parametrize("case", FILE_CASES, ids=lambda c: c.id)
def test_bad_file_debug_raises(case, workdir, capsys):
    case.make(workdir / case.name)
    with pytest.raises(PanelflowError) as info:
        main(["--debug", "solve", case.name, "--alpha", "0", *QUICK])
    assert isinstance(info.value, case.error)
    assert case.name in str(info.value)


# ---------------------------------------------------------------------------------- overlaps
def _lens_file(path: Path, dx: float, title: str | None) -> None:
    pts = np.array([[float(v) for v in ln.split()] for ln in _LENS]) + [dx, 0.0]
    lines = ([title] if title else []) + [f"{x:.6f} {y:.6f}" for x, y in pts]
    path.write_text("\n".join(lines) + "\n")


@pytest.mark.parametrize("titled", [False, True], ids=["untitled", "titled"])
@pytest.mark.parametrize("second", ["file", "spec"])
def test_overlapping_bodies(titled, second, workdir, capsys):
    """Overlapping bodies: the message must say which inputs clash, files by their name."""
    _lens_file(workdir / "main.dat", 0.0, "Main foil" if titled else None)
    if second == "file":
        _lens_file(workdir / "other.dat", 0.3, "Main foil" if titled else None)
        args, names = ["main.dat", "other.dat"], ["main.dat", "other.dat"]
    else:
        args, names = ["main.dat", "naca0012@move=0.2,0"], ["main.dat", "naca0012"]
    before = files_in(workdir)
    code = main(["solve", *args, "--alpha", "0", *QUICK, "-o", "out.json"])
    out, err = capsys.readouterr()
    assert code == 1
    msg = assert_one_line_error(err)
    assert "overlap" in msg
    for name in names:
        assert name in msg, f"{name} not named in: {msg}"
    assert files_in(workdir) == before
    with pytest.raises(GeometryError):
        main(["--debug", "solve", *args, "--alpha", "0", *QUICK])


def test_overlapping_specs(workdir, capsys):
    code = main(["solve", "naca0012", "naca0012@move=0.1,0", "--alpha", "0", *QUICK,
                 "-o", "out.json"])
    out, err = capsys.readouterr()
    assert code == 1
    msg = assert_one_line_error(err)
    assert "overlap" in msg and "'naca0012'" in msg and "'naca0012-2'" in msg
    assert files_in(workdir) == []


# ---------------------------------------------------------------------------------- bad options
@dataclass(frozen=True)
class OptionCase:
    id: str
    argv: tuple  # solve arguments (outlines and options); ``-o out.json`` is added
    fragment: str  # the offending text the message must quote
    error: type


OPTION_CASES = [
    OptionCase("spec-too-many-digits", ("naca12345678", "--alpha", "0"), "naca12345678",
               InputError),
    OptionCase("spec-too-few-digits", ("naca2", "--alpha", "0"), "naca2", InputError),
    OptionCase("spec-bad-params", ("ellipse:1", "--alpha", "0"), "ellipse:1", InputError),
    OptionCase("not-file-not-spec", ("wing", "--alpha", "0"), "wing", InputError),
    OptionCase("alpha-word", ("naca0012", "--alpha", "abc"), "--alpha abc", InputError),
    OptionCase("alpha-backwards", ("naca0012", "--alpha", "5:0:1"), "5:0:1", InputError),
    OptionCase("alpha-zero-step", ("naca0012", "--alpha", "1:2:0"), "1:2:0", InputError),
    OptionCase("alpha-two-parts", ("naca0012", "--alpha", "1:2"), "1:2", InputError),
    OptionCase("alpha-nan", ("naca0012", "--alpha", "nan"), "--alpha", InputError),
    OptionCase("no-angles", ("naca0012",), "--alpha", InputError),
    OptionCase("alpha-and-cl", ("naca0012", "--alpha", "0", "--cl", "0.3"), "--cl", InputError),
    OptionCase("cl-smooth-body", ("circle", "--cl", "0.5"), "trailing edge", InputError),
    OptionCase("ref-one-number", ("naca0012", "--alpha", "0", "--ref", "1"), "--ref 1",
               InputError),
    OptionCase("ref-words", ("naca0012", "--alpha", "0", "--ref", "a,b"), "--ref a,b",
               InputError),
    OptionCase("panels-too-few", ("naca0012", "--alpha", "0", "--panels", "3"), "--panels 3",
               InputError),
    OptionCase("output-format", ("naca0012", "--alpha", "0", "-o", "out.xyz"), "out.xyz",
               OutputError),
    OptionCase("output-no-extension", ("naca0012", "--alpha", "0", "-o", "results"), "results",
               OutputError),
    OptionCase("output-missing-folder", ("naca0012", "--alpha", "0", "-o", "nowhere/out.csv"),
               "nowhere", OutputError),
    OptionCase("transform-unknown", ("naca0012@spin=3", "--alpha", "0"), "spin", InputError),
    OptionCase("transform-no-value", ("naca0012@pitch", "--alpha", "0"), "pitch", InputError),
    OptionCase("transform-not-number", ("naca0012@scale=big", "--alpha", "0"), "scale=big",
               InputError),
    OptionCase("transform-zero-scale", ("naca0012@scale=0", "--alpha", "0"), "scale",
               InputError),  # a bad option value, named with its argument
    OptionCase("transform-move-one-number", ("naca0012@move=1", "--alpha", "0"), "move",
               InputError),
]


@pytest.mark.parametrize("case", OPTION_CASES, ids=lambda c: c.id)
def test_bad_option(case, workdir, capsys):
    # out.json goes last so that a bad first output name is the one that stops the run
    # QUICK first: a case's own --panels must be the one that counts (the last one wins)
    code = main(["solve", *QUICK, *case.argv, "-o", "out.json"])
    out, err = capsys.readouterr()
    assert code == 1
    msg = assert_one_line_error(err)
    assert case.fragment in msg, msg
    assert out == ""
    assert files_in(workdir) == []


@pytest.mark.parametrize("case", OPTION_CASES, ids=lambda c: c.id)
def test_bad_option_debug_raises(case, workdir, capsys):
    with pytest.raises(case.error):
        main(["--debug", "solve", *QUICK, *case.argv])


def test_bad_output_after_good_output_writes_nothing(workdir, capsys):
    """The run fails on its second output name: the first must not be left behind either."""
    code = main(["solve", "naca0012", "--alpha", "0", *QUICK, "-o", "good.json",
                 "-o", "bad.xyz"])
    out, err = capsys.readouterr()
    assert code == 1
    assert "bad.xyz" in assert_one_line_error(err)
    assert files_in(workdir) == []


def test_same_output_twice_writes_nothing(workdir, capsys):
    code = main(["solve", "naca0012", "--alpha", "0", *QUICK, "-o", "out.json",
                 "-o", "out.json"])
    out, err = capsys.readouterr()
    assert code == 1
    assert "out.json" in assert_one_line_error(err)
    assert files_in(workdir) == []


@pytest.mark.parametrize("argv, fragment", [
    (("section", "naca2", "-o", "f.dat"), "naca2"),
    (("section", "wing", "-o", "f.dat"), "wing"),
    (("section", "naca0012", "--points", "3", "-o", "f.dat"), "n_points"),
    (("section", "naca0012", "-o", "nowhere/f.dat"), "nowhere"),
    (("check", "naca0012@spin=3"), "spin"),
    (("check", "naca2"), "naca2"),
])
def test_bad_section_and_check_arguments(argv, fragment, workdir, capsys):
    code = main(list(argv))
    out, err = capsys.readouterr()
    assert code == 1
    assert fragment in assert_one_line_error(err)
    assert files_in(workdir) == []


# ---------------------------------------------------------------------------------- usage errors
@pytest.mark.parametrize("argv", [
    [],
    ["spin", "naca0012"],
    ["solve"],
    ["solve", "naca0012", "--alpha", "0", "--panels", "many"],
    ["solve", "naca0012", "--cl", "lots"],
    ["solve", "naca0012", "--alpha", "0", "--bogus"],
    ["section", "naca0012"],  # -o is required
], ids=["no-command", "unknown-command", "no-outline", "panels-word", "cl-word",
        "unknown-option", "section-no-output"])
def test_usage_errors_exit_2_with_one_line(argv, workdir, capsys):
    with pytest.raises(SystemExit) as info:
        main(argv)
    assert info.value.code == 2
    out, err = capsys.readouterr()
    assert "Traceback" not in err
    assert err.count("\n") == 1 and "error:" in err, err
    assert files_in(workdir) == []


def test_word_among_angle_values_is_named(workdir, capsys):
    """``--alpha 0 abc``: however the parser splits it up, the word must be named."""
    try:
        code = main(["solve", "naca0012", "--alpha", "0", "abc", *QUICK, "-o", "out.json"])
    except SystemExit as exc:  # argparse usage error (exit 2) is acceptable here
        code = exc.code
    out, err = capsys.readouterr()
    assert code in (1, 2)
    assert "Traceback" not in err and err.count("\n") == 1 and "abc" in err
    assert files_in(workdir) == []
