"""Running independent pieces of work (one per scale, one per column) on the machine's cores."""
from __future__ import annotations

import os
import threading
import warnings
from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import ThreadPoolExecutor
from contextlib import contextmanager
from typing import TypeVar, cast

#: the warnings filters are process-wide: code that records warnings takes turns under this lock, since the
#: analyses of several scales run in threads
RECORDING_WARNINGS = threading.Lock()

Item = TypeVar("Item")
Result = TypeVar("Result")


def worker_count() -> int:
    """Threads to use: the cores this process may run on (``SCALEWRIGHT_THREADS`` overrides)."""
    chosen = os.environ.get("SCALEWRIGHT_THREADS", "")
    if chosen.isdigit() and int(chosen) >= 1:
        return int(chosen)
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not every platform can tell the cores a process may use
        return max(1, os.cpu_count() or 1)


def map_in_threads(work: Callable[[Item], Result], items: Iterable[Item]) -> list[Result]:
    """``[work(item) for item in items]``, in order, spread over threads.

    Threads (not processes) suffice because the heavy steps are numpy operations on large arrays, which
    release the interpreter lock; results are identical to the serial loop.
    """
    items = list(items)
    workers = min(worker_count(), len(items))
    if workers <= 1:
        return [work(item) for item in items]
    with one_blas_thread(), ThreadPoolExecutor(max_workers=workers) as pool:
        return list(pool.map(work, items))


@contextmanager
def one_blas_thread() -> Iterator[None]:
    """Hold the BLAS/LAPACK libraries to one thread each while our own threads spread the work.

    Each of our threads works on small matrices (a scale's covariances, eigendecompositions of k x k);
    a multi-threaded BLAS inside every one of them only makes the threads fight over the same cores (the
    ``reliability --by`` run on 60 rows took 7 s instead of 2 s on a busy 2-core machine).
    """
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=1, user_api="blas"):
        yield


#: the work of the current :func:`start_in_process` call, read by the forked worker (set before it starts)
_FORKED_WORK: list[Callable[[], object]] = []


class ChildTraceback(Exception):
    """The traceback of an error raised in a forked child (the ``__cause__`` of the error raised here)."""


def _run_forked_work() -> tuple[bool, bytes]:
    """The work's result, or the error it raised with its traceback, pickled to bytes in the child.

    The executor's thread in the parent then unpickles only a bytes object: unpickling the result itself
    would import the modules of its classes on that thread, and a child forked meanwhile by the main thread
    inherits the lock of a module being imported and waits for it forever when it imports that module
    (seen: a report's reliability process hung importing ``stats.cfa_result`` while the confirmatory
    models' result was unpickled). Unpickled by the caller, the imports happen on the thread that forks.
    """
    import pickle

    try:
        return True, pickle.dumps(_FORKED_WORK[0](), protocol=pickle.HIGHEST_PROTOCOL)
    except BaseException as error:
        import traceback

        text = "".join(traceback.format_exception(type(error), error, error.__traceback__))
        try:
            return False, pickle.dumps((error, text), protocol=pickle.HIGHEST_PROTOCOL)
        except Exception:  # an error that cannot be pickled is named by its text
            return False, pickle.dumps((RuntimeError(f"{type(error).__name__}: {error}"), text))


def start_in_process(work: Callable[[], Result]) -> Callable[[], Result]:
    """Start ``work()`` in a forked process and return a function that waits for its result.

    For a step that is pure-Python work (so threads would take turns under the interpreter lock) and
    independent of what the caller does meanwhile. The child inherits everything by the fork and sends
    back only the pickled result, unpickled by the returned function on the caller's thread (see
    :func:`_run_forked_work`); an exception it raises is raised by the returned function. On one core,
    or where processes cannot be forked, ``work`` simply runs when the result is asked for.
    """
    import multiprocessing
    import sys

    if worker_count() <= 1 or not sys.platform.startswith("linux") or _FORKED_WORK:
        return work
    from concurrent.futures import ProcessPoolExecutor

    _FORKED_WORK.append(work)
    try:
        with RECORDING_WARNINGS, warnings.catch_warnings():
            # Python 3.12+ warns that forking a process with threads (pyarrow's pool) may deadlock the child;
            # the child runs numpy/pandas/scipy statistics only and takes no lock of those threads
            warnings.filterwarnings("ignore", message=r".*multi-threaded, use of fork\(\)", category=DeprecationWarning)
            pool = ProcessPoolExecutor(max_workers=1, mp_context=multiprocessing.get_context("fork"))
            future = pool.submit(_run_forked_work)
    finally:
        _FORKED_WORK.clear()

    def result() -> Result:
        import pickle

        try:
            done, payload = future.result()
        finally:
            pool.shutdown()
        if done:
            return cast(Result, pickle.loads(payload))
        error, text = pickle.loads(payload)
        raise error from ChildTraceback(text)

    return result
