"""How well a fitted confirmatory model reproduces the data: chi-square, CFI, TLI, RMSEA with CI, SRMR, AIC, BIC.

Conventions (stated in the output): ``chi2 = N F_ML`` with F_ML from covariance matrices with divisor n
and N the total sample size (the convention of the general SEM libraries, e.g. lavaan and semopy);
RMSEA uses N as well and, with G groups, is multiplied by sqrt(G) (Steiger 1998); SRMR is the root mean
square of the residual correlations over the p(p+1)/2 elements of each group's matrix, diagonal included,
averaged over groups weighted by group size.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from ..results import ResultMixin
from .cfa_fit import CfaFit

RMSEA_CLOSE = 0.05


@dataclass(frozen=True)
class FitIndices(ResultMixin):
    """Fit of one model; NaN (``null`` in JSON) where it cannot be computed (e.g. least-squares fits)."""

    n_used: float  # respondents; with survey weights Kish's effective n, which may be fractional
    estimator: str
    chi2: float
    df: int
    pvalue: float
    cfi: float
    tli: float
    rmsea: float
    rmsea_ci: tuple[float, float]
    rmsea_pclose: float
    srmr: float
    aic: float
    bic: float
    loglik: float
    baseline_chi2: float
    baseline_df: int


def baseline_chi2(fit_result: CfaFit) -> tuple[float, int]:
    """Chi-square of the independence model (free variances, and free means): the reference of CFI and TLI.

    .. math:: F_0 = \\sum_g \\frac{n_g}{N} \\left(\\sum_i \\ln s_{ii} - \\ln|S_g|\\right), \\quad df_0 = G p (p - 1) / 2
    """
    total = float(sum(fit_result.n))
    value = sum(n_g / total * (np.log(np.diag(s)).sum() - np.linalg.slogdet(s)[1])
                for n_g, s in zip(fit_result.n, fit_result.sample_cov, strict=True))
    p = len(fit_result.model.items)
    return total * float(value), fit_result.model.n_groups * p * (p - 1) // 2


def rmsea_from_chi2(chi2: float, df: int, n: float, n_groups: int = 1) -> float:
    """Root mean square error of approximation (Steiger & Lind 1980), multi-group form of Steiger (1998).

    .. math:: \\mathrm{RMSEA} = \\sqrt{G} \\sqrt{\\max(\\chi^2 - df, 0) / (df\\, N)}
    """
    if df <= 0 or not math.isfinite(chi2):
        return math.nan
    return math.sqrt(n_groups) * math.sqrt(max(chi2 - df, 0.0) / (df * n))


def _noncentrality_bound(chi2: float, df: int, probability: float) -> float:
    """lambda with P(chi2'(df, lambda) <= chi2) = probability (0 when even lambda = 0 is below it)."""
    if float(special.chdtr(df, chi2)) <= probability:
        return 0.0
    return float(special.chndtrinc(chi2, df, probability))


def rmsea_interval(chi2: float, df: int, n: float, n_groups: int = 1, *,
                   confidence_level: float = 0.90) -> tuple[float, float]:
    """Confidence interval of RMSEA by inverting the noncentral chi-square (Browne & Cudeck 1993).

    The lower bound solves :math:`P(\\chi^2_{df}(\\lambda_L) \\le \\chi^2) = (1 + c)/2`, the upper one
    :math:`(1 - c)/2`; each :math:`\\lambda` becomes :math:`\\sqrt{G \\lambda / (df\\, N)}`.
    """
    if df <= 0 or not math.isfinite(chi2):
        return (math.nan, math.nan)
    tail = (1.0 - confidence_level) / 2
    low = _noncentrality_bound(chi2, df, 1.0 - tail)
    high = _noncentrality_bound(chi2, df, tail)
    return (math.sqrt(n_groups * low / (df * n)), math.sqrt(n_groups * high / (df * n)))


def rmsea_pclose(chi2: float, df: int, n: float, n_groups: int = 1, *, close: float = RMSEA_CLOSE) -> float:
    """P-value of the test of close fit, H0: RMSEA <= .05 (Browne & Cudeck 1993)."""
    if df <= 0 or not math.isfinite(chi2):
        return math.nan
    lam = close**2 * df * n / n_groups
    return float(1.0 - special.chndtr(chi2, df, lam))


def srmr(fit_result: CfaFit) -> float:
    """Standardized root mean square residual: residual correlations, diagonal included, weighted over groups.

    .. math:: \\mathrm{SRMR} = \\sqrt{\\frac{2}{p(p+1)} \\sum_{i \\le j}
              \\left(\\frac{s_{ij}}{\\sqrt{s_{ii}s_{jj}}} - \\frac{\\hat\\sigma_{ij}}{\\sqrt{\\hat\\sigma_{ii}\\hat\\sigma_{jj}}}\\right)^2}

    (Hu & Bentler 1999, Struct. Eq. Modeling 6:1-55.)
    """
    if not fit_result.fitted:
        return math.nan
    total = float(sum(fit_result.n))
    value = 0.0
    for g, (n_g, s) in enumerate(zip(fit_result.n, fit_result.sample_cov, strict=True)):
        residual = residual_correlations(s, fit_result.implied(g)[0])
        upper = residual[np.triu_indices(len(s))]
        value += n_g / total * math.sqrt(float(np.mean(upper**2)))
    return value


def residual_correlations(sample_cov: np.ndarray, implied_cov: np.ndarray) -> np.ndarray:
    """Sample minus model-implied correlations."""
    def corr(c: np.ndarray) -> np.ndarray:
        sd = np.sqrt(np.diag(c))
        return c / np.outer(sd, sd)

    return corr(sample_cov) - corr(implied_cov)


def log_likelihood(fit_result: CfaFit) -> float:
    """Normal log-likelihood at the estimates (sample means where the model has no mean structure)."""
    total = 0.0
    p = len(fit_result.model.items)
    for g, (n_g, s) in enumerate(zip(fit_result.n, fit_result.sample_cov, strict=True)):
        sigma, mu = fit_result.implied(g)
        sign, logdet = np.linalg.slogdet(sigma)
        if sign <= 0:
            return math.nan
        inverse = np.linalg.inv(sigma)
        misfit = 0.0
        if mu is not None and fit_result.sample_means[g] is not None:
            d = fit_result.sample_means[g] - mu
            misfit = float(d @ inverse @ d)
        total += -n_g / 2 * (p * math.log(2 * math.pi) + logdet + float(np.sum(s * inverse)) + misfit)
    return total


def fit_indices(fit_result: CfaFit) -> FitIndices:
    """All fit indices of one fitted model.

    CFI (Bentler 1990, Psychol. Bull. 107:238-246) and TLI (Tucker & Lewis 1973, Psychometrika 38:1-10)
    compare the model with the independence model; AIC = -2 logL + 2q and BIC = -2 logL + q ln N.
    """
    model = fit_result.model
    n, groups, df = fit_result.n_total, model.n_groups, model.df
    nan = math.nan
    if not fit_result.fitted or fit_result.estimator != "ml":
        return FitIndices(n_used=n, estimator=fit_result.estimator, chi2=nan, df=df, pvalue=nan, cfi=nan, tli=nan,
                          rmsea=nan, rmsea_ci=(nan, nan), rmsea_pclose=nan, srmr=srmr(fit_result), aic=nan,
                          bic=nan, loglik=nan, baseline_chi2=nan, baseline_df=0)
    chi2 = n * fit_result.discrepancy
    base, base_df = baseline_chi2(fit_result)
    pvalue = float(special.chdtrc(df, chi2)) if df > 0 else nan
    excess, base_excess = max(chi2 - df, 0.0), max(base - base_df, 0.0)
    denominator = max(base_excess, excess)
    cfi = 1.0 - excess / denominator if denominator > 0 else 1.0
    tli = ((base / base_df - chi2 / df) / (base / base_df - 1.0)) if df > 0 and base_df > 0 else nan
    loglik = log_likelihood(fit_result)
    q = model.n_parameters
    return FitIndices(
        n_used=n, estimator="ml", chi2=chi2, df=df, pvalue=pvalue, cfi=cfi, tli=tli,
        rmsea=rmsea_from_chi2(chi2, df, n, groups), rmsea_ci=rmsea_interval(chi2, df, n, groups),
        rmsea_pclose=rmsea_pclose(chi2, df, n, groups), srmr=srmr(fit_result), aic=-2 * loglik + 2 * q,
        bic=-2 * loglik + q * math.log(n), loglik=loglik, baseline_chi2=base, baseline_df=base_df)
