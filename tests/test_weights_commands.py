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


def runs_by_weight(capsys, command: str, data, scales, *weights: str, options: tuple[str, ...] = ()) -> list[dict]:
    """The JSON of ``command`` weighted by the scale file's ``w``, by each column of ``weights``, and (last)
    with the scale file's weight line removed: the unweighted run (each with ``options``)."""
    runs = [run_json(capsys, command, data, "--scales", scales, *options)]
    runs += [run_json(capsys, command, data, "--scales", scales, "--weight", w, *options) for w in weights]
    scales.write_text(TWO_SCALES.replace("weight: w\n", ""))
    return [*runs, run_json(capsys, command, data, "--scales", scales, *options)]


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


# ----------------------------------------------------------------------------- confirm


def _model_numbers(model: dict) -> dict[str, float]:
    out = {key: model[key] for key in ("chi2", "cfi", "tli", "rmsea", "srmr")}
    for item, loadings in model["loadings"].items():
        for factor, value in loadings.items():
            out[f"loading {item} {factor}"] = value
            out[f"se {item} {factor}"] = model["loading_se"][item][factor]
    for name, omega in model["omega"].items():
        out[f"omega {name}"] = omega["omega_total"]
    return out


def test_confirm_integer_weights_equal_replicated_rows_against_semopy(tmp_path, capsys):
    import logging

    semopy = pytest.importorskip("semopy")
    weights = np.random.default_rng(11).integers(1, 4, 150)
    frame = climate(150, weights)
    data, scales = write(tmp_path, frame)
    models = run_json(capsys, "confirm", data, "--scales", scales)["models"]
    copies = replicated(frame, weights)
    # semopy (test reference only), computed live on the rows repeated w times, sp4 reverse-keyed as the tool does
    keyed = copies[["sp1", "sp2", "sp3", "sp4"]].assign(sp4=6 - copies["sp4"]).astype(float)
    logging.getLogger().setLevel(logging.ERROR)
    reference = semopy.Model("support =~ sp1 + sp2 + sp3 + sp4")
    reference.fit(keyed, options={"ftol": 1e-14, "maxiter": 20000})
    standardized = reference.inspect(std_est=True)
    support = models["support"]
    for item in ("sp1", "sp2", "sp3", "sp4"):
        row = standardized[(standardized.lval == item) & (standardized.rval == "support")]
        assert support["loadings"][item]["support"] == pytest.approx(float(row["Est. Std"].iloc[0]), abs=1e-3)
    # the chi-square differs by design: semopy's is N_rep x F_ML, ours n_eff x F_ML (Kish 1965)
    n_eff = weights.sum() ** 2 / np.sum(weights**2)
    theirs = semopy.calc_stats(reference).T["Value"]
    assert support["chi2"] == pytest.approx(theirs["chi2"] * n_eff / weights.sum(), rel=1e-3)
    assert support["weighted"]["n_effective"] == pytest.approx(n_eff, rel=1e-12)
    assert support["weighted"]["n"] == 150
    assert support["n_used"] == 150
    # our unweighted fit of the replicated file: every standardized estimate equal, chi-square scaled by n_eff/N
    data_copies, scales_copies = write(tmp_path / "copies", copies)
    (tmp_path / "copies" / "s.yaml").write_text(TWO_SCALES.replace("weight: w\n", ""))
    plain = run_json(capsys, "confirm", data_copies, "--scales", scales_copies)["models"]
    for name in ("support", "workload", "all"):
        for item, loadings in plain[name]["loadings"].items():
            for factor, value in loadings.items():
                assert models[name]["loadings"][item][factor] == pytest.approx(value, rel=1e-6)
        assert models[name]["chi2"] == pytest.approx(plain[name]["chi2"] * n_eff / weights.sum(), rel=1e-6)
    assert models["all"]["factor_correlations"]["support"]["workload"] == pytest.approx(
        plain["all"]["factor_correlations"]["support"]["workload"], rel=1e-6)


