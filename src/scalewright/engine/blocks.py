"""A data file read block by block into one-byte answer codes, with what reading each block found.

CSV is parsed by pyarrow's streaming reader (blocks of bytes, several threads) with the item columns as
16-bit integers and each block converted by :func:`scalewright.read_codes.convert_codes`, the quick
route of the whole-file reader (where every answer is one digit, the item cells' bytes are first read
straight into codes: :func:`scalewright.read_codes.convert_digit_codes`). A block that route cannot
take (an answer text, a decimal, a number beyond 16 bits) restarts the file with the item columns as
text, converted by :func:`scalewright.data.convert_item`, the general route. Parquet is read a row
group batch at a time with its own types, by the general route. Whatever neither can read block by
block (see :class:`CannotStream`) is left to the whole-file reader, which names the problem.
"""
from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from functools import partial
from pathlib import Path
from typing import TYPE_CHECKING, Any, TypeVar

import numpy as np

from ..answer_codes import MISSING, ItemAnswers
from ..data import SHOW_FIRST, convert_item
from ..data_columns import ids_as_text
from ..data_file import delimited_header
from ..read_codes import (
    BLANK_TEXTS,
    convert_codes,
    convert_digit_codes,
    fits,
    holds_one_digit_cells,
    one_digit_format,
)
from ..text_cells import clear_missing_texts
from .id_hash import text_id_hashes
from .other_columns import ArrowColumns, count_missing_cells, is_text
from .parallel_csv import Retry, can_cut
from .reading import ReadingCounts

if TYPE_CHECKING:
    import pandas as pd

#: bytes of CSV text per parsed block (pyarrow's default). pyarrow's streaming reader parses blocks ahead
#: of the consumer, a bounded queue of them: its memory is this times the queue's length, so a small block
#: keeps the peak low (on 4,000,000 x 60: 180 MB with 1 MiB blocks, 320 MB with 4 MiB, 750 MB with 16 MiB)
BLOCK_BYTES = 1 << 20
#: rows per Parquet batch
BATCH_ROWS = 131072


T = TypeVar("T")

class CannotStream(Exception):
    """This file cannot be read block by block (the reason says why); the whole-file reader takes it."""

    @classmethod
    def after(cls, error: BaseException) -> CannotStream:
        """The reason a reading error gives: its first line, or its type when it has no message; bytes that
        are not UTF-8 in plain words (the whole-file reader then names the line and the first such byte)."""
        if isinstance(error, UnicodeDecodeError) or "invalid UTF8" in str(error):
            return cls("it holds bytes that are not UTF-8 text")
        return cls(str(error).splitlines()[0] if str(error) else type(error).__name__)


@dataclass(frozen=True, eq=False)
class Block:
    """One block of rows: item codes (n x k, items in scale-file order), the other columns needed, and
    what reading it found. ``columns`` holds the id, group and tallied columns as pandas Series."""

    codes: np.ndarray
    columns: Mapping[str, pd.Series]
    reading: ReadingCounts
    first_row: int
    #: the file's position in a dataset and its name (the place of a row is (part, row, file))
    part: int = 0
    file: str = ""

    @property
    def n(self) -> int:
        return int(self.codes.shape[0])


def _is_parquet(path: Path) -> bool:
    return path.suffix.lower() == ".parquet"


def streamable(path: Path) -> bool:
    return path.suffix.lower() in (".csv", ".txt", ".tsv", ".parquet")


