"""Bootstrap confidence intervals of coefficient alpha (percentile and BCa), vectorised over resamples.

Hand-written because :func:`scipy.stats.bootstrap` re-evaluates the statistic on every resample and on
all n jackknife samples; alpha depends on the data only through weighted sums, so a resample is one row of
counts and a batch of resamples is one matrix product.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import DataError
from ..notes import Note, note, notes_to_json
from ..results import ResultMixin

_BATCH_CELLS = 4_000_000  # resamples x rows held at once (about 32 MB of counts)


@dataclass(frozen=True)
class AlphaBootstrap(ResultMixin):
    """Bootstrap distribution summary of alpha: percentile and BCa intervals."""

    n_resamples: int
    seed: int | None
    confidence_level: float
    percentile_ci: tuple[float, float]
    bca_ci: tuple[float, float]
    standard_error: float
    pairwise: bool
    notes: tuple[Note, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        out = super().to_dict()
        out["notes"] = notes_to_json(self.notes)
        return out


def _pair_columns(matrix: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per-row terms whose (weighted) sums give every pairwise count, sum and cross-product.

    Returns (pairs_i, pairs_j, terms) with terms of shape (n, 4 P) for the P pairs i <= j:
    [answered both, x_i if both, x_j if both, x_i x_j if both].
    """
    k = matrix.shape[1]
    pairs_i, pairs_j = np.triu_indices(k)
    answered = ~np.isnan(matrix)
    zeroed = np.where(answered, matrix, 0.0)
    both = (answered[:, pairs_i] & answered[:, pairs_j]).astype(np.float64)
    xi = zeroed[:, pairs_i] * both
    xj = zeroed[:, pairs_j] * both
    return pairs_i, pairs_j, np.hstack([both, xi, xj, xi * zeroed[:, pairs_j]])


def _alpha_from_pair_sums(sums: np.ndarray, pairs_i: np.ndarray, pairs_j: np.ndarray, k: int) -> np.ndarray:
    """Alpha for each row of summed pair terms (shape (m, 4 P)); NaN where undefined."""
    p = len(pairs_i)
    count, sum_i, sum_j, cross = sums[:, :p], sums[:, p:2 * p], sums[:, 2 * p:3 * p], sums[:, 3 * p:]
    with np.errstate(invalid="ignore", divide="ignore"):
        cov = (cross - sum_i * sum_j / count) / (count - 1)
    diagonal = pairs_i == pairs_j
    item_variance = cov[:, diagonal].sum(axis=1)
    total = item_variance + 2 * cov[:, ~diagonal].sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        alpha = k / (k - 1) * (1 - item_variance / total)
    return np.where(total > 0, alpha, np.nan)


def _complete_columns(matrix: np.ndarray) -> np.ndarray:
    """Per-row terms for complete data: [x_j, x_j^2, t, t^2] with t the row total (shape (n, 2k + 2))."""
    total = matrix.sum(axis=1, keepdims=True)
    return np.hstack([matrix, matrix**2, total, total**2])


