"""The description of a score from its value counts: :func:`~scalewright.stats.shape.describe_scores`
without holding one number per row, for files larger than memory.

Scores of rating scales take few distinct values, so a score's sample is fixed by its distinct values and
how many rows got each (:class:`~scalewright.summaries.ScoreCounts`). Everything
:func:`~scalewright.stats.shape.describe_scores` reports is computed here from those counts with the same
definitions: quantiles exactly as numpy's (:func:`~scalewright.summaries.scores.quantiles_from_counts`),
moments by the same formulas (sums over distinct values: equal to rounding), histogram cells, floor and
ceiling shares, modes and box-plot points as exact counts, and the same shape rule on them. The one
statistic that needs the sample itself is the dip test (Hartigan & Hartigan 1985) of the jittered scores:
the sample is rebuilt from the counts in ascending order (8 bytes a score, one score at a time) and
jittered and sorted in place, where the whole-file route holds about five such arrays at once.
"""
from __future__ import annotations

import math
import warnings
from typing import Any

import numpy as np

from ..errors import UsageError
from ..notes import note
from ..seeds import DEFAULT_SEED
from .descriptives import BoxPlotPoints, UniformFit, bimodality_coefficient, check_quantile_method, uniform_fit
from .score_grid import histogram_cells
from .shape import (
    DEFAULT_PERCENTILES,
    ShapeSummary,
    _attainable_range,
    _empty_summary,
    _floor_ceiling,
    _pkey,
    _resolution,
    _shape_verdict,
)
from .shape_rule import DipResult

#: scores jittered per step of the in-place jitter (the random stream is the one the whole-file route draws)
JITTER_STEP = 1 << 20


def dip_test_from_counts(values: np.ndarray, counts: np.ndarray, *, resolution: float,
                         seed: int = DEFAULT_SEED) -> DipResult:
    """:func:`~scalewright.stats.shape_rule.dip_test_jittered` of the sample given as value counts, with one array
    of the sample's size: built in ascending order, jittered in place by the same seeded draws in
    steps, then sorted in place. The same statistic and p-value as the whole-file route.

    References
    ----------
    .. [1] Hartigan, J. A., & Hartigan, P. M. (1985). The dip test of unimodality. The Annals of Statistics,
       13(1), 70-84.
    """
    import diptest

    n = int(np.sum(counts))
    if n < 4 or values.size < 2:
        return DipResult(dip=math.nan, p=math.nan, jitter_width=resolution)
    x = np.repeat(np.asarray(values, dtype=float), counts)  # ascending: what np.sort gives the whole-file route
    if resolution > 0:
        # numpy's Generator draws doubles one after another, so drawing in steps gives the very numbers one
        # draw of n gives (tests/test_shape_counts.py holds the dip equal to dip_test_jittered's)
        rng = np.random.default_rng(seed)
        for start in range(0, n, JITTER_STEP):
            stop = min(n, start + JITTER_STEP)
            x[start:stop] += rng.uniform(-resolution / 2, resolution / 2, size=stop - start)
    x.sort()
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message="Sample size exceeds the maximum limit", category=UserWarning)
        dip, p = diptest.diptest(x, sort_x=False)
    return DipResult(dip=float(dip), p=float(p), jitter_width=resolution)


def _box_plot_from_counts(values: np.ndarray, counts: np.ndarray, *, q1: float, median: float,
                          q3: float) -> BoxPlotPoints:
    """:func:`~scalewright.stats.descriptives.box_plot_points` (Tukey 1977) of value counts."""
    iqr = q3 - q1
    lower, upper = q1 - 1.5 * iqr, q3 + 1.5 * iqr
    inside = (values >= lower) & (values <= upper)
    outside = (values < lower) | (values > upper)
    return BoxPlotPoints(q1=q1, median=median, q3=q3, lower_fence=lower, upper_fence=upper,
                         whisker_low=float(values[inside].min()) if inside.any() else math.nan,
                         whisker_high=float(values[inside].max()) if inside.any() else math.nan,
                         outliers=tuple(map(float, values[outside])), outlier_counts=tuple(map(int, counts[outside])))


def _modes_from_counts(values: np.ndarray, counts: np.ndarray) -> tuple[float, ...]:
    if counts.size == 0 or counts.max() < 2:
        return ()
    return tuple(float(v) for v in values[counts == counts.max()])


