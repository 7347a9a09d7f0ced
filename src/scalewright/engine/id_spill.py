"""The duplicate-id check of a streamed file, in memory that does not grow with the rows.

Each id is kept as its 64-bit hash. The hashes are spread over :data:`BUCKETS` bucket files on disk by
their top bits (a buffer of at most :data:`BUFFER_HASHES` hashes is held in memory between writes); at
the end each bucket is read, sorted and searched for two equal hashes, one bucket at a time. So the
memory is the buffer (8 MiB) plus one bucket: 8 bytes per id / 256 (about 31 KB per million ids) at the
check, and the disk holds 8 MB per million ids, in a temporary folder removed afterwards. A file with
fewer ids than the buffer holds never touches the disk.

Exact in the one direction that matters: equal ids have equal hashes, so every duplicate is found. Two
different ids can share a hash (the chance is about n^2 / 2^65: one in 90,000 for 20 million ids); the streaming route then
hands the file to the whole-file reader, which compares the ids themselves and names the duplicates
only if there are some. So no duplicate is ever claimed that is not there.
"""
from __future__ import annotations

import shutil
import tempfile
from dataclasses import replace
from pathlib import Path
from typing import Any

import numpy as np

#: bucket files (by the top 8 bits of the hash)
BUCKETS = 256
#: hashes held in memory before they are written to their buckets (8 bytes each: 8 MiB)
BUFFER_HASHES = 1 << 20


class IdHashSpill:
    """Collects id hashes block by block; :meth:`has_duplicates` says whether any hash came twice.

    Use as a context manager (the bucket files are removed on leaving); ``folder`` is where the temporary
    folder is made (default: the system's temporary folder).
    """

    def __init__(self, folder: str | Path | None = None, *, buffer_hashes: int = BUFFER_HASHES) -> None:
        self._folder = folder
        self._buffer_hashes = buffer_hashes
        self._pending: list[np.ndarray] = []
        self._pending_size = 0
        self._spill: Path | None = None
        self.count = 0

    def __enter__(self) -> IdHashSpill:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def close(self) -> None:
        if self._spill is not None:
            shutil.rmtree(self._spill, ignore_errors=True)
            self._spill = None
        self._pending, self._pending_size = [], 0

    def add(self, hashes: np.ndarray) -> None:
        hashes = np.asarray(hashes, dtype=np.uint64)
        if not hashes.size:
            return
        self._pending.append(hashes)
        self._pending_size += hashes.size
        self.count += hashes.size
        if self._pending_size >= self._buffer_hashes:
            self._write()

    def take_ids(self, reading: Any) -> Any:
        """Spill the id hashes a block's reading counts hold and return the counts without them (a
        :class:`~scalewright.engine.reading.ReadingCounts`): the ids are checked here, on disk, not held."""
        for hashes in reading.id_hashes:
            self.add(hashes)
        return replace(reading, id_hashes=())

    def _write(self) -> None:
        if self._spill is None:
            self._spill = Path(tempfile.mkdtemp(prefix="scalewright-ids-", dir=self._folder))
        joined = np.concatenate(self._pending)
        self._pending, self._pending_size = [], 0
        bucket = (joined >> np.uint64(56)).astype(np.intp)
        order = np.argsort(bucket, kind="stable")
        joined, bucket = joined[order], bucket[order]
        bounds = np.searchsorted(bucket, np.arange(BUCKETS + 1))
        for index in np.flatnonzero(np.diff(bounds)):
            with open(self._spill / f"{index:03d}.u64", "ab") as handle:
                joined[bounds[index]:bounds[index + 1]].tofile(handle)

    def has_duplicates(self) -> bool:
        """Whether two of the hashes added are equal (every bucket checked, one at a time)."""
        if self._spill is None:  # everything is still in memory
            if not self._pending:
                return False
            return _repeats(np.concatenate(self._pending))
        if self._pending:
            self._write()
        return any(_repeats(np.fromfile(path, dtype=np.uint64)) for path in sorted(self._spill.iterdir()))


    def repeated(self) -> np.ndarray:
        """The hashes added more than once (sorted, each once): the candidates a second look confirms."""
        if self._spill is None:
            parts = [_repeated(np.concatenate(self._pending))] if self._pending else []
        else:
            if self._pending:
                self._write()
            parts = [_repeated(np.fromfile(path, dtype=np.uint64)) for path in sorted(self._spill.iterdir())]
        return np.concatenate(parts) if parts else np.zeros(0, dtype=np.uint64)


def _repeated(hashes: np.ndarray) -> np.ndarray:
    hashes.sort(kind="stable")  # a merge of the blocks' sorted runs (the blocks sort their own hashes)
    return np.unique(hashes[1:][hashes[1:] == hashes[:-1]])


def _repeats(hashes: np.ndarray) -> bool:
    hashes.sort(kind="stable")  # a merge of the blocks' sorted runs (the blocks sort their own hashes)
    return bool(np.any(hashes[1:] == hashes[:-1]))
