"""Grouping answer columns by their correlations and guessing which items are reverse-worded."""
from __future__ import annotations

import math

import numpy as np

from ..notes import Note, note
from .results import AnswerFormat, ReverseProposal, ScaleDraft
from .rules import (
    MIN_ABS_R,
    MIN_ROWS_FOR_CORRELATIONS,
)

# ----------------------------------------------------------------------------------------------------------
# grouping and keying


def correlation_threshold(n_used: int) -> float:
    """Smallest |r| counted as items hanging together: MIN_ABS_R, raised for small n.

    Under no correlation r has a standard error of about 1/sqrt(n) (a textbook large-sample result), so
    3/sqrt(n) keeps chance correlations below the threshold.
    """
    return max(MIN_ABS_R, 3.0 / math.sqrt(max(n_used, 1)))


def correlation_clusters(abs_corr: np.ndarray, *, threshold: float) -> list[list[int]]:
    """Split items into clusters by average-linkage clustering of 1 - |r| (cut where mean |r| < threshold).

    Average linkage joins an item to a cluster only when its mean |r| with the cluster's items reaches the
    threshold, so one item that correlates with nothing stays on its own. Clusters come largest first.
    """
    from scipy.cluster.hierarchy import fcluster, linkage
    from scipy.spatial.distance import squareform

    k = abs_corr.shape[0]
    if k < 2:
        return [[i] for i in range(k)]
    distance = 1.0 - np.nan_to_num(abs_corr, nan=0.0)
    np.fill_diagonal(distance, 0.0)
    distance = np.clip((distance + distance.T) / 2, 0.0, 1.0)
    tree = linkage(squareform(distance, checks=False), method="average")
    labels = fcluster(tree, t=1.0 - threshold, criterion="distance")
    clusters: dict[int, list[int]] = {}
    for index, label in enumerate(labels):
        clusters.setdefault(int(label), []).append(index)
    return sorted(clusters.values(), key=lambda c: (-len(c), c[0]))


def propose_reverse_keys(cov: np.ndarray) -> np.ndarray:
    """Signs (+1 as worded, -1 reversed) from the signs of the items' loadings on the first factor.

    The first principal axis of the correlation matrix, signed so that most items load positively
    (:func:`scalewright.stats.reliability_flags.first_factor_signs`, the rule of the ``miskey-suspect`` flag): an
    item loading below -.10 is proposed for reversing. Item-rest r is not used to decide: when several items
    point the other way, the rest of a correctly worded item holds them and its item-rest r misleads. With
    two items (no factor to speak of) the second is reversed when they correlate negatively.
    """
    from ..stats.item_analysis import item_rest_correlations_from_cov
    from ..stats.item_covariance import correlation_from_cov
    from ..stats.reliability_flags import MISKEY_MIN_LOADING, first_factor_signs

    k = cov.shape[0]
    corr = correlation_from_cov(cov)
    if k >= 3 and np.isfinite(corr).all():
        loadings = first_factor_signs(np.full(k, np.nan), corr)
        if np.isfinite(loadings).all():
            return np.where(loadings < -MISKEY_MIN_LOADING, -1.0, 1.0)
    signs = np.ones(k)
    for _ in range(2 * k):
        r = item_rest_correlations_from_cov(cov * np.outer(signs, signs))
        if not np.isfinite(r).any():
            break
        worst = int(np.nanargmin(r))
        if not r[worst] < 0:
            break
        signs[worst] = -signs[worst]
    if (signs < 0).sum() > k / 2:
        signs = -signs
    return signs


def scale_from_cluster(name: str, stem: str, items: list[str], matrix: np.ndarray, fmt: AnswerFormat,
                        notes: list[str | Note], weak: frozenset[str] = frozenset()) -> ScaleDraft:
    from ..stats.item_analysis import item_rest_correlations_from_cov
    from ..stats.item_covariance import item_covariance
    from ..stats.reliability_coefficients import cronbach_alpha_from_cov

    stats = item_covariance(matrix, pairwise=True)
    cov = np.nan_to_num(stats.cov, nan=0.0)
    k = len(items)
    notes = list(notes)
    if stats.n_used < MIN_ROWS_FOR_CORRELATIONS:
        notes.append(f"only {stats.n_used} rows answer every pair of items: too few to check keying")
        signs = np.ones(k)
    else:
        signs = propose_reverse_keys(cov)
    # an item kept only as its likeliest scale is too weakly related to tell its direction: left as worded
    signs = np.where([item in weak for item in items], 1.0, signs)
    worded_r = item_rest_correlations_from_cov(cov)
    keyed_cov = cov * np.outer(signs, signs)
    keyed_r = item_rest_correlations_from_cov(keyed_cov)
    threshold = correlation_threshold(stats.n_used)
    proposals = tuple(ReverseProposal(item=items[j], r_as_worded=float(worded_r[j]), r_reversed=float(keyed_r[j]))
                      for j in range(k) if signs[j] < 0)
    if proposals and (signs < 0).sum() * 2 == k:
        notes.append("half the items point each way: which half is 'reversed' depends on what a high score "
                     "should mean; check the wording")
    for j in range(k):
        if np.isfinite(keyed_r[j]) and keyed_r[j] < threshold:
            notes.append(note("draft-weak-item", item=items[j], item_rest_r=float(keyed_r[j])))
    if k == 2:
        notes.append("only two items: keying and reliability rest on one correlation")
    return ScaleDraft(name=name, stem=stem, items=tuple(items), reverse=proposals, response=fmt,
                      n_used=stats.n_used, alpha_as_worded=cronbach_alpha_from_cov(cov),
                      alpha_keyed=cronbach_alpha_from_cov(keyed_cov),
                      item_rest_r=tuple(float(v) for v in keyed_r), notes=tuple(notes))
