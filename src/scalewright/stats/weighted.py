"""Weighted estimates for survey weights: mean, variance, quantiles, covariance, effective sample size.

Survey weights say how many people of the population a respondent stands for; only their ratios matter, so
every function here gives the same result when all weights are multiplied by one positive constant. Rows with
weight 0 are left out. Inference uses Kish's effective sample size, which is approximate unless the weights are
the whole design (no strata, no clusters).

numpy's ``np.cov(aweights=...)`` gives the weighted covariance with the divisor used here; statsmodels'
``DescrStatsW`` is the reference for the quantile definition (hand-written below to keep statsmodels out of
the command line's imports and to drop zero weights first).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import DataError, Problem
from ..notes import Note, note
from ..results import ResultMixin


def _checked(values: np.ndarray, weights: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Finite values with positive weight (the rows an estimate uses)."""
    x = np.asarray(values, dtype=float)
    w = np.asarray(weights, dtype=float)
    if x.shape[0] != w.shape[0]:
        raise DataError(Problem(file="", message=f"{w.shape[0]} weights for {x.shape[0]} rows"))
    if np.any(~np.isfinite(w)) or np.any(w < 0):
        raise DataError(Problem(file="", message="weights must be finite and not negative"))
    keep = w > 0
    keep &= np.isfinite(x) if x.ndim == 1 else np.isfinite(x).all(axis=1)
    return x[keep], w[keep]


def kish_effective_n(weights: np.ndarray) -> float:
    r"""Kish's effective sample size of a set of weights.

    .. math:: n_{\mathrm{eff}} = \frac{(\sum_i w_i)^2}{\sum_i w_i^2}

    Equal to n when all weights are equal, smaller otherwise. Zero weights do not count.

    References
    ----------
    .. [1] Kish, L. (1965). *Survey Sampling*. New York: Wiley.
    """
    w = np.asarray(weights, dtype=float)
    w = w[w > 0]
    return float(w.sum() ** 2 / np.sum(w**2)) if w.size else math.nan


def design_effect(weights: np.ndarray) -> float:
    r"""Kish's design effect due to unequal weights.

    .. math:: \mathrm{deff} = 1 + \mathrm{CV}^2 = n \frac{\sum_i w_i^2}{(\sum_i w_i)^2} = \frac{n}{n_{\mathrm{eff}}}

    with CV the coefficient of variation of the positive weights (standard deviation with divisor n).

    References
    ----------
    .. [1] Kish, L. (1965). *Survey Sampling*. New York: Wiley.
    """
    w = np.asarray(weights, dtype=float)
    w = w[w > 0]
    return float(w.size * np.sum(w**2) / w.sum() ** 2) if w.size else math.nan


def weighted_mean(values: np.ndarray, weights: np.ndarray) -> float:
    r""":math:`\bar x_w = \sum_i w_i x_i / \sum_i w_i` over finite values with positive weight (NaN if none)."""
    x, w = _checked(values, weights)
    return float(np.average(x, weights=w)) if w.size else math.nan


def weighted_variance(values: np.ndarray, weights: np.ndarray) -> float:
    r"""Weighted variance with the divisor of survey (reliability) weights.

    .. math:: s_w^2 = \frac{\sum_i w_i (x_i - \bar x_w)^2}{V_1 - V_2 / V_1}, \qquad V_1 = \sum_i w_i,\;
              V_2 = \sum_i w_i^2

    The divisor is n - 1 when all weights are equal, and the estimate does not change when the weights are
    multiplied by a constant. NaN with fewer than two weighted rows.
    """
    x, w = _checked(values, weights)
    if w.size < 2:
        return math.nan
    return float(np.cov(x, aweights=w, ddof=1))


def weighted_sd(values: np.ndarray, weights: np.ndarray) -> float:
    """Square root of :func:`weighted_variance`."""
    return math.sqrt(weighted_variance(values, weights))


def weighted_covariance(matrix: np.ndarray, weights: np.ndarray) -> np.ndarray:
    r"""Weighted covariance matrix of the complete rows, divisor :math:`V_1 - V_2/V_1` (see
    :func:`weighted_variance`); numpy's ``np.cov(aweights=...)`` computes it."""
    x, w = _checked(matrix, weights)
    k = np.asarray(matrix).shape[1]
    if w.size < 2:
        return np.full((k, k), math.nan)
    return np.atleast_2d(np.cov(x, rowvar=False, aweights=w, ddof=1))


