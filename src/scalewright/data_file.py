"""Reading a data file as it is (CSV/TSV, XLSX, Parquet) into a DataFrame, with no scale file needed.

Headers are checked (empty or repeated names), text must be UTF-8, and a delimited file's delimiter is found
from its header; :mod:`scalewright.data` then checks the answers against the scale file.
"""
from __future__ import annotations

import csv
import io
import re
from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from .errors import DataError, Problem, UsageError, quoted
from .read_codes import (
    RecordTooLong,
    frame_from_table,
    parse_delimited,
    without_empty_lines,
)
from .text_cells import clear_missing_texts

if TYPE_CHECKING:
    import pandas as pd

DELIMITERS = (",", ";", "\t")
READABLE = (".csv", ".tsv", ".txt", ".xlsx", ".parquet")
ROW_NUMBERS = "scalewright_row_numbers"  # frame.attrs key: spreadsheet row numbers when empty lines shift them
MISSING_CELLS = "scalewright_missing_cells"  # frame.attrs key: the cells read_table read as missing

# ----------------------------------------------------------------------------------------------------------
# files


def sniff_delimiter(header_line: str) -> str:
    """The delimiter among , ; and tab that occurs most in the header line (outside quotes)."""
    text = re.sub(r'"[^"]*(?:"|$)', "", header_line)  # quoted parts, each up to its closing quote or the end
    counts = {d: text.count(d) for d in DELIMITERS}
    best = max(counts, key=lambda d: counts[d])
    return best if counts[best] > 0 else ","


def decode_check(path: Path, body: bytes) -> bytes:
    """Strip a UTF-8 byte-order mark and refuse text that is not UTF-8."""
    if body.startswith(b"\xef\xbb\xbf"):
        body = body[3:]
    elif body.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise DataError(Problem(file=str(path), message="the file is UTF-16; save it as UTF-8"))
    try:
        body.decode("utf-8")
    except UnicodeDecodeError as error:
        line = body.count(b"\n", 0, error.start) + 1
        raise DataError(Problem(file=str(path), line=line,
                                message=f"not UTF-8 text (byte 0x{body[error.start]:02x} at offset {error.start}); "
                                        "save the file as UTF-8")) from None
    return body


HEAD_BYTES = 1 << 20  # read at a time while looking for the end of the header record


def _head(path: Path) -> bytes:
    """The start of the file up to and including its whole header record (all of a shorter file).

    The header ends at the first line break outside quotes (a quoted name may hold one); a header longer
    than :data:`scalewright.limits.MAX_RECORD_BYTES` is refused.
    """
    from . import limits

    head = b""
    with open(path, "rb") as handle:
        while True:
            block = handle.read(HEAD_BYTES)
            head += block
            if not block or _header_end(head) is not None:
                return head
            if len(head) > limits.MAX_RECORD_BYTES:
                raise DataError(Problem(file=str(path), line=1, message=f"the header is longer than "
                                        f"{limits.MAX_RECORD_BYTES // 2**20} MiB (see docs/limits.md)"))


def _header_end(head: bytes) -> int | None:
    """Position of the first line break outside quotes, or None."""
    quoted = False
    for found in re.finditer(rb'["\r\n]', head):
        if found.group() == b'"':
            quoted = not quoted
        elif not quoted:
            return found.start()
    return None


def delimited_header(path: Path, delimiter: str | None) -> tuple[str, list[str]]:
    """The delimiter and the column names of a delimited file, after refusing what cannot be read.

    The header is read as a CSV record, so a quoted name may hold a delimiter or a line break; lines may
    end in LF, CRLF or a lone CR.
    """
    head = _head(path)
    if head.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise DataError(Problem(file=str(path), message="the file is UTF-16; save it as UTF-8"))
    if head.startswith(b"\xef\xbb\xbf"):
        head = head[3:]
    if not head.strip() and path.stat().st_size <= len(head) + 3:
        raise DataError(Problem(file=str(path), message="the file is empty"))
    text = head.decode("utf-8", errors="replace")
    first_line = text.splitlines()[0] if text.strip() else ""
    sep = delimiter or sniff_delimiter(first_line)
    try:
        names = next(csv.reader(io.StringIO(text, newline=""), delimiter=sep))
    except (csv.Error, StopIteration) as error:
        raise DataError(Problem(file=str(path), line=1, message=f"cannot read the header: {error}")) from None
    if "\ufffd" in "".join(names):
        decode_check(path, path.read_bytes())  # names the first byte that is not UTF-8
    _check_header(path, [n.strip() for n in names])
    return sep, names


