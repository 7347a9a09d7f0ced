"""The one-factor ML fit behind omega on small samples: settled by the accelerated fixed point, no fallback."""
from __future__ import annotations

import numpy as np
import pytest

from scalewright.stats import omega
from scalewright.stats.omega import FACTOR_ANALYZER_UNIQUENESS_FLOOR, fit_one_factor, omega_if_deleted_from_cov


def small_sample_covariances(count: int, n: int = 15, k: int = 6) -> list[np.ndarray]:
    """Covariances of small congeneric samples (the size of a subgroup of a 60-row file), Heywood cases included."""
    rng = np.random.default_rng(23)
    out = []
    for _ in range(count):
        loadings = rng.uniform(0.3, 0.9, k)
        x = rng.standard_normal(n)[:, None] * loadings + rng.standard_normal((n, k)) * np.sqrt(1 - loadings**2)
        out.append(np.cov(np.round(x * 1.2 + 3).clip(1, 5), rowvar=False))
    return [c for c in out if np.linalg.matrix_rank(c) == k]


def test_small_sample_fits_settle_without_the_quasi_newton_search(monkeypatch):
    # the L-BFGS-B search may only run when the fixed point fails: make it fail loudly if it runs at all
    import scipy.optimize

    def no_search(*args, **kwargs):
        raise AssertionError("quasi-Newton fallback used")

    monkeypatch.setattr(scipy.optimize, "minimize", no_search)
    fits = [fit_one_factor(cov) for cov in small_sample_covariances(40)]
    assert all(fit is not None and fit.method == "ml" and fit.converged for fit in fits)
    assert any(fit.heywood_items for fit in fits)  # the bound is reached in some, and still settles


@pytest.mark.parametrize("case", range(8))
def test_fixed_point_reaches_the_minimum_scipy_finds(case):
    # reference: scipy.optimize.minimize (L-BFGS-B, tight projected-gradient stop) on the same concentrated ML
    # discrepancy (Joreskog, 1967) and bounds, computed live; the discrepancy itself is checked against
    # factor_analyzer in tests/test_reliability.py
    from scipy.optimize import minimize

    cov = small_sample_covariances(8)[case]
    sd = np.sqrt(np.diag(cov))
    corr = cov / np.outer(sd, sd)
    start = np.clip(1.0 / np.diag(np.linalg.inv(corr)), FACTOR_ANALYZER_UNIQUENESS_FLOOR, 1.0)
    settled, ours = omega._fixed_point_ml(corr, start)
    reference = minimize(omega._ml_discrepancy, start, args=(corr,), jac=True, method="L-BFGS-B",
                         bounds=[(FACTOR_ANALYZER_UNIQUENESS_FLOOR, 1.0)] * len(start),
                         options={"maxiter": 5000, "ftol": 0.0, "gtol": 1e-12})
    assert settled
    assert omega._ml_discrepancy(ours, corr)[0] <= reference.fun + 1e-10
    np.testing.assert_allclose(ours, reference.x, atol=2e-5)


def test_omega_if_deleted_is_a_fresh_fit_of_the_remaining_items():
    # property, no outside source needed: each entry is the fit of the reduced matrix from its own squared
    # multiple correlations. A start from the full fit's uniquenesses was tried and dropped: on small
    # samples with a Heywood case it ended in a worse local optimum (higher ML discrepancy) for this matrix
    cov = small_sample_covariances(3)[2]
    expected = [omega.omega_total_from_cov(np.delete(np.delete(cov, j, 0), j, 1)) for j in range(len(cov))]
    np.testing.assert_allclose(omega_if_deleted_from_cov(cov), expected, rtol=1e-12)
    full = fit_one_factor(cov)
    warm = omega_if_deleted_from_cov(cov, start=1.0 - full.standardized_loadings**2)
    assert not np.allclose(warm, expected)  # the trap the fresh fits avoid
