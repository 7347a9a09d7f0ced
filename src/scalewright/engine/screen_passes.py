"""What the screen's passes over a file read in blocks share: how a block's codes become the screen's
matrices (:class:`Layout`), the sums taken from exact integer cross-products, and the file read the same
way on every pass (:class:`Passes`). See :mod:`.screen_stream`."""
from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Protocol

import numpy as np
import pandas as pd

from ..answer_codes import MISSING, ItemAnswers
from ..data_columns import ids_as_text
from ..data_file import first_row_number
from ..stats.coded import covariance_from_pairwise_gram
from .block_pool import in_file_order
from .blocks import Block, CannotStream, batch_sources, convert_batch, retry_errors


@dataclass(frozen=True)
class Layout:
    """How a block's codes (items in scale-file order) become the screen's matrices."""

    order: np.ndarray             # the items in questionnaire (file) order
    lows: np.ndarray
    highs: np.ndarray
    keyed: np.ndarray             # positions of every scale's items, scale after scale
    reversed: np.ndarray
    spans: np.ndarray
    keyed_lows: np.ndarray
    scales: dict[str, slice]

    @classmethod
    def of(cls, spec: Any, file_columns: tuple[str, ...]) -> Layout:
        items = list(spec.items)
        rank = {name: position for position, name in enumerate(file_columns)}
        order = sorted(range(len(items)), key=lambda j: rank.get(items[j], len(rank)))
        index = {name: j for j, name in enumerate(items)}
        keyed, flipped, spans, lows, scales, at = [], [], [], [], {}, 0
        for name, scale in spec.scales.items():
            for item in scale.items:
                keyed.append(index[item])
                flipped.append(scale.is_reversed(item))
                spans.append(int(scale.response.max - scale.response.min))
                lows.append(int(scale.response.min))
            scales[name] = slice(at, at + len(scale.items))
            at += len(scale.items)
        formats = [spec.response_for(name) for name in items]
        return cls(order=np.array(order, dtype=np.intp), lows=np.array([f.min for f in formats]),
                   highs=np.array([f.max for f in formats]), keyed=np.array(keyed, dtype=np.intp),
                   reversed=np.array(flipped, dtype=bool), spans=np.array(spans, dtype=np.int64),
                   keyed_lows=np.array(lows, dtype=np.int64), scales=scales)

    def keyed_codes(self, codes: np.ndarray) -> np.ndarray:
        """The keyed items' codes (``span - code`` for a reversed item; 255 stays missing)."""
        out = np.asarray(codes[:, self.keyed], order="F").copy()
        for j in np.flatnonzero(self.reversed):
            column = out[:, j]
            answered = column != MISSING
            column[answered] = self.spans[j] - column[answered]
        return out

    def matrices(self, codes: np.ndarray) -> tuple[np.ndarray, dict[str, np.ndarray], np.ndarray]:
        """(answers in questionnaire order, keyed answers per scale, keyed codes), as floats with NaN."""
        values = ItemAnswers.from_codes(codes, self.lows, self.highs).values
        kc = self.keyed_codes(codes)
        keyed = np.where(kc == MISSING, np.nan, kc + self.keyed_lows.astype(float))
        return values[:, self.order], {name: keyed[:, part] for name, part in self.scales.items()}, kc


def block_durations(block: Block, column: str | None) -> tuple[np.ndarray | None, tuple | None]:
    """The block's completion times and its first cell that is not a number ((row, value) or None)."""
    if column is None:
        return None, None
    raw = block.columns[column]
    values = pd.to_numeric(raw, errors="coerce")
    bad = (values.isna() & raw.notna()).to_numpy()
    first = None
    if bad.any():
        at = int(np.flatnonzero(bad)[0])
        first = (block.first_row + at, raw.iloc[at])
    return values.to_numpy(dtype=float, na_value=np.nan), first


def block_ids(block: Block, spec: Any, *, shift: int = 0) -> list[str]:
    """The block's ids, or without an id column its row numbers (plus ``shift``: a partition's rows numbered
    through the dataset)."""
    if spec.id_column:
        return [str(i) for i in ids_as_text(block.columns[spec.id_column].fillna(""))]
    first = block.first_row + shift
    return np.arange(first, first + block.n).astype(str).tolist()


