"""Studies: many sections at many angles, run on any executor, with reproducible outputs.

A study is a list of :class:`SectionTask` objects, each one geometry (one or several bodies) at
a list of angles of attack. A task is plain data -- section specs or file paths with their
SHA-256, transforms and settings -- so it pickles cheaply and any worker, a local process or a
machine of a Dask cluster, rebuilds the geometry itself (:func:`run_task`). One task is one
factorisation: every angle of a section costs a few multiplications more (see
``DEVELOPERS.md``), so a section, not an angle, is the unit of work.

:func:`run_study` takes any :class:`concurrent.futures.Executor` (none: in this process) and
returns the polars in task order, whatever order the workers finish in, so a study gives the
same table serially, on local processes (:func:`make_executor` with ``workers``) or on a Dask
cluster (``scheduler``; the optional extra ``panelflow[cluster]``).

:func:`run_case` runs a case file (:mod:`panelflow.study.cases`): the study, then its tables, figures,
field and load files, all written atomically into one output folder together with a
``manifest.json`` (panelflow version, SHA-256 of every input and output file, the resolved
settings, the UTC time). Nothing is written when any output exists, unless asked to replace.

Files given by path must be readable at the same path by every worker (a shared folder for a
cluster): a worker checks the file's SHA-256 against the one taken when the study was set up and
stops with an error if the file it sees differs.
"""

from __future__ import annotations

import concurrent.futures as cf
import contextlib
import hashlib
import json
import os
import platform
import sys
import threading
import time
from dataclasses import dataclass, field, fields
from pathlib import Path

import numpy as np

from dataclasses import replace

from panelflow import threads

from panelflow.analysis.problem import Flap, OperatingPoint, Problem
from panelflow.analysis.solve import solve
from panelflow.errors import IncompleteRunError, InputError, OutputError, PanelflowError
from panelflow.files import refuse_inputs
from panelflow.geometry.arguments import transformed, unique_names
from panelflow.version import __version__

__all__ = ["BodySource", "Flap", "SectionTask", "section_tasks", "split_settings",
           "build_bodies", "task_problem", "solve_task",
           "run_task", "run_study", "make_executor", "open_executor", "file_sha256",
           "manifest_record", "write_manifest", "RunReport", "run_case", "MANIFEST_NAME"]

MANIFEST_NAME = "manifest.json"
# Seconds without any section finishing before a distributed or multi-process study gives up.
MAX_WORKERS = 256
DEFAULT_TIMEOUT = 600.0
# Seconds to reach a scheduler and to find a worker there.
CONNECT_TIMEOUT = 10.0
MANIFEST_FORMAT = "panelflow run manifest"
_PROGRESS_DELAY = 1.0  # seconds before a bar appears: a study shorter than this stays silent


# ---------------------------------------------------------------------------------- tasks
@dataclass(frozen=True)
class BodySource:
    """One body (or every body of a file) and the transforms applied to it.

    Attributes
    ----------
    source : str
        A section spec (``naca2412``) or a file path (absolute, so any worker finds it).
    is_file : bool
        ``source`` is a file path.
    sha256 : str or None
        The file's SHA-256 when the study was set up; a worker that reads a different file
        stops with an error.
    name : str or None
        New body name (a file of several bodies gets ``-1``, ``-2``, ... appended).
    scale : float or None
        Scale factor about the origin (applied first).
    pitch : float or None
        Nose-up pitch in degrees about the body's own leading edge (applied second).
    move : (float, float) or None
        Translation (applied last).
    """

    source: str
    is_file: bool = False
    sha256: str | None = None
    name: str | None = None
    scale: float | None = None
    pitch: float | None = None
    move: tuple | None = None

    def record(self, base=None) -> dict:
        """Plain settings for the manifest (file paths relative to ``base``)."""
        rec = {"file" if self.is_file else "spec": _shown_path(self.source, base)
               if self.is_file else self.source}
        if self.sha256:
            rec["sha256"] = self.sha256
        for key in ("name", "scale", "pitch", "move"):
            value = getattr(self, key)
            if value is not None:
                rec[key] = list(value) if key == "move" else value
        return rec


_PROBLEM_KEYS = ("panels", "error_estimate", "reference_point", "flap", "smoothing")


