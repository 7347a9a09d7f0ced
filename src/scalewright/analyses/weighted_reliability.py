"""Reliability of every scale from the weighted item covariance matrix, overall and per subgroup level.

Alpha, omega, the lambdas and the item statistics are functions of the covariance matrix, so weighting them
means feeding :func:`scalewright.stats.reliability.reliability_from_cov` the weighted covariance (listwise:
rows with every item answered and a positive weight). Feldt's interval is taken with Kish's effective sample
size in place of n, which is approximate unless the weights are the whole design.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:
    from ..responses import Responses
    from ..spec_model import ScaleSpec
    from ..stats.reliability_flags import ReliabilityThresholds


def weighted_scale_reliability(keyed: np.ndarray, weights: np.ndarray, *, weight_column: str,
                               item_names: Sequence[str], low: float, high: float, confidence_level: float = 0.95,
                               thresholds: ReliabilityThresholds | None = None,
                               reversed_items: Sequence[str] = ()) -> dict[str, Any]:
    """The ``scales.<name>`` reliability block, weighted, with the weighted-block keys of the JSON contract."""
    from ..stats.item_analysis import item_descriptives
    from ..stats.reliability import reliability_from_cov
    from ..stats.reliability_flags import ReliabilityThresholds
    from ..stats.weighted import design_effect, kish_effective_n, weighted_covariance

    keyed = np.asarray(keyed, dtype=float)
    w = np.asarray(weights, dtype=float)
    complete = np.isfinite(keyed).all(axis=1)
    used = complete & (w > 0)
    n_eff = kish_effective_n(w[used])
    cov = weighted_covariance(keyed, w)  # drops incomplete rows and zero weights itself
    reversed_mask = np.array([name in set(reversed_items) for name in item_names])
    described = item_descriptives(keyed, low=low, high=high, reversed_mask=reversed_mask)
    mean, sd, floor, ceiling, missing = (np.full(keyed.shape[1], np.nan) for _ in range(5))
    for j in range(keyed.shape[1]):
        column = keyed[:, j]
        answered = np.isfinite(column) & (w > 0)
        total = w[w > 0].sum()
        if answered.any():
            mean[j] = np.average(column[answered], weights=w[answered])
            if answered.sum() >= 2:
                sd[j] = np.sqrt(np.cov(column[answered], aweights=w[answered], ddof=1))
            # floor and ceiling are of the answers as given: a reversed item's floor is its keyed ceiling
            given = low + high - column[answered] if reversed_mask[j] else column[answered]
            floor[j] = 100 * w[answered][given == low].sum() / w[answered].sum()
            ceiling[j] = 100 * w[answered][given == high].sum() / w[answered].sum()
        missing[j] = 100 * (total - w[answered].sum()) / total if total > 0 else np.nan
    described = replace(described, mean=mean, sd=sd, floor_pct=floor, ceiling_pct=ceiling, missing_pct=missing)
    # Feldt's interval on Kish's effective n, which is fractional: the one caller passing a float n
    result = reliability_from_cov(cov, n_eff if np.isfinite(n_eff) else 0,  # type: ignore[arg-type]
                                  item_names=item_names,
                                  confidence_level=confidence_level,
                                  thresholds=thresholds or ReliabilityThresholds(), reversed_items=reversed_items,
                                  descriptives=described, n_rows=keyed.shape[0])
    block = result.to_dict()
    n_used = int(used.sum())
    block.update({"weighted": True, "weight_column": weight_column, "n": n_used, "n_used": n_used,
                  "n_set_aside": int(keyed.shape[0] - n_used), "n_zero_weight": int(np.count_nonzero(complete & (w == 0))),
                  "n_effective": n_eff, "sum_of_weights": float(w[used].sum()),
                  "design_effect": design_effect(w[used]),
                  "ci_basis": {"code": "weighted-ci-kish", "n_effective": n_eff, "n": n_used,
                               "design_effect": design_effect(w[used])}})
    return block


def weighted_reliability(spec: ScaleSpec, responses: Responses, *, by: Sequence[str] = (),
                         confidence_level: float = 0.95, min_group: int = 10,
                         thresholds: ReliabilityThresholds | None = None) -> dict[str, dict[str, Any]]:
    """``{scale: {"all": block, "by": {column: {level: block}}}}`` for every scale of ``spec``."""
    from ..scoring import keyed_items
    from ..stats.subgroups import split_by

    weights = responses.weights
    splits = [split_by(responses.column(column), min_size=min_group, column=column) for column in by]
    out: dict[str, dict[str, Any]] = {}
    for name, scale in spec.scales.items():
        keyed = keyed_items(responses, scale)
        options = dict(weight_column=weights.column, item_names=scale.items, low=scale.response.min,
                       high=scale.response.max, confidence_level=confidence_level, thresholds=thresholds,
                       reversed_items=scale.reverse)
        out[name] = {"all": weighted_scale_reliability(keyed, weights.values, **options),
                     "by": {split.column: {level: weighted_scale_reliability(keyed[rows], weights.values[rows], **options)
                                           for level, rows in split.levels.items()} for split in splits}}
    return out
