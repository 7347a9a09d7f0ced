"""The command line's small courtesies: did you mean, lint as JSON, whole numbers, examples in every help."""
from __future__ import annotations

import contextlib
import io
import json
import shlex

import click
import pytest

from scalewright.cli import COMMANDS, cli, main
from scalewright.present.numbers import format_value


def _run(args: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(args)
    return code, out.getvalue(), err.getvalue()


@pytest.mark.parametrize(("typed", "meant"), [("reliabilty", "reliability"), ("shap", "shape"), ("sreen", "screen")])
def test_mistyped_command_gets_did_you_mean(typed, meant):
    code, _, err = _run([typed, "x.csv"])
    assert code == 2
    assert err.startswith("error: ")
    assert f"did you mean '{meant}'?" in err


def test_unknown_command_lists_the_commands():
    code, _, err = _run(["zzzz"])
    assert code == 2
    assert "reliability" in err
    assert "Traceback" not in err


@pytest.mark.parametrize("name", list(COMMANDS))
def test_every_help_ends_with_examples_that_parse(name):
    code, out, _ = _run([name, "--help"])
    assert code == 0
    tail = [line.strip() for line in out.rstrip().splitlines()[-3:]]
    examples = [line for line in tail if line.startswith(f"scalewright {name}")]
    assert 1 <= len(examples) <= 2, out
    assert tail[-1] == examples[-1], out
    command = cli.get_command(click.Context(cli), name)
    for example in examples:  # every option of the example exists and takes its value
        args = shlex.split(example)[2:]
        context = command.make_context(name, args, resilient_parsing=True)
        assert not context.args or name == "tally", example


def test_lint_json_lists_every_problem(tmp_path):
    scales = tmp_path / "bad.yaml"
    scales.write_text("version: 1\nscales: {a: {items: [x], reverse: [y]}}\n", encoding="utf-8")
    code, out, _ = _run(["lint", "--scales", str(scales), "--format", "json"])
    document = json.loads(out)
    assert code == 3
    assert document["exit_code"] == 3
    assert document["clean"] is False
    assert document["tool"]["name"] == "scalewright"
    assert document["input"]["scales_sha256"]
    assert {p["where"] for p in document["problems"]} >= {"scales.a.reverse"}
    assert all(p["line"] == 2 for p in document["problems"])


def test_lint_json_of_a_clean_file(tmp_path):
    scales = tmp_path / "ok.yaml"
    scales.write_text("version: 1\nresponse: {min: 1, max: 5}\nscales: {a: {items: [x, y]}}\n", encoding="utf-8")
    code, out, _ = _run(["lint", "-s", str(scales), "-f", "json"])
    assert code == 0
    assert json.loads(out)["clean"] is True
    assert json.loads(out)["problems"] == []


@pytest.mark.parametrize(("value", "shown"), [(12.0, "12"), (312, "312"), (123.5, "123.50"), (17.42, "17.42")])
def test_whole_numbers_print_whole(value, shown):
    # degrees of freedom and U statistics are counts or half-counts: "12", not "12.00"
    assert format_value(value, "whole") == shown


def test_compare_tables_show_df_and_u_whole(tmp_path):
    from scalewright.cli.demo import write_demo_inputs

    data, scales = write_demo_inputs(tmp_path, seed=2, n=80)
    code, out, _ = _run(["compare", str(data), "-s", str(scales), "--by", "shift", "--format", "md"])
    assert code == 0
    assert "Kruskal" in out  # the demo's shift column has three levels
    for line in out.splitlines():
        if line.startswith("| Mann-Whitney U") or line.startswith("| Kruskal"):
            cells = [c.strip() for c in line.strip("|").split("|")]
            statistic, df = cells[1], cells[2]
            assert not df.endswith(".00"), line
            if "Mann" in line:
                assert not statistic.endswith(".00"), line