def split_settings(alpha_deg=None, **settings):
    """(OperatingPoint, problem settings) from the keywords of the earlier flat interface.

    ``alpha_deg`` may be an :class:`OperatingPoint` already; ``n_panels`` is read as ``panels``;
    every other keyword is an :class:`OperatingPoint` field (``mach``, ``depth``, ``fluid``, ...).
    """
    if "n_panels" in settings:
        settings["panels"] = settings.pop("n_panels")
    problem = {k: settings.pop(k) for k in _PROBLEM_KEYS if k in settings}
    if isinstance(alpha_deg, OperatingPoint):
        if settings:
            alpha_deg = replace(alpha_deg, **settings)
        return alpha_deg, problem
    if alpha_deg is not None and not isinstance(alpha_deg, str):
        settings["alpha_deg"] = tuple(np.atleast_1d(np.asarray(alpha_deg, float)))
    elif alpha_deg is not None:
        settings["alpha_deg"] = alpha_deg
    if settings.get("mach_rule") is None:
        settings.pop("mach_rule", None)
    return OperatingPoint(**settings), problem


@dataclass(frozen=True)
class SectionTask:
    """One geometry under one operating point: the unit of work of a study (picklable data).

    Attributes
    ----------
    label : str
        The section's name in tables and figures (unique within a study).
    bodies : tuple of BodySource
        The first body is the main body (reference chord).
    operating : OperatingPoint
        Angles (or target lift) and conditions (Mach number, fluid, speed, depth, plane).
    panels : int or None
        Panels per body; None keeps the given points.
    error_estimate : bool
    reference_point : (float, float) or None
        Moment reference point; default the quarter chord.
    flap : Flap or None
    smoothing : float or None
        Smoothing distance of the bodies (see :class:`Problem`).
    """

    label: str
    bodies: tuple
    operating: OperatingPoint
    panels: int | None = 200
    error_estimate: bool = True
    reference_point: tuple | None = None
    flap: Flap | None = None
    smoothing: float | None = None

    def __post_init__(self):
        object.__setattr__(self, "bodies", tuple(self.bodies))
        if not self.bodies:
            raise InputError(f"section {self.label!r}: no body")
        if not isinstance(self.operating, OperatingPoint):
            raise InputError(f"section {self.label!r}: operating must be an OperatingPoint")

    @classmethod
    def of(cls, label: str, bodies, alpha_deg=None, **settings) -> SectionTask:
        """A task from angles and flat keywords (``n_panels``, ``mach``, ``depth``, ...)."""
        operating, problem = split_settings(alpha_deg, **settings)
        return cls(label, tuple(bodies), operating, **problem)

    @property
    def alpha_deg(self) -> tuple:
        return self.operating.alpha_deg

    def record(self, base=None) -> dict:
        """Plain settings for the manifest (file paths relative to ``base``)."""
        rec = {"label": self.label, "bodies": [b.record(base) for b in self.bodies],
               "panels": self.panels, "error_estimate": self.error_estimate}
        if self.reference_point is not None:
            rec["reference_point"] = list(self.reference_point)
        if self.flap is not None:
            rec["flap"] = self.flap.record()
        if self.smoothing is not None:
            rec["smoothing"] = self.smoothing
        rec.update(self.operating.record())
        return rec


def file_sha256(path) -> str:
    """SHA-256 of a file's bytes, as 64 hex digits.

    Raises
    ------
    InputError
        When the file cannot be read.
    """
    h = hashlib.sha256()
    try:
        with open(path, "rb") as fh:
            for chunk in iter(lambda: fh.read(1 << 20), b""):
                h.update(chunk)
    except OSError as exc:
        raise InputError(f"{path}: cannot read ({exc.strerror or exc})") from None
    return h.hexdigest()


def _shown_path(path, base=None) -> str:
    """``path`` relative to ``base`` (POSIX separators), for files that move between machines."""
    if base is None:
        return Path(path).as_posix()
    try:
        return Path(os.path.relpath(path, base)).as_posix()
    except ValueError:  # another drive
        return Path(path).as_posix()


