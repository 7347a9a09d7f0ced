"""Pairwise comparisons by the studentized range: Tukey's HSD and the Games-Howell test.

Both refer ``sqrt(2) |t|`` to the studentized range distribution of ``k`` means. scipy's
``studentized_range.sf`` integrates that distribution adaptively, one value at a time (tens of
milliseconds each), and a report asks for hundreds; :func:`studentized_range_sf` evaluates the same
double integral on a fixed Gauss-Legendre grid for all values at once (tests hold it to scipy's values).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: scipy's switch to the infinite-df form of the distribution (kept, so the two agree above it too)
ASYMPTOTIC_DF = 100_000
#: each tail of the chi distribution of the denominator left out of the outer integral
_TAIL = 1e-16
#: the inner integral runs over [-_Z_EDGE, _Z_EDGE]: the normal density is below 1e-18 beyond it
_Z_EDGE = 9.0
#: Gauss-Legendre points per panel, and panels of the outer (log s) and the inner (z) integral
_POINTS, _OUTER_PANELS, _INNER_PANELS = 10, 24, 12


def _legendre_panels(lower: np.ndarray, upper: np.ndarray, panels: int, points: int) -> tuple[np.ndarray, np.ndarray]:
    """Nodes and weights of composite Gauss-Legendre rules on ``[lower, upper]`` (one row per interval)."""
    x, w = np.polynomial.legendre.leggauss(points)
    lower, upper = np.atleast_1d(lower)[:, None], np.atleast_1d(upper)[:, None]
    width = (upper - lower) / panels
    starts = lower + width * np.arange(panels)
    nodes = (starts[:, :, None] + width[:, :, None] * (x + 1) / 2).reshape(len(lower), -1)
    weights = np.broadcast_to(width[:, :, None] * w / 2, (len(lower), panels, points)).reshape(len(lower), -1)
    return nodes, weights


_Z_NODES, _Z_WEIGHTS = (a[0] for a in _legendre_panels(np.array([-_Z_EDGE]), np.array([_Z_EDGE]), _INNER_PANELS,
                                                       _POINTS))


def _range_cdf_normal(w: np.ndarray, k: int) -> np.ndarray:
    """P(R <= w) for the range R of k standard normal values: k * integral of phi(z) (Phi(z) - Phi(z - w))^(k-1)."""
    from scipy.special import ndtr

    phi = np.exp(-_Z_NODES ** 2 / 2) / np.sqrt(2 * np.pi) * _Z_WEIGHTS
    inside = ndtr(_Z_NODES) - ndtr(_Z_NODES - w[..., None])
    return k * (inside ** (k - 1)) @ phi


def studentized_range_sf(q, k: int, df) -> np.ndarray:
    r"""Upper tail probability of the studentized range of ``k`` means with ``df`` degrees of freedom.

    .. math::

        P(Q > q) = 1 - \int_0^\infty g_\nu(s)\, k \int_{-\infty}^{\infty} \phi(z)
        \left[\Phi(z) - \Phi(z - q s)\right]^{k-1} dz\, ds

    where :math:`g_\nu` is the density of :math:`\sqrt{\chi^2_\nu / \nu}`. The outer integral runs over
    :math:`\log s` between the chi distribution's :math:`10^{-16}` quantiles, or from where the rest of
    the integral is bounded below :math:`10^{-16}` (240 Gauss-Legendre nodes), the inner one over
    :math:`[-9, 9]` (120 nodes). Above 100,000 df
    the infinite-df form is used, as scipy does. Within 1e-9 of scipy's adaptive integration
    (which is itself accurate to about that) (``tests/test_range_pairs.py``).

    Parameters
    ----------
    q : array_like
        Values of the studentized range (``sqrt(2) |t|`` for a pair of means).
    k : int
        Number of means (groups), at least 2.
    df : array_like
        Degrees of freedom, broadcast against ``q``; need not be whole (Welch-Satterthwaite).

    Returns
    -------
    numpy.ndarray
        The probabilities, NaN where ``q`` or ``df`` is NaN or ``df`` is not positive.

    References
    ----------
    .. [1] Tukey, J. W. (1953). The problem of multiple comparisons. Unpublished manuscript, Princeton
       University (the distribution's use for all pairs).
    .. [2] Copenhaver, M. D., & Holland, B. (1988). Computation of the distribution of the maximum
       studentized range statistic with application to multiple significance testing of simple effects.
       Journal of Statistical Computation and Simulation, 30(1), 1-15.
    """
    from scipy.special import gammainc, gammainccinv, gammaincinv, gammaln

    q, df = np.broadcast_arrays(np.asarray(q, dtype=float), np.asarray(df, dtype=float))
    shape = q.shape
    q, df = q.ravel(), df.ravel()
    out = np.full(q.shape, np.nan)
    usable = np.isfinite(df) & (df > 0) & ~np.isnan(q)
    large = usable & (df >= ASYMPTOTIC_DF)
    if large.any():
        out[large] = 1.0 - _range_cdf_normal(np.maximum(q[large], 0.0), k)
    finite = usable & ~large
    if finite.any():
        nu, qs = df[finite], np.maximum(q[finite], 0.0)
        half = nu / 2  # s^2 nu / 2 is a gamma(nu / 2) variate
        low = 0.5 * np.log(gammaincinv(half, _TAIL) / half)
        high = 0.5 * np.log(gammainccinv(half, _TAIL) / half)
        # below y the integrand is at most C e^(nu y) k (q s / sqrt(2 pi))^(k-1): start where its integral
        # falls under _TAIL (few degrees of freedom have a long left tail that a large q makes irrelevant)
        log_c = np.log(2) + half * np.log(half) - gammaln(half)
        m = nu + k - 1
        with np.errstate(divide="ignore"):
            bound = (np.log(_TAIL * m) - log_c - np.log(k) - (k - 1) * np.log(qs / np.sqrt(2 * np.pi))) / m
        low = np.maximum(low, np.minimum(bound, 0.0))
        y, weights = _legendre_panels(low, high, _OUTER_PANELS, _POINTS)
        # density of y = log s, up to a constant: s^nu exp(-nu s^2 / 2), taken relative to its mode y = 0;
        # the weights are scaled to the mass of [low, high] so no normalising constant loses digits
        weights = weights * np.exp(nu[:, None] * (y - np.expm1(2 * y) / 2))
        weights *= ((1.0 - gammainc(half, half * np.exp(2 * low))) / weights.sum(axis=1))[:, None]
        out[finite] = 1.0 - np.sum(weights * _range_cdf_normal(qs[:, None] * np.exp(y), k), axis=1)
    return np.clip(out, 0.0, 1.0).reshape(shape)


@dataclass(frozen=True)
class RangePairs:
    """All pairs ``(first[i], second[i])`` of groups, as index arrays into the groups given."""

    first: np.ndarray
    second: np.ndarray
    difference: np.ndarray
    se: np.ndarray
    statistic: np.ndarray
    df: np.ndarray
    pvalue: np.ndarray
    hedges_g: np.ndarray


def _moments(samples) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    return (np.array([len(x) for x in samples], dtype=float), np.array([np.mean(x) for x in samples]),
            np.array([np.var(x, ddof=1) for x in samples]))


def _pairs_of(n, means, variances) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    n, means, variances = (np.asarray(a, dtype=float) for a in (n, means, variances))
    first, second = np.triu_indices(len(n), k=1)
    return n, means, variances, first, second


def _hedges_g(n, means, variances, first, second) -> np.ndarray:
    """Hedges' g of each pair: Cohen's d on the pooled sd, times 1 - 3 / (4 (n_a + n_b) - 9) (Hedges, 1981)."""
    na, nb = n[first], n[second]
    pooled = np.sqrt(((na - 1) * variances[first] + (nb - 1) * variances[second]) / (na + nb - 2))
    with np.errstate(divide="ignore", invalid="ignore"):
        return (means[first] - means[second]) / pooled * (1 - 3 / (4 * (na + nb) - 9))


def games_howell_pairs(samples) -> RangePairs:
    r"""Games-Howell test of every pair of groups: Welch's se and df, p from the studentized range.

    .. math::

        t_{ij} = \frac{\bar x_i - \bar x_j}{\sqrt{s_i^2 / n_i + s_j^2 / n_j}}, \quad
        \nu_{ij} = \frac{(s_i^2/n_i + s_j^2/n_j)^2}{\frac{(s_i^2/n_i)^2}{n_i - 1} + \frac{(s_j^2/n_j)^2}{n_j - 1}},
        \quad p_{ij} = P(Q_{k, \nu_{ij}} > \sqrt 2 |t_{ij}|)

    Parameters
    ----------
    samples : sequence of 1-d arrays
        The scores of each group (at least two values each).

    Returns
    -------
    RangePairs
        Pairs in the order of ``numpy.triu_indices``; a pair of two groups without spread has NaN
        statistic, df and p-value.

    References
    ----------
    .. [1] Games, P. A., & Howell, J. F. (1976). Pairwise multiple comparison procedures with unequal n's
       and/or variances: a Monte Carlo study. Journal of Educational Statistics, 1(2), 113-125.
    """
    return games_howell_from_moments(*_moments(samples))


def games_howell_from_moments(n, means, variances) -> RangePairs:
    """:func:`games_howell_pairs` from each group's size, mean and variance (n - 1 denominator)."""
    n, means, variances, first, second = _pairs_of(n, means, variances)
    v = variances / n
    with np.errstate(divide="ignore", invalid="ignore"):
        se = np.sqrt(v[first] + v[second])
        statistic = (means[first] - means[second]) / se
        df = (v[first] + v[second]) ** 2 / (v[first] ** 2 / (n[first] - 1) + v[second] ** 2 / (n[second] - 1))
    pvalue = studentized_range_sf(np.sqrt(2) * np.abs(statistic), len(n), df)
    return RangePairs(first, second, means[first] - means[second], se, statistic, df, pvalue,
                      _hedges_g(n, means, variances, first, second))


def tukey_pairs(samples) -> RangePairs:
    r"""Tukey's HSD (Tukey-Kramer for unequal sizes) of every pair of groups, on the pooled error variance.

    .. math::

        t_{ij} = \frac{\bar x_i - \bar x_j}{\sqrt{MS_W (1/n_i + 1/n_j)}}, \quad
        p_{ij} = P(Q_{k, N - k} > \sqrt 2 |t_{ij}|)

    References
    ----------
    .. [1] Kramer, C. Y. (1956). Extension of multiple range tests to group means with unequal numbers of
       replications. Biometrics, 12(3), 307-310.
    """
    return tukey_from_moments(*_moments(samples))


def tukey_from_moments(n, means, variances) -> RangePairs:
    """:func:`tukey_pairs` from each group's size, mean and variance (n - 1 denominator)."""
    n, means, variances, first, second = _pairs_of(n, means, variances)
    df = n.sum() - len(n)
    ms_within = np.sum((n - 1) * variances) / df
    with np.errstate(divide="ignore", invalid="ignore"):
        se = np.sqrt(ms_within / n[first] + ms_within / n[second])
        statistic = (means[first] - means[second]) / se
    pvalue = studentized_range_sf(np.sqrt(2) * np.abs(statistic), len(n), df)
    return RangePairs(first, second, means[first] - means[second], se, statistic, np.full(len(first), df),
                      pvalue, _hedges_g(n, means, variances, first, second))


__all__ = ["RangePairs", "games_howell_from_moments", "games_howell_pairs", "studentized_range_sf", "tukey_from_moments",
           "tukey_pairs"]
