"""Reading the data file into clean item codes, checked against the scale file.

Answer texts become their codes, "no answer" codes and blanks become missing, and every value that is
neither an answer nor a missing code is refused with its row and column (or, with ``lenient``, turned
into a missing value and counted). Nothing is dropped without being counted.
"""
from __future__ import annotations

from collections.abc import Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from .answer_codes import ItemAnswers
from .concurrency import worker_count
from .data_columns import check_columns_present, check_ids, ordered_levels
from .data_file import ROW_NUMBERS, delimited_header, first_row_number, read_table
from .errors import DataError, Problem, quoted
from .read_codes import (
    convert_codes,
    fits,
    read_whole_number_table,
    rest_as_frame,
)
from .responses import Responses
from .spec_model import ResponseFormat, ScaleSpec, normalise_answer_text
from .text_cells import clear_missing_texts, is_plain_number

if TYPE_CHECKING:
    import pandas as pd

SHOW_FIRST = 20  # bad cells listed one by one before the rest are only counted


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
    import pandas as pd
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
        check_columns_present(path, spec, columns)
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
        ids_checked = pool.submit(check_ids, path, rest, spec.id_column, line_numbers)
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
        summary = Problem(total=True, file=str(path), message=f"{bad_total} value(s) in all are neither an answer nor a "
                                                  "'no answer' code; fix them, add them to missing_codes, or read "
                                                  "the data leniently to treat them as missing")
        raise DataError([*in_row_order, summary] if bad_total > 1 else in_row_order).with_setting("lenient")
    for column in spec.groups:
        if column in other_missing.blank:
            blank_by_column[column] = other_missing.blank[column]
    missing_texts_by_column.update(other_missing.texts)
    for column, order in spec.group_levels.items():
        rest[column] = ordered_levels(path, rest[column], column, order, line_numbers, lenient=lenient,
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
    import pandas as pd
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
    sep, raw_names = delimited_header(path, "\t" if path.suffix.lower() == ".tsv" else None)
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