def test_confirm_unit_weights_equal_unweighted_and_scaling_changes_nothing(tmp_path, capsys):
    frame = climate(120, 1.0)
    frame["w3"] = 3.0
    frame["wr"] = np.random.default_rng(4).uniform(0.5, 2, 120)
    frame["wr10"] = frame["wr"] * 10
    data, scales = write(tmp_path, frame)
    ones, threes, varied, scaled, plain = (run["models"] for run in runs_by_weight(capsys, "confirm", data, scales,
                                                                                   "w3", "wr", "wr10"))
    for name in ("support", "workload", "all"):
        # with all weights 1 np.cov(aweights=1) is np.cov, and Kish's n_eff is n: the unweighted fit exactly
        for key, value in _model_numbers(plain[name]).items():
            assert _model_numbers(ones[name])[key] == pytest.approx(value, rel=1e-9, abs=1e-12), key
            assert _model_numbers(threes[name])[key] == pytest.approx(value, rel=1e-9, abs=1e-12), key
        for key, value in _model_numbers(varied[name]).items():
            assert _model_numbers(scaled[name])[key] == pytest.approx(value, rel=1e-9, abs=1e-12), key
        assert ones[name]["weighted"]["weighted"] is True
        assert "weighted" not in plain[name]


@pytest.mark.parametrize("extra", [["--ordinal"], ["--missing", "pairwise"], ["--by", "site"]])
def test_confirm_with_weights_refuses_what_it_cannot_weight(tmp_path, capsys, extra):
    data, scales = write(tmp_path, climate(60, 1.0))
    code = main([str(a) for a in ("confirm", data, "--scales", scales, *extra)])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("error: ")
    assert err.count("\n") == 1
    assert "weight" in err


# ----------------------------------------------------------------------------- structure

ITEMS = ["sp1", "sp2", "sp3", "sp4", "wl1", "wl2", "wl3", "wl4"]


def _keyed(frame: pd.DataFrame) -> np.ndarray:
    return frame[ITEMS].assign(sp4=6 - frame["sp4"]).to_numpy(float)


def _loadings(body: dict) -> np.ndarray:
    return np.array([body["loadings"][item] for item in ITEMS])


def test_structure_integer_weights_equal_replicated_rows(tmp_path, capsys):
    from factor_analyzer import FactorAnalyzer, calculate_bartlett_sphericity, calculate_kmo
    from scipy import stats

    weights = np.random.default_rng(6).integers(1, 4, 160)
    frame = climate(160, weights)
    data, scales = write(tmp_path, frame)
    body = run_json(capsys, "structure", data, "--scales", scales, "--factors", "2")
    copies = _keyed(replicated(frame, weights))
    # numpy: correlations and eigenvalues of the rows repeated w times
    r = np.corrcoef(copies, rowvar=False)
    ours = np.array([[body["correlation"][a][b] for b in ITEMS] for a in ITEMS])
    np.testing.assert_allclose(ours, r, rtol=1e-10)
    np.testing.assert_allclose(body["parallel"]["observed"], np.linalg.eigvalsh(r)[::-1], rtol=1e-10)
    # factor_analyzer (computed live) on the replicated rows: KMO and minres/oblimin loadings
    _, kmo_overall = calculate_kmo(copies)
    assert body["kmo"] == pytest.approx(kmo_overall, abs=1e-6)
    reference = FactorAnalyzer(n_factors=2, rotation="oblimin", method="minres", use_smc=True, is_corr_matrix=False,
                               bounds=(0.005, 1), impute="drop", svd_method="lapack", rotation_kwargs={}).fit(copies)
    theirs = reference.loadings_
    mine = _loadings(body)
    order = [int(np.argmax(np.abs(np.corrcoef(mine.T, theirs.T)[j, 2:]))) for j in range(2)]
    signs = np.sign([np.sum(mine[:, j] * theirs[:, order[j]]) for j in range(2)])
    np.testing.assert_allclose(theirs[:, order] * signs, mine, atol=1e-4)
    # Bartlett's test differs by design: factor_analyzer's uses N_rep rows, ours Kish's n_eff (Bartlett 1950 formula)
    chi2_rep, _ = calculate_bartlett_sphericity(copies)
    n_eff = weights.sum() ** 2 / np.sum(weights**2)
    p = len(ITEMS)
    expected = chi2_rep * (n_eff - 1 - (2 * p + 5) / 6) / (len(copies) - 1 - (2 * p + 5) / 6)
    assert body["bartlett"]["chi2"] == pytest.approx(expected, rel=1e-8)
    assert body["bartlett"]["pvalue"] == pytest.approx(stats.chi2.sf(expected, p * (p - 1) / 2), rel=1e-6)
    assert body["parallel"]["n"] == round(n_eff)
    block = body["weighted"]
    assert block["weighted"] is True
    assert block["n"] == 160
    assert block["n_effective"] == pytest.approx(n_eff, rel=1e-12)
    assert block["sum_of_weights"] == pytest.approx(weights.sum())
    assert body["n_used"] == 160


