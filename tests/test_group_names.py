"""Names for coded group columns: ``{gender: {1: woman, 2: man}}`` in the scale file, used everywhere."""
from __future__ import annotations

import contextlib
import io
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scalewright.cli import main
from scalewright.data import read_responses
from scalewright.errors import DataError
from scalewright.spec import check_spec, load_spec

SCALE_FILE = """version: 1
id_column: rid
groups: [{gender: {1: woman, 2: man}}, {education: [basic, middle, high]}]
response: {min: 1, max: 5}
scales:
  a: {title: Aa, items: [a1, a2, a3]}
"""


def _files(folder: Path, gender_values=None) -> tuple[Path, Path]:
    rng = np.random.default_rng(3)
    n = 120
    trait = rng.normal(size=n)
    gender = gender_values if gender_values is not None else rng.integers(1, 3, n)
    frame = pd.DataFrame({"rid": [f"r{i}" for i in range(n)], "gender": gender,
                          "education": rng.choice(["basic", "middle", "high"], n),
                          **{f"a{j}": np.clip(np.round(3 + trait + rng.normal(size=n)), 1, 5).astype(int)
                             for j in (1, 2, 3)}})
    data = folder / "d.csv"
    frame.to_csv(data, index=False)
    scales = folder / "s.yaml"
    scales.write_text(SCALE_FILE, encoding="utf-8")
    return data, scales


def test_scale_file_reads_code_names_beside_ordered_lists(tmp_path):
    _, scales = _files(tmp_path)
    spec = load_spec(scales)
    assert spec.groups == ("gender", "education")
    assert dict(spec.group_codes["gender"]) == {"1": "woman", "2": "man"}
    assert spec.group_levels["gender"] == ("woman", "man")
    assert spec.group_levels["education"] == ("basic", "middle", "high")


def test_codes_become_names_in_the_data(tmp_path):
    data, scales = _files(tmp_path, gender_values=["1", "2.0", "man", ""] * 30)
    spec = load_spec(scales)
    column = read_responses(data, spec).column("gender")
    assert list(column.cat.categories) == ["woman", "man"]
    assert column.iloc[:4].tolist()[:3] == ["woman", "man", "man"]
    assert pd.isna(column.iloc[3])


def test_an_unknown_code_is_refused_naming_the_codes(tmp_path):
    data, scales = _files(tmp_path, gender_values=[1, 2, 3] * 40)
    with pytest.raises(DataError, match=r"'3' is not one of the levels .* gender \(1 = woman, 2 = man\)"):
        read_responses(data, load_spec(scales))


@pytest.mark.parametrize(("groups", "message"), [
    ("[{gender: {1: woman, 2: woman}}]", "same name"),
    ("[{gender: {1: woman, 1.0: man}}]", "named twice"),
    ("[{gender: {}}]", "empty"),
])
def test_broken_code_names_are_scale_file_problems(tmp_path, groups, message):
    scales = tmp_path / "s.yaml"
    scales.write_text(SCALE_FILE.replace(SCALE_FILE.splitlines()[2], f"groups: {groups}"), encoding="utf-8")
    spec, problems = check_spec(scales)
    assert spec is None
    assert any(message in str(p) for p in problems), problems


def test_tables_and_sentences_use_the_names(tmp_path):
    data, scales = _files(tmp_path)
    for command in (["compare", "--by", "gender"], ["reliability", "--by", "gender"], ["tally", "--columns", "gender"]):
        out = io.StringIO()
        with contextlib.redirect_stdout(out):
            assert main([command[0], str(data), "-s", str(scales), *command[1:], "--format", "md"]) == 0
        text = out.getvalue()
        assert "woman" in text, command
        assert re.search(r"\bman\b", text), command
        assert "gender = 1" not in text, command
        assert not re.search(r"^\| [12] \|", text, re.M), command
