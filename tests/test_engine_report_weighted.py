"""The weighted report (survey weights) of a file read in blocks against the whole-file weighted report.

The reference is the whole-file weighted report (:func:`scalewright.report.build_report` on rows carrying
their weights; its weighted estimates are held to numpy's ``cov(aweights=...)``, ``average(weights=...)``
and statsmodels in tests/test_weighted*.py); here only the route differs. Floats agree to 1e-12 and counts
exactly, with one exception named below: the weighted one-factor fits of small subgroup levels.
"""
from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from .engine_data import HEADER, SCALES, assert_same_json, survey_rows, write_csv
from .test_engine_stream import SMALL_BLOCK, run

#: the values of an iterative one-factor fit (omega, loadings) that stops at a tolerance: in a level of a few
#: dozen weighted rows the fit moves by about 1e-8 when the covariance moves in its last bit (the whole-file
#: route sums the weights in floats, numpy's cov; this route exactly), so these agree to 1e-6 there
FIT_VALUES = {"omega_total", "omega_if_deleted", "loading", "omega_ci"}


def _small_level_fit(path: str) -> float | None:
    """The weighted fits of a small subgroup level stop at the fit's tolerance: equal to 1e-6 there."""
    return 1e-6 if ".by." in path and ".weighted" in path and path.rsplit(".", 1)[-1] in FIT_VALUES else None


def _same(a, b, path=""):
    """Counts and texts exactly, floats to 1e-12 (relative, or absolute near zero), fits of small levels 1e-6."""
    assert_same_json(a, b, path, rel_at=_small_level_fit)


def _weighted_survey(folder: Path, n: int = 500, changes: dict[int, str] | None = None) -> tuple[Path, Path]:
    """The survey with a column of survey weights (gamma-distributed, 3% zero), some cells changed."""
    scales = folder / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    rows = survey_rows(n, seed=9)
    rng = np.random.default_rng(3)
    weights = np.round(rng.gamma(2.0, 0.5, n), 3)
    weights[rng.random(n) < 0.03] = 0
    for row, weight in zip(rows, weights, strict=True):
        row.append(f"{weight:g}")
    for index, value in (changes or {}).items():
        rows[index][-1] = value
    return write_csv(folder / "weighted.csv", rows, header=[*HEADER, "wt"]), scales


def _both_results(data: Path, scales: Path, folder: Path, *, by: tuple[str, ...], lenient: bool = False) \
        -> tuple[dict, dict]:
    from scalewright.analyses.report_streamed import report_plan, streamed_report
    from scalewright.cli.report import _streamed_screen
    from scalewright.data import read_responses
    from scalewright.engine.score_stream import stream_scores
    from scalewright.engine.stream import stream_summary
    from scalewright.present.document import InputInfo
    from scalewright.report import ReportOptions, build_report
    from scalewright.spec import load_spec
    from scalewright.weights import read_weights

    spec = load_spec(scales)
    info = InputInfo.from_paths(data, scales)
    options = ReportOptions(by=by, iterations=3, duration_column=None, lenient=lenient)
    responses = read_responses(data, spec, lenient=lenient)
    responses = replace(responses, weights=read_weights(responses.frame, "wt", responses.line_numbers,
                                                        path=str(data), lenient=lenient))
    whole = build_report(spec, responses, info=info, options=options)
    summary, outcome = stream_summary(data, spec, report_plan(spec, options, weight="wt"), lenient=lenient,
                                      block_bytes=int(SMALL_BLOCK))
    table = stream_scores(data, spec, None, lenient=lenient, block_bytes=int(SMALL_BLOCK)).table
    screen = _streamed_screen(data, spec, folder, options, block_size=int(SMALL_BLOCK), single_file=True,
                              weight="wt")
    streamed = streamed_report(spec, summary, outcome, info=info, options=options, score_table=table, screen=screen,
                               weight="wt")
    a, b = json.loads(json.dumps(whole.to_dict())), json.loads(json.dumps(streamed.to_dict()))
    # results.json of a file read in blocks holds the first flagged respondents of the screen (screen.csv all)
    a["screen"]["respondents"] = [r for r in a["screen"]["respondents"] if r["flagged"]][:1000]
    return a, b


def test_streamed_weighted_report_equals_the_whole_file_weighted_report(tmp_path):
    data, scales = _weighted_survey(tmp_path)
    whole, streamed = _both_results(data, scales, tmp_path, by=("shift",))
    assert whole["weighted"]["n_zero_weight"] > 0
    assert whole["compare"]["scales"]["workload"]["by"]["shift"]["weighted"]["levels"]  # weighted blocks made
    assert "weighted" in whole["structure"]
    assert "weighted" in whole["screen"]["summary"]
    assert whole["confirm"]["models"]["workload"]  # the weighted fits
    _same(streamed, whole)


def test_refused_and_zero_weights_counted_as_on_the_whole_file_route(tmp_path):
    data, scales = _weighted_survey(tmp_path, n=300, changes={150: "abc", 200: "", 250: "-2"})
    whole, streamed = _both_results(data, scales, tmp_path, by=(), lenient=True)
    assert whole["weighted"]["n_weight_refused"] == {"missing": 1, "negative": 1, "not_numeric": 1}
    _same(streamed, whole)


