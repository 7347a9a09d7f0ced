"""Internal-consistency reliability and item analysis, as functions of n and the item covariance matrix.

Every statistic here is a function of sufficient statistics (row count and covariance matrix), so it gives
the same answer whether the matrix came from one array, from chunks of a large file or from a distributed
engine. :func:`scale_reliability` is the one entry point that starts from the keyed item matrix.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ..errors import DataError
from ..notes import Note
from ..results import ResultMixin, to_jsonable
from .bootstrap import AlphaBootstrap
from .coded import CodedAnswers
from .item_covariance import correlation_from_cov, is_invertible
from .missing import MissingHandling
from .subgroups import SubgroupSplit


def _as_cov(cov: np.ndarray) -> np.ndarray:
    matrix = np.asarray(cov, dtype=np.float64)
    if matrix.ndim != 2 or matrix.shape[0] != matrix.shape[1]:
        raise DataError(f"covariance matrix must be square, got shape {matrix.shape}")
    return matrix


#: a variance of a sum of items below this share of the items' own variances is rounding noise around
#: zero (sums of covariances cancel); numerical tolerance, common practice, no source
_ZERO_VARIANCE_SHARE = 1e-12


def _has_variance(variance: np.ndarray | float, item_variances: np.ndarray | float) -> np.ndarray | bool:
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
    cov = _as_cov(cov)
    k = cov.shape[0]
    if k < 2 or not np.isfinite(cov).all():
        return math.nan
    total = float(cov.sum())
    if not (total > 0 and _has_variance(total, float(np.trace(cov)))):
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
    r = np.where((variances > 0) & (rest_variance > 0) & _has_variance(rest_variance, variances.sum() - variances),
                 r, np.nan)
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
    cov = _as_cov(cov)
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


# --------------------------------------------------------------------------------------------------------
# Results: one scale, its items, its flags


@dataclass(frozen=True)
class ReliabilityThresholds(ResultMixin):
    """Cut-offs of the flags; every one is a default that a caller may override.

    Sources (see docs/reliability.md): item-rest r below .30 and alpha below .70 are common practice,
    usually traced to Nunnally & Bernstein (1994); alpha above .95 suggests redundant items (Streiner,
    2003); an inter-item r above .85 as "the same question twice" is common practice, no single source.
    """

    weak_item_rest_r: float = 0.30
    redundant_r: float = 0.85
    low_alpha: float = 0.70
    excess_alpha: float = 0.95


@dataclass(frozen=True)
class ReliabilityFlag(ResultMixin):
    """A finding worth a look: ``item`` is None for scale-level flags; ``items`` names both of a pair."""

    item: str | None
    code: str
    message: str
    value: float = math.nan
    items: tuple[str, ...] = ()
    values: Mapping[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        # ``message`` is left empty here and worded by scalewright.present.messages (see ``as_note``) when
        # a document is rendered; ``values`` are the numbers behind it
        out: dict[str, Any] = {"item": self.item, "code": self.code, "message": self.message,
                               "value": to_jsonable(self.value)}
        if self.items:
            out["items"] = list(self.items)
        if self.values:
            out["values"] = to_jsonable(dict(self.values))
        return out

    def as_note(self) -> Note:
        """The flag as a code with values, for :func:`scalewright.present.messages.describe`."""
        return Note(code=self.code, values=dict(self.values))


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
class ScaleReliability(ResultMixin):
    """Reliability and item analysis of one scale in one sample (the contract block ``scales.<name>``)."""

    n_rows: int
    n_used: int
    n_set_aside: int
    k: int
    missing_handling: str
    confidence_level: float
    alpha: float
    alpha_ci: tuple[float, float]
    alpha_standardized: float
    omega_total: float
    omega_method: str | None
    omega_converged: bool | None
    heywood_items: tuple[str, ...]
    lambda2: float
    lambda6: float
    mean_inter_item_r: float
    min_inter_item_r: float
    max_inter_item_r: float
    items: dict[str, ItemStatistics]
    flags: tuple[ReliabilityFlag, ...]
    thresholds: ReliabilityThresholds
    bootstrap: AlphaBootstrap | None
    notes: tuple[str, ...]
    missing: MissingHandling | None = None

    def to_dict(self) -> dict[str, Any]:
        out = super().to_dict()
        out["items"] = {name: item.to_dict() for name, item in self.items.items()}
        out.pop("missing")
        if self.missing is not None:
            out.update(self.missing.to_dict())
            out["notes"] = [*out["notes"], *self.missing.note_dicts]
        return out

    def flag_codes(self) -> set[tuple[str | None, str]]:
        return {(flag.item, flag.code) for flag in self.flags}


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


#: a correlation or loading this close to zero is zero up to rounding, and has no sign to flag
#: (numerical tolerance, common practice, no source)
_ROUNDING_NOISE = 1e-9
#: a first-factor loading must be at least this far below zero for the item to be called mis-keyed; a loading
#: nearer zero says the item measures little of the factor, not that it points the other way (it gets the
#: weak-item flag instead). Common practice, no source: loadings below .10 in size are read as negligible.
MISKEY_MIN_LOADING = 0.10


def first_factor_signs(loadings: np.ndarray, corr: np.ndarray) -> np.ndarray:
    """Loadings on the scale's first factor, signed so that most of the scale's items load positively.

    The one-factor fit's standardized loadings when they are defined; otherwise (the fit failed or was not
    possible) the first principal axis of the correlation matrix, scaled by the square root of its
    eigenvalue. A factor's sign is arbitrary; it is chosen so that most items load positively (on a tie,
    so that the loadings sum to a positive number), so the items keyed against the majority of the scale
    load negatively. When half the items point each way the data cannot say which half is mis-keyed.
    NaN where undefined.
    """
    loadings = np.asarray(loadings, dtype=np.float64)
    k = loadings.size
    if np.isfinite(loadings).all() or k < 3:
        values = loadings.copy()
    elif np.isfinite(corr).all():
        eigenvalues, vectors = np.linalg.eigh(corr)
        values = vectors[:, -1] * math.sqrt(max(float(eigenvalues[-1]), 0.0))
    else:
        return np.full(k, np.nan)
    if np.isfinite(values).all():
        positive, negative = int((values > 0).sum()), int((values < 0).sum())
        if negative > positive or (negative == positive and values.sum() < 0):
            values = -values
    return values


def reliability_flags(*, item_names: Sequence[str], alpha: float, item_rest_r: np.ndarray,
                      loadings: np.ndarray, alpha_reversed: np.ndarray, corr: np.ndarray,
                      reversed_items: Sequence[str] = (),
                      thresholds: ReliabilityThresholds = ReliabilityThresholds(),
                      cov: np.ndarray | None = None) -> tuple[ReliabilityFlag, ...]:
    """The flags of one scale: codes of the JSON contract with the numbers behind them.

    ``miskey-suspect`` rests on the sign of the item's loading on the scale's first factor
    (:func:`first_factor_signs`): below ``-MISKEY_MIN_LOADING`` the item runs against the scale. Item-rest r
    is given as support but does not decide: when two of five items point the other way, the rest of a
    correctly keyed item holds both of them and its item-rest r can be near zero or negative. With two items
    (no factor to speak of) a negative correlation flags both. ``alpha_reversed`` in a miskey flag's values is
    alpha with *every* flagged item reversed at once (from ``cov``), the scale the advice leads to.
    The sentences are written by :mod:`scalewright.present.messages`.
    """
    flags: list[ReliabilityFlag] = []
    declared = set(reversed_items)
    k = len(item_names)
    signed = first_factor_signs(loadings, corr)
    suspect = np.zeros(k, dtype=bool)
    for j in range(k):
        r, loading = float(item_rest_r[j]), float(signed[j])
        if k >= 3 and math.isfinite(loading):
            suspect[j] = loading < -MISKEY_MIN_LOADING
        elif k == 2:
            suspect[j] = math.isfinite(r) and r < -_ROUNDING_NOISE
    joint_alpha = float(alpha_reversed[int(np.flatnonzero(suspect)[0])]) if suspect.sum() == 1 else math.nan
    if suspect.sum() > 1 and cov is not None and k >= 3:
        sign = np.where(suspect, -1.0, 1.0)
        joint_alpha = cronbach_alpha_from_cov(np.asarray(cov, dtype=np.float64) * np.outer(sign, sign))
    if k == 2:
        joint_alpha = math.nan  # reversing both items of a pair changes nothing
    flagged = tuple(name for name, is_suspect in zip(item_names, suspect, strict=True) if is_suspect)
    for j, name in enumerate(item_names):
        r = float(item_rest_r[j])
        if suspect[j]:
            flags.append(ReliabilityFlag(
                item=name, code="miskey-suspect", value=r, message="",
                values={"item": name, "loading": float(signed[j]), "item_rest_r": r,
                        "declared_reversed": name in declared, "alpha": alpha, "alpha_reversed": joint_alpha,
                        "reversed_together": flagged, "min_loading": MISKEY_MIN_LOADING}))
        elif math.isfinite(r) and r < thresholds.weak_item_rest_r:
            flags.append(ReliabilityFlag(
                item=name, code="weak-item", value=r, message="",
                values={"item": name, "item_rest_r": r, "cutoff": thresholds.weak_item_rest_r}))
    for i in range(k):
        for j in range(i + 1, k):
            r = float(corr[i, j])
            if math.isfinite(r) and r > thresholds.redundant_r:
                a, b = item_names[i], item_names[j]
                flags.append(ReliabilityFlag(
                    item=a, code="redundant-pair", value=r, items=(a, b), message="",
                    values={"item": a, "other": b, "r": r, "cutoff": thresholds.redundant_r}))
    if math.isfinite(alpha) and alpha < thresholds.low_alpha:
        flags.append(ReliabilityFlag(item=None, code="low-reliability", value=alpha, message="",
                                     values={"alpha": alpha, "cutoff": thresholds.low_alpha}))
    if math.isfinite(alpha) and alpha > thresholds.excess_alpha:
        flags.append(ReliabilityFlag(item=None, code="excess-reliability", value=alpha, message="",
                                     values={"alpha": alpha, "cutoff": thresholds.excess_alpha}))
    return tuple(flags)


def reliability_from_cov(cov: np.ndarray, n_used: int, *, item_names: Sequence[str],
                         confidence_level: float = 0.95,
                         thresholds: ReliabilityThresholds = ReliabilityThresholds(),
                         reversed_items: Sequence[str] = (),
                         descriptives: ItemDescriptives | None = None,
                         n_rows: int | None = None, missing_handling: str = "listwise",
                         bootstrap: AlphaBootstrap | None = None,
                         notes: Sequence[str] = ()) -> ScaleReliability:
    """Every reliability statistic of one scale from its sufficient statistics (n and covariance matrix).

    This is the function to call with a covariance matrix accumulated elsewhere (chunks of a large file,
    a distributed engine). Item descriptives are optional; without them those fields are NaN.
    """
    from .omega import fit_one_factor, omega_if_deleted_from_cov, omega_total_from_fit

    cov = _as_cov(cov)
    k = cov.shape[0]
    names = tuple(str(name) for name in item_names)
    if len(names) != k:
        raise DataError(f"{len(names)} item name(s) given for a {k} x {k} covariance matrix")
    if len(set(names)) != k:
        raise DataError(f"item names must be unique: {', '.join(names)}")
    out_notes: list[str] = list(notes)
    nan2 = (math.nan, math.nan)
    usable = k >= 2 and n_used >= 3 and np.isfinite(cov).all()
    if k < 2:
        out_notes.append("only one item: alpha, omega and the other consistency statistics need at least 2 items")
    elif n_used < 3:
        out_notes.append(f"only {n_used} usable row(s): the statistics need at least 3")
    elif not np.isfinite(cov).all():
        out_notes.append("some item pairs have fewer than 2 rows in common: the covariance matrix is incomplete")
    if not usable:
        cov_used = np.full((k, k), np.nan)
    else:
        cov_used = cov
    variances = np.diag(cov_used)
    constant = [names[j] for j in range(k) if usable and not variances[j] > 0]
    if constant:
        out_notes.append(f"no variance among the rows used for {', '.join(constant)}: item-rest r, standardized "
                         "alpha, inter-item correlations, lambda6 and omega are undefined")
    alpha = cronbach_alpha_from_cov(cov_used) if usable else math.nan
    if usable and not math.isfinite(alpha):
        out_notes.append("the scale's total has no variance among the rows used: alpha is undefined")
    singular = usable and not constant and not is_invertible(cov_used)
    if singular:
        out_notes.append("the item covariance matrix is singular (an item is an exact linear combination of "
                         "others): lambda6 and omega are undefined")
    if usable and missing_handling == "pairwise" and np.linalg.eigvalsh(cov_used).min() < -1e-10 * abs(cov_used).max():
        out_notes.append("the pairwise covariance matrix is not positive semi-definite: treat the results "
                         "with caution")
    fit = fit_one_factor(cov_used) if usable and not constant and not singular and k >= 3 else None
    if usable and k == 2:
        out_notes.append("omega needs at least 3 items for a one-factor model")
    elif fit is not None and k == 3:
        out_notes.append("omega if deleted needs at least 4 items (a one-factor model needs 3)")
    elif usable and not constant and not singular and k >= 3 and fit is None:
        out_notes.append("the one-factor model could not be fitted: omega is undefined")
    if fit is not None:
        out_notes.extend(fit.notes)
        if fit.heywood_items:
            listed = ", ".join(names[j] for j in fit.heywood_items)
            out_notes.append(f"improper one-factor solution (Heywood case): the uniqueness of {listed} reached "
                             "the fitting bound of .005; omega may be overstated")
    corr = correlation_from_cov(cov_used)
    mean_r, min_r, max_r = inter_item_correlations(cov_used) if usable else (math.nan,) * 3
    item_rest_r = item_rest_correlations_from_cov(cov_used) if usable else np.full(k, np.nan)
    if_deleted = alpha_if_deleted_from_cov(cov_used) if usable else np.full(k, np.nan)
    # each reduced fit starts afresh from its own squared multiple correlations: a start from the full
    # fit's uniquenesses saved a fifth of the steps but, on small samples with a Heywood case, ended in a
    # worse local optimum in 11 of 105 fits (docs/performance.md)
    omega_deleted = (omega_if_deleted_from_cov(cov_used)
                     if fit is not None and k >= 4
                     else np.full(k, np.nan))
    loadings = fit.standardized_loadings if fit is not None else np.full(k, np.nan)
    alpha_reversed = alpha_with_item_reversed_from_cov(cov_used) if usable else np.full(k, np.nan)
    declared = set(reversed_items)
    items: dict[str, ItemStatistics] = {}
    for j, name in enumerate(names):
        d = descriptives
        items[name] = ItemStatistics(
            name=name, reversed=name in declared,
            n=int(d.n[j]) if d is not None else n_used,
            mean=float(d.mean[j]) if d is not None else math.nan,
            sd=float(d.sd[j]) if d is not None else math.nan,
            missing_pct=float(d.missing_pct[j]) if d is not None else math.nan,
            floor_pct=float(d.floor_pct[j]) if d is not None else math.nan,
            ceiling_pct=float(d.ceiling_pct[j]) if d is not None else math.nan,
            item_rest_r=float(item_rest_r[j]), alpha_if_deleted=float(if_deleted[j]),
            omega_if_deleted=float(omega_deleted[j]), loading=float(loadings[j]),
            counts=dict(d.counts[j]) if d is not None else {})
    flags = reliability_flags(item_names=names, alpha=alpha, item_rest_r=item_rest_r, loadings=loadings,
                              alpha_reversed=alpha_reversed, corr=corr, reversed_items=reversed_items,
                              thresholds=thresholds, cov=cov_used) if usable else ()
    n_rows = n_used if n_rows is None else n_rows
    return ScaleReliability(
        n_rows=n_rows, n_used=n_used, n_set_aside=max(0, n_rows - n_used) if missing_handling == "listwise" else 0,
        k=k, missing_handling=missing_handling, confidence_level=confidence_level, alpha=alpha,
        alpha_ci=feldt_alpha_ci(alpha, n_used, k, confidence_level=confidence_level) if usable else nan2,
        alpha_standardized=standardized_alpha_from_cov(cov_used) if usable else math.nan,
        omega_total=omega_total_from_fit(fit), omega_method=fit.method if fit else None,
        omega_converged=fit.converged if fit else None,
        heywood_items=tuple(names[j] for j in fit.heywood_items) if fit else (),
        lambda2=guttman_lambda2_from_cov(cov_used) if usable else math.nan,
        lambda6=guttman_lambda6_from_cov(cov_used) if usable and not constant else math.nan,
        mean_inter_item_r=mean_r, min_inter_item_r=min_r, max_inter_item_r=max_r,
        items=items, flags=flags, thresholds=thresholds, bootstrap=bootstrap, notes=tuple(out_notes))


def scale_reliability(keyed: np.ndarray | CodedAnswers, *, item_names: Sequence[str], low: float, high: float,
                      confidence_level: float = 0.95, pairwise: bool = False,
                      thresholds: ReliabilityThresholds = ReliabilityThresholds(),
                      reversed_items: Sequence[str] = (), n_resamples: int = 0,
                      seed: int | None = None, missing: str | None = None) -> ScaleReliability:
    """Reliability and item analysis of one scale from its keyed item matrix.

    Parameters
    ----------
    keyed : (n, k) array or CodedAnswers
        Answers after reverse keying, NaN for missing; or the answers as given, as one-byte codes
        (:class:`~scalewright.stats.coded.CodedAnswers`), which this function keys itself. Codes make the
        statistics several times cheaper on large samples; the results are the same up to rounding.
    item_names : sequence of str
        The k item names, in column order.
    low, high : float
        Ends of the answer range (for floor/ceiling shares and the answer counts).
    confidence_level : float
        Coverage of the Feldt (and bootstrap) intervals.
    pairwise : bool
        Pairwise instead of listwise deletion of missing answers.
    thresholds : ReliabilityThresholds
        Cut-offs of the flags.
    reversed_items : sequence of str
        Items that were reverse-keyed (their answer counts are reported on the codes as given).
    n_resamples, seed : int
        Bootstrap resamples (0 = no bootstrap) and the seed of the generator.
    missing : {"listwise", "pairwise", "em"}, optional
        How missing answers are handled; overrides ``pairwise``. ``em``: the maximum-likelihood means and
        covariance matrix under missing at random (EM, :mod:`scalewright.stats.em`), computed from the
        per-pattern sufficient statistics; every reliability statistic comes from that matrix (Enders,
        2003) and ``n_used`` counts the respondents who gave at least one answer.

    Returns
    -------
    ScaleReliability

    Notes
    -----
    Listwise (default): every statistic uses the rows that answered all k items; the others are counted in
    ``n_set_aside``. Pairwise: each covariance uses the rows answering both items and the confidence
    interval uses the smallest pairwise count. Item descriptives use every answer given to the item.
    EM: Feldt's interval with ``n_used``, the respondents who answered at least one item (a note says so:
    with much missing it is too narrow, since the information is less than that many complete rows).
    Whatever the method, the result carries the missingness patterns and Little's MCAR test.

    References
    ----------
    .. [1] Enders, C. K. (2003). Using the expectation maximization algorithm to estimate coefficient
       alpha for scales with item-level missing data. Psychological Methods, 8, 322-337.
    """
    from ..errors import UsageError
    from .bootstrap import bootstrap_alpha
    from .coded import answer_tally, pairwise_covariance
    from .em import em_means_and_covariance
    from .item_covariance import item_covariance
    from .missing import check_method, keyed_estimate, listwise_from_summary, missing_handling
    from .missing_patterns import PatternSummary

    method = check_method(missing or ("pairwise" if pairwise else "listwise"))
    pairwise = method == "pairwise"
    if method == "em" and n_resamples:
        raise UsageError("the bootstrap of alpha is not available with the em method: it would rerun EM on "
                         "every resample; the interval under em is Feldt's (see the note)")

    names = tuple(item_names)
    if isinstance(keyed, CodedAnswers) and keyed.shape[1] != len(names):
        raise DataError(f"{len(names)} item name(s) given for {keyed.shape[1]} column(s)")
    if isinstance(keyed, CodedAnswers) and not (float(low).is_integer() and float(high).is_integer()):
        raise DataError(f"answer codes need a whole-number answer range, got {low} to {high}")
    unknown = set(reversed_items) - set(names)
    if unknown:
        raise DataError(f"reversed items not in the scale: {', '.join(sorted(unknown))}")
    if not low < high:
        raise DataError(f"answer range must have low < high, got {low} and {high}")
    if not 0 < confidence_level < 1:
        raise DataError(f"confidence_level must lie strictly between 0 and 1, got {confidence_level}")
    reversed_mask = np.array([name in set(reversed_items) for name in names], dtype=bool)
    summary = None
    if isinstance(keyed, CodedAnswers) and not n_resamples:
        summary = PatternSummary.from_codes(keyed.codes)
        if pairwise:
            stats = pairwise_covariance(keyed, low=int(low), high=int(high), reversed_mask=reversed_mask)
        else:  # the summary's complete pattern holds the listwise statistics (no second pass over the codes)
            stats = listwise_from_summary(summary, low=int(low), high=int(high), reversed_mask=reversed_mask)
        descriptives = item_descriptives_from_tally(answer_tally(keyed, int(high - low) + 1), n_rows=keyed.shape[0],
                                                    low=low, high=high, reversed_mask=reversed_mask)
        matrix = None
    else:
        if isinstance(keyed, CodedAnswers):  # the bootstrap resamples the keyed values
            keyed = keyed.keyed_values(low=int(low), high=int(high), reversed_mask=reversed_mask)
        stats = item_covariance(keyed, pairwise=pairwise)  # validates the matrix
        matrix = np.asarray(keyed, dtype=np.float64)
        if matrix.shape[1] != len(names):
            raise DataError(f"{len(names)} item name(s) given for {matrix.shape[1]} column(s)")
        descriptives = item_descriptives(matrix, low=low, high=high, reversed_mask=reversed_mask)
    if summary is None:  # the answers as given (offsets from low), as the codes route sees them: same numbers
        summary = PatternSummary.from_values(np.where(reversed_mask, high - matrix, matrix - low))
    estimate = None
    cov, n_used = stats.cov, stats.n_used
    if method == "em" and summary.anything_missing:
        estimate = em_means_and_covariance(summary)
        _, cov = keyed_estimate(estimate, lows=np.full(len(names), low), highs=np.full(len(names), high),
                                reversed_mask=reversed_mask, from_codes=True)
        n_used = summary.n_used
    # with nothing missing the EM fixed point is the complete-data estimate: the listwise matrix (its n - 1
    # divisor cancels in every statistic here), so em and listwise agree exactly
    handling = missing_handling(summary, method, n_used=n_used, estimate=estimate, item_names=names)
    notes: list[str] = []
    if pairwise:
        notes.append(f"pairwise deletion: each covariance uses the rows that answered both items "
                     f"({stats.n_used} to {int(stats.pair_counts.max()) if stats.k else 0} rows); the "
                     f"confidence interval uses the smallest count, {stats.n_used}")
    elif method == "listwise" and stats.n_rows > stats.n_used:
        notes.append(f"listwise deletion: {stats.n_rows - stats.n_used} of {stats.n_rows} row(s) did not answer "
                     f"every item and were set aside")
    if descriptives.off_level:
        notes.append(f"{descriptives.off_level} answer(s) are not whole answer codes from {low:g} to {high:g}; "
                     "they are left out of the answer counts")
    boot = None
    if n_resamples:
        boot = bootstrap_alpha(matrix, n_resamples=n_resamples, confidence_level=confidence_level, seed=seed,
                               pairwise=pairwise)
    result = reliability_from_cov(cov, n_used, item_names=names, confidence_level=confidence_level,
                                  thresholds=thresholds, reversed_items=reversed_items, descriptives=descriptives,
                                  n_rows=stats.n_rows, missing_handling=method, bootstrap=boot, notes=notes)
    return replace(result, missing=handling)


# --------------------------------------------------------------------------------------------------------
# Subgroups


@dataclass(frozen=True)
class AlphaComparison(ResultMixin):
    """Feldt's (1969) test of two subgroup alphas, with the Holm-adjusted p across all pairs of a column."""

    JSON_KEYS = {"p": "pvalue", "p_holm": "pvalue_holm"}

    level_a: str
    level_b: str
    alpha_a: float
    alpha_b: float
    n_a: int
    n_b: int
    w: float
    df1: int
    df2: int
    p: float
    p_holm: float


