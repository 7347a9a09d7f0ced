"""Fitting a confirmatory factor model to covariance matrices: ML, ULS or DWLS, with standard errors.

Hand-written because no well-kept Python library fits from a covariance matrix with fixed/free parameter
control, multi-group equality constraints and least-squares estimators (semopy is used only as a test
reference). The fit is a pure function of the covariance matrices, the means and the sample sizes, so it
works the same on listwise, pairwise or EM covariances, per subgroup and from merged summaries.

Call signature for other modules (e.g. ordinal items on polychoric correlations)::

    fit(cov, n, model, means=None, estimator="ml", weights=None)

* ``cov``: one (p, p) matrix, or a sequence of them (one per group of a multi-group ``model``), in the
  order of ``model.items``. For ``ml`` these are covariance matrices with divisor ``n - 1`` (``ddof=1``,
  as :func:`scalewright.stats.item_covariance.item_covariance` gives; pass ``ddof=0`` for divisor n).
  For ``uls``/``dwls`` the matrix is fitted as given (e.g. a polychoric correlation matrix).
* ``n``: the sample size (or one per group); with survey weights Kish's effective size (a float) and ``cov``
  the weighted covariance with divisor sum(w) - sum(w^2)/sum(w), which ``ddof=1`` rescales to divisor sum(w).
* ``means``: item means (or one vector per group); required when the model has a mean structure.
* ``estimator``: ``"ml"``, ``"uls"`` or ``"dwls"``.
* ``weights``: for ``dwls`` only, a (p, p) symmetric array of non-negative weights of the elements
  s_ij, i <= j (typically 1 / SE(r_ij)^2 of each polychoric correlation; one array per group for several
  groups). The diagonal of a correlation matrix is reproduced exactly by the free residual variances, so
  its weights only need to be positive. Least-squares fits give estimates and SRMR; standard errors and
  the chi-square need the full asymptotic covariance matrix of the correlations and are NaN here.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import UsageError
from ..notes import Note, note
from .cfa_model import CfaModel, ModelMatrices

ESTIMATORS = ("ml", "uls", "dwls")


@dataclass(frozen=True)
class CfaFit:
    """The estimates of one fitted model and how the fit went.

    ``theta`` is the parameter vector (NaN when nothing could be fitted); ``vcov`` the covariance matrix of
    the estimates from the expected information (ML: :math:`2 H^{-1} / N`, with H the expected Hessian of
    the discrepancy function); ``discrepancy`` the minimum of the fit function; ``sample_cov`` the matrices
    fitted (for ML with divisor n); ``n`` the size of each group.
    """

    model: CfaModel
    estimator: str
    theta: np.ndarray
    vcov: np.ndarray
    discrepancy: float
    converged: bool
    identified: bool
    iterations: int
    n: tuple[int, ...]
    sample_cov: tuple[np.ndarray, ...]
    sample_means: tuple[np.ndarray | None, ...]
    notes: tuple[Note, ...] = field(default=())

    @property
    def n_total(self) -> float:
        """The total sample size: an integer, or Kish's effective size of survey weights (not a whole number)."""
        return _sample_size(sum(self.n))

    @property
    def fitted(self) -> bool:
        return bool(np.isfinite(self.theta).all() and self.identified)

    @property
    def standard_errors(self) -> np.ndarray:
        with np.errstate(invalid="ignore"):
            return np.sqrt(np.diag(self.vcov))

    def matrices(self, group: int = 0) -> ModelMatrices:
        return self.model.matrices(self.theta, group)

    def implied(self, group: int = 0) -> tuple[np.ndarray, np.ndarray | None]:
        return self.model.implied(self.theta, group)


@dataclass(frozen=True)
class _Elements:
    """Each free matrix entry of one group as the derivative it contributes.

    Sigma part: dSigma = sc (u_a u_b' + u_b u_a') with u_* columns of the basis U = [I, Lambda Phi, Lambda];
    mean part: dmu = (1 or alpha_j) u_mu.
    """

    param: np.ndarray
    sa: np.ndarray
    sb: np.ndarray
    sc: np.ndarray
    mu: np.ndarray
    mean_kind: np.ndarray  # 0 none, 1 coefficient one, 2 coefficient alpha_j (a loading)
    factor: np.ndarray


