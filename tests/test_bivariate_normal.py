"""The vectorised bivariate normal against scipy.stats.multivariate_normal, computed live."""
from __future__ import annotations

import numpy as np
import pytest
from scipy.stats import multivariate_normal, norm

from scalewright.stats.bivariate_normal import (
    bivariate_normal_cdf,
    bivariate_normal_cdf_dh,
    bivariate_normal_cdf_grid,
    bivariate_normal_pdf,
)

RHOS = [-0.9999, -0.99, -0.95, -0.93, -0.9, -0.5, 0.0, 0.3, 0.8, 0.925, 0.93, 0.97, 0.999]
POINTS = [(0.0, 0.0), (0.0, 1.0), (-1.0, 0.0), (0.5, 0.51), (1.2, -0.7), (-2.0, -2.1), (2.5, 2.5),
          (-0.3, 1.9), (0.0, -1.2), (-3.5, 3.0)]


def scipy_cdf(h: float, k: float, rho: float) -> float:
    # scipy's bivariate normal distribution function (reference computed live)
    return float(multivariate_normal(mean=[0, 0], cov=[[1, rho], [rho, 1]], abseps=1e-12, releps=1e-12).cdf([h, k]))


@pytest.mark.parametrize("rho", RHOS)
def test_cdf_matches_scipy(rho: float) -> None:
    h = np.array([p[0] for p in POINTS])
    k = np.array([p[1] for p in POINTS])
    expected = [scipy_cdf(a, b, rho) for a, b in POINTS]
    np.testing.assert_allclose(bivariate_normal_cdf(h, k, np.full(h.size, rho)), expected, rtol=0, atol=1e-12)


def test_cdf_limits() -> None:
    inf = np.inf
    got = bivariate_normal_cdf(np.array([-inf, inf, 0.3, inf, 0.4, 0.4]), np.array([0.2, 0.2, inf, inf, 0.1, 0.1]),
                               np.array([0.5, 0.5, 0.5, 0.5, 1.0, -1.0]))
    np.testing.assert_allclose(got, [0.0, norm.cdf(0.2), norm.cdf(0.3), 1.0, norm.cdf(0.1),
                                     norm.cdf(0.4) + norm.cdf(0.1) - 1.0], atol=1e-15)


def test_grid_equals_pointwise() -> None:
    rng = np.random.default_rng(4)
    x = np.sort(rng.normal(size=(6, 4)), axis=1)
    y = np.sort(rng.normal(size=(6, 3)), axis=1)
    x[0, 0], y[1, -1] = -np.inf, np.inf
    rho = np.array([0.1, -0.6, 0.92, 0.95, -0.97, 0.0])
    grid = bivariate_normal_cdf_grid(x, y, rho)
    pointwise = bivariate_normal_cdf(x[:, :, None], y[:, None, :], rho[:, None, None])
    np.testing.assert_allclose(grid, pointwise, rtol=0, atol=1e-14)


def test_density_and_threshold_derivative() -> None:
    h, k, rho = 0.3, -0.8, 0.45
    expected = multivariate_normal(mean=[0, 0], cov=[[1, rho], [rho, 1]]).pdf([h, k])
    assert bivariate_normal_pdf(np.array(h), np.array(k), np.array(rho)) == pytest.approx(expected, rel=1e-12)
    step = 1e-5  # central difference of scipy's distribution function in h
    numeric = (scipy_cdf(h + step, k, rho) - scipy_cdf(h - step, k, rho)) / (2 * step)
    assert bivariate_normal_cdf_dh(np.array(h), np.array(k), np.array(rho)) == pytest.approx(numeric, rel=1e-6)
