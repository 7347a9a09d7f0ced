"""A block's group column as the levels the scale file lists: its codes named, numbers matched numerically.

The block reader's side of :func:`scalewright.data._ordered_levels` (the whole-file reader), by the same
steps, so both routes see the same levels: a value written as a code the scale file names
(``{gender: {1: woman, 2: man}}``) becomes the name (``1.0`` read from a float column is the code ``1``),
and a number matches a listed numeric level numerically (``3.0`` is the level ``3``).
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence

import pandas as pd

from ..text_cells import is_plain_number


def named_levels(text: pd.Series, order: Sequence[str], codes: Mapping[str, str] | None = None) -> pd.Series:
    """``text`` (stripped, blanks already missing) with codes named and numeric levels matched."""
    if codes:
        whole = text.str.replace(r"^(-?\d+)\.0+$", r"\1", regex=True)
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
