"""Exact weighted score sums (summaries/exact_scores.py) and the weighted summary taken from them
(stats/weighted_scores.py): the same bits whatever the blocks and their order, the exact rational sums of
Python's ``fractions``, and numpy's / scipy's weighted and unweighted estimates to rounding."""
from __future__ import annotations

import math
from fractions import Fraction
from itertools import pairwise

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.stats.weighted_scores import exact_weighted_summary, exact_weighted_summary_of
from scalewright.summaries.base import merge_all
from scalewright.summaries.exact_scores import ExactWeightedScores


def _scores(seed: int, n: int = 500, *, spread: float = 3.0) -> tuple[np.ndarray, np.ndarray]:
    """Scores as a rating scale gives them (means of 3 or 4 answers from 1 to 5, some unscored) and survey
    weights across ``spread`` orders of magnitude, a few zero."""
    rng = np.random.default_rng(seed)
    answered = rng.integers(3, 5, n)
    scores = rng.integers(answered, 5 * answered + 1) / answered
    scores[rng.random(n) < 0.05] = np.nan
    weights = np.exp(rng.uniform(-spread, spread, n))
    weights[rng.random(n) < 0.04] = 0.0
    return scores, weights


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 10_000), cuts=st.lists(st.integers(1, 499), max_size=8), order=st.randoms())
def test_any_blocks_in_any_order_give_the_same_bits(seed, cuts, order):
    scores, weights = _scores(seed, spread=12.0)  # weights across ten orders of magnitude
    bounds = [0, *sorted(set(cuts)), len(weights)]
    parts = [ExactWeightedScores.from_values(scores[a:b], weights[a:b]) for a, b in pairwise(bounds)]
    order.shuffle(parts)
    merged, whole = merge_all(parts), ExactWeightedScores.from_values(scores, weights)
    assert exact_weighted_summary(merged) == exact_weighted_summary(whole)  # no NaN here: every field compared
    assert merged.n == whole.n
    assert merged.n_zero_weight == whole.n_zero_weight
    assert np.array_equal(merged.rows, whole.rows)


def test_sums_are_the_exact_rational_sums():
    # reference: Python's fractions, exact rational arithmetic on the same binary floats
    scores, weights = _scores(4, spread=12.0)
    weights[:3] = [1e-300, 1e200, 3.0]  # exponents far apart
    sums = ExactWeightedScores.from_values(scores, weights)
    used = ~np.isnan(scores) & (weights > 0)
    scale = Fraction(2) ** sums.weight_exp
    for value, total in zip(sums.values, sums.weight_int, strict=True):
        expected = sum(Fraction(float(w)) for w in weights[used & (scores == value)])
        assert Fraction(int(total)) * scale == expected
    assert Fraction(sums.sum_w2_int) * Fraction(2) ** sums.w2_exp == sum(Fraction(float(w)) ** 2 for w in weights[used])
    assert sums.n == int((~np.isnan(scores)).sum())
    assert sums.n_zero_weight == int((~np.isnan(scores) & (weights == 0)).sum())


def test_mean_and_sd_are_the_exactly_rounded_rational_values():
    # reference: the weighted mean and variance (divisor V1 - V2/V1) in Python's exact fractions, rounded once
    scores, weights = _scores(9)
    found = exact_weighted_summary_of(scores, weights)
    used = ~np.isnan(scores) & (weights > 0)
    x = [Fraction(float(v)) for v in scores[used]]
    w = [Fraction(float(v)) for v in weights[used]]
    v1, v2 = sum(w), sum(a * a for a in w)
    mean = sum(a * b for a, b in zip(w, x, strict=True)) / v1
    variance = sum(a * (b - mean) ** 2 for a, b in zip(w, x, strict=True)) / (v1 - v2 / v1)
    assert found.mean == float(mean)
    assert found.sd == math.sqrt(float(variance))
    assert found.n_effective == float(v1 * v1 / v2)
    assert found.sum_of_weights == float(v1)


def test_equals_numpys_weighted_estimates_to_rounding():
    from scalewright.stats.weighted import weighted_summary

    scores, weights = _scores(12)
    found = exact_weighted_summary_of(scores, weights, weight_column="wt")
    used = ~np.isnan(scores) & (weights > 0)
    x, w = scores[used], weights[used]
    # numpy computed live: np.average with weights; np.cov(aweights=w, ddof=1) has the divisor V1 - V2/V1
    assert found.mean == pytest.approx(np.average(x, weights=w), rel=1e-14)
    assert found.sd == pytest.approx(math.sqrt(np.cov(x, aweights=w, ddof=1)), rel=1e-14)
    assert found.n_effective == pytest.approx(w.sum() ** 2 / np.sum(w**2), rel=1e-14)  # Kish (1965)
    assert found.design_effect == pytest.approx(w.size * np.sum(w**2) / w.sum() ** 2, rel=1e-14)
    assert found.n == int((~np.isnan(scores)).sum())
    assert found.n_zero_weight == int((~np.isnan(scores) & (weights == 0)).sum())
    assert found.weight_column == "wt"
    # the float route of the weighted moments (stats.weighted.weighted_summary) to rounding
    floats = weighted_summary(scores, weights)
    assert found.skewness == pytest.approx(floats.skewness, rel=1e-12, abs=1e-14)
    assert found.kurtosis == pytest.approx(floats.kurtosis, rel=1e-12, abs=1e-14)


def test_equal_weights_give_the_unweighted_estimates():
    from scipy import stats

    scores, _ = _scores(21)
    found = exact_weighted_summary_of(scores, np.full(scores.size, 2.5))
    x = scores[~np.isnan(scores)]
    # numpy and scipy computed live: the sample mean and sd (n - 1), the adjusted skewness and excess kurtosis
    assert found.mean == pytest.approx(np.mean(x), rel=1e-14)
    assert found.sd == pytest.approx(np.std(x, ddof=1), rel=1e-14)
    assert found.n_effective == pytest.approx(x.size, rel=1e-14)
    assert found.skewness == pytest.approx(stats.skew(x, bias=False), rel=1e-10)
    assert found.kurtosis == pytest.approx(stats.kurtosis(x, bias=False), rel=1e-10)


@pytest.mark.parametrize(("scores", "weights"), [
    ([1.0, np.nan], [0.0, 2.0]),           # no row with a score and a weight
    ([2.0, 3.0], [1.5, 0.0]),              # one
    ([2.0, 3.0], [1.5, 0.5]),              # two: a mean and sd, no moments
    ([4.0, 4.0, 4.0, np.nan], [1, 2, 3, 4]),  # one value only
    ([], []),                              # no rows at all
])
def test_small_samples_as_the_float_route_gives_them(scores, weights):
    from scalewright.stats.weighted import weighted_summary

    found = exact_weighted_summary_of(np.array(scores, dtype=float), np.array(weights, dtype=float))
    expected = weighted_summary(np.array(scores, dtype=float), np.array(weights, dtype=float))
    for field in ("n", "n_zero_weight", "notes"):
        assert getattr(found, field) == getattr(expected, field)
    for field in ("n_effective", "sum_of_weights", "design_effect", "mean", "sd", "skewness", "kurtosis"):
        a, b = getattr(found, field), getattr(expected, field)
        assert (math.isnan(a) and math.isnan(b)) or a == pytest.approx(b, rel=1e-14), field
