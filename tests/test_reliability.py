"""scale_reliability, omega, bootstrap, flags and subgroups, checked against outside references."""
from __future__ import annotations

import json
import math
import re

import numpy as np
import pandas as pd
import pytest

from scalewright.results import to_jsonable
from scalewright.stats.bootstrap import bootstrap_alpha
from scalewright.stats.omega import fit_one_factor, omega_total_from_cov
from scalewright.stats.reliability import reliability_from_cov, scale_reliability
from scalewright.stats.reliability_coefficients import alpha_difference_test
from scalewright.stats.reliability_flags import ReliabilityThresholds
from scalewright.stats.reliability_groups import ScaleReliabilityReport, compare_alphas, reliability_by_group
from scalewright.stats.subgroups import split_by


def rating_scale(n: int, k: int, rng: np.random.Generator, *, loading: float = 0.75, levels: int = 5) -> np.ndarray:
    """Congeneric continuous items cut at fixed thresholds into codes 1..levels."""
    factor = rng.standard_normal(n)
    continuous = loading * factor[:, None] + math.sqrt(1 - loading**2) * rng.standard_normal((n, k))
    cuts = np.linspace(-1.5, 1.5, levels - 1)
    return 1.0 + (continuous[:, :, None] > cuts).sum(axis=2)


def population_omega(loadings, error_variances) -> float:
    # McDonald (1999): omega = (sum lambda)^2 / ((sum lambda)^2 + sum psi)
    common = float(np.sum(loadings)) ** 2
    return common / (common + float(np.sum(error_variances)))


# ---------------------------------------------------------------------------------------------------- omega

@pytest.mark.parametrize("item_sd", [np.ones(6), np.array([0.5, 1.0, 2.0, 1.5, 0.8, 3.0])],
                         ids=["equal-variances", "unequal-variances"])
def test_omega_matches_congeneric_population_value(item_sd):
    # reference: closed-form population omega of a congeneric model (McDonald 1999) on large simulated data
    rng = np.random.default_rng(31)
    standardized = np.array([0.8, 0.7, 0.6, 0.5, 0.65, 0.4])
    loadings = standardized * item_sd
    errors = (1 - standardized**2) * item_sd**2
    n = 200_000
    data = rng.standard_normal(n)[:, None] * loadings + rng.standard_normal((n, 6)) * np.sqrt(errors)
    assert omega_total_from_cov(np.cov(data, rowvar=False)) == pytest.approx(population_omega(loadings, errors),
                                                                              abs=0.003)
    # on the exact population matrix the fit recovers the model
    population_cov = np.outer(loadings, loadings) + np.diag(errors)
    fit = fit_one_factor(population_cov)
    np.testing.assert_allclose(fit.loadings, loadings, rtol=1e-4)
    assert omega_total_from_cov(population_cov) == pytest.approx(population_omega(loadings, errors), abs=1e-6)


def test_omega_three_items_closed_form_on_holzinger_swineford():
    # reference: semopy's bundled Holzinger & Swineford (1939) data; for three items the one-factor model is
    # just identified: lambda_1 = sqrt(s12 s13 / s23) (cyclic), omega = (sum lambda)^2 / sum(S) (docs/references.md)
    from semopy.examples import holzinger39

    data = holzinger39.get_data()[["x1", "x2", "x3"]].to_numpy(dtype=np.float64)
    s = np.cov(data, rowvar=False)
    closed_loadings = np.sqrt([s[0, 1] * s[0, 2] / s[1, 2], s[0, 1] * s[1, 2] / s[0, 2],
                               s[0, 2] * s[1, 2] / s[0, 1]])
    fit = fit_one_factor(s)
    assert fit.method == "ml"
    assert fit.converged
    assert not fit.heywood_items
    np.testing.assert_allclose(fit.loadings, closed_loadings, rtol=1e-5)  # L-BFGS-B stopping tolerance
    assert omega_total_from_cov(s) == pytest.approx(closed_loadings.sum() ** 2 / s.sum(), abs=1e-6)


