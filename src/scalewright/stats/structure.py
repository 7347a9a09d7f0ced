"""Dimensionality: sampling adequacy (KMO), Bartlett's sphericity test, parallel analysis, and how the
factors of an exploratory factor analysis line up with the intended scales.

Every statistic is a function of n and the item correlation matrix of the complete cases. KMO, Bartlett and
parallel analysis are written here (factor_analyzer's versions fail on missing values and underflow on many
items); the factor model itself comes from factor_analyzer through :mod:`scalewright.stats.factoring`.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import DataError, UsageError
from ..results import ResultMixin, to_jsonable
from .factoring import FactorSolution, fit_factors

DEFAULT_SEED = 20261201
#: common practice, no source: a salient loading is at least .40; a cross-loading above .30 muddies an item
MIN_LOADING = 0.40
MAX_CROSS_LOADING = 0.30
#: Kaiser (1974) calls a KMO below .50 unacceptable
MIN_KMO = 0.50
#: common practice, no source: a first-to-second eigenvalue ratio of 3 or more reads as one dominant dimension
MIN_EIGEN_RATIO = 3.0
#: random matrices are drawn in batches of at most this many values, so memory stays near 40 MB
BATCH_VALUES = 5_000_000


# --------------------------------------------------------------------------- result objects

@dataclass(frozen=True)
class KMOResult(ResultMixin):
    """Kaiser-Meyer-Olkin measure of sampling adequacy, overall and per item (None when undefined)."""

    overall: float | None
    per_item: np.ndarray
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class BartlettResult(ResultMixin):
    """Bartlett's test that the population correlation matrix is the identity."""

    chi2: float | None
    df: int
    p: float | None
    n: int
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"chi2": to_jsonable(self.chi2), "df": self.df, "p": to_jsonable(self.p)}


@dataclass(frozen=True)
class ParallelAnalysisResult(ResultMixin):
    """Observed eigenvalues against those of random normal data of the same size.

    ``random`` holds the chosen percentile (95th by default) of each random eigenvalue, ``random_mean``
    their means. ``suggested_factors`` counts the leading observed eigenvalues above ``random``;
    ``suggested_factors_mean`` does the same against ``random_mean`` (Horn's original criterion).
    """

    observed: np.ndarray
    random: np.ndarray
    random_mean: np.ndarray
    suggested_factors: int
    suggested_factors_mean: int
    percentile: float
    iterations: int
    seed: int | None
    n: int
    sampler: str = "data"

    @property
    def criterion(self) -> str:
        return f"{self.percentile:g}th percentile of eigenvalues of random normal data"

    def to_dict(self) -> dict[str, Any]:
        return {"suggested_factors": self.suggested_factors,
                "suggested_factors_mean": self.suggested_factors_mean,
                "observed": to_jsonable(self.observed), "random": to_jsonable(self.random),
                "random_mean": to_jsonable(self.random_mean), "criterion": self.criterion,
                "percentile": self.percentile, "iterations": self.iterations, "seed": self.seed, "n": self.n,
                "sampler": self.sampler}


@dataclass(frozen=True)
class UnidimensionalityResult(ResultMixin):
    """How strongly one dimension dominates a scale's items.

    ``eigen_ratio`` is the first eigenvalue of the item correlation matrix over the second;
    ``variance_one_factor`` the share of the items' total variance a one-factor model explains.
    """

    k: int
    n_used: int
    n_set_aside: int
    eigenvalues: np.ndarray
    eigen_ratio: float | None
    variance_one_factor: float | None
    loadings_one_factor: np.ndarray
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"k": self.k, "n_used": self.n_used, "n_set_aside": self.n_set_aside,
                "eigen_ratio": to_jsonable(self.eigen_ratio),
                "variance_one_factor": to_jsonable(self.variance_one_factor),
                "eigenvalues": to_jsonable(self.eigenvalues), "notes": list(self.notes)}


@dataclass(frozen=True)
class StructureFlag(ResultMixin):
    """Something about one item (or, with ``item`` None, one scale) a researcher should look at."""

    item: str | None
    code: str
    message: str
    scale: str | None = None


