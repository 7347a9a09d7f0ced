"""64-bit hashes of answer rows (for the screen's identical-rows check on a file read in blocks).

Each row's one-byte answer codes (255 = no answer) are hashed as a polynomial over the codes modulo 2^64
followed by the splitmix64 finaliser of :mod:`.id_hash`. Equal rows always get equal hashes;
two different rows that share one are told apart by a second look at the rows themselves
(:mod:`.screen_stream`), so no row is ever called a copy that is not one.
"""
from __future__ import annotations

import numpy as np

from .id_hash import _finalise

_BASE = np.uint64(0x100000001B3)


def _powers(length: int) -> np.ndarray:
    """BASE^0, BASE^1, ... modulo 2^64 (the weights of the codes by their distance from the row's end)."""
    powers = np.empty(max(length, 1), dtype=np.uint64)
    powers[0] = 1
    with np.errstate(over="ignore"):
        for shift in range(1, length):
            powers[shift] = powers[shift - 1] * _BASE
    return powers


def answer_row_hashes(codes: np.ndarray) -> np.ndarray:
    """The hash of every row of a respondents x items matrix of one-byte codes."""
    codes = np.asarray(codes, dtype=np.uint8)
    n, p = codes.shape
    weights = _powers(p)[::-1][:p]  # BASE^(items after this one)
    with np.errstate(over="ignore"):
        sums = np.zeros(n, dtype=np.uint64)
        for j in range(p):  # over items: every row at once, no (n, p) widened copy
            sums += (codes[:, j].astype(np.uint64) + np.uint64(1)) * weights[j]
        return _finalise(sums ^ (np.uint64(p) * np.uint64(0x9E3779B97F4A7C15)))
