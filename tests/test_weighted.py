"""Weighted estimates (stats/weighted.py) against statsmodels' DescrStatsW and numpy, computed live."""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from scalewright.stats.weighted import (
    design_effect,
    kish_effective_n,
    weighted_covariance,
    weighted_mean,
    weighted_quantiles,
    weighted_sd,
    weighted_summary,
    weighted_variance,
)

PROBS = np.array([0.0, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 1.0])


def sample(seed: int, n: int = 200):
    rng = np.random.default_rng(seed)
    x = rng.integers(1, 6, n).astype(float) + rng.integers(0, 3, n) / 3  # scale-like scores with ties
    w = rng.gamma(2.0, 1.5, n)
    return x, w


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_against_statsmodels_descrstatsw(seed):
    from statsmodels.stats.weightstats import DescrStatsW

    x, w = sample(seed)
    reference = DescrStatsW(x, weights=w)
    # statsmodels DescrStatsW: mean, and var_ddof with ddof = sum(w^2)/sum(w) gives the divisor V1 - V2/V1
    ddof = np.sum(w**2) / np.sum(w)
    assert weighted_mean(x, w) == pytest.approx(reference.mean, rel=1e-12)
    assert weighted_variance(x, w) == pytest.approx(reference.var_ddof(ddof), rel=1e-12)
    assert weighted_sd(x, w) == pytest.approx(reference.std_ddof(ddof), rel=1e-12)
    # statsmodels DescrStatsW.quantile (the weighted quantile definition we state)
    ours = weighted_quantiles(x, w, PROBS)
    np.testing.assert_allclose(ours, reference.quantile(PROBS, return_pandas=False), rtol=0, atol=1e-12)


def test_quantile_exact_hits_match_statsmodels():
    from statsmodels.stats.weightstats import DescrStatsW

    # cumulative weights land exactly on 0.25, 0.5, 0.75 of the total: the midpoint rule applies
    x = np.array([1.0, 2.0, 3.0, 4.0])
    w = np.array([1.0, 1.0, 1.0, 1.0])
    probs = np.array([0.25, 0.5, 0.75, 0.3])
    np.testing.assert_allclose(weighted_quantiles(x, w, probs),
                               DescrStatsW(x, weights=w).quantile(probs, return_pandas=False))
    # and it is not the interpolated type-7 median of numpy at every probability
    assert weighted_quantiles(x, w, [0.25])[0] != np.quantile(x, 0.25)


def test_covariance_against_statsmodels():
    from statsmodels.stats.weightstats import DescrStatsW

    rng = np.random.default_rng(7)
    data = rng.normal(size=(150, 4)) @ rng.normal(size=(4, 4))
    w = rng.uniform(0.2, 3.0, 150)
    ddof = np.sum(w**2) / np.sum(w)
    reference = DescrStatsW(data, weights=w)
    # statsmodels: cov has divisor sum(w) - ddof; rescale from its ddof=0 covariance
    expected = reference.cov * w.sum() / (w.sum() - ddof)
    np.testing.assert_allclose(weighted_covariance(data, w), expected, rtol=1e-10)


def test_integer_weights_equal_row_replication():
    x, _ = sample(11, 60)
    w = np.random.default_rng(12).integers(1, 5, x.size)
    repeated = np.repeat(x, w)
    # numpy / scipy on the replicated rows: means, quantiles (DescrStatsW with unit weights), moments ratios
    from statsmodels.stats.weightstats import DescrStatsW

    assert weighted_mean(x, w) == pytest.approx(np.mean(repeated), rel=1e-12)
    np.testing.assert_allclose(weighted_quantiles(x, w, PROBS),
                               DescrStatsW(repeated).quantile(PROBS, return_pandas=False))
    rng = np.random.default_rng(3)
    data = rng.normal(size=(60, 3))
    corr = weighted_covariance(data, w)
    corr = corr / np.sqrt(np.outer(np.diag(corr), np.diag(corr)))
    np.testing.assert_allclose(corr, np.corrcoef(np.repeat(data, w, axis=0), rowvar=False), rtol=1e-10)


