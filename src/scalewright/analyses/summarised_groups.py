"""`compare` and the invariance of each scale across subgroups, from merged summaries.

The same result objects as :func:`~scalewright.analyses.compare.analyse_compare` and
:func:`~scalewright.analyses.invariance.invariance_by_scale`, from a :class:`~scalewright.summaries.Summary`
made by :mod:`scalewright.engine.plan` with score value counts and listwise cross-products per scale and per
subgroup level: the comparison from each level's score value counts, the invariance models from each
level's keyed covariance (exact integer cross-products).
"""
from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

from .summarised import category_levels, level_summaries, subgroup_split


def keyed_from_cross_products(spec: Any, cross_products: Any, items: Sequence[str]) -> Any:
    """:func:`~scalewright.analyses.confirm.keyed_covariance` of ``items`` from their merged cross-products
    (listwise or pairwise, of the codes of exactly these items in this order): the same arithmetic."""
    from ..stats.item_covariance import ItemCovariance
    from .confirm import _keying

    lows, highs, reversed_mask = _keying(spec, items)
    raw = cross_products.covariance(low=0, high=0, reversed_mask=np.zeros(len(items), dtype=bool))
    sign = np.where(reversed_mask, -1.0, 1.0)
    means = np.where(reversed_mask, highs - raw.means, lows + raw.means)
    return ItemCovariance(cov=raw.cov * np.outer(sign, sign), means=means, n_used=raw.n_used, n_rows=raw.n_rows,
                          n_complete=raw.n_complete, pair_counts=raw.pair_counts, pairwise=raw.pairwise)


def compare_from_summaries(spec: Any, summary: Any, *, by: Sequence[str], min_cell: int = 5, student: bool = False,
                           confidence_level: float = 0.95) -> dict[str, list[Any]]:
    """:func:`~scalewright.analyses.compare.analyse_compare` from merged score value counts per level."""
    from ..stats.groups import pvalue_holm
    from ..stats.groups_from_counts import compare_from_counts, counted_level

    out: dict[str, list[Any]] = {}
    for column in by:
        members, _ = category_levels(spec, summary["categories"][column], column)
        parts = level_summaries(summary, column, members)
        comparisons = []
        for name in spec.scales:
            overall = summary["scales"][name]["scores"]
            levels = {level: counted_level(*part[name]["scores"].values_and_counts()) for level, part in parts.items()}
            scored = overall.n_rows - overall.n_missing
            comparisons.append(compare_from_counts(levels, n_no_score=overall.n_missing,
                                                   n_no_group=scored - sum(x.n for x in levels.values()),
                                                   min_cell=min_cell, student=student,
                                                   confidence_level=confidence_level, column=column, scale=name))
        out[column] = list(pvalue_holm(comparisons))
    return out


def invariance_from_summaries(spec: Any, summary: Any, targets: dict[str, Any], *, by: Sequence[str],
                              min_group: int = 30, strict: bool = False, confidence_level: float = 0.95,
                              cross_products_of: Callable[[Any, str], Any] | None = None) -> dict[str, Any]:
    """``column -> model name -> InvarianceResult`` as :func:`~scalewright.analyses.invariance.analyse_invariance`
    gives it, each level's keyed covariance and means from its merged cross-products.

    ``targets`` maps a model's name to its :class:`~scalewright.stats.cfa_model.CfaModel`;
    ``cross_products_of(level_part, name)`` gives the cross-products of the model's items in a level's
    per-scale summaries (default: the scale of that name).
    """
    from .invariance import invariance_of_targets

    cross_products_of = cross_products_of or (lambda part, name: part[name]["cross_products"])
    results: dict[str, Any] = {}
    for column in by:
        split, members = subgroup_split(spec, summary, column, min_group=min_group)
        parts = level_summaries(summary, column, {level: members[level] for level in split.levels})

        def levels_of(name: str, split: Any = split, parts: Any = parts) -> Any:
            return ((level, keyed_from_cross_products(spec, cross_products_of(parts[level], name), targets[name].items))
                    for level in split.levels)

        results[column] = invariance_of_targets(targets, levels_of, too_small=split.too_small, min_group=min_group,
                                                column=column, strict=strict, confidence_level=confidence_level)
    return results


def invariance_by_scale_from_summaries(spec: Any, summary: Any, *, by: Sequence[str], min_group: int = 30) \
        -> dict[str, Any]:
    """:func:`~scalewright.analyses.invariance.invariance_by_scale` (what ``compare`` shows) from summaries."""
    from ..stats.cfa_model import factor_model

    targets = {name: factor_model({name: tuple(scale.items)}) for name, scale in spec.scales.items()}
    return invariance_from_summaries(spec, summary, targets, by=by, min_group=min_group)
