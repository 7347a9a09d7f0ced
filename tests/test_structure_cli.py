"""`scalewright structure` on small generated files, and its tables and figures."""
from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from scalewright.cli import main

SCALES = """\
version: 1
title: Ward climate (generated)
id_column: staff_id
response:
  min: 1
  max: 5
  missing_codes: [9]
scales:
  workload:
    items: [wl1, wl2, wl3, wl4, wl5]
    reverse: [wl3]
  support:
    items: [ts1, ts2, ts3, ts4, ts5]
  voice:
    items: [vo1, vo2, vo3, vo4, {misplaced}]
  climate:
    items: [wl1, wl2, wl3, wl4, wl5, ts1, ts2, ts3, ts4, ts5, vo1, vo2, vo3, vo4, {misplaced}]
    reverse: [wl3]
"""


def write_inputs(folder: Path, *, n: int = 900, seed: int = 41, misplaced: str = "vo5",
                 missing_rows: int = 12) -> tuple[Path, Path]:
    """Answers 1-5 cut from a three-factor model; ``misplaced`` (when 'ts6') is a support item filed in voice."""
    rng = np.random.default_rng(seed)
    phi = np.array([[1, -.3, -.2], [-.3, 1, .35], [-.2, .35, 1]])
    factors = rng.multivariate_normal(np.zeros(3), phi, size=n)
    columns = {}
    loadings = {"wl": 0, "ts": 1, "vo": 2}
    for prefix, j in loadings.items():
        for k in range(1, 6 if prefix != "ts" else 7):
            name = f"{prefix}{k}"
            latent = 0.75 * factors[:, j] + np.sqrt(1 - 0.75 ** 2) * rng.standard_normal(n)
            if name == "wl3":
                latent = -latent  # worded the other way round
            columns[name] = np.digitize(latent, [-1.3, -0.45, 0.45, 1.3]) + 1
    items = ["wl1", "wl2", "wl3", "wl4", "wl5", "ts1", "ts2", "ts3", "ts4", "ts5", "vo1", "vo2", "vo3", "vo4",
             misplaced]
    answers = np.column_stack([columns[i] for i in items]).astype(object)
    answers[rng.choice(n, size=missing_rows, replace=False), rng.integers(0, len(items), size=missing_rows)] = 9
    lines = ["staff_id," + ",".join(items)]
    lines += [f"s{r:04d}," + ",".join(str(v) for v in row) for r, row in enumerate(answers)]
    data = folder / "ward.csv"
    data.write_text("\n".join(lines) + "\n", encoding="utf-8")
    scales = folder / "ward.yaml"
    scales.write_text(SCALES.format(misplaced=misplaced), encoding="utf-8")
    return data, scales


def run_json(capsys, *args: str) -> dict:
    assert main(["structure", *args, "--format", "json", "--iterations", "30"]) == 0
    return json.loads(capsys.readouterr().out)


def test_structure_finds_the_factors_and_puts_items_with_their_scales(tmp_path, capsys):
    data, scales = write_inputs(tmp_path)
    document = run_json(capsys, str(data), "--scales", str(scales))
    assert document["command"] == "structure"
    assert document["tool"]["name"] == "scalewright"
    assert document["parallel"]["suggested_factors"] == 3
    assert document["n_factors"] == 3
    # the total shares every item with a subscale: each item is one column, matched to its subscale
    assert len(document["items"]) == 15
    assert document["n_set_aside"] == 12
    assert document["n_used"] == 888
    assert set(document["factor_for_scale"]) == {"workload", "support", "voice"}
    assert sorted(document["factor_for_scale"].values()) == ["F1", "F2", "F3"]
    item_flags = [f for f in document["flags"] if f["item"] is not None]
    assert item_flags == []
    # the reverse item was keyed before the analysis: it loads positively on its factor
    factor = int(document["factor_for_scale"]["workload"][1:]) - 1
    assert document["loadings"]["wl3"][factor] > 0.4
    assert set(document["unidimensionality"]) == {"workload", "support", "voice", "climate"}
    assert document["unidimensionality"]["climate"]["eigen_ratio"] < 3
    assert any(f["code"] == "several-dimensions" and f["scale"] == "climate" for f in document["flags"])
    assert 0 < document["kmo"] <= 1
    assert document["bartlett"]["pvalue"] < 0.001


def test_structure_flags_an_item_filed_under_the_wrong_scale(tmp_path, capsys):
    data, scales = write_inputs(tmp_path, misplaced="ts6")
    document = run_json(capsys, str(data), "--scales", str(scales), "--factors", "scales")
    assert document["n_factors_rule"] == "number of scales"
    codes = {(f["item"], f["code"]) for f in document["flags"] if f["item"] is not None}
    assert ("ts6", "off-scale-factor") in codes
    assert {item for item, _ in codes} == {"ts6"}


