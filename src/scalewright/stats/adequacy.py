"""Is a correlation matrix worth factoring? Kaiser-Meyer-Olkin sampling adequacy and Bartlett's sphericity test.

Both are functions of n and the item correlation matrix of the complete cases, written here because
factor_analyzer's versions need raw data without gaps and take a determinant that underflows on many items.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import DataError
from ..notes import Note, note
from ..results import ResultMixin, to_jsonable


@dataclass(frozen=True)
class KMOResult(ResultMixin):
    """Kaiser-Meyer-Olkin measure of sampling adequacy, overall and per item (None when undefined)."""

    overall: float | None
    per_item: np.ndarray
    notes: tuple[Note, ...] = ()  # codes with values, worded by present/messages


@dataclass(frozen=True)
class BartlettResult(ResultMixin):
    """Bartlett's test that the population correlation matrix is the identity."""

    chi2: float | None
    df: int
    p: float | None
    n: int
    notes: tuple[Note, ...] = ()  # codes with values, worded by present/messages

    def to_dict(self) -> dict[str, Any]:
        return {"chi2": to_jsonable(self.chi2), "df": self.df, "pvalue": to_jsonable(self.p)}


def complete_cases(matrix: np.ndarray) -> tuple[np.ndarray, int]:
    """Rows with no missing value (listwise deletion) and the number of rows set aside."""
    matrix = np.asarray(matrix, dtype=float)
    if matrix.ndim != 2:
        raise DataError(f"expected a respondents x items matrix, got an array with {matrix.ndim} dimension(s)")
    keep = ~np.isnan(matrix).any(axis=1)
    return matrix[keep], int((~keep).sum())


def correlation_of(matrix: np.ndarray) -> np.ndarray:
    """Pearson correlations of the columns of a complete matrix (columns must vary)."""
    return np.corrcoef(matrix, rowvar=False)


#: a correlation matrix whose smallest eigenvalue is below this is treated as singular (rounding noise)
SINGULAR_EIGENVALUE = 1e-10


def log_determinant(correlation: np.ndarray) -> float | None:
    """ln|R| by slogdet (no underflow with many items); None when R is singular or not positive definite."""
    if correlation.size == 0 or np.linalg.eigvalsh(correlation)[0] < SINGULAR_EIGENVALUE:
        return None
    sign, logdet = np.linalg.slogdet(correlation)
    return float(logdet) if sign > 0 and np.isfinite(logdet) else None


def kmo(correlation: np.ndarray) -> KMOResult:
    r"""Kaiser-Meyer-Olkin measure of sampling adequacy.

    With :math:`r_{ij}` the correlations and :math:`q_{ij} = -(R^{-1})_{ij}/\sqrt{(R^{-1})_{ii}(R^{-1})_{jj}}`
    the partial correlations given all other items,

    .. math::

        \mathrm{KMO} = \frac{\sum_{i \ne j} r_{ij}^2}{\sum_{i \ne j} r_{ij}^2 + \sum_{i \ne j} q_{ij}^2},
        \qquad
        \mathrm{KMO}_j = \frac{\sum_{i \ne j} r_{ij}^2}{\sum_{i \ne j} r_{ij}^2 + \sum_{i \ne j} q_{ij}^2}.

    Parameters
    ----------
    correlation : (p, p) array
        Item correlation matrix.

    Returns
    -------
    KMOResult
        ``overall`` and ``per_item``; None/NaN with a note when the matrix is singular or p < 2.

    Notes
    -----
    Written here rather than taken from factor_analyzer because that version needs the raw data (and fails
    on any missing value); this one needs only the correlation matrix.

    References
    ----------
    .. [1] Kaiser, H. F. (1970). A second generation little jiffy. Psychometrika, 35, 401-415.
    .. [2] Kaiser, H. F., & Rice, J. (1974). Little jiffy, mark IV. Educational and Psychological
       Measurement, 34, 111-117.
    """
    correlation = np.asarray(correlation, dtype=float)
    p = correlation.shape[0]
    undefined = np.full(p, np.nan)
    if p < 2:
        return KMOResult(None, undefined, (note("kmo-too-few-items"),))
    if log_determinant(correlation) is None:
        return KMOResult(None, undefined, (note("kmo-singular"),))
    inverse = np.linalg.inv(correlation)
    scale = np.sqrt(np.diag(inverse))
    partial = -inverse / np.outer(scale, scale)
    r2 = correlation ** 2
    q2 = partial ** 2
    np.fill_diagonal(r2, 0.0)
    np.fill_diagonal(q2, 0.0)
    r_sum, q_sum = r2.sum(axis=0), q2.sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        per_item = r_sum / (r_sum + q_sum)
    overall = float(r_sum.sum() / (r_sum.sum() + q_sum.sum())) if (r_sum.sum() + q_sum.sum()) > 0 else None
    return KMOResult(overall, per_item, () if overall is not None else (note("kmo-zero-correlations"),))


def bartlett_sphericity(correlation: np.ndarray, n: int) -> BartlettResult:
    r"""Bartlett's test of sphericity: are the items uncorrelated in the population?

    .. math:: \chi^2 = -\left(n - 1 - \frac{2p + 5}{6}\right) \ln |R|, \qquad df = \frac{p(p - 1)}{2}

    Parameters
    ----------
    correlation : (p, p) array
        Item correlation matrix of ``n`` complete cases.
    n : int
        Number of respondents the correlations come from.

    Returns
    -------
    BartlettResult
        ``chi2``, ``df`` and the upper-tail ``p``; None with a note when the determinant is not positive.

    Notes
    -----
    :math:`\ln|R|` comes from ``numpy.linalg.slogdet``: the determinant itself underflows to 0 with a few
    hundred items, which makes the statistic infinite.

    References
    ----------
    .. [1] Bartlett, M. S. (1950). Tests of significance in factor analysis. British Journal of Statistical
       Psychology, 3, 77-85.
    """
    from scipy import stats

    correlation = np.asarray(correlation, dtype=float)
    p = correlation.shape[0]
    df = p * (p - 1) // 2
    if p < 2:
        return BartlettResult(None, df, None, n, (note("bartlett-too-few-items"),))
    multiplier = n - 1 - (2 * p + 5) / 6
    if multiplier <= 0:
        return BartlettResult(None, df, None, n, (note("bartlett-too-few-respondents", needed=(2 * p + 11) / 6, p=p,
                                                        n=n),))
    logdet = log_determinant(correlation)
    if logdet is None:
        return BartlettResult(None, df, None, n, (note("bartlett-singular"),))
    chi2 = -multiplier * logdet
    return BartlettResult(float(chi2), df, float(stats.chi2.sf(chi2, df)), n)
