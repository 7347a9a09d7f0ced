"""Subgroup comparisons checked against scipy (computed live) and the published effect-size formulas."""
from __future__ import annotations

import json
import re

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from scalewright.errors import UsageError
from scalewright.present.groups import (
    compare_tables,
    comparison_record,
    comparison_sentence,
)
from scalewright.present.messages import describe
from scalewright.present.render import (
    render_csv,
    render_json,
    render_markdown,
    render_text,
)
from scalewright.stats.groups import compare_groups, holm, pvalue_holm

TOL = dict(rtol=1e-6, atol=1e-9)


def two_groups(seed: int, n1: int = 37, n2: int = 29, shift: float = 0.4):
    rng = np.random.default_rng(seed)
    x = rng.normal(3.0 + shift, 0.8, n1)
    y = rng.normal(3.0, 1.3, n2)
    groups = pd.Series(["day"] * n1 + ["night"] * n2, name="shift")
    return x, y, np.r_[x, y], groups


def many_groups(seed: int, sizes=(31, 24, 40), means=(3.0, 3.4, 3.1), sds=(0.6, 1.1, 0.8)):
    rng = np.random.default_rng(seed)
    samples = [rng.normal(m, s, n) for n, m, s in zip(sizes, means, sds, strict=True)]
    labels = ["A", "B", "C", "D", "E"][:len(sizes)]
    groups = pd.Series(np.repeat(labels, sizes), name="site")
    return samples, np.concatenate(samples), groups


@pytest.mark.parametrize("seed", [11, 12])
def test_two_groups_agree_with_scipy(seed):
    x, y, scores, groups = two_groups(seed)
    c = compare_groups(scores, groups)
    # reference: scipy.stats.ttest_ind(equal_var=False) is Welch's t test
    welch = stats.ttest_ind(x, y, equal_var=False)
    np.testing.assert_allclose([c.test.statistic, c.test.pvalue], [welch.statistic, welch.pvalue], **TOL)
    np.testing.assert_allclose(c.test.df, welch.df, **TOL)
    # reference: scipy.stats.mannwhitneyu, two-sided, its default (asymptotic with continuity here)
    u = stats.mannwhitneyu(x, y, alternative="two-sided")
    np.testing.assert_allclose([c.nonparametric.statistic, c.nonparametric.pvalue], [u.statistic, u.pvalue], **TOL)
    # reference: scipy.stats.levene, median-centred (Brown-Forsythe) is scipy's default
    lev = stats.levene(x, y)
    np.testing.assert_allclose([c.levene.statistic, c.levene.pvalue], [lev.statistic, lev.pvalue], **TOL)


def test_student_option_gives_students_t():
    x, y, scores, groups = two_groups(3)
    c = compare_groups(scores, groups, student=True)
    ref = stats.ttest_ind(x, y, equal_var=True)  # reference: scipy, Student's pooled-variance t test
    np.testing.assert_allclose([c.test.statistic, c.test.pvalue, c.test.df], [ref.statistic, ref.pvalue, ref.df],
                               **TOL)
    assert c.test.name == "Student's t"


def test_hedges_g_and_ci_match_the_formula():
    x, y, scores, groups = two_groups(21, n1=18, n2=25)
    c = compare_groups(scores, groups, confidence_level=0.90)
    n1, n2 = len(x), len(y)
    # Hedges (1981): g = d * (1 - 3 / (4 (n1 + n2) - 9)), d with the pooled sd
    pooled = np.sqrt(((n1 - 1) * x.var(ddof=1) + (n2 - 1) * y.var(ddof=1)) / (n1 + n2 - 2))
    g = (x.mean() - y.mean()) / pooled * (1 - 3 / (4 * (n1 + n2) - 9))
    np.testing.assert_allclose(c.effect_size.value, g, **TOL)
    # normal-theory interval: g +- t_{n1+n2-2} sqrt((n1+n2)/(n1 n2) + g^2 / (2 (n1+n2))) (Hedges & Olkin 1985)
    se = np.sqrt((n1 + n2) / (n1 * n2) + g ** 2 / (2 * (n1 + n2)))
    crit = stats.t.ppf(0.95, n1 + n2 - 2)
    np.testing.assert_allclose(c.effect_size.ci, [g - crit * se, g + crit * se], **TOL)


