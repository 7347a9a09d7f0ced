"""Weighted `reliability` and `compare` blocks from merged weighted summaries (survey weights streamed).

The same blocks as :func:`~scalewright.analyses.weighted_reliability.weighted_reliability` and
:func:`~scalewright.stats.weighted_groups.weighted_compare` give from the rows, from the weighted members
of a summary (:mod:`scalewright.summaries.weighted`): weighted cross-products of the complete rows, weighted
answer counts per item, weighted score value counts. Sums of float weights agree with the rows' to 1e-12;
the row counts exactly.
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from .summarised import category_levels, level_summaries, subgroup_split


def check_weights(path: str, reading: Any, column: str, *, lenient: bool) -> list[str]:
    """Refuse the run as :func:`~scalewright.weights.read_weights` does, or give the notes of
    ``cli.common._with_weights`` (the same sentences)."""
    from ..errors import DataError, Problem
    from ..notes import note
    from ..present.messages import describe
    from ..weights import _describe

    total = sum(reading.refused.values())
    if total and not lenient:
        problems = [Problem(file=place[2] or path, where=f"row {place[1]}, column {column}",
                            message=_describe(kind, value)) for place, value, kind in reading.first]
        remedy = "fix them, or use --lenient to leave those rows out of the estimates (counted)"
        if total == 1:
            only = problems[0]
            problems = [Problem(file=only.file, where=only.where,
                                message=f"{only.message}; {remedy.replace('them', 'it', 1)}")]
        else:
            detail = ", ".join(f"{count} {kind.replace('_', ' ')}" for kind, count in reading.refused.items())
            problems.append(Problem(file=path, where=f"column {column}",
                                    message=f"{total} weight(s) in all cannot be used ({detail}); {remedy}", total=True))
        raise DataError(problems)
    found = [note("weights-approximate-inference", weight_column=column)]
    if reading.n_zero_weight:
        found.append(note("weights-zero", weight_column=column, n_zero_weight=reading.n_zero_weight))
    from ..weights import BAD_KINDS

    for kind in BAD_KINDS:
        if reading.refused.get(kind):
            found.append(note("weights-refused", weight_column=column, kind=kind.replace("_", " "),
                              count=reading.refused[kind]))
    return [describe(found_note) for found_note in found]


def _weighted_block(part: Any, scale: Any, *, weight_column: str, confidence_level: float, thresholds: Any) -> dict:
    """:func:`~scalewright.analyses.weighted_reliability.weighted_scale_reliability` of one scale's summary."""
    from ..stats.item_analysis import item_descriptives_from_tally
    from ..stats.reliability import reliability_from_cov
    from ..stats.reliability_flags import ReliabilityThresholds

    low, high = int(scale.response.min), int(scale.response.max)
    reversed_mask = np.array([scale.is_reversed(item) for item in scale.items], dtype=bool)
    cross, answers, weighted = part["w_cross_products"], part["answers"], part["w_answers"]
    n_used, v1, v2 = cross.n_used, cross.sum_w, cross.sum_w2
    n_eff = v1**2 / v2 if n_used else math.nan
    deff = n_used * v2 / v1**2 if n_used else math.nan
    described = item_descriptives_from_tally(answers.tally, n_rows=answers.n_rows, low=low, high=high,
                                             reversed_mask=reversed_mask)
    codes = np.arange(high - low + 1, dtype=np.float64)
    k = len(scale.items)
    mean, sd, floor, ceiling, missing = (np.full(k, np.nan) for _ in range(5))
    for j in range(k):
        tally = weighted.tally[j]
        answered = float(tally.sum())
        if weighted.rows[j]:
            keyed = high - codes if reversed_mask[j] else low + codes
            mean[j] = float(tally @ keyed) / answered
            if weighted.rows[j] >= 2:
                sd[j] = math.sqrt(float(tally @ (keyed - mean[j]) ** 2) / (answered - weighted.sum_w2[j] / answered))
            floor[j] = 100 * tally[0] / answered
            ceiling[j] = 100 * tally[-1] / answered
        missing[j] = 100 * (weighted.total - answered) / weighted.total if weighted.total > 0 else np.nan
    described = replace(described, mean=mean, sd=sd, floor_pct=floor, ceiling_pct=ceiling, missing_pct=missing)
    # Feldt's interval on Kish's effective n, which is fractional (as the whole-file weighted route passes it)
    result = reliability_from_cov(cross.covariance(reversed_mask), n_eff if np.isfinite(n_eff) else 0,  # type: ignore[arg-type]
                                  item_names=scale.items, confidence_level=confidence_level,
                                  thresholds=thresholds or ReliabilityThresholds(), reversed_items=scale.reverse,
                                  descriptives=described, n_rows=answers.n_rows)
    block = result.to_dict()
    block.update({"weighted": True, "weight_column": weight_column, "n": n_used, "n_used": n_used,
                  "n_set_aside": int(answers.n_rows - n_used), "n_zero_weight": cross.n_zero_weight,
                  "n_effective": n_eff, "sum_of_weights": v1 if n_used else 0.0, "design_effect": deff,
                  "ci_basis": {"code": "weighted-ci-kish", "n_effective": n_eff, "n": n_used, "design_effect": deff}})
    return block


