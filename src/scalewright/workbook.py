"""Reading one sheet of an XLSX workbook, refusing what would be read wrongly or would exhaust memory.

Read with openpyxl directly (not through ``pandas.read_excel``), because what must be refused is only
visible there: which sheets the workbook has, which cells hold a formula whose value was never stored
(a program other than a spreadsheet wrote the file), and how large each part of the zip expands to (a
small file can unpack to gigabytes). Text cells are kept as written: "None" or "NA" in a cell is text
here, and only the scale file's ``missing_texts`` make it missing (see :mod:`scalewright.text_cells`).
"""
from __future__ import annotations

import warnings
import zipfile
from pathlib import Path

import pandas as pd

from . import limits
from .errors import DataError, Problem, quoted


def read_workbook(path: Path, *, sheet: str | None = None) -> pd.DataFrame:
    """The sheet's first row as column names and the rows below as a frame (columns typed as pandas
    infers them from the cell values).

    A workbook with several sheets needs ``sheet``; formula cells without a stored value, cells longer
    than :data:`scalewright.limits.MAX_CELL_CHARS` characters and parts that expand beyond the limits of
    :mod:`scalewright.limits` are refused with their place.
    """
    formulas = _check_parts(path)
    import openpyxl

    with warnings.catch_warnings():
        # openpyxl warns about styles, data validation and other parts it skips: none concerns the values
        warnings.simplefilter("ignore")
        try:
            book = openpyxl.load_workbook(path, read_only=True, data_only=True)
        except Exception as error:  # openpyxl and zipfile raise many types for broken workbooks
            raise DataError(Problem(file=str(path), message=f"cannot read the workbook: {_first_line(error)}")) from None
        try:
            name = _chosen_sheet(path, book.sheetnames, sheet)
            rows = [list(row) for row in book[name].iter_rows(values_only=True)]
        finally:
            book.close()
        if formulas:
            _refuse_formulas_without_values(path, name, rows)
    return _frame(path, name, rows)


def _first_line(error: Exception) -> str:
    text = str(error).strip()
    first = text.splitlines()[0] if text else type(error).__name__
    return first[:200]


def _check_parts(path: Path) -> bool:
    """Refuse a workbook whose parts expand beyond the limits; return whether a sheet holds a formula."""
    try:
        archive = zipfile.ZipFile(path)
    except (zipfile.BadZipFile, OSError) as error:
        raise DataError(Problem(file=str(path), message=f"cannot read the workbook: not an XLSX file "
                                                        f"({_first_line(error)})")) from None
    with archive:
        for part in archive.infolist():
            expanded, packed = part.file_size, max(part.compress_size, 1)
            if expanded > limits.MAX_XLSX_PART_BYTES or (
                    expanded > limits.XLSX_EXPANSION_FREE_BYTES and expanded > packed * limits.MAX_XLSX_EXPANSION):
                raise DataError(Problem(file=str(path), where=f"part {quoted(part.filename)}",
                                        message=f"the workbook unpacks {packed:,} bytes to {expanded:,}, beyond what a "
                                                "sheet of answers needs (see docs/limits.md); refused"))
        return any(_holds_formula(archive, part) for part in archive.infolist()
                   if part.filename.startswith("xl/worksheets/") and part.filename.endswith(".xml"))


def _holds_formula(archive: zipfile.ZipFile, part: zipfile.ZipInfo) -> bool:
    """Whether the sheet's XML has a formula element, read in blocks (a sheet may be large)."""
    tail = b""
    with archive.open(part) as stream:
        while block := stream.read(1 << 22):
            text = tail + block
            if b"<f>" in text or b"<f " in text or b":f>" in text or b":f " in text:
                return True
            tail = text[-8:]
    return False


def _chosen_sheet(path: Path, names: list[str], sheet: str | None) -> str:
    if sheet is not None:
        if sheet not in names:
            from .errors import did_you_mean

            raise DataError(Problem(file=str(path), message=f"the workbook has no sheet {quoted(sheet)} (sheets: "
                                                            f"{', '.join(map(quoted, names))}){did_you_mean(sheet, names)}"))
        return sheet
    if len(names) > 1:
        shown = ", ".join(map(quoted, names[:10])) + (f" and {len(names) - 10} more" if len(names) > 10 else "")
        raise DataError(Problem(file=str(path), message=f"the workbook has {len(names)} sheets ({shown}); "
                                                        "say which to read with --sheet NAME"))
    return names[0]


def _refuse_formulas_without_values(path: Path, sheet: str, rows: list[list]) -> None:
    """Formula cells whose value the file does not hold (read as blanks otherwise) are refused, counted."""
    import openpyxl
    from openpyxl.utils import get_column_letter

    book = openpyxl.load_workbook(path, read_only=True, data_only=False)
    try:
        without: list[tuple[int, int]] = []
        for row_index, row in enumerate(book[sheet].iter_rows(values_only=True)):
            for column_index, value in enumerate(row):
                if isinstance(value, str) and value.startswith("=") and (
                        row_index >= len(rows) or column_index >= len(rows[row_index])
                        or rows[row_index][column_index] is None):
                    without.append((row_index + 1, column_index + 1))
    finally:
        book.close()
    if without:
        row, column = without[0]
        raise DataError(Problem(file=str(path), where=f"sheet {quoted(sheet)}, cell {get_column_letter(column)}{row}",
                                message=f"{len(without)} formula cell(s) have no stored value, so their values are "
                                        "unknown; open and save the workbook in a spreadsheet program (which stores "
                                        "them), or export it as CSV"))


def _frame(path: Path, sheet: str, rows: list[list]) -> pd.DataFrame:
    while rows and all(value is None for value in rows[-1]):
        rows.pop()  # formatting can extend a sheet below its last row of values
    if not rows:
        return pd.DataFrame()
    header = rows[0]
    width = max(len(row) for row in rows)
    header = list(header) + [None] * (width - len(header))
    kept: list[tuple[int, str, list]] = []
    for position, name in enumerate(header, start=1):
        values = [row[position - 1] if position - 1 < len(row) else None for row in rows[1:]]
        if name is None and all(value is None for value in values):
            continue  # a formatted but empty column
        kept.append((position, "" if name is None else str(name).strip(), values))
        _check_cell_sizes(path, sheet, position, [name, *values])
    frame = pd.DataFrame({f"#{i}": _column(values) for i, (_, _, values) in enumerate(kept)})
    frame.columns = [name for _, name, _ in kept]
    return frame


def _column(values: list) -> pd.Series:
    """One column's cells as pandas infers a type for them (whole numbers int64, numbers float64, ...)."""
    series = pd.Series(values, dtype=object)
    inferred = series.infer_objects()
    if inferred.dtype == object and all(isinstance(v, (int, float)) and not isinstance(v, bool)
                                        for v in values if v is not None):
        return pd.to_numeric(series)
    return inferred


def _check_cell_sizes(path: Path, sheet: str, position: int, cells: list) -> None:
    """Refuse a text cell longer than a spreadsheet cell can be (it was not written by one)."""
    from openpyxl.utils import get_column_letter

    if any(isinstance(value, str) and len(value) > limits.MAX_CELL_CHARS for value in cells):
        for row, value in enumerate(cells, start=1):
            if isinstance(value, str) and len(value) > limits.MAX_CELL_CHARS:
                raise DataError(Problem(file=str(path), where=f"sheet {quoted(sheet)}, cell "
                                                              f"{get_column_letter(position)}{row}",
                                        message=f"the cell holds {len(value):,} characters, more than a spreadsheet "
                                                f"cell can ({limits.MAX_CELL_CHARS:,})"))