def section_tasks(sources, alpha_deg, base=None, **settings) -> list:
    """Tasks of single-body sections from specs, file paths, families and file patterns.

    Each source is expanded with :func:`panelflow.geometry.families.expand_arguments` (``naca00{06..18:3}``,
    ``geometries/*.dat``); each member is one task labelled with its spec or file stem. Transform
    suffixes (``@pitch=2``) are not read here: give transforms as :class:`BodySource` fields.

    Parameters
    ----------
    sources : sequence of str
    alpha_deg : sequence of float or OperatingPoint
    base : path, optional
        Folder of relative file paths.
    **settings
        Further settings: :class:`SectionTask` fields (``panels`` or ``n_panels``,
        ``reference_point``, ...) and :class:`OperatingPoint` fields (``mach``, ``depth``, ...).

    Returns
    -------
    list of SectionTask
    """
    from panelflow.geometry.families import expand_arguments
    from panelflow.geometry.specs import parse_spec

    operating, problem = split_settings(alpha_deg, **settings)
    tasks = []
    for member in expand_arguments(list(sources), base):
        if "@" in member and not os.path.exists(member):
            raise InputError(f"{member}: transforms after '@' are not read here; give them as "
                             "BodySource fields (or in a case file)")
        if parse_spec(member) is not None:
            body, label = BodySource(member), member
        else:
            path = member if base is None or os.path.isabs(member) else os.path.join(base, member)
            if not os.path.isfile(path):
                raise InputError(f"{member}: no such file, and not a section spec")
            path = os.path.abspath(path)
            body, label = BodySource(path, True, file_sha256(path)), Path(path).stem
        tasks.append(SectionTask(label, (body,), operating, **problem))
    return tasks


# ---------------------------------------------------------------------------------- workers
def _load(body: BodySource, label: str) -> list:
    from panelflow.geometry.readers import load_outlines

    if body.is_file:
        if body.sha256 is not None:
            seen = file_sha256(body.source)
            if seen != body.sha256:
                raise InputError(f"{body.source}: the file differs from the one the study was set "
                                 f"up with (SHA-256 {seen[:12]}... instead of "
                                 f"{body.sha256[:12]}...); it changed meanwhile, or this worker "
                                 "sees another copy")
        return load_outlines(Path(body.source))
    return load_outlines(body.source)


def _transformed(outlines, body: BodySource, label: str) -> list:
    out = []
    where = f"section {label!r}: {body.source}"
    for k, o in enumerate(outlines):
        if body.name is not None:
            o = o.renamed(body.name if len(outlines) == 1 else f"{body.name}-{k + 1}")
        for key in ("scale", "pitch", "move"):
            value = getattr(body, key)
            if value is not None:
                o = transformed(o, key, value, where)
        out.append(o)
    return out


def build_bodies(task: SectionTask) -> list:
    """The outlines of a task: read or built, transformed, names made unique (no flap yet)."""
    bodies = []
    for body in task.bodies:
        bodies.extend(_transformed(_load(body, task.label), body, task.label))
    return unique_names(bodies)  # as the command line does: a repeated name gets -2, -3, ...


def task_problem(task: SectionTask, alpha_deg=None, error_estimate: bool | None = None) -> Problem:
    """The :class:`Problem` of a task (at its angles, or at ``alpha_deg``)."""
    operating = task.operating if alpha_deg is None else task.operating.with_angles(alpha_deg)
    est = task.error_estimate if error_estimate is None else error_estimate
    return Problem(tuple(build_bodies(task)), operating, panels=task.panels,
                   error_estimate=est, reference_point=task.reference_point, flap=task.flap,
                   smoothing=task.smoothing, label=task.label)


def solve_task(task: SectionTask, alpha_deg=None, error_estimate: bool | None = None):
    """Build a task's geometry and solve it (at its angles, or at ``alpha_deg``).

    Returns
    -------
    Result
    """
    return solve(task_problem(task, alpha_deg, error_estimate))


def run_task(task: SectionTask):
    """Solve one task and return its :class:`~panelflow.output.tables.Polar` (runs in any worker).

    Raises
    ------
    PanelflowError
        Of the same kind as the library raised, its message starting with the section label.
    """
    from panelflow.output.tables import polar

    # A task on a thread of its own (a Dask worker's, an executor's) runs on that thread only:
    # that executor already shares the cores out. BLAS on one thread everywhere gives the same
    # bits in this process, in a worker process and on a Dask worker.
    own_thread = threading.current_thread() is threading.main_thread()
    try:
        with threads.one_blas_thread(), threads.limited(threads.cap() if own_thread else 1):
            return polar(solve_task(task), task.label)
    except PanelflowError as exc:
        text = str(exc)
        prefix = f"section {task.label!r}"
        raise type(exc)(text if text.startswith(prefix) else f"{prefix}: {text}") from None


