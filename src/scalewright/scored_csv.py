"""The scored file's CSV text, byte for byte as ``pandas.DataFrame.to_csv(index=False, lineterminator="\\n")``.

Hand-written because pandas turns every float into text through Python (two thirds of `score`'s time on
a file of a million rows), while pyarrow's cast to text writes the same shortest digits in C++ for every
magnitude a score takes: from 1e-4 to 1e9 the two differ only in that pyarrow writes a whole number
without its ".0" (``tests/test_scored_csv.py`` holds this, and the whole text, to pandas'). So floats of
that range are cast by pyarrow (with ".0" put back on whole numbers), any other float keeps Python's own
text, and a frame this module cannot vouch for (a text cell or name that needs quoting, a missing text,
a column of another type) is written by pandas itself.
"""
from __future__ import annotations

from typing import Any

import numpy as np

#: floats whose magnitude lies in [low, high) (or is 0) are written by pyarrow; others by Python's repr
ARROW_FLOAT_RANGE = (1e-4, 1e9)
#: rows turned into text at a time when a whole frame is written (the text of a block, not of the file)
ROWS_AT_A_TIME = 65_536
#: characters that make the csv module quote a cell (with lineterminator "\n")
_NEEDS_QUOTES = (",", '"', "\n", "\r")


def scored_csv(frame: Any, *, header: bool = True) -> str:
    """``frame.to_csv(index=False, header=header, lineterminator="\\n")``, written quickly when it can be."""
    columns = _cells_of(frame) if len(frame.columns) else None
    if columns is None or (header and any(_needs_quotes(str(name)) for name in frame.columns)):
        return frame.to_csv(index=False, header=header, lineterminator="\n")
    import pyarrow as pa
    import pyarrow.compute as pc

    lines = []
    if header:
        lines.append(",".join(str(name) for name in frame.columns) + "\n")
    if len(frame):
        # 64-bit offsets: the text of a whole file can pass 2 GiB
        comma, line_feed, nothing = (pa.scalar(text, pa.large_string()) for text in (",", "\n", ""))
        # a missing score (null) is written as an empty cell, as pandas writes NaN
        rows = pc.binary_join_element_wise(*columns, comma, null_handling="replace", null_replacement="")
        rows = pc.binary_join_element_wise(rows, nothing, line_feed)  # each row ends in a line feed
        offsets = np.frombuffer(rows.buffers()[1], dtype=np.int64, count=len(rows) + 1, offset=rows.offset * 8)
        text = rows.buffers()[2][offsets[0]:offsets[-1]].to_pybytes()  # the rows' bytes, copied once
        lines.append(text.decode("utf-8"))
    return "".join(lines)


def write_scored_csv(frame: Any, path: Any) -> None:
    """Write ``frame`` to ``path`` as :func:`scored_csv` gives it, :data:`ROWS_AT_A_TIME` rows at a time."""
    with open(path, "w", encoding="utf-8", newline="") as handle:
        handle.write(scored_csv(frame.iloc[:ROWS_AT_A_TIME]))
        for start in range(ROWS_AT_A_TIME, len(frame), ROWS_AT_A_TIME):
            handle.write(scored_csv(frame.iloc[start:start + ROWS_AT_A_TIME], header=False))


def _needs_quotes(text: str) -> bool:
    return any(mark in text for mark in _NEEDS_QUOTES)


def _cells_of(frame: Any) -> list[Any] | None:
    """Each column as a pyarrow text array (large_string: 64-bit offsets, as the text of a whole file can
    pass 2 GiB) as pandas would write its cells, null for an empty cell; None when a column is of a kind
    this module leaves to pandas."""
    import pandas as pd
    import pyarrow as pa
    import pyarrow.compute as pc

    cells = []
    for name in frame.columns:
        column = frame[name]
        if pd.api.types.is_string_dtype(column.dtype):  # texts (pandas' own text type or Python strings)
            if column.isna().any():
                return None  # a missing text: pandas writes it
            try:
                text = pa.array(column, type=pa.large_string())
            except (pa.ArrowTypeError, pa.ArrowInvalid):
                return None  # objects other than texts: pandas writes their str()
            if len(text) and any(pc.any(pc.match_substring(text, mark)).as_py() for mark in _NEEDS_QUOTES):
                return None
            cells.append(text)
            continue
        if not isinstance(column.dtype, np.dtype):
            return None  # pandas' own column types (nullable integers, categories...): pandas writes them
        kind = column.dtype.kind
        if kind == "f" and column.dtype == np.float64:
            values = column.to_numpy()
            if np.isinf(values).any():
                return None  # pandas writes "inf"; no score is infinite
            cells.append(_float_cells(values))
        elif kind in "iu":
            cells.append(pc.cast(pa.array(column.to_numpy()), pa.large_string()))
        else:
            return None
    return cells


def _float_cells(values: np.ndarray) -> Any:
    """A float column's cells: null (empty) for NaN, Python's shortest text otherwise (see the module's note)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    finite = np.isfinite(values)
    magnitude = np.abs(np.where(finite, values, 0.0))
    by_arrow = finite & ((magnitude == 0) | ((magnitude >= ARROW_FLOAT_RANGE[0]) & (magnitude < ARROW_FLOAT_RANGE[1])))
    text = pc.cast(pa.array(values, mask=~finite), pa.large_string())
    whole = by_arrow & (values == np.floor(np.where(finite, values, 0.0)))
    if whole.any():  # pyarrow writes 4.0 as "4"; pandas (Python) as "4.0"
        suffix = pa.scalar(".0", pa.large_string())
        text = pc.if_else(pa.array(whole), pc.binary_join_element_wise(text, suffix, pa.scalar("", pa.large_string())),
                          text)
    others = np.flatnonzero(finite & ~by_arrow)
    if others.size:  # very small or very large numbers (a z score next to 0): Python's own text
        patched = text.to_pylist()
        for position in others.tolist():
            patched[position] = repr(float(values[position]))
        text = pa.array(patched, type=pa.large_string())
    return text
