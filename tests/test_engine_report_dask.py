"""`report --engine dask`: the summary from the partitions on the workers, scores.csv from a second pass over
the partitions in file order. The reference is the whole-file report (``--engine memory``) of the same rows
as one CSV file: its statistics are held to outside references in the tests of each analysis."""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from .engine_data import assert_same_json, survey_rows, write_dataset
from .test_engine_stream import run


def same_to_rounding(a, b, path=""):
    """Counts and texts exactly; floats to 1e-9: sums over distinct score values instead of over rows, and the
    studentized range p-values of the pairs are a numerical integral (see tests/test_groups_from_counts.py)."""
    assert_same_json(a, b, path, rel=1e-9)


@pytest.fixture
def dataset(tmp_path: Path) -> tuple[Path, Path, Path]:
    return write_dataset(tmp_path, survey_rows(900, seed=5), parts=3, row_group_size=100)


def test_scores_of_the_partitions_in_order_equal_the_whole_file_scores(dataset, tmp_path):
    # reference: `score --engine memory` of the same rows as one CSV file (pandas' CSV writer)
    from scalewright.engine.dask_engine import dataset_parts
    from scalewright.engine.score_parts import stream_scores_of_parts
    from scalewright.spec import load_spec

    whole_file, folder, scales = dataset
    code, _, err = run("score", str(whole_file), "-s", str(scales), "--out", str(tmp_path / "whole.csv"),
                       "--engine", "memory")
    assert code == 0, err
    urls, local = dataset_parts(str(folder))
    assert len(urls) == 3
    table = stream_scores_of_parts(urls, local, load_spec(scales), tmp_path / "parts.csv", block_bytes=4096)
    assert (tmp_path / "parts.csv").read_bytes() == (tmp_path / "whole.csv").read_bytes()
    assert table.scales["workload"].n_scored + table.scales["workload"].n_unscored == 900


@pytest.mark.slow  # two full reports with figures: about 8 s of CPU
def test_dask_report_equals_the_in_memory_report(cluster, dataset, tmp_path):
    whole_file, folder, scales = dataset
    code_m, _, err_m = run("report", str(whole_file), "-s", str(scales), "--out", str(tmp_path / "whole"),
                           "--engine", "memory", "-q", "--by", "shift", "--iterations", "5")
    code_d, _, err_d = run("report", str(folder), "-s", str(scales), "--out", str(tmp_path / "dask"),
                           "--engine", "dask", "--scheduler", cluster.scheduler_address, "-q", "--by", "shift",
                           "--iterations", "5")
    assert code_m == 0, err_m
    assert code_d == 0, err_d
    a = json.loads((tmp_path / "whole" / "results.json").read_text(encoding="utf-8"))
    b = json.loads((tmp_path / "dask" / "results.json").read_text(encoding="utf-8"))
    # the screen: three passes over the partitions on the workers; results.json holds the first flagged
    # respondents (every record is in screen.csv), as on the streaming route
    a["screen"]["respondents"] = [r for r in a["screen"]["respondents"] if r["flagged"]][:1000]
    assert not any(note.get("code") == "stream-section-needs-rows" for note in b["notes"] if isinstance(note, dict))
    for section in set(a) - {"input", "notes", "created"}:
        same_to_rounding(b[section], a[section], section)
    assert (tmp_path / "dask" / "screen.csv").exists()
    assert b["input"]["data"] == str(folder)
    assert (tmp_path / "dask" / "scores.csv").read_bytes() == (tmp_path / "whole" / "scores.csv").read_bytes()


def test_scheduler_without_dask_is_a_usage_error(dataset, tmp_path):
    whole_file, _, scales = dataset
    code, _, err = run("report", str(whole_file), "-s", str(scales), "--out", str(tmp_path / "r"),
                       "--engine", "memory", "--workers", "2")
    assert code == 2
    assert "--engine dask" in err
    assert not (tmp_path / "r").exists()
