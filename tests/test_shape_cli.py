"""`scalewright shape` end to end on small generated files."""
from __future__ import annotations

import csv
import io
import json

import numpy as np
import pandas as pd
import pytest

from scalewright.cli import main

from .survey_files import AGREEMENT_1_TO_5

SCALE_FILE = """\
version: 1
title: Staff climate survey (fictional hospital network)
id_column: staff_id
groups: [site]
""" + AGREEMENT_1_TO_5 + """scales:
  support:
    title: Team support
    items: [ts1, ts2, ts3, ts4]
    reverse: [ts4]
    score: mean
    min_answered: 3
"""


@pytest.fixture
def files(tmp_path):
    rng = np.random.default_rng(2026)
    n = 260
    trait = rng.beta(6, 1.6, size=n)  # agreeable answers: a left-skewed score
    frame = pd.DataFrame({"staff_id": [f"h{i:03d}" for i in range(n)],
                          "site": rng.choice(["north", "south", "annex"], size=n, p=[0.5, 0.47, 0.03]),
                          "shift": rng.choice(["day", "night"], size=n)})
    for j in range(4):
        frame[f"ts{j + 1}"] = np.clip(np.floor((trait + rng.normal(0, 0.08, n)) * 5), 0, 4) + 1
    frame["ts4"] = 6 - frame["ts4"]
    frame.loc[5, "ts2"] = 9  # a "no answer" code
    data, scales = tmp_path / "climate.csv", tmp_path / "climate.yaml"
    frame.to_csv(data, index=False)
    scales.write_text(SCALE_FILE)
    return data, scales, frame


def _keyed_scores(frame):
    keyed = frame[["ts1", "ts2", "ts3", "ts4"]].replace(9, np.nan).astype(float)
    keyed["ts4"] = 6 - keyed["ts4"]
    return keyed.mean(axis=1).to_numpy()


def test_json_follows_the_contract_and_matches_numpy(files, capsys):
    data, scales, frame = files
    assert main(["shape", str(data), "--scales", str(scales), "--format", "json", "--by", "shift"]) == 0
    document = json.loads(capsys.readouterr().out)
    assert document["tool"]["name"] == "scalewright"
    assert document["command"] == "shape"
    overall = document["scales"]["support"]["all"]
    scores = _keyed_scores(frame)
    # numpy is the outside reference for the plain descriptives
    assert overall["n"] == scores.size
    assert overall["mean"] == pytest.approx(np.mean(scores))
    assert overall["sd"] == pytest.approx(np.std(scores, ddof=1))
    assert overall["median"] == pytest.approx(np.median(scores))
    assert overall["percentiles"]["90"] == pytest.approx(np.percentile(scores, 90))
    assert overall["shape"] == "left-skewed"
    assert overall["evidence"]["code"] == "shape-skewed"
    assert overall["evidence"]["message"].startswith("skewness ")
    by_shift = document["scales"]["support"]["by"]["shift"]
    assert set(by_shift) == {"day", "night"}
    night = scores[frame["shift"].to_numpy() == "night"]
    assert by_shift["night"]["mean"] == pytest.approx(night.mean())
    assert "NaN" not in json.dumps(document)


def test_default_groups_and_small_levels_named_not_described(files, capsys):
    data, scales, frame = files
    assert main(["shape", str(data), "--scales", str(scales), "--format", "json"]) == 0
    document = json.loads(capsys.readouterr().out)
    support = document["scales"]["support"]
    n_annex = int((frame["site"] == "annex").sum())
    assert n_annex < 10
    assert set(support["by"]["site"]) == {"north", "south"}
    assert support["too_small"]["site"] == {"annex": n_annex}


def test_items_percentiles_and_quantile_method(files, capsys):
    data, scales, frame = files
    assert main(["shape", str(data), "--scales", str(scales), "--format", "json", "--items", "--by", "shift",
                 "--percentiles", "10,50,90", "--quantile-method", "hazen"]) == 0
    document = json.loads(capsys.readouterr().out)
    item = document["items"]["ts1"]["all"]
    assert item["quantile_method"] == "hazen"
    assert set(item["percentiles"]) == {"10", "50", "90"}
    answers = frame["ts1"].to_numpy(dtype=float)
    assert item["percentiles"]["10"] == pytest.approx(np.quantile(answers, 0.1, method="hazen"))
    # ts4 is reverse-worded: as answered it leans the other way
    assert document["items"]["ts4"]["all"]["shape"] == "right-skewed"


@pytest.mark.parametrize("fmt", ["table", "md", "csv"])
def test_text_renderings(files, capsys, fmt):
    data, scales, _ = files
    assert main(["shape", str(data), "--scales", str(scales), "--format", fmt, "--by", "shift"]) == 0
    out = capsys.readouterr().out
    assert "left-skewed" in out
    if fmt == "csv":
        rows = list(csv.DictReader(io.StringIO(out)))
        assert {r["table"] for r in rows} >= {"shape", "shape_evidence", "shape_percentiles", "shape_histogram"}
        histogram = [r for r in rows if r["table"] == "shape_histogram"]
        assert sum(int(r["count"]) for r in histogram) == 260


def test_figures_are_written_as_svg_and_png(files, tmp_path, capsys):
    data, scales, _ = files
    folder = tmp_path / "figures"
    out = tmp_path / "shape.json"
    assert main(["shape", str(data), "--scales", str(scales), "--by", "shift", "--figures", str(folder),
                 "--out", str(out)]) == 0
    names = {p.name for p in folder.iterdir()}
    for stem in ("shape_support_histogram", "shape_support_boxplot", "shape_support_by_shift_boxplots",
                 "shape_support_by_shift_histograms"):
        assert f"{stem}.svg" in names
        assert f"{stem}.png" in names
    assert (folder / "shape_support_histogram.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert json.loads(out.read_text())["scales"]["support"]["all"]["n"] == 260


@pytest.mark.parametrize(("args", "message"), [
    (["--percentiles", "5,abc"], "not a number"),
    (["--percentiles", "5,150"], "outside 0..100"),
    (["--by", "no_such_column"], "no_such_column"),
])
def test_bad_options_end_in_one_error_line(files, capsys, args, message):
    data, scales, _ = files
    before = data.read_bytes()
    code = main(["shape", str(data), "--scales", str(scales), "--format", "json", *args])
    err = capsys.readouterr().err
    assert code != 0
    assert err.startswith("error:")
    assert message in err
    assert "Traceback" not in err
    assert data.read_bytes() == before


def test_refuses_to_overwrite_the_data_file(files, capsys):
    data, scales, _ = files
    before = data.read_bytes()
    assert main(["shape", str(data), "--scales", str(scales), "--out", str(data)]) != 0
    assert "input file" in capsys.readouterr().err
    assert data.read_bytes() == before
