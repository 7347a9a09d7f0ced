"""Shape figures under the Agg backend: bars equal the counts, intervals are labelled, boxes follow the summary."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright.present.figure_files import use_agg

use_agg()

import matplotlib.pyplot as plt  # noqa: E402  (after selecting the Agg backend)

from scalewright.present.figures_shape import (  # noqa: E402
    box_plot,
    box_plots_by_group,
    histogram,
    histograms_by_group,
)
from scalewright.present.shape import shape_tables  # noqa: E402
from scalewright.stats.score_grid import attainable_scores  # noqa: E402
from scalewright.stats.shape import ShapeReport, describe_by_subgroup, describe_scores  # noqa: E402


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    plt.close("all")


def _three_item_means(n=300, seed=9):
    rng = np.random.default_rng(seed)
    return rng.integers(3, 16, size=(n,)) / 3  # sums 3..15 of three 1..5 answers, as means


def test_histogram_bars_equal_the_counts_one_bar_per_value():
    x = _three_item_means()
    s = describe_scores(x, attainable=attainable_scores(1, 5, 3))
    ax = histogram(s, title="Team support", x_label="mean of 3 items")
    heights = [p.get_height() for p in ax.patches]
    # numpy counts of each attainable value are the outside reference
    values = attainable_scores(1, 5, 3)
    expected = [int(np.sum(np.isclose(x, v))) for v in values]
    assert heights == expected
    centres = [p.get_x() + p.get_width() / 2 for p in ax.patches]
    np.testing.assert_allclose(centres, values)
    assert ax.get_xlabel() == "mean of 3 items"
    assert ax.get_title().startswith("Team support")


def test_histogram_of_a_long_grid_uses_half_open_intervals():
    rng = np.random.default_rng(3)
    x = rng.integers(0, 101, size=800).astype(float)  # a 0..100 sum score
    s = describe_scores(x, low=0, high=100, resolution=1.0)
    cells = s.histogram
    assert not cells.per_value
    assert len(cells.counts) <= 61
    ax = histogram(s, percent=True)
    heights = np.array([p.get_height() for p in ax.patches])
    reference, _ = np.histogram(x, bins=np.asarray(cells.edges))  # numpy, same half-open edges
    np.testing.assert_allclose(heights, 100 * reference / x.size)
    labels = [t.get_text() for t in ax.get_xticklabels()]
    assert all(label.startswith("[") and label.endswith(")") for label in labels)


def test_box_plot_draws_the_summary_quartiles_and_outliers():
    rng = np.random.default_rng(12)
    x = np.r_[np.clip(np.round(rng.normal(4, 0.5, 200) * 4) / 4, 1, 5), [1.0, 1.0]]
    s = describe_scores(x, low=1, high=5)
    ax = box_plot(s, title="Team support")
    box = s.box_plot
    flier_x = np.concatenate([line.get_xdata() for line in ax.lines if line.get_marker() == "o"])
    np.testing.assert_allclose(np.sort(flier_x), np.repeat(box.outliers, box.outlier_counts))
    assert 1.0 in flier_x
    xs = np.concatenate([np.asarray(line.get_xdata(), dtype=float) for line in ax.lines])
    assert box.whisker_low in xs
    assert box.whisker_high in xs
    assert box.median in xs


def _report():
    rng = np.random.default_rng(4)
    x = _three_item_means(n=240, seed=4)
    groups = pd.Series(rng.permutation(["day"] * 110 + ["night"] * 122 + ["float"] * 8), name="shift")
    options = dict(attainable=attainable_scores(1, 5, 3))
    return ShapeReport(name="support", title="Team support", kind="scale", overall=describe_scores(x, **options),
                       groups=(describe_by_subgroup(x, groups, min_group=10, **options),), x_label="mean score"), x, groups


@pytest.mark.parametrize("levels", [4, 5])
def test_small_multiples_of_levels_that_leave_grid_cells_empty(levels):
    # 4 or 5 levels fill a 2 x 3 grid only in part: the empty cells are hidden, one histogram per level
    x = _three_item_means(n=300, seed=6)
    groups = pd.Series([f"site {i % levels}" for i in range(300)], name="site")
    options = dict(attainable=attainable_scores(1, 5, 3))
    report = ShapeReport(name="support", title="Team support", kind="scale", overall=describe_scores(x, **options),
                         groups=(describe_by_subgroup(x, groups, min_group=10, **options),), x_label="mean score")
    axes = histograms_by_group(report)
    assert len(axes) == levels
    cells = axes[0].figure.axes
    assert len(cells) == 6
    assert [cell.get_visible() for cell in cells] == [True] * levels + [False] * (6 - levels)
    # the score axis is labelled under the last histogram of every column
    assert all(cell.xaxis.get_tick_params()["labelbottom"] for cell in cells[levels - 3:levels])


def test_box_plots_by_group_share_one_axis_and_skip_small_levels():
    report, x, groups = _report()
    ax = box_plots_by_group(report)
    labels = [t.get_text() for t in ax.get_yticklabels()]
    assert [label.split(" (")[0] for label in labels] == list(report.groups[0].levels)
    assert "float" not in " ".join(labels)
    assert ax.get_xlabel() == "mean score"


def test_small_multiple_histograms_share_axes_and_show_percentages():
    report, x, groups = _report()
    axes = histograms_by_group(report)
    assert len(axes) == len(report.groups[0].levels)
    assert axes[0].get_shared_x_axes().joined(axes[0], axes[1])
    assert axes[0].get_shared_y_axes().joined(axes[0], axes[1])
    for ax, level in zip(axes, report.groups[0].levels, strict=True):
        subset = x[(groups == level).to_numpy()]
        heights = np.array([p.get_height() for p in ax.patches])
        expected = [np.sum(np.isclose(subset, v)) for v in attainable_scores(1, 5, 3)]
        np.testing.assert_allclose(heights, 100 * np.asarray(expected) / subset.size)


def test_tables_hold_raw_values_and_every_sample():
    report, x, groups = _report()
    tables = shape_tables([report])
    summary = next(t for t in tables if t.key == "shape")
    samples = [row[1] for row in summary.rows]
    assert samples == ["all", *(f"shift = {level}" for level in report.groups[0].levels)]
    assert summary.rows[0][4] == pytest.approx(np.mean(x))  # raw, unrounded mean
    histogram_table = next(t for t in tables if t.key == "shape_histogram")
    assert sum(row[4] for row in histogram_table.rows) == x.size
