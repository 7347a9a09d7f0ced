"""Reading the data file into clean item codes, checked against the scale file.

Answer texts become their codes, "no answer" codes and blanks become missing, and every value that is
neither an answer nor a missing code is refused with its row and column (or, with ``lenient``, turned
into a missing value and counted). Nothing is dropped without being counted.
"""
from __future__ import annotations

import csv
import io
import re
from collections.abc import Mapping, Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .answer_codes import ItemAnswers
from .concurrency import worker_count
from .errors import DataError, Problem, UsageError, did_you_mean, quoted
from .read_codes import (
    RecordTooLong,
    convert_codes,
    fits,
    frame_from_table,
    parse_delimited,
    read_whole_number_table,
    rest_as_frame,
    without_empty_lines,
)
from .spec_model import ResponseFormat, ScaleSpec, normalise_answer_text
from .text_cells import clear_missing_texts, is_plain_number

DELIMITERS = (",", ";", "\t")
READABLE = (".csv", ".tsv", ".txt", ".xlsx", ".parquet")
SHOW_FIRST = 20  # bad cells listed one by one before the rest are only counted
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


def _decode_check(path: Path, body: bytes) -> bytes:
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


def _delimited_header(path: Path, delimiter: str | None) -> tuple[str, list[str]]:
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
        _decode_check(path, path.read_bytes())  # names the first byte that is not UTF-8
    _check_header(path, [n.strip() for n in names])
    return sep, names


def _read_delimited(path: Path, delimiter: str | None, text_columns: Sequence[str] = ()) -> pd.DataFrame:
    """The file as a pandas frame (typed as ``pandas.read_csv`` types it, ``text_columns`` as text);
    ``frame.attrs[ROW_NUMBERS]`` holds the rows' spreadsheet numbers when empty lines shift them."""
    from . import limits

    sep, raw_names = _delimited_header(path, delimiter)
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
        _decode_check(path, path.read_bytes())  # pyarrow kept undecodable bytes: name the first bad byte
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
        raise UsageError(f"--sheet is for workbooks (.xlsx); {quoted(path.name)} is not one")
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


# ----------------------------------------------------------------------------------------------------------
# responses


