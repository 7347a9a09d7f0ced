"""64-bit hashes of a block's ids read as text, straight from Arrow's buffers (for the duplicate-id check).

The whole-file reader compares ids as text with surrounding white space stripped (``str.strip``); here
the same stripping is done by Arrow (with Python's own set of white-space characters) and each id's
bytes are hashed in numpy: a polynomial over its bytes modulo 2^64 followed by the splitmix64 finaliser
(Steele, Lea & Flood 2014) so that the top bits, which pick the spill bucket, are well mixed. Equal ids
always get equal hashes; two different ids that share one are handed to the whole-file reader, which
compares the texts (see :mod:`scalewright.engine.id_spill`).

Hand-written because neither pyarrow nor numpy offers a vectorised hash of strings, and pandas' hashes
Python objects one by one (a third of a streamed block's conversion time).
"""
from __future__ import annotations

from typing import Any

import numpy as np

from .arrow_numpy import string_offsets, validity

#: the characters ``str.strip()`` removes (Python's white space, ``str.isspace``), for Arrow's trim; written
#: out because finding them among every code point took 0.07 - 0.3 s at each start
#: (tests/test_engine_id_spill.py checks the list against ``str.isspace``)
PY_WHITESPACE = ("\t\n\x0b\x0c\r\x1c\x1d\x1e\x1f \x85\xa0\u1680\u2000\u2001\u2002\u2003\u2004\u2005\u2006"
                 "\u2007\u2008\u2009\u200a\u2028\u2029\u202f\u205f\u3000")
_BASE = np.uint64(0x100000001B3)


def _powers(length: int) -> np.ndarray:
    powers = np.empty(max(length, 1), dtype=np.uint64)
    powers[0] = 1
    with np.errstate(over="ignore"):
        for shift in range(1, length):
            powers[shift] = powers[shift - 1] * _BASE
    return powers


def _finalise(h: np.ndarray) -> np.ndarray:
    with np.errstate(over="ignore"):
        h = h ^ (h >> np.uint64(30))
        h = h * np.uint64(0xBF58476D1CE4E5B9)
        h = h ^ (h >> np.uint64(27))
        h = h * np.uint64(0x94D049BB133111EB)
        return h ^ (h >> np.uint64(31))


def text_id_hashes(column: Any) -> tuple[np.ndarray, np.ndarray] | None:
    """(hashes of the non-empty ids, mask of the empty ones) of an Arrow text column, or None for a column of
    another type (numbers: the caller takes the general route, which writes them as the whole-file reader does)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    array = column.combine_chunks() if hasattr(column, "combine_chunks") else column
    if not pa.types.is_string(array.type) and not pa.types.is_large_string(array.type):
        return None
    trimmed = pc.utf8_trim(array, characters=PY_WHITESPACE)
    # read through the buffers (engine/arrow_numpy.py): pyarrow's own conversions would import pandas
    offsets = string_offsets(trimmed)
    sizes = np.diff(offsets)
    empty = ~validity(trimmed) | (sizes == 0)
    kept = ~empty
    if not kept.any():
        return np.zeros(0, dtype=np.uint64), empty
    text = np.frombuffer(trimmed.buffers()[2], dtype=np.uint8)
    if kept.all():
        data = text[offsets[0]: offsets[-1]].astype(np.uint64)
        starts = offsets[:-1] - offsets[0]
    else:  # the kept ids' bytes gathered end to end (a null entry may still span bytes)
        sizes = sizes[kept]
        starts = np.cumsum(sizes) - sizes
        data = text[np.repeat(offsets[:-1][kept] - starts, sizes) + np.arange(int(sizes.sum()))].astype(np.uint64)
    # each byte weighted by BASE^(bytes after it in its id), the weighted bytes summed per id (mod 2^64)
    ends = np.repeat(starts + sizes, sizes)
    from_end = ends - 1 - np.arange(data.size)
    with np.errstate(over="ignore"):
        terms = (data + np.uint64(1)) * _powers(int(sizes.max()))[from_end]
        sums = np.add.reduceat(terms, starts)
        return _finalise(sums ^ (sizes.astype(np.uint64) * np.uint64(0x9E3779B97F4A7C15))), empty