def test_structure_unit_weights_equal_unweighted_and_scaling_changes_nothing(tmp_path, capsys):
    frame = climate(140, 1.0)
    frame["wr"] = np.random.default_rng(12).uniform(0.3, 3, 140)
    frame["wr100"] = frame["wr"] * 100
    frame.loc[:4, ["wr", "wr100"]] = 0.0  # rows of weight 0 are left out of the estimates
    data, scales = write(tmp_path, frame)
    ones, varied, scaled, plain = runs_by_weight(capsys, "structure", data, scales, "wr", "wr100")
    for reference, other in ((plain, ones), (varied, scaled)):
        # the unweighted route sums exact integer cross-products, the weighted one calls np.cov: the last bits of
        # the correlations differ, and the iterative factoring carries them to about 1e-9 in the loadings
        np.testing.assert_allclose(_loadings(other), _loadings(reference), rtol=0, atol=1e-8)
        np.testing.assert_allclose(other["parallel"]["observed"], reference["parallel"]["observed"], rtol=1e-10)
        np.testing.assert_allclose(other["parallel"]["random"], reference["parallel"]["random"], rtol=1e-10)
        for key in ("kmo", "n_factors", "n_used"):
            assert other[key] == pytest.approx(reference[key], rel=1e-10), key
        assert other["bartlett"]["chi2"] == pytest.approx(reference["bartlett"]["chi2"], rel=1e-9)
        assert other["unidimensionality"]["support"]["eigen_ratio"] == pytest.approx(
            reference["unidimensionality"]["support"]["eigen_ratio"], rel=1e-9)
    assert varied["weighted"]["n_zero_weight"] == 5
    assert varied["weighted"]["n"] == 135
    assert "weighted" not in plain


# ----------------------------------------------------------------------------- screen


def test_weighted_mahalanobis_equals_replicated_rows_against_scipy():
    from scipy.spatial.distance import mahalanobis

    from scalewright.stats.mahalanobis import mahalanobis_distance

    weights = np.random.default_rng(21).integers(1, 4, 90)
    x = _keyed(climate(90, weights))
    ours = mahalanobis_distance(x, weights=weights.astype(float))
    copies = np.repeat(x, weights, axis=0)
    inverse = np.linalg.inv(np.cov(copies, rowvar=False))
    centre = copies.mean(axis=0)
    # scipy.spatial.distance.mahalanobis (a square root) from the replicated rows' mean and covariance. The
    # sums of squares agree; the divisors differ by design: V1 - V2/V1 for survey weights, N_rep - 1 for copies
    v1, v2 = weights.sum(), np.sum(weights**2)
    expected = np.array([mahalanobis(row, centre, inverse) ** 2 for row in x]) * (v1 - v2 / v1) / (v1 - 1)
    np.testing.assert_allclose(ours.d2, expected, rtol=1e-9)


def test_weighted_pairwise_moments_against_numpy_per_pair():
    from scalewright.stats.weighted import weighted_pairwise_moments

    rng = np.random.default_rng(5)
    x = _keyed(climate(80, 1.0))
    x[rng.random(x.shape) < 0.1] = np.nan
    w = rng.uniform(0.2, 3, 80)
    w[:4] = 0
    means, cov = weighted_pairwise_moments(x, w)
    for j in range(x.shape[1]):
        rows = np.isfinite(x[:, j]) & (w > 0)
        assert means[j] == pytest.approx(np.average(x[rows, j], weights=w[rows]), rel=1e-12)  # numpy
        for k in range(x.shape[1]):
            both = np.isfinite(x[:, j]) & np.isfinite(x[:, k]) & (w > 0)
            # numpy's cov with aweights over the rows answering both: divisor V1 - V2/V1
            reference = np.cov(x[both, j], x[both, k], aweights=w[both], ddof=1)[0, 1]
            assert cov[j, k] == pytest.approx(reference, rel=1e-10)


