"""Blocks of a file worked on a pool of threads and handed on in file order, a bounded number at a time.

Every block route (summaries, scored rows, the screen's passes) parses blocks, converts and works on
each on a pool of threads while the next is parsed, and must see the results in file order (row numbers,
the order of written rows). Holding at most ``workers`` blocks in flight keeps memory flat in rows.
"""
from __future__ import annotations

from collections import deque
from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import ThreadPoolExecutor
from typing import Any, TypeVar

from ..concurrency import one_blas_thread, worker_count

Result = TypeVar("Result")


def in_file_order(batches: Iterable[Any], work: Callable[[Any, int], Result], first_row: int, *,
                  workers: int | None = None) -> Iterator[Result]:
    """``work(batch, row)`` of every batch, ``row`` being the batch's first row number, yielded in file order.

    The work runs on ``workers`` threads (default: :func:`~scalewright.concurrency.worker_count`), each
    with one BLAS thread: the blocks' matrix products are small, and a multi-threaded BLAS inside each pool
    thread makes the threads fight over the cores (61 columns x 16,384 rows: 7 ms on one BLAS thread, 280 ms
    on all of them on a busy machine). At most ``workers`` batches are in flight beside the one handed on.
    """
    if hasattr(batches, "in_order"):  # the parallel reader: each block parsed and worked on one thread
        yield from batches.in_order(work, first_row, workers=workers)
        return
    workers = workers or worker_count()
    row = first_row
    with one_blas_thread(), ThreadPoolExecutor(max_workers=workers) as pool:
        pending: deque = deque()
        try:
            for batch in batches:
                pending.append(pool.submit(work, batch, row))
                row += batch.num_rows
                del batch
                while len(pending) > workers:
                    yield pending.popleft().result()
            while pending:
                yield pending.popleft().result()
        finally:
            for future in pending:  # a consumer that stops early (an error) leaves no work queued
                future.cancel()
