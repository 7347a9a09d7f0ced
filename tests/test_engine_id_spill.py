"""The duplicate-id check of the streaming route: hashes spilled to bucket files, checked a bucket at a time.

The reference is a plain Python set of the same hashes (the definition of "some value came twice").
"""
from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.engine.id_spill import BUCKETS, IdHashSpill


@settings(max_examples=40, deadline=None)
@given(st.lists(st.lists(st.integers(min_value=0, max_value=2**64 - 1), max_size=40), max_size=8),
       st.integers(min_value=1, max_value=50))
def test_finds_a_repeat_exactly_when_a_set_would(blocks, buffer):
    everything = [value for block in blocks for value in block]
    expected = len(set(everything)) < len(everything)  # reference: Python's set
    with IdHashSpill(buffer_hashes=buffer) as spill:
        for block in blocks:
            spill.add(np.array(block, dtype=np.uint64))
        assert spill.has_duplicates() == expected
        assert spill.count == len(everything)


def test_spilled_buckets_hold_every_hash_and_are_removed(tmp_path):
    rng = np.random.default_rng(5)
    hashes = rng.integers(0, 2**63, size=50_000, dtype=np.int64).astype(np.uint64) * np.uint64(2)
    with IdHashSpill(tmp_path, buffer_hashes=4096) as spill:
        for block in np.array_split(hashes, 37):
            spill.add(block)
        assert spill.has_duplicates() == (np.unique(hashes).size < hashes.size)  # reference: numpy's unique
        folders = list(tmp_path.iterdir())
        assert len(folders) == 1
        held = np.concatenate([np.fromfile(p, dtype=np.uint64) for p in folders[0].iterdir()])
        assert np.array_equal(np.sort(held), np.sort(hashes))  # the check wrote out what it still held
        assert len(list(folders[0].iterdir())) <= BUCKETS
        spill.add(hashes[12_345:12_346])  # one repeat, far from the first
        assert spill.has_duplicates()
    assert list(tmp_path.iterdir()) == []


@settings(max_examples=60, deadline=None)
@given(st.lists(st.one_of(st.none(), st.text(alphabet=st.sampled_from(["a", "b", "é", " ", "\t", "\u3000", "\x1c",
                                                                          "7", "\u2028"]), max_size=6)),
                max_size=30), st.integers(min_value=0, max_value=5))
def test_text_id_hashes_agree_with_python_strip(ids, offset):
    """Two ids hash alike exactly when Python's ``str.strip`` makes them equal (the whole-file reader's rule);
    empty means missing or only white space. Reference: Python's own str.strip."""
    import pyarrow as pa

    from scalewright.engine.id_hash import text_id_hashes

    column = pa.array(["pad"] * offset + ids, type=pa.string()).slice(offset)  # an array that starts mid-buffer
    hashes, empty = text_id_hashes(column)
    expected_empty = [value is None or value.strip() == "" for value in ids]
    assert empty.tolist() == expected_empty
    kept = [value.strip() for value, gone in zip(ids, expected_empty, strict=True) if not gone]
    assert len(hashes) == len(kept)
    for i in range(len(kept)):
        for j in range(len(kept)):
            assert (hashes[i] == hashes[j]) == (kept[i] == kept[j])
    # the kept ids hash as they would in a column holding only them (the bytes of ids between missing or
    # blank ones are gathered end to end)
    if kept:
        alone, _ = text_id_hashes(pa.array(kept, type=pa.string()))
        assert hashes.tolist() == alone.tolist()


def test_the_written_out_white_space_is_pythons():
    # Reference: Python's own str.isspace over every code point (what str.strip removes)
    import sys

    from scalewright.engine.id_hash import PY_WHITESPACE

    assert PY_WHITESPACE == "".join(chr(c) for c in range(sys.maxunicode + 1) if chr(c).isspace())
