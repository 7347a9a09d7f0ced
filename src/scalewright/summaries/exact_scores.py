"""Survey-weighted score values summed exactly: the weighted mean and sd of ``score`` on every route.

Scores of rating scales take few distinct values. Per distinct score this keeps the sum of the positive
weights of its rows exactly (a survey weight is ``w = m 2^e`` with a whole number ``m < 2^53``, so a sum
of weights is a whole number times a power of two: :mod:`scalewright.summaries.exact_weighted`), and the
sum of the squared weights of every such row exactly. Merged in any order, block by block or whole, the
sums are the same numbers, so the weighted mean, sd and moments taken from them
(:func:`~scalewright.stats.weighted_scores.exact_weighted_summary`) are the same to the bit however the
file was read: the z scores written from them are the same text on the whole-file and the block routes.

Hand-written because no library sums weights exactly per value. Each weight's ``m`` is cut into three
18-bit parts, summed per value by ``numpy.bincount`` in float64 (every partial sum a whole number below
2^53 for fewer than 2^35 rows, so exact whatever the order of the additions).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .exact_weighted import _PART_BITS, _PART_MASK, _as_int, _split_weights

#: rows per sum of products of two 18-bit parts: 2^16 x 2^36 < 2^53, so each such sum is exact in float64
_ROWS_PER_SQUARE_SUM = 1 << 16


@dataclass(frozen=True, eq=False)
class ExactWeightedScores:
    r"""Over the rows with a score and a positive weight: the distinct scores (ascending), per score the
    exact sum of the weights (``weight_int`` times ``2^weight_exp``) and the count of rows, and the exact
    :math:`\sum w^2` of these rows (``sum_w2_int`` times ``2^w2_exp``); ``n`` rows with a score (weights of
    zero included) and ``n_zero_weight`` of them with weight zero."""

    values: np.ndarray
    weight_int: np.ndarray  # object array of Python integers
    weight_exp: int | None
    rows: np.ndarray
    sum_w2_int: int
    w2_exp: int | None
    n: int
    n_zero_weight: int

    @classmethod
    def from_values(cls, scores: np.ndarray, weights: np.ndarray) -> ExactWeightedScores:
        """From one score per row (NaN: not scored) and its usable weight (0: left out)."""
        x = np.asarray(scores, dtype=np.float64)
        w = np.asarray(weights, dtype=np.float64)
        answered = ~np.isnan(x)
        used = answered & (w > 0)
        distinct, where = np.unique(x[used], return_inverse=True)
        where = where.ravel()
        positive = w[used]
        sums: tuple[Any, int | None] = (np.zeros(distinct.size, dtype=object), None)
        squares: tuple[int, int | None] = (0, None)
        if positive.size:
            m, e = _split_weights(positive)
            exponents, which = np.unique(e, return_inverse=True)
            cell = where * exponents.size + which.ravel()
            size = distinct.size * exponents.size
            flat = np.zeros(size, dtype=object)
            for j in range(3):
                part = ((m >> (_PART_BITS * j)) & _PART_MASK).astype(np.float64)
                flat = flat + _as_int(np.bincount(cell, weights=part, minlength=size)) * (1 << (_PART_BITS * j))
            total = flat.reshape(distinct.size, exponents.size)
            low = int(exponents[0])
            per_value = np.zeros(distinct.size, dtype=object)
            for column, exponent in enumerate(exponents):
                per_value = per_value + total[:, column] * (1 << (int(exponent) - low))
            sums = (per_value, low)
            squares = (_square_sum(m, which.ravel(), exponents), 2 * low)
        return cls(values=distinct, weight_int=sums[0], weight_exp=sums[1],
                   rows=np.bincount(where, minlength=distinct.size).astype(np.int64),
                   sum_w2_int=squares[0], w2_exp=squares[1],
                   n=int(np.count_nonzero(answered)), n_zero_weight=int(np.count_nonzero(answered & (w == 0))))

    def merge(self, other: ExactWeightedScores) -> ExactWeightedScores:
        distinct, where = np.unique(np.concatenate([self.values, other.values]), return_inverse=True)
        where = where.ravel()
        mine, theirs = where[:self.values.size], where[self.values.size:]  # each without repeats
        weight_int = np.zeros(distinct.size, dtype=object)
        rows = np.zeros(distinct.size, dtype=np.int64)
        low = min((e for e in (self.weight_exp, other.weight_exp) if e is not None), default=None)
        sum_w2_int = 0
        for positions, part in ((mine, self), (theirs, other)):
            rows[positions] += part.rows
            if part.weight_exp is not None and low is not None and part.w2_exp is not None:
                weight_int[positions] += part.weight_int * (1 << (part.weight_exp - low))
                sum_w2_int += part.sum_w2_int << (part.w2_exp - 2 * low)
        return ExactWeightedScores(values=distinct, weight_int=weight_int, weight_exp=low, rows=rows,
                                   sum_w2_int=sum_w2_int, w2_exp=None if low is None else 2 * low,
                                   n=self.n + other.n,
                                   n_zero_weight=self.n_zero_weight + other.n_zero_weight)

    @property
    def n_used(self) -> int:
        return int(self.rows.sum())


def _square_sum(m: np.ndarray, which: np.ndarray, exponents: np.ndarray) -> int:
    """The exact sum of ``w^2 = m^2 2^(2 e)`` over the rows, as a whole number times ``2^(2 min(e))``: ``m``
    cut into three 18-bit parts ``p``, ``m^2 = sum_ij p_i p_j 2^(18 (i + j))``, each product below 2^36."""
    parts = [((m >> (_PART_BITS * j)) & _PART_MASK).astype(np.float64) for j in range(3)]
    per_exponent = [0] * exponents.size
    for start in range(0, m.size, _ROWS_PER_SQUARE_SUM):
        piece = slice(start, start + _ROWS_PER_SQUARE_SUM)
        for i in range(3):
            for j in range(i, 3):
                summed = np.bincount(which[piece], weights=parts[i][piece] * parts[j][piece], minlength=exponents.size)
                for group, value in enumerate(summed):
                    per_exponent[group] += (int(value) << (_PART_BITS * (i + j))) * (1 if i == j else 2)
    low = int(exponents[0])
    return sum(total << (2 * (int(exponent) - low)) for total, exponent in zip(per_exponent, exponents, strict=True))


__all__ = ["ExactWeightedScores"]
