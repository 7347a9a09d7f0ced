"""`scalewright reliability` end to end on small generated files."""
from __future__ import annotations

import csv
import io

import numpy as np
import pytest

from scalewright.cli import main

from .survey_files import answers_csv, climate_scales, item_columns, rated_answers, run_json

SCALES = climate_scales(high=5, missing_code=9)


def make_rows(n: int, rng: np.random.Generator, *, miskey_cl3: bool = False) -> tuple[str, np.ndarray, np.ndarray]:
    factor = rng.standard_normal((n, 2))
    cuts = [-1.3, -0.4, 0.4, 1.3]
    workload = rated_answers(factor[:, 0], 4, rng, loading=0.75, unique=0.66, cuts=cuts)
    workload[:, 3] = 6 - workload[:, 3]  # worded the other way, declared under `reverse`
    climate = rated_answers(factor[:, 1], 5, rng, loading=0.75, unique=0.66, cuts=cuts)
    if miskey_cl3:
        climate[:, 2] = 6 - climate[:, 2]  # worded the other way but not declared
    shift = np.where(np.arange(n) % 2 == 0, "day", "night").astype(object)
    shift[:4] = "on-call"
    columns = {"shift": shift, **item_columns("wl", workload), **item_columns("cl", climate)}
    return answers_csv([f"s{i:04d}" for i in range(n)], columns), workload.astype(float), climate.astype(float)


@pytest.fixture
def files(write_file):
    text, workload, climate = make_rows(240, np.random.default_rng(77), miskey_cl3=True)
    return write_file("climate.csv", text), write_file("climate.yaml", SCALES), workload, climate


def test_json_contract_and_values(files, capsys):
    # reference: pingouin.cronbach_alpha live on the keyed items (wl4 reversed as 6 - x); the contract of DESIGN.md
    import pandas as pd
    import pingouin

    data, scales, workload, climate = files
    document = run_json(capsys, "reliability", str(data), "--scales", str(scales), "-f", "json")
    assert document["tool"]["name"] == "scalewright"
    assert document["command"] == "reliability"
    block = document["scales"]["workload"]
    for key in ("n_used", "k", "alpha", "alpha_ci", "alpha_standardized", "omega_total", "lambda2", "lambda6",
                "mean_inter_item_r", "items", "flags", "notes"):
        assert key in block
    keyed = workload.copy()
    keyed[:, 3] = 6 - keyed[:, 3]
    assert block["alpha"] == pytest.approx(pingouin.cronbach_alpha(pd.DataFrame(keyed))[0], rel=1e-12)
    assert block["n_used"] == 240
    assert block["k"] == 4
    for key in ("mean", "sd", "item_rest_r", "alpha_if_deleted", "omega_if_deleted", "missing_pct", "floor_pct",
                "ceiling_pct"):
        assert key in block["items"]["wl1"]
    # counts are of the answer codes as given (wl4 before reverse keying)
    given = {str(v): int((workload[:, 3] == v).sum()) for v in range(1, 6)}
    assert block["items"]["wl4"]["counts"] == given
    codes = {(f["item"], f["code"]) for f in document["scales"]["climate"]["flags"]}
    assert ("cl3", "miskey-suspect") in codes
    assert not [f for f in block["flags"] if f["code"] in ("miskey-suspect", "weak-item")]


def test_by_subgroup_and_small_level_named(files, capsys):
    # reference: Feldt (1969) comparisons present for the two analysed levels; 'on-call' (4 rows) below --min-group
    data, scales, _, _ = files
    document = run_json(capsys, "reliability", str(data), "--scales", str(scales), "--by", "shift", "-f", "json",
                        "--bootstrap", "50", "--seed", "3")
    block = document["scales"]["workload"]
    assert set(block["by"]["shift"]) == {"day", "night"}
    assert block["too_small"]["shift"] == {"on-call": 4}
    assert len(block["alpha_comparisons"]["shift"]) == 1
    assert block["bootstrap"]["n_resamples"] == 50
    assert document["options"]["seed"] == 3
    too_small = [n for n in block["group_notes"]["shift"] if n["code"] == "subgroup-too-small"]
    assert [(n["level"], n["n"]) for n in too_small] == [("on-call", 4)]


def test_pairwise_is_said_in_output(write_file, capsys):
    text, _, _ = make_rows(120, np.random.default_rng(5))
    lines = text.splitlines()
    lines[3] = lines[3].rsplit(",", 1)[0] + ","  # one blank answer
    data = write_file("gaps.csv", "\n".join(lines) + "\n")
    scales = write_file("s.yaml", SCALES)
    listwise = run_json(capsys, "reliability", str(data), "--scales", str(scales), "-f", "json")
    assert listwise["scales"]["climate"]["n_used"] == 119
    assert listwise["scales"]["climate"]["n_set_aside"] == 1
    pairwise = run_json(capsys, "reliability", str(data), "--scales", str(scales), "-f", "json", "--pairwise")
    assert pairwise["scales"]["climate"]["missing_handling"] == "pairwise"
    deletion = [n for n in pairwise["scales"]["climate"]["notes"] if n.get("code") == "pairwise-deletion"]
    assert len(deletion) == 1
    assert deletion[0]["message"].startswith("pairwise deletion: each covariance uses the rows")


@pytest.mark.parametrize("fmt", ["table", "md", "csv"])
def test_text_renderings(files, capsys, fmt):
    data, scales, _, _ = files
    assert main(["reliability", str(data), "--scales", str(scales), "-f", fmt]) == 0
    out = capsys.readouterr().out
    assert "cl3" in out
    assert "miskey-suspect" in out
    if fmt == "csv":
        rows = list(csv.DictReader(io.StringIO(out)))
        assert sum(r["table"] == "reliability" for r in rows) == 2
        assert sum(r["table"] == "reliability_items" for r in rows) == 9
        float(next(r for r in rows if r["table"] == "reliability")["alpha"])  # unrounded number


def test_degenerate_scale_still_produces_output(write_file, capsys):
    # a constant item and a one-item scale: nulls with notes, the rest still computed
    rng = np.random.default_rng(2)
    lines = ["staff_id,a1,a2,a3,b1"]
    for i in range(30):
        lines.append(f"s{i},{rng.integers(1, 6)},{rng.integers(1, 6)},3,{rng.integers(1, 6)}")
    data = write_file("d.csv", "\n".join(lines) + "\n")
    scales = write_file("d.yaml", "version: 1\ntitle: t\nid_column: staff_id\nresponse: {min: 1, max: 5}\n"
                                  "scales:\n  a:\n    title: A\n    items: [a1, a2, a3]\n"
                                  "  b:\n    title: B\n    items: [b1]\n")
    document = run_json(capsys, "reliability", str(data), "--scales", str(scales), "-f", "json")
    assert document["scales"]["b"]["alpha"] is None
    assert document["scales"]["b"]["notes"]
    assert document["scales"]["a"]["omega_total"] is None
    assert document["scales"]["a"]["items"]["a3"]["item_rest_r"] is None
    assert document["scales"]["a"]["alpha"] is not None


def test_bad_input_is_one_error_line_and_writes_nothing(files, capsys, tmp_path):
    data, scales, _, _ = files
    out = tmp_path / "result.json"
    assert main(["reliability", str(data), "--scales", str(scales), "--by", "nosuch", "-o", str(out)]) != 0
    err = capsys.readouterr().err
    assert err.startswith("error:")
    assert "nosuch" in err
    assert not out.exists()
    assert main(["reliability", str(data), "--scales", str(scales), "--confidence-level", "1.5"]) != 0
    assert capsys.readouterr().err.startswith("error:")
