"""Reading data files: formats, answer texts, missing codes, and every kind of bad data refused by place."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright.cli import main
from scalewright.data import read_responses
from scalewright.data_file import read_table, sniff_delimiter
from scalewright.errors import DataError
from scalewright.spec import load_spec

from .conftest import BASIC_DATA, BASIC_SCALES, folder_fingerprint

NAN = np.nan
# the basic data set keyed by hand (common practice, no source): texts -> codes, 9 -> missing, blanks missing
EXPECTED_ITEMS = np.array([
    [1, 2, 5, 7, 6],
    [4, 1, NAN, 1, 2],
    [5, 5, 1, NAN, 3],
    [4, NAN, NAN, 4, 4],
])


@pytest.fixture
def spec(write_file):
    return load_spec(write_file("scales.yaml", BASIC_SCALES))


def test_csv_with_texts_missing_codes_and_blanks(write_file, spec):
    responses = read_responses(write_file("d.csv", BASIC_DATA), spec)
    np.testing.assert_array_equal(responses.items, EXPECTED_ITEMS)
    assert list(responses.ids) == ["s01", "s02", "s03", "s04"]
    assert responses.missing_code_by_column == {"wl3": 1}
    assert responses.texts_by_column == {"wl1": 1, "wl2": 1}
    assert list(responses.column("shift")) == ["day", "night", "day", "night"]
    assert list(responses.line_numbers) == [2, 3, 4, 5]


@pytest.mark.parametrize("delimiter", [",", ";", "\t"])
def test_delimiters_are_sniffed(write_file, spec, delimiter):
    text = BASIC_DATA.replace(",", delimiter)
    responses = read_responses(write_file("d.csv", text), spec)
    np.testing.assert_array_equal(responses.items, EXPECTED_ITEMS)


def test_tsv_extension_and_byte_order_mark(write_file, spec):
    tsv = write_file("d.tsv", BASIC_DATA.replace(",", "\t"))
    np.testing.assert_array_equal(read_responses(tsv, spec).items, EXPECTED_ITEMS)
    bom = write_file("bom.csv", b"\xef\xbb\xbf" + BASIC_DATA.encode("utf-8"))
    responses = read_responses(bom, spec)
    assert list(responses.ids) == ["s01", "s02", "s03", "s04"]  # the BOM is not part of the first column name


def test_sniffing_ignores_delimiters_inside_quotes():
    assert sniff_delimiter('"a;b;c",d,e') == ","
    assert sniff_delimiter("a;b;c") == ";"


def frame_of_basic_data() -> pd.DataFrame:
    import io

    return pd.read_csv(io.StringIO(BASIC_DATA), dtype=str, keep_default_na=False).replace("", None)


def test_xlsx_and_parquet(tmp_path, spec):
    frame = frame_of_basic_data()
    frame.to_excel(tmp_path / "d.xlsx", index=False)
    frame.to_parquet(tmp_path / "d.parquet", index=False)
    np.testing.assert_array_equal(read_responses(tmp_path / "d.xlsx", spec).items, EXPECTED_ITEMS)
    parquet = read_responses(tmp_path / "d.parquet", spec)
    np.testing.assert_array_equal(parquet.items, EXPECTED_ITEMS)
    assert parquet.line_numbers[0] == 1  # Parquet has no header row


def test_numeric_xlsx_columns(tmp_path, spec):
    frame = pd.DataFrame({"staff_id": [1, 2], "shift": ["day", "day"], "wl1": [1, 2], "wl2": [3.0, None],
                          "wl3": [9, 5], "st1": [7, 1], "st2": [1, 2]})
    frame.to_excel(tmp_path / "n.xlsx", index=False)
    responses = read_responses(tmp_path / "n.xlsx", spec)
    np.testing.assert_array_equal(responses.items, [[1, 3, NAN, 7, 1], [2, NAN, 5, 1, 2]])
    assert list(responses.ids) == ["1", "2"]


def test_out_of_range_values_are_refused_with_row_and_column(write_file, tmp_path, spec):
    path = write_file("d.csv", BASIC_DATA.replace("s03,day,5,5,1", "s03,day,6,5,1").replace("s04,night,4", "s04,night,Agreee"))
    before = folder_fingerprint(tmp_path)
    with pytest.raises(DataError) as caught:
        read_responses(path, spec)
    found = [str(p) for p in caught.value.problems]
    assert any("row 4, column wl1" in p and "'6' is outside the answer range 1..5 and is not a 'no answer' code (9, 99)" in p for p in found)
    assert any("row 5, column wl1" in p and "'Agreee' is not an answer text" in p for p in found)
    assert any("2 value(s) in all" in p for p in found)
    assert folder_fingerprint(tmp_path) == before


def test_only_the_first_twenty_bad_cells_are_listed_but_all_are_counted(write_file, spec):
    rows = "\n".join(f"p{i},day,8,1,1,1,1" for i in range(30))
    path = write_file("d.csv", "staff_id,shift,wl1,wl2,wl3,st1,st2\n" + rows + "\n")
    with pytest.raises(DataError) as caught:
        read_responses(path, spec)
    problems = caught.value.problems
    assert len(problems) == 21
    assert "30 value(s) in all" in str(problems[-1])


def test_lenient_turns_bad_values_into_counted_missing_values(write_file, spec):
    path = write_file("d.csv", BASIC_DATA.replace("s03,day,5,5,1", "s03,day,6,5,0"))
    responses = read_responses(path, spec, lenient=True)
    assert np.isnan(responses.items[2, 0])
    assert np.isnan(responses.items[2, 2])
    assert responses.refused_total == 2
    assert responses.refused_by_column == {"wl1": 1, "wl3": 1}
    refused = [n for n in responses.notes() if n.code == "values-read-as-missing"]
    assert len(refused) == 1
    assert refused[0].values["count"] == 2
    from scalewright.present.messages import describe

    assert describe(refused[0]).endswith("treated as missing (--lenient): wl1 1, wl3 1")


@pytest.mark.parametrize(("content", "expected"), [
    ("", "the file is empty"),
    ("staff_id,shift,wl1,wl2,wl3,st1,st2\n", "header but no rows"),
    ("staff_id,shift,wl1,wl1,wl3,st1,st2\ns1,day,1,1,1,1,1\n", "'wl1' appears twice in the header"),
])
def test_empty_and_broken_files(write_file, spec, content, expected):
    with pytest.raises(DataError, match=expected):
        read_responses(write_file("d.csv", content), spec)


def test_other_encodings_get_a_clear_error(write_file, spec):
    path = write_file("d.csv", (BASIC_DATA.replace("day", "jour") + "s05,ma\xf1ana,1,1,1,1,1\n").encode("latin-1"))
    with pytest.raises(DataError, match=r"not UTF-8 text \(byte 0xf1.*save the file as UTF-8"):
        read_responses(path, spec)
    with pytest.raises(DataError, match="UTF-16"):
        read_responses(write_file("u.csv", BASIC_DATA.encode("utf-16")), spec)


def test_missing_columns_get_a_suggestion(write_file, spec):
    path = write_file("d.csv", BASIC_DATA.replace("wl2", "wl_2"))
    with pytest.raises(DataError, match="'wl2', which the data file does not have; did you mean 'wl_2'"):
        read_responses(path, spec)


def test_ids_must_be_present_and_unique(write_file, spec):
    with pytest.raises(DataError, match="id 's01' appears more than once"):
        read_responses(write_file("d.csv", BASIC_DATA.replace("s02", "s01")), spec)
    with pytest.raises(DataError, match="row 3, column staff_id.*the id is empty"):
        read_responses(write_file("e.csv", BASIC_DATA.replace("s02", "")), spec)


def test_unknown_extension_and_missing_file(tmp_path, write_file):
    with pytest.raises(DataError, match="cannot read .sav"):
        read_table(write_file("d.sav", "x"))
    with pytest.raises(DataError, match="data file not found"):
        read_table(tmp_path / "absent.csv")


def test_data_errors_end_in_one_line_exit_4_and_no_traceback(write_file, tmp_path, capsys):
    data = write_file("d.csv", BASIC_DATA.replace("s03,day,5", "s03,day,7"))
    scales = write_file("s.yaml", BASIC_SCALES)
    before = folder_fingerprint(tmp_path)
    code = main(["score", str(data), "--scales", str(scales), "--out", str(tmp_path / "scores.csv")])
    err = capsys.readouterr().err
    assert code == 4
    assert err.startswith("error: ")
    assert err.count("\n") == 1
    assert "row 4, column wl1" in err
    assert "Traceback" not in err
    assert folder_fingerprint(tmp_path) == before


def test_ordered_group_levels_become_ordered_categories(write_file):
    scales = BASIC_SCALES.replace("groups: [shift]", "groups: [{shift: [night, day]}]")
    spec = load_spec(write_file("s.yaml", scales))
    shift = read_responses(write_file("d.csv", BASIC_DATA), spec).column("shift")
    assert list(shift.cat.categories) == ["night", "day"]
    assert shift.cat.ordered
    with pytest.raises(DataError, match="row 2, column shift.*'dawn' is not one of the levels"):
        read_responses(write_file("e.csv", BASIC_DATA.replace("s01,day", "s01,dawn")), spec)


@pytest.mark.parametrize("cell", ["1_2", "inf", "\u0663", "3,5"])
def test_texts_that_only_python_reads_as_numbers_are_refused(write_file, cell):
    # common practice, no source: an answer code is typed with ASCII digits, a sign, a point, an exponent
    spec = load_spec(write_file("s.yaml", "version: 1\nresponse: {min: 0, max: 20}\nscales:\n  m:\n    title: M\n"
                                          "    items: [a, b]\n"))
    path = write_file("d.csv", f'a,b\n1,2\n"{cell}",3\n')
    with pytest.raises(DataError, match="row 3, column a"):
        read_responses(path, spec)


def test_plain_numbers_written_as_text_are_read():
    from scalewright.data import _is_number

    assert all(_is_number(text) for text in ["3", " 3 ", "+3", "-2", "3.", "3.0", ".5", "1e1"])
