"""Ordinal alpha, ordinal omega and the sum score's reliability against population values."""
from __future__ import annotations

import numpy as np
import pytest
from scipy.special import ndtr

from scalewright.stats.ordinal_reliability import ordinal_advice, ordinal_reliability
from scalewright.stats.polychoric_matrix import polychoric_of_codes

LOADINGS = np.array([0.8, 0.7, 0.6, 0.5, 0.7, 0.6])
CUTS = [np.array([-1.5, -0.5, 0.3, 1.0]), np.array([-1.0, 0.0, 1.0, 2.0]), np.array([-2.0, -1.2, -0.2, 0.6]),
        np.array([0.2, 0.8, 1.2, 1.6]), np.array([-1.0, -0.4, 0.4, 1.0]), np.array([-0.5, 0.0, 0.5, 1.5])]


def one_factor_codes(rng: np.random.Generator, n: int) -> np.ndarray:
    factor = rng.standard_normal(n)
    latent = factor[:, None] * LOADINGS + rng.standard_normal((n, LOADINGS.size)) * np.sqrt(1 - LOADINGS**2)
    return np.column_stack([np.searchsorted(c, latent[:, j]) for j, c in enumerate(CUTS)]).astype(np.uint8)


@pytest.fixture(scope="module")
def sample() -> tuple[np.ndarray, object]:
    codes = one_factor_codes(np.random.default_rng(7), 200_000)
    return codes, ordinal_reliability(polychoric_of_codes(codes, 5, item_names=list("abcdef")))


def test_ordinal_alpha_and_omega_recover_their_population_values(sample) -> None:
    _, result = sample
    k = LOADINGS.size
    latent = np.outer(LOADINGS, LOADINGS)
    np.fill_diagonal(latent, 1.0)
    # Zumbo et al. (2007): ordinal alpha is alpha of the latent correlations (closed form from the loadings)
    assert result.alpha == pytest.approx(k / (k - 1) * (1 - k / latent.sum()), abs=0.01)
    # McDonald (1999): omega = (sum lambda)^2 / ((sum lambda)^2 + sum(1 - lambda^2)) of the latent model
    common = LOADINGS.sum() ** 2
    assert result.omega == pytest.approx(common / (common + (1 - LOADINGS**2).sum()), abs=0.01)
    np.testing.assert_allclose(list(result.loadings.values()), LOADINGS, atol=0.015)
    assert result.n_used == 200_000


def test_sum_score_reliability_recovers_the_variance_share_of_the_factor(sample) -> None:
    codes, result = sample
    # definition (Green & Yang 2009): var(E[sum | factor]) / var(sum). E[X_j | f] = sum_c Phi((lambda_j f -
    # tau_jc) / sqrt(1 - lambda_j^2)) in closed form; its variance over 300,000 fresh factor draws, the
    # sum's variance from the sample
    factor = np.random.default_rng(8).standard_normal(300_000)
    expected = sum(ndtr((lam * factor[:, None] - cuts) / np.sqrt(1 - lam**2)).sum(axis=1)
                   for lam, cuts in zip(LOADINGS, CUTS, strict=True))
    population = expected.var() / codes.sum(axis=1).astype(float).var()
    assert result.omega_sum_score == pytest.approx(population, abs=0.01)
    assert result.omega_sum_score < result.omega  # the answers' coarseness costs reliability


def test_reverse_keyed_items_give_the_same_reliabilities(sample) -> None:
    codes, result = sample
    turned = codes.copy()
    turned[:, [1, 4]] = 4 - codes[:, [1, 4]]
    matrix = polychoric_of_codes(turned, 5, item_names=list("abcdef"))
    keyed = ordinal_reliability(matrix.keyed([False, True, False, False, True, False]))
    for name in ("alpha", "omega", "omega_sum_score"):
        assert getattr(keyed, name) == pytest.approx(getattr(result, name), abs=1e-7)


def test_advice_names_few_options_and_skewed_items() -> None:
    symmetric = np.array([[10, 20, 40, 20, 10], [12, 18, 40, 18, 12]])
    assert ordinal_advice(symmetric, 5, ["a", "b"]) == ()
    # Rhemtulla et al. (2012): fewer than five options call for ordinal methods
    (few,) = ordinal_advice(symmetric[:, 1:4], 4, ["a", "b"])
    assert few.code == "ordinal-few-options"
    assert few.values["options"] == 4
    # answers piled at the top: skewness about -1.6, computed live by scipy.stats.skew on the answers
    from scipy.stats import skew

    piled = np.array([[2, 3, 5, 20, 70], [10, 20, 40, 20, 10]])
    (skewed,) = ordinal_advice(piled, 5, ["a", "b"])
    assert skewed.code == "ordinal-skewed-items"
    assert skewed.values["items"] == ("a",)
    assert skewed.values["max_abs_skewness"] == pytest.approx(abs(skew(np.repeat(np.arange(5), piled[0]))))
