"""The ``Table``: the one shape every command's human-readable output is made of."""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any


@dataclass(frozen=True)
class Table:
    """A titled table of raw (unrounded) values.

    ``kinds`` maps a column to a kind of :func:`scalewright.present.numbers.format_value`
    (``num`` when not named). ``key`` is a short machine name used as the ``table`` column in CSV.
    """

    title: str
    columns: tuple[str, ...]
    rows: tuple[tuple[Any, ...], ...]
    kinds: dict[str, str] = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    key: str = ""

    def kind_of(self, column: str) -> str:
        return self.kinds.get(column, "num")
