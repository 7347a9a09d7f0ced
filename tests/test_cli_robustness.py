"""Degenerate but valid data go through every analysis command without an error or a NaN in the JSON."""
from __future__ import annotations

import json
from functools import partial
from importlib.resources import files

import pytest

from scalewright import demo_data
from scalewright.cli import main

COMMANDS = {
    "score": [],
    "reliability": ["--pairwise"],
    "structure": ["--iterations", "3"],
    "shape": ["--items"],
    "compare": ["--by", "shift"],
    "tally": ["--columns", "shift,site"],
    "screen": [],
    "confirm": ["--by", "shift", "--pairwise"],
}


def degenerate(frame, case: str):
    items = [c for c in frame.columns if c[:2] in ("wl", "ts", "rc", "it")]
    if case == "constant-item":
        frame["wl2"] = "3"
    elif case == "one-answer-everywhere":
        for column in items:
            frame[column] = "2"
    elif case == "empty-item":
        frame["ts3"] = ""
    elif case == "empty-scale":
        for column in items:
            if column.startswith("rc"):
                frame[column] = ""
    elif case == "one-subgroup":
        frame["shift"] = "day"
    elif case == "three-rows":
        frame = frame.iloc[:3]
    return frame


def _refuse_constant(command: str, name: str):
    pytest.fail(f"{command}: {name} in JSON")


@pytest.fixture(scope="module")
def survey():
    frame, _ = demo_data.generate_staff_climate(seed=11, n=60)
    return frame.astype(str).replace("nan", "")


@pytest.mark.parametrize("case", ["constant-item", "one-answer-everywhere", "empty-item", "empty-scale",
                                  "one-subgroup", "three-rows"])
def test_every_command_survives_degenerate_data(survey, case, tmp_path, capsys):
    data = tmp_path / "survey.csv"
    degenerate(survey.copy(), case).to_csv(data, index=False)
    scales = tmp_path / "scales.yaml"
    scales.write_bytes((files("scalewright") / "resources" / "staff-climate.yaml").read_bytes())
    for command, extra in COMMANDS.items():
        code = main([command, str(data), "--scales", str(scales), "--format", "json", *extra])
        captured = capsys.readouterr()
        assert code == 0, (command, captured.err)
        assert "internal error" not in captured.err
        assert "Traceback" not in captured.err
        # the contract never carries NaN: strict JSON parsing refuses it
        json.loads(captured.out, parse_constant=partial(_refuse_constant, command))
