"""Internal-consistency reliability and item analysis, as functions of n and the item covariance matrix.

Every statistic here is a function of sufficient statistics (row count and covariance matrix), so it gives
the same answer whether the matrix came from one array, from chunks of a large file or from a distributed
engine. :func:`scale_reliability` is the one entry point that starts from the keyed item matrix.
"""
from __future__ import annotations

import math

import numpy as np

from ..errors import DataError


def _as_cov(cov: np.ndarray) -> np.ndarray:
    matrix = np.asarray(cov, dtype=np.float64)
    if matrix.ndim != 2 or matrix.shape[0] != matrix.shape[1]:
        raise DataError(f"covariance matrix must be square, got shape {matrix.shape}")
    return matrix


def cronbach_alpha_from_cov(cov: np.ndarray) -> float:
    r"""Cronbach's coefficient alpha from the item covariance matrix.

    .. math::

        \alpha = \frac{k}{k - 1}\left(1 - \frac{\sum_j s_j^2}{s_X^2}\right), \qquad s_X^2 = \sum_{i,j} s_{ij}

    Parameters
    ----------
    cov : (k, k) array
        Covariance matrix of the keyed items.

    Returns
    -------
    float
        Alpha, or NaN when it is undefined (fewer than 2 items, a missing entry, or a composite without
        variance).

    References
    ----------
    .. [1] Cronbach, L. J. (1951). Coefficient alpha and the internal structure of tests. Psychometrika,
       16, 297-334.
    """
    cov = _as_cov(cov)
    k = cov.shape[0]
    if k < 2 or not np.isfinite(cov).all():
        return math.nan
    total = float(cov.sum())
    if not total > 0:
        return math.nan
    return float(k / (k - 1) * (1.0 - float(np.trace(cov)) / total))


def standardized_alpha_from_cov(cov: np.ndarray) -> float:
    r"""Standardized alpha: alpha of the items turned into z-scores.

    .. math::

        \alpha_{st} = \frac{k \bar r}{1 + (k - 1) \bar r}

    with :math:`\bar r` the mean of the :math:`k(k-1)/2` inter-item correlations. NaN when an item has no
    variance or there are fewer than 2 items.

    References
    ----------
    .. [1] Cronbach, L. J. (1951). Psychometrika, 16, 297-334 (the Spearman-Brown form of alpha for
       standardized items).
    """
    from .item_covariance import correlation_from_cov

    cov = _as_cov(cov)
    k = cov.shape[0]
    if k < 2:
        return math.nan
    corr = correlation_from_cov(cov)
    if not np.isfinite(corr).all():
        return math.nan
    mean_r = float(corr[np.triu_indices(k, 1)].mean())
    denominator = 1.0 + (k - 1) * mean_r
    return float(k * mean_r / denominator) if denominator != 0 else math.nan


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
    cov = _as_cov(cov)
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
    r = np.where((variances > 0) & (rest_variance > 0), r, np.nan)
    return np.clip(r, -1.0, 1.0)


def alpha_if_deleted_from_cov(cov: np.ndarray) -> np.ndarray:
    """Alpha of the remaining items when each item in turn is left out (length-k array).

    An entry is NaN when fewer than 2 items would remain.
    """
    cov = _as_cov(cov)
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
    cov = _as_cov(cov)
    k = cov.shape[0]
    out = np.full(k, np.nan)
    for j in range(k):
        sign = np.ones(k)
        sign[j] = -1.0
        out[j] = cronbach_alpha_from_cov(cov * np.outer(sign, sign))
    return out


def guttman_lambda2_from_cov(cov: np.ndarray) -> float:
    r"""Guttman's lambda 2 (covariance form).

    .. math::

        \lambda_2 = \lambda_1 + \frac{\sqrt{\frac{k}{k-1} \sum_{i \ne j} s_{ij}^2}}{s_X^2},
        \qquad \lambda_1 = 1 - \frac{\sum_j s_j^2}{s_X^2}

    References
    ----------
    .. [1] Guttman, L. (1945). A basis for analyzing test-retest reliability. Psychometrika, 10, 255-282.
    """
    cov = _as_cov(cov)
    k = cov.shape[0]
    if k < 2 or not np.isfinite(cov).all():
        return math.nan
    total = float(cov.sum())
    if not total > 0:
        return math.nan
    off_diagonal = cov[~np.eye(k, dtype=bool)]
    lambda1 = 1.0 - float(np.trace(cov)) / total
    return float(lambda1 + math.sqrt(k / (k - 1) * float((off_diagonal**2).sum())) / total)


