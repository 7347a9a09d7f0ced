"""A block's columns other than the items, read in Arrow (engine/other_columns.py, arrow_numpy.py).

References: the whole-file reader's own function for "no answer" cells
(:func:`scalewright.text_cells.clear_missing_texts`, itself checked in tests/test_text_cells.py) and
pyarrow's own conversions (``to_pylist``) for the buffers read by hand.
"""
from __future__ import annotations

import subprocess
import sys

import numpy as np
import pandas as pd
import pyarrow as pa
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.arrow_numpy import integers, string_offsets, validity
from scalewright.engine.other_columns import ArrowColumns, count_missing_cells
from scalewright.text_cells import clear_missing_texts

LISTED = ("NA", "no answer")
CELLS = st.one_of(st.none(), st.sampled_from(["", " ", "\t", "na", " N/A", "NA", "No  Answer", "no answer ",
                                              "day", "night", "3", "4.5", "-1", "x y"]))


@settings(max_examples=80, deadline=None)
@given(st.lists(st.lists(CELLS, min_size=1, max_size=25), min_size=1, max_size=4),
       st.integers(min_value=0, max_value=3), st.sets(st.integers(min_value=0, max_value=3)))
def test_counts_and_columns_equal_the_whole_file_readers(columns, offset, counted):
    n = min(len(values) for values in columns)
    names = [f"c{j}" for j in range(len(columns))]
    # arrays that start mid-buffer, as the columns of a sliced batch do
    arrays = {name: pa.array(["pad"] * offset + values[:n], type=pa.string()).slice(offset)
              for name, values in zip(names, columns, strict=True)}
    skip = names[:1] if len(names) > 1 else []
    count_blank = tuple(name for j, name in enumerate(names) if j in counted)
    frame = pd.DataFrame({name: array.to_pandas() for name, array in arrays.items()})
    cleared, expected = clear_missing_texts(frame, LISTED, skip=skip, count_blank=count_blank)

    found = count_missing_cells(arrays, LISTED, skip=skip, count_blank=count_blank)
    assert found.texts == expected.texts
    assert found.blank == expected.blank
    lazy = ArrowColumns(arrays, LISTED, keep_as_read=skip)
    for name in names:
        pd.testing.assert_series_equal(lazy[name], cleared[name], check_names=False)
    assert list(lazy) == names


@settings(max_examples=60, deadline=None)
@given(st.lists(st.one_of(st.none(), st.integers(min_value=-2**15, max_value=2**15 - 1)), max_size=40),
       st.integers(min_value=0, max_value=9), st.sampled_from([pa.int8(), pa.int16(), pa.int32(), pa.int64()]))
def test_integers_and_validity_read_as_pyarrow_reads_them(values, offset, kind):
    values = [None if v is None else int(np.clip(v, -2 ** (kind.bit_width - 1), 2 ** (kind.bit_width - 1) - 1))
              for v in values]
    array = pa.array([0] * offset + values, type=kind).slice(offset)
    assert validity(array).tolist() == [v is not None for v in array.to_pylist()]
    assert integers(array, fill=-7).tolist() == [-7 if v is None else v for v in array.to_pylist()]


def test_string_offsets_match_pyarrows_values():
    array = pa.array(["ab", None, "", "cde", "f"], type=pa.string()).slice(1)
    offsets = string_offsets(array)
    data = array.buffers()[2].to_pybytes()
    texts = [data[offsets[i]:offsets[i + 1]].decode() for i in range(len(array))]
    assert [t if ok else None for t, ok in zip(texts, validity(array), strict=True)] == array.to_pylist()


def test_a_streamed_reliability_never_imports_pandas(tmp_path):
    # pandas' import is a fifth of a streamed reliability's start: the block route of a summary command
    # without subgroup columns reads the id and other columns in Arrow only
    from .engine_data import SCALES, survey_rows, write_csv

    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES.replace("groups: [shift]", "groups: []"), encoding="utf-8")
    data = write_csv(tmp_path / "survey.csv", survey_rows(300))
    code = ("import sys; from scalewright.cli import main; "
            f"rc = main(['reliability', {str(data)!r}, '-s', {str(scales)!r}, '--engine', 'stream', '--format', 'json', "
            f"'--out', {str(tmp_path / 'out.json')!r}]); "
            "print(rc, 'pandas' in sys.modules)")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.split() == ["0", "False"]
    assert (tmp_path / "out.json").exists()
