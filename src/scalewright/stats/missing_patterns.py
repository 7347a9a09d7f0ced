"""Per-missingness-pattern sufficient statistics: what EM and Little's test need, mergeable across blocks.

For every pattern of answered items the summary keeps the number of respondents, the sums of their
answers and the cross-products of the answered part (Little & Rubin 2002, section 8.2.1: these are the
sufficient statistics of the multivariate normal model with missing values). Built from one-byte answer
codes the sums and cross-products are exact integers, so merging blocks in any order gives the same
numbers.

Hand-written because no library keeps these statistics. A pattern held by few respondents keeps their
(zero-filled) rows instead of its k x k cross-product matrix: the rows hold the same information in less
memory until there are about 8k of them, and rare patterns are numerous (on 60 items with 1% missing per
item there are thousands, most with a handful of rows). Whether a pattern is held as rows or as a matrix
depends only on its count, so it does not depend on the order of merging.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import reduce

import numpy as np

from ..answer_codes import MISSING
from ..errors import DataError
from .coded import listwise_gram

#: rows of a block whose float32 cross-products stay exact (every partial sum below 2**24, see stats/coded.py)
_BLOCK_ROWS = 16384


def _cross_products(design: np.ndarray) -> np.ndarray:
    # einsum beats BLAS on tall blocks of a few columns (see stats/coded.py); BLAS wins on many
    if design.shape[1] <= 16:
        return np.einsum("ij,ik->jk", design, design).astype(np.float64)
    return (design.T @ design).astype(np.float64)


def rows_limit(k: int) -> int:
    """Respondents from which a pattern is held as a cross-product matrix instead of its rows.

    A k x k matrix weighs as much as k rows of k numbers, and in the EM step a pattern held as a matrix
    costs about as much as k/2 rows held one by one; half of k balances the two.
    """
    return max(k // 2, 16)


def _pattern_words(observed: np.ndarray) -> np.ndarray:
    """(P, W) unsigned 64-bit words of the packed observed bits, most significant first (sortable)."""
    packed = np.packbits(observed, axis=1)
    width = -(-packed.shape[1] // 8) * 8
    if width != packed.shape[1]:
        packed = np.concatenate([packed, np.zeros((packed.shape[0], width - packed.shape[1]), dtype=np.uint8)], axis=1)
    return np.ascontiguousarray(packed).view(">u8").astype(np.uint64)


def group_patterns(observed: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Sort rows of an observed mask by pattern: (order, starts of each pattern in that order, inverse).

    ``inverse[i]`` is the position (in sorted pattern order) of row i's pattern.
    """
    rows = observed.shape[0]
    if rows == 0:
        empty = np.empty(0, dtype=np.int64)
        return empty, empty, empty
    words = _pattern_words(observed)
    order = np.argsort(words[:, 0], kind="stable") if words.shape[1] == 1 else np.lexsort(words.T[::-1])
    ordered = words[order]
    new = np.ones(rows, dtype=bool)
    new[1:] = (ordered[1:] != ordered[:-1]).any(axis=1)
    starts = np.flatnonzero(new)
    inverse = np.empty(rows, dtype=np.int64)
    inverse[order] = np.cumsum(new) - 1
    return order, starts, inverse


def _row_keys(answered: np.ndarray) -> np.ndarray:
    """Each row's pattern of answered items (a bool mask, k <= 64) as one unsigned integer, the first item
    the highest bit: sorting by it sorts as :func:`group_patterns` sorts the packed bits, without packing
    bits across the row and comparing words."""
    k = answered.shape[1]
    dtype = next(t for t, bits in ((np.uint8, 8), (np.uint16, 16), (np.uint32, 32), (np.uint64, 64)) if k <= bits)
    keys = np.zeros(answered.shape[0], dtype=dtype)
    for j in range(k):
        keys |= answered[:, j].view(np.uint8).astype(dtype, copy=False) << dtype(k - 1 - j)
    return keys