def _elements(model: CfaModel, group: int) -> _Elements:
    pattern = model.groups[group]
    p, m = len(model.items), len(model.factors)
    mean = model.mean_structure
    rows: list[tuple[int, int, int, float, int, int, int]] = []
    for i, j in zip(*np.nonzero(pattern.loading_index >= 0), strict=True):
        rows.append((int(pattern.loading_index[i, j]), int(i), p + int(j), 1.0, int(i), 2 if mean else 0, int(j)))
    for j in range(m):
        for k in range(j, m):
            if pattern.factor_cov_index[j, k] >= 0:
                rows.append((int(pattern.factor_cov_index[j, k]), p + m + j, p + m + k, 1.0 if j < k else 0.5,
                             0, 0, 0))
    for i in np.flatnonzero(pattern.residual_index >= 0):
        rows.append((int(pattern.residual_index[i]), int(i), int(i), 0.5, 0, 0, 0))
    if pattern.intercept_index is not None and pattern.factor_mean_index is not None:
        for i in np.flatnonzero(pattern.intercept_index >= 0):
            rows.append((int(pattern.intercept_index[i]), 0, 0, 0.0, int(i), 1, 0))
        for j in np.flatnonzero(pattern.factor_mean_index >= 0):
            rows.append((int(pattern.factor_mean_index[j]), 0, 0, 0.0, p + m + int(j), 1, 0))
    table = np.array(rows, dtype=np.float64).reshape(-1, 7)
    as_int = table.astype(np.int64)
    return _Elements(param=as_int[:, 0], sa=as_int[:, 1], sb=as_int[:, 2], sc=table[:, 3], mu=as_int[:, 4],
                     mean_kind=as_int[:, 5], factor=as_int[:, 6])


def _basis(loadings: np.ndarray, phi: np.ndarray) -> np.ndarray:
    return np.hstack([np.eye(loadings.shape[0]), loadings @ phi, loadings])


def _mean_coefficients(elements: _Elements, factor_means: np.ndarray | None) -> np.ndarray:
    coefficient = (elements.mean_kind == 1).astype(np.float64)
    if factor_means is not None:
        loading = elements.mean_kind == 2
        coefficient[loading] = factor_means[elements.factor[loading]]
    return coefficient


def _sigma_derivatives(elements: _Elements, basis: np.ndarray) -> np.ndarray:
    """Dense dSigma/d(element), shape (elements, p, p): for least squares, where weights are arbitrary."""
    ua, ub = basis[:, elements.sa].T, basis[:, elements.sb].T
    outer = ua[:, :, None] * ub[:, None, :]
    return elements.sc[:, None, None] * (outer + outer.transpose(0, 2, 1))


