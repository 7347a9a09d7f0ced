"""The shape of a score distribution: descriptives, a shape label built for tied rating data, and its evidence.

The rule (documented with its measured accuracy in docs/shape.md) reads effect sizes, not p-values alone:

1. *bimodal* -- two peaks with a valley between them whose density is at most ``VALLEY_RATIO`` of the smaller
   peak's, on windows of one answer step (wider when needed to hold ~``BAND_EXPECTED`` respondents), the valley
   lower than that peak beyond chance (one-sided binomial p < ``VALLEY_ALPHA``), and the distribution not flat;
   or a valley deeper than ``DEEP_VALLEY_RATIO`` with p < ``DEEP_VALLEY_ALPHA`` whatever the flatness;
2. *uniform* -- flat: on bands of one window, w in excess of its chance level, sqrt(max(chi2 - df, 0)/n), is
   below ``FLAT_W``, and the skewness is small;
3. *left-/right-skewed* -- |G1| >= ``SKEW_THRESHOLD`` and beyond twice its standard error;
4. *symmetric* -- otherwise.

The dip test and the bimodality coefficient are reported and cited, but neither decides alone: on tied data the
dip test rejects unimodality for unimodal scores, and a flat distribution sits at the coefficient's 5/9 cut-off.
"""
from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from ..errors import UsageError
from ..results import ResultMixin, to_jsonable
from ..seeds import DEFAULT_SEED
from .descriptives import (
    BoxPlotPoints,
    UniformFit,
    bimodality_coefficient,
    box_plot_points,
    check_quantile_method,
    modes,
    moments,
    quantiles,
    uniform_fit,
)
from .score_grid import HistogramCells, histogram_cells, infer_resolution
from .subgroups import split_by

SHAPES = ("symmetric", "left-skewed", "right-skewed", "uniform", "bimodal")
DEFAULT_PERCENTILES = (5, 10, 25, 50, 75, 90, 95)

#: |G1| from which a distribution is called skewed; Bulmer (1979) calls |skewness| < 1/2 "fairly symmetrical",
#: rating scores' skewness is damped by the bounded answer range, so the cut is a little lower (docs/shape.md)
SKEW_THRESHOLD = 0.4
#: a flat distribution has bands whose excess w stays below this (Cohen 1988 calls w = 0.1 small, 0.3 medium)
FLAT_W = 0.2
#: a valley's density at most this share of the smaller peak's
VALLEY_RATIO = 0.75
#: one-sided binomial p below which the valley is lower than the smaller peak beyond chance
VALLEY_ALPHA = 0.05
#: a valley this deep, and this far beyond chance, counts even when the distribution passes as flat
DEEP_VALLEY_RATIO = 0.5
DEEP_VALLEY_ALPHA = 0.01
#: respondents expected at least per window of the shape rule (windows widen beyond one answer step to reach it)
BAND_EXPECTED = 15
#: a peak is a window holding at least this share of respondents, and windows span at least this share of the
#: score range: a heap of a few percent on one round value (or one noisy cell of a fine-grained score) is not a
#: second camp of respondents (common practice, no source; docs/shape.md)
MIN_PEAK_SHARE = 0.05
#: share at the lowest / highest attainable score above which a floor / ceiling effect is flagged (Terwee et al. 2007)
FLOOR_CEILING_SHARE = 0.15
#: the smallest sample that gets a shape label
MIN_N_FOR_LABEL = 20


@dataclass(frozen=True)
class DipResult(ResultMixin):
    """Hartigan's dip and its p-value (``pvalue`` in the JSON), with the jitter that broke the ties."""

    JSON_KEYS = {"p": "pvalue"}

    dip: float
    p: float
    jitter_width: float


