"""The careless-responding screen of a dataset's partitions on a Dask cluster: the three passes of
:mod:`.screen_stream`, each partition read block by block on a worker.

1. Every partition's first-pass sums (:class:`~.screen_sums.FirstSums`: reading counts, exact integer
   cross-products of the keyed codes, answered items per row, the weights' exact sums) are computed on the
   workers and merged on the client in dataset order (partition order, then row order); what cannot be
   summed comes back beside them, a partition at a time, and is spilled to disk on the client as the block
   route spills it: each row's even-odd r and usable time (their exact medians by selection,
   :mod:`.value_spill`), and the 64-bit hashes of its id and of its answers (ids and answer rows seen twice
   across the whole dataset, :mod:`.id_spill`).
2. The first centre and the answer-row hashes seen twice are sent to the workers; each partition returns
   the cross-products of the rows its first distances set aside, and its rows whose hash came twice with
   their answers, so identical rows in different partitions are found and a shared hash never makes a copy.
3. The sample each row is judged against (the final centre, item totals, median time, the rows with an
   identical twin) is sent to the workers; each partition returns its sums and its respondents' records
   already written as per-respondent table rows or JSON lines, which the client writes in dataset order
   a partition at a time.

The client holds a partition's values or records at a time and the merged sums, whatever the number of
partitions. Without an id column the respondents are numbered through the partitions, as if the dataset
were one file; what reading finds is placed in its own file (file, row in that file, column), as the
summary commands on Dask place it.
"""
from __future__ import annotations

import contextlib
import hashlib
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..data_file import first_row_number
from ..errors import DataError, Problem
from .blocks import Block, CannotStream
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
from .screen_stream import HELD_RECORDS, FirstSpills, StreamedScreen
from .screen_sums import FirstSums, FirstValues, SecondSettings, SecondSums, ThirdSettings, ThirdSums


@dataclass(frozen=True)
class RecordsText:
    """How the workers write the respondents' records: ``kind`` "csv" (rows of the per-respondent table,
    ``head`` the summary known before the third pass) or "json" (one compact record a line)."""

    kind: str
    flagged_only: bool = False
    has_duration: bool = False
    head: dict[str, Any] | None = None

    def of(self, records: Any) -> str:
        if self.kind == "csv":
            from ..present.quality import respondents_csv_rows

            return respondents_csv_rows({**(self.head or {}), "respondents": records}, flagged_only=self.flagged_only,
                                        has_duration=self.has_duration)
        from ..present.render import _compact

        return "".join(_compact(record) + "\n" for record in records if record["flagged"] or not self.flagged_only)


@dataclass(frozen=True)
class PartitionFirst:
    """One partition's first pass: its sums, what cannot be summed, its layout and the digest of its bytes."""

    sums: FirstSums
    values: FirstValues
    layout: Layout
    digest: str


