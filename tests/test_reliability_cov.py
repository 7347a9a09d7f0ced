"""Covariance-based reliability statistics checked against outside references."""
from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.stats.item_analysis import (
    alpha_if_deleted_from_cov,
    alpha_with_item_reversed_from_cov,
    item_rest_correlations_from_cov,
)
from scalewright.stats.item_covariance import item_covariance
from scalewright.stats.reliability_coefficients import (
    cronbach_alpha_from_cov,
    feldt_alpha_ci,
    guttman_lambda2_from_cov,
    guttman_lambda6_from_cov,
    inter_item_correlations,
    standardized_alpha_from_cov,
)


def congeneric_items(n: int, loadings, errors_sd, rng: np.random.Generator, *, levels: int | None = 5):
    """Items = loading * factor + error, optionally cut into 1..levels rating codes."""
    factor = rng.standard_normal(n)
    continuous = np.outer(factor, loadings) + rng.standard_normal((n, len(loadings))) * np.asarray(errors_sd)
    if levels is None:
        return continuous
    cuts = np.quantile(continuous, np.linspace(0, 1, levels + 1)[1:-1], axis=0)
    return 1.0 + (continuous[:, :, None] > cuts.T[None, :, :]).sum(axis=2)


@pytest.fixture(scope="module")
def rating_items() -> np.ndarray:
    rng = np.random.default_rng(20260101)
    return congeneric_items(400, [0.8, 0.7, 0.6, 0.5, 0.7, 0.4], [0.6, 0.7, 0.8, 0.9, 0.7, 1.0], rng)


def test_alpha_and_feldt_ci_match_pingouin_on_complete_data(rating_items):
    # reference: pingouin.cronbach_alpha computed live (complete data only; docs/references.md known bug)
    import pingouin

    stats = item_covariance(rating_items)
    alpha = cronbach_alpha_from_cov(stats.cov)
    reference_alpha, reference_ci = pingouin.cronbach_alpha(pd.DataFrame(rating_items), ci=0.95)
    assert alpha == pytest.approx(reference_alpha, rel=1e-10)
    # pingouin rounds its CI to 3 decimals
    np.testing.assert_allclose(feldt_alpha_ci(alpha, stats.n_used, stats.k), reference_ci, atol=5.01e-4)
    reference_90 = pingouin.cronbach_alpha(pd.DataFrame(rating_items), ci=0.90)[1]
    np.testing.assert_allclose(feldt_alpha_ci(alpha, stats.n_used, stats.k, confidence_level=0.90),
                               reference_90, atol=5.01e-4)


def test_alpha_equals_hoyt_anova_identity(rating_items):
    # reference: Hoyt (1941) alpha = 1 - MS_error / MS_persons, ANOVA by statsmodels
    import statsmodels.api as sm
    from statsmodels.formula.api import ols

    # the identity holds for any sample: 80 persons keep the dummy-coded design small (400 took 2 - 30 s)
    items = rating_items[:80]
    n, k = items.shape
    long = pd.DataFrame({"score": items.ravel(), "person": np.repeat(np.arange(n), k),
                         "item": np.tile(np.arange(k), n)})
    table = sm.stats.anova_lm(ols("score ~ C(person) + C(item)", data=long).fit(), typ=2)
    ms = table["sum_sq"] / table["df"]
    hoyt = 1 - ms["Residual"] / ms["C(person)"]
    assert cronbach_alpha_from_cov(np.cov(items, rowvar=False)) == pytest.approx(hoyt, rel=1e-9)


def test_standardized_alpha_is_alpha_of_z_scores(rating_items):
    # reference: pingouin.cronbach_alpha of the z-scored items
    import pingouin

    z = (rating_items - rating_items.mean(0)) / rating_items.std(0, ddof=1)
    reference = pingouin.cronbach_alpha(pd.DataFrame(z))[0]
    assert standardized_alpha_from_cov(np.cov(rating_items, rowvar=False)) == pytest.approx(reference, rel=1e-10)


def test_item_rest_and_alpha_if_deleted_match_direct_recomputation(rating_items):
    # reference: direct recomputation with numpy.corrcoef and pingouin.cronbach_alpha on the reduced data
    import pingouin

    cov = np.cov(rating_items, rowvar=False)
    k = rating_items.shape[1]
    rest_r = item_rest_correlations_from_cov(cov)
    if_deleted = alpha_if_deleted_from_cov(cov)
    for j in range(k):
        others = np.delete(rating_items, j, axis=1)
        assert rest_r[j] == pytest.approx(np.corrcoef(rating_items[:, j], others.sum(1))[0, 1], rel=1e-10)
        assert if_deleted[j] == pytest.approx(pingouin.cronbach_alpha(pd.DataFrame(others))[0], rel=1e-10)


def test_alpha_with_item_reversed_matches_recomputation(rating_items):
    import pingouin

    # reference: pingouin.cronbach_alpha live after reverse keying (1 + 5 - x) one column
    cov = np.cov(rating_items, rowvar=False)
    reversed_alpha = alpha_with_item_reversed_from_cov(cov)
    for j in range(rating_items.shape[1]):
        flipped = rating_items.copy()
        flipped[:, j] = 6 - flipped[:, j]
        assert reversed_alpha[j] == pytest.approx(pingouin.cronbach_alpha(pd.DataFrame(flipped))[0], rel=1e-12)