@dataclass(frozen=True, eq=False)
class Responses:
    """Clean answer codes of every item, with ids, the other columns and what was refused.

    ``answers`` holds the answers as given (not reverse-keyed); :attr:`items` shows them as one float64
    matrix, NaN where no answer was given, and :meth:`codes` as one-byte codes for the statistics.
    """

    path: str
    answers: ItemAnswers
    item_names: tuple[str, ...]
    frame: pd.DataFrame
    ids: pd.Series
    line_numbers: np.ndarray
    id_column: str | None = None
    refused: tuple[Problem, ...] = ()
    refused_total: int = 0
    refused_by_column: dict[str, int] = field(default_factory=dict)
    missing_code_by_column: dict[str, int] = field(default_factory=dict)
    blank_by_column: dict[str, int] = field(default_factory=dict)
    texts_by_column: dict[str, int] = field(default_factory=dict)
    #: column -> "no answer" text as the scale file lists it -> cells read as missing (items and other columns)
    missing_texts_by_column: dict[str, dict[str, int]] = field(default_factory=dict)
    #: the "no answer" texts of the columns that are not items
    missing_texts: tuple[str, ...] = ()
    #: every column name in the order the data file has them (items in questionnaire order, for longstring)
    file_columns: tuple[str, ...] = ()
    #: survey weights (:class:`scalewright.weights.SurveyWeights`), or None when the estimates are unweighted
    weights: Any = None

    @property
    def n(self) -> int:
        return self.answers.n

    @property
    def items(self) -> np.ndarray:
        """Every item's answers as an n x k float64 matrix (column-major), NaN where missing."""
        return self.answers.values

    def codes(self, names: Sequence[str]) -> np.ndarray | None:
        """The named items as one-byte codes (``answer - min``, 255 = missing), or None if one has none."""
        return self.answers.codes_of([self.item_index(n) for n in names])

    def item_index(self, name: str) -> int:
        try:
            return self.item_names.index(name)
        except ValueError:
            raise DataError(Problem(file=self.path, message=f"no item column {name!r}")) from None

    def item(self, name: str) -> np.ndarray:
        return self.items[:, self.item_index(name)]

    def matrix(self, names: Sequence[str]) -> np.ndarray:
        return self.items[:, [self.item_index(n) for n in names]]

    def column(self, name: str) -> pd.Series:
        """A non-item column (a group, id or other), or an item's clean codes, as a Series."""
        if name in self.frame.columns:
            return self.frame[name]
        if name in self.item_names:
            return pd.Series(self.item(name), name=name)
        hint = did_you_mean(name, list(self.frame.columns) + list(self.item_names))
        raise DataError(Problem(file=self.path, message=f"no column named {name!r}{hint}"))

    def subset(self, rows: np.ndarray | Sequence[int] | Sequence[bool]) -> Responses:
        rows = np.asarray(rows)
        positions = np.flatnonzero(rows) if rows.dtype == bool else rows.astype(int)
        return Responses(
            path=self.path, answers=self.answers.subset(positions), item_names=self.item_names,
            frame=self.frame.iloc[positions].reset_index(drop=True), ids=self.ids.iloc[positions].reset_index(drop=True),
            line_numbers=self.line_numbers[positions], id_column=self.id_column, refused=self.refused,
            refused_total=self.refused_total, refused_by_column=self.refused_by_column,
            missing_code_by_column=self.missing_code_by_column, blank_by_column=self.blank_by_column,
            texts_by_column=self.texts_by_column, missing_texts_by_column=self.missing_texts_by_column,
            missing_texts=self.missing_texts, file_columns=self.file_columns,
            weights=None if self.weights is None else self.weights.subset(positions))

    def items_in_file_order(self) -> tuple[str, ...]:
        """The item names in the order their columns stand in the data file."""
        rank = {name: position for position, name in enumerate(self.file_columns)}
        return tuple(sorted(self.item_names, key=lambda item: rank.get(item, len(rank))))

    def notes(self) -> list[str]:
        """Plain-language notes about what reading the data changed."""
        out = []
        if self.refused_total:
            detail = ", ".join(f"{c} {n}" for c, n in self.refused_by_column.items())
            out.append(f"{self.refused_total} value(s) were neither an answer nor a missing code and were "
                       f"treated as missing (--lenient): {detail}")
        codes = sum(self.missing_code_by_column.values())
        if codes:
            out.append(f"{codes} 'no answer' code(s) were read as missing")
        texts = sum(sum(counts.values()) for counts in self.missing_texts_by_column.values())
        if texts:
            by_text: dict[str, int] = {}
            for counts in self.missing_texts_by_column.values():
                for text, count in counts.items():
                    by_text[text] = by_text.get(text, 0) + count
            detail = ", ".join(f"{quoted(t)} {n}" for t, n in by_text.items())
            out.append(f"{texts} cell(s) holding a 'no answer' text were read as missing: {detail}")
        return out

    def missing_texts_note(self, spec: ScaleSpec) -> str:
        """Which texts were read as "no answer" (the scale file's ``missing_texts`` or the default)."""
        def shown(texts: Sequence[str]) -> str:
            return ", ".join(quoted(t) for t in texts) if texts else "none"

        differ = [f"{scale.name}: {shown(scale.response.missing_texts)}" for scale in spec.scales.values()
                  if scale.response.missing_texts != spec.missing_texts]
        return (f"texts read as 'no answer' (missing_texts): {shown(spec.missing_texts)}"
                + (f"; in the items of {'; '.join(differ)}" if differ else "")
                + "; blank cells and 'no answer' codes are missing too, every other text is data")

    def reading_summary(self) -> dict[str, Any]:
        return {
            "rows": self.n,
            "refused_total": self.refused_total,
            "refused_by_column": dict(self.refused_by_column),
            "refused_first": [str(p) for p in self.refused],
            "missing_code_by_column": dict(self.missing_code_by_column),
            "blank_by_column": dict(self.blank_by_column),
            "texts_by_column": dict(self.texts_by_column),
            "missing_texts": list(self.missing_texts),
            "missing_texts_by_column": {column: dict(counts) for column, counts in self.missing_texts_by_column.items()},
        }


