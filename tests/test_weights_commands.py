"""Survey weights in score --standardize z, confirm, structure, screen and report."""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from scalewright.cli import main

TWO_SCALES = """version: 1
id_column: staff_id
weight: w
response: {min: 1, max: 5}
scales:
  support:
    items: [sp1, sp2, sp3, sp4]
    reverse: [sp4]
  workload:
    items: [wl1, wl2, wl3, wl4]
"""


def climate(n: int, weights, *, seed: int = 3) -> pd.DataFrame:
    """Two related traits, four five-point items each (our fictional staff climate survey, generated)."""
    rng = np.random.default_rng(seed)
    traits = rng.multivariate_normal([0, 0], [[1, 0.4], [0.4, 1]], size=n)
    frame = pd.DataFrame({"staff_id": [f"s{i:04d}" for i in range(n)], "site": rng.choice(["North", "South"], n),
                          "w": weights})
    for j in range(1, 5):
        sign = -1 if j == 4 else 1
        frame[f"sp{j}"] = np.clip(np.round(3 + sign * traits[:, 0] + rng.normal(scale=0.8, size=n)), 1, 5).astype(int)
        frame[f"wl{j}"] = np.clip(np.round(3 + 0.9 * traits[:, 1] + rng.normal(scale=0.9, size=n)), 1, 5).astype(int)
    return frame


def write(folder, frame: pd.DataFrame, name: str = "d.csv"):
    folder.mkdir(exist_ok=True)
    (folder / "s.yaml").write_text(TWO_SCALES)
    frame.to_csv(folder / name, index=False)
    return folder / name, folder / "s.yaml"


def replicated(frame: pd.DataFrame, weights: np.ndarray) -> pd.DataFrame:
    """Each row repeated w times, with weight 1 and ids of its own."""
    out = frame.loc[frame.index.repeat(weights)].assign(w=1).reset_index(drop=True)
    out["staff_id"] = [f"r{i:05d}" for i in range(len(out))]
    return out


def run_json(capsys, *args) -> dict:
    code = main([str(a) for a in [*args, "--format", "json"]])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


# ----------------------------------------------------------------------------- score --standardize z


def test_z_scores_from_weighted_mean_and_sd_against_statsmodels(tmp_path, capsys):
    from statsmodels.stats.weightstats import DescrStatsW

    weights = np.random.default_rng(2).uniform(0.2, 3.0, 60).round(3)
    weights[:3] = 0
    frame = climate(60, weights)
    data, scales = write(tmp_path, frame)
    main([str(a) for a in ("score", data, "--scales", scales, "--standardize", "z", "--out", tmp_path / "z.csv")])
    err = capsys.readouterr().err
    assert "weighted mean and sd" in err
    written = pd.read_csv(tmp_path / "z.csv")
    assert len(written) == 60  # rows of weight 0 stay, with a z score
    score = frame[["wl1", "wl2", "wl3", "wl4"]].mean(axis=1).to_numpy()
    # statsmodels DescrStatsW computed live; ddof = sum(w^2)/sum(w) gives the divisor sum(w) - sum(w^2)/sum(w)
    used = weights > 0
    reference = DescrStatsW(score[used], weights=weights[used])
    expected = (score - reference.mean) / reference.std_ddof(np.sum(weights[used] ** 2) / weights[used].sum())
    np.testing.assert_allclose(written["workload__z"], expected, rtol=1e-12)
    body = run_json(capsys, "score", data, "--scales", scales, "--standardize", "z")
    basis = body["scores"]["scales"]["workload"]["z_basis"]
    assert basis["weighted"] is True
    assert basis["weight_column"] == "w"
    assert basis["n_zero_weight"] == 3
    assert basis["mean"] == pytest.approx(reference.mean, rel=1e-12)


def test_z_scores_unit_weights_equal_unweighted_and_scaling_changes_nothing(tmp_path, capsys):
    frame = climate(50, 1.0)
    frame["w7"] = 7.5
    data, scales = write(tmp_path, frame)
    files = {}
    for name, extra in (("plain", ["--weight", "w"]), ("scaled", ["--weight", "w7"])):
        main([str(a) for a in ("score", data, "--scales", scales, "--standardize", "z", *extra,
                               "--out", tmp_path / f"{name}.csv")])
        files[name] = pd.read_csv(tmp_path / f"{name}.csv")
    (tmp_path / "s.yaml").write_text(TWO_SCALES.replace("weight: w\n", ""))
    main([str(a) for a in ("score", data, "--scales", scales, "--standardize", "z", "--out", tmp_path / "none.csv")])
    capsys.readouterr()
    unweighted = pd.read_csv(tmp_path / "none.csv")
    # scipy.stats.zscore (ddof=1) is the outside reference of the unweighted z scores
    from scipy import stats

    score = frame[["sp1", "sp2", "sp3"]].assign(sp4=6 - frame["sp4"]).mean(axis=1)
    np.testing.assert_allclose(unweighted["support__z"], stats.zscore(score, ddof=1), rtol=1e-12)
    np.testing.assert_allclose(files["plain"]["support__z"], unweighted["support__z"], rtol=1e-12)
    np.testing.assert_allclose(files["scaled"]["support__z"], files["plain"]["support__z"], rtol=1e-12)
