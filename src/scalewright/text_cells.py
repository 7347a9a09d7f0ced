"""Which text cells are "no answer": only blank ones and the texts the scale file lists, each counted.

A survey platform writes answers as texts, and texts such as "None", "Never" or "-" are often answers
("How often ...? None"). So the parser reads only empty cells as blank; a cell of spaces, or one of the
scale file's ``missing_texts`` (default ``NA``, ``N/A``, ``#N/A``; matched ignoring case and spacing, as
answer labels are), becomes missing here, and every such cell is counted by column and by text.
"""
from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    import pandas as pd

#: a number as a person types one: ASCII digits, one optional sign, point and exponent. Python's float()
#: also takes "1_2", "nan", "inf", "0x3"-like forms elsewhere and digits of other scripts, none of which
#: is an answer code.
PLAIN_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?", re.ASCII)


def is_plain_number(text: object) -> bool:
    return PLAIN_NUMBER.fullmatch(str(text).strip()) is not None


def normalise(text: object) -> str:
    """Case- and whitespace-insensitive form of a cell's text (as answer labels are matched)."""
    return " ".join(str(text).split()).casefold()


@dataclass
class MissingCells:
    """Cells read as missing: blank ones per column, and listed texts per column and text."""

    blank: dict[str, int] = field(default_factory=dict)
    texts: dict[str, dict[str, int]] = field(default_factory=dict)


def clear_missing_texts(frame: pd.DataFrame, missing_texts: Sequence[str], *, skip: Sequence[str] = (),
                        count_blank: Sequence[str] | None = None) -> tuple[pd.DataFrame, MissingCells]:
    """``frame`` with blank text cells and cells holding one of ``missing_texts`` missing (a copy where
    changed); and how many cells were read as missing: listed texts in every column, blank cells in the
    columns of ``count_blank`` (default: every column).

    A text column whose remaining cells are all plain numbers becomes numeric, as the parser would have
    typed it without those cells. Columns in ``skip`` (ids) are left exactly as read.
    """
    import pandas as pd
    listed = {normalise(text): text for text in missing_texts}
    found = MissingCells()
    changed: dict[str, pd.Series] = {}
    for name, dtype in zip(frame.columns, frame.dtypes, strict=True):
        counted = count_blank is None or name in count_blank
        if name in skip or not (counted or dtype == object or pd.api.types.is_string_dtype(dtype)):
            continue  # a numeric column holds no text; its blanks are counted only when asked for
        column = frame[name]
        if dtype == object or pd.api.types.is_string_dtype(dtype):
            cleared, texts = _clear_column(column, listed)
            if texts:
                found.texts[name] = texts
            if cleared is not column:
                changed[name] = cleared
                column = cleared
        if counted:
            blank = int(column.isna().sum()) - sum(found.texts.get(name, {}).values())
            if blank:
                found.blank[name] = blank
    if changed:
        frame = frame.copy()
        for name, column in changed.items():
            frame[name] = column
    return frame, found


def clear_column_texts(column: pd.Series, missing_texts: Sequence[str]) -> pd.Series:
    """One column as :func:`clear_missing_texts` leaves it (a column of another type than text as it is)."""
    import pandas as pd

    if not (column.dtype == object or pd.api.types.is_string_dtype(column.dtype)):
        return column
    return _clear_column(column, {normalise(text): text for text in missing_texts})[0]


def _clear_column(column: pd.Series, listed: dict[str, str]) -> tuple[pd.Series, dict[str, int]]:
    """One text column with blank and listed cells missing (the same object when none is), and the count
    of each listed text."""
    import pandas as pd
    positions, uniques = pd.factorize(column)
    if not len(uniques):
        return column, {}
    is_text = np.fromiter((isinstance(value, str) for value in uniques), dtype=bool, count=len(uniques))
    forms = [normalise(value) if text else None for value, text in zip(uniques, is_text, strict=True)]
    clear = np.array([form == "" or form in listed for form in forms], dtype=bool)
    if not clear.any():
        return column, {}
    counts = np.bincount(positions[positions >= 0], minlength=len(uniques))
    texts: dict[str, int] = {}
    for index in np.flatnonzero(clear):
        form = forms[index]
        if form:
            text = listed[form]
            texts[text] = texts.get(text, 0) + int(counts[index])
    kept_uniques = [value for value, cleared in zip(uniques, clear, strict=True) if not cleared]
    cleared_positions = np.where(clear[np.maximum(positions, 0)] | (positions < 0), -1, positions)
    result = column.mask(cleared_positions < 0)
    if kept_uniques and all(isinstance(value, str) and is_plain_number(value) for value in kept_uniques):
        result = pd.to_numeric(result.str.strip())
    elif not kept_uniques:
        result = pd.Series(np.full(len(column), np.nan), index=column.index, name=column.name)
    return result, texts
