"""The quick way in for large files: item columns parsed as whole numbers, straight into one-byte codes.

Most data files hold answers as codes. Parsing those columns as 16-bit integers (rather than letting the
parser guess a type and converting its guess to float64) and turning them into one-byte codes through a
lookup table takes a fraction of the general route's time and memory. Whatever this route cannot take
(an answer text, a decimal, a broken row, bytes that are not UTF-8) sends the file down the general route
in :mod:`scalewright.data`, which reads everything and names every problem.
"""
from __future__ import annotations

import functools
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .answer_codes import MAX_SPAN, MISSING
from .arrow_numpy import validity
from .errors import UsageError
from .row_numbers import empty_lines, numbers_of_kept_rows
from .spec_model import ResponseFormat

#: the only text the parser reads as blank: any other text ("None", "NA", "-") is data, read as "no answer"
#: only when the scale file lists it (``missing_texts``), so an answer labelled "None" is never lost
BLANK_TEXTS = ("",)
NOT_AN_ANSWER = 254   # a number that is neither an answer nor a "no answer" code
NO_ANSWER_CODE = 253  # one of the format's "no answer" codes
ASCII_DIGITS = (0x30, 0x39)  # the bytes of "0" and "9"
INT16 = (-(2**15), 2**15 - 1)
PARSE_BLOCK_BYTES = 1 << 20  # pyarrow's default block size: a smaller file is parsed as one block
#: block sizes grow by this factor when a record (a long free-text answer, a wide header) spans blocks
BLOCK_GROWTH = 8


def fits(fmt: ResponseFormat) -> bool:
    """Whether answers of this format can be held as one-byte codes read from 16-bit integers."""
    return fmt.max - fmt.min <= MAX_SPAN and INT16[0] <= fmt.min and fmt.max <= INT16[1]


def read_whole_number_table(path: Path, sep: str, raw_names: Sequence[str], items: Sequence[str],
                            text_columns: Sequence[str] = ()):
    """The file as an Arrow table with the item columns as int16 and the spreadsheet row number of each
    row (None when no empty line shifts them), or None if this route cannot read the file.

    ``raw_names`` is the header as written; ``items`` the (stripped) names of the item columns;
    ``text_columns`` (stripped names) are read as text, whatever they hold (ids: ``00017`` stays ``00017``).
    """
    import pyarrow as pa

    wanted = set(items)
    types = {raw: pa.int16() for raw in raw_names if raw.strip() in wanted}
    if len(types) < len(wanted):
        return None  # a column is absent: the general route names it
    types.update({raw: pa.string() for raw in raw_names if raw.strip() in set(text_columns)})
    try:
        table = parse_delimited(path, sep, column_types=types)
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError, UnicodeDecodeError, RecordTooLong):
        return None
    if any(pa.types.is_binary(t) or pa.types.is_large_binary(t) for t in table.schema.types):
        return None  # bytes that are not UTF-8: the general route names the first
    typed = {name.strip() for name, column_type in zip(table.column_names, table.schema.types, strict=True)
             if column_type == pa.int16()}
    if not wanted <= typed or len(table.column_names) != len(raw_names):
        return None  # pyarrow saw the header differently: leave the file to the general route
    kept = without_empty_lines(table, path, sep)
    if kept is None or kept[0].num_rows == 0:
        return None  # empty lines not told apart, or no rows: the general route deals with both
    return kept


def without_empty_lines(table, path: Path, sep: str):
    """(the table without the records that were empty lines, the spreadsheet numbers of the rest or None
    if none was), or None when empty lines cannot be told from rows of empty cells."""
    from functools import reduce

    import pyarrow as pa
    import pyarrow.compute as pc

    if table.num_rows == 0 or not all(column.null_count for column in table.columns):
        return table, None  # some column has a value in every row: no row is all blank
    all_blank = reduce(pc.and_, (pc.is_null(column) for column in table.columns))
    empty = empty_lines(path, sep, all_blank.to_numpy(zero_copy_only=False))
    if empty is None:
        return None
    if not empty.any():
        return table, None
    return table.filter(pa.array(~empty)), numbers_of_kept_rows(empty)


class RecordTooLong(Exception):
    """A record of the file is longer than :data:`scalewright.limits.MAX_RECORD_BYTES`."""


