"""Item answers held two ways: one-byte codes for the statistics, float64 with NaN for everything else.

A rating answer is one of a few whole levels, so it fits in one byte as its offset from the item's lowest
answer (``answer - min``), with :data:`MISSING` for no answer. Reliability on a million respondents is
limited by memory traffic, and a byte is an eighth of a float64. Each form is built from the other on
first use, so a command pays only for the form it reads. :class:`ItemAnswers` is the one container of
answers: the whole file's (``Responses.answers``) and one scale's, as the statistics of
:mod:`scalewright.stats.coded` read them.
"""
from __future__ import annotations

import threading
from collections.abc import Sequence

import numpy as np

from .errors import DataError

MISSING = 255
#: widest answer range (max - min) held as codes; 251-254 stay free as marks while reading
MAX_SPAN = 250


class ItemAnswers:
    """The clean answers of every item, from either form.

    Parameters
    ----------
    lows, highs : sequences of int
        Lowest and highest answer of each item (its answer format's ``min`` and ``max``).

    ``values`` is (n, k) float64, NaN where missing; codes are (n, k) uint8 offsets from ``lows``,
    :data:`MISSING` where missing, only for items whose span ``high - low`` is at most :data:`MAX_SPAN`.

    Build it with :meth:`from_values` or :meth:`from_codes`; the other form is derived when first asked
    for. An item whose answers are not all whole levels of its range has no codes (:meth:`codes_of` then
    gives ``None``).
    """

    def __init__(self, lows: Sequence[int] | np.ndarray, highs: Sequence[int] | np.ndarray) -> None:
        self.lows = np.asarray(lows, dtype=np.int64)
        self.highs = np.asarray(highs, dtype=np.int64)
        self._values: np.ndarray | None = None
        self._codes: tuple[np.ndarray, np.ndarray] | None = None
        self._lock = threading.Lock()  # analyses of several scales may ask for the same form at once

    @classmethod
    def from_values(cls, values: np.ndarray, lows: Sequence[int] | np.ndarray,
                    highs: Sequence[int] | np.ndarray) -> ItemAnswers:
        answers = cls(lows, highs)
        answers._values = _read_only(values)
        return answers

    @classmethod
    def from_codes(cls, codes: np.ndarray, lows: Sequence[int] | np.ndarray | int,
                   highs: Sequence[int] | np.ndarray | int) -> ItemAnswers:
        """Answers from one-byte codes; ``lows`` and ``highs`` may be one number for every item."""
        if not isinstance(codes, np.ndarray) or codes.dtype != np.uint8 or codes.ndim != 2:
            raise DataError("answer codes must be a respondents x items matrix of uint8")
        k = codes.shape[1]
        answers = cls(np.broadcast_to(np.asarray(lows), (k,)), np.broadcast_to(np.asarray(highs), (k,)))
        answers._codes = (_read_only(codes), np.ones(k, dtype=bool))
        return answers

    @property
    def n(self) -> int:
        return self.shape[0]

    @property
    def shape(self) -> tuple[int, int]:
        """(respondents, items)."""
        held = self._values if self._values is not None else self._built_codes()
        return int(held.shape[0]), int(held.shape[1])

    # built by from_values or from_codes, it holds at least one of the two forms
    def _built_codes(self) -> np.ndarray:
        if self._codes is None:
            raise RuntimeError("answers built without values or codes")
        return self._codes[0]

    def _built_values(self) -> np.ndarray:
        if self._values is None:
            raise RuntimeError("answers built without values or codes")
        return self._values

    @property
    def values(self) -> np.ndarray:
        """Answers as float64 (n x k, column-major), NaN where missing."""
        with self._lock:
            if self._values is None:
                self._values = _read_only(_values_from_codes(self._built_codes(), self.lows))
            return self._values

    def _codes_and_usable(self) -> tuple[np.ndarray, np.ndarray]:
        with self._lock:
            if self._codes is None:
                codes, usable = _codes_from_values(self._built_values(), self.lows, self.highs)
                self._codes = (_read_only(codes), usable)
            return self._codes

    def codes_of(self, positions: Sequence[int]) -> np.ndarray | None:
        """Codes of the items at ``positions`` (n x len, a copy), or None if one of them has none."""
        codes, usable = self._codes_and_usable()
        positions = list(positions)
        if not usable[positions].all():
            return None
        return codes[:, positions]

    @property
    def codes(self) -> np.ndarray:
        """Codes of every item (n x k, read-only); ``DataError`` if an item's answers are not whole levels."""
        codes, usable = self._codes_and_usable()
        if not usable.all():
            first = int(np.flatnonzero(~usable)[0])
            raise DataError(f"the answers of item {first + 1} are not whole levels of its range: no codes")
        return codes

    def keyed_values(self, *, low: int, high: int, reversed_mask: np.ndarray) -> np.ndarray:
        """The answers as float64 from the codes, reverse-keyed items turned (``low + high - x``), NaN where
        missing; ``low`` and ``high`` are the scale's answer range."""
        codes = self.codes
        values = codes.astype(np.float64)
        values[codes == MISSING] = np.nan
        return np.where(np.asarray(reversed_mask)[None, :], high - values, low + values)

    def subset(self, rows: np.ndarray) -> ItemAnswers:
        """The answers of the rows at ``rows`` (positions), in that order."""
        if self._codes is not None and self._codes[1].all():
            return ItemAnswers.from_codes(np.asfortranarray(self._codes[0][rows]), self.lows, self.highs)
        return ItemAnswers.from_values(self.values[rows], self.lows, self.highs)


def _read_only(array: np.ndarray) -> np.ndarray:
    """The shared answers: every command and subgroup reads the same array, so none may change it."""
    array.flags.writeable = False
    return array


def _values_from_codes(codes: np.ndarray, lows: np.ndarray) -> np.ndarray:
    values = np.empty(codes.shape, dtype=np.float64, order="F")
    for j in range(codes.shape[1]):
        column = values[:, j]
        np.add(codes[:, j], float(lows[j]), out=column)
        np.copyto(column, np.nan, where=codes[:, j] == MISSING)
    return values


def _codes_from_values(values: np.ndarray, lows: np.ndarray, highs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Codes of every item and which items have them (every answer a whole level of a narrow range)."""
    n, k = values.shape
    codes = np.full((n, k), MISSING, dtype=np.uint8, order="F")
    usable = np.zeros(k, dtype=bool)
    for j in range(k):
        span = highs[j] - lows[j]
        if span > MAX_SPAN:
            continue
        offsets = values[:, j] - lows[j]
        answered = ~np.isnan(offsets)
        given = offsets[answered]
        if given.size and (np.any(given != np.round(given)) or given.min() < 0 or given.max() > span):
            continue
        codes[answered, j] = given.astype(np.uint8)
        usable[j] = True
    return codes, usable
