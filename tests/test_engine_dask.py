"""The Dask route: a Parquet dataset of several files on a local cluster of two workers gives the JSON of
the in-memory run on the same rows, apart from provenance (input digests, the engine block)."""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from .engine_data import survey_rows, write_csv, write_dataset
from .test_engine_stream import memory_and_dask, run

pytest.importorskip("distributed")


def without_provenance(document: dict) -> dict:
    document = dict(document)
    document.pop("input")
    document.pop("engine", None)
    return document


@pytest.fixture
def dataset(tmp_path: Path) -> tuple[Path, Path, Path]:
    """The same 2,400 rows as one CSV file and as a folder of four Parquet files."""
    return write_dataset(tmp_path, survey_rows(2400, seed=5), parts=4, row_group_size=250)


@pytest.mark.parametrize("options", [("--by", "shift"), ("--pairwise", "--by", "site")])
def test_dask_dataset_equals_the_in_memory_run(cluster, dataset, options):
    whole_file, folder, scales = dataset
    in_memory, on_dask = memory_and_dask("reliability", whole_file, folder, scales, cluster.scheduler_address, *options)
    assert on_dask["engine"] == {"name": "dask", "scheduler": cluster.scheduler_address, "partitions": 4}
    assert without_provenance(on_dask) == without_provenance(in_memory)


def test_a_glob_of_csv_files_and_a_refused_value_naming_its_file_and_row(cluster, dataset, tmp_path):
    scales = dataset[2]
    rows = survey_rows(300, seed=9)
    rows[150 + 123][4] = "8"  # wl2 of the 124th data row of the second file: its row 125 below the header
    write_csv(tmp_path / "wave-0.csv", rows[:150])
    write_csv(tmp_path / "wave-1.csv", rows[150:])
    code, _, err = run("reliability", str(tmp_path / "wave-*.csv"), "-s", str(scales), "--engine", "dask",
                       "--scheduler", cluster.scheduler_address)
    assert code == 4
    assert "wave-1.csv (row 125, column wl2): 8 is outside" in err
    code, out, err = run("reliability", str(tmp_path / "wave-*.csv"), "-s", str(scales), "--engine", "dask",
                         "--scheduler", cluster.scheduler_address, "--lenient", "--format", "json")
    assert code == 0
    assert json.loads(out)["reading"]["refused_by_column"] == {"wl2": 1}


def test_scheduler_without_dask_is_a_usage_error(dataset):
    whole_file, _, scales = dataset
    code, _, err = run("reliability", str(whole_file), "-s", str(scales), "--scheduler", "tcp://nowhere:1")
    assert code == 2
    assert "--engine dask" in err