def weighted_reliability_from_summaries(spec: Any, summary: Any, *, weight_column: str, by: Sequence[str] = (),
                                        confidence_level: float = 0.95, min_group: int = 10,
                                        thresholds: Any = None) -> dict[str, dict[str, Any]]:
    """``{scale: {"all": block, "by": {column: {level: block}}}}`` as ``weighted_reliability`` gives it."""
    options = dict(weight_column=weight_column, confidence_level=confidence_level, thresholds=thresholds)
    splits = []
    for column in by:
        split, members = subgroup_split(spec, summary, column, min_group=min_group)
        splits.append((column, level_summaries(summary, column, {n: members[n] for n in split.levels})))
    return {name: {"all": _weighted_block(summary["scales"][name], scale, **options),
                   "by": {column: {level: _weighted_block(part[name], scale, **options) for level, part in parts.items()}
                          for column, parts in splits}}
            for name, scale in spec.scales.items()}


@dataclass(frozen=True)
class _Pooled:
    """Value-weight tables put together: the scores and weights, the sums of weights and of squared weights,
    the rows, the weighted mean and sd, Kish's effective n and design effect."""

    x: np.ndarray
    w: np.ndarray
    v1: float
    v2: float
    rows: int
    mean: float
    sd: float
    n_eff: float
    deff: float


def _pooled(values: Sequence[tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]]) -> _Pooled:
    """The value-weight tables (values, weights, squared weights, rows per value) of some levels put together."""
    x = np.concatenate([v[0] for v in values]) if values else np.array([])
    w = np.concatenate([v[1] for v in values]) if values else np.array([])
    v2 = float(sum(v[2].sum() for v in values))
    rows = int(sum(v[3].sum() for v in values))
    v1 = float(w.sum())
    mean = float(w @ x) / v1 if rows else math.nan
    sd = math.sqrt(float(w @ (x - mean) ** 2) / (v1 - v2 / v1)) if rows >= 2 else math.nan
    return _Pooled(x=x, w=w, v1=v1, v2=v2, rows=rows, mean=mean, sd=sd,
                   n_eff=v1**2 / v2 if rows else math.nan, deff=rows * v2 / v1**2 if rows else math.nan)


