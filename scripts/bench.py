"""Speed benchmark: ratios measured side by side in one run (no absolute targets, no timed tests).

(a) build + factorise + one solve at 200, 400 and 800 panels against a bare scipy LU
    factorisation and solve of a random system of the same size        goal <= 4 at 800
(b) a 101-angle sweep against one angle, full analysis with error estimate  goal <= 1.3
(c) ``panelflow solve`` wall time against ``python -c "import numpy, scipy.linalg"``   goal <= 2
(d) a 200 x 200 velocity/Cp field around a 200-panel foil against one numpy complex logarithm
    over the same number of point-panel pairs                                  goal <= 3;
    and the peak memory of a 1000 x 1000 field (bounded by the blockwise evaluation), printed
(e) a 20-section x 81-angle study on 2 worker processes against 1 (both pools started before
    timing; the in-process run and the run with the pool start are printed)  goal >= 1.7
(f) the study runner's overhead per case, in-process and on 2 processes, against bare
    solves of the same sections (printed)
(g) one converged viscous point at 200 panels against one inviscid analysis of the same
    section                                                                   goal <= 20
(h) a 41-angle warm-started viscous polar against 41 single cold points      goal <= 0.5

Each timing is the best of several repeats, so other load on the machine inflates it least.
Run: ``python scripts/bench.py`` (about a minute, plus about four for the viscous section;
``python scripts/bench.py viscous`` runs that section alone).
"""

from __future__ import annotations

import subprocess
import sys
import time

import numpy as np
import scipy.linalg

import panelflow as pf
from panelflow.analysis.inviscid import build, default_reference
from panelflow.geometry.sections import naca4
from panelflow.flow.surface import evaluate

GOALS = {"a": 4.0, "b": 1.3, "c": 2.0, "d": 3.0}
GOAL_E = 1.7  # speed-up, at least


def best_of(func, repeats: int = 7) -> float:
    """Smallest wall time of ``repeats`` calls of ``func`` (seconds)."""
    func()  # warm up: imports, caches, thread pools
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        func()
        times.append(time.perf_counter() - t0)
    return min(times)


def bench_system(sizes=(200, 400, 800)):
    """Rows (panels, ours s, bare LU s, ratio) for benchmark (a)."""
    foil = [naca4("2412", closed_te=True)]
    chord, quarter = default_reference(foil)
    rng = np.random.default_rng(0)
    rows = []
    for n in sizes:
        def ours():
            _, system = build(foil, n)
            evaluate(system, [4.0], chord, quarter)

        a = rng.random((n + 2, n + 2)) + (n + 2) * np.eye(n + 2)
        b = rng.random(n + 2)

        def bare():
            scipy.linalg.lu_solve(scipy.linalg.lu_factor(a), b)

        t_ours, t_bare = best_of(ours), best_of(bare)
        rows.append((n, t_ours, t_bare, t_ours / t_bare))
    return rows


def bench_sweep(n_panels: int = 200):
    """(one angle s, 101 angles s, ratio, 101 angles with per-angle objects s) for (b).

    The analysis computes every reported number (coefficients, error estimates, surface Cp,
    extremes) for all angles as arrays; per-angle result objects are built on access, so their
    cost is shown separately.
    """
    foil = [naca4("2412", closed_te=True)]
    angles = np.linspace(-10.0, 10.0, 101)
    t1 = best_of(lambda: pf.analyse(foil, [4.0], n_panels=n_panels))
    t101 = best_of(lambda: pf.analyse(foil, angles, n_panels=n_panels))
    t_obj = best_of(lambda: list(pf.analyse(foil, angles, n_panels=n_panels)))
    return t1, t101, t101 / t1, t_obj


def _wall(cmd, repeats: int = 5) -> float:
    subprocess.run(cmd, check=True, capture_output=True)
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, capture_output=True)
        times.append(time.perf_counter() - t0)
    return min(times)


def bench_cli():
    """(bare import s, panelflow solve s, ratio) for benchmark (c)."""
    t_bare = _wall([sys.executable, "-c", "import numpy, scipy.linalg"])
    t_cli = _wall([sys.executable, "-m", "panelflow", "solve", "naca2412", "--alpha", "4"])
    return t_bare, t_cli, t_cli / t_bare


