"""Mergeable summaries of the answer codes: what every summary statistic is computed from.

A summary of a block of rows (a block of a file, a Dask partition, one subgroup level) merges with the
summary of another block into the summary of both, and merging is associative and order-independent:
counts and exact integer cross-products add. So the statistics give the same numbers from one file read
whole, from a file read in blocks and from partitions summarised on many machines.

- :mod:`.base`: the :class:`Mergeable` protocol, :class:`Keyed` (a mergeable per key: per scale, per
  subgroup level) and :class:`Summary` (the container of named members, to which further kinds of
  summary, such as per-pair contingency tables or per-missingness-pattern sums, are added as members).
- :mod:`.answers`: answer counts per item and level, listwise and pairwise cross-products.
- :mod:`.scores`: score value counts (exact quantiles, histograms, moments).
- :mod:`.categories`: category counts of group and tally columns.
"""
from __future__ import annotations

from .answers import AnswerCounts, ListwiseCrossProducts, PairwiseCrossProducts
from .base import Keyed, Mergeable, Summary, merge_all
from .categories import CategoryCounts
from .scores import ScoreCounts

__all__ = ["AnswerCounts", "CategoryCounts", "Keyed", "ListwiseCrossProducts", "Mergeable", "PairwiseCrossProducts",
           "ScoreCounts", "Summary", "merge_all"]
