"""Figures of score distributions: histograms and box plots, alone and per subgroup on shared axes.

Functions of result objects (:class:`~scalewright.stats.shape.ShapeSummary`, ``ShapeReport``): they take
``ax=None`` (a new figure) and return the Axes (or an array of Axes for small multiples). Two-dimensional,
Okabe-Ito colours. Bars are the counts of the summary's half-open cells; nothing is recomputed here.
"""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..errors import UsageError
from ..stats.shape import ShapeReport, ShapeSummary
from .figure_files import axes_or_new
from .palette import ACCENT, NEUTRAL_GREY, OKABE_ITO, PRIMARY

#: tick labels are thinned out above this many bars
MAX_TICK_LABELS = 12


def _tidy(ax) -> None:
    ax.spines[["top", "right"]].set_visible(False)


def histogram(summary: ShapeSummary, *, title: str = "", x_label: str = "score", percent: bool = False,
              colour: str = PRIMARY, ax=None, tick_labels: dict[float, str] | None = None):
    """Bars of the summary's histogram cells: one per attainable value, or per half-open interval [a, b).

    ``tick_labels`` maps score values to texts (e.g. the answer labels of a single item).
    """
    cells = summary.histogram
    if cells is None:
        raise UsageError("no histogram to draw: the score has no range (no scores, or all the same)")
    ax = axes_or_new(ax, (6.0, 3.6))
    edges = np.asarray(cells.edges)
    counts = np.asarray(cells.counts, dtype=float)
    total = counts.sum() or 1.0
    heights = 100.0 * counts / total if percent else counts
    if cells.per_value:
        centres = np.asarray(cells.centers)
        # one bar per attainable value v, standing for the cell [v - h/2, v + h/2), drawn a little narrower
        ax.bar(centres, heights, width=0.9 * np.diff(edges), align="center", color=colour, edgecolor="white",
               linewidth=0.6)
        step = max(1, int(np.ceil(len(centres) / MAX_TICK_LABELS)))
        shown = _with_ends(centres, step)
        labels = [tick_labels.get(float(v), f"{v:g}") if tick_labels else f"{v:g}" for v in shown]
        ax.set_xticks(shown, labels, rotation=30 if tick_labels else 0, ha="right" if tick_labels else "center")
    else:
        ax.bar(edges[:-1], heights, width=np.diff(edges), align="edge", color=colour, edgecolor="white",
               linewidth=0.6)
        labels = cells.labels()
        mids = (edges[:-1] + edges[1:]) / 2
        step = max(1, int(np.ceil(len(mids) / MAX_TICK_LABELS)))
        ax.set_xticks(mids[::step], labels[::step], rotation=45, ha="right", fontsize=8)
    ax.set_xlabel(x_label)
    ax.set_ylabel("% of respondents" if percent else "respondents")
    shape = f"; {summary.shape}" if summary.shape else ""
    ax.set_title(f"{title} (n = {summary.n}{shape})" if title else f"n = {summary.n}{shape}")
    _tidy(ax)
    return ax


def _box_stats(summary: ShapeSummary, label: str) -> dict:
    box = summary.box_plot
    if box is None:
        raise UsageError(f"no box plot to draw for {label or 'this score'}: no scores")
    fliers = np.repeat(np.asarray(box.outliers, dtype=float), np.asarray(box.outlier_counts, dtype=int))
    return {"med": box.median, "q1": box.q1, "q3": box.q3, "whislo": box.whisker_low, "whishi": box.whisker_high,
            "fliers": fliers, "label": label}


def box_plot(summary: ShapeSummary, *, title: str = "", x_label: str = "score", ax=None):
    """A horizontal box plot: quartiles, whiskers to the last scores inside Tukey's 1.5 IQR fences, outliers."""
    ax = axes_or_new(ax, (6.0, 2.2))
    ax.bxp([_box_stats(summary, "")], orientation="horizontal", showfliers=True, widths=0.5, patch_artist=True,
           boxprops={"facecolor": OKABE_ITO[4], "edgecolor": "black"}, medianprops={"color": ACCENT, "linewidth": 2},
           flierprops={"marker": "o", "markerfacecolor": "none", "markeredgecolor": "black", "markersize": 5})
    ax.set_yticks([])
    ax.set_xlabel(x_label)
    ax.set_title(f"{title} (n = {summary.n}; whiskers: 1.5 IQR)" if title else f"n = {summary.n}; whiskers: 1.5 IQR")
    _set_range(ax, summary, axis="x")
    _tidy(ax)
    return ax


