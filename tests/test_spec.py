"""The scale file: every kind of bad file is refused with its line and key path, and nothing changes."""
from __future__ import annotations

import textwrap

import pytest

from scalewright.cli import main
from scalewright.errors import SpecError
from scalewright.spec import check_spec, load_spec

from .conftest import BASIC_SCALES, folder_fingerprint


def problems_of(write_file, text: str) -> list[str]:
    path = write_file("bad.yaml", textwrap.dedent(text))
    spec, problems = check_spec(path)
    assert spec is None
    return [str(p) for p in problems]


def one_scale(body: str, response: str = "response: {min: 1, max: 5}") -> str:
    return f"version: 1\n{response}\nscales:\n  a:\n" + textwrap.indent(textwrap.dedent(body), "    ")


def test_the_example_file_is_read(basic_files):
    _, scales = basic_files
    spec = load_spec(scales)
    assert spec.items == ("wl1", "wl2", "wl3", "st1", "st2")
    assert spec.scales["workload"].reverse == ("wl3",)
    assert spec.scales["workload"].required_answered() == 2
    # a scale's own answer format overrides the default; its labels are not inherited when the range changes
    assert spec.scales["stay"].response.max == 7
    assert dict(spec.scales["stay"].response.labels) == {}
    assert spec.scales["stay"].response.missing_codes == (9, 99)
    assert spec.scales["stay"].required_answered() == 2  # fraction 1.0 of 2 items


@pytest.mark.parametrize(("fraction", "k", "expected"), [(0.75, 6, 5), (0.5, 6, 3), (0.5, 5, 3), (1.0, 4, 4), (0.01, 3, 1)])
def test_fraction_of_items_rounds_up(write_file, fraction, k, expected):
    items = ", ".join(f"i{j}" for j in range(k))
    spec = load_spec(write_file("s.yaml", one_scale(f"items: [{items}]\nmin_answered: {fraction}\n")))
    assert spec.scales["a"].required_answered() == expected  # ceil(f k): common practice, no source


def test_misspelled_keys_get_a_suggestion_and_a_line(write_file):
    found = problems_of(write_file, """\
        version: 1
        titel: Survey
        response: {min: 1, max: 5, missing_code: [9]}
        scales:
          a:
            itmes: [x, y]
        """)
    assert any(":2 (titel)" in p and "did you mean 'title'" in p for p in found)
    assert any(":3" in p and "did you mean 'missing_codes'" in p for p in found)
    assert any(":6" in p and "did you mean 'items'" in p for p in found)


@pytest.mark.parametrize(("body", "expected"), [
    ("items: []\n", "list of items is empty"),
    ("items: [x, y, x]\n", "'x' is listed twice"),
    ("items: [x, y]\nreverse: [z]\n", "'z' is not one of this scale's items"),
    ("items: [wl1, wl2]\nreverse: [wl3]\n", "did you mean"),
    ("items: [x, y]\nscore: median\n", "score must be mean or sum"),
    ("items: [x, y]\nmin_answered: 0\n", "between 1 and 2"),
    ("items: [x, y]\nmin_answered: 3\n", "between 1 and 2"),
    ("items: [x, y]\nmin_answered: 1.5\n", "fraction must lie in (0, 1]"),
    ("items: [x, y]\nmin_answered: 0.0\n", "fraction must lie in (0, 1]"),
    ("items: [x, y]\nmin_answered: half\n", "whole count of items"),
    ("items: [x, y]\nmin_answered: true\n", "whole count of items"),
    ("items: [x, y]\nmin_answered: 0x2\n", "whole count of items"),
    ("items: [x, y]\nwording: {q: text}\n", "'q' is not one of this scale's items"),
    ("title: no items\n", "needs a list of `items`"),
])
def test_bad_scale_definitions(write_file, body, expected):
    found = problems_of(write_file, one_scale(body))
    assert any(expected in p for p in found), found
    assert all("bad.yaml:" in p for p in found)  # every problem names the file and a line