def _largest_code(codes: np.ndarray) -> int:
    return int(np.max(codes, initial=0, where=codes != MISSING))


@dataclass(frozen=True, eq=False)
class PatternSummary:
    """Count, sums and cross-products of the answered part, for each pattern of answered items.

    Attributes
    ----------
    k : int
        Number of items.
    observed : (P, k) bool
        The P patterns (True = answered), sorted by their packed bits; no pattern is all missing.
    counts : (P,) int64
        Respondents with each pattern.
    sums : (P, k) int64 or float64
        Sums of the answers of each pattern's respondents (0 where the item is missing).
    matrices : dict[int, (k, k) array]
        Cross-products of the answered part (0 in the rows and columns of missing items) of the patterns
        held as a matrix (``counts >= rows_limit(k)``), by pattern position.
    rows : (R, k) float64
        The zero-filled answers of the respondents of the other patterns, and ``row_pattern`` (R,) the
        position of each one's pattern.
    n_none : int
        Respondents who answered none of the items (they carry no information and are not in a pattern).
    exact : bool
        Sums and cross-products are exact integers (built from answer codes or whole-number answers).
    """

    k: int
    observed: np.ndarray
    counts: np.ndarray
    sums: np.ndarray
    matrices: dict[int, np.ndarray]
    rows: np.ndarray
    row_pattern: np.ndarray
    n_none: int
    exact: bool

    # ------------------------------------------------------------------------------------------ building

    @classmethod
    def from_codes(cls, codes: np.ndarray, *, complete_gram: np.ndarray | None = None) -> PatternSummary:
        """From one-byte answer codes (n x k uint8, 255 = missing); every statistic is an exact integer.

        ``complete_gram`` is :func:`~scalewright.stats.coded.listwise_gram` of the same codes when the caller
        has it: its complete-row count, sums and cross-products are the complete pattern's statistics
        (usually most of the rows), so they are not computed a second time.
        """
        codes = np.asarray(codes)
        if codes.dtype != np.uint8 or codes.ndim != 2:
            raise DataError("answer codes must be a respondents x items matrix of uint8")
        n, k = codes.shape
        if k == 0 or k > 64:
            return cls._from_codes_by_blocks(codes)
        columns = [codes[:, j] for j in range(k)]  # contiguous in the column-major answers
        complete = reduce(np.maximum, columns) != MISSING
        partial = np.flatnonzero(~complete & (reduce(np.minimum, columns) != MISSING))
        n_complete = int(np.count_nonzero(complete))
        n_none = n - n_complete - int(partial.size)
        limit = rows_limit(k)
        # the patterns in their canonical order (by key): the incomplete ones, then the complete one (all bits set)
        observed = [np.empty((0, k), dtype=bool)]
        counts, sums = [np.empty(0, dtype=np.int64)], [np.empty((0, k), dtype=np.int64)]
        matrices: dict[int, np.ndarray] = {}
        rows, row_pattern = [np.empty((0, k))], [np.empty(0, dtype=np.int64)]
        n_partial_patterns = 0
        if partial.size:
            part = codes[partial]
            answered = part != MISSING
            partial_keys = _row_keys(answered)
            order = np.argsort(partial_keys, kind="stable")  # by pattern, rows in file order within one
            part, answered, partial_keys = part[order], answered[order], partial_keys[order]
            new = np.ones(partial.size, dtype=bool)
            new[1:] = partial_keys[1:] != partial_keys[:-1]
            starts = np.flatnonzero(new)
            pattern_counts = np.diff(np.append(starts, partial.size))
            n_partial_patterns = int(starts.size)
            values = np.where(answered, part, 0).astype(np.int64)
            for p in np.flatnonzero(pattern_counts >= limit):  # few patterns, many rows each
                block = values[starts[p]:starts[p] + pattern_counts[p]].astype(np.float64)
                matrices[int(p)] = np.rint(block.T @ block).astype(np.int64)  # exact: whole numbers below 2**53
            few = np.repeat(pattern_counts < limit, pattern_counts)
            observed.append(answered[starts])
            counts.append(pattern_counts.astype(np.int64))
            sums.append(np.add.reduceat(values, starts, axis=0))
            rows.append(values[few].astype(np.float64))
            row_pattern.append(np.repeat(np.arange(starts.size, dtype=np.int64), pattern_counts)[few])
        if n_complete:
            gram = complete_gram if complete_gram is not None else listwise_gram(codes, span=_largest_code(codes))
            gram = np.asarray(gram)
            if gram.shape != (k + 1, k + 1) or int(gram[0, 0]) != n_complete:
                raise DataError("the listwise cross-products given are not those of these answer codes")
            observed.append(np.ones((1, k), dtype=bool))
            counts.append(np.array([n_complete], dtype=np.int64))
            sums.append(np.asarray(gram[0, 1:], dtype=np.int64)[None, :])
            if n_complete >= limit:
                matrices[n_partial_patterns] = np.array(gram[1:, 1:], dtype=np.int64)
            else:  # the complete rows held as rows, before the others (as the general route holds them)
                rows.insert(1, codes[complete].astype(np.float64))
                row_pattern.insert(1, np.full(n_complete, n_partial_patterns, dtype=np.int64))
        return cls(k=k, observed=np.concatenate(observed), counts=np.concatenate(counts), sums=np.concatenate(sums),
                   matrices=matrices, rows=np.concatenate(rows), row_pattern=np.concatenate(row_pattern),
                   n_none=n_none, exact=True)

    @classmethod
    def _from_codes_by_blocks(cls, codes: np.ndarray) -> PatternSummary:
        """:meth:`from_codes` by the general route (patterns as packed words of any length)."""
        n, k = codes.shape
        columns = [codes[:, j] for j in range(k)]  # contiguous in the column-major answers
        complete = reduce(np.maximum, columns) != MISSING if k else np.zeros(n, dtype=bool)
        none = reduce(np.minimum, columns) == MISSING if k else np.ones(n, dtype=bool)
        block = np.empty((min(n, _BLOCK_ROWS), k), dtype=np.float32, order="F")

        def complete_block(rows: slice) -> np.ndarray:
            part = codes[rows]
            design = block[: part.shape[0]]
            np.multiply(part, complete[rows, None], out=design, casting="unsafe")  # incomplete rows -> 0
            if part.shape[0] * float(design.max(initial=0)) ** 2 > 2**24:  # float32 would round: widen
                return design.astype(np.float64)
            return design

        def gather(rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
            part = codes[rows]
            answered = part != MISSING
            part[~answered] = 0
            return part, answered

        return cls._build(codes.shape, complete, none, complete_block, gather, exact=True)

    @classmethod
    def from_values(cls, values: np.ndarray) -> PatternSummary:
        """From answers as numbers (n x k float, NaN = missing). Exact when every answer is a whole number."""
        values = np.asarray(values, dtype=np.float64)
        if values.ndim != 2:
            raise DataError(f"expected a respondents x items matrix, got {values.ndim} dimension(s)")
        answered_all = ~np.isnan(values)
        given = values[answered_all]
        if np.isinf(given).any():
            raise DataError("infinite values are not answers")
        whole = bool(np.all(given == np.round(given))) and (given.size == 0 or np.abs(given).max() < 2**20)

        n_answered = answered_all.sum(axis=1)
        complete, none = n_answered == values.shape[1], n_answered == 0

        def complete_block(rows: slice) -> np.ndarray:
            return np.where(complete[rows, None], values[rows], 0.0)

        def gather(rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
            answered = answered_all[rows]
            return np.where(answered, values[rows], 0.0), answered

        return cls._build(values.shape, complete, none, complete_block, gather, exact=whole)

    @classmethod
    def _build(cls, shape: tuple[int, int], complete: np.ndarray, none: np.ndarray, complete_block, gather, *,
               exact: bool) -> PatternSummary:
        """One pass over blocks of rows for the complete rows' statistics, then the incomplete rows by pattern.

        ``complete`` and ``none`` mark the rows that answered every item and no item;
        ``complete_block(slice)`` gives a block's answers with every incomplete row zeroed;
        ``gather(positions)`` the zero-filled answers of some rows and their answered mask.
        """
        n, k = shape
        complete_sums, complete_cross = np.zeros(k), np.zeros((k, k))
        n_complete = int(np.count_nonzero(complete))
        for start in range(0, n if n_complete else 0, _BLOCK_ROWS):
            values = complete_block(slice(start, min(n, start + _BLOCK_ROWS)))
            complete_cross += _cross_products(values)
            complete_sums += values.sum(axis=0, dtype=np.float64)
        partial = np.flatnonzero(~complete & ~none)
        n_none = int(np.count_nonzero(none))
        limit = rows_limit(k)
        observed = [np.ones((1 if n_complete else 0, k), dtype=bool)]
        counts = [np.array([n_complete] if n_complete else [], dtype=np.int64)]
        sums = [complete_sums[None, :] if n_complete else np.empty((0, k))]
        matrices: dict[int, np.ndarray] = {}
        rows, row_pattern = [np.empty((0, k))], [np.empty(0, dtype=np.int64)]
        if n_complete >= limit:
            matrices[0] = complete_cross
        elif n_complete:
            rows.append(gather(np.flatnonzero(complete))[0].astype(np.float64))
            row_pattern.append(np.zeros(n_complete, dtype=np.int64))
        if partial.size:
            values, answered = gather(partial)  # in file order: a cache-friendly pass over the answers
            order, starts, _ = group_patterns(answered)
            values = np.take(values, order, axis=0)  # take copies whole rows; fancy indexing goes byte by byte
            answered = answered[order[starts]]
            pattern_counts = np.diff(np.append(starts, partial.size))
            base = len(counts[0])
            pattern_sums = np.zeros((starts.size, k))
            for p in np.flatnonzero(pattern_counts >= limit):  # few patterns, many rows each
                part = values[starts[p]:starts[p] + pattern_counts[p]].astype(np.float64)
                matrices[base + int(p)] = part.T @ part
                pattern_sums[p] = part.sum(axis=0)
            few = pattern_counts < limit
            as_rows = np.repeat(few, pattern_counts)
            held = values[as_rows].astype(np.float64)
            if held.size:
                held_starts = np.concatenate([[0], np.cumsum(pattern_counts[few])[:-1]])
                pattern_sums[few] = np.add.reduceat(held, held_starts, axis=0)
            observed.append(answered)
            counts.append(pattern_counts)
            sums.append(pattern_sums)
            rows.append(held)
            row_pattern.append(base + np.repeat(np.arange(starts.size), pattern_counts)[as_rows])
        summary = cls(k=k, observed=np.concatenate(observed), counts=np.concatenate(counts),
                      sums=np.concatenate(sums), matrices=matrices, rows=np.concatenate(rows),
                      row_pattern=np.concatenate(row_pattern), n_none=n_none, exact=exact)
        return summary._canonical()

    def _canonical(self) -> PatternSummary:
        """Patterns sorted by their bits; statistics as exact integers when exact."""
        order, _, _ = group_patterns(self.observed)
        position = np.empty_like(order)
        position[order] = np.arange(order.size)

        def convert(array: np.ndarray) -> np.ndarray:
            return np.rint(array).astype(np.int64) if self.exact else np.asarray(array, dtype=np.float64)

        return PatternSummary(
            k=self.k, observed=self.observed[order], counts=self.counts[order], sums=convert(self.sums[order]),
            matrices={int(position[p]): convert(m) for p, m in self.matrices.items()},
            rows=self.rows, row_pattern=position[self.row_pattern] if self.row_pattern.size else self.row_pattern,
            n_none=self.n_none, exact=self.exact)

    # ------------------------------------------------------------------------------------------ merging

    def merge(self, other: PatternSummary) -> PatternSummary:
        """The summary of both blocks of respondents together (associative and commutative)."""
        if self.k != other.k:
            raise DataError(f"cannot merge summaries of {self.k} and {other.k} items")
        k = self.k
        exact = self.exact and other.exact
        dtype = np.int64 if exact else np.float64
        observed = np.concatenate([self.observed, other.observed]).reshape(-1, k)
        order, starts, inverse = group_patterns(observed)
        n_patterns = starts.size
        counts = np.bincount(inverse, weights=np.concatenate([self.counts, other.counts]),
                             minlength=n_patterns).astype(np.int64)
        sums = np.zeros((n_patterns, k), dtype=dtype)
        np.add.at(sums, inverse, np.concatenate([self.sums, other.sums]).astype(dtype))
        offset = len(self.counts)
        rows = np.concatenate([self.rows, other.rows]).reshape(-1, k)
        row_pattern = np.concatenate([inverse[self.row_pattern], inverse[offset + other.row_pattern]]).astype(np.int64)
        matrices: dict[int, np.ndarray] = {}
        for source, shift in ((self, 0), (other, offset)):
            for p, matrix in source.matrices.items():
                target = int(inverse[shift + p])
                matrix = matrix.astype(dtype, copy=False)
                matrices[target] = matrices[target] + matrix if target in matrices else matrix
        keep_rows = np.ones(rows.shape[0], dtype=bool)
        # a pattern held as rows in either part becomes a matrix once the two together reach the limit
        # (only the patterns that have rows are looked at: most large patterns have none)
        has_rows = np.bincount(row_pattern, minlength=n_patterns) > 0
        grown = np.flatnonzero(has_rows & (counts >= rows_limit(k)))
        for position in grown:
            mine = row_pattern == position
            gram = rows[mine].T @ rows[mine]
            gram = np.rint(gram).astype(np.int64) if exact else gram
            matrices[int(position)] = matrices[int(position)] + gram if int(position) in matrices else gram
            keep_rows &= ~mine
        return PatternSummary(k=k, observed=observed[order[starts]], counts=counts, sums=sums, matrices=matrices,
                              rows=rows[keep_rows], row_pattern=row_pattern[keep_rows],
                              n_none=self.n_none + other.n_none, exact=exact)

    # ------------------------------------------------------------------------------------------ reading

    @property
    def n_used(self) -> int:
        """Respondents who answered at least one item."""
        return int(self.counts.sum())

    @property
    def n_rows(self) -> int:
        return self.n_used + self.n_none

    @property
    def n_complete(self) -> int:
        complete = self.observed.all(axis=1)
        return int(self.counts[complete].sum())

    @property
    def anything_missing(self) -> bool:
        return self.n_none > 0 or bool((~self.observed).any())

    def cross_products(self, pattern: int) -> np.ndarray:
        """The (k, k) cross-products of the answered part of one pattern's respondents."""
        if pattern in self.matrices:
            return self.matrices[pattern]
        block = self.rows[self.row_pattern == pattern]
        gram = block.T @ block
        return np.rint(gram).astype(np.int64) if self.exact else gram

    def total_cross_products(self) -> np.ndarray:
        """Sum over every pattern of the cross-products of the answered part (0 where missing)."""
        total = self.rows.T @ self.rows
        for matrix in self.matrices.values():
            total = total + matrix
        return total

    def missing_counts(self) -> dict[int, int]:
        """Respondents by how many answers they miss (0, 1, 2 ...; k for those who answered nothing)."""
        n_missing = self.k - self.observed.sum(axis=1)
        tally = np.bincount(n_missing, weights=self.counts, minlength=self.k + 1).astype(np.int64)
        tally[self.k] += self.n_none
        return {m: int(c) for m, c in enumerate(tally) if c}

