"""Answer counts per item and level, and the exact integer cross-products of the answer codes.

All three are sums over rows, so the summary of two blocks is the sum of theirs. The cross-products are
those of :mod:`scalewright.stats.coded` (exact int64), so a covariance from merged blocks equals the one
from the whole file to the last bit.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..answer_codes import ItemAnswers
from ..errors import DataError
from ..stats.coded import (
    answer_tally,
    complete_rows,
    covariance_from_listwise_gram,
    covariance_from_pairwise_gram,
    listwise_gram,
    pairwise_gram,
)
from ..stats.item_covariance import ItemCovariance
from ..stats.missing_patterns import PatternSummary


def _same_shape(a: np.ndarray, b: np.ndarray, what: str) -> None:
    if a.shape != b.shape:
        raise DataError(f"cannot merge {what} of shapes {a.shape} and {b.shape}")


@dataclass(frozen=True, eq=False)
class AnswerCounts:
    """``tally[j, level]``: how many rows gave answer code ``level`` to item j; ``n_rows``: rows seen."""

    tally: np.ndarray
    n_rows: int

    @classmethod
    def from_codes(cls, codes: np.ndarray, n_levels: int) -> AnswerCounts:
        return cls(tally=answer_tally(ItemAnswers.from_codes(codes, 0, n_levels - 1), n_levels), n_rows=int(codes.shape[0]))

    def merge(self, other: AnswerCounts) -> AnswerCounts:
        _same_shape(self.tally, other.tally, "answer counts")
        return AnswerCounts(tally=self.tally + other.tally, n_rows=self.n_rows + other.n_rows)


@dataclass(frozen=True, eq=False)
class ListwiseCrossProducts:
    """:func:`~scalewright.stats.coded.listwise_gram` of the rows seen (complete rows only), and their count."""

    gram: np.ndarray
    n_rows: int

    @classmethod
    def from_codes(cls, codes: np.ndarray, *, span: int) -> ListwiseCrossProducts:
        return cls(gram=listwise_gram(codes, span=span), n_rows=int(codes.shape[0]))

    @classmethod
    def from_patterns(cls, patterns: PatternSummary) -> ListwiseCrossProducts:
        """The listwise cross-products of the rows summarised in ``patterns`` (made of answer codes): the
        complete pattern's count, sums and cross-products are exactly :func:`listwise_gram`'s integers."""
        if not patterns.exact:
            raise DataError("listwise cross-products need per-pattern sums of answer codes (exact integers)")
        k = patterns.k
        gram = np.zeros((k + 1, k + 1), dtype=np.int64)
        complete = np.flatnonzero(patterns.observed.all(axis=1))
        if complete.size:
            position = int(complete[0])
            gram[0, 0] = patterns.counts[position]
            gram[0, 1:] = gram[1:, 0] = np.asarray(patterns.sums[position], dtype=np.int64)
            gram[1:, 1:] = patterns.cross_products(position)
        return cls(gram=gram, n_rows=patterns.n_rows)

    def merge(self, other: ListwiseCrossProducts) -> ListwiseCrossProducts:
        _same_shape(self.gram, other.gram, "cross-products")
        return ListwiseCrossProducts(gram=self.gram + other.gram, n_rows=self.n_rows + other.n_rows)

    def covariance(self, *, low: int, high: int, reversed_mask: np.ndarray) -> ItemCovariance:
        return covariance_from_listwise_gram(self.gram, n_rows=self.n_rows, low=low, high=high,
                                             reversed_mask=reversed_mask)


@dataclass(frozen=True, eq=False)
class PairwiseCrossProducts:
    """:func:`~scalewright.stats.coded.pairwise_gram` of the rows seen, their count and the complete ones."""

    gram: np.ndarray
    n_rows: int
    n_complete: int

    @classmethod
    def from_codes(cls, codes: np.ndarray, *, span: int) -> PairwiseCrossProducts:
        return cls(gram=pairwise_gram(codes, span=span), n_rows=int(codes.shape[0]), n_complete=complete_rows(codes))

    def merge(self, other: PairwiseCrossProducts) -> PairwiseCrossProducts:
        _same_shape(self.gram, other.gram, "cross-products")
        return PairwiseCrossProducts(gram=self.gram + other.gram, n_rows=self.n_rows + other.n_rows,
                                     n_complete=self.n_complete + other.n_complete)

    def covariance(self, *, low: int, high: int, reversed_mask: np.ndarray) -> ItemCovariance:
        return covariance_from_pairwise_gram(self.gram, n_rows=self.n_rows, n_complete=self.n_complete, low=low,
                                             high=high, reversed_mask=reversed_mask)
