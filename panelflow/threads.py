"""Thread discipline: how many threads each stage of panelflow may use.

The library decides the threads of every stage itself, so results and speed do not depend on
what the process happened to have set:

* **BLAS on one thread inside panelflow.** Every stage that calls BLAS or LAPACK (assembly,
  factorisation, surface integrals, the field) runs under :func:`one_blas_thread`. Threaded
  OpenBLAS gives results that differ in the last bits from its one-thread results (a different
  order of the sums), and on a busy machine its spinning second thread made a 202 x 202
  factorisation hundreds of times slower (measured, ``scripts/bench.py``). Parallel work is done
  by panelflow's own threads instead, over a fixed partition of the work, so the bits do not
  depend on the number of threads.
* **panelflow's own threads** evaluate the influence kernels in blocks and update large
  factorisations in column chunks (:func:`run_blocks`): at most :func:`cap` threads, never
  nested (work started from inside a panelflow worker thread runs on that thread).
* **A user cap.** The environment variable ``PANELFLOW_THREADS`` (a whole number, at least 1)
  caps panelflow's threads in this process; :func:`limited` lowers the cap for a block of code
  (the study runner gives each worker process its share of the cores this way).

Nothing here changes a result: the partition of the work into blocks depends only on the
problem size, and each block is computed by the same code whichever thread runs it.
"""

from __future__ import annotations

import contextlib
import os
import threading
from concurrent.futures import ThreadPoolExecutor

from panelflow.errors import InputError

ENV_VARIABLE = "PANELFLOW_THREADS"

_local = threading.local()  # per thread: the cap set by limited(), and "inside a worker"
_pool_lock = threading.Lock()
_pool: ThreadPoolExecutor | None = None
_pool_size = 0


