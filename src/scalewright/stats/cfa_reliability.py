"""Reliability that follows from a fitted confirmatory model: omega total with a CI, omega hierarchical, ECV.

Every omega here is of the raw composite the tool scores (the unweighted sum of the keyed items), in the
covariance metric: the model's common variance of the composite over its model-implied variance.
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import special

from ..results import ResultMixin
from .cfa_fit import CfaFit


@dataclass(frozen=True)
class ModelOmega(ResultMixin):
    """Omega total of one composite, its CI (delta method, normal theory) and standard error."""

    omega_total: float
    omega_ci: tuple[float, float]
    omega_se: float


def _composite_common_variance(fit_result: CfaFit, theta: np.ndarray, members: np.ndarray,
                               factors: Sequence[int] | None = None) -> tuple[float, np.ndarray]:
    """1'Lambda Phi Lambda'1 over the member items (optionally only some factors) and its gradient in theta."""
    model = fit_result.model
    loadings, phi, *_ = model.matrices(theta, 0)
    keep = np.zeros(len(model.factors), dtype=bool)
    keep[list(range(len(model.factors)) if factors is None else list(factors))] = True
    a = np.where(keep, loadings[members].sum(axis=0), 0.0)
    phi_a = phi @ a
    gradient = np.zeros(theta.size)
    member_set = set(int(i) for i in members)
    for index, parameter in enumerate(model.parameters):
        if parameter.kind == "loading" and parameter.row in member_set and keep[parameter.column]:
            gradient[index] = 2 * phi_a[parameter.column]
        elif parameter.kind == "factor_cov":
            j, k = parameter.row, parameter.column
            gradient[index] = 2 * a[j] * a[k] if j != k else a[j] ** 2
    return float(a @ phi_a), gradient


def model_omega(fit_result: CfaFit, members: Sequence[int], *, factors: Sequence[int] | None = None,
                confidence_level: float = 0.95) -> ModelOmega:
    """Omega total of the raw composite of ``members`` (item positions), with a delta-method CI.

    .. math::

        \\omega = \\frac{\\mathbf 1' \\Lambda \\Phi \\Lambda' \\mathbf 1}{\\mathbf 1' \\hat\\Sigma \\mathbf 1}
        = \\frac{(\\sum \\lambda)^2}{(\\sum \\lambda)^2 + \\sum \\theta} \\text{ (one factor)}

    over the member items, with unstandardized loadings (McDonald 1999, Test Theory). The denominator is
    the model-implied variance of the composite, as in ``reliability``'s omega; it equals the sample
    variance :math:`\\mathbf 1'S\\mathbf 1` when the model reproduces the covariances (e.g. three items,
    saturated). ``factors`` restricts the numerator to some factors (omega hierarchical: the general one).

    The CI is the delta method on the ML estimates, :math:`\\operatorname{Var}(\\hat\\omega) \\approx
    \\nabla\\omega' V \\nabla\\omega` with V their covariance matrix from the expected information (normal
    theory; Raykov 2002, Br. J. Math. Stat. Psychol. 55:21-40, for such intervals of composite reliability).
    """
    nan = (math.nan, math.nan)
    if not fit_result.fitted or fit_result.model.n_groups != 1:
        return ModelOmega(omega_total=math.nan, omega_ci=nan, omega_se=math.nan)
    positions = np.asarray(members, dtype=int)
    common, common_gradient = _composite_common_variance(fit_result, fit_result.theta, positions, factors)
    total, total_gradient = _composite_common_variance(fit_result, fit_result.theta, positions, None)
    residuals = fit_result.matrices(0)[2]
    denominator = total + float(residuals[positions].sum())
    member_set = set(int(i) for i in positions)
    for index, parameter in enumerate(fit_result.model.parameters):
        if parameter.kind == "residual" and parameter.row in member_set:
            total_gradient[index] += 1.0
    omega = common / denominator
    gradient = common_gradient / denominator - omega * total_gradient / denominator
    if not np.isfinite(fit_result.vcov).all():
        return ModelOmega(omega_total=omega, omega_ci=nan, omega_se=math.nan)
    se = math.sqrt(max(float(gradient @ fit_result.vcov @ gradient), 0.0))
    z = float(special.ndtri(0.5 + confidence_level / 2))
    return ModelOmega(omega_total=omega, omega_ci=(omega - z * se, omega + z * se), omega_se=se)


@dataclass(frozen=True)
class BifactorIndices(ResultMixin):
    """Omega hierarchical of the total, omega hierarchical-subscale of each subscale, and ECV."""

    omega_hierarchical: float
    omega_hierarchical_subscale: dict[str, float]
    ecv: float


def bifactor_indices(fit_result: CfaFit, general: int, subscales: dict[str, int], total_items: Sequence[int],
                     subscale_items: dict[str, Sequence[int]]) -> BifactorIndices:
    """Indices of a bifactor model (Reise 2012, Multivariate Behav. Res. 47:667-696; Rodriguez, Reise &
    Haviland 2016, Psychol. Methods 21:137-150).

    .. math::

        \\omega_H = \\frac{(\\sum_i \\lambda_{gi})^2}{\\mathbf 1' \\hat\\Sigma \\mathbf 1}, \\quad
        \\omega_{HS,s} = \\frac{(\\sum_{i \\in s} \\lambda_{si})^2}{\\mathbf 1_s' \\hat\\Sigma \\mathbf 1_s}, \\quad
        ECV = \\frac{\\sum_i \\lambda^{*2}_{gi}}{\\sum_i \\lambda^{*2}_{gi} + \\sum_s \\sum_{i \\in s} \\lambda^{*2}_{si}}

    with raw loadings for omegas (the raw composites) and standardized loadings :math:`\\lambda^*` for ECV.
    """
    if not fit_result.fitted:
        return BifactorIndices(omega_hierarchical=math.nan,
                               omega_hierarchical_subscale={name: math.nan for name in subscales}, ecv=math.nan)
    implied = fit_result.implied(0)[0]
    loadings, *_ = fit_result.matrices(0)
    sd = np.sqrt(np.diag(implied))
    standardized = loadings / sd[:, None]
    total = np.asarray(total_items, dtype=int)

    def share(items: np.ndarray, factor: int) -> float:
        return float(loadings[items, factor].sum() ** 2 / implied[np.ix_(items, items)].sum())

    hierarchical = share(total, general)
    subscale_values = {name: share(np.asarray(subscale_items[name], dtype=int), factor)
                       for name, factor in subscales.items()}
    general_part = float(np.sum(standardized[total, general] ** 2))
    specific_part = sum(float(np.sum(standardized[np.asarray(subscale_items[name], dtype=int), factor] ** 2))
                        for name, factor in subscales.items())
    return BifactorIndices(omega_hierarchical=hierarchical, omega_hierarchical_subscale=subscale_values,
                           ecv=general_part / (general_part + specific_part))
