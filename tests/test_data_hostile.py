"""Reading data files that a survey platform, a spreadsheet or a careless or hostile hand can produce:
nothing lost or changed without a word, and every refusal one short line of ours."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright import data as data_module
from scalewright.cli import main
from scalewright.data import read_responses
from scalewright.errors import DataError
from scalewright.spec import load_spec

SCALES = """\
version: 1
id_column: id
groups: [grp]
response: {min: 1, max: 5}
scales:
  mood: {items: [a, b, c]}
"""


@pytest.fixture
def spec(write_file):
    return load_spec(write_file("s.yaml", SCALES))


def both_routes(path, spec, monkeypatch, **options):
    quick = read_responses(path, spec, **options)
    with monkeypatch.context() as patch:
        patch.setattr(data_module, "_read_quickly", lambda *_: None)
        general = read_responses(path, spec, **options)
    return quick, general


def test_ids_are_kept_exactly_as_written(write_file, spec, monkeypatch):
    path = write_file("d.csv", "id,grp,a,b,c\n00017,x,1,2,3\n017,x,2,3,4\n17,y,3,4,5\n")
    assert data_module._read_quickly(path, spec) is not None
    for responses in both_routes(path, spec, monkeypatch):
        assert list(responses.ids) == ["00017", "017", "17"]  # three people, not one id three times


def test_ids_with_leading_zeros_reach_the_scored_file(write_file, tmp_path):
    data = write_file("d.csv", "id,grp,a,b,c\n00017,x,1,2,3\n00018,x,2,3,4\n")
    assert main(["score", str(data), "-s", str(write_file("s.yaml", SCALES)), "--out", str(tmp_path / "o.csv")]) == 0
    assert (tmp_path / "o.csv").read_text().splitlines()[1].startswith("00017,")


def test_twenty_digit_ids_are_distinct_text(write_file, spec, monkeypatch):
    # beyond int64 (and float64's 2**53): read as numbers they overflowed and two became "duplicates"
    path = write_file("d.csv", "id,grp,a,b,c\n12345678901234567890,x,1,2,3\n12345678901234567891,x,2,3,4\n")
    for responses in both_routes(path, spec, monkeypatch):
        assert list(responses.ids) == ["12345678901234567890", "12345678901234567891"]


def test_a_number_id_too_long_for_a_spreadsheet_is_refused(tmp_path, spec):
    pd.DataFrame({"id": [1.2345678901234567e19, 5.0], "grp": ["x", "y"], "a": [1, 2], "b": [1, 2],
                  "c": [1, 2]}).to_excel(tmp_path / "d.xlsx", index=False)
    with pytest.raises(DataError, match=r"row 2, column id.*too long to be held exactly"):
        read_responses(tmp_path / "d.xlsx", spec)


@pytest.mark.parametrize("cell", ["2.5", "4.01", "1.5"])
def test_a_value_between_answer_codes_is_refused_by_every_route(write_file, spec, monkeypatch, cell):
    path = write_file("d.csv", f"id,grp,a,b,c\np1,x,1,2,3\np2,x,{cell},3,4\n")
    for route in ("quick", "general"):
        with monkeypatch.context() as patch:
            if route == "general":
                patch.setattr(data_module, "_read_quickly", lambda *_: None)
            with pytest.raises(DataError, match=f"row 3, column a.*'?{cell}'? lies between the answer codes 1..5"):
                read_responses(path, spec)
    lenient = read_responses(path, spec, lenient=True)
    assert lenient.refused_by_column == {"a": 1}
    assert np.isnan(lenient.items[1, 0])
    assert read_responses(write_file("w.csv", "id,grp,a,b,c\np1,x,3.0,2,3\n"), spec).items[0, 0] == 3.0


def test_lint_and_tally_agree_on_a_value_between_codes(write_file, tmp_path, capsys):
    data = write_file("d.csv", "id,grp,a,b,c\np1,x,1,2,3\np2,x,2.5,3,4\n")
    scales = write_file("s.yaml", SCALES)
    assert main(["lint", str(data), "--scales", str(scales)]) == 4
    assert main(["tally", str(data), "--scales", str(scales), "--items", "--format", "json"]) == 4
    assert main(["score", str(data), "--scales", str(scales), "--out", str(tmp_path / "o.csv")]) == 4
    assert capsys.readouterr().out.count("lies between the answer codes") == 1  # lint's listing


def test_a_row_longer_than_a_parse_block_is_read(write_file, spec, monkeypatch):
    # a free-text answer of 3 MB: before, pyarrow's "straddling object" message refused the file
    rows = ["id,grp,note,a,b,c"] + [f"p{i},x,short,1,2,3" for i in range(200)]
    rows.insert(100, "p_long,x," + "y" * 3_000_000 + ",4,4,4")
    path = write_file("d.csv", "\n".join(rows) + "\n")
    for responses in both_routes(path, spec, monkeypatch):
        assert responses.n == 201
        assert len(responses.frame["note"].iloc[99]) == 3_000_000


def test_a_row_beyond_the_record_limit_gets_our_message(write_file, spec, monkeypatch):
    from scalewright import limits

    monkeypatch.setattr(limits, "MAX_RECORD_BYTES", 2**21)
    rows = ["id,grp,note,a,b,c"] + [f"p{i},x,short,1,2,3" for i in range(20)] + ["p_long,x," + "y" * 5_000_000 + ",4,4,4"]
    path = write_file("d.csv", "\n".join(rows) + "\n")
    with pytest.raises(DataError) as caught:
        read_responses(path, spec)
    assert "a row is longer than 2 MiB" in str(caught.value)
    assert "straddl" not in str(caught.value)


def test_a_header_longer_than_a_mebibyte_is_read_whole(write_file, spec, monkeypatch):
    # before, only the first MiB of the header was read: a name cut there was "missing" or "twice"
    # question wordings as column names, as survey platforms export them
    names = [f"Q{i:05d} How often in the past month did you " + "feel that the work was well organised " * 4
             for i in range(6_000)]
    header = ",".join(["id", "grp", *names, "a", "b", "c"])
    assert len(header) > 2**20
    path = write_file("d.csv", header + "\n" + ",".join(["p1", "x", *[""] * len(names), "1", "2", "3"]) + "\n")
    responses = read_responses(path, spec)
    assert responses.n == 1
    assert list(responses.items[0]) == [1, 2, 3]


def test_a_header_of_too_many_names_is_refused_by_us(write_file, spec):
    header = ",".join(f"c{i}" for i in range(700_000))
    path = write_file("d.csv", header + "\n" + "1," * 699_999 + "1\n")
    with pytest.raises(DataError, match=r"the file has 700,000 columns, more than 50,000 \(see docs/limits.md\)"):
        read_responses(path, spec)


def test_a_parquet_item_of_lists_is_refused_in_one_line(tmp_path, spec):
    import pyarrow as pa
    import pyarrow.parquet as pq

    table = pa.table({"id": ["p1", "p2"], "grp": ["x", "y"], "a": pa.array([[1, 2], [3]]), "b": [1, 2], "c": [1, 2]})
    pq.write_table(table, tmp_path / "d.parquet")
    with pytest.raises(DataError) as caught:
        read_responses(tmp_path / "d.parquet", spec)
    assert "column 'a'" in str(caught.value)
    assert "one answer per cell" in str(caught.value)


def test_a_parquet_duplicate_column_is_refused_in_one_short_line(tmp_path, spec, capsys, write_file):
    import pyarrow as pa
    import pyarrow.parquet as pq

    table = pa.Table.from_arrays([pa.array(["p1"]), pa.array(["x"]), pa.array([1]), pa.array([2]), pa.array([3]),
                                  pa.array([4])], names=["id", "grp", "a", "b", "c", "a"])
    pq.write_table(table, tmp_path / "d.parquet")
    with pytest.raises(DataError, match="'a' appears twice"):
        read_responses(tmp_path / "d.parquet", spec)
    assert main(["lint", str(tmp_path / "d.parquet"), "--scales", str(write_file("s.yaml", SCALES))]) == 4
    out = capsys.readouterr().out
    assert out.count("\n") == 1
    assert len(out) < 300


def test_a_very_long_bad_answer_is_quoted_short(write_file, spec, capsys):
    path = write_file("d.csv", "id,grp,a,b,c\np1,x," + "z" * 1_000_000 + ",2,3\n")
    code = main(["score", str(path), "--scales", str(write_file("s.yaml", SCALES))])
    err = capsys.readouterr().err
    assert code == 4
    assert err.count("\n") == 1
    assert len(err) < 600
    assert "1,000,000 characters" in err


def test_a_file_name_with_a_line_break_stays_on_one_line(write_file, spec, capsys, tmp_path):
    path = write_file("bad\nname.csv", "id,grp,a,b,c\np1,x,7,2,3\n")
    code = main(["score", str(path), "--scales", str(write_file("s.yaml", SCALES))])
    err = capsys.readouterr().err
    assert code == 4
    assert err.count("\n") == 1
    assert "bad\\nname.csv" in err


# -- texts are data; only blanks and listed texts are missing (issue 13) ---------------------------------

FREQUENCY = """\
version: 1
id_column: id
groups: [grp]
response: {min: 1, max: 3, labels: {1: None, 2: Some, 3: Many}}
scales:
  use: {items: [a, b]}