def compare_alphas(results: dict[str, ScaleReliability]) -> tuple[AlphaComparison, ...]:
    """Feldt's test for every pair of independent subgroups, Holm-corrected across the pairs.

    References
    ----------
    .. [1] Feldt, L. S. (1969). Psychometrika, 34, 363-373.
    .. [2] Holm, S. (1979). A simple sequentially rejective multiple test procedure. Scandinavian Journal
       of Statistics, 6, 65-70.
    """
    levels = list(results)
    rows = []
    for i, a in enumerate(levels):
        for b in levels[i + 1:]:
            ra, rb = results[a], results[b]
            w, p = alpha_difference_test(ra.alpha, ra.n_used, rb.alpha, rb.n_used)
            rows.append((a, b, ra, rb, w, p))
    p_values = np.array([row[5] for row in rows], dtype=np.float64)
    from .multiplicity import holm_adjusted

    adjusted = holm_adjusted(p_values)
    return tuple(AlphaComparison(level_a=a, level_b=b, alpha_a=ra.alpha, alpha_b=rb.alpha, n_a=ra.n_used,
                                 n_b=rb.n_used, w=w, df1=ra.n_used - 1, df2=rb.n_used - 1, p=p,
                                 p_holm=float(adjusted[index]))
                 for index, (a, b, ra, rb, w, p) in enumerate(rows))


