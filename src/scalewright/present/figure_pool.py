"""Drawing many figures at once: each figure is drawn and saved by one of a few forked worker processes.

Drawing a figure is pure-Python work inside matplotlib (text layout, tick placement), so threads would take
turns under the interpreter lock; forked processes inherit the results to draw and matplotlib already
imported, with its fonts loaded, and need nothing pickled but an index.
"""
from __future__ import annotations

import multiprocessing
import sys
import warnings
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ..concurrency import RECORDING_WARNINGS, worker_count

#: below this many figures the start of the worker processes costs more than it saves
MIN_FIGURES_FOR_WORKERS = 4


@dataclass(frozen=True)
class FigureJob:
    """One figure: ``draw()`` returns its Axes (or an array of them); it is saved as ``stem.<format>``."""

    draw: Callable[[], Any]
    stem: Path


#: the jobs of the current :func:`render_figures` call, read by the forked workers (set before they start)
_JOBS: list[tuple[FigureJob, tuple[str, ...], tuple[Path, ...]]] = []


def _first_axes(drawn: Any) -> Any:
    return drawn.flat[0] if hasattr(drawn, "flat") else drawn


def _draw_and_save(job: FigureJob, formats: tuple[str, ...], inputs: tuple[Path, ...]) -> None:
    from .figure_files import save_figure

    save_figure(_first_axes(job.draw()).figure, job.stem, formats=formats, inputs=inputs)


def _render(index: int) -> int:
    _draw_and_save(*_JOBS[index])
    return index


def _can_fork() -> bool:
    return sys.platform.startswith("linux") and "fork" in multiprocessing.get_all_start_methods()


def render_figures(jobs: Sequence[FigureJob], *, formats: Sequence[str] = ("svg",), inputs: Iterable = ()) -> None:
    """Draw and save every job, in forked workers when there are several cores and enough figures.

    The files are the same as a serial loop writes (each figure is drawn by one process from the same
    results); errors raised in a worker are raised here.
    """
    start_figures(jobs, formats=formats, inputs=inputs)()


class FigureRun:
    """Figures being drawn (:func:`start_figures`); call it to wait until every file is written (a worker's
    error is raised then). :meth:`add` gives the same workers more jobs."""

    def __init__(self, pool: Any, futures: list, formats: tuple[str, ...], inputs: tuple[Path, ...]) -> None:
        self._pool, self._futures, self._formats, self._inputs = pool, futures, formats, inputs

    def add(self, jobs: Sequence[FigureJob]) -> None:
        """Draw more jobs: sent to the workers (pickled: the jobs' ``draw`` must be a picklable callable, such
        as a ``functools.partial`` of a figure function), or drawn here when there are none."""
        if self._pool is None:
            for job in jobs:
                _draw_and_save(job, self._formats, self._inputs)
            return
        self._futures += [self._pool.submit(_draw_and_save, job, self._formats, self._inputs) for job in jobs]

    def __call__(self) -> None:
        if self._pool is None:
            return
        try:
            for future in self._futures:
                future.result()
        finally:
            self._pool.shutdown(cancel_futures=True)


def start_figures(jobs: Sequence[FigureJob], *, formats: Sequence[str] = ("svg",), inputs: Iterable = ()) -> FigureRun:
    """Start drawing the jobs as :func:`render_figures` does; return the :class:`FigureRun`, which waits until
    every file is written when called. Meanwhile the caller can write what needs no figure.

    Without workers (one core, few figures, no fork) the figures are drawn here before this returns.
    """
    from .figure_files import use_agg

    global _JOBS
    use_agg()
    import matplotlib.pyplot  # noqa: F401  (imported once here, so every worker inherits it)
    from matplotlib import font_manager

    font_manager.findfont(font_manager.FontProperties())  # the font cache, loaded once before the fork
    formats, inputs = tuple(formats), tuple(Path(p) for p in inputs if p is not None)
    prepared = [(job, formats, inputs) for job in jobs]
    workers = min(worker_count(), len(prepared))
    _JOBS = prepared
    try:
        if workers <= 1 or len(prepared) < MIN_FIGURES_FOR_WORKERS or not _can_fork():
            for index in range(len(prepared)):
                _render(index)
            return FigureRun(None, [], formats, inputs)
        from concurrent.futures import ProcessPoolExecutor

        with RECORDING_WARNINGS, warnings.catch_warnings():
            # Python 3.12+ warns that forking a process with threads (pyarrow's pool) may deadlock the child;
            # the workers only draw with matplotlib and write files, they touch no lock of those threads
            warnings.filterwarnings("ignore", message=r".*multi-threaded, use of fork\(\)", category=DeprecationWarning)
            pool = ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context("fork"))
            # every worker is forked by the first submission, so the jobs can be let go of afterwards
            futures = [pool.submit(_render, index) for index in range(len(prepared))]
    finally:
        _JOBS = []
    return FigureRun(pool, futures, formats, inputs)
