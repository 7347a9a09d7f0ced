"""Arrow arrays read as numpy through their buffers, without pyarrow's own conversions.

pyarrow imports pandas the first time it converts an array holding nulls to numpy, or a Python number to
an Arrow scalar (``fill_null(array, 0)``, ``greater(array, 0)``); pandas' import costs a quarter of a
second, which the block route of a summary command (``reliability`` and the like) otherwise never pays.
Used by the readers of answer codes (:mod:`scalewright.read_codes`) and the block engine.
"""
from __future__ import annotations

from typing import Any

import numpy as np


def validity(array: Any) -> np.ndarray:
    """Whether each entry of an Arrow array is present (not null), as a boolean vector."""
    n = len(array)
    bitmap = array.buffers()[0]
    if bitmap is None or array.null_count == 0:
        return np.ones(n, dtype=bool)
    bits = np.unpackbits(np.frombuffer(bitmap, dtype=np.uint8), bitorder="little")
    return bits[array.offset: array.offset + n].astype(bool)


def integers(array: Any, *, fill: int) -> np.ndarray:
    """An Arrow integer array as an int64 vector with ``fill`` where it is null."""
    values = np.frombuffer(array.buffers()[1], dtype=array.type.to_pandas_dtype(), count=len(array),
                           offset=array.offset * array.type.bit_width // 8).astype(np.int64)
    if array.null_count:
        values[~validity(array)] = fill
    return values


def string_offsets(array: Any) -> np.ndarray:
    """The offsets of an Arrow string (or large string) array's entries into its data buffer (n + 1, int64)."""
    import pyarrow as pa

    offset_type = np.int64 if pa.types.is_large_string(array.type) else np.int32
    return np.frombuffer(array.buffers()[1], dtype=offset_type, count=len(array) + 1,
                         offset=array.offset * np.dtype(offset_type).itemsize).astype(np.int64)
