"""Weighted cross-products summed exactly, so a weighted covariance does not depend on the order of the rows.

A survey weight is a binary float: ``w = m 2^e`` with a whole number ``m < 2^53``. Each weighted
cross-product ``sum w x_i x_j`` of answer codes is therefore a whole number times a power of two, and is
kept here as one (a Python integer and an exponent): merging two summaries adds whole numbers, exactly, in
any order. The factor fits of ``structure`` and ``confirm`` are iterative and carry a last-bit difference
in the covariance into their loadings (about 1e-10); from these sums the weighted covariance is the same
to the bit on every route (a file read whole, in blocks, on Dask partitions).

Hand-written because no library sums weighted cross-products exactly. The sums are taken with BLAS in
float64 on pieces small enough that every partial sum is a whole number below 2^53 (so exact whatever the
order of the additions): the 53-bit ``m`` is cut into three 18-bit parts, codes are at most 255.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..answer_codes import MISSING

_PART_BITS = 18
_PART_MASK = (1 << _PART_BITS) - 1
#: rows per product: 2^18 rows x 2^18 x 255^2 < 2^53, so every partial sum of a product is exact in float64
_ROWS_PER_PRODUCT = 1 << 16


def _as_int(values: np.ndarray) -> np.ndarray:
    """Whole numbers held in float64 (below 2^53) as an object array of Python integers."""
    return np.array([int(v) for v in values.ravel()], dtype=object).reshape(values.shape)


def _aligned(a: tuple[Any, int | None], b: tuple[Any, int | None]) -> tuple[Any, int | None]:
    """The sum of two (whole number or object array of them, exponent) values, at the smaller exponent
    (exponent None: nothing summed yet)."""
    (na, ea), (nb, eb) = a, b
    if ea is None:
        return nb, eb
    if eb is None:
        return na, ea
    low = min(ea, eb)
    return na * (1 << (ea - low)) + nb * (1 << (eb - low)), low


def _split_weights(weights: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``(m, e)`` with ``w = m 2^e``, ``m`` a whole number below 2^53 (int64), for positive finite weights."""
    fraction, exponent = np.frexp(weights)
    return (fraction * float(1 << 53)).astype(np.int64), exponent.astype(np.int64) - 53