# ---------------------------------------------------------------------------------- runner
def _show_progress(progress) -> bool:
    if progress is None:
        stream = sys.stderr
        return bool(getattr(stream, "isatty", None) and stream.isatty())
    return bool(progress)


def _bar(total: int, progress):
    """A tqdm bar on stderr, or None. ``progress`` None: only on a terminal, after a moment."""
    if not _show_progress(progress) or total == 0:
        return None
    from tqdm import tqdm

    return tqdm(total=total, file=sys.stderr, unit="section", desc="panelflow",
                delay=_PROGRESS_DELAY if progress is None else 0.0, leave=False,
                dynamic_ncols=True)


def _names(labels, limit: int = 6) -> str:
    shown = ", ".join(repr(lab) for lab in labels[:limit])
    return shown + (f" and {len(labels) - limit} more" if len(labels) > limit else "")


def run_study(tasks, executor: cf.Executor | None = None, progress=None,
              timeout: float | None = DEFAULT_TIMEOUT) -> list:
    """Run every task and return the polars in task order.

    Parameters
    ----------
    tasks : sequence of SectionTask
    executor : concurrent.futures.Executor, optional
        Where the tasks run: a :class:`~concurrent.futures.ProcessPoolExecutor`, Dask's
        ``Client.get_executor()``, anything with ``submit``. None runs them here, one by one.
        The executor is not shut down.
    progress : bool or None
        A progress bar on stderr: None shows it when stderr is a terminal and the study takes
        longer than a moment; True always; False never.
    timeout : float or None
        With an executor: seconds without any section finishing after which the run gives up
        (workers lost or stuck); None waits for ever.

    Returns
    -------
    list of Polar
        ``result[i]`` belongs to ``tasks[i]``: identical numbers whichever executor ran them.

    Raises
    ------
    PanelflowError
        The first failing task's error (by task order among those that failed when collected);
        the tasks not yet started are cancelled.
    IncompleteRunError
        Workers were lost (a killed process, a lost Dask worker that the scheduler could not
        replace) or nothing finished within ``timeout``: names the unfinished sections and
        carries the finished results.
    """
    tasks = list(tasks)
    for t in tasks:
        if not isinstance(t, SectionTask):
            raise InputError(f"a study takes SectionTask objects, got {type(t).__name__}")
    labels = [t.label for t in tasks]
    dup = sorted({lab for lab in labels if labels.count(lab) > 1})
    if dup:
        raise InputError(f"section labels must differ within a study; used twice: "
                         f"{', '.join(dup)}")
    bar = _bar(len(tasks), progress)
    results = [None] * len(tasks)
    try:
        if executor is None:
            for i, t in enumerate(tasks):
                results[i] = run_task(t)
                if bar is not None:
                    bar.update(1)
            return results
        return _collect(executor, tasks, results, bar, timeout)
    finally:
        if bar is not None:
            bar.close()


def _collect(executor, tasks, results, bar, timeout, work=None):
    """Submit every task and gather the results, giving up on lost or silent workers.

    ``work`` is the function each worker runs on a task (default :func:`run_task`).
    """
    futures = {executor.submit(work or run_task, t): i for i, t in enumerate(tasks)}
    pending, lost = set(futures), {}
    try:
        while pending:
            done, pending = cf.wait(pending, timeout=timeout, return_when=cf.FIRST_COMPLETED)
            if not done:
                break
            for fut in done:
                i = futures[fut]
                try:
                    results[i] = fut.result()
                except PanelflowError:
                    raise
                except Exception as exc:  # noqa: BLE001 - a lost worker shows in many forms
                    lost[i] = f"{type(exc).__name__}: {exc}".strip().rstrip(":")
                if bar is not None:
                    bar.update(1)
    except BaseException:
        for fut in futures:
            fut.cancel()
        raise
    for fut in pending:
        fut.cancel()
    if not pending and not lost:
        return results
    unfinished = sorted([futures[f] for f in pending] + list(lost))
    names = [tasks[i].label for i in unfinished]
    why = (f"no section finished within {timeout:g} s (workers lost or stuck)" if pending
           else f"the worker running it was lost ({next(iter(lost.values()))})")
    raise IncompleteRunError(f"{len(names)} of {len(tasks)} sections did not finish: "
                             f"{_names(names)}; {why}", results, names)


