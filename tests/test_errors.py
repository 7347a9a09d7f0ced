"""Messages stay one short line whatever the input holds."""
from __future__ import annotations

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