def test_omega_signs_are_aligned_and_heywood_case_noted():
    # common practice, no source: a one-factor solution's sign is arbitrary; we make the loading sum positive
    rng = np.random.default_rng(5)
    x = rating_scale(3000, 5, rng)
    fit = fit_one_factor(np.cov(x, rowvar=False))
    assert fit.loadings.sum() > 0
    assert (fit.loadings > 0).all()
    # a Heywood case: item 1 correlates with the others beyond what its variance allows
    corr = np.array([[1.0, 0.9, 0.9, 0.9], [0.9, 1.0, 0.7, 0.7], [0.9, 0.7, 1.0, 0.95], [0.9, 0.7, 0.95, 1.0]])
    result = reliability_from_cov(corr, 500, item_names=["a", "b", "c", "d"])
    assert result.heywood_items
    assert "omega-heywood" in {note.code for note in result.notes}


# ---------------------------------------------------------------------------------------------- bootstrap

def _alpha_statistic(*columns, axis=-1):
    data = np.stack(columns, axis=-1)
    k = data.shape[-1]
    return k / (k - 1) * (1 - data.var(axis=-2, ddof=1).sum(-1) / data.sum(-1).var(axis=-1, ddof=1))


@pytest.mark.parametrize("method", ["percentile", "BCa"])
def test_bootstrap_matches_scipy_with_the_same_draws(method):
    # reference: scipy.stats.bootstrap (paired resampling of rows), same Generator seed, hence the same draws
    from scipy.stats import bootstrap

    x = rating_scale(80, 5, np.random.default_rng(9), loading=0.6)
    reference = bootstrap(tuple(x.T), _alpha_statistic, paired=True, vectorized=True, n_resamples=999,
                          confidence_level=0.9, method=method, rng=np.random.default_rng(123))
    ours = bootstrap_alpha(x, n_resamples=999, confidence_level=0.9, seed=123)
    interval = ours.percentile_ci if method == "percentile" else ours.bca_ci
    np.testing.assert_allclose(interval, tuple(reference.confidence_interval), rtol=1e-9)
    assert ours.standard_error == pytest.approx(reference.standard_error, rel=1e-9)


def test_bootstrap_pairwise_on_complete_data_equals_listwise_and_is_reproducible():
    # reference: on complete data pairwise and listwise covariances coincide (definition)
    x = rating_scale(300, 6, np.random.default_rng(2))
    a = bootstrap_alpha(x, n_resamples=300, seed=4)
    b = bootstrap_alpha(x, n_resamples=300, seed=4, pairwise=True)
    np.testing.assert_allclose(a.bca_ci, b.bca_ci, rtol=1e-10)
    assert bootstrap_alpha(x, n_resamples=300, seed=4).percentile_ci == a.percentile_ci


def test_bootstrap_notes_are_codes_with_values():
    tiny = bootstrap_alpha(np.array([[1.0, 2.0], [2.0, 3.0]]), n_resamples=20, seed=1)
    assert [n.code for n in tiny.notes] == ["bootstrap-too-small"]
    assert np.isnan(tiny.standard_error)
    # three rows, two of them identical: some resamples draw one row pattern only and have no variance
    few = bootstrap_alpha(np.array([[1.0, 1.0], [1.0, 1.0], [2.0, 3.0]]), n_resamples=200, seed=3)
    without = [n for n in few.notes if n.code == "bootstrap-resamples-without-alpha"]
    assert len(without) == 1
    assert without[0].values["count"] > 0
    assert few.to_dict()["notes"][0]["code"] == "bootstrap-resamples-without-alpha"


# --------------------------------------------------------------------------------------- scale_reliability