@dataclass(frozen=True)
class _Converted:
    values: np.ndarray
    bad: np.ndarray
    missing_codes: int
    blanks: int
    texts: int
    missing_texts: dict[str, int] = field(default_factory=dict)


def _text_lookup(fmt: ResponseFormat) -> dict[str, float]:
    return {text: float(code) for text, code in fmt.code_for_text().items()}


def convert_item(series: pd.Series, fmt: ResponseFormat, *, out: np.ndarray | None = None) -> _Converted:
    """Codes of one item column: texts via labels, missing codes, missing texts and blanks to NaN, the
    rest checked: a number that is not one of the whole answer codes (``2.5`` on 1..5, ``7``) is refused.

    ``out`` (a float64 vector of the column's length) receives the codes in place, sparing a copy.
    """
    texts = 0
    missing_texts: dict[str, int] = {}
    listed_blank = 0  # cells of a listed "no answer" text: NaN below, but not blank
    if pd.api.types.is_bool_dtype(series.dtype):
        series = series.astype(object)
    if pd.api.types.is_numeric_dtype(series.dtype):
        raw = series.to_numpy(dtype=np.float64, na_value=np.nan)
    else:
        lookup = _text_lookup(fmt)
        listed = fmt.missing_text_for()
        # each distinct text is decoded once; the column is a vector of positions into them (-1 = blank)
        positions, uniques = pd.factorize(series)
        decoded = np.full(len(uniques) + 1, np.nan)  # the extra last entry serves position -1
        is_label = np.zeros(len(uniques) + 1, dtype=bool)
        listed_at: dict[int, str] = {}
        for index, text_value in enumerate(uniques):
            text = normalise_answer_text(text_value)
            if text in lookup:
                decoded[index], is_label[index] = lookup[text], True
            elif text in listed:
                listed_at[index] = listed[text]
            elif text:
                # an unknown text is read as infinity: above any range, so refused below
                decoded[index] = float(text) if _is_number(text) else np.inf
        raw = decoded[positions]
        texts = int(np.count_nonzero(is_label[positions])) if is_label.any() else 0
        if listed_at:
            counts = np.bincount(positions[positions >= 0], minlength=len(uniques))
            for index, text in listed_at.items():
                missing_texts[text] = missing_texts.get(text, 0) + int(counts[index])
            listed_blank = sum(missing_texts.values())
    if out is None:
        out = np.empty(len(raw), dtype=np.float64)
    out[:] = raw  # a copy in every case: the frame's own data is never changed
    values = out
    blanks = int(np.count_nonzero(np.isnan(values))) - listed_blank
    # NaN compares False: blanks are not refused; a number between two codes is not an answer either
    outside = (values < fmt.min) | (values > fmt.max) | (np.isfinite(values) & (values != np.trunc(values)))
    missing_codes = 0
    if fmt.missing_codes:
        is_code = values == fmt.missing_codes[0]
        for code in fmt.missing_codes[1:]:
            is_code |= values == code
        missing_codes = int(np.count_nonzero(is_code))
        if missing_codes:
            outside &= ~is_code
            values[is_code] = np.nan
    if outside.any():
        values[outside] = np.nan
    return _Converted(values=values, bad=outside, missing_codes=missing_codes, blanks=blanks, texts=texts,
                      missing_texts=missing_texts)


def _describe_bad(value: Any, fmt: ResponseFormat) -> str:
    if isinstance(value, str) and not _is_number(value):
        shown = quoted(value)
        known = f"; known answer texts: {', '.join(quoted(t) for t in fmt.labels.values())}" if fmt.labels else ""
        return f"{shown} is not an answer text of this item{known}"
    number = float(value)
    shown = quoted(value) if isinstance(value, str) else (f"{value:g}" if isinstance(value, float) else f"{value}")
    if fmt.min <= number <= fmt.max:
        return f"{shown} lies between the answer codes {fmt.min}..{fmt.max}, which are whole numbers"
    codes = f" and is not a 'no answer' code ({', '.join(f'{c:g}' for c in fmt.missing_codes)})" \
        if fmt.missing_codes else ""
    return f"{shown} is outside the answer range {fmt.min}..{fmt.max}{codes}"


