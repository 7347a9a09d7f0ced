"""Frequency tables of one categorical column, with small-cell suppression, and their fit to reference proportions.

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

from ..errors import DataError, Problem, UsageError
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
    notes: tuple[str, ...] = ()

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
            "categories": [c.to_dict() for c in self.categories], "notes": list(self.notes)})


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
        notes.append("cumulative percentages that would reveal a suppressed count are withheld")
    if n_total == 0:
        notes.append(f"{column} has no rows")
    elif n_valid == 0:
        notes.append(f"nobody answered {column}")
    return Tally(column=column, ordered=bool(ordered), categories=tuple(rows), n_total=n_total,
                 n_missing=n_missing, min_cell=min_cell, notes=tuple(notes))


def _suppression(exact: dict[str, int], min_cell: int, column: str) -> tuple[set[str], list[str]]:
    primary = {c for c, n in exact.items() if 0 < n < min_cell}
    notes = []
    hidden = set(primary)
    if len(primary) == 1:
        candidates = sorted((n, i, c) for i, (c, n) in enumerate(exact.items()) if n > 0 and c not in primary)
        if candidates:
            hidden.add(candidates[0][2])
    if primary:
        notes.append(f"{column}: {len(primary)} categor{'y' if len(primary) == 1 else 'ies'} with fewer than "
                     f"{min_cell} respondents shown as {suppressed_text(min_cell)}")
    if len(hidden) > len(primary):
        notes.append(f"{column}: one more category withheld so the small one cannot be worked out from the total")
    return hidden, notes


# ----------------------------------------------------------------------------- goodness of fit


@dataclass(frozen=True)
class CategoryFit(ResultMixin):
    category: str
    observed: int
    expected_proportion: float
    expected: float
    pearson_residual: float
    standardized_residual: float


@dataclass(frozen=True)
class FitResult(ResultMixin):
    """Chi-square goodness of fit of a tally to reference proportions. See :func:`goodness_of_fit`.

    ``verdict``: ``resembles`` (no evidence of a difference), ``differs-slightly`` (w < .3),
    ``differs-moderately`` (.3 <= w < .5), ``differs-strongly`` (w >= .5); None when no test was possible.
    """

    column: str
    chi2: float | None
    df: int | None
    pvalue: float | None
    w: float | None
    n: int
    categories: tuple[CategoryFit, ...]
    excluded: tuple[str, ...]
    verdict: str | None
    alpha: float
    notes: tuple[str, ...] = ()

    @property
    def over_represented(self) -> tuple[str, ...]:
        return tuple(c.category for c in self.categories if c.standardized_residual > 1.96)

    @property
    def under_represented(self) -> tuple[str, ...]:
        return tuple(c.category for c in self.categories if c.standardized_residual < -1.96)

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({"column": self.column, "chi2": self.chi2, "df": self.df, "pvalue": self.pvalue,
                            "w": self.w, "n": self.n, "verdict": self.verdict, "alpha": self.alpha,
                            "categories": {c.category: {k: v for k, v in c.to_dict().items() if k != "category"}
                                           for c in self.categories},
                            "over_represented": list(self.over_represented),
                            "under_represented": list(self.under_represented),
                            "excluded": list(self.excluded), "notes": list(self.notes)})


#: how far the proportions may sum away from 1 (rounded census figures) before they are refused
PROPORTION_TOLERANCE = 0.01


def check_expected(tally_result: Tally, expected: Mapping[str, float], *, source: str = "expected proportions",
                   rows: Mapping[str, int] | None = None) -> dict[str, float]:
    """Validated reference proportions keyed by the tally's category names; ``DataError`` names source and row."""
    rows = rows or {}

    def problem(raw: Any, message: str) -> DataError:
        return DataError(Problem(file=source, line=rows.get(raw), message=message))

    known = [c.category for c in tally_result.categories]
    proportions: dict[str, float] = {}
    for raw, value in expected.items():
        category = level_name(raw)
        if category not in known:
            raise problem(raw, f"category {category!r} does not occur in {tally_result.column} "
                               f"(categories: {', '.join(known)})")
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise problem(raw, f"proportion {value!r} for {category!r} is not a number") from None
        proportions[category] = number
    total = sum(proportions.values())
    if abs(total - 100) < 1 and all(0 <= v <= 100 for v in proportions.values()):
        raise DataError(Problem(file=source, message=f"proportions sum to {total:g}, not 1 (they look like "
                                                     "percentages: give proportions between 0 and 1)"))
    for raw, value in expected.items():
        number = proportions[level_name(raw)]
        if not np.isfinite(number) or number < 0 or number > 1:
            raise problem(raw, f"proportion {value!r} for {level_name(raw)!r} must lie between 0 and 1")
    absent = [c for c in known if c not in proportions]
    if absent:
        raise DataError(Problem(file=source, message=f"no proportion given for {', '.join(map(repr, absent))} "
                                                     f"of {tally_result.column}"))
    if abs(total - 1) > PROPORTION_TOLERANCE:
        raise DataError(Problem(file=source, message=f"proportions sum to {total:g}, not 1"))
    return proportions