def describe_counted_scores(values, counts, *, n_missing: int = 0, attainable: np.ndarray | None = None,
                            low: float | None = None, high: float | None = None, resolution: float | None = None,
                            answer_levels: int | None = None, percentiles=DEFAULT_PERCENTILES,
                            quantile_method: str = "linear", seed: int = DEFAULT_SEED) -> ShapeSummary:
    """:func:`~scalewright.stats.shape.describe_scores` of the sample holding ``counts[i]`` scores equal to
    ``values[i]`` (distinct, ascending), and ``n_missing`` rows without a score.

    Parameters are those of ``describe_scores``; the memory is a few numbers per distinct score, plus one
    float per score for the dip test only.
    """
    from ..summaries.scores import moments_from_counts, quantiles_from_counts

    check_quantile_method(quantile_method)
    percentiles = tuple(float(p) for p in percentiles)
    if any(not 0 <= p <= 100 for p in percentiles):
        raise UsageError(f"percentiles must lie in 0..100, got {', '.join(_pkey(p) for p in percentiles)}")
    values = np.asarray(values, dtype=float)
    counts = np.asarray(counts, dtype=np.int64)
    seen = counts > 0
    values, counts = values[seen], counts[seen]
    if values.size > 1 and np.any(np.diff(values) <= 0):
        raise UsageError("score values given with counts must be distinct and ascending")
    n, n_missing = int(counts.sum()), int(n_missing)
    grid, low, high = _attainable_range(attainable, low, high)
    notes: list[Any] = []
    if n_missing:
        notes.append(note("scores-missing", n_missing=n_missing))
    if low is not None and n and (values[0] < low - 1e-9 or (high is not None and values[-1] > high + 1e-9)):
        raise UsageError(f"scores outside the attainable range {low:g}..{high:g} "
                         f"(found {values[0]:g}..{values[-1]:g})")
    if resolution is None:
        resolution = _resolution(values, grid, low, high, counts=counts)
    if n == 0:
        return _empty_summary(0, n_missing, quantile_method, low, high, resolution, note("no-scores"),
                              percentiles)

    m = moments_from_counts(values, counts)
    notes.extend(m.notes)
    q1, median, q3 = (float(v) for v in quantiles_from_counts(values, counts, [0.25, 0.5, 0.75],
                                                               method=quantile_method))
    pct = quantiles_from_counts(values, counts, np.array(percentiles) / 100.0, method=quantile_method)
    bc = bimodality_coefficient(m.skewness, m.kurtosis, n)
    dip = dip_test_from_counts(values, counts, resolution=resolution, seed=seed)
    lo = low if low is not None else float(values[0])
    hi = high if high is not None else float(values[-1])
    cells = histogram_cells(values, low=lo, high=hi, resolution=resolution, tallies=counts) if hi > lo else None
    fit = uniform_fit(cells.counts, cells.grid_values if resolution > 0 else None) if cells else \
        UniformFit(chi2=math.nan, df=0, p=math.nan, w=math.nan)
    floor_pct, ceiling_pct, floor_flag, ceiling_flag = _floor_ceiling(values, counts, low, high, resolution, notes)
    label, evidence, features = _shape_verdict(m, n, float(values[-1] - values[0]) == 0, median, bc, dip, cells,
                                               lo, hi, resolution, answer_levels, notes)
    box = _box_plot_from_counts(values, counts, q1=q1, median=median, q3=q3)
    return ShapeSummary(
        n=n, n_missing=n_missing, mean=m.mean, sd=m.sd, median=median, q1=q1, q3=q3, min=float(values[0]),
        max=float(values[-1]), iqr=q3 - q1, skewness=m.skewness, skewness_se=m.skewness_se, kurtosis=m.kurtosis,
        kurtosis_se=m.kurtosis_se, bimodality_coefficient=bc, dip=dip.dip, dip_p=dip.p,
        percentiles={_pkey(p): float(v) for p, v in zip(percentiles, pct, strict=True)},
        modes=_modes_from_counts(values, counts), uniform_gof=fit,
        floor_pct=floor_pct, ceiling_pct=ceiling_pct, floor_effect=floor_flag, ceiling_effect=ceiling_flag,
        shape=label, evidence=evidence, quantile_method=quantile_method, low=low, high=high,
        resolution=float(resolution), histogram=cells, box_plot=box, rule=features, notes=tuple(notes))