def bench_field(n: int = 200, n_panels: int = 200):
    """(field s, complex log s, ratio) for benchmark (d)."""
    from panelflow.flow.field import flow_field, grid_points

    foil = [naca4("2412", closed_te=True)]
    system = pf.analyse(foil, [4.0], n_panels=n_panels, error_estimate=False).fine.system
    pts, shape = grid_points((-0.5, 1.5, -0.6, 0.6), (n, n))
    z = (np.random.default_rng(1).random(n * n * system.panels.n_panels) + 0.5) * (1 + 1j)
    t_field = best_of(lambda: flow_field(system, pts, [4.0], shape), repeats=3)
    t_log = best_of(lambda: np.log(z), repeats=3)
    return t_field, t_log, t_field / t_log


def field_peak_memory(n: int = 1000) -> float:
    """Peak traced memory (MB) of a n x n field around a 200-panel foil."""
    import tracemalloc

    from panelflow.flow.field import flow_field, grid_points

    foil = [naca4("2412", closed_te=True)]
    system = pf.analyse(foil, [4.0], n_panels=200, error_estimate=False).fine.system
    pts, shape = grid_points((-0.5, 1.5, -0.6, 0.6), (n, n))
    tracemalloc.start()
    flow_field(system, pts, [4.0], shape)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak / 1e6


def _study_tasks():
    from panelflow.study.runner import section_tasks

    # 20 sections: camber 0-3 %, thickness 8-20 % (5 steps); 81 angles -10..10 deg
    return section_tasks(["naca{0..3}4{08..20:3}"], np.arange(-10.0, 10.001, 0.25))


def bench_study():
    """(1 worker s, 2 workers s, ratio, in-process s, 2 workers with pool start s) for (e)."""
    import concurrent.futures as cf

    from panelflow.study.runner import _one_blas_thread, make_executor, run_study

    tasks = _study_tasks()
    assert len(tasks) == 20 and len(tasks[0].alpha_deg) == 81
    times = {}
    for n in (1, 2):
        # the pool make_executor(workers=2) gives, and the same with a single process
        with cf.ProcessPoolExecutor(n, initializer=_one_blas_thread) as ex:
            times[n] = best_of(lambda: run_study(tasks, ex, progress=False))
    t_here = best_of(lambda: run_study(tasks, progress=False))

    def cold():
        with make_executor(workers=2) as ex:
            run_study(tasks, ex, progress=False)

    t_cold = best_of(cold, repeats=3)
    return times[1], times[2], times[1] / times[2], t_here, t_cold


def bench_runner_overhead():
    """(bare s per case, in-process overhead s per case, 2-process overhead s per case).

    Bare: read or build the section and analyse it, in a plain loop. The runner adds the task
    objects, the polar extraction and, on processes, pickling and the round trip; the 2-process
    figure is the runner's time on two processes minus half the bare time.
    """
    from panelflow.geometry.readers import load_outlines
    from panelflow.study.runner import make_executor, run_study

    tasks = _study_tasks()
    n = len(tasks)
    angles = tasks[0].alpha_deg

    def bare():
        for t in tasks:
            pf.analyse(load_outlines(t.bodies[0].source), angles, n_panels=t.n_panels)

    t_bare = best_of(bare)
    t_here = best_of(lambda: run_study(tasks, progress=False))
    with make_executor(workers=2) as ex:
        t_pool = best_of(lambda: run_study(tasks, ex, progress=False))
    return t_bare / n, (t_here - t_bare) / n, (t_pool - t_bare / 2) / n