@pytest.mark.parametrize("as_codes", [False, True], ids=["float-values", "one-byte-codes"])
def test_scale_reliability_matches_pingouin_and_item_descriptives_match_pandas(as_codes):
    # reference: pingouin.cronbach_alpha on complete data; pandas describe/value_counts for item descriptives
    import pingouin

    from scalewright.answer_codes import ItemAnswers

    rng = np.random.default_rng(44)
    x = rating_scale(250, 6, rng)
    names = [f"q{j}" for j in range(1, 7)]
    data = ItemAnswers.from_codes(np.asfortranarray((x - 1).astype(np.uint8)), 1, 5) if as_codes else x
    result = scale_reliability(data, item_names=names, low=1, high=5)
    alpha, ci = pingouin.cronbach_alpha(pd.DataFrame(x))
    assert result.alpha == pytest.approx(alpha, rel=1e-10)
    np.testing.assert_allclose(result.alpha_ci, ci, atol=5.01e-4)  # pingouin rounds to 3 decimals
    frame = pd.DataFrame(x, columns=names)
    for name in names:
        item = result.items[name]
        assert item.mean == pytest.approx(frame[name].mean(), rel=1e-12)
        assert item.sd == pytest.approx(frame[name].std(), rel=1e-12)
        counts = frame[name].value_counts()
        assert item.counts == {str(level): int(counts.get(float(level), 0)) for level in range(1, 6)}
        assert item.floor_pct == pytest.approx(100 * (frame[name] == 1).mean(), rel=1e-12)
        assert item.ceiling_pct == pytest.approx(100 * (frame[name] == 5).mean(), rel=1e-12)
    assert result.n_used == 250
    assert result.n_set_aside == 0


def test_listwise_and_pairwise_missing_handling():
    # reference: pingouin.cronbach_alpha computed live, on the rows pandas dropna keeps (listwise) and with its
    # nan_policy="pairwise" (alpha of pandas' pairwise DataFrame.cov)
    import pingouin

    rng = np.random.default_rng(8)
    x = rating_scale(400, 5, rng)
    x[rng.random(x.shape) < 0.08] = np.nan
    names = list("abcde")
    listwise = scale_reliability(x, item_names=names, low=1, high=5)
    complete = pd.DataFrame(x).dropna()
    assert listwise.n_used == len(complete)
    assert listwise.n_set_aside == 400 - len(complete)
    assert listwise.alpha == pytest.approx(pingouin.cronbach_alpha(complete)[0], rel=1e-12)
    assert "reliability-listwise-set-aside" in {note.code for note in listwise.notes}
    pairwise = scale_reliability(x, item_names=names, low=1, high=5, pairwise=True)
    assert pairwise.missing_handling == "pairwise"
    assert pairwise.alpha == pytest.approx(pingouin.cronbach_alpha(pd.DataFrame(x), nan_policy="pairwise")[0],
                                           rel=1e-12)
    assert "pairwise-deletion" in {note.code for note in pairwise.notes}
    assert pairwise.items["a"].missing_pct == pytest.approx(100 * np.isnan(x[:, 0]).mean(), rel=1e-12)


def test_miskeyed_item_is_flagged_and_clean_scale_is_not():
    # reference: simulated data with one item answered on reversed wording (known truth of the generator)
    rng = np.random.default_rng(2026)
    clean = rating_scale(600, 6, rng, loading=0.7)
    names = [f"wl{j}" for j in range(1, 7)]
    clean_result = scale_reliability(clean, item_names=names, low=1, high=5)
    assert not [f for f in clean_result.flags if f.code in ("miskey-suspect", "weak-item", "low-reliability")]
    miskeyed = clean.copy()
    miskeyed[:, 2] = 6 - miskeyed[:, 2]
    result = scale_reliability(miskeyed, item_names=names, low=1, high=5)
    suspects = [f for f in result.flags if f.code == "miskey-suspect"]
    assert [f.item for f in suspects] == ["wl3"]
    # the message gives alpha with the item reversed, which is the clean scale's alpha
    from scalewright.present.messages import flag_message

    assert f"{clean_result.alpha:.2f}".lstrip("0") in flag_message(suspects[0])


