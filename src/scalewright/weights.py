"""Survey weights: one column of the data file read and checked like any other, one number per respondent.

A weight of zero means "left out of every estimate" (the row stays in row-level outputs and is counted as
``n_zero_weight``). A missing, negative, infinite or non-numeric weight is an error naming row and column,
unless the reading is lenient: then the row is left out like a zero weight and counted by kind.
"""
from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

import numpy as np
import pandas as pd

from .errors import DataError, Problem, quoted

SHOW_FIRST = 20  # bad weights listed one by one before the rest are only counted
BAD_KINDS = ("missing", "negative", "not_numeric", "not_finite")


@dataclass(frozen=True)
class SurveyWeights:
    """The usable weight of every row (0 where left out) and what reading them found.

    ``refused_kind`` holds, per row, the index in :data:`BAD_KINDS` of why its weight was refused (lenient
    reading), or -1; so a subset of rows (a subgroup, ids set aside) recounts everything from its own rows.
    """

    column: str
    values: np.ndarray
    refused_kind: np.ndarray

    @property
    def n(self) -> int:
        return int(self.values.size)

    @property
    def n_refused(self) -> int:
        return int(np.count_nonzero(self.refused_kind >= 0))

    @property
    def n_zero_weight(self) -> int:
        """Rows whose weight is zero as given (left out of the estimates, kept in row-level outputs)."""
        return int(np.count_nonzero((self.values == 0) & (self.refused_kind < 0)))

    @property
    def refused(self) -> dict[str, int]:
        counts = np.bincount(self.refused_kind[self.refused_kind >= 0], minlength=len(BAD_KINDS))
        return {kind: int(count) for kind, count in zip(BAD_KINDS, counts, strict=True) if count}

    def subset(self, positions: np.ndarray) -> SurveyWeights:
        return replace(self, values=self.values[positions], refused_kind=self.refused_kind[positions])

    def to_dict(self) -> dict[str, Any]:
        return {"weight_column": self.column, "n_zero_weight": self.n_zero_weight,
                "n_weight_refused": self.refused}


def _describe(kind: str, value: Any) -> str:
    wording = {"missing": "no weight given", "negative": "a negative weight",
               "not_numeric": "a weight that is not a number", "not_finite": "an infinite weight"}[kind]
    return wording if kind == "missing" else f"{quoted(value)} is {wording}"


def read_weights(frame: pd.DataFrame, column: str, line_numbers: np.ndarray, *, path: str,
                 lenient: bool = False) -> SurveyWeights:
    """Check the weight column and return its usable values.

    Raises ``DataError`` naming row and column of the first bad weights and their total, unless ``lenient``.
    """
    if column not in frame.columns:
        from .errors import did_you_mean

        raise DataError(Problem(file=path, line=1, message=f"the weight column {column!r} is not in the data file"
                                                            f"{did_you_mean(column, list(frame.columns))}"))
    raw = frame[column]
    numbers = pd.to_numeric(raw, errors="coerce").to_numpy(dtype=np.float64, na_value=np.nan)
    blank = raw.isna().to_numpy()
    kinds = {"missing": blank,
             "not_numeric": np.isnan(numbers) & ~blank,
             "not_finite": np.isinf(numbers),
             "negative": np.isfinite(numbers) & (numbers < 0)}
    bad = np.zeros(len(raw), dtype=bool)
    for mask in kinds.values():
        bad |= mask
    counts = {kind: int(np.count_nonzero(kinds[kind])) for kind in BAD_KINDS if kinds[kind].any()}
    if counts and not lenient:
        problems = []
        for row in np.flatnonzero(bad)[:SHOW_FIRST]:
            kind = next(k for k in BAD_KINDS if kinds[k][row])
            problems.append(Problem(file=path, where=f"row {line_numbers[row]}, column {column}",
                                    message=_describe(kind, raw.iloc[row])))
        total = int(np.count_nonzero(bad))
        remedy = "fix them, or use --lenient to leave those rows out of the estimates (counted)"
        if total == 1:
            only = problems[0]
            problems = [Problem(file=only.file, where=only.where, message=f"{only.message}; {remedy.replace('them', 'it', 1)}")]
        else:
            detail = ", ".join(f"{count} {kind.replace('_', ' ')}" for kind, count in counts.items())
            problems.append(Problem(file=path, where=f"column {column}",
                                    message=f"{total} weight(s) in all cannot be used ({detail}); {remedy}", total=True))
        raise DataError(problems)
    refused_kind = np.full(len(raw), -1, dtype=np.int8)
    for index, kind in reversed(list(enumerate(BAD_KINDS))):  # the first kind in BAD_KINDS names a row
        refused_kind[kinds[kind]] = index
    return SurveyWeights(column=column, values=np.where(bad, 0.0, numbers), refused_kind=refused_kind)
