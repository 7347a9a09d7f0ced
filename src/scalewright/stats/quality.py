"""Careless responding and suspicious records: per-respondent indices, flags and a summary.

Every index is a function of plain numpy arrays (respondents in rows, items in columns, NaN = no answer) and is
computed for all respondents at once; loops run over items, scales or missing-data patterns, never over rows.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ..errors import DataError
from ..notes import Note, note
from ..results import ResultMixin, to_jsonable

# ---------------------------------------------------------------------------------------------------------------
# flag codes (our own); strong ones flag a respondent alone; weak ones only together: somewhat-far with
# uneven-halves or against-sample

FLAG_LONG_RUN = "long-run"
FLAG_FAR_FROM_SAMPLE = "far-from-sample"
FLAG_FAST = "fast"
FLAG_MANY_MISSING = "many-missing"
FLAG_DUPLICATE_ANSWERS = "duplicate-answers"
FLAG_DUPLICATE_ID = "duplicate-id"
FLAG_UNEVEN_HALVES = "uneven-halves"
FLAG_AGAINST_SAMPLE = "against-sample"
FLAG_SOMEWHAT_FAR = "somewhat-far"

STRONG_FLAGS = (FLAG_LONG_RUN, FLAG_FAR_FROM_SAMPLE, FLAG_FAST, FLAG_DUPLICATE_ANSWERS, FLAG_DUPLICATE_ID)
WEAK_FLAGS = (FLAG_SOMEWHAT_FAR, FLAG_UNEVEN_HALVES, FLAG_AGAINST_SAMPLE)
#: listed for the record but not marking a respondent: an unfinished questionnaire is not careless answering
#: (scoring's ``min_answered`` already deals with it)
INFO_FLAGS = (FLAG_MANY_MISSING,)
FLAG_ORDER = STRONG_FLAGS + WEAK_FLAGS + INFO_FLAGS


# ---------------------------------------------------------------------------------------------------------------
# input checks and row-wise helpers (numpy's nan-functions warn on empty rows; these return NaN quietly)

def _as_matrix(values: Any, name: str) -> np.ndarray:
    matrix = np.asarray(values, dtype=float)
    if matrix.ndim == 1:
        matrix = matrix[:, None]
    if matrix.ndim != 2:
        raise DataError(f"{name}: expected a respondents x items matrix, got an array with {matrix.ndim} dimensions")
    if np.isinf(matrix).any():
        raise DataError(f"{name}: contains an infinite value; answers must be finite numbers or missing")
    return matrix


def _row_count_mean(matrix: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    answered = ~np.isnan(matrix)
    count = answered.sum(axis=1)
    total = np.where(answered, matrix, 0.0).sum(axis=1)
    mean = np.full(matrix.shape[0], np.nan)
    np.divide(total, count, out=mean, where=count > 0)
    return count, mean


def _rowwise_pearson(a: np.ndarray, b: np.ndarray, *, min_pairs: int = 3) -> np.ndarray:
    """Pearson r of ``a[i]`` with ``b[i]`` for every row i, over the positions where both are present."""
    both = ~np.isnan(a) & ~np.isnan(b)
    count = both.sum(axis=1)
    safe_count = np.maximum(count, 1)
    mean_a = np.where(both, a, 0.0).sum(axis=1) / safe_count
    mean_b = np.where(both, b, 0.0).sum(axis=1) / safe_count
    dev_a = np.where(both, a - mean_a[:, None], 0.0)
    dev_b = np.where(both, b - mean_b[:, None], 0.0)
    cross = (dev_a * dev_b).sum(axis=1)
    ss_a = (dev_a ** 2).sum(axis=1)
    ss_b = (dev_b ** 2).sum(axis=1)
    scale = np.sqrt(ss_a * ss_b)
    # a spread smaller than rounding noise of the values counts as no spread at all
    tiny = 1e-12 * np.maximum(1.0, np.sqrt(np.where(both, a * a, 0.0).sum(axis=1) * np.where(both, b * b, 0.0).sum(axis=1)))
    ok = (count >= min_pairs) & (scale > tiny)
    r = np.full(a.shape[0], np.nan)
    np.divide(cross, scale, out=r, where=ok)
    return np.clip(r, -1.0, 1.0, out=r, where=ok)


# ---------------------------------------------------------------------------------------------------------------
# the indices, one function per published method

def longstring(answers: Any) -> np.ndarray:
    r"""Longest run of identical consecutive answers of each respondent.

    .. math:: \mathrm{LS}_i = \max_{a \le b} \{\, b - a + 1 : x_{ia} = x_{i,a+1} = \dots = x_{ib} \,\}

    Parameters
    ----------
    answers : array_like, shape (n, p)
        Answer codes in the order the questionnaire showed them, *not* reverse-keyed (a respondent who ticks the
        same box throughout is what is sought). NaN marks a missing answer.

    Returns
    -------
    numpy.ndarray of int, shape (n,)
        The longest run; 0 for a respondent with no answer at all.

    Notes
    -----
    A missing answer neither ends nor lengthens a run: runs count the answers actually given, so a skipped
    item does not hide a respondent who ticks the same box throughout. The index rises with the number of items,
    so thresholds are best stated as a share of them.

    References
    ----------
    .. [1] Johnson, J. A. (2005). Ascertaining the validity of individual protocols from Web-based personality
       inventories. Journal of Research in Personality, 39, 103-129.
    .. [2] Meade, A. W., & Craig, S. B. (2012). Identifying careless responses in survey data. Psychological
       Methods, 17, 437-455.
    """
    x = _as_matrix(answers, "answers")
    n, p = x.shape
    if p == 0:
        return np.zeros(n, dtype=int)
    answered = ~np.isnan(x)
    last = x[:, 0].copy()            # the latest answer given so far (NaN before the first one)
    run = answered[:, 0].astype(int)
    best = run.copy()
    for j in range(1, p):  # over items; every respondent at once
        given = answered[:, j]
        same = given & (x[:, j] == last)
        run = np.where(same, run + 1, np.where(given, 1, run))
        last = np.where(given, x[:, j], last)
        np.maximum(best, run, out=best)
    return best


def intra_individual_variability(keyed: Any) -> np.ndarray:
    r"""Intra-individual response variability (IRV): the standard deviation of a respondent's own answers.

    .. math:: \mathrm{IRV}_i = \sqrt{\frac{1}{m_i - 1} \sum_{j \in A_i} (x_{ij} - \bar x_i)^2}

    with :math:`A_i` the :math:`m_i` items respondent i answered and :math:`\bar x_i` their mean.

    Parameters
    ----------
    keyed : array_like, shape (n, k)
        Item answers; NaN marks a missing answer.

    Returns
    -------
    numpy.ndarray, shape (n,)
        IRV; NaN for a respondent with fewer than two answers.

    Notes
    -----
    Very low values point to answering the same way throughout, very high ones to answers scattered at random
    over the whole range. The divisor :math:`m_i - 1` is recalled from memory of [1]_.

    References
    ----------
    .. [1] Dunn, A. M., Heggestad, E. D., Shanock, L. R., & Theilgard, N. (2018). Intra-individual response
       variability as an indicator of insufficient effort responding. Journal of Business and Psychology, 33,
       105-121.
    """
    x = _as_matrix(keyed, "keyed")
    count, mean = _row_count_mean(x)
    deviations = np.where(np.isnan(x), 0.0, x - mean[:, None])
    irv = np.full(x.shape[0], np.nan)
    np.divide((deviations ** 2).sum(axis=1), count - 1, out=irv, where=count >= 2)
    return np.sqrt(irv)


def missing_share(answers: Any) -> np.ndarray:
    """Share (0 to 1) of the items each respondent left unanswered; 1 for a respondent with none answered."""
    x = _as_matrix(answers, "answers")
    if x.shape[1] == 0:
        return np.zeros(x.shape[0])
    return np.isnan(x).mean(axis=1)


@dataclass(frozen=True)
class MahalanobisResult(ResultMixin):
    """Squared Mahalanobis distance of every respondent from the sample centroid, with its chi-square p."""

    JSON_KEYS = {"p": "pvalue"}

    d2: np.ndarray
    p: np.ndarray
    df: np.ndarray
    items_used: tuple[int, ...]
    notes: tuple[str, ...] = ()


def pairwise_covariance(x: np.ndarray) -> np.ndarray:
    """Covariance of every pair of columns over the rows where both are present (divisor n_jk - 1)."""
    from .item_covariance import item_covariance

    return item_covariance(x, pairwise=True).cov


def mahalanobis_distance(keyed: Any, *, reference: Any = None) -> MahalanobisResult:
    r"""Squared Mahalanobis distance of each respondent's answers from the item means, and its chi-square p.

    .. math:: D^2_i = (x_i - \bar x)^\top S^{-1} (x_i - \bar x), \qquad p_i = P(\chi^2_{m_i} > D^2_i)

    Parameters
    ----------
    keyed : array_like, shape (n, k)
        Item answers (reverse keying does not change :math:`D^2`: it flips signs only). NaN = missing.
    reference : array_like of bool, shape (n,), optional
        Respondents whose answers estimate the means and the covariance (default: all). Distances are computed
        for every respondent.

    Returns
    -------
    MahalanobisResult
        ``d2``, ``p`` and ``df`` (the number of items the respondent answered among those used) per respondent,
        ``items_used`` (column positions) and ``notes``.

    Notes
    -----
    Item means use every answer given; :math:`S` is the pairwise-complete covariance. A respondent with missing
    answers is measured on the items answered, with the matching sub-matrix of :math:`S` and the means of those
    items, and the chi-square has as many degrees of freedom as items used. Items without spread are left out
    (they make :math:`S` singular). If :math:`S` is still singular, or there are not more respondents than
    items, :math:`D^2` is not computed and a note says why. The chi-square reference assumes multivariate
    normal answers; rating data are discrete, so the p value is a yardstick, not an exact probability.

    References
    ----------
    .. [1] Mahalanobis, P. C. (1936). On the generalised distance in statistics. Proceedings of the National
       Institute of Sciences of India, 2, 49-55.
    .. [2] Meade, A. W., & Craig, S. B. (2012). Identifying careless responses in survey data. Psychological
       Methods, 17, 437-455.
    """
    from scipy import linalg
    from scipy.stats import chi2

    x = _as_matrix(keyed, "keyed")
    n, k = x.shape
    nan = np.full(n, np.nan)
    if n < 3 or k == 0:
        return MahalanobisResult(nan, nan.copy(), np.zeros(n, dtype=int), (),
                                 (f"Mahalanobis distance not computed: {n} respondent(s) and {k} item(s); "
                                  "it needs at least 3 respondents and 1 item",))
    notes: list[str] = []
    basis = np.ones(n, dtype=bool) if reference is None else np.asarray(reference, dtype=bool).reshape(-1)
    if basis.shape != (n,):
        raise DataError(f"reference: expected {n} true/false values, got {basis.size}")
    cov = pairwise_covariance(x[basis])
    variances = np.diag(cov)
    usable = np.flatnonzero(np.isfinite(variances) & (variances > 1e-12))
    if len(usable) < k:
        notes.append(f"Mahalanobis distance leaves out {k - len(usable)} item(s) without spread in the sample")
    if len(usable) == 0:
        return MahalanobisResult(nan, nan.copy(), np.zeros(n, dtype=int), (), tuple(notes))
    x = x[:, usable]
    cov = cov[np.ix_(usable, usable)]
    if basis.sum() <= len(usable) or not np.isfinite(cov).all():
        notes.append(f"Mahalanobis distance not computed: {int(basis.sum())} respondent(s) for {len(usable)} item(s); the "
                     "covariance matrix needs more respondents than items and every pair of items answered together")
        return MahalanobisResult(nan, nan.copy(), np.zeros(n, dtype=int), tuple(int(u) for u in usable), tuple(notes))
    eigenvalues = np.linalg.eigvalsh(cov)
    if eigenvalues[0] <= 1e-10 * max(eigenvalues[-1], 1e-300):
        notes.append("Mahalanobis distance not computed: the item covariance matrix is singular (some items are "
                     "exact linear combinations of others)")
        return MahalanobisResult(nan, nan.copy(), np.zeros(n, dtype=int), tuple(int(u) for u in usable), tuple(notes))

    answered = ~np.isnan(x)
    column_means = np.where(answered[basis], x[basis], 0.0).sum(axis=0) / answered[basis].sum(axis=0)
    deviations = np.where(answered, x - column_means, 0.0)
    d2 = np.full(n, np.nan)
    # the missing-data patterns, each row's pattern packed into bytes (one key per row: far quicker to sort
    # than the rows of a boolean matrix), and the rows of each pattern as one slice of a stable sort
    packed = np.ascontiguousarray(np.packbits(answered, axis=1))
    keys = packed.view(np.dtype((np.void, packed.shape[1]))).reshape(-1)
    _, first, which = np.unique(keys, return_index=True, return_inverse=True)
    patterns = answered[first]
    by_pattern = np.argsort(np.asarray(which).reshape(-1), kind="stable")
    bounds = np.searchsorted(np.asarray(which).reshape(-1)[by_pattern], np.arange(len(patterns) + 1))
    from ..concurrency import one_blas_thread

    # over missing-data patterns, every respondent of one at once; with many items and scattered blanks there
    # are hundreds of small solves, which a multi-threaded BLAS slows down (milliseconds each on a busy machine)
    with one_blas_thread():
        for g, pattern in enumerate(patterns):
            if not pattern.any():
                continue
            rows = by_pattern[bounds[g]:bounds[g + 1]]
            observed = np.flatnonzero(pattern)
            factor = linalg.cholesky(cov[np.ix_(observed, observed)], lower=True)
            z = linalg.solve_triangular(factor, deviations[np.ix_(rows, observed)].T, lower=True)
            d2[rows] = (z ** 2).sum(axis=0)
    df = answered.sum(axis=1)
    p = np.full(n, np.nan)
    has = df > 0
    p[has] = chi2.sf(d2[has], df[has])
    if (~has).any():
        notes.append(f"Mahalanobis distance not computed for {int((~has).sum())} respondent(s) with no answer")
    return MahalanobisResult(d2, p, df, tuple(int(u) for u in usable), tuple(notes))


@dataclass(frozen=True)
class EvenOddResult(ResultMixin):
    """Even-odd consistency of every respondent: raw half correlation and its Spearman-Brown correction."""

    r_halves: np.ndarray
    consistency: np.ndarray
    scales_used: int
    notes: tuple[str, ...] = ()


def even_odd_consistency(keyed_by_scale: Sequence[Any] | Mapping[str, Any]) -> EvenOddResult:
    r"""Even-odd consistency: agreement of each respondent's odd-item and even-item half scores across scales.

    For every scale the keyed items are split into the odd-numbered (1st, 3rd, ...) and the even-numbered
    (2nd, 4th, ...) ones and each half is averaged. Within each respondent, the odd-half means of all scales are
    correlated with the even-half means, and the correlation is stepped up to full length:

    .. math:: r_i = \operatorname{corr}_s\left(\bar x^{odd}_{is}, \bar x^{even}_{is}\right),
              \qquad \mathrm{EO}_i = \frac{2 r_i}{1 + r_i}

    Parameters
    ----------
    keyed_by_scale : sequence or mapping of array_like, each (n, k_s)
        Keyed items (reverse items already reversed) of each scale, items in the scale's order.

    Returns
    -------
    EvenOddResult
        ``r_halves`` (uncorrected), ``consistency`` (Spearman-Brown corrected, in [-1, 1]), ``scales_used`` and
        ``notes``. NaN for a respondent with fewer than three scales having both halves answered, or whose
        half means do not vary across scales.

    Notes
    -----
    Needs at least three scales with two or more items each; otherwise every value is NaN and a note says so.
    Attentive respondents score near 1, random answering near 0. The step-up formula is meant for positive
    correlations; below zero it falls under -1 quickly, so values are clipped to [-1, 1] (common practice, no
    source).

    References
    ----------
    .. [1] Johnson, J. A. (2005). Ascertaining the validity of individual protocols from Web-based personality
       inventories. Journal of Research in Personality, 39, 103-129.
    .. [2] Meade, A. W., & Craig, S. B. (2012). Identifying careless responses in survey data. Psychological
       Methods, 17, 437-455.
    .. [3] Spearman, C. (1910); Brown, W. (1910). British Journal of Psychology, 3, 271-295 and 296-322.
    """
    blocks = list(keyed_by_scale.values()) if isinstance(keyed_by_scale, Mapping) else list(keyed_by_scale)
    matrices = [_as_matrix(b, "keyed_by_scale") for b in blocks]
    if not matrices:
        return EvenOddResult(np.array([]), np.array([]), 0, ("even-odd consistency not computed: no scales",))
    n = matrices[0].shape[0]
    if any(m.shape[0] != n for m in matrices):
        raise DataError("keyed_by_scale: every scale must have the same number of respondents")
    usable = [m for m in matrices if m.shape[1] >= 2]
    if len(usable) < 3:
        nan = np.full(n, np.nan)
        return EvenOddResult(nan, nan.copy(), len(usable), (
            f"even-odd consistency not computed: it needs at least 3 scales with 2 or more items, "
            f"and there are {len(usable)}",))
    odd = np.column_stack([_row_count_mean(m[:, 0::2])[1] for m in usable])
    even = np.column_stack([_row_count_mean(m[:, 1::2])[1] for m in usable])
    r = _rowwise_pearson(odd, even, min_pairs=3)
    corrected = np.full(n, np.nan)
    finite = np.isfinite(r)
    np.divide(2 * r, 1 + r, out=corrected, where=finite & (r > -1))
    corrected[finite & (r <= -1)] = -1.0
    np.clip(corrected, -1.0, 1.0, out=corrected, where=np.isfinite(corrected))
    notes = []
    if len(usable) < len(matrices):
        notes.append(f"even-odd consistency leaves out {len(matrices) - len(usable)} scale(s) with a single item")
    return EvenOddResult(r, corrected, len(usable), tuple(notes))


#: a weak index is used only when at most this share of attentive respondents is expected below its cut-off
#: (our own rule, chosen on generated data: docs/screening.md)
WEAK_INDEX_MAX_EXPECTED_BELOW = 0.10


@dataclass(frozen=True)
class WeakIndexUse(ResultMixin):
    """Whether a weak index can tell careless from attentive answering in this sample, and why.

    ``typical`` is the value an attentive respondent is expected to have, in the index's own units (even-odd
    consistency after the Spearman-Brown step, as its cut-off); ``points`` the number of values
    each respondent's correlation rests on; ``expected_below`` the share of attentive respondents expected
    below ``cutoff`` by Fisher's z (SE 1/sqrt(points - 3)). The index raises its flag only when ``used``.
    """

    index: str
    used: bool
    typical: float
    points: int
    cutoff: float
    expected_below: float


def expected_share_below(typical: float, cutoff: float, points: int) -> float:
    r"""Share of correlations below ``cutoff`` when the true value is ``typical`` and each rests on ``points``.

    .. math:: P = \Phi\left((\operatorname{artanh} c - \operatorname{artanh} \rho) \sqrt{m - 3}\right)

    NaN when ``points`` < 4 or ``typical`` is not a correlation.

    References
    ----------
    .. [1] Fisher, R. A. (1921). On the "probable error" of a coefficient of correlation deduced from a small
       sample. Metron, 1, 3-32.
    """
    from scipy.special import ndtr

    if points < 4 or not (math.isfinite(typical) and -1 < typical < 1) or not -1 < cutoff < 1:
        return 1.0 if points >= 4 and math.isfinite(typical) and typical <= -1 else math.nan
    return float(ndtr((math.atanh(cutoff) - math.atanh(typical)) * math.sqrt(points - 3)))


def attentive_person_total_r(keyed: Any) -> float:
    r"""Person-total r an attentive respondent is expected to have, from the spread of the item means.

    A respondent who answers by the model :math:`x_{ij} = a_i + \mu_j + e_{ij}` has, over the items, a
    correlation with the item means of

    .. math:: \rho = \frac{s_\mu}{\sqrt{s_\mu^2 + \sigma_e^2}}, \qquad
              \sigma_e^2 = \overline{s_{jj}} - \overline{s_{jl}}\ (j \ne l)

    with :math:`s_\mu^2` the variance of the item means and :math:`\sigma_e^2` the part of an answer's variance
    that items do not share (mean item variance less mean inter-item covariance). When the item means barely
    differ, :math:`\rho` is near zero and the index cannot separate attentive from careless answering.
    Computed from the item means and the covariance matrix (sufficient statistics). Our own derivation.
    """
    x = _as_matrix(keyed, "keyed")
    k = x.shape[1]
    if k < 3 or x.shape[0] < 3:
        return math.nan
    answered = (~np.isnan(x)).sum(axis=0)
    x = x[:, answered >= 2]
    k = x.shape[1]
    if k < 3:
        return math.nan
    means = np.nansum(x, axis=0) / (~np.isnan(x)).sum(axis=0)
    cov = pairwise_covariance(x)
    if not np.isfinite(cov).all():
        return math.nan
    unique = float(np.trace(cov)) / k - float(cov[~np.eye(k, dtype=bool)].mean())
    spread = float(np.var(means))
    if spread + max(unique, 0.0) <= 0:
        return math.nan
    return math.sqrt(spread / (spread + max(unique, 0.0)))


def person_total_correlation(keyed: Any) -> np.ndarray:
    r"""Person-total correlation: how a respondent's answer profile follows the rest of the sample's.

    .. math:: r_i = \operatorname{corr}_j\left(x_{ij},\ \bar x_{(-i)j}\right), \qquad
              \bar x_{(-i)j} = \frac{\sum_{h \ne i} x_{hj}}{n_j - 1}

    the correlation, over the items respondent i answered, of their keyed answers with the item means of all
    other respondents.

    Parameters
    ----------
    keyed : array_like, shape (n, k)
        Keyed item answers (reverse items reversed); NaN = missing.

    Returns
    -------
    numpy.ndarray, shape (n,)
        r per respondent; NaN with fewer than three answered items or no spread in the respondent's answers.

    Notes
    -----
    Attentive respondents rate the items the sample finds easy to endorse higher than the hard ones, so their r
    is positive; random or contrary answering gives values near or below zero. The index is only as sharp as the
    items' means differ.

    References
    ----------
    .. [1] Curran, P. G. (2016). Methods for the detection of carelessly invalid responses in survey data.
       Journal of Experimental Social Psychology, 66, 4-19.
    """
    x = _as_matrix(keyed, "keyed")
    answered = ~np.isnan(x)
    filled = np.where(answered, x, 0.0)
    totals = filled.sum(axis=0)
    counts = answered.sum(axis=0)
    others = np.full(x.shape, np.nan)
    denominator = np.broadcast_to(counts - 1, x.shape)
    np.divide(totals - filled, denominator, out=others, where=answered & (denominator > 0))
    return _rowwise_pearson(np.where(answered, x, np.nan), others, min_pairs=3)


def speeders(durations: Any, *, speed_share: float = 1 / 3) -> tuple[np.ndarray, float]:
    """Respondents faster than ``speed_share`` of the median completion time.

    Returns the boolean flags (False where the duration is missing) and the median used. A threshold at a
    share of the median is common practice, no source; 1/3 is a frequent choice.
    """
    if not 0 < speed_share < 1:
        raise DataError(f"speed share must lie between 0 and 1, got {speed_share}")
    times = np.asarray(durations, dtype=float).reshape(-1)
    valid = np.isfinite(times)
    if (times[valid] < 0).any():
        raise DataError("durations: negative completion time found; times must be zero or positive")
    if not valid.any():
        return np.zeros(times.shape, dtype=bool), math.nan
    median = float(np.median(times[valid]))
    return valid & (times < speed_share * median), median


# ---------------------------------------------------------------------------------------------------------------
# duplicates

@dataclass(frozen=True)
class DuplicateResult(ResultMixin):
    """Groups of respondents whose answer rows are identical (missing = missing), and ids seen more than once."""

    row_groups: tuple[tuple[int, ...], ...]   # row positions, each group of size >= 2
    duplicate_ids: tuple[str, ...]
    in_row_group: np.ndarray                   # bool per respondent
    id_repeated: np.ndarray                    # bool per respondent


def duplicate_records(answers: Any, ids: Sequence[str]) -> DuplicateResult:
    """Find exact duplicate answer rows (a missing answer matches only a missing answer) and repeated ids.

    Identical rows come from double submissions or copied records; with few items and few answer levels they
    also happen by chance, which the caller weighs (see ``ScreenThresholds.duplicate_min_items``).
    """
    import pandas as pd

    x = _as_matrix(answers, "answers")
    n = x.shape[0]
    if len(ids) != n:
        raise DataError(f"ids: expected {n} respondent ids, got {len(ids)}")
    in_group = np.zeros(n, dtype=bool)
    groups: list[tuple[int, ...]] = []
    if n and x.shape[1]:
        comparable = np.where(np.isnan(x), -np.inf, x)  # lets a missing answer equal a missing answer
        _, which, counts = np.unique(comparable, axis=0, return_inverse=True, return_counts=True)
        which = np.asarray(which).reshape(-1)
        in_group = counts[which] > 1
        if in_group.any():
            positions = np.flatnonzero(in_group)
            order = positions[np.argsort(which[positions], kind="stable")]
            cuts = np.flatnonzero(np.diff(which[order])) + 1
            groups = sorted((tuple(int(i) for i in sorted(part)) for part in np.split(order, cuts)),
                            key=lambda g: g[0])
    id_series = pd.Series([str(i) for i in ids], dtype=object)
    repeated = id_series.duplicated(keep=False).to_numpy()
    return DuplicateResult(tuple(groups), tuple(dict.fromkeys(id_series[repeated])), in_group, repeated)


# ---------------------------------------------------------------------------------------------------------------
# thresholds, the combined screen and its result

@dataclass(frozen=True)
class ScreenThresholds(ResultMixin):
    """When an index raises a flag. Defaults and their sources are listed in docs/screening.md.

    Strong flags mark a respondent alone; the weak ones mark a respondent only together: ``somewhat-far``
    (Mahalanobis p below ``mahalanobis_p_weak``) with ``uneven-halves`` or ``against-sample``.
    """

    long_run_share: float = 0.6        # longest identical run covers at least this share of the items
    mahalanobis_p: float = 0.001       # strong: chi-square p of D2 below this
    mahalanobis_p_weak: float = 0.05   # weak: chi-square p of D2 below this
    person_total_min: float = 0.15     # weak: person-total r below this
    even_odd_min: float = 0.3          # weak: even-odd consistency below this
    missing_share_max: float = 0.5     # listed only: more than this share of items unanswered
    speed_share: float = 1 / 3         # strong: faster than this share of the median duration
    duplicate_min_items: int = 10      # identical rows flag only with at least this many answered items

    def __post_init__(self) -> None:
        from ..errors import UsageError

        for name in ("long_run_share", "mahalanobis_p", "mahalanobis_p_weak", "missing_share_max", "speed_share"):
            value = getattr(self, name)
            if not (isinstance(value, (int, float)) and 0 < value < 1 or (name == "long_run_share" and value == 1)):
                raise UsageError(f"threshold {name.replace('_', '-')} must lie between 0 and 1, got {value!r}")
        for name in ("person_total_min", "even_odd_min"):
            value = getattr(self, name)
            if not (isinstance(value, (int, float)) and -1 <= value <= 1):
                raise UsageError(f"threshold {name.replace('_', '-')} must lie between -1 and 1, got {value!r}")
        if self.mahalanobis_p_weak < self.mahalanobis_p:
            raise UsageError("threshold mahalanobis-p-weak must not be below mahalanobis-p")
        if int(self.duplicate_min_items) != self.duplicate_min_items or self.duplicate_min_items < 1:
            raise UsageError(f"duplicate-min-items must be a whole number >= 1, got {self.duplicate_min_items!r}")

    def long_run_items(self, n_items: int) -> int:
        """The run length that raises ``long-run`` on a questionnaire of ``n_items`` items (at least 2)."""
        return max(2, math.ceil(self.long_run_share * n_items - 1e-9))


@dataclass(frozen=True)
class ScreenResult:
    """Indices, flags and summary of a careless-responding screen; ``to_dict()`` is the JSON contract."""

    ids: tuple[str, ...]
    longstring: np.ndarray
    irv: np.ndarray
    mahalanobis_d2: np.ndarray
    mahalanobis_p: np.ndarray
    mahalanobis_df: np.ndarray
    even_odd: np.ndarray
    person_total_r: np.ndarray
    missing: np.ndarray
    duration: np.ndarray | None
    flags: tuple[tuple[str, ...], ...]
    flagged: np.ndarray
    duplicates: DuplicateResult
    thresholds: ScreenThresholds
    n_items: int
    long_run_items: int
    median_duration: float | None
    alpha_change: dict[str, dict[str, Any]] = field(default_factory=dict)
    notes: tuple[str | Note, ...] = ()
    #: flag codes whose check could not run (their count is None, never 0; a note says why)
    not_checked: tuple[str, ...] = ()
    #: per group of identical answer rows: ``flagged`` (duplicate-answers), ``long-run`` (counted there
    #: instead) or ``few-answers`` (too few answered items to tell a copy from chance)
    duplicate_status: tuple[str, ...] = ()
    #: unit of the completion times (shown beside them; the checks do not depend on it)
    duration_unit: str = "s"
    weak_indices: tuple[WeakIndexUse, ...] = ()

    @property
    def n(self) -> int:
        return len(self.ids)

    def flagged_ids(self) -> list[str]:
        return [i for i, f in zip(self.ids, self.flagged, strict=True) if f]

    def flag_counts(self) -> dict[str, int | None]:
        """Respondents per flag; None for a check that did not run."""
        counts: dict[str, int | None] = {code: 0 for code in FLAG_ORDER}
        for codes in self.flags:
            for code in codes:
                counts[code] += 1  # type: ignore[operator]
        for code in self.not_checked:
            counts[code] = None
        return counts

    def flag_overlap(self) -> dict[str, dict[str, int]]:
        """Respondents carrying both flags, for every pair of flag codes that occur (diagonal = count)."""
        present = [c for c, k in self.flag_counts().items() if k]
        has = np.array([[code in codes for code in present] for codes in self.flags], dtype=int).reshape(
            self.n, len(present))
        both = has.T @ has
        return {a: {b: int(both[i, j]) for j, b in enumerate(present)} for i, a in enumerate(present)}

    def summary(self) -> dict[str, Any]:
        n_flagged = int(self.flagged.sum())
        return {
            "n": self.n,
            "n_flagged": n_flagged,
            "flagged_share": n_flagged / self.n if self.n else None,
            "counts": self.flag_counts(),
            "overlap": self.flag_overlap(),
            "alpha_change": self.alpha_change,
            "n_items": self.n_items,
            "long_run_items": self.long_run_items,
            "median_duration": self.median_duration,
            "duration_unit": self.duration_unit if self.duration is not None else None,
            "not_checked": list(self.not_checked),
        }

    def respondent_records(self) -> list[dict[str, Any]]:
        columns = {
            "id": list(self.ids), "flagged": self.flagged.tolist(), "flags": [list(f) for f in self.flags],
            "longstring": self.longstring.tolist(), "irv": self.irv.tolist(),
            "mahalanobis_d2": self.mahalanobis_d2.tolist(), "mahalanobis_pvalue": self.mahalanobis_p.tolist(),
            "mahalanobis_df": self.mahalanobis_df.tolist(), "even_odd": self.even_odd.tolist(),
            "person_total_r": self.person_total_r.tolist(), "missing": self.missing.tolist(),
        }
        if self.duration is not None:
            columns["duration"] = self.duration.tolist()
        names = list(columns)
        return [dict(zip(names, values, strict=True)) for values in zip(*columns.values(), strict=True)]

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({
            "respondents": self.respondent_records(),
            "summary": self.summary(),
            "duplicates": {"rows": [[self.ids[i] for i in group] for group in self.duplicates.row_groups],
                           "row_status": list(self.duplicate_status),
                           "ids": list(self.duplicates.duplicate_ids)},
            "thresholds": self.thresholds.to_dict(),
            "flag_codes": {"strong": list(STRONG_FLAGS), "weak": list(WEAK_FLAGS), "listed_only": list(INFO_FLAGS)},
            "weak_indices": {use.index: use.to_dict() for use in self.weak_indices},
            "notes": list(self.notes),
        })


def _alpha_change(keyed_by_scale: Mapping[str, np.ndarray], flagged: np.ndarray) -> dict[str, dict[str, Any]]:
    from .item_covariance import item_covariance
    from .reliability_coefficients import cronbach_alpha_from_cov

    out = {}
    for name, keyed in keyed_by_scale.items():
        everyone = item_covariance(keyed)
        kept = item_covariance(keyed[~flagged])
        alpha_all = cronbach_alpha_from_cov(everyone.cov) if everyone.n_used >= 2 else math.nan
        alpha_kept = cronbach_alpha_from_cov(kept.cov) if kept.n_used >= 2 else math.nan
        out[name] = {"alpha_all": alpha_all, "n_all": everyone.n_used,
                     "alpha_without_flagged": alpha_kept, "n_without_flagged": kept.n_used,
                     "change": alpha_kept - alpha_all}
    return out


def _unique_notes(notes: Sequence[str | Note]) -> tuple[str | Note, ...]:
    """Each note once, in order (a note's values may be unhashable, so it is compared by its JSON form)."""
    seen: dict[str, str | Note] = {}
    for item in notes:
        seen.setdefault(repr(item.to_dict()) if isinstance(item, Note) else item, item)
    return tuple(seen.values())


def _duplicate_status(groups: Sequence[Sequence[int]], long_run: np.ndarray, answered_items: np.ndarray,
                      min_items: int) -> tuple[str, ...]:
    """Why each group of identical rows is or is not counted as ``duplicate-answers`` (rows of a group agree)."""
    status = []
    for group in groups:
        first = group[0]
        status.append("long-run" if long_run[first] else "few-answers" if answered_items[first] < min_items
                      else "flagged")
    return tuple(status)


def screen_respondents(items_raw_order: Any, keyed_by_scale: Mapping[str, Any], *, ids: Sequence[str],
                       thresholds: ScreenThresholds = ScreenThresholds(), durations: Any = None,
                       duration_unit: str = "s") -> ScreenResult:
    """Screen every respondent for careless answering and suspicious records.

    Parameters
    ----------
    items_raw_order : array_like, shape (n, p)
        Answers in questionnaire order, not reverse-keyed (for the longest run and for duplicates).
    keyed_by_scale : mapping of scale name to array_like (n, k_s)
        Keyed items of each scale (for IRV, Mahalanobis, even-odd, person-total and alpha).
    ids : sequence of str
        Respondent ids, one per row.
    thresholds : ScreenThresholds
        When each index raises a flag.
    durations : array_like, shape (n,), optional
        Completion times (any unit); enables the ``fast`` flag. Without them ``fast`` is not checked: its
        count is None (``null``), not 0.
    duration_unit : str
        Unit of ``durations``, kept for display.

    Returns
    -------
    ScreenResult

    Notes
    -----
    A respondent is *flagged* when a strong flag fires (``long-run``, ``far-from-sample``, ``fast``,
    ``duplicate-answers``, ``duplicate-id``) or when ``somewhat-far`` (Mahalanobis p below
    ``mahalanobis_p_weak`` but not below ``mahalanobis_p``) comes with ``uneven-halves`` or ``against-sample``.
    Those two may not confirm each other: both fall for attentive people whose scale scores are all alike.
    Weak signals do not count for a respondent with ``many-missing``, a flag that is listed but marks no one:
    an unfinished questionnaire is not careless answering. Such respondents are also left out of the median
    duration and of the ``fast`` check.

    The Mahalanobis distance is
    computed twice: first from everyone, then from the means and covariance of the respondents the first pass
    left unflagged (neither a long run nor p below ``mahalanobis_p_weak``). One reweighting step is our own
    choice: careless answers inflate the covariance and so hide each other (masking). A flag marks a record to
    look at, not a verdict on a person.
    """
    raw = _as_matrix(items_raw_order, "items_raw_order")
    n, p = raw.shape
    if len(ids) != n:
        raise DataError(f"ids: expected {n} respondent ids, got {len(ids)}")
    scales = {str(name): _as_matrix(block, f"keyed items of scale {name}") for name, block in keyed_by_scale.items()}
    for name, block in scales.items():
        if block.shape[0] != n:
            raise DataError(f"keyed items of scale {name}: {block.shape[0]} rows, expected {n}")
    keyed = np.hstack(list(scales.values())) if scales else np.empty((n, 0))
    notes: list[str | Note] = []
    not_checked: list[str] = []

    runs = longstring(raw)
    run_limit = thresholds.long_run_items(p)
    long_run = runs >= run_limit
    irv = intra_individual_variability(keyed)
    missing = missing_share(raw)
    many_missing = missing > thresholds.missing_share_max

    first = mahalanobis_distance(keyed)
    distance = first
    if np.isfinite(first.p).any():
        reference = ~long_run & ~(first.p < thresholds.mahalanobis_p_weak)
        second = mahalanobis_distance(keyed, reference=reference)
        if np.isfinite(second.p).any():
            distance = second
        else:
            notes.append("the Mahalanobis distance uses every respondent: too few were left to re-estimate it "
                         "without the first pass's outliers")
    notes.extend(distance.notes)
    with np.errstate(invalid="ignore"):
        far = distance.p < thresholds.mahalanobis_p
        somewhat_far = distance.p < thresholds.mahalanobis_p_weak

    halves = even_odd_consistency(scales) if scales else EvenOddResult(
        np.full(n, np.nan), np.full(n, np.nan), 0, ("even-odd consistency not computed: no scales",))
    notes.extend(halves.notes)
    person_total = person_total_correlation(keyed)
    # a weak index counts only where its cut-off sits in the attentive respondents' far lower tail: when
    # item means barely differ, attentive people's person-total r scatters around zero; with few scales the
    # even-odd correlation rests on a handful of points (docs/screening.md)
    typical_total = attentive_person_total_r(keyed)
    answered_median = int(np.median(np.sum(~np.isnan(keyed), axis=1))) if n and keyed.shape[1] else 0
    total_use = WeakIndexUse(index=FLAG_AGAINST_SAMPLE, used=False, typical=typical_total, points=answered_median,
                             cutoff=thresholds.person_total_min,
                             expected_below=expected_share_below(typical_total, thresholds.person_total_min,
                                                                 answered_median))
    with np.errstate(invalid="ignore"):
        typical_halves = float(np.nanmedian(halves.r_halves)) if np.isfinite(halves.r_halves).any() else math.nan
    half_cut = thresholds.even_odd_min / (2 - thresholds.even_odd_min)  # undo Spearman-Brown: raw half r
    halves_use = WeakIndexUse(index=FLAG_UNEVEN_HALVES, used=False, typical=2 * typical_halves / (1 + typical_halves),
                              points=halves.scales_used, cutoff=thresholds.even_odd_min,
                              expected_below=expected_share_below(typical_halves, half_cut, halves.scales_used))
    total_use = replace(total_use, used=bool(total_use.expected_below <= WEAK_INDEX_MAX_EXPECTED_BELOW))
    halves_use = replace(halves_use, used=bool(halves_use.expected_below <= WEAK_INDEX_MAX_EXPECTED_BELOW))
    with np.errstate(invalid="ignore"):
        uneven = (halves.consistency < thresholds.even_odd_min) & halves_use.used
        against = (person_total < thresholds.person_total_min) & total_use.used

    fast = np.zeros(n, dtype=bool)
    duration = None
    median_duration = None
    if durations is None:
        not_checked.append(FLAG_FAST)
        notes.append(note("fast-not-checked", flag=FLAG_FAST))
    else:
        duration = np.asarray(durations, dtype=float).reshape(-1)
        if duration.shape != (n,):
            raise DataError(f"durations: expected {n} values, got {duration.size}")
        # a respondent who stopped early is quick for that reason; the median comes from the others
        timed = np.where(many_missing, np.nan, duration)
        fast, median = speeders(timed, speed_share=thresholds.speed_share)
        median_duration = None if math.isnan(median) else median
        if median_duration is None:
            not_checked.append(FLAG_FAST)
            notes.append(note("fast-no-durations", flag=FLAG_FAST))
        elif (~np.isfinite(duration)).any():
            notes.append(f"{int((~np.isfinite(duration)).sum())} respondent(s) without a duration were not "
                         "checked for speed")

    duplicates = duplicate_records(raw, ids)
    answered_items = p - np.isnan(raw).sum(axis=1)
    duplicate_answers = duplicates.in_row_group & ~long_run & (answered_items >= thresholds.duplicate_min_items)
    duplicate_status = _duplicate_status(duplicates.row_groups, long_run, answered_items,
                                         thresholds.duplicate_min_items)
    if p < thresholds.duplicate_min_items:
        not_checked.append(FLAG_DUPLICATE_ANSWERS)
        notes.append(note("duplicates-not-checked", flag=FLAG_DUPLICATE_ANSWERS, items=p,
                          min_items=thresholds.duplicate_min_items))
    if not np.isfinite(distance.p).any():
        not_checked.extend((FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR))
        notes.append(note("distance-not-checked", flags=(FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR)))
    if not np.isfinite(halves.consistency).any():
        not_checked.append(FLAG_UNEVEN_HALVES)
        notes.append(note("halves-not-checked", flag=FLAG_UNEVEN_HALVES))
    if not np.isfinite(person_total).any():
        not_checked.append(FLAG_AGAINST_SAMPLE)
        notes.append(note("profile-not-checked", flag=FLAG_AGAINST_SAMPLE))

    fired = {
        FLAG_LONG_RUN: long_run, FLAG_FAR_FROM_SAMPLE: far, FLAG_FAST: fast, FLAG_MANY_MISSING: many_missing,
        FLAG_DUPLICATE_ANSWERS: duplicate_answers, FLAG_DUPLICATE_ID: duplicates.id_repeated,
        FLAG_SOMEWHAT_FAR: somewhat_far & ~far, FLAG_UNEVEN_HALVES: uneven, FLAG_AGAINST_SAMPLE: against,
    }
    strong = np.zeros(n, dtype=bool)
    for code in STRONG_FLAGS:
        strong |= fired[code]
    # weak signals rest on few answers when many are missing, so they count only for respondents who
    # answered most items
    # uneven-halves and against-sample both drop for attentive people whose scale scores are all alike, so they
    # do not confirm each other; each may confirm a moderately distant answer pattern
    flagged = strong | (~many_missing & somewhat_far & (uneven | against))
    codes = np.array(FLAG_ORDER, dtype=object)
    matrix = np.column_stack([fired[c] for c in FLAG_ORDER])
    flags = tuple(tuple(codes[row]) for row in matrix)  # per-respondent lists of codes for the output

    alpha_change = _alpha_change(scales, flagged) if scales else {}
    return ScreenResult(
        ids=tuple(str(i) for i in ids), longstring=runs, irv=irv, mahalanobis_d2=distance.d2,
        mahalanobis_p=distance.p, mahalanobis_df=distance.df, even_odd=halves.consistency,
        person_total_r=person_total, missing=missing, duration=duration, flags=flags, flagged=flagged,
        duplicates=duplicates, thresholds=thresholds, n_items=p, long_run_items=run_limit,
        median_duration=median_duration, alpha_change=alpha_change, notes=_unique_notes(notes),
        not_checked=tuple(not_checked), duplicate_status=duplicate_status, duration_unit=duration_unit,
        weak_indices=(halves_use, total_use))
