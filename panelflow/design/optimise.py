"""Optimisation for the job: SLSQP on the shape coefficients, from several starting points.

Each starting point is optimised on its own (:func:`optimise_start`) by sequential least-squares
quadratic programming (D. Kraft, DFVLR-FB 88-28, 1988, as ``scipy.optimize.minimize(method=
"SLSQP")``) with the objective and constraints of :mod:`panelflow.design.objectives` and their
exact gradients. Like the inverse design it works in stages: the panel nodes stay at fixed
places along the section within a stage and the section is panelled again on its new shape for
the next.

:func:`optimise` spreads the starting points over any :class:`concurrent.futures.Executor` (the
study runner's local processes or a Dask cluster, :func:`panelflow.study.runner.make_executor`):
each task is plain data (the start outline and the job) and rebuilds everything itself, so the
results are the same bits whichever way they ran. The first start is the section itself; the
others add smooth random changes of at most ``job.spread`` chords (seeded: a run repeats
exactly). The best start that meets every constraint wins; when none does, the one that comes
closest is kept and the result says so.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

import numpy as np

from panelflow.design.job import Job, LeastDrag
from panelflow.design.model import DesignModel
from panelflow.design.objectives import Formulation
from panelflow.design.shape import SectionForm, form_of, full_basis
from panelflow.errors import InputError, PanelflowError
from panelflow.geometry.outline import Outline

__all__ = ["StartResult", "OptimisationResult", "optimise_start", "optimise", "start_form",
           "FEASIBILITY"]

# Largest scaled constraint violation counted as meeting the constraints (SCALES in
# objectives.py make this 1e-6 chords of thickness, 1e-7 in cm, 1e-5 in Cp).
FEASIBILITY = 1e-4
_STAGES = 2


@dataclass(frozen=True)
class StartResult:
    """One starting point's optimisation.

    Attributes
    ----------
    index : int
    coefficients : ndarray
    objective : float
        Scaled objective value at the end (smaller is better).
    violation : float
        Largest scaled constraint violation at the end (0: all met).
    feasible : bool
    success : bool
        SLSQP reported convergence in the last stage.
    message : str
        SLSQP's last message.
    iterations : int
    analyses : int
        Panel solutions (factorisations) made.
    seconds : float
    notes : tuple of str
    """

    index: int
    coefficients: np.ndarray = field(repr=False)
    objective: float
    violation: float
    feasible: bool
    success: bool
    message: str
    iterations: int
    analyses: int
    seconds: float
    notes: tuple = ()


@dataclass(frozen=True)
class OptimisationResult:
    """The best of the starts.

    Attributes
    ----------
    outline : Outline
        The optimised section in the start outline's frame.
    form : SectionForm
    job : Job
    best : int
        Index of the winning start.
    starts : tuple of StartResult
    feasible : bool
        The winner meets every constraint (by the design model; the written file is checked
        again by :mod:`panelflow.design.check`).
    notes : tuple of str
    """

    outline: Outline
    form: SectionForm = field(repr=False)
    job: Job = field(repr=False)
    best: int
    starts: tuple = field(repr=False)
    feasible: bool
    notes: tuple = ()

    @property
    def analyses(self) -> int:
        return sum(s.analyses for s in self.starts)


def start_form(outline: Outline, job: Job) -> SectionForm:
    """The form the optimisation works on: the whole section with ``job.functions`` shape
    functions, fitted to the start."""
    return form_of(outline, full_basis(job.functions))


def _variation(form: SectionForm, job: Job, index: int) -> np.ndarray:
    """A smooth random change of the coefficients, at most ``job.spread`` chords in y."""
    if index == 0 or job.spread == 0.0:
        return np.zeros(form.size)
    rng = np.random.default_rng([job.seed, index])
    d = rng.normal(size=form.size)
    # smooth it: neighbouring coefficients move together
    d = np.convolve(d, np.ones(3) / 3.0, mode="same")
    u = np.linspace(-0.999, 0.999, 801)
    dy = form.basis.functions(u) @ d
    return d * (job.spread / max(float(np.max(np.abs(dy))), 1e-300))


def optimise_start(outline: Outline, job: Job, index: int = 0) -> StartResult:
    """Optimise from one starting point (start ``index``; 0 is the section itself).

    Plain data in, plain data out: a worker process or a Dask worker runs it as it is.
    """
    t0 = time.perf_counter()
    form = start_form(outline, job)
    c = form.coefficients + _variation(form, job, index)
    notes = []
    analyses = iterations = 0
    message, success = "", False
    z = None
    formulation = None
    drag = None
    for stage in range(1, _STAGES + 1):
        model = DesignModel(form.with_coefficients(c), job.panels)
        if isinstance(job.objective, LeastDrag):
            from panelflow.design.drag import DragAtLift

            drag = DragAtLift(model, job.objective)
        formulation = Formulation(job, form, model, drag)
        z0 = formulation.initial(c) if z is None else np.r_[c, z[form.size:]]
        from scipy.optimize import minimize

        try:
            res = minimize(formulation.objective, z0, jac=formulation.objective_grad,
                           constraints=formulation.constraints(), bounds=formulation.bounds(),
                           method="SLSQP",
                           options={"maxiter": job.max_iterations, "ftol": 1e-9})
        except PanelflowError as exc:
            notes.append(f"stage {stage}: stopped: {exc}")
            analyses += model.solutions
            break
        z = np.asarray(res.x, float)
        c = z[:form.size]
        iterations += int(res.nit)
        message, success = str(res.message), bool(res.success)
        analyses += model.solutions
        if drag is not None and any(drag.failures.values()):
            notes.append(f"stage {stage}: viscous points not converged: " + ", ".join(
                f"{v} {k}" for k, v in drag.failures.items() if v))
    if z is None:
        z = formulation.initial(c)
    try:
        violation = formulation.violation(z)
        objective = float(formulation.objective(z))
    except PanelflowError as exc:
        violation, objective = float("inf"), float("inf")
        notes.append(f"the final design could not be evaluated: {exc}")
    feasible = violation <= FEASIBILITY
    if not feasible:
        notes.append(f"start {index}: the optimiser stopped without meeting every constraint "
                     f"(largest scaled violation {violation:.2g}; {message})")
    return StartResult(index, np.asarray(c, float), objective, float(violation), feasible,
                       success, message, iterations, analyses, time.perf_counter() - t0,
                       tuple(notes))


def _run_start(args):
    outline, job, index = args
    return optimise_start(outline, job, index)


def optimise(outline: Outline, job: Job, executor=None, name: str | None = None
             ) -> OptimisationResult:
    """Optimise ``outline`` for ``job`` from ``job.starts`` starting points.

    Parameters
    ----------
    outline : Outline
        The start section (sharp or blunt trailing edge).
    job : Job
    executor : concurrent.futures.Executor, optional
        Where the starts run (local processes, a Dask cluster); None: here, one after another.
    name : str, optional
        Name of the optimised section.

    Returns
    -------
    OptimisationResult

    Raises
    ------
    InputError
        When no start could be optimised at all.
    """
    if not isinstance(job, Job):
        raise InputError("optimise takes a Job")
    tasks = [(outline, job, i) for i in range(job.starts)]
    if executor is None:
        results = [_run_start(t) for t in tasks]
    else:
        futures = [executor.submit(_run_start, t) for t in tasks]
        results = [f.result() for f in futures]
    ok = [r for r in results if np.isfinite(r.objective)]
    if not ok:
        raise InputError("no starting point could be optimised: "
                         + "; ".join(n for r in results for n in r.notes))
    feasible = [r for r in ok if r.feasible]
    notes = []
    if feasible:
        best = min(feasible, key=lambda r: r.objective)
    else:
        best = min(ok, key=lambda r: (r.violation, r.objective))
        notes.append("no starting point met every constraint: the result is the one that came "
                     f"closest (largest scaled violation {best.violation:.2g}); its figures "
                     "below show which constraint fails")
    for r in results:
        notes.extend(r.notes)
    form = start_form(outline, job).with_coefficients(best.coefficients)
    label = name or f"{outline.name}, optimised"
    designed = form.renamed(label).outline(name=label)
    return OptimisationResult(designed, form, job, best.index, tuple(results),
                              bool(best.feasible), tuple(notes))
