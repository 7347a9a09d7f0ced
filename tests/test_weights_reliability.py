"""Survey weights in reliability's ordinal refusal, its confirmatory block, and the screen's alpha comparison."""
from __future__ import annotations

import pytest

from scalewright.cli import main

from .test_weights_commands import TWO_SCALES, climate, write


@pytest.mark.parametrize(("engine", "weight_from"), [("memory", "scale file"), ("memory", "option"),
                                                      ("stream", "scale file")])
def test_reliability_ordinal_with_weights_is_refused_and_writes_nothing(tmp_path, capsys, engine, weight_from):
    from .conftest import folder_fingerprint

    frame = climate(60, 1.0)
    frame["w2"] = 2.0
    data, scales = write(tmp_path, frame)
    extra = []
    if weight_from == "option":
        scales.write_text(TWO_SCALES.replace("weight: w\n", ""))
        extra = ["--weight", "w2"]
    before = folder_fingerprint(tmp_path)
    code = main([str(a) for a in ("reliability", data, "--scales", scales, "--ordinal", "--engine", engine, *extra,
                                  "--format", "json", "--out", tmp_path / "r.json")])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("error: --ordinal cannot use survey weights")
    assert err.count("\n") == 1
    assert folder_fingerprint(tmp_path) == before
    assert not (tmp_path / "r.json").exists()


def test_reliability_ordinal_without_weights_still_runs(tmp_path, capsys):
    frame = climate(60, 1.0)
    data, scales = write(tmp_path, frame)
    scales.write_text(TWO_SCALES.replace("weight: w\n", ""))
    code = main([str(a) for a in ("reliability", data, "--scales", scales, "--ordinal", "--format", "json")])
    captured = capsys.readouterr()
    assert code == 0, captured.err


def _confirmatory(capsys, *args) -> dict:
    import json

    code = main([str(a) for a in ("reliability", *args, "--format", "json")])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return {name: record["confirmatory"] for name, record in json.loads(captured.out)["scales"].items()}


CONFIRMATORY_NUMBERS = ("chi2", "df", "pvalue", "cfi", "tli", "rmsea", "srmr")


@pytest.mark.parametrize("engine", ["memory", "stream"])
def test_reliability_confirmatory_unit_weights_equal_unweighted(tmp_path, capsys, engine):
    frame = climate(120, 1.0)
    data, scales = write(tmp_path, frame)
    ones = _confirmatory(capsys, data, "--scales", scales, "--engine", engine)
    scales.write_text(TWO_SCALES.replace("weight: w\n", ""))
    plain = _confirmatory(capsys, data, "--scales", scales, "--engine", engine)
    for name in ("support", "workload"):
        # all weights 1: np.cov(aweights=1) is np.cov and Kish's n_eff is n, so the unweighted fit exactly
        for key in CONFIRMATORY_NUMBERS:
            assert ones[name][key] == pytest.approx(plain[name][key], rel=1e-9, abs=1e-12), key
        assert ones[name]["omega"]["omega_total"] == pytest.approx(plain[name]["omega"]["omega_total"], rel=1e-9)
        assert ones[name]["weighted"]["n_effective"] == pytest.approx(120, rel=1e-12)
        assert ones[name]["weighted"]["fit_n"] == "n_effective"
        assert "weighted" not in plain[name]


@pytest.mark.parametrize("engine", ["memory", "stream"])
def test_reliability_confirmatory_integer_weights_equal_replicated_rows_against_semopy(tmp_path, capsys, engine):
    import logging

    import numpy as np

    from .test_weights_commands import replicated

    semopy = pytest.importorskip("semopy")
    weights = np.random.default_rng(21).integers(1, 4, 150)
    frame = climate(150, weights)
    data, scales = write(tmp_path, frame)
    weighted = _confirmatory(capsys, data, "--scales", scales, "--engine", engine)["support"]
    copies = replicated(frame, weights)
    # semopy (test reference only), computed live on the rows repeated w times, sp4 reverse-keyed as the tool does
    keyed = copies[["sp1", "sp2", "sp3", "sp4"]].assign(sp4=6 - copies["sp4"]).astype(float)
    logging.getLogger().setLevel(logging.ERROR)
    reference = semopy.Model("support =~ sp1 + sp2 + sp3 + sp4")
    reference.fit(keyed, options={"ftol": 1e-14, "maxiter": 20000})
    estimates = reference.inspect()
    loadings = estimates[(estimates.op == "~") & (estimates.rval == "support")]["Estimate"].to_numpy(float)
    factor_variance = estimates[(estimates.op == "~~") & (estimates.lval == "support")]["Estimate"].to_numpy(float)
    residuals = estimates[(estimates.op == "~~") & (estimates.lval.isin(["sp1", "sp2", "sp3", "sp4"]))
                          & (estimates.lval == estimates.rval)]["Estimate"].to_numpy(float)
    # McDonald's omega of the one-factor model: (sum lambda)^2 var(F) / ((sum lambda)^2 var(F) + sum theta)
    common = loadings.sum() ** 2 * (factor_variance[0] if len(factor_variance) else 1.0)
    assert weighted["omega"]["omega_total"] == pytest.approx(common / (common + residuals.sum()), abs=1e-3)
    # the chi-square differs by design: semopy's is N_rep x F_ML, ours n_eff x F_ML (Kish 1965)
    n_eff = weights.sum() ** 2 / np.sum(weights**2)
    theirs = semopy.calc_stats(reference).T["Value"]
    assert weighted["chi2"] == pytest.approx(theirs["chi2"] * n_eff / weights.sum(), rel=1e-3)
    assert weighted["weighted"]["n_effective"] == pytest.approx(n_eff, rel=1e-12)
    assert weighted["weighted"]["n"] == 150


