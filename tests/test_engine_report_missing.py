"""`report --missing pairwise|em` on a file read in blocks: every section the summaries serve equals the
whole-file report's with the same option.

The reference is the whole-file report (:func:`scalewright.report.build_report` on the rows): its
statistics under pairwise deletion and EM are held to outside references in tests/test_missing.py,
tests/test_em.py, tests/test_confirm.py and tests/test_structure.py; here only the route differs.
"""
from __future__ import annotations

import json

import pytest

from .engine_data import SCALES, assert_same_json, survey_rows, write_csv
from .test_engine_stream import SMALL_BLOCK, run


def same_exactly(a, b, path=""):
    """Counts and texts exactly (an int never where a float stands), floats to 1e-12."""
    assert_same_json(a, b, path, exact_types=True)


SECTIONS = ("reading", "scores", "shape", "answers", "structure", "tally", "title", "compare", "confirm", "reliability")


@pytest.fixture(scope="module")
def survey(tmp_path_factory):
    from scalewright.cli.common import load_inputs

    folder = tmp_path_factory.mktemp("report-missing")
    scales = folder / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    data = write_csv(folder / "survey.csv", survey_rows(400, seed=5))
    return data, scales, load_inputs(data, scales)


def _both_reports(survey, missing: str) -> tuple[dict, dict]:
    from scalewright.analyses.report_streamed import report_plan, streamed_report
    from scalewright.engine.score_stream import stream_scores
    from scalewright.engine.stream import stream_summary
    from scalewright.report import ReportOptions, build_report

    data, _, inputs = survey
    options = ReportOptions(by=("shift",), missing=missing, iterations=5)
    whole = build_report(inputs.spec, inputs.responses, info=inputs.info, options=options)
    summary, outcome = stream_summary(data, inputs.spec, report_plan(inputs.spec, options),
                                      block_bytes=int(SMALL_BLOCK))
    table = stream_scores(data, inputs.spec, None, block_bytes=int(SMALL_BLOCK)).table
    streamed = streamed_report(inputs.spec, summary, outcome, info=inputs.info, options=options, score_table=table)
    return json.loads(json.dumps(whole.to_dict())), json.loads(json.dumps(streamed.to_dict()))


@pytest.mark.parametrize("missing", ["pairwise", "em"])
def test_streamed_report_sections_equal_the_whole_file_report(survey, missing):
    whole, streamed = _both_reports(survey, missing)
    assert whole["options"]["missing"] == streamed["options"]["missing"] == missing
    for section in SECTIONS:
        same_exactly(streamed[section], whole[section], section)
    # the method reached every section that rests on the covariance
    workload = whole["reliability"]["scales"]["workload"]
    assert workload["missing_handling"] == missing
    assert set(workload["by"]["shift"]) >= {"day", "night"}  # each level analysed by the method too
    assert whole["structure"]["missing_method"] == missing
    assert whole["confirm"]["missing"] == missing
    assert set(whole["confirm"]["invariance"]["shift"]) == {"workload", "climate"}


def test_report_streams_with_missing_em(tmp_path):
    """The command takes the streaming route with --missing (no longer refused), and says the method."""
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    data = write_csv(tmp_path / "survey.csv", survey_rows(60))
    code, _, err = run("report", str(data), "-s", str(scales), "--out", str(tmp_path / "r"), "--engine", "stream",
                       "--block-size", SMALL_BLOCK, "--missing", "em", "--iterations", "2", "-q", "--single-file")
    assert code == 0, err
    assert "read whole" not in err
    assert (tmp_path / "r" / "index.html").exists()
