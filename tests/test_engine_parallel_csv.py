"""The parallel block reader of the streaming route: blocks cut at line feeds, parsed side by side, in order.

The reference is the whole-file route (``--engine memory``) on the same file, and for the batches
themselves pyarrow's own ``read_csv`` of the whole file.
"""
from __future__ import annotations

from pathlib import Path

import pytest

from scalewright.engine.parallel_csv import can_cut, parallel_batches

from .engine_data import SCALES, survey_rows, write_csv
from .test_engine_stream import both_routes


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    return write_csv(tmp_path / "survey.csv", survey_rows(1500)), scales


@pytest.mark.parametrize("block", [64, 1000, 4096, 1 << 20])
def test_batches_in_order_equal_pyarrow_read_csv(survey, block):
    import pyarrow as pa
    import pyarrow.csv as pacsv

    data, _ = survey
    whole = pacsv.read_csv(data, convert_options=pacsv.ConvertOptions(strings_can_be_null=True))
    names = whole.column_names
    batches = list(parallel_batches(data, names, parse_options=pacsv.ParseOptions(),
                                    convert_options=pacsv.ConvertOptions(column_types=whole.schema,
                                                                         strings_can_be_null=True),
                                    block_bytes=block, workers=2))
    assert pa.Table.from_batches(batches).equals(whole)


@pytest.mark.parametrize("ending", ["crlf", "no-final-newline"])
def test_line_endings_stream_as_whole(survey, ending):
    data, scales = survey
    text = data.read_text(encoding="utf-8")
    text = text.replace("\n", "\r\n") if ending == "crlf" else text.rstrip("\n")
    data.write_bytes(text.encode("utf-8"))
    assert can_cut(data)
    whole, streamed = both_routes("reliability", data, scales, "--by", "shift")
    assert streamed == whole


def test_a_lone_carriage_return_is_left_to_pyarrows_reader(survey):
    data, scales = survey
    data.write_bytes(data.read_bytes().replace(b"\n", b"\r"))
    assert not can_cut(data)
    whole, streamed = both_routes("reliability", data, scales)
    assert streamed == whole