def test_weighted_report_takes_the_streaming_route(tmp_path):
    """The command streams with survey weights (no longer refused) and refuses what the whole-file route
    refuses (weights with --missing other than listwise), before writing anything."""
    data, scales = _weighted_survey(tmp_path, n=60)
    code, _, err = run("report", str(data), "-s", str(scales), "--out", str(tmp_path / "r"), "--engine", "stream",
                       "--block-size", SMALL_BLOCK, "--weight", "wt", "--missing", "em", "-q")
    assert code == 2
    assert err.startswith("error: survey weights work with --missing listwise only")
    assert not (tmp_path / "r").exists()
    code, _, err = run("report", str(data), "-s", str(scales), "--out", str(tmp_path / "r"), "--engine", "stream",
                       "--block-size", SMALL_BLOCK, "--weight", "wt", "--iterations", "2", "-q", "--single-file")
    assert code == 0, err
    assert "read whole" not in err
    page = (tmp_path / "r" / "index.html").read_text(encoding="utf-8")
    assert "not a diagnosis" in page  # the cautions of every report


@pytest.mark.slow  # two full weighted reports with figures
def test_every_section_of_the_weighted_report_folder_equals_the_whole_file_one(tmp_path):
    data, scales = _weighted_survey(tmp_path, n=800)
    found = {}
    for engine in ("memory", "stream"):
        code, _, err = run("report", str(data), "-s", str(scales), "--out", str(tmp_path / engine), "--engine", engine,
                           "--block-size", SMALL_BLOCK, "--weight", "wt", "--by", "shift", "--iterations", "3", "-q")
        assert code == 0, err
        found[engine] = json.loads((tmp_path / engine / "results.json").read_text(encoding="utf-8"))
    whole, streamed = found["memory"], found["stream"]
    whole["screen"]["respondents"] = [r for r in whole["screen"]["respondents"] if r["flagged"]][:1000]
    for key in ("input", "engine"):  # the provenance
        whole.pop(key, None)
        streamed.pop(key, None)
    _same(streamed, whole)
    assert (tmp_path / "stream" / "scores.csv").read_bytes() == (tmp_path / "memory" / "scores.csv").read_bytes()


@pytest.mark.slow  # a local Dask cluster and two full weighted reports
def test_weighted_report_on_dask_equals_the_whole_file_one(cluster, tmp_path):
    """CSV files summarised (and screened, in three passes) on a local cluster of two workers against the
    whole-file weighted report of the same rows as one file: every section but the provenance."""
    data, scales = _weighted_survey(tmp_path, n=900)
    lines = data.read_text(encoding="utf-8").splitlines()
    parts = tmp_path / "parts"
    parts.mkdir()
    for number, start in enumerate(range(1, len(lines), 300)):
        (parts / f"part-{number}.csv").write_text("\n".join([lines[0], *lines[start:start + 300]]) + "\n",
                                                 encoding="utf-8")
    code_d, _, err_d = run("report", str(parts / "part-*.csv"), "-s", str(scales), "--out", str(tmp_path / "dask"),
                           "--engine", "dask", "--scheduler", cluster.scheduler_address, "--weight", "wt",
                           "--by", "shift", "--iterations", "3", "-q")
    code_m, _, err_m = run("report", str(data), "-s", str(scales), "--out", str(tmp_path / "whole"), "--engine",
                           "memory", "--weight", "wt", "--by", "shift", "--iterations", "3", "-q")
    assert code_d == 0, err_d
    assert code_m == 0, err_m
    a = json.loads((tmp_path / "whole" / "results.json").read_text(encoding="utf-8"))
    b = json.loads((tmp_path / "dask" / "results.json").read_text(encoding="utf-8"))
    a["screen"]["respondents"] = [r for r in a["screen"]["respondents"] if r["flagged"]][:1000]
    for section in set(a) - {"input", "notes", "created"}:
        _same(b[section], a[section], section)
    assert [n for n in a["notes"] if "weight" in str(n)] == [n for n in b["notes"] if "weight" in str(n)]
    assert (tmp_path / "dask" / "scores.csv").read_bytes() == (tmp_path / "whole" / "scores.csv").read_bytes()


def test_outside_a_command_the_scale_files_weights_are_named_not_used_as_on_the_whole_file_route(tmp_path):
    """The library's ``report_from_files`` offers no ``--weight``: the whole-file reader leaves the scale
    file's weights off and says so (``cli.common._with_weights``); so does the report of a file read in
    blocks."""
    from scalewright.cli.report import report_from_files

    data, scales = _weighted_survey(tmp_path, n=80)
    scales.write_text(SCALES.replace("groups: [shift]", "groups: [shift]\nweight: wt"), encoding="utf-8")
    results = report_from_files(data, scales, tmp_path / "r", engine="stream", block_size=int(SMALL_BLOCK),
                                iterations=2, quiet=True, single_file=True)
    document = results.to_dict()
    assert "weighted" not in document
    assert any("names the weight column wt" in str(text) for text in document["notes"])
