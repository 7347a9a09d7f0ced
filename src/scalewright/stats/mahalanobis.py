"""The squared Mahalanobis distance of every respondent from the sample centroid, with missing answers."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import DataError
from ..notes import Note, note
from ..results import ResultMixin
from .careless_indices import as_answer_matrix
from .item_covariance import item_covariance


@dataclass(frozen=True)
class MahalanobisResult(ResultMixin):
    """Squared Mahalanobis distance of every respondent from the sample centroid, with its chi-square p."""

    JSON_KEYS = {"p": "pvalue"}

    d2: np.ndarray
    p: np.ndarray
    df: np.ndarray
    items_used: tuple[int, ...]
    notes: tuple[Note, ...] = ()  # codes with values, worded by present/messages.py


def mahalanobis_distance(keyed: Any, *, reference: Any = None, weights: Any = None) -> MahalanobisResult:
    r"""Squared Mahalanobis distance of each respondent's answers from the item means, and its chi-square p.

    .. math:: D^2_i = (x_i - \bar x)^\top S^{-1} (x_i - \bar x), \qquad p_i = P(\chi^2_{m_i} > D^2_i)

    Parameters
    ----------
    keyed : array_like, shape (n, k)
        Item answers (reverse keying does not change :math:`D^2`: it flips signs only). NaN = missing.
    reference : array_like of bool, shape (n,), optional
        Respondents whose answers estimate the means and the covariance (default: all). Distances are computed
        for every respondent.
    weights : array_like, shape (n,), optional
        Survey weights: the means and the covariance are then weighted
        (:func:`scalewright.stats.weighted.weighted_pairwise_moments`) and rows of weight 0 do not enter them;
        every respondent still gets a distance, whatever their own weight.

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
    x = as_answer_matrix(keyed, "keyed")
    n, k = x.shape
    basis = np.ones(n, dtype=bool) if reference is None else np.asarray(reference, dtype=bool).reshape(-1)
    if basis.shape != (n,):
        raise DataError(f"reference: expected {n} true/false values, got {basis.size}")
    if n < 3 or k == 0:
        return distances_from_centre(x, mahalanobis_centre(np.full(k, np.nan), np.full((k, k), np.nan), n_rows=n,
                                                           n_basis=int(basis.sum())))
    if weights is None:
        cov = item_covariance(x[basis], pairwise=True).cov
        answered = ~np.isnan(x[basis])
        with np.errstate(invalid="ignore", divide="ignore"):
            means = np.where(answered, x[basis], 0.0).sum(axis=0) / answered.sum(axis=0)
    else:
        from .weighted import weighted_pairwise_moments

        basis = basis & (np.asarray(weights, dtype=float).reshape(-1) > 0)
        means, cov = weighted_pairwise_moments(x[basis], np.asarray(weights, dtype=float)[basis])
    return distances_from_centre(x, mahalanobis_centre(means, cov, n_rows=n, n_basis=int(basis.sum())))


@dataclass(frozen=True)
class MahalanobisCentre:
    """What the distances are measured from: the means and covariance of the usable items (those with
    spread), with the notes of the checks; ``ok`` is False when no distance can be computed."""

    means: np.ndarray
    cov: np.ndarray
    usable: tuple[int, ...]
    ok: bool
    notes: tuple[Note, ...] = ()


def mahalanobis_centre(means: Any, cov: Any, *, n_rows: int, n_basis: int) -> MahalanobisCentre:
    """The checked centre of :func:`mahalanobis_distance` from item means and a covariance matrix (a pure
    function of these sufficient statistics, so they may come from merged summaries of a file's blocks).

    ``n_rows`` is the number of respondents, ``n_basis`` how many the means and covariance rest on.
    Items without spread are set aside; too few respondents, or a singular covariance, leave the centre
    unusable (``ok`` False) with a note saying why.
    """
    means = np.asarray(means, dtype=float).reshape(-1)
    cov = np.asarray(cov, dtype=float)
    k = means.size
    if n_rows < 3 or k == 0:
        return MahalanobisCentre(means, cov, (), False, (note("distance-too-few", respondents=n_rows, items=k),))
    notes: list[Note] = []
    variances = np.diag(cov)
    usable = np.flatnonzero(np.isfinite(variances) & (variances > 1e-12))
    used = tuple(int(u) for u in usable)
    if len(usable) < k:
        notes.append(note("distance-items-without-spread", items=k - len(usable)))
    if len(usable) == 0:
        return MahalanobisCentre(means, cov, (), False, tuple(notes))
    sub = cov[np.ix_(usable, usable)]
    if n_basis <= len(usable) or not np.isfinite(sub).all():
        notes.append(note("distance-too-few-respondents", respondents=int(n_basis), items=len(usable)))
        return MahalanobisCentre(means[usable], sub, used, False, tuple(notes))
    eigenvalues = np.linalg.eigvalsh(sub)
    if eigenvalues[0] <= 1e-10 * max(eigenvalues[-1], 1e-300):
        notes.append(note("distance-singular"))
        return MahalanobisCentre(means[usable], sub, used, False, tuple(notes))
    return MahalanobisCentre(means[usable], sub, used, True, tuple(notes))


def distances_from_centre(keyed: Any, centre: MahalanobisCentre) -> MahalanobisResult:
    """Each respondent's squared distance from a :class:`MahalanobisCentre` and its chi-square p (see
    :func:`mahalanobis_distance`); every row is its own, so blocks of rows give the rows of the whole."""
    from scipy.linalg import LinAlgError, lapack
    from scipy.stats import chi2

    x = as_answer_matrix(keyed, "keyed")
    n = x.shape[0]
    if not centre.ok:
        nan = np.full(n, np.nan)
        return MahalanobisResult(nan, nan.copy(), np.zeros(n, dtype=int), centre.usable, centre.notes)
    notes = list(centre.notes)
    usable = np.asarray(centre.usable, dtype=np.intp)
    x = x[:, usable]
    cov = centre.cov
    answered = ~np.isnan(x)
    deviations = np.where(answered, x - centre.means, 0.0)
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
    # are hundreds of small solves, which a multi-threaded BLAS slows down (milliseconds each on a busy machine).
    # LAPACK's Cholesky factor and triangular solve are called directly: the routines scipy.linalg.cholesky
    # and solve_triangular call, without their checks of finite input (the covariance and the deviations are
    # finite here), which cost more than the solves on small matrices
    with one_blas_thread():
        for g, pattern in enumerate(patterns):
            if not pattern.any():
                continue
            rows = by_pattern[bounds[g]:bounds[g + 1]]
            observed = np.flatnonzero(pattern)
            factor, info = lapack.dpotrf(cov[observed][:, observed], lower=1, clean=1)
            if info != 0:
                raise LinAlgError(f"the covariance of the answered items is not positive definite ({info})")
            z, info = lapack.dtrtrs(factor, deviations[rows][:, observed].T, lower=1)
            if info != 0:
                raise LinAlgError(f"the triangular solve failed ({info})")
            d2[rows] = (z ** 2).sum(axis=0)
    df = answered.sum(axis=1)
    p = np.full(n, np.nan)
    has = df > 0
    p[has] = chi2.sf(d2[has], df[has])
    if (~has).any():
        notes.append(note("distance-no-answers", respondents=int((~has).sum())))
    return MahalanobisResult(d2, p, df, centre.usable, tuple(notes))
