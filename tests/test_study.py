"""The study runner: sweeps against single solves, executors against each other, case runs and
their manifests.

"Identical" here means bit for bit: every executor runs the same code on the same plain task
data, and the results are put back in task order, so any difference would be a bug (no tolerance).
"""

from __future__ import annotations

import concurrent.futures as cf
import hashlib
import json
import shutil
import threading
import time
from pathlib import Path

import numpy as np
import pytest

import panelflow as pf
from panelflow.study.cases import load_case
from panelflow.errors import InputError, OutputError
from panelflow.output.tables import POLAR_COLUMNS, read_table, tidy_table
from panelflow.study.runner import (
    MANIFEST_NAME,
    BodySource,
    SectionTask,
    file_sha256,
    make_executor,
    open_executor,
    run_case,
    run_study,
    run_task,
    section_tasks,
)

ROOT = Path(__file__).resolve().parent.parent
GEOMETRIES = ROOT / "geometries"
N_PANELS = 60  # coarse: fast, and nothing here depends on the panel count
ANGLES = (-2.0, 0.0, 3.0, 6.0)


@pytest.fixture(scope="module")
def tasks():
    ts = section_tasks(["naca00{09..15:3}", "naca2412"], ANGLES, n_panels=N_PANELS)
    front = str(GEOMETRIES / "tender_front_foil.dat")
    ts.append(SectionTask.of("front foil, pitched",
                          (BodySource(front, True, file_sha256(front), pitch=1.5),),
                          ANGLES, n_panels=N_PANELS))
    return ts


@pytest.fixture(scope="module")
def serial(tasks):
    return run_study(tasks)


def _assert_identical(a, b):
    assert [p.label for p in a] == [p.label for p in b]
    for pa, pb in zip(a, b, strict=True):
        assert pa.columns == pb.columns
        for name in pa.columns:
            np.testing.assert_array_equal(pa.column(name), pb.column(name), err_msg=name)


def test_tasks_are_plain_picklable_data(tasks):
    import pickle

    assert pickle.loads(pickle.dumps(tasks)) == tasks
    assert [t.label for t in tasks] == ["naca0009", "naca0012", "naca0015", "naca2412",
                                        "front foil, pitched"]


@pytest.mark.parametrize("k", range(5))
def test_sweep_equals_individual_solves(tasks, serial, k):
    task, p = tasks[k], serial[k]
    if task.bodies[0].is_file:
        outline = pf.load_outlines(task.bodies[0].source)[0]
        bodies = [outline.rotated(1.5, about=outline.leading_edge)]
    else:
        bodies = pf.load_outlines(task.bodies[0].source)
    for i, alpha in enumerate(ANGLES):
        one = pf.analyse(bodies, [alpha], n_panels=N_PANELS)
        r = one[0]
        main = r.bodies[0]
        expected = dict(alpha_deg=alpha, cl=r.cl, cm=r.cm, cd_pressure=r.cd_pressure,
                        cp_min=main.cp_min, x_cp_min=main.x_cp_min,
                        x_stagnation=main.x_stagnation, cl_error_estimate=r.cl_error_estimate,
                        cm_error_estimate=r.cm_error_estimate)
        for name in POLAR_COLUMNS:
            # one angle or many: the same formulas on the same factorisation; only the
            # summation order inside the vectorised products may differ, i.e. round-off
            np.testing.assert_allclose(p.column(name)[i], expected[name], rtol=1e-12,
                                       atol=1e-14, err_msg=f"{task.label} {alpha} {name}")


def test_local_processes_equal_serial(tasks, serial):
    with make_executor(workers=2) as ex:
        assert isinstance(ex, cf.ProcessPoolExecutor)
        _assert_identical(run_study(tasks, ex), serial)


class _ReversingExecutor(cf.Executor):
    """Completes the futures in reverse order of submission, once all are in."""

    def __init__(self, expected: int):
        self.expected = expected
        self.jobs = []

    def submit(self, fn, /, *args, **kwargs):
        fut = cf.Future()
        self.jobs.append((fut, fn, args))
        if len(self.jobs) == self.expected:
            def finish():
                for f, func, a in reversed(self.jobs):
                    f.set_result(func(*a))
            threading.Thread(target=finish).start()
        return fut


