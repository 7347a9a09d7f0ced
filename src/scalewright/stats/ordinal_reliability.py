"""Reliability of rating scales treated as ordered categories: ordinal alpha, ordinal omega and the
reliability of the observed sum score under the ordinal factor model; and when to prefer them."""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
from scipy.special import ndtr

from ..notes import Note, note
from ..results import to_jsonable
from .omega import fit_one_factor

if TYPE_CHECKING:
    from .polychoric_matrix import PolychoricMatrix

__all__ = ["FEW_OPTIONS", "OrdinalReliability", "STRONG_SKEW", "ordinal_advice", "ordinal_alpha",
           "ordinal_omega", "ordinal_reliability", "sum_score_reliability"]

#: Rhemtulla, Brosseau-Liard & Savalei (2012): with fewer than 5 answer options, estimates that treat the
#: answers as continuous are biased and ordinal (categorical) methods are preferred
FEW_OPTIONS = 5
#: common practice, no source: an item whose answers have |skewness| above 1 is strongly skewed
STRONG_SKEW = 1.0


@dataclass(frozen=True)
class OrdinalReliability:
    """Ordinal reliability of one scale (the contract block ``scales.<name>.ordinal``)."""

    alpha: float
    omega: float
    omega_sum_score: float
    n_used: int
    k: int
    missing_handling: str
    loadings: dict[str, float]
    omega_method: str | None
    smoothed: bool
    notes: tuple[Note, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"alpha": to_jsonable(self.alpha), "omega": to_jsonable(self.omega),
                "omega_sum_score": to_jsonable(self.omega_sum_score), "n_used": self.n_used, "k": self.k,
                "missing_handling": self.missing_handling, "correlation_type": "polychoric",
                "loadings": {item: to_jsonable(v) for item, v in self.loadings.items()},
                "omega_method": self.omega_method, "smoothed": self.smoothed,
                "notes": [n.to_dict() for n in self.notes]}


def ordinal_alpha(correlation: np.ndarray) -> float:
    r"""Ordinal alpha: coefficient alpha of the polychoric correlation matrix (Zumbo et al., 2007).

    .. math:: \alpha_{ord} = \frac{k}{k-1}\left(1 - \frac{k}{\sum_{i,j} \rho_{ij}}\right)

    References
    ----------
    .. [1] Zumbo, B. D., Gadermann, A. M., & Zeisser, C. (2007). Ordinal versions of coefficients alpha
       and theta for Likert rating scales. Journal of Modern Applied Statistical Methods, 6, 21-29.
    """
    correlation = np.asarray(correlation, dtype=float)
    k = correlation.shape[0]
    total = float(correlation.sum())
    if k < 2 or not np.isfinite(total) or total <= 0:
        return math.nan
    return k / (k - 1) * (1.0 - k / total)


def ordinal_omega(loadings: np.ndarray) -> float:
    r"""Ordinal omega: omega total of the latent responses from standardized one-factor loadings.

    .. math:: \omega_{ord} = \frac{(\sum_j \lambda_j)^2}{(\sum_j \lambda_j)^2 + \sum_j (1 - \lambda_j^2)}

    It describes the sum of the *latent* continuous responses, not the sum of the answers given.

    References
    ----------
    .. [1] McDonald, R. P. (1999). Test Theory: A Unified Treatment. Lawrence Erlbaum.
    .. [2] Zumbo, B. D., Gadermann, A. M., & Zeisser, C. (2007). J. Mod. Appl. Stat. Methods, 6, 21-29.
    """
    loadings = np.asarray(loadings, dtype=float)
    if loadings.size == 0 or not np.isfinite(loadings).all():
        return math.nan
    common = float(loadings.sum()) ** 2
    return common / (common + float((1.0 - loadings**2).sum()))


def _padded(thresholds: Sequence[np.ndarray]) -> np.ndarray:
    # an infinite threshold (an empty end level) adds nothing to any covariance: drop it, pad with +inf
    finite = [t[np.isfinite(t)] for t in thresholds]
    width = max((len(t) for t in finite), default=0)
    out = np.full((len(finite), max(width, 1)), np.inf)
    for j, t in enumerate(finite):
        out[j, : len(t)] = t
    return out


def _answer_covariances(thresholds: np.ndarray, rho: np.ndarray) -> np.ndarray:
    r"""Covariances of the answers :math:`X_j = \#\{c: Y_j > \tau_{jc}\}` of normal Y with correlations rho:
    :math:`\sum_{c,c'} \Phi_2(\tau_{jc}, \tau_{j'c'}; \rho_{jj'}) - \Phi(\tau_{jc})\Phi(\tau_{j'c'})`."""
    k = thresholds.shape[0]
    rows = np.repeat(np.arange(k), k)
    columns = np.tile(np.arange(k), k)
    # the polychoric modules are imported only with --ordinal: every reliability run reads ordinal_advice here
    from .bivariate_normal import bivariate_normal_cdf_grid

    joint = bivariate_normal_cdf_grid(thresholds[rows], thresholds[columns], rho.ravel())
    margins = ndtr(thresholds)
    product = margins[rows][:, :, None] * margins[columns][:, None, :]
    return (joint - product).sum(axis=(1, 2)).reshape(k, k)


