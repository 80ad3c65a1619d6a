"""Hostile input: limits before any work, no traceback, no hang, nothing lost.

Each case is one that once gave a traceback, a hang or a silently wrong action. The contract:
exit code 1 (2 for argparse usage errors), exactly one line on stderr that says what is wrong,
no output file written, nothing the user gave touched. Network checks talk only to 127.0.0.1.
"""

from __future__ import annotations

import concurrent.futures as cf
import os
import socket
import threading
import time
from http.server import BaseHTTPRequestHandler, ThreadingHTTPServer
from pathlib import Path

import pytest
from conftest import run

from panelflow.errors import IncompleteRunError, InputError
from panelflow.files import atomic_write_text, remove_stale_temporaries
from panelflow.study import runner
from panelflow.study.runner import BodySource, SectionTask

GEOMETRIES = Path(__file__).resolve().parent.parent / "geometries"
FOIL = GEOMETRIES / "tender_front_foil.dat"


def one_error_line(err: str) -> str:
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("panelflow: error: "), err
    assert "Traceback" not in err
    return lines[0]


def refused(capsys, *argv, fragment):
    code, out, err = run(capsys, *argv)
    assert code == 1, (code, err)
    assert fragment in one_error_line(err)
    return out


@pytest.fixture
def here(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    return tmp_path


# ----------------------------------------------------------------------- limits before work
@pytest.mark.parametrize("argv, fragment", [
    (("--panels", "100000"), "--panels 100000"),  # once asked for 74.5 GiB
    (("--panels", "10"), "--panels 10"),  # the half-panel estimate needs 8
    (("--alpha", "0:60:0.001", "0:60:0.001"), "at most 100000"),  # the cap is on the total
    (("--alpha", "0", "--ref", "nan,0"), "--ref nan,0"),  # once printed cm nan, exit 0
    (("--alpha", "95"), "at most 90"),
])
def test_limits(argv, fragment, here, capsys):
    alpha = () if "--alpha" in argv else ("--alpha", "0")
    out = refused(capsys, "solve", "naca0012", *alpha, *argv, "-o", "r.json",
                  fragment=fragment)
    assert out == "" and not (here / "r.json").exists()


# Found by a hostile-user trial: each printed a traceback or a meaningless result with exit 0.
@pytest.mark.parametrize("argv, fragment", [
    (("circle:1e300", "--alpha", "4"), "beyond +/-1e+09"),  # once OverflowError
    (("naca0012@scale=1e12", "--alpha", "4"), "beyond +/-1e+09"),
    (("naca0012@pitch=1e300", "--alpha", "4"), "within +/-180"),  # once cl -5.48, exit 0
    (("naca0012@name=", "--alpha", "4"), "name= needs a name"),
    (("naca9999", "--alpha", "4"), "99 % thick"),  # a 99 %-thick "section", exit 0
    (("naca16-999", "--alpha", "4"), "99 % thick"),
    (("naca0012", "--alpha", "4", "--mach", "0"), "leave it out"),  # once Cp* nan
    (("naca0012", "--alpha", "4", "--mach", "1e-300"), "leave it out"),  # once Cp* -inf
    (("naca0012", "--alpha", "4", "--mach-rule", "laitone"), "needs a Mach number"),
    (("naca0012", "--alpha", "4", "--flap-gap", "0.01"), "--flap XH,ANGLE"),
    (("naca0012", "--alpha", "4", "--keep-points", "--panels", "100"), "--keep-points"),
    (("naca0012", "--alpha", "4", "--flap", "0.7,10", "--flap-gap", "1e-300"), "flap gap"),
    (("naca0012", "--alpha", "4", "--smooth-within", "10"), "at most 1 %"),
    (("naca0012", "--alpha", "4", "--ref", "1e300,0"), "reference point"),
    (("naca0012", "--cl", "50"), "target lift"),
    (("naca0012", "--alpha", "4", "--fluid", "sea-water", "--speed", "5", "--depth", "1e300"),
     "depth (m)"),
    (("naca0012", "--alpha", "4", "--density", "1000", "--speed", "5", "--depth", "1"),
     "density alone"),  # once named the internal "user" fluid
    (("naca0012", "--alpha", "4", "--reynolds", "1e6", "--viscous", "--fluid", "sea-water",
      "--speed", "5", "--chord", "0.2"), "the Reynolds number is given"),
])
def test_trial_refusals(argv, fragment, here, capsys):
    out = refused(capsys, "solve", *argv, "-o", "r.json", fragment=fragment)
    assert out == "" and not (here / "r.json").exists()


@pytest.mark.parametrize("fluid, extra, fragment", [
    ("sea-water", ("--speed", "1e300"), "speed (m/s)"),  # once OverflowError
    ("sea-water", ("--speed", "8", "--chord", "1e300"), "chord (m)"),  # once a JSON nan error
    # once 90 kN/m from Bernoulli at Mach 1.2, and Mach 0.44 without a word
    ("air", ("--speed", "400", "--chord", "0.2"), "Mach 1.18"),
    ("air", ("--speed", "150", "--chord", "0.2"), "give --mach 0.44"),
])
def test_trial_load_refusals(fluid, extra, fragment, here, capsys):
    refused(capsys, "loads", str(FOIL), "--alpha", "4", "--fluid", fluid, *extra,
            "-o", "l.json", fragment=fragment)
    assert not (here / "l.json").exists()


@pytest.mark.parametrize("argv, fragment", [
    (("field", "naca0012", "--alpha", "2", "--streamlines", "100000", "--plot", "f.png"),
     "--streamlines 100000"),  # once ran for minutes
    (("field", "naca0012", "--alpha", "2", "--points", "p.csv", "--window", "-1,2,-1,1",
      "-o", "f.csv"), "--window"),  # once ignored
    (("inverse", str(FOIL), "--plateau=-0.6,0.05,0.4,0.8", "--alpha", "2", "--functions",
      "5000", "-o", "i.dat"), "5000 shape functions"),  # once ran for minutes
    (("inverse", str(FOIL), "--plateau=-0.6,0.05,0.4,0.8", "--surface", "upper", "--alpha",
      "2", "--functions", "0", "-o", "i.dat"), "0 shape functions"),  # once accepted
    # the rest once exited 0 with a meaningless file or a result that was round-off
    (("field", "naca0012", "--alpha", "2", "--window", "-1e300,1e300,-1,1", "-o", "f.csv"),
     "body sizes from the bodies"),
    (("section", "naca2412", "-o", "f.png"), "a coordinate table is written as"),
    (("reshape", str(FOIL), "--thickness", "1e6", "-o", "i.dat"), "at most 0.4"),
    (("reshape", str(FOIL), "--camber", "-0.5", "-o", "i.dat"), "at most 0.2 either way"),
    (("loads", str(FOIL), "--alpha", "4", "--speed", "8", "--density", "1e300", "-o", "f.csv"),
     "at most 20000"),
    (("loads", str(FOIL), "--alpha", "4", "--speed", "8", "--fluid", "sea-water", "--span",
      "1e300", "-o", "f.csv"), "at most 1000 m"),
])
def test_trial_command_limits(argv, fragment, here, capsys):
    (here / "p.csv").write_text("x,y\n0.5,0.5\n")
    refused(capsys, *argv, fragment=fragment)
    assert not any((here / n).exists() for n in ("f.png", "f.csv", "i.dat"))


def test_outline_with_too_many_points(here, capsys):
    # a 400 000-point table once ran for minutes with no word; the cap is on one body's points
    import numpy as np

    t = np.linspace(0.0, 2.0 * np.pi, 100_002)[:-1]
    np.savetxt(here / "scan.dat", np.c_[0.5 + 0.5 * np.cos(t), 0.06 * np.sin(t)], fmt="%.9f")
    refused(capsys, "check", "scan.dat", fragment="at most 100000 per body")


def test_workers_beyond_the_limit(here, capsys):
    with pytest.raises(InputError, match="at most 256"):
        runner.make_executor(workers=100_000)


def test_section_points_zero_is_refused(here, capsys):
    # once wrote 201 points without a word
    refused(capsys, "section", "naca0012", "--points", "0", "-o", "s.dat", fragment="0")
    assert not (here / "s.dat").exists()


def test_no_numpy_warnings_on_stderr(capsys):
    code, out, err = run(capsys, "solve", "naca0012", "--alpha", "0", "--panels", "16")
    assert code == 0 and err == ""


@pytest.mark.parametrize("kind", ["device", "fifo", "folder"])
def test_outline_that_is_not_a_regular_file(kind, here, capsys):
    if kind == "device":
        path = "/dev/zero"  # once read whole into memory
    elif kind == "fifo":
        path = str(here / "pipe")
        os.mkfifo(path)  # once waited for ever for a writer
    else:
        path = str(here)
    fragment = "is a folder" if kind == "folder" else "not a regular file"
    refused(capsys, "solve", path, "--alpha", "0", fragment=fragment)


def test_outline_file_too_large(here, capsys):
    big = here / "big.dat"
    with open(big, "wb") as fh:  # sparse: 65 MiB of nothing on disk
        fh.truncate(65 * 2**20)
    refused(capsys, "check", big, fragment="more than the 64.0 MiB")


def test_coordinates_far_beyond_any_length_unit(here, capsys):
    # near 1e155 the squares overflow; such a file is corrupt in any unit
    (here / "huge.dat").write_text("".join(f"{x} {y}\n" for x, y in
                                          [(1e155, 0), (0.5e155, 1e154), (0, 0), (0.5e155, -1e154),
                                           (1e155, 0)]))
    refused(capsys, "check", "huge.dat", fragment="beyond +/-1e+09")


def test_mesh_with_a_cell_index_out_of_range(here, capsys):
    (here / "bad.vtk").write_text(
        "# vtk DataFile Version 4.2\nbad\nASCII\nDATASET UNSTRUCTURED_GRID\nPOINTS 3 double\n"
        "0 0 0 1 0 0 0.5 0.1 0\nCELLS 3 9\n2 0 1\n2 1 2\n2 2 7\nCELL_TYPES 3\n3\n3\n3\n")
    out = refused(capsys, "check", "bad.vtk", fragment="bad.vtk")
    assert out == ""


def test_field_points_all_inside_a_body(here, capsys):
    (here / "pts.csv").write_text("x,y\n0.3,0.0\n0.5,0.01\n")
    refused(capsys, "field", "naca0012", "--alpha", "0", "--points", "pts.csv", "-o", "f.csv",
            fragment="no flow to write")
    assert not (here / "f.csv").exists()  # once written before the error


# ----------------------------------------------------------------------------- case files
def test_case_file_with_a_byte_order_mark(here, capsys):
    (here / "c.toml").write_bytes(b"\xef\xbb\xbf[[section]]\nspec = \"naca0012\"\n"
                                  b"[conditions]\nalpha = 0\npanels = 40\n")
    code, out, err = run(capsys, "run", "c.toml", "-o", "out")
    assert code == 0, err
    assert (here / "out" / "polars.csv").exists()


@pytest.mark.parametrize("text, fragment", [
    ("x = " + "[" * 2000 + "]" * 2000 + "\n", "nested too deeply"),
    ("# " + "x" * (2**20 + 10) + "\n", "more than the 1.0 MiB"),
])
def test_case_file_nesting_and_size(text, fragment, here, capsys):
    (here / "c.toml").write_text(text)
    refused(capsys, "run", "c.toml", fragment=fragment)


def test_case_file_pattern_from_the_top_of_the_disk(here, capsys):
    # once walked the whole file system
    (here / "c.toml").write_text("[[section]]\nfile = \"/**/*.dat\"\n[conditions]\nalpha = 0\n")
    refused(capsys, "run", "c.toml", fragment="search the whole disk")


# ----------------------------------------------------------------------- inputs never outputs
def test_solve_refuses_to_overwrite_its_own_outline(here, capsys):
    src = here / "foil.dat"
    src.write_bytes(FOIL.read_bytes())
    refused(capsys, "solve", "foil.dat", "--alpha", "0", "-o", "foil.dat", "--force",
            fragment="is an input of this run")
    assert src.read_bytes() == FOIL.read_bytes()


def test_run_refuses_an_output_that_is_its_input(here, capsys):
    # a case whose output folder is its own folder, naming an output like its input
    src = here / "foil.csv"
    src.write_text("x,y\n" + "".join(
        ",".join(line.split()) + "\n" for line in FOIL.read_text().splitlines()[1:]))
    before = src.read_bytes()
    (here / "c.toml").write_text("output = \".\"\n[[section]]\nfile = \"foil.csv\"\n"
                                 "[conditions]\nalpha = 0\npanels = 40\n"
                                 "[outputs]\ntable = \"foil.csv\"\n")
    refused(capsys, "run", "c.toml", "--force", fragment="is an input of this run")
    assert src.read_bytes() == before
    assert not (here / "manifest.json").exists()


def test_stale_temporary_files_are_removed(here):
    # a temporary file of a write killed mid-way: its process id no longer runs
    dead = 2**22 + 12345  # beyond the default pid range, so no process has it
    stale = here / f".r.json.{dead}-0123456789ab.tmp"
    stale.write_bytes(b"x" * 1000)
    ours = here / f".s.json.{os.getpid()}-0123456789ab.tmp"  # a live writer's: kept
    ours.write_bytes(b"y")
    atomic_write_text(here / "r.json", "{}\n")
    assert not stale.exists() and ours.exists()
    assert remove_stale_temporaries(here) == []


# ------------------------------------------------------------------------ distributed runs
def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class _Silent(BaseHTTPRequestHandler):
    timeout = 5.0  # a client that never sends a request line is dropped

    def log_message(self, *args):
        pass


def test_scheduler_address_of_a_web_server(capsys):
    server = ThreadingHTTPServer(("127.0.0.1", _free_port()), _Silent)
    server.daemon_threads = True
    threading.Thread(target=server.serve_forever, daemon=True).start()
    try:
        start = time.monotonic()
        with pytest.raises(InputError, match="no scheduler answered within 1 s"):
            runner.make_executor(scheduler=f"tcp://127.0.0.1:{server.server_port}",
                                 connect_timeout=1.0)
        assert time.monotonic() - start < 30.0  # bounded, not a hang
    finally:
        server.shutdown()


def test_scheduler_scheme_not_understood():
    with pytest.raises(InputError, match="cannot connect"):
        runner.make_executor(scheduler="http://127.0.0.1:1", connect_timeout=1.0)


def test_scheduler_without_workers():
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(n_workers=0, processes=True, host="127.0.0.1",
                                  dashboard_address=":0") as cluster:
        with pytest.raises(InputError, match="has no workers"):
            runner.make_executor(scheduler=cluster.scheduler_address, connect_timeout=1.0)


def crash_on_second(task):
    """A worker that dies while solving the second section (a killed process)."""
    if task.label == "second":
        os._exit(1)
    return runner.run_task(task)


def stall_on_second(task):
    """A worker that never finishes the second section."""
    if task.label == "second":
        time.sleep(600)
    return runner.run_task(task)


def _tasks():
    return [SectionTask.of(label, (BodySource("naca0012"),), [0.0, 4.0], n_panels=40)
            for label in ("first", "second", "third")]


@pytest.mark.parametrize("work, fragment", [(crash_on_second, "worker running it was lost"),
                                            (stall_on_second, "no section finished within")])
def test_lost_or_stuck_worker_names_the_sections_and_keeps_the_rest(work, fragment):
    tasks = _tasks()
    ex = cf.ProcessPoolExecutor(1)
    try:
        with pytest.raises(IncompleteRunError, match=fragment) as info:
            runner._collect(ex, tasks, [None] * 3, None, 5.0, work=work)
    finally:
        runner._abandon(ex)
    exc = info.value
    assert "second" in exc.unfinished and "'second'" in str(exc)
    # the first section finished before the loss and is kept
    assert exc.finished[0] is not None and exc.finished[0].label == "first"


def test_incomplete_case_run_keeps_the_finished_rows(here, monkeypatch, capsys):
    from panelflow.study.cases import load_case

    (here / "c.toml").write_text("[[section]]\nspec = \"naca00{09..12:3}\"\n[conditions]\n"
                                 "alpha = 0\npanels = 40\n")
    case = load_case(here / "c.toml")
    done = runner.run_task(case.tasks[0])

    def broken_study(tasks, executor=None, progress=None, timeout=None):
        raise IncompleteRunError("1 of 2 sections did not finish: 'naca0012'; lost",
                                 [done, None], ["naca0012"])

    monkeypatch.setattr(runner, "run_study", broken_study)
    with pytest.raises(IncompleteRunError, match="the 1 finished are in"):
        runner.run_case(case, output=here / "out")
    rows = [ln for ln in (here / "out" / "polars.csv").read_text().splitlines()
            if not ln.startswith("#")]
    assert {ln.split(",")[0] for ln in rows[1:]} == {"naca0009"}
    import json

    manifest = json.loads((here / "out" / "manifest.json").read_text())
    assert manifest["incomplete"] is True and manifest["unfinished"] == ["naca0012"]


def test_field_larger_than_the_limit(here, capsys):
    # once ran for more than five minutes; refused before the solve now
    refused(capsys, "field", "naca2412", "--alpha", "4", "--resolution", "5000,5000",
            "-o", "f.csv", fragment="point-panel pairs")
    assert not (here / "f.csv").exists()


def test_every_test_the_readme_names_exists():
    # each reliability promise in the README names the test that holds it
    import ast
    import re

    root = Path(__file__).resolve().parent.parent
    named = re.findall(r"`(tests/test_\w+\.py)::(test_\w+)`", (root / "README.md").read_text())
    assert len(named) >= 15
    for path, name in named:
        tree = ast.parse((root / path).read_text())
        functions = {n.name for n in ast.walk(tree) if isinstance(n, ast.FunctionDef)}
        assert name in functions, f"README names {path}::{name}, which does not exist"