def weighted_compare_from_summaries(spec: Any, summary: Any, *, by: Sequence[str], weight_column: str,
                                    min_cell: int = 5, confidence_level: float = 0.95) -> dict[str, dict[str, Any]]:
    """``{column: {scale: WeightedComparison}}`` as :func:`~scalewright.stats.weighted_groups.weighted_compare`
    gives it from the rows, from each level's weighted score value counts."""

    from ..notes import note
    from ..stats.weighted_groups import WeightedComparison, WeightedLevel, weighted_two_levels

    out: dict[str, dict[str, Any]] = {}
    for column in by:
        members, _ = category_levels(spec, summary["categories"][column], column)
        parts = level_summaries(summary, column, members)
        out[column] = {}
        for name in spec.scales:
            described, not_described = [], {}
            for level, part in parts.items():
                table = part[name]["w_scores"].values(part[name]["scores"])
                count = int(table[3].sum())
                if count < min_cell:
                    not_described[level] = count
                else:
                    described.append((level, _pooled([table])))
            everyone = _pooled([(s.x, s.w, np.array([s.v2]), np.array([s.rows])) for _, s in described])
            levels = tuple(WeightedLevel(level=level, n=s.rows, n_effective=s.n_eff, sum_of_weights=s.v1,
                                         mean=s.mean, sd=s.sd) for level, s in described)
            notes = (note("weighted-ci-kish", n_effective=everyone.n_eff, n=everyone.rows,
                          design_effect=everyone.deff),)
            fields: dict[str, Any] = {}
            if len(described) >= 2:
                grand = everyone.mean
                between = sum(s.v1 * (s.mean - grand) ** 2 for _, s in described)
                total = float(everyone.w @ (everyone.x - grand) ** 2)
                fields["eta_squared"] = between / total if total > 0 else math.nan
            if len(described) == 2:
                (_, a), (_, b) = described
                fields.update(weighted_two_levels(a.mean, a.sd, a.n_eff, b.mean, b.sd, b.n_eff,
                                                  confidence_level=confidence_level))
            out[column][name] = WeightedComparison(column=column, scale=name, weight_column=weight_column,
                                                   n=everyone.rows, n_effective=everyone.n_eff,
                                                   sum_of_weights=everyone.v1, levels=levels,
                                                   not_described=not_described, notes=notes, **fields)
    return out


def weighted_tally_from_summaries(spec: Any, summary: Any, unweighted: Any, *, weight_column: str) -> Any:
    """:func:`~scalewright.stats.weighted_tally.weighted_tally` of a tallied item or column from its merged
    weighted counts (same categories, order and suppression as ``unweighted``)."""
    from ..stats.subgroups import level_name
    from ..stats.weighted_tally import WeightedShare, WeightedTally

    column = unweighted.column
    if spec is not None and column in spec.items:
        owner, position = next((name, scale.items.index(column)) for name, scale in spec.scales.items()
                               if column in scale.items)
        weighted, answers = summary["scales"][owner]["w_answers"], summary["scales"][owner]["answers"]
        low = spec.response_for(column).min
        sums = {level_name(low + code): float(mass) for code, mass in enumerate(weighted.tally[position])}
        n, rows = int(answers.tally[position].sum()), int(weighted.rows[position])
        v1, v2, total_all = float(weighted.tally[position].sum()), float(weighted.sum_w2[position]), weighted.total
    else:
        counts, weighted = summary["categories"][column], summary["w_categories"][column]
        members, _ = category_levels(spec, counts, column)
        sums = {name: float(sum(weighted.sum_w.get(key, 0.0) for key in raw)) for name, raw in members.items()}
        n, rows = counts.n - counts.missing, int(sum(weighted.rows.values()))
        v1, v2, total_all = float(sum(weighted.sum_w.values())), float(sum(weighted.sum_w2.values())), weighted.total
    shares = []
    for category in unweighted.categories:
        if category.suppressed:
            shares.append(WeightedShare(category=category.category, sum_of_weights=None, share_of_answered_pct=None,
                                        share_of_all_pct=None, suppressed=True))
            continue
        mass = sums.get(category.category, 0.0)
        shares.append(WeightedShare(category=category.category, sum_of_weights=mass,
                                    share_of_answered_pct=100.0 * mass / v1 if v1 > 0 else None,
                                    share_of_all_pct=100.0 * mass / total_all if total_all > 0 else None,
                                    suppressed=False))
    return WeightedTally(column=column, weight_column=weight_column, n=n, n_zero_weight=n - rows,
                         n_effective=v1**2 / v2 if rows else math.nan, sum_of_weights=v1,
                         design_effect=rows * v2 / v1**2 if rows else math.nan, categories=tuple(shares))


