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


def test_quoted_names_and_values_are_cut_and_parsed_side_by_side(survey, monkeypatch):
    # every cell quoted, as pyarrow's own CSV writer writes a file: the quick reader must still take it
    import scalewright.engine.parallel_csv as parallel_csv

    data, scales = survey
    lines = data.read_text(encoding="utf-8").splitlines()
    quoted = ['"' + '","'.join(line.split(",")) + '"' for line in lines]
    data.write_text("\n".join(quoted) + "\n", encoding="utf-8")
    assert can_cut(data)
    taken = []
    original = parallel_csv.ParallelBlocks.in_order
    monkeypatch.setattr(parallel_csv.ParallelBlocks, "in_order",
                        lambda *a, **k: taken.append(1) or original(*a, **k))
    whole, streamed = both_routes("reliability", data, scales, "--by", "shift")
    assert taken
    assert streamed == whole


def test_a_line_break_inside_a_quoted_name_is_not_cut(survey):
    data, scales = survey
    text = data.read_text(encoding="utf-8")
    data.write_text('"staff\nid"' + text[len("staff_id"):], encoding="utf-8")
    assert not can_cut(data)
    data.write_text('"staff ""first"" id"' + text[len("staff_id"):], encoding="utf-8")
    assert can_cut(data)  # doubled quotes inside a quoted name: the header still ends at the first line feed
