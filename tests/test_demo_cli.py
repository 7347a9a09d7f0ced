"""`scalewright demo` and the example script: what they write, and what they refuse."""
from __future__ import annotations

import importlib.util
import json
import os
from pathlib import Path

import pandas as pd
import pytest

from scalewright import demo_data
from scalewright.cli import main
from scalewright.cli.demo import DATA_NAME, SCALES_NAME, SCORES_NAME, write_demo_inputs

REPO = Path(__file__).resolve().parents[1]


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def test_demo_writes_data_scale_file_and_scores(demo_run):
    out = demo_run.folder
    report_files = ["index.html", "report.md", "results.json", "figures"]
    assert sorted(p.name for p in out.iterdir()) == sorted([DATA_NAME, SCALES_NAME, SCORES_NAME, "notes.txt",
                                                           *report_files])
    printed = demo_run.printed
    for name in (DATA_NAME, SCALES_NAME, SCORES_NAME):
        assert str(out / name) in printed
    assert "fictional" in printed
    assert "not a diagnosis" in printed
    # the closing "next:" line runs as printed (a shell would split it as shlex does)
    import shlex
    import subprocess
    import sys

    next_line = next(line for line in printed.splitlines() if line.startswith("next: "))
    words = shlex.split(next_line.removeprefix("next: "))
    assert words[0] in (sys.executable, Path(sys.executable).name)
    assert words[1:3] == ["-m", "scalewright"]
    words[0] = sys.executable
    done = subprocess.run([*words, "--format", "json"], capture_output=True, text=True, timeout=120,
                          env={**os.environ, "PYTHONPATH": str(REPO / "src")})
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout)["command"] == "reliability"

    data = pd.read_csv(out / DATA_NAME, dtype=str, keep_default_na=False)
    scores = pd.read_csv(out / SCORES_NAME, dtype={"staff_id": str})
    # one row per respondent, in input order
    assert list(scores["staff_id"]) == list(data["staff_id"])
    assert len(scores) == demo_data.DEFAULT_N
    expected = ["staff_id"] + [c for name in demo_data.SCALE_NAMES for c in (name, f"{name}__answered")]
    assert list(scores.columns) == expected
    assert (out / SCALES_NAME).read_bytes() == (REPO / "scales" / demo_data.SCALE_FILE_NAME).read_bytes()
    # the written data are exactly the generator's, for that seed
    frame, _ = demo_data.generate_staff_climate(seed=demo_data.DEFAULT_SEED, n=demo_data.DEFAULT_N)
    assert (out / DATA_NAME).read_text(encoding="utf-8") == frame.to_csv(index=False, lineterminator="\n")


def test_scored_file_matches_scoring_the_written_inputs(demo_run):
    from scalewright.data import read_responses
    from scalewright.scoring import score_scales
    from scalewright.spec import load_spec

    out = demo_run.folder
    spec = load_spec(out / SCALES_NAME)
    direct = score_scales(read_responses(out / DATA_NAME, spec), spec).to_frame()
    written = pd.read_csv(out / SCORES_NAME, dtype={"staff_id": str})
    pd.testing.assert_frame_equal(written, direct, check_dtype=False, rtol=1e-12)


def test_demo_force_writes_into_a_non_empty_folder(demo_run):
    assert (demo_run.folder / "notes.txt").read_text() == "my own file\n"
    assert len(pd.read_csv(demo_run.folder / SCORES_NAME)) == demo_data.DEFAULT_N


def test_demo_refuses_a_non_empty_folder_and_changes_nothing(tmp_path, capsys):
    (tmp_path / "notes.txt").write_text("my own file\n")
    before = _snapshot(tmp_path)
    assert main(["demo", "--out", str(tmp_path), "--n", "60"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ")
    assert "not empty" in err
    assert "--force" in err
    assert len(err.splitlines()) == 1
    assert _snapshot(tmp_path) == before


def test_demo_refuses_a_file_as_folder_and_bad_sizes(tmp_path, capsys):
    target = tmp_path / "a-file"
    target.write_text("x")
    assert main(["demo", "--out", str(target)]) == 2
    assert main(["demo", "--out", str(tmp_path / "new"), "--n", "3"]) == 2
    assert target.read_text() == "x"
    assert not (tmp_path / "new").exists()
    assert capsys.readouterr().err.count("error: ") == 2


def test_write_demo_inputs_returns_the_paths(tmp_path):
    data_path, scales_path = write_demo_inputs(tmp_path, seed=1, n=50)
    assert (data_path, scales_path) == (tmp_path / DATA_NAME, tmp_path / SCALES_NAME)
    assert data_path.name == demo_data.DATA_FILE_NAME
    assert scales_path.name == demo_data.SCALE_FILE_NAME
    assert len(pd.read_csv(data_path)) == 50


def test_example_script_writes_data_scale_file_and_truth(tmp_path, capsys):
    import json

    spec = importlib.util.spec_from_file_location("generate_staff_climate",
                                                  REPO / "examples" / "generate_staff_climate.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    out = tmp_path / "gen"
    assert module.main(["--out", str(out), "--seed", "9", "--n", "70"]) == 0
    truth = json.loads((out / "truth.json").read_text())
    data = pd.read_csv(out / DATA_NAME, dtype={"staff_id": str})
    assert truth["n"] == 70
    assert truth["seed"] == 9
    assert len(data) == 70
    assert set(truth["careless_ids"]) <= set(data["staff_id"])
    _, expected = demo_data.generate_staff_climate(seed=9, n=70)
    for name, value in expected.population_reliability.items():
        assert truth["population_reliability"][name] == pytest.approx(value, rel=1e-12)
    assert module.main(["--out", str(out)]) == 2  # not empty now