def _weighted_shape_of_values(values: np.ndarray, sum_w: np.ndarray, *, sum_w2: float, rows: int, n: int,
                              percentiles: Sequence[float], edges: Any, weight_column: str) -> Any:
    """:func:`~scalewright.stats.weighted.weighted_shape` of a sample given as distinct values with the sums
    of their positive weights (``rows`` such rows, ``sum_w2`` their squared weights; ``n`` rows with a value,
    zero weights included): the same moments, quantiles and histogram."""
    from ..notes import note
    from ..stats.weighted import WeightedShape, WeightedSummary, weighted_quantiles

    kept = sum_w > 0
    x, w = values[kept], sum_w[kept]
    v1 = float(w.sum())
    n_eff = v1**2 / sum_w2 if rows else math.nan
    mean = float(w @ x) / v1 if rows else math.nan
    sd = math.sqrt(float(w @ (x - mean) ** 2) / (v1 - sum_w2 / v1)) if rows >= 2 else math.nan
    skew = kurt = math.nan
    notes = []
    if rows >= 3 and x.size > 1:  # weighted_summary's adjusted moments with Kish's n in place of n
        d = x - mean
        m2, m3, m4 = (float(w @ d**r) / v1 for r in (2, 3, 4))
        g1, g2 = m3 / m2**1.5, m4 / m2**2 - 3
        skew = math.sqrt(n_eff * (n_eff - 1)) / (n_eff - 2) * g1 if n_eff > 2 else math.nan
        kurt = ((n_eff - 1) / ((n_eff - 2) * (n_eff - 3)) * ((n_eff + 1) * g2 + 6)) if n_eff > 3 else math.nan
    elif rows:
        notes.append(note("weighted-moments-undefined", n=rows))
    summary = WeightedSummary(weighted=True, weight_column=weight_column, n=n, n_zero_weight=n - rows,
                              n_effective=n_eff, sum_of_weights=v1, design_effect=rows * sum_w2 / v1**2 if rows else math.nan,
                              mean=mean, sd=sd, skewness=skew, kurtosis=kurt, notes=tuple(notes))
    probabilities = np.array([25.0, 50.0, 75.0, *map(float, percentiles)]) / 100
    q = weighted_quantiles(x, w, probabilities)
    heights: tuple[float, ...] = ()
    if edges is not None and len(edges) > 1:
        mass, _ = np.histogram(x, bins=np.asarray(edges, dtype=float), weights=w)
        heights = tuple(float(v) for v in (100.0 * mass / v1 if v1 > 0 else np.full(mass.shape, math.nan)))
    return WeightedShape(summary=summary, q1=float(q[0]), median=float(q[1]), q3=float(q[2]),
                         percentiles={f"{p:g}": float(v) for p, v in zip(percentiles, q[3:], strict=True)},
                         histogram_edges=tuple(map(float, edges)) if edges is not None else (),
                         histogram_weighted_pct=heights)


