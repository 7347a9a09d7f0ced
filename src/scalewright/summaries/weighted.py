"""Weighted mergeable summaries: what the weighted estimates of a block of rows are computed from.

Survey weights make the sums floats (sums of weights, of weighted answers and cross-products, of squared
weights for Kish's effective n), so a merged summary equals the whole file's to rounding (1e-12), not to
the bit; the counts beside them (rows used, zero weights, refused weights) are exact. What reading the
weight column found is a mergeable summary too (:class:`WeightReading`), with the global row number of
the first refused weights, so a bad weight in block 900 is named as on the whole-file route.
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..answer_codes import MISSING
from ..weights import BAD_KINDS, SHOW_FIRST
from .scores import score_cells


@dataclass(frozen=True, eq=False)
class WeightReading:
    """Per kind (:data:`~scalewright.weights.BAD_KINDS`) the refused weights, the first refused ones with
    their place ``(part, row, file)`` and value as read, and the rows whose weight is zero as given."""

    refused: dict[str, int] = field(default_factory=dict)
    first: tuple[tuple[tuple, Any, str], ...] = ()
    n_zero_weight: int = 0

    def merge(self, other: WeightReading) -> WeightReading:
        refused = Counter(self.refused)
        refused.update(other.refused)
        first = tuple(sorted((*self.first, *other.first), key=lambda found: found[0])[:SHOW_FIRST])
        return WeightReading(refused=dict(refused), first=first, n_zero_weight=self.n_zero_weight + other.n_zero_weight)


def block_weights(raw: Any, start: tuple) -> tuple[np.ndarray, WeightReading]:
    """The usable weight of each row of a block (0 where refused) and what reading them found, by the
    rules of :func:`~scalewright.weights.read_weights`. ``start`` is the place of the block's first row."""
    import pandas as pd

    raw = raw.to_pandas() if hasattr(raw, "to_pandas") else pd.Series(raw)
    numbers = pd.to_numeric(raw, errors="coerce").to_numpy(dtype=np.float64, na_value=np.nan)
    blank = raw.isna().to_numpy().copy()
    if raw.dtype == object or pd.api.types.is_string_dtype(raw.dtype):
        blank |= (raw.astype("string").str.strip() == "").fillna(False).to_numpy(dtype=bool)
    kinds = {"missing": blank, "not_numeric": np.isnan(numbers) & ~blank, "not_finite": np.isinf(numbers),
             "negative": np.isfinite(numbers) & (numbers < 0)}
    bad = np.zeros(len(raw), dtype=bool)
    for mask in kinds.values():
        bad |= mask
    first = []
    for row in np.flatnonzero(bad)[:SHOW_FIRST]:
        kind = next(k for k in BAD_KINDS if kinds[k][row])
        value = raw.iloc[row]
        first.append(((start[0], start[1] + int(row), start[2]), value.item() if hasattr(value, "item") else value,
                      kind))
    refused = {kind: int(np.count_nonzero(kinds[kind])) for kind in BAD_KINDS if kinds[kind].any()}
    values = np.where(bad, 0.0, numbers)
    return values, WeightReading(refused=refused, first=tuple(first),
                                 n_zero_weight=int(np.count_nonzero((values == 0) & ~bad)))


@dataclass(frozen=True, eq=False)
class WeightedCrossProducts:
    r"""Over the rows answering every item with a positive weight: :math:`G = X' \mathrm{diag}(w) X` with
    :math:`X = [1\; \mathrm{codes}]` (so :math:`G_{00} = \sum w`), :math:`\sum w^2`, how many such rows, and
    the complete rows with weight zero."""

    gram: np.ndarray
    sum_w2: float
    n_used: int
    n_zero_weight: int

    @classmethod
    def from_codes(cls, codes: np.ndarray, weights: np.ndarray) -> WeightedCrossProducts:
        complete = (codes != MISSING).all(axis=1) if codes.shape[1] else np.ones(codes.shape[0], dtype=bool)
        used = complete & (weights > 0)
        design = np.empty((int(used.sum()), codes.shape[1] + 1))
        design[:, 0] = 1.0
        design[:, 1:] = codes[used]
        w = weights[used]
        return cls(gram=design.T @ (design * w[:, None]), sum_w2=float(w @ w), n_used=int(used.sum()),
                   n_zero_weight=int(np.count_nonzero(complete & (weights == 0))))

    def merge(self, other: WeightedCrossProducts) -> WeightedCrossProducts:
        return WeightedCrossProducts(gram=self.gram + other.gram, sum_w2=self.sum_w2 + other.sum_w2,
                                     n_used=self.n_used + other.n_used,
                                     n_zero_weight=self.n_zero_weight + other.n_zero_weight)

    @property
    def sum_w(self) -> float:
        return float(self.gram[0, 0])

    def covariance(self, reversed_mask: np.ndarray) -> np.ndarray:
        r"""The weighted covariance of the keyed items, numpy's ``cov(aweights=w, ddof=1)``:
        :math:`(C - s s'/V_1) / (V_1 - V_2/V_1)`; reverse keying flips an item's signs."""
        k = self.gram.shape[0] - 1
        if self.n_used < 2:
            return np.full((k, k), np.nan)
        v1 = self.sum_w
        sums, cross = self.gram[0, 1:], self.gram[1:, 1:]
        cov = (cross - np.outer(sums, sums) / v1) / (v1 - self.sum_w2 / v1)
        sign = np.where(np.asarray(reversed_mask, dtype=bool), -1.0, 1.0)
        return cov * np.outer(sign, sign)


