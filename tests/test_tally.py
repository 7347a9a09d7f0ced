"""Tallies, small-cell suppression, goodness of fit against reference proportions, and their figures."""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from scalewright.errors import DataError, UsageError
from scalewright.present.render import (
    render_csv,
    render_json,
    render_markdown,
    render_text,
)
from scalewright.present.tally import fit_sentence, tally_record, tally_tables
from scalewright.stats.tally import answer_distribution, tally
from scalewright.stats.tally_fit import check_expected, goodness_of_fit

TOL = dict(rtol=1e-9, atol=1e-12)


def repeated(counts: dict) -> pd.Series:
    return pd.Series([k for k, n in counts.items() for _ in range(n)], name="site")


def test_scipy_documented_chisquare_example():
    # scipy.stats.chisquare documentation: [16, 18, 16, 14, 12, 12] against uniform gives 2.0, p = 0.84914503608460956
    t = tally(repeated(dict(zip("abcdef", [16, 18, 16, 14, 12, 12], strict=True))))
    fit = goodness_of_fit(t, {c: 1 / 6 for c in "abcdef"})
    np.testing.assert_allclose(fit.chi2, 2.0, **TOL)
    np.testing.assert_allclose(fit.pvalue, 0.84914503608460956, rtol=1e-12)
    assert fit.df == 5
    assert fit.verdict == "resembles"


def test_fit_against_scipy_residuals_and_w():
    counts = {"North": 130, "South": 55, "East": 40, "West": 25}
    p = {"North": 0.4, "South": 0.3, "East": 0.2, "West": 0.1}
    fit = goodness_of_fit(tally(repeated(counts)), p)
    observed = np.array(list(counts.values()), dtype=float)
    probs = np.array(list(p.values()))
    n = observed.sum()
    ref = stats.chisquare(observed, n * probs)  # reference: scipy, computed live
    np.testing.assert_allclose([fit.chi2, fit.pvalue], [ref.statistic, ref.pvalue], **TOL)
    # Cohen (1988): w = sqrt(chi2 / n); Agresti (2013): standardized residual (O - E) / sqrt(E (1 - p))
    np.testing.assert_allclose(fit.w, np.sqrt(ref.statistic / n), **TOL)
    expected_residuals = (observed - n * probs) / np.sqrt(n * probs * (1 - probs))
    by_category = {c.category: c.standardized_residual for c in fit.categories}
    np.testing.assert_allclose([by_category[k] for k in counts], expected_residuals, **TOL)
    np.testing.assert_allclose(sum(c.pearson_residual ** 2 for c in fit.categories), ref.statistic, **TOL)
    assert fit.verdict.startswith("differs")
    assert "North" in fit.over_represented
    assert "South" in fit.under_represented
    sentence = fit_sentence(fit)
    assert "χ²(3, N = 250)" in sentence
    assert "w = ." in sentence


def test_percentages_add_up_and_order_is_kept():
    values = pd.Series(["low"] * 10 + ["high"] * 30 + ["mid"] * 20 + [None] * 5 + [""] * 2, name="level")
    t = tally(values, order=["low", "mid", "high"])
    assert [c.category for c in t.categories] == ["low", "mid", "high"]
    assert t.n_total == 67
    assert t.n_missing == 7
    assert t.ordered
    counts = [c.count for c in t.categories]
    assert counts == [10, 20, 30]
    np.testing.assert_allclose(sum(c.valid_percent for c in t.categories), 100.0, **TOL)
    np.testing.assert_allclose(sum(c.percent for c in t.categories) + 100 * 7 / 67, 100.0, **TOL)
    np.testing.assert_allclose([c.cumulative_percent for c in t.categories],
                               np.cumsum(counts) / 60 * 100, **TOL)


def test_natural_order_text_is_unordered_numbers_ordered():
    text = tally(pd.Series(["b", "a", "c", "a"] * 5))
    assert [c.category for c in text.categories] == ["a", "b", "c"]
    assert not text.ordered
    assert all(c.cumulative_percent is None for c in text.categories)
    numbers = tally(pd.Series([3.0, 1.0, 2.0, 10.0] * 5))
    assert [c.category for c in numbers.categories] == ["1", "2", "3", "10"]
    assert numbers.ordered


def test_order_missing_a_value_is_an_error_and_zero_rows_are_kept():
    with pytest.raises(UsageError, match="'d'"):
        tally(pd.Series(list("abcd") * 5, name="x"), order=["a", "b", "c"])
    t = tally(pd.Series(list("ab") * 5, name="x"), order=["a", "b", "c"])
    assert t.category("c").count == 0
    assert not t.category("c").suppressed


