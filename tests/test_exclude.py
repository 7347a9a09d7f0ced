"""`--exclude FILE` in every analysis command: the listed respondents are set aside and the count reported."""
from __future__ import annotations

import importlib
import json

import pytest

from scalewright.cli import COMMANDS, main

from .test_quality_cli import write_survey

#: commands that read DATA --scales FILE (demo writes its own data, draft has no scale file)
# demo makes its own data and draft has no scale file yet; lint checks the exclusion list against the data
ANALYSIS_COMMANDS = [name for name in COMMANDS if name not in ("demo", "draft")]

#: extra arguments some commands need to run on the small survey
EXTRA = {"compare": ["--by", "band"], "tally": ["--columns", "band"], "report": ["--iterations", "5"]}


def _option_names(command) -> set[str]:
    module = importlib.import_module(f"scalewright.cli.{COMMANDS[command]}")
    return {param.name for param in getattr(module, command.replace("-", "_")).params}


def _run(command, data, scales, tmp_path, capsys, *extra):
    args = [command, str(data), "--scales", str(scales), *EXTRA.get(command, []), *extra]
    if command == "report":
        target = tmp_path / f"report{len(extra)}"
        args += ["--out", str(target)]
    elif "fmt" in _option_names(command):
        args += ["--format", "json"]
    code = main(args)
    captured = capsys.readouterr()
    text = captured.out + captured.err
    if command == "report" and (tmp_path / f"report{len(extra)}").is_dir():
        for path in (tmp_path / f"report{len(extra)}").rglob("*.json"):
            text += path.read_text(encoding="utf-8")
    return code, text


@pytest.mark.parametrize("command", ANALYSIS_COMMANDS)
def test_exclude_sets_respondents_aside(command, tmp_path, capsys):
    importlib.import_module(f"scalewright.cli.{COMMANDS[command]}")
    assert "exclude" in _option_names(command), f"{command} has no --exclude option"
    data, scales = write_survey(tmp_path)
    import pandas as pd

    frame = pd.read_csv(data)
    frame["band"] = ["early", "late"] * (len(frame) // 2)
    frame.to_csv(data, index=False)
    exclude = tmp_path / "aside.txt"
    exclude.write_text("W000\nW001\nW002\nnot-an-id\n", encoding="utf-8")

    code, plain = _run(command, data, scales, tmp_path, capsys)
    assert code == 0, plain
    code, text = _run(command, data, scales, tmp_path, capsys, "--exclude", str(exclude))
    assert code == 0, text
    assert "3 respondent(s) set aside" in text, f"{command} does not report the respondents it set aside"
    assert "1 not found" in text
    if command in ("screen", "score", "reliability", "shape"):
        assert text != plain


def test_exclude_missing_file_is_an_error(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    assert main(["screen", str(data), "--scales", str(scales), "--exclude", str(tmp_path / "none.txt")]) != 0
    assert "exclusion list not found" in capsys.readouterr().err


def test_screen_ids_disappear_after_exclusion(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    exclude = tmp_path / "aside.csv"
    exclude.write_text("id,flagged\nW000,yes\nW005,yes\n", encoding="utf-8")
    assert main(["screen", str(data), "--scales", str(scales), "--exclude", str(exclude), "-f", "json"]) == 0
    ids = {r["id"] for r in json.loads(capsys.readouterr().out)["respondents"]}
    assert "W000" not in ids and "W005" not in ids and len(ids) == 118