def parse_delimited(path: Path, sep: str, *, column_types: dict | None = None, keep_empty_lines: bool = True):
    """pyarrow's parse of a delimited file: only empty cells blank, empty lines kept (see row_numbers).

    The fast parse cuts the file into blocks at line breaks without looking at quotes, so a quoted value
    that holds a line break (a free-text comment) can fall across two blocks and break the parse, or in
    rare cases read rows wrongly. A file that fails, or that is longer than a block and has such values,
    is parsed again, quote-aware (about twice as slow). A record longer than a block (a very long answer,
    a header of many thousand names) is parsed again with blocks :data:`BLOCK_GROWTH` times larger, up to
    :data:`scalewright.limits.MAX_RECORD_BYTES`; a longer one raises :class:`RecordTooLong`.
    """
    import pyarrow as pa
    import pyarrow.csv as pacsv

    from . import limits

    def parse(quote_aware: bool, block: int):
        return pacsv.read_csv(path, read_options=pacsv.ReadOptions(block_size=block),
                              parse_options=pacsv.ParseOptions(delimiter=sep,
                                                               ignore_empty_lines=not keep_empty_lines,
                                                               newlines_in_values=quote_aware),
                              convert_options=pacsv.ConvertOptions(column_types=column_types or {},
                                                                   null_values=list(BLANK_TEXTS),
                                                                   strings_can_be_null=True))

    def parse_growing(quote_aware: bool, block: int):
        while True:
            try:
                return parse(quote_aware, block), block
            except pa.ArrowInvalid as error:
                if not _spans_blocks(error) or block >= path.stat().st_size + 1:
                    raise
                if block >= limits.MAX_RECORD_BYTES:
                    raise RecordTooLong() from None
                block = min(block * BLOCK_GROWTH, limits.MAX_RECORD_BYTES)

    size = path.stat().st_size
    try:
        table, block = parse_growing(False, PARSE_BLOCK_BYTES)
    except pa.ArrowInvalid:
        if size <= PARSE_BLOCK_BYTES:
            raise  # one block: a quote-aware parse would fail alike
        return parse_growing(True, PARSE_BLOCK_BYTES)[0]
    return parse_growing(True, block)[0] if size > block and holds_line_breaks(table) else table


def _spans_blocks(error: Exception) -> bool:
    """Whether pyarrow failed because one record is longer than its block (its two wordings of that)."""
    text = str(error)
    return "straddl" in text or "Empty CSV file or block" in text


def holds_line_breaks(table) -> bool:
    """Whether a text value of the table holds a line break."""
    import pyarrow as pa
    import pyarrow.compute as pc

    from .concurrency import map_in_threads

    texts = [column for column, column_type in zip(table.columns, table.schema.types, strict=True)
             if pa.types.is_string(column_type) or pa.types.is_large_string(column_type)]
    return any(map_in_threads(lambda column: pc.any(pc.match_substring(column, "\n")).as_py() is True, texts))


def frame_from_table(table):
    """An Arrow table as a pandas frame, typed as ``pandas.read_csv`` would type it, names stripped."""
    import pyarrow as pa

    if any(pa.types.is_null(column_type) for column_type in table.schema.types):
        # an all-blank column: pandas reads it as float64 NaN (one cast of the whole table: a file may have
        # thousands of such columns)
        table = table.cast(pa.schema([field.with_type(pa.float64()) if pa.types.is_null(field.type) else field
                                      for field in table.schema]))
    import pandas as pd

    frame = table.to_pandas()
    # typed as a list of names would type it, even an empty one (as when every column is an item)
    frame.columns = pd.Index([str(c).strip() for c in frame.columns], dtype=object).astype(str)
    return frame


def rest_as_frame(table, item_raw_names: Sequence[str]):
    """The table's other columns as a pandas frame, typed as ``pandas.read_csv`` would type them."""
    return frame_from_table(table.drop_columns(list(item_raw_names)))


def code_table(fmt: ResponseFormat) -> np.ndarray:
    """Lookup table from a 16-bit answer (as unsigned bits) to its code, or a mark for the other numbers
    (read-only: one table per answer format, shared by every column and block that uses it)."""
    return _code_table(int(fmt.min), int(fmt.max), tuple(fmt.missing_codes))