@pytest.mark.parametrize(("response", "expected"), [
    ("response: {min: 5, max: 1}", "min (5) must be less than max (1)"),
    ("response: {min: 3, max: 3}", "must be less than max"),
    ("response: {min: 1, max: 5, labels: {0: Never}}", "label code 0 is outside the answer range 1..5"),
    ("response: {min: 1, max: 5, missing_codes: [3]}", "missing code 3 lies inside the answer range"),
    ("response: {min: 1}", "`max` is required"),
    ("response: {min: one, max: 5}", "expected a number"),
    ("response: {min: 1.5, max: 5}", "expected a whole number"),
    ("response: {min: 1, max: 5, labels: {1: Agree, 2: agree}}", "also the label of 1"),
])
def test_bad_answer_formats(write_file, response, expected):
    found = problems_of(write_file, one_scale("items: [x, y]\n", response=response))
    assert any(expected in p for p in found), found


def test_duplicate_scale_names(write_file):
    found = problems_of(write_file, """\
        response: {min: 1, max: 5}
        scales:
          a: {items: [x, y]}
          a: {items: [z, w]}
        """)
    assert any(":4 (scales.a)" in p and "given twice" in p for p in found)


def test_every_problem_is_reported_at_once(write_file):
    found = problems_of(write_file, """\
        titel: x
        response: {min: 1, max: 5, missing_codes: [2]}
        scales:
          a: {items: [x, x], score: total}
          b: {items: [y], reverse: [q]}
        """)
    assert len(found) >= 5


def test_object_building_tags_are_refused_and_never_run(write_file, tmp_path):
    marker = tmp_path / "ran"
    found = problems_of(write_file, f"""\
        response: {{min: 1, max: 5}}
        scales:
          a:
            items: [x, y]
            title: !!python/object/apply:os.system ["touch {marker}"]
        """)
    assert any("YAML tag" in p and "not allowed" in p and ":5" in p for p in found)
    assert not marker.exists()


def test_custom_tags_are_refused(write_file):
    found = problems_of(write_file, "response: !answers {min: 1, max: 5}\nscales: {a: {items: [x]}}\n")
    assert any("YAML tag '!answers'" in p for p in found)


def test_an_item_may_serve_several_scales_and_single_items_are_allowed(write_file):
    spec = load_spec(write_file("s.yaml", """\
        response: {min: 1, max: 5}
        scales:
          total: {items: [a, b, c, d]}
          first: {items: [a, b]}
          single: {items: [d]}
        """.replace("        ", "")))
    assert spec.items == ("a", "b", "c", "d")
    assert spec.scales["single"].k == 1


def test_an_item_cannot_have_two_answer_formats(write_file):
    found = problems_of(write_file, """\
        response: {min: 1, max: 5}
        scales:
          a: {items: [x, y]}
          b: {items: [x, z], response: {max: 7}}
        """)
    assert any("different answer format" in p for p in found)


def test_syntax_errors_and_unreadable_files(write_file, tmp_path):
    found = problems_of(write_file, "scales:\n  a: {items: [x, y]\n")
    assert any("not valid YAML" in p for p in found)
    _, problems = check_spec(tmp_path / "absent.yaml")
    assert "scale file not found" in str(problems[0])
    path = write_file("latin.yaml", "title: Caf\xe9\n".encode("latin-1"))
    _, problems = check_spec(path)
    assert "not UTF-8" in str(problems[0])
    _, problems = check_spec(write_file("empty.yaml", ""))
    assert "empty" in str(problems[0])


def test_load_spec_raises_with_a_one_line_summary(write_file):
    path = write_file("bad.yaml", one_scale("items: [x, x]\nscore: median\n"))
    with pytest.raises(SpecError) as caught:
        load_spec(path)
    message = str(caught.value)
    assert "\n" not in message
    assert "1 more problem" in message
    assert len(caught.value.problems) == 2


