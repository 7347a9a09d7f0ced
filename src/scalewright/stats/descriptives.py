"""Descriptive statistics of one score: moments with standard errors, quantiles, modes, box-plot points.

Pure functions of 1-D float arrays (missing values already removed).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal, cast

import numpy as np
from numpy.typing import ArrayLike

from ..errors import UsageError
from ..notes import Note, note
from ..results import ResultMixin

#: Hyndman & Fan's (1996) nine sample-quantile types, by numpy's names (numpy's default 'linear' is type 7)
QUANTILE_METHODS = {
    "inverted_cdf": 1, "averaged_inverted_cdf": 2, "closest_observation": 3, "interpolated_inverted_cdf": 4,
    "hazen": 5, "weibull": 6, "linear": 7, "median_unbiased": 8, "normal_unbiased": 9,
}


QuantileMethod = Literal["inverted_cdf", "averaged_inverted_cdf", "closest_observation", "interpolated_inverted_cdf",
                         "hazen", "weibull", "linear", "median_unbiased", "normal_unbiased"]


def check_quantile_method(method: str) -> QuantileMethod:
    if method not in QUANTILE_METHODS:
        raise UsageError(f"unknown quantile method {method!r}; choose one of {', '.join(QUANTILE_METHODS)}")
    return cast(QuantileMethod, method)


def quantiles(values: np.ndarray, probabilities: ArrayLike, *, method: str = "linear") -> np.ndarray:
    """Sample quantiles of Hyndman & Fan's type named by ``method`` (numpy's names).

    References
    ----------
    .. [1] Hyndman, R. J., & Fan, Y. (1996). Sample quantiles in statistical packages.
       The American Statistician, 50(4), 361-365.
    """
    return np.quantile(values, np.asarray(probabilities, dtype=float), method=check_quantile_method(method))


def skewness_se(n: int) -> float:
    r"""Standard error of the adjusted skewness G1 under normality.

    .. math:: SE_{G_1} = \sqrt{\frac{6n(n-1)}{(n-2)(n+1)(n+3)}}

    References
    ----------
    .. [1] Joanes, D. N., & Gill, C. A. (1998). Comparing measures of sample skewness and kurtosis.
       Journal of the Royal Statistical Society D (The Statistician), 47(1), 183-189.
    """
    if n < 3:
        return math.nan
    return math.sqrt(6.0 * n * (n - 1) / ((n - 2) * (n + 1) * (n + 3)))


def kurtosis_se(n: int) -> float:
    r"""Standard error of the adjusted excess kurtosis G2 under normality.

    .. math:: SE_{G_2} = 2\,SE_{G_1}\sqrt{\frac{n^2-1}{(n-3)(n+5)}}

    References
    ----------
    .. [1] Joanes & Gill (1998), The Statistician 47:183-189.
    """
    if n < 4:
        return math.nan
    return 2.0 * skewness_se(n) * math.sqrt((n * n - 1.0) / ((n - 3) * (n + 5)))


def bimodality_coefficient(skewness: float, kurtosis: float, n: int) -> float:
    r"""Sarle's bimodality coefficient from the adjusted skewness and excess kurtosis.

    .. math:: BC = \frac{G_1^2 + 1}{G_2 + \frac{3(n-1)^2}{(n-2)(n-3)}}

    Values above 5/9 (the uniform distribution's value) are read as a sign of bimodality; a normal
    distribution gives 1/3.  Because a flat distribution sits exactly at the threshold, BC alone cannot
    tell "flat" from "two camps" (see docs/shape.md).

    References
    ----------
    .. [1] Pfister, R., Schwarz, K. A., Janczyk, M., Dale, R., & Freeman, J. B. (2013). Good things peak in
       pairs: a note on the bimodality coefficient. Frontiers in Psychology, 4, 700.
    """
    if n < 4 or not (math.isfinite(skewness) and math.isfinite(kurtosis)):
        return math.nan
    return (skewness ** 2 + 1.0) / (kurtosis + 3.0 * (n - 1) ** 2 / ((n - 2) * (n - 3)))


@dataclass(frozen=True)
class Moments(ResultMixin):
    """Mean, SD (n - 1), adjusted skewness G1 and excess kurtosis G2 with their standard errors."""

    n: int
    mean: float
    sd: float
    skewness: float
    skewness_se: float
    kurtosis: float
    kurtosis_se: float
    notes: tuple[Note, ...] = ()  # codes with values, worded by present/messages


def moments(values: np.ndarray) -> Moments:
    r"""Adjusted (bias-corrected) moments of a sample.

    .. math::

        G_1 = \frac{\sqrt{n(n-1)}}{n-2}\, g_1, \qquad
        G_2 = \frac{n-1}{(n-2)(n-3)}\left[(n+1) g_2 + 6\right]

    with :math:`g_1 = m_3/m_2^{3/2}` and :math:`g_2 = m_4/m_2^2 - 3` (scipy.stats ``bias=False``).
    Zero variance is detected first: the shape statistics are then NaN with a note (scipy would warn).

    References
    ----------
    .. [1] Joanes & Gill (1998), The Statistician 47:183-189.
    """
    x = np.asarray(values, dtype=float)
    n = int(x.size)
    notes: list[Note] = []
    mean = float(np.mean(x)) if n else math.nan
    sd = float(np.std(x, ddof=1)) if n >= 2 else math.nan
    skew = kurt = math.nan
    if n < 3:
        notes.append(note("moments-too-few", n=n))
    elif np.ptp(x) == 0:
        notes.append(note("moments-constant"))
    else:
        # the formulas above written out in numpy, as scipy.stats.skew / kurtosis (bias=False) compute them
        # (tests/test_shape_stats.py holds them equal): scipy's wrappers cost milliseconds a call, and a
        # report asks for hundreds (every score and item, overall and per subgroup)
        deviations = x - x.mean()
        squared = deviations * deviations
        m2, m3, m4 = float(np.mean(squared)), float(np.mean(squared * deviations)), float(np.mean(squared * squared))
        g1 = m3 / m2**1.5
        skew = math.sqrt(n * (n - 1)) / (n - 2) * g1
        if n >= 4:
            g2 = m4 / m2**2 - 3.0
            kurt = (n - 1) / ((n - 2) * (n - 3)) * ((n + 1) * g2 + 6.0)
        else:
            notes.append(note("kurtosis-too-few"))
    return Moments(n=n, mean=mean, sd=sd, skewness=skew, skewness_se=skewness_se(n), kurtosis=kurt,
                   kurtosis_se=kurtosis_se(n), notes=tuple(notes))


def modes(values: np.ndarray) -> tuple[float, ...]:
    """The most frequent value(s); empty when no value occurs more than once."""
    distinct, counts = np.unique(np.asarray(values, dtype=float), return_counts=True)
    if counts.size == 0 or counts.max() < 2:
        return ()
    return tuple(float(v) for v in distinct[counts == counts.max()])


@dataclass(frozen=True)
class BoxPlotPoints(ResultMixin):
    """What a box plot draws: quartiles, Tukey's 1.5 IQR fences, whisker ends, and the outliers.

    ``outliers`` are the distinct values beyond the fences with ``outlier_counts`` respondents each.
    """

    q1: float
    median: float
    q3: float
    lower_fence: float
    upper_fence: float
    whisker_low: float
    whisker_high: float
    outliers: tuple[float, ...]
    outlier_counts: tuple[int, ...]


def box_plot_points(values: np.ndarray, *, q1: float, median: float, q3: float) -> BoxPlotPoints:
    """Tukey's (1977) fences q1 - 1.5 IQR and q3 + 1.5 IQR; whiskers reach the most extreme values inside.

    References
    ----------
    .. [1] Tukey, J. W. (1977). Exploratory Data Analysis. Addison-Wesley.
    """
    x = np.asarray(values, dtype=float)
    iqr = q3 - q1
    lower, upper = q1 - 1.5 * iqr, q3 + 1.5 * iqr
    inside = x[(x >= lower) & (x <= upper)]
    outside = x[(x < lower) | (x > upper)]
    distinct, counts = np.unique(outside, return_counts=True)
    return BoxPlotPoints(q1=q1, median=median, q3=q3, lower_fence=lower, upper_fence=upper,
                         whisker_low=float(inside.min()) if inside.size else math.nan,
                         whisker_high=float(inside.max()) if inside.size else math.nan,
                         outliers=tuple(map(float, distinct)), outlier_counts=tuple(map(int, counts)))


@dataclass(frozen=True)
class UniformFit(ResultMixin):
    """Chi-square goodness of fit against a uniform distribution over the score's cells, with w = sqrt(chi2/n)."""

    JSON_KEYS = {"p": "pvalue"}

    chi2: float
    df: int
    p: float
    w: float

    def excess_w(self, n: int) -> float:
        """w less its chance level: sqrt(max(chi2 - df, 0)/n), about 0 for a flat distribution at any n."""
        if not math.isfinite(self.chi2) or n <= 0:
            return math.nan
        return math.sqrt(max(self.chi2 - self.df, 0.0) / n)


def uniform_fit(counts, weights=None) -> UniformFit:
    r"""Pearson's chi-square of observed counts against expected counts proportional to ``weights``.

    .. math:: \chi^2 = \sum_i \frac{(O_i - E_i)^2}{E_i}, \qquad w = \sqrt{\chi^2 / n}

    ``weights`` is the number of attainable values in each cell (equal cells when omitted), so a score that
    is uniform over its attainable values fits.

    References
    ----------
    .. [1] Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences (2nd ed.), ch. 7 (w).
    """
    from scipy.special import chdtrc

    observed = np.asarray(counts, dtype=float)
    weights = np.ones_like(observed) if weights is None else np.asarray(weights, dtype=float)
    n = observed.sum()
    keep = weights > 0
    observed, weights = observed[keep], weights[keep]
    if observed.size < 2 or n <= 0:
        return UniformFit(chi2=math.nan, df=max(int(observed.size) - 1, 0), p=math.nan, w=math.nan)
    expected = n * weights / weights.sum()
    # scipy.stats.chisquare's statistic and upper tail (chdtrc is its chi2.sf), without its slow wrapper
    chi2 = float(np.sum((observed - expected) ** 2 / expected))
    df = int(observed.size - 1)
    return UniformFit(chi2=chi2, df=df, p=float(chdtrc(df, chi2)), w=math.sqrt(chi2 / n))