def dask_screen(data: str, spec: Any, options: ScreenOptions, *, lenient: bool = False, scheduler: str | None = None,
                workers: int | None = None, block_bytes: int | None = None, records: RecordsText | None = None,
                write: Callable[[str], Any] | None = None, held: int = HELD_RECORDS,
                weights_read: Callable[[Any], None] | None = None) -> tuple[StreamedScreen, dict[str, Any]]:
    """Screen every partition of ``data`` (see :func:`~scalewright.engine.dask_engine.dataset_parts`) in
    three passes on the cluster; with ``records`` and ``write`` every record's text is handed to ``write``
    in dataset order. Returns the screen and the run's provenance (``data_sha256`` over the partitions'
    names and digests, ``scheduler``, ``partitions``). ``weights_read`` as in
    :func:`~scalewright.engine.screen_stream.stream_screen`."""
    from .dask_engine import _client, dataset_parts

    urls, local = dataset_parts(data)
    scales_text = Path(spec.path).read_text(encoding="utf-8-sig")
    common = {"scales_text": scales_text, "options": options, "local": local, "block_bytes": block_bytes,
              "pure": False}
    p = len(spec.items)
    client, cluster = _client(scheduler, workers)
    try:
        futures = client.map(first_pass_of_partition, urls, range(len(urls)), **common)
        rows, digests, layout = [], [], None
        with FirstSpills(None, spec) as spills:
            for found in _in_order(futures):
                spills.sums = found.sums if spills.sums is None else spills.sums.merge(found.sums)
                spills.take(found.values)
                rows.append(found.sums.reading.rows)
                digests.append(found.digest)
                layout = layout or found.layout
            sums = spills.sums
            if sums is None or layout is None:  # not reached: a partition without rows is refused on its worker
                raise DataError(Problem(file=data, message="no rows in this dataset"))
            if spills.ids.has_duplicates():
                raise DataError(Problem(file=data, where=f"column {spec.id_column}",
                                        message="an id appears more than once across the partitions; read the "
                                                "files together with --engine memory to list them"))
            outcome = check_first_pass(sums, data, spec, options, lenient=lenient, weights_read=weights_read)
            typical_halves = spills.halves.median()
            median_duration = None if options.duration_column is None else spills.times.median()
            candidates = spills.rows.repeated()
        first = after_first_pass(sums, layout, options, typical_halves=typical_halves, candidates=candidates)
        # each partition's rows as the rows of one file: indices and numbers run on through the partitions
        before = np.concatenate([[0], np.cumsum(rows)[:-1]]).astype(int).tolist()
        bases = [first_row_number(url) - done for url, done in zip(urls, before, strict=True)]
        shifts = [first_row_number(urls[0]) - base for base in bases]
        placed = {"base": bases, "shift": shifts}
        settings = client.scatter(first.second, broadcast=True)
        second_sums = SecondSums()
        for found_second in _in_order(client.map(second_pass_of_partition, urls, range(len(urls)), placed["base"],
                                                 placed["shift"], settings=settings, **common)):
            second_sums = second_sums.merge(found_second)
        second = after_second_pass(sums, first, second_sums, layout, options, median_duration=median_duration)
        before_rows = summary_before_rows(first, second, options, p=p, median_duration=median_duration)
        if records is not None and records.kind == "csv":
            head = before_rows.to_dict()
            records = RecordsText("csv", flagged_only=records.flagged_only, has_duration=records.has_duration,
                                  head={"summary": head["summary"], "thresholds": head["thresholds"]})
        judging = client.scatter(ThirdSettings(layout=layout, sample=second.sample, in_group=second.in_group,
                                               thresholds=options.thresholds, duration_column=options.duration_column,
                                               weight=options.weight, held=held), broadcast=True)
        third = ThirdSums(held=held)
        for found_third, text in _in_order(client.map(
                third_pass_of_partition, urls, range(len(urls)), placed["base"], placed["shift"], settings=judging,
                records=records if write is not None else None, **common)):
            third = third.merge(found_third)
            if write is not None and text:
                write(text)
        address = client.scheduler.address if scheduler is None else scheduler
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    summary = finish_summary(sums, first, second, third, options, p=p, median_duration=median_duration)
    listing = "".join(f"{Path(url).name}\t{digest}\n" for url, digest in zip(urls, digests, strict=True))
    info = {"data_sha256": hashlib.sha256(listing.encode("utf-8")).hexdigest(), "scheduler": scheduler or "local",
            "partitions": len(urls), "address": address}
    return StreamedScreen(summary=summary, outcome=outcome), info


def _in_order(futures: list[Any]) -> Iterator[Any]:
    """The futures' results in their order, each released once taken (the client holds one at a time)."""
    for future in futures:
        result = future.result()
        future.release()
        yield result


# ------------------------------------------------------------------------------- on the workers
@contextlib.contextmanager
def _partition(url: str, part: int, scales_text: str, options: ScreenOptions, local: bool,
               block_bytes: int | None) -> Iterator[tuple[Any, Passes, Any]]:
    """(spec, the partition's passes, its open source or None), a partition that cannot be read in blocks
    refused with its file named (as :func:`~scalewright.engine.dask_engine.summarise_partition` refuses it)."""
    from .dask_engine import _spec_from_text

    spec = _spec_from_text(scales_text)
    with contextlib.ExitStack() as stack:
        source = None
        if not local:
            import fsspec

            source = stack.enter_context(fsspec.open(url, "rb"))
        try:
            yield spec, Passes(Path(url), spec, options.columns(spec), block_bytes, source=source, file=url,
                               part=part), source
        except CannotStream as reason:
            advice = "; read this file alone with --engine memory to see why" if local else ""
            raise DataError(Problem(file=url, message=f"cannot be read in blocks ({reason}){advice}")) from None