def _is_number(text: str) -> bool:
    return is_plain_number(text)


def read_responses(path: str | Path, spec: ScaleSpec, *, lenient: bool = False, sheet: str | None = None) -> Responses:
    """Read the data file and check it against the scale file.

    Raises ``DataError`` naming row and column for every refused value (the first 20 and the total)
    unless ``lenient``, which turns them into missing values counted per column.

    A delimited file whose item columns hold only whole numbers takes the quick route of
    :mod:`scalewright.read_codes`; any other file, and any file that route cannot take, the general one.
    Both give the same result. ``sheet`` names the sheet of a workbook with several.
    """
    path = Path(path)
    needed = list(spec.items)
    quick = _read_quickly(path, spec) if sheet is None else None
    if quick is None:
        frame = read_table(path, text_columns=[spec.id_column] if spec.id_column else (), sheet=sheet)
        row_numbers = frame.attrs.get(ROW_NUMBERS)
        columns = list(frame.columns)
        _check_columns_present(path, spec, columns)
        rest = frame.drop(columns=needed)
        n = len(frame)
    else:
        table, columns, item_raw_names, row_numbers = quick
        rest = rest_as_frame(table, item_raw_names)
        n = table.num_rows
    start = first_row_number(path)
    line_numbers = np.arange(start, start + n) if row_numbers is None else np.asarray(row_numbers)
    rest, other_missing = clear_missing_texts(rest, spec.missing_texts, skip=[spec.id_column] if spec.id_column else (),
                                              count_blank=spec.groups)
    with ThreadPoolExecutor(max_workers=worker_count()) as pool:
        # the id check and the item columns are independent; both release the interpreter lock
        ids_checked = pool.submit(_check_ids, path, rest, spec.id_column, line_numbers)
        answers, converted, raw_of = (_convert_frame(pool, frame, spec) if quick is None
                                      else _convert_table(pool, table, item_raw_names, spec))
        ids = ids_checked.result()
    bad_sample: list[tuple[int, Problem]] = []  # with the row number, to list them in row order
    bad_total = 0
    refused_by_column: dict[str, int] = {}
    missing_by_column: dict[str, int] = {}
    blank_by_column: dict[str, int] = {}
    texts_by_column: dict[str, int] = {}
    missing_texts_by_column: dict[str, dict[str, int]] = {}
    for name, column in zip(needed, converted, strict=True):
        fmt = spec.response_for(name)
        if column.missing_texts:
            missing_texts_by_column[name] = dict(column.missing_texts)
        if column.missing_codes:
            missing_by_column[name] = column.missing_codes
        if column.blanks:
            blank_by_column[name] = column.blanks
        if column.texts:
            texts_by_column[name] = column.texts
        count = int(np.count_nonzero(column.bad))
        if count:
            refused_by_column[name] = count
            bad_total += count
            if len(bad_sample) < SHOW_FIRST:
                rows = np.flatnonzero(column.bad)[: SHOW_FIRST - len(bad_sample)]
                for row, value in zip(rows, raw_of[name].iloc[rows], strict=True):
                    bad_sample.append((int(line_numbers[row]),
                                       Problem(file=str(path), where=f"row {line_numbers[row]}, column {name}",
                                               message=_describe_bad(value, fmt))))
    if bad_total and not lenient:
        in_row_order = [problem for _, problem in sorted(bad_sample, key=lambda numbered: numbered[0])]
        summary = Problem(file=str(path), message=f"{bad_total} value(s) in all are neither an answer nor a "
                                                  "'no answer' code; fix them, add them to missing_codes, or use "
                                                  "--lenient to treat them as missing")
        raise DataError([*in_row_order, summary] if bad_total > 1 else in_row_order)
    for column in spec.groups:
        if column in other_missing.blank:
            blank_by_column[column] = other_missing.blank[column]
    missing_texts_by_column.update(other_missing.texts)
    for column, order in spec.group_levels.items():
        rest[column] = _ordered_levels(path, rest[column], column, order, line_numbers, lenient=lenient,
                                       codes=getattr(spec, "group_codes", {}).get(column))
    return Responses(path=str(path), answers=answers, item_names=tuple(needed), frame=rest.reset_index(drop=True),
                     ids=ids, line_numbers=line_numbers, id_column=spec.id_column, missing_texts=spec.missing_texts,
                     refused=tuple(problem for _, problem in bad_sample), refused_total=bad_total, refused_by_column=refused_by_column,
                     missing_code_by_column=missing_by_column, blank_by_column=blank_by_column,
                     texts_by_column=texts_by_column, missing_texts_by_column=missing_texts_by_column,
                     file_columns=tuple(columns))