def median_of_counts(counts: np.ndarray) -> float:
    """``np.median`` of the values 0, 1, ... taken ``counts`` times each."""
    total = int(counts.sum())
    below = np.cumsum(counts)
    low = int(np.searchsorted(below, (total - 1) // 2, side="right"))
    high = int(np.searchsorted(below, total // 2, side="right"))
    return float(np.mean(np.array([low, high], dtype=float)))


def centre_of(gram: np.ndarray, layout: Layout, *, n_rows: int, n_basis: int) -> Any:
    from ..stats.mahalanobis import mahalanobis_centre

    k = layout.keyed.size
    cov = covariance_from_pairwise_gram(gram, n_rows=n_rows, n_complete=0, low=0, high=0,
                                        reversed_mask=np.zeros(k, dtype=bool)).cov
    totals, counts = column_totals(gram, layout)
    with np.errstate(invalid="ignore", divide="ignore"):
        means = np.array([t / c if c else math.nan for t, c in zip(totals.tolist(), counts.tolist(), strict=True)])
    return mahalanobis_centre(means, cov, n_rows=n_rows, n_basis=n_basis), cov, means, counts


def column_totals(gram: np.ndarray, layout: Layout) -> tuple[np.ndarray, np.ndarray]:
    """Each keyed column's sum of answers (exact: count x low + sum of codes) and its number of answers."""
    k = layout.keyed.size
    counts = np.diag(gram[:k, :k]).astype(np.int64)
    sums = np.diag(gram[k:, :k]).astype(np.int64)
    totals = np.array([float(int(c) * int(low) + int(s)) for c, low, s in
                       zip(counts.tolist(), layout.keyed_lows.tolist(), sums.tolist(), strict=True)])
    return totals, counts


class Passes:
    """The file read block by block, the same way on every pass (converted on a pool of threads).

    ``source``, ``file`` and ``part``: an open binary file to read instead of ``path`` (a Parquet file
    behind any fsspec URL), and the file's name and position when it is one partition of a dataset (the
    place of what reading finds, see :func:`~scalewright.engine.blocks.convert_batch`).
    """

    def __init__(self, path: Path, spec: Any, columns: tuple[str, ...], block_bytes: int | None, *,
                 source: Any = None, file: str = "", part: int = 0) -> None:
        self.path, self.spec, self.columns, self.file, self.part = path, spec, columns, file, part
        self.ways = batch_sources(path, spec, columns, block_bytes=block_bytes, source=source)
        self.way: Callable[[], Iterable[Any]] | None = None

    def fold(self, work: Callable[[Block], Any], fresh: Callable[[], Collector]) -> Any:
        """``fresh()`` given (block, work(block)) of every block in file order, and returned. The first pass
        tries each way of reading in turn; a way that fails part-way starts again from the file's first
        block with a new collector (the one that saw part of the file is closed), so no block counts twice."""
        ways = self.ways if self.way is None else [self.way]
        for number, way in enumerate(ways, start=1):
            collector = fresh()
            try:
                for block, found in self._blocks(way, work):
                    collector.add(block, found)
                self.way = way
                return collector
            except retry_errors() as error:
                collector.close()
                if self.way is not None or number == len(ways):
                    raise CannotStream.after(error) from None
            except BaseException:
                collector.close()
                raise
        raise CannotStream("no way to read the file in blocks")  # unreachable: ways is never empty

    def _blocks(self, way: Callable[[], Iterable[Any]], work: Callable[[Block], Any]) -> Iterator[tuple[Block, Any]]:
        def one(batch: Any, first: int) -> tuple[Block, Any]:
            block = convert_batch(batch, self.spec, self.columns, first_row=first, file=self.file, part=self.part)
            return block, work(block)

        yield from in_file_order(way(), one, first_row_number(self.path))


class Collector(Protocol):
    """What :meth:`Passes.fold` hands each block's result to."""

    def add(self, block: Block, found: Any) -> None: ...

    def close(self) -> None: ...


class Folded:
    """A :class:`Collector` merging each block's sums (a ``merge`` method, in file order) into one."""

    def __init__(self, start: Any = None) -> None:
        self.sums = start

    def add(self, block: Block, found: Any) -> None:
        self.sums = found if self.sums is None else self.sums.merge(found)

    def close(self) -> None:
        self.sums = None
