"""The analyses of the summary commands from merged summaries (a file read in blocks, Dask partitions).

Each function gives the same result objects as its whole-file counterpart in this package, from a
:class:`~scalewright.summaries.Summary` made by :mod:`scalewright.engine.plan`: the counts are the same
integers, so everything computed from them is identical.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from ..notes import Note, note
from ..summaries import Keyed, merge_all

if TYPE_CHECKING:
    from ..spec_model import ScaleSpec
    from ..stats.missing_patterns import PatternSummary
    from ..stats.structure import StructureResult
    from ..stats.subgroups import SubgroupSplit
    from ..stats.tally import Tally
    from ..summaries import CategoryCounts, ListwiseCrossProducts, Summary


def category_levels(spec: ScaleSpec | None, counts: CategoryCounts, column: str) -> tuple[dict[str, list[str]], bool]:
    """The levels of a counted column in their natural order, each with the values as read that name it
    (``01`` and ``1`` both name level ``1``), and whether the column is numeric.

    The order is :func:`~scalewright.stats.subgroups.level_order`'s: the scale file's order for a group it
    lists with its levels, numbers numerically (a column of numbers only, as the parser would type it),
    else natural text order.
    """
    from ..data import _is_number
    from ..stats.subgroups import level_name, natural_key

    keys = list(counts.counts)
    if spec is not None and column in getattr(spec, "group_levels", {}):
        return {level: [level] for level in spec.group_levels[column] if counts.counts.get(level)}, False
    if all(_is_number(key) for key in keys):
        members: dict[str, list[str]] = {}
        for key in sorted(keys, key=float):
            members.setdefault(level_name(float(key)), []).append(key)
        return members, True
    return {key: [key] for key in sorted(keys, key=natural_key)}, False


def subgroup_split(spec: ScaleSpec | None, summary: Summary, column: str, *,
                   min_group: int) -> tuple[SubgroupSplit, dict[str, list[str]]]:
    """The :class:`~scalewright.stats.subgroups.SubgroupSplit` of ``column`` from its category counts, and
    the levels as read that make up each level (see :func:`category_levels`)."""
    from ..stats.subgroups import SubgroupSplit

    counts = summary["categories"][column]
    members, _ = category_levels(spec, counts, column)
    sizes = {name: sum(counts.counts[key] for key in raw) for name, raw in members.items()}
    # a level's rows are named by its size only (the rows themselves are not held): a view of zeros
    levels = {name: np.broadcast_to(np.int64(0), (size,)) for name, size in sizes.items() if size >= min_group}
    too_small = {name: size for name, size in sizes.items() if size < min_group}
    split = SubgroupSplit(column=column, levels=levels, too_small=too_small, missing=counts.missing,
                          min_size=min_group)
    return split, members


def tally_of_column(spec: ScaleSpec | None, summary: Summary, column: str, *, order: Sequence | None = None,
                    min_cell: int = 5) -> Tally:
    """:func:`~scalewright.stats.tally.tally` of a counted (non-item) column from its category counts."""
    from ..stats.tally import tally_from_category_counts

    counts = summary["categories"][column]
    members, numeric = category_levels(spec, counts, column)
    listed = spec is not None and column in getattr(spec, "group_levels", {})
    merged = {name: sum(counts.counts[key] for key in raw) for name, raw in members.items()}
    return tally_from_category_counts(merged, n_total=counts.n, n_missing=counts.missing, natural=list(members), order=order,
                             ordered=order is not None or numeric or listed, min_cell=min_cell, column=column)


def tally_of_item(spec: ScaleSpec, summary: Summary, item: str, *, order: Sequence | None = None,
                  labels: Mapping | None = None, min_cell: int = 5) -> Tally:
    """:func:`~scalewright.stats.tally.tally` of an item's answers (as given) from its answer counts."""
    from ..stats.subgroups import level_name
    from ..stats.tally import tally_from_category_counts

    scale_name, position = next((name, scale.items.index(item)) for name, scale in spec.scales.items()
                                if item in scale.items)
    answers = summary["scales"][scale_name]["answers"]
    low = spec.response_for(item).min
    counts = {level_name(low + code): int(n) for code, n in enumerate(answers.tally[position]) if n}
    answered = int(answers.tally[position].sum())
    return tally_from_category_counts(counts, n_total=answers.n_rows, n_missing=answers.n_rows - answered,
                             natural=list(counts), order=order, labels=labels, ordered=True, min_cell=min_cell,
                             column=item)


