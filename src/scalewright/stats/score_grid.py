"""The values a scale score can take, and the honest cells a histogram of it is counted in.

A k-item mean of integer answers min..max takes the values min + j/m for m answered items, so with
missing items the attainable values are the union of several grids.  Counting a histogram on that union
gives spiky bars (values of the m < k grids are rare), so counts are made on the *main grid* -- the grid
of complete answers, spacing ``resolution`` -- with each cell the half-open interval
[v - resolution/2, v + resolution/2) around a grid value v; off-grid scores fall into the nearest cell.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import UsageError
from ..notes import Note, note
from ..results import ResultMixin

#: one bar per score value up to this many values (61 covers a 10-item mean on 1..7)
MAX_VALUE_BARS = 61
#: decimals used to decide that two scores are the same value (scores are means of integers)
_VALUE_DECIMALS = 9


def attainable_scores(low: int, high: int, k: int, *, method: str = "mean", min_answered: int | None = None) -> np.ndarray:
    """Every value a score of ``k`` items answered on ``low..high`` can take.

    With ``min_answered`` = m0 < k, the union over m = m0..k answered items of the values
    (sum of m answers)/m for ``method='mean'`` and k x that for ``'sum'`` (a prorated sum).
    """
    if k < 1:
        raise UsageError(f"a score needs at least one item, got k = {k}")
    if high <= low:
        raise UsageError(f"the answer range needs high > low, got {low}..{high}")
    if method not in ("mean", "sum"):
        raise UsageError(f"score method must be 'mean' or 'sum', got {method!r}")
    first = k if min_answered is None else int(min_answered)
    if not 1 <= first <= k:
        raise UsageError(f"min_answered must be between 1 and {k}, got {min_answered}")
    values = [low + np.arange(m * (high - low) + 1) / m for m in range(first, k + 1)]
    grid = np.unique(np.round(np.concatenate(values), _VALUE_DECIMALS))
    return grid * k if method == "sum" else grid


def score_resolution(low: int, high: int, k: int, *, method: str = "mean") -> float:
    """Spacing of the complete-answer grid: 1/k for a k-item mean, 1 for a sum of integer answers."""
    return 1.0 if method == "sum" else 1.0 / k


def infer_resolution(values: np.ndarray, origin: float, span: float, *, coverage: float = 0.8,
                     max_divisions: int = 1000, counts: np.ndarray | None = None) -> float:
    """Spacing of the coarsest regular grid from ``origin`` that holds ``coverage`` of the values; 0 if none.

    ``counts``: how many times each value occurs (the values are then distinct scores, as value counts
    give them), else once each. Hand-written: no library finds the lattice of tied scores.  Divisions of
    ``span`` are tried from 1 up.
    """
    if span <= 0 or values.size == 0:
        return 0.0
    offsets = (values - origin) / span
    weights = np.ones(values.size, dtype=np.int64) if counts is None else np.asarray(counts)
    total = int(np.sum(weights))
    for divisions in range(1, max_divisions + 1):
        scaled = offsets * divisions
        on_grid = np.abs(scaled - np.round(scaled)) < 1e-6 * divisions
        share = int(np.sum(weights[on_grid])) / total
        if share >= coverage:
            return span / divisions
    return 0.0


@dataclass(frozen=True)
class HistogramCells(ResultMixin):
    """Counts of a score in half-open cells [edges[i], edges[i+1]).

    ``per_value`` is true when every cell holds one grid value (then ``centers`` are those values);
    ``grid_values`` counts the main-grid values in each cell (the expected share of a uniform distribution).
    """

    edges: tuple[float, ...]
    counts: tuple[int, ...]
    centers: tuple[float, ...]
    grid_values: tuple[int, ...]
    per_value: bool
    resolution: float
    notes: tuple[Note, ...] = ()  # codes with values, worded by present/messages

    def labels(self, decimals: int = 2) -> list[str]:
        """Half-open interval labels, ``[a, b)``; the value itself when a cell holds one value."""
        if self.per_value:
            return [_trim(c, decimals) for c in self.centers]
        return [f"[{_trim(a, decimals)}, {_trim(b, decimals)})" for a, b in zip(self.edges[:-1], self.edges[1:], strict=True)]


def _trim(value: float, decimals: int) -> str:
    text = f"{value:.{decimals}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def histogram_cells(values: np.ndarray, *, low: float, high: float, resolution: float,
                    max_bars: int = MAX_VALUE_BARS, continuous_bins: int | None = None,
                    tallies: np.ndarray | None = None) -> HistogramCells:
    """Count ``values`` in cells of the main grid (one per value) or in equal groups of grid cells.

    With ``resolution`` 0 the data are treated as continuous: equal-width bins between ``low`` and ``high``.
    ``tallies``: how many times each value occurs (distinct scores from value counts), else once each.
    """
    values = np.asarray(values, dtype=float)
    weights = None if tallies is None else np.asarray(tallies, dtype=np.int64)
    size = values.size if weights is None else int(weights.sum())
    notes: list[Note] = []
    if resolution <= 0:
        n_bins = continuous_bins or int(np.clip(np.ceil(np.log2(max(size, 1)) + 1), 5, 30))
        edges = np.linspace(low, high, n_bins + 1)
        if weights is None:
            counts, _ = np.histogram(values, bins=edges)  # numpy closes the last bin at high
        else:
            counts = np.histogram(values, bins=edges, weights=weights)[0].round().astype(np.int64)
        notes.append(note("last-interval-closed", low=float(edges[-2]), high=float(edges[-1])))
        return HistogramCells(edges=tuple(map(float, edges)), counts=tuple(int(c) for c in counts),
                              centers=tuple(map(float, (edges[:-1] + edges[1:]) / 2)),
                              grid_values=tuple([0] * n_bins), per_value=False, resolution=0.0, notes=tuple(notes))
    n_values = int(round((high - low) / resolution)) + 1
    cell = np.clip(np.round((values - low) / resolution).astype(int), 0, n_values - 1)
    value_counts = np.bincount(cell, minlength=n_values) if weights is None else \
        np.bincount(cell, weights=weights, minlength=n_values).round().astype(np.int64)
    grid = low + resolution * np.arange(n_values)
    if n_values <= max_bars:
        edges = np.append(grid - resolution / 2, grid[-1] + resolution / 2)
        return HistogramCells(edges=tuple(map(float, edges)), counts=tuple(int(c) for c in value_counts),
                              centers=tuple(map(float, grid)), grid_values=tuple([1] * n_values), per_value=True,
                              resolution=float(resolution), notes=())
    group = _group_size(n_values, max_bars)
    starts = np.arange(0, n_values, group)
    counts = np.add.reduceat(value_counts, starts)
    sizes = np.diff(np.append(starts, n_values))
    edges = np.append(grid[starts] - resolution / 2, grid[-1] + resolution / 2)
    if sizes[-1] != group:
        notes.append(note("last-interval-size", size=int(sizes[-1]), others=int(group)))
    return HistogramCells(edges=tuple(map(float, edges)), counts=tuple(int(c) for c in counts),
                          centers=tuple(map(float, (edges[:-1] + edges[1:]) / 2)),
                          grid_values=tuple(int(s) for s in sizes), per_value=False,
                          resolution=float(resolution), notes=tuple(notes))


def _group_size(n_values: int, max_bars: int) -> int:
    """Grid values per bar: the smallest that keeps bars <= max_bars, preferring one that divides evenly."""
    smallest = int(np.ceil(n_values / max_bars))
    for group in range(smallest, 2 * smallest + 1):
        if n_values % group == 0:
            return group
    return smallest


def coarsen(cells: HistogramCells, *, min_expected: float, max_bins: int = 12,
            min_bins: int = 5) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Merge neighbouring cells into about equal bands so each holds ~``min_expected`` respondents.

    Returns (counts, grid values per band, band edges).  Used by the shape rule, where single-value cells
    of a long grid hold too few respondents for a peak or a valley to mean anything.
    """
    counts = np.asarray(cells.counts)
    sizes = np.asarray(cells.grid_values) if cells.resolution > 0 else np.ones(len(counts), dtype=int)
    edges = np.asarray(cells.edges)
    n_cells = len(counts)
    target = int(np.clip(np.floor(counts.sum() / max(min_expected, 1.0)), min_bins, max_bins))
    if target >= n_cells:
        return counts.astype(float), sizes.astype(float), edges
    bounds = np.round(np.linspace(0, n_cells, target + 1)).astype(int)
    merged_counts = np.add.reduceat(counts, bounds[:-1]).astype(float)
    merged_sizes = np.add.reduceat(sizes, bounds[:-1]).astype(float)
    return merged_counts, merged_sizes, edges[bounds]