@functools.lru_cache(maxsize=64)
def _code_table(low: int, high: int, missing_codes: tuple) -> np.ndarray:
    # a 64 KiB table built once per format, not once per column of every block of a streamed file
    table = np.full(2**16, NOT_AN_ANSWER, dtype=np.uint8)
    levels = np.arange(low, high + 1, dtype=np.int16)
    table[levels.view(np.uint16)] = np.arange(levels.size, dtype=np.uint8)
    for code in missing_codes:
        if float(code).is_integer() and INT16[0] <= code <= INT16[1]:
            table[np.array([int(code)], dtype=np.int16).view(np.uint16)] = NO_ANSWER_CODE
    table.flags.writeable = False
    return table


@dataclass(frozen=True)
class ConvertedCodes:
    """One item column as codes, with what reading it found."""

    bad: np.ndarray          # rows holding a number that is neither an answer nor a "no answer" code (a mask)
    raw: np.ndarray          # the numbers as read (for messages about the bad rows; may be empty when none is)
    missing_codes: int
    blanks: int
    texts: int = 0           # answer texts turned into codes: none on this route, which reads numbers only
    missing_texts: dict | None = None  # "no answer" texts read as missing: none on this route either


def convert_codes(column, fmt: ResponseFormat, *, out: np.ndarray) -> ConvertedCodes:
    """Codes of one int16 Arrow column into ``out`` (uint8); blanks, "no answer" codes and bad numbers missing."""
    array = column.combine_chunks() if hasattr(column, "combine_chunks") else column
    blanks = int(array.null_count)
    # the numbers straight from Arrow's value buffer; a blank's slot holds an arbitrary number, which the
    # validity bits overwrite below
    raw = np.frombuffer(array.buffers()[1], dtype=np.int16, count=len(array), offset=array.offset * 2)
    span = int(fmt.max) - int(fmt.min)
    # the answers low..high become 0..span by one 16-bit subtraction (wrapping, so every other number lands
    # above span) and every other number is capped at span + 1: a third of the table lookup's time; the
    # table, which tells "no answer" codes from refused numbers, is looked up only for a column holding one
    # (and for a format with a "no answer" code inside its range, which the scale file refuses)
    looked_up = any(fmt.min <= code <= fmt.max for code in fmt.missing_codes)
    if looked_up:
        np.take(code_table(fmt), raw.view(np.uint16), out=out, mode="clip")
    else:
        shifted = np.subtract(raw.view(np.uint16), np.uint16(int(fmt.min) & 0xFFFF), dtype=np.uint16)
        np.minimum(shifted, np.uint16(span + 1), out=shifted)
        np.copyto(out, shifted, casting="unsafe")
    if blanks:
        _mark_blanks(array, out)
    bad = np.zeros(0, dtype=bool)
    missing_codes = 0
    if np.count_nonzero(out > span) > blanks:  # beside the blanks, a mark: a code or a bad number
        if not looked_up:
            np.take(code_table(fmt), raw.view(np.uint16), out=out, mode="clip")
            if blanks:
                _mark_blanks(array, out)
        is_code = out == NO_ANSWER_CODE
        missing_codes = int(np.count_nonzero(is_code))
        out[is_code] = MISSING
        bad = out == NOT_AN_ANSWER
        out[bad] = MISSING
    return ConvertedCodes(bad=bad, raw=raw, missing_codes=missing_codes, blanks=blanks)


def one_digit_format(fmt: ResponseFormat) -> bool:
    """Whether every answer of this format is written with one digit (0 to 9). Its "no answer" codes may
    have more (99): a cell holding one is not one digit, and its block is parsed as 16-bit numbers."""
    return 0 <= fmt.min and fmt.max <= 9


def holds_one_digit_cells(array) -> bool:
    """Whether every cell of a binary Arrow array (parsed with blank cells as null) is one ASCII digit.

    Such a column reads exactly as its 16-bit parse would (a digit is its own number), so
    :func:`convert_digit_codes` can take it without the parser's number conversion.
    """
    cells = _one_byte_cells(array)
    if cells is None:
        return False
    return not cells.size or bool(cells.min() >= ASCII_DIGITS[0] and cells.max() <= ASCII_DIGITS[1])