@dataclass(frozen=True, eq=False)
class ExactWeightedCrossProducts:
    r"""Over the rows answering every item with a positive weight: :math:`G = X' \mathrm{diag}(w) X` with
    :math:`X = [1\; \mathrm{codes}]` and :math:`\sum w^2`, each exact (whole numbers ``gram_int`` times
    ``2^gram_exp``, ``sum_w2_int`` times ``2^w2_exp``); how many such rows, and the complete rows with weight
    zero. The interface of :class:`~scalewright.summaries.weighted.WeightedCrossProducts`."""

    gram_int: np.ndarray  # object array of Python integers
    gram_exp: int | None
    sum_w2_int: int
    w2_exp: int | None
    n_used: int
    n_zero_weight: int

    @classmethod
    def from_codes(cls, codes: np.ndarray, weights: np.ndarray) -> ExactWeightedCrossProducts:
        k = codes.shape[1]
        complete = (codes != MISSING).all(axis=1) if k else np.ones(codes.shape[0], dtype=bool)
        used = complete & (weights > 0)
        zero = int(np.count_nonzero(complete & (weights == 0)))
        gram: tuple[np.ndarray, int | None] = (np.zeros((k + 1, k + 1), dtype=object), None)
        squares: tuple[Any, int | None] = (0, None)
        if used.any():
            m, e = _split_weights(weights[used])
            design = np.empty((int(used.sum()), k + 1))
            design[:, 0] = 1.0
            design[:, 1:] = codes[used]
            parts = [(m >> (_PART_BITS * j)) & _PART_MASK for j in range(3)]
            for exponent in np.unique(e):
                rows = np.flatnonzero(e == exponent)
                total, square = np.zeros((k + 1, k + 1), dtype=object), 0
                for start in range(0, rows.size, _ROWS_PER_PRODUCT):
                    piece = rows[start:start + _ROWS_PER_PRODUCT]
                    x = design[piece]
                    p = [part[piece].astype(np.float64) for part in parts]
                    for j in range(3):
                        total = total + _as_int(x.T @ (x * p[j][:, None])) * (1 << (_PART_BITS * j))
                        for i in range(3):  # m^2 = sum_ij p_i p_j 2^(18 (i + j)); each dot below 2^53
                            square += int(p[i] @ p[j]) << (_PART_BITS * (i + j))
                gram = _aligned(gram, (total, int(exponent)))
                squares = _aligned(squares, (square, 2 * int(exponent)))
        return cls(gram_int=gram[0], gram_exp=gram[1], sum_w2_int=squares[0], w2_exp=squares[1],
                   n_used=int(used.sum()), n_zero_weight=zero)

    def merge(self, other: ExactWeightedCrossProducts) -> ExactWeightedCrossProducts:
        gram = _aligned((self.gram_int, self.gram_exp), (other.gram_int, other.gram_exp))
        square = _aligned((self.sum_w2_int, self.w2_exp), (other.sum_w2_int, other.w2_exp))
        return ExactWeightedCrossProducts(gram_int=gram[0], gram_exp=gram[1], sum_w2_int=square[0],
                                          w2_exp=square[1], n_used=self.n_used + other.n_used,
                                          n_zero_weight=self.n_zero_weight + other.n_zero_weight)

    @property
    def _gram_exp(self) -> int:
        return 0 if self.gram_exp is None else self.gram_exp  # None only when no row was used

    @property
    def _w2_exp(self) -> int:
        return 0 if self.w2_exp is None else self.w2_exp

    @staticmethod
    def _ratio(numerator: int, num_exp: int, denominator: int, den_exp: int) -> float:
        """``numerator 2^num_exp / (denominator 2^den_exp)`` correctly rounded (Python's integer division)."""
        shift = num_exp - den_exp
        if shift >= 0:
            return (numerator << shift) / denominator
        return numerator / (denominator << -shift)

    @property
    def sum_w(self) -> float:
        return self._ratio(int(self.gram_int[0, 0]), self._gram_exp, 1, 0) if self.n_used else 0.0

    @property
    def sum_w2(self) -> float:
        return self._ratio(self.sum_w2_int, self._w2_exp, 1, 0) if self.n_used else 0.0

    @property
    def effective_n(self) -> float:
        """Kish's effective n, :math:`(\\sum w)^2 / \\sum w^2`, correctly rounded from the exact sums."""
        if not self.n_used:
            return 0.0
        v1 = int(self.gram_int[0, 0])
        return self._ratio(v1 * v1, 2 * self._gram_exp, self.sum_w2_int, self._w2_exp)

    def covariance(self, reversed_mask: np.ndarray) -> np.ndarray:
        r"""The weighted covariance of the keyed items, numpy's ``cov(aweights=w, ddof=1)``:
        :math:`(V_1 C - s s') / (V_1^2 - V_2)`, each cell the correctly rounded ratio of exact sums; reverse
        keying flips an item's signs."""
        k = self.gram_int.shape[0] - 1
        if self.n_used < 2:
            return np.full((k, k), np.nan)
        g, e, e2 = self.gram_int, self._gram_exp, self._w2_exp
        v1 = int(g[0, 0])
        # V1^2 - V2 at the exponent min(2e, e2), a whole number
        low = min(2 * e, e2)
        denominator = (v1 * v1 << (2 * e - low)) - (self.sum_w2_int << (e2 - low))
        sign = np.where(np.asarray(reversed_mask, dtype=bool), -1.0, 1.0)
        cov = np.empty((k, k))
        for i in range(k):
            for j in range(i, k):
                numerator = v1 * int(g[i + 1, j + 1]) - int(g[0, i + 1]) * int(g[0, j + 1])
                cov[i, j] = cov[j, i] = self._ratio(numerator, 2 * e, denominator, low) * sign[i] * sign[j]
        return cov


def _exact_products(design: np.ndarray, squared: np.ndarray, weights: np.ndarray) \
        -> tuple[tuple[Any, int | None], tuple[Any, int | None]]:
    """``(D' diag(w) D, S' diag(w^2) S)``, each exact (an object array of whole numbers and an exponent), for
    a design ``D`` and ``S`` of whole numbers from 0 to 255 and positive finite weights ``w``: the products
    of :class:`ExactWeightedCrossProducts`, on any design."""
    total: tuple[Any, int | None] = (np.zeros((design.shape[1],) * 2, dtype=object), None)
    squares: tuple[Any, int | None] = (np.zeros((squared.shape[1],) * 2, dtype=object), None)
    if not weights.size:
        return total, squares
    m, e = _split_weights(weights)
    parts = [(m >> (_PART_BITS * j)) & _PART_MASK for j in range(3)]
    for exponent in np.unique(e):
        rows = np.flatnonzero(e == exponent)
        gram = np.zeros((design.shape[1],) * 2, dtype=object)
        square = np.zeros((squared.shape[1],) * 2, dtype=object)
        for start in range(0, rows.size, _ROWS_PER_PRODUCT):
            piece = rows[start:start + _ROWS_PER_PRODUCT]
            x, s = design[piece], squared[piece]
            p = [part[piece].astype(np.float64) for part in parts]
            for j in range(3):
                gram = gram + _as_int(x.T @ (x * p[j][:, None])) * (1 << (_PART_BITS * j))
                for i in range(3):  # w^2 = m^2 2^2e, m^2 = sum_ij p_i p_j 2^(18 (i + j)); each sum below 2^53
                    square = square + _as_int(s.T @ (s * (p[i] * p[j])[:, None])) * (1 << (_PART_BITS * (i + j)))
        total = _aligned(total, (gram, int(exponent)))
        squares = _aligned(squares, (square, 2 * int(exponent)))
    return total, squares


