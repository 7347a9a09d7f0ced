"""`screen --weight` on the streaming route (three passes over a file read in blocks) against the whole-file
weighted screen.

The reference is the whole-file screen with survey weights (``--engine memory``: the weighted Mahalanobis
centre from ``stats.weighted.weighted_pairwise_moments``, the weighted alphas from numpy's
``cov(aweights=...)``, held to numpy and statsmodels in tests/test_weighted.py and tests/test_quality.py).
The exact weighted sums of the streaming route: tests/test_exact_weighted.py.
"""
from __future__ import annotations

import csv
import io
import json
from pathlib import Path

from .engine_data import with_weights
from .test_engine_screen import HEADER, SCALES, _rows, _write, assert_same
from .test_engine_stream import SMALL_BLOCK, run

N_ROWS = 1600  # the survey of tests/test_engine_screen.py (its copied rows need 1,600)


def _weighted_survey(folder: Path, changes: dict[int, str] | None = None) -> tuple[Path, Path]:
    """The screen's survey with a column of survey weights (gamma-distributed, 3% zero), some cells changed."""
    scales = folder / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    rows, _ = _rows(N_ROWS)
    return _write(folder / "weighted.csv", with_weights(rows, zero_share=0.03, changes=changes),
                  header=[*HEADER, "wt"]), scales


def _both(data: Path, scales: Path, *options: str) -> tuple[dict, dict]:
    found = {}
    for engine in ("memory", "stream"):
        code, out, err = run("screen", str(data), "-s", str(scales), "--format", "json", "--engine", engine,
                             "--block-size", SMALL_BLOCK, *options)
        assert code == 0, err
        assert "read whole" not in err
        found[engine] = json.loads(out)
    assert found["stream"].pop("engine") == {"name": "stream"}
    return found["memory"], found["stream"]


def test_weighted_streamed_screen_equals_the_whole_file_screen(tmp_path):
    data, scales = _weighted_survey(tmp_path)
    whole, streamed = _both(data, scales, "--weight", "wt", "--duration-column", "minutes")
    assert_same(whole, streamed)  # flags and counts exactly, indices and weighted shares to 1e-12
    weighted = streamed["summary"]["weighted"]
    assert weighted["n"] == N_ROWS
    assert weighted["n_zero_weight"] > 0  # rows of weight 0: screened, weighing nothing
    assert all(block["weighted"] for block in streamed["summary"]["alpha_change"].values())
    # the weights moved the centre: the distances differ from the unweighted screen's
    _, unweighted = _both(data, scales, "--duration-column", "minutes")
    d2 = [(a["mahalanobis_d2"], b["mahalanobis_d2"]) for a, b in
          zip(streamed["respondents"], unweighted["respondents"], strict=True) if a["mahalanobis_d2"] is not None]
    assert max(abs(a - b) for a, b in d2) > 0.01


def test_refused_weights_are_named_and_counted_as_on_the_whole_file_route(tmp_path):
    data, scales = _weighted_survey(tmp_path, {900: "abc", 1000: "", 1100: "-1"})
    refused = [run("screen", str(data), "-s", str(scales), "--format", "json", "--engine", engine, "--block-size",
                   SMALL_BLOCK, "--weight", "wt") for engine in ("memory", "stream")]
    assert refused[0][0] == refused[1][0] == 4
    assert "row 902, column wt" in refused[1][2]  # the global row of a weight in a late block
    assert refused[1][2].replace("'-1'", "'-1.0'") == refused[0][2]  # quoted as read (docs/engine.md)
    whole, streamed = _both(data, scales, "--weight", "wt", "--lenient")
    assert_same(whole, streamed)
    assert sum("wt" in str(note) for note in streamed["notes"]) >= 4  # each refused kind counted, and the zeros


def test_flag_file_tables_and_messages_equal_the_whole_file_ones(tmp_path):
    data, scales = _weighted_survey(tmp_path)
    outputs = {}
    for engine in ("memory", "stream"):
        target = data.with_name(f"flags-{engine}.csv")
        code, _, err = run("screen", str(data), "-s", str(scales), "--out", str(target), "--engine", engine,
                           "--block-size", SMALL_BLOCK, "--weight", "wt", "--flagged-only")
        assert code == 0, err
        outputs[engine] = (list(csv.reader(io.StringIO(target.read_text(encoding="utf-8")))),
                           err.replace(target.name, "FLAGS"))
    assert outputs["stream"][1] == outputs["memory"][1]  # the notes, the weighted shares among them
    assert "weighted by wt" in outputs["stream"][1]
    assert [row[:3] for row in outputs["stream"][0]] == [row[:3] for row in outputs["memory"][0]]
    texts = [run("screen", str(data), "-s", str(scales), "--format", "md", "--engine", engine, "--block-size",
                 SMALL_BLOCK, "--weight", "wt") for engine in ("memory", "stream")]
    assert texts[1][1] == texts[0][1]  # the tables, rounded for reading (the weighted table too)
    assert "Flagged respondents, weighted" in texts[1][1]

