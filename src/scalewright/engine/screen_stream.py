"""The careless-responding screen of a file read in blocks, in three passes over the file.

The screen judges every row against the whole sample, and its Mahalanobis distance is measured twice
(from everyone, then from the rows the first distance left unflagged), so the file is read three times;
memory holds a few blocks and the summaries below, whatever the number of rows:

1. Summaries: what reading found (checked as the whole-file reader checks it), the exact integer pairwise
   cross-products of the keyed items (item means and covariance: the first Mahalanobis centre, the item
   totals of the person-total correlation, the attentive respondent's expected person-total r), the counts
   of answered items per row (their median), each row's even-odd half correlation and its usable
   completion time (two columns spilled to disk, their exact medians found by selection:
   :mod:`.value_spill`), and a 64-bit hash of each answer row (spilled as the ids are: :mod:`.id_spill`).
2. The first distance of every row, and the cross-products of the rows it leaves unflagged (the second
   centre); the rows whose hash came twice are looked at again and grouped by their answers themselves,
   so a shared hash never makes a copy.
3. Every row's indices and flags (:func:`~scalewright.stats.screen_blocks.judge_rows`), handed to a sink
   in file order as they are judged, and the sums of the summary: flag counts and overlaps, the indices
   that could not be computed, the listwise cross-products of each scale with and without the flagged.
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ..data_file import first_row_number
from ..results import JsonRows
from ..stats.screen_blocks import ScreenSummary
from ..stats.screen_rules import ScreenThresholds
from .blocks import Block, CannotStream
from .id_spill import IdHashSpill
from .reading import ReadingOutcome
from .screen_passes import Folded, Layout, Passes
from .screen_steps import (
    ScreenOptions,
    after_first_pass,
    after_second_pass,
    check_first_pass,
    file_layout,
    finish_summary,
    summary_before_rows,
)
from .screen_sums import FirstSums, FirstValues, SecondSums, ThirdSettings, ThirdSums
from .value_spill import ValueSpill

#: flagged records kept in memory for the tables (every record goes to the sink)
HELD_RECORDS = 1000


@dataclass(frozen=True)
class StreamedScreen:
    """The screen's summary document and the checked reading of the file."""

    summary: ScreenSummary
    outcome: ReadingOutcome


def stream_screen(path: str | Path, spec: Any, *, thresholds: ScreenThresholds | None = None,
                  duration_column: str | None = None, duration_unit: str = "s", lenient: bool = False,
                  block_bytes: int | None = None, sink: Callable[[JsonRows], None] | None = None,
                  before_rows: Callable[[ScreenSummary], None] | None = None,
                  held: int = HELD_RECORDS, weight: str | None = None,
                  weights_read: Callable[[Any], None] | None = None) -> StreamedScreen:
    """Screen the file in three passes (see the module notes); ``sink`` receives every block's records in
    file order, ``before_rows`` is called once before the first (when everything but the rows is known:
    the summary passed has no counts yet). Raises :class:`~scalewright.engine.blocks.CannotStream` for
    a file the whole-file reader must read, before any record is handed on.

    ``weight`` names the survey weight column: the Mahalanobis centres, the alphas with and without the
    flagged and the flagged shares are then weighted, from exact sums (:mod:`.screen_weighted`);
    ``weights_read`` is given what reading the weights found (a
    :class:`~scalewright.summaries.weighted.WeightReading`) once the first pass is checked, before any
    record is handed on (to refuse the run as the whole-file route refuses it)."""
    path = Path(path)
    options = ScreenOptions(thresholds=thresholds or ScreenThresholds(), duration_column=duration_column,
                            duration_unit=duration_unit, weight=weight)
    passes = Passes(path, spec, options.columns(spec), block_bytes)
    p = len(spec.items)
    known = file_layout(path, spec)

    def first_pass(block: Block) -> tuple[FirstSums, FirstValues]:
        layout = known or Layout.of(spec, block.reading.file_columns)
        return FirstSums.of_block(block, layout, thresholds=options.thresholds, duration_column=duration_column,
                                  weight=weight)

    with passes.fold(first_pass, lambda: FirstSpills(known, spec)) as first_found:
        sums, layout = first_found.sums, first_found.layout
        if sums is None or sums.reading.rows == 0 or layout is None:
            raise CannotStream("no rows")  # the whole-file reader says so
        if first_found.ids.has_duplicates():
            raise CannotStream("an id appears twice")  # the whole-file reader names it and its rows
        outcome = check_first_pass(sums, str(path), spec, options, lenient=lenient, weights_read=weights_read)
        typical_halves = first_found.halves.median()
        median_duration = None if duration_column is None else first_found.times.median()
        candidates = first_found.rows.repeated()
    first = after_first_pass(sums, layout, options, typical_halves=typical_halves, candidates=candidates)
    base = first_row_number(path)
    second_sums = passes.fold(lambda block: SecondSums.of_block(block, first.second, spec, base=base),
                              lambda: Folded(SecondSums())).sums
    second = after_second_pass(sums, first, second_sums, layout, options, median_duration=median_duration)
    if before_rows is not None:
        before_rows(summary_before_rows(first, second, options, p=p, median_duration=median_duration))
    settings = ThirdSettings(layout=layout, sample=second.sample, in_group=second.in_group,
                             thresholds=options.thresholds, duration_column=duration_column, weight=weight, held=held)
    third = passes.fold(lambda block: ThirdSums.of_block(block, settings, spec, base=base),
                        lambda: JudgedCollector(sink, held)).sums
    summary = finish_summary(sums, first, second, third, options, p=p, median_duration=median_duration)
    return StreamedScreen(summary=summary, outcome=outcome)


class FirstSpills:
    """The first pass's sums merged block by block, and what cannot be summed spilled to disk: the even-odd
    r and usable times (exact medians: :mod:`.value_spill`), the hashes of ids and of answer rows
    (:mod:`.id_spill`). Use as a context manager (the spills are removed on leaving)."""

    def __init__(self, layout: Layout | None, spec: Any) -> None:
        self.layout, self.spec = layout, spec
        self.sums: FirstSums | None = None
        self.ids, self.rows, self.halves, self.times = IdHashSpill(), IdHashSpill(), ValueSpill(), ValueSpill()

    def add(self, block: Block, found: tuple[FirstSums, FirstValues]) -> None:
        sums, values = found
        if self.layout is None:
            self.layout = Layout.of(self.spec, block.reading.file_columns)
        self.sums = sums if self.sums is None else self.sums.merge(sums)
        self.take(values)

    def take(self, values: FirstValues) -> None:
        for hashes in values.id_hashes:
            self.ids.add(hashes)
        self.rows.add(values.row_hashes)
        if values.halves is not None:
            self.halves.add(values.halves)
        if values.timed is not None:
            self.times.add(values.timed)

    def close(self) -> None:
        for spill in (self.ids, self.rows, self.halves, self.times):
            spill.close()

    def __enter__(self) -> FirstSpills:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


class JudgedCollector(Folded):
    """The third pass's sums merged block by block, every block's records handed to ``sink`` as they come."""

    def __init__(self, sink: Callable[[JsonRows], None] | None, held: int) -> None:
        super().__init__(ThirdSums(held=held))
        self.sink = sink

    def add(self, block: Block, found: Any) -> None:
        judged, sums = found
        super().add(block, sums)
        if self.sink is not None:
            self.sink(judged.records)