def test_small_cells_never_leak():
    counts = {"North": 40, "South": 31, "East": 3, "West": 22}
    t = tally(repeated(counts), min_cell=5)
    assert t.category("East").suppressed
    assert t.category("East").count is None
    # complementary suppression: the smallest other category goes too, so East is not total minus the rest
    assert t.category("West").suppressed
    assert not t.category("North").suppressed
    tables = tally_tables([t])
    renderings = [render_json(tally_record(t)), render_text(tables, decimals=6), render_markdown(tables, decimals=6),
                  render_csv(tables)]
    for text in renderings:
        assert "East" in text
        assert "< 5" in text
        for secret in (3 / 96 * 100, 22 / 96 * 100):
            for digits in (1, 2, 6):
                assert f"{secret:.{digits}f}" not in text
    record = json.loads(renderings[0])
    for row in record["categories"]:
        if row["category"] in ("East", "West"):
            assert row["count"] is None
            assert row["share_of_all_pct"] is None
            assert row["share_of_answered_pct"] is None
    assert ",22," not in renderings[3]
    assert ",3," not in renderings[3]


def test_cumulative_percent_withheld_where_it_reveals_a_suppressed_cell():
    values = pd.Series([1] * 30 + [2] * 2 + [3] * 25 + [4] * 3 + [5] * 40, name="q")
    t = tally(values, min_cell=5)
    cumulative = [c.cumulative_percent for c in t.categories]
    assert cumulative[0] == pytest.approx(30.0)
    assert cumulative[1] is None
    assert cumulative[2] is None
    assert cumulative[3] == pytest.approx(60.0)
    assert cumulative[4] == pytest.approx(100.0)


def test_goodness_of_fit_leaves_suppressed_cells_out():
    counts = {"a": 50, "b": 30, "c": 2, "d": 2}
    t = tally(repeated(counts))
    fit = goodness_of_fit(t, {"a": 0.5, "b": 0.3, "c": 0.1, "d": 0.1})
    assert set(fit.excluded) == {"c", "d"}
    ref = stats.chisquare([50, 30], np.array([0.5, 0.3]) / 0.8 * 80)  # reference: scipy on the shown cells
    np.testing.assert_allclose([fit.chi2, fit.pvalue], [ref.statistic, ref.pvalue], **TOL)
    assert all(c.category not in ("c", "d") for c in fit.categories)
    assert '"c": {' not in json.dumps(fit.to_dict()["categories"])
    assert [n.code for n in fit.notes] == ["fit-suppressed-left-out"]
    assert fit.notes[0].values["categories"] == ("c", "d")


def test_goodness_of_fit_notes_are_codes_for_zero_references_and_small_expected_counts():
    t = tally(repeated({"a": 40, "b": 3, "c": 6}), min_cell=1)
    fit = goodness_of_fit(t, {"a": 0.9, "b": 0.05, "c": 0.05})
    # reference: scipy's chi-square; an expected count below 5 is the rule of Cochran (1954)
    ref = stats.chisquare([40, 3, 6], np.array([0.9, 0.05, 0.05]) * 49)
    np.testing.assert_allclose(fit.chi2, ref.statistic, **TOL)
    assert [n.code for n in fit.notes] == ["fit-small-expected"]
    impossible = goodness_of_fit(t, {"a": 0.5, "b": 0.5, "c": 0.0})
    assert impossible.chi2 is None
    assert [n.code for n in impossible.notes] == ["fit-reference-zero-observed"]
    assert impossible.notes[0].values["categories"] == ("c",)


def test_a_fit_that_could_not_run_gives_its_reason_once():
    t = tally(repeated({"a": 40}), min_cell=1)
    fit = goodness_of_fit(t, {"a": 1.0})
    assert fit.verdict is None
    reason = "fewer than two categories left to compare: no test"
    assert [n.code for n in fit.notes] == ["fit-too-few-categories"]
    (table,) = [table for table in tally_tables([t], [fit]) if table.key.startswith("fit.")]
    assert reason in fit_sentence(fit)
    assert sum(reason in text for text in table.notes) == 1  # in the sentence, not again beneath it


