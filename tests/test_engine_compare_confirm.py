"""`compare` and `confirm` on the streaming route (a file read in many small blocks) and on a Dask cluster:
the whole-file route's output, whose statistics come from pingouin, scipy and the project's own fits of
the rows, is the reference."""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from .engine_data import SCALES, assert_same_json, survey_rows, write_csv, write_dataset
from .test_engine_stream import _with_cells, assert_same_numbers, both_routes, memory_and_dask, run


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    return write_csv(tmp_path / "survey.csv", survey_rows(1500)), scales


def assert_comparison_equal(streamed: dict, whole: dict) -> None:
    """Equal to 1e-12, except the Games-Howell and Tukey p-values: scipy's studentized range distribution
    is a numerical integral whose result moves by about 1e-11 when its input moves in the last bit."""
    for scale in whole["scales"].values():
        for record in scale["comparisons"].values():
            for pair in record.get("pairs", []):
                pair.pop("pvalue", None)
    pvalues = [(pair, pair.pop("pvalue")) for scale in streamed["scales"].values()
               for record in scale["comparisons"].values() for pair in record.get("pairs", [])]
    assert all(0 <= p <= 1 for _, p in pvalues)
    assert_same_numbers(streamed, whole)


@pytest.mark.parametrize("options", [("--by", "shift"), ("--by", "site", "--student"),
                                     ("--by", "shift", "--student", "--min-cell", "200")])
def test_compare_streamed_equals_whole_file(survey, options):
    whole, streamed = both_routes("compare", *survey, *options)
    assert_comparison_equal(streamed, whole)
    assert whole["scales"]["workload"]["comparisons"][options[1]]["test"]["pvalue"] is not None  # there was a test


def test_compare_pair_pvalues_agree_closely(survey):
    # reference: pingouin.pairwise_gameshowell on the rows (the whole-file route)
    whole, streamed = both_routes("compare", *survey, "--by", "shift")
    for name in ("workload", "climate"):
        pairs_w = whole["scales"][name]["comparisons"]["shift"]["pairs"]
        pairs_s = streamed["scales"][name]["comparisons"]["shift"]["pairs"]
        assert len(pairs_w) == 6
        for a, b in zip(pairs_s, pairs_w, strict=True):
            assert a["pvalue"] == pytest.approx(b["pvalue"], rel=1e-9, abs=1e-12)


@pytest.mark.parametrize("options", [(), ("--pairwise",), ("--missing", "em"), ("--ordinal",),
                                     ("--ordinal", "--missing", "pairwise"), ("--by", "site", "--strict")])
def test_confirm_streamed_equals_whole_file(survey, options):
    whole, streamed = both_routes("confirm", *survey, *options)
    assert_same_numbers(streamed, whole)
    assert set(whole["models"]) == {"workload", "climate", "all"}


def test_bad_value_late_in_the_file_is_named_as_whole(survey):
    data, scales = survey
    _with_cells(data, {(1400, 5): "6", (1490, 8): "0"})
    for command in ("compare", "confirm"):
        whole = run(command, str(data), "-s", str(scales), "--engine", "memory", "--by", "shift")
        streamed = run(command, str(data), "-s", str(scales), "--engine", "stream", "--block-size", "4096",
                       "--by", "shift")
        assert whole[0] == streamed[0] == 4
        assert streamed[2] == whole[2]
        assert "row 1400, column wl3" in streamed[2]
        lenient_whole, lenient_streamed = both_routes(command, data, scales, "--lenient", "--by", "shift")
        if command == "confirm":
            assert lenient_whole["reading"]["refused_total"] == 2
            assert_same_numbers(lenient_streamed, lenient_whole)
        else:  # compare shows the refused values in its notes on reading
            assert "2 value(s)" in json.dumps(lenient_whole)
            assert_comparison_equal(lenient_streamed, lenient_whole)


