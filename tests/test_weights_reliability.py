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
