"""Per-pair contingency tables of one-byte answer codes: the mergeable summary behind polychoric correlations.

Hand-written because no library counts all pair tables of a code matrix at once fast enough: one table per
pair with ``numpy.bincount`` reads the rows 1,770 times for 60 items, and a Gram product of the one-hot
codes costs a hundred times more arithmetic. Here the codes of a few items are packed into one byte (a
"group code"), so one ``bincount`` over the rows counts the joint answers of two groups, i.e. up to 25
item pairs at once, and the pair tables are read off that joint count.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..answer_codes import MISSING
from ..errors import DataError

__all__ = ["PairTables", "pair_tables"]

_BLOCK_ROWS = 1 << 17


@dataclass(frozen=True, eq=False)
class PairTables:
    """Joint answer counts of every pair of items, with "no answer" as a last level.

    ``counts[i, j, a, b]`` is the number of rows answering code ``a`` to item i and ``b`` to item j, for
    codes ``0 .. n_levels - 1`` and ``n_levels`` for no answer; ``counts[j, i]`` is its transpose and
    ``counts[i, i]`` is diagonal (item i's answer counts). Counts add up across blocks of rows, files, Dask
    partitions and subgroups: :meth:`merge`.
    """

    counts: np.ndarray

    def __post_init__(self) -> None:
        counts = self.counts
        if (not isinstance(counts, np.ndarray) or counts.ndim != 4 or counts.shape[0] != counts.shape[1]
                or counts.shape[2] != counts.shape[3] or counts.shape[2] < 2 or counts.dtype != np.int64):
            raise DataError("pair tables must be an int64 array of shape (items, items, levels + 1, levels + 1)")

    @property
    def k(self) -> int:
        return int(self.counts.shape[0])

    @property
    def n_levels(self) -> int:
        """Answer levels (codes 0 .. n_levels - 1); the level after them counts the rows without an answer."""
        return int(self.counts.shape[2]) - 1

    @property
    def n_rows(self) -> int:
        return int(self.counts[0, 0].sum()) if self.k else 0

    def merge(self, other: PairTables) -> PairTables:
        """The tables of both sets of rows together (counts add; associative and commutative)."""
        if not isinstance(other, PairTables) or other.counts.shape != self.counts.shape:
            raise DataError("pair tables can only be merged with tables of the same items and answer levels")
        return PairTables(self.counts + other.counts)

    def take(self, positions: list[int] | np.ndarray) -> PairTables:
        """The tables of the items at ``positions`` (in that order)."""
        positions = np.asarray(positions, dtype=np.intp)
        return PairTables(np.ascontiguousarray(self.counts[np.ix_(positions, positions)]))

    def answered(self) -> np.ndarray:
        """(k, k, L, L) counts of the rows answering both items of each pair."""
        levels = self.n_levels
        return self.counts[:, :, :levels, :levels]

    def pair_counts(self) -> np.ndarray:
        """(k, k) rows answering both items (the diagonal: rows answering the item)."""
        return self.answered().sum(axis=(2, 3))

    def item_tallies(self) -> np.ndarray:
        """(k, L) answer counts of each item over every row that answered it."""
        diagonal = self.counts[np.arange(self.k), np.arange(self.k)]
        return np.diagonal(diagonal, axis1=1, axis2=2)[:, : self.n_levels].copy()


def _group_size(levels_with_missing: int) -> int:
    """Items packed per group code: as many as fit one byte, so two groups' joint count has <= 65,536 bins."""
    size = 1
    while levels_with_missing ** (size + 1) <= 256:
        size += 1
    return size


def _pair_table(joint: np.ndarray, i: int, j: int) -> np.ndarray:
    """The table of digits i and j of a joint count over packed digits (summing out the rest, no BLAS:
    threaded BLAS stalls on many tiny products when the cores are shared)."""
    letters = "abcdefghijklmnopqrstuvwxyz"[: joint.ndim]
    return np.einsum(f"{letters}->{letters[i]}{letters[j]}", joint)


def pair_tables(codes: np.ndarray, n_levels: int) -> PairTables:
    """Count the joint answers of every pair of items (rows as given; filter rows first for listwise).

    Parameters
    ----------
    codes : (n, k) uint8 array
        Answer codes ``answer - low`` in ``0 .. n_levels - 1``, :data:`~scalewright.answer_codes.MISSING`
        for no answer.
    n_levels : int
        Number of answer levels of the widest item (an item with fewer levels leaves the top ones empty).

    Returns
    -------
    PairTables

    Notes
    -----
    With ``m = n_levels + 1`` levels (no answer included), ``g`` items with ``m**g <= 256`` are packed
    into one byte ``c = sum_i x_i m**(g-1-i)``; one ``bincount`` of ``c_s * m**g + c_t`` over the rows
    gives the joint counts of groups s and t, and every pair table between them is that count summed over
    the other items' digits. Counts are exact integers.
    """
    codes = np.asarray(codes)
    if codes.dtype != np.uint8 or codes.ndim != 2:
        raise DataError("answer codes must be a respondents x items matrix of uint8")
    if not 2 <= n_levels <= 254:
        raise DataError(f"pair tables need between 2 and 254 answer levels, not {n_levels}")
    n, k = codes.shape
    m = n_levels + 1
    counts = np.zeros((k, k, m, m), dtype=np.int64)
    if k == 0:
        return PairTables(counts)
    for j in range(k):
        column = codes[:, j]
        wrong = (column >= n_levels) & (column != MISSING)
        if wrong.any():
            raise DataError(f"answer code {int(column[wrong][0])} of item {j + 1} is beyond its {n_levels} levels")
    group = min(_group_size(m), k)
    starts = list(range(0, k, group))
    sizes = [min(group, k - s) for s in starts]
    # pack each group's codes into one byte per row (no answer -> level n_levels)
    packed = np.zeros((len(starts), n), dtype=np.uint16)  # uint16: a joint index of two groups fits too
    for s, (start, size) in enumerate(zip(starts, sizes, strict=True)):
        for j in range(start, start + group):
            packed[s] *= m
            if j < start + size:
                packed[s] += np.minimum(codes[:, j], n_levels)
    width = m ** group
    digits = (m,) * group
    buffer = np.empty(min(n, _BLOCK_ROWS), dtype=np.uint16)
    for s, (start_s, size_s) in enumerate(zip(starts, sizes, strict=True)):
        tally = np.bincount(packed[s], minlength=width).reshape(digits)
        for i in range(size_s):
            item = tally.sum(axis=tuple(a for a in range(group) if a != i))
            counts[start_s + i, start_s + i] = np.diag(item)
            for j in range(i + 1, size_s):
                _store(counts, _pair_table(tally, i, j), start_s + i, start_s + j)
        for t in range(s + 1, len(starts)):
            joint = np.zeros(width * width, dtype=np.int64)
            for row in range(0, n, _BLOCK_ROWS):
                stop = min(n, row + _BLOCK_ROWS)
                part = buffer[: stop - row]
                np.multiply(packed[s, row:stop], width, out=part)
                part += packed[t, row:stop]
                joint += np.bincount(part, minlength=width * width)
            joint_digits = joint.reshape(digits + digits)
            for i in range(size_s):
                for j in range(sizes[t]):
                    _store(counts, _pair_table(joint_digits, i, group + j), start_s + i, starts[t] + j)
    return PairTables(counts)


def _store(counts: np.ndarray, table: np.ndarray, i: int, j: int) -> None:
    counts[i, j] = table
    counts[j, i] = table.T