class _DaskExecutor(cf.Executor):
    """Dask's executor interface with the client it owns: shutting down closes the client."""

    def __init__(self, client):
        self.client = client
        self._inner = client.get_executor()

    def submit(self, fn, /, *args, **kwargs):
        return self._inner.submit(fn, *args, **kwargs)

    def shutdown(self, wait=True, *, cancel_futures=False):
        try:
            self._inner.shutdown(wait=wait)
        finally:
            self.client.close()


def _connect(client_class, scheduler: str, seconds: float):
    """A client of a running scheduler that has at least one worker, or InputError in time.

    The connection is made in a helper thread and abandoned after ``seconds``: something that
    accepts a TCP connection but never answers as a scheduler (a web server, a dashboard port)
    would otherwise keep the handshake waiting for ever.
    """
    box, done = {}, threading.Event()

    def connect():
        try:
            box["client"] = client_class(scheduler, timeout=f"{seconds}s")
        except BaseException as exc:  # noqa: BLE001 - reported below, whatever it was
            box["error"] = exc
        finally:
            done.set()

    threading.Thread(target=connect, daemon=True).start()
    if not done.wait(seconds + 2.0):
        raise InputError(f"--scheduler {scheduler}: no scheduler answered within {seconds:g} s "
                         "(is it a Dask scheduler's address and port, not a web page's?)")
    if "error" in box:
        exc = box["error"]
        raise InputError(f"--scheduler {scheduler}: cannot connect "
                         f"({type(exc).__name__}: {exc})") from None
    client = box["client"]
    try:
        client.wait_for_workers(1, timeout=seconds)
    except Exception:  # noqa: BLE001 - a timeout, named differently across versions
        client.close()
        raise InputError(f"--scheduler {scheduler}: the scheduler has no workers (none joined "
                         f"within {seconds:g} s); start workers or use --workers N") from None
    return client


def make_executor(workers: int | None = None, scheduler: str | None = None,
                  connect_timeout: float = CONNECT_TIMEOUT):
    """An executor for :func:`run_study`: local processes or a running Dask cluster.

    Parameters
    ----------
    workers : int, optional
        Number of local worker processes (a :class:`~concurrent.futures.ProcessPoolExecutor`);
        1 or None runs the study in this process (returns None: no pool to pay for).
    scheduler : str, optional
        Address of a running Dask distributed scheduler (``tcp://host:8786``); needs the
        optional packages ``panelflow[cluster]``. The returned executor closes its client when
        shut down.
    connect_timeout : float
        Seconds to reach the scheduler, and again to find a worker there.

    Returns
    -------
    concurrent.futures.Executor or None
        Use it in a ``with`` block (or call ``shutdown``).

    Raises
    ------
    InputError
        Both or invalid values given, Dask not installed, or no scheduler at the address.
    """
    if workers is not None and scheduler is not None:
        raise InputError("give either --workers or --scheduler, not both")
    if scheduler is not None:
        try:
            from distributed import Client
        except ImportError:
            raise InputError("--scheduler needs Dask's distributed scheduler, which is not "
                             "installed: pip install 'panelflow[cluster]'") from None
        return _DaskExecutor(_connect(Client, scheduler, connect_timeout))
    if workers is None:
        return None
    if isinstance(workers, bool) or not isinstance(workers, (int, np.integer)) or workers < 1:
        raise InputError(f"--workers {workers}: give a whole number of at least 1")
    if workers > MAX_WORKERS:
        raise InputError(f"--workers {workers}: at most {MAX_WORKERS} local processes (more "
                         "only queue for the same cores; a cluster is --scheduler's job)")
    if workers == 1:
        return None
    share = max(1, threads.cap() // int(workers))
    return cf.ProcessPoolExecutor(int(workers), initializer=_worker_threads, initargs=(share,))


@contextlib.contextmanager
def open_executor(workers: int | None = None, scheduler: str | None = None,
                  connect_timeout: float = CONNECT_TIMEOUT):
    """:func:`make_executor` as a context manager: yields the executor (or None: in this
    process) and shuts it down afterwards, closing a Dask client."""
    ex = make_executor(workers, scheduler, connect_timeout)
    try:
        yield ex
    except BaseException:
        if ex is not None:  # do not wait for work that is lost or stuck
            _abandon(ex)
        raise
    else:
        if ex is not None:
            ex.shutdown()


def _abandon(ex) -> None:
    """Shut an executor down without waiting: cancel what is queued, stop local processes."""
    pool = getattr(ex, "_processes", None)  # the private process table of a process pool
    procs = list(pool.values()) if isinstance(pool, dict) else []
    try:
        ex.shutdown(wait=False, cancel_futures=True)
    finally:
        for proc in procs:  # a process pool's workers would otherwise be joined at exit
            if proc.is_alive():
                proc.terminate()


_LIMITS = []  # keeps the worker's thread limit alive


def _worker_threads(share: int = 1) -> None:
    """Worker-process start: one BLAS thread, and panelflow's threads capped at this process's
    share of the cores (the processes share them; more threads would only wait for each other).

    OpenBLAS waits for work by spinning, so two processes with two BLAS threads each on two cores
    ran a 2-worker study 4 times slower than one process (measured, scripts/bench.py). The cap
    goes into the environment, where :func:`panelflow.threads.cap` reads it, so it holds for
    everything the worker runs; results do not depend on it (see :mod:`panelflow.threads`).
    """
    user = threads.user_cap()
    os.environ[threads.ENV_VARIABLE] = str(share if user is None else min(user, share))
    try:
        from threadpoolctl import threadpool_limits
    except ImportError:  # pragma: no cover - a dependency; without it only speed suffers
        return
    _LIMITS.append(threadpool_limits(limits=1))


# ---------------------------------------------------------------------------------- manifest
def _utc_now() -> str:
    return time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime())