def _answer_ranges(spec: ScaleSpec) -> tuple[list[int], list[int]]:
    formats = [spec.response_for(name) for name in spec.items]
    return [f.min for f in formats], [f.max for f in formats]


def _convert_frame(pool, frame: pd.DataFrame, spec: ScaleSpec):
    """Every item column of a pandas frame as float64 answers (the general route)."""
    needed = list(spec.items)
    values = np.empty((len(frame), len(needed)), dtype=np.float64, order="F")  # filled column by column
    converted = list(pool.map(lambda j: convert_item(frame[needed[j]], spec.response_for(needed[j]),
                                                     out=values[:, j]), range(len(needed))))
    return ItemAnswers.from_values(values, *_answer_ranges(spec)), converted, {name: frame[name] for name in needed}


def _convert_table(pool, table, item_raw_names: Sequence[str], spec: ScaleSpec):
    """Every int16 item column of an Arrow table as one-byte codes (the quick route)."""
    needed = list(spec.items)
    codes = np.empty((table.num_rows, len(needed)), dtype=np.uint8, order="F")
    as_written = {raw.strip(): raw for raw in item_raw_names}
    converted = list(pool.map(lambda j: convert_codes(table.column(as_written[needed[j]]),
                                                      spec.response_for(needed[j]), out=codes[:, j]),
                              range(len(needed))))
    raw_of = {name: pd.Series(column.raw) for name, column in zip(needed, converted, strict=True)}
    return ItemAnswers.from_codes(codes, *_answer_ranges(spec)), converted, raw_of


def _read_quickly(path: Path, spec: ScaleSpec):
    """(Arrow table, stripped names, item names as written, row numbers or None) by the quick route, or None."""
    if path.suffix.lower() not in (".csv", ".txt", ".tsv") or not path.is_file():
        return None
    if not spec.items or not all(fits(spec.response_for(name)) for name in spec.items):
        return None
    sep, raw_names = _delimited_header(path, "\t" if path.suffix.lower() == ".tsv" else None)
    wanted = set(spec.items) | ({spec.id_column} if spec.id_column else set()) | set(spec.groups)
    if not wanted <= {name.strip() for name in raw_names}:
        return None  # a column is absent: the general route reports it, after any problem it finds first
    read = read_whole_number_table(path, sep, raw_names, spec.items, [spec.id_column] if spec.id_column else ())
    if read is None:
        return None
    table, row_numbers = read
    items = set(spec.items)
    return (table, [name.strip() for name in table.column_names],
            [raw for raw in table.column_names if raw.strip() in items], row_numbers)


def _check_columns_present(path: Path, spec: ScaleSpec, columns: Sequence[str]) -> None:
    absent = [c for c in spec.items if c not in columns]
    for column in ([spec.id_column] if spec.id_column else []) + list(spec.groups):
        if column not in columns:
            absent.append(column)
    if absent:
        problems = []
        for name in absent:
            problems.append(Problem(file=str(path), line=1, message=f"the scale file names column {name!r}, "
                                                                    "which the data file does not have"
                                                                    f"{did_you_mean(name, list(columns))}"))
        raise DataError(problems)