def test_expected_proportions_are_validated():
    t = tally(repeated({"North": 20, "South": 20}))
    with pytest.raises(DataError, match=r"census.csv:3.*'Mars'"):
        check_expected(t, {"North": 0.5, "Mars": 0.5}, source="census.csv", rows={"North": 2, "Mars": 3})
    with pytest.raises(DataError, match="no proportion given for 'South'"):
        check_expected(t, {"North": 1.0}, source="census.csv")
    with pytest.raises(DataError, match="sum to 100.*percentages"):
        check_expected(t, {"North": 60, "South": 40})
    with pytest.raises(DataError, match="sum to 0.9"):
        check_expected(t, {"North": 0.5, "South": 0.4})
    assert check_expected(t, {"North": 0.605, "South": 0.4}) == {"North": 0.605, "South": 0.4}


def test_answer_distribution_uses_levels_and_labels():
    rng = np.random.default_rng(4)
    items = rng.integers(1, 6, size=(80, 3)).astype(float)
    items[0, 0] = np.nan
    dist = answer_distribution(items, [1, 2, 3, 4, 5], {1: "No", 5: "Yes"}, item_names=["a", "b", "c"], min_cell=1)
    assert dist.labels == ("No", "2", "3", "4", "Yes")
    first = dist.items[0]
    assert first.n_missing == 1
    assert [c.count for c in first.categories] == [int(np.sum(items[:, 0] == v)) for v in range(1, 6)]
    with pytest.raises(UsageError, match="'7'"):
        answer_distribution(np.array([[7.0], [1.0]]), [1, 2, 3, 4, 5])


def test_bad_min_cell():
    with pytest.raises(UsageError):
        tally(pd.Series(["a"]), min_cell=0)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.sampled_from(["a", "b", "c", "d", None]), min_size=1, max_size=80), st.integers(1, 8))
def test_tallies_add_up_and_hide_every_small_count(values, min_cell):
    t = tally(pd.Series(values, name="x", dtype=object), min_cell=min_cell)
    shown = [c.count for c in t.categories if not c.suppressed]
    hidden = [c for c in t.categories if c.suppressed]
    assert sum(shown) + t.n_missing <= t.n_total
    if not hidden:
        assert sum(shown) + t.n_missing == t.n_total
    # no shown count is small and non-zero; never exactly one suppressed cell when another could join it
    assert all(n == 0 or n >= min_cell for n in shown)
    assert len(hidden) != 1 or sum(1 for n in shown if n > 0) == 0
    record = tally_record(t)
    for row in record["categories"]:
        if row["suppressed"]:
            assert row["count"] is None
            assert row["share_of_all_pct"] is None


# ----------------------------------------------------------------------------- figures


@pytest.fixture
def agg():
    from scalewright.present.figure_files import use_agg

    use_agg()
    import matplotlib.pyplot as plt

    yield plt
    plt.close("all")


def test_bar_heights_match_counts(agg):
    from scalewright.present.figures_groups import tally_bars

    t = tally(repeated({"North": 40, "South": 31, "East": 3, "West": 22}), order=["North", "South", "East", "West"])
    ax = tally_bars(t)
    heights = [p.get_height() for p in ax.patches if p.get_visible()]
    assert heights == [40, 31]  # East (< 5) and its complement West are not drawn
    assert any(text.get_text() == "< 5" for text in ax.texts)
    ax2 = tally_bars(tally(repeated({"a": 10, "b": 30})), percent=True)
    np.testing.assert_allclose([p.get_height() for p in ax2.patches], [25.0, 75.0])


def test_pie_only_on_request_and_refused_above_five(agg):
    from scalewright.present.figures_groups import tally_pie

    ax = tally_pie(tally(repeated({"a": 10, "b": 30, "c": 20})))
    assert len(ax.patches) == 3
    assert ax.name != "3d"
    with pytest.raises(UsageError, match="above 5"):
        tally_pie(tally(repeated({k: 10 for k in "abcdef"})))


def test_diverging_bars_centre_on_the_neutral_point(agg):
    from scalewright.present.figures_groups import diverging_bars

    items = np.array([[1] * 10 + [2] * 20 + [3] * 30 + [4] * 25 + [5] * 15]).T.astype(float)
    dist = answer_distribution(items, [1, 2, 3, 4, 5], item_names=["q1"])
    ax = diverging_bars(dist)
    bars = sorted(ax.patches, key=lambda p: p.get_x())
    widths = [b.get_width() for b in bars]
    np.testing.assert_allclose(widths, [10, 20, 30, 25, 15])
    # Heiberger & Robbins (2014): the neutral segment straddles zero, disagreement to the left
    np.testing.assert_allclose(bars[0].get_x(), -(10 + 20 + 15))
    np.testing.assert_allclose(bars[2].get_x() + bars[2].get_width() / 2, 0.0, atol=1e-12)


