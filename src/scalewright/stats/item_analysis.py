"""Item analysis of one scale: item-rest correlations, alpha if deleted or reversed, item descriptives.

The correlations are functions of the item covariance matrix; the descriptives (n, mean, sd, missing share,
floor and ceiling shares, answer counts) of every answer given to the item or of its answer counts.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from ..results import ResultMixin
from .reliability_coefficients import as_cov_matrix, cronbach_alpha_from_cov, has_variance


def item_rest_correlations_from_cov(cov: np.ndarray) -> np.ndarray:
    r"""Corrected item-total correlations: each item with the sum of the *other* items.

    .. math::

        r_{j,X-j} = \frac{\sum_{i} s_{ij} - s_j^2}{s_j \sqrt{s_X^2 - 2 \sum_i s_{ij} + s_j^2}}

    Returns a length-k array; an entry is NaN when the item or the rest has no variance (or k < 2).

    References
    ----------
    .. [1] Nunnally, J. C., & Bernstein, I. H. (1994). Psychometric Theory (3rd ed.). McGraw-Hill
       (item-total correlation corrected for overlap).
    """
    cov = as_cov_matrix(cov)
    k = cov.shape[0]
    if k < 2:
        return np.full(k, np.nan)
    row_sums = cov.sum(axis=1)
    variances = np.diag(cov)
    total = cov.sum()
    cov_with_rest = row_sums - variances
    rest_variance = total - 2 * row_sums + variances
    with np.errstate(invalid="ignore", divide="ignore"):
        r = cov_with_rest / np.sqrt(variances * rest_variance)
    r = np.where((variances > 0) & (rest_variance > 0) & has_variance(rest_variance, variances.sum() - variances),
                 r, np.nan)
    return np.clip(r, -1.0, 1.0)


def alpha_if_deleted_from_cov(cov: np.ndarray) -> np.ndarray:
    """Alpha of the remaining items when each item in turn is left out (length-k array).

    An entry is NaN when fewer than 2 items would remain.
    """
    cov = as_cov_matrix(cov)
    k = cov.shape[0]
    out = np.full(k, np.nan)
    if k < 3:
        return out
    for j in range(k):
        keep = np.arange(k) != j
        out[j] = cronbach_alpha_from_cov(cov[np.ix_(keep, keep)])
    return out


def alpha_with_item_reversed_from_cov(cov: np.ndarray) -> np.ndarray:
    """Alpha as it would be if each item in turn were reverse-keyed (length-k array).

    Reverse keying (``low + high - x``) flips the sign of an item's covariances with the others and
    leaves its variance unchanged, so this too is a function of the covariance matrix alone.
    """
    cov = as_cov_matrix(cov)
    k = cov.shape[0]
    out = np.full(k, np.nan)
    for j in range(k):
        sign = np.ones(k)
        sign[j] = -1.0
        out[j] = cronbach_alpha_from_cov(cov * np.outer(sign, sign))
    return out


@dataclass(frozen=True)
class ItemStatistics(ResultMixin):
    """One item of a scale.

    ``n``, ``missing_pct`` and the answer counts use every answer given to the item; ``mean`` and ``sd``
    are of the keyed item over those answers. ``floor_pct``/``ceiling_pct`` and ``counts`` are of the answer
    codes as given (before reverse keying): the shares at the lowest and highest code. ``item_rest_r``,
    the if-deleted values and ``loading`` (standardized, one-factor model) use the rows the scale statistics
    use.
    """

    name: str
    reversed: bool
    n: int
    mean: float
    sd: float
    missing_pct: float
    floor_pct: float
    ceiling_pct: float
    item_rest_r: float
    alpha_if_deleted: float
    omega_if_deleted: float
    loading: float
    counts: dict[str, int]

    def to_dict(self) -> dict[str, Any]:
        out = super().to_dict()
        out.pop("name")
        return out


@dataclass(frozen=True)
class ItemDescriptives:
    """Per-item descriptives from every answer to the item (sufficient statistics too: counts and sums)."""

    n: np.ndarray
    mean: np.ndarray
    sd: np.ndarray
    missing_pct: np.ndarray
    floor_pct: np.ndarray
    ceiling_pct: np.ndarray
    counts: tuple[dict[str, int], ...]
    off_level: int


def item_descriptives(keyed: np.ndarray, *, low: float, high: float,
                      reversed_mask: np.ndarray | None = None) -> ItemDescriptives:
    """Count, mean, sd (ddof 1), missing share, floor and ceiling shares and answer counts of each item.

    Floor, ceiling and counts are of the answer codes as given: reverse-keyed items are turned back with
    ``low + high - x`` first. ``off_level`` counts answers that are not one of the integer levels.
    """
    matrix = np.asarray(keyed, dtype=np.float64)
    k = matrix.shape[1]
    reversed_mask = np.zeros(k, dtype=bool) if reversed_mask is None else np.asarray(reversed_mask, dtype=bool)
    levels = np.arange(int(math.ceil(low)), int(math.floor(high)) + 1).astype(np.float64)
    # rating answers take few values: their counts are sufficient for n, mean and sd; counted in one pass
    # per item (bincount), whatever the number of levels
    tally = answer_level_counts(matrix, levels=levels, low=low, high=high, reversed_mask=reversed_mask)
    n = np.count_nonzero(~np.isnan(matrix), axis=0).astype(np.int64)
    described = item_descriptives_from_tally(tally, n_rows=matrix.shape[0], low=low, high=high,
                                             reversed_mask=reversed_mask, n_answered=n)
    if not described.off_level:
        return described
    mean, sd = described.mean.copy(), described.sd.copy()
    for j in np.flatnonzero(n - tally.sum(axis=1)):
        answered = matrix[:, j][~np.isnan(matrix[:, j])]
        mean[j] = answered.mean()
        sd[j] = answered.std(ddof=1) if n[j] >= 2 else np.nan
    return replace(described, mean=mean, sd=sd)


def answer_level_counts(keyed: np.ndarray, *, levels: np.ndarray, low: float, high: float,
                        reversed_mask: np.ndarray) -> np.ndarray:
    """(k, L) counts of each answer level (as given, before keying) of every item, in one pass per item.

    Answers off the levels (between them or outside) and missing answers are not counted.
    """
    k = keyed.shape[1]
    tally = np.zeros((k, levels.size), dtype=np.int64)
    if not levels.size:
        return tally
    for j in range(k):
        column = keyed[:, j]
        given = (low + high - column) if reversed_mask[j] else column
        offsets = given - levels[0]
        on_level = (offsets >= 0) & (offsets < levels.size) & (offsets == np.floor(offsets))  # NaN is False
        tally[j] = np.bincount(offsets[on_level].astype(np.int64), minlength=levels.size)
    return tally


def _keyed_levels(levels: np.ndarray, low: float, high: float, reversed_mask: np.ndarray) -> np.ndarray:
    """(L, k) value each answer level takes after keying: reversed items count down."""
    return np.where(reversed_mask[None, :], low + high - levels[:, None], levels[:, None])


def item_descriptives_from_tally(tally: np.ndarray, *, n_rows: int, low: float, high: float,
                                 reversed_mask: np.ndarray, n_answered: np.ndarray | None = None) -> ItemDescriptives:
    """:func:`item_descriptives` from the (k, L) counts of each answer level (as given) of every item.

    ``n_answered`` (default: the row sums of ``tally``) may exceed them by answers off the levels, whose
    mean and sd the counts cannot give (left NaN here; :func:`item_descriptives` fills them in).
    """
    tally = np.asarray(tally, dtype=np.int64)
    k = tally.shape[0]
    levels = np.arange(int(math.ceil(low)), int(math.floor(high)) + 1).astype(np.float64)
    keyed_levels = _keyed_levels(levels, low, high, np.asarray(reversed_mask, dtype=bool))
    n = tally.sum(axis=1) if n_answered is None else np.asarray(n_answered, dtype=np.int64)
    mean, sd, floor, ceiling = (np.full(k, np.nan) for _ in range(4))
    counts: list[dict[str, int]] = []
    off_level = 0
    for j in range(k):
        outside = int(n[j] - tally[j].sum())
        off_level += outside
        if n[j] and not outside:
            mean[j] = float(tally[j] @ keyed_levels[:, j]) / n[j]
            if n[j] >= 2:
                sd[j] = math.sqrt(float(tally[j] @ (keyed_levels[:, j] - mean[j]) ** 2) / (n[j] - 1))
        counts.append({str(int(level)): int(c) for level, c in zip(levels, tally[j], strict=True)})
        if n[j] and levels.size:
            floor[j] = 100.0 * tally[j, 0] / n[j]
            ceiling[j] = 100.0 * tally[j, -1] / n[j]
    missing_pct = 100.0 * (n_rows - n) / n_rows if n_rows else np.full(k, np.nan)
    return ItemDescriptives(n=n, mean=mean, sd=sd, missing_pct=missing_pct, floor_pct=floor,
                            ceiling_pct=ceiling, counts=tuple(counts), off_level=off_level)
