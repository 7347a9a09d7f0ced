"""Means and covariance matrix of items with missing answers by maximum likelihood (EM), and Little's test.

Both start from a :class:`~scalewright.stats.missing_patterns.PatternSummary` (count, sums and
cross-products of the answered part for each missingness pattern), so they work on blocks of a file and
on subgroups alike. Hand-written because no well-kept library runs EM from per-pattern sufficient
statistics (they want the rows, and several only impute).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..notes import Note, note
from ..results import ResultMixin
from .item_covariance import is_invertible
from .missing_patterns import PatternSummary


@dataclass(frozen=True)
class EMEstimate(ResultMixin):
    """Maximum-likelihood means and covariance matrix (divisor ``n_used``) under missing at random.

    NaN throughout when they cannot be estimated (see ``notes``). ``iterations`` is 0 when nothing was
    missing: the complete-data estimates are then the maximum-likelihood ones.
    """

    means: np.ndarray
    cov: np.ndarray
    n_used: int
    iterations: int
    converged: bool
    notes: tuple[Note, ...] = ()


@dataclass(frozen=True)
class MCARTest(ResultMixin):
    """Little's chi-square test that the answers are missing completely at random."""

    chi2: float
    df: int
    pvalue: float
    patterns: int

    def to_dict(self) -> dict[str, object]:
        from ..results import to_jsonable

        return {"chi2": to_jsonable(self.chi2), "df": self.df, "pvalue": to_jsonable(self.pvalue)}


def _nan_estimate(k: int, n_used: int, *notes: Note) -> EMEstimate:
    return EMEstimate(means=np.full(k, np.nan), cov=np.full((k, k), np.nan), n_used=n_used, iterations=0,
                      converged=False, notes=tuple(notes))


def _exact_complete(summary: PatternSummary) -> tuple[np.ndarray, np.ndarray]:
    """Mean and ML covariance of complete data: ``(n C - s s') / n**2``, in exact integers when exact."""
    n = int(summary.counts[0])
    sums, cross = summary.sums[0], summary.cross_products(0)
    if summary.exact:
        s = np.array([int(v) for v in sums], dtype=object)
        c = np.array([[int(v) for v in row] for row in cross], dtype=object)
        cov = ((n * c - np.outer(s, s)) / (n * n)).astype(np.float64)
        return np.array([float(v) / n for v in s]), cov
    means = sums / n
    return means, cross / n - np.outer(means, means)


