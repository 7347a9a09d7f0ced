"""Per-respondent indices of careless responding and of suspicious records, one function per published method.

Long-string, intra-individual response variability, missing share, even-odd consistency, person-total
correlation, completion speed and duplicate records. Every index is a function of plain numpy arrays
(respondents in rows, items in columns, NaN = no answer) and is computed for all respondents at once; loops
run over items, scales or missing-data patterns, never over rows. The Mahalanobis distance has its own module
(:mod:`.mahalanobis`); :mod:`.screening` combines the indices into flags.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import DataError
from ..notes import Note, note
from ..results import ResultMixin
from .item_covariance import item_covariance

# ---------------------------------------------------------------------------------------------------------------
# input checks and row-wise helpers (numpy's nan-functions warn on empty rows; these return NaN quietly)

def as_answer_matrix(values: Any, name: str) -> np.ndarray:
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
    x = as_answer_matrix(answers, "answers")
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
    x = as_answer_matrix(keyed, "keyed")
    count, mean = _row_count_mean(x)
    deviations = np.where(np.isnan(x), 0.0, x - mean[:, None])
    irv = np.full(x.shape[0], np.nan)
    np.divide((deviations ** 2).sum(axis=1), count - 1, out=irv, where=count >= 2)
    return np.sqrt(irv)


def missing_share(answers: Any) -> np.ndarray:
    """Share (0 to 1) of the items each respondent left unanswered; 1 for a respondent with none answered."""
    x = as_answer_matrix(answers, "answers")
    if x.shape[1] == 0:
        return np.zeros(x.shape[0])
    return np.isnan(x).mean(axis=1)


@dataclass(frozen=True)
class EvenOddResult(ResultMixin):
    """Even-odd consistency of every respondent: raw half correlation and its Spearman-Brown correction."""

    r_halves: np.ndarray
    consistency: np.ndarray
    scales_used: int
    notes: tuple[Note, ...] = ()  # codes with values, worded by present/messages.py


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
    matrices = [as_answer_matrix(b, "keyed_by_scale") for b in blocks]
    if not matrices:
        return EvenOddResult(np.array([]), np.array([]), 0, (note("halves-no-scales"),))
    n = matrices[0].shape[0]
    if any(m.shape[0] != n for m in matrices):
        raise DataError("keyed_by_scale: every scale must have the same number of respondents")
    usable = [m for m in matrices if m.shape[1] >= 2]
    if len(usable) < 3:
        nan = np.full(n, np.nan)
        return EvenOddResult(nan, nan.copy(), len(usable), (note("halves-too-few-scales", scales=len(usable),
                                                                 min_scales=3),))
    odd = np.column_stack([_row_count_mean(m[:, 0::2])[1] for m in usable])
    even = np.column_stack([_row_count_mean(m[:, 1::2])[1] for m in usable])
    r = _rowwise_pearson(odd, even, min_pairs=3)
    corrected = np.full(n, np.nan)
    finite = np.isfinite(r)
    np.divide(2 * r, 1 + r, out=corrected, where=finite & (r > -1))
    corrected[finite & (r <= -1)] = -1.0
    np.clip(corrected, -1.0, 1.0, out=corrected, where=np.isfinite(corrected))
    notes: list[Note] = []
    if len(usable) < len(matrices):
        notes.append(note("halves-single-item-scales", scales=len(matrices) - len(usable)))
    return EvenOddResult(r, corrected, len(usable), tuple(notes))


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
    x = as_answer_matrix(keyed, "keyed")
    k = x.shape[1]
    if k < 3 or x.shape[0] < 3:
        return math.nan
    answered = (~np.isnan(x)).sum(axis=0)
    x = x[:, answered >= 2]
    k = x.shape[1]
    if k < 3:
        return math.nan
    means = np.nansum(x, axis=0) / (~np.isnan(x)).sum(axis=0)
    return attentive_r_from_moments(means, item_covariance(x, pairwise=True).cov)


def attentive_r_from_moments(means: Any, cov: Any) -> float:
    """:func:`attentive_person_total_r` from the item means and the pairwise covariance of the items answered
    at least twice (sufficient statistics, so merged summaries of a file's blocks serve as well as the rows)."""
    means = np.asarray(means, dtype=float)
    cov = np.asarray(cov, dtype=float)
    k = means.size
    if k < 3 or not np.isfinite(cov).all():
        return math.nan
    unique = float(np.trace(cov)) / k - float(cov[~np.eye(k, dtype=bool)].mean())
    spread = float(np.var(means))
    if spread + max(unique, 0.0) <= 0:
        return math.nan
    return math.sqrt(spread / (spread + max(unique, 0.0)))


def person_total_correlation(keyed: Any, *, totals: Any = None, counts: Any = None) -> np.ndarray:
    r"""Person-total correlation: how a respondent's answer profile follows the rest of the sample's.

    .. math:: r_i = \operatorname{corr}_j\left(x_{ij},\ \bar x_{(-i)j}\right), \qquad
              \bar x_{(-i)j} = \frac{\sum_{h \ne i} x_{hj}}{n_j - 1}

    the correlation, over the items respondent i answered, of their keyed answers with the item means of all
    other respondents.

    Parameters
    ----------
    keyed : array_like, shape (n, k)
        Keyed item answers (reverse items reversed); NaN = missing.
    totals, counts : array_like, shape (k,), optional
        Each item's sum of answers and number of answers in the whole sample, when ``keyed`` holds only some
        of its rows (a block of a file read in blocks); default: those of ``keyed``.

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
    x = as_answer_matrix(keyed, "keyed")
    answered = ~np.isnan(x)
    filled = np.where(answered, x, 0.0)
    totals = filled.sum(axis=0) if totals is None else np.asarray(totals, dtype=float)
    counts = answered.sum(axis=0) if counts is None else np.asarray(counts)
    others = np.full(x.shape, np.nan)
    denominator = np.broadcast_to(counts - 1, x.shape)
    np.divide(totals - filled, denominator, out=others, where=answered & (denominator > 0))
    return _rowwise_pearson(np.where(answered, x, np.nan), others, min_pairs=3)


def speeders(durations: Any, *, speed_share: float = 1 / 3, median: float | None = None) -> tuple[np.ndarray, float]:
    """Respondents faster than ``speed_share`` of the median completion time.

    Returns the boolean flags (False where the duration is missing) and the median used (``median`` when
    given: the whole sample's, when ``durations`` are a block of its rows). A threshold at a share of the
    median is common practice, no source; 1/3 is a frequent choice.
    """
    if not 0 < speed_share < 1:
        raise DataError(f"speed share must lie between 0 and 1, got {speed_share}")
    times = np.asarray(durations, dtype=float).reshape(-1)
    valid = np.isfinite(times)
    if (times[valid] < 0).any():
        raise DataError("durations: negative completion time found; times must be zero or positive")
    if median is None:
        if not valid.any():
            return np.zeros(times.shape, dtype=bool), math.nan
        median = float(np.median(times[valid]))
    if math.isnan(median):
        return np.zeros(times.shape, dtype=bool), math.nan
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

    x = as_answer_matrix(answers, "answers")
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