def _versions() -> dict:
    import scipy

    return {"python": platform.python_version(), "numpy": np.__version__,
            "scipy": scipy.__version__}


def manifest_record(settings: dict, inputs, outputs=(), base=None, folder=None,
                    executor: str = "in-process") -> dict:
    """The manifest of a run.

    Parameters
    ----------
    settings : dict
        The resolved settings (plain JSON data).
    inputs : sequence of path
        Every input file (case file and geometry files); each is hashed now.
    outputs : sequence of path
        Files the run wrote; hashed now, listed relative to ``folder``.
    base : path, optional
        Folder input paths are shown relative to (the case file's folder).
    folder : path, optional
        The output folder.
    executor : str
        How the study ran (for the record; it does not change the numbers).

    Returns
    -------
    dict
    """
    seen, files = set(), []
    for p in inputs:
        key = os.path.abspath(p)
        if key not in seen:
            seen.add(key)
            files.append({"path": _shown_path(p, base), "sha256": file_sha256(p),
                          "bytes": os.path.getsize(p)})
    return {
        "format": MANIFEST_FORMAT,
        "panelflow_version": __version__,
        "created_utc": _utc_now(),
        "environment": _versions(),
        "executor": executor,
        "inputs": files,
        "settings": settings,
        "outputs": [{"path": _shown_path(p, folder), "sha256": file_sha256(p)}
                    for p in outputs],
    }


def write_manifest(path, record: dict, overwrite: bool = False) -> Path:
    """Write a manifest record as JSON, atomically (see :func:`manifest_record`)."""
    from panelflow.output.writers import atomic_write_text

    return atomic_write_text(path, json.dumps(record, indent=1, allow_nan=False) + "\n",
                             overwrite)


# ---------------------------------------------------------------------------------- case run
@dataclass(frozen=True)
class RunReport:
    """What :func:`run_case` did.

    Attributes
    ----------
    folder : Path
        The output folder.
    written : tuple of Path
        Every file written, the manifest last.
    polars : tuple of Polar
        The study's polars, in section order.
    table : Table
        The tidy table (one row per section and angle).
    """

    folder: Path
    written: tuple
    polars: tuple = field(repr=False)
    table: object = field(repr=False)

    def summary(self) -> str:
        """A few lines for the terminal: what was solved and what was written where."""
        n_angles = sorted({len(p) for p in self.polars})
        angles = "/".join(str(n) for n in n_angles)
        lines = [f"solved {len(self.polars)} section{'s' if len(self.polars) != 1 else ''} x "
                 f"{angles} angles: {len(self.table)} table rows"]
        lines += [f"wrote {p}" for p in self.written]
        return "\n".join(lines) + "\n"


