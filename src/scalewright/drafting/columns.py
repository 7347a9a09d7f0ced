"""Reading one column of the data file: its role (answers, id, category, text, date...), its values and stem."""
from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from .results import ColumnProfile
from .rules import (
    CATEGORY,
    CONSTANT,
    DATE,
    EMPTY,
    FREE_TEXT,
    ID,
    MAX_CATEGORY_LEVELS,
    MAX_RATING_POINTS,
    NUMBER,
    ODD_TEXT_SHARE,
    RATING,
    ROW_NUMBER,
    UNCLEAR,
)
from .wordings import is_answer_wording

# ----------------------------------------------------------------------------------------------------------
# reading one column


@dataclass(frozen=True, eq=False)
class ParsedColumn:
    """One column split into numbers and texts (internal)."""

    numbers: pd.Series  # float, NaN where blank or text
    texts: pd.Series  # stripped text where the value is not a number, else NA
    blank: np.ndarray


def _parse(series: pd.Series) -> ParsedColumn:
    if pd.api.types.is_bool_dtype(series.dtype):
        series = series.astype("string")
    if pd.api.types.is_numeric_dtype(series.dtype):
        numbers = pd.Series(series.to_numpy(dtype=np.float64, na_value=np.nan), index=series.index)
        return ParsedColumn(numbers=numbers, texts=pd.Series(pd.NA, index=series.index, dtype="string"),
                       blank=numbers.isna().to_numpy())
    stripped = series.astype("string").str.strip()
    blank = (stripped.isna() | (stripped == "")).to_numpy(dtype=bool)
    stripped = stripped.mask(blank)
    numbers = pd.to_numeric(stripped, errors="coerce").astype("float64")
    numbers = numbers.where(np.isfinite(numbers.to_numpy(dtype=np.float64, na_value=np.nan)))
    texts = stripped.where(numbers.isna() & ~blank)
    return ParsedColumn(numbers=numbers, texts=texts, blank=blank)


def _is_code_like(value: float, rest_low: float) -> bool:
    """9, 99, 999, 8, 88, 98 ... or a negative number below non-negative answers (common practice, no source)."""
    if not float(value).is_integer():
        return False
    nines = re.fullmatch(r"9+|8+|9+8", str(abs(int(value)))) is not None
    return nines or (value < 0 <= rest_low)


def _peel_codes(numbers: pd.Series, *, texts_are_answers: bool = False) \
        -> tuple[tuple[float, ...], tuple[float, ...], np.ndarray]:
    """Set apart "no answer" codes and rare odd values lying far outside the rest of the numbers.

    Returns (codes, odd values, the remaining distinct values). A value is far outside when at least one
    unused whole number separates it from the rest (gap >= 2); codes are code-like values (9, 99, -9 ...),
    odd values are other far values that are rare (at most 1 % of the numbers, at least 1). When the
    column's answers are texts, its numbers may all be codes (e.g. only 9 and 99 among answer texts).
    """
    counts = numbers.dropna().value_counts().sort_index()
    values = counts.index.to_numpy(dtype=np.float64)
    total = int(counts.sum())
    rare = max(1, math.floor(0.01 * total))
    codes: list[float] = []
    odd: list[float] = []
    while len(values) > (0 if texts_are_answers else 2):
        if len(values) == 1:
            if not _is_code_like(values[0], 0.0):
                break
            codes.append(float(values[0]))
            values = values[1:]
            break
        for end in (-1, 0):
            value = values[end]
            rest = values[:-1] if end == -1 else values[1:]
            gap = value - rest[-1] if end == -1 else rest[0] - value
            width = rest[-1] - rest[0]
            if _is_code_like(value, rest[0]) and (gap >= 2 or (value < 0 <= rest[0])):
                codes.append(float(value))
            elif gap >= 2 and gap > width and counts[value] <= rare:
                odd.append(float(value))
            else:
                continue
            values = rest
            break
        else:
            break
    return tuple(sorted(codes)), tuple(sorted(odd)), values


_ID_WORDS = {"id", "uuid", "guid", "respondent", "participant", "case", "record", "key"}


def _is_row_numbering(values: np.ndarray) -> bool:
    """0, 1, 2, ... or 1, 2, 3, ... in file order: the row numbers a spreadsheet or data frame export adds."""
    return bool(values[0] in (0, 1) and np.array_equal(values, values[0] + np.arange(values.size)))


def looks_like_id_name(name: str) -> bool:
    words = re.sub(r"([a-z])([A-Z])", r"\1 \2", name)
    tokens = {t.casefold() for t in re.split(r"[^A-Za-z0-9]+|(?<=[a-z])(?=\d)", words) if t}
    return bool(tokens & _ID_WORDS)


_DATE_FORMATS = ("ISO8601", "%d.%m.%Y", "%d/%m/%Y", "%m/%d/%Y", "%Y/%m/%d")


def _mostly_dates(texts: pd.Series) -> bool:
    if texts.empty:
        return False
    for form in _DATE_FORMATS:
        parsed = pd.to_datetime(texts, errors="coerce", format=form)
        if parsed.notna().mean() >= 0.9:
            return True
    return False


def _stem_of(name: str) -> str | None:
    """Shared name stem of numbered or lettered items: wl1 -> wl, support_a -> support, q1_2 -> q1."""
    found = re.fullmatch(r"(.*[A-Za-z].*?)[_\-. ]?(\d+)", name) or \
        re.fullmatch(r"(.*[A-Za-z0-9].*?)[_\-. ]([A-Za-z])", name)
    if not found:
        return None
    # punctuation around a stem ("yes: 3", "#yes 4") is decoration, not part of the name
    return re.sub(r"^[^A-Za-z0-9]+|[^A-Za-z0-9]+$", "", found.group(1)) or None


