"""`screen --engine dask`: a dataset of several files screened on a local cluster of two workers against the
whole-file screen and the streamed screen of the same rows in one file.

The reference is the whole-file screen (``--engine memory``), whose indices are held to published
definitions and reference libraries in tests/test_quality.py (weighted: numpy and statsmodels in
tests/test_weighted.py); here flags, counts and the row table's order must be the same exactly, the
indices the same to 1e-12 (exact integer cross-products on this route, float sums on the whole-file
route: the last bits may differ), and the median completion time numpy's ``np.median`` of the usable times.
"""
from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import numpy as np
import pytest

from .test_engine_screen import HEADER, N_ROWS, SCALES, _rows, _write, assert_same, assert_same_rows
from .test_engine_stream import SMALL_BLOCK, run

pytest.importorskip("distributed")

PARTS = 4  # 400 rows a file: the copied rows of the survey lie in different files


def _parquet_parts(folder: Path, rows: list[list[str]], header: list[str] = HEADER) -> Path:
    """The rows as PARTS Parquet files (items as integers, times and weights as floats, ids as text)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    folder.mkdir()
    size = len(rows) // PARTS
    for part in range(PARTS):
        chunk = rows[part * size:(part + 1) * size]
        columns = {}
        for j, name in enumerate(header):
            cells = [row[j] for row in chunk]
            if name == "staff_id":
                columns[name] = pa.array(cells)
            elif name in ("minutes", "wt"):
                columns[name] = pa.array([float(c) if c else None for c in cells])
            else:
                columns[name] = pa.array([int(c) if c else None for c in cells], type=pa.int64())
        pq.write_table(pa.table(columns), folder / f"part-{part}.parquet", row_group_size=100)
    return folder


def _csv_parts(folder: Path, rows: list[list[str]], header: list[str] = HEADER) -> Path:
    folder.mkdir()
    size = len(rows) // PARTS
    for part in range(PARTS):
        _write(folder / f"wave-{part}.csv", rows[part * size:(part + 1) * size], header)
    return folder


def _scales(folder: Path, text: str = SCALES) -> Path:
    path = folder / "scales.yaml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path, Path]:
    """The survey of tests/test_engine_screen.py as one CSV file and as a folder of Parquet files."""
    rows, _ = _rows(N_ROWS)
    return _write(tmp_path / "survey.csv", rows), _parquet_parts(tmp_path / "survey", rows), _scales(tmp_path)


def _dask(cluster, data: Path, scales: Path, *options: str) -> tuple[int, str, str]:
    return run("screen", str(data), "-s", str(scales), "--engine", "dask", "--scheduler", cluster.scheduler_address,
               *options)


def _json(code_out_err: tuple[int, str, str]) -> dict:
    code, out, err = code_out_err
    assert code == 0, err
    document = json.loads(out)
    document.pop("input")
    return document


def test_dask_screen_equals_the_whole_file_and_the_streamed_screen(cluster, survey):
    whole_file, folder, scales = survey
    options = ("--format", "json", "--duration-column", "minutes")
    whole = _json(run("screen", str(whole_file), "-s", str(scales), "--engine", "memory", *options))
    streamed = _json(run("screen", str(whole_file), "-s", str(scales), "--engine", "stream", "--block-size",
                         SMALL_BLOCK, *options))
    on_dask = _json(_dask(cluster, folder, scales, *options))
    assert streamed.pop("engine") == {"name": "stream"}
    assert on_dask.pop("engine") == {"name": "dask", "scheduler": cluster.scheduler_address, "partitions": PARTS}
    assert_same(whole, on_dask)  # flags and counts exactly, indices to 1e-12, keys in the same order
    assert_same(streamed, on_dask)
    assert [r["id"] for r in on_dask["respondents"]] == [f"s{i:05d}" for i in range(N_ROWS)]  # dataset order
    # identical answer rows in different files are found: the survey's copies lie 300 to 1,570 rows apart
    rows, facts = _rows(N_ROWS)
    groups = on_dask["duplicates"]["rows"]
    for source, target in facts["copies"]:
        assert [f"s{source:05d}", f"s{target:05d}"] in groups
    third = N_ROWS // 3
    assert [f"s{third:05d}", f"s{third + 500:05d}", f"s{third + 1000:05d}"] in groups  # files 1, 2 and 3
    assert on_dask["summary"]["counts"]["duplicate-answers"] > 0
    # the exact median of the usable times, gathered from the four files: numpy's median
    times = np.array([float(r[1]) if r[1] else np.nan for r in rows])
    answered = np.array([sum(c != "" for c in r[2:]) for r in rows])
    assert on_dask["summary"]["median_duration"] == float(np.median(times[np.isfinite(times) & (answered >= 6)]))


def test_a_copy_in_another_file_is_the_only_duplicate(cluster, tmp_path):
    """Two identical answer rows, one in the first file and one in the last, and no other copy: found, and
    flagged as on the whole-file route (rows far from every other, so no other row repeats them)."""
    rows, _ = _rows(N_ROWS, seed=21)
    rows[5][2:] = ["1", "5", "1", "5", "1", "5", "1", "5", "1", "5", "1", "2"]
    rows[N_ROWS - 3][2:] = rows[5][2:]
    scales = _scales(tmp_path)
    whole = _json(run("screen", str(_write(tmp_path / "survey.csv", rows)), "-s", str(scales), "--format", "json",
                      "--engine", "memory"))
    on_dask = _json(_dask(cluster, _parquet_parts(tmp_path / "survey", rows), scales, "--format", "json"))
    on_dask.pop("engine")
    assert_same(whole, on_dask)
    assert ["s00005", f"s{N_ROWS - 3:05d}"] in on_dask["duplicates"]["rows"]
    flagged = {r["id"] for r in on_dask["respondents"] if "duplicate-answers" in r["flags"]}
    assert {"s00005", f"s{N_ROWS - 3:05d}"} <= flagged


def test_the_row_table_and_flagged_only_equal_the_whole_file_ones(cluster, survey):
    whole_file, folder, scales = survey
    tables = {}
    for engine, data in (("memory", whole_file), ("dask", folder)):
        for flagged_only in ((), ("--flagged-only",)):
            target = whole_file.with_name(f"flags-{engine}-{len(flagged_only)}.csv")
            options = ("--out", str(target), "--duration-column", "minutes", *flagged_only)
            code, _, err = (_dask(cluster, data, scales, *options) if engine == "dask" else
                            run("screen", str(data), "-s", str(scales), "--engine", "memory", *options))
            assert code == 0, err
            tables[engine, bool(flagged_only)] = (list(csv.reader(io.StringIO(target.read_text(encoding="utf-8")))),
                                                  err.replace(target.name, "FLAGS"))
    for flagged_only in (False, True):
        (whole, err_m), (on_dask, err_d) = tables["memory", flagged_only], tables["dask", flagged_only]
        assert err_d == err_m  # the same notes on stderr
        assert_same_rows(on_dask, whole)
    assert len(tables["dask", False][0]) == N_ROWS + 1
    assert 30 < len(tables["dask", True][0]) - 1 < N_ROWS


def test_weighted_dask_screen_equals_the_whole_file_screen(cluster, tmp_path):
    rows, _ = _rows(N_ROWS)
    rng = np.random.default_rng(3)
    weights = np.round(rng.gamma(2.0, 0.5, N_ROWS), 3)
    weights[rng.random(N_ROWS) < 0.03] = 0
    for row, weight in zip(rows, weights, strict=True):
        row.append(f"{weight:g}")
    header = [*HEADER, "wt"]
    scales = _scales(tmp_path)
    options = ("--format", "json", "--weight", "wt", "--duration-column", "minutes")
    whole = _json(run("screen", str(_write(tmp_path / "survey.csv", rows, header)), "-s", str(scales), "--engine",
                      "memory", *options))
    on_dask = _json(_dask(cluster, _parquet_parts(tmp_path / "survey", rows, header), scales, *options))
    on_dask.pop("engine")
    assert_same(whole, on_dask)  # the weighted centres, alphas and shares to 1e-12
    assert on_dask["summary"]["weighted"]["n_zero_weight"] > 0
    assert all(block["weighted"] for block in on_dask["summary"]["alpha_change"].values())


def test_a_bad_value_in_the_last_file_is_named_or_counted(cluster, tmp_path):
    rows, _ = _rows(N_ROWS)
    rows[3 * 400 + 123][4] = "8"  # wl2 of the 124th data row of the last file: its row 125 below the header
    scales = _scales(tmp_path)
    folder = _csv_parts(tmp_path / "waves", rows)
    code, out, err = _dask(cluster, folder, scales)
    assert code == 4
    assert out == ""
    assert "wave-3.csv (row 125, column wl2): 8 is outside" in err
    assert err.count("\n") == 1  # one line, no traceback
    whole = _json(run("screen", str(_write(tmp_path / "survey.csv", rows)), "-s", str(scales), "--format", "json",
                      "--engine", "memory", "--lenient"))
    on_dask = _json(_dask(cluster, folder, scales, "--format", "json", "--lenient"))
    on_dask.pop("engine")
    assert_same(whole, on_dask)
    assert any("1 value(s) were neither an answer" in str(item) for item in on_dask["notes"])


def test_a_bad_time_and_a_repeated_id_in_other_files_are_named(cluster, tmp_path):
    rows, _ = _rows(N_ROWS)
    rows[2 * 400 + 9][1] = "soon"  # the completion time of row 11 of the third file
    scales = _scales(tmp_path)
    code, _, err = _dask(cluster, _csv_parts(tmp_path / "waves", rows), scales, "--duration-column", "minutes")
    assert code == 4
    assert "wave-2.csv: column 'minutes', row 11: 'soon' is not a number" in err
    rows, _ = _rows(N_ROWS)
    rows[1300][0] = rows[20][0]  # the id of a row of the first file again in the last
    code, _, err = _dask(cluster, _csv_parts(tmp_path / "again", rows), scales)
    assert code == 4
    assert "an id appears more than once across the partitions" in err


def test_rows_without_ids_are_numbered_through_the_files(cluster, tmp_path):
    rows, _ = _rows(N_ROWS)
    scales = _scales(tmp_path, SCALES.replace("id_column: staff_id\n", ""))
    whole = _json(run("screen", str(_write(tmp_path / "survey.csv", rows)), "-s", str(scales), "--format", "json",
                      "--engine", "memory"))
    on_dask = _json(_dask(cluster, _csv_parts(tmp_path / "waves", rows), scales, "--format", "json"))
    on_dask.pop("engine")
    assert_same(whole, on_dask)
    assert on_dask["respondents"][400]["id"] == "402"  # the first row of the second file: row 402 of one file


def test_options_that_do_not_go_with_dask_are_usage_errors(survey, tmp_path):
    whole_file, folder, scales = survey
    code, _, err = run("screen", str(whole_file), "-s", str(scales), "--scheduler", "tcp://nowhere:1")
    assert code == 2
    assert "--engine dask" in err
    code, _, err = run("screen", str(folder), "-s", str(scales), "--engine", "dask", "--exclude", str(whole_file))
    assert code == 2
    assert "--exclude needs the rows" in err


def test_a_dataset_behind_an_fsspec_url(cluster, survey):
    """Parquet files behind a URL (fsspec's in-memory file system, which the in-process workers share), read
    through fsspec on the workers; the URL's second slash, lost on the command line's way through pathlib,
    is put back."""
    import uuid

    import fsspec

    whole_file, folder, scales = survey
    fs = fsspec.filesystem("memory")
    root = f"/screen-{uuid.uuid4().hex}"
    try:
        for path in sorted(folder.iterdir()):
            fs.pipe(f"{root}/{path.name}", path.read_bytes())
        code, out, err = _dask(cluster, Path(f"memory:/{root}"), scales, "--format", "json")
        assert json.loads(out)["input"]["data"] == f"memory:/{root}"  # the URL as written (root starts with "/")
        on_dask = _json((code, out, err))
    finally:
        fs.rm(root, recursive=True)
    whole = _json(run("screen", str(whole_file), "-s", str(scales), "--format", "json", "--engine", "memory"))
    assert on_dask.pop("engine")["partitions"] == PARTS
    assert_same(whole, on_dask)


def test_a_refused_weight_in_the_last_file_is_named_or_counted(cluster, tmp_path):
    rows, _ = _rows(N_ROWS)
    for row in rows:
        row.append("1.5")
    rows[3 * 400 + 100][-1] = "abc"  # the 101st data row of the last file: its row 102 below the header
    header = [*HEADER, "wt"]
    scales = _scales(tmp_path)
    folder = _csv_parts(tmp_path / "waves", rows, header)
    code, _, err = _dask(cluster, folder, scales, "--weight", "wt")
    assert code == 4
    assert "wave-3.csv (row 102, column wt): 'abc' is a weight that is not a number" in err
    whole = _json(run("screen", str(_write(tmp_path / "survey.csv", rows, header)), "-s", str(scales), "--format",
                      "json", "--engine", "memory", "--weight", "wt", "--lenient"))
    on_dask = _json(_dask(cluster, folder, scales, "--format", "json", "--weight", "wt", "--lenient"))
    on_dask.pop("engine")
    assert_same(whole, on_dask)
    assert any("1 row(s) have not numeric weight(s) in wt" in str(item) for item in on_dask["notes"])
    assert on_dask["summary"]["weighted"]["sum_of_weights"] == 1.5 * (N_ROWS - 1)  # the refused row weighs nothing


def test_the_reports_screen_on_dask_equals_the_reports_streamed_screen(cluster, survey, tmp_path):
    """`report --engine dask` screens the partitions (cli/screen_dask.dask_screen_csv) as the streamed report
    screens the file's blocks (cli/screen_streamed.streamed_screen_csv): the same summary and screen.csv. The
    streamed screen is held to the whole-file screen in tests/test_engine_screen.py."""
    from scalewright.cli.screen_dask import dask_screen_csv
    from scalewright.cli.screen_streamed import streamed_screen_csv
    from scalewright.spec import load_spec

    whole_file, folder, scales = survey
    spec = load_spec(scales)
    (tmp_path / "stream").mkdir()
    (tmp_path / "dask").mkdir()
    common = {"duration_column": None, "duration_unit": "s", "lenient": False}
    streamed = streamed_screen_csv(whole_file, spec, tmp_path / "stream" / "screen.csv", block_size=int(SMALL_BLOCK),
                                   **common)
    on_dask = dask_screen_csv(folder, spec, tmp_path / "dask" / "screen.csv", block_size=None,
                              scheduler=cluster.scheduler_address, **common)
    assert_same(streamed.to_dict(), on_dask.to_dict())
    assert on_dask.records_file == "screen.csv"
    tables = [list(csv.reader(io.StringIO((tmp_path / route / "screen.csv").read_text(encoding="utf-8"))))
              for route in ("stream", "dask")]
    assert len(tables[1]) == N_ROWS + 1
    assert_same_rows(tables[1], tables[0])