# ----------------------------------------------------------------------------- screen: alpha without the flagged


def _screen(capsys, *args) -> dict:
    import json

    code = main([str(a) for a in ("screen", *args, "--format", "json")])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def _flagged_frame(n: int, weights, seed: int = 9):
    from .test_weights_commands import ITEMS

    frame = climate(n, weights, seed=seed)
    frame.loc[:6, ITEMS] = 3  # a few long runs, so something is flagged
    return frame


def test_screen_alpha_change_unit_weights_equal_unweighted_and_scaling_changes_nothing(tmp_path, capsys):
    import numpy as np

    frame = _flagged_frame(150, 1.0)
    frame["wr"] = np.random.default_rng(8).uniform(0.2, 4, 150)
    frame["wr5"] = frame["wr"] * 5
    data, scales = write(tmp_path, frame)
    ones = _screen(capsys, data, "--scales", scales)["summary"]["alpha_change"]
    varied = _screen(capsys, data, "--scales", scales, "--weight", "wr")["summary"]["alpha_change"]
    scaled = _screen(capsys, data, "--scales", scales, "--weight", "wr5")["summary"]["alpha_change"]
    scales.write_text(TWO_SCALES.replace("weight: w\n", ""))
    plain = _screen(capsys, data, "--scales", scales)["summary"]["alpha_change"]
    for name in ("support", "workload"):
        # all weights 1: np.cov(aweights=1) is np.cov, so the unweighted alphas exactly
        for key in ("alpha_all", "n_all", "alpha_without_flagged", "n_without_flagged", "change"):
            assert ones[name][key] == pytest.approx(plain[name][key], rel=1e-9, abs=1e-12), key
            assert scaled[name][key] == pytest.approx(varied[name][key], rel=1e-9, abs=1e-12), key
        assert ones[name]["weighted"] is True
        assert ones[name]["n_effective_all"] == pytest.approx(150, rel=1e-12)
        assert "weighted" not in plain[name]
        assert varied[name]["alpha_all"] != pytest.approx(plain[name]["alpha_all"], rel=1e-6)


def test_screen_alpha_change_integer_weights_equal_replicated_rows_against_pingouin(tmp_path, capsys):
    import numpy as np
    import pingouin

    weights = np.random.default_rng(5).integers(0, 4, 160)  # weight 0 included: left out of both alphas
    frame = _flagged_frame(160, weights)
    data, scales = write(tmp_path, frame)
    found = _screen(capsys, data, "--scales", scales)
    flagged = np.array([r["flagged"] for r in found["respondents"]])
    assert flagged.any()
    keyed = {"support": frame[["sp1", "sp2", "sp3", "sp4"]].assign(sp4=6 - frame["sp4"]).astype(float),
             "workload": frame[["wl1", "wl2", "wl3", "wl4"]].astype(float)}
    for name, items in keyed.items():
        block = found["summary"]["alpha_change"][name]
        # pingouin (computed live) on the rows repeated w times: Cronbach's alpha does not depend on the divisor
        everyone = items.loc[items.index.repeat(weights)]
        kept = items[~flagged].loc[items[~flagged].index.repeat(weights[~flagged])]
        assert block["alpha_all"] == pytest.approx(pingouin.cronbach_alpha(everyone)[0], rel=1e-9)
        assert block["alpha_without_flagged"] == pytest.approx(pingouin.cronbach_alpha(kept)[0], rel=1e-9)
        assert block["n_all"] == int(np.count_nonzero(weights))
        assert block["n_without_flagged"] == int(np.count_nonzero(weights[~flagged]))
        used = weights[weights > 0]
        assert block["n_effective_all"] == pytest.approx(used.sum() ** 2 / np.sum(used**2), rel=1e-12)  # Kish 1965