def weighted_quantiles(values: np.ndarray, weights: np.ndarray, probs: np.ndarray) -> np.ndarray:
    r"""Weighted quantiles: the smallest value whose cumulative weight share reaches the probability.

    The weights are summed over tied values :math:`y_1 < y_2 < \dots` with cumulative sums :math:`s_j` and
    total :math:`W`. For probability :math:`p`, if :math:`s_j < pW < s_{j+1}` the quantile is
    :math:`y_{j+1}`; if :math:`pW = s_j` it is :math:`(y_j + y_{j+1})/2`; if :math:`pW < s_1` it is :math:`y_1`.
    This is the definition of statsmodels' ``DescrStatsW.quantile``; "equal" is judged within
    :math:`10^{-10} W` (statsmodels uses an absolute :math:`10^{-10}`), so multiplying the weights by a
    constant changes nothing. It need not equal the interpolated (type 7) unweighted quantile, even with
    equal weights.
    """
    x, w = _checked(values, weights)
    p = np.atleast_1d(np.asarray(probs, dtype=float))
    if w.size == 0:
        return np.full(p.shape, math.nan)
    distinct, where = np.unique(x, return_inverse=True)
    cumulative = np.cumsum(np.bincount(where, weights=w))
    total = cumulative[-1]
    targets = p * total
    index = np.minimum(np.searchsorted(cumulative, targets), distinct.size - 1)
    result = distinct[index].astype(float)
    hit = (np.abs(targets - cumulative[index]) < 1e-10 * total) & (index < distinct.size - 1)
    result[hit] = (distinct[index[hit]] + distinct[index[hit] + 1]) / 2
    return result


@dataclass(frozen=True)
class WeightedSummary(ResultMixin):
    """Weighted mean, sd and moments of one variable, with what the weights are worth."""

    weighted: bool
    weight_column: str
    n: int                  # rows with a value (unweighted count, zero weights included)
    n_zero_weight: int
    n_effective: float
    sum_of_weights: float
    design_effect: float
    mean: float
    sd: float
    skewness: float
    kurtosis: float
    notes: tuple[Note, ...] = ()


def weighted_summary(values: np.ndarray, weights: np.ndarray, *, weight_column: str = "") -> WeightedSummary:
    r"""Weighted mean, sd (divisor :math:`V_1 - V_2/V_1`), skewness and excess kurtosis.

    The skewness and kurtosis are the adjusted moments of :func:`scalewright.stats.descriptives.moments`
    built from weighted central moments :math:`m_r = \sum w_i (x_i-\bar x_w)^r / \sum w_i` with Kish's
    :math:`n_{\mathrm{eff}}` in place of n, so equal weights give the unweighted values.
    """
    x_all = np.asarray(values, dtype=float)
    w_all = np.asarray(weights, dtype=float)
    answered = np.isfinite(x_all)
    n_zero = int(np.count_nonzero(answered & (w_all == 0)))
    x, w = _checked(x_all, w_all)
    n_eff = kish_effective_n(w)
    notes: list[Note] = []
    mean = float(np.average(x, weights=w)) if w.size else math.nan
    sd = math.sqrt(float(np.cov(x, aweights=w, ddof=1))) if w.size >= 2 else math.nan
    skew = kurt = math.nan
    if w.size >= 3 and np.ptp(x) > 0:
        d = x - mean
        m2, m3, m4 = (float(np.average(d**r, weights=w)) for r in (2, 3, 4))
        g1, g2 = m3 / m2**1.5, m4 / m2**2 - 3
        skew = math.sqrt(n_eff * (n_eff - 1)) / (n_eff - 2) * g1 if n_eff > 2 else math.nan
        kurt = ((n_eff - 1) / ((n_eff - 2) * (n_eff - 3)) * ((n_eff + 1) * g2 + 6)) if n_eff > 3 else math.nan
    elif w.size:
        notes.append(note("weighted-moments-undefined", n=int(w.size)))
    return WeightedSummary(weighted=True, weight_column=weight_column, n=int(np.count_nonzero(answered)),
                           n_zero_weight=n_zero, n_effective=n_eff, sum_of_weights=float(w.sum()),
                           design_effect=design_effect(w), mean=mean, sd=sd, skewness=skew, kurtosis=kurt,
                           notes=tuple(notes))