def batch_sources(path: Path, spec: Any, columns: Sequence[str], *, block_bytes: int | None = None,
                  batch_rows: int | None = None, source: Any = None) -> list[Callable[[], Iterable[Any]]]:
    """Ways to read the file as Arrow record batches, quickest first. ``columns`` are the non-item columns
    wanted (id, groups, tallied).

    A way may fail part-way (:data:`RETRY_ERRORS`: a value that is not a 16-bit whole number, a value
    holding a line break that only a quote-aware parse reads safely); the reader then starts over with
    the next way. ``source`` is an open binary file to read instead of ``path`` (a Parquet file behind
    any fsspec URL); ``path`` still names it in messages. Raises :class:`CannotStream` for what only the
    whole-file reader can read.
    """
    block_bytes = block_bytes or BLOCK_BYTES
    batch_rows = batch_rows or BATCH_ROWS
    if not streamable(path):
        raise CannotStream(f"{path.suffix or 'no extension'} files are read whole")
    if any(spec.response_for(name).max - spec.response_for(name).min > 250 for name in spec.items):
        raise CannotStream("an answer range is too wide for one-byte codes")
    if _is_parquet(path):
        return [lambda: _parquet_batches(path, spec, columns, batch_rows=batch_rows, source=source)]
    sep, raw_names = delimited_header(path, "\t" if path.suffix.lower() == ".tsv" else None)
    stripped = [name.strip() for name in raw_names]
    missing = [name for name in [*spec.items, *columns] if name not in stripped]
    if missing:
        raise CannotStream(f"column {missing[0]!r} is absent")  # the whole-file reader names every one
    whole_numbers = all(fits(spec.response_for(name)) for name in spec.items)
    one_digit = all(one_digit_format(spec.response_for(name)) for name in spec.items)
    # the quick way (items as 16-bit integers) parses blocks side by side when the rows can be cut at line
    # feeds (engine/parallel_csv.py), else one block at a time; the text ways read one block at a time
    ways = [(True, False, can_cut(path))] if whole_numbers else []
    ways += [(False, False, False), (False, True, False)]
    return [partial(_csv_batches, path, sep, raw_names, spec.items, block_bytes=block_bytes, as_int16=as_int16,
                    quote_aware=quote_aware, parallel=parallel, digits=one_digit)
            for as_int16, quote_aware, parallel in ways]


def read_by_first_way(ways: Sequence[Callable[[], Iterable[Any]]],
                      attempt: Callable[[Callable[[], Iterable[Any]]], T]) -> T:
    """``attempt(way)`` with each way of reading the file in turn until one reads it: after an error of
    :func:`retry_errors` the next way starts the file again; after the last way's, the file cannot stream."""
    for number, way in enumerate(ways, start=1):
        try:
            return attempt(way)
        except retry_errors() as error:
            if number == len(ways):
                raise CannotStream.after(error) from None
    raise CannotStream("no way to read the file in blocks")  # unreachable: ways is never empty


def retry_errors() -> tuple[type[BaseException], ...]:
    """The errors after which the next way of reading is tried."""
    import pyarrow as pa

    return (Retry, pa.ArrowInvalid, pa.ArrowNotImplementedError, UnicodeDecodeError)


