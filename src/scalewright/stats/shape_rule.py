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
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..notes import Note, not_computable, note
from ..results import ResultMixin
from ..seeds import DEFAULT_SEED
from .descriptives import (
    uniform_fit,
)
from .score_grid import HistogramCells

SHAPES = ("symmetric", "left-skewed", "right-skewed", "uniform", "bimodal")

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

    def to_dict(self) -> dict[str, Any]:
        """The contract's ``rule`` block, with a not-computable note for each statistic it could not give."""
        out = super().to_dict()
        notes = []
        if not math.isfinite(self.flat_w):
            notes.append(not_computable("flat_w", "fewer-than-3-bands", bands=len(self.band_counts)))
        if not math.isfinite(self.valley_p):  # no window lower than a peak on either side of it
            notes += [not_computable(key, "no-valley") for key in ("valley_ratio", "valley_pvalue", "valley_at")]
        out["notes"] = [n.to_dict() for n in notes]
        return out


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
    best: tuple[float, float, float, tuple[float, ...]] = (math.inf, math.nan, math.nan, ())
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


def shape_label(*, mean: float, median: float, skewness: float, skewness_se: float,
                bimodality: float, dip_p: float, features: ShapeEvidence) -> tuple[str | None, Note, list[Note]]:
    """Apply the shape rule; returns (label, the evidence as a code with values, notes).

    ``scalewright.present.messages`` words the evidence (the code is ``shape-`` and the label).
    """
    notes: list[Note] = []
    flat = math.isfinite(features.flat_w) and features.flat_w < FLAT_W
    valley = math.isfinite(features.valley_ratio) and (
        (not flat and features.valley_ratio <= VALLEY_RATIO and features.valley_p < VALLEY_ALPHA)
        or (features.valley_ratio <= DEEP_VALLEY_RATIO and features.valley_p < DEEP_VALLEY_ALPHA))
    common = {"skewness": float(skewness), "skewness_se": float(skewness_se), "skew_cutoff": SKEW_THRESHOLD,
              "bimodality": float(bimodality), "flat_w": float(features.flat_w)}
    if valley:
        low_peak, high_peak = features.peaks_at
        return "bimodal", note("shape-bimodal", low_peak=float(low_peak), high_peak=float(high_peak),
                               valley_at=float(features.valley_at), valley_ratio=float(features.valley_ratio),
                               valley_pvalue=float(features.valley_p), window_cells=int(features.window_cells),
                               dip_pvalue=float(dip_p), **common), notes
    small_skew = not (abs(skewness) >= SKEW_THRESHOLD)
    if small_skew and flat:
        return "uniform", note("shape-uniform", bands=len(features.band_counts), flat_cutoff=FLAT_W, **common), notes
    centre = {"mean": float(mean), "median": float(median)}
    if not small_skew and abs(skewness) >= 2 * skewness_se:
        label = "left-skewed" if skewness < 0 else "right-skewed"
        expected_order = bool(mean < median if skewness < 0 else mean > median)
        if not expected_order:
            notes.append(note("mean-median-disagree"))
        return label, note("shape-skewed", order_as_expected=expected_order, **centre, **common), notes
    return "symmetric", note("shape-symmetric", flat=bool(flat), **centre, **common), notes