def main() -> int:
    print("(a) build + factorise + one solve, against a bare LU solve of the same size")
    rows = bench_system()
    for n, ours, bare, ratio in rows:
        print(f"    {n:4d} panels: {1e3 * ours:7.2f} ms vs {1e3 * bare:6.2f} ms   ratio {ratio:5.2f}")
    ra = rows[-1][3]
    t1, t101, rb, t_obj = bench_sweep()
    print(f"(b) 101 angles {1e3 * t101:.1f} ms vs one angle {1e3 * t1:.1f} ms   ratio {rb:.2f}"
          f"   (with 101 per-angle result objects: ratio {t_obj / t1:.2f})")
    t_bare, t_cli, rc = bench_cli()
    print(f"(c) panelflow solve {1e3 * t_cli:.0f} ms vs import numpy, scipy.linalg "
          f"{1e3 * t_bare:.0f} ms   ratio {rc:.2f}")
    t_field, t_log, rd = bench_field()
    print(f"(d) 200 x 200 field {1e3 * t_field:.0f} ms vs one complex log over the same pairs "
          f"{1e3 * t_log:.0f} ms   ratio {rd:.2f}")
    mem = field_peak_memory()
    print(f"    1000 x 1000 field: peak memory {mem:.0f} MB (the output arrays alone: "
          f"{1e6 * (16 * 2 + 8 * 3 + 1) / 1e6:.0f} MB per million points and angle)")
    t1, t2, re_, t_here, t_cold = bench_study()
    print(f"(e) 20 sections x 81 angles: 2 workers {1e3 * t2:.0f} ms vs 1 worker {1e3 * t1:.0f} ms"
          f"   ratio {re_:.2f}   (in-process {1e3 * t_here:.0f} ms; 2 workers with the pool "
          f"start {1e3 * t_cold:.0f} ms)")
    per_case, over_here, over_pool = bench_runner_overhead()
    print(f"(f) bare solve {1e3 * per_case:.1f} ms per case; runner overhead per case "
          f"{1e3 * over_here:+.2f} ms in-process ({100 * over_here / per_case:+.1f} %), "
          f"{1e3 * over_pool:+.2f} ms on 2 processes")
    print()
    for key, ratio in (("a", ra), ("b", rb), ("c", rc), ("d", rd)):
        verdict = "met" if ratio <= GOALS[key] else "NOT met"
        print(f"goal ({key}) <= {GOALS[key]:g}: {ratio:.2f} {verdict}")
    print(f"goal (e) >= {GOAL_E:g}: {re_:.2f} {'met' if re_ >= GOAL_E else 'NOT met'}")
    return 0


# --- viscous analysis (its own section: run alone with ``python scripts/bench.py viscous``) ---

VISCOUS_GOALS = {"g": 20.0, "h": 0.5}


def bench_viscous_point(n_panels: int = 200, reynolds: float = 3e6, alpha: float = 2.0):
    """(g): one converged viscous point against one inviscid solve of the same section.

    Both sides panel and factorise the section themselves; the inviscid side is the full
    analysis (with its error-estimate solve), the viscous side the coupled iteration from a
    cold start. Returns (inviscid s, viscous s, ratio, iterations).
    """
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

    t_inv = best_of(inviscid, repeats=5)
    t_vis = best_of(viscous, repeats=3)
    return t_inv, t_vis, t_vis / t_inv, viscous().iterations


def bench_viscous_polar(n_panels: int = 200, reynolds: float = 3e6):
    """(h): a 41-angle warm-started viscous polar against 41 cold single points.

    Angles -10 to 10 degrees by 0.5. Each side runs once (about a minute each); the counts of
    converged angles are returned too. Returns (polar s, cold s, ratio, converged polar,
    converged cold).
    """
    from panelflow.viscous import polar as viscous_polar
    from panelflow.viscous import solve as viscous_solve

    _, system = build([naca4("0012")], n_panels)
    angles = np.linspace(-10.0, 10.0, 41)
    t0 = time.perf_counter()
    sweep = viscous_polar(system, angles, reynolds)
    t_polar = time.perf_counter() - t0
    t0 = time.perf_counter()
    cold = [viscous_solve(system, a, reynolds) for a in angles]
    t_cold = time.perf_counter() - t0
    return (t_polar, t_cold, t_polar / t_cold, int(sweep.converged.sum()),
            sum(r.converged for r in cold))


def viscous_section() -> int:
    t_inv, t_vis, rg, iterations = bench_viscous_point()
    print(f"(g) one viscous point (NACA 0012, 200 panels, Re 3e6, 2 deg, cold start, "
          f"{iterations} Newton iterations) {1e3 * t_vis:.0f} ms vs one inviscid analysis "
          f"{1e3 * t_inv:.0f} ms   ratio {rg:.2f}")
    t_polar, t_cold, rh, n_polar, n_cold = bench_viscous_polar()
    print(f"(h) 41-angle warm-started polar {t_polar:.1f} s ({n_polar}/41 converged) vs 41 cold "
          f"points {t_cold:.1f} s ({n_cold}/41 converged)   ratio {rh:.2f}")
    for key, ratio in (("g", rg), ("h", rh)):
        verdict = "met" if ratio <= VISCOUS_GOALS[key] else "NOT met"
        print(f"goal ({key}) <= {VISCOUS_GOALS[key]:g}: {ratio:.2f} {verdict}")
    return 0


if __name__ == "__main__":
    if sys.argv[1:] == ["viscous"]:
        sys.exit(viscous_section())
    code = main()
    print()
    sys.exit(code or viscous_section())