def test_unit_weights_equal_unweighted():
    x, _ = sample(5, 80)
    ones = np.ones_like(x)
    s = weighted_summary(x, ones)
    # numpy and scipy.stats (bias=False, the adjusted moments the shape command reports)
    assert s.mean == pytest.approx(np.mean(x), rel=1e-13)
    assert s.sd == pytest.approx(np.std(x, ddof=1), rel=1e-12)
    assert s.skewness == pytest.approx(stats.skew(x, bias=False), rel=1e-10)
    assert s.kurtosis == pytest.approx(stats.kurtosis(x, bias=False), rel=1e-10)
    assert s.n_effective == pytest.approx(x.size)
    assert s.design_effect == pytest.approx(1.0)
    data = np.column_stack([x, x**2, np.sqrt(x)])
    np.testing.assert_allclose(weighted_covariance(data, np.ones(x.size)), np.cov(data, rowvar=False), rtol=1e-12)


def test_kish_closed_form():
    # Kish (1965): n_eff = (sum w)^2 / sum w^2; deff = 1 + CV^2 with CV from the divisor-n sd of the weights
    w = np.array([1.0, 1.0, 2.0, 4.0])
    assert kish_effective_n(w) == pytest.approx(64 / 22)
    cv = np.std(w) / np.mean(w)
    assert design_effect(w) == pytest.approx(1 + cv**2)
    assert design_effect(w) == pytest.approx(w.size / kish_effective_n(w))


def test_zero_weights_are_left_out():
    x, w = sample(9, 50)
    w[:10] = 0
    s = weighted_summary(x, w)
    assert s.n == 50
    assert s.n_zero_weight == 10
    assert s.mean == pytest.approx(np.average(x[10:], weights=w[10:]))  # numpy's weighted average
    np.testing.assert_allclose(weighted_quantiles(x, w, PROBS), weighted_quantiles(x[10:], w[10:], PROBS))


@settings(max_examples=30, deadline=None)
@given(seed=st.integers(0, 10_000), factor=st.floats(1e-3, 1e4))
def test_invariant_to_scaling_the_weights(seed, factor):
    x, w = sample(seed, 40)
    data = np.column_stack([x, np.roll(x, 3)])
    a, b = weighted_summary(x, w), weighted_summary(x, w * factor)
    for name in ("mean", "sd", "skewness", "kurtosis", "n_effective", "design_effect"):
        assert getattr(b, name) == pytest.approx(getattr(a, name), rel=1e-9), name
    np.testing.assert_array_equal(weighted_quantiles(x, w, PROBS), weighted_quantiles(x, w * factor, PROBS))
    np.testing.assert_allclose(weighted_covariance(data, w * factor), weighted_covariance(data, w), rtol=1e-9)


def test_degenerate_inputs_give_nan_not_errors():
    assert math.isnan(weighted_variance(np.array([1.0]), np.array([2.0])))
    assert math.isnan(weighted_mean(np.array([1.0, 2.0]), np.array([0.0, 0.0])))
    s = weighted_summary(np.array([3.0, 3.0, 3.0]), np.array([1.0, 2.0, 1.0]))
    assert math.isnan(s.skewness)
    assert s.notes
    assert s.notes[0].code == "weighted-moments-undefined"


@settings(max_examples=30, deadline=None)
@given(seed=st.integers(0, 10_000), factor=st.floats(1e-3, 1e4))
def test_pairwise_moments_and_mahalanobis_invariant_to_scaling_the_weights(seed, factor):
    from scalewright.stats.mahalanobis import mahalanobis_distance
    from scalewright.stats.weighted import weighted_pairwise_moments

    rng = np.random.default_rng(seed)
    data = rng.integers(1, 6, size=(40, 4)).astype(float) + rng.normal(scale=0.3, size=(40, 4))
    data[rng.random(data.shape) < 0.1] = np.nan
    w = rng.uniform(0.1, 3, 40)
    means, cov = weighted_pairwise_moments(data, w)
    scaled_means, scaled_cov = weighted_pairwise_moments(data, w * factor)
    np.testing.assert_allclose(scaled_means, means, rtol=1e-9)
    np.testing.assert_allclose(scaled_cov, cov, rtol=1e-8)
    np.testing.assert_allclose(mahalanobis_distance(data, weights=w * factor).d2,
                               mahalanobis_distance(data, weights=w).d2, rtol=1e-7)
