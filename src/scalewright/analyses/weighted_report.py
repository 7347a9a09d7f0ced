"""The weighted results of a report (survey weights), built by the same functions as the commands' own.

The structure, the confirmatory models and the screen's Mahalanobis distance are weighted in place (see
:mod:`scalewright.report`); this module gathers the weighted blocks that sit beside the unweighted ones:
reliability, score summaries, score shapes, subgroup comparisons and the answers by grouping column.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from ..responses import Responses
    from ..scoring import ScoreTable
    from ..spec_model import ScaleSpec
    from ..stats.shape import ShapeReport
    from ..stats.tally import Tally
    from ..weights import SurveyWeights


@dataclass(frozen=True, eq=False)
class WeightedReport:
    """The weighted blocks of a report; ``design`` holds what the weights are worth for the whole file."""

    design: dict[str, Any]
    reliability: dict[str, Any]
    scores: dict[str, Any]
    shapes: dict[str, Any]
    comparisons: dict[str, dict[str, Any]]
    tallies: dict[str, Any]
    structure: dict[str, Any] | None = None
    screen: dict[str, Any] | None = None
    notes: tuple[Any, ...] = field(default=())


def weights_design(weights: SurveyWeights) -> dict[str, Any]:
    """The weighted-block keys of the whole file: column, n, rows of weight 0, refused weights, n_eff, sum,
    design effect (Kish 1965)."""
    from ..stats.weighted import design_effect, kish_effective_n

    used = weights.values[weights.values > 0]
    return {"weighted": True, "weight_column": weights.column, "n": weights.n, "n_zero_weight": weights.n_zero_weight,
            "n_weight_refused": weights.refused, "n_effective": kish_effective_n(used),
            "sum_of_weights": float(used.sum()), "design_effect": design_effect(used)}


def weighted_report(spec: ScaleSpec, responses: Responses, *, by: Sequence[str], confidence_level: float,
                    min_group: int, min_cell: int, score_table: ScoreTable, shapes: Mapping[str, ShapeReport],
                    group_tallies: Sequence[Tally]) -> WeightedReport:
    """Every weighted block beside the report's unweighted results (the responses carry the weights)."""
    from ..stats.subgroups import split_by
    from ..stats.weighted import weighted_summary
    from ..stats.weighted_groups import weighted_compare
    from ..stats.weighted_tally import weighted_tally
    from .weighted_reliability import weighted_reliability
    from .weighted_shape import weighted_shapes

    weights = responses.weights
    reliability = weighted_reliability(spec, responses, by=by, confidence_level=confidence_level,
                                       min_group=min_group)
    scores = {name: weighted_summary(s.scores, weights.values, weight_column=weights.column)
              for name, s in score_table.scales.items()}
    described = weighted_shapes(spec, responses, shapes, by=by)
    comparisons: dict[str, dict[str, Any]] = {name: {} for name in spec.scales}
    for column in by:
        split = split_by(responses.column(column), min_size=1, column=column)
        for name, scale_scores in score_table.scales.items():
            comparisons[name][column] = weighted_compare(scale_scores.scores, split.levels, weights.values,
                                                         column=column, scale=name, weight_column=weights.column,
                                                         min_cell=min_cell)
    tallies = {t.column: weighted_tally(responses.column(t.column), weights.values, t, weight_column=weights.column)
               for t in group_tallies}
    from ..notes import note

    # the findings keep the unweighted selection rules (Holm across all tests) and the item figures count answers
    unweighted = note("report-parts-unweighted", parts=("findings-group-differences", "item-answer-bars"))
    return WeightedReport(design=weights_design(weights), reliability=reliability, scores=scores, shapes=described,
                          comparisons=comparisons, tallies=tallies, notes=(unweighted,))