@pytest.mark.parametrize("fmt", ["table", "md", "csv"])
def test_structure_renders_every_format(tmp_path, capsys, fmt):
    data, scales = write_inputs(tmp_path, n=300)
    assert main(["structure", str(data), "--scales", str(scales), "--format", fmt, "--iterations", "10",
                 "--rotation", "promax", "--method", "ml", "--factors", "3"]) == 0
    text = capsys.readouterr().out
    assert "wl1" in text
    if fmt == "csv":  # the CSV names each table by its key
        assert text.splitlines()[0].startswith("table,")
        assert any(line.startswith("loadings,") and ",wl1,workload," in line for line in text.splitlines())
    else:
        assert "Factor loadings" in text
        assert "Parallel analysis" in text
        assert "Factor correlations" in text


def test_structure_writes_out_atomically_and_refuses_bad_options(tmp_path, capsys):
    data, scales = write_inputs(tmp_path, n=200)
    target = tmp_path / "structure.json"
    assert main(["structure", str(data), "--scales", str(scales), "--out", str(target), "--iterations", "5"]) == 0
    assert json.loads(target.read_text())["options"]["rotation"] == "oblimin"
    capsys.readouterr()
    before = data.read_bytes()
    for bad in (["--factors", "two"], ["--factors", "0"], ["--rotation", "spin"], ["--factors", "15"]):
        code = main(["structure", str(data), "--scales", str(scales), "--iterations", "5", *bad])
        err = capsys.readouterr().err
        assert code != 0
        assert err.startswith("error: "), err
        assert len(err.strip().splitlines()) == 1, err
    assert data.read_bytes() == before


def test_tables_and_figures_from_a_result(tmp_path):
    from scalewright.present.figure_files import save_figure, use_agg
    from scalewright.present.structure import structure_tables
    from scalewright.stats.structure import analyse_structure

    use_agg()
    import matplotlib.pyplot as plt

    from scalewright.present.figures_structure import loadings_figure, scree_figure
    from scalewright.present.palette import OKABE_ITO

    rng = np.random.default_rng(3)
    f = rng.standard_normal((400, 2))
    x = np.column_stack([f[:, j // 4] * 0.7 + rng.standard_normal(400) * 0.7 for j in range(8)])
    names = [f"i{j}" for j in range(8)]
    result = analyse_structure(x, item_names=names, item_scale={n: "ab"[int(n[1]) // 4] for n in names},
                               iterations=20)
    tables = structure_tables(result)
    keys = [t.key for t in tables]
    assert keys == ["adequacy", "parallel", "loadings", "factor_correlations", "scales", "flags"]
    loadings = tables[2]
    assert loadings.columns[:4] == ("item", "scale", "F1", "F2")
    # tables hold raw values: exactly the result's loadings
    np.testing.assert_array_equal(np.array([row[2:4] for row in loadings.rows], dtype=float),
                                  result.solution.loadings)

    ax = scree_figure(result)
    assert ax.get_xlabel()
    assert ax.get_ylabel()
    lines = ax.get_lines()
    np.testing.assert_allclose(lines[0].get_ydata(), result.parallel.observed)
    np.testing.assert_allclose(lines[1].get_ydata(), result.parallel.random)
    assert lines[0].get_color().lower() == OKABE_ITO[0].lower()
    paths = save_figure(ax.figure, tmp_path / "scree")
    assert all(p.stat().st_size > 0 for p in paths)

    fig, given_ax = plt.subplots()
    assert loadings_figure(result, ax=given_ax) is given_ax
    plt.close(fig)


def test_an_item_keyed_both_ways_is_noted_by_code_on_both_routes(tmp_path, capsys):
    # common practice, no source: an item belongs to one column of the joint matrix, keyed as its smallest scale
    # keys it; the scale keying it the other way is named in a note (a code, worded by present/messages)
    rng = np.random.default_rng(8)
    trait = rng.normal(size=300)
    answers = {f"q{i}": np.clip(np.rint(3 + trait + rng.normal(scale=0.8, size=300)), 1, 5).astype(int)
               for i in range(1, 7)}
    data = tmp_path / "both.csv"
    data.write_text("pid," + ",".join(answers) + "\n" + "".join(
        f"p{r}," + ",".join(str(answers[name][r]) for name in answers) + "\n" for r in range(300)), encoding="utf-8")
    scales = tmp_path / "both.yaml"
    scales.write_text("version: 1\nid_column: pid\nresponse: {min: 1, max: 5}\nscales:\n"
                      "  part: {items: [q1, q2, q3], score: mean}\n"
                      "  whole: {items: [q1, q2, q3, q4, q5, q6], reverse: [q2], score: mean}\n", encoding="utf-8")
    sentence = "item q2 is reverse-keyed in some scales and not in others; analysed as part keys it"
    for engine in ("memory", "stream"):
        document = run_json(capsys, str(data), "--scales", str(scales), "--engine", engine)
        found = [n for n in document["notes"] if n.get("code") == "item-keyed-both-ways"]
        assert found == [{"code": "item-keyed-both-ways", "item": "q2", "scale": "part", "message": sentence}], engine
    assert main(["structure", str(data), "--scales", str(scales), "--iterations", "30"]) == 0
    assert sentence in capsys.readouterr().out