def test_rank_biserial_matches_kerby_formula():
    x, y, scores, groups = two_groups(5)
    c = compare_groups(scores, groups)
    # Kerby (2014): r = P(x > y) - P(x < y), ties counting half, i.e. 2 U1 / (n1 n2) - 1
    diff = x[:, None] - y[None, :]
    r = (np.sum(diff > 0) - np.sum(diff < 0)) / diff.size
    np.testing.assert_allclose(c.nonparametric_effect_size.value, r, **TOL)
    assert np.sign(r) == np.sign(c.effect_size.value)  # positive: the first level scores higher, like g


@pytest.mark.parametrize("seed", [31, 32])
def test_many_groups_agree_with_scipy_and_formulas(seed):
    samples, scores, groups = many_groups(seed)
    c = compare_groups(scores, groups)
    # reference: scipy.stats.kruskal
    h = stats.kruskal(*samples)
    np.testing.assert_allclose([c.nonparametric.statistic, c.nonparametric.pvalue], [h.statistic, h.pvalue], **TOL)
    # reference: Welch (1951) F computed from its published formula
    n = np.array([len(s) for s in samples])
    m = np.array([s.mean() for s in samples])
    v = np.array([s.var(ddof=1) for s in samples])
    k = len(samples)
    w = n / v
    mw = np.sum(w * m) / np.sum(w)
    lam = np.sum((1 - w / w.sum()) ** 2 / (n - 1))
    f = (np.sum(w * (m - mw) ** 2) / (k - 1)) / (1 + 2 * (k - 2) / (k ** 2 - 1) * lam)
    df2 = (k ** 2 - 1) / (3 * lam)
    np.testing.assert_allclose([c.test.statistic, c.test.df, c.test.df2], [f, k - 1, df2], **TOL)
    np.testing.assert_allclose(c.test.pvalue, stats.f.sf(f, k - 1, df2), **TOL)
    # omega-squared (Hays 1963; Olejnik & Algina 2003) from the classic ANOVA sums of squares
    grand = scores.mean()
    ss_b = np.sum(n * (m - grand) ** 2)
    ss_w = np.sum((n - 1) * v)
    ms_w = ss_w / (n.sum() - k)
    np.testing.assert_allclose(c.effect_size.value, (ss_b - (k - 1) * ms_w) / (ss_b + ss_w + ms_w), **TOL)
    # epsilon-squared for Kruskal-Wallis (Tomczak & Tomczak 2014): H / ((N^2 - 1) / (N + 1))
    total = n.sum()
    np.testing.assert_allclose(c.nonparametric_effect_size.value, h.statistic / ((total ** 2 - 1) / (total + 1)), **TOL)
    lev = stats.levene(*samples)  # reference: scipy, median-centred
    np.testing.assert_allclose(c.levene.statistic, lev.statistic, **TOL)


def test_games_howell_pairs_match_the_formula():
    samples, scores, groups = many_groups(41)
    c = compare_groups(scores, groups)
    assert c.pairs_method == "Games-Howell"
    assert [(p.a, p.b) for p in c.pairs] == [("A", "B"), ("A", "C"), ("B", "C")]
    by_name = dict(zip("ABC", samples, strict=True))
    for pair in c.pairs:
        a, b = by_name[pair.a], by_name[pair.b]
        # Games & Howell (1976): Welch-type se and df, p from the studentized range with k groups (scipy)
        va, vb = a.var(ddof=1) / len(a), b.var(ddof=1) / len(b)
        se = np.sqrt(va + vb)
        t = (a.mean() - b.mean()) / se
        df = (va + vb) ** 2 / (va ** 2 / (len(a) - 1) + vb ** 2 / (len(b) - 1))
        p = stats.studentized_range.sf(abs(t) * np.sqrt(2), 3, df)
        np.testing.assert_allclose([pair.difference, pair.statistic, pair.df], [a.mean() - b.mean(), t, df], **TOL)
        np.testing.assert_allclose(pair.pvalue, p, rtol=1e-4)  # pingouin integrates the range distribution itself


def test_student_many_groups_is_the_classic_f():
    samples, scores, groups = many_groups(43)
    c = compare_groups(scores, groups, student=True)
    ref = stats.f_oneway(*samples)  # reference: scipy's one-way ANOVA
    np.testing.assert_allclose([c.test.statistic, c.test.pvalue], [ref.statistic, ref.pvalue], **TOL)
    assert c.pairs_method == "Tukey HSD"
    tukey = stats.tukey_hsd(*samples)  # reference: scipy's Tukey HSD
    np.testing.assert_allclose(c.pairs[0].pvalue, tukey.pvalue[0, 1], rtol=1e-4)