def test_a_group_with_levels_in_the_scale_file_is_ordered():
    # an ordered categorical (how data.py reads `groups: [{band: [...]}]`) gets cumulative percents
    # in its own order; sums worked by hand (common practice, no source)
    from scalewright.stats.tally import tally as make_tally

    values = pd.Series(pd.Categorical(["new"] * 6 + ["mid"] * 10 + ["long"] * 8,
                                      categories=["new", "mid", "long"], ordered=True))
    result = make_tally(values, column="band")
    cumulative = [c.cumulative_percent for c in result.categories]
    assert [c.category for c in result.categories] == ["new", "mid", "long"]
    assert cumulative == pytest.approx([25.0, 100 * 16 / 24, 100.0])


def test_tally_from_counts_equals_tally_of_the_values():
    # reference: tally() of the values (pandas value_counts inside), the path every other column takes
    from scalewright.stats.tally import tally_from_counts

    values = pd.Series([1.0] * 3 + [2.0] * 40 + [4.0] * 12 + [np.nan] * 5, name="wl1")
    labels = {1: "Low", 2: "Mid-low", 3: "Mid", 4: "High"}
    by_values = tally(values, order=[1, 2, 3, 4], labels=labels, min_cell=5)
    counts = values.value_counts()
    by_counts = tally_from_counts({str(v): int(counts.get(float(v), 0)) for v in (1, 2, 3, 4)}, n_total=len(values),
                                  n_missing=int(values.isna().sum()), column="wl1", ordered=True,
                                  labels={str(k): v for k, v in labels.items()}, min_cell=5)
    assert by_counts == by_values


def test_answer_distribution_counted_per_level_equals_tally_of_each_column():
    # reference: tally() of each column (pandas value_counts inside), the route for answers off the levels
    rng = np.random.default_rng(8)
    matrix = rng.integers(1, 6, (300, 4)).astype(float)
    matrix[rng.random(matrix.shape) < 0.1] = np.nan
    matrix[:, 3] = np.where(matrix[:, 3] == 5, 4, matrix[:, 3])  # a level nobody chose
    labels = {1: "SD", 2: "D", 3: "N", 4: "A", 5: "SA"}
    result = answer_distribution(matrix, [1, 2, 3, 4, 5], labels, item_names=list("abcd"), min_cell=5)
    for j, name in enumerate("abcd"):
        expected = tally(pd.Series(matrix[:, j], name=name), order=[1, 2, 3, 4, 5], labels=labels, ordered=True,
                         min_cell=5)
        assert result.items[j] == expected
    with pytest.raises(UsageError):
        answer_distribution(np.array([[1.0], [7.0]]), [1, 2, 3, 4, 5])


def test_analyse_tally_counts_items_and_groups_as_pandas_does(write_file):
    # reference: pandas value_counts of the same columns, as the data file gives them (outside our counting);
    # the items held as codes are counted in one pass, a group column on its own: both routes checked
    from scalewright.analyses.tally import analyse_tally, answer_distributions
    from scalewright.data import read_responses
    from scalewright.spec import load_spec

    rng = np.random.default_rng(5)
    n = 60
    frame = pd.DataFrame({"staff_id": [f"s{i:02d}" for i in range(n)],
                          "shift": rng.choice(["day", "night", "late"], size=n, p=[.5, .3, .2]),
                          **{name: rng.integers(1, 6, size=n) for name in ("wl1", "wl2", "wl3")}})
    frame.loc[rng.random(n) < 0.1, "wl2"] = np.nan
    scales = write_file("scales.yaml", "version: 1\nid_column: staff_id\ngroups: [shift]\n"
                        "response: {min: 1, max: 5}\nscales:\n  workload:\n    items: [wl1, wl2, wl3]\n")
    data = write_file("data.csv", frame.to_csv(index=False, float_format="%.0f"))
    spec = load_spec(scales)
    responses = read_responses(data, spec)
    analysis = analyse_tally(["shift", "wl2"], spec=spec, responses=responses, min_cell=1)
    shift, wl2 = analysis.tallies
    assert analysis.fits == (None, None)
    assert {c.category: c.count for c in shift.categories} == frame["shift"].value_counts().to_dict()
    expected_wl2 = frame["wl2"].value_counts()
    assert {c.category: c.count for c in wl2.categories} == {
        str(level): int(expected_wl2.get(float(level), 0)) for level in range(1, 6)}
    assert wl2.n_missing == int(frame["wl2"].isna().sum())
    distribution = answer_distributions(spec, responses=responses, min_cell=1)["workload"]
    assert [c.count for c in distribution.items[1].categories] == [c.count for c in wl2.categories]