def test_lint_lists_every_problem_exits_3_and_changes_nothing(write_file, tmp_path, capsys):
    path = write_file("bad.yaml", BASIC_SCALES.replace("score: mean", "score: median").replace("reverse: [wl3]", "reverse: [wl4]"))
    before = folder_fingerprint(tmp_path)
    code = main(["lint", "--scales", str(path)])
    out = capsys.readouterr()
    assert code == 3
    assert "score must be mean or sum" in out.out
    assert "'wl4' is not one of this scale's items" in out.out
    assert "Traceback" not in out.out + out.err
    assert folder_fingerprint(tmp_path) == before


def test_other_commands_report_a_bad_scale_file_in_one_error_line(basic_files, write_file, tmp_path, capsys):
    data, _ = basic_files
    bad = write_file("bad.yaml", BASIC_SCALES.replace("max: 5", "max: 1"))
    before = folder_fingerprint(tmp_path)
    code = main(["score", str(data), "--scales", str(bad), "--out", str(tmp_path / "scores.csv")])
    err = capsys.readouterr().err
    assert code == 3
    assert err.startswith("error: ")
    assert err.count("\n") == 1
    assert "bad.yaml:" in err
    assert folder_fingerprint(tmp_path) == before


def test_ordered_group_levels(write_file):
    spec = load_spec(write_file("s.yaml", "groups: [shift, {tenure: [new, mid, long]}]\n"
                                          "response: {min: 1, max: 5}\nscales: {a: {items: [x, y]}}\n"))
    assert spec.groups == ("shift", "tenure")
    assert dict(spec.group_levels) == {"tenure": ("new", "mid", "long")}
    found = problems_of(write_file, "groups: [{tenure: [new, new]}, shift, shift]\n"
                                    "response: {min: 1, max: 5}\nscales: {a: {items: [x, y]}}\n")
    assert any("a level is listed twice" in p for p in found)
    assert any("'shift' is listed twice" in p for p in found)


# -- hostile and ambiguous scale files --------------------------------------------------------------------

def test_a_label_that_is_another_codes_number_is_refused(write_file):
    # '5' labelling code 1 would read as 1 in a column holding any word and as 5 in one of digits only
    found = problems_of(write_file, one_scale("items: [x, y]\n", response='response: {min: 1, max: 5, labels: '
                                                                          '{1: "5", 2: "4", 5: "1"}}'))
    assert sum("is the number of another code" in p for p in found) == 3, found
    assert any("(response.labels.1)" in p and "'5'" in p for p in found)
    # a label that is its own code's number, or a number no code has, is not ambiguous
    load_spec(write_file("ok.yaml", one_scale("items: [x, y]\n", response='response: {min: 1, max: 5, labels: '
                                                                          '{1: "1", 2: "20"}}')))


@pytest.mark.parametrize("written", ["0x5", "0o5", "0b101", "5_0", "1:30", "+.inf"])
def test_only_plain_decimal_numbers_are_numbers(write_file, written):
    # YAML 1.1 reads these as numbers (0x5 is 5, 1:30 is 90); nobody means them in an answer format
    found = problems_of(write_file, one_scale("items: [x, y]\n", response=f"response: {{min: 1, max: {written}}}"))
    assert any("(response.max)" in p and "expected a" in p and "number" in p for p in found), found
    found = problems_of(write_file, one_scale("items: [x, y]\n", response="response: {min: 1, max: 5, "
                                                                          "missing_codes: [0x9], labels: {0x1: a}}"))
    assert any("missing_codes[0]" in p and "'0x9'" in p for p in found), found
    assert any("labels" in p and "'0x1'" in p for p in found), found


