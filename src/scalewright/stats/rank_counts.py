"""Rank tests from value counts per group: exact midranks without the rows.

Scores of rating scales take few distinct values, so each tie is a whole block of equal values whose
midrank is known from the counts below it. Hand-written because scipy's tests take the rows (memory
growing with the sample); the results are scipy's (``tests/test_rank_counts.py`` checks them live).
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import DataError
from ..results import ResultMixin


@dataclass(frozen=True)
class RankTest(ResultMixin):
    """A rank test's statistic, degrees of freedom (Kruskal-Wallis) or z (Mann-Whitney), p-value and sizes."""

    statistic: float
    pvalue: float
    n: tuple[int, ...]
    df: int | None = None
    z: float | None = None


def _pooled_midranks(values: Sequence[np.ndarray], counts: Sequence[np.ndarray]):
    """(distinct pooled values, counts per group on them (g x m), midrank of each pooled value)."""
    if len(values) != len(counts):
        raise DataError("one array of counts is needed per array of values")
    pooled = np.unique(np.concatenate([np.asarray(v, dtype=np.float64) for v in values]))
    table = np.zeros((len(values), pooled.size), dtype=np.int64)
    for g, (v, c) in enumerate(zip(values, counts, strict=True)):
        np.add.at(table[g], np.searchsorted(pooled, np.asarray(v, dtype=np.float64)), np.asarray(c, dtype=np.int64))
    ties = table.sum(axis=0)
    below = np.cumsum(ties) - ties
    return pooled, table, below + (ties + 1) / 2.0, ties


def mann_whitney_from_counts(values_a: np.ndarray, counts_a: np.ndarray, values_b: np.ndarray,
                             counts_b: np.ndarray) -> RankTest:
    r"""Mann-Whitney U test (two-sided, normal approximation with tie and continuity corrections).

    .. math::

        U_a = R_a - \frac{n_a(n_a+1)}{2}, \qquad
        z = \frac{\max(U_a, U_b) - n_a n_b/2 - 1/2}
                 {\sqrt{\frac{n_a n_b}{12}\left(n + 1 - \frac{\sum_t (t^3 - t)}{n(n-1)}\right)}}

    with :math:`R_a` the sum of the midranks of group a, t the size of each block of ties and
    :math:`p = 2\,(1 - \Phi(z))` (capped at 1): scipy's ``mannwhitneyu(method="asymptotic")``.
    ``statistic`` is :math:`U_a`.

    References
    ----------
    .. [1] Mann, H. B., & Whitney, D. R. (1947). On a test of whether one of two random variables is
       stochastically larger than the other. The Annals of Mathematical Statistics, 18(1), 50-60.
    """
    from scipy import stats

    _, table, midranks, ties = _pooled_midranks([values_a, values_b], [counts_a, counts_b])
    n_a, n_b = int(table[0].sum()), int(table[1].sum())
    n = n_a + n_b
    if n_a == 0 or n_b == 0:
        return RankTest(statistic=math.nan, pvalue=math.nan, n=(n_a, n_b), z=math.nan)
    u_a = float(table[0] @ midranks) - n_a * (n_a + 1) / 2.0
    u_b = n_a * n_b - u_a
    tie_term = float(np.sum(ties.astype(np.float64) ** 3 - ties))
    variance = n_a * n_b / 12.0 * ((n + 1) - tie_term / (n * (n - 1)))
    if variance <= 0:
        return RankTest(statistic=u_a, pvalue=math.nan, n=(n_a, n_b), z=math.nan)
    z = (max(u_a, u_b) - n_a * n_b / 2.0 - 0.5) / math.sqrt(variance)
    return RankTest(statistic=u_a, pvalue=float(min(1.0, 2 * stats.norm.sf(z))), n=(n_a, n_b), z=z)


def kruskal_wallis_from_counts(values: Sequence[np.ndarray], counts: Sequence[np.ndarray]) -> RankTest:
    r"""Kruskal-Wallis H test with the tie correction, from each group's value counts.

    .. math::

        H = \frac{\frac{12}{n(n+1)} \sum_g \frac{R_g^2}{n_g} - 3(n+1)}{1 - \frac{\sum_t (t^3 - t)}{n^3 - n}}

    with :math:`R_g` the sum of the midranks of group g; p from the chi-square distribution with g - 1
    degrees of freedom (scipy's ``kruskal``).

    References
    ----------
    .. [1] Kruskal, W. H., & Wallis, W. A. (1952). Use of ranks in one-criterion variance analysis.
       Journal of the American Statistical Association, 47(260), 583-621.
    """
    from scipy import stats

    if len(values) < 2:
        raise DataError("the Kruskal-Wallis test needs at least two groups")
    _, table, midranks, ties = _pooled_midranks(values, counts)
    sizes = table.sum(axis=1)
    n = int(sizes.sum())
    df = len(values) - 1
    if np.any(sizes == 0):
        return RankTest(statistic=math.nan, pvalue=math.nan, n=tuple(int(s) for s in sizes), df=df)
    rank_sums = table @ midranks
    h = 12.0 / (n * (n + 1)) * float(np.sum(rank_sums**2 / sizes)) - 3.0 * (n + 1)
    correction = 1.0 - float(np.sum(ties.astype(np.float64) ** 3 - ties)) / (n**3 - n)
    if correction <= 0:
        return RankTest(statistic=math.nan, pvalue=math.nan, n=tuple(int(s) for s in sizes), df=df)
    h /= correction
    return RankTest(statistic=h, pvalue=float(stats.chi2.sf(h, df)), n=tuple(int(s) for s in sizes), df=df)
