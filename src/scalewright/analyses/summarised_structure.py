"""The factor structure of the scale file from merged summaries of every item's codes.

Listwise or pairwise cross-products (exact integers), per-pattern statistics (the missing-data block and
the EM covariance: :func:`~scalewright.stats.em.em_means_and_covariance` takes them as they are) and the
per-pair contingency tables of the rows answering every item (polychoric correlations). The whole-file
route makes the same summaries of all its rows at once (:func:`~scalewright.engine.plan.joint_members`),
so a file read whole, in blocks or on Dask partitions gives the same structure. With survey weights: the
weighted cross-products of the complete rows and Kish's effective n, as
:func:`~scalewright.analyses.weighted_structure.weighted_structure_of_file` computes them from the rows.
"""
from __future__ import annotations

from dataclasses import replace
from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:
    from ..notes import Note
    from ..spec_model import ScaleSpec
    from ..stats.structure import StructureResult


def joint_keying(spec: ScaleSpec) -> tuple[dict[str, str], tuple[Note, ...], np.ndarray, int]:
    """Each item's home scale, the notes on items keyed both ways, the keying and the widest code span, as
    :func:`~scalewright.analyses.structure.joint_keyed_items` chooses each item's home (its smallest scale)."""
    from .structure import item_homes

    homes, notes = item_homes(spec)
    item_scale = {item: home.name for item, home in homes.items()}
    reversed_mask = [homes[item].is_reversed(item) for item in spec.items]
    span = int(max((scale.response.max - scale.response.min for scale in spec.scales.values()), default=1))
    return item_scale, notes, np.array(reversed_mask, dtype=bool), span


def structure_plan_options(missing: str, ordinal: bool) -> dict[str, Any]:
    """The :class:`~scalewright.engine.plan.SummaryPlan` fields of ``structure`` by its options."""
    return {"joint": True, "joint_cross_products": "pairwise" if missing == "pairwise" else "listwise",
            "joint_pair_tables": ordinal}


def structure_from_joint(spec: ScaleSpec, joint: Any, *, missing: str = "listwise",
                         ordinal: bool = False, **options: Any) -> StructureResult:
    """:func:`~scalewright.analyses.structure.analyse_structure_of_file` from the joint summaries (``joint``,
    ``joint_patterns`` and, with ``ordinal``, ``joint_pair_tables``: see
    :func:`~scalewright.engine.plan.joint_members`), by the same n rules: listwise the complete rows,
    pairwise the smallest pair count, EM the respondents answering at least one item."""
    from ..stats.item_covariance import ItemCovariance
    from ..stats.missing import check_method, missing_handling
    from ..stats.structure import analyse_structure

    check_method(missing)
    item_scale, notes, reversed_mask, span = joint_keying(spec)
    patterns = joint["joint_patterns"]
    items = tuple(spec.items)
    estimate = None
    if missing == "em":
        from ..stats.em import em_means_and_covariance
        from ..stats.missing import keyed_estimate

        estimate = em_means_and_covariance(patterns)
        k = len(items)
        # the keyed items' estimate: EM is equivariant under each item's affine change (keying)
        means, cov = keyed_estimate(estimate, lows=np.zeros(k), highs=np.full(k, span), reversed_mask=reversed_mask,
                                    from_codes=True)
        covariance = ItemCovariance(cov=cov, means=means, n_used=patterns.n_used, n_rows=patterns.n_rows,
                                    n_complete=patterns.n_complete, pair_counts=np.full((k, k), patterns.n_used),
                                    pairwise=False)
    else:
        covariance = joint["joint"].covariance(low=0, high=span, reversed_mask=reversed_mask)
    handling = missing_handling(patterns, missing, n_used=covariance.n_used, estimate=estimate, scope="file",
                                item_names=items)
    if ordinal:
        from ..stats.polychoric_matrix import polychoric_matrix

        polychoric = polychoric_matrix(joint["joint_pair_tables"], item_names=list(items),
                                       pairwise=False).keyed(list(reversed_mask))
        options = {**options, "correlation": polychoric.correlation, "correlation_type": "polychoric",
                   "correlation_notes": polychoric.notes}
    result = analyse_structure(None, covariance=covariance, missing=missing, missing_block=handling,
                               item_names=items, item_scale=item_scale,
                               scale_items={name: tuple(scale.items) for name, scale in spec.scales.items()},
                               **options)
    return replace(result, notes=(*notes, *result.notes)) if notes else result


def weighted_structure_from_summaries(spec: ScaleSpec, summary: Any, *, weight_column: str,
                                      **options: Any) -> tuple[StructureResult, dict[str, Any]]:
    """:func:`~scalewright.analyses.weighted_structure.weighted_structure_of_file` from the merged weighted
    cross-products of every item (``w_joint``: complete rows, positive weight) and the joint per-pattern
    statistics (the missing-data block)."""
    from ..stats.item_covariance import ItemCovariance
    from ..stats.missing import missing_handling
    from .weighted_structure import finish_weighted_structure

    item_scale, notes, reversed_mask, _ = joint_keying(spec)
    cross, patterns = summary["w_joint"], summary["joint_patterns"]
    items = tuple(spec.items)
    k, n_used, v1, v2, n_eff = len(items), cross.n_used, cross.sum_w, cross.sum_w2, cross.effective_n
    covariance = ItemCovariance(cov=cross.covariance(reversed_mask), means=np.full(k, np.nan),
                                n_used=n_eff, n_rows=patterns.n_rows, n_complete=n_used, pair_counts=np.full((k, k), n_used),
                                pairwise=False)
    handling = missing_handling(patterns, "listwise", n_used=n_used, scope="file", item_names=items)
    block = {"weighted": True, "weight_column": weight_column, "n": n_used, "n_zero_weight": cross.n_zero_weight,
             "n_effective": n_eff, "sum_of_weights": v1 if n_used else 0.0,
             "design_effect": n_used * v2 / v1**2 if n_used else float("nan"), "tests_n": "n_effective"}
    result = finish_weighted_structure(covariance, handling, item_names=items, item_scale=item_scale,
                                       scale_items={name: tuple(s.items) for name, s in spec.scales.items()},
                                       notes=tuple(notes), weight_column=weight_column, **options)
    return result, block
