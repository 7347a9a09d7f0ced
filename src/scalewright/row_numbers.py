"""Row numbers as a person sees a delimited file in a spreadsheet, where an empty line is a row too.

The parser skips empty lines, so without a correction every row below one would be named a row too
early in messages (and in the ids of files without an id column).
"""
from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

FIRST_DATA_ROW = 2  # below the header


def empty_lines(path: Path, sep: str, all_blank: np.ndarray) -> np.ndarray | None:
    """Which records of the file are empty lines, or None if that cannot be told record by record.

    ``all_blank`` marks the records the parser (keeping empty lines) gave no value at all. Only those can
    be empty lines, but a line of bare delimiters looks the same once parsed. So only a file with such
    records is read once more, as text, to tell the two apart.
    """
    if not all_blank.any():
        return np.zeros(all_blank.size, dtype=bool)
    with open(path, encoding="utf-8-sig", errors="replace", newline="") as handle:
        reader = csv.reader(handle, delimiter=sep)
        next(reader, None)
        empty = np.fromiter((not record for record in reader), dtype=bool)
    if empty.size != all_blank.size or np.any(empty & ~all_blank):
        return None  # the two parsers split the file differently
    return empty


def numbers_of_kept_rows(empty: np.ndarray) -> np.ndarray:
    """Spreadsheet row numbers of the records that are not empty lines."""
    return np.flatnonzero(~empty) + FIRST_DATA_ROW
