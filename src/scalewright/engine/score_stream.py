"""The scored file written block by block: each block of the data file is read, scored and appended.

Memory holds a few blocks whatever the number of rows. Each block is scored by
:func:`scalewright.scoring.score_scales`, the code of the whole-file route, on the block's answers (the
same float64 values: whole answers, keyed as ``low + high - x``), so every score, POMP value and answered
count is the whole-file route's to the last bit; the CSV rows are the text ``pandas`` writes for them.
What reading found is merged over the blocks and checked at the end, exactly as the whole-file reader
checks it: a refused value (without ``--lenient``), an empty id or a group level the scale file does not
list refuses the run, and the file being written is removed (written to a temporary file and renamed only
when complete, as every output). Standard scores in the sample (``z``) need the sample's mean and SD
first: a first pass gives them (:mod:`~scalewright.engine.score_z`).

With survey weights each block's weights are read by the whole-file rules
(:func:`~scalewright.summaries.weighted.block_weights`) and each scale's scores summed with them exactly
(:class:`~scalewright.summaries.exact_scores.ExactWeightedScores`): the weighted mean and sd of the summary,
and of weighted z scores, are the whole-file route's to the bit; a refused weight is named by its global
row and refuses the run (or, with ``--lenient``, is counted) after the last block, as reading errors are.
"""
from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from ..answer_codes import ItemAnswers
from ..data_columns import ids_as_text
from ..data_file import first_row_number
from ..files import write_atomic_with
from ..scored_csv import scored_csv
from ..scoring import ScaleScores, ScoreTable, score_scales, scored_frame
from ..summaries.exact_scores import ExactWeightedScores
from ..summaries.weighted import WeightReading, block_weights
from .block_pool import in_file_order
from .blocks import CannotStream, batch_sources, convert_batch, read_by_first_way
from .id_spill import IdHashSpill
from .reading import ReadingCounts, ReadingOutcome, check_reading

#: scored files that can be written a block at a time
STREAMED_SCORE_FILES = (".csv", ".parquet")


class _BlockRows:
    """One block as :func:`~scalewright.scoring.score_scales` reads responses: ``n``, ``ids``, ``matrix``."""

    def __init__(self, block: Any, spec: Any) -> None:
        self.n = block.n
        self._index = {name: position for position, name in enumerate(spec.items)}
        formats = [spec.response_for(name) for name in spec.items]
        self._answers = ItemAnswers.from_codes(block.codes, [f.min for f in formats], [f.max for f in formats])
        if spec.id_column:
            raw = block.columns[spec.id_column]
            # an empty id refuses the whole run when reading is checked; until then it is written as text
            self.ids = ids_as_text(raw.fillna("")).rename(spec.id_column).reset_index(drop=True)
        else:  # as the whole-file reader numbers rows without an id column
            self.ids = pd.Series(np.arange(block.first_row, block.first_row + block.n).astype(str), name="row")

    def matrix(self, names: Iterable[str]) -> np.ndarray:
        return self._answers.values[:, [self._index[name] for name in names]]


@dataclass(frozen=True, eq=False)
class WeighedScores:
    """What the survey weights of some rows gave: what reading them found and, per scale, the exact
    weighted sums of its scores."""

    reading: WeightReading
    scales: dict[str, ExactWeightedScores]

    @classmethod
    def of_block(cls, block: Any, column: str, table: ScoreTable) -> WeighedScores:
        weights, reading = block_weights(block.columns[column], (block.part, block.first_row, block.file))
        return cls(reading=reading, scales={name: ExactWeightedScores.from_values(one.scores, weights)
                                            for name, one in table.scales.items()})

    def merge(self, other: WeighedScores) -> WeighedScores:
        return WeighedScores(reading=self.reading.merge(other.reading),
                             scales={name: sums.merge(other.scales[name]) for name, sums in self.scales.items()})


