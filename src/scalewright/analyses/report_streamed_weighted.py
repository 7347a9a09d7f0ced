"""The weighted blocks of the report of a file read in blocks, from the merged weighted summaries.

:func:`weighted_report_from_summaries` gives the :class:`~scalewright.analyses.weighted_report.WeightedReport`
that :func:`~scalewright.analyses.weighted_report.weighted_report` gives for the rows: weighted reliability,
score summaries, score shapes, subgroup comparisons and grouping-column shares from the functions of the
weighted summary commands (:mod:`.summarised_weighted`), the weighted structure's block, the weighted
screen's block, and the "Survey weights" section (:func:`weights_design_from_summary`) from the exact sums
of w and w squared of every row.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any


def weights_design_from_summary(summary: Any, *, weight_column: str, n_rows: int) -> dict[str, Any]:
    """:func:`~scalewright.analyses.weighted_report.weights_design` from the merged summary: what reading the
    weights found (``weight_reading``) and the exact sums of every row's positive weight (``w_rows``)."""
    from ..weights import BAD_KINDS

    reading, sums = summary["weight_reading"], summary["w_rows"]
    used = int(sums.n_used)
    v1, v2 = sums.sum_w, sums.sum_w2
    return {"weighted": True, "weight_column": weight_column, "n": int(n_rows), "n_zero_weight": reading.n_zero_weight,
            "n_weight_refused": {kind: int(reading.refused[kind]) for kind in BAD_KINDS if reading.refused.get(kind)},
            "n_effective": sums.effective_n if used else math.nan, "sum_of_weights": v1,
            "design_effect": used * v2 / v1**2 if used else math.nan}


def weighted_report_from_summaries(spec: Any, summary: Any, *, weight_column: str, n_rows: int, by: Sequence[str],
                                   confidence_level: float, min_group: int, min_cell: int,
                                   shapes: Mapping[str, Any], group_tallies: Sequence[Any],
                                   structure: dict[str, Any] | None = None,
                                   screen: dict[str, Any] | None = None) -> Any:
    """Every weighted block beside the streamed report's unweighted results (``shapes`` and ``group_tallies``
    the unweighted ones: the weighted histograms share their cells, the shares their categories);
    ``structure`` and ``screen`` are the weighted blocks of the weighted structure and screen."""
    from ..notes import note
    from .summarised_weighted import (
        weighted_compare_from_summaries,
        weighted_reliability_from_summaries,
        weighted_shapes_from_summaries,
        weighted_tally_from_summaries,
    )
    from .weighted_report import WeightedReport

    reliability = weighted_reliability_from_summaries(spec, summary, weight_column=weight_column, by=by,
                                                      confidence_level=confidence_level, min_group=min_group)
    described = weighted_shapes_from_summaries(spec, summary, shapes, weight_column=weight_column)
    # each score's weighted summary is its weighted shape's, over the same scored rows
    scores = {name: described[name]["all"].summary for name in spec.scales}
    by_column = weighted_compare_from_summaries(spec, summary, by=by, weight_column=weight_column, min_cell=min_cell,
                                                confidence_level=confidence_level)
    comparisons = {name: {column: by_column[column][name] for column in by} for name in spec.scales}
    tallies = {t.column: weighted_tally_from_summaries(spec, summary, t, weight_column=weight_column)
               for t in group_tallies}
    unweighted = note("report-parts-unweighted", parts=("findings-group-differences", "item-answer-bars"))
    return WeightedReport(design=weights_design_from_summary(summary, weight_column=weight_column, n_rows=n_rows),
                          reliability=reliability, scores=scores, shapes=described, comparisons=comparisons,
                          tallies=tallies, structure=structure, screen=screen, notes=(unweighted,))


__all__ = ["weighted_report_from_summaries", "weights_design_from_summary"]