def cpu_count() -> int:
    """Cores this process may run on (its CPU affinity where the system reports it)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):  # not Linux
        return max(1, os.cpu_count() or 1)


def user_cap() -> int | None:
    """The cap set by ``PANELFLOW_THREADS``, or None when it is not set.

    Raises
    ------
    InputError
        When the variable is set to anything but a whole number of at least 1.
    """
    raw = os.environ.get(ENV_VARIABLE, "").strip()
    if not raw:
        return None
    try:
        value = int(raw)
    except ValueError:
        value = 0
    if value < 1:
        raise InputError(f"{ENV_VARIABLE}={raw!r}: give a whole number of threads, at least 1")
    return value


def cap() -> int:
    """Threads panelflow may use here and now: the cores, the user's cap and any
    :func:`limited` block, whichever is smallest; 1 inside a panelflow worker thread."""
    if getattr(_local, "worker", False):
        return 1
    n = cpu_count()
    user = user_cap()
    if user is not None:
        n = min(n, user)
    local = getattr(_local, "cap", None)
    if local is not None:
        n = min(n, local)
    return max(1, n)


@contextlib.contextmanager
def limited(n: int):
    """Lower the thread cap of the calling thread to ``n`` inside the block (nests: the
    smallest cap wins)."""
    n = int(n)
    if n < 1:
        raise InputError(f"thread limit {n}: give at least 1")
    before = getattr(_local, "cap", None)
    _local.cap = n if before is None else min(before, n)
    try:
        yield
    finally:
        _local.cap = before


def _worker_start() -> None:
    _local.worker = True


def _shared_pool(n: int) -> ThreadPoolExecutor:
    """One pool for the process, grown when a larger cap asks for more threads; starting a pool
    per call would cost more than a small assembly."""
    global _pool, _pool_size
    with _pool_lock:
        if _pool is None or _pool_size < n:
            old = _pool
            _pool = ThreadPoolExecutor(n, thread_name_prefix="panelflow",
                                       initializer=_worker_start)
            _pool_size = n
            if old is not None:
                old.shutdown(wait=False)
        return _pool


def run_blocks(job, n_blocks: int, threads: int | None = None) -> None:
    """Call ``job(i)`` for ``i`` in ``range(n_blocks)``, on up to ``threads`` threads.

    ``threads`` defaults to :func:`cap`. The jobs must be independent (each writes its own part
    of the output); they run under :func:`one_blas_thread`. The first exception raised by a job
    is raised here after all jobs have ended.
    """
    n = cap() if threads is None else max(1, min(int(threads), cap()))
    n = min(n, n_blocks)
    with one_blas_thread():
        if n <= 1:
            for i in range(n_blocks):
                job(i)
            return
        pool = _shared_pool(n)
        # n interleaved strides: each pool thread takes every n-th block, so a slow block
        # delays only its own stride
        def stride(k):
            for i in range(k, n_blocks, n):
                job(i)

        futures = [pool.submit(stride, k) for k in range(n)]
        errors = [f.exception() for f in futures]
    for exc in errors:
        if exc is not None:
            raise exc


# ---------------------------------------------------------------------------------- BLAS
_blas_lock = threading.Lock()
_blas_depth = 0
_blas_saved: list = []
_blas_libs: list | None = None


class _Blas:
    """One loaded BLAS library: read and set its thread count from any thread.

    threadpoolctl lets only the first Python thread that set an OpenBLAS limit change it again
    (others are ignored without a word), so a study task on a Dask worker thread would keep two
    BLAS threads and give other bits. OpenBLAS's own ``openblas_set_num_threads`` (its symbol
    found the way threadpoolctl finds it: with the prefix and suffix of numpy's and scipy's
    builds) sets the process-wide count from any thread; other BLAS libraries go through
    threadpoolctl.
    """

    def __init__(self, controller):
        self.controller = controller
        self._set = None
        if controller.internal_api == "openblas":
            import ctypes

            try:
                dll = ctypes.CDLL(controller.filepath)
            except OSError:  # pragma: no cover - the library is loaded, so it opens
                dll = None
            for prefix in ("", "scipy_"):
                for suffix in ("", "64_"):
                    fn = getattr(dll, f"{prefix}openblas_set_num_threads{suffix}", None)
                    if fn is not None and self._set is None:
                        fn.argtypes, fn.restype = [ctypes.c_int], None
                        self._set = fn

    @property
    def num_threads(self) -> int:
        return self.controller.num_threads

    def set_num_threads(self, n: int) -> None:
        if self._set is not None:
            self._set(int(n))
        else:
            self.controller.set_num_threads(n)


def _blas_controllers() -> list:
    """The BLAS libraries loaded (numpy's and scipy's may be two different OpenBLAS builds),
    found once."""
    global _blas_libs
    if _blas_libs is None:
        import numpy  # noqa: F401 - make sure both BLAS libraries are loaded before the scan
        import scipy.linalg  # noqa: F401
        try:
            from threadpoolctl import ThreadpoolController
        except ImportError:  # pragma: no cover - a dependency; without it only speed suffers
            _blas_libs = []
        else:
            _blas_libs = [_Blas(lib) for lib in ThreadpoolController().lib_controllers
                          if lib.user_api == "blas"]
    return _blas_libs


def blas_threads() -> list[int]:
    """Current thread count of each loaded BLAS library (for checks and the benchmark)."""
    return [lib.num_threads for lib in _blas_controllers()]


@contextlib.contextmanager
def one_blas_thread():
    """BLAS and LAPACK on one thread inside the block, for every thread of the process.

    The BLAS thread count is a process-wide setting, so nested and concurrent blocks share one
    setting: the first to enter sets one thread, the last to leave restores what was there.
    """
    global _blas_depth, _blas_saved
    with _blas_lock:
        if _blas_depth == 0:
            libs = _blas_controllers()
            _blas_saved = [lib.num_threads for lib in libs]
            for lib, before in zip(libs, _blas_saved):
                if before != 1:
                    lib.set_num_threads(1)
        _blas_depth += 1
    try:
        yield
    finally:
        with _blas_lock:
            _blas_depth -= 1
            if _blas_depth == 0:
                for lib, before in zip(_blas_controllers(), _blas_saved):
                    if before != 1:
                        lib.set_num_threads(before)


def blas_single(func):
    """Decorator: run ``func`` under :func:`one_blas_thread`."""
    import functools

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        with one_blas_thread():
            return func(*args, **kwargs)

    return wrapper
