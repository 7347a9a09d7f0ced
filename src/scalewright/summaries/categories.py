"""Counts of the values of a categorical column (a subgroup or a tallied column), blanks counted apart."""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field

import numpy as np


def level_texts(values):
    """Each value as the text that names its level (None when missing): numbers as
    :func:`~scalewright.stats.subgroups.level_name` writes them (2.0 -> "2"), other values stripped."""
    import pandas as pd

    from ..stats.subgroups import level_name

    if pd.api.types.is_numeric_dtype(values.dtype) and not pd.api.types.is_bool_dtype(values.dtype):
        return values.map(lambda v: None if pd.isna(v) else level_name(v.item() if hasattr(v, "item") else v))
    text = values.astype("string").str.strip()
    present = (text.notna() & (text != "")).fillna(False).astype(bool)
    return text.astype(object).where(present, None)


@dataclass(frozen=True, eq=False)
class CategoryCounts:
    """``counts[value]``: rows holding ``value`` (as read, stripped text); ``missing``: rows with none."""

    counts: dict[str, int] = field(default_factory=dict)
    missing: int = 0

    @classmethod
    def from_values(cls, values) -> CategoryCounts:
        """Counts of an Arrow or pandas column or a sequence of texts (None or blank text is missing)."""
        import pandas as pd

        series = values.to_pandas() if hasattr(values, "to_pandas") else pd.Series(values)
        text = level_texts(series)
        present = text.dropna()
        counted = present.value_counts(sort=False)
        return cls(counts={str(k): int(v) for k, v in counted.items()}, missing=int(len(text) - len(present)))

    def merge(self, other: CategoryCounts) -> CategoryCounts:
        merged = Counter(self.counts)
        merged.update(other.counts)
        return CategoryCounts(counts=dict(merged), missing=self.missing + other.missing)

    @property
    def n(self) -> int:
        return int(sum(self.counts.values()) + self.missing)

    def as_series(self, order) -> np.ndarray:
        """Counts in the given order of values (0 for values never seen)."""
        return np.array([self.counts.get(value, 0) for value in order], dtype=np.int64)