def level_summaries(summary: Summary, column: str, members: dict[str, list[str]]) -> dict[str, Keyed]:
    """Per level name, the per-scale summaries of its rows (merged over the levels as read)."""
    by_level = summary["by"][column]
    return {name: merge_all([by_level[key] for key in raw]) for name, raw in members.items()}


def scale_reliability_from_summary(part: Any, scale: Any, *, confidence_level: float = 0.95, pairwise: bool = False,
                                   thresholds: Any = None, missing: str | None = None) -> Any:
    """:func:`~scalewright.stats.reliability.scale_reliability` of one scale from its answer counts and
    cross-products (the same statistics, notes and flags); under ``missing="em"`` the covariance is the EM
    estimate from the merged per-pattern statistics (``patterns``, with listwise cross-products)."""
    from ..stats.item_analysis import item_descriptives_from_tally
    from ..stats.reliability import deletion_notes, reliability_from_cov
    from ..stats.reliability_flags import ReliabilityThresholds

    thresholds = thresholds or ReliabilityThresholds()
    method = missing or ("pairwise" if pairwise else "listwise")
    low, high = int(scale.response.min), int(scale.response.max)
    reversed_mask = np.array([scale.is_reversed(item) for item in scale.items], dtype=bool)
    stats = part["cross_products"].covariance(low=low, high=high, reversed_mask=reversed_mask)
    answers = part["answers"]
    descriptives = item_descriptives_from_tally(answers.tally, n_rows=answers.n_rows, low=low, high=high,
                                                reversed_mask=reversed_mask)
    estimate = None
    cov, n_used = stats.cov, stats.n_used
    if method == "em" and part["patterns"].anything_missing:  # as scale_reliability computes it
        from ..stats.em import em_means_and_covariance
        from ..stats.missing import keyed_estimate

        estimate = em_means_and_covariance(part["patterns"])
        k = len(scale.items)
        _, cov = keyed_estimate(estimate, lows=np.full(k, low), highs=np.full(k, high), reversed_mask=reversed_mask,
                                from_codes=True)
        n_used = part["patterns"].n_used
    notes = deletion_notes(stats, method)
    result = reliability_from_cov(cov, n_used, item_names=tuple(scale.items),
                                  confidence_level=confidence_level, thresholds=thresholds,
                                  reversed_items=scale.reverse, descriptives=descriptives, n_rows=stats.n_rows,
                                  missing_handling=method, bootstrap=None, notes=notes)
    if "patterns" not in part:
        return result
    from dataclasses import replace

    from ..stats.missing import missing_handling

    # the missing-data block of the whole-file route (patterns, Little's test) from the merged patterns
    return replace(result, missing=missing_handling(part["patterns"], method, n_used=n_used, estimate=estimate,
                                                    item_names=tuple(scale.items)))


def ordinal_from_summary(part: Any, scale: Any, *, pairwise: bool) -> Any:
    """:func:`~scalewright.analyses.ordinal.scale_ordinal`'s ordinal reliability from the scale's merged
    pair tables (``pair_tables`` in the plan: listwise or pairwise rows)."""
    from ..stats.ordinal_reliability import ordinal_reliability
    from ..stats.polychoric_matrix import polychoric_matrix

    matrix = polychoric_matrix(part["pair_tables"], item_names=list(scale.items), pairwise=pairwise)
    return ordinal_reliability(matrix.keyed([item in set(scale.reverse) for item in scale.items]))