def _alpha_from_complete_sums(sums: np.ndarray, count: np.ndarray, k: int) -> np.ndarray:
    count = count.reshape(-1)
    def variance(s, ss):
        with np.errstate(invalid="ignore", divide="ignore"):
            return (ss - s**2 / count[:, None]) / (count[:, None] - 1)
    item_variance = variance(sums[:, :k], sums[:, k:2 * k]).sum(axis=1)
    total = variance(sums[:, 2 * k:2 * k + 1], sums[:, 2 * k + 1:]).reshape(-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        alpha = k / (k - 1) * (1 - item_variance / total)
    return np.where(total > 0, alpha, np.nan)


def bootstrap_alpha(keyed: np.ndarray, *, n_resamples: int = 2000, confidence_level: float = 0.95,
                    seed: int | None = None, pairwise: bool = False) -> AlphaBootstrap:
    r"""Percentile and bias-corrected accelerated (BCa) bootstrap intervals of alpha.

    Rows are resampled with replacement; alpha is recomputed listwise (rows complete on every item) or,
    with ``pairwise=True``, from pairwise covariances, exactly as the point estimate is.
    The BCa interval uses

    .. math::

        \hat z_0 = \Phi^{-1}\!\left(\#\{\hat\alpha^*_b < \hat\alpha\}/B\right), \qquad
        \hat a = \frac{\sum_i (\bar\alpha_{(\cdot)} - \hat\alpha_{(i)})^3}
                      {6\left[\sum_i (\bar\alpha_{(\cdot)} - \hat\alpha_{(i)})^2\right]^{3/2}}

    with jackknife values :math:`\hat\alpha_{(i)}`, and the bootstrap quantiles at
    :math:`\Phi\!\left(\hat z_0 + \frac{\hat z_0 + z_q}{1 - \hat a(\hat z_0 + z_q)}\right)`.

    Parameters
    ----------
    keyed : (n, k) array
        Keyed item answers, NaN for missing.
    n_resamples : int
        Number of bootstrap resamples.
    confidence_level : float
        Coverage of the intervals.
    seed : int, optional
        Seed of the :class:`numpy.random.Generator`; the same seed gives the same intervals.
    pairwise : bool
        Use pairwise instead of listwise deletion.

    References
    ----------
    .. [1] Efron, B. (1987). Better bootstrap confidence intervals. Journal of the American Statistical
       Association, 82, 171-185.
    .. [2] Efron, B., & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
    """
    from scipy.special import ndtr, ndtri

    if n_resamples < 1:
        raise DataError(f"n_resamples must be at least 1, got {n_resamples}")
    if not 0 < confidence_level < 1:
        raise DataError(f"confidence_level must lie strictly between 0 and 1, got {confidence_level}")
    matrix = np.asarray(keyed, dtype=np.float64)
    k = matrix.shape[1]
    notes: list[Note] = []
    if not pairwise:
        matrix = matrix[~np.isnan(matrix).any(axis=1)]
    n = matrix.shape[0]
    nan_pair = (math.nan, math.nan)
    if n < 3 or k < 2:
        notes.append(note("bootstrap-too-small", n=int(n), k=int(k)))
        return AlphaBootstrap(n_resamples, seed, confidence_level, nan_pair, nan_pair, math.nan, pairwise,
                              tuple(notes))

    if pairwise:
        pairs_i, pairs_j, terms = _pair_columns(matrix)

        def statistic(sums: np.ndarray, counts: np.ndarray) -> np.ndarray:
            return _alpha_from_pair_sums(sums, pairs_i, pairs_j, k)
    else:
        terms = _complete_columns(matrix)

        def statistic(sums: np.ndarray, counts: np.ndarray) -> np.ndarray:
            return _alpha_from_complete_sums(sums, counts, k)

    totals = terms.sum(axis=0, keepdims=True)
    observed = float(statistic(totals, np.array([n]))[0])

    rng = np.random.default_rng(seed)
    batch = max(1, _BATCH_CELLS // n)
    estimates = np.empty(n_resamples)
    done = 0
    while done < n_resamples:
        size = min(batch, n_resamples - done)
        draws = rng.integers(0, n, (size, n))
        offsets = (draws + (np.arange(size) * n)[:, None]).ravel()
        weights = np.bincount(offsets, minlength=size * n).reshape(size, n).astype(np.float64)
        estimates[done:done + size] = statistic(weights @ terms, np.full(size, n))
        done += size

    jackknife = statistic(totals - terms, np.full(n, n - 1))
    finite = estimates[np.isfinite(estimates)]
    if len(finite) < n_resamples:
        notes.append(note("bootstrap-resamples-without-alpha", count=int(n_resamples - len(finite))))
    if len(finite) < 2 or not math.isfinite(observed):
        notes.append(note("bootstrap-too-few-usable", usable=int(len(finite))))
        return AlphaBootstrap(n_resamples, seed, confidence_level, nan_pair, nan_pair, math.nan, pairwise,
                              tuple(notes))
    tail = (1 - confidence_level) / 2
    low, high = np.quantile(finite, [tail, 1 - tail])
    percentile = (float(low), float(high))

    # proportion below the estimate, ties counted half (as scipy.stats.bootstrap does)
    below = (np.count_nonzero(finite < observed) + np.count_nonzero(finite <= observed)) / (2 * len(finite))
    bca: tuple[float, float] = nan_pair
    jackknife = jackknife[np.isfinite(jackknife)]
    if 0 < below < 1 and len(jackknife) >= 3:
        z0 = float(ndtri(below))
        deviations = jackknife.mean() - jackknife
        spread = float((deviations**2).sum())
        acceleration = float((deviations**3).sum()) / (6 * spread**1.5) if spread > 0 else 0.0
        z = ndtri(np.array([tail, 1 - tail]))
        adjusted = ndtr(z0 + (z0 + z) / (1 - acceleration * (z0 + z)))
        low, high = np.quantile(finite, adjusted)
        bca = (float(low), float(high))
    else:
        notes.append(note("bootstrap-bca-undefined"))
    return AlphaBootstrap(n_resamples=n_resamples, seed=seed, confidence_level=confidence_level,
                          percentile_ci=percentile, bca_ci=bca, standard_error=float(np.std(finite, ddof=1)),
                          pairwise=pairwise, notes=tuple(notes))
