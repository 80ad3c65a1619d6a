"""Speed benchmark: every goal is a ratio of two timings measured side by side in one run.

How it measures, so that no ratio can flatter us:

* both sides of a ratio run in this process under the same thread settings, interleaved (A, B,
  A, B, ...), after one warm-up call each, and repeated; the report gives min / median / max of
  each side and the ratio of the minima (the least disturbed run of each; other load on the
  machine only ever adds time);
* single-threaded parts are timed in CPU time of the calling thread (``time.thread_time``) with
  panelflow capped at one thread and BLAS on one thread for both sides, so a second core, or
  another process on it, cannot help or hurt one side only; parallel parts (the study on
  processes) are timed in wall time, both sides with the same pools started before timing;
* every timed call of an analysis gets its own copy of the outline, made before timing: what
  panelflow keeps on an outline (its checked input, its panellings' checks) would otherwise make
  the second call cheaper than a user's first;
* the kernels are compared with a real floor: one ``np.log`` and one ``np.arctan2`` per
  point-panel pair in float64 (the transcendental functions the closed forms need), on arrays of
  the same number of pairs, written into preallocated arrays.

Goals (from the speed issue):

=====  ============================================================  =====
name   ratio                                                         goal
=====  ============================================================  =====
A      assembly of 800 panels per pair / floor per pair              <= 3
B      build + factorise + one solve at 800 panels / bare LU + solve  <= 2
C      default analysis at 200 panels (error estimate) / bare LU      <= 8
D      200 x 200 field per pair / floor per pair                      <= 3
E      study 20 sections x 81 angles: 1 process / 2 processes         >= 1.8
=====  ============================================================  =====

the section design (``--design-only`` for these alone, about half a minute):

=====  ============================================================  =====
I      one inverse-design iteration, 240 panels / one analysis          <= 10
J      a 12-parameter optimisation to convergence: panel solutions and  info
       its wall time in analyses
=====  ============================================================  =====

and, with ``--viscous`` (about four minutes more), the viscous analysis:

=====  ============================================================  =====
G      one converged viscous point, 200 panels / one inviscid analysis <= 20
H      41-angle warm-started viscous polar / 41 cold single points     <= 0.5
=====  ============================================================  =====

plus the field's peak memory beyond its results at 1000 x 1000 and 2000 x 2000 points (goal:
under 200 MiB), and, printed for information, the kernels in numpy (the fallback), a 101-angle
sweep, the command-line start-up and a large factorisation on all cores.

Run: ``python scripts/bench.py`` (two to four minutes on 2 cores); ``--json FILE`` writes every
number for comparison across commits; ``--quick`` fewer repeats and no 2000 x 2000 field.
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import os
import platform
import statistics
import subprocess
import sys
import time
import tracemalloc
from pathlib import Path

import numpy as np
import scipy.linalg

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:  # run from a checkout without installing
    sys.path.insert(0, str(ROOT))

import panelflow as pf  # noqa: E402
from panelflow import threads  # noqa: E402
from panelflow.analysis.inviscid import build, default_reference  # noqa: E402
from panelflow.flow import influence, solver  # noqa: E402
from panelflow.flow.surface import evaluate  # noqa: E402
from panelflow.geometry.panelling import respline  # noqa: E402
from panelflow.geometry.panels import Panels  # noqa: E402
from panelflow.geometry.sections import naca4  # noqa: E402

GOALS = {
    "A": ("assembly of 800 panels per pair / log+arctan2 floor per pair", "<=", 3.0),
    "B": ("build + factorise + one solve, 800 panels / bare LU factor + solve", "<=", 2.0),
    "C": ("default analysis, 200 panels, error estimate / bare LU factor + solve", "<=", 8.0),
    "D": ("200 x 200 field per pair / log+arctan2 floor per pair", "<=", 3.0),
    "E": ("study 20 sections x 81 angles: 1 process / 2 processes", ">=", 1.8),
    "M": ("field memory beyond its results, largest grid measured (MiB)", "<=", 200.0),
}


# ---------------------------------------------------------------------------------- timing
def _stats(times, per: float = 1.0) -> dict:
    t = np.asarray(times) / per
    return {"min": float(t.min()), "median": float(statistics.median(t)), "max": float(t.max()),
            "repeats": len(t)}


def side_by_side(funcs: dict, repeats: int, clock=time.thread_time, per: dict | None = None):
    """Time each function of ``funcs`` ``repeats`` times, interleaved, after one warm-up each.

    Returns a dict name -> stats (seconds, divided by ``per[name]`` when given).
    """
    for f in funcs.values():
        f()
    times = {name: [] for name in funcs}
    for _ in range(repeats):
        for name, f in funcs.items():
            t0 = clock()
            f()
            times[name].append(clock() - t0)
    per = per or {}
    return {name: _stats(t, per.get(name, 1.0)) for name, t in times.items()}


class single_thread:
    """panelflow capped at one thread and BLAS on one thread, for both sides of a ratio."""

    def __enter__(self):
        self._a = threads.limited(1)
        self._b = threads.one_blas_thread()
        self._a.__enter__()
        self._b.__enter__()
        return self

    def __exit__(self, *exc):
        self._b.__exit__(*exc)
        self._a.__exit__(*exc)


def _floor(n_pairs: int):
    """One log and one arctan2 per pair, float64, into preallocated arrays."""
    rng = np.random.default_rng(0)
    r2 = rng.uniform(1e-4, 4.0, n_pairs)
    y = rng.uniform(-1.0, 1.0, n_pairs)
    x = rng.uniform(-1.0, 1.0, n_pairs)
    a, b = np.empty(n_pairs), np.empty(n_pairs)

    def floor():
        np.log(r2, out=a)
        np.arctan2(y, x, out=b)

    return floor


def _bare_lu(n: int):
    """LAPACK's factorisation and solve through scipy without its finiteness checks (each a full
    pass over the matrix): the bare cost of the linear algebra."""
    rng = np.random.default_rng(n)
    a = rng.random((n, n)) + n * np.eye(n)
    b = rng.random((n, 2))

    def bare():
        scipy.linalg.lu_solve(scipy.linalg.lu_factor(a, check_finite=False), b,
                              check_finite=False)

    return bare


def _foil():
    return [naca4("2412", closed_te=True)]


def _fresh(outlines, calls: int):
    """A supplier of fresh copies of ``outlines``, one list per call, all made before timing
    (``calls`` covers the warm-up and the repeats)."""
    copies = iter([[dataclasses.replace(o) for o in outlines] for _ in range(calls)])
    return lambda: next(copies)


def _ratio(num: dict, den: dict) -> float:
    return num["min"] / den["min"]


# ---------------------------------------------------------------------------------- goals
def goal_assembly(repeats: int, kernel: str | None = None) -> dict:
    panels = Panels.from_panellings([respline(_foil()[0], 800)])
    n_pairs = (panels.n_nodes + panels.n_bodies) * panels.n_panels
    env = {influence.KERNELS_VARIABLE: "numpy"} if kernel == "numpy" else {}

    def assemble():
        old = {k: os.environ.get(k) for k in env}
        os.environ.update(env)
        try:
            solver.assemble(panels)
        finally:
            for k, v in old.items():
                if v is None:
                    os.environ.pop(k, None)
                else:
                    os.environ[k] = v

    with single_thread():
        s = side_by_side({"assembly": assemble, "floor": _floor(n_pairs)}, repeats,
                         per={"assembly": n_pairs, "floor": n_pairs})
    return {"sides": s, "ratio": _ratio(s["assembly"], s["floor"]), "pairs": n_pairs,
            "unit": "s per pair, CPU time, 1 thread"}


def goal_build(repeats: int, sizes=(200, 400, 800)) -> dict:
    foil = _foil()
    chord, quarter = default_reference(foil)
    rows = {}
    for n in sizes:
        fresh = _fresh(foil, repeats + 1)

        def ours(n=n, fresh=fresh):
            _, system = build(fresh(), n)
            evaluate(system, [4.0], chord, quarter)

        with single_thread():
            s = side_by_side({"ours": ours, "bare LU": _bare_lu(n + 2)}, repeats)
        rows[n] = {"sides": s, "ratio": _ratio(s["ours"], s["bare LU"])}
    return {"sizes": rows, "ratio": rows[sizes[-1]]["ratio"],
            "unit": "s, CPU time, 1 thread; bare LU of a random (n + 2)-square system, 2 RHS"}


def goal_analysis(repeats: int) -> dict:
    fresh = _fresh(_foil(), repeats + 1)
    with single_thread():
        s = side_by_side({"analysis": lambda: pf.analyse(fresh(), [4.0]),
                          "bare LU": _bare_lu(202)}, repeats)
    return {"sides": s, "ratio": _ratio(s["analysis"], s["bare LU"]),
            "unit": "s, CPU time, 1 thread; 200 panels and the 100-panel estimate solve"}


def _field_case(n: int, n_panels: int = 200):
    from panelflow.flow.field import flow_field, grid_points

    system = pf.analyse(_foil(), [4.0], n_panels=n_panels, error_estimate=False).fine.system
    pts, shape = grid_points((-0.5, 1.5, -0.6, 0.6), (n, n))
    return system, pts, shape, flow_field


def goal_field(repeats: int) -> dict:
    system, pts, shape, flow_field = _field_case(200)
    n_pairs = len(pts) * system.panels.n_panels
    with single_thread():
        s = side_by_side({"field": lambda: flow_field(system, pts, [4.0], shape),
                          "floor": _floor(n_pairs)}, max(3, repeats // 3),
                         per={"field": n_pairs, "floor": n_pairs})
    return {"sides": s, "ratio": _ratio(s["field"], s["floor"]), "pairs": n_pairs,
            "unit": "s per pair, CPU time, 1 thread; Cp and velocity, inside mask, "
                    "near-surface layer"}


def field_memory(n: int) -> dict:
    """Peak traced memory of an n x n field (all cores), beyond and including its results."""
    system, _, _, flow_field = _field_case(n)
    from panelflow.flow.field import grid_points

    tracemalloc.start()
    try:
        t0 = time.perf_counter()
        pts, shape = grid_points((-0.5, 1.5, -0.6, 0.6), (n, n))
        flow = flow_field(system, pts, [4.0], shape)
        wall = time.perf_counter() - t0
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    results = sum(a.nbytes for a in (flow.points, flow.u, flow.v, flow.cp, flow.inside))
    return {"points": n * n, "peak_mib": peak / 2**20, "results_mib": results / 2**20,
            "beyond_results_mib": (peak - results) / 2**20, "wall_s": wall,
            "threads": threads.cap()}


def _study_tasks():
    from panelflow.study.runner import section_tasks

    # 20 sections: camber 0-3 %, thickness 8-20 % (5 steps); 81 angles -10..10 deg
    return section_tasks(["naca{0..3}4{08..20:3}"], np.arange(-10.0, 10.001, 0.25))


def _burn(n: int) -> int:
    """Pure computation in one process: what two processes can gain on this machine now."""
    total = 0
    for i in range(n):
        total += i * i
    return total


def goal_study(repeats: int) -> dict:
    """The study on 1 and 2 worker processes, interleaved with a reference: the same pools
    running 20 equal pieces of pure computation. On a machine whose second core is taken by
    other work the reference shows it (its speed-up falls towards 1 as well)."""
    import concurrent.futures as cf

    from panelflow.study.runner import _worker_threads, run_study

    tasks = _study_tasks()
    assert len(tasks) == 20 and len(tasks[0].alpha_deg) == 81
    share = {1: threads.cap(), 2: max(1, threads.cap() // 2)}
    with cf.ProcessPoolExecutor(1, initializer=_worker_threads, initargs=(share[1],)) as one, \
            cf.ProcessPoolExecutor(2, initializer=_worker_threads, initargs=(share[2],)) as two:
        s = side_by_side({"1 process": lambda: run_study(tasks, one, progress=False),
                          "2 processes": lambda: run_study(tasks, two, progress=False),
                          "reference, 1 process": lambda: list(one.map(_burn, [150_000] * 20)),
                          "reference, 2 processes": lambda: list(two.map(_burn, [150_000] * 20))},
                         max(3, repeats // 3), clock=time.perf_counter)
    return {"sides": s, "ratio": _ratio(s["1 process"], s["2 processes"]),
            "reference": _ratio(s["reference, 1 process"], s["reference, 2 processes"]),
            "unit": "s, wall time, pools started before timing",
            "cores": threads.cpu_count()}


# ---------------------------------------------------------------------------------- extras
def info_sweep(repeats: int) -> dict:
    many, one = _fresh(_foil(), repeats + 1), _fresh(_foil(), repeats + 1)
    angles = np.linspace(-10.0, 10.0, 101)
    with single_thread():
        s = side_by_side({"101 angles": lambda: pf.analyse(many(), angles),
                          "1 angle": lambda: pf.analyse(one(), [4.0])}, repeats)
    return {"sides": s, "ratio": _ratio(s["101 angles"], s["1 angle"]),
            "unit": "s, CPU time, 1 thread"}


def info_cli(repeats: int) -> dict:
    def run(cmd):
        return lambda: subprocess.run(cmd, check=True, capture_output=True,
                                      env={**os.environ, "PYTHONPATH": str(ROOT)})

    s = side_by_side({"panelflow solve": run([sys.executable, "-m", "panelflow", "solve",
                                              "naca2412", "--alpha", "4"]),
                      "import numpy, scipy.linalg": run([sys.executable, "-c",
                                                         "import numpy, scipy.linalg"])},
                     max(3, repeats // 2), clock=time.perf_counter)
    return {"sides": s, "ratio": _ratio(s["panelflow solve"], s["import numpy, scipy.linalg"]),
            "unit": "s, wall time of a new process"}


def info_large_lu(repeats: int, n: int = 2502) -> dict:
    """The blocked factorisation on all cores (bit-identical for any thread count; off by
    default, see solver.LU_BLOCKED_FROM) against LAPACK's on one thread (panelflow's default)
    and on all cores (whose bits depend on the thread count)."""
    rng = np.random.default_rng(n)
    a = rng.random((n, n)) + n * np.eye(n)
    from threadpoolctl import threadpool_limits

    def lapack_all():
        with threadpool_limits(threads.cap(), user_api="blas"):
            scipy.linalg.lu_factor(a)

    def lapack_one():
        with threads.one_blas_thread():
            scipy.linalg.lu_factor(a)

    def blocked():
        with threads.one_blas_thread():  # as solver.lu_factor runs it
            solver._lu_blocked(a.copy())

    s = side_by_side({"blocked": blocked,
                      "LAPACK 1 thread": lapack_one, "LAPACK all cores": lapack_all},
                     max(3, repeats // 3), clock=time.perf_counter)
    return {"sides": s, "ratio": _ratio(s["blocked"], s["LAPACK 1 thread"]), "n": n,
            "unit": "s, wall time, all cores"}


# ---------------------------------------------------------------------------------- report
def _fmt(stats: dict, scale: float, unit: str) -> str:
    return (f"min {stats['min'] * scale:8.3f}  median {stats['median'] * scale:8.3f}  "
            f"max {stats['max'] * scale:8.3f} {unit}")


def _verdict(key: str, ratio: float) -> str:
    _, op, goal = GOALS[key]
    met = ratio <= goal if op == "<=" else ratio >= goal
    return f"goal {op} {goal:g}: {'met' if met else 'NOT met'}"


def run(repeats: int = 15, large: bool = True, extras: bool = True) -> dict:
    out = {"python": platform.python_version(), "numpy": np.__version__,
           "scipy": scipy.__version__, "cores": threads.cpu_count(),
           "compiled_kernels": influence.compiled_kernels(),
           "blas_threads_outside": threads.blas_threads(), "goals": {}, "info": {}}
    g = out["goals"]

    r = g["A"] = goal_assembly(repeats)
    print(f"A  {GOALS['A'][0]}")
    print(f"     assembly  {_fmt(r['sides']['assembly'], 1e9, 'ns')}  ({r['pairs']} pairs)")
    print(f"     floor     {_fmt(r['sides']['floor'], 1e9, 'ns')}")
    print(f"     ratio of minima {r['ratio']:.2f}   {_verdict('A', r['ratio'])}")

    r = g["B"] = goal_build(repeats)
    print(f"B  {GOALS['B'][0]}")
    for n, row in r["sizes"].items():
        print(f"     {n:4d} panels  ours {_fmt(row['sides']['ours'], 1e3, 'ms')}")
        print(f"                 bare {_fmt(row['sides']['bare LU'], 1e3, 'ms')}   "
              f"ratio {row['ratio']:.2f}")
    print(f"     ratio at 800 panels {r['ratio']:.2f}   {_verdict('B', r['ratio'])}")

    r = g["C"] = goal_analysis(repeats)
    print(f"C  {GOALS['C'][0]}")
    print(f"     analysis  {_fmt(r['sides']['analysis'], 1e3, 'ms')}")
    print(f"     bare LU   {_fmt(r['sides']['bare LU'], 1e3, 'ms')}")
    print(f"     ratio of minima {r['ratio']:.2f}   {_verdict('C', r['ratio'])}")

    r = g["D"] = goal_field(repeats)
    print(f"D  {GOALS['D'][0]}")
    print(f"     field     {_fmt(r['sides']['field'], 1e9, 'ns')}  ({r['pairs']} pairs)")
    print(f"     floor     {_fmt(r['sides']['floor'], 1e9, 'ns')}")
    print(f"     ratio of minima {r['ratio']:.2f}   {_verdict('D', r['ratio'])}")

    r = g["E"] = goal_study(repeats)
    print(f"E  {GOALS['E'][0]}")
    print(f"     1 process   {_fmt(r['sides']['1 process'], 1e3, 'ms')}")
    print(f"     2 processes {_fmt(r['sides']['2 processes'], 1e3, 'ms')}")
    print(f"     speed-up (ratio of minima) {r['ratio']:.2f}   {_verdict('E', r['ratio'])}"
          f"   ({r['cores']} cores)")
    print(f"     the same pools on pure computation (what this machine gives now): "
          f"{r['reference']:.2f}")

    mem = [field_memory(1000)] + ([field_memory(2000)] if large else [])
    g["M"] = {"grids": mem, "ratio": max(m["beyond_results_mib"] for m in mem)}
    print(f"M  {GOALS['M'][0]}")
    for m in mem:
        print(f"     {int(m['points'] ** 0.5)}^2 points: peak {m['peak_mib']:.0f} MiB = results "
              f"{m['results_mib']:.0f} MiB + {m['beyond_results_mib']:.0f} MiB "
              f"({m['wall_s']:.1f} s on {m['threads']} threads)")
    print(f"     largest beyond the results {g['M']['ratio']:.0f} MiB   "
          f"{_verdict('M', g['M']['ratio'])}")

    if extras:
        print("for information:")
        if influence._compiled is not None:
            r = out["info"]["assembly_numpy"] = goal_assembly(max(3, repeats // 3), "numpy")
            print(f"     assembly with the numpy kernels / floor: {r['ratio']:.2f}")
        r = out["info"]["sweep"] = info_sweep(repeats)
        print(f"     101-angle analysis / 1-angle analysis: {r['ratio']:.2f}")
        r = out["info"]["cli"] = info_cli(repeats)
        print(f"     panelflow solve / python -c 'import numpy, scipy.linalg': {r['ratio']:.2f}"
              f"  ({r['sides']['panelflow solve']['min'] * 1e3:.0f} ms)")
        r = out["info"]["large_lu"] = info_large_lu(repeats)
        s = r["sides"]
        print(f"     LU of {r['n']}: blocked on all cores {s['blocked']['min'] * 1e3:.0f} ms, LAPACK one "
              f"thread {s['LAPACK 1 thread']['min'] * 1e3:.0f} ms, LAPACK all cores "
              f"{s['LAPACK all cores']['min'] * 1e3:.0f} ms (wall)")
    print()
    print("summary (ratio of minima, one run):")
    for key in "ABCDE":
        print(f"  {key}  {g[key]['ratio']:6.2f}  {_verdict(key, g[key]['ratio'])}   "
              f"{GOALS[key][0]}")
    print(f"  M  {g['M']['ratio']:6.0f}  {_verdict('M', g['M']['ratio'])}   {GOALS['M'][0]}")
    return out


# ------------------------------------------------------------------------- viscous analysis
VISCOUS_GOALS = {
    "G": ("one viscous point, 200 panels, cold start / one inviscid analysis", "<=", 20.0),
    "H": ("41-angle warm-started viscous polar / 41 cold single points", "<=", 0.5),
}


def _best_wall(func, repeats: int) -> float:
    best = float("inf")
    for _ in range(repeats):
        t0 = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - t0)
    return best


def goal_viscous_point(n_panels: int = 200, reynolds: float = 3e6, alpha: float = 2.0) -> dict:
    """G: one converged viscous point (cold start) against one inviscid analysis of the same
    section, both building their own system (wall time, best of several: the Newton iteration
    takes about a second, too long to interleave many repeats)."""
    from panelflow.viscous import solve as viscous_solve

    foil = [naca4("0012")]

    def inviscid():
        pf.analyse(foil, [alpha], n_panels=n_panels)

    def viscous():
        _, system = build(foil, n_panels)
        out = viscous_solve(system, alpha, reynolds)
        if not out.converged:
            raise RuntimeError("benchmark point did not converge")
        return out

    with threads.limited(1), threads.one_blas_thread():
        t_inv, t_vis = _best_wall(inviscid, 7), _best_wall(viscous, 5)
    return {"inviscid_s": t_inv, "viscous_s": t_vis, "ratio": t_vis / t_inv}


def goal_viscous_polar(n_panels: int = 200, reynolds: float = 3e6) -> dict:
    """H: a 41-angle warm-started viscous polar (-10 to 10 deg) against 41 cold points."""
    from panelflow.viscous import polar as viscous_polar
    from panelflow.viscous import solve as viscous_solve

    _, system = build([naca4("0012")], n_panels)
    angles = np.linspace(-10.0, 10.0, 41)
    with threads.limited(1), threads.one_blas_thread():
        t0 = time.perf_counter()
        sweep = viscous_polar(system, angles, reynolds)
        t_polar = time.perf_counter() - t0
        t0 = time.perf_counter()
        cold = [viscous_solve(system, a, reynolds) for a in angles]
        t_cold = time.perf_counter() - t0
    return {"polar_s": t_polar, "cold_s": t_cold, "ratio": t_polar / t_cold,
            "converged_polar": int(np.sum(sweep.converged)),
            "converged_cold": int(sum(r.converged for r in cold))}


def run_viscous() -> dict:
    out = {}
    g = out["G"] = goal_viscous_point()
    print(f"G  viscous point {1e3 * g['viscous_s']:.0f} ms, inviscid analysis "
          f"{1e3 * g['inviscid_s']:.1f} ms: ratio {g['ratio']:.2f}")
    h = out["H"] = goal_viscous_polar()
    print(f"H  warm polar {h['polar_s']:.1f} s ({h['converged_polar']}/41 converged), 41 cold "
          f"points {h['cold_s']:.1f} s ({h['converged_cold']}/41): ratio {h['ratio']:.2f}")
    for key, (what, sense, goal) in VISCOUS_GOALS.items():
        ratio = out[key]["ratio"]
        met = ratio <= goal if sense == "<=" else ratio >= goal
        print(f"  {key} {ratio:7.2f}  goal {sense} {goal:g}: {'met' if met else 'NOT met'}   {what}")
    return out


# ------------------------------------------------------------------------- section design
DESIGN_GOALS = {
    "I": ("one inverse-design iteration, 240 panels / one analysis of the same section", "<=",
          10.0),
}


def _demo_foil():
    return pf.load_outlines(str(ROOT / "geometries" / "tender_front_foil.dat"))[0]


def goal_inverse_iteration(repeats: int) -> dict:
    """I: one Gauss-Newton iteration of the inverse design against one default analysis (its
    error estimate included) of the same section at the same panel count, both in CPU time on
    one thread, interleaved.

    One iteration is what the design repeats: a new section solved (assembly, factorisation),
    the exact sensitivities of its solution to the shape coefficients (one pass over the
    point-panel pairs, one solve with the kept factors), the Cp Jacobian and the damped least
    squares step. Alternating between two coefficient sets keeps the model from reusing its
    last solution.
    """
    from panelflow.design.inverse import _qp_step, _targeted, design_form
    from panelflow.design.model import DesignModel
    from panelflow.design.targets import plateau_target
    from panelflow.design.check import surface_cp

    foil = _demo_foil()
    panels = 240
    xu, cu, xl, cl = surface_cp(pf.solve(pf.Problem([foil], pf.OperatingPoint(alpha_deg=(2.0,)),
                                                    panels=panels, error_estimate=False)))
    target = plateau_target(lambda x: np.interp(x, xu, cu), "upper", -0.75, 0.04, 0.45, 0.8,
                            other=lambda x: np.interp(x, xl, cl))
    form = design_form(foil, target)
    model = DesignModel(form, panels)
    idx, cp_t = _targeted(model, target, 0.01)
    coefficients = [form.coefficients, form.coefficients + 1e-6]
    turn = [0]

    def iteration():
        c = coefficients[turn[0] % 2]
        turn[0] += 1
        st = model.state(c)
        dcp, _ = st.cp_derivatives(2.0)
        jac = dcp[idx]
        r = st.cp(2.0)[idx] - cp_t
        n = jac.shape[1]
        _qp_step(jac, r, 1e-3 * np.eye(n), np.zeros((0, n)), np.zeros(0), np.zeros((0, n)),
                 np.zeros(0))

    with single_thread():
        s = side_by_side({"iteration": iteration,
                          "analysis": lambda: pf.analyse([foil], [2.0], n_panels=panels)},
                         repeats)
    return {"sides": s, "ratio": _ratio(s["iteration"], s["analysis"]),
            "functions": form.size, "panels": panels,
            "unit": "s, CPU time, 1 thread; analysis with its error estimate"}


def info_optimisation(repeats: int = 3) -> dict:
    """A 12-parameter optimisation to convergence (the demo job's objective and constraints,
    one start) as a count of panel solutions and a wall time relative to one analysis of the
    start at the same panel count (best of ``repeats`` each, one thread)."""
    from panelflow.design.optimise import optimise
    from panelflow.design.spec import load_design_case

    case = load_design_case(ROOT / "geometries" / "tender_front_foil_design.toml")
    job = case.job
    job = type(job)(**{**{f: getattr(job, f) for f in job.__dataclass_fields__},
                       "starts": 1, "functions": 12})
    foil = case.start()
    with threads.limited(1), threads.one_blas_thread():
        t_analysis = _best_wall(lambda: pf.analyse([foil], [2.0], n_panels=job.panels), 7)
        best, result = float("inf"), None
        for _ in range(repeats):
            t0 = time.perf_counter()
            result = optimise(foil, job)
            best = min(best, time.perf_counter() - t0)
    start = result.starts[0]
    return {"parameters": job.functions, "analyses": result.analyses,
            "iterations": start.iterations, "converged": start.success,
            "feasible": result.feasible, "optimisation_s": best, "analysis_s": t_analysis,
            "ratio": best / t_analysis}


def run_design(repeats: int = 15) -> dict:
    out = {}
    r = out["I"] = goal_inverse_iteration(repeats)
    print(f"I  {DESIGN_GOALS['I'][0]}")
    print(f"     iteration {_fmt(r['sides']['iteration'], 1e3, 'ms')}  ({r['functions']} "
          "shape functions)")
    print(f"     analysis  {_fmt(r['sides']['analysis'], 1e3, 'ms')}")
    what, sense, goal = DESIGN_GOALS["I"]
    met = r["ratio"] <= goal
    print(f"     ratio of minima {r['ratio']:.2f}   goal {sense} {goal:g}: "
          f"{'met' if met else 'NOT met'}")
    r = out["J"] = info_optimisation()
    print(f"J  {r['parameters']}-parameter optimisation (the demo job, one start) to "
          f"{'convergence' if r['converged'] else 'its iteration limit'}: {r['analyses']} panel "
          f"solutions in {r['iterations']} iterations, {r['optimisation_s']:.2f} s wall = "
          f"{r['ratio']:.0f} analyses' time ({1e3 * r['analysis_s']:.1f} ms each)")
    return out


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description="panelflow speed ratios, measured side by side")
    parser.add_argument("--json", metavar="FILE", help="write every number to FILE as JSON")
    parser.add_argument("--quick", action="store_true",
                        help="fewer repeats, no 2000 x 2000 field, no extras")
    parser.add_argument("--viscous", action="store_true",
                        help="also the viscous goals G and H (about four minutes more)")
    parser.add_argument("--viscous-only", action="store_true", help="only the viscous goals")
    parser.add_argument("--design-only", action="store_true",
                        help="only the section-design lines (I, J)")
    ns = parser.parse_args(argv)
    only = ns.viscous_only or ns.design_only
    out = {} if only else run(repeats=5 if ns.quick else 15, large=not ns.quick,
                              extras=not ns.quick)
    if not ns.viscous_only:
        out["design"] = run_design(repeats=5 if ns.quick else 15)
    if ns.viscous or ns.viscous_only:
        out["viscous"] = run_viscous()
    if ns.json:
        Path(ns.json).write_text(json.dumps(out, indent=1) + "\n", encoding="utf-8")
    return 0


if __name__ == "__main__":
    sys.exit(main())