def reliability_from_summaries(spec: Any, summary: Any, *, by: Sequence[str] = (), confidence_level: float = 0.95,
                               pairwise: bool = False, min_group: int = 10, thresholds: Any = None,
                               missing: str | None = None, ordinal: bool = False) -> dict[str, Any]:
    """:func:`~scalewright.analyses.reliability.analyse_reliability` from merged summaries (no bootstrap:
    it resamples rows). ``ordinal`` needs pair tables in the plan (pairwise rows under pairwise and em)."""
    from ..stats.ordinal_reliability import ordinal_advice
    from ..stats.reliability_groups import GroupReliability, ScaleReliabilityReport, compare_alphas

    options = dict(confidence_level=confidence_level, pairwise=pairwise, thresholds=thresholds, missing=missing)
    splits = []
    for column in by:
        split, members = subgroup_split(spec, summary, column, min_group=min_group)
        splits.append((split, level_summaries(summary, column, {n: members[n] for n in split.levels})))
    reports = {}
    for name, scale in spec.scales.items():
        overall = scale_reliability_from_summary(summary["scales"][name], scale, **options)
        groups = []
        for split, parts in splits:
            levels = {level: scale_reliability_from_summary(parts[level][name], scale, **options)
                      for level in split.levels}
            notes: list[Note] = list(split.notes())
            if len(levels) < 2:
                notes.append(note("alphas-not-compared", column=split.column, min_size=int(split.min_size)))
            groups.append(GroupReliability(column=split.column, levels=levels, too_small=dict(split.too_small),
                                           missing=split.missing, min_group=split.min_size,
                                           comparisons=compare_alphas(levels) if len(levels) >= 2 else (),
                                           notes=tuple(notes)))
        # the note on whether the answers call for --ordinal, from the answer counts (as analyses.ordinal does)
        answer_levels = [str(level) for level in range(scale.response.min, scale.response.max + 1)]
        tallies = np.array([[item.counts.get(level, 0) for level in answer_levels]
                            for item in overall.items.values()])
        advice = ordinal_advice(tallies, len(answer_levels), list(overall.items)) if len(tallies) else ()
        ordinal_result = None
        if ordinal:  # under em the pair tables use the pairwise rows, as on the whole-file route
            pairwise_rows = missing in ("pairwise", "em") if missing is not None else pairwise
            ordinal_result = ordinal_from_summary(summary["scales"][name], scale, pairwise=pairwise_rows)
        reports[name] = ScaleReliabilityReport(name=name, title=scale.title, overall=overall, groups=tuple(groups),
                                               ordinal=ordinal_result, ordinal_advice=advice)
    return reports


def _score_counts(part: Summary, *, scored_only: bool = False) -> Any:
    """(distinct scores, their counts, rows without a score) of a scale's merged score counts."""
    counts = part["scores"]
    if scored_only:
        return counts.n_rows - counts.n_missing
    values, tallies = counts.values_and_counts()
    return values, tallies, counts.n_missing


def _item_counts(part: Summary, position: int, low: int, *, scored_only: bool = False) -> Any:
    answers = part["answers"]
    tallies = answers.tally[position]
    answered = int(tallies.sum())
    if scored_only:
        return answered
    return low + np.arange(tallies.size, dtype=np.float64), tallies, answers.n_rows - answered


