"""Score value counts: how many rows got each composite score, exactly, as a mergeable table.

A scale score is fixed by two whole numbers: how many items the row answered (a) and the sum of its keyed
answer offsets (s, each ``answer - low`` after keying). So the counts of (a, s) -- a (k + 1) x (k * span + 1)
table of integers -- hold every score of every row exactly, whatever the number of rows, and two blocks'
tables add. Exact quantiles, histograms, moments and rank tests come from the distinct scores and their
counts: scores of rating scales take few distinct values.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..answer_codes import MISSING
from ..errors import DataError, UsageError
from ..notes import Note, note
from ..stats.descriptives import Moments, check_quantile_method, kurtosis_se, skewness_se


@dataclass(frozen=True, eq=False)
class ScoreCounts:
    """``table[a, s]``: rows that answered ``a`` items with keyed offsets summing to ``s``.

    ``low`` is the lowest answer, ``k`` the number of items, ``span = high - low``; ``method`` ("mean" or
    "sum", prorated as :func:`scalewright.scoring.composite`) and ``required`` (fewest answered items for a
    score) say how a row's score is made from (a, s).
    """

    table: np.ndarray
    low: int
    span: int
    k: int
    method: str = "mean"
    required: int | None = None

    def __post_init__(self) -> None:
        if self.table.shape != (self.k + 1, self.k * self.span + 1):
            raise DataError(f"score counts of {self.k} item(s) with span {self.span} need a "
                            f"{self.k + 1} x {self.k * self.span + 1} table, got {self.table.shape}")
        if self.method not in ("mean", "sum"):
            raise UsageError(f"score method must be mean or sum, not {self.method!r}")

    @classmethod
    def from_codes(cls, codes: np.ndarray, *, low: int, high: int, reversed_mask: np.ndarray,
                   method: str = "mean", required: int | None = None) -> ScoreCounts:
        """The table of a block of answer codes as given (n x k uint8, 255 missing); keyed here."""
        k = codes.shape[1]
        span = int(high - low)
        width = k * span + 1
        table = np.bincount(score_cells(codes, span, reversed_mask), minlength=(k + 1) * width).reshape(k + 1, width)
        return cls(table=table.astype(np.int64), low=int(low), span=span, k=k, method=method, required=required)

    def merge(self, other: ScoreCounts) -> ScoreCounts:
        if (self.low, self.span, self.k, self.method, self.required) != \
                (other.low, other.span, other.k, other.method, other.required):
            raise DataError("cannot merge score counts of different scales")
        return ScoreCounts(table=self.table + other.table, low=self.low, span=self.span, k=self.k,
                           method=self.method, required=self.required)

    @property
    def n_rows(self) -> int:
        return int(self.table.sum())

    def _needed(self) -> int:
        return self.k if self.required is None else int(self.required)

    @property
    def n_missing(self) -> int:
        """Rows without a score (fewer answered items than required)."""
        return int(self.table[: self._needed()].sum())

    def values_and_counts(self) -> tuple[np.ndarray, np.ndarray]:
        """The distinct scores (ascending) and how many rows got each.

        Each score is computed as :func:`scalewright.scoring.composite` computes it (the float sum of the
        keyed answers over the answered count, times k for a prorated sum), so the values are identical.
        """
        needed = max(self._needed(), 1)
        answered, total = np.nonzero(self.table[needed:])
        answered = answered + needed
        counts = self.table[answered, total]
        sums = (answered * self.low + total).astype(np.float64)  # exact whole numbers, as nansum gives them
        with np.errstate(invalid="ignore", divide="ignore"):
            scores = sums / answered
        if self.method == "sum":
            scores = scores * self.k
        distinct, inverse = np.unique(scores, return_inverse=True)
        return distinct, np.bincount(inverse, weights=counts, minlength=distinct.size).astype(np.int64)

    def expand(self) -> np.ndarray:
        """Every score, ascending (n floats: only for what truly needs the rows, e.g. the dip test)."""
        values, counts = self.values_and_counts()
        return np.repeat(values, counts)


def score_cells(codes: np.ndarray, span: int, reversed_mask: np.ndarray) -> np.ndarray:
    """Each row's cell of the score table: ``answered * (k * span + 1) + keyed offset sum``.

    ``codes`` are answer codes as given (n x k uint8, 255 missing); reversed items are keyed here.
    """
    n, k = codes.shape
    reversed_mask = np.asarray(reversed_mask, dtype=bool)
    answered = np.zeros(n, dtype=np.int64)
    total = np.zeros(n, dtype=np.int64)
    for j in range(k):
        column = codes[:, j]
        given = column != MISSING
        answered += given
        keyed = (span - column.astype(np.int64)) if reversed_mask[j] else column.astype(np.int64)
        total += np.where(given, keyed, 0)
    return answered * (k * span + 1) + total


def quantiles_from_counts(values: np.ndarray, counts: np.ndarray, probabilities, *, method: str = "linear") -> np.ndarray:
    """:func:`numpy.quantile` of the sample holding ``counts[i]`` copies of ``values[i]`` (ascending), exactly.

    Hand-written because numpy's quantile needs the expanded sample (memory growing with the rows) and
    its ``weights`` support only one method. The virtual index of each Hyndman & Fan (1996) type is
    numpy's; the order statistics it points to are found in the cumulative counts, and the interpolation
    is numpy's (``a + (b - a) t``, from the upper end when t >= 0.5), so the result is numpy's own.
    """
    check_quantile_method(method)
    values = np.asarray(values, dtype=np.float64)
    counts = np.asarray(counts, dtype=np.int64)
    p = np.atleast_1d(np.asarray(probabilities, dtype=np.float64))
    n = int(counts.sum())
    if n == 0:
        return np.full(p.shape, np.nan)
    ends = np.cumsum(counts)  # order statistic i (0-based) is values[searchsorted(ends, i, 'right')]

    def order_statistic(index: np.ndarray) -> np.ndarray:
        index = np.clip(index.astype(np.int64), 0, n - 1)
        return values[np.searchsorted(ends, index, side="right")]

    if method in ("inverted_cdf", "closest_observation"):
        index = n * p - 1 - (0.5 if method == "closest_observation" else 0.0)
        previous = np.floor(index)
        gamma = index - previous
        take_previous = (gamma == 0) & ((np.floor(index) % 2 == 1) if method == "closest_observation" else True)
        return order_statistic(np.where(take_previous, previous, previous + 1))
    if method == "averaged_inverted_cdf":
        virtual = n * p - 1
    elif method == "linear":
        virtual = (n - 1) * p
    else:
        alpha, beta = {"interpolated_inverted_cdf": (0.0, 1.0), "hazen": (0.5, 0.5), "weibull": (0.0, 0.0),
                       "median_unbiased": (1 / 3.0, 1 / 3.0), "normal_unbiased": (3 / 8.0, 3 / 8.0)}[method]
        virtual = n * p + (alpha + p * (1 - alpha - beta)) - 1
    previous = np.floor(virtual)
    following = previous + 1
    above, below = virtual >= n - 1, virtual < 0
    previous[above] = following[above] = n - 1
    previous[below] = following[below] = 0
    gamma = virtual - previous
    if method == "averaged_inverted_cdf":
        gamma = np.where(gamma == 0, 0.5, 1.0)
    a, b = order_statistic(previous), order_statistic(following)
    difference = b - a
    return np.where(gamma >= 0.5, b - difference * (1 - gamma), a + difference * gamma)


def moments_from_counts(values: np.ndarray, counts: np.ndarray) -> Moments:
    r"""Mean, SD and the adjusted skewness G1 and excess kurtosis G2 of a sample given as value counts.

    The same definitions as :func:`scalewright.stats.descriptives.moments` (Joanes & Gill 1998):
    :math:`m_r = \sum_i c_i (x_i - \bar x)^r / n`, :math:`G_1 = \sqrt{n(n-1)}/(n-2)\, m_3/m_2^{3/2}`,
    :math:`G_2 = (n-1)/((n-2)(n-3))\,[(n+1)(m_4/m_2^2 - 3) + 6]`, each sum over the distinct values.

    References
    ----------
    .. [1] Joanes, D. N., & Gill, C. A. (1998). Comparing measures of sample skewness and kurtosis.
       The Statistician, 47(1), 183-189.
    """
    values = np.asarray(values, dtype=np.float64)
    weights = np.asarray(counts, dtype=np.float64)
    n = int(np.asarray(counts).sum())
    notes: list[Note] = []
    mean = float(weights @ values / n) if n else math.nan
    deviations = values - mean
    m2 = float(weights @ deviations**2) / n if n else math.nan
    sd = math.sqrt(m2 * n / (n - 1)) if n >= 2 else math.nan
    skew = kurt = math.nan
    if n < 3:
        notes.append(note("moments-too-few", n=n))
    elif np.count_nonzero(np.asarray(counts)) < 2:
        notes.append(note("moments-constant"))
    else:
        m3 = float(weights @ deviations**3) / n
        skew = math.sqrt(n * (n - 1)) / (n - 2) * m3 / m2**1.5
        if n >= 4:
            m4 = float(weights @ deviations**4) / n
            kurt = (n - 1) / ((n - 2) * (n - 3)) * ((n + 1) * (m4 / m2**2 - 3) + 6)
        else:
            notes.append(note("kurtosis-too-few"))
    return Moments(n=n, mean=mean, sd=sd, skewness=skew, skewness_se=skewness_se(n), kurtosis=kurt,
                   kurtosis_se=kurtosis_se(n), notes=tuple(notes))