def test_miskey_flag_on_pingouin_cronbach_alpha_data():
    # reference: pingouin's bundled `cronbach_alpha` data; its Q5 and Q6 have negative item-rest r
    # (docs/references.md); pingouin's docstring alpha 0.5917 is checked live here
    import pingouin

    long = pingouin.read_dataset("cronbach_alpha")
    wide = long.pivot(index="Subj", columns="Items", values="Scores")
    result = scale_reliability(wide.to_numpy(dtype=np.float64), item_names=list(wide.columns), low=1, high=7)
    reference = pingouin.cronbach_alpha(data=long, items="Items", scores="Scores", subject="Subj")[0]
    assert result.alpha == pytest.approx(reference, rel=1e-10)
    assert result.items["Q5"].item_rest_r < 0
    assert result.items["Q6"].item_rest_r < 0
    # their loadings on the first factor are near zero (|loading| < .10): they measure little of the scale
    # rather than pointing against it, so the flag is weak-item, not miskey-suspect (the mis-key flag rests
    # on the loading's sign; item-rest r only supports it)
    assert {("Q5", "weak-item"), ("Q6", "weak-item")} <= result.flag_codes()
    assert not {f.item for f in result.flags if f.code == "miskey-suspect"} & {"Q5", "Q6"}
    assert (None, "low-reliability") in result.flag_codes()


def test_redundant_pair_and_excess_reliability_flags():
    # reference: thresholds .85 (common practice, no source) and .95 (Streiner 2003, recalled from memory)
    rng = np.random.default_rng(3)
    factor = rng.standard_normal(2000)
    x = factor[:, None] + 0.15 * rng.standard_normal((2000, 4))
    result = scale_reliability(x, item_names=list("abcd"), low=-5, high=5)
    codes = result.flag_codes()
    assert (None, "excess-reliability") in codes
    assert ("a", "redundant-pair") in codes
    relaxed = scale_reliability(x, item_names=list("abcd"), low=-5, high=5,
                                thresholds=ReliabilityThresholds(redundant_r=0.999, excess_alpha=0.999))
    assert not relaxed.flags


def test_degenerate_inputs_give_nulls_and_notes():
    # common practice, no source: undefined statistics are null, with a reason
    one_item = scale_reliability(np.arange(10.0)[:, None], item_names=["a"], low=0, high=9)
    assert math.isnan(one_item.alpha)
    assert "reliability-one-item" in {n.code for n in one_item.notes}
    two_rows = scale_reliability(np.array([[1.0, 2, 3], [2, 3, 4]]), item_names=list("abc"), low=1, high=5)
    assert math.isnan(two_rows.alpha)
    assert {"code": "reliability-too-few-rows", "n_used": 2, "needed": 3} in [n.to_dict() for n in two_rows.notes]
    rng = np.random.default_rng(1)
    x = rating_scale(100, 4, rng)
    x[:, 1] = 3.0
    constant = scale_reliability(x, item_names=list("abcd"), low=1, high=5)
    assert math.isfinite(constant.alpha)
    assert math.isnan(constant.omega_total)
    assert math.isnan(constant.items["b"].item_rest_r)
    assert "items-no-variance" in {n.code for n in constant.notes}
    y = rating_scale(100, 3, rng)
    singular = scale_reliability(np.column_stack([y, y.sum(1)]), item_names=list("abcd"), low=1, high=15)
    assert math.isnan(singular.lambda6)
    assert "covariance-singular" in {n.code for n in singular.notes}
    for result in (one_item, two_rows, constant, singular):
        json.dumps(to_jsonable(result.to_dict()), allow_nan=False)


# ---------------------------------------------------------------------------------------------- subgroups

def test_feldt_two_alpha_test_against_f_distribution():
    # reference: Feldt (1969) W = (1 - a1)/(1 - a2) ~ F(n1 - 1, n2 - 1); scipy.stats.f computed live
    from scipy.stats import f

    w, p = alpha_difference_test(0.70, 120, 0.85, 200)
    assert w == pytest.approx(0.30 / 0.15, rel=1e-12)
    assert p == pytest.approx(2 * f.sf(2.0, 119, 199), rel=1e-12)
    # under the null, p-values are uniform: a size check on simulated equal-alpha groups, each alpha by
    # Cronbach's (1951) formula k/(k-1) (1 - sum s_j^2 / s_X^2) in numpy
    def alpha(x):
        k = x.shape[1]
        return k / (k - 1) * (1 - x.var(axis=0, ddof=1).sum() / x.sum(axis=1).var(ddof=1))

    rng = np.random.default_rng(12)
    p_values = []
    for _ in range(200):
        a = alpha(rating_scale(60, 5, rng))
        b = alpha(rating_scale(90, 5, rng))
        p_values.append(alpha_difference_test(a, 60, b, 90)[1])
    assert 0.01 <= np.mean(np.array(p_values) < 0.05) <= 0.11  # nominal .05, Monte Carlo spread


