"""`score --weight` on the streaming route: the scored file and the summary written a block at a time equal
the whole-file route's, for every ``--standardize``.

The reference for the scored file and the JSON is the whole-file route (``--engine memory``): both take the
weighted mean and sd from exact sums (tests/test_weighted_scores.py), so the file is compared byte for byte
and the JSON exactly; the weighted estimates themselves are held to numpy here.
"""
from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from .engine_data import HEADER, SCALES, survey_rows, write_csv
from .test_engine_score_stream import score_both
from .test_engine_stream import SMALL_BLOCK, _with_cells, both_routes, run

N_ROWS = 2500
WEIGHTED = ("--weight", "wt")


def _weighted_survey(folder: Path, missing: tuple[int, ...] = (40, 2300)) -> tuple[Path, Path]:
    """The engine survey with a column of survey weights: gamma-distributed, 3% zero, ``missing`` rows
    without one (by default one early and one late, counted with --lenient)."""
    scales = folder / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    rows = survey_rows(N_ROWS)
    rng = np.random.default_rng(8)
    weights = np.round(rng.gamma(2.0, 0.5, len(rows)), 3)
    weights[rng.random(len(rows)) < 0.03] = 0
    for row, weight in zip(rows, weights, strict=True):
        row.append(f"{weight:g}")
    for index in missing:
        rows[index][-1] = ""
    return write_csv(folder / "weighted.csv", rows, header=[*HEADER, "wt"]), scales


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    return _weighted_survey(tmp_path)


@pytest.mark.parametrize("standardize", [(), ("--standardize", "pomp"), ("--standardize", "z")])
def test_weighted_scored_csv_streamed_is_the_whole_file_one_byte_for_byte(survey, standardize, monkeypatch):
    from scalewright.engine import score_stream

    blocks = []
    original = score_stream._Appender.append
    monkeypatch.setattr(score_stream._Appender, "append", lambda self, table: (blocks.append(1), original(self, table)))
    whole, streamed, err = score_both(*survey, ".csv", *WEIGHTED, "--lenient", *standardize)
    assert len(blocks) > 10  # the file was really cut into many blocks
    assert streamed.read_bytes() == whole.read_bytes()
    assert "2 row(s) have missing weight(s) in wt" in err  # counted, as the whole-file route counts them
    assert "have weight 0 in wt" in err
    if standardize == ("--standardize", "z"):
        assert "z scores are taken from the weighted mean and sd" in err


def test_weighted_z_parquet_streamed_reads_back_as_the_whole_file_one(survey):
    import pandas as pd

    whole, streamed, _ = score_both(*survey, ".parquet", *WEIGHTED, "--lenient", "--standardize", "z")
    pd.testing.assert_frame_equal(pd.read_parquet(streamed), pd.read_parquet(whole), check_exact=True)


def test_weighted_z_of_a_parquet_file_in_small_batches(survey, monkeypatch):
    import pyarrow.csv as pacsv
    import pyarrow.parquet as pq

    from scalewright.engine import blocks

    monkeypatch.setattr(blocks, "BATCH_ROWS", 300)
    data, scales = survey
    source = data.with_suffix(".parquet")  # the weights as doubles with nulls (the two missing ones)
    pq.write_table(pacsv.read_csv(data), source, row_group_size=300)
    whole, streamed, _ = score_both(source, scales, ".csv", *WEIGHTED, "--lenient", "--standardize", "z")
    assert streamed.read_bytes() == whole.read_bytes()


@pytest.mark.parametrize("standardize", [(), ("--standardize", "z")])
def test_weighted_summary_streamed_equals_the_whole_file_one(survey, standardize):
    whole, streamed = both_routes("score", *survey, *WEIGHTED, "--lenient", *standardize)
    assert streamed == whole  # every float to the bit, every count, the weight notes
    block = streamed["weighted"]["workload"]
    assert block["n_zero_weight"] > 2  # the zero weights and the two missing ones
    assert block["weight_column"] == "wt"
    for markdown in (run("score", str(survey[0]), "-s", str(survey[1]), "--format", "md", "--engine", engine,
                         "--block-size", SMALL_BLOCK, *WEIGHTED, "--lenient", *standardize)
                     for engine in ("memory", "stream")):
        assert markdown[0] == 0, markdown[2]
        assert "weighted" in markdown[1].lower()


