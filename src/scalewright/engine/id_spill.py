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

from .spill_buffer import BufferedSpill

#: bucket files (by the top 8 bits of the hash)
BUCKETS = 256
#: hashes held in memory before they are written to their buckets (8 bytes each: 8 MiB)
BUFFER_HASHES = 1 << 20


class IdHashSpill(BufferedSpill):
    """Collects id hashes block by block; :meth:`has_duplicates` says whether any hash came twice.

    Use as a context manager (the bucket files are removed on leaving); ``folder`` is where the temporary
    folder is made (default: the system's temporary folder).
    """

    def __init__(self, folder: str | Path | None = None, *, buffer_hashes: int = BUFFER_HASHES) -> None:
        super().__init__(folder, buffer_size=buffer_hashes)
        self._spill: Path | None = None

    def add(self, hashes: np.ndarray) -> None:
        self._hold(np.asarray(hashes, dtype=np.uint64))

    def take_ids(self, reading: Any) -> Any:
        """Spill the id hashes a block's reading counts hold and return the counts without them (a
        :class:`~scalewright.engine.reading.ReadingCounts`): the ids are checked here, on disk, not held."""
        for hashes in reading.id_hashes:
            self.add(hashes)
        return replace(reading, id_hashes=())

    def _write_out(self, joined: np.ndarray) -> None:
        if self._spill is None:
            self._spill = Path(tempfile.mkdtemp(prefix="scalewright-ids-", dir=self._folder))
        bucket = (joined >> np.uint64(56)).astype(np.intp)
        order = np.argsort(bucket, kind="stable")
        joined, bucket = joined[order], bucket[order]
        bounds = np.searchsorted(bucket, np.arange(BUCKETS + 1))
        for index in np.flatnonzero(np.diff(bounds)):
            with open(self._spill / f"{index:03d}.u64", "ab") as handle:
                joined[bounds[index]:bounds[index + 1]].tofile(handle)

    def _remove(self) -> None:
        if self._spill is not None:
            shutil.rmtree(self._spill, ignore_errors=True)
            self._spill = None

    def has_duplicates(self) -> bool:
        """Whether two of the hashes added are equal (every bucket checked, one at a time)."""
        return bool(self.repeated().size)

    def repeated(self) -> np.ndarray:
        """The hashes added more than once (sorted, each once): the candidates a second look confirms."""
        if self._spill is None:  # everything is still in memory
            held = self._held()
            parts = [_repeated(held)] if held is not None else []
        else:
            self._flush()
            parts = [_repeated(np.fromfile(path, dtype=np.uint64)) for path in sorted(self._spill.iterdir())]
        return np.concatenate(parts) if parts else np.zeros(0, dtype=np.uint64)


def _repeated(hashes: np.ndarray) -> np.ndarray:
    hashes.sort(kind="stable")  # a merge of the blocks' sorted runs (the blocks sort their own hashes)
    return np.unique(hashes[1:][hashes[1:] == hashes[:-1]])