def sum_score_reliability(loadings: np.ndarray, thresholds: Sequence[np.ndarray],
                          correlation: np.ndarray) -> float:
    r"""Reliability of the observed sum of the answers under the ordinal one-factor model (Green & Yang, 2009).

    With answers :math:`X_j` cut from latent normal responses at thresholds :math:`\tau_{jc}`, loadings
    :math:`\lambda_j` and polychoric correlations :math:`\rho_{jj'}` (:math:`\rho_{jj} = 1`):

    .. math::

        \rho_{XX'} = \frac{\sum_{j,j'} \sum_{c,c'} \left[\Phi_2(\tau_{jc}, \tau_{j'c'}; \lambda_j\lambda_{j'})
                        - \Phi(\tau_{jc})\Phi(\tau_{j'c'})\right]}
                       {\sum_{j,j'} \sum_{c,c'} \left[\Phi_2(\tau_{jc}, \tau_{j'c'}; \rho_{jj'})
                        - \Phi(\tau_{jc})\Phi(\tau_{j'c'})\right]}

    the variance of the sum explained by the factor over the sum's variance. This is the reliability of
    a score that is a sum (or mean) of the answers; the items' keying must already be applied.

    References
    ----------
    .. [1] Green, S. B., & Yang, Y. (2009). Reliability of summed item scores using structural equation
       modeling: an alternative to coefficient alpha. Psychometrika, 74, 155-167.
    """
    loadings = np.asarray(loadings, dtype=float)
    correlation = np.asarray(correlation, dtype=float)
    if loadings.size < 2 or not np.isfinite(loadings).all() or not np.isfinite(correlation).all():
        return math.nan
    padded = _padded(thresholds)
    true_rho = np.outer(loadings, loadings)
    observed_rho = correlation.copy()
    np.fill_diagonal(observed_rho, 1.0)
    explained = float(_answer_covariances(padded, true_rho).sum())
    total = float(_answer_covariances(padded, observed_rho).sum())
    return explained / total if total > 0 else math.nan


def ordinal_reliability(matrix: PolychoricMatrix) -> OrdinalReliability:
    """Ordinal alpha, ordinal omega and the sum score's reliability of one scale's keyed polychoric matrix.

    The one-factor model is fitted to the (smoothed, if need be) polychoric matrix by maximum likelihood
    (minres if that fails), as omega is for Pearson correlations (:func:`scalewright.stats.omega.fit_one_factor`).
    """
    correlation = matrix.correlation
    notes = list(matrix.notes)
    alpha = ordinal_alpha(correlation) if np.isfinite(correlation).all() else math.nan
    loadings = np.full(matrix.k, np.nan)
    method = None
    fit = fit_one_factor(correlation) if np.isfinite(correlation).all() else None
    if fit is None:
        notes.append(note("ordinal-no-factor-model", k=matrix.k))
    else:
        loadings = fit.standardized_loadings
        method = fit.method
        if not fit.converged:
            notes.append(note("ordinal-factor-not-converged", method=fit.method))
        if fit.heywood_items:
            notes.append(note("ordinal-heywood", items=tuple(matrix.items[j] for j in fit.heywood_items)))
    omega = ordinal_omega(loadings) if fit is not None else math.nan
    sum_score = sum_score_reliability(loadings, matrix.thresholds, correlation) if fit is not None else math.nan
    return OrdinalReliability(alpha=alpha, omega=omega, omega_sum_score=sum_score, n_used=matrix.n_used,
                              k=matrix.k, missing_handling="pairwise" if matrix.pairwise else "listwise",
                              loadings=dict(zip(matrix.items, loadings.tolist(), strict=True)), omega_method=method,
                              smoothed=matrix.smoothed, notes=tuple(notes))


def _skewness(tally: np.ndarray) -> float:
    levels = np.arange(tally.size, dtype=float)
    total = tally.sum()
    if total < 3:
        return math.nan
    mean = tally @ levels / total
    m2 = tally @ (levels - mean) ** 2 / total
    m3 = tally @ (levels - mean) ** 3 / total
    return float(m3 / m2**1.5) if m2 > 0 else math.nan


def ordinal_advice(tallies: np.ndarray, n_options: int, item_names: Sequence[str]) -> tuple[Note, ...]:
    """Notes recommending ordinal methods when the answers call for them (empty when they do not).

    ``ordinal-few-options``: fewer than :data:`FEW_OPTIONS` answer options; ``ordinal-skewed-items``: items
    whose answers have |skewness| above :data:`STRONG_SKEW` (common practice, no source). Rhemtulla et
    al. (2012) found that treating such answers as continuous biases correlations and loadings, and that
    estimates from polychoric correlations do not share that bias.

    References
    ----------
    .. [1] Rhemtulla, M., Brosseau-Liard, P. E., & Savalei, V. (2012). When can categorical variables
       be treated as continuous? Psychological Methods, 17, 354-373.
    """
    skews = [_skewness(np.asarray(t, dtype=float)) for t in tallies]
    skewed = tuple(name for name, s in zip(item_names, skews, strict=True) if np.isfinite(s) and abs(s) > STRONG_SKEW)
    notes = []
    if n_options < FEW_OPTIONS:
        notes.append(note("ordinal-few-options", options=int(n_options), min_options=FEW_OPTIONS))
    if skewed:
        largest = max(abs(s) for s in skews if np.isfinite(s))
        notes.append(note("ordinal-skewed-items", items=skewed, n_items=len(skewed), max_abs_skewness=largest,
                          skew_limit=STRONG_SKEW))
    return tuple(notes)