@pytest.mark.parametrize(("command", "options"), [("compare", ("--by", "shift")),
                                                  ("confirm", ("--missing", "em")),
                                                  ("confirm", ("--ordinal",))])
def test_dask_dataset_equals_the_in_memory_run(cluster, tmp_path, command, options):
    whole_file, folder, scales = write_dataset(tmp_path, survey_rows(1200, seed=5), parts=3, row_group_size=150)
    in_memory, on_dask = memory_and_dask(command, whole_file, folder, scales, cluster.scheduler_address, *options)
    assert on_dask.pop("engine") == {"name": "dask", "scheduler": cluster.scheduler_address, "partitions": 3}
    in_memory.pop("input")
    on_dask.pop("input")
    if command == "compare":
        assert_comparison_equal(on_dask, in_memory)
    else:
        assert_same_numbers(on_dask, in_memory)


@pytest.mark.parametrize("options", [("--missing", "em", "--by", "site"), ("--ordinal",),
                                     ("--ordinal", "--missing", "em"), ("--ordinal", "--pairwise")])
def test_reliability_em_and_ordinal_streamed_equal_whole_file(survey, options):
    # reference: scale_reliability's EM and analyses.ordinal's polychoric matrix on the rows (whole-file route)
    whole, streamed = both_routes("reliability", *survey, *options)
    assert streamed == whole
    block = whole["scales"]["workload"]
    assert bool(block.get("ordinal")) == ("--ordinal" in options)  # the ordinal block was computed


def _coded_survey(tmp_path: Path, bad: str | None = None) -> tuple[Path, Path]:
    """The survey with shift written as codes the scale file names (2 sometimes as 2.0, as from a float column)."""
    scales = tmp_path / "coded.yaml"
    scales.write_text(SCALES.replace("groups: [shift]", "groups: [{shift: {1: day, 2: night, 3: late, 4: weekend}}]"),
                      encoding="utf-8")
    rows = survey_rows(1500)
    codes = {"day": "1", "night": "2.0", "late": "3", "weekend": "4"}
    for row in rows:
        row[1] = codes[row[1]]
    if bad is not None:
        rows[1300][1] = bad
    return write_csv(tmp_path / "coded.csv", rows), scales


@pytest.mark.parametrize(("command", "options"), [("reliability", ("--by", "shift")), ("compare", ("--by", "shift")),
                                                  ("tally", ("--columns", "shift")), ("shape", ("--by", "shift")),
                                                  ("confirm", ("--by", "shift", "--min-group", "100"))])
def test_group_codes_named_by_the_scale_file_stream(tmp_path, command, options):
    # reference: data._ordered_levels, the whole-file reader's naming of the codes
    data, scales = _coded_survey(tmp_path)
    whole, streamed = both_routes(command, data, scales, *options)
    if command == "compare":
        assert_comparison_equal(streamed, whole)
        assert list(whole["scales"]["workload"]["by"]["shift"]) == ["day", "night", "late", "weekend"]
    else:
        assert_same_numbers(streamed, whole)


def test_an_unlisted_group_code_late_in_the_file_is_named_as_whole(tmp_path):
    data, scales = _coded_survey(tmp_path, bad="x")
    whole = run("compare", str(data), "-s", str(scales), "--engine", "memory", "--by", "shift")
    streamed = run("compare", str(data), "-s", str(scales), "--engine", "stream", "--block-size", "4096",
                   "--by", "shift")
    assert whole[0] == streamed[0] == 4
    assert streamed[2] == whole[2]
    assert "row 1302, column shift" in streamed[2]
    assert "1 = day" in streamed[2]
    lenient_whole, lenient_streamed = both_routes("compare", data, scales, "--by", "shift", "--lenient")
    assert_comparison_equal(lenient_streamed, lenient_whole)


