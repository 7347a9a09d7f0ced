"""Frequency tables of categorical columns and rating items, their fit to reference proportions, and the answer
distributions of every scale: the one place the ``tally`` command and the report count categories.

Plain library functions (no click). A column is counted from the whole file (``column_of`` gives its values)
or, on the streamed and Dask routes, from the mergeable category and answer counts (``summary``); both give
the same tables.
"""
from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

from ..errors import UsageError

if TYPE_CHECKING:
    import pandas as pd

    from ..expected_file import ReferenceProportions
    from ..responses import Responses
    from ..spec_model import ScaleSpec
    from ..stats.tally import AnswerDistribution, Tally
    from ..stats.tally_fit import FitResult
    from ..stats.weighted_tally import WeightedFit, WeightedTally
    from ..summaries import Summary

#: the values of one column of the data file, by its name
ColumnValues = Callable[[str], "pd.Series"]


@dataclass(frozen=True)
class WeightedTallyResult:
    """The weighted shares beside one unweighted tally, and their fit to the reference proportions if any."""

    shares: WeightedTally
    fit: WeightedFit | None = None


@dataclass(frozen=True)
class TallyAnalysis:
    """The tallies of the asked columns in order, the fit of each (None without reference proportions) and,
    with survey weights, the weighted shares of each."""

    tallies: tuple[Tally, ...]
    fits: tuple[FitResult | None, ...]
    weighted: tuple[WeightedTallyResult, ...] = ()


def analyse_tally(names: Sequence[str], *, spec: ScaleSpec | None = None, responses: Responses | None = None,
                  column_of: ColumnValues | None = None, summary: Summary | None = None,
                  orders: Mapping[str, Sequence[str]] | None = None,
                  expected: Mapping[str, ReferenceProportions] | None = None,
                  min_cell: int = 5) -> TallyAnalysis:
    """Tally every column of ``names`` and test those with reference proportions (``expected``: column ->
    :class:`~scalewright.expected_file.ReferenceProportions`); weighted shares too when ``responses`` carries
    survey weights."""
    tallies = tally_columns(names, spec=spec, responses=responses, column_of=column_of, summary=summary,
                            orders=orders, min_cell=min_cell)
    fits = fit_to_expected(tallies, expected or {})
    weighted = weighted_tallies(tallies, fits, column_of=column_of, responses=responses, expected=expected or {})
    return TallyAnalysis(tallies=tallies, fits=fits, weighted=weighted)


def tally_columns(names: Sequence[str], *, spec: ScaleSpec | None = None, responses: Responses | None = None,
                  column_of: ColumnValues | None = None, summary: Summary | None = None,
                  orders: Mapping[str, Sequence[str]] | None = None, min_cell: int = 5) -> tuple[Tally, ...]:
    """:func:`~scalewright.stats.tally.tally` of every column of ``names``, in order.

    Items of the scale file are counted in their answer order with their answer labels (``orders`` overrides
    the order of any column). From ``summary`` (the streamed routes) every column comes from its counts;
    otherwise from ``column_of`` (default: ``responses.column``), the items held as codes in one pass.
    """
    from ..stats.tally import tally
    from .summarised import tally_of_column, tally_of_item

    orders = orders or {}
    if column_of is None and responses is not None:
        column_of = responses.column
    counted = {} if summary is not None else _count_item_codes(
        spec, responses, [name for name in names if name not in orders], min_cell=min_cell)
    tallies = []
    for name in names:
        item_spec = spec if spec is not None and name in spec.items else None
        labels: dict[int, str] | None = None
        order: list | None = None
        if item_spec is not None:
            response = item_spec.response_for(name)
            order = list(response.levels)
            labels = {level: response.label(level) for level in response.levels}
        if name in orders:
            order = list(orders[name])
        if summary is None:
            if name in counted:
                result = counted[name]
            else:
                if column_of is None:
                    raise UsageError(f"column {name!r}: no data to tally (give column_of, responses or summary)")
                result = tally(column_of(name), order=order, labels=labels, min_cell=min_cell, column=name)
        elif item_spec is not None:
            result = tally_of_item(item_spec, summary, name, order=order, labels=labels, min_cell=min_cell)
        else:
            result = tally_of_column(spec, summary, name, order=order, min_cell=min_cell)
        tallies.append(result)
    return tuple(tallies)


