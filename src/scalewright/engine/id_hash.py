"""64-bit hashes of a block's ids read as text, straight from Arrow's buffers (for the duplicate-id check).

The whole-file reader compares ids as text with surrounding white space stripped (``str.strip``); here
the same stripping is done by Arrow (with Python's own set of white-space characters) and each id's
bytes are hashed in numpy: its bytes, zero-padded to whole 8-byte words, each word times its own odd
constant, summed modulo 2^64 with the length mixed in, then the splitmix64 finaliser (Steele, Lea &
Flood 2014) so that the top bits, which pick the spill bucket, are well mixed. A padding word adds
nothing, so an id's hash depends on its own bytes only, whatever the longest id of its block. Equal ids
always get equal hashes; two different ids that share one are handed to the whole-file reader, which
compares the texts (see :mod:`scalewright.engine.id_spill`).

Hand-written because neither pyarrow nor numpy offers a vectorised hash of strings, and pandas' hashes
Python objects one by one (a third of a streamed block's conversion time).
"""
from __future__ import annotations

from typing import Any

import numpy as np

from ..arrow_numpy import string_offsets, validity

#: the characters ``str.strip()`` removes (Python's white space, ``str.isspace``), for Arrow's trim; written
#: out because finding them among every code point took 0.07 - 0.3 s at each start
#: (tests/test_engine_id_spill.py checks the list against ``str.isspace``)
PY_WHITESPACE = ("\t\n\x0b\x0c\r\x1c\x1d\x1e\x1f \x85\xa0\u1680\u2000\u2001\u2002\u2003\u2004\u2005\u2006"
                 "\u2007\u2008\u2009\u200a\u2028\u2029\u202f\u205f\u3000")
_GOLDEN = 0x9E3779B97F4A7C15


def _word_weights(words: int) -> np.ndarray:
    """An odd 64-bit constant per word position (odd: a multiplication modulo 2^64 that loses nothing)."""
    return np.array([((position + 1) * _GOLDEN) % 2**64 | 1 for position in range(words)], dtype=np.uint64)


def splitmix64(h: np.ndarray) -> np.ndarray:
    """The splitmix64 finaliser of 64-bit values (Steele, Lea & Flood 2014): every output bit depends on every input bit."""
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
    # read through the buffers (arrow_numpy.py): pyarrow's own conversions would import pandas
    offsets = string_offsets(trimmed)
    sizes = np.diff(offsets)
    empty = ~validity(trimmed) | (sizes == 0)
    kept = ~empty
    if not kept.any():
        return np.zeros(0, dtype=np.uint64), empty
    text = np.frombuffer(trimmed.buffers()[2], dtype=np.uint8)
    sizes = sizes[kept]
    width = 8 * -(-int(sizes.max()) // 8)
    # each kept id's bytes, from its start, as whole words: a gather of width bytes per id, the bytes past
    # its end zeroed (the text is padded so the last id's window stays inside it)
    padded = np.concatenate([text[offsets[0]: offsets[-1]], np.zeros(width, dtype=np.uint8)])
    window = padded[(offsets[:-1][kept] - offsets[0])[:, None] + np.arange(width)]
    window[np.arange(width) >= sizes[:, None]] = 0
    words = window.view("<u8")
    with np.errstate(over="ignore"):
        sums = (words * _word_weights(words.shape[1])).sum(axis=1, dtype=np.uint64)
        return splitmix64(sums ^ (sizes.astype(np.uint64) * np.uint64(_GOLDEN))), empty
