"""The report's two passes by route: the merged summary (a file read in blocks, or a dataset's partitions
summarised on Dask workers) and the scored rows written to ``scores.csv``."""
from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import click

from ..errors import UsageError
from .common import BLOCK_SIZE_HELP


def report_engine_options(fn: Any) -> Any:
    """``--engine`` (auto, memory, stream, dask), ``--block-size``, and with dask ``--scheduler``, ``--workers``."""
    fn = click.option("--workers", type=click.IntRange(min=1), default=None, metavar="N",
                      help="With --engine dask and no --scheduler: workers of the local cluster (default: the cores).")(fn)
    fn = click.option("--scheduler", default=None, metavar="ADDRESS",
                      help="With --engine dask: the Dask scheduler (default: a local cluster).")(fn)
    fn = click.option("--block-size", "block_size", type=click.IntRange(min=1024), default=None, metavar="BYTES",
                      help=BLOCK_SIZE_HELP)(fn)
    fn = click.option("--engine", type=click.Choice(["auto", "memory", "stream", "dask"]), default="auto",
                      show_default=True,
                      help="memory: read the file whole; stream: read it in blocks (memory that does not grow with "
                           "the rows); dask: summarise a Parquet dataset or CSV files on a Dask cluster, then "
                           "write the scores from the partitions here; auto: stream files of 64 MiB or more.")(fn)
    return fn


def check_dask_options(engine: str, scheduler: str | None, workers: int | None) -> None:
    """``--scheduler`` and ``--workers`` go with ``--engine dask`` only (a usage error otherwise)."""
    if engine != "dask" and (scheduler is not None or workers is not None):
        raise UsageError("--scheduler and --workers go with --engine dask")


@dataclass(frozen=True)
class ReportSummary:
    """The first pass: the merged summary, the checked reading, the provenance and, on Dask, the partitions."""

    summary: Any
    outcome: Any
    info: Any
    parts: tuple[list[str], bool] | None = None


def report_summary(data: Path, scales: Path, spec: Any, plan: Any, *, engine: str, lenient: bool,
                   block_size: int | None, scheduler: str | None = None, workers: int | None = None) -> ReportSummary:
    """The merged summary by route; raises :class:`~scalewright.engine.blocks.CannotStream` when a file read in
    blocks must be read whole."""
    from ..present.document import InputInfo

    check_dask_options(engine, scheduler, workers)
    if engine != "dask":
        from concurrent.futures import ThreadPoolExecutor

        from ..engine.stream import stream_summary

        with ThreadPoolExecutor(max_workers=1) as pool:  # the provenance digests beside the blocks
            digests = pool.submit(InputInfo.from_paths, data, scales)
            summary, outcome = stream_summary(data, spec, plan, lenient=lenient, block_bytes=block_size)
            return ReportSummary(summary=summary, outcome=outcome, info=digests.result())
    from ..engine.dask_engine import dask_summary, dataset_parts, url_as_given

    parts = dataset_parts(str(data))
    summary, outcome, found = dask_summary(str(data), spec, plan, scheduler=scheduler, lenient=lenient,
                                           workers=workers)
    info = InputInfo(data=url_as_given(str(data)), data_sha256=found["data_sha256"], scales=str(scales),
                     scales_sha256=InputInfo.from_paths(None, scales).scales_sha256)
    return ReportSummary(summary=summary, outcome=outcome, info=info, parts=parts)


def report_scores(first: ReportSummary, data: Path, spec: Any, target: Path | None, *, lenient: bool,
                  block_size: int | None, inputs: Iterable[Any]) -> Any:
    """The second pass: the scored rows written to ``target`` (None: counted only), the file's blocks or the
    partitions in order; returns the ``ScoreTable`` of counts."""
    if first.parts is None:
        from ..engine.score_stream import stream_scores

        return stream_scores(data, spec, target, lenient=lenient, block_bytes=block_size, inputs=inputs).table
    from ..engine.score_parts import stream_scores_of_parts

    urls, local = first.parts
    return stream_scores_of_parts(urls, local, spec, target, block_bytes=block_size, inputs=inputs)