@dataclass(frozen=True)
class StreamedScores:
    """What was written: rows, per scale the counts of the JSON summary (``ScoreTable.to_dict``), the reading;
    with survey weights, per scale the exact weighted sums of its scores."""

    table: ScoreTable
    outcome: ReadingOutcome
    weighted: dict[str, ExactWeightedScores] | None = None

    @property
    def n(self) -> int:
        return self.outcome.n


def _scored_blocks(path: Path, spec: Any, standardize: str | None, *, block_bytes: int | None,
                   columns: tuple[str, ...], way: Any, start: int | None = None, z_bases: dict | None = None,
                   weight: str | None = None) -> Iterator[tuple[ScoreTable, ReadingCounts, WeighedScores | None]]:
    """Each block scored (in file order) with what reading it found and, with a ``weight`` column (one of
    ``columns``), its weighed scores; blocks are converted on a pool of threads.
    ``start``: the row number of the first row (default: the file's own first data row)."""
    start = first_row_number(path) if start is None else start

    def score(batch: Any, first: int) -> tuple[ScoreTable, ReadingCounts, WeighedScores | None]:
        block = convert_batch(batch, spec, columns, first_row=first)
        table = score_scales(_BlockRows(block, spec), spec, standardize=standardize, z_bases=z_bases)
        return table, block.reading, None if weight is None else WeighedScores.of_block(block, weight, table)

    # scoring does no matrix products, so the pool's one BLAS thread per worker costs nothing here
    yield from in_file_order(way(), score, start)


def scored_pass(path: Path, spec: Any, standardize: str | None, take: Callable[[ScoreTable], None], *,
                block_bytes: int | None, columns: tuple[str, ...], way: Any, z_bases: dict | None = None,
                weight: str | None = None) -> tuple[ReadingCounts, WeighedScores | None]:
    """One pass over the file's scored blocks: ``take(table)`` of each in file order, and what reading found,
    merged (the ids checked on disk, not held: :mod:`~scalewright.engine.id_spill`); with a ``weight``
    column (one of ``columns``) the weighed scores, merged. Raises :class:`CannotStream` for a file without
    rows or with an id twice (the whole-file reader names them)."""
    counts: ReadingCounts | None = None
    weighed: WeighedScores | None = None
    with IdHashSpill() as ids:
        for table, reading, found in _scored_blocks(path, spec, standardize, block_bytes=block_bytes,
                                                    columns=columns, way=way, z_bases=z_bases, weight=weight):
            take(table)
            reading = ids.take_ids(reading)
            counts = reading if counts is None else counts.merge(reading)
            if found is not None:
                weighed = found if weighed is None else weighed.merge(found)
        duplicates = ids.has_duplicates()
    if counts is None or counts.rows == 0:
        raise CannotStream("no rows")  # the whole-file reader says so
    if duplicates:
        raise CannotStream("an id appears twice")  # the whole-file reader names it and its rows
    return counts, weighed


def weight_columns(spec: Any, weight: str | None) -> tuple[str, ...]:
    """The columns a scored pass reads beside the items: the id column and the survey weight column. Raises
    :class:`CannotStream` when the weight column is an item (the whole-file reader refuses it)."""
    if weight is not None and weight in spec.items:
        raise CannotStream(f"the weight column {weight!r} is an item")
    return tuple(dict.fromkeys([*([spec.id_column] if spec.id_column else []), *([weight] if weight else [])]))


class _Appender:
    """Appends scored blocks to a CSV or Parquet file (header or schema from the first block)."""

    def __init__(self, target: Path, suffix: str) -> None:
        self.target, self.suffix = target, suffix
        self._handle: Any = None
        self._writer: Any = None

    def append(self, table: ScoreTable) -> None:
        frame = scored_frame(table, self.suffix)
        if self.suffix == ".csv":
            if self._handle is None:
                self._handle = open(self.target, "w", encoding="utf-8", newline="")  # noqa: SIM115 (closed in close())
                self._handle.write(scored_csv(frame))
            else:
                self._handle.write(scored_csv(frame, header=False))
            return
        import pyarrow as pa
        import pyarrow.parquet as pq

        arrow = pa.Table.from_pandas(frame, preserve_index=False)
        if self._writer is None:
            self._writer = pq.ParquetWriter(self.target, arrow.schema)
        self._writer.write_table(arrow.cast(self._writer.schema))

    def close(self) -> None:
        if self._handle is not None:
            self._handle.close()
        if self._writer is not None:
            self._writer.close()


