"""Item covariance matrices from a keyed item matrix: listwise or pairwise, as sufficient statistics."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import DataError


@dataclass(frozen=True)
class ItemCovariance:
    """The sufficient statistics reliability needs: row counts and the item covariance matrix.

    ``n_used`` is the number of rows the matrix rests on: the complete rows (listwise), or the smallest
    pairwise count (pairwise, the conservative choice for confidence intervals). ``pair_counts`` holds every
    pairwise count (all equal to ``n_used`` when listwise).
    """

    cov: np.ndarray
    means: np.ndarray
    n_used: int
    n_rows: int
    n_complete: int
    pair_counts: np.ndarray
    pairwise: bool

    @property
    def k(self) -> int:
        return int(self.cov.shape[0])


def _row_sums_checked(matrix: np.ndarray, name: str) -> np.ndarray:
    """Row sums (NaN marks an incomplete row); raise ``DataError`` if any value is infinite.

    An infinity shows in its row sum unless a NaN in the same row hides it, so only the incomplete rows
    need a look of their own: one matrix-vector product instead of a full pass over the matrix.
    """
    n_rows, k = matrix.shape
    row_sums = matrix @ np.ones(k) if k else np.zeros(n_rows)
    incomplete = np.isnan(row_sums)
    if np.isinf(row_sums).any() or (incomplete.any() and np.isinf(matrix[incomplete]).any()):
        raise DataError(f"{name}: infinite values are not answers")
    return row_sums


def _as_2d(keyed: np.ndarray, name: str) -> np.ndarray:
    matrix = np.asarray(keyed, dtype=np.float64)
    if matrix.ndim != 2:
        raise DataError(f"{name}: expected a respondents x items matrix, got {matrix.ndim} dimension(s)")
    return matrix


def item_covariance(keyed: np.ndarray, *, pairwise: bool = False) -> ItemCovariance:
    """Covariance matrix (ddof = 1) of the keyed items, listwise by default or pairwise.

    Pairwise covariances use, for each pair, the rows where both items are answered (the same
    definition as :meth:`pandas.DataFrame.cov`); they are computed with matrix products so the cost
    does not grow with a Python loop over rows or pairs.
    """
    matrix = _as_2d(keyed, "keyed")
    n_rows, k = matrix.shape
    complete = ~np.isnan(_row_sums_checked(matrix, "keyed"))
    n_complete = int(np.count_nonzero(complete))
    if not pairwise or n_complete == n_rows:
        rows = matrix if n_complete == n_rows else matrix[complete]
        means, cov = _mean_and_covariance(rows)
        counts = np.full((k, k), n_complete, dtype=np.int64)
        return ItemCovariance(cov=cov, means=means, n_used=n_complete, n_rows=n_rows, n_complete=n_complete,
                              pair_counts=counts, pairwise=pairwise)
    answered = ~np.isnan(matrix)
    mask = answered.astype(np.float64)
    zeroed = np.where(answered, matrix, 0.0)
    counts = mask.T @ mask                     # n_ij
    sums = zeroed.T @ mask                     # sum of x_i over rows where j is answered
    cross = zeroed.T @ zeroed                  # sum of x_i x_j over rows where both are answered
    with np.errstate(invalid="ignore", divide="ignore"):
        cov = (cross - sums * sums.T / counts) / (counts - 1)
        means = np.diag(sums) / np.diag(counts)
    cov = np.where(counts >= 2, cov, np.nan)
    cov = (cov + cov.T) / 2
    n_used = int(counts.min()) if k else 0
    return ItemCovariance(cov=cov, means=means, n_used=n_used, n_rows=n_rows, n_complete=n_complete,
                          pair_counts=counts.astype(np.int64), pairwise=True)


def _mean_and_covariance(rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Column means and covariance matrix (ddof 1) of complete rows, by the centred two-pass form.

    Centring first keeps every digit that the raw cross-product form ``(X'X - n m m') / (n - 1)`` loses
    to cancellation, and gives exact zeros for constant items. Large integer-coded samples take the
    exact route of :mod:`scalewright.stats.coded` instead.
    """
    n, k = rows.shape
    if n == 0:
        return np.full(k, np.nan), np.full((k, k), np.nan)
    means = (np.ones(n) @ rows) / n
    if n < 2:
        return means, np.full((k, k), np.nan)
    centred = rows - means
    cov = centred.T @ centred / (n - 1)
    return means, (cov + cov.T) / 2


def correlation_from_cov(cov: np.ndarray) -> np.ndarray:
    """Correlation matrix of a covariance matrix; NaN where an item has no variance."""
    cov = np.asarray(cov, dtype=np.float64)
    sd = np.sqrt(np.diag(cov))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd, sd)
    corr[~np.isfinite(corr)] = np.nan
    np.fill_diagonal(corr, np.where(sd > 0, 1.0, np.nan))
    return corr


def is_invertible(cov: np.ndarray, *, max_condition: float = 1e12) -> bool:
    """Whether a covariance matrix is finite and numerically invertible (condition number below a bound)."""
    cov = np.asarray(cov, dtype=np.float64)
    if cov.size == 0 or not np.isfinite(cov).all():
        return False
    return bool(np.linalg.cond(cov) < max_condition)
