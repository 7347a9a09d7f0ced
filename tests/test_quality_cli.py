"""`scalewright screen` end to end on a small generated survey."""
from __future__ import annotations

import csv
import json
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scalewright.cli import main

SCALES = """\
version: 1
title: Ward climate pulse
id_column: staff_id
response: {min: 1, max: 5, missing_codes: [9]}
scales:
  pace: {title: Pace, items: [pa1, pa2, pa3, pa4], reverse: [pa2]}
  team: {title: Team, items: [tm1, tm2, tm3, tm4]}
  voice: {title: Voice, items: [vo1, vo2, vo3, vo4], reverse: [vo4]}
"""


#: the scale file without the voice scale: 8 items, too few for long-run and duplicate-answers by default
EIGHT_ITEM_SCALES = SCALES.replace("  voice: {title: Voice, items: [vo1, vo2, vo3, vo4], reverse: [vo4]}\n", "")


def write_survey(folder: Path, *, n: int = 120, seed: int = 5) -> tuple[Path, Path]:
    rng = np.random.default_rng(seed)
    trait = rng.normal(size=(n, 3))
    columns = {"staff_id": [f"W{i:03d}" for i in range(n)], "minutes": rng.normal(20, 3, size=n).round(1)}
    for s, (scale, reverse) in enumerate((("pa", {2}), ("tm", set()), ("vo", {4}))):
        for j in range(1, 5):
            keyed = np.clip(np.round(3 + trait[:, s] + rng.normal(scale=0.6, size=n)), 1, 5)
            columns[f"{scale}{j}"] = (6 - keyed if j in reverse else keyed).astype(int)
    frame = pd.DataFrame(columns)
    items = [c for c in frame.columns if c[:2] in ("pa", "tm", "vo")]
    frame.loc[0, items] = 2                 # straight-liner
    frame.loc[1, "minutes"] = 2.0           # speeder
    data = folder / "pulse.csv"
    frame.to_csv(data, index=False)
    scales = folder / "pulse.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    return data, scales