def _csv_batches(path: Path, sep: str, raw_names: Sequence[str], items: Sequence[str], *, block_bytes: int,
                 as_int16: bool, quote_aware: bool, parallel: bool = False, digits: bool = False) -> Iterable[Any]:
    """Arrow record batches of the file (item columns int16 or text, the rest text), each checked by
    :func:`_check_batch`. The parallel reader is handed back whole, so that :func:`in_file_order` can parse
    and work each block on one thread (:meth:`~scalewright.engine.parallel_csv.ParallelBlocks.in_order`).

    ``digits`` (every answer one digit): the parallel reader first parses each block with the item columns
    as bytes and keeps it when every item cell is one digit or blank (read as its 16-bit parse would read
    it, see :func:`~scalewright.read_codes.convert_digit_codes`); from the first block holding another
    cell (a code 99, a stray 10, a text), blocks are parsed with the items as 16-bit numbers."""
    import pyarrow as pa
    import pyarrow.csv as pacsv

    wanted = set(items)
    types = {raw: (pa.int16() if as_int16 and raw.strip() in wanted else pa.string()) for raw in raw_names}
    parse_options = pacsv.ParseOptions(delimiter=sep, ignore_empty_lines=False, newlines_in_values=quote_aware)
    convert_options = pacsv.ConvertOptions(column_types=types, null_values=list(BLANK_TEXTS), strings_can_be_null=True)
    check = partial(_check_batch, quote_aware=quote_aware)
    if parallel:
        from ..concurrency import worker_count
        from .parallel_csv import ParallelBlocks

        quicker = None
        if as_int16 and digits:
            as_bytes = {raw: pa.binary() if column_type == pa.int16() else column_type
                        for raw, column_type in types.items()}
            quicker = (pacsv.ConvertOptions(column_types=as_bytes, null_values=list(BLANK_TEXTS),
                                            strings_can_be_null=True), _one_digit_items)
        # a block_size given on the command line is kept as the streaming reader's; the parallel reader
        # takes its own larger blocks (their count in memory is bounded by the threads, not by a queue)
        return ParallelBlocks(path, raw_names, parse_options=parse_options, convert_options=convert_options,
                              workers=worker_count(), block_bytes=block_bytes if block_bytes != BLOCK_BYTES else None,
                              check=check, quicker=quicker)
    reader = pacsv.open_csv(path, read_options=pacsv.ReadOptions(block_size=block_bytes, use_threads=True),
                            parse_options=parse_options, convert_options=convert_options)
    if len(reader.schema.names) != len(raw_names):
        raise CannotStream("the parser saw the header differently")
    return _checked(reader, check)


def _one_digit_items(table: Any) -> bool:
    """Whether every item column of a table parsed with the items as bytes holds one-digit cells only."""
    import pyarrow as pa

    return all(holds_one_digit_cells(chunk)
               for column, column_type in zip(table.columns, table.schema.types, strict=True)
               if column_type == pa.binary() for chunk in column.chunks)


def _checked(reader: Iterable[Any], check: Callable[[Any], None]) -> Iterator[Any]:
    for batch in reader:
        check(batch)
        yield batch