def test_screen_unit_weights_equal_unweighted_scaling_changes_nothing_zero_weights_kept(tmp_path, capsys):
    frame = climate(150, 1.0, seed=9)
    frame.loc[:6, ITEMS] = 3  # a few long runs, so something is flagged
    frame["wr"] = np.random.default_rng(8).uniform(0.2, 4, 150)
    frame.loc[10:12, "wr"] = 0.0
    frame["wr5"] = frame["wr"] * 5
    data, scales = write(tmp_path, frame)
    # long runs judged on these 8 items (by default only from 10)
    ones, varied, scaled, plain = runs_by_weight(capsys, "screen", data, scales, "wr", "wr5",
                                                 options=("--long-run-min-items", "8"))
    for reference, other in ((plain, ones), (varied, scaled)):
        assert [r["flags"] for r in other["respondents"]] == [r["flags"] for r in reference["respondents"]]
        np.testing.assert_allclose([r["mahalanobis_d2"] for r in other["respondents"]],
                                   [r["mahalanobis_d2"] for r in reference["respondents"]], rtol=1e-9)
    block = varied["summary"]["weighted"]
    assert len(varied["respondents"]) == 150  # rows of weight 0 are screened too
    assert block["n_zero_weight"] == 3
    w = frame["wr"].to_numpy()
    flagged = np.array([r["flagged"] for r in varied["respondents"]])
    # numpy: the share of the sum of weights the flagged rows carry
    assert block["flagged_pct"] == pytest.approx(100 * w[flagged].sum() / w.sum(), rel=1e-12)
    assert block["flagged_unweighted_pct"] == pytest.approx(100 * flagged.mean(), rel=1e-12)
    runs = np.array(["long-run" in r["flags"] for r in varied["respondents"]])
    assert block["flag_pct"]["long-run"] == pytest.approx(100 * w[runs].sum() / w.sum(), rel=1e-12)
    assert block["weighted"] is True
    assert block["n_effective"] == pytest.approx(w.sum() ** 2 / np.sum(w**2))  # Kish (1965)
    assert ones["summary"]["weighted"]["flagged_pct"] == pytest.approx(plain["summary"]["flagged_pct"])
    assert "weighted" not in plain["summary"]


# ----------------------------------------------------------------------------- report


def _report_results(data, scales, column: str | None):
    from dataclasses import replace

    from scalewright.cli.common import load_inputs
    from scalewright.report import ReportOptions, build_report
    from scalewright.weights import read_weights

    inputs = load_inputs(data, scales)  # outside a command: the weights are attached here, as --weight does
    responses = inputs.responses
    if column is not None:
        responses = replace(responses, weights=read_weights(responses.frame, column, responses.line_numbers,
                                                            path=responses.path))
    return build_report(inputs.spec, responses, info=inputs.info,
                        options=ReportOptions(iterations=5, by=("site",))).to_dict()


def test_report_with_weights_says_so_and_carries_the_weighted_blocks(tmp_path, capsys):
    weights = np.random.default_rng(30).uniform(0.3, 3, 80).round(3)
    weights[:2] = 0
    frame = climate(80, weights)
    data, scales = write(tmp_path, frame)
    code = main([str(a) for a in ("report", data, "--scales", scales, "--by", "site", "--out", tmp_path / "r",
                                  "--iterations", "5", "--quiet")])
    assert code == 0, capsys.readouterr().err
    page = (tmp_path / "r" / "index.html").read_text(encoding="utf-8")
    assert "Survey weights" in page
    assert "weighted by the column w" in page
    assert "effective sample size (Kish, 1965) of" in page
    assert "design effect of the weights" in page
    assert "design-based survey software" in page
    assert "with weight 0 stay in the scores" in page
    assert "Weighted summary" in page
    assert "Weighted reliability: support" in page
    results = json.loads((tmp_path / "r" / "results.json").read_text(encoding="utf-8"))
    used = weights[weights > 0]
    design = results["weighted"]
    assert design["n_effective"] == pytest.approx(used.sum() ** 2 / np.sum(used**2))  # Kish (1965)
    assert design["n_zero_weight"] == 2
    # the parts still unweighted are named on the page and in the JSON
    assert "Two parts of this report are not weighted" in page
    assert design["notes"] == [{"code": "report-parts-unweighted",
                                "parts": ["findings-group-differences", "item-answer-bars"]}]
    blocks = [results["reliability"]["scales"]["support"]["weighted"], results["shape"]["scales"]["support"]["all"]["weighted"],
              results["compare"]["scales"]["support"]["by"]["site"]["weighted"], results["scores"]["weighted"]["support"],
              results["tally"]["site"]["weighted"], results["structure"]["weighted"],
              results["confirm"]["models"]["support"]["weighted"], results["screen"]["summary"]["weighted"]]
    for block in blocks:
        assert block["weighted"] is True
        assert block["weight_column"] == "w"
        assert "n_effective" in block
    # the report's numbers are the commands' numbers: the weighted alpha of `reliability`
    alone = run_json(capsys, "reliability", data, "--scales", scales)
    assert blocks[0]["alpha"] == pytest.approx(alone["scales"]["support"]["weighted"]["alpha"], rel=1e-12)
    assert len(results["screen"]["respondents"]) == 80  # rows of weight 0 are screened and scored
    score = frame[["wl1", "wl2", "wl3", "wl4"]].mean(axis=1).to_numpy()
    # numpy weighted mean of the scores
    assert results["scores"]["weighted"]["workload"]["mean"] == pytest.approx(np.average(score, weights=weights))


