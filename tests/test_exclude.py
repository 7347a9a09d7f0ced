"""`--exclude FILE` in every analysis command: the listed respondents are set aside and the count reported."""
from __future__ import annotations

import csv
import importlib
import json
from pathlib import Path

import pandas as pd
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
    assert "W000" not in ids
    assert "W005" not in ids
    assert len(ids) == 118


# ---- the screen file round trip, and lists that would set aside everyone or no one -------------------------


def _screen_file(tmp_path, capsys, data, scales, *extra) -> tuple[Path, list[dict[str, str]]]:
    target = tmp_path / "screen.csv"
    assert main(["screen", str(data), "--scales", str(scales), "--duration-column", "minutes",
                 "--out", str(target), *extra]) == 0
    capsys.readouterr()
    with open(target, newline="", encoding="utf-8") as handle:
        return target, list(csv.DictReader(handle))


def _screen_json(data, scales, capsys, *extra) -> dict:
    code = main(["screen", str(data), "--scales", str(scales), "-f", "json", *extra])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def test_a_full_screen_file_sets_aside_only_the_flagged(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    target, rows = _screen_file(tmp_path, capsys, data, scales)  # every respondent, flagged yes or no
    assert len(rows) == 120
    flagged = {r["id"] for r in rows if r["flagged"] == "yes"}
    assert 0 < len(flagged) < 120
    doc = _screen_json(data, scales, capsys, "--exclude", str(target))
    assert doc["summary"]["n"] == 120 - len(flagged)
    assert not flagged & {r["id"] for r in doc["respondents"]}
    notes = " ".join(n for n in doc["notes"] if isinstance(n, str))
    assert f"{len(flagged)} respondent(s) set aside" in notes
    assert "column 'id'" in notes
    assert "only its" in notes
    assert f"{120 - len(flagged)} row(s) not flagged" in notes
    assert doc["exclusion"] == {"file": str(target), "column": "id", "flagged_column": "flagged",
                                "listed": len(flagged), "set_aside": len(flagged),
                                "not_flagged": 120 - len(flagged), "not_found": 0, "not_found_first": []}


def test_ids_not_in_the_data_are_counted_and_named(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    listing = tmp_path / "aside.txt"
    listing.write_text("W000\nX-1\nX-2\nW003\n", encoding="utf-8")
    doc = _screen_json(data, scales, capsys, "--exclude", str(listing))
    assert doc["summary"]["n"] == 118
    assert "2 listed id(s) are not in the data (first: X-1, X-2)" in doc["notes"]
    assert doc["exclusion"]["not_found_first"] == ["X-1", "X-2"]


def test_the_scale_files_id_column_is_preferred_over_the_first(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    listing = tmp_path / "aside.csv"
    listing.write_text("reason,staff_id\ncopied,W004\ncopied,W005\n", encoding="utf-8")
    doc = _screen_json(data, scales, capsys, "--exclude", str(listing))
    notes = " ".join(n for n in doc["notes"] if isinstance(n, str))
    assert doc["summary"]["n"] == 118
    assert "column 'staff_id'" in notes


@pytest.mark.parametrize(("content", "message"), [
    ("id,flagged\n" + "".join(f"W{i:03d},yes\n" for i in range(120)), "setting every one aside"),
    ("staff_id\nQ1\nQ2\nQ3\n", "none of the 3 listed id(s)"),
])
def test_setting_everyone_or_no_one_aside_is_an_error(tmp_path, capsys, content, message):
    data, scales = write_survey(tmp_path)
    listing = tmp_path / "aside.csv"
    listing.write_text(content, encoding="utf-8")
    for command in ("screen", "reliability", "lint"):
        code = main([command, str(data), "--scales", str(scales), "--exclude", str(listing)])
        captured = capsys.readouterr()
        assert code == 4, (command, captured)
        assert message in captured.err + captured.out
        if command != "lint":
            assert captured.err.startswith("error: ")
            assert captured.err.count("\n") == 1
    report = tmp_path / "report"
    assert main(["report", str(data), "--scales", str(scales), "--exclude", str(listing), "--out", str(report),
                 "-q"]) == 4
    assert not report.exists()


def test_a_flagged_cell_that_is_neither_yes_nor_no_is_refused(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    listing = tmp_path / "aside.csv"
    listing.write_text("id,flagged\nW000,yes\nW001,maybe\n", encoding="utf-8")
    assert main(["screen", str(data), "--scales", str(scales), "--exclude", str(listing)]) == 4
    assert "row 3, column flagged" in capsys.readouterr().err


def test_ids_a_spreadsheet_would_run_survive_the_screen_round_trip(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    frame = pd.read_csv(data)
    hostile = ["-17", "@home", "=SUM(1)", "+44 20"]
    frame.loc[:3, "staff_id"] = hostile  # W000 (a straight-liner) and W001 (a speeder) are among them
    frame.loc[2:3, [c for c in frame.columns if c[:2] in ("pa", "tm", "vo")]] = 4  # two more straight-liners
    frame.to_csv(data, index=False)
    target, rows = _screen_file(tmp_path, capsys, data, scales, "--flagged-only")
    written = {r["id"] for r in rows}
    assert {"'-17", "'@home", "'=SUM(1)", "'+44 20"} <= written  # neutralised in the file
    doc = _screen_json(data, scales, capsys, "--exclude", str(target))
    left = {r["id"] for r in doc["respondents"]}
    assert not set(hostile) & left
    assert doc["summary"]["n"] == 120 - len(rows)
    assert doc["exclusion"]["not_found"] == 0
