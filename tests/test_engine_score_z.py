"""`score --standardize z` on the streaming route: a first pass for each score's mean and SD, a second that
writes the rows. The scored file equals the whole-file route's byte for byte (the same floats, so the same
text); the z scores themselves are held to scipy.stats.zscore."""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.engine.ordered_sum import OrderedSum

from .engine_data import SCALES, survey_rows, write_csv
from .test_engine_score_stream import score_both
from .test_engine_stream import _with_cells, run


@settings(max_examples=60, deadline=None)
@given(n=st.one_of(st.integers(0, 300), st.integers(300, 60_000)), seed=st.integers(0, 2**32 - 1),
       piece=st.integers(1, 5000))
def test_ordered_sum_is_numpys_sum_to_the_bit(n, seed, piece):
    # reference: numpy.add.reduce of the whole array (its pairwise summation)
    values = np.random.default_rng(seed).standard_normal(n) * 1e6
    total = OrderedSum(n)
    for start in range(0, n, piece):
        total.add(values[start:start + piece])
    assert total.total() == np.add.reduce(values)


def test_ordered_sum_refuses_a_wrong_count():
    total = OrderedSum(3)
    total.add(np.ones(2))
    with pytest.raises(ValueError, match="announced"):
        total.total()


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    return write_csv(tmp_path / "survey.csv", survey_rows(6000)), scales


@pytest.mark.parametrize("suffix", [".csv", ".parquet"])
def test_z_scores_streamed_are_the_whole_file_ones(survey, suffix):
    import pandas as pd
    from scipy import stats

    whole, streamed, err = score_both(*survey, suffix, "--standardize", "z")
    if suffix == ".csv":
        assert streamed.read_bytes() == whole.read_bytes()
        frame = pd.read_csv(streamed)
    else:
        pd.testing.assert_frame_equal(pd.read_parquet(streamed), pd.read_parquet(whole), check_exact=True)
        frame = pd.read_parquet(streamed)
    assert "z scores are taken from the unweighted mean and sd" in err
    # reference: scipy.stats.zscore with ddof=1, leaving the unscored rows out
    for name in ("workload", "climate"):
        expected = stats.zscore(frame[name].to_numpy(), ddof=1, nan_policy="omit")
        np.testing.assert_allclose(frame[f"{name}__z"].to_numpy(), expected, rtol=1e-12, atol=1e-12)


def test_z_summary_json_equals_the_whole_file_one(survey):
    import json

    data, scales = survey
    outputs = []
    for engine in (("--engine", "memory"), ("--engine", "stream", "--block-size", "4096")):
        code, out, err = run("score", str(data), "-s", str(scales), "--standardize", "z", "--format", "json", *engine)
        assert code == 0, err
        body = json.loads(out)
        body.pop("input")
        assert body.pop("engine", None) == ({"name": "stream"} if "stream" in engine else None)
        outputs.append(body)
    assert outputs[1] == outputs[0]
    assert outputs[0]["scores"]["scales"]["workload"]["z_basis"]["sd"] > 0


def test_a_refused_value_late_in_the_file_refuses_before_any_row_is_written(survey):
    data, scales = survey
    _with_cells(data, {(5900, 5): "7"})
    target = data.with_name("z.csv")
    whole = run("score", str(data), "-s", str(scales), "--standardize", "z", "--out", str(target), "--engine", "memory")
    streamed = run("score", str(data), "-s", str(scales), "--standardize", "z", "--out", str(target),
                   "--engine", "stream", "--block-size", "4096")
    assert whole[0] == streamed[0] == 4
    assert streamed[2] == whole[2]
    assert not target.exists()
