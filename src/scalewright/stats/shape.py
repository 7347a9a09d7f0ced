"""The shape of a score distribution: descriptives, floor and ceiling, percentiles, and the shape label.

The label and its evidence come from the rule in :mod:`scalewright.stats.shape_rule` (docs/shape.md).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from ..errors import UsageError
from ..notes import Note, note, notes_to_json
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
from .shape_rule import (
    DipResult,
    ShapeEvidence,
    _band_features,
    dip_test_jittered,
    shape_label,
)
from .subgroups import split_by, subgroup_blocks

DEFAULT_PERCENTILES = (5, 10, 25, 50, 75, 90, 95)
#: share at the lowest / highest attainable score above which a floor / ceiling effect is flagged (Terwee et al. 2007)
FLOOR_CEILING_SHARE = 0.15
#: the smallest sample that gets a shape label
MIN_N_FOR_LABEL = 20


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
    #: the evidence behind the label, a code with values (:class:`~scalewright.notes.Note`); None without a summary
    evidence: Any
    quantile_method: str
    low: float | None
    high: float | None
    resolution: float
    histogram: HistogramCells | None
    box_plot: BoxPlotPoints | None
    rule: ShapeEvidence | None = None
    notes: tuple[Any, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        out = {name: to_jsonable(getattr(self, name)) for name in (
            "n", "n_missing", "mean", "sd", "median", "q1", "q3", "min", "max", "iqr", "skewness", "skewness_se",
            "kurtosis", "kurtosis_se", "bimodality_coefficient", "dip", "dip_p", "percentiles", "shape")}
        out["evidence"] = notes_to_json([self.evidence])[0] if self.evidence is not None else None
        out["modes"] = to_jsonable(self.modes)
        out["dip_pvalue"] = out.pop("dip_p")
        out["uniform_gof"] = self.uniform_gof.to_dict()
        out.update({"floor_pct": to_jsonable(self.floor_pct), "ceiling_pct": to_jsonable(self.ceiling_pct),
                    "floor_effect": self.floor_effect, "ceiling_effect": self.ceiling_effect,
                    "quantile_method": self.quantile_method, "low": to_jsonable(self.low),
                    "high": to_jsonable(self.high), "resolution": to_jsonable(self.resolution),
                    "histogram": self.histogram.to_dict() if self.histogram else None,
                    "box_plot": self.box_plot.to_dict() if self.box_plot else None,
                    "rule": self.rule.to_dict() if self.rule else None,
                    "notes": notes_to_json(self.notes)})
        return out


def _empty_summary(n: int, n_missing: int, method: str, low, high, resolution: float, reason: Note,
                   percentiles) -> ShapeSummary:
    nan = math.nan
    return ShapeSummary(
        n=n, n_missing=n_missing, mean=nan, sd=nan, median=nan, q1=nan, q3=nan, min=nan, max=nan, iqr=nan,
        skewness=nan, skewness_se=nan, kurtosis=nan, kurtosis_se=nan, bimodality_coefficient=nan, dip=nan,
        dip_p=nan, percentiles={_pkey(p): nan for p in percentiles}, modes=(),
        uniform_gof=UniformFit(chi2=nan, df=0, p=nan, w=nan), floor_pct=nan, ceiling_pct=nan, floor_effect=None,
        ceiling_effect=None, shape=None, evidence=None, quantile_method=method, low=low, high=high,
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
    grid, low, high = _attainable_range(attainable, low, high)
    notes: list[Any] = []
    if n_missing:
        notes.append(note("scores-missing", n_missing=n_missing))
    if low is not None and n and (x.min() < low - 1e-9 or (high is not None and x.max() > high + 1e-9)):
        raise UsageError(f"scores outside the attainable range {low:g}..{high:g} "
                         f"(found {x.min():g}..{x.max():g})")
    if resolution is None:
        resolution = _resolution(x, grid, low, high)
    if n == 0:
        return _empty_summary(0, n_missing, quantile_method, low, high, resolution, note("no-scores"),
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
    floor_pct, ceiling_pct, floor_flag, ceiling_flag = _floor_ceiling(x, None, low, high, resolution, notes)
    label, evidence, features = _shape_verdict(m, n, float(np.ptp(x)) == 0, median, bc, dip, cells, lo, hi,
                                               resolution, answer_levels, notes)
    box = box_plot_points(x, q1=q1, median=median, q3=q3)
    return ShapeSummary(
        n=n, n_missing=n_missing, mean=m.mean, sd=m.sd, median=median, q1=q1, q3=q3, min=float(x.min()),
        max=float(x.max()), iqr=q3 - q1, skewness=m.skewness, skewness_se=m.skewness_se, kurtosis=m.kurtosis,
        kurtosis_se=m.kurtosis_se, bimodality_coefficient=bc, dip=dip.dip, dip_p=dip.p,
        percentiles={_pkey(p): float(v) for p, v in zip(percentiles, pct, strict=True)}, modes=modes(x), uniform_gof=fit,
        floor_pct=floor_pct, ceiling_pct=ceiling_pct, floor_effect=floor_flag, ceiling_effect=ceiling_flag,
        shape=label, evidence=evidence, quantile_method=quantile_method, low=low, high=high,
        resolution=float(resolution), histogram=cells, box_plot=box, rule=features, notes=tuple(notes))


def _attainable_range(attainable, low, high) -> tuple[np.ndarray | None, Any, Any]:
    """The attainable grid (sorted, distinct) and the floor and ceiling it sets when they are not given."""
    grid = None if attainable is None else np.unique(np.asarray(attainable, dtype=float))
    if grid is not None and grid.size == 0:
        raise UsageError("attainable score values are empty")
    if low is None and grid is not None:
        low = float(grid[0])
    if high is None and grid is not None:
        high = float(grid[-1])
    if low is not None and high is not None and high <= low:
        raise UsageError(f"the score range needs high > low, got {low}..{high}")
    return grid, low, high


def _floor_ceiling(values: np.ndarray, counts: np.ndarray | None, low, high, resolution: float,
                   notes: list[Any]) -> tuple[float, float, bool | None, bool | None]:
    """Percent of scores at the floor and at the ceiling and whether each passes ``FLOOR_CEILING_SHARE``.

    ``counts`` holds how many scores equal each of ``values`` (None: one score per value); effect and
    no-range notes are appended to ``notes``.
    """
    if low is None or high is None:
        notes.append(note("floor-ceiling-no-range"))
        return math.nan, math.nan, None, None
    tol = max(resolution, 1e-9) / 2 if resolution > 0 else 1e-9
    at_floor = values <= low + min(tol, 1e-6)
    at_ceiling = values >= high - min(tol, 1e-6)
    if counts is None:
        floor_pct = 100.0 * float(np.mean(at_floor))
        ceiling_pct = 100.0 * float(np.mean(at_ceiling))
    else:
        n = int(counts.sum())
        floor_pct = 100.0 * (int(counts[at_floor].sum()) / n)
        ceiling_pct = 100.0 * (int(counts[at_ceiling].sum()) / n)
    floor_flag = floor_pct > 100 * FLOOR_CEILING_SHARE
    ceiling_flag = ceiling_pct > 100 * FLOOR_CEILING_SHARE
    for name, share, flag in (("floor", floor_pct, floor_flag), ("ceiling", ceiling_pct, ceiling_flag)):
        if flag:
            notes.append(note(f"{name}-effect", share_pct=share, threshold_pct=100 * FLOOR_CEILING_SHARE))
    return floor_pct, ceiling_pct, floor_flag, ceiling_flag


def _shape_verdict(m, n: int, constant: bool, median: float, bc: float, dip: DipResult,
                   cells: HistogramCells | None, lo: float, hi: float, resolution: float,
                   answer_levels: int | None, notes: list[Any]) -> tuple[Any, Any, Any]:
    """The shape label, its evidence and the rule's band features, or why no label is given.

    ``m`` holds the moments, ``constant`` says every score is equal; notes are appended to ``notes``.
    """
    label, evidence, features = None, None, None
    if not math.isfinite(m.skewness) or constant:
        why = "constant" if n >= 3 and constant else "too-few"
        evidence = note(f"no-shape-{why}")
        notes.append(note(f"shape-not-given-{why}"))
    elif n < MIN_N_FOR_LABEL:
        evidence = note("no-shape-below-minimum", n=n, minimum=MIN_N_FOR_LABEL)
        notes.append(note("shape-not-given-below-minimum", minimum=MIN_N_FOR_LABEL))
    elif cells is not None:
        features = _band_features(cells, n, period=_cells_per_step(cells, lo, hi, resolution, answer_levels))
        label, evidence, rule_notes = shape_label(mean=m.mean, median=median, skewness=m.skewness,
                                                  skewness_se=m.skewness_se, bimodality=bc, dip_p=dip.p,
                                                  features=features)
        notes.extend(rule_notes)
    if cells is not None:
        notes.extend(cells.notes)
    return label, evidence, features


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


def _resolution(x: np.ndarray, grid: np.ndarray | None, low, high, counts: np.ndarray | None = None) -> float:
    """The attainable grid's spacing when regular, else inferred from the scores (``counts[i]`` equal to
    ``x[i]``; None: one score per value)."""
    if grid is not None and grid.size >= 2:
        gaps = np.diff(grid)
        if np.allclose(gaps, gaps[0], rtol=1e-6, atol=1e-9):
            return float(gaps[0])
    if x.size == 0:
        return 0.0
    origin = low if low is not None else float(x.min())
    top = high if high is not None else float(x.max())
    return infer_resolution(x, origin, top - origin, counts=counts)


@dataclass(frozen=True)
class SubgroupShapes(ResultMixin):
    """Shape summaries per level of one grouping column; small levels are named, not described."""

    column: str
    levels: dict[str, ShapeSummary]
    too_small: dict[str, int]
    missing: int
    min_group: int
    notes: tuple[Any, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"column": self.column, "levels": {k: v.to_dict() for k, v in self.levels.items()},
                "too_small": dict(self.too_small), "missing": self.missing, "min_group": self.min_group,
                "notes": notes_to_json(self.notes)}


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
    notes: list[Note] = list(split.notes())
    unscored = int((~scored).sum())
    if unscored:
        notes.append(note("subgroup-unscored", unscored=unscored, column=split.column))
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
                **subgroup_blocks(self.groups)}
