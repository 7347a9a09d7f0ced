"""`structure` with --missing pairwise, --missing em and --ordinal, and `structure` and `confirm` with survey
weights, on the streaming route (a file read in blocks of 4 KiB) and on a Dask cluster: the same JSON as the
whole-file route. The matrices themselves are checked against pandas and the float-rows EM below."""
from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from .engine_data import ITEMS, SCALES, survey_rows, write_csv, write_dataset
from .test_engine_compare_confirm import _weighted_survey, weighted_runs_in_memory_and_on_dask
from .test_engine_stream import assert_same_numbers, both_routes, memory_and_dask, run


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    return write_csv(tmp_path / "survey.csv", survey_rows(1500)), scales


def keyed_items(data: Path):
    """The keyed answers as floats (blank and the 'no answer' code 9 missing; wl2 reversed on 1..5)."""
    import pandas as pd

    frame = pd.read_csv(data, usecols=ITEMS, dtype=float)[ITEMS]
    frame = frame.where(frame != 9)
    frame["wl2"] = 6 - frame["wl2"]
    return frame


@pytest.mark.parametrize("options", [("--missing", "pairwise"), ("--missing", "em"), ("--ordinal",),
                                     ("--ordinal", "--missing", "pairwise"), ("--ordinal", "--missing", "em")])
def test_structure_streamed_equals_whole_file(survey, options):
    whole, streamed = both_routes("structure", *survey, *options)
    assert streamed == whole  # the same summaries of the same codes: equal to the bit
    assert whole["missing_method"] == (options[-1] if "--missing" in options else "listwise")
    assert whole["correlation_type"] == ("polychoric" if "--ordinal" in options else "pearson")


def test_structure_pairwise_correlations_and_n_are_pandas(survey):
    # reference: pandas.DataFrame.cov (pairwise-complete covariances; each variance over the item's own
    # answers) scaled to correlations, and notna counts, on the rows
    data, scales = survey
    frame = keyed_items(data)
    _, streamed = both_routes("structure", data, scales, "--missing", "pairwise")
    cov = frame.cov().to_numpy()
    sd = np.sqrt(np.diag(cov))
    got = np.array([[streamed["correlation"][a][b] for b in ITEMS] for a in ITEMS])
    np.testing.assert_allclose(got, cov / np.outer(sd, sd), atol=1e-12)
    observed = frame.notna().to_numpy(dtype=int)
    assert streamed["n_used"] == int((observed.T @ observed).min())
    assert streamed["n_set_aside"] == 0


def test_structure_em_correlations_equal_the_rows_em(survey):
    # reference: stats.em on the keyed float rows (PatternSummary.from_values), which tests/test_em.py checks
    # against Anderson's (1957) closed form; the streamed EM runs on the merged pattern sums of the codes
    from scalewright.stats.em import em_means_and_covariance
    from scalewright.stats.missing_patterns import PatternSummary

    data, scales = survey
    frame = keyed_items(data)
    _, streamed = both_routes("structure", data, scales, "--missing", "em")
    estimate = em_means_and_covariance(PatternSummary.from_values(frame.to_numpy()))
    sd = np.sqrt(np.diag(estimate.cov))
    reference = estimate.cov / np.outer(sd, sd)
    got = np.array([[streamed["correlation"][a][b] for b in ITEMS] for a in ITEMS])
    np.testing.assert_allclose(got, reference, atol=1e-8)  # EM stops at a tolerance of 1e-10
    assert streamed["n_used"] == int(frame.notna().any(axis=1).sum())
    assert streamed["n_set_aside"] == len(frame) - streamed["n_used"]


def test_structure_ordinal_rests_on_the_complete_rows(survey):
    # reference: pandas' count of the rows answering every item (the polychoric tables are listwise)
    data, scales = survey
    _, streamed = both_routes("structure", data, scales, "--ordinal")
    assert streamed["n_used"] == int(keyed_items(data).notna().all(axis=1).sum())
    assert streamed["correlation_type"] == "polychoric"


