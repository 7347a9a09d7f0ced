"""The quick reading route gives exactly what the general route gives, and steps aside when it cannot read a file.

The reference is the project's general route (pandas ``read_csv`` with the pyarrow engine, then per-column
conversion), which ``test_data.py`` checks by hand-keyed cases; here every output of the quick route must
equal it, on data generated in code.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright import data as data_module
from scalewright.answer_codes import MISSING
from scalewright.data import read_responses
from scalewright.errors import DataError, UsageError
from scalewright.read_codes import (
    code_table,
    convert_codes,
    convert_digit_codes,
    fits,
    holds_one_digit_cells,
    one_digit_format,
)
from scalewright.spec import load_spec
from scalewright.spec_model import ResponseFormat

SCALES = """\
version: 1
title: Ward survey
id_column: staff_id
groups: [shift]
response: {min: 1, max: 5, missing_codes: [9, 99, -1]}
scales:
  workload:
    title: Workload strain
    items: [wl1, wl2, wl3]
    reverse: [wl3]
  stay:
    title: Intent to stay
    items: [st1, st2]
    response: {min: 0, max: 6}
"""


def survey_csv(rng: np.random.Generator, n: int, *, bad: bool = False, sep: str = ",", texts: bool = False) -> str:
    """A data file with blanks, 'no answer' codes, a text group, a numeric and an empty column; with ``texts``
    also 'no answer' texts in the items (which send the file down the general route)."""
    rows = []
    for i in range(n):
        cells = [f"p{i:04d}", rng.choice(["day", "night", "", "rotating"]), str(int(rng.integers(20, 65))) if
                 rng.random() > 0.1 else "", "", rng.choice(["True", "False"])]
        for item in range(5):
            high = 5 if item < 3 else 6
            value = str(int(rng.integers(1 if item < 3 else 0, high + 1)))
            roll = rng.random()
            if roll < 0.05:
                value = ""
            elif roll < 0.07:
                value = rng.choice(["NA", "n/a", "#N/A"]) if texts else ""
            elif roll < 0.10 and item < 3:
                value = rng.choice(["9", "99", "-1"])
            elif roll < 0.11 and bad:
                value = rng.choice(["7", "-3", "12"])
            elif roll < 0.13:
                value = f" {value} "  # padded by hand-edited files
            cells.append(value)
        rows.append(sep.join(cells))
    header = sep.join(["staff_id", "shift", "age", "unused", "consent", "wl1", "wl2", "wl3", "st1", "st2"])
    return "\n".join([header, *rows]) + "\n"


def read_both(path, spec, monkeypatch, **options):
    quick = read_responses(path, spec, **options)
    with monkeypatch.context() as patch:
        patch.setattr(data_module, "_read_quickly", lambda *_: None)
        general = read_responses(path, spec, **options)
    return quick, general


def assert_same_responses(quick, general) -> None:
    np.testing.assert_array_equal(quick.items, general.items)
    pd.testing.assert_frame_equal(quick.frame, general.frame)
    pd.testing.assert_series_equal(quick.ids, general.ids)
    np.testing.assert_array_equal(quick.line_numbers, general.line_numbers)
    for field in ("refused_total", "refused_by_column", "missing_code_by_column", "blank_by_column",
                  "texts_by_column", "missing_texts_by_column", "file_columns", "item_names"):
        assert getattr(quick, field) == getattr(general, field), field
    assert [str(p) for p in quick.refused] == [str(p) for p in general.refused]


@pytest.fixture
def spec(write_file):
    return load_spec(write_file("scales.yaml", SCALES))


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_quick_route_equals_the_general_route(write_file, spec, monkeypatch, seed):
    path = write_file("survey.csv", survey_csv(np.random.default_rng(seed), 400))
    assert data_module._read_quickly(path, spec) is not None  # this file does take the quick route
    quick, general = read_both(path, spec, monkeypatch)
    assert_same_responses(quick, general)
    assert quick.missing_code_by_column
    assert quick.blank_by_column


def test_quick_route_equals_the_general_route_on_tab_separated_files(write_file, spec, monkeypatch):
    path = write_file("survey.tsv", survey_csv(np.random.default_rng(7), 200, sep="\t"))
    assert data_module._read_quickly(path, spec) is not None
    assert_same_responses(*read_both(path, spec, monkeypatch))


def test_lenient_reading_counts_the_same_refused_values(write_file, spec, monkeypatch):
    path = write_file("survey.csv", survey_csv(np.random.default_rng(4), 500, bad=True))
    quick, general = read_both(path, spec, monkeypatch, lenient=True)
    assert quick.refused_total > 0
    assert_same_responses(quick, general)


def test_refused_values_give_the_same_error_by_either_route(write_file, spec, monkeypatch):
    path = write_file("survey.csv", survey_csv(np.random.default_rng(5), 300, bad=True))
    with pytest.raises(DataError) as quick:
        read_responses(path, spec)
    monkeypatch.setattr(data_module, "_read_quickly", lambda *_: None)
    with pytest.raises(DataError) as general:
        read_responses(path, spec)
    assert [str(p) for p in quick.value.problems] == [str(p) for p in general.value.problems]
    assert "row " in str(quick.value.problems[0])
    assert "outside the answer range" in str(quick.value.problems[0])


@pytest.mark.parametrize("cell", ["Agree", "2.5", "40000", "3;4"])
def test_the_quick_route_steps_aside_for_what_it_cannot_read(write_file, spec, cell):
    text = survey_csv(np.random.default_rng(6), 50).splitlines()
    first = text[1].split(",")
    first[5] = cell
    text[1] = ",".join(first)
    path = write_file("survey.csv", "\n".join(text) + "\n")
    assert data_module._read_quickly(path, spec) is None


def test_undecodable_bytes_still_get_the_general_routes_message(write_file, spec):
    body = survey_csv(np.random.default_rng(8), 30).encode("utf-8").replace(b"night", b"n\xe9ight", 1)
    path = write_file("latin.csv", body)
    assert data_module._read_quickly(path, spec) is None
    with pytest.raises(DataError, match="not UTF-8"):
        read_responses(path, spec)


def test_code_table_marks_answers_no_answer_codes_and_other_numbers():
    fmt = ResponseFormat(min=-2, max=2, missing_codes=(9, -99, 8.5))
    table = code_table(fmt)
    as_bits = np.array([-2, -1, 0, 2, 9, -99, 3, 8], dtype=np.int16).view(np.uint16)
    # codes are offsets from min (hand-worked: -2 -> 0 ... 2 -> 4); 253 = "no answer" code, 254 = refused
    assert table[as_bits].tolist() == [0, 1, 2, 4, 253, 253, 254, 254]
    assert fits(fmt)
    assert not fits(ResponseFormat(min=0, max=1000))


def test_convert_codes_counts_blanks_codes_and_refusals():
    import pyarrow as pa

    fmt = ResponseFormat(min=1, max=5, missing_codes=(9,))
    column = pa.chunked_array([pa.array([1, None, 9, 5], pa.int16()), pa.array([7, 3, None], pa.int16())])
    out = np.empty(7, dtype=np.uint8)
    converted = convert_codes(column, fmt, out=out)
    assert out.tolist() == [0, MISSING, MISSING, 4, MISSING, 2, MISSING]
    assert (converted.blanks, converted.missing_codes) == (2, 1)
    assert np.flatnonzero(converted.bad).tolist() == [4]
    assert converted.raw[4] == 7


@settings(max_examples=80, deadline=None)
@given(low=st.integers(-300, 300), span=st.sampled_from([1, 4, 6, 10, 250]),
       values=st.lists(st.one_of(st.none(), st.integers(-(2**15), 2**15 - 1), st.integers(-310, 560)), max_size=40),
       offset=st.integers(0, 3))
def test_convert_codes_reads_every_16_bit_number_as_the_rules_say(low, span, values, offset):
    # Reference: the rules written out value by value in plain Python (an answer low..high is its offset
    # from low; a blank, a "no answer" code or any other number is missing; only the last is refused; a
    # "no answer" code inside the range, which the scale file refuses, is read as "no answer")
    import pyarrow as pa

    fmt = ResponseFormat(min=low, max=low + span, missing_codes=(9, -99))
    column = pa.array([0] * offset + values, pa.int16()).slice(offset)  # starts mid-buffer
    out = np.empty(len(values), dtype=np.uint8)
    converted = convert_codes(column, fmt, out=out)
    answer = [v is not None and low <= v <= low + span and v not in (9, -99) for v in values]
    code = [v is not None and not a and v in (9, -99) for v, a in zip(values, answer, strict=True)]
    refused = [v is not None and not a and not c for v, a, c in zip(values, answer, code, strict=True)]
    assert out.tolist() == [v - low if a else MISSING for v, a in zip(values, answer, strict=True)]
    assert converted.blanks == sum(v is None for v in values)
    assert converted.missing_codes == sum(code)
    assert np.flatnonzero(converted.bad).tolist() == [i for i, r in enumerate(refused) if r]


@settings(max_examples=80, deadline=None)
@given(low=st.integers(0, 9), span=st.integers(1, 9), missing=st.lists(st.integers(0, 9), max_size=3),
       values=st.lists(st.one_of(st.none(), st.integers(0, 9)), max_size=40), offset=st.integers(0, 3))
def test_one_digit_cells_read_as_their_16_bit_parse(low, span, missing, values, offset):
    # Reference: convert_codes on the same numbers as 16-bit integers (itself checked value by value above):
    # a one-digit cell is its own number, so both must give the same codes, counts, refusals and raw numbers
    import pyarrow as pa

    fmt = ResponseFormat(min=low, max=min(low + span, 9), missing_codes=tuple(missing))
    as_text = pa.array([b"0"] * offset + [None if v is None else str(v).encode() for v in values],
                       pa.binary()).slice(offset)
    as_numbers = pa.array([0] * offset + values, pa.int16()).slice(offset)
    assert holds_one_digit_cells(as_text)
    out_text, out_numbers = np.empty(len(values), dtype=np.uint8), np.empty(len(values), dtype=np.uint8)
    text = convert_digit_codes(as_text, fmt, out=out_text)
    numbers = convert_codes(as_numbers, fmt, out=out_numbers)
    assert out_text.tolist() == out_numbers.tolist()
    assert (text.blanks, text.missing_codes) == (numbers.blanks, numbers.missing_codes)
    refused = np.flatnonzero(numbers.bad).tolist()
    assert np.flatnonzero(text.bad).tolist() == refused
    assert text.raw[refused].tolist() == numbers.raw[refused].tolist()


@pytest.mark.parametrize(("cells", "holds"), [
    ([b"1", None, b"5", b"0", b"9"], True), ([None, None], True), ([], True),
    ([b"1", b"10"], False), ([b"1", b" 3"], False), ([b"-1"], False), ([b"a"], False), ([b" "], False),
    ([b"3", b"\xc3"], False), ([b"/"], False), ([b":"], False)])
def test_only_one_digit_cells_take_the_digit_route(cells, holds):
    import pyarrow as pa

    column = pa.array([b"22", *cells, b"x"], pa.binary())
    assert holds_one_digit_cells(column.slice(1, len(cells))) is holds  # the cells beside the slice do not count
    assert one_digit_format(ResponseFormat(min=1, max=5, missing_codes=(9, 99)))
    assert one_digit_format(ResponseFormat(min=0, max=9))
    assert not one_digit_format(ResponseFormat(min=0, max=10))
    assert not one_digit_format(ResponseFormat(min=-2, max=2))


def test_the_digit_conversion_refuses_cells_the_check_refuses():
    import pyarrow as pa

    out = np.empty(2, dtype=np.uint8)
    with pytest.raises(UsageError, match="one byte each"):
        convert_digit_codes(pa.array([b"1", b"10"], pa.binary()), ResponseFormat(min=1, max=5), out=out)


def test_windows_line_ends_quoted_numbers_and_an_empty_item_read_alike(write_file, spec, monkeypatch):
    lines = survey_csv(np.random.default_rng(10), 120).splitlines()
    rows = [line.split(",") for line in lines]
    for row in rows[1:]:
        row[6] = ""                                   # wl2 never answered
        row[8] = f'"{row[8]}"' if row[8] else row[8]  # st1 quoted, as some exports write numbers
    path = write_file("survey.csv", "\r\n".join(",".join(row) for row in rows) + "\r\n")
    assert data_module._read_quickly(path, spec) is not None
    quick, general = read_both(path, spec, monkeypatch)
    assert_same_responses(quick, general)
    assert quick.blank_by_column["wl2"] == 120


SMALL_SCALES = """\
version: 1
title: Small
response: {min: 1, max: 5}
scales:
  mood:
    title: Mood
    items: [a, b, c]
