"""Weighted descriptions of every score the shape analysis described, overall and per subgroup level."""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:
    from ..responses import Responses
    from ..spec_model import ScaleSpec


def weighted_shapes(spec: ScaleSpec, responses: Responses, reports: Mapping[str, Any], *, by: Sequence[str] = (),
                    percentiles: Sequence[float] = (5, 10, 25, 50, 75, 90, 95)) -> dict[str, dict[str, Any]]:
    """``{name: {"all": WeightedShape, "by": {column: {level: WeightedShape}}}}`` for scale and item reports.

    Histogram cells are those of the unweighted histogram of the same sample, so the heights sit side by side.
    """
    from ..scoring import composite, keyed_items
    from ..stats.subgroups import blank_as_missing, level_name
    from ..stats.weighted import weighted_shape

    weights = responses.weights
    out: dict[str, dict[str, Any]] = {}
    group_names = {column: blank_as_missing(responses.column(column)).map(
        lambda v: None if v is None or (isinstance(v, float) and np.isnan(v)) else level_name(v)).to_numpy()
        for column in by}
    for name, report in reports.items():
        if report.kind == "scale":
            scale = spec.scales[name]
            values = composite(keyed_items(responses, scale), method=scale.score, required=scale.required_answered())[0]
        else:
            values = responses.item(name)
        values = np.asarray(values, dtype=float)

        def describe(rows, summary, values=values):
            edges = summary.histogram.edges if summary is not None and summary.histogram is not None else None
            return weighted_shape(values[rows], weights.values[rows], percentiles=percentiles, edges=edges,
                                  weight_column=weights.column)

        everyone = np.ones(values.size, dtype=bool)
        by_group: dict[str, dict[str, Any]] = {}
        for group in report.groups:
            names = group_names[group.column]
            by_group[group.column] = {level: describe(names == level, summary)
                                      for level, summary in group.levels.items()}
        out[name] = {"all": describe(everyone, report.overall), "by": by_group}
    return out
