"""Rendering: APA numbers, Markdown escaping, tables in every format."""
from __future__ import annotations

import csv
import io
import json
import math

import pytest

from scalewright.present.numbers import format_value
from scalewright.present.render import escape_markdown, render_csv, render_json, render_markdown, render_text
from scalewright.present.table import Table


@pytest.mark.parametrize(("value", "kind", "expected"), [
    (0.8412, "bounded", ".84"),      # APA: no leading zero for statistics that cannot exceed 1
    (-0.305, "bounded", "-.30"),
    (1.0, "bounded", "1.00"),
    (0.0004, "p", "< .001"),         # APA: p below .001
    (0.0449, "p", ".045"),
    (3.14159, "num", "3.14"),
    (-0.001, "num", "0.00"),         # no negative zero
    (12.0, "int", "12"),
    (float("nan"), "num", "–"),
    (None, "bounded", "–"),
    (math.inf, "num", "∞"),
])
def test_apa_numbers(value, kind, expected):
    # APA style (Publication Manual, 7th ed.) as commonly applied; recalled from memory
    assert format_value(value, kind) == expected


def test_decimals_are_a_choice():
    assert format_value(0.84123, "bounded", decimals=3) == ".841"
    assert format_value(2.5, "num", decimals=0) in ("2", "3")


@pytest.mark.parametrize(("text", "shown"), [
    # CommonMark 0.31 (spec section 2.4): a backslash before any ASCII punctuation shows it literally, so
    # "\<" opens no tag and "\&" starts no entity; text Markdown would not act on stays as it is
    ("<script>alert(1)</script>", "\\<script>alert(1)\\</script>"),
    ("&amp; &#60;", "\\&amp; \\&#60;"),
    ("R&D < .001 > 4", "R&D < .001 > 4"),
    ("4.65 is the mean", "4.65 is the mean"),
    ("-0.62 below .70", "-0.62 below .70"),
    ("a*b* [x](y)", "a\\*b\\* \\[x\\](y)"),
    ("# not a heading", "\\# not a heading"),
    ("1. not a list", "1\\. not a list"),
    ("- not a list", "\\- not a list"),
    ("age_group | x", "age\\_group \\| x"),
    ("Workload strain (workload)", "Workload strain (workload)"),  # ordinary punctuation stays readable
    ("two\nlines", "two lines"),
])
def test_markdown_escaping(text, shown):
    assert escape_markdown(text) == shown


TABLE = Table(title="Items <b>", columns=("item", "alpha", "p", "n"),
              rows=(("=cmd()", 0.8412, 0.0004, 12), ("wl2", float("nan"), 0.2, 3)),
              kinds={"item": "text", "alpha": "bounded", "p": "p", "n": "int"}, notes=("a note",), key="items")


def test_text_and_markdown_round_only_when_rendered():
    text = render_text([TABLE])
    assert ".84" in text
    assert "< .001" in text
    assert "note: a note" in text
    markdown = render_markdown([TABLE])
    assert "## Items \\<b>" in markdown
    assert "| .84 |" in markdown


def test_csv_keeps_full_precision_and_neutralises_formulas():
    rows = list(csv.reader(io.StringIO(render_csv([TABLE]))))
    assert rows[0] == ["table", "item", "alpha", "p", "n"]
    assert rows[1] == ["items", "'=cmd()", "0.8412", "0.0004", "12"]
    assert rows[2][2] == ""  # NaN is an empty cell, not 'nan'


def test_json_never_carries_nan():
    text = render_json({"alpha": float("nan"), "values": [1.0, math.inf]})
    assert json.loads(text) == {"alpha": None, "values": [1.0, None]}


def test_json_is_the_standard_indented_text_and_long_lists_keep_their_content():
    import numpy as np

    from scalewright.present.render import LONG_LIST

    short = {"a": [1, 2.5, "x\u00e9"], "b": {"c": None, "d": [], "e": {}}, "f": True}
    # reference: the standard library's own indented encoding
    assert render_json(short) == json.dumps(short, indent=2, ensure_ascii=False) + "\n"
    rows = [{"id": f"p{i}", "d2": float(i) / 7, "flags": ["a"] if i % 3 else [], "r": np.float64("nan")}
            for i in range(LONG_LIST + 5)]
    text = render_json({"screen": {"respondents": rows}})
    expected = [{"id": f"p{i}", "d2": float(i) / 7, "flags": ["a"] if i % 3 else [], "r": None}
                for i in range(LONG_LIST + 5)]
    assert json.loads(text) == {"screen": {"respondents": expected}}
    assert len(text.splitlines()) == len(rows) + 6  # one line per row, not one per value


@pytest.mark.parametrize(("value", "cutoff", "kind", "decimals", "shown"), [
    (0.2996, 0.30, "bounded", 2, (".2996", ".30")),   # not "r = .30, below .30"
    (2.96, 3.0, "num", 1, ("2.96", "3.0")),           # not "ratio 3.0 is below 3"
    (0.84, 0.30, "bounded", 2, (".84", ".30")),       # far from the cut-off: usual decimals
    (0.30, 0.30, "bounded", 2, (".30", ".30")),       # exactly equal stays equal
    (0.3051, 0.305, "bounded", 2, (".3051", ".305")),  # the cut-off keeps the digit the comparison needs
])
def test_values_beside_a_cutoff_read_true(value, cutoff, kind, decimals, shown):
    from scalewright.present.numbers import format_against

    text, limit = format_against(value, cutoff, kind, decimals)
    assert (text, limit) == shown
    # the comparison of the shown numbers agrees with the true one (the property the rule exists for)
    assert (float(text) < float(limit)) == (value < cutoff)
    assert (float(text) > float(limit)) == (value > cutoff)


def test_structure_eigenvalue_ratio_near_its_cutoff_reads_true():
    import re

    import numpy as np

    from scalewright.present.messages import structure_message
    from scalewright.stats.structure_results import MIN_EIGEN_RATIO

    sentence = structure_message("several-dimensions", {"eigen_ratio": 2.96, "cutoff": MIN_EIGEN_RATIO}, flag=True)
    text, limit = re.search(r"ratio (\S+) is below (\S+):", sentence).groups()
    assert float(text) < float(limit)
    assert not np.isclose(float(text), float(limit))