@pytest.mark.parametrize(("response", "expected"), [
    ("response: {min: 1, max: 100000000000000000000000000}", "goes beyond +-1,000,000"),
    ("response: {min: 1, max: 5000000}", "goes beyond +-1,000,000"),
    ("response: {min: 0, max: 1001}", "has 1,002 levels; rating answers have at most 1,001"),
    ("response: {min: 1, max: 5, missing_codes: [100000000000000000000000000]}", "larger than 1e+15"),
])
def test_answer_ranges_that_cannot_be_rating_answers_are_refused(write_file, response, expected):
    found = problems_of(write_file, one_scale("items: [x, y]\n", response=response))
    assert any(expected in p and "docs/limits.md" in p for p in found), found


def test_the_widest_allowed_range_is_read(write_file):
    spec = load_spec(write_file("wide.yaml", one_scale("items: [x, y]\n", response="response: {min: 0, max: 1000}")))
    assert spec.response.max - spec.response.min == 1000


def test_a_huge_range_ends_in_one_error_line_not_an_overflow(basic_files, write_file, tmp_path, capsys):
    data, _ = basic_files
    bad = write_file("bad.yaml", BASIC_SCALES.replace("max: 5", "max: 100000000000000000000000000"))
    code = main(["reliability", str(data), "--scales", str(bad), "--format", "json"])
    err = capsys.readouterr().err
    assert code == 3
    assert err.count("\n") == 1
    assert "Overflow" not in err
    assert "docs/limits.md" in err


def test_a_merge_key_gets_a_plain_message(write_file):
    found = problems_of(write_file, """\
        base: &base {min: 1, max: 5}
        response:
          <<: *base
        scales: {a: {items: [x, y]}}
        """)
    assert any("merge keys (<<) are not allowed" in p for p in found), found
    assert not any("object at 0x" in p for p in found), found


# -- texts read as "no answer" ----------------------------------------------------------------------------

def test_missing_texts_default_top_level_and_per_scale(write_file):
    spec = load_spec(write_file("s.yaml", one_scale("items: [x, y]\n")))
    assert spec.missing_texts == ("NA", "N/A", "#N/A")
    assert spec.response.missing_texts == ("NA", "N/A", "#N/A")
    spec = load_spec(write_file("t.yaml", """\
        version: 1
        missing_texts: [no answer, refused]
        response: {min: 1, max: 5}
        scales:
          a: {items: [x, y]}
          b: {items: [z], response: {missing_texts: [skipped]}}
        """.replace("        ", "")))
    assert spec.missing_texts == ("no answer", "refused")
    assert spec.scales["a"].response.missing_texts == ("no answer", "refused")
    assert spec.scales["b"].response.missing_texts == ("skipped",)


def test_a_text_both_label_and_missing_text_is_an_error(write_file):
    found = problems_of(write_file, one_scale("items: [x, y]\n", response="response: {min: 1, max: 3, labels: "
                                                                          "{1: None, 2: Some, 3: Many}, "
                                                                          "missing_texts: [none, NA]}"))
    assert any("'none' is both an answer label and a missing text" in p for p in found), found
    found = problems_of(write_file, "version: 1\nmissing_texts: [Some]\nresponse: {min: 1, max: 3, labels: "
                                    "{1: None, 2: Some, 3: Many}}\nscales: {a: {items: [x]}}\n")
    assert any("'Some' is both" in p for p in found), found


def test_a_default_missing_text_that_is_a_label_stays_an_answer(write_file):
    spec = load_spec(write_file("s.yaml", one_scale("items: [x, y]\n", response="response: {min: 1, max: 3, "
                                                                                "labels: {1: n/a, 2: b, 3: c}}")))
    assert spec.response.missing_texts == ("NA", "#N/A")


def test_a_number_is_not_a_missing_text(write_file):
    found = problems_of(write_file, one_scale("items: [x, y]\n", response="response: {min: 1, max: 5, "
                                                                          "missing_texts: [NA, 99]}"))
    assert any("'99' is a number: list it in missing_codes" in p for p in found), found
