"""Data generated from known confirmatory factor models, for the tests of the confirmatory modules."""
from __future__ import annotations

import numpy as np


def population_cov(loadings: np.ndarray, phi: np.ndarray, residuals: np.ndarray) -> np.ndarray:
    return loadings @ phi @ loadings.T + np.diag(residuals)


def simulate(cov: np.ndarray, n: int, rng: np.random.Generator, means: np.ndarray | None = None) -> np.ndarray:
    """n rows from a normal distribution with the given covariance (and means)."""
    mean = np.zeros(len(cov)) if means is None else means
    return rng.multivariate_normal(mean, cov, size=n, method="cholesky")


def standardized_structure(k_per_factor: list[int], loading: float | list[float], phi: np.ndarray) \
        -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Items of unit variance, each loading on one factor: (loadings, phi, residual variances)."""
    p, m = sum(k_per_factor), len(k_per_factor)
    values = np.full(p, loading) if np.isscalar(loading) else np.asarray(loading, dtype=float)
    loadings = np.zeros((p, m))
    row = 0
    for j, k in enumerate(k_per_factor):
        loadings[row:row + k, j] = values[row:row + k]
        row += k
    common = np.einsum("ij,jk,ik->i", loadings, phi, loadings)
    return loadings, phi, 1.0 - common