def goodness_of_fit(tally_result: Tally, expected: Mapping[str, float], *, alpha: float = 0.05,
                    source: str = "expected proportions", rows: Mapping[str, int] | None = None) -> FitResult:
    r"""Pearson's chi-square test of the tally against reference proportions, with residuals and w.

    .. math::

        \chi^2 = \sum_j \frac{(O_j - E_j)^2}{E_j}, \quad E_j = n p_j, \quad
        r_j = \frac{O_j - E_j}{\sqrt{E_j (1 - p_j)}}, \quad w = \sqrt{\chi^2 / n}

    Parameters
    ----------
    tally_result : Tally
    expected : mapping category -> proportion
        Must name every category of the tally and no other; proportions sum to 1 within
        ``PROPORTION_TOLERANCE`` (then rescaled to sum exactly to 1).
    alpha : float, keyword-only
        Level at which "no evidence of a difference" turns into a difference.
    source, rows : keyword-only
        Where the proportions came from (file name, and category -> row number), for error messages.

    Returns
    -------
    FitResult

    Notes
    -----
    Suppressed categories are left out of the test and the remaining proportions rescaled to sum to 1,
    so the test compares the shape of the shown categories only. The statistic and p-value are
    scipy's ``chisquare``; the standardized residuals (:math:`r_j`, approximately standard normal under the
    null) are those of Agresti (2013), hand-written because scipy does not return them. The verdict uses
    Cohen's (1988) benchmarks for w: .1 small, .3 medium, .5 large.

    References
    ----------
    .. [1] Pearson, K. (1900). On the criterion that a given system of deviations ... Philosophical
           Magazine, 50, 157-175.
    .. [2] Agresti, A. (2013). Categorical Data Analysis (3rd ed.). Wiley.
    .. [3] Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences (2nd ed.). Erlbaum.
    """
    from scipy import stats

    proportions = check_expected(tally_result, expected, source=source, rows=rows)
    notes: list[str] = []
    shown = [c for c in tally_result.categories if not c.suppressed]
    excluded = tuple(c.category for c in tally_result.categories if c.suppressed)
    if excluded:
        notes.append(f"suppressed categories ({', '.join(excluded)}) left out of the test; the other reference "
                     "proportions rescaled to sum to 1")
    kept = [c for c in shown if proportions[c.category] > 0]
    impossible = [c.category for c in shown if proportions[c.category] == 0 and c.count]
    if impossible:
        notes.append(f"the reference gives proportion 0 to {', '.join(impossible)}, which occur(s) in the data: "
                     "the sample cannot match it")
    zero_reference = [c.category for c in shown if proportions[c.category] == 0 and not c.count]
    if zero_reference:
        notes.append(f"{', '.join(zero_reference)}: proportion 0 and nobody in the data; left out of the test")
    observed = np.array([c.count for c in kept], dtype=float)
    n = int(observed.sum())
    mass = sum(proportions[c.category] for c in kept)
    empty = FitResult(column=tally_result.column, chi2=None, df=None, pvalue=None, w=None, n=n, categories=(),
                      excluded=excluded, verdict=None, alpha=alpha)
    if len(kept) < 2 or n == 0 or mass == 0 or impossible:
        if len(kept) < 2 and not impossible:
            notes.append("fewer than two categories left to compare: no test")
        if n == 0 and not impossible:
            notes.append("no answers to compare: no test")
        return FitResult(**{**empty.__dict__, "notes": tuple(notes)})
    p = np.array([proportions[c.category] for c in kept]) / mass
    expected_counts = n * p
    result = stats.chisquare(observed, expected_counts)
    chi2, pvalue = float(result.statistic), float(result.pvalue)
    if (expected_counts < 5).any():
        notes.append("some expected counts are below 5, where the chi-square approximation is rough "
                     "(Cochran 1954)")
    rows_out = tuple(CategoryFit(category=c.category, observed=int(o), expected_proportion=float(pj),
                                 expected=float(e), pearson_residual=float((o - e) / np.sqrt(e)),
                                 standardized_residual=float((o - e) / np.sqrt(e * (1 - pj))) if pj < 1 else float("nan"))
                     for c, o, pj, e in zip(kept, observed, p, expected_counts, strict=True))
    w = float(np.sqrt(chi2 / n))
    if pvalue >= alpha:
        verdict = "resembles"
    elif w < 0.3:
        verdict = "differs-slightly"
    elif w < 0.5:
        verdict = "differs-moderately"
    else:
        verdict = "differs-strongly"
    return FitResult(column=tally_result.column, chi2=chi2, df=len(kept) - 1, pvalue=pvalue, w=w, n=n,
                     categories=rows_out, excluded=excluded, verdict=verdict, alpha=alpha, notes=tuple(notes))


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


__all__ = ["AnswerDistribution", "CategoryCount", "CategoryFit", "FitResult", "PROPORTION_TOLERANCE", "Tally",
           "answer_distribution", "check_expected", "goodness_of_fit", "tally", "tally_from_category_counts", "tally_from_counts"]