def test_results_come_back_in_task_order(tasks, serial):
    _assert_identical(run_study(tasks, _ReversingExecutor(len(tasks))), serial)


def test_dask_local_cluster_equals_serial(tasks, serial):
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=":0") as cluster:
        with distributed.Client(cluster) as client:
            _assert_identical(run_study(tasks, client.get_executor()), serial)
        # the --scheduler path: make_executor connects its own client to the address
        ex = make_executor(scheduler=cluster.scheduler_address)
        try:
            _assert_identical(run_study(tasks[:2], ex), serial[:2])
        finally:
            ex.shutdown()
        assert ex.client.status == "closed"


def test_scheduler_without_dask_is_a_clear_error(monkeypatch):
    import sys

    monkeypatch.setitem(sys.modules, "distributed", None)  # import now raises ImportError
    with pytest.raises(InputError, match=r"pip install 'panelflow\[cluster\]'"):
        make_executor(scheduler="tcp://127.0.0.1:8786")


@pytest.mark.parametrize("kwargs, fragment", [
    (dict(workers=2, scheduler="tcp://127.0.0.1:8786"), "not both"),
    (dict(workers=0), "at least 1"),
    (dict(workers=2.5), "whole number"),
    (dict(workers=True), "whole number"),
])
def test_make_executor_bad_values(kwargs, fragment):
    with pytest.raises(InputError, match=fragment):
        make_executor(**kwargs)


@pytest.mark.parametrize("workers", [None, 1])
def test_one_worker_runs_here(workers):
    assert make_executor(workers=workers) is None
    with open_executor(workers=workers) as ex:
        assert ex is None


def test_open_executor_shuts_the_pool_down(tasks, serial):
    with open_executor(workers=2) as ex:
        _assert_identical(run_study(tasks[:1], ex), serial[:1])
    with pytest.raises(RuntimeError):  # a pool that was shut down takes no more work
        ex.submit(run_task, tasks[0])


def test_failing_task_names_its_section(tasks):
    # a worker that cannot read the section's file: the error names the section
    bad = SectionTask.of("broken", (BodySource("no-such-folder/foil.dat", True),), ANGLES,
                         n_panels=N_PANELS)
    with pytest.raises(InputError, match=r"^section 'broken': .*foil.dat"):
        run_study([tasks[0], bad])
    with make_executor(workers=2) as ex:
        with pytest.raises(InputError, match=r"^section 'broken'"):
            run_study([tasks[0], bad], ex)


def test_duplicate_labels_refused(tasks):
    with pytest.raises(InputError, match="used twice: naca0009"):
        run_study([tasks[0], tasks[0]])


def test_changed_file_is_detected(tmp_path):
    src = tmp_path / "foil.dat"
    shutil.copy(GEOMETRIES / "tender_stabiliser.dat", src)
    (task,) = section_tasks([str(src)], [0.0], n_panels=N_PANELS)
    run_task(task)  # unchanged: fine
    src.write_text(src.read_text() + "# edited\n")
    with pytest.raises(InputError, match="differs from the one the study was set up with"):
        run_task(task)


@pytest.mark.parametrize("progress, shown", [(True, True), (False, False), (None, False)])
def test_progress_bar_only_when_asked_or_on_a_terminal(tasks, capsys, progress, shown):
    run_study(tasks[:2], progress=progress)
    err = capsys.readouterr().err
    # pytest's captured stderr is not a terminal, so None stays silent
    assert ("panelflow" in err and "section" in err) == shown