@pytest.mark.slow  # four whole reports; each command's own unit-weight and scaling tests run in CI
def test_report_unit_weights_equal_unweighted_and_scaling_changes_nothing(tmp_path):
    frame = climate(70, 1.0, seed=14)
    frame["wr"] = np.random.default_rng(3).uniform(0.3, 3, 70)
    frame["wr10"] = frame["wr"] * 10
    data, scales = write(tmp_path, frame)
    ones, varied, scaled = (_report_results(data, scales, c) for c in ("w", "wr", "wr10"))
    (tmp_path / "s.yaml").write_text(TWO_SCALES.replace("weight: w\n", ""))
    plain = _report_results(data, scales, None)
    for reference, other in ((plain, ones), (varied, scaled)):
        for name in ("support", "workload", "all"):
            for key in ("chi2", "cfi", "rmsea", "srmr"):
                assert other["confirm"]["models"][name][key] == pytest.approx(
                    reference["confirm"]["models"][name][key], rel=1e-9), key
        np.testing.assert_allclose(_loadings(other["structure"]), _loadings(reference["structure"]), atol=1e-8)
        assert other["structure"]["bartlett"]["chi2"] == pytest.approx(reference["structure"]["bartlett"]["chi2"],
                                                                       rel=1e-9)
        assert [r["flags"] for r in other["screen"]["respondents"]] == \
            [r["flags"] for r in reference["screen"]["respondents"]]
    support = ones["reliability"]["scales"]["support"]
    assert support["weighted"]["alpha"] == pytest.approx(plain["reliability"]["scales"]["support"]["alpha"], rel=1e-9)
    assert ones["shape"]["scales"]["support"]["all"]["weighted"]["mean"] == pytest.approx(
        plain["shape"]["scales"]["support"]["all"]["mean"], rel=1e-12)
    for key in ("alpha", "omega_total"):
        assert scaled["reliability"]["scales"]["support"]["weighted"][key] == pytest.approx(
            varied["reliability"]["scales"]["support"]["weighted"][key], rel=1e-10)
    assert "weighted" not in plain


# ----------------------------------------------------------------------------- rows of weight 0


