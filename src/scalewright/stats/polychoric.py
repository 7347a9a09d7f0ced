"""Polychoric (and tetrachoric) correlations by Olsson's two-step method, with standard errors.

Hand-written because the general libraries lack a correct estimator (semopy's breaks with current scipy,
docs/references.md): the one here is vectorised over every pair of items at once, from the pair tables of
:mod:`scalewright.stats.pair_tables`, so a 60-item matrix is a few array passes per iteration.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.special import ndtr, ndtri

from .bivariate_normal import bivariate_normal_cdf_dh, bivariate_normal_cdf_grid, bivariate_normal_pdf

__all__ = ["PairEstimates", "RHO_BOUND", "polychoric_pairs", "thresholds_from_counts"]

#: the search interval is [-RHO_BOUND, RHO_BOUND]; a likelihood still rising there has no interior maximum
RHO_BOUND = 0.9999
#: Haldane's (1956) correction: added to the empty cells of a table whose likelihood has no interior maximum
EMPTY_CELL_CORRECTION = 0.5
_TOLERANCE = 1e-10
#: cell probabilities are differences of values near 1: below this they are rounding noise
_RESOLVED = 1e-12
_MAX_ITER = 100


@dataclass(frozen=True)
class PairEstimates:
    """Per-table results of :func:`polychoric_pairs` (arrays of the tables' length).

    ``status``: 0 estimated; 1 estimated after adding 0.5 to the empty cells (the table alone puts the
    maximum at |rho| = 1); 2 at the bound even so; 3 not estimable (an item with a single answer level
    among the table's rows, or fewer than two rows).
    """

    rho: np.ndarray
    se: np.ndarray
    n: np.ndarray
    status: np.ndarray


def thresholds_from_counts(counts: np.ndarray) -> np.ndarray:
    r"""Thresholds of the latent normal variable from answer counts, :math:`\tau_c = \Phi^{-1}(P(X < c))`.

    ``counts`` is (..., L); the result is (..., L - 1), -inf / +inf where no answer lies below / above.
    """
    counts = np.asarray(counts, dtype=float)
    total = counts.sum(axis=-1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        below = np.cumsum(counts, axis=-1)[..., :-1] / total
    return ndtri(np.clip(below, 0.0, 1.0))


def _extended(thresholds: np.ndarray) -> np.ndarray:
    n = thresholds.shape[0]
    return np.concatenate([np.full((n, 1), -np.inf), thresholds, np.full((n, 1), np.inf)], axis=1)


def _cells(grid: np.ndarray) -> np.ndarray:
    """Cell masses from values on the threshold grid (rectangle rule of a bivariate distribution)."""
    return grid[:, 1:, 1:] - grid[:, :-1, 1:] - grid[:, 1:, :-1] + grid[:, :-1, :-1]


class _Model:
    """Cell probabilities of a set of tables and their derivatives in rho, for fixed thresholds."""

    def __init__(self, row_thresholds: np.ndarray, column_thresholds: np.ndarray) -> None:
        self.x, self.y = row_thresholds, column_thresholds
        # the grid's edges do not depend on rho: 0 along -inf, the margin along +inf
        count, levels = row_thresholds.shape[0], row_thresholds.shape[1] + 1
        edges = np.zeros((count, levels + 1, levels + 1))
        edges[:, -1, 1:-1] = ndtr(column_thresholds)
        edges[:, 1:-1, -1] = ndtr(row_thresholds)
        edges[:, -1, -1] = 1.0
        self.edges = edges

    def at(self, rho: np.ndarray, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        x, y = self.x[rows], self.y[rows]
        grid = self.edges[rows]
        grid[:, 1:-1, 1:-1] = bivariate_normal_cdf_grid(x, y, rho)
        density = np.zeros_like(grid)
        density[:, 1:-1, 1:-1] = bivariate_normal_pdf(x[:, :, None], y[:, None, :], rho[:, None, None])
        return np.clip(_cells(grid), 0.0, None), _cells(density)


def _score_and_information(counts: np.ndarray, probability: np.ndarray, slope: np.ndarray,
                           rho: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """d log L / d rho and the expected information N sum(pi'^2 / pi) of each table.

    A cell with answers whose probability is below what the differences of the grid can resolve is one
    vanishing as |rho| -> 1: the likelihood falls towards that bound, so the score points away from it.
    """
    positive = probability > _RESOLVED
    safe = np.where(positive, probability, 1.0)
    ratio = np.where(positive, slope / safe, 0.0)
    score = (counts * ratio).sum(axis=(1, 2))
    information = counts.sum(axis=(1, 2)) * (ratio * slope).sum(axis=(1, 2))
    vanishing = ((counts > 0) & ~positive).any(axis=(1, 2))
    score = np.where(vanishing, np.where(rho >= 0, -np.inf, np.inf), score)
    return score, information


def _maximise(counts: np.ndarray, model: _Model, start: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Root of the score in (-RHO_BOUND, RHO_BOUND) by Fisher scoring kept inside a shrinking bracket.

    Returns the estimates and which tables have no interior maximum (score still positive at
    +RHO_BOUND or still negative at -RHO_BOUND).
    """
    count = counts.shape[0]
    high_score, low_score = np.zeros(count), np.zeros(count)
    # with every cell of the answered levels filled, some filled cell's probability vanishes as
    # |rho| -> 1, so the maximum is interior; only tables with empty cells need the check at the bounds
    used = (counts.sum(axis=2) > 0)[:, :, None] & (counts.sum(axis=1) > 0)[:, None, :]
    gaps = np.flatnonzero((used & (counts == 0)).any(axis=(1, 2)))
    if gaps.size:
        bound = np.full(gaps.size, RHO_BOUND)
        high_score[gaps] = _score_and_information(counts[gaps], *model.at(bound, gaps), bound)[0]
        low_score[gaps] = _score_and_information(counts[gaps], *model.at(-bound, gaps), -bound)[0]
    at_bound = (high_score > 0) | (low_score < 0)
    rho = np.where(high_score > 0, RHO_BOUND, np.where(low_score < 0, -RHO_BOUND, np.clip(start, -0.99, 0.99)))
    low, high = np.full(count, -RHO_BOUND), np.full(count, RHO_BOUND)
    active = np.flatnonzero(~at_bound)
    for _ in range(_MAX_ITER):
        if active.size == 0:
            break
        current = rho[active]
        score, information = _score_and_information(counts[active], *model.at(current, active), current)
        rising = score > 0
        low[active] = np.where(rising, current, low[active])
        high[active] = np.where(rising, high[active], current)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = np.where(np.isfinite(score), score / information, np.nan)
        proposal = current + step
        outside = ~np.isfinite(proposal) | (proposal <= low[active]) | (proposal >= high[active])
        proposal = np.where(outside, (low[active] + high[active]) / 2.0, proposal)
        rho[active] = proposal
        settled = (np.abs(proposal - current) < _TOLERANCE) | (high[active] - low[active] < _TOLERANCE)
        active = active[~settled]
    return rho, at_bound


def _standard_errors(counts: np.ndarray, rho: np.ndarray, row_thresholds: np.ndarray,
                     column_thresholds: np.ndarray) -> np.ndarray:
    r"""Asymptotic standard error of the two-step estimate, thresholds' sampling error included.

    The estimate solves :math:`\sum_{ab} p_{ab} w_{ab}(\rho, \tau) = 0` with :math:`w = \pi'/\pi`
    and :math:`\tau` itself a function of the proportions p, so by the delta method
    :math:`\partial\hat\rho/\partial p_{ab} = g_{ab} = \big(w_{ab} - \sum_i I_{\rho\tau_i}
    \partial\tau_i/\partial p_{ab}\big) / I_{\rho\rho}` (expected informations per observation) and
    :math:`\operatorname{var}\hat\rho = (\sum p g^2 - (\sum p g)^2) / N`; with the thresholds taken as
    known it reduces to :math:`1/(N I_{\rho\rho})`, Olsson's (1979) two-step approximation.
    """
    count, levels, _ = counts.shape
    model = _Model(row_thresholds, column_thresholds)
    every = np.arange(count)
    probability, slope = model.at(rho, every)
    positive = probability > 0
    ratio = np.where(positive, slope / np.where(positive, probability, 1.0), 0.0)
    info_rho = (ratio * slope).sum(axis=(1, 2))
    r = rho[:, None, None]

    def threshold_terms(own: np.ndarray, other: np.ndarray, weights: np.ndarray) -> np.ndarray:
        # d pi_ab / d tau_i, for interior thresholds i = 1 .. L-1, differs from zero in rows a = i-1, i
        inner = own[:, 1:-1]
        derivative = bivariate_normal_cdf_dh(inner[:, :, None], other[:, None, :], r)
        difference = derivative[:, :, 1:] - derivative[:, :, :-1]           # (count, L-1, L)
        info = (difference * (weights[:, :-1, :] - weights[:, 1:, :])).sum(axis=2)   # I_rho,tau_i
        density = np.exp(-0.5 * np.where(np.isfinite(inner), inner, 0.0) ** 2) / np.sqrt(2 * np.pi)
        per_threshold = np.where(np.isfinite(inner), info / np.where(np.isfinite(inner), density, 1.0), 0.0)
        # d tau_i / d p_ab = [a < i] / phi(tau_i): sum over thresholds above row a
        above = np.cumsum(per_threshold[:, ::-1], axis=1)[:, ::-1]
        return np.concatenate([above, np.zeros((count, 1))], axis=1)      # (count, L) by row a

    rows_term = threshold_terms(_extended(row_thresholds), _extended(column_thresholds), ratio)
    columns_term = threshold_terms(_extended(column_thresholds), _extended(row_thresholds),
                                   np.transpose(ratio, (0, 2, 1)))
    with np.errstate(divide="ignore", invalid="ignore"):
        gradient = (ratio - rows_term[:, :, None] - columns_term[:, None, :]) / info_rho[:, None, None]
        total = counts.sum(axis=(1, 2))
        share = counts / total[:, None, None]
        mean = (share * gradient).sum(axis=(1, 2))
        variance = ((share * gradient**2).sum(axis=(1, 2)) - mean**2) / total
    return np.sqrt(np.where(variance > 0, variance, np.nan))


def _start(counts: np.ndarray) -> np.ndarray:
    """Pearson correlation of the codes: a start inside the basin of the maximum."""
    levels = np.arange(counts.shape[1], dtype=float)
    total = counts.sum(axis=(1, 2))
    with np.errstate(divide="ignore", invalid="ignore"):
        rows, columns = counts.sum(axis=2) / total[:, None], counts.sum(axis=1) / total[:, None]
        mean_x, mean_y = rows @ levels, columns @ levels
        var_x, var_y = rows @ levels**2 - mean_x**2, columns @ levels**2 - mean_y**2
        cross = np.einsum("pab,a,b->p", counts, levels, levels) / total - mean_x * mean_y
        pearson = cross / np.sqrt(var_x * var_y)
    return np.nan_to_num(pearson)


def _fit(counts: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    row_thresholds = thresholds_from_counts(counts.sum(axis=2))
    column_thresholds = thresholds_from_counts(counts.sum(axis=1))
    rho, at_bound = _maximise(counts, _Model(row_thresholds, column_thresholds), _start(counts))
    # a maximum beyond the bound (the iteration ends on it) is at the bound too
    at_bound |= np.abs(rho) >= RHO_BOUND - 1e-8
    return rho, at_bound, row_thresholds, column_thresholds


def polychoric_pairs(tables: np.ndarray) -> PairEstimates:
    r"""Polychoric correlation of each contingency table by Olsson's (1979) two-step method.

    Each table's rows and columns are the ordered answers of two items, taken as cut from a standard
    bivariate normal at thresholds :math:`\tau`. Step one estimates the thresholds from the margins,
    :math:`\tau_c = \Phi^{-1}(P(X < c))`; step two maximises, over rho alone,

    .. math::

        \log L(\rho) = \sum_{a,b} n_{ab} \log \pi_{ab}(\rho), \qquad
        \pi_{ab} = \Phi_2(\tau_{a+1}, \tau'_{b+1}; \rho) - \Phi_2(\tau_a, \tau'_{b+1}; \rho)
                 - \Phi_2(\tau_{a+1}, \tau'_b; \rho) + \Phi_2(\tau_a, \tau'_b; \rho),

    by Fisher scoring inside a bracket. With two answer levels per item this is the tetrachoric
    correlation.

    Parameters
    ----------
    tables : (P, L, L) array of counts
        One table per pair (rows answering both items). Empty answer levels are allowed (they give
        equal thresholds and add nothing).

    Returns
    -------
    PairEstimates
        Estimates, standard errors (:func:`_standard_errors`: the thresholds' sampling error included),
        table sizes and a status per table.

    Notes
    -----
    Empty cells need no correction: they add nothing to :math:`\log L`. But when the empty cells lie so
    that the likelihood rises all the way to :math:`|\rho| = 1` (a 2 x 2 table with an empty off-diagonal
    cell, or any table whose answers never cross), the maximum is not interior; 0.5 is then added to each
    empty cell of the answered levels (Haldane, 1956) and the table refitted (status 1). A table with an
    item answered at one level only has no thresholds to estimate: NaN (status 3).

    References
    ----------
    .. [1] Olsson, U. (1979). Maximum likelihood estimation of the polychoric correlation coefficient.
       Psychometrika, 44, 443-460.
    .. [2] Haldane, J. B. S. (1956). The estimation and significance of the logarithm of a ratio of
       frequencies. Annals of Human Genetics, 20, 309-311.
    """
    counts = np.asarray(tables, dtype=float)
    if counts.ndim != 3 or counts.shape[1] != counts.shape[2]:
        raise ValueError("tables must have shape (pairs, levels, levels)")
    count = counts.shape[0]
    total = counts.sum(axis=(1, 2))
    levels_used_x = (counts.sum(axis=2) > 0).sum(axis=1)
    levels_used_y = (counts.sum(axis=1) > 0).sum(axis=1)
    estimable = (levels_used_x >= 2) & (levels_used_y >= 2) & (total >= 2)
    rho = np.full(count, np.nan)
    se = np.full(count, np.nan)
    status = np.full(count, 3, dtype=np.int8)
    which = np.flatnonzero(estimable)
    if which.size:
        fitted = counts[which]
        estimate, at_bound, row_t, column_t = _fit(fitted)
        status[which] = 0
        if at_bound.any():
            corrected = fitted[at_bound].copy()
            used = (corrected.sum(axis=2) > 0)[:, :, None] & (corrected.sum(axis=1) > 0)[:, None, :]
            corrected[used & (corrected == 0)] = EMPTY_CELL_CORRECTION
            fitted[at_bound] = corrected
            again, still, row_again, column_again = _fit(corrected)
            estimate[at_bound], row_t[at_bound], column_t[at_bound] = again, row_again, column_again
            status[which[at_bound]] = np.where(still, 2, 1)
        rho[which] = estimate
        errors = _standard_errors(fitted, estimate, row_t, column_t)
        se[which] = np.where(status[which] == 2, np.nan, errors)
    return PairEstimates(rho=rho, se=se, n=total, status=status)
