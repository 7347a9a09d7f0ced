"""Distribution and shape of every scale score (and, on request, every item), overall and per subgroup."""
from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from ..seeds import DEFAULT_SEED

if TYPE_CHECKING:
    from ..responses import Responses
    from ..scoring import ScoreTable
    from ..spec_model import Scale, ScaleSpec
    from ..stats.shape import ShapeReport


def score_axis(scale: Scale) -> dict[str, Any]:
    """What the shape statistics of a scale score need to know of its axis: the attainable scores, the ends of
    the possible range, the resolution and the axis label. One place, for the whole-file and the streamed
    routes alike."""
    from ..scoring import score_range
    from ..stats.score_grid import attainable_scores, score_resolution

    fmt = scale.response
    low, high = score_range(scale)
    word = "mean" if scale.score == "mean" else "prorated sum"
    return {
        "x_label": f"{scale.title} ({word} of {scale.k} item{'s' if scale.k > 1 else ''}, {low:g} to {high:g})",
        "attainable": attainable_scores(fmt.min, fmt.max, scale.k, method=scale.score,
                                        min_answered=scale.required_answered()),
        "low": low, "high": high,
        "resolution": score_resolution(fmt.min, fmt.max, scale.k, method=scale.score),
        "answer_levels": len(fmt.levels),
    }


def analyse_shape(spec: ScaleSpec, responses: Responses, *, by: Sequence[str] = (), items: bool = False,
                  percentiles: Sequence[float] = (5, 10, 25, 50, 75, 90, 95), quantile_method: str = "linear",
                  min_group: int = 10, seed: int = DEFAULT_SEED,
                  scores: ScoreTable | None = None) -> dict[str, dict[str, ShapeReport]]:
    """:class:`~scalewright.stats.shape.ShapeReport` of every scale score (and, with ``items``, every item).

    Plain library function (no click): the report builds on it. Returns ``{"scales": {...}, "items": {...}}``.
    ``scores`` may pass an existing ScoreTable, so the scores are not made twice.
    """
    from ..scoring import composite, keyed_items
    from ..stats.shape import ShapeReport, describe_by_subgroup, describe_scores

    group_values = {column: responses.column(column) for column in by}

    def report(name: str, title: str, kind: str, values, x_label: str, **grid) -> ShapeReport:
        options = dict(percentiles=percentiles, quantile_method=quantile_method, seed=seed, **grid)
        overall = describe_scores(values, **options)
        groups = tuple(describe_by_subgroup(values, series, min_group=min_group, column=column, **options)
                       for column, series in group_values.items())
        return ShapeReport(name=name, title=title, kind=kind, overall=overall, groups=groups, x_label=x_label)

    scales: dict[str, ShapeReport] = {}
    for name, scale in spec.scales.items():
        fmt = scale.response
        values = scores.scales[name].scores if scores is not None else \
            composite(keyed_items(responses, scale), method=scale.score, required=scale.required_answered())[0]
        axis = score_axis(scale)
        x_label = axis.pop("x_label")
        scales[name] = report(name, scale.title, "scale", values, x_label, **axis)
    item_reports: dict[str, ShapeReport] = {}
    if items:
        import numpy as np

        for item in spec.items:
            fmt = spec.response_for(item)
            wording = spec.wording_for(item)
            title = f"{item}: {wording}" if wording else item
            item_reports[item] = report(item, title, "item", responses.item(item),
                                        f"answer to {item} (as given, {fmt.min} to {fmt.max})",
                                        attainable=np.arange(fmt.min, fmt.max + 1, dtype=float), resolution=1.0,
                                        answer_levels=len(fmt.levels))
    return {"scales": scales, "items": item_reports}
