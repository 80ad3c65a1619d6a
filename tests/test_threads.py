"""Thread discipline: results bit for bit the same whatever the number of threads, BLAS on one
thread inside panelflow, the user's cap, and bounded memory of large fields (measured with
tracemalloc, not timed).

"The same" means ``np.array_equal``: every stage partitions its work by the problem size only,
so the number of threads must not change a single bit.
"""

from __future__ import annotations

import threading
import tracemalloc

import numpy as np
import pytest
from threadpoolctl import threadpool_limits

import panelflow as pf
from panelflow import threads
from panelflow.errors import InputError
from panelflow.flow import field, influence, solver
from panelflow.geometry.panelling import respline
from panelflow.geometry.panels import Panels
from panelflow.geometry.sections import circle, naca4


@pytest.fixture
def many_cores(monkeypatch):
    """Pretend the machine has 4 cores, so the threaded paths run even on a 1-core runner."""
    monkeypatch.delenv(threads.ENV_VARIABLE, raising=False)
    monkeypatch.setattr(threads, "cpu_count", lambda: 4)


def _bodies():
    return [naca4("4412", closed_te=True), circle(0.08).translated(1.2, -0.1)]


def _run_all(n_panels: int):
    """Every stage's result as plain arrays: assembly, unit solutions, analysis, field."""
    bodies = _bodies()
    panels = Panels.from_panellings([respline(o, n_panels) for o in bodies])
    matrix, _, _ = solver.assemble(panels)
    system = solver.factorise(panels)
    result = pf.analyse(bodies, [-3.0, 2.0, 7.0], n_panels=n_panels)
    pts, shape = field.grid_points((-0.4, 1.6, -0.5, 0.5), (45, 31))
    flow = field.flow_field(system, pts, [2.0], shape)
    return [matrix, system.unit, result.cl, result.cm, result.cl_error_estimate,
            result.fine.cp, flow.u, flow.v, flow.cp]


def _assert_same_bits(a, b):
    for x, y in zip(a, b, strict=True):
        assert np.array_equal(x, y, equal_nan=True)


@pytest.mark.parametrize("n_threads", [2, 3, 4])
def test_results_do_not_depend_on_panelflow_threads(many_cores, n_threads):
    with threads.limited(1):
        one = _run_all(70)
    with threads.limited(n_threads):
        assert threads.cap() == n_threads
        many = _run_all(70)
    _assert_same_bits(one, many)


@pytest.mark.parametrize("blas", [1, 2])
def test_results_do_not_depend_on_the_process_blas_threads(blas):
    with threadpool_limits(limits=1, user_api="blas"):
        ref = _run_all(50)
    with threadpool_limits(limits=blas, user_api="blas"):
        _assert_same_bits(ref, _run_all(50))


def test_results_on_another_thread_are_the_same(many_cores):
    """A study task on a Dask or executor thread: the BLAS setting must reach that thread too."""
    ref = _run_all(40)
    out = {}
    worker = threading.Thread(target=lambda: out.setdefault("r", _run_all(40)))
    worker.start()
    worker.join()
    _assert_same_bits(ref, out["r"])


@pytest.mark.parametrize("n", [300, 700])
def test_blocked_factorisation_is_independent_of_threads(many_cores, monkeypatch, n):
    """With solver.LU_BLOCKED_FROM set (off by default) the LU's updates run in column chunks
    on threads (a low threshold here, so that the check is quick; chunks are LU_CHUNK wide)."""
    monkeypatch.setattr(solver, "LU_BLOCKED_FROM", 250)
    assert n > solver.LU_CHUNK
    rng = np.random.default_rng(n)
    a = rng.normal(size=(n, n)) + n ** 0.5 * np.eye(n)
    with threads.limited(1):
        lu1, piv1 = solver.lu_factor(a.copy())
    with threads.limited(4):
        lu4, piv4 = solver.lu_factor(a.copy())
    assert np.array_equal(lu1, lu4) and np.array_equal(piv1, piv4)
    # and it is an LU factorisation of a with partial pivoting (scipy's triangular solves)
    import scipy.linalg

    b = rng.normal(size=(n, 2))
    x = scipy.linalg.lu_solve((lu1, piv1), b)
    # backward error of a stable factorisation: a few hundred units of round-off times |a||x|
    resid = np.abs(a @ x - b).max() / (np.abs(a).sum(axis=1).max() * np.abs(x).max())
    assert resid < 1e-13
    ref = scipy.linalg.lu_factor(a)
    np.testing.assert_array_equal(piv1, ref[1])  # the same pivot rows as LAPACK's
    np.testing.assert_allclose(lu1, ref[0], atol=1e-10 * np.abs(ref[0]).max())