def _check_batch(batch: Any, *, quote_aware: bool) -> None:
    """Refuse a batch holding a row blank in every column (an empty line: the whole-file reader names it),
    or, unless the parse was quote-aware, a text holding a line break (:class:`Retry`)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    if batch.num_rows and all(column.null_count for column in batch.columns):
        blank = pc.and_(*[pc.is_null(c) for c in batch.columns[:2]]) if batch.num_columns > 1 else \
            pc.is_null(batch.column(0))
        for column in batch.columns[2:]:
            blank = pc.and_(blank, pc.is_null(column))
        if pc.any(blank).as_py():
            raise CannotStream("a row is blank in every column (an empty line?)")
    if not quote_aware:
        texts = [c for c, t in zip(batch.columns, batch.schema.types, strict=True) if pa.types.is_string(t)]
        if any(pc.any(pc.match_substring(c, "\n")).as_py() is True for c in texts):
            raise Retry()  # a value holds a line break: only a quote-aware parse is safe


# ---------------------------------------------------------------------------------------------------- Parquet


def _parquet_batches(path: Path, spec: Any, columns: Sequence[str], *, batch_rows: int,
                     source: Any) -> Iterator[Any]:
    import pyarrow.parquet as pq

    try:
        handle = pq.ParquetFile(source if source is not None else path)
    except Exception as error:  # pyarrow raises its own types for broken files
        raise CannotStream(str(error)) from None
    names = handle.schema_arrow.names
    stripped = {name.strip(): name for name in names}
    missing = [name for name in [*spec.items, *columns] if name not in stripped]
    if missing:
        raise CannotStream(f"column {missing[0]!r} is absent")
    yield from handle.iter_batches(batch_size=batch_rows, columns=[stripped[n] for n in dict.fromkeys([*spec.items,
                                                                                                    *columns])])


# ---------------------------------------------------------------------------------------------------- conversion


def convert_batch(batch: Any, spec: Any, columns: Sequence[str], *, first_row: int, file: str = "",
                  part: int = 0) -> Block:
    """One Arrow record batch as a :class:`Block` (item codes, wanted columns, reading counts).

    ``first_row`` is the row number of the batch's first row in ``file``, the ``part``-th file of a dataset
    (0 for a single file): what reading finds is placed by (part, row, file), see
    :class:`~scalewright.engine.reading.ReadingCounts`.
    """
    import pyarrow as pa

    by_name = {name.strip(): position for position, name in enumerate(batch.schema.names)}
    items = list(spec.items)
    n = batch.num_rows
    codes = np.empty((n, len(items)), dtype=np.uint8, order="F")
    missing_codes: dict[str, int] = {}
    blanks: dict[str, int] = {}
    texts: dict[str, int] = {}
    refused: dict[str, int] = {}
    refused_first: dict[str, tuple] = {}
    missing_texts: dict[str, dict[str, int]] = {}
    converted: Any  # ConvertedCodes of the number routes, or the general route's conversion
    as_floats: list[int] = []
    values = None
    for j, name in enumerate(items):
        column = batch.column(by_name[name])
        fmt = spec.response_for(name)
        if column.type == pa.int16():
            converted = convert_codes(column, fmt, out=codes[:, j])
            raw = converted.raw
        elif column.type == pa.binary():  # one-digit cells (see _csv_batches)
            converted = convert_digit_codes(column, fmt, out=codes[:, j])
            raw = converted.raw
        else:
            if values is None:
                values = np.empty((n, len(items)), dtype=np.float64, order="F")
            series = column.to_pandas()
            converted = convert_item(series, fmt, out=values[:, j])
            raw = series
            as_floats.append(j)
        counted: tuple[tuple[dict[str, Any], Any], ...] = (
            (missing_codes, converted.missing_codes), (blanks, converted.blanks), (texts, converted.texts),
            (missing_texts, getattr(converted, "missing_texts", None)))
        for counts, value in counted:
            if value:
                counts[name] = dict(value) if isinstance(value, dict) else value
        bad = np.flatnonzero(converted.bad) if converted.bad.size else np.zeros(0, dtype=np.int64)
        if bad.size:
            refused[name] = int(bad.size)
            shown = bad[:SHOW_FIRST]
            as_read = raw.iloc[shown] if hasattr(raw, "iloc") else raw[shown]
            refused_first[name] = tuple(((part, first_row + int(row), file), _plain(value))
                                        for row, value in zip(shown, as_read, strict=True))
    if as_floats and values is not None:
        float_answers = ItemAnswers.from_values(values[:, as_floats], [spec.response_for(items[j]).min for j in as_floats],
                                                [spec.response_for(items[j]).max for j in as_floats])
        float_codes = float_answers.codes_of(range(len(as_floats)))
        if float_codes is None:
            raise CannotStream("an answer is not a whole answer level (it needs the float route)")
        codes[:, as_floats] = float_codes
    id_hashes: tuple[np.ndarray, ...] = ()
    id_empty: tuple = ()
    unknown: dict[str, tuple] = {}
    # "no answer" texts of every other column read (a CSV file's all, a Parquet file's wanted ones) read as
    # missing and counted, blanks of the group columns counted, as the whole-file reader does
    # (data.read_responses); the columns themselves become pandas Series only when a command reads them
    item_set = set(items)
    others = {name: batch.column(position) for name, position in by_name.items() if name not in item_set}
    listed = tuple(getattr(spec, "missing_texts", ()) or ())
    skip = [spec.id_column] if spec.id_column else []
    wanted = ArrowColumns({name: others[name] for name in dict.fromkeys(columns)}, listed, keep_as_read=skip)
    if all(is_text(array) for array in others.values()):
        found = count_missing_cells(others, listed, skip=skip, count_blank=tuple(spec.groups))
    else:  # numbers or dates beside the texts (Parquet): the whole-file reader's own function
        import pandas as pd

        frame, found = clear_missing_texts(pd.DataFrame({name: array.to_pandas() for name, array in others.items()}),
                                           listed, skip=skip, count_blank=tuple(spec.groups))
        wanted = ArrowColumns({}, listed, ready={name: frame[name] for name in dict.fromkeys(columns)})
    missing_texts.update({column: dict(counts) for column, counts in found.texts.items()})
    blanks.update(found.blank)
    for name in dict.fromkeys(columns):
        if name == spec.id_column:
            hashes, id_empty = _id_check(partial(wanted.__getitem__, name), (part, first_row, file),
                                         arrow=batch.column(by_name[name]))
            hashes = np.sort(hashes)  # here, beside the other blocks' work: the duplicate check merges sorted runs
            id_hashes = (hashes,)
        if name in spec.group_levels:
            series, found_levels = _known_levels(wanted[name], spec.group_levels[name], (part, first_row, file),
                                                 codes=getattr(spec, "group_codes", {}).get(name))
            if found_levels:
                unknown[name] = found_levels
            wanted.keep(name, series)
    reading = ReadingCounts(rows=n, missing_codes=missing_codes, blanks=blanks, texts=texts, refused=refused,
                            refused_first=refused_first, id_hashes=id_hashes, id_empty=id_empty,
                            unknown_levels=unknown, missing_texts=missing_texts, file_columns=tuple(by_name))
    return Block(codes=codes, columns=wanted, reading=reading, first_row=first_row, part=part, file=file)


def _plain(value: Any) -> Any:
    """A numpy scalar as a plain Python value (summaries travel between processes)."""
    return value.item() if isinstance(value, np.generic) else value


def _at(start: tuple, offset: int) -> tuple:
    """The place ``offset`` rows below ``start`` (part, row, file)."""
    return (start[0], start[1] + offset, start[2])


def _id_check(read: Callable[[], pd.Series], start: tuple, *, arrow: Any = None) -> tuple[np.ndarray, tuple]:
    """The ids' hashes and the first empty id with their count; ids read as text are hashed from Arrow,
    others from the column as pandas reads it (``read()``)."""
    fast = text_id_hashes(arrow) if arrow is not None else None
    if fast is not None:
        hashes, empty = fast
        found = ((_at(start, int(np.flatnonzero(empty)[0])), int(empty.sum())),) if empty.any() else ()
        return hashes, found
    import pandas as pd

    raw = read()
    empty = raw.isna().to_numpy().copy()
    if raw.dtype == object or pd.api.types.is_string_dtype(raw.dtype):
        empty |= (raw.astype("string").str.strip() == "").fillna(True).to_numpy()
    found = ()
    if empty.any():
        found = ((_at(start, int(np.flatnonzero(empty)[0])), int(empty.sum())),)
    ids = ids_as_text(raw[~empty]) if not empty.all() else pd.Series([], dtype=object)
    hashes = pd.util.hash_pandas_object(ids.astype(str), index=False).to_numpy()
    return hashes, found


def _known_levels(values: pd.Series, order: Sequence[str], start: tuple, *,
                  codes: Any = None) -> tuple[pd.Series, tuple]:
    """The group column with levels the scale file does not list made missing, and the first such one
    (codes named and numbers matched first, as the whole-file reader does:
    :func:`scalewright.data_columns.named_levels`)."""
    from ..data_columns import named_levels

    raw = values.astype("string")
    text = raw.str.strip()
    text = named_levels(text.mask(text == ""), order, codes)
    unknown = (text.notna() & ~text.isin(order)).to_numpy(dtype=bool)
    found: tuple = ()
    if unknown.any():
        first = int(np.flatnonzero(unknown)[0])
        found = (_at(start, first), str(raw.iloc[first]), int(unknown.sum()))
    return text.where(~unknown), found


__all__ = ["BATCH_ROWS", "BLOCK_BYTES", "Block", "CannotStream", "MISSING", "Retry", "batch_sources", "convert_batch",
           "retry_errors", "streamable"]
