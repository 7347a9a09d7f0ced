"""The demo report's numbers are the individual commands' numbers: same library calls, same JSON keys."""
from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from scalewright.cli import main


def _close(a, b, path: str = "") -> None:
    """Equal JSON values, floats to 1e-12 relative (the same computation, so in practice bit-identical)."""
    if isinstance(a, dict):
        assert set(a) == set(b), f"{path}: keys differ: {set(a) ^ set(b)}"
        for key in a:
            _close(a[key], b[key], f"{path}.{key}")
    elif isinstance(a, list):
        assert len(a) == len(b), f"{path}: lengths differ"
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            _close(x, y, f"{path}[{i}]")
    elif isinstance(a, float) and isinstance(b, float):
        assert math.isclose(a, b, rel_tol=1e-12, abs_tol=1e-15), f"{path}: {a} != {b}"
    else:
        assert a == b, f"{path}: {a!r} != {b!r}"


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    from scalewright.cli.demo import write_demo_inputs

    folder = tmp_path_factory.mktemp("demo")
    data, scales = write_demo_inputs(folder, seed=11, n=240)
    out = folder / "report"
    assert main(["report", str(data), "--scales", str(scales), "--out", str(out), "--by", "shift",
                 "--iterations", "7", "--seed", "5", "--duration-column", "duration_s", "--quiet"]) == 0
    results = json.loads((out / "results.json").read_text(encoding="utf-8"))
    return data, scales, folder, results


def _command_json(folder: Path, name: str, args: list[str]) -> dict:
    target = folder / f"{name}.json"
    assert main([name, *args, "--format", "json", "--out", str(target)]) == 0
    return json.loads(target.read_text(encoding="utf-8"))


def test_reliability_equals_the_reliability_command(demo_run):
    data, scales, folder, results = demo_run
    alone = _command_json(folder, "reliability", [str(data), "--scales", str(scales), "--by", "shift"])
    _close(alone["scales"], results["reliability"]["scales"], "reliability")
    workload = results["reliability"]["scales"]["workload"]
    assert 0 < workload["alpha"] < 1
    assert workload["alpha_ci"][0] < workload["alpha"] < workload["alpha_ci"][1]
    assert alone["input"] == results["input"]


def test_shape_and_compare_equal_their_commands(demo_run):
    data, scales, folder, results = demo_run
    shape = _command_json(folder, "shape", [str(data), "--scales", str(scales), "--by", "shift", "--seed", "5"])
    _close(shape["scales"], results["shape"]["scales"], "shape")
    compare = _command_json(folder, "compare", [str(data), "--scales", str(scales), "--by", "shift"])
    for name, entry in compare["scales"].items():
        record = dict(entry["comparisons"]["shift"])
        record.pop("sentence")  # a rendering, not a result; the report shows it in the page
        reported = results["compare"]["scales"][name]
        _close(record, reported["comparisons"]["shift"], f"compare.{name}")
        for key in ("by", "too_small", "group_notes"):
            _close(entry[key]["shift"], reported[key]["shift"], f"compare.{name}.{key}")


def test_structure_and_screen_equal_their_commands(demo_run):
    data, scales, folder, results = demo_run
    structure = _command_json(folder, "structure", [str(data), "--scales", str(scales), "--iterations", "7",
                                                    "--seed", "5"])
    for key in ("kmo", "bartlett", "parallel", "loadings", "factor_for_scale", "unidimensionality", "flags"):
        _close(structure[key], results["structure"][key], f"structure.{key}")
    screen = _command_json(folder, "screen", [str(data), "--scales", str(scales), "--duration-column",
                                              "duration_s"])
    _close(screen["summary"], results["screen"]["summary"], "screen.summary")
    assert screen["respondents"] == results["screen"]["respondents"]


def test_page_numbers_are_the_json_numbers(demo_run):
    _, _, folder, results = demo_run
    html = (folder / "report" / "index.html").read_text(encoding="utf-8")
    for name, block in results["reliability"]["scales"].items():
        alpha = f"{block['alpha']:.2f}"[1:]
        low, high = (f"{v:.2f}"[1:] for v in block["alpha_ci"])
        assert f"{alpha} [{low}, {high}]" in html, name
        assert f"M = {results['shape']['scales'][name]['all']['mean']:.2f}" in html