def _one_byte_cells(array) -> np.ndarray | None:
    """The bytes of a binary Arrow array's non-blank cells in row order (a view of its value buffer) when
    every such cell is one byte, else None. A non-blank cell holds at least one byte, so the cells are one
    byte each exactly when their bytes number the non-blank cells; those bytes then lie in one run. Only
    the first and last offsets are read (the offsets are not widened or copied: this runs on every block)."""
    filled = len(array) - array.null_count
    offsets = np.frombuffer(array.buffers()[1], dtype=np.int32, count=len(array) + 1, offset=array.offset * 4)
    first, last = int(offsets[0]), int(offsets[-1])
    if last - first != filled:
        return None
    if not filled:
        return np.zeros(0, dtype=np.uint8)
    return np.frombuffer(array.buffers()[2], dtype=np.uint8, count=filled, offset=first)


def digit_code_table(fmt: ResponseFormat) -> np.ndarray:
    """Lookup table from the byte of a one-digit cell to its code (``code_table`` of the digit's number)."""
    return _digit_code_table(int(fmt.min), int(fmt.max), tuple(fmt.missing_codes))


@functools.lru_cache(maxsize=64)
def _digit_code_table(low: int, high: int, missing_codes: tuple) -> np.ndarray:
    table = np.full(256, NOT_AN_ANSWER, dtype=np.uint8)
    table[ASCII_DIGITS[0]:ASCII_DIGITS[1] + 1] = _code_table(low, high, missing_codes)[:10]
    table.flags.writeable = False
    return table


def convert_digit_codes(array, fmt: ResponseFormat, *, out: np.ndarray) -> ConvertedCodes:
    """Codes of one binary Arrow array of one-digit cells (see :func:`holds_one_digit_cells`) into ``out``
    (uint8), read exactly as :func:`convert_codes` reads the same column parsed as 16-bit numbers.

    Hand-written beside :func:`convert_codes` because pyarrow's tokenizer is a quarter quicker when it
    hands on the cells' bytes than when it also turns them into numbers, and a digit's byte less the
    lowest answer's is its code. ``raw`` is filled only when some row is refused (it is read only for
    those rows' messages).
    """
    blanks = int(array.null_count)
    digits = _one_byte_cells(array)
    if digits is None:
        raise UsageError("convert_digit_codes takes cells of one byte each (see holds_one_digit_cells)")
    answered = validity(array) if blanks else None

    def place(values: np.ndarray) -> None:
        if answered is None:
            out[:] = values
        else:
            out.fill(MISSING)
            out[answered] = values

    # the answers' digits become 0..span by one subtraction (wrapping, so every other digit lands above
    # span); the table, which tells "no answer" codes from refused digits, only for a column holding one
    # (and for a format with a "no answer" code inside its range, as in convert_codes)
    looked_up = any(fmt.min <= code <= fmt.max for code in fmt.missing_codes)
    place(np.take(digit_code_table(fmt), digits) if looked_up
          else np.subtract(digits, np.uint8(ASCII_DIGITS[0] + int(fmt.min))))
    bad = np.zeros(0, dtype=bool)
    missing_codes = 0
    raw = np.zeros(0, dtype=np.int16)
    if np.count_nonzero(out > int(fmt.max) - int(fmt.min)) > blanks:  # beside the blanks, a code or a bad number
        if not looked_up:
            place(np.take(digit_code_table(fmt), digits))
        is_code = out == NO_ANSWER_CODE
        missing_codes = int(np.count_nonzero(is_code))
        out[is_code] = MISSING
        bad = out == NOT_AN_ANSWER
        out[bad] = MISSING
        if bad.any():
            raw = np.zeros(len(array), dtype=np.int16)
            numbers = digits.astype(np.int16) - ASCII_DIGITS[0]
            if answered is None:
                raw[:] = numbers
            else:
                raw[answered] = numbers
    return ConvertedCodes(bad=bad, raw=raw, missing_codes=missing_codes, blanks=blanks)


def _mark_blanks(array, out: np.ndarray) -> None:
    """Set ``out`` to MISSING where the Arrow array has no value, straight from its validity bitmap."""
    valid = validity(array).view(np.uint8)  # a fresh array: changed in place below
    np.subtract(valid, 1, out=valid)  # 1 (a value) -> 0, 0 (blank) -> 255 in unsigned bytes
    np.bitwise_or(out, valid, out=out)
