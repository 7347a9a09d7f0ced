"""Reliability from fitted confirmatory models (stats/cfa_reliability) against population values and Monte Carlo."""
from __future__ import annotations

import numpy as np
import pytest

from scalewright.stats.cfa_fit import fit
from scalewright.stats.cfa_model import factor_model, scale_file_structure
from scalewright.stats.cfa_reliability import bifactor_indices, model_omega
from scalewright.stats.cfa_result import summarize_fit

from .cfa_data import population_cov, simulate, standardized_structure

ITEMS = list("abcdef")


def test_omega_recovers_the_population_value():
    # reference: population omega (sum lambda)^2 / ((sum lambda)^2 + sum theta) (McDonald 1999) on 200,000 rows
    rng = np.random.default_rng(1)
    lam = np.array([[1.2], [0.9], [0.7], [1.0], [0.5], [0.8]])
    theta = np.array([.8, 1.0, .6, 1.2, .9, .7])
    x = simulate(population_cov(lam, np.eye(1), theta), 200_000, rng)
    result = fit(np.cov(x, rowvar=False), len(x), factor_model({"f": ITEMS}))
    truth = lam.sum() ** 2 / (lam.sum() ** 2 + theta.sum())
    assert model_omega(result, range(6)).omega_total == pytest.approx(truth, abs=0.003)


def test_omega_equals_omega_of_scikit_learns_ml_fit():
    # reference: scikit-learn's FactorAnalysis (one-factor maximum likelihood) live on the same answers, omega =
    # (sum lambda)^2 / ((sum lambda)^2 + sum theta) (McDonald 1999); omega does not change with the covariance
    # divisor (n in scikit-learn, n - 1 here), which scales lambda^2 and theta alike
    from sklearn.decomposition import FactorAnalysis

    rng = np.random.default_rng(2)
    loadings, phi, residuals = standardized_structure([6], [.8, .7, .6, .5, .6, .4], np.eye(1))
    x = simulate(population_cov(loadings, phi, residuals), 600, rng)
    result = fit(np.cov(x, rowvar=False), 600, factor_model({"f": ITEMS}))
    reference = FactorAnalysis(n_components=1, tol=1e-12, max_iter=20_000).fit(x)
    common = reference.components_.sum() ** 2
    assert model_omega(result, range(6)).omega_total == pytest.approx(
        common / (common + reference.noise_variance_.sum()), abs=1e-6)


def test_delta_method_standard_error_matches_the_monte_carlo_spread():
    # reference: the spread of omega over 100 samples drawn from a known model (Monte Carlo)
    rng = np.random.default_rng(3)
    loadings, phi, residuals = standardized_structure([5], [.7, .6, .5, .6, .4], np.eye(1))
    sigma = population_cov(loadings, phi, residuals)
    model = factor_model({"f": ITEMS[:5]})
    omegas, ses = [], []
    for _ in range(100):
        x = simulate(sigma, 300, rng)
        value = model_omega(fit(np.cov(x, rowvar=False), 300, model), range(5))
        omegas.append(value.omega_total)
        ses.append(value.omega_se)
    assert np.mean(ses) == pytest.approx(np.std(omegas, ddof=1), rel=0.2)


def test_bifactor_indices_recover_population_values():
    # reference: omega hierarchical, omega hierarchical-subscale and ECV of the generating bifactor model
    # (Reise 2012; Rodriguez, Reise & Haviland 2016) on 200,000 rows
    rng = np.random.default_rng(4)
    general = np.array([.6, .5, .55, .6, .5, .45, .6, .5, .4])
    specific = np.array([.4, .45, .3, .35, .5, .4, .3, .3, .45])
    p = 9
    lam = np.zeros((p, 4))
    lam[:, 0] = general
    for s in range(3):
        lam[3 * s:3 * s + 3, s + 1] = specific[3 * s:3 * s + 3]
    theta = 1 - (lam**2).sum(axis=1)
    sigma = population_cov(lam, np.eye(4), theta)
    items = [f"i{k}" for k in range(p)]
    scales = {"total": items, "s1": items[:3], "s2": items[3:6], "s3": items[6:]}
    membership, orthogonal, totals = scale_file_structure(scales)
    assert totals == {"total": ["s1", "s2", "s3"]}
    x = simulate(sigma, 200_000, rng)
    result = fit(np.cov(x, rowvar=False), len(x), factor_model(membership, orthogonal=orthogonal))
    indices = bifactor_indices(result, 0, {"s1": 1, "s2": 2, "s3": 3}, range(9),
                               {"s1": [0, 1, 2], "s2": [3, 4, 5], "s3": [6, 7, 8]})
    assert indices.omega_hierarchical == pytest.approx(general.sum() ** 2 / sigma.sum(), abs=0.01)
    for s in range(3):
        block = slice(3 * s, 3 * s + 3)
        truth = specific[block].sum() ** 2 / sigma[block, block].sum()
        assert indices.omega_hierarchical_subscale[f"s{s + 1}"] == pytest.approx(truth, abs=0.01)
    ecv = (general**2).sum() / ((general**2).sum() + (specific**2).sum())
    assert indices.ecv == pytest.approx(ecv, abs=0.01)
    summary = summarize_fit(result, name="all", scales=scales, totals=totals)
    assert summary.structure == "bifactor"
    assert summary.to_dict()["omega_hierarchical"] == pytest.approx(indices.omega_hierarchical)
    assert summary.omega["total"].omega_total == pytest.approx(
        (general.sum() ** 2 + sum(specific[3 * s:3 * s + 3].sum() ** 2 for s in range(3))) / sigma.sum(), abs=0.01)