def test_mach_and_depth_columns(tasks):
    from panelflow.conditions.cavitation import assess_in
    from panelflow.conditions.compressibility import correct

    t = SectionTask.of("m", (BodySource("naca2412"),), ANGLES, n_panels=N_PANELS, mach=0.4,
                       depth=0.5, fluid="sea-water", speed=9.0)
    p = run_task(t)
    first = p.columns.index("cl_mach")  # then the suction peak's estimate and speed range
    assert p.columns[first:first + 9] == ("cl_mach", "cl_mach_error_estimate", "cm_mach",
                                          "cm_mach_error_estimate", "cp_min_mach",
                                          "mach_critical", "inception_speed",
                                          "cavitation_number", "cavitation_margin")
    a = pf.analyse(pf.load_outlines("naca2412"), ANGLES, n_panels=N_PANELS)
    c = correct(a, 0.4)
    cav = assess_in(a, 0.5, "sea-water", speed=9.0)
    # the same library calls on the same analysis: exact
    np.testing.assert_array_equal(p.extra["cl_mach"], c.cl)
    np.testing.assert_array_equal(p.extra["mach_critical"], c.critical_mach)
    np.testing.assert_array_equal(p.extra["inception_speed"], cav.section_inception_speed)
    np.testing.assert_array_equal(p.extra["cavitation_margin"], cav.margin)


# ------------------------------------------------------------------------------ case runs
CASE = """\
title = "test study"
[[section]]
label = "foil"
file = "foil.dat"
[[section]]
spec = "naca00{09..12:3}"
[conditions]
alpha = "0:4:2"
panels = 60
fluid = "sea-water"
speed = 8
[outputs]
table = ["polars.csv", "polars.json"]
[[outputs.polar_figure]]
file = "polars.png"
[[outputs.cp_figure]]
file = "cp.png"
alpha = 2
sections = ["foil", "naca0012"]
[[outputs.field]]
file = "field.csv"
section = "foil"
alpha = 2
resolution = [12, 8]
[[outputs.loads]]
file = "loads.json"
section = "foil"
alpha = 2
chord = 0.25
span = 1.2
"""


@pytest.fixture
def case_dir(tmp_path):
    shutil.copy(GEOMETRIES / "tender_front_foil.dat", tmp_path / "foil.dat")
    (tmp_path / "study.toml").write_text(CASE)
    return tmp_path


@pytest.fixture
def first_run(case_dir):
    return case_dir, run_case(load_case(case_dir / "study.toml"), progress=False)


def test_run_writes_everything_and_a_manifest(first_run):
    case_dir, report = first_run
    folder = case_dir / "study_results"
    assert report.folder == folder
    names = sorted(p.name for p in report.written)
    assert names == sorted(["polars.csv", "polars.about.json", "polars.json", "polars.png",
                            "cp.png", "field.csv", "field.about.json", "loads.json",
                            MANIFEST_NAME])
    assert report.written[-1].name == MANIFEST_NAME
    summary = report.summary()
    assert summary.startswith("solved 3 sections x 3 angles: 9 table rows\n")
    assert f"wrote {folder / MANIFEST_NAME}" in summary
    m = json.loads((folder / MANIFEST_NAME).read_text())
    assert m["panelflow_version"] == pf.__version__
    time.strptime(m["created_utc"], "%Y-%m-%dT%H:%M:%SZ")  # ISO 8601, UTC
    inputs = {f["path"]: f["sha256"] for f in m["inputs"]}
    assert inputs == {
        "study.toml": hashlib.sha256((case_dir / "study.toml").read_bytes()).hexdigest(),
        "foil.dat": hashlib.sha256((case_dir / "foil.dat").read_bytes()).hexdigest()}
    outputs = {f["path"]: f["sha256"] for f in m["outputs"]}
    for name, digest in outputs.items():
        assert hashlib.sha256((folder / name).read_bytes()).hexdigest() == digest
    assert [s["label"] for s in m["settings"]["sections"]] == ["foil", "naca0009", "naca0012"]
    assert m["settings"]["conditions"]["alpha_deg"] == [0.0, 2.0, 4.0]
    table = read_table(folder / "polars.json")
    assert len(table) == 9 and table["section"][0] == "foil"
    np.testing.assert_array_equal(table["cl"], report.table["cl"])