def test_screen_json_contract(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    assert main(["screen", str(data), "--scales", str(scales), "--duration-column", "minutes", "-f", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["command"] == "screen"
    assert doc["tool"]["name"] == "scalewright"
    by_id = {r["id"]: r for r in doc["respondents"]}
    assert len(by_id) == 120
    assert "long-run" in by_id["W000"]["flags"]
    assert by_id["W000"]["flagged"]
    assert "fast" in by_id["W001"]["flags"]
    assert by_id["W000"]["longstring"] == 12
    assert set(doc["summary"]["alpha_change"]) == {"pace", "team", "voice"}


def test_screen_out_csv_feeds_exclude(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    flagged = tmp_path / "flagged.csv"
    assert main(["screen", str(data), "--scales", str(scales), "--duration-column", "minutes",
                 "--out", str(flagged), "--flagged-only"]) == 0
    with open(flagged, newline="", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    assert list(rows[0])[0] == "id"
    assert {"W000", "W001"} <= {r["id"] for r in rows}
    assert all(r["flagged"] == "yes" for r in rows)
    assert all(r["explanation"] for r in rows)
    capsys.readouterr()
    assert main(["screen", str(data), "--scales", str(scales), "--exclude", str(flagged), "-f", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["summary"]["n"] == 120 - len(rows)
    assert any(f"{len(rows)} respondent(s) set aside" in note for note in doc["notes"])


def test_screen_table_explains_in_words(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    assert main(["screen", str(data), "--scales", str(scales), "-f", "table"]) == 0
    out = capsys.readouterr().out
    assert "Gave the same answer to 12 items in a row" in out
    assert "not a verdict on a person" in out


def test_screen_bad_options_and_columns(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    assert main(["screen", str(data), "--scales", str(scales), "--duration-column", "nope"]) != 0
    assert "error:" in capsys.readouterr().err
    assert main(["screen", str(data), "--scales", str(scales), "--mahalanobis-p", "0.2"]) != 0
    assert "--mahalanobis-p-weak" in capsys.readouterr().err
    before = data.read_bytes()
    assert main(["screen", str(data), "--scales", str(scales), "--out", str(data)]) != 0
    assert data.read_bytes() == before


def test_present_tables_have_raw_values(tmp_path):
    from scalewright.present.quality import screen_tables
    from scalewright.stats.screen_rules import ScreenThresholds
    from scalewright.stats.screening import screen_respondents

    raw = np.random.default_rng(2).integers(1, 6, size=(40, 9)).astype(float)
    raw[3] = 5
    keyed = {"a": raw[:, :3], "b": raw[:, 3:6], "c": raw[:, 6:]}
    long_runs_on_9 = ScreenThresholds(long_run_min_items=9)  # long runs judged on these 9 items (by default from 10)
    tables = screen_tables(screen_respondents(raw, keyed, ids=[str(i) for i in range(40)],
                                              thresholds=long_runs_on_9).to_dict())
    respondents = next(t for t in tables if t.key == "respondents")
    row = next(r for r in respondents.rows if r[0] == "3")
    assert row[2] == 9
    assert isinstance(row[3], float)
    assert "9 items in a row" in row[-1]


def test_a_check_that_did_not_run_is_not_checked_never_zero(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    assert main(["screen", str(data), "--scales", str(scales), "-f", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["summary"]["counts"]["fast"] is None
    assert doc["summary"]["not_checked"] == ["fast"]
    assert {"code": "fast-not-checked", "flag": "fast"} in doc["notes"]
    assert main(["screen", str(data), "--scales", str(scales), "-f", "table"]) == 0
    out = capsys.readouterr().out
    fast = next(line for line in out.splitlines() if line.startswith("fast "))
    assert "not checked" in fast
    assert not re.search(r"\b0\b", fast)
    assert "fast: not checked, as no column of completion times was named" in out
    # with the durations the check runs, and its count is a number
    assert main(["screen", str(data), "--scales", str(scales), "--duration-column", "minutes", "-f", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    # faster than a third of the median time (common practice, no source), counted with pandas
    minutes = pd.read_csv(data)["minutes"]
    assert doc["summary"]["counts"]["fast"] == int((minutes < minutes.median() / 3).sum())
    assert doc["summary"]["counts"]["fast"] >= 1  # the planted speeder
    assert doc["summary"]["not_checked"] == []


def test_few_items_leave_duplicate_answers_not_checked(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    scales.write_text(EIGHT_ITEM_SCALES)
    assert main(["screen", str(data), "--scales", str(scales), "-f", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)  # 8 items: identical rows that short can be chance
    assert doc["summary"]["counts"]["duplicate-answers"] is None
    assert {"code": "duplicates-not-checked", "flag": "duplicate-answers", "items": 8, "min_items": 10} in doc["notes"]


@pytest.mark.parametrize("engine", ["memory", "stream"])
def test_few_items_leave_long_runs_not_checked_unless_asked(tmp_path, capsys, engine):
    # on 8 items, attentive respondents give a run of 5 by chance too often (docs/screening.md): by default the
    # flag is not judged and says so; --long-run-min-items 8 judges it, and the planted straight-liner is flagged
    data, scales = write_survey(tmp_path)
    scales.write_text(EIGHT_ITEM_SCALES)
    base = ["screen", str(data), "--scales", str(scales), "-f", "json", "--engine", engine]
    assert main(base) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["summary"]["counts"]["long-run"] is None
    assert "long-run" in doc["summary"]["not_checked"]
    assert {"code": "long-run-not-checked", "flag": "long-run", "items": 8, "min_items": 10} in doc["notes"]
    assert not any("long-run" in r["flags"] for r in doc["respondents"])
    assert doc["thresholds"]["long_run_min_items"] == 10
    assert main([*base, "--long-run-min-items", "8"]) == 0
    asked = json.loads(capsys.readouterr().out)
    assert "long-run" not in asked["summary"]["not_checked"]
    assert "long-run" in next(r for r in asked["respondents"] if r["id"] == "W000")["flags"]
    assert asked["summary"]["long_run_items"] == doc["summary"]["long_run_items"] == 5  # 60% of 8, rounded up


@pytest.mark.parametrize("unit", ["s", "min"])
def test_durations_are_shown_with_their_unit(tmp_path, capsys, unit):
    data, scales = write_survey(tmp_path)
    args = ["screen", str(data), "--scales", str(scales), "--duration-column", "minutes", "-f", "table"]
    assert main(args + ([] if unit == "s" else ["--duration-unit", unit])) == 0
    out = capsys.readouterr().out
    assert re.search(rf"Took 2 {unit} against a median of 2\d {unit}", out), out


def test_duplicates_are_counted_listed_and_explained_alike(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    frame = pd.read_csv(data)
    items = [c for c in frame.columns if c[:2] in ("pa", "tm", "vo")]
    frame.loc[[6, 7], items] = frame.loc[5, items].to_numpy()  # an ordinary row three times: flagged
    frame.loc[8, items] = 2                                      # a second copy of W000's straight line
    frame.to_csv(data, index=False)
    assert main(["screen", str(data), "--scales", str(scales), "-f", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    duplicates = doc["duplicates"]
    by_status = dict(zip(map(tuple, duplicates["rows"]), duplicates["row_status"], strict=True))
    assert by_status == {("W000", "W008"): "long-run", ("W005", "W006", "W007"): "flagged"}
    assert doc["summary"]["counts"]["duplicate-answers"] == 3
    assert main(["screen", str(data), "--scales", str(scales), "-f", "table"]) == 0
    out = capsys.readouterr().out
    assert "2 group(s) of identical answer rows (5 respondents) are listed under Duplicate records; 3 of these " \
           "respondents carry duplicate-answers" in out
    assert re.search(r"identical answers +W000, W008 +no: counted under long-run", out)
    assert re.search(r"identical answers +W005, W006, W007 +yes", out)


def test_a_long_run_minimum_below_one_is_refused_in_one_line(tmp_path, capsys):
    data, scales = write_survey(tmp_path)
    before = data.read_bytes()
    assert main(["screen", str(data), "--scales", str(scales), "--long-run-min-items", "0"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ")
    assert "--long-run-min-items" in err
    assert len(err.strip().splitlines()) == 1
    assert data.read_bytes() == before


def test_the_reports_screen_finding_names_the_checks_that_did_not_run(tmp_path, capsys):
    # 8 items and no completion times: long-run, duplicate-answers and fast are not judged, so a count of
    # flagged respondents alone would read as a cleaner sample than was checked
    data, scales = write_survey(tmp_path)
    scales.write_text(EIGHT_ITEM_SCALES)
    assert main(["report", str(data), "--scales", str(scales), "--out", str(tmp_path / "report")]) == 0
    page = (tmp_path / "report" / "report.md").read_text(encoding="utf-8")
    unchecked = re.search(r"The careless-responding screen flagged [^\n]* Not checked here: ([^(]*) \(the screen's "
                          r"notes say why\)", page)
    assert unchecked is not None
    assert {"long-run", "duplicate-answers", "fast"} <= set(re.split(r", | and ", unchecked.group(1)))
