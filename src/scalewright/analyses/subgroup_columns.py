"""Which columns may split respondents into subgroups: a column with too many levels is refused, not used.

A subgroup column with dozens of levels (an age in years, a free-text answer) gives subgroups too small to
describe and thousands of pairwise tests; the commands and the report refuse it before any analysis runs.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import UsageError
from ..results import ResultMixin

if TYPE_CHECKING:
    import pandas as pd

if TYPE_CHECKING:
    from ..responses import Responses

#: the most levels a subgroup column may have unless ``--max-levels`` says otherwise (our own choice: beyond
#: about twenty groups the tables and the pairwise tests stop being readable)
DEFAULT_MAX_LEVELS = 20


@dataclass(frozen=True)
class LevelCount(ResultMixin):
    """The distinct values of one column, and whether they look like a continuous number."""

    column: str
    levels: int
    numeric: bool
    low: float | None = None
    high: float | None = None
    looks_continuous: bool = False


def count_levels(values: pd.Series, *, column: str) -> LevelCount:
    """Distinct non-blank values of ``values``; for numbers, their range and whether they look continuous.

    Numbers look continuous when some are not whole, or when the distinct whole numbers fill at least half
    of the range between the smallest and the largest (our own rule of thumb: an age or a score, not codes).
    """
    import pandas as pd
    present = pd.Series(values).dropna()
    if present.dtype == object or pd.api.types.is_string_dtype(present.dtype):
        present = present.astype(str).str.strip()
        present = present[present != ""]
    uniques = pd.unique(present)
    numbers = pd.to_numeric(pd.Series(uniques, dtype=object), errors="coerce")
    if len(uniques) == 0 or numbers.isna().any():
        return LevelCount(column=column, levels=len(uniques), numeric=False)
    distinct = np.unique(numbers.to_numpy(dtype=float))  # '3' and '3.0' are one number
    low, high = float(distinct.min()), float(distinct.max())
    whole = bool(np.all(np.mod(distinct, 1) == 0))
    dense = whole and len(distinct) >= 0.5 * (high - low + 1)
    return LevelCount(column=column, levels=len(distinct), numeric=True, low=low, high=high,
                      looks_continuous=(not whole) or dense)


def _number(value: float | None) -> str:
    return "" if value is None else f"{value:g}"


def check_level_counts(responses: Responses, columns: Sequence[str], *, max_levels: int = DEFAULT_MAX_LEVELS) -> None:
    """Raise ``UsageError`` for the first subgroup column with more than ``max_levels`` levels.

    The message suggests binning the column, and says so when its values look like a continuous number.
    """
    if max_levels < 2:
        raise UsageError(f"--max-levels must be at least 2, got {max_levels}")
    for column in columns:
        count = count_levels(responses.column(column), column=column)
        if count.levels <= max_levels:
            continue
        message = (f"subgroup column {column!r} has {count.levels} levels, more than --max-levels {max_levels}: "
                   "groups that many are too small to describe and too many to compare")
        if count.looks_continuous:
            message += (f"; its values are numbers from {_number(count.low)} to {_number(count.high)} and look "
                        "continuous: bin them into a few ranges in a column of their own (e.g. 18-29, 30-39, ...)")
        else:
            message += "; merge its levels into fewer groups in a column of their own"
        raise UsageError(message + f", or raise --max-levels to {count.levels} to use it as it is")