class _PartitionFirst(Folded):
    """The first pass over one partition: sums merged, the values that cannot be summed collected."""

    def __init__(self, layout: Layout | None, spec: Any) -> None:
        super().__init__()
        self.layout, self.spec = layout, spec
        self.values: list[FirstValues] = []

    def add(self, block: Block, found: Any) -> None:
        sums, values = found
        if self.layout is None:
            self.layout = Layout.of(self.spec, block.reading.file_columns)
        super().add(block, sums)
        self.values.append(values)

    def close(self) -> None:
        super().close()
        self.values = []

    def joined(self) -> FirstValues:
        def join(arrays: list[Any], dtype: Any) -> np.ndarray | None:
            present = [a for a in arrays if a is not None]
            return np.concatenate(present).astype(dtype, copy=False) if present else None

        ids = join([h for v in self.values for h in v.id_hashes], np.uint64)
        rows = join([v.row_hashes for v in self.values], np.uint64)
        return FirstValues(halves=join([v.halves for v in self.values], np.float64),
                           timed=join([v.timed for v in self.values], np.float64),
                           row_hashes=np.zeros(0, dtype=np.uint64) if rows is None else rows,
                           id_hashes=() if ids is None else (ids,))


def first_pass_of_partition(url: str, part: int, *, scales_text: str, options: ScreenOptions, local: bool,
                            block_bytes: int | None) -> PartitionFirst:
    """One partition's first pass (runs on a worker)."""
    digest = _sha256(url, local)
    with _partition(url, part, scales_text, options, local, block_bytes) as (spec, passes, source):
        known = file_layout(url, spec, source)

        def work(block: Block) -> tuple[FirstSums, FirstValues]:
            return FirstSums.of_block(block, known or Layout.of(spec, block.reading.file_columns),
                                      thresholds=options.thresholds, duration_column=options.duration_column,
                                      weight=options.weight)

        found = passes.fold(work, lambda: _PartitionFirst(known, spec))
        if found.sums is None or found.sums.reading.rows == 0 or found.layout is None:
            raise CannotStream("no rows")
    return PartitionFirst(sums=found.sums, values=found.joined(), layout=found.layout, digest=digest)


def second_pass_of_partition(url: str, part: int, base: int, shift: int, *, settings: SecondSettings,
                             scales_text: str, options: ScreenOptions, local: bool,
                             block_bytes: int | None) -> SecondSums:
    """One partition's second pass (runs on a worker)."""
    with _partition(url, part, scales_text, options, local, block_bytes) as (spec, passes, _):
        return passes.fold(lambda block: SecondSums.of_block(block, settings, spec, base=base, shift=shift),
                           lambda: Folded(SecondSums())).sums


class _PartitionJudged(Folded):
    def __init__(self, held: int, records: RecordsText | None) -> None:
        super().__init__(ThirdSums(held=held))
        self.records = records
        self.texts: list[str] = []

    def add(self, block: Block, found: Any) -> None:
        judged, sums = found
        super().add(block, sums)
        if self.records is not None:
            self.texts.append(self.records.of(judged.records))


def third_pass_of_partition(url: str, part: int, base: int, shift: int, *, settings: ThirdSettings,
                            records: RecordsText | None, scales_text: str, options: ScreenOptions, local: bool,
                            block_bytes: int | None) -> tuple[ThirdSums, str]:
    """One partition's third pass (runs on a worker): its sums and its records as text (empty without
    ``records``)."""
    with _partition(url, part, scales_text, options, local, block_bytes) as (spec, passes, _):
        found = passes.fold(lambda block: ThirdSums.of_block(block, settings, spec, base=base, shift=shift),
                            lambda: _PartitionJudged(settings.held, records))
    return found.sums, "".join(found.texts)


def _sha256(url: str, local: bool) -> str:
    digest = hashlib.sha256()
    if local:
        with open(url, "rb") as handle:
            for chunk in iter(lambda: handle.read(1 << 20), b""):
                digest.update(chunk)
        return digest.hexdigest()
    import fsspec

    with fsspec.open(url, "rb") as handle:
        for chunk in iter(lambda: handle.read(1 << 20), b""):
            digest.update(chunk)
    return digest.hexdigest()


__all__ = ["RecordsText", "dask_screen"]
