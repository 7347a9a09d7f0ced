"""McDonald's omega total from a one-factor model fitted to the item covariance matrix."""
from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from ..concurrency import RECORDING_WARNINGS
from ..notes import Note, note
from ..results import ResultMixin
from .item_covariance import correlation_from_cov, is_invertible

#: factor_analyzer bounds uniquenesses (of standardized items) below at this value; a fit that ends there is
#: a Heywood case it clipped silently (docs/references.md, known problems)
FACTOR_ANALYZER_UNIQUENESS_FLOOR = 0.005
HEYWOOD_TOLERANCE = 1e-3


@dataclass(frozen=True)
class OneFactorFit(ResultMixin):
    """Loadings and uniquenesses of a one-factor model, in the metric of the item covariances.

    ``loadings`` are signed so that their sum is positive. ``heywood_items`` lists the positions of items
    whose uniqueness reached the fitting bound (an improper solution). ``method`` is ``ml`` or ``minres``.
    """

    loadings: np.ndarray
    uniquenesses: np.ndarray
    standardized_loadings: np.ndarray
    method: str
    converged: bool
    heywood_items: tuple[int, ...]
    notes: tuple[Note, ...] = field(default=())


def _ml_loadings(uniqueness: np.ndarray, corr: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Loadings that maximise the likelihood for given uniquenesses, and the eigenvalues behind them."""
    scale = 1.0 / np.sqrt(uniqueness)
    values, vectors = np.linalg.eigh(corr * np.outer(scale, scale))
    leading = vectors[:, -1] * math.sqrt(max(values[-1] - 1.0, 0.0))
    return np.sqrt(uniqueness) * leading, values


def _ml_discrepancy(uniqueness: np.ndarray, corr: np.ndarray) -> tuple[float, np.ndarray]:
    """Concentrated ML discrepancy of the one-factor model and its gradient (Joreskog, 1967)."""
    loadings, values = _ml_loadings(uniqueness, corr)
    rest = values[:-1]
    discrepancy = -float(np.sum(np.log(rest) - rest)) - (len(values) - 1)
    implied = np.outer(loadings, loadings) + np.diag(uniqueness)
    gradient = np.diag(implied - corr) / uniqueness**2
    return discrepancy, gradient


def _projected_gradient(uniqueness: np.ndarray, corr: np.ndarray) -> float:
    """Largest gradient component of the ML discrepancy that the uniqueness bounds do not hold back."""
    gradient = _ml_discrepancy(uniqueness, corr)[1]
    at_lower = (uniqueness <= FACTOR_ANALYZER_UNIQUENESS_FLOOR) & (gradient > 0)
    at_upper = (uniqueness >= 1.0) & (gradient < 0)
    return float(np.abs(np.where(at_lower | at_upper, 0.0, gradient)).max())


def _fixed_point_steps(uniqueness: np.ndarray, corr: np.ndarray) -> np.ndarray:
    """One step of the ML stationarity condition psi = diag(R - lambda lambda') (Joreskog, 1967), in bounds,
    for a stack of problems at once (``uniqueness`` m x p, ``corr`` m x p x p: one batched eigendecomposition)."""
    scale = 1.0 / np.sqrt(uniqueness)
    values, vectors = np.linalg.eigh(corr * (scale[:, :, None] * scale[:, None, :]))
    leading = vectors[:, :, -1] * np.sqrt(np.maximum(values[:, -1:] - 1.0, 0.0))
    return np.clip(1.0 - (np.sqrt(uniqueness) * leading) ** 2, FACTOR_ANALYZER_UNIQUENESS_FLOOR, 1.0)


def _fixed_point_ml_stack(corr: np.ndarray, start: np.ndarray, *, max_iter: int = 200,
                          tolerance: float = 1e-11) -> tuple[np.ndarray, np.ndarray]:
    r"""Uniquenesses from the ML stationarity condition, the fixed-point steps accelerated by SQUAREM.

    The plain step :math:`\psi \leftarrow \operatorname{diag}(R - \lambda\lambda')` converges slowly on
    small samples and near Heywood cases (hundreds of steps, often not at all within a budget). SQUAREM
    [1]_ takes two plain steps, extrapolates along them with the step length
    :math:`\alpha = -\lVert r \rVert / \lVert v \rVert` (:math:`r = F(\psi) - \psi`,
    :math:`v = F(F(\psi)) - 2F(\psi) + \psi`; its scheme S3), keeps the point within the bounds and
    ends with one more plain step; a dozen such cycles (three small eigendecompositions each) usually
    settle it. Hand-written because no library offers this acceleration for a bounded map.

    ``corr`` is a stack of m correlation matrices (p x p) and ``start`` their m starting points, iterated
    side by side (each problem stops on its own; its path is the one it would take alone). Returns, per
    problem, whether the point reached is a solution (its projected gradient vanishes) and the point.

    References
    ----------
    .. [1] Varadhan, R., & Roland, C. (2008). Simple and globally convergent methods for accelerating the
       convergence of any EM algorithm. Scandinavian Journal of Statistics, 35, 335-353.
    """
    uniqueness = np.array(start, dtype=np.float64)
    active = np.arange(len(uniqueness))
    for _ in range(max_iter):
        if not active.size:
            break
        problems, point = corr[active], uniqueness[active]
        once = _fixed_point_steps(point, problems)
        change = once - point
        done = np.max(np.abs(change), axis=1) < tolerance
        uniqueness[active[done]] = once[done]
        going = ~done
        active, problems, point, once, change = (active[going], problems[going], point[going], once[going],
                                                 change[going])
        if not active.size:
            break
        twice = _fixed_point_steps(once, problems)
        curvature = twice - once - change
        norm_change, norm_curvature = np.linalg.norm(change, axis=1), np.linalg.norm(curvature, axis=1)
        # a step length of -1 is two plain steps; longer ones extrapolate (never shorter: S3 is monotone there)
        with np.errstate(divide="ignore", invalid="ignore"):
            alpha = np.where(norm_curvature > 0, np.minimum(-norm_change / norm_curvature, -1.0), -1.0)[:, None]
        extrapolated = np.clip(point - 2.0 * alpha * change + alpha**2 * curvature,
                               FACTOR_ANALYZER_UNIQUENESS_FLOOR, 1.0)
        uniqueness[active] = _fixed_point_steps(extrapolated, problems)
    settled = np.array([_projected_gradient(u, c) < 1e-7 for u, c in zip(uniqueness, corr, strict=True)], dtype=bool)
    return settled, uniqueness


def _fixed_point_ml(corr: np.ndarray, start: np.ndarray) -> tuple[bool, np.ndarray]:
    """:func:`_fixed_point_ml_stack` of one problem."""
    settled, uniqueness = _fixed_point_ml_stack(corr[None], np.asarray(start)[None])
    return bool(settled[0]), uniqueness[0]


def _fit_ml(corr: np.ndarray, start: np.ndarray | None = None) -> tuple[np.ndarray, bool]:
    """One-factor maximum-likelihood fit of a correlation matrix.

    Hand-written because factor_analyzer imports scikit-learn, which costs seconds per run (more than all
    the statistics together); the objective, starting values (squared multiple correlations) and the
    uniqueness bounds are factor_analyzer's, and the tests compare the two live.
    """
    k = corr.shape[0]
    if start is None:
        start = 1.0 / np.diag(np.linalg.inv(corr))
    start = np.clip(start, FACTOR_ANALYZER_UNIQUENESS_FLOOR, 1.0)
    settled, start = _fixed_point_ml(corr, start)
    if settled:
        return _ml_loadings(start, corr)[0], True
    from scipy.optimize import minimize

    result = minimize(_ml_discrepancy, start, args=(corr,), jac=True, method="L-BFGS-B",
                      bounds=[(FACTOR_ANALYZER_UNIQUENESS_FLOOR, 1.0)] * k,
                      # no stop on a small change of the objective: near a Heywood bound it falls by
                      # tiny steps while the loadings still move; stop on the projected gradient instead
                      options={"maxiter": 1000, "ftol": 0.0, "gtol": 1e-10})
    loadings, _ = _ml_loadings(result.x, corr)
    # a line search that cannot improve an exact fit (just-identified models reach 0) ends "abnormally":
    # accept it when the gradient, projected on the bounds, vanishes
    converged = bool(result.success) or _projected_gradient(result.x, corr) < 1e-6
    return loadings, converged


def _fit_minres(corr: np.ndarray) -> tuple[np.ndarray, bool]:
    from factor_analyzer import FactorAnalyzer

    model = FactorAnalyzer(n_factors=1, rotation=None, method="minres", use_smc=True, is_corr_matrix=True,
                           bounds=(FACTOR_ANALYZER_UNIQUENESS_FLOOR, 1), impute="drop", svd_method="lapack")
    with RECORDING_WARNINGS, warnings.catch_warnings(record=True) as caught:
        # factor_analyzer reports non-convergence only as a bare UserWarning; record it instead
        warnings.simplefilter("always")
        model.fit(corr)
    failed = any("Failed to converge" in str(w.message) for w in caught)
    return np.asarray(model.loadings_, dtype=np.float64)[:, 0], not failed


def fit_one_factor(cov: np.ndarray, *, start: np.ndarray | None = None) -> OneFactorFit | None:
    """Fit a one-factor model by maximum likelihood, falling back to factor_analyzer's minres.

    The model is fitted to the correlation matrix and rescaled to the covariance metric
    (:math:`\\lambda_j = \\lambda^{*}_j s_j`, :math:`\\psi_j = \\psi^{*}_j s_j^2`); maximum likelihood is
    scale-invariant, so this equals the fit to the covariance matrix. Returns None when no model can be
    fitted (fewer than 3 items, an item without variance, a singular matrix).

    References
    ----------
    .. [1] Joreskog, K. G. (1967). Some contributions to maximum likelihood factor analysis.
       Psychometrika, 32, 443-482.
    """
    cov = np.asarray(cov, dtype=np.float64)
    k = cov.shape[0]
    if k < 3 or not np.isfinite(cov).all() or not (np.diag(cov) > 0).all() or not is_invertible(cov):
        return None
    corr = correlation_from_cov(cov)
    notes: list[Note] = []
    try:
        standardized, converged = _fit_ml(corr, start)
        method = "ml"
    except (np.linalg.LinAlgError, ValueError):
        standardized, converged = np.full(k, np.nan), False
    if not converged or not np.isfinite(standardized).all():
        notes.append(note("omega-ml-not-converged"))
        try:
            standardized, converged = _fit_minres(corr)
            method = "minres"
        except (np.linalg.LinAlgError, ValueError):
            return None
        if not np.isfinite(standardized).all():
            return None
        if not converged:
            notes.append(note("omega-minres-not-converged"))
    return _one_factor_fit(standardized, np.sqrt(np.diag(cov)), method=method, converged=converged, notes=notes)


def _one_factor_fit(standardized: np.ndarray, sd: np.ndarray, *, method: str, converged: bool,
                    notes: list[Note]) -> OneFactorFit:
    if standardized.sum() < 0:
        standardized = -standardized
    standardized_uniqueness = 1.0 - standardized**2
    heywood = tuple(int(j) for j in np.flatnonzero(
        standardized_uniqueness <= FACTOR_ANALYZER_UNIQUENESS_FLOOR + HEYWOOD_TOLERANCE))
    standardized_uniqueness = np.clip(standardized_uniqueness, 0.0, None)
    return OneFactorFit(loadings=standardized * sd, uniquenesses=standardized_uniqueness * sd**2,
                        standardized_loadings=standardized, method=method, converged=converged,
                        heywood_items=heywood, notes=tuple(notes))


def omega_total_from_fit(fit: OneFactorFit | None) -> float:
    r"""McDonald's omega total of the unweighted sum of the items.

    .. math::

        \omega_t = \frac{\left(\sum_j \lambda_j\right)^2}{\left(\sum_j \lambda_j\right)^2 + \sum_j \psi_j}

    with loadings and uniquenesses in the metric of the item covariances (raw composite).

    References
    ----------
    .. [1] McDonald, R. P. (1999). Test Theory: A Unified Treatment. Lawrence Erlbaum.
    """
    if fit is None:
        return math.nan
    common = float(fit.loadings.sum()) ** 2
    denominator = common + float(fit.uniquenesses.sum())
    return common / denominator if denominator > 0 else math.nan


def omega_total_from_cov(cov: np.ndarray, *, start: np.ndarray | None = None) -> float:
    """Omega total of the raw composite from the item covariance matrix (NaN when no model can be fitted).

    ``start`` optionally gives starting uniquenesses (standardized metric) for the fit.
    """
    return omega_total_from_fit(fit_one_factor(cov, start=start))


def omega_if_deleted_from_cov(cov: np.ndarray, *, start: np.ndarray | None = None) -> np.ndarray:
    """Omega total of the remaining items when each item in turn is left out (length-k array).

    ``start``: optional starting uniquenesses (standardized, one per item of the full matrix) for each reduced
    fit. By default each starts from its own squared multiple correlations, as a fresh fit would: on small
    samples the likelihood can have several optima, and a start from the full fit can end in a worse one.

    The k reduced fits run side by side (:func:`_fixed_point_ml_stack`); each gives what
    :func:`omega_total_from_cov` gives for its matrix, which it falls back to when its fit does not settle.
    """
    cov = np.asarray(cov, dtype=np.float64)
    k = cov.shape[0]
    out = np.full(k, np.nan)
    keeps = [np.arange(k) != j for j in range(k)]
    reduced = [cov[np.ix_(keep, keep)] for keep in keeps]
    if k < 4 or not np.isfinite(cov).all() or not (np.diag(cov) > 0).all() \
            or not all(is_invertible(c) for c in reduced):
        for j in range(k):
            out[j] = omega_total_from_cov(reduced[j], start=None if start is None else start[keeps[j]])
        return out
    corr = np.stack([correlation_from_cov(c) for c in reduced])
    try:
        starts = (1.0 / np.diagonal(np.linalg.inv(corr), axis1=1, axis2=2) if start is None
                  else np.stack([start[keep] for keep in keeps]))
        settled, uniqueness = _fixed_point_ml_stack(
            corr, np.clip(starts, FACTOR_ANALYZER_UNIQUENESS_FLOOR, 1.0))
    except (np.linalg.LinAlgError, ValueError):
        settled, uniqueness = np.zeros(k, dtype=bool), np.full((k, corr.shape[1]), np.nan)
    for j in range(k):
        if settled[j]:
            standardized = _ml_loadings(uniqueness[j], corr[j])[0]
            if np.isfinite(standardized).all():
                fit = _one_factor_fit(standardized, np.sqrt(np.diag(reduced[j])), method="ml", converged=True,
                                      notes=[])
                out[j] = omega_total_from_fit(fit)
                continue
        out[j] = omega_total_from_cov(reduced[j], start=None if start is None else start[keeps[j]])
    return out