def _ordered_levels(path: Path, values: pd.Series, column: str, order: tuple[str, ...],
                    line_numbers: np.ndarray, *, lenient: bool, codes: Mapping[str, str] | None = None) -> pd.Series:
    """A group column as an ordered categorical in the scale file's order; unknown levels are refused.

    Numbers match numerically, as item answers do: ``3.0`` in the file is the level ``3``. With ``codes``
    (``{"1": "woman", ...}`` from the scale file) the data's codes become their names, so tables, figures and
    sentences say "woman", not "gender = 1"; a value already written as a name is kept.
    """
    text = values.astype("string").str.strip()
    text = text.mask(text == "")
    if codes:
        whole = text.str.replace(r"^(-?\d+)\.0+$", r"\1", regex=True)  # 1.0 as read from a float column is 1
        text = whole.map(lambda value: codes.get(value, value) if isinstance(value, str) else value,
                         na_action="ignore").astype("string")
        order_text = f"{', '.join(f'{code} = {name}' for code, name in codes.items())}"
    else:
        order_text = ", ".join(order)
    numeric_levels = {float(level): level for level in order if is_plain_number(level)}
    if numeric_levels:
        distinct = text.dropna().unique()
        renamed = {value: numeric_levels[float(value)] for value in distinct
                   if value not in order and is_plain_number(value) and float(value) in numeric_levels}
        if renamed:
            text = text.replace(renamed)
    unknown = text.notna() & ~text.isin(order)
    if unknown.any() and not lenient:
        first = int(np.flatnonzero(unknown.to_numpy())[0])
        raise DataError(Problem(file=str(path), where=f"row {line_numbers[first]}, column {column}",
                                message=f"{quoted(values.astype('string').iloc[first])} is not one of the levels "
                                        f"the scale file lists for {column} ({order_text}); {int(unknown.sum())} "
                                        "such value(s)"))
    return pd.Series(pd.Categorical(text.where(~unknown), categories=list(order), ordered=True), name=column)


def _check_ids(path: Path, frame: pd.DataFrame, id_column: str | None, line_numbers: np.ndarray) -> pd.Series:
    if id_column is None:
        return pd.Series(line_numbers.astype(str), name="row")
    raw = frame[id_column]
    empty = raw.isna().to_numpy().copy()
    if raw.dtype == object or pd.api.types.is_string_dtype(raw.dtype):
        empty |= (raw.astype("string").str.strip() == "").fillna(True).to_numpy()
    if empty.any():
        rows = line_numbers[empty]
        raise DataError(Problem(file=str(path), where=f"row {rows[0]}, column {id_column}",
                                message=f"the id is empty ({int(empty.sum())} row(s) without an id)"))
    ids = _ids_as_text(raw, str(path), line_numbers)
    if ids.is_unique:  # one hash pass; the slower search for the duplicates only when there are some
        return ids.rename(id_column).reset_index(drop=True)
    duplicated = ids.duplicated(keep=False).to_numpy()
    first_value = ids[duplicated].iloc[0]
    rows = line_numbers[(ids == first_value).to_numpy()]
    raise DataError(Problem(file=str(path), where=f"column {id_column}",
                            message=f"id {quoted(first_value)} appears more than once (rows "
                                    f"{', '.join(str(r) for r in rows[:5])}); "
                                    f"{int(ids.duplicated().sum())} duplicate id(s) in all"))


def _ids_as_text(raw: pd.Series, path_text: str = "", line_numbers: np.ndarray | None = None) -> pd.Series:
    """Ids as text, whole-number floats without '.0' (a spreadsheet's 17 is the id '17')."""
    if pd.api.types.is_integer_dtype(raw.dtype):
        return raw.astype(str)
    if pd.api.types.is_float_dtype(raw.dtype):
        values = raw.to_numpy(dtype=np.float64)
        too_long = np.abs(values) >= 2.0**53  # beyond this a float no longer holds every whole number
        if too_long.any():
            raise DataError(Problem(file=path_text, where=f"row {line_numbers[np.flatnonzero(too_long)[0]]}, column "
                                                          f"{raw.name}",
                                    message=f"the id {values[too_long][0]:.17g} is a number too long to be held "
                                            "exactly (the file stores it as a number); store the ids as text"))
        if np.all(np.mod(values, 1) == 0):
            return pd.Series(values.astype(np.int64).astype(str), index=raw.index)
        return raw.astype(str)
    return raw.astype(str).str.strip()
