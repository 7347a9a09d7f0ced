"""The factor structure of the scale file from the weighted item covariance matrix (survey weights).

KMO, the eigenvalues, the loadings and the unidimensionality summaries are functions of the correlation
matrix, so weighting them means analysing the correlations of the weighted covariance (listwise: rows with
every item answered and a positive weight; divisor sum(w) - sum(w^2)/sum(w), which cancels in the
correlations). Bartlett's test and parallel analysis take Kish's effective sample size as n (parallel
analysis rounded to whole rows), which is approximate unless the weights are the whole design.
"""
from __future__ import annotations

from dataclasses import replace
from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:
    from ..responses import Responses
    from ..spec_model import ScaleSpec
    from ..stats.structure import StructureResult


def weighted_structure_of_file(spec: ScaleSpec, responses: Responses, **options: Any) \
        -> tuple[StructureResult, dict[str, Any]]:
    """:func:`~scalewright.stats.structure.analyse_structure` of the weighted covariance of every item, and
    the weighted-block keys of the JSON contract (``weighted``, ``weight_column``, ``n``, ``n_effective``,
    ``sum_of_weights``, ``design_effect``, ``n_zero_weight``). ``options`` go to ``analyse_structure``
    (listwise Pearson correlations only)."""
    from ..stats.item_covariance import ItemCovariance
    from ..stats.missing import missing_handling
    from ..stats.missing_patterns import PatternSummary
    from ..stats.weighted import design_effect, kish_effective_n, weighted_covariance
    from .structure import joint_keyed_items

    joint = joint_keyed_items(responses, spec)
    weights = responses.weights
    w = weights.values
    complete = np.isfinite(joint.matrix).all(axis=1)
    used = complete & (w > 0)
    n_used = int(used.sum())
    n_eff = kish_effective_n(w[used]) if n_used else 0.0
    p = joint.matrix.shape[1]
    means = (np.average(joint.matrix[used], axis=0, weights=w[used]) if n_used else np.full(p, np.nan))
    cov = weighted_covariance(joint.matrix, w)
    codes = responses.codes(spec.items)
    if codes is not None:
        # whole answer levels: the exact weighted sums the streaming and Dask routes merge, so the structure is
        # the same on every route (the iterative factoring would carry a last-bit difference into the loadings)
        from ..summaries.exact_weighted import ExactWeightedCrossProducts
        from .summarised_structure import joint_keying

        cross = ExactWeightedCrossProducts.from_codes(np.asarray(codes), np.asarray(w, dtype=np.float64))
        cov, n_eff = cross.covariance(joint_keying(spec)[2]), cross.effective_n
    # Kish's effective n is fractional: the one place an ItemCovariance rests on a weighted n
    covariance = ItemCovariance(cov=cov, means=means,
                                n_used=n_eff,  # type: ignore[arg-type]
                                n_rows=int(joint.matrix.shape[0]), n_complete=n_used,
                                pair_counts=np.full((p, p), n_used), pairwise=False)
    block = {"weighted": True, "weight_column": weights.column, "n": n_used,
             "n_zero_weight": int(np.count_nonzero(complete & (w == 0))), "n_effective": n_eff,
             "sum_of_weights": float(w[used].sum()), "design_effect": design_effect(w[used]),
             "tests_n": "n_effective"}
    # the rows behind the estimates are counted as respondents; Bartlett and parallel analysis used n_eff
    handling = missing_handling(PatternSummary.from_values(joint.matrix), "listwise", n_used=n_used, scope="file",
                                item_names=tuple(joint.item_names))
    result = finish_weighted_structure(covariance, handling, item_names=joint.item_names, item_scale=joint.item_scale,
                                       scale_items=joint.scale_items, notes=joint.notes, weight_column=weights.column,
                                       **options)
    return result, block


def finish_weighted_structure(covariance: Any, handling: Any, *, item_names: Any, item_scale: Any, scale_items: Any,
                              notes: tuple, weight_column: str, **options: Any) -> StructureResult:
    """``analyse_structure`` of a weighted covariance (``n_used`` Kish's n_eff, ``n_complete`` the rows used),
    with the rows counted as respondents and the note that Bartlett and parallel analysis used n_eff; shared
    by the whole-file route and the merged summaries
    (:func:`~scalewright.analyses.summarised_structure.weighted_structure_from_summaries`)."""
    from ..notes import note
    from ..stats.structure import analyse_structure

    options = {key: value for key, value in options.items() if key != "missing"}
    result = analyse_structure(None, item_names=item_names, item_scale=item_scale, scale_items=scale_items,
                               covariance=covariance, **options)
    n_used, n_eff = int(covariance.n_complete), covariance.n_used
    weighted_note = note("structure-weighted", weight_column=weight_column, n_effective=n_eff, n=n_used,
                         parallel_n=int(round(n_eff)))
    per_scale = {name: replace(summary, n_used=n_used) for name, summary in result.unidimensionality.items()}
    return replace(result, n_used=n_used, unidimensionality=per_scale,
                   n_set_aside=int(covariance.n_rows - n_used), missing=handling, notes=(*notes, *result.notes),
                   correlation_notes=(*result.correlation_notes, weighted_note))