def test_summaries_match_numpy():
    x, y, scores, groups = two_groups(8)
    c = compare_groups(scores, groups)
    day = c.group("day")
    # reference: numpy, sd with n - 1, type-7 quantiles (Hyndman & Fan 1996)
    np.testing.assert_allclose([day.n, day.mean, day.sd, day.median, day.iqr],
                               [len(x), x.mean(), x.std(ddof=1), np.median(x),
                                np.quantile(x, .75) - np.quantile(x, .25)], **TOL)


def test_holm_matches_the_step_down_definition():
    rng = np.random.default_rng(2)
    p = rng.uniform(0, 0.2, 6)
    # Holm (1979): sort ascending, multiply the i-th smallest by (m - i), running maximum, cap at 1
    order = np.argsort(p)
    adjusted = np.minimum(1, np.maximum.accumulate(p[order] * (len(p) - np.arange(len(p)))))
    expected = np.empty_like(p)
    expected[order] = adjusted
    np.testing.assert_allclose(holm(list(p)), expected, **TOL)
    assert holm([None, 0.01, float("nan")]) == [None, 0.01, None]


def test_pvalue_holm_across_scales():
    _, _, s1, groups = two_groups(1)
    _, _, s2, _ = two_groups(2, shift=0.0)
    comparisons = pvalue_holm([compare_groups(s1, groups, scale="a"), compare_groups(s2, groups, scale="b")])
    raw = [c.test.pvalue for c in comparisons]
    np.testing.assert_allclose([c.test.pvalue_holm for c in comparisons], holm(raw), **TOL)
    assert all(c.test.pvalue_holm >= c.test.pvalue for c in comparisons)


def test_small_group_is_suppressed_everywhere():
    rng = np.random.default_rng(9)
    scores = np.r_[rng.normal(3, 1, 30), rng.normal(3.5, 1, 25), [1.2345678, 4.8765432, 2.3456789]]
    groups = pd.Series(["day"] * 30 + ["night"] * 25 + ["weekend"] * 3, name="shift")
    c = compare_groups(scores, groups, min_cell=5)
    assert c.suppressed == ("weekend",)
    assert [g.level for g in c.groups] == ["day", "night"]
    # the small group is out of the test: the test equals scipy's on the two other groups
    ref = stats.ttest_ind(scores[:30], scores[30:55], equal_var=False)
    np.testing.assert_allclose(c.test.statistic, ref.statistic, **TOL)
    small_mean = scores[55:].mean()
    tables = compare_tables([c])
    renderings = [render_json(comparison_record(c)), render_text(tables, decimals=6),
                  render_markdown(tables, decimals=6), render_csv(tables)]
    for text in renderings:
        assert "weekend" in text
        assert "< 5" in text
        for secret in (small_mean, *scores[55:]):
            for digits in (2, 3, 4, 6):
                assert f"{secret:.{digits}f}" not in text
    record = json.loads(renderings[0])
    assert record["suppressed"] == {"weekend": "< 5"}
    assert "weekend" not in record["groups"]
    assert not re.search(r'"n": 3\b', renderings[0])  # the exact small count is not in the JSON


def test_degenerate_input_gives_notes_not_crashes():
    groups = pd.Series(["a"] * 6 + ["b"] * 6, name="g")
    flat = compare_groups(np.full(12, 3.0), groups)
    assert flat.test is None
    assert "zero-variance-no-test" in {n.code for n in flat.notes}
    one = compare_groups(np.arange(12.0), pd.Series(["a"] * 12, name="g"))
    assert one.test is None
    assert "compare-too-few-levels" in {n.code for n in one.notes}
    sentence = comparison_sentence(one)
    assert "not compared" in sentence
    json.loads(render_json(one.to_dict()))  # no NaN reaches JSON
    # the reason is given once, in the sentence, not again as a note beneath it
    (tests,) = [t for t in compare_tables([one]) if t.key.startswith("tests.")]
    reason = describe(one.notes[-1])
    assert sum(reason in text for text in tests.notes) == 1


def test_missing_scores_and_groups_are_counted():
    x, y, scores, groups = two_groups(4)
    scores = scores.copy()
    scores[[0, 1]] = np.nan
    groups = groups.copy().astype(object)
    groups[[5, 6, 7]] = [None, "", "  "]
    c = compare_groups(scores, groups)
    assert c.n_no_score == 2
    assert c.n_no_group == 3
    assert c.n_used == len(scores) - 5