def _with_ends(values: np.ndarray, step: int) -> np.ndarray:
    """Every ``step``-th value, always with the first and the last (a reader needs the ends of the range)."""
    shown = list(values[::step])
    if len(values) and shown[-1] != values[-1]:
        if len(shown) > 1 and (values[-1] - shown[-1]) < 0.5 * (shown[1] - shown[0]):
            shown[-1] = values[-1]  # too close to the end to keep both labels legible
        else:
            shown.append(values[-1])
    return np.asarray(shown)


def _set_range(ax, summary: ShapeSummary, *, axis: str) -> None:
    """The axis spans the score's possible range, and its ticks include both ends of that range."""
    if summary.low is not None and summary.high is not None:
        low, high = float(summary.low), float(summary.high)
        pad = 0.03 * (high - low)
        (ax.set_xlim if axis == "x" else ax.set_ylim)(low - pad, high + pad)
        ticks = [t for t in (ax.get_xticks() if axis == "x" else ax.get_yticks()) if low <= t <= high]
        spacing = (ticks[1] - ticks[0]) if len(ticks) > 1 else (high - low)
        inner = [t for t in ticks if t - low >= 0.5 * spacing and high - t >= 0.5 * spacing]
        (ax.set_xticks if axis == "x" else ax.set_yticks)([low, *inner, high])


def _group_samples(report: ShapeReport, column: str | None) -> tuple[str, list[tuple[str, ShapeSummary]]]:
    if not report.groups:
        raise UsageError(f"{report.name} has no subgroups to draw (use --by)")
    group = report.groups[0] if column is None else next((g for g in report.groups if g.column == column), None)
    if group is None:
        raise UsageError(f"{report.name} has no subgroups by {column!r}")
    if not group.levels:
        raise UsageError(f"{report.name}: no level of {group.column} is large enough to draw")
    return group.column, list(group.levels.items())


def box_plots_by_group(report: ShapeReport, *, column: str | None = None, ax=None):
    """Side-by-side box plots of one score per level of a subgroup column, on one shared score axis."""
    name, samples = _group_samples(report, column)
    ax = axes_or_new(ax, (6.5, 0.6 * len(samples) + 1.6))
    stats = [_box_stats(s, f"{level} (n = {s.n})") for level, s in samples]
    parts = ax.bxp(stats, orientation="horizontal", showfliers=True, widths=0.55, patch_artist=True,
                   medianprops={"color": "black", "linewidth": 2},
                   flierprops={"marker": "o", "markerfacecolor": "none", "markeredgecolor": "black", "markersize": 4})
    for patch, colour in zip(parts["boxes"], _colours(len(samples)), strict=True):
        patch.set_facecolor(colour)
    ax.invert_yaxis()  # first level on top, as in the tables
    ax.set_xlabel(report.x_label)
    ax.set_ylabel(name)
    ax.set_title(f"{report.title} by {name} (whiskers: 1.5 IQR)")
    _set_range(ax, report.overall, axis="x")
    _tidy(ax)
    return ax


def histograms_by_group(report: ShapeReport, *, column: str | None = None, percent: bool = True,
                        axes: Sequence | None = None):
    """Small-multiple histograms, one per level, sharing the score axis and the height axis.

    Heights are percentages of each level by default, so levels of different sizes compare.
    Returns the array of Axes.
    """
    name, samples = _group_samples(report, column)
    if axes is None:
        import matplotlib.pyplot as plt

        columns = min(3, len(samples))
        rows = int(np.ceil(len(samples) / columns))
        figure, grid = plt.subplots(rows, columns, figsize=(4.2 * columns, 3.0 * rows), sharex=True, sharey=True,
                                    squeeze=False, layout="constrained")
        cells = list(grid.ravel())
        for position in range(len(samples), len(cells)):  # the grid's last row may have more cells than levels
            cells[position].set_visible(False)
            # the shared score axis is labelled under the bottom histogram of each column
            cells[position - columns].xaxis.set_tick_params(labelbottom=True)
        figure.suptitle(f"{report.title} by {name}")
    elif len(axes) < len(samples):
        raise UsageError(f"{len(samples)} levels of {name} need as many Axes, got {len(axes)}")
    else:
        cells = list(axes)
    used = cells[:len(samples)]
    for ax, (level, summary), colour in zip(used, samples, _colours(len(samples)), strict=True):
        histogram(summary, title=str(level), x_label=report.x_label, percent=percent, colour=colour, ax=ax)
    return np.asarray(used)


def _colours(n: int) -> list[str]:
    palette = [c for c in OKABE_ITO if c not in ("#F0E442", "#000000")] or [NEUTRAL_GREY]
    return [palette[i % len(palette)] for i in range(n)]
