"""`score` on the streaming route: the scored file written a block at a time equals the whole-file one.

The reference is the whole-file route (``--engine memory``), whose scores are held to the plain row mean
(numpy) in tests/test_scoring.py; here a file cut into dozens of 4 KiB blocks must give the same bytes.
"""
from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

from .engine_data import SCALES, survey_rows, write_csv, write_parquet
from .test_engine_stream import SMALL_BLOCK, _with_cells, run


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    return write_csv(tmp_path / "survey.csv", survey_rows(2500)), scales


def score_both(data: Path, scales: Path, suffix: str, *options: str) -> tuple[Path, Path, str]:
    whole, streamed = data.with_name(f"whole{suffix}"), data.with_name(f"streamed{suffix}")
    code_m, _, err_m = run("score", str(data), "-s", str(scales), "--out", str(whole), "--engine", "memory", *options)
    code_s, _, err_s = run("score", str(data), "-s", str(scales), "--out", str(streamed), "--engine", "stream",
                           "--block-size", SMALL_BLOCK, *options)
    assert code_m == 0, err_m
    assert code_s == 0, err_s
    assert "read whole" not in err_s  # the streaming route was taken
    assert err_s.replace(streamed.name, whole.name) == err_m
    return whole, streamed, err_s


@pytest.mark.parametrize("options", [(), ("--standardize", "pomp")])
def test_scored_csv_streamed_is_the_whole_file_one_byte_for_byte(survey, options, monkeypatch):
    from scalewright.engine import score_stream

    blocks = []
    original = score_stream._Appender.append
    monkeypatch.setattr(score_stream._Appender, "append", lambda self, table: (blocks.append(1), original(self, table)))
    whole, streamed, _ = score_both(*survey, ".csv", *options)
    assert len(blocks) > 10  # the file was really cut into many blocks
    assert streamed.read_bytes() == whole.read_bytes()
    assert os.stat(streamed).st_mode == os.stat(whole).st_mode  # the file mode of any output


def test_scored_parquet_streamed_reads_back_as_the_whole_file_one(survey, tmp_path):
    import pandas as pd

    data, scales = survey
    whole, streamed, _ = score_both(data, scales, ".parquet", "--standardize", "pomp")
    pd.testing.assert_frame_equal(pd.read_parquet(streamed), pd.read_parquet(whole))
    source = write_parquet(tmp_path / "survey.parquet", survey_rows(2500))  # a Parquet input, in small batches
    code_m, _, err_m = run("score", str(source), "-s", str(scales), "--out", str(tmp_path / "a.csv"), "--engine", "memory")
    code_s, _, err_s = run("score", str(source), "-s", str(scales), "--out", str(tmp_path / "b.csv"), "--engine", "stream")
    assert code_m == code_s == 0, (err_m, err_s)
    assert (tmp_path / "a.csv").read_bytes() == (tmp_path / "b.csv").read_bytes()


def test_summary_without_a_scored_file(survey):
    data, scales = survey
    outputs = [run("score", str(data), "-s", str(scales), "--format", "json", "--engine", engine,
                   "--block-size", SMALL_BLOCK) for engine in ("memory", "stream")]
    assert [code for code, _, _ in outputs] == [0, 0]
    whole, streamed = (json.loads(out) for _, out, _ in outputs)
    assert streamed.pop("engine") == {"name": "stream"}
    assert streamed == whole


def test_refused_values_are_named_as_whole_and_nothing_is_written(survey):
    data, scales = survey
    _with_cells(data, {(57, 3): "7", (2400, 4): "0"})
    target = data.with_name("scores.csv")
    results = [run("score", str(data), "-s", str(scales), "--out", str(target), "--engine", engine,
                   "--block-size", SMALL_BLOCK) for engine in ("memory", "stream")]
    assert [code for code, _, _ in results] == [4, 4]
    assert results[1][2] == results[0][2]
    assert "row 57, column wl1" in results[1][2]
    assert not target.exists()
    assert [p.name for p in data.parent.iterdir() if p.name.startswith(".")] == []  # no temporary file left
    whole, streamed, err = score_both(data, scales, ".csv", "--lenient")
    assert streamed.read_bytes() == whole.read_bytes()
    assert "2 value(s) were neither an answer" in err


def test_no_overwrite_without_force_and_never_an_input(survey):
    data, scales = survey
    target = data.with_name("scores.csv")
    target.write_text("keep me\n", encoding="utf-8")
    code, _, err = run("score", str(data), "-s", str(scales), "--out", str(target), "--engine", "stream")
    assert code == 2
    assert "--force" in err
    assert target.read_text(encoding="utf-8") == "keep me\n"
    code, _, err = run("score", str(data), "-s", str(scales), "--out", str(data), "--engine", "stream", "--force")
    assert code == 2
    assert "input file" in err
    code, _, err = run("score", str(data), "-s", str(scales), "--out", str(target), "--engine", "stream", "--force")
    assert code == 0, err
    assert target.read_text(encoding="utf-8").startswith("staff_id,workload,")


def test_duplicate_ids_are_named_by_the_whole_file_route(survey):
    data, scales = survey
    _with_cells(data, {(2000, 0): "s00003"})
    target = data.with_name("scores.csv")
    code, _, err = run("score", str(data), "-s", str(scales), "--out", str(target), "--engine", "stream",
                       "--block-size", SMALL_BLOCK)
    assert code == 4
    assert "s00003" in err
    assert not target.exists()


@pytest.mark.parametrize(("options", "needs"), [(("--out", "x.xlsx"), "x.xlsx")])
def test_what_needs_the_whole_file_first(survey, options, needs, monkeypatch):
    data, scales = survey
    monkeypatch.chdir(data.parent)
    code, _, err = run("score", str(data), "-s", str(scales), "--engine", "stream", *options)
    assert code == 2
    assert needs in err
    code, _, err = run("score", str(data), "-s", str(scales), "--engine", "auto", *options)
    assert code == 0, err
