"""Scale files built to exhaust the reader: deep nesting, self-reference, alias bombs; and a bounded fuzz."""
from __future__ import annotations

import time

import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from scalewright.cli import main
from scalewright.limits import MAX_YAML_DEPTH, MAX_YAML_NODES
from scalewright.spec import check_spec

VALID_TAIL = "response: {min: 1, max: 5}\nscales: {a: {items: [x, y]}}\n"


def problems(write_file, text: str) -> list[str]:
    spec, found = check_spec(write_file("s.yaml", text))
    assert spec is None
    return [str(p) for p in found]


def test_deep_nesting_is_refused_without_a_recursion_error(write_file, capsys):
    path = write_file("s.yaml", "title: " + "[" * 500 + "]" * 500 + "\n" + VALID_TAIL)
    found = problems(write_file, path.read_text())
    assert any(f"nested more than {MAX_YAML_DEPTH} deep" in p and "s.yaml:1" in p for p in found), found
    assert main(["lint", "--scales", str(path)]) == 3
    out = capsys.readouterr()
    assert "Recursion" not in out.out + out.err
    assert "internal error" not in out.err


def test_nesting_within_the_limit_is_read_as_usual(write_file):
    text = "title: x\nwording_note: " + "[" * (MAX_YAML_DEPTH - 2) + "]" * (MAX_YAML_DEPTH - 2) + "\n" + VALID_TAIL
    found = problems(write_file, text)
    assert found
    assert all("unknown key 'wording_note'" in p for p in found)


def test_a_node_that_contains_itself_is_refused(write_file):
    found = problems(write_file, "title: &loop [a, *loop]\n" + VALID_TAIL)
    assert any("alias *loop refers to a list or mapping that contains it" in p and ":1" in p for p in found), found


def test_an_alias_bomb_is_refused_quickly(write_file):
    # nine levels of nine aliases: 9**9 (387 million) values once expanded
    lines = ['l0: &l0 ["ha", "ha", "ha", "ha", "ha", "ha", "ha", "ha", "ha"]']
    lines += [f"l{i}: &l{i} [" + ", ".join([f"*l{i - 1}"] * 9) + "]" for i in range(1, 10)]
    started = time.perf_counter()
    found = problems(write_file, "\n".join(lines) + "\n" + VALID_TAIL)
    # a hang guard, not a speed check: before the limit this ran for minutes
    assert time.perf_counter() - started < 20
    assert any(f"more than {MAX_YAML_NODES:,} values once its aliases are expanded" in p for p in found), found


def test_aliases_that_repeat_a_node_are_checked_once(write_file):
    # a shared answer format written once and used by many scales: fine, and each tag problem reported once
    scales = "\n".join(f"  s{i}: {{items: [x{i}], response: *fmt}}" for i in range(50))
    spec, found = check_spec(write_file("s.yaml", f"version: 1\nresponse: &fmt {{min: 1, max: 5}}\nscales:\n{scales}\n"))
    assert spec is not None
    assert not found
    found = problems(write_file, "fmt: &fmt !odd {min: 1, max: 5}\nresponse: *fmt\nscales: {a: {items: [x]}}\n")
    assert sum("YAML tag '!odd'" in p for p in found) == 1, found


# -- bounded fuzz -------------------------------------------------------------------------------------------

YAML_PIECES = st.sampled_from(["version: 1\n", "title: T\n", "response: ", "{min: 1, max: 5}", "scales:\n",
                               "  a:\n", "    items: [x, y]\n", "    reverse: [y]\n", "labels: {1: a}", "&a ", "*a",
                               "[", "]", "{", "}", ", ", ": ", "- ", "\n", "  ", "!!python/name:os.system ",
                               "<<: ", "0x1F", "1:30", "missing_texts: [NA]\n", "groups: [g]\n", "'", '"', "#",
                               "\t", "\x00", "\u2028", "~", "null", "5000000", "-", "?"])


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(YAML_PIECES, max_size=40))
def test_fuzzed_scale_files_end_in_a_spec_or_one_line_problems(tmp_path_factory, pieces):
    # property: whatever the text, the reader returns a spec or problems, each one line; it never raises
    path = tmp_path_factory.mktemp("fuzz") / "s.yaml"
    path.write_text("".join(pieces), encoding="utf-8")
    spec, found = check_spec(path)
    assert (spec is None) == bool(found)
    assert all("\n" not in str(p) and "object at 0x" not in str(p) for p in found)


@settings(max_examples=100, deadline=None)
@given(st.binary(max_size=300))
def test_fuzzed_bytes_end_in_a_spec_or_problems(tmp_path_factory, body):
    path = tmp_path_factory.mktemp("fuzz") / "s.yaml"
    path.write_bytes(body)
    spec, found = check_spec(path)
    assert (spec is None) == bool(found)


def test_the_guard_agrees_with_the_composer_on_valid_files(write_file):
    # the pre-scan must not refuse what PyYAML composes and the checker accepts
    from .conftest import BASIC_SCALES

    assert yaml.compose(BASIC_SCALES, Loader=yaml.SafeLoader) is not None
    spec, found = check_spec(write_file("basic.yaml", BASIC_SCALES))
    assert spec is not None
    assert not found
