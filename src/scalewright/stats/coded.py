"""Sufficient statistics of one scale straight from one-byte answer codes (:class:`~scalewright.answer_codes.ItemAnswers`).

Hand-written because no library computes covariances from byte codes: numpy's ``cov`` wants float rows
and a copy of the complete ones. Here the incomplete rows are zeroed while the codes are widened, so
one matrix product gives the complete-row count, the sums and the cross-products at once, all exact
integers; the covariance then comes from exact integer arithmetic with one rounding at the end.
"""
from __future__ import annotations

from functools import reduce

import numpy as np

from ..answer_codes import MISSING, ItemAnswers
from ..errors import DataError
from .item_covariance import ItemCovariance

#: with this few levels, one comparison per level beats a histogram (no widening to 8-byte indices)
_FEW_LEVELS = 8
_BLOCK_ROWS = 16384


def _block_dtype(span: int) -> type:
    """float32 when it holds every partial sum of a block's cross-products exactly, else float64.

    Every product and partial sum is a whole number of at most rows * span**2; float32 represents all
    whole numbers up to 2**24 exactly, so any summation order gives the exact result.
    """
    return np.float32 if _BLOCK_ROWS * max(span, 1) ** 2 <= 2**24 else np.float64


def _cross_products(design: np.ndarray) -> np.ndarray:
    # einsum beats BLAS on tall, narrow blocks; from a few dozen columns (the whole file of a confirmatory
    # model) BLAS is about 8 times faster. Both are exact: every partial sum fits the block's float type.
    if design.shape[1] > 16:
        return (design.T @ design).astype(np.float64)
    return np.einsum("ij,ik->jk", design, design).astype(np.float64)


def answer_tally(coded: ItemAnswers, n_levels: int) -> np.ndarray:
    """(k, n_levels) counts of each code per item; raises ``DataError`` for a code beyond the levels."""
    codes = coded.codes
    k = codes.shape[1]
    tally = np.zeros((k, n_levels), dtype=np.int64)
    for j in range(k):
        column = codes[:, j]
        if n_levels <= _FEW_LEVELS:
            tally[j] = [np.count_nonzero(column == level) for level in range(n_levels)]
        else:
            tally[j] = np.bincount(column, minlength=256)[:n_levels]
        if tally[j].sum() != column.size - np.count_nonzero(column == MISSING):
            raise DataError(f"answer codes of item {j + 1} go beyond the {n_levels} answer levels")
    return tally


def code_counts(codes: np.ndarray) -> np.ndarray:
    """(k, 256) counts of every one-byte code of every column (255 = missing), in one pass over the rows.

    Each block of rows is widened once and offset by ``256 * column``, so a single ``bincount`` counts all
    codes of all columns of the block; memory stays at one block whatever the number of rows.
    """
    codes = np.asarray(codes)
    if codes.dtype != np.uint8 or codes.ndim != 2:
        raise DataError("answer codes must be a respondents x items matrix of uint8")
    n_rows, k = codes.shape
    offsets = (256 * np.arange(k, dtype=np.intp))[None, :]
    counts = np.zeros(256 * k, dtype=np.int64)
    for start in range(0, n_rows, _BLOCK_ROWS):
        block = codes[start:start + _BLOCK_ROWS].astype(np.intp)
        block += offsets
        counts += np.bincount(block.ravel(), minlength=256 * k)
    return counts.reshape(k, 256)


def listwise_gram(codes: np.ndarray, *, span: int) -> np.ndarray:
    """``G = [1 x]' [1 x]`` over the complete rows (x the codes, zero elsewhere): exact int64, (k+1, k+1).

    ``G[0, 0]`` is the complete-row count, ``G[0, 1:]`` the sums and ``G[1:, 1:]`` the cross-products.
    Accumulated a block of rows at a time, each block exact in its float type (see :func:`_block_dtype`).
    Grams of blocks of rows add up to the gram of all of them (the mergeable form).
    """
    n_rows, k = codes.shape
    if k == 0 or n_rows == 0:
        gram = np.zeros((k + 1, k + 1), dtype=np.int64)
        gram[0, 0] = n_rows if k == 0 else 0
        return gram
    complete = reduce(np.maximum, (codes[:, j] for j in range(k))) != MISSING
    n = int(np.count_nonzero(complete))
    gram = np.zeros((k + 1, k + 1))
    if n == 0:
        return gram.astype(np.int64)
    # a block of rows at a time keeps the widened copy in cache and reuses its memory
    block = np.empty((min(n_rows, _BLOCK_ROWS), k + 1), dtype=_block_dtype(span), order="F")
    for start in range(0, n_rows, _BLOCK_ROWS):
        stop = min(n_rows, start + _BLOCK_ROWS)
        design = block[: stop - start]
        design[:, 0] = complete[start:stop]
        if n == n_rows:
            design[:, 1:] = codes[start:stop]
        else:
            np.multiply(codes[start:stop], complete[start:stop, None], out=design[:, 1:], casting="unsafe")
        gram += _cross_products(design)
    return np.rint(gram).astype(np.int64)