def _summary_table(first: ScoreTable, scored: dict[str, int], n: int, standardize: str | None,
                   z_bases: dict | None = None) -> ScoreTable:
    """The JSON summary of every block: per scale its counts (the rows themselves were written out) and,
    for z scores, the mean and SD they were taken from."""
    scales = {name: ScaleScores(scale=name, scores=np.empty(0), answered=np.empty(0, dtype=np.int64),
                                required=one.required, k=one.k, method=one.method, n_scored=scored[name],
                                n_unscored=n - scored[name],
                                standardized_basis=None if z_bases is None else z_bases[name])
              for name, one in first.scales.items()}
    return ScoreTable(ids=pd.Series([], dtype=object), id_name=first.id_name, scales=scales, standardize=standardize)


def stream_scores(path: str | Path, spec: Any, target: str | Path | None, *, standardize: str | None = None,
                  lenient: bool = False, block_bytes: int | None = None, inputs: Iterable[Any] = (),
                  z_bases: dict | None = None, weight: str | None = None,
                  weights_read: Callable[[WeightReading], None] | None = None) -> StreamedScores:
    """Score the file block by block; with ``target`` (``.csv`` or ``.parquet``) append each block to it.
    ``z_bases``: with ``standardize="z"``, per scale the sample's mean and SD from a first pass
    (:func:`~scalewright.engine.score_z.z_bases_of_file`). ``weight`` names the survey weight column: each
    scale's scores are then summed with the weights (``StreamedScores.weighted``), and ``weights_read`` is
    given what reading the weights found once reading is checked, before the target is put in place (it
    may refuse the run as the whole-file reader does).

    Raises :class:`~scalewright.engine.blocks.CannotStream` when the file (or the option) needs the
    whole-file route; the target is then untouched. Reading errors are raised as the whole-file reader
    raises them, after the last block, and the target is untouched too.
    """
    path = Path(path)
    if standardize == "z" and z_bases is None:
        raise CannotStream("standard scores need the sample's mean and SD first")
    suffix = Path(target).suffix.lower() if target is not None else ""
    if target is not None and suffix not in STREAMED_SCORE_FILES:
        raise CannotStream(f"a {suffix or 'scored'} file is written whole")
    columns = weight_columns(spec, weight)
    ways = batch_sources(path, spec, columns, block_bytes=block_bytes)
    found: dict[str, Any] = {}

    def write_all(temp: Path | None) -> None:
        def attempt(way: Any) -> None:
            appender = _Appender(temp, suffix) if temp is not None else None
            first: list[ScoreTable] = []
            scored: dict[str, int] = {}

            def take(table: ScoreTable) -> None:
                if appender is not None:
                    appender.append(table)
                first[:] = first or [table]
                for name, one in table.scales.items():
                    scored[name] = scored.get(name, 0) + one.n_scored

            try:
                counts, weighed = scored_pass(path, spec, standardize, take, block_bytes=block_bytes,
                                              columns=columns, way=way, z_bases=z_bases, weight=weight)
            finally:
                if appender is not None:
                    appender.close()
            found["outcome"] = check_reading(str(path), counts, spec, lenient=lenient)
            if weighed is not None and weights_read is not None:  # as the whole-file reader: after the answers
                weights_read(weighed.reading)
            found["weighted"] = None if weighed is None else weighed.scales
            found["table"] = _summary_table(first[0], scored, counts.rows, standardize, z_bases)

        read_by_first_way(ways, attempt)

    if target is None:
        write_all(None)
    else:
        write_atomic_with(target, write_all, inputs=inputs)
    return StreamedScores(table=found["table"], outcome=found["outcome"], weighted=found["weighted"])
