"""One default seed: every command and the report draw the same random numbers on the same data."""
from __future__ import annotations

import contextlib
import io
import json
from pathlib import Path

import click
import pytest

from scalewright.cli import COMMANDS, cli, main
from scalewright.seeds import DEFAULT_SEED


def _json(args: list[str]) -> dict:
    buffer = io.StringIO()
    with contextlib.redirect_stdout(buffer):
        assert main(args) == 0
    return json.loads(buffer.getvalue())


@pytest.mark.parametrize("name", list(COMMANDS))
def test_every_seed_option_defaults_to_the_one_seed(name):
    command = cli.get_command(click.Context(cli), name)
    seeds = [p for p in command.params if p.name == "seed"]
    for option in seeds:
        # report keeps None as "not given" and fills in the same default (checked below)
        assert option.default in (DEFAULT_SEED, None), name
        if option.default is None:  # its help then names the seed it falls back on
            assert str(DEFAULT_SEED) in (option.help or ""), name


def test_command_and_report_give_the_same_random_results(tmp_path: Path):
    from scalewright import report
    from scalewright.cli.demo import write_demo_inputs
    from scalewright.data import read_responses
    from scalewright.spec import load_spec

    data, scales = write_demo_inputs(tmp_path, seed=3, n=120)
    spec = load_spec(scales)
    responses = read_responses(data, spec)
    options = report.ReportOptions(iterations=10)
    assert options.seed == DEFAULT_SEED
    in_report = report._structure(spec, responses, options).to_dict()
    structure = _json(["structure", str(data), "-s", str(scales), "--iterations", "10", "--format", "json"])
    assert structure["options"]["seed"] == DEFAULT_SEED
    assert structure["parallel"]["random"] == pytest.approx(in_report["parallel"]["random"], rel=0, abs=0)
    shape = _json(["shape", str(data), "-s", str(scales), "--format", "json"])
    for name, result in report._shape(spec, responses, options, None).items():
        assert shape["scales"][name]["all"]["dip_pvalue"] == result.overall.dip_p, name