def test_one_blas_thread_sets_and_restores():
    with threadpool_limits(limits=2, user_api="blas"):
        before = threads.blas_threads()
        with threads.one_blas_thread():
            assert set(threads.blas_threads()) == {1}
            with threads.one_blas_thread():  # nested: still one, restored only at the end
                pass
            assert set(threads.blas_threads()) == {1}
        assert threads.blas_threads() == before


def test_one_blas_thread_from_another_thread():
    """threadpoolctl ignores limits from any thread but its first; ours must not."""
    seen = {}

    def work():
        with threads.one_blas_thread():
            seen["inside"] = threads.blas_threads()

    with threadpool_limits(limits=2, user_api="blas"):
        t = threading.Thread(target=work)
        t.start()
        t.join()
    assert set(seen["inside"]) == {1}


@pytest.mark.parametrize("value, expected", [("1", 1), ("2", 2), (" 3 ", 3), ("64", 4)])
def test_user_cap(monkeypatch, many_cores, value, expected):
    monkeypatch.setenv(threads.ENV_VARIABLE, value)
    assert threads.cap() == expected  # never above the 4 cores of the fixture


@pytest.mark.parametrize("value", ["0", "-2", "two", "1.5"])
def test_bad_user_cap_is_a_clear_error(monkeypatch, value):
    monkeypatch.setenv(threads.ENV_VARIABLE, value)
    with pytest.raises(InputError, match=threads.ENV_VARIABLE):
        threads.cap()


def test_no_nested_threads(many_cores):
    """Work started inside a panelflow worker thread runs on that thread."""
    seen = []

    def job(i):
        seen.append(threads.cap())

    threads.run_blocks(job, 8)
    assert seen == [1] * 8


def test_run_blocks_raises_the_first_error(many_cores):
    def job(i):
        if i == 5:
            raise ValueError("block 5")

    with pytest.raises(ValueError, match="block 5"):
        threads.run_blocks(job, 8)


# ---------------------------------------------------------------------------------- memory
def _field_extra_memory(n: int) -> tuple[float, float]:
    """Peak traced memory of an n x n field beyond its result arrays, and the results, MiB."""
    system = pf.analyse([naca4("2412", closed_te=True)], [4.0], n_panels=60,
                        error_estimate=False).fine.system
    tracemalloc.start()
    try:
        pts, shape = field.grid_points((-0.5, 1.5, -0.6, 0.6), (n, n))
        flow = field.flow_field(system, pts, [4.0], shape)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    results = sum(a.nbytes for a in (flow.points, flow.u, flow.v, flow.cp, flow.inside))
    return (peak - results) / 2**20, results / 2**20


def test_field_memory_does_not_grow_with_the_grid():
    small, _ = _field_extra_memory(300)  # 90 000 points: more than one chunk
    large, results = _field_extra_memory(700)  # 490 000 points
    # Bounded by one chunk of FIELD_CHUNK points (about 1 kB each, measured 22 MiB at
    # 1000 x 1000); evaluated all at once the temporaries took ~330 bytes per point (about
    # 150 MiB here), so growth would show.
    assert large < 48.0
    assert large < small + 12.0
    assert results > 15.0  # the check is about a grid whose results alone are sizeable


def test_csv_field_file_is_written_in_chunks(tmp_path, monkeypatch):
    from panelflow.output import field_files

    # small chunks, so that a grid quick to write under tracemalloc spans many of them
    monkeypatch.setattr(field_files, "WRITE_CHUNK", 2048)
    system = pf.analyse([naca4("0012", closed_te=True)], [2.0], n_panels=40,
                        error_estimate=False).fine.system
    pts, shape = field.grid_points((-0.5, 1.5, -0.6, 0.6), (200, 120))
    flow = field.flow_field(system, pts, [2.0], shape)
    tracemalloc.start()
    try:
        field_files.write_field(flow, tmp_path / "f.csv")
        peak = tracemalloc.get_traced_memory()[1] / 2**20
    finally:
        tracemalloc.stop()
    # one chunk's table and text are about 0.3 MiB; the whole table and text of these 24 000
    # rows held in memory at once (as the writer did before) measured 6.7 MiB
    assert peak < 3.0
    # the column names, then one row per point in order
    table = np.loadtxt(tmp_path / "f.csv", delimiter=",", skiprows=1)
    assert table.shape == (len(pts), 6)
    np.testing.assert_allclose(table[:, 0] + 1j * table[:, 1], pts, rtol=1e-14)  # 15 digits
    np.testing.assert_allclose(table[:, 4], flow.cp[0], rtol=1e-13, atol=1e-14)