def test_weighted_estimates_against_numpy(survey):
    import pandas as pd

    data, scales = survey
    target = data.with_name("z.csv")
    code, out, err = run("score", str(data), "-s", str(scales), "--out", str(target), "--engine", "stream",
                         "--block-size", SMALL_BLOCK, "--standardize", "z", *WEIGHTED, "--lenient")
    assert code == 0, err
    code, out, err = run("score", str(data), "-s", str(scales), "--format", "json", "--engine", "stream",
                         "--block-size", SMALL_BLOCK, "--standardize", "z", *WEIGHTED, "--lenient")
    assert code == 0, err
    body = json.loads(out)
    scored = pd.read_csv(target)
    # the raw scores are held to the plain row mean in tests/test_scoring.py; the weights as read by pandas
    weights = pd.read_csv(data)["wt"].fillna(0).to_numpy(dtype=float)
    for name in ("workload", "climate"):
        score = scored[name].to_numpy(dtype=float)
        used = ~np.isnan(score) & (weights > 0)
        x, w = score[used], weights[used]
        # numpy computed live: np.average with weights; np.cov(aweights=w, ddof=1), whose divisor is
        # sum(w) - sum(w^2)/sum(w), the whole-file route's weighted sd (stats.weighted.weighted_variance)
        mean, sd = np.average(x, weights=w), math.sqrt(np.cov(x, aweights=w, ddof=1))
        block, basis = body["weighted"][name], body["scores"]["scales"][name]["z_basis"]
        assert block["mean"] == pytest.approx(mean, rel=1e-12)
        assert block["sd"] == pytest.approx(sd, rel=1e-12)
        assert block["n_effective"] == pytest.approx(w.sum() ** 2 / np.sum(w**2), rel=1e-12)  # Kish (1965)
        assert block["n"] == int((~np.isnan(score)).sum())
        assert block["n_zero_weight"] == int((~np.isnan(score) & (weights == 0)).sum())
        assert basis["mean"] == block["mean"]
        assert basis["sd"] == block["sd"]
        np.testing.assert_allclose(scored[f"{name}__z"].to_numpy(dtype=float), (score - mean) / sd, rtol=1e-12,
                                   atol=1e-12)


def test_a_bad_weight_late_in_the_file_is_named_as_whole_and_nothing_is_written(tmp_path):
    data, scales = _weighted_survey(tmp_path, missing=())
    _with_cells(data, {(2401, 10): "-1.5"})  # in a late block: row 2401 of the sheet
    target = data.with_name("scores.csv")
    for standardize in ((), ("--standardize", "z")):
        results = [run("score", str(data), "-s", str(scales), "--out", str(target), "--engine", engine,
                       "--block-size", SMALL_BLOCK, *WEIGHTED, *standardize) for engine in ("memory", "stream")]
        assert [code for code, _, _ in results] == [4, 4]
        assert results[1][2] == results[0][2]
        assert "(row 2401, column wt): '-1.5' is a negative weight" in results[1][2]
        assert not target.exists()
    whole, streamed, err = score_both(data, scales, ".csv", *WEIGHTED, "--lenient", "--standardize", "z")
    assert streamed.read_bytes() == whole.read_bytes()
    assert "1 row(s) have negative weight(s) in wt" in err


def test_many_bad_weights_are_counted_as_whole(survey):
    data, scales = survey  # two missing weights, and two more kinds late in the file
    _with_cells(data, {(2401, 10): "-1.5", (2450, 10): "heavy"})
    target = data.with_name("scores.csv")
    results = [run("score", str(data), "-s", str(scales), "--out", str(target), "--engine", engine,
                   "--block-size", SMALL_BLOCK, *WEIGHTED) for engine in ("memory", "stream")]
    assert [code for code, _, _ in results] == [4, 4]
    assert results[1][2] == results[0][2]
    assert "and 3 more problems" in results[1][2]
    assert not target.exists()
    whole, streamed = both_routes("score", data, scales, *WEIGHTED, "--lenient")
    assert streamed == whole
    assert sum("weight(s) in wt" in text for text in streamed["notes"]) == 3  # missing, negative, not a number


def test_weighted_score_takes_the_streaming_route_under_auto(survey, monkeypatch):
    """Survey weights no longer keep `score` on the whole-file route: a file above the size line streams."""
    from scalewright.engine import choose

    monkeypatch.setattr(choose, "STREAM_ABOVE_BYTES", 1024)
    data, scales = survey
    code, out, err = run("score", str(data), "-s", str(scales), "--format", "json", *WEIGHTED, "--lenient")
    assert code == 0, err
    assert json.loads(out)["engine"] == {"name": "stream"}


def test_an_item_as_the_weight_column_is_refused_on_both_routes(survey):
    data, scales = survey
    results = [run("score", str(data), "-s", str(scales), "--format", "json", "--engine", engine, "--weight", "wl1")
               for engine in ("memory", "stream")]
    assert [code for code, _, _ in results] == [2, 2]
    assert results[1][2] == results[0][2]
    assert "--weight 'wl1' is an item of the scale file" in results[0][2]