def test_bad_input_raises_project_errors():
    with pytest.raises(UsageError, match="differ in length"):
        compare_groups(np.arange(5.0), pd.Series(list("aabbb")[:4]))
    with pytest.raises(UsageError, match="min_cell"):
        compare_groups(np.arange(5.0), pd.Series(list("aabbb")), min_cell=0)
    with pytest.raises(UsageError, match="confidence_level"):
        compare_groups(np.arange(5.0), pd.Series(list("aabbb")), confidence_level=95)


def test_sentence_reads_as_apa():
    x, y, scores, groups = two_groups(7, shift=1.2)
    c = pvalue_holm([compare_groups(scores, groups, scale="Workload")])[0]
    text = comparison_sentence(c)
    assert text.startswith("Workload by shift: day scored higher than night")
    assert "Welch's t = " in text
    assert "g = " in text
    assert "95% CI [" in text
    # plain prose: one bracket of statistics after the finding, never a bracket inside a bracket
    depth, deepest = 0, 0
    for char in text:
        depth += {"(": 1, ")": -1}.get(char, 0)
        deepest = max(deepest, depth)
    assert deepest == 1
    assert "r = ." in text  # APA: no leading zero for a correlation
    assert "nan" not in text.lower()


@settings(max_examples=8, deadline=None)
@given(st.integers(0, 10_000), st.floats(0.5, 20), st.floats(-5, 5))
def test_effect_sizes_invariant_to_linear_rescaling(seed, scale, offset):
    # g, r, omega- and epsilon-squared are unit-free: rescaling the score leaves them unchanged
    samples, scores, groups = many_groups(seed, sizes=(12, 15, 10))
    base = compare_groups(scores, groups)
    moved = compare_groups(scores * scale + offset, groups)
    np.testing.assert_allclose(moved.effect_size.value, base.effect_size.value, rtol=1e-7, atol=1e-10)
    np.testing.assert_allclose(moved.nonparametric.statistic, base.nonparametric.statistic, rtol=1e-9)


def test_a_level_without_spread_leaves_welch_f_undefined_and_the_other_tests_standing():
    # Welch's (1951) weights n/s^2 are infinite for a level of equal scores, so F has no value; pingouin's
    # welch_anova raises there. Kruskal-Wallis and the classic ANOVA still exist: scipy is the reference.
    rng = np.random.default_rng(5)
    samples = [np.full(12, 3.0), rng.integers(1, 6, 15).astype(float), rng.integers(1, 6, 14).astype(float)]
    scores = np.concatenate(samples)
    groups = pd.Series(np.repeat(["a", "b", "c"], [len(s) for s in samples]))
    c = compare_groups(scores, groups)
    assert c.test.name == "Welch's F"
    assert np.isnan(c.test.statistic)
    assert np.isnan(c.test.pvalue)
    assert "level-without-spread" in {getattr(n, "code", None) for n in c.notes}
    h = stats.kruskal(*samples)
    np.testing.assert_allclose([c.nonparametric.statistic, c.nonparametric.pvalue], [h.statistic, h.pvalue], **TOL)
    student = compare_groups(scores, groups, student=True)
    f = stats.f_oneway(*samples)
    np.testing.assert_allclose([student.test.statistic, student.test.pvalue], [f.statistic, f.pvalue], **TOL)


def test_the_verdict_follows_the_confidence_level_not_a_fixed_05():
    # the statistics decide at 1 - confidence level; the sentence only words the decision
    rng = np.random.default_rng(14)
    a, b = rng.normal(0, 1, 40), rng.normal(0.5, 1, 40)
    reference = stats.ttest_ind(a, b, equal_var=False).pvalue  # scipy: Welch's t, p = .036
    assert 0.01 < reference < 0.05
    scores = np.concatenate([a, b])
    groups = pd.Series(np.repeat(["first", "second"], 40))
    at_95 = compare_groups(scores, groups, confidence_level=0.95)
    at_99 = compare_groups(scores, groups, confidence_level=0.99)
    np.testing.assert_allclose(at_95.test.pvalue, reference, **TOL)
    assert at_95.significance_level == 0.05
    assert at_95.differs
    assert at_99.significance_level == 0.01
    assert not at_99.differs
    assert "scored higher" in comparison_sentence(at_95)
    assert "could be due to chance" in comparison_sentence(at_99)