def guttman_lambda6_from_cov(cov: np.ndarray) -> float:
    r"""Guttman's lambda 6 (covariance form): error variances from the squared multiple correlations.

    .. math::

        \lambda_6 = 1 - \frac{\sum_j e_j^2}{s_X^2}, \qquad e_j^2 = \frac{1}{(S^{-1})_{jj}}

    :math:`e_j^2` is the residual variance of item j regressed on all other items. NaN when the matrix is
    singular (an item is an exact linear combination of others) or fewer than 2 items.

    References
    ----------
    .. [1] Guttman, L. (1945). A basis for analyzing test-retest reliability. Psychometrika, 10, 255-282.
    """
    cov = _as_cov(cov)
    k = cov.shape[0]
    if k < 2 or not is_invertible(cov):
        return math.nan
    total = float(cov.sum())
    if not total > 0:
        return math.nan
    precision_diagonal = np.diag(np.linalg.inv(cov))
    if not (precision_diagonal > 0).all():
        return math.nan
    return float(1.0 - float((1.0 / precision_diagonal).sum()) / total)


def is_invertible(cov: np.ndarray, *, max_condition: float = 1e12) -> bool:
    """Whether a covariance matrix is finite and numerically invertible (condition number below a bound)."""
    cov = np.asarray(cov, dtype=np.float64)
    if cov.size == 0 or not np.isfinite(cov).all():
        return False
    return bool(np.linalg.cond(cov) < max_condition)


def feldt_alpha_ci(alpha: float, n: int, k: int, *, confidence_level: float = 0.95) -> tuple[float, float]:
    r"""Feldt's confidence interval of coefficient alpha.

    .. math::

        \left[\,1 - (1 - \alpha) F_{1-\gamma/2}(n - 1, (n - 1)(k - 1)),\;
              1 - (1 - \alpha) F_{\gamma/2}(n - 1, (n - 1)(k - 1))\,\right]

    with :math:`\gamma = 1 - ` ``confidence_level`` and n the number of rows actually used.

    Returns
    -------
    (lower, upper) : tuple of float
        NaN bounds when alpha is NaN, n < 3 or k < 2.

    References
    ----------
    .. [1] Feldt, L. S., Woodruff, D. J., & Salih, F. A. (1987). Statistical inference for coefficient
       alpha. Applied Psychological Measurement, 11, 93-103.
    """
    from scipy.stats import f

    if not 0 < confidence_level < 1:
        raise DataError(f"confidence_level must lie strictly between 0 and 1, got {confidence_level}")
    if not math.isfinite(alpha) or n < 3 or k < 2:
        return (math.nan, math.nan)
    gamma = 1.0 - confidence_level
    df1, df2 = n - 1, (n - 1) * (k - 1)
    lower = 1.0 - (1.0 - alpha) * float(f.ppf(1.0 - gamma / 2, df1, df2))
    upper = 1.0 - (1.0 - alpha) * float(f.ppf(gamma / 2, df1, df2))
    return (lower, upper)


def inter_item_correlations(cov: np.ndarray) -> tuple[float, float, float]:
    """Mean, minimum and maximum of the k(k-1)/2 inter-item correlations (NaN when undefined)."""
    from .item_covariance import correlation_from_cov

    cov = _as_cov(cov)
    k = cov.shape[0]
    if k < 2:
        return (math.nan, math.nan, math.nan)
    values = correlation_from_cov(cov)[np.triu_indices(k, 1)]
    if not np.isfinite(values).all():
        return (math.nan, math.nan, math.nan)
    return (float(values.mean()), float(values.min()), float(values.max()))
