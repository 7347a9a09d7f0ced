"""`--missing listwise|pairwise|em` end to end: reliability, structure and the report."""
from __future__ import annotations

import json

import numpy as np
import pytest

from scalewright.cli import main

from .survey_files import answers_csv, climate_scales, rated_answers, run_json

SCALES = climate_scales(high=5, missing_code=9, climate_items=4)
ITEMS = ["wl1", "wl2", "wl3", "wl4", "cl1", "cl2", "cl3", "cl4"]


def make_csv(n: int, seed: int, *, gap_share: float) -> tuple[str, np.ndarray]:
    rng = np.random.default_rng(seed)
    factor = rng.standard_normal((n, 2))
    answers = np.hstack([rated_answers(factor[:, column], 4, rng, loading=0.8, unique=0.6, cuts=[-1.3, -0.4, 0.4, 1.3])
                         for column in (0, 1)])
    answers[:, 3] = 6 - answers[:, 3]
    gaps = rng.random(answers.shape) < gap_share
    gaps[:3] = True  # three respondents answered nothing
    coded = np.where(gaps, 9, answers)
    return answers_csv([f"s{i:04d}" for i in range(n)], dict(zip(ITEMS, coded.T, strict=True))), gaps


@pytest.fixture
def files(write_file):
    text, gaps = make_csv(300, 19, gap_share=0.04)
    return write_file("climate.csv", text), write_file("climate.yaml", SCALES), gaps


def test_reliability_em_reports_method_patterns_and_mcar_test(files, capsys):
    data, scales, gaps = files
    out = run_json(capsys, "reliability", str(data), "--scales", str(scales), "--format", "json", "--missing", "em")
    block = out["scales"]["workload"]
    missing_per_row = gaps[:, :4].sum(axis=1)
    # outside reference: the gaps written into the file, counted with numpy
    assert block["missing_method"] == "em"
    assert block["n_used"] == int((missing_per_row < 4).sum())
    assert block["missing_patterns"] == [{"n_missing": int(m), "respondents": int(c)}
                                         for m, c in enumerate(np.bincount(missing_per_row, minlength=5)) if c]
    assert set(block["mcar_test"]) == {"chi2", "df", "pvalue"}
    codes = [n["code"] for n in block["notes"] if isinstance(n, dict)]
    assert "em-basis-scale" in codes
    assert out["options"]["missing"] == "em"


def test_em_and_listwise_differ_and_listwise_warns_above_five_percent(files, capsys):
    data, scales, gaps = files
    listwise = run_json(capsys, "reliability", str(data), "--scales", str(scales), "--format", "json")
    em = run_json(capsys, "reliability", str(data), "--scales", str(scales), "--format", "json", "--missing", "em")
    block = listwise["scales"]["workload"]
    set_aside = int(gaps[:, :4].any(axis=1).sum())
    assert set_aside / 300 > 0.05  # about 15% of rows miss one of four items at 4% each
    assert block["missing_method"] == "listwise"
    assert block["n_used"] == 300 - set_aside
    warning = [n for n in block["notes"] if isinstance(n, dict) and n["code"] == "listwise-many-set-aside"]
    assert warning
    assert warning[0]["set_aside"] == set_aside
    assert em["scales"]["workload"]["alpha"] != block["alpha"]
    assert main(["reliability", str(data), "--scales", str(scales), "--format", "table"]) == 0
    text = capsys.readouterr().out
    assert "--missing em" in text
    assert "Little's test" in text


def test_pairwise_flag_is_a_synonym(files, capsys):
    data, scales, _ = files
    old = run_json(capsys, "reliability", str(data), "--scales", str(scales), "--format", "json", "--pairwise")
    new = run_json(capsys, "reliability", str(data), "--scales", str(scales), "--format", "json",
                   "--missing", "pairwise")
    assert old["scales"] == new["scales"]
    assert new["scales"]["climate"]["missing_method"] == "pairwise"


@pytest.mark.parametrize("extra", [["--pairwise", "--missing", "em"], ["--missing", "em", "--bootstrap", "50"],
                                   ["--missing", "mice"]])
def test_contradictory_or_unknown_choices_are_usage_errors(files, capsys, extra):
    data, scales, _ = files
    assert main(["reliability", str(data), "--scales", str(scales), "--format", "json", *extra]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    assert ("error" in err.lower())


def test_structure_em_uses_every_item_of_the_file(files, capsys):
    data, scales, gaps = files
    out = run_json(capsys, "structure", str(data), "--scales", str(scales), "--format", "json",
                   "--missing", "em", "--iterations", "5")
    assert out["missing_method"] == "em"
    assert out["n_used"] == int((gaps.sum(axis=1) < 8).sum())
    assert out["mcar_test"] is not None
    assert "em-basis-file" in [n["code"] for n in out["notes"] if isinstance(n, dict)]
    listwise = run_json(capsys, "structure", str(data), "--scales", str(scales), "--format", "json",
                        "--iterations", "5")
    assert listwise["missing_method"] == "listwise"
    assert listwise["n_used"] == int((~gaps.any(axis=1)).sum())


def test_report_em(files, tmp_path, capsys):
    data, scales, _ = files
    out = tmp_path / "report"
    assert main(["report", str(data), "--scales", str(scales), "--out", str(out), "--iterations", "5", "--quiet",
                 "--missing", "em"]) == 0
    results = json.loads((out / "results.json").read_text())
    assert results["options"]["missing"] == "em"
    assert results["reliability"]["scales"]["workload"]["missing_method"] == "em"
    assert results["structure"]["missing_method"] == "em"
    markdown = (out / "report.md").read_text()
    assert "EM algorithm" in markdown
    assert "Little's test" in markdown
    assert "not a diagnosis" in markdown