@dataclass(frozen=True, eq=False)
class ExactWeightedPairwise:
    r"""The weighted pairwise moments of answer codes, summed exactly, over the rows with a positive weight:
    :math:`G = D' \mathrm{diag}(w) D` with :math:`D = [a\; z]` (the answered indicators and the codes, zero
    where missing; 2k columns, as :func:`~scalewright.stats.coded.pairwise_gram`) and
    :math:`Q = a' \mathrm{diag}(w^2) a`, each whole numbers times a power of two (see the module notes), and
    how many rows had a positive weight. The pairwise-complete weighted means and covariance of
    :func:`~scalewright.stats.weighted.weighted_pairwise_moments` (the weighted Mahalanobis centre of the
    screen) are functions of these sums; the sums of some rows subtract exactly from those of more."""

    gram_int: np.ndarray  # object arrays of Python integers
    gram_exp: int | None
    square_int: np.ndarray
    square_exp: int | None
    n_used: int

    @classmethod
    def from_codes(cls, codes: np.ndarray, weights: np.ndarray) -> ExactWeightedPairwise:
        used = np.asarray(weights) > 0
        codes = codes[used]
        answered = (codes != MISSING).astype(np.float64)
        design = np.concatenate([answered, np.where(codes != MISSING, codes, 0).astype(np.float64)], axis=1)
        (gram, gram_exp), (square, square_exp) = _exact_products(design, answered, np.asarray(weights)[used])
        return cls(gram_int=gram, gram_exp=gram_exp, square_int=square, square_exp=square_exp,
                   n_used=int(used.sum()))

    def merge(self, other: ExactWeightedPairwise) -> ExactWeightedPairwise:
        gram = _aligned((self.gram_int, self.gram_exp), (other.gram_int, other.gram_exp))
        square = _aligned((self.square_int, self.square_exp), (other.square_int, other.square_exp))
        return ExactWeightedPairwise(gram_int=gram[0], gram_exp=gram[1], square_int=square[0], square_exp=square[1],
                                     n_used=self.n_used + other.n_used)

    def without(self, part: ExactWeightedPairwise) -> ExactWeightedPairwise:
        """The sums of these rows less those of ``part`` (some of them): exact."""
        gram = _aligned((self.gram_int, self.gram_exp), (-part.gram_int, part.gram_exp))
        square = _aligned((self.square_int, self.square_exp), (-part.square_int, part.square_exp))
        return ExactWeightedPairwise(gram_int=gram[0], gram_exp=gram[1], square_int=square[0], square_exp=square[1],
                                     n_used=self.n_used - part.n_used)

    def moments(self, lows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        r"""The weighted item means (every answer given, as answers: ``lows`` plus the codes) and the
        pairwise-complete weighted covariances, each cell the correctly rounded ratio of exact sums:

        .. math:: s_{jk} = \frac{V_1 C_{jk} - S_{j|k} S_{k|j}}{V_1^2 - V_2}

        over the rows answering both (:math:`V_1`, :math:`V_2` their sums of w and w squared); NaN where a
        mean has no weight or a pair fewer than two weighted rows."""
        k = self.gram_int.shape[0] // 2
        means = np.full(k, np.nan)
        cov = np.full((k, k), np.nan)
        if self.gram_exp is None:
            return means, cov
        g, e, e2 = self.gram_int, self.gram_exp, self._square_exp
        ratio = ExactWeightedCrossProducts._ratio
        for j in range(k):
            v1 = int(g[j, j])
            if v1 > 0:
                means[j] = ratio(int(g[k + j, j]) + int(lows[j]) * v1, e, v1, e)
        low = min(2 * e, e2)
        for i in range(k):
            for j in range(i, k):
                v1 = int(g[i, j])
                denominator = (v1 * v1 << (2 * e - low)) - (int(self.square_int[i, j]) << (e2 - low))
                if v1 > 0 and denominator > 0:
                    numerator = v1 * int(g[k + i, k + j]) - int(g[k + i, j]) * int(g[k + j, i])
                    cov[i, j] = cov[j, i] = ratio(numerator, 2 * e, denominator, low)
        return means, cov

    @property
    def _square_exp(self) -> int:
        return 0 if self.square_exp is None else self.square_exp
