"""The limits the tool enforces on its inputs, in one place (docs/limits.md says why each is what it is).

Each guards against a file that a careless export or a hostile hand can produce and that would otherwise
hang the tool, exhaust memory, or be read wrongly without a word.
"""
from __future__ import annotations

#: widest answer range, ``max - min``: ten times the widest rating format in common use (0..100 sliders)
MAX_ANSWER_SPAN = 1000
#: largest size of an answer code or a range end; far beyond any rating format, well inside exact integers
MAX_ANSWER_VALUE = 1_000_000
#: largest size of a "no answer" code (9, 99, -999, 99999999 are all common); exact in float64 below 2**53
MAX_MISSING_CODE = 10**15

#: deepest nesting of lists and mappings in a scale file (the format itself needs 5)
MAX_YAML_DEPTH = 32
#: most values a scale file may hold once every alias is expanded (a 1,000-item file holds about 10,000)
MAX_YAML_NODES = 200_000
#: largest scale file, in bytes
MAX_YAML_BYTES = 10 * 2**20

#: longest record (row) of a delimited file, in bytes: a free-text answer may be long, not endless
MAX_RECORD_BYTES = 256 * 2**20

#: longest text of one spreadsheet cell, in characters: the spreadsheet programs' own limit per cell
MAX_CELL_CHARS = 32_767
#: largest uncompressed part of an XLSX workbook (a 1,000,000 x 60 sheet of codes is about 1.5 GB)
MAX_XLSX_PART_BYTES = 4 * 2**30
#: largest expansion of a part of a workbook beyond the first 16 MiB; sheet XML shrinks 5 to 50 times
MAX_XLSX_EXPANSION = 200
XLSX_EXPANSION_FREE_BYTES = 16 * 2**20

#: quoted values in messages are cut to this many characters
MAX_QUOTED_CHARS = 60

#: most columns of a data file: the widest survey exports hold a few thousand; parsing time grows with each
MAX_COLUMNS = 50_000