@dataclass(frozen=True)
class WeightedShape(ResultMixin):
    """Weighted description of one score: :class:`WeightedSummary`, quantiles and histogram heights."""

    summary: WeightedSummary
    median: float
    q1: float
    q3: float
    percentiles: dict[str, float]
    histogram_edges: tuple[float, ...]
    histogram_weighted_pct: tuple[float, ...]

    def to_dict(self) -> dict:
        from ..results import to_jsonable

        out = self.summary.to_dict()
        out.update(to_jsonable({"median": self.median, "q1": self.q1, "q3": self.q3, "percentiles": self.percentiles,
                                "quantile_definition": "weighted-inverted-cdf-averaged",
                                "histogram": {"edges": self.histogram_edges,
                                              "weighted_pct": self.histogram_weighted_pct}}))
        out["notes"] = [n.to_dict() for n in self.summary.notes]
        return out


def weighted_shape(values: np.ndarray, weights: np.ndarray, *, percentiles=(5, 10, 25, 50, 75, 90, 95),
                   edges=None, weight_column: str = "") -> WeightedShape:
    """Weighted summary, quantiles (:func:`weighted_quantiles`) and the share of the weight in each histogram
    cell ``[edges[i], edges[i+1])`` (numpy's ``histogram`` with weights; its last cell includes its upper end)."""
    summary = weighted_summary(values, weights, weight_column=weight_column)
    x, w = _checked(values, weights)
    probs = np.array([25.0, 50.0, 75.0, *map(float, percentiles)]) / 100
    q = weighted_quantiles(x, w, probs)
    heights: tuple[float, ...] = ()
    if edges is not None and len(edges) > 1:
        mass, _ = np.histogram(x, bins=np.asarray(edges, dtype=float), weights=w)
        total = w.sum()
        heights = tuple(float(v) for v in (100.0 * mass / total if total > 0 else np.full(mass.shape, math.nan)))
    return WeightedShape(summary=summary, q1=float(q[0]), median=float(q[1]), q3=float(q[2]),
                         percentiles={f"{p:g}": float(v) for p, v in zip(percentiles, q[3:], strict=True)},
                         histogram_edges=tuple(map(float, edges)) if edges is not None else (),
                         histogram_weighted_pct=heights)


def weighted_pairwise_moments(matrix: np.ndarray, weights: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    r"""Weighted item means (every answer given) and pairwise-complete weighted covariances.

    For items j, k and the rows :math:`R_{jk}` that answered both with a positive weight,

    .. math:: s_{jk} = \frac{\sum_{R_{jk}} w_i (x_{ij} - \bar x_{j|jk})(x_{ik} - \bar x_{k|jk})}
              {V_1 - V_2 / V_1}, \qquad V_1 = \sum_{R_{jk}} w_i,\; V_2 = \sum_{R_{jk}} w_i^2

    with :math:`\bar x_{j|jk}` the weighted mean of item j over :math:`R_{jk}`: with no missing answers this
    is :func:`weighted_covariance`, and with unit weights the usual pairwise covariance (divisor
    :math:`n_{jk} - 1`). NaN where a pair has fewer than two weighted rows. Sums of cross-products about the
    overall weighted means, from matrix products (hand-written: numpy's ``cov`` has no pairwise option).
    """
    x = np.asarray(matrix, dtype=float)
    w = np.asarray(weights, dtype=float)
    if x.ndim != 2 or w.shape != (x.shape[0],):
        raise DataError(Problem(file="", message=f"{w.size} weights for {x.shape[0]} rows"))
    if np.any(~np.isfinite(w)) or np.any(w < 0):
        raise DataError(Problem(file="", message="weights must be finite and not negative"))
    answered = (np.isfinite(x) & (w > 0)[:, None]).astype(float)
    with np.errstate(invalid="ignore", divide="ignore"):
        column_w = (answered * w[:, None]).sum(axis=0)
        means = np.where(answered > 0, x, 0.0).T @ w / column_w
        centred = np.where(answered > 0, x - means, 0.0)  # about the item means: less cancellation below
        weighted = answered * w[:, None]
        v1 = weighted.T @ answered
        v2 = (weighted * w[:, None]).T @ answered
        sums = (centred * w[:, None]).T @ answered          # [j, k]: sum over R_jk of w x_j (centred)
        cross = (centred * w[:, None]).T @ centred
        cov = (cross - sums * sums.T / v1) / (v1 - v2 / v1)
    cov[~(v1 - v2 / np.where(v1 > 0, v1, 1) > 0)] = np.nan
    return means, cov