def _executor_name(executor) -> str:
    if executor is None:
        return "in-process"
    if isinstance(executor, cf.ProcessPoolExecutor):
        return f"local processes ({executor._max_workers})"
    if isinstance(executor, _DaskExecutor):
        return "dask cluster"
    return type(executor).__name__


def _task(case, label):
    for t in case.tasks:
        if t.label == label:
            return t
    raise InputError(f"no section {label!r}")  # cases.py checks labels; a safeguard


def _angles(case, label, alpha):
    """The angle an output asks for, or None: the section's own target-lift angle."""
    if alpha is not None:
        return [alpha]
    if _task(case, label).operating.target_cl is None:
        raise InputError(f"an output of section {label!r} needs an angle of attack")
    return None


def _planned(case, folder: Path) -> dict:
    """Output kind -> list of full paths, for the checks before any work."""
    out = case.outputs
    return {
        "table": [folder / t for t in out.tables],
        "figure": ([folder / f.file for f in out.polar_figures]
                   + [folder / f.file for f in out.cp_figures]
                   + [folder / f.figure for f in out.fields if f.figure]),
        "field": [folder / f.file for f in out.fields],
        "loads": [folder / f.file for f in out.loads],
    }


def _check_planned(planned: dict, folder: Path, overwrite: bool, inputs=()) -> None:
    from panelflow.output.field_files import check_field_outputs
    from panelflow.output.load_files import check_load_outputs, output_paths
    from panelflow.output.figures import FIGURE_FORMATS
    from panelflow.output.tables import TABLE_WRITERS
    from panelflow.output.writers import check_outputs

    manifest = folder / MANIFEST_NAME
    every = [manifest, *(p for paths in planned.values() for p in paths)]
    expanded = [q for p in every for q in (output_paths(p) if p in planned["loads"] else [p])]
    seen = set()
    for p in expanded:
        if os.path.abspath(p) in seen:
            raise OutputError(f"{p}: named twice as an output of the case")
        seen.add(os.path.abspath(p))
    refuse_inputs(expanded, inputs)
    if folder.is_dir():
        check_outputs([manifest], overwrite, registry=(".json",), what="manifest")
        check_outputs(planned["table"], overwrite, registry=TABLE_WRITERS, what="table")
        check_outputs(planned["figure"], overwrite, registry=FIGURE_FORMATS, what="figure")
        check_field_outputs(planned["field"], overwrite)
        check_load_outputs(planned["loads"], overwrite)


def _write_partial(case, folder, planned, inputs, exc, overwrite, executor) -> None:
    """Keep what finished: its rows in the planned tables and a manifest marked incomplete."""
    from panelflow.output.tables import tidy_table, write_table

    done = [p for p in exc.finished if p is not None]
    if not done:
        return
    folder.mkdir(parents=True, exist_ok=True)
    notes = [f"case {Path(case.path).name}; INCOMPLETE RUN: {len(exc.unfinished)} sections did "
             f"not finish ({', '.join(exc.unfinished)})"]
    written = [write_table(tidy_table(done), path, overwrite, notes) for path in planned["table"]]
    record = manifest_record(case.settings(), inputs, written, base=Path(case.path).parent,
                             folder=folder, executor=_executor_name(executor))
    record["incomplete"] = True
    record["unfinished"] = list(exc.unfinished)
    written.append(write_manifest(folder / MANIFEST_NAME, record, overwrite))
    exc.args = (f"{exc.args[0]}; the {len(done)} finished are in "
                f"{', '.join(str(w) for w in written[:-1])}",)