class _Problem:
    """The data and the model of one fit: evaluates the fit function, its gradient and expected Hessian."""

    def __init__(self, model: CfaModel, covs: Sequence[np.ndarray], ns: Sequence[int],
                 means: Sequence[np.ndarray | None], estimator: str, weights: Sequence[np.ndarray] | None):
        self.model, self.covs, self.ns, self.means, self.estimator = model, covs, ns, means, estimator
        total = float(sum(ns))
        self.group_weights = [n / total for n in ns]
        self.elements = [_elements(model, g) for g in range(model.n_groups)]
        self.distinct = [len(np.unique(el.param)) == len(el.param) for el in self.elements]
        self.p = len(model.items)
        if estimator == "ml":
            self.logdet_s = [np.linalg.slogdet(s)[1] for s in covs]
        else:
            if estimator == "uls":
                base = [np.ones((self.p, self.p)) for _ in range(model.n_groups)]
            elif weights is None:
                raise UsageError("estimator 'dwls' needs weights (a p x p array of weights of the s_ij)")
            else:
                base = [np.asarray(w, dtype=np.float64) for w in weights]
            # F = sum_{i<=j} w_ij r_ij^2 = 1/2 sum_ij w~_ij r_ij^2 with the diagonal weight doubled
            self.full_weights = [w + np.diag(np.diag(w)) for w in base]

    def value(self, theta: np.ndarray) -> float:
        total = 0.0
        for g, weight in enumerate(self.group_weights):
            sigma, mu = self.model.implied(theta, g)
            if self.estimator == "ml":
                try:
                    chol = np.linalg.cholesky(sigma)
                except np.linalg.LinAlgError:
                    return np.inf
                inverse = np.linalg.inv(sigma)
                logdet = 2.0 * np.log(np.diag(chol)).sum()
                f = logdet + np.sum(self.covs[g] * inverse) - self.logdet_s[g] - self.p
                if mu is not None:
                    d = self.means[g] - mu
                    f += d @ inverse @ d
            else:
                residual = self.covs[g] - sigma
                f = 0.5 * np.sum(self.full_weights[g] * residual**2)
            total += weight * f
        return float(total)

    def derivatives(self, theta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Gradient and expected Hessian (Fisher scoring / Gauss-Newton) of the fit function."""
        q = self.model.n_parameters
        gradient, hessian = np.zeros(q), np.zeros((q, q))
        for g, weight in enumerate(self.group_weights):
            loadings, phi, _, _, factor_means = self.model.matrices(theta, g)
            sigma, mu = self.model.implied(theta, g)
            el, basis = self.elements[g], _basis(loadings, phi)
            mean_coef = _mean_coefficients(el, factor_means)
            if self.estimator == "ml":
                inverse = np.linalg.inv(sigma)
                d = np.zeros(self.p) if mu is None else self.means[g] - mu
                inner = self.covs[g] + np.outer(d, d)
                w_matrix = inverse - inverse @ inner @ inverse
                m_matrix = basis.T @ inverse @ basis
                g_e = 2.0 * el.sc * (basis.T @ w_matrix @ basis)[el.sa, el.sb]
                g_e -= 2.0 * mean_coef * (basis.T @ (inverse @ d))[el.mu]
                a, b = el.sa, el.sb
                h_e = 2.0 * np.outer(el.sc, el.sc) * (m_matrix[np.ix_(a, a)] * m_matrix[np.ix_(b, b)]
                                                      + m_matrix[np.ix_(a, b)] * m_matrix[np.ix_(b, a)])
                h_e += 2.0 * np.outer(mean_coef, mean_coef) * m_matrix[np.ix_(el.mu, el.mu)]
            else:
                deltas = _sigma_derivatives(el, basis)
                weighted = deltas * self.full_weights[g]
                g_e = -np.einsum("kij,ij->k", weighted, self.covs[g] - sigma)
                h_e = np.einsum("kij,lij->kl", weighted, deltas)
            if self.distinct[g]:  # the usual case: a fancy-indexed add is exact and fast
                gradient[el.param] += weight * g_e
                hessian[np.ix_(el.param, el.param)] += weight * h_e
            else:  # a parameter shared by several entries of one group (equal loadings within a group)
                np.add.at(gradient, el.param, weight * g_e)
                np.add.at(hessian, (el.param[:, None], el.param[None, :]), weight * h_e)
        return gradient, hessian


def _start_values(model: CfaModel, covs: Sequence[np.ndarray], means: Sequence[np.ndarray | None]) -> np.ndarray:
    """Loadings from the squared multiple correlations, residual variances half the item variances."""
    theta = np.zeros(model.n_parameters)
    seen = np.zeros(model.n_parameters, dtype=bool)
    for g, pattern in enumerate(model.groups):
        s = covs[g]
        variances = np.clip(np.diag(s), 1e-8, None)
        try:
            smc = np.clip(1.0 - 1.0 / (np.diag(np.linalg.inv(s)) * variances), 0.05, 0.95)
        except np.linalg.LinAlgError:
            smc = np.full(len(variances), 0.5)
        free = pattern.loading_index >= 0
        # an item on several factors (bifactor): the factor with more items takes the larger share
        size = free.sum(axis=0)
        for i in range(free.shape[0]):
            columns = np.flatnonzero(free[i])
            shares = size[columns] / size[columns].sum() if len(columns) else []
            for column, share in zip(columns, shares, strict=True):
                value = np.sqrt(smc[i] * variances[i] * share)
                index = pattern.loading_index[i, column]
                if not seen[index]:
                    theta[index], seen[index] = value, True
        for i, index in enumerate(pattern.residual_index):
            if index >= 0 and not seen[index]:
                theta[index], seen[index] = variances[i] * (1.0 - 0.5 * smc[i]), True
        for j in range(len(model.factors)):
            variance_index = pattern.factor_cov_index[j, j]
            if variance_index >= 0 and not seen[variance_index]:
                theta[variance_index], seen[variance_index] = 1.0, True
        group_means = means[g]
        if pattern.intercept_index is not None and group_means is not None:
            for i, index in enumerate(pattern.intercept_index):
                if index >= 0 and not seen[index]:
                    theta[index], seen[index] = group_means[i], True
    return theta


def _align_signs(model: CfaModel, theta: np.ndarray) -> np.ndarray:
    """Reflect each factor whose loadings sum to a negative number (its sign is arbitrary)."""
    theta = theta.copy()
    for j in range(len(model.factors)):
        total = sum(model.matrices(theta, g)[0][:, j].sum() for g in range(model.n_groups))
        if total >= 0:
            continue
        for index, parameter in enumerate(model.parameters):
            if parameter.kind == "loading" and parameter.column == j:
                theta[index] = -theta[index]
            elif parameter.kind == "factor_cov" and (parameter.row == j) != (parameter.column == j):
                theta[index] = -theta[index]
            elif parameter.kind == "factor_mean" and parameter.row == j:
                theta[index] = -theta[index]
    return theta


def _as_list(value: Any, n_groups: int, name: str) -> list:
    if value is None:
        return [None] * n_groups
    if isinstance(value, np.ndarray) and n_groups == 1 and value.ndim in (1, 2):
        return [value]
    if np.isscalar(value) and n_groups == 1:
        return [value]
    values = list(value)
    if len(values) != n_groups:
        raise UsageError(f"{name}: {len(values)} given for a model of {n_groups} group(s)")
    return values


def _sample_size(value: Any) -> Any:
    """A count as int; a fractional size (Kish's effective n of survey weights) stays a float."""
    number = float(value)
    return int(number) if number.is_integer() else number


def fit(cov: Any, n: Any, model: CfaModel, means: Any = None, estimator: str = "ml", weights: Any = None, *,
        ddof: int = 1, max_iter: int = 500, tolerance: float = 1e-9, start: np.ndarray | None = None) -> CfaFit:
    """Fit ``model`` to covariance matrices by maximum likelihood (default) or least squares.

    ML minimises, over groups weighted by their share of the sample,

    .. math::

        F_{ML} = \\sum_g \\frac{n_g}{N} \\left[\\ln|\\Sigma_g| + \\operatorname{tr}(S_g \\Sigma_g^{-1})
        - \\ln|S_g| - p + (\\bar x_g - \\mu_g)' \\Sigma_g^{-1} (\\bar x_g - \\mu_g)\\right]

    with :math:`S_g` the covariance matrix with divisor :math:`n_g` (Joreskog 1969); least squares
    minimises :math:`\\sum_{i \\le j} w_{ij} (s_{ij} - \\sigma_{ij})^2` (ULS: all weights 1; DWLS: the given
    weights). The search is Fisher scoring (Gauss-Newton for least squares) with analytic gradients and
    step halving; standard errors of ML estimates come from the expected information matrix.
    See the module docstring for the exact call signature other modules rely on.

    Returns a :class:`CfaFit`; a model with more parameters than moments, or one whose information matrix
    is singular at the solution, is marked not identified (a note, NaN estimates or standard errors), and
    a search that stops before the gradient vanishes is marked not converged (a note).

    References
    ----------
    .. [1] Joreskog, K. G. (1969). A general approach to confirmatory maximum likelihood factor analysis.
       Psychometrika, 34, 183-202.
    """
    if estimator not in ESTIMATORS:
        raise UsageError(f"estimator must be one of {', '.join(ESTIMATORS)}, not {estimator!r}")
    groups = model.n_groups
    covs = [np.asarray(c, dtype=np.float64) for c in _as_list(cov, groups, "cov")]
    ns = [_sample_size(v) for v in _as_list(n, groups, "n")]
    mean_list = [None if v is None else np.asarray(v, dtype=np.float64) for v in _as_list(means, groups, "means")]
    p = len(model.items)
    for c in covs:
        if c.shape != (p, p):
            raise UsageError(f"cov: expected a {p} x {p} matrix for the model's items, got {c.shape}")
    if model.mean_structure and any(v is None for v in mean_list):
        raise UsageError("means are required for a model with a mean structure")
    if estimator != "ml" and model.mean_structure:
        raise UsageError("least-squares estimators fit covariance structures only (no mean structure)")
    if estimator == "dwls" and weights is None:
        raise UsageError("estimator 'dwls' needs weights (a p x p array of weights of the s_ij)")
    weight_list = _as_list(weights, groups, "weights") if estimator == "dwls" else None
    usable = all(n_g > 1 for n_g in ns) and all(np.isfinite(c).all() for c in covs)
    if estimator == "ml" and usable:
        covs = [c * (n_g - ddof) / n_g for c, n_g in zip(covs, ns, strict=True)]
    q = model.n_parameters

    def not_fitted(identified: bool, why: Note) -> CfaFit:
        return CfaFit(model=model, estimator=estimator, theta=np.full(q, np.nan), vcov=np.full((q, q), np.nan),
                      discrepancy=np.nan, converged=False, identified=identified, iterations=0, n=tuple(ns),
                      sample_cov=tuple(covs), sample_means=tuple(mean_list), notes=(why,))

    if model.df < 0:
        return not_fitted(False, note("not-identified", parameters=q, moments=model.n_moments))
    if not usable or any(v is not None and not np.isfinite(v).all() for v in mean_list):
        return not_fitted(True, note("no-usable-covariance"))
    if estimator == "ml" and any(np.linalg.eigvalsh(c)[0] <= 0 for c in covs):
        return not_fitted(True, note("covariance-not-positive-definite"))
    problem = _Problem(model, covs, ns, mean_list, estimator, weight_list)
    theta = _start_values(model, covs, mean_list) if start is None else np.asarray(start, dtype=np.float64).copy()
    value = problem.value(theta)
    converged, iterations = False, 0
    gradient, hessian = problem.derivatives(theta)
    while iterations < max_iter:
        iterations += 1
        if np.max(np.abs(gradient)) < tolerance:
            converged = True
            break
        try:
            step = np.linalg.solve(hessian + 1e-12 * np.eye(q) * max(1.0, np.abs(np.diag(hessian)).max()), gradient)
        except np.linalg.LinAlgError:
            step = np.linalg.lstsq(hessian, gradient, rcond=None)[0]
        length = 1.0
        while length > 1e-10:
            candidate = theta - length * step
            new_value = problem.value(candidate)
            if new_value <= value + 1e-14 * max(1.0, abs(value)):
                break
            length /= 2
        else:
            break
        theta, value = candidate, new_value
        gradient, hessian = problem.derivatives(theta)
    if np.max(np.abs(gradient)) < tolerance:
        converged = True
    notes: list[Note] = []
    if not converged:
        notes.append(note("not-converged", iterations=iterations, gradient=float(np.max(np.abs(gradient)))))
    theta = _align_signs(model, theta)
    _, hessian = problem.derivatives(theta)
    eigenvalues = np.linalg.eigvalsh(hessian)
    identified = bool(eigenvalues[0] > 1e-10 * max(eigenvalues[-1], 1e-300))
    vcov = np.full((q, q), np.nan)
    if not identified:
        notes.append(note("not-identified-empirically", smallest_eigenvalue=float(eigenvalues[0])))
    elif estimator == "ml":
        vcov = 2.0 * np.linalg.inv(hessian) / sum(ns)
    else:
        notes.append(note("least-squares-no-standard-errors", estimator=estimator))
    return CfaFit(model=model, estimator=estimator, theta=theta, vcov=vcov, discrepancy=value,
                  converged=converged, identified=identified, iterations=iterations, n=tuple(ns),
                  sample_cov=tuple(covs), sample_means=tuple(mean_list), notes=tuple(notes))


def information_derivatives(model: CfaModel, theta: np.ndarray, fit_result: CfaFit) -> tuple[np.ndarray, np.ndarray]:
    """Gradient and expected Hessian of the ML fit function of ``model`` at ``theta`` on ``fit_result``'s data."""
    problem = _Problem(model, fit_result.sample_cov, fit_result.n, fit_result.sample_means, "ml", None)
    return problem.derivatives(theta)