def test_rows_of_weight_zero_are_counted_and_enter_no_estimate(tmp_path, capsys):
    weights = np.random.default_rng(40).uniform(0.5, 2, 120).round(3)
    frame = climate(120, weights)
    extra = climate(6, 0.0, seed=77)
    extra[ITEMS] = np.array([1, 5, 1, 5, 5, 1, 5, 1])  # answers far from everyone, weight 0
    extra["staff_id"] = [f"z{i}" for i in range(6)]
    with_zero = pd.concat([frame, extra], ignore_index=True)
    data, scales = write(tmp_path, with_zero)
    without, _ = write(tmp_path, frame, name="without.csv")
    # the file without those rows is the reference: every estimate must be the same
    for command in ("structure", "confirm"):
        zero = run_json(capsys, command, data, "--scales", scales)
        plain = run_json(capsys, command, without, "--scales", scales)
        if command == "structure":
            np.testing.assert_allclose(_loadings(zero), _loadings(plain), rtol=1e-10)
            assert zero["weighted"]["n_zero_weight"] == 6
            assert zero["weighted"]["n_effective"] == pytest.approx(plain["weighted"]["n_effective"], rel=1e-12)
        else:
            assert zero["models"]["all"]["chi2"] == pytest.approx(plain["models"]["all"]["chi2"], rel=1e-10)
            assert zero["models"]["all"]["weighted"]["n_zero_weight"] == 6
    main([str(a) for a in ("score", data, "--scales", scales, "--standardize", "z", "--out", tmp_path / "z.csv")])
    main([str(a) for a in ("score", without, "--scales", scales, "--standardize", "z", "--out", tmp_path / "p.csv")])
    capsys.readouterr()
    zero_scores, plain_scores = pd.read_csv(tmp_path / "z.csv"), pd.read_csv(tmp_path / "p.csv")
    assert len(zero_scores) == 126  # kept in the scored file, with a z score
    assert zero_scores["support__z"].notna().all()
    np.testing.assert_allclose(zero_scores["support__z"][:120], plain_scores["support__z"], rtol=1e-12)
    screened = run_json(capsys, "screen", data, "--scales", scales)
    assert len(screened["respondents"]) == 126
    assert screened["summary"]["weighted"]["n_zero_weight"] == 6
    reference = run_json(capsys, "screen", without, "--scales", scales)
    np.testing.assert_allclose([r["mahalanobis_d2"] for r in screened["respondents"][:120]],
                               [r["mahalanobis_d2"] for r in reference["respondents"]], rtol=1e-9)


def test_report_with_weights_refuses_pairwise_before_touching_anything(tmp_path, capsys):
    from .conftest import folder_fingerprint

    data, scales = write(tmp_path, climate(40, 1.0))
    before = folder_fingerprint(tmp_path)
    code = main([str(a) for a in ("report", data, "--scales", scales, "--missing", "pairwise", "--out",
                                  tmp_path / "r", "--quiet")])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("error: survey weights work with --missing listwise only")
    assert err.count("\n") == 1
    assert folder_fingerprint(tmp_path) == before
    assert not (tmp_path / "r").exists()


def test_report_findings_say_the_estimates_are_weighted(tmp_path):
    from scalewright.analyses.findings import select_findings
    from scalewright.cli.common import load_inputs
    from scalewright.present.findings import finding_items
    from scalewright.report import ReportOptions, build_report
    from scalewright.weights import read_weights

    weights = np.random.default_rng(50).uniform(0.5, 2, 90)
    data, scales = write(tmp_path, climate(90, weights))
    inputs = load_inputs(data, scales)
    responses = inputs.responses
    from dataclasses import replace

    responses = replace(responses, weights=read_weights(responses.frame, "w", responses.line_numbers, path="d"))
    results = build_report(inputs.spec, responses, info=inputs.info, options=ReportOptions(iterations=3))
    found = select_findings(results)
    assert found[0].code == "results-weighted"
    # Kish (1965): n_eff = (sum w)^2 / sum w^2
    assert found[0].values["n_effective"] == pytest.approx(weights.sum() ** 2 / np.sum(weights**2))
    sentences = [sentence for sentence, _ in finding_items(found)]
    assert sentences[0].startswith("Estimates are weighted by w")
    reliable = next(f for f in found if f.code in ("scales-reliable", "scale-unreliable"))
    entry = reliable.values["scales"][0] if reliable.code == "scales-reliable" else reliable.values
    assert entry["alpha_weighted"] == pytest.approx(
        results.weighted.reliability[entry["scale"]]["all"]["alpha"], rel=1e-12)


@pytest.mark.parametrize("engine", ["memory", "stream"])
@pytest.mark.parametrize(("command", "extra"), [("reliability", ()), ("score", ()), ("screen", ()),
                                                ("compare", ("--by", "site")), ("shape", ())])
def test_an_item_named_as_the_weight_column_is_refused_in_one_line(tmp_path, capsys, engine, command, extra):
    # an answer cannot weigh the answers: the same usage error on every route (it used to be an internal error
    # on the block route and "not in the data file" on the whole-file route)
    data, scales = write(tmp_path / "d", climate(200, np.ones(200)))
    before = data.read_bytes()
    code = main([command, str(data), "--scales", str(scales), "--weight", "wl2", "--engine", engine, *extra])
    err = capsys.readouterr().err
    assert code == 2
    assert err.strip().splitlines() == ["error: --weight 'wl2' is an item of the scale file: survey weights need "
                                        "a column of their own"]
    assert data.read_bytes() == before