"""


def test_an_answer_labelled_none_is_kept(write_file, monkeypatch):
    spec = load_spec(write_file("s.yaml", FREQUENCY))
    path = write_file("d.csv", "id,grp,a,b\np1,None,None,Some\np2,Some,none,NA\np3,NA, ,Many\np4,-,Many,n/a\n")
    for responses in both_routes(path, spec, monkeypatch):
        np.testing.assert_array_equal(responses.items, [[1, 2], [1, np.nan], [np.nan, 3], [3, np.nan]])
        assert responses.texts_by_column == {"a": 3, "b": 2}
        # every cell read as missing, per column and per listed text (n/a is the listed N/A)
        assert responses.missing_texts_by_column == {"b": {"NA": 1, "N/A": 1}, "grp": {"NA": 1}}
        assert responses.blank_by_column == {"a": 1}, responses.blank_by_column
        assert list(responses.column("grp").fillna("<missing>")) == ["None", "Some", "<missing>", "-"]
        assert responses.reading_summary()["missing_texts_by_column"]["b"] == {"NA": 1, "N/A": 1}


def test_texts_not_listed_are_refused_not_silently_missing(write_file):
    spec = load_spec(write_file("s.yaml", FREQUENCY))
    with pytest.raises(DataError, match="row 2, column b.*'null' is not an answer text"):
        read_responses(write_file("d.csv", "id,grp,a,b\np1,x,None,null\n"), spec)


def test_listed_missing_texts_replace_the_default(write_file):
    spec = load_spec(write_file("s.yaml", FREQUENCY.replace("version: 1", "version: 1\nmissing_texts: [skipped]")))
    responses = read_responses(write_file("d.csv", "id,grp,a,b\np1,NA,None,Skipped\np2,x,Some,Many\n"), spec)
    assert responses.missing_texts_by_column == {"b": {"skipped": 1}}
    assert list(responses.column("grp")) == ["NA", "x"]  # no longer a missing text: a level like any other
    with pytest.raises(DataError, match="'NA' is not an answer text"):
        read_responses(write_file("e.csv", "id,grp,a,b\np1,x,NA,Some\n"), spec)


def test_a_tally_of_levels_including_none_counts_them(write_file, capsys):
    import json

    path = write_file("d.csv", "grp\n" + "Freq\n" * 10 + "Some\n" * 8 + "None\n" * 24 + "NA\n" * 2)
    assert main(["tally", str(path), "--columns", "grp", "--format", "json"]) == 0
    out = json.loads(capsys.readouterr().out)
    rows = {row["category"]: row["count"] for row in out["columns"]["grp"]["rows"]} \
        if "rows" in out["columns"]["grp"] else out["columns"]["grp"]
    text = json.dumps(rows)
    assert '"None"' in text
    assert "24" in text
    assert any("'NA' 2" in note for note in out["notes"])


def test_lint_prints_the_missing_texts_and_what_they_caught(write_file, capsys):
    spec_path = write_file("s.yaml", FREQUENCY)
    data = write_file("d.csv", "id,grp,a,b\np1,x,None,NA\np2,y,Some,Many\n")
    assert main(["lint", str(data), "--scales", str(spec_path)]) == 0
    out = capsys.readouterr().out
    assert "'no answer' texts (missing_texts): NA, N/A, #N/A" in out
    assert "1 cell(s) holding a 'no answer' text were read as missing: 'NA' 1" in out


# -- subgroup levels match numerically (issue 13) --------------------------------------------------------

def test_ordered_numeric_levels_match_decimals_in_the_file(write_file, monkeypatch):
    spec = load_spec(write_file("s.yaml", SCALES.replace("groups: [grp]", "groups: [{grp: [1, 2, 3, 4, 5]}]")))
    path = write_file("d.csv", "id,grp,a,b,c\np1,3.0,1,2,3\np2,1,2,3,4\np3,5.00,3,4,5\np4,,1,1,1\n")
    for responses in both_routes(path, spec, monkeypatch):
        levels = responses.column("grp")
        assert list(levels.cat.categories) == ["1", "2", "3", "4", "5"]
        assert list(levels.astype(object).fillna("-")) == ["3", "1", "5", "-"]
    with pytest.raises(DataError, match="'3.5' is not one of the levels"):
        read_responses(write_file("e.csv", "id,grp,a,b,c\np1,3.5,1,2,3\n"), spec)


def test_no_library_warning_reaches_stderr_on_success(tmp_path, write_file, capsys):
    # every warning is recorded (none turned into an error or hidden by a filter), as a user's run would show it
    import warnings

    import openpyxl

    book = openpyxl.Workbook()
    sheet = book.active
    for row in [["id", "grp", "a", "b", "c"], ["00017", "None", 1, 2, 3], ["12345678901234567890", "NA", 2, 3, 4]]:
        sheet.append(row)
    book.save(tmp_path / "d.xlsx")
    csv_path = write_file("d.csv", "id,grp,a,b,c\n12345678901234567890,x,1,2,3\n12345678901234567891,NA,2,3,4\n")
    scales = write_file("s.yaml", SCALES)
    for data in (tmp_path / "d.xlsx", csv_path):
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            assert main(["score", str(data), "-s", str(scales), "--out", str(tmp_path / f"o_{data.suffix[1:]}.csv")]) == 0
        assert not caught, [str(w.message) for w in caught]
        err = capsys.readouterr().err
        assert all(line.startswith(("wrote ", "note: ")) for line in err.splitlines()), err


def test_the_report_notes_which_texts_were_read_as_missing(write_file):
    spec = load_spec(write_file("s.yaml", FREQUENCY.replace("use: {items: [a, b]}", "use: {items: [a, b]}\n"
                                                            "  other: {items: [c], response: {missing_texts: [skip]}}")))
    responses = read_responses(write_file("d.csv", "id,grp,a,b,c\np1,x,None,NA,skip\n"), spec)
    note = responses.missing_texts_note(spec)
    assert "'NA', 'N/A', '#N/A'" in note
    assert "in the items of other: 'skip'" in note


@pytest.mark.parametrize("engine", ["memory", "stream"])
def test_the_count_of_other_problems_leaves_out_the_line_that_totals_them(tmp_path, capsys, engine):
    # two refused values: the one-line error names the first and counts one more, not the closing total
    data = tmp_path / "two-bad.csv"
    rows = [f"r{i},{(i % 5) + 1},{(i * 2 % 5) + 1}" for i in range(30)]
    rows[4] = "r4,8,2"
    rows[9] = "r9,3,agree"
    data.write_text("rid,a,b\n" + "\n".join(rows) + "\n", encoding="utf-8")
    scales = tmp_path / "two-bad.yaml"
    scales.write_text("version: 1\nid_column: rid\nresponse: {min: 1, max: 5}\nscales:\n"
                      "  pair: {items: [a, b], score: mean}\n", encoding="utf-8")
    before = data.read_bytes()
    assert main(["reliability", str(data), "--scales", str(scales), "--engine", engine]) == 4
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "(row 6, column a): 8 is outside the answer range 1..5 (and 1 more problem;" in err
    assert data.read_bytes() == before
