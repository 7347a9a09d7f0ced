"""Internal-consistency coefficients of one scale as functions of its item covariance matrix.

Cronbach's alpha (raw and standardized), Guttman's lambda 2 and 6, the inter-item correlations, Feldt's
confidence interval for alpha and Feldt's test of two independent alphas. Every one is a function of
sufficient statistics (n and the covariance matrix), so it gives the same answer from one array, from chunks
of a large file or from a distributed engine.
"""
from __future__ import annotations

import math

import numpy as np

from ..errors import DataError
from .item_covariance import correlation_from_cov, is_invertible


def as_cov_matrix(cov: np.ndarray) -> np.ndarray:
    matrix = np.asarray(cov, dtype=np.float64)
    if matrix.ndim != 2 or matrix.shape[0] != matrix.shape[1]:
        raise DataError(f"covariance matrix must be square, got shape {matrix.shape}")
    return matrix


#: a variance of a sum of items below this share of the items' own variances is rounding noise around
#: zero (sums of covariances cancel); numerical tolerance, common practice, no source
_ZERO_VARIANCE_SHARE = 1e-12


def has_variance(variance: np.ndarray | float, item_variances: np.ndarray | float) -> np.ndarray | bool:
    return np.asarray(variance) > _ZERO_VARIANCE_SHARE * np.asarray(item_variances)


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
    cov = as_cov_matrix(cov)
    k = cov.shape[0]
    if k < 2 or not np.isfinite(cov).all():
        return math.nan
    total = float(cov.sum())
    if not (total > 0 and has_variance(total, float(np.trace(cov)))):
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
    cov = as_cov_matrix(cov)
    k = cov.shape[0]
    if k < 2:
        return math.nan
    corr = correlation_from_cov(cov)
    if not np.isfinite(corr).all():
        return math.nan
    mean_r = float(corr[np.triu_indices(k, 1)].mean())
    denominator = 1.0 + (k - 1) * mean_r
    return float(k * mean_r / denominator) if denominator != 0 else math.nan


def guttman_lambda2_from_cov(cov: np.ndarray) -> float:
    r"""Guttman's lambda 2 (covariance form).

    .. math::

        \lambda_2 = \lambda_1 + \frac{\sqrt{\frac{k}{k-1} \sum_{i \ne j} s_{ij}^2}}{s_X^2},
        \qquad \lambda_1 = 1 - \frac{\sum_j s_j^2}{s_X^2}

    References
    ----------
    .. [1] Guttman, L. (1945). A basis for analyzing test-retest reliability. Psychometrika, 10, 255-282.
    """
    cov = as_cov_matrix(cov)
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
    cov = as_cov_matrix(cov)
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
    from scipy.special import (
        fdtri,  # inverse F cdf; scipy.stats would cost seconds to import
    )

    if not 0 < confidence_level < 1:
        raise DataError(f"confidence_level must lie strictly between 0 and 1, got {confidence_level}")
    if not math.isfinite(alpha) or n < 3 or k < 2:
        return (math.nan, math.nan)
    gamma = 1.0 - confidence_level
    df1, df2 = n - 1, (n - 1) * (k - 1)
    lower = 1.0 - (1.0 - alpha) * float(fdtri(df1, df2, 1.0 - gamma / 2))
    upper = 1.0 - (1.0 - alpha) * float(fdtri(df1, df2, gamma / 2))
    return (lower, upper)


def inter_item_correlations(cov: np.ndarray) -> tuple[float, float, float]:
    """Mean, minimum and maximum of the k(k-1)/2 inter-item correlations (NaN when undefined)."""
    cov = as_cov_matrix(cov)
    k = cov.shape[0]
    if k < 2:
        return (math.nan, math.nan, math.nan)
    values = correlation_from_cov(cov)[np.triu_indices(k, 1)]
    if not np.isfinite(values).all():
        return (math.nan, math.nan, math.nan)
    return (float(values.mean()), float(values.min()), float(values.max()))


def alpha_difference_test(alpha_a: float, n_a: int, alpha_b: float, n_b: int) -> tuple[float, float]:
    r"""Feldt's test that two independent samples have the same coefficient alpha.

    .. math::

        W = \frac{1 - \hat\alpha_a}{1 - \hat\alpha_b} \sim F(n_a - 1,\, n_b - 1)

    Returns
    -------
    (W, p) : tuple of float
        The statistic and its two-sided p-value; NaN when either alpha is undefined or equals 1, or a
        sample has fewer than 3 rows.

    References
    ----------
    .. [1] Feldt, L. S. (1969). A test of the hypothesis that Cronbach's alpha or Kuder-Richardson
       coefficient twenty is the same for two tests. Psychometrika, 34, 363-373.
    """
    from scipy.special import (  # F cdf and survival function without importing scipy.stats
        fdtr,
        fdtrc,
    )

    if not (math.isfinite(alpha_a) and math.isfinite(alpha_b)) or n_a < 3 or n_b < 3 or alpha_b >= 1:
        return (math.nan, math.nan)
    w = (1.0 - alpha_a) / (1.0 - alpha_b)
    if not w > 0:
        return (math.nan, math.nan)
    tail = min(float(fdtr(n_a - 1, n_b - 1, w)), float(fdtrc(n_a - 1, n_b - 1, w)))
    return (float(w), min(1.0, 2.0 * tail))
