"""Reading survey weights: the scale file's `weight:` key, `--weight`, and every kind of bad weight."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright.cli import main
from scalewright.errors import DataError
from scalewright.spec import load_spec
from scalewright.weights import read_weights

from .conftest import folder_fingerprint

SCALES = """version: 1
title: Staff climate test
id_column: staff_id
{weight}
response: {{min: 1, max: 5}}
scales:
  workload:
    items: [wl1, wl2, wl3]
"""


def make_files(tmp_path, *, weight_line="weight: w", weights=None, n=40, seed=4):
    rng = np.random.default_rng(seed)
    frame = pd.DataFrame({"staff_id": [f"s{i:02d}" for i in range(n)],
                          "site": rng.choice(["North", "South"], n),
                          "w": rng.uniform(0.5, 2.0, n).round(3) if weights is None else weights,
                          "v": rng.uniform(0.5, 2.0, n).round(3)})
    for j in range(1, 4):
        frame[f"wl{j}"] = rng.integers(1, 6, n)
    data = tmp_path / "climate.csv"
    frame.to_csv(data, index=False)
    scales = tmp_path / "climate.yaml"
    scales.write_text(SCALES.format(weight=weight_line))
    return data, scales, frame


def run(capsys, *args):
    code = main([str(a) for a in args])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def test_scale_file_key_is_read(tmp_path):
    _, scales, _ = make_files(tmp_path)
    assert load_spec(scales).weight == "w"
    _, scales, _ = make_files(tmp_path, weight_line="")
    assert load_spec(scales).weight is None


def test_weight_column_may_not_be_an_item(tmp_path, capsys):
    data, scales, _ = make_files(tmp_path, weight_line="weight: wl1")
    code, _, err = run(capsys, "shape", data, "--scales", scales)
    assert code == 3
    assert "wl1" in err
    assert "weight" in err


def test_zero_weights_are_counted_not_refused():
    frame = pd.DataFrame({"w": [1.0, 0.0, 2.5, 0.0]})
    weights = read_weights(frame, "w", np.arange(2, 6), path="d.csv")
    assert weights.n_zero_weight == 2
    assert weights.refused == {}
    np.testing.assert_array_equal(weights.values, [1.0, 0.0, 2.5, 0.0])
    half = weights.subset(np.array([0, 1]))
    assert half.n_zero_weight == 1


@pytest.mark.parametrize(("cell", "kind", "shown"), [
    (None, "missing", "no weight given"),
    (-1.5, "negative", "'-1.5' is a negative weight"),
    ("heavy", "not_numeric", "'heavy' is a weight that is not a number"),
    ("inf", "not_finite", "'inf' is an infinite weight"),
])
def test_each_bad_weight_refused_with_row_and_column_or_counted(cell, kind, shown):
    raw = pd.Series([1.0, 2.0, cell, 0.5], dtype=object)
    frame = pd.DataFrame({"w": raw})
    with pytest.raises(DataError) as caught:
        read_weights(frame, "w", np.arange(2, 6), path="d.csv")
    text = str(caught.value)
    assert "row 4, column w" in text
    assert shown in text
    assert "--lenient" in text
    weights = read_weights(frame, "w", np.arange(2, 6), path="d.csv", lenient=True)
    assert weights.refused == {kind: 1}
    assert weights.n_zero_weight == 0
    assert weights.values[2] == 0.0  # left out of every estimate


def test_absent_weight_column_is_named(tmp_path):
    frame = pd.DataFrame({"weight": [1.0]})
    with pytest.raises(DataError, match="'weigth' is not in the data file.*'weight'"):
        read_weights(frame, "weigth", np.array([2]), path="d.csv")


@pytest.mark.parametrize("command", ["tally", "shape", "reliability", "compare", "score", "structure", "confirm",
                                     "screen", "report"])
def test_every_analysis_command_takes_weight(command, capsys):
    code, out, _ = run(capsys, command, "--help")
    assert code == 0
    assert "--weight COLUMN" in out


def test_inputs_read_outside_a_command_say_the_weights_are_not_used(tmp_path):
    from scalewright.cli.common import load_inputs

    data, scales, _ = make_files(tmp_path)
    inputs = load_inputs(data, scales)
    assert getattr(inputs.responses, "weights", None) is None
    assert any("does not use weights" in n for n in inputs.notes)


def test_bad_weight_through_a_command_changes_no_file(tmp_path, capsys):
    weights = np.full(30, 1.0, dtype=object)
    weights[7] = "n/a?"
    data, scales, _ = make_files(tmp_path, weights=weights, n=30)
    before = folder_fingerprint(tmp_path)
    code, _, err = run(capsys, "tally", data, "--scales", scales, "--columns", "site", "--out", tmp_path / "t.json")
    assert code == 4
    assert "row 9, column w" in err
    assert "not a number" in err
    assert folder_fingerprint(tmp_path) == before


# ----------------------------------------------------------------------------- tally


def test_tally_weighted_shares_beside_the_unweighted(tmp_path, capsys):
    import json

    data, scales, frame = make_files(tmp_path, n=80)
    frame.loc[3, "w"] = 0.0
    frame.to_csv(data, index=False)
    code, out, _ = run(capsys, "tally", data, "--scales", scales, "--columns", "site", "--format", "json")
    assert code == 0
    record = json.loads(out)["columns"]["site"]
    block = record["weighted"]
    assert block["weighted"] is True
    assert block["weight_column"] == "w"
    assert block["n"] == 80
    assert block["n_zero_weight"] == 1
    w = frame["w"].to_numpy()
    # numpy: sum of weights per category over the total, and Kish (1965) n_eff = (sum w)^2 / sum w^2
    assert block["sum_of_weights"] == pytest.approx(w.sum())
    assert block["n_effective"] == pytest.approx(w.sum() ** 2 / np.sum(w**2))
    north = next(c for c in block["categories"] if c["category"] == "North")
    assert north["share_of_answered_pct"] == pytest.approx(100 * w[frame["site"] == "North"].sum() / w.sum())
    # the unweighted tally is still there, row 3 included
    assert record["n_total"] == 80
    # --weight wins over the scale file's weight
    code, out, _ = run(capsys, "tally", data, "--scales", scales, "--columns", "site", "--weight", "v",
                       "--format", "json")
    assert json.loads(out)["columns"]["site"]["weighted"]["weight_column"] == "v"


def test_tally_expected_weighted_and_unweighted(tmp_path, capsys):
    import json

    from scipy import stats

    data, scales, frame = make_files(tmp_path, n=120)
    census = tmp_path / "census.csv"
    census.write_text("category,proportion\nNorth,0.4\nSouth,0.6\n")
    code, out, _ = run(capsys, "tally", data, "--scales", scales, "--columns", "site", "--expected", census,
                       "--format", "json")
    assert code == 0
    record = json.loads(out)["columns"]["site"]
    fit = record["weighted_fit"]
    w = frame["w"].to_numpy()
    n_eff = w.sum() ** 2 / np.sum(w**2)  # Kish (1965)
    shares = np.array([w[frame["site"] == s].sum() for s in ("North", "South")]) / w.sum()
    # scipy.stats.chisquare on the weighted shares scaled to n_eff (the stated Kish approximation)
    reference = stats.chisquare(n_eff * shares, n_eff * np.array([0.4, 0.6]))
    assert fit["chi2"] == pytest.approx(reference.statistic)
    assert fit["pvalue"] == pytest.approx(reference.pvalue)
    assert fit["weighted"] is True
    assert fit["n_effective"] == pytest.approx(n_eff)
    assert fit["n"] == 120
    assert "fit" in record  # the unweighted comparison beside
    code, out, _ = run(capsys, "tally", data, "--scales", scales, "--columns", "site", "--expected", census,
                       "--format", "table")
    assert "Weighted shares against the reference" in out
    assert "unweighted: χ²" in out


def test_tally_unit_weights_equal_the_unweighted_test(tmp_path, capsys):
    import json

    data, scales, frame = make_files(tmp_path, weights=np.ones(90), n=90)
    census = tmp_path / "census.csv"
    census.write_text("category,proportion\nNorth,0.3\nSouth,0.7\n")
    code, out, _ = run(capsys, "tally", data, "--scales", scales, "--columns", "site", "--expected", census,
                       "--format", "json")
    record = json.loads(out)["columns"]["site"]
    # with all weights 1 the weighted test is scipy's chisquare on the plain counts (as the unweighted fit)
    assert record["weighted_fit"]["chi2"] == pytest.approx(record["fit"]["chi2"], rel=1e-12)
    assert record["weighted_fit"]["pvalue"] == pytest.approx(record["fit"]["pvalue"], rel=1e-10)
    for plain, weighted in zip(record["categories"], record["weighted"]["categories"], strict=True):
        assert weighted["share_of_answered_pct"] == pytest.approx(plain["share_of_answered_pct"], rel=1e-12)


def test_weight_without_scale_file_is_a_usage_error(tmp_path, capsys):
    data, _, _ = make_files(tmp_path)
    code, _, err = run(capsys, "tally", data, "--columns", "site", "--weight", "w")
    assert code == 2
    assert "--weight needs the scale file" in err


# ----------------------------------------------------------------------------- shape


def _shape_json(capsys, data, scales, *extra):
    import json

    code, out, err = run(capsys, "shape", data, "--scales", scales, "--format", "json", *extra)
    assert code == 0, err
    return json.loads(out)["scales"]["workload"]


def test_shape_weighted_against_statsmodels(tmp_path, capsys):
    from statsmodels.stats.weightstats import DescrStatsW

    data, scales, frame = make_files(tmp_path, n=90)
    block = _shape_json(capsys, data, scales)["all"]["weighted"]
    score = frame[["wl1", "wl2", "wl3"]].mean(axis=1).to_numpy()
    w = frame["w"].to_numpy()
    reference = DescrStatsW(score, weights=w)  # statsmodels, computed live
    assert block["weighted"] is True
    assert block["n"] == 90
    assert block["weight_column"] == "w"
    assert block["mean"] == pytest.approx(reference.mean, rel=1e-12)
    assert block["sd"] == pytest.approx(reference.std_ddof(np.sum(w**2) / w.sum()), rel=1e-12)
    assert block["median"] == pytest.approx(reference.quantile([0.5], return_pandas=False)[0])
    assert block["percentiles"]["90"] == pytest.approx(reference.quantile([0.9], return_pandas=False)[0])
    # numpy's weighted histogram over the unweighted cells
    edges = block["histogram"]["edges"]
    mass, _ = np.histogram(score, bins=edges, weights=w)
    np.testing.assert_allclose(block["histogram"]["weighted_pct"], 100 * mass / w.sum())


def test_shape_unit_weights_equal_unweighted_and_scaling_changes_nothing(tmp_path, capsys):
    data, scales, frame = make_files(tmp_path, weights=np.ones(70), n=70)
    frame["w10"] = 10.0
    frame.to_csv(data, index=False)
    result = _shape_json(capsys, data, scales, "--by", "site")
    for sample in [result["all"], *result["by"]["site"].values()]:
        weighted = sample["weighted"]
        for key in ("mean", "sd", "skewness", "kurtosis"):
            assert weighted[key] == pytest.approx(sample[key], rel=1e-10), key
        counts = np.array(sample["histogram"]["counts"], dtype=float)
        np.testing.assert_allclose(weighted["histogram"]["weighted_pct"], 100 * counts / counts.sum())
    scaled = _shape_json(capsys, data, scales, "--by", "site", "--weight", "w10")
    for key in ("mean", "sd", "skewness", "kurtosis", "median", "n_effective", "design_effect"):
        assert scaled["all"]["weighted"][key] == pytest.approx(result["all"]["weighted"][key], rel=1e-10)


def test_shape_integer_weights_equal_replicated_rows(tmp_path, capsys):
    rng = np.random.default_rng(8)
    weights = rng.integers(1, 4, 50)
    data, scales, frame = make_files(tmp_path, weights=weights, n=50)
    block = _shape_json(capsys, data, scales)["all"]["weighted"]
    repeated = frame.loc[frame.index.repeat(weights)]
    copies = tmp_path / "copies"
    copies.mkdir()
    repeated.assign(w=1, staff_id=[f"r{i}" for i in range(len(repeated))]).to_csv(copies / "d.csv", index=False)
    plain = _shape_json(capsys, copies / "d.csv", scales)["all"]
    from statsmodels.stats.weightstats import DescrStatsW

    # the replicated file's unweighted mean, and statsmodels DescrStatsW quantiles of its scores (unit weights)
    assert block["mean"] == pytest.approx(plain["mean"], rel=1e-12)
    replicated = DescrStatsW(repeated[["wl1", "wl2", "wl3"]].mean(axis=1).to_numpy())
    probs = [0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95]
    np.testing.assert_allclose(list(block["percentiles"].values()), replicated.quantile(probs, return_pandas=False))
    np.testing.assert_allclose(block["histogram"]["weighted_pct"], plain["weighted"]["histogram"]["weighted_pct"])


def test_zero_weight_rows_kept_in_scores_left_out_of_estimates(tmp_path, capsys):
    weights = np.ones(40)
    weights[:5] = 0
    data, scales, frame = make_files(tmp_path, weights=weights, n=40)
    block = _shape_json(capsys, data, scales)["all"]
    assert block["n"] == 40
    assert block["weighted"]["n"] == 40
    assert block["weighted"]["n_zero_weight"] == 5
    score = frame[["wl1", "wl2", "wl3"]].mean(axis=1).to_numpy()
    assert block["weighted"]["mean"] == pytest.approx(score[5:].mean())  # numpy mean of the weighted rows


# ----------------------------------------------------------------------------- reliability

RELIABILITY_SCALES = """version: 1
id_column: staff_id
weight: w
response: {min: 1, max: 5}
scales:
  support:
    items: [sp1, sp2, sp3, sp4]
    reverse: [sp4]
