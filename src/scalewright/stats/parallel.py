"""Horn's parallel analysis: how many eigenvalues of the item correlations stand above random data's?"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import UsageError
from ..results import ResultMixin, to_jsonable
from ..seeds import DEFAULT_SEED

#: random matrices are drawn in batches of at most this many values, so memory stays near 40 MB
BATCH_VALUES = 5_000_000


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
        Number of respondents behind it (a fractional effective n is rounded to whole rows).
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
    n = int(round(n))  # Kish's effective n of survey weights: random data sets have whole rows
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
