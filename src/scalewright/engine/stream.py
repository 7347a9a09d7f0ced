"""A file summarised block by block: parsed on pyarrow's threads, each block converted and summarised on
a pool of threads as it arrives, merged into a running total and dropped. Memory holds a few blocks
whatever the number of rows."""
from __future__ import annotations

from dataclasses import replace
from pathlib import Path
from typing import Any

from ..data_file import first_row_number
from ..summaries import Summary
from .block_pool import in_file_order
from .blocks import CannotStream, batch_sources, convert_batch, read_by_first_way
from .id_spill import IdHashSpill
from .plan import SummaryPlan, summarise_block
from .reading import ReadingOutcome, check_reading


def summarise_file(path: str | Path, spec: Any, plan: SummaryPlan, *, block_bytes: int | None = None,
                   batch_rows: int | None = None, source: Any = None, first_row: int | None = None,
                   file: str = "", part: int = 0, spill_ids: bool = False) -> Summary:
    """The merged summary of every block of the file (reading not yet checked: see :func:`stream_summary`).

    ``first_row`` is the row number of the file's first data row (default: 2 below a header, 1 in Parquet);
    ``file`` and ``part`` name the file and its position when it is one partition of a dataset.
    ``spill_ids``: check the ids for duplicates here, on disk (:mod:`~scalewright.engine.id_spill`), and
    keep no hash in the summary (a single file; a dataset's partitions keep theirs to check them together).
    Raises :class:`~scalewright.engine.blocks.CannotStream` for a file only the whole-file reader reads.
    """
    path = Path(path)
    ways = batch_sources(path, spec, plan.columns, block_bytes=block_bytes, batch_rows=batch_rows, source=source)
    start = first_row_number(path) if first_row is None else first_row
    return read_by_first_way(ways, lambda batches: _summarise_batches(batches(), spec, plan, start, file=file,
                                                                      part=part, spill_ids=spill_ids))


def _summarise_batches(batches: Any, spec: Any, plan: SummaryPlan, start: int, *, file: str = "",
                       part: int = 0, spill_ids: bool = False) -> Summary:
    def summarise(batch: Any, first: int) -> Summary:
        return summarise_block(convert_batch(batch, spec, plan.columns, first_row=first, file=file, part=part), plan)

    with IdHashSpill() as ids:
        merged = _TreeMerge()
        for done in in_file_order(batches, summarise, start):
            if spill_ids:  # the ids are checked on disk, not held in the summary
                done = Summary({**done.members, "reading": ids.take_ids(done["reading"])})
            merged.add(done)
        total = merged.result()
        if total is not None and spill_ids and ids.has_duplicates():
            total = Summary({**total.members, "reading": replace(total["reading"], duplicate_ids=True)})
    if total is None or total["reading"].rows == 0:
        raise CannotStream("no rows")  # the whole-file reader says so
    return total


class _TreeMerge:
    """Summaries merged as they arrive, in a balanced tree (as a binary counter carries): two summaries of
    equal weight are merged at once, so at most log2(blocks) are held and each row's summary takes part
    in log2(blocks) merges. Merging every block into one running total instead costs a merge of the
    whole total per block, which dominated the time of summaries that grow with the data (per-pattern
    sums: 5.6 s of 17 s on 1,000,000 rows)."""

    def __init__(self) -> None:
        self._stack: list[tuple[int, Summary]] = []

    def add(self, summary: Summary) -> None:
        weight = 1
        while self._stack and self._stack[-1][0] == weight:
            _, earlier = self._stack.pop()
            summary = earlier.merge(summary)
            weight *= 2
        self._stack.append((weight, summary))

    def result(self) -> Summary | None:
        total = None
        for _, summary in reversed(self._stack):  # the latest rows first, each merged after the earlier ones
            total = summary if total is None else summary.merge(total)
        return total


def stream_summary(path: str | Path, spec: Any, plan: SummaryPlan, *, lenient: bool = False,
                   block_bytes: int | None = None, batch_rows: int | None = None) -> tuple[Summary, ReadingOutcome]:
    """The summary of the file and its checked reading (errors raised as the whole-file reader raises them)."""
    summary = summarise_file(path, spec, plan, block_bytes=block_bytes, batch_rows=batch_rows, spill_ids=True)
    return summary, checked(str(path), summary, spec, lenient=lenient)


def checked(path: str, summary: Summary, spec: Any, *, lenient: bool) -> ReadingOutcome:
    counts = summary["reading"]
    if counts.has_duplicate_ids():
        raise CannotStream("an id appears twice")  # the whole-file reader names it and its rows
    return check_reading(path, counts, spec, lenient=lenient)