def run_case(case, executor: cf.Executor | None = None, output=None, overwrite: bool = False,
             progress=None, timeout: float | None = DEFAULT_TIMEOUT) -> RunReport:
    """Run a case (:func:`panelflow.study.cases.load_case`) and write every output it asks for.

    Order: every output name is checked first (format, not existing unless ``overwrite``), so a
    run that cannot finish writes nothing; then the study runs (on ``executor``); then the tables,
    figures, field and load files are written into the output folder, and the manifest last.

    Parameters
    ----------
    case : Case
    executor : concurrent.futures.Executor, optional
        For the study (see :func:`run_study`); figures, fields and loads are computed here.
    output : path, optional
        Output folder; default the case's (``output`` key, else ``CASE_results`` beside it).
        Created when missing (with its parents).
    overwrite : bool
        Replace existing output files.
    progress : bool or None
        See :func:`run_study`.
    timeout : float or None
        See :func:`run_study`.

    Returns
    -------
    RunReport

    Raises
    ------
    PanelflowError
    """
    from panelflow.output.tables import tidy_table, write_table

    folder = Path(output) if output is not None else Path(case.output)
    if folder.exists() and not folder.is_dir():
        raise OutputError(f"{folder}: exists and is not a folder")
    planned = _planned(case, folder)
    inputs = case.input_files()  # hashed again when the manifest is written
    _check_planned(planned, folder, overwrite, inputs)
    try:
        polars = run_study(case.tasks, executor, progress, timeout=timeout)
    except IncompleteRunError as exc:
        _write_partial(case, folder, planned, inputs, exc, overwrite, executor)
        raise
    table = tidy_table(polars)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"{folder}: cannot create the folder ({exc.strerror or exc})") from None
    _check_planned(planned, folder, overwrite, inputs)

    written = []
    notes = [f"case {Path(case.path).name}; one row per section and angle; moments nose-up "
             "about each section's reference point, coefficients per its main chord"]
    for path in planned["table"]:
        written.append(write_table(table, path, overwrite, notes))
    written += _figures(case, folder, polars, overwrite)
    written += _fields(case, folder, overwrite)
    written += _loads(case, folder, overwrite)

    record = manifest_record(case.settings(), inputs, written, base=Path(case.path).parent,
                             folder=folder, executor=_executor_name(executor))
    written.append(write_manifest(folder / MANIFEST_NAME, record, overwrite))
    return RunReport(folder, tuple(written), tuple(polars), table)


def _figures(case, folder, polars, overwrite) -> list:
    from panelflow.output.figures import compare_cp_figure, polar_figure, surface_cp_figure

    by_label = {p.label: p for p in polars}
    written = []
    for f in case.outputs.polar_figures:
        chosen = [by_label[lab] for lab in (f.sections or [p.label for p in polars])]
        written.append(polar_figure(chosen, None, folder / f.file, overwrite, title=f.title))
    for f in case.outputs.cp_figures:
        labels = f.sections or [p.label for p in polars]
        analyses = [solve_task(_task(case, lab), _angles(case, lab, f.alpha)) for lab in labels]
        if len(analyses) == 1:
            written.append(surface_cp_figure(analyses[0], folder / f.file,
                                             overwrite=overwrite, title=f.title))
        else:
            written.append(compare_cp_figure(analyses, labels, None, folder / f.file,
                                             overwrite=overwrite, title=f.title))
    return written


def _fields(case, folder, overwrite) -> list:
    from panelflow.flow.field import default_window, flow_field, grid_points
    from panelflow.output.field_files import write_field

    written = []
    for f in case.outputs.fields:
        task = _task(case, f.section)
        result = solve_task(task, _angles(case, f.section, f.alpha), error_estimate=False)
        alpha = float(result.alpha_deg[0])
        window = f.window or default_window(result.outlines)
        points, shape = grid_points(window, f.resolution)
        flow = flow_field(result, points, [alpha], shape)
        written.append(write_field(flow, folder / f.file, outlines=result.outlines,
                                   overwrite=overwrite))
        if f.figure:
            from panelflow.flow.streamlines import streamlines
            from panelflow.output.figures import field_figure

            lines = (streamlines(result, alpha, window, n=f.streamlines)
                     if f.streamlines else ())
            written.append(field_figure(flow, result.outlines, folder / f.figure,
                                        streamlines=lines, overwrite=overwrite,
                                        plane=result.plane))
    return written


def _loads(case, folder, overwrite) -> list:
    from panelflow.conditions.fluids import Conditions, resolve_fluid
    from panelflow.loads.section import section_loads
    from panelflow.output.load_files import write_loads

    written = []
    for f in case.outputs.loads:
        task = _task(case, f.section)
        fluid = resolve_fluid(f.fluid, f.density)
        conditions = Conditions(fluid, f.speed, unit=f.unit, chord=f.chord, span=f.span)
        result = solve_task(task, _angles(case, f.section, f.alpha))
        loads = section_loads(result, conditions, about=f.about)
        written += write_loads(loads, folder / f.file, overwrite=overwrite)
    return written