def dip_test_jittered(values: np.ndarray, *, resolution: float, seed: int = DEFAULT_SEED) -> DipResult:
    r"""Hartigan's dip test on scores spread uniformly within their resolution.

    Tied scores make the empirical CDF a staircase that no unimodal CDF follows closely, so the plain dip
    test calls unimodal rating data multimodal (p near 0).  Each score x is replaced by
    :math:`x + U(-r/2, r/2)` with r the grid spacing (seeded, so the result is reproducible); continuous
    data (r = 0) are left as they are.

    References
    ----------
    .. [1] Hartigan, J. A., & Hartigan, P. M. (1985). The dip test of unimodality. The Annals of Statistics,
       13(1), 70-84.
    """
    import diptest

    x = np.asarray(values, dtype=float)
    if x.size < 4 or np.ptp(x) == 0:
        return DipResult(dip=math.nan, p=math.nan, jitter_width=resolution)
    if resolution > 0:
        # jittered in sorted order, so the result depends on the scores and not on the order of the rows:
        # the same from a file read whole, from its blocks' score counts or from Dask partitions
        x = np.sort(x) + np.random.default_rng(seed).uniform(-resolution / 2, resolution / 2, size=x.size)
    with warnings.catch_warnings():
        # above 72,000 scores diptest takes the p-value from its largest tabulated sample size (the dip's
        # null distribution has settled by then) and says so on stderr; the tool's output is the same either
        # way, and no library warning may reach the user on success
        warnings.filterwarnings("ignore", message="Sample size exceeds the maximum limit", category=UserWarning)
        dip, p = diptest.diptest(x)
    return DipResult(dip=float(dip), p=float(p), jitter_width=resolution)


@dataclass(frozen=True)
class ShapeEvidence(ResultMixin):
    """The numbers the shape rule looked at, on the bands it used."""

    JSON_KEYS = {"valley_p": "valley_pvalue"}

    band_edges: tuple[float, ...]
    band_counts: tuple[float, ...]
    band_density: tuple[float, ...]
    flat_w: float
    valley_ratio: float
    valley_p: float
    valley_at: float
    peaks_at: tuple[float, ...]
    window_cells: int


def _band_features(cells: HistogramCells, n: int, *, period: int) -> ShapeEvidence:
    """Peaks, valley and flatness on windows of ``period`` cells (at least ~``BAND_EXPECTED`` respondents each).

    Scores of consistent items crowd on whole answer values (all items agreeing), a ripple with a period of one
    answer step; windows of one answer step cancel it, so only valleys wider than a step count.
    """
    from scipy import stats

    counts = np.asarray(cells.counts, dtype=float)
    sizes = np.asarray(cells.grid_values, dtype=float) if cells.resolution > 0 else np.ones(counts.size)
    n_cells = counts.size
    width = int(min(n_cells, max(period, math.ceil(BAND_EXPECTED * n_cells / max(n, 1)),
                                  math.ceil(MIN_PEAK_SHARE * n_cells))))
    starts = _symmetric_band_starts(n_cells, width)
    band_counts = np.add.reduceat(counts, starts)
    band_sizes = np.add.reduceat(sizes, starts)
    edges = np.asarray(cells.edges)[np.append(starts, n_cells)]
    flat = uniform_fit(band_counts, band_sizes).excess_w(n) if band_counts.size >= 3 else math.nan
    window_sums = np.convolve(counts, np.ones(width), mode="valid")  # window i covers cells i .. i+width-1
    window_sizes = np.convolve(sizes, np.ones(width), mode="valid")
    window_density = window_sums / window_sizes
    centres = np.asarray(cells.centers)
    total = float(counts.sum())
    best = (math.inf, math.nan, math.nan, ())
    for j in range(width, window_sums.size - width):
        left = int(np.argmax(window_density[: j - width + 1]))
        right = j + width + int(np.argmax(window_density[j + width:]))
        smaller = left if window_density[left] <= window_density[right] else right
        if window_density[smaller] <= 0 or window_density[j] >= window_density[smaller]:
            continue
        if min(window_sums[left], window_sums[right]) < MIN_PEAK_SHARE * total:
            continue
        ratio = window_density[j] / window_density[smaller]
        # equal density would give the valley window its share of the two windows' grid values
        share = window_sizes[j] / (window_sizes[j] + window_sizes[smaller])
        p = float(stats.binomtest(int(window_sums[j]), int(window_sums[j] + window_sums[smaller]), share,
                                  alternative="less").pvalue)
        if (ratio, p) < best[:2]:
            mid = width // 2
            best = (ratio, p, float(centres[j + mid]), (float(centres[left + mid]), float(centres[right + mid])))
    ratio, p, at, peaks = best
    return ShapeEvidence(band_edges=tuple(map(float, edges)), band_counts=tuple(map(float, band_counts)),
                         band_density=tuple(map(float, band_counts / band_sizes)), flat_w=flat,
                         valley_ratio=ratio if math.isfinite(ratio) else math.nan, valley_p=p,
                         valley_at=at, peaks_at=peaks, window_cells=width)