def test_reliability_by_group_with_holm_across_pairs():
    # reference: statsmodels.stats.multitest.multipletests(method="holm") recomputed in the test
    from statsmodels.stats.multitest import multipletests

    rng = np.random.default_rng(21)
    x = np.vstack([rating_scale(150, 5, rng, loading=0.8), rating_scale(150, 5, rng, loading=0.5),
                   rating_scale(150, 5, rng, loading=0.7), rating_scale(6, 5, rng)])
    shift = pd.Series(["day"] * 150 + ["night"] * 150 + ["rotating"] * 150 + ["on-call"] * 6, name="shift")
    split = split_by(shift, min_size=10, column="shift")
    groups = reliability_by_group(x, split, item_names=list("abcde"), low=1, high=5)
    assert set(groups.levels) == {"day", "night", "rotating"}
    assert groups.too_small == {"on-call": 6}
    assert len(groups.comparisons) == 3
    raw = [c.p for c in groups.comparisons]
    np.testing.assert_allclose([c.p_holm for c in groups.comparisons], multipletests(raw, method="holm")[1],
                               rtol=1e-12)
    for comparison in groups.comparisons:
        a, b = groups.levels[comparison.level_a], groups.levels[comparison.level_b]
        assert comparison.p == pytest.approx(alpha_difference_test(a.alpha, a.n_used, b.alpha, b.n_used)[1])
    overall = scale_reliability(x, item_names=list("abcde"), low=1, high=5)
    block = to_jsonable(ScaleReliabilityReport("s", "S", overall, (groups,)).to_dict())
    assert set(block["by"]["shift"]) == {"day", "night", "rotating"}
    assert block["too_small"]["shift"] == {"on-call": 6}
    assert compare_alphas({}) == ()


def test_one_factor_ml_fit_matches_factor_analyzer():
    # reference: factor_analyzer FactorAnalyzer(method="ml", n_factors=1) computed live; its L-BFGS-B stops
    # earlier than ours, hence rtol 1e-4
    from factor_analyzer import FactorAnalyzer

    rng = np.random.default_rng(17)
    x = rng.standard_normal(3000)[:, None] * np.array([0.8, 0.7, 0.6, 0.5, 0.4, 0.3]) \
        + rng.standard_normal((3000, 6)) * 0.7
    cov = np.cov(x, rowvar=False)
    corr = np.corrcoef(x, rowvar=False)
    model = FactorAnalyzer(n_factors=1, rotation=None, method="ml", is_corr_matrix=True, use_smc=True,
                           bounds=(0.005, 1), impute="drop", svd_method="lapack").fit(corr)
    reference = np.asarray(model.loadings_)[:, 0]
    reference = reference if reference.sum() > 0 else -reference
    fit = fit_one_factor(cov)
    assert fit.method == "ml"
    assert fit.converged
    np.testing.assert_allclose(fit.standardized_loadings, reference, rtol=1e-4)
    np.testing.assert_allclose(fit.uniquenesses / np.diag(cov), model.get_uniquenesses(), rtol=1e-3)


def test_answer_level_counts_of_a_wide_range_match_numpy():
    from scalewright.stats.item_analysis import answer_level_counts, item_descriptives

    # a 0..1000 range (the widest allowed), one reverse-keyed item, answers off the levels and missing
    rng = np.random.default_rng(14)
    given = rng.integers(0, 1001, size=(3000, 3)).astype(float)
    given[rng.random(given.shape) < 0.1] = np.nan
    given[5, 1] = 2.5
    reversed_mask = np.array([False, True, False])
    keyed = np.where(reversed_mask, 1000 - given, given)
    levels = np.arange(0, 1001).astype(float)
    counts = answer_level_counts(keyed, levels=levels, low=0, high=1000, reversed_mask=reversed_mask)
    for j in range(3):
        column = given[:, j]
        whole = column[~np.isnan(column) & (column == np.floor(column))].astype(int)
        # reference: numpy's unique counts of the answers as given
        values, reference = np.unique(whole, return_counts=True)
        np.testing.assert_array_equal(counts[j, values], reference)
        assert counts[j].sum() == reference.sum()
    described = item_descriptives(keyed, low=0, high=1000, reversed_mask=reversed_mask)
    assert described.off_level == 1
    np.testing.assert_allclose(described.mean, np.nanmean(keyed, axis=0))  # reference: numpy