def _weighted_survey(tmp_path: Path, changes: dict[int, str] | None = None) -> tuple[Path, Path]:
    """The survey with a column of survey weights (gamma-distributed, 2% zero), some cells changed."""
    from .engine_data import HEADER, with_weights

    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    rows = with_weights(survey_rows(1500), zero_share=0.02, changes=changes)
    return write_csv(tmp_path / "weighted.csv", rows, header=[*HEADER, "wt"]), scales


@pytest.mark.parametrize(("command", "options"), [("reliability", ("--by", "site")), ("compare", ("--by", "site")),
                                                  ("compare", ("--by", "shift")),
                                                  ("tally", ("--columns", "shift,site", "--items")),
                                                  ("shape", ("--by", "site", "--items"))])
def test_weighted_estimates_streamed_equal_whole_file(tmp_path, command, options):
    # reference: numpy's cov(aweights=...), average(weights=...) and histogram(weights=...) on the rows
    # (analyses.weighted_reliability, weighted_shape, stats.weighted_groups and weighted_tally on the whole-file
    # route)
    data, scales = _weighted_survey(tmp_path)
    whole, streamed = both_routes(command, data, scales, "--weight", "wt", *options)
    assert "weighted" in json.dumps(whole)
    assert_same_json(streamed, whole, key_order=True, rel_at=_fit_discrepancy)


#: a weighted one-factor fit's chi-square (and its p-value) is N times a small discrepancy left over from terms
#: of order one (log-determinants and a trace), so a last-bit difference of the weighted covariance (numpy's
#: float cov on the whole-file route, exact sums on the block route) moves it by about 1e-12 relative
FIT_DISCREPANCY = {"chi2", "pvalue"}


def _fit_discrepancy(path: str) -> float | None:
    return 1e-9 if ".confirmatory." in path and path.rsplit(".", 1)[-1] in FIT_DISCREPANCY else None


def test_bad_weights_late_in_the_file_are_named_and_counted_as_whole(tmp_path):
    data, scales = _weighted_survey(tmp_path, {1300: "abc", 1400: "", 1450: "inf"})
    whole = run("compare", str(data), "-s", str(scales), "--engine", "memory", "--by", "site", "--weight", "wt")
    streamed = run("compare", str(data), "-s", str(scales), "--engine", "stream", "--block-size", "4096",
                   "--by", "site", "--weight", "wt")
    assert whole[0] == streamed[0] == 4
    assert streamed[2] == whole[2]
    assert "row 1302, column wt" in streamed[2]
    lenient_whole, lenient_streamed = both_routes("reliability", data, scales, "--weight", "wt", "--lenient")
    assert_same_numbers(lenient_streamed, lenient_whole)
    assert sum("weight" in text for text in lenient_whole["notes"]) >= 3  # refused kinds counted in notes


def weighted_runs_in_memory_and_on_dask(cluster, tmp_path: Path, command: str, *options: str) -> tuple[dict, dict]:
    """The JSON of ``command`` on the weighted survey read whole, and on the same rows as three Parquet files on
    the cluster, without their provenance (input, engine)."""
    import pyarrow as pa
    import pyarrow.csv as pacsv
    import pyarrow.parquet as pq

    data, scales = _weighted_survey(tmp_path)
    table = pacsv.read_csv(data, convert_options=pacsv.ConvertOptions(column_types={"staff_id": pa.string()}))
    folder = tmp_path / "parts"
    folder.mkdir()
    for part in range(3):
        pq.write_table(table.slice(part * 500, 500), folder / f"part-{part}.parquet", row_group_size=200)
    in_memory, on_dask = memory_and_dask(command, data, folder, scales, cluster.scheduler_address, "--weight", "wt",
                                         *options)
    on_dask.pop("engine")
    in_memory.pop("input")
    on_dask.pop("input")
    return in_memory, on_dask


def test_weighted_compare_on_dask(cluster, tmp_path):
    in_memory, on_dask = weighted_runs_in_memory_and_on_dask(cluster, tmp_path, "compare", "--by", "site")
    assert_comparison_equal(on_dask, in_memory)
