"""Messages stay one short line whatever the input holds."""
from __future__ import annotations

import pytest

from scalewright.errors import DataError, Problem, one_line, quoted


def test_control_characters_are_shown_escaped():
    text = one_line("a\nb\rc\x1b]0;title\x07d\u2028e\x85f")
    assert "\n" not in text
    assert "\r" not in text
    assert "\x1b" not in text
    assert "\u2028" not in text
    assert text.startswith("a\\nb\\rc\\x1b]0;title\\x07d")


def test_long_values_are_cut_when_quoted_and_messages_are_bounded():
    shown = quoted("z" * 1_000_000)
    assert len(shown) < 100
    assert "1,000,000 characters" in shown
    assert quoted("short") == "'short'"
    problem = Problem(file="f\nname.csv", where="row 2, column a", message="x" * 5000)
    assert "\n" not in str(problem)
    assert len(str(problem)) <= 1000
    assert "f\\nname.csv" in str(problem)
    assert "\n" not in str(DataError([problem, problem]))


def test_library_errors_name_the_setting_and_the_cli_adds_the_option(tmp_path):
    # the library words the problem without command-line options; the CLI appends the option that gets past it
    from scalewright.cli.common import error_line
    from scalewright.data_file import read_table
    from scalewright.errors import UsageError

    csv = tmp_path / "d.csv"
    csv.write_text("a,b\n1,2\n", encoding="utf-8")
    with pytest.raises(UsageError) as caught:
        read_table(csv, sheet="first")
    assert "--" not in str(caught.value)
    assert caught.value.setting == "sheet"
    assert error_line(caught.value).endswith("; --sheet is for workbooks only")
    assert error_line(UsageError("plain")) == "plain"