def _five_item_answers(n: int, miskeyed: tuple[int, ...], seed: int) -> np.ndarray:
    """Five 5-point items of one factor (loadings .55-.80); the items in ``miskeyed`` are answered in reverse
    but not declared so (the forgotten reverse key)."""
    rng = np.random.default_rng(seed)
    loadings = np.array([0.8, 0.7, 0.65, 0.6, 0.55])
    trait = rng.normal(size=(n, 1))
    latent = trait * loadings + rng.normal(size=(n, 5)) * np.sqrt(1 - loadings**2)
    answers = np.clip(np.round(3 + 1.2 * latent), 1, 5)
    answers[:, list(miskeyed)] = 6 - answers[:, list(miskeyed)]
    return answers


@pytest.mark.parametrize("miskeyed", [(2,), (4,), (0, 3), (1, 4), (3, 4)])
@pytest.mark.parametrize("seed", [1, 2])
def test_miskey_flags_point_at_exactly_the_miskeyed_items(miskeyed, seed):
    # ground truth is the generator: the items answered in reverse and not declared so
    from scalewright.present.messages import flag_message

    names = [f"i{j}" for j in range(1, 6)]
    result = scale_reliability(_five_item_answers(400, miskeyed, seed), item_names=names, low=1, high=5)
    flagged = {f.item for f in result.flags if f.code == "miskey-suspect"}
    assert flagged == {names[j] for j in miskeyed}
    for flag in result.flags:
        sentence = flag_message(flag)
        numbers = re.findall(r"alpha would be (\S+) instead of (\S+?)\.", sentence)
        assert all(new != old for new, old in numbers), sentence
    if len(miskeyed) == 2:  # the advice reverses both at once: alpha of the correctly keyed data
        keyed = _five_item_answers(400, (), seed)
        clean_alpha = scale_reliability(keyed, item_names=names, low=1, high=5).alpha
        assert any(f"alpha would be {clean_alpha:.2f}".replace("0.", ".", 1) in flag_message(f)
                   for f in result.flags if f.code == "miskey-suspect")


def test_no_alpha_sentence_when_reversing_changes_nothing_shown():
    from scalewright.present.messages import reliability_flag_message

    sentence = reliability_flag_message("miskey-suspect", {
        "item": "x1", "loading": -0.4, "item_rest_r": -0.2, "declared_reversed": False, "alpha": -0.6212,
        "alpha_reversed": -0.6199, "reversed_together": ("x1",)})
    assert "alpha would be" not in sentence
    assert "x1 runs against" in sentence


def test_weak_item_message_near_the_cutoff_reads_true():
    from scalewright.present.messages import reliability_flag_message

    sentence = reliability_flag_message("weak-item", {"item": "x1", "item_rest_r": 0.2996, "cutoff": 0.30})
    assert "item-rest r = .2996, below .30" in sentence


def test_reliability_notes_are_worded_in_present():
    # each note code has its own sentence (not the fallback "code: values"); the range is written as given
    from scalewright.notes import note
    from scalewright.present.messages import describe

    assert describe(note("reliability-too-few-rows", n_used=2, needed=3)) == (
        "only 2 usable row(s): the statistics need at least 3")
    assert describe(note("off-level-answers", count=4, low=1.0, high=5.0)).startswith(
        "4 answer(s) are not whole answer codes from 1 to 5;")
    assert describe(note("omega-heywood", items=("a", "b"))).startswith(
        "improper one-factor solution (Heywood case): the uniqueness of a, b reached")