def test_lambdas_against_guttman_1945_formulas(rating_items):
    # reference: Guttman (1945) formulas written out with explicit loops and OLS regressions (numpy.linalg.lstsq)
    x = rating_items
    n, k = x.shape
    cov = np.cov(x, rowvar=False)
    total = sum(cov[i, j] for i in range(k) for j in range(k))
    lambda1 = 1 - sum(cov[j, j] for j in range(k)) / total
    squares = sum(cov[i, j] ** 2 for i in range(k) for j in range(k) if i != j)
    assert guttman_lambda2_from_cov(cov) == pytest.approx(lambda1 + math.sqrt(k / (k - 1) * squares) / total,
                                                          rel=1e-12)
    residual_variances = []
    for j in range(k):
        design = np.column_stack([np.ones(n), np.delete(x, j, axis=1)])
        coefficients = np.linalg.lstsq(design, x[:, j], rcond=None)[0]
        residual_variances.append(np.var(x[:, j] - design @ coefficients, ddof=1))
    assert guttman_lambda6_from_cov(cov) == pytest.approx(1 - sum(residual_variances) / total, rel=1e-10)
    # Guttman (1945): lambda2 >= lambda3 (= alpha)
    assert guttman_lambda2_from_cov(cov) >= cronbach_alpha_from_cov(cov)


def test_inter_item_correlations_match_numpy(rating_items):
    # reference: numpy.corrcoef
    corr = np.corrcoef(rating_items, rowvar=False)
    upper = corr[np.triu_indices(corr.shape[0], 1)]
    np.testing.assert_allclose(inter_item_correlations(np.cov(rating_items, rowvar=False)),
                               (upper.mean(), upper.min(), upper.max()), rtol=1e-12)


def test_pairwise_covariance_matches_pandas(rating_items):
    # reference: pandas.DataFrame.cov (pairwise complete observations)
    rng = np.random.default_rng(7)
    with_gaps = rating_items.copy()
    with_gaps[rng.random(with_gaps.shape) < 0.1] = np.nan
    stats = item_covariance(with_gaps, pairwise=True)
    frame = pd.DataFrame(with_gaps)
    np.testing.assert_allclose(stats.cov, frame.cov().to_numpy(), rtol=1e-10)
    np.testing.assert_allclose(stats.pair_counts, frame.notna().astype(int).T @ frame.notna().astype(int))
    listwise = item_covariance(with_gaps)
    np.testing.assert_allclose(listwise.cov, frame.dropna().cov().to_numpy(), rtol=1e-10)
    assert listwise.n_used == len(frame.dropna())


def test_parallel_items_give_spearman_brown():
    # reference: Spearman-Brown formula k rho / (1 + (k - 1) rho) on an exact compound-symmetric matrix,
    # and on large simulated parallel items
    k, rho, variance = 7, 0.35, 2.5
    cov = variance * (rho * np.ones((k, k)) + (1 - rho) * np.eye(k))
    expected = k * rho / (1 + (k - 1) * rho)
    assert cronbach_alpha_from_cov(cov) == pytest.approx(expected, rel=1e-12)
    rng = np.random.default_rng(11)
    simulated = congeneric_items(200_000, [math.sqrt(rho)] * k, [math.sqrt(1 - rho)] * k, rng, levels=None)
    assert cronbach_alpha_from_cov(np.cov(simulated, rowvar=False)) == pytest.approx(expected, abs=0.005)


@settings(max_examples=40, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), k=st.integers(2, 8))
def test_alpha_is_invariant_to_item_order_and_double_reversal(seed, k):
    # property (Cronbach 1951: alpha depends on the item set, not its order); reversing twice is identity
    rng = np.random.default_rng(seed)
    x = congeneric_items(60, rng.uniform(0.2, 0.9, k), rng.uniform(0.4, 1.0, k), rng)
    cov = np.cov(x, rowvar=False)
    order = rng.permutation(k)
    assert cronbach_alpha_from_cov(cov[np.ix_(order, order)]) == pytest.approx(cronbach_alpha_from_cov(cov),
                                                                               rel=1e-10, abs=1e-12)
    twice = 6 - (6 - x)
    assert cronbach_alpha_from_cov(np.cov(twice, rowvar=False)) == pytest.approx(cronbach_alpha_from_cov(cov),
                                                                                 rel=1e-10, abs=1e-12)


def test_degenerate_matrices_give_nan_not_errors():
    # common practice, no source: undefined statistics are NaN
    assert math.isnan(cronbach_alpha_from_cov(np.ones((1, 1))))
    assert math.isnan(cronbach_alpha_from_cov(np.zeros((3, 3))))
    constant_item = np.array([[1.0, 0.5, 0.0], [0.5, 1.0, 0.0], [0.0, 0.0, 0.0]])
    assert math.isnan(standardized_alpha_from_cov(constant_item))
    assert math.isnan(item_rest_correlations_from_cov(constant_item)[2])
    assert math.isnan(guttman_lambda6_from_cov(constant_item))
    singular = np.ones((3, 3))
    assert math.isnan(guttman_lambda6_from_cov(singular))
    assert all(math.isnan(b) for b in feldt_alpha_ci(0.8, 2, 5))
