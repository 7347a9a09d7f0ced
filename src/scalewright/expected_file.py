"""Reading a file of reference proportions (CSV with columns ``category`` and ``proportion``)."""
from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from pathlib import Path

from .errors import DataError, Problem


@dataclass(frozen=True)
class ReferenceProportions:
    """Proportions by category as written in the file, and the line each came from (for messages)."""

    path: str
    proportions: dict[str, float]
    lines: dict[str, int]


def read_expected(path: str | Path) -> ReferenceProportions:
    """Read ``category,proportion`` rows; a bad header, blank category, repeated category or non-number is a
    ``DataError`` naming the file and line. Whether the categories fit the data is checked by
    :func:`scalewright.stats.tally_fit.check_expected`."""
    path = Path(path)
    try:
        text = path.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError:
        raise DataError(Problem(file=str(path), message="not UTF-8 text; save the file as UTF-8")) from None
    rows = list(csv.reader(io.StringIO(text)))
    if not rows:
        raise DataError(Problem(file=str(path), message="the file is empty; expected columns category,proportion"))
    header = [h.strip().lower() for h in rows[0]]
    if "category" not in header or "proportion" not in header:
        raise DataError(Problem(file=str(path), line=1,
                                message=f"the header must name the columns category and proportion, found {rows[0]}"))
    at_category, at_proportion = header.index("category"), header.index("proportion")
    proportions: dict[str, float] = {}
    lines: dict[str, int] = {}
    for line, row in enumerate(rows[1:], start=2):
        if not any(cell.strip() for cell in row):
            continue
        if len(row) <= max(at_category, at_proportion):
            raise DataError(Problem(file=str(path), line=line, message=f"too few values in {row}"))
        category, raw = row[at_category].strip(), row[at_proportion].strip()
        if not category:
            raise DataError(Problem(file=str(path), line=line, message="blank category"))
        if category in proportions:
            raise DataError(Problem(file=str(path), line=line,
                                    message=f"category {category!r} repeats line {lines[category]}"))
        try:
            proportions[category] = float(raw)
        except ValueError:
            raise DataError(Problem(file=str(path), line=line,
                                    message=f"proportion {raw!r} for {category!r} is not a number")) from None
        lines[category] = line
    if not proportions:
        raise DataError(Problem(file=str(path), message="no categories listed"))
    return ReferenceProportions(path=str(path), proportions=proportions, lines=lines)
