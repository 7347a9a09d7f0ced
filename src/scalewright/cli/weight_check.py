"""The survey weights of a row command (``score``, ``screen``) read in blocks: the column in force and the
check of the weights read, as the whole-file route checks them."""
from __future__ import annotations

from typing import Any


class WeightCheck:
    """The survey weight column of a command on the block or Dask route (``--weight``, else the scale file's),
    and the check of what reading it found: the run refused as the whole-file route refuses it, or the same
    notes."""

    def __init__(self, path: str, spec: Any, *, lenient: bool) -> None:
        from .common import weight_in_force

        self.path, self.lenient = path, lenient
        self.column: str | None = weight_in_force(spec)
        self.notes: list[str] = []

    def options(self) -> dict[str, Any]:
        """The weight options of :func:`~scalewright.engine.screen_stream.stream_screen` (none unweighted)."""
        return {} if self.column is None else {"weight": self.column, "weights_read": self.check}

    def check(self, reading: Any) -> None:
        from ..analyses.summarised_weighted import check_weights

        self.notes = check_weights(self.path, reading, str(self.column), lenient=self.lenient)
