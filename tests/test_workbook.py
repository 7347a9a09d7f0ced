"""XLSX workbooks: one sheet read or the sheet named, formulas without values, duplicate names, zip bombs."""
from __future__ import annotations

import io
import zipfile

import numpy as np
import pytest

from scalewright.cli import main
from scalewright.data import read_responses
from scalewright.data_file import read_table
from scalewright.errors import DataError
from scalewright.spec import load_spec

SCALES = """\
version: 1
id_column: id
response: {min: 1, max: 5}
scales:
  mood: {items: [a, b]}
"""


def workbook(path, sheets: dict[str, list[list]]):
    """Write a workbook with openpyxl: sheet name -> rows (the first row the header)."""
    import openpyxl

    book = openpyxl.Workbook()
    book.remove(book.active)
    for name, rows in sheets.items():
        sheet = book.create_sheet(name)
        for row in rows:
            sheet.append(row)
    book.save(path)
    return path


ANSWERS = [["id", "a", "b"], ["p1", 1, 2], ["p2", 3, 4]]
OTHER = [["id", "a", "b"], ["q1", 5, 5]]


@pytest.fixture
def spec(write_file):
    return load_spec(write_file("s.yaml", SCALES))


def test_a_workbook_of_one_sheet_is_read(tmp_path, spec):
    responses = read_responses(workbook(tmp_path / "d.xlsx", {"answers": ANSWERS}), spec)
    np.testing.assert_array_equal(responses.items, [[1, 2], [3, 4]])


def test_several_sheets_need_the_sheet_named(tmp_path, spec, write_file, capsys):
    path = workbook(tmp_path / "d.xlsx", {"wave 1": ANSWERS, "wave 2": OTHER})
    with pytest.raises(DataError, match=r"the workbook has 2 sheets \('wave 1', 'wave 2'\); say which to read with "
                                        r"--sheet NAME"):
        read_responses(path, spec)
    assert list(read_responses(path, spec, sheet="wave 2").ids) == ["q1"]
    with pytest.raises(DataError, match="no sheet 'wave 3'.*did you mean 'wave 2'"):
        read_responses(path, spec, sheet="wave 3")
    scales = str(write_file("s.yaml", SCALES))
    assert main(["lint", str(path), "--scales", scales]) == 4
    assert main(["lint", str(path), "--scales", scales, "--sheet", "wave 1"]) == 0
    assert main(["score", str(path), "--scales", scales, "--sheet", "wave 2", "--out", str(tmp_path / "o.csv")]) == 0
    assert (tmp_path / "o.csv").read_text().splitlines()[1].startswith("q1,")
    assert main(["tally", str(path), "--columns", "a", "--sheet", "wave 1", "--format", "json"]) == 0
    capsys.readouterr()
    assert main(["score", str(write_file("d.csv", "id,a,b\np,1,2\n")), "--scales", scales, "--sheet", "x"]) == 2


def test_a_duplicate_column_name_is_refused(tmp_path, spec):
    path = workbook(tmp_path / "d.xlsx", {"s": [["id", "a", "b", "a"], ["p1", 1, 2, 3]]})
    with pytest.raises(DataError, match=r":1 \(column 4\): the column name 'a' appears twice"):
        read_responses(path, spec)


def _rewrite_sheet(path, change):
    """Rewrite the first sheet's XML with ``change(xml) -> xml`` (what openpyxl will not write)."""
    with zipfile.ZipFile(path) as archive:
        parts = {info.filename: archive.read(info) for info in archive.infolist()}
    parts["xl/worksheets/sheet1.xml"] = change(parts["xl/worksheets/sheet1.xml"].decode()).encode()
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, body in parts.items():
            archive.writestr(name, body)
    path.write_bytes(buffer.getvalue())


def _with_cached_value(path, cell: str, value: str):
    """The formula in ``cell`` given a stored value, as a spreadsheet program saves it."""
    def change(sheet: str) -> str:
        start = sheet.index(f'<c r="{cell}"')
        end = sheet.index("</c>", start)
        return sheet[:start] + sheet[start:end].replace("<v />", "").replace("<v/>", "") + f"<v>{value}</v>" + sheet[end:]

    _rewrite_sheet(path, change)


def test_formulas_without_stored_values_are_refused_with_their_cell(tmp_path, spec):
    # openpyxl writes formulas without their values, as other programs do: they used to read as blanks
    path = workbook(tmp_path / "d.xlsx", {"s": [["id", "a", "b"], ["p1", 1, "=B3+1"], ["p2", 3, 4],
                                                ["p3", "=1+1", 2]]})
    with pytest.raises(DataError) as caught:
        read_responses(path, spec)
    message = str(caught.value)
    assert "cell C2" in message
    assert "2 formula cell(s) have no stored value" in message
    _with_cached_value(path, "C2", "5")
    _with_cached_value(path, "B4", "2")
    responses = read_responses(path, spec)
    np.testing.assert_array_equal(responses.items, [[1, 5], [3, 4], [2, 2]])


def test_a_cell_longer_than_a_spreadsheet_allows_is_refused(tmp_path, spec):
    # openpyxl cuts a text to the limit when it writes one, so the long cell is written into the XML here
    path = workbook(tmp_path / "d.xlsx", {"s": [["id", "note", "a", "b"], ["p1", "x" * 32_767, 1, 2]]})
    _rewrite_sheet(path, lambda sheet: sheet.replace("x" * 32_767, "x" * 40_000))
    with pytest.raises(DataError, match=r"cell B2.*40,000 characters, more than a spreadsheet cell can \(32,767\)"):
        read_responses(path, spec)


def test_a_zip_bomb_is_refused_before_it_is_unpacked(tmp_path, spec, capsys, write_file):
    path = workbook(tmp_path / "d.xlsx", {"s": ANSWERS})
    with zipfile.ZipFile(path) as archive:
        parts = {info.filename: archive.read(info) for info in archive.infolist()}
    # one shared text of 24 MB that packs to about 24 KB, as a bomb would carry it
    parts["xl/sharedStrings.xml"] = (b'<?xml version="1.0"?><sst xmlns="http://schemas.openxmlformats.org/'
                                     b'spreadsheetml/2006/main"><si><t>' + b"A" * 24_000_000 + b"</t></si></sst>")
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, body in parts.items():
            archive.writestr(name, body)
    path.write_bytes(buffer.getvalue())
    assert path.stat().st_size < 1_000_000
    with pytest.raises(DataError, match="part 'xl/sharedStrings.xml'.*unpacks .* bytes to 24,000,"):
        read_responses(path, spec)
    assert main(["lint", str(path), "--scales", str(write_file("s.yaml", SCALES))]) == 4
    assert capsys.readouterr().out.count("\n") == 1


def test_texts_in_a_workbook_are_data_and_no_library_warning_escapes(tmp_path, recwarn):
    path = workbook(tmp_path / "d.xlsx", {"s": [["grp", "n"], ["None", 1], ["NA", 2], ["-", None]]})
    frame = read_table(path, missing_texts=("NA",))
    assert list(frame["grp"].fillna("<missing>")) == ["None", "<missing>", "-"]
    assert frame["n"].dtype == np.float64
    assert not recwarn.list


def test_a_file_that_is_not_a_workbook_gets_one_line(tmp_path, write_file, capsys):
    path = write_file("d.xlsx", "id,a,b\n")
    assert main(["lint", str(path), "--scales", str(write_file("s.yaml", SCALES))]) == 4
    out = capsys.readouterr().out
    assert out.count("\n") == 1
    assert "not an XLSX file" in out
