"""Frequency tables of one categorical column, with small-cell suppression; their fit to reference proportions
is in :mod:`.tally_fit`.

Disclosure control (common practice in official statistics, threshold rule): a category with 1 to
``min_cell - 1`` respondents is *suppressed* -- its count and percentages never enter the result. A true
zero names nobody and is shown. When exactly one category is suppressed, the smallest other non-zero category
is suppressed too (complementary suppression), so the total cannot give the small count away by subtraction.
The count of respondents who gave no answer describes non-response, not a category of respondents: it is shown.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..errors import UsageError
from ..notes import Note, note, notes_to_json
from ..results import ResultMixin, to_jsonable
from .groups import suppressed_text
from .subgroups import blank_as_missing, level_name, level_order


@dataclass(frozen=True)
class CategoryCount(ResultMixin):
    """One row of a tally. A suppressed row has ``count`` None and no percentages.

    ``percent`` is of all respondents (missing included); ``valid_percent`` of those who answered;
    ``cumulative_percent`` of the valid ones (ordered categories only; withheld where it would reveal a
    suppressed count).
    """

    category: str
    label: str
    count: int | None
    suppressed: bool
    percent: float | None
    valid_percent: float | None
    cumulative_percent: float | None

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({"category": self.category, "label": self.label, "count": self.count,
                            "suppressed": self.suppressed, "share_of_all_pct": self.percent,
                            "share_of_answered_pct": self.valid_percent,
                            "running_share_pct": self.cumulative_percent})


@dataclass(frozen=True)
class Tally(ResultMixin):
    """Counts of one column. See :func:`tally`."""

    column: str
    ordered: bool
    categories: tuple[CategoryCount, ...]
    n_total: int
    n_missing: int
    min_cell: int
    notes: tuple[Note, ...] = ()  # codes with values, worded by present/messages

    @property
    def n_valid(self) -> int:
        return self.n_total - self.n_missing

    @property
    def suppressed(self) -> tuple[str, ...]:
        return tuple(c.category for c in self.categories if c.suppressed)

    def category(self, name: str) -> CategoryCount:
        for row in self.categories:
            if row.category == name:
                return row
        raise KeyError(name)

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({
            "column": self.column, "ordered": self.ordered, "n_total": self.n_total, "n_valid": self.n_valid,
            "missing": {"count": self.n_missing,
                        "share_of_all_pct": 100.0 * self.n_missing / self.n_total if self.n_total else None},
            "min_cell": self.min_cell, "suppressed_shown_as": suppressed_text(self.min_cell),
            "categories": [c.to_dict() for c in self.categories], "notes": notes_to_json(self.notes)})


def tally(values: pd.Series, *, order: Sequence | None = None, labels: Mapping | None = None,
          ordered: bool | None = None, min_cell: int = 5, column: str | None = None) -> Tally:
    """Count the categories of one column, with percentages, suppressing small cells.

    Parameters
    ----------
    values : pandas.Series
        One value per respondent; NaN, None and blank text are missing.
    order : sequence, keyword-only
        The categories in their order. Every value present must be listed (else ``UsageError``); listed
        categories nobody chose get a zero row. Without it the order is that of ``labels``, else the natural
        order (a categorical's order, numbers numerically, text alphabetically).
    labels : mapping, keyword-only
        Category -> label text (for rating items: the scale file's answer labels). Implies an order.
    ordered : bool, keyword-only
        Whether the order is meaningful (cumulative percentages). Default: True with ``order`` or
        ``labels``, numeric values or an ordered categorical (a group the scale file lists with its levels),
        False for natural text order.
    min_cell : int, keyword-only
        Suppression threshold (see the module notes).
    column : str, keyword-only
        Name carried into the result (default: the Series name).

    Returns
    -------
    Tally

    Notes
    -----
    Percent of all is :math:`100\\,c_j / N`; valid percent :math:`100\\,c_j / (N - m)` with :math:`m` the
    missing count; cumulative percent sums valid percents down the order. Hand-written: pandas'
    ``value_counts`` gives the counts, but no library applies suppression rules to the percentages.
    """
    if isinstance(min_cell, bool) or not isinstance(min_cell, (int, np.integer)) or min_cell < 1:
        raise UsageError(f"min_cell must be a whole number of at least 1, got {min_cell!r}")
    column = column or (str(values.name) if getattr(values, "name", None) is not None else "value")
    series = blank_as_missing(values)
    missing_mask = series.isna().to_numpy()
    present = series[~missing_mask]
    names = present.map(level_name)
    counts = names.value_counts(sort=False)
    natural = [level_name(v) for v in level_order(series)] if order is None else []
    if ordered is None:
        ordered = (order is not None or bool(labels) or pd.api.types.is_numeric_dtype(series.dtype)
                   or (isinstance(values.dtype, pd.CategoricalDtype) and bool(values.dtype.ordered)))
    return tally_from_category_counts({str(c): int(n) for c, n in counts.items()}, n_total=len(series),
                                      n_missing=int(missing_mask.sum()), natural=natural, order=order,
                                      labels=labels, ordered=bool(ordered), min_cell=min_cell, column=column)


def tally_from_category_counts(counts: Mapping[str, int], *, n_total: int, n_missing: int, natural: Sequence[str],
                               order: Sequence | None = None, labels: Mapping | None = None, ordered: bool,
                               min_cell: int = 5, column: str) -> Tally:
    """:func:`tally` from the count of each category (named as :func:`~.subgroups.level_name` names it),
    the row and missing counts and the categories' natural order: the form that merges across blocks
    of a file and Dask partitions (:class:`scalewright.summaries.CategoryCounts`)."""
    if isinstance(min_cell, bool) or not isinstance(min_cell, (int, np.integer)) or min_cell < 1:
        raise UsageError(f"min_cell must be a whole number of at least 1, got {min_cell!r}")
    label_of = {level_name(k): str(v) for k, v in (labels or {}).items()}
    if order is not None:
        categories = [level_name(c) for c in order]
        if len(set(categories)) != len(categories):
            raise UsageError(f"the order for {column} lists a category twice: {', '.join(categories)}")
        unknown = [c for c in counts if c not in categories]
        if unknown:
            raise UsageError(f"column {column} has value(s) {', '.join(map(repr, unknown))} that the given order "
                            f"({', '.join(categories)}) does not list")
    elif label_of:
        categories = list(label_of) + [c for c in natural if c not in label_of]
    else:
        categories = list(natural)
    exact = {c: int(counts.get(c, 0)) for c in categories}
    return tally_from_counts(exact, n_total=n_total, n_missing=n_missing, column=column,
                             ordered=bool(ordered), labels=label_of, min_cell=min_cell)


def tally_from_counts(exact: Mapping[str, int], *, n_total: int, n_missing: int, column: str, ordered: bool,
                      labels: Mapping[str, str] | None = None, min_cell: int = 5) -> Tally:
    """The :class:`Tally` of counts already made: ``exact`` maps each category name, in order, to its count.

    What :func:`tally` returns once it has counted; callers that count otherwise (every answer code of
    every item in one pass, :func:`scalewright.stats.coded.code_counts`) get the same result from here.
    """
    if isinstance(min_cell, bool) or not isinstance(min_cell, (int, np.integer)) or min_cell < 1:
        raise UsageError(f"min_cell must be a whole number of at least 1, got {min_cell!r}")
    exact = {str(c): int(v) for c, v in exact.items()}
    categories = list(exact)
    label_of = dict(labels or {})
    hidden, notes = _suppression(exact, min_cell, column)
    n_valid = n_total - n_missing
    rows = []
    running = 0
    hidden_before = 0
    for c in categories:
        running += exact[c]
        hidden_before += c in hidden
        cumulative_safe = ordered and hidden_before in (0, len(hidden))
        if c in hidden:
            rows.append(CategoryCount(category=c, label=label_of.get(c, c), count=None, suppressed=True,
                                      percent=None, valid_percent=None, cumulative_percent=
                                      100.0 * running / n_valid if cumulative_safe and n_valid else None))
            continue
        rows.append(CategoryCount(
            category=c, label=label_of.get(c, c), count=exact[c], suppressed=False,
            percent=100.0 * exact[c] / n_total if n_total else None,
            valid_percent=100.0 * exact[c] / n_valid if n_valid else None,
            cumulative_percent=100.0 * running / n_valid if cumulative_safe and n_valid else None))
    if ordered and hidden and any(r.cumulative_percent is None for r in rows):
        notes.append(note("cumulative-withheld"))
    if n_total == 0:
        notes.append(note("column-no-rows", column=column))
    elif n_valid == 0:
        notes.append(note("column-unanswered", column=column))
    return Tally(column=column, ordered=bool(ordered), categories=tuple(rows), n_total=n_total,
                 n_missing=n_missing, min_cell=min_cell, notes=tuple(notes))


def _suppression(exact: dict[str, int], min_cell: int, column: str) -> tuple[set[str], list[Note]]:
    primary = {c for c, n in exact.items() if 0 < n < min_cell}
    notes: list[Note] = []
    hidden = set(primary)
    if len(primary) == 1:
        candidates = sorted((n, i, c) for i, (c, n) in enumerate(exact.items()) if n > 0 and c not in primary)
        if candidates:
            hidden.add(candidates[0][2])
    if primary:
        notes.append(note("categories-suppressed", column=column, count=len(primary), min_cell=int(min_cell)))
    if len(hidden) > len(primary):
        notes.append(note("complementary-suppression", column=column))
    return hidden, notes


# ----------------------------------------------------------------------------- rating items


@dataclass(frozen=True)
class AnswerDistribution(ResultMixin):
    """Answer distribution of several rating items on one answer format (for diverging bars)."""

    items: tuple[Tally, ...]
    levels: tuple[str, ...]
    labels: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({"levels": list(self.levels), "labels": list(self.labels),
                            "items": {t.column: t.to_dict() for t in self.items}})


def answer_distribution(items: np.ndarray, levels: Sequence[int], labels: Mapping[int, str] | None = None, *,
                        item_names: Sequence[str] | None = None, min_cell: int = 5) -> AnswerDistribution:
    """Tally every column of an n x p answer-code matrix (NaN missing) over the same answer levels.

    Pass raw codes to show what respondents answered, or keyed codes to line items up in one direction.
    Codes outside ``levels`` raise ``UsageError`` (the data reader refuses them first).
    """
    matrix = np.asarray(items, dtype=float)
    if matrix.ndim != 2:
        raise UsageError(f"the item matrix must have two dimensions, got shape {matrix.shape}")
    names = list(item_names) if item_names is not None else [f"item{j + 1}" for j in range(matrix.shape[1])]
    if len(names) != matrix.shape[1]:
        raise UsageError(f"{len(names)} item names for {matrix.shape[1]} item columns")
    levels = [int(v) for v in levels]
    label_map = {int(k): str(v) for k, v in (labels or {}).items()}
    answered = ~np.isnan(matrix)
    counts = np.stack([np.count_nonzero(matrix == v, axis=0) for v in levels]) if levels else None
    if counts is not None and (counts.sum(axis=0) == answered.sum(axis=0)).all():
        # every answer is one of the levels: one comparison per level over the whole matrix, not a Python
        # call per answer; the same tallies as the per-column route below
        n_answered = answered.sum(axis=0)
        level_labels = {str(v): label_map.get(v, str(v)) for v in levels}
        tallies = tuple(tally_from_counts({str(v): int(counts[i, j]) for i, v in enumerate(levels)},
                                          n_total=matrix.shape[0], n_missing=int(matrix.shape[0] - n_answered[j]),
                                          column=name, ordered=True, labels=level_labels, min_cell=min_cell)
                        for j, name in enumerate(names))
        return AnswerDistribution(items=tallies, levels=tuple(str(v) for v in levels),
                                  labels=tuple(label_map.get(v, str(v)) for v in levels))
    tallies = tuple(tally(pd.Series(matrix[:, j], name=name), order=levels,
                          labels={v: label_map.get(v, str(v)) for v in levels}, ordered=True, min_cell=min_cell)
                    for j, name in enumerate(names))
    return AnswerDistribution(items=tallies, levels=tuple(str(v) for v in levels),
                              labels=tuple(label_map.get(v, str(v)) for v in levels))


__all__ = ["AnswerDistribution", "CategoryCount", "Tally", "answer_distribution", "tally", "tally_from_category_counts",
           "tally_from_counts"]
