"""Figures of categories: bar charts of tallies, pie charts on request, diverging bars of rating items.

Functions of result objects: they take ``ax=None`` (a new figure) and return the Axes. Suppressed
categories are never drawn; a "< min_cell" mark stands where their bar would be. No 3-D, ever.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence

from ..errors import UsageError
from ..stats.groups import suppressed_text
from ..stats.tally import AnswerDistribution, Tally
from .figure_files import axes_or_new
from .palette import NEUTRAL_GREY, OKABE_ITO, PRIMARY, diverging_colours

#: a pie with more slices than this cannot be read; a bar chart is offered instead
MAX_PIE_SLICES = 5


def tally_bars(t: Tally, *, percent: bool = False, ax=None):
    """Vertical bars of counts (or valid percentages) per category, in the tally's order."""
    ax = axes_or_new(ax, (max(4.0, 0.8 * len(t.categories) + 2), 3.5))
    positions = range(len(t.categories))
    heights = []
    for c in t.categories:
        value = c.valid_percent if percent else c.count
        heights.append(0.0 if c.suppressed or value is None else float(value))
    bars = ax.bar(list(positions), heights, color=PRIMARY, width=0.7)
    for bar, c in zip(bars, t.categories, strict=True):
        if c.suppressed:
            bar.set_visible(False)
            ax.annotate(suppressed_text(t.min_cell), (bar.get_x() + bar.get_width() / 2, 0), ha="center",
                        va="bottom", color="#555555", fontsize=8)
    ax.set_xticks(list(positions), [c.label for c in t.categories],
                  rotation=30 if max((len(c.label) for c in t.categories), default=0) > 8 else 0,
                  ha="right" if max((len(c.label) for c in t.categories), default=0) > 8 else "center")
    ax.set_ylabel("% of those who answered" if percent else "respondents")
    ax.set_title(f"{t.column} (n = {t.n_valid} answered, {t.n_missing} missing)")
    ax.spines[["top", "right"]].set_visible(False)
    return ax


def tally_pie(t: Tally, *, ax=None):
    """A flat pie of the answered categories; refused above ``MAX_PIE_SLICES`` slices or with suppressed cells."""
    slices = [c for c in t.categories if c.count]
    if len(slices) > MAX_PIE_SLICES:
        raise UsageError(f"{t.column} has {len(slices)} categories; a pie chart is refused above "
                         f"{MAX_PIE_SLICES} slices (use a bar chart)")
    if t.suppressed:
        raise UsageError(f"{t.column} has suppressed categories; a pie chart would have to show them (use a bar chart)")
    if not slices:
        raise UsageError(f"{t.column} has no answers to draw")
    ax = axes_or_new(ax, (4.5, 4.5))
    ax.pie([c.count for c in slices], labels=[c.label for c in slices], colors=list(OKABE_ITO[:len(slices)]),
           autopct="%1.0f%%", startangle=90, counterclock=False, wedgeprops={"edgecolor": "white"})
    ax.set_aspect("equal")
    ax.set_title(f"{t.column} (n = {t.n_valid} answered)")
    return ax


#: characters of an item's wording shown beside its bar (the full wording is in the report's wording table)
WORDING_CHARS = 42


def item_bar_labels(items: Sequence[str], wording: Mapping[str, str], reverse: Sequence[str]) -> dict[str, str]:
    """Each item's bar label: its name, its wording cut to :data:`WORDING_CHARS`, and a mark when it is
    reverse-worded (its bar shows the answers as given, before reverse keying)."""
    labels = {}
    for item in items:
        text = " ".join(str(wording.get(item, "")).split())
        if len(text) > WORDING_CHARS:
            text = text[:WORDING_CHARS - 1].rstrip() + "…"
        label = f"{item}: {text}" if text else item
        labels[item] = label + (" [reverse-worded]" if item in reverse else "")
    return labels


def diverging_bars(distribution: AnswerDistribution, *, ax=None, titles: dict[str, str] | None = None,
                   title: str = "Answers by item"):
    """Diverging stacked bars of each item's valid percentages, centred on the neutral point.

    Levels below the middle extend to the left, levels above to the right; with an odd number of levels the
    middle one straddles zero, half on each side (Heiberger & Robbins 2014, J. Stat. Softw. 57(5)).
    Suppressed cells have zero width and are listed in the title.
    """
    levels = distribution.levels
    k = len(levels)
    colours = diverging_colours(k)
    items = distribution.items
    ax = axes_or_new(ax, (7.5, 0.45 * len(items) + 1.8))
    titles = titles or {}
    any_hidden = False
    for row, t in enumerate(items):
        widths = []
        for c in t.categories:
            any_hidden |= c.suppressed
            widths.append(0.0 if c.suppressed or c.valid_percent is None else float(c.valid_percent))
        half = k // 2
        left = -(sum(widths[:half]) + (widths[half] / 2 if k % 2 else 0.0))
        for j, width in enumerate(widths):
            ax.barh(row, width, left=left, color=colours[j], edgecolor="white", linewidth=0.5, height=0.7,
                    label=distribution.labels[j] if row == 0 else None)
            left += width
    reach = max([abs(x) for x in ax.get_xlim()] + [1.0])
    ax.set_xlim(-reach, reach)
    ax.axvline(0, color=NEUTRAL_GREY if k % 2 else "#333333", linewidth=0.8)
    ax.set_yticks(range(len(items)), [titles.get(t.column, t.column) for t in items])
    ax.invert_yaxis()
    ax.set_xlabel("% of answers (left: below the middle of the scale, right: above)")
    ax.xaxis.set_major_formatter(lambda value, _: f"{abs(value):.0f}")
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.18 - 0.02 * len(items) / 5), ncol=min(k, 4),
              frameon=False, fontsize=8)
    if any_hidden:
        title += f" (cells under {items[0].min_cell} answers not drawn)"
    ax.set_title(title)
    ax.spines[["top", "right"]].set_visible(False)
    return ax


__all__ = ["MAX_PIE_SLICES", "diverging_bars", "tally_bars", "tally_pie"]
