"""numpy's sum of a long float64 sequence, to the bit, from the sequence fed a piece at a time.

``numpy.add.reduce`` of a contiguous float64 array of n values sums pairwise: a stretch of at most 128
values is summed by numpy's own unrolled loop; a longer one is cut after ``n2 = n // 2 - (n // 2) % 8``
values and the two halves' sums are added. The cuts depend only on n, so when n is known the same leaves
and the same additions can be made as the values stream past, and the result is numpy's result exactly
(each leaf is summed by ``numpy.add.reduce`` itself). Hand-written because numpy has no streaming sum;
``tests/test_engine_score_z.py`` holds it to ``numpy.sum`` on arrays of many lengths.
"""
from __future__ import annotations

import numpy as np

#: numpy's PW_BLOCKSIZE: stretches of at most this many values are summed by the unrolled loop
LEAF = 128


def _leaves(n: int) -> list[int]:
    """The lengths of the leaves of numpy's pairwise sum of n values, in order."""
    out: list[int] = []
    stack = [n]
    while stack:
        size = stack.pop()
        if size <= LEAF:
            out.append(size)
            continue
        half = size // 2
        half -= half % 8
        stack.extend((size - half, half))  # the first half is summed first
    return out


class OrderedSum:
    """Feed the n values in order (:meth:`add`); :meth:`total` is ``numpy.add.reduce`` of all of them."""

    def __init__(self, n: int) -> None:
        self.n = n
        self._sizes = _leaves(n)
        self._sums: list[float] = []
        self._pending: list[np.ndarray] = []
        self._pending_size = 0
        self._seen = 0

    def add(self, values: np.ndarray) -> None:
        values = np.ascontiguousarray(values, dtype=np.float64)
        self._seen += values.size
        if self._seen > self.n:
            raise ValueError(f"more than the {self.n} values announced")
        if self._pending:
            values = np.concatenate([*self._pending, values])
            self._pending, self._pending_size = [], 0
        start = 0
        leaf = len(self._sums)
        while leaf < len(self._sizes) and values.size - start >= self._sizes[leaf]:
            end = start + self._sizes[leaf]
            self._sums.append(float(np.add.reduce(values[start:end])))
            start, leaf = end, leaf + 1
        if start < values.size:
            self._pending, self._pending_size = [values[start:]], values.size - start
        return

    def total(self) -> float:
        if self._seen != self.n or self._pending_size:
            raise ValueError(f"{self._seen} values fed of the {self.n} announced")
        if self.n == 0:
            return 0.0
        sums = iter(self._sums)

        def combine(size: int) -> float:
            if size <= LEAF:
                return next(sums)
            half = size // 2
            half -= half % 8
            first = combine(half)
            return first + combine(size - half)

        return combine(self.n)
