"""`report --engine stream`: the report of a file read in blocks equals the whole-file report section by
section (the screen's section: tests/test_engine_screen.py).

The reference is the whole-file report (``--engine memory``) of the same file: its statistics are held to
outside references in the tests of each analysis; here only the route differs.
"""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from .engine_data import SCALES, assert_same_json, survey_rows, write_csv
from .test_engine_stream import SMALL_BLOCK, run


def same_to_rounding(a, b, path=""):
    """Counts and texts exactly; floats to 1e-9 (sums over distinct score values instead of over rows)."""
    assert_same_json(a, b, path, rel=1e-9)


@pytest.fixture(scope="module")
def reports(tmp_path_factory) -> tuple[Path, Path, str]:
    folder = tmp_path_factory.mktemp("streamed-report")
    scales = folder / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    data = write_csv(folder / "survey.csv", survey_rows(1200))
    code_m, _, err_m = run("report", str(data), "-s", str(scales), "--out", str(folder / "whole"), "--engine",
                           "memory", "-q", "--by", "shift", "--iterations", "5")
    code_s, _, err_s = run("report", str(data), "-s", str(scales), "--out", str(folder / "streamed"), "--engine",
                           "stream", "--block-size", SMALL_BLOCK, "-q", "--by", "shift", "--iterations", "5")
    assert code_m == 0, err_m
    assert code_s == 0, err_s
    assert "read whole" not in err_s
    return folder / "whole", folder / "streamed", err_s


@pytest.mark.slow  # two full reports with figures: about 10 s of CPU
def test_every_streamed_section_equals_the_whole_file_report(reports):
    whole, streamed, _ = reports
    a = json.loads((whole / "results.json").read_text(encoding="utf-8"))
    b = json.loads((streamed / "results.json").read_text(encoding="utf-8"))
    for section in ("reading", "scores", "shape", "answers", "structure", "tally", "title", "compare", "confirm",
                    "reliability"):
        same_to_rounding(b[section], a[section], section)
    assert (streamed / "scores.csv").read_bytes() == (whole / "scores.csv").read_bytes()
    # the screen: every part, and the flagged respondents (results.json of the file read in blocks holds the
    # first flagged; screen.csv every respondent)
    screen_a, screen_b = a["screen"], b["screen"]
    flagged = [r for r in screen_a.pop("respondents") if r["flagged"]]
    same_to_rounding(screen_b.pop("respondents"), flagged[:1000], "screen.respondents")
    same_to_rounding(screen_b, screen_a, "screen")


@pytest.mark.slow
def test_no_section_is_left_out(reports):
    _, streamed, _ = reports
    b = json.loads((streamed / "results.json").read_text(encoding="utf-8"))
    assert b["screen"]["summary"]["n"] == 1200
    assert not [note for note in b["notes"] if isinstance(note, dict) and "section" in note]
    page = (streamed / "index.html").read_text(encoding="utf-8")
    assert "Not in this report" not in page
    assert "screen.csv lists every respondent" in page
    assert "not a diagnosis" in page  # the cautions of every report


@pytest.mark.slow
def test_figures_drawn_from_the_summaries(reports):
    whole, streamed, _ = reports
    drawn = {p.name for p in (streamed / "figures").iterdir()}
    assert drawn  # histograms, box plots and answer bars from the counts
    assert drawn == {p.name for p in (whole / "figures").iterdir()}


def _blocks(spec, comparisons: dict, confirm) -> dict:
    """results.json's ``compare`` and ``confirm`` blocks and the ``confirmatory`` records beside reliability,
    built by the report's own code (``ReportResults.compare_block``) from these results."""
    from types import SimpleNamespace

    from scalewright.present.confirm import confirmatory_summary
    from scalewright.report import ReportResults
    from scalewright.results import to_jsonable

    scales = {name: SimpleNamespace(comparisons=tuple(comparisons[column][i] for column in comparisons))
              for i, name in enumerate(spec.scales)}
    holder = SimpleNamespace(scales=scales, confirm=confirm)
    body = {"compare": ReportResults.compare_block(holder),  # type: ignore[arg-type]
            "confirm": confirm.to_dict(),
            "confirmatory": {name: confirmatory_summary(model) for name, model in confirm.models.items()}}
    return json.loads(json.dumps(to_jsonable(body)))


