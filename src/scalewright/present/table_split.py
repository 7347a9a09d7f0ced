"""Wide tables made to fit a page: split into parts that each repeat the row names (and the flags).

A table with more than :data:`MAX_COLUMNS` columns does not fit the report's content column at 1300 px nor an
A4 page; scrolling sideways hides the right-hand columns (and printing cuts them), so such a table is shown as
consecutive parts in reading order instead.
"""
from __future__ import annotations

from collections.abc import Sequence

from .numbers import format_value
from .table import Table

#: columns that fit the report's content column and an A4 page at the print size (measured in chromium)
MAX_COLUMNS = 10


def turned(table: Table, *, decimals: int = 2) -> Table:
    """A one-row table turned on its side: one row per statistic, its value beside it."""
    (row,) = table.rows
    kinds = {"statistic": "text"}
    rows = tuple((column, value) for column, value in zip(table.columns, row, strict=True))
    # each value keeps its own kind, so the value column holds text already formatted row by row
    formatted = tuple((name, format_value(value, table.kind_of(name), decimals)) for name, value in rows)
    return Table(title=table.title, columns=("statistic", "value"), rows=formatted,
                 kinds={**kinds, "value": "text"}, notes=table.notes, key=table.key)


def split_wide_table(table: Table, *, keep: Sequence[str] = (), max_columns: int = MAX_COLUMNS,
                     decimals: int = 2) -> list[Table]:
    """``table`` itself when narrow enough, turned when it has one row, else parts of at most ``max_columns`` columns.

    Every part starts with the first column (the row names) and the ``keep`` columns (e.g. flags, so they are
    always visible); the other columns follow in their order. Only the last part carries the notes.
    """
    if len(table.columns) <= max_columns:
        return [table]
    if len(table.rows) == 1:
        return [turned(table, decimals=decimals)]
    head = [table.columns[0], *[c for c in keep if c in table.columns and c != table.columns[0]]]
    rest = [c for c in table.columns if c not in head]
    size = max(1, max_columns - len(head))
    chunks = [rest[start:start + size] for start in range(0, len(rest), size)]
    parts = []
    for number, chunk in enumerate(chunks, start=1):
        columns = (*head, *chunk)
        positions = [table.columns.index(c) for c in columns]
        parts.append(Table(
            title=f"{table.title} (part {number} of {len(chunks)})", columns=columns,
            rows=tuple(tuple(row[i] for i in positions) for row in table.rows),
            kinds={c: k for c, k in table.kinds.items() if c in columns},
            notes=table.notes if number == len(chunks) else (), key=f"{table.key}.{number}" if table.key else ""))
    return parts