def _symmetric_band_starts(n_cells: int, width: int) -> np.ndarray:
    """First cells of about ``width``-cell bands laid out the same from either end (so mirrored scores
    get mirrored bands)."""
    bands = max(1, int(round(n_cells / width)))
    if n_cells % 2 == 1 and bands % 2 == 0:
        bands = bands + 1 if n_cells / (bands + 1) >= width / 2 else bands - 1
    bands = max(bands, 1)
    sizes = np.full(bands, n_cells // bands)
    extra = int(n_cells - sizes.sum())
    if extra % 2 == 1:  # the parity fix above makes ``bands`` odd here: the middle band takes one
        sizes[bands // 2] += 1
        extra -= 1
    # the rest in mirrored pairs, from the middle outwards
    for i in range((bands - 1) // 2, -1, -1):
        if extra == 0:
            break
        if i != bands - 1 - i:
            sizes[i] += 1
            sizes[bands - 1 - i] += 1
            extra -= 2
    return np.concatenate([[0], np.cumsum(sizes)[:-1]])


def _fmt(value: float, decimals: int = 2) -> str:
    """Numbers inside the evidence sentence (the raw values are in the result's fields)."""
    if value is None or not math.isfinite(value):
        return "n/a"
    text = f"{value:.{decimals}f}"
    return "0." + "0" * decimals if text in ("-0." + "0" * decimals,) else text


def _fmt_against(value: float, cutoff: float) -> str:
    """A number beside its cut-off (in size), with the decimals the comparison needs to read true."""
    from ..present.numbers import format_against

    if value is None or not math.isfinite(value):
        return "n/a"
    size, _ = format_against(abs(value), cutoff, "num", 2)
    return f"-{size}" if value < 0 and float(size) != 0 else size


def _fmt_p(p: float) -> str:
    if not math.isfinite(p):
        return "n/a"
    return "p < .001" if p < 0.001 else f"p = {p:.3f}".replace("0.", ".", 1)


def shape_label(*, mean: float, median: float, skewness: float, skewness_se: float,
                bimodality: float, dip_p: float, features: ShapeEvidence) -> tuple[str | None, str, list[str]]:
    """Apply the shape rule; returns (label, evidence sentence, notes)."""
    notes: list[str] = []
    skew_text = f"skewness {_fmt_against(skewness, SKEW_THRESHOLD)} (SE {_fmt(skewness_se)})"
    bands = f"windows of {features.window_cells} score value(s)"
    flat = math.isfinite(features.flat_w) and features.flat_w < FLAT_W
    valley = math.isfinite(features.valley_ratio) and (
        (not flat and features.valley_ratio <= VALLEY_RATIO and features.valley_p < VALLEY_ALPHA)
        or (features.valley_ratio <= DEEP_VALLEY_RATIO and features.valley_p < DEEP_VALLEY_ALPHA))
    if valley:
        low_peak, high_peak = features.peaks_at
        evidence = (f"two peaks near {_fmt(low_peak)} and {_fmt(high_peak)} with a valley near "
                    f"{_fmt(features.valley_at)} at {features.valley_ratio:.0%} of the smaller peak "
                    f"({_fmt_p(features.valley_p)}, {bands}); excess w {_fmt(features.flat_w)} against flat; dip test {_fmt_p(dip_p)} on jittered scores; "
                    f"bimodality coefficient {_fmt(bimodality)}")
        return "bimodal", evidence, notes
    small_skew = not (abs(skewness) >= SKEW_THRESHOLD)
    if small_skew and flat:
        evidence = (f"close to flat: excess w {_fmt_against(features.flat_w, FLAT_W)} over {len(features.band_counts)} bands (below {FLAT_W}); "
                    f"{skew_text}; bimodality coefficient {_fmt(bimodality)} (a flat distribution gives 5/9)")
        return "uniform", evidence, notes
    if _fmt(mean) == _fmt(median):
        centre = f"mean and median both {_fmt(median)}"
    else:
        centre = f"mean {_fmt(mean)} {'below' if mean < median else 'above'} median {_fmt(median)}"
    if not small_skew and abs(skewness) >= 2 * skewness_se:
        label = "left-skewed" if skewness < 0 else "right-skewed"
        evidence = f"{skew_text}, beyond ±{SKEW_THRESHOLD}; {centre}"
        expected_order = mean < median if skewness < 0 else mean > median
        if not expected_order:
            evidence += (f"; the mean is not {'below' if skewness < 0 else 'above'} the median although the "
                         "skewness says so, common with tied rating data (von Hippel 2005)")
            notes.append("mean and median disagree with the direction of the skewness (von Hippel 2005): "
                         "report the skewness, not the mean-median order")
        return label, evidence, notes
    evidence = f"{skew_text}, within ±{SKEW_THRESHOLD}; no clear valley between two peaks"
    if abs(skewness) >= SKEW_THRESHOLD:
        evidence = f"{skew_text}: beyond ±{SKEW_THRESHOLD} but within twice its SE; no clear valley between two peaks"
    if math.isfinite(features.flat_w) and not flat:
        evidence += f"; not flat (excess w {_fmt(features.flat_w)})"
    if abs(mean - median) > 0 and math.isfinite(skewness) and abs(skewness) < SKEW_THRESHOLD:
        evidence += f"; {centre}"
    return "symmetric", evidence, notes


@dataclass(frozen=True)
class ShapeSummary(ResultMixin):
    """Descriptives and the shape of one score, with what a histogram and a box plot need."""

    n: int
    n_missing: int
    mean: float
    sd: float
    median: float
    q1: float
    q3: float
    min: float
    max: float
    iqr: float
    skewness: float
    skewness_se: float
    kurtosis: float
    kurtosis_se: float
    bimodality_coefficient: float
    dip: float
    dip_p: float
    percentiles: dict[str, float]
    modes: tuple[float, ...]
    uniform_gof: UniformFit
    floor_pct: float
    ceiling_pct: float
    floor_effect: bool | None
    ceiling_effect: bool | None
    shape: str | None
    evidence: str
    quantile_method: str
    low: float | None
    high: float | None
    resolution: float
    histogram: HistogramCells | None
    box_plot: BoxPlotPoints | None
    rule: ShapeEvidence | None = None
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        out = {name: to_jsonable(getattr(self, name)) for name in (
            "n", "n_missing", "mean", "sd", "median", "q1", "q3", "min", "max", "iqr", "skewness", "skewness_se",
            "kurtosis", "kurtosis_se", "bimodality_coefficient", "dip", "dip_p", "percentiles", "shape",
            "evidence", "modes")}
        out["dip_pvalue"] = out.pop("dip_p")
        out["uniform_gof"] = self.uniform_gof.to_dict()
        out.update({"floor_pct": to_jsonable(self.floor_pct), "ceiling_pct": to_jsonable(self.ceiling_pct),
                    "floor_effect": self.floor_effect, "ceiling_effect": self.ceiling_effect,
                    "quantile_method": self.quantile_method, "low": to_jsonable(self.low),
                    "high": to_jsonable(self.high), "resolution": to_jsonable(self.resolution),
                    "histogram": self.histogram.to_dict() if self.histogram else None,
                    "box_plot": self.box_plot.to_dict() if self.box_plot else None,
                    "rule": self.rule.to_dict() if self.rule else None,
                    "notes": list(self.notes)})
        return out


def _empty_summary(n: int, n_missing: int, method: str, low, high, resolution: float, reason: str,
                   percentiles) -> ShapeSummary:
    nan = math.nan
    return ShapeSummary(
        n=n, n_missing=n_missing, mean=nan, sd=nan, median=nan, q1=nan, q3=nan, min=nan, max=nan, iqr=nan,
        skewness=nan, skewness_se=nan, kurtosis=nan, kurtosis_se=nan, bimodality_coefficient=nan, dip=nan,
        dip_p=nan, percentiles={_pkey(p): nan for p in percentiles}, modes=(),
        uniform_gof=UniformFit(chi2=nan, df=0, p=nan, w=nan), floor_pct=nan, ceiling_pct=nan, floor_effect=None,
        ceiling_effect=None, shape=None, evidence="", quantile_method=method, low=low, high=high,
        resolution=resolution, histogram=None, box_plot=None, notes=(reason,))


def _pkey(p: float) -> str:
    return f"{p:g}"


def describe_scores(values, *, attainable: np.ndarray | None = None, low: float | None = None,
                    high: float | None = None, resolution: float | None = None,
                    answer_levels: int | None = None, percentiles=DEFAULT_PERCENTILES,
                    quantile_method: str = "linear", seed: int = DEFAULT_SEED) -> ShapeSummary:
    """Describe one score: centre, spread, shape statistics, floor/ceiling shares and a shape label.

    Parameters
    ----------
    values : array of scores; NaN are missing and counted in ``n_missing``.
    attainable : the values the score can take (e.g. :func:`attainable_scores`); sets ``low``/``high`` when they
        are not given, and the grid spacing when it is regular.
    low, high : the lowest and highest attainable score (floor and ceiling); default: from ``attainable``.
    resolution : spacing of the complete-answer grid (1/k for a k-item mean); default: from a regular
        ``attainable`` grid, else the coarsest grid holding 80% of the scores, else 0 (continuous).
    answer_levels : number of answer levels of the items (5 for answers 1..5); one answer step is
        (high - low)/(answer_levels - 1) score units.  Default: high - low + 1 for a score on a grid finer than 1.
    percentiles : percentiles in 0..100.
    quantile_method : Hyndman & Fan type by numpy's name ('linear' = type 7).
    seed : seed of the jitter of the dip test.

    Returns
    -------
    ShapeSummary

    Notes
    -----
    The shape rule and its measured accuracy are in docs/shape.md and in this module's docstring.
    """
    check_quantile_method(quantile_method)
    percentiles = tuple(float(p) for p in percentiles)
    if any(not 0 <= p <= 100 for p in percentiles):
        raise UsageError(f"percentiles must lie in 0..100, got {', '.join(_pkey(p) for p in percentiles)}")
    x_all = np.asarray(values, dtype=float).ravel()
    finite = np.isfinite(x_all)
    x = x_all[finite]
    n, n_missing = int(x.size), int((~finite).sum())
    grid = None if attainable is None else np.unique(np.asarray(attainable, dtype=float))
    if grid is not None and grid.size == 0:
        raise UsageError("attainable score values are empty")
    if low is None and grid is not None:
        low = float(grid[0])
    if high is None and grid is not None:
        high = float(grid[-1])
    if low is not None and high is not None and high <= low:
        raise UsageError(f"the score range needs high > low, got {low}..{high}")
    notes: list[str] = []
    if n_missing:
        notes.append(f"{n_missing} missing score(s) left out")
    if low is not None and n and (x.min() < low - 1e-9 or (high is not None and x.max() > high + 1e-9)):
        raise UsageError(f"scores outside the attainable range {low:g}..{high:g} "
                         f"(found {x.min():g}..{x.max():g})")
    if resolution is None:
        resolution = _resolution(x, grid, low, high)
    if n == 0:
        return _empty_summary(0, n_missing, quantile_method, low, high, resolution, "no scores to describe",
                              percentiles)

    m = moments(x)
    notes.extend(m.notes)
    q = quantiles(x, [0.25, 0.5, 0.75], method=quantile_method)
    q1, median, q3 = (float(v) for v in q)
    pct = quantiles(x, np.array(percentiles) / 100.0, method=quantile_method)
    bc = bimodality_coefficient(m.skewness, m.kurtosis, n)
    dip = dip_test_jittered(x, resolution=resolution, seed=seed)
    lo = low if low is not None else float(x.min())
    hi = high if high is not None else float(x.max())
    cells = histogram_cells(x, low=lo, high=hi, resolution=resolution) if hi > lo else None
    fit = uniform_fit(cells.counts, cells.grid_values if resolution > 0 else None) if cells else \
        UniformFit(chi2=math.nan, df=0, p=math.nan, w=math.nan)
    floor_pct = ceiling_pct = math.nan
    floor_flag = ceiling_flag = None
    if low is not None and high is not None:
        tol = max(resolution, 1e-9) / 2 if resolution > 0 else 1e-9
        floor_pct = 100.0 * float(np.mean(x <= low + min(tol, 1e-6)))
        ceiling_pct = 100.0 * float(np.mean(x >= high - min(tol, 1e-6)))
        floor_flag = floor_pct > 100 * FLOOR_CEILING_SHARE
        ceiling_flag = ceiling_pct > 100 * FLOOR_CEILING_SHARE
        for name, share, flag in (("floor", floor_pct, floor_flag), ("ceiling", ceiling_pct, ceiling_flag)):
            if flag:
                notes.append(f"{name} effect: {share:.1f}% of scores at the {'lowest' if name == 'floor' else 'highest'} "
                             f"attainable value (more than 15%, Terwee et al. 2007)")
    else:
        notes.append("floor and ceiling shares need the attainable range (low, high)")

    label, evidence, features = None, "", None
    if not math.isfinite(m.skewness) or np.ptp(x) == 0:
        evidence = "no shape: every score is the same value" if n >= 3 and np.ptp(x) == 0 else "no shape: too few scores"
        notes.append("shape label not given: " + evidence.removeprefix("no shape: "))
    elif n < MIN_N_FOR_LABEL:
        evidence = f"no shape: {n} scores are too few for a label (at least {MIN_N_FOR_LABEL})"
        notes.append(f"shape label not given: fewer than {MIN_N_FOR_LABEL} scores")
    elif cells is not None:
        features = _band_features(cells, n, period=_cells_per_step(cells, lo, hi, resolution, answer_levels))
        label, evidence, rule_notes = shape_label(mean=m.mean, median=median, skewness=m.skewness,
                                                  skewness_se=m.skewness_se, bimodality=bc, dip_p=dip.p,
                                                  features=features)
        notes.extend(rule_notes)
    if cells is not None:
        notes.extend(cells.notes)
    box = box_plot_points(x, q1=q1, median=median, q3=q3)
    return ShapeSummary(
        n=n, n_missing=n_missing, mean=m.mean, sd=m.sd, median=median, q1=q1, q3=q3, min=float(x.min()),
        max=float(x.max()), iqr=q3 - q1, skewness=m.skewness, skewness_se=m.skewness_se, kurtosis=m.kurtosis,
        kurtosis_se=m.kurtosis_se, bimodality_coefficient=bc, dip=dip.dip, dip_p=dip.p,
        percentiles={_pkey(p): float(v) for p, v in zip(percentiles, pct, strict=True)}, modes=modes(x), uniform_gof=fit,
        floor_pct=floor_pct, ceiling_pct=ceiling_pct, floor_effect=floor_flag, ceiling_effect=ceiling_flag,
        shape=label, evidence=evidence, quantile_method=quantile_method, low=low, high=high,
        resolution=float(resolution), histogram=cells, box_plot=box, rule=features, notes=tuple(notes))


def _cells_per_step(cells: HistogramCells, low: float, high: float, resolution: float,
                    answer_levels: int | None) -> int:
    """Histogram cells per answer step; 1 when the step is unknown."""
    if answer_levels is None:
        if not (0 < resolution < 1) or not float(high - low).is_integer():
            return 1
        answer_levels = int(round(high - low)) + 1
    if answer_levels < 2 or len(cells.counts) < 2:
        return 1
    step = (high - low) / (answer_levels - 1)
    cell_width = (cells.edges[-1] - cells.edges[0]) / len(cells.counts)
    return max(1, int(round(step / cell_width)))


def _resolution(x: np.ndarray, grid: np.ndarray | None, low, high) -> float:
    if grid is not None and grid.size >= 2:
        gaps = np.diff(grid)
        if np.allclose(gaps, gaps[0], rtol=1e-6, atol=1e-9):
            return float(gaps[0])
    if x.size == 0:
        return 0.0
    origin = low if low is not None else float(x.min())
    top = high if high is not None else float(x.max())
    return infer_resolution(x, origin, top - origin)


@dataclass(frozen=True)
class SubgroupShapes(ResultMixin):
    """Shape summaries per level of one grouping column; small levels are named, not described."""

    column: str
    levels: dict[str, ShapeSummary]
    too_small: dict[str, int]
    missing: int
    min_group: int
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"column": self.column, "levels": {k: v.to_dict() for k, v in self.levels.items()},
                "too_small": dict(self.too_small), "missing": self.missing, "min_group": self.min_group,
                "notes": list(self.notes)}


def describe_by_subgroup(values, groups, *, min_group: int = 10, column: str | None = None,
                         **options: Any) -> SubgroupShapes:
    """:func:`describe_scores` for every level of ``groups`` with at least ``min_group`` scores.

    Levels are formed with :func:`scalewright.stats.subgroups.split_by` on the respondents that have a score,
    so a level counts its scored respondents; the others are named in ``too_small``.
    """
    if min_group < 1:
        raise UsageError(f"min_group must be at least 1, got {min_group}")
    x = np.asarray(values, dtype=float).ravel()
    series = pd.Series(groups).reset_index(drop=True)
    if len(series) != x.size:
        raise UsageError(f"{x.size} scores but {len(series)} group values")
    scored = np.isfinite(x)
    split = split_by(series[scored].reset_index(drop=True), min_size=min_group, column=column or str(series.name))
    x_scored = x[scored]
    levels = {name: describe_scores(x_scored[positions], **options) for name, positions in split.levels.items()}
    notes = list(split.notes())
    unscored = int((~scored).sum())
    if unscored:
        notes.append(f"{unscored} respondent(s) without a score left out of the {split.column} subgroups")
    return SubgroupShapes(column=split.column, levels=levels, too_small=dict(split.too_small), missing=split.missing,
                          min_group=min_group, notes=tuple(notes))


@dataclass(frozen=True)
class ShapeReport(ResultMixin):
    """The shape of one scale score (or item): all respondents and every subgroup column asked for.

    ``to_dict`` follows the contract: ``all`` and ``by.<column>.<level>``; levels too small to describe are
    listed under ``too_small.<column>``.
    """

    name: str
    title: str
    kind: str  # "scale" or "item"
    overall: ShapeSummary
    groups: tuple[SubgroupShapes, ...] = ()
    x_label: str = "score"

    def to_dict(self) -> dict[str, Any]:
        return {"title": self.title, "kind": self.kind, "x_label": self.x_label, "all": self.overall.to_dict(),
                "by": {g.column: {level: s.to_dict() for level, s in g.levels.items()} for g in self.groups},
                "too_small": {g.column: dict(g.too_small) for g in self.groups},
                "group_notes": {g.column: list(g.notes) for g in self.groups}}