def test_streamed_compare_and_confirm_blocks_equal_the_whole_file_report(tmp_path):
    """The report's comparisons (with each scale's invariance by shift) and confirmatory models from the
    merged summaries of a file read in blocks of 4 KiB, against the whole-file report's own functions on the
    rows (``analyse_compare``: pingouin and scipy; the models: semopy-checked in tests/test_confirm.py)."""
    from scalewright.analyses.compare import analyse_compare
    from scalewright.analyses.confirm import WHOLE_FILE
    from scalewright.analyses.report_streamed import confirm_for_report, report_plan
    from scalewright.analyses.summarised_groups import compare_from_summaries
    from scalewright.cli.common import load_inputs
    from scalewright.engine.stream import stream_summary
    from scalewright.report import ReportOptions
    from scalewright.report import _confirm as whole_file_confirm

    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    data = write_csv(tmp_path / "survey.csv", survey_rows(500))
    inputs = load_inputs(data, scales)
    options = ReportOptions(by=("shift",))
    whole = _blocks(inputs.spec, analyse_compare(inputs.spec, inputs.responses, by=options.by),
                    whole_file_confirm(inputs.spec, inputs.responses, options))
    summary, outcome = stream_summary(data, inputs.spec, report_plan(inputs.spec, options),
                                      block_bytes=int(SMALL_BLOCK))
    streamed = _blocks(inputs.spec, compare_from_summaries(inputs.spec, summary, by=options.by),
                       confirm_for_report(inputs.spec, summary, outcome.n, options))
    assert whole["compare"]["scales"]  # both scales compared across the shifts
    assert set(whole["confirm"]["invariance"]["shift"]) == set(inputs.spec.scales)
    assert set(whole["confirmatory"]) == {*inputs.spec.scales, WHOLE_FILE}  # the whole-file model fitted too
    same_to_rounding(streamed, whole)


def test_options_that_need_the_rows_keep_the_whole_file_route(tmp_path):
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    data = write_csv(tmp_path / "survey.csv", survey_rows(60))
    listed = tmp_path / "set-aside.txt"
    listed.write_text("s00001\n", encoding="utf-8")
    code, _, err = run("report", str(data), "-s", str(scales), "--out", str(tmp_path / "r"), "--engine", "stream",
                       "--exclude", str(listed))
    assert code == 2
    assert "--exclude" in err
    assert not (tmp_path / "r").exists()


def test_answer_distributions_from_answer_counts_equal_the_matrix_route(tmp_path):
    """Reference: ``stats.tally.answer_distribution`` of the answer matrix (held to pandas' value counts in
    tests/test_tally.py), against the same distributions from the merged answer counts of many blocks."""
    import numpy as np

    from scalewright.analyses.report_streamed import answer_distribution_from_counts
    from scalewright.spec import load_spec
    from scalewright.stats.tally import answer_distribution
    from scalewright.summaries import AnswerCounts, merge_all

    (tmp_path / "scales.yaml").write_text(SCALES, encoding="utf-8")
    spec = load_spec(tmp_path / "scales.yaml")
    scale = spec.scales["workload"]
    rng = np.random.default_rng(4)
    codes = rng.integers(0, 5, size=(700, scale.k)).astype(np.uint8)
    codes[rng.random(codes.shape) < 0.1] = 255  # missing
    merged = merge_all([AnswerCounts.from_codes(block, 5) for block in np.array_split(codes, 9)])
    values = np.where(codes == 255, np.nan, codes + 1.0)
    expected = answer_distribution(values, scale.response.levels, scale.response.labels, item_names=scale.items,
                                   min_cell=5)
    assert answer_distribution_from_counts(scale, merged, min_cell=5).to_dict() == expected.to_dict()