def weighted_shapes_from_summaries(spec: Any, summary: Any, reports: Any, *, weight_column: str,
                                   percentiles: Sequence[float] = (5, 10, 25, 50, 75, 90, 95)) -> dict[str, Any]:
    """:func:`~scalewright.analyses.weighted_shape.weighted_shapes` from the merged weighted score and answer
    counts, overall and per level of each subgroup column the reports describe."""
    level_parts = {}
    for report in reports.values():
        for group in report.groups:
            if group.column not in level_parts:
                members, _ = category_levels(spec, summary["categories"][group.column], group.column)
                level_parts[group.column] = level_summaries(summary, group.column, members)

    def describe(parts: Any, report: Any, summary_of_level: Any) -> Any:
        edges = (summary_of_level.histogram.edges
                 if summary_of_level is not None and summary_of_level.histogram is not None else None)
        if report.kind == "scale":
            scores = parts[report.name]["scores"]
            values, sum_w, sum_w2, rows = parts[report.name]["w_scores"].values(scores)
            n, rows_used, v2 = scores.n_rows - scores.n_missing, int(rows.sum()), float(sum_w2.sum())
        else:
            owner, position = next((name, scale.items.index(report.name)) for name, scale in spec.scales.items()
                                   if report.name in scale.items)
            weighted, answers = parts[owner]["w_answers"], parts[owner]["answers"]
            sum_w = weighted.tally[position]
            values = spec.response_for(report.name).min + np.arange(sum_w.size, dtype=np.float64)
            n, rows_used, v2 = int(answers.tally[position].sum()), int(weighted.rows[position]), \
                float(weighted.sum_w2[position])
        return _weighted_shape_of_values(values, np.asarray(sum_w, dtype=np.float64), sum_w2=v2, rows=rows_used, n=n,
                                         percentiles=percentiles, edges=edges, weight_column=weight_column)

    return {name: {"all": describe(summary["scales"], report, report.overall),
                   "by": {group.column: {level: describe(level_parts[group.column][level], report, described)
                                         for level, described in group.levels.items()} for group in report.groups}}
            for name, report in reports.items()}


def weighted_tallies_from_summaries(spec: Any, summary: Any, tallies: Sequence[Any], *, weight_column: str,
                                    expected: Any = None) -> tuple[Any, ...]:
    """:func:`~scalewright.analyses.tally.weighted_tallies` from merged weighted counts: the weighted shares
    of each tally and, for a column with reference proportions, their fit."""
    from ..stats.weighted_tally import weighted_goodness_of_fit
    from .tally import WeightedTallyResult

    out = []
    for result in tallies:
        shares = weighted_tally_from_summaries(spec, summary, result, weight_column=weight_column)
        reference = (expected or {}).get(result.column)
        fit = None if reference is None else weighted_goodness_of_fit(
            shares, result, reference.proportions, source=reference.path, rows=reference.lines)
        out.append(WeightedTallyResult(shares=shares, fit=fit))
    return tuple(out)


def weighted_one_factor_models_from_summaries(spec: Any, summary: Any, *,
                                              weight_column: str) -> tuple[dict[str, Any], dict[str, dict]]:
    """Each scale's one-factor model fitted by ML to its weighted covariance (complete answers, positive
    weight) with Kish's n_eff as N, as ``confirm`` fits it from the rows
    (:func:`~scalewright.analyses.confirm.weighted_model_input`); with the weighted block of each fit."""
    from ..concurrency import one_blas_thread
    from ..stats.cfa_fit import fit
    from ..stats.cfa_model import factor_model
    from ..stats.cfa_result import summarize_fit

    owner: dict[str, Any] = {}
    for scale in spec.scales.values():
        for item in scale.items:
            owner.setdefault(item, scale)
    models, blocks = {}, {}
    with one_blas_thread():
        for name, scale in spec.scales.items():
            items = tuple(scale.items)
            cross = summary["scales"][name]["w_cross_products"]
            reversed_mask = np.array([owner[item].is_reversed(item) for item in items], dtype=bool)
            v1, v2, n_used = cross.sum_w, cross.sum_w2, cross.n_used
            n_eff = v1**2 / v2 if n_used else 0.0
            fitted = fit(cross.covariance(reversed_mask), n_eff, factor_model({name: items}))
            models[name] = summarize_fit(fitted, name=name, scales={name: items})
            blocks[name] = {"weighted": True, "weight_column": weight_column, "n": n_used,
                            "n_zero_weight": cross.n_zero_weight, "n_effective": n_eff,
                            "sum_of_weights": v1 if n_used else 0.0,
                            "design_effect": n_used * v2 / v1**2 if n_used else math.nan, "fit_n": "n_effective"}
    return models, blocks
