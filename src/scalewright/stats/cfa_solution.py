"""What a fitted confirmatory model says: standardized estimates with standard errors, residuals, hints.

Standard errors of standardized estimates use the delta method with a numerical Jacobian (central
differences of the standardization, a smooth function of the estimates); factor correlation CIs are
Wald intervals on Fisher's z scale, so they stay inside [-1, 1].
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from ..results import ResultMixin
from .cfa_fit import CfaFit, information_derivatives
from .cfa_fit_indices import residual_correlations
from .cfa_model import with_candidate_loadings

#: chi-square(1) 95% point: a modification index above it is worth a look (a convention, not a test)
MODIFICATION_INDEX_MIN = 3.841458820694124


@dataclass(frozen=True)
class StandardizedSolution(ResultMixin):
    """Standardized loadings (p x m) and their SEs, standardized residual variances, factor correlations + CIs."""

    loadings: np.ndarray
    loading_se: np.ndarray
    residual_variances: np.ndarray
    factor_correlations: np.ndarray
    factor_correlation_ci: np.ndarray  # (m, m, 2)


def _standardize(fit_result: CfaFit, theta: np.ndarray, group: int) -> np.ndarray:
    loadings, phi, residuals, _, _ = fit_result.model.matrices(theta, group)
    sigma = loadings @ phi @ loadings.T + np.diag(residuals)
    sd_items, sd_factors = np.sqrt(np.diag(sigma)), np.sqrt(np.diag(phi))
    standardized = loadings * sd_factors[None, :] / sd_items[:, None]
    correlations = phi / np.outer(sd_factors, sd_factors)
    return np.concatenate([standardized.ravel(), correlations.ravel()])


def standardized_solution(fit_result: CfaFit, group: int = 0, *, confidence_level: float = 0.95) \
        -> StandardizedSolution:
    """Standardized estimates of one group, with delta-method standard errors."""
    p, m = len(fit_result.model.items), len(fit_result.model.factors)
    theta = fit_result.theta
    centre = _standardize(fit_result, theta, group)
    jacobian = np.zeros((centre.size, theta.size))
    for k in range(theta.size):
        h = 1e-6 * max(1.0, abs(theta[k]))
        up, down = theta.copy(), theta.copy()
        up[k] += h
        down[k] -= h
        jacobian[:, k] = (_standardize(fit_result, up, group) - _standardize(fit_result, down, group)) / (2 * h)
    with np.errstate(invalid="ignore"):
        se = np.sqrt(np.sum((jacobian @ fit_result.vcov) * jacobian, axis=1))
    loadings, correlations = centre[: p * m].reshape(p, m), centre[p * m:].reshape(m, m)
    loading_se = np.where(fit_result.model.groups[group].loading_index >= 0, se[: p * m].reshape(p, m), np.nan)
    correlation_se = se[p * m:].reshape(m, m)
    z = special.ndtri(0.5 + confidence_level / 2)
    with np.errstate(invalid="ignore", divide="ignore"):
        fisher = np.arctanh(np.clip(correlations, -1 + 1e-15, 1 - 1e-15))
        half = z * correlation_se / (1 - correlations**2)
        ci = np.stack([np.tanh(fisher - half), np.tanh(fisher + half)], axis=-1)
    free = fit_result.model.groups[group].factor_cov_index >= 0
    np.fill_diagonal(free, False)
    ci[~free] = np.nan
    sigma = fit_result.implied(group)[0]
    residual = fit_result.matrices(group)[2] / np.diag(sigma)
    return StandardizedSolution(loadings=loadings, loading_se=loading_se, residual_variances=residual,
                                factor_correlations=correlations, factor_correlation_ci=ci)


@dataclass(frozen=True)
class ModificationHint(ResultMixin):
    """A fixed-zero loading whose freeing would improve the fit: score-test index and expected change.

    ``change`` is the expected standardized loading (expected parameter change over the item's sd).
    """

    item: str
    factor: str
    index: float
    change: float


def modification_hints(fit_result: CfaFit, *, min_index: float = MODIFICATION_INDEX_MIN) -> list[ModificationHint]:
    """Items whose largest modification index is a loading on another factor (a cross-loading).

    The modification index of a fixed parameter k is the score test (Sorbom 1989, Psychometrika 54:371-384)

    .. math:: MI_k = \\frac{N g_k^2}{2 c_k}, \\quad c_k = H_{kk} - H_{kf} H_{ff}^{-1} H_{fk},
              \\quad EPC_k = -g_k / c_k

    with g and H the gradient and expected Hessian of F_ML at the estimates, f the free parameters.
    One hint per item (its largest index), kept when the index reaches ``min_index``; largest first.
    """
    if not fit_result.fitted or fit_result.estimator != "ml" or fit_result.model.n_groups != 1:
        return []
    extended, candidates = with_candidate_loadings(fit_result.model)
    if not candidates:
        return []
    q = fit_result.model.n_parameters
    theta = np.concatenate([fit_result.theta, np.zeros(len(candidates))])
    gradient, hessian = information_derivatives(extended, theta, fit_result)
    free, fixed = slice(0, q), slice(q, None)
    solved = np.linalg.solve(hessian[free, free], hessian[free, fixed])
    conditional = np.diag(hessian[fixed, fixed]) - np.einsum("fk,fk->k", hessian[free, fixed], solved)
    g = gradient[fixed]
    with np.errstate(invalid="ignore", divide="ignore"):
        index = fit_result.n_total * g**2 / (2 * conditional)
        change = -g / conditional
    sd = np.sqrt(np.diag(fit_result.implied(0)[0]))
    best: dict[int, tuple[float, int]] = {}
    for c, (i, _) in enumerate(candidates):
        if math.isfinite(index[c]) and (i not in best or index[c] > best[i][0]):
            best[i] = (float(index[c]), c)
    model = fit_result.model
    hints = [ModificationHint(item=model.items[candidates[c][0]], factor=model.factors[candidates[c][1]],
                              index=value, change=float(change[c] / sd[candidates[c][0]]))
             for value, c in best.values() if value >= min_index]
    return sorted(hints, key=lambda hint: -hint.index)


def largest_residual_correlations(fit_result: CfaFit, group: int = 0, *, count: int = 10) -> list[dict]:
    """The ``count`` largest residual correlations (sample minus implied) in absolute value: ``{a, b, value}``."""
    if not fit_result.fitted:
        return []
    residual = residual_correlations(fit_result.sample_cov[group], fit_result.implied(group)[0])
    rows, columns = np.triu_indices(len(residual), k=1)
    values = residual[rows, columns]
    order = np.argsort(-np.abs(values), kind="stable")[:count]
    items = fit_result.model.items
    return [{"a": items[rows[k]], "b": items[columns[k]], "value": float(values[k])} for k in order]