"""


@pytest.fixture
def small_spec(write_file):
    return load_spec(write_file("small.yaml", SMALL_SCALES))


def test_a_header_name_with_a_line_break_is_read_by_both_routes(write_file, small_spec, monkeypatch):
    path = write_file("multi.csv", '"Comment\nfree text",a,b,c\nx,1,2,3\ny,2,3,4\nz,3,3,5\n')
    assert data_module._read_quickly(path, small_spec) is not None
    quick, general = read_both(path, small_spec, monkeypatch)
    assert_same_responses(quick, general)
    assert quick.file_columns == ("Comment\nfree text", "a", "b", "c")


@pytest.mark.parametrize(("body", "message"), [
    ("a,x\n", "header but no rows"),
    ("a,x\n1,2\n3\n", "cannot parse as delimited text"),
    (b"a,x\n1,caf\xe9\n", "not UTF-8"),
])
def test_a_broken_file_without_a_needed_column_gets_the_same_message_by_either_route(write_file, body, message):
    spec = load_spec(write_file("two.yaml", SMALL_SCALES.replace("[a, b, c]", "[a, b]")))
    path = write_file("broken.csv", body)
    with pytest.raises(DataError, match=message):
        read_responses(path, spec)


def test_files_with_lone_carriage_returns_are_read(write_file, small_spec, monkeypatch):
    path = write_file("cr.csv", "id,a,b,c\rr1,1,2,3\rr2,2,3,4\rr3,5,4,3\r")
    assert data_module._read_quickly(path, small_spec) is not None
    quick, general = read_both(path, small_spec, monkeypatch)
    assert_same_responses(quick, general)
    np.testing.assert_array_equal(quick.items, [[1, 2, 3], [2, 3, 4], [5, 4, 3]])


def test_rows_are_numbered_as_a_spreadsheet_shows_them_after_empty_lines(write_file, small_spec, monkeypatch):
    # rows by hand: header 1, then 2; an empty line is row 3; row 4 holds a bare-delimiter row (kept);
    # row 5 holds the refused 7; a quoted line break stays within row 6
    path = write_file("gaps.csv", 'note,a,b,c\nx,1,2,3\n\n,,,\ny,7,2,3\n"two\nlines",2,2,2\n\n')
    assert data_module._read_quickly(path, small_spec) is not None
    quick, general = read_both(path, small_spec, monkeypatch, lenient=True)
    assert_same_responses(quick, general)
    assert list(quick.line_numbers) == [2, 4, 5, 6]
    assert quick.refused[0].where == "row 5, column a"


@pytest.mark.parametrize("answers", ["codes", "texts"])
def test_comments_with_line_breaks_in_a_file_of_many_blocks(write_file, monkeypatch, answers):
    # a file longer than one parse block whose quoted comments hold line breaks; before the quote-aware
    # parse such a file failed with "Expected 5 columns, got 4" wherever a comment crossed a block boundary
    labels = {1: "never", 2: "rarely", 3: "sometimes", 4: "often", 5: "always"}
    spec = load_spec(write_file("s.yaml", SMALL_SCALES.replace("scales:", "id_column: id\nscales:").replace(
        "response: {min: 1, max: 5}", "response: {min: 1, max: 5, labels: {1: never, 2: rarely, 3: sometimes, "
                                      "4: often, 5: always}}")))
    rng = np.random.default_rng(11)
    lines = ["id,comment,a,b,c"]
    for i in range(40_000):
        values = rng.integers(1, 6, 3)
        cells = [labels[v] for v in values] if answers == "texts" else [str(v) for v in values]
        lines.append(f'r{i},"first line, {i}\nsecond line",' + ",".join(cells))
    path = write_file("comments.csv", "\n".join(lines) + "\n")
    assert path.stat().st_size > 2**20
    quick, general = read_both(path, spec, monkeypatch)
    assert_same_responses(quick, general)
    assert quick.n == 40_000
    assert quick.frame["comment"].iloc[7] == "first line, 7\nsecond line"


def test_an_empty_line_does_not_turn_whole_numbers_into_decimals(write_file, monkeypatch):
    # found by fuzzing: the general route kept the empty line as a row of blanks while numbering, which made
    # the group column 4.0 and 1.0, so the level 1 no longer matched '1'
    spec = load_spec(write_file("g.yaml", "version: 1\ngroups:\n  - grp: [1, 2, 3]\nresponse: {min: 1, max: 7}\n"
                                          "scales:\n  s1:\n    items: [a0, a1]\n"))
    path = write_file("g.csv", "grp;a0;a1\n2;;\n\n1;;6\n")
    quick, general = read_both(path, spec, monkeypatch)
    assert_same_responses(quick, general)
    assert list(general.frame["grp"].astype(str)) == ["2", "1"]
    assert list(general.line_numbers) == [2, 4]


def test_a_file_of_items_only_reads_alike(write_file, small_spec, monkeypatch):
    path = write_file("items.csv", "a,b,c\n1,2,3\n4,5,1\n")
    assert data_module._read_quickly(path, small_spec) is not None
    assert_same_responses(*read_both(path, small_spec, monkeypatch))


def test_no_answer_texts_in_items_are_counted_alike_by_either_route(write_file, spec, monkeypatch):
    path = write_file("survey.csv", survey_csv(np.random.default_rng(12), 300, texts=True))
    assert data_module._read_quickly(path, spec) is None  # texts in the items: the general route reads them
    quick, general = read_both(path, spec, monkeypatch)
    assert_same_responses(quick, general)
    # 'n/a' is the listed 'N/A' (matched ignoring case, as labels are): counted under the listed text
    assert set(general.missing_texts_by_column["wl1"]) <= {"NA", "N/A", "#N/A"}
    assert sum(sum(c.values()) for c in general.missing_texts_by_column.values()) > 0
