"""The scored rows of a dataset's partitions (``report --engine dask``), written in file order on the client.

The first pass (:func:`~scalewright.engine.dask_engine.dask_summary`) has summarised every partition on
the workers and checked what reading found (refused values, ids across the partitions), so this second
pass only scores: each partition is read a block at a time (a remote Parquet file through fsspec), each
block scored by the whole-file route's own function and appended to one CSV file, the partitions in the
order of their names, as the dataset lists them. Memory holds a few blocks whatever the number of rows.
Without an id column the rows are numbered through the partitions, as if they were one file.
"""
from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path
from typing import Any

from ..data_file import first_row_number
from ..files import write_atomic_with
from ..scored_csv import scored_csv
from ..scoring import ScoreTable, scored_frame
from .blocks import CannotStream, batch_sources, retry_errors
from .score_stream import _scored_blocks, _summary_table


def stream_scores_of_parts(urls: list[str], local: bool, spec: Any, target: str | Path | None, *,
                           block_bytes: int | None = None, inputs: Iterable[Any] = ()) -> ScoreTable:
    """Score every partition in order; with ``target`` (a ``.csv`` file) append each block to it. Returns the
    counts of the JSON summary (``ScoreTable.to_dict``), the rows themselves having been written out."""
    columns = (spec.id_column,) if spec.id_column else ()
    found: dict[str, Any] = {}

    def write_all(temp: Path | None) -> None:
        handle = open(temp, "w", encoding="utf-8", newline="") if temp is not None else None  # noqa: SIM115
        first: ScoreTable | None = None
        scored: dict[str, int] = {}
        rows = 0
        try:
            for url in urls:
                rows, first = _score_part(url, local, spec, columns, handle, block_bytes=block_bytes,
                                          start=first_row_number(urls[0]) + rows, rows=rows, first=first,
                                          scored=scored)
        finally:
            if handle is not None:
                handle.close()
        if first is None:
            raise CannotStream("no rows")
        found["table"] = _summary_table(first, scored, rows, None)

    if target is None:
        write_all(None)
    else:
        write_atomic_with(target, write_all, inputs=inputs)
    return found["table"]


def _score_part(url: str, local: bool, spec: Any, columns: tuple[str, ...], handle: Any, *,
                block_bytes: int | None, start: int, rows: int, first: ScoreTable | None,
                scored: dict[str, int]) -> tuple[int, ScoreTable | None]:
    """Append one partition's scored rows (starting again at its first row when a way of reading fails
    part-way); returns the rows so far and the first block's table."""
    import contextlib

    with contextlib.ExitStack() as stack:
        source = None
        if not local:
            import fsspec

            source = stack.enter_context(fsspec.open(url, "rb"))
        ways = batch_sources(Path(url), spec, columns, block_bytes=block_bytes, source=source)
        position = handle.tell() if handle is not None else 0
        for number, way in enumerate(ways, start=1):
            part_rows, part_scored, part_first = 0, dict.fromkeys(scored, 0), first
            try:
                for table, reading, _ in _scored_blocks(Path(url), spec, None, block_bytes=block_bytes,
                                                        columns=columns, way=way, start=start):
                    if handle is not None:
                        frame = scored_frame(table, ".csv")
                        handle.write(scored_csv(frame, header=part_first is None))
                    part_first = part_first or table
                    part_rows += reading.rows
                    for name, one in table.scales.items():
                        part_scored[name] = part_scored.get(name, 0) + one.n_scored
            except retry_errors() as error:
                if number == len(ways):
                    raise CannotStream.after(error) from None
                if handle is not None:  # the next way starts the partition again
                    handle.seek(position)
                    handle.truncate()
                continue
            for name, count in part_scored.items():
                scored[name] = scored.get(name, 0) + count
            return rows + part_rows, part_first
    return rows, first