@dataclass(frozen=True, eq=False)
class WeightedAnswers:
    """Per item and answer code the sum of the positive weights of the rows giving it (``tally``), per item
    the sum of their squares (``sum_w2``) and how many such rows (``rows``), and the sum of every positive
    weight (``total``)."""

    tally: np.ndarray
    sum_w2: np.ndarray
    rows: np.ndarray
    total: float

    @classmethod
    def from_codes(cls, codes: np.ndarray, weights: np.ndarray, n_levels: int) -> WeightedAnswers:
        k = codes.shape[1]
        positive = weights > 0
        tally = np.zeros((k, n_levels))
        sum_w2 = np.zeros(k)
        rows = np.zeros(k, dtype=np.int64)
        for j in range(k):
            given = positive & (codes[:, j] != MISSING)
            tally[j] = np.bincount(codes[given, j], weights=weights[given], minlength=n_levels)[:n_levels]
            sum_w2[j] = float(weights[given] @ weights[given])
            rows[j] = int(given.sum())
        return cls(tally=tally, sum_w2=sum_w2, rows=rows, total=float(weights[positive].sum()))

    def merge(self, other: WeightedAnswers) -> WeightedAnswers:
        return WeightedAnswers(tally=self.tally + other.tally, sum_w2=self.sum_w2 + other.sum_w2,
                               rows=self.rows + other.rows, total=self.total + other.total)


@dataclass(frozen=True, eq=False)
class WeightedScoreCounts:
    """Per cell (answered items a, keyed offset sum s) of :class:`~scalewright.summaries.ScoreCounts`: the
    sum of the positive weights, of their squares, and the count of such rows."""

    sum_w: np.ndarray
    sum_w2: np.ndarray
    rows: np.ndarray

    @classmethod
    def from_codes(cls, codes: np.ndarray, weights: np.ndarray, *, low: int, high: int,
                   reversed_mask: np.ndarray) -> WeightedScoreCounts:
        k = codes.shape[1]
        span = int(high - low)
        width = k * span + 1
        cell = score_cells(codes, span, reversed_mask)[weights > 0]
        w = weights[weights > 0]
        size = (k + 1) * width
        return cls(sum_w=np.bincount(cell, weights=w, minlength=size).reshape(k + 1, width),
                   sum_w2=np.bincount(cell, weights=w * w, minlength=size).reshape(k + 1, width),
                   rows=np.bincount(cell, minlength=size).reshape(k + 1, width).astype(np.int64))

    def merge(self, other: WeightedScoreCounts) -> WeightedScoreCounts:
        return WeightedScoreCounts(sum_w=self.sum_w + other.sum_w, sum_w2=self.sum_w2 + other.sum_w2,
                                   rows=self.rows + other.rows)

    def values(self, scores: Any) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """The distinct scores (ascending) with their sums of weights, of squared weights and row counts;
        ``scores`` is the scale's :class:`~scalewright.summaries.ScoreCounts` (it knows how a score is made)."""
        needed = max(scores.k if scores.required is None else int(scores.required), 1)
        answered, total = np.nonzero(self.rows[needed:])
        answered = answered + needed
        sums = (answered * scores.low + total).astype(np.float64)
        value = sums / answered * (scores.k if scores.method == "sum" else 1)
        distinct, inverse = np.unique(value, return_inverse=True)

        def summed(table: np.ndarray) -> np.ndarray:
            return np.bincount(inverse, weights=table[answered, total], minlength=distinct.size)

        return distinct, summed(self.sum_w), summed(self.sum_w2), summed(self.rows).astype(np.int64)


@dataclass(frozen=True, eq=False)
class WeightedCategoryCounts:
    """Per value of a categorical column (as read, text stripped): the sum of the positive weights of its
    rows, of their squares, how many such rows, and how many of its rows have weight zero."""

    sum_w: dict[str, float] = field(default_factory=dict)
    sum_w2: dict[str, float] = field(default_factory=dict)
    rows: dict[str, int] = field(default_factory=dict)
    zero: dict[str, int] = field(default_factory=dict)
    total: float = 0.0

    @classmethod
    def from_values(cls, values: Any, weights: np.ndarray) -> WeightedCategoryCounts:
        import pandas as pd

        from .categories import level_texts

        series = values.to_pandas() if hasattr(values, "to_pandas") else pd.Series(values)
        text = level_texts(series.reset_index(drop=True)).to_numpy(dtype=object)
        present = np.array([value is not None for value in text], dtype=bool)
        positive = present & (weights > 0)
        frame = pd.DataFrame({"key": text[positive], "w": weights[positive]})
        grouped = frame.groupby("key", sort=False)["w"]
        zero = pd.Series(text[present & (weights == 0)]).value_counts(sort=False)
        return cls(sum_w={str(k): float(v) for k, v in grouped.sum().items()},
                   sum_w2={str(k): float(v) for k, v in (frame.assign(w=frame["w"] ** 2).groupby("key", sort=False)["w"]
                                                         .sum().items())},
                   rows={str(k): int(v) for k, v in grouped.size().items()},
                   zero={str(k): int(v) for k, v in zero.items()}, total=float(weights[weights > 0].sum()))

    def merge(self, other: WeightedCategoryCounts) -> WeightedCategoryCounts:
        def added(a: dict, b: dict) -> dict:
            out = dict(a)
            for key, value in b.items():
                out[key] = out.get(key, 0) + value
            return out

        return WeightedCategoryCounts(sum_w=added(self.sum_w, other.sum_w), sum_w2=added(self.sum_w2, other.sum_w2),
                                      rows=added(self.rows, other.rows), zero=added(self.zero, other.zero),
                                      total=self.total + other.total)
