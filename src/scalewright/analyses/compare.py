"""Subgroup comparisons of every scale score, Holm-adjusted across the scales of one grouping column."""
from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from ..responses import Responses
    from ..scoring import ScoreTable
    from ..spec_model import ScaleSpec
    from ..stats.groups import Comparison


def analyse_compare(spec: ScaleSpec, responses: Responses, *, by: Sequence[str], min_cell: int = 5,
                    student: bool = False, confidence_level: float = 0.95,
                    scores: ScoreTable | None = None) -> dict[str, tuple[Comparison, ...]]:
    """:class:`~scalewright.stats.groups.Comparison` of each scale for each column of ``by``.

    Returns ``{column: [comparison per scale, in the scale file's order]}``; p-values carry the Holm
    adjustment across the scales compared on that column. ``scores`` may pass an existing ScoreTable.
    """
    from ..scoring import score_scales
    from ..stats.groups import compare_groups, pvalue_holm

    table = scores if scores is not None else score_scales(responses, spec)
    out: dict[str, tuple[Comparison, ...]] = {}
    for column in by:
        values = responses.column(column)
        comparisons = [compare_groups(table.scales[name].scores, values, min_cell=min_cell, student=student,
                                      confidence_level=confidence_level, column=column, scale=name)
                       for name in spec.scales]
        out[column] = pvalue_holm(comparisons)
    return out