def _read_delimited(path: Path, delimiter: str | None, text_columns: Sequence[str] = ()) -> pd.DataFrame:
    """The file as a pandas frame (typed as ``pandas.read_csv`` types it, ``text_columns`` as text);
    ``frame.attrs[ROW_NUMBERS]`` holds the rows' spreadsheet numbers when empty lines shift them."""
    import pandas as pd

    from . import limits

    sep, raw_names = delimited_header(path, delimiter)
    import pyarrow as pa

    types = {raw: pa.string() for raw in raw_names if raw.strip() in set(text_columns)}
    try:
        # the quick route's parse, with every column's type inferred (it keeps undecodable bytes as binary)
        kept = without_empty_lines(parse_delimited(path, sep, column_types=types), path, sep)
        frame, row_numbers = ((frame_from_table(parse_delimited(path, sep, column_types=types,
                                                                keep_empty_lines=False)), None)
                              if kept is None else (frame_from_table(kept[0]), kept[1]))
    except RecordTooLong:
        raise DataError(Problem(file=str(path), message=f"a row is longer than {limits.MAX_RECORD_BYTES // 2**20} MiB "
                                                        "(see docs/limits.md)")) from None
    except Exception as error:  # pyarrow raises its own error types for ragged or broken rows
        message = str(error).strip().splitlines()[0] if str(error).strip() else type(error).__name__
        raise DataError(Problem(file=str(path), message=f"cannot parse as delimited text ({sep!r}): "
                                                        f"{_cut(message)}")) from None
    if any(frame[c].dtype == object and pd.api.types.infer_dtype(frame[c], skipna=True) not in ("string", "empty")
           for c in frame.columns):
        decode_check(path, path.read_bytes())  # pyarrow kept undecodable bytes: name the first bad byte
    if row_numbers is not None:
        frame.attrs[ROW_NUMBERS] = row_numbers
    return frame


def _check_header(path: Path, names: Sequence[str], *, line: int | None = 1) -> None:
    from .limits import MAX_COLUMNS

    if len(names) > MAX_COLUMNS:
        raise DataError(Problem(file=str(path), line=line, message=f"the file has {len(names):,} columns, more than "
                                                                   f"{MAX_COLUMNS:,} (see docs/limits.md)"))
    seen: set[str] = set()
    for position, name in enumerate(names, start=1):
        if not name:
            raise DataError(Problem(file=str(path), line=line, where=f"column {position}",
                                    message="the header has an empty column name"))
        if name in seen:
            raise DataError(Problem(file=str(path), line=line, where=f"column {position}",
                                    message=f"the column name {quoted(name)} appears twice in the header"))
        seen.add(name)


def _cut(message: str, limit: int = 200) -> str:
    """A library's message, first line only and cut: it is quoted inside one of ours."""
    first = message.strip().splitlines()[0] if message.strip() else ""
    return first if len(first) <= limit else first[: limit - 3] + "..."


def read_table(path: str | Path, *, delimiter: str | None = None, text_columns: Sequence[str] = (),
               sheet: str | None = None, missing_texts: Sequence[str] | None = None) -> pd.DataFrame:
    """Read a CSV/TSV, XLSX or Parquet file as it is (no scale file needed), by its extension.

    ``text_columns`` are read as text whatever they hold (ids); ``sheet`` names the sheet of a workbook
    with several. With ``missing_texts``, text cells that are blank or one of those texts become missing
    (counted in ``frame.attrs[MISSING_CELLS]``, see :func:`scalewright.text_cells.clear_missing_texts`).
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if not path.exists():
        raise DataError(Problem(file=str(path), message="data file not found"))
    if path.is_dir():
        raise DataError(Problem(file=str(path), message="is a folder, not a data file"))
    if suffix not in READABLE:
        raise DataError(Problem(file=str(path), message=f"cannot read {suffix or 'files without an extension'}; "
                                                        "use .csv, .tsv, .xlsx or .parquet"))
    if sheet is not None and suffix != ".xlsx":
        raise UsageError(f"a sheet can be chosen only in a workbook (.xlsx); {quoted(path.name)} is not one"
                         ).with_setting("sheet")
    if suffix in (".csv", ".txt"):
        frame = _read_delimited(path, delimiter, text_columns)
    elif suffix == ".tsv":
        frame = _read_delimited(path, delimiter or "\t", text_columns)
    elif suffix == ".xlsx":
        from .workbook import read_workbook

        frame = read_workbook(path, sheet=sheet)
        _check_header(path, list(frame.columns))
    else:
        frame = _read_parquet(path)
    if missing_texts is not None:
        frame, found = clear_missing_texts(frame, missing_texts, skip=text_columns)
        frame.attrs[MISSING_CELLS] = found
    if len(frame.columns) == 0:
        raise DataError(Problem(file=str(path), message="the file has no columns"))
    if len(frame) == 0:
        raise DataError(Problem(file=str(path), message="the file has a header but no rows of data"))
    return frame


def _read_parquet(path: Path) -> pd.DataFrame:
    """A Parquet file, after refusing duplicate column names and cells that hold lists or records."""
    import pandas as pd
    import pyarrow as pa
    import pyarrow.parquet as pq

    try:
        schema = pq.read_schema(path)
    except Exception as error:  # pyarrow raises its own types for broken files
        raise DataError(Problem(file=str(path), message=f"cannot read the Parquet file: {_cut(str(error))}")) from None
    _check_header(path, [str(name).strip() for name in schema.names], line=None)
    for _position, column in enumerate(schema, start=1):
        if pa.types.is_nested(column.type) or pa.types.is_dictionary(column.type) and \
                pa.types.is_nested(column.type.value_type):
            raise DataError(Problem(file=str(path), where=f"column {quoted(column.name)}",
                                    message=f"the column holds {_cut(str(column.type), 40)} values, not one value per "
                                            "cell; store one answer per cell"))
    try:
        frame = pd.read_parquet(path)
    except Exception as error:  # pyarrow raises its own types for broken files
        raise DataError(Problem(file=str(path), message=f"cannot read the Parquet file: {_cut(str(error))}")) from None
    frame.columns = [str(c).strip() for c in frame.columns]
    return frame


def first_row_number(path: str | Path) -> int:
    """Row number of the first data row as a person sees it: 2 below a header, 1 in Parquet."""
    return 1 if Path(path).suffix.lower() == ".parquet" else 2