@dataclass(frozen=True)
class GroupReliability(ResultMixin):
    """The statistics of one scale per level of one subgroup column, and the tests between the levels."""

    column: str
    levels: dict[str, ScaleReliability]
    too_small: dict[str, int]
    missing: int
    min_group: int
    comparisons: tuple[AlphaComparison, ...]
    notes: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        return {"column": self.column, "levels": {k: v.to_dict() for k, v in self.levels.items()},
                "too_small": dict(self.too_small), "missing": self.missing, "min_group": self.min_group,
                "comparisons": [c.to_dict() for c in self.comparisons], "notes": list(self.notes)}


def _rows(data: np.ndarray | CodedAnswers, positions: np.ndarray) -> np.ndarray | CodedAnswers:
    return data.rows(positions) if isinstance(data, CodedAnswers) else data[positions]


def reliability_by_group(keyed: np.ndarray | CodedAnswers, split: SubgroupSplit, **options: Any) -> GroupReliability:
    """:func:`scale_reliability` for each analysable level of ``split`` and Feldt tests between them.

    ``split`` comes from :func:`scalewright.stats.subgroups.split_by`; its levels below the minimum size
    are named in ``too_small`` but not analysed. ``options`` are passed to :func:`scale_reliability`.
    """
    data = keyed if isinstance(keyed, CodedAnswers) else np.asarray(keyed, dtype=np.float64)
    levels = {level: scale_reliability(_rows(data, positions), **options) for level, positions in split.levels.items()}
    notes = list(split.notes())
    if len(levels) < 2:
        notes.append(f"{split.column}: fewer than two levels with at least {split.min_size} respondents; "
                     "no comparison of alphas")
    return GroupReliability(column=split.column, levels=levels, too_small=dict(split.too_small),
                            missing=split.missing, min_group=split.min_size,
                            comparisons=compare_alphas(levels) if len(levels) >= 2 else (), notes=tuple(notes))


