"""Arrays collected block by block: held in memory up to a buffer, then written out to temporary files.

What the spills of the block route share (:mod:`.id_spill`, :mod:`.value_spill`): the blocks' arrays are
appended to a buffer in memory; once it holds ``buffer_size`` items, the subclass writes them out
(``_write_out``) and the buffer starts again, so memory holds at most a buffer whatever the number of rows,
and a file with fewer items than the buffer never touches the disk. Used as a context manager, the
temporary files are removed on leaving (``_remove``).
"""
from __future__ import annotations

from pathlib import Path
from typing import TypeVar

import numpy as np

Spill = TypeVar("Spill", bound="BufferedSpill")


class BufferedSpill:
    """The buffer and the life cycle of a spill; a subclass writes and removes its own files."""

    def __init__(self, folder: str | Path | None, *, buffer_size: int) -> None:
        #: where the temporary files are made (default: the system's temporary folder)
        self._folder = folder
        self._buffer_size = buffer_size
        self._pending: list[np.ndarray] = []
        self._pending_size = 0
        #: items added so far
        self.count = 0

    def __enter__(self: Spill) -> Spill:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def close(self) -> None:
        self._remove()
        self._pending, self._pending_size = [], 0

    def _hold(self, items: np.ndarray) -> None:
        """Add ``items`` (one-dimensional) to the buffer, writing the buffer out once it is full."""
        if not items.size:
            return
        self._pending.append(items)
        self._pending_size += items.size
        self.count += items.size
        if self._pending_size >= self._buffer_size:
            self._flush()

    def _flush(self) -> None:
        """Write what the buffer holds (if anything) and empty it."""
        if self._pending:
            held = np.concatenate(self._pending)
            self._pending, self._pending_size = [], 0
            self._write_out(held)

    def _held(self) -> np.ndarray | None:
        """What the buffer holds, as one array, or None when it is empty."""
        return np.concatenate(self._pending) if self._pending else None

    def _write_out(self, items: np.ndarray) -> None:
        raise NotImplementedError

    def _remove(self) -> None:
        raise NotImplementedError