def shape_from_summaries(spec: ScaleSpec, summary: Summary, *, by: Sequence[str] = (), items: bool = False,
                         percentiles: Sequence[float] = (5, 10, 25, 50, 75, 90, 95), quantile_method: str = "linear",
                         min_group: int = 10, seed: int = 0) -> dict[str, dict[str, Any]]:
    """:func:`~scalewright.analyses.shape.analyse_shape` from merged score and answer counts."""
    from ..stats.shape import ShapeReport, SubgroupShapes
    from ..stats.shape_counts import describe_counted_scores
    from ..stats.subgroups import SubgroupSplit
    from .shape import score_axis

    level_parts = {}
    for column in by:
        members, _ = category_levels(spec, summary["categories"][column], column)
        level_parts[column] = level_summaries(summary, column, members)

    def report(name: str, title: str, kind: str, sample, x_label: str, **grid) -> ShapeReport:
        """``sample(parts)`` gives (distinct scores, their counts, rows without a score) of a Keyed, or with
        ``scored_only`` the number of scored rows; every description comes from the counts."""
        options = dict(percentiles=percentiles, quantile_method=quantile_method, seed=seed, **grid)
        values, tallies, unscored = sample(summary["scales"])
        overall = describe_counted_scores(values, tallies, n_missing=unscored, **options)
        overall_scored = int(tallies.sum())
        groups = []
        for column, parts in level_parts.items():
            sizes = {level: sample(part, scored_only=True) for level, part in parts.items()}
            sizes = {level: size for level, size in sizes.items() if size}
            # a level is described on its scored rows only
            levels = {level: describe_counted_scores(*sample(parts[level])[:2], **options)
                      for level, size in sizes.items() if size >= min_group}
            split = SubgroupSplit(column=column, levels={}, too_small={k: v for k, v in sizes.items() if v < min_group},
                                  missing=overall_scored - sum(sizes.values()), min_size=min_group)
            split_notes: list[str | Note] = list(split.notes())
            if unscored:
                split_notes.append(note("subgroup-unscored", unscored=unscored, column=column))
            groups.append(SubgroupShapes(column=column, levels=levels, too_small=dict(split.too_small),
                                         missing=split.missing, min_group=min_group, notes=tuple(split_notes)))
        return ShapeReport(name=name, title=title, kind=kind, overall=overall, groups=tuple(groups), x_label=x_label)

    scales: dict[str, Any] = {}
    for name, scale in spec.scales.items():
        axis = score_axis(scale)
        x_label = axis.pop("x_label")
        scales[name] = report(name, scale.title, "scale",
                              lambda parts, name=name, **only: _score_counts(parts[name], **only), x_label, **axis)
    item_reports: dict[str, Any] = {}
    if items:
        for item in spec.items:
            fmt = spec.response_for(item)
            wording = spec.wording_for(item)
            title = f"{item}: {wording}" if wording else item
            owner, position = next((n, s.items.index(item)) for n, s in spec.scales.items() if item in s.items)
            item_reports[item] = report(item, title, "item",
                                        lambda parts, owner=owner, position=position, low=fmt.min, **only:
                                        _item_counts(parts[owner], position, low, **only),
                                        f"answer to {item} (as given, {fmt.min} to {fmt.max})",
                                        attainable=np.arange(fmt.min, fmt.max + 1, dtype=float), resolution=1.0,
                                        answer_levels=len(fmt.levels))
    return {"scales": scales, "items": item_reports}


def structure_from_summaries(spec: ScaleSpec, summary: Summary, *, missing: str = "listwise", ordinal: bool = False,
                             **options: Any) -> StructureResult:
    """:func:`~scalewright.analyses.structure.analyse_structure_of_file` from the merged summaries of every
    item (``joint`` in the plan: see :mod:`scalewright.analyses.summarised_structure`)."""
    from .summarised_structure import structure_from_joint

    return structure_from_joint(spec, summary, missing=missing, ordinal=ordinal, **options)


def structure_from_cross_products(spec: ScaleSpec, joint: ListwiseCrossProducts, *,
                                  patterns: PatternSummary, **options: Any) -> StructureResult:
    """The listwise factor structure from the cross-products of the codes of every item of the scale file
    and their per-pattern statistics."""
    from .summarised_structure import structure_from_joint

    return structure_from_joint(spec, {"joint": joint, "joint_patterns": patterns}, **options)


def one_factor_models_from_summaries(spec: ScaleSpec, summary: Any, *, pairwise: bool = False) -> dict[str, Any]:
    """:func:`~scalewright.analyses.confirm.one_factor_models` from each scale's merged cross-products.

    The fit is a function of the covariance matrix and n only (:func:`~scalewright.stats.cfa_fit.fit`);
    each item is keyed as the first scale listing it, as ``analyses.confirm.keyed_covariance`` keys it.
    """
    from ..concurrency import one_blas_thread
    from ..stats.cfa_fit import fit
    from ..stats.cfa_model import factor_model
    from ..stats.cfa_result import summarize_fit

    owner: dict[str, Any] = {}
    for scale in spec.scales.values():
        for item in scale.items:
            owner.setdefault(item, scale)
    models = {}
    with one_blas_thread():
        for name, scale in spec.scales.items():
            items = tuple(scale.items)
            reversed_mask = np.array([owner[item].is_reversed(item) for item in items], dtype=bool)
            cov = summary["scales"][name]["cross_products"].covariance(
                low=int(scale.response.min), high=int(scale.response.max), reversed_mask=reversed_mask)
            fitted = fit(cov.cov, cov.n_used, factor_model({name: items}))
            models[name] = summarize_fit(fitted, name=name, scales={name: items})
    return models