@dataclass(frozen=True)
class ScaleReliabilityReport(ResultMixin):
    """One scale: the whole sample and its subgroups. ``to_dict`` is the contract block ``scales.<name>``.

    ``by.<column>.<level>`` holds the statistics of that subgroup; ``alpha_comparisons.<column>`` the Feldt
    tests; ``groups_not_analysed.<column>`` the levels too small to analyse, with their row counts.
    """

    name: str
    title: str
    overall: ScaleReliability
    groups: tuple[GroupReliability, ...] = ()
    #: ordinal reliability (``--ordinal``) and the note on whether the answers call for it
    ordinal: Any = None
    ordinal_advice: tuple[Any, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        out = {"title": self.title, **self.overall.to_dict()}
        if self.ordinal is not None:
            out["ordinal"] = self.ordinal.to_dict()
        if self.ordinal_advice:
            out["ordinal_advice"] = [advice.to_dict() for advice in self.ordinal_advice]
        if self.groups:
            out["by"] = {g.column: {level: r.to_dict() for level, r in g.levels.items()} for g in self.groups}
            out["alpha_comparisons"] = {g.column: [c.to_dict() for c in g.comparisons] for g in self.groups}
            out["groups_not_analysed"] = {g.column: {**g.too_small, **({"(no value)": g.missing} if g.missing else {})}
                                          for g in self.groups}
            out["notes"] = [*out["notes"], *(note for g in self.groups for note in g.notes)]
        return out