@dataclass(frozen=True)
class StructureResult(ResultMixin):
    """Everything ``scalewright structure`` reports. ``to_dict`` is the JSON contract."""

    items: tuple[str, ...]
    item_scale: dict[str, str]
    n_used: int
    n_set_aside: int
    kmo: KMOResult
    bartlett: BartlettResult
    parallel: ParallelAnalysisResult | None
    solution: FactorSolution | None
    n_factors_rule: str
    factor_for_scale: dict[str, int | None]
    unidimensionality: dict[str, UnidimensionalityResult]
    flags: tuple[StructureFlag, ...]
    notes: tuple[str, ...]
    min_loading: float = MIN_LOADING
    max_cross_loading: float = MAX_CROSS_LOADING
    dropped_items: tuple[str, ...] = field(default=())

    @property
    def factor_names(self) -> tuple[str, ...]:
        m = 0 if self.solution is None else self.solution.n_factors
        return tuple(f"F{j + 1}" for j in range(m))

    def to_dict(self) -> dict[str, Any]:
        names = self.factor_names
        solution = self.solution
        return {
            "n_used": self.n_used,
            "n_set_aside": self.n_set_aside,
            "items": list(self.items),
            "dropped_items": list(self.dropped_items),
            "kmo": to_jsonable(self.kmo.overall),
            "kmo_items": {item: to_jsonable(v) for item, v in zip(self.items, self.kmo.per_item)},
            "bartlett": self.bartlett.to_dict(),
            "parallel": None if self.parallel is None else self.parallel.to_dict(),
            "n_factors": len(names),
            "n_factors_rule": self.n_factors_rule,
            "method": None if solution is None else solution.method,
            "rotation": None if solution is None else solution.rotation,
            "factors": list(names),
            "loadings": {} if solution is None else
            {item: to_jsonable(row) for item, row in zip(self.items, solution.loadings)},
            "communalities": {} if solution is None else
            {item: to_jsonable(v) for item, v in zip(self.items, solution.communalities)},
            "variance_explained": [] if solution is None else to_jsonable(solution.variance_explained),
            "factor_correlations": [] if solution is None else to_jsonable(solution.factor_correlations),
            "factor_for_scale": {scale: (None if j is None else names[j]) for scale, j in self.factor_for_scale.items()},
            "unidimensionality": {scale: u.to_dict() for scale, u in self.unidimensionality.items()},
            "thresholds": {"min_loading": self.min_loading, "max_cross_loading": self.max_cross_loading,
                           "min_kmo": MIN_KMO, "min_eigen_ratio": MIN_EIGEN_RATIO},
            "flags": [{"item": f.item, "scale": f.scale, "code": f.code, "message": f.message} for f in self.flags],
            "notes": list(self.notes),
        }


# --------------------------------------------------------------------------- building blocks

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


def _log_determinant(correlation: np.ndarray) -> float | None:
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
        return KMOResult(None, undefined, ("KMO needs at least two items",))
    if _log_determinant(correlation) is None:
        return KMOResult(None, undefined, ("KMO is undefined: the item correlation matrix is singular "
                                           "(an item is a linear combination of others, or fewer respondents than items)",))
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
    return KMOResult(overall, per_item, () if overall is not None else ("KMO is undefined: all correlations are zero",))


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
        return BartlettResult(None, df, None, n, ("Bartlett's test needs at least two items",))
    multiplier = n - 1 - (2 * p + 5) / 6
    if multiplier <= 0:
        return BartlettResult(None, df, None, n, (f"Bartlett's test needs more respondents than (2p + 11)/6 = "
                                                   f"{(2 * p + 11) / 6:.1f} for {p} items; {n} were used",))
    logdet = _log_determinant(correlation)
    if logdet is None:
        return BartlettResult(None, df, None, n, ("Bartlett's test is undefined: the item correlation matrix is singular",))
    chi2 = -multiplier * logdet
    return BartlettResult(float(chi2), df, float(stats.chi2.sf(chi2, df)), n)


def _generator(seed: int | np.random.Generator | None) -> np.random.Generator:
    return seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)


SAMPLERS = ("auto", "wishart", "data")


def resolve_sampler(n: int, p: int, sampler: str = "auto") -> str:
    """The sampler ``auto`` stands for (Wishart draws when n - 1 >= p), after checking the choice."""
    if sampler not in SAMPLERS:
        raise UsageError(f"unknown sampler {sampler!r}; choose one of {', '.join(SAMPLERS)}")
    if sampler == "auto":
        return "wishart" if n - 1 >= p else "data"
    if sampler == "wishart" and n - 1 < p:
        raise UsageError(f"Wishart draws need n - 1 >= p; got n = {n}, p = {p}")
    return sampler


