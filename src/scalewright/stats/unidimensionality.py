"""Unidimensionality of one scale: the first-to-second eigenvalue ratio and one factor's share of variance."""
from __future__ import annotations

from typing import Any

import numpy as np

from ..notes import note
from .adequacy import (
    complete_cases,
    correlation_of,
    log_determinant,
)
from .factoring import fit_factors
from .structure_results import UnidimensionalityResult


def unidimensionality_of_correlation(correlation: np.ndarray, n: int, *, method: str = "minres",
                                     n_set_aside: int = 0) -> UnidimensionalityResult:
    r"""Unidimensionality summary of one scale from its item correlation matrix.

    .. math::

        \text{eigen ratio} = \lambda_1 / \lambda_2, \qquad
        \text{variance one factor} = \frac{1}{k}\sum_{j=1}^{k} \hat\lambda_{j}^2

    with :math:`\lambda_1 \ge \lambda_2` the largest eigenvalues of the k x k correlation matrix and
    :math:`\hat\lambda_j` the loadings of a one-factor model (``minres`` or ``ml``).

    Notes
    -----
    Common practice, no source: a ratio of 3 or more reads as one dominant dimension. A one-factor model
    needs at least three items to be identified, so ``variance_one_factor`` is None below that.

    References
    ----------
    .. [1] Lord, F. M. (1980). Applications of Item Response Theory to Practical Testing Problems. Erlbaum.
       (the eigenvalue-ratio index; recalled from memory)
    """
    correlation = np.asarray(correlation, dtype=float)
    k = correlation.shape[0]
    notes: list[Any] = []
    eigenvalues = np.linalg.eigvalsh(correlation)[::-1] if k else np.empty(0)
    ratio = None
    share = None
    loadings = np.full(k, np.nan)
    if k < 2:
        notes.append(note("one-item-scale"))
    elif eigenvalues[1] <= 1e-12:
        notes.append(note("eigen-ratio-undefined"))
    else:
        ratio = float(eigenvalues[0] / eigenvalues[1])
    if k >= 3 and n > k and log_determinant(correlation) is not None:
        solution = fit_factors(correlation, 1, method=method, rotation="none")
        loadings = solution.loadings[:, 0]
        share = float(solution.variance_explained[0])
        notes.extend(solution.notes)
    elif k >= 3:
        notes.append(note("one-factor-not-fitted", k=k, n=int(n)))
    elif k == 2:
        notes.append(note("one-factor-two-items"))
    return UnidimensionalityResult(k=k, n_used=int(n), n_set_aside=int(n_set_aside), eigenvalues=eigenvalues,
                                   eigen_ratio=ratio, variance_one_factor=share, loadings_one_factor=loadings,
                                   notes=tuple(notes))


def unidimensionality(keyed: np.ndarray, *, method: str = "minres") -> UnidimensionalityResult:
    """Unidimensionality summary of one scale from its keyed n x k item matrix (listwise complete cases).

    See :func:`unidimensionality_of_correlation` for the statistics.
    """
    complete, set_aside = complete_cases(keyed)
    n, k = complete.shape
    notes: list[Any] = []
    if set_aside:
        notes.append(note("scale-listwise-set-aside", set_aside=int(set_aside)))
    if n < 3:
        return UnidimensionalityResult(k=k, n_used=n, n_set_aside=set_aside, eigenvalues=np.full(k, np.nan),
                                       eigen_ratio=None, variance_one_factor=None, loadings_one_factor=np.full(k, np.nan),
                                       notes=tuple(notes + [note("too-few-complete", n=int(n), needed=3)]))
    constant = np.ptp(complete, axis=0) == 0
    if constant.any():
        return UnidimensionalityResult(k=k, n_used=n, n_set_aside=set_aside, eigenvalues=np.full(k, np.nan),
                                       eigen_ratio=None, variance_one_factor=None, loadings_one_factor=np.full(k, np.nan),
                                       notes=tuple(notes + [note("items-without-variance", count=int(constant.sum()))]))
    result = unidimensionality_of_correlation(correlation_of(complete), n, method=method, n_set_aside=set_aside)
    return UnidimensionalityResult(**{**result.__dict__, "notes": tuple(notes) + result.notes})