def test_rerun_reproduces_identical_tables(first_run):
    case_dir, report = first_run
    again = run_case(load_case(case_dir / "study.toml"), output=case_dir / "again",
                     progress=False)
    for name in ("polars.csv", "polars.json", "field.csv", "loads.json"):
        assert (report.folder / name).read_bytes() == (again.folder / name).read_bytes(), name
    first = json.loads((report.folder / MANIFEST_NAME).read_text())
    second = json.loads((again.folder / MANIFEST_NAME).read_text())
    assert first["inputs"] == second["inputs"] and first["settings"] == second["settings"]


# every file whose bytes a run fixes (figures and the manifest's time aside)
REPRODUCED = ("polars.csv", "polars.about.json", "polars.json", "field.csv", "field.about.json",
              "loads.json")


def test_parallel_run_writes_the_same_table(first_run):
    case_dir, report = first_run
    with make_executor(workers=2) as ex:
        par = run_case(load_case(case_dir / "study.toml"), ex, output=case_dir / "par",
                       progress=False)
    for name in REPRODUCED:  # byte for byte, not only the numbers
        assert (par.folder / name).read_bytes() == (report.folder / name).read_bytes(), name
    m = json.loads((par.folder / MANIFEST_NAME).read_text())
    assert m["executor"] == "local processes (2)"


def test_dask_run_writes_the_same_files(first_run):
    distributed = pytest.importorskip("distributed")
    case_dir, report = first_run
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=":0") as cluster:
        ex = make_executor(scheduler=cluster.scheduler_address)
        try:
            dask = run_case(load_case(case_dir / "study.toml"), ex, output=case_dir / "dask",
                            progress=False)
        finally:
            ex.shutdown()
    for name in REPRODUCED:
        assert (dask.folder / name).read_bytes() == (report.folder / name).read_bytes(), name


def test_manifest_hash_follows_the_input(first_run):
    case_dir, report = first_run
    foil = case_dir / "foil.dat"
    lines = foil.read_text().splitlines()
    # nudge one coordinate in the 6th decimal: a different input, nearly the same numbers
    k = next(i for i, ln in enumerate(lines) if ln.strip() and ln.split()[0][0].isdigit()
             and i > 2)
    x, y = lines[k].split()[:2]
    lines[k] = f"{float(x):.6f} {float(y) + 1e-6:.6f}"
    foil.write_text("\n".join(lines) + "\n")
    changed = run_case(load_case(case_dir / "study.toml"), output=case_dir / "changed",
                       progress=False)
    before = {f["path"]: f["sha256"] for f in
              json.loads((report.folder / MANIFEST_NAME).read_text())["inputs"]}
    after = {f["path"]: f["sha256"] for f in
             json.loads((changed.folder / MANIFEST_NAME).read_text())["inputs"]}
    assert after["study.toml"] == before["study.toml"]
    assert after["foil.dat"] != before["foil.dat"]
    assert after["foil.dat"] == hashlib.sha256(foil.read_bytes()).hexdigest()


def test_existing_outputs_are_not_replaced(first_run, monkeypatch):
    case_dir, report = first_run
    stamp = {p: p.stat().st_mtime_ns for p in report.written}
    import panelflow.study.runner as study

    def no_solving(*args, **kwargs):
        raise AssertionError("solved before the output check")

    monkeypatch.setattr(study, "run_study", no_solving)
    with pytest.raises(OutputError, match="exists; not overwritten"):
        run_case(load_case(case_dir / "study.toml"))
    assert {p: p.stat().st_mtime_ns for p in report.written} == stamp
    monkeypatch.undo()
    replaced = run_case(load_case(case_dir / "study.toml"), overwrite=True, progress=False)
    assert (replaced.folder / "polars.csv").read_bytes() == \
        (report.folder / "polars.csv").read_bytes()


def test_example_case_runs(tmp_path):
    case = load_case(GEOMETRIES / "tender_study.toml")
    report = run_case(case, output=tmp_path / "out", progress=False)
    table = report.table
    assert len(table) == 6 * 15  # six sections, -4..10 deg in 1 deg steps
    assert tidy_table(report.polars).names == table.names
    loads = json.loads((tmp_path / "out" / "front_foil_loads.json").read_text())
    assert loads["conditions"]["speed"] == 8.0
