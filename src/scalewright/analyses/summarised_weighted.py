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
from dataclasses import replace
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
                                    message=f"{total} weight(s) in all cannot be used ({detail}); {remedy}"))
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
    from ..stats.reliability import ReliabilityThresholds, item_descriptives_from_tally, reliability_from_cov

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
    result = reliability_from_cov(cross.covariance(reversed_mask), n_eff if np.isfinite(n_eff) else 0,
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


def _pooled(values: list[tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]]) -> dict[str, float]:
    """Sum of weights, of squared weights, rows, weighted mean and sd of value-weight tables put together."""
    x = np.concatenate([v[0] for v in values]) if values else np.array([])
    w = np.concatenate([v[1] for v in values]) if values else np.array([])
    v2 = float(sum(v[2].sum() for v in values))
    rows = int(sum(v[3].sum() for v in values))
    v1 = float(w.sum())
    mean = float(w @ x) / v1 if rows else math.nan
    sd = math.sqrt(float(w @ (x - mean) ** 2) / (v1 - v2 / v1)) if rows >= 2 else math.nan
    return {"x": x, "w": w, "v1": v1, "v2": v2, "rows": rows, "mean": mean, "sd": sd,
            "n_eff": v1**2 / v2 if rows else math.nan, "deff": rows * v2 / v1**2 if rows else math.nan}


def weighted_compare_from_summaries(spec: Any, summary: Any, *, by: Sequence[str], weight_column: str,
                                    min_cell: int = 5, confidence_level: float = 0.95) -> dict[str, dict[str, Any]]:
    """``{column: {scale: WeightedComparison}}`` as :func:`~scalewright.stats.weighted_groups.weighted_compare`
    gives it from the rows, from each level's weighted score value counts."""
    from scipy import stats

    from ..notes import note
    from ..stats.weighted_groups import WeightedComparison, WeightedLevel

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
            everyone = _pooled([(s["x"], s["w"], np.array([s["v2"]]), np.array([s["rows"]])) for _, s in described])
            levels = tuple(WeightedLevel(level=level, n=s["rows"], n_effective=s["n_eff"], sum_of_weights=s["v1"],
                                         mean=s["mean"], sd=s["sd"]) for level, s in described)
            notes = (note("weighted-ci-kish", n_effective=everyone["n_eff"], n=everyone["rows"],
                          design_effect=everyone["deff"]),)
            fields: dict[str, Any] = {}
            if len(described) >= 2:
                grand = everyone["mean"]
                between = sum(s["v1"] * (s["mean"] - grand) ** 2 for _, s in described)
                total = float(everyone["w"] @ (everyone["x"] - grand) ** 2)
                fields["eta_squared"] = between / total if total > 0 else math.nan
            if len(described) == 2:  # the formulas of weighted_compare
                (_, a), (_, b) = described
                n1, n2 = a["n_eff"], b["n_eff"]
                v1, v2 = a["sd"] ** 2 / n1, b["sd"] ** 2 / n2
                diff = a["mean"] - b["mean"]
                t = diff / math.sqrt(v1 + v2) if v1 + v2 > 0 else math.nan
                df = (v1 + v2) ** 2 / (v1**2 / (n1 - 1) + v2**2 / (n2 - 1)) if v1 + v2 > 0 else math.nan
                pooled = math.sqrt(((n1 - 1) * a["sd"] ** 2 + (n2 - 1) * b["sd"] ** 2) / (n1 + n2 - 2))
                g = (1 - 3 / (4 * (n1 + n2) - 9)) * diff / pooled if pooled > 0 else math.nan
                se = math.sqrt((n1 + n2) / (n1 * n2) + g**2 / (2 * (n1 + n2)))
                z = float(stats.t.ppf(0.5 + confidence_level / 2, n1 + n2 - 2))
                fields.update(mean_difference=diff, t=t, df=df,
                              pvalue=float(2 * stats.t.sf(abs(t), df)) if math.isfinite(t) else math.nan,
                              hedges_g=g, hedges_g_ci=(g - z * se, g + z * se))
            out[column][name] = WeightedComparison(column=column, scale=name, weight_column=weight_column,
                                                   n=everyone["rows"], n_effective=everyone["n_eff"],
                                                   sum_of_weights=everyone["v1"], levels=levels,
                                                   not_described=not_described, notes=notes, **fields)
    return out