def profile_column(name: str, series: pd.Series) -> tuple[ColumnProfile, ParsedColumn]:
    """Decide the role of one column from its values (and, for ids, its name)."""
    parsed = _parse(series)
    n_blank = int(parsed.blank.sum())
    n_values = len(series) - n_blank
    base: dict[str, Any] = {"name": name, "n_values": n_values, "n_blank": n_blank, "stem": _stem_of(name)}
    if n_values == 0:
        return ColumnProfile(role=EMPTY, reason="every cell is blank", n_distinct=0, **base), parsed
    if pd.api.types.is_datetime64_any_dtype(series.dtype):
        return ColumnProfile(role=DATE, reason="values are dates", n_distinct=int(series.nunique()), **base), parsed
    texts = parsed.texts.dropna()
    distinct_texts = tuple(pd.unique(texts))
    numbers = parsed.numbers.dropna()
    n_distinct = int(pd.Series(series[~parsed.blank]).astype("string").str.strip().nunique())
    base["n_distinct"] = n_distinct
    if pd.api.types.is_bool_dtype(series.dtype):
        return ColumnProfile(role=CATEGORY, reason="yes/no values", texts=distinct_texts, **base), parsed

    unknown = tuple(t for t in distinct_texts if not is_answer_wording(t))
    known = tuple(t for t in distinct_texts if is_answer_wording(t))
    codes, odd, answers = _peel_codes(numbers, texts_are_answers=bool(known))
    low, high = (float(answers[0]), float(answers[-1])) if len(answers) else (None, None)
    integer_answers = bool(len(answers)) and bool(np.all(np.equal(np.mod(answers, 1), 0)))
    rating_numbers = len(answers) == 0 or (integer_answers and low is not None and high is not None
                                           and high - low + 1 <= MAX_RATING_POINTS)
    numeric: dict[str, Any] = {"low": low, "high": high, "codes": codes, "odd_values": odd}

    if (distinct_texts and not numbers.empty) or known:
        unknown_count = int(texts.isin(unknown).sum())
        if not rating_numbers:
            return ColumnProfile(role=UNCLEAR, reason="numbers with a wide range mixed with texts",
                                 texts=distinct_texts, **numeric, **base), parsed
        if unknown_count <= ODD_TEXT_SHARE * n_values and (known or len(answers) >= 2):
            return ColumnProfile(role=RATING, reason="answer codes and texts" if known and len(answers)
                                 else ("answer texts" if known else "answer codes"),
                                 texts=known, odd_texts=unknown, **numeric, **base), parsed
        return ColumnProfile(role=UNCLEAR, reason=f"answer-like values mixed with {len(unknown)} other text(s) "
                             f"(e.g. {unknown[0]!r})", texts=distinct_texts, **numeric, **base), parsed
    if distinct_texts:
        if _mostly_dates(texts):
            return ColumnProfile(role=DATE, reason="texts that read as dates", **base), parsed
        if n_distinct == 1:
            return ColumnProfile(role=CONSTANT, reason=f"one value only ({distinct_texts[0]!r})", **base), parsed
        if n_distinct == n_values and not texts.str.contains(r"\s", regex=True).any() \
                and texts.str.len().max() <= 40:
            if n_blank:
                return ColumnProfile(role=UNCLEAR, reason=f"distinct values like an id, but {n_blank} blank",
                                     **base), parsed
            return ColumnProfile(role=ID, reason="every value distinct", **base), parsed
        if n_distinct <= MAX_CATEGORY_LEVELS and n_distinct <= n_values / 2:
            return ColumnProfile(role=CATEGORY, reason=f"{n_distinct} text levels", texts=distinct_texts,
                                 **base), parsed
        return ColumnProfile(role=FREE_TEXT, reason=f"{n_distinct} distinct texts", **base), parsed
    # numbers only
    if numbers.nunique() == 1:
        return ColumnProfile(role=CONSTANT, reason=f"one value only ({numbers.iloc[0]:g})", **base), parsed
    all_integers = bool(np.all(np.equal(np.mod(numbers.to_numpy(), 1), 0)))
    if all_integers and not n_blank and n_values >= 3 and _is_row_numbering(numbers.to_numpy()):
        return ColumnProfile(role=ROW_NUMBER, reason=f"row numbers {numbers.iloc[0]:g} to {numbers.iloc[-1]:g} in "
                             "file order, not a respondent id", **base), parsed
    # serial numbers are dense; distinct whole numbers spread far wider than n are more likely counts or durations
    dense = numbers.max() - numbers.min() < 2 * n_values
    if all_integers and n_distinct == n_values and (looks_like_id_name(name) or (dense and not rating_numbers)):
        if n_blank:
            return ColumnProfile(role=UNCLEAR, reason=f"distinct whole numbers like an id, but {n_blank} blank",
                                 **base), parsed
        return ColumnProfile(role=ID, reason="whole numbers, every value distinct", **base), parsed
    if rating_numbers and len(answers) >= 2:
        return ColumnProfile(role=RATING, reason="answer codes", **numeric, **base), parsed
    span = f"{numbers.min():g} to {numbers.max():g}"
    kind = "whole numbers" if all_integers else "numbers with decimals"
    return ColumnProfile(role=NUMBER, reason=f"{kind} from {span}, too many values for answers (ages, counts or "
                         "durations?)",
                         low=float(numbers.min()), high=float(numbers.max()), **base), parsed
