"""A column of numbers kept on disk, and its exact median found by selection in bounded memory.

The values of a file read in blocks (completion times, each row's even-odd half correlation) are appended
to one temporary file (a buffer of at most :data:`BUFFER_VALUES` values is held in memory; fewer values
than that never touch the disk). The median is found without sorting the column: each value is mapped to
a 64-bit key that orders as the numbers do, and one pass over the file counts the keys by their top 16
bits; the bin holding the wanted rank is then searched the same way on the next 16 bits, and so on,
until at most :data:`BUFFER_VALUES` values remain, which are sorted in memory. Each pass reads the file
a chunk at a time, so memory holds a chunk and 65,536 counts whatever the number of rows.

Hand-written because neither numpy nor pyarrow selects a rank from a column larger than memory.
"""
from __future__ import annotations

import os
import tempfile
from pathlib import Path

import numpy as np

from .spill_buffer import BufferedSpill

#: values held in memory before they are written out (8 bytes each: 2 MiB), and the chunk read per pass
BUFFER_VALUES = 262_144


def _keys(values: np.ndarray) -> np.ndarray:
    """64-bit keys that order as the floats do (negative numbers' bits flipped, the sign bit set on the rest)."""
    bits = np.ascontiguousarray(values, dtype=np.float64).view(np.uint64)
    negative = (bits >> np.uint64(63)).astype(bool)
    return np.where(negative, ~bits, bits | np.uint64(1 << 63))


class ValueSpill(BufferedSpill):
    """Finite float64 values collected block by block; :meth:`median` is exact (NumPy's ``np.median``).

    Use as a context manager (the file is removed on leaving).
    """

    def __init__(self, folder: str | Path | None = None, *, buffer_values: int = BUFFER_VALUES) -> None:
        super().__init__(folder, buffer_size=buffer_values)
        self._path: Path | None = None

    def add(self, values: np.ndarray) -> None:
        values = np.asarray(values, dtype=np.float64).reshape(-1)
        self._hold(values[np.isfinite(values)])

    def _write_out(self, values: np.ndarray) -> None:
        if self._path is None:
            descriptor, name = tempfile.mkstemp(prefix="scalewright-values-", suffix=".f64", dir=self._folder)
            os.close(descriptor)
            self._path = Path(name)
        with open(self._path, "ab") as handle:
            values.tofile(handle)

    def _remove(self) -> None:
        if self._path is not None:
            self._path.unlink(missing_ok=True)
            self._path = None

    def _chunks(self):
        if self._path is None:
            held = self._held()
            if held is not None:
                yield held
            return
        self._flush()
        with open(self._path, "rb") as handle:
            while True:
                chunk = np.fromfile(handle, dtype=np.float64, count=self._buffer_size)
                if not chunk.size:
                    return
                yield chunk

    def kth(self, rank: int) -> float:
        """The value of rank ``rank`` (0 = smallest) among those added."""
        if not 0 <= rank < self.count:
            raise IndexError(f"rank {rank} of {self.count} values")
        prefix, bits, remaining = np.uint64(0), 0, self.count  # the wanted key's top ``bits`` bits, known so far

        def matching(chunk: np.ndarray) -> np.ndarray:
            keys = _keys(chunk)
            return keys if bits == 0 else keys[(keys >> np.uint64(64 - bits)) == prefix]

        while remaining > self._buffer_size and bits < 64:
            counts = np.zeros(65536, dtype=np.int64)
            for chunk in self._chunks():
                digits = (matching(chunk) >> np.uint64(48 - bits)) & np.uint64(0xFFFF)
                counts += np.bincount(digits.astype(np.intp), minlength=65536)
            below = np.cumsum(counts)
            digit = int(np.searchsorted(below, rank, side="right"))
            rank -= int(below[digit - 1]) if digit else 0
            remaining = int(counts[digit])
            prefix = (prefix << np.uint64(16)) | np.uint64(digit)
            bits += 16
        keys = np.concatenate([matching(chunk) for chunk in self._chunks()])
        keys.sort()
        return float(_values(keys[rank:rank + 1])[0])

    def median(self) -> float:
        """The median as ``np.median`` gives it (the mean of the two middle values of an even count); NaN
        when no value was added."""
        if not self.count:
            return float("nan")
        low, high = (self.count - 1) // 2, self.count // 2
        a = self.kth(low)
        b = a if high == low else self.kth(high)
        return float(np.mean(np.array([a, b]))) if high != low else a


def _values(keys: np.ndarray) -> np.ndarray:
    """The floats of :func:`_keys` (the inverse mapping)."""
    keys = np.asarray(keys, dtype=np.uint64)
    positive = (keys >> np.uint64(63)).astype(bool)
    bits = np.where(positive, keys & ~np.uint64(1 << 63), ~keys)
    return bits.view(np.float64)