def covariance_from_listwise_gram(gram: np.ndarray, *, n_rows: int, low: int, high: int,
                                  reversed_mask: np.ndarray) -> ItemCovariance:
    """Means and covariance of the keyed items from :func:`listwise_gram` (summed over any blocks of rows).

    In integers, ``cov = (n C - s s') / (n (n - 1))``, one rounding at the end; exact input while
    n * (high - low)**2 < 2**53. Reverse keying ``x -> (high - low) - x`` flips the signs of that item's
    row and column, and its mean.
    """
    k = gram.shape[0] - 1
    reversed_mask = np.asarray(reversed_mask, dtype=bool)
    n = int(gram[0, 0]) if k else n_rows
    counts = np.full((k, k), n, dtype=np.int64)
    if n == 0 or k == 0:
        return ItemCovariance(cov=np.full((k, k), np.nan), means=np.full(k, np.nan), n_used=n, n_rows=n_rows,
                              n_complete=n, pair_counts=counts, pairwise=False)
    exact = np.asarray(gram, dtype=np.int64).astype(object)  # exact integers, no overflow below
    sums, cross = exact[0, 1:], exact[1:, 1:]
    means = np.array([float(s) / n for s in sums])
    if n >= 2:
        cov = ((n * cross - np.outer(sums, sums)) / (n * (n - 1))).astype(np.float64)
    else:
        cov = np.full((k, k), np.nan)
    sign = np.where(reversed_mask, -1.0, 1.0)
    return ItemCovariance(cov=cov * np.outer(sign, sign), means=np.where(reversed_mask, high - means, low + means),
                          n_used=n, n_rows=n_rows, n_complete=n, pair_counts=counts, pairwise=False)


def listwise_covariance(coded: ItemAnswers, *, low: int, high: int, reversed_mask: np.ndarray) -> ItemCovariance:
    """Means and covariance matrix (ddof 1) of the keyed items over the rows that answered every item.

    With ``x`` the codes of the complete rows (zero elsewhere) and a leading column of ones,
    ``G = [1 x]' [1 x]`` holds the count n, the sums s and the cross-products C, exact integers
    (:func:`listwise_gram`); then :func:`covariance_from_listwise_gram`.
    """
    return covariance_from_listwise_gram(listwise_gram(coded.codes, span=high - low), n_rows=coded.shape[0],
                                         low=low, high=high, reversed_mask=reversed_mask)


def pairwise_gram(codes: np.ndarray, *, span: int) -> np.ndarray:
    """``G = [a z]' [a z]`` (a the answered indicators, z the codes, zero where missing): exact int64, (2k, 2k).

    Grams of blocks of rows add up to the gram of all of them (the mergeable form).
    """
    n_rows, k = codes.shape
    gram = np.zeros((2 * k, 2 * k))
    if n_rows == 0 or k == 0:
        return gram.astype(np.int64)
    block = np.empty((min(n_rows, _BLOCK_ROWS), 2 * k), dtype=_block_dtype(span), order="F")
    for start in range(0, n_rows, _BLOCK_ROWS):
        stop = min(n_rows, start + _BLOCK_ROWS)
        design = block[: stop - start]
        part = codes[start:stop]
        np.not_equal(part, MISSING, out=design[:, :k], casting="unsafe")
        np.multiply(part, design[:, :k], out=design[:, k:])
        gram += _cross_products(design)
    return np.rint(gram).astype(np.int64)


def complete_rows(codes: np.ndarray) -> int:
    """How many rows answered every item."""
    n_rows, k = codes.shape
    return int(np.count_nonzero(reduce(np.maximum, (codes[:, j] for j in range(k))) != MISSING)) if k else n_rows


def covariance_from_pairwise_gram(gram: np.ndarray, *, n_rows: int, n_complete: int, low: int, high: int,
                                  reversed_mask: np.ndarray) -> ItemCovariance:
    """Pairwise covariances of the keyed items from :func:`pairwise_gram` (summed over any blocks of rows).

    ``cov_ij = (n_ij C_ij - s_i|j s_j|i) / (n_ij (n_ij - 1))`` in integers, the definition of
    :meth:`pandas.DataFrame.cov`; ``n_used`` is the smallest pair count.
    """
    k = gram.shape[0] // 2
    reversed_mask = np.asarray(reversed_mask, dtype=bool)
    gram = np.asarray(gram, dtype=np.int64)
    counts, sums, cross = gram[:k, :k], gram[k:, :k], gram[k:, k:]
    cov = np.full((k, k), np.nan)
    for i in range(k):
        for j in range(k):
            n = int(counts[i, j])
            if n >= 2:
                numerator = n * int(cross[i, j]) - int(sums[i, j]) * int(sums[j, i])
                cov[i, j] = numerator / (n * (n - 1))
    diagonal = np.diag(counts)
    with np.errstate(invalid="ignore", divide="ignore"):
        means = np.diag(sums) / diagonal
    sign = np.where(reversed_mask, -1.0, 1.0)
    return ItemCovariance(cov=cov * np.outer(sign, sign), means=np.where(reversed_mask, high - means, low + means),
                          n_used=int(counts.min()) if k else 0, n_rows=n_rows, n_complete=n_complete,
                          pair_counts=counts.astype(np.int64), pairwise=True)


def pairwise_covariance(coded: ItemAnswers, *, low: int, high: int, reversed_mask: np.ndarray) -> ItemCovariance:
    """Covariances of the keyed items, each over the rows that answered both (pairwise deletion).

    With ``a`` the answered indicators and ``z`` the codes (zero where missing), ``G = [a z]' [a z]``
    holds the pair counts ``a'a``, the sums of each item over the rows answering the other ``z'a`` and the
    cross-products ``z'z``, all exact integers (:func:`pairwise_gram`); then
    :func:`covariance_from_pairwise_gram`.
    """
    codes = coded.codes
    return covariance_from_pairwise_gram(pairwise_gram(codes, span=high - low), n_rows=codes.shape[0],
                                         n_complete=complete_rows(codes), low=low, high=high,
                                         reversed_mask=reversed_mask)
