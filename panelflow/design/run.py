"""Design runs: optimise or inverse-design a section, write it, check it from its file, report.

Order, so that a run that cannot finish writes nothing: every output name is checked first
(format, folder, not existing unless asked to replace, not an input); then the design; then the
section file is written and read back, the start and the result are analysed afresh at twice
the design model's panel count (:mod:`panelflow.design.check`); then the before/after table,
the figures and, for a case file, ``manifest.json`` (panelflow version, SHA-256 of every input
and output, the resolved job, each starting point's outcome, the UTC time) with which the run
can be repeated.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from panelflow.design.check import Check, inverse_check, job_check
from panelflow.design.inverse import InverseResult, inverse_design
from panelflow.design.optimise import OptimisationResult, optimise
from panelflow.design.report import (DESIGN_CAUTION, before_after_rows, before_after_text,
                                     write_before_after)
from panelflow.design.spec import TABLE_FORMATS, DesignCase
from panelflow.errors import OutputError
from panelflow.files import check_outputs, refuse_inputs
from panelflow.geometry.readers import TABLE_EXTENSIONS

__all__ = ["SECTION_FORMATS", "OptimisationRun", "InverseRun", "run_optimisation",
           "run_inverse", "check_section_path"]

SECTION_FORMATS = {e: None for e in TABLE_EXTENSIONS}
MANIFEST_NAME = "manifest.json"
MANIFEST_FORMAT = "panelflow design manifest"


def check_section_path(path, overwrite: bool = False, inputs=()) -> Path:
    """Refuse a section file name that cannot be written (format, folder, exists, an input)."""
    check_outputs([path], SECTION_FORMATS, overwrite, "section file", inputs=inputs)
    return Path(path)


@dataclass(frozen=True)
class OptimisationRun:
    """What :func:`run_optimisation` did.

    Attributes
    ----------
    folder : Path
    written : tuple of Path
        Every file written, the manifest last.
    result : OptimisationResult
    start, designed : Check
        The start and the written result, each analysed afresh from its file.
    """

    folder: Path
    written: tuple
    result: OptimisationResult = field(repr=False)
    start: Check = field(repr=False)
    designed: Check = field(repr=False)

    @property
    def reached(self) -> bool:
        """Every constraint met, by the optimiser and on the check of the written file."""
        return bool(self.result.feasible) and self.designed.constraints_hold

    def summary(self) -> str:
        r = self.result
        best = r.starts[r.best]
        lines = [f"optimised for: {r.job.objective.describe()}",
                 f"starts: {len(r.starts)}; best: start {best.index} ({best.iterations} "
                 f"iterations, {best.analyses} panel solutions); analyses in all: "
                 f"{r.analyses}"]
        if not r.feasible:
            lines.append("the optimiser stopped WITHOUT meeting every constraint (see the "
                         "table)")
        objective = [f for f in self.designed.figures if f.better]
        if objective:
            f = objective[0]
            before = self.start[f.key].value
            worse = f.value < before if f.better == "higher" else f.value > before
            if worse:
                lines.append(f"the result is WORSE than the start in {f.label} on the check "
                             "(the shape functions do not represent the start closely "
                             "enough: give more of them)")
        lines += [f"note: {n}" for n in r.notes]
        text = "\n".join(lines) + "\n"
        text += before_after_text(self.start, self.designed)
        text += "".join(f"wrote {p}\n" for p in self.written)
        return text


@dataclass(frozen=True)
class InverseRun:
    """What :func:`run_inverse` did: the design, and the start and result checked afresh."""

    written: tuple
    result: InverseResult = field(repr=False)
    start: Check = field(repr=False)
    designed: Check = field(repr=False)

    @property
    def reached(self) -> bool:
        """The iteration converged and every thickness limit holds."""
        return bool(self.result.converged) and all(ok for *_, ok in self.result.limits)

    def summary(self) -> str:
        r = self.result
        lines = [f"inverse design towards {r.target.name} ({r.target.source or 'table'})",
                 f"design angle {r.alpha_deg:.4f} deg, {r.iterations} iterations in "
                 f"{r.stages} stages, {'converged' if r.converged else 'NOT converged'}; "
                 f"design-model mismatch rms {r.rms_mismatch:.3g}, largest "
                 f"{r.max_mismatch:.3g}"]
        for desc, tmin, tmax, ok in r.limits:
            lines.append(f"{desc}: {'holds' if ok else 'NOT MET'} in the design model")
        lines += [f"note: {n}" for n in r.notes]
        text = "\n".join(lines) + "\n" + before_after_text(self.start, self.designed)
        text += "".join(f"wrote {p}\n" for p in self.written)
        return text


def _planned(case: DesignCase, folder: Path) -> dict:
    out = {k: (folder / v if v else None) for k, v in case.outputs.items()}
    out["manifest"] = folder / MANIFEST_NAME
    return out


def _check_planned(planned: dict, overwrite: bool, inputs) -> None:
    from panelflow.output.figures import FIGURE_FORMATS

    every = [p for p in planned.values() if p is not None]
    refuse_inputs(every, inputs)
    seen = set()
    for p in every:
        key = os.path.abspath(p)
        if key in seen:
            raise OutputError(f"{p}: named twice as an output")
        seen.add(key)
    folder = planned["manifest"].parent
    if folder.is_dir():
        check_section_path(planned["section"], overwrite)
        check_outputs([planned["table"]], {e: None for e in TABLE_FORMATS}, overwrite, "table")
        check_outputs([planned["manifest"]], {".json": None}, overwrite, "manifest")
        figs = [planned[k] for k in ("cp_figure", "polar_figure") if planned[k] is not None]
        check_outputs(figs, {e: None for e in FIGURE_FORMATS}, overwrite, "figure")


def _sigma(job):
    cav = job.cavitation
    if cav is None or cav.speed is None:
        return None
    return cav.sigma() * (1.0 - cav.margin)


def run_optimisation(case: DesignCase, executor=None, output=None, overwrite: bool = False
                     ) -> OptimisationRun:
    """Run a design case file (:func:`panelflow.design.spec.load_design_case`).

    Parameters
    ----------
    case : DesignCase
    executor : concurrent.futures.Executor, optional
        Where the starting points run (:func:`panelflow.study.runner.make_executor`).
    output : path, optional
        Output folder; default the case's.
    overwrite : bool
        Replace existing output files.

    Returns
    -------
    OptimisationRun
    """
    from panelflow.geometry.readers import load_outlines, write_outline_table
    from panelflow.study.runner import _executor_name, manifest_record, write_manifest

    folder = Path(output) if output is not None else Path(case.output)
    if folder.exists() and not folder.is_dir():
        raise OutputError(f"{folder}: exists and is not a folder")
    planned = _planned(case, folder)
    inputs = case.input_files()
    _check_planned(planned, overwrite, inputs)
    start = case.start()
    job = case.job
    result = optimise(start, job, executor, name=case.name)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"{folder}: cannot create the folder ({exc.strerror or exc})") from None
    _check_planned(planned, overwrite, inputs)
    written = [write_outline_table(result.outline, planned["section"], overwrite)]
    designed = load_outlines(str(planned["section"]))[0]
    panels = 2 * job.panels
    start_check = job_check(start, job, panels, f"start: {start.name}")
    design_check = job_check(designed, job, panels, designed.name)
    notes = list(result.notes)
    if not result.feasible:
        notes.insert(0, "the optimiser stopped without meeting every constraint")
    written.append(write_before_after(planned["table"], start_check, design_check, notes,
                                      overwrite))
    labels = [f"start: {start.name}", designed.name]
    sigma = _sigma(job)
    if planned["cp_figure"] is not None:
        from panelflow.design.figures import design_cp_figure

        written.append(design_cp_figure([start_check, design_check], labels,
                                        planned["cp_figure"], sigma=sigma,
                                        overwrite=overwrite))
    if planned["polar_figure"] is not None:
        from panelflow.design.figures import design_polar_figure

        written.append(design_polar_figure([start, designed], labels, planned["polar_figure"],
                                           panels=panels, sigma=sigma,
                                           design_cl=job.objective.design_cl,
                                           overwrite=overwrite))
    record = manifest_record(case.settings(), inputs, written, base=Path(case.path).parent,
                             folder=folder, executor=_executor_name(executor))
    record["format"] = MANIFEST_FORMAT
    record["optimiser"] = {
        "method": "SLSQP (scipy.optimize.minimize)", "feasible": result.feasible,
        "best_start": result.best, "analyses": result.analyses,
        "starts": [{"index": s.index, "objective_scaled": s.objective,
                    "largest_scaled_violation": s.violation, "feasible": s.feasible,
                    "converged": s.success, "message": s.message, "iterations": s.iterations,
                    "analyses": s.analyses, "notes": list(s.notes)} for s in result.starts]}
    record["check"] = {"panels": panels, "rows": [
        {k: (None if isinstance(v, float) and not np.isfinite(v) else v)
         for k, v in row.items()} for row in before_after_rows(start_check, design_check)]}
    record["notes"] = notes
    record["caution"] = DESIGN_CAUTION
    written.append(write_manifest(planned["manifest"], record, overwrite))
    return OptimisationRun(folder, tuple(written), result, start_check, design_check)


def run_inverse(start, target, output, *, alpha_deg=None, cl=None, panels: int = 240,
                functions: int = 24, thickness=(), trailing_edge_thickness=None,
                name=None, plot=None, overwrite: bool = False, inputs=()) -> InverseRun:
    """Inverse-design ``start`` towards ``target``, write the section to ``output`` and check
    it from the file (and the start) at twice ``panels``.

    Parameters
    ----------
    start : Outline
    target : CpTarget
    output : path
        Section file (``.dat``, ``.txt``, ``.xy``).
    alpha_deg, cl : float
        Design angle (degrees from the outline's x-axis) or design lift.
    plot : path, optional
        Cp figure: start, result and target overlaid.
    inputs : sequence of path
        The run's input files (never replaced).

    Returns
    -------
    InverseRun
    """
    from panelflow.geometry.readers import load_outlines, write_outline_table

    check_section_path(output, overwrite, inputs)
    if plot is not None:
        from panelflow.output.figures import check_figure_path

        check_figure_path(plot, overwrite)
        refuse_inputs([plot], inputs)
    result = inverse_design(start, target, alpha_deg, cl, panels=panels, functions=functions,
                            thickness=thickness,
                            trailing_edge_thickness=trailing_edge_thickness, name=name)
    written = [write_outline_table(result.outline, output, overwrite)]
    designed = load_outlines(str(output))[0]
    n = 2 * int(panels)
    point = {"alpha_deg": result.alpha_deg} if cl is None else {"cl": cl}
    start_check = inverse_check(start, target, n, thickness=thickness,
                                label=f"start: {start.name}", **point)
    design_check = inverse_check(designed, target, n, thickness=thickness,
                                 label=designed.name, **point)
    if plot is not None:
        from panelflow.design.figures import design_cp_figure

        written.append(design_cp_figure([start_check, design_check],
                                        [f"start: {start.name}", designed.name], plot,
                                        target=target, overwrite=overwrite,
                                        title="Surface pressure: start, inverse design and "
                                              "target"))
    return InverseRun(tuple(written), result, start_check, design_check)