def _correlation_eigenvalues(cross: np.ndarray) -> np.ndarray:
    scale = np.sqrt(np.einsum("bii->bi", cross))
    return np.linalg.eigvalsh(cross / (scale[:, :, None] * scale[:, None, :]))[:, ::-1]


def random_eigenvalues(n: int, p: int, *, iterations: int = 100,
                       seed: int | np.random.Generator | None = DEFAULT_SEED, sampler: str = "auto") -> np.ndarray:
    """Eigenvalues (descending, one row per iteration) of correlation matrices of n x p standard normal data.

    ``sampler="data"`` draws the n x p data sets themselves, in batches, and centres and cross-multiplies
    them at once. ``sampler="wishart"`` draws their centred cross-product matrices directly: for standard
    normal data these follow the Wishart distribution with n - 1 degrees of freedom and identity scale
    (scipy.stats.wishart, by the Bartlett decomposition), so the eigenvalues have exactly the same
    distribution at a cost independent of n. ``auto`` uses the Wishart draws when n - 1 >= p.

    References
    ----------
    .. [1] Odell, P. L., & Feiveson, A. H. (1966). A numerical procedure to generate a sample covariance
       matrix. Journal of the American Statistical Association, 61, 199-203.
    """
    rng = _generator(seed)
    sampler = resolve_sampler(n, p, sampler)
    per_draw = p * p if sampler == "wishart" else n * p
    batch = max(1, min(iterations, BATCH_VALUES // max(per_draw, 1)))
    rows = []
    done = 0
    if sampler == "wishart":
        from scipy import stats

        wishart = stats.wishart(df=n - 1, scale=np.eye(p))
    while done < iterations:
        size = min(batch, iterations - done)
        if sampler == "wishart":
            cross = np.reshape(wishart.rvs(size=size, random_state=rng), (size, p, p))
        else:
            draws = rng.standard_normal((size, n, p))
            draws -= draws.mean(axis=1, keepdims=True)
            cross = np.matmul(draws.transpose(0, 2, 1), draws)
        rows.append(_correlation_eigenvalues(cross))
        done += size
    return np.concatenate(rows, axis=0)


def _leading_above(observed: np.ndarray, threshold: np.ndarray) -> int:
    above = observed > threshold
    return int(len(above) if above.all() else np.argmin(above))


def parallel_analysis(correlation: np.ndarray, n: int, *, iterations: int = 100, percentile: float = 95.0,
                      seed: int | np.random.Generator | None = DEFAULT_SEED,
                      sampler: str = "auto") -> ParallelAnalysisResult:
    r"""Horn's parallel analysis: how many eigenvalues stand above those of random data of the same size?

    With :math:`\lambda_j` the eigenvalues of the observed correlation matrix and :math:`\lambda^{(b)}_j` those
    of :math:`B` random n x p standard normal data sets, the suggestion is the number of leading :math:`j` with

    .. math:: \lambda_j > Q_{0.95}\left(\lambda^{(1)}_j, \dots, \lambda^{(B)}_j\right)

    (Glorfeld's percentile criterion); Horn's original criterion compares against the mean.

    Parameters
    ----------
    correlation : (p, p) array
        Observed item correlation matrix.
    n : int
        Number of respondents behind it.
    iterations : int
        Number of random data sets B.
    percentile : float
        Percentile of the random eigenvalues used as the criterion.
    seed : int or numpy.random.Generator
        Makes the random data reproducible.
    sampler : {"auto", "wishart", "data"}
        How the random correlation matrices are drawn; see :func:`random_eigenvalues`.

    Returns
    -------
    ParallelAnalysisResult

    References
    ----------
    .. [1] Horn, J. L. (1965). A rationale and test for the number of factors in factor analysis.
       Psychometrika, 30, 179-185.
    .. [2] Glorfeld, L. W. (1995). An improvement on Horn's parallel analysis methodology for selecting the
       correct number of factors to retain. Educational and Psychological Measurement, 55, 377-393.
    """
    if not isinstance(iterations, (int, np.integer)) or iterations < 1:
        raise UsageError(f"parallel analysis needs at least 1 iteration, not {iterations!r}")
    if not 0 < percentile < 100:
        raise UsageError(f"the parallel-analysis percentile must lie between 0 and 100, not {percentile!r}")
    correlation = np.asarray(correlation, dtype=float)
    p = correlation.shape[0]
    observed = np.linalg.eigvalsh(correlation)[::-1]
    simulated = random_eigenvalues(n, p, iterations=int(iterations), seed=seed, sampler=sampler)
    threshold = np.percentile(simulated, percentile, axis=0)
    mean = simulated.mean(axis=0)
    return ParallelAnalysisResult(
        observed=observed, random=threshold, random_mean=mean,
        suggested_factors=_leading_above(observed, threshold), suggested_factors_mean=_leading_above(observed, mean),
        percentile=float(percentile), iterations=int(iterations),
        seed=seed if isinstance(seed, (int, np.integer)) else None, n=int(n),
        sampler=resolve_sampler(int(n), p, sampler))


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
    notes: list[str] = []
    eigenvalues = np.linalg.eigvalsh(correlation)[::-1] if k else np.empty(0)
    ratio = None
    share = None
    loadings = np.full(k, np.nan)
    if k < 2:
        notes.append("a scale of one item has no dimensionality to check")
    elif eigenvalues[1] <= 1e-12:
        notes.append("the second eigenvalue is zero (perfectly correlated items): the eigenvalue ratio is undefined")
    else:
        ratio = float(eigenvalues[0] / eigenvalues[1])
    if k >= 3 and n > k and _log_determinant(correlation) is not None:
        solution = fit_factors(correlation, 1, method=method, rotation="none")
        loadings = solution.loadings[:, 0]
        share = float(solution.variance_explained[0])
        notes.extend(solution.notes)
    elif k >= 3:
        notes.append("the one-factor model needs a non-singular correlation matrix and more respondents than items")
    elif k == 2:
        notes.append("a one-factor model of two items is not identified: variance explained by one factor left out")
    return UnidimensionalityResult(k=k, n_used=int(n), n_set_aside=int(n_set_aside), eigenvalues=eigenvalues,
                                   eigen_ratio=ratio, variance_one_factor=share, loadings_one_factor=loadings,
                                   notes=tuple(notes))


def unidimensionality(keyed: np.ndarray, *, method: str = "minres") -> UnidimensionalityResult:
    """Unidimensionality summary of one scale from its keyed n x k item matrix (listwise complete cases).

    See :func:`unidimensionality_of_correlation` for the statistics.
    """
    complete, set_aside = complete_cases(keyed)
    n, k = complete.shape
    notes = []
    if set_aside:
        notes.append(f"{set_aside} respondent(s) with a missing answer set aside (listwise)")
    if n < 3:
        return UnidimensionalityResult(k=k, n_used=n, n_set_aside=set_aside, eigenvalues=np.full(k, np.nan),
                                       eigen_ratio=None, variance_one_factor=None, loadings_one_factor=np.full(k, np.nan),
                                       notes=tuple(notes + [f"only {n} complete respondent(s): at least 3 are needed"]))
    constant = np.ptp(complete, axis=0) == 0
    if constant.any():
        return UnidimensionalityResult(k=k, n_used=n, n_set_aside=set_aside, eigenvalues=np.full(k, np.nan),
                                       eigen_ratio=None, variance_one_factor=None, loadings_one_factor=np.full(k, np.nan),
                                       notes=tuple(notes + [f"{int(constant.sum())} item(s) have no variance: "
                                                            "correlations are undefined"]))
    result = unidimensionality_of_correlation(correlation_of(complete), n, method=method, n_set_aside=set_aside)
    return UnidimensionalityResult(**{**result.__dict__, "notes": tuple(notes) + result.notes})


def assign_factors_to_scales(loadings: np.ndarray, item_scale: Sequence[str],
                             scales: Sequence[str]) -> dict[str, int | None]:
    """Give each scale the factor its items load on most, one factor per scale (Hungarian assignment).

    The assignment maximises the summed absolute loadings of each scale's items on its factor
    (Kuhn, 1955, Naval Research Logistics Quarterly 2:83-97, via scipy's ``linear_sum_assignment``).
    With fewer factors than scales, the scales left over get None.
    """
    from scipy.optimize import linear_sum_assignment

    weight = np.zeros((len(scales), loadings.shape[1]))
    for s, scale in enumerate(scales):
        rows = [i for i, name in enumerate(item_scale) if name == scale]
        weight[s] = np.abs(loadings[rows]).sum(axis=0)
    scale_rows, factor_cols = linear_sum_assignment(weight, maximize=True)
    mapping: dict[str, int | None] = {scale: None for scale in scales}
    for s, j in zip(scale_rows, factor_cols):
        mapping[scales[s]] = int(j)
    return mapping


def loading_flags(loadings: np.ndarray, items: Sequence[str], item_scale: Sequence[str],
                  factor_for_scale: Mapping[str, int | None], *, min_loading: float = MIN_LOADING,
                  max_cross_loading: float = MAX_CROSS_LOADING) -> list[StructureFlag]:
    """Flags for items that sit badly with their own scale's factor.

    ``off-scale-factor``: the largest absolute loading is on another factor; ``weak-loading``: below
    ``min_loading`` on the own factor; ``negative-loading``: negative on the own factor after keying (a
    reverse item not reversed, or reversed by mistake); ``cross-loading``: above ``max_cross_loading`` on
    another factor. Thresholds are common practice, no source.
    """
    flags: list[StructureFlag] = []
    for i, (item, scale) in enumerate(zip(items, item_scale)):
        own = factor_for_scale.get(scale)
        if own is None:
            continue
        row = loadings[i]
        largest = int(np.argmax(np.abs(row)))
        if largest != own:
            flags.append(StructureFlag(item, "off-scale-factor",
                                       f"loads most on F{largest + 1} ({row[largest]:.2f}), not on F{own + 1} of "
                                       f"its scale {scale} ({row[own]:.2f}); check that the item belongs to {scale}",
                                       scale))
        if abs(row[own]) < min_loading:
            flags.append(StructureFlag(item, "weak-loading",
                                       f"loads {row[own]:.2f} on F{own + 1} of its scale {scale}, below {min_loading:.2f}",
                                       scale))
        if row[own] < 0 and abs(row[own]) >= min_loading:
            flags.append(StructureFlag(item, "negative-loading",
                                       f"loads {row[own]:.2f} on F{own + 1} of its scale {scale} after keying; "
                                       "check whether it should be reverse-keyed", scale))
        for j, value in enumerate(row):
            if j != own and abs(value) > max_cross_loading:
                flags.append(StructureFlag(item, "cross-loading",
                                           f"also loads {value:.2f} on F{j + 1}, above {max_cross_loading:.2f}", scale))
    return flags


# --------------------------------------------------------------------------- the whole analysis

def _ledermann_bound(p: int) -> int:
    """Largest number of factors with non-negative degrees of freedom: (p - m)^2 >= p + m."""
    m = 0
    while m + 1 < p and (p - (m + 1)) ** 2 >= p + (m + 1):
        m += 1
    return m


def _validate_names(keyed: np.ndarray, item_names: Sequence[str], item_scale: Mapping[str, str]) -> None:
    if keyed.ndim != 2:
        raise DataError(f"expected a respondents x items matrix, got an array with {keyed.ndim} dimension(s)")
    if len(item_names) != keyed.shape[1]:
        raise DataError(f"{len(item_names)} item name(s) given for a matrix of {keyed.shape[1]} column(s)")
    duplicates = sorted({name for name in item_names if list(item_names).count(name) > 1})
    if duplicates:
        raise DataError(f"item(s) {', '.join(duplicates)} appear more than once in the item matrix; "
                        "an item shared by several scales must be one column")
    unknown = [name for name in item_names if name not in item_scale]
    if unknown:
        raise DataError(f"item(s) {', '.join(unknown)} have no scale in item_scale")


def analyse_structure(keyed_matrix: np.ndarray, *, item_names: Sequence[str], item_scale: Mapping[str, str],
                      scale_items: Mapping[str, Sequence[str]] | None = None,
                      n_factors: int | str | None = None, rotation: str = "oblimin", method: str = "minres",
                      seed: int | np.random.Generator | None = DEFAULT_SEED, iterations: int = 100,
                      percentile: float = 95.0, min_loading: float = MIN_LOADING,
                      max_cross_loading: float = MAX_CROSS_LOADING) -> StructureResult:
    """KMO, Bartlett, parallel analysis, an EFA and the loadings laid against the intended scales.

    Parameters
    ----------
    keyed_matrix : (n, p) array
        Keyed item answers (reverse items already reversed), NaN for missing; each item once.
    item_names : sequence of str
        Column names of ``keyed_matrix``.
    item_scale : mapping item -> scale
        The scale each item is meant to measure (for an item in a total and a subscale: the subscale).
        Factors are matched to these scales.
    scale_items : mapping scale -> items, optional
        Scales for the per-scale unidimensionality summary (may overlap, e.g. a total and its subscales).
        Default: the scales of ``item_scale``.
    n_factors : int, "scales" or None
        None: parallel analysis' suggestion (at least 1); "scales": the number of scales in ``item_scale``.
    rotation, method : str
        See :func:`scalewright.stats.factoring.fit_factors`.
    seed, iterations, percentile
        Parallel analysis settings.
    min_loading, max_cross_loading : float
        Thresholds of the ``weak-loading`` and ``cross-loading`` flags (common practice, no source).

    Returns
    -------
    StructureResult

    Notes
    -----
    Respondents with any missing answer are set aside (listwise) and counted; items with no variance
    among the rest are left out and flagged.
    """
    keyed = np.asarray(keyed_matrix, dtype=float)
    item_names = [str(name) for name in item_names]
    _validate_names(keyed, item_names, item_scale)
    if not 0 < min_loading <= 1 or not 0 < max_cross_loading <= 1:
        raise UsageError("loading thresholds must lie between 0 and 1")
    scales = list(dict.fromkeys(item_scale[name] for name in item_names))
    if scale_items is None:
        scale_items = {scale: [name for name in item_names if item_scale[name] == scale] for scale in scales}
    if isinstance(n_factors, str) and n_factors != "scales":
        raise UsageError(f"--factors takes a whole number or 'scales', not {n_factors!r}")

    notes: list[str] = []
    flags: list[StructureFlag] = []
    complete, set_aside = complete_cases(keyed)
    if set_aside:
        notes.append(f"{set_aside} of {keyed.shape[0]} respondent(s) with at least one missing answer set aside "
                     "(listwise); every statistic uses the remaining complete cases")
    n = complete.shape[0]
    constant = np.ptp(complete, axis=0) == 0 if n else np.ones(len(item_names), dtype=bool)
    dropped = [name for name, c in zip(item_names, constant) if c]
    for name in dropped:
        flags.append(StructureFlag(name, "no-variance", "every complete respondent gave the same answer; "
                                   "left out of the analysis", item_scale[name]))
    if dropped:
        notes.append(f"{len(dropped)} item(s) without variance left out: {', '.join(dropped)}")
    kept = [i for i, c in enumerate(constant) if not c]
    items = tuple(item_names[i] for i in kept)
    data = complete[:, kept]
    p = len(items)

    def empty(reason: str) -> StructureResult:
        return StructureResult(items=items, item_scale={i: item_scale[i] for i in items}, n_used=n,
                               n_set_aside=set_aside, kmo=KMOResult(None, np.full(p, np.nan)),
                               bartlett=BartlettResult(None, p * (p - 1) // 2, None, n), parallel=None,
                               solution=None, n_factors_rule="none", factor_for_scale={s: None for s in scales},
                               unidimensionality={}, flags=tuple(flags), notes=tuple(notes + [reason]),
                               min_loading=min_loading, max_cross_loading=max_cross_loading,
                               dropped_items=tuple(dropped))

    if n < 3:
        return empty(f"only {n} complete respondent(s): the structure needs at least 3")
    if p < 2:
        return empty("fewer than two items with variance: there is no structure to analyse")

    correlation = correlation_of(data)
    sampling = kmo(correlation)
    sphericity = bartlett_sphericity(correlation, n)
    notes.extend(sampling.notes)
    notes.extend(sphericity.notes)
    if sampling.overall is not None and sampling.overall < MIN_KMO:
        notes.append(f"overall KMO {sampling.overall:.2f} is below {MIN_KMO:.2f} (Kaiser, 1974): "
                     "the correlations may be too weak for factor analysis")
    for name, value in zip(items, sampling.per_item):
        if np.isfinite(value) and value < MIN_KMO:
            flags.append(StructureFlag(name, "low-kmo", f"item KMO {value:.2f} is below {MIN_KMO:.2f} (Kaiser, 1974): "
                                       "it shares little with the other items", item_scale[name]))
    if sphericity.p is not None and sphericity.p >= 0.05:
        notes.append("Bartlett's test does not reject uncorrelated items (p >= .05): factors may be spurious")
    parallel = parallel_analysis(correlation, n, iterations=iterations, percentile=percentile, seed=seed)

    singular = _log_determinant(correlation) is None or n <= p
    bound = _ledermann_bound(p)
    if n_factors is None:
        chosen = max(1, parallel.suggested_factors)
        rule = "parallel analysis"
        if parallel.suggested_factors == 0:
            notes.append("parallel analysis found no eigenvalue above random data; one factor fitted anyway")
    elif n_factors == "scales":
        chosen = len(scales)
        rule = "number of scales"
    else:
        if isinstance(n_factors, bool) or not isinstance(n_factors, (int, np.integer)) or n_factors < 1:
            raise UsageError(f"the number of factors must be a whole number of at least 1, not {n_factors!r}")
        chosen = int(n_factors)
        rule = "requested"
        if chosen >= p:
            raise UsageError(f"{chosen} factor(s) cannot be extracted from {p} item(s); ask for fewer than {p}")
    if chosen > max(bound, 1):
        if rule == "requested":
            notes.append(f"{chosen} factors exceed the {bound} that {p} items can identify; the solution is not unique")
        else:
            notes.append(f"{chosen} factors ({rule}) exceed the {bound} that {p} items can identify; {max(bound, 1)} fitted")
            chosen = max(bound, 1)
    if chosen >= p:
        chosen = p - 1

    solution = None
    mapping: dict[str, int | None] = {scale: None for scale in scales}
    if singular:
        notes.append("the item correlation matrix is singular (an item duplicates others, or there are no more "
                     "respondents than items): no factor analysis")
    else:
        solution = fit_factors(correlation, chosen, method=method, rotation=rotation)
        notes.extend(solution.notes)
        for i in solution.heywood_items:
            flags.append(StructureFlag(items[i], "heywood-case", "uniqueness at the lower bound: the factors "
                                       "reproduce this item almost entirely", item_scale[items[i]]))
        own_scales = [item_scale[name] for name in items]
        present_scales = list(dict.fromkeys(own_scales))
        mapping.update(assign_factors_to_scales(solution.loadings, own_scales, present_scales))
        unmatched = [s for s in present_scales if mapping[s] is None]
        if unmatched:
            notes.append(f"fewer factors ({chosen}) than scales ({len(present_scales)}): no factor of its own for "
                         f"{', '.join(unmatched)}; its items are not checked against a factor")
        spare = sorted(set(range(chosen)) - {j for j in mapping.values() if j is not None})
        if spare:
            notes.append(f"factor(s) {', '.join(f'F{j + 1}' for j in spare)} belong to no scale: a dimension the "
                         "scale file does not name, or a method factor (e.g. the reverse-worded items)")
        flags.extend(loading_flags(solution.loadings, items, own_scales, mapping, min_loading=min_loading,
                                   max_cross_loading=max_cross_loading))

    per_scale: dict[str, UnidimensionalityResult] = {}
    positions = {name: i for i, name in enumerate(items)}
    for scale, members in scale_items.items():
        columns = [positions[name] for name in members if name in positions]
        missing_members = [name for name in members if name not in positions and name not in dropped]
        if missing_members:
            raise DataError(f"scale {scale}: item(s) {', '.join(missing_members)} are not in the item matrix")
        sub = correlation[np.ix_(columns, columns)]
        summary = unidimensionality_of_correlation(sub, n, method=method, n_set_aside=set_aside)
        per_scale[scale] = summary
        if summary.eigen_ratio is not None and summary.eigen_ratio < MIN_EIGEN_RATIO:
            flags.append(StructureFlag(None, "several-dimensions",
                                       f"first-to-second eigenvalue ratio {summary.eigen_ratio:.1f} is below "
                                       f"{MIN_EIGEN_RATIO:g}: the items may measure more than one thing", scale))
    return StructureResult(items=items, item_scale={name: item_scale[name] for name in items}, n_used=n,
                           n_set_aside=set_aside, kmo=sampling, bartlett=sphericity, parallel=parallel,
                           solution=solution, n_factors_rule=rule, factor_for_scale=mapping,
                           unidimensionality=per_scale, flags=tuple(flags), notes=tuple(notes),
                           min_loading=min_loading, max_cross_loading=max_cross_loading, dropped_items=tuple(dropped))