def _available_case(summary: PatternSummary,
                    total_cross: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Answers, mean and ML variance of each item over every respondent who answered it."""
    answered = (summary.counts[:, None] * summary.observed).sum(axis=0).astype(np.float64)
    sums = summary.sums.sum(axis=0).astype(np.float64)
    total_cross = summary.total_cross_products() if total_cross is None else total_cross
    squares = np.diag(total_cross).astype(np.float64)
    with np.errstate(invalid="ignore", divide="ignore"):
        means = sums / answered
        variances = squares / answered - means**2
    return answered, means, variances


def _start(summary: PatternSummary, total_cross: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Starting values: the complete rows' estimates when they are positive definite, else the
    available-case means and variances with no covariance (Little & Rubin 2002, section 11.2)."""
    k = summary.k
    complete = np.flatnonzero(summary.observed.all(axis=1))
    _, means, variances = _available_case(summary, total_cross)
    if complete.size and summary.counts[complete[0]] > k:
        n = float(summary.counts[complete[0]])
        mean_c = summary.sums[complete[0]] / n
        cov_c = summary.cross_products(int(complete[0])) / n - np.outer(mean_c, mean_c)
        try:
            np.linalg.cholesky(cov_c)
            return mean_c.astype(np.float64), cov_c.astype(np.float64)
        except np.linalg.LinAlgError:
            pass
    return means, np.diag(variances)


#: patterns or rows handled at once in the E step (bounds the memory of the (n, m, k) work arrays)
_CHUNK_CELLS = 2_000_000


@dataclass(frozen=True)
class _Group:
    """Patterns (held as matrices) or rows with the same number m of missing items, for the E step."""

    missing: np.ndarray        # (P, m) positions of the missing items
    answered: np.ndarray       # (P, k) bool
    counts: np.ndarray         # (P,) respondents (1 for a row)
    sums: np.ndarray           # (P, k) zero-filled sums (the row itself for a row)
    cross: np.ndarray | None   # (P, k, k) cross-products of the answered part; None for rows


def _groups(summary: PatternSummary) -> list[_Group]:
    k = summary.k
    groups: list[_Group] = []
    held = sorted(p for p in summary.matrices if not summary.observed[p].all())
    if held:
        observed = summary.observed[held]
        for m in np.unique(k - observed.sum(axis=1)):
            mine = [p for p, o in zip(held, observed, strict=True) if k - o.sum() == m]
            answered = summary.observed[mine]
            groups.append(_Group(missing=np.nonzero(~answered)[1].reshape(-1, int(m)), answered=answered,
                                 counts=summary.counts[mine].astype(np.float64),
                                 sums=summary.sums[mine].astype(np.float64),
                                 cross=np.stack([summary.matrices[p] for p in mine]).astype(np.float64)))
    if summary.rows.size:
        # rows in a canonical order (pattern, then answers), so the E step's sums are taken in the same
        # order whatever the order of the rows: the same estimate, to the bit, from a file read whole, read
        # in blocks or summarised on Dask partitions (the summaries hold the same rows in another order)
        canonical = np.lexsort((*summary.rows.T[::-1], summary.row_pattern))
        rows, row_pattern = summary.rows[canonical], summary.row_pattern[canonical]
        observed = summary.observed[row_pattern]
        n_missing = k - observed.sum(axis=1)
        for m in np.unique(n_missing):
            if m == 0:
                continue
            mine = n_missing == m
            answered = observed[mine]
            groups.append(_Group(missing=np.nonzero(~answered)[1].reshape(-1, int(m)), answered=answered,
                                 counts=np.ones(int(mine.sum())), sums=rows[mine], cross=None))
    return groups


def _e_step(group: _Group, theta: np.ndarray, mu: np.ndarray, sums: np.ndarray, cross: np.ndarray) -> None:
    """Add one group's expected sums and cross-products of the filled-in answers to ``sums`` and ``cross``.

    For a pattern with missing items M: fill = c + B x with B = -Theta_MM^-1 Theta_MO (zero in the
    columns of M) and c = mu_M - B mu; residual covariance Theta_MM^-1. Summed over its n respondents
    with sums s and cross-products C of the answered part: sums of the fills B s + n c; cross-products
    with the answers B C + c s'; among the fills B C B' + B s c' + c s' B' + n (c c' + Theta_MM^-1).
    """
    k = mu.size
    if group.cross is None:
        _e_step_rows(group, theta, mu, sums, cross)
        return
    size, m = group.missing.shape
    step = max(1, _CHUNK_CELLS // (m * k * k))
    columns = np.arange(k)
    for start in range(0, size, step):
        missing = group.missing[start:start + step]
        answered = group.answered[start:start + step]
        count = group.counts[start:start + step]
        s = group.sums[start:start + step]
        residual = np.linalg.inv(theta[missing[:, :, None], missing[:, None, :]])
        slope = -residual @ (theta[missing] * answered[:, None, :])          # (P, m, k)
        intercept = mu[missing] - slope @ mu                                  # (P, m)
        slope_s = np.einsum("pmk,pk->pm", slope, s)
        slope_c = slope @ group.cross[start:start + step]
        with_answers = slope_c + intercept[:, :, None] * s[:, None, :]
        among = (slope_c @ slope.transpose(0, 2, 1) + slope_s[:, :, None] * intercept[:, None, :]
                 + intercept[:, :, None] * slope_s[:, None, :]
                 + count[:, None, None] * (intercept[:, :, None] * intercept[:, None, :] + residual))
        sums += np.bincount(missing.ravel(), weights=(slope_s + count[:, None] * intercept).ravel(), minlength=k)
        between = np.bincount((missing[:, :, None] * k + columns).ravel(), weights=with_answers.ravel(),
                              minlength=k * k).reshape(k, k)
        cross += between + between.T
        cross += np.bincount((missing[:, :, None] * k + missing[:, None, :]).ravel(), weights=among.ravel(),
                             minlength=k * k).reshape(k, k)


def _e_step_rows(group: _Group, theta: np.ndarray, mu: np.ndarray, sums: np.ndarray, cross: np.ndarray) -> None:
    """The E step of respondents held one by one: the same sums, with C = x x' for each.

    The fill of row x is mu_M - Theta_MM^-1 (Theta (x - mu))_M (x - mu zero where missing); its products
    with the answers come from one matrix product of the filled-in part with the rows, so no (rows, m, k)
    array is built.
    """
    k = mu.size
    size, m = group.missing.shape
    step = max(1, _CHUNK_CELLS // k)
    for start in range(0, size, step):
        missing = group.missing[start:start + step]
        rows = group.sums[start:start + step]
        centred = rows - mu * group.answered[start:start + step]
        weighted = np.take_along_axis(centred @ theta, missing, axis=1)
        residual = np.linalg.inv(theta[missing[:, :, None], missing[:, None, :]])
        fill = mu[missing] - np.einsum("rab,rb->ra", residual, weighted)
        sums += np.bincount(missing.ravel(), weights=fill.ravel(), minlength=k)
        filled = np.zeros_like(rows)
        np.put_along_axis(filled, missing, fill, axis=1)
        between = filled.T @ rows
        cross += between + between.T
        among = fill[:, :, None] * fill[:, None, :] + residual
        cross += np.bincount((missing[:, :, None] * k + missing[:, None, :]).ravel(), weights=among.ravel(),
                             minlength=k * k).reshape(k, k)

def em_means_and_covariance(summary: PatternSummary, *, tol: float = 1e-10, max_iter: int = 1000) -> EMEstimate:
    r"""Maximum-likelihood means and covariance matrix of multivariate normal items with missing answers.

    The EM algorithm: the E step replaces each respondent's missing answers by their regression on the
    answered ones and adds the residual covariance,

    .. math::

        \hat x_M = \mu_M - \Theta_{MM}^{-1}\Theta_{MO}(x_O - \mu_O), \qquad
        \operatorname{Cov}(x_M \mid x_O) = \Theta_{MM}^{-1}, \qquad \Theta = \Sigma^{-1},

    summed over the per-pattern sufficient statistics; the M step sets :math:`\mu = \bar{\hat x}` and
    :math:`\Sigma = \overline{\hat x \hat x'} - \mu\mu'`. Using the precision matrix, each pattern needs
    only the inverse of its missing block. Iterates until the largest change of a mean (in units of the
    largest sd) and of a covariance (in units of the largest variance) is below ``tol``.

    Parameters
    ----------
    summary : PatternSummary
        Per-pattern counts, sums and cross-products.
    tol : float
        Convergence criterion (see above).
    max_iter : int
        Iterations before giving up (the estimate is then returned with ``converged=False`` and a note).

    Returns
    -------
    EMEstimate
        Means and the covariance matrix with divisor ``n_used`` (the respondents with at least one answer).
        An item without variance among its answers keeps its mean, a zero variance and zero covariances;
        the others are estimated without it.

    References
    ----------
    .. [1] Dempster, A. P., Laird, N. M., & Rubin, D. B. (1977). Maximum likelihood from incomplete data
       via the EM algorithm. Journal of the Royal Statistical Society B, 39, 1-38.
    .. [2] Little, R. J. A., & Rubin, D. B. (2002). Statistical Analysis with Missing Data (2nd ed.).
       Wiley, sections 8.2 and 11.2.
    """
    k, n_used = summary.k, summary.n_used
    if n_used <= k or k == 0:  # fewer respondents than items: the ML covariance matrix is singular
        return _nan_estimate(k, n_used, note("em-too-few", n_used=n_used, k=k))
    if summary.observed.shape[0] == 1 and summary.observed.all():
        means, cov = _exact_complete(summary)
        return EMEstimate(means=means, cov=cov, n_used=n_used, iterations=0, converged=True)
    total_cross = summary.total_cross_products()
    answered, means, variances = _available_case(summary, total_cross)
    never = [j for j in range(k) if answered[j] == 0]
    if never:
        return _nan_estimate(k, n_used, note("em-item-never-answered", positions=tuple(never)))
    scale = float(np.nanmax(variances)) if np.isfinite(variances).any() else 0.0
    constant = [j for j in range(k) if not variances[j] > 1e-12 * max(scale, 1e-300)]
    if constant:
        varying = [j for j in range(k) if j not in constant]
        out_means, out_cov = means.copy(), np.zeros((k, k))
        notes: tuple[Note, ...] = ()
        iterations, converged = 0, True
        if varying:
            inner = em_means_and_covariance(restrict(summary, varying), tol=tol, max_iter=max_iter)
            out_means[varying] = inner.means
            out_cov[np.ix_(varying, varying)] = inner.cov
            notes, iterations, converged = inner.notes, inner.iterations, inner.converged
        return EMEstimate(means=out_means, cov=out_cov, n_used=n_used, iterations=iterations, converged=converged,
                          notes=(note("em-constant-items", positions=tuple(constant)), *notes))
    return _iterate(summary, total_cross, tol=tol, max_iter=max_iter)


def _iterate(summary: PatternSummary, total_cross: np.ndarray, *, tol: float, max_iter: int) -> EMEstimate:
    k, n = summary.k, summary.n_used
    mu, sigma = _start(summary, total_cross)
    fixed_sums = summary.sums.sum(axis=0).astype(np.float64)
    fixed_cross = total_cross.astype(np.float64)
    groups = _groups(summary)
    for iteration in range(1, max_iter + 1):
        # a matrix on the edge of singularity (an item a linear combination of others among the answers, or
        # too few respondents for the pattern of gaps) has no usable inverse: the ML estimate is degenerate
        if not is_invertible(sigma):
            return _nan_estimate(k, n, note("em-singular"))
        theta = np.linalg.inv(sigma)
        sums, cross = fixed_sums.copy(), fixed_cross.copy()
        try:
            with np.errstate(over="raise", invalid="raise"):
                for group in groups:
                    _e_step(group, theta, mu, sums, cross)
        except (np.linalg.LinAlgError, FloatingPointError):
            return _nan_estimate(k, n, note("em-singular"))
        new_mu = sums / n
        new_sigma = cross / n - np.outer(new_mu, new_mu)
        new_sigma = (new_sigma + new_sigma.T) / 2
        variance_scale = max(float(np.max(np.diag(new_sigma))), 1e-300)
        change = max(float(np.max(np.abs(new_mu - mu))) / math.sqrt(variance_scale),
                     float(np.max(np.abs(new_sigma - sigma))) / variance_scale)
        mu, sigma = new_mu, new_sigma
        if change < tol:
            return EMEstimate(means=mu, cov=sigma, n_used=n, iterations=iteration, converged=True)
    return EMEstimate(means=mu, cov=sigma, n_used=n, iterations=max_iter, converged=False,
                      notes=(note("em-not-converged", iterations=max_iter),))


def restrict(summary: PatternSummary, positions: list[int]) -> PatternSummary:
    """The summary of some of the items only (patterns that coincide on them are merged)."""
    positions = list(positions)
    observed = summary.observed[:, positions]
    keep: np.ndarray = np.asarray(observed.any(axis=1))
    old_to_new = np.cumsum(keep) - 1
    rows_keep = keep[summary.row_pattern] if summary.row_pattern.size else np.empty(0, dtype=bool)
    partial = PatternSummary(
        k=len(positions), observed=observed[keep], counts=summary.counts[keep], sums=summary.sums[keep][:, positions],
        matrices={int(old_to_new[p]): m[np.ix_(positions, positions)] for p, m in summary.matrices.items() if keep[p]},
        rows=summary.rows[rows_keep][:, positions], row_pattern=old_to_new[summary.row_pattern[rows_keep]],
        n_none=summary.n_none + int(summary.counts[~keep].sum()), exact=summary.exact)
    empty = PatternSummary(k=len(positions), observed=np.empty((0, len(positions)), dtype=bool),
                           counts=np.empty(0, dtype=np.int64), sums=np.empty((0, len(positions)), dtype=np.int64),
                           matrices={}, rows=np.empty((0, len(positions))), row_pattern=np.empty(0, dtype=np.int64),
                           n_none=0, exact=summary.exact)
    return partial.merge(empty)


def little_mcar_test(summary: PatternSummary, estimate: EMEstimate) -> MCARTest | None:
    r"""Little's test that answers are missing completely at random (MCAR).

    .. math::

        d^2 = \sum_{p} n_p\,(\bar y_{p,O} - \hat\mu_O)'\,\hat\Sigma_{OO}^{-1}\,(\bar y_{p,O} - \hat\mu_O)
        \;\sim\; \chi^2\Big(\sum_p k_p - k\Big)

    over the missingness patterns p, with :math:`\bar y_{p,O}` the means of the :math:`k_p` answered
    items of the :math:`n_p` respondents of pattern p, and :math:`\hat\mu, \hat\Sigma` the
    maximum-likelihood estimates (EM). :math:`\hat\Sigma_{OO}^{-1}` comes from the precision matrix:
    :math:`\Theta_{OO} - \Theta_{OM}\Theta_{MM}^{-1}\Theta_{MO}`.

    Returns None when nothing is missing (no degrees of freedom) or the estimate is undefined or did not
    converge. Items without variance are left out of the test.

    References
    ----------
    .. [1] Little, R. J. A. (1988). A test of missing completely at random for multivariate data with
       missing values. Journal of the American Statistical Association, 83, 1198-1202.
    """
    from scipy.special import chdtrc  # chi-square survival function without importing scipy.stats

    cov = estimate.cov
    if not estimate.converged or not np.isfinite(cov).all() or not np.isfinite(estimate.means).all():
        return None
    varying = [j for j in range(summary.k) if cov[j, j] > 0]
    if not varying:
        return None
    if len(varying) < summary.k:
        summary = restrict(summary, varying)
        cov, mu = cov[np.ix_(varying, varying)], estimate.means[varying]
    else:
        mu = estimate.means
    k = summary.k
    df = int(summary.observed.sum()) - k
    if df <= 0:
        return None
    try:
        theta = np.linalg.inv(np.linalg.cholesky(cov))
        theta = theta.T @ theta
    except np.linalg.LinAlgError:
        return None
    centred = summary.sums / summary.counts[:, None] - mu * summary.observed
    weighted = centred @ theta
    quadratic = (centred * weighted).sum(axis=1)
    n_missing = k - summary.observed.sum(axis=1)
    for m in np.unique(n_missing):
        if m == 0:
            continue
        mine = np.flatnonzero(n_missing == m)
        missing = np.nonzero(~summary.observed[mine])[1].reshape(-1, int(m))
        w = np.take_along_axis(weighted[mine], missing, axis=1)
        block = theta[missing[:, :, None], missing[:, None, :]]
        quadratic[mine] -= (w * np.linalg.solve(block, w[:, :, None])[:, :, 0]).sum(axis=1)
    chi2 = float(summary.counts @ quadratic)
    return MCARTest(chi2=chi2, df=df, pvalue=float(chdtrc(df, chi2)), patterns=int(summary.observed.shape[0]))
