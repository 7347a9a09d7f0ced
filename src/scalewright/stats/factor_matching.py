"""Factors laid against the intended scales: each scale's own factor, and the items that sit badly with it."""
from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from .structure_results import MAX_CROSS_LOADING, MIN_LOADING, StructureFlag


def assign_factors_to_scales(loadings: np.ndarray, item_scale: Sequence[str],
                             scales: Sequence[str]) -> dict[str, int | None]:
    """Give each scale the factor its items load on most, one factor per scale (Hungarian assignment).

    The assignment maximises the summed absolute loadings of each scale's items on its factor
    (Kuhn, 1955, Naval Research Logistics Quarterly 2:83-97, via scipy's ``linear_sum_assignment``).
    With fewer factors than scales, the scales left over get None.
    """
    from scipy.optimize import linear_sum_assignment

    weight = np.zeros((len(scales), loadings.shape[1]))
    for s, scale in enumerate(scales):
        rows = [i for i, name in enumerate(item_scale) if name == scale]
        weight[s] = np.abs(loadings[rows]).sum(axis=0)
    scale_rows, factor_cols = linear_sum_assignment(weight, maximize=True)
    mapping: dict[str, int | None] = {scale: None for scale in scales}
    for s, j in zip(scale_rows, factor_cols, strict=True):
        mapping[scales[s]] = int(j)
    return mapping


def loading_flags(loadings: np.ndarray, items: Sequence[str], item_scale: Sequence[str],
                  factor_for_scale: Mapping[str, int | None], *, min_loading: float = MIN_LOADING,
                  max_cross_loading: float = MAX_CROSS_LOADING) -> list[StructureFlag]:
    """Flags for items that sit badly with their own scale's factor.

    ``off-scale-factor``: the largest absolute loading is on another factor; ``weak-loading``: below
    ``min_loading`` on the own factor; ``negative-loading``: negative on the own factor after keying (a
    reverse item not reversed, or reversed by mistake); ``cross-loading``: above ``max_cross_loading`` on
    another factor. Thresholds are common practice, no source.
    """
    flags: list[StructureFlag] = []
    for i, (item, scale) in enumerate(zip(items, item_scale, strict=True)):
        own = factor_for_scale.get(scale)
        if own is None:
            continue
        row = loadings[i]
        largest = int(np.argmax(np.abs(row)))
        if largest != own:
            flags.append(StructureFlag(item, "off-scale-factor", "", scale,
                                       values={"factor": largest + 1, "loading": float(row[largest]),
                                               "own_factor": own + 1, "own_loading": float(row[own])}))
        if abs(row[own]) < min_loading:
            flags.append(StructureFlag(item, "weak-loading", "", scale,
                                       values={"factor": own + 1, "loading": float(row[own]), "cutoff": min_loading}))
        if row[own] < 0 and abs(row[own]) >= min_loading:
            flags.append(StructureFlag(item, "negative-loading", "", scale,
                                       values={"factor": own + 1, "loading": float(row[own])}))
        for j, value in enumerate(row):
            if j != own and abs(value) > max_cross_loading:
                flags.append(StructureFlag(item, "cross-loading", "", scale,
                                           values={"factor": j + 1, "loading": float(value),
                                                   "cutoff": max_cross_loading}))
    return flags