"""


def _related_files(tmp_path, weights, n, seed=21, name="d.csv"):
    rng = np.random.default_rng(seed)
    trait = rng.normal(size=n)
    frame = pd.DataFrame({"staff_id": [f"s{i:03d}" for i in range(n)], "site": rng.choice(["North", "South"], n),
                          "w": weights})
    for j in range(1, 5):
        sign = -1 if j == 4 else 1
        frame[f"sp{j}"] = np.clip(np.round(3 + sign * trait + rng.normal(scale=0.9, size=n)), 1, 5).astype(int)
    data = tmp_path / name
    frame.to_csv(data, index=False)
    scales = tmp_path / "r.yaml"
    scales.write_text(RELIABILITY_SCALES)
    return data, scales, frame


def _reliability_json(capsys, data, scales, *extra):
    import json

    code, out, err = run(capsys, "reliability", data, "--scales", scales, "--format", "json", *extra)
    assert code == 0, err
    return json.loads(out)["scales"]["support"]


def test_reliability_integer_weights_equal_replicated_rows(tmp_path, capsys):
    import pingouin

    weights = np.random.default_rng(5).integers(1, 4, 80)
    data, scales, frame = _related_files(tmp_path, weights, 80)
    block = _reliability_json(capsys, data, scales)["weighted"]
    repeated = frame.loc[frame.index.repeat(weights)].copy()
    repeated["sp4"] = 6 - repeated["sp4"]
    # pingouin.cronbach_alpha on the rows repeated w times, computed live
    alpha, _ = pingouin.cronbach_alpha(repeated[["sp1", "sp2", "sp3", "sp4"]])
    assert block["alpha"] == pytest.approx(alpha, rel=1e-10)
    assert block["weighted"] is True
    assert block["n"] == 80
    assert block["weight_column"] == "w"
    # numpy: item-rest correlation of sp1 on the replicated rows
    rest = repeated[["sp2", "sp3", "sp4"]].sum(axis=1)
    assert block["items"]["sp1"]["item_rest_r"] == pytest.approx(np.corrcoef(repeated["sp1"], rest)[0, 1], rel=1e-10)
    assert block["items"]["sp1"]["mean"] == pytest.approx(repeated["sp1"].mean(), rel=1e-12)
    # omega: the unweighted omega of the replicated file (a function of the covariance matrix only)
    copies = tmp_path / "copies"
    copies.mkdir()
    _related_files(copies, 1, 1)  # writes the scale file there
    repeated_data = frame.loc[frame.index.repeat(weights)].assign(w=1)
    repeated_data["staff_id"] = [f"r{i}" for i in range(len(repeated_data))]
    repeated_data.to_csv(copies / "d.csv", index=False)
    plain = _reliability_json(capsys, copies / "d.csv", copies / "r.yaml")
    assert block["omega_total"] == pytest.approx(plain["omega_total"], rel=1e-6)


def test_reliability_unit_weights_equal_unweighted(tmp_path, capsys):
    data, scales, _ = _related_files(tmp_path, np.ones(90), 90)
    result = _reliability_json(capsys, data, scales, "--by", "site")
    for plain in [result, *result["by"]["site"].values()]:
        weighted = plain["weighted"]
        for key in ("alpha", "alpha_standardized", "omega_total", "lambda2", "lambda6", "mean_inter_item_r"):
            assert weighted[key] == pytest.approx(plain[key], rel=1e-9), key
        np.testing.assert_allclose(weighted["alpha_ci"], plain["alpha_ci"], rtol=1e-9)
        for item in ("sp1", "sp4"):
            for key in ("mean", "sd", "item_rest_r", "alpha_if_deleted", "floor_pct", "ceiling_pct"):
                assert weighted["items"][item][key] == pytest.approx(plain["items"][item][key], rel=1e-9), key


def test_reliability_ci_uses_kish_effective_n(tmp_path, capsys):
    from scipy import stats

    weights = np.random.default_rng(9).uniform(0.3, 3.0, 100).round(3)
    data, scales, _ = _related_files(tmp_path, weights, 100)
    block = _reliability_json(capsys, data, scales)["weighted"]
    n_eff = weights.sum() ** 2 / np.sum(weights**2)  # Kish (1965)
    assert block["n_effective"] == pytest.approx(n_eff)
    # Feldt, Woodruff & Salih (1987) interval with scipy's F quantiles and n_eff in place of n
    df1, df2 = n_eff - 1, (n_eff - 1) * 3
    lower = 1 - (1 - block["alpha"]) * stats.f.ppf(0.975, df1, df2)
    upper = 1 - (1 - block["alpha"]) * stats.f.ppf(0.025, df1, df2)
    np.testing.assert_allclose(block["alpha_ci"], [lower, upper], rtol=1e-9)
    scaled = _reliability_json(capsys, data, scales, "--weight", "w")  # same column: sanity of --weight
    assert scaled["weighted"]["alpha"] == block["alpha"]


# ----------------------------------------------------------------------------- compare


def _compare_json(capsys, data, scales, *extra):
    import json

    code, out, err = run(capsys, "compare", data, "--scales", scales, "--by", "site", "--format", "json", *extra)
    assert code == 0, err
    return json.loads(out)["scales"]["workload"]


def test_compare_unit_weights_equal_scipy_and_pingouin(tmp_path, capsys):
    import pingouin
    from scipy import stats

    data, scales, frame = make_files(tmp_path, weights=np.ones(80), n=80)
    block = _compare_json(capsys, data, scales)["comparisons"]["site"]["weighted"]
    score = frame[["wl1", "wl2", "wl3"]].mean(axis=1).to_numpy()
    north, south = score[frame["site"] == "North"], score[frame["site"] == "South"]
    # scipy's Welch t test and pingouin's Hedges' g with its interval, computed live
    welch = stats.ttest_ind(north, south, equal_var=False)
    assert block["t"] == pytest.approx(welch.statistic, rel=1e-10)
    assert block["pvalue"] == pytest.approx(welch.pvalue, rel=1e-8)
    g = pingouin.compute_effsize(north, south, eftype="hedges")
    assert block["hedges_g"] == pytest.approx(g, rel=1e-10)
    ci = pingouin.compute_esci(stat=g, nx=north.size, ny=south.size, eftype="hedges", decimals=15)
    np.testing.assert_allclose(block["hedges_g_ci"], ci, rtol=1e-9)
    # eta-squared: between over total sum of squares (numpy)
    grand = score.mean()
    between = north.size * (north.mean() - grand) ** 2 + south.size * (south.mean() - grand) ** 2
    assert block["eta_squared"] == pytest.approx(between / np.sum((score - grand) ** 2), rel=1e-10)
    assert block["weighted"] is True
    assert block["n"] == 80
    assert block["sum_of_weights"] == pytest.approx(80)


def test_compare_integer_weights_equal_replicated_means(tmp_path, capsys):
    weights = np.random.default_rng(13).integers(1, 5, 60)
    data, scales, frame = make_files(tmp_path, weights=weights, n=60)
    workload = _compare_json(capsys, data, scales)
    block = workload["comparisons"]["site"]["weighted"]
    levels = {level: workload["by"]["site"][level]["weighted"] for level in ("North", "South")}
    repeated = frame.loc[frame.index.repeat(weights)]
    score = repeated[["wl1", "wl2", "wl3"]].mean(axis=1)
    # pandas group means of the rows repeated w times; eta-squared is a ratio of sums of squares (numpy)
    for level in ("North", "South"):
        assert levels[level]["mean"] == pytest.approx(score[repeated["site"] == level].mean(), rel=1e-12)
    grand = score.mean()
    between = sum((repeated["site"] == lv).sum() * (score[repeated["site"] == lv].mean() - grand) ** 2
                  for lv in ("North", "South"))
    assert block["eta_squared"] == pytest.approx(between / np.sum((score - grand) ** 2), rel=1e-10)
    n_eff = {lv: weights[frame["site"] == lv].sum() ** 2 / np.sum(weights[frame["site"] == lv] ** 2)
             for lv in ("North", "South")}  # Kish (1965)
    assert levels["North"]["n_effective"] == pytest.approx(n_eff["North"])


def test_lint_lists_bad_weights(tmp_path, capsys):
    weights = np.full(30, 1.0, dtype=object)
    weights[[2, 9]] = -1
    weights[4] = 0
    data, scales, _ = make_files(tmp_path, weights=weights, n=30)
    code, out, _ = run(capsys, "lint", data, "--scales", scales)
    assert code == 4
    assert "row 4, column w" in out
    assert "row 11, column w" in out
    assert "2 weight(s)" in out


def test_score_weighted_summary_and_zero_weight_rows_kept(tmp_path, capsys):
    import json

    from statsmodels.stats.weightstats import DescrStatsW

    weights = np.random.default_rng(17).uniform(0.5, 2.0, 50).round(3)
    weights[:4] = 0
    data, scales, frame = make_files(tmp_path, weights=weights, n=50)
    code, out, _ = run(capsys, "score", data, "--scales", scales, "--format", "json")
    assert code == 0
    block = json.loads(out)["weighted"]["workload"]
    score = frame[["wl1", "wl2", "wl3"]].mean(axis=1).to_numpy()
    reference = DescrStatsW(score[4:], weights=weights[4:])  # statsmodels, computed live
    assert block["mean"] == pytest.approx(reference.mean, rel=1e-12)
    assert block["n"] == 50
    assert block["n_zero_weight"] == 4
    assert block["weighted"] is True
    code, _, _ = run(capsys, "score", data, "--scales", scales, "--out", tmp_path / "scores.csv")
    written = pd.read_csv(tmp_path / "scores.csv")
    assert len(written) == 50
    assert written["workload"].notna().all()
