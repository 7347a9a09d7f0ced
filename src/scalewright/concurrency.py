"""Running independent pieces of work (one per scale, one per column) on the machine's cores."""
from __future__ import annotations

import os
import threading
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager
from concurrent.futures import ThreadPoolExecutor
from typing import TypeVar

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