@pytest.mark.parametrize("command", ["structure", "confirm"])
def test_weighted_structure_and_confirm_streamed_equal_whole_file(tmp_path, command):
    # reference: numpy's cov(aweights=...) on the rows and Kish's n_eff = (sum w)^2 / sum w^2 (the whole-file
    # route's weighted_structure_of_file and weighted_model_input), checked here once more against numpy
    data, scales = _weighted_survey(tmp_path)
    whole, streamed = both_routes(command, data, scales, "--weight", "wt")
    assert_same_numbers(streamed, whole)
    import pandas as pd

    frame = keyed_items(data)
    weights = pd.read_csv(data, usecols=["wt"])["wt"].to_numpy()
    columns = ITEMS if command == "structure" else ["wl1", "wl2", "wl3", "wl4"]
    used = frame[columns].notna().all(axis=1).to_numpy() & (weights > 0)
    w = weights[used]
    block = streamed["weighted"] if command == "structure" else streamed["models"]["workload"]["weighted"]
    assert block["n"] == int(used.sum())
    assert block["n_effective"] == pytest.approx(w.sum() ** 2 / (w @ w), rel=1e-12)
    if command == "structure":
        cov = np.cov(frame.to_numpy()[used].T, aweights=w)
        sd = np.sqrt(np.diag(cov))
        got = np.array([[streamed["correlation"][a][b] for b in ITEMS] for a in ITEMS])
        np.testing.assert_allclose(got, cov / np.outer(sd, sd), atol=1e-12)


@pytest.mark.parametrize(("command", "options", "message"), [
    ("structure", ("--ordinal",), "--ordinal cannot use survey weights"),
    ("structure", ("--missing", "em"), "--missing listwise only"),
    ("confirm", ("--ordinal",), "--ordinal cannot use survey weights"),
    ("confirm", ("--pairwise",), "--missing listwise only"),
    ("confirm", ("--by", "site"), "--by (invariance) does not use survey weights")])
def test_weighted_combinations_refused_on_every_route_alike(tmp_path, command, options, message):
    data, scales = _weighted_survey(tmp_path)
    errors = []
    for engine in (("--engine", "memory"), ("--engine", "stream", "--block-size", "4096")):
        code, _, err = run(command, str(data), "-s", str(scales), "--weight", "wt", *engine, *options)
        assert code == 2
        assert message in err
        errors.append(err)
    assert errors[0] == errors[1]


def test_weights_named_in_the_scale_file_stream_structure_and_confirm(tmp_path):
    data, scales = _weighted_survey(tmp_path)
    scales.write_text(SCALES.replace("groups: [shift]", "groups: [shift]\nweight: wt"), encoding="utf-8")
    for command in ("confirm", "structure"):
        whole, streamed = both_routes(command, data, scales)
        assert_same_numbers(streamed, whole)
        assert "weighted" in json.dumps(whole)


@pytest.mark.parametrize("options", [("--missing", "em"), ("--ordinal", "--missing", "pairwise")])
def test_structure_on_dask_equals_the_in_memory_run(cluster, tmp_path, options):
    whole_file, folder, scales = write_dataset(tmp_path, survey_rows(1200, seed=5), parts=3, row_group_size=150)
    in_memory, on_dask = memory_and_dask("structure", whole_file, folder, scales, cluster.scheduler_address, *options)
    assert on_dask.pop("engine")["partitions"] == 3
    in_memory.pop("input")
    on_dask.pop("input")
    assert_same_numbers(on_dask, in_memory)


@pytest.mark.parametrize("command", ["structure", "confirm"])
def test_weighted_fits_on_dask_equal_the_in_memory_run(cluster, tmp_path, command):
    # the exact weighted sums merge to the same bits in any tree of partitions
    in_memory, on_dask = weighted_runs_in_memory_and_on_dask(cluster, tmp_path, command)
    assert_same_numbers(on_dask, in_memory)
    assert "weighted" in json.dumps(on_dask)
