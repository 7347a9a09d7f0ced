"""The studentized range and the Tukey / Games-Howell pairs, checked live against scipy and pingouin."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pingouin as pg
import pytest
from scipy import stats

from scalewright.stats.range_pairs import games_howell_pairs, studentized_range_sf, tukey_pairs

# scipy integrates adaptively with epsabs=1e-11 (its source); its own values stray by up to about 6e-10 at
# tens of thousands of df, so the check allows 1e-9 absolute
ATOL = 1e-9


@pytest.mark.parametrize("k", [2, 3, 5, 9])
def test_studentized_range_tail_matches_scipy(k):
    q = np.array([0.02, 0.9, 2.5, 3.6, 5.0, 9.0, 40.0])
    for df in (1.0, 1.7, 4.3, 27.5, 310.0):
        # reference: scipy.stats.studentized_range (nested adaptive quadrature), computed live
        np.testing.assert_allclose(studentized_range_sf(q, k, df), stats.studentized_range.sf(q, k, df),
                                   rtol=0, atol=ATOL, err_msg=f"k={k}, df={df}")


def test_studentized_range_broadcasts_and_takes_scipys_infinite_df_form():
    q = np.array([[1.0, 3.0], [4.5, 0.0]])
    df = np.array([[6.0, 250_000.0], [12.0, 3.0]])
    # reference: scipy, which switches to the infinite-df form at 100,000 df
    np.testing.assert_allclose(studentized_range_sf(q, 4, df), stats.studentized_range.sf(q, 4, df),
                               rtol=0, atol=ATOL)
    assert studentized_range_sf(0.0, 3, 10.0) == 1.0
    assert studentized_range_sf(np.inf, 3, 10.0) == 0.0
    assert np.isnan(studentized_range_sf(2.0, 3, np.nan))
    assert np.isnan(studentized_range_sf(np.nan, 3, 10.0))


def _long_frame(samples):
    return pd.DataFrame({"score": np.concatenate(samples),
                         "level": np.repeat([f"g{i}" for i in range(len(samples))], [len(x) for x in samples])})


def _samples(seed, sizes=(12, 30, 7, 19), means=(3.0, 3.5, 2.6, 3.1), sds=(0.5, 1.2, 0.9, 0.7)):
    rng = np.random.default_rng(seed)
    return [rng.normal(m, s, n) for n, m, s in zip(sizes, means, sds, strict=True)]


@pytest.mark.parametrize("seed", [3, 4])
def test_games_howell_pairs_match_pingouin(seed):
    samples = _samples(seed)
    ours = games_howell_pairs(samples)
    # reference: pingouin.pairwise_gameshowell (levels g0..g3 sort as given, so the pairs come in our order)
    ref = pg.pairwise_gameshowell(_long_frame(samples), dv="score", between="level", effsize="hedges")
    np.testing.assert_allclose(ours.difference, ref["diff"], rtol=1e-12)
    np.testing.assert_allclose(ours.se, ref["se"], rtol=1e-12)
    np.testing.assert_allclose(ours.statistic, ref["T"], rtol=1e-12)
    np.testing.assert_allclose(ours.df, ref["df"], rtol=1e-12)
    np.testing.assert_allclose(ours.hedges_g, ref["hedges"], rtol=1e-12)
    np.testing.assert_allclose(ours.pvalue, ref["pval"], rtol=0, atol=ATOL)


def test_tukey_pairs_match_pingouin_and_scipy():
    samples = _samples(5)
    ours = tukey_pairs(samples)
    # reference: pingouin.pairwise_tukey
    ref = pg.pairwise_tukey(_long_frame(samples), dv="score", between="level", effsize="hedges")
    np.testing.assert_allclose(ours.statistic, ref["T"], rtol=1e-12)
    np.testing.assert_allclose(ours.se, ref["se"], rtol=1e-12)
    np.testing.assert_allclose(ours.hedges_g, ref["hedges"], rtol=1e-12)
    np.testing.assert_allclose(ours.pvalue, ref["p_tukey"], rtol=0, atol=ATOL)
    # reference: scipy.stats.tukey_hsd (Tukey-Kramer), the same family of pairs
    hsd = stats.tukey_hsd(*samples)
    np.testing.assert_allclose(ours.pvalue, hsd.pvalue[ours.first, ours.second], rtol=0, atol=ATOL)


def test_a_pair_of_two_levels_without_spread_has_no_test():
    samples = [np.full(5, 2.0), np.full(6, 3.0), np.array([1.0, 2.0, 4.0, 2.5, 3.5, 1.5])]
    pairs = games_howell_pairs(samples)
    assert np.isnan(pairs.pvalue[0])  # two constant levels: no standard error, no df
    assert np.isfinite(pairs.pvalue[1:]).all()
