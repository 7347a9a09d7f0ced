"""The columns of a data file that are not answers: present as the scale file names them, group levels, ids."""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from .errors import DataError, Problem, did_you_mean, quoted
from .spec_model import ScaleSpec
from .text_cells import is_plain_number

if TYPE_CHECKING:
    import pandas as pd


def check_columns_present(path: Path, spec: ScaleSpec, columns: Sequence[str]) -> None:
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


def named_levels(text: pd.Series, order: Sequence[str], codes: Mapping[str, str] | None = None) -> pd.Series:
    """``text`` (stripped, blanks already missing) with codes named and numeric levels matched.

    Shared by the whole-file reader and the block reader, so both routes see the same levels.
    """
    if codes:
        whole = text.str.replace(r"^(-?\d+)\.0+$", r"\1", regex=True)  # 1.0 as read from a float column is 1
        text = whole.map(lambda value: codes.get(value, value) if isinstance(value, str) else value,
                         na_action="ignore").astype("string")
    numeric_levels = {float(level): level for level in order if is_plain_number(level)}
    if numeric_levels:
        distinct = text.dropna().unique()
        renamed = {value: numeric_levels[float(value)] for value in distinct
                   if value not in order and is_plain_number(value) and float(value) in numeric_levels}
        if renamed:
            text = text.replace(renamed)
    return text


def order_text(order: Sequence[str], codes: Mapping[str, str] | None = None) -> str:
    """The listed levels as an error message names them (``1 = woman, 2 = man`` for named codes)."""
    if codes:
        return ", ".join(f"{code} = {name}" for code, name in codes.items())
    return ", ".join(order)


def ordered_levels(path: Path, values: pd.Series, column: str, order: tuple[str, ...],
                    line_numbers: np.ndarray, *, lenient: bool, codes: Mapping[str, str] | None = None) -> pd.Series:
    """A group column as an ordered categorical in the scale file's order; unknown levels are refused.

    Numbers match numerically, as item answers do: ``3.0`` in the file is the level ``3``. With ``codes``
    (``{"1": "woman", ...}`` from the scale file) the data's codes become their names, so tables, figures and
    sentences say "woman", not "gender = 1"; a value already written as a name is kept.
    """
    import pandas as pd
    text = values.astype("string").str.strip()
    text = text.mask(text == "")
    text = named_levels(text, order, codes)
    unknown = text.notna() & ~text.isin(order)
    if unknown.any() and not lenient:
        first = int(np.flatnonzero(unknown.to_numpy())[0])
        raise DataError(Problem(file=str(path), where=f"row {line_numbers[first]}, column {column}",
                                message=f"{quoted(values.astype('string').iloc[first])} is not one of the levels "
                                        f"the scale file lists for {column} ({order_text(order, codes)}); {int(unknown.sum())} "
                                        "such value(s)"))
    return pd.Series(pd.Categorical(text.where(~unknown), categories=list(order), ordered=True), name=column)


def check_ids(path: Path, frame: pd.DataFrame, id_column: str | None, line_numbers: np.ndarray) -> pd.Series:
    import pandas as pd
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
    ids = ids_as_text(raw, str(path), line_numbers)
    if ids.is_unique:  # one hash pass; the slower search for the duplicates only when there are some
        return ids.rename(id_column).reset_index(drop=True)
    duplicated = ids.duplicated(keep=False).to_numpy()
    first_value = ids[duplicated].iloc[0]
    rows = line_numbers[(ids == first_value).to_numpy()]
    raise DataError(Problem(file=str(path), where=f"column {id_column}",
                            message=f"id {quoted(first_value)} appears more than once (rows "
                                    f"{', '.join(str(r) for r in rows[:5])}); "
                                    f"{int(ids.duplicated().sum())} duplicate id(s) in all"))


def ids_as_text(raw: pd.Series, path_text: str = "", line_numbers: np.ndarray | None = None) -> pd.Series:
    """Ids as text, whole-number floats without '.0' (a spreadsheet's 17 is the id '17')."""
    import pandas as pd
    if pd.api.types.is_integer_dtype(raw.dtype):
        return raw.astype(str)
    if pd.api.types.is_float_dtype(raw.dtype):
        values = raw.to_numpy(dtype=np.float64)
        too_long = np.abs(values) >= 2.0**53  # beyond this a float no longer holds every whole number
        if too_long.any():
            first = int(np.flatnonzero(too_long)[0])
            row = f"row {line_numbers[first]}, " if line_numbers is not None else ""
            raise DataError(Problem(file=path_text, where=f"{row}column {raw.name}",
                                    message=f"the id {values[too_long][0]:.17g} is a number too long to be held "
                                            "exactly (the file stores it as a number); store the ids as text"))
        if np.all(np.mod(values, 1) == 0):
            return pd.Series(values.astype(np.int64).astype(str), index=raw.index)
        return raw.astype(str)
    return raw.astype(str).str.strip()
