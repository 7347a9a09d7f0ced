"""`scalewright confirm` end to end on small generated files."""
from __future__ import annotations

import json

import numpy as np
import pytest

from scalewright.cli import main

from .conftest import folder_fingerprint
from .survey_files import climate_scales, item_columns, rated_answers, run_confirm, write_answers

SCALES = climate_scales(high=7, missing_code=99, more="  pair:\n    title: Two items only\n    items: [pa1, pa2]\n")
#: 4 + 1.3 x rounded and kept within 1-7, as cut points of x
CUTS = (np.arange(1.5, 7.0) - 4) / 1.3


def write_survey(folder, n: int = 900, seed: int = 1, *, small_level: int = 0):
    """Answers on 1-7 from two correlated factors (and a pair of items), a shift column with three levels."""
    rng = np.random.default_rng(seed)
    factors = rng.multivariate_normal([0, 0, 0], [[1, .4, .3], [.4, 1, .3], [.3, .3, 1]], size=n)
    workload, climate, pair = [rated_answers(factors[:, column], k, rng, loading=0.8, unique=0.6, cuts=CUTS)
                               for column, k in ((0, 4), (1, 5), (2, 2))]
    workload[:, 3] = 8 - workload[:, 3]
    shifts = np.array(["day", "night", "late"], dtype=object)[np.arange(n) % 3]
    if small_level:
        shifts[:small_level] = "weekend"
    columns = {"shift": shifts, **item_columns("wl", workload), **item_columns("cl", climate),
               **item_columns("pa", pair)}
    data = write_answers(folder / "survey.csv", [f"s{row}" for row in range(n)], columns)
    scales = folder / "scales.yaml"
    scales.write_text(SCALES)
    return data, scales


def test_confirm_json_contract(tmp_path, capsys):
    # reference: the keys of the JSON contract (issue text); values are checked in tests/test_cfa_*.py
    data, scales = write_survey(tmp_path)
    document = run_confirm(capsys, str(data), "--scales", str(scales))
    models = document["models"]
    assert set(models) == {"workload", "climate", "pair", "all"}
    workload = models["workload"]
    for key in ("n_used", "estimator", "chi2", "df", "pvalue", "cfi", "tli", "rmsea", "rmsea_ci", "rmsea_pclose",
                "srmr", "aic", "bic", "loadings", "factor_correlations", "omega", "residual_correlations",
                "modification_hints", "notes", "chi2_convention"):
        assert key in workload
    assert workload["estimator"] == "ml"
    assert workload["df"] == 2
    assert 0.6 < workload["loadings"]["wl4"]["workload"] < 0.95  # keyed before fitting
    assert set(workload["omega"]["workload"]) >= {"omega_total", "omega_ci"}
    assert len(workload["residual_correlations"]) == 6
    assert set(workload["residual_correlations"][0]) == {"a", "b",
                                                                                                         "value"}
    # a scale of two items on its own is not identified: null indices and a note, no crash
    pair = models["pair"]
    assert pair["chi2"] is None
    assert pair["cfi"] is None
    assert pair["notes"][0]["code"] == "not-identified"
    # the whole file: correlated factors, the pair identified beside the others
    whole = models["all"]
    assert whole["structure"] == "correlated-factors"
    assert whole["identified"]
    assert whole["factor_correlations"]["workload"]["climate"] == pytest.approx(0.4, abs=0.1)
    assert -1 < whole["factor_correlations"]["pair"]["climate"] < 1
    assert document["observed_score_correlations"]["workload"]["climate"] < \
        whole["factor_correlations"]["workload"]["climate"]


def test_confirm_by_column_names_levels_left_out(tmp_path, capsys):
    # reference: issue text: levels below --min-group are named and left out; JSON keys of invariance
    data, scales = write_survey(tmp_path, small_level=20)
    document = run_confirm(capsys, str(data), "--scales", str(scales), "--by", "shift", "--min-group", "50")
    workload = document["invariance"]["shift"]["workload"]
    assert workload["too_small"] == {"weekend": 20}
    assert set(workload) >= {"configural", "metric", "scalar", "steps", "level", "freed", "partial_scalar",
                             "latent_mean_differences"}
    assert set(workload["configural"]) >= {"chi2", "df", "cfi", "rmsea", "srmr"}
    assert set(workload["steps"]["metric"]) >= {"delta_chi2", "delta_df", "pvalue", "delta_cfi", "delta_rmsea"}
    assert workload["level"] in ("scalar", "strict")
    # the two-item scale: each group's model has df < 0, so no step can be fitted; no crash
    assert document["invariance"]["shift"]["pair"]["configural"]["chi2"] is None


def test_confirm_tables_render_and_change_no_file(tmp_path, capsys):
    # reference: house rule: outputs never touch the inputs
    data, scales = write_survey(tmp_path, n=300)
    before = folder_fingerprint(tmp_path)
    assert main(["confirm", str(data), "--scales", str(scales), "--format", "table"]) == 0
    out = capsys.readouterr().out
    assert "Confirmatory factor models: fit" in out
    assert "Hu & Bentler 1999" in out
    assert "not identified" in out
    assert folder_fingerprint(tmp_path) == before


def test_confirm_unknown_by_column_is_a_one_line_error(tmp_path, capsys):
    # reference: house rule for bad input (one `error:` line, exit 4 for data problems, no traceback)
    data, scales = write_survey(tmp_path, n=100)
    code = main(["confirm", str(data), "--scales", str(scales), "--by", "shfit"])
    err = capsys.readouterr().err
    assert code == 4
    assert err.startswith("error:")
    assert "shfit" in err
    assert "Traceback" not in err


def test_reliability_shows_the_confirmatory_omega_and_fit(tmp_path, capsys):
    # reference: stats.omega via the reliability command's own omega_total (same one-factor ML model)
    data, scales = write_survey(tmp_path, n=400)
    assert main(["reliability", str(data), "--scales", str(scales), "--format", "json"]) == 0
    document = json.loads(capsys.readouterr().out)
    workload = document["scales"]["workload"]
    confirmatory = workload["confirmatory"]
    assert confirmatory["omega"]["omega_total"] == pytest.approx(workload["omega_total"], abs=1e-6)
    assert confirmatory["df"] == 2
    assert confirmatory["cfi"] is not None
    assert document["scales"]["pair"]["confirmatory"]["notes"][0]["code"] == "not-identified"


def test_compare_mentions_the_invariance_verdict(tmp_path, capsys):
    # reference: issue text: compare gives each scale's invariance verdict beside its mean comparison
    data, scales = write_survey(tmp_path, n=600)
    assert main(["compare", str(data), "--scales", str(scales), "--by", "shift", "--format", "json"]) == 0
    document = json.loads(capsys.readouterr().out)
    record = document["scales"]["climate"]["comparisons"]["shift"]["invariance"]
    assert record["level"] in ("scalar", "strict")
    assert "means can be compared" in record["sentence"]