def fit_to_expected(tallies: Sequence[Tally], expected: Mapping[str, ReferenceProportions]) \
        -> tuple[FitResult | None, ...]:
    """:func:`~scalewright.stats.tally_fit.goodness_of_fit` of each tally whose column has reference proportions."""
    from ..stats.tally_fit import goodness_of_fit

    fits = []
    for result in tallies:
        reference = expected.get(result.column)
        fits.append(None if reference is None else
                    goodness_of_fit(result, reference.proportions, source=reference.path, rows=reference.lines))
    return tuple(fits)


def weighted_tallies(tallies: Sequence[Tally], fits: Sequence[FitResult | None], *, column_of: ColumnValues | None,
                     responses: Responses | None,
                     expected: Mapping[str, ReferenceProportions]) -> tuple[WeightedTallyResult, ...]:
    """Weighted shares (and their fit to the reference) beside each unweighted tally; empty without weights."""
    weights = getattr(responses, "weights", None)
    if weights is None or responses is None:
        return ()
    from ..stats.weighted_tally import weighted_goodness_of_fit, weighted_tally

    column_of = column_of or responses.column
    out = []
    for result, _fit in zip(tallies, fits, strict=True):
        shares = weighted_tally(column_of(result.column), weights.values, result, weight_column=weights.column)
        reference = expected.get(result.column)
        weighted_fit = None if reference is None else weighted_goodness_of_fit(
            shares, result, reference.proportions, source=reference.path, rows=reference.lines)
        out.append(WeightedTallyResult(shares=shares, fit=weighted_fit))
    return tuple(out)


def answer_distributions(spec: ScaleSpec, *, responses: Responses | None = None, summary: Summary | None = None,
                         min_cell: int = 5) -> dict[str, AnswerDistribution]:
    """:class:`~scalewright.stats.tally.AnswerDistribution` of the answers (as given) of every scale's items,
    from the whole file (``responses``) or from the answer counts (``summary``)."""
    from ..stats.tally import AnswerDistribution, answer_distribution
    from .summarised import tally_of_item

    out = {}
    for scale_name, scale in spec.scales.items():
        response = scale.response
        labels = {level: response.label(level) for level in response.levels}
        if summary is None:
            if responses is None:
                raise UsageError("answer distributions need the responses or their summary")
            out[scale_name] = answer_distribution(responses.matrix(scale.items), response.levels, labels,
                                                  item_names=scale.items, min_cell=min_cell)
        else:
            out[scale_name] = AnswerDistribution(
                items=tuple(tally_of_item(spec, summary, item, order=list(response.levels), labels=labels,
                                          min_cell=min_cell) for item in scale.items),
                levels=tuple(str(level) for level in response.levels),
                labels=tuple(labels[level] for level in response.levels))
    return out


def _count_item_codes(spec: ScaleSpec | None, responses: Responses | None, names: Sequence[str], *,
                      min_cell: int) -> dict[str, Tally]:
    """The tallies of the items among ``names``, every answer code of every item counted in one pass.

    Empty when there are no such items or their answers are not all held as codes (then each column is
    tallied on its own, as any other column). Same result as :func:`~scalewright.stats.tally.tally` of each
    item's clean values with the scale file's levels and labels.
    """
    from ..answer_codes import MISSING
    from ..stats.coded import code_counts
    from ..stats.tally import tally_from_counts

    if spec is None or responses is None:
        return {}
    items = [name for name in names if name in spec.items]
    codes = responses.codes(items) if items else None
    if codes is None:
        return {}
    counts = code_counts(codes)
    out = {}
    for j, name in enumerate(items):
        response = spec.response_for(name)
        exact = {str(level): int(counts[j, level - response.min]) for level in response.levels}
        out[name] = tally_from_counts(exact, n_total=responses.n, n_missing=int(counts[j, MISSING]), column=name,
                                      ordered=True, labels={str(level): str(response.label(level))
                                                            for level in response.levels}, min_cell=min_cell)
    return out
